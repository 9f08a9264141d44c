"""Variance-based (Sobol') sensitivity indices of any :class:`~simunc.uncertainty.problem.Problem`.

For independent inputs the variance of an output ``Y = f(X_1, ..., X_d)``
splits into the variances of the terms of its ANOVA (Sobol') decomposition
[1]_.  The indices reported here are [1]_, [2]_::

    S_i   = V[E(Y | X_i)] / V(Y)                        first order
    ST_i  = E[V(Y | X_~i)] / V(Y)                       total (X_~i: all inputs but X_i)
    S_ij  = (V[E(Y | X_i, X_j)] - V_i - V_j) / V(Y)     second order (pure interaction)
    S^c_G = V[E(Y | X_G)] / V(Y),  ST_G = 1 - S^c_{~G}  closed and total index of a group G

Design (Saltelli's scheme [2]_, [3]_).  A scrambled Sobol' sequence of
dimension ``2d`` gives ``N`` base points; its first ``d`` columns form the
matrix ``A``, the last ``d`` the matrix ``B`` (unit hypercube, mapped through
each input's inverse CDF, so any input distribution is allowed).  ``AB_i`` is
``A`` with column ``i`` (for a group: the columns of all its members) taken
from ``B``; ``BA_i`` is ``B`` with column ``i`` from ``A`` (second order only).
The rows are stacked per base point as ``A, AB_1..AB_k, [BA_1..BA_k,] B`` --
the layout of ``SALib.sample.sobol.sample`` [4]_, which the tests check
element for element -- and the model is evaluated ONCE on the whole stack:
``N (d + 2)`` runs, ``N (2 d + 2)`` with second order.  Grouped indices reuse
``A``, ``B`` and the ``AB_i`` of the ungrouped inputs (the same seed gives the
same base sequence) and add one evaluation of the ``AB_G`` of the groups with
two or more members: ``N g`` more runs.

Estimators (those of ``SALib.analyze.sobol.analyze`` [4]_, on the output
centred and scaled by the mean and standard deviation of all its runs,
``V`` the variance of the ``2N`` values of ``A`` and ``B``)::

    S_i  = mean(f(B) (f(AB_i) - f(A))) / V                   Saltelli et al. 2010 [2]_
    ST_i = mean((f(A) - f(AB_i))^2) / (2 V)                  Jansen, in [2]_
    S_ij = mean(f(BA_i) f(AB_j) - f(A) f(B)) / V - S_i - S_j  Saltelli 2002 [3]_

Confidence intervals: ``R`` bootstrap resamples of the ``N`` base points
(the index matrix ``default_rng(seed).integers(N, size=(N, R))``, as SALib
draws it); the half-width is ``z_{(1+p)/2}`` times the standard deviation of
the resampled estimates.  SALib gathers every resample of every index with
fancy indexing, about 1.9 s per output for d = 12, N = 2^13, R = 200 on the
development machine (2 cores), 15 s per output with second order.  Here each
resample is a row of a count matrix ``W`` (``W[r, k]`` = times base point ``k``
is drawn in resample ``r``), so all resampled means of all indices of an
output are ONE matrix product ``W @ T / N`` with the per-point terms ``T``;
the results equal SALib's to rounding (checked in the tests) at a small
fraction of the cost (``benchmarks/bench_sensitivity.py`` prints the figures).
The default ``R = 200`` is the value the package always used, so the
intervals are unchanged; the standard error of a half-width is about
``1 / sqrt(2 (R - 1))`` = 5 % of it.  The bootstrap treats the base points as
independent draws, so for the scrambled Sobol' design the intervals are
conservative (in the tests the analytic values lie well inside them).

References
----------
.. [1] I. M. Sobol', "Global sensitivity indices for nonlinear mathematical
   models and their Monte Carlo estimates", Mathematics and Computers in
   Simulation 55 (2001) 271-280.
.. [2] A. Saltelli, P. Annoni, I. Azzini, F. Campolongo, M. Ratto,
   S. Tarantola, "Variance based sensitivity analysis of model output. Design
   and estimator for the total sensitivity index", Computer Physics
   Communications 181 (2010) 259-270.
.. [3] A. Saltelli, "Making best use of model evaluations to compute
   sensitivity indices", Computer Physics Communications 145 (2002) 280-297.
.. [4] J. Herman, W. Usher, "SALib: An open-source Python library for
   Sensitivity Analysis", Journal of Open Source Software 2(9) (2017) 97.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass
from typing import Mapping, Sequence

import numpy as np
import pandas as pd
from scipy import stats
from scipy.stats import qmc

from simunc.uncertainty.problem import Problem

__all__ = ["SobolResult", "sobol_analysis", "sobol_indices", "DEFAULT_RESAMPLES",
           "FIRST_TOTAL_COLUMNS", "SECOND_ORDER_COLUMNS"]

#: Bootstrap resamples of the confidence intervals when none are given.
DEFAULT_RESAMPLES = 200

#: Columns of the first/total-order and group tables.
FIRST_TOTAL_COLUMNS = ["S1", "S1_conf", "ST", "ST_conf"]
#: Columns of the second-order tables.
SECOND_ORDER_COLUMNS = ["S2", "S2_conf"]

_EPS = np.finfo(float).eps


@dataclass(frozen=True)
class SobolResult:
    """Result of :func:`sobol_analysis`.

    Attributes
    ----------
    first_total : dict of DataFrame
        Per output, indexed by ``input``: ``S1``, ``S1_conf``, ``ST``,
        ``ST_conf`` [-] (``*_conf``: half-width of the confidence interval).
    second_order : dict of DataFrame or None
        Per output, indexed by the pairs ``(input_a, input_b)`` (input order,
        a before b): ``S2``, ``S2_conf`` [-]; None unless asked for.
    groups : dict of DataFrame or None
        Per output, indexed by ``group`` (the groups given, then every input
        in no group as a group of its own name): closed index ``S1``, total
        index ``ST`` and their half-widths [-]; None unless groups were given.
    group_members : dict of tuple of str or None
        Members of each group of ``groups``, singletons included.
    evaluations : int
        Model runs (rows evaluated) in all.
    base_samples : int
        N.
    num_resamples : int
        R, bootstrap resamples.
    confidence : float
        Level of the intervals.
    seed : int
    """

    first_total: dict[str, pd.DataFrame]
    second_order: dict[str, pd.DataFrame] | None
    groups: dict[str, pd.DataFrame] | None
    group_members: dict[str, tuple[str, ...]] | None
    evaluations: int
    base_samples: int
    num_resamples: int
    confidence: float
    seed: int


# ---------------------------------------------------------------------------
# Design
# ---------------------------------------------------------------------------
def _base_sequence(n: int, d: int, seed: int) -> np.ndarray:
    """N points of the scrambled Sobol' sequence of dimension 2d (SALib's base sequence)."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")   # balance warning when N is not a power of two
        return qmc.Sobol(d=2 * d, scramble=True, seed=seed).random(n)


