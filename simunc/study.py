"""Study files: schema, loading and validation.

A study is a TOML file whose dimensional values are strings with units.  It is
read, checked and converted to SI floats here, once; a problem is raised as a
one-line :class:`~simunc.errors.StudyError` naming the key.  The full
reference of keys is in the README ("Study-file reference").
"""

from __future__ import annotations

import hashlib
import math
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from . import atmosphere
from .errors import StudyError
from .fluids import AIR, FLUIDS, Fluid
from .model import GRAVITY, GROUPS, QUANTITIES, TARGETS, CustomGroup, output_key
from .study_table import Table, check_finite
from .units import Parsed, parse, ureg

DISTRIBUTIONS = {"normal": "normal", "gaussian": "normal", "rectangular": "rectangular",
                 "uniform": "rectangular", "triangular": "triangular"}
MACH_FROM = ("pressure_ratio", "indication")
ATMOSPHERIC_PRESSURE = 101_325.0  # Pa, standard atmosphere (ISO 2533)

#: ``match.solve_for`` names -> model keys, by facility kind.
SOLVE_NAMES = {
    "gas": {"stagnation_pressure": "stagnation_pressure",
            "stagnation_temperature": "stagnation_temperature", "mach": "mach", "speed": "mach",
            "model_scale": "model_length", "frequency": "frequency", "gas": "fluid",
            "fluid": "fluid"},
    "liquid": {"speed": "speed", "static_pressure": "static_pressure", "temperature": "temperature",
               "model_scale": "model_length", "frequency": "frequency", "fluid": "fluid"},
}
#: Default priority of a matched group (lower is matched first).
DEFAULT_PRIORITY = {"mach": 1, "froude": 1}

_ROOT_KEYS = ("title", "description", "full_scale", "facility", "model", "match", "uncertain",
              "run", "dimensional_analysis")
_FULL_SCALE_KEYS = ("fluid", "altitude", "pressure_altitude", "temperature_offset",
                    "static_pressure", "static_temperature", "depth", "mach", "speed",
                    "reference_length", "frequency", "frontal_area")
_FACILITY_KEYS = ("name", "gas", "fluid", "stagnation_temperature", "stagnation_temperature_range",
                  "stagnation_pressure", "stagnation_pressure_range", "mach", "mach_range",
                  "mach_from", "speed", "speed_range", "static_pressure", "static_pressure_range",
                  "temperature", "temperature_range", "max_model_reference_length",
                  "test_section_area", "max_blockage", "max_dynamic_pressure", "humidity")
_HUMIDITY_KEYS = ("dew_point", "relative_humidity", "at_pressure", "at_temperature")
_MODEL_KEYS = ("scale", "reference_length", "frequency")
_BAND_KEYS = ("tolerance", "priority", "solve")
_CUSTOM_KEYS = ("powers", "tolerance", "priority", "solve")
_INPUT_KEYS = ("name", "perturbs", "distribution", "standard_uncertainty", "expanded_uncertainty",
               "coverage_factor", "half_width", "note")
_RUN_KEYS = ("trials", "seed", "coverage_probability", "sobol_base_samples")
_DIM_KEYS = ("variables", "repeating")


@dataclass(frozen=True)
class FullScale:
    """Full-scale condition in SI."""

    static_pressure: float
    static_temperature: float
    given: str  # "mach" or "speed"
    value: float
    reference_length: float
    altitude: float | None = None
    temperature_offset: float = 0.0
    mach: float = 0.0  # nominal full-scale Mach number (= value when given is "mach")
    fluid: Fluid = AIR
    frequency: float | None = None
    frontal_area: float | None = None
    depth: float | None = None


