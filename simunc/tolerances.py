"""Tolerances changed by a factor, on common random numbers: sweeps and tightening.

One seeded *design sample* of input deviations (with the study's correlations)
is drawn once; the similitude problem is then evaluated on it with each input's
deviations multiplied by its tolerance scale s_i (so its distribution keeps its
shape and u_i becomes s_i u_i).  Every scale vector sees the same random
numbers, so differences between two tolerance choices are free of most of the
Monte Carlo noise (common random numbers; e.g. A. M. Law, *Simulation Modeling
and Analysis*, 5th ed., McGraw-Hill, 2015, section 11.2 (from memory of that
book)).

:func:`Design.figures` gives, at one scale vector, the standard and expanded
(k = 2) uncertainty of each matched group, the half-length of its coverage
interval, the conformity probabilities and the value of every requirement
(:mod:`simunc.requirements`).  :func:`sweep` scales one or two inputs over a
range; :func:`tightening` ranks the inputs by what halving their tolerance
buys.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from .propagate import Problem
from .sampling import copula_with_factor, correlation_factor, map_to_inputs, unit_block
from .statistics import symmetric_interval

#: Seed streams of the design sample and of the fresh verification run (offsets of the run seed
#: in a SeedSequence, so they never share draws with the main Monte Carlo run).
DESIGN_STREAM, VERIFY_STREAM = 1, 2


def stream_seed(seed: int, stream: int) -> int:
    """A 63-bit seed for one stream of a run seed (``numpy.random.SeedSequence``).

    >>> stream_seed(1, 1) != stream_seed(1, 2) and stream_seed(1, 1) == stream_seed(1, 1)
    True
    """
    return int(np.random.SeedSequence([int(seed), int(stream)]).generate_state(1, np.uint64)[0]
               >> np.uint64(1))


def trial_problems(y, model) -> list[str]:
    """Why some trials are not physical states (empty when all are).

    Non-finite values, a length, pressure, temperature, density, viscosity or speed at or
    below zero, and (with ``model``) a state outside its fluid model.
    """
    n = len(next(iter(y.values())))
    bad = np.zeros(n, dtype=bool)
    for v in y.values():
        bad |= ~np.isfinite(v)
    reasons = [f"{np.count_nonzero(bad)} with non-finite values (e.g. a static pressure above "
               "the stagnation pressure)"] if bad.any() else []
    for key in ("model_length", "static_pressure", "static_temperature", "density",
                "viscosity", "speed"):
        if key in y:
            neg = np.asarray(y[key]) <= 0.0
            if neg.any():
                reasons.append(f"{np.count_nonzero(neg)} with {key.replace('_', ' ')} <= 0")
    if not reasons and model is not None:
        why = model.fluid.check_state(y["static_pressure"], y["static_temperature"])
        if why:
            reasons.append(f"some outside the {model.fluid.name} model ({why})")
    return reasons


@dataclass
class Figures:
    """Uncertainty figures of a design sample at one scale vector."""

    scale: np.ndarray
    standard_uncertainty: dict     # output -> u
    expanded_k2: dict              # output -> 2 u
    half_length: dict              # output -> half-length of the symmetric p interval
    mean: dict                     # output -> mean
    conformity: dict               # group (and "all") -> probability
    requirements: list             # simunc.requirements.Check
    finite: bool                   # every trial a physical, subsonic state
    problems: tuple = ()           # why not (trial_problems, or trials at Ma >= 1)

    def met(self) -> bool:
        return self.finite and all(c.met for c in self.requirements)


class Design:
    """A common-random-number sample of a study's inputs.

    Parameters
    ----------
    problem : Problem
        From :func:`simunc.analysis.similitude_problem`.
    study, setpoint
        The study (bands, requirements) and its solved set point.
    trials, seed : int
        Size of the sample and the seed it is drawn from.
    method : str
        Sampling method of :func:`simunc.sampling.unit_block`.
    correlation : array_like or None
        Correlation matrix of the Gaussian copula.
    model : SimilitudeModel, optional
        For the fluid-model and Mach-number checks of :func:`trial_problems`: a scale
        vector whose trials leave the fluid model or reach Ma >= 1 (where the subsonic
        set-point relations stop holding) counts as not physical.
    """

    def __init__(self, problem: Problem, study, setpoint, trials: int, seed: int,
                 method: str = "random", correlation=None, model=None) -> None:
        self.problem, self.study, self.setpoint, self.model = problem, study, setpoint, model
        d = problem.dimension
        u = unit_block(method, int(trials), d, int(seed), 0)
        if correlation is not None:
            u = copula_with_factor(u, correlation_factor(correlation, d))
        self.x = map_to_inputs(u, problem.distributions)
        self.trials, self.seed = int(trials), int(seed)
        self.p = study.run.coverage_probability
        outs = [b.output for b in study.bands] + [r.output for r in study.requirements if r.output]
        self.outputs = list(dict.fromkeys(outs))
        # Trials at Ma >= 1 count as not physical only when the written tolerances have none
        # (otherwise the main run has already warned about them).
        self._memo: dict = {}
        self._sonic_ok = False
        if model is not None and model.kind == "gas":
            self._sonic_ok = bool(np.any(np.asarray(self.evaluate(self.ones())["mach_model"]) >= 1))

    @property
    def names(self) -> list[str]:
        return list(self.problem.names)

    def ones(self) -> np.ndarray:
        return np.ones(self.problem.dimension)

    def evaluate(self, scale) -> dict[str, np.ndarray]:
        """Outputs with input j's deviations multiplied by ``scale[j]``."""
        return self.problem.evaluate(self.x * np.asarray(scale, dtype=float))

    def figures(self, scale, margin: bool = False, y=None) -> Figures:
        """:class:`Figures` at ``scale``; ``margin`` applies the design margins to requirements.

        ``y``: the outputs at ``scale`` when the caller already has them.  Figures of the
        last few scale vectors are kept, so asking again (the written tolerances are asked
        for by every analysis) costs nothing.
        """
        from .requirements import check_all
        scale = np.array(scale, dtype=float)  # a copy: the figures keep it
        key = (scale.tobytes(), bool(margin))
        if key in self._memo:
            return self._memo[key]
        if y is None:
            y = self.evaluate(scale)
        problems = trial_problems(y, self.model)
        if self.model is not None and self.model.kind == "gas" and not problems \
                and not self._sonic_ok:
            sonic = int(np.count_nonzero(np.asarray(y["mach_model"]) >= 1.0))
            if sonic:
                problems.append(f"{sonic} at a test-section Mach number of 1 or more")
        finite = not problems
        u, U2, half, mean = {}, {}, {}, {}
        for k in self.outputs:
            v = np.asarray(y[k])
            if not finite:
                u[k] = U2[k] = half[k] = mean[k] = np.nan
                continue
            u[k] = float(np.std(v, ddof=1))
            U2[k] = 2.0 * u[k]
            lo, hi = symmetric_interval(v, self.p) if u[k] > 0 else (float(v[0]), float(v[0]))
            half[k] = 0.5 * (hi - lo)
            mean[k] = float(np.mean(v))
        conf, every = {}, np.ones(self.trials, dtype=bool)
        for band in self.study.bands:
            inside = np.abs(np.asarray(y[band.output]) - band.centre) <= band.tolerance
            conf[band.group] = float(np.mean(inside)) if finite else np.nan
            every &= inside
        conf["all"] = float(np.mean(every)) if finite else np.nan
        checks = check_all(self.study.requirements, y, self.study, self.setpoint, self.p,
                           trials=self.trials, margin=margin, finite=finite)
        fig = Figures(scale, u, U2, half, mean, conf, checks, finite, tuple(problems))
        if len(self._memo) >= 64:
            self._memo.pop(next(iter(self._memo)))
        self._memo[key] = fig
        return fig


