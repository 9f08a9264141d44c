"""Units at the boundary: one pint registry, parsing of study strings to SI floats.

Every dimensional value in a study is a string such as ``"7500 m"``,
``"12 degC"`` or ``"0.05 %"``.  It is parsed here, once, when the study
loads; everything past this module works in SI floats.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

import pint

from simunc.errors import GIVEN_LIMIT, StudyError, plain



def _registry() -> pint.UnitRegistry:
    """pint's default registry, with its parsed definitions cached in the user's cache folder
    (pint's own ``cache_folder=":auto:"``: 0.03 s instead of 0.25 s at every start), or built
    afresh where that folder cannot be used."""
    try:
        return pint.UnitRegistry(cache_folder=":auto:")
    except Exception:  # noqa: BLE001 - an unwritable or corrupt cache must not stop a run
        return pint.UnitRegistry()


ureg = _registry()

#: Study dimension names -> (pint dimensionality, SI unit, example for messages).
DIMENSIONS: dict[str, tuple[str, str, str]] = {
    "length": ("[length]", "m", "'0.3 m'"),
    "pressure": ("[pressure]", "Pa", "'2.5 bar'"),
    "temperature": ("[temperature]", "K", "'305 K' or '12 degC'"),
    "temperature_difference": ("[temperature]", "K", "'0.2 K'"),
    "speed": ("[velocity]", "m/s", "'230 m/s'"),
    "frequency": ("1/[time]", "Hz", "'12 Hz'"),
    "area": ("[area]", "m^2", "'2.4 m^2'"),
    "volume": ("[volume]", "m^3", "'0.012 m^3'"),
    "force": ("[force]", "N", "'8 kN'"),
    "moment": ("[force] * [length]", "N*m", "'450 N*m'"),
    "angle": ("", "rad", "'2.5 deg'"),
    "per_angle": ("", "1/rad", "'0.105 1/deg' or '6.0 1/rad'"),
    "dimensionless": ("", "", "'0.78' or '2 %'"),
}

_NUMBER = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")
_RELATIVE_UNITS = {"percent", "permille", "ppm"}
_UNIT_TEXT = re.compile(r"^[A-Za-z0-9_ *^/.()%°µΩ-]*$")


@dataclass(frozen=True)
class Parsed:
    """A parsed study value: SI magnitude and whether it is relative (``%``)."""

    value: float
    relative: bool


def _split(key: str, text: object, expected: str) -> tuple[float, str]:
    if isinstance(text, bool):
        raise StudyError(key, text, expected)
    if isinstance(text, (int, float)):
        return float(text), ""
    if not isinstance(text, str):
        raise StudyError(key, text, expected)
    m = _NUMBER.match(text)
    if not m:
        raise StudyError(key, text, expected, "write a number followed by its unit")
    return float(m.group(1)), m.group(2)


#: A drag count: 1e-4 of a force coefficient (the unit drag is quoted in). pint's own ``count``
#: is a plain 1, so the words are read here before pint sees them.
COUNT = 1e-4
_COUNT_WORDS = re.compile(r"^(drag[ _]?)?counts?$")


def _quantity(key: str, text: object, expected: str) -> pint.Quantity:
    magnitude, unit = _split(key, text, expected)
    if _COUNT_WORDS.match(unit.strip().lower()):
        return ureg.Quantity(magnitude * COUNT, ureg.dimensionless)
    if not _UNIT_TEXT.match(unit):
        raise StudyError(key, text, expected, f"'{unit}' is not a unit")
    nesting = _nesting(unit)
    if nesting < 0:
        raise StudyError(key, text, expected, f"unbalanced parentheses in the unit '{unit}'")
    if len(unit) > MAX_UNIT_TEXT or nesting > MAX_UNIT_NESTING:
        raise StudyError(key, text, expected, f"a unit of at most {MAX_UNIT_TEXT} characters and "
                         f"{MAX_UNIT_NESTING} levels of parentheses")
    try:
        units = ureg.parse_units(unit) if unit else ureg.dimensionless
        return ureg.Quantity(magnitude, units)
    except Exception as exc:  # noqa: BLE001 - pint's parser raises many kinds (TokenError,
        # ZeroDivisionError, RecursionError, DefinitionSyntaxError, ...): all mean a bad unit
        raise StudyError(key, text, expected, f"unknown unit '{unit}'") from exc


#: Longest unit text and deepest parenthesis nesting the parser is given.
MAX_UNIT_TEXT, MAX_UNIT_NESTING = 100, 4


def _nesting(unit: str) -> int:
    """Deepest level of parentheses in ``unit``; -1 when they do not balance.

    >>> _nesting("kg/(m*s)"), _nesting("(m"), _nesting("m)("), _nesting("((m))")
    (1, -1, -1, 2)
    """
    depth = deepest = 0
    for c in unit:
        depth += (c == "(") - (c == ")")
        if depth < 0:
            return -1
        deepest = max(deepest, depth)
    return deepest if depth == 0 else -1


def parse(key: str, text: object, dimension: str, *, allow_relative: bool = False) -> Parsed:
    """Parse one study value to SI.

    Parameters
    ----------
    key : str
        Dotted study key, for error messages.
    text : str or float
        The value as written, e.g. ``"4.5 bar"``; a bare number is taken as
        SI for dimensionless quantities only.
    dimension : str
        One of :data:`DIMENSIONS`.
    allow_relative : bool
        Accept ``%``, ``permille`` or ``ppm`` and return ``relative=True``
        with the value as a fraction.

    Returns
    -------
    Parsed
        SI magnitude (``K`` for temperatures, ``Pa`` for pressures, ...).

    Examples
    --------
    >>> parse("a", "4.5 bar", "pressure").value
    450000.0
    >>> round(parse("a", "12 degC", "temperature").value, 2)
    285.15
    >>> parse("a", "0.05 %", "pressure", allow_relative=True)
    Parsed(value=0.0005, relative=True)
    """
    example = DIMENSIONS[dimension][2]
    noun = "number" if dimension == "dimensionless" else dimension.replace("_", " ")
    bare = _NUMBER.match(text) if isinstance(text, str) else None
    if bare is not None and dimension != "dimensionless" and _COUNT_WORDS.match(
            bare.group(2).strip().lower()):
        raise StudyError(key, text, f"{'an' if noun[0] in 'aeiou' else 'a'} {noun} such as "
                         f"{example}", "a drag count (0.0001) is for a coefficient only")
    if dimension in ("angle", "per_angle") and not isinstance(text, bool) and (
            isinstance(text, (int, float)) or (bare is not None and not bare.group(2))):
        raise StudyError(key, text, f"an angle with its unit such as {example} or '0.04 rad'"
                         if dimension == "angle" else f"a slope per angle with its unit such as "
                         f"{example}")
    expected = f"{'an' if noun[0] in 'aeiou' else 'a'} {noun} such as {example}"
    if allow_relative and dimension != "dimensionless":   # a number's example has a % already
        expected += " or a percentage of reading such as '0.05 %'"
    try:
        q = _quantity(key, text, expected)
    except StudyError as exc:
        raise _short(exc, text) from None
    try:
        out = _to_si(key, text, q, dimension, allow_relative, expected)
        if not math.isfinite(out.value):
            raise StudyError(key, text, f"a finite value ({expected})")
        return out
    except (ArithmeticError, ValueError, TypeError) as exc:
        if isinstance(exc, StudyError):
            raise _short(exc, text) from None
        # pint conversions of odd units (e.g. 'm**1e9 / m**1e9') can overflow or fail
        raise StudyError(key, text, expected, "a unit that converts to SI") from exc


def _short(exc: StudyError, text: object) -> StudyError:
    """``exc`` echoing at most :data:`~simunc.errors.GIVEN_LIMIT` characters of the value."""
    if isinstance(text, str) and exc.given == text and len(text) > GIVEN_LIMIT:
        return StudyError(exc.key, plain(text, GIVEN_LIMIT), exc.expected, exc.hint)
    return exc


def _to_si(key: str, text: object, q: pint.Quantity, dimension: str, allow_relative: bool,
           expected: str) -> Parsed:
    dim, si, _ = DIMENSIONS[dimension]
    unit_name = str(q.units)
    if unit_name in _RELATIVE_UNITS:
        fraction = float(q.to("dimensionless").magnitude)
        if allow_relative:
            return Parsed(fraction, True)
        if dimension == "dimensionless":
            return Parsed(fraction, False)
        raise StudyError(key, text, expected)
    if dimension == "temperature_difference" and unit_name in ("degree_Celsius", "degree_Fahrenheit"):
        q = ureg.Quantity(q.magnitude, "delta_" + ("degC" if "Celsius" in unit_name else "degF"))
    if dim == "":
        if not q.dimensionless:
            raise StudyError(key, text, expected)
        return Parsed(float(q.to("dimensionless").magnitude), False)
    if not q.check(dim):
        raise StudyError(key, text, expected)
    if dimension == "temperature" and unit_name.startswith("delta_"):
        raise StudyError(key, text, expected, "an absolute temperature, not a difference")
    return Parsed(float(q.to(si).magnitude), False)


def to_si(key: str, text: object, dimension: str) -> float:
    """Parse an absolute (never relative) study value to an SI float.

    >>> to_si("model.reference_length", "30 cm", "length")
    0.3
    """
    return parse(key, text, dimension).value


def written_unit(text: object) -> str:
    """The unit of a study value as written (``""`` for a bare number); ``%`` as ``%``.

    >>> written_unit("0.05 mm"), written_unit("0.3 degC"), written_unit(0.002), written_unit("2 %")
    ('mm', 'degC', '', '%')
    """
    if isinstance(text, bool) or not isinstance(text, str):
        return ""
    m = _NUMBER.match(text)
    return m.group(2).strip() if m else ""


#: Relative units as written -> the fraction one of them is.
RELATIVE_FACTORS = {"%": 1e-2, "percent": 1e-2, "permille": 1e-3, "‰": 1e-3, "ppm": 1e-6}


def from_si(value: float, dimension: str, unit: str) -> float:
    """An SI size (a difference or a spread, never an absolute temperature) in the unit it was
    written in: the inverse of :func:`parse` for a size.

    A temperature difference written in ``degC`` or ``degF`` is a difference of that scale
    (1 degC = 1 K). A relative unit takes a fraction; a drag count is 1e-4.

    >>> from_si(5e-5, "length", "mm"), from_si(186.6, "pressure", "mbar")
    (0.05, 1.866)
    >>> from_si(0.5, "temperature_difference", "degC"), from_si(0.0005, "dimensionless", "%")
    (0.5, 0.05)
    """
    if not unit:
        return float(value)
    if unit in RELATIVE_FACTORS:
        return float(value) / RELATIVE_FACTORS[unit]
    if _COUNT_WORDS.match(unit.strip().lower()):
        return float(value) / COUNT
    q = ureg.Quantity(float(value), DIMENSIONS[dimension][1] or "dimensionless")
    units = ureg.parse_units(unit)
    name = str(units)
    if name in ("degree_Celsius", "degree_Fahrenheit"):
        units = ureg.parse_units("delta_" + ("degC" if "Celsius" in name else "degF"))
    out = float(q.to(units).magnitude)
    return float(f"{out:.12g}")  # drop the last bits of the unit factors' rounding


#: Dimensions a report shows in the units the study was written in (engineering units).
DISPLAY_DIMENSIONS = ("pressure", "temperature", "length", "speed")


def dimension_of(unit: str) -> str | None:
    """The :data:`DISPLAY_DIMENSIONS` entry a written unit measures, else None.

    >>> dimension_of("bar"), dimension_of("degC"), dimension_of("mm"), dimension_of("%")
    ('pressure', 'temperature', 'length', None)
    """
    if not unit or unit in RELATIVE_FACTORS or _COUNT_WORDS.match(unit.strip().lower()):
        return None
    try:
        units = ureg.parse_units(unit)
    except Exception:  # noqa: BLE001 - any unparsable text simply measures nothing shown
        return None
    for dim in DISPLAY_DIMENSIONS:
        if ureg.Quantity(1.0, units).check(DIMENSIONS[dim][0]):
            return dim
    return None


def display_units(values) -> dict[str, str]:
    """The unit written most often for each of :data:`DISPLAY_DIMENSIONS` among study values
    (the first one written on a tie); a dimension never written is left out.

    >>> display_units(["2.5 bar", "310 K", "0.05 mm", "7 bar", "3.2 m", "0.3 K"])
    {'pressure': 'bar', 'temperature': 'K', 'length': 'mm'}
    """
    counts: dict[str, dict[str, int]] = {}
    for v in values:
        unit = written_unit(v)
        dim = dimension_of(unit)
        if dim is not None:
            seen = counts.setdefault(dim, {})
            seen[unit] = seen.get(unit, 0) + 1
    return {dim: max(seen, key=lambda u: seen[u]) for dim, seen in counts.items()}


def to_display(value: float, dimension: str, unit: str) -> float:
    """An SI value (an absolute temperature for ``temperature``) in a display unit.

    >>> round(to_display(310.0, "temperature", "degC"), 2), to_display(746421.0, "pressure", "bar")
    (36.85, 7.46421)
    """
    out = float(ureg.Quantity(float(value), DIMENSIONS[dimension][1]).to(unit).magnitude)
    return float(f"{out:.12g}")


#: Text of a unit as a test plan prints it.
_PRINTED = {"degC": "°C", "degF": "°F", "delta_degC": "°C", "delta_degF": "°F", "deg": "°",
              "degree": "°", "percent": "%", "ohm": "Ω", "micrometer": "µm", "um": "µm"}


def unit_text(unit: str) -> str:
    """A written unit as a test plan prints it (``degC`` -> ``°C``)."""
    return _PRINTED.get(unit.strip(), unit.strip())


#: SI units of the values shown in the study's own units, and their dimensions.
SI_DIMENSION = {"Pa": "pressure", "K": "temperature", "m": "length", "m/s": "speed"}


def in_display_units(value: float, si_unit: str, shown: dict) -> tuple[float, str]:
    """An SI value (an absolute temperature for K) in the unit ``shown`` holds for its
    dimension (a study's :func:`display_units`), with the unit's text; as it is otherwise.

    >>> in_display_units(746421.0, "Pa", {"pressure": "bar"})
    (7.46421, 'bar')
    >>> in_display_units(291.15, "K", {"temperature": "degC"})
    (18.0, '°C')
    """
    dim = SI_DIMENSION.get(si_unit)
    unit = shown.get(dim) if dim else None
    if not dim or not unit or unit == si_unit:
        return value, si_unit
    return to_display(value, dim, unit), unit_text(unit)


#: Digits and minus sign as superscripts (the exponent of 1.9 × 10⁷).
SUPERSCRIPT = str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹")


def number(v: float, digits: int = 6) -> str:
    """A value to ``digits`` significant digits as an engineer writes it: positional from 0.0001
    to below a million, otherwise ``a.bcd × 10ⁿ`` (never e-notation).

    >>> number(1.88956e7), number(1.73198e-5), number(0.78), number(102304.0, 4)
    ('1.88956 × 10⁷', '1.73198 × 10⁻⁵', '0.78', '102300')
    >>> number(746421.0, 4), number(2.5, 5), number(-0.000123456, 3)
    ('746400', '2.5', '-0.000123')
    """
    text = f"{float(v):.{digits}g}"
    if "e" not in text:
        return text
    mantissa, exponent = text.split("e")
    r = float(text)
    if 1e-4 <= abs(r) < 1e6:   # positional, rounded to the digits asked
        decimals = max(digits - 1 - int(exponent), 0)
        out = f"{r:.{decimals}f}"
        return out.rstrip("0").rstrip(".") if "." in out else out
    return f"{mantissa} × 10{str(int(exponent)).translate(SUPERSCRIPT)}"


def quantity_text(value: float, si_unit: str, shown=None, digits: int = 6) -> str:
    """An SI value with its unit, in the unit ``shown`` (a study's display units) holds for its
    dimension, to ``digits`` significant digits (:func:`number`); no unit for a pure number.

    >>> quantity_text(731449.0, "Pa", {"pressure": "bar"}), quantity_text(0.95, "1")
    ('7.31449 bar', '0.95')
    >>> quantity_text(291.15, "K", {"temperature": "degC"}, 4), quantity_text(900000.0, "Pa")
    ('18 °C', '900000 Pa')
    """
    if shown:
        value, si_unit = in_display_units(value, si_unit, dict(shown))
    text = number(value, digits)
    return f"{text} {si_unit}" if si_unit and si_unit != "1" else text


def load_text(value: float, moment: bool = False) -> str:
    """A balance load (a force [N] or a moment [N m]) in N or kN, four significant digits.

    >>> load_text(20770.0), load_text(12000.0), load_text(150.0), load_text(1500.0, moment=True)
    ('20.77 kN', '12 kN', '150 N', '1.5 kN·m')
    """
    kilo = abs(value) >= 1e3
    return (f"{number(value / 1e3 if kilo else value, 4)} {'k' if kilo else ''}N"
            + ("·m" if moment else ""))
