"""Recorded (indicated) Re, Ma and q beside the true ones, against hand formulas.

Perfect-gas air, isentropic test section (NACA Report 1135, eqs. 43-45: p = p0 (1 + 0.2 M^2)^-3.5,
T = T0 / (1 + 0.2 M^2), q = (gamma / 2) p M^2); Re = rho U L / mu. The data system reduces the
indicated p0, T0 and Mach number with the nominal model length and fluid model.
"""

from __future__ import annotations

import pytest

from simunc.similitude.setpoint import build_model, solve
from simunc.study.readers import parse_study

from .test_setpoint import base_study


def _model_and_state(mach_from="indication"):
    d = base_study()
    d["facility"]["mach_from"] = mach_from
    study = parse_study(d)
    sp = solve(study)
    return build_model(study), dict(sp.nominal)


def test_no_errors_recorded_equals_true():
    model, x = _model_and_state()
    y = model(x)
    assert float(y["reynolds_indicated"]) == pytest.approx(float(y["reynolds_model"]), rel=1e-12)
    assert float(y["mach_indicated"]) == pytest.approx(float(y["mach_model"]), rel=1e-12)
    assert float(y["dynamic_pressure_error"]) == pytest.approx(0.0, abs=1e-12)


def test_p0_transducer_error_shows_in_the_recorded_q():
    model, x = _model_and_state()
    p0 = x["stagnation_pressure"]
    e = 0.002 * p0                      # the transducer reads 0.2 % high: true p0 = p0_set - e
    y = model({**x, "stagnation_pressure_indication": e})
    # Same Mach number and T0, so q and Re scale with p0: q_rec / q_true = p0 / (p0 - e).
    assert float(y["dynamic_pressure_error"]) == pytest.approx(p0 / (p0 - e) - 1.0, rel=1e-9)
    assert float(y["reynolds_indicated"]) / float(y["reynolds_model"]) == pytest.approx(
        p0 / (p0 - e), rel=1e-9)
    m = x["mach"]
    q_hand = 0.7 * p0 * (1 + 0.2 * m * m) ** -3.5 * m * m   # (gamma/2) p M^2 with the indicated p0
    assert float(y["dynamic_pressure_indicated"]) == pytest.approx(q_hand, rel=1e-12)


def test_mach_calibration_error_is_the_recorded_minus_true_mach():
    model, x = _model_and_state()
    y = model({**x, "mach_indication": 0.003, "mach_control": 0.001})
    # True Ma = set + control - indication error; recorded = set + control.
    assert float(y["mach_indicated"]) == pytest.approx(x["mach"] + 0.001, abs=1e-12)
    assert float(y["mach_indicated"] - y["mach_model"]) == pytest.approx(0.003, abs=1e-12)


def test_model_length_error_is_not_seen_by_the_data_system():
    model, x = _model_and_state()
    y = model({**x, "model_reference_length": 1e-3 * x["model_length"]})
    # Re_true grows with the true chord; the recorded Re uses the nominal one.
    assert float(y["reynolds_model"] / y["reynolds_indicated"]) == pytest.approx(1.001, rel=1e-12)


def test_towing_tank_model_immersed_at_the_scaled_depth():
    # Towing-tank demo: the full-scale reference point 3 m deep, a 1:30 model. Hydrostatics
    # p = p_atm + rho g h (Munson et al., Fundamentals of Fluid Mechanics, eq. 2.7) at h = 3 m / 30;
    # fresh water at 18 degC: rho = 998.6 kg/m^3 (from memory of the IAPWS-95 tables).
    from simunc import load_study

    from .conftest import ROOT

    sp = solve(load_study(ROOT / "studies" / "saltmarsh_towing_tank.toml"))
    h = 3.0 * sp.nominal["model_length"] / 120.0
    assert sp.outputs["static_pressure"] == pytest.approx(101_325.0 + 998.6 * 9.80665 * h, rel=2e-7)
    assert any("below the free surface" in m for m in sp.messages)


def test_explicit_depth_and_pressurised_tunnel():
    import copy

    from .test_solver_priority import WATER_TUNNEL
    import tomllib

    d = tomllib.loads(WATER_TUNNEL)
    sp = solve(parse_study(copy.deepcopy(d)))
    # A tunnel whose static pressure is solved: no hydrostatic head is added by default.
    assert sp.outputs["static_pressure"] == pytest.approx(sp.nominal["static_pressure"], rel=1e-12)
    d["facility"]["depth"] = "0.5 m"
    sp = solve(parse_study(d))
    rho = sp.outputs["density"]
    assert sp.outputs["static_pressure"] - sp.nominal["static_pressure"] == pytest.approx(
        rho * 9.80665 * 0.5, rel=1e-5)  # rho at the surface pressure vs at the model
