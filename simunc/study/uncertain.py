"""Readers of the uncertain inputs: ``[[uncertain]]`` tables and ``[correlations]``.

Each specification is read as a certificate or a datasheet writes it (standard or expanded
uncertainty, half-width, accuracy in % of reading + % of full scale, resolution, repeated
readings) and checked once, here, with a one-line :class:`~simunc.errors.StudyError` naming
the key; docs/study-file.md lists every key.
"""

from __future__ import annotations

import difflib
import math
import statistics
from typing import Any, cast

import numpy as np

from simunc.errors import GIVEN_LIMIT, StudyError, plain
from simunc.physics.fluids import Fluid
from simunc.study import planning
from simunc.study.catalogue import (
    TARGETS,
)
from simunc.study.keys import (
    ACCURACY_KEYS,
    CORRELATION_KEYS,
    INPUT_KEYS,
    SIZE_KEYS,
    TYPE_A_KEYS,
)
from simunc.study.schema import (
    COMPONENTS,
    DISTRIBUTIONS,
    SIZE_DISTRIBUTIONS,
    InputSpec,
    SizeKind,
)
from simunc.study.table import Table, check_finite
from simunc.uncertainty.correlation import Correlation
from simunc.uncertainty.distributions import coverage_factor, make_distribution
from simunc.units import DIMENSIONS, Parsed, parse, to_si


def _targets(t: Table, kind: str) -> tuple[str, ...]:
    """``perturbs``: one target name or a list of distinct ones, all of this facility kind."""
    raw = t.require("perturbs", "the quantity (or list of quantities) the input acts on")
    options = {k: k for k in TARGETS}
    if isinstance(raw, list):
        if not raw:
            raise StudyError(t.key("perturbs"), raw, "a quantity name or a non-empty list of them")
        names = []
        for j, item in enumerate(raw):
            sub = f"perturbs[{j}]"
            name = Table({sub: item}, t.prefix, (sub,)).choice(sub, options)
            if name in names:
                raise StudyError(t.key(sub), repr(name), "each quantity once in the list")
            names.append(name)
        keyed = [(t.key(f"perturbs[{j}]"), n) for j, n in enumerate(names)]
    else:
        names = [t.choice("perturbs", options)]
        keyed = [(t.key("perturbs"), names[0])]
    for key, name in keyed:
        if kind not in TARGETS[name].modes:
            raise StudyError(key, repr(name), f"a quantity of a {kind} facility")
    return tuple(names)


def _size(t: Table, name: str, raw: Any, targets: tuple, *, relative: bool = True,
          zero_ok: bool = False, key: str | None = None) -> Parsed:
    """A size in the targets' common dimension, or (``relative``) a fraction of each reading.

    Targets whose size is itself a fraction (no reading) take a plain number or ``%``.
    """
    key = key or t.key(name)
    dims = {TARGETS[x].dimension for x in targets}
    has_reading = [TARGETS[x].reading is not None for x in targets]
    size = parse(key, raw, TARGETS[targets[0]].dimension,
                 allow_relative=relative and any(has_reading))
    if not any(has_reading):
        size = Parsed(size.value, True)
    check_finite(key, raw, size.value)
    if size.value < 0.0 or (size.value == 0.0 and not zero_ok):
        raise StudyError(key, raw, "a size of zero or more" if zero_ok else
                         "an uncertainty greater than zero")
    if len(dims) > 1 and not size.relative:
        raise StudyError(key, raw, "a size in % of each reading (the quantities in perturbs have "
                         "different dimensions: " + ", ".join(sorted(dims)) + ")")
    return size


def _reading_dimension(target: str) -> str:
    """Dimension of a reading of the quantity (a temperature, not a temperature difference)."""
    dim = TARGETS[target].dimension
    return "temperature" if dim == "temperature_difference" else dim


def _degrees_of_freedom(t: Table) -> float:
    raw = t.data["degrees_of_freedom"]
    what = "degrees of freedom above 2 (a t-distribution with 2 or fewer has no variance), or 'inf'"
    if isinstance(raw, str) and raw.strip().lower() in ("inf", "infinity", "∞"):
        return math.inf
    if isinstance(raw, float) and math.isinf(raw) and raw > 0:
        return math.inf
    nu = t.number("degrees_of_freedom", what=what)
    if not nu > 2.0:
        raise StudyError(t.key("degrees_of_freedom"), raw, what)
    return nu


