"""One matrix point's analysis, and the quantities formed across points.

:func:`evaluate_point` is a pure function of the study, the point's index and the seed: it builds
the point's study (:func:`simunc.matrix.points.point_study`), solves and prepares it as any study
is, draws its trials (:func:`simunc.matrix.draws.point_uniforms`) and evaluates the one model on
them.  It returns the point's statistics, conformity, requirement checks, linear budget weights
``c_j u_j`` (JCGM 100 5.1.3: the sensitivity coefficient times the input's standard uncertainty)
and the trials of the outputs the derived quantities need.  A point that fails is returned as
failed, with its message, not lost.

:func:`derive` forms the increments and slopes trial by trial (so their coverage intervals hold
every shared, random and drifting error as it is) and their linear budgets: with ``a_i`` the
weight of point i in the quantity (``+1, -1`` for an increment, ``(x_i - mean x) / S_xx`` for a
least-squares slope), input j contributes ``(sum_i a_i w_ij)^2`` when systematic (shared: it
cancels in an increment where the points' weights agree), ``sum_i (a_i w_ij)^2`` when random,
and ``sum_i sum_k a_i a_k w_ij w_kj rho^|p_i - p_k|`` when it drifts along a run -- the law of
propagation of uncertainty with correlated inputs (JCGM 100 5.2.2).
"""

from __future__ import annotations

import hashlib
import math
import pickle
import resource
import traceback
from dataclasses import dataclass, field, replace
from typing import cast

import numpy as np
import pandas as pd

from simunc.decisions.requirements import Check, check_all
from simunc.errors import SimuncError
from simunc.matrix.draws import point_uniforms
from simunc.matrix.points import point_study
from simunc.similitude.prepared import prepare
from simunc.similitude.setpoint import SetPoint, solve
from simunc.study.schema import MatrixDerived, Study, axis_values_text
from simunc.uncertainty.lpu import sensitivity_coefficients
from simunc.uncertainty.sampling import map_to_inputs
from simunc.uncertainty.statistics import symmetric_interval


@dataclass(frozen=True, kw_only=True)
class PointResult:
    """The analysis of one matrix point (module docstring); ``error``: why it failed ("" when
    it did not)."""

    index: int
    label: str
    error: str = ""
    feasible: bool = False
    setpoint: dict = field(default_factory=dict)
    statistics: pd.DataFrame | None = None
    conformity: float = math.nan
    checks: tuple[Check, ...] = ()
    weights: pd.DataFrame | None = None
    samples: dict = field(default_factory=dict)
    peak_memory: float = 0.0

    @property
    def ok(self) -> bool:
        return not self.error


#: Set-point quantities reported per point.
SETPOINT_KEYS = ("stagnation_pressure", "stagnation_temperature", "mach_model", "speed",
                 "static_pressure", "model_length", "reynolds_model", "reynolds_ratio",
                 "dynamic_pressure", "mach_full_scale")


#: Set points solved in this process, by condition (:func:`_solved`).
_SOLVED: dict = {}


def _solved(pstudy: Study) -> SetPoint:
    """The point's set point, solved once per condition in a process: points that differ only
    in the angle of attack or the configuration share it (their set point does not depend on
    the coefficients unless wall corrections make the stream depend on the drag and lift).
    The solver is deterministic, so a point's set point is the same whichever points a
    worker solved before."""
    m = pstudy.measurement
    own = m is not None and m.walls is not None
    key = hashlib.sha256(pickle.dumps(replace(
        pstudy, measurement=m if own else None, requirements=()))).hexdigest()
    if key not in _SOLVED:
        if len(_SOLVED) > 256:
            _SOLVED.clear()
        _SOLVED[key] = solve(pstudy)
    return _SOLVED[key]


def outputs_of(study: Study) -> list[str]:
    """The outputs a matrix reports at every point: the matched groups, the measured
    coefficients, the requirement outputs and those of the derived quantities."""
    m = study.matrix
    outs = [b.output for b in study.bands] + list(study.coefficient_outputs) + [
        r.output for r in study.requirements if r.output] + (
        [d.output for d in m.derived] if m is not None else [])
    return list(dict.fromkeys(outs))


def held_values(study: Study, base_nominal: dict) -> dict[str, float]:
    m = study.matrix
    return {} if m is None else {k: float(base_nominal[k]) for k in m.hold}


