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
from dataclasses import replace
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
    Written,
)
from simunc.study.table import Table, check_finite
from simunc.study.written import RTD_CLASSES
from simunc.uncertainty.correlation import Correlation
from simunc.uncertainty.distributions import coverage_factor, make_distribution
from simunc.units import DIMENSIONS, Parsed, parse, to_si, written_unit


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



def _accuracy(t: Table, targets: tuple) -> dict[str, Any]:
    """``accuracy``: limits +-(reading x R + full_scale x range + absolute + celsius x |t|), with
    t the reading in degrees Celsius (or an IEC 60751 ``rtd_class``); returns the InputSpec
    fields of the size."""
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

    temperature = all(_reading_dimension(x) == "temperature" for x in targets)
    for name in ("celsius", "rtd_class"):
        if at.has(name) and not temperature:
            raise StudyError(at.key(name), at.data[name], f"{name} only for a temperature "
                             "quantity (its reading in degrees Celsius)")
    rtd = ""
    if at.has("rtd_class"):
        for other in ("absolute", "celsius"):
            if at.has(other):
                raise StudyError(at.key(other), at.data[other], f"no {other} with rtd_class (the "
                                 "class states both terms)")
        raw = at.data["rtd_class"]
        rtd = raw.strip().upper() if isinstance(raw, str) else ""
        if rtd not in RTD_CLASSES:
            raise StudyError(at.key("rtd_class"), repr(raw) if isinstance(raw, str) else raw, "an IEC 60751 tolerance class: "
                             + ", ".join(repr(k) for k in RTD_CLASSES))
    reading, full_scale = fraction("reading"), fraction("full_scale")
    celsius = RTD_CLASSES[rtd][1] if rtd else fraction("celsius")
    dims = {TARGETS[x].dimension for x in targets}
    words = [f"{at.data['reading']} of reading"] if at.has("reading") else []
    fixed = span = absolute = 0.0
    range_text = absolute_unit = ""
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
        range_text = f"{raw[0]} to {raw[1]}" if isinstance(raw, list) else str(raw)
        words.append(f"{at.data['full_scale']} of {range_text}")
    elif at.has("range"):
        raise StudyError(at.key("range"), at.data["range"], "a range only with full_scale")
    if at.has("absolute"):
        parsed = _size(at, "absolute", at.data["absolute"], targets, relative=False, zero_ok=True)
        absolute = parsed.value
        absolute_unit = written_unit(at.data["absolute"])
        words.append(str(at.data["absolute"]))
    elif rtd:
        absolute, absolute_unit = RTD_CLASSES[rtd][0], "degC"
    fixed += absolute
    if celsius and not rtd:
        words.append(f"{at.data['celsius']} of |t| in degC")
    if fixed > 0.0 and len(dims) > 1:
        raise StudyError(at.key("full_scale" if at.has("full_scale") else "absolute"),
                         at.data.get("full_scale", at.data.get("absolute")),
                         "only a % of reading when the quantities in perturbs have different "
                         "dimensions (" + ", ".join(sorted(dims)) + ")")
    if reading == 0.0 and fixed == 0.0 and celsius == 0.0:
        raise StudyError(at.key("reading"), at.data or "nothing", "at least one term above zero: "
                         "reading, full_scale (with range), absolute, celsius or rtd_class")
    text = "±(" + " + ".join(words) + ")"
    if rtd:
        a, b = RTD_CLASSES[rtd]
        text = f"IEC 60751 class {rtd}, ±({a:g} + {b:g}·|t|) degC" + (
            f" + ({' + '.join(words)})" if words else "")
    written = Written(unit="%", reading_unit=written_unit(at.data.get("reading", "")) or "%",
                      full_scale_unit=written_unit(at.data.get("full_scale", "")) or "%",
                      range_text=range_text, absolute=absolute, absolute_unit=absolute_unit,
                      rtd_class=rtd)
    return {"size": Parsed(reading, True), "fixed": fixed, "text": text,
            "full_scale_fraction": full_scale, "span": span, "celsius": celsius,
            "written": written}


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


