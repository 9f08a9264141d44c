"""Statistics of Monte Carlo trials: moments, coverage intervals, tolerances, conformity.

Two kinds of tools live here.

*Helpers on an array of trials* (JCGM 101:2008, 7.6-7.9; JCGM 106:2012):
:func:`quantiles`, :func:`symmetric_interval`, :func:`shortest_interval`,
:func:`coverage_factor`, :func:`numerical_tolerance`,
:func:`conformity_probability` and the chunk-by-chunk :class:`ConformityCounter`.

*Streaming accumulators* for the chunked engine of :mod:`simunc.uncertainty.propagate`,
which never holds more than one chunk of trials:

* :class:`Moments` and :class:`PairwiseMoments` -- count, mean and sum of
  squared deviations of each block (about the run's first trial) by the
  corrected two-pass formula, merged in block order along a fixed binary tree
  (Chan, Golub and LeVeque);
* :class:`HistogramQuantiles` -- a fine histogram whose range is fixed from
  the first block, with the values outside that range stored exactly;
  quantiles and coverage intervals come from a *virtual sorted sample* that
  puts the ``c`` trials of a bin evenly inside it.

Streaming quantiles and their error bound
-----------------------------------------
From the first block (of ``n1`` trials) the range is
``[lo, hi] = [a - w (b - a), b + w (b - a)]`` with ``a``, ``b`` the first
block's order statistics of ranks ``floor(1e-4 (n1 - 1))`` and
``ceil((1 - 1e-4) (n1 - 1))`` and ``w = 0.25``; it is cut into ``K`` bins
(default ``K = 2^18``) of width ``h = (hi - lo) / K``.  Every later value in
``[lo, hi)`` increments its bin; values outside are kept exactly.  The
virtual sorted sample gives the order statistic of rank ``k`` exactly in the
tails and, inside bin ``j`` holding ``c`` values of ranks ``s .. s + c - 1``,

    y_(k) ~= lo + h (j + (k - s + 1/2) / c),

clipped to the observed [min, max].  The true order statistic of rank ``k``
lies in the same bin, hence

    |y_(k) estimate - y_(k)| < h                       (up to one rounding)

for every rank.  Every quantile (a convex combination of two order
statistics) and both endpoints of the probabilistically symmetric interval
are therefore within ``h`` of the values the same rule gives on the exact
sorted trials, and the length of the shortest interval is within ``2 h``
(its position is as ill-determined as on the exact trials wherever the
interval's length hardly changes with its position, e.g. a flat-topped
distribution).  The range depends on block 0 alone and counts are integers,
so the result does not depend on the chunk size.  The bound ``h`` is reported per output (``quantile_error_bound``).  For a
normal output ``b - a ~= 7.44 sigma``, so ``h ~= 11.2 sigma / 2^18 ~= 4.3e-5
sigma``: at least 100 times below the numerical tolerance of two significant
digits of ``u`` (``delta >= u / 198``, see :func:`numerical_tolerance`).
Kept tails take memory in proportion to the share of trials outside
``[lo, hi]``: below 1e-7 for a normal output, about 3e-5 for a lognormal one
of shape 1, about 1.4e-4 for a Cauchy one.  Heavy tails widen the first
block's span and so ``h``; ``h`` is always reported.

References
----------
.. [1] JCGM 101:2008, Evaluation of measurement data -- Supplement 1 to the
   "Guide to the expression of uncertainty in measurement" -- Propagation of
   distributions using a Monte Carlo method, 7.6-7.9.
.. [2] JCGM 106:2012, Evaluation of measurement data -- The role of
   measurement uncertainty in conformity assessment, 7.
.. [3] T. F. Chan, G. H. Golub, R. J. LeVeque, "Algorithms for computing the
   sample variance: analysis and recommendations", The American
   Statistician 37 (1983) 242-247.
.. [4] R. J. Hyndman, Y. Fan, "Sample quantiles in statistical packages",
   The American Statistician 50 (1996) 361-365 (type 7, numpy's default).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Mapping

import numpy as np
from scipy import special

#: Default number of histogram bins of :class:`HistogramQuantiles`.
HISTOGRAM_BINS = 2**18
#: Tail probability of the first-block order statistics that fix the histogram range.
RANGE_TAIL = 1e-4
#: Widening of the histogram range on each side, as a fraction of that span.
RANGE_MARGIN = 0.25


# ---------------------------------------------------------------------------
# Helpers on an array of trials
# ---------------------------------------------------------------------------

def quantiles(y: np.ndarray, probabilities, *, presorted: bool = False) -> list[float]:
    """Sample quantiles by linear interpolation between order statistics.

    The same values as ``numpy.quantile(y, probabilities)`` (its default
    ``linear`` method: virtual index ``p (n - 1)``, Hyndman and Fan type 7),
    from one partial sort instead of one per probability.

    Parameters
    ----------
    y : array_like
        Trials [unit of y].
    probabilities : sequence of float
        In [0, 1].
    presorted : bool
        ``y`` is sorted already (its order statistics are read as they are).

    Returns
    -------
    list of float
        [unit of y].

    Examples
    --------
    >>> quantiles(np.array([4.0, 1.0, 3.0, 2.0]), (0.25, 0.5))
    [1.75, 2.5]
    >>> quantiles(np.array([1.0, 2.0, 3.0, 4.0]), (0.25, 0.5), presorted=True)
    [1.75, 2.5]
    """
    y = np.asarray(y, dtype=float).ravel()
    n = y.size
    pos = [float(p) * (n - 1) for p in probabilities]
    lows = [int(np.floor(v)) for v in pos]
    kth = sorted({k for lo in lows for k in (lo, min(lo + 1, n - 1))})
    part = y if presorted else np.partition(y, kth)
    return [_lerp(part[lo], part[min(lo + 1, n - 1)], v - lo) for v, lo in zip(pos, lows)]


def _lerp(a: float, b: float, t: float) -> float:
    """numpy's linear interpolation ``a + (b - a) t``, written from the nearer end."""
    return float(b - (b - a) * (1.0 - t) if t >= 0.5 else a + (b - a) * t)