def _cross(a: np.ndarray, b: np.ndarray, masks: Sequence[np.ndarray]) -> np.ndarray:
    """``(N, len(masks), d)``: per mask, A with the masked columns taken from B."""
    out = np.repeat(a[:, None, :], len(masks), axis=1)
    for k, m in enumerate(masks):
        out[:, k, m] = b[:, m]
    return out


def _saltelli_design(base: np.ndarray, second_order: bool) -> np.ndarray:
    """Rows ``A, AB_1..AB_d, [BA_1..BA_d,] B`` per base point, shape ``(N * step, d)``."""
    n, d = base.shape[0], base.shape[1] // 2
    a, b = base[:, :d], base[:, d:]
    masks = [np.arange(d) == j for j in range(d)]
    parts = [a[:, None, :], _cross(a, b, masks)]
    if second_order:
        parts.append(_cross(b, a, masks))
    parts.append(b[:, None, :])
    return np.concatenate(parts, axis=1).reshape(-1, d)


# ---------------------------------------------------------------------------
# Estimators and vectorized bootstrap
# ---------------------------------------------------------------------------
def _resample_counts(n: int, resamples: int, seed: int) -> np.ndarray:
    """``(R, N)`` bootstrap multiplicities of the base points (SALib's resample indices)."""
    r = np.random.default_rng(seed).integers(n, size=(n, resamples))
    flat = (r + n * np.arange(resamples)[None, :]).ravel()
    return np.bincount(flat, minlength=n * resamples).reshape(resamples, n).astype(float)


