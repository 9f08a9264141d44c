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

from collections.abc import Callable, Iterator, Mapping, Sequence
from contextlib import contextmanager
from dataclasses import dataclass, replace
from typing import Any, Literal, cast

import numpy as np
import pandas as pd
from threadpoolctl import threadpool_limits

from simunc.decisions.allocation import Allocation, allocate, input_limits
from simunc.decisions.coefficients import CoefficientStage, coefficient_stage
from simunc.decisions.extrapolation import Extrapolation, extrapolate
from simunc.matrix.engine import held_values
from simunc.matrix.execute import (
    MatrixResult,
    WorstPointDecision,
    checks_table,
    hardest_point,
    run_matrix,
)
from simunc.matrix.points import point_study
from simunc.decisions.design import (
    DESIGN_STREAM,
    VERIFY_STREAM,
    Design,
    Figures,
    stream_seed,
)
from simunc.decisions.requirements import Check
from simunc.decisions.sweeps import SweepResult, sweep, sweep_scales
from simunc.decisions.tightening import tightening
from simunc.errors import StudyError
from simunc.physics.dimensional import PiGroup
from simunc.similitude.envelope import Envelope, envelope
from simunc.similitude.inputs import UncertainInput, class_range_warnings
from simunc.similitude.inputs import similitude_problem as similitude_problem  # re-exported
from simunc.similitude.model import SimilitudeModel, bad_trials, trial_problems
from simunc.similitude.prepared import Overrides, Prepared, non_physical, prepare
from simunc.similitude.setpoint import SetPoint
from simunc.similitude.testplan import TestPlan, plan
from simunc.study.catalogue import CONDITION_TARGETS, describe_output
from simunc.study.planning import check_sweep_budget
from simunc.study.schema import Band, RunSettings, Study, Sweep
from simunc.study.slips import likely_slips
from simunc.uncertainty.lpu import LPUResult, lpu, validate
from simunc.uncertainty.problem import Problem
from simunc.uncertainty.propagate import PropagationResult, adaptive, propagate
from simunc.uncertainty.shapley import shapley_effects
from simunc.uncertainty.sobol import SobolResult, sobol_analysis
from simunc.uncertainty.statistics import (normal_quantile_standard_error,
                                           quantile_standard_error)

#: The optional parts of a run.
Part = Literal["requirements", "sweeps"]
#: ``progress(stage, done, total)``: called as long stages advance (the CLI shows it).
Progress = Callable[[str, int, int], None]


#: The notebook view of a :class:`Result` (``result -> HTML``), registered by the report layer
#: when it is imported (:mod:`simunc.report.notebook`); the pipeline never imports the report.
NOTEBOOK_VIEW: list[Callable[[Any], str]] = []


