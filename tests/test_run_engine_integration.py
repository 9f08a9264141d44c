"""A study run through the Monte Carlo engine: adaptive trials, correlations, components.

Check values: the law of propagation of uncertainty with correlation terms
(JCGM 100:2008, eq. 13) evaluated by hand from sensitivity coefficients that
are computed here by central differences of the model, independently of
simunc.uncertainty.lpu; JCGM 101:2008 7.9 for the adaptive stopping rule.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest

import simunc
from simunc.pipeline import prepare

from .conftest import DEMO

pytestmark = pytest.mark.slow  # every test here runs the whole demo


@pytest.fixture(scope="module")
def study():
    return simunc.load_study(DEMO)


def test_adaptive_run_converges_in_whole_batches(study):
    s = replace(study, run=replace(study.run, trials=None))
    r = simunc.run(s)
    info = r.engine.adaptive
    assert info.converged
    assert r.trials == info.batches * info.batch_size and info.batch_size == 10_000  # max(J, 1e4)
    assert info.tolerance["reynolds_ratio"] == pytest.approx(5e-5)  # u = 0.0064: 64e-4 -> 0.5e-4


def test_correlated_transducers_against_gum_formula(study):
    # u^2(y) = sum c_i^2 u_i^2 + 2 c_a c_b r u_a u_b (JCGM 100:2008 eq. 13) for the Mach difference,
    # which the two correlated pressure transducers and the Mach calibration drive.
    prep = prepare(study)
    inputs, problem = list(prep.inputs), prep.problem
    names = [i.name for i in inputs]
    u = np.array([i.standard_uncertainty for i in inputs])
    base = np.zeros((1, len(inputs)))
    c = []
    for j in range(len(inputs)):
        hi, lo = base.copy(), base.copy()
        hi[0, j], lo[0, j] = 1e-3 * u[j], -1e-3 * u[j]
        c.append((problem.evaluate(hi)["mach_difference"][0] - problem.evaluate(lo)["mach_difference"][0])
                 / (2e-3 * u[j]))
    c = np.array(c)
    names_c, r = study.correlation.names, study.correlation.matrix
    assert list(names_c) == names
    var = float(c @ (np.asarray(r) * np.outer(u, u)) @ c)
    result = simunc.run(study, trials=400_000, seed=5)
    u_mc = result.statistics.loc["mach_difference", "standard_uncertainty"]
    assert u_mc == pytest.approx(math.sqrt(var), rel=0.01)
    a, b = names.index("p0 transducer calibration"), names.index("static-pressure transducer")
    assert r[a, b] == pytest.approx(0.8)
    # Without the correlation the spread is different (the cross term is not negligible here).
    var0 = float(np.sum((c * u) ** 2))
    assert abs(math.sqrt(var0) / math.sqrt(var) - 1) > 0.05
    assert any("Sobol indices assume independent inputs" in w for w in result.warnings)


def test_systematic_and_random_components(study):
    r = simunc.run(study, trials=20_000, seed=2)
    comp = r.components.loc["reynolds_ratio"]
    # The LPU parts add in quadrature to the combined u (JCGM 100:2008 eq. 13); the demo's
    # correlated transducers are both systematic, so nothing mixes categories.
    assert comp["mixed_variance"] == 0.0
    assert comp["u_systematic"] ** 2 + comp["u_random"] ** 2 + comp["u_condition"] ** 2 == \
        pytest.approx(comp["u_combined"] ** 2, rel=1e-9)
    # the full-scale day temperature is the condition, not a test error
    assert comp["u_condition"] > comp["u_systematic"] > comp["u_random"] > 0.0
