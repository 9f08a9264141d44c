"""Study files: schema, loading and validation.

A study is a TOML file whose dimensional values are strings with units.  It is
read, checked and converted to SI floats here, once; a problem is raised as a
one-line :class:`~simunc.errors.StudyError` naming the key.  The full
reference of keys is docs/study-file.md (tests/test_docs.py keeps the two equal).
"""

from __future__ import annotations

import difflib
import hashlib
import math
import statistics
import tomllib
from pathlib import Path
from typing import Any, cast

import numpy as np

from simunc.constants import STANDARD_GRAVITY, STANDARD_PRESSURE
from simunc.errors import StudyError
from simunc.physics import atmosphere, flow, groups
from simunc.physics.fluids import AIR, FLUIDS, Fluid
from simunc.study import planning
from simunc.study.catalogue import (
    GROUPS,
    QUANTITIES,
    TARGETS,
    CustomGroup,
    formed_groups,
    formed_outputs,
    output_key,
)
from simunc.study.keys import (
    ACCURACY_KEYS,
    BAND_KEYS,
    CORRELATION_KEYS,
    CUSTOM_KEYS,
    DIM_KEYS,
    FACILITY_KEYS,
    FULL_SCALE_KEYS,
    GAS_ONLY,
    HUMIDITY_KEYS,
    INPUT_KEYS,
    LIQUID_ONLY,
    MODEL_KEYS,
    ROOT_KEYS,
    RUN_KEYS,
    SIZE_KEYS,
    TYPE_A_KEYS,
)
from simunc.study.schema import (
    COMPONENTS,
    DEFAULT_PRIORITY,
    DISTRIBUTIONS,
    MACH_FROM,
    SAMPLING,
    SIZE_DISTRIBUTIONS,
    SOLVE_NAMES,
    Band,
    DesignSettings,
    DimensionalAnalysis,
    Facility,
    FullScale,
    FullScaleGiven,
    InputSpec,
    RunSettings,
    SensitivitySettings,
    SizeKind,
    Study,
)
from simunc.study.table import Table, check_finite
from simunc.uncertainty.correlation import Correlation
from simunc.uncertainty.distributions import coverage_factor, make_distribution
from simunc.units import DIMENSIONS, Parsed, parse, to_si, ureg


def _fluid(t: Table, key: str, default: str | None = None) -> Fluid:
    return t.choice(key, dict(FLUIDS), default=default)


