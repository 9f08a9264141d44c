"""The report folder: simunc's own files only, one atomic switch, one writer, no stale leftovers.

The invariants checked here are those of the issue and of POSIX rename semantics (rename(2) and
Linux renameat2(2) with RENAME_EXCHANGE: the exchange is atomic); the kill tests send SIGKILL
to a real writer process at many moments of the switch.
"""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import pytest

from simunc.cli import main
from simunc.errors import StudyError
from simunc.report.folder import MANIFEST, check_out_dir, commit, folder_lock


def _files(tag: str, sweeps: int = 1) -> dict[str, bytes]:
    f = {"report.md": f"report {tag}".encode(), "results.json": json.dumps({"run": tag}).encode(),
         "report.html": f"<p>{tag}</p>".encode()}
    f.update({f"sweep_{i + 1}.png": tag.encode() for i in range(sweeps)})
    return f


def _temporaries(out: Path) -> list[str]:
    return [p.name for p in out.parent.iterdir() if ".simunc-" in p.name]


def test_new_folder_holds_exactly_the_report(tmp_path):
    out = tmp_path / "rep"
    written = commit(out, _files("a"), "rep")
    assert sorted(p.name for p in written) == sorted(_files("a"))
    assert sorted(p.name for p in out.iterdir()) == sorted([*_files("a"), MANIFEST])
    assert _temporaries(out) == []


def test_user_files_kept_and_stale_report_files_removed(tmp_path):
    out = tmp_path / "rep"
    commit(out, _files("a", sweeps=3), "rep")
    (out / "notes.txt").write_text("my notes")
    (out / "drawings").mkdir()
    (out / "drawings" / "model.dwg").write_text("geometry")
    inode = (out / "notes.txt").stat().st_ino
    commit(out, _files("b", sweeps=1), "rep")
    assert (out / "notes.txt").read_text() == "my notes"
    assert (out / "notes.txt").stat().st_ino == inode        # the same file, not a copy
    assert (out / "drawings" / "model.dwg").read_text() == "geometry"
    assert not (out / "sweep_2.png").exists() and not (out / "sweep_3.png").exists()
    assert (out / "report.md").read_text() == "report b"
    assert _temporaries(out) == []


def test_report_named_file_simunc_did_not_write_is_refused_unless_overwrite(tmp_path):
    out = tmp_path / "rep"
    out.mkdir()
    (out / "samples.csv").write_text("a user's data")
    (out / "report.md").write_text("a user's report")
    with pytest.raises(StudyError, match="not written by simunc.*--overwrite"):
        commit(out, _files("a"), "rep")
    assert (out / "report.md").read_text() == "a user's report"
    assert (out / "samples.csv").read_text() == "a user's data"
    assert _temporaries(out) == []
    commit(out, _files("a"), "rep", overwrite=True)
    assert (out / "report.md").read_text() == "report a"
    assert not (out / "samples.csv").exists()    # asked to overwrite: a report name, not written now
    assert _temporaries(out) == []


