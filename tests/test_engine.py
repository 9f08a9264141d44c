"""The streaming Monte Carlo engine: simunc.uncertainty.propagate.propagate and adaptive, and the sampling.

Check values come from
* NIST StRD univariate summary statistics, NumAcc1-NumAcc4 (certified mean and
  standard deviation), recalled -- see tests/test_statistics.py for the data;
* JCGM 101:2008, 9.2.2-9.2.4 (additive model), recalled, and the exact
  distributions of tests/test_propagate_jcgm101.py (normal, Irwin-Hall,
  numerical convolution), computed independently of simunc;
* closed forms: moments of a product of independent lognormal variables,
  E[prod X_i] = prod exp(mu_i + sigma_i^2 / 2), E[(prod X_i)^2] = prod exp(2 mu_i + 2 sigma_i^2);
  the exponential distribution's shortest interval [0, -ln(1 - p)];
* Gaussian copula: Pearson correlation R of the normal scores and of normal
  marginals; Spearman's rho (6 / pi) arcsin(R / 2) (Nelsen 2006, 5.1.2, from
  memory of Nelsen, An Introduction to Copulas); Fisher's z standard errors
  1 / sqrt(M - 3) (Pearson) and sqrt(1.06 / (M - 3)) (Spearman; from memory of
  Fieller, Hartley & Pearson, Biometrika 44, 1957);
* JCGM 101:2008, 7.9 (adaptive procedure), recalled.

Monte Carlo tolerances are five standard errors at the number of trials used
(as in tests/test_propagate_jcgm101.py).  LHS and scrambled Sobol sampling
have smaller errors than pseudo-random sampling for these smooth models, so the
pseudo-random standard errors are upper bounds for them.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import special, stats

from simunc.pipeline import similitude_problem
from simunc.similitude.inputs import build_inputs
from simunc.similitude.setpoint import build_model, solve
from simunc.study.readers import load_study
from simunc.uncertainty.problem import Problem
from simunc.uncertainty.propagate import adaptive, monte_carlo, propagate, summarize
from simunc.uncertainty.sampling import (
    BLOCK_SIZE,
    METHODS,
    correlation_factor,
    gaussian_copula,
    map_to_inputs,
    unit_block,
)
from simunc.uncertainty.statistics import (
    ConformityCounter,
    numerical_tolerance,
    shortest_interval,
)

from .conftest import DEMO
from .test_propagate_jcgm101 import (
    SQRT3,
    convolution_cdf,
    quantile,
    sum_of_uniforms_cdf,
    sum_of_uniforms_pdf,
)
from .test_statistics import NUMACC, exact_mean_sd, numacc

K_SE = 5.0
FIELDS = ("count", "mean", "standard_uncertainty", "low", "high", "shortest_low",
          "shortest_high", "coverage_factor", "minimum", "maximum", "quantile_error_bound")


def additive(dists):
    return Problem(["X1", "X2", "X3", "X4"], dists,
                   lambda x: {"y": x["X1"] + x["X2"] + x["X3"] + x["X4"]})


def replay(data: np.ndarray) -> Problem:
    """A model that ignores its input and gives the dataset's values in trial order."""
    pos = [0]

    def func(x):
        n = len(x["u"])
        out = data[pos[0]:pos[0] + n]
        pos[0] += n
        return {"y": out}

    return Problem(["u"], [stats.uniform()], func)


def same_statistics(a, b) -> bool:
    """Every statistic of every output bit-identical (NaN, e.g. k of a constant, equals NaN)."""
    def same(u, v):
        return u == v or (isinstance(u, float) and math.isnan(u) and math.isnan(v))
    return list(a.statistics) == list(b.statistics) and all(
        same(getattr(a[k], f), getattr(b[k], f)) for k in a.statistics for f in FIELDS)


@pytest.fixture(scope="module")
def demo_problem():
    study = load_study(DEMO)
    model = build_model(study)
    setpoint = solve(study, model)
    return similitude_problem(model, setpoint, build_inputs(study.inputs, setpoint))


