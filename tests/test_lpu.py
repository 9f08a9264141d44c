"""simunc.uncertainty.lpu: GUM uncertainty framework (JCGM 100:2008) and its validation (JCGM 101:2008, 8).

Check values come from
* the ``uncertainties`` package propagating the non-linear models directly
  (analytic derivatives through ``uncertainties.umath``), as a reference LPU;
* closed forms written here: the linear-model variance with correlation terms
  (JCGM 100:2008, eq. (13)), the exact distribution of a sum of uniforms
  (Irwin-Hall), normal and Student-t quantiles from scipy.stats;
* JCGM 101:2008 9.2.2-9.2.4 and JCGM 100:2008 H.1, marked where recalled;
* Monte Carlo runs of simunc.uncertainty.propagate, with tolerances that are multiples of
  the Monte Carlo standard error (five standard errors, as in
  tests/test_propagate_jcgm101.py).
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import uncertainties
from scipy import optimize, stats
from uncertainties import umath

from simunc.uncertainty.distributions import coverage_factor
from simunc.uncertainty.lpu import (
    DEFAULT_STEP,
    lpu,
    numerical_tolerance,
    sensitivity_coefficients,
    validate,
    welch_satterthwaite,
)
from simunc.uncertainty.problem import Problem
from simunc.uncertainty.propagate import monte_carlo, summarize

from .test_propagate_jcgm101 import irwin_hall_cdf, irwin_hall_pdf

K_SE = 5.0
EPS = np.finfo(float).eps
SQRT3 = math.sqrt(3.0)


def rect(centre, half_width):
    return stats.uniform(loc=centre - half_width, scale=2.0 * half_width)


# ---------------------------------------------------------------------------
# (a) Non-linear models against the uncertainties package
# ---------------------------------------------------------------------------
NL_NAMES = ["x1", "x2", "x3"]
NL_MEANS = np.array([0.8, 1.0, 1.5])
NL_U = np.array([0.05, 0.08, 0.06])
NL_R = np.array([[1.0, 0.5, -0.3],
                 [0.5, 1.0, 0.2],
                 [-0.3, 0.2, 1.0]])


def _nonlinear_problem():
    # x3 rectangular: the GUF uses only its mean and standard deviation.
    dists = [stats.norm(NL_MEANS[0], NL_U[0]), stats.norm(NL_MEANS[1], NL_U[1]),
             rect(NL_MEANS[2], NL_U[2] * SQRT3)]
    return Problem(NL_NAMES, dists, lambda x: {
        "ratio": x["x1"] * x["x2"] / x["x3"],
        "exp_sin": np.exp(x["x1"]) * np.sin(x["x2"]),
    })


def _fd_errors(third_derivatives, f_value):
    """Bounds on the central-difference errors |dc_i| of the sensitivity coefficients.

    Per input: truncation h_i^2 |d3f/dx_i3| / 6 (Taylor remainder of the central
    difference; the third derivative taken at the mean, the step being 0.01 u_i)
    plus rounding 4 eps |f| / h_i.
    """
    h = DEFAULT_STEP * NL_U
    return h**2 * np.abs(third_derivatives) / 6.0 + 4.0 * EPS * abs(f_value) / h


def _fd_bound(third_derivatives, f_value):
    """Bound on |u_c(FD) - u_c(exact)|: |delta u_c| <= sqrt(dc^T V dc) <= sum |dc_i| u_i."""
    return float(np.sum(_fd_errors(third_derivatives, f_value) * NL_U))


def test_nonlinear_against_uncertainties_package():
    r = lpu(_nonlinear_problem(), correlation=NL_R)
    cov_in = NL_R * np.outer(NL_U, NL_U)
    x1, x2, x3 = uncertainties.correlated_values(NL_MEANS, cov_in)
    ref_ratio = x1 * x2 / x3
    ref_exp_sin = umath.exp(x1) * umath.sin(x2)

    m1, m2, m3 = NL_MEANS
    # Pure third partial derivatives at the means (hand differentiation).
    d3_ratio = [0.0, 0.0, -6.0 * m1 * m2 / m3**4]
    d3_exp_sin = [math.exp(m1) * math.sin(m2), -math.exp(m1) * math.cos(m2), 0.0]
    bound_ratio = _fd_bound(d3_ratio, m1 * m2 / m3)
    bound_exp_sin = _fd_bound(d3_exp_sin, math.exp(m1) * math.sin(m2))
    # The bounds are tiny (relative ~1e-7): the 10x safety factor covers the
    # neglected higher-order remainder; they are far below any physical meaning.
    assert bound_ratio < 1e-6 * ref_ratio.std_dev and bound_exp_sin < 1e-6 * ref_exp_sin.std_dev

    e = r.estimates
    assert e.loc["ratio", "value"] == pytest.approx(ref_ratio.nominal_value, rel=1e-15)
    assert e.loc["exp_sin", "value"] == pytest.approx(ref_exp_sin.nominal_value, rel=1e-15)
    assert e.loc["ratio", "standard_uncertainty"] == pytest.approx(ref_ratio.std_dev,
                                                                   abs=10 * bound_ratio)
    assert e.loc["exp_sin", "standard_uncertainty"] == pytest.approx(ref_exp_sin.std_dev,
                                                                     abs=10 * bound_exp_sin)
    # Output covariance and correlation against the package's own.
    ref_cov = np.array(uncertainties.covariance_matrix([ref_ratio, ref_exp_sin]), dtype=float)
    np.testing.assert_allclose(r.covariance.to_numpy(), ref_cov, rtol=1e-7)
    ref_r12 = ref_cov[0, 1] / math.sqrt(ref_cov[0, 0] * ref_cov[1, 1])
    assert r.correlation.loc["ratio", "exp_sin"] == pytest.approx(ref_r12, abs=1e-7)
    assert r.correlation.loc["exp_sin", "ratio"] == r.correlation.loc["ratio", "exp_sin"]
    # Sensitivity coefficients against the package's analytic derivatives
    # (derivatives with respect to the independent variables of the uncorrelated case).
    y1, y2, y3 = (uncertainties.ufloat(m, s) for m, s in zip(NL_MEANS, NL_U))
    d_ratio = (y1 * y2 / y3).derivatives
    np.testing.assert_allclose(r.sensitivities.loc["ratio"].to_numpy(),
                               [d_ratio[y1], d_ratio[y2], d_ratio[y3]], rtol=0.0,
                               atol=10 * _fd_errors(d3_ratio, m1 * m2 / m3).max())


def test_nonlinear_uncorrelated_matches_package():
    # Without R: the same check, and the budget adds up to u_c^2 with no correlation rows.
    r = lpu(_nonlinear_problem())
    x1, x2, x3 = (uncertainties.ufloat(m, s) for m, s in zip(NL_MEANS, NL_U))
    ref = umath.exp(x1) * umath.sin(x2)
    m1, m2, _ = NL_MEANS
    bound = _fd_bound([math.exp(m1) * math.sin(m2), -math.exp(m1) * math.cos(m2), 0.0],
                      math.exp(m1) * math.sin(m2))
    assert r.estimates.loc["exp_sin", "standard_uncertainty"] == pytest.approx(ref.std_dev,
                                                                              abs=10 * bound)
    b = r.budget("exp_sin")
    assert list(b.index) == NL_NAMES and set(b["kind"]) == {"input"}
    assert b["contribution"].sum() == pytest.approx(ref.std_dev**2, abs=30 * bound * ref.std_dev)
    assert b["share_percent"].sum() == pytest.approx(100.0, rel=1e-12)
    assert b.loc["x3", "contribution"] == pytest.approx(0.0, abs=1e-20)  # no x3 in exp_sin


def test_one_vectorized_call_with_2d_plus_1_rows():
    calls = []
    base = _nonlinear_problem()

    def func(x):
        calls.append(len(x["x1"]))
        return base.func(x)

    p = Problem(base.names, base.distributions, func)
    r = lpu(p, correlation=NL_R)
    assert calls == [2 * 3 + 1]
    np.testing.assert_allclose(r.steps, DEFAULT_STEP * NL_U, rtol=1e-12)
    y0, c = sensitivity_coefficients(p, ["ratio"])
    assert list(c.index) == ["ratio"] and list(c.columns) == NL_NAMES
    assert y0["ratio"] == pytest.approx(NL_MEANS[0] * NL_MEANS[1] / NL_MEANS[2], rel=1e-15)


# ---------------------------------------------------------------------------
# (b) Linear model: analytic u_c with correlation terms (JCGM 100:2008, eq. (13))
# ---------------------------------------------------------------------------
def test_linear_model_with_correlations_analytic():
    a = np.array([2.0, -3.0, 0.5])
    b = np.array([1.0, 1.0, 0.0])
    u = np.array([0.1, 0.2, 0.4])
    rr = {(0, 1): 0.3, (0, 2): -0.5, (1, 2): 0.1}
    R = np.eye(3)
    for (i, j), v in rr.items():
        R[i, j] = R[j, i] = v
    p = Problem(["p", "q", "s"], [stats.norm(1.0, u[0]), rect(-2.0, u[1] * SQRT3),
                                  stats.norm(10.0, u[2])],
                lambda x: {"y": 2.0 * x["p"] - 3.0 * x["q"] + 0.5 * x["s"],
                           "z": x["p"] + x["q"]})
    res = lpu(p, correlation=R)

    # u^2 = sum c_i^2 u_i^2 + 2 sum_{i<j} c_i c_j r_ij u_i u_j, written out.
    var_y = sum(a[i] ** 2 * u[i] ** 2 for i in range(3)) + 2.0 * sum(
        a[i] * a[j] * v * u[i] * u[j] for (i, j), v in rr.items())
    var_z = sum(b[i] ** 2 * u[i] ** 2 for i in range(3)) + 2.0 * sum(
        b[i] * b[j] * v * u[i] * u[j] for (i, j), v in rr.items())
    cov_yz = sum(a[i] * b[j] * R[i, j] * u[i] * u[j] for i in range(3) for j in range(3))
    e = res.estimates
    assert e.loc["y", "value"] == pytest.approx(2.0 + 6.0 + 5.0, rel=1e-14)
    assert e.loc["y", "standard_uncertainty"] == pytest.approx(math.sqrt(var_y), rel=1e-9)
    assert e.loc["z", "standard_uncertainty"] == pytest.approx(math.sqrt(var_z), rel=1e-9)
    assert res.covariance.loc["y", "z"] == pytest.approx(cov_yz, rel=1e-9)
    assert res.correlation.loc["y", "z"] == pytest.approx(
        cov_yz / math.sqrt(var_y * var_z), rel=1e-9)
    assert res.correlation.loc["y", "y"] == 1.0
    np.testing.assert_allclose(res.sensitivities.loc["y"], a, rtol=1e-9)

    # Budget: input rows c_i^2 u_i^2, correlation rows 2 c_i c_j r_ij u_i u_j.
    bud = res.budget("y")
    assert list(bud.index) == ["p", "q", "s", "r(p, q)", "r(p, s)", "r(q, s)"]
    assert list(bud["kind"]) == ["input"] * 3 + ["correlation"] * 3
    for i, n in enumerate("pqs"):
        assert bud.loc[n, "contribution"] == pytest.approx(a[i] ** 2 * u[i] ** 2, rel=1e-9)
        assert bud.loc[n, "uncertainty_component"] == pytest.approx(abs(a[i]) * u[i], rel=1e-9)
        assert bud.loc[n, "standard_uncertainty"] == pytest.approx(u[i], rel=1e-12)
    names = "pqs"
    for (i, j), v in rr.items():
        row = bud.loc[f"r({names[i]}, {names[j]})"]
        assert row["correlation"] == v
        assert row["contribution"] == pytest.approx(2 * a[i] * a[j] * v * u[i] * u[j], rel=1e-9)
    assert bud["contribution"].sum() == pytest.approx(var_y, rel=1e-9)
    assert bud["share_percent"].sum() == pytest.approx(100.0, rel=1e-9)
    # 2 * 2 * (-3) * 0.3 * 0.1 * 0.2 < 0: a negative correlation term and share.
    assert bud.loc["r(p, q)", "share_percent"] < 0.0
    # 95 % under the normal assumption: k = z_0.975 = 1.96 (JCGM 100:2008, G.1.3).
    assert e.loc["y", "coverage_factor"] == pytest.approx(stats.norm.ppf(0.975), rel=1e-14)
    assert e.loc["y", "expanded_uncertainty"] == pytest.approx(
        stats.norm.ppf(0.975) * math.sqrt(var_y), rel=1e-9)
    assert e.loc["y", "high"] - e.loc["y", "low"] == pytest.approx(
        2 * e.loc["y", "expanded_uncertainty"], rel=1e-12)

    # The same R as a labelled DataFrame (shuffled order) and as a mapping.
    frame = pd.DataFrame(R, index=list("pqs"), columns=list("pqs")).loc[list("sqp"), list("qsp")]
    pairs = {("p", "q"): 0.3, ("s", "p"): -0.5, ("q", "s"): 0.1}
    for other in (lpu(p, correlation=frame), lpu(p, correlation=pairs)):
        pd.testing.assert_frame_equal(other.estimates, res.estimates)


def test_fully_correlated_and_anticorrelated_inputs():
    # y = x1 - x2 with equal u: r = +1 cancels exactly, r = -1 doubles u (hand calculation).
    p = Problem(["x1", "x2"], [stats.norm(5.0, 0.3), stats.norm(5.0, 0.3)],
                lambda x: {"y": x["x1"] - x["x2"]})
    assert lpu(p, correlation={("x1", "x2"): 1.0}).estimates.loc["y", "standard_uncertainty"] == \
        pytest.approx(0.0, abs=1e-12)
    assert lpu(p, correlation={("x1", "x2"): -1.0}).estimates.loc["y", "standard_uncertainty"] == \
        pytest.approx(0.6, rel=1e-9)
    assert lpu(p).estimates.loc["y", "standard_uncertainty"] == pytest.approx(0.3 * math.sqrt(2),
                                                                              rel=1e-9)


# ---------------------------------------------------------------------------
# (c) JCGM 101:2008 9.2: additive model, GUF validated (or not) against MC
# ---------------------------------------------------------------------------
def _additive(dists):
    return Problem(["X1", "X2", "X3", "X4"], dists,
                   lambda x: {"y": x["X1"] + x["X2"] + x["X3"] + x["X4"]})


def _mc_interval(problem, trials, chunks, seed):
    """Monte Carlo 95 % probabilistically symmetric interval from ``chunks`` runs pooled.

    Chunks (different seeds, each one vectorized run) keep the memory small.
    """
    y = np.concatenate([monte_carlo(problem, trials // chunks, seed + k)[1]["y"]
                        for k in range(chunks)])
    return summarize(y, 0.95), y.size


def test_numerical_tolerance_rule():
    # JCGM 101:2008 7.9.2: u = c x 10^l, c with n_dig digits, delta = 10^l / 2 (hand values).
    assert numerical_tolerance(2.0, 1) == 0.5
    assert numerical_tolerance(2.0, 2) == 0.05
    assert numerical_tolerance(2.0, 3) == pytest.approx(0.005, rel=1e-12)
    assert numerical_tolerance(10.15, 2) == 0.5      # 10 x 10^0
    assert numerical_tolerance(10.15, 1) == 5.0      # 1 x 10^1
    assert numerical_tolerance(0.0347, 2) == pytest.approx(0.0005, rel=1e-12)  # 35 x 10^-3
    assert numerical_tolerance(0.996, 2) == pytest.approx(0.05, rel=1e-12)    # 10 x 10^-1
    assert numerical_tolerance(0.0, 2) == 0.0
    with pytest.raises(ValueError):
        numerical_tolerance(1.0, 0)
    with pytest.raises(ValueError):
        numerical_tolerance(-1.0, 2)


def test_9_2_2_normal_inputs_validated():
    # JCGM 101:2008 9.2.2 (from memory of JCGM 101, Table 2): GUF and MCM both
    # u(y) = 2.00 and [-3.92, 3.92].  GUF interval +-2 z_0.975 = +-3.9199 exactly.
    p = _additive([stats.norm(0.0, 1.0)] * 4)
    r = lpu(p)
    e = r.estimates.loc["y"]
    assert e["standard_uncertainty"] == pytest.approx(2.0, rel=1e-9)
    assert e["high"] == pytest.approx(2.0 * stats.norm.ppf(0.975), rel=1e-9)
    assert e["high"] == pytest.approx(3.92, abs=0.005)

    m = 1_000_000
    s, _ = _mc_interval(p, m, 1, seed=9202)
    v = validate(r, {"y": s}, n_digits=2).loc["y"]
    # Y is exactly normal, so d_low and d_high are pure MC error:
    se_q = math.sqrt(0.975 * 0.025 / m) / stats.norm.pdf(e["high"], scale=2.0)  # ~0.0053
    assert v["d_low"] < K_SE * se_q and v["d_high"] < K_SE * se_q
    assert v["delta"] == 0.05 and K_SE * se_q < v["delta"]
    assert v["validated"]


def test_9_2_3_rectangular_inputs_validation_depends_on_n_dig():
    # JCGM 101:2008 9.2.3: four rectangular inputs of u = 1 (half-width sqrt 3).
    # (from memory of JCGM 101, Table 3): GUF [-3.92, 3.92], MCM [-3.88, 3.88].
    # With u(y) = 2.0 the 7.9.2 rule gives delta = 0.05 at n_dig = 2, above d = 0.04, so the
    # GUF passes at n_dig = 1 and 2 and fails only at n_dig = 3 (independent calculation
    # below).  The pattern "fails at 2, passes at 1" is that of 9.2.4 (next test).
    p = _additive([rect(0.0, SQRT3)] * 4)
    r = lpu(p)
    e = r.estimates.loc["y"]
    assert e["standard_uncertainty"] == pytest.approx(2.0, rel=1e-9)
    guf_q = 2.0 * stats.norm.ppf(0.975)
    assert e["high"] == pytest.approx(guf_q, rel=1e-9)

    # Exact 97.5 % quantile: Y = sqrt3 (2 V - 4), V ~ Irwin-Hall(4).
    exact_q = optimize.brentq(lambda y: irwin_hall_cdf((y / SQRT3 + 4) / 2, 4) - 0.975,
                              0.0, 4 * SQRT3, xtol=1e-13)
    assert exact_q == pytest.approx(3.88, abs=0.005)
    d_exact = guf_q - exact_q  # 3.91993 - 3.87941 = 0.04052
    assert d_exact == pytest.approx(0.0405, abs=1e-4)

    # The exact interval in place of an MC one: delta = 0.5 / 0.05 / 0.005 at n_dig 1 / 2 / 3.
    exact = {"y": (-exact_q, exact_q)}
    got = {n: validate(r, exact, n_digits=n).loc["y"] for n in (1, 2, 3)}
    assert [g["delta"] for g in got.values()] == pytest.approx([0.5, 0.05, 0.005], rel=1e-12)
    assert [bool(g["validated"]) for g in got.values()] == [True, True, False]
    assert got[2]["d_low"] == pytest.approx(d_exact, rel=1e-9)

    # Monte Carlo, 10^7 trials: endpoint SE = sqrt(.975 .025 / M) / f(y_q) = 0.0015,
    # so the n_dig = 2 margin delta - d = 0.0095 is over 6 SE.
    m = 10_000_000
    s, m = _mc_interval(p, m, 5, seed=9203)
    se_q = math.sqrt(0.975 * 0.025 / m) / (irwin_hall_pdf((exact_q / SQRT3 + 4) / 2, 4)
                                            / (2 * SQRT3))
    assert s["high"] == pytest.approx(exact_q, abs=K_SE * se_q)
    assert s["low"] == pytest.approx(-exact_q, abs=K_SE * se_q)
    assert K_SE * se_q < 0.05 - d_exact
    mc = {n: validate(r, {"y": s}, n_digits=n).loc["y"] for n in (1, 2, 3)}
    assert [bool(g["validated"]) for g in mc.values()] == [True, True, False]
    assert mc[2]["d_high"] == pytest.approx(d_exact, abs=K_SE * se_q)


def test_9_2_4_unequal_rectangular_not_validated_at_two_digits():
    # JCGM 101:2008 9.2.4: X1..X3 rectangular with u = 1, X4 with u = 10
    # (from memory of JCGM 101, Table 4): u(y) = 10.15, GUF [-19.9, 19.9],
    # MCM [-17.0, 17.0].  d ~ 2.9: above delta = 0.5 (n_dig = 2), below 5 (n_dig = 1).
    p = _additive([rect(0.0, SQRT3)] * 3 + [rect(0.0, 10 * SQRT3)])
    r = lpu(p)
    e = r.estimates.loc["y"]
    assert e["standard_uncertainty"] == pytest.approx(math.sqrt(103.0), rel=1e-9)
    assert e["high"] == pytest.approx(19.9, abs=0.05)
    s, _ = _mc_interval(p, 1_000_000, 1, seed=9204)
    assert s["high"] == pytest.approx(17.0, abs=0.05)  # MC SE here ~0.01
    v2 = validate(r, {"y": s}, n_digits=2).loc["y"]
    v1 = validate(r, {"y": s}, n_digits=1).loc["y"]
    assert v2["delta"] == 0.5 and v1["delta"] == 5.0
    assert v2["d_low"] == pytest.approx(2.9, abs=0.1) and v2["d_high"] == pytest.approx(2.9, abs=0.1)
    assert not v2["validated"] and v1["validated"]


def test_validate_accepts_tables_and_checks_coverage_probability():
    p = _additive([stats.norm()] * 4)
    r = lpu(p)
    table = pd.DataFrame([{"output": "y", "low": -3.9, "high": 3.95, "coverage_probability": 0.95}]
                         ).set_index("output")
    v = validate(r, table)
    assert list(v.columns)[6:9] == ["d_low", "d_high", "delta"]
    assert list(v.columns)[-3:] == ["verdict", "trials_needed", "validated"]
    assert v.loc["y", "verdict"] == ("validated" if v.loc["y", "validated"] else "not validated")
    assert v.loc["y", "d_low"] == pytest.approx(abs(-2 * stats.norm.ppf(0.975) + 3.9), rel=1e-9)
    assert v.loc["y", "d_high"] == pytest.approx(abs(2 * stats.norm.ppf(0.975) - 3.95), rel=1e-9)
    # delta from a given u (e.g. the MC one) instead of the GUF u_c.
    assert validate(r, {"y": (-3.9, 3.9)}, uncertainty={"y": 0.21}).loc["y", "delta"] == \
        pytest.approx(0.005, rel=1e-12)
    with pytest.raises(ValueError, match="p = 0.99"):
        validate(r, {"y": {"low": -5.0, "high": 5.0, "coverage_probability": 0.99}})
    with pytest.raises(KeyError):
        validate(r, {"nope": (-1.0, 1.0)})


# ---------------------------------------------------------------------------
# (d) Welch-Satterthwaite effective degrees of freedom (JCGM 100:2008, G.4.1)
# ---------------------------------------------------------------------------
def test_coverage_factor_table_values():
    # (from memory of JCGM 100:2008, Table G.2): t_95(10) = 2.23, t_95(20) = 2.09,
    # t_99(16) = 2.92, t_95(inf) = 1.96; exact values from scipy.stats.t.
    assert coverage_factor(0.95, 10) == pytest.approx(2.23, abs=0.005)
    assert coverage_factor(0.95, 20) == pytest.approx(2.09, abs=0.005)
    assert coverage_factor(0.99, 16) == pytest.approx(2.92, abs=0.005)
    assert coverage_factor(0.95) == pytest.approx(1.96, abs=0.005)
    assert coverage_factor(0.95, 14.9) == pytest.approx(stats.t.ppf(0.975, 14.9), rel=1e-14)
    assert coverage_factor(0.95, 14.9, truncate_dof=True) == pytest.approx(stats.t.ppf(0.975, 14),
                                                                           rel=1e-14)
    np.testing.assert_allclose(coverage_factor(0.95, [5.0, math.inf]),
                               [stats.t.ppf(0.975, 5), stats.norm.ppf(0.975)], rtol=1e-14)
    with pytest.raises(ValueError):
        coverage_factor(1.2)
    with pytest.raises(ValueError):
        coverage_factor(0.95, 0.0)


def test_welch_satterthwaite_hand_case():
    # y = x1 + 2 x2, u = (0.3, 0.2), nu = (5, 10) (independent hand calculation):
    # u_c^2 = 0.09 + 0.16 = 0.25; nu_eff = 0.0625 / (0.3^4/5 + 0.4^4/10) = 0.0625 / 0.00418.
    p = Problem(["x1", "x2"], [stats.norm(1.0, 0.3), rect(2.0, 0.2 * SQRT3)],
                lambda x: {"y": x["x1"] + 2.0 * x["x2"]})
    nu_exact = 0.0625 / (0.3**4 / 5 + 0.4**4 / 10)
    r = lpu(p, dof={"x1": 5, "x2": 10})
    e = r.estimates.loc["y"]
    assert e["standard_uncertainty"] == pytest.approx(0.5, rel=1e-9)
    assert e["effective_dof"] == pytest.approx(nu_exact, rel=1e-8)
    assert e["coverage_factor"] == pytest.approx(stats.t.ppf(0.975, nu_exact), rel=1e-8)
    assert e["expanded_uncertainty"] == pytest.approx(0.5 * stats.t.ppf(0.975, nu_exact), rel=1e-8)
    rt = lpu(p, dof=[5, 10], truncate_dof=True).estimates.loc["y"]
    assert rt["coverage_factor"] == pytest.approx(stats.t.ppf(0.975, 14), rel=1e-12)
    assert list(r.budget("y")["dof"]) == [5.0, 10.0]
    # Only x1 with finite dof: nu_eff = 0.0625 / (0.0081 / 5).
    assert lpu(p, dof={"x1": 5}).estimates.loc["y", "effective_dof"] == pytest.approx(
        0.0625 / (0.0081 / 5), rel=1e-8)
    assert welch_satterthwaite([0.3, 0.4], [5, 10]) == pytest.approx(nu_exact, rel=1e-12)


def test_gauge_block_jcgm100_h1():
    # (from memory of JCGM 100 H.1) End-gauge calibration, 50 mm nominal, linearised model
    # l = l_S + d - l_S (delta_alpha theta + alpha_S delta_theta)             (H.3)
    # Inputs: l_S = 50.000 623 mm, u = 25 nm, nu = 18; d = 215 nm, u = 9.7 nm, nu = 25.6;
    # alpha_S = 11.5e-6 /K, rectangular +-2e-6 /K; theta = -0.1 K, u = 0.41 K;
    # delta_alpha rectangular +-1e-6 /K, nu = 50; delta_theta rectangular +-0.05 K, nu = 2.
    # Reported: l = 50.000 838 mm, u_c = 32 nm, nu_eff = 16 (truncated), k = t_99(16) = 2.92,
    # U_99 = 93 nm.
    names = ["l_S", "d", "alpha_S", "theta", "delta_alpha", "delta_theta"]
    dists = [stats.norm(50.000623e-3, 25e-9), stats.norm(215e-9, 9.7e-9), rect(11.5e-6, 2e-6),
             stats.norm(-0.1, 0.41), rect(0.0, 1e-6), rect(0.0, 0.05)]
    p = Problem(names, dists, lambda x: {"l": x["l_S"] + x["d"] - x["l_S"] * (
        x["delta_alpha"] * x["theta"] + x["alpha_S"] * x["delta_theta"])})
    dof = {"l_S": 18, "d": 25.6, "delta_alpha": 50, "delta_theta": 2}
    r = lpu(p, dof=dof, coverage_probability=0.99, truncate_dof=True)
    e = r.estimates.loc["l"]
    nm = 1e-9
    assert e["value"] == pytest.approx(50.000838e-3, abs=0.5 * nm)
    assert e["standard_uncertainty"] == pytest.approx(32 * nm, abs=0.5 * nm)
    assert math.floor(e["effective_dof"]) == 16
    assert e["coverage_factor"] == pytest.approx(2.92, abs=0.005)
    assert e["expanded_uncertainty"] == pytest.approx(93 * nm, abs=1 * nm)
    # Sensitivities (hand differentiation at the means): c_lS = c_d = 1, c_alphaS = c_theta = 0,
    # c_delta_alpha = -l_S theta, c_delta_theta = -l_S alpha_S.
    c = r.sensitivities.loc["l"]
    # Rounding limits c_d: eps |l| / h_d = 2.2e-16 * 0.05 m / (0.01 * 9.7 nm) ~ 1e-7.
    assert c["l_S"] == pytest.approx(1.0, rel=1e-6) and c["d"] == pytest.approx(1.0, rel=1e-6)
    assert c["alpha_S"] == pytest.approx(0.0, abs=1e-12) and c["theta"] == pytest.approx(0.0, abs=1e-15)
    assert c["delta_alpha"] == pytest.approx(50.000623e-3 * 0.1, rel=1e-7)
    assert c["delta_theta"] == pytest.approx(-50.000623e-3 * 11.5e-6, rel=1e-7)
    # Independent recomputation of nu_eff from the budget's components (G.2b).
    comp = r.budget("l")["uncertainty_component"].to_numpy()
    nu = np.array([18, 25.6, np.inf, np.inf, 50, 2])
    assert e["effective_dof"] == pytest.approx(
        e["standard_uncertainty"] ** 4 / np.sum(comp[np.isfinite(nu)] ** 4 / nu[np.isfinite(nu)]),
        rel=1e-10)


def test_refusals():
    p = Problem(["a", "b"], [stats.norm(1.0, 0.1), stats.norm(2.0, 0.1)],
                lambda x: {"y": x["a"] / (x["b"] - 2.0)})
    with pytest.raises(FloatingPointError, match="non-finite"):
        lpu(p)
    q = Problem(["a", "b"], [stats.norm(1.0, 0.1), stats.norm(2.0, 0.1)],
                lambda x: {"y": x["a"] + x["b"]})
    with pytest.raises(ValueError, match="uncorrelated"):
        lpu(q, correlation={("a", "b"): 0.5}, dof={"a": 4})
    with pytest.raises(ValueError, match="unknown"):
        lpu(q, dof={"c": 4})
    three = Problem(list("abc"), [stats.norm()] * 3, lambda x: {"y": x["a"]})
    with pytest.raises(ValueError, match="positive semi-definite"):
        # each |r| <= 1, yet R (1, -1, -1) = -0.8 (1, -1, -1): a negative eigenvalue (hand check).
        lpu(three, correlation={("a", "b"): 0.9, ("a", "c"): 0.9, ("b", "c"): -0.9})
    with pytest.raises(ValueError, match="symmetric"):
        lpu(q, correlation=[[1.0, 0.2], [0.3, 1.0]])
    with pytest.raises(KeyError):
        lpu(q, outputs=["z"])
    # Correlation of inputs with infinite dof is fine next to an independent finite-dof input.
    w = Problem(list("abc"), [stats.norm()] * 3, lambda x: {"y": x["a"] + x["b"] + x["c"]})
    e = lpu(w, correlation={("a", "b"): 0.5}, dof={"c": 3}).estimates.loc["y"]
    assert e["standard_uncertainty"] ** 2 == pytest.approx(4.0, rel=1e-9)  # 1 + 1 + 1 + 2*0.5
    assert e["effective_dof"] == pytest.approx(16.0 / (1.0 / 3.0), rel=1e-9)


# ---------------------------------------------------------------------------
# (e) The demo study's similitude problem: LPU against Monte Carlo
# ---------------------------------------------------------------------------
@pytest.fixture(scope="module")
def demo_problem():
    # The problem simunc.pipeline.run evaluates.
    import simunc

    study = simunc.load_study(Path(__file__).resolve().parent.parent / "studies" / "arven_cruise.toml")
    prep = simunc.prepare(study)
    return study, prep.setpoint, list(prep.inputs), prep.problem


def test_demo_reynolds_ratio_lpu_against_monte_carlo(demo_problem):
    study, setpoint, inputs, problem = demo_problem
    keys = ["reynolds_ratio", "mach_difference"]
    r = lpu(problem, keys)
    np.testing.assert_allclose(r.input_uncertainties, [i.standard_uncertainty for i in inputs],
                               rtol=1e-12)
    m = study.run.trials
    _, y = monte_carlo(problem, m, study.run.seed)
    for key in keys:
        assert r.estimates.loc[key, "value"] == pytest.approx(setpoint.outputs[key], rel=1e-9,
                                                              abs=1e-12)
        s = summarize(y[key])
        kurt = stats.kurtosis(y[key], fisher=False)
        se_u = s["standard_uncertainty"] * math.sqrt((kurt - 1.0) / (4.0 * m))  # ~0.16 %
        # Five MC standard errors plus 0.1 % for the second-order terms the GUF drops
        # (relative order (u_i / x_i)^2 ~ 1e-5 here: the largest relative input u is ~0.4 %).
        assert r.estimates.loc[key, "standard_uncertainty"] == pytest.approx(
            s["standard_uncertainty"], abs=K_SE * se_u + 1e-3 * s["standard_uncertainty"])
    # Output correlation: SE of a sample correlation ~ (1 - rho^2) / sqrt(M) (bivariate-normal
    # asymptotics; the outputs are close to normal here).
    rho = np.corrcoef(y[keys[0]], y[keys[1]])[0, 1]
    assert r.correlation.loc[keys[0], keys[1]] == pytest.approx(rho, abs=K_SE * (1 - rho**2) / math.sqrt(m))
    # Budget of the Reynolds ratio: shares add to 100 %, no correlation rows.
    b = r.budget("reynolds_ratio")
    assert len(b) == len(inputs) and b["share_percent"].sum() == pytest.approx(100.0, rel=1e-9)
    # JCGM 101 clause 8 at n_dig = 1 (delta = 5e-4 and 5e-5): both validated; the margins
    # delta - d are over five endpoint SEs sqrt(.975 .025 / M) / f(y_q) (f from the normal
    # approximation, SE ~4e-5 and ~4e-6).
    v = validate(r, {k: summarize(y[k]) for k in keys}, n_digits=1)
    for key in keys:
        u = r.estimates.loc[key, "standard_uncertainty"]
        se_q = math.sqrt(0.975 * 0.025 / m) / (stats.norm.pdf(1.96) / u)
        assert max(v.loc[key, "d_low"], v.loc[key, "d_high"]) + K_SE * se_q < v.loc[key, "delta"]
        assert v.loc[key, "validated"]


# ---------------------------------------------------------------------------------------------
# Finite degrees of freedom: the GUM framework propagates u = s / sqrt(n) (or U / k) with nu
# (JCGM 100:2008 4.2.3, G.4.1); the inflated standard deviation of the t-distribution,
# u sqrt(nu / (nu - 2)), belongs to the Monte Carlo method only (JCGM 101:2008 6.4.9.4).
# ---------------------------------------------------------------------------------------------
def test_type_a_input_enters_the_lpu_with_s_over_root_n_and_its_dof():
    # Y = X1 + X2; X1 from n = 5 readings with s = 2 (u = 2 / sqrt 5, nu = 4), X2 normal, u = 0.5.
    # By hand (JCGM 100:2008 G.4.1, eq. G.2b): u_c^2 = 0.8 + 0.25 = 1.05,
    # nu_eff = 1.05^2 / (0.8^2 / 4) = 6.890625, U = t_0.975(nu_eff) u_c.
    u1 = 2.0 / math.sqrt(5.0)
    p = Problem(["x1", "x2"], [stats.t(4.0, scale=u1), stats.norm(scale=0.5)],
                lambda x: {"y": x["x1"] + x["x2"]})
    r = lpu(p, dof={"x1": 4.0}, uncertainty={"x1": u1})
    e = r.estimates.loc["y"]
    assert e["standard_uncertainty"] == pytest.approx(math.sqrt(1.05), rel=1e-12)
    assert e["effective_dof"] == pytest.approx(6.890625, rel=1e-12)
    k = stats.t.ppf(0.975, 6.890625)                        # scipy as the reference quantile
    assert e["expanded_uncertainty"] == pytest.approx(k * math.sqrt(1.05), rel=1e-12)
    # without the GUM u the t-distribution's own standard deviation (sqrt 2 times larger at
    # nu = 4) would be propagated: the +15 % error the review found
    wrong = lpu(p, dof={"x1": 4.0}).estimates.loc["y", "standard_uncertainty"]
    assert wrong == pytest.approx(math.sqrt(1.6 + 0.25), rel=1e-12)


def test_run_gives_the_lpu_the_gum_uncertainty_of_a_type_a_input(demo_dict):
    # The demo's T0 thermometer written as a Type A evaluation: s = 2 K from n = 5 readings.
    import simunc
    from simunc.pipeline import gum_stage, monte_carlo_stage
    from simunc.study.readers import parse_study

    data = dict(demo_dict)
    data.pop("correlations", None)                  # Welch-Satterthwaite needs independence
    data["uncertain"] = [dict(u) for u in data["uncertain"]]
    t0 = next(u for u in data["uncertain"] if u["name"] == "T0 thermometer")
    for k in ("distribution", "expanded_uncertainty", "coverage_factor"):
        t0.pop(k, None)
    t0["type_a"] = {"count": 5, "standard_deviation": "2 K"}
    data["run"] = dict(data.get("run", {}), trials=2000)
    prep = simunc.prepare(parse_study(data))
    gum = gum_stage(prep, monte_carlo_stage(prep))
    r = gum.lpu
    j = r.inputs.index("T0 thermometer")
    assert r.input_uncertainties[j] == pytest.approx(2.0 / math.sqrt(5.0), rel=1e-12)
    assert r.input_dof[j] == 4.0
    # Welch-Satterthwaite and U by hand from the LPU's own coefficients and GUM uncertainties
    c = r.sensitivities.loc["reynolds_ratio"].to_numpy()
    comp = c * r.input_uncertainties
    uc = math.sqrt(float(np.sum(comp**2)))
    nu_eff = uc**4 / (comp[j] ** 4 / 4.0)
    e = r.estimates.loc["reynolds_ratio"]
    assert e["standard_uncertainty"] == pytest.approx(uc, rel=1e-12)
    assert e["effective_dof"] == pytest.approx(nu_eff, rel=1e-9)
    assert e["expanded_uncertainty"] == pytest.approx(stats.t.ppf(0.975, nu_eff) * uc, rel=1e-9)


# ---------------------------------------------------------------------------------------------
# JCGM 101:2008 clause 8 only judges the GUF against Monte Carlo endpoints that are stable to
# delta (7.9: twice their standard deviation at most delta); otherwise: inconclusive.
# ---------------------------------------------------------------------------------------------
def _additive_normal():
    return Problem(list("abcd"), [stats.norm()] * 4, lambda x: {"y": sum(x.values())})


def _endpoints(y, p=0.95):
    from simunc.uncertainty.statistics import quantile_standard_error
    a = 0.5 * (1.0 - p)
    return (quantile_standard_error(y, a), quantile_standard_error(y, 1.0 - a))


def test_validation_is_inconclusive_on_a_short_run():
    # JCGM 101:2008 9.2.2 (four standard normal inputs, GUF exact: +-3.92, u = 2, delta = 0.05 at
    # two digits). At 2000 trials the endpoints' standard error is about
    # sqrt(0.025 x 0.975 / 2000) / phi(1.96) x 2 = 0.12 > delta / 2: no verdict possible.
    p = _additive_normal()
    _, y = monte_carlo(p, 2000, seed=3)
    s = summarize(y["y"])
    v = validate(lpu(p), {"y": (s["low"], s["high"])}, endpoint_se={"y": _endpoints(y["y"])},
                 trials=2000).loc["y"]
    assert v["verdict"] == "inconclusive" and not v["validated"]
    se = math.sqrt(0.025 * 0.975 / 2000) / stats.norm.pdf(1.96) * 2.0
    assert v["spread"] == pytest.approx(2.0 * se, rel=0.25)
    # trials for 2 se <= delta: 2000 (2 se / delta)^2, about 46 000
    assert v["trials_needed"] == pytest.approx(2000 * (2.0 * se / 0.05) ** 2, rel=0.5)


@pytest.mark.parametrize("seed", range(10))
def test_validation_verdict_is_stable_once_the_endpoints_are(seed):
    # 400 000 trials: 2 se = 0.017 <= delta = 0.05, and the GUF of a linear model of normal
    # inputs is exact, so every seed must say "validated".
    p = _additive_normal()
    _, y = monte_carlo(p, 400_000, seed=100 + seed)
    s = summarize(y["y"])
    v = validate(lpu(p), {"y": (s["low"], s["high"])}, endpoint_se={"y": _endpoints(y["y"])},
                 trials=400_000).loc["y"]
    assert v["verdict"] == "validated" and v["trials_needed"] == 0


def test_component_split_keeps_the_cross_terms_and_the_condition_apart():
    # y = 2 a - b + 0.5 c; a systematic (u 0.1), b random (u 0.2), r(a, b) = 0.5, c the
    # full-scale day temperature (u 0.4). JCGM 100:2008 eq. 13 by hand:
    # u_sys^2 = (2 x 0.1)^2 = 0.04, u_rand^2 = 0.04, u_cond^2 = 0.04,
    # cross term 2 (2)(-1)(0.5)(0.1)(0.2) = -0.04, u_c^2 = 0.08.
    from types import SimpleNamespace

    from simunc.pipeline import component_split

    p = Problem(["a", "b", "c"], [stats.norm(0, 0.1), stats.norm(0, 0.2), stats.norm(0, 0.4)],
                lambda x: {"y": 2.0 * x["a"] - x["b"] + 0.5 * x["c"]})
    r = lpu(p, correlation={("a", "b"): 0.5})
    inputs = [SimpleNamespace(name="a", component="systematic",
                              targets=("stagnation_pressure_indication",)),
              SimpleNamespace(name="b", component="random",
                              targets=("stagnation_pressure_control",)),
              SimpleNamespace(name="c", component="systematic",
                              targets=("full_scale_temperature",))]
    row = component_split(r, inputs, ["y"]).loc["y"]
    assert row["u_systematic"] == pytest.approx(0.2, rel=1e-9)
    assert row["u_random"] == pytest.approx(0.2, rel=1e-9)
    assert row["u_condition"] == pytest.approx(0.2, rel=1e-9)
    assert row["mixed_variance"] == pytest.approx(-0.04, rel=1e-9)
    assert row["u_combined"] == pytest.approx(math.sqrt(0.08), rel=1e-9)
    assert row["u_systematic"] ** 2 + row["u_random"] ** 2 + row["u_condition"] ** 2 \
        + row["mixed_variance"] == pytest.approx(row["u_combined"] ** 2, rel=1e-12)