@dataclass(frozen=True, kw_only=True)
class Result:
    """Everything one run produces (SI floats, pandas tables); built once, at the end of
    :func:`run`, from the stages' results.  In a notebook it shows the report's verdict, key
    outputs, ranking and instrument requirements (``_repr_html_``)."""

    study: Study
    settings: RunSettings                   # the run settings used (overrides applied)
    setpoint: SetPoint
    inputs: tuple[UncertainInput, ...]
    trials: int
    seed: int
    statistics: pd.DataFrame
    conformity: dict[str, float]
    sobol: dict[str, pd.DataFrame]
    ranking: pd.DataFrame
    warnings: tuple[str, ...]
    input_values: np.ndarray | None        # kept trials (None when the run streamed)
    output_values: dict[str, np.ndarray] | None
    #: The first trials (up to :data:`PREVIEW`) of each matched group's output and each output a
    #: requirement limits, in that order: output -> values (the histograms).
    preview: dict[str, np.ndarray]
    engine: PropagationResult
    envelope: Envelope | None = None
    test_plan: TestPlan | None = None
    pi_groups: tuple[PiGroup, ...] | None = None
    lpu: LPUResult | None = None
    validation: pd.DataFrame | None = None
    components: pd.DataFrame | None = None
    sobol_result: SobolResult | None = None
    shapley: dict[str, pd.DataFrame] | None = None   # output -> DataFrame (correlated inputs)
    tightening: pd.DataFrame | None = None           # "control this more tightly"
    requirement_checks: tuple[Check, ...] | None = None  # at the written tolerances (fresh run)
    input_limits: pd.DataFrame | None = None
    allocation: Allocation | None = None
    sweeps: tuple[SweepResult, ...] = ()
    #: What was assumed where an analysis scaled a correlated input (for the report).
    correlated_scaling: tuple[str, ...] = ()
    design_trials: int = 0
    #: The measured coefficients, balance utilisation, pre-test chart and model-size trade
    #: (a study with a [measurement] section).
    coefficients: CoefficientStage | None = None
    #: The split-test plan's runs extrapolated to full scale (a study with a scale effect whose
    #: Reynolds number falls short).
    extrapolation: Extrapolation | None = None
    #: The test matrix's points, increments and slopes (a study with a [matrix] table).
    matrix: MatrixResult | None = None
    #: The requirement solver and allocation at the matrix's hardest point, the allocation
    #: checked at every point (a matrix study with requirements).
    matrix_decision: WorstPointDecision | None = None

    @property
    def coverage_probability(self) -> float:
        return self.settings.coverage_probability

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
        assert self.output_values is not None  # kept together with the input values
        cols = {f"input: {i.name}": self.input_values[:, j] for j, i in enumerate(self.inputs)}
        cols.update({k: np.asarray(v) for k, v in self.output_values.items()})
        return pd.DataFrame(cols)

    def _repr_html_(self) -> str | None:
        """The notebook view (None, the plain repr, when no view is registered)."""
        return NOTEBOOK_VIEW[0](self) if NOTEBOOK_VIEW else None


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
             inputs: list[UncertainInput],
             shapley: dict[str, pd.DataFrame] | None = None) -> pd.DataFrame:
    """Rank inputs by the share of a tolerance band their variance takes.

    For each matched group, ``band_share = 2 sqrt(s_i var(y)) / tolerance``: the expanded
    (k = 2) uncertainty the input brings, as a fraction of the band half-width, with ``s_i``
    the input's share of ``var(y)`` in ONE decomposition of the run's own variance: the
    Sobol total index ST for independent inputs, the Shapley effect when the inputs are
    correlated (an ST from an independent-input design times the variance of the correlated
    run would mix two variances).  ``variance_share_<output>`` is the s_i used.  Inputs are
    ranked by their largest share.
    """
    rows = []
    for inp in inputs:
        row: dict[str, str | float] = {"input": inp.name,
                                       "perturbs": ", ".join(t for t, _ in inp.effects)}
        shares = []
        for band in study.bands:
            st = float(max(sobol[band.output].loc[inp.name, "ST"], 0.0))
            part = st if shapley is None else float(
                max(shapley[band.output].loc[inp.name, "Shapley"], 0.0))
            u = float(stats.loc[band.output, "standard_uncertainty"])
            share = 2.0 * np.sqrt(part) * u / band.tolerance
            row[f"ST_{band.output}"] = st
            row[f"variance_share_{band.output}"] = part
            row[f"band_share_{band.group}"] = share
            shares.append(share)
        for out in study.coefficient_outputs:
            limit = study.limit_of_output(out)
            st = float(max(sobol[out].loc[inp.name, "ST"], 0.0))
            part = st if shapley is None else float(max(shapley[out].loc[inp.name, "Shapley"],
                                                        0.0))
            row[f"variance_share_{out}"] = part
            if limit:
                share = 2.0 * np.sqrt(part) * float(stats.loc[out, "standard_uncertainty"]) / limit
                row[f"limit_share_{out}"] = share
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
#: Trials kept per output for the histogram figures.
PREVIEW = 1_000_000


