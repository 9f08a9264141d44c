"""Moist air: CIPM-2007 density, ideal-gas mixing of R and gamma, Wilke viscosity.

The humidity of the air is its water-vapour mole fraction ``x_v``, a model
parameter (``vapour_mole_fraction``) that an uncertain input may perturb.  The
helpers :func:`vapour_mole_fraction_from_dew_point` and
:func:`vapour_mole_fraction_from_relative_humidity` give ``x_v`` from what a
hygrometer reads, with the saturation vapour pressure ``p_sv(T)`` and the
enhancement factor ``f(p, T)`` of the CIPM-2007 formula [1]_ (taken over from
Davis 1992 [2]_).  ``x_v`` is conserved through a nozzle, so the humidity set in
the settling chamber is the humidity of the test section; the relative humidity
there is higher because the static state is colder, and :meth:`MoistAir.check_state`
rejects a static state that is supersaturated.

Model
-----
* Density: the CIPM-2007 equation [1]_
  ``rho = p M_a / (Z R T) [1 - x_v (1 - M_v / M_a)]`` with the compressibility
  ``Z(p, T, x_v)`` of [1]_, ``R = 8.314 472 J mol^-1 K^-1``,
  ``M_a = [28.965 46 + 12.011 (x_CO2 - 0.0004)] 10^-3 kg mol^-1`` and
  ``M_v = 18.015 28 10^-3 kg mol^-1``.
* Gas constant and gamma: ideal-gas mixing of calorically perfect dry air and
  water vapour by mole fraction, with the molar isobaric heats
  ``cp_a = 7/2 R = 29.10 J mol^-1 K^-1`` (the 298.15 K ideal-gas value of air
  from the NIST-JANAF tables [5]_ of N2, O2, Ar and CO2, 29.10 J mol^-1 K^-1;
  it keeps gamma = 1.4 of dry air, as in :data:`simunc.physics.fluids.ideal_gas.AIR`) and
  ``cp_v = 33.59 J mol^-1 K^-1`` (H2O ideal gas at 298.15 K, NIST-JANAF [5]_).
  Both are held constant: from 250 K to 350 K the ideal-gas cp of air moves
  by -0.2 % / +0.3 % and that of water vapour by -0.5 % / +0.9 % (IAPWS-95 and
  Lemmon et al. 2000 ideal-gas parts, through CoolProp), so the true gamma of dry
  air runs from 1.401 to 1.398 over that range.
* Speed of sound ``a = sqrt(gamma_mix R_mix T)``: perfect-gas mixture, ignoring
  the non-ideality of air (``Z``) and the temperature variation of cp; it is the
  low-frequency (equilibrium) speed of sound.
* Viscosity: Wilke's mixing rule [3]_ of dry air (Sutherland's law of
  :data:`~simunc.physics.fluids.ideal_gas.AIR`, whose constant S is the parameter
  ``sutherland``) and water vapour (dilute-gas term ``mu_0(T)`` of the IAPWS 2008
  viscosity formulation [4]_; the density term left out is below 3e-3 of the
  vapour's viscosity up to saturation at 60 degC, measured against CoolProp, so
  below 1e-3 of the mixture's).
* Isentropic relations: perfect gas with the mixture gamma (NACA 1135).

References
----------
.. [1] A. Picard, R. S. Davis, M. Glaeser, K. Fujii, "Revised formula for the
   density of moist air (CIPM-2007)", Metrologia 45 (2008) 149-155.
.. [2] R. S. Davis, "Equation for the determination of the density of moist air
   (1981/91)", Metrologia 29 (1992) 67-70.
.. [3] C. R. Wilke, "A viscosity equation for gas mixtures", J. Chem. Phys. 18
   (1950) 517-519.
.. [4] IAPWS R12-08, "Release on the IAPWS Formulation 2008 for the Viscosity of
   Ordinary Water Substance" (Huber et al., J. Phys. Chem. Ref. Data 38 (2009)
   101-125).
.. [5] M. W. Chase, NIST-JANAF Thermochemical Tables, 4th ed., J. Phys. Chem.
   Ref. Data Monograph 9 (1998).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from simunc.physics import flow
from simunc.physics.fluids.ideal_gas import AIR, T_REF

#: Molar gas constant used by CIPM-2007 [J mol^-1 K^-1] ([1]).
R_MOLAR = 8.314472
#: Molar mass of water [kg mol^-1] ([1]).
M_VAPOUR = 18.01528e-3
#: CO2 mole fraction of the CIPM-2007 reference composition [-] ([1]).
X_CO2_REF = 0.0004
#: Molar isobaric heat of dry air as an ideal gas [J mol^-1 K^-1] (7/2 R; JANAF [5]: 29.10).
CP_DRY_AIR = 3.5 * R_MOLAR
#: Molar isobaric heat of water vapour as an ideal gas at 298.15 K [J mol^-1 K^-1] ([5]).
CP_VAPOUR = 33.59

#: Range of the CIPM-2007 formula: pressure [Pa] and temperature [K] ([1], [2]).
CIPM_PRESSURE_RANGE = (60_000.0, 110_000.0)
CIPM_TEMPERATURE_RANGE = (288.15, 300.15)
#: Range :meth:`MoistAir.check_state` accepts unless ``strict=True``: the CIPM-2007
#: equations extrapolated.  Above 200 kPa the perfect-gas speed of sound falls
#: short of the real-gas value by about 3.4e-4 per 100 kPa and Sutherland's law
#: ignores the density dependence of viscosity (-1.1 % at 1 MPa against CoolProp):
#: use a real-gas model there.
EXTENDED_PRESSURE_RANGE = (10_000.0, 200_000.0)
EXTENDED_TEMPERATURE_RANGE = (233.15, 333.15)

#: Relative standard uncertainties inside the CIPM-2007 range (``strict=True``).
#: Density: the formula's own, 22e-6 (from memory of Picard et al. 2008;
#: the uncertainty of the measured p, T, h and x_CO2 is not included).  Viscosity:
#: Sutherland's law of dry air taken within +-1 % (measured within -0.62 % against
#: Lemmon & Jacobsen 2004 from -40 to 60 degC up to 200 kPa), rectangular.  Speed
#: of sound: half-width 4e-4, the largest deviation of the perfect-gas mixture
#: from CoolProp's real-gas mixture (3.6e-4) rounded up.
STATED_UNCERTAINTY_CIPM = {"density": 22e-6, "viscosity": 0.01 / np.sqrt(3.0),
                           "speed_of_sound": 4e-4 / np.sqrt(3.0)}
#: Relative standard uncertainties in the extended range (default).  Half-widths:
#: density 6e-4 (largest deviation from CoolProp's humid-air model, 5.5e-4, at
#: 60 degC, 60 kPa, saturation); speed of sound 1.2e-3 (largest deviation from
#: CoolProp's real-gas mixture, 1.1e-3, at 60 degC, 60 kPa, saturation);
#: viscosity 1.5 % (1 % for Sutherland's law plus an allowance of 0.5 % for the
#: mixing rule at high humidity; the allowance is a judgement, not a measurement).
STATED_UNCERTAINTY_EXTENDED = {"density": 6e-4 / np.sqrt(3.0),
                               "viscosity": 0.015 / np.sqrt(3.0),
                               "speed_of_sound": 1.2e-3 / np.sqrt(3.0)}

# Saturation vapour pressure over liquid water ([1], [2]).
_A_SV = 1.2378847e-5    # K^-2
_B_SV = -1.9121316e-2   # K^-1
_C_SV = 33.93711047
_D_SV = -6.3431645e3    # K
# Enhancement factor ([1], [2]).
_ALPHA_F = 1.00062
_BETA_F = 3.14e-8       # Pa^-1
_GAMMA_F = 5.6e-7       # K^-2
# Compressibility factor ([1], [2]).
_A0, _A1, _A2 = 1.58123e-6, -2.9331e-8, 1.1043e-10
_B0, _B1 = 5.707e-6, -2.051e-8
_C0, _C1 = 1.9898e-4, -2.376e-6
_D_Z, _E_Z = 1.83e-11, -0.765e-8
# Water vapour, dilute gas ([4]).
_T_CRIT = 647.096
_H_DILUTE = (1.67752, 2.20462, 0.6366564, -0.241605)


def saturation_vapour_pressure(t):
    """Saturation vapour pressure of water over a plane liquid surface [Pa].

    ``p_sv = 1 Pa exp(A T^2 + B T + C + D / T)`` ([1]_, from [2]_), with
    A = 1.2378847e-5 K^-2, B = -1.9121316e-2 K^-1, C = 33.93711047,
    D = -6.3431645e3 K.

    Parameters
    ----------
    t : array_like
        Temperature [K] (ITS-90).

    Returns
    -------
    ndarray
        ``p_sv`` [Pa].

    Examples
    --------
    IAPWS-95 saturation pressure at 20 degC: 2339.3 Pa (Wagner & Pruss 2002);
    the formula is 7e-5 lower.

    >>> round(float(saturation_vapour_pressure(293.15)), 1)
    2339.2
    """
    t = np.asarray(t, dtype=float)
    return np.exp(_A_SV * t * t + _B_SV * t + _C_SV + _D_SV / t)


def enhancement_factor(p, t):
    """Enhancement factor of water vapour in air ``f = alpha + beta p + gamma t^2`` [-].

    ``alpha = 1.000 62``, ``beta = 3.14e-8 Pa^-1``, ``gamma = 5.6e-7 K^-2`` with
    ``t`` the Celsius temperature ([1]_, from [2]_).

    Parameters
    ----------
    p : array_like
        Total pressure [Pa].
    t : array_like
        Temperature [K].

    Examples
    --------
    At 101 325 Pa and 20 degC:

    >>> round(float(enhancement_factor(101_325.0, 293.15)), 5)
    1.00403
    """
    tc = np.asarray(t, dtype=float) - 273.15
    return _ALPHA_F + _BETA_F * np.asarray(p, dtype=float) + _GAMMA_F * tc * tc


def vapour_mole_fraction_from_relative_humidity(p, t, relative_humidity):
    """Water-vapour mole fraction from the relative humidity ``h`` [-].

    ``x_v = h f(p, T) p_sv(T) / p`` ([1]_, from [2]_).

    Parameters
    ----------
    p : array_like
        Total pressure [Pa] where the humidity is measured.
    t : array_like
        Temperature [K] there.
    relative_humidity : array_like
        Relative humidity as a fraction (0 to 1, not percent).

    Examples
    --------
    20 degC, 101 325 Pa, 50 % RH:

    >>> round(float(vapour_mole_fraction_from_relative_humidity(101_325.0, 293.15, 0.5)), 5)
    0.01159
    """
    p = np.asarray(p, dtype=float)
    return np.asarray(relative_humidity, dtype=float) * enhancement_factor(p, t) \
        * saturation_vapour_pressure(t) / p


def vapour_mole_fraction_from_dew_point(p, t_dew):
    """Water-vapour mole fraction from the dew-point temperature [-].

    ``x_v = f(p, T_d) p_sv(T_d) / p`` ([1]_, from [2]_).

    Parameters
    ----------
    p : array_like
        Total pressure [Pa] at which the dew point is measured.
    t_dew : array_like
        Dew-point temperature [K] (over liquid water).

    Examples
    --------
    A dew point of 10 degC at 101 325 Pa:

    >>> round(float(vapour_mole_fraction_from_dew_point(101_325.0, 283.15)), 5)
    0.01217
    """
    p = np.asarray(p, dtype=float)
    return enhancement_factor(p, t_dew) * saturation_vapour_pressure(t_dew) / p


def relative_humidity(p, t, vapour_mole_fraction):
    """Relative humidity ``h = x_v p / (f(p, T) p_sv(T))`` [-] (inverse of the above).

    Examples
    --------
    >>> round(float(relative_humidity(101_325.0, 293.15, 0.011589)), 4)
    0.5
    """
    p = np.asarray(p, dtype=float)
    return np.asarray(vapour_mole_fraction, dtype=float) * p \
        / (enhancement_factor(p, t) * saturation_vapour_pressure(t))


def compressibility(p, t, vapour_mole_fraction):
    """Compressibility factor of moist air ``Z`` [-] ([1]_, from [2]_).

    ``Z = 1 - (p/T) [a0 + a1 t + a2 t^2 + (b0 + b1 t) x_v + (c0 + c1 t) x_v^2]
    + (p/T)^2 (d + e x_v^2)``, with ``t`` in degC and T in K.

    Parameters
    ----------
    p : array_like
        Pressure [Pa].
    t : array_like
        Temperature [K].
    vapour_mole_fraction : array_like
        ``x_v`` [-].

    Examples
    --------
    Dry air at 20 degC and 101 325 Pa:

    >>> round(float(compressibility(101_325.0, 293.15, 0.0)), 6)
    0.999643
    """
    p = np.asarray(p, dtype=float)
    t = np.asarray(t, dtype=float)
    x = np.asarray(vapour_mole_fraction, dtype=float)
    tc = t - 273.15
    pt = p / t
    return (1.0 - pt * (_A0 + _A1 * tc + _A2 * tc * tc + (_B0 + _B1 * tc) * x
                        + (_C0 + _C1 * tc) * x * x)
            + pt * pt * (_D_Z + _E_Z * x * x))


def water_vapour_viscosity(t):
    """Viscosity of water vapour in the dilute-gas limit [Pa s] ([4]_).

    ``mu_0 = 1e-6 Pa s * 100 sqrt(T/T_c) / sum_i H_i (T_c/T)^i``,
    ``T_c = 647.096 K``, H = (1.67752, 2.20462, 0.6366564, -0.241605).

    Examples
    --------
    >>> f"{float(water_vapour_viscosity(300.0)):.4e}"
    '9.7684e-06'
    """
    tr = np.asarray(t, dtype=float) / _T_CRIT
    s = _H_DILUTE[0] + _H_DILUTE[1] / tr + _H_DILUTE[2] / tr**2 + _H_DILUTE[3] / tr**3
    return 1e-6 * 100.0 * np.sqrt(tr) / s


def wilke_viscosity(vapour_mole_fraction, mu_air, mu_vapour, m_air, m_vapour=M_VAPOUR):
    """Viscosity of an air / water-vapour mixture by Wilke's rule [Pa s] ([3]_).

    ``mu = x_a mu_a / (x_a + x_v Phi_av) + x_v mu_v / (x_v + x_a Phi_va)``, with
    ``Phi_ij = [1 + (mu_i/mu_j)^(1/2) (M_j/M_i)^(1/4)]^2 / [8 (1 + M_i/M_j)]^(1/2)``
    and ``x_a = 1 - x_v``.

    Parameters
    ----------
    vapour_mole_fraction : array_like
        ``x_v`` [-].
    mu_air, mu_vapour : array_like
        Viscosities of dry air and of water vapour at the mixture's temperature [Pa s].
    m_air, m_vapour : float
        Molar masses [kg mol^-1].

    Examples
    --------
    Equal molar masses and viscosities give back the common viscosity:

    >>> round(float(wilke_viscosity(0.3, 2e-5, 2e-5, 0.029, 0.029)) * 1e5, 12)
    2.0
    """
    x = np.asarray(vapour_mole_fraction, dtype=float)
    xa = 1.0 - x
    phi_av = (1.0 + np.sqrt(mu_air / mu_vapour) * (m_vapour / m_air) ** 0.25) ** 2 \
        / np.sqrt(8.0 * (1.0 + m_air / m_vapour))
    phi_va = (1.0 + np.sqrt(mu_vapour / mu_air) * (m_air / m_vapour) ** 0.25) ** 2 \
        / np.sqrt(8.0 * (1.0 + m_vapour / m_air))
    return xa * mu_air / (xa + x * phi_av) + x * mu_vapour / (x + xa * phi_va)


class _StatedByMode(dict[str, float]):
    """Default of :attr:`MoistAir.stated_uncertainty`: replaced by the values of its mode."""


@dataclass(frozen=True)
class MoistAir:
    """Moist air with the CIPM-2007 density (see the module docstring for the model).

    Parameters
    ----------
    vapour_mole_fraction : float
        Nominal water-vapour mole fraction ``x_v`` [-] (0 for dry air); the
        methods take an array of ``x_v`` in its place as the keyword of the
        same name.  See :meth:`from_relative_humidity` and :meth:`from_dew_point`.
    co2_mole_fraction : float
        CO2 mole fraction ``x_CO2`` [-] of the dry air, default 0.0004 ([1]).
    sutherland : float
        Nominal Sutherland constant of dry air [K] (110.4 K, USSA 1976).
    strict : bool
        When True, :meth:`check_state` rejects states outside the range of the
        CIPM-2007 formula (600-1100 hPa, 15-27 degC) and the stated
        uncertainties are :data:`STATED_UNCERTAINTY_CIPM`; otherwise the range
        is the extended one (:data:`EXTENDED_PRESSURE_RANGE`,
        :data:`EXTENDED_TEMPERATURE_RANGE`) and the stated uncertainties are
        :data:`STATED_UNCERTAINTY_EXTENDED`.

    Attributes
    ----------
    stated_uncertainty : dict
        Relative standard uncertainties of ``"density"``, ``"viscosity"`` and
        ``"speed_of_sound"`` (see the two module constants for their sources).
    """

    vapour_mole_fraction: float = 0.0
    co2_mole_fraction: float = X_CO2_REF
    sutherland: float = AIR.sutherland
    strict: bool = False
    name: str = "moist_air"
    kind: str = "gas"
    parameters: tuple[str, ...] = ("vapour_mole_fraction", "sutherland")
    description: str = (
        "moist air: CIPM-2007 density with Z (Picard et al. 2008), ideal-gas mixing of R and "
        "gamma (cp 29.10 and 33.59 J/(mol K), NIST-JANAF), Wilke viscosity of Sutherland air "
        "and IAPWS 2008 dilute water vapour")
    stated_uncertainty: dict[str, float] = field(default_factory=_StatedByMode)

    def __post_init__(self):
        if self.stated_uncertainty is None or type(self.stated_uncertainty) is _StatedByMode:
            object.__setattr__(self, "stated_uncertainty", dict(
                STATED_UNCERTAINTY_CIPM if self.strict else STATED_UNCERTAINTY_EXTENDED))
        if not 0.0 <= self.vapour_mole_fraction < 1.0:
            raise ValueError(f"vapour_mole_fraction {self.vapour_mole_fraction!r}: expected "
                             "0 <= x_v < 1")
        if not 0.0 <= self.co2_mole_fraction <= 0.01:
            raise ValueError(f"co2_mole_fraction {self.co2_mole_fraction!r}: expected "
                             "0 <= x_CO2 <= 0.01")

    # -- construction from hygrometer readings ------------------------------------------
    @classmethod
    def from_relative_humidity(cls, p, t, relative_humidity, **kwargs):
        """Moist air whose nominal ``x_v`` is that of relative humidity ``h`` [-] at (p [Pa], T [K]).

        >>> air = MoistAir.from_relative_humidity(101_325.0, 293.15, 0.5)
        >>> round(air.vapour_mole_fraction, 5)
        0.01159
        """
        x = float(vapour_mole_fraction_from_relative_humidity(p, t, relative_humidity))
        return cls(vapour_mole_fraction=x, **kwargs)

    @classmethod
    def from_dew_point(cls, p, t_dew, **kwargs):
        """Moist air whose nominal ``x_v`` is that of dew point ``t_dew`` [K] at pressure p [Pa]."""
        x = float(vapour_mole_fraction_from_dew_point(p, t_dew))
        return cls(vapour_mole_fraction=x, **kwargs)

    # -- composition ---------------------------------------------------------------------
    def _x(self, vapour_mole_fraction):
        return np.asarray(self.vapour_mole_fraction if vapour_mole_fraction is None
                          else vapour_mole_fraction, dtype=float)

    @property
    def dry_air_molar_mass(self) -> float:
        """``M_a = [28.965 46 + 12.011 (x_CO2 - 0.0004)] 10^-3`` [kg mol^-1] ([1])."""
        return (28.96546 + 12.011 * (self.co2_mole_fraction - X_CO2_REF)) * 1e-3

    def molar_mass(self, vapour_mole_fraction=None):
        """Mixture molar mass ``M = (1 - x_v) M_a + x_v M_v`` [kg mol^-1].

        >>> round(float(MoistAir().molar_mass()) * 1e3, 5)
        28.96546
        """
        x = self._x(vapour_mole_fraction)
        return (1.0 - x) * self.dry_air_molar_mass + x * M_VAPOUR

    def gas_constant(self, vapour_mole_fraction=None):
        """Specific gas constant of the mixture ``R_mix = R / M`` [J kg^-1 K^-1].

        >>> round(float(MoistAir().gas_constant()), 3)
        287.048
        """
        return R_MOLAR / self.molar_mass(vapour_mole_fraction)

    def gamma(self, vapour_mole_fraction=None):
        """Ratio of specific heats of the ideal mixture [-].

        ``gamma = cp_mix / (cp_mix - R)``, ``cp_mix = (1 - x_v) cp_a + x_v cp_v`` (molar).

        >>> round(float(MoistAir().gamma()), 6), round(float(MoistAir().gamma(0.02)), 5)
        (1.4, 1.39828)
        """
        x = self._x(vapour_mole_fraction)
        cp = (1.0 - x) * CP_DRY_AIR + x * CP_VAPOUR
        return cp / (cp - R_MOLAR)

    # -- Fluid protocol ------------------------------------------------------------------
    def density(self, p, t, vapour_mole_fraction=None, **params):
        """Density by the CIPM-2007 equation [kg m^-3].

        ``rho = p M_a / (Z R T) [1 - x_v (1 - M_v/M_a)]`` ([1]).

        Parameters
        ----------
        p : array_like
            Pressure [Pa].
        t : array_like
            Temperature [K].
        vapour_mole_fraction : array_like, optional
            ``x_v`` [-]; defaults to the nominal value.

        Examples
        --------
        Dry air (x_CO2 = 0.0004) at 20 degC and 101 325 Pa; 20 degC, 50 % RH:

        >>> round(float(MoistAir().density(101_325.0, 293.15)), 5)
        1.20456
        >>> round(float(MoistAir().density(101_325.0, 293.15, 0.011589)), 5)
        1.19931
        """
        x = self._x(vapour_mole_fraction)
        p = np.asarray(p, dtype=float)
        t = np.asarray(t, dtype=float)
        z = compressibility(p, t, x)
        return p * self.molar_mass(x) / (z * R_MOLAR * t)

    def speed_of_sound(self, p, t, vapour_mole_fraction=None, **params):
        """Speed of sound ``a = sqrt(gamma_mix R_mix T)`` [m s^-1] (perfect-gas mixture).

        Examples
        --------
        Dry air at 20 degC (CoolProp's real-gas air: 343.34 m/s, 0.03 % more):

        >>> round(float(MoistAir().speed_of_sound(101_325.0, 293.15)), 2)
        343.23
        """
        x = self._x(vapour_mole_fraction)
        t = np.broadcast_to(np.asarray(t, dtype=float), np.broadcast_shapes(np.shape(p),
                                                                              np.shape(t)))
        return np.sqrt(self.gamma(x) * self.gas_constant(x) * t)

    def viscosity(self, p, t, vapour_mole_fraction=None, sutherland=None, **params):
        """Dynamic viscosity by Wilke's mixing rule [Pa s].

        ``mu = x_a mu_a / (x_a + x_v Phi_av) + x_v mu_v / (x_v + x_a Phi_va)``,
        ``Phi_ij = [1 + (mu_i/mu_j)^(1/2) (M_j/M_i)^(1/4)]^2 / [8 (1 + M_i/M_j)]^(1/2)``
        ([3]), with ``mu_a`` Sutherland's law of dry air and ``mu_v`` the dilute-gas
        viscosity of water vapour ([4]).

        Parameters
        ----------
        p : array_like
            Pressure [Pa] (not used).
        t : array_like
            Temperature [K].
        vapour_mole_fraction : array_like, optional
            ``x_v`` [-].
        sutherland : array_like, optional
            Sutherland constant of dry air [K] (keeps ``mu_a(273.15 K)`` fixed).

        Examples
        --------
        Dry air at sea level of USSA 1976 (1.7894e-5 Pa s there):

        >>> f"{float(MoistAir().viscosity(101_325.0, 288.15)):.4e}"
        '1.7894e-05'
        """
        x = self._x(vapour_mole_fraction)
        s = self.sutherland if sutherland is None else np.asarray(sutherland, dtype=float)
        t = np.asarray(t, dtype=float)
        t = np.broadcast_to(t, np.broadcast_shapes(np.shape(p), t.shape))
        mu_a = AIR.mu_ref * (t / T_REF) ** 1.5 * (T_REF + s) / (t + s)
        return wilke_viscosity(x, mu_a, water_vapour_viscosity(t), self.dry_air_molar_mass)

    def isentropic_exponent(self, p, t, vapour_mole_fraction=None, **params):
        """``gamma_mix`` [-] (perfect-gas mixture), broadcast to the state's shape."""
        g = self.gamma(vapour_mole_fraction)
        return np.broadcast_to(g, np.broadcast_shapes(np.shape(p), np.shape(t), np.shape(g)))

    def static_state(self, p0, t0, mach, vapour_mole_fraction=None, **params):
        """Static pressure [Pa] and temperature [K] at Mach number ``mach``, isentropic from (p0, t0).

        ``T = T0 (1 + (gamma-1)/2 M^2)^-1``, ``p = p0 (T/T0)^(gamma/(gamma-1))`` with
        ``gamma = gamma_mix(x_v)``; ``x_v`` is the same in the settling chamber and the
        test section.

        Examples
        --------
        Dry air reproduces NACA 1135, Table I, M = 0.5:

        >>> p, t = MoistAir().static_state(1.0e5, 300.0, 0.5)
        >>> round(float(p / 1e5), 5), round(float(t / 300.0), 5)
        (0.84302, 0.95238)
        """
        g = self.gamma(vapour_mole_fraction)
        return (np.asarray(p0, dtype=float) * flow.pressure_ratio(mach, g),
                np.asarray(t0, dtype=float) * flow.temperature_ratio(mach, g))

    def mach_from_pressures(self, p0, t0, p, vapour_mole_fraction=None, **params):
        """Mach number of the isentropic expansion from p0 to p [Pa] (subsonic).

        >>> round(float(MoistAir().mach_from_pressures(1.0, 300.0, 0.65602)), 4)  # NACA 1135
        0.8
        """
        g = self.gamma(vapour_mole_fraction)
        return flow.mach_from_pressure_ratio(np.asarray(p0, dtype=float) / np.asarray(p), g)

    def check_state(self, p, t, vapour_mole_fraction=None, **params):
        """``None`` when every state is inside the model, else the reason.

        Rejects non-finite or non-positive states, states outside the pressure and
        temperature range (CIPM-2007's when ``strict``, else the extended one),
        ``x_v`` outside [0, 1) and supersaturated states, ``x_v p > f(p, T) p_sv(T)``
        (the vapour would condense in the test section).  Below 0 degC the
        saturation pressure is that over supercooled liquid water, higher than over
        ice, so frost is not detected there.

        Examples
        --------
        Air at 20 degC, 50 % RH in the settling chamber, expanded to M = 0.8:

        >>> air = MoistAir.from_relative_humidity(101_325.0, 293.15, 0.5)
        >>> p, t = air.static_state(101_325.0, 293.15, 0.8)
        >>> print(air.check_state(p, t))      # doctest: +ELLIPSIS
        supersaturated: x_v p = 770.544 Pa exceeds f p_sv(T) = 222.52 Pa at T = 260 K, ...
        """
        p = np.asarray(p, dtype=float)
        t = np.asarray(t, dtype=float)
        x = self._x(vapour_mole_fraction)
        if not (np.all(np.isfinite(p)) and np.all(np.isfinite(t)) and np.all(np.isfinite(x))):
            return "non-finite pressure, temperature or vapour mole fraction"
        if np.any(p <= 0.0) or np.any(t <= 0.0):
            return "non-positive pressure or temperature"
        if np.any(x < 0.0) or np.any(x >= 1.0):
            return f"vapour mole fraction {float(np.min(x)):.6g} .. {float(np.max(x)):.6g} " \
                   "outside [0, 1)"
        if self.strict:
            (plo, phi), (tlo, thi) = CIPM_PRESSURE_RANGE, CIPM_TEMPERATURE_RANGE
            which = "the CIPM-2007 formula"
        else:
            (plo, phi), (tlo, thi) = EXTENDED_PRESSURE_RANGE, EXTENDED_TEMPERATURE_RANGE
            which = "the moist-air model (CIPM-2007 extrapolated)"
        if np.any(p < plo) or np.any(p > phi):
            return (f"pressure {float(np.min(p)):.6g} .. {float(np.max(p)):.6g} Pa outside "
                    f"{plo:.6g} .. {phi:.6g} Pa of {which}")
        if np.any(t < tlo) or np.any(t > thi):
            return (f"temperature {float(np.min(t)):.6g} .. {float(np.max(t)):.6g} K outside "
                    f"{tlo:.6g} .. {thi:.6g} K of {which}")
        xb, pb, tb = np.broadcast_arrays(x, p, t)
        pv = xb * pb
        psat = enhancement_factor(pb, tb) * saturation_vapour_pressure(tb)
        excess = pv - psat
        if np.any(excess > 0.0):
            i = np.unravel_index(int(np.argmax(excess)), excess.shape) if excess.ndim else ()
            return (f"supersaturated: x_v p = {float(pv[i]):.6g} Pa exceeds f p_sv(T) = "
                    f"{float(psat[i]):.6g} Pa at T = {float(tb[i]):.4g} K, p = {float(pb[i]):.6g} "
                    f"Pa (x_v = {float(xb[i]):.6g}; relative humidity "
                    f"{float(pv[i] / psat[i]):.3g}): the vapour would condense in the test "
                    "section")
        return None


#: Dry air (x_v = 0, x_CO2 = 0.0004) in the moist-air model; build others with
#: :class:`MoistAir` or :meth:`MoistAir.from_relative_humidity`.
MOIST_AIR = MoistAir()
