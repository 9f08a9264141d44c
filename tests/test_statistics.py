"""simunc.uncertainty.statistics: coverage intervals, numerical tolerance, conformity, streaming accumulators.

Check values come from
* JCGM 101:2008 (Supplement 1 to the GUM), 7.7 (coverage intervals from order
  statistics) and 7.9.2 (numerical tolerance), marked where recalled;
* JCGM 106:2012, 7.1-7.3 (conformity probability; for a normal PDF
  p_c = Phi((T_U - y)/u) - Phi((T_L - y)/u)), recalled;
* NIST StRD univariate summary statistics, datasets NumAcc1-NumAcc4 (certified
  mean and standard deviation), recalled;
* numpy.quantile (Hyndman & Fan type 7) and brute-force searches written here;
* exact rational arithmetic (fractions.Fraction) on the stored doubles.
"""

from __future__ import annotations

import math
from fractions import Fraction

import numpy as np
import pytest
from scipy import stats

from simunc.uncertainty.statistics import (
    ConformityCounter,
    HistogramQuantiles,
    Moments,
    PairwiseMoments,
    conformity_probability,
    coverage_count,
    coverage_factor,
    numerical_tolerance,
    shortest_interval,
    symmetric_interval,
)


# ---------------------------------------------------------------------------
# NIST StRD NumAcc datasets (from memory of NIST StRD, univariate summary statistics):
#   NumAcc1: 10000001, 10000003, 10000002                     mean 10000002,   sd 1
#   NumAcc2: 1.2, then 500 x (1.1, 1.3)        (1001 values)  mean 1.2,        sd 0.1
#   NumAcc3: 1000000.2, then 500 x (1000000.1, 1000000.3)     mean 1000000.2,  sd 0.1
#   NumAcc4: 10000000.2, then 500 x (10000000.1, 10000000.3)  mean 10000000.2, sd 0.1
# ---------------------------------------------------------------------------
def numacc(name: str) -> tuple[np.ndarray, float, float]:
    if name == "NumAcc1":
        return np.array([10000001.0, 10000003.0, 10000002.0]), 10000002.0, 1.0
    centre = {"NumAcc2": "1.2", "NumAcc3": "1000000.2", "NumAcc4": "10000000.2"}[name]
    c = Fraction(centre)
    values = [c] + [c - Fraction(1, 10), c + Fraction(1, 10)] * 500
    return np.array([float(v) for v in values]), float(c), 0.1


NUMACC = ["NumAcc1", "NumAcc2", "NumAcc3", "NumAcc4"]


def exact_mean_sd(x: np.ndarray) -> tuple[float, float]:
    """Mean and sample standard deviation of the stored doubles, in exact rational arithmetic."""
    f = [Fraction(float(v)) for v in x]
    mean = sum(f) / len(f)
    var = sum((v - mean) ** 2 for v in f) / (len(f) - 1)
    return float(mean), math.sqrt(float(var))


@pytest.mark.parametrize("name", NUMACC)
@pytest.mark.parametrize("block", [1, 2, 7, 64, 2000])
def test_nist_numacc_block_moments(name, block):
    x, mean_cert, sd_cert = numacc(name)
    acc = PairwiseMoments()
    for i in range(0, x.size, block):
        acc.push(Moments.of(x[i:i + block], shift=x[0]))   # about the first value, as the engine
    m = acc.total()
    mean_ex, sd_ex = exact_mean_sd(x)
    assert m.count == x.size
    # Against the certified values: the data are decimals, stored as doubles with a relative
    # error up to 1.1e-16 of ~1e7, i.e. up to ~1e-9 absolute for NumAcc4 -> sd to ~1e-8 relative.
    assert m.mean == pytest.approx(mean_cert, rel=1e-15)
    assert m.std == pytest.approx(sd_cert, rel={"NumAcc1": 1e-15, "NumAcc2": 1e-13,
                                                "NumAcc3": 1e-8, "NumAcc4": 5e-8}[name])
    # Against exact arithmetic on the stored doubles: the algorithm itself loses almost nothing.
    assert m.mean == pytest.approx(mean_ex, rel=2e-16)
    assert m.std == pytest.approx(sd_ex, rel=1e-14)


