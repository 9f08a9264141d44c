"""simunc.physics.flow (isentropic relations, dynamic pressure) and the Sutherland viscosity of air.

Check values come from
* NACA Report 1135 (Ames Research Staff, 1953), Table I, gamma = 1.4, marked
  where recalled; the table gives five decimal places;
* closed-form isentropic relations written out here by hand (NACA Report 1135,
  eqs. 43-45);
* F. M. White, *Viscous Fluid Flow*, Table 1-2 (Sutherland fit of air) and the
  U.S. Standard Atmosphere 1976 (Table I viscosities, eq. 51 constants).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from simunc.physics import flow
from simunc.physics.fluids.ideal_gas import AIR, T_REF

# NACA Report 1135, Table I (subsonic flow, gamma = 1.4):
# M, p/p0, rho/rho0, T/T0, q/p0 (None where the entry is not recalled reliably).
# (from memory of NACA Report 1135, Table I)
NACA_1135 = [
    (0.10, 0.99303, 0.99502, 0.99800, None),
    (0.30, 0.93947, 0.95638, 0.98232, 0.05919),
    (0.50, 0.84302, 0.88517, 0.95238, 0.14753),
    (0.80, 0.65602, None, 0.88652, None),
    (0.90, 0.59126, 0.68704, 0.86059, 0.33524),
    (0.95, 0.55946, 0.66044, 0.84710, None),
    (1.00, 0.52828, 0.63394, 0.83333, 0.36980),
]
# Five decimal places: rounding error <= 5e-6; allow one unit of the last place.
ATOL_TABLE = 1e-5


@pytest.mark.parametrize("mach, p_ratio, rho_ratio, t_ratio, q_ratio", NACA_1135)
def test_isentropic_ratios_naca_1135(mach, p_ratio, rho_ratio, t_ratio, q_ratio):
    assert float(flow.pressure_ratio(mach)) == pytest.approx(p_ratio, abs=ATOL_TABLE)
    assert float(flow.temperature_ratio(mach)) == pytest.approx(t_ratio, abs=ATOL_TABLE)
    if rho_ratio is not None:
        assert float(flow.density_ratio(mach)) == pytest.approx(rho_ratio, abs=ATOL_TABLE)
    if q_ratio is not None:
        # q / p0 = dynamic_pressure(p / p0, M) since q is linear in p.
        q = flow.dynamic_pressure(flow.pressure_ratio(mach), mach)
        assert float(q) == pytest.approx(q_ratio, abs=ATOL_TABLE)


def _hand_ratios(m, g=1.4):
    """NACA Report 1135 eqs. 43-45 written out by hand."""
    tr = 1.0 / (1.0 + 0.5 * (g - 1.0) * m * m)
    return tr, tr ** (g / (g - 1.0)), tr ** (1.0 / (g - 1.0))


@pytest.mark.parametrize("mach", [0.1, 0.3, 0.5, 0.8, 0.9, 0.95])
def test_q_over_p0_hand(mach):
    # q/p0 = (gamma/2) M^2 (p/p0), independently from rho V^2 / 2 with
    # rho = p / (R T) and V = M sqrt(gamma R T) at arbitrary p0, T0.
    p0, t0, r = 3.0e5, 320.0, 287.0
    t_r, p_r, _ = _hand_ratios(mach)
    p, t = p0 * p_r, t0 * t_r
    rho = p / (r * t)
    v = mach * math.sqrt(1.4 * r * t)
    q_hand = 0.5 * rho * v * v
    assert float(flow.dynamic_pressure(p, mach)) == pytest.approx(q_hand, rel=1e-12)


def test_ratios_vectorized_against_hand():
    m = np.linspace(0.0, 1.0, 101)
    t_ref, p_ref, rho_ref = zip(*(_hand_ratios(float(x)) for x in m))
    np.testing.assert_allclose(flow.temperature_ratio(m), t_ref, rtol=1e-13)
    np.testing.assert_allclose(flow.pressure_ratio(m), p_ref, rtol=1e-13)
    np.testing.assert_allclose(flow.density_ratio(m), rho_ref, rtol=1e-13)


def test_other_gamma_hand():
    # Monatomic gas, gamma = 5/3, at M = 1: T/T0 = 1 / (1 + 1/3) = 3/4,
    # p/p0 = (3/4)^(5/2), rho/rho0 = (3/4)^(3/2) (hand calculation).
    g = 5.0 / 3.0
    assert float(flow.temperature_ratio(1.0, g)) == pytest.approx(0.75, rel=1e-14)
    assert float(flow.pressure_ratio(1.0, g)) == pytest.approx(0.75**2.5, rel=1e-13)
    assert float(flow.density_ratio(1.0, g)) == pytest.approx(0.75**1.5, rel=1e-13)
    assert float(flow.mach_from_pressure_ratio(0.75**-2.5, g)) == pytest.approx(1.0, rel=1e-12)


@pytest.mark.parametrize("mach, p_ratio", [(m, p) for m, p, *_ in NACA_1135])
def test_mach_from_table_pressure_ratio(mach, p_ratio):
    # Inverting the table's 5-decimal p/p0: dM = d(p/p0) / |d(p/p0)/dM|, and
    # |d(p/p0)/dM| = gamma M (p/p0) / (1 + 0.2 M^2) >= 0.13 for 0.1 <= M <= 1, so
    # a 5e-6 rounding of p/p0 moves M by < 4e-5 (hand estimate); 1e-4 is allowed.
    assert float(flow.mach_from_pressure_ratio(1.0 / p_ratio)) == pytest.approx(mach, abs=1e-4)


def test_mach_from_pressure_ratio_round_trip():
    m = np.linspace(0.01, 0.999, 500)
    back = flow.mach_from_pressure_ratio(1.0 / flow.pressure_ratio(m))
    np.testing.assert_allclose(back, m, rtol=1e-11)
    # and the other way round, starting from pressure ratios
    ratios = np.linspace(1.0001, 1.89, 200)
    again = 1.0 / flow.pressure_ratio(flow.mach_from_pressure_ratio(ratios))
    np.testing.assert_allclose(again, ratios, rtol=1e-12)
    assert float(flow.mach_from_pressure_ratio(1.0)) == 0.0


def test_mach_from_pressure_ratio_hand():
    # M = sqrt(5 ((p0/p)^(2/7) - 1)) for gamma = 1.4 (NACA Report 1135, eq. 44 inverted by hand).
    for r in (1.05, 1.3, 1.6):
        assert float(flow.mach_from_pressure_ratio(r)) == pytest.approx(
            math.sqrt(5.0 * (r ** (2.0 / 7.0) - 1.0)), rel=1e-13)


# ---------------------------------------------------------------------------
# Sutherland viscosity of air
# ---------------------------------------------------------------------------
# White, Viscous Fluid Flow, Table 1-2, air: mu0 = 1.716e-5 Pa s at T0 = 273 K,
# S = 111 K (from memory of F. M. White, Viscous Fluid Flow, Table 1-2).
WHITE_MU0, WHITE_T0, WHITE_S = 1.716e-5, 273.0, 111.0


def test_white_reference_viscosity():
    # Four significant digits in the reference: rounding <= 3e-4 relative.
    assert float(AIR.viscosity(1e5, WHITE_T0)) == pytest.approx(WHITE_MU0, rel=1e-3)


@pytest.mark.parametrize("t", [200.0, 250.0, 300.0, 400.0, 600.0, 1000.0])
def test_against_white_sutherland_fit(t):
    # Two Sutherland fits of air (USSA: S = 110.4 K, mu(273.15) = 1.7161e-5;
    # White: S = 111 K, mu(273) = 1.716e-5).  Their ratio differs from 1 by at
    # most |dS| |1/(T+S) - 1/(T0+S)| + 4e-4 (rounding of mu0) ~ 1.4e-3 at 1000 K,
    # so 3e-3 is a bound that a wrong exponent or constant would still break.
    white = WHITE_MU0 * (t / WHITE_T0) ** 1.5 * (WHITE_T0 + WHITE_S) / (t + WHITE_S)
    assert float(AIR.viscosity(1e5, t)) == pytest.approx(white, rel=3e-3)


# U.S. Standard Atmosphere 1976, Table I viscosities at the table temperatures
# (from memory of U.S. Standard Atmosphere 1976, Table I): sea level, 11 km, 20 km.
@pytest.mark.parametrize("t, mu", [(288.150, 1.7894e-5), (216.774, 1.4223e-5), (216.650, 1.4216e-5),
                                   (255.676, 1.6282e-5)])
def test_ussa_table_viscosity(t, mu):
    assert float(AIR.viscosity(1e5, t)) == pytest.approx(mu, rel=1e-4)


def test_ussa_eq51_vectorized():
    # USSA 1976 eq. 51: mu = beta T^1.5 / (T + S), beta = 1.458e-6, S = 110.4 K
    # (from memory of U.S. Standard Atmosphere 1976), hand evaluation.
    t = np.linspace(150.0, 1500.0, 50)
    np.testing.assert_allclose(AIR.viscosity(1e5, t), 1.458e-6 * t**1.5 / (t + 110.4), rtol=1e-12)


def test_sutherland_argument_keeps_reference_viscosity():
    # Documented behaviour: varying S keeps mu(T_ref) and changes the T dependence only.
    mu_ref = 1.458e-6 * T_REF**1.5 / (T_REF + 110.4)
    for s in (90.0, 110.4, 130.0):
        assert float(AIR.viscosity(1e5, T_REF, sutherland=s)) == pytest.approx(mu_ref, rel=1e-13)
    t, s = 400.0, 125.0
    hand = mu_ref * (t / T_REF) ** 1.5 * (T_REF + s) / (t + s)
    assert float(AIR.viscosity(1e5, t, sutherland=s)) == pytest.approx(hand, rel=1e-13)
    # A larger S gives a larger viscosity above T_ref (d mu / d S > 0 for T > T_ref).
    assert AIR.viscosity(1e5, t, sutherland=130.0) > AIR.viscosity(1e5, t, sutherland=100.0)


def test_gas_constant_and_sea_level_sound_speed():
    # R = R*/M0 = 8314.32 / 28.9644 (USSA 1976, from memory); a0 = 340.29 m/s,
    # rho0 = 1.2250 kg/m^3 (USSA 1976 Table I sea level, from memory).
    assert AIR.gas_constant == pytest.approx(287.053, abs=5e-4)
    assert AIR.gamma == 1.4
    assert float(AIR.speed_of_sound(1e5, 288.15)) == pytest.approx(340.29, abs=6e-3)
    assert float(AIR.density(101_325.0, 288.15)) == pytest.approx(1.2250, abs=6e-5)
