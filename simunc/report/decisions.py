"""Report blocks of the decision part: sensitivity, tightening, requirements, sweeps."""

from __future__ import annotations

import pandas as pd

from simunc.decisions.requirements import LOOSEN
from simunc.report.blocks import Block, achieved, cost_text, fmt, requirement_label, table
from simunc.report.text import lit, two_digits, with_uncertainty
from simunc.study.written import statement
from simunc.units import number


def sensitivity_blocks(result) -> list[Block]:
    st = result.study
    b = [Block("heading", "Sensitivity (Sobol indices and uncertainty budget)")]
    sr = result.sobol_result
    b.append(Block("paragraph", f"First-order S1 and total ST Sobol indices ({st.run.sobol_base_samples} "
                   "base samples, Saltelli design on a scrambled Sobol sequence, 95 % bootstrap "
                   "half-widths in the *_conf columns; each index to the digit of its half-width), "
                   "beside the GUM budget of the same output: sensitivity coefficient c, standard "
                   "uncertainty u(x) (both in SI units) and the share of the combined variance "
                   "c² u² / u_c² (JCGM 100, 5.1)."))
    if st.correlation is not None:
        b.append(Block("paragraph", "**The study correlates inputs.** Sobol indices assume "
                       "independent inputs; the Shapley effects below account for the dependence "
                       "and drive the ranking of what to control more tightly."))
    for band in st.bands:
        out = band.output
        t = result.sobol[out].copy()
        if result.lpu is not None and out in result.lpu.budgets:
            bud = result.lpu.budget(out)
            rows = bud[bud["kind"] == "input"]
            t["c"] = rows["sensitivity"].reindex(t.index)
            t["u(x)"] = rows["standard_uncertainty"].reindex(t.index)
            t["budget share %"] = rows["share_percent"].reindex(t.index)
            corr = bud[bud["kind"] == "correlation"]
        else:
            corr = pd.DataFrame()
        b.append(Block("paragraph", f"**{lit(out)}**"))
        b.append(Block("table", _indices(t.reset_index())))
        if len(corr):
            b.append(Block("paragraph", "Correlation terms of the budget: " + "; ".join(
                f"{lit(k)}: {two_digits(v)} %" for k, v in corr["share_percent"].items()) + "."))
    b.append(Block("figure", "sobol_indices.png", caption="Sobol indices of the matched groups"
                   + (" and of the measured coefficients a requirement limits."
                      if any(st.limit_of_output(o) is not None for o in st.coefficient_outputs)
                      else ".")))
    if sr is not None and sr.second_order is not None:
        b.append(Block("paragraph", "Second-order indices S2 (interactions of two inputs), only "
                       "those larger than their 95 % bootstrap half-width S2_conf (the others "
                       "are not resolved from zero at this number of base samples):"))
        for out, t in sr.second_order.items():
            t = t.reset_index()
            t = t[t["S2"].abs() > t["S2_conf"]]
            t = t.reindex(t["S2"].abs().sort_values(ascending=False).index).head(10)
            if not len(t):
                b.append(Block("paragraph", f"**{lit(out)}**: no interaction resolved."))
                continue
            b.append(Block("paragraph", f"**{lit(out)}** (largest ten)"))
            b.append(Block("table", _indices(t)))
    if sr is not None and sr.groups is not None:
        b.append(Block("paragraph", "Grouped indices (closed first-order and total index of each "
                       "group): " + "; ".join(f"{lit(g)} = {lit(', '.join(m))}" for g, m in
                                               sr.group_members.items() if len(m) > 1) + "."))
        for out, t in sr.groups.items():
            b.append(Block("paragraph", f"**{lit(out)}**"))
            b.append(Block("table", _indices(t.reset_index())))
    if result.shapley is not None:
        b.append(Block("paragraph", "Shapley effects under the Gaussian copula of the study "
                       "(Song, Nelson & Staum 2016): each input's share of Var(y), dependence "
                       "included (they add up to 1); first_order_full = Var(E[y | x_i]) / Var(y) "
                       "is the share removed if the input were known exactly, total_full = "
                       "E[Var(y | x_~i)] / Var(y)."))
        for out, t in result.shapley.items():
            b.append(Block("paragraph", f"**{lit(out)}**"))
            b.append(Block("table", _indices(t.reset_index())))
    return b


