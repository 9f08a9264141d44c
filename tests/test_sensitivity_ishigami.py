"""simunc.uncertainty.sobol.sobol_indices on models with known Sobol indices.

1. The Ishigami function (T. Ishigami, T. Homma, "An importance quantification
   technique in uncertainty analysis for computer models", Proc. ISUMA '90,
   1990, pp. 398-403 (citation from memory); analytic indices as in A. Saltelli et al., *Global
   Sensitivity Analysis: The Primer*, Wiley, 2008):

       Y = sin X1 + a sin^2 X2 + b X3^4 sin X1,  Xi ~ U(-pi, pi),  a = 7, b = 0.1.

   Derivation (written out here, each Xi uniform so E[g] = (1/2pi) int g):
     E[sin X] = 0, E[sin^2 X] = 1/2, E[sin^4 X] = 3/8, E[X^4] = pi^4/5, E[X^8] = pi^8/9.
     f1(x1) = E[Y|x1] - E[Y] = sin x1 (1 + b pi^4/5)          -> V1 = (1 + b pi^4/5)^2 / 2
     f2(x2) = a (sin^2 x2 - 1/2)                              -> V2 = a^2 (3/8 - 1/4) = a^2/8
     f3(x3) = E[sin X1] (...) = 0                              -> V3 = 0
     f13 = b sin x1 (x3^4 - pi^4/5)                            -> V13 = b^2 (1/2) (pi^8/9 - pi^8/25)
                                                                    = b^2 pi^8 (1/18 - 1/50)
     V12 = V23 = V123 = 0;  V = V1 + V2 + V13.
   S1_i = V_i / V,  ST1 = (V1 + V13) / V,  ST2 = V2 / V,  ST3 = V13 / V.

2. A linear additive model with independent normal inputs, Y = sum c_i X_i:
   V_i = c_i^2 s_i^2, no interactions, so S1_i = ST_i = c_i^2 s_i^2 / sum_j c_j^2 s_j^2
   (derived here: Var(c_i X_i) = c_i^2 s_i^2 and the terms are independent).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats

from simunc.uncertainty.problem import Problem
from simunc.uncertainty.sobol import sobol_indices

A, B = 7.0, 0.1


def ishigami_analytic(a=A, b=B):
    pi = math.pi
    v1 = 0.5 * (1.0 + b * pi**4 / 5.0) ** 2
    v2 = a**2 / 8.0
    v13 = b**2 * pi**8 * (1.0 / 18.0 - 1.0 / 50.0)
    v = v1 + v2 + v13
    s1 = np.array([v1, v2, 0.0]) / v
    st = np.array([v1 + v13, v2, v13]) / v
    return v, s1, st


def _ishigami(x):
    x1, x2, x3 = x["x1"], x["x2"], x["x3"]
    return {"y": np.sin(x1) + A * np.sin(x2) ** 2 + B * x3**4 * np.sin(x1),
            "flat": np.full_like(x1, 2.5)}


def _ishigami_problem():
    u = stats.uniform(loc=-math.pi, scale=2.0 * math.pi)
    return Problem(["x1", "x2", "x3"], [u, u, u], _ishigami)


def test_analytic_values_consistent():
    # The total variance also has the closed form
    # V = a^2/8 + b pi^4/5 + b^2 pi^8/18 + 1/2 (Saltelli et al. 2008); and the
    # familiar rounded indices S1 = (0.314, 0.442, 0), ST = (0.558, 0.442, 0.244)
    # (from memory of Saltelli et al. 2008, Primer, Ishigami example).
    v, s1, st = ishigami_analytic()
    assert v == pytest.approx(A**2 / 8 + B * math.pi**4 / 5 + B**2 * math.pi**8 / 18 + 0.5, rel=1e-14)
    np.testing.assert_allclose(s1, [0.314, 0.442, 0.0], atol=6e-4)
    np.testing.assert_allclose(st, [0.558, 0.442, 0.244], atol=6e-4)


@pytest.fixture(scope="module")
def ishigami_result():
    return sobol_indices(_ishigami_problem(), ["y", "flat"], base_samples=8192, seed=11)


def test_ishigami_first_and_total_indices(ishigami_result):
    _, s1, st = ishigami_analytic()
    table = ishigami_result["y"]
    assert list(table.index) == ["x1", "x2", "x3"]
    assert set(table.columns) >= {"S1", "S1_conf", "ST", "ST_conf"}
    est_s1, conf_s1 = table["S1"].to_numpy(), table["S1_conf"].to_numpy()
    est_st, conf_st = table["ST"].to_numpy(), table["ST_conf"].to_numpy()
    # Confidence half-widths: positive and not absurdly large (so that a huge
    # interval cannot hide a wrong estimate).
    assert np.all(conf_s1 > 0.0) and np.all(conf_st > 0.0)
    assert np.all(conf_s1 < 0.05) and np.all(conf_st < 0.05)
    # Analytic values within three reported half-widths.
    assert np.all(np.abs(est_s1 - s1) <= 3.0 * conf_s1), (est_s1, s1, conf_s1)
    assert np.all(np.abs(est_st - st) <= 3.0 * conf_st), (est_st, st, conf_st)
    # And within an absolute 0.03, independent of the bootstrap.
    np.testing.assert_allclose(est_s1, s1, atol=0.03)
    np.testing.assert_allclose(est_st, st, atol=0.03)
    # Qualitative structure from the analytic values: X3 acts only via interaction.
    assert est_st[2] - est_s1[2] > 0.15


def test_constant_output_gives_zero_indices(ishigami_result):
    # Documented: an output that does not vary gets zeros.
    table = ishigami_result["flat"]
    assert (table.to_numpy() == 0.0).all()


def test_ishigami_seed_reproducible():
    p = _ishigami_problem()
    r1 = sobol_indices(p, ["y"], base_samples=1024, seed=4)["y"]
    r2 = sobol_indices(p, ["y"], base_samples=1024, seed=4)["y"]
    assert r1.equals(r2)


@pytest.mark.parametrize("coeffs, sigmas", [
    ([1.0, 1.0, 1.0, 1.0], [1.0, 2.0, 3.0, 4.0]),
    ([3.0, -2.0, 0.5], [0.1, 0.4, 2.0]),
])
def test_linear_additive_normal(coeffs, sigmas):
    names = [f"x{i}" for i in range(len(coeffs))]
    dists = [stats.norm(loc=10.0 * i, scale=s) for i, s in enumerate(sigmas)]
    c = np.array(coeffs)

    def func(x):
        return {"y": sum(ci * x[n] for ci, n in zip(c, names))}

    table = sobol_indices(Problem(names, dists, func), ["y"], base_samples=4096, seed=2)["y"]
    shares = c**2 * np.array(sigmas) ** 2
    expected = shares / shares.sum()
    s1, st = table["S1"].to_numpy(), table["ST"].to_numpy()
    assert np.all(table["S1_conf"].to_numpy() > 0) and np.all(table["ST_conf"].to_numpy() > 0)
    assert np.all(np.abs(s1 - expected) <= np.maximum(3.0 * table["S1_conf"].to_numpy(), 1e-3))
    assert np.all(np.abs(st - expected) <= np.maximum(3.0 * table["ST_conf"].to_numpy(), 1e-3))
    np.testing.assert_allclose(s1, expected, atol=0.02)
    np.testing.assert_allclose(st, expected, atol=0.02)
    # Additive model: the indices sum to 1.
    assert s1.sum() == pytest.approx(1.0, abs=0.03)
