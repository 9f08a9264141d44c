"""Coefficient data reduction ([measurement]: balance, attitude, taps) against closed forms.

The studies below are small invented inputs (demo data, not check values); every expected value
is computed in this file from plain formulas, without calling simunc's physics:

* axes: L = N cos a - A sin a, D = N sin a + A cos a and the inverse N = L cos a + D sin a,
  A = D cos a - L sin a (Anderson, Fundamentals of Aerodynamics, 5th ed., eqs. 1.1-1.2);
* coefficients: C = F / (q S), Cm = M / (q S c), Cp = (p - p_inf) / q (Anderson, eq. 3.38);
* isentropic test section of a perfect gas, gamma = 1.4: p = p0 (1 + 0.2 M^2)^-3.5 and
  q = (gamma / 2) p M^2 (NACA Report 1135, eqs. 43-45; from memory of NACA 1135), so at fixed
  Mach number and T0 the dynamic pressure is proportional to p0;
* first-order propagation u^2(y) = sum (df/dx_i)^2 u^2(x_i) for independent inputs
  (JCGM 100:2008, eq. 10; from memory of JCGM 100), done by hand and, independently, by the
  `uncertainties` package on the reduction written out below;
* rectangular limits +-a: u = a / sqrt(3) (JCGM 100:2008, 4.3.7; from memory of JCGM 100).

The measurement model (simunc/similitude/model.py): true angle of attack = set - attitude error
+ upflow; true loads C q S (C q S c for the moment) with the true q and geometry, resolved to body
axes at the true angle; the balance reads N + e_N, A + e_A + k N and M_ref - x N (+ e_M) about
its own centre; the data system transfers with the nominal x, resolves at the SET angle and
divides by the recorded q and the nominal S and c.
"""

from __future__ import annotations

import math
import tomllib

import numpy as np
import pytest
import uncertainties
from uncertainties import umath

from simunc.decisions.balance import choices
from simunc.errors import StudyError
from simunc.physics.reduction import body_to_wind, wind_to_body
from simunc.pipeline import prepare
from simunc.similitude.setpoint import build_model, solve
from simunc.study.readers import load_study, parse_study
from simunc.uncertainty.lpu import lpu
from simunc.units import parse

from .conftest import ROOT
from .tomlwriter import dumps

GAMMA = 1.4
CL, CD, CM = 0.6, 0.03, -0.05
S_NOM, C_NOM = 0.2, 0.2            # model reference area [m^2] and chord [m] as written below
TRANSFER = 0.015                   # balance moment centre to the reference point [m]

# Invented study: the 1:16 cruise model of tests/test_setpoint.py on a three-component balance.
STUDY_TOML = """
title = "data-reduction hand check (invented inputs)"

[full_scale]
static_pressure = "22632 Pa"
static_temperature = "216.65 K"
mach = 0.78
reference_length = "3.2 m"

[facility]
name = "test facility"
gas = "dry_air"
stagnation_temperature = "310 K"
stagnation_pressure_range = ["0.5 bar", "9 bar"]
max_model_reference_length = "0.30 m"
mach_range = [0.1, 0.92]
mach_from = "indication"

[model]
scale = 0.0625

[match]
solve_for = "stagnation_pressure"
reynolds = { tolerance = "2 %" }
mach = { tolerance = "0.002" }

[run]
trials = 1000
seed = 1
sobol_base_samples = 64

[measurement]
angle_of_attack = "5 deg"
lift_coefficient = 0.6
drag_coefficient = 0.03
pitching_moment_coefficient = -0.05
reference_area = "0.2 m^2"
reference_length = "0.2 m"
scanner_reference = "static"

[measurement.balance]
name = "three-component test balance"
normal_force = "30 kN"
axial_force = "2 kN"
pitching_moment = "1.5 kN*m"
moment_transfer = "0.015 m"

[[measurement.tap]]
name = "upper_10"
pressure_coefficient = -0.9

[[measurement.tap]]
name = "lower_40"
pressure_coefficient = 0.1
"""

# The four inputs of the linearised CD budget (test 2), as TOML.
BUDGET_INPUTS = """
[[uncertain]]
name = "balance axial force"
perturbs = "axial_force_indication"
accuracy = { full_scale = "0.1 %", range = "2 kN" }

[[uncertain]]
name = "attitude sensor"
perturbs = "attitude_indication"
standard_uncertainty = "0.03 deg"

[[uncertain]]
name = "wing area"
perturbs = "reference_area"
standard_uncertainty = "0.05 %"

[[uncertain]]
name = "p0 transducer"
perturbs = "stagnation_pressure_indication"
standard_uncertainty = "0.05 %"
"""


def study_dict(**measurement) -> dict:
    d = tomllib.loads(STUDY_TOML)
    d["measurement"].update(measurement)
    return d


def model_at_setpoint(d: dict):
    study = parse_study(d)
    sp = solve(study)
    return build_model(study), dict(sp.nominal), sp


def q_isentropic(p0, mach):
    """q = (gamma/2) p M^2, p = p0 (1 + 0.2 M^2)^-3.5 (NACA Report 1135, eqs. 43-45)."""
    return 0.5 * GAMMA * p0 * (1.0 + 0.5 * (GAMMA - 1.0) * mach**2) ** (-GAMMA / (GAMMA - 1.0)) \
        * mach**2


def sample(prep, n: int, seed: int) -> dict:
    """Plain Monte Carlo: independent draws of every input, one vectorized evaluation."""
    rng = np.random.default_rng(seed)
    x = np.column_stack([d.rvs(size=n, random_state=rng) for d in prep.problem.distributions])
    return prep.problem.evaluate(x)


