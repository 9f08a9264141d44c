"""Sampling of the unit hypercube, Gaussian copula, and mapping through inverse CDFs.

Samples are drawn on [0, 1)^d and mapped through each input's inverse
cumulative distribution function (``ppf``), so that the same mapping serves
pseudo-random Monte Carlo, Latin hypercube and Sobol sampling and the Sobol
sample matrices of the sensitivity analysis.

Blocks
------
The engine of :mod:`simunc.uncertainty.propagate` draws its trials in fixed-size blocks
(:data:`BLOCK_SIZE`).  Block ``b`` has a generator of its own derived from the
seed and ``b`` (:func:`block_generator`: ``SeedSequence`` spawning; block 0 is
plain ``PCG64(seed)``), so a block's points depend only on the seed, the method and
the block index -- never on how many blocks are drawn together.  Per method
(:data:`METHODS`):

* ``"random"``: ``Generator(block_generator(seed, b)).random((n, d))``;
* ``"lhs"``: a Latin hypercube of the block's ``n`` points,
  ``scipy.stats.qmc.LatinHypercube(d, rng=...)`` (each input's range cut into
  ``n`` strata, one point in each, random positions);
* ``"sobol"``: the first ``n`` points of a Sobol sequence scrambled afresh for
  the block (``scipy.stats.qmc.Sobol(d, scramble=True, rng=...)``: linear
  matrix scrambling and a digital shift); blocks are independent randomized
  quasi-Monte Carlo replicates.  A block of ``2^m`` points is a scrambled
  ``(t, m, d)``-net.

Correlated inputs
-----------------
:func:`gaussian_copula` turns independent uniforms into uniforms with the
dependence of a Gaussian copula of correlation matrix ``R``: ``z = ndtri(u)``,
``z' = L z`` with ``R = L L^T`` (Cholesky), ``u' = ndtr(z')``.  Each ``z'_j``
is standard normal (``R_jj = 1``), so each ``u'_j`` is uniform and every
input keeps its marginal exactly.  The Pearson correlation of the normal
scores is ``R``; that of two normal inputs is ``R``; the Spearman rank
correlation of any two continuous inputs is ``(6 / pi) arcsin(R_ij / 2)``.

Only the inputs that take part in a correlation (:func:`correlated_inputs`: a non-zero
off-diagonal entry in their row of ``R``) go through the copula.  The other columns are
left as they are: ``R`` and ``L`` are the identity on them, so the full transform would
give back the same uniforms (to the rounding of ``ndtr(ndtri(u))``), and the correlated
columns come out bit for bit as from the full ``d`` by ``d`` transform.  With no
correlation, or an identity matrix, there is no copula work at all.

References
----------
.. [1] M. D. McKay, R. J. Beckman, W. J. Conover, "A comparison of three
   methods for selecting values of input variables in the analysis of output
   from a computer code", Technometrics 21 (1979) 239-245.
.. [2] I. M. Sobol', "On the distribution of points in a cube and the
   approximate evaluation of integrals", USSR Comput. Math. Math. Phys. 7
   (1967) 86-112; J. Matousek, "On the L2-discrepancy for anchored boxes",
   J. Complexity 14 (1998) 527-556 (linear matrix scrambling).
.. [3] R. B. Nelsen, An Introduction to Copulas, 2nd ed., Springer (2006),
   5.1.2 (Spearman's rho of the Gaussian copula).
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Callable, Sequence
from typing import Any

import numpy as np
from scipy import optimize, special
from scipy.stats import qmc

from simunc.uncertainty.correlation import Correlation

#: Smallest distance from 0 and 1 kept before the inverse CDF (unbounded tails).
_EPS = 1e-15


#: Sampling methods on the unit hypercube.
METHODS = ("random", "lhs", "sobol")
#: Trials per block of the chunked engine (a power of two, for Sobol nets).
BLOCK_SIZE = 2**16


def unit_samples(n: int, d: int, seed: int) -> np.ndarray:
    """``n`` by ``d`` pseudo-random points on [0, 1)^d (PCG64 seeded with ``seed``).

    >>> unit_samples(3, 2, 7).shape
    (3, 2)
    """
    return np.random.default_rng(seed).random((n, d))


def _triang_ppf(q, c):
    return np.where(q < c, np.sqrt(c * q), 1.0 - np.sqrt((1.0 - c) * (1.0 - q)))


def _trapezoid_ppf(q, c, d):
    # scipy.stats.trapezoid on [0, 1]: rises on [0, c], flat on [c, d], falls on [d, 1].
    h = 1.0 + d - c  # 2 / (height of the top) = 1 + d - c
    qc, qd = c / h, (2.0 * d - c) / h
    return np.where(q < qc, np.sqrt(q * c * h),
                    np.where(q <= qd, 0.5 * q * h + 0.5 * c,
                             1.0 - np.sqrt((1.0 - q) * h * (1.0 - d))))


def _arcsine_ppf(q):
    return np.sin(0.5 * np.pi * q) ** 2


def _truncnorm_ppf(q, a, b):
    # Normal truncated to [a, b]: Phi^-1(Phi(a) + q (Phi(b) - Phi(a))), taken from the nearer
    # tail (the upper half from 1 - q and the survival function) to keep the digits in the tails.
    mass = np.where(a >= 0.0, special.ndtr(-a) - special.ndtr(-b), special.ndtr(b) - special.ndtr(a))
    upper = q > 0.5
    lower_x = special.ndtri(special.ndtr(a) + q * mass)
    upper_x = -special.ndtri(special.ndtr(-b) + (1.0 - q) * mass)
    return np.where(upper, upper_x, lower_x)


#: Standard-form inverse CDFs of the scipy.stats families simunc assigns, called without the
#: per-call argument checking of ``rv_frozen.ppf`` (the formulas of scipy's own ``_ppf``, or
#: for the truncated normal a direct one; tests/test_sampling.py checks them against scipy).
#: The t-distribution's cost is in ``stdtrit`` itself, which this path calls as scipy does.
_FAST_PPF: dict[str, Callable[..., np.ndarray]] = {
    "norm": lambda q: special.ndtri(q),
    "uniform": lambda q: q,
    "triang": _triang_ppf,
    "trapezoid": _trapezoid_ppf,
    "arcsine": _arcsine_ppf,
    "truncnorm": _truncnorm_ppf,
    "lognorm": lambda q, s: np.exp(s * special.ndtri(q)),
    "t": lambda q, df: special.stdtrit(df, q),
}


def _shapes_loc_scale(dist: Any) -> tuple[tuple[Any, ...], Any, Any]:
    """Shape parameters, ``loc`` and ``scale`` of a frozen continuous scipy.stats distribution.

    Read from the frozen object's public ``args`` and ``kwds`` and the family's ``shapes``
    names, bound as scipy binds them (the shapes in order, then ``loc`` and ``scale``, by
    position or by keyword; ``loc`` 0 and ``scale`` 1 by default).  The values are passed on
    unchanged.

    >>> from scipy import stats
    >>> _shapes_loc_scale(stats.truncnorm(-1.0, b=2.0, scale=3.0))
    ((-1.0, 2.0), 0, 3.0)
    >>> _shapes_loc_scale(stats.norm(1.5))
    ((), 1.5, 1)
    """
    names = (dist.dist.shapes or "").replace(",", " ").split()
    bound = dict(zip([*names, "loc", "scale"], dist.args))
    bound.update(dist.kwds)
    return tuple(bound[name] for name in names), bound.get("loc", 0), bound.get("scale", 1)


def inverse_cdf(dist, q: np.ndarray) -> np.ndarray:
    """Inverse CDF of a frozen scipy.stats distribution at probabilities ``q`` in (0, 1).

    The families of :data:`_FAST_PPF` (normal, uniform, triangular, trapezoidal,
    arcsine, truncated normal, lognormal, t) take a direct path; any other family
    uses ``dist.ppf``.

    >>> from scipy import stats
    >>> float(inverse_cdf(stats.norm(2.0, 0.5), np.array([0.975]))[0]) == float(
    ...     stats.norm(2.0, 0.5).ppf(0.975))
    True
    """
    fast = _FAST_PPF.get(getattr(dist.dist, "name", ""))
    if fast is None:
        return dist.ppf(q)
    shapes, loc, scale = _shapes_loc_scale(dist)
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


def block_generator(seed: int, block: int) -> np.random.PCG64:
    """Bit generator of block ``block``, derived from the seed and the block index alone.

    Block 0 is ``PCG64(seed)``, the generator of :func:`unit_samples` (so a run
    of at most one block draws the trials of :func:`unit_samples`); block
    ``b >= 1`` is ``PCG64(SeedSequence(seed, spawn_key=(b,)))``, the ``b``-th
    child numpy's ``SeedSequence.spawn`` would give: streams hashed apart,
    independent for any feasible run.  (A *jumped* PCG64 would not do: the
    scipy.stats.qmc engines seed themselves from the generator's seed
    sequence, which a jumped generator draws afresh.)

    >>> bool(np.random.Generator(block_generator(7, 0)).random() == unit_samples(1, 1, 7)[0, 0])
    True
    >>> a = np.random.Generator(block_generator(7, 3)).random()
    >>> bool(a == np.random.Generator(block_generator(7, 3)).random())
    True
    """
    if int(seed) != seed or seed < 0:
        raise ValueError(f"seed must be a non-negative integer, got {seed!r}")
    if int(block) != block or block < 0:
        raise ValueError(f"block must be a non-negative integer, got {block!r}")
    if block == 0:
        return np.random.PCG64(int(seed))
    return np.random.PCG64(np.random.SeedSequence(int(seed), spawn_key=(int(block),)))


def unit_block(method: str, n: int, d: int, seed: int, block: int = 0) -> np.ndarray:
    """``n`` points of block ``block`` on [0, 1)^d by ``method`` (see :data:`METHODS`).

    Parameters
    ----------
    method : {"random", "lhs", "sobol"}
    n : int
        Points in the block (the full block size, or fewer for a last, partial block).
    d : int
        Dimension.
    seed, block : int
        The block's generator is :func:`block_generator` ``(seed, block)``.

    Returns
    -------
    ndarray, shape (n, d)

    Examples
    --------
    A Latin hypercube puts one point in each of the ``n`` strata of every input:

    >>> u = unit_block("lhs", 8, 3, seed=1, block=4)
    >>> [sorted(np.floor(u[:, j] * 8).astype(int).tolist()) == list(range(8)) for j in range(3)]
    [True, True, True]
    >>> bool(np.array_equal(unit_block("sobol", 4, 2, 3, 5), unit_block("sobol", 4, 2, 3, 5)))
    True
    """
    rng = np.random.Generator(block_generator(seed, block))
    if method == "random":
        return rng.random((n, d))
    if method == "lhs":
        return qmc.LatinHypercube(d, rng=rng).random(n)
    if method == "sobol":
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")   # balance warning for n not a power of two
            return qmc.Sobol(d, scramble=True, rng=rng).random(n)
    raise ValueError(f"sampling method must be one of {METHODS}, got {method!r}")


def correlation_factor(correlation, d: int) -> np.ndarray:
    """Lower Cholesky factor ``L`` of a correlation matrix (``R = L L^T``), after the checks of
    :class:`~simunc.uncertainty.correlation.Correlation`.

    Raises
    ------
    ValueError
        When ``R`` is not ``d`` by ``d``, not symmetric, has a diagonal other
        than 1, entries outside [-1, 1], or is not positive definite.

    >>> correlation_factor([[1.0, 0.6], [0.6, 1.0]], 2).round(3)
    array([[1. , 0. ],
           [0.6, 0.8]])
    """
    if isinstance(correlation, Correlation):
        if len(correlation.names) != d:
            raise ValueError(f"correlation matrix must be {d} x {d} (one row per input), got "
                             f"{len(correlation.names)} inputs")
        return correlation.factor()
    r = np.asarray(correlation, dtype=float)
    names = tuple(f"x{i}" for i in range(d))
    if r.shape != (d, d):
        raise ValueError(f"correlation matrix must be {d} x {d} (one row per input), got {r.shape}")
    return Correlation(names, r).factor()


def gaussian_copula(u: np.ndarray, correlation) -> np.ndarray:
    """Give independent uniforms the dependence of a Gaussian copula of correlation ``R``.

    ``u' = ndtr(L ndtri(u))`` row by row, ``R = L L^T``; each column stays
    uniform on (0, 1), so mapping ``u'`` through the inverse CDFs keeps every
    marginal.  The products are written out input by input (no matrix
    library call), so each trial's values do not depend on the number of rows.
    Only the columns of :func:`correlated_inputs` are transformed; the others
    are returned unchanged.

    Parameters
    ----------
    u : ndarray, shape (n, d)
        Independent uniforms.
    correlation : array_like, shape (d, d)
        Correlation matrix R of the normal scores [1].

    Returns
    -------
    ndarray, shape (n, d)

    Examples
    --------
    >>> u = unit_samples(200_000, 2, 4)
    >>> v = gaussian_copula(u, [[1.0, 0.8], [0.8, 1.0]])
    >>> z = special.ndtri(v)
    >>> round(float(np.corrcoef(z.T)[0, 1]), 2), round(float(v[:, 1].mean()), 2)
    (0.8, 0.5)
    """
    u = np.asarray(u, dtype=float)
    return copula_with_factor(u, correlation_factor(correlation, u.shape[1]))


def correlated_inputs(matrix) -> np.ndarray:
    """Indices, ascending, of the inputs that take part in a correlation: those with a non-zero
    off-diagonal entry in their row or column of ``matrix``.

    ``matrix`` is the normal-score correlation ``R`` or its Cholesky factor ``L``: both give
    the same set, since an input whose row of ``R`` is zero off the diagonal has ``L``'s row
    and column zero off the diagonal too (``L_ii = 1``), exactly, in floating point.

    >>> correlated_inputs(np.array([[1.0, 0.0, 0.3], [0.0, 1.0, 0.0], [0.3, 0.0, 1.0]]))
    array([0, 2])
    >>> correlated_inputs(np.eye(3)).size
    0
    """
    off = np.asarray(matrix, dtype=float) != 0.0
    np.fill_diagonal(off, False)
    return np.flatnonzero(off.any(axis=0) | off.any(axis=1))


def _copula_columns(u: np.ndarray, inputs: np.ndarray, sub_factor: np.ndarray) -> None:
    """In place: columns ``inputs`` of ``u`` through the Gaussian copula whose Cholesky factor
    on those inputs is ``sub_factor`` (``L[inputs][:, inputs]``); the other columns are not
    touched.  The products are written out input by input (no matrix library call), so each
    trial's values do not depend on the number of rows."""
    k = inputs.size
    if k == 0:
        return
    n = u.shape[0]
    z = np.empty((k, n))                       # one contiguous row per correlated input
    for a, j in enumerate(inputs):
        z[a] = u[:, j]
    np.clip(z, _EPS, 1.0 - _EPS, out=z)
    special.ndtri(z, out=z)
    out = np.empty_like(z)
    tmp = np.empty(n)
    for a in range(k):
        row = out[a]
        np.multiply(z[0], sub_factor[a, 0], out=row)
        for b in range(1, a + 1):
            if sub_factor[a, b] != 0.0:
                np.multiply(z[b], sub_factor[a, b], out=tmp)
                row += tmp
    special.ndtr(out, out=out)
    for a, j in enumerate(inputs):
        u[:, j] = out[a]


