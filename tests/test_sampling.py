"""Sampling and order statistics against the reference implementations in scipy and numpy."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from simunc.propagate import quantiles
from simunc.sampling import inverse_cdf, map_to_inputs, unit_samples


@pytest.mark.parametrize("dist", [stats.norm(1.5, 0.3), stats.uniform(-2.0, 4.0),
                                  stats.triang(0.5, loc=-1.0, scale=2.0),
                                  stats.triang(0.2, loc=3.0, scale=5.0), stats.lognorm(0.4)],
                         ids=["normal", "rectangular", "triangular", "skew-triangular", "lognormal"])
def test_inverse_cdf_equals_scipy_ppf(dist):
    # Reference: scipy.stats rv_frozen.ppf (the direct path must give the same numbers).
    q = unit_samples(50_000, 1, 5)[:, 0]
    np.testing.assert_allclose(inverse_cdf(dist, q), dist.ppf(q), rtol=1e-14, atol=1e-14)


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
