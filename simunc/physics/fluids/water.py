"""Fresh water and sea water: closed-form vectorized correlations for towing tanks and water tunnels.

Every property is a short polynomial or exponential in temperature (and salinity),
so a million Monte Carlo states cost milliseconds; no equation of state is solved.

Fresh water (pure, air-free water of standard isotopic composition)
    * density: Tanaka et al. 2001 [1]_ (the CIPM table of water density, 0-40 degC at
      101 325 Pa) with its compressibility factor for other pressures;
    * viscosity: IAPWS 2008 [2]_, ``mu = mu_0(T) mu_1(T, rho)`` with the density above
      (the critical enhancement ``mu_2`` is 1 far from the critical point);
    * speed of sound: Bilaniuk & Wong 1993 [3]_ (148-point fit at 0.1 MPa, ITS-90);
    * vapour pressure: Wagner & Pruss 1993 [4]_ (the IAPWS saturation-pressure equation);
    * surface tension: IAPWS 2014 [5]_.

Sea water (salinity S [g/kg], a constructor argument and the parameter ``salinity``)
    * density and viscosity: Sharqawy, Lienhard & Zubair 2010 [6]_ (their eqs. for
      rho_sw(t, S) and mu_sw = mu_w (1 + A S + B S^2), with mu_w of IAPWS 2008);
    * speed of sound: Mackenzie 1981 [7]_, depth from the gauge pressure;
    * vapour pressure: pure water lowered by Raoult's law as given by [6]_;
    * surface tension: pure water (IAPWS 2014) raised as given by [6]_.

Pressure dependence: density has it (compressibility factor of [1]_, also used for sea
water), and so has the viscosity through that density (IAPWS 2008 is a function of T and
rho; within 1.1e-6 of CoolProp at 500 kPa).  The fresh-water speed of sound is the
0.1 MPa value: up to the 500 kPa that :meth:`FreshWater.check_state` accepts, IAPWS-95
(through CoolProp) puts the neglected rise at 0.64-0.71 m/s (4.7e-4).

References
----------
.. [1] M. Tanaka, G. Girard, R. Davis, A. Peuto, N. Bignell, "Recommended table for
   the density of water between 0 C and 40 C based on recent experimental reports",
   Metrologia 38 (2001) 301-309.
.. [2] IAPWS R12-08, Release on the IAPWS Formulation 2008 for the Viscosity of
   Ordinary Water Substance; M. L. Huber et al., J. Phys. Chem. Ref. Data 38 (2009)
   101-125.
.. [3] N. Bilaniuk, G. S. K. Wong, "Speed of sound in pure water as a function of
   temperature", J. Acoust. Soc. Am. 93 (1993) 1609-1612; erratum 99 (1996) 3257.
.. [4] W. Wagner, A. Pruss, "International equations for the saturation properties
   of ordinary water substance. Revised according to the international temperature
   scale of 1990", J. Phys. Chem. Ref. Data 22 (1993) 783-787 (IAPWS SR1-86(1992)).
.. [5] IAPWS R1-76(2014), Revised Release on Surface Tension of Ordinary Water
   Substance.
.. [6] M. H. Sharqawy, J. H. Lienhard V, S. M. Zubair, "Thermophysical properties of
   seawater: a review of existing correlations and data", Desalination and Water
   Treatment 16 (2010) 354-380.
.. [7] K. V. Mackenzie, "Nine-term equation for sound speed in the oceans",
   J. Acoust. Soc. Am. 70 (1981) 807-812.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from simunc.constants import STANDARD_GRAVITY, STANDARD_PRESSURE

#: Temperature range of the correlations as used here [K] (0-40 degC, [1], [6]).
TEMPERATURE_RANGE = (273.15, 313.15)
#: Highest static pressure accepted [Pa] (the neglected pressure dependence of the
#: fresh-water speed of sound stays below 5e-4 there).
MAX_PRESSURE = 500_000.0
#: Salinity range of :class:`SeaWater` [g/kg] (surface-tension correlation of [6]).
SALINITY_RANGE = (0.0, 40.0)
_T_CRIT = 647.096       # K ([2], [4], [5])
_P_CRIT = 22.064e6      # Pa ([4])

# Tanaka et al. 2001: density at 101 325 Pa and its compressibility factor.
_TANAKA = (-3.983035, 301.797, 522528.9, 69.34881, 999.974950)
_TANAKA_K = (50.74e-11, -0.326e-11, 0.00416e-11)    # Pa^-1, Pa^-1 degC^-1, Pa^-1 degC^-2

# IAPWS 2008: dilute-gas H_i and residual H_ij, rho* = 322 kg/m^3.
_H0 = (1.67752, 2.20462, 0.6366564, -0.241605)
_HIJ = np.zeros((6, 7))
_HIJ[0, :5] = (5.20094e-1, 2.22531e-1, -2.81378e-1, 1.61913e-1, -3.25372e-2)
_HIJ[1, :4] = (8.50895e-2, 9.99115e-1, -9.06851e-1, 2.57399e-1)
_HIJ[2, :3] = (-1.08374, 1.88797, -7.72479e-1)
_HIJ[3, :] = (-2.89555e-1, 1.26613, -4.89837e-1, 0.0, 6.98452e-2, 0.0, -4.35673e-3)
_HIJ[4, 2], _HIJ[4, 5] = -2.57040e-1, 8.72102e-3
_HIJ[5, 1], _HIJ[5, 6] = 1.20573e-1, -5.93264e-4
_RHO_STAR = 322.0

# Bilaniuk & Wong 1993, 148-point set, c [m/s] in powers of t [degC].
_BW = (1402.38744, 5.03836171, -5.81172916e-2, 3.34638117e-4, -1.48259672e-6,
       3.16585020e-9)
# Wagner & Pruss 1993, saturation pressure.
_WP = (-7.85951783, 1.84408259, -11.7866497, 22.6807411, -15.9618719, 1.80122502)
# IAPWS 2014 surface tension.
_SIGMA_B, _SIGMA_b, _SIGMA_MU = 235.8e-3, -0.625, 1.256


def _celsius(t):
    return np.asarray(t, dtype=float) - 273.15


def _poly(x, coeffs):
    """Horner evaluation of ``sum_k coeffs[k] x^k``."""
    out = np.zeros_like(x) + coeffs[-1]
    for c in coeffs[-2::-1]:
        out = out * x + c
    return out


# ---------------------------------------------------------------------------------------
# Pure water
# ---------------------------------------------------------------------------------------
def pure_water_density(p, t):
    """Density of air-free pure water (SMOW) [kg m^-3] ([1]_).

    ``rho = a5 [1 - (t + a1)^2 (t + a2) / (a3 (t + a4))] [1 + (k0 + k1 t + k2 t^2)(p - p0)]``
    with t in degC, a1 = -3.983035 degC, a2 = 301.797 degC, a3 = 522528.9 degC^2,
    a4 = 69.34881 degC, a5 = 999.974950 kg m^-3, k0 = 50.74e-11 Pa^-1,
    k1 = -0.326e-11 Pa^-1 degC^-1, k2 = 0.00416e-11 Pa^-1 degC^-2, p0 = 101 325 Pa.

    Parameters
    ----------
    p : array_like
        Pressure [Pa].
    t : array_like
        Temperature [K] (ITS-90), 0 to 40 degC.

    Examples
    --------
    IAPWS-95 at 20 degC and 101 325 Pa: 998.207 kg/m^3 (Wagner & Pruss 2002).

    >>> round(float(pure_water_density(101_325.0, 293.15)), 3)
    998.207
    """
    tc = _celsius(t)
    a1, a2, a3, a4, a5 = _TANAKA
    k0, k1, k2 = _TANAKA_K
    rho0 = a5 * (1.0 - (tc + a1) ** 2 * (tc + a2) / (a3 * (tc + a4)))
    return rho0 * (1.0 + (k0 + k1 * tc + k2 * tc * tc) * (np.asarray(p, dtype=float) - STANDARD_PRESSURE))


def pure_water_viscosity(t, rho):
    """Viscosity of liquid water by IAPWS 2008 without critical enhancement [Pa s] ([2]_).

    ``mu = 1e-6 Pa s * mu_0(Tb) * mu_1(Tb, rb)``, ``Tb = T / 647.096 K``,
    ``rb = rho / 322 kg m^-3``,
    ``mu_0 = 100 sqrt(Tb) / sum_{i=0}^{3} H_i / Tb^i``,
    ``mu_1 = exp[rb sum_{i=0}^{5} (1/Tb - 1)^i sum_{j=0}^{6} H_ij (rb - 1)^j]``.

    Parameters
    ----------
    t : array_like
        Temperature [K].
    rho : array_like
        Density [kg m^-3].

    Examples
    --------
    IAPWS R12-08 check value: T = 298.15 K, rho = 998 kg/m^3 gives
    889.735100 uPa s (from memory of the release).

    >>> round(float(pure_water_viscosity(298.15, 998.0)) * 1e6, 6)
    889.7351
    """
    tb = np.asarray(t, dtype=float) / _T_CRIT
    rb = np.asarray(rho, dtype=float) / _RHO_STAR
    mu0 = 100.0 * np.sqrt(tb) / (_H0[0] + _H0[1] / tb + _H0[2] / tb**2 + _H0[3] / tb**3)
    x = 1.0 / tb - 1.0
    y = rb - 1.0
    s = np.zeros(np.broadcast_shapes(x.shape, y.shape))
    for i in range(_HIJ.shape[0] - 1, -1, -1):
        s = s * x + _poly(y, _HIJ[i])
    return 1e-6 * mu0 * np.exp(rb * s)


def pure_water_speed_of_sound(t):
    """Speed of sound in pure water at 0.1 MPa [m s^-1] ([3]_, 148-point fit).

    ``c = sum_{k=0}^{5} c_k t^k``, t in degC; c_0 = 1402.38744, c_1 = 5.03836171,
    c_2 = -5.81172916e-2, c_3 = 3.34638117e-4, c_4 = -1.48259672e-6,
    c_5 = 3.16585020e-9.

    Examples
    --------
    IAPWS-95 at 20 degC, 0.1 MPa: 1482.35 m/s (CoolProp gives 1482.346 m/s).

    >>> round(float(pure_water_speed_of_sound(293.15)), 2)
    1482.36
    """
    return _poly(_celsius(t), _BW)


def pure_water_vapour_pressure(t):
    """Saturation vapour pressure of pure water [Pa] ([4]_).

    ``ln(p_s / p_c) = (T_c / T)(a1 tau + a2 tau^1.5 + a3 tau^3 + a4 tau^3.5 + a5 tau^4
    + a6 tau^7.5)``, ``tau = 1 - T/T_c``, T_c = 647.096 K, p_c = 22.064 MPa.

    Examples
    --------
    Triple point (611.657 Pa, IAPWS) and 100 degC (101 418 Pa, IAPWS-95 tables):

    >>> round(float(pure_water_vapour_pressure(273.16)), 3)
    611.657
    >>> round(float(pure_water_vapour_pressure(373.15)))
    101418
    """
    t = np.asarray(t, dtype=float)
    tau = 1.0 - t / _T_CRIT
    a1, a2, a3, a4, a5, a6 = _WP
    s = (a1 * tau + a2 * tau**1.5 + a3 * tau**3 + a4 * tau**3.5 + a5 * tau**4
         + a6 * tau**7.5)
    return _P_CRIT * np.exp(_T_CRIT / t * s)


def pure_water_surface_tension(t):
    """Surface tension of pure water against its vapour (or air) [N m^-1] ([5]_).

    ``sigma = B tau^mu (1 + b tau)``, ``tau = 1 - T/T_c``, B = 235.8e-3 N m^-1,
    b = -0.625, mu = 1.256.

    Examples
    --------
    IAPWS 2014 table: 72.74 mN/m at 20 degC.

    >>> round(float(pure_water_surface_tension(293.15)) * 1e3, 2)
    72.74
    """
    tau = 1.0 - np.asarray(t, dtype=float) / _T_CRIT
    return _SIGMA_B * tau**_SIGMA_MU * (1.0 + _SIGMA_b * tau)


# ---------------------------------------------------------------------------------------
# Sea water (Sharqawy et al. 2010; Mackenzie 1981)
# ---------------------------------------------------------------------------------------
def sea_water_density(p, t, salinity):
    """Density of sea water [kg m^-3] ([6]_; compressibility of [1]_).

    ``rho_sw = rho_w + s (a1 + a2 t + a3 t^2 + a4 t^3 + a5 s t^2)`` with s in kg/kg,
    t in degC, ``rho_w = 999.9 + 2.034e-2 t - 6.162e-3 t^2 + 2.261e-5 t^3 - 4.657e-8 t^4``,
    a1 = 802.0, a2 = -2.001, a3 = 1.677e-2, a4 = -3.060e-5, a5 = -1.613e-5; valid
    0-180 degC, 0-160 g/kg, accuracy +-0.1 % ([6]).  The pressure factor of pure
    water ([1]) is applied for p != 101 325 Pa.

    Parameters
    ----------
    p : array_like
        Pressure [Pa].
    t : array_like
        Temperature [K].
    salinity : array_like
        Salinity [g/kg].

    Examples
    --------
    TEOS-10 (Gibbs SeaWater library) at S_A = 35 g/kg, 20 degC, 0 dbar: 1024.64
    kg/m^3; the correlation is 2.6e-4 higher.

    >>> round(float(sea_water_density(101_325.0, 293.15, 35.0)), 2)
    1024.91
    """
    tc = _celsius(t)
    s = np.asarray(salinity, dtype=float) * 1e-3
    rho_w = _poly(tc, (999.9, 2.034e-2, -6.162e-3, 2.261e-5, -4.657e-8))
    rho = rho_w + s * (802.0 - 2.001 * tc + 1.677e-2 * tc**2 - 3.060e-5 * tc**3
                       - 1.613e-5 * s * tc**2)
    k0, k1, k2 = _TANAKA_K
    return rho * (1.0 + (k0 + k1 * tc + k2 * tc * tc) * (np.asarray(p, dtype=float) - STANDARD_PRESSURE))


def sea_water_viscosity_ratio(t, salinity):
    """``mu_sw / mu_w = 1 + A s + B s^2`` [-] ([6]_), s in kg/kg, t in degC.

    ``A = 1.541 + 1.998e-2 t - 9.52e-5 t^2``, ``B = 7.974 - 7.561e-2 t + 4.724e-4 t^2``;
    valid 0-180 degC, 0-150 g/kg, accuracy +-1.5 %.

    Examples
    --------
    >>> round(float(sea_water_viscosity_ratio(293.15, 35.0)), 4)
    1.0747
    """
    tc = _celsius(t)
    s = np.asarray(salinity, dtype=float) * 1e-3
    a = 1.541 + 1.998e-2 * tc - 9.52e-5 * tc**2
    b = 7.974 - 7.561e-2 * tc + 4.724e-4 * tc**2
    return 1.0 + a * s + b * s * s


def mackenzie_sound_speed(t, salinity, depth):
    """Mackenzie's nine-term equation for the speed of sound in sea water [m s^-1] ([7]_).

    ``c = 1448.96 + 4.591 t - 5.304e-2 t^2 + 2.374e-4 t^3 + 1.340 (S - 35) + 1.630e-2 D
    + 1.675e-7 D^2 - 1.025e-2 t (S - 35) - 7.139e-13 t D^3``, t in degC, S in g/kg,
    D the depth [m].  Published range -2 to 30 degC, 25-40 g/kg, 0-8000 m;
    standard error 0.07 m/s.

    Parameters
    ----------
    t : array_like
        Temperature [K].
    salinity : array_like
        Salinity [g/kg].
    depth : array_like
        Depth [m].

    Examples
    --------
    Mackenzie's check value: 1550.744 m/s at 25 degC, 35 g/kg, 1000 m.

    >>> round(float(mackenzie_sound_speed(298.15, 35.0, 1000.0)), 3)
    1550.744
    """
    tc = _celsius(t)
    ds = np.asarray(salinity, dtype=float) - 35.0
    d = np.asarray(depth, dtype=float)
    return (1448.96 + 4.591 * tc - 5.304e-2 * tc**2 + 2.374e-4 * tc**3 + 1.340 * ds
            + 1.630e-2 * d + 1.675e-7 * d * d - 1.025e-2 * tc * ds - 7.139e-13 * tc * d**3)


def sea_water_speed_of_sound(p, t, salinity):
    """Speed of sound in sea water [m s^-1]: :func:`mackenzie_sound_speed` at a depth from p.

    ``D = (p - 101 325 Pa) / (1025 kg m^-3 g0)`` [m] (negative below atmospheric
    pressure, where the depth terms are a small linear extrapolation).

    Examples
    --------
    TEOS-10 at 35 g/kg, 20 degC, 0 dbar: 1521.29 m/s (Mackenzie: 0.17 m/s higher).

    >>> round(float(sea_water_speed_of_sound(101_325.0, 293.15, 35.0)), 2)
    1521.46
    """
    d = (np.asarray(p, dtype=float) - STANDARD_PRESSURE) / (1025.0 * STANDARD_GRAVITY)
    return mackenzie_sound_speed(t, salinity, d)


def sea_water_vapour_pressure_ratio(salinity):
    """``p_v,sw / p_v,w = 1 / (1 + 0.57357 S / (1000 - S))`` [-], S in g/kg ([6]_).

    Raoult's law with the mean molar mass of the sea salt (18.015 / 31.4 = 0.5737);
    from memory of Sharqawy et al. 2010.  TEOS-10 (osmotic coefficient about 0.9)
    puts the lowering 0.2 % of p_v smaller at 35 g/kg (tests/test_water.py).

    Examples
    --------
    >>> round(float(sea_water_vapour_pressure_ratio(35.0)), 4)
    0.9796
    """
    s = np.asarray(salinity, dtype=float)
    return 1.0 / (1.0 + 0.57357 * s / (1000.0 - s))


def sea_water_surface_tension_ratio(t, salinity):
    """``sigma_sw / sigma_w = 1 + (2.26e-4 t + 9.46e-3) ln(1 + 0.0331 S)`` [-] ([6]_).

    t in degC, S in g/kg; valid 0-40 degC, 0-40 g/kg (from memory of Sharqawy et
    al. 2010, who fitted it to the data of Krummel 1900 and Chen et al. 1994).

    Examples
    --------
    >>> round(float(sea_water_surface_tension_ratio(293.15, 35.0)), 4)
    1.0108
    """
    tc = _celsius(t)
    s = np.asarray(salinity, dtype=float)
    return 1.0 + (2.26e-4 * tc + 9.46e-3) * np.log(1.0 + 0.0331 * s)


# ---------------------------------------------------------------------------------------
# Fluid objects
# ---------------------------------------------------------------------------------------
def _check_liquid(p, t, vapour_pressure, what):
    p = np.asarray(p, dtype=float)
    t = np.asarray(t, dtype=float)
    if not (np.all(np.isfinite(p)) and np.all(np.isfinite(t))):
        return "non-finite pressure or temperature"
    tlo, thi = TEMPERATURE_RANGE
    if np.any(t < tlo):
        return (f"temperature {float(np.min(t)):.6g} K below {tlo:.6g} K (0 degC): freezing, "
                f"and below the range of the {what} correlations")
    if np.any(t > thi):
        return (f"temperature {float(np.max(t)):.6g} K above {thi:.6g} K (40 degC), the range "
                f"of the {what} correlations")
    if np.any(p > MAX_PRESSURE):
        return (f"pressure {float(np.max(p)):.6g} Pa above {MAX_PRESSURE:.6g} Pa, where the "
                "neglected pressure dependence of the speed of sound stays below 5e-4")
    pb, tb = np.broadcast_arrays(p, t)
    pv = vapour_pressure(tb)
    if np.any(pb <= pv):
        i = np.unravel_index(int(np.argmax(pv - pb)), pb.shape) if pb.ndim else ()
        return (f"pressure {float(pb[i]):.6g} Pa at or below the vapour pressure "
                f"{float(pv[i]):.6g} Pa at {float(tb[i]):.5g} K: the water boils")
    return None


@dataclass(frozen=True)
class FreshWater:
    """Pure, air-free liquid water (see the module docstring for the correlations).

    Attributes
    ----------
    stated_uncertainty : dict
        Relative standard uncertainties (rectangular half-widths / sqrt(3) unless
        said otherwise): density 1e-5 (half-width: the formula's own 1e-6 ([1]),
        dissolved air -2.5e-6 and the isotopic composition of tap water a few 1e-6;
        dissolved salts of tap water, +1e-4 to +4e-4, are not included — use
        :class:`SeaWater` with a small salinity for them); viscosity 0.5 % (standard,
        half the expanded 1 % of IAPWS 2008 for the liquid at these conditions,
        from memory of R12-08);
        speed of sound 5e-4 (half-width: neglected pressure dependence up to
        500 kPa, 4.7e-4; the fit is within 0.025 m/s of IAPWS-95).
    """

    name: str = "fresh_water"
    kind: str = "liquid"
    parameters: tuple[str, ...] = ()
    description: str = ("fresh (pure) water: Tanaka et al. 2001 density, IAPWS 2008 viscosity, "
                        "Bilaniuk & Wong 1993 speed of sound, Wagner & Pruss 1993 vapour "
                        "pressure, IAPWS 2014 surface tension")
    stated_uncertainty: dict[str, float] = field(default_factory=lambda: {
        "density": 1e-5 / np.sqrt(3.0),
        "viscosity": 0.005,
        "speed_of_sound": 5e-4 / np.sqrt(3.0),
    })

    def density(self, p, t, **params):
        """Density [kg m^-3] ([1]); see :func:`pure_water_density`.

        >>> round(float(FRESH_WATER.density(101_325.0, 288.15)), 3)  # IAPWS-95: 999.103
        999.103
        """
        return pure_water_density(p, t)

    def viscosity(self, p, t, **params):
        """Dynamic viscosity [Pa s] (IAPWS 2008 at the density of [1], which carries p).

        IAPWS 2008 at 20 degC, 0.1 MPa: 1001.6 uPa s.

        >>> round(float(FRESH_WATER.viscosity(101_325.0, 293.15)) * 1e6, 1)
        1001.6
        """
        return pure_water_viscosity(t, pure_water_density(p, t))

    def speed_of_sound(self, p, t, **params):
        """Speed of sound at 0.1 MPa [m s^-1] ([3]); p is not used.

        >>> round(float(FRESH_WATER.speed_of_sound(101_325.0, 298.15)), 1)  # IAPWS-95: 1496.7
        1496.7
        """
        t = np.asarray(t, dtype=float)
        return np.broadcast_to(pure_water_speed_of_sound(t),
                               np.broadcast_shapes(np.shape(p), t.shape))

    def vapour_pressure(self, t, **params):
        """Saturation vapour pressure [Pa] ([4]); see :func:`pure_water_vapour_pressure`.

        >>> round(float(FRESH_WATER.vapour_pressure(293.15)))   # IAPWS-95: 2339 Pa
        2339
        """
        return pure_water_vapour_pressure(t)

    def surface_tension(self, t, **params):
        """Surface tension [N m^-1] ([5]); see :func:`pure_water_surface_tension`.

        >>> round(float(FRESH_WATER.surface_tension(298.15)) * 1e3, 2)   # IAPWS 2014: 71.97
        71.97
        """
        return pure_water_surface_tension(t)

    def check_state(self, p, t, **params):
        """``None`` inside 0-40 degC, p <= 500 kPa and above the vapour pressure, else why.

        >>> print(FRESH_WATER.check_state(2_000.0, 293.15))
        pressure 2000 Pa at or below the vapour pressure 2339.19 Pa at 293.15 K: the water boils
        """
        return _check_liquid(p, t, pure_water_vapour_pressure, "fresh-water")


@dataclass(frozen=True)
class SeaWater:
    """Sea water of salinity S [g/kg] (see the module docstring for the correlations).

    Parameters
    ----------
    salinity : float
        Nominal salinity [g/kg] (absolute / reference salinity), 0 to 40; the
        methods take an array of salinities as the keyword ``salinity``.

    Attributes
    ----------
    stated_uncertainty : dict
        Relative standard uncertainties (rectangular half-widths / sqrt(3)):
        density 1e-3 (accuracy +-0.1 % of the correlation, [6]); viscosity 1.5 %
        (+-1.5 %, [6]); speed of sound 1e-3 (largest deviation of Mackenzie's
        equation from TEOS-10 over 0-40 degC, 0-40 g/kg, 1.5 m/s at 0 g/kg and
        40 degC, outside Mackenzie's published range, rounded up).
    """

    salinity: float = 35.0
    name: str = "sea_water"
    kind: str = "liquid"
    parameters: tuple[str, ...] = ("salinity",)
    description: str = ("sea water: Sharqawy, Lienhard & Zubair 2010 density, viscosity, "
                        "vapour pressure and surface tension on IAPWS pure water; "
                        "Mackenzie 1981 speed of sound")
    stated_uncertainty: dict[str, float] = field(default_factory=lambda: {
        "density": 1e-3 / np.sqrt(3.0),
        "viscosity": 0.015 / np.sqrt(3.0),
        "speed_of_sound": 1e-3 / np.sqrt(3.0),
    })

    def __post_init__(self):
        lo, hi = SALINITY_RANGE
        if not lo <= self.salinity <= hi:
            raise ValueError(f"salinity {self.salinity!r} g/kg: expected {lo:g} to {hi:g} g/kg")

    def _s(self, salinity):
        return np.asarray(self.salinity if salinity is None else salinity, dtype=float)

    def density(self, p, t, salinity=None, **params):
        """Density [kg m^-3]; see :func:`sea_water_density`.

        >>> round(float(SEA_WATER.density(101_325.0, 288.15)), 2)  # TEOS-10: 1025.85
        1026.04
        """
        return sea_water_density(p, t, self._s(salinity))

    def viscosity(self, p, t, salinity=None, **params):
        """Dynamic viscosity ``mu_w (1 + A s + B s^2)`` [Pa s] ([6]; mu_w: IAPWS 2008).

        >>> round(float(SEA_WATER.viscosity(101_325.0, 293.15)) * 1e6, 1)
        1076.5
        """
        return pure_water_viscosity(t, pure_water_density(p, t)) \
            * sea_water_viscosity_ratio(t, self._s(salinity))

    def speed_of_sound(self, p, t, salinity=None, **params):
        """Speed of sound [m s^-1] ([7]); see :func:`sea_water_speed_of_sound`.

        >>> round(float(SEA_WATER.speed_of_sound(101_325.0, 283.15)), 2)  # TEOS-10: 1489.59
        1489.8
        """
        return sea_water_speed_of_sound(p, t, self._s(salinity))

    def vapour_pressure(self, t, salinity=None, **params):
        """Vapour pressure [Pa]: pure water ([4]) times :func:`sea_water_vapour_pressure_ratio`.

        >>> round(float(SEA_WATER.vapour_pressure(293.15)), 1)
        2291.5
        """
        return pure_water_vapour_pressure(t) * sea_water_vapour_pressure_ratio(self._s(salinity))

    def surface_tension(self, t, salinity=None, **params):
        """Surface tension [N m^-1]: IAPWS 2014 times :func:`sea_water_surface_tension_ratio`.

        >>> round(float(SEA_WATER.surface_tension(293.15)) * 1e3, 2)
        73.52
        """
        return pure_water_surface_tension(t) * sea_water_surface_tension_ratio(
            t, self._s(salinity))

    def check_state(self, p, t, salinity=None, **params):
        """``None`` inside 0-40 degC, p <= 500 kPa, above the vapour pressure and 0-40 g/kg.

        The lower bound is the correlations' 0 degC, not the freezing point of sea
        water (-1.9 degC at 35 g/kg).

        >>> print(SEA_WATER.check_state(101_325.0, 318.15))
        temperature 318.15 K above 313.15 K (40 degC), the range of the sea-water correlations
        """
        s = self._s(salinity)
        if not np.all(np.isfinite(s)) or np.any(s < SALINITY_RANGE[0]) \
                or np.any(s > SALINITY_RANGE[1]):
            return (f"salinity {float(np.min(s)):.6g} .. {float(np.max(s)):.6g} g/kg outside "
                    f"{SALINITY_RANGE[0]:g} .. {SALINITY_RANGE[1]:g} g/kg")
        return _check_liquid(p, t, lambda tt: self.vapour_pressure(tt, s), "sea-water")


#: Fresh water.
FRESH_WATER = FreshWater()
#: Sea water of 35 g/kg.
SEA_WATER = SeaWater()
