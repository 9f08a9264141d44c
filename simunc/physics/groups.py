"""Dimensionless groups of flow similitude.

References
----------
.. [1] F. M. White, *Fluid Mechanics*, 7th ed., McGraw-Hill, 2011, sec. 5.2
   and Table 5.2.
"""

from __future__ import annotations


def reynolds(density, speed, length, viscosity):
    """Reynolds number on a reference length ``Re = rho V L / mu``.

    Parameters
    ----------
    density : array_like
        Density rho [kg m^-3].
    speed : array_like
        Flow speed V [m s^-1].
    length : array_like
        Reference length L [m].
    viscosity : array_like
        Dynamic viscosity mu [Pa s].

    Examples
    --------
    Sea-level air of the U.S. Standard Atmosphere 1976 (rho = 1.225 kg/m^3,
    mu = 1.7894e-5 Pa s) at 50 m/s on 1 m: Re = 1.225 * 50 / 1.7894e-5.

    >>> f"{reynolds(1.225, 50.0, 1.0, 1.7894e-5):.4g}"
    '3.423e+06'
    """
    return density * speed * length / viscosity


def mach(speed, speed_of_sound):
    """Mach number ``Ma = V / a``.

    Parameters
    ----------
    speed : array_like
        Flow speed V [m s^-1].
    speed_of_sound : array_like
        Speed of sound a [m s^-1].

    Examples
    --------
    Half the sea-level speed of sound of the U.S. Standard Atmosphere 1976
    (340.29 m/s):

    >>> round(mach(170.145, 340.29), 3)
    0.5
    """
    return speed / speed_of_sound



# ---------------------------------------------------------------------------
# Further groups of similitude.  Each function is plain array arithmetic:
# NumPy arrays broadcast, and pint Quantities in any consistent units give a
# dimensionless Quantity.  Texts differ in conventions (squared or not, with
# or without a factor 1/2); each docstring states the one used here.
# ---------------------------------------------------------------------------

import math  # noqa: E402

import numpy as np  # noqa: E402

from simunc.constants import STANDARD_GRAVITY  # noqa: E402


def froude(speed, length, gravity=STANDARD_GRAVITY):
    """Froude number ``Fr = V / sqrt(g L)``.

    Parameters
    ----------
    speed : array_like
        Flow or hull speed V [m s^-1].
    length : array_like
        Reference length L (waterline length, depth, ...) [m].
    gravity : array_like, optional
        Acceleration of gravity g [m s^-2]; default the standard value
        9.80665 m s^-2.

    Notes
    -----
    The "speed" form of towing-tank practice.  Some texts tabulate the square
    ``V^2 / (g L)``; square the result for that convention.

    References
    ----------
    F. M. White, *Fluid Mechanics*, 7th ed., McGraw-Hill, 2011, Table 5.2
    and sec. 5.4 (Froude scaling of ship models).

    Examples
    --------
    Deep-water gravity waves of length lambda travel at
    ``c = sqrt(g lambda / (2 pi))``, so a hull whose own transverse wave is as
    long as its waterline runs at ``Fr = 1 / sqrt(2 pi) = 0.3989``.  For a
    100 m hull that is c = sqrt(9.80665 * 100 / (2 pi)) = 12.49 m/s:

    >>> c = math.sqrt(9.80665 * 100.0 / (2.0 * math.pi))
    >>> round(float(froude(c, 100.0)), 4)
    0.3989
    """
    return speed / np.sqrt(gravity * length)


def strouhal(frequency, length, speed):
    """Strouhal number ``St = f L / V``.

    Parameters
    ----------
    frequency : array_like
        Cyclic frequency f, e.g. of vortex shedding [Hz].
    length : array_like
        Reference length L (cylinder diameter, ...) [m].
    speed : array_like
        Flow speed V [m s^-1].

    Notes
    -----
    Cyclic frequency in Hz; with an angular frequency use ``omega / (2 pi)``.

    References
    ----------
    F. M. White, *Fluid Mechanics*, 7th ed., McGraw-Hill, 2011, Table 5.2.
    A. Roshko, "On the development of turbulent wakes from vortex streets",
    NACA Report 1191, 1954 (St of circular cylinders).

    Examples
    --------
    A 20 mm cylinder in a 10 m/s stream shedding vortices at 105 Hz:
    St = 105 * 0.02 / 10 = 0.21, close to the value usual for a circular
    cylinder at subcritical Reynolds numbers.

    >>> round(strouhal(105.0, 0.02, 10.0), 3)
    0.21
    """
    return frequency * length / speed


def reduced_frequency(omega, chord, speed, *, hertz=False):
    """Reduced frequency on the semi-chord ``k = omega c / (2 V)``.

    Parameters
    ----------
    omega : array_like
        Angular frequency omega [rad s^-1]; with ``hertz=True`` the cyclic
        frequency f [Hz] instead, and ``omega = 2 pi f``.
    chord : array_like
        Chord c [m].
    speed : array_like
        Flow speed V [m s^-1].
    hertz : bool, optional
        Read ``omega`` as a cyclic frequency in Hz.

    Notes
    -----
    Convention: the semi-chord ``b = c / 2`` is the reference length,
    ``k = omega b / V``, as in Theodorsen's unsteady aerofoil theory.  Some
    texts use the full chord, ``omega c / V = 2 k``.

    References
    ----------
    T. Theodorsen, "General theory of aerodynamic instability and the
    mechanism of flutter", NACA Report 496, 1935.

    Examples
    --------
    An aerofoil of 0.3 m chord pitching at 5 Hz in a 20 m/s stream:
    k = 2 pi 5 * 0.3 / (2 * 20) = 0.2356; at omega = 10 rad/s,
    k = 10 * 0.3 / 40 = 0.075.

    >>> round(reduced_frequency(5.0, 0.3, 20.0, hertz=True), 4)
    0.2356
    >>> round(reduced_frequency(10.0, 0.3, 20.0), 4)
    0.075
    """
    if hertz:
        omega = 2.0 * math.pi * omega
    return omega * chord / (2.0 * speed)


