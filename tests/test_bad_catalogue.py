"""A catalogue of malformed studies, generated from the demo studies in studies/.

Each bad study must end as the README promises for bad input: exit code 2 and ONE line on
standard error that names the study key (or the command-line option) at fault, with no
traceback, no "internal error", no Python repr (``True``, ``{'a': 1}``, ``datetime.date(...)``)
and no echo of more than about 200 characters of the value given.  The contract is simunc's
own, so no outside source is involved.

The mutations: wrong types at every value of every demo study, bad numbers (NaN, infinite,
overflowing) and bad units at every dimensional value, an unknown key in every table, missing
required keys, and a hand-written list of bad distributions, correlations, requirements,
sweeps, implausible values and the crashes of issue 11 (units that broke the parser, nesting a
thousand deep, non-physical extremes of an input, too many grade combinations, ...).
"""

from __future__ import annotations

import copy
import re
import shutil
import tomllib
from pathlib import Path
from typing import Any, NamedTuple

import pytest

from simunc.cli import main
from tests.tomlwriter import dumps

ROOT = Path(__file__).resolve().parent.parent
STUDIES = {p.stem: tomllib.loads(p.read_text()) for p in sorted((ROOT / "studies").glob("*.toml"))}
#: Python reprs that must never reach the user (TOML spells these true, [..], {..}, dates).
REPRS = re.compile(r"\bTrue\b|\bFalse\b|\bNone\b|datetime\.|\{'[^']*': |\bnp\.|array\(|"
                   r"object at 0x|<class ")
#: A mutation that loads (the value is valid where it lands); listed so that the generated
#: catalogue stays honest about what it skips.
VALID_MUTATIONS = {
    ("saltmarsh_towing_tank", "full_scale.depth", "-1 m"),
}


class Case(NamedTuple):
    name: str          # pytest id
    study: str         # demo study it starts from
    text: str          # the bad study, as TOML
    keys: tuple        # the message must name one of these


Path_ = tuple  # a path into the study dict: str keys and int indices


def _dotted(path: Path_) -> str:
    out = ""
    for p in path:
        out += f"[{p}]" if isinstance(p, int) else (f".{p}" if out else str(p))
    return out


def _leaves(d: Any, path: Path_ = ()) -> list[tuple[Path_, Any]]:
    if isinstance(d, dict):
        return [x for k, v in d.items() for x in _leaves(v, path + (k,))]
    if isinstance(d, list):
        return [x for i, v in enumerate(d) for x in _leaves(v, path + (i,))]
    return [(path, d)]


def _tables(d: Any, path: Path_ = ()) -> list[Path_]:
    out = []
    if isinstance(d, dict):
        out.append(path)
        for k, v in d.items():
            out += _tables(v, path + (k,))
    elif isinstance(d, list):
        for i, v in enumerate(d):
            if isinstance(v, dict):
                out += _tables(v, path + (i,))
    return out


def _set(d: dict, path: Path_, value: Any) -> dict:
    d = copy.deepcopy(d)
    node = d
    for p in path[:-1]:
        node = node[p]
    node[path[-1]] = value
    return d


def _delete(d: dict, path: Path_) -> dict:
    d = copy.deepcopy(d)
    node = d
    for p in path[:-1]:
        node = node[p]
    del node[path[-1]]
    return d


def _accepted_keys(path: Path_) -> tuple[str, ...]:
    """The key itself, or the list or table holding it (a pair's entry is named by the pair)."""
    keys = [_dotted(path)]
    while path and isinstance(path[-1], int):
        path = path[:-1]
        keys.append(_dotted(path))
    return tuple(keys)


#: Dimensional strings: a number and a unit.
_DIMENSIONAL = re.compile(r"^\s*-?\d[\d.]*(e-?\d+)?\s+\S")
#: Free text, where any string is fine.
_FREE_TEXT = ("title", "description", "name", "note")


