"""Monte Carlo propagation of distributions (JCGM 101:2008) and its statistics.

A :class:`Problem` is a vectorized function of named inputs with their
distributions.

* :func:`monte_carlo` draws seeded pseudo-random trials and evaluates the
  problem once on whole arrays; :func:`summarize` gives the mean, the standard
  uncertainty and the probabilistically symmetric coverage interval of one
  output (JCGM 101:2008, 7.6-7.7).  Everything is kept in memory.
* :func:`propagate` is the streaming engine: a fixed number of trials drawn by
  pseudo-random, Latin hypercube or scrambled Sobol sampling, optionally
  correlated through a Gaussian copula, processed chunk by chunk in memory
  bounded by the chunk size.  Chunks are made of fixed-size *blocks*, each with
  a generator of its own (:func:`simunc.uncertainty.sampling.block_generator`), and the
  statistics are accumulated per block in block order, so the same seed gives
  bit-identical statistics whatever the chunk size.
* :func:`adaptive` runs the adaptive Monte Carlo procedure of JCGM 101:2008,
  7.9: batches until the results are numerically stable to a number of
  significant digits of u(y).

Bit-identity across chunk sizes assumes a model that acts trial by trial
(element-wise numpy operations); a model whose values for one trial depend on
the other trials of the same call -- for instance a property table fitted to
the range of the states in the call -- is reproducible for a fixed chunk size
only.

The streaming statistics and the error bound of the streaming quantiles are
described in :mod:`simunc.uncertainty.statistics`.

References
----------
.. [1] JCGM 101:2008, Evaluation of measurement data -- Supplement 1 to the
   GUM -- Propagation of distributions using a Monte Carlo method, 7 and 9.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Callable, Mapping, Sequence

import numpy as np

from simunc.uncertainty.problem import Problem
from simunc.uncertainty.sampling import (
    BLOCK_SIZE,
    InputSampler,
    map_to_inputs,
    unit_samples,
)
from simunc.uncertainty.statistics import (
    HISTOGRAM_BINS,
    HistogramQuantiles,
    Moments,
    PairwiseMoments,
    coverage_factor,
    numerical_tolerance,
    quantiles,
    shortest_interval,
    symmetric_interval,
)

__all__ = ["Problem", "monte_carlo", "quantiles", "summarize", "propagate", "adaptive",
           "OutputStatistics", "AdaptiveInfo", "PropagationResult", "DEFAULT_CHUNK_BLOCKS"]

#: Blocks per chunk when ``chunk_size`` is not given (4 x 2^16 = 262 144 trials).
DEFAULT_CHUNK_BLOCKS = 4


def monte_carlo(problem: Problem, trials: int, seed: int) -> tuple[np.ndarray, dict[str, np.ndarray]]:
    """Seeded Monte Carlo trials of a problem.

    Returns
    -------
    x : ndarray, shape (trials, d)
        Input values.
    y : dict of ndarray
        Output values, one array of ``trials`` per output.

    Examples
    --------
    JCGM 101:2008, 9.2.2: Y = X1 + X2 + X3 + X4, Xi ~ N(0, 1), so u(y) = 2.

    >>> from scipy import stats
    >>> p = Problem(list("abcd"), [stats.norm()] * 4, lambda x: {"y": sum(x.values())})
    >>> _, y = monte_carlo(p, 200_000, seed=1)
    >>> round(summarize(y["y"])["standard_uncertainty"], 2)
    2.0
    """
    x = map_to_inputs(unit_samples(trials, problem.dimension, seed), problem.distributions)
    return x, problem.evaluate(x)


def summarize(y: np.ndarray, coverage_probability: float = 0.95) -> dict[str, float]:
    """Mean, standard uncertainty and probabilistically symmetric coverage interval.

    The interval runs between the ``(1 - p) / 2`` and ``(1 + p) / 2``
    quantiles of the trials (JCGM 101:2008, 7.7).

    Examples
    --------
    >>> s = summarize(np.arange(1.0, 101.0), 0.9)
    >>> s["mean"], round(s["standard_uncertainty"], 4), round(s["low"], 2), round(s["high"], 2)
    (50.5, 29.0115, 5.95, 95.05)
    """
    y = np.asarray(y, dtype=float)
    if not np.all(np.isfinite(y)):
        raise FloatingPointError("non-finite model output in the trials")
    a = 0.5 * (1.0 - coverage_probability)
    first = y.flat[0] if y.size else 0.0
    if y.size and y.min() == first == y.max():  # a constant output: no order statistics needed
        low = high = float(first)
    else:
        low, high = quantiles(y, (a, 1.0 - a))
    return {
        "mean": float(np.mean(y)),
        "standard_uncertainty": float(np.std(y, ddof=1)),
        "low": float(low),
        "high": float(high),
        "coverage_probability": float(coverage_probability),
    }


# ---------------------------------------------------------------------------
# Results
# ---------------------------------------------------------------------------

@dataclass(frozen=True)
class OutputStatistics:
    """Statistics of one output of a propagation (units of the output).

    Attributes
    ----------
    count : int
        Trials.
    mean : float
        Estimate y: the average of the trials (JCGM 101:2008, 7.6).
    standard_uncertainty : float
        u(y): their standard deviation with ``n - 1``.
    low, high : float
        Probabilistically symmetric 100p % coverage interval (sample
        quantiles at ``(1 -+ p) / 2``, linear interpolation; JCGM 101, 7.7).
    shortest_low, shortest_high : float
        Shortest 100p % coverage interval (JCGM 101:2008, 7.7.2).
    coverage_probability : float
        p [1].
    coverage_factor : float
        ``k = (high - low) / (2 u)`` of the symmetric interval [1].
    minimum, maximum : float
        Extreme trials.
    quantile_error_bound : float
        Bound on the error of each interval endpoint from the streaming
        histogram (its bin width h, see :mod:`simunc.uncertainty.statistics`); 0 when the
        trials were kept and the quantiles are exact.
    """

    count: int
    mean: float
    standard_uncertainty: float
    low: float
    high: float
    shortest_low: float
    shortest_high: float
    coverage_probability: float
    coverage_factor: float
    minimum: float
    maximum: float
    quantile_error_bound: float

    def summary(self) -> dict[str, float]:
        """The keys of :func:`summarize`: mean, standard_uncertainty, low, high, coverage_probability."""
        return {"mean": self.mean, "standard_uncertainty": self.standard_uncertainty,
                "low": self.low, "high": self.high,
                "coverage_probability": self.coverage_probability}


@dataclass(frozen=True)
class AdaptiveInfo:
    """How an adaptive run (JCGM 101:2008, 7.9) ended.

    Attributes
    ----------
    n_digits : int
        Significant digits of u(y) asked for.
    batch_size : int
        M, trials per batch.
    batches : int
        h, batches run (trials = h M).
    converged : bool
        Whether every output of interest reached its tolerance (else
        ``max_trials`` stopped the run).
    tolerance : dict of float
        Numerical tolerance delta of each output, from u(y) of all trials.
    reached : dict of dict of float
        Twice the standard deviation of the average of the batch values of
        ``mean``, ``standard_uncertainty``, ``low`` and ``high``, per output.
    """

    n_digits: int
    batch_size: int
    batches: int
    converged: bool
    tolerance: dict[str, float]
    reached: dict[str, dict[str, float]]

    def achieved(self) -> dict[str, float]:
        """Largest of the four ``2 s`` values per output: the tolerance actually reached."""
        return {k: max(v.values()) for k, v in self.reached.items()}


@dataclass(frozen=True)
class PropagationResult:
    """Result of :func:`propagate` or :func:`adaptive`.

    Attributes
    ----------
    statistics : dict of OutputStatistics
        Per output.
    trials, seed : int
    method : str
        Sampling method.
    block_size, chunk_size : int
        Trials per block and per chunk.
    coverage_probability : float
    correlation : ndarray or None
        Correlation matrix of the Gaussian copula, if any.
    x : ndarray or None
        ``(trials, d)`` input values when ``keep=True``.
    y : dict of ndarray or None
        Every output's trials when ``keep=True``.
    adaptive : AdaptiveInfo or None
        For :func:`adaptive` runs.
    """

    statistics: dict[str, OutputStatistics]
    trials: int
    seed: int
    method: str
    block_size: int
    chunk_size: int
    coverage_probability: float
    correlation: np.ndarray | None = None
    x: np.ndarray | None = field(default=None, repr=False)
    y: dict[str, np.ndarray] | None = field(default=None, repr=False)
    adaptive: AdaptiveInfo | None = None

    def __getitem__(self, output: str) -> OutputStatistics:
        return self.statistics[output]

    def table(self):
        """The statistics as a pandas DataFrame, one row per output."""
        import pandas as pd

        rows = [{"output": k, **v.__dict__} for k, v in self.statistics.items()]
        return pd.DataFrame(rows).set_index("output")


# ---------------------------------------------------------------------------
# Engine
# ---------------------------------------------------------------------------

class _Sampler(InputSampler):
    """Draw and evaluate whole blocks of a problem."""

    def __init__(self, problem: Problem, seed: int, method: str, correlation, block_size: int):
        super().__init__(problem.distributions, seed, method, correlation, block_size)
        self.problem = problem

    def chunk(self, first: int, sizes: Sequence[int]) -> tuple[np.ndarray, dict[str, np.ndarray]]:
        x = self.draw(first, sizes)
        return x, self.problem.evaluate(x)


class _OutputAccumulator:
    """Streaming statistics of one output: block moments, extremes, histogram."""

    def __init__(self, name: str, histogram: bool, bins: int):
        self.name = name
        self.moments = PairwiseMoments()
        self.last = Moments()
        self.minimum, self.maximum = math.inf, -math.inf
        self.hist = HistogramQuantiles(bins) if histogram else None
        self.block = 0
        self.shift: float | None = None   # the run's first value: moments are taken about it

    def add(self, values: np.ndarray, sizes: Sequence[int]) -> None:
        v = np.ascontiguousarray(values, dtype=float)
        ofs = 0
        cmin, cmax = math.inf, -math.inf
        for size in sizes:
            blk = v[ofs:ofs + size]
            bmin, bmax = float(np.min(blk)), float(np.max(blk))
            if not (math.isfinite(bmin) and math.isfinite(bmax)):
                raise FloatingPointError(f"non-finite model output {self.name!r} in the trials "
                                         f"of block {self.block}")
            if self.shift is None:
                self.shift = float(blk[0])
            self.last = Moments.of(blk, self.shift)
            self.moments.push(self.last)
            cmin, cmax = min(cmin, bmin), max(cmax, bmax)
            ofs += size
            self.block += 1
        self.minimum, self.maximum = min(self.minimum, cmin), max(self.maximum, cmax)
        if self.hist is not None:
            if not self.hist.ready:
                self.hist.set_range(v[:sizes[0]])
            self.hist.add(v, cmin, cmax)

    def finish(self, p: float, kept: np.ndarray | None) -> OutputStatistics:
        m = self.moments.total()
        u = m.std
        if kept is not None and self.minimum == self.maximum:  # a constant: nothing to sort
            low = high = s_low = s_high = float(self.minimum)
            bound = 0.0
        elif kept is not None:  # one sort serves both intervals (the same order statistics)
            ys = np.sort(np.asarray(kept, dtype=float).ravel())
            low, high = symmetric_interval(ys, p, presorted=True)
            s_low, s_high = shortest_interval(ys, p, presorted=True)
            bound = 0.0
        else:
            assert self.hist is not None  # the trials are either kept or histogrammed
            low, high = self.hist.symmetric_interval(p)
            s_low, s_high = self.hist.shortest_interval(p)
            bound = 0.0 if self.minimum == self.maximum else self.hist.error_bound
        return OutputStatistics(m.count, m.mean, u, low, high, s_low, s_high, p,
                                coverage_factor(low, high, u), self.minimum, self.maximum, bound)


def _block_sizes(trials: int, block_size: int) -> list[int]:
    full, rest = divmod(trials, block_size)
    return [block_size] * full + ([rest] if rest else [])


def _check_common(trials: int, p: float) -> None:
    if int(trials) != trials or trials < 2:
        raise ValueError(f"need at least 2 trials, got {trials!r}")
    if not 0.0 < p < 1.0:
        raise ValueError(f"coverage probability must lie in (0, 1), got {p}")


def _select(outputs, y: Mapping[str, np.ndarray]) -> list[str]:
    if outputs is None:
        return list(y)
    names = list(outputs)
    missing = [k for k in names if k not in y]
    if missing:
        raise KeyError(f"outputs {missing} not produced by the problem (it gives {sorted(y)})")
    return names


def propagate(problem: Problem, trials: int, seed: int, *, method: str = "random",
              correlation=None, chunk_size: int | None = None, keep: bool = False,
              coverage_probability: float = 0.95,
              on_chunk: Callable[[np.ndarray, Mapping[str, np.ndarray]], None] | None = None,
              outputs: Sequence[str] | None = None, block_size: int = BLOCK_SIZE,
              histogram_bins: int = HISTOGRAM_BINS) -> PropagationResult:
    """Streaming Monte Carlo propagation of a problem's input distributions.

    The trials are drawn in blocks of ``block_size`` (the last one may be
    shorter), each from its own generator (:func:`simunc.uncertainty.sampling.unit_block`),
    mapped through the Gaussian copula of ``correlation`` if given and the
    inputs' inverse CDFs, evaluated a chunk of whole blocks at a time, and
    reduced to streaming statistics (:mod:`simunc.uncertainty.statistics`): per output the
    mean and standard uncertainty from block moments merged in block order,
    the extremes, and coverage intervals from the streaming histogram -- or,
    with ``keep=True``, exact sample quantiles of all the kept trials.  The
    statistics are bit-identical for any ``chunk_size``.

    Parameters
    ----------
    problem : Problem
        Vectorized model and input distributions.
    trials : int
        Number of trials M (at least 2).
    seed : int
        Non-negative seed.
    method : {"random", "lhs", "sobol"}
        Sampling of the unit hypercube (:mod:`simunc.uncertainty.sampling`).
    correlation : array_like, shape (d, d), optional
        Correlation matrix R of a Gaussian copula between the inputs (in the
        order of ``problem.names``); every marginal is kept.
    chunk_size : int, optional
        Trials evaluated at once, rounded down to whole blocks (at least
        one; all trials in one chunk if ``chunk_size >= trials``); default
        :data:`DEFAULT_CHUNK_BLOCKS` blocks.  Memory grows with
        it, results do not change.
    keep : bool
        Keep every input and output value (``result.x``, ``result.y``) and
        compute exact coverage intervals; memory ``8 (d + outputs) M`` bytes.
    coverage_probability : float
        p of the coverage intervals [1].
    on_chunk : callable, optional
        ``on_chunk(x, y)`` with each chunk's ``(n, d)`` input values and dict
        of output arrays, in trial order, before the statistics (so it may
        check the trials and raise its own error first).
    outputs : sequence of str, optional
        Outputs to compute statistics of (default all); ``on_chunk`` and
        ``keep`` still see every output.
    block_size : int
        Trials per block (default 2^16).  Part of the reproducibility
        contract: another block size gives other trials.
    histogram_bins : int
        Bins K of the streaming histogram.

    Returns
    -------
    PropagationResult

    Raises
    ------
    FloatingPointError
        When a trial gives a non-finite value of an output with statistics.

    Examples
    --------
    JCGM 101:2008, 9.2.2: Y = X1 + X2 + X3 + X4, Xi ~ N(0, 1): u(y) = 2, 95 %
    interval +-3.92 (from memory of JCGM 101, Table 2), k = 1.96.

    >>> from scipy import stats
    >>> p = Problem(list("abcd"), [stats.norm()] * 4, lambda x: {"y": sum(x.values())})
    >>> r = propagate(p, 1_000_000, seed=1, method="sobol")
    >>> s = r["y"]
    >>> round(s.standard_uncertainty, 2), round(s.high, 2), round(s.coverage_factor, 2)
    (2.0, 3.92, 1.96)
    >>> s.quantile_error_bound < 1e-3
    True
    """
    p = float(coverage_probability)
    _check_common(trials, p)
    sampler = _Sampler(problem, seed, method, correlation, block_size)
    sizes = _block_sizes(int(trials), sampler.block_size)
    if chunk_size is None:
        per_chunk = DEFAULT_CHUNK_BLOCKS
    elif chunk_size >= trials:
        per_chunk = len(sizes)
    else:
        per_chunk = max(1, int(chunk_size) // sampler.block_size)
    acc: dict[str, _OutputAccumulator] = {}
    kept_x: np.ndarray | None = None
    kept_y: dict[str, np.ndarray] | None = None
    ofs = 0
    for c in range(0, len(sizes), per_chunk):
        chunk_sizes = sizes[c:c + per_chunk]
        x, y = sampler.chunk(c, chunk_sizes)
        if on_chunk is not None:
            on_chunk(x, y)
        if c == 0:
            acc = {k: _OutputAccumulator(k, not keep, histogram_bins) for k in _select(outputs, y)}
            if keep:
                kept_x = np.empty((trials, sampler.d))
                kept_y = {k: np.empty(trials) for k in y}
        n = x.shape[0]
        if keep:
            assert kept_x is not None and kept_y is not None  # allocated with the first chunk
            kept_x[ofs:ofs + n] = x
            for k, v in y.items():
                kept_y[k][ofs:ofs + n] = v
        for k, a in acc.items():
            a.add(y[k], chunk_sizes)
        ofs += n
    stats = {k: a.finish(p, kept_y[k] if kept_y is not None else None) for k, a in acc.items()}
    return PropagationResult(stats, int(trials), int(seed), method, sampler.block_size,
                             min(per_chunk * sampler.block_size, int(trials)), p,
                             sampler.correlation, kept_x, kept_y)


def adaptive(problem: Problem, seed: int, *, n_digits: int = 2,
             coverage_probability: float = 0.95, method: str = "random", correlation=None,
             batch: int | None = None, max_trials: int = 10_000_000,
             outputs: Sequence[str] | None = None, keep: bool = False,
             on_chunk: Callable[[np.ndarray, Mapping[str, np.ndarray]], None] | None = None,
             histogram_bins: int = HISTOGRAM_BINS) -> PropagationResult:
    """Adaptive Monte Carlo procedure of JCGM 101:2008, 7.9.

    Batches of ``M = max(J, 10^4)`` trials, ``J`` the smallest integer
    ``>= 100 / (1 - p)`` (JCGM 101:2008, 7.9.4 b), are run one after another; batch ``r``
    is block ``r`` of the engine with block size M, so a run is also
    ``propagate(problem, h M, seed, block_size=M)``.  After each batch
    ``h >= 2``, for each output of interest and each of the batch values
    ``v`` = y, u(y), y_low, y_high (symmetric interval of the batch),

        s_v^2 = 1 / (h (h - 1)) sum_r (v^(r) - v_bar)^2

    (the standard deviation associated with the average of the h batch
    values, JCGM 101:2008, 7.9.4 g-h), and the numerical tolerance delta of
    u(y) of all ``h M`` trials to ``n_digits`` significant digits
    (:func:`simunc.uncertainty.statistics.numerical_tolerance`).  The run stops when
    ``2 s_v <= delta`` for the four values of every output of interest (an
    output with u(y) = 0 counts as stable), or when ``max_trials`` is
    reached; the results come from all ``h M`` trials (7.9.4 l).

    Randomized quasi-Monte Carlo: with ``method="lhs"`` or ``"sobol"`` every
    batch is an independent Latin hypercube or freshly scrambled Sobol point
    set, so the batch values are independent replicates and ``s_v`` remains a
    valid estimate of the standard deviation of their average.

    Parameters
    ----------
    problem : Problem
    seed : int
    n_digits : int
        Significant decimal digits of u(y) regarded as meaningful.
    coverage_probability : float
        p [1].
    method : {"random", "lhs", "sobol"}
    correlation : array_like, optional
        Correlation matrix of a Gaussian copula (see :func:`propagate`).
    batch : int, optional
        M (at least J); default ``max(J, 10^4)``.
    max_trials : int
        Upper bound on ``h M`` (at least 2 M).
    outputs : sequence of str, optional
        Outputs of interest: with statistics and in the stopping rule
        (default all).
    keep, on_chunk, histogram_bins
        As for :func:`propagate` (``on_chunk`` sees each batch).

    Returns
    -------
    PropagationResult
        With ``adaptive`` filled in (batches, converged, tolerances reached).

    Examples
    --------
    JCGM 101:2008, 9.2.2 (Y = X1 + ... + X4, Xi ~ N(0, 1), u(y) = 2): with two
    significant digits delta = 0.05.

    >>> from scipy import stats
    >>> p = Problem(list("abcd"), [stats.norm()] * 4, lambda x: {"y": sum(x.values())})
    >>> r = adaptive(p, seed=3, n_digits=2)
    >>> info = r.adaptive
    >>> info.converged, info.tolerance["y"], r.trials == info.batches * info.batch_size
    (True, 0.05, True)
    >>> info.achieved()["y"] <= 0.05
    True
    """
    p = float(coverage_probability)
    _check_common(2, p)
    j = math.ceil(100.0 / (1.0 - p) - 1e-9)
    m = max(j, 10_000) if batch is None else int(batch)
    if m < j:
        raise ValueError(f"batch must hold at least J = ceil(100 / (1 - p)) = {j} trials, got {m}")
    max_batches = int(max_trials) // m
    if max_batches < 2:
        raise ValueError(f"max_trials must allow two batches of {m} trials, got {max_trials}")
    sampler = _Sampler(problem, seed, method, correlation, m)
    a = 0.5 * (1.0 - p)
    acc: dict[str, _OutputAccumulator] = {}
    est: dict[str, np.ndarray] = {}
    kept_x: list[np.ndarray] = []
    kept_y: dict[str, list[np.ndarray]] = {}
    converged = False
    h = 0
    tol: dict[str, float] = {}
    reached: dict[str, dict[str, float]] = {}
    while h < max_batches:
        x, y = sampler.chunk(h, [m])
        if on_chunk is not None:
            on_chunk(x, y)
        if h == 0:
            names = _select(outputs, y)
            acc = {k: _OutputAccumulator(k, not keep, histogram_bins) for k in names}
            est = {k: np.empty((max_batches, 4)) for k in names}
            kept_y = {k: [] for k in y}
        if keep:
            kept_x.append(x)
            for k, v in y.items():
                kept_y[k].append(np.array(v, dtype=float))
        for k, acc_k in acc.items():
            acc_k.add(y[k], [m])
            low, high = quantiles(y[k], (a, 1.0 - a))
            est[k][h] = (acc_k.last.mean, acc_k.last.std, low, high)
        h += 1
        if h < 2:
            continue
        stable = True
        for k, acc_k in acc.items():
            u_all = acc_k.moments.total().std
            delta = numerical_tolerance(u_all, n_digits)
            vals = est[k][:h]
            two_s = 2.0 * np.sqrt(np.sum((vals - vals.mean(axis=0)) ** 2, axis=0) / (h * (h - 1)))
            tol[k] = delta
            reached[k] = dict(zip(("mean", "standard_uncertainty", "low", "high"),
                                  (float(v) for v in two_s)))
            if u_all > 0.0 and not np.all(two_s <= delta):
                stable = False
        if stable:
            converged = True
            break
    trials = h * m
    x_all: np.ndarray | None
    y_all: dict[str, np.ndarray] | None
    if keep:
        x_all = np.concatenate(kept_x)
        y_all = {k: np.concatenate(v) for k, v in kept_y.items()}
    else:
        x_all = y_all = None
    stats = {k: acc_k.finish(p, y_all[k] if y_all is not None else None) for k, acc_k in acc.items()}
    info = AdaptiveInfo(int(n_digits), m, h, converged, tol, reached)
    return PropagationResult(stats, trials, int(seed), method, m, m, p, sampler.correlation,
                             x_all, y_all, info)
