"""simunc.similitude.setpoint.solve against hand calculations written in this file.

The studies below are small invented inputs (demo data, not check values),
built with simunc.study.readers.parse_study from dicts that mirror the TOML schema of
studies/arven_cruise.toml.  Every expected value is computed here from plain
formulas, without calling simunc's physics:

* perfect gas, R = R*/M0 = 8314.32/28.9644 J/(kg K), gamma = 1.4, and
  Sutherland's law mu = beta T^1.5 / (T + S), beta = 1.458e-6, S = 110.4 K
  (U.S. Standard Atmosphere 1976, eq. 51; from memory of that document);
* isentropic test section: T = T0 / (1 + 0.2 M^2), p = p0 (T/T0)^3.5
  (NACA Report 1135, eqs. 43-44);
* Re = rho V L / mu, rho = p / (R T), V = M sqrt(gamma R T), Mach = V / a.

At fixed Mach and T0 the model Reynolds number is proportional to p0
(rho ∝ p0, V and mu fixed) and to the model length L, which gives closed
forms for the required p0 and L.
"""

from __future__ import annotations

import copy
import math

import pytest

from simunc.similitude.setpoint import solve
from simunc.study.readers import parse_study

R = 8314.32 / 28.9644
GAMMA = 1.4
BETA, S_SUTH = 1.458e-6, 110.4


# ---------------------------------------------------------------------------
# Hand formulas
# ---------------------------------------------------------------------------
def mu_hand(t):
    return BETA * t**1.5 / (t + S_SUTH)


def sound_hand(t):
    return math.sqrt(GAMMA * R * t)


def full_scale_re(p, t, mach, length):
    v = mach * sound_hand(t)
    return (p / (R * t)) * v * length / mu_hand(t)


def tunnel_state(p0, t0, mach):
    t = t0 / (1.0 + 0.5 * (GAMMA - 1.0) * mach**2)
    p = p0 * (t / t0) ** (GAMMA / (GAMMA - 1.0))
    return p, t


def tunnel_re(p0, t0, mach, length):
    p, t = tunnel_state(p0, t0, mach)
    v = mach * sound_hand(t)
    return (p / (R * t)) * v * length / mu_hand(t)


def bisect(f, lo, hi, n=200):
    """Plain bisection (no scipy) for the hand check of the speed solve."""
    flo = f(lo)
    for _ in range(n):
        mid = 0.5 * (lo + hi)
        fm = f(mid)
        if (fm < 0.0) == (flo < 0.0):
            lo, flo = mid, fm
        else:
            hi = mid
    return 0.5 * (lo + hi)


# ---------------------------------------------------------------------------
# Study dicts (invented demo inputs)
# ---------------------------------------------------------------------------
P_FS, T_FS, M_FS, L_FS = 22_632.0, 216.65, 0.78, 3.2
T0 = 310.0


def base_study():
    return {
        "title": "hand-check study (invented inputs)",
        "full_scale": {"static_pressure": f"{P_FS} Pa", "static_temperature": f"{T_FS} K",
                       "mach": M_FS, "reference_length": f"{L_FS} m"},
        "facility": {"name": "test facility", "gas": "dry_air",
                     "stagnation_temperature": f"{T0} K",
                     "stagnation_pressure_range": ["0.5 bar", "9 bar"],
                     "max_model_reference_length": "0.30 m",
                     "mach_range": [0.1, 0.92], "mach_from": "pressure_ratio"},
        "model": {"scale": 0.0625},
        "match": {"solve_for": "stagnation_pressure", "reynolds": {"tolerance": "2 %"},
                  "mach": {"tolerance": "0.002"}},
        "run": {"trials": 1000, "seed": 1, "sobol_base_samples": 64},
    }


def solved(d):
    return solve(parse_study(d))


def _limit(sp, quantity, side):
    found = [lim for lim in sp.limits if lim.quantity == quantity and lim.side == side]
    assert len(found) == 1, sp.limits
    return found[0]


