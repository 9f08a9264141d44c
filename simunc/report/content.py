"""Report content as a list of blocks, shared by the Markdown and HTML writers."""

from __future__ import annotations

import platform
from dataclasses import replace

import numpy as np
import pandas as pd

from simunc import __version__
from simunc.report import coefficients, decisions, matrix
from simunc.report.blocks import (
    Block,
    achieved,
    allocation_changes,
    cost_text,
    displayed,
    engineering,
    fmt,
    number,
    requirement_label,
)
from simunc.report.blocks import table as _table
from simunc.report.figures import histogram_files
from simunc.report.text import lit, two_digits, unmarked, with_uncertainty
from simunc.study.catalogue import describe_output
from simunc.similitude.setpoint import MATCHED
from simunc.study.written import statement
from simunc.units import quantity_text

SAFETY = [
    "Pressurised facilities store a great deal of energy in the gas: run only inside the "
    "facility's rated pressure envelope, under its pressure-equipment code and its own "
    "operating and safety rules.",
    "Model, balance and support loads grow with the dynamic pressure: at this set point "
    "q = {q} kPa. Rating the model and its support for those loads, with the margins the "
    "facility demands, is the job of the responsible licensed engineers.",
    "Large volumes of pressurised or cryogenic gas (nitrogen in particular) can displace oxygen "
    "in enclosed spaces: follow the facility's oxygen-monitoring and entry rules.",
    "simunc gives planning estimates, not certification. Where this report and the facility's "
    "safety rules, codes or licensed engineering practice differ, those prevail.",
]


def _property_scope(targets) -> str:
    """Where a property-model input acts: the facility state, the full-scale state or both."""
    fac = any(t in ("viscosity_model", "density_model") for t in targets)
    full = any(t in ("full_scale_viscosity_model", "full_scale_density_model") for t in targets)
    if fac and full:
        return ("the facility and the full-scale states, one shared draw (a common-mode error "
                "that cancels in the ratio as far as the two states share the model)")
    return "the facility state only" if fac else ("the full-scale state only" if full else "")


def _small(v: float) -> float:
    """A value that is zero but for rounding (a matched difference of 1e-16) as 0."""
    return 0.0 if abs(v) < 1e-12 else v


def _state_line(st, o) -> str:
    """The set point in one sentence, in the units the study writes (bar, °C, mm)."""
    def q(key: str, si: str, digits: int = 5) -> str:
        return quantity_text(float(o[key]), si, st.display_units, digits)

    scale = st.full_scale.reference_length / o["model_length"]
    model = f"model reference length {q('model_length', 'm')} (scale 1:{scale:.4g})"
    if st.kind == "gas":
        walls = (f" (the tunnel set to Mach {o['mach_uncorrected']:.4f}, corrected for the walls)"
                 if "mach_uncorrected" in o else "")
        return (f"Stagnation pressure {q('stagnation_pressure', 'Pa')}, stagnation temperature "
                f"{q('stagnation_temperature', 'K')}, Mach {o['mach_model']:.4f}{walls} (speed "
                f"{q('speed', 'm/s', 4)}), {model}.")
    if "speed_uncorrected" in o:
        model += f"; the speed set to {q('speed_uncorrected', 'm/s', 4)}, corrected for the walls"
    return (f"Speed {q('speed', 'm/s', 4)}, static pressure {q('static_pressure', 'Pa', 4)}, "
            f"temperature {q('static_temperature', 'K')}, {model}.")


#: The state of a planned run shown in the split-test plan, with its SI unit.
RUN_STATE = (("stagnation_pressure", "Pa"), ("stagnation_temperature", "K"), ("mach", "1"),
             ("speed", "m/s"), ("static_pressure", "Pa"), ("temperature", "K"),
             ("model_length", "m"))