def _coverage_factor(t: Table, dist: str, beta: float | None) -> tuple[float, float, float | None]:
    """k, degrees of freedom and the coverage probability (as written) of an expanded uncertainty.

    With ``coverage_probability`` p: for a normal distribution k = t_{(1+p)/2, nu}, the
    (1+p)/2 quantile of the t-distribution with nu degrees of freedom (the normal one for
    nu = inf) (JCGM 100:2008 G.3.4); for a bounded distribution k is the (1+p)/2 quantile
    of that distribution scaled to a standard deviation of 1.
    """
    how = t.exclusive(("coverage_factor", "coverage_probability"))
    if t.has("degrees_of_freedom") and dist != "normal":
        raise StudyError(t.key("degrees_of_freedom"), t.data["degrees_of_freedom"],
                         "degrees of freedom only with a normal distribution (they make it a "
                         "t-distribution)")
    nu = _degrees_of_freedom(t) if t.has("degrees_of_freedom") else math.inf
    if how == "coverage_factor":
        k = t.number("coverage_factor", low=0.0, low_open=True, what="a coverage factor k > 0")
        return k, nu, None
    bounded = dist != "normal"
    p = t.number("coverage_probability", low=0.0, high=1.0, low_open=True, high_open=not bounded,
                 allow_percent=True, what="a probability above 0 and " + (
                     "at most 1 (100 %)" if bounded else "below 1") + ", e.g. '95 %'")
    if not bounded and not t.has("degrees_of_freedom"):
        t.require("degrees_of_freedom", "with coverage_probability: the effective degrees of "
                  "freedom of the certificate, or 'inf' for a normal distribution")
    if bounded:
        k = float(make_distribution(dist, 1.0, beta=beta).ppf(0.5 * (1.0 + p)))
    else:
        k = float(coverage_factor(p, nu))
    return k, nu, p


def _accuracy(t: Table, targets: tuple) -> tuple[Parsed, float, str, float, float]:
    """``accuracy``: limits +-(reading x R + full_scale x range + absolute); also the full-scale
    fraction and the range it is of (0 and 0 without a full_scale term)."""
    if any(TARGETS[x].reading is None for x in targets):
        raise StudyError(t.key("accuracy"), t.data["accuracy"], "an accuracy only for an "
                         "instrument quantity with a reading (this size is itself a fraction: "
                         "give half_width)")
    at = Table(t.data["accuracy"], t.key("accuracy"), ACCURACY_KEYS)

    def fraction(name: str) -> float:
        if not at.has(name):
            return 0.0
        raw = at.data[name]
        v = parse(at.key(name), raw, "dimensionless", allow_relative=True).value
        check_finite(at.key(name), raw, v)
        if v < 0.0:
            raise StudyError(at.key(name), raw, "a percentage of zero or more, e.g. '0.05 %'")
        return v

    reading, full_scale = fraction("reading"), fraction("full_scale")
    dims = {TARGETS[x].dimension for x in targets}
    words = [f"{at.data['reading']} of reading"] if at.has("reading") else []
    fixed = span = 0.0
    if at.has("full_scale"):
        at.require("range", "the instrument's full-scale range, e.g. '10 bar' or "
                   "['-1 bar', '1 bar'], needed with full_scale")
        raw = at.data["range"]
        dim = TARGETS[targets[0]].dimension
        if isinstance(raw, list):
            if len(raw) != 2:
                raise StudyError(at.key("range"), raw,
                                 "a span such as '10 bar' or a list [low, high]")
            lo, hi = (to_si(f"{at.key('range')}[{i}]", v, _reading_dimension(targets[0]))
                      for i, v in enumerate(raw))
            span = hi - lo
        else:
            span = to_si(at.key("range"), raw, dim)
        check_finite(at.key("range"), raw, span)
        if not span > 0.0:
            raise StudyError(at.key("range"), raw, "a range greater than zero (high > low)")
        fixed += full_scale * span
        words.append(f"{at.data['full_scale']} of " + (f"{raw[0]} to {raw[1]}" if isinstance(
            raw, list) else str(raw)))
    elif at.has("range"):
        raise StudyError(at.key("range"), at.data["range"], "a range only with full_scale")
    if at.has("absolute"):
        absolute = _size(at, "absolute", at.data["absolute"], targets, relative=False, zero_ok=True)
        fixed += absolute.value
        words.append(str(at.data["absolute"]))
    if fixed > 0.0 and len(dims) > 1:
        raise StudyError(at.key("full_scale" if at.has("full_scale") else "absolute"),
                         at.data.get("full_scale", at.data.get("absolute")),
                         "only a % of reading when the quantities in perturbs have different "
                         "dimensions (" + ", ".join(sorted(dims)) + ")")
    if reading == 0.0 and fixed == 0.0:
        raise StudyError(at.key("reading"), at.data or "nothing", "at least one term above zero: "
                         "reading, full_scale (with range) or absolute")
    return Parsed(reading, True), fixed, "±(" + " + ".join(words) + ")", full_scale, span


