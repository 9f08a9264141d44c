"""Report blocks of a test matrix: the points, the increments and slopes, the worst points."""

from __future__ import annotations

import pandas as pd

from simunc.decisions.requirements import Check
from simunc.report.blocks import Block, achieved, allocation_changes, cost_text, rounded
from simunc.report.text import lit, two_digits


def summary_lines(result) -> list[str]:
    """Summary bullets of a matrix: points run, failures, requirements at the worst point, and
    the increments and slopes against their limits."""
    mx = result.matrix
    if mx is None:
        return []
    n = len(mx.points)
    lines = [f"Test matrix: {n} points ({mx.trials} trials each, {lit(mx.scheduler)}, "
             f"{mx.seconds:.0f} s)" + (f"; {len(mx.failed)} point(s) FAILED: "
                                       + "; ".join(f"{p.index + 1} ({lit(p.error)})"
                                                   for p in mx.failed[:3]) if mx.failed else "")
             + "."]
    for _, w in mx.worst.iterrows():
        lines.append(f"Matrix requirement {lit(w['requirement'])}: met at {w['points_met']} of "
                     f"{w['points']} points; hardest at point {w['worst_point']} "
                     f"({'met' if w['met_at_worst'] else 'not met'} there).")
    wd = result.matrix_decision
    if wd is not None:
        a = wd.allocation
        if a is None:
            lines.append(f"Hardest matrix point: {wd.point + 1} ({lit(wd.label)}); the largest "
                         "tolerance of each input alone there is in the matrix section.")
        elif a.message:
            lines.append(f"Allocation at the hardest matrix point {wd.point + 1}: none meets "
                         f"the requirements ({lit(a.message)}).")
        else:
            met = int(wd.checks["all_met"].sum()) if wd.checks is not None else 0
            dm, dn = wd.derived_met
            changed = allocation_changes(a)
            asks = (f"it asks for {'; '.join(changed[:4])}" + ("; …" if len(changed) > 4 else "")
                    + "; " if changed else "")
            lines.append(f"Allocation at the hardest matrix point {wd.point + 1} "
                         f"({lit(wd.label)}): cost {cost_text(a.cost)}; {asks}with it every "
                         "requirement "
                         f"holds at {met} of {len(wd.checks) if wd.checks is not None else 0} "
                         "points" + (f", and {dm} of {dn} increments and slopes stay within "
                                     "their limits" if dn else "") + ".")
    d = mx.derived_table
    for name, g in d.groupby("quantity", sort=False):
        limited = g[g["limit"].notna()]
        worst = g.loc[g["U"].idxmax()]
        text = (f"{lit(name)}: U up to {two_digits(worst['U_shown'])} {worst['unit_shown']} "
                f"({lit(worst['at'])})")
        if len(limited):
            met = int(limited["met"].astype(bool).sum())
            text += f"; within its limit at {met} of {len(limited)}"
        lines.append(text + f"; led by {lit(worst['leading_inputs'])}.")
    return lines