def _ratio(num: np.ndarray, var) -> np.ndarray:
    """``num / var`` with 0 where ``var <= eps`` (as SALib); ``var`` scalar or one per row of num."""
    var = np.asarray(var, dtype=float)
    if var.ndim:                       # (R,) variances of the resamples, num (R, k)
        var = var[:, None]
    num, var = np.broadcast_arrays(num, var)
    return np.divide(num, var, out=np.zeros(num.shape), where=var > _EPS)


def _normalized(cols: np.ndarray) -> np.ndarray:
    return (cols - cols.mean()) / cols.std()


def _first_total(cols: np.ndarray, w: np.ndarray, z: float) -> np.ndarray:
    """S1, S1_conf, ST, ST_conf (rows) of the k inputs of ``cols = [A, AB_1..AB_k, B]``."""
    y = _normalized(np.ascontiguousarray(cols))   # one memory layout: same sums, same bits
    a, b, ab = y[:, 0], y[:, -1], y[:, 1:-1]
    n, k = ab.shape
    var = np.var(np.r_[a, b])
    t1 = b[:, None] * (ab - a[:, None])
    tt = 0.5 * (a[:, None] - ab) ** 2
    s1, st = _ratio(t1.mean(axis=0), var), _ratio(tt.mean(axis=0), var)
    m = w @ np.column_stack([t1, tt, a * a + b * b, a + b]) / n      # (R, 2k + 2)
    var_r = 0.5 * m[:, -2] - (0.5 * m[:, -1]) ** 2
    if np.ptp(np.r_[a, b]) == 0.0:
        c1 = ct = np.zeros(k)
    else:
        c1 = z * _ratio(m[:, :k], var_r).std(axis=0, ddof=1)
        ct = z * _ratio(m[:, k:2 * k], var_r).std(axis=0, ddof=1)
    return np.vstack([s1, c1, st, ct])


def _second(cols: np.ndarray, w: np.ndarray, z: float, pairs) -> np.ndarray:
    """S2, S2_conf (rows) of the pairs from ``cols = [A, AB_1..AB_d, BA_1..BA_d, B]``."""
    y = _normalized(cols)
    n = y.shape[0]
    d = (y.shape[1] - 2) // 2
    a, b, ab, ba = y[:, 0], y[:, -1], y[:, 1:d + 1], y[:, d + 1:2 * d + 1]
    j, k = np.array([p[0] for p in pairs], dtype=int), np.array([p[1] for p in pairs], dtype=int)
    var = np.var(np.r_[a, b])
    t1 = b[:, None] * (ab - a[:, None])
    t2 = ba[:, j] * ab[:, k] - (a * b)[:, None]
    s1 = _ratio(t1.mean(axis=0), var)
    s2 = _ratio(t2.mean(axis=0), var) - s1[j] - s1[k]
    m = w @ np.column_stack([t1, t2, a * a + b * b, a + b]) / n
    var_r = 0.5 * m[:, -2] - (0.5 * m[:, -1]) ** 2
    s1_r = _ratio(m[:, :d], var_r)
    s2_r = _ratio(m[:, d:d + len(pairs)], var_r) - s1_r[:, j] - s1_r[:, k]
    conf = np.zeros(len(pairs)) if np.ptp(np.r_[a, b]) == 0.0 else z * s2_r.std(axis=0, ddof=1)
    return np.vstack([s2, conf])


