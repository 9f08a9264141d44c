"""Flat-plate skin-friction lines and the form-factor estimate of friction drag.

Each line gives the mean (total) skin-friction coefficient ``C_F = D_f / (q S_wet)``
of one side of a smooth flat plate at zero incidence against the Reynolds
number on its length, ``Re = U L / ν``.  All are vectorised over ``Re``.

* ITTC 1957 model-ship correlation line ``C_F = 0.075 / (log10 Re - 2)^2`` [1], [2];
  a correlation line, not a pure flat-plate line: it lies a few per cent above
  the flat-plate lines at model Reynolds numbers (1e6-1e7) by design.
* Prandtl-Schlichting ``C_F = 0.455 / (log10 Re)^2.58`` (turbulent from the
  leading edge) [3], [4].
* Kármán-Schoenherr ``0.242 / sqrt(C_F) = log10(Re C_F)`` (turbulent, implicit;
  also written ``C_F = 0.0586 / log10(Re C_F)^2``; the ATTC 1947 line) [4], [5], [6].
* Blasius laminar plate ``C_F = 1.328 / sqrt(Re)`` [3], [7].

References
----------
.. [1] ITTC, *Recommended Procedures and Guidelines 7.5-02-03-01.1*
   (8th ITTC, Madrid, 1957: model-ship correlation line).
.. [2] A. Morrall, *1957 ITTC Model-Ship Correlation Line Values of Frictional
   Resistance Coefficient*, NPL Ship Report 142, 1970 (tables; worked example
   Re = 5.62e6, C_F = 3.325e-3).
.. [3] H. Schlichting, *Boundary-Layer Theory*, 7th ed., McGraw-Hill, 1979,
   ch. 7 (Blasius plate, C_F = 1.328 / sqrt(Re)) and ch. 21 (turbulent plate,
   Prandtl-Schlichting formula); equation numbers from memory of [3].
.. [4] CFD-Wiki, "Skin friction coefficient" (list of flat-plate formulas:
   Prandtl-Schlichting 1932, Schoenherr 1932, ITTC 1957).
.. [5] K. E. Schoenherr, "Resistance of flat surfaces moving through a fluid",
   *Trans. SNAME* 40, 1932.
.. [6] J. D. Anderson, *Aircraft Performance and Design*, McGraw-Hill, 1999,
   sec. 2.9, eq. (2.28) (Kármán-Schoenherr) and eq. (2.29) (White-Christoph).
.. [7] D. P. Raymer, *Aircraft Design: A Conceptual Approach*, AIAA, ch. 12
   (component build-up ``C_D0 = Σ C_F FF Q S_wet / S_ref``; from memory of [7]),
   and the ITTC 1978 performance prediction method, ``C_V = (1 + k) C_F``
   (ITTC procedure 7.5-02-03-01.4).
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

_LN10 = float(np.log(10.0))


def ittc_1957(re):
    """ITTC 1957 model-ship correlation line ``C_F = 0.075 / (log10 Re - 2)^2`` [-].

    Parameters
    ----------
    re : array_like
        Reynolds number on the length, Re [-] (> 100).

    Examples
    --------
    Worked example of Morrall, NPL Ship Report 142 [2]: Re = 5.62e6,
    C_F = 3.325e-3.

    >>> round(float(ittc_1957(5.62e6)), 6)
    0.003324
    >>> float(ittc_1957(1e7))   # 0.075 / 5^2
    0.003
    """
    return 0.075 / (np.log10(re) - 2.0) ** 2


def prandtl_schlichting(re):
    """Prandtl-Schlichting turbulent flat plate ``C_F = 0.455 / (log10 Re)^2.58`` [-].

    Parameters
    ----------
    re : array_like
        Reynolds number on the length, Re [-].

    Examples
    --------
    Re = 1e6: ``0.455 / 6^2.58 = 0.455 / 101.772 = 0.0044708``.

    >>> round(float(prandtl_schlichting(1e6)), 7)
    0.0044708
    """
    return 0.455 / np.log10(re) ** 2.58


def karman_schoenherr(re: ArrayLike) -> Any:
    """Kármán-Schoenherr turbulent flat plate: ``C_F`` solving ``0.242 / sqrt(C_F) = log10(Re C_F)`` [-].

    Solved for ``x = C_F^-1/2`` from ``g(x) = 0.242 x + 2 log10 x - log10 Re = 0``
    by Newton's method, vectorised, started from the Prandtl-Schlichting value.
    ``g`` is increasing and concave, so after the first step the iterates rise
    monotonically to the single root; the loop stops when every relative step
    in ``x`` is below 1e-15 (C_F to about 1e-14 relative).

    Parameters
    ----------
    re : array_like
        Reynolds number on the length, Re [-] (> 1).

    Examples
    --------
    Re = 1e7: C_F = 0.0029343 (tabulated as 0.00293; from memory of the
    ATTC 1947 / Schoenherr tables, no table at hand).

    >>> round(float(karman_schoenherr(1e7)), 7)
    0.0029343
    """
    log_re = np.log10(np.asarray(re, dtype=float))
    if np.any(~(log_re > 0.0)):
        raise ValueError("karman_schoenherr needs Reynolds numbers > 1")
    x = 1.0 / np.sqrt(0.455 / log_re**2.58)   # Prandtl-Schlichting start
    for _ in range(60):
        g = 0.242 * x + 2.0 * np.log10(x) - log_re
        step = g / (0.242 + 2.0 / (x * _LN10))
        x_new = np.maximum(x - step, 0.1 * x)   # stay positive should a start lie far right
        done = np.all(np.abs(x_new - x) <= 1e-15 * x_new)
        x = x_new
        if done:
            break
    return 1.0 / (x * x)


def blasius_laminar(re):
    """Blasius laminar flat plate ``C_F = 1.328 / sqrt(Re)`` [-].

    Parameters
    ----------
    re : array_like
        Reynolds number on the length, Re [-] (laminar range, below about 5e5).

    Examples
    --------
    Re = 1e5: ``1.328 / 316.228 = 0.0041995``.

    >>> round(float(blasius_laminar(1e5)), 7)
    0.0041995
    """
    return 1.328 / np.sqrt(re)


#: The friction lines by name (the names ``friction_drag`` accepts).
FRICTION_LINES: dict[str, Callable[[Any], Any]] = {
    "ittc_1957": ittc_1957,
    "prandtl_schlichting": prandtl_schlichting,
    "karman_schoenherr": karman_schoenherr,
    "blasius_laminar": blasius_laminar,
}


def friction_drag(line: str | Callable[[Any], Any], re: ArrayLike,
                  form_factor: ArrayLike, wetted_ratio: ArrayLike) -> Any:
    """Viscous (friction plus form) drag coefficient ``C_D = (1 + k) C_F(Re) S_wet / S_ref`` [-].

    The form-factor method ([7]): the flat-plate coefficient at the body's
    Reynolds number, raised by the form factor ``1 + k`` for the
    supervelocities and pressure drag of the body's thickness, and referred to
    the reference area.

    Parameters
    ----------
    line : str or callable
        A key of :data:`FRICTION_LINES` or a function ``C_F(Re)``.
    re : array_like
        Reynolds number on the body's length [-].
    form_factor : array_like
        Form factor k [-] (``1 + k`` multiplies C_F).
    wetted_ratio : array_like
        Wetted over reference area ``S_wet / S_ref`` [-].

    Raises
    ------
    ValueError
        If ``line`` names no friction line.

    Examples
    --------
    ITTC 1957 at Re = 1e7 (C_F = 0.003), k = 0.2, S_wet / S_ref = 2:
    ``1.2 * 0.003 * 2 = 0.0072``.

    >>> round(float(friction_drag("ittc_1957", 1e7, 0.2, 2.0)), 9)
    0.0072
    """
    if isinstance(line, str):
        try:
            cf_line = FRICTION_LINES[line]
        except KeyError:
            raise ValueError(
                f"unknown friction line {line!r}; known: {', '.join(sorted(FRICTION_LINES))}") from None
    else:
        cf_line = line
    k = np.asarray(form_factor, dtype=float)
    ratio = np.asarray(wetted_ratio, dtype=float)
    return (1.0 + k) * cf_line(re) * ratio


def _segment(grid: np.ndarray, x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Index of the grid interval holding ``x`` (the end intervals beyond the grid) and the
    fraction ``(x - g_i) / (g_(i+1) - g_i)`` along it (below 0 or above 1 outside)."""
    i = np.clip(np.searchsorted(grid, x, side="right") - 1, 0, grid.size - 2)
    return i, (x - grid[i]) / (grid[i + 1] - grid[i])


