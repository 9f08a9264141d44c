"""simunc.uncertainty.propagate on the additive model of JCGM 101:2008, section 9.2.

Y = X1 + X2 + X3 + X4 with independent inputs of zero expectation.

Check values come from
* JCGM 101:2008 (Supplement 1 to the GUM), 9.2.2-9.2.4 and Tables 2-4, marked
  where recalled;
* the exact distribution of Y computed here independently: normal (closed
  form), the Irwin-Hall distribution of a sum of uniforms (closed form) and a
  numerical convolution (scipy.integrate.quad) for unequal widths.

Monte Carlo tolerances are multiples of the Monte Carlo standard error at the
number of trials used:
* mean: u(y) / sqrt(M);
* standard deviation: u(y) sqrt((kappa - 1) / (4 M)) with kurtosis kappa <= 3
  for these models (normal: 3; sums of uniforms: < 3);
* q-quantile: sqrt(q (1 - q) / M) / f(y_q) (asymptotic order statistic);
* empirical CDF at the exact quantile: sqrt(q (1 - q) / M) (binomial).
Five standard errors are used throughout (a false failure has probability ~1e-6).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import integrate, optimize, stats

from simunc.uncertainty.distributions import make_distribution
from simunc.uncertainty.problem import Problem
from simunc.uncertainty.propagate import monte_carlo, summarize

M_TRIALS = 1_000_000
K_SE = 5.0
SQRT3 = math.sqrt(3.0)


def _additive(dists):
    return Problem(["X1", "X2", "X3", "X4"], dists,
                   lambda x: {"y": x["X1"] + x["X2"] + x["X3"] + x["X4"]})


def _se_quantile(q, density, m=M_TRIALS):
    return math.sqrt(q * (1.0 - q) / m) / density


def _se_std(u, m=M_TRIALS, kurtosis=3.0):
    return u * math.sqrt((kurtosis - 1.0) / (4.0 * m))


# ---------------------------------------------------------------------------
# Exact distributions, computed independently of simunc
# ---------------------------------------------------------------------------
def irwin_hall_cdf(x, n):
    """CDF of the sum of n independent U(0, 1): (1/n!) sum_k (-1)^k C(n,k) (x-k)^n, k <= x."""
    if x <= 0.0:
        return 0.0
    if x >= n:
        return 1.0
    return sum((-1) ** k * math.comb(n, k) * (x - k) ** n
               for k in range(int(math.floor(x)) + 1)) / math.factorial(n)


def irwin_hall_pdf(x, n):
    if x <= 0.0 or x >= n:
        return 0.0
    return sum((-1) ** k * math.comb(n, k) * (x - k) ** (n - 1)
               for k in range(int(math.floor(x)) + 1)) / math.factorial(n - 1)


def sum_of_uniforms_cdf(y, n, a):
    """CDF of the sum of n independent U(-a, a): Y = a (2 V - n), V ~ Irwin-Hall(n)."""
    return irwin_hall_cdf((y / a + n) / 2.0, n)


def sum_of_uniforms_pdf(y, n, a):
    return irwin_hall_pdf((y / a + n) / 2.0, n) / (2.0 * a)


def convolution_cdf(y, a, b):
    """CDF of S3 + X4, S3 = sum of 3 U(-a, a), X4 ~ U(-b, b), by numerical convolution.

    F_Y(y) = (1 / 2b) * integral_{-b}^{b} F_S3(y - x) dx.
    """
    kinks = [y + k * a for k in (-3, -1, 1, 3)]  # breakpoints of the piecewise-cubic F_S3(y - x)
    pts = [p for p in kinks if -b < p < b]
    val, _ = integrate.quad(lambda x: sum_of_uniforms_cdf(y - x, 3, a), -b, b,
                            points=pts or None, limit=200, epsabs=1e-13, epsrel=1e-12)
    return val / (2.0 * b)


def quantile(cdf, q, lo, hi):
    return optimize.brentq(lambda y: cdf(y) - q, lo, hi, xtol=1e-12)


# ---------------------------------------------------------------------------
# 9.2.2: Xi ~ N(0, 1)
# ---------------------------------------------------------------------------
def test_9_2_2_normal_inputs():
    # JCGM 101:2008 9.2.2 / Table 2 (from memory of JCGM 101, Table 2): u(y) = 2,
    # shortest/symmetric 95 % interval [-3.92, 3.92] for both GUF and MCM.
    _, y = monte_carlo(_additive([stats.norm(0.0, 1.0)] * 4), M_TRIALS, seed=20080101)
    s = summarize(y["y"], 0.95)
    # Exact: Y ~ N(0, 2^2), 97.5 % quantile = 2 * z_0.975.
    exact_q = 2.0 * stats.norm.ppf(0.975)
    f_q = stats.norm.pdf(exact_q, scale=2.0)
    se_q = _se_quantile(0.975, f_q)
    assert s["coverage_probability"] == 0.95
    assert abs(s["mean"]) < K_SE * 2.0 / math.sqrt(M_TRIALS)
    assert s["standard_uncertainty"] == pytest.approx(2.0, abs=K_SE * _se_std(2.0))
    assert s["high"] == pytest.approx(exact_q, abs=K_SE * se_q)
    assert s["low"] == pytest.approx(-exact_q, abs=K_SE * se_q)
    # JCGM value given to 0.01: allow its rounding plus the MC error.
    assert s["high"] == pytest.approx(3.92, abs=0.005 + K_SE * se_q)
    assert s["low"] == pytest.approx(-3.92, abs=0.005 + K_SE * se_q)
    # Empirical CDF at the exact quantile (binomial standard error).
    frac = np.mean(y["y"] <= exact_q)
    assert frac == pytest.approx(0.975, abs=K_SE * math.sqrt(0.975 * 0.025 / M_TRIALS))


# ---------------------------------------------------------------------------
# 9.2.3: Xi rectangular, u(xi) = 1 (half-width sqrt(3))
# ---------------------------------------------------------------------------
def test_9_2_3_rectangular_inputs_equal_widths():
    a = SQRT3
    dists = [stats.uniform(loc=-a, scale=2.0 * a)] * 4
    _, y = monte_carlo(_additive(dists), M_TRIALS, seed=9203)
    s = summarize(y["y"], 0.95)

    exact_q = quantile(lambda v: sum_of_uniforms_cdf(v, 4, a), 0.975, 0.0, 4.0 * a)
    # Independent sanity of the exact value: the GUF (normal) quantile 3.92 is
    # wider, the Irwin-Hall one about 3.88 (JCGM 101 Table 3 MCM: [-3.88, 3.88],
    # from memory of JCGM 101, Table 3).
    assert exact_q == pytest.approx(3.88, abs=0.005)
    se_q = _se_quantile(0.975, sum_of_uniforms_pdf(exact_q, 4, a))

    assert abs(s["mean"]) < K_SE * 2.0 / math.sqrt(M_TRIALS)
    # u(y) = sqrt(4 * 1) = 2 exactly.
    assert s["standard_uncertainty"] == pytest.approx(2.0, abs=K_SE * _se_std(2.0))
    assert s["high"] == pytest.approx(exact_q, abs=K_SE * se_q)
    assert s["low"] == pytest.approx(-exact_q, abs=K_SE * se_q)
    assert s["high"] == pytest.approx(3.88, abs=0.005 + K_SE * se_q)
    frac = np.mean(np.abs(y["y"]) <= exact_q)
    assert frac == pytest.approx(0.95, abs=K_SE * math.sqrt(0.95 * 0.05 / M_TRIALS))
    # The distribution is bounded by +-4 sqrt(3): no trial may fall outside.
    assert np.max(np.abs(y["y"])) <= 4.0 * a


def test_9_2_3_with_make_distribution():
    # The same case built through simunc.uncertainty.distributions.make_distribution("rectangular", u=1).
    dists = [make_distribution("rectangular", 1.0) for _ in range(4)]
    for d in dists:
        # half-width sqrt(3) for u = 1 (JCGM 100:2008, 4.3.7: u = a / sqrt(3))
        assert d.support() == pytest.approx((-SQRT3, SQRT3), rel=1e-12)
    _, y = monte_carlo(_additive(dists), M_TRIALS, seed=77)
    s = summarize(y["y"], 0.95)
    exact_q = quantile(lambda v: sum_of_uniforms_cdf(v, 4, SQRT3), 0.975, 0.0, 4.0 * SQRT3)
    se_q = _se_quantile(0.975, sum_of_uniforms_pdf(exact_q, 4, SQRT3))
    assert s["high"] == pytest.approx(exact_q, abs=K_SE * se_q)
    assert s["standard_uncertainty"] == pytest.approx(2.0, abs=K_SE * _se_std(2.0))


# ---------------------------------------------------------------------------
# 9.2.4: X1..X3 rectangular with u = 1, X4 rectangular with u = 10
# ---------------------------------------------------------------------------
def test_9_2_4_rectangular_inputs_different_widths():
    a, b = SQRT3, 10.0 * SQRT3
    dists = [stats.uniform(loc=-a, scale=2 * a)] * 3 + [stats.uniform(loc=-b, scale=2 * b)]
    _, y = monte_carlo(_additive(dists), M_TRIALS, seed=9204)
    s = summarize(y["y"], 0.95)

    u_exact = math.sqrt(3 * 1.0 + 10.0**2)
    exact_q = quantile(lambda v: convolution_cdf(v, a, b), 0.975, 0.0, b + 3 * a)
    h = 1e-3
    f_q = (convolution_cdf(exact_q + h, a, b) - convolution_cdf(exact_q - h, a, b)) / (2 * h)
    se_q = _se_quantile(0.975, f_q)
    # JCGM 101 Table 4 (from memory of JCGM 101, Table 4): u(y) = 10.15,
    # MCM 95 % interval [-17.0, 17.0] (GUF would give [-19.9, 19.9]).
    assert u_exact == pytest.approx(10.15, abs=0.005)
    assert exact_q == pytest.approx(17.0, abs=0.05)

    # Kurtosis of Y is below 3 (flat-topped), so the normal-theory SE of s is an upper bound.
    assert s["standard_uncertainty"] == pytest.approx(u_exact, abs=K_SE * _se_std(u_exact))
    assert s["high"] == pytest.approx(exact_q, abs=K_SE * se_q)
    assert s["low"] == pytest.approx(-exact_q, abs=K_SE * se_q)
    assert s["high"] == pytest.approx(17.0, abs=0.05 + K_SE * se_q)
    frac = np.mean(y["y"] <= exact_q)
    assert frac == pytest.approx(0.975, abs=K_SE * math.sqrt(0.975 * 0.025 / M_TRIALS))


def test_convolution_cdf_agrees_with_closed_form():
    # Cross-check of the test's own numerical convolution: for equal widths
    # (b = a) S3 + X4 is the Irwin-Hall sum of four, in closed form.
    a = SQRT3
    for v in (-5.0, -1.0, 0.0, 2.5, 3.88, 6.0):
        assert convolution_cdf(v, a, a) == pytest.approx(sum_of_uniforms_cdf(v, 4, a), abs=1e-10)


# ---------------------------------------------------------------------------
# summarize: probabilistically symmetric interval and other coverage probabilities
# ---------------------------------------------------------------------------
def test_summarize_other_coverage_probability():
    # 99 % interval of N(0, 2^2): +-2 z_0.995 = +-5.1517 (normal quantile via scipy).
    _, y = monte_carlo(_additive([stats.norm()] * 4), 400_000, seed=5)
    s = summarize(y["y"], 0.99)
    exact = 2.0 * stats.norm.ppf(0.995)
    se = math.sqrt(0.995 * 0.005 / 400_000) / stats.norm.pdf(exact, scale=2.0)
    assert s["high"] == pytest.approx(exact, abs=K_SE * se)
    assert s["low"] == pytest.approx(-exact, abs=K_SE * se)
    assert s["coverage_probability"] == 0.99


def test_summarize_rejects_non_finite():
    with pytest.raises(FloatingPointError):
        summarize(np.array([1.0, np.nan, 2.0]))


def test_summarize_hand_values():
    # Five values 1..5: mean 3, sample standard deviation (1/(M-1)) sqrt(10/4)
    # (JCGM 101:2008, 7.6 uses the 1/(M-1) form); hand calculation.
    s = summarize(np.array([5.0, 1.0, 4.0, 2.0, 3.0]), 0.5)
    assert s["mean"] == pytest.approx(3.0, rel=1e-15)
    assert s["standard_uncertainty"] == pytest.approx(math.sqrt(2.5), rel=1e-14)
    assert s["low"] <= 3.0 <= s["high"]
    assert 1.0 < s["low"] < 3.0 and 3.0 < s["high"] < 5.0


# ---------------------------------------------------------------------------
# Reproducibility
# ---------------------------------------------------------------------------
def test_same_seed_bit_identical():
    a = SQRT3
    dists = [stats.norm(), stats.uniform(loc=-a, scale=2 * a), make_distribution("triangular", 0.5),
             stats.norm(0.0, 3.0)]
    p = _additive(dists)
    x1, y1 = monte_carlo(p, 50_000, seed=12345)
    x2, y2 = monte_carlo(p, 50_000, seed=12345)
    assert x1.shape == (50_000, 4)
    assert np.array_equal(x1, x2)
    assert np.array_equal(y1["y"], y2["y"])
    assert x1.tobytes() == x2.tobytes()
    x3, y3 = monte_carlo(p, 50_000, seed=12346)
    assert not np.array_equal(x1, x3)
    assert not np.array_equal(y1["y"], y3["y"])


def test_input_columns_follow_their_distributions():
    # Each column of x must be drawn from its own distribution: a one-sample
    # Kolmogorov-Smirnov test per column against the frozen distribution
    # (scipy.stats.kstest); p-value threshold 1e-4.
    dists = [stats.norm(0.0, 1.0), stats.uniform(loc=-2.0, scale=4.0), stats.norm(5.0, 0.1),
             make_distribution("triangular", 1.0)]
    x, y = monte_carlo(_additive(dists), 20_000, seed=3)
    for j, d in enumerate(dists):
        assert stats.kstest(x[:, j], d.cdf).pvalue > 1e-4
    np.testing.assert_allclose(y["y"], x.sum(axis=1), rtol=1e-14, atol=1e-14)