def std_and_se(y: np.ndarray) -> tuple[float, float]:
    """Sample standard deviation and its standard error: Var(s^2) ~ (mu4 - s^4)/n, so
    se(s) ~ sqrt((mu4 - s^4)/n) / (2 s) (delta method; from memory of H. Cramer, Mathematical
    Methods of Statistics, 1946, sampling distribution of the moments)."""
    dev = y - y.mean()
    s2 = float(np.mean(dev**2))
    mu4 = float(np.mean(dev**4))
    s = math.sqrt(s2)
    return s, math.sqrt((mu4 - s2 * s2) / len(y)) / (2.0 * s)


# ---------------------------------------------------------------------------
# 1. An angle error gives a drag error CL * da at any angle of attack
# ---------------------------------------------------------------------------
@pytest.mark.parametrize("alpha_deg", [0.0, 2.0, 5.0, 8.0])
def test_attitude_error_drag_is_cl_times_angle_error(alpha_deg):
    model, x, _ = model_at_setpoint(study_dict(angle_of_attack=f"{alpha_deg} deg"))
    da = math.radians(0.05)
    y = model({**x, "attitude_indication": da})
    # True alpha = set - da; the data system resolves at the set angle, so the reduced loads are
    # the true wind-axis loads rotated by da (Anderson eqs. 1.1-1.2 applied twice):
    # CD_red = CL sin da + CD cos da, CL_red = CL cos da - CD sin da, whatever the angle.
    d_cd = float(y["drag_coefficient"]) - CD
    d_cl = float(y["lift_coefficient"]) - CL
    assert d_cd == pytest.approx(CL * math.sin(da) + CD * (math.cos(da) - 1.0), rel=1e-9)
    assert d_cl == pytest.approx(CL * (math.cos(da) - 1.0) - CD * math.sin(da), rel=1e-9)
    # The small-angle form dCD = CL da (rad), to within CD da^2/2 + CL da^3/6.
    assert d_cd == pytest.approx(CL * da, abs=CD * da**2 / 2 + CL * da**3 / 6 + 1e-15)
    assert float(y["angle_of_attack_error"]) == pytest.approx(da, rel=1e-12)
    assert float(y["angle_of_attack"]) == pytest.approx(math.radians(alpha_deg) - da, abs=1e-15)

    # Upflow e: true alpha = set + e, so the rotation is by -e (same hand calculation).
    e = math.radians(0.03)
    y = model({**x, "flow_angularity": e})
    assert float(y["drag_coefficient"]) - CD == pytest.approx(
        -CL * math.sin(e) + CD * (math.cos(e) - 1.0), rel=1e-9)
    # A sensor reading e high (geometric angle set - e) under an upflow e: the true angle is the
    # set one and nothing is rotated.
    y = model({**x, "flow_angularity": e, "attitude_indication": e})
    assert float(y["drag_coefficient"]) == pytest.approx(CD, rel=1e-12)
    assert float(y["lift_coefficient"]) == pytest.approx(CL, rel=1e-12)


# ---------------------------------------------------------------------------
# 2. The linearised budget of CD against Monte Carlo and against `uncertainties`
# ---------------------------------------------------------------------------
@pytest.fixture(scope="module")
def budget_prep(tmp_path_factory):
    path = tmp_path_factory.mktemp("reduction") / "budget.toml"
    path.write_text(STUDY_TOML + BUDGET_INPUTS)
    return prepare(load_study(path))


def hand_budget(prep):
    """Standard uncertainties from the numbers written in BUDGET_INPUTS, by hand."""
    p0 = prep.setpoint.nominal["stagnation_pressure"]
    return {
        "axial": 0.001 * 2000.0 / math.sqrt(3.0),    # rectangular, a = 0.1 % of 2 kN (JCGM 100 4.3.7)
        "alpha": math.radians(0.03),
        "area": 0.0005 * S_NOM,                       # 0.05 % of the 0.2 m^2 reading
        "p0": 0.0005 * p0,
    }


