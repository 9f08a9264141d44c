"""``[measurement]``: what the test measures and with what (balance, attitude, pressure taps).

Read once, here, into :class:`~simunc.study.schema.Measurement` (SI); the model's data reduction
(:mod:`simunc.similitude.model`) and the balance decisions (:mod:`simunc.decisions.balance`) use
it.  docs/study-file.md lists every key.
"""

from __future__ import annotations

import math
import re
from typing import Any

from simunc.errors import GIVEN_LIMIT, StudyError, plain
from simunc.physics import friction, walls
from simunc.study.catalogue import BALANCE_COMPONENTS, COEFFICIENTS, MEASUREMENT_TARGETS
from simunc.study.schema import (
    SCANNER_REFERENCES,
    BalanceOption,
    InputSpec,
    Measurement,
    ScaleEffect,
    Walls,
    Written,
)
from simunc.study.table import Table
from simunc.units import Parsed

MEASUREMENT_KEYS = ("angle_of_attack", "lift_curve_slope", "pitching_moment_slope", "walls",
                    "scale_effect",
                    "reference_area", "full_scale_reference_area",
                    "reference_length", "reference_span", "scanner_reference", "balance",
                    "balance_option", "tap") + tuple(f"{c}_coefficient" for c in COEFFICIENTS)
BALANCE_KEYS = ("name", "load_margin", "moment_transfer", "price") + tuple(BALANCE_COMPONENTS)
OPTION_KEYS = ("name", "price", "capacity", "full_scale")
TAP_KEYS = ("name", "pressure_coefficient")
SCALE_KEYS = ("method", "line", "form_factor", "wetted_ratio", "compare", "reynolds", "mach",
              "uncertainty") + tuple(f"{c}_per_{x}" for c in COEFFICIENTS
                                     for x in ("decade", "mach")) + tuple(
    f"{c}_coefficient" for c in COEFFICIENTS)
SCALE_METHODS = ("friction_line", "sensitivity", "table")
#: Largest number of entries along one axis of a scale-effect table.
TABLE_ENTRIES = 200
WALL_KEYS = ("model_volume", "shape_factor", "solid_blockage", "wake_blockage", "boundary_factor",
             "blockage_uncertainty", "lift_interference_uncertainty")

#: Relative uncertainty (rectangular half-width) of a wall correction when the study states none:
#: the classical closed-wall corrections are taken as good to about a quarter of their value for
#: small models (common practice, no source).
DEFAULT_CORRECTION_UNCERTAINTY = 0.25
#: The wall corrections' uncertain inputs: target -> (input name, key of its size).
WALL_INPUTS = {
    "solid_blockage_correction": ("solid-blockage correction", "blockage_uncertainty"),
    "wake_blockage_correction": ("wake-blockage correction", "blockage_uncertainty"),
    "lift_interference_correction": ("lift-interference correction",
                                     "lift_interference_uncertainty"),
}

#: Largest angle of attack read (the reduction resolves loads through it; a model beyond this
#: is a high-alpha test that this point analysis does not describe).
MAX_ALPHA_DEG = 45.0
_TAP_NAME = re.compile(r"^[A-Za-z][A-Za-z0-9_]{0,39}$")