def _check_probability(p: float) -> float:
    p = float(p)
    if not 0.0 < p < 1.0:
        raise ValueError(f"coverage probability must lie in (0, 1), got {p}")
    return p


def coverage_count(m: int, p: float) -> int:
    """Number ``q`` of order-statistic steps spanned by a 100p % interval of ``m`` trials.

    ``q = p m`` if that is an integer, otherwise the integer part of
    ``p m + 1/2`` (JCGM 101:2008, 7.7.1).  An exact product is recognised to
    within 1e-9 (``0.95 * 100`` is 95, not 94.999...).

    >>> coverage_count(100, 0.95), coverage_count(10_001, 0.95)
    (95, 9501)
    """
    pm = _check_probability(p) * m
    near = round(pm)
    if abs(pm - near) <= 1e-9 * max(1.0, pm):
        return int(near)
    return int(math.floor(pm + 0.5))


def symmetric_interval(y: np.ndarray, p: float = 0.95, *, rule: str = "linear",
                       presorted: bool = False) -> tuple[float, float]:
    """Probabilistically symmetric 100p % coverage interval of the trials.

    ``rule="linear"`` (default): the ``(1 - p)/2`` and ``(1 + p)/2`` sample
    quantiles by linear interpolation (:func:`quantiles`; the values
    :func:`simunc.uncertainty.propagate.summarize` reports).  ``rule="order"``: the order
    statistics of JCGM 101:2008, 7.7.1, ``[y_(r), y_(r+q)]`` (1-based) with
    ``q`` from :func:`coverage_count` and ``r = (m - q)/2`` if that is an
    integer, else the integer part of ``(m - q + 1)/2``.  The two rules differ
    by less than one gap between neighbouring order statistics.

    Parameters
    ----------
    y : array_like
        Trials [unit of y].
    p : float
        Coverage probability in (0, 1) [1].
    rule : {"linear", "order"}
    presorted : bool
        ``y`` is sorted already.

    Returns
    -------
    (low, high) : tuple of float
        [unit of y].

    Examples
    --------
    >>> y = np.arange(1.0, 101.0)
    >>> [round(v, 12) for v in symmetric_interval(y, 0.9)]
    [5.95, 95.05]
    >>> symmetric_interval(y, 0.9, rule="order")      # r = 5, q = 90: [y_(5), y_(95)]
    (5.0, 95.0)
    """
    p = _check_probability(p)
    y = np.asarray(y, dtype=float).ravel()
    if rule == "linear":
        a = 0.5 * (1.0 - p)
        low, high = quantiles(y, (a, 1.0 - a), presorted=presorted)
        return low, high
    if rule != "order":
        raise ValueError(f"rule must be 'linear' or 'order', got {rule!r}")
    m = y.size
    q = min(coverage_count(m, p), m - 1)
    r = (m - q) // 2 if (m - q) % 2 == 0 else (m - q + 1) // 2
    r = max(r, 1)
    part = y if presorted else np.partition(y, sorted({r - 1, r - 1 + q}))
    return float(part[r - 1]), float(part[r - 1 + q])


