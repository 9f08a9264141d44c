"""``[measurement.scale_effect] method = "table"``: a coefficient read from a table C(Re) or
C(M, Re), linear in log10 Re (and in M), continued along the end segments beyond the table.

Check values: ``numpy.interp`` (piecewise-linear interpolation, numpy reference) on log10 Re;
``scipy.interpolate.RegularGridInterpolator(..., method="linear")`` (bilinear interpolation on a
rectilinear grid, scipy reference; with ``fill_value=None`` it extrapolates, scipy
documentation); the straight line through two points, y = y0 + (x - x0) (y1 - y0) / (x1 - x0),
and the bilinear form on one grid cell, written out here by hand; the rectangular distribution
of half-width a has the standard deviation a / sqrt(3) (JCGM 100:2008 (GUM), 4.3.7; from memory
of that document).  The tables and studies are invented (inputs, never check values); the
bad-input contract (StudyError naming the key, exit code 2 with one line) is simunc's own.
"""

from __future__ import annotations

import math
import tomllib

import numpy as np
import pytest
from scipy.interpolate import RegularGridInterpolator

from simunc.cli import main
from simunc.errors import StudyError
from simunc.physics.friction import tabulated
from simunc.pipeline import prepare
from simunc.study.readers import parse_study
from tests import test_scale_effect as scale_effect

# The study of tests/test_scale_effect.py (invented inputs) with a table in place of the
# friction line.  At its set point (4 bar, Mach 0.78) Re_model is about 8e6 and the flight
# Re_full about 1.9e7: both inside the table below.
BASE = scale_effect.STUDY.replace(
    'method = "friction_line"\nline = "ittc_1957"\nform_factor = 0.3\nwetted_ratio = 5.5\n'
    'compare = ["prandtl_schlichting"]', "SCALE")
assert "SCALE" in BASE

RE_1D = [1e6, 3e6, 1e7, 3e7, 1e8]
CD_1D = [0.034, 0.031, 0.0285, 0.0268, 0.0255]
TABLE_1D = (f'method = "table"\nreynolds = {RE_1D}\ndrag_coefficient = {CD_1D}')
MACH_2D = [0.6, 0.7, 0.8, 0.9]
CD_2D = [[0.0330, 0.0301, 0.0280, 0.0266, 0.0254],
         [0.0336, 0.0306, 0.0284, 0.0270, 0.0257],
         [0.0352, 0.0321, 0.0297, 0.0281, 0.0268],
         [0.0395, 0.0362, 0.0334, 0.0316, 0.0301]]
TABLE_2D = (f'method = "table"\nreynolds = {RE_1D}\nmach = {MACH_2D}\n'
            f'drag_coefficient = {CD_2D}')
STATED_CD = 0.027


def study(scale: str) -> str:
    return BASE.replace("SCALE", scale)


def load(scale: str):
    return prepare(parse_study(tomllib.loads(study(scale))))


def interp_1d(re):
    # numpy reference: piecewise-linear interpolation in log10 Re
    return np.interp(np.log10(re), np.log10(RE_1D), CD_1D)


def grid_2d(**kw):
    # scipy reference: bilinear interpolation on the (Mach, log10 Re) grid
    return RegularGridInterpolator((np.array(MACH_2D), np.log10(RE_1D)), np.array(CD_2D),
                                   method="linear", **kw)


# ---- friction.tabulated ------------------------------------------------------------------


def test_tabulated_1d_matches_numpy_interp_inside_the_table():
    # Unevenly spaced in log10 Re on purpose; many points at once (a trials vector), the
    # entries themselves included.
    reynolds = np.array([2e5, 5e5, 3e6, 1e7, 8e7])
    values = np.array([0.052, 0.044, 0.0335, 0.0297, 0.0262])
    rng = np.random.default_rng(11)
    re = np.concatenate([10 ** rng.uniform(np.log10(2e5), np.log10(8e7), 5000), reynolds])
    got = tabulated(reynolds, values, re)
    ref = np.interp(np.log10(re), np.log10(reynolds), values)  # numpy reference
    assert got.shape == re.shape
    np.testing.assert_allclose(got, ref, rtol=1e-12, atol=1e-15)
    # the shape of a 2-D array of trials is kept
    grid = re[:5000].reshape(50, 100)
    np.testing.assert_allclose(tabulated(reynolds, values, grid),
                               np.interp(np.log10(grid), np.log10(reynolds), values),
                               rtol=1e-12, atol=1e-15)