# ---------------------------------------------------------------------------
# Groups
# ---------------------------------------------------------------------------
def _check_groups(groups, names: Sequence[str]) -> dict[str, tuple[str, ...]]:
    """Validated groups plus singletons, in order: the groups given, then the ungrouped inputs."""
    if not isinstance(groups, Mapping):
        raise ValueError(f"groups must be a mapping {{group name: [input names]}}, got "
                         f"{type(groups).__name__}")
    known = set(names)
    owner: dict[str, str] = {}
    out: dict[str, tuple[str, ...]] = {}
    for gname, members in groups.items():
        if not isinstance(gname, str) or not gname:
            raise ValueError(f"group name must be a non-empty string, got {gname!r}")
        if isinstance(members, str) or not isinstance(members, (Sequence, set, frozenset)):
            raise ValueError(f"group {gname!r} must be a list of input names, got {members!r}")
        members = tuple(members)
        if not members:
            raise ValueError(f"group {gname!r} is empty: list at least one input")
        for m in members:
            if m not in known:
                raise ValueError(f"group {gname!r} names unknown input {m!r} (inputs: "
                                 + ", ".join(map(repr, names)) + ")")
            if m in owner:
                where = "twice" if owner[m] == gname else f"and in group {owner[m]!r}"
                raise ValueError(f"group {gname!r} lists input {m!r} {where}: an input "
                                 "belongs to one group at most")
            owner[m] = gname
        out[gname] = tuple(n for n in names if n in members)     # problem order
    for n in names:
        if n not in owner:
            if n in out:
                raise ValueError(f"group {n!r} has the name of input {n!r}, which is in no "
                                 "group and so forms a group of that name: rename the group")
            out[n] = (n,)
    return out


# ---------------------------------------------------------------------------
# API
# ---------------------------------------------------------------------------
def _select(outputs, produced: Mapping[str, np.ndarray]) -> list[str]:
    names = list(outputs)
    missing = [k for k in names if k not in produced]
    if missing:
        raise KeyError(f"outputs {missing} not produced by the problem (it gives {sorted(produced)})")
    return names


def _constant(values: np.ndarray) -> bool:
    return bool(np.ptp(values) <= 1e-12 * max(1.0, float(np.max(np.abs(values)))))


