"""The ``results.json`` document (schema in docs/results-json.md, checked by tests/test_docs.py)."""

from __future__ import annotations

import json
import math

from simunc import __version__
from simunc.report.matrix import matrix_json

SCHEMA_VERSION = 1


def _clean(v):
    if isinstance(v, float):
        return v if math.isfinite(v) else None
    if isinstance(v, dict):
        return {str(k): _clean(x) for k, x in v.items()}
    if isinstance(v, (list, tuple)):
        return [_clean(x) for x in v]
    if hasattr(v, "item"):
        return _clean(v.item())
    return v


def _check(c) -> dict:
    return {"requirement": c.key, "statement": c.text, "kind": c.kind, "output": c.output,
            "value": c.value, "limit": c.limit, "met": c.met}


def _requirements(result):
    if result.requirement_checks is None:
        return None
    a = result.allocation
    lim = result.input_limits
    return {
        "design_trials": result.design_trials,
        "verify_trials": result.study.design.verify_trials,
        "as_written": [_check(c) for c in result.requirement_checks],
        "input_limits": None if lim is None else [{"input": n, **row} for n, row in lim.iterrows()],
        "allocation": None if a is None else {
            "kind": a.kind, "cost": a.cost, "cost_as_written": a.cost_written,
            "message": a.message or None, "note": a.note or None, "rounds": a.rounds,
            "scales": {i.name: float(v) for i, v in zip(result.inputs, a.scale)},
            "grades": dict(a.grades),
            "balance": a.balance or None,
            "excluded_balances": list(a.excluded_balances),
            "verified": a.verified if not a.message else False,
            "fails_when_loosened": a.fails_loosened if not a.message else None,
            "conformity_all": None if a.message else a.conformity,
            "design": [_check(c) for c in a.design_checks],
            "verification": None if not a.verification else {
                "trials": a.verify_trials, "seed": a.verify_seed,
                "checks": [_check(c) for c in a.verification]},
            "loosened": [_check(c) for c in a.loosened],
            "instrument_requirements": None if a.table is None else a.table.to_dict(orient="records"),
        },
    }


