"""What the facility can reach: the Reynolds-number band at each Mach (or Froude) number.

The map is the similitude model evaluated on a grid of the facility's free
set-point variables (gas: Mach number x stagnation pressure x stagnation
temperature; liquid: speed x temperature) for a given model reference length,
with the dynamic-pressure limit applied and states outside the fluid model
dropped.  At each value of the abscissa the lowest and highest reachable
Reynolds numbers bound the region.

A liquid study that matches the cavitation number also gets the reachable
cavitation-number band against the speed (:func:`cavitation_band`): the same
model on a grid of speed x temperature x static pressure (the facility's
static-pressure range, else its set value).
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
    cavitation : Cavitation or None
        The reachable cavitation-number band against the speed (a liquid study matching the
        cavitation number), else None.
    """

    abscissa: str
    x: np.ndarray
    bands: dict[str, tuple[float, np.ndarray, np.ndarray]]
    target: tuple[float, float]
    setpoint: tuple[float, float]
    cavitation: Cavitation | None = None


@dataclass(frozen=True)
class Cavitation:
    """Reachable cavitation number against the facility speed, for one or more model sizes.

    Attributes
    ----------
    speed : ndarray
        Speed grid [m/s] (the model's ``speed`` output along the facility's speed range).
    bands : dict
        Label -> (model reference length [m], sigma_low [ndarray], sigma_high [ndarray]); NaN
        where nothing is reachable.
    target : float
        Full-scale cavitation number.
    setpoint : tuple
        Set point (speed [m/s], cavitation number).
    """

    speed: np.ndarray
    bands: dict[str, tuple[float, np.ndarray, np.ndarray]]
    target: float
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
    valid = _inside_fluid(model, out, re.shape)
    if kind == "speed":
        valid &= ok_q
    return (abscissa, *_low_high(re, valid))


def _inside_fluid(model: SimilitudeModel, out, shape) -> np.ndarray:
    """Which grid states the facility fluid's model accepts."""
    flat_p = np.asarray(out["static_pressure"]).ravel()
    flat_t = np.asarray(out["static_temperature"]).ravel()
    if model.fluid.check_state(flat_p, flat_t):  # some state is outside: find which, point by point
        return np.array([model.fluid.check_state(pp, tt) is None for pp, tt in zip(flat_p, flat_t)]
                        ).reshape(shape)
    return np.ones(shape, dtype=bool)


def _low_high(values: np.ndarray, valid: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Lowest and highest valid value over every grid axis but the first."""
    values = np.array(values, dtype=float)
    values[~valid] = np.nan
    axes = tuple(range(1, values.ndim))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)  # all-NaN columns: nothing reachable
        return np.nanmin(values, axis=axes), np.nanmax(values, axis=axes)


def cavitation_band(study: Study, model: SimilitudeModel, length: float
                    ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Lowest and highest reachable cavitation number along the speed for one model length
    (a liquid facility whose model forms the cavitation number).

    The model (:class:`~simunc.similitude.model.SimilitudeModel`, which calls
    :func:`simunc.physics.groups.cavitation_number`) on the grid speed x temperature x static
    pressure, the last two over the facility's ranges (else their set values), with the
    dynamic-pressure limit and the fluid model's range applied.

    Returns
    -------
    speed, sigma_low, sigma_high : ndarray
        Speed [m/s] and the band of the cavitation number.
    """
    fac = study.facility
    _, xs, temps = _grid(study)
    base = nominal_state(study, model.fluid)
    base["model_length"] = length
    pressures = np.array(fac.static_pressure_range or (base["static_pressure"],), dtype=float)
    u, t, p = np.meshgrid(xs, temps, pressures, indexing="ij")
    out = model(dict(base, speed=u, temperature=t, static_pressure=p))
    sigma = np.asarray(out["cavitation_model"], dtype=float)
    valid = _inside_fluid(model, out, sigma.shape)
    if fac.max_dynamic_pressure:
        valid &= np.asarray(out["dynamic_pressure"]) <= fac.max_dynamic_pressure
    speed = np.broadcast_to(np.asarray(out["speed"], dtype=float), sigma.shape)[:, 0, 0]
    return (np.array(speed), *_low_high(sigma, valid))


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
    cavitation = None
    if study.kind == "liquid" and any(b.group == "cavitation" for b in study.bands):
        sigma = {}
        for label, (size, _, _) in bands.items():
            speed, s_lo, s_hi = cavitation_band(study, model, size)
            sigma[label] = (size, s_lo, s_hi)
        cavitation = Cavitation(speed, sigma, float(o["cavitation_full_scale"]),
                                (float(o["speed"]), float(o["cavitation_model"])))
    return Envelope(kind, x, bands, (o[f"{kind}_full_scale"], o["reynolds_full_scale"]),
                    (o[f"{kind}_model"], o["reynolds_model"]), cavitation)
