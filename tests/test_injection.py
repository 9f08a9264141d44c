"""A study's free text reaches every output as text, never as markup or terminal control.

Payloads (raw HTML, a ``javascript:`` link, a forged heading, an HTML comment, table pipes and
new lines, matplotlib mathtext, terminal escape sequences) go into every free-text field the
schema allows (docs/study-file.md): title, description, facility name, input names and notes,
custom-group, sensitivity-group and dimensional-analysis variable names, requirement notes.

References the checks are made against:

* report.md: rendered by markdown-it-py with its ``commonmark`` preset (the CommonMark spec,
  https://spec.commonmark.org/0.31.2/) and its ``table`` rule (the GitHub Flavored Markdown spec,
  section 4.10 "Tables (extension)", https://github.github.com/gfm/#tables-extension-); raw HTML
  is enabled in that preset, so any HTML that got through would show as ``html_block`` or
  ``html_inline`` tokens (CommonMark 4.6 and 6.6).
* report.html: parsed by :mod:`html.parser` of the standard library, which tokenizes as the HTML
  standard does (https://html.spec.whatwg.org/multipage/parsing.html) for these checks: start
  tags, their attributes (event handlers are the ``on*`` content attributes, HTML standard
  "Event handlers", https://html.spec.whatwg.org/multipage/webappapis.html#event-handlers),
  comments and text.
* console: control functions start with ESC (0x1B) or a C1 control (0x80-0x9F) (ECMA-48, 5th
  edition, sections 5.3 and 8.3); xterm also ends an operating-system command with BEL (0x07).
  No C0 control but the new line (and tab), no DEL and no C1 control may reach standard output
  or standard error.
"""

from __future__ import annotations

import io
import json
import re
import sys
import tomllib
from html.parser import HTMLParser

import pandas as pd
import pytest
from markdown_it import MarkdownIt

from simunc.cli import main
from simunc.errors import GIVEN_LIMIT, StudyError, plain
from simunc.report import render
from simunc.report.blocks import Block
from simunc.report.text import lit, md_inline

from .conftest import DEMO

SCRIPT = "<script>alert(1)</script>"
IMG = "<img src=x onerror=alert(1)>"
LINK = "[x](javascript:alert(1))"
ESC = "\x1b[31mred\x1b[0m \x1b]0;title\x07"
#: Every payload; each must render as its plain() text.
PAYLOADS = [SCRIPT, IMG, LINK, "title\n## Summary\nforged", "<!-- hidden", "a | b\nc",
            "$\\frac{1}{0}$", "$\\frac{1}$", ESC, "**bold** _em_ `code` ~~del~~", "&lt; &amp;",
            "- item", "1. item", "# heading", "---", "    indented", "<http://x.example>",
            "a\\|b", "trailing\\", "> quote", ">> q", "x > y", "![i](x.png)", "! [i]",
            "<?php ?>", "<a@b.c>", "x\u2028y\u202ez"]

#: Input names of the payload study (by their demo names).
NAMES = {
    "p0 transducer calibration": LINK,
    "static-pressure transducer": f"a | b\nc {IMG}",
    "T0 thermometer": "$\\frac{1}{0}$ T0",
    "T0 control stability": f"{ESC} T0 control",
    "model chord manufacturing": "$\\frac{1}$ chord",  # mathtext that does not parse
}
TITLE = f"{SCRIPT} Arven\n## Summary\nforged {ESC}"
DESCRIPTION = f"<!-- {LINK} the rest of the report must still show"
FACILITY = f"{IMG} | tunnel"
GROUP = f"{SCRIPT}|$g$"
CUSTOM = "$e$<b>|eu"
NOTE = f"{SCRIPT} | note\n## Summary"


def _md_parser():
    return MarkdownIt("commonmark").enable("table")


def _text(inline) -> str:
    """The rendered text of an inline token (its text children; escapes already resolved)."""
    return "".join(c.content for c in inline.children if c.type in ("text", "text_special"))


