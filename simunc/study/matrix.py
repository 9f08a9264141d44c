"""The ``[matrix]`` table: a test matrix of points around the study's own (its base point).

A matrix combines axes -- the full-scale Mach number, the angle of attack, a configuration, the
stagnation pressure -- as a product (``[matrix.axes]``) or lists its points one by one
(``[[matrix.point]]``); the expected coefficients come from the points, from a CSV file
(``coefficients``) or from the study.  The points along the run axis (by default the last axis)
make one run, in order: an input of ``[[matrix.drift]]`` drifts along a run.  docs/study-file.md
gives every key.
"""

from __future__ import annotations

import csv
import itertools
import math
from pathlib import Path
from typing import Any

from simunc.errors import GIVEN_LIMIT, StudyError, plain
from simunc.study.catalogue import COEFFICIENTS
from simunc.study.schema import (
    MATRIX_AXES,
    Drift,
    Matrix,
    MatrixDerived,
    MatrixPoint,
    Measurement,
    axis_values_text,
)
from simunc.study.table import Table
from simunc.units import parse

MATRIX_KEYS = ("combine", "axes", "point", "coefficients", "hold", "run_axis", "trials",
               "increment", "slope", "drift")
AXES_KEYS = MATRIX_AXES
POINT_KEYS = MATRIX_AXES + tuple(f"{c}_coefficient" for c in COEFFICIENTS)
INCREMENT_KEYS = ("name", "output", "axis", "minuend", "subtrahend", "expanded_uncertainty")
SLOPE_KEYS = ("name", "output", "axis", "expanded_uncertainty")
DRIFT_KEYS = ("input", "correlation")
#: Largest number of points of a matrix.
MAX_POINTS = 2000
#: Set-point variables a matrix may hold at the base set point.
HOLDABLE = ("stagnation_pressure", "stagnation_temperature", "mach", "speed", "temperature",
            "model_length")
#: Dimension of each axis's values.
AXIS_DIMENSION = {"mach": "dimensionless", "angle_of_attack": "angle",
                  "stagnation_pressure": "pressure"}


def _axis_value(key: str, axis: str, raw: Any) -> Any:
    """One value of an axis in SI (a configuration's label as written)."""
    if axis == "configuration":
        if not isinstance(raw, str) or not raw.strip():
            raise StudyError(key, raw, "a configuration label (text), e.g. \"clean\"")
        return raw.strip()
    value = parse(key, raw, AXIS_DIMENSION[axis]).value
    if not math.isfinite(value):
        raise StudyError(key, raw, "a finite value")
    if axis == "mach" and not 0.0 < value < 5.0:
        raise StudyError(key, raw, "a full-scale Mach number above 0 and below 5")
    if axis == "stagnation_pressure" and value <= 0.0:
        raise StudyError(key, raw, "a stagnation pressure above 0")
    if axis == "angle_of_attack" and abs(value) > math.radians(45.0):
        raise StudyError(key, raw, "an angle of attack within +-45 deg")
    return value


def _same(a: Any, b: Any) -> bool:
    if isinstance(a, str) or isinstance(b, str):
        return a == b
    return math.isclose(a, b, rel_tol=1e-9, abs_tol=1e-12)


def _csv_rows(key: str, name: str, base: Path, axes: tuple[str, ...]) -> list[tuple[dict, dict]]:
    """The rows of a coefficient CSV file: (axis values in SI, coefficients).  A header names an
    axis (with its unit in brackets for a dimensioned one: ``angle_of_attack [deg]``) or a
    coefficient (``drag_coefficient``)."""
    path = (base / name) if not Path(name).is_absolute() else Path(name)
    try:
        text = path.read_text()
    except (OSError, UnicodeDecodeError) as exc:
        raise StudyError(key, repr(name), "a readable CSV file of the expected coefficients "
                         f"(relative to the study file; {type(exc).__name__})") from None
    reader = csv.reader(line for line in text.splitlines() if not line.lstrip().startswith("#"))
    header = next(reader, None)
    if not header:
        raise StudyError(key, repr(name), "a CSV file with a header row")
    columns = []
    for h in header:
        field, _, unit = h.strip().partition("[")
        field, unit = field.strip(), unit.rstrip("]").strip()
        if field in axes:
            if field in AXIS_DIMENSION and AXIS_DIMENSION[field] != "dimensionless" and not unit:
                raise StudyError(key, f"column {h.strip()!r} of {name}", "a header with the "
                                 f"unit in brackets, e.g. '{field} [deg]'" if field ==
                                 "angle_of_attack" else f"'{field} [bar]'")
            columns.append(("axis", field, unit))
        elif field.endswith("_coefficient") and field[:-12] in COEFFICIENTS:
            columns.append(("coefficient", field[:-12], ""))
        else:
            raise StudyError(key, f"column {plain(h, GIVEN_LIMIT)!r} of {name}", "a column of "
                             "a matrix axis (" + ", ".join(axes) + ") or a coefficient such as "
                             "drag_coefficient")
    rows = []
    for n, raw in enumerate(reader, start=2):
        if not raw or all(not c.strip() for c in raw):
            continue
        if len(raw) != len(columns):
            raise StudyError(key, f"line {n} of {name} with {len(raw)} fields",
                             f"{len(columns)} fields, as in the header")
        values, coefficients = {}, {}
        for (kind, field, unit), cell in zip(columns, raw):
            where = f"{key} ({name}, line {n}, {field})"
            cell = cell.strip()
            if kind == "axis":
                values[field] = _axis_value(where, field, cell if field == "configuration" else (
                    f"{cell} {unit}" if unit else _number(where, cell)))
            else:
                coefficients[field] = _number(where, cell)
        rows.append((values, coefficients))
    return rows


