"""A study made ready for every analysis: settings, set point, model, inputs, problem.

:func:`prepare` is stage 1 of :mod:`simunc.pipeline` and all that ``simunc check``
needs, so it lives below the pipeline and imports none of the analyses (start-up
time of ``check``; ``benchmarks/bench_startup.py``).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from simunc.errors import StudyError
from simunc.similitude.inputs import UncertainInput, build_inputs, similitude_problem
from simunc.similitude.model import SimilitudeModel, trial_problems
from simunc.similitude.setpoint import SetPoint, build_model, solve
from simunc.study.schema import InputSpec, RunSettings, Study
from simunc.uncertainty.problem import Problem
from simunc.uncertainty.sampling import normal_score_correlation


@dataclass(frozen=True, kw_only=True)
class Overrides:
    """Run settings given outside the study (command-line options, API arguments)."""

    trials: int | None = None
    seed: int | None = None


@dataclass(frozen=True, kw_only=True)
class Prepared:
    """A study made ready for every analysis: settings, set point, model, inputs, problem.

    The CLI, the Python API, the tests and the benchmarks all start here, so the model
    they evaluate is the one ``simunc run`` evaluates.
    """

    study: Study
    settings: RunSettings             # the study's [run] with the overrides applied
    setpoint: SetPoint
    model: SimilitudeModel
    inputs: tuple[UncertainInput, ...]
    problem: Problem
    correlation: np.ndarray | None    # Pearson correlation of the inputs, [[uncertain]] order
    copula: np.ndarray | None         # normal-score correlation that reproduces it (sampling)


def prepare(study: Study, overrides: Overrides | None = None,
            setpoint: SetPoint | None = None) -> Prepared:
    """Stage 1: solve the set point, build the model there and the inputs around it.

    Parameters
    ----------
    study : Study
        From :func:`simunc.load_study`.
    overrides : Overrides, optional
        Trials and seed replacing the study's ``[run]`` values.
    setpoint : SetPoint, optional
        The set point of this study already solved (a test matrix solves each distinct
        condition once); solved here when not given.
    """
    o = overrides or Overrides()
    changes: dict[str, Any] = {k: v for k, v in (("trials", o.trials), ("seed", o.seed))
                               if v is not None}
    settings = replace(study.run, **changes)
    with np.errstate(all="ignore"):  # states outside a formula's range are refused, not warned
        given = setpoint is not None
        if setpoint is None:
            setpoint = solve(study)
        model = build_model(study, next(f for f in study.facility.fluids
                                        if f.name == setpoint.fluid))
        if given:  # the state as solved, the outputs of this study's model there
            setpoint = replace(setpoint, outputs={
                k: float(np.asarray(v)) for k, v in model(setpoint.nominal).items()})
        inputs = tuple(build_inputs(study.inputs, setpoint))
    pearson = study.correlation.matrix if study.correlation else None
    copula = None
    if pearson is not None:
        try:
            copula = normal_score_correlation(pearson, [i.distribution for i in inputs])
        except ValueError as exc:
            raise StudyError("correlations", "the pairs given", "coefficients the inputs' "
                             f"distributions can have together ({exc})") from exc
    prep = Prepared(study=study, settings=settings, setpoint=setpoint, model=model, inputs=inputs,
                    problem=similitude_problem(model, setpoint, list(inputs)),
                    correlation=pearson, copula=copula)
    require_extremes(prep)
    return prep


#: Tail probability at which every input alone must still give physical trials: a run of
#: 10^6 trials reaches it about once per tail (the Sobol and Shapley samples stay inside it).
EXTREME_TAIL = 1e-6


def size_key(spec: InputSpec) -> str:
    """The study key of an input's size as written, e.g. ``uncertain[2].standard_uncertainty``."""
    kind: str = spec.size_kind
    if kind == "type_a" and not spec.text.startswith("n = "):
        kind = "readings"  # a Type A evaluation written as the readings themselves
    return f"{spec.key}.{kind}"


def require_extremes(prep: Prepared) -> None:
    """Refuse an input whose deviation alone, at its :data:`EXTREME_TAIL` or
    1 - :data:`EXTREME_TAIL` quantile (the others at their nominal values), makes the model
    leave physical states (:func:`~simunc.similitude.model.trial_problems`): the run would meet
    such trials.  One vectorized evaluation of the model: a nominal row and two rows per input.
    """
    d = len(prep.inputs)
    if not d:
        return
    x = np.zeros((2 * d + 1, d))
    with np.errstate(all="ignore"):
        for j, dist in enumerate(prep.problem.distributions):
            x[1 + 2 * j: 3 + 2 * j, j] = dist.ppf(np.array([EXTREME_TAIL, 1.0 - EXTREME_TAIL]))
    y = {k: np.asarray(v) for k, v in prep.problem.evaluate(x).items()}
    if trial_problems({k: v[:1] for k, v in y.items()}, prep.model):
        return  # the set point itself is not a physical state: the stages say so
    for j, inp in enumerate(prep.inputs):
        rows = slice(1 + 2 * j, 3 + 2 * j)
        reasons = trial_problems({k: v[rows] for k, v in y.items()}, prep.model)
        if reasons:
            lo, hi = x[rows, j]
            raise StudyError(size_key(inp.spec), inp.spec.text, "a size small enough that every "
                             f"trial is a physical state (this input alone, at its {EXTREME_TAIL:g} "
                             f"and {1 - EXTREME_TAIL:g} quantiles ({lo:.4g}, {hi:.4g} "
                             f"{inp.unit}), gives {'; '.join(reasons)} of 2 trials)")


def non_physical(prep: Prepared, x_bad: np.ndarray, reasons: Sequence[str],
                 sample: str) -> StudyError:
    """The error for a sample with non-physical trials, naming the input at fault: the first
    whose deviation, removed from a bad trial, makes it physical (else the one furthest out in
    its own standard deviations).  ``x_bad``: input deviations of some bad trials."""
    problem, inputs = prep.problem, prep.inputs
    culprit = None
    for row in np.asarray(x_bad)[:8]:
        trial = np.tile(row, (len(inputs), 1))
        trial[np.arange(len(inputs)), np.arange(len(inputs))] = 0.0
        y = problem.evaluate(trial)
        for j in np.argsort(-np.abs(row / np.array([i.standard_uncertainty or 1.0
                                                   for i in inputs]))):
            if not trial_problems({k: np.asarray(v)[j:j + 1] for k, v in y.items()}, prep.model):
                culprit = int(j)
                break
        if culprit is not None:
            break
    if culprit is None and len(x_bad):
        z = np.abs(np.asarray(x_bad)[0] / np.array([i.standard_uncertainty or 1.0
                                                    for i in inputs]))
        culprit = int(np.argmax(z))
    what = f"{'; '.join(reasons)} of the {sample}"
    if culprit is None:
        return StudyError("uncertain", f"sizes that make trials non-physical ({what})",
                          "input sizes small enough that every trial is a physical state")
    spec = inputs[culprit].spec
    return StudyError(size_key(spec), spec.text, "a size small enough that every trial is a "
                      f"physical state ({what}; without this input's deviation the first of them "
                      "is physical)")