def verdict_lines(result) -> list[str]:
    """The first screen: is the set point reachable and matched, how likely the match holds,
    each requirement as written with what it achieves, what to tighten first and what it buys,
    the allocation and its cost."""
    sp, st = result.setpoint, result.study
    lines = [("**Set point reachable and matched.**" if sp.feasible else
              "**Set point NOT reachable with every group matched**: the nearest achievable "
              "point is analysed (see the split-test plan and the facility limits)."),
             f"Probability that every matched group stays in its band: "
             f"**{100 * result.conformity['all']:.1f} %** ({result.trials} trials)."]
    lines.insert(1, "Set point: " + _state_line(st, sp.outputs)[0].lower()
                 + _state_line(st, sp.outputs)[1:])
    if not sp.feasible:
        said = [m for m in sp.messages if m.startswith(
            ("Matching every", "The given ", "The solved ", "The facility state"))][:1]
        short = [band for band in st.bands if abs(sp.mismatch.get(band.group, 0.0)) >= 1e-6]
        if short:
            said.append("Short of the match at this point: " + "; ".join(
                f"{band.output} = {sp.outputs[band.output]:+.2g}" if band.is_difference else
                f"{band.output} = {sp.outputs[band.output]:.3g} "
                f"({100 * (sp.outputs[band.output] - 1):+.0f} %)" for band in short))
        lines[2:2] = [lit(m.rstrip(".")) + "." for m in said]
    plan = [] if result.extrapolation is None else list(result.extrapolation.checks)
    if result.requirement_checks is not None or plan:
        checks = list(result.requirement_checks or []) + plan
        lines.append(f"Requirements at the written tolerances: **{sum(c.met for c in checks)} "
                     f"of {len(checks)} met**" + (" (the last judged on the split-test plan)"
                                                  if len(plan) == 1 else
                                                  f" (the last {len(plan)} judged on the split-test "
                                                  "plan)" if plan else "") + ".")
    if result.requirement_checks is not None:
        for c in result.requirement_checks:
            lines.append(f"Requirement {requirement_label(c.key)} "
                         f"{'met' if c.met else '**NOT met**'}: {lit(c.text)} — achieved "
                         f"{achieved(c, st)}.")
    if st.plan_requirements:   # judged on the runs of the split-test plan, not on one point
        lines += coefficients.extrapolation_lines(result)
    lines += matrix.summary_lines(result)[1:]   # every requirement at every matrix point
    t = result.tightening
    if sp.feasible and t is not None and len(t) and t["controllable"].any():
        name = t[t["controllable"]].index[0]
        buys = []   # what halving it does to each requirement on U not met (2u before -> after)
        for c in result.requirement_checks or []:
            col = f"U_k2_halved_{c.output}"
            if not c.met and c.kind == "expanded_uncertainty" and col in t.columns:
                after = float(t.loc[name, col])
                before = after - float(t.loc[name, f"delta_U_k2_{c.output}"])
                shown = [achieved(replace(c, value=v), st).removeprefix("U = ")
                         for v in (before, after)]
                buys.append(f"2u of {lit(c.output)} {shown[0]} → {shown[1]} (requirement "
                            f"{requirement_label(c.key)} not met)")
        lines.append(f"Tighten first: **{lit(name)}** (halving its tolerance cuts 2u by "
                     f"{two_digits(float(t.loc[name, 'gain_bands']))} of a band half-width or "
                     "requirement limit" + (": " + "; ".join(buys) if buys else "") + ").")
    a = result.allocation
    if a is not None:
        lines.append(f"No allocation meets the requirements: {lit(a.message)}." if a.message
                     else _allocation_line(result, a))
        if not a.message and st.bands and a.conformity < min(0.95, result.conformity["all"]) \
                and not any(r.kind == "conformity" for r in st.requirements):
            lines.append(f"**Warning**: at the allocation every matched group stays in its band "
                         f"with P = {100 * a.conformity:.1f} % only ({100 * result.conformity['all']:.1f} "
                         "% as written): no requirement holds the match. Add a requirement "
                         "`conformity = \"95 %\"` to keep it.")
    # the correlation note concerns the Sobol indices of the appendix, not the verdict
    return lines + [f"Warning: {lit(w)}" for w in result.warnings
                    if not w.startswith("The study correlates inputs")]


