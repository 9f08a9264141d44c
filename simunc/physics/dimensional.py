"""Dimensional analysis: dimension matrices and Buckingham Pi groups.

A physical relation among ``n`` variables whose dimension matrix has rank
``r`` can be written as a relation among ``n - r`` independent dimensionless
products of powers of those variables (Buckingham's Pi theorem).  This module
builds the dimension matrix from pint units and finds such a set with exact
rational arithmetic (:class:`fractions.Fraction`), so exponents come out as
small integers, never as rounded floats.

Variables are given as a mapping ``name -> unit``, where a unit is a string
that the project registry :data:`simunc.units.ureg` understands
(``"kg/m^3"``, ``"Pa s"``, ``"9.81 m/s^2"``), a dimensionality string
(``"[length]/[time]"``), a pint Unit or Quantity, or a plain number
(dimensionless).

Sign and scaling convention
---------------------------
Each group returned by :func:`pi_groups` contains exactly one non-repeating
variable, with a positive exponent; the exponents are the exact rational
solution scaled by the least common multiple of their denominators and
divided by their greatest common divisor.  So the drag case gives
``F rho^-1 V^-2 D^-2`` (a drag coefficient without the 1/2) and
``mu rho^-1 V^-1 D^-1`` (the inverse of a Reynolds number); any power or
reciprocal of a group is an equally valid group.

References
----------
.. [1] E. Buckingham, "On physically similar systems; illustrations of the
   use of dimensional equations", *Phys. Rev.* 4 (1914) 345-376.
.. [2] F. M. White, *Fluid Mechanics*, 7th ed., McGraw-Hill, 2011, ch. 5.
.. [3] G. I. Barenblatt, *Scaling, Self-similarity, and Intermediate
   Asymptotics*, Cambridge University Press, 1996, ch. 1.
"""

from __future__ import annotations

import math
import numbers
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from fractions import Fraction

import numpy as np
import pint

from simunc.units import ureg

__all__ = [
    "BASE_DIMENSIONS",
    "DimensionMatrix",
    "PiGroup",
    "dimension_matrix",
    "pi_groups",
    "is_dimensionless",
    "group_formula",
]

#: Row order of dimension matrices; other base dimensions pint may report
#: follow in alphabetical order.
BASE_DIMENSIONS = ("[mass]", "[length]", "[time]", "[temperature]", "[current]",
                   "[substance]", "[luminosity]")

# Float exponents (pint stores ``m^0.5`` as 0.5) are read as the nearest
# fraction with a denominator up to this, and must agree to _FLOAT_TOL.
_MAX_DENOMINATOR = 1000
_FLOAT_TOL = 1e-9


# ---------------------------------------------------------------------------
# Parsing units to base-dimension exponents
# ---------------------------------------------------------------------------

def _fraction(value, what: str) -> Fraction:
    """An exact Fraction from an int, Fraction or float exponent."""
    if isinstance(value, bool):
        raise ValueError(f"{what}: exponent must be a number, got {value!r}")
    if isinstance(value, (int, Fraction)):
        return Fraction(value)
    if isinstance(value, str):
        try:
            return Fraction(value.strip())
        except (ValueError, ZeroDivisionError):
            raise ValueError(f"{what}: exponent {value!r} is not a number such as "
                             f"'2', '-1/2' or '0.5'") from None
    if isinstance(value, numbers.Rational):
        return Fraction(int(value.numerator), int(value.denominator))
    if isinstance(value, numbers.Real):
        x = float(value)
        if not math.isfinite(x):
            raise ValueError(f"{what}: exponent must be finite, got {value!r}")
        f = Fraction(x).limit_denominator(_MAX_DENOMINATOR)
        if abs(float(f) - x) > _FLOAT_TOL:
            raise ValueError(f"{what}: exponent {value!r} is not a simple fraction "
                             f"(denominator <= {_MAX_DENOMINATOR})")
        return f
    raise ValueError(f"{what}: exponent must be a number, got {value!r}")


