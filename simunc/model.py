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
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Mapping

import numpy as np

from . import flow, groups
from .fluids import Fluid


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
    """

    name: str
    dimension: str
    reading: str | None
    description: str


TARGETS: dict[str, Target] = {t.name: t for t in (
    Target("stagnation_pressure_indication", "pressure", "stagnation_pressure",
           "stagnation-pressure transducer error (true = set - e)"),
    Target("stagnation_pressure_control", "pressure", "stagnation_pressure",
           "stagnation-pressure control deviation (true = set + e)"),
    Target("stagnation_temperature_indication", "temperature_difference", "stagnation_temperature",
           "stagnation-temperature sensor error (true = set - e)"),
    Target("stagnation_temperature_control", "temperature_difference", "stagnation_temperature",
           "stagnation-temperature control deviation (true = set + e)"),
    Target("static_pressure_indication", "pressure", "static_pressure",
           "static-pressure transducer error, used for the Mach number (true = indicated - e)"),
    Target("mach_indication", "dimensionless", "mach_model",
           "Mach-number indication or calibration error (true = set - e)"),
    Target("mach_control", "dimensionless", "mach_model",
           "Mach-number control deviation (true = set + e)"),
    Target("model_reference_length", "length", "model_length",
           "model manufacturing deviation of the reference length (true = nominal + e)"),
    Target("viscosity_model", "dimensionless", None,
           "relative error of the viscosity model at the tunnel state (mu = mu_model (1 + e))"),
    Target("sutherland_constant", "temperature_difference", "sutherland",
           "Sutherland-constant deviation of the tunnel gas (and of full scale when it is the "
           "same gas)"),
    Target("full_scale_temperature", "temperature_difference", "full_scale_temperature",
           "full-scale static temperature deviation (offset from the stated atmosphere)"),
    Target("full_scale_speed", "speed", "full_scale_speed",
           "full-scale flight-speed deviation"),
    Target("full_scale_mach", "dimensionless", "mach_full_scale",
           "full-scale flight Mach-number deviation"),
)}

#: Nominal (set-point) keys the model reads, with their SI units.
NOMINAL_KEYS: dict[str, str] = {
    "stagnation_pressure": "Pa",
    "stagnation_temperature": "K",
    "mach": "1",
    "model_length": "m",
    "sutherland": "K",
    "full_scale_static_pressure": "Pa",
    "full_scale_static_temperature": "K",
    "full_scale_speed_or_mach": "m/s or 1",
    "full_scale_length": "m",
}

#: Output keys with their SI units and a label for reports.
OUTPUTS: dict[str, tuple[str, str]] = {
    "reynolds_ratio": ("1", "Reynolds-number ratio Re_model / Re_full_scale"),
    "mach_difference": ("1", "Mach-number difference Ma_model - Ma_full_scale"),
    "reynolds_model": ("1", "model Reynolds number"),
    "mach_model": ("1", "model (test-section) Mach number"),
    "reynolds_full_scale": ("1", "full-scale Reynolds number"),
    "mach_full_scale": ("1", "full-scale Mach number"),
    "dynamic_pressure": ("Pa", "test-section dynamic pressure q"),
    "speed": ("m/s", "test-section speed U"),
    "density": ("kg/m^3", "test-section density rho"),
    "viscosity": ("Pa s", "test-section viscosity mu"),
    "static_pressure": ("Pa", "test-section static pressure p"),
    "static_temperature": ("K", "test-section static temperature T"),
    "stagnation_pressure": ("Pa", "true stagnation pressure p0"),
    "stagnation_temperature": ("K", "true stagnation temperature T0"),
    "model_length": ("m", "true model reference length"),
    "full_scale_temperature": ("K", "full-scale static temperature"),
    "full_scale_speed": ("m/s", "full-scale speed"),
    "sutherland": ("K", "Sutherland constant used"),
}


@dataclass(frozen=True)
class SimilitudeModel:
    """Scale model in a facility against its full-scale condition.

    Parameters
    ----------
    gas : IdealGas
        Facility working gas.
    full_scale_gas : IdealGas
        Gas of the full-scale condition (air).
    mach_from : {"pressure_ratio", "indication"}
        How the test-section Mach number is obtained (see module docstring).
    full_scale_given : {"mach", "speed"}
        Whether ``full_scale_speed_or_mach`` is a Mach number (held when the
        temperature varies) or a speed [m/s].
    """

    gas: Fluid
    full_scale_gas: Fluid
    mach_from: str = "pressure_ratio"
    full_scale_given: str = "mach"

    def __call__(self, x: Mapping[str, object]) -> dict[str, np.ndarray]:
        """Evaluate the model.

        Parameters
        ----------
        x : mapping
            :data:`NOMINAL_KEYS` (floats) and any :data:`TARGETS` deviations
            (floats or arrays of one length, SI); absent deviations are 0.

        Returns
        -------
        dict of ndarray
            :data:`OUTPUTS`, broadcast to the common shape.
        """
        def d(name: str):
            return np.asarray(x.get(name, 0.0), dtype=float)

        g = self.gas
        gamma = g.gamma
        p0_set = np.asarray(x["stagnation_pressure"], dtype=float)
        mach_set = np.asarray(x["mach"], dtype=float)

        p0_indicated = p0_set + d("stagnation_pressure_control")
        p0 = p0_indicated - d("stagnation_pressure_indication")
        t0 = (np.asarray(x["stagnation_temperature"], dtype=float)
              - d("stagnation_temperature_indication") + d("stagnation_temperature_control"))
        mach_dev = d("mach_control") - d("mach_indication")
        if self.mach_from == "pressure_ratio":
            p_indicated = p0_indicated * flow.pressure_ratio(mach_set, gamma)
            p_true = p_indicated - d("static_pressure_indication")
            mach = flow.mach_from_pressure_ratio(p0 / p_true, gamma) + mach_dev
        else:
            mach = mach_set + mach_dev
        t = t0 * flow.temperature_ratio(mach, gamma)
        p = p0 * flow.pressure_ratio(mach, gamma)
        rho = g.density(p, t)
        a = g.speed_of_sound(p, t)
        speed = mach * a
        s = np.asarray(x["sutherland"], dtype=float) + d("sutherland_constant")
        mu = g.viscosity(p, t, sutherland=s) * (1.0 + d("viscosity_model"))
        length = np.asarray(x["model_length"], dtype=float) + d("model_reference_length")
        re_model = groups.reynolds(rho, speed, length, mu)

        fg = self.full_scale_gas
        t_fs = np.asarray(x["full_scale_static_temperature"], dtype=float) + d("full_scale_temperature")
        p_fs = np.asarray(x["full_scale_static_pressure"], dtype=float)
        a_fs = fg.speed_of_sound(p_fs, t_fs)
        given = np.asarray(x["full_scale_speed_or_mach"], dtype=float)
        if self.full_scale_given == "mach":
            mach_fs = given + d("full_scale_mach") + d("full_scale_speed") / a_fs
            speed_fs = mach_fs * a_fs
        else:
            speed_fs = given + d("full_scale_speed") + d("full_scale_mach") * a_fs
            mach_fs = groups.mach(speed_fs, a_fs)
        re_fs = groups.reynolds(fg.density(p_fs, t_fs), speed_fs,
                                np.asarray(x["full_scale_length"], dtype=float),
                                fg.viscosity(p_fs, t_fs, sutherland=s if fg == g else None))
        out = {
            "reynolds_ratio": re_model / re_fs,
            "mach_difference": mach - mach_fs,
            "reynolds_model": re_model,
            "mach_model": mach,
            "reynolds_full_scale": re_fs,
            "mach_full_scale": mach_fs,
            "dynamic_pressure": flow.dynamic_pressure(p, mach, gamma),
            "speed": speed,
            "density": rho,
            "viscosity": mu,
            "static_pressure": p,
            "static_temperature": t,
            "stagnation_pressure": p0,
            "stagnation_temperature": t0,
            "model_length": length,
            "full_scale_temperature": t_fs,
            "full_scale_speed": speed_fs,
            "sutherland": s,
        }
        shape = np.broadcast_shapes(*(v.shape for v in out.values()))
        return {k: np.broadcast_to(v, shape) for k, v in out.items()}
