"""U.S. Standard Atmosphere 1976 (identical to ISO 2533 below 32 km), vectorized.

Seven layers from -5 km to 86 km geometric altitude (84.852 km geopotential),
with an optional temperature offset ("ISA + dT" days: the pressure at a given
altitude stays the standard one, the temperature is shifted), geometric and
geopotential altitude both ways, and pressure altitude.  Above 80 km the
kinetic temperature is the molecular-scale temperature times the tabulated
molecular-weight ratio M/M0 ([1], Table 8); the pressure follows from the
molecular-scale temperature as the standard defines it.

References
----------
.. [1] NOAA, NASA, USAF, *U.S. Standard Atmosphere, 1976*, NOAA-S/T 76-1562,
   Washington DC, 1976, Part 1 (equations 18, 33a, 33b and Table 4).
.. [2] ISO 2533:1975, *Standard Atmosphere*.
"""

from __future__ import annotations

import numpy as np

from simunc.constants import STANDARD_GRAVITY, STANDARD_PRESSURE
from simunc.physics.fluids.ideal_gas import AIR

#: Effective Earth radius r0 for geopotential altitude [m] ([1], eq. 18).
EARTH_RADIUS = 6_356_766.0
#: Sea-level standard temperature [K] (the pressure and g0 are simunc.constants).
T_SL = 288.15

#: Layer base geopotential altitudes [m] and lapse rates [K m^-1] ([1], Table 4).
_H_BASE = np.array([0.0, 11_000.0, 20_000.0, 32_000.0, 47_000.0, 51_000.0, 71_000.0, 84_852.0])
_LAPSE = np.array([-6.5e-3, 0.0, 1.0e-3, 2.8e-3, 0.0, -2.8e-3, -2.0e-3])


def _base_values() -> tuple[np.ndarray, np.ndarray]:
    t = [T_SL]
    p = [STANDARD_PRESSURE]
    k = STANDARD_GRAVITY / AIR.gas_constant
    for i, lapse in enumerate(_LAPSE):
        dh = _H_BASE[i + 1] - _H_BASE[i]
        t_top = t[-1] + lapse * dh
        if lapse == 0.0:
            p_top = p[-1] * np.exp(-k * dh / t[-1])
        else:
            p_top = p[-1] * (t_top / t[-1]) ** (-k / lapse)
        t.append(t_top)
        p.append(p_top)
    return np.array(t[:-1]), np.array(p[:-1])


_T_BASE, _P_BASE = _base_values()

#: Validity range in geometric altitude [m].
ALTITUDE_RANGE = (-5_000.0, 86_000.0)

#: Molecular-weight ratio M/M0 from 80 to 86 km geometric altitude ([1], Table 8).
_Z_RATIO = np.arange(80_000.0, 86_001.0, 500.0)
_M_RATIO = np.array([1.000000, 0.999996, 0.999988, 0.999969, 0.999938, 0.999904, 0.999864,
                     0.999822, 0.999778, 0.999731, 0.999681, 0.999633, 0.999579])


def geopotential_altitude(z):
    """Geopotential altitude from geometric altitude.

    ``H = r0 z / (r0 + z)``

    Parameters
    ----------
    z : array_like
        Geometric altitude [m].

    Returns
    -------
    ndarray
        Geopotential altitude [m'] ([1], eq. 18).

    Examples
    --------
    U.S. Standard Atmosphere 1976, Table I: 11 000 m geometric is 10 981 m'.

    >>> round(float(geopotential_altitude(11_000.0)))
    10981
    """
    z = np.asarray(z, dtype=float)
    return EARTH_RADIUS * z / (EARTH_RADIUS + z)


def geometric_altitude(h):
    """Geometric altitude from geopotential altitude, ``z = r0 H / (r0 - H)``.

    Parameters
    ----------
    h : array_like
        Geopotential altitude [m'].

    Returns
    -------
    ndarray
        Geometric altitude [m] ([1], eq. 18 inverted).

    Examples
    --------
    U.S. Standard Atmosphere 1976, Table 4: the 84.852 km' layer top is 86 km geometric.

    >>> round(float(geometric_altitude(84_852.0)))
    86000
    """
    h = np.asarray(h, dtype=float)
    return EARTH_RADIUS * h / (EARTH_RADIUS - h)


