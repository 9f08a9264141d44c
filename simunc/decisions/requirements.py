"""Requirement checks on Monte Carlo trials and their search margins.

See :mod:`simunc.decisions.allocation` for the margins' derivation and the inverse problem.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from simunc.study.schema import RequirementKind
from simunc.uncertainty.statistics import symmetric_interval


def margins(n_design: int, n_verify: int, p: float) -> float:
    """Search margin of a probability requirement ``p`` (absolute).

    3 sqrt(p (1 - p) (1/n_design + 1/n_verify)):

    >>> round(margins(50_000, 200_000, 0.95), 4)
    0.0033
    """
    return 3.0 * math.sqrt(p * (1.0 - p) * (1.0 / n_design + 1.0 / n_verify))


def half_length_se(y: np.ndarray, p: float) -> float:
    """Standard error of the half-length (q_{1-a} - q_a) / 2 of the trials, a = (1 - p) / 2.

    Large-sample quantile variances and covariance (module docstring) with the sparsity
    1/f(y_a) ~ (q_{a + h} - q_{a - h}) / (2 h), h = a / 5.  For a normal output at p = 0.95 the
    relative standard error is 0.951 / sqrt(n) (derived from the same formulas with
    f = phi(1.96) / sigma); the estimate from 200 000 normal trials:

    >>> y = np.random.default_rng(1).standard_normal(200_000)
    >>> round(float(half_length_se(y, 0.95) / 1.95996 * np.sqrt(y.size)), 2)
    0.96
    """
    n = y.size
    a = 0.5 * (1.0 - p)
    h = 0.2 * a
    q = np.quantile(y, [a - h, a + h, 1 - a - h, 1 - a + h])
    s_lo, s_hi = (q[1] - q[0]) / (2 * h), (q[3] - q[2]) / (2 * h)
    var = (a * (1 - a) * (s_lo ** 2 + s_hi ** 2) - 2.0 * a * a * s_lo * s_hi) / (4.0 * n)
    return math.sqrt(max(var, 0.0))
#: Loosening factor of the robustness check of an allocation.
LOOSEN = 1.10
#: Surrogate constraint value below which a grade combination is checked only while few were.
SCREEN = -0.25


@dataclass(frozen=True)
class Check:
    """One requirement evaluated on a set of trials."""

    key: str
    text: str
    kind: str
    value: float      # U_p [unit of y] or a probability
    limit: float      # the limit of U [unit of y] or the required probability
    met: bool
    output: str | None = None
    #: What a limit on the output judges, in its unit (:func:`judged`): the centre (a ``within``;
    #: NaN: about the trials' mean) and the half-width (NaN for a conformity requirement).
    centre: float = math.nan
    half_width: float = math.nan


def centre_of(output: str, study, setpoint) -> float:
    """Band centre of a matched-group output, else its set-point value."""
    for band in study.bands:
        if band.output == output:
            return band.centre
    return float(setpoint.outputs[output])


def limit_of(req, study, setpoint) -> float:
    if req.relative:
        return req.limit * abs(float(setpoint.outputs[req.output]))
    return req.limit


def judged(req, study, setpoint) -> tuple[float, float]:
    """``(centre, half-width)`` of the interval a requirement on an output judges: a ``within``
    its :func:`centre_of` and :func:`limit_of`; an expanded uncertainty NaN (the interval's
    centre is the trials') and :func:`limit_of`; a conformity requirement NaN, NaN."""
    if req.output is None or req.kind == "conformity":
        return math.nan, math.nan
    centre = centre_of(req.output, study, setpoint) if req.kind == "within" else math.nan
    return centre, limit_of(req, study, setpoint)


def u_margin(v: np.ndarray, p: float, n_design: int, n_verify: int) -> float:
    """Search margin of a U requirement [unit of y]: 3 SE(U_p) sqrt(1 + n_design / n_verify)
    (module docstring of :mod:`simunc.decisions.allocation`)."""
    return 3.0 * half_length_se(v, p) * math.sqrt(1.0 + n_design / n_verify)


class ExpandedUncertainty:
    """``U_p(y) <= limit``: half-length of the probabilistically symmetric coverage interval
    (JCGM 101:2008 7.7) at the requirement's probability (the run's when not given)."""

    name: RequirementKind = "expanded_uncertainty"

    @staticmethod
    def probability(r, p: float) -> float:
        return r.probability if r.probability > 0 else p

    def evaluate(self, r, y, study, setpoint, p: float, *, trials: int, margin: bool
                 ) -> tuple[float, float, bool]:
        v = np.asarray(y[r.output])
        pr = self.probability(r, p)
        lo, hi = symmetric_interval(v, pr)
        value, limit = 0.5 * (hi - lo), limit_of(r, study, setpoint)
        slack = u_margin(v, pr, trials, study.design.verify_trials) if margin else 0.0
        return value, limit, value <= limit - slack

    def calibrate(self, r, sur, scale: np.ndarray, y, fig, check: Check) -> None:
        d = sur.design
        u = fig.standard_uncertainty[r.output]
        sur.kappa[r.key] = check.value / u if u > 0 and np.isfinite(check.value) else 1.96
        v = np.asarray(y[r.output])
        pr = self.probability(r, d.p)
        sur.slack[r.key] = (u_margin(v, pr, d.trials, d.study.design.verify_trials) if u > 0
                            else 0.0) / check.value if check.value > 0 else 0.0

    def constraint(self, r, sur, scales: np.ndarray) -> np.ndarray:
        st, sp = sur.design.study, sur.design.setpoint
        lim = limit_of(r, st, sp)
        U = sur.kappa[r.key] * sur.ratio[r.output] * sur.sigma(r.output, scales)
        return 1.0 - U * (1.0 + sur.slack.get(r.key, 0.0)) / lim


class _Probability:
    """A requirement ``P(...) >= p`` whose search margin is binomial (:func:`margins`)."""

    def met(self, value: float, limit: float, trials: int, n_verify: int, margin: bool) -> bool:
        return value >= limit + (margins(trials, n_verify, limit) if margin else 0.0)

    def constraint(self, r, sur, scales: np.ndarray) -> np.ndarray:
        st = sur.design.study
        need = r.probability + margins(sur.design.trials, st.design.verify_trials, r.probability)
        return (self.predicted(r, sur, scales) - need) / (1.0 - r.probability)

    def predicted(self, r, sur, scales: np.ndarray) -> np.ndarray:
        raise NotImplementedError


class Within(_Probability):
    """``P(|y - centre| <= w) >= p``, the centre a band's or the set-point value."""

    name: RequirementKind = "within"

    def evaluate(self, r, y, study, setpoint, p: float, *, trials: int, margin: bool
                 ) -> tuple[float, float, bool]:
        v = np.asarray(y[r.output])
        value = float(np.mean(np.abs(v - centre_of(r.output, study, setpoint))
                              <= limit_of(r, study, setpoint)))
        limit = r.probability
        return value, limit, self.met(value, limit, trials, study.design.verify_trials, margin)

    def calibrate(self, r, sur, scale: np.ndarray, y, fig, check: Check) -> None:
        st, sp = sur.design.study, sur.design.setpoint
        lin = float(sur.sigma(r.output, scale[None, :])[0])
        sur.ratio[r.key] = sur.matched_ratio(r.output, limit_of(r, st, sp), check.value, lin)

    def predicted(self, r, sur, scales: np.ndarray) -> np.ndarray:
        st, sp = sur.design.study, sur.design.setpoint
        return sur.p_within(r.output, limit_of(r, st, sp), scales, r.key)


class Conformity(_Probability):
    """The conformity probability of tolerance bands ``>= p`` (JCGM 106:2012)."""

    name: RequirementKind = "conformity"

    def evaluate(self, r, y, study, setpoint, p: float, *, trials: int, margin: bool
                 ) -> tuple[float, float, bool]:
        value, limit = float(np.mean(study.inside(y, r.groups)["all"])), r.probability
        return value, limit, self.met(value, limit, trials, study.design.verify_trials, margin)

    def calibrate(self, r, sur, scale: np.ndarray, y, fig, check: Check) -> None:
        pred = float(sur.conformity(r, scale[None, :], raw=True)[0])
        sur.joint[r.key] = check.value / pred if pred > 0 and np.isfinite(check.value) else 1.0

    def predicted(self, r, sur, scales: np.ndarray) -> np.ndarray:
        return sur.conformity(r, scales)


#: One class per requirement kind: how it is evaluated on trials, how the allocation's
#: surrogate is calibrated for it and what constraint the surrogate gives.
KINDS: dict[str, ExpandedUncertainty | Within | Conformity] = {
    k.name: k for k in (ExpandedUncertainty(), Within(), Conformity())}


def check_all(requirements, y, study, setpoint, p: float, *, trials: int, margin: bool = False,
              finite: bool = True) -> list[Check]:
    """Evaluate every requirement on trials ``y`` (a dict of output arrays).

    ``margin``: ask for the search margins of :func:`margins` (``trials`` design
    trials against the study's ``design.verify_trials``).
    """
    out = []
    for r in requirements:
        centre, half = judged(r, study, setpoint)
        if not finite:
            out.append(Check(r.key, r.text, r.kind, np.nan, np.nan, False, r.output, centre, half))
            continue
        value, limit, met = KINDS[r.kind].evaluate(r, y, study, setpoint, p, trials=trials,
                                                   margin=margin)
        out.append(Check(r.key, r.text, r.kind, float(value), float(limit), bool(met), r.output,
                         centre, half))
    return out
