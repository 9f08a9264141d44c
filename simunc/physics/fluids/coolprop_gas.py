"""Real gases through CoolProp: reference equations of state, fast enough for Monte Carlo.

:class:`CoolPropGas` implements :class:`simunc.physics.fluids.base.GasModel` with the
Helmholtz-energy equations of state and the transport models that CoolProp [5]_
implements.  Two instances are provided:

* :data:`AIR_REAL` (``"air_real"``): dry air as a pseudo-pure fluid, equation
  of state of Lemmon et al. 2000 [1]_, viscosity and thermal conductivity of
  Lemmon & Jacobsen 2004 [3]_ -- for pressurised tunnels;
* :data:`NITROGEN` (``"nitrogen"``): equation of state of Span et al. 2000 [2]_,
  transport of Lemmon & Jacobsen 2004 [3]_ -- for cryogenic nitrogen tunnels
  (down to about 100 K at up to about 10 bar).

Physics
-------
Properties are functions of static pressure ``p`` [Pa] and temperature ``T`` [K]
(CoolProp ``PT`` flash with the gas phase imposed).  The isentropic exponent is
``kappa = rho a^2 / p``.  The static state at a Mach number ``M`` is the exact
isentropic expansion of the real gas from the stagnation state ``(p0, T0)``::

    s(p, T) = s(p0, T0)                       (isentropic)
    h(p, T) + (M a(p, T))^2 / 2 = h(p0, T0)   (adiabatic, steady energy equation)

solved by Newton's method in ``(ln p, T)`` to a relative error of 1e-12.  A
single state (the set-point solver's floats) is iterated on CoolProp flashes
with CoolProp's analytic derivatives, from the perfect-gas relations with
``kappa(p0, T0)``.  Arrays are iterated on the tables (below), from the same
perfect-gas guess corrected by the exact solution at the mean input, keeping the
first Jacobian while it contracts well (chord method): two or three sweeps.
:meth:`CoolPropGas.mach_from_pressures` is the inverse: ``T`` from
``s(p, T) = s0``, then ``M = sqrt(2 (h0 - h)) / a``.

Speed: Chebyshev tables
-----------------------
A CoolProp flash costs about 25-40 us, too slow for 10^6 Monte Carlo trials.
Inputs of more than ``direct_max_size`` states are therefore evaluated from
tables built on the fly: the bounding box of the requested states (widened and
snapped to a lattice, so that repeated calls with similar samples reuse it) is
covered by a tensor Chebyshev interpolant in ``(ln p, T)`` of degree 16 x 16
(289 CoolProp states) of ``ln rho``, ``ln a``, ``h``, ``s``, ``ln mu``,
``ln k``, ``ln cp``.  The interpolant is accepted when its highest Chebyshev
coefficients are below the tolerance; otherwise the box is halved (along the
direction that has not converged) until it is.  Each accepted table is then
truncated to the lowest degrees whose dropped coefficients sum to less than
half the tolerance, which bounds the truncation error [6]_.  The tolerance is
``table_tolerance = 1e-10`` relative (for ``h`` relative to ``cp T``, for ``s``
relative to ``cp``; 1e-6 for the conductivity, which CoolProp computes with a
small step at twice the critical temperature); the tests check the tables
against CoolProp at random states of Monte Carlo-sized arrays to 1e-8 relative,
far below the uncertainties of the equations of state (1e-4 and more).
Evaluation is a small matrix product per block of states, with the derivatives
the Newton iteration needs taken from the same coefficients.  Measured on a
2-core machine: 10^6 static states followed by density, viscosity and speed of
sound take about 0.6 s (table building included).

States and errors
-----------------
Property methods do not raise for in-range states.  They return NaN for states
outside the gas region: non-finite or non-positive input, outside the range of
the equation of state, or on the liquid side of the saturation (for air: dew)
line, ``p > p_sat(T)`` below the critical temperature.  States between the
saturation line and ``saturation_margin`` kelvin above it are computed (they are
gas) but :meth:`CoolPropGas.check_state` rejects them, as it rejects everything
that gives NaN; the caller is expected to call it and report its reason.
:meth:`CoolPropGas.static_state` returns the isentropic state of the gas even
when it falls below saturation (the metastable, supersaturated vapour of the
equation of state, as in a fast nozzle expansion), so that ``check_state`` can
say why the test-section state is unusable; it gives NaN only for an invalid
stagnation state or a negative Mach number.

References
----------
.. [1] E. W. Lemmon, R. T Jacobsen, S. G. Penoncello, D. G. Friend,
   "Thermodynamic properties of air and mixtures of nitrogen, argon, and oxygen
   from 60 to 2000 K at pressures to 2000 MPa", J. Phys. Chem. Ref. Data 29
   (2000) 331-385.
.. [2] R. Span, E. W. Lemmon, R. T Jacobsen, W. Wagner, A. Yokozeki, "A
   reference equation of state for the thermodynamic properties of nitrogen for
   temperatures from 63.151 to 1000 K and pressures to 2200 MPa", J. Phys.
   Chem. Ref. Data 29 (2000) 1361-1433.
.. [3] E. W. Lemmon, R. T Jacobsen, "Viscosity and thermal conductivity
   equations for nitrogen, oxygen, argon, and air", Int. J. Thermophys. 25
   (2004) 21-69.
.. [4] R. Span, *Multiparameter Equations of State*, Springer, 2000 (isentropic
   exponent ``rho a^2 / p`` of a real gas).
.. [5] I. H. Bell, J. Wronski, S. Quoilin, V. Lemort, "Pure and pseudo-pure
   fluid thermophysical property evaluation and the open-source thermophysical
   property library CoolProp", Ind. Eng. Chem. Res. 53 (2014) 2498-2508.
.. [6] L. N. Trefethen, *Approximation Theory and Approximation Practice*, SIAM,
   2013, chapters 3, 4 and 8 (Chebyshev interpolants, aliasing, coefficient
   decay of analytic functions).

The bibliographic details of [1]_-[4]_ and [6]_ are given from memory; CoolProp
names its sources for these fluids Lemmon-JPCRD-2000, Span-JPCRD-2000 and
Lemmon-IJT-2004.
"""

