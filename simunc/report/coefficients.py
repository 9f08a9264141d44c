"""Report blocks of the measured coefficients: data-reduction uncertainty, balance, pre-test chart."""

from __future__ import annotations

import pandas as pd

from simunc.decisions.coefficients import LOAD_CAUTION
from simunc.report.blocks import Block, requirement_label, table
from simunc.report.text import lit, two_digits
from simunc.units import COUNT


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
        value = (f"{two_digits(r['U_counts'])} counts" if out == "drag_coefficient"
                 else two_digits(r["U"]))
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
                f"from {d['reynolds_low']:.3g} to {d['reynolds_high']:.3g}, evenly spaced in "
                f"log10 Re, {int(d['runs_per_level'])} run(s) at each (U = "
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
        b.append(Block("table", table(r.designs)))
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
    limit_counts = t["limit"].where(drag) / COUNT
    est = result.lpu.estimates if result.lpu is not None else None
    u_lpu = [float(est.loc[o, "standard_uncertainty"]) if est is not None and o in est.index
             else float("nan") for o in t["output"]]
    b.append(Block("table", table(pd.DataFrame({
        "output": t["output"], "nominal": t["nominal"], "bias": t["bias"], "u": t["u"],
        "u (LPU)": u_lpu,
        f"U ({p})": t["U"], "U [counts]": t["U_counts"],
        "requirement (U)": t["limit"].where(~drag), "requirement [counts]": limit_counts,
        "leading inputs (Sobol ST)": t["leading_inputs"]}))))
    if result.lpu is not None:
        for out in [o for o in t["output"] if st.limit_of_output(o) is not None
                    and o in result.lpu.budgets]:
            bud = result.lpu.budget(out).reset_index()
            b.append(Block("paragraph", f"Uncertainty budget of **{lit(out)}** (LPU, JCGM 100):"))
            b.append(Block("table", table(bud[["term", "sensitivity", "standard_uncertainty",
                                               "contribution", "share_percent"]])))
    if c.walls is not None:
        b.append(Block("paragraph", "Wall corrections at the set point (uncorrected: the empty-"
                       "tunnel calibration; corrected: the stream the model sees, which the set "
                       "point matches to full scale):"))
        b.append(Block("table", table(c.walls.drop(columns="output").rename(
            columns={"U": f"U ({p}) of the corrected value"}))))
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
        b.append(Block("table", table(c.scale)))
    e = result.extrapolation
    if e is not None:
        pe = f"{100 * e.probability:g} %"
        b.append(Block("paragraph", f"Extrapolation of the split-test plan to full scale "
                       f"({lit(e.law)}; {e.trials} simulated tests, systematic errors shared by "
                       "the runs of a test, random errors drawn anew in each run): the drag of "
                       "the runs at the matched primary group fitted against the law's regressor "
                       f"and read at Re = {e.reynolds_full_scale:.4g} (extrapolation ratio "
                       f"{e.ratio:.3g}): C_D = {e.estimate:.5f}, U ({pe}) = {two_digits(e.U)} "
                       f"({two_digits(e.U_counts)} counts) about the true full-scale value, bias "
                       f"{e.bias:.2g}."))
        b.append(Block("table", table(e.runs)))
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
        b.append(Block("table", table(pd.DataFrame({
            "component": u["component"], "expected load": u["load"], "capacity": u["capacity"],
            "utilisation [%]": 100 * u["utilisation"], "status": u["status"]}))))
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
        b.append(Block("table", table(c.trade)))
    return b
