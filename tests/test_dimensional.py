"""simunc.physics.dimensional: dimension matrices and Buckingham Pi groups.

Sources of the expected groups
* E. Buckingham, Phys. Rev. 4 (1914) 345: n - r independent groups, r the
  rank of the dimension matrix.
* F. M. White, *Fluid Mechanics*, ch. 5 (method of repeating variables):
  sphere drag C_D = f(Re); free-surface flow f(Fr, Re); pipe pressure drop
  Eu = f(Re, eps/D, L/D); forced convection Nu = f(Re, Pr)
  (from memory of White, Fluid Mechanics, sec. 5.3 and its problem sets).
* The pendulum, whose period cannot depend on the bob's mass (the classic
  opening example of dimensional analysis, e.g. Barenblatt 1996, ch. 1).
Every expected exponent set is also derived by hand in the comment next to
it (balance of M, L, T, Theta), so a test fails if either the code or the
recalled textbook result were wrong.

Sign convention under test: each group has one non-repeating variable to a
positive power, so e.g. the drag case gives F/(rho V^2 D^2) and
mu/(rho V D) = 1/Re.
"""

from __future__ import annotations

import math
from fractions import Fraction

import numpy as np
import pytest

from simunc.physics import groups as G
from simunc.physics.dimensional import (
    BASE_DIMENSIONS,
    dimension_matrix,
    group_formula,
    is_dimensionless,
    pi_groups,
)
from simunc.units import ureg

SPHERE = {"F": "N", "rho": "kg/m^3", "V": "m/s", "D": "m", "mu": "Pa s"}
FREE_SURFACE = {"V": "m/s", "L": "m", "g": "m/s^2", "rho": "kg/m^3", "mu": "Pa s"}
PIPE = {"dp": "Pa", "rho": "kg/m^3", "V": "m/s", "D": "m", "mu": "Pa s", "eps": "mm",
        "L": "m"}
PENDULUM = {"T": "s", "L": "m", "g": "m/s^2", "m": "kg"}
CONVECTION = {"h": "W/(m^2 K)", "k": "W/(m K)", "D": "m", "V": "m/s", "rho": "kg/m^3",
              "mu": "Pa s", "cp": "J/(kg K)"}
MACH = {"V": "m/s", "a": "m/s"}
FAN = {"P": "W", "rho": "kg/m^3", "omega": "rad/s", "D": "m", "Q": "m^3/s"}
WITH_ANGLE = {"Fl": "N", "alpha": "rad", "rho": "kg/m^3", "V": "m/s", "c": "m",
              "mu": "Pa s"}

# (variables, expected rank) -- rank counted by hand from the M, L, T, Theta rows.
CASES = [
    (SPHERE, 3), (FREE_SURFACE, 3), (PIPE, 3), (PENDULUM, 3), (CONVECTION, 4),
    (MACH, 1), (FAN, 3), (WITH_ANGLE, 3),
]
CASE_IDS = ["sphere", "free_surface", "pipe", "pendulum", "convection", "mach", "fan",
            "angle"]


def _pint_value(exponents, units):
    """The group's unit as a pint Quantity, built independently of the module."""
    q = ureg.Quantity(1.0, "dimensionless")
    for name, p in exponents.items():
        q = q * ureg.Quantity(1.0, units[name]) ** p
    return q


def _exponent_matrix(groups, names):
    return np.array([[g.exponents.get(n, 0) for n in names] for g in groups], dtype=float)


# --- dimension_matrix --------------------------------------------------------

def test_dimension_matrix_sphere_exact():
    m = dimension_matrix(SPHERE)
    assert m.dimensions == ("[mass]", "[length]", "[time]")
    assert m.variables == ("F", "rho", "V", "D", "mu")
    # N = kg m s^-2; kg m^-3; m s^-1; m; Pa s = kg m^-1 s^-1
    assert m.entries == ((1, 1, 0, 0, 1), (1, -3, 1, 1, -1), (-2, 0, -1, 0, -1))
    assert all(isinstance(x, Fraction) for row in m.entries for x in row)
    assert m.rank == 3
    assert m.column("mu") == {"[mass]": 1, "[length]": -1, "[time]": -1}
    assert m.to_numpy().shape == (3, 5)


