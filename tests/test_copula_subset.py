"""The Gaussian copula transforms only the inputs that take part in a correlation.

Checks: the result against the full d x d Cholesky copula computed here directly from
``numpy.linalg.cholesky`` and ``scipy.special.ndtr`` / ``ndtri`` (the reference); the realised
Pearson correlation of a correlated normal pair against the written r within the Monte Carlo
standard error of a sample correlation; the uncorrelated columns bit for bit the unit samples;
no correlation, an identity matrix and all inputs correlated; and the independence of the
draw from how many blocks are drawn together.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import special, stats

from simunc.uncertainty.sampling import (
    InputSampler,
    correlated_inputs,
    gaussian_copula,
    inverse_cdf,
    unit_block,
)

EPS = 1e-15


def reference_copula(u: np.ndarray, r: np.ndarray) -> np.ndarray:
    """Full-matrix Gaussian copula over all d inputs, u' = Phi(L Phi^-1(u)) with R = L L^T: a
    multivariate normal drawn by a Cholesky factor (JCGM 101:2008 6.4.8, from memory of the
    clause) and each coordinate put through Phi -- numpy.linalg.cholesky, scipy.special.ndtri
    and ndtr, and a BLAS matrix product."""
    lower = np.linalg.cholesky(r)
    z = special.ndtri(np.clip(u, EPS, 1.0 - EPS))
    return special.ndtr(z @ lower.T)


def block_of_three(d: int = 10, where=(1, 4, 8)) -> np.ndarray:
    r = np.eye(d)
    a, b, c = where
    for (i, j), v in {(a, b): 0.6, (a, c): -0.3, (b, c): 0.45}.items():
        r[i, j] = r[j, i] = v
    return r


def test_ten_inputs_with_a_block_of_three_match_the_full_cholesky_copula():
    r = block_of_three()
    assert correlated_inputs(r).tolist() == [1, 4, 8]
    assert correlated_inputs(np.linalg.cholesky(r)).tolist() == [1, 4, 8]
    u = unit_block("random", 50_000, 10, seed=3, block=2)
    ref = reference_copula(u, r)
    got = gaussian_copula(u, r)
    # Reference: the full-matrix Cholesky copula above (numpy.linalg.cholesky + scipy.special).
    np.testing.assert_allclose(got, ref, rtol=0.0, atol=1e-13)
    # The user's path: InputSampler.draw with unit rectangular marginals (ppf = identity).
    sampler = InputSampler([stats.uniform(0.0, 1.0)] * 10, 3, "random", r, block_size=50_000)
    assert sampler.copula_inputs.tolist() == [1, 4, 8]
    x = sampler.draw(2, [50_000])
    np.testing.assert_allclose(x, ref, rtol=0.0, atol=1e-13)
    # and the correlated columns really moved (the block is not left as the unit samples)
    assert np.max(np.abs(got[:, [4, 8]] - u[:, [4, 8]])) > 0.1


def test_all_inputs_correlated_match_the_full_cholesky_copula():
    r = np.array([[1.0, 0.5, 0.2, -0.1],
                  [0.5, 1.0, 0.3, 0.0],
                  [0.2, 0.3, 1.0, 0.25],
                  [-0.1, 0.0, 0.25, 1.0]])
    assert correlated_inputs(r).tolist() == [0, 1, 2, 3]
    u = unit_block("lhs", 20_000, 4, seed=8, block=1)
    # Reference: the full-matrix Cholesky copula (numpy.linalg.cholesky + scipy.special).
    np.testing.assert_allclose(gaussian_copula(u, r), reference_copula(u, r), rtol=0.0, atol=1e-13)


def test_realised_pearson_of_a_normal_pair_and_untouched_columns():
    n, d, (i, j), r = 400_000, 6, (2, 5), 0.7
    corr = np.eye(d)
    corr[i, j] = corr[j, i] = r
    dists = [stats.norm(10.0 * k, 0.5 + k) for k in range(d)]
    x = InputSampler(dists, 21, "random", corr, block_size=2**16).draw(0, [2**16] * 6 + [6784])
    assert x.shape == (n, d)
    got = float(np.corrcoef(x[:, i], x[:, j])[0, 1])
    # Written r against the realised one: standard error of a sample correlation of a normal
    # pair, (1 - r^2) / sqrt(n) (large-sample theory; JCGM 101:2008 leaves the Monte Carlo
    # error to such sampling theory); 5 standard errors.
    assert abs(got - r) < 5.0 * (1.0 - r * r) / math.sqrt(n)
    # Uncorrelated pairs stay uncorrelated: |r| < 5 / sqrt(n) (same formula at r = 0).
    assert abs(float(np.corrcoef(x[:, 0], x[:, i])[0, 1])) < 5.0 / math.sqrt(n)


def test_uncorrelated_columns_are_bitwise_the_unit_samples():
    r = block_of_three()
    u = unit_block("sobol", 4096, 10, seed=5, block=0)
    v = gaussian_copula(u, r)
    rest = [k for k in range(10) if k not in (1, 4, 8)]
    assert np.array_equal(v[:, rest], u[:, rest])
    assert not np.array_equal(v[:, [1, 4, 8]], u[:, [1, 4, 8]])
    # Through the sampler: an uncorrelated input is its inverse CDF at the unit sample itself.
    dists = [stats.norm(1.0, 0.2 + 0.1 * k) for k in range(10)]
    x = InputSampler(dists, 5, "sobol", r, block_size=4096).draw(0, [4096])
    for k in rest:
        assert np.array_equal(x[:, k], inverse_cdf(dists[k], np.clip(u[:, k], EPS, 1.0 - EPS)))


@pytest.mark.parametrize("method", ["random", "lhs", "sobol"])
def test_no_correlation_and_identity_draw_the_independent_samples(method):
    dists = [stats.norm(0.0, 1.0), stats.uniform(2.0, 3.0), stats.triang(0.3, -1.0, 2.0)]
    none = InputSampler(dists, 9, method, None, block_size=1024).draw(0, [1024, 1024])
    ident = InputSampler(dists, 9, method, np.eye(3), block_size=1024)
    assert ident.copula_inputs.size == 0
    assert np.array_equal(ident.draw(0, [1024, 1024]), none)
    u = np.vstack([unit_block(method, 1024, 3, 9, b) for b in (0, 1)])
    assert np.array_equal(gaussian_copula(u, np.eye(3)), u)
    for k, dist in enumerate(dists):
        assert np.array_equal(none[:, k], inverse_cdf(dist, np.clip(u[:, k], EPS, 1.0 - EPS)))


def test_draw_does_not_depend_on_how_many_blocks_are_drawn_together():
    r = block_of_three()
    dists = [stats.lognorm(0.3)] * 10
    s = InputSampler(dists, 17, "random", r, block_size=1000)
    whole = s.draw(0, [1000, 1000, 1000, 700])
    parts = np.vstack([s.draw(0, [1000]), s.draw(1, [1000, 1000]), s.draw(3, [700])])
    assert np.array_equal(whole, parts)
