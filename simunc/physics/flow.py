"""Isentropic relations of a perfect gas, the dynamic pressure and hydrostatics.

References
----------
.. [1] Ames Research Staff, *Equations, Tables, and Charts for Compressible
   Flow*, NACA Report 1135, 1953, eqs. 43-45 and Table I.
.. [2] F. M. White, *Fluid Mechanics*, 7th ed., McGraw-Hill, 2011, eqs. 2.14
   (hydrostatic pressure) and 3.54 (Bernoulli: stagnation pressure p + rho V^2 / 2).
"""

from __future__ import annotations

import numpy as np


def temperature_ratio(mach, gamma=1.4):
    """Static-to-stagnation temperature ratio ``T/T0 = (1 + (gamma-1)/2 M^2)^-1``.

    Parameters
    ----------
    mach : array_like
        Mach number [-].
    gamma : float
        Ratio of specific heats [-].

    Examples
    --------
    NACA Report 1135, Table I, M = 0.5: T/T0 = 0.95238.

    >>> round(float(temperature_ratio(0.5)), 5)
    0.95238
    """
    return 1.0 / (1.0 + 0.5 * (gamma - 1.0) * np.asarray(mach) ** 2)


def pressure_ratio(mach, gamma=1.4):
    """Static-to-stagnation pressure ratio ``p/p0 = (T/T0)^(gamma/(gamma-1))``.

    Examples
    --------
    NACA Report 1135, Table I, M = 0.5: p/p0 = 0.84302.

    >>> round(float(pressure_ratio(0.5)), 5)
    0.84302
    """
    return temperature_ratio(mach, gamma) ** (gamma / (gamma - 1.0))


def density_ratio(mach, gamma=1.4):
    """Static-to-stagnation density ratio ``rho/rho0 = (T/T0)^(1/(gamma-1))``.

    Examples
    --------
    NACA Report 1135, Table I, M = 0.5: rho/rho0 = 0.88517.

    >>> round(float(density_ratio(0.5)), 5)
    0.88517
    """
    return temperature_ratio(mach, gamma) ** (1.0 / (gamma - 1.0))


def mach_from_pressure_ratio(p0_over_p, gamma=1.4):
    """Mach number from the stagnation-to-static pressure ratio (subsonic, isentropic).

    ``M = sqrt(2/(gamma-1) ((p0/p)^((gamma-1)/gamma) - 1))``

    Parameters
    ----------
    p0_over_p : array_like
        Stagnation over static pressure [-], >= 1.

    Examples
    --------
    NACA Report 1135, Table I: p/p0 = 0.65602 at M = 0.80.

    >>> round(float(mach_from_pressure_ratio(1 / 0.65602)), 4)
    0.8
    """
    return np.sqrt(2.0 / (gamma - 1.0) * (np.asarray(p0_over_p) ** ((gamma - 1.0) / gamma) - 1.0))


def dynamic_pressure(p, mach, gamma=1.4):
    """Dynamic pressure ``q = rho V^2 / 2 = gamma p M^2 / 2`` [Pa].

    Parameters
    ----------
    p : array_like
        Static pressure [Pa].
    mach : array_like
        Mach number [-].

    Examples
    --------
    NACA Report 1135, Table I, M = 0.5: q/p0 = 0.14753, so with p/p0 = 0.84302,
    q = 0.7 p M^2.

    >>> round(float(dynamic_pressure(0.84302, 0.5)), 5)
    0.14753
    """
    return 0.5 * gamma * p * np.asarray(mach) ** 2


def kinetic_pressure(density, speed):
    """Dynamic pressure from density and speed ``q = rho V^2 / 2`` [Pa].

    Parameters
    ----------
    density : array_like
        Density rho [kg m^-3].
    speed : array_like
        Flow speed V [m s^-1].

    Examples
    --------
    Sea-level air of the U.S. Standard Atmosphere 1976 (rho = 1.225 kg/m^3) at
    40 m/s: q = 0.5 * 1.225 * 1600 = 980 Pa ([2], eq. 3.54).

    >>> round(float(kinetic_pressure(1.225, 40.0)), 9)
    980.0
    """
    return 0.5 * density * speed**2


def hydrostatic_pressure(surface_pressure, density, depth, gravity):
    """Pressure at a depth below a free surface ``p = p_s + rho g h`` [Pa] ([2], eq. 2.14).

    Parameters
    ----------
    surface_pressure : array_like
        Pressure at the free surface p_s [Pa].
    density : array_like
        Liquid density rho [kg m^-3] (taken constant over the depth).
    depth : array_like
        Depth h below the surface [m].
    gravity : array_like
        Acceleration of gravity g [m s^-2].

    Examples
    --------
    10 m of fresh water (rho = 1000 kg/m^3) under the standard atmosphere
    adds 98 066.5 Pa:

    >>> float(hydrostatic_pressure(101_325.0, 1000.0, 10.0, 9.80665))
    199391.5
    """
    return surface_pressure + density * gravity * depth

