"""simunc.uncertainty.sobol.sobol_analysis: second-order and grouped indices, GUM budget agreement.

Check values and their sources
------------------------------
1. Ishigami function, a = 7, b = 0.1 (T. Ishigami, T. Homma, Proc. ISUMA '90, 1990; analytic
   indices as in A. Saltelli et al., *Global Sensitivity Analysis: The Primer*, Wiley, 2008):
   V1, V2, V13 are derived in tests/test_sensitivity_ishigami.py (``ishigami_analytic``); here
   the second-order index S13 = V13 / V and S12 = S23 = 0 are added (V12 = V23 = 0 in the same
   derivation: sin^2 x2 enters additively, and f3 = 0).

2. Sobol' G-function g(x) = prod_i (|4 x_i - 2| + a_i) / (1 + a_i), x_i ~ U(0, 1)
   (I. M. Sobol'; analytic indices in A. Saltelli, I. M. Sobol', Reliab. Eng. Syst. Saf. 50
   (1995) 225-239, and A. Saltelli et al., Comput. Phys. Commun. 181 (2010) 259-270 -- from
   memory of those papers).  Written out here: |4 x - 2| ~ U(0, 2) has mean 1 and variance
   1/3, so each factor has mean 1 and variance V_i = (1/3) / (1 + a_i)^2; the factors are
   independent with unit mean, so E[g | x_i] = g_i(x_i) and
       V = prod_i (1 + V_i) - 1,   S1_i = V_i / V,   ST_i = V_i prod_{j != i} (1 + V_j) / V,
   closed index of a group G:  S^c_G = (prod_{i in G} (1 + V_i) - 1) / V,
   total index of G:            ST_G = 1 - S^c_{~G} = 1 - (prod_{j not in G} (1 + V_j) - 1) / V.
   The closed forms are also compared with the reference library SALib
   (SALib.test_functions.Sobol_G.sensitivity_index / total_sensitivity_index), and
   a = [0, 1, 4.5, 9, 99, 99, 99, 99] is SALib's default for that function.

3. Linear model Y = sum c_i X_i with independent normal and rectangular inputs: V_i =
   c_i^2 u_i^2 and no interactions, so S1_i = ST_i = c_i^2 u_i^2 / sum_j c_j^2 u_j^2 (derived
   here).  The GUM budget gives the same shares: u_c^2 = sum c_i^2 u^2(x_i) (JCGM 100:2008,
   5.1.2, eq. (10)) with c_i = df/dx_i (5.1.3); the standard uncertainty of a rectangular
   input of half-width a is a / sqrt(3) (JCGM 100:2008, 4.3.7).

4. Reference library: the design and estimators equal SALib's (SALib.sample.sobol.sample and
   SALib.analyze.sobol.analyze, J. Herman, W. Usher, JOSS 2017), including problem["groups"]
   and calc_second_order=True, and the bootstrap intervals equal SALib's for the same seed.

Tolerances.  The ``*_conf`` columns are half-widths of 95 % bootstrap intervals (about 1.96
standard errors).  The bootstrap resamples the N base points as if they were independent
draws; for scrambled Sobol' points the actual error is smaller (measured while writing these
tests, seeds 1-20, N = 2^13: at most 0.63 half-widths over the Ishigami, G-function and group
indices, 0.03 for the linear model).  So each analytic value must lie INSIDE the reported
interval (``K_CONF = 1``), and every half-width is bounded above so that a wide interval
cannot hide a wrong estimate.  The equalities with SALib are to rounding (rtol 1e-10).
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from simunc.uncertainty.lpu import lpu
from simunc.uncertainty.problem import Problem
from simunc.uncertainty.sobol import (
    FIRST_TOTAL_COLUMNS,
    SobolResult,
    _base_sequence,
    _saltelli_design,
    sobol_analysis,
    sobol_indices,
)

from .test_sensitivity_ishigami import A, B, _ishigami_problem, ishigami_analytic

K_CONF = 1.0          # accepted distance, in 95 % half-widths (see the module docstring)


def _within(est, exact, conf, k=K_CONF):
    est, exact, conf = (np.asarray(v, dtype=float) for v in (est, exact, conf))
    assert np.all(np.abs(est - exact) <= k * conf), (est, exact, conf)


# ---------------------------------------------------------------------------
# 1. Ishigami: second-order indices
# ---------------------------------------------------------------------------
def ishigami_s13(a=A, b=B):
    v, _, _ = ishigami_analytic(a, b)
    v13 = b**2 * math.pi**8 * (1.0 / 18.0 - 1.0 / 50.0)   # derived in test_sensitivity_ishigami
    return v13 / v


@pytest.fixture(scope="module")
def ishigami_second():
    return sobol_analysis(_ishigami_problem(), ["y", "flat"], base_samples=8192, seed=11,
                          second_order=True)


def test_ishigami_s13_analytic_value():
    # S13 = ST3 (X3 acts only through its interaction with X1), ~0.244 (from memory of
    # Saltelli et al. 2008, Primer, Ishigami example).
    _, _, st = ishigami_analytic()
    assert ishigami_s13() == pytest.approx(st[2], rel=1e-14)
    assert ishigami_s13() == pytest.approx(0.244, abs=6e-4)


def test_ishigami_second_order(ishigami_second):
    t = ishigami_second.second_order["y"]
    assert list(t.index) == [("x1", "x2"), ("x1", "x3"), ("x2", "x3")]
    assert t.index.names == ["input_a", "input_b"]
    assert list(t.columns) == ["S2", "S2_conf"]
    exact = [0.0, ishigami_s13(), 0.0]                  # S12, S13, S23 (derivation above)
    conf = t["S2_conf"].to_numpy()
    assert np.all(conf > 0.0) and np.all(conf < 0.06)
    _within(t["S2"], exact, conf)
    np.testing.assert_allclose(t["S2"], exact, atol=0.03)


def test_ishigami_first_total_with_second_order(ishigami_second):
    _, s1, st = ishigami_analytic()
    t = ishigami_second.first_total["y"]
    _within(t["S1"], s1, t["S1_conf"])
    _within(t["ST"], st, t["ST_conf"])
    # For three inputs with V123 = 0: ST1 = S1 + S12 + S13 (definition of ST; Sobol' 2001).
    s2 = ishigami_second.second_order["y"]["S2"]
    assert t.loc["x1", "ST"] == pytest.approx(t.loc["x1", "S1"] + s2.iloc[0] + s2.iloc[1],
                                              abs=0.05)


def test_second_order_does_not_change_first_total(ishigami_second):
    plain = sobol_indices(_ishigami_problem(), ["y", "flat"], base_samples=8192, seed=11)
    for k in ("y", "flat"):
        pd.testing.assert_frame_equal(ishigami_second.first_total[k], plain[k], rtol=0, atol=0)
    assert ishigami_second.evaluations == 8192 * (2 * 3 + 2)


def test_constant_output_second_order_zero(ishigami_second):
    assert (ishigami_second.second_order["flat"].to_numpy() == 0.0).all()
    assert (ishigami_second.first_total["flat"].to_numpy() == 0.0).all()


# ---------------------------------------------------------------------------
# 2. Sobol' G-function: first, total and grouped indices
# ---------------------------------------------------------------------------
G_A = np.array([0.0, 1.0, 4.5, 9.0, 99.0, 99.0, 99.0, 99.0])
G_NAMES = [f"x{i + 1}" for i in range(len(G_A))]


def g_partial_variances(a=G_A):
    return (1.0 / 3.0) / (1.0 + np.asarray(a)) ** 2


def g_analytic(a=G_A):
    vi = g_partial_variances(a)
    v = np.prod(1.0 + vi) - 1.0
    s1 = vi / v
    st = vi * np.prod(1.0 + vi) / (1.0 + vi) / v
    return v, s1, st


def g_closed(members, a=G_A):
    vi = g_partial_variances(a)
    v = np.prod(1.0 + vi) - 1.0
    inside = np.isin(G_NAMES, members)
    return (np.prod(1.0 + vi[inside]) - 1.0) / v, 1.0 - (np.prod(1.0 + vi[~inside]) - 1.0) / v


def _g_function(x):
    y = 1.0
    for ai, n in zip(G_A, G_NAMES):
        y = y * (np.abs(4.0 * x[n] - 2.0) + ai) / (1.0 + ai)
    return {"y": y, "flat": np.full_like(x[G_NAMES[0]], 1.0)}


def _g_problem():
    return Problem(G_NAMES, [stats.uniform()] * len(G_NAMES), _g_function)


def test_g_function_closed_forms_match_salib():
    # Reference library: SALib.test_functions.Sobol_G (analytic indices of the same function).
    from SALib.test_functions import Sobol_G

    _, s1, st = g_analytic()
    np.testing.assert_allclose(s1, Sobol_G.sensitivity_index(G_A), rtol=1e-12)
    np.testing.assert_allclose(st, Sobol_G.total_sensitivity_index(G_A), rtol=1e-12)
    # Rounded first-order values listed beside SALib's Sobol_G (x1 0.7165 (sic), x2 0.1791,
    # x3 0.0237, x4 0.0072) -- the first agrees to 4e-4 only.
    np.testing.assert_allclose(s1[:4], [0.7165, 0.1791, 0.0237, 0.0072], atol=4e-4)
    # A group of every input: closed index 1, total 1 (definition).
    assert g_closed(G_NAMES) == pytest.approx((1.0, 1.0), abs=1e-15)
    # A singleton group is the input itself.
    assert g_closed(["x3"]) == pytest.approx((s1[2], st[2]), rel=1e-12)


@pytest.fixture(scope="module")
def g_result():
    return sobol_analysis(_g_problem(), ["y", "flat"], base_samples=8192, seed=5,
                          groups={"x1 and x2": ["x2", "x1"], "tail": ["x5", "x6", "x7", "x8"]})


def test_g_function_first_and_total(g_result):
    _, s1, st = g_analytic()
    t = g_result.first_total["y"]
    assert list(t.index) == G_NAMES and list(t.columns) == FIRST_TOTAL_COLUMNS
    assert np.all(t["S1_conf"] > 0) and np.all(t["S1_conf"] < 0.04)
    assert np.all(t["ST_conf"] > 0) and np.all(t["ST_conf"] < 0.04)
    _within(t["S1"], s1, t["S1_conf"])
    _within(t["ST"], st, t["ST_conf"])
    np.testing.assert_allclose(t["S1"], s1, atol=0.03)
    np.testing.assert_allclose(t["ST"], st, atol=0.03)


def test_g_function_grouped_indices(g_result):
    t = g_result.groups["y"]
    assert list(t.index) == ["x1 and x2", "tail", "x3", "x4"]
    assert t.index.name == "group"
    assert g_result.group_members == {"x1 and x2": ("x1", "x2"), "tail": ("x5", "x6", "x7", "x8"),
                                      "x3": ("x3",), "x4": ("x4",)}
    closed_12, total_12 = g_closed(["x1", "x2"])
    closed_tail, total_tail = g_closed(["x5", "x6", "x7", "x8"])
    assert closed_12 == pytest.approx(0.9549, abs=1e-4)       # value of the closed form
    _within(t.loc[["x1 and x2", "tail"], "S1"], [closed_12, closed_tail],
            t.loc[["x1 and x2", "tail"], "S1_conf"])
    _within(t.loc[["x1 and x2", "tail"], "ST"], [total_12, total_tail],
            t.loc[["x1 and x2", "tail"], "ST_conf"])
    assert t.loc["x1 and x2", "S1_conf"] < 0.05 and t.loc["x1 and x2", "ST_conf"] < 0.05
    # Interaction of x1 and x2 is in the closed index, not in the sum of the first orders.
    ft = g_result.first_total["y"]
    assert t.loc["x1 and x2", "S1"] > ft.loc["x1", "S1"] + ft.loc["x2", "S1"] + 0.03
    # The singleton groups reuse the ungrouped runs: the per-input values, up to the
    # centring over the grouped run blocks (SALib's; ST is invariant to it).
    single = t.loc[["x3", "x4"]].rename_axis("input")
    pd.testing.assert_frame_equal(single[["ST", "ST_conf"]], ft.loc[["x3", "x4"], ["ST", "ST_conf"]],
                                  rtol=1e-12)
    assert np.all(np.abs(single["S1"] - ft.loc[["x3", "x4"], "S1"]) < 1e-3 * single["S1_conf"])
    # N (d + 2) runs plus N per group of two or more inputs.
    assert g_result.evaluations == 8192 * (8 + 2) + 2 * 8192


def test_g_function_constant_output_groups_zero(g_result):
    assert (g_result.groups["flat"].to_numpy() == 0.0).all()


def test_empty_grouping_gives_singletons():
    p = _ishigami_problem()
    r = sobol_analysis(p, ["y"], base_samples=512, seed=3, groups={})
    pd.testing.assert_frame_equal(r.groups["y"].rename_axis("input"), r.first_total["y"],
                                  rtol=1e-12)
    assert r.evaluations == 512 * 5


# ---------------------------------------------------------------------------
# 3. Linear model: Sobol indices, analytic shares and the GUM budget
# ---------------------------------------------------------------------------
LIN_C = np.array([2.0, -0.5, 1.5, 4.0])
LIN_NAMES = ["n1", "n2", "r1", "r2"]
LIN_HALF_WIDTH = {"r1": 0.6, "r2": 0.05}           # rectangular inputs
LIN_SIGMA = {"n1": 0.1, "n2": 0.8}                 # normal inputs


def _linear_problem():
    dists = [stats.norm(loc=1.0, scale=LIN_SIGMA["n1"]), stats.norm(loc=-3.0, scale=LIN_SIGMA["n2"]),
             stats.uniform(loc=5.0 - LIN_HALF_WIDTH["r1"], scale=2 * LIN_HALF_WIDTH["r1"]),
             stats.uniform(loc=-LIN_HALF_WIDTH["r2"], scale=2 * LIN_HALF_WIDTH["r2"])]
    return Problem(LIN_NAMES, dists,
                   lambda x: {"y": sum(c * x[n] for c, n in zip(LIN_C, LIN_NAMES))})


def test_linear_model_sobol_and_gum_budget():
    u = np.array([LIN_SIGMA["n1"], LIN_SIGMA["n2"],
                  LIN_HALF_WIDTH["r1"] / math.sqrt(3.0),        # JCGM 100:2008, 4.3.7
                  LIN_HALF_WIDTH["r2"] / math.sqrt(3.0)])
    share = LIN_C**2 * u**2 / np.sum(LIN_C**2 * u**2)          # derived (module docstring)
    problem = _linear_problem()

    budget = lpu(problem).budget("y")
    rows = budget[budget["kind"] == "input"].loc[LIN_NAMES]
    np.testing.assert_allclose(rows["sensitivity"], LIN_C, rtol=1e-9)      # JCGM 100, 5.1.3
    np.testing.assert_allclose(rows["standard_uncertainty"], u, rtol=1e-12)
    np.testing.assert_allclose(rows["share_percent"], 100.0 * share, rtol=1e-9)  # eq. (10)

    t = sobol_indices(problem, ["y"], base_samples=8192, seed=21)["y"]
    assert np.all(t["S1_conf"] < 0.03) and np.all(t["ST_conf"] < 0.03)
    _within(t["S1"], share, t["S1_conf"])
    _within(t["ST"], share, t["ST_conf"])
    # The Sobol first-order indices agree with the GUM shares within the intervals.
    _within(t["S1"], rows["share_percent"] / 100.0, t["S1_conf"])


# ---------------------------------------------------------------------------
# 4. Same design, estimators and intervals as the reference library SALib
# ---------------------------------------------------------------------------
def _salib(problem, y_of_u, n, seed, second_order=False, groups=None):
    from SALib.analyze import sobol as salib_analyze
    from SALib.sample import sobol as salib_sample

    spec = {"num_vars": problem.dimension, "names": list(problem.names),
            "bounds": [[0.0, 1.0]] * problem.dimension}
    if groups is not None:
        spec["groups"] = groups
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        u = salib_sample.sample(spec, n, calc_second_order=second_order, scramble=True, seed=seed)
        res = salib_analyze.analyze(spec, y_of_u(u), calc_second_order=second_order,
                                    conf_level=0.95, num_resamples=200, seed=seed)
    return u, res


def test_design_equals_salib_sample():
    p = _ishigami_problem()
    for second in (False, True):
        u, _ = _salib(p, lambda u: p.evaluate_unit(u)["y"], 64, 7, second)
        np.testing.assert_array_equal(_saltelli_design(_base_sequence(64, 3, 7), second), u)


def test_first_total_equal_salib():
    # The path simunc.pipeline uses (second_order=False): same numbers as SALib.
    p = _ishigami_problem()
    _, ref = _salib(p, lambda u: p.evaluate_unit(u)["y"], 1024, 9)
    t = sobol_indices(p, ["y"], 1024, 9)["y"]
    for k in FIRST_TOTAL_COLUMNS:
        np.testing.assert_allclose(t[k], ref[k], rtol=1e-10, atol=1e-13)


def test_second_order_equal_salib():
    p = _ishigami_problem()
    _, ref = _salib(p, lambda u: p.evaluate_unit(u)["y"], 1024, 9, second_order=True)
    r = sobol_analysis(p, ["y"], 1024, 9, second_order=True)
    iu = np.triu_indices(3, 1)
    np.testing.assert_allclose(r.second_order["y"]["S2"], ref["S2"][iu], rtol=1e-10, atol=1e-13)
    np.testing.assert_allclose(r.second_order["y"]["S2_conf"], ref["S2_conf"][iu], rtol=1e-10,
                               atol=1e-13)
    # Total indices are invariant to the centring SALib applies over all 2d + 2 run blocks;
    # the first-order ones are reported from the d + 2 blocks (so that they do not move with
    # second_order) and differ from SALib's second-order run by far less than their interval.
    t = r.first_total["y"]
    np.testing.assert_allclose(t["ST"], ref["ST"], rtol=1e-10, atol=1e-13)
    assert np.all(np.abs(t["S1"] - ref["S1"]) < 1e-3 * t["S1_conf"])


def test_groups_equal_salib():
    p = _g_problem()
    groups = {"g12": ["x1", "x2"], "tail": ["x5", "x6", "x7", "x8"]}
    membership = ["g12", "g12", "x3", "x4", "tail", "tail", "tail", "tail"]
    _, ref = _salib(p, lambda u: p.evaluate_unit(u)["y"], 512, 4, groups=membership)
    t = sobol_analysis(p, ["y"], 512, 4, groups=groups).groups["y"]
    order = ["g12", "x3", "x4", "tail"]          # SALib's order: first appearance
    for k in FIRST_TOTAL_COLUMNS:
        np.testing.assert_allclose(t.loc[order, k], ref[k], rtol=1e-10, atol=1e-13)


# ---------------------------------------------------------------------------
# 5. Validation, reproducibility, result shape
# ---------------------------------------------------------------------------
@pytest.mark.parametrize("groups, message", [
    ({"thermal": ["x1", "x9"]}, r"group 'thermal' names unknown input 'x9'"),
    ({"a": ["x1"], "b": ["x2", "x1"]}, r"group 'b' lists input 'x1' and in group 'a'"),
    ({"a": ["x1", "x1"]}, r"group 'a' lists input 'x1' twice"),
    ({"empty": []}, r"group 'empty' is empty"),
    ({"s": "x1"}, r"group 's' must be a list of input names"),
    ({"x3": ["x1", "x2"]}, r"group 'x3' has the name of input 'x3'"),
    ([("a", ["x1"])], r"groups must be a mapping"),
])
def test_bad_groups_rejected(groups, message):
    with pytest.raises(ValueError, match=message) as info:
        sobol_analysis(_ishigami_problem(), ["y"], 64, 1, groups=groups)
    assert "\n" not in str(info.value)


def test_bad_arguments_rejected():
    p = _ishigami_problem()
    with pytest.raises(KeyError, match="nope"):
        sobol_analysis(p, ["nope"], 64, 1)
    for kw in ({"base_samples": 1}, {"num_resamples": 1}, {"confidence": 1.0}):
        with pytest.raises(ValueError):
            sobol_analysis(p, ["y"], **{"base_samples": 64, **kw})
    bad = Problem(["x"], [stats.uniform()], lambda x: {"y": np.log(x["x"] - 0.5)})
    with pytest.raises(FloatingPointError, match="'y'"):
        sobol_analysis(bad, ["y"], 64, 1)


def test_reproducible_for_same_seed():
    p = _g_problem()
    kw = dict(base_samples=256, second_order=True, groups={"g": ["x1", "x2"]})
    r1, r2 = sobol_analysis(p, ["y"], seed=8, **kw), sobol_analysis(p, ["y"], seed=8, **kw)
    r3 = sobol_analysis(p, ["y"], seed=9, **kw)
    for part in ("first_total", "second_order", "groups"):
        assert getattr(r1, part)["y"].equals(getattr(r2, part)["y"])
        assert not getattr(r1, part)["y"].equals(getattr(r3, part)["y"])


def test_result_shape_without_options():
    r = sobol_analysis(_ishigami_problem(), ["y"], 256, 2)
    assert isinstance(r, SobolResult)
    assert r.second_order is None and r.groups is None and r.group_members is None
    assert (r.evaluations, r.base_samples, r.num_resamples, r.confidence, r.seed) == \
        (256 * 5, 256, 200, 0.95, 2)
    t = r.first_total["y"]
    assert t.index.name == "input" and list(t.columns) == FIRST_TOTAL_COLUMNS
    pd.testing.assert_frame_equal(t, sobol_indices(_ishigami_problem(), ["y"], 256, 2)["y"])
