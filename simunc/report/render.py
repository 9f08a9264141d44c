"""Markdown and self-contained HTML renderings of the report blocks."""

from __future__ import annotations

import base64
import html
import re
from typing import TYPE_CHECKING, cast

from simunc.report.content import APPENDIX_WORD, Block
from simunc.report.text import md, md_inline, spans, unmarked

if TYPE_CHECKING:
    import pandas as pd

_CSS = """
body{font-family:system-ui,-apple-system,Segoe UI,sans-serif;max-width:1000px;margin:2em auto;
padding:0 1em;color:#222;line-height:1.45}
h1{border-bottom:2px solid #4a78a8;padding-bottom:.2em;font-size:1.6em;margin:.3em 0}
h2{margin-top:1.6em;color:#2c4f73}
table{border-collapse:collapse;margin:.6em 0;font-size:.9em}
th,td{border:1px solid #ccc;padding:.25em .6em;text-align:right}th{background:#eef3f8}
td:first-child,th:first-child{text-align:left}
td{font-variant-numeric:tabular-nums}img{max-width:100%}figcaption{font-size:.85em;color:#555}
.wide{max-width:100%;overflow-x:auto}nav.toc{font-size:.85em;margin:.6em 0;line-height:1.6}
nav.toc a{display:inline-block;margin-right:1.2em;white-space:nowrap}
details>summary{cursor:pointer}details>summary h2{display:inline}
h2#s1{margin-top:.8em}ul{margin:.4em 0}li{margin:.1em 0}
"""


def markdown(blocks: list[Block]) -> str:
    """CommonMark with GitHub tables; study text renders literally (:mod:`simunc.report.text`)."""
    out = []
    for b in blocks:
        if b.kind == "heading":
            out.append("#" * b.level + " " + md(b.content))
        elif b.kind == "paragraph":
            out.append(md(b.content))
        elif b.kind == "bullets":
            out.append("\n".join(f"- {md(x)}" for x in b.content))
        elif b.kind == "table":
            df = cast("pd.DataFrame", b.content)
            cells = df.map(lambda v: md_inline(unmarked(v)))
            cells.columns = [md_inline(unmarked(c)) for c in df.columns]
            # numbers as formatted (a rounded "1.0000" stays as written)
            out.append(cells.to_markdown(index=False, disable_numparse=True))
        elif b.kind == "figure":
            out.append(f"![{md(b.caption)}]({b.content})\n\n*{md(b.caption)}*")
    return "\n\n".join(out) + "\n"


def _inline(text: object) -> str:
    """HTML of a block text: literal spans escaped (their ``*`` as a character reference, so
    they mark nothing), **bold** of the report's own text kept."""
    escaped = "".join(html.escape(p).replace("*", "&#42;") if literal else html.escape(p)
                      for literal, p in spans(text))
    return re.sub(r"\*\*(.+?)\*\*", r"<strong>\1</strong>", escaped)


def _toc_label(name: str) -> str:
    """A section's name in the table of contents: no parenthesis, an appendix by its letter and
    the head of its name.

    >>> _toc_label("Appendix D. Sensitivity (Sobol indices and uncertainty budget)")
    'D. Sensitivity'
    >>> _toc_label("Appendix B. Achieved groups and flow quantities (Monte Carlo, JCGM 101)")
    'B. Achieved groups'
    """
    name = re.sub(r"\s*\(.*\)\s*$", "", name)
    if not name.startswith(APPENDIX_WORD + " "):
        return name
    return re.split(r" (?:and|of|against) ", name[len(APPENDIX_WORD) + 1:])[0]


def html_page(blocks: list[Block], figures: dict[str, bytes]) -> str:
    title = next((unmarked(b.content) for b in blocks if b.kind == "heading"), "simunc report")
    return "\n".join(["<!DOCTYPE html>", '<html lang="en"><head><meta charset="utf-8">',
                      f"<title>{html.escape(title)}</title><style>{_CSS}</style></head><body>",
                      html_body(blocks, figures), "</body></html>"]) + "\n"


def html_body(blocks: list[Block], figures: dict[str, bytes]) -> str:
    """The HTML of the blocks (without the page around them: a notebook cell shows it too)."""
    out: list[str] = []
    sections = [unmarked(b.content) for b in blocks if b.kind == "heading" and b.level == 2]
    folded = False
    for b in blocks:
        if b.kind == "heading" and b.level == 2:
            name = unmarked(b.content)
            anchor = f"s{sections.index(name) + 1}"
            if folded:
                out.append("</details>")
            folded = name.startswith(APPENDIX_WORD)  # the detail sections fold
            head = f'<h2 id="{anchor}">{_inline(b.content)}</h2>'
            out.append(f"<details><summary>{head}</summary>" if folded else head)
        elif b.kind == "heading":
            out.append(f"<h{b.level}>{_inline(b.content)}</h{b.level}>")
            if b.level == 1 and sections:
                out.append('<nav class="toc">' + "".join(
                    f'<a href="#s{i}">{html.escape(_toc_label(n))}</a>'
                    for i, n in enumerate(sections, start=1)) + "</nav>")
        elif b.kind == "paragraph":
            out.append(f"<p>{_inline(str(b.content))}</p>")
        elif b.kind == "bullets":
            out.append("<ul>" + "".join(f"<li>{_inline(str(x))}</li>" for x in b.content) + "</ul>")
        elif b.kind == "table":
            df = cast("pd.DataFrame", b.content)
            cells = df.map(unmarked)
            cells.columns = [unmarked(c) for c in df.columns]
            out.append('<div class="wide">' + cells.to_html(index=False, border=0, escape=True)
                       + "</div>")
        elif b.kind == "figure" and b.content in figures:
            data = base64.b64encode(figures[cast(str, b.content)]).decode("ascii")
            out.append(f'<figure><img alt="{html.escape(unmarked(b.caption))}" '
                       f'src="data:image/png;base64,{data}">'
                       f"<figcaption>{_inline(b.caption)}</figcaption></figure>")
    if folded:
        out.append("</details>")
    return "\n".join(out)