def test_tabulated_1d_continues_the_end_segments_beyond_the_table():
    reynolds = np.array([2e5, 5e5, 3e6, 1e7, 8e7])
    values = np.array([0.052, 0.044, 0.0335, 0.0297, 0.0262])
    lg = np.log10(reynolds)
    below = np.array([1e3, 1e4, 5e4, 1.99e5])
    above = np.array([8.01e7, 2e8, 1e9, 1e11])
    # hand-written straight line through the two end entries: y0 + (x - x0)(y1 - y0)/(x1 - x0)
    low = values[0] + (np.log10(below) - lg[0]) * (values[1] - values[0]) / (lg[1] - lg[0])
    high = values[-2] + (np.log10(above) - lg[-2]) * (values[-1] - values[-2]) / (lg[-1] - lg[-2])
    np.testing.assert_allclose(tabulated(reynolds, values, below), low, rtol=1e-12)
    np.testing.assert_allclose(tabulated(reynolds, values, above), high, rtol=1e-12)
    # numpy.interp would hold the end value instead: the continuation really differs from it
    assert np.all(np.abs(tabulated(reynolds, values, below[:2]) - values[0]) > 1e-3)
    # by hand: 0.030 at 1e6, 0.026 at 1e7, i.e. -0.004 per decade; a decade beyond each end
    # gives 0.034 at 1e5 and 0.022 at 1e8
    assert float(tabulated([1e6, 1e7], [0.030, 0.026], 1e5)) == pytest.approx(0.034, rel=1e-12)
    assert float(tabulated([1e6, 1e7], [0.030, 0.026], 1e8)) == pytest.approx(0.022, rel=1e-12)


def test_tabulated_2d_matches_scipy_regular_grid_interpolator():
    rng = np.random.default_rng(7)
    values = np.array(CD_2D)
    n = 20_000
    m = rng.uniform(MACH_2D[0], MACH_2D[-1], n)
    re = 10 ** rng.uniform(6.0, 8.0, n)
    got = tabulated(RE_1D, values, re, mach=MACH_2D, at_mach=m)
    ref = grid_2d()(np.column_stack([m, np.log10(re)]))  # scipy reference
    assert got.shape == (n,)
    np.testing.assert_allclose(got, ref, rtol=1e-12, atol=1e-15)
    # one Mach number for every Reynolds number (broadcast)
    np.testing.assert_allclose(
        tabulated(RE_1D, values, re[:100], mach=MACH_2D, at_mach=0.74),
        grid_2d()(np.column_stack([np.full(100, 0.74), np.log10(re[:100])])),
        rtol=1e-12, atol=1e-15)


def test_tabulated_2d_continues_the_end_cells_beyond_the_table():
    # scipy's linear extrapolation (fill_value=None) ...
    rng = np.random.default_rng(3)
    m = rng.uniform(0.3, 1.1, 2000)
    re = 10 ** rng.uniform(5.0, 9.0, 2000)
    got = tabulated(RE_1D, CD_2D, re, mach=MACH_2D, at_mach=m)
    ref = grid_2d(bounds_error=False, fill_value=None)(np.column_stack([m, np.log10(re)]))
    np.testing.assert_allclose(got, ref, rtol=1e-12, atol=1e-15)
    # ... and by hand on the corner cell (M 0.8-0.9, Re 3e7-1e8) at M = 1.0, Re = 1e9:
    # s = (1.0 - 0.8)/0.1 = 2, t = (9 - log10 3e7)/(8 - log10 3e7); bilinear
    # (1-s)(1-t) c00 + (1-s) t c01 + s (1-t) c10 + s t c11
    c00, c01, c10, c11 = CD_2D[2][3], CD_2D[2][4], CD_2D[3][3], CD_2D[3][4]
    s = 2.0
    t = (9.0 - math.log10(3e7)) / (8.0 - math.log10(3e7))
    hand = (1 - s) * (1 - t) * c00 + (1 - s) * t * c01 + s * (1 - t) * c10 + s * t * c11
    assert float(tabulated(RE_1D, CD_2D, 1e9, mach=MACH_2D, at_mach=1.0)) == pytest.approx(
        hand, rel=1e-12)


