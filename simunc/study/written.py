"""Tolerances stated in the form the study wrote them, for a test plan.

An input's size is written as a datasheet or a certificate states it: limits ±a for a control
or a resolution, ±(% of reading + % of full scale + an absolute term) for an instrument's
accuracy (a resistance thermometer's class as ±(a + b·|t|) with t in degrees Celsius,
IEC 60751), U at a stated k or coverage probability for a calibration certificate, u, or the
standard deviation of n readings.  A tolerance scale s (:mod:`simunc.study.planning`) multiplies
every term of that size, so the allowed tolerance is stated here in the same form and the same
units (bar, mm, degC, %) as the written one.

Numbers of an allowed tolerance are rounded *down* to two significant digits, so that the
stated tolerance never exceeds the allowed one; a size at s = 1 is quoted to six digits, as
written.
"""

from __future__ import annotations

import math

from simunc.study.catalogue import TARGETS
from simunc.study.schema import InputSpec
from simunc.units import RELATIVE_FACTORS, from_si, unit_text

#: IEC 60751:2008 tolerance classes of platinum resistance thermometers: class -> (a [K], b),
#: limits +-(a + b |t|) with t in degrees Celsius.
RTD_CLASSES = {"AA": (0.1, 0.0017), "A": (0.15, 0.002), "B": (0.3, 0.005), "C": (0.6, 0.01)}
#: The temperatures [degC] over which each class holds (wire-wound resistors, IEC 60751:2008).
RTD_RANGES = {"AA": (-50.0, 250.0), "A": (-100.0, 450.0), "B": (-196.0, 600.0),
              "C": (-196.0, 600.0)}

def round_down(value: float, digits: int = 2) -> str:
    """``value`` rounded down (towards zero) to ``digits`` significant digits, as text.

    >>> round_down(0.0760745), round_down(4340.47), round_down(1.0), round_down(0.15)
    ('0.076', '4300', '1.0', '0.15')
    """
    if value == 0.0 or not math.isfinite(value):
        return f"{value:g}"
    e = math.floor(math.log10(abs(value)))
    step = 10.0 ** (e - digits + 1)
    kept = math.floor(abs(value) / step * (1.0 + 1e-12)) * step  # 0.15 stays 0.15
    decimals = max(0, digits - 1 - e)
    return ("-" if value < 0 else "") + f"{kept:.{decimals}f}"


def _number(value: float, exact: bool) -> str:
    return f"{value:.6g}" if exact else round_down(value)


def _quantity(si: float, dimension: str, unit: str, exact: bool, relative: bool = False) -> str:
    """An SI size (a fraction when ``relative``) in ``unit``, with its unit."""
    if relative:
        unit = unit or ""
        value = from_si(si, "dimensionless", unit) if unit else si
    else:
        value = from_si(si, dimension, unit)
    text = unit_text(unit)
    sep = "" if text == "°" else " "  # SI Brochure 5.4.7: a space before % too
    return f"{_number(value, exact)}{sep}{text}" if text else _number(value, exact)


def statement(spec: InputSpec, scale: float = 1.0) -> str:
    """The size of ``spec`` times ``scale``, in the form and units it was written in.

    Parameters
    ----------
    spec : InputSpec
        The input (or one of its grades) as read from the study.
    scale : float
        Tolerance scale s: every term of the size is multiplied by it.

    Returns
    -------
    str
        ``±0.075 mm``, ``±(0.038 % of reading + 0.015 % of 10 bar)``, ``U = 0.076 % (k = 2)``,
        ``±(0.15 + 0.002·|t|) °C``, ``u = 0.5 %``, ``s = 12 Pa, n = 10``, ...

    Examples
    --------
    >>> from simunc.units import Parsed
    >>> s = InputSpec(name="p0", target="stagnation_pressure_indication",
    ...               distribution="normal", size_kind="expanded_uncertainty",
    ...               size=Parsed(0.0005, True), coverage_factor=2.0, text="0.05 %", note="",
    ...               key="uncertain[0]")
    >>> statement(s), statement(s, 1.52149)
    ('U = 0.05 % (k = 2)', 'U = 0.076 % (k = 2)')
    """
    exact = abs(scale - 1.0) < 1e-12
    w = spec.written
    dim = TARGETS[spec.target].dimension
    size = spec.size.value * scale
    # A fraction of the reading, or a size that is itself a fraction; a size of a quantity
    # without a reading (a model dimension, a transfer distance) is in its units.
    rel = spec.size.relative and (w.unit in RELATIVE_FACTORS or not w.unit)

    def q(si: float, unit: str, relative: bool = False) -> str:
        if relative and not unit and TARGETS[spec.target].reading is not None:
            unit = "%"  # a % of reading written without its unit (a spec made in code)
        return _quantity(si, dim, unit, exact, relative)

    kind = spec.size_kind
    if kind == "accuracy":
        return _accuracy(spec, scale, exact)
    return _plain(spec, kind, size, rel, q) + w.suffix