def read_measurement(data: Any, model_length: float | None, full_scale_length: float
                     ) -> Measurement:
    """``[measurement]`` -> :class:`Measurement`.

    ``model_length``: the model reference length written in ``[model]`` [m] (None when the
    model size is solved); ``full_scale_length``: the full-scale reference length [m].
    """
    t = Table(data, "measurement", MEASUREMENT_KEYS)
    alpha = t.quantity("angle_of_attack", "angle", positive=False, default=0.0)
    if abs(math.degrees(alpha)) > MAX_ALPHA_DEG:
        raise StudyError(t.key("angle_of_attack"), t.data["angle_of_attack"],
                         f"an angle of attack within +-{MAX_ALPHA_DEG:g} deg")
    how = t.exclusive(("reference_area", "full_scale_reference_area"), required=False)
    if how == "reference_area":
        if model_length is None:
            raise StudyError(t.key("reference_area"), t.data["reference_area"],
                             "full_scale_reference_area when the model size is solved (the "
                             "model's area then scales with it)")
        area = t.quantity("reference_area", "area") / model_length ** 2
    elif how == "full_scale_reference_area":
        area = t.quantity("full_scale_reference_area", "area") / full_scale_length ** 2
    else:
        area = math.nan
    chord = span = 1.0
    for name in ("reference_length", "reference_span"):
        if t.has(name):
            if model_length is None:
                raise StudyError(t.key(name), t.data[name], "no model length here when the "
                                 "model size is solved (give the model size in [model])")
            value = t.quantity(name, "length") / model_length
            chord, span = (value, span) if name == "reference_length" else (chord, value)
    balance = Table(t.data.get("balance", {}), t.key("balance"), BALANCE_KEYS)
    capacity = {c: balance.quantity(c, BALANCE_COMPONENTS[c][0]) for c in BALANCE_COMPONENTS
                if balance.has(c)}
    if t.has("balance") and not capacity:
        raise StudyError(t.key("balance"), "no component", "the capacity of each balance "
                         "component, e.g. normal_force = '8 kN', axial_force = '400 N', "
                         "pitching_moment = '300 N*m'")
    longitudinal = [c for c in ("normal_force", "axial_force", "pitching_moment") if c in capacity]
    if longitudinal and not {"normal_force", "axial_force"} <= set(capacity):
        missing = "axial_force" if "normal_force" in capacity else "normal_force"
        balance.require(missing, "the normal and axial forces give the lift and drag that every "
                        "longitudinal component's load follows from")
    coefficients = {}
    for name, (needs, _) in COEFFICIENTS.items():
        key = f"{name}_coefficient"
        if not all(c in capacity for c in needs):
            if t.has(key):
                absent = [c for c in needs if c not in capacity]
                raise StudyError(t.key(key), t.data[key], "a coefficient the balance measures "
                                 f"(it needs {' and '.join(absent)} in [measurement.balance])")
            continue
        lateral = name in ("side_force", "rolling_moment", "yawing_moment")
        coefficients[name] = t.number(key, default=0.0 if lateral else None,
                                      low=-10.0, high=10.0, what="a coefficient within +-10")
    if capacity and math.isnan(area):
        t.require("reference_area", "the model's reference area S of the coefficients (or "
                  "full_scale_reference_area)")
    if any(c in capacity for c in ("rolling_moment", "yawing_moment")) and not t.has(
            "reference_span"):
        t.require("reference_span", "the reference span b of the rolling and yawing moments")
    taps = _taps(t)
    if taps and math.isnan(area):
        area = 1.0  # unused: pressure coefficients need no area
    options, price = _options(t, balance, capacity)
    slopes = {}
    for name, key in (("lift", "lift_curve_slope"), ("pitching_moment", "pitching_moment_slope")):
        if t.has(key):
            if name not in coefficients:
                raise StudyError(t.key(key), t.data[key], f"a slope of a coefficient the balance "
                                 f"measures ({name}_coefficient is not measured here)")
            slopes[name] = t.quantity(key, "per_angle", positive=False)
            if abs(slopes[name]) > 20.0:  # per radian: 2 pi is thin-airfoil theory
                raise StudyError(t.key(key), t.data[key], "a slope within +-20 per radian "
                                 "(+-0.35 per degree)")
    walls = _walls(t, model_length, coefficients) if t.has("walls") else None
    scale_effect = _scale_effect(t, coefficients) if t.has("scale_effect") else None
    return Measurement(
        angle_of_attack=alpha, coefficients=coefficients, slopes=slopes, walls=walls,
        scale_effect=scale_effect, area_per_length2=area,
        chord_per_length=chord, span_per_length=span,
        balance=balance.text("name", "balance") if capacity else "",
        capacity=capacity,
        load_margin=balance.number("load_margin", default=0.0, low=0.0, high=10.0,
                                   allow_percent=True, what="a margin such as '25 %'"),
        transfer=balance.quantity("moment_transfer", "length", positive=False, default=0.0),
        taps=taps,
        scanner_reference=t.choice("scanner_reference", SCANNER_REFERENCES, default="static"),
        options=options, option_price=price)