class _Html(HTMLParser):
    """Start tags with their attributes, comments, and the text of each element by tag name."""

    #: Elements without content or end tag (HTML standard, "Void elements").
    VOID = {"area", "base", "br", "col", "embed", "hr", "img", "input", "link", "meta", "source",
            "track", "wbr"}

    def __init__(self, page: str) -> None:
        super().__init__(convert_charrefs=True)
        self.tags: list[tuple[str, dict]] = []
        self.comments: list[str] = []
        self._stack: list[str] = []
        self.by_tag: dict[str, list[str]] = {}
        self.feed(page)
        self.close()

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))
        if tag not in self.VOID:
            self._stack.append(tag)
            self.by_tag.setdefault(tag, []).append("")

    def handle_endtag(self, tag):
        if tag in self._stack:
            while self._stack and self._stack.pop() != tag:
                pass

    def handle_comment(self, data):
        self.comments.append(data)

    def handle_data(self, data):
        for tag in set(self._stack):
            self.by_tag[tag][-1] += data


def _assert_inert(page: str) -> _Html:
    """No script element, no event-handler attribute, no javascript: URL, no comment."""
    doc = _Html(page)
    assert "script" not in {t for t, _ in doc.tags}
    for tag, attrs in doc.tags:
        assert not [a for a in attrs if a.lower().startswith("on")], (tag, attrs)
        for a in ("href", "src", "action", "formaction"):
            assert not (attrs.get(a) or "").strip().lower().startswith("javascript:"), (tag, attrs)
    assert not doc.comments
    return doc


def _no_controls(text: str) -> None:
    bad = sorted({hex(ord(c)) for c in text if ord(c) < 0x20 and c not in "\n\t"
                  or 0x7F <= ord(c) <= 0x9F})
    assert not bad, f"control characters in the output: {bad}"


def _toml(data: dict) -> str:
    """TOML of a study dict: every table inline (TOML 1.0 inline tables and arrays); a JSON
    string of ASCII characters is a TOML basic string (same escapes: \\" \\\\ \\n \\uXXXX)."""
    def value(v):
        if isinstance(v, bool):
            return "true" if v else "false"
        if isinstance(v, (int, float)):
            return repr(v)
        if isinstance(v, str):
            return json.dumps(v)
        if isinstance(v, list):
            return "[" + ", ".join(value(x) for x in v) + "]"
        return "{" + ", ".join(f"{json.dumps(k)} = {value(x)}" for k, x in v.items()) + "}"
    text = "\n".join(f"{json.dumps(k)} = {value(v)}" for k, v in data.items()) + "\n"
    assert tomllib.loads(text) == data
    return text


def _payload_study() -> dict:
    data = tomllib.loads(DEMO.read_text())
    data["title"] = TITLE
    data["description"] = DESCRIPTION
    data["facility"]["name"] = FACILITY
    for u in data["uncertain"]:
        u["name"] = NAMES.get(u["name"], u["name"])
        u["note"] = NOTE
    data["correlations"]["pairs"] = [[NAMES["p0 transducer calibration"],
                                      NAMES["static-pressure transducer"], 0.8]]
    data["requirement"] = [{"group": "reynolds", "expanded_uncertainty": "1.5 %", "note": NOTE}]
    data.pop("sweep")
    data["sensitivity"] = {"groups": {GROUP: [NAMES["T0 thermometer"],
                                              NAMES["T0 control stability"]]}}
    data["match"]["custom"] = {CUSTOM: {"powers": {"static_pressure": 1, "density": -1,
                                                   "speed": -2},
                                        "tolerance": "5 %", "solve": False}}
    data["dimensional_analysis"] = {"variables": {SCRIPT: "N", "rho|x": "kg/m^3", "V": "m/s",
                                                  "D\n## Summary": "m", "mu": "Pa s"}}
    data["run"]["sobol_base_samples"] = 64
    data["design"] = {"trials": 1000, "verify_trials": 1000}
    return data


# ---- helpers, each payload alone ----------------------------------------------------------


def test_plain_folds_and_strips_controls():
    for p in PAYLOADS:
        s = plain(p)
        _no_controls(s)
        assert "\n" not in s and s == s.strip()
    assert plain(TITLE) == "<script>alert(1)</script> Arven ## Summary forged [31mred[0m ]0;title"