def _plain(spec: InputSpec, kind: str, size: float, rel: bool, q) -> str:
    w = spec.written
    if kind == "type_a":
        n = spec.count or 1
        return f"s = {q(size * math.sqrt(n), w.unit, rel)}, n = {n}"
    if kind == "resolution":
        return f"resolution {q(size, w.unit, rel)}"
    if kind == "half_width":
        return f"±{q(size, w.unit, rel)}"
    if kind == "expanded_uncertainty":
        if spec.coverage_probability is not None:
            cover = f"p = {100.0 * spec.coverage_probability:g} %"
            if math.isfinite(spec.dof):
                cover += f", ν = {spec.dof:g}"
        else:
            cover = f"k = {spec.coverage_factor:g}"
        return f"U = {q(size, w.unit, rel)} ({cover})"
    text = f"u = {q(size, w.unit, rel)}"
    if spec.limit is not None:
        scale = size / spec.size.value if spec.size.value else 1.0
        text += f", truncated at ±{q(spec.limit.value * scale, w.limit_unit, spec.limit.relative)}"
    return text


def _accuracy(spec: InputSpec, scale: float, exact: bool) -> str:
    """±(r % of reading + f % of range + a + b·|t|) scaled by ``scale``."""
    w = spec.written
    dim = TARGETS[spec.target].dimension
    parts = []
    if spec.size.value:
        parts.append(f"{_quantity(spec.size.value * scale, dim, w.reading_unit, exact, True)} "
                     "of reading")
    if spec.full_scale_fraction:
        parts.append(f"{_quantity(spec.full_scale_fraction * scale, dim, w.full_scale_unit, exact, True)}"
                     f" of {w.range_text}")
    celsius = spec.celsius * scale
    if celsius and not parts:  # a resistance thermometer's class: +-(a + b |t|) degC
        a = _number(from_si(w.absolute * scale, "temperature_difference", "K"), exact)
        text = f"±({a + ' + ' if w.absolute else ''}{_number(celsius, exact)}·|t|) °C"
        if w.rtd_class and exact:
            return f"IEC 60751 class {w.rtd_class}: {text}"
        return text + (_rtd_meeting(from_si(w.absolute * scale, "temperature_difference", "K"),
                                    celsius) if w.rtd_class else "")
    if w.absolute:
        parts.append(_quantity(w.absolute * scale, dim, w.absolute_unit or "K", exact))
    if celsius:
        parts.append(f"{_number(celsius, exact)}·|t| °C (t in °C)")
    return "±(" + " + ".join(parts) + ")" if len(parts) > 1 else "±" + parts[0]


def _rtd_meeting(a: float, b: float) -> str:
    """The loosest IEC 60751 class within the limits ±(a + b·|t|) °C at every t, with the
    temperatures it holds over; or that no class is that tight.

    >>> _rtd_meeting(0.18, 0.003), _rtd_meeting(0.063, 0.00105)
    (' (class A or better, valid -100 °C to 450 °C)', ' (tighter than class AA)')
    """
    for name in ("C", "B", "A", "AA"):
        ca, cb = RTD_CLASSES[name]
        if ca <= a * (1 + 1e-9) and cb <= b * (1 + 1e-9):
            lo, hi = RTD_RANGES[name]
            return f" (class {name} or better, valid {lo:g} °C to {hi:g} °C)"
    return " (tighter than class AA)"