# ---------------------------------------------------------------------------
# Solve p0 with Mach matched
# ---------------------------------------------------------------------------
def test_mach_match_and_p0_closed_form():
    sp = solved(base_study())
    l_model = 0.0625 * L_FS
    re_fs = full_scale_re(P_FS, T_FS, M_FS, L_FS)
    # Re_model = p0 * (Re at p0 = 1 Pa), so p0 = Re_fs / Re_model(1 Pa).
    p0_hand = re_fs / tunnel_re(1.0, T0, M_FS, l_model)

    assert sp.feasible
    assert sp.solve_for == ("stagnation_pressure", "mach")
    assert sp.method == "exact"
    assert sp.nominal["mach"] == pytest.approx(M_FS, rel=1e-12)
    assert sp.outputs["mach_model"] == pytest.approx(M_FS, rel=1e-12)
    assert sp.required == pytest.approx(p0_hand, rel=1e-9)
    assert sp.nominal["stagnation_pressure"] == pytest.approx(p0_hand, rel=1e-9)
    assert sp.outputs["reynolds_full_scale"] == pytest.approx(re_fs, rel=1e-12)
    assert sp.outputs["reynolds_model"] == pytest.approx(re_fs, rel=1e-9)
    assert sp.reynolds_shortfall == pytest.approx(0.0, abs=1e-9)
    assert sp.mach_shortfall == pytest.approx(0.0, abs=1e-12)
    # At equal Mach: V_model / V_full = a_model / a_full = sqrt(T_model / T_full).
    _, t_model = tunnel_state(p0_hand, T0, M_FS)
    assert sp.outputs["static_temperature"] == pytest.approx(t_model, rel=1e-12)
    assert sp.outputs["speed"] / sp.outputs["full_scale_speed"] == pytest.approx(
        math.sqrt(t_model / T_FS), rel=1e-12)
    assert sp.outputs["full_scale_speed"] == pytest.approx(M_FS * sound_hand(T_FS), rel=1e-12)
    # q = rho V^2 / 2 by hand at the solved state.
    p, t = tunnel_state(p0_hand, T0, M_FS)
    q = 0.5 * p / (R * t) * (M_FS * sound_hand(t)) ** 2
    assert sp.outputs["dynamic_pressure"] == pytest.approx(q, rel=1e-9)
    assert sp.outputs["viscosity"] == pytest.approx(mu_hand(t), rel=1e-12)


def test_p0_scales_inversely_with_model_size():
    # Re ∝ p0 L at fixed Mach and T0: halving the scale doubles the required p0.
    d1, d2 = base_study(), base_study()
    d2["model"] = {"scale": 0.03125}
    assert solved(d2).required == pytest.approx(2.0 * solved(d1).required, rel=1e-9)


def test_full_scale_from_altitude_and_speed():
    # Full scale given by altitude (standard atmosphere) and flight speed.  At
    # 11 000 m' geopotential (z = r0 H / (r0 - H) geometric, r0 = 6 356 766 m)
    # the standard state is the tropopause base: 216.65 K, 22 632.06 Pa
    # (from memory of U.S. Standard Atmosphere 1976, Table 4).
    r0, h = 6_356_766.0, 11_000.0
    z = r0 * h / (r0 - h)
    t_fs, p_fs, v_fs = 216.65, 22_632.06, 230.0
    d = base_study()
    d["full_scale"] = {"altitude": f"{z!r} m", "speed": f"{v_fs} m/s", "reference_length": f"{L_FS} m"}
    sp = solved(d)
    m_fs = v_fs / sound_hand(t_fs)
    re_fs = (p_fs / (R * t_fs)) * v_fs * L_FS / mu_hand(t_fs)
    p0_hand = re_fs / tunnel_re(1.0, T0, m_fs, 0.0625 * L_FS)
    assert sp.nominal["mach"] == pytest.approx(m_fs, rel=1e-9)
    assert sp.outputs["reynolds_full_scale"] == pytest.approx(re_fs, rel=1e-6)
    assert sp.required == pytest.approx(p0_hand, rel=1e-6)
    assert sp.feasible