def shortest_interval(y: np.ndarray, p: float = 0.95, *, presorted: bool = False
                      ) -> tuple[float, float]:
    """Shortest 100p % coverage interval of the trials (JCGM 101:2008, 7.7.2).

    Among the intervals ``[y_(r), y_(r+q)]``, ``r = 1 .. m - q`` (order
    statistics, ``q`` from :func:`coverage_count`), the one of least length
    ``y_(r+q) - y_(r)``; the first one if several tie.

    Parameters
    ----------
    y : array_like
        Trials [unit of y].
    p : float
        Coverage probability in (0, 1) [1].
    presorted : bool
        ``y`` is sorted already.

    Returns
    -------
    (low, high) : tuple of float
        [unit of y].

    Examples
    --------
    A skewed sample: the shortest interval hugs the dense end.

    >>> shortest_interval(np.array([0.0, 0.1, 0.2, 0.3, 5.0]), 0.6)
    (0.0, 0.3)

    For an exponential distribution the shortest 95 % interval is
    ``[0, -ln 0.05] = [0, 2.996]`` (the density decreases).

    >>> rng = np.random.default_rng(2)
    >>> low, high = shortest_interval(rng.exponential(size=400_000), 0.95)
    >>> round(low, 4), round(high, 2)
    (0.0, 3.0)
    """
    p = _check_probability(p)
    ys = np.asarray(y, dtype=float).ravel()
    ys = ys if presorted else np.sort(ys)
    m = ys.size
    q = coverage_count(m, p)
    if q >= m:
        return float(ys[0]), float(ys[-1])
    width = ys[q:] - ys[:m - q]
    i = int(np.argmin(width))
    return float(ys[i]), float(ys[i + q])


def coverage_factor(low: float, high: float, standard_uncertainty: float) -> float:
    """Coverage factor implied by a coverage interval: ``k = (high - low) / (2 u)``.

    For a normal output and p = 0.95, k = 1.960 (JCGM 100:2008, G.1.3).  NaN
    when ``u = 0``.

    Parameters
    ----------
    low, high : float
        Interval endpoints [unit of y].
    standard_uncertainty : float
        u(y) [unit of y].

    Returns
    -------
    float
        [1].

    Examples
    --------
    JCGM 101:2008, 9.2.3 (from memory of JCGM 101, Table 3): u = 2, interval
    [-3.88, 3.88], k = 1.94.

    >>> coverage_factor(-3.88, 3.88, 2.0)
    1.94
    """
    u = float(standard_uncertainty)
    return float((high - low) / (2.0 * u)) if u > 0.0 else math.nan


def quantile_standard_error(y: np.ndarray, prob: float) -> float:
    """Standard error of the sample ``prob``-quantile of ``y`` (large-sample formula).

    ``Var(q_a) = a (1 - a) / (n f(y_a)^2)`` (H. A. David, H. N. Nagaraja, *Order
    Statistics*, 3rd ed., Wiley, 2003, 10.2, from memory of that book), with the sparsity
    ``1 / f(y_a)`` estimated by ``(q_{a+h} - q_{a-h}) / (2 h)``, ``h = min(a, 1 - a) / 5``.
    For a standard normal sample at a = 0.025, sqrt(n) times the standard error is
    sqrt(0.025 x 0.975) / phi(1.96) = 2.67:

    >>> y = np.random.default_rng(1).standard_normal(400_000)
    >>> round(float(quantile_standard_error(y, 0.025) * np.sqrt(y.size)), 1)
    2.7
    """
    y = np.asarray(y, dtype=float)
    a = float(prob)
    h = 0.2 * min(a, 1.0 - a)
    lo, hi = np.quantile(y, [a - h, a + h])
    return math.sqrt(a * (1.0 - a) / y.size) * float(hi - lo) / (2.0 * h)


