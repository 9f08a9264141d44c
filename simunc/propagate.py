"""Monte Carlo propagation of distributions (JCGM 101:2008) and its statistics.

A :class:`Problem` is a vectorized function of named inputs with their
distributions; :func:`monte_carlo` draws seeded trials and evaluates it once on
whole arrays (no per-trial loop).  :func:`summarize` gives the mean, the
standard uncertainty and the probabilistically symmetric coverage interval
(JCGM 101:2008, 7.6-7.7).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, Mapping, Sequence

import numpy as np

from .sampling import map_to_inputs, unit_samples


@dataclass(frozen=True)
class Problem:
    """A vectorized model with named, independent uncertain inputs.

    Attributes
    ----------
    names : sequence of str
        Input names, one per column of a sample matrix.
    distributions : sequence
        Frozen scipy.stats distributions, in the order of ``names``.
    func : callable
        ``func(dict name -> ndarray) -> dict output -> ndarray``.
    """

    names: Sequence[str]
    distributions: Sequence[object]
    func: Callable[[Mapping[str, np.ndarray]], Mapping[str, np.ndarray]]

    @property
    def dimension(self) -> int:
        return len(self.names)

    def evaluate(self, x: np.ndarray) -> dict[str, np.ndarray]:
        """Evaluate on an ``(n, d)`` matrix of input values (one output value per row)."""
        with np.errstate(all="ignore"):  # non-finite trials are reported by the caller
            out = self.func({n: x[:, j] for j, n in enumerate(self.names)})
        return {k: np.broadcast_to(v, (x.shape[0],)) for k, v in out.items()}

    def evaluate_unit(self, u: np.ndarray) -> dict[str, np.ndarray]:
        """Evaluate on an ``(n, d)`` matrix of points of the unit hypercube."""
        return self.evaluate(map_to_inputs(u, self.distributions))


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


def quantiles(y: np.ndarray, probabilities) -> list[float]:
    """Sample quantiles by linear interpolation between order statistics.

    The same values as ``numpy.quantile(y, probabilities)`` (its default
    ``linear`` method: virtual index ``p (n - 1)``), from one partial sort
    instead of one per probability.

    >>> quantiles(np.array([4.0, 1.0, 3.0, 2.0]), (0.25, 0.5))
    [1.75, 2.5]
    """
    y = np.asarray(y, dtype=float).ravel()
    n = y.size
    pos = [float(p) * (n - 1) for p in probabilities]
    lows = [int(np.floor(v)) for v in pos]
    kth = sorted({k for lo in lows for k in (lo, min(lo + 1, n - 1))})
    part = np.partition(y, kth)
    out = []
    for v, lo in zip(pos, lows):
        a, b = part[lo], part[min(lo + 1, n - 1)]
        t = v - lo
        out.append(float(b - (b - a) * (1.0 - t) if t >= 0.5 else a + (b - a) * t))
    return out


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
    low, high = quantiles(y, (a, 1.0 - a))
    return {
        "mean": float(np.mean(y)),
        "standard_uncertainty": float(np.std(y, ddof=1)),
        "low": float(low),
        "high": float(high),
        "coverage_probability": float(coverage_probability),
    }
