"""Every rejection case of a study: one line naming the key, what was given, what is expected; exit 2.

The checks are on simunc's own contract (DESIGN.md, "Bad input"), so no
outside source is involved; the physical limits quoted are definitions
(absolute pressure and temperature > 0, subsonic relations need Ma < 1).
"""

from __future__ import annotations

import subprocess
import sys

import pytest

from simunc.cli import main

DEMO_LINES = {
    "altitude": 'altitude = "11000 m"            # geometric, 1976 U.S. Standard Atmosphere',
    "mach": "mach = 0.78",
    "ref": 'reference_length = "3.2 m"      # mean aerodynamic chord',
    "t0": 'stagnation_temperature = "310 K"',
    "prange": 'stagnation_pressure_range = ["0.5 bar", "9 bar"]',
    "u_p0": 'expanded_uncertainty = "0.05 %"',
    "scale": "scale = 0.0625                  # 1:16",
    "chord": 'half_width = "0.05 mm"',
    "chord_dist": 'distribution = "rectangular"\nhalf_width = "0.05 mm"',
}


def _edit(text: str, line_key: str, new: str) -> str:
    old = DEMO_LINES[line_key]
    assert old in text, f"demo study no longer has line {old!r}"
    return text.replace(old, new, 1)


def _run_check(path, capsys):
    code = main(["check", str(path)])
    err = capsys.readouterr().err.strip()
    return code, err


CASES = [
    # (description, line to edit, replacement, words the message must contain)
    ("unknown key, nearest suggested", "t0", 'stagnation_temperatur = "310 K"',
     ["facility.stagnation_temperatur", "did you mean 'facility.stagnation_temperature'"]),
    ("missing key", "t0", "", ["facility.stagnation_temperature", "missing"]),
    ("wrong dimension for a pressure", "prange", 'stagnation_pressure_range = ["3 kg", "9 bar"]',
     ["facility.stagnation_pressure_range[0]", "3 kg", "pressure"]),
    ("wrong dimension for a temperature", "t0", 'stagnation_temperature = "310 m"',
     ["facility.stagnation_temperature", "310 m", "temperature"]),
    ("unknown unit", "t0", 'stagnation_temperature = "310 kelvinz"',
     ["facility.stagnation_temperature", "unknown unit"]),
    ("absolute pressure <= 0", "prange", 'stagnation_pressure_range = ["0 bar", "9 bar"]',
     ["facility.stagnation_pressure_range[0]", "greater than zero"]),
    ("absolute temperature <= 0", "t0", 'stagnation_temperature = "-300 degC"',
     ["facility.stagnation_temperature", "greater than zero"]),
    ("zero length", "ref", 'reference_length = "0 m"',
     ["full_scale.reference_length", "greater than zero"]),
    ("negative uncertainty", "u_p0", 'expanded_uncertainty = "-0.05 %"',
     ["uncertain[0].expanded_uncertainty", "-0.05 %", "greater than zero"]),
    ("Mach >= 1 with subsonic relations", "mach", "mach = 1.2",
     ["full_scale.mach", "1.2", "below 1"]),
    ("altitude outside the atmosphere model", "altitude", 'altitude = "120 km"',
     ["full_scale.altitude", "120 km", "86000 m"]),
    ("zero model scale", "scale", "scale = 0", ["model.scale", "above 0"]),
    ("normal distribution with limits", "chord_dist", 'distribution = "normal"\nhalf_width = "0.05 mm"',
     ["uncertain[6].distribution", "rectangular"]),
    ("wrong dimension for an input size", "chord", 'half_width = "0.05 K"',
     ["uncertain[6].half_width", "0.05 K", "length"]),
]


@pytest.mark.parametrize("desc,line,new,words", CASES, ids=[c[0] for c in CASES])
def test_rejection(desc, line, new, words, demo_text, write_study, capsys):
    path = write_study(_edit(demo_text, line, new))
    code, err = _run_check(path, capsys)
    assert code == 2, desc
    assert len(err.splitlines()) == 1, err
    assert err.startswith("simunc: error: study key '"), err
    assert "expected" in err
    for w in words:
        assert w in err, (w, err)


