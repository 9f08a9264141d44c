"""Study files: schema, loading and validation.

A study is a TOML file whose dimensional values are strings with units.  It is
read, checked and converted to SI floats here, once; a problem is raised as a
one-line :class:`~simunc.errors.StudyError` naming the key.  The full
reference of keys is in the README ("Study-file reference").
"""

from __future__ import annotations

import difflib
import hashlib
import math
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from . import atmosphere
from .errors import StudyError
from .fluids import AIR, FLUIDS, Fluid
from .model import TARGETS
from .units import Parsed, parse, to_si

SOLVE_FOR = ("stagnation_pressure", "model_scale", "speed")
GROUPS = ("reynolds", "mach")
DISTRIBUTIONS = {"normal": "normal", "gaussian": "normal", "rectangular": "rectangular",
                 "uniform": "rectangular", "triangular": "triangular"}
MACH_FROM = ("pressure_ratio", "indication")

_ROOT_KEYS = ("title", "description", "full_scale", "facility", "model", "match", "uncertain", "run")
_FULL_SCALE_KEYS = ("altitude", "pressure_altitude", "temperature_offset", "static_pressure", "static_temperature",
                    "mach", "speed", "reference_length")
_FACILITY_KEYS = ("name", "gas", "stagnation_temperature", "stagnation_pressure",
                  "stagnation_pressure_range", "max_model_reference_length", "mach", "mach_range",
                  "mach_from")
_MODEL_KEYS = ("scale", "reference_length")
_MATCH_KEYS = ("solve_for",) + GROUPS
_BAND_KEYS = ("tolerance",)
_INPUT_KEYS = ("name", "perturbs", "distribution", "standard_uncertainty", "expanded_uncertainty",
               "coverage_factor", "half_width", "note")
_RUN_KEYS = ("trials", "seed", "coverage_probability", "sobol_base_samples")