# ---- the study: the tunnel's drag from the stated full-scale drag ------------------------


@pytest.fixture(scope="module")
def prep_1d():
    return load(TABLE_1D)


def test_reduced_drag_at_the_set_point_1d(prep_1d):
    # Stated CD is the full-scale value; the tunnel's CD = stated + C(Re_model) - C(Re_full),
    # C read by numpy.interp in log10 Re.  No deviation: the full scale is the stated one, so
    # CD_to_full_scale = reduced CD - stated CD.
    y = prep_1d.model(prep_1d.setpoint.nominal)
    re_m, re_f = float(y["reynolds_model"]), float(y["reynolds_full_scale"])
    assert RE_1D[0] < re_m < 0.6 * re_f < re_f < RE_1D[-1]  # inside, and a real gap
    inc = interp_1d(re_m) - interp_1d(re_f)
    assert float(y["drag_coefficient"]) == pytest.approx(STATED_CD + inc, rel=1e-12)
    assert float(y["drag_coefficient_to_full_scale"]) == pytest.approx(inc, rel=1e-9)
    assert inc > 5e-4  # the lower tunnel Reynolds number reads a higher drag
    # no column for lift: the reduced CL is the stated input 0.5 (hand: no law moves it) and
    # there is no full-scale output for it
    assert float(y["lift_coefficient"]) == pytest.approx(0.5, rel=1e-12)
    assert "lift_coefficient_to_full_scale" not in y
    # the set point the study reports agrees
    o = prep_1d.setpoint.outputs
    assert o["drag_coefficient"] == pytest.approx(
        STATED_CD + interp_1d(o["reynolds_model"]) - interp_1d(o["reynolds_full_scale"]),
        rel=1e-12)


def test_a_full_scale_deviation_moves_the_full_scale_value_only_1d(prep_1d):
    # The anchor is the stated full-scale condition: a full-scale temperature deviation moves
    # the true full-scale CD by C(Re_f') - C(Re_f0) (numpy.interp) and leaves the tunnel alone.
    x = dict(prep_1d.setpoint.nominal)
    y0 = prep_1d.model(x)
    y = prep_1d.model({**x, "full_scale_temperature": 8.0})
    re_m = float(y["reynolds_model"])
    re_f0, re_f = float(y0["reynolds_full_scale"]), float(y["reynolds_full_scale"])
    assert abs(re_f / re_f0 - 1.0) > 1e-3
    assert float(y["drag_coefficient"]) == pytest.approx(
        STATED_CD + interp_1d(re_m) - interp_1d(re_f0), rel=1e-12)
    true_full = STATED_CD + interp_1d(re_f) - interp_1d(re_f0)
    assert float(y["drag_coefficient_to_full_scale"]) == pytest.approx(
        float(y["drag_coefficient"]) - true_full, rel=1e-9)


def test_set_point_below_the_table_uses_the_continued_end_segment():
    # Table from 1e7 up: the tunnel's Re (about 8e6) lies below it; hand-written straight
    # line through the first two entries, numpy.interp between them for the flight Re.
    re_t, cd_t = [1e7, 3e7, 1e8], [0.0285, 0.0268, 0.0255]
    prep = load(f'method = "table"\nreynolds = {re_t}\ndrag_coefficient = {cd_t}')
    y = prep.model(prep.setpoint.nominal)
    re_m, re_f = float(y["reynolds_model"]), float(y["reynolds_full_scale"])
    assert re_m < re_t[0] < re_f
    lg = np.log10(re_t)
    c_m = cd_t[0] + (math.log10(re_m) - lg[0]) * (cd_t[1] - cd_t[0]) / (lg[1] - lg[0])
    c_f = float(np.interp(math.log10(re_f), lg, cd_t))
    assert float(y["drag_coefficient"]) == pytest.approx(STATED_CD + c_m - c_f, rel=1e-12)


@pytest.fixture(scope="module")
def prep_2d():
    return load(TABLE_2D)


