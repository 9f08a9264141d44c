"""Isentropic relations of a perfect gas and the dynamic pressure.

References
----------
.. [1] Ames Research Staff, *Equations, Tables, and Charts for Compressible
   Flow*, NACA Report 1135, 1953, eqs. 43-45 and Table I.
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
