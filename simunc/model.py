"""The similitude model: one vectorized function from set point and deviations to outputs.

Every analysis (nominal solve, Monte Carlo, Sobol, later sweeps and
allocation) calls :meth:`SimilitudeModel.__call__` with a dict of floats or
equal-length arrays and gets a dict of arrays back.  There is no other copy of
the physics.

Measurement model
-----------------
The operator brings the *indicated* values to the set point.  Then, for a
quantity ``x`` with set point ``x_set``::

    x_true = x_set - e_indication + e_control

(an indication error ``e`` makes the instrument read ``x_true + e``; a control
deviation is the flow's own wander about the setting).  With
``mach_from = "pressure_ratio"`` the Mach number is inferred from the indicated
stagnation and static pressures, so errors of both transducers move the true
Mach number; ``mach_indication`` then stands for the test-section calibration.
With ``mach_from = "indication"`` the Mach number has an instrument of its own
and only the Mach targets move it.

Facilities
----------
A *gas* facility is set by stagnation pressure, stagnation temperature and
Mach number; the static state follows isentropically from the fluid model.  A
*liquid* facility (water tunnel, towing tank) is set by speed, static pressure
and temperature.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Mapping

import numpy as np

from . import groups
from .fluids import Fluid

#: Standard acceleration of gravity [m s^-2] (CGPM 1901; ISO 80000-3).
GRAVITY = 9.80665


@dataclass(frozen=True)
class Target:
    """A quantity an uncertain input can perturb.

    Attributes
    ----------
    name : str
        Key used in studies (``perturbs = "..."``) and in the model's input dict.
    dimension : str
        Dimension of the input's size (see :data:`simunc.units.DIMENSIONS`).
    reading : str or None
        Nominal model output whose value a ``%``-of-reading size refers to;
        ``None`` where the size is itself a fraction.
    description : str
        One line for reports.
    modes : tuple of str
        Facility kinds (``"gas"``, ``"liquid"``) where the target applies.
    parameter : str or None
        Fluid-model parameter the deviation is added to, if any.
    """

    name: str
    dimension: str
    reading: str | None
    description: str
    modes: tuple = ("gas", "liquid")
    parameter: str | None = None


_GAS = ("gas",)
_LIQ = ("liquid",)

TARGETS: dict[str, Target] = {t.name: t for t in (
    Target("stagnation_pressure_indication", "pressure", "stagnation_pressure",
           "stagnation-pressure transducer error (true = set - e)", _GAS),
    Target("stagnation_pressure_control", "pressure", "stagnation_pressure",
           "stagnation-pressure control deviation (true = set + e)", _GAS),
    Target("stagnation_temperature_indication", "temperature_difference", "stagnation_temperature",
           "stagnation-temperature sensor error (true = set - e)", _GAS),
    Target("stagnation_temperature_control", "temperature_difference", "stagnation_temperature",
           "stagnation-temperature control deviation (true = set + e)", _GAS),
    Target("static_pressure_indication", "pressure", "static_pressure",
           "static-pressure transducer error (gas: used for the Mach number; true = indicated - e)"),
    Target("static_pressure_control", "pressure", "static_pressure",
           "static-pressure control deviation of a liquid facility (true = set + e)", _LIQ),
    Target("mach_indication", "dimensionless", "mach_model",
           "Mach-number indication or calibration error (true = set - e)", _GAS),
    Target("mach_control", "dimensionless", "mach_model",
           "Mach-number control deviation (true = set + e)", _GAS),
    Target("speed_indication", "speed", "speed",
           "speed indication error of a liquid facility (true = set - e)", _LIQ),
    Target("speed_control", "speed", "speed",
           "speed control deviation of a liquid facility (true = set + e)", _LIQ),
    Target("temperature_indication", "temperature_difference", "static_temperature",
           "liquid temperature sensor error (true = set - e)", _LIQ),
    Target("temperature_control", "temperature_difference", "static_temperature",
           "liquid temperature deviation (true = set + e)", _LIQ),
    Target("frequency_indication", "frequency", "frequency",
           "model oscillation-frequency error (true = set - e)"),
    Target("model_reference_length", "length", "model_length",
           "model manufacturing deviation of the reference length (true = nominal + e)"),
    Target("viscosity_model", "dimensionless", None,
           "relative error of the viscosity model at the facility state (mu = mu_model (1 + e))"),
    Target("density_model", "dimensionless", None,
           "relative error of the density model at the facility state (rho = rho_model (1 + e))"),
    Target("sutherland_constant", "temperature_difference", "sutherland",
           "Sutherland-constant deviation of the facility gas (and of full scale when it is the "
           "same gas)", _GAS, "sutherland"),
    Target("water_vapour_fraction", "dimensionless", "vapour_mole_fraction",
           "water-vapour mole fraction deviation of moist air", _GAS, "vapour_mole_fraction"),
    Target("full_scale_temperature", "temperature_difference", "full_scale_temperature",
           "full-scale static temperature deviation (offset from the stated condition)"),
    Target("full_scale_speed", "speed", "full_scale_speed", "full-scale speed deviation"),
    Target("full_scale_mach", "dimensionless", "mach_full_scale",
           "full-scale Mach-number deviation"),
    Target("full_scale_frequency", "frequency", "full_scale_frequency",
           "full-scale frequency deviation"),
)}

#: Similarity groups the model computes: name -> (label, "ratio" or "difference").
GROUPS: dict[str, tuple[str, str]] = {
    "reynolds": ("Reynolds number rho U L / mu", "ratio"),
    "mach": ("Mach number U / a", "difference"),
    "froude": ("Froude number U / sqrt(g L)", "ratio"),
    "strouhal": ("Strouhal number f L / U", "ratio"),
    "weber": ("Weber number rho U^2 L / sigma", "ratio"),
    "prandtl": ("Prandtl number mu cp / k", "ratio"),
    "isentropic_exponent": ("ratio of specific heats (isentropic exponent)", "ratio"),
    "euler": ("Euler number p / (rho U^2)", "ratio"),
    "cavitation": ("cavitation number (p - p_v) / (rho U^2 / 2)", "ratio"),
}

#: Quantities a user-defined group may use, with their SI units.
QUANTITIES: dict[str, str] = {
    "density": "kg/m^3", "speed": "m/s", "length": "m", "viscosity": "Pa*s",
    "kinematic_viscosity": "m^2/s", "static_pressure": "Pa", "static_temperature": "K",
    "speed_of_sound": "m/s", "dynamic_pressure": "Pa", "gravity": "m/s^2", "frequency": "Hz",
}


@dataclass(frozen=True)
class CustomGroup:
    """A user-defined group: the product of named :data:`QUANTITIES` to given powers."""

    name: str
    powers: Mapping[str, float]

    def evaluate(self, q: Mapping[str, np.ndarray]) -> np.ndarray:
        out = 1.0
        for k, e in self.powers.items():
            out = out * np.asarray(q[k], dtype=float) ** e
        return np.asarray(out, dtype=float)


def output_key(group: str) -> str:
    """The output compared with a group's tolerance band (ratio or difference)."""
    kind = GROUPS[group][1] if group in GROUPS else "ratio"
    return f"{group}_difference" if kind == "difference" else f"{group}_ratio"


