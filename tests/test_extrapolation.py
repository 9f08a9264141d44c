"""The split-test plan's extrapolation to the full-scale Reynolds number and the sweep a
requirement on it needs.

Check values, all from outside the project:
- the variance of a least-squares line read at x_f from K points, sigma^2 (1/K + (x_f - mean
  x)^2 / S_xx) (N. R. Draper, H. Smith, Applied Regression Analysis, 3rd ed., Wiley, 1998,
  section 1.4; from memory of that book);
- an upflow error d_alpha shifts the reduced drag by CL sin(d_alpha) + CD (cos(d_alpha) - 1),
  about CL d_alpha, the same in every run (the rotation of J. D. Anderson, Fundamentals of
  Aerodynamics, eqs. 1.1-1.2): an error the runs share moves every run alike, so the fitted line
  carries it unchanged to full scale;
- a rectangular error of half-width a has sigma = a / sqrt(3) (JCGM 100:2008, 4.3.7);
- the coverage probability of an interval estimated from n trials, judged on m fresh trials:
  binomial, sigma^2 = p (1 - p) (1/m + 1/n) (large-sample; JCGM 101:2008 7.7 and the
  binomial variance).
The studies are invented (inputs, not check values).
"""

from __future__ import annotations

import math
import tomllib
from dataclasses import replace

import numpy as np
import pytest

from simunc.decisions import extrapolation as ex
from simunc.pipeline import prepare
from simunc.similitude.testplan import plan
from simunc.study.readers import parse_study
from tests import test_scale_effect as scale_effect

# The invented study of test_scale_effect with a stated law (dC/dlog10 Re small enough that every
# run's drag noise has the same sigma), a random axial-force error and a shared upflow error.
STUDY = scale_effect.STUDY.replace(
    'method = "friction_line"\nline = "ittc_1957"\nform_factor = 0.3\nwetted_ratio = 5.5\n'
    'compare = ["prandtl_schlichting"]', 'method = "sensitivity"\ndrag_per_decade = -0.000001'
).replace('''[[uncertain]]
name = "p0 transducer"
perturbs = "stagnation_pressure_indication"
expanded_uncertainty = "0.06 %"
coverage_factor = 2''', '''[[uncertain]]
name = "axial force"
perturbs = "axial_force_indication"
distribution = "rectangular"
half_width = "3 %"
component = "random"
[[uncertain]]
name = "upflow"
perturbs = "flow_angularity"
standard_uncertainty = "0.01 deg"''')
assert "drag_per_decade" in STUDY and "upflow" in STUDY

ALPHA = math.radians(2.0)
# per-run sigma of the reduced drag: a rectangular % of reading on the axial force
# A = (CD cos a - CL sin a) q S, read back along the drag with cos a (Anderson eqs. 1.1-1.2)
SIGMA_RUN = 0.03 * abs(0.027 * math.cos(ALPHA) - 0.5 * math.sin(ALPHA)) * math.cos(ALPHA) \
    / math.sqrt(3.0)
# the shared upflow error: CL d_alpha in every run
SIGMA_SHARED = 0.5 * math.radians(0.01)


def _analytic_u(x: np.ndarray, x_f: float) -> float:
    """Draper & Smith's prediction variance of the random part plus the shared part."""
    s_xx = float(((x - x.mean()) ** 2).sum())
    return math.sqrt(SIGMA_RUN ** 2 * (1.0 / x.size + (x_f - x.mean()) ** 2 / s_xx)
                     + SIGMA_SHARED ** 2)


@pytest.fixture(scope="module")
def case():
    prep = prepare(parse_study(tomllib.loads(STUDY)))
    return prep, plan(prep.study, prep.model, prep.setpoint)


def test_u_is_the_prediction_variance_plus_the_shared_error(case):
    prep, tp = case
    e = ex.extrapolate(prep, tp, trials=40_000)
    x = np.log10(e.runs["reynolds"].to_numpy())
    expected = _analytic_u(x, math.log10(e.reynolds_full_scale))
    assert e.ratio > 2.0 and len(x) == 4
    assert e.u == pytest.approx(expected, rel=0.03)
    # nearly normal (a sum of rectangular and normal terms): U close to 1.96 u
    assert e.U == pytest.approx(1.96 * expected, rel=0.04)
    assert abs(e.bias) < 4.0 * expected / math.sqrt(40_000)
    assert e.low < 0.0 < e.high


