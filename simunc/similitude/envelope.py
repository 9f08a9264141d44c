"""What the facility can reach: the Reynolds-number band at each Mach (or Froude) number.

The map is the similitude model evaluated on a grid of the facility's free
set-point variables (gas: Mach number x stagnation pressure x stagnation
temperature; liquid: speed x temperature) for a given model reference length,
with the dynamic-pressure limit applied and states outside the fluid model
dropped.  At each value of the abscissa the lowest and highest reachable
Reynolds numbers bound the region.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass
from typing import cast

import numpy as np

from simunc.similitude.model import SimilitudeModel
from simunc.similitude.setpoint import SetPoint, largest_model, nominal_state
from simunc.study.schema import Study

_N_X = 61
_N_T = 9


@dataclass(frozen=True)
class Envelope:
    """Reachable Reynolds-number band along the abscissa, for one or more model sizes.

    Attributes
    ----------
    abscissa : str
        ``"mach"`` (gas facility) or ``"froude"`` (liquid facility).
    x : ndarray
        Abscissa grid.
    bands : dict
        Label -> (model reference length [m], Re_low [ndarray], Re_high [ndarray]);
        NaN where nothing is reachable.
    target : tuple
        Full-scale (abscissa, Reynolds number).
    setpoint : tuple
        Set point (abscissa, Reynolds number).
    """

    abscissa: str
    x: np.ndarray
    bands: dict[str, tuple[float, np.ndarray, np.ndarray]]
    target: tuple[float, float]
    setpoint: tuple[float, float]


def _grid(study: Study):
    fac = study.facility
    if fac.kind == "gas":
        lo, hi = max(fac.mach_range[0], 0.02), min(fac.mach_range[1], 0.99)
        # the readers require the temperature, or its range when it is solved for
        tr = fac.stagnation_temperature_range or cast(
            "tuple[float, float]", (fac.stagnation_temperature,) * 2)
        return "mach", np.linspace(lo, hi, _N_X), np.linspace(tr[0], tr[1], _N_T if tr[0] < tr[1] else 1)
    lo, hi = fac.speed_range or (0.1 * _target_speed(study), 2.0 * _target_speed(study))
    tr = fac.temperature_range or cast("tuple[float, float]", (fac.temperature,) * 2)
    return "speed", np.linspace(lo, hi, _N_X), np.linspace(tr[0], tr[1], _N_T if tr[0] < tr[1] else 1)


def _target_speed(study: Study) -> float:
    return study.full_scale.value


def reynolds_band(study: Study, model: SimilitudeModel, length: float) -> tuple[np.ndarray, ...]:
    """Lowest and highest reachable Reynolds number along the abscissa for one model length.

    Returns
    -------
    x, re_low, re_high : ndarray
        Abscissa values (Mach or Froude number) and the Reynolds band.
    """
    fac = study.facility
    kind, xs, temps = _grid(study)
    base = nominal_state(study, model.fluid)
    base["model_length"] = length
    if kind == "mach":
        pr = fac.stagnation_pressure_range
        assert pr is not None  # the reader requires it of a gas facility
        m, t0, p0 = np.meshgrid(xs, temps, np.array(pr), indexing="ij")
        state = dict(base, mach=m, stagnation_temperature=t0, stagnation_pressure=p0)
        out = model(state)
        q = np.asarray(out["dynamic_pressure"])
        if fac.max_dynamic_pressure:
            cap = np.minimum(1.0, fac.max_dynamic_pressure / q)
            state["stagnation_pressure"] = np.maximum(p0 * cap, pr[0])
            out = model(state)
        abscissa = np.asarray(out["mach_model"])[:, 0, 0]
    else:
        u, t = np.meshgrid(xs, temps, indexing="ij")
        state = dict(base, speed=u, temperature=t)
        out = model(state)
        ok_q = np.ones_like(u, dtype=bool) if not fac.max_dynamic_pressure else (
            np.asarray(out["dynamic_pressure"]) <= fac.max_dynamic_pressure)
        abscissa = np.asarray(out["froude_model"])[:, 0]
    re = np.array(out["reynolds_model"], dtype=float)
    valid = np.ones(re.shape, dtype=bool)
    flat_p = np.asarray(out["static_pressure"]).ravel()
    flat_t = np.asarray(out["static_temperature"]).ravel()
    if model.fluid.check_state(flat_p, flat_t):  # some state is outside: find which, point by point
        valid = np.array([model.fluid.check_state(pp, tt) is None for pp, tt in zip(flat_p, flat_t)]
                         ).reshape(re.shape)
    if kind == "speed":
        valid &= ok_q
    re[~valid] = np.nan
    axes = tuple(range(1, re.ndim))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)  # all-NaN columns: nothing reachable
        return abscissa, np.nanmin(re, axis=axes), np.nanmax(re, axis=axes)


def envelope(study: Study, model: SimilitudeModel, setpoint: SetPoint) -> Envelope:
    """The facility's reachable Reynolds band at the set point's model size and at the largest."""
    length = setpoint.nominal["model_length"]
    kind = "mach" if study.kind == "gas" else "froude"
    x, lo, hi = reynolds_band(study, model, length)
    bands = {f"model {length * 1e3:.1f} mm": (length, lo, hi)}
    big = largest_model(study)
    if big and big > length * (1 + 1e-9):
        _, lo2, hi2 = reynolds_band(study, model, big)
        bands[f"largest model {big * 1e3:.1f} mm"] = (big, lo2, hi2)
    o = setpoint.outputs
    return Envelope(kind, x, bands, (o[f"{kind}_full_scale"], o["reynolds_full_scale"]),
                    (o[f"{kind}_model"], o["reynolds_model"]))