def _dimensionality(name: str, unit) -> dict[str, Fraction]:
    """Base-dimension exponents of one variable's unit."""
    what = f"variable '{name}'"
    if isinstance(unit, bool):
        raise ValueError(f"{what}: expected a unit such as 'm/s', got {unit!r}")
    if isinstance(unit, numbers.Real):
        dims = {}
    elif isinstance(unit, (pint.Unit, pint.Quantity)):
        dims = dict(unit.dimensionality)
    elif isinstance(unit, str):
        text = unit.strip()
        try:
            if text.startswith("["):
                dims = dict(ureg.get_dimensionality(text))
            else:
                try:
                    dims = dict(ureg.parse_units(text).dimensionality)
                except ValueError:
                    # "9.81 m/s^2": a quantity with a magnitude.
                    dims = dict(ureg.Quantity(text).dimensionality)
        except Exception as exc:  # pint raises several unrelated types here
            raise ValueError(f"{what}: unknown unit {unit!r} "
                             f"(write e.g. 'kg/m^3', 'Pa s' or '[length]/[time]')") from exc
    else:
        raise ValueError(f"{what}: expected a unit string, pint Unit or Quantity, "
                         f"got {type(unit).__name__} {unit!r}")
    out = {}
    for dim, power in dims.items():
        f = _fraction(power, f"{what}, dimension {dim}")
        if f:
            out[dim] = f
    return out


def _row_order(dims: Iterable[str]) -> tuple[str, ...]:
    present = set(dims)
    known = [d for d in BASE_DIMENSIONS if d in present]
    return tuple(known + sorted(present - set(BASE_DIMENSIONS)))


# ---------------------------------------------------------------------------
# Exact linear algebra over the rationals
# ---------------------------------------------------------------------------

def _rref(rows: list[list[Fraction]]) -> tuple[list[list[Fraction]], list[int]]:
    """Reduced row echelon form and pivot columns (exact)."""
    a = [list(r) for r in rows]
    n_rows = len(a)
    n_cols = len(a[0]) if a else 0
    pivots: list[int] = []
    i = 0
    for j in range(n_cols):
        if i == n_rows:
            break
        k = next((k for k in range(i, n_rows) if a[k][j] != 0), None)
        if k is None:
            continue
        a[i], a[k] = a[k], a[i]
        p = a[i][j]
        a[i] = [x / p for x in a[i]]
        for k in range(n_rows):
            if k != i and a[k][j] != 0:
                c = a[k][j]
                a[k] = [x - c * y for x, y in zip(a[k], a[i])]
        pivots.append(j)
        i += 1
    return a, pivots


def _rank(rows: list[list[Fraction]]) -> int:
    if not rows or not rows[0]:
        return 0
    return len(_rref(rows)[1])


def _nullspace(rows: list[list[Fraction]], n_cols: int) -> list[list[Fraction]]:
    """A basis of the null space (exact), one vector per free column."""
    if not rows:
        return [[Fraction(int(i == j)) for i in range(n_cols)] for j in range(n_cols)]
    r, pivots = _rref(rows)
    free = [j for j in range(n_cols) if j not in pivots]
    basis = []
    for f in free:
        v = [Fraction(0)] * n_cols
        v[f] = Fraction(1)
        for i, p in enumerate(pivots):
            v[p] = -r[i][f]
        basis.append(v)
    return basis


