"""Requirement solver, allocation, tolerance sweeps and tightening (simunc.decisions.allocation, .tolerances).

Reference results used here, all closed forms outside simunc:

* Linear model y = sum c_i x_i with independent normal x_i ~ N(0, u_i^2): y is normal with
  sigma^2 = sum c_i^2 u_i^2 (JCGM 100:2008, eq. (10), exact for a linear model), so the
  half-length of its probabilistically symmetric 95 % interval is z sigma with
  z = Phi^-1(0.975) (scipy.stats.norm.ppf; 1.96 in JCGM 100:2008, G.1.3), and
  P(|y| <= w) = 2 Phi(w / sigma) - 1.
* Scaling input j's tolerance by s gives sigma(s)^2 = sum_{i != j} v_i + s^2 v_j, v_i = c_i^2 u_i^2.
* Least cost of sum a_i / s_i subject to sum v_i s_i^2 = sigma*^2 (a Lagrange-multiplier
  problem: d/ds_i [a_i / s_i + lambda v_i s_i^2] = 0) gives s_i proportional to
  (a_i / v_i)^(1/3) (derived here).
* Search margin of a U requirement on a normal output: three standard errors of the
  design-minus-verification difference of the half-length, SE * sqrt(n) / (z sigma) =
  sqrt(a (1 - 2a) / 2) / (phi(z) z), a = (1 - p) / 2, z = Phi^-1(1 - a) (large-sample
  order-statistic variances and covariance, H. A. David, H. N. Nagaraja, *Order Statistics*,
  3rd ed., Wiley, 2003, 10.2 (from memory of that book)); 0.951 at p = 0.95.
* Variance removed if x_j were known exactly: Var(E[y | x_j]) = v_j (first-order Sobol index
  times Var y, Saltelli et al., *Global Sensitivity Analysis: The Primer*, Wiley, 2008, 1.2.15).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from types import SimpleNamespace

import numpy as np
import pandas as pd
import pytest
from scipy import stats

import simunc
from simunc.cli import main
from simunc.decisions.allocation import allocate, input_limits
from simunc.decisions.design import Design
from simunc.decisions.requirements import margins
from simunc.decisions.sweeps import sweep
from simunc.decisions.tightening import tightening
from simunc.errors import StudyError
from simunc.study.readers import parse_study
from simunc.study.schema import (
    Band,
    CostModel,
    DesignSettings,
    InputSpec,
    Requirement,
    RunSettings,
    Study,
    Written,
)
from simunc.uncertainty.problem import Problem
from simunc.units import Parsed

Z95 = stats.norm.ppf(0.975)


def u_margin(nd, nv, p=0.95):
    """Relative U margin for a normal output (module docstring)."""
    a = 0.5 * (1.0 - p)
    z = stats.norm.ppf(1.0 - a)
    rel = math.sqrt(a * (1.0 - 2.0 * a) / 2.0) / (stats.norm.pdf(z) * z)
    return 3.0 * rel * math.sqrt(1.0 / nd + 1.0 / nv)
C = np.array([2.0, -1.0, 0.5])
U = np.array([0.01, 0.03, 0.03])
V = (C * U) ** 2
SIGMA = math.sqrt(V.sum())


@dataclass
class FakeStudy:
    """The attributes of simunc.study.schema.Study that the decision engines read."""

    bands: tuple
    requirements: tuple
    design: DesignSettings = field(default_factory=lambda: DesignSettings(60_000, 240_000, 100.0))
    run: RunSettings = field(default_factory=RunSettings)
    measurement: None = None

    band = Study.band
    inside = Study.inside
    coefficient_outputs = Study.coefficient_outputs
    limit_of_output = Study.limit_of_output


def _problem():
    names = ["a", "b", "c"]
    return Problem(names, [stats.norm(0.0, u) for u in U],
                   lambda x: {"reynolds_ratio": 1.0 + sum(c * x[n] for c, n in zip(C, names))})


def _spec(name, u, cost=None):
    """A normal input of standard uncertainty ``u`` [m] as a study writes it."""
    return InputSpec(name, "model_reference_length", "normal", "standard_uncertainty",
                     Parsed(float(u), False), 1.0, f"{u:g} m", "", f"uncertain[{name}]",
                     cost=cost, written=Written(unit="m"))


def _grade(name, u, scale, price):
    """A grade written as U (k = 2) = 2 u scale of that input."""
    spec = replace(_spec(name, u), size_kind="expanded_uncertainty",
                   size=Parsed(2.0 * u * scale, False), coverage_factor=2.0)
    return (f"x{scale:g}", spec, price, "")


def _inputs(costs=(None, None, None)):
    return [SimpleNamespace(name=n, target="model_reference_length", targets=(n,),
                            standard_uncertainty=float(u), kind="normal", unit="m", reading=None,
                            effects=(("model_reference_length", 1.0),), component="systematic",
                            spec=_spec(n, u, cost))
            for n, u, cost in zip("abc", U, costs)]


SETPOINT = SimpleNamespace(outputs={"reynolds_ratio": 1.0})
BAND = Band("reynolds", 0.1, "10 %")


def _design(reqs, trials=60_000, seed=3, verify=240_000):
    study = FakeStudy((BAND,), tuple(reqs), DesignSettings(trials, verify, 100.0))
    return Design(_problem(), study, SETPOINT, trials, seed)


def _u_requirement(limit):
    return Requirement("requirement[0]", "expanded_uncertainty", "reynolds_ratio", (), limit,
                       False, -1.0, f"U <= {limit}")


def test_per_input_limit_matches_the_normal_closed_form():
    limit = 1.2 * Z95 * SIGMA
    d = _design([_u_requirement(limit)])
    table = input_limits(d, _inputs())
    target = (limit / (1.0 + u_margin(60_000, 240_000)) / Z95) ** 2
    for j, name in enumerate("abc"):
        rest = V.sum() - V[j]
        expected = math.sqrt((target - rest) / V[j])
        assert table.loc[name, "status"] == "limit"
        assert table.loc[name, "largest_scale"] == pytest.approx(expected, rel=0.03)
        assert table.loc[name, "U_k2_allowed"] == pytest.approx(2 * U[j] * expected, rel=0.03)


def test_within_requirement_limit_matches_the_normal_closed_form():
    p, w = 0.95, 1.3 * Z95 * SIGMA
    req = Requirement("requirement[0]", "within", "reynolds_ratio", (), w, False, p, "within")
    d = _design([req])
    table = input_limits(d, _inputs())
    need = p + margins(60_000, 240_000, p)
    sigma_max = w / stats.norm.ppf(0.5 * (1.0 + need))
    j = 2
    expected = math.sqrt((sigma_max ** 2 - (V.sum() - V[j])) / V[j])
    assert table.loc["c", "largest_scale"] == pytest.approx(expected, rel=0.04)


def test_unreachable_and_not_limiting_status():
    # Input "a" alone carries sigma_a = 0.02: a limit below z * sqrt(v_b + v_c) cannot be met
    # by loosening or tightening "a"; a loose limit never binds.
    tight = Z95 * math.sqrt(V[1] + V[2]) * 0.9
    assert input_limits(_design([_u_requirement(tight)]), _inputs()).loc["a", "status"] == \
        "others break it"
    loose = input_limits(_design([_u_requirement(1e3)]), _inputs())
    assert set(loose["status"]) == {"not limiting"}


def test_power_cost_allocation_matches_the_lagrange_optimum_and_is_tight():
    limit = 1.1 * Z95 * SIGMA                # as written: 10 % inside the limit
    a = np.array([100.0, 400.0, 50.0])
    costs = [CostModel("power", float(x), 1.0) for x in a]
    d = _design([_u_requirement(limit)])
    sens = pd.DataFrame([C], index=["reynolds_ratio"], columns=list("abc"))
    alloc = allocate(d, _inputs(costs), sens, np.diag(U ** 2),
                     lambda: Design(_problem(), d.study, SETPOINT, 240_000, 99))
    shape = np.cbrt(a / V)
    sigma_star = limit / (1.0 + u_margin(60_000, 240_000)) / Z95
    expected = shape * sigma_star / math.sqrt(np.sum(V * shape ** 2))
    np.testing.assert_allclose(alloc.scale, expected, rtol=0.03)
    assert alloc.cost == pytest.approx(np.sum(a / alloc.scale), rel=1e-9)
    assert alloc.cost < alloc.cost_written
    assert alloc.verified                       # fresh Monte Carlo run meets it
    assert alloc.fails_loosened                 # and every tolerance x 1.1 breaks it
    achieved = alloc.verification[0].value
    assert achieved == pytest.approx(Z95 * math.sqrt(np.sum(V * alloc.scale ** 2)), rel=0.01)


def test_grade_allocation_is_the_cheapest_passing_combination():
    limit = Z95 * SIGMA * 0.8
    costs = []
    for n, u in zip("abc", U):
        costs.append(CostModel("grades", grades=tuple(
            _grade(n, u, s, price) for s, price in [(0.5, 900.0), (1.0, 300.0), (2.0, 100.0)])))
    d = _design([_u_requirement(limit)])
    sens = pd.DataFrame([C], index=["reynolds_ratio"], columns=list("abc"))
    alloc = allocate(d, _inputs(costs), sens, np.diag(U ** 2),
                     lambda: Design(_problem(), d.study, SETPOINT, 240_000, 99))
    # brute force over the 27 combinations with the closed form and the same margin
    best = None
    sig_max = limit / (1.0 + u_margin(60_000, 240_000)) / Z95
    for sa in (0.5, 1.0, 2.0):
        for sb in (0.5, 1.0, 2.0):
            for sc in (0.5, 1.0, 2.0):
                s = np.array([sa, sb, sc])
                price = sum({0.5: 900.0, 1.0: 300.0, 2.0: 100.0}[v] for v in s)
                if math.sqrt(np.sum(V * s ** 2)) <= sig_max and (best is None or
                                                                  price < best[0]):
                    best = (price, s)
    assert alloc.cost == best[0]
    np.testing.assert_allclose(alloc.scale, best[1])
    assert alloc.verified


def test_sweep_follows_the_closed_form_with_common_random_numbers():
    d = _design([])
    res = sweep(d, "s", ["b"], 0.1, 3.0, 8)
    s = res.table["scale: b"].to_numpy()
    expected = 2.0 * np.sqrt(V.sum() - V[1] + s ** 2 * V[1])
    np.testing.assert_allclose(res.table["U_k2_reynolds_ratio"], expected, rtol=0.01)
    assert np.all(np.diff(res.table["U_k2_reynolds_ratio"]) > 0)   # smooth: CRN, no noise flips
    grid = sweep(d, "s2", ["a", "c"], 0.5, 2.0, 4)
    assert len(grid.table) == 16        # 4 x 4 grid (the scale 1 is one of the points)
    pr = 2 * stats.norm.cdf(0.1 / np.sqrt(V.sum() - V[0] - V[2] + grid.table["scale: a"] ** 2
                                          * V[0] + grid.table["scale: c"] ** 2 * V[2])) - 1
    np.testing.assert_allclose(grid.table["conformity_all"], pr, atol=0.004)


def test_tightening_reports_variance_removed_and_halved_tolerance():
    d = _design([])
    s1 = pd.Series(V / V.sum(), index=list("abc"))
    t = tightening(d, {"reynolds_ratio": s1}, _inputs())
    var = d.figures(d.ones()).standard_uncertainty["reynolds_ratio"] ** 2
    for j, n in enumerate("abc"):
        assert t.loc[n, "variance_removed_reynolds_ratio"] == pytest.approx(var * V[j] / V.sum())
        halved = 2 * math.sqrt(V.sum() - 0.75 * V[j])
        assert t.loc[n, "U_k2_halved_reynolds_ratio"] == pytest.approx(halved, rel=0.01)
    order = sorted("abc", key=lambda n: -V["abc".index(n)])
    assert list(t.index) == order           # largest v_i gains most from halving


# --------------------------------------------------------------------------- on the demo study
@pytest.fixture(scope="module")
def demo_result():
    study = simunc.load_study("studies/arven_cruise.toml")
    from dataclasses import replace
    study = replace(study, design=DesignSettings(30_000, 120_000, 100.0), sweeps=study.sweeps[:1])
    return simunc.run(study, trials=20_000, seed=5)


@pytest.mark.slow
def test_demo_allocation_is_confirmed_and_fails_when_loosened(demo_result):
    a = demo_result.allocation
    assert a is not None and not a.message
    assert a.verified and all(c.met for c in a.verification)
    assert a.fails_loosened
    assert a.cost < a.cost_written
    # the instrument table gives U (k = 2) = 2 u scale for every input
    for _, row in a.table.iterrows():
        inp = next(i for i in demo_result.inputs if i.name == row["input"])
        assert row["U_k2_allowed"] == pytest.approx(2 * inp.standard_uncertainty * row["scale"])
    assert set(a.table.loc[a.table["source"] == "as written", "input"]) >= {
        "Sutherland viscosity model", "full-scale day temperature"}


@pytest.mark.slow
def test_demo_tightening_puts_conditions_last(demo_result):
    t = demo_result.tightening
    flags = list(t["controllable"])
    assert flags == sorted(flags, reverse=True)
    assert not t.loc["full-scale day temperature", "controllable"]
    assert demo_result.shapley is not None  # the demo correlates two transducers


@pytest.mark.slow
def test_results_json_has_the_decision_sections(demo_result, tmp_path):
    import json
    simunc.write_report(demo_result, tmp_path)
    doc = json.loads((tmp_path / "results.json").read_text())
    req = doc["requirements"]
    assert req["allocation"]["verified"] is True
    assert len(req["allocation"]["instrument_requirements"]) == len(demo_result.inputs)
    assert doc["tightening"][0]["rank"] == 1
    assert doc["sensitivity"]["shapley"] and doc["sensitivity"]["groups"]["members"]
    assert doc["sensitivity"]["second_order"]
    assert doc["sweeps"] and doc["sweeps"][0]["points"]
    assert (tmp_path / "sweep_1.png").is_file() and (tmp_path / "tightening.png").is_file()


# --------------------------------------------------------------------------- bad input
BAD = [
    ({"requirement": [{"group": "froude", "expanded_uncertainty": "1 %"}]}, "requirement[0].group"),
    ({"requirement": [{"group": "reynolds", "output": "reynolds_ratio",
                       "expanded_uncertainty": "1 %"}]}, "requirement[0].group"),
    ({"requirement": [{"output": "mach_difference", "within": "1 %", "probability": 0.95}]},
     "requirement[0].within"),
    ({"requirement": [{"output": "mach_difference", "within": 0.001}]},
     "requirement[0].probability"),
    ({"requirement": [{"group": "mach", "within": 0.001, "conformity": 0.9}]},
     "requirement[0].conformity"),
    ({"requirement": [{"conformity": 1.5}]}, "requirement[0].conformity"),
    ({"requirement": [{"output": "reynolds_ratio"}]}, "requirement[0].expanded_uncertainty"),
    ({"sweep": [{"inputs": ["no such input"]}]}, "sweep[0].inputs[0]"),
    ({"sweep": [{"inputs": ["T0 thermometer"], "scale": [2, 1]}]}, "sweep[0].scale"),
    ({"sweep": [{"inputs": ["a", "b", "c"]}]}, "sweep[0].inputs"),
    ({"sensitivity": {"groups": {"g": ["T0 thermometer", "nobody"]}}}, "sensitivity.groups.g[1]"),
    ({"sensitivity": {"shapley": "sometimes"}}, "sensitivity.shapley"),
    ({"design": {"trials": 10}}, "design.trials"),
    ({"sweep": [{"inputs": ["T0 thermometer"], "points": 201}]}, "sweep[0].points"),
    ({"requirement": [{"output": "no_such_output", "expanded_uncertainty": "1 %"}]},
     "requirement[0].output"),
]


@pytest.mark.parametrize("extra, key", BAD)
def test_bad_decision_keys_name_the_key(demo_dict, extra, key):
    data = dict(demo_dict)
    data.update(extra)
    with pytest.raises(StudyError) as exc:
        parse_study(data)
    assert exc.value.key == key


def test_bad_cost_models_name_the_key(demo_dict):
    data = dict(demo_dict)
    data["uncertain"] = [dict(u) for u in demo_dict["uncertain"]]
    data["uncertain"][1].pop("cost", None)
    data["uncertain"][1]["grades"] = [{"expanded_uncertainty": "0.1 %", "price": 10}]
    with pytest.raises(StudyError) as exc:
        parse_study(data)
    assert exc.value.key.startswith("uncertain[") and "cost" in exc.value.expected
    data["uncertain"][1]["grades"] = [{"expanded_uncertainty": "0 %", "price": 10}]
    with pytest.raises(StudyError) as exc:
        parse_study(data)
    assert exc.value.key == "uncertain[1].grades[0].expanded_uncertainty"
    data["uncertain"][1].pop("grades")
    data["uncertain"][8]["cost"] = {"at_written": 5}
    with pytest.raises(StudyError) as exc:   # a condition is not controllable by default
        parse_study(data)
    assert exc.value.key == "uncertain[8].controllable"


@pytest.mark.slow
def test_cli_commands(tmp_path, capsys, demo_text, write_study):
    path = write_study(demo_text)
    assert main(["allocate", str(path), "--out", str(tmp_path / "a"), "--trials", "2000"]) == 0
    assert "allocation: cost" in capsys.readouterr().out
    code = main(["sweep", str(path), "--out", str(tmp_path / "s"), "--trials", "2000",
                 "--input", "nobody"])
    err = capsys.readouterr().err
    assert code == 2 and "--input" in err and "simunc: error:" in err
    assert not (tmp_path / "s").exists()
    assert main(["sweep", str(path), "--out", str(tmp_path / "s"), "--trials", "2000",
                 "--input", "T0 thermometer", "--scale", "0.5", "2", "--points", "4"]) == 0
    names = {p.name for p in (tmp_path / "s").iterdir()}
    assert "sweep_1.png" in names and "sweep_3.png" in names  # the study's two and this one
    assert main(["rank", str(path), "--out", str(tmp_path / "r"), "--trials", "2000"]) == 0
    names = {p.name for p in (tmp_path / "r").iterdir()}
    assert "tightening.png" in names and "sweep_1.png" not in names
    no_req = demo_text.split("# ---- What the test plan demands")[0]
    assert main(["allocate", str(write_study(no_req)), "--out", str(tmp_path / "n")]) == 2
    assert "requirement" in capsys.readouterr().err


@pytest.mark.slow
def test_control_excursion_past_a_facility_limit_is_flagged(demo_result):
    from simunc.decisions.allocation import control_excursions
    inputs, sp = demo_result.inputs, demo_result.setpoint
    j = [i.name for i in inputs].index("p0 control stability")
    scale = np.ones(len(inputs))
    assert control_excursions(inputs, scale, sp) == []
    # rectangular +-0.15 % of p0 = 7.4642 bar, 20 times wider: 7.4642 (1 + 0.03) > 9 bar? no;
    # 80 times: 7.4642 x 1.12 = 8.36 bar < 9; 200 times: 7.4642 x 1.3 = 9.70 bar > 9 bar (hand
    # calculation from the written half-width and the facility maximum of the demo study)
    scale[j] = 200.0
    (msg,) = control_excursions(inputs, scale, sp)
    reach = 0.0015 * sp.outputs["stagnation_pressure"] * 200.0
    assert "p0 control stability" in msg and f"{reach:.4g}" in msg and "maximum" in msg
    scale[j] = 80.0
    assert control_excursions(inputs, scale, sp) == []


def test_requirement_at_its_own_coverage_probability():
    # U_0.68 <= limit: sigma_max = limit / (z_0.84 (1 + margin)), z from scipy.stats.norm.ppf
    p = 0.68
    z = stats.norm.ppf(0.5 * (1 + p))
    limit = 1.1 * z * SIGMA
    req = Requirement("requirement[0]", "expanded_uncertainty", "reynolds_ratio", (), limit,
                      False, p, "U68")
    d = _design([req])
    table = input_limits(d, _inputs())
    target = (limit / (1.0 + u_margin(60_000, 240_000, p)) / z) ** 2
    expected = math.sqrt((target - (V.sum() - V[1])) / V[1])
    assert table.loc["b", "largest_scale"] == pytest.approx(expected, rel=0.03)
    # and the allocation (kappa at the requirement's own p) reaches the Lagrange optimum
    a = np.array([100.0, 400.0, 50.0])
    sens = pd.DataFrame([C], index=["reynolds_ratio"], columns=list("abc"))
    alloc = allocate(d, _inputs([CostModel("power", float(x), 1.0) for x in a]), sens,
                     np.diag(U ** 2), lambda: Design(_problem(), d.study, SETPOINT, 240_000, 7))
    shape = np.cbrt(a / V)
    sigma_star = limit / (1.0 + u_margin(60_000, 240_000, p)) / z
    np.testing.assert_allclose(alloc.scale, shape * sigma_star / math.sqrt(np.sum(V * shape ** 2)),
                               rtol=0.03)
    assert alloc.verified


def test_conformity_of_one_group_and_within_on_another_output():
    # conformity of the band |y - 1| <= 0.1 with probability 0.99: sigma_max = 0.1 / z_0.995
    need = 0.99 + margins(60_000, 240_000, 0.99)
    req = Requirement("requirement[0]", "conformity", None, ("reynolds",), 0.0, False, 0.99, "c")
    table = input_limits(_design([req]), _inputs())
    sigma_max = 0.1 / stats.norm.ppf(0.5 * (1 + need))
    expected = math.sqrt((sigma_max ** 2 - (V.sum() - V[0])) / V[0])
    assert table.loc["a", "largest_scale"] == pytest.approx(expected, rel=0.05)


@pytest.mark.slow
def test_cancelling_correlated_errors_are_not_reported_unreachable(demo_full_dict):
    # A U requirement on the Mach difference that the written tolerances meet: halving or
    # removing one of the two correlated transducers breaks the cancellation, yet each can be
    # loosened, so the status is a limit, never "others break it".
    data = dict(demo_full_dict)
    data["requirement"] = [{"output": "mach_difference", "expanded_uncertainty": 0.00135}]
    for u in data["uncertain"]:
        u.pop("cost", None)
    data.pop("sweep")
    study = parse_study(data)
    from dataclasses import replace
    study = replace(study, design=DesignSettings(20_000, 80_000, 100.0))
    result = simunc.run(study, trials=2000, seed=3, parts=("requirements",))
    assert result.requirement_checks[0].met
    lim = result.input_limits
    assert "others break it" not in set(lim["status"])
    assert lim.loc["p0 transducer calibration", "largest_scale"] > 1.0


@pytest.mark.slow
def test_non_physical_sweep_points_are_flagged(demo_result):
    study = demo_result.study
    prep = simunc.prepare(study)
    d = Design(prep.problem, study, prep.setpoint, 5000, 11, model=prep.model)
    # T0 control rectangular +-1 K: at 400 times, +-400 K about 310 K leaves the perfect-gas
    # range 150-1000 K of the static temperature (and reaches T <= 0)
    res = sweep(d, "s", ["T0 control stability"], 1.0, 400.0, 3)
    assert list(res.table["physical"]) == [True, False, False]
    assert np.isnan(res.table["U_k2_reynolds_ratio"].iloc[-1])
    scale = np.where(np.array([i.name for i in demo_result.inputs]) == "T0 control stability",
                     400.0, 1.0)
    fig = d.figures(scale)
    assert not fig.finite and fig.problems and not fig.met()


@pytest.mark.slow
def test_requirement_no_tolerance_can_meet_gives_no_table(tmp_path):
    text = open("studies/saltmarsh_towing_tank.toml").read()
    text += '\n[[requirement]]\ngroup = "reynolds"\nwithin = "5 %"\nprobability = "95 %"\n'
    first = text.index("[[uncertain]]")
    text = text[:first] + text[first:].replace("[[uncertain]]\n", "[[uncertain]]\ncost = { at_written = 10 }\n", 1)
    path = tmp_path / "t.toml"
    path.write_text(text)
    study = simunc.load_study(path)
    from dataclasses import replace
    study = replace(study, design=DesignSettings(5000, 20000, 100.0))
    result = simunc.run(study, trials=2000, seed=1, parts=("requirements",))
    assert set(result.input_limits["status"]) == {"not achievable"}
    a = result.allocation
    assert a.table is None and "every input known exactly" in a.message
    simunc.write_report(result, tmp_path / "r")
    md = (tmp_path / "r" / "report.md").read_text()
    assert "No instrument-requirements table" in md and "Not achievable at this set point" in md


@pytest.mark.slow
def test_relative_grade_is_a_fraction_of_the_reading(demo_result):
    from simunc.decisions.allocation import grade_scale
    inp = next(i for i in demo_result.inputs if i.name == "p0 transducer calibration")
    grade = ("g", replace(inp.spec, size=Parsed(0.001, True), coverage_factor=2.0), 100.0,
             "0.1 %")
    p0 = demo_result.setpoint.outputs["stagnation_pressure"]
    # written: U = 0.05 % of p0 at k = 2, so a 0.1 % grade is twice the written tolerance
    assert grade_scale(inp, grade) == pytest.approx(
        0.001 * p0 / (2 * inp.standard_uncertainty))
    assert grade_scale(inp, grade) == pytest.approx(2.0)


def test_requirement_on_an_output_the_model_does_not_form(demo_dict, tmp_path, capsys, write_study):
    data = dict(demo_dict)
    data["requirement"] = [{"output": "frequency", "expanded_uncertainty": "1 %"}]
    with pytest.raises(StudyError) as exc:   # a known output name that this study (no
        parse_study(data)                    # frequencies) does not form: refused at load
    assert exc.value.key == "requirement[0].output"
    assert "'reynolds_ratio'" in str(exc.value) and "'frequency'" not in str(exc.value).split(
        "expected")[1]


@pytest.mark.slow
def test_tightening_uses_the_dependence_aware_index_with_correlations(demo_result):
    # the demo correlates two transducers: "variance removed if known exactly" is the full
    # first-order index Var(E[y | x_i]) / Var(y) of the Shapley analysis (Song, Nelson & Staum
    # 2016), not the independent-input Sobol S1
    t, sh = demo_result.tightening, demo_result.shapley["mach_difference"]
    for name in t.index:
        expected = 100.0 * min(max(float(sh.loc[name, "first_order_full"]), 0.0), 1.0)
        assert t.loc[name, "variance_removed_percent_mach_difference"] == pytest.approx(expected)


@pytest.mark.slow
def test_allocation_does_not_depend_on_the_blas_thread_count(demo_text, tmp_path):
    # The same study and seed on 1 and on 2 BLAS threads (OPENBLAS_NUM_THREADS is read when
    # numpy loads, so each run is its own process): the allocation must be identical to the bit.
    import json
    import os
    import subprocess
    import sys

    text = demo_text.replace("trials = 200000", "trials = 2000")
    text = text.replace("sobol_base_samples = 4096", "sobol_base_samples = 64")
    path = tmp_path / "study.toml"
    path.write_text(text)
    got = []
    for threads in ("1", "2"):
        out = tmp_path / f"r{threads}"
        env = dict(os.environ, OPENBLAS_NUM_THREADS=threads, OMP_NUM_THREADS=threads)
        subprocess.run([sys.executable, "-m", "simunc", "allocate", str(path), "--out", str(out)],
                       check=True, env=env, capture_output=True)
        got.append(json.loads((out / "results.json").read_text())["requirements"]["allocation"])
    assert got[0]["cost"] is not None
    assert got[0] == got[1]


@pytest.mark.slow
def test_ranking_shares_one_decomposition_of_the_run_variance(demo_result):
    # The demo correlates two transducers: each input's band share is 2 sqrt(Sh var y) / tol with
    # the Shapley effect Sh of the SAME (correlated) run, whose effects add up to var y (Song,
    # Nelson & Staum 2016), not the Sobol ST of an independent-input design times that variance.
    r, st = demo_result.ranking, demo_result.statistics
    for band in demo_result.study.bands:
        sh = demo_result.shapley[band.output]["Shapley"].clip(lower=0.0)
        share = r[f"variance_share_{band.output}"]
        assert np.allclose(share.loc[sh.index], sh, rtol=0, atol=0)
        u = float(st.loc[band.output, "standard_uncertainty"])
        assert np.allclose(r[f"band_share_{band.group}"],
                           2.0 * np.sqrt(share) * u / band.tolerance, rtol=1e-15)
        assert float(demo_result.shapley[band.output]["Shapley"].sum()) == pytest.approx(1.0)