@pytest.mark.parametrize("given", ["", " ", "."])
def test_current_folder_and_empty_name_refused(given, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    with pytest.raises(StudyError, match="--out"):
        check_out_dir(given)


def test_folder_above_the_current_one_refused(tmp_path, monkeypatch):
    (tmp_path / "a" / "b").mkdir(parents=True)
    monkeypatch.chdir(tmp_path / "a" / "b")
    with pytest.raises(StudyError, match="not the current folder or one above it"):
        check_out_dir(tmp_path / "a")


def test_live_lock_refused_and_dead_lock_taken_over(tmp_path):
    out = tmp_path / "rep"
    lock = tmp_path / ".rep.simunc-lock"
    sleeper = subprocess.Popen([sys.executable, "-c", "import time; time.sleep(30)"])
    try:
        import socket
        lock.write_text(f"{sleeper.pid} {socket.gethostname()}")
        with pytest.raises(StudyError, match=f"process {sleeper.pid}"):
            commit(out, _files("a"), "rep")
    finally:
        sleeper.kill()
        sleeper.wait()
    commit(out, _files("a"), "rep")     # that process is gone: the lock is taken over
    assert not lock.exists() and (out / "report.md").read_text() == "report a"


def test_lock_is_reentrant_within_a_run(tmp_path):
    out = tmp_path / "rep"
    with folder_lock(out):
        commit(out, _files("a"), "rep")
    assert not (tmp_path / ".rep.simunc-lock").exists()


WRITER = textwrap.dedent("""
    import sys, time, os
    from pathlib import Path
    import simunc.report.folder as folder
    slow = float(sys.argv[3])
    real_link, real_rename, real_exchange = os.link, os.rename, folder._exchange
    def pause(fn):
        def wrapped(*a, **k):
            time.sleep(slow)
            r = fn(*a, **k)
            time.sleep(slow)
            return r
        return wrapped
    os.link = pause(real_link)
    os.rename = pause(real_rename)
    folder._exchange = pause(real_exchange)
    tag = sys.argv[2]
    files = {"report.md": f"report {tag}".encode(), "results.json": ('{"run": "%s"}' % tag).encode(),
             "report.html": f"<p>{tag}</p>".encode(), "sweep_1.png": tag.encode()}
    print("go", flush=True)
    folder.commit(Path(sys.argv[1]), files, "rep")
""")


def test_kill_at_any_moment_leaves_old_or_new_never_a_mix(tmp_path):
    out = tmp_path / "rep"
    commit(out, _files("old"), "rep")
    for i in range(6):
        (out / f"user_{i}.txt").write_text(f"keep {i}")
    script = tmp_path / "writer.py"
    script.write_text(WRITER)
    outcomes = set()
    for delay in (0.0, 0.02, 0.05, 0.08, 0.12, 0.2, 0.3, 0.45, 0.6, 0.9):
        proc = subprocess.Popen([sys.executable, str(script), str(out), "new", "0.03"],
                                stdout=subprocess.PIPE)
        assert proc.stdout is not None and proc.stdout.readline().strip() == b"go"
        time.sleep(delay)
        proc.send_signal(signal.SIGKILL)
        proc.wait()
        if out.exists():
            tags = {(out / "report.md").read_text().split()[-1],
                    json.loads((out / "results.json").read_text())["run"],
                    (out / "report.html").read_text()[3:-4], (out / "sweep_1.png").read_text()}
            assert len(tags) == 1, f"a mixed report after a kill at {delay} s: {tags}"
            outcomes |= tags
        # the next run puts things right: nothing left behind, the user's files intact
        commit(out, _files("old"), "rep")
        assert _temporaries(out) == []
        for i in range(6):
            assert (out / f"user_{i}.txt").read_text() == f"keep {i}"
    assert outcomes == {"old", "new"}  # kills before and after the switch both happened


def test_cli_refuses_a_foreign_report_file_before_computing(tmp_path, capsys):
    from .conftest import DEMO

    out = tmp_path / "rep"
    out.mkdir()
    (out / "results.json").write_text("{}")
    t = time.perf_counter()
    code = main(["rank", str(DEMO), "--out", str(out), "--trials", "1000"])
    err = capsys.readouterr().err
    assert code == 2 and err.count("\n") == 1 and "--overwrite" in err
    assert (out / "results.json").read_text() == "{}"
    del t


def test_cli_second_concurrent_run_refused(tmp_path, capsys):
    from .conftest import DEMO

    out = tmp_path / "rep"
    with folder_lock(check_out_dir(out)):
        # Another process would see the lock of this one (alive): simulate it by dropping our
        # own re-entrancy marker for the CLI call.
        import simunc.report.folder as folder

        held = set(folder._HELD)
        folder._HELD.clear()
        try:
            code = main(["rank", str(DEMO), "--out", str(out), "--trials", "1000"])
        finally:
            folder._HELD |= held
    err = capsys.readouterr().err
    assert code == 2 and f"process {os.getpid()}" in err and err.count("\n") == 1