def _full_scale(t: Table) -> FullScale:
    fluid = _fluid(t, "fluid", AIR.name)
    z, dt, depth = None, 0.0, None
    if fluid.kind == "liquid":
        for k in ("altitude", "pressure_altitude", "temperature_offset", "mach"):
            if t.has(k):
                raise StudyError(t.key(k), t.data[k], f"no {k} for a full scale in {fluid.name} "
                                 "(give static_temperature, depth or static_pressure, and speed)")
        kind = t.exclusive(("depth", "static_pressure"), required=False)
        if kind == "depth":
            depth = t.quantity("depth", "length", positive=False)
            if depth < 0.0:
                raise StudyError(t.key("depth"), t.data["depth"], "a depth of 0 or more")
        temp = t.quantity("static_temperature", "temperature", why="the water temperature")
        if kind == "static_pressure":
            pres = t.quantity("static_pressure", "pressure")
        else:
            rho = float(fluid.density(STANDARD_PRESSURE, temp))
            pres = flow.hydrostatic_pressure(STANDARD_PRESSURE, rho, depth or 0.0, STANDARD_GRAVITY)
    else:
        kind = t.exclusive(("altitude", "pressure_altitude", "static_pressure"))
        if t.has("depth"):
            raise StudyError(t.key("depth"), t.data["depth"], "no depth for a full scale in a gas")
        if kind in ("altitude", "pressure_altitude"):
            lo, hi = atmosphere.ALTITUDE_RANGE
            h = t.quantity(kind, "length", positive=False)
            if kind == "altitude":
                z = h
            else:
                lo, hi = (float(atmosphere.geopotential_altitude(v)) for v in (lo, hi))
                z = float(atmosphere.geometric_altitude(h))
            if not lo <= h <= hi:
                raise StudyError(t.key(kind), t.data[kind],
                                 f"an altitude from {lo:.6g} m to {hi:.6g} m "
                                 f"({'geometric' if kind == 'altitude' else 'geopotential'})")
            if t.exclusive(("temperature_offset", "static_temperature"), required=False) == \
                    "static_temperature":
                pres = float(atmosphere.standard_state(z)[1])
                temp = t.quantity("static_temperature", "temperature")
                dt = temp - float(atmosphere.standard_state(z)[0])
            else:
                dt = t.quantity("temperature_offset", "temperature_difference", positive=False,
                                default=0.0)
                temp, pres = (float(v) for v in atmosphere.standard_state(z, dt))
                if temp <= 0.0:
                    raise StudyError(t.key("temperature_offset"), t.data["temperature_offset"],
                                     "an offset that leaves the temperature above 0 K")
        else:
            if t.has("temperature_offset"):
                raise StudyError(t.key("temperature_offset"),
                                 "together with full_scale.static_pressure",
                                 "a temperature offset only with full_scale.altitude or "
                                 "full_scale.pressure_altitude")
            pres = t.quantity("static_pressure", "pressure")
            temp = t.quantity("static_temperature", "temperature",
                              why="needed with full_scale.static_pressure")
    reason = fluid.check_state(pres, temp)
    if reason:
        raise StudyError(t.key("static_temperature") if t.has("static_temperature") else t.prefix,
                         f"{pres:.6g} Pa, {temp:.6g} K", f"a state inside the {fluid.name} model "
                         f"({reason})")
    given = cast(FullScaleGiven, t.exclusive(("mach", "speed")))  # required: one of the two
    if given == "mach":
        value = m = t.number("mach", low=0.0, high=1.0, low_open=True, high_open=True,
                             what="a Mach number above 0 and below 1 (only subsonic relations "
                                  "are implemented)")
    else:
        value = t.quantity("speed", "speed")
        m = float(groups.mach(value, fluid.speed_of_sound(pres, temp)))
        if m >= 1.0:
            raise StudyError(t.key("speed"), t.data["speed"],
                             f"a subsonic speed (this gives Mach {m:.3f}; only subsonic relations "
                             "are implemented)")
    return FullScale(pres, temp, given, value, t.quantity("reference_length", "length"), z, dt, m,
                     fluid, t.optional_quantity("frequency", "frequency"),
                     t.optional_quantity("frontal_area", "area"), depth)


def _facility(t: Table) -> Facility:
    key = t.exclusive(("fluid", "gas"), required=False) or "gas"
    names = t.names(key, (AIR.name,))
    if not names:
        raise StudyError(t.key(key), [], "at least one fluid name")
    fluids = tuple(Table({key: n}, t.prefix, (key,)).choice(key, dict(FLUIDS)) for n in names)
    kinds = {f.kind for f in fluids}
    if len(kinds) > 1:
        raise StudyError(t.key(key), names, "fluids of one kind (all gases or all liquids)")
    kind = kinds.pop()
    if t.has("humidity"):
        fluids = tuple(_humid(t, f) for f in fluids)
    elif any(f.name == "moist_air" for f in fluids):
        t.require("humidity", "a dew point or relative humidity for moist_air")
    if t.has("max_blockage") != t.has("test_section_area"):
        missing = "test_section_area" if t.has("max_blockage") else "max_blockage"
        t.require(missing, "the blockage limit needs max_blockage, test_section_area and "
                  "full_scale.frontal_area together")
    for k in (LIQUID_ONLY if kind == "gas" else GAS_ONLY):
        if t.has(k):
            raise StudyError(t.key(k), t.data[k], f"no {k} for a {kind} facility ({names[0]})")
    common: dict[str, Any] = dict(
        name=t.text("name", "facility"), fluids=fluids, kind=kind,
        max_model_reference_length=t.optional_quantity("max_model_reference_length", "length"),
        test_section_area=t.optional_quantity("test_section_area", "area"),
        max_blockage=(t.number("max_blockage", low=0.0, high=1.0, low_open=True,
                               what="a blockage fraction above 0 and at most 1, e.g. '1 %'",
                               allow_percent=True)
                      if t.has("max_blockage") else None),
        max_dynamic_pressure=t.optional_quantity("max_dynamic_pressure", "pressure"),
    )
    if kind == "liquid":
        return Facility(
            **common,
            speed=t.optional_quantity("speed", "speed"), speed_range=t.pair("speed_range", "speed"),
            static_pressure=t.optional_quantity("static_pressure", "pressure"),
            static_pressure_range=t.pair("static_pressure_range", "pressure"),
            temperature=t.optional_quantity("temperature", "temperature"),
            temperature_range=t.pair("temperature_range", "temperature"),
        )
    p_range = t.pair("stagnation_pressure_range", "pressure")
    if p_range is None:
        t.require("stagnation_pressure_range", "the facility's [lowest, highest] stagnation pressure")
    m_range = t.pair("mach_range", "dimensionless") or (0.0, 1.0)
    if not (0.0 <= m_range[0] and m_range[1] <= 1.0):
        raise StudyError(t.key("mach_range"), t.data["mach_range"],
                         "limits within 0 and 1 (only subsonic relations are implemented)")
    mach = None
    if t.has("mach"):
        mach = t.number("mach", low=0.0, high=1.0, low_open=True, high_open=True,
                        what="a Mach number above 0 and below 1")
    return Facility(
        **common,
        stagnation_temperature=t.optional_quantity("stagnation_temperature", "temperature"),
        stagnation_temperature_range=t.pair("stagnation_temperature_range", "temperature"),
        stagnation_pressure_range=p_range,
        stagnation_pressure=t.optional_quantity("stagnation_pressure", "pressure"),
        mach=mach, mach_range=m_range,
        mach_from=t.choice("mach_from", MACH_FROM, default="pressure_ratio"),
    )


