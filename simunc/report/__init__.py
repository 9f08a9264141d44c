"""Report writers: Markdown, self-contained HTML, JSON, CSV/Parquet trials and figures.

All content is built in memory first (:func:`render_all`), then written to a
temporary folder and moved into place, so a failed run never leaves a
half-written report.
"""

from simunc.report.write import render_all, write_report

__all__ = ["render_all", "write_report"]