class TrialMonitor:
    """Per-chunk bookkeeping of a Monte Carlo run (``on_chunk`` of the engine).

    Counts the trials inside every tolerance band (conformity), refuses trials
    outside the model, counts trials at the edge of the subsonic relations and
    keeps the first :data:`PREVIEW` values of every output of :meth:`previewed` for the
    histograms.
    """

    def __init__(self, study: Study, model: SimilitudeModel, prep: Prepared | None = None,
                 total: int = 0, progress: Progress | None = None) -> None:
        self.study, self.model = study, model
        self.prep, self.total, self.progress = prep, total, progress
        self.n = 0
        self.inside = {b.group: 0 for b in study.bands} | {"all": 0}
        self.sonic = 0
        self._preview: dict[str, list[np.ndarray]] = {}
        self._kept = 0

    def previewed(self, y: Mapping[str, np.ndarray]) -> list[str]:
        """The outputs the histograms show: each matched group's output, then each output a
        requirement limits that the trials carry (not the extrapolated drag, which the
        split-test plan forms), once each in that order."""
        wanted = [b.output for b in self.study.bands] + [
            r.output for r in self.study.requirements if r.output is not None]
        return [k for k in dict.fromkeys(wanted) if k in y]

    def __call__(self, x: np.ndarray, y: Mapping[str, np.ndarray]) -> None:
        n = len(next(iter(y.values())))
        reasons = trial_problems(y, self.model)
        if reasons:
            if self.prep is not None:
                raise non_physical(self.prep, x[bad_trials(y, self.model)], reasons,
                                   f"Monte Carlo trials (a chunk of {n})")
            raise StudyError("uncertain", f"sizes that make trials non-physical ({'; '.join(reasons)}"
                             f" of a chunk of {n})", "input sizes small enough that every trial is "
                             "a physical state")
        for group, inside in self.study.inside(y).items():
            self.inside[group] += int(np.count_nonzero(inside))
        if self.model.kind == "gas":
            self.sonic += int(np.count_nonzero(np.asarray(y["mach_model"]) >= 1.0))
        if self._kept < PREVIEW:
            room = PREVIEW - self._kept
            for k in self.previewed(y):
                self._preview.setdefault(k, []).append(np.array(np.asarray(y[k])[:room]))
            self._kept += min(n, room)
        self.n += n
        if self.progress is not None:
            self.progress("Monte Carlo trials", self.n, max(self.total, self.n))

    def preview(self) -> dict[str, np.ndarray]:
        """Output -> its first trials (:meth:`previewed`), for the histograms."""
        return {k: np.concatenate(v) for k, v in self._preview.items()}

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
    """Systematic, random and condition standard uncertainty of outputs from the LPU budget.

    ``u_sys^2`` sums the contributions of inputs marked ``component = "systematic"`` (fixed
    over a test: shared by every point of a test matrix), ``u_rand^2`` those marked
    ``"random"`` (point to point) (ASME PTC 19.1 and AIAA S-071A keep the two apart);
    ``u_cond^2`` those of inputs on the full-scale condition alone (day temperature, flight
    speed: not a test error, the spread of what is reproduced). A correlation term between
    two inputs of one category counts with it; terms between categories are kept visibly as
    ``mixed_variance`` (signed, unit of y squared), so that
    ``u_sys^2 + u_rand^2 + u_cond^2 + mixed_variance = u_c^2``.
    """
    comp = {i.name: ("condition" if all(t in CONDITION_TARGETS for t in i.targets)
                     else i.component) for i in inputs}
    rows = []
    for out in outputs:
        bud = result_lpu.budget(out)
        part = {"systematic": 0.0, "random": 0.0, "condition": 0.0, "mixed": 0.0}
        for term, row in bud.iterrows():
            if row["kind"] == "correlation":
                a, b = term[2:-1].split(", ", 1)
                # a and b are input names (the budget's correlation terms are between inputs)
                key = cast(str, comp.get(a)) if comp.get(a) == comp.get(b) else "mixed"
            else:
                key = comp.get(term, "systematic")
            part[key] += float(row["contribution"])
        rows.append({"output": out, "u_systematic": float(np.sqrt(max(part["systematic"], 0.0))),
                     "u_random": float(np.sqrt(max(part["random"], 0.0))),
                     "u_condition": float(np.sqrt(max(part["condition"], 0.0))),
                     "mixed_variance": part["mixed"],
                     "u_combined": float(result_lpu.estimates.loc[out, "standard_uncertainty"])})
    return pd.DataFrame(rows).set_index("output")


#: Parts of an analysis beyond the Monte Carlo run and the Sobol ranking.
PARTS: tuple[Part, ...] = ("requirements", "sweeps")


def _physical_problem(prep: Prepared, sample: str) -> Problem:
    """``prep.problem`` refusing non-physical trials of ``sample`` with the input at fault."""
    problem, names = prep.problem, list(prep.problem.names)

    def func(x: Mapping[str, np.ndarray]) -> Mapping[str, np.ndarray]:
        y = problem.func(x)
        n = max((np.size(v) for v in x.values()), default=1)
        full = {k: np.broadcast_to(v, (n,)) for k, v in y.items()}
        reasons = trial_problems(full, prep.model)
        if reasons:
            matrix = np.column_stack([np.broadcast_to(x[k], (n,)) for k in names])
            raise non_physical(prep, matrix[bad_trials(full, prep.model)], reasons,
                               f"{sample} ({n} rows)")
        return y

    return replace(problem, func=func)