def test_moments_merge_equals_numpy():
    rng = np.random.default_rng(11)
    x = rng.normal(3.0, 2.0, 10_001)
    acc = PairwiseMoments()
    for part in np.array_split(x, 13):
        acc.push(Moments.of(part, shift=x[0]))
    m = acc.total()
    assert m.mean == pytest.approx(np.mean(x), rel=1e-14)
    assert m.variance == pytest.approx(np.var(x, ddof=1), rel=1e-13)


def test_pairwise_tree_depends_on_blocks_only():
    # Same blocks pushed -> bit-identical totals; the tree does not see chunks.
    rng = np.random.default_rng(3)
    blocks = [rng.normal(1e6, 1.0, n) for n in [64] * 9 + [17]]
    a, b = PairwiseMoments(), PairwiseMoments()
    for blk in blocks:
        a.push(Moments.of(blk, 1e6))
    for blk in [np.copy(v) for v in blocks]:
        b.push(Moments.of(blk, 1e6))
    assert a.total() == b.total()


# ---------------------------------------------------------------------------
# Coverage intervals from order statistics (JCGM 101:2008, 7.7)
# ---------------------------------------------------------------------------
def test_coverage_count_rule():
    # q = pM if integer, else the integer part of pM + 1/2 (from memory of JCGM 101, 7.7.1).
    assert coverage_count(10_000, 0.95) == 9500
    assert coverage_count(10_001, 0.95) == 9501          # 9500.95 + 0.5 -> 9501
    assert coverage_count(10, 0.95) == 10                # 9.5 + 0.5 -> 10
    assert coverage_count(21, 0.5) == 11                 # 10.5 + 0.5 -> 11
    with pytest.raises(ValueError):
        coverage_count(10, 1.0)


@pytest.mark.parametrize("n", [3, 50, 1001, 100_000])
@pytest.mark.parametrize("p", [0.5, 0.9, 0.95, 0.99])
def test_symmetric_interval_linear_equals_numpy(n, p):
    y = np.random.default_rng(n).standard_normal(n)
    a = 0.5 * (1.0 - p)
    assert symmetric_interval(y, p) == tuple(np.quantile(y, [a, 1.0 - a]))


def test_symmetric_interval_order_rule_hand_values():
    # JCGM 101 7.7.1 rule (from memory of JCGM 101, 7.7.1): r = (M - q)/2 if an integer, else
    # the integer part of (M - q + 1)/2.  M = 100, p = 0.9: q = 90, r = 5 -> [y_(5), y_(95)].
    y = np.random.default_rng(0).permutation(np.arange(1.0, 101.0))
    assert symmetric_interval(y, 0.9, rule="order") == (5.0, 95.0)
    # M = 100, p = 0.95: q = 95, (M - q)/2 = 2.5 not an integer -> r = int(6/2) = 3: [y_(3), y_(98)].
    assert symmetric_interval(y, 0.95, rule="order") == (3.0, 98.0)
    with pytest.raises(ValueError):
        symmetric_interval(y, 0.9, rule="nearest")


def brute_force_shortest(y, p):
    ys = np.sort(y)
    m = ys.size
    q = coverage_count(m, p)
    best = None
    for r in range(m - q):
        w = ys[r + q] - ys[r]
        if best is None or w < best[0]:
            best = (w, ys[r], ys[r + q])
    return best[1], best[2]


@pytest.mark.parametrize("seed", range(6))
def test_shortest_interval_equals_brute_force(seed):
    rng = np.random.default_rng(seed)
    y = rng.gamma(1.5, size=257)
    for p in (0.5, 0.9, 0.95):
        assert shortest_interval(y, p) == brute_force_shortest(y, p)


