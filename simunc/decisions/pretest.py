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

from simunc.decisions.balance import balance_spec, carries, utilisation
from simunc.decisions.design import stream_seed
from simunc.similitude.inputs import UncertainInput, similitude_problem, standard_uncertainty
from simunc.similitude.setpoint import SetPoint, largest_model, solve
from simunc.study.catalogue import TARGETS
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
    axis and its q; ``balance``: the written balance; ``probability``: of U.
    """

    axis: str
    values: np.ndarray
    dynamic_pressure: np.ndarray
    expanded: dict[str, dict[str, np.ndarray]]
    carries: dict[str, np.ndarray]
    setpoint: float
    setpoint_q: float
    balance: str
    probability: float
    trials: int
    seed: int


def _sample(prep, trials: int) -> tuple[np.ndarray, int]:
    seed = stream_seed(prep.settings.seed, PRETEST_STREAM)
    x = InputSampler(prep.problem.distributions, seed, "random",
                     prep.copula if prep.correlation is not None else None,
                     trials).draw(0, [trials])
    return x, seed


def _u(inp: UncertainInput, outputs, spec=None) -> float:
    """Standard uncertainty of an input (or of another spec of it) at the readings ``outputs``."""
    key = TARGETS[inp.target].reading
    reading = float(np.asarray(outputs[key])) if key else None
    return standard_uncertainty(spec or inp.spec, reading)


def _ratios(inputs, outputs, m=None, balance=None) -> np.ndarray:
    """u at ``outputs`` (on the balance ``(name, capacity, full_scale)`` of the measurement
    ``m``) over u as run."""
    out = []
    for inp in inputs:
        spec = inp.spec
        if balance is not None and inp.target.endswith("_indication") and \
                inp.target[:-11] in balance[1]:
            spec = balance_spec(inp, m, balance[1], balance[2])
        out.append(_u(inp, outputs, spec) / inp.standard_uncertainty)
    return np.array(out)


def _balances(m) -> list[tuple[str, dict, dict]]:
    return [(m.balance, dict(m.capacity), {})] + [(o.name, dict(o.capacity), dict(o.full_scale))
                                                  for o in m.options]


def _spread(problem, x: np.ndarray, outputs, p: float) -> dict[str, float]:
    """U_p of each output: the half-length of its probabilistically symmetric p interval."""
    y = problem.evaluate(x)
    out = {}
    for o in outputs:
        low, high = symmetric_interval(np.asarray(y[o]), p)
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
    p = prep.settings.coverage_probability
    balances = _balances(m)
    expanded: dict[str, dict[str, np.ndarray]] = {b[0]: {o: np.empty(points) for o in outs}
                                                  for b in balances}
    fits: dict[str, np.ndarray] = {b[0]: np.empty(points, dtype=bool) for b in balances}
    for i, g in enumerate(grid):
        at = {k: np.asarray(v)[i] for k, v in y0.items()}
        problem = similitude_problem(model, replace(sp, nominal={**nominal, axis: float(g)}),
                                     list(prep.inputs))
        for b in balances:
            spread = _spread(problem, x * _ratios(prep.inputs, at, m, b)[None, :], outs, p)
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
    in counts) and CL (as in :class:`PressureChart`).
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
        problem = similitude_problem(prep.model, other, list(prep.inputs))
        spread = _spread(problem, x * _ratios(prep.inputs, out)[None, :], outs,
                         prep.settings.coverage_probability)
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
                        if "drag_coefficient" in spread else {})})
    return pd.DataFrame(rows)