def test_cd_budget_closed_form_monte_carlo_and_uncertainties(budget_prep):
    prep = budget_prep
    alpha = math.radians(5.0)
    p0 = prep.setpoint.nominal["stagnation_pressure"]
    mach = prep.setpoint.nominal["mach"]
    q = q_isentropic(p0, mach)
    assert prep.setpoint.outputs["dynamic_pressure"] == pytest.approx(q, rel=1e-9)
    u = hand_budget(prep)

    # Derivation (first-order Taylor of the reduction at the nominal point):
    # CD_red = [N sin a + (A + e_A) cos a] / (q_rec S) with N, A the true loads at a - da
    #        = [q_true S_true (CL sin da + CD cos da) + e_A cos a] / (q_rec S),
    # q_true / q_rec = p0_true / p0_set (fixed M and T0, NACA 1135), S_true = S + e_S, so
    # dCD = e_A cos a / (q S) + CL da + CD e_S / S - CD e_p0 / p0, and with u(D) = u(A) cos a:
    # u(CD)^2 = (u(D)/(qS))^2 + (CD u_r(q))^2 + (CD u_r(S))^2 + (CL u(alpha))^2.
    u_closed = math.sqrt((u["axial"] * math.cos(alpha) / (q * S_NOM)) ** 2
                         + (CD * u["p0"] / p0) ** 2 + (CD * u["area"] / S_NOM) ** 2
                         + (CL * u["alpha"]) ** 2)

    # (b) The same reduction written out with `uncertainties` (exact first derivatives).
    e_a = uncertainties.ufloat(0.0, u["axial"])
    e_att = uncertainties.ufloat(0.0, u["alpha"])
    e_s = uncertainties.ufloat(0.0, u["area"])
    e_p0 = uncertainties.ufloat(0.0, u["p0"])
    a_true = alpha - e_att
    q_true = q_isentropic(p0 - e_p0, mach)
    q_rec = q_isentropic(p0, mach)
    lift, drag = CL * q_true * (S_NOM + e_s), CD * q_true * (S_NOM + e_s)
    n = lift * umath.cos(a_true) + drag * umath.sin(a_true)          # Anderson eqs. 1.1-1.2
    a = drag * umath.cos(a_true) - lift * umath.sin(a_true)
    cd = (n * math.sin(alpha) + (a + e_a) * math.cos(alpha)) / (q_rec * S_NOM)
    assert cd.nominal_value == pytest.approx(CD, rel=1e-12)
    assert cd.std_dev == pytest.approx(u_closed, rel=1e-9)

    # simunc's own GUM routine agrees with both.
    r = lpu(prep.problem, ["drag_coefficient"])
    assert float(r.estimates.loc["drag_coefficient", "standard_uncertainty"]) == pytest.approx(
        u_closed, rel=1e-6)
    assert [i.standard_uncertainty for i in prep.inputs] == pytest.approx(list(u.values()),
                                                                        rel=1e-12)

    # (a) Monte Carlo: the sample standard deviation within 4 standard errors (4 SE: common
    # practice, no source); the neglected second-order terms are below 1e-3 of u here.
    y = sample(prep, 400_000, seed=7)
    s, se = std_and_se(np.asarray(y["drag_coefficient"]))
    assert abs(s - u_closed) < 4.0 * se, (s, u_closed, se)
    assert float(np.mean(y["drag_coefficient"])) == pytest.approx(CD, abs=4.0 * s / math.sqrt(4e5))


# ---------------------------------------------------------------------------
# 3. % of full scale gives u(CD) proportional to 1/q; % of reading does not
# ---------------------------------------------------------------------------
def axial_only(p0: str, accuracy: dict, alpha_deg: float = 5.0):
    d = study_dict(angle_of_attack=f"{alpha_deg} deg")
    d["facility"]["stagnation_pressure"] = p0
    d["match"] = {"solve_for": [], "mach": {"tolerance": "0.002"}}   # Mach matched, p0 given
    d["uncertain"] = [{"name": "balance axial force", "perturbs": "axial_force_indication",
                       "accuracy": accuracy}]
    prep = prepare(parse_study(d))
    u = float(lpu(prep.problem, ["drag_coefficient"]).estimates.loc[
        "drag_coefficient", "standard_uncertainty"])
    return u, prep.setpoint.outputs["dynamic_pressure"]


def test_full_scale_accuracy_scales_with_one_over_q():
    alpha = math.radians(5.0)
    fs = {"full_scale": "0.1 %", "range": "2 kN"}
    u1, q1 = axial_only("3 bar", fs)
    u2, q2 = axial_only("6 bar", fs)
    # q = (gamma/2) p0 (1 + 0.2 M^2)^-3.5 M^2 at the same Mach number: q2 / q1 = 6 / 3.
    assert q2 / q1 == pytest.approx(2.0, rel=1e-9)
    # dCD = e_A cos a / (q S) (test 2's derivation) with u(e_A) = a / sqrt(3) fixed: u ∝ 1/q.
    assert u1 / u2 == pytest.approx(q2 / q1, rel=1e-9)
    for u, q in ((u1, q1), (u2, q2)):
        assert u == pytest.approx(2.0 / math.sqrt(3.0) * math.cos(alpha) / (q * S_NOM), rel=1e-6)


def test_reading_accuracy_is_independent_of_q():
    alpha = math.radians(5.0)
    rd = {"reading": "0.2 %"}
    u1, q1 = axial_only("3 bar", rd)
    u2, q2 = axial_only("6 bar", rd)
    # The reading is the true axial force A = q S (CD cos a - CL sin a) (Anderson eqs. 1.1-1.2);
    # u(e_A) = 0.002 |A| / sqrt(3), so u(CD) = cos a 0.002 |CD cos a - CL sin a| / sqrt(3).
    expected = math.cos(alpha) * 0.002 * abs(CD * math.cos(alpha) - CL * math.sin(alpha)) \
        / math.sqrt(3.0)
    assert u1 == pytest.approx(expected, rel=1e-6)
    assert u2 == pytest.approx(expected, rel=1e-6)
    assert u1 / u2 == pytest.approx(1.0, rel=1e-9)
    assert q2 / q1 == pytest.approx(2.0, rel=1e-9)


