"""Report blocks of the measured coefficients: data-reduction uncertainty, balance, pre-test chart."""

from __future__ import annotations

import math

import pandas as pd

from simunc.decisions.coefficients import LOAD_CAUTION
from simunc.report.blocks import Block, fmt, near, requirement_label, rounded
from simunc.report.text import lit, two_digits, with_uncertainty
from simunc.units import COUNT, in_display_units, load_text, number


#: The heading of the coefficients' uncertainty budgets (an appendix section).
BUDGETS = "Uncertainty budgets of the coefficients"


def summary_lines(result) -> list[str]:
    """Summary bullets: U of each force coefficient (drag in counts) and what drives it."""
    c = result.coefficients
    if c is None:
        return []
    p = f"{100 * result.coverage_probability:g} %"
    lines = []
    for out, r in c.table.iterrows():
        if str(out).startswith("pressure_coefficient_") or r["nominal"] == 0.0:
            continue
        # two significant digits for an uncertainty (JCGM 100 7.2.6)
        # three where two would read as the limit
        lim = r["limit"] if r["limit"] == r["limit"] else math.nan
        value = (f"{near(r['U_counts'], lim / COUNT)} counts" if out == "drag_coefficient"
                 else near(r["U"], lim))
        lines.append(f"{lit(out)}: U ({p}) = {value}; driven most by {lit(r['leading_inputs'])}."
                     if r["leading_inputs"] else f"{lit(out)}: U ({p}) = {value}.")
    return lines


def extrapolation_lines(result) -> list[str]:
    """Summary bullets of the extrapolation: the extrapolated drag and U, and per requirement
    on it whether the plan meets it and the sweep that would."""
    e = result.extrapolation
    if e is None:
        return [f"Requirement {lit(r.text)}: not judged: there is no extrapolation (it needs a "
                "split-test plan with at least two runs at the matched primary group)."
                for r in result.study.plan_requirements]
    pe = f"{100 * e.probability:g} %"
    lines = [f"Drag extrapolated from the split-test plan to full-scale Re (ratio {e.ratio:.3g}, "
             f"{lit(e.law)}): U ({pe}) = {two_digits(e.U_counts)} counts about the true value."]
    for c in e.checks:
        lines.append(f"Requirement {requirement_label(c.key)} "
                     f"{'met' if c.met else '**NOT met**'} by the plan as made: {lit(c.text)} — "
                     f"achieved U = {two_digits(c.value / COUNT)} counts." + (
                         "" if c.met or e.runs_for is None else " " + _runs_for_text(e.runs_for)))
    return lines


def _runs_for_text(r) -> str:
    """What sweep meets the requirement, or why none does."""
    floor = (f" The errors the runs share alone leave U = {two_digits(r.floor / COUNT)} counts "
             "(the limit of many runs).")
    if r.chosen is not None:
        d = r.designs.iloc[r.chosen]
        return (f"A sweep of {int(d['runs'])} runs meets it: {int(d['levels'])} Reynolds numbers "
                f"from {number(d['reynolds_low'], 3)} to {number(d['reynolds_high'], 3)}, evenly "
                f"spaced in log10 Re, {int(d['runs_per_level'])} run(s) at each (U = "
                f"{two_digits(d['U_counts'])} counts, with a margin of 3 standard errors of the "
                "simulation)." + floor)
    if r.floor > r.limit:
        return (f"No number of runs meets it: the errors the runs share (systematic inputs and "
                f"the law's model form) alone give U = {two_digits(r.floor / COUNT)} counts; "
                "tighten those or widen the Reynolds range.")
    return (f"No sweep of up to {int(r.designs['runs'].max())} runs meets it (the shared errors "
            f"alone give U = {two_digits(r.floor / COUNT)} counts).")


def _runs_for_blocks(e) -> list[Block]:
    r = e.runs_for
    if r is None:
        return []
    b = [Block("paragraph", f"Sweeps simulated for the requirement {lit(r.requirement)} (the "
               "same draws for every sweep; fewest runs first): " + _runs_for_text(r))]
    if len(r.designs):
        b.append(Block("table", rounded(r.designs)))
    return b


