"""Test matrices: shared, random and drifting errors over the points; increments and slopes.

Check values, all from outside the project:
- an upflow (or attitude) error d_alpha moves the reduced drag by CL sin(d_alpha) + CD
  (cos(d_alpha) - 1) and the lift by -CD sin(d_alpha) + CL (cos(d_alpha) - 1): the rotation of
  J. D. Anderson, Fundamentals of Aerodynamics, eqs. 1.1-1.2.  Two configurations with the same
  CL see the same drag shift from a shared d_alpha, which cancels exactly in their increment;
  a random one (independent at each point) adds in quadrature: u^2 = u_A^2 + u_B^2 (JCGM 100
  5.1.2 with zero correlation);
- the variance of a least-squares slope b = sum a_i y_i, a_i = (x_i - mean x) / S_xx, with
  independent errors of sigma_i: sum a_i^2 sigma_i^2 (N. R. Draper, H. Smith, Applied Regression
  Analysis, 3rd ed., Wiley, 1998, section 1.4; from memory of that book);
- a first-order autoregression z_k = rho z_(k-1) + sqrt(1 - rho^2) e_k has lag-k correlation
  rho^k (G. E. P. Box, G. M. Jenkins, Time Series Analysis, AR(1); from memory of that book).
The studies are invented (inputs, not check values).
"""

from __future__ import annotations

import math
import tomllib

import numpy as np
import pytest
from scipy import special

from simunc.errors import StudyError
from simunc.matrix import engine
from simunc.matrix.draws import point_uniforms
from simunc.matrix.execute import run_matrix
from simunc.matrix.points import point_study
from simunc.similitude.prepared import prepare
from simunc.study.readers import parse_study
from simunc.uncertainty.sampling import InputSampler
from tests import test_scale_effect as scale_effect

# The invented study of test_scale_effect without its scale effect and inputs, in a tunnel that
# reaches 9 bar with a 200 mm model.
BASE = scale_effect.STUDY.split("[measurement.scale_effect]")[0].replace(
    '"4 bar"', '"9 bar"').replace('"160 mm"', '"200 mm"') + "[run]\nseed = 11\n"
assert '"9 bar"' in BASE and '"200 mm"' in BASE

INCREMENT = BASE + """
[matrix]
combine = "list"
trials = 20000
[[matrix.point]]
configuration = "clean"
lift_coefficient = 0.5
drag_coefficient = 0.027
[[matrix.point]]
configuration = "pods"
lift_coefficient = 0.5
drag_coefficient = 0.029
[[matrix.increment]]
name = "pod drag"
output = "drag_coefficient"
axis = "configuration"
minuend = "pods"
subtrahend = "clean"
[[uncertain]]
name = "upflow"
perturbs = "flow_angularity"
standard_uncertainty = "0.02 deg"
"""


def _matrix(text: str, workers: int = 0):
    st = parse_study(tomllib.loads(text))
    prep = prepare(st)
    return st, run_matrix(st, prep.setpoint.nominal, st.run.seed, workers=workers)


def test_a_shared_error_cancels_in_an_increment():
    st, mx = _matrix(INCREMENT)
    d = mx.derived[0]
    u_point = [float(p.statistics.loc["drag_coefficient", "u"]) for p in mx.points]
    # each point: CL d_alpha, u = 0.5 x 0.02 deg (small angle)
    for u in u_point:
        assert u == pytest.approx(0.5 * math.radians(0.02), rel=0.02)
    # same CL in both configurations: the increment keeps only (CD_A - CD_B)(cos d_alpha - 1),
    # second order: 0.002 x (3.5e-4)^2 / 2, about 1e-10 against the points' 1.7e-4
    assert d.u < 2e-6 * u_point[0]
    assert d.nominal == pytest.approx(0.002, abs=1e-12)
    assert d.u_lpu < 1e-3 * u_point[0]


def test_a_random_error_adds_in_quadrature():
    text = INCREMENT.replace('standard_uncertainty = "0.02 deg"',
                             'standard_uncertainty = "0.02 deg"\ncomponent = "random"')
    st, mx = _matrix(text)
    d = mx.derived[0]
    u_a, u_b = (float(p.statistics.loc["drag_coefficient", "u"]) for p in mx.points)
    assert d.u == pytest.approx(math.hypot(u_a, u_b), rel=0.02)
    assert d.u_lpu == pytest.approx(math.sqrt(2.0) * 0.5 * math.radians(0.02), rel=0.01)
    assert d.budget == {"upflow": pytest.approx(1.0)}


