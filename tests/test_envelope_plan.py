"""Facility envelope and split-test plan against hand calculations.

Hand formulas (perfect gas, Sutherland) are the independent ones written in
tests/test_setpoint.py; at fixed Mach number and T0 the Reynolds number is
proportional to p0 and to the model length.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from simunc.similitude.envelope import envelope, reynolds_band
from simunc.similitude.setpoint import build_model, solve
from simunc.similitude.testplan import SWEEP_POINTS, plan
from simunc.study.readers import parse_study

from .test_setpoint import (
    L_FS,
    M_FS,
    P_FS,
    T0,
    T_FS,
    base_study,
    full_scale_re,
    tunnel_re,
)


def _infeasible():
    d = base_study()
    d["model"] = {"scale": 0.025}          # needs p0 above the 9 bar maximum
    return parse_study(d)


def test_reynolds_band_edges_are_the_pressure_limits():
    study = _infeasible()
    model = build_model(study)
    x, lo, hi = reynolds_band(study, model, 0.025 * L_FS)
    for m, r_lo, r_hi in zip(x[::10], lo[::10], hi[::10]):
        assert r_lo == pytest.approx(tunnel_re(0.5e5, T0, m, 0.025 * L_FS), rel=1e-9)
        assert r_hi == pytest.approx(tunnel_re(9.0e5, T0, m, 0.025 * L_FS), rel=1e-9)
    assert x[0] == pytest.approx(0.1) and x[-1] == pytest.approx(0.92)


def test_dynamic_pressure_limit_caps_the_band():
    d = base_study()
    d["facility"]["max_dynamic_pressure"] = "150 kPa"
    study = parse_study(d)
    x, lo, hi = reynolds_band(study, build_model(study), 0.2)
    # q = 0.7 p M^2 with p = p0 (p/p0)(M) (NACA 1135 eq. 44 and q/p = gamma M^2/2):
    # the highest p0 at Mach M is min(9 bar, q_max / (0.7 M^2 (1 + 0.2 M^2)^-3.5)).
    for m, r_hi in zip(x[::10], hi[::10]):
        p0_cap = min(9.0e5, 1.5e5 / (0.7 * m**2 * (1 + 0.2 * m**2) ** -3.5))
        assert r_hi == pytest.approx(tunnel_re(p0_cap, T0, m, 0.2), rel=1e-9)


def test_envelope_marks_target_and_largest_model():
    study = _infeasible()
    model = build_model(study)
    env = envelope(study, model, solve(study, model))
    assert env.abscissa == "mach"
    assert env.target == pytest.approx((M_FS, full_scale_re(P_FS, T_FS, M_FS, L_FS)), rel=1e-12)
    assert len(env.bands) == 2  # the chosen model and the largest (0.30 m) the facility takes
    (l1, _, _), (l2, _, hi2) = env.bands.values()
    assert l1 == pytest.approx(0.08) and l2 == pytest.approx(0.30)
    assert np.nanmax(hi2) == pytest.approx(tunnel_re(9.0e5, T0, env.x[-1], 0.30), rel=1e-9)


def test_split_plan_runs_and_extrapolation_ratio():
    study = _infeasible()
    model = build_model(study)
    sp = solve(study, model)
    assert not sp.feasible
    tp = plan(study, model, sp)
    re_fs = full_scale_re(P_FS, T_FS, M_FS, L_FS)
    re_a = tunnel_re(9.0e5, T0, M_FS, 0.025 * L_FS)      # Mach matched at the top pressure
    re_low = tunnel_re(0.5e5, T0, M_FS, 0.025 * L_FS)    # and at the lowest
    a = tp.runs[0]
    assert a.label == "A" and a.state["stagnation_pressure"] == pytest.approx(9.0e5, rel=1e-12)
    assert a.outputs["mach_difference"] == pytest.approx(0.0, abs=1e-12)
    assert tp.reynolds_covered == pytest.approx((re_low, re_a), rel=1e-9)
    assert tp.extrapolation_ratio == pytest.approx(re_fs / re_a, rel=1e-9)
    sweep = [r for r in tp.runs if r.label.startswith("B")]
    assert len(sweep) == SWEEP_POINTS - 1
    expected = np.geomspace(re_low, re_a, SWEEP_POINTS)[:-1]
    np.testing.assert_allclose([r.outputs["reynolds_model"] for r in sweep], expected, rtol=1e-8)
    # Run C: Re matched at a lower Mach number with the 1:40 model needs p0 above 9 bar at every
    # subsonic Mach (Re(9 bar, M = 0.92) < Re_full), so there is none.
    assert tunnel_re(9.0e5, T0, 0.92, 0.025 * L_FS) < re_fs
    assert not [r for r in tp.runs if r.label == "C"]
    assert any("extrapolation ratio" in n for n in tp.notes)


@pytest.mark.slow
def test_split_plan_run_c_when_reynolds_reachable_at_lower_mach():
    # 1:16 model, p0 capped at 7 bar: Re_full needs 7.44 bar at Mach 0.78 (hand), but at 7 bar a
    # higher Mach number reaches it (Re grows with M): run C matches Re at Ma > 0.78.
    d = base_study()
    d["facility"]["stagnation_pressure_range"] = ["0.5 bar", "7 bar"]
    study = parse_study(d)
    model = build_model(study)
    sp = solve(study, model)
    assert not sp.feasible
    tp = plan(study, model, sp)
    c = [r for r in tp.runs if r.label == "C"]
    assert len(c) == 1
    assert c[0].outputs["reynolds_ratio"] == pytest.approx(1.0, abs=1e-6)
    re_fs = full_scale_re(P_FS, T_FS, M_FS, L_FS)
    m_c = c[0].outputs["mach_model"]
    assert tunnel_re(c[0].state["stagnation_pressure"], T0, m_c, 0.2) == pytest.approx(re_fs, rel=1e-6)
    assert m_c > M_FS
    assert not math.isnan(tp.extrapolation_ratio)


def test_no_plan_when_matched():
    study = parse_study(base_study())
    model = build_model(study)
    assert plan(study, model, solve(study, model)).runs == []


def test_a_sweep_that_covers_too_little_is_flagged():
    # An atmospheric tunnel: p0 is the day's barometer (0.95 to 1.03 bar), so a Reynolds sweep at
    # the matched Mach number covers 1.03 / 0.95 = 1.084 of Re (Re proportional to p0 at fixed
    # Mach number and T0: Re = rho U L / mu, rho proportional to p at fixed T), far too little to
    # fit a trend (a factor of two wanted: common practice, no source).
    import tomllib

    text = """
[full_scale]
altitude = "11000 m"
mach = 0.3
reference_length = "3.2 m"
[facility]
gas = "dry_air"
stagnation_temperature = "295 K"
stagnation_pressure_range = ["0.95 bar", "1.03 bar"]
mach_range = [0.05, 0.5]
[model]
scale = 0.1
[match]
solve_for = "stagnation_pressure"
reynolds = { tolerance = "2 %" }
mach = { tolerance = "0.002" }
"""
    study = parse_study(tomllib.loads(text))
    tp = plan(study, build_model(study), solve(study))
    lo, hi = tp.reynolds_covered
    assert hi / lo == pytest.approx(1.03 / 0.95, rel=1e-3)
    assert any("too little to fit a trend" in n for n in tp.notes)
