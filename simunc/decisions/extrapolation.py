"""Extrapolation of the split-test plan's runs to the full-scale Reynolds number.

For a study whose set point falls short of the Reynolds number, has a balance measuring drag and
a scale effect (``[measurement.scale_effect]``), the runs of the split-test plan made with the
primary group matched (run A and the Reynolds sweep B) are simulated together, trial by trial:
the systematic inputs take one draw for all the runs of a trial, the random inputs a draw of
their own in every run (the treatment of AIAA S-071A and ASME PTC 19.1 of fixed and random
errors; from memory of those standards).  Each trial's reduced drag coefficients are fitted by
least squares against the regressor the law implies -- the friction line's
``(1 + k) C_F(Re) S_wet / S_ref`` or ``log10 Re`` for a stated sensitivity -- and the fit is
evaluated at the full-scale Reynolds number.  The spread of the extrapolated value less the
trial's true full-scale drag is the extrapolation's uncertainty: it holds the data reduction of
every run, the shared errors, the model form and the leverage of the fit, and grows with the
extrapolation ratio as a least-squares prediction does.

The inputs are resolved at each run's state (:func:`simunc.decisions.pretest.inputs_at`) and
every run's sample is carried from one seeded draw (common random numbers), so the result is
reproducible from the seed.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
import pandas as pd

from simunc.decisions.design import stream_seed
from simunc.decisions.pretest import inputs_at, moved
from simunc.physics import friction
from simunc.similitude.inputs import similitude_problem
from simunc.uncertainty.sampling import InputSampler
from simunc.uncertainty.statistics import symmetric_interval
from simunc.units import COUNT

#: Seed streams of the extrapolation (shared draw, then one per run).
EXTRAPOLATION_STREAM = 4
#: Trials of the simulated plan.
EXTRAPOLATION_TRIALS = 20_000


@dataclass(frozen=True, kw_only=True)
class Extrapolation:
    """The extrapolated full-scale drag coefficient of a split-test plan (module docstring).

    ``runs``: per run its label, Reynolds number and the Monte Carlo mean and U of its reduced
    drag; ``estimate``: the mean extrapolated drag; ``bias``, ``u`` and ``U``: of the
    extrapolated value less the true full-scale drag (U the half-length of the probabilistically
    symmetric interval at ``probability``); ``ratio``: Re_full / the highest run's Re.
    """

    law: str
    runs: pd.DataFrame
    reynolds_full_scale: float
    ratio: float
    estimate: float
    full_scale: float
    bias: float
    u: float
    U: float
    probability: float
    trials: int
    seed: int

    @property
    def U_counts(self) -> float:
        return self.U / COUNT


def regressor(scale_effect, re):
    """The fit's regressor for a scale effect: ``(1 + k) C_F(Re) S_wet / S_ref`` for a friction
    line, ``log10 Re`` for a stated sensitivity."""
    if scale_effect.method == "friction_line":
        return friction.friction_drag(scale_effect.line, re, scale_effect.form_factor,
                                      scale_effect.wetted_ratio)
    return np.log10(re)


def fit_and_predict(x: np.ndarray, y: np.ndarray, x_new) -> np.ndarray:
    """Least-squares line through each row of ``(x, y)`` (trials by runs), evaluated at ``x_new``
    (one value per trial): ``y = a + b x``, ``b = S_xy / S_xx``, ``a = mean(y) - b mean(x)``.

    >>> fit_and_predict(np.array([[0.0, 1.0, 2.0]]), np.array([[1.0, 3.0, 5.0]]), 3.0)
    array([7.])
    """
    xm = x.mean(axis=1, keepdims=True)
    ym = y.mean(axis=1, keepdims=True)
    dx = x - xm
    b = (dx * (y - ym)).sum(axis=1) / (dx * dx).sum(axis=1)
    return ym[:, 0] + b * (np.asarray(x_new, dtype=float) - xm[:, 0])


def extrapolate(prep, plan, *, trials: int = EXTRAPOLATION_TRIALS) -> Extrapolation | None:
    """:class:`Extrapolation` of a plan (None without runs at the matched primary group, a
    balance measuring drag or a scale effect on the drag)."""
    st, m = prep.study, prep.study.measurement
    if (m is None or m.scale_effect is None or "drag" not in m.scale_effect.coefficients
            or plan is None or not plan.runs or not prep.inputs):
        return None
    runs = [r for r in plan.runs if r.label != "C"]
    if len(runs) < 2:
        return None
    seed = stream_seed(prep.settings.seed, EXTRAPOLATION_STREAM)
    shared = InputSampler(prep.problem.distributions, seed, "random",
                          prep.copula if prep.correlation is not None else None,
                          trials).draw(0, [trials])
    systematic = np.array([i.component == "systematic" for i in prep.inputs])
    sp = prep.setpoint
    cd, full = [], None
    for k, run in enumerate(runs, start=1):
        own = InputSampler(prep.problem.distributions, stream_seed(seed, k), "random",
                           prep.copula if prep.correlation is not None else None,
                           trials).draw(0, [trials])
        x = np.where(systematic[None, :], shared, own)
        outputs = {key: float(np.asarray(v)) for key, v in prep.model(run.state).items()}
        new = inputs_at(prep, outputs)
        problem = similitude_problem(prep.model, replace(sp, nominal=dict(run.state)), new)
        y = problem.evaluate(moved(x, prep.inputs, new))
        cd.append(np.asarray(y["drag_coefficient"], dtype=float))
        truth = np.asarray(y["drag_coefficient"]) - np.asarray(y["drag_coefficient_to_full_scale"])
        full = truth if full is None else full  # the same in every run: full scale's own inputs
    assert full is not None
    y_cd = np.column_stack(cd)
    se = m.scale_effect
    # The test knows each run's Reynolds number as planned: fit against the runs' nominal
    # Reynolds numbers, extrapolate to the stated full-scale one.
    re_nominal = np.array([float(r.outputs["reynolds_model"]) for r in runs])
    re_full = float(sp.outputs["reynolds_full_scale"])
    xs = np.broadcast_to(regressor(se, re_nominal)[None, :], y_cd.shape)
    estimate = fit_and_predict(xs, y_cd, regressor(se, re_full))
    err = estimate - full
    p = st.run.coverage_probability
    low, high = symmetric_interval(err, p)
    rows = []
    for run, col, r in zip(runs, y_cd.T, re_nominal):
        lo, hi = symmetric_interval(col, p)
        rows.append({"run": run.label, "reynolds": float(r), "drag_mean": float(np.mean(col)),
                     "drag_U": 0.5 * (hi - lo), "drag_U_counts": 0.5 * (hi - lo) / COUNT})
    return Extrapolation(
        law=(f"friction line {se.line}" if se.method == "friction_line" else "log10 Re"),
        runs=pd.DataFrame(rows), reynolds_full_scale=re_full,
        ratio=re_full / float(max(re_nominal)), estimate=float(np.mean(estimate)),
        full_scale=float(np.mean(full)), bias=float(np.mean(err)),
        u=float(np.std(err, ddof=1)), U=0.5 * (high - low), probability=p, trials=trials,
        seed=seed)
