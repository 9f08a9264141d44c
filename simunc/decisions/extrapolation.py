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

The inverse question -- how many sweep runs, spread how, keep U of the extrapolated drag below a
requirement (``[[requirement]]`` on ``drag_coefficient_extrapolated``) -- is answered by
:func:`runs_for`: candidate sweeps of 2 to 6 Reynolds-number levels spread evenly in log10 Re
over the range the facility reaches at the matched primary group, each level run 1 to 8 times,
are simulated on the same draws, and the sweep of fewest runs that meets the limit is chosen
(more levels first among equals: they show whether the trend is straight).  The shared errors
set a floor no number of runs goes below: U with every random input at zero, the limit of many
runs; a requirement under the floor is met only by tightening the shared errors.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
import pandas as pd

from simunc.decisions.coefficients import outside_table
from simunc.decisions.design import stream_seed
from simunc.decisions.pretest import inputs_at, moved
from simunc.decisions.requirements import KINDS, Check, ExpandedUncertainty, half_length_se
from simunc.physics import friction
from simunc.similitude.inputs import similitude_problem
from simunc.similitude.testplan import sweep_run
from simunc.study.catalogue import EXTRAPOLATED_OUTPUT
from simunc.uncertainty.sampling import InputSampler
from simunc.uncertainty.statistics import symmetric_interval
from simunc.units import COUNT

#: Seed streams of the extrapolation (shared draw, then one per run).
EXTRAPOLATION_STREAM = 4
#: Trials of the simulated plan.
EXTRAPOLATION_TRIALS = 20_000
#: Candidate sweeps of :func:`runs_for`: Reynolds-number levels and runs at each level.
LEVELS = (2, 3, 4, 6)
REPEATS = (1, 2, 3, 4, 6, 8)
#: First seed stream of the candidate sweeps' runs (after the plan's own runs).
SEARCH_STREAM = 1000
#: Points of the fitted line drawn from the lowest run to full scale.
LINE_POINTS = 60


@dataclass(frozen=True, kw_only=True)
class RunsFor:
    """The sweep that keeps U of the extrapolated drag within a requirement (:func:`runs_for`).

    ``designs``: the candidates simulated, fewest runs first (levels, runs per level, runs, the
    Reynolds numbers spanned, U, its search margin of 3 standard errors, met: U + margin <=
    limit); ``chosen``: the row of the sweep chosen (None when no
    candidate meets the limit); ``floor``: U of the limit of many runs (the shared errors
    alone).
    """

    requirement: str
    limit: float
    probability: float
    designs: pd.DataFrame
    chosen: int | None
    floor: float


@dataclass(frozen=True, kw_only=True)
class Extrapolation:
    """The extrapolated full-scale drag coefficient of a split-test plan (module docstring).

    ``runs``: per run its label, Reynolds number and the Monte Carlo mean and U of its reduced
    drag; ``estimate``: the mean extrapolated drag; ``bias``, ``u`` and ``U``: of the
    extrapolated value less the true full-scale drag (U the half-length of the probabilistically
    symmetric interval ``[low, high]`` at ``probability``); ``ratio``: Re_full / the highest
    run's Re; ``line``: the mean fitted law from the lowest run to full scale (``reynolds``,
    ``drag``); ``checks``: the requirements on the extrapolation judged on the plan as made;
    ``runs_for``: the sweep a requirement needs.
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
    low: float
    high: float
    probability: float
    trials: int
    seed: int
    line: pd.DataFrame
    checks: tuple[Check, ...] = ()
    runs_for: RunsFor | None = None
    notes: tuple[str, ...] = ()

    @property
    def U_counts(self) -> float:
        return self.U / COUNT


def regressor(scale_effect, re, mach=None):
    """The fit's regressor for a scale effect: ``(1 + k) C_F(Re) S_wet / S_ref`` for a friction
    line, the table's ``C(Re)`` (at the Mach number ``mach``) for a table, ``log10 Re`` for a
    stated sensitivity."""
    if scale_effect.method == "friction_line":
        return friction.friction_drag(scale_effect.line, re, scale_effect.form_factor,
                                      scale_effect.wetted_ratio)
    if scale_effect.method == "table":
        return friction.tabulated(scale_effect.reynolds, scale_effect.table["drag"], re,
                                  mach=scale_effect.mach or None,
                                  at_mach=mach if scale_effect.mach else None)
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


class _Simulator:
    """The runs of one simulated test: the systematic inputs drawn once (stream 0 of the
    extrapolation seed), the random ones per run (a stream of their own); each run's reduced
    drag and the trial's true full-scale drag."""

    def __init__(self, prep, trials: int) -> None:
        self.prep, self.trials = prep, trials
        self.seed = stream_seed(prep.settings.seed, EXTRAPOLATION_STREAM)
        self.shared = self._draw(self.seed)
        self.systematic = np.array([i.component == "systematic" for i in prep.inputs])
        self.full: np.ndarray | None = None

    def _draw(self, seed: int) -> np.ndarray:
        prep = self.prep
        return InputSampler(prep.problem.distributions, seed, "random",
                            prep.copula if prep.correlation is not None else None,
                            self.trials).draw(0, [self.trials])

    def drag(self, state: dict, stream: int | None) -> np.ndarray:
        """The reduced drag of a run at ``state`` whose random inputs come from ``stream``
        (None: at zero, the limit of many runs)."""
        prep = self.prep
        own = (np.zeros_like(self.shared) if stream is None
               else self._draw(stream_seed(self.seed, stream)))
        x = np.where(self.systematic[None, :], self.shared, own)
        outputs = {key: float(np.asarray(v)) for key, v in prep.model(state).items()}
        new = inputs_at(prep, outputs)
        problem = similitude_problem(prep.model, replace(prep.setpoint, nominal=dict(state)), new)
        y = problem.evaluate(moved(x, prep.inputs, new))
        cd = np.asarray(y["drag_coefficient"], dtype=float)
        if self.full is None:  # the same in every run: full scale's own inputs
            self.full = cd - np.asarray(y["drag_coefficient_to_full_scale"], dtype=float)
        return cd


