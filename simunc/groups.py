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
