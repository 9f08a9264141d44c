"""Study files: schema, loading and validation.

A study is a TOML file whose dimensional values are strings with units.  It is
read, checked and converted to SI floats here, once; a problem is raised as a
one-line :class:`~simunc.errors.StudyError` naming the key.  The full
reference of keys is docs/study-file.md (tests/test_docs.py keeps the two equal).
"""

from __future__ import annotations

import hashlib
import math
import tomllib
from dataclasses import replace
from pathlib import Path
from typing import Any, cast

import numpy as np

from simunc.constants import STANDARD_GRAVITY, STANDARD_PRESSURE
from simunc.errors import GIVEN_LIMIT, StudyError, plain
from simunc.physics import atmosphere, flow, groups
from simunc.physics.fluids import AIR, FLUIDS, Fluid
from simunc.study import planning
from simunc.study.matrix import read_matrix
from simunc.study.measurement import (
    check_measurement_inputs,
    read_measurement,
    scale_inputs,
    wall_inputs,
)
from simunc.study.catalogue import (
    EXTRAPOLATED_OUTPUT,
    GROUPS,
    QUANTITIES,
    TARGETS,
    CustomGroup,
    formed_groups,
    formed_outputs,
    output_key,
)
from simunc.study.keys import (
    BAND_KEYS,
    CUSTOM_KEYS,
    DIM_KEYS,
    FACILITY_KEYS,
    FULL_SCALE_KEYS,
    GAS_ONLY,
    HUMIDITY_KEYS,
    LIQUID_ONLY,
    MODEL_KEYS,
    ROOT_KEYS,
    RUN_KEYS,
)
from simunc.study.schema import (
    DEFAULT_PRIORITY,
    MACH_FROM,
    SAMPLING,
    SOLVE_NAMES,
    Band,
    DesignSettings,
    DimensionalAnalysis,
    Facility,
    FullScale,
    FullScaleGiven,
    RunSettings,
    SensitivitySettings,
    Study,
)
from simunc.study.table import Table
from simunc.study.uncertain import read_correlations, read_input
from simunc.units import display_units, parse, ureg


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


def _immersion(t: Table) -> float | None:
    """``facility.depth``: immersion depth of the model's reference point (0 or more)."""
    if not t.has("depth"):
        return None
    depth = t.quantity("depth", "length", positive=False)
    if depth < 0.0:
        raise StudyError(t.key("depth"), t.data["depth"], "a depth of 0 or more")
    return depth


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
    if t.has("max_blockage") and not t.has("test_section_area"):
        t.require("test_section_area", "the blockage limit needs max_blockage, "
                  "test_section_area and full_scale.frontal_area together")
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
            depth=_immersion(t),
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
    solve_for = tuple(n.strip() for n in match.names(
        "solve_for", ("stagnation_pressure",) if kind == "gas" else ("speed",)))
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
        if not isinstance(match.data["custom"], dict):
            raise StudyError(match.key("custom"), match.data["custom"], "a table of user groups, "
                             "e.g. [match.custom.my_group] with powers and tolerance")
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
            ft.require(key.split(".", 1)[1], "needed unless match.solve_for includes it")
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
    try:
        with np.errstate(all="ignore"):  # a value outside a formula's range is refused, not warned
            return _parse_study(data, path, sha256)
    except RecursionError as exc:
        raise StudyError("(file)", "values nested too deep to check",
                         "a study whose values are nested a few levels deep") from exc