def _generated() -> list[Case]:
    cases = []
    for study, data in STUDIES.items():
        for path, v in _leaves(data):
            key = _dotted(path)
            if path[-1] in _FREE_TEXT:  # any string will do: only a wrong type is bad
                cases.append(Case(f"{study}:{key}=table", study,
                                  dumps(_set(data, path, {"a": 1})), _accepted_keys(path)))
                continue
            if not isinstance(v, bool):
                cases.append(Case(f"{study}:{key}=true", study, dumps(_set(data, path, True)),
                                  _accepted_keys(path)))
            cases.append(Case(f"{study}:{key}=table", study, dumps(_set(data, path, {"a": 1})),
                              _accepted_keys(path)))
            if isinstance(v, (int, float)) and not isinstance(v, bool):
                cases.append(Case(f"{study}:{key}=nan", study,
                                  dumps(_set(data, path, float("nan"))), _accepted_keys(path)))
            if isinstance(v, str) and _DIMENSIONAL.match(v):
                number, unit = v.split(None, 1)
                for tag, bad in (("overflow", f"1e999 {unit}"), ("paren", f"{number} ({unit}"),
                                 ("div0", f"{number} {unit}/0"),
                                 ("dimension", f"{number} furlong**9"),
                                 ("deep", f"{number} " + "(" * 1000 + unit + ")" * 1000),
                                 ("words", f"{number} {unit} and a bit")):
                    cases.append(Case(f"{study}:{key}={tag}", study, dumps(_set(data, path, bad)),
                                      _accepted_keys(path)))
        for top in data:
            if isinstance(data[top], (dict, list)):
                cases.append(Case(f"{study}:{top}=5", study, dumps(_set(data, (top,), 5)),
                                  (top,)))
        for tpath in _tables(data):
            if tpath and tpath[-1] in ("groups", "custom", "powers"):
                continue  # tables of names the user chooses
            bogus = tpath + ("frobnicate",)
            cases.append(Case(f"{study}:{_dotted(bogus)}=unknown", study,
                              dumps(_set(data, bogus, 1)), (_dotted(bogus),)))
    return [c for c in cases if (c.study, c.keys[0], _value_of(c)) not in VALID_MUTATIONS]


def _value_of(case: Case) -> str:
    return case.name.rsplit("=", 1)[-1]


def _missing() -> list[Case]:
    """Required keys deleted (each demo study: the keys it cannot do without)."""
    required = {
        "arven_cruise": ["full_scale", "facility", "match", "full_scale.reference_length",
                         "full_scale.mach", "full_scale.altitude",
                         "facility.stagnation_pressure_range", "facility.stagnation_temperature",
                         "match.reynolds.tolerance", "uncertain[0].perturbs",
                         "uncertain[0].expanded_uncertainty", "uncertain[1].half_width",
                         "requirement[1].probability", "sweep[0].inputs", "correlations.pairs",
                         "model.scale"],
        "saltmarsh_towing_tank": ["full_scale.static_temperature", "full_scale.speed",
                                  "facility.speed_range", "match.froude.tolerance",
                                  "uncertain[2].expanded_uncertainty", "model.scale"],
        "halden_cryogenic": ["full_scale.reference_length", "facility.stagnation_pressure_range",
                             "uncertain[0].perturbs"],
        "arven_cruise_low_pressure": ["full_scale.mach", "match"],
    }
    cases = []
    for study, keys in required.items():
        data = STUDIES[study]
        for key in keys:
            path: list = []
            for part in re.findall(r"[^.\[\]]+|\[\d+\]", key):
                path.append(int(part[1:-1]) if part.startswith("[") else part)
            missing_key = key
            if key == "model.scale":
                missing_key = "model.scale"
            if key == "facility.speed_range":
                missing_key = "facility.speed_range"
            cases.append(Case(f"{study}:{key}=missing", study, dumps(_delete(data, tuple(path))),
                              (missing_key,)))
    return cases


def _text(study: str, old: str, new: str) -> str:
    text = (ROOT / "studies" / f"{study}.toml").read_text()
    assert old in text, f"{study} no longer has {old!r}"
    return text.replace(old, new, 1)


A = "arven_cruise"
END = 'groups = { "temperature chain" = ["T0 thermometer", "T0 control stability"] }'
S = "saltmarsh_towing_tank"
H = "halden_cryogenic"
L = "arven_cruise_low_pressure"
B = "arven_cruise_balance"

