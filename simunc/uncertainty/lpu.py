"""GUM uncertainty framework (first-order law of propagation of uncertainty) on a Problem.

The GUM uncertainty framework (GUF) of JCGM 100:2008 replaces the model
``Y = f(X_1, ..., X_d)`` by its first-order Taylor expansion at the input
estimates (the expectations ``mu_i`` of the input distributions)::

    Y ~= y0 + sum_i c_i (X_i - mu_i),     y0 = f(mu),     c_i = df/dx_i at mu

and propagates the input covariance through it (JCGM 100:2008, 5.1.2 and
5.2.2, equations (10) and (13))::

    u_c^2(y) = sum_i c_i^2 u_i^2 + 2 sum_{i<j} c_i c_j r_ij u_i u_j.

Here the sensitivity coefficients ``c_i`` are central differences taken in ONE
vectorized evaluation of the :class:`~simunc.uncertainty.problem.Problem` (the centre
point and the ``2 d`` perturbed points stacked as rows), with steps that are a
fixed fraction of each input's standard uncertainty.  The covariance algebra
is left to the ``uncertainties`` package: the inputs become
``uncertainties.correlated_values(mu, V)`` and each output is formed as the
linear expression above from those objects.

The expanded uncertainty is ``U_p = k_p u_c`` with ``k_p`` the normal quantile
(``k = 1.96`` for ``p = 95 %``) or, when input degrees of freedom are given, the
Student-t quantile at the Welch-Satterthwaite effective degrees of freedom
(JCGM 100:2008, G.4.1).  :func:`validate` compares the GUF interval
``y0 +- U_p`` with a Monte Carlo interval (JCGM 101:2008, clause 8).

Correlations enter through the optional correlation matrix ``R`` of :func:`lpu`
(a :class:`~simunc.uncertainty.correlation.Correlation`, a matrix, a labelled DataFrame or
a mapping of pairs), which sets the input covariance ``V_ij = r_ij u_i u_j``; the Monte
Carlo engine honours the same matrix through its Gaussian copula.

References
----------
.. [1] JCGM 100:2008, Evaluation of measurement data -- Guide to the expression
   of uncertainty in measurement (GUM), clauses 5, 6 and Annex G.
.. [2] JCGM 101:2008, Evaluation of measurement data -- Supplement 1 to the GUM:
   Propagation of distributions using a Monte Carlo method, clauses 7.9 and 8.
.. [3] E. O. Lebigot, "Uncertainties: a Python package for calculations with
   uncertainties", https://pythonhosted.org/uncertainties/.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Mapping, Sequence

import numpy as np
import pandas as pd
import uncertainties

from simunc.uncertainty.correlation import Correlation
from simunc.uncertainty.distributions import coverage_factor
from simunc.uncertainty.problem import Problem
from simunc.uncertainty.statistics import numerical_tolerance

#: Central-difference step of each input, as a fraction of its standard uncertainty.
DEFAULT_STEP = 1e-2

_BUDGET_COLUMNS = ["kind", "sensitivity", "standard_uncertainty", "correlation",
                   "uncertainty_component", "contribution", "share_percent", "dof"]


# ---------------------------------------------------------------------------
# Small building blocks
# ---------------------------------------------------------------------------
def welch_satterthwaite(components, dof, combined_uncertainty: float | None = None) -> float:
    """Welch-Satterthwaite effective degrees of freedom (JCGM 100:2008, G.4.1, eq. (G.2b)).

    ``nu_eff = u_c^4 / sum_i (u_i(y)^4 / nu_i)`` with ``u_i(y) = |c_i| u(x_i)``
    the uncertainty components [unit of y] and ``nu_i`` their degrees of
    freedom (``inf`` terms drop out).  ``u_c`` defaults to
    ``sqrt(sum u_i(y)^2)`` (independent inputs); pass it when it also holds
    correlation terms among inputs of infinite degrees of freedom.

    Returns
    -------
    float
        nu_eff [-]; ``inf`` when every finite-``nu`` component is zero.

    Examples
    --------
    Two equal components with four degrees of freedom each (hand calculation:
    u_c^4 = 4, denominator 1/4 + 1/4):

    >>> welch_satterthwaite([1.0, 1.0], [4, 4])
    8.0
    >>> welch_satterthwaite([1.0, 2.0], [math.inf, math.inf])
    inf
    """
    ui = np.abs(np.asarray(components, dtype=float))
    nu = np.asarray(dof, dtype=float)
    if ui.shape != nu.shape:
        raise ValueError("components and dof differ in length")
    if np.any(~(nu > 0)):
        raise ValueError("degrees of freedom must be positive")
    var = float(np.sum(ui**2)) if combined_uncertainty is None else float(combined_uncertainty) ** 2
    finite = np.isfinite(nu)
    denominator = float(np.sum(ui[finite] ** 4 / nu[finite]))
    if denominator == 0.0:
        return math.inf
    return var**2 / denominator


def _moments(problem: Problem) -> tuple[np.ndarray, np.ndarray]:
    means = np.array([float(d.mean()) for d in problem.distributions])
    u = np.array([float(d.std()) for d in problem.distributions])
    bad = [n for n, m, s in zip(problem.names, means, u) if not (np.isfinite(m) and np.isfinite(s))]
    if bad:
        raise ValueError(f"inputs without a finite mean and standard deviation: {bad}")
    return means, u


def _steps(means: np.ndarray, u: np.ndarray, step: float) -> np.ndarray:
    """``step * u_i``; for ``u_i = 0`` (no contribution) ``step * |mu_i|``, or ``step``."""
    if not step > 0.0:
        raise ValueError(f"step must be positive, got {step}")
    fallback = np.where(means != 0.0, step * np.abs(means), step)
    return np.where(u > 0.0, step * u, fallback)


def _central_differences(problem: Problem, means: np.ndarray, h: np.ndarray,
                         outputs: Sequence[str] | None):
    d = len(means)
    x = np.tile(means, (2 * d + 1, 1))
    idx = np.arange(d)
    x[1 + idx, idx] += h
    x[1 + d + idx, idx] -= h
    y = problem.evaluate(x)  # the one vectorized call: centre, d forward, d backward
    keys = list(y) if outputs is None else list(outputs)
    missing = [k for k in keys if k not in y]
    if missing:
        raise KeyError(f"outputs not produced by the problem: {missing}")
    dx = x[1 + idx, idx] - x[1 + d + idx, idx]  # the steps actually represented in floating point
    y0 = {}
    rows = []
    for k in keys:
        v = np.asarray(y[k], dtype=float)
        bad = [problem.names[i] for i in range(d)
               if not (np.isfinite(v[1 + i]) and np.isfinite(v[1 + d + i]))]
        if not np.isfinite(v[0]) or bad:
            raise FloatingPointError(f"non-finite output {k!r} at the input means"
                                     + (f" perturbed in {bad}" if bad else ""))
        y0[k] = float(v[0])
        rows.append((v[1:1 + d] - v[1 + d:]) / dx)
    return keys, y0, np.array(rows).reshape(len(keys), d)


def sensitivity_coefficients(problem: Problem, outputs: Sequence[str] | None = None,
                             step: float = DEFAULT_STEP) -> tuple[pd.Series, pd.DataFrame]:
    """Output estimates and sensitivity coefficients by central differences.

    ``c_i = [f(mu + h_i e_i) - f(mu - h_i e_i)] / (2 h_i)`` with
    ``h_i = step * u(x_i)`` [unit of x_i] (JCGM 100:2008, 5.1.3 and 5.1.4 allow
    c_i to be obtained numerically).  The truncation error of c_i is
    ``h_i^2 f'''/6`` (relative ``~ (step u_i / L)^2 / 6`` for a curvature
    length L), the rounding error ``~ eps |y| / h_i``; relative to the
    component ``|c_i| u_i`` that is ``eps |y| / (step |c_i| u_i)``.  The
    default ``step = 0.01`` keeps both small for ``u_i / L`` up to 0.1 and
    ``|y| / (|c_i| u_i)`` up to 1e9 (errors below 1e-6 and 3e-5).  All
    ``2 d + 1`` points (centre first) go through the problem in one
    vectorized call.

    Parameters
    ----------
    problem : Problem
        Its input estimates are the distributions' means, the standard
        uncertainties their standard deviations.
    outputs : sequence of str, optional
        Outputs to differentiate (default: every output of the problem).
    step : float
        Step as a fraction of each input's standard uncertainty [-].  An
        input of zero uncertainty is stepped by ``step * |mu_i|`` (or by
        ``step`` in its own unit when ``mu_i = 0``); its contribution is zero
        anyway.

    Returns
    -------
    value : pandas.Series
        ``y0 = f(mu)`` by output [unit of y].
    coefficients : pandas.DataFrame
        ``c_i``, one row per output, one column per input [unit of y / unit of x_i].

    Examples
    --------
    >>> from scipy import stats
    >>> p = Problem(["a", "b"], [stats.norm(2.0, 0.1), stats.norm(3.0, 0.2)],
    ...             lambda x: {"y": x["a"] * x["b"]})
    >>> y0, c = sensitivity_coefficients(p)
    >>> float(y0["y"]), c.round(9).loc["y"].tolist()
    (6.0, [3.0, 2.0])
    """
    means, u = _moments(problem)
    keys, y0, c = _central_differences(problem, means, _steps(means, u, step), outputs)
    names = list(problem.names)
    return (pd.Series(y0, name="value", dtype=float),
            pd.DataFrame(c, index=pd.Index(keys, name="output"), columns=names))


def _correlation_matrix(correlation, names: Sequence[str]) -> np.ndarray:
    if correlation is None:
        return np.eye(len(names))
    return Correlation.coerce(correlation, names).matrix


def _override(values, names: Sequence[str], default: np.ndarray) -> np.ndarray:
    """Per-input values from a mapping (missing: ``default``) or a full sequence."""
    if isinstance(values, Mapping):
        unknown = set(values) - set(names)
        if unknown:
            raise ValueError(f"standard uncertainties name unknown inputs: {sorted(unknown)}")
        out = np.array([float(values.get(n, d)) for n, d in zip(names, default)])
    else:
        out = np.asarray(values, dtype=float).reshape(-1)
        if out.size != len(names):
            raise ValueError(f"{len(names)} standard uncertainties expected, got {out.size}")
    if not np.all(np.isfinite(out) & (out >= 0.0)):
        raise ValueError("standard uncertainties must be finite and not negative")
    return out


def _dof_vector(dof, names: Sequence[str]) -> np.ndarray:
    nu = np.full(len(names), math.inf)
    if dof is None:
        return nu
    if isinstance(dof, Mapping):
        pos = {n: i for i, n in enumerate(names)}
        unknown = [k for k in dof if k not in pos]
        if unknown:
            raise ValueError(f"degrees of freedom for unknown inputs: {unknown}")
        for k, v in dof.items():
            nu[pos[k]] = float(v)
    else:
        nu = np.array(dof, dtype=float)
        if nu.shape != (len(names),):
            raise ValueError(f"dof must have one value per input ({len(names)}), got {nu.shape}")
    if np.any(~(nu > 0)):
        raise ValueError("degrees of freedom must be positive (inf for a known standard uncertainty)")
    return nu


# ---------------------------------------------------------------------------
# The GUM uncertainty framework
# ---------------------------------------------------------------------------
@dataclass(frozen=True)
class LPUResult:
    """Result of :func:`lpu` (first-order GUM uncertainty framework).

    Attributes
    ----------
    inputs : list of str
    outputs : list of str
    input_means : ndarray
        Input estimates mu_i [unit of x_i].
    input_uncertainties : ndarray
        Standard uncertainties u(x_i) [unit of x_i].
    input_correlation : ndarray
        Correlation matrix R of the inputs [-].
    input_dof : ndarray
        Degrees of freedom nu_i (``inf``: known exactly).
    steps : ndarray
        Central-difference half-steps h_i [unit of x_i].
    coverage_probability : float
    estimates : pandas.DataFrame
        Index ``output``; columns ``value`` (y0), ``standard_uncertainty``
        (u_c), ``effective_dof`` (nu_eff), ``coverage_factor`` (k),
        ``expanded_uncertainty`` (U = k u_c), ``low``, ``high`` (y0 -+ U),
        ``coverage_probability``.
    sensitivities : pandas.DataFrame
        c_i: index ``output``, one column per input.
    covariance : pandas.DataFrame
        Output covariance matrix [unit of y_a x unit of y_b].
    correlation : pandas.DataFrame
        Output correlation matrix [-] (NaN off the diagonal for an output of
        zero uncertainty).
    budgets : dict of pandas.DataFrame
        Per output, see :meth:`budget`.
    """

    inputs: list
    outputs: list
    input_means: np.ndarray
    input_uncertainties: np.ndarray
    input_correlation: np.ndarray
    input_dof: np.ndarray
    steps: np.ndarray
    coverage_probability: float
    estimates: pd.DataFrame
    sensitivities: pd.DataFrame
    covariance: pd.DataFrame
    correlation: pd.DataFrame
    budgets: dict[str, pd.DataFrame]

    def budget(self, output: str) -> pd.DataFrame:
        """Uncertainty budget of one output.

        One row per input (``kind = "input"``): ``sensitivity`` c_i,
        ``standard_uncertainty`` u(x_i), ``uncertainty_component``
        u_i(y) = |c_i| u(x_i) [unit of y], ``contribution`` c_i^2 u(x_i)^2
        [unit of y squared], ``share_percent`` = 100 contribution / u_c^2,
        ``dof`` nu_i.  Then one row per correlated pair (``kind =
        "correlation"``, index ``r(a, b)``): ``correlation`` r_ab and the
        contribution 2 c_a c_b r_ab u_a u_b (may be negative, and so may its
        share).  Contributions add up to u_c^2 and shares to 100 %.
        """
        return self.budgets[output]


def lpu(problem: Problem, outputs: Sequence[str] | None = None, *, correlation=None,
        dof=None, uncertainty=None, coverage_probability: float = 0.95,
        step: float = DEFAULT_STEP, truncate_dof: bool = False) -> LPUResult:
    """First-order law of propagation of uncertainty on a problem (JCGM 100:2008, 5.1-5.2).

    ``y0 = f(mu)``; ``c_i`` by :func:`sensitivity_coefficients`; inputs
    ``X = uncertainties.correlated_values(mu, V)`` with
    ``V_ij = r_ij u_i u_j``; each output ``Y_k = y0_k + sum_i c_ki (X_i - mu_i)``
    built from those objects, so that ``uncertainties`` gives
    ``u_c^2 = c^T V c`` (JCGM 100:2008, eq. (13)) and the output covariances
    ``u(y_a, y_b) = c_a^T V c_b``.  ``U = k u_c`` with ``k`` from
    :func:`coverage_factor` at ``nu_eff`` (:func:`welch_satterthwaite`,
    JCGM 100:2008 G.4.1; ``inf`` when no degrees of freedom are given).

    Parameters
    ----------
    problem : Problem
        Vectorized model; input estimates and standard uncertainties are the
        means and standard deviations of its distributions.
    outputs : sequence of str, optional
        Outputs to evaluate (default: all).
    correlation : array_like, pandas.DataFrame or mapping, optional
        Input correlation matrix R: a ``d x d`` array in the order of
        ``problem.names``, a DataFrame labelled by input names (missing
        entries 0) or a mapping ``{(name_a, name_b): r_ab}``.  Default:
        independent inputs.
    uncertainty : mapping or sequence of float, optional
        Standard uncertainties u(x_i) to propagate instead of the distributions' standard
        deviations (missing: the standard deviation).  The GUM framework takes u = U / k or
        u = s / sqrt(n) together with nu_i (JCGM 100:2008 4.2.3, G.4); the standard
        deviation of the scaled and shifted t-distribution, u sqrt(nu / (nu - 2)), belongs to
        the Monte Carlo method (JCGM 101:2008 6.4.9) and would count the degrees of freedom
        twice once Welch-Satterthwaite and a t quantile are applied on top.
    dof : mapping or sequence of float, optional
        Degrees of freedom nu_i per input (missing: ``inf``).  The
        Welch-Satterthwaite formula assumes the finite-dof contributions are
        independent: inputs with finite nu_i may not be correlated
        (``ValueError``).
    coverage_probability : float
        p of the expanded uncertainty (default 0.95).
    step : float
        Central-difference step as a fraction of u(x_i) (default 0.01).
    truncate_dof : bool
        Truncate nu_eff to an integer before taking the t quantile.

    Returns
    -------
    LPUResult

    Examples
    --------
    JCGM 101:2008, 9.2.2: Y = X1 + X2 + X3 + X4, X_i ~ N(0, 1): u_c = 2 and
    the 95 % interval is +-3.92.

    >>> from scipy import stats
    >>> p = Problem(list("abcd"), [stats.norm()] * 4, lambda x: {"y": sum(x.values())})
    >>> r = lpu(p)
    >>> e = r.estimates.loc["y"]
    >>> round(float(e["standard_uncertainty"]), 6), round(float(e["high"]), 2)
    (2.0, 3.92)
    >>> r.budget("y")["share_percent"].round(6).tolist()
    [25.0, 25.0, 25.0, 25.0]

    Fully correlated a and b double their joint contribution (hand
    calculation: u^2 = 1 + 1 + 2 + 1 + 1 = 6):

    >>> r = lpu(p, correlation={("a", "b"): 1.0})
    >>> round(float(r.estimates.loc["y", "standard_uncertainty"]) ** 2, 9)
    6.0
    >>> r.budget("y").loc["r(a, b)", ["correlation", "contribution"]].tolist()
    [1.0, 2.0]
    """
    names = list(problem.names)
    means, u = _moments(problem)
    if uncertainty is not None:
        u = _override(uncertainty, names, u)
    r = _correlation_matrix(correlation, names)
    nu = _dof_vector(dof, names)
    finite = np.isfinite(nu)
    off = r - np.eye(len(names))
    if np.any(off[finite, :] != 0.0):
        raise ValueError("Welch-Satterthwaite (JCGM 100:2008, G.4.1) needs the inputs with finite "
                         "degrees of freedom to be uncorrelated")
    h = _steps(means, u, step)
    keys, y0, c = _central_differences(problem, means, h, outputs)

    v = r * np.outer(u, u)
    x = uncertainties.correlated_values(means, v, tags=names) if names else []
    deviations = [xi - mi for xi, mi in zip(x, means)]
    ys = []
    for k, row in zip(keys, c):
        yk = y0[k]
        for ci, dev in zip(row, deviations):
            yk = yk + float(ci) * dev
        ys.append(yk if isinstance(yk, uncertainties.UFloat) else uncertainties.ufloat(yk, 0.0))
    cov = np.array(uncertainties.covariance_matrix(ys), dtype=float).reshape(len(keys), len(keys))
    uc = np.array([y.std_dev for y in ys], dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        corr = cov / np.outer(uc, uc)
    np.fill_diagonal(corr, 1.0)

    pairs = [(i, j) for i in range(len(names)) for j in range(i + 1, len(names)) if r[i, j] != 0.0]
    budgets, nu_eff_list = {}, []
    for kk, k in enumerate(keys):
        ck = c[kk]
        comp = ck * u
        var = uc[kk] ** 2
        rows = {n: {"kind": "input", "sensitivity": ck[i], "standard_uncertainty": u[i],
                    "correlation": np.nan, "uncertainty_component": abs(comp[i]),
                    "contribution": comp[i] ** 2, "dof": nu[i]} for i, n in enumerate(names)}
        for i, j in pairs:
            rows[f"r({names[i]}, {names[j]})"] = {
                "kind": "correlation", "sensitivity": np.nan, "standard_uncertainty": np.nan,
                "correlation": r[i, j], "uncertainty_component": np.nan,
                "contribution": 2.0 * comp[i] * comp[j] * r[i, j], "dof": np.nan}
        table = pd.DataFrame.from_dict(rows, orient="index")
        table["share_percent"] = 100.0 * table["contribution"] / var if var > 0 else np.nan
        table.index.name = "term"
        budgets[k] = table[_BUDGET_COLUMNS]
        nu_eff_list.append(welch_satterthwaite(comp, nu, uc[kk]) if var > 0 else math.inf)

    nu_eff = np.array(nu_eff_list, dtype=float)
    kp = np.atleast_1d(coverage_factor(coverage_probability, nu_eff, truncate_dof))
    index = pd.Index(keys, name="output")
    value = np.array([y0[k] for k in keys])
    estimates = pd.DataFrame({"value": value, "standard_uncertainty": uc,
                              "effective_dof": nu_eff, "coverage_factor": kp,
                              "expanded_uncertainty": kp * uc, "low": value - kp * uc,
                              "high": value + kp * uc,
                              "coverage_probability": float(coverage_probability)}, index=index)
    return LPUResult(names, keys, means, u, r, nu, h, float(coverage_probability), estimates,
                     pd.DataFrame(c, index=index, columns=names),
                     pd.DataFrame(cov, index=index, columns=keys),
                     pd.DataFrame(corr, index=index, columns=keys), budgets)


# ---------------------------------------------------------------------------
# Validation against Monte Carlo (JCGM 101:2008, clause 8)
# ---------------------------------------------------------------------------
def _interval(item, p_expected: float, key: str) -> tuple[float, float]:
    if isinstance(item, Mapping) or isinstance(item, pd.Series):
        p = item.get("coverage_probability")
        if p is not None and not math.isclose(float(p), p_expected, abs_tol=1e-12):
            raise ValueError(f"{key!r}: Monte Carlo interval for p = {float(p)}, GUF for p = {p_expected}")
        return float(item["low"]), float(item["high"])
    low, high = item
    return float(low), float(high)


def validate(result: LPUResult, mc_intervals, n_digits: int = 2, *,
             uncertainty: Mapping[str, float] | None = None,
             endpoint_se: Mapping[str, tuple[float, float]] | None = None,
             trials: int | None = None) -> pd.DataFrame:
    """Validate the GUM uncertainty framework against Monte Carlo (JCGM 101:2008, 8.2).

    With the GUF interval ``y0 -+ U_p`` and the Monte Carlo probabilistically
    symmetric interval ``[y_low, y_high]`` for the same coverage probability::

        d_low  = |y0 - U_p - y_low|,     d_high = |y0 + U_p - y_high|,

    the GUF is validated when both are at most the numerical tolerance
    ``delta`` of u(y) at ``n_digits`` significant digits
    (:func:`numerical_tolerance`, JCGM 101:2008 7.9.2).

    The comparison means something only when the Monte Carlo endpoints are themselves stable
    to ``delta`` (JCGM 101:2008 7.9: twice their standard deviation at most ``delta``).
    Given ``endpoint_se`` (standard errors of ``y_low`` and ``y_high``) and ``trials``, the
    verdict is ``"validated"`` or ``"not validated"`` only when ``2 max(se) <= delta``, and
    ``"inconclusive"`` otherwise, with ``trials_needed`` = trials (2 max(se) / delta)^2 (the
    standard errors fall as 1 / sqrt(trials)).

    Parameters
    ----------
    result : LPUResult
        From :func:`lpu`.
    mc_intervals : mapping or pandas.DataFrame
        Per output either a pair ``(low, high)`` or a mapping with ``low``
        and ``high`` (as :func:`simunc.uncertainty.propagate.summarize` returns), or a
        DataFrame indexed by output with those columns (such as
        ``simunc.run(...).statistics``).  A ``coverage_probability`` given
        there must equal the GUF's.  Every output listed is validated.
    n_digits : int
        Significant decimal digits regarded as meaningful in u(y).
    uncertainty : mapping, optional
        u(y) per output for delta (default: the GUF u_c).  In the JCGM 101
        examples the GUF and Monte Carlo values agree to ``n_digits``.

    Returns
    -------
    pandas.DataFrame
        Index ``output``; columns ``value``, ``expanded_uncertainty``,
        ``guf_low``, ``guf_high``, ``mc_low``, ``mc_high``, ``d_low``,
        ``d_high``, ``delta``, ``se_low``, ``se_high``, ``spread`` = 2 max(se) [unit of y]
        (NaN without ``endpoint_se``), ``verdict`` (``validated``, ``not validated`` or
        ``inconclusive``), ``trials_needed`` (0 unless inconclusive) and ``validated``
        (bool: the verdict is ``validated``).

    Examples
    --------
    JCGM 101:2008, 9.2.3 (rectangular inputs): GUF +-3.92, Monte Carlo
    +-3.88 (from memory of JCGM 101:2008, 9.2.3); u = 2.0 gives delta = 0.05
    at two digits and 0.005 at three:

    >>> from scipy import stats
    >>> rect = stats.uniform(loc=-3**0.5, scale=2 * 3**0.5)       # u = 1
    >>> p = Problem(list("abcd"), [rect] * 4, lambda x: {"y": sum(x.values())})
    >>> v = validate(lpu(p), {"y": (-3.88, 3.88)})
    >>> v.loc["y", ["d_low", "d_high", "delta"]].round(3).tolist(), bool(v.loc["y", "validated"])
    ([0.04, 0.04, 0.05], True)
    >>> bool(validate(lpu(p), {"y": (-3.88, 3.88)}, n_digits=3).loc["y", "validated"])
    False
    """
    if isinstance(mc_intervals, pd.DataFrame):
        items = {k: row for k, row in mc_intervals.iterrows()}
    else:
        items = dict(mc_intervals)
    unknown = [k for k in items if k not in result.estimates.index]
    if unknown:
        raise KeyError(f"outputs not in the GUF result: {unknown}")
    rows = {}
    for key, item in items.items():
        low, high = _interval(item, result.coverage_probability, key)
        e = result.estimates.loc[key]
        y0, big_u = float(e["value"]), float(e["expanded_uncertainty"])
        u_delta = float(e["standard_uncertainty"]) if uncertainty is None else float(uncertainty[key])
        delta = numerical_tolerance(u_delta, n_digits)
        d_low, d_high = abs(y0 - big_u - low), abs(y0 + big_u - high)
        agree = bool(d_low <= delta and d_high <= delta)
        se_low = se_high = spread = math.nan
        verdict, needed = ("validated" if agree else "not validated"), 0
        if endpoint_se is not None and key in endpoint_se:
            se_low, se_high = (float(v) for v in endpoint_se[key])
            spread = 2.0 * max(se_low, se_high)
            if not spread <= delta:
                verdict = "inconclusive"
                needed = (int(math.ceil(trials * (spread / delta) ** 2))
                          if trials and delta > 0 else 0)
        rows[key] = {"value": y0, "expanded_uncertainty": big_u, "guf_low": y0 - big_u,
                     "guf_high": y0 + big_u, "mc_low": low, "mc_high": high, "d_low": d_low,
                     "d_high": d_high, "delta": delta, "se_low": se_low, "se_high": se_high,
                     "spread": spread, "verdict": verdict, "trials_needed": needed,
                     "validated": verdict == "validated"}
    table = pd.DataFrame.from_dict(rows, orient="index")
    table.index.name = "output"
    return table