def _parse_study(data: dict, path: str, sha256: str) -> Study:
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
    enlarged = model.flag("enlarged", False)
    if (scale or (ref_len or 0.0) / fs.reference_length) > 1.0 and not enlarged:
        raise StudyError(model.key(size or "scale"), model.data[size or "scale"],
                         "a model no larger than full scale (scale <= 1, e.g. 0.0625 for 1:16)",
                         "for a deliberately enlarged model set model.enlarged = true")
    freq = model.optional_quantity("frequency", "frequency")
    unknowns = _unknowns(fac, solve_for, bands, size, freq, fs, ft, model)

    inputs_raw = data.get("uncertain", [])
    if not isinstance(inputs_raw, list):
        raise StudyError("uncertain", inputs_raw, "an array of tables ([[uncertain]] entries)")
    inputs = tuple(read_input(d, i, fac.kind, fac.gas, fs.fluid) for i, d in enumerate(inputs_raw))
    model_length = ref_len if ref_len is not None else (
        scale * fs.reference_length if scale is not None else None)
    measurement = read_measurement(data["measurement"], model_length, fs.reference_length) \
        if "measurement" in data else None
    if measurement is not None and measurement.walls is not None:
        area = fac.test_section_area
        if area is None:
            ft.require("test_section_area", "the test-section area C of the wall corrections in "
                       "[measurement.walls]")
        measurement = replace(measurement, walls=replace(
            measurement.walls, test_section_area=cast(float, area)))
    check_measurement_inputs(inputs, measurement)
    inputs += wall_inputs(data, measurement, inputs)
    inputs += scale_inputs(measurement, inputs)
    names = [i.name for i in inputs]
    for i, n in enumerate(names):
        if names.index(n) != i:
            raise StudyError(f"uncertain[{i}].name", repr(plain(n, GIVEN_LIMIT)),
                             "a name not used by another input")
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
    correlation = read_correlations(data["correlations"], names) if "correlations" in data else None

    rt = Table(data.get("run", {}), "run", RUN_KEYS)
    n_sobol = rt.integer("sobol_base_samples", 4096, 64)
    if n_sobol & (n_sobol - 1):
        raise StudyError("run.sobol_base_samples", n_sobol, "a power of two such as 1024 or 4096")
    fixed = rt.has("trials") and rt.data["trials"] != "adaptive"
    run = RunSettings(
        trials=rt.integer("trials", 0, 100, other='"adaptive"') if fixed else None,
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
        full_scale_frequency=fs.frequency is not None, custom=[c.name for c in customs],
        measured=() if measurement is None else measurement.output_keys(fac.kind)))
        for f in fac.fluids))
    extrapolated = (measurement is not None and measurement.scale_effect is not None
                    and "drag" in measurement.scale_effect.coefficients)
    requirements, sweeps, sens, design = _decisions(data, bands, inputs, outputs, extrapolated)
    plan_requirements = tuple(r for r in requirements if r.output == EXTRAPOLATED_OUTPUT)
    requirements = tuple(r for r in requirements if r.output != EXTRAPOLATED_OUTPUT)
    matrix = read_matrix(data["matrix"], measurement=measurement, full_scale_given=fs.given,
                         unknowns=unknowns, input_names=[i.name for i in inputs],
                         outputs=outputs, path=path, max_trials=run.trials or 200_000,
                         random_inputs=tuple(i.name for i in inputs
                                             if i.component == "random"),
                         correlation=correlation) \
        if "matrix" in data else None
    return Study(
        title=root.text("title", "untitled study"),
        description=root.text("description", ""),
        full_scale=fs, facility=fac, model_scale=scale, model_reference_length=ref_len,
        solve_for=solve_for, unknowns=unknowns, bands=bands, inputs=inputs, run=run,
        model_frequency=freq, custom_groups=customs, dimensional_analysis=dim,
        correlation=correlation, requirements=requirements, sweeps=sweeps, sensitivity=sens,
        design=design, measurement=measurement, plan_requirements=plan_requirements,
        matrix=matrix, path=path, sha256=sha256, display_units=display_units(_strings(data)),
    )


def _strings(data: Any) -> list[str]:
    """Every text value of a study, in the order written (for its display units)."""
    if isinstance(data, str):
        return [data]
    if isinstance(data, dict):
        return [s for v in data.values() for s in _strings(v)]
    if isinstance(data, list):
        return [s for v in data for s in _strings(v)]
    return []


def _array(data: dict, key: str) -> list:
    raw = data.get(key, [])
    if not isinstance(raw, list):
        raise StudyError(key, raw, f"an array of tables ([[{key}]] entries)")
    return raw


def _decisions(data: dict, bands, inputs, formed: set[str], extrapolated: bool = False
               ) -> tuple:
    """``[[requirement]]``, ``[[sweep]]``, ``[sensitivity]``, ``[design]`` (spec.planning);
    ``formed``: the outputs the model forms for this study; ``extrapolated``: whether it has a
    scale effect on the drag (the extrapolation's output may then be limited)."""
    names = [i.name for i in inputs]
    outputs = [k for k in dict.fromkeys([b.output for b in bands] + sorted(formed)) if k in formed]
    reqs = tuple(planning.requirement(d, i, bands, outputs, extrapolated)
                 for i, d in enumerate(_array(data, "requirement")))
    sweeps = tuple(planning.sweep(d, i, names) for i, d in enumerate(_array(data, "sweep")))
    sens = planning.sensitivity(data["sensitivity"], names) if "sensitivity" in data \
        else SensitivitySettings()
    design = planning.design(data["design"]) if "design" in data else DesignSettings()
    planning.check_sweep_budget(sweeps, design)
    combinations = 1
    for j, spec in enumerate(inputs):
        if reqs and spec.cost is not None and spec.cost.kind == "grades":
            combinations *= len(spec.cost.grades)
            if combinations > planning.MAX_GRADE_COMBINATIONS:
                raise StudyError(f"uncertain[{j}].grades", f"{len(spec.cost.grades)} grades, "
                                 f"making {combinations:.3g} combinations with the grades of the "
                                 "inputs before it", f"at most {planning.MAX_GRADE_COMBINATIONS} "
                                 "grade combinations over all inputs (the allocation costs each)",
                                 "offer fewer grades")
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
    if len(blob) > MAX_STUDY_BYTES:
        raise StudyError("(file)", f"{p.name}: {len(blob)} bytes", f"a study file of at most "
                         f"{MAX_STUDY_BYTES // 1_000_000} MB")
    try:
        data = tomllib.loads(blob.decode("utf-8"))
    except UnicodeDecodeError as exc:
        raise StudyError("(file)", str(p), "UTF-8 text") from exc
    except tomllib.TOMLDecodeError as exc:
        raise StudyError("(file)", f"{p.name}: {exc}", "valid TOML") from exc
    except RecursionError as exc:
        raise StudyError("(file)", f"{p.name}: arrays or tables nested too deep to read",
                         "valid TOML nested a few levels deep") from exc
    return parse_study(data, str(p), hashlib.sha256(blob).hexdigest())


#: Largest study file read (a study is a few kilobytes).
MAX_STUDY_BYTES = 10_000_000