def results_dict(result) -> dict:
    """All figures of a run under stable keys, SI units."""
    st, sp = result.study, result.setpoint
    sr = result.sobol_result
    outputs = {}
    for key, row in result.statistics.iterrows():
        outputs[key] = {
            "unit": row["unit"], "label": row["label"], "nominal": row["nominal"], "mean": row["mean"],
            "standard_uncertainty": row["standard_uncertainty"],
            "coverage_interval": [row["low"], row["high"]],
            "shortest_coverage_interval": [row["shortest_low"], row["shortest_high"]],
            "coverage_factor": row["coverage_factor"],
            "coverage_probability": row["coverage_probability"],
        }
    doc = {
        "schema_version": SCHEMA_VERSION,
        "simunc_version": __version__,
        "study": {"title": st.title, "path": st.path, "sha256": st.sha256},
        "run": {"trials": result.trials, "seed": result.seed,
                "coverage_probability": result.coverage_probability,
                "sobol_base_samples": st.run.sobol_base_samples, "sampling": result.engine.method,
                "mode": "adaptive" if result.engine.adaptive is not None else "fixed",
                "block_size": result.engine.block_size,
                "adaptive": None if result.engine.adaptive is None else {
                    "significant_digits": result.engine.adaptive.n_digits,
                    "batch_size": result.engine.adaptive.batch_size,
                    "batches": result.engine.adaptive.batches,
                    "converged": result.engine.adaptive.converged,
                    "tolerance": dict(result.engine.adaptive.tolerance),
                    "reached": {k: dict(v) if isinstance(v, dict) else v
                                for k, v in result.engine.adaptive.reached.items()}},
                "intervals": "exact sample quantiles" if result.output_values is not None
                             else "streaming histogram"},
        "setpoint": {
            "solve_for": list(sp.solve_for),
            "method": sp.method,
            "fluid": sp.fluid,
            "required_value": sp.required,
            "required_values": dict(sp.required_values),
            "feasible": sp.feasible,
            "mismatch": dict(sp.mismatch),
            "binding": list(sp.binding),
            "alternatives": list(sp.alternatives),
            "reynolds_shortfall": sp.reynolds_shortfall,
            "mach_shortfall": sp.mach_shortfall if st.kind == "gas" else None,
            "nominal": {k: v for k, v in sp.nominal.items() if v is not None},
            "outputs": dict(sp.outputs),
            "limits": [{"quantity": lim.quantity, "side": lim.side, "bound": lim.bound,
                        "value": lim.value, "unit": lim.unit, "ok": lim.ok, "active": lim.active}
                       for lim in sp.limits],
            "messages": list(sp.messages),
        },
        "inputs": [{
            "name": i.name, "perturbs": i.target, "distribution": i.kind,
            "effects": [{"target": t, "factor": f} for t, f in i.effects],
            "component": i.component, "degrees_of_freedom": i.dof,
            "specified_as": i.spec.size_kind, "written": i.spec.text,
            "coverage_factor": i.spec.coverage_factor if i.spec.size_kind == "expanded_uncertainty" else None,
            "standard_uncertainty": i.standard_uncertainty,
            "gum_standard_uncertainty": i.gum_standard_uncertainty,
            "controllable": bool(i.spec.controllable),
            "note": i.spec.note or None,
            "unit": i.unit,
        } for i in result.inputs],
        "outputs": outputs,
        "warnings": list(result.warnings),
        "components": None if result.components is None else {
            out: dict(row) for out, row in result.components.iterrows()},
        "lpu": None if result.lpu is None else {
            out: {"value": row["value"], "standard_uncertainty": row["standard_uncertainty"],
                  "coverage_factor": row["coverage_factor"],
                  "expanded_uncertainty": row["expanded_uncertainty"],
                  "interval": [row["low"], row["high"]],
                  **{k: result.validation.loc[out, k] for k in ("d_low", "d_high", "delta", "se_low",
                                                                 "se_high", "verdict",
                                                                 "trials_needed", "validated")}}
            for out, row in result.lpu.estimates.iterrows()},
        "conformity": {
            "probability": dict(result.conformity),
            "bands": {b.group: {"output": b.output, "centre": b.centre, "tolerance": b.tolerance,
                                "written": b.text} for b in st.bands},
        },
        "sensitivity": {
            "method": "Sobol first-order (S1) and total (ST) indices: Saltelli design on a "
                      "scrambled Sobol sequence, the estimators SALib uses, bootstrap 95 % "
                      "confidence half-widths (*_conf)",
            "indices": {out: {name: dict(row) for name, row in table.iterrows()}
                        for out, table in result.sobol.items()},
            "second_order": None if sr is None or sr.second_order is None else {
                out: [{"inputs": list(pair), **row} for pair, row in t.iterrows()]
                for out, t in sr.second_order.items()},
            "groups": None if sr is None or sr.groups is None else {
                "members": {g: list(m) for g, m in sr.group_members.items()},
                "indices": {out: {g: dict(row) for g, row in t.iterrows()}
                            for out, t in sr.groups.items()}},
            "shapley": None if result.shapley is None else {
                out: {name: dict(row) for name, row in t.iterrows()}
                for out, t in result.shapley.items()},
            "budgets": None if result.lpu is None else {
                out: {term: {k: row[k] for k in ("kind", "sensitivity", "standard_uncertainty",
                                                       "correlation", "contribution",
                                                       "share_percent")}
                           for term, row in result.lpu.budget(out).iterrows()}
                for out in [b.output for b in st.bands] + list(st.coefficient_outputs)
                if out in result.lpu.budgets},
        },
        "ranking": [{"input": name, **row} for name, row in result.ranking.iterrows()],
        "tightening": None if result.tightening is None else [
            {"input": name, **row} for name, row in result.tightening.iterrows()],
        "requirements": _requirements(result),
        "sweeps": [{"key": sw.key, "inputs": list(sw.inputs), "spacing": sw.spacing,
                    "scales": [[float(v) for v in s] for s in sw.scales],
                    "points": sw.table.to_dict(orient="records")} for sw in result.sweeps],
        "envelope": None if result.envelope is None else {
            "abscissa": result.envelope.abscissa,
            "x": [float(v) for v in result.envelope.x],
            "bands": {label: {"model_length": length, "reynolds_low": [float(v) for v in lo],
                              "reynolds_high": [float(v) for v in hi]}
                      for label, (length, lo, hi) in result.envelope.bands.items()},
            "target": list(result.envelope.target), "setpoint": list(result.envelope.setpoint),
        },
        "test_plan": None if result.test_plan is None or not result.test_plan.runs else {
            "primary": result.test_plan.primary,
            "runs": [{"label": r.label, "purpose": r.purpose,
                      "state": {k: v for k, v in r.state.items() if v is not None},
                      "outputs": {k: float(v) for k, v in r.outputs.items()}}
                     for r in result.test_plan.runs],
            "reynolds_covered": list(result.test_plan.reynolds_covered),
            "reynolds_full_scale": result.test_plan.reynolds_full_scale,
            "extrapolation_ratio": result.test_plan.extrapolation_ratio,
            "notes": list(result.test_plan.notes),
        },
        "pi_groups": None if not result.pi_groups else [
            {"name": g.name, "exponents": {k: int(v) for k, v in g.exponents.items()},
             "formula": g.formula} for g in result.pi_groups],
        "output_units": {k: row["unit"] for k, row in result.statistics.iterrows()},
        "coefficients": _coefficients(result.coefficients),
        "extrapolation": None if result.extrapolation is None else {
            "law": result.extrapolation.law,
            "runs": result.extrapolation.runs.to_dict(orient="records"),
            **{k: getattr(result.extrapolation, k) for k in (
                "reynolds_full_scale", "ratio", "estimate", "full_scale", "bias", "u", "U",
                "U_counts", "low", "high", "probability", "trials", "seed")},
            "line": result.extrapolation.line.to_dict(orient="list"),
            "requirements": [_check(c) for c in result.extrapolation.checks],
            "runs_for": _runs_for(result.extrapolation.runs_for)},
        "matrix": matrix_json(result.matrix, result.matrix_decision),
    }
    return _clean(doc)