# ---------------------------------------------------------------------------
# NIST StRD NumAcc1-4 through the chunked path
# ---------------------------------------------------------------------------
@pytest.mark.parametrize("name", NUMACC)
@pytest.mark.parametrize("block, chunk_blocks", [(1, 3), (7, 1), (7, 5), (64, 2), (4096, 1)])
def test_nist_numacc_through_propagate(name, block, chunk_blocks):
    x, mean_cert, sd_cert = numacc(name)
    r = propagate(replay(x), x.size, seed=1, block_size=block, chunk_size=chunk_blocks * block)
    s = r["y"]
    mean_ex, sd_ex = exact_mean_sd(x)
    assert s.count == x.size
    # Certified values (NIST StRD, from memory); the data are decimals stored as doubles, which
    # moves the standard deviation of NumAcc3/NumAcc4 by up to ~1e-8 relative.
    assert s.mean == pytest.approx(mean_cert, rel=1e-15)
    assert s.standard_uncertainty == pytest.approx(
        sd_cert, rel={"NumAcc1": 1e-15, "NumAcc2": 1e-13, "NumAcc3": 1e-8, "NumAcc4": 5e-8}[name])
    # Exact rational arithmetic on the stored doubles.
    assert s.mean == pytest.approx(mean_ex, rel=2e-16)
    assert s.standard_uncertainty == pytest.approx(sd_ex, rel=1e-14)
    assert (s.minimum, s.maximum) == (x.min(), x.max())


def test_nist_numacc_bit_identical_over_chunkings():
    x, _, _ = numacc("NumAcc4")
    runs = [propagate(replay(x), x.size, 1, block_size=7, chunk_size=c) for c in (7, 21, 7 * 143)]
    assert same_statistics(runs[0], runs[1]) and same_statistics(runs[0], runs[2])


# ---------------------------------------------------------------------------
# Bit-identical statistics whatever the chunk size
# ---------------------------------------------------------------------------
R3 = np.array([[1.0, 0.5, -0.3], [0.5, 1.0, 0.2], [-0.3, 0.2, 1.0]])


def nonlinear3():
    return Problem(["a", "b", "c"], [stats.norm(1.0, 0.2), stats.uniform(-1, 2), stats.lognorm(0.3)],
                   lambda x: {"p": x["a"] * np.exp(x["b"]) / x["c"], "s": np.sin(x["a"] + x["c"]),
                              "k": 2.5})


@pytest.mark.parametrize("method", METHODS)
@pytest.mark.parametrize("correlated", [False, True], ids=["independent", "copula"])
def test_bit_identical_for_any_chunk_size(method, correlated):
    block = 4096
    trials = 7 * block + 1234          # seven whole blocks and a partial one
    kw = dict(method=method, correlation=R3 if correlated else None, block_size=block)
    runs = [propagate(nonlinear3(), trials, 77, chunk_size=c, **kw)
            for c in (block, 3 * block, trials)]
    assert runs[0].chunk_size == block and runs[1].chunk_size == 3 * block
    assert runs[2].chunk_size == trials
    assert same_statistics(runs[0], runs[1]) and same_statistics(runs[0], runs[2])
    kept = [propagate(nonlinear3(), trials, 77, chunk_size=c, keep=True, **kw)
            for c in (block, 3 * block)]
    assert same_statistics(kept[0], kept[1])
    assert np.array_equal(kept[0].x, kept[1].x)
    assert all(np.array_equal(kept[0].y[k], kept[1].y[k]) for k in kept[0].y)
    other = propagate(nonlinear3(), trials, 78, **kw)
    assert other["p"].mean != runs[0]["p"].mean


def test_bit_identical_demo_study_default_blocks(demo_problem):
    trials = 3 * BLOCK_SIZE + 1234
    runs = [propagate(demo_problem, trials, 20261201, chunk_size=c)
            for c in (BLOCK_SIZE, 3 * BLOCK_SIZE, trials)]
    assert same_statistics(runs[0], runs[1]) and same_statistics(runs[0], runs[2])
    assert len(runs[0].statistics) > 20