def copula_with_factor(u: np.ndarray, factor: np.ndarray) -> np.ndarray:
    """:func:`gaussian_copula` with the Cholesky factor ``L`` already computed (and checked).

    Only the inputs of :func:`correlated_inputs` go through the copula; the result is a new
    array, ``u`` is not changed.
    """
    v = np.array(u, dtype=float)
    inputs = correlated_inputs(factor)
    _copula_columns(v, inputs, factor[np.ix_(inputs, inputs)])
    return v


class InputSampler:
    """The one sampler: seeded input values, block by block, with the correlations honoured.

    Block ``b`` of the unit cube comes from :func:`unit_block` ``(method, size, d, seed, b)``,
    goes through the Gaussian copula when a correlation is given, and is mapped through each
    input's inverse CDF. The Monte Carlo engine and the common-random-number design sample
    both draw here, so a sample depends on the seed, the method and the block layout only.

    Parameters
    ----------
    distributions : sequence
        Frozen scipy.stats distributions, one per input.
    seed : int
        Non-negative seed.
    method : {"random", "lhs", "sobol"}
    correlation : array_like or Correlation, optional
        Correlation matrix of the inputs (Gaussian copula).
    block_size : int
        Trials per block (the unit of seeding).
    """

    def __init__(self, distributions: Sequence[object], seed: int, method: str = "random",
                 correlation: object = None, block_size: int = BLOCK_SIZE) -> None:
        if method not in METHODS:
            raise ValueError(f"sampling method must be one of {METHODS}, got {method!r}")
        if int(block_size) != block_size or block_size < 1:
            raise ValueError(f"block size must be a positive integer, got {block_size!r}")
        if int(seed) != seed or seed < 0:
            raise ValueError(f"seed must be a non-negative integer, got {seed!r}")
        self.distributions = list(distributions)
        self.seed, self.method, self.block_size = int(seed), method, int(block_size)
        self.d = len(self.distributions)
        self.correlation = None if correlation is None else (
            correlation.matrix if isinstance(correlation, Correlation)
            else np.array(correlation, dtype=float))
        self.factor = None if correlation is None else correlation_factor(correlation, self.d)
        #: Inputs that go through the copula (:func:`correlated_inputs`) and ``L`` on them.
        self.copula_inputs = correlated_inputs(self.factor) if self.factor is not None \
            else np.empty(0, dtype=np.intp)
        self.copula_factor = None if self.factor is None \
            else self.factor[np.ix_(self.copula_inputs, self.copula_inputs)]

    def draw(self, first: int, sizes: Sequence[int]) -> np.ndarray:
        """Input values of blocks ``first, first + 1, ...`` of the given sizes, stacked."""
        n = int(sum(sizes))
        u = np.empty((n, self.d))
        ofs = 0
        if self.d:
            for b, size in enumerate(sizes, start=first):
                u[ofs:ofs + size] = unit_block(self.method, size, self.d, self.seed, b)
                ofs += size
            if self.copula_factor is not None:
                _copula_columns(u, self.copula_inputs, self.copula_factor)
        return map_to_inputs(u, self.distributions)



