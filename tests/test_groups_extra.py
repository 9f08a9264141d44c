"""simunc.physics.groups: Froude, Strouhal, reduced frequency, Weber, Prandtl, Euler,
pressure coefficient and cavitation number.

Check values come from
* Incropera & DeWitt, *Fundamentals of Heat and Mass Transfer*, Tables A.4
  (air) and A.6 (saturated water): mu, c_p, k and the tabulated Pr at the same
  temperature (from memory of Incropera & DeWitt, Tables A.4 and A.6);
* hand calculations written out in each test from the physics they rest on
  (deep-water wave dispersion, Bernoulli's equation for the potential flow
  round a cylinder, Froude scaling of ship models, Theodorsen's
  semi-chord convention, NACA Report 496);
* the vapour pressure of water near 20 degC, 2337 Pa (from memory of White,
  *Fluid Mechanics*, Table A.5), used only as an input;
* a dimensional check with pint: every group evaluated on Quantities in mixed
  units must be dimensionless and equal to its value in SI floats;
* a cross-check with simunc.physics.dimensional: the default Buckingham group of each
  group's own variables has the exponents of the formula implemented here.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from simunc.physics import groups as G
from simunc.physics.dimensional import pi_groups
from simunc.units import ureg

Q = ureg.Quantity


# --- Froude ------------------------------------------------------------------

def test_froude_hull_wave_equals_waterline():
    # Deep-water dispersion omega^2 = g k gives the phase speed c = sqrt(g lambda / (2 pi)).
    # A hull at the speed whose transverse wave is as long as the waterline L:
    # Fr = c / sqrt(g L) = 1 / sqrt(2 pi) = 0.398942...
    for L in (5.0, 100.0, 300.0):
        c = math.sqrt(G.STANDARD_GRAVITY * L / (2 * math.pi))
        assert float(G.froude(c, L)) == pytest.approx(1 / math.sqrt(2 * math.pi), rel=1e-14)
    assert 1 / math.sqrt(2 * math.pi) == pytest.approx(0.398942, abs=1e-6)


def test_froude_scaling_of_a_ship_model():
    # Same Fr for a 1:25 model means V_m = V_p / sqrt(25) = V_p / 5.
    # Prototype 150 m at 9.26 m/s: Fr = 9.26 / sqrt(9.80665 * 150) = 0.24140...
    fr_p = G.froude(9.26, 150.0)
    assert float(fr_p) == pytest.approx(9.26 / math.sqrt(9.80665 * 150.0), rel=1e-15)
    assert float(fr_p) == pytest.approx(0.2414, abs=1e-4)
    assert float(G.froude(9.26 / 5.0, 150.0 / 25.0)) == pytest.approx(float(fr_p), rel=1e-14)


def test_froude_default_gravity_and_other_gravity():
    assert G.STANDARD_GRAVITY == 9.80665            # CGPM 1901, exact
    assert float(G.froude(math.sqrt(9.80665 * 2.0), 2.0)) == pytest.approx(1.0, rel=1e-15)
    # On the Moon (g = 1.62 m/s^2) the same Fr needs sqrt(1.62 / 9.80665) of the speed.
    v = 3.0 * math.sqrt(1.62 / 9.80665)
    assert float(G.froude(v, 4.0, 1.62)) == pytest.approx(float(G.froude(3.0, 4.0)), rel=1e-14)


# --- Strouhal and reduced frequency ------------------------------------------

def test_strouhal_cylinder_shedding():
    # Circular cylinder, St ~ 0.21 at subcritical Re (from memory of Roshko, NACA
    # Report 1191, 1954): D = 25 mm at 8 m/s sheds at f = St V / D = 67.2 Hz.
    f = 0.21 * 8.0 / 0.025
    assert f == pytest.approx(67.2)
    assert G.strouhal(67.2, 0.025, 8.0) == pytest.approx(0.21, rel=1e-14)


def test_reduced_frequency_conventions():
    # k = omega b / V with b = c/2 (Theodorsen, NACA Report 496, 1935).
    # c = 1 m, V = pi m/s, f = 1 Hz: omega = 2 pi, k = 2 pi * 0.5 / pi = 1.
    assert G.reduced_frequency(1.0, 1.0, math.pi, hertz=True) == pytest.approx(1.0, rel=1e-15)
    assert G.reduced_frequency(2 * math.pi, 1.0, math.pi) == pytest.approx(1.0, rel=1e-15)
    # Full-chord value omega c / V is twice k.
    assert G.reduced_frequency(12.0, 0.4, 30.0) == pytest.approx(0.5 * 12.0 * 0.4 / 30.0)
    # Relation to Strouhal on the chord: k = pi St_c.
    st_c = G.strouhal(7.0, 0.4, 30.0)
    assert G.reduced_frequency(7.0, 0.4, 30.0, hertz=True) == pytest.approx(math.pi * st_c)


# --- Weber and Prandtl ----------------------------------------------------------

def test_weber_hand_case():
    # 1 mm water drop at 10 m/s, rho = 998.2 kg/m^3, sigma = 0.0728 N/m:
    # We = 998.2 * 100 * 0.001 / 0.0728 = 99.82 / 0.0728 = 1371.15...
    assert G.weber(998.2, 10.0, 1e-3, 0.0728) == pytest.approx(1371.15, abs=0.01)
    # Doubling the speed quadruples We.
    assert G.weber(998.2, 20.0, 1e-3, 0.0728) == pytest.approx(4 * 1371.1538, rel=1e-6)


# (from memory of Incropera & DeWitt, Fundamentals of Heat and Mass Transfer,
# Table A.4 (air, 1 atm) and Table A.6 (saturated liquid water)):
# T [K], mu [Pa s], cp [J/(kg K)], k [W/(m K)], tabulated Pr
INCROPERA = [
    ("air 300 K", 184.6e-7, 1007.0, 26.3e-3, 0.707),
    ("air 400 K", 230.1e-7, 1014.0, 33.8e-3, 0.690),
    ("water 300 K", 855e-6, 4179.0, 613e-3, 5.83),
]


@pytest.mark.parametrize("label, mu, cp, k, pr", INCROPERA, ids=[r[0] for r in INCROPERA])
def test_prandtl_incropera_tables(label, mu, cp, k, pr):
    # Each tabulated entry has 3-4 significant figures; their rounding allows
    # about 0.3 % in the product (0.05 % + 0.05 % + 0.2 %).
    assert G.prandtl(mu, cp, k) == pytest.approx(pr, rel=3e-3)


# --- Euler, pressure coefficient, cavitation number -------------------------------

def test_euler_is_half_the_pressure_coefficient():
    rho, V, dp = 998.0, 3.0, 4500.0
    # 4500 / (998 * 9) = 0.501002...
    assert G.euler(dp, rho, V) == pytest.approx(4500.0 / 8982.0, rel=1e-15)
    assert G.euler(dp, rho, V) == pytest.approx(0.5 * G.pressure_coefficient(dp, 0.0, rho, V))
    assert G.euler(rho * V**2, rho, V) == pytest.approx(1.0)


def test_pressure_coefficient_potential_cylinder():
    # Potential flow round a circular cylinder: surface speed u = 2 V sin(theta), so
    # Bernoulli gives p - p_inf = rho (V^2 - u^2) / 2 and Cp = 1 - 4 sin^2(theta):
    # 1 at the stagnation point, -3 at the shoulder (theta = 90 deg).
    rho, V, p_inf = 1.225, 25.0, 101325.0
    theta = np.radians([0.0, 30.0, 90.0, 150.0, 180.0])
    u = 2.0 * V * np.sin(theta)
    p = p_inf + 0.5 * rho * (V**2 - u**2)
    cp = G.pressure_coefficient(p, p_inf, rho, V)
    assert cp == pytest.approx([1.0, 0.0, -3.0, 0.0, 1.0], abs=1e-12)


def test_cavitation_number_hand_case():
    # Water near 20 degC, rho = 998.2 kg/m^3, p_v = 2337 Pa (from memory of White,
    # Fluid Mechanics, Table A.5); body 5 m below a free surface at 101325 Pa, 10 m/s:
    # p = 101325 + 998.2 * 9.80665 * 5 = 150270.0...; sigma = (p - 2337) / 49910 = 2.9640...
    p = 101325.0 + 998.2 * 9.80665 * 5.0
    assert p == pytest.approx(150270.0, abs=0.1)
    assert G.cavitation_number(p, 2337.0, 998.2, 10.0) == pytest.approx(
        (150270.0 - 2337.0) / 49910.0, rel=1e-6)
    assert G.cavitation_number(2337.0, 2337.0, 998.2, 10.0) == 0.0


def test_cavitation_inception_criterion():
    # Cavitation starts where the local pressure falls to p_v, i.e. Cp = -sigma.
    p, pv, rho, V = 2.0e5, 2337.0, 998.2, 12.0
    assert G.pressure_coefficient(pv, p, rho, V) == pytest.approx(
        -G.cavitation_number(p, pv, rho, V), rel=1e-15)


# --- vectorization, units, consistency with Buckingham Pi ------------------------

FUNCS = {
    # name: (function, SI args, Quantity args in other units)
    "froude": (G.froude, (5.0, 2.0, 9.80665),
               (Q(18.0, "km/h"), Q(200.0, "cm"), Q(9.80665, "m/s^2"))),
    "strouhal": (G.strouhal, (60.0, 0.03, 9.0),
                 (Q(3600.0, "1/min"), Q(30.0, "mm"), Q(32.4, "km/h"))),
    "reduced_frequency": (G.reduced_frequency, (12.0, 0.3, 20.0),
                          (Q(12.0, "rad/s"), Q(300.0, "mm"), Q(72.0, "km/h"))),
    "weber": (G.weber, (998.0, 5.0, 0.002, 0.0728),
              (Q(0.998, "g/cm^3"), Q(18.0, "km/h"), Q(2.0, "mm"), Q(72.8, "mN/m"))),
    "prandtl": (G.prandtl, (1.846e-5, 1007.0, 0.0263),
                (Q(1.846e-2, "cP"), Q(1.007, "kJ/(kg K)"), Q(26.3, "mW/(m K)"))),
    "euler": (G.euler, (12000.0, 998.0, 2.0),
              (Q(0.12, "bar"), Q(0.998, "g/cm^3"), Q(7.2, "km/h"))),
    "pressure_coefficient": (G.pressure_coefficient, (101000.0, 100000.0, 1.2, 30.0),
                             (Q(1010.0, "hPa"), Q(1.0, "bar"), Q(1.2, "kg/m^3"),
                              Q(108.0, "km/h"))),
    "cavitation_number": (G.cavitation_number, (150000.0, 2337.0, 998.0, 10.0),
                          (Q(1.5, "bar"), Q(2.337, "kPa"), Q(998.0, "kg/m^3"),
                           Q(36.0, "km/h"))),
}


@pytest.mark.parametrize("name", FUNCS)
def test_dimensionless_with_pint_in_mixed_units(name):
    func, si, quantities = FUNCS[name]
    out = func(*quantities)
    assert out.dimensionless
    assert float(out.to("dimensionless").magnitude) == pytest.approx(float(func(*si)), rel=1e-12)


@pytest.mark.parametrize("name", FUNCS)
def test_vectorized_broadcasting(name):
    func, si, _ = FUNCS[name]
    scale = np.array([0.5, 1.0, 2.0])
    args = (si[0] * scale,) + si[1:]
    out = func(*args)
    assert out.shape == (3,)
    assert out[1] == pytest.approx(float(func(*si)), rel=1e-15)
    expected = [float(func(si[0] * s, *si[1:])) for s in scale]
    assert out == pytest.approx(expected, rel=1e-15)


@pytest.mark.parametrize("variables, exponents, func", [
    # Default Buckingham group of the variables of each formula.
    ({"rho": "kg/m^3", "V": "m/s", "L": "m", "sigma": "N/m"},
     {"rho": 1, "V": 2, "L": 1, "sigma": -1},
     lambda v: G.weber(v["rho"], v["V"], v["L"], v["sigma"])),
    ({"mu": "Pa s", "cp": "J/(kg K)", "k": "W/(m K)"},
     {"mu": 1, "cp": 1, "k": -1}, lambda v: G.prandtl(v["mu"], v["cp"], v["k"])),
    ({"f": "Hz", "L": "m", "V": "m/s"},
     {"f": 1, "L": 1, "V": -1}, lambda v: G.strouhal(v["f"], v["L"], v["V"])),
    ({"dp": "Pa", "rho": "kg/m^3", "V": "m/s"},
     {"dp": 1, "rho": -1, "V": -2}, lambda v: G.euler(v["dp"], v["rho"], v["V"])),
    # Froude: the integer group is the square V^2 / (g L).
    ({"V": "m/s", "L": "m", "g": "m/s^2"},
     {"V": 2, "L": -1, "g": -1}, lambda v: G.froude(v["V"], v["L"], v["g"]) ** 2),
], ids=["weber", "prandtl", "strouhal", "euler", "froude"])
def test_formula_matches_buckingham_group(variables, exponents, func):
    (pi,) = pi_groups(variables)
    assert pi.exponents == exponents
    values = {n: 1.0 + 0.37 * i for i, n in enumerate(variables)}
    assert pi.evaluate(values) == pytest.approx(float(func(values)), rel=1e-14)