def test_interval_covers_the_true_value_at_its_rate_over_fresh_seeds(case):
    # The interval [low, high] of (extrapolated - true) from one run of 20 000 simulated tests,
    # judged on 20 x 1 000 tests drawn with other seeds.
    prep, tp = case
    e = ex.extrapolate(prep, tp, trials=20_000)
    runs = [r for r in tp.runs if r.label != "C"]
    re = np.array([float(r.outputs["reynolds_model"]) for r in runs])
    mach = float(runs[0].outputs["mach_model"])
    inside, total = 0, 0
    for seed in range(101, 121):
        fresh = replace(prep, settings=replace(prep.settings, seed=seed))
        sim = ex._Simulator(fresh, 1_000)
        cd = np.column_stack([sim.drag(r.state, k) for k, r in enumerate(runs, start=1)])
        err = ex._predict(fresh, cd, re, mach) - sim.full
        inside += int(np.count_nonzero((err >= e.low) & (err <= e.high)))
        total += err.size
    p = e.probability
    sigma = math.sqrt(p * (1 - p) * (1.0 / total + 1.0 / e.trials))
    assert abs(inside / total - p) < 3.0 * sigma


def test_the_sweep_a_requirement_needs(case):
    # Each candidate sweep's U against the analytic one at its own levels (evenly spaced in
    # log10 Re over the covered range, each run `runs_per_level` times), and the sweep chosen is
    # the first candidate (fewest runs, then most levels) whose analytic U meets the limit.
    prep, tp = case
    e0 = ex.extrapolate(prep, tp, trials=20_000)
    x_f = math.log10(e0.reynolds_full_scale)

    rng = np.random.default_rng(7)
    shared = rng.standard_normal(200_000) * SIGMA_SHARED

    def analytic(n, k, low, high):
        # The extrapolated error is sum_i w_i e_i + shared, with the least-squares weights
        # w_i = 1/N + (x_f - mean x)(x_i - mean x) / S_xx (Draper & Smith) and e_i rectangular
        # (half-width sqrt(3) SIGMA_RUN): its 95 % half-length, drawn here independently of the
        # program (with few runs the sum is far from normal, so 1.96 u would not do).
        x = np.repeat(np.linspace(math.log10(low), math.log10(high), n), k)
        w = 1.0 / x.size + (x_f - x.mean()) * (x - x.mean()) / ((x - x.mean()) ** 2).sum()
        e = rng.uniform(-1.0, 1.0, (shared.size, x.size)) * math.sqrt(3.0) * SIGMA_RUN
        err = e @ w + shared
        lo, hi = np.quantile(err, [0.025, 0.975])
        return 0.5 * (hi - lo)

    low = float(e0.runs["reynolds"].min())
    high = float(e0.runs["reynolds"].max())
    order = sorted(((n, k) for n in ex.LEVELS for k in ex.REPEATS),
                   key=lambda c: (c[0] * c[1], -c[0]))
    values = [analytic(n, k, low, high) for n, k in order]
    # a limit between two candidates' analytic U, clear of both by at least 5 %
    floor = 1.96 * SIGMA_SHARED
    limit = next(0.5 * (a + b) for a, b in zip(values, values[1:]) if b < 0.9 * a
                 and 0.5 * (a + b) > 1.2 * floor and b < values[0] * 0.8)
    expected = next(i for i, v in enumerate(values) if v <= limit)
    assert expected >= 3  # a sweep beyond the first few candidates
    text = STUDY + f"""
[[requirement]]
output = "drag_coefficient_extrapolated"
expanded_uncertainty = {float(limit)!r}
"""
    prep2 = prepare(parse_study(tomllib.loads(text)))
    e = ex.extrapolate(prep2, plan(prep2.study, prep2.model, prep2.setpoint), trials=20_000)
    r = e.runs_for
    assert r is not None and r.limit == pytest.approx(limit)
    assert e.checks and e.checks[0].met == (e.U <= limit)
    assert r.chosen == expected == len(r.designs) - 1
    for (n, k), row in zip(order, r.designs.itertuples()):
        assert (row.levels, row.runs_per_level) == (n, k)
        assert row.U == pytest.approx(analytic(n, k, row.reynolds_low, row.reynolds_high),
                                      rel=0.03)
    # the shared error alone: every run moved by CL d_alpha, carried unchanged to full scale
    assert r.floor == pytest.approx(floor, rel=0.03)