from __future__ import annotations

import math
from typing import Any, Mapping

import numpy as np
from scipy.interpolate import CubicSpline

from simunc.physics.fluids.chebyshev_table import ChebyshevTables

__all__ = ["CoolPropGas", "AIR_REAL", "NITROGEN"]


class _CoolPropOnDemand:
    """CoolProp's low-level interface, imported on first use: loading it takes seconds, and a
    study whose fluids are closed forms never needs it."""

    _module: Any = None

    def __getattr__(self, name: str) -> Any:
        if _CoolPropOnDemand._module is None:
            import CoolProp.CoolProp as module

            _CoolPropOnDemand._module = module
        return getattr(_CoolPropOnDemand._module, name)


CP = _CoolPropOnDemand()

# Tabulated quantities (columns of a table), all functions of (ln p [ln Pa], T [K]).
_LNRHO, _LNA, _H, _S, _LNMU, _LNK, _LNCP = range(7)
_NQ = 7

_MIN_WIDTH = (1e-3, 1e-2)                   # smallest table [ln Pa], [K]
# Tolerance of each quantity relative to ``table_tolerance``.  CoolProp's conductivity
# steps by about 1e-6 (relative, at 1 MPa) where the critical enhancement of Lemmon &
# Jacobsen's model is cut off, near twice the critical temperature (measured between
# 252.384 K and 252.386 K for nitrogen): no polynomial follows a step, so the
# conductivity table is held to 1e-6 only.
_TOL_FACTOR = np.array([1.0, 1.0, 1.0, 1.0, 1.0, 1e4, 1.0])
_SNAP_MIN = (2.0**-8, 2.0**-2)              # smallest snapped box width [ln Pa], [K]
_PAD = (2.0e-4, 0.02)                       # absolute widening of a box [ln Pa], [K]
_NEWTON_PAD = (2.0e-3, 0.3)                 # widening of a box of first guesses [ln Pa], [K]
_CACHE_SIZE = 48                            # tables (boxes) kept per gas

_NEWTON_COLS = ((_S, 0, 0), (_S, 1, 0), (_S, 0, 1),
                (_H, 0, 0), (_H, 1, 0), (_H, 0, 1),
                (_LNA, 0, 0), (_LNA, 1, 0), (_LNA, 0, 1))


def _bcast(*args):
    """Broadcast to float arrays; return the flat copies and the common shape."""
    arrs = np.broadcast_arrays(*(np.asarray(a, dtype=float) for a in args))
    shape = arrs[0].shape
    return [np.ascontiguousarray(a).reshape(-1) for a in arrs], shape


