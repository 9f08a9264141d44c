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

from dataclasses import dataclass, field, replace

import numpy as np
import pandas as pd

from simunc.decisions.allocation import allocate, input_limits
from simunc.decisions.design import DESIGN_STREAM, VERIFY_STREAM, Design, stream_seed
from simunc.decisions.sweeps import sweep
from simunc.decisions.tightening import tightening
from simunc.errors import StudyError
from simunc.similitude.envelope import Envelope, envelope
from simunc.similitude.inputs import UncertainInput, build_inputs
from simunc.similitude.model import SimilitudeModel, trial_problems
from simunc.similitude.setpoint import SetPoint, build_model, solve
from simunc.similitude.testplan import TestPlan, plan
from simunc.spec.catalogue import describe_output
from simunc.spec.planning import check_outputs
from simunc.spec.schema import Study
from simunc.uncertainty.lpu import lpu, validate
from simunc.uncertainty.problem import Problem
from simunc.uncertainty.propagate import adaptive, propagate
from simunc.uncertainty.shapley import shapley_effects
from simunc.uncertainty.sobol import SobolResult, sobol_analysis


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
    input_values: np.ndarray | None        # kept trials (None when the run streamed)
    output_values: dict[str, np.ndarray] | None
    preview: np.ndarray                    # Reynolds-number ratio of the first trials
    engine: object                         # simunc.uncertainty.propagate.PropagationResult
    envelope: Envelope | None = None
    test_plan: TestPlan | None = None
    pi_groups: list | None = None
    lpu: object | None = None          # simunc.uncertainty.lpu.LPUResult
    validation: pd.DataFrame | None = None
    components: pd.DataFrame | None = None
    sobol_result: SobolResult | None = None
    shapley: dict | None = None             # output -> DataFrame (correlated inputs)
    tightening: pd.DataFrame | None = None  # "control this more tightly"
    requirement_checks: list | None = None  # requirements at the written tolerances (fresh run)
    input_limits: pd.DataFrame | None = None
    allocation: object | None = None        # simunc.decisions.allocation.Allocation
    sweeps: list = field(default_factory=list)
    design_trials: int = 0

    @property
    def coverage_probability(self) -> float:
        return self.study.run.coverage_probability

    def samples(self) -> pd.DataFrame:
        """The trials: input deviations (SI, columns ``input: <name>``) and every output.

        Raises
        ------
        StudyError
            When the run streamed its trials (more than :data:`KEEP_LIMIT`).
        """
        if self.input_values is None:
            raise StudyError("--samples", f"{self.trials} trials", f"at most {KEEP_LIMIT} trials "
                             "with fixed trials (larger runs stream and keep no trials)")
        cols = {f"input: {i.name}": self.input_values[:, j] for j, i in enumerate(self.inputs)}
        cols.update({k: np.asarray(v) for k, v in self.output_values.items()})
        return pd.DataFrame(cols)


def similitude_problem(model: SimilitudeModel, setpoint: SetPoint,
                       inputs: list[UncertainInput]) -> Problem:
    """The similitude model around a set point as a :class:`Problem` of its inputs.

    Inputs acting on the same target add up; an input with several targets (a shared
    systematic error) acts on each with its factor.
    """
    nominal = dict(setpoint.nominal)

    def func(x):
        deviations: dict[str, np.ndarray] = {}
        for inp in inputs:
            v = x[inp.name]
            for target, factor in inp.effects:  # a shared error acts on each of its targets
                d = v if factor == 1.0 else factor * v
                deviations[target] = deviations[target] + d if target in deviations else d
        return model({**nominal, **deviations})

    return Problem([i.name for i in inputs], [i.distribution for i in inputs], func)


def conformity(y: dict[str, np.ndarray], study: Study) -> dict[str, float]:
    """Probability that each matched group, and all together, lie inside their bands."""
    return {g: float(np.mean(v)) for g, v in study.inside(y).items()}


def output_order(keys) -> list[str]:
    """Group comparisons first, then model and full-scale groups, then flow quantities."""
    def rank(k):
        return (0 if k.endswith(("_ratio", "_difference")) else 1 if k.endswith("_model") else
                2 if k.endswith("_full_scale") else 3)
    return sorted(keys, key=lambda k: (rank(k), list(keys).index(k)))