#: Output keys with their SI units and a label for reports (groups add their own three).
OUTPUTS: dict[str, tuple[str, str]] = {
    "dynamic_pressure": ("Pa", "facility dynamic pressure q"),
    "speed": ("m/s", "facility speed U"),
    "density": ("kg/m^3", "facility density rho"),
    "viscosity": ("Pa s", "facility viscosity mu"),
    "static_pressure": ("Pa", "facility static pressure p"),
    "static_temperature": ("K", "facility static temperature T"),
    "stagnation_pressure": ("Pa", "true stagnation pressure p0"),
    "stagnation_temperature": ("K", "true stagnation temperature T0"),
    "model_length": ("m", "true model reference length"),
    "frequency": ("Hz", "model frequency"),
    "full_scale_temperature": ("K", "full-scale static temperature"),
    "full_scale_speed": ("m/s", "full-scale speed"),
    "full_scale_frequency": ("Hz", "full-scale frequency"),
    "sutherland": ("K", "Sutherland constant used"),
    "vapour_mole_fraction": ("1", "water-vapour mole fraction"),
}


def describe_output(key: str) -> tuple[str, str]:
    """SI unit and report label of an output key (flow quantities and group outputs).

    >>> describe_output("reynolds_ratio")
    ('1', 'Reynolds number rho U L / mu: model / full scale')
    """
    if key in OUTPUTS:
        return OUTPUTS[key]
    for suffix, text in (("_ratio", "model / full scale"), ("_difference", "model - full scale"),
                         ("_full_scale", "full scale"), ("_model", "model")):
        if key.endswith(suffix):
            name = key[: -len(suffix)]
            label = GROUPS[name][0] if name in GROUPS else f"user group {name}"
            return "1", f"{label}: {text}"
    return "", key