# ---------------------------------------------------------------------------
# Solve model scale at given p0
# ---------------------------------------------------------------------------
def test_solve_model_scale_at_given_p0():
    d = base_study()
    d["facility"]["stagnation_pressure"] = "6 bar"
    d["model"] = {}
    d["match"]["solve_for"] = "model_scale"
    sp = solved(d)
    re_fs = full_scale_re(P_FS, T_FS, M_FS, L_FS)
    # Re ∝ L: L = Re_fs / (Re per metre of model).
    l_hand = re_fs / tunnel_re(6.0e5, T0, M_FS, 1.0)
    assert sp.solve_for == ("model_length", "mach")
    assert sp.required == pytest.approx(l_hand, rel=1e-9)
    assert sp.nominal["model_length"] == pytest.approx(l_hand, rel=1e-9)
    assert sp.nominal["stagnation_pressure"] == pytest.approx(6.0e5, rel=1e-15)
    assert l_hand < 0.30
    assert sp.feasible
    assert sp.reynolds_shortfall == pytest.approx(0.0, abs=1e-9)


def test_solve_model_scale_too_large_is_clamped():
    # At 1 bar the model would have to be longer than the 0.30 m the facility
    # takes: nearest point at L = 0.30 m, Re shortfall = 0.30 / L_required - 1 (Re ∝ L).
    d = base_study()
    d["facility"]["stagnation_pressure"] = "1 bar"
    d["model"] = {}
    d["match"]["solve_for"] = "model_scale"
    sp = solved(d)
    re_fs = full_scale_re(P_FS, T_FS, M_FS, L_FS)
    l_req = re_fs / tunnel_re(1.0e5, T0, M_FS, 1.0)
    assert l_req > 0.30
    assert sp.required == pytest.approx(l_req, rel=1e-9)
    assert sp.nominal["model_length"] == pytest.approx(0.30, rel=1e-15)
    assert not sp.feasible
    assert sp.reynolds_shortfall == pytest.approx(0.30 / l_req - 1.0, rel=1e-9)
    lim = _limit(sp, "model_length", "max")
    assert lim.ok and lim.active  # the solved length sits on the limit ...
    assert sp.binding == ["model_length max 0.3 m"]  # ... which binds
    assert sp.required_values["model_length"] == pytest.approx(l_req, rel=1e-9)


# ---------------------------------------------------------------------------
# Solve speed (Mach) at given p0 and scale, Mach not matched
# ---------------------------------------------------------------------------
def test_solve_speed_without_mach_match():
    d = base_study()
    d["facility"]["stagnation_pressure"] = "8 bar"
    d["match"] = {"solve_for": "speed", "reynolds": {"tolerance": "1 %"}}
    sp = solved(d)
    l_model = 0.0625 * L_FS
    re_fs = full_scale_re(P_FS, T_FS, M_FS, L_FS)
    m = sp.nominal["mach"]
    # Hand evaluation of Re at the solved Mach number: ratio 1.
    assert tunnel_re(8.0e5, T0, m, l_model) / re_fs == pytest.approx(1.0, rel=1e-9)
    # Independent root by plain bisection of the hand formula.
    m_hand = bisect(lambda x: tunnel_re(8.0e5, T0, x, l_model) - re_fs, 1e-4, 0.9999)
    assert m == pytest.approx(m_hand, rel=1e-9)
    assert sp.required == pytest.approx(m_hand, rel=1e-9)
    _, t = tunnel_state(8.0e5, T0, m_hand)
    assert sp.outputs["speed"] == pytest.approx(m_hand * sound_hand(t), rel=1e-9)
    # Mach is not matched: the difference is reported as it is.
    assert sp.mach_shortfall == pytest.approx(m_hand - M_FS, abs=1e-9)
    assert 0.1 < m_hand < 0.92
    assert sp.feasible
    assert any("not matched" in msg for msg in sp.messages)


