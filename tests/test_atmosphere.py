"""simunc.physics.atmosphere and the air property model against the 1976 U.S. Standard Atmosphere.

Check values come from
* U.S. Standard Atmosphere, 1976 (NOAA-S/T 76-1562), Table I (geometric
  altitude) and Table 4 (layer base values), marked where recalled;
* hand calculations written here from the defining equations of that document
  (eq. 18 for the geopotential altitude, eqs. 33a/33b for the layers);
* the ``ambiance`` package (PyPI), an independent implementation of the same
  atmosphere, used only by these tests.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from simunc.physics.atmosphere import (
    ALTITUDE_RANGE,
    geometric_altitude,
    geopotential_altitude,
    pressure_altitude,
    standard_state,
)
from simunc.physics.fluids.ideal_gas import AIR

# Constants of the 1976 standard (from memory of U.S. Standard Atmosphere 1976, Part 1,
# Table 2 and eq. 18): g0, R* / M0 and the effective Earth radius r0.
G0 = 9.80665
R_AIR = 8314.32 / 28.9644
R0 = 6_356_766.0
GAMMA = 1.4
BETA = 1.458e-6      # Sutherland beta [kg m^-1 s^-1 K^-1/2] (USSA 1976 eq. 51, from memory)
S_SUTH = 110.4       # Sutherland constant [K] (USSA 1976 eq. 51, from memory)


# ---------------------------------------------------------------------------
# Table I, geometric altitude (from memory of U.S. Standard Atmosphere 1976, Table I).
# z [m], T [K], p [Pa], rho [kg m^-3], a [m s^-1], mu [Pa s] (None: not recalled reliably).
# ---------------------------------------------------------------------------
TABLE_I = [
    (0.0, 288.150, 1.01325e5, 1.2250, 340.29, 1.7894e-5),
    (1_000.0, 281.651, 8.9876e4, 1.1117, 336.43, 1.7579e-5),
    (5_000.0, 255.676, 5.4048e4, 7.3643e-1, 320.55, 1.6282e-5),
    (11_000.0, 216.774, 2.2700e4, 3.6480e-1, 295.15, 1.4223e-5),
    (15_000.0, 216.650, 1.2111e4, 1.9476e-1, 295.07, 1.4216e-5),
    (20_000.0, 216.650, 5.5293e3, 8.8910e-2, 295.07, 1.4216e-5),
    (32_000.0, 228.490, 8.8906e2, 1.3555e-2, 303.02, None),
]

# Table values carry 5 significant digits: rounding is at most half a unit of the
# fifth digit, i.e. <= 5e-5 relative; 1e-4 allows for that and nothing more.
# Temperatures are given to 0.001 K (6 digits).
RTOL_5DIGITS = 1e-4
ATOL_T = 1.5e-3


@pytest.mark.parametrize("z, t_ref, p_ref, rho_ref, a_ref, mu_ref", TABLE_I)
def test_table_i_values(z, t_ref, p_ref, rho_ref, a_ref, mu_ref):
    t, p = standard_state(z)
    assert float(t) == pytest.approx(t_ref, abs=ATOL_T)
    assert float(p) == pytest.approx(p_ref, rel=RTOL_5DIGITS)
    assert float(AIR.density(p, t)) == pytest.approx(rho_ref, rel=RTOL_5DIGITS)
    assert float(AIR.speed_of_sound(1e5, t)) == pytest.approx(a_ref, rel=RTOL_5DIGITS)
    if mu_ref is not None:
        assert float(AIR.viscosity(1e5, t)) == pytest.approx(mu_ref, rel=RTOL_5DIGITS)


def test_sea_level_is_exact():
    # Sea-level standard values are defined exactly: 288.15 K, 101 325 Pa
    # (U.S. Standard Atmosphere 1976, Table 2, from memory).
    t, p = standard_state(0.0)
    assert float(t) == 288.15
    assert float(p) == pytest.approx(101_325.0, rel=1e-12)


# ---------------------------------------------------------------------------
# Geopotential altitude, eq. 18: H = r0 z / (r0 + z).
# ---------------------------------------------------------------------------
def test_geopotential_altitude_hand_formula():
    z = np.array([-5_000.0, 0.0, 1_000.0, 11_000.0, 20_000.0, 32_000.0, 47_000.0, 51_000.0,
                  71_000.0, 86_000.0])
    expected = np.array([R0 * zi / (R0 + zi) for zi in z])
    np.testing.assert_allclose(geopotential_altitude(z), expected, rtol=1e-13, atol=1e-9)


def test_geopotential_altitude_table_i():
    # Table I lists H beside z: 11 000 m -> 10 981 m' and 86 000 m -> 84 852 m'
    # (top of the model atmosphere; from memory of U.S. Standard Atmosphere 1976, Table I / Table 4).
    assert float(geopotential_altitude(11_000.0)) == pytest.approx(10_981.0, abs=0.5)
    assert float(geopotential_altitude(86_000.0)) == pytest.approx(84_852.0, abs=0.5)


# ---------------------------------------------------------------------------
# Layer base values, Table 4 (geopotential H_b, T_b, P_b).
# (from memory of U.S. Standard Atmosphere 1976, Table 4)
# ---------------------------------------------------------------------------
TABLE_4 = [
    # H_b [m'], T_b [K], P_b [Pa], rtol of the pressure (digits given in the table)
    (11_000.0, 216.65, 22_632.06, 1e-6),
    (20_000.0, 216.65, 5_474.889, 1e-6),
    (32_000.0, 228.65, 868.0187, 1e-6),
    (47_000.0, 270.65, 110.9063, 1e-6),
    (51_000.0, 270.65, 66.93887, 1e-6),
    (71_000.0, 214.65, 3.956420, 1e-6),
    (84_852.0, 186.946, 0.3734, 2e-4),
]
LAPSE = {0: -6.5e-3, 11_000: 0.0, 20_000: 1.0e-3, 32_000: 2.8e-3, 47_000: 0.0, 51_000: -2.8e-3,
         71_000: -2.0e-3}  # K/m' (from memory of U.S. Standard Atmosphere 1976, Table 4)


def _geometric(h):
    """Inverse of eq. 18, written independently: z = r0 H / (r0 - H)."""
    return R0 * h / (R0 - h)


@pytest.mark.parametrize("h_b, t_b, p_b, rtol", TABLE_4)
def test_table_4_layer_bases(h_b, t_b, p_b, rtol):
    t, p = standard_state(_geometric(h_b))
    # Table 4 gives the molecular-scale temperature; at 86 km the kinetic one is
    # T_M * M/M0 with M/M0 = 0.999579 (from memory of U.S. Standard Atmosphere 1976, Table 8).
    m_ratio = 0.999579 if h_b > 84_000.0 else 1.0
    assert float(t) == pytest.approx(t_b * m_ratio, abs=1e-3 if m_ratio < 1.0 else 1e-6)
    assert float(p) == pytest.approx(p_b, rel=rtol)


def test_86_km_table_i():
    # 86 km geometric: T = 186.87 K, p = 3.7338e-1 Pa
    # (from memory of U.S. Standard Atmosphere 1976, Table I).
    t, p = standard_state(86_000.0)
    assert float(t) == pytest.approx(186.87, abs=0.01)
    assert float(p) == pytest.approx(0.37338, rel=1e-4)


@pytest.mark.parametrize("h_b, t_b, p_b, rtol", TABLE_4)
def test_pressure_altitude_inverts_table_4(h_b, t_b, p_b, rtol):
    # Pressure altitude of a Table 4 base pressure is its geopotential base altitude.
    assert float(pressure_altitude(p_b)) == pytest.approx(h_b, abs=max(1.0, 1e-4 * h_b) if rtol > 1e-5
                                                           else 0.05)


def test_geometric_altitude_inverse_formula():
    h = np.array([-5_000.0, 0.0, 11_000.0, 47_000.0, 84_852.0])
    np.testing.assert_allclose(geometric_altitude(h), _geometric(h), rtol=1e-15)
    np.testing.assert_allclose(geopotential_altitude(geometric_altitude(h)), h, rtol=1e-12, atol=1e-9)


@pytest.mark.parametrize("h_b", [11_000.0, 20_000.0, 32_000.0, 47_000.0, 51_000.0, 71_000.0])
def test_continuous_across_layer_boundaries(h_b):
    # The standard atmosphere's T(H) and p(H) are continuous: the two layers
    # meeting at a base give the same state there.
    z = _geometric(h_b)
    dz = 1e-4
    t_lo, p_lo = standard_state(z - dz)
    t_hi, p_hi = standard_state(z + dz)
    assert float(t_hi) == pytest.approx(float(t_lo), abs=1e-5)
    assert float(p_hi) == pytest.approx(float(p_lo), rel=1e-7)


def _hand_state(z):
    """T, p from Table 4 bases and eqs. 33a/33b, written out here independently."""
    h = R0 * z / (R0 + z)
    bases = [(0.0, 288.15, 101_325.0)] + [(hb, tb, pb) for hb, tb, pb, _ in TABLE_4]
    hb, tb, pb = [b for b in bases if b[0] <= h][-1]
    lapse = LAPSE[int(hb)]
    t = tb + lapse * (h - hb)
    if lapse == 0.0:
        p = pb * math.exp(-G0 * (h - hb) / (R_AIR * tb))
    else:
        p = pb * (tb / t) ** (G0 / (R_AIR * lapse))
    return t, p


@pytest.mark.parametrize("z", [1_000.0, 5_000.0, 15_000.0, 25_000.0, 32_000.0, 40_000.0,
                               47_000.0, 51_000.0, 60_000.0, 71_000.0, 80_000.0])
def test_layers_against_hand_calculation(z):
    # Upper layers (above 32 km) where Table I values were not recalled to five
    # digits: hand evaluation of the layer equations from the Table 4 bases.
    t_ref, p_ref = _hand_state(z)
    t, p = standard_state(z)
    assert float(t) == pytest.approx(t_ref, abs=1e-9)
    assert float(p) == pytest.approx(p_ref, rel=2e-6)  # Table 4 bases have 7 digits


def test_geometric_71_km_temperature():
    # At z = 71 km geometric, H = 70 215.7 m' lies in the 51-71 km' layer:
    # T = 270.65 - 2.8e-3 (H - 51 000) (hand calculation from Table 4).
    h = R0 * 71_000.0 / (R0 + 71_000.0)
    t, _ = standard_state(71_000.0)
    assert float(t) == pytest.approx(270.65 - 2.8e-3 * (h - 51_000.0), abs=1e-9)
    assert 216.0 < float(t) < 217.0


# ---------------------------------------------------------------------------
# Against the ambiance package (independent implementation; PyPI "ambiance").
# ---------------------------------------------------------------------------
def test_against_ambiance_vectorized():
    ambiance = pytest.importorskip("ambiance")
    # ambiance.Atmosphere takes geometric altitude; its range is -5 km to 81 km.
    z = np.linspace(-5_000.0, 80_000.0, 1_701)
    ref = ambiance.Atmosphere(z)
    t, p = standard_state(z)
    assert t.shape == z.shape and p.shape == z.shape
    # Tolerances: ambiance uses the *rounded* base pressures of the standard's
    # Table 4 (e.g. 5474.87 Pa for 5474.889 Pa, 3.95639 Pa for 3.956420 Pa, up to
    # ~8e-6 relative) and R = 287.05287 J/(kg K) against R*/M0 = 287.05307 (0.7 ppm);
    # so p and rho agree to ~1e-5, a to ~4e-7, and T and mu (no pressure, no R) exactly.
    np.testing.assert_allclose(t, ref.temperature, rtol=1e-9)
    np.testing.assert_allclose(p, ref.pressure, rtol=2e-5)
    np.testing.assert_allclose(AIR.density(p, t), ref.density, rtol=2e-5)
    np.testing.assert_allclose(AIR.speed_of_sound(1e5, t), ref.speed_of_sound, rtol=1e-6)
    np.testing.assert_allclose(AIR.viscosity(1e5, t), ref.dynamic_viscosity, rtol=1e-9)


def test_vectorized_shape_and_elementwise():
    z = np.array([[0.0, 5_000.0], [11_000.0, 47_000.0]])
    t, p = standard_state(z)
    assert t.shape == (2, 2) and p.shape == (2, 2)
    for idx in np.ndindex(z.shape):
        ts, ps = standard_state(z[idx])
        assert t[idx] == pytest.approx(float(ts), rel=1e-15)
        assert p[idx] == pytest.approx(float(ps), rel=1e-15)


def test_altitude_range_declared():
    # The 1976 model is defined from -5 km to 86 km geometric (84.852 km') (from memory of
    # U.S. Standard Atmosphere 1976, Part 1).
    assert ALTITUDE_RANGE[0] == pytest.approx(-5_000.0)
    assert ALTITUDE_RANGE[1] == pytest.approx(86_000.0)


# ---------------------------------------------------------------------------
# Temperature offset (ISA + dT): standard pressure, shifted temperature.
# ---------------------------------------------------------------------------
@pytest.mark.parametrize("z", [0.0, 5_000.0, 11_000.0, 20_000.0])
@pytest.mark.parametrize("dt", [-20.0, 10.0, 15.0])
def test_temperature_offset_keeps_pressure(z, dt):
    t0, p0 = standard_state(z)
    t, p = standard_state(z, dt)
    assert float(p) == pytest.approx(float(p0), rel=1e-14)
    assert float(t) == pytest.approx(float(t0) + dt, abs=1e-10)


def test_temperature_offset_sea_level_hand_values():
    # ISA + 15 K at sea level: T = 303.15 K, p = 101 325 Pa; rho = p / (R T) and
    # a = sqrt(gamma R T) by hand with the USSA 1976 gas constant.
    t, p = standard_state(0.0, 15.0)
    assert float(t) == pytest.approx(303.15, abs=1e-10)
    assert float(p) == pytest.approx(101_325.0, rel=1e-12)
    assert float(AIR.density(p, t)) == pytest.approx(101_325.0 / (R_AIR * 303.15), rel=1e-12)
    assert float(AIR.speed_of_sound(1e5, t)) == pytest.approx(math.sqrt(GAMMA * R_AIR * 303.15), rel=1e-12)
    mu_hand = BETA * 303.15**1.5 / (303.15 + S_SUTH)
    assert float(AIR.viscosity(1e5, t)) == pytest.approx(mu_hand, rel=1e-12)


def test_temperature_offset_broadcasts():
    z = np.array([0.0, 11_000.0, 20_000.0])
    dt = np.array([-10.0, 0.0, 25.0])
    t_std, p_std = standard_state(z)
    t, p = standard_state(z, dt)
    np.testing.assert_allclose(t, t_std + dt, rtol=0, atol=1e-10)
    np.testing.assert_allclose(p, p_std, rtol=1e-14)
    # scalar altitude, array of offsets
    t2, p2 = standard_state(5_000.0, dt)
    assert np.shape(t2) == (3,)
    np.testing.assert_allclose(t2, 255.676 + dt, atol=1.5e-3)  # Table I 5 km, from memory as above
    np.testing.assert_allclose(np.broadcast_to(p2, (3,)), 5.4048e4, rtol=RTOL_5DIGITS)


# Upper layers, geometric altitude (from memory of U.S. Standard Atmosphere 1976, Table I; at
# 40 km the temperature is left out: the value recalled, 251.05 K, is that of 40 km
# geopotential, so it was not used).
UPPER_TABLE_I = [
    (40_000.0, None, 2.8714e2, 3.9957e-3),
    (50_000.0, 270.65, 7.9779e1, 1.0269e-3),
    (60_000.0, 247.02, 2.1958e1, 3.0968e-4),
    (70_000.0, 219.59, 5.2209e0, 8.2829e-5),
    (80_000.0, 198.64, 1.0524e0, 1.8458e-5),
]


@pytest.mark.parametrize("z, t_ref, p_ref, rho_ref", UPPER_TABLE_I)
def test_upper_layers_table_i(z, t_ref, p_ref, rho_ref):
    t, p = standard_state(z)
    if t_ref is not None:
        assert float(t) == pytest.approx(t_ref, abs=0.006)
    assert float(p) == pytest.approx(p_ref, rel=1e-4)
    assert float(AIR.density(p, t)) == pytest.approx(rho_ref, rel=1e-4)
