"""Tolerances in test-plan form: the allowed tolerance stated as the study wrote it, resistance
thermometers by their IEC 60751 class, grades written as their datasheets state them.

Reference results used here, all outside simunc:

* IEC 60751:2008 (industrial platinum resistance thermometers), tolerance classes as limits
  ±(a + b·|t|) °C with t in degrees Celsius: AA ±(0.1 + 0.0017|t|), A ±(0.15 + 0.002|t|),
  B ±(0.3 + 0.005|t|), C ±(0.6 + 0.01|t|) (from memory of IEC 60751:2008, table 3). The
  tolerance table of Pt100 detectors in IEC 60751 gives, for class A, ±0.15 °C at 0 °C,
  ±0.35 °C at 100 °C and at -100 °C, ±0.55 °C at 200 °C; for class B ±0.3 °C at 0 °C, ±0.8 °C
  at 100 °C, ±1.3 °C at 200 °C and ±3.3 °C at 600 °C.
* A quantity known only to lie within limits ±a, taken as rectangular, has u = a / sqrt(3)
  (JCGM 100:2008, 4.3.7); an expanded uncertainty U at coverage factor k gives u = U / k
  (JCGM 100:2008, 6.2.1).
* Unit conversions by pint (a general-purpose units library), independently of simunc.
"""

from __future__ import annotations

import html
import math
import re
import tomllib
from dataclasses import replace

import pandas as pd
import pint
import pytest

import simunc
from simunc.cli import main
from simunc.decisions.allocation import grade_scale
from simunc.errors import StudyError
from simunc.similitude.inputs import resolved_size, standard_uncertainty
from simunc.study.readers import parse_study
from simunc.study.schema import DesignSettings
from simunc.study.uncertain import read_input
from simunc.study.written import round_down, statement
from tests.tomlwriter import dumps

UREG = pint.UnitRegistry()
ZERO_C = 273.15  # K (SI Brochure, 9th ed., 2.3.1)


@pytest.mark.parametrize("cls, t_c, limit", [
    ("A", 0.0, 0.15), ("A", 100.0, 0.35), ("A", -100.0, 0.35), ("A", 200.0, 0.55),
    ("B", 0.0, 0.3), ("B", 100.0, 0.8), ("B", 200.0, 1.3), ("B", 600.0, 3.3),
    ("AA", 100.0, 0.27), ("C", 100.0, 1.6)])
def test_rtd_class_limits_follow_iec_60751(cls, t_c, limit):
    """IEC 60751 tolerance table (module docstring): the half-width at t degrees Celsius."""
    spec = read_input({"name": "T0", "perturbs": "stagnation_temperature_indication",
                       "accuracy": {"rtd_class": cls}}, 0, "gas")
    assert resolved_size(spec, ZERO_C + t_c) == pytest.approx(limit, abs=1e-12)
    # rectangular limits: u = a / sqrt(3) (JCGM 100:2008, 4.3.7)
    assert standard_uncertainty(spec, ZERO_C + t_c) == pytest.approx(limit / math.sqrt(3.0))


def test_celsius_term_written_by_hand_equals_the_class():
    by_hand = read_input({"name": "T0", "perturbs": "stagnation_temperature_indication",
                          "accuracy": {"absolute": "0.3 degC", "celsius": 0.005}}, 0, "gas")
    # class B at 36.85 degC (310 K): +-(0.3 + 0.005 x 36.85) degC
    assert resolved_size(by_hand, 310.0) == pytest.approx(0.3 + 0.005 * 36.85)


def _demo(**replace_inputs) -> dict:
    """The demo study with some inputs replaced; with a grade, the other inputs' continuous
    costs are dropped (a study's costed inputs are all of one kind)."""
    from tests.conftest import DEMO
    data = tomllib.loads(DEMO.read_text())
    graded = any("grades" in v for v in replace_inputs.values())
    for j, item in enumerate(data["uncertain"]):
        if item["name"] in replace_inputs:
            data["uncertain"][j] = replace_inputs[item["name"]]
        elif graded:
            data["uncertain"][j] = {k: v for k, v in item.items() if k != "cost"}
    return data