#: Gauss-Hermite rule (probabilists' weight exp(-z^2 / 2)) for the expectations of the copula.
_GH_NODES, _GH_WEIGHTS = np.polynomial.hermite_e.hermegauss(96)
_GH_WEIGHTS = _GH_WEIGHTS / math.sqrt(2.0 * math.pi)


def _family(dist: Any) -> str:
    return str(getattr(getattr(dist, "dist", None), "name", ""))


def _copula_pearson(g_first: np.ndarray, second: Any, rho: float) -> float:
    """Pearson correlation of X1 = g_first(Z1) and X2 = F2^{-1}(Phi(Z2)), corr(Z1, Z2) = rho,
    by a tensor Gauss-Hermite rule (moments from the same rule, so rho = 0 gives 0)."""
    z = _GH_NODES[:, None] * rho + _GH_NODES[None, :] * math.sqrt(max(1.0 - rho * rho, 0.0))
    q = np.clip(special.ndtr(z), _EPS, 1.0 - _EPS)
    g2 = np.asarray(inverse_cdf(second, q.ravel()), dtype=float).reshape(q.shape)
    w = _GH_WEIGHTS[:, None] * _GH_WEIGHTS[None, :]
    m1 = float(_GH_WEIGHTS @ g_first)
    m2 = float(np.sum(w * g2))
    s1 = math.sqrt(max(float(_GH_WEIGHTS @ (g_first - m1) ** 2), 0.0))
    s2 = math.sqrt(max(float(np.sum(w * (g2 - m2) ** 2)), 0.0))
    cov = float(np.sum(w * (g_first - m1)[:, None] * (g2 - m2)))
    return cov / (s1 * s2)


