"""Markdown and self-contained HTML renderings of the report blocks."""

from __future__ import annotations

import base64
import html
import re
from typing import TYPE_CHECKING, cast

from simunc.report.content import Block

if TYPE_CHECKING:
    import pandas as pd

_CSS = """
body{font-family:system-ui,-apple-system,Segoe UI,sans-serif;max-width:1000px;margin:2em auto;
padding:0 1em;color:#222;line-height:1.45}
h1{border-bottom:2px solid #4a78a8;padding-bottom:.2em}h2{margin-top:1.6em;color:#2c4f73}
table{border-collapse:collapse;margin:.6em 0;font-size:.9em}
th,td{border:1px solid #ccc;padding:.25em .6em;text-align:left}th{background:#eef3f8}
td{font-variant-numeric:tabular-nums}img{max-width:100%}figcaption{font-size:.85em;color:#555}
"""


def markdown(blocks: list[Block]) -> str:
    out = []
    for b in blocks:
        if b.kind == "heading":
            out.append("#" * b.level + " " + str(b.content))
        elif b.kind == "paragraph":
            out.append(str(b.content))
        elif b.kind == "bullets":
            out.append("\n".join(f"- {x}" for x in b.content))
        elif b.kind == "table":
            cells = cast("pd.DataFrame", b.content).map(lambda v: str(v).replace("|", "\\|"))
            out.append(cells.to_markdown(index=False))
        elif b.kind == "figure":
            out.append(f"![{b.caption}]({b.content})\n\n*{b.caption}*")
    return "\n\n".join(out) + "\n"


def _inline(text: str) -> str:
    return re.sub(r"\*\*(.+?)\*\*", r"<strong>\1</strong>", html.escape(text))


def html_page(blocks: list[Block], figures: dict[str, bytes]) -> str:
    title = next((str(b.content) for b in blocks if b.kind == "heading"), "simunc report")
    out = ["<!DOCTYPE html>", '<html lang="en"><head><meta charset="utf-8">',
           f"<title>{html.escape(title)}</title><style>{_CSS}</style></head><body>"]
    for b in blocks:
        if b.kind == "heading":
            out.append(f"<h{b.level}>{html.escape(str(b.content))}</h{b.level}>")
        elif b.kind == "paragraph":
            out.append(f"<p>{_inline(str(b.content))}</p>")
        elif b.kind == "bullets":
            out.append("<ul>" + "".join(f"<li>{_inline(str(x))}</li>" for x in b.content) + "</ul>")
        elif b.kind == "table":
            out.append(cast("pd.DataFrame", b.content).to_html(index=False, border=0, escape=True))
        elif b.kind == "figure" and b.content in figures:
            data = base64.b64encode(figures[cast(str, b.content)]).decode("ascii")
            out.append(f'<figure><img alt="{html.escape(b.caption)}" src="data:image/png;base64,{data}">'
                       f"<figcaption>{html.escape(b.caption)}</figcaption></figure>")
    out.append("</body></html>")
    return "\n".join(out) + "\n"
