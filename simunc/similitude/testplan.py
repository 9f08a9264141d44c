"""Split-test plan when the facility cannot match the Reynolds number and the primary group together.

The primary group is the Mach number in a gas facility and the Froude number
in a liquid one (the groups of priority 1).  The plan, built from the same
set-point solver:

* run A: the primary group matched, at the highest Reynolds number the
  facility reaches (pressure up, temperature down in a gas; temperature up in
  water, the model as large as allowed when its scale is free);
* runs B: a Reynolds-number sweep at the matched primary group, from the
  lowest reachable Reynolds number up to run A, for the trend to extrapolate;
* run C: the Reynolds number matched with the primary group as close as the
  facility allows (when it can match it at all).

It reports the Reynolds range covered at the matched primary group against
the full-scale value and the extrapolation ratio ``Re_full / Re_A`` left.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np

from simunc.similitude.model import SimilitudeModel
from simunc.similitude.setpoint import MATCHED, SetPoint, band_residual, solve_state
from simunc.study.schema import Study
from simunc.units import number

#: Reynolds-number levels of the sweep (runs B), including the lowest and run A.
SWEEP_POINTS = 4
#: A sweep covering less than this factor of Reynolds number is too short to fit a trend
#: (common practice, no source).
TREND_FACTOR = 2.0


@dataclass(frozen=True)
class PlannedRun:
    """One run of the plan: its purpose, set point and achieved groups."""

    label: str
    purpose: str
    state: dict
    outputs: dict


@dataclass(frozen=True)
class TestPlan:
    """Split-test plan (empty ``runs`` when the set point already matches)."""

    primary: str
    runs: list = field(default_factory=list)
    reynolds_covered: tuple = (math.nan, math.nan)
    reynolds_full_scale: float = math.nan
    extrapolation_ratio: float = math.nan
    notes: list = field(default_factory=list)


def _keys(study: Study) -> list[str]:
    """Set-point variables the plan may move (the study's unknowns and the facility's levers)."""
    fac = study.facility
    keys = [k for k in study.unknowns if k != "fluid"]
    if fac.kind == "gas":
        levers = ["stagnation_pressure", "mach"]
        if fac.stagnation_temperature_range:
            levers.append("stagnation_temperature")
    else:
        levers = ["speed"] + (["temperature"] if fac.temperature_range else [])
    return keys + [k for k in levers if k not in keys]


def _primary(study: Study) -> list:
    """The bands of the primary group (solved, priority 1, not the Reynolds number)."""
    return [b for b in study.bands if b.solve and b.priority == 1 and b.group != "reynolds"]


def _sweep_keys(study: Study) -> list[str]:
    """The levers of a Reynolds sweep: the facility's, not the model's (its size and frequency
    stay at the set point)."""
    return [k for k in _keys(study) if k not in ("model_length", "frequency")]


def sweep_run(study: Study, model: SimilitudeModel, setpoint: SetPoint, reynolds: float,
              label: str) -> PlannedRun:
    """A Reynolds-sweep run: the primary group matched, the Reynolds number aimed at
    ``reynolds`` with the facility's levers (:func:`_sweep_keys`), the other solved groups
    after them."""
    re_band = study.band("reynolds")
    assert re_band is not None
    primary = _primary(study)
    others = [b for b in study.bands if b.solve and b.group != "reynolds" and b not in primary]
    aim = replace(re_band, target=reynolds / setpoint.outputs["reynolds_full_scale"], priority=2)
    state, out = solve_state(study, model, _sweep_keys(study), primary + [aim] + others)
    name = primary[0].group.capitalize() if primary else ""
    return PlannedRun(label, f"Reynolds sweep at {name} matched (Re = "
                             f"{number(out['reynolds_model'], 4)})", state, out)


def plan(study: Study, model: SimilitudeModel, setpoint: SetPoint) -> TestPlan:
    """Build the split-test plan for a set point that does not match every group."""
    re_band = study.band("reynolds")
    primary = _primary(study)
    name = primary[0].group.capitalize() if primary else ""
    if setpoint.feasible or re_band is None or not primary or all(
            abs(band_residual(b, setpoint.outputs)) < MATCHED for b in primary + [re_band]):
        return TestPlan(primary[0].group if primary else "")
    keys = _keys(study)
    others = [b for b in study.bands if b.solve and b.group != "reynolds" and b not in primary]
    re_fs = setpoint.outputs["reynolds_full_scale"]

    def run(label, purpose, bands, use=None):
        state, out = solve_state(study, model, use or keys, bands)
        return PlannedRun(label, purpose, state, out)

    sweep_keys = _sweep_keys(study)

    # A: primary matched, Reynolds number pushed as high as the limits allow.
    high = replace(re_band, target=1.0e6, priority=2)
    a = run("A", f"{name} matched, highest reachable Reynolds number", primary + [high] + others)
    re_a = a.outputs["reynolds_model"]
    notes = []
    if re_a >= re_fs * (1 - 1e-9):
        notes.append("The Reynolds number can be matched with the primary group; the set point "
                     "falls short for another reason (see the limits).")
    low = replace(re_band, target=1.0e-6, priority=2)
    b_low = run("B1", "lowest reachable Reynolds number", primary + [low] + others, sweep_keys)
    re_low = b_low.outputs["reynolds_model"]
    runs = [a]
    levels: np.ndarray | list[float]
    levels = np.geomspace(re_low, re_a, SWEEP_POINTS)[:-1] if re_a > re_low * (1 + 1e-6) else []
    for i, level in enumerate(levels):
        runs.append(sweep_run(study, model, setpoint, float(level), f"B{i + 1}"))
    # C: Reynolds number matched first, the primary group as close as it gets.
    c_bands = [replace(re_band, priority=1)] + [replace(b, priority=2) for b in primary] + others
    c = run("C", f"Reynolds number matched, {name} as close as the facility allows", c_bands)
    if abs(band_residual(re_band, c.outputs)) < MATCHED:
        runs.append(c)
    else:
        notes.append("No set point inside the facility limits matches the Reynolds number at any "
                     f"{name} number: no Reynolds-matched run (C).")
    # The Reynolds numbers covered are those of the runs made with the primary group matched.
    held = [r.outputs["reynolds_model"] for r in runs if r.label != "C" and all(
        abs(band_residual(b, r.outputs)) < MATCHED for b in primary)]
    if len(held) < len([r for r in runs if r.label != "C"]):
        notes.append(f"Some sweep runs could not hold the {name} number matched; they are not "
                     "counted in the covered range.")
    re_lo, re_hi = (min(held), max(held)) if held else (math.nan, math.nan)
    ratio = re_fs / re_hi if held else math.nan
    notes.append(f"Reynolds numbers covered at {name} matched: {number(re_lo, 4)} to "
                 f"{number(re_hi, 4)} against {number(re_fs, 4)} at full scale; extrapolation ratio Re_full / Re_A = {ratio:.3g} "
                 f"({math.log10(ratio):.2f} decades).")
    if held and re_hi < TREND_FACTOR * re_lo:
        lever = ("sweep the speed instead (runs off the matched Mach number, whose "
                 "compressibility effect the extrapolation then carries) or the model size"
                 if study.kind == "gas" else "test models of several sizes instead (a geosim "
                 "series) or add runs off the matched primary group")
        notes.append(f"The Reynolds sweep covers only a factor {re_hi / re_lo:.3g} of Reynolds "
                     f"number, too little to fit a trend (at least {TREND_FACTOR:g} wanted): "
                     f"the facility's levers at {name} matched barely move it; {lever}.")
    return TestPlan(primary[0].group, runs, (re_lo, re_hi), re_fs, ratio, notes)