def test_dimension_matrix_rows_only_present_in_standard_order():
    m = dimension_matrix(CONVECTION)
    assert m.dimensions == ("[mass]", "[length]", "[time]", "[temperature]")
    assert list(m.dimensions) == [d for d in BASE_DIMENSIONS if d in m.dimensions]
    # h: W m^-2 K^-1 = kg s^-3 K^-1
    assert m.column("h") == {"[mass]": 1, "[time]": -3, "[temperature]": -1}
    # cp: J kg^-1 K^-1 = m^2 s^-2 K^-1
    assert m.column("cp") == {"[length]": 2, "[time]": -2, "[temperature]": -1}
    m2 = dimension_matrix({"I": "A", "n": "mol", "Iv": "cd", "t": "s"})
    assert m2.dimensions == ("[time]", "[current]", "[substance]", "[luminosity]")


def test_dimension_matrix_accepts_units_quantities_and_dimensionalities():
    forms = {
        "a": "m/s",
        "b": ureg.parse_units("km/h"),
        "c": ureg.Quantity(3.0, "ft/min"),
        "d": "[length]/[time]",
        "e": "[velocity]",
        "f": "9.81 m/s",
    }
    m = dimension_matrix(forms)
    assert m.dimensions == ("[length]", "[time]")
    assert all(m.column(n) == {"[length]": 1, "[time]": -1} for n in forms)
    assert m.rank == 1


def test_dimension_matrix_dimensionless_and_fractional_columns():
    m = dimension_matrix({"x": "m^0.5", "n": 3, "alpha": "rad", "pct": "percent", "L": "m"})
    assert m.column("x") == {"[length]": Fraction(1, 2)}
    assert m.column("n") == m.column("alpha") == m.column("pct") == {}
    assert str(m).splitlines()[1].split() == ["[length]", "1/2", "0", "0", "0", "1"]


@pytest.mark.parametrize("bad, match", [
    ({"mu": "Pa ss"}, "variable 'mu': unknown unit"),
    ({"x": "furlongs per fortnight per"}, "variable 'x'"),
    ({"x": True}, "variable 'x'"),
    ({"x": [1, 2]}, "variable 'x'"),
    ({}, "empty"),
    ([("F", "N")], "mapping"),
    ({"": "m"}, "non-empty strings"),
])
def test_dimension_matrix_rejects_bad_input(bad, match):
    with pytest.raises(ValueError, match=match):
        dimension_matrix(bad)


# --- textbook cases with chosen repeating variables --------------------------

def test_sphere_drag_repeating_rho_V_D():
    # F rho^a V^b D^c: M 1+a=0, T -2-b=0, L 1-3a+b+c=0 -> a=-1, b=-2, c=-2.
    # mu rho^a V^b D^c: M 1+a=0, T -1-b=0, L -1-3a+b+c=0 -> a=-1, b=-1, c=-1.
    pis = pi_groups(SPHERE, repeating=["rho", "V", "D"])
    assert [g.name for g in pis] == ["Pi1", "Pi2"]
    assert pis[0].exponents == {"F": 1, "rho": -1, "V": -2, "D": -2}  # C_D / ... without 1/2
    assert pis[1].exponents == {"mu": 1, "rho": -1, "V": -1, "D": -1}  # 1 / Re
    assert pis[0].formula == "F rho^-1 V^-2 D^-2"
    assert pis[1].formula == "mu rho^-1 V^-1 D^-1"
    assert pis[0].variable == "F" and pis[0].repeating == ("rho", "V", "D")
    assert pis[0].as_dict() == {"name": "Pi1", "formula": "F rho^-1 V^-2 D^-2",
                                "exponents": {"F": 1, "rho": -1, "V": -2, "D": -2}}
    # The default choice (dependent variable F tried last) is the same set.
    assert [g.exponents for g in pi_groups(SPHERE)] == [g.exponents for g in pis]


def test_sphere_drag_other_repeating_set():
    # Repeating rho, V, mu: D rho V / mu = Re, and F rho / mu^2.
    # F rho^a V^b mu^c: M 1+a+c=0, T -2-b-c=0, L 1-3a+b-c=0 -> a=1, b=0, c=-2.
    pis = pi_groups(SPHERE, repeating=["mu", "rho", "V"])
    assert pis[0].exponents == {"F": 1, "rho": 1, "mu": -2}
    assert pis[1].exponents == {"D": 1, "rho": 1, "V": 1, "mu": -1}