def _sized(t: Table, size_kind: str, dist: str, beta: float | None, targets: tuple,
           fluid: Fluid | None, full_scale_fluid: Fluid | None,
           default_k: float | None = None) -> dict[str, Any]:
    """The InputSpec fields of the size written in ``t`` as ``size_kind`` (shared by an input and
    its grades); ``default_k``: k of an expanded uncertainty written without one."""
    out: dict[str, Any] = {"size_kind": size_kind, "coverage_factor": 1.0, "dof": math.inf,
                           "coverage_probability": None, "limit": None, "fixed": 0.0,
                           "count": None, "full_scale_fraction": 0.0, "span": 0.0,
                           "celsius": 0.0}
    for k in ("coverage_factor", "coverage_probability", "degrees_of_freedom"):
        if t.has(k) and size_kind != "expanded_uncertainty":
            raise StudyError(t.key(k), t.data[k], f"{k} only with expanded_uncertainty")
    if size_kind == "accuracy":
        out.update(_accuracy(t, targets))
    elif size_kind in ("readings", "type_a"):
        size, count, text = _type_a(t, size_kind, targets)
        raw = t.data[size_kind]
        unit = written_unit(raw[0] if size_kind == "readings" and raw else
                            raw.get("standard_deviation", "") if isinstance(raw, dict) else "")
        out.update(size_kind="type_a", size=size, count=count, text=text,
                   dof=float(count - 1), written=Written(unit=unit))
    else:
        raw = written = t.data[size_kind]
        if raw == "stated":
            raw = _stated(t, size_kind, raw, targets, fluid, full_scale_fluid)
        size = _size(t, size_kind, raw, targets, relative=size_kind != "resolution")
        text = f"stated ({raw})" if written == "stated" else str(raw)
        if size_kind == "expanded_uncertainty":
            if default_k is not None and not (t.has("coverage_factor")
                                              or t.has("coverage_probability")):
                cov_k, nu, p = default_k, math.inf, None
            else:
                cov_k, nu, p = _coverage_factor(t, dist, beta)
            out.update(coverage_factor=cov_k, dof=nu, coverage_probability=p)
            if p is not None:
                text += f", p = {t.data['coverage_probability']}"
            if t.has("degrees_of_freedom"):
                text += f", ν = {t.data['degrees_of_freedom']}"
        limit_unit = ""
        if dist == "truncated_normal":
            limit = _size(t, "half_width", t.data["half_width"], targets)
            if limit.relative != size.relative and len(targets) > 1:
                raise StudyError(t.key("half_width"), t.data["half_width"], "a half-width in % "
                                 "when standard_uncertainty is in % and perturbs is a list (or "
                                 "both in units)")
            text += f", truncated at ±{t.data['half_width']}"
            out["limit"] = limit
            limit_unit = written_unit(t.data["half_width"])
        out.update(size=size, text=text,
                   written=Written(unit=written_unit(raw), limit_unit=limit_unit))
    if dist == "lognormal" and not out["size"].relative:
        raise StudyError(t.key(size_kind), t.data[size_kind], "a relative standard uncertainty "
                         "such as '0.5 %' for a lognormal (multiplicative) error")
    return out


def _size_kind(t: Table, dist: str | None = None) -> str:
    """Which size key ``t`` has (a truncated normal has two)."""
    present = [k for k in SIZE_KEYS if t.has(k)]
    if dist == "truncated_normal":
        for k in ("standard_uncertainty", "half_width"):
            t.require(k, "a truncated normal takes standard_uncertainty (of the normal before "
                      "truncation) and half_width (where it is truncated)")
        other = [k for k in present if k not in ("standard_uncertainty", "half_width")]
        if other:
            raise StudyError(t.key(other[0]), "with distribution 'truncated_normal'",
                             "only standard_uncertainty and half_width for a truncated normal")
        return "standard_uncertainty"
    return cast(str, t.exclusive(SIZE_KEYS))  # required: never None