def normal_quantile_standard_error(u: float, n: int, prob: float) -> float:
    """The standard error of :func:`quantile_standard_error` for a normal output of standard
    deviation ``u`` from ``n`` trials: ``sqrt(a (1 - a) / n) u / phi(z_a)`` (for a run that kept
    no trials to estimate the sparsity from).

    >>> round(normal_quantile_standard_error(1.0, 1, 0.025), 2)
    2.67
    """
    a = float(prob)
    z = float(special.ndtri(a))
    return math.sqrt(a * (1.0 - a) / n) * u * math.sqrt(2.0 * math.pi) * math.exp(0.5 * z * z)


def numerical_tolerance(u: float, n_digits: int = 2) -> float:
    """Numerical tolerance of a value stated to ``n_digits`` significant digits.

    Write ``u = c x 10^l`` with ``c`` an ``n_digits``-digit integer (``u``
    rounded to ``n_digits`` significant digits); then ``delta = 1/2 x 10^l``
    (JCGM 101:2008, 7.9.2).  Zero for ``u = 0``.

    Parameters
    ----------
    u : float
        Usually the standard uncertainty u(y) [unit of y].
    n_digits : int
        Significant decimal digits regarded as meaningful (1 or 2 in practice).

    Returns
    -------
    float
        delta [unit of y].

    Examples
    --------
    JCGM 101:2008, 7.9.2 (from memory of JCGM 101, 7.9.2): a mass with
    u = 0.000 35 g and two significant digits: u = 35 x 10^-5 g, delta =
    0.000 005 g.

    >>> numerical_tolerance(0.00035, 2)
    5e-06
    >>> numerical_tolerance(2.0, 2), numerical_tolerance(2.0, 1)      # 20 x 10^-1, 2 x 10^0
    (0.05, 0.5)
    >>> numerical_tolerance(9.96, 2)                                  # rounds to 10 x 10^0
    0.5
    """
    if n_digits < 1:
        raise ValueError(f"n_digits must be at least 1, got {n_digits}")
    u = float(u)
    if not math.isfinite(u) or u < 0.0:
        raise ValueError(f"u must be finite and non-negative, got {u}")
    if u == 0.0:
        return 0.0
    exponent = int(f"{u:.{n_digits - 1}e}".split("e")[1])   # correctly rounded
    return 0.5 * 10.0 ** (exponent - n_digits + 1)


def conformity_probability(y: np.ndarray, lower: float | None = None,
                           upper: float | None = None) -> float:
    """Conformity probability: share of trials inside a tolerance interval.

    ``p_c = Pr(T_L <= Y <= T_U)`` for the tolerance interval ``[T_L, T_U]``
    (JCGM 106:2012, 7.1), estimated as the fraction of the Monte Carlo trials
    inside it.  One-sided limits: leave the other one ``None``.  Its standard
    uncertainty is ``sqrt(p_c (1 - p_c) / M)`` for M pseudo-random trials
    (binomial).

    Parameters
    ----------
    y : array_like
        Trials [unit of y].
    lower, upper : float or None
        Tolerance limits T_L, T_U [unit of y].

    Returns
    -------
    float
        p_c [1].

    Examples
    --------
    >>> conformity_probability(np.array([0.9, 1.0, 1.1, 1.3]), 0.95, 1.2)
    0.5
    >>> conformity_probability(np.array([0.9, 1.0, 1.1, 1.3]), upper=1.0)
    0.5
    """
    y = np.asarray(y, dtype=float)
    if y.size == 0:
        raise ValueError("no trials")
    return float(np.count_nonzero(_inside(y, lower, upper)) / y.size)


def _inside(y: np.ndarray, lower, upper) -> np.ndarray:
    inside = np.ones(y.shape, dtype=bool)
    if lower is not None:
        inside &= y >= lower
    if upper is not None:
        inside &= y <= upper
    return inside