def test_shortest_interval_exponential():
    # Exp(1): decreasing density, so the shortest 95 % interval is [0, -ln 0.05] (closed form);
    # its upper end is the 0.95 quantile: standard error sqrt(0.95 * 0.05 / M) / f(q), f(q) = 0.05.
    m = 1_000_000
    y = np.random.default_rng(5).exponential(size=m)
    low, high = shortest_interval(y, 0.95)
    se = math.sqrt(0.95 * 0.05 / m) / 0.05
    assert high == pytest.approx(-math.log(0.05), abs=5 * se)
    assert 0.0 <= low < 5 * se
    # The symmetric interval of the same trials is longer (skewed distribution).
    s_low, s_high = symmetric_interval(y, 0.95)
    assert high - low < s_high - s_low


def test_coverage_factor_values():
    # Normal, p = 0.95: k = 1.960 (JCGM 100:2008, G.1.3, Table G.1).
    assert coverage_factor(-1.959964, 1.959964, 1.0) == pytest.approx(1.96, abs=1e-4)
    # JCGM 101:2008, 9.2.3 (from memory of JCGM 101, Table 3): u = 2, [-3.88, 3.88] -> k = 1.94.
    assert coverage_factor(-3.88, 3.88, 2.0) == pytest.approx(1.94, abs=1e-12)
    assert math.isnan(coverage_factor(1.0, 1.0, 0.0))


# ---------------------------------------------------------------------------
# Numerical tolerance (JCGM 101:2008, 7.9.2)
# ---------------------------------------------------------------------------
@pytest.mark.parametrize("u, n_dig, delta", [
    (0.00035, 2, 0.5e-5),   # JCGM 101 7.9.2 example: 35 x 10^-5 g (from memory of JCGM 101, 7.9.2)
    (2.0, 2, 0.05),         # 20 x 10^-1
    (2.0, 1, 0.5),          # 2 x 10^0
    (10.15, 2, 0.5),        # 10 x 10^0 (JCGM 101 9.2.4: u(y) = 10.15)
    (10.15, 3, 0.05),       # 102 x 10^-1
    (9.96, 2, 0.5),         # rounds up to 10 x 10^0
    (9.94, 2, 0.05),        # 99 x 10^-1
    (0.0064, 2, 0.5e-4),    # 64 x 10^-4
    (1.0, 2, 0.05),         # 10 x 10^-1
    (1e-3, 1, 0.5e-3),      # exact power of ten
    (0.0, 2, 0.0),
])
def test_numerical_tolerance(u, n_dig, delta):
    assert numerical_tolerance(u, n_dig) == pytest.approx(delta, rel=1e-12)


def test_numerical_tolerance_rejects_bad_arguments():
    for u, n in ((1.0, 0), (-1.0, 2), (math.inf, 2), (math.nan, 2)):
        with pytest.raises(ValueError):
            numerical_tolerance(u, n)


# ---------------------------------------------------------------------------
# Conformity probability (JCGM 106:2012)
# ---------------------------------------------------------------------------
def test_conformity_probability_normal_closed_form():
    # JCGM 106:2012, 7.3 (from memory of JCGM 106): for Y ~ N(y, u^2) and tolerance interval
    # [T_L, T_U], p_c = Phi((T_U - y)/u) - Phi((T_L - y)/u). MC tolerance: 5 binomial SE.
    m = 400_000
    y0, u, tl, tu = 10.0, 0.2, 9.7, 10.5
    y = np.random.default_rng(8).normal(y0, u, m)
    exact = stats.norm.cdf((tu - y0) / u) - stats.norm.cdf((tl - y0) / u)
    pc = conformity_probability(y, tl, tu)
    assert pc == pytest.approx(exact, abs=5 * math.sqrt(exact * (1 - exact) / m))
    # One-sided: p_c = Phi((T_U - y)/u).
    exact_u = stats.norm.cdf((tu - y0) / u)
    assert conformity_probability(y, upper=tu) == pytest.approx(
        exact_u, abs=5 * math.sqrt(exact_u * (1 - exact_u) / m))