@pytest.mark.parametrize("payload", PAYLOADS)
def test_md_inline_renders_literally(payload):
    """The CommonMark rendering of md_inline(text) is text only, equal to plain(text), as a
    paragraph, a heading, a list item, inside bold and in a table cell."""
    md = _md_parser()
    want = plain(payload)
    esc = md_inline(payload)
    for source, kind in ((esc, "paragraph_open"), (f"## {esc}", "heading_open"),
                         (f"- {esc}", "bullet_list_open"), (f"x **{esc}**", "paragraph_open"),
                         (f"| a | b |\n|---|---|\n| {esc} | z |", "table_open")):
        tokens = md.parse(source)
        assert tokens[0].type == kind, (source, [t.type for t in tokens])
        inline = [t for t in tokens if t.type == "inline"]
        kids = [c for t in inline for c in t.children]
        assert {c.type for c in kids} <= {"text", "strong_open", "strong_close"}, source
        texts = [_text(t) for t in inline]
        if kind == "table_open":  # header a, b; row: the payload, then z
            assert texts == ["a", "b", want, "z"], source
        else:
            assert texts == [("x " if "**" in source else "") + want], source


def test_md_inline_keeps_ordinary_text_readable():
    assert md_inline("T0 control stability") == "T0 control stability"
    assert md_inline("reynolds_ratio") == "reynolds_ratio"
    assert md_inline("-0.0125") == "-0.0125"
    assert md_inline("P(in band) >= 95 %!") == "P(in band) >= 95 %!"


@pytest.mark.parametrize("payload", PAYLOADS)
def test_html_page_is_inert(payload):
    """report.html of blocks carrying the payload: no markup of it, its text as written."""
    df = pd.DataFrame([(payload, payload)], columns=[payload, "x"])
    blocks = [Block("heading", lit(payload), 1), Block("paragraph", lit(payload)),
              Block("paragraph", f"**{lit(payload)}**"), Block("bullets", [lit(payload)]),
              Block("table", df), Block("figure", "f.png", caption="Sweep 1: " + lit(payload))]
    doc = _assert_inert(render.html_page(blocks, {"f.png": b"png"}))
    want = plain(payload)
    assert doc.by_tag["title"] == [want] and doc.by_tag["h1"] == [want]
    assert doc.by_tag["p"] == [want, want] and doc.by_tag["li"] == [want]
    assert doc.by_tag["th"] == [want, "x"] and doc.by_tag["td"] == [want, want]
    assert doc.by_tag["strong"] == [want]
    assert [a["alt"] for t, a in doc.tags if t == "img"] == ["Sweep 1: " + want]


@pytest.mark.parametrize("given, limit", [(ESC + "\n## x" + "y" * 5000, 3 * GIVEN_LIMIT),
                                          ([ESC + "\n## x", "y" * 5000], GIVEN_LIMIT)])
def test_study_error_folds_and_truncates_the_given_value(given, limit):
    """One line, no control character, the echo cut (a value at GIVEN_LIMIT, a text that may
    be simunc's explanation around a value at three times that)."""
    msg = str(StudyError("uncertain[0].name", given, "a name", hint=f"did you mean {ESC}?"))
    _no_controls(msg)
    assert "\n" not in msg and "## x" in msg
    echo = msg.split("given ", 1)[1].split("; expected")[0]
    assert len(echo) == limit and echo.endswith("...")


def test_check_prints_the_title_as_one_line(tmp_path, capsys):
    path = tmp_path / "study.toml"
    path.write_text(_toml(_payload_study()))
    assert main(["check", str(path)]) == 0
    out, err = capsys.readouterr()
    _no_controls(out + err)
    assert f"valid study '{plain(TITLE)}'" in out.splitlines()[0]


def test_errors_print_one_line_without_controls(tmp_path, capsys):
    data = _payload_study()
    data["uncertain"][1]["half_width"] = f"{ESC}\nnot_a_size"  # echoed as written
    path = tmp_path / "bad.toml"
    path.write_text(_toml(data))
    assert main(["check", str(path)]) == 2
    out, err = capsys.readouterr()
    _no_controls(out + err)
    assert err.count("\n") == 1 and "not_a_size" in err and err.startswith("simunc: error:")


# ---- the whole pipeline -------------------------------------------------------------------


