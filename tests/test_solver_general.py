"""The general set-point solver: dynamic-pressure and blockage limits, fluid choice,
weighted least squares, Strouhal and user groups, humidity — against hand calculations.

Hand formulas are those of tests/test_setpoint.py (perfect gas, Sutherland law,
NACA Report 1135 isentropic relations), written independently of simunc.
"""

from __future__ import annotations

import copy
import math

import pytest

from simunc.errors import StudyError
from simunc.similitude.setpoint import build_model, solve
from simunc.study.readers import parse_study

from .test_setpoint import (
    L_FS,
    M_FS,
    P_FS,
    T0,
    T_FS,
    base_study,
    full_scale_re,
    sound_hand,
    tunnel_re,
)


def _solved(d):
    return solve(parse_study(d))


def test_dynamic_pressure_limit_caps_p0():
    # Matching needs p0 = 7.45 bar (q = 212 kPa at Ma 0.78); q_max = 150 kPa caps
    # p0 at q_max / (0.7 M^2 (1 + 0.2 M^2)^-3.5) (q = gamma p M^2 / 2, NACA 1135 eq. 44).
    d = base_study()
    d["facility"]["max_dynamic_pressure"] = "150 kPa"
    sp = _solved(d)
    p0_cap = 1.5e5 / (0.7 * M_FS**2 * (1 + 0.2 * M_FS**2) ** -3.5)
    assert sp.outputs["dynamic_pressure"] == pytest.approx(1.5e5, rel=1e-9)
    assert sp.nominal["stagnation_pressure"] == pytest.approx(p0_cap, rel=1e-9)
    assert sp.outputs["mach_model"] == pytest.approx(M_FS, abs=1e-9)
    re_fs = full_scale_re(P_FS, T_FS, M_FS, L_FS)
    assert sp.reynolds_shortfall == pytest.approx(tunnel_re(p0_cap, T0, M_FS, 0.2) / re_fs - 1, rel=1e-6)
    assert not sp.feasible and any(b.startswith("dynamic_pressure max") for b in sp.binding)


def test_blockage_limits_the_solved_model_size():
    # Frontal area 40 m^2 at full scale, test section 2 m^2, blockage <= 1 %:
    # A_model = 40 s^2 <= 0.02 m^2, so L_max = 3.2 m * sqrt(0.02 / 40).
    d = base_study()
    d["facility"].update(test_section_area="2 m^2", max_blockage="1 %", stagnation_pressure="2 bar")
    d["facility"].pop("max_model_reference_length")
    d["full_scale"]["frontal_area"] = "40 m^2"
    d["model"] = {}
    d["match"]["solve_for"] = "model_scale"
    sp = _solved(d)
    l_max = L_FS * math.sqrt(0.02 / 40.0)
    assert sp.nominal["model_length"] == pytest.approx(l_max, rel=1e-12)
    re_fs = full_scale_re(P_FS, T_FS, M_FS, L_FS)
    assert sp.required_values["model_length"] == pytest.approx(
        re_fs / tunnel_re(2.0e5, T0, M_FS, 1.0), rel=1e-8)   # Re proportional to L
    assert not sp.feasible


def test_weighted_least_squares_compromise_of_equal_priority_groups():
    # Two groups on one unknown (speed at fixed p0): with ln Re and ln Ma both rising with the
    # Mach number, the optimum of (ln Re_ratio / tR)^2 + (dMa / tM)^2 has zero derivative:
    # (ln Re_ratio / tR^2) dlnRe/dM + (dMa / tM^2) = 0, checked here by a central difference
    # of the hand Reynolds number.
    d = base_study()
    d["facility"]["stagnation_pressure"] = "5 bar"
    d["match"]["solve_for"] = "mach"
    d["match"]["mach"]["priority"] = 2
    sp = _solved(d)
    assert sp.method == "least squares"
    m = sp.outputs["mach_model"]
    re_fs = full_scale_re(P_FS, T_FS, M_FS, L_FS)
    h = 1e-6
    dlnre = (math.log(tunnel_re(5e5, T0, m + h, 0.2)) - math.log(tunnel_re(5e5, T0, m - h, 0.2))) / (2 * h)
    ln_ratio = math.log(tunnel_re(5e5, T0, m, 0.2) / re_fs)
    grad = ln_ratio / 0.02**2 * dlnre + (m - M_FS) / 0.002**2
    assert abs(grad) < 1e-4 * (abs(ln_ratio) / 0.02**2 * dlnre)
    assert 0.0 < m - M_FS and ln_ratio < 0.0   # a compromise: both groups off


def test_strouhal_solves_the_model_frequency():
    # St = f L / U equal: f_model = f_full (L_full / L_model) (U_model / U_full).
    d = base_study()
    d["full_scale"]["frequency"] = "2 Hz"
    d["match"]["strouhal"] = {"tolerance": "1 %"}
    sp = _solved(d)
    assert "frequency" in sp.solve_for and sp.feasible
    u_fs = M_FS * sound_hand(T_FS)
    f_hand = 2.0 * (L_FS / 0.2) * (sp.outputs["speed"] / u_fs)
    assert sp.nominal["frequency"] == pytest.approx(f_hand, rel=1e-9)


def test_custom_group_equals_builtin_reynolds():
    d = base_study()
    d["match"]["custom"] = {"rho_u_l_over_mu": {
        "powers": {"density": 1, "speed": 1, "length": 1, "viscosity": -1},
        "tolerance": "2 %", "solve": False}}
    sp = _solved(d)
    assert sp.outputs["rho_u_l_over_mu_ratio"] == pytest.approx(sp.outputs["reynolds_ratio"], rel=1e-12)
    assert sp.outputs["rho_u_l_over_mu_model"] == pytest.approx(sp.outputs["reynolds_model"], rel=1e-12)