@contextmanager
def _memory(key: str, given: str, expected: str) -> Iterator[None]:
    """Turn running out of memory in one stage into an error naming that stage's key."""
    try:
        yield
    except MemoryError as exc:
        raise StudyError(key, given, f"{expected} (not enough memory for this one)") from exc


@dataclass(frozen=True, kw_only=True)
class MonteCarloStage:
    """Stage 2: the Monte Carlo run and what it gives directly."""

    engine: PropagationResult
    statistics: pd.DataFrame
    conformity: dict[str, float]
    preview: dict[str, np.ndarray]
    warnings: tuple[str, ...]


def monte_carlo_stage(prep: Prepared, progress: Progress | None = None) -> MonteCarloStage:
    """Propagate the inputs (fixed or adaptive trials), count conformity, collect warnings."""
    settings = prep.settings
    if settings.adaptive:
        key, given = "run.max_trials", f"adaptive trials up to {settings.max_trials}"
    else:
        key, given = "run.trials", f"{settings.trials} trials"
    with _memory(key, given, "fewer trials (the study's value or --trials)"):
        return _monte_carlo(prep, progress)


def _monte_carlo(prep: Prepared, progress: Progress | None) -> MonteCarloStage:
    study, settings, setpoint = prep.study, prep.settings, prep.setpoint
    problem, correlation = prep.problem, prep.copula
    monitor = TrialMonitor(study, prep.model, prep, settings.trials or 0, progress)
    p = settings.coverage_probability
    if settings.adaptive:
        if progress is not None:
            progress("adaptive Monte Carlo (batches until stable)", 0, 1)
        # Stop on the matched groups (JCGM 101, 7.9), then evaluate every output on the very same
        # trials: the adaptive run is block for block propagate(h M trials, block size M).
        probe = adaptive(problem, settings.seed, n_digits=settings.significant_digits,
                         coverage_probability=p, method=settings.sampling, correlation=correlation,
                         max_trials=settings.max_trials,
                         outputs=[b.output for b in study.bands] if prep.inputs else None)
        assert probe.adaptive is not None  # adaptive() always reports its batches
        monitor.total = probe.trials
        res = propagate(problem, probe.trials, settings.seed, method=settings.sampling,
                        correlation=correlation, keep=probe.trials <= KEEP_LIMIT,
                        coverage_probability=p, on_chunk=monitor,
                        block_size=probe.adaptive.batch_size)
        res = replace(res, adaptive=probe.adaptive)
    else:
        assert settings.trials is not None  # not adaptive: a fixed number of trials
        res = propagate(problem, settings.trials, settings.seed, method=settings.sampling,
                        correlation=correlation, keep=settings.trials <= KEEP_LIMIT,
                        coverage_probability=p, on_chunk=monitor)
    warnings = list(likely_slips(study)) + monitor.warnings() + list(setpoint.coverage) \
        + class_range_warnings(prep.inputs)
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
    return MonteCarloStage(engine=res, statistics=_engine_statistics(res, setpoint),
                           conformity=monitor.conformity(),
                           preview=monitor.preview(), warnings=tuple(warnings))


@dataclass(frozen=True, kw_only=True)
class SensitivityStage:
    """Stage 3: Sobol indices, the band-share ranking and (correlated inputs) Shapley effects."""

    sobol_result: SobolResult | None
    sobol: dict[str, pd.DataFrame]
    ranking: pd.DataFrame
    shapley: dict[str, pd.DataFrame] | None