def test_rtd_class_in_a_study_resolves_at_the_set_point_and_states_its_class():
    data = _demo(**{"T0 thermometer": {"name": "T0 thermometer",
                                       "perturbs": "stagnation_temperature_indication",
                                       "accuracy": {"rtd_class": "B"}}})
    prep = simunc.prepare(parse_study(data))
    inp = next(i for i in prep.inputs if i.name == "T0 thermometer")
    t0 = prep.setpoint.outputs["stagnation_temperature"]
    assert t0 == pytest.approx(310.0)
    a = 0.3 + 0.005 * (t0 - ZERO_C)                     # IEC 60751 class B
    assert inp.half_width == pytest.approx(a)
    assert inp.standard_uncertainty == pytest.approx(a / math.sqrt(3.0))
    assert statement(inp.spec) == "IEC 60751 class B: ±(0.3 + 0.005·|t|) °C"
    # halved, every term halves: the test plan's "1/2 class B"; IEC 60751:2008 class A,
    # ±(0.15 + 0.002·|t|) °C from -100 °C to 450 °C (wire-wound), lies within it at every t
    assert statement(inp.spec, 0.5) == ("±(0.15 + 0.0025·|t|) °C (class A or better, valid "
                                        "-100 °C to 450 °C)")
    # at 0.3 of class B no class is tight enough: class AA is ±(0.1 + 0.0017·|t|) °C
    assert statement(inp.spec, 0.3) == "±(0.090 + 0.0015·|t|) °C (tighter than class AA)"
    # loosened by half, class B (±(0.3 + 0.005·|t|) °C, -196 °C to 600 °C) is the loosest within
    assert statement(inp.spec, 1.5).endswith("(class B or better, valid -196 °C to 600 °C)")


@pytest.mark.parametrize("given, expected", [
    ({"perturbs": "stagnation_temperature_indication", "accuracy": {"rtd_class": "D"}},
     "uncertain[0].accuracy.rtd_class"),
    ({"perturbs": "stagnation_pressure_indication", "accuracy": {"rtd_class": "A"}},
     "uncertain[0].accuracy.rtd_class"),
    ({"perturbs": "stagnation_pressure_indication", "accuracy": {"celsius": 0.002}},
     "uncertain[0].accuracy.celsius"),
    ({"perturbs": "stagnation_temperature_indication",
      "accuracy": {"rtd_class": "A", "absolute": "0.1 K"}}, "uncertain[0].accuracy.absolute"),
    ({"perturbs": "stagnation_pressure_indication", "expanded_uncertainty": "0.05 %",
      "coverage_factor": 2, "grades": [{"accuracy": {"reading": "0.02 %"}, "price": 1}]},
     "uncertain[0].grades[0].accuracy"),
    ({"perturbs": "stagnation_pressure_indication", "expanded_uncertainty": "0.05 %",
      "coverage_factor": 2, "grades": [{"readings": ["1 bar"] * 5, "price": 1}]},
     "uncertain[0].grades[0].readings"),
])
def test_bad_test_plan_forms_name_the_key(given, expected):
    with pytest.raises(StudyError) as err:
        read_input({"name": "x", **given}, 0, "gas")
    assert err.value.key == expected


def test_bad_rtd_class_exits_2_on_the_command_line(tmp_path, capsys):
    data = _demo(**{"T0 thermometer": {"name": "T0 thermometer",
                                       "perturbs": "stagnation_temperature_indication",
                                       "accuracy": {"rtd_class": "Z"}}})
    path = tmp_path / "s.toml"
    path.write_text(dumps(data))
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "accuracy.rtd_class" in err and "'Z'" in err and "Traceback" not in err


# ---- the allowed tolerance, read back as a study would -------------------------------------

_FORMS = [
    (r"^±(?P<x>[-0-9.]+) ?(?P<unit>.*)$", "half_width"),
    (r"^U = (?P<x>[-0-9.]+) ?(?P<unit>.*) \(k = (?P<k>[0-9.]+)\)$", "expanded_uncertainty"),
    (r"^u = (?P<x>[-0-9.]+) ?(?P<unit>.*)$", "standard_uncertainty"),
]