def _walls(t: Table, model_length: float | None, coefficients: dict) -> Walls:
    """``[measurement.walls]`` -> :class:`Walls` (the test-section area is the facility's)."""
    w = Table(t.data["walls"], t.key("walls"), WALL_KEYS)
    how = w.exclusive(("model_volume", "solid_blockage"))
    volume = None
    if how == "model_volume":
        if model_length is None:
            raise StudyError(w.key("model_volume"), w.data["model_volume"], "solid_blockage as a "
                             "number when the model size is solved (or give the model size)")
        volume = w.quantity("model_volume", "volume") / model_length ** 3
    elif w.has("shape_factor"):
        raise StudyError(w.key("shape_factor"), w.data["shape_factor"], "a shape factor only "
                         "with model_volume")
    if not w.has("wake_blockage") and "drag" not in coefficients:
        w.require("wake_blockage", "the wake blockage as a number, or a balance measuring drag "
                  "(the classical wake blockage follows from the drag coefficient)")
    if w.has("lift_interference_uncertainty") and not w.has("boundary_factor"):
        raise StudyError(w.key("lift_interference_uncertainty"),
                         w.data["lift_interference_uncertainty"], "a lift-interference "
                         "uncertainty only with boundary_factor (the correction it is of)")
    if w.has("boundary_factor") and "lift" not in coefficients:
        raise StudyError(w.key("boundary_factor"), w.data["boundary_factor"], "a lift-"
                         "interference factor only with a balance measuring lift")
    return Walls(
        test_section_area=math.nan,  # the facility's, filled in by the study reader
        volume_per_length3=volume,
        shape_factor=w.number("shape_factor", default=walls.SHAPE_FACTOR, low=0.0, high=5.0,
                              low_open=True, what="a shape factor above 0 (about 0.9 for a "
                              "three-dimensional model)") if volume is not None else 0.0,
        solid_blockage=w.number("solid_blockage", low=-0.2, high=0.2, what="a blockage "
                                "between -0.2 and 0.2") if how == "solid_blockage" else None,
        wake_blockage=w.number("wake_blockage", low=-0.2, high=0.2, what="a blockage between "
                               "-0.2 and 0.2") if w.has("wake_blockage") else None,
        boundary_factor=w.number("boundary_factor", low=-2.0, high=2.0, what="a boundary "
                                 "factor between -2 and 2 (e.g. 0.125 closed, negative open)")
        if w.has("boundary_factor") else None)


def _scale_effect(t: Table, coefficients: dict) -> ScaleEffect:
    """``[measurement.scale_effect]`` -> :class:`ScaleEffect`."""
    s = Table(t.data["scale_effect"], t.key("scale_effect"), SCALE_KEYS)
    s.require("method", "'friction_line', 'sensitivity' or 'table'")
    method = s.choice("method", SCALE_METHODS)
    lines = dict(friction.FRICTION_LINES)
    sens = {k for k in SCALE_KEYS if k.endswith(("_per_decade", "_per_mach"))}
    columns = {k for k in SCALE_KEYS if k.endswith("_coefficient")}
    own = {"friction_line": ("line", "form_factor", "wetted_ratio", "compare"),
           "sensitivity": tuple(sorted(sens)), "table": ("reynolds", "mach") + tuple(
               sorted(columns))}
    for other, keys in own.items():
        for k in keys:
            if other != method and s.has(k):
                raise StudyError(s.key(k), s.data[k], f"no {k} with method = '{method}' (it "
                                 f"belongs to method = '{other}')")
    uncertainty = 0.0
    if s.has("uncertainty"):
        if method == "friction_line":
            raise StudyError(s.key("uncertainty"), s.data["uncertainty"], "compare (the other "
                             "friction lines, whose spread is the model-form uncertainty) with "
                             "method = 'friction_line'")
        uncertainty = s.number("uncertainty", low=0.0, high=1.0, low_open=True,
                               allow_percent=True, what="a fraction above 0 and at most 1 of "
                               "the law's change from the model to full scale, e.g. '20 %'")
    if method == "table":
        return _scale_table(s, coefficients, uncertainty)
    if method == "friction_line":
        if "drag" not in coefficients:
            raise StudyError(s.key("method"), "'friction_line'", "a balance measuring drag (the "
                             "friction line moves the drag coefficient)")
        compare = s.names("compare")
        line = s.choice("line", tuple(lines), default="ittc_1957")
        for j, name in enumerate(compare):
            if name not in lines or name == line or name in compare[:j]:
                raise StudyError(f"{s.key('compare')}[{j}]", repr(plain(name, GIVEN_LIMIT)),
                                 "another friction line than the chosen one, once: one of "
                                 + ", ".join(repr(n) for n in lines if n != line))
        return ScaleEffect(method="friction_line", line=line,
                           form_factor=s.number("form_factor", default=0.0, low=0.0, high=5.0,
                                                what="a form factor k from 0 to 5"),
                           wetted_ratio=s.number("wetted_ratio", low=0.0, high=100.0,
                                                 low_open=True, what="S_wet / S_ref above 0, "
                                                 "e.g. 5.5"),
                           compare=compare)
    per = {"decade": {}, "mach": {}}  # type: dict[str, dict[str, float]]
    for k in sorted(sens):
        if s.has(k):
            name, _, x = k.rpartition("_per_")
            name = name[:-len("_coefficient")] if name.endswith("_coefficient") else name
            if name not in coefficients:
                raise StudyError(s.key(k), s.data[k], f"a sensitivity of a coefficient this "
                                 f"study measures ({name}_coefficient is not)")
            per[x][name] = s.number(k, low=-1.0, high=1.0, what="a sensitivity within +-1")
    if not per["decade"] and not per["mach"]:
        s.require("drag_per_decade", "at least one sensitivity, e.g. drag_per_decade = -0.0015 "
                  "(dCD / dlog10 Re)")
    return ScaleEffect(method="sensitivity", per_decade=per["decade"], per_mach=per["mach"],
                       uncertainty=uncertainty)


