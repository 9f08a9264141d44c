"""One TOML table of a study with its dotted key prefix: typed, unit-aware getters.

Every getter raises :class:`~simunc.errors.StudyError` naming the full key,
what was given and what was expected; unknown keys are rejected with the
nearest valid key suggested.
"""

from __future__ import annotations

import difflib
import math
from typing import Any, TypeVar, overload

from simunc.errors import GIVEN_LIMIT, StudyError, plain
from simunc.units import parse, to_si

_V = TypeVar("_V")

#: Longest length a study may give [m] (full-scale and model lengths, depths, altitudes).
MAX_LENGTH = 1.0e6
_S = TypeVar("_S", bound=str)


class Table:
    """One TOML table with its dotted prefix; rejects unknown keys with a suggestion."""

    def __init__(self, data: Any, prefix: str, allowed: tuple[str, ...]) -> None:
        if not isinstance(data, dict):
            raise StudyError(prefix, data, "a table")
        self.data = data
        self.prefix = prefix
        for key in data:
            if key not in allowed:
                close = difflib.get_close_matches(key, allowed, n=1, cutoff=0.5)
                hint = f"did you mean '{self.key(close[0])}'?" if close else (
                    "valid keys: " + ", ".join(allowed))
                raise StudyError(self.key(plain(key, GIVEN_LIMIT)), "an unknown key",
                                 "one of the documented keys", hint)

    def key(self, name: str) -> str:
        return f"{self.prefix}.{name}" if self.prefix else name

    def has(self, name: str) -> bool:
        return name in self.data

    def require(self, name: str, why: str = "") -> Any:
        if name not in self.data:
            raise StudyError(self.key(name), "nothing (the key is missing)", "a value" + (
                f" ({why})" if why else ""))
        return self.data[name]

    def quantity(self, name: str, dimension: str, *, positive: bool = True,
                 default: float | None = None, why: str = "") -> float:
        if name not in self.data and default is not None:
            return default
        raw = self.require(name, why)
        value = to_si(self.key(name), raw, dimension)
        check_finite(self.key(name), raw, value)
        if dimension == "length" and abs(value) > MAX_LENGTH:
            raise StudyError(self.key(name), raw, f"a length of at most {MAX_LENGTH / 1000:g} km "
                             "(a larger one leaves the similitude model's range)")
        if positive and value <= 0.0:
            raise StudyError(self.key(name), raw, f"a {dimension.replace('_', ' ')} greater than zero")
        return value

    def number(self, name: str, *, default: float | None = None, low: float = -math.inf,
               high: float = math.inf, low_open: bool = False, high_open: bool = False,
               what: str = "a number", allow_percent: bool = False) -> float:
        if name not in self.data and default is not None:
            return default
        raw = self.require(name)
        parsed = parse(self.key(name), raw, "dimensionless", allow_relative=True)
        if parsed.relative and not allow_percent:
            raise StudyError(self.key(name), raw, what + " (a plain number, not a percentage)")
        value = parsed.value
        check_finite(self.key(name), raw, value)
        bad_low = value <= low if low_open else value < low
        bad_high = value >= high if high_open else value > high
        if bad_low or bad_high:
            raise StudyError(self.key(name), raw, what)
        return value

    def integer(self, name: str, default: int, low: int, other: str = "") -> int:
        """A whole number >= ``low``; ``other`` names another accepted value for the message."""
        raw = self.data.get(name, default)
        if isinstance(raw, bool) or not isinstance(raw, int) or raw < low:
            raise StudyError(self.key(name), raw, f"a whole number >= {low}"
                             + (f" or {other}" if other else ""))
        return raw

    def text(self, name: str, default: str | None = None) -> str:
        raw = self.data.get(name, default)
        if raw is None:
            raw = self.require(name)
        if not isinstance(raw, str):
            raise StudyError(self.key(name), raw, "a string")
        return raw.strip()

    @overload
    def choice(self, name: str, options: dict[str, _V], default: str | None = None) -> _V: ...

    @overload
    def choice(self, name: str, options: tuple[_S, ...], default: str | None = None) -> _S: ...

    def choice(self, name: str, options: Any, default: str | None = None) -> Any:
        """``options[value]`` for a dict of options, else the value (one of ``options``)."""
        raw = self.text(name, default)
        if raw not in options:
            close = difflib.get_close_matches(raw, list(options), n=1, cutoff=0.5)
            raise StudyError(self.key(name), repr(plain(raw, GIVEN_LIMIT)),
                             "one of " + ", ".join(repr(o) for o in options),
                             f"did you mean {close[0]!r}?" if close else "")
        return options[raw] if isinstance(options, dict) else raw

    def pair(self, name: str, dimension: str) -> tuple[float, float] | None:
        if name not in self.data:
            return None
        raw = self.data[name]
        if not isinstance(raw, list) or len(raw) != 2:
            raise StudyError(self.key(name), raw, f"a list of two values [low, high] of {dimension}")
        lo, hi = (to_si(f"{self.key(name)}[{i}]", v, dimension) for i, v in enumerate(raw))
        for i, v in enumerate((lo, hi)):
            check_finite(f"{self.key(name)}[{i}]", raw[i], v)
        if dimension != "dimensionless" and lo <= 0.0:
            raise StudyError(f"{self.key(name)}[0]", raw[0], "a value greater than zero")
        if not lo < hi:
            raise StudyError(self.key(name), raw, "low < high")
        return lo, hi

    def optional_quantity(self, name: str, dimension: str, positive: bool = True) -> float | None:
        return self.quantity(name, dimension, positive=positive) if name in self.data else None

    def names(self, name: str, default: tuple[str, ...] = ()) -> tuple[str, ...]:
        """A string or a list of strings."""
        raw = self.data.get(name, list(default))
        items = [raw] if isinstance(raw, str) else raw
        if not isinstance(items, list) or not all(isinstance(v, str) for v in items):
            raise StudyError(self.key(name), raw, "a name or a list of names")
        return tuple(items)

    def flag(self, name: str, default: bool) -> bool:
        raw = self.data.get(name, default)
        if not isinstance(raw, bool):
            raise StudyError(self.key(name), raw, "true or false")
        return raw

    def exclusive(self, names: tuple[str, ...], required: bool = True) -> str | None:
        present = [n for n in names if n in self.data]
        if len(present) > 1:
            raise StudyError(self.key(present[1]), "together with " + self.key(present[0]),
                             "only one of " + ", ".join(self.key(n) for n in names))
        if not present:
            if required:
                raise StudyError(self.key(names[0]), "nothing (the key is missing)",
                                 "one of " + ", ".join(self.key(n) for n in names))
            return None
        return present[0]


def check_finite(key: str, raw: Any, value: float) -> None:
    if not math.isfinite(value):
        raise StudyError(key, raw, "a finite value")