def coefficient_blocks(result) -> list[Block]:
    c = result.coefficients
    if c is None:
        return []
    st = result.study
    m = st.measurement
    p = f"{100 * result.coverage_probability:g} %"
    b = [Block("heading", "Measured coefficients (data reduction)"),
         Block("paragraph", "In every trial the true loads (the pre-test coefficients times the "
               "true q and the true geometry, resolved to the balance axes at the true angle of "
               "attack) are read by the balance with its errors and reduced as the data system "
               "does: with the recorded q, the nominal geometry and the measured angle. U is the "
               f"half-length of the probabilistically symmetric {p} coverage interval (JCGM 101); "
               "bias is the mean of the reduced value less the true one (the data reduction's "
               "mean error); a drag count is 0.0001 of CD.")]
    t = c.table.reset_index()
    drag = t["output"] == "drag_coefficient"
    est = result.lpu.estimates if result.lpu is not None else None
    u_lpu = [float(est.loc[o, "standard_uncertainty"]) if est is not None and o in est.index
             else float("nan") for o in t["output"]]
    def counts(v: float, is_drag: bool, limit: float) -> str:   # three digits near the limit
        return ("—" if v != v else f"{near(v / COUNT, limit / COUNT)} counts" if is_drag
                else near(v, limit))

    b.append(Block("table", pd.DataFrame({
        "output": t["output"], "nominal": [fmt(v) for v in t["nominal"]],
        "bias": [two_digits(v) for v in t["bias"]], "u": [two_digits(v) for v in t["u"]],
        "u (LPU)": [two_digits(v) for v in u_lpu],
        f"U ({p})": [counts(v, d, lim) for v, d, lim in zip(t["U"], drag, t["limit"])],
        "requirement (U)": ["—" if v != v else f"{fmt(v / COUNT)} counts" if d else fmt(v)
                            for v, d in zip(t["limit"], drag)],
        "leading inputs (Sobol ST)": t["leading_inputs"]})))
    budgets: list[Block] = []
    if result.lpu is not None:
        for out in [o for o in t["output"] if st.limit_of_output(o) is not None
                    and o in result.lpu.budgets]:
            bud = result.lpu.budget(out).reset_index()
            budgets.append(Block("paragraph", f"Uncertainty budget of **{lit(out)}** (LPU, "
                                 "JCGM 100; u of each term in its SI unit):"))
            budgets.append(Block("table", pd.DataFrame({
                "term": bud["term"], "sensitivity": [number(v, 3) for v in bud["sensitivity"]],
                "u": [two_digits(v) for v in bud["standard_uncertainty"]],
                "contribution": [number(v, 2) for v in bud["contribution"]],
                "share": [f"{v:.1f} %" for v in bud["share_percent"]]})))
    if budgets:   # details: an appendix of the report
        budgets.insert(0, Block("heading", BUDGETS))
    if c.walls is not None:
        b.append(Block("paragraph", "Wall corrections at the set point (uncorrected: the empty-"
                       "tunnel calibration; corrected: the stream the model sees, which the set "
                       "point matches to full scale):"))
        b.append(Block("table", _walls_view(c.walls, st, p)))
        b.append(Block("figure", "wall_corrections.png", caption=(
            "Wall corrections at the set point: the tunnel's uncorrected value, the corrected "
            f"one with its U ({p}; the corrections' own uncertainty included) and, for the Mach "
            "number, the full-scale value it matches.")))
    if c.scale is not None:
        se = st.measurement.scale_effect
        how = (f"friction line {se.line} with form factor {se.form_factor:g} and wetted ratio "
               f"{se.wetted_ratio:g}" + (f", compared with {', '.join(se.compare)}"
                                          if se.compare else "")
               if se.method == "friction_line" else
               f"a table of C against Re{' and M' if se.mach else ''}" if se.method == "table"
               else "the stated sensitivities") + (
            f"; model form +-{100 * se.uncertainty:g} % of its change to full scale"
            if se.uncertainty else "")
        b.append(Block("paragraph", f"Scale effect ({lit(how)}): the stated coefficients are the "
                       "full-scale values; the tunnel's follow from the Reynolds and Mach numbers "
                       "of each trial. Tunnel value less full-scale value (the bias of taking the "
                       "one for the other, with its uncertainty: data reduction, the scatter of "
                       "the achieved Reynolds number and the model form):"))
        b.append(Block("table", rounded(c.scale)))
    e = result.extrapolation
    if e is not None:
        pe = f"{100 * e.probability:g} %"
        b.append(Block("paragraph", f"Extrapolation of the split-test plan to full scale "
                       f"({lit(e.law)}; {e.trials} simulated tests, systematic errors shared by "
                       "the runs of a test, random errors drawn anew in each run): the drag of "
                       "the runs at the matched primary group fitted against the law's regressor "
                       f"and read at Re = {number(e.reynolds_full_scale, 4)} (extrapolation ratio "
                       f"{e.ratio:.3g}): C_D = {e.estimate:.5f}, U ({pe}) = {two_digits(e.U)} "
                       f"({two_digits(e.U_counts)} counts) about the true full-scale value, bias "
                       f"{two_digits(e.bias)}."))
        b.append(Block("table", rounded(e.runs)))
        if e.notes:
            b.append(Block("bullets", [lit(n[0].upper() + n[1:] + ".") for n in e.notes]))
        b.append(Block("figure", "extrapolation.png", caption=(
            "Drag coefficient against the Reynolds number: the planned runs (mean and U of the "
            "reduced drag), the fitted law, the extrapolated value with the interval of the true "
            "full-scale value, and the stated full-scale value.")))
        b += _runs_for_blocks(e)
    if c.utilisation is not None:
        b.append(Block("paragraph", f"Balance utilisation at the set point ({lit(m.balance)}, "
                       f"load margin {100 * m.load_margin:g} %):"))
        u = c.utilisation
        moment = ["moment" in str(x) for x in u["component"]]
        b.append(Block("table", pd.DataFrame({
            "component": [str(x).replace("_", " ") for x in u["component"]],
            "expected load": [load_text(float(v), k) for v, k in zip(u["load"], moment)],
            "capacity": [load_text(float(v), k) for v, k in zip(u["capacity"], moment)],
            "utilisation": [f"{100 * float(v):.0f} %" for v in u["utilisation"]],
            "status": u["status"]})))
        b.append(Block("bullets", [lit(n) for n in c.notes] + [LOAD_CAUTION]))
    a = result.allocation
    if a is not None and m.options:
        b.append(Block("paragraph", f"Balance chosen by the allocation: {lit(a.balance) or 'none'}"
                       + (". Not candidates (capacity with the margin): "
                          + "; ".join(lit(x) for x in a.excluded_balances)
                          if a.excluded_balances else "") + "."))
    if c.chart is not None:
        b.append(Block("figure", "pretest_chart.png", caption=(
            f"Pre-test chart: U ({c.chart.trials} trials on common random numbers; at the "
            "probability of the requirement on the coefficient, else the run's) of the drag and "
            "lift coefficients against the dynamic pressure, for each balance.")))
    if c.trade is not None:
        b.append(Block("paragraph", f"Model-size trade (the set point solved again for each "
                       f"size; U ({p}) on common random numbers):"))
        b.append(Block("table", _trade_view(c.trade, result.study)))
    return b + budgets