@dataclass(frozen=True)
class Facility:
    """Facility description in SI (``None``: not given)."""

    name: str
    fluids: tuple
    kind: str  # "gas" or "liquid"
    stagnation_temperature: float | None = None
    stagnation_temperature_range: tuple | None = None
    stagnation_pressure: float | None = None
    stagnation_pressure_range: tuple | None = None
    mach: float | None = None
    mach_range: tuple = (0.0, 1.0)
    mach_from: str = "pressure_ratio"
    speed: float | None = None
    speed_range: tuple | None = None
    static_pressure: float | None = None
    static_pressure_range: tuple | None = None
    temperature: float | None = None
    temperature_range: tuple | None = None
    max_model_reference_length: float | None = None
    test_section_area: float | None = None
    max_blockage: float | None = None
    max_dynamic_pressure: float | None = None

    @property
    def gas(self) -> Fluid:
        """The (first) working fluid."""
        return self.fluids[0]


@dataclass(frozen=True)
class Band:
    """Tolerance band of a matched group.

    For a ``ratio`` group the band is ``|G_model / G_full - 1| <= tolerance``;
    for the Mach number (a ``difference``) it is ``|Ma_model - Ma_full| <=
    tolerance``.  ``priority`` orders the matching (1 first); ``solve = False``
    makes the band a check only.
    """

    group: str
    tolerance: float
    text: str
    priority: int = 2
    solve: bool = True
    target: float | None = None  # solver aim, default the centre (used by test planning)

    @property
    def output(self) -> str:
        return output_key(self.group)

    @property
    def is_difference(self) -> bool:
        return self.output.endswith("_difference")

    @property
    def centre(self) -> float:
        return 0.0 if self.is_difference else 1.0


@dataclass(frozen=True)
class InputSpec:
    """One uncertain input as written (sizes parsed, not yet tied to a set point)."""

    name: str
    target: str
    distribution: str
    size_kind: str  # "standard_uncertainty", "expanded_uncertainty" or "half_width"
    size: Parsed
    coverage_factor: float
    text: str
    note: str
    key: str


@dataclass(frozen=True)
class RunSettings:
    trials: int = 200_000
    seed: int = 1
    coverage_probability: float = 0.95
    sobol_base_samples: int = 4096


@dataclass(frozen=True)
class DimensionalAnalysis:
    """Variables (name -> unit text) for a Buckingham Pi analysis, and repeating ones."""

    variables: dict
    repeating: tuple | None
    groups: tuple = ()


@dataclass(frozen=True)
class Study:
    """A validated study, all values in SI."""

    title: str
    description: str
    full_scale: FullScale
    facility: Facility
    model_scale: float | None
    model_reference_length: float | None
    solve_for: tuple
    unknowns: tuple
    bands: tuple
    inputs: tuple
    run: RunSettings
    model_frequency: float | None = None
    custom_groups: tuple = ()
    dimensional_analysis: DimensionalAnalysis | None = None
    path: str = ""
    sha256: str = ""
    raw: dict = field(default_factory=dict, repr=False, compare=False)

    def band(self, group: str) -> Band | None:
        return next((b for b in self.bands if b.group == group), None)

    @property
    def kind(self) -> str:
        return self.facility.kind


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
            rho = float(fluid.density(ATMOSPHERIC_PRESSURE, temp))
            pres = ATMOSPHERIC_PRESSURE + rho * GRAVITY * (depth or 0.0)
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
    given = t.exclusive(("mach", "speed"))
    if given == "mach":
        value = m = t.number("mach", low=0.0, high=1.0, low_open=True, high_open=True,
                             what="a Mach number above 0 and below 1 (only subsonic relations "
                                  "are implemented)")
    else:
        value = t.quantity("speed", "speed")
        m = value / float(fluid.speed_of_sound(pres, temp))
        if m >= 1.0:
            raise StudyError(t.key("speed"), t.data["speed"],
                             f"a subsonic speed (this gives Mach {m:.3f}; only subsonic relations "
                             "are implemented)")
    return FullScale(pres, temp, given, value, t.quantity("reference_length", "length"), z, dt, m,
                     fluid, t.optional_quantity("frequency", "frequency"),
                     t.optional_quantity("frontal_area", "area"), depth)


_GAS_ONLY = ("stagnation_temperature", "stagnation_temperature_range", "stagnation_pressure",
             "stagnation_pressure_range", "mach", "mach_range", "mach_from")