@dataclass
class SweepResult:
    """A tolerance sweep: ``table`` has one row per point (scales, then the figures)."""

    key: str
    inputs: tuple
    scales: tuple          # one array of scales per swept input
    spacing: str
    table: pd.DataFrame
    baseline: Figures


def sweep_scales(low: float, high: float, points: int, spacing: str) -> np.ndarray:
    """Scale values of a sweep (``log`` spacing needs ``low > 0``; 1 is added when inside).

    >>> sweep_scales(0.5, 2.0, 4, "linear").tolist()
    [0.5, 1.0, 1.5, 2.0]
    """
    if spacing == "log":
        s = np.geomspace(low, high, points)
    else:
        s = np.linspace(low, high, points)
    if low <= 1.0 <= high and not np.any(np.isclose(s, 1.0)):
        s = np.sort(np.append(s, 1.0))
    return s


def _row(fig: Figures, design: Design) -> dict:
    row = {}
    for band in design.study.bands:
        row[f"U_k2_{band.output}"] = fig.expanded_k2[band.output]
        row[f"U_p_{band.output}"] = fig.half_length[band.output]
    for g, v in fig.conformity.items():
        row[f"conformity_{g}"] = v
    for c in fig.requirements:
        row[f"met_{c.key}"] = c.met
    row["physical"] = fig.finite
    return row


