"""Perfect gas with Sutherland viscosity and conductivity laws.

References
----------
.. [1] U.S. Standard Atmosphere, 1976, NOAA-S/T 76-1562: R = 8314.32 / 28.9644
   J kg^-1 K^-1, gamma = 1.4, Sutherland beta = 1.458e-6 kg m^-1 s^-1 K^-1/2 and
   S = 110.4 K (eq. 51).
.. [2] F. M. White, *Viscous Fluid Flow*, 3rd ed., McGraw-Hill, 2006, eqs. (1-36),
   (1-42) and Tables 1-2, 1-3 (Sutherland's laws about a reference temperature).
.. [3] Ames Research Staff, NACA Report 1135, 1953, eqs. 43-45.
.. [4] E. W. Lemmon, R. T. Jacobsen, S. G. Penoncello, D. G. Friend, "Thermodynamic
   properties of air and mixtures of nitrogen, argon, and oxygen from 60 to 2000 K at
   pressures to 2000 MPa", J. Phys. Chem. Ref. Data 29 (2000) 331-385.
.. [5] E. W. Lemmon, R. T. Jacobsen, "Viscosity and thermal conductivity equations for
   nitrogen, oxygen, argon, and air", Int. J. Thermophys. 25 (2004) 21-69.
.. [6] I. H. Bell, J. Wronski, S. Quoilin, V. Lemort, "Pure and pseudo-pure fluid
   thermophysical property evaluation and the open-source thermophysical property
   library CoolProp", Ind. Eng. Chem. Res. 53 (2014) 2498-2508 (version 8.0 used here:
   [4] and [5] for air).

The bibliographic details of [4]-[6] are those of CoolProp's own library file
``CoolPropBibTeXLibrary.bib`` (keys Lemmon-JPCRD-2000, Lemmon-IJT-2004, Bell-IECR-2014).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from simunc.physics import flow

#: Reference temperature of the viscosity and conductivity laws [K] ([2], Table 1-2).
T_REF = 273.15


@dataclass(frozen=True)
class IdealGas:
    """Calorically perfect gas with Sutherland's viscosity and conductivity laws.

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
        constant [K] (for :data:`AIR` fitted so that the Prandtl number
        ``mu cp / k`` of the model matches reference air, see :data:`AIR`).
    description : str
    stated_uncertainty : dict
        Relative standard uncertainties of the property model, valid in the region
        of :meth:`coverage_note`.
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

        ``k = k_ref (T / T_ref)^(3/2) (T_ref + S_k) / (T + S_k)``

        Parameters
        ----------
        p : array_like
            Pressure [Pa] (not used: the law has no pressure dependence).
        t : array_like
            Temperature [K].

        Examples
        --------
        For :data:`AIR` the constants ``k_ref``, ``S_k`` are fitted so that the
        model's Prandtl number ``mu cp / k`` matches CoolProp's reference air
        ([5], [6]); at 300 K and 1 bar CoolProp 8.0 gives Pr = 0.70705 and
        k = 0.026384 W/(m K) (``PropsSI('PRANDTL'|'L', 'T', 300, 'P', 1e5, 'Air')``).

        >>> round(float(AIR.thermal_conductivity(1e5, 300.0)), 5)
        0.02621
        >>> pr = AIR.viscosity(1e5, 300.0) * AIR.specific_heat_cp(1e5, 300.0) / (
        ...     AIR.thermal_conductivity(1e5, 300.0))
        >>> round(float(pr), 4)
        0.7077
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

    #: Region where ``stated_uncertainty`` holds (measured for :data:`AIR`, see the notes above
    #: it): ``covered_t[0] <= T <= covered_t[1]`` [K] and
    #: ``0 < p <= min(covered_p_cap, covered_p_slope (T - covered_t_zero))`` [Pa].
    covered_t = (180.0, 400.0)
    covered_t_zero = 165.0
    covered_p_slope = 1.0e4
    covered_p_cap = 1.0e6

    def covered_p_max(self, t):
        """Highest pressure [Pa] of the covered region at temperature T [K].

        ``p_max(T) = min(p_cap, slope (T - T_zero))``: 10 bar from 265 K up, falling by
        0.1 bar/K below (where the perfect-gas density errs most).

        >>> round(float(AIR.covered_p_max(216.65))), float(AIR.covered_p_max(300.0))
        (516500, 1000000.0)
        """
        t = np.asarray(t, dtype=float)
        return np.minimum(self.covered_p_cap, self.covered_p_slope * (t - self.covered_t_zero))

    def coverage_note(self, p, t) -> str | None:
        """``None`` if every state lies where ``stated_uncertainty`` holds, else why not.

        The covered region is ``T_lo <= T <= T_hi`` and ``0 < p <= p_max(T)``
        (:meth:`covered_p_max`); for :data:`AIR` it is 180-400 K with ``p_max`` from
        1.5 bar at 180 K to 10 bar at 265 K and above, chosen from the deviation from
        reference air ([4], [5] through [6]) measured in the notes above :data:`AIR`.
        Outside it (but inside :meth:`check_state`) the model still evaluates, with
        larger errors than stated: real-gas air ``air_real`` is then the better model.

        Parameters
        ----------
        p, t : array_like
            Static pressure [Pa] and temperature [K] (broadcast together).

        Returns
        -------
        str or None
            One line naming the first uncovered state, the region and ``air_real``.

        Examples
        --------
        >>> AIR.coverage_note(22_632.0, 216.65) is None   # USSA 1976 at 11 km
        True
        >>> note = AIR.coverage_note([1e5, 2e6], [300.0, 200.0])   # 200 K and 20 bar
        >>> note.split(" outside")[0], note.endswith("use air_real")
        ('1 of 2 states (first 200 K, 2e+06 Pa)', True)
        """
        p, t = np.broadcast_arrays(np.asarray(p, dtype=float), np.asarray(t, dtype=float))
        inside = ((t >= self.covered_t[0]) & (t <= self.covered_t[1])
                  & (p > 0.0) & (p <= self.covered_p_max(t)))
        if np.all(inside):
            return None
        out = np.flatnonzero(~inside.ravel())
        first = int(out[0])
        return (f"{out.size} of {inside.size} states (first {float(t.ravel()[first]):.6g} K, "
                f"{float(p.ravel()[first]):.6g} Pa) outside the region where the stated "
                f"uncertainty of {self.name} holds ({self.covered_t[0]:g} .. "
                f"{self.covered_t[1]:g} K, 0 < p <= min({self.covered_p_cap:g} Pa, "
                f"{self.covered_p_slope:g} Pa/K (T - {self.covered_t_zero:g} K))); use air_real")


