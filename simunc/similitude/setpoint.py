"""Set-point solver: the facility state that reproduces the full-scale groups.

The unknowns (``match.solve_for`` plus the implicit ones: the Mach number when
it is matched, the model frequency when the Strouhal number is) are found on the
same :class:`~simunc.similitude.model.SimilitudeModel` the Monte Carlo uses.
Each matched group has the residual ``ln(G_model / G_full) / tolerance``
(``(Ma_model - Ma_full) / tolerance`` for the Mach number), so a residual of 1
is one band.  The bounds are the facility's limits (pressure, temperature and
Mach ranges, largest model from its size limit and blockage); the largest
dynamic pressure is a constraint.

1. **Exact match** (:func:`_root`): bounded least squares
   (:func:`scipy.optimize.least_squares`, trust-region reflective) on the
   residuals without priority weights.  A root does not depend on how the bands
   are weighed, so it is found whatever the tolerances and priorities.
2. **Nearest achievable point in priority order** (:func:`_priority_order`),
   when no root exists inside the limits: for each priority level in turn,
   SLSQP minimises that level's squared residuals with the levels before it held
   at what they reached (equality constraints) and q under its limit.  The limits
   that bind and the mismatch of every group are reported.

The result is ``"exact"`` only when every solved group is matched and every
limit holds (feasible), ``"least squares"`` otherwise.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np
from scipy.optimize import least_squares

from simunc.constants import STANDARD_PRESSURE
from simunc.physics.fluids import AIR, AIR_REAL, CoolPropGas
from simunc.similitude.model import SimilitudeModel
from simunc.study.schema import Band, Study
from simunc.units import quantity_text as _q

#: A residual below this (in tolerance bands) counts as matched.
MATCHED = 1.0e-6

_UNITS = {"stagnation_pressure": "Pa", "stagnation_temperature": "K", "mach": "1",
          "speed": "m/s", "static_pressure": "Pa", "temperature": "K", "model_length": "m",
          "frequency": "Hz", "dynamic_pressure": "Pa"}


@dataclass(frozen=True)
class Limit:
    """A facility limit and whether the set point respects it."""

    quantity: str
    side: str  # "min" or "max"
    bound: float
    value: float
    unit: str

    @property
    def ok(self) -> bool:
        tol = 1e-9 * max(abs(self.bound), 1e-300)
        return self.value <= self.bound + tol if self.side == "max" else self.value >= self.bound - tol

    @property
    def active(self) -> bool:
        """The value sits on the bound."""
        return abs(self.value - self.bound) <= 1e-7 * max(abs(self.bound), 1e-300)


@dataclass(frozen=True)
class SetPoint:
    """Solved nominal state.

    Attributes
    ----------
    nominal : dict
        Nominal model inputs, SI.
    outputs : dict
        Model outputs at the nominal state, SI floats.
    solve_for : tuple of str
        The solved model keys.
    required : float
        Value (SI) of the first solved quantity that would match the groups
        with the facility limits lifted; ``nan`` when none does.
    feasible : bool
        True when every facility limit holds and every solved group is matched.
    limits : list of Limit
    messages : list of str
        Plain statements for the report (what binds, the shortfall).
    method : str
        ``"exact"`` (every solved group matched, every limit held) or ``"least squares"``
        (the nearest achievable point in priority order).
    mismatch : dict
        Per solved group, the residual in tolerance bands.
    binding : list of str
        Limits that stop a group from being matched.
    required_values : dict
        Every solved quantity with the limits lifted.
    fluid : str
        Name of the working fluid used.
    alternatives : list of dict
        With several candidate fluids: each one's outcome.
    """

    nominal: dict
    outputs: dict
    solve_for: tuple
    required: float
    feasible: bool
    limits: list = field(default_factory=list)
    messages: list = field(default_factory=list)
    method: str = "exact"
    mismatch: dict = field(default_factory=dict)
    binding: list = field(default_factory=list)
    required_values: dict = field(default_factory=dict)
    fluid: str = ""
    alternatives: list = field(default_factory=list)
    outside_model: str = ""  # why the nominal facility state is outside the fluid model, if it is
    #: States outside the region a fluid model's stated uncertainty covers (a caution, not a refusal).
    coverage: tuple[str, ...] = ()

    @property
    def reynolds_shortfall(self) -> float:
        """``Re_model / Re_full - 1`` at the set point (0 when matched)."""
        return self.outputs["reynolds_ratio"] - 1.0

    @property
    def mach_shortfall(self) -> float:
        return self.outputs.get("mach_difference", math.nan)


def build_model(study: Study, fluid=None) -> SimilitudeModel:
    """The similitude model configured for a study (optionally with another candidate fluid)."""
    return SimilitudeModel(fluid=fluid or study.facility.gas, full_scale_fluid=study.full_scale.fluid,
                           mach_from=study.facility.mach_from,
                           full_scale_given=study.full_scale.given,
                           custom_groups=study.custom_groups, measurement=study.measurement)


def _scalar(out: dict) -> dict:
    return {k: float(np.asarray(v)) for k, v in out.items()}


def largest_model(study: Study) -> float | None:
    """Largest model reference length from the size limit and the blockage limit [m]."""
    fac, fs = study.facility, study.full_scale
    limits = [fac.max_model_reference_length] if fac.max_model_reference_length else []
    if fac.max_blockage and fac.test_section_area and fs.frontal_area:
        limits.append(fs.reference_length * math.sqrt(fac.max_blockage * fac.test_section_area
                                                      / fs.frontal_area))
    return min(limits) if limits else None


def bounds(study: Study, key: str) -> tuple[float, float]:
    """Facility bounds of a model key (SI); wide where the facility states none."""
    fac, fs = study.facility, study.full_scale
    if key == "stagnation_pressure":
        assert fac.stagnation_pressure_range is not None  # the reader requires it of a gas facility
        return fac.stagnation_pressure_range
    if key == "stagnation_temperature":
        return fac.stagnation_temperature_range or (1.0, 1.0e4)
    if key == "mach":
        lo, hi = fac.mach_range
        return max(lo, 1e-3), min(hi, 0.999)
    if key == "speed":
        return fac.speed_range or (1e-3, 1e3)
    if key == "static_pressure":
        return fac.static_pressure_range or (1.0, 1.0e9)
    if key == "temperature":
        return fac.temperature_range or (274.0, 313.0)
    if key == "model_length":
        return 1e-4 * fs.reference_length, largest_model(study) or 10.0 * fs.reference_length
    if key == "frequency":
        return 1e-6, 1e6
    raise KeyError(key)


def nominal_state(study: Study, fluid=None) -> dict:
    """Nominal model inputs from the study (unknowns left as ``None``)."""
    fs, fac = study.full_scale, study.facility
    fluid = fluid or fac.gas
    length = (study.model_reference_length if study.model_reference_length is not None
              else (study.model_scale * fs.reference_length if study.model_scale is not None
                    else None))
    x = {"model_length": length, "full_scale_static_pressure": fs.static_pressure,
         "full_scale_static_temperature": fs.static_temperature,
         "full_scale_speed_or_mach": fs.value, "full_scale_length": fs.reference_length}
    if fac.kind == "gas":
        x.update(stagnation_pressure=fac.stagnation_pressure,
                 stagnation_temperature=fac.stagnation_temperature, mach=fac.mach)
    else:
        x.update(speed=fac.speed, temperature=fac.temperature,
                 static_pressure=fac.static_pressure if fac.static_pressure is not None
                 else STANDARD_PRESSURE, **immersion(study))
    if fs.frequency is not None:
        x["full_scale_frequency_nominal"] = fs.frequency
        x["frequency"] = study.model_frequency
    for name in getattr(fluid, "parameters", ()):
        x[name] = getattr(fluid, name)
    for spec in study.inputs:  # known corrections (JCGM 100 3.2.4): the mean of a deviation
        if spec.correction:
            for target in spec.targets:
                x[target] = (x.get(target) or 0.0) + spec.correction
    return x


def immersion(study: Study) -> dict[str, float]:
    """Immersion of the model's reference point in a liquid facility, as model inputs.

    ``model_depth``: ``facility.depth`` as written; ``geometric_depth``: the full-scale depth,
    scaled in the model by ``L_model / L_full`` -- the default for a free-surface facility (no
    static pressure set, given a range or solved) when the full scale is at a depth and
    ``facility.depth`` is not written: a geometrically similar model floats or runs at the scaled
    depth.
    """
    fac, fs = study.facility, study.full_scale
    free_surface = (fac.static_pressure is None and fac.static_pressure_range is None
                    and "static_pressure" not in study.unknowns)
    geometric = fs.depth if (fac.depth is None and free_surface and fs.depth) else 0.0
    return {"model_depth": fac.depth or 0.0, "geometric_depth": geometric or 0.0}


def band_residual(b: Band, out: Mapping[str, np.ndarray]) -> float:
    """Mismatch of a group at a (scalar) model output, in tolerance bands (:meth:`Band.residual`)."""
    return b.residual(float(np.asarray(out[b.output])))


class _Problem:
    """The solve of ``bands`` for ``keys`` inside ``box``, in the solver's variables ``z``.

    ``z`` is the logarithm of each unknown (the Mach number and a liquid's
    temperature as they are), so relative changes of pressures, lengths and
    speeds weigh alike.  A point and its forward-difference neighbours are
    evaluated in one vectorized call of the model.
    """

    STEP = 1.0e-7  # forward-difference step in z

    def __init__(self, model: SimilitudeModel, base: dict, keys: list[str],
                 box: dict[str, tuple[float, float]], bands: list[Band], q_max: float | None):
        self.model, self.base, self.keys, self.bands, self.q_max = model, base, keys, bands, q_max
        self.logs = np.array([k not in ("mach", "temperature") for k in keys], dtype=bool)
        self.lo = np.array([math.log(box[k][0]) if g else box[k][0]
                            for k, g in zip(keys, self.logs)])
        self.hi = np.array([math.log(box[k][1]) if g else box[k][1]
                            for k, g in zip(keys, self.logs)])
        self.box = box
        self.levels = sorted({b.priority for b in bands})
        self.priority = np.array([b.priority for b in bands])
        self._last: tuple[bytes, np.ndarray, np.ndarray] | None = None

    def state(self, z) -> dict:
        """Model inputs at one point ``z`` (floats) or at the rows of ``z`` (arrays)."""
        z = np.clip(np.asarray(z, dtype=float), self.lo, self.hi)
        s = dict(self.base)
        for i, k in enumerate(self.keys):
            v = np.exp(z[..., i]) if self.logs[i] else z[..., i]
            for b in self.box[k]:  # undo the round trip through the logarithm on a bound
                v = np.where(np.abs(v - b) <= 1e-12 * abs(b), b, v)
            s[k] = float(v) if np.ndim(v) == 0 else v
        return s

    def _rows(self, z) -> tuple[np.ndarray, np.ndarray]:
        """Residuals (tolerance bands) and ``ln(q/q_max)`` at ``z`` and its neighbours."""
        z = np.asarray(z, dtype=float)
        key = z.tobytes()
        if self._last is None or self._last[0] != key:
            pts = np.vstack([z, z + np.diag(self._steps(z))])
            out = self.model(self.state(pts))
            n = len(pts)
            res = np.empty((n, len(self.bands)))
            for j, b in enumerate(self.bands):
                y = np.broadcast_to(np.asarray(out[b.output], dtype=float), (n,))
                aim = b.centre if b.target is None else b.target
                with np.errstate(divide="ignore", invalid="ignore"):
                    r = (y - aim) if b.is_difference else np.where(y > 0.0, np.log(y / aim), np.inf)
                res[:, j] = r / b.tolerance
            res = np.where(np.isfinite(res), res, 1e9)
            if self.q_max is None:
                qx = np.zeros(n)
            else:
                q = np.broadcast_to(np.asarray(out["dynamic_pressure"], dtype=float), (n,))
                with np.errstate(divide="ignore", invalid="ignore"):
                    qx = np.where(q > 0.0, np.log(q / self.q_max), 1e9)
                qx = np.where(np.isfinite(qx), qx, 1e9)
            self._last = (key, res, qx)
        return self._last[1], self._last[2]

    def _steps(self, z) -> np.ndarray:
        z = np.asarray(z, dtype=float)
        return self.STEP * np.where(z + self.STEP <= self.hi, 1.0, -1.0)

    def residuals(self, z) -> np.ndarray:
        return self._rows(z)[0][0]

    def jacobian(self, z) -> np.ndarray:
        res = self._rows(z)[0]
        return (res[1:] - res[0]).T / self._steps(z)

    def q_excess(self, z) -> float:
        """``ln(q / q_max)``: positive above the dynamic-pressure limit (0 without one)."""
        return float(self._rows(z)[1][0])

    def q_gradient(self, z) -> np.ndarray:
        qx = self._rows(z)[1]
        return (qx[1:] - qx[0]) / self._steps(z)

    def root_residuals(self, z) -> np.ndarray:
        return np.append(self.residuals(z), 1e3 * max(0.0, self.q_excess(z)))

    def root_jacobian(self, z) -> np.ndarray:
        qrow = 1e3 * self.q_gradient(z) * (self.q_excess(z) > 0.0)
        return np.vstack([self.jacobian(z), qrow])

    def level_costs(self, z) -> tuple[float, ...]:
        """Sum of squared residuals per priority level, the dynamic-pressure excess first."""
        r = self.residuals(z)
        return (max(0.0, self.q_excess(z)),) + tuple(float(np.sum(r[self.priority == lv] ** 2))
                                                     for lv in self.levels)

    def matched(self, z) -> bool:
        return bool(np.all(np.abs(self.residuals(z)) < MATCHED)) and self.q_excess(z) <= 1e-12

    def starts(self) -> list[np.ndarray]:
        return [self.lo + frac * (self.hi - self.lo) for frac in (0.5, 0.2, 0.8)]


def _better(p: _Problem, a: np.ndarray, b: np.ndarray | None) -> bool:
    """Whether ``a`` beats ``b`` in priority order (a level decides when it differs by more
    than 1e-12 band squared, relative)."""
    if b is None:
        return True
    for ca, cb in zip(p.level_costs(a), p.level_costs(b)):
        if abs(ca - cb) > 1e-12 * (1.0 + min(ca, cb)):
            return ca < cb
    return False


def _root(p: _Problem) -> tuple[np.ndarray | None, np.ndarray | None]:
    """An exact match (every band's residual zero, q inside its limit), if one is found.

    The residuals in tolerance bands carry no priority weight: a root is a root
    whatever the tolerances and priorities, so the scaling cannot hide it.
    Returns the root (or ``None``) and the best point seen.
    """
    best = None
    for z0 in p.starts():
        sol = least_squares(p.root_residuals, z0, jac=p.root_jacobian, bounds=(p.lo, p.hi),
                            method="trf", x_scale="jac", xtol=1e-15, ftol=1e-15, gtol=1e-15,
                            max_nfev=100 * (len(p.keys) + 1))
        z = np.clip(sol.x, p.lo, p.hi)
        if p.matched(z):
            return z, z
        if _better(p, z, best):
            best = z
    return None, best


def _priority_order(p: _Problem, z_start: np.ndarray) -> np.ndarray:
    """The nearest achievable point, matched level by level in priority order.

    Level ``k`` minimises the squared residuals of its bands subject to the levels
    before it keeping what they achieved (equality constraints) and q inside its
    limit (SLSQP).  Unlike a weighted sum, the lower levels' gradients are never
    drowned by the finite-difference noise of the higher levels.
    """
    from scipy.optimize import minimize

    z_best = z_start
    done: list[tuple[int, float]] = []
    bounds = list(zip(p.lo, p.hi))
    for level in p.levels:
        mine = np.flatnonzero(p.priority == level)
        cons: list[dict[str, Any]] = [
            {"type": "eq", "fun": (lambda z, j=j, v=v: p.residuals(z)[j] - v),
             "jac": (lambda z, j=j: p.jacobian(z)[j])} for j, v in done]
        if p.q_max is not None:
            cons.append({"type": "ineq", "fun": lambda z: -p.q_excess(z),
                         "jac": lambda z: -p.q_gradient(z)})

        def cost(z, mine=mine):
            return float(np.sum(p.residuals(z)[mine] ** 2))

        def grad(z, mine=mine):
            return 2.0 * p.residuals(z)[mine] @ p.jacobian(z)[mine]

        level_best = z_best
        for z0 in [z_best] + p.starts():
            sol = minimize(cost, z0, jac=grad, method="SLSQP", bounds=bounds, constraints=cons,
                           options={"ftol": 1e-14, "maxiter": 200})
            z = np.clip(sol.x, p.lo, p.hi)
            if _better(p, z, level_best):
                level_best = z
            if sol.success and cost(level_best) < 1e-20:
                break
        z_best = level_best
        done += [(int(j), float(p.residuals(z_best)[j])) for j in mine]
    return _polish(p, _snap(p, z_best))


def _snap(p: _Problem, z: np.ndarray) -> np.ndarray:
    """Put unknowns that SLSQP left within 1e-7 of a bound on it, unless that is worse."""
    z = np.array(z, dtype=float)
    for i in range(len(z)):
        for b in (p.lo[i], p.hi[i]):
            if 0.0 < abs(z[i] - b) < 1e-7:
                trial = z.copy()
                trial[i] = b
                if not _better(p, z, trial):
                    z = trial
    return z


def _polish(p: _Problem, z: np.ndarray) -> np.ndarray:
    """Drive the matched bands' residuals (below :data:`MATCHED`) to round-off.

    SLSQP holds its equality constraints to about 1e-9 of a band; a Gauss-Newton
    correction on the matched bands alone, from that point, removes the rest
    while the others move by the same order.
    """
    r = p.residuals(z)
    on = np.flatnonzero(np.abs(r) < MATCHED)
    if not len(on) or np.max(np.abs(r[on])) < 1e-13:
        return z
    free = np.flatnonzero((z > p.lo) & (z < p.hi))  # unknowns on a bound stay there
    if not len(free):
        return z

    def full(x):
        out = np.array(z, dtype=float)
        out[free] = x
        return out

    sol = least_squares(lambda x: p.residuals(full(x))[on],
                        z[free], jac=lambda x: p.jacobian(full(x))[np.ix_(on, free)],
                        bounds=(p.lo[free], p.hi[free]), method="trf", xtol=1e-15, ftol=1e-15,
                        gtol=1e-15, max_nfev=20)
    zp = full(np.clip(sol.x, p.lo[free], p.hi[free]))
    rp = p.residuals(zp)
    keep = (np.max(np.abs(rp[on])) < np.max(np.abs(r[on])) and p.q_excess(zp) <= max(
        0.0, p.q_excess(z)) + 1e-12 and np.all(np.abs(rp - r) < 1e-6))
    return zp if keep else z


def _solve_one(model: SimilitudeModel, base: dict, keys: list[str],
               box: dict[str, tuple[float, float]], bands: list[Band], q_max: float | None):
    """Solve ``bands`` for ``keys`` inside ``box``; returns the state and outputs.

    First an exact match (:func:`_root`); when none exists inside the limits, the
    nearest achievable point in priority order (:func:`_priority_order`).
    """
    p = _Problem(model, base, keys, box, bands, q_max)
    if keys:
        z, near = _root(p)
        if z is None:
            assert near is not None  # _root tries at least one start
            z = _priority_order(p, near)
        state = p.state(z)
    else:
        state = dict(base)
    if q_max is not None:  # project onto q <= q_max (q grows with the pressure level)
        pkey = "stagnation_pressure" if model.kind == "gas" else None
        for _ in range(5):
            q = float(np.asarray(model(state)["dynamic_pressure"]))
            if pkey is None or pkey not in keys or abs(q / q_max - 1.0) < 1e-13 or (
                    q < q_max * (1.0 - 1e-6)):
                break
            state[pkey] *= q_max / q
    return state, _scalar(model(state))


def solve_state(study: Study, model: SimilitudeModel, keys, bands) -> tuple[dict, dict]:
    """Set-point state (and outputs) solving ``bands`` for the model keys ``keys``.

    The building block of :func:`solve` and of test planning; the facility
    limits bound the unknowns and the dynamic-pressure limit holds.
    """
    keys = list(keys)
    base = nominal_state(study, model.fluid)
    for k in keys:
        base[k] = None
    return _solve_one(model, base, keys, {k: bounds(study, k) for k in keys}, list(bands),
                      study.facility.max_dynamic_pressure)


def _limits(study: Study, state: dict, out: dict) -> list[Limit]:
    fac = study.facility
    lim = []

    def add(q, rng, value):
        if rng:
            lim.append(Limit(q, "min", rng[0], value, _UNITS[q]))
            lim.append(Limit(q, "max", rng[1], value, _UNITS[q]))

    if fac.kind == "gas":
        add("stagnation_pressure", fac.stagnation_pressure_range, state["stagnation_pressure"])
        add("stagnation_temperature", fac.stagnation_temperature_range,
            state["stagnation_temperature"])
        add("mach", fac.mach_range, state["mach"])
    else:
        add("speed", fac.speed_range, state["speed"])
        add("static_pressure", fac.static_pressure_range, state["static_pressure"])
        add("temperature", fac.temperature_range, state["temperature"])
    big = largest_model(study)
    if big:
        lim.append(Limit("model_length", "max", big, state["model_length"], "m"))
    if fac.max_dynamic_pressure:
        lim.append(Limit("dynamic_pressure", "max", fac.max_dynamic_pressure,
                         out["dynamic_pressure"], "Pa"))
    return lim


def _describe(sp_state, out, keys, bands, limits, required, shown) -> tuple:
    msgs = []
    mismatch = {}
    for b in bands:
        mismatch[b.group] = band_residual(b, out)
    matched = all(abs(v) < MATCHED for v in mismatch.values())
    for lim in limits:
        if not lim.ok:
            word = "above the facility maximum" if lim.side == "max" else "below the facility minimum"
            what = "solved" if lim.quantity in keys else "given"
            msgs.append(f"The {what} {lim.quantity.replace('_', ' ')} "
                        f"{_q(lim.value, lim.unit, shown)} is {word} "
                        f"{_q(lim.bound, lim.unit, shown)}.")
    active = [] if matched else [lim for lim in limits if lim.active and lim.ok]
    binding = [f"{lim.quantity} {lim.side} {_q(lim.bound, lim.unit)}" for lim in active]
    said = [f"{lim.quantity} {lim.side} {_q(lim.bound, lim.unit, shown)}" for lim in active]
    if not matched:
        needs = ", ".join(f"{k.replace('_', ' ')} {_q(v, _UNITS.get(k, ''), shown)}"
                          for k, v in required.items() if math.isfinite(v))
        if needs:
            msgs.append(f"Matching every solved group would need {needs}.")
        parts = []
        for b in bands:
            y = out[b.output]
            # round first so that a difference of -0.00001 reads +0.0000, not -0.0000
            parts.append(f"{b.output} = {round(y, 4) + 0.0:+.4f}" if b.is_difference else
                         f"{b.output} = {y:.4f} ({100 * (y - 1):+.2f} %)")
        where = ", ".join(f"{k.replace('_', ' ')} = {_q(sp_state[k], _UNITS.get(k, ''), shown)}"
                          for k in keys)
        msgs.append(f"Nearest achievable set point{' (' + where + ')' if where else ''}: "
                    + "; ".join(parts) + "."
                    + (f" Binding limit{'s' if len(said) > 1 else ''}: {', '.join(said)}."
                       if said else ""))
    return msgs, mismatch, binding, matched


def solve(study: Study, model: SimilitudeModel | None = None) -> SetPoint:
    """Solve the nominal set point of a study.

    With several candidate fluids (``match.solve_for`` includes ``gas``) each is
    solved and the best kept: inside its property model first, then feasible, then
    the smallest mismatch (in tolerance bands).

    Raises
    ------
    StudyError
        When the set point lies outside the property model of every candidate
        fluid (condensation, liquid side of the saturation line, a model's range).

    """
    candidates = [model.fluid] if model is not None else list(study.facility.fluids)
    if "fluid" not in study.unknowns:
        candidates = candidates[:1]
    results = [_solve_fluid(study, model if model is not None and f is model.fluid
                            else build_model(study, f)) for f in candidates]
    best = min(results, key=lambda sp: (bool(sp.outside_model), not sp.feasible,
                                        sum(v * v for v in sp.mismatch.values())))
    if best.outside_model:
        from simunc.errors import StudyError

        key = "facility.humidity" if "supersaturated" in best.outside_model else "facility"
        raise StudyError(key, f"a set point outside the {best.fluid} model ({best.outside_model})",
                         "facility settings and ranges that keep the test section inside the fluid "
                         "model (e.g. " + ("a higher stagnation temperature, a drier gas, another "
                                           "fluid)" if study.kind == "gas" else
                                           "a static pressure at most 5 bar, a water temperature "
                                           "of 0-40 °C, above the vapour pressure)"))
    if len(results) > 1:
        alts: list[dict[str, Any]] = [{"fluid": sp.fluid, "feasible": sp.feasible,
                                       "mismatch": dict(sp.mismatch)} for sp in results]
        best = replace(best, alternatives=alts, messages=best.messages + [
            "Working fluid chosen among " + ", ".join(a["fluid"] for a in alts) + f": {best.fluid}."])
    return best


def _solve_fluid(study: Study, model: SimilitudeModel) -> SetPoint:
    base = nominal_state(study, model.fluid)
    keys = [k for k in study.unknowns if k != "fluid"]
    bands = [b for b in study.bands if b.solve]
    q_max = study.facility.max_dynamic_pressure
    box = {k: bounds(study, k) for k in keys}
    for k in keys:
        base[k] = None
    state, out = _solve_one(model, base, keys, box, bands, q_max)

    # The same problem with the facility limits lifted: what a match would need.
    required = {}
    if keys:
        wide = {k: (box[k][0] / 100.0, box[k][1] * 100.0) if k not in ("mach", "temperature")
                else bounds(replace(study, facility=replace(study.facility, mach_range=(0.0, 1.0)))
                            if k == "mach" else study, k) for k in keys}
        try:
            free, free_out = _solve_one(model, base, keys, wide, bands, None)
            ok = all(abs(band_residual(b, free_out)) < MATCHED for b in bands)
            required = {k: free[k] if ok else math.nan for k in keys}
        except (ValueError, FloatingPointError):
            required = {k: math.nan for k in keys}

    limits = _limits(study, state, out)
    msgs, mismatch, binding, matched = _describe(state, out, keys, bands, limits, required,
                                                 study.display_units)
    states = [out["static_pressure"], out["static_temperature"]]
    reason = ("non-finite set point (the solver found no state of the fluid model)"
              if not all(math.isfinite(v) for v in out.values() if isinstance(v, float) and v == v)
              or not all(math.isfinite(v) for v in states) else
              model.fluid.check_state(*states))
    if not reason and model.kind == "gas":  # the stagnation state too (liquid side at T0?)
        reason = model.fluid.check_state(out["stagnation_pressure"], out["stagnation_temperature"])
    if reason:
        msgs.append(f"The facility state is outside the {model.fluid.name} model: {reason}.")
    feasible = matched and all(lim.ok for lim in limits) and not reason
    coverage = []
    for where, fluid, pt in (
            ("test section", model.fluid, (out["static_pressure"], out["static_temperature"])),
            ("settling chamber", model.fluid if model.kind == "gas" else None,
             (out["stagnation_pressure"], out["stagnation_temperature"])),
            ("full scale", model.full_scale_fluid,
             (state["full_scale_static_pressure"], out["full_scale_temperature"]))):
        note = getattr(fluid, "coverage_note", None)
        text = note(*pt) if note is not None else None
        if text:
            coverage.append(f"Property model at the {where}: {text}.")
    for b in study.bands:
        if not b.solve:
            y = out[b.output]
            msgs.append(f"{b.group} is checked, not imposed: {b.output} = "
                        + (f"{y:+.4f}." if b.is_difference else f"{y:.4f}."))
    if model.kind == "liquid":
        depth = float(np.asarray(model.immersion_depth(state)))
        if depth > 0.0:
            how = (" (the full-scale depth scaled with the model)" if state.get("geometric_depth")
                   else "")
            msgs.append(f"The model's reference point is {depth:.4g} m below the free surface"
                        f"{how}: static pressure at the model "
                        f"{_q(out['static_pressure'], 'Pa', study.display_units)}.")
    if isinstance(model.fluid, CoolPropGas) and model.full_scale_fluid is AIR:
        p_fs, t_fs = state["full_scale_static_pressure"], out["full_scale_temperature"]
        # Re = rho U L / mu at the same state (and the same Mach number, U = M a, when the full
        # scale is given by its Mach number): the ratio of the two models
        ratio = float(AIR_REAL.density(p_fs, t_fs) / AIR.density(p_fs, t_fs)
                      * AIR.viscosity(p_fs, t_fs) / AIR_REAL.viscosity(p_fs, t_fs)
                      * (AIR_REAL.speed_of_sound(p_fs, t_fs) / AIR.speed_of_sound(p_fs, t_fs)
                         if model.full_scale_given == "mach" else 1.0))
        msgs.append(f"The facility uses the real-gas {model.fluid.name} model; the full scale uses "
                    "dry_air (perfect gas, Sutherland viscosity). With the reference air model at "
                    f"full scale as well (full_scale.fluid = \"air_real\") the full-scale Reynolds "
                    f"number would differ by {100 * (ratio - 1):+.2f} %.")
    if study.band("mach") is None and model.kind == "gas":
        msgs.append(f"The Mach number is not matched: Ma_model - Ma_full = "
                    f"{out['mach_model'] - out['mach_full_scale']:+.4f}.")
    method = "exact" if feasible else "least squares"
    first = keys[0] if keys else ""
    return SetPoint(state, out, tuple(keys), required.get(first, math.nan), feasible, limits, msgs,
                    method, mismatch, binding, required, model.fluid.name, outside_model=reason or "",
                    coverage=tuple(coverage))