def sensitivity_stage(prep: Prepared, mc: MonteCarloStage,
                      progress: Progress | None = None) -> SensitivityStage:
    study, settings = prep.study, prep.settings
    outputs = [b.output for b in study.bands] + list(study.coefficient_outputs)
    sens = study.sensitivity
    n, d = settings.sobol_base_samples, len(prep.inputs)
    rows = n * ((2 * d + 2) if sens.second_order else (d + 2))
    if progress is not None and prep.inputs and outputs:
        progress("Sobol indices", 0, 1)
    with _memory("run.sobol_base_samples", f"{n} base samples ({rows} model rows for {d} inputs)",
                 "a smaller power of two"):
        sobol_result = sobol_analysis(
            _physical_problem(prep, "Sobol sample"), outputs, n, settings.seed,
            second_order=sens.second_order, groups=sens.groups or None) \
            if prep.inputs and outputs else None
    sobol = sobol_result.first_total if sobol_result else {
        o: pd.DataFrame(columns=["S1", "S1_conf", "ST", "ST_conf"]) for o in outputs}
    want_shapley = sens.shapley == "yes" or (sens.shapley == "auto"
                                              and prep.correlation is not None)
    if progress is not None and prep.inputs and outputs and want_shapley:
        progress("Shapley effects", 0, 1)
    with _memory("sensitivity.shapley", f"Shapley effects of {d} inputs", "shapley = false, or "
                 "fewer inputs"):
        shapley = shapley_effects(_physical_problem(prep, "Shapley sample"), outputs,
                                  prep.copula, seed=settings.seed) \
            if prep.inputs and outputs and want_shapley else None
    ranking = _ranking(sobol, mc.statistics, study, list(prep.inputs),
                       shapley if prep.correlation is not None else None)
    return SensitivityStage(sobol_result=sobol_result, sobol=sobol, ranking=ranking,
                            shapley=shapley)


@dataclass(frozen=True, kw_only=True)
class GumStage:
    """Stage 4: the GUM framework beside the Monte Carlo (LPU, section 8 validation, split)."""

    lpu: LPUResult | None
    validation: pd.DataFrame | None
    components: pd.DataFrame | None


def gum_stage(prep: Prepared, mc: MonteCarloStage) -> GumStage:
    if not prep.inputs:
        return GumStage(lpu=None, validation=None, components=None)
    stats, inputs = mc.statistics, prep.inputs
    varying = [o for o in stats.index if stats.loc[o, "standard_uncertainty"] > 0.0]
    dof = {i.name: i.dof for i in inputs}
    finite = any(np.isfinite(v) for v in dof.values())
    # The GUM framework propagates u = U / k or s / sqrt(n) with the degrees of freedom
    # (JCGM 100:2008 G.4), not the standard deviation of the t-distribution the Monte Carlo
    # samples (JCGM 101:2008 6.4.9).
    guf = lpu(prep.problem, varying, coverage_probability=prep.settings.coverage_probability,
              dof=dof if finite and prep.correlation is None else None,
              uncertainty={i.name: i.gum_standard_uncertainty for i in inputs
                           if np.isfinite(i.dof)},
              correlation=prep.correlation)
    return GumStage(lpu=guf, validation=validate(guf, stats.loc[varying], n_digits=2,
                                                 endpoint_se=_endpoint_se(mc, varying),
                                                 trials=mc.engine.trials),
                    components=component_split(guf, inputs, [
                        o for o in [b.output for b in prep.study.bands]
                        + list(prep.study.coefficient_outputs) if o in varying]))


@dataclass(frozen=True, kw_only=True)
class DecisionStage:
    """Stage 5: tightening, requirements (limits, allocation, verification) and sweeps."""

    design_trials: int = 0
    tightening: pd.DataFrame | None = None
    requirement_checks: tuple[Check, ...] | None = None
    input_limits: pd.DataFrame | None = None
    allocation: Allocation | None = None
    sweeps: tuple[SweepResult, ...] = ()
    correlated_scaling: tuple[str, ...] = ()


def decision_stage(prep: Prepared, sens: SensitivityStage, gum: GumStage,
                   parts: Sequence[Part] = PARTS, extra_sweeps: Sequence[Sweep] = (),
                   progress: Progress | None = None) -> DecisionStage:
    """Tightening, requirements, allocation and sweeps on the design sample.

    BLAS runs on one thread here: the allocation's optimiser and surrogate reduce small
    matrices whose summation order (and so the last bits, which the bisections amplify to
    1e-5) would otherwise depend on the machine's thread count.
    """
    ds = prep.study.design
    with threadpool_limits(limits=1, user_api="blas"), _memory(
            "design.trials", f"{ds.trials} design trials and {ds.verify_trials} verification "
            "trials", "fewer design.trials or design.verify_trials"):
        return _decisions(prep, sens, gum, parts, extra_sweeps, progress)