def _humid(t: Table, fluid: Fluid) -> Fluid:
    """Moist air with the nominal vapour mole fraction of ``facility.humidity``."""
    from simunc.physics.fluids import MoistAir

    if not isinstance(fluid, MoistAir):
        raise StudyError(t.key("humidity"), t.data["humidity"], f"no humidity for {fluid.name} "
                         "(use gas = 'moist_air')")
    h = Table(t.data["humidity"], t.key("humidity"), HUMIDITY_KEYS)
    p = h.quantity("at_pressure", "pressure", default=t.optional_quantity(
        "stagnation_pressure", "pressure") or STANDARD_PRESSURE)
    try:
        if h.exclusive(("dew_point", "relative_humidity")) == "dew_point":
            out = MoistAir.from_dew_point(p, h.quantity("dew_point", "temperature"))
        else:
            t_ref = h.quantity("at_temperature", "temperature", default=t.optional_quantity(
                "stagnation_temperature", "temperature") or 293.15)
            rh = h.number("relative_humidity", low=0.0, high=1.0, allow_percent=True,
                          what="a relative humidity from 0 to 100 %")
            out = MoistAir.from_relative_humidity(p, t_ref, rh)
    except ValueError as exc:
        if isinstance(exc, StudyError):
            raise
        raise StudyError(t.key("humidity"), t.data["humidity"], "a humidity the moist-air model "
                         f"covers ({exc})") from exc
    if not (0.0 <= out.vapour_mole_fraction < 0.2):
        raise StudyError(t.key("humidity"), t.data["humidity"], "a humidity the moist-air model "
                         f"covers (gives a vapour mole fraction {out.vapour_mole_fraction:.3g})")
    return out


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


def _accuracy(t: Table, targets: tuple) -> tuple[Parsed, float, str]:
    """``accuracy``: limits +-(reading x R + full_scale x range + absolute)."""
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
    fixed = 0.0
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
    return Parsed(reading, True), fixed, "±(" + " + ".join(words) + ")"


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


def _input(data: Any, index: int, kind: str, fluid: Fluid | None = None) -> InputSpec:
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
    if size_kind == "accuracy":
        size, fixed, text = _accuracy(t, targets)
    elif size_kind in ("readings", "type_a"):
        size, count, text = _type_a(t, size_kind, targets)
        size_kind, nu = "type_a", float(count - 1)
    else:
        raw = written = t.data[size_kind]
        if raw == "stated":
            prop = {"viscosity_model": "viscosity", "density_model": "density"}.get(target)
            if size_kind != "standard_uncertainty" or prop is None or fluid is None or \
                    len(targets) > 1:
                raise StudyError(t.key(size_kind), raw, "'stated' only as the standard_uncertainty "
                                 "of viscosity_model or density_model alone (the fluid's stated "
                                 "uncertainty)")
            raw = f"{100.0 * float(fluid.stated_uncertainty[prop]):.6g} %"
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
    return InputSpec(name, target, dist, cast(SizeKind, size_kind), size, cov_k, text,
                     t.text("note", ""), t.prefix,
                     targets=targets, component=component, dof=nu, beta=beta, limit=limit,
                     fixed=fixed, count=count, coverage_probability=p,
                     controllable=planning.controllable(t, targets),
                     cost=planning.cost_model(t, targets))