class ConformityCounter:
    """Conformity probabilities counted chunk by chunk (use as ``on_chunk``).

    Each entry of ``limits`` maps a name to ``(output, T_L, T_U)``; the
    counter adds, for every chunk, the trials inside each tolerance interval
    and inside all of them at once (key ``"all"``) (JCGM 106:2012, 7.1).

    Examples
    --------
    >>> c = ConformityCounter({"a": ("y", -1.0, 1.0)})
    >>> c(None, {"y": np.array([0.0, 2.0])}); c(None, {"y": np.array([0.5, -0.5])})
    >>> c.probabilities()
    {'a': 0.75, 'all': 0.75}
    """

    def __init__(self, limits: Mapping[str, tuple[str, float | None, float | None]]):
        self.limits = dict(limits)
        self.trials = 0
        self.counts = {name: 0 for name in self.limits}
        self.counts["all"] = 0

    def __call__(self, x, y: Mapping[str, np.ndarray]) -> None:
        n = None
        inside_all = None
        for name, (output, lower, upper) in self.limits.items():
            values = np.asarray(y[output], dtype=float)
            n = values.shape[0]
            inside = _inside(values, lower, upper)
            self.counts[name] += int(np.count_nonzero(inside))
            inside_all = inside if inside_all is None else inside_all & inside
        if n is None:
            n = len(next(iter(y.values())))
            inside_all = np.ones(n, dtype=bool)
        assert inside_all is not None  # set by the loop, or just above when there are no limits
        self.counts["all"] += int(np.count_nonzero(inside_all))
        self.trials += n

    def probabilities(self) -> dict[str, float]:
        """p_c per tolerance interval and jointly (``"all"``) [1]."""
        if not self.trials:
            raise ValueError("no trials counted")
        return {k: v / self.trials for k, v in self.counts.items()}


# ---------------------------------------------------------------------------
# Streaming moments
# ---------------------------------------------------------------------------

@dataclass(frozen=True)
class Moments:
    """Count, mean and sum of squared deviations ``m2`` of a set of values.

    The values are taken about a fixed ``shift`` (the engine uses the first
    trial of the run): ``centre`` is the mean of ``x - shift`` and
    ``mean = shift + centre``.  With a shift near the data, ``x - shift`` is
    exact for most values (Sterbenz) and the moments keep their accuracy
    relative to the spread of the data, not to its magnitude -- which is what
    the NIST StRD NumAcc3 and NumAcc4 datasets test.

    ``Moments.of(x, shift)`` uses the corrected two-pass formula
    ``m2 = sum (d - c)^2 - (sum (d - c))^2 / n``, ``d = x - shift``, with ``c``
    the pairwise-summed mean of ``d`` (Chan, Golub and LeVeque 1983, eq. 1.7);
    ``a.merge(b)`` combines two disjoint sets with the same shift,

        n = na + nb,  e = cb - ca,  c = ca + e nb / n,
        m2 = m2a + m2b + e^2 na nb / n      (Chan et al. 1983, eq. 2.1).

    Examples
    --------
    >>> a, b = Moments.of(np.array([1.0, 2.0]), 2.0), Moments.of(np.array([3.0, 4.0, 5.0]), 2.0)
    >>> m = a.merge(b)
    >>> m.count, m.mean, m.variance
    (5, 3.0, 2.5)
    """

    count: int = 0
    centre: float = 0.0
    m2: float = 0.0
    shift: float = 0.0

    @classmethod
    def of(cls, x: np.ndarray, shift: float = 0.0) -> "Moments":
        x = np.asarray(x, dtype=float)
        n = x.size
        shift = float(shift)
        if n == 0:
            return cls(shift=shift)
        r = x - shift
        centre = float(np.sum(r) / n)
        r -= centre
        s1 = float(np.sum(r))
        np.multiply(r, r, out=r)
        m2 = max(float(np.sum(r)) - s1 * s1 / n, 0.0)
        return cls(n, centre, m2, shift)

    def merge(self, other: "Moments") -> "Moments":
        if other.count == 0:
            return self
        if self.count == 0:
            return other
        if other.shift != self.shift:
            raise ValueError("moments about different shifts")
        n = self.count + other.count
        e = other.centre - self.centre
        centre = self.centre + e * (other.count / n)
        m2 = self.m2 + other.m2 + e * e * (self.count * (other.count / n))
        return Moments(n, centre, m2, self.shift)

    @property
    def mean(self) -> float:
        """Mean [unit]."""
        return self.shift + self.centre

    @property
    def variance(self) -> float:
        """Sample variance with ``n - 1`` (JCGM 101:2008, 7.6) [unit^2]."""
        return self.m2 / (self.count - 1) if self.count > 1 else math.nan

    @property
    def std(self) -> float:
        """Sample standard deviation with ``n - 1`` [unit]."""
        return math.sqrt(self.variance) if self.count > 1 else math.nan