def test_solve_speed_unreachable_reynolds():
    # At 4 bar even the facility's top Mach number 0.92 gives too low a Reynolds
    # number (Re rises monotonically with M below 1 at fixed p0, T0): nearest
    # point at M = 0.92, shortfall = Re_hand(0.92) / Re_fs - 1.
    d = base_study()
    d["facility"]["stagnation_pressure"] = "4 bar"
    d["match"] = {"solve_for": "speed", "reynolds": {"tolerance": "1 %"}}
    sp = solved(d)
    l_model = 0.0625 * L_FS
    re_fs = full_scale_re(P_FS, T_FS, M_FS, L_FS)
    assert tunnel_re(4.0e5, T0, 0.9999, l_model) < re_fs
    assert math.isnan(sp.required)
    assert sp.nominal["mach"] == pytest.approx(0.92, rel=1e-15)
    assert not sp.feasible
    assert sp.reynolds_shortfall == pytest.approx(tunnel_re(4.0e5, T0, 0.92, l_model) / re_fs - 1.0,
                                                  rel=1e-9)


# ---------------------------------------------------------------------------
# Infeasible: p0 above the facility maximum
# ---------------------------------------------------------------------------
def test_p0_above_facility_maximum():
    # A smaller model (1:40) needs p0 beyond 9 bar.
    d = base_study()
    d["model"] = {"scale": 0.025}
    sp = solved(d)
    re_fs = full_scale_re(P_FS, T_FS, M_FS, L_FS)
    p0_req = re_fs / tunnel_re(1.0, T0, M_FS, 0.025 * L_FS)
    p0_max = 9.0e5
    assert p0_req > p0_max
    assert sp.required == pytest.approx(p0_req, rel=1e-9)
    assert sp.nominal["stagnation_pressure"] == pytest.approx(p0_max, rel=1e-15)
    assert sp.outputs["stagnation_pressure"] == pytest.approx(p0_max, rel=1e-15)
    assert not sp.feasible
    # Re ∝ p0 at fixed Mach: shortfall = p0_max / p0_required - 1.
    assert sp.reynolds_shortfall == pytest.approx(p0_max / p0_req - 1.0, rel=1e-9)
    assert sp.outputs["reynolds_model"] == pytest.approx(
        tunnel_re(p0_max, T0, M_FS, 0.025 * L_FS), rel=1e-9)
    lim = _limit(sp, "stagnation_pressure", "max")
    assert lim.active and sp.binding == ["stagnation_pressure max 900000 Pa"]
    assert sp.required_values["stagnation_pressure"] == pytest.approx(p0_req, rel=1e-9)
    assert not _limit(sp, "stagnation_pressure", "min").active
    assert any("would need stagnation pressure" in msg for msg in sp.messages)
    assert any("Binding limit: stagnation_pressure max" in msg for msg in sp.messages)
    # The Mach number is still matched at the nearest point.
    assert sp.mach_shortfall == pytest.approx(0.0, abs=1e-12)


def test_p0_below_facility_minimum():
    # A large model at a low full-scale Reynolds number needs p0 under 0.5 bar:
    # the nearest point is the minimum, and Re overshoots by p0_min / p0_req - 1.
    d = base_study()
    d["full_scale"]["static_pressure"] = "2000 Pa"
    d["model"] = {"scale": 0.09}
    sp = solved(d)
    re_fs = full_scale_re(2000.0, T_FS, M_FS, L_FS)
    p0_req = re_fs / tunnel_re(1.0, T0, M_FS, 0.09 * L_FS)
    assert p0_req < 5.0e4
    assert sp.nominal["stagnation_pressure"] == pytest.approx(5.0e4, rel=1e-15)
    assert not sp.feasible
    assert sp.reynolds_shortfall == pytest.approx(5.0e4 / p0_req - 1.0, rel=1e-9)
    assert _limit(sp, "stagnation_pressure", "min").active