def _correlations(data: Any, names: list[str]) -> Correlation | None:
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
                raise StudyError(key, repr(nm), "the name of an [[uncertain]] input" + (
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
        raise StudyError("correlations", f"pairs giving a matrix that is not positive "
                         f"semi-definite ({exc})", expected) from exc
    if not corr.definite:
        raise StudyError("correlations", f"pairs giving a matrix with smallest eigenvalue "
                         f"{corr.smallest_eigenvalue:.3g}", expected)
    return corr


def _band(bt: Table, group: str, fs: FullScale) -> Band:
    raw = bt.require("tolerance")
    parsed = parse(bt.key("tolerance"), raw, "dimensionless", allow_relative=True)
    tol = parsed.value
    if output_key(group).endswith("_difference") and parsed.relative:
        tol = parsed.value * fs.mach
    if not (math.isfinite(tol) and tol > 0.0):
        raise StudyError(bt.key("tolerance"), raw, "a tolerance greater than zero")
    priority = bt.integer("priority", DEFAULT_PRIORITY.get(group, 2), 1)
    return Band(group, tol, str(raw), priority, bt.flag("solve", True))


def _custom_group(t: Table, name: str, fs: FullScale) -> tuple[CustomGroup, Band]:
    if name in GROUPS:
        raise StudyError(t.prefix, name, "a custom group name that is not a built-in group")
    powers_raw = t.require("powers", "a table of quantity = exponent")
    pt = Table(powers_raw, t.key("powers"), tuple(QUANTITIES))
    powers = {q: pt.number(q, what="an exponent (a number)") for q in powers_raw}
    if not any(powers.values()):
        raise StudyError(t.key("powers"), powers_raw, "at least one non-zero exponent")
    dims = ureg.Quantity(1.0, "")
    for q, e in powers.items():
        dims = dims * ureg.Quantity(1.0, QUANTITIES[q]) ** e
    if not dims.dimensionless:
        raise StudyError(t.key("powers"), powers_raw, "exponents that make the product "
                         f"dimensionless (it has dimensions {dims.dimensionality})")
    return CustomGroup(name, powers), _band(t, name, fs)


def _match(data: Any, fs: FullScale, kind: str) -> tuple[tuple, tuple, tuple[str, ...]]:
    allowed = ("solve_for", "custom") + tuple(GROUPS)
    match = Table(data, "match", allowed)
    solve_for = match.names("solve_for", ("stagnation_pressure",) if kind == "gas" else ("speed",))
    names = SOLVE_NAMES[kind]
    if len(set(solve_for)) != len(solve_for):
        raise StudyError("match.solve_for", list(solve_for), "each quantity once")
    for n in solve_for:
        if n not in names:
            Table({"solve_for": n}, "match", ("solve_for",)).choice("solve_for", dict(
                (k, k) for k in names))
    bands, customs = [], []
    for g in GROUPS:
        if match.has(g):
            bands.append(_band(Table(match.data[g], match.key(g), BAND_KEYS), g, fs))
    if match.has("custom"):
        ct = Table(match.data["custom"], match.key("custom"), tuple(match.data["custom"]))
        for name in ct.data:
            cg, band = _custom_group(Table(ct.data[name], ct.key(name), CUSTOM_KEYS), name, fs)
            customs.append(cg)
            bands.append(band)
    if not bands:
        raise StudyError("match", "no matched group", "at least one group table such as "
                         "[match.reynolds] with a tolerance")
    return tuple(bands), tuple(customs), solve_for


def _unknowns(study_fac: Facility, solve_for, bands, model_size: str | None,
              model_frequency: float | None, fs: FullScale, ft: Table, model: Table) -> tuple:
    """Model keys solved for, including the implicit ones, with consistency checks."""
    kind = study_fac.kind
    unknowns = [SOLVE_NAMES[kind][n] for n in solve_for]
    groups = {b.group for b in bands}
    if kind == "gas" and "mach" in groups and study_fac.mach is None and "mach" not in unknowns:
        unknowns.append("mach")  # the Mach number is matched to full scale
    if "strouhal" in groups and model_frequency is None and "frequency" not in unknowns:
        unknowns.append("frequency")
    given = {"stagnation_pressure": ("facility.stagnation_pressure", study_fac.stagnation_pressure),
             "stagnation_temperature": ("facility.stagnation_temperature",
                                        study_fac.stagnation_temperature),
             "mach": ("facility.mach", study_fac.mach),
             "speed": ("facility.speed", study_fac.speed),
             "static_pressure": ("facility.static_pressure", study_fac.static_pressure),
             "temperature": ("facility.temperature", study_fac.temperature),
             "model_length": ("model." + (model_size or "scale"), model_size),
             "frequency": ("model.frequency", model_frequency)}
    ranges = {"stagnation_pressure": "stagnation_pressure_range",
              "stagnation_temperature": "stagnation_temperature_range",
              "speed": "speed_range", "static_pressure": "static_pressure_range",
              "temperature": "temperature_range"}
    for u in unknowns:
        if u == "fluid":
            continue
        key, value = given[u]
        if value is not None:
            raw = (model if key.startswith("model.") else ft).data.get(key.split(".", 1)[1], value)
            why = "match.solve_for" if u in [SOLVE_NAMES[kind][n] for n in solve_for] else \
                "a matched group"
            raise StudyError(key, raw, f"no value: {why} solves for it ({u.replace('_', ' ')})")
        if u in ranges and getattr(study_fac, ranges[u]) is None:
            ft.require(ranges[u], f"the [lowest, highest] range of the solved {u.replace('_', ' ')}")
    if kind == "gas":
        needed = ("stagnation_pressure", "stagnation_temperature", "mach")
    else:
        needed = ("speed", "static_pressure", "temperature")
    for u in needed + ("model_length",):
        key, value = given[u]
        if u not in unknowns and value is None:
            if u == "static_pressure":
                continue  # defaults to one standard atmosphere
            if u == "mach":
                ft.require("mach", "the test-section Mach number, needed when the Mach number is "
                           "neither matched nor solved")
            if u == "model_length":
                model.require("scale", "or model.reference_length (or solve for model_scale)")
            ft.require(key.split(".", 1)[1], f"needed unless match.solve_for includes it")
    n_solving = len([b for b in bands if b.solve])
    n_continuous = len([u for u in unknowns if u != "fluid"])
    if n_continuous > n_solving:
        raise StudyError("match.solve_for", list(solve_for),
                         f"no more unknowns than solved groups ({n_continuous} unknown"
                         f"{'s' if n_continuous != 1 else ''} "
                         f"{', '.join(u for u in unknowns if u != 'fluid')} for {n_solving} "
                         f"group{'s' if n_solving != 1 else ''})")
    if "fluid" in unknowns and len(study_fac.fluids) < 2:
        raise StudyError("facility.gas", [f.name for f in study_fac.fluids],
                         "a list of two or more fluids to choose from (match.solve_for has 'gas')")
    return tuple(unknowns)


def _dimensional(data: Any) -> DimensionalAnalysis:
    t = Table(data, "dimensional_analysis", DIM_KEYS)
    variables = t.require("variables", "a table of name = unit")
    if not isinstance(variables, dict) or not variables:
        raise StudyError(t.key("variables"), variables, "a table of name = unit, e.g. "
                         "{ F = 'N', rho = 'kg/m^3' }")
    for name, unit in variables.items():
        try:
            ureg.parse_units(unit)
        except Exception as exc:  # noqa: BLE001 - pint raises several kinds
            raise StudyError(f"{t.key('variables')}.{name}", unit, "a unit such as 'kg/m^3'") from exc
    rep = t.names("repeating") if t.has("repeating") else None
    from simunc.physics.dimensional import pi_groups
    try:
        groups = pi_groups(dict(variables), list(rep) if rep else None)
    except ValueError as exc:
        raise StudyError(t.key("repeating" if rep else "variables"), rep or variables,
                         f"a valid set ({exc})") from exc
    return DimensionalAnalysis(dict(variables), rep, tuple(groups))


def parse_study(data: dict, path: str = "", sha256: str = "") -> Study:
    """Validate a study already read from TOML into a dict and convert it to SI."""
    root = Table(data, "", ROOT_KEYS)
    fs = _full_scale(Table(root.require("full_scale", "a [full_scale] table"), "full_scale",
                           FULL_SCALE_KEYS))
    ft = Table(root.require("facility", "a [facility] table"), "facility", FACILITY_KEYS)
    fac = _facility(ft)
    model = Table(data.get("model", {}), "model", MODEL_KEYS)
    bands, customs, solve_for = _match(root.require("match", "a [match] table"), fs, fac.kind)
    for b in bands:
        if b.group == "mach" and fac.kind == "liquid":
            raise StudyError("match.mach", "a Mach band", "no Mach band for a liquid facility")
        if b.group in ("weber", "cavitation") and (fac.kind != "liquid" or fs.fluid.kind != "liquid"):
            raise StudyError(f"match.{b.group}", f"a {b.group} band",
                             "a liquid facility and a liquid full scale")
        if b.group == "strouhal" and fs.frequency is None:
            Table(data["full_scale"], "full_scale", FULL_SCALE_KEYS).require(
                "frequency", "the full-scale frequency, needed by [match.strouhal]")
    size = model.exclusive(("scale", "reference_length"), required=False)
    scale = model.number("scale", low=0.0, low_open=True, what="a scale above 0") \
        if size == "scale" else None
    ref_len = model.quantity("reference_length", "length") if size == "reference_length" else None
    freq = model.optional_quantity("frequency", "frequency")
    unknowns = _unknowns(fac, solve_for, bands, size, freq, fs, ft, model)

    inputs_raw = data.get("uncertain", [])
    if not isinstance(inputs_raw, list):
        raise StudyError("uncertain", inputs_raw, "an array of tables ([[uncertain]] entries)")
    inputs = tuple(_input(d, i, fac.kind, fac.gas) for i, d in enumerate(inputs_raw))
    names = [i.name for i in inputs]
    for i, n in enumerate(names):
        if names.index(n) != i:
            raise StudyError(f"uncertain[{i}].name", repr(n), "a name not used by another input")
    if (fac.max_blockage is not None) != (fs.frontal_area is not None):
        if fs.frontal_area is None:
            Table(data["full_scale"], "full_scale", FULL_SCALE_KEYS).require(
                "frontal_area", "the blockage limit needs full_scale.frontal_area")
        ft.require("max_blockage", "full_scale.frontal_area serves only the blockage limit")
    has_freq = fs.frequency is not None and (freq is not None or "frequency" in unknowns)
    formed = [set(formed_groups(f, fs.fluid, has_freq)) for f in fac.fluids]
    for b in bands:
        if b.group in GROUPS and not all(b.group in g for g in formed):
            raise StudyError(f"match.{b.group}", f"a {b.group} band with facility fluid "
                             f"{' / '.join(f.name for f in fac.fluids)} and full-scale fluid "
                             f"{fs.fluid.name}", "a band on a group this study forms: " +
                             ", ".join(g for g in GROUPS if all(g in f for f in formed)))
    for cg in customs:
        if "frequency" in cg.powers and not has_freq:
            raise StudyError(f"match.custom.{cg.name}.powers", dict(cg.powers), "a frequency only "
                             "with full_scale.frequency and model.frequency (or [match.strouhal])")
    for i, spec in enumerate(inputs):
        for target in spec.targets:
            if target in ("frequency_indication", "full_scale_frequency") and not has_freq:
                raise StudyError(f"uncertain[{i}].perturbs", repr(target), "a frequency input only "
                                 "with full_scale.frequency and a model frequency")
            p = TARGETS[target].parameter
            if p and not all(p in getattr(f, "parameters", ()) for f in fac.fluids):
                raise StudyError(f"uncertain[{i}].perturbs", repr(target),
                                 f"a quantity of the facility fluid ({fac.gas.name} has no {p})")
    correlation = _correlations(data["correlations"], names) if "correlations" in data else None

    rt = Table(data.get("run", {}), "run", RUN_KEYS)
    n_sobol = rt.integer("sobol_base_samples", 4096, 64)
    if n_sobol & (n_sobol - 1):
        raise StudyError("run.sobol_base_samples", n_sobol, "a power of two such as 1024 or 4096")
    fixed = rt.has("trials") and rt.data["trials"] != "adaptive"
    run = RunSettings(
        trials=rt.integer("trials", 0, 100) if fixed else None,
        sampling=rt.choice("sampling", SAMPLING, default="random"),
        significant_digits=rt.integer("significant_digits", 2, 1),
        max_trials=rt.integer("max_trials", 10_000_000, 10_000),
        seed=rt.integer("seed", 1, 0),
        coverage_probability=rt.number("coverage_probability", default=0.95, low=0.0, high=1.0,
                                       low_open=True, high_open=True,
                                       what="a probability above 0 and below 1"),
        sobol_base_samples=n_sobol,
    )
    dim = _dimensional(data["dimensional_analysis"]) if "dimensional_analysis" in data else None
    outputs = set.intersection(*(set(formed_outputs(
        f, fs.fluid, model_frequency=fs.frequency is not None and (
            freq is not None or "frequency" in unknowns),
        full_scale_frequency=fs.frequency is not None, custom=[c.name for c in customs]))
        for f in fac.fluids))
    requirements, sweeps, sens, design = _decisions(data, bands, inputs, outputs)
    return Study(
        title=root.text("title", "untitled study"),
        description=root.text("description", ""),
        full_scale=fs, facility=fac, model_scale=scale, model_reference_length=ref_len,
        solve_for=solve_for, unknowns=unknowns, bands=bands, inputs=inputs, run=run,
        model_frequency=freq, custom_groups=customs, dimensional_analysis=dim,
        correlation=correlation, requirements=requirements, sweeps=sweeps, sensitivity=sens,
        design=design, path=path, sha256=sha256,
    )


def _array(data: dict, key: str) -> list:
    raw = data.get(key, [])
    if not isinstance(raw, list):
        raise StudyError(key, raw, f"an array of tables ([[{key}]] entries)")
    return raw


def _decisions(data: dict, bands, inputs, formed: set[str]) -> tuple:
    """``[[requirement]]``, ``[[sweep]]``, ``[sensitivity]``, ``[design]`` (spec.planning);
    ``formed``: the outputs the model forms for this study."""
    names = [i.name for i in inputs]
    outputs = [k for k in dict.fromkeys([b.output for b in bands] + sorted(formed)) if k in formed]
    reqs = tuple(planning.requirement(d, i, bands, outputs)
                 for i, d in enumerate(_array(data, "requirement")))
    sweeps = tuple(planning.sweep(d, i, names) for i, d in enumerate(_array(data, "sweep")))
    sens = planning.sensitivity(data["sensitivity"], names) if "sensitivity" in data \
        else SensitivitySettings()
    design = planning.design(data["design"]) if "design" in data else DesignSettings()
    costed = [(j, spec.cost.kind) for j, spec in enumerate(inputs) if spec.cost is not None]
    if len({k for _, k in costed}) > 1:
        j = next(j for j, k in costed if k != costed[0][1])
        raise StudyError(f"uncertain[{j}].{'grades' if costed[0][1] == 'power' else 'cost'}",
                         "a cost model of another kind than the other inputs'",
                         "the same kind for every costed input: all 'cost' (continuous) or all "
                         "'grades' (a choice of instruments)")
    for j, spec in enumerate(inputs):
        if spec.cost is not None and not spec.controllable:
            raise StudyError(f"uncertain[{j}].controllable", "false with a cost model",
                             "controllable = true for an input the allocation may change")
    return reqs, sweeps, sens, design


def load_study(path: str | Path) -> Study:
    """Read, validate and convert a study file.

    Raises
    ------
    StudyError
        For a missing or unreadable file, bad TOML or any invalid value.
    """
    p = Path(path)
    try:
        blob = p.read_bytes()
    except OSError as exc:
        raise StudyError("(file)", str(p), "a readable study file", exc.strerror or "") from exc
    try:
        data = tomllib.loads(blob.decode("utf-8"))
    except UnicodeDecodeError as exc:
        raise StudyError("(file)", str(p), "UTF-8 text") from exc
    except tomllib.TOMLDecodeError as exc:
        raise StudyError("(file)", f"{p.name}: {exc}", "valid TOML") from exc
    return parse_study(data, str(p), hashlib.sha256(blob).hexdigest())