# ---------------------------------------------------------------------------
# 4. Pressure coefficients
# ---------------------------------------------------------------------------
def test_pressure_coefficient_budget_against_closed_form():
    # Mach from the pressure ratio here: the p0 transducer moves the true q through p0 and Mach,
    # and u_r(q) is read off the spread of dynamic_pressure_error = q_rec / q - 1.
    d = study_dict()
    d["facility"]["mach_from"] = "pressure_ratio"
    d["uncertain"] = [
        {"name": "scanner", "perturbs": "pressure_scanner_indication",
         "standard_uncertainty": "80 Pa"},
        {"name": "p0 transducer", "perturbs": "stagnation_pressure_indication",
         "standard_uncertainty": "0.05 %"}]
    prep = prepare(parse_study(d))
    q = prep.setpoint.outputs["dynamic_pressure"]
    y = sample(prep, 400_000, seed=11)
    u_rq = float(np.std(y["dynamic_pressure_error"]))
    assert u_rq > 0.0
    # Cp_red = (Cp q + e_scan) / q_rec = Cp / (1 + eps) + e_scan / q_rec, eps = q_rec / q - 1:
    # to first order u(Cp)^2 = (u_scan / q)^2 + (Cp u_r(q))^2 (the Cp definition, Anderson 3.38).
    for tap, cp in (("upper_10", -0.9), ("lower_40", 0.1)):
        u_closed = math.sqrt((80.0 / q) ** 2 + (cp * u_rq) ** 2)
        s, se = std_and_se(np.asarray(y[f"pressure_coefficient_{tap}"]))
        assert abs(s - u_closed) < 4.0 * se, (tap, s, u_closed, se)   # 4 SE: common practice


@pytest.mark.parametrize("reference", ["static", "stagnation"])
def test_pressure_coefficient_exact_reduction(reference):
    model, x, _ = model_at_setpoint(study_dict(scanner_reference=reference))
    p0, mach = x["stagnation_pressure"], x["mach"]
    r = (1.0 + 0.2 * mach**2) ** -3.5                 # p / p0 (NACA 1135, eq. 44)
    e, e_scan = 0.002 * p0, 150.0
    y = model({**x, "stagnation_pressure_indication": e, "pressure_scanner_indication": e_scan})
    q_true, q_rec = q_isentropic(p0 - e, mach), q_isentropic(p0, mach)
    for tap, cp in (("upper_10", -0.9), ("lower_40", 0.1)):
        p_tap = r * (p0 - e) + cp * q_true            # Cp definition (Anderson eq. 3.38)
        if reference == "static":
            # reading = p_tap - p_true + e_scan, Cp = reading / q_rec
            expected = (p_tap - r * (p0 - e) + e_scan) / q_rec
        else:
            # reading = p_tap - p0_true + e_scan; the data system adds the recorded p0 and takes
            # off the recorded static pressure r p0: (Cp q + e (1 - r) + e_scan) / q_rec
            expected = (p_tap - (p0 - e) + e_scan + p0 - r * p0) / q_rec
            assert expected == pytest.approx((cp * q_true + e * (1 - r) + e_scan) / q_rec,
                                             rel=1e-12)
        assert float(y[f"pressure_coefficient_{tap}"]) == pytest.approx(expected, rel=1e-9)


# ---------------------------------------------------------------------------
# 5. Pitching-moment transfer
# ---------------------------------------------------------------------------
def test_moment_transfer_and_normal_force_errors_on_cm():
    model, x, sp = model_at_setpoint(study_dict())
    alpha = math.radians(5.0)
    q = q_isentropic(x["stagnation_pressure"], x["mach"])
    qs, qsc = q * S_NOM, q * S_NOM * C_NOM
    n = qs * (CL * math.cos(alpha) + CD * math.sin(alpha))            # Anderson eqs. 1.1-1.2
    y0 = model(x)
    assert float(y0["normal_force"]) == pytest.approx(n, rel=1e-9)
    # The balance carries the moment about its own centre: M_bal = M_ref - x N (hand statics).
    assert float(y0["pitching_moment"]) == pytest.approx(CM * qsc - TRANSFER * n, rel=1e-9)
    assert float(y0["pitching_moment_coefficient"]) == pytest.approx(CM, rel=1e-12)

    # Transfer distance wrong by e_x: M_red = (M_ref - (x + e_x) N) + x N = M_ref - e_x N.
    e_x = 0.5e-3
    y = model({**x, "moment_transfer_distance": e_x})
    assert float(y["pitching_moment_coefficient"]) - CM == pytest.approx(-e_x * n / qsc, rel=1e-8)
    assert float(y["lift_coefficient"]) == pytest.approx(CL, rel=1e-12)   # N and A untouched

    # Normal-force error e_N: M_red = M_ref - x N + x (N + e_N) = M_ref + x e_N, and the
    # resolved lift and drag take e_N cos a and e_N sin a.
    e_n = 5.0
    y = model({**x, "normal_force_indication": e_n})
    assert float(y["pitching_moment_coefficient"]) - CM == pytest.approx(TRANSFER * e_n / qsc,
                                                                         rel=1e-8)
    assert float(y["lift_coefficient"]) - CL == pytest.approx(e_n * math.cos(alpha) / qs, rel=1e-8)
    assert float(y["drag_coefficient"]) - CD == pytest.approx(e_n * math.sin(alpha) / qs, rel=1e-7)

    # A moment-gauge error e_M goes straight in: dCm = e_M / (q S c).
    y = model({**x, "pitching_moment_indication": 2.0})
    assert float(y["pitching_moment_coefficient"]) - CM == pytest.approx(2.0 / qsc, rel=1e-8)

    # Normal-on-axial interaction k: A_read = A + k N, so dCD = k N cos a / (q S).
    k = 1e-4
    y = model({**x, "axial_force_interaction": k})
    assert float(y["drag_coefficient"]) - CD == pytest.approx(k * n * math.cos(alpha) / qs,
                                                              rel=1e-7)


