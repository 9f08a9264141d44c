"""The measured coefficients of a run: their uncertainty, what drives it, and the balance.

One stage of :func:`simunc.pipeline.run` for a study with a ``[measurement]`` section: the table
of the reduced coefficients (Monte Carlo u, the half-length U of the symmetric coverage interval,
drag in counts, the two inputs that drive each most by their Sobol total index), the balance
utilisation at the set point with its warnings and notes, the pre-test pressure chart and the
model-size trade (:mod:`simunc.decisions.pretest`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np
import pandas as pd

from simunc.decisions.balance import LOW_UTILISATION, utilisation
from simunc.decisions.pretest import PressureChart, pressure_chart, scale_trade
from simunc.study.catalogue import describe_output
from simunc.units import COUNT
from simunc.units import load_text

#: Total blockage beyond which the classical small-model wall corrections are not trusted
#: (common practice, no source: "a few per cent").
LARGE_BLOCKAGE = 0.02

#: Caution on balance loads, shown beside the utilisation (the report defers to the facility).
LOAD_CAUTION = (
    "The loads here are the steady aerodynamic loads at the set point from the pre-test "
    "coefficients only. Start-up and shut-down transients, buffet, model weight and support "
    "interference add to them, and the balance and model are rated by their certified load "
    "limits: the facility's balance rules and the responsible licensed engineers decide what "
    "may be run.")


@dataclass(frozen=True, kw_only=True)
class CoefficientStage:
    """The measured coefficients of a run (module docstring)."""

    table: pd.DataFrame                 # one row per coefficient output
    utilisation: pd.DataFrame | None    # per balance component (None without a balance)
    warnings: tuple[str, ...]
    notes: tuple[str, ...]
    chart: PressureChart | None
    trade: pd.DataFrame | None
    walls: pd.DataFrame | None = None   # uncorrected, correction, corrected at the set point
    scale: pd.DataFrame | None = None   # tunnel - full scale of each coefficient a scale effect moves


def scale_table(study, statistics: pd.DataFrame) -> pd.DataFrame | None:
    """Per coefficient of the scale effect: the tunnel's value less the full-scale one at the set
    point (the bias of taking the one for the other), its Monte Carlo mean, u and U (the
    half-length of the symmetric interval; drag also in counts); None without a scale effect."""
    m = study.measurement
    if m is None or m.scale_effect is None:
        return None
    rows = []
    for name in m.scale_effect.coefficients:
        s = statistics.loc[f"{name}_coefficient_to_full_scale"]
        half = 0.5 * (float(s["high"]) - float(s["low"]))
        rows.append({"coefficient": f"{name}_coefficient", "bias at the set point":
                     float(s["nominal"]), "mean": float(s["mean"]),
                     "u": float(s["standard_uncertainty"]), "U": half,
                     "U_counts": half / COUNT if name == "drag" else None})
    return pd.DataFrame(rows)


def wall_table(prep, statistics: pd.DataFrame | None = None) -> pd.DataFrame | None:
    """The wall corrections at the set point: uncorrected (the empty-tunnel calibration: the same
    model without walls), correction and corrected value of the Mach number (or speed), q, the
    Reynolds number, the angle of attack and the drag coefficient (the induced-drag part), and
    the blockages; with the Monte Carlo ``statistics``, ``U`` of the corrected value (the
    half-length of its probabilistically symmetric interval: the corrections' own uncertainty
    with every other input's) and the output key; None without wall corrections."""
    st, model = prep.study, prep.model
    m = st.measurement
    if m is None or m.walls is None:
        return None
    x = prep.setpoint.nominal
    with_walls = {k: float(np.asarray(v)) for k, v in model(x).items()}
    free = {k: float(np.asarray(v)) for k, v in replace(
        model, measurement=replace(m, walls=None))(x).items()}
    rows = []
    speed = ("Mach number", "mach_model", "1") if st.kind == "gas" else ("speed", "speed", "m/s")
    for label, key, unit in (speed, ("dynamic pressure q", "dynamic_pressure", "Pa"),
                             ("Reynolds number (model)", "reynolds_model", "1")):
        rows.append((label, free[key], with_walls[key] - free[key], with_walls[key], unit, key))
    if "angle_correction" in with_walls:
        da = with_walls["angle_correction"]
        rows.append(("angle of attack", m.angle_of_attack, da, m.angle_of_attack + da, "rad",
                     "angle_of_attack"))
        if "drag" in m.coefficients and "lift" in m.coefficients:
            cl = m.coefficients["lift"]
            rows.append(("drag coefficient (induced-drag correction CL d_alpha)",
                         m.coefficients["drag"] - cl * da, cl * da, m.coefficients["drag"], "1",
                         ""))
    rows += [("solid blockage (incompressible, or as given)", math.nan,
              with_walls["solid_blockage"], math.nan, "1", ""),
             ("wake blockage (incompressible, or as given)", math.nan,
              with_walls["wake_blockage"], math.nan, "1", ""),
             ("total blockage epsilon (compressible)", math.nan, with_walls["blockage"], math.nan,
              "1", "")]
    out = pd.DataFrame(rows, columns=["quantity", "uncorrected", "correction", "corrected", "unit",
                                      "output"])
    out["U"] = [0.5 * (float(statistics.loc[k, "high"]) - float(statistics.loc[k, "low"]))
                if statistics is not None and k in statistics.index else math.nan
                for k in out["output"]]
    return out


def outside_table(scale_effect, points: dict[str, tuple[float, float]]) -> list[str]:
    """Where a scale-effect table is read beyond its entries (continued along its end segments):
    one text per point ``label -> (Re, M)`` outside the table's Reynolds (or Mach) range."""
    if scale_effect is None or scale_effect.method != "table":
        return []
    se, out = scale_effect, []
    for label, (re, mach) in points.items():
        far = []
        if not se.reynolds[0] <= re <= se.reynolds[-1]:
            far.append(f"Re = {re:.3g} (table {se.reynolds[0]:.3g} to {se.reynolds[-1]:.3g})")
        if se.mach and not se.mach[0] <= mach <= se.mach[-1]:
            far.append(f"M = {mach:.3g} (table {se.mach[0]:g} to {se.mach[-1]:g})")
        if far:
            out.append(f"the scale-effect table is read beyond its entries at {label}: "
                       f"{' and '.join(far)}; it is continued along its end segment there")
    return out


def coefficient_table(study, statistics: pd.DataFrame, sobol: dict[str, pd.DataFrame]
                      ) -> pd.DataFrame:
    """Nominal (the stated, true value), bias (mean of the reduced value less the true one: the
    mean error of the data reduction), u, U (half-length of the probabilistically symmetric
    interval), U in drag counts for the drag coefficient, the requirement limit and the leading
    inputs (ST)."""
    rows = []
    for out in study.coefficient_outputs:
        s = statistics.loc[out]
        half = 0.5 * (float(s["high"]) - float(s["low"]))
        st = sobol.get(out)
        lead = ""
        if st is not None and len(st):
            top = st["ST"].clip(lower=0.0).sort_values(ascending=False)
            lead = "; ".join(f"{name} (ST {value:.2f})" for name, value in top.iloc[:2].items()
                             if value > 0.0)
        limit = study.limit_of_output(out)
        rows.append({"output": out, "quantity": describe_output(out)[1],
                     "nominal": float(s["nominal"]),
                     "bias": float(s["mean"]) - float(s["nominal"]),
                     "u": float(s["standard_uncertainty"]),
                     "U": half, "U_counts": half / COUNT if out == "drag_coefficient" else None,
                     "limit": limit, "leading_inputs": lead})
    return pd.DataFrame(rows, columns=["output", "quantity", "nominal", "bias", "u", "U",
                                       "U_counts", "limit", "leading_inputs"]).set_index("output")


def coefficient_stage(prep, statistics: pd.DataFrame, sobol: dict[str, pd.DataFrame]
                      ) -> CoefficientStage | None:
    """:class:`CoefficientStage` of a study with a measurement section (None without one)."""
    st = prep.study
    m = st.measurement
    if m is None:
        return None
    table = coefficient_table(st, statistics, sobol)
    eps = prep.setpoint.outputs.get("blockage")
    large = eps is not None and abs(float(eps)) > LARGE_BLOCKAGE
    use = utilisation(m, prep.setpoint.outputs) if m.capacity else None
    warnings, notes = [], []
    if large:
        warnings.append(f"the walls' total blockage at the set point is {100 * float(eps):.2g} %: "
                        f"beyond about {100 * LARGE_BLOCKAGE:g} % the classical small-model "
                        "corrections (and their compressible factors near Mach 1) do not hold; "
                        "use the facility's own factors, ventilated walls or a smaller model")
    o = prep.setpoint.outputs
    warnings += outside_table(m.scale_effect, {
        "the tunnel's set point": (float(o["reynolds_model"]), float(o["mach_model"])),
        "full scale": (float(o["reynolds_full_scale"]), float(o["mach_full_scale"]))})
    if use is not None:
        for _, r in use.iterrows():
            name = str(r["component"]).replace("_", " ")
            moment = "moment" in str(r["component"])
            share = (f"{100 * r['utilisation']:.0f} % of its capacity "
                     f"({load_text(float(r['load']), moment)} of "
                     f"{load_text(float(r['capacity']), moment)})")
            if r["status"] == "overloaded":
                warnings.append(f"balance utilisation ({m.balance}): the expected {name} is "
                                f"{share}: the balance is overloaded at this set point")
            elif str(r["status"]).startswith("above"):
                warnings.append(f"balance utilisation ({m.balance}): the expected {name} is "
                                f"{share}, above the load margin of {100 * m.load_margin:g} %")
            elif r["utilisation"] < LOW_UTILISATION and abs(r["load"]) > 0.0:
                notes.append(f"The expected {name} uses {share}: below "
                             f"{100 * LOW_UTILISATION:g} %, the balance's %-of-full-scale error "
                             "is large against the load.")
    return CoefficientStage(table=table, utilisation=use, warnings=tuple(warnings),
                            notes=tuple(notes), chart=pressure_chart(prep),
                            trade=scale_trade(prep), walls=wall_table(prep, statistics),
                            scale=scale_table(st, statistics))