def _axis(s: Table, name: str, what: str, low: float, high: float, bounds: str,
          low_closed: bool = False) -> tuple[float, ...]:
    """An increasing list of numbers (at least two) of a scale-effect table."""
    raw = s.data[name]
    if (not isinstance(raw, list) or not 2 <= len(raw) <= TABLE_ENTRIES
            or not all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in raw)):
        raise StudyError(s.key(name), raw, f"a list of 2 to {TABLE_ENTRIES} plain numbers "
                         f"({what})")
    values = tuple(float(v) for v in raw)
    if not all(math.isfinite(v) and (low <= v if low_closed else low < v) and v <= high
               for v in values) or any(
            b <= a for a, b in zip(values, values[1:])):
        raise StudyError(s.key(name), raw, f"increasing {what} ({bounds})")
    return values


def _scale_table(s: Table, coefficients: dict, uncertainty: float) -> ScaleEffect:
    """``method = "table"``: ``reynolds`` (and ``mach``) and a column per coefficient."""
    s.require("reynolds", "the table's Reynolds numbers, increasing, e.g. [1e6, 3e6, 1e7]")
    reynolds = _axis(s, "reynolds", "Reynolds numbers", 0.0, 1e12, "above 0, at most 1e12")
    mach = _axis(s, "mach", "Mach numbers", 0.0, 10.0, "from 0 to 10", low_closed=True) \
        if s.has("mach") else ()
    shape = (f"a list of {len(mach)} rows (one per Mach number) of {len(reynolds)} numbers"
             if mach else f"a list of {len(reynolds)} numbers (one per Reynolds number)")
    table = {}
    for name in COEFFICIENTS:
        key = f"{name}_coefficient"
        if not s.has(key):
            continue
        if name not in coefficients:
            raise StudyError(s.key(key), "[...]", f"a table of a coefficient this study "
                             f"measures ({key} is not)")
        raw = s.data[key]
        rows = raw if mach else [raw]
        ok = isinstance(raw, list) and len(rows) == max(len(mach), 1) and all(
            isinstance(r, list) and len(r) == len(reynolds) and all(
                isinstance(v, (int, float)) and not isinstance(v, bool)
                and math.isfinite(v) and abs(v) <= 10.0 for v in r) for r in rows)
        if not ok:
            raise StudyError(s.key(key), raw, shape + " within +-10")
        table[name] = tuple(tuple(float(v) for v in r) for r in rows) if mach else tuple(
            float(v) for v in raw)
    if not table:
        s.require("drag_coefficient", "at least one coefficient column, e.g. drag_coefficient "
                  "= [0.031, 0.029, 0.028] (" + shape + ")")
    return ScaleEffect(method="table", reynolds=reynolds, mach=mach, table=table,
                       uncertainty=uncertainty)