def _type_a(t: Table, size_kind: str, targets: tuple) -> tuple[Parsed, int, str]:
    """Type A evaluation: s / sqrt(n) with n readings (JCGM 100:2008 4.2; JCGM 101:2008 6.4.9)."""
    why = ("at least 4 readings: the t-distribution with n - 1 degrees of freedom has a variance "
           "only for n > 3 (JCGM 101:2008 6.4.9.4)")
    dim = _reading_dimension(targets[0])
    if size_kind == "readings":
        raw = t.data["readings"]
        if not isinstance(raw, list):
            raise StudyError(t.key("readings"), raw, "a list of repeated readings")
        if len(raw) < 4:
            raise StudyError(t.key("readings"), raw, why)
        if len({TARGETS[x].dimension for x in targets}) > 1:
            raise StudyError(t.key("readings"), raw, "readings of quantities of one dimension")
        values = []
        for j, v in enumerate(raw):
            key = f"{t.key('readings')}[{j}]"
            plain = isinstance(v, (int, float)) and not isinstance(v, bool)
            x = float(v) if plain else to_si(key, v, dim)  # a plain number is SI
            check_finite(key, v, x)
            values.append(x)
        s, n = statistics.stdev(values), len(values)
        if not s > 0.0:
            raise StudyError(t.key("readings"), raw, "readings that are not all equal (their "
                             "standard deviation is zero)")
        unit = DIMENSIONS[dim][1]
        unit = f" {unit}" if unit else ""
        text = f"{n} readings, mean {statistics.fmean(values):.9g}{unit}, s = {s:.6g}{unit}"
        return Parsed(s / math.sqrt(n), False), n, text
    at = Table(t.data["type_a"], t.key("type_a"), TYPE_A_KEYS)
    raw_n = at.require("count", "the number n of readings")
    if isinstance(raw_n, bool) or not isinstance(raw_n, int) or raw_n < 4:
        raise StudyError(at.key("count"), raw_n, "a whole number of " + why)
    sd = _size(at, "standard_deviation", at.require("standard_deviation", "the experimental "
               "standard deviation s of the readings"), targets)
    text = f"n = {raw_n}, s = {at.data['standard_deviation']}"
    if at.has("mean"):
        m = to_si(at.key("mean"), at.data["mean"], dim)
        check_finite(at.key("mean"), at.data["mean"], m)
        text += f", mean {at.data['mean']}"
    return Parsed(sd.value / math.sqrt(raw_n), sd.relative), raw_n, text


_PROPERTY_TARGETS = {"viscosity_model": ("viscosity", False), "density_model": ("density", False),
                     "full_scale_viscosity_model": ("viscosity", True),
                     "full_scale_density_model": ("density", True)}


def _stated(t: Table, size_kind: str, raw: Any, targets: tuple, fluid: Fluid | None,
            full_scale_fluid: Fluid | None) -> str:
    """``standard_uncertainty = "stated"``: the fluid model's own stated uncertainty, as a %."""
    props = {_PROPERTY_TARGETS.get(x, ("", False))[0] for x in targets}
    what = ("'stated' only as the standard_uncertainty of viscosity_model, density_model or their "
            "full_scale_ forms (one property; the fluid's stated uncertainty)")
    if size_kind != "standard_uncertainty" or len(props) != 1 or "" in props:
        raise StudyError(t.key(size_kind), raw, what)
    prop = props.pop()
    full = _PROPERTY_TARGETS[targets[0]][1]
    chosen = full_scale_fluid if full else fluid
    if chosen is None:
        raise StudyError(t.key(size_kind), raw, what)
    return f"{100.0 * float(chosen.stated_uncertainty[prop]):.6g} %"