def _decisions(prep: Prepared, sens: SensitivityStage, gum: GumStage, parts: Sequence[Part],
               extra_sweeps: Sequence[Sweep], progress: Progress | None) -> DecisionStage:
    study, setpoint, inputs = prep.study, prep.setpoint, list(prep.inputs)
    if not inputs:
        return DecisionStage()
    problem, correlation, model = prep.problem, prep.correlation, prep.model
    settings, ds = prep.settings, study.design
    design = Design(problem, study, setpoint, ds.trials, stream_seed(settings.seed, DESIGN_STREAM),
                    settings.sampling, prep.copula, model)
    _require_physical(prep, design, "design")
    if progress is not None:
        progress("tightening, requirements and allocation", 0, 1)
    removed = {}
    for out in [b.output for b in study.bands] + [o for o in study.coefficient_outputs
                                                  if study.limit_of_output(o) is not None]:
        if sens.shapley is not None:
            removed[out] = sens.shapley[out]["first_order_full"]
        elif out in sens.sobol:
            removed[out] = sens.sobol[out]["S1"]
    tight = tightening(design, removed, inputs)

    def verify_design():
        return Design(problem, study, setpoint, ds.verify_trials,
                      stream_seed(settings.seed, VERIFY_STREAM), settings.sampling, prep.copula,
                      model)

    checks = limits = allocation = None
    if "requirements" in parts and study.requirements:
        fresh = verify_design()
        written = _require_physical(prep, fresh, "verification")
        checks = tuple(written.requirements)
        limits = input_limits(design, inputs)
        if any(i.spec.cost is not None for i in inputs):
            assert gum.lpu is not None
            # the surrogate models the Monte Carlo: the sampled standard deviations
            u_mc = np.array([float(i.distribution.std()) for i in inputs])
            cov = gum.lpu.input_correlation * np.outer(u_mc, u_mc)
            needed = {r.output for r in study.requirements if r.output} | {  # groups: matched ones
                cast(Band, study.band(g)).output for r in study.requirements for g in r.groups}
            coefficients = _sensitivities(gum.lpu, problem, correlation, needed)
            try:
                allocation = allocate(design, inputs, coefficients, cov, verify_design)
            except ValueError as exc:  # refused at load already; kept for a Study built in code
                key = next((i.spec.cost.key for i in inputs if i.spec.cost is not None),
                           "requirement")
                raise StudyError(key, str(exc), "fewer grade combinations") from exc
    sweeps: tuple[SweepResult, ...] = ()
    if "sweeps" in parts:
        chosen = tuple(study.sweeps) + tuple(extra_sweeps)
        total = sum(sweep_points(sw) for sw in chosen)
        done = [0]

        def step(i: int, n: int) -> None:
            done[0] += 1
            if progress is not None:
                progress("tolerance sweeps (points)", done[0], total)

        sweeps = tuple(sweep(design, sw.key, sw.inputs, sw.scale[0], sw.scale[1], sw.points,
                             sw.spacing, on_point=step) for sw in chosen)
    return DecisionStage(design_trials=design.trials, tightening=tight, requirement_checks=checks,
                         input_limits=limits, allocation=allocation, sweeps=sweeps,
                         correlated_scaling=_correlated_scaling(prep, allocation, sweeps))


def _correlated_scaling(prep: Prepared, allocation: Allocation | None,
                        sweeps: Sequence[SweepResult]) -> tuple[str, ...]:
    """One statement per correlated input an analysis scales: its r is kept, which assumes the
    shared part of the error scales with it."""
    if prep.correlation is None:
        return ()
    names = [i.name for i in prep.inputs]
    r = np.asarray(prep.correlation)
    scaled: dict[str, list[str]] = {n: ["the tightening ranking (halved)"] for n in names}
    if allocation is not None:
        for n, s in zip(names, allocation.scale):
            if abs(float(s) - 1.0) > 1e-12:
                scaled[n].append(f"the allocation (×{float(s):.3g})")
    for sw in sweeps:
        for n in sw.inputs:
            scaled[n].append(f"sweep {sw.key}")
    notes = []
    for j, n in enumerate(names):
        partners = [f"{names[k]} (r = {r[j, k]:.3g})" for k in range(len(names))
                    if k != j and r[j, k] != 0.0]
        if partners:
            notes.append(f"{n}, correlated with {', '.join(partners)}, is scaled by "
                         f"{', '.join(scaled[n])} with r kept: this assumes the shared part of "
                         "the error (e.g. a common calibration reference) scales with it. If the "
                         "shared part stays, write it as an input of its own acting on both "
                         "quantities (a list in perturbs) and correlate only the remainder")
    return tuple(notes)