@pytest.mark.parametrize("mach", [None, 0.74, 0.86])
def test_reduced_drag_2d_matches_regular_grid_interpolator(prep_2d, mach):
    # The tunnel's CD = stated + C(M_model, Re_model) - C(M_full, Re_full), C by scipy's
    # RegularGridInterpolator; at the solved set point (Mach matched) and with the tunnel run
    # at another Mach number (set-point value changed), so that the Mach axis counts.
    x = dict(prep_2d.setpoint.nominal)
    if mach is not None:
        x["mach"] = mach
    y = prep_2d.model(x)
    m_m, m_f = float(y["mach_model"]), float(y["mach_full_scale"])
    re_m, re_f = float(y["reynolds_model"]), float(y["reynolds_full_scale"])
    if mach is not None:
        assert m_m == pytest.approx(mach, rel=1e-9) and abs(m_m - m_f) > 0.03
    f = grid_2d()
    inc = float(f([m_m, math.log10(re_m)])[0] - f([m_f, math.log10(re_f)])[0])
    assert float(y["drag_coefficient"]) == pytest.approx(STATED_CD + inc, rel=1e-12)
    assert float(y["drag_coefficient_to_full_scale"]) == pytest.approx(inc, rel=1e-9)


def test_reduced_drag_2d_over_a_vector_of_trials(prep_2d):
    # Tunnel Mach numbers as a vector of trials, one RegularGridInterpolator call for all.
    x = dict(prep_2d.setpoint.nominal)
    x["mach"] = np.linspace(0.62, 0.88, 27)
    y = prep_2d.model(x)
    f = grid_2d()
    pts_m = np.column_stack([y["mach_model"], np.log10(y["reynolds_model"])])
    pts_f = np.column_stack([y["mach_full_scale"], np.log10(y["reynolds_full_scale"])])
    np.testing.assert_allclose(y["drag_coefficient"], STATED_CD + f(pts_m) - f(pts_f),
                               rtol=1e-12)


# ---- the model-form input ---------------------------------------------------------------


def test_no_uncertainty_no_model_form_input(prep_1d):
    assert not any(i.target == "scale_effect_model" for i in prep_1d.inputs)


def test_uncertainty_adds_one_rectangular_model_form_input():
    prep = load(TABLE_1D + '\nuncertainty = "10 %"')
    form = [i for i in prep.inputs if i.target == "scale_effect_model"]
    assert len(form) == 1
    inp = form[0]
    assert inp.kind == "rectangular"
    assert inp.distribution.support() == pytest.approx((-0.1, 0.1), rel=1e-12)
    # rectangular of half-width a: a / sqrt(3) (GUM 4.3.7, from memory of JCGM 100:2008)
    assert inp.standard_uncertainty == pytest.approx(0.1 / math.sqrt(3.0), rel=1e-12)

    # e = +0.1: the true full-scale CD moves by e (tunnel increment - full-scale increment),
    # so CD_to_full_scale moves by -0.1 (C(Re_m) - C(Re_f)) (increments over the stated full
    # scale; numpy.interp), the reduced tunnel CD not at all.
    x = dict(prep.setpoint.nominal)
    y0 = prep.model(x)
    y = prep.model({**x, "scale_effect_model": 0.1})
    re_m, re_f = float(y0["reynolds_model"]), float(y0["reynolds_full_scale"])
    tunnel_inc = interp_1d(re_m) - interp_1d(re_f)
    full_inc = 0.0
    shift = -0.1 * (tunnel_inc - full_inc)
    assert abs(shift) > 5e-5
    assert float(y["drag_coefficient"]) == pytest.approx(float(y0["drag_coefficient"]),
                                                         rel=1e-15)
    assert float(y["drag_coefficient_to_full_scale"]) == pytest.approx(
        float(y0["drag_coefficient_to_full_scale"]) + shift, rel=1e-9)

    # the same through the problem's input matrix (the model-form column at +0.1)
    names = [i.name for i in prep.inputs]
    col = names.index(inp.name)
    xs = np.zeros((2, len(prep.inputs)))
    xs[1, col] = 0.1
    ys = prep.problem.evaluate(xs)["drag_coefficient_to_full_scale"]
    assert float(ys[1] - ys[0]) == pytest.approx(shift, rel=1e-9)

    # with a full-scale deviation as well the full-scale increment is not zero:
    # shift = -0.1 (C(Re_m) - C(Re_f'))  (increments over C(Re_f0), which cancels)
    x1 = {**x, "full_scale_temperature": 8.0}
    z0, z = prep.model(x1), prep.model({**x1, "scale_effect_model": 0.1})
    re_f1 = float(z0["reynolds_full_scale"])
    tunnel_inc = interp_1d(re_m) - interp_1d(re_f)
    full_inc = interp_1d(re_f1) - interp_1d(re_f)
    assert abs(full_inc) > 1e-6
    assert float(z["drag_coefficient_to_full_scale"]) == pytest.approx(
        float(z0["drag_coefficient_to_full_scale"]) - 0.1 * (tunnel_inc - full_inc), rel=1e-9)