# ---------------------------------------------------------------------------
# 6. Axis transformation
# ---------------------------------------------------------------------------
def test_axis_transformation_at_ten_degrees():
    # cos 10 deg = 0.984807753, sin 10 deg = 0.173648178 (from memory of the trigonometric
    # tables); Anderson eqs. 1.1-1.2 by hand: N = 1000 cos + 80 sin, A = 80 cos - 1000 sin.
    a = math.radians(10.0)
    n, ax = wind_to_body(1000.0, 80.0, a)
    assert float(n) == pytest.approx(998.69960724, rel=1e-8)
    assert float(ax) == pytest.approx(-94.86355776, rel=1e-8)
    lift, drag = body_to_wind(n, ax, a)
    assert float(lift) == pytest.approx(1000.0, rel=1e-12)
    assert float(drag) == pytest.approx(80.0, rel=1e-12)
    # Hand-resolved the other way: a body-axis load of N = 1000 N, A = 0 gives
    # L = 1000 cos 10 deg, D = 1000 sin 10 deg.
    lift, drag = body_to_wind(1000.0, 0.0, a)
    assert (float(lift), float(drag)) == pytest.approx((984.807753, 173.648178), rel=1e-8)
    # Vectorised round trip at several angles; a rotation keeps L^2 + D^2.
    alphas = np.radians([-10.0, 0.0, 2.5, 10.0, 45.0])
    lifts, drags = np.array([1.0, -2.0, 3.0, 4.0, 5.0]), np.array([0.1, 0.2, -0.3, 0.4, 0.5])
    n, ax = wind_to_body(lifts, drags, alphas)
    np.testing.assert_allclose(n**2 + ax**2, lifts**2 + drags**2, rtol=1e-12)
    back = body_to_wind(n, ax, alphas)
    np.testing.assert_allclose(back[0], lifts, rtol=1e-12)
    np.testing.assert_allclose(back[1], drags, rtol=1e-12, atol=1e-15)


# ---------------------------------------------------------------------------
# 7. Balance choice against brute force (demo study)
# ---------------------------------------------------------------------------
DEMO_BALANCE = ROOT / "studies" / "arven_cruise_balance.toml"
COMPONENTS = ("normal_force", "axial_force", "pitching_moment", "side_force", "rolling_moment",
              "yawing_moment")


def si(text: str) -> float:
    """'30 kN', '1.5 kN*m', '0.05 %', '25 %', '0.015 m', '0.195 m^2' by hand."""
    value, unit = text.split()
    factor = {"N": 1.0, "kN": 1e3, "N*m": 1.0, "kN*m": 1e3, "%": 1e-2, "m": 1.0, "m^2": 1.0,
              "deg": math.pi / 180.0}[unit]
    return float(value) * factor


@pytest.fixture(scope="module")
def demo():
    return prepare(load_study(DEMO_BALANCE)), tomllib.loads(DEMO_BALANCE.read_text())


def test_demo_loads_by_hand(demo):
    prep, raw = demo
    m = raw["measurement"]
    out = prep.setpoint.outputs
    q, s, c = out["dynamic_pressure"], si(m["reference_area"]), si(m["reference_length"])
    cl, cd, cm = m["lift_coefficient"], m["drag_coefficient"], m["pitching_moment_coefficient"]
    # the aerodynamic angle: the set one plus the walls' upwash delta (S / C) CL (Glauert, as in
    # Barlow, Rae and Pope, Low-Speed Wind Tunnel Testing, ch. 10; from memory of that book)
    alpha = si(m["angle_of_attack"]) + m["walls"]["boundary_factor"] * s / si(
        raw["facility"]["test_section_area"]) * cl
    n = q * s * (cl * math.cos(alpha) + cd * math.sin(alpha))        # Anderson eqs. 1.1-1.2
    a = q * s * (cd * math.cos(alpha) - cl * math.sin(alpha))
    x = si(m["balance"]["moment_transfer"])
    assert out["normal_force"] == pytest.approx(n, rel=1e-9)
    assert out["axial_force"] == pytest.approx(a, rel=1e-9)
    assert out["pitching_moment"] == pytest.approx(cm * q * s * c - x * n, rel=1e-9)
    for lateral in ("side_force", "rolling_moment", "yawing_moment"):
        assert out[lateral] == 0.0                      # lateral coefficients default to 0


def expected_choices(raw: dict, outputs) -> tuple[dict, list]:
    """Brute force over the written balance and every option: candidates carry every expected
    load with the margin; each balance input's scale is (option's %FS x its capacity + the other
    terms of the written accuracy) / (written half-width), or capacity ratio for other forms."""
    m = raw["measurement"]
    bal = m["balance"]
    margin = si(bal["load_margin"])
    written_cap = {c: si(bal[c]) for c in COMPONENTS if c in bal}
    balances = [(bal["name"], written_cap, {})] + [
        (o["name"], {c: si(v) for c, v in o["capacity"].items()},
         {c: si(v) for c, v in o.get("full_scale", {}).items()}) for o in m["balance_option"]]
    inputs = [u for u in raw["uncertain"] if u["perturbs"].endswith("_indication")
              and u["perturbs"][:-len("_indication")] in written_cap]
    cands, excluded = {}, []
    for name, cap, fs in balances:
        if not all(abs(outputs[c]) * (1.0 + margin) <= cap[c] for c in cap):
            excluded.append(name)
            continue
        scales = []
        for u in inputs:
            comp = u["perturbs"][:-len("_indication")]
            acc = u.get("accuracy")
            if acc and "full_scale" in acc:
                other = si(acc["reading"]) * abs(outputs[comp]) if "reading" in acc else 0.0
                other += si(acc["absolute"]) if "absolute" in acc else 0.0
                written = si(acc["full_scale"]) * si(acc["range"]) + other
                scales.append((fs.get(comp, si(acc["full_scale"])) * cap[comp] + other) / written)
            else:
                scales.append(cap[comp] / written_cap[comp])
        cands[name] = scales
    return cands, excluded