def test_custom_group_must_be_dimensionless():
    d = base_study()
    d["match"]["custom"] = {"bad": {"powers": {"density": 1, "speed": 1}, "tolerance": "2 %"}}
    with pytest.raises(StudyError, match="match.custom.bad.powers"):
        parse_study(d)


def test_more_unknowns_than_groups_rejected():
    d = base_study()
    d["facility"]["stagnation_temperature_range"] = ["100 K", "320 K"]
    d["facility"].pop("stagnation_temperature")
    d["match"]["solve_for"] = ["stagnation_pressure", "stagnation_temperature"]
    with pytest.raises(StudyError, match="no more unknowns than solved groups"):
        parse_study(d)


def test_working_gas_chosen_among_candidates():
    # Dry air (perfect gas) and real-gas nitrogen need different p0 for the same Reynolds number;
    # with the facility maximum between the two, only one candidate is feasible and is chosen.
    d = base_study()
    need = {}
    for gas in ("dry_air", "nitrogen"):
        one = copy.deepcopy(d)
        one["facility"]["gas"] = gas
        need[gas] = _solved(one).nominal["stagnation_pressure"]
    lo, hi = sorted(need.values())
    d["facility"]["gas"] = ["dry_air", "nitrogen"]
    d["facility"]["stagnation_pressure_range"] = ["0.5 bar", f"{(lo + hi) / 2} Pa"]
    d["match"]["solve_for"] = ["stagnation_pressure", "gas"]
    sp = _solved(d)
    cheaper = min(need, key=need.get)
    assert sp.fluid == cheaper and sp.feasible
    assert {a["fluid"]: a["feasible"] for a in sp.alternatives} == {
        cheaper: True, max(need, key=need.get): False}


def test_humidity_from_dew_point():
    # Dew point 0 degC at 101 325 Pa: p_sv = 611.2 Pa (from memory of the IAPWS-95 saturation
    # table) and enhancement factor f = 1.0040 (from memory of Picard et al. 2008), so
    # x_v = f p_sv / p = 0.006056. (A 10 degC dew point condenses in the Mach 0.78 test
    # section, and simunc says so: the static state is supersaturated.)
    d = base_study()
    d["full_scale"]["static_pressure"] = "5000 Pa"   # keeps p0 inside the moist-air model's 2 bar
    dry_d = copy.deepcopy(d)
    d["facility"].update(gas="moist_air", humidity={"dew_point": "0 degC", "at_pressure": "1 atm"})
    study = parse_study(d)
    assert study.facility.gas.vapour_mole_fraction == pytest.approx(1.0040 * 611.2 / 101_325.0, rel=1e-3)
    sp = solve(study, build_model(study))
    assert sp.feasible
    # A 0 degC dew point moves the matched p0 by a fraction of a percent: lighter gas (R up) and
    # lower viscosity act in opposite directions (common practice, no source: "below 1 %").
    dry = _solved(dry_d)
    change = sp.nominal["stagnation_pressure"] / dry.nominal["stagnation_pressure"] - 1.0
    assert 1e-4 < abs(change) < 1e-2


def test_condensing_humidity_is_reported():
    d = base_study()
    d["full_scale"]["static_pressure"] = "5000 Pa"
    d["facility"].update(gas="moist_air", humidity={"dew_point": "10 degC", "at_pressure": "1 atm"})
    with pytest.raises(StudyError, match="facility.humidity.*condense"):
        _solved(d)


@pytest.mark.parametrize("name", ["arven_cruise", "arven_cruise_low_pressure", "halden_cryogenic",
                                  "saltmarsh_towing_tank"])
def test_no_target_shares_a_name_with_a_model_input(name):
    # A deviation key equal to a nominal key would overwrite the nominal value (simunc contract).
    from simunc.similitude.setpoint import nominal_state
    from simunc.study.catalogue import TARGETS
    from simunc.study.readers import load_study

    from .conftest import ROOT

    study = load_study(ROOT / "studies" / f"{name}.toml")
    assert not set(TARGETS) & set(nominal_state(study))


def test_stated_property_uncertainty_as_an_input(demo_dict):
    from simunc.physics.fluids import AIR
    from simunc.similitude.inputs import build_inputs

    demo_dict.pop("correlations", None)
    demo_dict["uncertain"] = [{"name": "mu model", "perturbs": "viscosity_model",
                               "distribution": "normal", "standard_uncertainty": "stated"}]
    study = parse_study(demo_dict)
    (inp,) = build_inputs(study.inputs, solve(study))
    assert inp.standard_uncertainty == pytest.approx(float(AIR.stated_uncertainty["viscosity"]), rel=1e-5)
    assert inp.spec.text.startswith("stated")
    demo_dict["uncertain"][0]["perturbs"] = "model_reference_length"
    with pytest.raises(StudyError, match="'stated' only"):
        parse_study(demo_dict)


def test_perfect_gas_air_refused_at_cryogenic_states():
    # Perfect-gas air at a 92 K static state errs by ~7 % in density against reference air
    # (measured in the review with CoolProp); the model refuses states below 150 K.
    d = base_study()
    d["facility"].pop("stagnation_temperature")
    d["facility"]["stagnation_temperature_range"] = ["100 K", "110 K"]
    d["facility"]["stagnation_pressure"] = "4.3 bar"
    d["match"]["solve_for"] = "stagnation_temperature"
    with pytest.raises(StudyError, match="outside 150 .. 1000 K"):
        _solved(d)