def _layer_state(h):
    """Molecular-scale temperature [K] and pressure [Pa] at geopotential altitude h [m']."""
    i = np.clip(np.searchsorted(_H_BASE, h, side="right") - 1, 0, len(_LAPSE) - 1)
    lapse = _LAPSE[i]
    t_b = _T_BASE[i]
    dh = h - _H_BASE[i]
    t = t_b + lapse * dh
    k = STANDARD_GRAVITY / AIR.gas_constant
    safe_lapse = np.where(lapse == 0.0, 1.0, lapse)
    p_grad = _P_BASE[i] * (t / t_b) ** (-k / safe_lapse)
    p_iso = _P_BASE[i] * np.exp(-k * dh / t_b)
    return t, np.where(lapse == 0.0, p_iso, p_grad)


def pressure_altitude(p):
    """Geopotential altitude at which the standard pressure equals ``p``.

    Inverts the layer equations ([1], eqs. 33a, 33b):
    ``H = H_b + T_b / L ((p / p_b)^(-R L / g0) - 1)`` or, for ``L = 0``,
    ``H = H_b - R T_b ln(p / p_b) / g0``.

    Parameters
    ----------
    p : array_like
        Static pressure [Pa], between the standard pressures at -5 km and 86 km.

    Returns
    -------
    ndarray
        Pressure altitude (geopotential) [m'].

    Examples
    --------
    Tropopause pressure of [1], Table 4 (22 632.06 Pa) is 11 000 m'.

    >>> round(float(pressure_altitude(22_632.06)), 1)
    11000.0
    """
    p = np.asarray(p, dtype=float)
    i = np.clip(len(_P_BASE) - np.searchsorted(_P_BASE[::-1], p, side="left") - 1, 0, len(_LAPSE) - 1)
    lapse = _LAPSE[i]
    k = STANDARD_GRAVITY / AIR.gas_constant
    ratio = p / _P_BASE[i]
    safe_lapse = np.where(lapse == 0.0, 1.0, lapse)
    h_grad = _H_BASE[i] + _T_BASE[i] / safe_lapse * (ratio ** (-safe_lapse / k) - 1.0)
    h_iso = _H_BASE[i] - _T_BASE[i] * np.log(ratio) / k
    return np.where(lapse == 0.0, h_iso, h_grad)


def standard_state(z, temperature_offset=0.0):
    """Static temperature and pressure of the standard atmosphere.

    In a layer with base ``(H_b, T_b, p_b)`` and lapse rate ``L``, the
    molecular-scale temperature is ``T_M = T_b + L (H - H_b)``; ``p = p_b (T / T_b)^(-g0 / (R L))`` for
    ``L != 0`` and ``p = p_b exp(-g0 (H - H_b) / (R T_b))`` for ``L = 0``
    ([1], eqs. 33a, 33b), with ``T_M`` in place of ``T``; the kinetic
    temperature is ``T = T_M M / M0`` (1 below 80 km).  The temperature offset ``dT`` is added to ``T``
    afterwards; the pressure stays the standard one.

    Parameters
    ----------
    z : array_like
        Geometric altitude [m], -5 000 to 86 000.
    temperature_offset : array_like
        Offset from the standard temperature [K].

    Returns
    -------
    temperature : ndarray
        Static temperature [K].
    pressure : ndarray
        Static pressure [Pa].

    Examples
    --------
    Tropopause, 11 000 m' geopotential ([1], Table 4): 216.65 K, 22 632 Pa.

    >>> t, p = standard_state(11_019.07)
    >>> round(float(t), 2), round(float(p))
    (216.65, 22632)
    """
    z = np.asarray(z, dtype=float)
    t_m, p = _layer_state(geopotential_altitude(z))
    t = t_m * np.interp(z, _Z_RATIO, _M_RATIO, left=1.0, right=_M_RATIO[-1])
    return t + np.asarray(temperature_offset, dtype=float), p