def _indices(t: pd.DataFrame) -> pd.DataFrame:
    """A table of sensitivity indices as read: an index with a ``*_conf`` column to the digit of
    its 95 % half-width (the half-width to two digits, JCGM 100 7.2.6), the GUM budget's c to
    three digits, u(x) to two and the budget share in %; other numbers to three digits."""
    out = pd.DataFrame(index=t.index)
    for col in t.columns:
        v = t[col]
        if not pd.api.types.is_numeric_dtype(v) or pd.api.types.is_bool_dtype(v):
            out[col] = [fmt(x) for x in v]
        elif col.endswith("_conf"):
            out[col] = [two_digits(x) if x > 0 else fmt(x) for x in v]
        elif f"{col}_conf" in t.columns:
            out[col] = [with_uncertainty(float(x), float(h))[0] if h > 0 else fmt(float(x))
                        for x, h in zip(v, t[f"{col}_conf"])]
        elif col == "u(x)":
            out[col] = [two_digits(x) for x in v]
        elif col == "budget share %":
            out[col] = [_pct(x) for x in v]
        else:
            out[col] = [fmt(float(x)) if abs(x) < 1e-13 else number(float(x), 3) for x in v]
    return out


def _pct(v) -> str:
    """A share in % to two significant digits (``<0.01`` below)."""
    v = float(v)
    if not pd.notna(v):
        return "n/a"
    return "0" if v == 0.0 else ("<0.01" if abs(v) < 0.01 else two_digits(v))


def ranking_table(result) -> pd.DataFrame | None:
    """One ranking of the inputs: what each brings, what halving it buys, whether it is
    controllable (the tightening order: facility instruments and controls first)."""
    st, t, r = result.study, result.tightening, result.ranking
    if t is None or not len(t):
        return None
    limited = [o for o in st.coefficient_outputs if st.limit_of_output(o) is not None]
    outs = [band.output for band in st.bands] + limited
    rows = []
    for name in t.index:
        row = {"rank": int(t.loc[name, "rank"]), "input": name,
               "controllable": "yes" if t.loc[name, "controllable"] else "no"}
        for out in outs:
            row[f"share of Var({out}) %"] = _pct(t.loc[name, f"variance_removed_percent_{out}"])
        if r is not None and name in r.index and "largest_band_share" in r.columns:
            row["2u it brings / tolerance"] = two_digits(float(r.loc[name, "largest_band_share"]))
        row["halving it: Δ(2u) / tolerance"] = two_digits(float(t.loc[name, "gain_bands"]))
        row["halving it: ΔP(match), points"] = _pct(100.0 * float(t.loc[name, "delta_conformity"]))
        rows.append(row)
    return pd.DataFrame(rows)


def tightening_blocks(result) -> list[Block]:
    st = result.study
    b = [Block("heading", "Which input to control more tightly")]
    t = result.tightening
    limited = [o for o in st.coefficient_outputs if st.limit_of_output(o) is not None]
    if t is not None and len(t):
        src = ("the Shapley first-order effect, dependence included" if result.shapley is not None
               else "the Sobol first-order index, which ignores the correlations"
               if st.correlation is not None else "the Sobol first-order index")
        basis = ("the Shapley effect" if st.correlation is not None else "the Sobol total index")
        b.append(Block("paragraph", "One ranking of the inputs. **share of Var** is the share of "
                       f"each output's variance removed if the input were known exactly ({src}); "
                       "**2u it brings / tolerance** twice the standard uncertainty the input "
                       f"brings to a matched group ({basis}), over that group's tolerance "
                       "half-width" + (" or a coefficient's requirement limit" if limited else "")
                       + ", the largest over the outputs; **halving it** gives what halving the "
                       f"input's tolerance buys, on {result.design_trials} common-random-number "
                       "trials: the largest drop of 2u over a tolerance half-width or "
                       "limit, and the change of the probability that every group stays in its "
                       "band, in percentage points. Facility instruments and controls come first, "
                       "by what halving buys; conditions and property models (controllable = no) "
                       "follow — a tighter tolerance there means better data, not a better "
                       "facility."))
        b.append(Block("table", ranking_table(result)))
        # a rise above the noise of the common-random-number difference (0.1 % of the band)
        worse = [n for n in t.index if any(t.loc[n, f"delta_U_k2_{band.output}"]
                                          > 1e-3 * band.tolerance for band in st.bands)]
        if worse and st.correlation is not None:
            b.append(Block("paragraph", "Halving the tolerance of " + lit(", ".join(worse)) + " alone "
                           "raises U of some group: correlated errors partly cancel (for instance "
                           "two transducers sharing a calibration standard, whose errors cancel in "
                           "a pressure ratio), and tightening one of them alone breaks that "
                           "cancellation. Tighten such inputs together."))
        top = t[t["controllable"]]
        if len(top):
            b.append(Block("paragraph", f"Control more tightly first: **{lit(top.index[0])}** "
                           f"(halving its tolerance cuts 2u by {two_digits(top.iloc[0]['gain_bands'])} "
                           "of a band half-width" + (" or requirement limit" if limited else "")
                           + ")."))
        b.append(Block("figure", "tightening.png", caption="Drop of twice the standard uncertainty "
                       "(2u), in tolerance half-widths, when one input's tolerance is halved."))
    return b