def _predict(prep, cd: np.ndarray, re: np.ndarray, mach: float,
             at: float | None = None) -> np.ndarray:
    """Each trial's extrapolated drag: the runs' drag ``cd`` (trials by runs) fitted against the
    law's regressor at the runs' planned Reynolds numbers ``re`` (log10 Re where the law is flat
    there) and read at the stated full-scale Reynolds number (or at ``at``)."""
    se, sp = prep.study.measurement.scale_effect, prep.setpoint
    re_full = float(sp.outputs["reynolds_full_scale"]) if at is None else at
    x, x_full = regressor(se, re, mach), regressor(se, re_full, float(sp.outputs["mach_full_scale"])
                                                  if "mach_full_scale" in sp.outputs else mach)
    if np.ptp(x) <= 1e-12 * max(float(np.max(np.abs(x))), 1e-300):
        x, x_full = np.log10(re), np.log10(re_full)
    return fit_and_predict(np.broadcast_to(np.asarray(x, dtype=float)[None, :], cd.shape), cd,
                           x_full)


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
    sim = _Simulator(prep, trials)
    y_cd = np.column_stack([sim.drag(run.state, k) for k, run in enumerate(runs, start=1)])
    full = sim.full
    assert full is not None
    # The test knows each run's Reynolds number as planned: fit against the runs' nominal
    # Reynolds numbers, extrapolate to the stated full-scale one.
    re_nominal = np.array([float(r.outputs["reynolds_model"]) for r in runs])
    mach = float(np.mean([float(r.outputs.get("mach_model", np.nan)) for r in runs]))
    estimate = _predict(prep, y_cd, re_nominal, mach)
    err = estimate - full
    p = st.run.coverage_probability
    low, high = symmetric_interval(err, p)
    rows = []
    for run, col, r in zip(runs, y_cd.T, re_nominal):
        lo, hi = symmetric_interval(col, p)
        rows.append({"run": run.label, "reynolds": float(r), "drag_mean": float(np.mean(col)),
                     "drag_U": 0.5 * (hi - lo), "drag_U_counts": 0.5 * (hi - lo) / COUNT})
    re_full = float(prep.setpoint.outputs["reynolds_full_scale"])
    grid = np.geomspace(float(re_nominal.min()), re_full, LINE_POINTS)
    mean_cd = y_cd.mean(axis=0)[None, :]  # the fit is linear in the data: the mean fit
    curve = np.array([float(_predict(prep, mean_cd, re_nominal, mach, at=g)[0]) for g in grid])
    checks = tuple(_check(prep, r, err, trials) for r in st.plan_requirements)
    return Extrapolation(
        law=_law(m.scale_effect), runs=pd.DataFrame(rows), reynolds_full_scale=re_full,
        ratio=re_full / float(max(re_nominal)), estimate=float(np.mean(estimate)),
        full_scale=float(np.mean(full)), bias=float(np.mean(err)),
        u=float(np.std(err, ddof=1)), U=0.5 * (high - low), low=float(low), high=float(high),
        probability=p, trials=trials, seed=sim.seed,
        line=pd.DataFrame({"reynolds": grid, "drag": curve}), checks=checks,
        runs_for=runs_for(prep, plan, sim, checks) if checks else None,
        notes=tuple(outside_table(m.scale_effect, {
            f"run {r.label}": (float(r.outputs["reynolds_model"]), mach) for r in runs})))