def sobol_analysis(problem: Problem, outputs: Sequence[str], base_samples: int = 4096,
                   seed: int = 1, confidence: float = 0.95, *, second_order: bool = False,
                   groups: Mapping[str, Sequence[str]] | None = None,
                   num_resamples: int = DEFAULT_RESAMPLES) -> SobolResult:
    """Sobol' indices of each output: first order, total, optionally second order and groups.

    ``S_i = V[E(Y|X_i)] / V``, ``ST_i = E[V(Y|X_~i)] / V``,
    ``S_ij = (V[E(Y|X_i,X_j)] - V_i - V_j) / V``; for a group G the closed
    index ``S^c_G = V[E(Y|X_G)] / V`` and the total ``ST_G = 1 - S^c_{~G}``
    [1]_.  Estimators, design and bootstrap as in the module docstring
    (Saltelli et al. 2010 [2]_, Saltelli 2002 [3]_; SALib's design and
    estimators [4]_, reproduced to rounding).

    Parameters
    ----------
    problem : Problem
        Vectorized model with independent inputs (at least one).
    outputs : sequence of str
        Output keys to analyse.
    base_samples : int
        Base sample size N, at least 2 (a power of two keeps the balance of
        the Sobol' sequence).  The model runs ``N (d + 2)`` times,
        ``N (2 d + 2)`` with ``second_order``, plus ``N`` per group of two or
        more inputs.
    seed : int
        Seed of the scrambling and of the bootstrap (same seed, same result).
    confidence : float
        Level p of the bootstrap confidence intervals, in (0, 1).
    second_order : bool
        Also estimate the second-order indices of every pair of inputs.  The
        first and total indices are the same as without it.
    groups : mapping, optional
        ``{group name: [input names]}``; each input in one group at most, no
        empty group.  The inputs in no group form groups of their own name.
        Invalid groups raise ``ValueError`` naming the group.
    num_resamples : int
        R, bootstrap resamples (at least 2).

    Returns
    -------
    SobolResult
        Outputs that do not vary get zeros in every table.

    Raises
    ------
    ValueError
        Bad groups, sizes or level; ``KeyError`` for an unknown output;
        ``FloatingPointError`` when the model gives non-finite values.

    References
    ----------
    .. [1] I. M. Sobol', Math. Comput. Simul. 55 (2001) 271-280.
    .. [2] A. Saltelli et al., Comput. Phys. Commun. 181 (2010) 259-270.
    .. [3] A. Saltelli, Comput. Phys. Commun. 145 (2002) 280-297.
    .. [4] J. Herman, W. Usher, JOSS 2(9) (2017) 97.

    Examples
    --------
    ``Y = a + 2 b + c d`` with independent standard normal inputs (hand
    calculation: V = 1 + 4 + 1 = 6, S_a = 1/6, S_b = 4/6, S_c = S_d = 0,
    ST_c = ST_d = S_cd = 1/6; the group {c, d} has closed index 1/6):

    >>> from scipy import stats
    >>> f = lambda x: {"y": x["a"] + 2 * x["b"] + x["c"] * x["d"]}
    >>> p = Problem(list("abcd"), [stats.norm()] * 4, f)
    >>> r = sobol_analysis(p, ["y"], 8192, seed=3, second_order=True,
    ...                    groups={"cd": ["c", "d"]})
    >>> print((6 * r.first_total["y"][["S1", "ST"]]).round(1))
            S1   ST
    input
    a      1.0  1.0
    b      4.0  4.0
    c     -0.0  1.0
    d     -0.0  1.0
    >>> round(float(6 * r.second_order["y"].loc[("c", "d"), "S2"]), 1)
    1.0
    >>> print((6 * r.groups["y"][["S1", "ST"]]).round(1))
            S1   ST
    group
    cd     1.0  1.0
    a      1.0  1.0
    b      4.0  4.0
    >>> r.evaluations == 8192 * (2 * 4 + 2) + 8192
    True
    """
    d = problem.dimension
    if d < 1:
        raise ValueError("Sobol indices need at least one uncertain input")
    if int(base_samples) != base_samples or base_samples < 2:
        raise ValueError(f"base_samples must be an integer >= 2, got {base_samples!r}")
    if int(num_resamples) != num_resamples or num_resamples < 2:
        raise ValueError(f"num_resamples must be an integer >= 2, got {num_resamples!r}")
    if not 0.0 < confidence < 1.0:
        raise ValueError(f"confidence must lie in (0, 1), got {confidence!r}")
    names = list(problem.names)
    members = _check_groups(groups, names) if groups is not None else None
    n, seed = int(base_samples), int(seed)

    base = _base_sequence(n, d, seed)
    step = 2 * d + 2 if second_order else d + 2
    y = problem.evaluate_unit(_saltelli_design(base, second_order))
    outs = _select(outputs, y)
    multi = [g for g, m in (members or {}).items() if len(m) > 1]
    y_groups = None
    if multi:
        assert members is not None  # multi lists groups of members
        masks = [np.isin(names, members[g]) for g in multi]
        x = _cross(base[:, :d], base[:, d:], masks).reshape(-1, d)
        y_groups = problem.evaluate_unit(x)
    evaluations = n * step + n * len(multi)

    w = _resample_counts(n, int(num_resamples), seed)
    z = float(stats.norm.ppf(0.5 + confidence / 2.0))
    pairs = [(i, j) for i in range(d) for j in range(i + 1, d)]
    pair_index = pd.MultiIndex.from_tuples([(names[i], names[j]) for i, j in pairs],
                                           names=["input_a", "input_b"])
    first: dict[str, pd.DataFrame] = {}
    second: dict[str, pd.DataFrame] | None = {} if second_order else None
    grouped: dict[str, pd.DataFrame] | None = {} if members else None
    for name in outs:
        values = np.asarray(y[name], dtype=float).reshape(n, step)
        extra = None if y_groups is None else np.asarray(y_groups[name], dtype=float).reshape(n, -1)
        for v in (values, extra):
            if v is not None and not np.all(np.isfinite(v)):
                raise FloatingPointError(f"non-finite model output {name!r} in the Sobol sample")
        flat = values if extra is None else np.concatenate([values.ravel(), extra.ravel()])
        const = _constant(flat)
        cols = values if not second_order else values[:, list(range(d + 1)) + [step - 1]]
        ft = np.zeros((4, d)) if const else _first_total(cols, w, z)
        first[name] = _table(ft, pd.Index(names, name="input"), FIRST_TOTAL_COLUMNS)
        if second_order:
            assert second is not None
            s2 = np.zeros((2, len(pairs))) if const or not pairs else _second(values, w, z, pairs)
            second[name] = _table(s2, pair_index, SECOND_ORDER_COLUMNS)
        if members:
            assert grouped is not None
            block = []
            for g, m in members.items():
                if len(m) == 1:
                    block.append(values[:, 1 + names.index(m[0])])
                else:
                    assert extra is not None  # the groups of several inputs were evaluated
                    block.append(extra[:, multi.index(g)])
            gcols = np.column_stack([values[:, 0], *block, values[:, -1]])
            gt = np.zeros((4, len(members))) if const else _first_total(gcols, w, z)
            grouped[name] = _table(gt, pd.Index(list(members), name="group"), FIRST_TOTAL_COLUMNS)
    return SobolResult(first, second, grouped, members, evaluations, n, int(num_resamples),
                       float(confidence), seed)


