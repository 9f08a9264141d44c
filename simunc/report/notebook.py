"""The notebook view of a run: a :class:`~simunc.pipeline.Result` shown in a notebook cell.

``Result._repr_html_`` calls the view registered in :data:`simunc.pipeline.NOTEBOOK_VIEW`; this
module registers :func:`result_html` there when it is imported (the pipeline never imports the
report layer; ``simunc.run`` and the other API names of the package import this module with the
pipeline). The view shows the report's first screen — the verdict — then the key outputs, the
ranking of the inputs and the instrument requirements, from the same report blocks.
"""

from __future__ import annotations

from simunc import pipeline
from simunc.report import content, decisions
from simunc.report.blocks import Block
from simunc.report.render import html_body

#: Sections of the report a notebook cell shows, in order.
NOTEBOOK_SECTIONS = ("Verdict", "Key outputs", "Which input to control more tightly")

_STYLE = ("<style>.simunc-view table{border-collapse:collapse;font-size:90%}"
          ".simunc-view td,.simunc-view th{padding:2px 8px;border-bottom:1px solid #ddd}"
          ".simunc-view td{text-align:right}.simunc-view td:first-child{text-align:left}</style>")


def notebook_blocks(result) -> list[Block]:
    """The report blocks a notebook cell shows: :data:`NOTEBOOK_SECTIONS` without figures, and
    the instrument-requirements table when an allocation gives one."""
    blocks = content.build(result)
    out: list[Block] = [blocks[0]]
    keep = False
    for b in blocks[1:]:
        if b.kind == "heading" and b.level == 2:
            keep = any(str(b.content).startswith(s) for s in NOTEBOOK_SECTIONS)
        if keep and b.kind != "figure":
            out.append(b)
    a = result.allocation
    if a is not None and a.table is not None:
        out += [Block("heading", "Instrument and control requirements (allocation)"),
                Block("table", decisions.instrument_view(a.table))]
    out.append(Block("paragraph", "The full report: simunc.write_report(result, folder)."))
    return out


def result_html(result) -> str:
    """HTML of a run for a notebook cell."""
    return _STYLE + '<div class="simunc-view">' + html_body(notebook_blocks(result), {}) + "</div>"


pipeline.NOTEBOOK_VIEW[:] = [result_html]