def test_one_block_equals_monte_carlo_and_summarize():
    # Block 0 of "random" is PCG64(seed): a run of at most one block draws monte_carlo's trials.
    dists = [stats.norm(), stats.uniform(-1, 2), stats.triang(0.5, -1, 2), stats.norm(0, 3)]
    x, y = monte_carlo(additive(dists), 50_000, 12345)
    r = propagate(additive(dists), 50_000, 12345, keep=True)
    assert np.array_equal(r.x, x) and np.array_equal(r.y["y"], y["y"])
    s = summarize(y["y"], 0.95)
    got = r["y"].summary()
    assert (got["low"], got["high"]) == (s["low"], s["high"])
    assert got["mean"] == pytest.approx(s["mean"], rel=1e-14, abs=1e-15)
    assert got["standard_uncertainty"] == pytest.approx(s["standard_uncertainty"], rel=1e-13)


def test_on_chunk_sees_every_trial_in_order():
    seen_x, seen_y = [], []
    counter = ConformityCounter({"p": ("p", 0.5, 2.0), "s": ("s", None, 0.9)})

    def on_chunk(x, y):
        seen_x.append(x.copy())
        seen_y.append(np.array(y["p"]))
        counter(x, y)

    r = propagate(nonlinear3(), 30_000, 5, keep=True, on_chunk=on_chunk, block_size=4096,
                  chunk_size=8192, outputs=["p"])
    assert list(r.statistics) == ["p"] and set(r.y) == {"p", "s", "k"}
    assert len(seen_x) == 4
    assert np.array_equal(np.concatenate(seen_x), r.x)
    assert np.array_equal(np.concatenate(seen_y), r.y["p"])
    pc = counter.probabilities()
    assert pc["p"] == np.mean((r.y["p"] >= 0.5) & (r.y["p"] <= 2.0))
    assert pc["all"] == np.mean((r.y["p"] >= 0.5) & (r.y["p"] <= 2.0) & (r.y["s"] <= 0.9))


def test_non_finite_output_raises():
    p = Problem(["a"], [stats.norm()], lambda x: {"y": np.log(x["a"])})
    with pytest.raises(FloatingPointError, match="non-finite"):
        propagate(p, 1000, 1)


def test_bad_arguments():
    p = nonlinear3()
    with pytest.raises(ValueError, match="method"):
        propagate(p, 100, 1, method="halton")
    with pytest.raises(ValueError, match="positive definite"):
        propagate(p, 100, 1, correlation=[[1, 0.9, 0.9], [0.9, 1, -0.9], [0.9, -0.9, 1]])
    with pytest.raises(ValueError, match="symmetric"):
        propagate(p, 100, 1, correlation=[[1, 0.5, 0], [0.4, 1, 0], [0, 0, 1]])
    with pytest.raises(ValueError, match="diagonal"):
        correlation_factor([[2.0, 0.0], [0.0, 1.0]], 2)
    with pytest.raises(ValueError, match="3 x 3"):
        propagate(p, 100, 1, correlation=np.eye(2))
    with pytest.raises(ValueError, match="seed"):
        propagate(p, 100, -1)
    with pytest.raises(ValueError, match="trials"):
        propagate(p, 1, 1)
    with pytest.raises(KeyError):
        propagate(p, 100, 1, outputs=["nope"])


# ---------------------------------------------------------------------------
# Streaming histogram against exact quantiles of the same trials
# ---------------------------------------------------------------------------
def test_streaming_intervals_within_reported_bound(demo_problem):
    a = propagate(demo_problem, 200_000, 3)
    b = propagate(demo_problem, 200_000, 3, keep=True)
    for k, s in a.statistics.items():
        e = b[k]
        assert e.quantile_error_bound == 0.0
        assert (s.mean, s.standard_uncertainty) == (e.mean, e.standard_uncertainty)
        h = s.quantile_error_bound * (1 + 1e-9)
        assert abs(s.low - e.low) <= h and abs(s.high - e.high) <= h, k
        assert abs((s.shortest_high - s.shortest_low) - (e.shortest_high - e.shortest_low)) <= 2 * h
        if s.standard_uncertainty > 0:
            assert s.quantile_error_bound < numerical_tolerance(s.standard_uncertainty, 2) / 50, k