POLAR = BASE + """
[matrix]
combine = "list"
trials = 20000
[[matrix.point]]
angle_of_attack = "0 deg"
lift_coefficient = 0.3
[[matrix.point]]
angle_of_attack = "2 deg"
lift_coefficient = 0.5
[[matrix.point]]
angle_of_attack = "4 deg"
lift_coefficient = 0.7
[[matrix.point]]
angle_of_attack = "6 deg"
lift_coefficient = 0.9
[[matrix.slope]]
name = "lift-curve slope"
output = "lift_coefficient"
axis = "angle_of_attack"
[[uncertain]]
name = "normal force repeatability"
perturbs = "normal_force_indication"
standard_uncertainty = "4 N"
component = "random"
"""


def test_slope_over_a_polar_has_the_least_squares_variance():
    st, mx = _matrix(POLAR)
    d = mx.derived[0]
    alpha = np.radians([0.0, 2.0, 4.0, 6.0])
    a = (alpha - alpha.mean()) / ((alpha - alpha.mean()) ** 2).sum()
    # a normal-force error e reads as lift e cos(alpha) (Anderson eqs. 1.1-1.2): sigma_i =
    # 4 N cos(alpha_i) / (q S), q of the (common) set point
    q = mx.points[0].setpoint["dynamic_pressure"]
    assert all(p.setpoint["dynamic_pressure"] == pytest.approx(q, rel=1e-9) for p in mx.points)
    sigma = 4.0 * np.cos(alpha) / (q * 0.05)
    expected = math.sqrt(float((a ** 2 * sigma ** 2).sum()))
    assert d.u == pytest.approx(expected, rel=0.02)
    assert d.u_lpu == pytest.approx(expected, rel=0.01)
    assert d.nominal == pytest.approx(0.2 / math.radians(2.0), rel=1e-9)  # 0.1 per degree


def test_drift_is_a_first_order_autoregression():
    systematic = np.array([False, False])
    us = [point_uniforms(3, 40_000, systematic, i, tuple(range(i)), {0: 0.7})
          for i in range(3)]
    z = [special.ndtri(u[:, 0]) for u in us]
    assert float(np.corrcoef(z[0], z[1])[0, 1]) == pytest.approx(0.7, abs=0.01)
    assert float(np.corrcoef(z[0], z[2])[0, 1]) == pytest.approx(0.49, abs=0.01)
    assert float(np.std(z[2])) == pytest.approx(1.0, abs=0.01)
    # the column that does not drift is independent from point to point
    assert abs(float(np.corrcoef(us[0][:, 1], us[1][:, 1])[0, 1])) < 0.02


def test_drift_enters_the_slope_budget_with_its_correlation():
    text = POLAR + """
[[matrix.drift]]
input = "normal force repeatability"
correlation = 0.9
"""
    st, mx = _matrix(text)
    d = mx.derived[0]
    alpha = np.radians([0.0, 2.0, 4.0, 6.0])
    a = (alpha - alpha.mean()) / ((alpha - alpha.mean()) ** 2).sum()
    q = mx.points[0].setpoint["dynamic_pressure"]
    w = a * 4.0 * np.cos(alpha) / (q * 0.05)
    lag = np.abs(np.arange(4)[:, None] - np.arange(4)[None, :])
    expected = math.sqrt(float(w @ (0.9 ** lag) @ w))  # JCGM 100 5.2.2 with rho^|i-k|
    assert d.u_lpu == pytest.approx(expected, rel=0.01)
    assert d.u == pytest.approx(expected, rel=0.03)


def test_point_statistics_agree_with_the_point_run_as_a_study():
    # the matrix changes which draws a point takes, not its distribution: u of each point
    # against the same study run alone (its own sampler and seed), within Monte Carlo error
    st, mx = _matrix(POLAR)
    for p in (mx.points[0], mx.points[3]):
        alone = prepare(point_study(st, st.matrix.points[p.index], {}))
        x = InputSampler(alone.problem.distributions, 99, "random", None, 20_000).draw(0, [20_000])
        y = alone.problem.evaluate(x)
        u = float(np.std(y["lift_coefficient"], ddof=1))
        assert float(p.statistics.loc["lift_coefficient", "u"]) == pytest.approx(u, rel=0.04)
        assert float(p.statistics.loc["lift_coefficient", "nominal"]) == pytest.approx(
            float(alone.setpoint.outputs["lift_coefficient"]), rel=1e-12)


