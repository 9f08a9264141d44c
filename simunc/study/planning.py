"""Study keys of the decision part: requirements, costs, sweeps, sensitivity options.

Parsed once at load, like the rest of the study (:mod:`simunc.study.readers`), into
frozen dataclasses holding SI floats.  The analyses that use them live in
:mod:`simunc.decisions.design` (tolerance sweeps, "control this more tightly") and
:mod:`simunc.decisions.allocation` (the requirement solver and the allocation).

A *tolerance scale* s of an input multiplies every drawn deviation of that
input: its distribution keeps its shape and its standard uncertainty becomes
s u.  A cost model is written against the expanded uncertainty U = 2 u (k = 2) of the input;
a grade states its size as its datasheet does (any size form of an input).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import replace
from typing import Any, cast

from simunc.errors import GIVEN_LIMIT, StudyError, plain
from simunc.study.catalogue import EXTRAPOLATED_OUTPUT
from simunc.study.keys import (
    COST_KEYS,
    DESIGN_KEYS,
    GRADE_KEYS,
    REQUIREMENT_KEYS,
    SENSITIVITY_KEYS,
    SWEEP_KEYS,
)
from simunc.study.schema import (
    REQUIREMENT_KINDS,
    UNCONTROLLED_TARGETS,
    CostModel,
    DesignSettings,
    Requirement,
    RequirementKind,
    SensitivitySettings,
    ShapleyMode,
    Spacing,
    Sweep,
)
from simunc.study.table import Table, check_finite
from simunc.study.written import statement
from simunc.units import parse, written_unit


def _fraction(t: Table, name: str, what: str) -> float:
    return t.number(name, low=0.0, high=1.0, low_open=True, high_open=True, allow_percent=True,
                    what=what)


def requirement(data: Any, index: int, bands, outputs, extrapolated: bool = False
                ) -> Requirement:
    """One ``[[requirement]]`` table (docs/study-file.md); ``extrapolated``: whether the study
    can extrapolate its drag to full scale (a scale effect on the drag), so that
    :data:`~simunc.study.catalogue.EXTRAPOLATED_OUTPUT` may be limited."""
    t = Table(data, f"requirement[{index}]", REQUIREMENT_KEYS)
    kind = cast(RequirementKind, t.exclusive(REQUIREMENT_KINDS))  # required: one of them
    groups = {b.group: b for b in bands}
    if t.has("output") and t.has("group"):
        raise StudyError(t.key("group"), t.data["group"], "either output or group, not both")
    output = None
    if t.data.get("output") == EXTRAPOLATED_OUTPUT:
        if not extrapolated:
            raise StudyError(t.key("output"), repr(EXTRAPOLATED_OUTPUT), "a study with a scale "
                             "effect on the drag ([measurement.scale_effect]) to extrapolate")
        if kind != "expanded_uncertainty":
            raise StudyError(t.key(kind), t.data[kind], f"expanded_uncertainty on "
                             f"{EXTRAPOLATED_OUTPUT} (the extrapolation's U about the full-scale "
                             "drag)")
        output = EXTRAPOLATED_OUTPUT
    elif t.has("group"):
        g = t.choice("group", {k: k for k in groups})
        output = groups[g].output
    elif t.has("output"):
        raw = t.data["output"]
        coefficient = isinstance(raw, str) and ("_coefficient" in raw
                                                or raw.startswith("pressure_coefficient_"))
        if coefficient and raw not in outputs:
            measured = [k for k in outputs if "coefficient" in k]
            raise StudyError(t.key("output"), repr(plain(raw, GIVEN_LIMIT)),
                             "a coefficient this study measures: " + (", ".join(measured) or
                                                                       "none"),
                             "a coefficient needs a [measurement] section with the balance "
                             "components (or the [[measurement.tap]]) that measure it")
        output = t.choice("output", {k: k for k in outputs})
    note = t.text("note", "")
    req = _requirement(t, kind, groups, output, note)
    unit = written_unit(t.data.get(kind)) if kind != "conformity" else ""
    return replace(req, text=f"{req.text} ({note})" if note else req.text, unit=unit)


def _requirement(t: Table, kind: RequirementKind, groups: dict, output, note: str) -> Requirement:
    if kind == "conformity":
        if t.has("output"):
            raise StudyError(t.key("output"), t.data["output"], "group (a matched group) or "
                             "nothing (every group) for a conformity requirement")
        chosen = (t.data["group"],) if t.has("group") else tuple(groups)
        if not chosen:
            raise StudyError(t.key("conformity"), t.data["conformity"], "a study with [match] "
                             "bands for a conformity requirement")
        p = _fraction(t, "conformity", "a probability above 0 and below 1 such as '95 %'")
        for k in ("within", "probability", "coverage_probability"):
            if t.has(k):
                raise StudyError(t.key(k), t.data[k], "no such key with conformity")
        return Requirement(t.prefix, kind, None, chosen, 0.0, False, p,
                           f"P({' and '.join(chosen)} in band) >= {t.data['conformity']}", note)
    if output is None:
        t.require("output", "the output (or group) the requirement is on")
    nominal_zero = output.endswith("_difference") or output == EXTRAPOLATED_OUTPUT
    raw = t.data[kind]
    size = parse(t.key(kind), raw, output_dimension(output), allow_relative=True)
    if size.relative and nominal_zero:
        raise StudyError(t.key(kind), raw, f"a plain number for {output} (its set-point value is "
                         "zero, so a % of it means nothing)" if output != EXTRAPOLATED_OUTPUT
                         else "counts or a coefficient value, e.g. '4 counts' or 0.0004 (the "
                         "limit is on the error of the extrapolated drag)")
    if output == EXTRAPOLATED_OUTPUT and not size.relative and size.value >= 0.01 and \
            "count" not in str(raw):
        raise StudyError(t.key(kind), raw, "a limit on the error of the extrapolated drag below "
                         "0.01 (100 counts): counts with their unit, e.g. '4 counts', or a "
                         "coefficient value such as 0.0004")
    check_finite(t.key(kind), raw, size.value)
    if size.value <= 0.0:
        raise StudyError(t.key(kind), raw, "a limit greater than zero")
    if kind == "expanded_uncertainty":
        if t.has("probability"):
            raise StudyError(t.key("probability"), t.data["probability"], "coverage_probability "
                             "with expanded_uncertainty (probability goes with within)")
        cov_p = _fraction(t, "coverage_probability", "a probability above 0 and below 1") \
            if t.has("coverage_probability") else None
        text = f"U{'' if cov_p is None else f'({cov_p:g})'} of {output} <= {raw}"
        return Requirement(t.prefix, kind, output, (), size.value, size.relative,
                           -1.0 if cov_p is None else cov_p, text, note)
    if t.has("coverage_probability"):
        raise StudyError(t.key("coverage_probability"), t.data["coverage_probability"],
                         "probability with within")
    t.require("probability", "the probability that the output stays within the limit, e.g. '95 %'")
    p = _fraction(t, "probability", "a probability above 0 and below 1 such as '95 %'")
    band = next((b for b in groups.values() if b.output == output), None)
    about = " - set-point value" if band is None else (
        "" if band.centre == 0.0 else f" - {band.centre:g}")
    return Requirement(t.prefix, kind, output, (), size.value, size.relative, p,
                       f"P(|{output}{about}| <= {raw}) >= {t.data['probability']}", note)


def output_dimension(output: str) -> str:
    """The dimension of a limit on ``output`` (a temperature limit is a difference)."""
    from simunc.study.catalogue import describe_output
    from simunc.units import DIMENSIONS
    unit = describe_output(output)[0]
    for dim, (_, label, _) in DIMENSIONS.items():
        if label == unit and dim != "temperature":  # a limit on a temperature is a difference
            return dim
    return "dimensionless"


def cost_model(t: Table, targets: tuple, read_grade: Callable[[Table], Any]
               ) -> CostModel | None:
    """``cost = {at_written, exponent}`` or ``grades = [{<a size as the datasheet states it>,
    price, name}, ...]``; ``read_grade`` reads a grade's size (the input reader's own)."""
    which = t.exclusive(("cost", "grades"), required=False)
    if which is None:
        return None
    if which == "cost":
        c = Table(t.data["cost"], t.key("cost"), COST_KEYS)
        at = c.number("at_written", low=0.0, low_open=True, what="the cost (a number above 0) at "
                      "the tolerance as written")
        b = c.number("exponent", default=1.0, low=0.0, low_open=True,
                     what="an exponent above 0 (cost grows as (U_written / U)^exponent)")
        return CostModel("power", at, b, key=t.key("cost"))
    raw = t.data["grades"]
    if not isinstance(raw, list) or not raw:
        raise StudyError(t.key("grades"), raw, "a non-empty list of {expanded_uncertainty, price} "
                         "tables (or another size form of an input, as the datasheet states it)")
    grades = []
    for j, item in enumerate(raw):
        g = Table(item, t.key(f"grades[{j}]"), GRADE_KEYS)
        spec = read_grade(g)
        price = g.number("price", low=0.0, what="a price of zero or more")
        text = statement(spec, 1.0)
        grades.append((g.text("name", text), spec, price, text))
    return CostModel("grades", grades=tuple(grades), key=t.key("grades"))


def controllable(t: Table, targets: tuple) -> bool:
    """``controllable``: default false for conditions and property models, else true."""
    return t.flag("controllable", not all(x in UNCONTROLLED_TARGETS for x in targets))


def sweep(data: Any, index: int, names: list[str]) -> Sweep:
    t = Table(data, f"sweep[{index}]", SWEEP_KEYS)
    chosen = t.names("inputs")
    if not 1 <= len(chosen) <= 2 or len(set(chosen)) != len(chosen):
        raise StudyError(t.key("inputs"), list(chosen), "one or two different input names")
    for j, n in enumerate(chosen):
        if n not in names:
            Table({f"inputs[{j}]": n}, t.prefix, (f"inputs[{j}]",)).choice(
                f"inputs[{j}]", {k: k for k in names})
    lo, hi = scale_range(t.key("scale"), t.data.get("scale", [0.1, 3.0]))
    points = t.integer("points", 15 if len(chosen) == 1 else 11, 3)
    if points > MAX_SWEEP_POINTS:
        raise StudyError(t.key("points"), points, f"at most {MAX_SWEEP_POINTS} points per input")
    spacing = cast(Spacing, t.choice("spacing", {"linear": "linear", "log": "log"},
                                     default="linear"))
    if spacing == "log" and lo <= 0.0:
        raise StudyError(t.key("scale"), [lo, hi], "a low scale above 0 with spacing = 'log'")
    return Sweep(t.prefix, tuple(chosen), (lo, hi), points, spacing)


#: Points per swept input at most (a 2-D sweep evaluates the square of it).
MAX_SWEEP_POINTS = 101
#: Grade combinations the allocation may enumerate (it costs every one).
MAX_GRADE_COMBINATIONS = 200_000


#: What one sweep point costs besides its trials, in trial evaluations (the figures and the
#: requirement checks of a point take about as long as 50 000 trials of the model).
POINT_COST = 50_000


def sweep_evaluations(sw: Sweep, trials: int) -> int:
    """Model evaluations a sweep is counted at: its points (scale 1 may be added) to the power
    of its inputs, times the design trials plus :data:`POINT_COST`.

    >>> sweep_evaluations(Sweep("sweep[0]", ("a", "b"), (0.1, 3.0), 11), 1000)
    7344000
    """
    return (sw.points + 1) ** len(sw.inputs) * (int(trials) + POINT_COST)


def check_sweep_budget(sweeps, settings: DesignSettings, option_key: str = "--points") -> None:
    """Refuse sweeps that together take more than ``design.max_sweep_evaluations`` model
    evaluations, naming the sweep that passes the limit (or ``option_key`` for a sweep given
    on the command line)."""
    total = 0
    for sw in sweeps:
        n = sweep_evaluations(sw, settings.trials)
        total += n
        if total > settings.max_sweep_evaluations:
            key = option_key if sw.key.startswith("--") else f"{sw.key}.points"
            raise StudyError(key, f"{sw.points} points per input over {len(sw.inputs)} input"
                             f"{'s' if len(sw.inputs) > 1 else ''} (with design.trials = "
                             f"{settings.trials} and the sweeps before it: {total:,} model "
                             "evaluations, each point counted as its trials + 50,000)", f"at most design.max_sweep_evaluations = "
                             f"{settings.max_sweep_evaluations:,} evaluations in all sweeps",
                             "use fewer points or sweeps, "
                             "lower design.trials, or raise design.max_sweep_evaluations")


def scale_range(key: str, raw: Any) -> tuple[float, float]:
    """``[low, high]`` tolerance scales, 0 <= low < high (0 only for linear spacing)."""
    ok = isinstance(raw, (list, tuple)) and len(raw) == 2 and all(
        isinstance(v, (int, float)) and not isinstance(v, bool) for v in raw)
    if not ok or not (0.0 <= raw[0] < raw[1] <= 1000.0):
        raise StudyError(key, raw, "two tolerance scales [low, high] with 0 <= low < high <= 1000, "
                         "e.g. [0.1, 3]")
    return float(raw[0]), float(raw[1])


def sensitivity(data: Any, names: list[str]) -> SensitivitySettings:
    t = Table(data, "sensitivity", SENSITIVITY_KEYS)
    groups = {}
    if t.has("groups"):
        raw = t.data["groups"]
        if not isinstance(raw, dict) or not raw:
            raise StudyError(t.key("groups"), raw, "a table of group name = [input names]")
        seen: dict[str, str] = {}
        for g, members in raw.items():
            key = f"{t.key('groups')}.{g}"
            if not isinstance(members, list) or not members or \
                    not all(isinstance(m, str) for m in members):
                raise StudyError(key, members, "a non-empty list of input names")
            for j, m in enumerate(members):
                if m not in names:
                    Table({f"{g}[{j}]": m}, t.key("groups"), (f"{g}[{j}]",)).choice(
                        f"{g}[{j}]", {k: k for k in names})
                if m in seen:
                    raise StudyError(key, repr(m), f"each input in one group only (already in "
                                     f"{seen[m]!r})")
                seen[m] = g
            groups[g] = tuple(members)
    shapley = t.data.get("shapley", "auto")
    if shapley not in ("auto", True, False):
        raise StudyError(t.key("shapley"), shapley, "'auto' (when inputs are correlated), true or "
                         "false")
    return SensitivitySettings(t.flag("second_order", False), groups,
                               cast(ShapleyMode, {True: "yes", False: "no"}.get(shapley, "auto")))


def design(data: Any) -> DesignSettings:
    t = Table(data, "design", DESIGN_KEYS)
    largest = t.number("largest_scale", default=100.0, low=1.0, high=1e4, low_open=True,
                       what="a tolerance scale above 1 (how far the solver may loosen an input)")
    return DesignSettings(t.integer("trials", 50_000, 1000),
                          t.integer("verify_trials", 200_000, 1000), largest,
                          t.integer("max_sweep_evaluations", 200_000_000, 1000))
