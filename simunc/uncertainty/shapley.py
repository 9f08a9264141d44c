"""Shapley effects of dependent inputs (Gaussian copula) by conditional Monte Carlo.

For an output ``Y = f(X)`` of ``d`` inputs, the Shapley effect of input ``i``
shares ``Var(Y)`` among the inputs by the Shapley value of the cost function
``c(J) = E[Var(Y | X_{-J})]`` (the variance left when every input outside
``J`` is known) [1]_:

    Sh_i = sum_{J subset of D - {i}} w(|J|) [c(J + {i}) - c(J)],
    w(s) = s! (d - s - 1)! / d!,

so ``sum_i Sh_i = c(D) = Var(Y)`` and ``Sh_i >= 0`` whatever the dependence
of the inputs.  For independent inputs ``Sh_i`` is the first-order Sobol
variance of ``i`` plus an equal share of every interaction it takes part in.
The tables also give the two "full" indices, dependence included:
``first_order_full_i = Var(E[Y | X_i]) / Var Y = 1 - c(D - {i}) / Var Y`` (the
variance removed if ``X_i`` were known exactly) and
``total_full_i = E[Var(Y | X_{-i})] / Var Y = c({i}) / Var Y``.

Dependence
----------
The inputs are dependent through a Gaussian copula of correlation ``R``, as in
:func:`simunc.uncertainty.sampling.gaussian_copula`: normal scores ``Z ~ N(0, R)`` and
``X_j = F_j^{-1}(Phi(Z_j))``.  Knowing ``X_K`` is knowing ``Z_K`` (each map is
increasing), and ``Z_J | Z_K = z_K`` is normal with mean ``B_J z_K`` and
covariance ``R_JJ - B_J R_KJ``, ``B_J = R_JK R_KK^{-1}``, ``K = D - J`` [2]_.
Conditional draws are made by *conditioning a free draw* [3]_: with
``Z' ~ N(0, R)`` independent of ``z``, ``Z_J = Z'_J + B_J (z_K - Z'_K)`` has
exactly that conditional law.  Every subset ``J`` reuses the same outer point
``z`` and the same free draws ``Z'`` (common random numbers), so the estimated
costs of nested subsets are strongly correlated and their differences -- the
marginal contributions -- are estimated with far less noise than the costs.
Along a random permutation the subsets are nested, and one Cholesky factor
``L`` of ``R`` taken in the reversed order of the permutation serves every
step: with the outer point ``z = L xi``, ``L [xi_K; xi'_J]`` (``xi'`` fresh
standard normals) keeps ``z_K`` and has the conditional law of ``Z_J``.

Estimators
----------
``c(J)`` is estimated from ``n_outer`` outer points ``z_k ~ N(0, R)``, each with
``n_inner`` conditional inner points: ``v_{J,k}`` is the unbiased sample variance
(``n_inner - 1``) of ``Y`` over the inner points, and ``c(J)`` the mean over
``k`` [1]_ (section 4).

* ``permutations="exact"`` (the default for ``d <= 10``): every one of the
  ``2^d - 1`` non-empty subsets, all from the same outer and free points, and
  ``Sh_i = sum_J a_{iJ} c(J)`` with ``a_{iJ} = w(|J| - 1)`` if ``i`` is in
  ``J``, ``-w(|J|)`` if not (the exact-permutation estimator of [1]_ written
  over subsets: each subset's cost is estimated once, not once per
  permutation passing through it).  Model calls:
  ``(2^d - 1) n_outer n_inner``.
* ``permutations=M`` (default for ``d > 10``): the random-permutation
  estimator of [1]_ (Algorithm 1, ``N_O = 1``, ``N_I = 3`` by default):
  ``M`` random orders ``pi``; along each, ``Sh_{pi_j}`` gets
  ``c({pi_1..pi_j}) - c({pi_1..pi_{j-1}})``.  Model calls ``M d n_outer n_inner``.
  The full indices then come from one extra exact batch of the ``2 d + 1``
  subsets ``{i}``, ``D - {i}``, ``D``.

``Var Y`` is estimated from an independent sample of ``n_variance`` draws
(``V``).  Each estimate is the mean of an iid quantity ``A`` (per outer point on
the exact path, per permutation on the random one) of which ``v_{D,k}`` -- the
inner variance with every input free, mean ``Var Y`` -- is a control variate:
``theta = mean(A) - beta (mean(v_D) - V)`` with the least-squares ``beta``, and
the effect is ``theta / V``.  The Shapley ``beta_i`` add up to 1, so the
effects add up to exactly 1.  ``*_conf`` is ``z_{(1+p)/2}`` times the
standard error from the central limit theorem over the iid ``A``, the
uncertainty of ``V`` added by the delta method.  Estimates are not clipped:
an input without effect may come out slightly negative.

Defaults and accuracy
---------------------
``evaluations=DEFAULT_EVALUATIONS`` (about 3.1 million model rows) sets the
automatic sizes: on the exact path ``n_outer = evaluations / ((2^d - 1)
n_inner)`` (2052 outer points for ``d = 9``); on the random path 3/4 of it goes
to permutations (``n_outer = 1``) and 1/4 to the full-index batch.  With these
the 95 % half-widths are about 0.001 to 0.015 on the Shapley effects and up to
about 0.02 on the full indices (measured on the models of
tests/test_shapley.py and on the demo study; every table gives its own), and
a 9-input, 30-output model at 1 us a row takes a few seconds.  Halving a
half-width takes four times the evaluations.  ``n_variance = 2^17``.  The
half-widths cover the true values at close to their nominal level (checked
in the tests over seeds on a model with a closed form).

References
----------
.. [1] E. Song, B. L. Nelson, J. Staum, "Shapley effects for global
   sensitivity analysis: theory and computation", SIAM/ASA J. Uncertainty
   Quantification 4 (2016) 1060-1083.
.. [2] T. W. Anderson, An Introduction to Multivariate Statistical Analysis,
   3rd ed., Wiley (2003), theorem 2.5.1 (conditional normal distribution;
   theorem number from memory).
.. [3] A. Doucet, "A note on efficient conditional simulation of Gaussian
   distributions", technical note, University of British Columbia (2010);
   A. G. Journel, C. J. Huijbregts, Mining Geostatistics, Academic Press
   (1978) (conditioning by kriging) (both from memory).
.. [4] A. B. Owen, C. Prieur, "On Shapley value for measuring importance of
   dependent inputs", SIAM/ASA J. Uncertainty Quantification 5 (2017)
   (from memory).
.. [5] B. Iooss, C. Prieur, "Shapley effects for sensitivity analysis with
   correlated inputs: comparisons with Sobol' indices, numerical estimation
   and applications", Int. J. Uncertainty Quantification 9 (2019) (from
   memory).
"""

