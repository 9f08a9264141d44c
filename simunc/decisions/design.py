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
(:mod:`simunc.decisions.allocation`).  :func:`sweep` scales one or two inputs over a
range; :func:`tightening` ranks the inputs by what halving their tolerance
buys.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from simunc.similitude.model import trial_problems
from simunc.uncertainty.problem import Problem
from simunc.uncertainty.sampling import InputSampler
from simunc.uncertainty.statistics import symmetric_interval

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


@dataclass
class Figures:
    """Uncertainty figures of a design sample at one scale vector."""

    scale: np.ndarray
    standard_uncertainty: dict     # output -> u
    expanded_k2: dict              # output -> 2 u
    half_length: dict              # output -> half-length of the symmetric p interval
    mean: dict                     # output -> mean
    conformity: dict               # group (and "all") -> probability
    requirements: list             # simunc.decisions.requirements.Check
    finite: bool                   # every trial a physical, subsonic state
    problems: tuple = ()           # why not (trial_problems, or trials at Ma >= 1)

    def met(self) -> bool:
        return self.finite and all(c.met for c in self.requirements)


class Design:
    """A common-random-number sample of a study's inputs.

    Parameters
    ----------
    problem : Problem
        From :func:`simunc.pipeline.similitude_problem`.
    study, setpoint
        The study (bands, requirements) and its solved set point.
    trials, seed : int
        Size of the sample and the seed it is drawn from.
    method : str
        Sampling method of :func:`simunc.uncertainty.sampling.unit_block`.
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
        self.x = InputSampler(problem.distributions, int(seed), method, correlation,
                              int(trials)).draw(0, [int(trials)])
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
        from simunc.decisions.requirements import check_all
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
        conf = {g: float(np.mean(v)) if finite else np.nan
                for g, v in self.study.inside(y).items()}
        checks = check_all(self.study.requirements, y, self.study, self.setpoint, self.p,
                           trials=self.trials, margin=margin, finite=finite)
        fig = Figures(scale, u, U2, half, mean, conf, checks, finite, tuple(problems))
        if len(self._memo) >= 64:
            self._memo.pop(next(iter(self._memo)))
        self._memo[key] = fig
        return fig
