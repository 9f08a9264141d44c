"""Uncertain inputs: study specifications turned into scipy.stats distributions.

A specification (:class:`~simunc.study.schema.InputSpec`) names the quantities it
perturbs (:data:`simunc.study.catalogue.TARGETS` keys), a distribution and one size in
metrology terms; here it becomes a frozen scipy.stats distribution of the
DEVIATION, of mean zero (no known bias), with its standard uncertainty u (the
standard deviation of that distribution):

=====================================  ==================================================
written                                distribution of the deviation, u
=====================================  ==================================================
``standard_uncertainty`` u             normal N(0, u²) (or any other family given, with
                                       that standard deviation)
``expanded_uncertainty`` U, k          normal: N(0, (U/k)²), u = U / k (JCGM 100 4.3.3);
                                       with ν degrees of freedom: scaled and shifted t,
                                       t_ν(0, (U/k)²), u = U/k √(ν/(ν−2))
                                       (JCGM 101 6.4.9); k from p and ν: k = t_{(1+p)/2,ν}
``half_width`` a, rectangular          U(−a, a), u = a/√3 (JCGM 100 4.3.7)
``half_width`` a, triangular           u = a/√6 (JCGM 100 4.3.9)
``half_width`` a, trapezoidal β        top half-width βa, u² = a²(1+β²)/6 (JCGM 101 6.4.4)
``half_width`` a, arcsine              U-shaped on [−a, a], u = a/√2 (JCGM 101 6.4.6)
``accuracy``                           limits a = r·|R| + f·range + c, rectangular
                                       by default
``resolution`` δ                       rectangular, a = δ/2, u = δ/√12 (JCGM 100 F.2.2.1)
``readings`` / ``type_a`` (n, s)       t_{n−1}(0, s²/n), u = s/√n √((n−1)/(n−3))
                                       (JCGM 101 6.4.9.2, 6.4.9.4; n ≥ 4)
truncated_normal σ, a                  N(0, σ²) truncated to [−a, a],
                                       u² = σ²(1 − 2cφ(c)/(2Φ(c)−1)), c = a/σ
lognormal u_r (relative)               e = R(F − 1), ln F ~ N(−σ²/2, σ²),
                                       σ² = ln(1 + u_r²): E[F] = 1, so E[e] = 0 and u = R u_r
=====================================  ==================================================

Clause numbers are recalled from the documents (no copy at hand); the tests in
tests/test_specifications.py check each formula independently.

A size in ``%`` is a fraction of the reading R: the quantity's nominal value at
the solved set point.  For a lognormal the deviation is taken about the MEAN
of the multiplicative factor (E[F] = 1), not its median, so that every input
has mean zero.

One input may act on several quantities (``perturbs = [...]``): a shared
error.  Its distribution is that of the deviation of the FIRST target, in
that target's SI unit; :attr:`UncertainInput.effects` lists ``(target,
factor)`` pairs and a drawn value z acts as ``factor * z`` on each target
(factor 1 for the first; for a size in % the ratio of the readings, for an
absolute size of a common dimension 1).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np
from scipy import stats

from simunc.constants import ZERO_CELSIUS
from simunc.errors import StudyError
from simunc.similitude.model import SimilitudeModel
from simunc.similitude.setpoint import SetPoint
from simunc.study.catalogue import TARGETS
from simunc.study.schema import Component, InputSpec
from simunc.study.written import RTD_RANGES
from simunc.uncertainty.distributions import (
    BOUNDED,
    bounded,
    lognormal,
    make_distribution,
    truncated_normal,
    truncated_normal_std,
    u_per_half_width,
)
from simunc.uncertainty.problem import FrozenDistribution, Problem


@dataclass(frozen=True)
class UncertainInput:
    """One uncertain input, tied to a set point.

    Attributes
    ----------
    name : str
    target : str
        The (first) :data:`~simunc.study.catalogue.TARGETS` key it perturbs.
    distribution : scipy.stats frozen distribution
        Of the deviation of ``target``, SI, mean zero.
    kind : str
        ``normal``, ``t``, ``rectangular``, ``triangular``, ``trapezoidal``, ``arcsine``,
        ``truncated_normal`` or ``lognormal``.
    standard_uncertainty : float
        u of the deviation of ``target``, SI: the standard deviation of ``distribution``.
    spec : InputSpec
        The specification as written.
    effects : tuple of (str, float)
        ``(target, factor)`` for every target: a drawn deviation z of ``distribution``
        acts as ``factor * z`` on that target (``((target, 1.0),)`` for one target).
    component : str
        ``systematic`` (fixed over a test) or ``random`` (changes from point to point).
    dof : float
        Degrees of freedom (``inf`` for Type B inputs; ``n - 1`` for Type A; ν of a
        certificate).
    gum_standard_uncertainty : float
        The standard uncertainty a law-of-propagation budget (JCGM 100) uses with ``dof``:
        the scale of a t-distribution (U / k, or s / sqrt(n)), else ``standard_uncertainty``.
    reading : float or None
        |value| of ``target``'s reading at the set point [SI] (what ``%`` of reading refers
        to); None for a target whose size is itself a fraction.
    """

    name: str
    target: str
    distribution: FrozenDistribution
    kind: str
    standard_uncertainty: float
    spec: InputSpec
    effects: tuple[tuple[str, float], ...] = ()
    component: Component = "systematic"
    dof: float = math.inf
    gum_standard_uncertainty: float | None = None
    reading: float | None = None

    def __post_init__(self) -> None:
        if not self.effects:
            object.__setattr__(self, "effects", ((self.target, 1.0),))
        if self.gum_standard_uncertainty is None:
            object.__setattr__(self, "gum_standard_uncertainty", self.standard_uncertainty)

    @property
    def unit(self) -> str:
        """SI unit of the deviation of ``target``."""
        return TARGETS[self.target].unit

    @property
    def targets(self) -> tuple[str, ...]:
        """Every target it perturbs, ``target`` first."""
        return tuple(t for t, _ in self.effects)

    @property
    def half_width(self) -> float | None:
        """Half-width of the limits [SI, of ``target``] for a bounded distribution, else None."""
        if self.kind not in BOUNDED:
            return None
        return float(self.distribution.support()[1])


def resolved_size(spec: InputSpec, reading: float | None, value=None) -> float:
    """The spec's size [SI] at a reading: ``%`` of reading resolved, the fixed part added, and
    for a thermometer's accuracy the part in |t|, the reading in degrees Celsius (IEC 60751).

    >>> from simunc.units import Parsed
    >>> s = InputSpec("T0", "stagnation_temperature_indication", "rectangular", "accuracy",
    ...               Parsed(0.0, True), 1.0, "class A", "", "uncertain[0]", fixed=0.15,
    ...               celsius=0.002)
    >>> round(resolved_size(s, 373.15), 6)   # IEC 60751 class A at 100 degC: +-0.35 degC
    0.35
    """
    parsed = spec.size if value is None else value
    size = parsed.value
    if parsed.relative and reading is not None:
        size *= abs(reading)
    if value is None and spec.celsius and reading is not None:
        size += spec.celsius * abs(reading - ZERO_CELSIUS)
    return size + (spec.fixed if value is None else 0.0)


def assign(spec: InputSpec, reading: float | None):
    """Distribution of the deviation for one target at its reading.

    Returns
    -------
    kind : str
    distribution : frozen scipy.stats distribution (mean 0, SI)
    u : float
        Its standard deviation, from the closed forms in the module docstring.
    u_gum : float
        The scale of a t-distribution (U / k or s / sqrt(n)); u otherwise.
    """
    size = resolved_size(spec, reading)
    dist, nu = spec.distribution, spec.dof
    if not (math.isfinite(size) and size > 0.0):
        raise StudyError(f"{spec.key}.perturbs", f"{spec.text} at a reading of {reading!r}",
                         "a size greater than zero at the set point (a % of a zero reading is "
                         "zero)")
    if spec.size_kind == "expanded_uncertainty" and dist == "normal":
        size /= spec.coverage_factor  # the scale U / k of the normal or t-distribution
    elif spec.size_kind == "expanded_uncertainty":
        size /= spec.coverage_factor  # u of the bounded distribution
        return dist, make_distribution(dist, size, beta=spec.beta), size, size
    if spec.size_kind == "resolution":
        a = 0.5 * size
        return dist, bounded(dist, a), a / math.sqrt(3.0), a / math.sqrt(3.0)
    if dist == "truncated_normal":
        limit = resolved_size(spec, reading, spec.limit)
        u = truncated_normal_std(size, limit)
        return dist, truncated_normal(size, limit), u, u
    if dist == "lognormal":
        r = 1.0 if reading is None or TARGETS[spec.target].reading is None else abs(reading)
        if not r > 0.0:
            raise StudyError(f"{spec.key}.perturbs", repr(spec.target), "a quantity whose "
                             "reading is above zero for a lognormal error")
        u_rel = spec.size.value
        return dist, lognormal(u_rel, r), r * u_rel, r * u_rel
    if dist == "normal":
        if math.isinf(nu):
            return "normal", stats.norm(loc=0.0, scale=size), size, size
        return "t", stats.t(nu, loc=0.0, scale=size), size * math.sqrt(nu / (nu - 2.0)), size
    if spec.size_kind in ("half_width", "accuracy"):
        u = size * u_per_half_width(dist, spec.beta)
        return dist, bounded(dist, size, spec.beta), u, u
    return dist, make_distribution(dist, size, beta=spec.beta), size, size  # u of the family


def class_range_warnings(inputs) -> list[str]:
    """One sentence per thermometer written by an IEC 60751 class whose reading at the set point
    lies outside the temperatures the class holds over (its limits do not apply there)."""
    out = []
    for inp in inputs:
        cls = inp.spec.written.rtd_class
        if not cls or inp.reading is None:
            continue
        low, high = RTD_RANGES[cls]
        t = inp.reading - ZERO_CELSIUS
        if not low <= t <= high:
            out.append(f"{inp.name}: IEC 60751 class {cls} holds from {low:g} °C to {high:g} °C, "
                       f"but the reading at the set point is {t:.1f} °C: its limits do not apply "
                       "there (write a class that holds there, or the sensor's calibration)")
    return out


def standard_uncertainty(spec: InputSpec, reading: float | None) -> float:
    """Standard uncertainty [SI] of a specification at a reading (of its first target).

    >>> from simunc.units import Parsed
    >>> s = InputSpec("p0", "stagnation_pressure_indication", "normal", "expanded_uncertainty",
    ...               Parsed(0.001, True), 2.0, "0.1 %", "", "uncertain[0]")
    >>> standard_uncertainty(s, 250_000.0)   # U = 0.1 % of 2.5 bar at k = 2
    125.0
    """
    return assign(spec, reading)[2]


def build_inputs(specs, setpoint: SetPoint) -> list[UncertainInput]:
    """Tie specifications to the solved set point (resolving ``%`` of reading).

    One :class:`UncertainInput` per specification; for a list in ``perturbs``,
    ``effects`` holds each target with the ratio of its size to the first one's.
    """
    out = []
    for spec in specs:
        readings = []
        for target in spec.targets:
            reading_key = TARGETS[target].reading
            if reading_key and reading_key not in setpoint.outputs:
                raise StudyError(f"{spec.key}.perturbs", repr(target),
                                 f"a quantity this study has (no {reading_key.replace('_', ' ')} "
                                 "here)")
            readings.append(setpoint.outputs[reading_key] if reading_key else None)
        kind, dist, u, u_gum = assign(spec, readings[0])
        first = resolved_size(spec, readings[0])
        effects = [(spec.target, 1.0)]
        for target, reading in zip(spec.targets[1:], readings[1:]):
            size = resolved_size(spec, reading)
            if not (math.isfinite(size) and size > 0.0):
                raise StudyError(f"{spec.key}.perturbs", f"{spec.text} at a reading of {reading!r} "
                                 f"of {target}", "a size greater than zero at the set point")
            effects.append((target, size / first))
        out.append(UncertainInput(spec.name, spec.target, dist, kind, u, spec, tuple(effects),
                                  spec.component, spec.dof, u_gum,
                                  None if readings[0] is None else abs(float(readings[0]))))
    return out


def similitude_problem(model: SimilitudeModel, setpoint: SetPoint,
                       inputs: list[UncertainInput]) -> Problem:
    """The similitude model around a set point as a :class:`Problem` of its inputs.

    Inputs acting on the same target add up; an input with several targets (a shared
    systematic error) acts on each with its factor.
    """
    nominal = dict(setpoint.nominal)

    def func(x: Mapping[str, np.ndarray]) -> dict[str, np.ndarray]:
        deviations: dict[str, np.ndarray] = {}
        for inp in inputs:
            v = x[inp.name]
            for target, factor in inp.effects:  # a shared error acts on each of its targets
                d = v if factor == 1.0 else factor * v
                # on top of the known corrections the nominal state already carries
                deviations[target] = (deviations[target] if target in deviations
                                      else nominal.get(target) or 0.0) + d
        return model({**nominal, **deviations})

    return Problem([i.name for i in inputs], [i.distribution for i in inputs], func)
