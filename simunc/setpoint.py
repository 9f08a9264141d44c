"""Set-point solver: the facility state that reproduces the full-scale groups.

The Mach number, when matched, is set equal to the full-scale one (clipped to
the facility's Mach range).  The quantity named by ``match.solve_for``
(stagnation pressure, model scale or test-section speed) is then found by
root finding (:func:`scipy.optimize.brentq`) on the same
:class:`~simunc.model.SimilitudeModel` that the Monte Carlo uses, so that the
Reynolds-number ratio is 1.  When the root lies outside what the facility can
do, the nearest achievable value is used and the shortfall reported.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from scipy.optimize import brentq

from .errors import InfeasibleError
from .fluids.ideal_gas import AIR
from .model import SimilitudeModel
from .study import Study

#: Search brackets of the unknowns (wide on purpose; facility limits are applied after).
_BRACKETS = {
    "stagnation_pressure": (1.0, 1.0e10),   # Pa
    "model_length": (1.0e-6, 1.0e4),         # m
    "mach": (1.0e-4, 0.9999),                # -
}
_UNITS = {"stagnation_pressure": "Pa", "model_length": "m", "mach": "1"}
_UNKNOWN_KEY = {"stagnation_pressure": "stagnation_pressure", "model_scale": "model_length",
                "speed": "mach"}


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
        tol = 1e-12 * max(abs(self.bound), 1.0)
        return self.value <= self.bound + tol if self.side == "max" else self.value >= self.bound - tol


@dataclass(frozen=True)
class SetPoint:
    """Solved nominal state.

    Attributes
    ----------
    nominal : dict
        Nominal model inputs (:data:`simunc.model.NOMINAL_KEYS`), SI.
    outputs : dict
        Model outputs at the nominal state, SI floats.
    solve_for : str
        The solved quantity.
    required : float
        Value of the solved quantity (SI) that would match the Reynolds number
        exactly, ``nan`` when no value in the search range does.
    feasible : bool
        True when every facility limit holds and the groups are matched.
    limits : list of Limit
    messages : list of str
        Plain statements for the report (what binds, the shortfall).
    """

    nominal: dict
    outputs: dict
    solve_for: str
    required: float
    feasible: bool
    limits: list = field(default_factory=list)
    messages: list = field(default_factory=list)

    @property
    def reynolds_shortfall(self) -> float:
        """``Re_model / Re_full - 1`` at the set point (0 when matched)."""
        return self.outputs["reynolds_ratio"] - 1.0

    @property
    def mach_shortfall(self) -> float:
        return self.outputs["mach_difference"]


def build_model(study: Study) -> SimilitudeModel:
    """The similitude model configured for a study."""
    return SimilitudeModel(gas=study.facility.gas, full_scale_gas=AIR,
                           mach_from=study.facility.mach_from,
                           full_scale_given=study.full_scale.given)


def _q(value: float, unit: str) -> str:
    """A value with its unit for messages (no unit for dimensionless values)."""
    return f"{value:.6g} {unit}" if unit and unit != "1" else f"{value:.6g}"


def _scalar(out: dict) -> dict:
    return {k: float(np.asarray(v)) for k, v in out.items()}


def solve(study: Study, model: SimilitudeModel | None = None) -> SetPoint:
    """Solve the nominal set point of a study.

    Raises
    ------
    InfeasibleError
        When no value of the unknown in its (wide) search bracket matches the
        Reynolds number and no nearest point can be stated.
    """
    model = model or build_model(study)
    fs, fac = study.full_scale, study.facility
    nominal = {
        "stagnation_pressure": fac.stagnation_pressure,
        "stagnation_temperature": fac.stagnation_temperature,
        "mach": fac.mach,
        "model_length": (study.model_reference_length if study.model_reference_length is not None
                         else (study.model_scale * fs.reference_length
                               if study.model_scale is not None else None)),
        "sutherland": fac.gas.sutherland,
        "full_scale_static_pressure": fs.static_pressure,
        "full_scale_static_temperature": fs.static_temperature,
        "full_scale_speed_or_mach": fs.value,
        "full_scale_length": fs.reference_length,
    }
    messages: list[str] = []
    limits: list[Limit] = []
    mach_lo, mach_hi = fac.mach_range
    if study.band("mach") is not None:
        target = float(model(dict(nominal, mach=0.5, stagnation_pressure=1e5, model_length=1.0))[
            "mach_full_scale"])
        nominal["mach"] = min(max(target, mach_lo), mach_hi)
        if nominal["mach"] != target:
            messages.append(
                f"The full-scale Mach number {target:.4f} is outside the facility's Mach range "
                f"[{mach_lo:g}, {mach_hi:g}]; the nearest achievable Mach number "
                f"{nominal['mach']:.4f} is used.")

    key = _UNKNOWN_KEY[study.solve_for]
    lo, hi = _BRACKETS[key]
    log = key != "mach"

    def residual(v: float) -> float:
        x = math.exp(v) if log else v
        return float(model(dict(nominal, **{key: x}))["reynolds_ratio"]) - 1.0

    a, b = (math.log(lo), math.log(hi)) if log else (lo, hi)
    fa, fb = residual(a), residual(b)
    if key == "stagnation_pressure":
        bounds = [("min", fac.stagnation_pressure_range[0]), ("max", fac.stagnation_pressure_range[1])]
    elif key == "model_length":
        bounds = [("max", fac.max_model_reference_length)] if fac.max_model_reference_length else []
    else:
        bounds = [("min", mach_lo), ("max", mach_hi)]
    if fa * fb > 0.0:
        if key != "mach":
            raise InfeasibleError(f"no {study.solve_for.replace('_', ' ')} between {lo:g} and "
                                  f"{hi:g} (SI) matches the Reynolds number")
        # Re(Ma) is monotonic: every subsonic Mach number falls short (or overshoots).
        required = math.nan
        value = mach_hi if fb < 0.0 else max(mach_lo, lo)
        messages.append(
            "No subsonic test-section Mach number matches the Reynolds number; the facility's "
            f"{'highest' if fb < 0.0 else 'lowest'} Mach number {value:g} is used.")
    else:
        root = brentq(residual, a, b, xtol=1e-14, rtol=1e-13, maxiter=200)
        required = math.exp(root) if log else root
        value = required

    # Facility limits on the solved quantity: clamp to the nearest achievable value.
    clamped = value
    for side, bound in bounds:
        limits.append(Limit(key, side, bound, value, _UNITS[key]))
        clamped = min(clamped, bound) if side == "max" else max(clamped, bound)
    nominal[key] = clamped

    # Limits on the given quantities (reported, not changed).
    if key != "stagnation_pressure":
        for side, bound in zip(("min", "max"), fac.stagnation_pressure_range):
            limits.append(Limit("stagnation_pressure", side, bound, nominal["stagnation_pressure"], "Pa"))
    if key != "model_length" and fac.max_model_reference_length:
        limits.append(Limit("model_length", "max", fac.max_model_reference_length,
                            nominal["model_length"], "m"))
    if key != "mach":
        limits.append(Limit("mach", "min", mach_lo, nominal["mach"], "1"))
        limits.append(Limit("mach", "max", mach_hi, nominal["mach"], "1"))

    outputs = _scalar(model(nominal))
    for lim in limits:
        if not lim.ok:
            word = "above the facility maximum" if lim.side == "max" else "below the facility minimum"
            what = "required" if lim.quantity == key else "given"
            messages.append(f"The {what} {lim.quantity.replace('_', ' ')} {_q(lim.value, lim.unit)} is "
                            f"{word} {_q(lim.bound, lim.unit)}.")
    if clamped != value or math.isnan(required):
        messages.append(f"Nearest achievable set point: {key.replace('_', ' ')} = "
                        f"{_q(clamped, _UNITS[key])}, "
                        f"giving Re_model / Re_full = {outputs['reynolds_ratio']:.4f} "
                        f"(Reynolds shortfall {100 * (outputs['reynolds_ratio'] - 1):+.2f} %).")
    matched = abs(outputs["reynolds_ratio"] - 1.0) < 1e-9
    if study.band("mach") is not None:
        matched = matched and abs(outputs["mach_difference"]) < 1e-9
    feasible = matched and all(lim.ok for lim in limits)
    if study.band("mach") is not None and key == "mach":
        messages.append("With match.solve_for = 'speed' the Mach number follows from the Reynolds "
                        "match; the Mach band is checked, not imposed: Ma_model - Ma_full = "
                        f"{outputs['mach_difference']:+.4f}.")
    if study.band("mach") is None:
        messages.append(f"The Mach number is not matched: Ma_model - Ma_full = "
                        f"{outputs['mach_difference']:+.4f}.")
    return SetPoint(nominal, outputs, study.solve_for, required, feasible, limits, messages)
