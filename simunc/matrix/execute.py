"""Running a test matrix: every point a task, on dask.distributed or in this process.

By default the points run on a ``LocalCluster`` with one single-threaded worker process per core;
``scheduler`` names an existing cluster instead; ``workers = 0`` runs them here, one after the
other.  Each task is :func:`simunc.matrix.engine.evaluate_point`, a pure function of the study,
the point's index and the seed, and the results are put back in point order before anything is
formed across points, so every number is the same bit for bit whatever the number of workers or
the order the tasks finish in.  The study goes to the workers once (scattered); no trial array is
shipped to them.
"""

from __future__ import annotations

import math
import os
import time
from collections.abc import Callable
from dataclasses import dataclass, replace
from typing import Any

import pandas as pd

from simunc.matrix.engine import DerivedResult, PointResult, derive, evaluate_point, held_values
from simunc.errors import StudyError
from simunc.study.schema import Study

#: Progress callback: (points done, points in all).
MatrixProgress = Callable[[int, int], None]


@dataclass(frozen=True, kw_only=True)
class MatrixResult:
    """A test matrix's results: one :class:`PointResult` per point (in point order), the derived
    quantities, the summary table (one row per point), the ranking of the inputs that lead the
    most points, and how it ran (workers, seconds)."""

    points: tuple[PointResult, ...]
    derived: tuple[DerivedResult, ...]
    table: pd.DataFrame
    leaders: pd.DataFrame
    worst: pd.DataFrame
    derived_table: pd.DataFrame
    workers: int
    scheduler: str
    seconds: float
    seed: int
    trials: int

    @property
    def failed(self) -> tuple[PointResult, ...]:
        return tuple(p for p in self.points if not p.ok)


def _default_workers() -> int:
    return max(1, len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity")
               else (os.cpu_count() or 1))


def run_matrix(study: Study, base_nominal: dict, seed: int, *, workers: int | None = None,
               scheduler: str | None = None, progress: MatrixProgress | None = None,
               scale: tuple[float, ...] | None = None) -> MatrixResult:
    """Every point of ``study.matrix`` (module docstring); ``scale``: the factor of each
    input's tolerance (an allocation's), 1 as written."""
    m = study.matrix
    assert m is not None
    held = held_values(study, base_nominal)
    n = len(m.points)
    start = time.perf_counter()
    if scheduler is None and workers == 0:
        results = []
        for i in range(n):
            results.append(evaluate_point(study, i, seed, held, scale))
            if progress is not None:
                progress(i + 1, n)
        used, where = 0, "this process"
    else:
        results, used, where = _on_dask(study, seed, held, n, workers, scheduler, progress,
                                        scale)
    seconds = time.perf_counter() - start
    derived = derive(study, results)
    out = MatrixResult(points=tuple(results), derived=tuple(derived),
                       table=summary_table(study, results), leaders=leaders(study, results),
                       worst=pd.DataFrame(), derived_table=derived_table(derived), workers=used, scheduler=where, seconds=seconds,
                       seed=seed, trials=m.trials)
    return replace(out, worst=pd.DataFrame(worst_points(study, out), columns=[
        "requirement", "points_met", "points", "worst_point", "value", "limit", "met_at_worst"]))


def _on_dask(study, seed, held, n, workers, scheduler, progress, scale):
    from dask.distributed import Client, LocalCluster, as_completed

    cluster = None
    if scheduler is None:
        workers = workers or _default_workers()
        cluster = LocalCluster(n_workers=workers, threads_per_worker=1, processes=True,
                               dashboard_address=None, silence_logs=50)
        client = Client(cluster)
        where = f"local cluster of {workers} worker process(es)"
    else:
        try:
            client = Client(scheduler, timeout=30)
        except (OSError, TimeoutError, ValueError) as exc:
            raise StudyError("--scheduler", scheduler, "the address of a running dask "
                             f"scheduler ({type(exc).__name__})") from None
        where = f"scheduler {scheduler}"
    try:
        used = len(client.scheduler_info().get("workers", {}))
        shared = client.scatter(study, broadcast=True)
        futures = [client.submit(evaluate_point, shared, i, seed, held, scale, pure=False,
                                 key=f"simunc-point-{i}-{seed}-{time.time_ns()}")
                   for i in range(n)]
        done = 0
        for _ in as_completed(futures):
            done += 1
            if progress is not None:
                progress(done, n)
        results = [f.result() for f in futures]  # point order, whatever order they finished in
    finally:
        client.close()
        if cluster is not None:
            cluster.close()
    return results, used, where


def derived_table(derived) -> pd.DataFrame:
    """One row per increment or slope and combination of the other axes: nominal, mean, u,
    u (LPU), the interval, U, the limit and whether it is met, and the two largest shares of
    its LPU budget."""
    rows = []
    for d in derived:
        top = sorted(d.budget.items(), key=lambda kv: -kv[1])[:2]
        factor, unit = _shown(d)
        rows.append({"quantity": d.name, "kind": d.kind, "at": d.at, "nominal": d.nominal,
                     "mean": d.mean, "u": d.u, "u_lpu": d.u_lpu, "low": d.low, "high": d.high,
                     "U": d.U, "limit": d.limit, "met": d.met, "unit_shown": unit,
                     "nominal_shown": d.nominal * factor, "U_shown": d.U * factor,
                     "limit_shown": None if d.limit is None else d.limit * factor,
                     "leading_inputs": "; ".join(f"{k} ({100 * v:.0f} %)" for k, v in top
                                                 if v > 0.0)})
    return pd.DataFrame(rows, columns=["quantity", "kind", "at", "nominal", "mean", "u",
                                       "u_lpu", "low", "high", "U", "limit", "met",
                                       "unit_shown", "nominal_shown", "U_shown", "limit_shown",
                                       "leading_inputs"])