def _number(key: str, cell: str) -> float:
    try:
        v = float(cell)
    except ValueError:
        raise StudyError(key, repr(cell), "a number") from None
    if not math.isfinite(v) or abs(v) > 10.0:
        raise StudyError(key, repr(cell), "a finite number within +-10")
    return v


def read_matrix(data: Any, *, measurement: Measurement | None, full_scale_given: str,
                unknowns: tuple[str, ...], input_names: list[str], outputs: set[str],
                path: str, max_trials: int, random_inputs: tuple[str, ...] = (),
                correlation: Any = None) -> Matrix:
    """``[matrix]`` -> :class:`Matrix` (module docstring)."""
    t = Table(data, "matrix", MATRIX_KEYS)
    combine = t.choice("combine", ("product", "list"), default="product")
    coefficients = dict(measurement.coefficients) if measurement is not None else {}
    if combine == "product":
        if t.has("point"):
            raise StudyError("matrix.point", "[[matrix.point]] tables", "combine = \"list\" "
                             "for points listed one by one (or [matrix.axes] alone)")
        a = Table(t.require("axes", "the axes of the matrix, e.g. [matrix.axes] mach = [0.7, "
                            "0.78]"), "matrix.axes", AXES_KEYS)
        axes = tuple(k for k in MATRIX_AXES if a.has(k))
        # keep the order the study wrote them in (the last is the run axis by default)
        axes = tuple(sorted(axes, key=list(a.data).index))
        if not axes:
            a.require("mach", "at least one axis: mach, angle_of_attack, configuration or "
                      "stagnation_pressure")
        levels = {}
        for ax in axes:
            raw = a.data[ax]
            if not isinstance(raw, list) or not raw:
                raise StudyError(a.key(ax), raw, "a list of values")
            vals = [_axis_value(f"{a.key(ax)}[{i}]", ax, v) for i, v in enumerate(raw)]
            for i, v in enumerate(vals):
                if any(_same(v, w) for w in vals[:i]):
                    raise StudyError(f"{a.key(ax)}[{i}]", raw[i], "each value once")
            levels[ax] = vals
        combos = [dict(zip(axes, c)) for c in itertools.product(*(levels[ax] for ax in axes))]
        if len(combos) > MAX_POINTS:
            raise StudyError("matrix.axes", f"{len(combos)} points", f"at most {MAX_POINTS}")
        rows = None
        if t.has("coefficients"):
            name = t.text("coefficients")
            rows = _csv_rows(t.key("coefficients"), name, Path(path).parent if path else
                             Path("."), axes)
        per_point = []
        for combo in combos:
            coef = dict(coefficients)
            if rows is not None:
                match = [c for v, c in rows if all(ax in v and _same(v[ax], combo[ax])
                                                   for ax in axes)]
                if not match:
                    raise StudyError(t.key("coefficients"), f"no row for {axis_values_text(combo.items())}",
                                     "a row of the CSV file for every point of the matrix")
                coef.update(match[0])
            per_point.append((combo, coef))
    else:
        if t.has("coefficients"):
            raise StudyError(t.key("coefficients"), t.data["coefficients"], "no coefficient file "
                             "with combine = \"list\" (each [[matrix.point]] gives its own "
                             "coefficients)")
        if t.has("axes"):
            raise StudyError("matrix.axes", "[matrix.axes]", "no axes with combine = \"list\" "
                             "(each [[matrix.point]] gives its own values)")
        raw_points = t.data.get("point")
        if not isinstance(raw_points, list) or not raw_points:
            t.require("point", "[[matrix.point]] tables, one per point")
            raise StudyError("matrix.point", raw_points, "an array of tables")
        if len(raw_points) > MAX_POINTS:
            raise StudyError("matrix.point", f"{len(raw_points)} points", f"at most {MAX_POINTS}")
        per_point, axes_seen = [], []
        for i, d in enumerate(raw_points):
            p = Table(d, f"matrix.point[{i}]", POINT_KEYS)
            combo = {ax: _axis_value(p.key(ax), ax, p.data[ax]) for ax in MATRIX_AXES
                     if p.has(ax)}
            if not combo:
                p.require("mach", "at least one axis value of the point")
            coef = dict(coefficients)
            for name in COEFFICIENTS:
                if p.has(f"{name}_coefficient"):
                    coef[name] = p.number(f"{name}_coefficient", low=-10.0, high=10.0,
                                          what="a coefficient within +-10")
            axes_seen += [ax for ax in combo if ax not in axes_seen]
            per_point.append((combo, coef))
        axes = tuple(axes_seen)
        for i, (combo, _) in enumerate(per_point):
            missing = [ax for ax in axes if ax not in combo]
            if missing:
                raise StudyError(f"matrix.point[{i}].{missing[0]}", "nothing", "a value on every "
                                 "axis some point uses (" + ", ".join(axes) + ")")
    # what the axes need from the study
    if "mach" in axes and full_scale_given != "mach":
        raise StudyError("matrix.axes.mach", "a Mach axis", "full_scale.mach (the full-scale "
                         "condition given as a Mach number)")
    if "angle_of_attack" in axes and measurement is None:
        raise StudyError("matrix.axes.angle_of_attack", "an angle axis", "a [measurement] "
                         "section (the angle of attack is the measurement's)")
    measured = set(measurement.coefficients) if measurement is not None else set()
    for i, (combo, coef) in enumerate(per_point):
        extra = [c for c in coef if c not in measured]
        if extra:
            where = ("matrix.coefficients" if combine == "product"
                     else f"matrix.point[{i}].{extra[0]}_coefficient")
            raise StudyError(where, f"{extra[0]}_coefficient", "a coefficient the balance in "
                             "[measurement] measures")
    if "angle_of_attack" in axes and not t.has("coefficients") and combine == "product":
        raise StudyError("matrix.coefficients", "none", "a CSV file of the expected "
                         "coefficients at each point (they change with the angle of attack)")
    run_axis = t.choice("run_axis", {a: a for a in axes}, default=axes[-1])
    hold = t.names("hold")
    for j, h in enumerate(hold):
        if h not in HOLDABLE or h not in unknowns:
            raise StudyError(f"{t.key('hold')}[{j}]", repr(plain(h, GIVEN_LIMIT)),
                             "a set-point variable the study solves: one of "
                             + ", ".join(k for k in HOLDABLE if k in unknowns))
    for j, h in enumerate(hold):
        if h in axes or (h == "mach" and "mach" in axes):
            raise StudyError(f"{t.key('hold')}[{j}]", repr(h), "a variable no axis sets (the "
                             f"{h} axis moves it from point to point)")
    if "stagnation_pressure" in axes and "stagnation_pressure" not in unknowns:
        raise StudyError("matrix.axes.stagnation_pressure", "a stagnation-pressure axis",
                         "a study that solves the stagnation pressure (match.solve_for)")
    points = _points(per_point, axes, run_axis)
    derived = tuple(_derived(d, i, kind, axes, points, outputs)
                    for kind, keys in (("increment", INCREMENT_KEYS), ("slope", SLOPE_KEYS))
                    for i, d in enumerate(_array(t, kind)))
    drift: list[Drift] = []
    for i, d in enumerate(_array(t, "drift")):
        dt = Table(d, f"matrix.drift[{i}]", DRIFT_KEYS)
        name = dt.text("input")
        if name not in input_names:
            raise StudyError(dt.key("input"), repr(plain(name, GIVEN_LIMIT)), "the name of an "
                             "[[uncertain]] input")
        if name not in random_inputs:
            raise StudyError(dt.key("input"), repr(plain(name, GIVEN_LIMIT)), "a random input "
                             "(component = \"random\"): a systematic one is shared by every "
                             "point already")
        if any(d.input == name for d in drift):
            raise StudyError(dt.key("input"), repr(plain(name, GIVEN_LIMIT)), "each input once")
        rho = dt.number("correlation", low=0.0, high=1.0, low_open=True, high_open=True,
                        what="a correlation between successive points above 0 and below 1")
        drift.append(Drift(input=name, correlation=rho))
    if correlation is not None:
        kinds = {n: ("drift" if any(d.input == n for d in drift) else
                     "random" if n in random_inputs else "systematic") for n in input_names}
        names = list(correlation.names)
        for i1 in range(len(names)):
            for i2 in range(i1 + 1, len(names)):
                r = float(correlation.matrix[i1, i2])
                ka, kb = kinds.get(names[i1]), kinds.get(names[i2])
                if r != 0.0 and (ka != kb or ka == "drift"):
                    raise StudyError("correlations", f"{names[i1]!r} ({ka}) with {names[i2]!r} "
                                     f"({kb})", "correlations between inputs of the same kind in "
                                     "a matrix study (both systematic or both random, none "
                                     "drifting): a shared error and a per-point one have no "
                                     "single correlation over the points")
    trials = t.integer("trials", min(20_000, max_trials), 1000)
    return Matrix(axes=axes, run_axis=run_axis, points=points, hold=hold, derived=derived,
                  drift=tuple(drift), trials=trials)