from __future__ import annotations

import math
from typing import Sequence

import numpy as np
import pandas as pd
from scipy import special

from simunc.uncertainty.problem import Problem
from simunc.uncertainty.sampling import (
    block_generator,
    correlation_factor,
    map_to_inputs,
)

__all__ = ["shapley_effects", "conditional_normal_scores", "shapley_weights",
           "DEFAULT_EVALUATIONS", "EXACT_MAX_DIMENSION", "COLUMNS"]

#: Model rows the automatic sizes aim at (3 x 2^20).
DEFAULT_EVALUATIONS = 3 * 2**20
#: Largest dimension for which ``permutations="auto"`` enumerates every subset.
EXACT_MAX_DIMENSION = 10
#: Rows per model call (subsets or permutations are stacked up to this).
CHUNK_ROWS = 2**18
# Small products are written as np.einsum (single-threaded C loops): threaded BLAS calls on
# matrices this small cost more in thread hand-over than they compute.

#: Columns of each result table.
COLUMNS = ("Shapley", "Shapley_conf", "first_order_full", "first_order_full_conf",
           "total_full", "total_full_conf")


# ---------------------------------------------------------------------------
# Conditional normal scores
# ---------------------------------------------------------------------------

def _kriging_weights(r: np.ndarray, subset: np.ndarray, rest: np.ndarray) -> np.ndarray:
    """``B_J^T = R_KK^{-1} R_KJ``, shape ``(|K|, |J|)`` (so that ``z_K @ B^T = (B z_K)^T``)."""
    if rest.size == 0 or subset.size == 0:
        return np.zeros((rest.size, subset.size))
    return np.linalg.solve(r[np.ix_(rest, rest)], r[np.ix_(rest, subset)])


