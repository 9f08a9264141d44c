"""Reynolds (and Mach) dependence of the coefficients: the tunnel's coefficient follows from the
full-scale one through the scale effect, trial by trial.

Check values: the ITTC-1957 line C_F = 0.075 / (log10 Re - 2)^2 (ITTC 1957 model-ship correlation
line) and Prandtl-Schlichting C_F = 0.455 / (log10 Re)^2.58, written out here, with the
form-factor method C_D = (1 + k) C_F S_wet / S_ref (e.g. Raymer, Aircraft Design: A Conceptual
Approach, component build-up; from memory of that book); a sensitivity dC/dlog10 Re by hand.
The study is invented (inputs, not check values).
"""

from __future__ import annotations

import math
import tomllib

import numpy as np
import pytest

from simunc.pipeline import prepare
from simunc.study.readers import parse_study

STUDY = """
title = "scale-effect hand check (invented inputs)"
[full_scale]
altitude = "11000 m"
mach = 0.78
reference_length = "3.2 m"
[facility]
gas = "dry_air"
stagnation_temperature = "305 K"
stagnation_pressure_range = ["0.3 bar", "4 bar"]
mach_range = [0.2, 0.95]
[model]
reference_length = "160 mm"
[match]
solve_for = "stagnation_pressure"
reynolds = { tolerance = "2 %" }
mach = { tolerance = "0.002" }
[measurement]
angle_of_attack = "2 deg"
lift_coefficient = 0.5
drag_coefficient = 0.027
pitching_moment_coefficient = -0.06
reference_area = "0.05 m^2"
[measurement.balance]
normal_force = "20 kN"
axial_force = "1 kN"
pitching_moment = "1 kN*m"
[measurement.scale_effect]
method = "friction_line"
line = "ittc_1957"
form_factor = 0.3
wetted_ratio = 5.5
compare = ["prandtl_schlichting"]
[[uncertain]]
name = "p0 transducer"
perturbs = "stagnation_pressure_indication"
expanded_uncertainty = "0.06 %"
coverage_factor = 2
"""


def ittc(re):
    return 0.075 / (np.log10(re) - 2.0) ** 2


def ps(re):
    return 0.455 / np.log10(re) ** 2.58


@pytest.fixture(scope="module")
def prep():
    return prepare(parse_study(tomllib.loads(STUDY)))


def test_friction_line_bias_of_the_set_point(prep):
    # The facility stops at 4 bar: Re_model < Re_full, so the tunnel's drag is higher by
    # (1 + k) S_wet/S_ref (C_F(Re_model) - C_F(Re_full)), and that is the bias of taking it for
    # the full-scale value.
    o = prep.setpoint.outputs
    re_m, re_f = o["reynolds_model"], o["reynolds_full_scale"]
    assert re_m < 0.5 * re_f
    bias = 1.3 * 5.5 * (ittc(re_m) - ittc(re_f))
    assert o["drag_coefficient"] == pytest.approx(0.027 + bias, rel=1e-12)
    assert o["drag_coefficient_to_full_scale"] == pytest.approx(bias, rel=1e-9)
    assert bias > 0.0 and bias == pytest.approx(0.0027, rel=0.5)  # order of 30 counts here


def test_model_form_input_spans_the_spread_of_the_lines(prep):
    # The compared line's increment differs from the chosen one's by s; the model-form input
    # e in [-1, 1] (rectangular, the default) moves the full-scale value by e s.
    names = [i.name for i in prep.inputs]
    assert names[-1] == "friction-line model form"
    inp = prep.inputs[-1]
    assert inp.standard_uncertainty == pytest.approx(1.0 / math.sqrt(3.0), rel=1e-12)
    o = prep.setpoint.outputs
    re_m, re_f = o["reynolds_model"], o["reynolds_full_scale"]
    s = abs(1.3 * 5.5 * ((ps(re_m) - ps(re_f)) - (ittc(re_m) - ittc(re_f))))
    x = np.zeros((1, len(prep.inputs)))
    x[0, -1] = 1.0
    y = prep.problem.evaluate(x)
    assert float(y["drag_coefficient_to_full_scale"][0]) == pytest.approx(
        o["drag_coefficient_to_full_scale"] - s, rel=1e-9)


def test_sensitivity_method():
    # dCD/dlog10 Re = -0.0015 and dCL/dM = 0.4: CD_tunnel - CD_full = -0.0015 log10(Re_m / Re_f)
    text = STUDY.replace('method = "friction_line"\nline = "ittc_1957"\nform_factor = 0.3\n'
                         'wetted_ratio = 5.5\ncompare = ["prandtl_schlichting"]',
                         'method = "sensitivity"\ndrag_per_decade = -0.0015\nlift_per_mach = 0.4')
    prep = prepare(parse_study(tomllib.loads(text)))
    o = prep.setpoint.outputs
    d_cd = -0.0015 * math.log10(o["reynolds_model"] / o["reynolds_full_scale"])
    d_cl = 0.4 * o["mach_difference"]
    assert o["drag_coefficient_to_full_scale"] == pytest.approx(d_cd, rel=1e-6)
    assert o["lift_coefficient_to_full_scale"] == pytest.approx(d_cl, abs=1e-9)


def test_model_size_trade_gives_the_bias_at_each_size(prep):
    # Each size's set point re-solved: a larger model reaches a higher Reynolds number, so the
    # friction-line bias (1 + k) S_wet/S_ref (C_F(Re_m) - C_F(Re_f)) falls (ITTC 1957 line).
    from simunc.decisions.pretest import scale_trade

    trade = scale_trade(prep, factors=(0.75, 1.0, 1.25), trials=2000)
    bias = trade["drag_bias_to_full_scale"].to_numpy()
    assert np.all(np.diff(bias) < 0.0)
    row = trade.loc[np.isclose(trade["model_length"], 0.16)].iloc[0]
    re_f = prep.setpoint.outputs["reynolds_full_scale"]
    re_m = row["reynolds_ratio"] * re_f
    assert row["drag_bias_to_full_scale"] == pytest.approx(
        1.3 * 5.5 * (ittc(re_m) - ittc(re_f)), rel=1e-9)


def test_a_full_scale_input_moves_the_full_scale_value_only(prep):
    # The tunnel's coefficient depends on the tunnel's Reynolds number only: a full-scale
    # temperature deviation leaves the model's Re and the reduced CD alone and moves the
    # full-scale CD by the ITTC-line increment (1 + k) S_wet/S_ref (C_F(Re_f') - C_F(Re_f)).
    model = prep.model
    x = dict(prep.setpoint.nominal)
    y0, y = model(x), model({**x, "full_scale_temperature": 5.0})
    assert float(y["reynolds_model"]) == pytest.approx(float(y0["reynolds_model"]), rel=1e-15)
    assert float(y["drag_coefficient"]) == pytest.approx(float(y0["drag_coefficient"]),
                                                         rel=1e-15)
    re_f0, re_f = float(y0["reynolds_full_scale"]), float(y["reynolds_full_scale"])
    full_shift = 1.3 * 5.5 * (ittc(re_f) - ittc(re_f0))
    assert float(y["drag_coefficient_to_full_scale"]) == pytest.approx(
        float(y0["drag_coefficient_to_full_scale"]) - full_shift, rel=1e-9)
