"""The set-point solver finds an exact match whatever the tolerances and priorities, and the
nearest point in priority order otherwise -- checked against CoolProp (an independent reference
library: nitrogen by Span et al. 2000 with Lemmon & Jacobsen 2004 transport; water by IAPWS-95
with the IAPWS 2008 viscosity) and hand calculations written here.

The studies are invented inputs; only the physics of their set points is checked.
"""

from __future__ import annotations

import math
import tomllib

import pytest

import simunc
from simunc.constants import STANDARD_GRAVITY, STANDARD_PRESSURE
from simunc.similitude.setpoint import build_model
from simunc.similitude.testplan import plan

from .conftest import ROOT
from .test_demo_physics import coolprop_nitrogen_reynolds

CP = pytest.importorskip("CoolProp.CoolProp")


def _cryogenic(tolerance: str, priorities: tuple[int, int] | None):
    data = tomllib.loads((ROOT / "studies" / "halden_cryogenic.toml").read_text())
    data["match"]["reynolds"] = {"tolerance": tolerance}
    if priorities is not None:
        data["match"]["reynolds"]["priority"] = priorities[0]
        data["match"]["mach"]["priority"] = priorities[1]
    return simunc.parse_study(data)


@pytest.mark.parametrize("tolerance", ["0.1 %", "2 %", "30 %", "300 %"])
@pytest.mark.parametrize("priorities", [None, (1, 2), (2, 1), (1, 9), (9, 1)])
def test_cryogenic_match_independent_of_band_width_and_priority(tolerance, priorities):
    sp = simunc.solve(_cryogenic(tolerance, priorities))
    assert sp.feasible and sp.method == "exact"
    # Exact: the model Reynolds number by CoolProp's nitrogen equals the full-scale one, and the
    # Mach numbers agree, at the solved T0 (a root does not depend on how the bands are weighed).
    p0, t0, m = (sp.nominal[k] for k in ("stagnation_pressure", "stagnation_temperature", "mach"))
    re = coolprop_nitrogen_reynolds(p0, t0, m, sp.nominal["model_length"])
    assert re == pytest.approx(sp.outputs["reynolds_full_scale"], rel=1e-6)
    assert sp.outputs["mach_difference"] == pytest.approx(0.0, abs=1e-9)
    assert t0 == pytest.approx(105.833, abs=5e-4)  # the figure the CoolProp check above reproduces


WATER_TUNNEL = """
title = "invented water tunnel at its speed limit"
[full_scale]
fluid = "fresh_water"
static_temperature = "15 degC"
depth = "5 m"
speed = "10 m/s"
reference_length = "6 m"
[facility]
fluid = "fresh_water"
temperature = "20 degC"
speed_range = ["1 m/s", "15 m/s"]
static_pressure_range = ["10 kPa", "400 kPa"]
[model]
scale = 0.1
[match]
solve_for = ["speed", "static_pressure"]
cavitation = { tolerance = "1 %", priority = 1 }
reynolds = { tolerance = "5 %", priority = 2 }
"""


def test_liquid_priority_order_reaches_the_speed_limit():
    sp = simunc.solve(simunc.parse_study(tomllib.loads(WATER_TUNNEL)))
    # Hand calculation with CoolProp water (IAPWS-95, IAPWS 2008 viscosity): the cavitation
    # number sigma = (p - p_v) / (rho U^2 / 2) is matched at any speed by the static pressure, and
    # Re = U L / nu grows with U, so the best Reynolds ratio is at the 15 m/s limit with
    # p = p_v + sigma_full * rho U^2 / 2.
    t_fs, t_m = 288.15, 293.15
    rho_fs = CP.PropsSI("Dmass", "T", t_fs, "P", STANDARD_PRESSURE, "Water")
    p_fs = STANDARD_PRESSURE + rho_fs * STANDARD_GRAVITY * 5.0
    pv_fs = CP.PropsSI("P", "T", t_fs, "Q", 0, "Water")
    sigma_fs = (p_fs - pv_fs) / (0.5 * rho_fs * 10.0**2)
    rho_m = CP.PropsSI("Dmass", "T", t_m, "P", 3e5, "Water")
    p_m = CP.PropsSI("P", "T", t_m, "Q", 0, "Water") + sigma_fs * 0.5 * rho_m * 15.0**2
    nu_m = CP.PropsSI("V", "T", t_m, "P", p_m, "Water") / rho_m
    nu_fs = CP.PropsSI("V", "T", t_fs, "P", p_fs, "Water") / rho_fs
    re_ratio = (15.0 * 0.6 / nu_m) / (10.0 * 6.0 / nu_fs)
    assert sp.nominal["speed"] == 15.0
    assert sp.binding == ["speed max 15 m/s"]
    assert sp.outputs["cavitation_ratio"] == pytest.approx(1.0, abs=1e-9)
    assert sp.nominal["static_pressure"] == pytest.approx(p_m, rel=2e-3)
    assert sp.outputs["reynolds_ratio"] == pytest.approx(re_ratio, rel=2e-3)
    # Not matched, so never called exact, and not feasible.
    assert not sp.feasible and sp.method == "least squares"


def test_matched_but_outside_a_given_limit_is_not_exact():
    data = tomllib.loads(WATER_TUNNEL)
    data["match"] = {"solve_for": "static_pressure", "cavitation": {"tolerance": "1 %"}}
    data["facility"]["speed"] = "12 m/s"
    data["facility"]["speed_range"] = ["1 m/s", "11 m/s"]      # the given speed is above it
    sp = simunc.solve(simunc.parse_study(data))
    assert sp.outputs["cavitation_ratio"] == pytest.approx(1.0, abs=1e-9)
    assert not sp.feasible and sp.method != "exact"


def test_towing_tank_sweep_holds_froude_and_spans_what_it_reports():
    study = simunc.load_study(ROOT / "studies" / "saltmarsh_towing_tank.toml")
    sp = simunc.solve(study)
    tp = plan(study, build_model(study), sp)
    # Froude similitude by hand: U_m = U_fs sqrt(L_m / L_fs) (the model length is 4 m, 1:30).
    u_froude = 7.2 * math.sqrt(sp.nominal["model_length"] / 120.0)
    sweep = [r for r in tp.runs if r.label != "C"]
    assert len(sweep) >= 3
    for r in sweep:
        assert r.state["speed"] == pytest.approx(u_froude, rel=1e-9)  # only the water temperature moves
    res = [r.outputs["reynolds_model"] for r in sweep]
    assert tp.reynolds_covered == (min(res), max(res))
    temps = sorted(r.state["temperature"] for r in sweep)
    assert temps[0] == pytest.approx(285.15) and temps[-1] == pytest.approx(297.15)  # 12..24 degC