def conditional_normal_scores(correlation, subset, z_given, rng: np.random.Generator,
                              n: int) -> np.ndarray:
    """Draws of the normal scores ``Z ~ N(0, R)`` given the scores outside ``subset``.

    ``Z_J | Z_K = z_K ~ N(B z_K, R_JJ - B R_KJ)`` with ``B = R_JK R_KK^{-1}``,
    ``K`` the inputs not in ``J`` [2]_; drawn by conditioning a free draw [3]_,
    ``Z_J = Z'_J + B (z_K - Z'_K)`` with ``Z' = L xi ~ N(0, R)`` (``R = L L^T``).
    Mapping the columns through ``ndtr`` and the inverse CDFs
    (:func:`simunc.uncertainty.sampling.map_to_inputs`) gives inputs ``X_J`` distributed
    as given ``X_K``, for the Gaussian copula of
    :func:`simunc.uncertainty.sampling.gaussian_copula`.

    Parameters
    ----------
    correlation : array_like, shape (d, d), or None
        Correlation matrix ``R`` of the normal scores (None: independent).
    subset : sequence of int
        Indices ``J`` of the scores to draw.
    z_given : array_like, shape (d - |J|,) or (n, d - |J|)
        Values of ``Z_K``, ``K`` in increasing index order; one row per draw,
        or one row for all.
    rng : numpy.random.Generator
    n : int
        Draws.

    Returns
    -------
    ndarray, shape (n, d)
        Columns ``K`` equal to ``z_given``, columns ``J`` the conditional draws.

    Examples
    --------
    ``corr(Z1, Z2) = 0.8``: given ``Z2 = 1``, ``Z1 ~ N(0.8, 1 - 0.64)``.

    >>> rng = np.random.default_rng(5)
    >>> z = conditional_normal_scores([[1.0, 0.8], [0.8, 1.0]], [0], [1.0], rng, 400_000)
    >>> round(float(z[:, 0].mean()), 2), round(float(z[:, 0].var()), 2), float(z[0, 1])
    (0.8, 0.36, 1.0)
    """
    subset = np.unique(np.asarray(subset, dtype=int))
    zg = np.asarray(z_given, dtype=float)
    given = zg.shape[-1] if zg.ndim else 1
    d = subset.size + given if correlation is None else np.shape(correlation)[0]
    r = np.eye(d) if correlation is None else np.asarray(correlation, dtype=float)
    factor = correlation_factor(r, d)
    if subset.size and (subset[0] < 0 or subset[-1] >= d):
        raise ValueError(f"subset indices must lie in 0..{d - 1}, got {subset.tolist()}")
    rest = np.setdiff1d(np.arange(d), subset)
    if given != rest.size:
        raise ValueError(f"z_given must hold the {rest.size} scores outside the subset, "
                         f"got {given}")
    zk = np.broadcast_to(zg.reshape(-1, given), (n, given))
    free = rng.standard_normal((n, d)) @ factor.T
    out = free.copy()
    out[:, rest] = zk
    bt = _kriging_weights(r, subset, rest)
    out[:, subset] = free[:, subset] + (zk - free[:, rest]) @ bt
    return out


# ---------------------------------------------------------------------------
# Subsets and weights
# ---------------------------------------------------------------------------