def test_conformity_counter_matches_whole_array():
    rng = np.random.default_rng(2)
    a, b = rng.normal(0, 1, 10_000), rng.normal(1, 1, 10_000)
    c = ConformityCounter({"ga": ("a", -1.0, 1.0), "gb": ("b", 0.0, None)})
    for s in np.array_split(np.arange(10_000), 7):
        c(None, {"a": a[s], "b": b[s]})
    p = c.probabilities()
    assert p["ga"] == conformity_probability(a, -1.0, 1.0)
    assert p["gb"] == conformity_probability(b, 0.0)
    assert p["all"] == np.mean((np.abs(a) <= 1.0) & (b >= 0.0))
    assert c.trials == 10_000


# ---------------------------------------------------------------------------
# Streaming histogram quantiles: error bound h on every order statistic
# ---------------------------------------------------------------------------
def _sketch(y, first=65_536, splits=5, bins=2**18):
    h = HistogramQuantiles(bins)
    h.set_range(y[:first])
    for part in np.array_split(y, splits):
        h.add(part)
    return h


SAMPLES = {
    "normal": lambda rng: rng.normal(5.0, 0.01, 300_000),
    "lognormal": lambda rng: rng.lognormal(0.0, 1.0, 300_000),       # heavy right tail
    "cauchy": lambda rng: rng.standard_cauchy(300_000),              # tails kept exactly
    "uniform": lambda rng: rng.uniform(-1.0, 1.0, 300_000),
    "discrete": lambda rng: rng.integers(0, 5, 300_000).astype(float),
    "bimodal": lambda rng: np.concatenate([rng.normal(-3, 0.1, 150_000),
                                           rng.normal(3, 0.1, 150_000)]),
}


@pytest.mark.parametrize("kind", list(SAMPLES))
def test_histogram_order_statistics_within_bin_width(kind):
    y = SAMPLES[kind](np.random.default_rng(21))
    h = _sketch(y)
    ys = np.sort(y)
    ranks = np.unique(np.r_[0, 1, 2, np.linspace(0, y.size - 1, 2001).astype(np.int64),
                            y.size - 3, y.size - 2, y.size - 1])
    err = np.abs(h.order_statistics(ranks) - ys[ranks])
    bound = h.error_bound * (1 + 1e-9)
    assert np.max(err) <= bound
    for p in (0.5, 0.9, 0.95, 0.99):
        lo, hi = h.symmetric_interval(p)
        ex_lo, ex_hi = symmetric_interval(y, p)
        assert abs(lo - ex_lo) <= bound and abs(hi - ex_hi) <= bound
        s_lo, s_hi = h.shortest_interval(p)
        e_lo, e_hi = shortest_interval(y, p)
        assert abs((s_hi - s_lo) - (e_hi - e_lo)) <= 2 * bound
    assert h.minimum == ys[0] and h.maximum == ys[-1] and h.count == y.size


def test_histogram_bound_far_below_tolerance_for_normal():
    # Module note: h ~= 11.2 sigma / 2^18 for a normal output; delta of two significant digits
    # of u is at least u / 198, so h <= delta / 100.
    y = np.random.default_rng(4).normal(0.0, 1.0, 65_536)
    h = _sketch(y, splits=1)
    assert h.error_bound == pytest.approx(11.2 / 2**18, rel=0.05)
    assert h.error_bound <= numerical_tolerance(0.995, 2) / 100


def test_histogram_split_invariant_and_constant():
    y = np.random.default_rng(9).lognormal(0.0, 0.5, 100_000)
    a, b = _sketch(y, splits=1), _sketch(y, splits=17)
    assert np.array_equal(a.counts, b.counts)
    assert a.quantiles([0.025, 0.5, 0.975]) == b.quantiles([0.025, 0.5, 0.975])
    assert a.shortest_interval(0.95) == b.shortest_interval(0.95)
    c = _sketch(np.full(1000, 3.25), first=100)
    assert c.symmetric_interval(0.95) == (3.25, 3.25)
    assert c.shortest_interval(0.95) == (3.25, 3.25)