def _read_back(text: str) -> dict:
    """The size keys of an allowed tolerance as a study file writes them (test-side parser)."""
    m = re.match(r"^±\((?P<r>[0-9.]+) % of reading \+ (?P<f>[0-9.]+) % of (?P<range>.+)\)$", text)
    if m:
        return {"accuracy": {"reading": f"{m['r']} %", "full_scale": f"{m['f']} %",
                             "range": m["range"]}}
    for pattern, key in _FORMS:
        m = re.match(pattern, text)
        if m:
            unit = {"°C": "degC", "°": "deg"}.get(m["unit"], m["unit"])
            out = {key: f"{m['x']} {unit}".strip() if unit else float(m["x"])}
            if key == "expanded_uncertainty":
                out["coverage_factor"] = float(m["k"])
            return out
    raise AssertionError(f"not a test-plan form: {text!r}")


@pytest.mark.parametrize("written, scale", [
    ({"distribution": "rectangular", "half_width": "0.05 mm"}, 1.52149),
    ({"distribution": "rectangular", "half_width": "0.4 mbar"}, 0.731),
    ({"distribution": "rectangular", "half_width": "0.8 degC"}, 2.34),
    ({"distribution": "normal", "expanded_uncertainty": "0.05 %", "coverage_factor": 2}, 1.52149),
    ({"distribution": "normal", "expanded_uncertainty": "12 Pa", "coverage_factor": 2.5}, 0.4),
    ({"distribution": "normal", "standard_uncertainty": "0.3 kPa"}, 3.3573),
    ({"distribution": "rectangular",
      "accuracy": {"reading": "0.05 %", "full_scale": "0.02 %", "range": "10 bar"}}, 0.63),
])
def test_allowed_tolerance_read_back_gives_the_allowed_u(written, scale):
    """The allowed tolerance, written back into a study in the form stated, gives a standard
    uncertainty at most the allowed one and within the two-digit rounding of it."""
    target = ("stagnation_temperature_control" if "degC" in str(written) else
              "model_reference_length" if "mm" in str(written) else
              "stagnation_pressure_indication")
    spec = read_input({"name": "x", "perturbs": target, **written}, 0, "gas")
    reading = {"stagnation_temperature_control": 310.0, "model_reference_length": 0.2,
               "stagnation_pressure_indication": 7.46e5}[target]
    allowed_u = scale * standard_uncertainty(spec, reading)
    text = statement(spec, scale)
    back = read_input({"name": "x", "perturbs": target, "distribution": written["distribution"],
                       **_read_back(text)}, 0, "gas")
    u_back = standard_uncertainty(back, reading)
    assert u_back <= allowed_u * (1 + 1e-9)
    assert u_back >= 0.9 * allowed_u       # rounded down to two significant digits: < 10 % off
    # and as written (scale 1) the statement reads back to the written u exactly
    same = read_input({"name": "x", "perturbs": target, "distribution": written["distribution"],
                       **_read_back(statement(spec))}, 0, "gas")
    assert standard_uncertainty(same, reading) == pytest.approx(standard_uncertainty(spec, reading))


def test_units_are_the_written_ones_converted_by_pint():
    spec = read_input({"name": "x", "perturbs": "stagnation_pressure_indication",
                       "distribution": "rectangular", "half_width": "0.4 mbar"}, 0, "gas")
    si = spec.size.value * 2.5                       # Pa
    expected = UREG.Quantity(si, "Pa").to("mbar").magnitude
    assert statement(spec, 2.5) == f"±{round_down(expected)} mbar" == "±1.0 mbar"


@pytest.mark.parametrize("value, text", [(0.0760745, "0.076"), (4340.47, "4300"),
                                         (0.15, "0.15"), (1.0, "1.0"), (0.999, "0.99")])
def test_round_down_to_two_significant_digits(value, text):
    """Rounded towards zero, so a stated tolerance never exceeds the allowed one."""
    assert round_down(value) == text
    assert float(text) <= value


# ---- grades as their datasheets state them --------------------------------------------------