def _distribution_hint(size_kind: str, dist: str) -> str:
    return {"readings": "repeated readings give a t-distribution (JCGM 101:2008 6.4.9)",
            "type_a": "repeated readings give a t-distribution (JCGM 101:2008 6.4.9)",
            "resolution": "a digital resolution gives rectangular limits of half a digit "
                          "(JCGM 100:2008 F.2.2.1)"}.get(size_kind) or {
        "normal": "a normal distribution takes standard_uncertainty or expanded_uncertainty",
        "lognormal": "a lognormal takes a relative standard uncertainty such as '0.5 %'",
        "truncated_normal": "a truncated normal takes standard_uncertainty and half_width"
    }.get(dist, "")


def read_input(data: Any, index: int, kind: str, fluid: Fluid | None = None,
               full_scale_fluid: Fluid | None = None) -> InputSpec:
    """One ``[[uncertain]]`` table -> :class:`InputSpec` (docs/study-file.md lists every key)."""
    t = Table(data, f"uncertain[{index}]", INPUT_KEYS)
    name = t.text("name", f"input {index + 1}")
    targets = _targets(t, kind)
    target = targets[0]
    truncated = t.has("distribution") and \
        t.choice("distribution", DISTRIBUTIONS) == "truncated_normal"
    size_kind = _size_kind(t, "truncated_normal" if truncated else None)
    allowed = SIZE_DISTRIBUTIONS[size_kind]
    dist = t.choice("distribution", DISTRIBUTIONS, default=allowed[0])
    if dist not in allowed:
        raise StudyError(t.key("distribution"), f"{dist!r} with {size_kind}",
                         " or ".join(repr(d) for d in allowed) + f" with {size_kind}",
                         _distribution_hint(size_kind, dist))
    beta = None
    if dist == "trapezoidal":
        t.require("beta", "the ratio of the top to the bottom half-width of the trapezoid, 0 to 1")
        beta = t.number("beta", low=0.0, high=1.0, what="a ratio beta of the top to the bottom "
                        "half-width from 0 (triangular) to 1 (rectangular)")
    elif t.has("beta"):
        raise StudyError(t.key("beta"), t.data["beta"], "beta only with distribution "
                         "'trapezoidal'")
    component = t.choice("component", {c: c for c in COMPONENTS}, default="systematic")
    fields = _sized(t, size_kind, dist, beta, targets, fluid, full_scale_fluid)
    text = fields.pop("text")
    if beta is not None:
        text += f", beta = {beta:g}"
    correction = _correction(t, targets)
    if correction:
        text += f", correction {t.data['correction']}"
    size, size_kind = fields.pop("size"), fields.pop("size_kind")
    cov_k = fields.pop("coverage_factor")
    spec = InputSpec(name, target, dist, cast(SizeKind, size_kind), size, cov_k, text,
                     t.text("note", ""), t.prefix,
                     targets=targets, component=component, beta=beta,
                     controllable=planning.controllable(t, targets), correction=correction,
                     **fields)
    cost = planning.cost_model(t, targets, lambda g: _grade(g, spec, fluid, full_scale_fluid))
    return replace(spec, cost=cost)


def _grade(g: Table, spec: InputSpec, fluid: Fluid | None,
           full_scale_fluid: Fluid | None) -> InputSpec:
    """One grade of ``spec``: its size as the datasheet states it (any size form of an input but
    repeated readings), with the input's distribution; an expanded uncertainty without k is at
    k = 2."""
    size_kind = _size_kind(g, spec.distribution)
    allowed = SIZE_DISTRIBUTIONS[size_kind]
    if size_kind in ("readings", "type_a") or spec.distribution not in allowed:
        takes = [k for k, d in SIZE_DISTRIBUTIONS.items()
                 if spec.distribution in d and k not in ("readings", "type_a")]
        raise StudyError(g.key(size_kind), g.data[size_kind], "a grade written as "
                         + " or ".join(takes) + f" (a grade keeps the input's distribution, "
                         f"{spec.distribution})")
    fields = _sized(g, size_kind, spec.distribution, spec.beta, spec.targets, fluid,
                    full_scale_fluid, default_k=2.0)
    return replace(spec, **{k: v for k, v in fields.items()})


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
