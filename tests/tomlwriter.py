"""A small TOML writer for the tests that mutate studies as dicts (the standard library reads
TOML but does not write it).

Every value goes on one line as a top-level ``key = value`` with inline tables and arrays, which
TOML 1.0 reads back as the same dict: tables, arrays of tables, strings, integers, floats (``nan``
and ``inf`` included), booleans and dates.

>>> import tomllib
>>> d = {"a": {"b": [1, 2.5, float("inf")], "c d": "x\\"y"}, "u": [{"n": True}]}
>>> tomllib.loads(dumps(d)) == d
True
"""

from __future__ import annotations

import datetime
import json
import math
import re

_BARE = re.compile(r"^[A-Za-z0-9_-]+$")


def _key(k: str) -> str:
    return k if _BARE.match(k) else _string(k)


def _string(s: str) -> str:
    # JSON's escapes are TOML's, except that astral characters must stay as they are
    return json.dumps(s, ensure_ascii=False)


def value(v: object) -> str:
    """One TOML value, inline."""
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        return repr(v)
    if isinstance(v, str):
        return _string(v)
    if isinstance(v, (datetime.date, datetime.time)):
        return v.isoformat()
    if isinstance(v, (list, tuple)):
        return "[" + ", ".join(value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{" + ", ".join(f"{_key(str(k))} = {value(x)}" for k, x in v.items()) + "}"
    raise TypeError(f"no TOML form for {type(v).__name__}")


def dumps(data: dict) -> str:
    """A TOML document that reads back as ``data``."""
    return "".join(f"{_key(str(k))} = {value(v)}\n" for k, v in data.items())