def test_no_sweep_meets_a_limit_under_the_shared_errors(case):
    text = STUDY + """
[[requirement]]
output = "drag_coefficient_extrapolated"
expanded_uncertainty = "1 count"
"""
    prep = prepare(parse_study(tomllib.loads(text)))
    e = ex.extrapolate(prep, plan(prep.study, prep.model, prep.setpoint), trials=20_000)
    r = e.runs_for
    # 1.96 x 0.5 x 0.01 deg = 1.71 counts > 1 count: no number of runs helps
    assert r is not None and r.chosen is None and len(r.designs) == 0
    assert r.floor == pytest.approx(1.96 * SIGMA_SHARED, rel=0.03) and r.floor > 1e-4
    assert not e.checks[0].met


@pytest.mark.slow
def test_reynolds_gap_demo_end_to_end(tmp_path):
    # The demo that cannot reach the Reynolds number: the report folder holds both new figures
    # and results.json the extrapolation with its sweep. Checks against outside values: the
    # corrected Mach number is the full-scale 0.80 the study states (the set point matches the
    # corrected Mach number), the corrected value is uncorrected + correction, and the corrected
    # Mach number M_u (1 + (1 + 0.2 M_u^2) eps) for the reported blockage eps (the first-order
    # compressible blockage correction, Barlow, Rae & Pope, Low-Speed Wind Tunnel Testing, 3rd
    # ed., ch. 9; from memory of that book).
    import json
    from pathlib import Path

    from simunc.cli import main

    root = Path(__file__).resolve().parents[1]
    out = tmp_path / "rep"
    assert main(["run", str(root / "studies" / "kestrel_reynolds_gap.toml"), "--trials",
                 "4000", "--out", str(out)]) == 0
    assert (out / "extrapolation.png").stat().st_size > 10_000
    assert (out / "wall_corrections.png").stat().st_size > 10_000
    doc = json.loads((out / "results.json").read_text())
    walls = {w["quantity"]: w for w in doc["coefficients"]["walls"]}
    mach = walls["Mach number"]
    eps = walls["total blockage epsilon (compressible)"]["correction"]
    m_u = mach["uncorrected"]
    assert mach["corrected"] == pytest.approx(0.80, abs=1e-6)
    assert mach["corrected"] == pytest.approx(m_u + mach["correction"], rel=1e-12)
    assert mach["corrected"] == pytest.approx(m_u * (1 + (1 + 0.2 * m_u ** 2) * eps), rel=1e-9)
    assert mach["U"] > 0.0
    e = doc["extrapolation"]
    assert e["ratio"] == pytest.approx(e["reynolds_full_scale"] / max(
        r["reynolds"] for r in e["runs"]))
    assert e["low"] < 0.0 < e["high"] and e["U"] == pytest.approx(0.5 * (e["high"] - e["low"]))
    rf = e["runs_for"]
    assert rf is not None and rf["limit"] == pytest.approx(4e-4)
    assert e["requirements"][0]["met"] == (e["U"] <= 4e-4)
    if rf["chosen"] is not None:
        chosen = rf["designs"][rf["chosen"]]
        assert chosen["met"] and chosen["U"] <= rf["limit"]
        assert all(not d["met"] for d in rf["designs"][:rf["chosen"]])
        assert rf["floor"] <= chosen["U"]


@pytest.mark.parametrize("old, new, key", [
    # no scale effect: nothing to extrapolate with
    ('[measurement.scale_effect]\nmethod = "sensitivity"\ndrag_per_decade = -0.000001\n', "",
     "requirement[0].output"),
    # a % of a zero-centred error means nothing
    ('expanded_uncertainty = "4 counts"', 'expanded_uncertainty = "5 %"',
     "requirement[0].expanded_uncertainty"),
    # a plain 4 (meant as 4 counts) would be 40 000 counts
    ('expanded_uncertainty = "4 counts"', 'expanded_uncertainty = 4',
     "requirement[0].expanded_uncertainty"),
    # the extrapolation's requirement is an expanded uncertainty
    ('expanded_uncertainty = "4 counts"', 'within = "4 counts"\nprobability = "95 %"',
     "requirement[0].within"),
])
def test_requirement_mistakes_are_refused(old, new, key):
    from simunc.errors import StudyError

    text = STUDY + '\n[[requirement]]\noutput = "drag_coefficient_extrapolated"\n' \
                   'expanded_uncertainty = "4 counts"\n'
    assert old in text
    with pytest.raises(StudyError) as info:
        parse_study(tomllib.loads(text.replace(old, new)))
    assert info.value.key == key
