"""Wall corrections inside the one model: the set point matches the corrected Mach number, the
data system applies the nominal corrections, and their errors reach the coefficients.

Check values come from the published formulas written out here (not from simunc's physics):

* corrected Mach number M = M_u (1 + (1 + 0.2 M_u^2) eps) (Pope and Goin, High-Speed Wind Tunnel
  Testing, subsonic wall corrections; from memory of that book), with the total blockage
  eps = K V / C^1.5 / beta^3 + (S / 4C) C_D (1 + 0.4 M^2) / beta^2, beta^2 = 1 - M^2 (Thom's
  short form and the compressible factors, Barlow, Rae and Pope, Low-Speed Wind Tunnel Testing,
  3rd ed., ch. 10, and AGARDograph 109; from memory of those texts);
* Glauert's lift interference d_alpha = delta (S / C) C_L, whose rotation of the loads is the
  induced-drag correction delta (S / C) C_L^2 (Barlow, Rae and Pope, ch. 10);
* the axis rotation D = N sin a + A cos a (Anderson, Fundamentals of Aerodynamics, eqs. 1.1-1.2).

The study is an invented small model in an invented closed-wall tunnel (inputs, not check values).
"""

from __future__ import annotations

import math
import tomllib

import pytest
from scipy import optimize

from simunc.errors import StudyError
from simunc.similitude.setpoint import build_model, solve
from simunc.study.readers import parse_study

STUDY = """
title = "closed-wall hand check (invented inputs)"
[full_scale]
static_pressure = "101325 Pa"
static_temperature = "288.15 K"
mach = 0.5
reference_length = "1.0 m"
[facility]
gas = "dry_air"
stagnation_temperature = "300 K"
stagnation_pressure = "2 bar"
stagnation_pressure_range = ["1 bar", "3 bar"]
mach_range = [0.1, 0.9]
test_section_area = "1.5 m^2"
[model]
scale = 0.2
[match]
solve_for = "mach"
mach = { tolerance = "0.002" }
[measurement]
angle_of_attack = "4 deg"
lift_coefficient = 0.6
drag_coefficient = 0.03
pitching_moment_coefficient = -0.05
reference_area = "0.05 m^2"
[measurement.balance]
normal_force = "8 kN"
axial_force = "800 N"
pitching_moment = "400 N*m"
[measurement.walls]
model_volume = "0.0012 m^3"
shape_factor = 0.9
boundary_factor = 0.125
"""
CL, CD, S, C, V, K, DELTA = 0.6, 0.03, 0.05, 1.5, 0.0012, 0.9, 0.125
M_FULL = 0.5


def _eps(mach: float) -> float:
    beta2 = 1.0 - mach**2
    return K * V / C**1.5 / beta2**1.5 + S / (4.0 * C) * CD * (1.0 + 0.4 * mach**2) / beta2


def _prepared(text: str = STUDY):
    study = parse_study(tomllib.loads(text))
    sp = solve(study)
    return study, build_model(study), sp


def test_set_point_matches_the_corrected_mach_number():
    # The tunnel is set to the uncorrected M_u that the walls speed up to the full-scale 0.5.
    _, _, sp = _prepared()
    m_u = optimize.brentq(lambda m: m * (1 + (1 + 0.2 * m * m) * _eps(m)) - M_FULL, 0.3, 0.5,
                          xtol=1e-14)
    assert sp.nominal["mach"] == pytest.approx(m_u, abs=2e-7)
    assert sp.outputs["mach_model"] == pytest.approx(M_FULL, abs=1e-6)
    assert sp.outputs["mach_uncorrected"] == pytest.approx(m_u, abs=2e-7)
    assert sp.outputs["blockage"] == pytest.approx(_eps(m_u), rel=1e-6)
    # the blockage is a few tenths of a per cent here: M_u is below 0.5 by M (1 + 0.2 M^2) eps
    assert M_FULL - m_u == pytest.approx(m_u * (1 + 0.2 * m_u**2) * _eps(m_u), rel=1e-9)