def scale_inputs(m: Measurement | None, inputs: tuple[InputSpec, ...]) -> tuple[InputSpec, ...]:
    """The model-form input of a scale effect, unless the study writes an input on
    ``scale_effect_model`` itself: a fraction e, rectangular -- a Type B uncertainty.

    Friction line with ``compare``: e on [-1, 1] of the lines' spread by which the full-scale
    drag differs from the chosen line's prediction (the model forms the spread in each trial:
    the published lines' disagreement).  Table or sensitivity with ``uncertainty``: e on
    [-u, u] of the law's change of each coefficient from the tunnel to full scale."""
    se = None if m is None else m.scale_effect
    if se is None or not se.model_form:
        return ()
    if any("scale_effect_model" in spec.targets for spec in inputs):
        return ()
    if se.method == "friction_line":
        return (InputSpec("friction-line model form", "scale_effect_model", "rectangular",
                          "half_width", Parsed(1.0, True), 1.0,
                          f"the spread of {', '.join(se.compare)} about {se.line}", "",
                          "measurement.scale_effect.compare",
                          written=Written(suffix=f" × the spread of {', '.join(se.compare)} "
                                          f"about {se.line}")),)
    return (InputSpec(f"scale-effect {se.method} model form", "scale_effect_model",
                      "rectangular", "half_width", Parsed(se.uncertainty, False), 1.0,
                      f"+-{100 * se.uncertainty:g} % of the law's change to full scale", "",
                      "measurement.scale_effect.uncertainty",
                      written=Written(unit="%", suffix=" of the law's change to full scale")),)


def wall_inputs(data: Any, m: Measurement | None, inputs: tuple[InputSpec, ...]
                ) -> tuple[InputSpec, ...]:
    """The uncertain inputs of the wall corrections that the study does not write itself: each
    correction's relative error, rectangular, of half-width ``blockage_uncertainty`` or
    ``lift_interference_uncertainty`` (default :data:`DEFAULT_CORRECTION_UNCERTAINTY`)."""
    if m is None or m.walls is None:
        return ()
    w = Table(data["measurement"]["walls"], "measurement.walls", WALL_KEYS)
    written = {t for spec in inputs for t in spec.targets}
    present = {"solid_blockage_correction": True, "wake_blockage_correction": True,
               "lift_interference_correction": m.walls.boundary_factor is not None}
    out = []
    for target, (name, key) in WALL_INPUTS.items():
        if not present[target] or target in written:
            continue
        size = w.number(key, default=DEFAULT_CORRECTION_UNCERTAINTY, low=0.0, high=1.0,
                        low_open=True, allow_percent=True, what="a fraction of the correction "
                        "above 0 and at most 100 %, e.g. '25 %'")
        text = str(w.data[key]) if w.has(key) else \
            f"{100 * DEFAULT_CORRECTION_UNCERTAINTY:g} % (default)"
        out.append(InputSpec(name, target, "rectangular", "half_width", Parsed(size, True), 1.0,
                             f"{text} of the correction", "", f"measurement.walls.{key}",
                             written=Written(unit="%", suffix=" of the correction")))
    return tuple(out)


def _taps(t: Table) -> tuple[tuple[str, float], ...]:
    raw = t.data.get("tap", [])
    if not isinstance(raw, list):
        raise StudyError(t.key("tap"), raw, "an array of tables ([[measurement.tap]] entries)")
    taps: list[tuple[str, float]] = []
    for i, d in enumerate(raw):
        tt = Table(d, f"{t.key('tap')}[{i}]", TAP_KEYS)
        name = tt.text("name")
        if not _TAP_NAME.match(name):
            raise StudyError(tt.key("name"), repr(plain(name, GIVEN_LIMIT)),
                             "a tap name of letters, digits and underscores, starting with a "
                             "letter, at most 40 characters (it names the output "
                             "pressure_coefficient_<name>)")
        if name in [n for n, _ in taps]:
            raise StudyError(tt.key("name"), repr(name), "a name not used by another tap")
        taps.append((name, tt.number("pressure_coefficient", low=-100.0, high=1.0,
                                     what="a pressure coefficient between -100 and 1 (at most "
                                          "1, the stagnation value)")))
    return tuple(taps)


