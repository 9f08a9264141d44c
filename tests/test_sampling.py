"""Sampling and order statistics against the reference implementations in scipy and numpy."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from simunc.uncertainty.propagate import quantiles
from simunc.uncertainty.sampling import inverse_cdf, map_to_inputs, unit_samples


@pytest.mark.parametrize("dist", [stats.norm(1.5, 0.3), stats.uniform(-2.0, 4.0),
                                  stats.triang(0.5, loc=-1.0, scale=2.0),
                                  stats.triang(0.2, loc=3.0, scale=5.0), stats.lognorm(0.4)],
                         ids=["normal", "rectangular", "triangular", "skew-triangular", "lognormal"])
def test_inverse_cdf_equals_scipy_ppf(dist):
    # Reference: scipy.stats rv_frozen.ppf (the direct path must give the same numbers).
    q = unit_samples(50_000, 1, 5)[:, 0]
    np.testing.assert_allclose(inverse_cdf(dist, q), dist.ppf(q), rtol=1e-14, atol=1e-14)


_NEW_FAMILIES = [
    stats.trapezoid(0.25, 0.75, loc=-2.0, scale=4.0),
    stats.trapezoid(0.0, 1.0, loc=-1.0, scale=2.0),
    stats.trapezoid(0.5, 0.5, loc=-1.0, scale=2.0), stats.trapezoid(0.1, 0.3, loc=2.0, scale=5.0),
    stats.arcsine(loc=-0.8, scale=1.6),
    stats.truncnorm(-1.5, 1.5, scale=0.2), stats.truncnorm(-0.2, 0.2, scale=3.0),
    stats.truncnorm(-8.0, 8.0), stats.truncnorm(-1.0, 3.0, loc=1.0, scale=2.0),
    stats.truncnorm(1.0, 3.0), stats.truncnorm(-3.0, -1.0),
    stats.lognorm(0.01, loc=-7.0e5, scale=7.0e5), stats.t(3.0, scale=0.5), stats.t(9.5, loc=1.0),
]


@pytest.mark.parametrize("dist", _NEW_FAMILIES, ids=[
    "trapezoid", "trapezoid-rectangular", "trapezoid-triangular", "trapezoid-skew", "arcsine",
    "truncnorm", "truncnorm-narrow", "truncnorm-wide", "truncnorm-skew", "truncnorm-right-tail",
    "truncnorm-left-tail", "lognormal-deviation", "t3", "t9.5"])
def test_inverse_cdf_of_the_other_families_equals_scipy_ppf(dist):
    # Reference: scipy.stats rv_frozen.ppf, to 1e-12 of the distribution's scale, including the
    # extreme probabilities map_to_inputs keeps (1e-15 and 1 - 1e-15).
    q = np.concatenate([unit_samples(50_000, 1, 5)[:, 0],
                        [1e-15, 1e-10, 0.5, 1 - 1e-10, 1 - 1e-15]])
    scale = dist.kwds.get("scale", 1.0)
    np.testing.assert_allclose(inverse_cdf(dist, q), dist.ppf(q), rtol=1e-12, atol=1e-12 * scale)


@pytest.mark.parametrize("n", [1, 2, 7, 1000, 100_001])
@pytest.mark.parametrize("probs", [(0.025, 0.975), (0.0, 1.0), (0.5,), (0.005, 0.995)])
def test_quantiles_equal_numpy(n, probs):
    # Reference: numpy.quantile, default 'linear' method (Hyndman & Fan 1996, type 7).
    y = np.random.default_rng(n).standard_normal(n)
    assert quantiles(y, probs) == list(np.quantile(y, probs))


def test_map_to_inputs_columns_and_marginals():
    u = unit_samples(200_000, 2, 9)
    x = map_to_inputs(u, [stats.norm(0.0, 2.0), stats.uniform(0.0, 1.0)])
    assert x.shape == (200_000, 2)
    # Kolmogorov-Smirnov test against the target marginals (scipy.stats.kstest).
    assert stats.kstest(x[:, 0], stats.norm(0.0, 2.0).cdf).pvalue > 1e-3
    assert stats.kstest(x[:, 1], stats.uniform(0.0, 1.0).cdf).pvalue > 1e-3