_LIQUID_ONLY = ("speed", "speed_range", "static_pressure", "static_pressure_range", "temperature",
                "temperature_range")


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
    for k in (_LIQUID_ONLY if kind == "gas" else _GAS_ONLY):
        if t.has(k):
            raise StudyError(t.key(k), t.data[k], f"no {k} for a {kind} facility ({names[0]})")
    common = dict(
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
    from .fluids import MoistAir

    if not isinstance(fluid, MoistAir):
        raise StudyError(t.key("humidity"), t.data["humidity"], f"no humidity for {fluid.name} "
                         "(use gas = 'moist_air')")
    h = Table(t.data["humidity"], t.key("humidity"), _HUMIDITY_KEYS)
    p = h.quantity("at_pressure", "pressure", default=t.optional_quantity(
        "stagnation_pressure", "pressure") or ATMOSPHERIC_PRESSURE)
    if h.exclusive(("dew_point", "relative_humidity")) == "dew_point":
        out = MoistAir.from_dew_point(p, h.quantity("dew_point", "temperature"))
    else:
        t_ref = h.quantity("at_temperature", "temperature", default=t.optional_quantity(
            "stagnation_temperature", "temperature") or 293.15)
        rh = h.number("relative_humidity", low=0.0, high=1.0, allow_percent=True,
                      what="a relative humidity from 0 to 100 %")
        out = MoistAir.from_relative_humidity(p, t_ref, rh)
    if not (0.0 <= out.vapour_mole_fraction < 0.2):
        raise StudyError(t.key("humidity"), t.data["humidity"], "a humidity the moist-air model "
                         f"covers (gives a vapour mole fraction {out.vapour_mole_fraction:.3g})")
    return out


def _input(data: Any, index: int, kind: str, fluid: Fluid | None = None) -> InputSpec:
    t = Table(data, f"uncertain[{index}]", _INPUT_KEYS)
    name = t.text("name", f"input {index + 1}")
    target = t.choice("perturbs", {k: k for k in TARGETS})
    if kind not in TARGETS[target].modes:
        raise StudyError(t.key("perturbs"), repr(target), f"a quantity of a {kind} facility")
    dist = t.choice("distribution", DISTRIBUTIONS)
    size_kind = t.exclusive(("standard_uncertainty", "expanded_uncertainty", "half_width"))
    dim = TARGETS[target].dimension
    raw = written = t.data[size_kind]
    if raw == "stated":
        prop = {"viscosity_model": "viscosity", "density_model": "density"}.get(target)
        if size_kind != "standard_uncertainty" or prop is None or fluid is None:
            raise StudyError(t.key(size_kind), raw, "'stated' only as the standard_uncertainty of "
                             "viscosity_model or density_model (the fluid's stated uncertainty)")
        raw = f"{100.0 * float(fluid.stated_uncertainty[prop]):.6g} %"
    relative_ok = TARGETS[target].reading is not None
    size = parse(t.key(size_kind), raw, dim, allow_relative=relative_ok)
    if TARGETS[target].reading is None:
        size = Parsed(size.value, True)
    check_finite(t.key(size_kind), raw, size.value)
    if size.value <= 0.0:
        raise StudyError(t.key(size_kind), raw, "an uncertainty greater than zero")
    k = 1.0
    if size_kind == "expanded_uncertainty":
        k = t.number("coverage_factor", low=0.0, low_open=True, what="a coverage factor k > 0")
    elif t.has("coverage_factor"):
        raise StudyError(t.key("coverage_factor"), t.data["coverage_factor"],
                         "a coverage factor only with expanded_uncertainty")
    if size_kind == "half_width" and dist == "normal":
        raise StudyError(t.key("distribution"), "'normal' with half_width",
                         "'rectangular' or 'triangular' for limits, or standard_uncertainty / "
                         "expanded_uncertainty for a normal distribution")
    text = f"stated ({raw})" if written == "stated" else str(raw)
    return InputSpec(name, target, dist, size_kind, size, k, text, t.text("note", ""), t.prefix)


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
    for n in solve_for:
        if n not in names:
            Table({"solve_for": n}, "match", ("solve_for",)).choice("solve_for", dict(
                (k, k) for k in names))
    bands, customs = [], []
    for g in GROUPS:
        if match.has(g):
            bands.append(_band(Table(match.data[g], match.key(g), _BAND_KEYS), g, fs))
    if match.has("custom"):
        ct = Table(match.data["custom"], match.key("custom"), tuple(match.data["custom"]))
        for name in ct.data:
            cg, band = _custom_group(Table(ct.data[name], ct.key(name), _CUSTOM_KEYS), name, fs)
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
                         f"no more unknowns than solved groups ({n_continuous} unknowns "
                         f"{', '.join(u for u in unknowns if u != 'fluid')} for {n_solving} groups)")
    if "fluid" in unknowns and len(study_fac.fluids) < 2:
        raise StudyError("facility.gas", [f.name for f in study_fac.fluids],
                         "a list of two or more fluids to choose from (match.solve_for has 'gas')")
    return tuple(unknowns)