def _options(t: Table, balance: Table, capacity: dict) -> tuple[tuple[BalanceOption, ...],
                                                               float | None]:
    raw = t.data.get("balance_option", [])
    if not isinstance(raw, list):
        raise StudyError(t.key("balance_option"), raw,
                         "an array of tables ([[measurement.balance_option]] entries)")
    if not raw:
        if balance.has("price"):
            raise StudyError(balance.key("price"), balance.data["price"], "a price only with "
                             "[[measurement.balance_option]] candidates to compare it with")
        return (), None
    if not capacity:
        t.require("balance", "the written balance, whose components the options replace")
    balance.require("price", "the price of the written balance, which the allocation compares "
                    "with the balance options' prices (0 for the facility's own)")
    price = balance.number("price", low=0.0, what="the price of the written balance (a number "
                                                  "of zero or more)")
    options: list[BalanceOption] = []
    for i, d in enumerate(raw):
        ot = Table(d, f"{t.key('balance_option')}[{i}]", OPTION_KEYS)
        name = ot.text("name")
        if name in [o.name for o in options] or name == balance.text("name", "balance"):
            raise StudyError(ot.key("name"), repr(plain(name, GIVEN_LIMIT)),
                             "a name not used by the balance or another option")
        ct = Table(ot.require("capacity", "the option's capacity of every component of the "
                              "written balance"), ot.key("capacity"), tuple(BALANCE_COMPONENTS))
        ft = Table(ot.data.get("full_scale", {}), ot.key("full_scale"), tuple(BALANCE_COMPONENTS))
        for table in (ct, ft):
            extra = [c for c in table.data if c not in capacity]
            if extra:
                raise StudyError(table.key(extra[0]), table.data[extra[0]], "a component of "
                                 "the written balance: " + ", ".join(capacity),
                                 f"[measurement.balance] has no {extra[0]}")
        cap = {c: ct.quantity(c, BALANCE_COMPONENTS[c][0], why="every component of the written "
                              "balance") for c in capacity}
        fs = {c: ft.number(c, low=0.0, low_open=True, allow_percent=True,
                           what="an accuracy in % of full scale above zero, e.g. '0.05 %'")
              for c in capacity if ft.has(c)}
        options.append(BalanceOption(name=name, price=ot.number(
            "price", low=0.0, what="a price of zero or more"), capacity=cap, full_scale=fs,
            key=ot.prefix))
    return tuple(options), price


def check_measurement_inputs(inputs: tuple[InputSpec, ...], m: Measurement | None) -> None:
    """Inputs on the measuring chain need the part of [measurement] they act on; with balance
    options the other costed inputs are grades (the balance is a grade choice) and the balance's
    own inputs have no cost model (the options set them)."""
    for i, spec in enumerate(inputs):
        if m is None or not m.options or spec.cost is None:
            continue
        if spec.target.endswith("_indication") and spec.target[:-11] in m.capacity:
            raise StudyError(f"uncertain[{i}].{'grades' if spec.cost.kind == 'grades' else 'cost'}",
                             "a cost model on a balance input", "none: the "
                             "[[measurement.balance_option]] tables are the choices for the "
                             "balance's inputs")
        if spec.cost.kind == "power":
            raise StudyError(f"uncertain[{i}].cost", "a continuous cost with balance options",
                             "grades: the balance is a choice among grades, so every costed "
                             "input chooses among grades too")
    for i, spec in enumerate(inputs):
        for j, target in enumerate(spec.targets):
            if target not in MEASUREMENT_TARGETS:
                continue
            key = f"uncertain[{i}].perturbs" + (f"[{j}]" if len(spec.targets) > 1 else "")
            needs = None
            if m is None:
                needs = "a [measurement] section"
            elif target.endswith("_indication") and target[:-11] in BALANCE_COMPONENTS:
                if target[:-11] not in m.capacity:
                    needs = f"a {target[:-11].replace('_', ' ')} component in [measurement.balance]"
            elif target == "axial_force_interaction" and not {"normal_force", "axial_force"} <= \
                    set(m.capacity):
                needs = "normal_force and axial_force in [measurement.balance]"
            elif target == "moment_transfer_distance" and not {"normal_force",
                                                               "pitching_moment"} <= set(m.capacity):
                needs = "normal_force and pitching_moment in [measurement.balance]"
            elif target == "pressure_scanner_indication" and not m.taps:
                needs = "pressure taps ([[measurement.tap]])"
            elif target in ("attitude_indication", "flow_angularity") and not m.capacity:
                needs = "a balance (the angle of attack enters the balance's axis resolution)"
            elif target == "scale_effect_model" and (
                    m.scale_effect is None or m.scale_effect.method != "friction_line"):
                needs = "a friction-line scale effect ([measurement.scale_effect])"
            elif target in WALL_INPUTS and (m.walls is None or (
                    target == "lift_interference_correction" and m.walls.boundary_factor is None)):
                needs = ("a [measurement.walls] table" if m.walls is None else
                         "measurement.walls.boundary_factor")
            if needs:
                raise StudyError(key, repr(target), f"a quantity this study measures: it needs "
                                 f"{needs}")
            if spec.correction:
                raise StudyError(f"uncertain[{i}].correction", spec.correction,
                                 "no known correction on the measuring chain: the data reduction "
                                 "applies the balance, attitude, upflow and scanner calibrations, "
                                 "so state the uncertainty left after them")
