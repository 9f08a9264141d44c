"""Requirement checks on Monte Carlo trials and their search margins.

See :mod:`simunc.decisions.allocation` for the margins' derivation and the inverse problem.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

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


def check_all(requirements, y, study, setpoint, p: float, *, trials: int, margin: bool = False,
              finite: bool = True) -> list[Check]:
    """Evaluate every requirement on trials ``y`` (a dict of output arrays).

    ``margin``: ask for the search margins of :func:`margins` (``trials`` design
    trials against the study's ``design.verify_trials``).
    """
    out = []
    nv = study.design.verify_trials
    se = (lambda q: margins(trials, nv, q)) if margin else (lambda q: 0.0)
    for r in requirements:
        if not finite:
            out.append(Check(r.key, r.text, r.kind, np.nan, np.nan, False, r.output))
            continue
        if r.kind == "expanded_uncertainty":
            v = np.asarray(y[r.output])
            pr = r.probability if r.probability > 0 else p
            lo, hi = symmetric_interval(v, pr)
            value, limit = 0.5 * (hi - lo), limit_of(r, study, setpoint)
            slack = 3.0 * half_length_se(v, pr) * math.sqrt(1.0 + trials / nv) if margin else 0.0
            met = value <= limit - slack
        elif r.kind == "within":
            v = np.asarray(y[r.output])
            value = float(np.mean(np.abs(v - centre_of(r.output, study, setpoint))
                                  <= limit_of(r, study, setpoint)))
            limit = r.probability
            met = value >= limit + se(limit)
        else:
            value, limit = float(np.mean(study.inside(y, r.groups)["all"])), r.probability
            met = value >= limit + se(limit)
        out.append(Check(r.key, r.text, r.kind, float(value), float(limit), bool(met), r.output))
    return out
