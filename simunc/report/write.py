"""Render everything in memory, then switch the report folder to it in one atomic step."""

from __future__ import annotations

import io
import os
from pathlib import Path

from simunc.report import content, decisions, figures, render
from simunc.report.folder import check_out_dir, commit
from simunc.report.results_json import results_json

SAMPLE_FORMATS = ("csv", "parquet")


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
    tolerances = decisions.tolerances_frame(result)
    if tolerances is not None:
        files["tolerances.csv"] = tolerances.to_csv(index=False).encode("utf-8")
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


def write_report(result, out_dir: str | os.PathLike, samples: str | None = None,
                 overwrite: bool = False) -> list[Path]:
    """Write the report files into ``out_dir`` in one atomic step (see :mod:`.folder`).

    Everything is rendered in memory first; the new report is written into a fresh
    folder beside ``out_dir`` and exchanged with it in one step, so the folder
    always holds the old report or the new one, never a mix.  Files simunc did
    not write are kept; a file simunc did not write under one of its report names
    is refused unless ``overwrite``.

    Returns
    -------
    list of Path
        The report files written.
    """
    out = check_out_dir(out_dir)
    files = render_all(result, samples)
    return commit(out, files, str(out_dir), overwrite=overwrite)
