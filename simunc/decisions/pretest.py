"""Before the test: the coefficient uncertainty across the facility's range and across model scales.

* :func:`pressure_chart`: U(CD) and U(CL) against the dynamic pressure, for the written balance
  and every candidate balance, with where each balance carries the expected loads with its
  margin -- the chart that picks the pressure and the balance.  q is moved by the facility's
  lever: the stagnation pressure over its range at the test Mach number and temperature (a
  pressurised tunnel); the Mach number over its range when the stagnation pressure spans less
  than a factor :data:`PRESSURE_LEVER` (an atmospheric tunnel, whose p0 is the day's barometer);
  the speed over its range (a liquid facility).  U is the half-length of the probabilistically
  symmetric coverage interval at the run's coverage probability (as a requirement's U), k = 2
  near enough for a normal output.
* :func:`scale_trade`: for a range of model sizes the set point solved again (the same bands and
  priorities), the Reynolds ratio reached, the blockage, q, the balance utilisation and U(CD).

Both evaluate the one similitude model on common random numbers: one seeded sample of the input
deviations at the set point, each input's column multiplied by the ratio of its standard
uncertainty at the new condition to that at the set point (every input is a location-scale
family of mean zero whose size is resolved at its reading, so the ratio carries the %-of-reading
terms; a candidate balance changes the balance inputs' sizes as in
:mod:`simunc.decisions.balance`).  The differences between points are then free of most of the
sampling noise.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np
import pandas as pd

from simunc.decisions.balance import balance_spec, balances, carries, utilisation
from simunc.decisions.design import stream_seed
from simunc.similitude.inputs import UncertainInput, build_inputs, similitude_problem
from simunc.similitude.setpoint import SetPoint, largest_model, solve
from simunc.uncertainty.sampling import InputSampler
from simunc.uncertainty.statistics import symmetric_interval
from simunc.units import COUNT

#: Seed stream of the pre-test sample (see :func:`simunc.decisions.design.stream_seed`).
PRETEST_STREAM = 3
#: Trials of the common-random-number sample, points of the chart, model sizes of the trade.
PRETEST_TRIALS, CHART_POINTS = 20_000, 20
#: A stagnation-pressure range narrower than this factor is no lever on q (the chart sweeps the
#: Mach number instead).
PRESSURE_LEVER = 1.5
SCALE_FACTORS = (0.5, 0.625, 0.75, 0.875, 1.0, 1.125, 1.25, 1.5)
#: Outputs the chart and the trade give (those the study has).
CHART_OUTPUTS = ("drag_coefficient", "lift_coefficient")


@dataclass(frozen=True, kw_only=True)
class PressureChart:
    """U of CD and CL against the dynamic pressure (module docstring).

    ``axis``: the variable swept, ``stagnation_pressure`` [Pa], ``mach`` or ``speed`` [m/s];
    ``values``: its points; ``dynamic_pressure``: q at each [Pa]; ``expanded``: balance name ->
    output -> U per point; ``carries``: balance name -> whether it carries the expected loads
    with its margin, per point; ``setpoint`` and ``setpoint_q``: the set point's value of the
    axis and its q; ``balance``: the written balance; ``probability``: output -> p of its U
    (the requirement's on it, else the run's).
    """

    axis: str
    values: np.ndarray
    dynamic_pressure: np.ndarray
    expanded: dict[str, dict[str, np.ndarray]]
    carries: dict[str, np.ndarray]
    setpoint: float
    setpoint_q: float
    balance: str
    probability: dict[str, float]
    trials: int
    seed: int


def _sample(prep, trials: int) -> tuple[np.ndarray, int]:
    seed = stream_seed(prep.settings.seed, PRETEST_STREAM)
    x = InputSampler(prep.problem.distributions, seed, "random",
                     prep.copula if prep.correlation is not None else None,
                     trials).draw(0, [trials])
    return x, seed


def inputs_at(prep, outputs, balance=None) -> list[UncertainInput]:
    """The study's inputs resolved at the readings ``outputs`` (on the balance ``(name,
    capacity, full_scale)``): sizes in % of reading, shared-error factors and balance
    accuracies as they are there."""
    m = prep.study.measurement
    specs = [balance_spec(inp, m, balance[1], balance[2])
             if balance is not None and inp.target.endswith("_indication")
             and inp.target[:-11] in balance[1] else inp.spec for inp in prep.inputs]
    return build_inputs(specs, replace(prep.setpoint, outputs=outputs))


def moved(x: np.ndarray, old, new) -> np.ndarray:
    """The common-random-number sample of the inputs ``old`` carried to the inputs ``new``: each
    column multiplied by the ratio of the standard uncertainties (exact for the location-scale
    families of mean zero: normal, t, the bounded ones, the lognormal e = R (F - 1)); a
    truncated normal, whose shape moves when its sigma and limit scale differently, through
    its probability integral transform."""
    out = np.empty_like(x)
    for j, (a, b) in enumerate(zip(old, new)):
        if a.kind == "truncated_normal":
            u = np.clip(a.distribution.cdf(x[:, j]), 0.0, 1.0)
            out[:, j] = b.distribution.ppf(u)
        else:
            out[:, j] = x[:, j] * (b.standard_uncertainty / a.standard_uncertainty)
    return out


def probabilities(study, outputs) -> dict[str, float]:
    """p of U for each output: that of the requirement on it, else the run's."""
    out = {}
    for o in outputs:
        r = study.requirement_on(o)
        out[o] = r.probability if r is not None and r.probability > 0.0 \
            else study.run.coverage_probability
    return out