def test_free_surface_froude_and_reynolds():
    # g rho^a V^b L^c: M a=0, T -2-b=0, L 1-3a+b+c=0 -> b=-2, c=1: g L / V^2 = 1/Fr^2.
    pis = pi_groups(FREE_SURFACE, repeating=["rho", "V", "L"])
    assert [g.exponents for g in pis] == [
        {"g": 1, "V": -2, "L": 1},
        {"mu": 1, "V": -1, "L": -1, "rho": -1},
    ]
    # Default repeating L, g, rho: V^2/(g L) = Fr^2 and the viscous group
    # mu^2 / (rho^2 g L^3) (a Galileo-type number; (Re/Fr)^-2 ... by hand:
    # (mu/(rho V L))^2 (V^2/(g L)) = mu^2 / (rho^2 g L^3)).
    default = pi_groups(FREE_SURFACE)
    assert default[0].exponents == {"V": 2, "L": -1, "g": -1}
    assert default[1].exponents == {"mu": 2, "L": -3, "g": -1, "rho": -2}


def test_pipe_pressure_drop():
    # dp/(rho V^2) (Euler), mu/(rho V D) (1/Re), eps/D, L/D.
    pis = pi_groups(PIPE, repeating=["rho", "V", "D"])
    assert [g.exponents for g in pis] == [
        {"dp": 1, "rho": -1, "V": -2},
        {"mu": 1, "rho": -1, "V": -1, "D": -1},
        {"eps": 1, "D": -1},
        {"L": 1, "D": -1},
    ]
    assert [g.formula for g in pis] == ["dp rho^-1 V^-2", "mu rho^-1 V^-1 D^-1", "eps D^-1",
                                        "L D^-1"]


def test_pendulum_mass_excluded():
    # T L^a g^b m^c: M c=0, L a+b=0, T 1-2b=0 -> b=1/2, a=-1/2, c=0; scaled by 2:
    # T^2 g / L = (T sqrt(g/L))^2.
    for rep in (None, ["L", "g", "m"]):
        pis = pi_groups(PENDULUM, repeating=rep)
        assert len(pis) == 1
        assert pis[0].exponents == {"T": 2, "L": -1, "g": 1}
        assert "m" not in pis[0].exponents
    # The unscaled rational solution is dimensionless too.
    assert is_dimensionless({"T": 1, "g": Fraction(1, 2), "L": Fraction(-1, 2)}, PENDULUM)


def test_pendulum_small_swing_value():
    # Small-amplitude period T = 2 pi sqrt(L/g), so T^2 g / L = 4 pi^2 for any L, g.
    (pi,) = pi_groups(PENDULUM)
    L, g = np.array([0.25, 1.0, 2.0]), np.array([9.80665, 9.80665, 1.62])
    T = 2 * math.pi * np.sqrt(L / g)
    assert np.allclose(pi.evaluate({"T": T, "L": L, "g": g}), 4 * math.pi**2, rtol=1e-12)


def test_forced_convection_nusselt_reynolds_prandtl():
    # Repeating k, D, mu, rho: h D / k (Nu), V D rho / mu (Re), cp mu / k (Pr).
    pis = pi_groups(CONVECTION, repeating=["k", "D", "rho", "mu"])
    assert [g.exponents for g in pis] == [
        {"h": 1, "k": -1, "D": 1},
        {"V": 1, "D": 1, "rho": 1, "mu": -1},
        {"cp": 1, "k": -1, "mu": 1},
    ]


def test_fan_laws():
    # Power and flow coefficients P/(rho omega^3 D^5), Q/(omega D^3); rad is dimensionless.
    pis = pi_groups(FAN, repeating=["rho", "omega", "D"])
    assert [g.exponents for g in pis] == [
        {"P": 1, "rho": -1, "omega": -3, "D": -5},
        {"Q": 1, "omega": -1, "D": -3},
    ]


def test_mach_rank_below_number_of_rows():
    m = dimension_matrix(MACH)
    assert len(m.dimensions) == 2 and m.rank == 1
    (pi,) = pi_groups(MACH)
    assert pi.exponents == {"V": 1, "a": -1}
    assert pi.evaluate({"V": 170.145, "a": 340.29}) == pytest.approx(G.mach(170.145, 340.29))