def _runs_for(r):
    if r is None:
        return None
    return {"requirement": r.requirement, "limit": r.limit, "probability": r.probability,
            "floor": r.floor, "chosen": r.chosen,
            "designs": r.designs.to_dict(orient="records")}


def _coefficients(c):
    if c is None:
        return None
    chart = c.chart
    return {
        "table": {out: dict(row) for out, row in c.table.iterrows()},
        "utilisation": None if c.utilisation is None else c.utilisation.to_dict(orient="records"),
        "notes": list(c.notes),
        "pressure_chart": None if chart is None else {
            "axis": chart.axis, "values": [float(v) for v in chart.values],
            "dynamic_pressure": [float(v) for v in chart.dynamic_pressure],
            "expanded": {name: {o: [float(v) for v in arr] for o, arr in d.items()}
                         for name, d in chart.expanded.items()},
            "carries": {name: [bool(v) for v in arr] for name, arr in chart.carries.items()},
            "setpoint": chart.setpoint, "setpoint_q": chart.setpoint_q, "balance": chart.balance,
            "probability": dict(chart.probability), "trials": chart.trials, "seed": chart.seed},
        "scale_trade": None if c.trade is None else c.trade.to_dict(orient="records"),
        "walls": None if c.walls is None else c.walls.to_dict(orient="records"),
        "scale_effect": None if c.scale is None else c.scale.to_dict(orient="records"),
    }


def results_json(result) -> str:
    return json.dumps(results_dict(result), indent=2, allow_nan=False)