def _dimensional(data: Any) -> DimensionalAnalysis:
    t = Table(data, "dimensional_analysis", _DIM_KEYS)
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
    from .dimensional import pi_groups
    try:
        groups = pi_groups(dict(variables), list(rep) if rep else None)
    except ValueError as exc:
        raise StudyError(t.key("repeating" if rep else "variables"), rep or variables,
                         f"a valid set ({exc})") from exc
    return DimensionalAnalysis(dict(variables), rep, tuple(groups))


def parse_study(data: dict, path: str = "", sha256: str = "") -> Study:
    """Validate a study already read from TOML into a dict and convert it to SI."""
    root = Table(data, "", _ROOT_KEYS)
    fs = _full_scale(Table(root.require("full_scale", "a [full_scale] table"), "full_scale",
                           _FULL_SCALE_KEYS))
    ft = Table(root.require("facility", "a [facility] table"), "facility", _FACILITY_KEYS)
    fac = _facility(ft)
    model = Table(data.get("model", {}), "model", _MODEL_KEYS)
    bands, customs, solve_for = _match(root.require("match", "a [match] table"), fs, fac.kind)
    for b in bands:
        if b.group == "mach" and fac.kind == "liquid":
            raise StudyError("match.mach", "a Mach band", "no Mach band for a liquid facility")
        if b.group in ("weber", "cavitation") and (fac.kind != "liquid" or fs.fluid.kind != "liquid"):
            raise StudyError(f"match.{b.group}", f"a {b.group} band",
                             "a liquid facility and a liquid full scale")
        if b.group == "strouhal" and fs.frequency is None:
            Table(data["full_scale"], "full_scale", _FULL_SCALE_KEYS).require(
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
    for i, spec in enumerate(inputs):
        p = TARGETS[spec.target].parameter
        if p and not all(p in getattr(f, "parameters", ()) for f in fac.fluids):
            raise StudyError(f"uncertain[{i}].perturbs", repr(spec.target),
                             f"a quantity of the facility fluid ({fac.gas.name} has no {p})")

    rt = Table(data.get("run", {}), "run", _RUN_KEYS)
    n_sobol = rt.integer("sobol_base_samples", 4096, 64)
    if n_sobol & (n_sobol - 1):
        raise StudyError("run.sobol_base_samples", n_sobol, "a power of two such as 1024 or 4096")
    run = RunSettings(
        trials=rt.integer("trials", 200_000, 100),
        seed=rt.integer("seed", 1, 0),
        coverage_probability=rt.number("coverage_probability", default=0.95, low=0.0, high=1.0,
                                       low_open=True, high_open=True,
                                       what="a probability above 0 and below 1"),
        sobol_base_samples=n_sobol,
    )
    dim = _dimensional(data["dimensional_analysis"]) if "dimensional_analysis" in data else None
    return Study(
        title=root.text("title", "untitled study"),
        description=root.text("description", ""),
        full_scale=fs, facility=fac, model_scale=scale, model_reference_length=ref_len,
        solve_for=solve_for, unknowns=unknowns, bands=bands, inputs=inputs, run=run,
        model_frequency=freq, custom_groups=customs, dimensional_analysis=dim,
        path=path, sha256=sha256, raw=data,
    )


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