def check_choices(prep, raw):
    got = choices(prep.inputs, prep.study.measurement, prep.setpoint.outputs)
    want, excluded = expected_choices(raw, prep.setpoint.outputs)
    assert [c[0] for c in got.candidates] == list(want)
    for name, scales, _ in got.candidates:
        np.testing.assert_allclose(scales, want[name], rtol=1e-12)
    assert [e.split(":")[0] for e in got.excluded] == excluded
    names = [prep.inputs[j].name for j in got.indices]
    assert names == [u["name"] for u in raw["uncertain"] if u["perturbs"].endswith("_indication")
                     and u["perturbs"][:-len("_indication")] in raw["measurement"]["balance"]]
    return got, want, excluded


def test_balance_choices_demo_brute_force(demo):
    prep, raw = demo
    got, want, excluded = check_choices(prep, raw)
    # By hand from the TOML: N = 20.8 kN needs 26 kN with the 25 % margin, so K-12 (12 kN) is no
    # candidate; K-28 takes 0.05 % x 28 kN / (0.05 % x 30 kN) = 14/15 on the normal force,
    # 0.08 % x 1 kN / (0.10 % x 2 kN) = 0.4 on the axial force, and keeps the written 0.10 %
    # (of 8 kN instead of 10 kN) on the side force.
    assert excluded == ["Balance K-12 (six components)"]
    k28 = want["Balance K-28 (six components)"]
    assert k28[:4] == pytest.approx([14 / 15, 0.4, 0.64, 0.8], rel=1e-12)
    assert want["Balance K-30 (six components)"] == pytest.approx([1.0] * 6, rel=1e-12)


def test_balance_choices_other_terms_and_other_forms(tmp_path):
    # The demo with a %-of-reading term on the axial accuracy and the side force written as a
    # standard uncertainty: the reading term stays, a non-accuracy form scales with capacity.
    raw = tomllib.loads(DEMO_BALANCE.read_text())
    for u in raw["uncertain"]:
        if u["perturbs"] == "axial_force_indication":
            u["accuracy"] = {"reading": "0.02 %", "full_scale": "0.10 %", "range": "2 kN"}
        if u["perturbs"] == "side_force_indication":
            del u["accuracy"]
            u["standard_uncertainty"] = "3 N"
    path = tmp_path / "balance.toml"
    path.write_text(dumps(raw))
    prep = prepare(load_study(path))
    got, want, _ = check_choices(prep, raw)
    a = abs(prep.setpoint.outputs["axial_force"])
    assert want["Balance K-28 (six components)"][1] == pytest.approx(
        (0.0002 * a + 0.0008 * 1000.0) / (0.0002 * a + 0.001 * 2000.0), rel=1e-12)
    assert want["Balance K-28 (six components)"][3] == pytest.approx(8.0 / 10.0, rel=1e-12)


def test_written_balance_is_as_written_when_the_range_is_not_the_capacity(tmp_path):
    # A datasheet %FS of a two-sided range [-30 kN, 30 kN] on a 30 kN balance, and a 2.5 kN range
    # on a 2 kN axial component: the written balance is the inputs as written (scale 1); an option
    # takes its %FS of the written range scaled by the capacity ratio (hand calculation:
    # 0.05 % x 60 kN x 28/30 over 0.05 % x 60 kN = 14/15; 0.08 % x 2.5 kN x 1/2 over
    # 0.10 % x 2.5 kN = 0.4).
    raw = tomllib.loads(DEMO_BALANCE.read_text())
    for u in raw["uncertain"]:
        if u["perturbs"] == "normal_force_indication":
            u["accuracy"] = {"full_scale": "0.05 %", "range": ["-30 kN", "30 kN"]}
        if u["perturbs"] == "axial_force_indication":
            u["accuracy"] = {"full_scale": "0.10 %", "range": "2.5 kN"}
    path = tmp_path / "ranges.toml"
    path.write_text(dumps(raw))
    prep = prepare(load_study(path))
    got = choices(prep.inputs, prep.study.measurement, prep.setpoint.outputs)
    scales = {name: s for name, s, _ in got.candidates}
    assert scales["Balance K-30 (six components)"] == pytest.approx([1.0] * 6, rel=1e-12)
    assert scales["Balance K-28 (six components)"][:2] == pytest.approx([14 / 15, 0.4],
                                                                        rel=1e-12)


def test_lift_curve_slope_gives_the_error_at_the_measured_angle():
    # With dCL/dalpha = a stated, the true lift at the true angle alpha_set - da is CL - a da; the
    # data system rotates the true loads by da (Anderson eqs. 1.1-1.2), so
    # CL_red = (CL - a da) cos da - CD sin da: against CL at the set (measured) angle the error is
    # -(a + CD) da to first order, where without the slope it is only -CD da. Likewise
    # Cm_red = Cm - b da for dCm/dalpha = b (the moment needs no rotation).
    a, b = 6.0, -0.9                      # per radian: "6.0 1/rad" and "-0.9 1/rad"
    model, x, _ = model_at_setpoint(study_dict(angle_of_attack="3 deg",
                                               lift_curve_slope="6.0 1/rad",
                                               pitching_moment_slope="-0.9 1/rad"))
    da = math.radians(0.05)
    y = model({**x, "attitude_indication": da})
    assert float(y["lift_coefficient"]) == pytest.approx(
        (CL - a * da) * math.cos(da) - CD * math.sin(da), rel=1e-9)
    assert float(y["pitching_moment_coefficient"]) == pytest.approx(CM - b * da, rel=1e-9)
    # the slope in degrees reads the same (0.10472 per degree = 6.0 per radian)
    assert parse("k", "0.1047198 1/deg", "per_angle").value == pytest.approx(6.0, rel=1e-6)