class CoolPropGas:
    """Real gas from a CoolProp Helmholtz equation of state, vectorized for Monte Carlo.

    Parameters
    ----------
    name : str
        Key used in studies (``facility.gas``).
    fluid : str
        CoolProp fluid name (``"Nitrogen"``, ``"Air"``, ...), evaluated with the
        ``HEOS`` backend.
    description : str
        One line for reports naming the models.
    stated_uncertainty : mapping
        Relative standard uncertainties of ``"density"``, ``"viscosity"``,
        ``"speed_of_sound"`` of the models (sources in the instance comments).
    saturation_margin : float
        States colder than ``T_sat(p) + saturation_margin`` [K] are rejected by
        :meth:`check_state` (``T_sat`` is the dew temperature for air).  The
        default, 1 K, is a choice of this module (common practice, no source).
    t_max, p_max : float, optional
        Upper temperature [K] and pressure [Pa] of the model's range; default
        CoolProp's limits.  The lower temperature limit is CoolProp's ``Tmin``
        (the triple point).
    table_tolerance : float
        Relative tolerance of the Chebyshev tables (see module docstring).
    direct_max_size : int
        Inputs of at most this many states are computed with CoolProp state by
        state (exact); larger ones from tables.

    Attributes
    ----------
    kind : str
        ``"gas"``.
    t_min, t_max, p_max : float
        Range of the model [K], [K], [Pa] that :meth:`check_state` enforces.
    t_crit, p_crit : float
        Critical temperature [K] and pressure [Pa] (CoolProp).
    parameters : tuple
        Empty: the model has no parameter an uncertain input may perturb (use
        ``viscosity_model`` / ``density_model`` errors instead).  Keyword
        parameters given to the methods (e.g. ``sutherland``) are accepted for
        interface compatibility and ignored.

    Notes
    -----
    Every method accepts arrays of any broadcastable shapes or floats and returns
    an ndarray of the broadcast shape.  See the module docstring for what
    out-of-range states give (NaN, no exception) and for the tables.

    Examples
    --------
    Nitrogen at 1 bar and 300 K; CoolProp 8.0 reference value 1.12328 kg m^-3:

    >>> round(float(NITROGEN.density(1.0e5, 300.0)), 4)
    1.1233
    """

    kind = "gas"
    parameters: tuple[str, ...] = ()

    def __init__(self, name: str, fluid: str, description: str,
                 stated_uncertainty: Mapping[str, float], saturation_margin: float = 1.0,
                 t_max: float | None = None, p_max: float | None = None,
                 table_tolerance: float = 1e-10, direct_max_size: int = 64) -> None:
        self.name = name
        self.fluid = fluid
        self.description = description
        self.stated_uncertainty = dict(stated_uncertainty)
        self.saturation_margin = float(saturation_margin)
        self.table_tolerance = float(table_tolerance)
        self.direct_max_size = int(direct_max_size)
        self._t_max_arg, self._p_max_arg = t_max, p_max
        self._as = None
        self._tables = self._new_tables()

    def __getattr__(self, name):
        # Range and critical data are read from CoolProp on first use.
        if name in ("t_min", "t_max", "p_max", "t_crit", "p_crit"):
            self._state()
            return self.__dict__[name]
        raise AttributeError(f"{type(self).__name__!r} object has no attribute {name!r}")

    def __getstate__(self):
        # Copies and pickles leave out the CoolProp state and the tables (rebuilt on use).
        state = self.__dict__.copy()
        state["_as"] = None
        state["_tables"] = self._new_tables()
        return state

    def __repr__(self) -> str:
        return f"CoolPropGas({self.name!r}, fluid={self.fluid!r})"

    # ------------------------------------------------------------------ setup
    def _state(self):
        """The CoolProp AbstractState (created on first use) with range and saturation data."""
        if self._as is None:
            st = CP.AbstractState("HEOS", self.fluid)
            self.t_min = float(st.Tmin())
            self.t_max = float(self._t_max_arg if self._t_max_arg is not None else st.Tmax())
            self.p_max = float(self._p_max_arg if self._p_max_arg is not None else st.pmax())
            self.t_crit = float(st.T_critical())
            self.p_crit = float(st.p_critical())
            # ln p_sat (dew line, Q = 1) against 1/T from the triple point to just below T_c.
            ts = self.t_min + (self.t_crit * (1 - 1e-6) - self.t_min) * 0.5 * (
                1.0 - np.cos(np.linspace(0.0, np.pi, 240)))
            lnp = []
            for t in ts:
                st.update(CP.QT_INPUTS, 1.0, float(t))
                lnp.append(math.log(st.p()))
            self._psat_spline = CubicSpline(1.0 / ts[::-1], np.array(lnp)[::-1])
            st.specify_phase(CP.iphase_gas)
            self._as = st
        return self._as

    def saturation_pressure(self, t) -> np.ndarray:
        """Saturation (for air: dew-point) pressure ``p_sat(T)`` [Pa] of the gas, T [K].

        A cubic spline of ``ln p_sat`` against ``1/T`` through 240 CoolProp
        saturation states (vapour side, ``Q = 1``) from the triple point to the
        critical point; NaN outside that range.

        Examples
        --------
        Nitrogen at its normal boiling point, 77.355 K (from memory of Span et al.
        2000), where CoolProp 8.0 gives 101325.07 Pa:

        >>> round(float(NITROGEN.saturation_pressure(77.355)) / 1e5, 4)
        1.0133
        """
        self._state()
        t = np.asarray(t, dtype=float)
        with np.errstate(divide="ignore", invalid="ignore"):
            out = np.exp(self._psat_spline(1.0 / t))
        return np.where((t >= self.t_min) & (t < self.t_crit), out, np.nan)

    # ------------------------------------------------------------ state masks
    def _gas_mask(self, p, t):
        """True where (p, t) is a single-phase gas state inside the model's range."""
        self._state()
        with np.errstate(invalid="ignore"):
            ok = (np.isfinite(p) & np.isfinite(t) & (p > 0.0) & (p <= self.p_max)
                  & (t >= self.t_min) & (t <= self.t_max))
        if not ok.any():
            return ok
        tv, pv = t[ok], p[ok]
        t_lo, p_hi = float(tv.min()), float(pv.max())
        if t_lo >= self.t_crit or p_hi < float(self.saturation_pressure(t_lo)):
            return ok               # the whole box lies on the gas side: nothing more to test
        sub = tv < self.t_crit
        bad = np.zeros(tv.shape, bool)
        bad[sub] = pv[sub] > self.saturation_pressure(tv[sub])
        ok[np.flatnonzero(ok)[bad]] = False
        return ok

    def check_state(self, p, t) -> str | None:
        """``None`` when every state is a gas state the model covers, else the reason.

        Rejected, in this order: non-finite or non-positive p [Pa] or T [K];
        outside the range of the model (``t_min <= T <= t_max``,
        ``p <= p_max``); on the liquid side of the saturation (air: dew) line,
        ``p > p_sat(T)`` for ``T < T_c``; within ``saturation_margin`` of it,
        ``T < T_sat(p) + margin``, i.e. ``p > p_sat(T - margin)``.

        Examples
        --------
        Nitrogen at 2 bar saturates at 83.63 K (CoolProp 8.0 reference value):

        >>> NITROGEN.check_state(2e5, 120.0) is None
        True
        >>> print(NITROGEN.check_state(2e5, 80.0))  # doctest: +ELLIPSIS
        1 of 1 states of nitrogen lie in the liquid or two-phase region ...
        """
        self._state()
        (p, t), _ = _bcast(p, t)
        n = p.size
        with np.errstate(invalid="ignore"):
            bad = ~(np.isfinite(p) & np.isfinite(t) & (p > 0.0) & (t > 0.0))
        if bad.any():
            return (f"{int(bad.sum())} of {n} states of {self.name} have a non-finite or "
                    f"non-positive pressure or temperature")
        bad = (t < self.t_min) | (t > self.t_max) | (p > self.p_max)
        if bad.any():
            i = int(np.flatnonzero(bad)[0])
            return (f"{int(bad.sum())} of {n} states of {self.name} lie outside the range of "
                    f"the model ({self.t_min:g} K to {self.t_max:g} K, up to "
                    f"{self.p_max / 1e6:g} MPa), e.g. p = {p[i]:.6g} Pa, T = {t[i]:.6g} K")
        sub = np.flatnonzero(t < self.t_crit)
        if sub.size:
            liquid = p[sub] > self.saturation_pressure(t[sub])
            if liquid.any():
                i = int(sub[liquid][0])
                return (f"{int(liquid.sum())} of {n} states of {self.name} lie in the liquid or "
                        f"two-phase region (p above the saturation pressure at T), e.g. "
                        f"p = {p[i]:.6g} Pa, T = {t[i]:.6g} K, saturation temperature "
                        f"{self._t_sat(p[i]):.5g} K")
        m = self.saturation_margin
        sub = np.flatnonzero(t - m < self.t_crit)
        if sub.size and m > 0:
            near = p[sub] > self.saturation_pressure(np.maximum(t[sub] - m, self.t_min))
            if near.any():
                i = int(sub[near][0])
                return (f"{int(near.sum())} of {n} states of {self.name} lie within the "
                        f"saturation margin of {m:g} K (T < T_sat(p) + {m:g} K), e.g. "
                        f"p = {p[i]:.6g} Pa, T = {t[i]:.6g} K, saturation temperature "
                        f"{self._t_sat(p[i]):.5g} K")
        return None

    def _t_sat(self, p):
        """Saturation (dew) temperature [K] at one pressure p [Pa] (CoolProp, for messages)."""
        if not p < self.p_crit:
            return float("nan")
        st = CP.AbstractState("HEOS", self.fluid)
        st.update(CP.PQ_INPUTS, float(p), 1.0)
        return float(st.T())

    # ------------------------------------------------------- direct CoolProp
    def _direct(self, p, t, quantities):
        """Quantities (rows) at each state by CoolProp flashes; NaN where the flash fails."""
        st = self._state()
        out = np.full((len(quantities), p.size), np.nan)
        getters = {_LNRHO: lambda: math.log(st.rhomass()), _LNA: lambda: math.log(st.speed_sound()),
                   _H: st.hmass, _S: st.smass, _LNMU: lambda: math.log(st.viscosity()),
                   _LNK: lambda: math.log(st.conductivity()), _LNCP: lambda: math.log(st.cpmass())}
        funcs = [getters[q] for q in quantities]
        for i in range(p.size):
            try:
                st.update(CP.PT_INPUTS, float(p[i]), float(t[i]))
                out[:, i] = [f() for f in funcs]
            except ValueError:
                pass
        return out

    # ----------------------------------------------------------------- tables
    def _sample(self, xs: np.ndarray, ts: np.ndarray) -> np.ndarray | None:
        """The tabulated quantities on the grid ``exp(xs)`` x ``ts`` by CoolProp flashes; None
        when a flash fails."""
        st = self._state()
        vals = np.empty((len(xs), len(ts), _NQ))
        for i, xv in enumerate(xs):
            pv = math.exp(xv)
            for j, tv in enumerate(ts):
                try:
                    st.update(CP.PT_INPUTS, pv, float(tv))
                    vals[i, j] = (math.log(st.rhomass()), math.log(st.speed_sound()), st.hmass(),
                                  st.smass(), math.log(st.viscosity()), math.log(st.conductivity()),
                                  math.log(st.cpmass()))
                except ValueError:
                    return None
        return vals

    @staticmethod
    def _scales(vals: np.ndarray, box: tuple) -> np.ndarray:
        """What each tabulated quantity's tolerance is relative to: h to cp T, s to cp."""
        t0, t1 = box[2], box[3]
        cp = float(np.exp(vals[..., _LNCP]).mean())
        scale = np.ones(_NQ)
        scale[_H] = cp * 0.5 * (t0 + t1)
        scale[_S] = cp
        return scale

    def _new_tables(self) -> ChebyshevTables:
        return ChebyshevTables(self._sample, _NQ, self._scales,
                               self.table_tolerance * _TOL_FACTOR, min_width=_MIN_WIDTH,
                               snap_min=_SNAP_MIN, cache_size=_CACHE_SIZE)

    def _root(self, x, t, pad=_PAD):
        """Cached table tree for the snapped bounding box of the finite states (x = ln p)."""
        return self._tables.root(x, t, pad)

    def _table(self, x, t, cols, root=None):
        """Columns (rows of the result) at states x = ln p [ln Pa], t [K] from the tables."""
        return self._tables.evaluate(x, t, cols, root, _PAD)

    _in_box = staticmethod(ChebyshevTables.in_box)

    # ------------------------------------------------------------- properties
    def _props(self, p, t, quantities):
        """Tabulated quantities (rows) at gas states, NaN elsewhere; returns (rows, shape)."""
        (p, t), shape = _bcast(p, t)
        ok = self._gas_mask(p, t)
        out = np.full((len(quantities), p.size), np.nan)
        if ok.all():
            pv, tv = p, t
        else:
            pv, tv = p[ok], t[ok]
        if pv.size == 0:
            pass
        elif pv.size <= self.direct_max_size:
            res = self._direct(pv, tv, quantities)
            out[:, ok] = res
        else:
            res = self._table(np.log(pv), tv, [(q, 0, 0) for q in quantities])
            if ok.all():
                out = res
            else:
                out[:, ok] = res
        return out, shape

    def density(self, p, t, **params) -> np.ndarray:
        """Density ``rho(p, T)`` [kg m^-3] from the equation of state; p [Pa], T [K].

        The Helmholtz energy ``a(rho, T)`` of [1]_ (air) or [2]_ (nitrogen) gives
        ``p = rho^2 (da/drho)_T``, solved for ``rho`` on the gas branch.

        Examples
        --------
        Nitrogen at 1 bar and 300 K, CoolProp 8.0 reference value 1.12328 kg m^-3;
        air at 10 bar and 300 K, CoolProp 8.0 reference value 11.6455 kg m^-3:

        >>> round(float(NITROGEN.density(1.0e5, 300.0)), 4)
        1.1233
        >>> round(float(AIR_REAL.density(1.0e6, 300.0)), 3)
        11.645
        """
        out, shape = self._props(p, t, (_LNRHO,))
        return np.exp(out[0]).reshape(shape)

    def viscosity(self, p, t, **params) -> np.ndarray:
        """Dynamic viscosity ``mu(rho(p, T), T)`` [Pa s] of [3]_; p [Pa], T [K].

        ``mu = mu_0(T) + mu_r(tau, delta)``: dilute-gas term from a collision
        integral plus a residual term in reduced density and temperature ([3]_).
        Keyword parameters (e.g. ``sutherland``) are ignored.

        Examples
        --------
        Nitrogen at 1 bar and 300 K, CoolProp 8.0 reference value 1.7890e-05 Pa s:

        >>> f"{float(NITROGEN.viscosity(1.0e5, 300.0)):.4e}"
        '1.7890e-05'
        """
        out, shape = self._props(p, t, (_LNMU,))
        return np.exp(out[0]).reshape(shape)

    def speed_of_sound(self, p, t, **params) -> np.ndarray:
        """Speed of sound ``a = sqrt((dp/drho)_s)`` [m s^-1] from the equation of state.

        Examples
        --------
        Nitrogen at 1 bar and 300 K, CoolProp 8.0 reference value 353.159 m s^-1:

        >>> round(float(NITROGEN.speed_of_sound(1.0e5, 300.0)), 2)
        353.16
        """
        out, shape = self._props(p, t, (_LNA,))
        return np.exp(out[0]).reshape(shape)

    def isentropic_exponent(self, p, t, **params) -> np.ndarray:
        """Isentropic exponent ``kappa = rho a^2 / p`` [-] ([4]_); gamma for a perfect gas.

        Examples
        --------
        Cold nitrogen at 2 bar and 120 K (CoolProp 8.0: rho = 5.74789 kg m^-3,
        a = 220.632 m s^-1, so kappa = 1.3990), below the perfect-gas 1.4:

        >>> round(float(NITROGEN.isentropic_exponent(2.0e5, 120.0)), 4)
        1.399
        """
        out, shape = self._props(p, t, (_LNRHO, _LNA))
        (pf, _), _ = _bcast(p, t)
        return (np.exp(out[0] + 2.0 * out[1]) / pf).reshape(shape)

    def specific_heat_cp(self, p, t, **params) -> np.ndarray:
        """Isobaric specific heat ``cp = (dh/dT)_p`` [J kg^-1 K^-1].

        Examples
        --------
        Nitrogen at 1 bar and 300 K, CoolProp 8.0 reference value 1041.33 J kg^-1 K^-1:

        >>> round(float(NITROGEN.specific_heat_cp(1.0e5, 300.0)), 1)
        1041.3
        """
        out, shape = self._props(p, t, (_LNCP,))
        return np.exp(out[0]).reshape(shape)

    def thermal_conductivity(self, p, t, **params) -> np.ndarray:
        """Thermal conductivity [W m^-1 K^-1] of [3]_ (dilute, residual and critical terms).

        Examples
        --------
        Nitrogen at 1 bar and 300 K, CoolProp 8.0 reference value 0.025968 W m^-1 K^-1:

        >>> round(float(NITROGEN.thermal_conductivity(1.0e5, 300.0)), 5)
        0.02597
        """
        out, shape = self._props(p, t, (_LNK,))
        return np.exp(out[0]).reshape(shape)

    # ------------------------------------------------------ isentropic flow
    def static_state(self, p0, t0, mach, **params) -> tuple[np.ndarray, np.ndarray]:
        """Static pressure [Pa] and temperature [K] at Mach ``mach`` by exact isentropic expansion.

        Solves ``s(p, T) = s(p0, T0)`` and ``h(p, T) + (M a(p, T))^2 / 2 = h(p0, T0)``
        by Newton's method in ``(ln p, T)`` from the perfect-gas state with
        ``kappa(p0, T0)``, to a step below 1e-11 (relative).  NaN where the
        stagnation state is not a gas state of the model or ``mach`` is negative or
        not finite; the static state itself may be supersaturated (check it with
        :meth:`check_state`).

        Parameters
        ----------
        p0, t0 : array_like
            Stagnation pressure [Pa] and temperature [K].
        mach : array_like
            Mach number [-] (subsonic or supersonic).

        Returns
        -------
        p, t : ndarray
            Static pressure [Pa] and temperature [K], broadcast shape.

        Examples
        --------
        Air from 1 bar, 300 K at M = 0.5 (NACA 1135 perfect gas: 0.84302 and 0.95238);
        CoolProp's air has kappa = 1.4012 there, which moves the fourth digit:

        >>> p, t = AIR_REAL.static_state(1.0e5, 300.0, 0.5)
        >>> round(float(p / 1e5), 4), round(float(t / 300.0), 4)
        (0.8429, 0.9523)
        """
        (p0, t0, m), shape = _bcast(p0, t0, mach)
        ok = self._gas_mask(p0, t0)
        with np.errstate(invalid="ignore"):
            ok &= np.isfinite(m) & (m >= 0.0)
        p = np.full(p0.size, np.nan)
        t = np.full(p0.size, np.nan)
        idx = np.flatnonzero(ok)
        if idx.size == 0:
            pass
        elif idx.size <= self.direct_max_size:
            for i in idx:
                p[i], t[i] = self._static_direct(float(p0[i]), float(t0[i]), float(m[i]))
        else:
            every = idx.size == p0.size
            sel = (lambda a: a) if every else (lambda a: a[idx])
            pr, tr = self._static_table(sel(p0), sel(t0), sel(m))
            if every:
                p, t = pr, tr
            else:
                p[idx], t[idx] = pr, tr
        return p.reshape(shape), t.reshape(shape)

    def _static_direct(self, p0, t0, m):
        """One static state by Newton's method on CoolProp flashes in (p, T)."""
        st = self._state()
        try:
            st.update(CP.PT_INPUTS, p0, t0)
            s0, h0 = st.smass(), st.hmass()
            kappa = st.rhomass() * st.speed_sound() ** 2 / p0
            t = t0 / (1.0 + 0.5 * (kappa - 1.0) * m * m)
            p = p0 * (t / t0) ** (kappa / (kappa - 1.0))
            for _ in range(40):
                st.update(CP.PT_INPUTS, p, t)
                a = st.speed_sound()
                f1 = st.smass() - s0
                f2 = st.hmass() + 0.5 * m * m * a * a - h0
                j11 = st.first_partial_deriv(CP.iSmass, CP.iP, CP.iT)
                j12 = st.first_partial_deriv(CP.iSmass, CP.iT, CP.iP)
                j21 = (st.first_partial_deriv(CP.iHmass, CP.iP, CP.iT)
                       + m * m * a * st.first_partial_deriv(CP.ispeed_sound, CP.iP, CP.iT))
                j22 = (st.first_partial_deriv(CP.iHmass, CP.iT, CP.iP)
                       + m * m * a * st.first_partial_deriv(CP.ispeed_sound, CP.iT, CP.iP))
                det = j11 * j22 - j12 * j21
                dp = (f1 * j22 - f2 * j12) / det
                dt = (j11 * f2 - j21 * f1) / det
                p, t = p - dp, t - dt
                if abs(dp) <= 1e-13 * p and abs(dt) <= 1e-13 * t:
                    return p, t
                if not (p > 0.0 and t > 0.0):
                    break
        except ValueError:
            pass
        return float("nan"), float("nan")

    def _newton(self, x, t, m2, s0, h0, root, max_iter=30):
        """Vectorized Newton iterations on the isentrope in (ln p, T).

        The Jacobian is evaluated at the first iterate and kept while the
        iteration contracts fast (chord method; it is refreshed when a step is
        not at least 20 times smaller than the previous one).  Converged when the
        estimated remaining error of every state is below 1e-12: ``C step^2``
        (C = 1) after a Newton step, ``step^2 / previous step`` after a chord step.
        Returns x, t and the convergence flag.
        """
        prev = None
        jac = None
        for _ in range(max_iter):
            if jac is None:
                c = self._table(x, t, _NEWTON_COLS, root)
                a2 = np.exp(2.0 * c[6])
                f1 = c[0] - s0
                f2 = c[3] + 0.5 * m2 * a2 - h0
                j11, j12 = c[1], c[2]
                j21 = c[4] + m2 * a2 * c[7]
                j22 = c[5] + m2 * a2 * c[8]
                det = j11 * j22 - j12 * j21
                jac = (j22 / det, -j12 / det, -j21 / det, j11 / det)
                newton = True
            else:
                c = self._table(x, t, _NEWTON_COLS[0::3], root)
                f1 = c[0] - s0
                f2 = c[1] + 0.5 * m2 * np.exp(2.0 * c[2]) - h0
                newton = False
            i11, i12, i21, i22 = jac
            dx = i11 * f1 + i12 * f2
            dt = i21 * f1 + i22 * f2
            x = x - dx
            t = t - dt
            with np.errstate(invalid="ignore", divide="ignore"):
                step = np.maximum(np.abs(dx), np.abs(dt) / np.abs(t))
                if newton:
                    remaining = step * step
                else:
                    remaining = np.where(step > 0.0, step * step / prev, 0.0)
                    ratio = np.where(step > 0.0, step / prev, 0.0)
            fin = np.isfinite(remaining)
            worst = float(remaining[fin].max()) if fin.any() else 0.0
            if worst <= 1e-12:
                return x, t, True
            if not newton and fin.any() and float(ratio[fin].max()) > 0.05:
                jac = None
            prev = np.where(step > 0.0, step, 1.0)
        return x, t, False

    def _static_table(self, p0, t0, m):
        """Static states of arrays of valid stagnation states from the tables."""
        x0 = np.log(p0)
        st = self._table(x0, t0, ((_S, 0, 0), (_H, 0, 0)))
        s0, h0 = st[0], st[1]
        # Perfect-gas guess with kappa at a central stagnation state, corrected by the
        # exact solution there (the correction varies little across a Monte Carlo box).
        pc, tc, mc = (float(np.mean(v)) for v in (p0, t0, m))
        kappa = float(self.isentropic_exponent(pc, tc))
        if not math.isfinite(kappa):
            pc, tc, mc = float(p0[0]), float(t0[0]), float(m[0])
            kappa = float(self.isentropic_exponent(pc, tc))
        pe, te = self._static_direct(pc, tc, mc)
        tg_c = tc / (1.0 + 0.5 * (kappa - 1.0) * mc * mc)
        corr_x = math.log(pe / pc) - kappa / (kappa - 1.0) * math.log(tg_c / tc)
        corr_t = te / tg_c
        if not (math.isfinite(corr_x) and math.isfinite(corr_t)):
            corr_x, corr_t = 0.0, 1.0
        m2 = m * m
        t = t0 / (1.0 + 0.5 * (kappa - 1.0) * m2)
        x = x0 + kappa / (kappa - 1.0) * np.log(t / t0) + corr_x
        t *= corr_t
        root = self._root(x, t, _NEWTON_PAD)
        for _ in range(4):
            x, t, converged = self._newton(x, t, m2, s0, h0, root)
            if converged and self._in_box(root, x, t):
                break
            root = self._root(x, t)
        bad = ~(np.isfinite(x) & np.isfinite(t))
        if not converged:
            c = self._table(x, t, ((_S, 0, 0),), root)
            bad |= ~(np.abs(c[0] - s0) <= 1e-9 * np.abs(s0) + 1e-6)
        p = np.exp(x)
        p[bad] = np.nan
        t = np.where(bad, np.nan, t)
        return p, t

    def mach_from_pressures(self, p0, t0, p, **params) -> np.ndarray:
        """Mach number of the isentropic expansion from (p0 [Pa], T0 [K]) to static p [Pa].

        ``T`` from ``s(p, T) = s(p0, T0)`` (Newton in T, ``(ds/dT)_p = cp / T``), then
        ``M = sqrt(2 (h(p0, T0) - h(p, T))) / a(p, T)``.  NaN for ``p > p0`` (beyond
        a rounding allowance of 1e-9 relative) or an invalid stagnation state; 0 for
        ``p = p0``.

        Examples
        --------
        Inverse of :meth:`static_state`:

        >>> p, t = NITROGEN.static_state(3.0e5, 120.0, 0.8)
        >>> round(float(NITROGEN.mach_from_pressures(3.0e5, 120.0, p)), 10)
        0.8
        """
        (p0, t0, p), shape = _bcast(p0, t0, p)
        ok = self._gas_mask(p0, t0)
        with np.errstate(invalid="ignore"):
            ok &= np.isfinite(p) & (p > 0.0) & (p <= p0 * (1.0 + 1e-9))
        p = np.minimum(p, p0)
        out = np.full(p0.size, np.nan)
        idx = np.flatnonzero(ok)
        if idx.size == 0:
            pass
        elif idx.size <= self.direct_max_size:
            for i in idx:
                out[i] = self._mach_direct(float(p0[i]), float(t0[i]), float(p[i]))
        else:
            out[idx] = self._mach_table(p0[idx], t0[idx], p[idx])
        return out.reshape(shape)

    def _mach_direct(self, p0, t0, p):
        st = self._state()
        try:
            st.update(CP.PT_INPUTS, p0, t0)
            s0, h0 = st.smass(), st.hmass()
            kappa = st.rhomass() * st.speed_sound() ** 2 / p0
            t = t0 * (p / p0) ** ((kappa - 1.0) / kappa)
            for _ in range(40):
                st.update(CP.PT_INPUTS, p, t)
                dt = (st.smass() - s0) / (st.cpmass() / t)
                t -= dt
                if abs(dt) <= 1e-13 * t:
                    break
            st.update(CP.PT_INPUTS, p, t)
            return math.sqrt(2.0 * max(h0 - st.hmass(), 0.0)) / st.speed_sound()
        except ValueError:
            return float("nan")

    def _mach_table(self, p0, t0, p):
        """Mach numbers of arrays of valid (p0, t0, p) from the tables."""
        x0, x = np.log(p0), np.log(p)
        # One table for the stagnation and the static states, so that the errors of h0 and
        # h correlate and their difference (small at low Mach number) stays accurate.
        kappa = float(self.isentropic_exponent(float(np.mean(p0)), float(np.mean(t0))))
        if not math.isfinite(kappa):
            kappa = float(self.isentropic_exponent(float(p0[0]), float(t0[0])))
        t = t0 * np.exp((kappa - 1.0) / kappa * (x - x0))
        union = float(np.max(x0 - x)) <= 0.1          # p / p0 >= 0.9: M below about 0.4
        if union:
            root = self._root(np.concatenate([x0, x]), np.concatenate([t0, t]), _NEWTON_PAD)
        else:
            root = self._root(x, t, _NEWTON_PAD)
        st = self._table(x0, t0, ((_S, 0, 0), (_H, 0, 0)), root if union else None)
        s0, h0 = st[0], st[1]
        for _ in range(4):
            # Newton in T on s(p, T) = s0 with (ds/dT)_p kept from the first iterate.
            slope, prev = None, None
            for _ in range(30):
                if slope is None:
                    c = self._table(x, t, ((_S, 0, 0), (_S, 0, 1)), root)
                    slope = c[1]
                else:
                    c = self._table(x, t, ((_S, 0, 0),), root)
                dt = (c[0] - s0) / slope
                t = t - dt
                with np.errstate(invalid="ignore", divide="ignore"):
                    step = np.abs(dt) / t
                    remaining = step * step if prev is None else np.where(
                        step > 0.0, step * step / prev, 0.0)
                fin = np.isfinite(remaining)
                if not fin.any() or float(remaining[fin].max()) <= 1e-12:
                    break
                if prev is not None and float(np.where(fin, step / prev, 0.0).max()) > 0.05:
                    slope = None
                prev = np.where(step > 0.0, step, 1.0)
            if self._in_box(root, x, t):
                break
            if union:
                root = self._root(np.concatenate([x0, x]), np.concatenate([t0, t]))
                st = self._table(x0, t0, ((_S, 0, 0), (_H, 0, 0)), root)
                s0, h0 = st[0], st[1]
            else:
                root = self._root(x, t)
        c = self._table(x, t, ((_H, 0, 0), (_LNA, 0, 0)), root)
        return np.sqrt(2.0 * np.maximum(h0 - c[0], 0.0)) / np.exp(c[1])