def shapley_weights(d: int) -> np.ndarray:
    """Coefficients ``a_{iJ}`` of ``Sh_i = sum_J a_{iJ} c(J)`` over the non-empty subsets.

    Subset ``J`` is column ``mask - 1`` of the bit mask ``mask = sum_{j in J} 2^j``;
    ``a_{iJ} = w(|J| - 1)`` if ``i`` is in ``J``, else ``-w(|J|)``, with the
    Shapley weight ``w(s) = s! (d - s - 1)! / d!`` [1]_ (``w(d) = 0``).  The
    columns sum to 0 except the full set's, which sums to 1, so
    ``sum_i Sh_i = c(D)``.

    >>> shapley_weights(2)          # subsets {0}, {1}, {0, 1}
    array([[ 0.5, -0.5,  0.5],
           [-0.5,  0.5,  0.5]])
    """
    masks = np.arange(1, 2**d)
    member = ((masks[None, :] >> np.arange(d)[:, None]) & 1).astype(bool)
    size = member.sum(axis=0)
    w = np.array([math.factorial(s) * math.factorial(d - s - 1) / math.factorial(d)
                  for s in range(d)] + [0.0])
    return np.where(member, w[size - 1], -w[size])


def _members(mask: int, d: int) -> np.ndarray:
    return np.array([j for j in range(d) if mask >> j & 1], dtype=int)


# ---------------------------------------------------------------------------
# Sampling and statistics
# ---------------------------------------------------------------------------

class _Copula:
    """The normal-score side of a problem: its correlation (None: independent)."""

    def __init__(self, correlation, d: int):
        self.r: np.ndarray | None
        self.factor: np.ndarray | None
        if correlation is None:
            self.r, self.factor = None, None
        else:
            self.factor = correlation_factor(correlation, d)
            r = np.asarray(correlation, dtype=float)
            self.r = None if np.array_equal(r, np.eye(d)) else 0.5 * (r + r.T)
        self.d = d

    def scores(self, rng: np.random.Generator, shape: tuple[int, ...]) -> np.ndarray:
        """Free draws ``Z ~ N(0, R)``, shape ``shape + (d,)``."""
        z = rng.standard_normal(shape + (self.d,))
        if self.r is None:
            return z
        assert self.factor is not None  # computed whenever r is kept
        return np.einsum("...k,jk->...j", z, self.factor)


def _inner_var(y: np.ndarray) -> np.ndarray:
    """Unbiased variance over axis 1, the inner points (two-pass; contiguous slices)."""
    dev = y - y.mean(axis=1, keepdims=True)
    np.multiply(dev, dev, out=dev)
    return dev.sum(axis=1) / (y.shape[1] - 1)


def _evaluate(problem: Problem, z: np.ndarray,
              names: Sequence[str] | None) -> dict[str, np.ndarray]:
    """Outputs ``names`` (None: all) at normal scores ``z``, shaped as ``z`` less its last axis."""
    x = map_to_inputs(special.ndtr(z.reshape(-1, z.shape[-1])), problem.distributions)
    y = problem.evaluate(x)
    if names is None:
        names = list(y)
    missing = [k for k in names if k not in y]
    if missing:
        raise KeyError(f"outputs {missing} not produced by the problem (it gives {sorted(y)})")
    out = {}
    for k in names:
        v = np.asarray(y[k], dtype=float)
        if not np.all(np.isfinite(v)):
            raise FloatingPointError(f"non-finite model output {k!r} in the Shapley trials")
        out[k] = v.reshape(z.shape[:-1])
    return out