def _correction(t: Table, targets: tuple) -> float:
    """``correction``: a known correction in the quantity's units (a fraction or % for a
    property-model error or another dimensionless quantity)."""
    if not t.has("correction"):
        return 0.0
    raw = t.data["correction"]
    dims = {TARGETS[x].dimension for x in targets}
    no_reading = all(TARGETS[x].reading is None for x in targets)
    key = t.key("correction")
    if len(dims) > 1:
        raise StudyError(key, raw, "a correction only for quantities of one dimension in perturbs")
    value = parse(key, raw, TARGETS[targets[0]].dimension, allow_relative=False) if not (
        no_reading or dims == {"dimensionless"}) else parse(key, raw, "dimensionless",
                                                             allow_relative=True)
    check_finite(key, raw, value.value)
    if value.relative and not no_reading:
        raise StudyError(key, raw, "a correction in the quantity's own units (e.g. '0.3 K', "
                         "'20 Pa'); % is taken only for a property-model error")
    return float(value.value)


def read_input(data: Any, index: int, kind: str, fluid: Fluid | None = None,
               full_scale_fluid: Fluid | None = None) -> InputSpec:
    """One ``[[uncertain]]`` table -> :class:`InputSpec` (docs/study-file.md lists every key)."""
    t = Table(data, f"uncertain[{index}]", INPUT_KEYS)
    name = t.text("name", f"input {index + 1}")
    targets = _targets(t, kind)
    target = targets[0]
    present = [k for k in SIZE_KEYS if t.has(k)]
    if t.has("distribution") and t.choice("distribution", DISTRIBUTIONS) == "truncated_normal":
        for k in ("standard_uncertainty", "half_width"):
            t.require(k, "a truncated normal takes standard_uncertainty (of the normal before "
                      "truncation) and half_width (where it is truncated)")
        other = [k for k in present if k not in ("standard_uncertainty", "half_width")]
        if other:
            raise StudyError(t.key(other[0]), "with distribution 'truncated_normal'",
                             "only standard_uncertainty and half_width for a truncated normal")
        size_kind = "standard_uncertainty"
    else:
        size_kind = cast(str, t.exclusive(SIZE_KEYS))  # required: never None
    allowed = SIZE_DISTRIBUTIONS[size_kind]
    dist = t.choice("distribution", DISTRIBUTIONS, default=allowed[0])
    if dist not in allowed:
        hint = {"readings": "repeated readings give a t-distribution (JCGM 101:2008 6.4.9)",
                "type_a": "repeated readings give a t-distribution (JCGM 101:2008 6.4.9)",
                "resolution": "a digital resolution gives rectangular limits of half a digit "
                              "(JCGM 100:2008 F.2.2.1)"}.get(size_kind) or {
            "normal": "a normal distribution takes standard_uncertainty or expanded_uncertainty",
            "lognormal": "a lognormal takes a relative standard_uncertainty such as '0.5 %'",
            "truncated_normal": "a truncated normal takes standard_uncertainty and half_width"
        }.get(dist, "")
        raise StudyError(t.key("distribution"), f"{dist!r} with {size_kind}",
                         " or ".join(repr(d) for d in allowed) + f" with {size_kind}", hint)
    for k in ("coverage_factor", "coverage_probability", "degrees_of_freedom"):
        if t.has(k) and size_kind != "expanded_uncertainty":
            raise StudyError(t.key(k), t.data[k], f"{k} only with expanded_uncertainty")
    beta = None
    if dist == "trapezoidal":
        t.require("beta", "the ratio of the top to the bottom half-width of the trapezoid, 0 to 1")
        beta = t.number("beta", low=0.0, high=1.0, what="a ratio beta of the top to the bottom "
                        "half-width from 0 (triangular) to 1 (rectangular)")
    elif t.has("beta"):
        raise StudyError(t.key("beta"), t.data["beta"], "beta only with distribution "
                         "'trapezoidal'")
    component = t.choice("component", {c: c for c in COMPONENTS}, default="systematic")

    cov_k, nu, p, limit, fixed, count = 1.0, math.inf, None, None, 0.0, None
    full_scale = span = 0.0
    if size_kind == "accuracy":
        size, fixed, text, full_scale, span = _accuracy(t, targets)
    elif size_kind in ("readings", "type_a"):
        size, count, text = _type_a(t, size_kind, targets)
        size_kind, nu = "type_a", float(count - 1)
    else:
        raw = written = t.data[size_kind]
        if raw == "stated":
            raw = _stated(t, size_kind, raw, targets, fluid, full_scale_fluid)
        size = _size(t, size_kind, raw, targets, relative=size_kind != "resolution")
        text = f"stated ({raw})" if written == "stated" else str(raw)
        if size_kind == "expanded_uncertainty":
            cov_k, nu, p = _coverage_factor(t, dist, beta)
            if p is not None:
                text += f", p = {t.data['coverage_probability']}"
            if t.has("degrees_of_freedom"):
                text += f", ν = {t.data['degrees_of_freedom']}"
        if dist == "truncated_normal":
            limit = _size(t, "half_width", t.data["half_width"], targets)
            if limit.relative != size.relative and len(targets) > 1:
                raise StudyError(t.key("half_width"), t.data["half_width"], "a half-width in % "
                                 "when standard_uncertainty is in % and perturbs is a list (or "
                                 "both in units)")
            text += f", truncated at ±{t.data['half_width']}"
    if dist == "lognormal" and not size.relative:
        raise StudyError(t.key(size_kind), t.data[size_kind], "a relative standard uncertainty "
                         "such as '0.5 %' for a lognormal (multiplicative) error")
    if beta is not None:
        text += f", beta = {beta:g}"
    correction = _correction(t, targets)
    if correction:
        text += f", correction {t.data['correction']}"
    return InputSpec(name, target, dist, cast(SizeKind, size_kind), size, cov_k, text,
                     t.text("note", ""), t.prefix,
                     targets=targets, component=component, dof=nu, beta=beta, limit=limit,
                     fixed=fixed, count=count, coverage_probability=p,
                     controllable=planning.controllable(t, targets),
                     cost=planning.cost_model(t, targets), correction=correction,
                     full_scale_fraction=full_scale, span=span)