# ---------------------------------------------------------------------------
# JCGM 101:2008 9.2 through propagate, every sampling method
# ---------------------------------------------------------------------------
M_JCGM = 1_000_000


def _se_q(q, density, m=M_JCGM):
    return math.sqrt(q * (1.0 - q) / m) / density


def _se_std(u, m=M_JCGM, kurtosis=3.0):
    return u * math.sqrt((kurtosis - 1.0) / (4.0 * m))


def _check(s, u_exact, q_exact, f_q):
    se_q = _se_q(0.975, f_q)
    assert abs(s.mean) < K_SE * u_exact / math.sqrt(M_JCGM)
    assert s.standard_uncertainty == pytest.approx(u_exact, abs=K_SE * _se_std(u_exact))
    assert s.high == pytest.approx(q_exact, abs=K_SE * se_q + s.quantile_error_bound)
    assert s.low == pytest.approx(-q_exact, abs=K_SE * se_q + s.quantile_error_bound)
    # Symmetric unimodal Y: the shortest interval is the symmetric one; its sample length can
    # only be shorter than the sample symmetric one (up to 2 h), and not by more than the MC error.
    sym, short = s.high - s.low, s.shortest_high - s.shortest_low
    assert short <= sym + 2 * s.quantile_error_bound
    assert short >= 2 * q_exact - 2 * K_SE * se_q - 2 * s.quantile_error_bound
    assert s.coverage_factor == pytest.approx(q_exact / u_exact, abs=K_SE * se_q / u_exact + 1e-3)


@pytest.mark.parametrize("method", METHODS)
def test_jcgm101_9_2_2_normal(method):
    # JCGM 101 Table 2 (from memory of JCGM 101, Table 2): u(y) = 2, 95 % interval [-3.92, 3.92].
    r = propagate(additive([stats.norm()] * 4), M_JCGM, 20080101, method=method)
    q = 2.0 * stats.norm.ppf(0.975)
    _check(r["y"], 2.0, q, stats.norm.pdf(q, scale=2.0))
    assert r["y"].high == pytest.approx(3.92, abs=0.005 + K_SE * _se_q(0.975, 0.0292))
    assert r.method == method and r.trials == M_JCGM


@pytest.mark.parametrize("method", METHODS)
def test_jcgm101_9_2_3_rectangular(method):
    a = SQRT3
    r = propagate(additive([stats.uniform(-a, 2 * a)] * 4), M_JCGM, 9203, method=method)
    q = quantile(lambda v: sum_of_uniforms_cdf(v, 4, a), 0.975, 0.0, 4 * a)
    assert q == pytest.approx(3.88, abs=0.005)   # JCGM 101 Table 3 (from memory of JCGM 101)
    _check(r["y"], 2.0, q, sum_of_uniforms_pdf(q, 4, a))
    assert r["y"].maximum <= 4 * a and r["y"].minimum >= -4 * a


@pytest.mark.parametrize("method", METHODS)
def test_jcgm101_9_2_4_rectangular_unequal(method):
    a, b = SQRT3, 10 * SQRT3
    dists = [stats.uniform(-a, 2 * a)] * 3 + [stats.uniform(-b, 2 * b)]
    r = propagate(additive(dists), M_JCGM, 9204, method=method)
    u = math.sqrt(3 + 100.0)
    q = quantile(lambda v: convolution_cdf(v, a, b), 0.975, 0.0, b + 3 * a)
    h = 1e-3
    f_q = (convolution_cdf(q + h, a, b) - convolution_cdf(q - h, a, b)) / (2 * h)
    assert q == pytest.approx(17.0, abs=0.05)     # JCGM 101 Table 4 (from memory of JCGM 101)
    s = r["y"]
    se_q = _se_q(0.975, f_q)
    assert s.standard_uncertainty == pytest.approx(u, abs=K_SE * _se_std(u))
    assert s.high == pytest.approx(q, abs=K_SE * se_q + s.quantile_error_bound)
    assert s.low == pytest.approx(-q, abs=K_SE * se_q + s.quantile_error_bound)
    # Flat-topped Y: many intervals are nearly as short; check the length only.
    assert s.shortest_high - s.shortest_low <= s.high - s.low + 2 * s.quantile_error_bound