def ranking_detail_blocks(result) -> list[Block]:
    """The figures the ranking combines, per output (an appendix section)."""
    st, t = result.study, result.tightening
    if (t is None or not len(t)) and result.ranking is None:
        return []
    b = [Block("heading", "Ranking details")]
    if t is not None and len(t):
        limited = [o for o in st.coefficient_outputs if st.limit_of_output(o) is not None]
        cols = ["rank", "perturbs", "controllable"]
        for out in [band.output for band in st.bands] + limited:
            cols += [f"variance_removed_percent_{out}", f"delta_U_k2_{out}"]
        cols += ["delta_conformity", "gain_bands"]
        b.append(Block("paragraph", "Halving each tolerance alone: variance removed if the input "
                       "were known exactly (%), the change of 2u with its tolerance halved (in the "
                       "output's SI unit), the change of the probability that every group is in "
                       "its band (delta conformity), and gain bands = the largest drop of 2u over "
                       "a tolerance half-width or limit."))
        b.append(Block("table", _headed(_indices(t[cols].reset_index()))))
    basis = ("the Shapley effect (the inputs are correlated)" if st.correlation
             is not None else "the Sobol total index ST")
    b.append(Block("paragraph", "band share = 2 sqrt(s var(y)) / tolerance: twice the standard "
                   "uncertainty an input brings to a matched group, as a fraction of that group's "
                   f"tolerance half-width, with s its share of var(y) from {basis} "
                   "(column variance share)"
                   + ("; limit share, alike, of a measured coefficient against its requirement "
                      "limit; largest band share is the largest of both."
                      if st.coefficient_outputs else ".")))
    b.append(Block("table", _headed(_indices(result.ranking.reset_index()))))
    return b


#: Column-name heads of the ranking tables and how a header reads them.
_HEADS = (("variance_removed_percent_", "variance removed % "), ("delta_U_k2_", "change of 2u "),
          ("variance_share_", "variance share "), ("band_share_", "band share "),
          ("limit_share_", "limit share "), ("ST_", "ST "))


def _headed(t: pd.DataFrame) -> pd.DataFrame:
    """Human headers: ``delta_U_k2_reynolds_ratio`` -> ``change of 2u (reynolds_ratio)``."""
    def head(col: str) -> str:
        for code, words in _HEADS:
            if col.startswith(code):
                return f"{words}({col[len(code):]})"
        return col.replace("_", " ")
    return t.rename(columns=head)


def _checks(checks, study) -> pd.DataFrame:
    return pd.DataFrame([(requirement_label(c.key), c.text, achieved(c, study),
                          "met" if c.met else "NOT met") for c in checks],
                        columns=["no.", "requirement (as written)", "achieved", "status"])