def _law(se) -> str:
    return {"friction_line": f"friction line {se.line}", "table": "the table's C(Re)",
            "sensitivity": "log10 Re"}[se.method]


def _check(prep, r, err: np.ndarray, trials: int) -> Check:
    """A requirement on the extrapolation judged on its error sample (the rule of its kind)."""
    value, limit, met = KINDS[r.kind].evaluate(
        r, {EXTRAPOLATED_OUTPUT: err}, prep.study, prep.setpoint,
        prep.study.run.coverage_probability, trials=trials, margin=False)
    return Check(r.key, r.text, r.kind, float(value), float(limit), bool(met), r.output)


def runs_for(prep, plan, sim: _Simulator, checks: tuple[Check, ...]) -> RunsFor | None:
    """The Reynolds sweep of fewest runs that meets the tightest requirement on the
    extrapolation (module docstring), None when the plan has no sweep range."""
    st = prep.study
    runs = [r for r in plan.runs if r.label != "C"]
    top = next((r for r in runs if r.label == "A"), None)
    if top is None or len(runs) < 2:
        return None
    re_top = float(top.outputs["reynolds_model"])
    re_low = min(float(r.outputs["reynolds_model"]) for r in runs)
    if not re_low < re_top:
        return None
    req = min(zip(st.plan_requirements, checks), key=lambda rc: rc[1].limit)[0]
    mach = float(top.outputs.get("mach_model", np.nan))
    # The levels of every candidate, solved once and simulated once per repeat (common draws).
    levels = sorted({float(v) for n in LEVELS for v in np.geomspace(re_low, re_top, n)})
    states: dict[int, tuple[dict, float]] = {}

    def state(i: int) -> tuple[dict, float]:
        if i not in states:
            if i == len(levels) - 1:
                states[i] = (top.state, re_top)
            else:
                run = sweep_run(st, prep.model, prep.setpoint, levels[i], f"L{i}")
                states[i] = (run.state, float(run.outputs["reynolds_model"]))
        return states[i]

    drags: dict[tuple[int, int], np.ndarray] = {}

    def drag(i: int, rep: int) -> np.ndarray:
        if (i, rep) not in drags:
            drags[(i, rep)] = sim.drag(state(i)[0], SEARCH_STREAM + 16 * i + rep)
        return drags[(i, rep)]

    def index(v: float) -> int:
        return int(np.argmin([abs(np.log(v / w)) for w in levels]))

    def judged(cols: list[np.ndarray], re: list[float]) -> tuple[float, float]:
        """U of a sweep and its search margin: 3 standard errors of U from these trials
        (:func:`~simunc.decisions.requirements.half_length_se`), so that the sweep chosen
        meets the limit whatever the seed."""
        err = _predict(prep, np.column_stack(cols), np.array(re), mach) - sim.full
        p = ExpandedUncertainty.probability(req, st.run.coverage_probability)
        return _check(prep, req, err, sim.trials).value, 3.0 * half_length_se(err, p)

    ends = [0, len(levels) - 1]
    floor = judged([sim.drag(state(i)[0], None) for i in ends], [state(i)[1] for i in ends])[0]
    limit = checks[st.plan_requirements.index(req)].limit
    candidates = sorted(((n, k) for n in LEVELS for k in REPEATS), key=lambda c: (c[0] * c[1],
                                                                                -c[0]))
    rows, chosen = [], None
    if floor <= limit:
        for n, k in candidates:
            idx = [index(float(v)) for v in np.geomspace(re_low, re_top, n)]
            cols = [drag(i, rep) for i in idx for rep in range(k)]
            re = [state(i)[1] for i in idx for _ in range(k)]
            U, margin = judged(cols, re)
            met = U + margin <= limit
            rows.append({"levels": n, "runs_per_level": k, "runs": n * k,
                         "reynolds_low": min(re), "reynolds_high": max(re), "U": U,
                         "U_counts": U / COUNT, "margin": margin, "met": met})
            if met:
                chosen = len(rows) - 1
                break
    probability = ExpandedUncertainty.probability(req, st.run.coverage_probability)
    return RunsFor(requirement=req.text, limit=limit, probability=probability,
                   designs=pd.DataFrame(rows, columns=[
                       "levels", "runs_per_level", "runs", "reynolds_low", "reynolds_high", "U",
                       "U_counts", "margin", "met"]), chosen=chosen, floor=float(floor))