class _Table:
    """One TOML table with its dotted prefix; rejects unknown keys with a suggestion."""

    def __init__(self, data: Any, prefix: str, allowed: tuple[str, ...]) -> None:
        if not isinstance(data, dict):
            raise StudyError(prefix, data, "a table")
        self.data = data
        self.prefix = prefix
        for key in data:
            if key not in allowed:
                close = difflib.get_close_matches(key, allowed, n=1, cutoff=0.5)
                hint = f"did you mean '{self.key(close[0])}'?" if close else (
                    "valid keys: " + ", ".join(allowed))
                raise StudyError(self.key(key), "an unknown key", "one of the documented keys", hint)

    def key(self, name: str) -> str:
        return f"{self.prefix}.{name}" if self.prefix else name

    def has(self, name: str) -> bool:
        return name in self.data

    def require(self, name: str, why: str = "") -> Any:
        if name not in self.data:
            raise StudyError(self.key(name), "nothing (the key is missing)", "a value" + (
                f" ({why})" if why else ""))
        return self.data[name]

    def quantity(self, name: str, dimension: str, *, positive: bool = True,
                 default: float | None = None, why: str = "") -> float:
        if name not in self.data and default is not None:
            return default
        raw = self.require(name, why)
        value = to_si(self.key(name), raw, dimension)
        _check_finite(self.key(name), raw, value)
        if positive and value <= 0.0:
            raise StudyError(self.key(name), raw, f"a {dimension.replace('_', ' ')} greater than zero")
        return value

    def number(self, name: str, *, default: float | None = None, low: float = -math.inf,
               high: float = math.inf, low_open: bool = False, high_open: bool = False,
               what: str = "a number") -> float:
        if name not in self.data and default is not None:
            return default
        raw = self.require(name)
        value = parse(self.key(name), raw, "dimensionless").value
        _check_finite(self.key(name), raw, value)
        bad_low = value <= low if low_open else value < low
        bad_high = value >= high if high_open else value > high
        if bad_low or bad_high:
            raise StudyError(self.key(name), raw, what)
        return value

    def integer(self, name: str, default: int, low: int) -> int:
        raw = self.data.get(name, default)
        if isinstance(raw, bool) or not isinstance(raw, int) or raw < low:
            raise StudyError(self.key(name), raw, f"a whole number >= {low}")
        return raw

    def text(self, name: str, default: str | None = None) -> str:
        raw = self.data.get(name, default)
        if raw is None:
            raw = self.require(name)
        if not isinstance(raw, str):
            raise StudyError(self.key(name), raw, "a string")
        return raw

    def choice(self, name: str, options, default: str | None = None) -> str:
        raw = self.text(name, default)
        if raw not in options:
            close = difflib.get_close_matches(raw, list(options), n=1, cutoff=0.5)
            raise StudyError(self.key(name), repr(raw), "one of " + ", ".join(repr(o) for o in options),
                             f"did you mean {close[0]!r}?" if close else "")
        return options[raw] if isinstance(options, dict) else raw

    def pair(self, name: str, dimension: str) -> tuple[float, float] | None:
        if name not in self.data:
            return None
        raw = self.data[name]
        if not isinstance(raw, list) or len(raw) != 2:
            raise StudyError(self.key(name), raw, f"a list of two values [low, high] of {dimension}")
        lo, hi = (to_si(f"{self.key(name)}[{i}]", v, dimension) for i, v in enumerate(raw))
        for i, v in enumerate((lo, hi)):
            _check_finite(f"{self.key(name)}[{i}]", raw[i], v)
        if dimension != "dimensionless" and lo <= 0.0:
            raise StudyError(f"{self.key(name)}[0]", raw[0], "a value greater than zero")
        if not lo < hi:
            raise StudyError(self.key(name), raw, "low < high")
        return lo, hi

    def exclusive(self, names: tuple[str, ...], required: bool = True) -> str | None:
        present = [n for n in names if n in self.data]
        if len(present) > 1:
            raise StudyError(self.key(present[1]), "together with " + self.key(present[0]),
                             "only one of " + ", ".join(self.key(n) for n in names))
        if not present:
            if required:
                raise StudyError(self.key(names[0]), "nothing (the key is missing)",
                                 "one of " + ", ".join(self.key(n) for n in names))
            return None
        return present[0]


def _check_finite(key: str, raw: Any, value: float) -> None:
    if not math.isfinite(value):
        raise StudyError(key, raw, "a finite value")


@dataclass(frozen=True)
class FullScale:
    """Full-scale (flight) condition in SI."""

    static_pressure: float
    static_temperature: float
    given: str  # "mach" or "speed"
    value: float
    reference_length: float
    altitude: float | None = None
    temperature_offset: float = 0.0
    mach: float = 0.0  # nominal full-scale Mach number (= value when given is "mach")


@dataclass(frozen=True)
class Facility:
    """Facility description in SI."""

    name: str
    gas: Fluid
    stagnation_temperature: float
    stagnation_pressure_range: tuple[float, float]
    stagnation_pressure: float | None
    max_model_reference_length: float | None
    mach: float | None
    mach_range: tuple[float, float]
    mach_from: str


@dataclass(frozen=True)
class Band:
    """Tolerance band of a matched group.

    For ``reynolds`` the band is ``|Re_model / Re_full - 1| <= tolerance``; for
    ``mach`` it is ``|Ma_model - Ma_full| <= tolerance``.
    """

    group: str
    tolerance: float
    text: str

    @property
    def output(self) -> str:
        return "reynolds_ratio" if self.group == "reynolds" else "mach_difference"

    @property
    def centre(self) -> float:
        return 1.0 if self.group == "reynolds" else 0.0


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
class Study:
    """A validated study, all values in SI."""

    title: str
    description: str
    full_scale: FullScale
    facility: Facility
    model_scale: float | None
    model_reference_length: float | None
    solve_for: str
    bands: tuple[Band, ...]
    inputs: tuple[InputSpec, ...]
    run: RunSettings
    path: str = ""
    sha256: str = ""
    raw: dict = field(default_factory=dict, repr=False, compare=False)

    def band(self, group: str) -> Band | None:
        return next((b for b in self.bands if b.group == group), None)


