"""The report folder: ownership, one writer at a time, and an atomic switch to the new report.

Rules
-----
* **Only simunc's own files are removed or replaced.**  Every report folder holds a
  manifest (:data:`MANIFEST`) naming the files simunc wrote there.  A file under
  one of simunc's report names (:data:`REPORT_FILES`, :data:`REPORT_PATTERNS`)
  that the manifest does not list was not written by simunc: the run is refused
  unless the user asks to overwrite.  Every other file or folder is kept.
* **One atomic step.**  The new report is written into a fresh folder beside the
  report folder (same file system), the user's other files are hard-linked into
  it, and the two folders are exchanged in one ``renameat2(RENAME_EXCHANGE)``
  call (Linux).  A kill at any moment leaves the old report or the new one in
  place, never a mix.  Where the exchange is not available the old folder is
  renamed aside and the new one renamed in: a kill between the two renames leaves
  the old report aside, complete, and the next run puts things right.
* **One writer.**  A lock file beside the folder (``.NAME.simunc-lock``, created
  exclusively, holding the process id and host) refuses a second concurrent run
  with a clear message; a lock whose process is gone is taken over.
* **No stale temporary folders.**  Taking the lock disposes of temporary folders
  that a killed run left beside the folder: simunc's own files in them are
  removed, anything else is moved back into the report folder (or left where it
  is, and said so), never deleted.
"""

from __future__ import annotations

import ctypes
import ctypes.util
import fnmatch
import json
import os
import shutil
import socket
import sys
import time
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path

from simunc.errors import StudyError

#: The manifest of a report folder: the files the run that wrote it wrote.
MANIFEST = ".simunc.json"
#: Every file a report may hold; those a run does not write are removed (no stale files).
REPORT_FILES = ("report.md", "report.html", "results.json", "reynolds_ratio_histogram.png",
                "envelope_map.png", "sobol_indices.png", "tightening.png", "samples.csv",
                "samples.parquet", "tolerances.csv")
#: Figures named after their sweep or output (``sweep_1.png``, ``histogram_reynolds_ratio.png``,
#: ...).  ``reynolds_ratio_histogram.png`` above is the one histogram of earlier reports: kept so
#: that a new run recognises the stale file as its own and removes it.
REPORT_PATTERNS = ("sweep_*.png", "histogram_*.png")

_HELD: set[str] = set()   # locks this process holds (the lock is re-entrant within a process)


def is_report_name(name: str) -> bool:
    """Whether ``name`` is one of the names a report may use."""
    return name in REPORT_FILES or any(fnmatch.fnmatchcase(name, p) for p in REPORT_PATTERNS)


def check_out_dir(out_dir) -> Path:
    """The report folder (absolute), refused (exit 2) where a report must not go.

    Refused: an empty name, the current folder or a folder above it (the switch
    replaces the folder), a file in the way, a parent simunc cannot write in.
    """
    text = str(out_dir)
    if not text.strip():
        raise StudyError("--out", repr(text), "a folder name for the report, e.g. --out simunc-report")
    out = Path(out_dir).expanduser().resolve()
    cwd = Path.cwd().resolve()
    if out == cwd or out in cwd.parents:
        raise StudyError("--out", text, "a folder of its own for the report, not the current "
                         "folder or one above it (e.g. --out simunc-report)")
    if out.parent == out:
        raise StudyError("--out", text, "a folder of its own for the report, not a file-system root")
    for p in (out, *out.parents):
        if p.exists() and not p.is_dir():
            raise StudyError("--out", text, f"a folder (a file of that name is in the way: {p})")
    existing = next((p for p in (out.parent, *out.parent.parents) if p.exists()), Path("/"))
    if not os.access(existing, os.W_OK):
        raise StudyError("--out", text, f"a folder simunc may write in ({existing} is not writable)")
    return out