def test_density_model_error_keeps_q_of_a_gas_set_by_p0_and_mach():
    # A gas set by p0, T0 and M: q = gamma/2 p M^2 (NACA 1135) does not depend on the density
    # model, and Re = rho U L / mu with U = M a and a^2 = gamma p / rho goes as sqrt(rho): a
    # density-model error of 1 % moves Re by sqrt(1.01) - 1 and q by nothing.
    model, x, _ = model_at_setpoint(study_dict())
    y0 = model(x)
    y = model({**x, "density_model": 0.01})
    assert float(y["dynamic_pressure"]) == pytest.approx(float(y0["dynamic_pressure"]), rel=1e-12)
    assert float(y["reynolds_model"]) / float(y0["reynolds_model"]) == pytest.approx(
        math.sqrt(1.01), rel=1e-12)
    assert float(y["drag_coefficient"]) == pytest.approx(CD, rel=1e-12)


# ---------------------------------------------------------------------------
# 8. Study parsing
# ---------------------------------------------------------------------------
@pytest.mark.parametrize("text, value", [("1 count", 1e-4), ("2 counts", 2e-4),
                                         ("2 drag counts", 2e-4)])
def test_drag_counts(text, value):
    # A drag count is 0.0001 of CD (common usage; e.g. Barlow, Rae & Pope, Low-Speed Wind Tunnel
    # Testing, from memory of that book).
    p = parse("requirement[0].expanded_uncertainty", text, "dimensionless")
    assert p.value == pytest.approx(value, rel=1e-12)
    assert not p.relative


def test_demo_requirement_in_counts():
    study = load_study(DEMO_BALANCE)
    req = [r for r in study.requirements if r.output == "drag_coefficient"]
    assert len(req) == 1 and req[0].limit == pytest.approx(2e-4, rel=1e-12)   # "2 counts"


@pytest.mark.parametrize("text", ["2.5", 2.5, 3])
def test_angle_without_unit_refused(text):
    with pytest.raises(StudyError):
        parse("measurement.angle_of_attack", text, "angle")
    d = study_dict(angle_of_attack=text)
    with pytest.raises(StudyError) as info:
        parse_study(d)
    assert info.value.key == "measurement.angle_of_attack"


def test_angle_with_unit_read():
    assert parse("k", "2.5 deg", "angle").value == pytest.approx(math.radians(2.5), rel=1e-12)
    assert parse("k", "0.04 rad", "angle").value == pytest.approx(0.04, rel=1e-12)


def test_balance_input_without_balance_refused():
    d = study_dict()
    del d["measurement"]["balance"]
    for key in ("lift_coefficient", "drag_coefficient", "pitching_moment_coefficient"):
        del d["measurement"][key]
    d["uncertain"] = [
        {"name": "scanner", "perturbs": "pressure_scanner_indication",
         "standard_uncertainty": "80 Pa"},
        {"name": "balance normal force", "perturbs": "normal_force_indication",
         "standard_uncertainty": "5 N"}]
    with pytest.raises(StudyError) as info:
        parse_study(d)
    assert info.value.key == "uncertain[1].perturbs"
    assert "normal force" in str(info.value)
    # The taps alone are a valid study.
    d["uncertain"] = d["uncertain"][:1]
    assert parse_study(d).measurement.tap_names == ("upper_10", "lower_40")


def test_count_refused_for_an_angle():
    # A drag count is a coefficient's unit (1e-4 of CD), not an angle's.
    with pytest.raises(StudyError):
        parse("measurement.angle_of_attack", "5 counts", "angle")


def test_pretest_chart_pure_full_scale_balance_is_one_over_q(tmp_path):
    # Only the axial-force error, rectangular +-a with a = 0.10 % of 2 kN: CD = ... +
    # cos(alpha) e_A / (q S) from D = N sin(alpha) + A cos(alpha) (Anderson eqs. 1.1-1.2), a
    # rectangular output whose 95 % probabilistically symmetric interval has the half-length
    # 0.95 a cos(alpha) / (q S) (the quantiles of a uniform distribution; JCGM 101 7.7). So U(CD) q
    # is the same at every point of the chart (common random numbers make the ratio exact) and
    # equals 0.95 a cos(alpha) / S to the sampling error of the quantiles of 20 000 trials (2 %
    # allowed).
    from simunc.decisions.pretest import pressure_chart

    raw = tomllib.loads(DEMO_BALANCE.read_text())
    raw["uncertain"] = [u for u in raw["uncertain"] if u["perturbs"] == "axial_force_indication"]
    raw["measurement"].pop("walls", None)  # their corrections' errors are inputs too
    raw.pop("requirement", None)
    raw["measurement"].pop("balance_option", None)
    raw["measurement"]["balance"].pop("price", None)
    path = tmp_path / "axial_only.toml"
    path.write_text(dumps(raw))
    prep = prepare(load_study(path))
    chart = pressure_chart(prep)
    u_cd = chart.expanded["Balance K-30 (six components)"]["drag_coefficient"]
    product = u_cd * chart.dynamic_pressure
    np.testing.assert_allclose(product, product[0], rtol=1e-9)
    alpha = math.radians(2.5)
    expected = 0.95 * math.cos(alpha) * (0.001 * 2000.0) / 0.195
    assert product[0] == pytest.approx(expected, rel=0.02)


