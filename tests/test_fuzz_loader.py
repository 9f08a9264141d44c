"""Property-based fuzzing of the study loader and the set-point solver.

Studies are the demo studies with one to three random edits: a value replaced by a random
TOML value (strings, numbers including NaN and infinities, booleans, dates and times, arrays,
tables, and value-like strings such as ``"3.2 (m"``), a key deleted, or a key inserted into a
table.  Each edited study goes through the loader (``parse_study``, and ``load_study`` from the
written TOML) and, when it loads, through ``simunc.prepare`` (the set-point solver, the model,
the inputs and the extreme-quantile check).  The property: nothing but simunc's own error
(:class:`simunc.errors.SimuncError`) ever comes out, and an error is one line with no Python repr.

The default run tries a bounded number of examples (deterministic, so the suite is stable);
the larger run is marked ``slow`` and ``fuzz`` (``pytest -m fuzz``).
"""

from __future__ import annotations

import copy
import re
import tomllib
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import simunc
from simunc.errors import SimuncError
from simunc.study.readers import load_study, parse_study
from tests.tomlwriter import dumps

ROOT = Path(__file__).resolve().parent.parent
#: Python reprs that must never reach the user. (Not ``True`` or ``None`` alone: the fuzzer's
#: random text may spell them itself, as a key or a name.)
REPRS = re.compile(r"datetime\.(date|time)|\{'[^']*': |object at 0x|array\(|<class ")
STUDIES = [tomllib.loads(p.read_text()) for p in sorted((ROOT / "studies").glob("*.toml"))]

#: Strings shaped like study values, good and bad.
VALUE_TEXT = ["1 m", "0.3 m", "-1 m", "0 m", "1e300 m", "1e999 m", "12 %", "0.05 %", "-2 %",
              "0 K", "310 K", "-300 degC", "12 degC", "2.5 bar", "0 bar", "3.2 (m", "3.2 m/0",
              "3 m**1e9", "1 kelvin**2", "3 ((((((m))))))", "nan", "inf m", "2 furlongs",
              "stated", "adaptive", "inf", "normal", "rectangular", "triangular", "trapezoidal",
              "lognormal", "truncated_normal", "reynolds", "mach", "froude", "euler", "prandtl",
              "dry_air", "air_real", "nitrogen", "moist_air", "fresh_water", "sea_water",
              " stagnation_pressure ", "stagnation_pressure", "speed", "model_scale", "gas",
              "log", "linear", "random", "sobol", "lhs", "systematic", "mach_indication",
              "static_pressure_indication", "viscosity_model", "full_scale_temperature",
              "T0 thermometer", "carriage speed", "95 %", "100 %", "0.78", "0.3", "10",
              "\x1b[31mred", "a\nb", "<script>", "$x$", "é∞", ""]

scalars = st.one_of(
    st.booleans(),
    st.integers(min_value=-(2**63), max_value=2**63 - 1),
    st.sampled_from([0, 1, 2, 3, 4, 100, 1000, 10**9, -1]),
    st.floats(allow_nan=True, allow_infinity=True),
    st.sampled_from([0.0, 0.5, 0.78, 1.0, 1.5, -0.5, 1e-300, 1e300]),
    st.text(max_size=20),
    st.sampled_from(VALUE_TEXT),
    st.dates(),
    st.datetimes(),
    st.times(),
)
values = st.recursive(
    scalars,
    lambda inner: st.lists(inner, max_size=4) | st.dictionaries(
        st.sampled_from(["tolerance", "priority", "solve", "name", "perturbs", "half_width",
                         "powers", "speed", "a", "x y"]) | st.text(max_size=8), inner, max_size=3),
    max_leaves=6,
)


def _paths(d, pre=()):
    out = []
    if isinstance(d, dict):
        for k, v in d.items():
            out.append(pre + (k,))
            out += _paths(v, pre + (k,))
    elif isinstance(d, list):
        for i, v in enumerate(d):
            out.append(pre + (i,))
            out += _paths(v, pre + (i,))
    return out


def _tables(d, pre=()):
    out = [pre] if isinstance(d, dict) else []
    if isinstance(d, dict):
        for k, v in d.items():
            out += _tables(v, pre + (k,))
    elif isinstance(d, list):
        for i, v in enumerate(d):
            out += _tables(v, pre + (i,))
    return out


def _node(d, path):
    for p in path:
        d = d[p]
    return d


