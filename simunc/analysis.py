"""One analysis of a study: set point, Monte Carlo, conformity, Sobol, ranking.

This is the Python API behind ``simunc run``::

    import simunc
    study = simunc.load_study("studies/demo.toml")
    result = simunc.run(study, trials=100_000, seed=3)
    result.statistics        # pandas DataFrame
    result.sobol["reynolds_ratio"]
    result.ranking
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
import pandas as pd

from .inputs import UncertainInput, build_inputs
from .lpu import lpu, validate
from .model import SimilitudeModel, describe_output
from .propagate import Problem, monte_carlo, summarize
from .sensitivity import sobol_indices
from .setpoint import SetPoint, build_model, solve
from .envelope import Envelope, envelope
from .errors import StudyError
from .study import Study
from .testplan import TestPlan, plan


@dataclass
class Result:
    """Everything one run produces (SI floats, pandas tables)."""

    study: Study
    setpoint: SetPoint
    inputs: list[UncertainInput]
    trials: int
    seed: int
    statistics: pd.DataFrame
    conformity: dict[str, float]
    sobol: dict[str, pd.DataFrame]
    ranking: pd.DataFrame
    warnings: list
    input_values: np.ndarray
    output_values: dict[str, np.ndarray]
    envelope: Envelope | None = None
    test_plan: TestPlan | None = None
    pi_groups: list | None = None
    lpu: object | None = None          # simunc.lpu.LPUResult
    validation: pd.DataFrame | None = None

    @property
    def coverage_probability(self) -> float:
        return self.study.run.coverage_probability

    def samples(self) -> pd.DataFrame:
        """The trials: input deviations (SI, columns ``input: <name>``) and every output."""
        cols = {f"input: {i.name}": self.input_values[:, j] for j, i in enumerate(self.inputs)}
        cols.update({k: np.asarray(v) for k, v in self.output_values.items()})
        return pd.DataFrame(cols)


def similitude_problem(model: SimilitudeModel, setpoint: SetPoint,
                       inputs: list[UncertainInput]) -> Problem:
    """The similitude model around a set point as a :class:`Problem` of its inputs.

    Inputs acting on the same target add up.
    """
    nominal = dict(setpoint.nominal)

    def func(x):
        deviations: dict[str, np.ndarray] = {}
        for inp in inputs:
            v = x[inp.name]
            deviations[inp.target] = deviations[inp.target] + v if inp.target in deviations else v
        return model({**nominal, **deviations})

    return Problem([i.name for i in inputs], [i.distribution for i in inputs], func)


def conformity(y: dict[str, np.ndarray], study: Study) -> dict[str, float]:
    """Probability that each matched group, and all together, lie inside their bands."""
    inside_all = np.ones(len(next(iter(y.values()))), dtype=bool)
    out = {}
    for band in study.bands:
        inside = np.abs(y[band.output] - band.centre) <= band.tolerance
        out[band.group] = float(np.mean(inside))
        inside_all &= inside
    out["all"] = float(np.mean(inside_all))
    return out


def output_order(keys) -> list[str]:
    """Group comparisons first, then model and full-scale groups, then flow quantities."""
    def rank(k):
        return (0 if k.endswith(("_ratio", "_difference")) else 1 if k.endswith("_model") else
                2 if k.endswith("_full_scale") else 3)
    return sorted(keys, key=lambda k: (rank(k), list(keys).index(k)))


def _statistics(y, setpoint: SetPoint, p: float) -> pd.DataFrame:
    rows = []
    for key in output_order(list(y)):
        unit, label = describe_output(key)
        s = summarize(y[key], p)
        rows.append({"output": key, "unit": unit, "nominal": setpoint.outputs[key], **s,
                     "label": label})
    return pd.DataFrame(rows).set_index("output")


def _ranking(sobol: dict[str, pd.DataFrame], stats: pd.DataFrame, study: Study,
             inputs: list[UncertainInput]) -> pd.DataFrame:
    """Rank inputs by the share of a tolerance band their variance takes.

    For each matched group, ``band_share = 2 sqrt(ST var(y)) / tolerance``:
    the expanded (k = 2) uncertainty the input brings, as a fraction of the
    band half-width.  Inputs are ranked by their largest share.
    """
    rows = []
    for inp in inputs:
        row = {"input": inp.name, "perturbs": inp.target}
        shares = []
        for band in study.bands:
            st = float(max(sobol[band.output].loc[inp.name, "ST"], 0.0))
            u = float(stats.loc[band.output, "standard_uncertainty"])
            share = 2.0 * np.sqrt(st) * u / band.tolerance
            row[f"ST_{band.output}"] = st
            row[f"band_share_{band.group}"] = share
            shares.append(share)
        row["largest_band_share"] = max(shares) if shares else 0.0
        rows.append(row)
    if not rows:
        return pd.DataFrame(columns=["input", "perturbs", "largest_band_share", "rank"]).set_index("input")
    table = pd.DataFrame(rows).sort_values("largest_band_share", ascending=False)
    table["rank"] = np.arange(1, len(table) + 1)
    return table.set_index("input")


#: Largest memory the trials may take [bytes]; chunked propagation comes with the Monte Carlo engine.
MEMORY_LIMIT = 12 * 2**30


def check_trials(y: dict[str, np.ndarray], model: SimilitudeModel) -> list[str]:
    """Refuse trials outside the model; return warnings for trials at its edge.

    Raises
    ------
    StudyError
        When some trials give non-finite or non-physical values (the inputs'
        sizes are too large for the model), or leave the fluid model.
    """
    n = len(next(iter(y.values())))
    bad = np.zeros(n, dtype=bool)
    for v in y.values():
        bad |= ~np.isfinite(v)
    reasons = [f"{np.count_nonzero(bad)} with non-finite values (e.g. a static pressure above the "
               "stagnation pressure)"] if bad.any() else []
    for key in ("model_length", "static_pressure", "static_temperature", "density", "viscosity",
                "speed"):
        neg = np.asarray(y[key]) <= 0.0
        if neg.any():
            reasons.append(f"{np.count_nonzero(neg)} with {key.replace('_', ' ')} <= 0")
    if not reasons:
        why = model.fluid.check_state(y["static_pressure"], y["static_temperature"])
        if why:
            reasons.append(f"some outside the {model.fluid.name} model ({why})")
    if reasons:
        raise StudyError("uncertain", f"sizes that make trials non-physical ({'; '.join(reasons)} "
                         f"of {n})", "input sizes small enough that every trial is a physical state")
    warn = []
    if model.kind == "gas":
        sonic = np.count_nonzero(np.asarray(y["mach_model"]) >= 1.0)
        if sonic:
            warn.append(f"{sonic} of {n} trials ({100 * sonic / n:.3g} %) reach a test-section Mach "
                        "number of 1 or more, where the subsonic set-point relations stop holding.")
    return warn


def run(study: Study, trials: int | None = None, seed: int | None = None) -> Result:
    """Solve the set point and propagate the study's uncertain inputs.

    Parameters
    ----------
    study : Study
        From :func:`simunc.load_study`.
    trials, seed : int, optional
        Override ``run.trials`` and ``run.seed``.
    """
    settings = replace(study.run, **{k: v for k, v in (("trials", trials), ("seed", seed))
                                     if v is not None})
    study = replace(study, run=settings)
    setpoint = solve(study)
    model = build_model(study, next(f for f in study.facility.fluids if f.name == setpoint.fluid))
    inputs = build_inputs(study.inputs, setpoint)
    problem = similitude_problem(model, setpoint, inputs)
    width = len(inputs) + len(model(setpoint.nominal))
    if settings.trials * width * 8 * 3 > MEMORY_LIMIT:
        raise StudyError("run.trials", settings.trials, f"at most about "
                         f"{MEMORY_LIMIT // (width * 24):.3g} trials for this study on this version "
                         "(it keeps every trial in memory)")
    x, y = monte_carlo(problem, settings.trials, settings.seed)
    warnings = check_trials(y, model)
    if not setpoint.feasible:
        warnings.append("The set point is not achievable as stated: it violates a facility limit or "
                        "misses a group. Do not run it as it stands; see the set-point section.")
    stats = _statistics(y, setpoint, settings.coverage_probability)
    conf = conformity(y, study)
    outputs = [b.output for b in study.bands]
    sobol = sobol_indices(problem, outputs, settings.sobol_base_samples, settings.seed) if inputs else {
        o: pd.DataFrame(columns=["S1", "S1_conf", "ST", "ST_conf"]) for o in outputs}
    ranking = _ranking(sobol, stats, study, inputs)
    pis = list(study.dimensional_analysis.groups) if study.dimensional_analysis else None
    guf = validation = None
    if inputs:
        varying = [o for o in stats.index if stats.loc[o, "standard_uncertainty"] > 0.0]
        guf = lpu(problem, varying, coverage_probability=settings.coverage_probability)
        validation = validate(guf, stats.loc[varying], n_digits=2)
    return Result(study, setpoint, inputs, settings.trials, settings.seed, stats, conf, sobol,
                  ranking, warnings, x, y, envelope(study, model, setpoint), plan(study, model, setpoint),
                  pis, guf, validation)