#: Hand-written cases: (id, study, old text, new text, key the message names).
_HAND = [
    # the crashes of issue 11
    ("static transducer u = 12 %", A, 'standard_uncertainty = "0.03 %"',
     'standard_uncertainty = "12 %"', "uncertain[2].standard_uncertainty"),
    ("prandtl band on a liquid facility", S, 'reynolds = { tolerance = "5 %" }',
     'reynolds = { tolerance = "5 %" }\nprandtl = { tolerance = "1 %" }', "match.prandtl"),
    ("isentropic exponent band on a liquid facility", S, 'reynolds = { tolerance = "5 %" }',
     'reynolds = { tolerance = "5 %" }\nisentropic_exponent = { tolerance = "1 %" }',
     "match.isentropic_exponent"),
    ("unit with an open parenthesis", A, 'reference_length = "3.2 m"',
     'reference_length = "3.2 (m"', "full_scale.reference_length"),
    ("unit divided by zero", A, 'reference_length = "3.2 m"', 'reference_length = "3.2 m/0"',
     "full_scale.reference_length"),
    ("custom = 5", A, "[match]\n", "[match]\ncustom = 5\n", "match.custom"),
    ("custom group not a table", A, "[match]\n", '[match]\ncustom = { g = 5 }\n',
     "match.custom.g"),
    ("TOML nested a thousand deep", A, "[run]\n", "[run]\nx = " + "[" * 1000 + "]" * 1000 + "\n",
     "(file)"),
    ("inline tables nested deep", A, "[run]\n", "[run]\nx = " + "{a = " * 400 + "1" + "}" * 400 +
     "\n", "(file)"),
    ("unit nested a thousand deep", A, 'stagnation_temperature = "310 K"',
     'stagnation_temperature = "310 ' + "(" * 1000 + "K" + ")" * 1000 + '"',
     "facility.stagnation_temperature"),
    ("unit with a huge power", A, 'stagnation_temperature = "310 K"',
     'stagnation_temperature = "310 K**1e400"', "facility.stagnation_temperature"),
    ("solve_for not a name", A, 'solve_for = "stagnation_pressure"', 'solve_for = "pressure"',
     "match.solve_for"),
    ("solve_for twice", A, 'solve_for = "stagnation_pressure"',
     'solve_for = ["stagnation_pressure", " stagnation_pressure"]', "match.solve_for"),
    # implausible values refused
    ("model scale 10", A, "scale = 0.0625", "scale = 10", "model.scale"),
    ("model longer than full scale", A, "scale = 0.0625", 'reference_length = "4 m"',
     "model.reference_length"),
    ("length of 1e300 m", A, 'reference_length = "3.2 m"', 'reference_length = "1e300 m"',
     "full_scale.reference_length"),
    ("length of 2000 km", S, 'reference_length = "120 m"', 'reference_length = "2000 km"',
     "full_scale.reference_length"),
    ("enlarged not a flag", A, "scale = 0.0625", "scale = 0.0625\nenlarged = \"yes\"",
     "model.enlarged"),
    ("Mach band of 2", A, 'mach = { tolerance = "0.002" }', 'mach = { tolerance = "-0.3" }',
     "match.mach.tolerance"),
    # bad distributions
    ("normal with a half-width", A, 'distribution = "rectangular"\nhalf_width = "0.15 %"',
     'distribution = "normal"\nhalf_width = "0.15 %"', "uncertain[1].distribution"),
    ("unknown distribution", A, 'distribution = "triangular"', 'distribution = "cauchy"',
     "uncertain[8].distribution"),
    ("trapezoid without beta", A, 'distribution = "triangular"', 'distribution = "trapezoidal"',
     "uncertain[8].beta"),
    ("beta above 1", A, 'distribution = "triangular"', 'distribution = "trapezoidal"\nbeta = 2',
     "uncertain[8].beta"),
    ("beta without a trapezoid", A, 'distribution = "triangular"',
     'distribution = "triangular"\nbeta = 0.5', "uncertain[8].beta"),
    ("lognormal in kelvin", A, 'distribution = "triangular"\nhalf_width = "2 K"',
     'distribution = "lognormal"\nstandard_uncertainty = "2 K"', "uncertain[8].standard_uncertainty"),
    ("two sizes", A, 'expanded_uncertainty = "0.3 K"',
     'expanded_uncertainty = "0.3 K"\nstandard_uncertainty = "0.1 K"', "uncertain[4]"),
    ("no size", A, 'standard_uncertainty = "0.0006"', "", "uncertain[3].standard_uncertainty"),
    ("coverage factor zero", A, "coverage_factor = 2\nnote", "coverage_factor = 0\nnote",
     "uncertain[0].coverage_factor"),
    ("coverage factor with a half-width", A, 'half_width = "0.15 %"',
     'half_width = "0.15 %"\ncoverage_factor = 2', "uncertain[1].coverage_factor"),
    ("degrees of freedom 2", A, "coverage_factor = 2\nnote",
     "coverage_factor = 2\ndegrees_of_freedom = 2\nnote", "uncertain[0].degrees_of_freedom"),
    ("coverage probability 100 % for a normal", A, "coverage_factor = 2\nnote",
     'coverage_probability = "100 %"\ndegrees_of_freedom = "inf"\nnote',
     "uncertain[0].coverage_probability"),
    ("three readings", A, 'expanded_uncertainty = "0.3 K"\ncoverage_factor = 2',
     'readings = ["310 K", "310.1 K", "310.2 K"]', "uncertain[4].readings"),
    ("equal readings", A, 'expanded_uncertainty = "0.3 K"\ncoverage_factor = 2',
     'readings = ["310 K", "310 K", "310 K", "310 K"]', "uncertain[4].readings"),
    ("reading in metres", A, 'expanded_uncertainty = "0.3 K"\ncoverage_factor = 2',
     'readings = ["310 K", "310.1 K", "310 m", "310.2 K"]', "uncertain[4].readings[2]"),
    ("type A count 2", A, 'expanded_uncertainty = "0.3 K"\ncoverage_factor = 2',
     'type_a = { count = 2, standard_deviation = "0.1 K" }', "uncertain[4].type_a.count"),
    ("accuracy without terms", A, 'distribution = "normal"\nstandard_uncertainty = "0.03 %"',
     'accuracy = {}', "uncertain[2].accuracy"),
    ("accuracy full scale without range", A,
     'distribution = "normal"\nstandard_uncertainty = "0.03 %"',
     'accuracy = { full_scale = "0.1 %" }', "uncertain[2].accuracy.range"),
    ("accuracy on a fraction", A, 'half_width = "0.5 %"', 'accuracy = { reading = "0.5 %" }',
     "uncertain[7].accuracy"),
    ("resolution negative", A, 'distribution = "normal"\nstandard_uncertainty = "0.0006"',
     "resolution = -0.001", "uncertain[3].resolution"),
    ("truncated normal without limit", A, 'distribution = "normal"\nstandard_uncertainty = "0.0006"',
     'distribution = "truncated_normal"\nstandard_uncertainty = "0.0006"', "uncertain[3].half_width"),
    ("stated on an instrument", A, 'standard_uncertainty = "0.0006"',
     'standard_uncertainty = "stated"', "uncertain[3].standard_uncertainty"),
    ("perturbs unknown", A, 'perturbs = "mach_indication"', 'perturbs = "mach_indicator"',
     "uncertain[3].perturbs"),
    ("perturbs of a liquid on a gas", A, 'perturbs = "mach_indication"',
     'perturbs = "speed_control"', "uncertain[3].perturbs"),
    ("perturbs empty list", A, 'perturbs = "mach_indication"', "perturbs = []",
     "uncertain[3].perturbs"),
    ("perturbs twice", A, 'perturbs = "mach_indication"',
     'perturbs = ["mach_indication", "mach_indication"]', "uncertain[3].perturbs[1]"),
    ("component unknown", A, 'component = "random"', 'component = "sometimes"',
     "uncertain[1].component"),
    ("duplicate input name", A, 'name = "T0 thermometer"', 'name = "T0 control stability"',
     "uncertain[5].name"),
    ("correction in %", A, 'expanded_uncertainty = "0.3 K"',
     'expanded_uncertainty = "0.3 K"\ncorrection = "1 %"', "uncertain[4].correction"),
    # non-physical extremes of one input (refused by check, as run would refuse them)
    ("chord u = 50 mm", A, 'distribution = "rectangular"\nhalf_width = "0.05 mm"',
     'distribution = "normal"\nstandard_uncertainty = "50 mm"', "uncertain[6].standard_uncertainty"),
    ("carriage speed u = 40 %", S, 'standard_uncertainty = "0.1 %"',
     'standard_uncertainty = "40 %"', "uncertain[0].standard_uncertainty"),
    ("T0 half-width 400 K", A, 'half_width = "1.0 K"', 'half_width = "400 K"',
     "uncertain[5].half_width"),
    # correlations
    ("correlation unknown input", A, '"static-pressure transducer", 0.8',
     '"static pressure transducer", 0.8', "correlations.pairs[0]"),
    ("correlation above 1", A, '"static-pressure transducer", 0.8', '"static-pressure transducer", 1.5',
     "correlations.pairs[0]"),
    ("correlation of 1", A, '"static-pressure transducer", 0.8', '"static-pressure transducer", 1',
     "correlations"),
    ("correlation as text", A, '"static-pressure transducer", 0.8',
     '"static-pressure transducer", "0.8"', "correlations.pairs[0]"),
    ("correlation with itself", A, '["p0 transducer calibration", "static-pressure transducer", 0.8]',
     '["p0 transducer calibration", "p0 transducer calibration", 0.8]', "correlations.pairs[0]"),
    ("correlation pair twice", A, '["p0 transducer calibration", "static-pressure transducer", 0.8]',
     '["p0 transducer calibration", "static-pressure transducer", 0.8], '
     '["static-pressure transducer", "p0 transducer calibration", 0.5]', "correlations.pairs[1]"),
    ("correlations contradict", A, '["p0 transducer calibration", "static-pressure transducer", 0.8]',
     '["p0 transducer calibration", "static-pressure transducer", 0.9], '
     '["p0 transducer calibration", "T0 thermometer", 0.9], '
     '["static-pressure transducer", "T0 thermometer", -0.9]', "correlations"),
    ("correlation entry of two", A, '["p0 transducer calibration", "static-pressure transducer", 0.8]',
     '["p0 transducer calibration", 0.8]', "correlations.pairs[0]"),
    # requirements
    ("requirement on an unknown group", A, 'group = "reynolds"', 'group = "froude"',
     "requirement[0].group"),
    ("requirement output and group", A, 'group = "reynolds"',
     'group = "reynolds"\noutput = "reynolds_ratio"', "requirement[0].group"),
    ("requirement without a kind", A, 'expanded_uncertainty = "1.5 %"', "",
     "requirement[0].expanded_uncertainty"),
    ("requirement limit zero", A, "within = 0.0012", "within = 0", "requirement[1].within"),
    ("requirement % of a difference", A, "within = 0.0012", 'within = "1 %"',
     "requirement[1].within"),
    ("requirement probability 1", A, 'probability = "95 %"', "probability = 1",
     "requirement[1].probability"),
    ("conformity with an output", A, 'conformity = "95 %"',
     'conformity = "95 %"\noutput = "reynolds_ratio"', "requirement[2].output"),
    ("requirement unknown output", A, 'output = "mach_difference"', 'output = "mach_ratio"',
     "requirement[1].output"),
    ("cost at zero", A, "cost = { at_written = 5000 }", "cost = { at_written = 0 }",
     "uncertain[3].cost.at_written"),
    ("cost and grades", A, "cost = { at_written = 5000 }",
     'cost = { at_written = 5000 }\ngrades = [{ expanded_uncertainty = "0.001", price = 1 }]',
     "uncertain[3].grades"),
    ("grades of mixed kind", A, "cost = { at_written = 5000 }",
     'grades = [{ expanded_uncertainty = "0.001", price = 1 }]', "uncertain[3].grades"),
    ("grade with a negative price", A, "cost = { at_written = 1500, exponent = 1 }",
     'grades = [{ expanded_uncertainty = "0.1 %", price = -1 }]', "uncertain[0].grades[0].price"),
    ("cost on an uncontrollable input", A, 'perturbs = "full_scale_temperature"',
     'perturbs = "full_scale_temperature"\ncost = { at_written = 10 }', "uncertain[8].controllable"),
    # sweeps
    ("sweep of an unknown input", A, 'inputs = ["T0 control stability"]',
     'inputs = ["T0 control stabilty"]', "sweep[0].inputs[0]"),
    ("sweep of three inputs", A, 'inputs = ["T0 control stability"]',
     'inputs = ["T0 control stability", "T0 thermometer", "p0 control stability"]',
     "sweep[0].inputs"),
    ("sweep scale reversed", A, "scale = [0.1, 3.0]", "scale = [3.0, 0.1]", "sweep[0].scale"),
    ("sweep log from zero", A, "scale = [0.1, 3.0]", 'scale = [0.0, 3.0]\nspacing = "log"',
     "sweep[0].scale"),
    ("sweep of 200 points", A, "points = 9", "points = 200", "sweep[1].points"),
    ("sweep of 2 points", A, "points = 9", "points = 2", "sweep[1].points"),
    ("sweep 101 x 101 at 50000 trials", A, "points = 9", "points = 101", "sweep[1].points"),
    ("sweep spacing unknown", A, "scale = [0.1, 3.0]", 'scale = [0.1, 3.0]\nspacing = "cubic"',
     "sweep[0].spacing"),
    ("sweep budget too small", A, END, END + "\n[design]\nmax_sweep_evaluations = 1000",
     "sweep[0].points"),
    ("sweep budget zero", A, END, END + "\n[design]\nmax_sweep_evaluations = 10",
     "design.max_sweep_evaluations"),
    ("500 sweeps", A, END, END + '\n[[sweep]]\ninputs = ["T0 thermometer"]' * 500,
     ("sweep[119].points", "sweep[239].points")),
    # sensitivity, design, run
    ("sensitivity group of an unknown input", A, '["T0 thermometer", "T0 control stability"]',
     '["T0 thermometer", "T0 stability"]', "sensitivity.groups.temperature chain[1]"),
    ("input in two groups", A, '["T0 thermometer", "T0 control stability"]',
     '["T0 thermometer"], "other" = ["T0 thermometer"]', "sensitivity.groups.other"),
    ("shapley maybe", A, "second_order = true", 'second_order = true\nshapley = "maybe"',
     "sensitivity.shapley"),
    ("design trials 10", A, END, END + "\n[design]\ntrials = 10", "design.trials"),
    ("design largest scale 1", A, END, END + "\n[design]\nlargest_scale = 1",
     "design.largest_scale"),
    ("too many grade combinations", A, END, END + "".join(
        f'\n[[uncertain]]\nname = "extra {j}"\nperturbs = "stagnation_temperature_control"\n'
        'distribution = "rectangular"\nhalf_width = "0.01 K"\ngrades = [' + ", ".join(
            f'{{ expanded_uncertainty = "{0.001 * (g + 1)} K", price = {g} }}' for g in range(20))
        + "]" for j in range(5)), "uncertain[13].grades"),
    ("run trials 50", A, "trials = 200000", "trials = 50", "run.trials"),
    ("run trials as text", A, "trials = 200000", 'trials = "many"', "run.trials"),
    ("sobol base not a power of two", A, "sobol_base_samples = 4096", "sobol_base_samples = 1000",
     "run.sobol_base_samples"),
    ("sampling unknown", A, "seed = 20261201", 'seed = 20261201\nsampling = "halton"',
     "run.sampling"),
    ("coverage probability 1", A, "seed = 20261201", "seed = 20261201\ncoverage_probability = 1",
     "run.coverage_probability"),
    ("max trials small", S, "seed = 30", "seed = 30\nmax_trials = 10", "run.max_trials"),
    # full scale, facility, match
    ("altitude and static pressure", A, 'temperature_offset = "0 K"',
     'temperature_offset = "0 K"\nstatic_pressure = "1 bar"', "full_scale.static_pressure"),
    ("mach and speed", A, "mach = 0.78\nreference_length",
     'mach = 0.78\nspeed = "200 m/s"\nreference_length', "full_scale.speed"),
    ("supersonic speed", S, 'speed = "7.2 m/s"', 'speed = "7200 m/s"', "full_scale.speed"),
    ("temperature offset to 0 K", A, 'temperature_offset = "0 K"',
     'temperature_offset = "-300 K"', "full_scale.temperature_offset"),
    ("Mach on a liquid full scale", S, 'speed = "7.2 m/s"', "mach = 0.01", "full_scale.mach"),
    ("depth in a gas", A, 'temperature_offset = "0 K"', 'temperature_offset = "0 K"\ndepth = "1 m"',
     "full_scale.depth"),
    ("unknown fluid", A, 'gas = "dry_air"', 'gas = "helium"', "facility.gas"),
    ("gas and liquid fluids", A, 'gas = "dry_air"', 'gas = ["dry_air", "fresh_water"]',
     "facility.gas"),
    ("moist air without humidity", A, 'gas = "dry_air"', 'gas = "moist_air"', "facility.humidity"),
    ("humidity for dry air", A, 'gas = "dry_air"',
     'gas = "dry_air"\nhumidity = { relative_humidity = "50 %" }', "facility.humidity"),
    ("range reversed", A, 'stagnation_pressure_range = ["0.5 bar", "9 bar"]',
     'stagnation_pressure_range = ["9 bar", "0.5 bar"]', "facility.stagnation_pressure_range"),
    ("range of three", A, 'stagnation_pressure_range = ["0.5 bar", "9 bar"]',
     'stagnation_pressure_range = ["0.5 bar", "2 bar", "9 bar"]',
     "facility.stagnation_pressure_range"),
    ("mach range above 1", A, "mach_range = [0.1, 0.92]", "mach_range = [0.1, 1.5]",
     "facility.mach_range"),
    ("mach from unknown", A, 'mach_from = "pressure_ratio"', 'mach_from = "guess"',
     "facility.mach_from"),
    ("blockage without area", A, 'mach_from = "pressure_ratio"',
     'mach_from = "pressure_ratio"\nmax_blockage = "1 %"', "facility.test_section_area"),
    ("speed range for a gas", A, 'mach_from = "pressure_ratio"',
     'mach_from = "pressure_ratio"\nspeed_range = ["1 m/s", "2 m/s"]', "facility.speed_range"),
    ("solved value also given", A, 'stagnation_temperature = "310 K"',
     'stagnation_temperature = "310 K"\nstagnation_pressure = "2 bar"',
     "facility.stagnation_pressure"),
    ("no matched group", A, 'reynolds = { tolerance = "2 %" }    # |Re_model / Re_full - 1| <= 2 %\n'
     'mach = { tolerance = "0.002" }', "", "match"),
    ("tolerance zero", A, 'reynolds = { tolerance = "2 %" }', 'reynolds = { tolerance = "0 %" }',
     "match.reynolds.tolerance"),
    ("priority zero", A, 'reynolds = { tolerance = "2 %" }',
     'reynolds = { tolerance = "2 %", priority = 0 }', "match.reynolds.priority"),
    ("unknown group", A, 'reynolds = { tolerance = "2 %" }', 'reynolds = { tolerance = "2 %" }\n'
     'knudsen = { tolerance = "2 %" }', "match.knudsen"),
    ("strouhal without a frequency", A, 'reynolds = { tolerance = "2 %" }',
     'reynolds = { tolerance = "2 %" }\nstrouhal = { tolerance = "2 %" }', "full_scale.frequency"),
    ("weber on a gas", A, 'reynolds = { tolerance = "2 %" }',
     'reynolds = { tolerance = "2 %" }\nweber = { tolerance = "2 %" }', "match.weber"),
    ("Mach band on a liquid", S, 'reynolds = { tolerance = "5 %" }',
     'reynolds = { tolerance = "5 %" }\nmach = { tolerance = "0.01" }', "match.mach"),
    ("custom group not dimensionless", A, "[match]\n",
     '[match]\ncustom.g = { powers = { speed = 1 }, tolerance = "1 %" }\n', "match.custom.g.powers"),
    ("custom group named like a built-in", A, "[match]\n",
     '[match]\ncustom.froude = { powers = { speed = 1, length = -1, frequency = -1 }, '
     'tolerance = "1 %" }\n', "match.custom.froude"),
    ("custom group with an unknown quantity", A, "[match]\n",
     '[match]\ncustom.g = { powers = { colour = 1 }, tolerance = "1 %" }\n',
     "match.custom.g.powers.colour"),
    ("more unknowns than groups", A, 'solve_for = "stagnation_pressure"',
     'solve_for = ["stagnation_pressure", "stagnation_temperature", "model_scale"]',
     "match.solve_for"),
    ("dimensional analysis bad unit", A, "[run]\n",
     "[dimensional_analysis]\nvariables = { F = \"N\", rho = \"kg/m^\" }\n[run]\n",
     "dimensional_analysis.variables.rho"),
    # long values are echoed at most about 200 characters
    ("long unknown unit", A, 'stagnation_temperature = "310 K"',
     'stagnation_temperature = "310 ' + "kelvin" * 1000 + '"', "facility.stagnation_temperature"),
    ("long correlation name", A, '"static-pressure transducer", 0.8',
     '"' + "x" * 5000 + '", 0.8', "correlations.pairs[0]"),
    ("long perturbs", A, 'perturbs = "mach_indication"', 'perturbs = "' + "m" * 5000 + '"',
     "uncertain[3].perturbs"),
    ("long unknown key", A, "mach = 0.78\n", "mach = 0.78\n" + "k" * 5000 + " = 1\n",
     "full_scale.kkkkkkkkkk"),
    ("long list", A, "mach_range = [0.1, 0.92]", "mach_range = [" + ", ".join(["0.5"] * 3000) + "]",
     "facility.mach_range"),
    # text that is not a study
    ("not TOML", A, "[full_scale]", "[full_scale", "(file)"),
    ("title with a new line", A, 'title = "Arven', 'title = """Arven', "(file)"),
    # the measuring chain (issue 12)
    ("coefficient the balance does not measure", B, 'side_force = "10 kN"\n', "",
     "measurement.balance_option[0].capacity.side_force"),
    ("requirement on a coefficient not measured", B, 'output = "lift_coefficient"',
     'output = "rolling_moment_coefficients"', "requirement[1].output"),
    ("angle without unit", B, 'angle_of_attack = "2.5 deg"', 'angle_of_attack = "2.5"',
     "measurement.angle_of_attack"),
    ("angle in counts", B, 'angle_of_attack = "2.5 deg"', 'angle_of_attack = "25 counts"',
     "measurement.angle_of_attack"),
    ("no reference area", B, 'reference_area = "0.195 m^2"', "",
     "measurement.reference_area"),
    ("balance options without a price", B, "price = 0                           #", "#",
     "measurement.balance.price"),
    ("option capacity of a component the balance lacks", B, 'yawing_moment = "1.5 kN*m"\n', "",
     "measurement.balance_option[0].capacity.yawing_moment"),
    ("tap name with a space", B, 'name = "upper_10"', 'name = "upper 10"',
     "measurement.tap[0].name"),
    ("taps table misspelt", B, "[[measurement.tap]]\nname = \"upper_10\"",
     "[[measurement.taps]]\nname = \"upper_10\"", "measurement.taps"),
    ("correction on the balance", B, 'accuracy = { full_scale = "0.05 %", range = "30 kN" }',
     'accuracy = { full_scale = "0.05 %", range = "30 kN" }\ncorrection = "2 N"',
     "uncertain[7].correction"),
    ("balance without axial force", B, 'axial_force = "2 kN"\n', "",
     "measurement.balance.axial_force"),
    ("option that cannot carry is fine but a negative capacity is not", B, 'normal_force = "30 kN"',
     'normal_force = "-30 kN"', "measurement.balance.normal_force"),
    ("load margin as a force", B, 'load_margin = "25 %"', 'load_margin = "25 N"',
     "measurement.balance.load_margin"),
    ("Cp above one", B, "pressure_coefficient = 0.15", "pressure_coefficient = 1.5",
     "measurement.tap[3].pressure_coefficient"),
    ("alpha of 60 deg", B, 'angle_of_attack = "2.5 deg"', 'angle_of_attack = "60 deg"',
     "measurement.angle_of_attack"),
]