def evaluate_point(study: Study, index: int, seed: int, held: dict[str, float],
                   scale: tuple[float, ...] | None = None) -> PointResult:
    """The analysis of point ``index`` of ``study.matrix`` (module docstring); ``scale``: a
    factor on each input's deviations ([[uncertain]] order), as an allocation scales its
    tolerance (exact for the location-scale families, as the design sample scales them)."""
    m = study.matrix
    assert m is not None
    point = m.points[index]
    try:
        pstudy = point_study(study, point, held)
        with np.errstate(all="ignore"):
            prep = prepare(pstudy, setpoint=_solved(pstudy))
            names = [i.name for i in prep.inputs]
            systematic = np.array([i.component == "systematic" for i in prep.inputs])
            drift = {names.index(d.input): d.correlation for d in m.drift}
            run_before = tuple(p.index for p in m.points
                               if p.run == point.run and p.position < point.position)
            u = point_uniforms(seed, m.trials, systematic, index, run_before, drift,
                               prep.copula)
            x = map_to_inputs(u, prep.problem.distributions) if names else np.zeros(
                (m.trials, 0))
            if scale is not None:
                x = x * np.asarray(scale, dtype=float)[None, :]
            y = prep.problem.evaluate(x)
            outs = [o for o in outputs_of(study) if o in y]
            p = study.run.coverage_probability
            rows = []
            for o in outs:
                v = np.broadcast_to(np.asarray(y[o], dtype=float), (m.trials,))
                if not np.all(np.isfinite(v)):
                    raise SimuncError(f"non-finite {o} in some trials")
                lo, hi = symmetric_interval(v, p)
                rows.append({"output": o, "nominal": float(prep.setpoint.outputs[o]),
                             "mean": float(np.mean(v)), "u": float(np.std(v, ddof=1)),
                             "low": lo, "high": hi, "U": 0.5 * (hi - lo)})
            stats = pd.DataFrame(rows).set_index("output")
            inside = pstudy.inside(y)["all"] if pstudy.bands else np.ones(m.trials, bool)
            checks = tuple(check_all(pstudy.requirements, y, pstudy, prep.setpoint, p,
                                     trials=m.trials))
            if names:
                _, c = sensitivity_coefficients(prep.problem, outs)
                sigma = np.array([i.standard_uncertainty for i in prep.inputs]) * (
                    1.0 if scale is None else np.asarray(scale, dtype=float))
                weights = c * sigma[None, :]
            else:
                weights = pd.DataFrame(index=pd.Index(outs, name="output"))
        needed = {d.output for d in m.derived}
        samples = {o: np.asarray(y[o], dtype=float).copy() for o in needed if o in y}
        sp = prep.setpoint
        return PointResult(
            index=index, label=point.label, feasible=bool(sp.feasible),
            setpoint={k: float(sp.outputs[k]) for k in SETPOINT_KEYS if k in sp.outputs},
            statistics=stats, conformity=float(np.mean(inside)), checks=checks,
            weights=weights, samples=samples,
            peak_memory=resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024.0)
    except Exception as exc:  # a failed point is reported, not lost
        text = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
        if not isinstance(exc, SimuncError):
            text = f"{type(exc).__name__}: {text} ({traceback.extract_tb(exc.__traceback__)[-1].name})"
        return PointResult(index=index, label=point.label, error=text)


@dataclass(frozen=True, kw_only=True)
class DerivedResult:
    """One derived quantity at one combination of the other axes: its points, nominal, mean,
    u, the interval and U at the run's probability, the LPU u and budget (input -> share of
    the LPU variance), and whether U meets the limit."""

    key: str
    name: str
    kind: str
    output: str
    axis: str
    at: str
    points: tuple[int, ...]
    nominal: float
    mean: float
    u: float
    low: float
    high: float
    U: float
    u_lpu: float
    budget: dict
    limit: float | None
    met: bool | None


def _others(point, axis: str) -> tuple:
    return tuple((k, v) for k, v in point.values.items() if k != axis)


