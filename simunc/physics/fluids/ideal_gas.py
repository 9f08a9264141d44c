"""Perfect gas with Sutherland viscosity and conductivity laws.

References
----------
.. [1] U.S. Standard Atmosphere, 1976, NOAA-S/T 76-1562: R = 8314.32 / 28.9644
   J kg^-1 K^-1, gamma = 1.4, Sutherland beta = 1.458e-6 kg m^-1 s^-1 K^-1/2 and
   S = 110.4 K (eq. 51).
.. [2] F. M. White, *Viscous Fluid Flow*, 3rd ed., McGraw-Hill, 2006, eqs. (1-36),
   (1-42) and Tables 1-2, 1-3 (Sutherland's laws about a reference temperature).
.. [3] Ames Research Staff, NACA Report 1135, 1953, eqs. 43-45.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from simunc.physics import flow

#: Reference temperature of the viscosity and conductivity laws [K] ([2], Table 1-2).
T_REF = 273.15


@dataclass(frozen=True)
class IdealGas:
    """Calorically perfect gas with Sutherland's viscosity law.

    Attributes
    ----------
    name : str
        Short name used in studies.
    gas_constant : float
        Specific gas constant R [J kg^-1 K^-1].
    gamma : float
        Ratio of specific heats [-].
    mu_ref : float
        Viscosity at :data:`T_REF` [Pa s].
    sutherland : float
        Sutherland constant S [K].
    k_ref, sutherland_k : float
        Thermal conductivity at :data:`T_REF` [W m^-1 K^-1] and its Sutherland
        constant [K].
    description : str
    stated_uncertainty : dict
        Relative standard uncertainties of the property model.
    """

    name: str
    gas_constant: float
    gamma: float
    mu_ref: float
    sutherland: float
    k_ref: float
    sutherland_k: float
    description: str = ""
    stated_uncertainty: dict[str, float] = field(default_factory=dict)
    kind: str = "gas"
    parameters: tuple[str, ...] = ("sutherland",)

    def density(self, p, t, **params):
        """Density ``rho = p / (R T)`` [kg m^-3] from p [Pa] and T [K].

        >>> round(float(AIR.density(101_325.0, 288.15)), 4)  # USSA 1976 sea level
        1.225
        """
        return p / (self.gas_constant * t)

    def speed_of_sound(self, p, t, **params):
        """Speed of sound ``a = sqrt(gamma R T)`` [m s^-1]; p [Pa] is not used.

        >>> round(float(AIR.speed_of_sound(101_325.0, 288.15)), 2)  # USSA 1976 sea level
        340.29
        """
        return np.sqrt(self.gamma * self.gas_constant * np.asarray(t, dtype=float))

    def viscosity(self, p, t, sutherland=None, **params):
        """Dynamic viscosity by Sutherland's law [Pa s].

        ``mu = mu_ref (T / T_ref)^(3/2) (T_ref + S) / (T + S)``

        Parameters
        ----------
        p : array_like
            Pressure [Pa] (not used: the law has no pressure dependence).
        t : array_like
            Temperature [K].
        sutherland : array_like, optional
            Sutherland constant S [K]; defaults to the gas's own.  Varying S
            keeps ``mu(T_ref)`` fixed, so it changes the temperature
            dependence only.

        Examples
        --------
        U.S. Standard Atmosphere 1976, sea level: 1.7894e-5 Pa s.

        >>> f"{float(AIR.viscosity(101_325.0, 288.15)):.4e}"
        '1.7894e-05'
        """
        s = self.sutherland if sutherland is None else sutherland
        t = np.asarray(t, dtype=float)
        return self.mu_ref * (t / T_REF) ** 1.5 * (T_REF + s) / (t + s)

    def specific_heat_cp(self, p, t, **params):
        """Isobaric specific heat ``cp = gamma R / (gamma - 1)`` [J kg^-1 K^-1].

        >>> round(float(AIR.specific_heat_cp(1e5, 300.0)), 1)
        1004.7
        """
        return np.broadcast_to(self.gamma * self.gas_constant / (self.gamma - 1.0),
                               np.broadcast_shapes(np.shape(p), np.shape(t))).astype(float)

    def thermal_conductivity(self, p, t, **params):
        """Thermal conductivity by Sutherland's law [W m^-1 K^-1] ([2], eq. 1-42).

        Air at 273 K: 0.0241 W/(m K) ([2], Table 1-3).

        >>> round(float(AIR.thermal_conductivity(1e5, 273.15)), 4)
        0.0241
        """
        t = np.asarray(t, dtype=float)
        return self.k_ref * (t / T_REF) ** 1.5 * (T_REF + self.sutherland_k) / (t + self.sutherland_k)

    def isentropic_exponent(self, p, t, **params):
        """``gamma`` for a perfect gas [-]."""
        return np.broadcast_to(float(self.gamma), np.broadcast_shapes(np.shape(p), np.shape(t)))

    def static_state(self, p0, t0, mach, **params):
        """Static pressure [Pa] and temperature [K] from stagnation values at a Mach number.

        ``T = T0 (1 + (gamma-1)/2 M^2)^-1``, ``p = p0 (T/T0)^(gamma/(gamma-1))`` ([3]).

        >>> p, t = AIR.static_state(1.0e5, 300.0, 0.5)   # NACA 1135 Table I, M = 0.5
        >>> round(float(p / 1e5), 5), round(float(t / 300.0), 5)
        (0.84302, 0.95238)
        """
        g = self.gamma
        return p0 * flow.pressure_ratio(mach, g), t0 * flow.temperature_ratio(mach, g)

    def mach_from_pressures(self, p0, t0, p, **params):
        """Mach number from stagnation and static pressure (isentropic, subsonic).

        >>> round(float(AIR.mach_from_pressures(1.0, 300.0, 0.65602)), 4)  # NACA 1135, M = 0.8
        0.8
        """
        return flow.mach_from_pressure_ratio(np.asarray(p0) / np.asarray(p), self.gamma)

    #: Range where the perfect-gas and Sutherland models serve air [K], [Pa] (below ~150 K the gas
    #: nears condensation and the perfect-gas density errs by several per cent; use air_real).
    t_range = (150.0, 1000.0)
    p_max = 2.0e6

    def check_state(self, p, t):
        """``None`` inside 150-1000 K and up to 20 bar, else the reason (vectorized)."""
        p, t = np.asarray(p, dtype=float), np.asarray(t, dtype=float)
        if not (np.all(np.isfinite(p)) and np.all(np.isfinite(t))):
            return "non-finite pressure or temperature"
        if np.any(t < self.t_range[0]) or np.any(t > self.t_range[1]):
            return (f"temperature {float(np.min(t)):.5g} .. {float(np.max(t)):.5g} K outside "
                    f"{self.t_range[0]:g} .. {self.t_range[1]:g} K of the perfect-gas model "
                    "(use air_real or nitrogen)")
        if np.any(p <= 0.0) or np.any(p > self.p_max):
            return (f"pressure {float(np.min(p)):.6g} .. {float(np.max(p)):.6g} Pa outside "
                    f"0 .. {self.p_max:g} Pa of the perfect-gas model")
        return None


_BETA = 1.458e-6
_S_AIR = 110.4

#: Dry air as in the 1976 U.S. Standard Atmosphere ([1]).  Stated uncertainty, from the
#: deviation measured against CoolProp's reference air (Lemmon et al. 2000 equation of state,
#: Lemmon & Jacobsen 2004 viscosity) over 250-330 K and 1-10 bar in tests/test_real_gas.py:
#: density within -0.92 %, viscosity within -1.24 %, speed of sound within -0.39 %, taken as
#: rectangular limits of +-1 %, +-1.5 % and +-0.5 %.
AIR = IdealGas(
    name="dry_air",
    gas_constant=8314.32 / 28.9644,
    gamma=1.4,
    mu_ref=_BETA * T_REF**1.5 / (T_REF + _S_AIR),
    sutherland=_S_AIR,
    k_ref=0.0241,
    sutherland_k=194.0,
    description="dry air, perfect gas (gamma = 1.4, R of USSA 1976) with Sutherland viscosity "
                "(S = 110.4 K)",
    stated_uncertainty={"density": 0.01 / np.sqrt(3.0), "viscosity": 0.015 / np.sqrt(3.0),
                        "speed_of_sound": 0.005 / np.sqrt(3.0)},
)
