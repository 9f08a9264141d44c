"""Distributions of deviations as certificates and datasheets state them (GUM Type B).

Frozen scipy.stats distributions of mean zero; see :mod:`simunc.similitude.inputs` for the
table of conversions from a written size to a distribution.
"""

from __future__ import annotations

import math

import numpy as np
from scipy import special


def _stats():
    """scipy.stats, imported on first use (half a second that ``simunc check`` need not pay)."""
    from scipy import stats

    return stats

#: Standard uncertainty of a unit half-width, by distribution (trapezoidal: beta = 1 row of
#: :func:`u_per_half_width`).
_U_PER_HALF_WIDTH = {"rectangular": 1.0 / math.sqrt(3.0), "triangular": 1.0 / math.sqrt(6.0),
                     "arcsine": 1.0 / math.sqrt(2.0)}
#: Families bounded by +-half-width.
BOUNDED = ("rectangular", "triangular", "trapezoidal", "arcsine", "truncated_normal")


def u_per_half_width(kind: str, beta: float | None = None) -> float:
    """Standard uncertainty of a distribution on [-1, 1] of the bounded families.

    >>> round(u_per_half_width("trapezoidal", 0.5), 12) == round(math.sqrt(1.25 / 6), 12)
    True
    """
    if kind == "trapezoidal":
        assert beta is not None, "a trapezoidal distribution has beta (the reader requires it)"
        return math.sqrt((1.0 + beta * beta) / 6.0)
    return _U_PER_HALF_WIDTH[kind]


def bounded(kind: str, a: float, beta: float | None = None):
    """Frozen distribution of mean 0 on [-a, a] (rectangular, triangular, trapezoidal, arcsine)."""
    if kind == "rectangular":
        return _stats().uniform(loc=-a, scale=2.0 * a)
    if kind == "triangular":
        return _stats().triang(c=0.5, loc=-a, scale=2.0 * a)
    if kind == "trapezoidal":
        assert beta is not None, "a trapezoidal distribution has beta (the reader requires it)"
        return _stats().trapezoid(0.5 * (1.0 - beta), 0.5 * (1.0 + beta), loc=-a, scale=2.0 * a)
    if kind == "arcsine":
        return _stats().arcsine(loc=-a, scale=2.0 * a)
    raise ValueError(f"not a bounded family: {kind}")


def truncated_normal(sigma: float, limit: float):
    """Normal N(0, sigma²) truncated to [-limit, limit] (frozen scipy.stats.truncnorm)."""
    c = limit / sigma
    return _stats().truncnorm(-c, c, loc=0.0, scale=sigma)


def truncated_normal_std(sigma: float, limit: float) -> float:
    """Standard deviation of N(0, sigma²) truncated to [-limit, limit].

    u² = sigma² (1 - 2 c phi(c) / (2 Phi(c) - 1)), c = limit / sigma (the moments of
    the doubly truncated normal).

    >>> round(truncated_normal_std(1.0, 50.0), 12)
    1.0
    """
    c = limit / sigma
    mass = float(special.erf(c / math.sqrt(2.0)))  # 2 Phi(c) - 1 without cancellation
    phi = math.exp(-0.5 * c * c) / math.sqrt(2.0 * math.pi)
    return sigma * math.sqrt(1.0 - 2.0 * c * phi / mass)


def lognormal(u_relative: float, reading: float = 1.0):
    """Deviation e = R (F - 1) of a multiplicative factor F with E[F] = 1, u(F) = u_relative.

    ln F ~ N(-s²/2, s²), s² = ln(1 + u_relative²); e has mean 0, standard deviation
    R u_relative and is bounded below by -R (the quantity stays positive).

    >>> d = lognormal(0.1, 2.0)
    >>> round(float(d.mean()), 12) + 0.0, round(float(d.std()), 12)
    (0.0, 0.2)
    """
    s = math.sqrt(math.log1p(u_relative * u_relative))
    return _stats().lognorm(s, loc=-reading, scale=reading * math.exp(-0.5 * s * s))


def make_distribution(kind: str, u: float, *, beta: float | None = None, dof: float = math.inf):
    """Frozen scipy.stats distribution of mean 0 and standard deviation ``u``.

    ``kind`` is ``normal``, ``t`` (with ``dof`` > 2), ``rectangular``, ``triangular``,
    ``trapezoidal`` (with ``beta``), ``arcsine`` or ``lognormal`` (``u`` relative, about
    a reading of 1).  A truncated normal is made by :func:`truncated_normal`.

    >>> round(float(make_distribution("rectangular", 1.0).std()), 12)
    1.0
    >>> round(float(make_distribution("t", 1.0, dof=5).std()), 12)
    1.0
    """
    if kind == "normal" and math.isinf(dof):
        return _stats().norm(loc=0.0, scale=u)
    if kind in ("normal", "t"):
        return _stats().t(dof, loc=0.0, scale=u * math.sqrt((dof - 2.0) / dof))
    if kind == "lognormal":
        return lognormal(u)
    return bounded(kind, u / u_per_half_width(kind, beta), beta)


def coverage_factor(coverage_probability: float = 0.95, dof=math.inf,
                    truncate_dof: bool = False):
    """Coverage factor k_p for a coverage probability p [-].

    ``k_p = z_{(1+p)/2}`` (standard normal quantile) for infinite degrees of
    freedom, else ``k_p = t_{(1+p)/2}(nu)`` (Student t quantile), JCGM 100:2008,
    G.3.2 and G.4.1.  With ``truncate_dof`` the degrees of freedom are first
    truncated to the next lower integer, as JCGM 100:2008 G.4.1 allows for use
    with its Table G.2; otherwise non-integer ``nu`` is used as it stands.

    Parameters
    ----------
    coverage_probability : float
        p in (0, 1).
    dof : float or array_like
        Degrees of freedom nu (``inf`` for the normal distribution).
    truncate_dof : bool
        Truncate finite ``nu`` to an integer before taking the quantile.

    Returns
    -------
    float or ndarray
        k_p [-], of the shape of ``dof``.

    Examples
    --------
    >>> round(coverage_factor(0.95), 2)        # normal, JCGM 100:2008 G.1.3
    1.96
    >>> round(coverage_factor(0.99, 16.7, truncate_dof=True), 2)   # t_99(16)
    2.92
    >>> round(coverage_factor(0.95, 10), 2)    # t_95(10)
    2.23
    """
    p = float(coverage_probability)
    if not 0.0 < p < 1.0:
        raise ValueError(f"coverage probability must lie in (0, 1), got {p}")
    nu = np.asarray(dof, dtype=float)
    if np.any(~(nu > 0)):
        raise ValueError("degrees of freedom must be positive (inf for a known standard uncertainty)")
    finite = np.isfinite(nu)
    if truncate_dof:
        nu = np.where(finite, np.floor(nu), nu)
        if np.any(nu < 1):
            raise ValueError("truncated degrees of freedom below 1")
    q = 0.5 * (1.0 + p)
    k = np.where(finite, _stats().t.ppf(q, np.where(finite, nu, 1.0)), _stats().norm.ppf(q))
    return float(k) if k.ndim == 0 else k
