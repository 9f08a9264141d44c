"""Study text in the report: literal spans and their Markdown and HTML forms.

The free text of a study (title, description, facility name, input, group and variable names,
requirement statements and notes, and the messages that quote them) enters a report block only
through :func:`lit`: folded to one line without control characters (:func:`simunc.errors.plain`)
and marked as a literal span.  The renderers show a literal span as written: :func:`md_inline`
escapes it for Markdown (CommonMark, with the GitHub tables' ``|``), ``html.escape`` for HTML.
The text around the spans is the report's own; the only markup it uses is ``**bold**``.  Table
cells are always literal (:func:`md_inline` every cell).
"""

from __future__ import annotations

import re

from simunc.errors import plain
from simunc.units import SUPERSCRIPT, number

#: Private-use characters that open and close a literal span (removed from study text by lit()).
OPEN, CLOSE = "\ue000", "\ue001"
_SPAN = re.compile(f"{OPEN}([^{CLOSE}]*){CLOSE}")
#: Characters with a meaning anywhere in a CommonMark line (code spans, emphasis, links and
#: images, raw HTML and autolinks, entities, headings' closing #), "|" of the GitHub tables, "~"
#: of their strikethrough and "$" of the math extensions; the backslash escapes each (CommonMark
#: 2.4).  ">" closes raw HTML and autolinks only after a "<", and "!" makes an image only before
#: a "[": with those escaped they matter at the start of a line only.
_ALWAYS = frozenset("\\`*[]<&|#~$")
#: At the start of a line: a block quote (">"), a bullet list item or a thematic break ("-",
#: "+"), an ordered list item ("1." or "1)" followed by a space).
_LINE_START = re.compile(r"^(?:(>|[-+](?![0-9]))|([0-9]{1,9})([.)])(?=\s|$))")


def lit(text: object) -> str:
    """``text`` folded to one line and marked as a literal span of a report block."""
    return OPEN + plain(text).replace(OPEN, "").replace(CLOSE, "") + CLOSE


def unmarked(text: object) -> str:
    """A block text without its span marks, as one line (for HTML, table cells and titles)."""
    return plain(text).replace(OPEN, "").replace(CLOSE, "")


def spans(text: object) -> list[tuple[bool, str]]:
    """``(literal, text)`` pieces of a block text folded to one line, in order."""
    parts = _SPAN.split(plain(text))
    return [(i % 2 == 1, p.replace(OPEN, "").replace(CLOSE, ""))
            for i, p in enumerate(parts) if p]


def md_inline(text: object) -> str:
    r"""``text`` as one line of Markdown that renders literally, wherever the line puts it.

    Backslash escapes (CommonMark 2.4) for :data:`_ALWAYS`, for ``_`` unless it stands between
    two letters or digits (such an underscore cannot open or close emphasis, CommonMark 6.2) and
    for the block-quote, list and thematic-break markers at the start.

    >>> md_inline("<img src=x onerror=alert(1)> [x](javascript:alert(1)) a|b")
    '\\<img src=x onerror=alert(1)> \\[x\\](javascript:alert(1)) a\\|b'
    >>> md_inline("- reynolds_ratio _x_")
    '\\- reynolds_ratio \\_x\\_'
    >>> md_inline("1. first\n## Summary"), md_inline("-0.5")
    ('1\\. first \\#\\# Summary', '-0.5')
    """
    s = plain(text)
    out = []
    for i, ch in enumerate(s):
        intraword = ch == "_" and 0 < i < len(s) - 1 and s[i - 1].isalnum() and s[i + 1].isalnum()
        out.append("\\" + ch if ch in _ALWAYS or (ch == "_" and not intraword) else ch)
    return _LINE_START.sub(lambda m: ("\\" + m[1]) if m[1] else f"{m[2]}\\{m[3]}", "".join(out))


def md(text: object) -> str:
    """A block text as Markdown: literal spans escaped (:func:`md_inline`), the report's own text
    as written except a ``<`` that could open raw HTML (a safety net for text not marked)."""
    return "".join(md_inline(p) if literal else re.sub(r"<(?=[A-Za-z/!?])", r"\\<", p)
                   for literal, p in spans(text))


def two_digits(x: float, digits: int = 2) -> str:
    """An uncertainty to two (or ``digits``) significant digits, a trailing zero kept
    (JCGM 100:2008 7.2.6).

    Written out in positional notation, never in e-notation.

    >>> two_digits(3.0), two_digits(4.38), two_digits(12.4), two_digits(0.000437)
    ('3.0', '4.4', '12', '0.00044')
    >>> two_digits(9.82e-05), two_digits(74218.5), two_digits(0.0006), two_digits(9.96)
    ('0.000098', '74000', '0.00060', '10')
    >>> two_digits(-3.88e-06), two_digits(2.997, 3), two_digits(9.804e-05, 3)
    ('-3.9 × 10⁻⁶', '3.00', '0.0000980')
    """
    import math

    r = float(f"{float(x):.{digits}g}")  # rounded first: 9.96 -> 10, two digits and no decimal
    if not math.isfinite(r) or r == 0.0:
        return f"{r:g}"
    exponent = math.floor(math.log10(abs(r)))
    if exponent < -5:   # 3.9 × 10⁻⁶ rather than a row of zeros
        return (f"{r / 10.0 ** exponent:.{digits - 1}f} × "
                f"10{str(exponent).translate(SUPERSCRIPT)}")
    return f"{r:.{max(digits - 1 - exponent, 0)}f}"


def with_uncertainty(value: float, u: float) -> tuple[str, str]:
    """A value rounded to the last digit of its uncertainty, the uncertainty to two significant
    digits (JCGM 100:2008 7.2.6).

    >>> with_uncertainty(1.000012, 0.00642)
    ('1.0000', '0.0064')
    >>> with_uncertainty(7.46e5, 1234.0)
    ('746000', '1200')
    """
    import math

    if not (math.isfinite(u) and u > 0.0) or not math.isfinite(value):
        return number(value), "0" if u == 0.0 else two_digits(u)
    exponent = math.floor(math.log10(u)) - 1   # the place of u's second digit
    decimals = max(-exponent, 0)
    step = 10.0 ** exponent
    return (f"{round(value / step) * step:.{decimals}f}", f"{round(u / step) * step:.{decimals}f}")
