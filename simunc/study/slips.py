"""Likely slips in a valid study: values that load but are probably not what was meant.

A value that cannot be used is refused at load (:mod:`simunc.study.readers`); the values here
are possible, only implausible, so they are warned about (``simunc check`` prints the warnings,
the report lists them) with the probable intent named.
"""

from __future__ import annotations

from simunc.errors import plain
from simunc.study.catalogue import TARGETS
from simunc.study.schema import Study

#: A Mach-number band wider than this (a difference) is probably a percentage written bare.
MACH_BAND = 0.05
#: A ratio band written as a plain number at least this wide is probably a percentage.
RATIO_BAND = 0.5
#: An instrument error in % of reading above this is probably a fraction written as %.
READING_SIZE = 0.10


def likely_slips(study: Study) -> tuple[str, ...]:
    """One sentence per likely slip, naming the key, what was written and what was probably meant.

    >>> from simunc.study.schema import Band
    >>> from types import SimpleNamespace
    >>> s = SimpleNamespace(bands=(Band("mach", 0.3, "0.3", 1, True),), inputs=())
    >>> print(likely_slips(s)[0])  # doctest: +ELLIPSIS
    match.mach.tolerance = 0.3 is a Mach-number difference, not a fraction: did you mean 0.003...
    """
    out = []
    for b in study.bands:
        key, written = f"match.{b.group}.tolerance", plain(b.text, 40)
        relative = "%" in b.text or "ppm" in b.text or "permille" in b.text
        if b.output.endswith("_difference") and b.tolerance > MACH_BAND:
            out.append(f"{key} = {written} is a Mach-number difference, not a fraction: did you "
                       f"mean {b.tolerance / 100:.3g} (or '{written} %' of the full-scale Mach "
                       "number)?")
        elif b.output.endswith("_ratio") and not relative and b.tolerance >= RATIO_BAND:
            out.append(f"{key} = {written} is a fraction ({100 * b.tolerance:.3g} % of the "
                       f"full-scale value): did you mean '{written} %'?")
    for spec in study.inputs:
        temperature = all(TARGETS[t].dimension == "temperature_difference"
                          and TARGETS[t].reading is not None for t in spec.targets)
        if temperature and spec.size.relative and spec.size.value > 0.0 and \
                spec.size_kind in ("accuracy", "standard_uncertainty", "expanded_uncertainty",
                                   "half_width"):
            key = f"{spec.key}.{spec.size_kind}" + (".reading" if spec.size_kind == "accuracy"
                                                     else "")
            out.append(f"{key}: a % of a temperature reading is a % of its kelvin value (at "
                       f"300 K, {100 * spec.size.value:.3g} % is {300 * spec.size.value:.3g} K) "
                       f"for {plain(spec.name, 60)}: a thermometer's class is ±(a + b·|t|) with "
                       "t in °C: did you mean accuracy = { rtd_class = ... } or { absolute, "
                       "celsius }, or a size in K?")
            continue
        if not spec.size.relative or spec.size_kind not in (
                "standard_uncertainty", "expanded_uncertainty", "half_width"):
            continue
        if all(TARGETS[t].reading is not None for t in spec.targets) and \
                spec.size.value > READING_SIZE:
            key = f"{spec.key}.{spec.size_kind}"
            out.append(f"{key} = {plain(spec.text, 40)} of the reading is a large error for "
                       f"{plain(spec.name, 60)}: did you mean {spec.size.value:.3g} % "
                       "(a fraction written with %)?")
    return tuple(out)