def tabulated(reynolds: ArrayLike, values: ArrayLike, re: ArrayLike, *,
              mach: ArrayLike | None = None, at_mach: ArrayLike | None = None) -> Any:
    """A coefficient from a table ``C(Re)`` or ``C(M, Re)`` [-]: linear in ``log10 Re`` (and in
    M) between the entries, continued along the end segments beyond them.

    Interpolation in the logarithm of the Reynolds number is the usual way to read drag and
    friction data, whose Reynolds dependence is close to linear in ``log10 Re`` over a decade
    (cf. the skin-friction lines of this module).

    Parameters
    ----------
    reynolds : array_like
        The table's Reynolds numbers [-], increasing (at least two).
    values : array_like
        ``C`` at each Reynolds number [-]; with ``mach``, one row per Mach number.
    re : array_like
        Reynolds numbers to read at [-].
    mach, at_mach : array_like, optional
        The table's Mach numbers [-] (increasing) and the Mach numbers to read at [-].

    Examples
    --------
    Half a decade between Re = 1e6 (C = 0.030) and 1e7 (C = 0.026): 0.028.

    >>> round(float(tabulated([1e6, 1e7], [0.030, 0.026], 10 ** 6.5)), 12)
    0.028
    """
    lg = np.log10(np.asarray(reynolds, dtype=float))
    v = np.asarray(values, dtype=float)
    x = np.log10(np.asarray(re, dtype=float))
    if mach is None:
        i, t = _segment(lg, x)
        return v[i] + t * (v[i + 1] - v[i])
    x, m = np.broadcast_arrays(x, np.asarray(at_mach, dtype=float))
    i, t = _segment(lg, x)
    j, s = _segment(np.asarray(mach, dtype=float), m)
    low = v[j, i] + t * (v[j, i + 1] - v[j, i])
    high = v[j + 1, i] + t * (v[j + 1, i + 1] - v[j + 1, i])
    return low + s * (high - low)