def _table(rows: np.ndarray, index: pd.Index, columns: list[str]) -> pd.DataFrame:
    return pd.DataFrame(np.asarray(rows, dtype=float).T, index=index, columns=columns)


def sobol_indices(problem: Problem, outputs: Sequence[str], base_samples: int = 4096,
                  seed: int = 1, confidence: float = 0.95, *,
                  num_resamples: int = DEFAULT_RESAMPLES) -> dict[str, pd.DataFrame]:
    """First-order and total Sobol' indices of each output.

    ``S_i = V[E(Y|X_i)] / V`` and ``ST_i = E[V(Y|X_~i)] / V`` with bootstrap
    confidence intervals: the ``first_total`` of :func:`sobol_analysis`
    (Saltelli et al. 2010 [1]_), which has the options for second-order and
    grouped indices.

    Parameters
    ----------
    problem : Problem
        Vectorized model with independent inputs.
    outputs : sequence of str
        Output keys to analyse.
    base_samples : int
        Base sample size N (a power of two); the model is evaluated
        ``N (d + 2)`` times.
    seed : int
        Seed of the scrambling and of the bootstrap.
    confidence : float
        Level of the bootstrap confidence intervals.
    num_resamples : int
        Bootstrap resamples.

    Returns
    -------
    dict of DataFrame
        Per output, indexed by input name, columns ``S1``, ``S1_conf``,
        ``ST``, ``ST_conf`` (``*_conf`` is the half-width of the interval).
        An output that does not vary gets zeros.

    References
    ----------
    .. [1] A. Saltelli et al., Comput. Phys. Commun. 181 (2010) 259-270.

    Examples
    --------
    Additive model ``Y = a + 2 b``, a, b standard normal: S = ST =
    (1/5, 4/5) (hand calculation, V = 1 + 4):

    >>> from scipy import stats
    >>> p = Problem(["a", "b"], [stats.norm()] * 2, lambda x: {"y": x["a"] + 2 * x["b"]})
    >>> t = sobol_indices(p, ["y"], 4096, seed=2)["y"]
    >>> (5 * t[["S1", "ST"]]).round(1).to_numpy().tolist()
    [[1.0, 1.0], [4.0, 4.0]]
    """
    return sobol_analysis(problem, outputs, base_samples, seed, confidence,
                          num_resamples=num_resamples).first_total