def _trade_view(trade: pd.DataFrame, study) -> pd.DataFrame:
    """The model-size trade with human headers, in the study's units, rounded to what the
    choice of a size needs (U of the drag in counts, shares in %)."""
    shown = dict(study.display_units)

    def q(col: str, si: str) -> tuple[str, list[str]]:
        vals = [in_display_units(float(v), si, shown) for v in trade[col]]
        unit = vals[0][1] if vals else si
        return f"{col.replace('_', ' ')} [{unit}]", [number(v, 4) for v, _ in vals]

    cols: dict[str, list[str]] = {}
    name, vals = q("model_length", "m")
    cols["model reference length" + name[len("model length"):]] = vals
    cols["scale"] = [f"1:{1 / v:.3g}" for v in trade["scale"]]
    for col, si in (("stagnation_pressure", "Pa"), ("speed", "m/s")):
        if col in trade:
            name, vals = q(col, si)
            cols[name] = vals
    cols["feasible"] = ["yes" if v else "no" for v in trade["feasible"]]
    cols["Re ratio (model / full scale)"] = [f"{v:.3g}" for v in trade["reynolds_ratio"]]
    cols["blockage"] = [f"{100 * v:.2g} %" if v == v else "n/a" for v in trade["blockage"]]
    name, vals = q("dynamic_pressure", "Pa")
    cols[name] = vals
    cols["largest balance utilisation"] = [f"{100 * v:.0f} %" for v in trade["largest_utilisation"]]
    for col in trade.columns:
        if col == "U_drag_coefficient_counts":
            cols["U of CD [counts]"] = [two_digits(v) for v in trade[col]]
        elif col.startswith("U_") and col != "U_drag_coefficient":
            cols[f"U of {col[2:].replace('_', ' ')}"] = [two_digits(v) for v in trade[col]]
        elif col == "drag_bias_to_full_scale":
            cols["drag bias to full scale [counts]"] = [f"{v / COUNT:+.3g}" for v in trade[col]]
    return pd.DataFrame(cols)


def _walls_view(walls: pd.DataFrame, study, p: str) -> pd.DataFrame:
    """The wall corrections in the study's units (an angle in degrees), each value to the digit
    of the U of the corrected value (JCGM 100 7.2.6), four digits where there is no U."""
    rows = []
    for _, r in walls.iterrows():
        vals = [float(r[c]) for c in ("uncorrected", "correction", "corrected", "U")]
        unit = str(r["unit"])
        if unit == "rad":
            vals, unit = [math.degrees(v) for v in vals], "°"
        elif unit == "Pa":   # the correction and U are differences: no offset in a pressure unit
            shown = [in_display_units(v, unit, dict(study.display_units)) for v in vals]
            vals, unit = [v for v, _ in shown], shown[0][1]
        U = vals[3]
        ok = math.isfinite(U) and U > 0.0
        text = [("n/a" if not math.isfinite(v) else with_uncertainty(v, U)[0] if ok
                 else number(v, 4)) for v in vals[:3]]
        rows.append((r["quantity"], *text, "" if unit == "1" else unit,
                     two_digits(U) if ok else "n/a"))
    return pd.DataFrame(rows, columns=["quantity", "uncorrected", "correction", "corrected",
                                       "unit", f"U ({p}) of the corrected value"])
