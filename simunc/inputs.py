"""Uncertain inputs: study specifications turned into scipy.stats distributions.

A specification names the quantity it perturbs (a :data:`simunc.model.TARGETS`
key), a distribution and one size in metrology terms (JCGM 100:2008, 4.3):

* ``standard_uncertainty`` u;
* ``expanded_uncertainty`` U with ``coverage_factor`` k, so u = U / k;
* ``half_width`` a of limits: u = a / sqrt(3) (rectangular), a / sqrt(6)
  (triangular) (JCGM 100:2008, 4.3.7 and 4.3.9).

A size in ``%`` is a fraction of the reading: of the quantity's nominal value
at the solved set point.  Every distribution has mean zero (no known bias).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from scipy import stats

from .model import TARGETS
from .errors import StudyError
from .setpoint import SetPoint
from .study import InputSpec

#: Standard uncertainty of a unit half-width, by distribution.
_U_PER_HALF_WIDTH = {"rectangular": 1.0 / math.sqrt(3.0), "triangular": 1.0 / math.sqrt(6.0)}


@dataclass(frozen=True)
class UncertainInput:
    """One uncertain input, tied to a set point.

    Attributes
    ----------
    name : str
    target : str
        The :data:`~simunc.model.TARGETS` key it perturbs.
    distribution : scipy.stats frozen distribution
        Of the deviation, SI, mean zero.
    kind : str
        ``normal``, ``rectangular`` or ``triangular``.
    standard_uncertainty : float
        u of the deviation, SI.
    spec : InputSpec
        The specification as written.
    """

    name: str
    target: str
    distribution: object
    kind: str
    standard_uncertainty: float
    spec: InputSpec

    @property
    def half_width(self) -> float | None:
        f = _U_PER_HALF_WIDTH.get(self.kind)
        return self.standard_uncertainty / f if f else None


def standard_uncertainty(spec: InputSpec, reading: float | None) -> float:
    """Standard uncertainty [SI] of a specification at a reading.

    >>> from simunc.units import Parsed
    >>> s = InputSpec("p0", "stagnation_pressure_indication", "normal", "expanded_uncertainty",
    ...               Parsed(0.001, True), 2.0, "0.1 %", "", "uncertain[0]")
    >>> standard_uncertainty(s, 250_000.0)   # U = 0.1 % of 2.5 bar at k = 2
    125.0
    """
    size = spec.size.value
    if spec.size.relative and reading is not None:
        size *= abs(reading)
    if spec.size_kind == "expanded_uncertainty":
        return size / spec.coverage_factor
    if spec.size_kind == "half_width":
        return size * _U_PER_HALF_WIDTH[spec.distribution]
    return size


def make_distribution(kind: str, u: float):
    """Frozen scipy.stats distribution of mean 0 and standard deviation ``u``.

    >>> round(float(make_distribution("rectangular", 1.0).std()), 12)
    1.0
    """
    if kind == "normal":
        return stats.norm(loc=0.0, scale=u)
    a = u / _U_PER_HALF_WIDTH[kind]
    if kind == "rectangular":
        return stats.uniform(loc=-a, scale=2.0 * a)
    return stats.triang(c=0.5, loc=-a, scale=2.0 * a)


def build_inputs(specs, setpoint: SetPoint) -> list[UncertainInput]:
    """Tie specifications to the solved set point (resolving ``%`` of reading)."""
    out = []
    for spec in specs:
        reading_key = TARGETS[spec.target].reading
        if reading_key and reading_key not in setpoint.outputs:
            raise StudyError(f"{spec.key}.perturbs", repr(spec.target),
                             f"a quantity this study has (no {reading_key.replace('_', ' ')} here)")
        reading = setpoint.outputs[reading_key] if reading_key else None
        u = standard_uncertainty(spec, reading)
        out.append(UncertainInput(spec.name, spec.target, make_distribution(spec.distribution, u),
                                  spec.distribution, u, spec))
    return out