def normal_score_correlation(pearson: Any, distributions: Sequence[Any]) -> np.ndarray:
    """The Gaussian-copula correlation that gives every pair of inputs its Pearson r.

    A study writes the Pearson correlation coefficient r of two inputs (JCGM 100:2008 5.2.2);
    the Gaussian copula correlates their normal scores Z = Phi^{-1}(F(X)) with some rho, and
    for marginals other than normal the Pearson r of the inputs then differs from rho. For each
    correlated pair this solves r(rho) = r: rho = r for two normal inputs; rho = 2 sin(pi r / 6)
    for two rectangular ones (the Pearson and the Spearman coefficient of uniform marginals
    agree, and Spearman's is (6 / pi) arcsin(rho / 2) under a Gaussian copula: K. Pearson,
    1907, from memory of the formula's usual citation); otherwise numerically, r(rho) by a
    96 x 96 Gauss-Hermite rule and Brent's method.

    Raises
    ------
    ValueError
        When a written r lies outside what the two marginals can reach (r(-1) to r(+1)), or
        the matrix of normal-score correlations is not positive definite.

    >>> from scipy import stats
    >>> u = stats.uniform(-1.0, 2.0)
    >>> rho = normal_score_correlation(np.array([[1.0, 0.8], [0.8, 1.0]]), [u, u])[0, 1]
    >>> round(float(rho), 6) == round(2.0 * math.sin(math.pi * 0.8 / 6.0), 6)
    True
    """
    r = np.array(pearson.matrix if isinstance(pearson, Correlation) else pearson, dtype=float)
    d = r.shape[0]
    out = r.copy()
    scores: dict[int, np.ndarray] = {}
    for i in range(d):
        for j in range(i + 1, d):
            target = float(r[i, j])
            if target == 0.0:
                continue
            a, b = distributions[i], distributions[j]
            fa, fb = _family(a), _family(b)
            if fa == fb == "norm":
                rho = target
            elif fa == fb == "uniform":
                rho = 2.0 * math.sin(math.pi * target / 6.0)
            else:
                if i not in scores:
                    qa = np.clip(special.ndtr(_GH_NODES), _EPS, 1.0 - _EPS)
                    scores[i] = np.asarray(inverse_cdf(a, qa), dtype=float)
                g = scores[i]
                lo, hi = _copula_pearson(g, b, -1.0), _copula_pearson(g, b, 1.0)
                if not lo - 1e-12 <= target <= hi + 1e-12:
                    raise ValueError(f"r = {target:g} between inputs {i + 1} and {j + 1} is out of "
                                     f"reach of their distributions ({lo:.4f} to {hi:.4f})")
                target = min(max(target, lo), hi)
                rho = float(optimize.brentq(lambda v: _copula_pearson(g, b, v) - target,
                                            -1.0, 1.0, xtol=1e-12))
            out[i, j] = out[j, i] = rho
    factor_ok = Correlation(tuple(f"x{k}" for k in range(d)), out).definite if d else True
    if not factor_ok:
        raise ValueError("the normal-score correlations that reproduce the written Pearson "
                         "coefficients do not form a positive-definite matrix")
    return out