def _integer_vector(v: list[Fraction]) -> list[int]:
    """Scale by the LCM of denominators, divide by the gcd of the result."""
    lcm = 1
    for x in v:
        lcm = lcm * x.denominator // math.gcd(lcm, x.denominator)
    ints = [int(x * lcm) for x in v]
    g = 0
    for k in ints:
        g = math.gcd(g, k)
    return [x // g for x in ints] if g > 1 else ints


# ---------------------------------------------------------------------------
# Public API
# ---------------------------------------------------------------------------

@dataclass(frozen=True)
class DimensionMatrix:
    """Exponents of the base dimensions (rows) in each variable (columns).

    Attributes
    ----------
    dimensions : tuple of str
        Row labels, e.g. ``("[mass]", "[length]", "[time]")``: only the base
        dimensions that occur, in the order of :data:`BASE_DIMENSIONS`.
    variables : tuple of str
        Column labels, in the order given.
    entries : tuple of tuple of Fraction
        ``entries[i][j]`` is the exponent of ``dimensions[i]`` in
        ``variables[j]``.
    """

    dimensions: tuple[str, ...]
    variables: tuple[str, ...]
    entries: tuple[tuple[Fraction, ...], ...]

    @property
    def rank(self) -> int:
        """Rank r of the matrix (exact); the number of Pi groups is n - r."""
        return _rank([list(r) for r in self.entries])

    def column(self, name: str) -> dict[str, Fraction]:
        """Non-zero base-dimension exponents of one variable."""
        j = self.variables.index(name)
        return {d: row[j] for d, row in zip(self.dimensions, self.entries) if row[j]}

    def to_numpy(self) -> np.ndarray:
        """The entries as a float array of shape (rows, columns)."""
        return np.array([[float(x) for x in row] for row in self.entries], dtype=float).reshape(
            len(self.dimensions), len(self.variables))

    def __str__(self) -> str:
        cells = [[""] + list(self.variables)]
        cells += [[d] + [str(x) for x in row] for d, row in zip(self.dimensions, self.entries)]
        widths = [max(len(r[j]) for r in cells) for j in range(len(cells[0]))]
        lines = []
        for r in cells:
            first = r[0].ljust(widths[0])
            rest = [c.rjust(w) for c, w in zip(r[1:], widths[1:])]
            lines.append("  ".join([first, *rest]).rstrip())
        return "\n".join(lines)


def _check_variables(variables) -> dict:
    if not isinstance(variables, Mapping):
        raise ValueError("variables must be a mapping name -> unit, e.g. "
                         "{'F': 'N', 'rho': 'kg/m^3'}")
    if not variables:
        raise ValueError("variables is empty: give at least one name -> unit")
    for name in variables:
        if not isinstance(name, str) or not name.strip():
            raise ValueError(f"variable names must be non-empty strings, got {name!r}")
    return dict(variables)


def dimension_matrix(variables: Mapping[str, object]) -> DimensionMatrix:
    """Dimension matrix of a set of variables.

    Parameters
    ----------
    variables : mapping of str to unit
        ``name -> unit``; a unit is a string for :data:`simunc.units.ureg`
        (``"Pa s"``, ``"9.81 m/s^2"``, ``"[length]/[time]"``), a pint Unit or
        Quantity, or a number (dimensionless).  Only the dimension matters:
        ``"mm"`` and ``"m"`` give the same column.

    Returns
    -------
    DimensionMatrix
        Rows are the base dimensions present ([mass], [length], [time],
        [temperature], [current], [substance], [luminosity], in that order),
        columns the variables in the order given; entries are exact
        :class:`~fractions.Fraction` values.

    Raises
    ------
    ValueError
        For an unknown unit or a malformed mapping; the message names the
        variable.

    References
    ----------
    F. M. White, *Fluid Mechanics*, 7th ed., McGraw-Hill, 2011, sec. 5.3.

    Examples
    --------
    Drag on a sphere:

    >>> m = dimension_matrix({"F": "N", "rho": "kg/m^3", "V": "m/s", "D": "m", "mu": "Pa s"})
    >>> print(m)
              F  rho   V  D  mu
    [mass]    1    1   0  0   1
    [length]  1   -3   1  1  -1
    [time]   -2    0  -1  0  -1
    >>> m.rank
    3
    """
    variables = _check_variables(variables)
    columns = {name: _dimensionality(name, unit) for name, unit in variables.items()}
    dims = _row_order(d for col in columns.values() for d in col)
    entries = tuple(tuple(columns[v].get(d, Fraction(0)) for v in columns) for d in dims)
    return DimensionMatrix(dims, tuple(columns), entries)


def _format_power(p: Fraction | int | float) -> str:
    if isinstance(p, Fraction):
        if p.denominator == 1:
            return str(p.numerator)
        return f"({p.numerator}/{p.denominator})"
    if isinstance(p, float) and p.is_integer():
        return str(int(p))
    return str(p)


def group_formula(powers: Mapping[str, Fraction | int | float | str]) -> str:
    """Readable formula of a product of powers, e.g. ``"F rho^-1 V^-2 D^-2"``.

    Parameters
    ----------
    powers : mapping of str to number
        ``variable -> exponent`` (int, Fraction, float or a string such as
        ``"1/2"``), in the order to print.  Zero exponents are left out,
        exponent 1 is not written, and a fraction is written in parentheses,
        ``g^(1/2)``.

    Returns
    -------
    str
        The formula; ``"1"`` if every exponent is zero.

    Examples
    --------
    >>> group_formula({"F": 1, "rho": -1, "V": -2, "D": -2, "mu": 0})
    'F rho^-1 V^-2 D^-2'
    >>> from fractions import Fraction
    >>> group_formula({"T": 1, "g": Fraction(1, 2), "L": Fraction(-1, 2)})
    'T g^(1/2) L^(-1/2)'
    """
    parts = []
    for name, p in powers.items():
        if isinstance(p, str):
            p = _fraction(p, f"power of '{name}'")
        if p == 0:
            continue
        parts.append(name if p == 1 else f"{name}^{_format_power(p)}")
    return " ".join(parts) if parts else "1"


def is_dimensionless(powers: Mapping[str, object],
                     quantities_units: Mapping[str, object]) -> bool:
    """Whether a product of powers of variables is dimensionless.

    Used to validate user-defined groups in study files.  The check is exact:
    exponents are read as fractions (``0.5`` as 1/2), and the base-dimension
    exponents of the product must all vanish.

    Parameters
    ----------
    powers : mapping of str to number
        ``variable -> exponent`` of the product: int, Fraction, float or a
        string such as ``"-1/2"``.
    quantities_units : mapping of str to unit
        ``variable -> unit`` for (at least) every variable in ``powers``, in
        any form :func:`dimension_matrix` accepts.

    Returns
    -------
    bool

    Raises
    ------
    ValueError
        If ``powers`` names a variable without a unit, an exponent is not a
        number, or a unit is unknown.

    References
    ----------
    E. Buckingham, *Phys. Rev.* 4 (1914) 345.

    Examples
    --------
    Period of a pendulum, T sqrt(g / L):

    >>> units = {"T": "s", "L": "m", "g": "m/s^2", "m": "kg"}
    >>> is_dimensionless({"T": 1, "g": 0.5, "L": -0.5}, units)
    True
    >>> is_dimensionless({"T": 1, "g": 1, "L": -1}, units)
    False
    """
    if not isinstance(powers, Mapping) or not isinstance(quantities_units, Mapping):
        raise ValueError("powers and quantities_units must both be mappings name -> value")
    missing = [n for n in powers if n not in quantities_units]
    if missing:
        raise ValueError(f"no unit given for {', '.join(map(repr, missing))}; "
                         f"known variables: {', '.join(map(str, quantities_units)) or 'none'}")
    total: dict[str, Fraction] = {}
    for name, p in powers.items():
        f = _fraction(p, f"power of '{name}'")
        if not f:
            continue
        for dim, e in _dimensionality(name, quantities_units[name]).items():
            total[dim] = total.get(dim, Fraction(0)) + f * e
    return all(v == 0 for v in total.values())


@dataclass(frozen=True, eq=True)
class PiGroup:
    """One dimensionless group: a product of powers of variables.

    Attributes
    ----------
    name : str
        ``"Pi1"``, ``"Pi2"``, ...
    exponents : dict of str to int
        Non-zero integer exponents: the non-repeating variable first, then
        the repeating ones in the order the variables were given.
    formula : str
        The product written out, e.g. ``"F rho^-1 V^-2 D^-2"``.
    variable : str
        The one non-repeating variable of the group.
    repeating : tuple of str
        The repeating variables used to build the set.
    """

    name: str
    exponents: dict[str, int] = field(hash=False)
    formula: str
    variable: str
    repeating: tuple[str, ...]

    def __str__(self) -> str:
        return f"{self.name} = {self.formula}"

    def as_dict(self) -> dict:
        """Plain ``{"name", "exponents", "formula"}`` dict (e.g. for JSON)."""
        return {"name": self.name, "exponents": dict(self.exponents), "formula": self.formula}

    def evaluate(self, values: Mapping[str, float | np.ndarray | pint.Quantity]):
        """Value of the group for given variable values.

        Parameters
        ----------
        values : mapping of str to array_like or pint Quantity
            Values of (at least) the variables of the group: floats or arrays
            in one consistent unit system (SI), or pint Quantities in any
            units.

        Returns
        -------
        float or numpy.ndarray

        Examples
        --------
        >>> g = pi_groups({"V": "m/s", "a": "m/s"})[0]
        >>> g.formula, g.evaluate({"V": 170.0, "a": 340.0})
        ('V a^-1', 0.5)
        """
        out: float | np.ndarray | pint.Quantity = 1.0
        for name, p in self.exponents.items():
            if name not in values:
                raise ValueError(f"{self.name} = {self.formula} needs a value of '{name}'")
            out = out * values[name] ** p
        if isinstance(out, pint.Quantity):
            out = out.to("dimensionless").magnitude
        return out


def _default_repeating(names: tuple[str, ...], columns: list[list[Fraction]],
                       r: int) -> list[str]:
    """First independent variables, trying the first-listed one last."""
    order = list(range(1, len(names))) + [0]
    chosen: list[int] = []
    for j in order:
        if len(chosen) == r:
            break
        if not any(columns[j]):
            continue  # dimensionless on its own: a group by itself
        trial = chosen + [j]
        if _rank([list(row) for row in zip(*(columns[k] for k in trial))]) == len(trial):
            chosen = trial
    return [names[j] for j in sorted(chosen)]


def _check_repeating(repeating, names: tuple[str, ...], columns: list[list[Fraction]],
                     r: int) -> list[str]:
    if isinstance(repeating, str) or not isinstance(repeating, Iterable):
        raise ValueError(f"repeating must be a list of variable names such as "
                         f"['rho', 'V', 'D'], got {repeating!r}")
    rep = list(repeating)
    unknown = [n for n in rep if n not in names]
    if unknown:
        raise ValueError(f"repeating names unknown variable(s) {', '.join(map(repr, unknown))}; "
                         f"the variables are {', '.join(names)}")
    dup = sorted({n for n in rep if rep.count(n) > 1})
    if dup:
        raise ValueError(f"repeating lists {', '.join(map(repr, dup))} more than once")
    if len(rep) != r:
        raise ValueError(f"repeating needs exactly {r} variable(s), the rank of the dimension "
                         f"matrix, got {len(rep)}: {', '.join(rep) or 'none'}")
    idx = [names.index(n) for n in rep]
    for j in idx:
        if not any(columns[j]):
            raise ValueError(f"repeating variable '{names[j]}' is dimensionless on its own; "
                             f"it is a group by itself and cannot be repeating")
    sub = [list(row) for row in zip(*(columns[j] for j in idx))]
    if _rank(sub) < r:
        null = _integer_vector(_nullspace(sub, len(idx))[0])
        if next(x for x in null if x) < 0:
            null = [-x for x in null]
        combo = group_formula(dict(zip(rep, null)))
        raise ValueError(f"repeating variables {', '.join(rep)} are not dimensionally "
                         f"independent: {combo} is dimensionless; choose {r} variables "
                         f"none of whose products is dimensionless")
    return [names[j] for j in sorted(idx)]


def pi_groups(variables: Mapping[str, object],
              repeating: Iterable[str] | None = None) -> list[PiGroup]:
    """A complete set of independent dimensionless groups (Buckingham Pi).

    Parameters
    ----------
    variables : mapping of str to unit
        ``name -> unit`` as for :func:`dimension_matrix`.  By convention the
        first variable is the dependent one (force, pressure drop, period...).
    repeating : list of str, optional
        Exactly r = rank variables whose dimensions are independent (no
        product of their powers is dimensionless).  Each group is then one
        other variable times powers of these.  By default the first r
        independent variables in the given order are taken, trying the
        first-listed (dependent) variable last and never taking a variable
        that is dimensionless on its own.

    Returns
    -------
    list of PiGroup
        ``n - r`` groups ``Pi1, Pi2, ...``, one per non-repeating variable in
        the given order, each with the non-repeating variable to a positive
        power and small integer exponents (exact solution scaled by the LCM
        of denominators, divided by the gcd).  A variable that is
        dimensionless on its own is a group by itself.

    Raises
    ------
    ValueError
        If ``repeating`` has the wrong size, unknown or repeated names, a
        dimensionless member, or members whose dimensions are dependent (the
        message shows the dimensionless combination among them).

    References
    ----------
    E. Buckingham, *Phys. Rev.* 4 (1914) 345; F. M. White, *Fluid
    Mechanics*, 7th ed., 2011, sec. 5.3 (method of repeating variables).

    Examples
    --------
    Drag on a sphere, F = f(rho, V, D, mu): a drag coefficient (without the
    1/2) and an inverse Reynolds number.

    >>> groups = pi_groups({"F": "N", "rho": "kg/m^3", "V": "m/s", "D": "m", "mu": "Pa s"})
    >>> for g in groups:
    ...     print(g)
    Pi1 = F rho^-1 V^-2 D^-2
    Pi2 = mu rho^-1 V^-1 D^-1

    Period of a pendulum: mass cannot enter, and the group is (T sqrt(g/L))^2.

    >>> [g.formula for g in pi_groups({"T": "s", "L": "m", "g": "m/s^2", "m": "kg"})]
    ['T^2 L^-1 g']
    """
    variables = _check_variables(variables)
    matrix = dimension_matrix(variables)
    names = matrix.variables
    columns = [[row[j] for row in matrix.entries] for j in range(len(names))]
    r = matrix.rank
    if repeating is None:
        rep = _default_repeating(names, columns, r)
    else:
        rep = _check_repeating(repeating, names, columns, r)
    rep_idx = [names.index(n) for n in rep]
    # A_R x = -a_j has exactly one solution: A_R has full column rank r, and
    # its columns span those of the whole matrix (also rank r).
    a_rep = [[row[k] for k in rep_idx] for row in matrix.entries]
    groups: list[PiGroup] = []
    for j, name in enumerate(names):
        if name in rep:
            continue
        if a_rep:
            reduced, pivots = _rref([a + [-row[j]] for a, row in zip(a_rep, matrix.entries)])
            x = [Fraction(0)] * len(rep_idx)
            for i, p in enumerate(pivots):
                x[p] = reduced[i][-1]
        else:
            x = []
        ints = _integer_vector([Fraction(1)] + x)
        exps = {name: ints[0]}
        for k in sorted(range(len(rep_idx)), key=lambda k: rep_idx[k]):
            if ints[k + 1]:
                exps[names[rep_idx[k]]] = ints[k + 1]
        groups.append(PiGroup(name=f"Pi{len(groups) + 1}", exponents=exps,
                              formula=group_formula(exps), variable=name,
                              repeating=tuple(rep)))
    return groups
