"""Sampling of the unit hypercube and mapping through inverse CDFs.

Samples are drawn on [0, 1)^d and mapped through each input's inverse
cumulative distribution function (``ppf``), so that the same mapping serves
pseudo-random Monte Carlo and the Sobol sample matrices of the sensitivity
analysis.  The generator is numpy's PCG64 seeded from the study's seed, so a
run is reproducible.
"""

from __future__ import annotations

import numpy as np
from scipy import special

#: Smallest distance from 0 and 1 kept before the inverse CDF (unbounded tails).
_EPS = 1e-15


def unit_samples(n: int, d: int, seed: int) -> np.ndarray:
    """``n`` by ``d`` pseudo-random points on [0, 1)^d (PCG64 seeded with ``seed``).

    >>> unit_samples(3, 2, 7).shape
    (3, 2)
    """
    return np.random.default_rng(seed).random((n, d))


def _triang_ppf(q, c):
    return np.where(q < c, np.sqrt(c * q), 1.0 - np.sqrt((1.0 - c) * (1.0 - q)))


#: Standard-form inverse CDFs of frequent scipy.stats families, called without the
#: per-call argument checking of ``rv_frozen.ppf`` (same formulas as scipy's own ``_ppf``).
_FAST_PPF = {
    "norm": lambda q: special.ndtri(q),
    "uniform": lambda q: q,
    "triang": _triang_ppf,
}


def inverse_cdf(dist, q: np.ndarray) -> np.ndarray:
    """Inverse CDF of a frozen scipy.stats distribution at probabilities ``q`` in (0, 1).

    Normal, uniform and triangular distributions take a direct path; any other
    family uses ``dist.ppf``.

    >>> from scipy import stats
    >>> float(inverse_cdf(stats.norm(2.0, 0.5), np.array([0.975]))[0]) == float(
    ...     stats.norm(2.0, 0.5).ppf(0.975))
    True
    """
    fast = _FAST_PPF.get(getattr(dist.dist, "name", ""))
    if fast is None:
        return dist.ppf(q)
    shapes, loc, scale = dist.dist._parse_args(*dist.args, **dist.kwds)
    return loc + scale * fast(q, *shapes)


def map_to_inputs(u: np.ndarray, distributions) -> np.ndarray:
    """Map unit samples (columns) through the distributions' inverse CDFs.

    >>> from scipy import stats
    >>> map_to_inputs(np.array([[0.5, 0.975]]), [stats.norm(0, 1), stats.norm(0, 1)]).round(2)
    array([[0.  , 1.96]])
    """
    u = np.clip(u, _EPS, 1.0 - _EPS)
    out = np.empty((u.shape[1], u.shape[0]))  # one contiguous row per input
    for j, dist in enumerate(distributions):
        out[j] = inverse_cdf(dist, u[:, j])
    return out.T