# ---------------------------------------------------------------------------
# Model too large for the facility
# ---------------------------------------------------------------------------
def test_model_too_large_is_flagged():
    d = base_study()
    d["model"] = {"reference_length": "0.40 m"}   # facility takes 0.30 m
    sp = solved(d)
    re_fs = full_scale_re(P_FS, T_FS, M_FS, L_FS)
    p0_hand = re_fs / tunnel_re(1.0, T0, M_FS, 0.40)
    # The Reynolds number itself is matched (p0 within range) ...
    assert sp.required == pytest.approx(p0_hand, rel=1e-9)
    assert sp.reynolds_shortfall == pytest.approx(0.0, abs=1e-9)
    # ... but the model does not fit: the limit is violated and the set point infeasible.
    lim = _limit(sp, "model_length", "max")
    assert not lim.ok
    assert lim.value == pytest.approx(0.40, rel=1e-15)
    assert lim.bound == pytest.approx(0.30, rel=1e-15)
    assert not sp.feasible
    assert any("model length" in msg and "above the facility maximum" in msg for msg in sp.messages)


def test_model_that_fits_is_not_flagged():
    d = base_study()
    d["model"] = {"reference_length": "0.30 m"}   # exactly the maximum
    sp = solved(d)
    assert _limit(sp, "model_length", "max").ok
    assert sp.feasible


# ---------------------------------------------------------------------------
# Mach outside the facility range
# ---------------------------------------------------------------------------
def test_full_scale_mach_above_facility_range():
    # Full-scale Mach 0.95 with a facility limited to 0.92: the nearest Mach is
    # 0.92, the Mach difference is -0.03 and the set point is not feasible; p0
    # is solved at M = 0.92 (hand closed form); a match would need M = 0.95.
    d = base_study()
    d["full_scale"]["mach"] = 0.95
    sp = solved(d)
    assert sp.nominal["mach"] == pytest.approx(0.92, rel=1e-15)
    assert sp.mach_shortfall == pytest.approx(0.92 - 0.95, abs=1e-12)
    re_fs = full_scale_re(P_FS, T_FS, 0.95, L_FS)
    assert sp.nominal["stagnation_pressure"] == pytest.approx(
        re_fs / tunnel_re(1.0, T0, 0.92, 0.0625 * L_FS), rel=1e-9)
    assert sp.reynolds_shortfall == pytest.approx(0.0, abs=1e-9)
    assert sp.required_values["mach"] == pytest.approx(0.95, rel=1e-9)
    assert sp.binding == ["mach max 0.92"]
    assert not sp.feasible


def test_study_dict_not_mutated():
    d = base_study()
    before = copy.deepcopy(d)
    solved(d)
    assert d == before


# ---------------------------------------------------------------------------
# Messages and bands (simunc's own contract; values from the hand formulas above)
# ---------------------------------------------------------------------------
def test_unreachable_speed_messages_name_the_facility_limit():
    d = base_study()
    d["facility"]["stagnation_pressure"] = "4 bar"
    d["match"] = {"solve_for": "speed", "reynolds": {"tolerance": "1 %"}}
    sp = solved(d)
    text = " ".join(sp.messages)
    assert "Binding limit: mach max 0.92" in text
    assert "0.9999" not in text
    assert all(lim.value == pytest.approx(0.92) for lim in sp.limits if lim.quantity == "mach")


def test_speed_solve_with_mach_band_explains_the_mismatch():
    d = base_study()
    d["facility"]["stagnation_pressure"] = "8 bar"
    d["match"]["solve_for"] = "speed"
    d["match"]["mach"]["solve"] = False
    sp = solved(d)
    assert sp.feasible  # the Reynolds number is matched; the Mach band is only checked
    assert any("mach is checked, not imposed: mach_difference" in m for m in sp.messages)


def test_relative_mach_tolerance_is_a_fraction_of_the_full_scale_mach():
    # 1 % of Ma_full whether full scale is given by Mach or by speed (V = Ma a, a by hand).
    d = base_study()
    d["match"]["mach"] = {"tolerance": "1 %"}
    assert parse_study(d).band("mach").tolerance == pytest.approx(0.01 * M_FS, rel=1e-12)
    d["full_scale"].pop("mach")
    d["full_scale"]["speed"] = f"{M_FS * sound_hand(T_FS)} m/s"
    assert parse_study(d).band("mach").tolerance == pytest.approx(0.01 * M_FS, rel=1e-12)