def _array(t: Table, key: str) -> list:
    raw = t.data.get(key, [])
    if not isinstance(raw, list):
        raise StudyError(t.key(key), raw, f"an array of tables ([[matrix.{key}]] entries)")
    return raw


def _points(per_point: list, axes: tuple[str, ...], run_axis: str) -> tuple[MatrixPoint, ...]:
    """Points with their runs: the points that agree on every axis but the run axis, in the
    order they come."""
    runs: dict[tuple, list[int]] = {}
    out = []
    for i, (combo, coef) in enumerate(per_point):
        others = tuple((ax, combo[ax]) for ax in axes if ax != run_axis)
        members = runs.setdefault(others, [])
        out.append(MatrixPoint(index=i, values=combo, coefficients=coef,
                               run=list(runs).index(others), position=len(members)))
        members.append(i)
    return tuple(out)


def _derived(d: Any, i: int, kind: str, axes: tuple[str, ...], points, outputs: set[str]
             ) -> MatrixDerived:
    t = Table(d, f"matrix.{kind}[{i}]", INCREMENT_KEYS if kind == "increment" else SLOPE_KEYS)
    output = t.choice("output", {o: o for o in sorted(outputs)})
    axis = t.choice("axis", {a: a for a in axes})
    name = t.text("name", f"{kind} of {output} over {axis}")
    limit = None
    if t.has("expanded_uncertainty"):
        unit = "dimensionless" if kind == "increment" or axis in ("configuration", "mach") else (
            "per_angle" if axis == "angle_of_attack" else "dimensionless")
        if kind == "slope" and axis == "stagnation_pressure":
            raise StudyError(t.key("expanded_uncertainty"), t.data["expanded_uncertainty"],
                             "no limit on a slope against the stagnation pressure")
        limit = parse(t.key("expanded_uncertainty"), t.data["expanded_uncertainty"], unit).value
        if not limit > 0.0 or not math.isfinite(limit):
            raise StudyError(t.key("expanded_uncertainty"), t.data["expanded_uncertainty"],
                             "a limit greater than zero")
    if kind == "slope":
        if axis == "configuration":
            raise StudyError(t.key("axis"), "'configuration'", "a numeric axis for a slope "
                             "(mach, angle_of_attack or stagnation_pressure)")
        per_run: dict[tuple, set] = {}
        for p in points:
            others = tuple((a, p.values[a]) for a in axes if a != axis)
            per_run.setdefault(others, set()).add(p.values[axis])
        if min(len(v) for v in per_run.values()) < 3:
            raise StudyError(t.key("axis"), repr(axis), "an axis with at least three values "
                             "at every combination of the other axes (a slope fitted to fewer "
                             "has no scatter to judge)")
        return MatrixDerived(key=t.prefix, kind="slope", name=name, output=output, axis=axis,
                             limit=limit)
    vals = {p.values[axis] for p in points}
    ends = []
    for k in ("minuend", "subtrahend"):
        raw = t.require(k, f"the {axis} value of the {'first' if k == 'minuend' else 'second'} "
                        "point of the increment")
        v = _axis_value(t.key(k), axis, raw)
        if not any(_same(v, w) for w in vals):
            raise StudyError(t.key(k), raw, f"a value of the {axis} axis")
        ends.append(v)
    if _same(ends[0], ends[1]):
        raise StudyError(t.key("subtrahend"), t.data["subtrahend"], "another value than the "
                         "minuend")
    return MatrixDerived(key=t.prefix, kind="increment", name=name, output=output, axis=axis,
                         minuend=ends[0], subtrahend=ends[1], limit=limit)