def _allocation_line(result, a) -> str:
    """The allocation in one line: its cost (and the written one), what it changes."""
    cost = f"cost **{cost_text(a.cost)}**" + (
        f" (as written {cost_text(a.cost_written)})" if a.cost_written is not None else "")
    changed = allocation_changes(a)
    return (f"Least-cost allocation: {cost}, fresh Monte Carlo check "
            f"{'passed' if a.verified else 'FAILED'}"
            + (f"; it asks for {'; '.join(changed[:4])}" + ("; …" if len(changed) > 4 else "")
               if changed else "; the tolerances as written already meet every requirement at the "
               "set point") + ".")


#: Sections of the detail kind: after the main sections, as lettered appendices (folded,
#: collapsible, in the HTML report).
APPENDIX = ("Dimensional analysis", "Uncertain inputs", "Achieved groups", coefficients.BUDGETS,
            "GUM uncertainty framework", "Sensitivity", "Ranking details", "Reproducibility")
#: What every appendix heading starts with.
APPENDIX_WORD = "Appendix"


def with_appendix(blocks: list[Block]) -> list[Block]:
    """The blocks with the detail sections (:data:`APPENDIX`) moved after the main ones, in
    their order, their headings lettered ``Appendix A. Uncertain inputs``."""
    head: list[Block] = []
    sections: list[list[Block]] = []
    for blk in blocks:
        if blk.kind == "heading" and blk.level == 2:
            sections.append([blk])
        elif sections:
            sections[-1].append(blk)
        else:
            head.append(blk)

    def detail(sec: list[Block]) -> bool:
        return unmarked(sec[0].content).startswith(APPENDIX)

    main = [blk for sec in sections if not detail(sec) for blk in sec]
    tail = []
    for letter, sec in zip("ABCDEFGHIJKLMNOPQRSTUVWXYZ", [x for x in sections if detail(x)]):
        tail += [replace(sec[0], content=f"{APPENDIX_WORD} {letter}. {sec[0].content}")] + sec[1:]
    return head + main + tail