def test_grade_written_as_a_datasheet_accuracy_scales_by_its_u():
    data = _demo(**{"p0 transducer calibration": {
        "name": "p0 transducer calibration", "perturbs": "stagnation_pressure_indication",
        "distribution": "rectangular",
        "accuracy": {"reading": "0.05 %", "full_scale": "0.02 %", "range": "10 bar"},
        "grades": [{"name": "premium", "price": 4000,
                    "accuracy": {"reading": "0.02 %", "full_scale": "0.01 %", "range": "10 bar"}},
                   {"name": "limits", "price": 1000, "half_width": "5 mbar"},
                   {"name": "certificate", "price": 2000, "expanded_uncertainty": "0.04 %"}]}})
    prep = simunc.prepare(parse_study(data))
    inp = next(i for i in prep.inputs if i.name == "p0 transducer calibration")
    p0 = prep.setpoint.outputs["stagnation_pressure"]
    span = UREG.Quantity(10, "bar").to("Pa").magnitude
    a_written = 0.0005 * p0 + 0.0002 * span
    assert inp.standard_uncertainty == pytest.approx(a_written / math.sqrt(3.0))
    grades = {g[0]: g for g in inp.spec.cost.grades}
    # accuracy grade: rectangular limits, u = a / sqrt(3) (JCGM 100 4.3.7)
    assert grade_scale(inp, grades["premium"]) == pytest.approx(
        (0.0002 * p0 + 0.0001 * span) / a_written)
    # +-5 mbar limits, same distribution
    assert grade_scale(inp, grades["limits"]) == pytest.approx(
        UREG.Quantity(5, "mbar").to("Pa").magnitude / a_written)
    # U = 0.04 % of reading at k = 2 (the default of a grade): u = U / 2 (JCGM 100 6.2.1)
    assert grade_scale(inp, grades["certificate"]) == pytest.approx(
        0.0004 * p0 / 2 / (a_written / math.sqrt(3.0)))
    assert grades["premium"][3] == "±(0.02 % of reading + 0.01 % of 10 bar)"
    assert grades["limits"][3] == "±5 mbar"
    assert grades["certificate"][3] == "U = 0.04 % (k = 2)"


@pytest.fixture(scope="module")
def small_result():
    """The demo with a datasheet grade on the Mach calibration, at small sample sizes."""
    data = _demo(**{"test-section Mach calibration": {
        "name": "test-section Mach calibration", "perturbs": "mach_indication",
        "distribution": "normal", "standard_uncertainty": "0.0006",
        "grades": [{"name": "as is", "standard_uncertainty": "0.0006", "price": 0},
                   {"name": "recalibrated", "expanded_uncertainty": "0.0008",
                    "coverage_factor": 2, "price": 6000}]}})
    data["sweep"] = []
    study = replace(parse_study(data), design=DesignSettings(20_000, 60_000, 100.0))
    return simunc.run(study, trials=40_000, seed=11)


@pytest.mark.slow
def test_report_states_tolerances_as_written_and_exports_them(small_result, tmp_path):
    a = small_result.allocation
    assert a is not None and not a.message
    row = a.table.set_index("input").loc["test-section Mach calibration"]
    # the chosen grade is quoted as its datasheet states it
    assert row["source"] == "grade 'recalibrated'" and row["allowed"] == "U = 0.0008 (k = 2)"
    assert row["U_k2_allowed"] == pytest.approx(0.0008)            # u = U / k, then 2u
    for _, r in a.table.iterrows():
        assert r["written"] == statement(next(i.spec for i in small_result.inputs
                                              if i.name == r["input"]))
    simunc.write_report(small_result, tmp_path / "r")
    csv = pd.read_csv(tmp_path / "r" / "tolerances.csv")
    assert list(csv["input"]) == [i.name for i in small_result.inputs]
    assert {"as_written", "allowed", "largest_alone", "U_k2_written", "U_k2_allowed",
            "unit"} <= set(csv.columns)
    t0 = csv.set_index("input").loc["T0 thermometer"]
    assert t0["as_written"] == "U = 0.3 K (k = 2)" and t0["unit"] == "K"
    md = (tmp_path / "r" / "report.md").read_text()
    assert "| allowed (test plan)" in md and "U = 0.0008 (k = 2)" in md
    assert "requirement[0]" not in md.split(". Reproducibility")[0]


