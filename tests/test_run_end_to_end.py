"""End-to-end: the demo study through the command line and the Python API.

Physics values are checked in the reference tests; here the checks are on the
report files, the results.json schema, reproducibility from the seed and the
JCGM 100:2008 conversions of specifications to standard uncertainties.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pandas as pd
import pytest

import simunc
from simunc.cli import main
from simunc.similitude.inputs import standard_uncertainty
from simunc.study.schema import InputSpec
from simunc.uncertainty.distributions import make_distribution
from simunc.units import Parsed

from .conftest import DEMO

pytestmark = pytest.mark.slow  # every test here runs the whole demo


@pytest.fixture(scope="module")
def demo_run(tmp_path_factory):
    out = tmp_path_factory.mktemp("report")
    code = main(["run", str(DEMO), "--out", str(out), "--trials", "20000", "--seed", "7",
                 "--samples", "csv"])
    assert code == 0
    return out


def test_report_files(demo_run):
    names = {p.name for p in demo_run.iterdir()}
    assert {"report.md", "report.html", "results.json", "histogram_reynolds_ratio.png",
            "sobol_indices.png", "samples.csv"} <= names
    assert not [n for n in names if n.startswith(".simunc-")]  # temporary folder removed


def test_html_is_self_contained(demo_run):
    page = (demo_run / "report.html").read_text()
    # histograms of the Reynolds ratio and the Mach difference, envelope, Sobol, tightening and
    # the demo's two sweeps
    assert page.count("data:image/png;base64,") == 7
    assert "src=\"http" not in page and "href=\"http" not in page


def test_report_sections(demo_run):
    md = (demo_run / "report.md").read_text()
    for heading in ("## Summary", "## Matched set point", "## Appendix A. Uncertain inputs",
                    "## Appendix D. Sensitivity (Sobol indices and uncertainty budget)",
                    "## Which input to control more tightly",
                    "## Requirements and the tolerances they allow", "## Tolerance sweeps",
                    "## Safety", "## Appendix F. Reproducibility"):
        assert heading in md
    assert "pressure-equipment code" in md and "not certification" in md
    assert "20000" in md and "| seed" in md


def test_report_numbers_are_written_as_engineers_write_them(demo_run):
    # No number in e-notation (1.89e+07): positional, or 1.88956 × 10⁷ for very large and small.
    import re

    md = (demo_run / "report.md").read_text()
    enotation = re.compile(r"(?<![0-9a-f])\d+(\.\d+)?e[+-]\d\d\b")   # not in a SHA-256
    assert not enotation.search(md), md[enotation.search(md).start() - 60:][:80]
    # The key outputs as JCGM 100:2008 7.2.6 asks: u to two significant digits, the mean to the
    # same last digit (checked against the unrounded values of results.json)
    stats = json.loads((demo_run / "results.json").read_text())["outputs"]["reynolds_ratio"]
    u = stats["standard_uncertainty"]
    digits = 1 - math.floor(math.log10(u))
    row = next(line for line in md.splitlines() if line.startswith(
        "| Reynolds number rho U L / mu: model / full scale |") and "[" in line)
    cells = [c.strip() for c in row.split("|")[1:-1]]
    assert cells[3] == f"{u:.{digits}f}" and cells[2] == f"{stats['mean']:.{digits}f}", cells
    # the details follow the main sections as lettered appendices, in the Markdown too
    heads = [h for h in md.splitlines() if h.startswith("## ")]
    first = next(i for i, h in enumerate(heads) if h.startswith("## Appendix"))
    assert all(h.startswith("## Appendix") for h in heads[first:]) and "## Safety" in heads[:first]


def test_report_states_what_scaling_a_correlated_input_assumed(demo_run):
    # The demo correlates its two pressure transducers (r = 0.8, a shared calibration standard);
    # the tightening halves each and the allocation scales them with r kept, which assumes the
    # shared part improves too (JCGM 100 5.2: r describes the errors as written).
    md = (demo_run / "report.md").read_text()
    part = md.split("### Scaling correlated inputs", 1)[1].split("\n#", 1)[0]
    assert "p0 transducer calibration, correlated with static-pressure transducer (r = 0.8)" in part
    assert "r kept" in part and "input of its own" in part


def test_results_json_schema(demo_run):
    doc = json.loads((demo_run / "results.json").read_text())
    assert doc["schema_version"] == 1
    assert doc["run"]["trials"] == 20000 and doc["run"]["seed"] == 7
    assert len(doc["study"]["sha256"]) == 64
    sp = doc["setpoint"]
    assert sp["solve_for"] == ["stagnation_pressure", "mach"] and sp["feasible"] is True
    assert sp["method"] == "exact" and sp["binding"] == [] and sp["fluid"] == "dry_air"
    assert sp["outputs"]["reynolds_ratio"] == pytest.approx(1.0, abs=1e-12)
    for key in ("reynolds_ratio", "mach_difference", "reynolds_model", "mach_model",
                "dynamic_pressure", "speed", "density", "viscosity"):
        o = doc["outputs"][key]
        lo, hi = o["coverage_interval"]
        assert lo <= o["mean"] <= hi and o["standard_uncertainty"] >= 0.0
    p = doc["conformity"]["probability"]
    assert 0.0 <= p["all"] <= min(p["reynolds"], p["mach"]) <= 1.0
    assert set(doc["sensitivity"]["indices"]) == {"reynolds_ratio", "mach_difference"}
    assert [r["rank"] for r in doc["ranking"]] == list(range(1, len(doc["inputs"]) + 1))


def test_samples_csv_matches_statistics(demo_run):
    frame = pd.read_csv(demo_run / "samples.csv")
    doc = json.loads((demo_run / "results.json").read_text())
    assert len(frame) == 20000
    assert frame["reynolds_ratio"].mean() == pytest.approx(doc["outputs"]["reynolds_ratio"]["mean"],
                                                           rel=1e-12)


def test_same_seed_bit_identical_and_other_seed_differs():
    study = simunc.load_study(DEMO)
    a = simunc.run(study, trials=5000, seed=11)
    b = simunc.run(study, trials=5000, seed=11)
    c = simunc.run(study, trials=5000, seed=12)
    assert np.array_equal(a.output_values["reynolds_ratio"], b.output_values["reynolds_ratio"])
    assert a.statistics.equals(b.statistics)
    assert not np.array_equal(a.output_values["reynolds_ratio"], c.output_values["reynolds_ratio"])


def test_api_returns_dataframes():
    result = simunc.run(simunc.load_study(DEMO), trials=2000, seed=1)
    assert isinstance(result.statistics, pd.DataFrame)
    assert isinstance(result.ranking, pd.DataFrame)
    assert isinstance(result.sobol["reynolds_ratio"], pd.DataFrame)
    assert set(result.sobol["reynolds_ratio"].columns) == {"S1", "S1_conf", "ST", "ST_conf"}


def test_check_command(capsys):
    assert main(["check", str(DEMO)]) == 0
    out = capsys.readouterr().out
    assert "valid study" in out and "feasible" in out


def _spec(kind, dist, value, relative=False, k=1.0):
    return InputSpec("x", "stagnation_pressure_indication", dist, kind, Parsed(value, relative), k,
                     str(value), "", "uncertain[0]")


def test_gum_type_b_conversions():
    # JCGM 100:2008 4.3.7: rectangular limits +-a give u = a / sqrt(3);
    # 4.3.9: symmetric triangular +-a gives u = a / sqrt(6); 4.3.3: u = U / k.
    assert standard_uncertainty(_spec("half_width", "rectangular", 3.0), None) == pytest.approx(
        3.0 / math.sqrt(3.0), rel=1e-15)
    assert standard_uncertainty(_spec("half_width", "triangular", 3.0), None) == pytest.approx(
        3.0 / math.sqrt(6.0), rel=1e-15)
    assert standard_uncertainty(_spec("expanded_uncertainty", "normal", 0.002, True, 2.0),
                                5.0e5) == pytest.approx(500.0, rel=1e-12)
    for kind in ("normal", "rectangular", "triangular"):
        d = make_distribution(kind, 0.7)
        assert d.mean() == pytest.approx(0.0, abs=1e-15)
        assert d.std() == pytest.approx(0.7, rel=1e-12)