def _hand() -> list[Case]:
    return [Case(f"{study}:{name}", study, _text(study, old, new),
                 key if isinstance(key, tuple) else (key,))
            for name, study, old, new, key in _HAND]


def catalogue() -> list[Case]:
    """Every case, one per distinct bad study."""
    seen, out = set(), []
    for c in _generated() + _missing() + _hand():
        if c.text not in seen:
            seen.add(c.text)
            out.append(c)
    return out


CASES = catalogue()


def _check_line(err: str, keys) -> str:
    lines = err.strip().splitlines()
    assert len(lines) == 1, err
    line = lines[0]
    assert line.startswith("simunc: error: "), line
    assert "Traceback" not in line and "internal error" not in line, line
    assert not REPRS.search(line), line
    assert any(f"'{k}'" in line or f"{k}" in line for k in keys), (keys, line)
    m = re.search(r"given (.*?); expected", line)
    if m:
        assert len(m.group(1)) <= 210, line
    return line


def test_catalogue_has_at_least_150_distinct_bad_studies():
    assert len(CASES) >= 150
    assert len({c.text for c in CASES}) == len(CASES)
    assert {c.study for c in CASES} == set(STUDIES)


def _beside(tmp_path) -> None:
    """The demo studies' data files (a matrix's coefficient CSV) beside the bad study."""
    for f in (ROOT / "studies").glob("*.csv"):
        shutil.copy(f, tmp_path / f.name)