def _endpoint_se(mc: MonteCarloStage, outputs: Sequence[str]) -> dict[str, tuple[float, float]]:
    """Standard errors of the Monte Carlo coverage-interval endpoints of each output: from the
    kept trials (large-sample quantile formula), or, when the run streamed, with the sparsity
    of a normal distribution of the same u (JCGM 101:2008 7.9 asks the endpoints to be stable
    to delta before the GUF is judged against them)."""
    p = float(mc.engine.coverage_probability)
    a = 0.5 * (1.0 - p)
    out = {}
    for k in outputs:
        y = None if mc.engine.y is None else mc.engine.y.get(k)
        if y is not None:
            out[k] = (quantile_standard_error(np.asarray(y), a),
                      quantile_standard_error(np.asarray(y), 1.0 - a))
        else:
            se = normal_quantile_standard_error(
                float(mc.statistics.loc[k, "standard_uncertainty"]), mc.engine.trials, a)
            out[k] = (se, se)
    return out


def _require_physical(prep: Prepared, design: Design, sample: str) -> Figures:
    """The figures of a design sample at the written tolerances; refused, as the main run
    refuses, when some trials are not physical states (one message naming the input at fault,
    exit 2)."""
    y = design.evaluate(design.ones())
    fig = design.figures(design.ones(), y=y)
    if not fig.finite:
        bad = bad_trials(y, prep.model)
        if not bad.size:  # only trials at Ma >= 1 (the design sample's own rule)
            bad = np.flatnonzero(np.asarray(y["mach_model"]) >= 1.0)[:16]
        raise non_physical(prep, design.x[bad], fig.problems,
                           f"{sample} trials ({design.trials}, another sample than the main run)")
    return fig


def sweep_points(sw: Sweep) -> int:
    """Points a sweep evaluates (scale 1 added when inside the range)."""
    return len(sweep_scales(sw.scale[0], sw.scale[1], sw.points, sw.spacing)) ** len(sw.inputs)


def require_samples(study: Study, trials: int | None) -> None:
    """Refuse, before anything runs, ``--samples`` for a run that will not keep its trials
    (more than :data:`KEEP_LIMIT`, or adaptive with ``run.max_trials`` above it)."""
    n = trials if trials is not None else study.run.trials
    if n is None and study.run.max_trials > KEEP_LIMIT:
        raise StudyError("--samples", f"an adaptive run of up to run.max_trials = "
                         f"{study.run.max_trials} trials", f"at most {KEEP_LIMIT} trials (fixed "
                         "trials, or run.max_trials at most that): larger runs stream and keep "
                         "no trials")
    if n is not None and n > KEEP_LIMIT:
        raise StudyError("--samples", f"{n} trials", f"at most {KEEP_LIMIT} trials (larger runs "
                         "stream and keep no trials): lower --trials or run.trials")


def _sensitivities(result_lpu: LPUResult, problem: Problem, correlation, outputs) -> pd.DataFrame:
    """GUM sensitivity coefficients of ``outputs`` (from the run's LPU where it has them)."""
    have = result_lpu.sensitivities
    missing = [o for o in outputs if o not in have.index]
    if not missing:
        return have.loc[sorted(outputs)]
    extra = lpu(problem, missing, correlation=correlation).sensitivities
    return pd.concat([have.loc[[o for o in outputs if o in have.index]], extra])


