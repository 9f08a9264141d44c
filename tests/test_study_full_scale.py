"""Full-scale condition from a study: altitude kinds against U.S. Standard Atmosphere 1976 Table 4."""

from __future__ import annotations

import pytest

from simunc.errors import StudyError
from simunc.study.readers import parse_study

from .test_setpoint import base_study


def _fs(**kw):
    d = base_study()
    d["full_scale"] = {"mach": 0.78, "reference_length": "3.2 m", **kw}
    return parse_study(d).full_scale


def test_pressure_altitude_is_geopotential():
    # 11 000 m' geopotential: 216.65 K, 22 632.06 Pa (from memory of USSA 1976, Table 4).
    fs = _fs(pressure_altitude="11000 m")
    assert fs.static_pressure == pytest.approx(22_632.06, rel=1e-6)
    assert fs.static_temperature == pytest.approx(216.65, abs=1e-9)


def test_pressure_altitude_in_feet_with_offset():
    # 36 089.24 ft = 11 000 m' exactly (1 ft = 0.3048 m); ISA + 10 K keeps the pressure.
    fs = _fs(pressure_altitude="36089.2388 ft", temperature_offset="10 K")
    assert fs.static_pressure == pytest.approx(22_632.06, rel=1e-6)
    assert fs.static_temperature == pytest.approx(226.65, abs=1e-5)


def test_altitude_with_static_temperature():
    # Sea level standard pressure 101 325 Pa (USSA 1976) with a measured 30 degC day.
    fs = _fs(altitude="0 m", static_temperature="30 degC")
    assert fs.static_pressure == pytest.approx(101_325.0, rel=1e-12)
    assert fs.static_temperature == pytest.approx(303.15, abs=1e-12)
    assert fs.temperature_offset == pytest.approx(15.0, abs=1e-12)


def test_offset_and_static_temperature_together_rejected():
    with pytest.raises(StudyError, match="only one of"):
        _fs(altitude="0 m", static_temperature="30 degC", temperature_offset="5 K")