def weber(density, speed, length, surface_tension):
    """Weber number ``We = rho V^2 L / sigma``.

    Parameters
    ----------
    density : array_like
        Liquid density rho [kg m^-3].
    speed : array_like
        Speed V [m s^-1].
    length : array_like
        Reference length L (drop diameter, ...) [m].
    surface_tension : array_like
        Surface tension sigma [N m^-1].

    References
    ----------
    F. M. White, *Fluid Mechanics*, 7th ed., McGraw-Hill, 2011, Table 5.2.

    Examples
    --------
    A 2 mm water drop (rho = 998 kg/m^3, sigma = 0.0728 N/m, water-air near
    20 degC) at 5 m/s: We = 998 * 25 * 0.002 / 0.0728 = 685.4.

    >>> round(weber(998.0, 5.0, 0.002, 0.0728), 1)
    685.4
    """
    return density * speed**2 * length / surface_tension


def prandtl(viscosity, cp, conductivity):
    """Prandtl number ``Pr = mu c_p / k``.

    Parameters
    ----------
    viscosity : array_like
        Dynamic viscosity mu [Pa s].
    cp : array_like
        Specific heat at constant pressure c_p [J kg^-1 K^-1].
    conductivity : array_like
        Thermal conductivity k [W m^-1 K^-1].

    References
    ----------
    F. M. White, *Fluid Mechanics*, 7th ed., McGraw-Hill, 2011, Table 5.2.

    Examples
    --------
    Air at 300 K and 1 atm with mu = 1.846e-5 Pa s, c_p = 1007 J/(kg K),
    k = 0.0263 W/(m K): Pr = 1.846e-5 * 1007 / 0.0263 = 0.707.

    >>> round(prandtl(1.846e-5, 1007.0, 0.0263), 3)
    0.707
    """
    return viscosity * cp / conductivity


def euler(pressure_difference, density, speed):
    """Euler number ``Eu = dp / (rho V^2)``.

    Parameters
    ----------
    pressure_difference : array_like
        Pressure difference dp [Pa].
    density : array_like
        Density rho [kg m^-3].
    speed : array_like
        Speed V [m s^-1].

    Notes
    -----
    No factor 1/2, so ``Eu = Cp / 2`` for the same dp (compare
    :func:`pressure_coefficient`).  Texts differ on this factor.

    References
    ----------
    F. M. White, *Fluid Mechanics*, 7th ed., McGraw-Hill, 2011, ch. 5.

    Examples
    --------
    Water (rho = 998 kg/m^3) at 2 m/s losing 12 kPa across a valve:
    Eu = 12000 / (998 * 4) = 3.006.

    >>> round(euler(12000.0, 998.0, 2.0), 3)
    3.006
    """
    return pressure_difference / (density * speed**2)


def pressure_coefficient(p, p_ref, density, speed):
    """Pressure coefficient ``Cp = (p - p_ref) / (rho V^2 / 2)``.

    Parameters
    ----------
    p : array_like
        Local static pressure [Pa].
    p_ref : array_like
        Reference (free-stream static) pressure [Pa].
    density : array_like
        Free-stream density rho [kg m^-3].
    speed : array_like
        Free-stream speed V [m s^-1].

    References
    ----------
    F. M. White, *Fluid Mechanics*, 7th ed., McGraw-Hill, 2011, Table 5.2.

    Examples
    --------
    At a stagnation point of incompressible flow Bernoulli's equation gives
    ``p - p_ref = rho V^2 / 2``, so Cp = 1:

    >>> pressure_coefficient(101325.0 + 0.5 * 1.225 * 40.0**2, 101325.0, 1.225, 40.0)
    1.0
    """
    return (p - p_ref) / (0.5 * density * speed * speed)


def cavitation_number(p, p_vapour, density, speed):
    """Cavitation number ``sigma = (p - p_v) / (rho V^2 / 2)``.

    Parameters
    ----------
    p : array_like
        Reference static pressure (at the shaft or body depth) [Pa].
    p_vapour : array_like
        Vapour pressure of the liquid p_v [Pa].
    density : array_like
        Liquid density rho [kg m^-3].
    speed : array_like
        Speed V [m s^-1].

    Notes
    -----
    With the factor 1/2, the form usual for propellers and hydrofoils; some
    texts divide by ``rho V^2`` instead (half this value).

    References
    ----------
    F. M. White, *Fluid Mechanics*, 7th ed., McGraw-Hill, 2011, Table 5.2.

    Examples
    --------
    Water near 20 degC (rho = 998 kg/m^3, p_v = 2337 Pa) at one standard
    atmosphere and 10 m/s: sigma = (101325 - 2337) / (0.5 * 998 * 100) = 1.984.

    >>> round(cavitation_number(101325.0, 2337.0, 998.0, 10.0), 3)
    1.984
    """
    return (p - p_vapour) / (0.5 * density * speed**2)