def _ranking(sobol: dict[str, pd.DataFrame], stats: pd.DataFrame, study: Study,
             inputs: list[UncertainInput]) -> pd.DataFrame:
    """Rank inputs by the share of a tolerance band their variance takes.

    For each matched group, ``band_share = 2 sqrt(ST var(y)) / tolerance``:
    the expanded (k = 2) uncertainty the input brings, as a fraction of the
    band half-width.  Inputs are ranked by their largest share.
    """
    rows = []
    for inp in inputs:
        row = {"input": inp.name, "perturbs": ", ".join(t for t, _ in inp.effects)}
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


#: Up to this many trials every input and output value is kept (exact quantiles, samples file,
#: LPU validation on the same trials); above it the engine streams in chunks.
KEEP_LIMIT = 2_000_000
#: Trials kept for the histogram figure when the run streams.
PREVIEW = 1_000_000


class TrialMonitor:
    """Per-chunk bookkeeping of a Monte Carlo run (``on_chunk`` of the engine).

    Counts the trials inside every tolerance band (conformity), refuses trials
    outside the model, counts trials at the edge of the subsonic relations and
    keeps the first :data:`PREVIEW` values of the Reynolds-number ratio for the
    histogram.
    """

    def __init__(self, study: Study, model: SimilitudeModel) -> None:
        self.study, self.model = study, model
        self.n = 0
        self.inside = {b.group: 0 for b in study.bands} | {"all": 0}
        self.sonic = 0
        self.preview: list[np.ndarray] = []
        self._kept = 0

    def __call__(self, x: np.ndarray, y: dict[str, np.ndarray]) -> None:
        n = len(next(iter(y.values())))
        reasons = trial_problems(y, self.model)
        if reasons:
            raise StudyError("uncertain", f"sizes that make trials non-physical ({'; '.join(reasons)}"
                             f" of a chunk of {n})", "input sizes small enough that every trial is "
                             "a physical state")
        for group, inside in self.study.inside(y).items():
            self.inside[group] += int(np.count_nonzero(inside))
        if self.model.kind == "gas":
            self.sonic += int(np.count_nonzero(np.asarray(y["mach_model"]) >= 1.0))
        if self._kept < PREVIEW:
            take = np.asarray(y["reynolds_ratio"])[: PREVIEW - self._kept]
            self.preview.append(np.array(take))
            self._kept += len(take)
        self.n += n

    def conformity(self) -> dict[str, float]:
        return {g: c / self.n for g, c in self.inside.items()}

    def warnings(self) -> list[str]:
        if not self.sonic:
            return []
        return [f"{self.sonic} of {self.n} trials ({100 * self.sonic / self.n:.3g} %) reach a "
                "test-section Mach number of 1 or more, where the subsonic set-point relations stop "
                "holding."]


def _engine_statistics(res, setpoint: SetPoint) -> pd.DataFrame:
    rows = []
    for key in output_order(list(res.statistics)):
        st = res.statistics[key]
        unit, label = describe_output(key)
        rows.append({"output": key, "unit": unit, "nominal": setpoint.outputs[key], "mean": st.mean,
                     "standard_uncertainty": st.standard_uncertainty, "low": st.low,
                     "high": st.high, "shortest_low": st.shortest_low,
                     "shortest_high": st.shortest_high, "coverage_factor": st.coverage_factor,
                     "coverage_probability": st.coverage_probability, "label": label})
    return pd.DataFrame(rows).set_index("output")


def component_split(result_lpu, inputs, outputs) -> pd.DataFrame:
    """Systematic and random standard uncertainty of outputs from the LPU budget.

    ``u_sys^2`` sums the contributions of inputs marked ``component = "systematic"``
    (fixed over a test: shared by every point of a test matrix), ``u_rand^2`` those
    marked ``"random"`` (point to point); a correlation term between two inputs of
    one component counts with that component (ASME PTC 19.1 and AIAA S-071A keep the two
    apart in the same way).
    """
    comp = {i.name: i.component for i in inputs}
    rows = []
    for out in outputs:
        bud = result_lpu.budget(out)
        part = {"systematic": 0.0, "random": 0.0, "mixed": 0.0}
        for term, row in bud.iterrows():
            if row["kind"] == "correlation":
                a, b = term[2:-1].split(", ", 1)
                key = comp.get(a) if comp.get(a) == comp.get(b) else "mixed"
            else:
                key = comp.get(term, "systematic")
            part[key] += float(row["contribution"])
        rows.append({"output": out, "u_systematic": float(np.sqrt(max(part["systematic"], 0.0))),
                     "u_random": float(np.sqrt(max(part["random"], 0.0))),
                     "u_combined": float(result_lpu.estimates.loc[out, "standard_uncertainty"])})
    return pd.DataFrame(rows).set_index("output")