@pytest.fixture(scope="module")
def payload_run(tmp_path_factory):
    folder = tmp_path_factory.mktemp("injection")
    path = folder / "study.toml"
    path.write_text(_toml(_payload_study()))
    out = folder / "report"
    capture = pytest.MonkeyPatch()
    stdout, stderr = io.StringIO(), io.StringIO()
    capture.setattr(sys, "stdout", stdout)
    capture.setattr(sys, "stderr", stderr)
    try:
        code = main(["run", str(path), "--out", str(out), "--trials", "2000", "--seed", "3"])
    finally:
        capture.undo()
    assert code == 0, stderr.getvalue()
    return out, stdout.getvalue(), stderr.getvalue()


def _cell_separators(line: str) -> int:
    """Cell separators of a GFM table row: the "|" not escaped by a backslash."""
    n, i = 0, 0
    while i < len(line):
        if line[i] == "\\":
            i += 2
            continue
        n += line[i] == "|"
        i += 1
    return n


@pytest.mark.slow
def test_report_md_renders_study_text_literally(payload_run):
    out, _, _ = payload_run
    source = (out / "report.md").read_text()
    tokens = _md_parser().parse(source)
    types = {t.type for t in tokens} | {c.type for t in tokens for c in (t.children or [])}
    assert not types & {"html_block", "html_inline", "link_open", "code_block", "fence", "hr",
                        "blockquote_open", "ordered_list_open"}, types
    images = [c.attrGet("src") for t in tokens for c in (t.children or []) if c.type == "image"]
    assert images and all(re.fullmatch(r"[a-z_0-9]+\.png", s) for s in images), images
    assert all((out / s).is_file() for s in images)

    headings = [(tokens[i].tag, _text(tokens[i + 1])) for i, t in enumerate(tokens)
                if t.type == "heading_open"]
    assert headings[0] == ("h1", plain(TITLE))
    assert [h for h in headings if h[0] == "h1"] == [headings[0]]
    assert [h for h in headings if h[1] == "Summary"] == [("h2", "Summary")]
    # the description renders as a paragraph and the report goes on to its last section
    assert tokens[3].type == "paragraph_open" and _text(tokens[4]) == plain(DESCRIPTION)
    assert headings[-1][0] == "h2" and re.fullmatch(r"Appendix [A-Z]\. Reproducibility",
                                                     headings[-1][1]), headings[-1]

    # every table row has as many cells as its header (in the source: GFM drops extra cells)
    lines = source.splitlines()
    tables = [t.map for t in tokens if t.type == "table_open"]
    assert len(tables) > 10
    for start, end in tables:
        counts = {_cell_separators(line) for line in lines[start:end]}
        assert len(counts) == 1, lines[start:end]
    # and the payloads are read whole: input names are whole cells, the others inside one
    texts = [_text(t) for t in tokens if t.type == "inline"]
    for name in NAMES.values():
        assert plain(name) in texts, name
    for text in (GROUP, CUSTOM, SCRIPT, "rho|x", "D ## Summary", NOTE, FACILITY):
        assert any(plain(text) in t for t in texts), text


@pytest.mark.slow
def test_report_html_is_inert(payload_run):
    out, _, _ = payload_run
    doc = _assert_inert((out / "report.html").read_text())
    assert doc.by_tag["title"] == [plain(TITLE)] and doc.by_tag["h1"] == [plain(TITLE)]
    assert doc.by_tag["h2"].count("Summary") == 1
    assert plain(DESCRIPTION) in doc.by_tag["p"]
    assert all(a["src"].startswith("data:image/png;base64,") for t, a in doc.tags if t == "img")
    assert plain(NAMES["static-pressure transducer"]) in doc.by_tag["td"]


@pytest.mark.slow
def test_console_and_figures(payload_run):
    out, stdout, stderr = payload_run
    _no_controls(stdout + stderr)
    assert "wrote" in stdout
    # the figures that draw the input and group names were drawn ($ and mathtext in names)
    for name in ("sobol_indices.png", "tightening.png", "histogram_reynolds_ratio.png"):
        assert (out / name).read_bytes().startswith(b"\x89PNG\r\n\x1a\n")