def test_unparsable_toml(write_study, capsys, demo_text):
    path = write_study(demo_text.replace("mach = 0.78", "mach = = 0.78", 1))
    code, err = _run_check(path, capsys)
    assert code == 2
    assert len(err.splitlines()) == 1
    assert "valid TOML" in err and "study.toml" in err


def test_unknown_top_level_table(write_study, capsys, demo_text):
    code, err = _run_check(write_study(demo_text + "\n[facilty]\nname = 'x'\n"), capsys)
    assert code == 2 and "did you mean 'facility'" in err


def test_unknown_perturbs_target(write_study, capsys, demo_text):
    text = demo_text.replace('perturbs = "model_reference_length"', 'perturbs = "model_length"', 1)
    code, err = _run_check(write_study(text), capsys)
    assert code == 2 and "uncertain[6].perturbs" in err and "model_reference_length" in err


def test_missing_file(tmp_path, capsys):
    code, err = _run_check(tmp_path / "nope.toml", capsys)
    assert code == 2 and "nope.toml" in err


def test_solved_quantity_also_given(write_study, capsys, demo_text):
    text = demo_text.replace(DEMO_LINES["t0"], DEMO_LINES["t0"] + '\nstagnation_pressure = "3 bar"', 1)
    code, err = _run_check(write_study(text), capsys)
    assert code == 2 and "facility.stagnation_pressure" in err and "solves for it" in err


def test_bad_cli_trials(capsys, tmp_path):
    with pytest.raises(SystemExit) as exc:
        main(["run", "x.toml", "--trials", "ten"])
    assert exc.value.code == 2
    assert "--trials" in capsys.readouterr().err


@pytest.mark.slow
def test_no_traceback_and_exit_code_from_console(write_study, demo_text, tmp_path):
    """The installed entry point path: a real process, exit 2, one line, no traceback, no report."""
    path = write_study(_edit(demo_text, "prange", 'stagnation_pressure_range = ["3 kg", "9 bar"]'))
    out = tmp_path / "report"
    proc = subprocess.run([sys.executable, "-m", "simunc", "run", str(path), "--out", str(out)],
                          capture_output=True, text=True)
    assert proc.returncode == 2
    assert "Traceback" not in proc.stderr
    assert len(proc.stderr.strip().splitlines()) == 1
    assert not out.exists()


# Set points outside the fluid model and incomplete limits, found by reviewing as a user.
def _facility_edit(demo_text, extra: str) -> str:
    return demo_text.replace('name = "Brackwater pressurised tunnel BPT-2 (fictional)"',
                             'name = "Brackwater pressurised tunnel BPT-2 (fictional)"\n' + extra, 1)


@pytest.mark.parametrize("extra,key,words", [
    # Nitrogen at 70 K is liquid at these pressures (CoolProp saturation line): no set point.
    ('gas = "nitrogen"\nstagnation_temperature_range = ["60 K", "70 K"]', "facility", "nitrogen"),
    ('gas = "moist_air"\nhumidity = { dew_point = "200 degC" }', "facility.humidity", "moist-air"),
    ('gas = "moist_air"', "facility.humidity", "missing"),
    ('max_blockage = "1 %"\ntest_section_area = "2 m^2"', "full_scale.frontal_area", "blockage"),
])
def test_set_point_outside_fluid_model_or_incomplete_limits(extra, key, words, demo_text,
                                                            write_study, capsys):
    text = _facility_edit(demo_text.replace('gas = "dry_air"\n', ""), extra)
    if "60 K" in extra:
        text = text.replace('stagnation_temperature = "310 K"\n', "").replace(
            'solve_for = "stagnation_pressure"', 'solve_for = "stagnation_temperature"').replace('stagnation_pressure_range = ["0.5 bar", "9 bar"]',
                                     'stagnation_pressure_range = ["0.5 bar", "9 bar"]\n'
                                     'stagnation_pressure = "3 bar"')
    code, err = _run_check(write_study(text), capsys)
    assert code == 2 and len(err.splitlines()) == 1, err
    assert f"study key '{key}'" in err and words in err