#: Parts of an analysis beyond the Monte Carlo run and the Sobol ranking.
PARTS = ("requirements", "sweeps")


def run(study: Study, trials: int | None = None, seed: int | None = None, *,
        parts=PARTS, extra_sweeps=()) -> Result:
    """Solve the set point, propagate the uncertain inputs, rank them, solve the requirements.

    Parameters
    ----------
    study : Study
        From :func:`simunc.load_study`.
    trials, seed : int, optional
        Override ``run.trials`` and ``run.seed``.
    parts : sequence of str
        Which of :data:`PARTS` to run when the study defines them: the requirement
        solver and allocation (``[[requirement]]``), the tolerance sweeps (``[[sweep]]``).
    extra_sweeps : sequence of simunc.spec.schema.Sweep
        Sweeps to run besides the study's (the ``simunc sweep`` command).
    """
    settings = replace(study.run, **{k: v for k, v in (("trials", trials), ("seed", seed))
                                     if v is not None})
    study = replace(study, run=settings)
    setpoint = solve(study)
    check_outputs(study, setpoint.outputs)
    model = build_model(study, next(f for f in study.facility.fluids if f.name == setpoint.fluid))
    inputs = build_inputs(study.inputs, setpoint)
    problem = similitude_problem(model, setpoint, inputs)
    monitor = TrialMonitor(study, model)
    correlation = study.correlation.matrix if study.correlation else None
    p = settings.coverage_probability
    if settings.adaptive:
        # Stop on the matched groups (JCGM 101, 7.9), then evaluate every output on the very same
        # trials: the adaptive run is block for block propagate(h M trials, block size M).
        probe = adaptive(problem, settings.seed, n_digits=settings.significant_digits,
                         coverage_probability=p, method=settings.sampling, correlation=correlation,
                         max_trials=settings.max_trials,
                         outputs=[b.output for b in study.bands] if inputs else None)
        res = propagate(problem, probe.trials, settings.seed, method=settings.sampling,
                        correlation=correlation, keep=probe.trials <= KEEP_LIMIT,
                        coverage_probability=p, on_chunk=monitor,
                        block_size=probe.adaptive.batch_size)
        res = replace(res, adaptive=probe.adaptive)
    else:
        res = propagate(problem, settings.trials, settings.seed, method=settings.sampling,
                        correlation=correlation, keep=settings.trials <= KEEP_LIMIT,
                        coverage_probability=p, on_chunk=monitor)
    warnings = monitor.warnings()
    if not setpoint.feasible:
        top = min((b.priority for b in study.bands if b.solve), default=1)
        first_ok = all(abs(setpoint.mismatch.get(b.group, 0.0)) < 1e-6 for b in study.bands
                       if b.solve and b.priority == top)
        if first_ok and all(lim.ok for lim in setpoint.limits):
            short = ", ".join(b.group for b in study.bands if b.solve and b.priority > top
                              and abs(setpoint.mismatch.get(b.group, 0.0)) >= 1e-6)
            warnings.append(f"The set point matches the priority-{top} groups inside the facility "
                            f"limits; {short} falls short: plan the extrapolation (see the "
                            "split-test plan).")
        else:
            warnings.append("The set point is not achievable as stated: it violates a facility "
                            "limit or misses a priority group. Do not run it as it stands; see the "
                            "set-point section.")
    if correlation is not None:
        warnings.append("The study correlates inputs: Sobol indices assume independent inputs, so "
                        "read the ranking with care.")
    stats = _engine_statistics(res, setpoint)
    conf = monitor.conformity()
    outputs = [b.output for b in study.bands]
    sens = study.sensitivity
    sobol_result = sobol_analysis(problem, outputs, settings.sobol_base_samples, settings.seed,
                                  second_order=sens.second_order,
                                  groups=sens.groups or None) if inputs and outputs else None
    sobol = sobol_result.first_total if sobol_result else {
        o: pd.DataFrame(columns=["S1", "S1_conf", "ST", "ST_conf"]) for o in outputs}
    ranking = _ranking(sobol, stats, study, inputs)
    want_shapley = sens.shapley == "yes" or (sens.shapley == "auto" and correlation is not None)
    shapley = shapley_effects(problem, outputs, correlation, seed=settings.seed) \
        if inputs and outputs and want_shapley else None
    pis = list(study.dimensional_analysis.groups) if study.dimensional_analysis else None
    guf = validation = components = None
    if inputs:
        varying = [o for o in stats.index if stats.loc[o, "standard_uncertainty"] > 0.0]
        dof = {i.name: i.dof for i in inputs}
        finite = any(np.isfinite(v) for v in dof.values())
        guf = lpu(problem, varying, coverage_probability=settings.coverage_probability,
                  dof=dof if finite and correlation is None else None, correlation=correlation)
        validation = validate(guf, stats.loc[varying], n_digits=2)
        components = component_split(guf, inputs, [b.output for b in study.bands
                                                    if b.output in varying])
    result = Result(study, setpoint, inputs, res.trials, settings.seed, stats, conf, sobol,
                    ranking, warnings, res.x, res.y, np.concatenate(monitor.preview), res,
                    envelope(study, model, setpoint), plan(study, model, setpoint),
                    pis, guf, validation, components, sobol_result, shapley)
    if inputs:
        _decisions(result, problem, model, correlation, parts, extra_sweeps)
    return result