class PairwiseMoments:
    """Block moments merged along a binary tree fixed by the block order.

    Blocks are pushed in order; two partial results of equal height are
    merged as soon as both exist (a binary counter), and :meth:`total` folds
    what remains from the most recent one.  The merge tree depends only on
    the sequence of block sizes, so the result is bit-identical however the
    blocks were grouped into chunks, and the rounding error grows like
    ``log2(number of blocks)``.

    >>> acc = PairwiseMoments()
    >>> for block in np.array_split(np.arange(10.0), 4):
    ...     acc.push(Moments.of(block, shift=0.0))
    >>> t = acc.total(); t.count, t.mean, round(t.variance, 12)
    (10, 4.5, 9.166666666667)
    """

    def __init__(self) -> None:
        self._stack: list[tuple[int, Moments]] = []

    def push(self, m: Moments) -> None:
        level = 0
        while self._stack and self._stack[-1][0] == level:
            _, left = self._stack.pop()
            m = left.merge(m)
            level += 1
        self._stack.append((level, m))

    def total(self) -> Moments:
        acc = Moments(shift=self._stack[0][1].shift) if self._stack else Moments()
        for _, m in reversed(self._stack):
            acc = m.merge(acc)
        return acc


# ---------------------------------------------------------------------------
# Streaming quantiles
# ---------------------------------------------------------------------------

