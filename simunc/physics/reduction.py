"""Force-balance and pressure data reduction: axes, coefficients, pressure coefficient.

Sign conventions (the usual ones of low-speed wind-tunnel testing, [1] ch. 6):
lift L normal to the free stream, drag D along it, normal force N along the
model's normal axis, axial force A along its chord line (positive aft); α is the
angle of attack, nose up positive.  A pitching moment M is the same in both
axes (about the moment reference point).

References
----------
.. [1] J. B. Barlow, W. H. Rae, A. Pope, *Low-Speed Wind Tunnel Testing*, 3rd ed.,
   Wiley, 1999, sections 6.1-6.3 (balance axes, resolution of forces).
.. [2] J. D. Anderson, *Fundamentals of Aerodynamics*, 5th ed., McGraw-Hill, 2011,
   eqs. (1.1)-(1.2) (L = N cos α - A sin α, D = N sin α + A cos α) and (3.38)
   (pressure coefficient).
"""

from __future__ import annotations

import numpy as np


def wind_to_body(lift, drag, alpha):
    """Normal and axial force [N] from lift and drag [N] at the angle of attack α [rad].

    ``N = L cos α + D sin α``, ``A = D cos α - L sin α`` ([2], inverse of eqs. 1.1-1.2).

    >>> n, a = wind_to_body(1000.0, 50.0, np.radians(5.0))
    >>> round(float(n), 3), round(float(a), 3)   # cos 5 deg = 0.996195, sin 5 deg = 0.087156
    (1000.552, -37.346)
    """
    c, s = np.cos(alpha), np.sin(alpha)
    return lift * c + drag * s, drag * c - lift * s


def body_to_wind(normal, axial, alpha):
    """Lift and drag [N] from normal and axial force [N] at the angle of attack α [rad].

    ``L = N cos α - A sin α``, ``D = N sin α + A cos α`` ([2], eqs. 1.1-1.2).

    >>> lift, drag = body_to_wind(1000.5525, -37.3460, np.radians(5.0))
    >>> round(float(lift), 2), round(float(drag), 2)
    (1000.0, 50.0)
    """
    c, s = np.cos(alpha), np.sin(alpha)
    return normal * c - axial * s, normal * s + axial * c


def force_coefficient(force, dynamic_pressure, area):
    """``C = F / (q S)`` [-] from a force [N], q [Pa] and the reference area S [m^2].

    >>> round(force_coefficient(500.0, 20_000.0, 0.05), 6)
    0.5
    """
    return force / (dynamic_pressure * area)


def moment_coefficient(moment, dynamic_pressure, area, length):
    """``Cm = M / (q S c)`` [-] from a moment [N m], q [Pa], S [m^2] and the reference length c [m].

    >>> round(moment_coefficient(-20.0, 20_000.0, 0.05, 0.2), 6)
    -0.1
    """
    return moment / (dynamic_pressure * area * length)


def pressure_coefficient(p_local, p_static, dynamic_pressure):
    """``Cp = (p - p_inf) / q_inf`` [-] ([2], eq. 3.38) from pressures [Pa] and q [Pa].

    >>> round(pressure_coefficient(99_000.0, 100_000.0, 2_000.0), 6)
    -0.5
    """
    return (p_local - p_static) / dynamic_pressure