def read_correlations(data: Any, names: list[str]) -> Correlation | None:
    """``[correlations] pairs = [[a, b, r], ...]`` -> the correlation of every input, or None.

    Unlisted pairs are uncorrelated.  The matrix must be positive definite (a
    coefficient of +-1 makes it singular: a fully shared error is one input with
    a list in ``perturbs``).
    """
    t = Table(data, "correlations", CORRELATION_KEYS)
    pairs = t.require("pairs", 'a list of ["input A", "input B", r] entries')
    if not isinstance(pairs, list):
        raise StudyError(t.key("pairs"), pairs, 'a list of ["input A", "input B", r] entries')
    if not pairs:
        return None
    n = len(names)
    matrix = np.eye(n)
    seen: dict[frozenset, int] = {}
    for j, item in enumerate(pairs):
        key = f"{t.key('pairs')}[{j}]"
        if not (isinstance(item, list) and len(item) == 3 and isinstance(item[0], str)
                and isinstance(item[1], str)):
            raise StudyError(key, item, 'a list ["input A", "input B", r] of two input names and '
                             "a correlation coefficient")
        a, b, r = item
        for nm in (a, b):
            if nm not in names:
                close = difflib.get_close_matches(nm, names, n=1, cutoff=0.5)
                raise StudyError(key, repr(plain(nm, GIVEN_LIMIT)), "the name of an [[uncertain]] "
                                 "input" + (
                    "" if names else " (the study has none)"),
                    f"did you mean {close[0]!r}?" if close else "")
        if a == b:
            raise StudyError(key, item, "two different inputs (an input is fully correlated with "
                             "itself)")
        if isinstance(r, bool) or not isinstance(r, (int, float)) or not math.isfinite(r) or \
                abs(r) > 1.0:
            raise StudyError(key, item, "a correlation coefficient r from -1 to 1 as the third "
                             "entry (a plain number)")
        pair = frozenset((a, b))
        if pair in seen:
            raise StudyError(key, item, f"each pair once (already given in "
                             f"{t.key('pairs')}[{seen[pair]}])")
        seen[pair] = j
        i1, i2 = names.index(a), names.index(b)
        matrix[i1, i2] = matrix[i2, i1] = float(r)
    expected = ("a positive-definite correlation matrix (the coefficients contradict each other, "
                "or one is +-1: for an error shared by several quantities use one input with a "
                "list in perturbs)")
    try:
        corr = Correlation(tuple(names), matrix)
    except ValueError as exc:  # entries are checked above: only the eigenvalues can fail
        raise StudyError("correlations", "pairs giving a matrix that is not positive "
                         "semi-definite", expected, str(exc)) from exc
    if not corr.definite:
        raise StudyError("correlations", f"pairs giving a matrix with smallest eigenvalue "
                         f"{corr.smallest_eigenvalue:.3g}", expected)
    return corr