def requirement_blocks(result) -> list[Block]:
    st = result.study
    if result.requirement_checks is None:
        return []
    ds = st.design
    b = [Block("heading", "Requirements and the tolerances they allow")]
    b.append(Block("paragraph", f"At the tolerances as written ({ds.verify_trials} fresh Monte "
                   "Carlo trials). U is the half-length of the probabilistically symmetric "
                   "coverage interval; a % limit is a fraction of the output's set-point value."))
    b.append(Block("table", _checks(result.requirement_checks, st)))
    lim = result.input_limits
    if lim is not None and len(lim):
        b.append(Block("paragraph", f"Largest tolerance of each input alone (the others as "
                       f"written) that meets every requirement, on {ds.trials} common-random-number "
                       "trials with a margin against the noise of the design and verification "
                       "samples (three standard errors of their difference). The search starts "
                       "at the written tolerance. 'others break it': no tolerance of this input "
                       "alone meets every requirement (the others break one); 'not limiting': "
                       f"met up to {ds.largest_scale:g} times the written tolerance."))
        lim_tab = lim.reset_index()[["input", "status", "written", "allowed", "largest_scale"]]
        lim_tab = lim_tab.assign(largest_scale=[f"×{v:.3g}" if pd.notna(v) else "—"
                                                for v in lim_tab["largest_scale"]],
                                 allowed=[v or "—" for v in lim_tab["allowed"]])
        b.append(Block("table", table(lim_tab.rename(columns={
            "written": "as written", "allowed": "largest alone (same form)",
            "largest_scale": "× written"}))))
        if (lim["status"] == "not achievable").any():
            b.append(Block("paragraph", "**Not achievable at this set point:** the requirements "
                           "fail even with every input known exactly; no tolerance can fix that "
                           "(see the set-point section)."))
    a = result.allocation
    if a is None:
        b.append(Block("paragraph", "No input has a cost model (`cost` or `grades`), so no "
                       "allocation was made."))
        return b
    b.append(Block("heading", "Allocation at least cost", 3))
    if a.message:
        b.append(Block("paragraph", f"**No allocation meets the requirements:** {lit(a.message)}."))
    else:
        how = ("continuous costs, minimised under a Gaussian surrogate of the requirements "
               f"(GUM sensitivities, calibrated on the design sample; rounds: {a.rounds})"
               if a.kind == "power" else f"instrument grades, cheapest combination that meets "
               f"the requirements ({a.rounds} combinations checked on the design sample)")
        extra = f" (as written: {cost_text(a.cost_written)})" if a.cost_written is not None else ""
        b.append(Block("paragraph", f"Method: {how}. Total cost {cost_text(a.cost)}{extra}."))
        if a.note:
            b.append(Block("paragraph", f"Note: {lit(a.note)}."))
        if st.bands and pd.notna(a.conformity):
            b.append(Block("paragraph", "Probability that every matched group stays in its band "
                           f"at the allocation: {100 * a.conformity:.1f} % "
                           f"({100 * result.conformity['all']:.1f} % as written)"
                           + ("" if any(r.kind == "conformity" for r in st.requirements) else
                              "; no requirement holds it, so the allocation may trade the match "
                              "away (add a conformity requirement to keep it)") + "."))
        b.append(Block("paragraph", f"Verification by a fresh Monte Carlo run ({a.verify_trials} "
                       f"trials, independent seed stream): **{'every requirement met' if a.verified else 'NOT every requirement met'}**. "
                       f"With every allocated tolerance loosened by {100 * (LOOSEN - 1):.0f} %: "
                       f"{'some requirement fails (the allocation is tight)' if a.fails_loosened else 'still met (the allocation has slack)'}."))
        rows = [(requirement_label(c.key), c.text, achieved(c, st), achieved(v, st),
                 "met" if c.met else "NOT met") for c, v in zip(a.verification, a.loosened)]
        b.append(Block("table", pd.DataFrame(rows, columns=[
            "no.", "requirement (as written)", "achieved", f"loosened ×{LOOSEN:g}", "status"])))
    if a.table is None:
        b.append(Block("paragraph", "No instrument-requirements table: no allocation meets the "
                       "requirements."))
        return b
    b.append(Block("paragraph", "Instrument and control requirements for the test plan. Each "
                   "allowed tolerance is stated in the form and units the study wrote it: ±a "
                   "limits for controls and resolutions, ±(% of reading + % of full scale) for "
                   "datasheet accuracies, U at the stated k (or coverage probability) for "
                   "certificates, u for standard uncertainties; a chosen grade as its datasheet "
                   "states it. Allowed numbers are rounded down to two significant digits. The "
                   "same table, with 2u written and allowed in SI units, is in tolerances.csv."))
    b.append(Block("table", instrument_view(a.table)))
    if not a.message:
        b.append(Block("bullets", [
            "The allowed tolerances are accuracy requirements. A looser control tolerance also "
            "widens the excursions of the facility about its set point: they must stay inside "
            "the facility's rated envelope and the model's load rating, under the facility's "
            "safety rules and licensed engineering practice, whatever this allocation allows."]
            + [f"Caution: {lit(m)}. Keep that control tighter than allocated, or move the set "
               "point." for m in a.excursions]))
    return b