def test_a_failed_point_is_reported_not_lost(monkeypatch):
    st = parse_study(tomllib.loads(POLAR))
    real = engine.prepare

    def failing(study, *args, **kwargs):
        if study.measurement.angle_of_attack > math.radians(5.0):
            raise StudyError("facility", "a state outside the model", "a reachable state")
        return real(study, *args, **kwargs)

    monkeypatch.setattr(engine, "prepare", failing)
    mx = run_matrix(st, prepare(st).setpoint.nominal, 1, workers=0)
    assert [p.ok for p in mx.points] == [True, True, True, False]
    assert "outside the model" in mx.points[3].error
    assert mx.table.loc[3, "error"] and not mx.table.loc[0, "error"]
    assert mx.derived == ()  # a slope missing one of its points is not formed


@pytest.mark.slow
def test_bit_identical_whatever_the_number_of_workers():
    text = POLAR.replace("trials = 20000", "trials = 2000") + """
[[uncertain]]
name = "upflow"
perturbs = "flow_angularity"
standard_uncertainty = "0.02 deg"
"""
    st = parse_study(tomllib.loads(text))
    nominal = prepare(st).setpoint.nominal
    runs = [run_matrix(st, nominal, 5, workers=w) for w in (0, 1, 2, 4)]
    # and on a scheduler that was already running (--scheduler ADDRESS)
    from dask.distributed import LocalCluster

    with LocalCluster(n_workers=2, threads_per_worker=1, dashboard_address=None) as cluster:
        on_scheduler = run_matrix(st, nominal, 5, scheduler=cluster.scheduler_address)
    assert on_scheduler.scheduler.startswith("scheduler ") and on_scheduler.workers == 2
    runs.append(on_scheduler)
    first = runs[0]
    for other in runs[1:]:
        for a, b in zip(first.points, other.points):
            assert a.statistics.equals(b.statistics)
            assert a.samples["lift_coefficient"].tobytes() == b.samples["lift_coefficient"].tobytes()
        assert first.derived_table.equals(other.derived_table)
    assert [r.workers for r in runs] == [0, 1, 2, 4, 2]


@pytest.mark.parametrize("old, new, key", [
    ('minuend = "pods"', 'minuend = "wing"', "matrix.increment[0].minuend"),
    ('axis = "configuration"', 'axis = "mach"', "matrix.increment[0].axis"),
    ('combine = "list"', 'combine = "list"\nhold = ["speed"]', "matrix.hold[0]"),
    ('configuration = "pods"', 'configuration = "pods"\nside_force_coefficient = 0.1',
     "matrix.point[1]"),
])
def test_matrix_mistakes_are_refused(old, new, key):
    assert old in INCREMENT
    with pytest.raises(StudyError) as info:
        parse_study(tomllib.loads(INCREMENT.replace(old, new, 1)))
    assert info.value.key.startswith(key)


@pytest.mark.slow
def test_requirements_are_met_at_the_hardest_point_and_then_everywhere():
    # A shared upflow error moves the drag by about CL d_alpha (Anderson eqs. 1.1-1.2), so the
    # hardest point of a drag requirement is the one of largest CL (6 deg, CL = 0.9), where
    # U(CD) = 1.96 x 0.9 x u(alpha) for a normal error: 0.02 deg gives 6.2 counts, 0.008 deg
    # gives 2.5 counts.  Against 3 counts only the better calibration does, and it then holds
    # at every point (smaller CL, smaller U).
    from simunc.pipeline import run

    text = POLAR.replace("trials = 20000", "trials = 4000") + """
[[uncertain]]
name = "upflow"
perturbs = "flow_angularity"
expanded_uncertainty = "0.04 deg"
coverage_factor = 2
grades = [{ name = "as is", expanded_uncertainty = "0.04 deg", price = 0 },
          { name = "recalibrated", expanded_uncertainty = "0.016 deg", price = 1000 }]
[[requirement]]
output = "drag_coefficient"
expanded_uncertainty = "3 counts"
[design]
trials = 20000
verify_trials = 40000
"""
    st = parse_study(tomllib.loads(text))
    result = run(st, trials=20_000, workers=0)
    wd = result.matrix_decision
    assert wd is not None and wd.point == 3  # 6 deg, the largest CL
    worst = result.matrix.points[3].checks[0]
    assert worst.value == pytest.approx(1.96 * 0.9 * math.radians(0.02), rel=0.05)
    assert not worst.met
    a = wd.allocation
    assert a is not None and not a.message and a.cost == 1000.0
    assert a.grades == {"upflow": "recalibrated"}
    assert wd.met_everywhere