def _budget(study: Study, results: list[PointResult], members: list[int], a: np.ndarray,
            output: str) -> tuple[float, dict]:
    """u and budget of sum_i a_i y_i (module docstring); correlated inputs (of one kind: the
    readers refuse a systematic one correlated with a random or drifting one) add their cross
    terms r_jl (sum_i v_ij)(sum_i v_il) when systematic, r_jl sum_i v_ij v_il when random, with
    v_ij = a_i w_ij.  The budget gives each input its own term over the total variance (cross
    terms are in the total only)."""
    m = study.matrix
    assert m is not None
    inputs = {spec.name: spec.component for spec in study.inputs}
    drift = {d.input: d.correlation for d in m.drift}
    w = pd.concat([cast(pd.DataFrame, results[i].weights).loc[output] for i in members],
                  axis=1).fillna(0.0)
    pos = np.array([m.points[i].position for i in members])
    run = np.array([m.points[i].run for i in members])
    names = list(w.index)
    v = w.to_numpy() * a[None, :]          # inputs by points
    var = {}
    for j, name in enumerate(names):
        if name in drift:
            lag = np.abs(pos[:, None] - pos[None, :])
            corr = np.where(run[:, None] == run[None, :], drift[name] ** lag, 0.0)
            var[name] = float(v[j] @ corr @ v[j])
        elif inputs.get(name, "systematic") == "systematic":
            var[name] = float(v[j].sum() ** 2)
        else:
            var[name] = float((v[j] ** 2).sum())
    total = sum(var.values())
    c = study.correlation
    if c is not None:
        idx = {n: k for k, n in enumerate(c.names)}
        for j, nj in enumerate(names):
            for k in range(j + 1, len(names)):
                r = float(c.matrix[idx[nj], idx[names[k]]]) if nj in idx and names[k] in idx \
                    else 0.0
                if r == 0.0:
                    continue
                shared = inputs.get(nj, "systematic") == "systematic"
                cross = (v[j].sum() * v[k].sum()) if shared else float(v[j] @ v[k])
                total += 2.0 * r * float(cross)
    total = max(total, 0.0)
    return math.sqrt(total), {k: val / total for k, val in var.items() if total > 0}


def derive(study: Study, results: list[PointResult]) -> list[DerivedResult]:
    """Every increment and slope of the matrix at every combination of the other axes."""
    m = study.matrix
    assert m is not None
    p = study.run.coverage_probability
    out = []
    for d in m.derived:
        groups: dict[tuple, list[int]] = {}
        for pt in m.points:
            groups.setdefault(_others(pt, d.axis), []).append(pt.index)
        for others, members in groups.items():
            at = axis_values_text(others) or "all points"
            if not all(results[i].ok and d.output in results[i].samples for i in members):
                continue
            members, a = _weights(d, m.points, members)
            if not members:
                continue
            y = sum(ai * results[i].samples[d.output] for ai, i in zip(a, members))
            nominal = float(sum(ai * cast(pd.DataFrame, results[i].statistics).loc[
                d.output, "nominal"] for ai, i in zip(a, members)))
            lo, hi = symmetric_interval(np.asarray(y), p)
            u_lpu, budget = _budget(study, results, members, a, d.output)
            U = 0.5 * (hi - lo)
            out.append(DerivedResult(
                key=d.key, name=d.name, kind=d.kind, output=d.output, axis=d.axis, at=at,
                points=tuple(members),
                nominal=nominal, mean=float(np.mean(y)), u=float(np.std(y, ddof=1)), low=lo,
                high=hi, U=U, u_lpu=u_lpu, budget=budget, limit=d.limit,
                met=None if d.limit is None else bool(U <= d.limit)))
    return out


def _weights(d: MatrixDerived, points, members: list[int]) -> tuple[list[int], np.ndarray]:
    """The points of one derived quantity and their weights a_i (module docstring)."""
    if d.kind == "increment":
        first = [i for i in members if _equal(points[i].values[d.axis], d.minuend)]
        second = [i for i in members if _equal(points[i].values[d.axis], d.subtrahend)]
        if not first or not second:
            return [], np.empty(0)
        return [first[0], second[0]], np.array([1.0, -1.0])
    x = np.array([float(points[i].values[d.axis]) for i in members])
    dx = x - x.mean()
    return members, dx / float((dx * dx).sum())


def _equal(a, b) -> bool:
    if isinstance(a, str) or isinstance(b, str):
        return a == b
    return math.isclose(a, b, rel_tol=1e-9, abs_tol=1e-12)

