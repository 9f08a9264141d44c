"""Working-gas property models: ideal gas with Sutherland viscosity.

References
----------
.. [1] U.S. Standard Atmosphere, 1976, NOAA-S/T 76-1562: R = 8314.32 / 28.9644
   J kg^-1 K^-1, gamma = 1.4, Sutherland beta = 1.458e-6 kg m^-1 s^-1 K^-1/2 and
   S = 110.4 K (eq. 51).
.. [2] F. M. White, *Viscous Fluid Flow*, 3rd ed., McGraw-Hill, 2006, eq. (1-36)
   and Table 1-2 (Sutherland's law about a reference temperature).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

#: Reference temperature of the viscosity law [K] ([2], Table 1-2).
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
    """

    name: str
    gas_constant: float
    gamma: float
    mu_ref: float
    sutherland: float

    def density(self, p, t):
        """Density ``rho = p / (R T)`` [kg m^-3] from p [Pa] and T [K].

        >>> round(float(AIR.density(101_325.0, 288.15)), 4)  # USSA 1976 sea level
        1.225
        """
        return p / (self.gas_constant * t)

    def speed_of_sound(self, t):
        """Speed of sound ``a = sqrt(gamma R T)`` [m s^-1] from T [K].

        >>> round(float(AIR.speed_of_sound(288.15)), 2)  # USSA 1976 sea level
        340.29
        """
        return np.sqrt(self.gamma * self.gas_constant * t)

    def viscosity(self, t, sutherland=None):
        """Dynamic viscosity by Sutherland's law [Pa s].

        ``mu = mu_ref (T / T_ref)^(3/2) (T_ref + S) / (T + S)``

        Parameters
        ----------
        t : array_like
            Temperature [K].
        sutherland : array_like, optional
            Sutherland constant S [K]; defaults to the gas's own.  Varying S
            keeps ``mu(T_ref)`` fixed, so it changes the temperature
            dependence only.

        Examples
        --------
        U.S. Standard Atmosphere 1976, sea level: 1.7894e-5 Pa s.

        >>> f"{float(AIR.viscosity(288.15)):.4e}"
        '1.7894e-05'
        """
        s = self.sutherland if sutherland is None else sutherland
        return self.mu_ref * (t / T_REF) ** 1.5 * (T_REF + s) / (t + s)


_BETA = 1.458e-6
_S_AIR = 110.4

#: Dry air as in the 1976 U.S. Standard Atmosphere ([1]).
AIR = IdealGas(
    name="dry_air",
    gas_constant=8314.32 / 28.9644,
    gamma=1.4,
    mu_ref=_BETA * T_REF**1.5 / (T_REF + _S_AIR),
    sutherland=_S_AIR,
)

#: Gas models a study may name under ``facility.gas``.
GASES: dict[str, IdealGas] = {AIR.name: AIR}