def test_balance_utilisation_statuses(demo):
    # Utilisation = |expected load| / capacity (the loads checked by hand in
    # test_demo_loads_by_hand); the thresholds are simunc's own: overloaded above 1, above the
    # margin when |load| (1 + margin) > capacity, a note below 20 % (common practice, no source).
    from dataclasses import replace

    from simunc.decisions.balance import utilisation

    prep, _ = demo
    m, out = prep.study.measurement, prep.setpoint.outputs
    n = abs(out["normal_force"])
    cap = {"normal_force": 0.9 * n, "axial_force": 1.1 * abs(out["axial_force"]),
           "pitching_moment": 10.0 * abs(out["pitching_moment"]), "side_force": 1000.0}
    table = utilisation(replace(m, capacity=cap), out).set_index("component")
    assert table.loc["normal_force", "utilisation"] == pytest.approx(1 / 0.9, rel=1e-12)
    assert table.loc["normal_force", "status"] == "overloaded"
    assert table.loc["axial_force", "status"].startswith("above the load margin (25 %)")
    assert table.loc["pitching_moment", "status"].startswith("below 20 %")
    assert table.loc["side_force", "status"] == "no load expected"


@pytest.mark.slow
def test_balance_demo_end_to_end(tmp_path):
    # The whole path a user runs: exit 0, the coefficients in results.json and the report, the
    # pre-test chart, and the allocation choosing among the candidate balances. Checks against
    # closed forms: u(CD) of the Monte Carlo equals the LPU's to the first order (JCGM 101 8,
    # the model is near linear here; 5 % allowed at 20 000 trials), and the LPU sensitivity of
    # CD to the attitude error is CL (the small-angle result of the axis rotation, Anderson
    # eqs. 1.1-1.2); the balance that cannot carry N = 20.8 kN x 1.25 (12 kN) is no candidate.
    import json

    from simunc.cli import main

    out = tmp_path / "report"
    assert main(["run", str(DEMO_BALANCE), "--out", str(out), "--trials", "20000"]) == 0
    doc = json.loads((out / "results.json").read_text())
    cd = doc["coefficients"]["table"]["drag_coefficient"]
    assert cd["U_counts"] == pytest.approx(cd["U"] / 1e-4, rel=1e-12)
    assert cd["u"] == pytest.approx(doc["lpu"]["drag_coefficient"]["standard_uncertainty"],
                                    rel=0.05)
    budget = doc["sensitivity"]["budgets"]["drag_coefficient"]
    assert budget["attitude sensor"]["sensitivity"] == pytest.approx(0.5, rel=1e-3)
    assert budget["upflow calibration"]["sensitivity"] == pytest.approx(-0.5, rel=1e-3)
    alloc = doc["requirements"]["allocation"]
    assert alloc["balance"] in ("Balance K-30 (six components)", "Balance K-28 (six components)")
    assert [e.split(":")[0] for e in alloc["excluded_balances"]] == [
        "Balance K-12 (six components)"]
    assert (out / "pretest_chart.png").stat().st_size > 10_000
    assert "Measured coefficients (data reduction)" in (out / "report.md").read_text()


@pytest.mark.parametrize("old, new, key", [
    ('expanded_uncertainty = "0.05 %"\ncoverage_factor = 2',
     'expanded_uncertainty = "0.05 %"\ncoverage_factor = 2\ncost = { at_written = 100 }',
     "uncertain[0].cost"),
    ('accuracy = { full_scale = "0.10 %", range = "2 kN" }',
     'accuracy = { full_scale = "0.10 %", range = "2 kN" }\n'
     'grades = [{ expanded_uncertainty = "1 N", price = 5 }]', "uncertain[8].grades"),
])
def test_balance_options_and_cost_models_refused(tmp_path, old, new, key):
    # simunc's own rule (no outside source): with balance options the allocation is a grade
    # choice, and the options alone set the balance's inputs.
    text = DEMO_BALANCE.read_text()
    assert old in text
    path = tmp_path / "bad.toml"
    path.write_text(text.replace(old, new, 1))
    with pytest.raises(StudyError) as err:
        load_study(path)
    assert err.value.key == key


@pytest.mark.slow
def test_allocation_names_the_balance_it_prices(tmp_path):
    # With no [[uncertain]] input on the balance's components the balance still is a choice of
    # the allocation (its capacity); the total price must be that of the grades named plus the
    # balance named (simunc's own bookkeeping, checked by summing the TOML prices by hand).
    import simunc

    raw = tomllib.loads(DEMO_BALANCE.read_text())
    raw["uncertain"] = [u for u in raw["uncertain"]
                        if not (u["perturbs"].endswith("_indication")
                                and u["perturbs"][:-11] in raw["measurement"]["balance"])]
    path = tmp_path / "no_balance_inputs.toml"
    path.write_text(dumps(raw))
    result = simunc.run(load_study(path), trials=2000, parts=("requirements",))
    a = result.allocation
    assert a is not None and not a.message
    prices = {"Balance K-30 (six components)": raw["measurement"]["balance"]["price"]}
    prices.update({o["name"]: o["price"] for o in raw["measurement"]["balance_option"]})
    grade_price = {(u["name"], g["name"]): g["price"] for u in raw["uncertain"]
                   for g in u.get("grades", [])}
    assert a.balance in prices
    assert a.cost == pytest.approx(prices[a.balance] + sum(
        grade_price[(name, grade)] for name, grade in a.grades.items()), rel=1e-12)