#: Factors for the "scale" edit: a number (alone or before a unit) multiplied, which keeps most
#: studies loadable and sends them on to the solver with odd magnitudes.
FACTORS = [0.0, -1.0, 1e-9, 1e-3, 0.1, 0.5, 0.9, 1.1, 2.0, 10.0, 1e3, 1e6, 1e300]
_NUMBER = re.compile(r"^(\s*)([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)(.*)$", re.S)


def _scaled(v, factor: float):
    if isinstance(v, bool):
        return not v
    if isinstance(v, int):
        return int(v * factor) if abs(v * factor) < 2**63 else v
    if isinstance(v, float):
        return v * factor
    if isinstance(v, str):
        m = _NUMBER.match(v)
        if m:
            return f"{m.group(1)}{float(m.group(2)) * factor:.6g}{m.group(3)}"
    return v


edit = st.tuples(st.sampled_from(["replace", "replace", "delete", "insert", "scale", "scale"]),
                 st.integers(min_value=0, max_value=10**6), values,
                 st.sampled_from(["tolerance", "scale", "priority", "solve", "perturbs", "name",
                                  "points", "trials", "enlarged", "custom", "correction", "beta",
                                  "grades", "depth", "humidity", "mach", "speed", "frobnicate"]))


@st.composite
def mutated_studies(draw):
    data = copy.deepcopy(draw(st.sampled_from(STUDIES)))
    for kind, index, value, key in draw(st.lists(edit, min_size=1, max_size=3)):
        if kind == "insert":
            tables = _tables(data)
            _node(data, tables[index % len(tables)])[key] = value
            continue
        paths = _paths(data)
        if not paths:
            break
        path = paths[index % len(paths)]
        parent = _node(data, path[:-1])
        if kind == "delete":
            del parent[path[-1]]
        elif kind == "scale":
            parent[path[-1]] = _scaled(parent[path[-1]], FACTORS[index % len(FACTORS)])
        else:
            parent[path[-1]] = value
    return data


class Tally:
    examples = 0
    loaded = 0
    refused = 0


def _exercise(data: dict, tmp_path: Path) -> None:
    Tally.examples += 1
    try:
        # beside the demo studies, so that a matrix's coefficient file is found
        study = parse_study(data, str(ROOT / "studies" / "fuzz.toml"))
        simunc.prepare(study)
        Tally.loaded += 1
    except SimuncError as exc:
        Tally.refused += 1
        text = str(exc)
        assert "\n" not in text and not REPRS.search(text), text
    # the same study written as TOML and read from the file
    path = tmp_path / "fuzz.toml"
    try:
        path.write_text(dumps(data), encoding="utf-8")
    except (TypeError, UnicodeEncodeError):
        return  # a value TOML cannot hold (a lone surrogate): nothing to read
    try:
        load_study(path)
    except SimuncError as exc:
        assert "\n" not in str(exc) and not REPRS.search(str(exc)), str(exc)


COMMON = dict(deadline=None, database=None, derandomize=True,
              suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large,
                                      HealthCheck.function_scoped_fixture])


@settings(max_examples=300, **COMMON)
@given(data=mutated_studies())
def test_loader_and_solver_raise_only_simunc_errors(data, tmp_path):
    _exercise(data, tmp_path)


@pytest.mark.slow
@pytest.mark.fuzz
@settings(max_examples=3000, **COMMON)
@given(data=mutated_studies())
def test_loader_and_solver_raise_only_simunc_errors_long(data, tmp_path):
    _exercise(data, tmp_path)


def test_the_fuzzer_reaches_both_outcomes():
    """The edits are neither all harmless nor all fatal (the property is not vacuous)."""
    import random

    from hypothesis import find

    rng = random.Random(1)
    loaded = refused = 0
    for _ in range(60):
        data = copy.deepcopy(rng.choice(STUDIES))
        paths = _paths(data)
        path = paths[rng.randrange(len(paths))]
        _node(data, path[:-1])[path[-1]] = rng.choice(VALUE_TEXT)
        try:
            parse_study(data)
            loaded += 1
        except SimuncError:
            refused += 1
    assert loaded > 0 and refused > 0
    # and hypothesis's strategy produces both a loading and a refused study
    find(mutated_studies(), lambda d: _loads(d), settings=settings(database=None, max_examples=500))
    find(mutated_studies(), lambda d: not _loads(d),
         settings=settings(database=None, max_examples=500))


def _loads(data) -> bool:
    try:
        parse_study(data)
        return True
    except SimuncError:
        return False