# ---------------------------------------------------------------------------
# Product of independent lognormal inputs: analytic moments and intervals
# ---------------------------------------------------------------------------
MU = np.array([0.1, -0.2, 0.3])
SIG = np.array([0.10, 0.20, 0.15])


def lognormal_product():
    dists = [stats.lognorm(s, scale=math.exp(m)) for m, s in zip(MU, SIG)]
    return Problem(["A", "B", "C"], dists, lambda x: {"y": x["A"] * x["B"] * x["C"]})


@pytest.mark.parametrize("method", METHODS)
def test_lognormal_product_moments(method):
    m = 1_000_000
    r = propagate(lognormal_product(), m, 42, method=method)
    s = r["y"]
    mean = float(np.prod(np.exp(MU + SIG**2 / 2)))
    second = float(np.prod(np.exp(2 * MU + 2 * SIG**2)))
    sd = math.sqrt(second - mean**2)
    # Y is lognormal(sum mu, sqrt(sum sigma^2)); kurtosis e^{4s2} + 2e^{3s2} + 3e^{2s2} - 3.
    s2 = float(np.sum(SIG**2))
    kurt = math.exp(4 * s2) + 2 * math.exp(3 * s2) + 3 * math.exp(2 * s2) - 3
    assert s.mean == pytest.approx(mean, abs=K_SE * sd / math.sqrt(m))
    assert s.standard_uncertainty == pytest.approx(sd, abs=K_SE * _se_std(sd, m, kurt))
    y = stats.lognorm(math.sqrt(s2), scale=math.exp(MU.sum()))
    for got, q in ((s.low, 0.025), (s.high, 0.975)):
        assert got == pytest.approx(y.ppf(q), abs=K_SE * _se_q(q, y.pdf(y.ppf(q)), m)
                                    + s.quantile_error_bound)
    # Skewed to the right: the shortest interval is shifted left of the symmetric one and
    # shorter; exact shortest from minimizing Q(a + 0.95) - Q(a) over a.
    a = np.linspace(0.0, 0.05, 50_001)
    width = y.ppf(a + 0.95) - y.ppf(a)
    i = int(np.nanargmin(width))
    assert s.shortest_low < s.low and s.shortest_high < s.high
    assert s.shortest_high - s.shortest_low == pytest.approx(width[i], rel=5e-3)


# ---------------------------------------------------------------------------
# Gaussian copula
# ---------------------------------------------------------------------------
R = np.array([[1.0, 0.7, -0.4], [0.7, 1.0, 0.1], [-0.4, 0.1, 1.0]])


