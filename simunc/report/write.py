"""Render everything in memory, then write the report folder in one move."""

from __future__ import annotations

import io
import os
import shutil
import tempfile
from pathlib import Path

from simunc.report import content, figures, render
from simunc.report.results_json import results_json

SAMPLE_FORMATS = ("csv", "parquet")
#: Every file a report folder may hold; those a run does not write are removed (no stale files).
REPORT_FILES = ("report.md", "report.html", "results.json", "reynolds_ratio_histogram.png",
                "envelope_map.png", "sobol_indices.png", "tightening.png", "samples.csv",
                "samples.parquet")
#: Numbered figures of a report (``sweep_1.png``, ...): those a run does not write are removed too.
REPORT_PATTERNS = ("sweep_*.png",)


def check_out_dir(out_dir) -> Path:
    """The report folder, refused (exit 2) when it is a file or cannot be a folder."""
    from simunc.errors import StudyError

    out = Path(out_dir)
    for p in (out, *out.parents):
        if p.exists() and not p.is_dir():
            raise StudyError("--out", str(out_dir), "a folder (a file of that name is in the way: "
                             f"{p})")
    existing = next((p for p in (out, *out.parents) if p.exists()), Path("."))
    if not os.access(existing, os.W_OK):
        raise StudyError("--out", str(out_dir), f"a folder simunc may write in ({existing} is not "
                         "writable)")
    return out


def render_all(result, samples: str | None = None) -> dict[str, bytes]:
    """File name -> bytes of every file of the report."""
    figs = figures.all_figures(result)
    blocks = content.build(result)
    files = {
        "report.md": render.markdown(blocks).encode("utf-8"),
        "report.html": render.html_page(blocks, figs).encode("utf-8"),
        "results.json": results_json(result).encode("utf-8"),
        **figs,
    }
    if samples is not None:
        frame = result.samples()
        buf = io.BytesIO()
        if samples == "csv":
            frame.to_csv(buf, index=False)
        elif samples == "parquet":
            frame.to_parquet(buf, index=False)
        else:
            raise ValueError(f"samples format {samples!r}; expected one of {SAMPLE_FORMATS}")
        files[f"samples.{samples}"] = buf.getvalue()
    return files


def write_report(result, out_dir: str | os.PathLike, samples: str | None = None) -> list[Path]:
    """Write the report files into ``out_dir`` (created if needed).

    Files are written to a temporary folder beside ``out_dir`` and then moved
    in, so an error leaves no half-written report.

    Returns
    -------
    list of Path
        The files written.
    """
    out = check_out_dir(out_dir)
    files = render_all(result, samples)
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        from simunc.errors import StudyError
        raise StudyError("--out", str(out_dir), f"a folder simunc can create ({exc.strerror})") from exc
    tmp = Path(tempfile.mkdtemp(prefix=".simunc-", dir=out))
    try:
        for name, data in files.items():
            (tmp / name).write_bytes(data)
        written = []
        for name in files:
            os.replace(tmp / name, out / name)
            written.append(out / name)
        stale = [out / n for n in REPORT_FILES] + [p for pat in REPORT_PATTERNS
                                                   for p in out.glob(pat)]
        for path in stale:
            if path.name not in files and path.is_file():
                path.unlink()
    finally:
        shutil.rmtree(tmp, ignore_errors=True)
    return written