def _manifest(folder: Path) -> dict | None:
    try:
        data = json.loads((folder / MANIFEST).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None
    return data if isinstance(data, dict) and isinstance(data.get("files"), list) else None


def _own(folder: Path) -> set[str]:
    """Names simunc wrote in ``folder``: its manifest's files and the manifest; for a report
    of an earlier version (no manifest, a ``results.json`` of simunc's), its report-named files."""
    m = _manifest(folder)
    if m:
        return {str(n) for n in m["files"]} | {MANIFEST}
    try:
        legacy = json.loads((folder / "results.json").read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return set()
    if isinstance(legacy, dict) and "simunc_version" in legacy and "schema_version" in legacy:
        return {p.name for p in folder.iterdir() if is_report_name(p.name) and p.is_file()}
    return set()


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


@contextmanager
def folder_lock(out: Path, given: str = "") -> Iterator[None]:
    """Hold the report folder's lock; refuse (exit 2) when another live run holds it."""
    lock = out.parent / f".{out.name}.simunc-lock"
    key = str(lock)
    if key in _HELD:
        yield
        return
    out.parent.mkdir(parents=True, exist_ok=True)
    host = socket.gethostname()
    for stray in out.parent.glob(f"{lock.name}.*"):   # a writer killed while taking the lock
        pid_part = stray.name.rsplit(".", 1)[-1]
        if pid_part.isdigit() and not _alive(int(pid_part)):
            stray.unlink(missing_ok=True)
    mine = out.parent / f"{lock.name}.{os.getpid()}"
    for _ in range(2):
        # The lock appears with its content in one step: a link of a file already written.
        mine.write_text(f"{os.getpid()} {host}", encoding="utf-8")
        try:
            os.link(mine, lock)
        except FileExistsError:
            try:
                pid_text, _, lock_host = lock.read_text(encoding="utf-8").partition(" ")
                pid = int(pid_text)
            except (OSError, ValueError):
                pid, lock_host = -1, host
            if lock_host.strip() == host and (pid <= 0 or not _alive(pid)):
                lock.unlink(missing_ok=True)   # its run was killed: take the lock over
                continue
            mine.unlink(missing_ok=True)
            raise StudyError("--out", given or str(out), "a report folder no other simunc run is "
                             f"writing (process {pid} on {lock_host.strip() or host} holds {lock}; "
                             "wait for it, or delete that file if the run is gone)") from None
        finally:
            mine.unlink(missing_ok=True)
        break
    else:
        raise StudyError("--out", given or str(out), f"a lock file simunc can take ({lock})")
    _HELD.add(key)
    try:
        recover(out)
        yield
    finally:
        _HELD.discard(key)
        lock.unlink(missing_ok=True)


def _temporaries(out: Path) -> list[Path]:
    prefix = f".{out.name}.simunc-"
    found = [p for p in out.parent.glob(f"{prefix}*") if p.is_dir() and not p.is_symlink()
             and p.name != f"{prefix}lock"]
    if out.is_dir():  # temporary folders of earlier versions, inside the report folder
        found += [p for p in out.glob(".simunc-*") if p.is_dir() and not p.is_symlink()]
    return found


def recover(out: Path) -> list[str]:
    """Dispose of the temporary folders a killed run left; returns what could not be moved."""
    if not out.exists():
        aside = [p for p in _temporaries(out) if _manifest(p) is not None]
        if aside:  # killed between the two renames of the fallback switch: put a report back
            newest = max(aside, key=lambda p: p.stat().st_mtime)
            os.rename(newest, out)
    left = []
    for tmp in _temporaries(out):
        left += _dispose(tmp, out)
    return left


def _dispose(tmp: Path, out: Path, replaced: frozenset[str] = frozenset()) -> list[str]:
    """Empty and remove a temporary folder of simunc's: its own files and the hard links of
    files also in ``out`` go; anything else moves back into ``out`` or stays (reported)."""
    own = _own(tmp) | set(replaced)
    legacy = _manifest(tmp) is None and tmp.parent == out   # an earlier version's temporary folder
    left: list[str] = []
    for entry in tmp.iterdir():
        target = out / entry.name
        if entry.is_file() and not entry.is_symlink() and (
                entry.name in own or (legacy and is_report_name(entry.name))
                or (target.exists() and os.path.samefile(entry, target))):
            entry.unlink()
        elif out.is_dir() and not target.exists() and not target.is_symlink():
            os.rename(entry, target)
        else:
            left.append(str(entry))
    try:
        tmp.rmdir()
    except OSError:
        if left:
            print(f"simunc: note: kept {len(left)} file(s) simunc did not write in {tmp}",
                  file=sys.stderr)
    return left


def _exchange(a: Path, b: Path) -> bool:
    """Swap two folders in one step (Linux ``renameat2`` with ``RENAME_EXCHANGE``)."""
    if not sys.platform.startswith("linux"):
        return False
    try:
        libc = ctypes.CDLL(ctypes.util.find_library("c") or "libc.so.6", use_errno=True)
        fn = libc.renameat2
    except (OSError, AttributeError):
        return False
    fn.argtypes = [ctypes.c_int, ctypes.c_char_p, ctypes.c_int, ctypes.c_char_p, ctypes.c_uint]
    at_fdcwd, rename_exchange = -100, 2
    return fn(at_fdcwd, os.fsencode(a), at_fdcwd, os.fsencode(b), rename_exchange) == 0


def commit(out: Path, files: dict[str, bytes], given: str, *, overwrite: bool = False) -> list[Path]:
    """Make ``out`` hold exactly the report ``files`` plus the user's own files, in one step."""
    with folder_lock(out, given):
        try:
            _commit(out, files, given, overwrite)
        except OSError as exc:
            recover(out)   # the old report stays (or comes back), the new one goes
            raise StudyError("--out", given, f"a folder simunc can switch to its new report "
                             f"({exc.strerror or exc}: {exc.filename or out})") from exc
    return [out / n for n in files]


def foreign_report_files(out: Path, given: str, overwrite: bool = False) -> list[str]:
    """Files under report names in ``out`` that simunc did not write; refused (exit 2) unless
    ``overwrite``.  The CLI calls it before any computation, :func:`commit` again at the end."""
    old_own = _own(out) if out.is_dir() else set()
    foreign = sorted(p.name for p in out.iterdir() if is_report_name(p.name)
                     and p.name not in old_own) if out.is_dir() else []
    if foreign and not overwrite:
        shown = ", ".join(foreign[:5]) + (" ..." if len(foreign) > 5 else "")
        raise StudyError("--out", given, "a folder whose report-named files simunc wrote itself "
                         f"(found {shown}, not written by simunc; choose another folder, or pass "
                         "--overwrite to replace them)")
    return foreign


def _commit(out: Path, files: dict[str, bytes], given: str, overwrite: bool) -> None:
    old_own = _own(out) if out.is_dir() else set()
    foreign = foreign_report_files(out, given, overwrite)
    run_id = f"{time.time_ns()}-{os.getpid()}"
    new = out.parent / f".{out.name}.simunc-{run_id}"
    new.mkdir()
    (new / MANIFEST).write_text(json.dumps({"files": sorted(files), "run": run_id}),
                                encoding="utf-8")
    for name, data in files.items():
        with open(new / name, "wb") as f:
            f.write(data)
            f.flush()
            os.fsync(f.fileno())
    if not out.exists():
        os.rename(new, out)
        return
    shutil.copymode(out, new)
    dropped = old_own | set(foreign)
    later = []
    for entry in out.iterdir():   # the user's files come along (hard links: no copy)
        if entry.name in files or entry.name in dropped:
            continue
        try:
            if not entry.is_file() or entry.is_symlink():
                raise OSError("not a regular file")
            os.link(entry, new / entry.name)
        except OSError:   # folders, links, file systems without hard links: moved after
            later.append(entry.name)
    if _exchange(new, out):
        old = new          # after the exchange the temporary name holds the old folder
    else:
        old = out.parent / f".{out.name}.simunc-{run_id}-old"
        os.rename(out, old)
        os.rename(new, out)
    for name in later:    # folders and links of the user's move over after the switch
        if not (out / name).exists():
            os.rename(old / name, out / name)
    _dispose(old, out, frozenset(foreign))