@pytest.mark.parametrize("method", METHODS)
def test_copula_keeps_marginals_and_gives_correlation(method):
    m = 100_000
    u = np.vstack([unit_block(method, 4096, 3, 9, b) for b in range(m // 4096)])
    v = gaussian_copula(u, R)
    n = v.shape[0]
    # Marginals stay uniform (Kolmogorov-Smirnov, scipy.stats.kstest, p > 1e-4).
    for j in range(3):
        assert stats.kstest(v[:, j], "uniform").pvalue > 1e-4
    # Normal scores and normal marginals: Pearson correlation R (Fisher z, 5 SE).
    z = special.ndtri(v)
    pearson = np.corrcoef(z.T)
    # Uniform marginals: Spearman's rho = Pearson of the uniforms = (6/pi) arcsin(R/2).
    spearman = np.corrcoef(v.T)
    for i, j in ((0, 1), (0, 2), (1, 2)):
        assert abs(np.arctanh(pearson[i, j]) - np.arctanh(R[i, j])) < K_SE / math.sqrt(n - 3)
        rho_s = 6 / math.pi * math.asin(R[i, j] / 2)
        assert abs(np.arctanh(spearman[i, j]) - np.arctanh(rho_s)) < K_SE * math.sqrt(1.06 / (n - 3))


def test_copula_through_propagate_keeps_input_marginals():
    dists = [stats.norm(2.0, 0.5), stats.lognorm(0.4), stats.triang(0.3, -1, 2)]
    p = Problem(["a", "b", "c"], dists, lambda x: {"y": x["a"] + x["b"] * x["c"]})
    r = propagate(p, 120_000, 4, correlation=R, keep=True)
    for j, d in enumerate(dists):
        assert stats.kstest(r.x[:, j], d.cdf).pvalue > 1e-4
    rank = stats.spearmanr(r.x).statistic
    n = r.trials
    for i, j in ((0, 1), (0, 2), (1, 2)):
        rho_s = 6 / math.pi * math.asin(R[i, j] / 2)
        assert abs(np.arctanh(rank[i, j]) - np.arctanh(rho_s)) < K_SE * math.sqrt(1.06 / (n - 3))
    np.testing.assert_allclose(r.y["y"], r.x[:, 0] + r.x[:, 1] * r.x[:, 2], rtol=1e-14)


def test_copula_identity_is_independent_sampling():
    u = unit_block("random", 1000, 3, 1, 0)
    np.testing.assert_allclose(gaussian_copula(u, np.eye(3)), u, rtol=1e-12, atol=1e-15)
    x = map_to_inputs(u, [stats.norm()] * 3)
    assert x.shape == (1000, 3)


# ---------------------------------------------------------------------------
# Shortest interval of an asymmetric distribution
# ---------------------------------------------------------------------------
@pytest.mark.parametrize("keep", [False, True], ids=["histogram", "kept"])
def test_shortest_interval_exponential(keep):
    # Y ~ Exp(1) (input through its inverse CDF): shortest 95 % interval [0, -ln 0.05]
    # (decreasing density); the upper end has the standard error of the 0.95 quantile.
    m = 1_000_000
    p = Problem(["e"], [stats.expon()], lambda x: {"y": x["e"]})
    s = propagate(p, m, 10, keep=keep)["y"]
    se = math.sqrt(0.95 * 0.05 / m) / 0.05
    assert s.shortest_high == pytest.approx(-math.log(0.05), abs=K_SE * se + s.quantile_error_bound)
    assert 0.0 <= s.shortest_low < K_SE * se
    assert s.low == pytest.approx(-math.log(0.975), abs=K_SE * math.sqrt(0.975 * 0.025 / m) / 0.975
                                  + s.quantile_error_bound)


# ---------------------------------------------------------------------------
# Empirical coverage over repeated runs
# ---------------------------------------------------------------------------
def test_empirical_coverage_of_95_percent_intervals():
    # 200 runs x 10^4 trials of Y = A B with A, B lognormal (Y lognormal, closed-form CDF).
    # (1) Each run's interval against one fresh draw of Y: the fraction of runs that contain it
    #     is Bernoulli with p = 0.95 (up to the O(1/M) bias below), 5 binomial SE.
    # (2) The exact coverage F(high) - F(low) of each run, averaged: its expectation for the
    #     linear-interpolation quantiles at virtual index p (M - 1) is
    #     ((0.975 (M-1) + 1) - (0.025 (M-1) + 1)) / (M + 1) (E F(Y_(k)) = k / (M + 1));
    #     tolerance 5 SE of the average.
    runs, m = 200, 10_000
    mu, sig = np.array([0.0, 0.5]), np.array([0.25, 0.35])
    p = Problem(["A", "B"], [stats.lognorm(s, scale=math.exp(v)) for v, s in zip(mu, sig)],
                lambda x: {"y": x["A"] * x["B"]})
    y_dist = stats.lognorm(math.sqrt(np.sum(sig**2)), scale=math.exp(mu.sum()))
    fresh = y_dist.rvs(size=runs, random_state=np.random.default_rng(987_654))
    hit_sym = hit_short = 0
    cov_sym, cov_short = [], []
    for seed in range(runs):
        s = propagate(p, m, seed)["y"]
        hit_sym += s.low <= fresh[seed] <= s.high
        hit_short += s.shortest_low <= fresh[seed] <= s.shortest_high
        cov_sym.append(y_dist.cdf(s.high) - y_dist.cdf(s.low))
        cov_short.append(y_dist.cdf(s.shortest_high) - y_dist.cdf(s.shortest_low))
    se_binom = math.sqrt(0.95 * 0.05 / runs)
    assert hit_sym / runs == pytest.approx(0.95, abs=K_SE * se_binom)
    assert hit_short / runs == pytest.approx(0.95, abs=K_SE * se_binom)
    expected = 0.95 * (m - 1) / (m + 1)
    cov_sym = np.array(cov_sym)
    assert cov_sym.mean() == pytest.approx(expected, abs=K_SE * cov_sym.std(ddof=1) / math.sqrt(runs))
    cov_short = np.array(cov_short)
    assert cov_short.mean() == pytest.approx(0.95, abs=0.003)


# ---------------------------------------------------------------------------
# Adaptive Monte Carlo (JCGM 101:2008, 7.9)
# ---------------------------------------------------------------------------
@pytest.mark.parametrize("method", METHODS)
def test_adaptive_reaches_tolerance(method):
    p = additive([stats.norm()] * 4)
    r = adaptive(p, 2024, n_digits=2, method=method)
    info = r.adaptive
    # M = max(J, 10^4), J = ceil(100 / (1 - 0.95)) = 2000 (from memory of JCGM 101, 7.9.4 b).
    assert info.batch_size == 10_000
    assert info.converged and info.batches >= 2
    assert r.trials == info.batches * info.batch_size and r["y"].count == r.trials
    u = r["y"].standard_uncertainty
    assert info.tolerance["y"] == numerical_tolerance(u, 2) == 0.05      # u = 2.0: 20 x 10^-1
    assert all(v <= info.tolerance["y"] for v in info.reached["y"].values())
    assert r["y"].quantile_error_bound < info.tolerance["y"] / 100
    # The run is propagate with block size M over the same number of trials.
    again = propagate(p, r.trials, 2024, method=method, block_size=info.batch_size)
    assert same_statistics(r, again)


def test_adaptive_random_trials_of_expected_order():
    # The binding value is the 97.5 % quantile: 2 s <= delta needs about
    # M_total = (2 sqrt(q (1 - q)) / f(y_q) / delta)^2 = (2 * 0.156 / 0.0292 / 0.05)^2 ~ 45 600
    # trials for Y ~ N(0, 2^2), delta = 0.05 (asymptotic quantile SE); the stopping rule is
    # random, so allow a wide band.
    r = adaptive(additive([stats.norm()] * 4), 7, n_digits=2)
    assert 20_000 <= r.trials <= 200_000


def test_adaptive_max_trials_and_arguments():
    p = additive([stats.norm()] * 4)
    r = adaptive(p, 1, n_digits=4, max_trials=40_000)
    assert not r.adaptive.converged and r.trials == 40_000 and r.adaptive.batches == 4
    assert max(r.adaptive.achieved().values()) > r.adaptive.tolerance["y"]
    with pytest.raises(ValueError, match="J"):
        adaptive(p, 1, batch=1000)
    with pytest.raises(ValueError, match="two batches"):
        adaptive(p, 1, max_trials=15_000)
    r99 = adaptive(p, 1, coverage_probability=0.999, max_trials=500_000)
    assert r99.adaptive.batch_size == 100_000       # J = 100 / 0.001 = 10^5


def test_adaptive_constant_output_and_kept_values():
    p = Problem(["a"], [stats.norm()], lambda x: {"y": 3.0 + 0.1 * x["a"], "c": 1.5})
    r = adaptive(p, 3, n_digits=1, keep=True)
    assert r.adaptive.converged and r["c"].standard_uncertainty == 0.0
    assert r.y["y"].size == r.trials and r["y"].quantile_error_bound == 0.0
    assert (r["y"].shortest_low, r["y"].shortest_high) == shortest_interval(r.y["y"], 0.95)