def _full_scale(t: _Table) -> FullScale:
    kind = t.exclusive(("altitude", "pressure_altitude", "static_pressure"))
    z, dt = None, 0.0
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
            dt = t.quantity("temperature_offset", "temperature_difference", positive=False, default=0.0)
            temp, pres = (float(v) for v in atmosphere.standard_state(z, dt))
            if temp <= 0.0:
                raise StudyError(t.key("temperature_offset"), t.data["temperature_offset"],
                                 "an offset that leaves the temperature above 0 K")
    else:
        if t.has("temperature_offset"):
            raise StudyError(t.key("temperature_offset"), "together with full_scale.static_pressure",
                             "a temperature offset only with full_scale.altitude or "
                             "full_scale.pressure_altitude")
        pres = t.quantity("static_pressure", "pressure")
        temp = t.quantity("static_temperature", "temperature",
                          why="needed with full_scale.static_pressure")
    given = t.exclusive(("mach", "speed"))
    if given == "mach":
        value = m = t.number("mach", low=0.0, high=1.0, low_open=True, high_open=True,
                             what="a Mach number above 0 and below 1 (only subsonic relations "
                                  "are implemented)")
    else:
        value = t.quantity("speed", "speed")
        m = value / float(AIR.speed_of_sound(pres, temp))
        if m >= 1.0:
            raise StudyError(t.key("speed"), t.data["speed"],
                             f"a subsonic speed (this gives Mach {m:.3f}; only subsonic relations "
                             "are implemented)")
    return FullScale(pres, temp, given, value, t.quantity("reference_length", "length"), z, dt, m)


def _facility(t: _Table) -> Facility:
    gas = t.choice("gas", dict(FLUIDS), default=AIR.name)
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
        name=t.text("name", "facility"),
        gas=gas,
        stagnation_temperature=t.quantity("stagnation_temperature", "temperature"),
        stagnation_pressure_range=p_range,
        stagnation_pressure=t.quantity("stagnation_pressure", "pressure") if t.has(
            "stagnation_pressure") else None,
        max_model_reference_length=t.quantity("max_model_reference_length", "length") if t.has(
            "max_model_reference_length") else None,
        mach=mach,
        mach_range=m_range,
        mach_from=t.choice("mach_from", MACH_FROM, default="pressure_ratio"),
    )


def _input(data: Any, index: int) -> InputSpec:
    t = _Table(data, f"uncertain[{index}]", _INPUT_KEYS)
    name = t.text("name", f"input {index + 1}")
    target = t.choice("perturbs", {k: k for k in TARGETS})
    dist = t.choice("distribution", DISTRIBUTIONS)
    kind = t.exclusive(("standard_uncertainty", "expanded_uncertainty", "half_width"))
    dim = TARGETS[target].dimension
    raw = t.data[kind]
    relative_ok = TARGETS[target].reading is not None
    size = parse(t.key(kind), raw, dim, allow_relative=relative_ok)
    if TARGETS[target].reading is None:
        size = Parsed(size.value, True)
    _check_finite(t.key(kind), raw, size.value)
    if size.value <= 0.0:
        raise StudyError(t.key(kind), raw, "an uncertainty greater than zero")
    k = 1.0
    if kind == "expanded_uncertainty":
        k = t.number("coverage_factor", low=0.0, low_open=True, what="a coverage factor k > 0")
    elif t.has("coverage_factor"):
        raise StudyError(t.key("coverage_factor"), t.data["coverage_factor"],
                         "a coverage factor only with expanded_uncertainty")
    if kind == "half_width" and dist == "normal":
        raise StudyError(t.key("distribution"), "'normal' with half_width",
                         "'rectangular' or 'triangular' for limits, or standard_uncertainty / "
                         "expanded_uncertainty for a normal distribution")
    return InputSpec(name, target, dist, kind, size, k, str(raw), t.text("note", ""), t.prefix)