def instrument_view(tab: pd.DataFrame) -> pd.DataFrame:
    """The instrument-requirements table as the report shows it (human headers)."""
    view = tab[["input", "quantity", "written", "allowed", "scale", "distribution", "source"]]
    view = view.assign(scale=[f"×{v:.3g}" if abs(v - 1.0) > 1e-12 else "×1"
                              for v in view["scale"]])
    return view.rename(columns={"written": "as written", "allowed": "allowed (test plan)",
                                "scale": "change"})


def tolerances_frame(result) -> pd.DataFrame | None:
    """The tolerances for the test plan as one table (tolerances.csv): each input as written,
    what the requirements allow of it alone and in the allocation, with U (k = 2) in SI."""
    if not result.inputs:
        return None
    rows = {i.name: {"input": i.name, "quantity": i.target.replace("_", " "),
                     "perturbs": ", ".join(i.targets), "component": i.component,
                     "distribution": i.kind, "as_written": statement(i.spec),
                     "U_k2_written": 2.0 * i.standard_uncertainty, "unit": i.unit}
            for i in result.inputs}
    lim = result.input_limits
    if lim is not None and len(lim):
        for name, r in lim.iterrows():
            rows[name].update(largest_alone=r["allowed"], largest_alone_scale=r["largest_scale"],
                              largest_alone_status=r["status"])
    a = result.allocation
    if a is not None and a.table is not None:
        for _, r in a.table.iterrows():
            rows[r["input"]].update(allowed=r["allowed"], allowed_scale=r["scale"],
                                    U_k2_allowed=r["U_k2_allowed"], source=r["source"])
    return pd.DataFrame(list(rows.values()))


def correlated_scaling_blocks(result) -> list[Block]:
    """What the decision analyses assumed when they scaled a correlated input."""
    if not result.correlated_scaling:
        return []
    return [Block("heading", "Scaling correlated inputs", 3),
            Block("bullets", [f"{lit(n)}." for n in result.correlated_scaling])]


def sweep_blocks(result) -> list[Block]:
    if not result.sweeps:
        return []
    b = [Block("heading", "Tolerance sweeps")]
    b.append(Block("paragraph", f"Each swept input's tolerance is multiplied by the scale (its "
                   f"distribution keeps its shape); the other inputs stay as written. All points use "
                   f"the same {result.design_trials} trials (common random numbers), so the curves "
                   "are smooth and their differences carry little Monte Carlo noise."))
    for i, sw in enumerate(result.sweeps, start=1):
        b.append(Block("paragraph", f"**Sweep {i}**: {lit(' and '.join(sw.inputs))}, scale "
                       f"{fmt(float(sw.scales[0][0]))} to {fmt(float(sw.scales[0][-1]))}."))
        b.append(Block("figure", f"sweep_{i}.png", caption=f"Sweep {i}: " + lit(", ".join(sw.inputs))))
        if not sw.table["physical"].all():
            b.append(Block("paragraph", f"{int((~sw.table['physical']).sum())} points give "
                           "non-physical or sonic trials (outside the similitude model): their "
                           "figures are n/a."))
        if len(sw.inputs) == 1:
            b.append(Block("table", _sweep_view(sw.table)))
    return b


def _sweep_view(tab: pd.DataFrame) -> pd.DataFrame:
    """A 1-D sweep's table with human headers: the scale, 2u of each matched group, P(all in
    band) in %, whether each requirement (numbered from 1) is met."""
    view = {}
    for c in tab.columns:
        if c.startswith("scale"):
            view[c.replace("scale: ", "scale of ")] = [two_digits(v) for v in tab[c]]
        elif c.startswith("U_k2_"):
            view[f"2u of {c[5:]}"] = [two_digits(v) if pd.notna(v) else "n/a" for v in tab[c]]
        elif c == "conformity_all":
            view["P(all in band)"] = [f"{100 * v:.1f} %" if pd.notna(v) else "n/a"
                                      for v in tab[c]]
        elif c.startswith("met_"):
            view[f"req. {requirement_label(c[4:])} met"] = [fmt(bool(v)) for v in tab[c]]
        elif c == "physical":
            view["physical"] = [fmt(bool(v)) for v in tab[c]]
    return pd.DataFrame(view)