@pytest.mark.slow
def test_notebook_view_shows_the_verdict_and_the_requirements(small_result):
    """IPython's rich display protocol: an object's ``_repr_html_`` returns the HTML a notebook
    shows (IPython documentation, "Rich display"); with IPython installed, its HTML formatter
    is asked too."""
    view = small_result._repr_html_()
    assert isinstance(view, str) and view.index("Verdict") < view.index("Key outputs")
    for c in small_result.requirement_checks:
        assert html.escape(c.text) in view
    assert "allowed (test plan)" in view and "U = 0.0008 (k = 2)" in view
    assert "<img" not in view                                    # no figures in a cell
    ipython = pytest.importorskip("IPython.core.formatters")
    assert ipython.HTMLFormatter()(small_result) == view


def test_class_outside_its_range_is_warned():
    """IEC 60751:2008: class A holds from -100 degC to 450 degC (wire-wound; from memory of that
    standard), so a class-A thermometer read at -167 degC is warned about; class B (down to
    -196 degC) is not."""
    from types import SimpleNamespace

    from simunc.similitude.inputs import class_range_warnings
    for cls, warned in (("A", True), ("B", False)):
        spec = read_input({"name": "T0", "perturbs": "stagnation_temperature_indication",
                           "accuracy": {"rtd_class": cls}}, 0, "gas")
        inp = SimpleNamespace(name="T0", spec=spec, reading=ZERO_C - 167.0)
        out = class_range_warnings([inp])
        assert bool(out) == warned
        if warned:
            assert "-100 °C to 450 °C" in out[0] and "-167.0 °C" in out[0]


@pytest.mark.slow
def test_allocation_that_trades_the_match_away_is_reported():
    """Requirements on the Reynolds ratio alone let the allocation loosen the Mach calibration;
    P(every group in band) at the allocation is then checked against the normal approximation
    of the Mach-number difference from the GUM law of propagation (JCGM 100:2008, eq. 13, with
    the correlation term; the Mach difference is linear in its inputs to first order), times the
    Reynolds band's own probability."""
    from scipy import stats

    data = _demo()
    data["requirement"] = [{"group": "reynolds", "expanded_uncertainty": "1.5 %"}]
    data["sweep"] = []
    study = replace(parse_study(data), design=DesignSettings(20_000, 60_000, 100.0))
    result = simunc.run(study, trials=40_000, seed=3)
    a = result.allocation
    assert a is not None and a.verified
    bud = result.lpu.budget("mach_difference")
    c = {name: row["sensitivity"] for name, row in bud[bud["kind"] == "input"].iterrows()}
    s = {i.name: float(v) for i, v in zip(result.inputs, a.scale)}
    u = {i.name: i.standard_uncertainty for i in result.inputs}
    var = sum((c[n] * u[n] * s[n]) ** 2 for n in c)
    corr = study.correlation
    for i, ni in enumerate(corr.names):
        for j, nj in enumerate(corr.names):
            if i < j:
                var += 2 * corr.matrix[i, j] * c[ni] * c[nj] * u[ni] * u[nj] * s[ni] * s[nj]
    p_mach = 2 * stats.norm.cdf(0.002 / math.sqrt(var)) - 1           # band +-0.002
    assert a.conformity == pytest.approx(p_mach * result.conformity["reynolds"], abs=0.02)
    assert a.conformity < 0.9 < result.conformity["all"]
    from simunc.report.content import verdict_lines
    warning = next(line for line in verdict_lines(result) if "no requirement holds the match"
                   in line)
    assert f"P = {100 * a.conformity:.1f} %" in warning


def test_percent_of_a_temperature_reading_is_warned_and_class_case_is_free():
    """A % of reading on a thermometer is a % of kelvin (IEC 60751 states classes in degC):
    a likely slip, warned; ``rtd_class = "a"`` is class A."""
    from simunc.study.slips import likely_slips

    data = _demo(**{"T0 thermometer": {"name": "T0 thermometer",
                                       "perturbs": "stagnation_temperature_indication",
                                       "accuracy": {"reading": "0.2 %"}}})
    slips = likely_slips(parse_study(data))
    assert any("uncertain[4].accuracy.reading" in m and "0.6 K" in m for m in slips)
    spec = read_input({"name": "T0", "perturbs": "stagnation_temperature_indication",
                       "accuracy": {"rtd_class": "a"}}, 0, "gas")
    assert resolved_size(spec, ZERO_C + 100.0) == pytest.approx(0.35)   # class A at 100 degC