def sweep(design: Design, key: str, inputs, low: float, high: float, points: int,
          spacing: str = "linear") -> SweepResult:
    """Scale the tolerance of one input (a line) or two (a grid) on the design sample.

    Every other input stays as written.  Returns the expanded uncertainty
    (k = 2), the coverage half-length of every matched group, the conformity
    probabilities and whether each requirement holds, per point.
    """
    names = design.names
    idx = [names.index(n) for n in inputs]
    s = sweep_scales(low, high, points, spacing)
    grids = np.meshgrid(*([s] * len(idx)), indexing="ij")
    rows = []
    for point in zip(*(g.ravel() for g in grids)):
        scale = design.ones()
        scale[idx] = point
        fig = design.figures(scale)
        rows.append({f"scale: {n}": v for n, v in zip(inputs, point)} | _row(fig, design))
    return SweepResult(key, tuple(inputs), tuple(s for _ in idx), spacing, pd.DataFrame(rows),
                       design.figures(design.ones()))


def tightening(design: Design, variance_removed: dict[str, pd.Series], inputs) -> pd.DataFrame:
    """Rank inputs by what halving their tolerance buys (common random numbers).

    Parameters
    ----------
    design : Design
    variance_removed : dict
        Per matched-group output, a Series (by input) of the variance fraction
        removed if the input were known exactly: the first-order Sobol index
        S1 = Var(E[y | x_i]) / Var(y) for independent inputs, its dependence-aware
        counterpart with correlations.
    inputs : list of UncertainInput
        For the ``controllable`` flag and the targets.

    Returns
    -------
    DataFrame
        Index ``input``; per matched group ``variance_removed_<output>``
        [unit of y squared], ``variance_removed_percent_<output>``,
        ``U_k2_halved_<output>`` and ``delta_U_k2_<output>`` (the change of
        U = 2 u when the input's tolerance is halved); ``conformity_halved``
        and ``delta_conformity`` (all groups); ``gain_bands``, the largest
        reduction of U over a group's tolerance half-width; ``controllable``
        and ``rank`` (controllable inputs first, then by ``gain_bands``).
    """
    base = design.figures(design.ones())
    rows = []
    for j, inp in enumerate(inputs):
        scale = design.ones()
        scale[j] = 0.5
        fig = design.figures(scale)
        row = {"input": inp.name, "perturbs": ", ".join(inp.targets),
               "controllable": bool(inp.spec.controllable)}
        gains = []
        for band in design.study.bands:
            k = band.output
            var = base.standard_uncertainty[k] ** 2
            frac = float(variance_removed.get(k, pd.Series(dtype=float)).get(inp.name, np.nan))
            frac = min(max(frac, 0.0), 1.0) if np.isfinite(frac) else np.nan  # estimates
            row[f"variance_removed_{k}"] = frac * var
            row[f"variance_removed_percent_{k}"] = 100.0 * frac
            row[f"U_k2_halved_{k}"] = fig.expanded_k2[k]
            row[f"delta_U_k2_{k}"] = fig.expanded_k2[k] - base.expanded_k2[k]
            gains.append((base.expanded_k2[k] - fig.expanded_k2[k]) / band.tolerance)
        row["conformity_halved"] = fig.conformity["all"]
        row["delta_conformity"] = fig.conformity["all"] - base.conformity["all"]
        row["gain_bands"] = max(gains) if gains else 0.0
        rows.append(row)
    if not rows:
        return pd.DataFrame(columns=["input", "perturbs", "controllable", "gain_bands",
                                     "rank"]).set_index("input")
    table = pd.DataFrame(rows)
    table["_order"] = ~table["controllable"]
    table = table.sort_values(["_order", "gain_bands"], ascending=[True, False]).drop(columns="_order")
    table["rank"] = np.arange(1, len(table) + 1)
    return table.set_index("input")