@dataclass(frozen=True)
class SimilitudeModel:
    """Scale model in a facility against its full-scale condition.

    Parameters
    ----------
    fluid : Fluid
        Facility working fluid; its ``kind`` ("gas" or "liquid") sets the
        facility's set-point variables.
    full_scale_fluid : Fluid
        Fluid of the full-scale condition.
    mach_from : {"pressure_ratio", "indication"}
        How a gas facility's Mach number is obtained (see module docstring).
    full_scale_given : {"mach", "speed"}
        Whether ``full_scale_speed_or_mach`` is a Mach number (held when the
        temperature varies) or a speed [m/s].
    custom_groups : tuple of CustomGroup
    """

    fluid: Fluid
    full_scale_fluid: Fluid
    mach_from: str = "pressure_ratio"
    full_scale_given: str = "mach"
    custom_groups: tuple = field(default=())

    @property
    def kind(self) -> str:
        return self.fluid.kind

    def _fluid_params(self, fluid: Fluid, x, d) -> dict:
        params = {}
        for name in getattr(fluid, "parameters", ()):
            if name in x:
                dev = sum((d(t.name) for t in TARGETS.values() if t.parameter == name), 0.0)
                params[name] = np.asarray(x[name], dtype=float) + dev
        return params

    def _facility(self, x, d) -> dict:
        f = self.fluid
        params = self._fluid_params(f, x, d)
        if f.kind == "gas":
            p0_set = np.asarray(x["stagnation_pressure"], dtype=float)
            t0_set = np.asarray(x["stagnation_temperature"], dtype=float)
            mach_set = np.asarray(x["mach"], dtype=float)
            p0_ind = p0_set + d("stagnation_pressure_control")
            p0 = p0_ind - d("stagnation_pressure_indication")
            t0_ind = t0_set + d("stagnation_temperature_control")
            t0 = t0_ind - d("stagnation_temperature_indication")
            mach_dev = d("mach_control") - d("mach_indication")
            if self.mach_from == "pressure_ratio":
                p_ind = f.static_state(p0_ind, t0_ind, mach_set, **params)[0]
                p_true = p_ind - d("static_pressure_indication")
                mach = f.mach_from_pressures(p0, t0, p_true, **params) + mach_dev
            else:
                mach = mach_set + mach_dev
            p, t = f.static_state(p0, t0, mach, **params)
            a = f.speed_of_sound(p, t, **params)
            speed = mach * a
            rho = f.density(p, t, **params) * (1.0 + d("density_model"))
        else:
            speed = (np.asarray(x["speed"], dtype=float) - d("speed_indication")
                     + d("speed_control"))
            p = (np.asarray(x["static_pressure"], dtype=float) - d("static_pressure_indication")
                 + d("static_pressure_control"))
            t = (np.asarray(x["temperature"], dtype=float) - d("temperature_indication")
                 + d("temperature_control"))
            a = f.speed_of_sound(p, t, **params)
            mach = speed / a
            rho = f.density(p, t, **params) * (1.0 + d("density_model"))
            p0 = p + 0.5 * rho * speed**2
            t0 = t
        mu = f.viscosity(p, t, **params) * (1.0 + d("viscosity_model"))
        return {"fluid": f, "params": params, "p": p, "t": t, "p0": p0, "t0": t0, "rho": rho,
                "a": a, "mu": mu, "speed": speed, "mach": mach}

    def _full_scale(self, x, d, facility_params) -> dict:
        fg = self.full_scale_fluid
        params = {k: v for k, v in facility_params.items() if fg is self.fluid}
        t = np.asarray(x["full_scale_static_temperature"], dtype=float) + d("full_scale_temperature")
        p = np.asarray(x["full_scale_static_pressure"], dtype=float)
        a = fg.speed_of_sound(p, t, **params)
        given = np.asarray(x["full_scale_speed_or_mach"], dtype=float)
        if self.full_scale_given == "mach":
            mach = given + d("full_scale_mach") + d("full_scale_speed") / a
            speed = mach * a
        else:
            speed = given + d("full_scale_speed") + d("full_scale_mach") * a
            mach = groups.mach(speed, a)
        return {"fluid": fg, "params": params, "p": p, "t": t, "rho": fg.density(p, t, **params),
                "a": a, "mu": fg.viscosity(p, t, **params), "speed": speed, "mach": mach}

    @staticmethod
    def _groups(s: dict, length, frequency) -> dict:
        f, params = s["fluid"], s["params"]
        rho, u, mu, p, t = s["rho"], s["speed"], s["mu"], s["p"], s["t"]
        g = {"reynolds": groups.reynolds(rho, u, length, mu), "mach": s["mach"],
             "froude": u / np.sqrt(GRAVITY * length),
             "euler": p / (rho * u**2)}
        if frequency is not None:
            g["strouhal"] = frequency * length / u
        if hasattr(f, "specific_heat_cp") and hasattr(f, "thermal_conductivity"):
            g["prandtl"] = mu * f.specific_heat_cp(p, t, **params) / f.thermal_conductivity(p, t, **params)
        if f.kind == "gas":
            g["isentropic_exponent"] = f.isentropic_exponent(p, t, **params)
        else:
            g["cavitation"] = (p - f.vapour_pressure(t)) / (0.5 * rho * u**2)
            g["weber"] = rho * u**2 * length / f.surface_tension(t)
        return g

    @staticmethod
    def _quantities(s: dict, length, frequency) -> dict:
        return {"density": s["rho"], "speed": s["speed"], "length": length, "viscosity": s["mu"],
                "kinematic_viscosity": s["mu"] / s["rho"], "static_pressure": s["p"],
                "static_temperature": s["t"], "speed_of_sound": s["a"],
                "dynamic_pressure": 0.5 * s["rho"] * s["speed"] ** 2, "gravity": GRAVITY,
                "frequency": np.nan if frequency is None else frequency}

    def __call__(self, x: Mapping[str, object]) -> dict[str, np.ndarray]:
        """Evaluate the model.

        Parameters
        ----------
        x : mapping
            Set-point values (gas: ``stagnation_pressure``, ``stagnation_temperature``,
            ``mach``; liquid: ``speed``, ``static_pressure``, ``temperature``), the
            ``model_length``, the full-scale condition (``full_scale_static_pressure``,
            ``full_scale_static_temperature``, ``full_scale_speed_or_mach``,
            ``full_scale_length``), optionally ``frequency`` and
            ``full_scale_frequency_nominal``, fluid parameters (e.g. ``sutherland``), and
            any :data:`TARGETS` deviations (floats or arrays of one length, SI);
            absent deviations are 0.

        Returns
        -------
        dict of ndarray
            Flow quantities of :data:`OUTPUTS` and, per group, ``<group>_model``,
            ``<group>_full_scale`` and ``<group>_ratio`` (``mach_difference``
            for the Mach number), broadcast to the common shape.
        """
        def d(name: str):
            v = x.get(name)
            return 0.0 if v is None else np.asarray(v, dtype=float)

        fac = self._facility(x, d)
        fs = self._full_scale(x, d, fac["params"])
        length = np.asarray(x["model_length"], dtype=float) + d("model_reference_length")
        fs_length = np.asarray(x["full_scale_length"], dtype=float)
        freq = fs_freq = None
        if x.get("frequency") is not None:
            freq = np.asarray(x["frequency"], dtype=float) - d("frequency_indication")
        if x.get("full_scale_frequency_nominal") is not None:
            fs_freq = (np.asarray(x["full_scale_frequency_nominal"], dtype=float)
                       + d("full_scale_frequency"))

        out = {
            "dynamic_pressure": 0.5 * fac["rho"] * fac["speed"] ** 2,
            "speed": fac["speed"], "density": fac["rho"], "viscosity": fac["mu"],
            "static_pressure": fac["p"], "static_temperature": fac["t"],
            "stagnation_pressure": fac["p0"], "stagnation_temperature": fac["t0"],
            "model_length": length, "full_scale_temperature": fs["t"],
            "full_scale_speed": fs["speed"],
        }
        if freq is not None:
            out["frequency"] = freq
        if fs_freq is not None:
            out["full_scale_frequency"] = fs_freq
        for name, v in fac["params"].items():
            out[name] = v
        gm = self._groups(fac, length, freq if fs_freq is not None else None)
        gf = self._groups(fs, fs_length, fs_freq if freq is not None else None)
        for name in GROUPS:
            if name in gm and name in gf:
                out[f"{name}_model"], out[f"{name}_full_scale"] = gm[name], gf[name]
                if GROUPS[name][1] == "difference":
                    out[f"{name}_difference"] = gm[name] - gf[name]
                else:
                    out[f"{name}_ratio"] = gm[name] / gf[name]
        if self.custom_groups:
            qm = self._quantities(fac, length, freq)
            qf = self._quantities(fs, fs_length, fs_freq)
            for cg in self.custom_groups:
                vm, vf = cg.evaluate(qm), cg.evaluate(qf)
                out[f"{cg.name}_model"], out[f"{cg.name}_full_scale"] = vm, vf
                out[f"{cg.name}_ratio"] = vm / vf
        arrays = {k: np.asarray(v, dtype=float) for k, v in out.items()}
        shape = np.broadcast_shapes(*(v.shape for v in arrays.values()))
        return {k: np.broadcast_to(v, shape) for k, v in arrays.items()}