def build(result) -> list[Block]:
    st, sp = result.study, result.setpoint
    fs, fac = st.full_scale, st.facility
    o = sp.outputs
    b: list[Block] = [Block("heading", lit(st.title), 1)]
    if st.description:
        b.append(Block("paragraph", lit(st.description)))

    b += [Block("heading", "Verdict"), Block("bullets", verdict_lines(result))]
    verdict = "achievable and matched" if sp.feasible else "not every group matched (see below)"
    conf = result.conformity
    solved = ", ".join(k.replace("_", " ") for k in sp.solve_for) or "nothing"
    b += [Block("heading", "Summary"), Block("bullets", [
        f"Facility: {lit(fac.name)}; working fluid {lit(sp.fluid or fac.gas.name)}.",
        f"Set point ({solved} solved, {sp.method}): {verdict}.",
        _state_line(st, o),
        "Matched groups at the set point: " + "; ".join(
            f"{lit(band.output)} = {_small(o[band.output]):.5g}" for band in st.bands) + ".",
        f"Probability that every matched group lies inside its tolerance band: "
        f"{100 * conf['all']:.2f} % ({result.trials} trials).",
    ] + coefficients.summary_lines(result)
        + ([] if st.plan_requirements else coefficients.extrapolation_lines(result))
        + matrix.summary_lines(result)[:1]
        + (["Tighter tolerances cannot make up the set point's shortfall; see the split-test plan "
            "and the facility limits."] if not sp.feasible else [])
        + [f"Note: {lit(w)}" for w in result.warnings
           if w.startswith("The study correlates inputs")])]

    b.append(Block("heading", "Full-scale condition"))
    rows = [("fluid", fs.fluid.name, ""),
            ("static pressure", fs.static_pressure, "Pa"),
            ("static temperature", fs.static_temperature, "K"),
            ("Mach number", o["mach_full_scale"], "1"),
            ("speed", o["full_scale_speed"], "m/s"),
            ("reference length", fs.reference_length, "m")]
    if fs.altitude is not None:
        rows[1:1] = [("geometric altitude (standard atmosphere)", fs.altitude, "m"),
                     ("temperature offset", fs.temperature_offset, "K")]
    if fs.depth is not None:
        rows[1:1] = [("depth", fs.depth, "m")]
    if fs.frequency is not None:
        rows.append(("frequency", fs.frequency, "Hz"))
    rows += [(describe_output(f"{band.group}_full_scale")[1], o[f"{band.group}_full_scale"], "1")
             for band in st.bands if f"{band.group}_full_scale" in o]
    rows = engineering(rows, st, skip=("temperature offset",))
    b.append(Block("table", _table(pd.DataFrame(rows, columns=["quantity", "value", "unit"]))))

    b.append(Block("heading", "Matched set point"))
    if st.kind == "gas":
        rows = [("stagnation pressure p0", o["stagnation_pressure"], "Pa"),
                ("stagnation temperature T0", o["stagnation_temperature"], "K"),
                ("Mach number", o["mach_model"], "1")]
    else:
        rows = [("speed U", o["speed"], "m/s"), ("static pressure p", o["static_pressure"], "Pa"),
                ("temperature T", o["static_temperature"], "K")]
    rows += [("model reference length", o["model_length"], "m"),
             ("model scale", o["model_length"] / fs.reference_length, "1")]
    if "frequency" in o:
        rows.append(("model frequency", o["frequency"], "Hz"))
    if st.kind == "gas":
        rows += [("static pressure p", o["static_pressure"], "Pa"),
                 ("static temperature T", o["static_temperature"], "K"),
                 ("speed U", o["speed"], "m/s")]
    rows += [("density rho", o["density"], "kg/m^3"),
             ("viscosity mu", o["viscosity"], "Pa s"),
             ("dynamic pressure q", o["dynamic_pressure"], "Pa")]
    for band in st.bands:
        rows += [(describe_output(k)[1], o[k], "1") for k in (f"{band.group}_model", band.output)
                 if k in o]
    rows = engineering(rows, st)
    b.append(Block("table", _table(pd.DataFrame(rows, columns=["quantity", "value", "unit"]))))
    if sp.limits:
        lim = pd.DataFrame(engineering(
            [(x.quantity.replace("_", " "), x.side, x.bound, x.value, x.unit,
              "VIOLATED" if not x.ok else ("binding" if x.active and not sp.feasible else "ok"))
             for x in sp.limits], st, columns=(2, 3), unit_column=4),
            columns=["quantity", "limit", "bound", "set point", "unit", "status"])
        b.append(Block("paragraph", "Facility limits:"))
        b.append(Block("table", _table(lim)))
    if sp.mismatch:
        b.append(Block("paragraph", "Mismatch of each solved group, in tolerance bands "
                       "(ln ratio / tolerance; difference / tolerance for the Mach number):"))
        b.append(Block("table", _table(pd.DataFrame(
            [(g, 0.0 if abs(v) < MATCHED else v) for g, v in sp.mismatch.items()],
            columns=["group", "mismatch (bands)"]))))
    if sp.alternatives:
        b.append(Block("paragraph", "Candidate working fluids:"))
        b.append(Block("table", _table(pd.DataFrame(
            [(a["fluid"], a["feasible"], "; ".join(f"{g} {v:+.3g}" for g, v in a["mismatch"].items()))
             for a in sp.alternatives], columns=["fluid", "feasible", "mismatch (bands)"]))))
    if sp.messages:
        b.append(Block("bullets", [lit(m) for m in sp.messages]))

    if result.envelope is not None:
        b.append(Block("figure", "envelope_map.png", caption=(
            "Cavitation numbers the facility reaches against its speed" if
            result.envelope.cavitation is not None else "Reynolds numbers the facility reaches "
            "against the Mach (or Froude) number") + ", full-scale target, set point and the "
            "planned runs."))
    tp = result.test_plan
    if tp is not None and tp.runs:
        b.append(Block("heading", "Split-test plan"))
        b.append(Block("paragraph", f"The facility cannot match the Reynolds number with the "
                       f"{tp.primary.capitalize()} number matched. Runs that bracket the full-scale condition:"))
        run_rows = []
        for r in tp.runs:
            row = {"run": r.label, "purpose": r.purpose}
            for k, si in RUN_STATE:
                if k in r.state and r.state[k] is not None:
                    value, unit = engineering([(k, r.state[k], si)], st)[0][1:]
                    row[f"{k.replace('_', ' ')} [{unit}]" if unit != "1" else k.replace(
                        "_", " ")] = value
            row["Re ratio (model / full scale)"] = r.outputs["reynolds_ratio"]
            key = "mach_difference" if tp.primary == "mach" else f"{tp.primary}_ratio"
            row[describe_output(key)[1].split(":")[0].split(" ")[0] + (
                " difference" if tp.primary == "mach" else " ratio")] = r.outputs[key]
            run_rows.append(row)
        b.append(Block("table", _table(pd.DataFrame(run_rows))))
        b.append(Block("bullets", [lit(n) for n in tp.notes]))

    if result.pi_groups:
        b.append(Block("heading", "Dimensional analysis (Buckingham Pi)"))
        da = st.dimensional_analysis
        b.append(Block("paragraph", "Variables: " + ", ".join(f"{lit(k)} [{lit(v)}]" for k, v in da.variables.items())
                       + (f"; repeating: {lit(', '.join(da.repeating))}." if da.repeating else ".")))
        b.append(Block("table", pd.DataFrame([(g.name, g.formula) for g in result.pi_groups],
                                             columns=["group", "product of powers"])))

    b.append(Block("heading", "Uncertain inputs"))
    if result.inputs:
        input_rows = []
        for i in result.inputs:
            (_, u_in), unit = displayed([0.0, i.standard_uncertainty], i.unit, st)
            input_rows.append((i.name, ", ".join(t for t, _ in i.effects),
                               f"{i.kind} ({i.component})", statement(i.spec), two_digits(u_in),
                               unit))
        b.append(Block("table", pd.DataFrame(
            input_rows, columns=["input", "perturbs", "distribution", "as written", "u", "unit"])))
        b.append(Block("paragraph", "Measurement model: true value = set point - indication error "
                       "+ control deviation; a size in % is a fraction of the reading at the set point."))
    else:
        b.append(Block("paragraph", "The study has no uncertain inputs."))
    fluid = next((f for f in fac.fluids if f.name == sp.fluid), fac.gas)
    stated = ", ".join(f"{k.replace('_', ' ')} {100 * float(v):.3g} %"
                       for k, v in fluid.stated_uncertainty.items())
    b.append(Block("paragraph", f"Property model ({lit(fluid.name)}): {fluid.description}. Stated "
                   f"relative standard uncertainty: {stated}. Include it with an input "
                   "perturbs = \"viscosity_model\" (or \"density_model\") and "
                   "standard_uncertainty = \"stated\"."))
    scopes = [f"{lit(i.name)}: {_property_scope(i.targets)}" for i in result.inputs
              if _property_scope(i.targets)]
    if scopes:
        b.append(Block("paragraph", "Property-model inputs act on: " + "; ".join(scopes) + "."))
    corrected = [f"{lit(i.name)} ({lit(i.spec.text.split(', correction ')[-1])})" for i in result.inputs
                 if i.spec.correction]
    if corrected:
        b.append(Block("paragraph", "Known corrections applied (JCGM 100 3.2.4), in the set point "
                       "and in every trial, with the input's uncertainty about them: "
                       + "; ".join(corrected) + "."))

    p = 100 * result.coverage_probability
    keys = list(dict.fromkeys([band.output for band in st.bands] + [
        r.output for r in st.requirements if r.output] + list(st.coefficient_outputs)))
    keys = [k for k in keys if k in result.statistics.index]
    if keys:
        b.append(Block("heading", "Key outputs"))
        key_rows = []
        for k in keys:
            r = result.statistics.loc[k]
            (mean_v, u_v, low_v, high_v), unit = displayed(
                [float(r["mean"]), float(r["standard_uncertainty"]), float(r["low"]),
                 float(r["high"])], r["unit"], st)
            mean, u = with_uncertainty(mean_v, u_v)
            low, high = (with_uncertainty(v, u_v)[0] for v in (low_v, high_v))
            key_rows.append((describe_output(k)[1], unit, mean, u, f"[{low}, {high}]"))
        b.append(Block("paragraph", f"The matched groups, the outputs a requirement limits and "
                       f"the measured coefficients: mean and standard uncertainty u rounded as "
                       f"JCGM 100 7.2.6 asks (u to two digits), and the {p:g} % coverage "
                       "interval. Every output is in the appendix of achieved groups "
                       "and flow quantities. Throughout the report U "
                       f"is the expanded uncertainty, the half-length of the probabilistically "
                       f"symmetric {p:g} % coverage interval (JCGM 101, 7.7), and 2u twice the "
                       "standard uncertainty; a certificate's U is at the k it states."))
        b.append(Block("table", pd.DataFrame(key_rows, columns=[
            "quantity", "unit", "mean", "u", f"{p:g} % interval"])))
    b.append(Block("heading", "Achieved groups and flow quantities (Monte Carlo, JCGM 101)"))
    s = result.statistics
    values = ("nominal", "mean", "low", "high", "shortest_low", "shortest_high")
    stat_rows = []
    for k, r in s.iterrows():
        u_k = float(r["standard_uncertainty"])
        if u_k <= 1e-12 * abs(float(r["mean"])):   # round-off of a constant output, not a spread
            u_k = 0.0
        # every value to the digit of its u, u to two digits (JCGM 100 7.2.6)
        shown = [with_uncertainty(float(r[c]), u_k)[0] for c in values]
        k_factor = float(r["coverage_factor"])
        stat_rows.append([describe_output(k)[1], r["unit"], *shown[:2],
                          with_uncertainty(0.0, u_k)[1], *shown[2:],
                          f"{k_factor:.3g}" if np.isfinite(k_factor) else "n/a"])
    b.append(Block("paragraph", "Each value to the last digit of its standard uncertainty u, u "
                   "to two significant digits (JCGM 100 7.2.6); k is the half-length of the "
                   "interval over u."))
    b.append(Block("table", pd.DataFrame(stat_rows, columns=[
        "quantity", "unit", "nominal", "mean", "u", f"{p:g} % low", f"{p:g} % high",
        "shortest low", "shortest high", "k"])))
    eng = result.engine
    how = (f"adaptive (JCGM 101, 7.9): {eng.adaptive.batches} batches of {eng.adaptive.batch_size}, "
           f"{'converged' if eng.adaptive.converged else 'NOT converged'} to "
           f"{eng.adaptive.n_digits} significant digits of u" if eng.adaptive is not None
           else "fixed number of trials")
    b.append(Block("paragraph", f"u is the standard uncertainty; the intervals are the "
                   f"probabilistically symmetric and the shortest {p:g} % coverage intervals and k "
                   f"the implied coverage factor, from {result.trials} trials ({eng.method} "
                   f"sampling, {how}; "
                   + ("exact sample quantiles" if result.output_values is not None
                      else "quantiles from the streaming histogram") + ")."))
    band_rows = [(band.group, band.output, f"±{band.tolerance:.6g} about {band.centre:g}",
                  fmt(100 * conf[band.group]) + " %") for band in st.bands]
    band_rows.append(("all matched groups", "", "", fmt(100 * conf["all"]) + " %"))
    b.append(Block("paragraph", "Conformity probability (share of trials inside the band):"))
    b.append(Block("table", pd.DataFrame(band_rows, columns=["group", "output", "band", "probability"])))
    for output, name in histogram_files(result).items():
        what = " and ".join(w for w, on in (
            ("tolerance band", any(band.output == output for band in st.bands)),
            ("requirement limits", any(r.output == output for r in st.requirements))) if on)
        b.append(Block("figure", name, caption=lit(describe_output(output)[1]) + f": trials, "
                       f"{what}, {p:g} % coverage interval and nominal value."))

    if result.validation is not None:
        b.append(Block("heading", "GUM uncertainty framework against Monte Carlo (JCGM 101, 8)"))
        keys = [band.output for band in st.bands if band.output in result.validation.index]
        keys += [k for k in ("reynolds_model", "dynamic_pressure", "speed")
                 if k in result.validation.index and k not in keys]
        v, est = result.validation.loc[keys], result.lpu.estimates.loc[keys]
        gum_rows = []
        for k in keys:
            r, delta = v.loc[k], float(v.loc[k, "delta"])
            # endpoints one digit finer than delta, the differences to two digits
            ends = [with_uncertainty(float(r[c]), 10 * delta)[0]
                    for c in ("guf_low", "guf_high", "mc_low", "mc_high")]
            gum_rows.append([k, number(float(est.loc[k, "standard_uncertainty"]), 3),
                         number(float(result.statistics.loc[k, "standard_uncertainty"]), 3),
                         *ends, *(two_digits(float(r[c])) for c in ("d_low", "d_high", "delta",
                                                                     "spread")),
                         r["verdict"], fmt(r["trials_needed"])])
        tab = pd.DataFrame(gum_rows, columns=[
            "output", "u (LPU)", "u (MC)", "GUF low", "GUF high", "MC low", "MC high", "d_low",
            "d_high", "delta", "2 se (MC)", "verdict", "trials needed"])
        b.append(Block("paragraph", "Law of propagation of uncertainty (first order, sensitivity "
                       "coefficients by central differences, the uncertainties package for the "
                       "covariance algebra) with k from the normal distribution. The GUF interval "
                       "is validated when both endpoint differences d are at most the numerical "
                       "tolerance delta of two significant digits of u, and only judged when the "
                       "Monte Carlo endpoints are stable to delta (twice their standard error at "
                       "most delta, JCGM 101 7.9); otherwise the verdict is inconclusive at this "
                       "number of trials, with the trials that would make it stable."))
        b.append(Block("table", tab))
        if result.components is not None and len(result.components):
            b.append(Block("paragraph", "Systematic (fixed over a test), random (point to point) "
                           "and condition (the spread of the full-scale condition itself, not a "
                           "test error) standard uncertainty of the matched groups, from the LPU "
                           "budget; mixed_variance holds the correlation terms between inputs of "
                           "different categories, so the squares add up to u_combined²:"))
            b.append(Block("table", _table(result.components.reset_index())))
        for k in keys[:2]:
            bud = result.lpu.budget(k).reset_index()
            b.append(Block("paragraph", f"Uncertainty budget of **{lit(k)}** (LPU):"))
            b.append(Block("table", _table(bud[["term", "sensitivity", "standard_uncertainty",
                                                "contribution", "share_percent"]])))

    b += coefficients.coefficient_blocks(result)
    b += matrix.matrix_blocks(result)
    if result.inputs:
        b += decisions.tightening_blocks(result)
        b += decisions.requirement_blocks(result)
        b += decisions.correlated_scaling_blocks(result)
        b += decisions.sweep_blocks(result)
        b += decisions.sensitivity_blocks(result)
        b += decisions.ranking_detail_blocks(result)

    b.append(Block("heading", "Safety"))
    q_kpa = number(o["dynamic_pressure"] / 1e3, 3)
    b.append(Block("bullets", [SAFETY[0], SAFETY[1].format(q=q_kpa),
                               SAFETY[2], SAFETY[3]]))

    b.append(Block("heading", "Reproducibility"))
    b.append(Block("table", pd.DataFrame([
        ("simunc version", __version__), ("study file", st.path), ("study SHA-256", st.sha256),
        ("seed", str(result.seed)), ("trials", str(result.trials)),
        ("Sobol base samples", str(st.run.sobol_base_samples)),
        ("design / verification trials", f"{st.design.trials} / {st.design.verify_trials}"),
        ("random generator", "numpy PCG64"),
        ("Python / numpy", f"{platform.python_version()} / {np.__version__}"),
    ], columns=["item", "value"])))
    return with_appendix(b)
