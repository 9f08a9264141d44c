"""simunc.physics.walls (closed-wall subsonic boundary corrections) against published formulas.

Check values come from
* the published formulas written out by hand here (Barlow, Rae & Pope, *Low-Speed
  Wind Tunnel Testing*, 3rd ed., 1999, ch. 10: Thom's short form of solid blockage,
  wake blockage (S/4C) C_Du, Maskell's separated-flow form, Glauert's lift
  interference; forms from memory of that chapter, no copy at hand);
* the compressibility factors of Pope & Goin, *High-Speed Wind Tunnel Testing*, 1965,
  and Herriot, NACA Report 995, 1950 (beta^-3 and (1 + 0.4 M^2)/beta^2; from memory);
* the isentropic relations of NACA Report 1135 (eqs. 43-45), through which the
  first-order Mach and dynamic-pressure corrections are derived independently;
* Glauert's image-vortex derivation of delta = 1/8 for a small wing in a closed
  circular section (ARC R&M 1566, 1933), redone numerically here.
The geometries are made-up but plausible inputs; no invented value is a check value.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from simunc.physics import flow, walls

# Made-up but plausible geometry (inputs only): a 1.2 m x 1.7 m closed section,
# a half-scale-ish transport model.
C_AREA = 1.2 * 1.7          # test-section area C [m^2]
S_REF = 0.25                # wing reference area S [m^2]
V_WING = 0.006              # wing volume [m^3]
V_BODY = 0.012              # fuselage volume [m^3]


# ---------------------------------------------------------------------------
# Solid and wake blockage (incompressible)


def test_solid_blockage_thom_short_form_hand():
    # Thom's short form eps_sb = K V / C^(3/2), K = 0.90 wing, 0.96 body of
    # revolution (from memory of Barlow, Rae & Pope 1999, ch. 10).
    c15 = C_AREA * math.sqrt(C_AREA)
    wing = 0.90 * V_WING / c15
    body = 0.96 * V_BODY / c15
    assert float(walls.solid_blockage(V_WING, C_AREA, 0.90)) == pytest.approx(wing, rel=1e-14)
    assert float(walls.solid_blockage(V_BODY, C_AREA, 0.96)) == pytest.approx(body, rel=1e-14)
    # Components add (complete model = wing + body).
    total = walls.solid_blockage(np.array([V_WING, V_BODY]), C_AREA, np.array([0.90, 0.96])).sum()
    assert float(total) == pytest.approx(wing + body, rel=1e-14)
    # Order of magnitude of a small model: well under one per cent.
    assert 0.0 < wing + body < 0.01


def test_solid_blockage_scales_with_section_size():
    # eps_sb ~ C^(-3/2) (hand: doubling every tunnel dimension multiplies C by 4,
    # so eps by 4^(-3/2) = 1/8).
    e1 = walls.solid_blockage(V_WING, C_AREA, 0.9)
    e2 = walls.solid_blockage(V_WING, 4.0 * C_AREA, 0.9)
    assert float(e1 / e2) == pytest.approx(8.0, rel=1e-14)


def test_wake_blockage_hand():
    # eps_wb = (S / 4C) C_Du (Barlow, Rae & Pope 1999, ch. 10; from memory).
    cd = np.array([0.02, 0.05, 0.12])
    np.testing.assert_allclose(walls.wake_blockage(S_REF, C_AREA, cd), S_REF / (4.0 * C_AREA) * cd,
                               rtol=1e-14)


def test_maskell_reduces_to_attached_form_without_separation():
    # Maskell's form (S/4C) C_D0 + (5S/4C)(C_Du - C_Di - C_D0) (from memory of
    # Barlow, Rae & Pope 1999, ch. 10; Maskell, ARC R&M 3400): with C_Du = C_D0 + C_Di
    # the separated drag is zero and only the attached term on C_D0 is left.
    cd0, cdi = 0.025, 0.04
    got = walls.maskell_wake_blockage(S_REF, C_AREA, cd0 + cdi, cd0, cdi)
    assert float(got) == pytest.approx(float(walls.wake_blockage(S_REF, C_AREA, cd0)), rel=1e-12)


def test_maskell_separated_drag_weighs_five_times_hand():
    cd0, cdi, cds = 0.025, 0.04, 0.06
    got = walls.maskell_wake_blockage(S_REF, C_AREA, cd0 + cdi + cds, cd0, cdi)
    hand = S_REF / (4.0 * C_AREA) * cd0 + 5.0 * S_REF / (4.0 * C_AREA) * cds
    assert float(got) == pytest.approx(hand, rel=1e-12)


# ---------------------------------------------------------------------------
# Compressibility factors (Pope & Goin 1965; Herriot, NACA Report 995; from memory)


def test_compressible_blockage_reduces_to_sum_at_mach_zero():
    assert float(walls.compressible_blockage(0.004, 0.003, 0.0)) == pytest.approx(0.007, rel=1e-14)
    solid, wake = walls.compressible_blockage(0.004, 0.003, 0.0, parts=True)
    assert (float(solid), float(wake)) == pytest.approx((0.004, 0.003), rel=1e-14)


def test_compressible_parts_add_to_total():
    m = np.array([0.0, 0.4, 0.8])
    solid, wake = walls.compressible_blockage(0.004, 0.003, m, parts=True)
    np.testing.assert_allclose(solid + wake, walls.compressible_blockage(0.004, 0.003, m), rtol=1e-15)


def test_default_shape_factor_is_thoms_wing_value():
    # Thom's short form, K = 0.90 for a three-dimensional wing (from memory of Barlow, Rae &
    # Pope 1999, ch. 10).
    assert walls.SHAPE_FACTOR == 0.90


@pytest.mark.parametrize("mach", [0.1, 0.3, 0.5, 0.7, 0.85])
def test_compressible_factors_are_the_published_powers_of_beta(mach):
    beta = math.sqrt(1.0 - mach * mach)
    solid_only = float(walls.compressible_blockage(0.004, 0.0, mach)) / 0.004
    wake_only = float(walls.compressible_blockage(0.0, 0.003, mach)) / 0.003
    assert solid_only == pytest.approx(beta**-3, rel=1e-13)
    assert wake_only == pytest.approx((1.0 + 0.4 * mach * mach) / beta**2, rel=1e-13)


def test_compressible_factors_grow_with_mach_as_beta_powers():
    # Log-slope of the solid factor against beta is exactly -3 (hand: ratio of two Machs).
    m = np.array([0.2, 0.4, 0.6, 0.8])
    beta = np.sqrt(1.0 - m * m)
    solid = walls.compressible_blockage(1.0, 0.0, m)
    np.testing.assert_allclose(np.log(solid[1:] / solid[:-1]) / np.log(beta[1:] / beta[:-1]), -3.0,
                               rtol=1e-12)
    wake = walls.compressible_blockage(0.0, 1.0, m)
    assert np.all(np.diff(solid) > 0.0) and np.all(np.diff(wake) > 0.0)


@pytest.mark.parametrize("mach", [1.0, 1.2, -0.1])
def test_compressible_blockage_is_not_physical_beyond_subsonic(mach):
    # The subsonic corrections do not hold at M >= 1 (beta = 0 or imaginary, Prandtl-Glauert):
    # the value is NaN, which the Monte Carlo refuses as a non-physical trial.
    assert np.isnan(walls.compressible_blockage(0.004, 0.003, mach))
    assert np.isnan(walls.corrected_mach(mach, 0.01))
    assert np.isnan(walls.corrected_dynamic_pressure(1000.0, 0.01, mach))
    out = walls.corrected_mach(np.array([0.5, mach]), 0.01)
    assert np.isfinite(out[0]) and np.isnan(out[1])


# ---------------------------------------------------------------------------
# Speed, Mach number and dynamic pressure from the total epsilon


def test_corrected_speed_hand():
    np.testing.assert_allclose(walls.corrected_speed(np.array([20.0, 50.0]), 0.012), [20.24, 50.6],
                               rtol=1e-14)


def test_incompressible_q_is_first_order_of_speed_squared():
    # q ~ U^2 at M = 0: q_u (1 + eps)^2 = q_u (1 + 2 eps) + O(eps^2).
    q_u, eps = 1500.0, 1e-4
    exact = q_u * (1.0 + eps) ** 2
    assert float(walls.corrected_dynamic_pressure(q_u, eps, 0.0)) == pytest.approx(exact, abs=q_u * 2 * eps**2)


def _exact_blocked_state(m_u, eps, gamma=1.4):
    """Mach number and q/p0 when the speed rises by (1 + eps) at fixed stagnation state.

    Derived from NACA Report 1135 eq. 43: V^2 = M^2 gamma R T0 / (1 + (gamma-1)/2 M^2), so
    M^2 / (1 + k M^2) = (1 + eps)^2 M_u^2 / (1 + k M_u^2) with k = (gamma-1)/2, solved for M.
    q = gamma/2 p M^2 with p/p0 from the isentropic relation (flow.pressure_ratio, NACA 1135 eq. 44).
    """
    k = 0.5 * (gamma - 1.0)
    a = (1.0 + eps) ** 2 * m_u**2 / (1.0 + k * m_u**2)
    m_c = math.sqrt(a / (1.0 - k * a))
    q_over_p0 = lambda m: 0.5 * gamma * float(flow.pressure_ratio(m, gamma)) * m * m  # noqa: E731
    return m_c, q_over_p0(m_c) / q_over_p0(m_u)


@pytest.mark.parametrize("mach", [0.05, 0.3, 0.6, 0.8])
def test_corrected_mach_and_q_match_isentropic_derivation_to_first_order(mach):
    # The first-order corrections M_u (1 + (1 + 0.2 M^2) eps) and q_u (1 + (2 - M^2) eps)
    # (Pope & Goin 1965) against the exact isentropic state: the slopes agree and the
    # remainder is O(eps^2).
    for eps in (1e-6, 1e-3):
        m_c, q_ratio = _exact_blocked_state(mach, eps)
        m_lin = float(walls.corrected_mach(mach, eps))
        q_lin = float(walls.corrected_dynamic_pressure(1.0, eps, mach))
        assert abs(m_lin / m_c - 1.0) < 5.0 * eps**2 + 1e-13
        assert abs(q_lin / q_ratio - 1.0) < 5.0 * eps**2 + 1e-13
    # Slopes d ln M / d eps = 1 + 0.2 M^2 and d ln q / d eps = 2 - M^2 (hand).
    eps = 1e-7
    m_c, q_ratio = _exact_blocked_state(mach, eps)
    assert (m_c / mach - 1.0) / eps == pytest.approx(1.0 + 0.2 * mach**2, rel=1e-6)
    assert (q_ratio - 1.0) / eps == pytest.approx(2.0 - mach**2, rel=1e-6)


@pytest.mark.parametrize("mach", [0.2, 0.5, 0.75])
def test_corrected_mach_and_q_consistent_with_each_other(mach):
    # q = gamma/2 p M^2 with p/p0 falling isentropically (NACA 1135 eq. 44): the q implied
    # by the corrected Mach number equals the corrected q to first order in eps.
    eps = 1e-5
    m_c = float(walls.corrected_mach(mach, eps))
    q_from_mach = (float(flow.pressure_ratio(m_c)) * m_c**2) / (float(flow.pressure_ratio(mach)) * mach**2)
    q_direct = float(walls.corrected_dynamic_pressure(1.0, eps, mach))
    assert abs(q_from_mach - q_direct) < 10.0 * eps**2


def test_corrected_mach_other_gamma_hand():
    # dM/M = (1 + (gamma-1)/2 M^2) eps; gamma = 5/3: 1 + M^2/3 (hand).
    got = float(walls.corrected_mach(0.6, 0.01, gamma=5.0 / 3.0))
    assert got == pytest.approx(0.6 * (1.0 + (1.0 + 0.36 / 3.0) * 0.01), rel=1e-14)


def test_corrections_vectorize():
    m = np.linspace(0.0, 0.9, 7)
    eps = walls.compressible_blockage(0.003, 0.002, m)
    assert walls.corrected_mach(m, eps).shape == m.shape
    assert walls.corrected_dynamic_pressure(np.full(7, 2000.0), eps, m).shape == m.shape


# ---------------------------------------------------------------------------
# Lift interference (Glauert)


def _glauert_upwash_over_u(radius, semispan, chord, lift_coefficient):
    """Upwash at a small wing at the centre of a closed circular section, from image vortices.

    Glauert (ARC R&M 1566): the trailing vortices at y = +-s have images of opposite sign at
    R^2 / y; far downstream they induce a vertical velocity at the centre, and at the lifting
    line (the start of the semi-infinite trailing vortices) half of it.  Lift: rho U Gamma 2s
    = q S C_L, so Gamma / U = S C_L / (4 s).
    """
    area = 2.0 * semispan * chord
    gamma_over_u = area * lift_coefficient / (4.0 * semispan)

    def w(z0, strength):   # 2-D point vortex, counter-clockwise positive: u - i w = -i G / (2 pi (z - z0))
        conj_vel = -1j * strength / (2.0 * math.pi * (0.0 - z0))
        return -conj_vel.imag

    # Real pair chosen with the sign that gives downwash between the vortices (lift up).
    real = w(complex(semispan, 0.0), gamma_over_u) + w(complex(-semispan, 0.0), -gamma_over_u)
    image = (w(complex(radius**2 / semispan, 0.0), -gamma_over_u)
             + w(complex(-radius**2 / semispan, 0.0), gamma_over_u))
    assert real < 0.0      # the wing's own trailing vortices: downwash
    return 0.5 * image, area


def test_lift_interference_glauert_delta_one_eighth():
    radius, c_l = 1.0, 0.9
    upwash, area = _glauert_upwash_over_u(radius, semispan=0.01 * radius, chord=0.004, lift_coefficient=c_l)
    d_alpha, d_cd = walls.lift_interference(0.125, area, math.pi * radius**2, c_l)
    assert upwash > 0.0    # closed walls: upwash, Delta alpha added
    assert float(d_alpha) == pytest.approx(upwash, rel=1e-12)
    assert float(d_cd) == pytest.approx(upwash * c_l, rel=1e-12)


def test_lift_interference_hand_and_induced_drag_is_tilt_of_lift():
    # Delta alpha = delta (S/C) C_L [rad], Delta C_Di = delta (S/C) C_L^2 (Barlow, Rae & Pope
    # 1999, ch. 10, from memory): the drag correction is the lift tilted by Delta alpha.
    cl = np.array([-0.2, 0.0, 0.5, 1.1])
    d_alpha, d_cd = walls.lift_interference(0.125, S_REF, C_AREA, cl)
    np.testing.assert_allclose(d_alpha, 0.125 * S_REF / C_AREA * cl, rtol=1e-14)
    np.testing.assert_allclose(d_cd, d_alpha * cl, rtol=1e-14)
    assert np.all(d_cd >= 0.0)
    # Open jet (negative delta, the caller's factor): signs flip.
    d_alpha_open, _ = walls.lift_interference(-0.125, S_REF, C_AREA, 0.5)
    assert float(d_alpha_open) < 0.0