def _decisions(result: Result, problem: Problem, model: SimilitudeModel, correlation, parts,
               extra_sweeps) -> None:
    """Tightening ranking, requirements (limits, allocation, verification) and sweeps."""
    study, setpoint, inputs = result.study, result.setpoint, result.inputs
    settings, ds = study.run, study.design
    design = Design(problem, study, setpoint, ds.trials, stream_seed(settings.seed, DESIGN_STREAM),
                    settings.sampling, correlation, model)
    result.design_trials = design.trials
    base = design.figures(design.ones())
    if not base.finite:
        raise StudyError("uncertain", f"sizes that make design trials non-physical "
                         f"({'; '.join(base.problems)} of {ds.trials})", "input sizes small "
                         "enough that every trial is a physical, subsonic state")
    removed = {}
    for out in (b.output for b in study.bands):
        if result.shapley is not None:
            removed[out] = result.shapley[out]["first_order_full"]
        elif out in result.sobol:
            removed[out] = result.sobol[out]["S1"]
    result.tightening = tightening(design, removed, inputs)

    def verify_design():
        return Design(problem, study, setpoint, ds.verify_trials,
                      stream_seed(settings.seed, VERIFY_STREAM), settings.sampling, correlation,
                      model)

    if "requirements" in parts and study.requirements:
        fresh = verify_design()
        result.requirement_checks = fresh.figures(fresh.ones()).requirements
        result.input_limits = input_limits(design, inputs)
        if any(i.spec.cost is not None for i in inputs):
            cov = result.lpu.input_correlation * np.outer(result.lpu.input_uncertainties,
                                                          result.lpu.input_uncertainties)
            needed = {r.output for r in study.requirements if r.output} | {
                study.band(g).output for r in study.requirements for g in r.groups}
            sens = _sensitivities(result, problem, correlation, needed)
            try:
                result.allocation = allocate(design, inputs, sens, cov, verify_design)
            except ValueError as exc:
                raise StudyError("uncertain.grades", str(exc), "fewer grade combinations") from exc
    if "sweeps" in parts:
        for sw in tuple(study.sweeps) + tuple(extra_sweeps):
            result.sweeps.append(sweep(design, sw.key, sw.inputs, sw.scale[0], sw.scale[1],
                                       sw.points, sw.spacing))


def _sensitivities(result: Result, problem: Problem, correlation, outputs) -> pd.DataFrame:
    """GUM sensitivity coefficients of ``outputs`` (from the run's LPU where it has them)."""
    have = result.lpu.sensitivities
    missing = [o for o in outputs if o not in have.index]
    if not missing:
        return have.loc[sorted(outputs)]
    extra = lpu(problem, missing, correlation=correlation).sensitivities
    return pd.concat([have.loc[[o for o in outputs if o in have.index]], extra])