# ---- bad input ---------------------------------------------------------------------------

FRICTION = ('method = "friction_line"\nline = "ittc_1957"\nform_factor = 0.3\n'
            'wetted_ratio = 5.5')
KEY = "measurement.scale_effect."

BAD = {
    "reynolds_decreasing": (
        f'method = "table"\nreynolds = [1e6, 1e7, 3e6, 3e7, 1e8]\ndrag_coefficient = {CD_1D}',
        "reynolds"),
    "reynolds_repeated": (
        f'method = "table"\nreynolds = [1e6, 3e6, 3e6, 3e7, 1e8]\ndrag_coefficient = {CD_1D}',
        "reynolds"),
    "one_reynolds_number": (
        'method = "table"\nreynolds = [1e7]\ndrag_coefficient = [0.028]', "reynolds"),
    "column_too_short": (
        f'method = "table"\nreynolds = {RE_1D}\ndrag_coefficient = {CD_1D[:4]}',
        "drag_coefficient"),
    "column_too_long": (
        f'method = "table"\nreynolds = {RE_1D}\ndrag_coefficient = {CD_1D + [0.025]}',
        "drag_coefficient"),
    "column_not_measured": (
        TABLE_1D + f'\nside_force_coefficient = {[0.0] * 5}', "side_force_coefficient"),
    "uncertainty_with_friction_line": (
        FRICTION + '\nuncertainty = "10 %"', "uncertainty"),
    "friction_key_with_table": (TABLE_1D + "\nwetted_ratio = 5.5", "wetted_ratio"),
    "sensitivity_key_with_table": (TABLE_1D + "\ndrag_per_decade = -0.001", "drag_per_decade"),
    "no_column": (f'method = "table"\nreynolds = {RE_1D}', "drag_coefficient"),
    "2d_too_few_rows": (
        f'method = "table"\nreynolds = {RE_1D}\nmach = {MACH_2D}\n'
        f'drag_coefficient = {CD_2D[:3]}', "drag_coefficient"),
    "2d_too_many_rows": (
        f'method = "table"\nreynolds = {RE_1D}\nmach = {MACH_2D[:3]}\n'
        f'drag_coefficient = {CD_2D}', "drag_coefficient"),
    "2d_flat_column": (
        f'method = "table"\nreynolds = {RE_1D}\nmach = {MACH_2D}\ndrag_coefficient = {CD_1D}',
        "drag_coefficient"),
    "mach_decreasing": (
        f'method = "table"\nreynolds = {RE_1D}\nmach = [0.6, 0.8, 0.7, 0.9]\n'
        f'drag_coefficient = {CD_2D}', "mach"),
}


@pytest.mark.parametrize("name", list(BAD))
def test_bad_table_is_a_study_error_naming_the_key(name):
    scale, key = BAD[name]
    with pytest.raises(StudyError) as info:
        prepare(parse_study(tomllib.loads(study(scale))))
    assert info.value.key == KEY + key


@pytest.mark.parametrize("name", list(BAD))
def test_bad_table_exits_2_with_one_line_naming_the_key(name, tmp_path, capsys):
    scale, key = BAD[name]
    path = tmp_path / "study.toml"
    path.write_text(study(scale))
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1, err
    assert f"'{KEY + key}'" in err[0]
    assert "Traceback" not in err[0]


def test_the_good_tables_pass_the_same_checks(tmp_path, capsys):
    # The bad studies differ from these in the one key only: these load and check clean.
    for scale in (TABLE_1D, TABLE_2D, TABLE_1D + '\nuncertainty = "10 %"', FRICTION):
        path = tmp_path / "study.toml"
        path.write_text(study(scale))
        assert main(["check", str(path)]) == 0, capsys.readouterr().err