@pytest.mark.parametrize("case", CASES, ids=[c.name for c in CASES])
def test_check_refuses(case, tmp_path, capsys):
    path = tmp_path / "study.toml"
    path.write_text(case.text)
    _beside(tmp_path)
    code = main(["check", str(path)])
    io = capsys.readouterr()
    assert code == 2, (case.name, io.out, io.err)
    _check_line(io.err, case.keys)


#: Through ``simunc run --trials 200`` (with small design samples): every hand-written case and
#: every tenth generated one by default, the rest of the catalogue in the slow run.
_HAND_IDS = {f"{study}:{name}" for name, study, *_ in _HAND}
RUN_CASES = [c for j, c in enumerate(CASES) if c.name in _HAND_IDS or j % 10 == 0]
RUN_SLOW = [c for c in CASES if c not in RUN_CASES]


def _run(case: Case, tmp_path, capsys, *extra: str):
    path = tmp_path / "study.toml"
    text = case.text
    if "[design]" not in text and "design =" not in text:
        text += "\n[design]\ntrials = 1000\nverify_trials = 1000\n"
    path.write_text(text)
    _beside(tmp_path)
    out = tmp_path / "out"
    code = main(["run", str(path), "--trials", "200", "--out", str(out), "--workers", "0",
                 *extra])
    io = capsys.readouterr()
    return code, io, out


@pytest.mark.parametrize("case", RUN_CASES, ids=[c.name for c in RUN_CASES])
def test_run_refuses(case, tmp_path, capsys):
    code, io, out = _run(case, tmp_path, capsys)
    assert code == 2, (case.name, io.err)
    _check_line(io.err, case.keys)
    assert not (out / "results.json").exists()


@pytest.mark.slow
@pytest.mark.parametrize("case", RUN_SLOW, ids=[c.name for c in RUN_SLOW])
def test_run_refuses_slow(case, tmp_path, capsys):
    code, io, out = _run(case, tmp_path, capsys)
    assert code == 2, (case.name, io.err)
    _check_line(io.err, case.keys)
    assert not (out / "results.json").exists()