def _subset_sums(problem, copula: _Copula, names, masks: np.ndarray, weights: np.ndarray,
                 n_outer: int, n_inner: int, rng) -> dict[str, np.ndarray]:
    """``weights @ v`` per output: ``v[J, k]`` inner variances of subset ``J`` at outer point ``k``.

    All subsets share the outer points ``z_k`` and the free draws ``Z'_{k,l}``.
    ``masks`` are non-empty bit masks; ``weights`` is ``(p, len(masks))``.
    """
    d = copula.d
    z = copula.scores(rng, (n_outer,))                    # outer points
    free = copula.scores(rng, (n_inner, n_outer))         # free draws (inner axis first)
    per_chunk = max(1, CHUNK_ROWS // (n_outer * n_inner))
    acc = {k: np.zeros((weights.shape[0], n_outer)) for k in names}
    zb = np.broadcast_to(z, free.shape)
    for start in range(0, len(masks), per_chunk):
        chunk = masks[start:start + per_chunk]
        block = np.empty((len(chunk),) + free.shape)
        for s, mask in enumerate(chunk):                   # loop over subsets
            member = _members(int(mask), d)
            rest = np.setdiff1d(np.arange(d), member)
            zs = block[s]
            zs[...] = zb
            if copula.r is None or rest.size == 0:
                zs[..., member] = free[..., member]
            else:
                bt = _kriging_weights(copula.r, member, rest)
                zs[..., member] = free[..., member] + np.einsum(
                    "...k,kj->...j", zb[..., rest] - free[..., rest], bt)
        y = _evaluate(problem, block, names)
        w = weights[:, start:start + len(chunk)]
        for k in names:
            acc[k] += np.einsum("ps,so->po", w, _inner_var(y[k]))
    return acc


def _permutation_moments(problem, copula: _Copula, names, permutations: int, n_outer: int,
                         n_inner: int, seed: int) -> dict[str, "_Comoments"]:
    """Moments of ``(Delta_1..Delta_d, v_D)`` over random permutations, per output.

    ``Delta_i`` is the marginal contribution input ``i`` gets along the
    permutation (costs averaged over its ``n_outer`` outer points).  Batch
    ``b`` of permutations uses ``block_generator(seed, 2 + b)``.
    """
    d = copula.d
    per_batch = max(1, CHUNK_ROWS // (d * n_outer * n_inner))
    moments = {k: _Comoments(d + 1) for k in names}
    for b, start in enumerate(range(0, permutations, per_batch)):
        m = min(per_batch, permutations - start)
        rng = np.random.Generator(block_generator(seed, 2 + b))
        perm = rng.permuted(np.tile(np.arange(d), (m, 1)), axis=1)
        # Work in the reversed order rho of each permutation: with R_rho = L L^T, the outer
        # point is z = L xi and, for J = {pi_1..pi_j} (the last j of rho), L [xi_K; xi'_J]
        # keeps z_K and draws Z_J | z_K (xi' fresh): one Cholesky factor serves every step.
        rho = perm[:, ::-1]
        xi = rng.standard_normal((1, m, n_outer, d))
        fresh = rng.standard_normal((n_inner, m, n_outer, d))
        lt = None
        if copula.r is not None:
            lt = np.linalg.cholesky(copula.r[rho[:, :, None], rho[:, None, :]]).transpose(0, 2, 1)
        back = np.broadcast_to(np.argsort(rho, axis=1)[None, :, None, :], fresh.shape)
        block = np.empty((d,) + fresh.shape)
        known = np.arange(d)
        for j in range(1, d + 1):                          # loop over positions
            w = np.where(known < d - j, xi, fresh)
            zp = w if lt is None else np.einsum("lmok,mkj->lmoj", w, lt)
            block[j - 1] = np.take_along_axis(zp, back, axis=-1)
        y = _evaluate(problem, block, names)
        for k in names:
            v = _inner_var(y[k]).mean(axis=-1).T           # (m, d): cost of {pi_1..pi_j}
            delta = np.diff(v, axis=1, prepend=0.0)
            contrib = np.empty((m, d))
            np.put_along_axis(contrib, perm, delta, axis=1)
            moments[k].push(np.column_stack([contrib, v[:, -1]]))
    return moments


class _Comoments:
    """Streaming mean and co-moment matrix of rows of ``p`` values (pairwise merge)."""

    def __init__(self, p: int):
        self.n, self.mean, self.m2 = 0, np.zeros(p), np.zeros((p, p))

    def push(self, rows: np.ndarray) -> None:
        nb = rows.shape[0]
        mb = rows.mean(axis=0)
        dev = rows - mb
        m2b = np.einsum("ni,nj->ij", dev, dev)
        n = self.n + nb
        delta = mb - self.mean
        self.m2 += m2b + np.outer(delta, delta) * (self.n * nb / n)
        self.mean = self.mean + delta * (nb / n)
        self.n = n

    def cov(self) -> np.ndarray:
        return self.m2 / max(self.n - 1, 1)


def _controlled_ratios(mean: np.ndarray, cov: np.ndarray, n: int, v: float,
                       var_v: float) -> tuple[np.ndarray, np.ndarray]:
    """Ratios ``theta_i / Var Y`` with the control variate ``v_D`` (last column) and their s.e.

    ``theta_i = mean(A_i) - beta_i (mean(v_D) - V)``,
    ``beta_i = cov(A_i, v_D) / var(v_D)``; the ratio is
    ``(mean(A_i) - beta_i mean(v_D)) / V + beta_i`` and its variance
    ``var(A_i - beta_i v_D) / (n V^2) + (mean(A_i) - beta_i mean(v_D))^2 var(V) / V^4``.
    """
    ma, mc = mean[:-1], mean[-1]
    var_c = cov[-1, -1]
    beta = cov[:-1, -1] / var_c if var_c > 0.0 else np.zeros(ma.size)
    resid_mean = ma - beta * mc
    resid_var = np.maximum(np.diag(cov)[:-1] - beta * cov[:-1, -1], 0.0)
    ratio = resid_mean / v + beta
    se = np.sqrt(resid_var / (n * v**2) + resid_mean**2 * var_v / v**4)
    return ratio, se


def _variance(y: np.ndarray) -> tuple[float, float]:
    """Unbiased variance of a sample and the estimated variance of that estimate."""
    n = y.size
    dev = y - y.mean()
    s2 = float(np.einsum("i,i->", dev, dev)) / (n - 1)
    m4 = float(np.mean(dev**4))
    return s2, max(m4 - s2**2 * (n - 3) / (n - 1), 0.0) / n


# ---------------------------------------------------------------------------
# Driver
# ---------------------------------------------------------------------------

def shapley_effects(problem: Problem, outputs=None, correlation=None, *, seed: int = 1,
                    n_variance: int = 2**17, n_outer: int | None = None, n_inner: int = 3,
                    permutations: str | int = "auto", confidence: float = 0.95,
                    evaluations: int = DEFAULT_EVALUATIONS) -> dict[str, pd.DataFrame]:
    """Shapley effects and full first-order and total indices of dependent inputs.

    ``Sh_i = sum_{J subset of D - {i}} |J|! (d - |J| - 1)! / d! [c(J + {i}) - c(J)]``
    with ``c(J) = E[Var(Y | X_{-J})]`` [1]_, normalised by ``Var Y``; the inputs
    are dependent through a Gaussian copula of correlation ``R`` (see the
    module notes for the conditional sampling, the estimators and their
    accuracy).  For a linear model of normal inputs with ``X_1`` independent
    and ``corr(X_2, X_3) = rho`` (from memory of [5]_; checked against a
    subset enumeration in tests/test_shapley.py):
    ``Sh_2 = b_2^2 s_2^2 (1 - rho^2/2) + rho b_2 b_3 s_2 s_3 + b_3^2 s_3^2 rho^2/2``.

    Parameters
    ----------
    problem : Problem
        Vectorized model; ``problem.distributions`` are the marginals.
    outputs : sequence of str, optional
        Outputs to analyse (default: every output of the problem).
    correlation : array_like, shape (d, d), optional
        Correlation matrix of the Gaussian copula (normal scores), as for
        :func:`simunc.uncertainty.sampling.gaussian_copula`; None for independent inputs.
    seed : int
        Seed of every draw (PCG64 through :func:`simunc.uncertainty.sampling.block_generator`).
    n_variance : int
        Draws for ``Var Y``.
    n_outer : int, optional
        Outer points per subset (exact path; default
        ``evaluations / ((2^d - 1) n_inner)``, at least 64) or per permutation
        (random path; default 1).
    n_inner : int
        Conditional inner points per outer point (at least 2).
    permutations : "auto", "exact" or int
        ``"exact"``: all subsets; an int ``M``: ``M`` random permutations;
        ``"auto"``: exact for ``d <= EXACT_MAX_DIMENSION`` (10), else random
        with ``M = 3/4 evaluations / (d n_outer n_inner)``.
    confidence : float
        Level of the ``*_conf`` half-widths (normal quantile times the
        standard error).
    evaluations : int
        Model rows the automatic sizes aim at (``n_outer``, ``permutations``
        and the full-index batch; ``n_variance`` comes on top).

    Returns
    -------
    dict of DataFrame
        Per output, index ``input`` (``problem.names``), columns
        ``Shapley``, ``Shapley_conf``, ``first_order_full``,
        ``first_order_full_conf``, ``total_full``, ``total_full_conf``;
        ``attrs`` holds ``method`` ("exact" or "random"), ``permutations``,
        ``n_outer``, ``n_inner``, ``n_variance``, ``evaluations`` (model rows
        used) and, on the random path, ``n_outer_full`` (outer points of the
        full-index batch).  An output that does not vary gets zeros.

    Raises
    ------
    ValueError
        For a bad correlation matrix or bad sizes.
    KeyError
        For an output the problem does not produce.
    FloatingPointError
        For a non-finite model output.

    Examples
    --------
    ``Y = X_1`` with ``corr(X_1, X_2) = 0.6``: ``X_2`` explains
    ``rho^2 = 0.36`` of ``Var Y`` alone and none of it once ``X_1`` is known;
    its Shapley effect is ``rho^2 / 2 = 0.18`` (the formula above with
    ``b_2`` the only non-zero coefficient).

    >>> from scipy import stats
    >>> p = Problem(["x1", "x2"], [stats.norm(), stats.uniform()], lambda x: {"y": x["x1"]})
    >>> t = shapley_effects(p, ["y"], [[1.0, 0.6], [0.6, 1.0]], evaluations=300_000)["y"]
    >>> t["Shapley"].round(2).tolist(), round(float(t["Shapley"].sum()), 12)
    ([0.82, 0.18], 1.0)
    >>> t["first_order_full"].round(2).tolist(), t["total_full"].round(2).tolist()
    ([1.0, 0.36], [0.64, 0.0])
    """
    d = problem.dimension
    if not 0.0 < confidence < 1.0:
        raise ValueError(f"confidence must lie in (0, 1), got {confidence}")
    if int(n_inner) != n_inner or n_inner < 2:
        raise ValueError(f"n_inner must be an integer of at least 2, got {n_inner!r}")
    if int(n_variance) != n_variance or n_variance < 4:
        raise ValueError(f"n_variance must be an integer of at least 4, got {n_variance!r}")
    if n_outer is not None and (int(n_outer) != n_outer or n_outer < 1):
        raise ValueError(f"n_outer must be a positive integer, got {n_outer!r}")
    if int(seed) != seed or seed < 0:
        raise ValueError(f"seed must be a non-negative integer, got {seed!r}")
    n_inner, n_variance, seed = int(n_inner), int(n_variance), int(seed)
    copula = _Copula(correlation, d)
    named = isinstance(permutations, str)
    if named and permutations == "auto":
        exact = d <= EXACT_MAX_DIMENSION
    elif named and permutations == "exact":
        exact = True
    elif isinstance(permutations, (int, np.integer)) and not isinstance(permutations, bool) \
            and permutations >= 1:
        exact = False
    else:
        raise ValueError(f'permutations must be "auto", "exact" or a positive integer, '
                         f"got {permutations!r}")

    # Var Y from an independent sample (block 0); constant outputs get zeros.
    rng0 = np.random.Generator(block_generator(seed, 0))
    y0 = _evaluate(problem, copula.scores(rng0, (n_variance,)),
                   None if outputs is None else list(outputs))
    names = list(y0)
    variance, active = {}, []
    for k in names:
        v = y0[k]
        if np.ptp(v) > 1e-12 * max(1.0, float(np.max(np.abs(v)))):
            variance[k] = _variance(v)
            active.append(k)

    z_level = float(special.ndtri(0.5 * (1.0 + confidence)))
    results: dict[str, dict[str, np.ndarray]] = {}
    info: dict[str, int | str] = {"n_inner": n_inner, "n_variance": n_variance}
    if d and active:
        # Bit masks as Python integers (any d); the 2^d - 1 subsets are listed on the exact
        # path only (the permutation path needs the 2 d + 1 masks below, not 2^d of them).
        every = (1 << d) - 1
        singles = np.array([1 << j for j in range(d)], dtype=object)
        complements = np.array([every - (1 << j) for j in range(d)], dtype=object)
        rng1 = np.random.Generator(block_generator(seed, 1))
        if exact:
            full = np.arange(every, dtype=np.int64) + 1
            singles, complements = singles.astype(np.int64), complements.astype(np.int64)
            no = (int(n_outer) if n_outer is not None
                  else max(64, evaluations // (len(full) * n_inner)))
            a = shapley_weights(d)
            sel = np.zeros((2 * d + 1, len(full)))
            sel[np.arange(d), singles - 1] = 1.0
            nz = complements > 0
            sel[np.arange(d)[nz] + d, complements[nz] - 1] = 1.0
            sel[2 * d, len(full) - 1] = 1.0
            sums = _subset_sums(problem, copula, active, full, np.vstack([a, sel]), no,
                                n_inner, rng1)
            for k in active:
                q = sums[k]                      # rows: Sh (d), c({i}) (d), c(D-i) (d), v_D
                rows = q.T
                mean, cov = rows.mean(axis=0), np.cov(rows, rowvar=False)
                results[k] = _finish(mean, cov, no, variance[k], d, z_level, shapley=None)
            info.update(method="exact", permutations=math.factorial(d), n_outer=no,
                        evaluations=len(full) * no * n_inner + n_variance)
        else:
            no = int(n_outer) if n_outer is not None else 1
            m = int(permutations) if not named else max(
                2, (3 * evaluations // 4) // (d * no * n_inner))
            n_full = max(64, (evaluations // 4) // ((2 * d + 1) * n_inner))
            masks = np.concatenate([singles, complements[complements > 0],
                                    np.array([every], dtype=object)])
            sums = _subset_sums(problem, copula, active, masks, np.eye(len(masks)), n_full,
                                n_inner, rng1)
            moments = _permutation_moments(problem, copula, active, m, no, n_inner, seed)
            for k in active:
                q = sums[k]
                if d == 1:                       # D - {i} is empty: its cost is 0
                    q = np.vstack([q[:1], np.zeros((1, n_full)), q[1:]])
                filler = np.zeros((d, n_full))   # Shapley rows come from the permutations
                rows = np.vstack([filler, q]).T
                mean, cov = rows.mean(axis=0), np.cov(rows, rowvar=False)
                results[k] = _finish(mean, cov, n_full, variance[k], d, z_level,
                                     shapley=moments[k])
            info.update(method="random", permutations=m, n_outer=no, n_outer_full=n_full,
                        evaluations=(m * d * no + len(masks) * n_full) * n_inner + n_variance)

    tables = {}
    for k in names:
        if k in results:
            table = pd.DataFrame(results[k], index=list(problem.names), columns=list(COLUMNS))
        else:
            table = pd.DataFrame(0.0, index=list(problem.names), columns=list(COLUMNS))
        table.index.name = "input"
        table.attrs.update(info)
        tables[k] = table
    return tables


def _finish(mean, cov, n, var_pair, d, z_level, shapley):
    """Assemble one output's columns from the moments of its per-outer-point rows.

    Rows: ``[Sh_1..Sh_d, c({1})..c({d}), c(D-{1})..c(D-{d}), v_D]``; with
    ``shapley`` given (random path) the Shapley part comes from its moments.
    """
    v, var_v = var_pair
    idx = np.r_[np.arange(d, 3 * d), 3 * d]
    ratio, se = _controlled_ratios(mean[idx], cov[np.ix_(idx, idx)], n, v, var_v)
    total, total_se = ratio[:d], se[:d]
    first, first_se = 1.0 - ratio[d:], se[d:]
    if shapley is None:
        sidx = np.r_[np.arange(d), 3 * d]
        sh, sh_se = _controlled_ratios(mean[sidx], cov[np.ix_(sidx, sidx)], n, v, var_v)
    else:
        sh, sh_se = _controlled_ratios(shapley.mean, shapley.cov(), shapley.n, v, var_v)
    return {"Shapley": sh, "Shapley_conf": z_level * sh_se,
            "first_order_full": first, "first_order_full_conf": z_level * first_se,
            "total_full": total, "total_full_conf": z_level * total_se}