class HistogramQuantiles:
    """Streaming quantiles: fine histogram on a range fixed by the first block, exact tails.

    See the module notes for the range, the virtual sorted sample and the
    error bound ``h`` (:attr:`error_bound`).  Counts are integers and tails
    are sorted before use, so the result does not depend on how the values
    were split into calls of :meth:`add` once the first block is fixed.

    Parameters
    ----------
    bins : int
        Number K of bins.

    Examples
    --------
    >>> rng = np.random.default_rng(2)
    >>> y = rng.standard_normal(200_000)
    >>> h = HistogramQuantiles()
    >>> h.set_range(y[:65_536]); h.add(y[:100_000]); h.add(y[100_000:])
    >>> est = h.quantiles([0.025, 0.975]); exact = np.quantile(y, [0.025, 0.975])
    >>> bool(np.all(np.abs(np.array(est) - exact) < h.error_bound)), h.error_bound < 1e-4
    (True, True)
    """

    def __init__(self, bins: int = HISTOGRAM_BINS):
        self.bins = int(bins)
        self.counts = np.zeros(self.bins, dtype=np.int64)
        self.lo = self.hi = math.nan
        self._scale = math.nan
        self._low: list[np.ndarray] = []
        self._high: list[np.ndarray] = []
        self.minimum = math.inf
        self.maximum = -math.inf
        self.count = 0

    @property
    def ready(self) -> bool:
        return math.isfinite(self.lo)

    def set_range(self, first_block: np.ndarray) -> None:
        """Fix ``[lo, hi]`` from the first block (see the module notes)."""
        y = np.asarray(first_block, dtype=float).ravel()
        n = y.size
        ka = int(math.floor(RANGE_TAIL * (n - 1)))
        kb = int(math.ceil((1.0 - RANGE_TAIL) * (n - 1)))
        part = np.partition(y, sorted({0, ka, kb, n - 1}))
        a, b = float(part[ka]), float(part[kb])
        span = b - a
        if span <= 0.0:
            span = float(part[n - 1] - part[0])
        if span <= 0.0:
            span = max(abs(a) * 2.0**-30, 1e-300)
        lo, hi = a - RANGE_MARGIN * span, b + RANGE_MARGIN * span
        self.lo, self.hi = lo, hi
        self._scale = self.bins / (hi - lo)

    @property
    def error_bound(self) -> float:
        """Bin width ``h = (hi - lo) / K``: bound on the error of any order statistic [unit]."""
        return (self.hi - self.lo) / self.bins

    def add(self, y: np.ndarray, minimum: float | None = None, maximum: float | None = None) -> None:
        """Count the values ``y`` (their min and max may be passed when already known)."""
        y = np.asarray(y, dtype=float).ravel()
        if y.size == 0:
            return
        if not self.ready:
            raise RuntimeError("set_range must come first")
        ymin = float(np.min(y)) if minimum is None else float(minimum)
        ymax = float(np.max(y)) if maximum is None else float(maximum)
        self.minimum = min(self.minimum, ymin)
        self.maximum = max(self.maximum, ymax)
        self.count += y.size
        if ymin < self.lo or ymax >= self.hi:
            below, above = y < self.lo, y >= self.hi
            if below.any():
                self._low.append(y[below])
            if above.any():
                self._high.append(y[above])
            y = y[~(below | above)]
            if y.size == 0:
                return
        t = y - self.lo
        t *= self._scale
        idx = t.astype(np.intp)
        np.minimum(idx, self.bins - 1, out=idx)
        self.counts += np.bincount(idx, minlength=self.bins)

    def _parts(self):
        low = np.sort(np.concatenate(self._low)) if self._low else np.empty(0)
        high = np.sort(np.concatenate(self._high)) if self._high else np.empty(0)
        self._low, self._high = [low] if low.size else [], [high] if high.size else []
        cum = np.cumsum(self.counts)
        return low, high, cum

    def order_statistics(self, ranks) -> np.ndarray:
        """Values of the virtual sorted sample at 0-based integer ``ranks`` [unit]."""
        low, high, cum = self._parts()
        return self._order(np.asarray(ranks, dtype=np.int64), low, high, cum)

    def _order(self, k: np.ndarray, low, high, cum) -> np.ndarray:
        nl = low.size
        nh_start = nl + (int(cum[-1]) if cum.size else 0)
        out = np.empty(k.shape, dtype=float)
        in_low = k < nl
        in_high = k >= nh_start
        mid = ~(in_low | in_high)
        out[in_low] = low[k[in_low]]
        out[in_high] = high[k[in_high] - nh_start]
        km = k[mid] - nl
        j = np.searchsorted(cum, km, side="right")
        c = self.counts[j]
        start = cum[j] - c
        out[mid] = self.lo + (j + (km - start + 0.5) / c) / self._scale
        return np.clip(out, self.minimum, self.maximum)

    def quantiles(self, probabilities) -> list[float]:
        """Quantiles by linear interpolation at virtual index ``p (n - 1)`` [unit]."""
        n = self.count
        low, high, cum = self._parts()
        out = []
        for p in probabilities:
            pos = float(p) * (n - 1)
            k0 = int(math.floor(pos))
            v = self._order(np.array([k0, min(k0 + 1, n - 1)]), low, high, cum)
            out.append(_lerp(v[0], v[1], pos - k0))
        return out

    def symmetric_interval(self, p: float) -> tuple[float, float]:
        """Probabilistically symmetric interval (linear rule of :func:`symmetric_interval`)."""
        a = 0.5 * (1.0 - _check_probability(p))
        low, high = self.quantiles((a, 1.0 - a))
        return low, high

    def shortest_interval(self, p: float) -> tuple[float, float]:
        """Shortest interval of the virtual sorted sample (rule of :func:`shortest_interval`).

        The width ``V(i + q) - V(i)`` is linear in ``i`` while ``i`` and
        ``i + q`` stay in the same bins or tail points, so its minimum over
        integers is at an end of such a stretch: only the first and last ranks
        of the non-empty bins and the tail ranks, and those minus ``q``, are
        tried.
        """
        m = self.count
        q = coverage_count(m, p)
        low, high, cum = self._parts()
        if q >= m:
            return self.minimum, self.maximum
        nl = low.size
        filled = np.flatnonzero(self.counts)
        starts = nl + cum[filled] - self.counts[filled]
        ends = nl + cum[filled] - 1
        tails = np.concatenate([np.arange(nl), nl + (int(cum[-1]) if cum.size else 0)
                                + np.arange(high.size)])
        e = np.concatenate([starts, ends, tails]).astype(np.int64)
        cand = np.concatenate([e, e - q])
        cand = np.sort(cand[(cand >= 0) & (cand <= m - q - 1)])   # ties: the first
        if cand.size == 0:
            cand = np.array([0], dtype=np.int64)
        lo_v = self._order(cand, low, high, cum)
        hi_v = self._order(cand + q, low, high, cum)
        i = int(np.argmin(hi_v - lo_v))
        return float(lo_v[i]), float(hi_v[i])