_BETA = 1.458e-6
_S_AIR = 110.4

#: Dry air as in the 1976 U.S. Standard Atmosphere ([1]).
#:
#: Stated uncertainty.  From the deviation measured against CoolProp's reference air ([4]
#: equation of state, [5] viscosity, through [6]) over 250-330 K and 1-10 bar in
#: tests/test_real_gas.py: density within -0.92 %, viscosity within -1.24 %, speed of sound
#: within -0.39 %, taken as rectangular limits of +-1 %, +-1.5 % and +-0.5 %.  The limits
#: hold in the covered region of :meth:`IdealGas.coverage_note`, 180-400 K and
#: ``p <= min(10 bar, 0.1 bar/K (T - 165 K))`` (1.5 bar at 180 K, 5.2 bar at 216.65 K,
#: 10 bar from 265 K up): on a grid of it (2 K steps, 8 pressures up to the boundary,
#: tests/test_dry_air_range.py) the largest deviations are density -0.90 % (220 K,
#: 5.5 bar), viscosity -1.34 % (400 K, 10 bar), speed of sound -0.39 % (344 K, 10 bar).
#: Beyond it a limit fails: the density one below about 255 K (already at 4.3 bar at
#: 200 K; -4.6 % at 200 K, 20 bar), the viscosity or speed-of-sound one above about
#: 12 bar near ambient temperature, and above about 510 K even at 1 bar.
#:
#: Conductivity.  Sutherland's law ([2], eq. 1-42) with k_ref = 0.02424 W/(m K) and
#: S_k = 142.4 K: a minimax fit (unrounded 0.024240 W/(m K), 142.41 K) of
#: ``k* = mu cp / Pr_ref`` over 200-400 K in 1 K steps at 0.2 and 1 bar, with mu and cp of
#: this model and Pr_ref the Prandtl number of reference air ([5] and [4] through [6],
#: CoolProp 8.0).  The model's Prandtl number is then within 0.2 % of reference air over
#: 200-400 K at 0.2-1 bar.  Published laws used as they stand leave it 2-3 % off, because
#: the model's mu and constant cp err too: the handbook constants 0.0241 W/(m K), 194 K
#: of [2], Table 1-3 give -2.2 % to +3.0 %, the conductivity formula of [1]
#: (``2.64638e-3 T^1.5 / (T + 245.4 10^(-12/T))``, from memory of [1]) -2.4 % to +1.9 %.
#: k itself lies 0.2-1.6 % below the reference conductivity, absorbing the model's low
#: viscosity and constant cp.  The model's Pr does not depend on pressure, while that of
#: real air at 5 bar is up to 1.2 % higher than at 1 bar (200 K): at 5 bar the model is
#: low by up to 1.4 % at 200 K and within 0.5 % from about 275 K up.
AIR = IdealGas(
    name="dry_air",
    gas_constant=8314.32 / 28.9644,
    gamma=1.4,
    mu_ref=_BETA * T_REF**1.5 / (T_REF + _S_AIR),
    sutherland=_S_AIR,
    k_ref=0.02424,
    sutherland_k=142.4,
    description="dry air, perfect gas (gamma = 1.4, R of USSA 1976) with Sutherland viscosity "
                "(S = 110.4 K) and a Sutherland conductivity fitted to the Prandtl number of "
                "reference air",
    stated_uncertainty={"density": 0.01 / np.sqrt(3.0), "viscosity": 0.015 / np.sqrt(3.0),
                        "speed_of_sound": 0.005 / np.sqrt(3.0)},
)