def test_nominal_corrections_reduce_to_the_stated_coefficients_and_errors_reach_them():
    _, model, sp = _prepared()
    x = dict(sp.nominal)
    y = model(x)
    assert float(y["drag_coefficient"]) == pytest.approx(CD, rel=1e-9)
    assert float(y["lift_coefficient"]) == pytest.approx(CL, rel=1e-9)
    d_alpha = DELTA * S / C * CL
    assert float(y["angle_correction"]) == pytest.approx(d_alpha, rel=1e-12)
    # A lift-interference correction 30 % short: the true upwash is d_alpha (1 + e); the data
    # system resolves at alpha_set + d_alpha, a rotation by -e d_alpha: dCD = -CL sin(e d_alpha)
    # + CD (cos(e d_alpha) - 1) (axis rotation, Anderson eqs. 1.1-1.2).
    e = 0.3
    y = model({**x, "lift_interference_correction": e})
    r = e * d_alpha
    assert float(y["drag_coefficient"]) - CD == pytest.approx(
        -CL * math.sin(r) + CD * (math.cos(r) - 1.0), rel=1e-9)
    # A solid-blockage correction 20 % short: the true Mach at the model is higher than the
    # data system says, and the loads with it: CD_red = CD q_true / q_recorded.
    y = model({**x, "solid_blockage_correction": 0.2})
    q_ratio = float(y["dynamic_pressure"]) / float(y["dynamic_pressure_indicated"])
    assert float(y["drag_coefficient"]) == pytest.approx(CD * q_ratio, rel=1e-9)
    assert q_ratio > 1.0


def test_given_blockage_is_taken_as_it_stands():
    # Ventilated walls: eps as given at the test condition, no compressible factor.
    text = STUDY.replace('model_volume = "0.0012 m^3"\nshape_factor = 0.9\n',
                         'solid_blockage = 0.002\nwake_blockage = 0.0005\n')
    _, _, sp = _prepared(text)
    m_u = optimize.brentq(lambda m: m * (1 + (1 + 0.2 * m * m) * 0.0025) - M_FULL, 0.3, 0.5,
                          xtol=1e-14)
    assert sp.nominal["mach"] == pytest.approx(m_u, abs=2e-7)
    assert sp.outputs["blockage"] == pytest.approx(0.0025, rel=1e-12)


@pytest.mark.parametrize("old, new, key", [
    ('test_section_area = "1.5 m^2"\n', "", "facility.test_section_area"),
    ('model_volume = "0.0012 m^3"\nshape_factor = 0.9\n', "", "measurement.walls.model_volume"),
    ("boundary_factor = 0.125", 'boundary_factor = 0.125\nblockage_uncertainty = "150 %"',
     "measurement.walls.blockage_uncertainty"),
])
def test_wall_mistakes_are_refused(old, new, key):
    with pytest.raises(StudyError) as err:
        parse_study(tomllib.loads(STUDY.replace(old, new)))
    assert err.value.key == key


LIQUID = """
title = "water tunnel with walls (invented inputs)"
[full_scale]
fluid = "fresh_water"
static_temperature = "15 degC"
speed = "8 m/s"
reference_length = "2 m"
static_pressure = "150 kPa"
[facility]
fluid = "fresh_water"
temperature = "20 degC"
speed_range = ["1 m/s", "12 m/s"]
static_pressure = "120 kPa"
test_section_area = "0.5 m^2"
[model]
scale = 0.1
[match]
solve_for = "speed"
reynolds = { tolerance = "50 %" }
[measurement]
lift_coefficient = 0.3
drag_coefficient = 0.02
pitching_moment_coefficient = -0.02
reference_area = "0.02 m^2"
[measurement.balance]
normal_force = "2 kN"
axial_force = "200 N"
pitching_moment = "100 N*m"
[measurement.walls]
solid_blockage = 0.01
wake_blockage = 0.002
"""


def test_liquid_walls_keep_the_total_head():
    # A liquid: the model sees U (1 + eps) and, the total head p + rho U^2 / 2 being kept
    # (Bernoulli), a static pressure lower by rho/2 (U_c^2 - U_u^2): the cavitation number at the
    # model follows from that pressure.
    study = parse_study(tomllib.loads(LIQUID))
    sp = solve(study)
    model = build_model(study)
    free = build_model(parse_study(tomllib.loads(LIQUID.replace(
        "[measurement.walls]\nsolid_blockage = 0.01\nwake_blockage = 0.002\n", ""))))
    y, y0 = model(dict(sp.nominal)), free(dict(sp.nominal))
    u_u = float(y["speed_uncorrected"])
    assert float(y0["speed"]) == pytest.approx(u_u, rel=1e-12)
    assert float(y["speed"]) == pytest.approx(u_u * 1.012, rel=1e-12)
    rho = float(y0["density"])
    drop = 0.5 * rho * (float(y["speed"]) ** 2 - u_u**2)
    assert float(y["static_pressure"]) == pytest.approx(float(y0["static_pressure"]) - drop,
                                                        rel=1e-9)
    # the stagnation pressure is unchanged (to the density change of water over that drop)
    assert float(y["stagnation_pressure"]) == pytest.approx(float(y0["stagnation_pressure"]),
                                                            rel=1e-6)