def test_dimensionless_variable_is_its_own_group_and_never_repeating():
    pis = pi_groups(WITH_ANGLE)
    assert pis[0].repeating == ("rho", "V", "c")
    assert "alpha" not in pis[0].repeating
    assert {"alpha": 1} in [g.exponents for g in pis]
    assert [g.exponents for g in pis] == [
        {"Fl": 1, "rho": -1, "V": -2, "c": -2},
        {"alpha": 1},
        {"mu": 1, "rho": -1, "V": -1, "c": -1},
    ]


def test_all_dimensionless():
    pis = pi_groups({"a": 1, "b": "rad", "c": "percent"})
    assert [g.exponents for g in pis] == [{"a": 1}, {"b": 1}, {"c": 1}]
    assert pis[0].repeating == ()
    assert pi_groups({"a": 1}, repeating=[])[0].formula == "a"


def test_no_groups_when_all_independent():
    assert pi_groups({"L": "m", "t": "s", "m": "kg"}) == []


# --- properties that hold for every case ------------------------------------

@pytest.mark.parametrize("variables, rank", CASES, ids=CASE_IDS)
def test_complete_independent_dimensionless_set(variables, rank):
    names = list(variables)
    assert dimension_matrix(variables).rank == rank
    # Independent check of the rank with floating-point linear algebra.
    assert np.linalg.matrix_rank(dimension_matrix(variables).to_numpy()) == rank
    pis = pi_groups(variables)
    assert len(pis) == len(names) - rank                              # Buckingham: n - r
    if pis:
        assert np.linalg.matrix_rank(_exponent_matrix(pis, names)) == len(pis)  # independent
    for g in pis:
        assert _pint_value(g.exponents, variables).dimensionless, g.formula   # pint agrees
        assert is_dimensionless(g.exponents, variables)
        assert all(isinstance(p, int) and p != 0 for p in g.exponents.values())
        assert math.gcd(*g.exponents.values()) == 1
        assert g.exponents[g.variable] > 0
        assert next(iter(g.exponents)) == g.variable
        assert set(g.exponents) <= {g.variable, *g.repeating}
    non_repeating = [n for n in names if n not in (pis[0].repeating if pis else ())]
    assert [g.variable for g in pis] == non_repeating


@pytest.mark.parametrize("variables, rank", CASES, ids=CASE_IDS)
def test_group_values_do_not_depend_on_units(variables, rank):
    # Evaluate with SI floats and with pint Quantities in other units: equal.
    rng = np.random.default_rng(7)
    si = {n: float(rng.uniform(0.5, 2.0)) for n in variables}
    alt_units = {"m": "cm", "m/s": "km/h", "Pa": "bar", "N": "lbf", "kg/m^3": "g/cm^3",
                 "Pa s": "cP", "W": "hp", "s": "min", "kg": "lb"}
    quantities = {}
    for n, u in variables.items():
        q = ureg.Quantity(si[n], ureg.parse_units(u)).to_base_units()
        si[n] = q.magnitude
        quantities[n] = q.to(alt_units.get(u, u))
    for g in pi_groups(variables):
        assert g.evaluate(quantities) == pytest.approx(g.evaluate(si), rel=1e-12)


def test_sphere_groups_match_groups_module():
    rho, V, D, mu, F = 1.225, 30.0, 0.2, 1.7894e-5, 12.0
    cd_like, inv_re = pi_groups(SPHERE)
    vals = {"F": F, "rho": rho, "V": V, "D": D, "mu": mu}
    assert inv_re.evaluate(vals) == pytest.approx(1.0 / G.reynolds(rho, V, D, mu), rel=1e-14)
    assert cd_like.evaluate(vals) == pytest.approx(F / (rho * V**2 * D**2), rel=1e-14)
    with pytest.raises(ValueError, match="needs a value of 'mu'"):
        inv_re.evaluate({"rho": rho, "V": V, "D": D})


# --- bad repeating sets ------------------------------------------------------