def test_correlated_shared_errors_enter_the_increment_budget_with_their_cross_term():
    # Two systematic axial-force errors in % of reading, correlated r = 0.6: the reduced drag of
    # a point moves by (e1 + e2) A cos(alpha) / (q S) with A = (CD cos a - CL sin a) q S (Anderson
    # eqs. 1.1-1.2), so the increment of two points of equal CL moves by (e1 + e2) dCD cos^2 a,
    # u = dCD cos^2 a sqrt(u1^2 + u2^2 + 2 r u1 u2) (JCGM 100 5.2.2).
    text = INCREMENT.replace('''[[uncertain]]
name = "upflow"
perturbs = "flow_angularity"
standard_uncertainty = "0.02 deg"''', '''[[uncertain]]
name = "axial A"
perturbs = "axial_force_indication"
standard_uncertainty = "0.5 %"
[[uncertain]]
name = "axial B"
perturbs = "axial_force_indication"
standard_uncertainty = "0.3 %"
[correlations]
pairs = [["axial A", "axial B", 0.6]]''')
    st, mx = _matrix(text)
    d = mx.derived[0]
    c2 = math.cos(math.radians(2.0)) ** 2
    expected = 0.002 * c2 * math.sqrt(0.005 ** 2 + 0.003 ** 2 + 2 * 0.6 * 0.005 * 0.003)
    assert d.u_lpu == pytest.approx(expected, rel=0.01)
    assert d.u == pytest.approx(expected, rel=0.03)


@pytest.mark.parametrize("old, new, key", [
    # a shared error correlated with a per-point one has no single correlation over the points
    ('standard_uncertainty = "0.02 deg"', 'standard_uncertainty = "0.02 deg"\n[[uncertain]]\n'
     'name = "attitude"\nperturbs = "attitude_indication"\nstandard_uncertainty = "0.01 deg"\n'
     'component = "random"\n[correlations]\npairs = [["upflow", "attitude", 0.5]]',
     "correlations"),
    # the points of a list give their own coefficients
    ('combine = "list"', 'combine = "list"\ncoefficients = "polars.csv"', "matrix.coefficients"),
])
def test_matrix_combinations_that_mean_nothing_are_refused(old, new, key):
    with pytest.raises(StudyError) as info:
        parse_study(tomllib.loads(INCREMENT.replace(old, new, 1)))
    assert info.value.key == key


def test_holding_what_an_axis_moves_is_refused():
    text = BASE + """
[matrix]
hold = ["mach"]
[matrix.axes]
mach = [0.74, 0.78]
[[uncertain]]
name = "upflow"
perturbs = "flow_angularity"
standard_uncertainty = "0.02 deg"
"""
    with pytest.raises(StudyError) as info:
        parse_study(tomllib.loads(text))
    assert info.value.key == "matrix.hold[0]"


@pytest.mark.slow
def test_polar_matrix_demo_end_to_end(tmp_path):
    # The demo matrix through the CLI, in process: every point reported, the increment's
    # nominal at each condition the difference of the two configurations' drag in the demo's
    # coefficient file (read here with the csv module), and the hardest drag point at the
    # largest lift of the matrix, since an angle error moves the drag by about CL d_alpha
    # (Anderson eqs. 1.1-1.2).
    import csv
    import json
    from pathlib import Path

    from simunc.cli import main

    root = Path(__file__).resolve().parents[1]
    out = tmp_path / "rep"
    assert main(["run", str(root / "studies" / "corvel_polar_matrix.toml"), "--trials", "4000",
                 "--workers", "0", "--out", str(out)]) == 0
    assert (out / "matrix_uncertainty.png").stat().st_size > 10_000
    doc = json.loads((out / "results.json").read_text())["matrix"]
    assert len(doc["points"]) == 72 and not doc["failed"]
    rows = list(csv.reader(line for line in (root / "studies" / "corvel_polars.csv").read_text()
                           .splitlines() if not line.startswith("#")))[1:]
    drag = {(float(r[0]), float(r[1]), r[2]): float(r[4]) for r in rows}
    lift = {(float(r[0]), float(r[1]), r[2]): float(r[3]) for r in rows}
    for d in doc["derived"]:
        if d["kind"] == "increment":
            mach = float(d["at"].split("mach=")[1].split(",")[0])
            alpha = float(d["at"].split("angle_of_attack=")[1].split(" deg")[0])
            assert d["nominal"] == pytest.approx(drag[(mach, alpha, "nacelles")]
                                                 - drag[(mach, alpha, "clean")], abs=1e-12)
    worst = next(w for w in doc["worst"] if "drag" in w["requirement"])
    p = doc["points"][worst["worst_point"] - 1]
    key = (p["mach"], round(p["angle_of_attack [deg]"], 9), p["configuration"])
    assert lift[key] == pytest.approx(max(lift.values()), abs=0.02)