def _spread(model, setpoint, nominal, inputs, x: np.ndarray, p: dict[str, float]
            ) -> dict[str, float]:
    """U_p of each output of ``p`` at the state ``nominal`` with ``inputs`` drawn as ``x``: the
    half-length of its probabilistically symmetric p interval."""
    problem = similitude_problem(model, replace(setpoint, nominal=nominal), list(inputs))
    y = problem.evaluate(x)
    out = {}
    for o, prob in p.items():
        low, high = symmetric_interval(np.asarray(y[o]), prob)
        out[o] = 0.5 * (high - low)
    return out


def pressure_chart(prep, *, points: int = CHART_POINTS, trials: int = PRETEST_TRIALS
                   ) -> PressureChart | None:
    """:class:`PressureChart` of a study with a balance measuring lift and drag (None when it has
    none, or the facility has no range of its set-point variable)."""
    st, m = prep.study, prep.study.measurement
    outs = [o for o in CHART_OUTPUTS if m is not None and o in st.coefficient_outputs]
    if not outs or not prep.inputs:
        return None
    fac = st.facility
    if st.kind == "liquid":
        axis, span = "speed", fac.speed_range
    else:
        axis, span = "stagnation_pressure", fac.stagnation_pressure_range
        if span is None or span[1] < PRESSURE_LEVER * span[0]:
            axis, span = "mach", (max(fac.mach_range[0], 0.05), min(fac.mach_range[1], 0.95))
    if span is None or not span[1] > span[0]:
        return None
    grid = np.geomspace(span[0], span[1], points)
    sp = prep.setpoint
    nominal = {k: v for k, v in sp.nominal.items()}
    model = prep.model
    states = {**nominal, axis: grid}
    y0 = model(states)
    x, seed = _sample(prep, trials)
    p = probabilities(st, outs)
    every = balances(m)
    expanded: dict[str, dict[str, np.ndarray]] = {b[0]: {o: np.empty(points) for o in outs}
                                                  for b in every}
    fits: dict[str, np.ndarray] = {b[0]: np.empty(points, dtype=bool) for b in every}
    for i, g in enumerate(grid):
        at = {k: float(np.asarray(v)[i]) for k, v in y0.items()}
        for b in every:
            new = inputs_at(prep, at, b)
            spread = _spread(model, sp, {**nominal, axis: float(g)}, new,
                             moved(x, prep.inputs, new), p)
            for o in outs:
                expanded[b[0]][o][i] = spread[o]
            fits[b[0]][i] = carries(m, at, b[1])
    return PressureChart(axis=axis, values=grid,
                         dynamic_pressure=np.asarray(y0["dynamic_pressure"], dtype=float),
                         expanded=expanded, carries=fits,
                         setpoint=float(sp.nominal[axis]),
                         setpoint_q=float(sp.outputs["dynamic_pressure"]), balance=m.balance,
                         probability=p, trials=trials, seed=seed)


def scale_trade(prep, *, factors=SCALE_FACTORS, trials: int = PRETEST_TRIALS
                ) -> pd.DataFrame | None:
    """Model-size trade table (module docstring); None without a balance measuring drag.

    Columns: ``model_length`` [m], ``scale`` (model / full scale), ``stagnation_pressure`` or
    ``speed``, ``feasible``, ``reynolds_ratio``, ``blockage`` (NaN without the areas),
    ``dynamic_pressure`` [Pa], ``largest_utilisation`` (of the written balance) and U of CD (also
    in counts) and CL (as in :class:`PressureChart`); with a scale effect on the drag,
    ``drag_bias_to_full_scale`` (the tunnel's drag less the full-scale one at that size).
    """
    st, m = prep.study, prep.study.measurement
    outs = [o for o in CHART_OUTPUTS if m is not None and o in st.coefficient_outputs]
    if not outs or not prep.inputs:
        return None
    sp = prep.setpoint
    length0 = float(sp.nominal["model_length"])
    largest = largest_model(st) or math.inf
    lengths = sorted({min(length0 * f, largest) for f in factors} | {length0})
    x, _ = _sample(prep, trials)
    fac, fs = st.facility, st.full_scale
    axis = "stagnation_pressure" if st.kind == "gas" else "speed"
    rows = []
    for length in lengths:
        sized = replace(st, model_scale=None, model_reference_length=length,
                        unknowns=tuple(u for u in st.unknowns if u != "model_length"))
        other: SetPoint = sp if length == length0 else solve(sized, prep.model)
        out = other.outputs
        new = inputs_at(prep, out)
        spread = _spread(prep.model, other, other.nominal, new, moved(x, prep.inputs, new),
                         probabilities(st, outs))
        blockage = (fs.frontal_area * (length / fs.reference_length) ** 2 / fac.test_section_area
                    if fs.frontal_area and fac.test_section_area else math.nan)
        use = utilisation(m, out)
        rows.append({"model_length": length, "scale": length / fs.reference_length,
                     axis: float(other.nominal.get(axis, math.nan)),
                     "feasible": bool(other.feasible),
                     "reynolds_ratio": float(out["reynolds_ratio"]), "blockage": blockage,
                     "dynamic_pressure": float(out["dynamic_pressure"]),
                     "largest_utilisation": float(use["utilisation"].max()),
                     **{f"U_{o}": spread[o] for o in outs},
                     **({"U_drag_coefficient_counts": spread["drag_coefficient"] / COUNT}
                        if "drag_coefficient" in spread else {}),
                     **({"drag_bias_to_full_scale": float(out["drag_coefficient_to_full_scale"])}
                        if "drag_coefficient_to_full_scale" in out else {})})
    return pd.DataFrame(rows)