#: Dry air, pseudo-pure (CoolProp "Air"): equation of state of Lemmon et al. 2000 [1]_,
#: viscosity and conductivity of Lemmon & Jacobsen 2004 [3]_.  Stated uncertainties, taken
#: as expanded (k = 2) and halved: density 0.1 % and speed of sound 0.2 % (from memory of
#: Lemmon et al. 2000); viscosity 0.5 % in the dilute gas and about 1 % at higher pressure
#: near room temperature, taken as 1 % (from memory of Lemmon & Jacobsen 2004).
AIR_REAL = CoolPropGas(
    name="air_real",
    fluid="Air",
    description="dry air, real gas: CoolProp pseudo-pure air (equation of state of Lemmon et al. "
                "2000; viscosity and conductivity of Lemmon & Jacobsen 2004)",
    stated_uncertainty={"density": 0.001 / 2.0, "viscosity": 0.01 / 2.0,
                        "speed_of_sound": 0.002 / 2.0},
)

#: Nitrogen (CoolProp "Nitrogen"): equation of state of Span et al. 2000 [2]_ (valid to
#: 1000 K and 2200 MPa, from memory of the paper's title), viscosity and conductivity of
#: Lemmon & Jacobsen 2004 [3]_.  Stated uncertainties, taken as expanded (k = 2) and
#: halved: density 0.02 % up to 523 K and 12 MPa (from memory of Span et al. 2000); speed
#: of sound in the gas 0.01 % from 270 K to 350 K (from memory of Span et al. 2000) -- no
#: figure at hand for the cold gas, so the density figure 0.02 % is used; viscosity taken as
#: 1 % (0.5 % in the dilute gas, from memory of Lemmon & Jacobsen 2004).
NITROGEN = CoolPropGas(
    name="nitrogen",
    fluid="Nitrogen",
    description="nitrogen, real gas: CoolProp (equation of state of Span et al. 2000; viscosity "
                "and conductivity of Lemmon & Jacobsen 2004)",
    stated_uncertainty={"density": 0.0002 / 2.0, "viscosity": 0.01 / 2.0,
                        "speed_of_sound": 0.0002 / 2.0},
    t_max=1000.0,
    p_max=2.2e9,
)