def parse_study(data: dict, path: str = "", sha256: str = "") -> Study:
    """Validate a study already read from TOML into a dict and convert it to SI."""
    root = _Table(data, "", _ROOT_KEYS)
    fs = _full_scale(_Table(root.require("full_scale", "a [full_scale] table"), "full_scale", _FULL_SCALE_KEYS))
    ft = _Table(root.require("facility", "a [facility] table"), "facility", _FACILITY_KEYS)
    fac = _facility(ft)
    model = _Table(data.get("model", {}), "model", _MODEL_KEYS)
    match = _Table(root.require("match", "a [match] table"), "match", _MATCH_KEYS)
    solve_for = match.choice("solve_for", SOLVE_FOR, default="stagnation_pressure")

    bands = []
    for g in GROUPS:
        if match.has(g):
            bt = _Table(match.data[g], match.key(g), _BAND_KEYS)
            raw = bt.require("tolerance")
            parsed = parse(bt.key("tolerance"), raw, "dimensionless", allow_relative=True)
            tol = parsed.value
            if g == "mach" and parsed.relative:
                tol = parsed.value * fs.mach
            if not (math.isfinite(tol) and tol > 0.0):
                raise StudyError(bt.key("tolerance"), raw, "a tolerance greater than zero")
            bands.append(Band(g, tol, str(raw)))
    if not any(b.group == "reynolds" for b in bands):
        raise StudyError("match.reynolds", "nothing (the table is missing)",
                         "a [match.reynolds] table with a tolerance: the solved quantity "
                         f"({solve_for}) matches the Reynolds number")
    mach_matched = any(b.group == "mach" for b in bands)

    size = model.exclusive(("scale", "reference_length"), required=solve_for != "model_scale")
    if solve_for == "model_scale" and size:
        raise StudyError(model.key(size), model.data[size], "no model size: match.solve_for = "
                         "'model_scale' solves for it")
    scale = model.number("scale", low=0.0, low_open=True, what="a scale above 0") if size == "scale" else None
    ref_len = model.quantity("reference_length", "length") if size == "reference_length" else None

    if solve_for == "stagnation_pressure":
        if fac.stagnation_pressure is not None:
            raise StudyError("facility.stagnation_pressure", ft.data["stagnation_pressure"],
                             "no value: match.solve_for = 'stagnation_pressure' solves for it")
    elif fac.stagnation_pressure is None:
        ft.require("stagnation_pressure", f"needed when match.solve_for = '{solve_for}'")
    if solve_for == "speed":
        if fac.mach is not None:
            raise StudyError("facility.mach", ft.data["mach"],
                             "no value: match.solve_for = 'speed' solves for it")
    elif not mach_matched and fac.mach is None:
        ft.require("mach", "the test-section Mach number, needed when the Mach number is not matched")
    elif mach_matched and fac.mach is not None:
        raise StudyError("facility.mach", ft.data["mach"],
                         "no value: the Mach number is matched to full scale ([match.mach])")

    inputs_raw = data.get("uncertain", [])
    if not isinstance(inputs_raw, list):
        raise StudyError("uncertain", inputs_raw, "an array of tables ([[uncertain]] entries)")
    inputs = tuple(_input(d, i) for i, d in enumerate(inputs_raw))
    names = [i.name for i in inputs]
    for i, n in enumerate(names):
        if names.index(n) != i:
            raise StudyError(f"uncertain[{i}].name", repr(n), "a name not used by another input")

    rt = _Table(data.get("run", {}), "run", _RUN_KEYS)
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
    return Study(
        title=root.text("title", "untitled study"),
        description=root.text("description", ""),
        full_scale=fs, facility=fac, model_scale=scale, model_reference_length=ref_len,
        solve_for=solve_for, bands=tuple(bands), inputs=inputs, run=run,
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
