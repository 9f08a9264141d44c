"""Errors that reach the user as one line and an exit code.

Every problem with a study is raised as :class:`StudyError`, which names the
study key, what was given and what was expected.  The command line prints the
message on one line and exits with :data:`EXIT_BAD_INPUT`; it never shows a
traceback for bad input.
"""

from __future__ import annotations

import re

EXIT_OK = 0
EXIT_INTERNAL = 1
EXIT_BAD_INPUT = 2

#: Characters removed from text shown to the user: C0 and C1 controls that are not white space
#: (ESC starts the terminal's escape sequences), DEL, and the bidirectional overrides and
#: isolates (U+202A-U+202E, U+2066-U+2069) that reorder what a terminal or a viewer shows.
CONTROL = re.compile(r"[\x00-\x08\x0e-\x1b\x7f-\x84\x86-\x9f\u202a-\u202e\u2066-\u2069]")
#: Longest echo of a given value in an error message (longer ones end in "..."); a given text
#: (the value as written, or simunc's explanation around it) may be three times as long.
GIVEN_LIMIT = 200


def plain(text: object, limit: int | None = None) -> str:
    r"""``text`` as one line for a console, an error message or a report.

    Control characters (:data:`CONTROL`) are removed, every run of white space (new lines, tabs,
    the other line separators included) becomes one space, and the ends are stripped; with
    ``limit``, a longer result is cut to ``limit`` characters ending in ``...``.

    >>> plain("a\x1b[31m red\r\n## Summary\u2028x\x07")
    'a[31m red ## Summary x'
    >>> plain("x" * 10, limit=8)
    'xxxxx...'
    """
    s = " ".join(CONTROL.sub("", str(text)).split())
    return s if limit is None or len(s) <= limit else s[: max(limit - 3, 0)] + "..."


def toml_text(value: object, limit: int = 4 * GIVEN_LIMIT) -> str:
    """``value`` written as a study file (TOML) writes it, not as Python shows it: ``true``,
    ``["a", 1]``, ``{ a = 1 }``, ``2020-01-01``, ``nan``; nesting below 8 levels and text past
    about ``limit`` characters become ``...``.

    >>> toml_text({"a": [True, 1.5, "x"], "b c": float("inf")})
    '{ a = [true, 1.5, "x"], "b c" = inf }'
    """
    out: list[str] = []
    size = 0

    def put(text: str) -> bool:
        nonlocal size
        out.append(text)
        size += len(text)
        return size <= limit

    def walk(v: object, depth: int) -> bool:
        if depth > 8:
            return put("...")
        if isinstance(v, bool):
            return put("true" if v else "false")
        if isinstance(v, float):
            return put(repr(v) if v == v and abs(v) != float("inf") else
                       "nan" if v != v else ("inf" if v > 0 else "-inf"))
        if isinstance(v, int):
            return put(str(v))
        if isinstance(v, str):
            return put('"' + v.replace("\\", "\\\\").replace('"', '\\"') + '"')
        if isinstance(v, (list, tuple)):
            if not put("["):
                return False
            for j, item in enumerate(v):
                if (j and not put(", ")) or not walk(item, depth + 1):
                    return False
            return put("]")
        if isinstance(v, dict):
            if not put("{ " if v else "{"):
                return False
            for j, (k, item) in enumerate(v.items()):
                name = str(k) if re.fullmatch(r"[A-Za-z0-9_-]+", str(k)) else f'"{k}"'
                if (j and not put(", ")) or not put(name + " = ") or not walk(item, depth + 1):
                    return False
            return put(" }" if v else "}")
        iso = getattr(v, "isoformat", None)
        return put(iso() if callable(iso) else str(v))

    if isinstance(value, str):
        return value
    complete = walk(value, 0)
    text = "".join(out)
    return text if complete else text[:limit] + "..."


class SimuncError(Exception):
    """Base class of the errors simunc raises on purpose."""

    exit_code = EXIT_INTERNAL


_INDEXED = re.compile(r"([A-Za-z_][A-Za-z0-9_]*)\[(\d+)\]")


def ordinals(key: str) -> str:
    """The tables and entries of a study key counted from 1, as a reader counts them in the
    file (the key itself keeps the 0-based index of a path).

    >>> ordinals("uncertain[0].grades[2].price"), ordinals("facility.mach")
    (' (uncertain no. 1, grades no. 3)', '')
    """
    found = _INDEXED.findall(str(key))
    if not found:
        return ""
    return " (" + ", ".join(f"{name} no. {int(i) + 1}" for name, i in found) + ")"


class StudyError(SimuncError, ValueError):
    """A study file that cannot be used as written.

    Parameters
    ----------
    key : str
        Dotted study key, e.g. ``"facility.stagnation_temperature"``.
    given : object
        What the study says (shown with ``repr`` unless it is already a str).
    expected : str
        What would have been accepted.
    hint : str, optional
        A short suggestion (e.g. the nearest valid key).
    """

    exit_code = EXIT_BAD_INPUT

    def __init__(self, key: str, given: object, expected: str, hint: str = "") -> None:
        self.key = key
        self.given = given
        self.expected = expected
        self.hint = hint
        # A value is cut at GIVEN_LIMIT; a text may also be an explanation simunc composed
        # around a value (a set point outside the fluid model, why trials are non-physical).
        given_text = (plain(given, 3 * GIVEN_LIMIT) if isinstance(given, str)
                      else plain(toml_text(given), GIVEN_LIMIT))
        msg = f"study key '{key}'{ordinals(key)}: given {given_text}; expected {expected}"
        if hint:
            msg += f" ({hint})"
        super().__init__(plain(msg))