def matrix_decision_stage(prep: Prepared, mx: MatrixResult | None, parts: Sequence[Part],
                          workers: int | None, scheduler: str | None,
                          progress: Progress | None = None) -> WorstPointDecision | None:
    """The requirements met at the matrix's hardest point: that point analysed as the study
    is (Monte Carlo, sensitivity, GUM, then the requirement solver and, with costs, the
    allocation), and the allocated tolerances run again at every point of the matrix."""
    st = prep.study
    if mx is None or "requirements" not in parts or not st.requirements:
        return None
    k = hardest_point(st, mx)
    if k is None:
        return None
    assert st.matrix is not None
    point = st.matrix.points[k]
    if progress is not None:
        progress(f"requirements at the hardest matrix point ({k + 1})", 0, 1)
    pprep = prepare(point_study(st, point, held_values(st, prep.setpoint.nominal)),
                    Overrides(trials=prep.settings.trials, seed=prep.settings.seed))
    mc = monte_carlo_stage(pprep)
    sens = sensitivity_stage(pprep, mc)
    dec = decision_stage(pprep, sens, gum_stage(pprep, mc), ("requirements",))
    a = dec.allocation
    checks, derived_met = None, (0, 0)
    if a is not None and not a.message:
        again = run_matrix(st, prep.setpoint.nominal, prep.settings.seed, workers=workers,
                           scheduler=scheduler, scale=tuple(float(v) for v in a.scale),
                           progress=None if progress is None else (
                               lambda done, total: progress("matrix at the allocation", done,
                                                            total)))
        checks = checks_table(again)
        limited = [d for d in again.derived if d.limit is not None]
        derived_met = (sum(bool(d.met) for d in limited), len(limited))
    return WorstPointDecision(point=k, label=point.label, limits=dec.input_limits,
                              allocation=a, checks=checks, derived_met=derived_met)


def run(study: Study, trials: int | None = None, seed: int | None = None, *,
        parts: Sequence[Part] = PARTS, extra_sweeps: Sequence[Sweep] = (),
        prepared: Prepared | None = None, progress: Progress | None = None,
        workers: int | None = None, scheduler: str | None = None) -> Result:
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
    extra_sweeps : sequence of simunc.study.schema.Sweep
        Sweeps to run besides the study's (the ``simunc sweep`` command).
    prepared : Prepared, optional
        The result of :func:`prepare` for this study, when the caller has it already.
    progress : callable, optional
        ``progress(stage, done, total)``, called as the long stages advance.
    workers, scheduler : optional
        Where a test matrix's points run (:func:`simunc.matrix.execute.run_matrix`): local
        worker processes (default one per core; 0: in this process) or the dask scheduler at
        this address.
    """
    if "sweeps" in parts:  # refuse sizes that cannot finish before anything runs
        check_sweep_budget(tuple(study.sweeps) + tuple(extra_sweeps), study.design)
    prep = prepared or prepare(study, Overrides(trials=trials, seed=seed))
    mc = monte_carlo_stage(prep, progress)
    sens = sensitivity_stage(prep, mc, progress)
    gum = gum_stage(prep, mc)
    dec = decision_stage(prep, sens, gum, parts, extra_sweeps, progress)
    if progress is not None and prep.study.measurement is not None:
        progress("pre-test chart and model-size trade", 0, 1)
    coef = coefficient_stage(prep, mc.statistics, sens.sobol)
    study, setpoint, model = prep.study, prep.setpoint, prep.model
    test_plan = plan(study, model, setpoint)
    mx = None if study.matrix is None else run_matrix(
        study, setpoint.nominal, prep.settings.seed, workers=workers, scheduler=scheduler,
        progress=None if progress is None else (
            lambda done, total: progress("test matrix", done, total)))
    return Result(
        study=study, settings=prep.settings, setpoint=setpoint, inputs=prep.inputs,
        trials=mc.engine.trials, seed=prep.settings.seed, statistics=mc.statistics,
        conformity=mc.conformity, sobol=sens.sobol, ranking=sens.ranking,
        warnings=tuple(mc.warnings) + (coef.warnings if coef is not None else ()),
        input_values=mc.engine.x, output_values=mc.engine.y, preview=mc.preview, engine=mc.engine,
        envelope=envelope(study, model, setpoint), test_plan=test_plan,
        pi_groups=tuple(study.dimensional_analysis.groups) if study.dimensional_analysis else None,
        lpu=gum.lpu, validation=gum.validation, components=gum.components,
        sobol_result=sens.sobol_result, shapley=sens.shapley, tightening=dec.tightening,
        requirement_checks=dec.requirement_checks, input_limits=dec.input_limits,
        allocation=dec.allocation, sweeps=dec.sweeps, design_trials=dec.design_trials,
        correlated_scaling=dec.correlated_scaling, coefficients=coef,
        extrapolation=extrapolate(prep, test_plan), matrix=mx,
        matrix_decision=matrix_decision_stage(prep, mx, parts, workers, scheduler, progress))
