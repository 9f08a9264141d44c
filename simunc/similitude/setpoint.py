"""Set-point solver: the facility state that reproduces the full-scale groups.

The unknowns (``match.solve_for`` plus the implicit ones: the Mach number when
it is matched, the model frequency when the Strouhal number is) are found by
bounded least squares (:func:`scipy.optimize.least_squares`, trust-region
reflective) on the same :class:`~simunc.similitude.model.SimilitudeModel` the Monte Carlo
uses.  Each matched group contributes the residual ``ln(G_model / G_full) /
tolerance`` (``(Ma_model - Ma_full) / tolerance`` for the Mach number), so a
residual of 1 is one band.  Groups are matched in priority order: residuals
of priority 1 are weighted 10^6 above those of priority 2, and so on.  The
bounds are the facility's limits (pressure, temperature and Mach ranges,
largest model from its size limit and blockage), the largest dynamic pressure
is an inequality held by a penalty and a final projection.

* As many unknowns as solved groups and every residual zero: an exact match
  (a root).
* Fewer unknowns than groups: weighted least squares, with the mismatch of
  every group reported.
* A residual that cannot reach zero inside the limits: the nearest achievable
  point, and the limits that bind.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np
from scipy.optimize import least_squares

from simunc.constants import STANDARD_PRESSURE
from simunc.similitude.model import SimilitudeModel
from simunc.study.schema import Band, Study

#: Weight between successive priority levels.
PRIORITY_WEIGHT = 1.0e6
#: A residual below this (in tolerance bands) counts as matched.
MATCHED = 1.0e-6

_UNITS = {"stagnation_pressure": "Pa", "stagnation_temperature": "K", "mach": "1",
          "speed": "m/s", "static_pressure": "Pa", "temperature": "K", "model_length": "m",
          "frequency": "Hz", "dynamic_pressure": "Pa"}


@dataclass(frozen=True)
class Limit:
    """A facility limit and whether the set point respects it."""

    quantity: str
    side: str  # "min" or "max"
    bound: float
    value: float
    unit: str

    @property
    def ok(self) -> bool:
        tol = 1e-9 * max(abs(self.bound), 1e-300)
        return self.value <= self.bound + tol if self.side == "max" else self.value >= self.bound - tol

    @property
    def active(self) -> bool:
        """The value sits on the bound."""
        return abs(self.value - self.bound) <= 1e-7 * max(abs(self.bound), 1e-300)


@dataclass(frozen=True)
class SetPoint:
    """Solved nominal state.

    Attributes
    ----------
    nominal : dict
        Nominal model inputs, SI.
    outputs : dict
        Model outputs at the nominal state, SI floats.
    solve_for : tuple of str
        The solved model keys.
    required : float
        Value (SI) of the first solved quantity that would match the groups
        with the facility limits lifted; ``nan`` when none does.
    feasible : bool
        True when every facility limit holds and every solved group is matched.
    limits : list of Limit
    messages : list of str
        Plain statements for the report (what binds, the shortfall).
    method : str
        ``"exact"`` or ``"least squares"``.
    mismatch : dict
        Per solved group, the residual in tolerance bands.
    binding : list of str
        Limits that stop a group from being matched.
    required_values : dict
        Every solved quantity with the limits lifted.
    fluid : str
        Name of the working fluid used.
    alternatives : list of dict
        With several candidate fluids: each one's outcome.
    """

    nominal: dict
    outputs: dict
    solve_for: tuple
    required: float
    feasible: bool
    limits: list = field(default_factory=list)
    messages: list = field(default_factory=list)
    method: str = "exact"
    mismatch: dict = field(default_factory=dict)
    binding: list = field(default_factory=list)
    required_values: dict = field(default_factory=dict)
    fluid: str = ""
    alternatives: list = field(default_factory=list)
    outside_model: str = ""  # why the nominal facility state is outside the fluid model, if it is

    @property
    def reynolds_shortfall(self) -> float:
        """``Re_model / Re_full - 1`` at the set point (0 when matched)."""
        return self.outputs["reynolds_ratio"] - 1.0

    @property
    def mach_shortfall(self) -> float:
        return self.outputs.get("mach_difference", math.nan)


def build_model(study: Study, fluid=None) -> SimilitudeModel:
    """The similitude model configured for a study (optionally with another candidate fluid)."""
    return SimilitudeModel(fluid=fluid or study.facility.gas, full_scale_fluid=study.full_scale.fluid,
                           mach_from=study.facility.mach_from,
                           full_scale_given=study.full_scale.given,
                           custom_groups=study.custom_groups)


def _q(value: float, unit: str) -> str:
    """A value with its unit for messages (no unit for dimensionless values)."""
    return f"{value:.6g} {unit}" if unit and unit != "1" else f"{value:.6g}"


def _scalar(out: dict) -> dict:
    return {k: float(np.asarray(v)) for k, v in out.items()}


def largest_model(study: Study) -> float | None:
    """Largest model reference length from the size limit and the blockage limit [m]."""
    fac, fs = study.facility, study.full_scale
    limits = [fac.max_model_reference_length] if fac.max_model_reference_length else []
    if fac.max_blockage and fac.test_section_area and fs.frontal_area:
        limits.append(fs.reference_length * math.sqrt(fac.max_blockage * fac.test_section_area
                                                      / fs.frontal_area))
    return min(limits) if limits else None


def bounds(study: Study, key: str) -> tuple[float, float]:
    """Facility bounds of a model key (SI); wide where the facility states none."""
    fac, fs = study.facility, study.full_scale
    if key == "stagnation_pressure":
        assert fac.stagnation_pressure_range is not None  # the reader requires it of a gas facility
        return fac.stagnation_pressure_range
    if key == "stagnation_temperature":
        return fac.stagnation_temperature_range or (1.0, 1.0e4)
    if key == "mach":
        lo, hi = fac.mach_range
        return max(lo, 1e-3), min(hi, 0.999)
    if key == "speed":
        return fac.speed_range or (1e-3, 1e3)
    if key == "static_pressure":
        return fac.static_pressure_range or (1.0, 1.0e9)
    if key == "temperature":
        return fac.temperature_range or (274.0, 313.0)
    if key == "model_length":
        return 1e-4 * fs.reference_length, largest_model(study) or 10.0 * fs.reference_length
    if key == "frequency":
        return 1e-6, 1e6
    raise KeyError(key)


def nominal_state(study: Study, fluid=None) -> dict:
    """Nominal model inputs from the study (unknowns left as ``None``)."""
    fs, fac = study.full_scale, study.facility
    fluid = fluid or fac.gas
    length = (study.model_reference_length if study.model_reference_length is not None
              else (study.model_scale * fs.reference_length if study.model_scale is not None
                    else None))
    x = {"model_length": length, "full_scale_static_pressure": fs.static_pressure,
         "full_scale_static_temperature": fs.static_temperature,
         "full_scale_speed_or_mach": fs.value, "full_scale_length": fs.reference_length}
    if fac.kind == "gas":
        x.update(stagnation_pressure=fac.stagnation_pressure,
                 stagnation_temperature=fac.stagnation_temperature, mach=fac.mach)
    else:
        x.update(speed=fac.speed, temperature=fac.temperature,
                 static_pressure=fac.static_pressure if fac.static_pressure is not None
                 else STANDARD_PRESSURE)
    if fs.frequency is not None:
        x["full_scale_frequency_nominal"] = fs.frequency
        x["frequency"] = study.model_frequency
    for name in getattr(fluid, "parameters", ()):
        x[name] = getattr(fluid, name)
    return x


def band_residual(b: Band, out: Mapping[str, np.ndarray]) -> float:
    """Mismatch of a group at a (scalar) model output, in tolerance bands (:meth:`Band.residual`)."""
    return b.residual(float(np.asarray(out[b.output])))


def _residuals(model: SimilitudeModel, bands: list[Band], state: dict, q_max: float | None):
    out = model(state)
    levels = sorted({b.priority for b in bands})
    r = [PRIORITY_WEIGHT ** (len(levels) - 1 - levels.index(b.priority)) * band_residual(b, out)
         for b in bands]
    if q_max is not None:
        q = float(np.asarray(out["dynamic_pressure"]))
        r.append(PRIORITY_WEIGHT ** len(levels) * 1e3 * max(0.0, math.log(q / q_max)))
    residuals = np.array(r)
    return np.where(np.isfinite(residuals), residuals, 1e9), out


def _solve_one(model: SimilitudeModel, base: dict, keys: list[str],
               box: dict[str, tuple[float, float]], bands: list[Band], q_max: float | None):
    """Least squares over ``keys`` inside ``box``; returns the state and outputs."""
    logs = [k not in ("mach", "temperature") for k in keys]
    lo = np.array([math.log(box[k][0]) if g else box[k][0] for k, g in zip(keys, logs)])
    hi = np.array([math.log(box[k][1]) if g else box[k][1] for k, g in zip(keys, logs)])

    def state_of(z):
        s = dict(base)
        for k, g, v in zip(keys, logs, z):
            s[k] = math.exp(v) if g else float(v)
        return s

    def fun(z):
        return _residuals(model, bands, state_of(z), q_max)[0]

    best = None
    for frac in (0.5, 0.2, 0.8):
        z0 = lo + frac * (hi - lo)
        sol = least_squares(fun, z0, bounds=(lo, hi), method="trf", x_scale="jac",
                            xtol=1e-15, ftol=1e-15, gtol=1e-15, max_nfev=2000)
        if best is None or sol.cost < best.cost:
            best = sol
        if best.cost < 1e-20:
            break
    assert best is not None  # the loop above runs at least once
    state = state_of(best.x)
    for k in keys:  # undo the round trip through the logarithm on an active bound
        for b in box[k]:
            if abs(state[k] - b) <= 1e-12 * abs(b):
                state[k] = b
    if q_max is not None:  # project onto q <= q_max (q grows with the pressure level)
        pkey = "stagnation_pressure" if model.kind == "gas" else None
        for _ in range(5):
            q = float(np.asarray(model(state)["dynamic_pressure"]))
            if pkey is None or pkey not in keys or abs(q / q_max - 1.0) < 1e-13 or (
                    q < q_max * (1.0 - 1e-6)):
                break
            state[pkey] *= q_max / q
    return state, _scalar(model(state))


def solve_state(study: Study, model: SimilitudeModel, keys, bands) -> tuple[dict, dict]:
    """Set-point state (and outputs) solving ``bands`` for the model keys ``keys``.

    The building block of :func:`solve` and of test planning; the facility
    limits bound the unknowns and the dynamic-pressure limit holds.
    """
    keys = list(keys)
    base = nominal_state(study, model.fluid)
    for k in keys:
        base[k] = None
    return _solve_one(model, base, keys, {k: bounds(study, k) for k in keys}, list(bands),
                      study.facility.max_dynamic_pressure)


def _limits(study: Study, state: dict, out: dict) -> list[Limit]:
    fac = study.facility
    lim = []

    def add(q, rng, value):
        if rng:
            lim.append(Limit(q, "min", rng[0], value, _UNITS[q]))
            lim.append(Limit(q, "max", rng[1], value, _UNITS[q]))

    if fac.kind == "gas":
        add("stagnation_pressure", fac.stagnation_pressure_range, state["stagnation_pressure"])
        add("stagnation_temperature", fac.stagnation_temperature_range,
            state["stagnation_temperature"])
        add("mach", fac.mach_range, state["mach"])
    else:
        add("speed", fac.speed_range, state["speed"])
        add("static_pressure", fac.static_pressure_range, state["static_pressure"])
        add("temperature", fac.temperature_range, state["temperature"])
    big = largest_model(study)
    if big:
        lim.append(Limit("model_length", "max", big, state["model_length"], "m"))
    if fac.max_dynamic_pressure:
        lim.append(Limit("dynamic_pressure", "max", fac.max_dynamic_pressure,
                         out["dynamic_pressure"], "Pa"))
    return lim


def _describe(sp_state, out, keys, bands, limits, required) -> tuple:
    msgs = []
    mismatch = {}
    for b in bands:
        mismatch[b.group] = band_residual(b, out)
    matched = all(abs(v) < MATCHED for v in mismatch.values())
    for lim in limits:
        if not lim.ok:
            word = "above the facility maximum" if lim.side == "max" else "below the facility minimum"
            what = "solved" if lim.quantity in keys else "given"
            msgs.append(f"The {what} {lim.quantity.replace('_', ' ')} {_q(lim.value, lim.unit)} is "
                        f"{word} {_q(lim.bound, lim.unit)}.")
    binding = [] if matched else [f"{lim.quantity} {lim.side} {_q(lim.bound, lim.unit)}"
                                  for lim in limits if lim.active and lim.ok]
    if not matched:
        needs = ", ".join(f"{k.replace('_', ' ')} {_q(v, _UNITS.get(k, ''))}"
                          for k, v in required.items() if math.isfinite(v))
        if needs:
            msgs.append(f"Matching every solved group would need {needs}.")
        parts = []
        for b in bands:
            y = out[b.output]
            parts.append(f"{b.output} = {y:+.4f}" if b.is_difference else
                         f"{b.output} = {y:.4f} ({100 * (y - 1):+.2f} %)")
        where = ", ".join(f"{k.replace('_', ' ')} = {_q(sp_state[k], _UNITS.get(k, ''))}"
                          for k in keys)
        msgs.append(f"Nearest achievable set point{' (' + where + ')' if where else ''}: "
                    + "; ".join(parts) + "."
                    + (f" Binding limit{'s' if len(binding) > 1 else ''}: {', '.join(binding)}."
                       if binding else ""))
    return msgs, mismatch, binding, matched


def solve(study: Study, model: SimilitudeModel | None = None) -> SetPoint:
    """Solve the nominal set point of a study.

    With several candidate fluids (``match.solve_for`` includes ``gas``) each is
    solved and the best kept: inside its property model first, then feasible, then
    the smallest mismatch (in tolerance bands).

    Raises
    ------
    StudyError
        When the set point lies outside the property model of every candidate
        fluid (condensation, liquid side of the saturation line, a model's range).

    """
    candidates = [model.fluid] if model is not None else list(study.facility.fluids)
    if "fluid" not in study.unknowns:
        candidates = candidates[:1]
    results = [_solve_fluid(study, model if model is not None and f is model.fluid
                            else build_model(study, f)) for f in candidates]
    best = min(results, key=lambda sp: (bool(sp.outside_model), not sp.feasible,
                                        sum(v * v for v in sp.mismatch.values())))
    if best.outside_model:
        from simunc.errors import StudyError

        key = "facility.humidity" if "supersaturated" in best.outside_model else "facility"
        raise StudyError(key, f"a set point outside the {best.fluid} model ({best.outside_model})",
                         "facility settings and ranges that keep the test section inside the fluid "
                         "model (e.g. a higher stagnation temperature, a drier gas, another fluid)")
    if len(results) > 1:
        alts: list[dict[str, Any]] = [{"fluid": sp.fluid, "feasible": sp.feasible,
                                       "mismatch": dict(sp.mismatch)} for sp in results]
        best = replace(best, alternatives=alts, messages=best.messages + [
            "Working fluid chosen among " + ", ".join(a["fluid"] for a in alts) + f": {best.fluid}."])
    return best


def _solve_fluid(study: Study, model: SimilitudeModel) -> SetPoint:
    base = nominal_state(study, model.fluid)
    keys = [k for k in study.unknowns if k != "fluid"]
    bands = [b for b in study.bands if b.solve]
    q_max = study.facility.max_dynamic_pressure
    box = {k: bounds(study, k) for k in keys}
    for k in keys:
        base[k] = None
    state, out = _solve_one(model, base, keys, box, bands, q_max)

    # The same problem with the facility limits lifted: what a match would need.
    required = {}
    if keys:
        wide = {k: (box[k][0] / 100.0, box[k][1] * 100.0) if k not in ("mach", "temperature")
                else bounds(replace(study, facility=replace(study.facility, mach_range=(0.0, 1.0)))
                            if k == "mach" else study, k) for k in keys}
        try:
            free, free_out = _solve_one(model, base, keys, wide, bands, None)
            ok = all(abs(band_residual(b, free_out)) < MATCHED for b in bands)
            required = {k: free[k] if ok else math.nan for k in keys}
        except (ValueError, FloatingPointError):
            required = {k: math.nan for k in keys}

    limits = _limits(study, state, out)
    msgs, mismatch, binding, matched = _describe(state, out, keys, bands, limits, required)
    states = [out["static_pressure"], out["static_temperature"]]
    reason = ("non-finite set point (the solver found no state of the fluid model)"
              if not all(math.isfinite(v) for v in out.values() if isinstance(v, float) and v == v)
              or not all(math.isfinite(v) for v in states) else
              model.fluid.check_state(*states))
    if not reason and model.kind == "gas":  # the stagnation state too (liquid side at T0?)
        reason = model.fluid.check_state(out["stagnation_pressure"], out["stagnation_temperature"])
    if reason:
        msgs.append(f"The facility state is outside the {model.fluid.name} model: {reason}.")
    feasible = matched and all(lim.ok for lim in limits) and not reason
    for b in study.bands:
        if not b.solve:
            y = out[b.output]
            msgs.append(f"{b.group} is checked, not imposed: {b.output} = "
                        + (f"{y:+.4f}." if b.is_difference else f"{y:.4f}."))
    if study.band("mach") is None and model.kind == "gas":
        msgs.append(f"The Mach number is not matched: Ma_model - Ma_full = "
                    f"{out['mach_model'] - out['mach_full_scale']:+.4f}.")
    method = "exact" if len(keys) == len(bands) else "least squares"
    first = keys[0] if keys else ""
    return SetPoint(state, out, tuple(keys), required.get(first, math.nan), feasible, limits, msgs,
                    method, mismatch, binding, required, model.fluid.name, outside_model=reason or "")
