"""Sampling of the unit hypercube and mapping through inverse CDFs.

Samples are drawn on [0, 1)^d and mapped through each input's inverse
cumulative distribution function (``ppf``), so that the same mapping serves
pseudo-random Monte Carlo and the Sobol sample matrices of the sensitivity
analysis.  The generator is numpy's PCG64 seeded from the study's seed, so a
run is reproducible.
"""

from __future__ import annotations

import numpy as np

#: Smallest distance from 0 and 1 kept before the inverse CDF (unbounded tails).
_EPS = 1e-15


def unit_samples(n: int, d: int, seed: int) -> np.ndarray:
    """``n`` by ``d`` pseudo-random points on [0, 1)^d (PCG64 seeded with ``seed``).

    >>> unit_samples(3, 2, 7).shape
    (3, 2)
    """
    return np.random.default_rng(seed).random((n, d))


def map_to_inputs(u: np.ndarray, distributions) -> np.ndarray:
    """Map unit samples (columns) through the distributions' inverse CDFs.

    >>> from scipy import stats
    >>> map_to_inputs(np.array([[0.5, 0.975]]), [stats.norm(0, 1), stats.norm(0, 1)]).round(2)
    array([[0.  , 1.96]])
    """
    u = np.clip(u, _EPS, 1.0 - _EPS)
    out = np.empty_like(u)
    for j, dist in enumerate(distributions):
        out[:, j] = dist.ppf(u[:, j])
    return out