def _shown(d) -> tuple[float, str]:
    """Factor and unit in which a derived quantity is shown: drag counts for a drag increment,
    per degree for a slope over the angle of attack, per bar over the stagnation pressure."""
    if d.kind == "increment":
        return (1e4, "counts") if d.output == "drag_coefficient" else (1.0, "1")
    return {"angle_of_attack": (math.pi / 180.0, "per deg"),
            "stagnation_pressure": (1e5, "per bar")}.get(d.axis, (1.0, "per unit Mach number"))


@dataclass(frozen=True, kw_only=True)
class WorstPointDecision:
    """The requirement solver and the allocation at the matrix's hardest point, and the
    allocation checked at every point: ``point`` (index), ``limits`` (the largest tolerance of
    each input alone there), ``allocation`` (None without costs), ``checks``: per point the
    requirements with the allocated tolerances (None without an allocation)."""

    point: int
    label: str
    limits: pd.DataFrame | None
    allocation: Any
    checks: pd.DataFrame | None
    #: With the allocated tolerances: the increments and slopes with a limit that meet it,
    #: and how many have one.
    derived_met: tuple[int, int] = (0, 0)

    @property
    def met_everywhere(self) -> bool | None:
        if self.checks is None:
            return None
        return bool(self.checks["all_met"].all())


def hardest_point(study: Study, result: MatrixResult) -> int | None:
    """The point where the requirements are hardest to meet: the largest U / limit (expanded
    uncertainties) or shortfall of probability (the others), over every requirement."""
    worst, where = -math.inf, None
    for p in result.points:
        if not p.ok:
            continue
        for c in p.checks:
            score = (c.value / c.limit if c.kind == "expanded_uncertainty" and c.limit > 0
                     else 1.0 + (c.limit - c.value))
            if score > worst:
                worst, where = score, p.index
    return where


def checks_table(result: MatrixResult) -> pd.DataFrame:
    """Per point: each requirement met, and all met."""
    rows = []
    for p in result.points:
        row = {"point": p.index + 1, "label": p.label}
        row.update({c.key: bool(c.met) for c in p.checks})
        row["all_met"] = p.ok and all(c.met for c in p.checks)
        rows.append(row)
    return pd.DataFrame(rows)


def summary_table(study: Study, results: list[PointResult]) -> pd.DataFrame:
    """One row per point: its axis values, set point, P(in band), U of each coefficient and the
    requirements met (or the point's error)."""
    m = study.matrix
    assert m is not None
    rows = []
    for r in results:
        pt = m.points[r.index]
        row: dict = {"point": r.index + 1}
        for k, v in pt.values.items():  # in the units test plans use
            if k == "angle_of_attack":
                row["angle_of_attack [deg]"] = math.degrees(v)
            elif k == "stagnation_pressure":
                row["stagnation_pressure [bar]"] = v / 1e5
            else:
                row[k] = v
        if not r.ok:
            row["error"] = r.error
            rows.append(row)
            continue
        sp = r.setpoint
        if "stagnation_pressure" in sp:
            row["p0 [bar]"] = sp["stagnation_pressure"] / 1e5
        row.update({k: sp[k] for k in ("mach_model", "speed", "reynolds_ratio") if k in sp})
        row["feasible"] = r.feasible
        row["P_in_band"] = r.conformity
        assert r.statistics is not None
        for o in study.coefficient_outputs:
            if o in r.statistics.index:
                row[f"U_{o}"] = float(r.statistics.loc[o, "U"])
                if o == "drag_coefficient":
                    row["U_drag_coefficient [counts]"] = row[f"U_{o}"] / 1e-4
        row["requirements_met"] = sum(c.met for c in r.checks)
        row["requirements"] = len(r.checks)
        row["error"] = ""
        rows.append(row)
    return pd.DataFrame(rows)


def leaders(study: Study, results: list[PointResult]) -> pd.DataFrame:
    """Per input, at how many points it is the largest contributor (linear budget) to each
    requirement output (else each coefficient output): which input limits the most points."""
    outs = [r.output for r in study.requirements if r.output] or list(study.coefficient_outputs)
    counts: dict[tuple[str, str], int] = {}
    for r in results:
        if not r.ok or r.weights is None or not len(r.weights.columns):
            continue
        for o in outs:
            if o in r.weights.index:
                w = r.weights.loc[o].abs()
                if float(w.max()) > 0.0:
                    key = (o, str(w.idxmax()))
                    counts[key] = counts.get(key, 0) + 1
    rows = [{"output": o, "input": i, "points_led": c} for (o, i), c in counts.items()]
    df = pd.DataFrame(rows, columns=["output", "input", "points_led"])
    return df.sort_values(["output", "points_led"], ascending=[True, False]).reset_index(
        drop=True)


def worst_points(study: Study, result: MatrixResult) -> list[dict]:
    """Per requirement, the point where it is hardest to meet (largest value / limit for an
    expanded uncertainty, smallest probability otherwise) and how many points meet it."""
    out = []
    for k, req in enumerate(study.requirements):
        vals = [(p.checks[k].value, p.checks[k].limit, p.checks[k].met, p.index)
                for p in result.points if p.ok and len(p.checks) > k]
        if not vals:
            continue
        if req.kind == "expanded_uncertainty":
            worst = max(vals, key=lambda v: v[0] / v[1] if v[1] > 0 else math.inf)
        else:
            worst = min(vals, key=lambda v: v[0])
        out.append({"requirement": req.text, "points_met": int(sum(v[2] for v in vals)),
                    "points": len(vals), "worst_point": worst[3] + 1, "value": worst[0],
                    "limit": worst[1], "met_at_worst": bool(worst[2])})
    return out