def matrix_blocks(result) -> list[Block]:
    mx = result.matrix
    if mx is None:
        return []
    p = f"{100 * result.coverage_probability:g} %"
    b = [Block("heading", "Test matrix"),
         Block("paragraph", f"{len(mx.points)} points, each solved and analysed as a study of its "
               f"own with {mx.trials} trials ({lit(mx.scheduler)}, {mx.seconds:.1f} s, seed "
               f"{mx.seed}). In one trial every systematic input takes one draw for all the "
               "points, every random input a draw of its own at each point, and a drifting "
               "input a first-order autoregression along the points of a run (AIAA S-071A, "
               "ASME PTC 19.1). Increments and slopes are formed trial by trial, so a shared "
               "error cancels in them as far as the points' sensitivities agree; their budgets "
               f"are the law of propagation with those correlations (JCGM 100 5.2). U at {p}.")]
    if len(mx.worst):
        b.append(Block("paragraph", "Requirements at every point (the point where each is "
                       "hardest to meet):"))
        b.append(Block("table", _worst_view(mx.worst, result.study)))
    if len(mx.derived_table):
        b.append(Block("paragraph", "Increments and slopes, in the units shown (drag "
                       "increments in counts, slopes per degree of angle of attack); u and u "
                       "(LPU) in SI:"))
        dt = mx.derived_table
        view = rounded(dt[["quantity", "at", "unit_shown", "nominal_shown", "U_shown",
                           "limit_shown", "met", "u", "u_lpu", "leading_inputs"]])
        for col in ("U_shown", "u", "u_lpu"):   # uncertainties to two digits (JCGM 100 7.2.6)
            view[col] = [two_digits(v) for v in dt[col]]
        b.append(Block("table", view.rename(columns={
            "unit_shown": "unit", "nominal_shown": "nominal", "U_shown": f"U ({p})",
            "limit_shown": "limit of U", "u_lpu": "u (LPU)"})))
    wd = result.matrix_decision
    if wd is not None:
        b.append(Block("paragraph", f"Requirements at the hardest point, {wd.point + 1} "
                       f"({lit(wd.label)}), solved as for the study's own point: the largest "
                       "tolerance of each input alone (the others as written) there:"))
        if wd.limits is not None:
            b.append(Block("table", rounded(wd.limits.reset_index())))
        a = wd.allocation
        if a is not None and a.message:
            b.append(Block("paragraph", f"No allocation meets them there: {lit(a.message)}."))
        elif a is not None:
            b.append(Block("paragraph", f"Least-cost allocation there: cost {cost_text(a.cost)} "
                           f"(fresh check at that point {'passed' if a.verified else 'FAILED'}); "
                           "the matrix run again with the allocated tolerances (the same draws) "
                           "gives at each point:"))
            if a.table is not None:
                b.append(Block("table", rounded(a.table)))
            if wd.checks is not None:
                b.append(Block("table", rounded(wd.checks)))
    if len(mx.leaders):
        b.append(Block("paragraph", "Inputs that lead the most points (largest term of the "
                       "linear budget of each output at each point):"))
        b.append(Block("table", rounded(mx.leaders)))
    b.append(Block("figure", "matrix_uncertainty.png", caption=(
        f"U ({p}) of the drag (counts) and lift coefficients at every point of the matrix, one "
        "line per run, with the requirements.")))
    held = result.study.matrix.hold
    b.append(Block("paragraph", "The points (set point, probability that every matched group "
                   "is in its band, U of each coefficient, requirements met)" + (
                       f". With {lit(', '.join(held))} held at the base set point, a point "
                       "away from the base condition cannot match every group: 'feasible: no' "
                       "and a low P(in band) are expected there." if held else ":")))
    b.append(Block("table", rounded(mx.table.loc[:, [c for c in mx.table.columns if c != "error"
                                                      or mx.table[c].astype(bool).any()]])))
    return b


def matrix_json(mx, wd=None) -> dict | None:
    if mx is None:
        return None
    a = None if wd is None else wd.allocation
    return {
            "hardest_point": None if wd is None else {
                "point": wd.point + 1, "label": wd.label,
                "derived_met_at_allocation": list(wd.derived_met),
                "input_limits": None if wd.limits is None else
                wd.limits.reset_index().to_dict(orient="records"),
                "allocation": None if a is None else {
                    "message": a.message, "cost": a.cost, "verified_there": a.verified,
                    "scale": [float(v) for v in a.scale]},
                "points_at_allocation": None if wd.checks is None else
                wd.checks.to_dict(orient="records")},"points": mx.table.to_dict(orient="records"),
            "derived": mx.derived_table.to_dict(orient="records"),
            "leaders": mx.leaders.to_dict(orient="records"),
            "worst": mx.worst.to_dict(orient="records"),
            "failed": [{"point": p.index + 1, "label": p.label, "error": p.error}
                       for p in mx.failed],
            "trials": mx.trials, "seed": mx.seed, "workers": mx.workers,
            "scheduler": mx.scheduler, "seconds": mx.seconds}


def _worst_view(worst: pd.DataFrame, study) -> pd.DataFrame:
    """The matrix requirements table as a test plan reads it: each requirement as written, the
    points that meet it, and the achieved value at the hardest point in the limit's unit."""
    rows = []
    for _, w in worst.iterrows():
        req = next(r for r in study.requirements if r.text == w["requirement"])
        c = Check(key=req.key, text=req.text, kind=req.kind, value=float(w["value"]),
                  limit=float(w["limit"]), met=bool(w["met_at_worst"]), output=req.output)
        rows.append((lit(req.text), f"{w['points_met']} of {w['points']}",
                     str(w["worst_point"]), achieved(c, study),
                     "yes" if w["met_at_worst"] else "no"))
    return pd.DataFrame(rows, columns=["requirement", "points that meet it", "hardest point",
                                       "achieved there", "met there"])