@pytest.mark.parametrize("variables, repeating, match", [
    (SPHERE, ["rho", "V"], "exactly 3 variable"),
    (SPHERE, ["rho", "V", "D", "mu"], "exactly 3 variable"),
    (SPHERE, [], "exactly 3 variable"),
    # F rho / mu^2 is dimensionless, so F, rho, mu cannot all repeat.
    (SPHERE, ["F", "rho", "mu"], r"not dimensionally independent: F rho mu\^-2"),
    # V^2 / (g L) is dimensionless (Froude).
    (FREE_SURFACE, ["V", "L", "g"], r"not dimensionally independent: V\^2 L\^-1 g\^-1"),
    # eps / D is dimensionless.
    (PIPE, ["rho", "eps", "D"], r"eps D\^-1 is dimensionless"),
    # mass is needed: without it [mass] is not spanned.
    (PENDULUM, ["T", "L", "g"], "not dimensionally independent"),
    (WITH_ANGLE, ["alpha", "rho", "V"], "'alpha' is dimensionless on its own"),
    (SPHERE, ["rho", "V", "d"], "unknown variable.*'d'"),
    (SPHERE, ["rho", "rho", "V"], "'rho' more than once"),
    (SPHERE, "rho", "list of variable names"),
    (SPHERE, 3, "list of variable names"),
])
def test_bad_repeating_rejected(variables, repeating, match):
    with pytest.raises(ValueError, match=match):
        pi_groups(variables, repeating=repeating)


# --- group_formula and is_dimensionless --------------------------------------

def test_group_formula():
    assert group_formula({"F": 1, "rho": -1, "V": -2, "D": -2}) == "F rho^-1 V^-2 D^-2"
    assert group_formula({"a": 0, "b": 1}) == "b"
    assert group_formula({"a": 0}) == "1"
    assert group_formula({}) == "1"
    assert group_formula({"g": Fraction(1, 2), "L": Fraction(-3, 2)}) == "g^(1/2) L^(-3/2)"
    assert group_formula({"g": 0.5, "L": 2.0}) == "g^0.5 L^2"
    assert group_formula({"g": "1/2", "x": "0"}) == "g^(1/2)"


def test_is_dimensionless():
    assert is_dimensionless({"F": 1, "rho": -1, "V": -2, "D": -2}, SPHERE)
    assert not is_dimensionless({"F": 1, "rho": -1, "V": -2, "D": -1}, SPHERE)
    assert is_dimensionless({"mu": -1, "rho": 1, "V": 1, "D": 1}, SPHERE)
    assert is_dimensionless({}, SPHERE)
    assert is_dimensionless({"F": 0}, SPHERE)
    # Halves as floats, Fractions and strings (T sqrt(g/L)).
    assert is_dimensionless({"T": 1, "g": 0.5, "L": -0.5}, PENDULUM)
    assert is_dimensionless({"T": "1", "g": "1/2", "L": "-1/2"}, PENDULUM)
    assert not is_dimensionless({"T": 1, "g": 0.5, "L": -0.5, "m": 1}, PENDULUM)
    # Thirds: (P / rho)^(1/3) / (omega D^(5/3)) -- exact, not a rounded float.
    assert is_dimensionless({"P": Fraction(1, 3), "rho": Fraction(-1, 3), "omega": -1,
                             "D": Fraction(-5, 3)}, FAN)
    assert not is_dimensionless({"P": 0.333, "rho": Fraction(-1, 3), "omega": -1,
                                 "D": Fraction(-5, 3)}, FAN)
    # Units may be pint objects; temperatures with offsets keep [temperature].
    assert is_dimensionless({"dT": 1, "T0": -1}, {"dT": ureg.kelvin, "T0": "degC"})


@pytest.mark.parametrize("powers, units, match", [
    ({"F": 1, "X": 2}, SPHERE, "no unit given for 'X'"),
    ({"F": "half"}, SPHERE, "not a number"),
    ({"F": None}, SPHERE, "must be a number"),
    ({"F": True}, SPHERE, "must be a number"),
    ({"F": float("nan")}, SPHERE, "finite"),
    ({"F": 0.123456789}, SPHERE, "not a simple fraction"),
    ({"F": 1}, {"F": "Newtons of doom"}, "variable 'F': unknown unit"),
    ([("F", 1)], SPHERE, "mappings"),
])
def test_is_dimensionless_rejects_bad_input(powers, units, match):
    with pytest.raises(ValueError, match=match):
        is_dimensionless(powers, units)
