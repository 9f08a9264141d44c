"""The inverse problem: the tolerances a set of accuracy requirements allows.

Requirements (:class:`simunc.study.schema.Requirement`) are checked on Monte
Carlo trials: ``U_p(y) <= limit`` (half-length of the probabilistically
symmetric coverage interval, JCGM 101:2008 7.7), ``P(|y - c| <= w) >= p`` and
the conformity probability of the tolerance bands ``>= p`` (JCGM 106:2012).

* :func:`input_limits`: for each input alone (the others as written), the
  largest tolerance scale that still meets every requirement, by bracketing
  and geometric bisection on the common-random-number design sample.
* :func:`allocate`: the cheapest tolerances over the inputs with a cost model.
  A continuous cost ``c_i (U_written / U)^b_i`` is minimised under a Gaussian
  surrogate of the requirements built from the GUM sensitivity coefficients
  (variance of y = (c o s)^T V (c o s), V the input covariance) and calibrated
  on the design sample (its bias, coverage-factor and nonlinearity ratios);
  the surrogate optimum is then scaled by a common factor until the design
  sample meets the requirements with a margin, and the surrogate is calibrated
  again there (three rounds).  With instrument grades every combination is
  costed, the surrogate screens them and the cheapest combinations are checked
  on the design sample in order of price.  The chosen allocation is verified by
  a fresh Monte Carlo run (an independent seed stream), which also reports
  whether it still holds with every tolerance loosened by 10 %.

The design sample is finite and the verification run is another finite
sample, so the search asks for a margin of three standard errors of the
difference between the two (common practice, no source): probabilities above
the required value by 3 sqrt(p (1 - p) (1/n_design + 1/n_verify)) (binomial),
U_p below its limit by 3 SE(U_p) sqrt(1 + n_design/n_verify), with SE(U_p) of
the design sample from the large-sample variance of sample quantiles,
Var(q_a) = a (1 - a) / (n f(y_a)^2) and Cov(q_a, q_b) = a (1 - b) / (n f(y_a) f(y_b))
for a < b (H. A. David, H. N. Nagaraja, *Order Statistics*, 3rd ed., Wiley,
2003, 10.2 (from memory of that book)), the sparsity 1/f estimated from the
sample by a difference of quantiles -- so the margin follows the coverage
probability and the tails of the actual output.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from itertools import product
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd
from scipy import optimize, special

from simunc.decisions.balance import balance_spec, balances, choices
from simunc.decisions.requirements import (
    KINDS,
    LOOSEN,
    SCREEN,
    centre_of,
)
from simunc.similitude.inputs import standard_uncertainty
from simunc.study.planning import MAX_GRADE_COMBINATIONS
from simunc.study.written import statement

if TYPE_CHECKING:
    from simunc.decisions.design import Design

#: Grade combinations the allocation enumerates at most, and design-sample checks at most.
MAX_COMBINATIONS, MAX_CHECKS = MAX_GRADE_COMBINATIONS, 150


# ---------------------------------------------------------------------------
# (a) one input at a time
# ---------------------------------------------------------------------------
#: Scales tried below the written tolerance when it fails (largest first).
_DOWN = (0.75, 0.5, 0.25, 0.1, 0.0)


def _largest_scale(ok, largest: float, iterations: int = 10) -> tuple[float, str]:
    """Largest s in [0, largest] with ``ok(s)``, and a status word.

    The search starts at the written tolerance (s = 1): when it passes, only larger
    scales are tried (doubling, then geometric bisection), so a requirement that gets
    harder as a tolerance *shrinks* (correlated errors that cancel) is never reported
    as unreachable.  When s = 1 fails, the scales of ``_DOWN`` are tried; the first that
    passes brackets the limit with the last failing one (arithmetic bisection).
    Status: ``limit``, ``not limiting`` (met up to ``largest``) or ``others break it``
    (no scale tried passes).
    """
    if ok(1.0):
        lo = 1.0
        while lo < largest:
            hi = min(2.0 * lo, largest)
            if not ok(hi):
                break
            lo = hi
        else:
            return largest, "not limiting"
        for _ in range(iterations):
            mid = math.sqrt(lo * hi)
            lo, hi = (mid, hi) if ok(mid) else (lo, mid)
        return lo, "limit"
    hi = 1.0
    for s in _DOWN:
        if ok(s):
            lo = s
            break
        hi = s
    else:
        return 0.0, "others break it"
    for _ in range(iterations):
        mid = 0.5 * (lo + hi)
        lo, hi = (mid, hi) if ok(mid) else (lo, mid)
    return lo, "limit"


def input_limits(design, inputs) -> pd.DataFrame:
    """Largest tolerance of each input alone that meets every requirement.

    Returns
    -------
    DataFrame
        Index ``input``: ``largest_scale`` (times the written tolerance),
        ``status`` (``limit``; ``not limiting`` up to the study's
        ``design.largest_scale``; ``others break it`` when no scale tried
        meets every requirement, with the allowed values NaN; ``not achievable``
        when even every input known exactly misses a requirement), ``written`` and ``allowed``
        (the tolerance in the form and units the study wrote it, :func:`statement`),
        ``U_k2_written`` and ``U_k2_allowed`` [SI unit of the input], ``unit``.
    """
    largest = design.study.design.largest_scale
    rows = []
    possible = design.figures(np.zeros(len(inputs)), margin=True).met()
    for j, inp in enumerate(inputs):
        written = statement(inp.spec)
        if not possible:
            rows.append({"input": inp.name, "perturbs": ", ".join(inp.targets),
                         "largest_scale": np.nan, "status": "not achievable",
                         "written": written, "allowed": "",
                         "U_k2_written": 2.0 * inp.standard_uncertainty, "U_k2_allowed": np.nan,
                         "unit": inp.unit})
            continue
        def ok(s, j=j):
            scale = design.ones()
            scale[j] = s
            return design.figures(scale, margin=True).met()
        s, status = _largest_scale(ok, largest)
        if status == "others break it":
            s = np.nan
        allowed = "" if status == "others break it" else statement(inp.spec, s)
        rows.append({"input": inp.name, "perturbs": ", ".join(inp.targets),
                     "largest_scale": s, "status": status, "written": written,
                     "allowed": ("at least " + allowed) if status == "not limiting" else allowed,
                     "U_k2_written": 2.0 * inp.standard_uncertainty,
                     "U_k2_allowed": 2.0 * inp.standard_uncertainty * s,
                     "unit": inp.unit})
    return pd.DataFrame(rows).set_index("input") if rows else pd.DataFrame()


# ---------------------------------------------------------------------------
# (b) allocation
# ---------------------------------------------------------------------------
@dataclass
class Surrogate:
    """Gaussian model of the requirement outputs against the tolerance scales.

    Calibrated on the design sample at a scale vector: per output the ratio of the Monte
    Carlo to the linear standard deviation and the bias (mean - centre); per U requirement
    the implied coverage factor U_p / u at its own probability and the relative search
    margin; per probability requirement the standard deviation that makes the normal
    probability equal the sample's (so its tail, not a normal one, is matched at the
    calibration point); per conformity requirement the ratio of the sample's joint
    probability to the product of the normal ones.
    """

    design: Design
    sens: dict          # output -> c (d,)
    cov: np.ndarray     # input covariance V (d, d)
    ratio: dict = field(default_factory=dict)    # output or requirement key -> sigma / sigma_lin
    kappa: dict = field(default_factory=dict)    # requirement key -> U_p / u
    slack: dict = field(default_factory=dict)    # requirement key -> relative U margin
    bias: dict = field(default_factory=dict)     # output -> mean - centre
    joint: dict = field(default_factory=dict)    # requirement key -> P_MC / prod P_normal

    def sigma(self, output: str, scales: np.ndarray) -> np.ndarray:
        """sigma_lin(y) for each row of ``scales`` (m, d)."""
        cs = scales * self.sens[output]
        return np.sqrt(np.maximum(np.einsum("mi,ij,mj->m", cs, self.cov, cs), 0.0))

    def matched_ratio(self, output: str, w: float, p_mc: float, lin: float) -> float:
        """sigma / sigma_lin with which the normal P(|y - c| <= w) equals ``p_mc``."""
        mu = self.bias[output]
        if not (0.0 < p_mc < 1.0) or lin <= 0.0:
            return self.ratio[output]
        f = lambda sd: special.ndtr((w - mu) / sd) - special.ndtr((-w - mu) / sd) - p_mc
        lo, hi = 1e-6 * w, 1e3 * w
        if f(lo) * f(hi) > 0:
            return self.ratio[output]
        return optimize.brentq(f, lo, hi, xtol=1e-12 * w) / lin

    def calibrate(self, scale: np.ndarray) -> None:
        d = self.design
        y = d.evaluate(scale)
        fig = d.figures(scale, y=y)
        st, sp = d.study, d.setpoint
        for k in self.sens:
            lin = float(self.sigma(k, scale[None, :])[0])
            u = fig.standard_uncertainty[k]
            self.ratio[k] = u / lin if lin > 0 and np.isfinite(u) and u > 0 else 1.0
            self.bias[k] = fig.mean[k] - centre_of(k, st, sp) if np.isfinite(fig.mean[k]) else 0.0
        self.joint = {}
        for r, c in zip(st.requirements, fig.requirements):
            KINDS[r.kind].calibrate(r, self, scale, y, fig, c)

    def p_within(self, output, w, scales, key=None):
        ratio = self.ratio.get(key, self.ratio[output]) if key else self.ratio[output]
        s = np.maximum(ratio * self.sigma(output, scales), 1e-300)
        mu = self.bias[output]
        return special.ndtr((w - mu) / s) - special.ndtr((-w - mu) / s)

    def conformity(self, r, scales, raw=False):
        st = self.design.study
        p = np.ones(len(scales))
        for g in r.groups:
            band = st.band(g)
            p = p * self.p_within(band.output, band.tolerance, scales)
        return p if raw else np.minimum(p * self.joint.get(r.key, 1.0), 1.0)

    def margins(self, scales: np.ndarray) -> np.ndarray:
        """Constraint values (>= 0 when met, with the design margins), shape (m, n_req)."""
        cols = [KINDS[r.kind].constraint(r, self, scales) for r in self.design.study.requirements]
        return np.column_stack(cols) if cols else np.zeros((len(scales), 0))


@dataclass
class Allocation:
    """Chosen tolerances, their cost, and the figures of the fresh verification run."""

    kind: str                       # "power" or "grades"
    scale: np.ndarray               # per input (1 for inputs left as written)
    cost: float
    cost_written: float | None      # cost of the tolerances as written (power costs)
    grades: dict                    # input -> chosen grade name (grades)
    table: pd.DataFrame | None      # instrument requirements (None without an allocation)
    design_checks: list             # on the design sample
    verification: list              # fresh run at the allocation
    loosened: list                  # fresh run, every allocated tolerance x LOOSEN
    verify_trials: int
    verify_seed: int
    rounds: int
    message: str = ""
    note: str = ""
    #: Controls whose allocated tolerance lets the facility leave a limit (for the report).
    excursions: tuple[str, ...] = ()
    #: The balance chosen among [[measurement.balance_option]] ("" without options), and the
    #: balances that were no candidate (why).
    balance: str = ""
    excluded_balances: tuple[str, ...] = ()
    #: P(every matched group in its band) in the fresh run at the allocation (NaN without one):
    #: an allocation meets the requirements, which need not hold the match.
    conformity: float = math.nan

    @property
    def verified(self) -> bool:
        return bool(self.verification) and all(c.met for c in self.verification)

    @property
    def fails_loosened(self) -> bool:
        return bool(self.loosened) and not all(c.met for c in self.loosened)


def _costed(inputs) -> list[int]:
    return [j for j, i in enumerate(inputs) if i.spec.cost is not None]


def _power_cost(inputs, idx, s) -> float:
    return float(sum(inputs[j].spec.cost.at_written * s[k] ** (-inputs[j].spec.cost.exponent)
                     for k, j in enumerate(idx)))


def grade_scale(inp, grade) -> float:
    """Tolerance scale of a grade: u_grade / u_written, with u of the grade as its datasheet
    states it, resolved at the input's reading with the input's distribution."""
    return standard_uncertainty(grade[1], inp.reading) / inp.standard_uncertainty


def _scale_to_fit(design, base: np.ndarray, idx: list[int], largest: float) -> float:
    """Common factor lambda on ``base[idx]`` such that the design sample just meets the requirements."""
    def ok(lam):
        s = base.copy()
        s[idx] = base[idx] * lam
        return design.figures(s, margin=True).met()
    lam, _ = _largest_scale(ok, largest / max(float(np.max(base[idx])), 1e-12), iterations=14)
    return lam


def allocate(design, inputs, sensitivities: pd.DataFrame, covariance: np.ndarray,
             verify_design_factory) -> Allocation | None:
    """Cheapest tolerances meeting every requirement (see the module docstring).

    Parameters
    ----------
    design : simunc.decisions.design.Design
    inputs : list of UncertainInput
    sensitivities : DataFrame
        GUM sensitivity coefficients c (index output, columns inputs) at the set point.
    covariance : ndarray
        Input covariance V_ij = r_ij u_i u_j.
    verify_design_factory : callable
        ``() -> Design`` of the fresh verification run.

    Returns None when no input has a cost model.
    """
    st = design.study
    idx = _costed(inputs)
    meas = st.measurement
    balance = choices(inputs, meas, design.setpoint.outputs) if meas is not None and meas.options \
        else None
    if balance is not None:
        idx = sorted(set(idx) | set(balance.indices))
    if not idx or not st.requirements:
        return None
    outs = list(dict.fromkeys([r.output for r in st.requirements if r.output] +
                              [st.band(g).output for r in st.requirements for g in r.groups]))
    sur = Surrogate(design, {k: sensitivities.loc[k].to_numpy(dtype=float) for k in outs},
                    np.asarray(covariance, dtype=float))
    largest = st.design.largest_scale
    kind = "grades" if balance is not None else inputs[idx[0]].spec.cost.kind
    base = design.ones()
    rounds, message, grades, note, chosen_balance = 0, "", {}, "", ""
    if kind == "power":
        sur.calibrate(base)
        best = None
        z0 = np.zeros(len(idx))
        for rounds in range(1, 4):
            def full(z):
                s = base.copy()
                s[idx] = np.exp(z)
                return s

            res = optimize.minimize(
                lambda z: _power_cost(inputs, idx, np.exp(z)), z0, method="SLSQP",
                bounds=[(math.log(1e-3), math.log(largest))] * len(idx),
                constraints=[{"type": "ineq", "fun": lambda z: sur.margins(full(z)[None, :])[0]}],
                options={"maxiter": 200, "ftol": 1e-10})
            s = full(res.x)
            lam = _scale_to_fit(design, s, idx, largest)
            s[idx] *= lam
            if lam > 0 and (best is None or _power_cost(inputs, idx, s[idx]) <
                            _power_cost(inputs, idx, best[idx])):
                best = s.copy()
            if lam <= 0:
                message = _why_impossible(design, idx)
                break
            if abs(math.log(lam)) < 0.005:
                break
            sur.calibrate(s)
            z0 = np.log(s[idx])
        if best is not None:
            best = _relax(design, best, idx, inputs, largest)
            if np.any(best[idx] <= 1.0001e-3):
                note = ("an allocated tolerance reached the solver's floor of 1/1000 of its "
                        "written value: the requirements are barely achievable with these inputs")
        scale = best if best is not None else base * np.nan
        cost = _power_cost(inputs, idx, scale[idx]) if best is not None else math.nan
        cost_written = _power_cost(inputs, idx, np.ones(len(idx)))
    else:
        # One choice per graded input, and the balance as one choice over its inputs:
        # (input indices, [(name, scale per index, price), ...]).
        groups = [([j], [(g[0], np.array([grade_scale(inputs[j], g)]), g[2])
                         for g in inputs[j].spec.cost.grades])
                  for j in idx if inputs[j].spec.cost is not None
                  and (balance is None or j not in balance.indices)]
        if balance is not None:
            groups.append((list(balance.indices), list(balance.candidates)))
        options = [g[1] for g in groups]
        n_comb = math.prod(len(o) for o in options)
        if n_comb > MAX_COMBINATIONS:
            raise ValueError(f"{n_comb} grade combinations (at most {MAX_COMBINATIONS})")
        combos = np.array(list(product(*[range(len(o)) for o in options])), dtype=int)
        if not combos.size:
            combos = np.zeros((0, len(options)), dtype=int)
        prices = np.array([sum(options[k][c][2] for k, c in enumerate(row)) for row in combos])
        scales = np.tile(base, (len(combos), 1))
        for k, (js, opts) in enumerate(groups):
            table_k = np.array([o[1] for o in opts]).reshape(len(opts), len(js))
            scales[:, js] = table_k[combos[:, k]]
        sur.calibrate(base)
        pred = np.all(sur.margins(scales) >= SCREEN, axis=1)
        order = np.lexsort((~pred, prices))
        scale, cost, checked, skipped = None, math.nan, 0, 0
        for m in order:
            if not pred[m] and checked >= MAX_CHECKS // 2:
                skipped += 1
                continue
            checked += 1
            if design.figures(scales[m], margin=True).met():
                scale, cost = scales[m].copy(), float(prices[m])
                grades = {inputs[j].name: options[k][combos[m, k]][0]
                          for k, (js, _) in enumerate(groups) for j in js}
                if balance is not None:  # the last group (it may act on no input)
                    chosen_balance = options[-1][combos[m, -1]][0]
                break
            if checked >= MAX_CHECKS:
                break
        if scale is None and not len(combos):
            message = ("no balance carries the expected loads with the load margin: "
                       + "; ".join(balance.excluded if balance is not None else ()))
            scale = base * np.nan
        elif scale is None:
            message = (_why_impossible(design, idx) if not design.figures(
                _zeroed(base, idx), margin=True).met() else
                f"no combination of the grades meets every requirement ({checked} of "
                f"{len(combos)} checked on the design sample in order of price)")
            scale = base * np.nan
        elif skipped:
            note = (f"{skipped} cheaper combinations that the Gaussian surrogate rated well short "
                    "of a requirement were not checked on the design sample; a cheaper passing "
                    "combination among them is possible for a strongly non-normal output")
        cost_written, rounds = None, checked
    assert scale is not None  # each branch ends with a scale (all NaN when none was found)
    ok = bool(np.all(np.isfinite(scale)))
    design_checks = design.figures(scale, margin=False).requirements if ok else []
    verification = loosened = []
    conformity = math.nan
    vd = None
    table = None
    if ok:
        vd = verify_design_factory()
        fig = vd.figures(scale)
        verification, conformity = fig.requirements, float(fig.conformity.get("all", math.nan))
        looser = scale.copy()
        looser[idx] *= LOOSEN
        loosened = vd.figures(looser).requirements
        specs = {}
        if chosen_balance and meas is not None and balance is not None:
            cap, fs = next((c, f) for n, c, f, _ in balances(meas) if n == chosen_balance)
            if chosen_balance != meas.balance or fs:   # the written balance keeps its inputs
                specs = {inputs[j].name: balance_spec(inputs[j], meas, cap, fs)
                         for j in balance.indices}
        table = instrument_table(inputs, scale, idx, grades, specs)
    excursions = tuple(control_excursions(inputs, scale, design.setpoint)) \
        if ok and not message else ()
    return Allocation(kind, scale, cost, cost_written, grades, table, design_checks, verification,
                      loosened, vd.trials if vd else 0, vd.seed if vd else 0, rounds, message,
                      note, excursions, balance=chosen_balance,
                      excluded_balances=balance.excluded if balance else (),
                      conformity=conformity)


def _relax(design, scale: np.ndarray, idx, inputs, largest: float) -> np.ndarray:
    """Loosen each costed input alone as far as the design sample allows (costliest first).

    The common-factor fit tightens every costed input together; an input that barely moves
    the requirements (or not at all) is given back its slack here.
    """
    s = scale.copy()
    order = sorted(idx, key=lambda j: -inputs[j].spec.cost.at_written / s[j] **
                   inputs[j].spec.cost.exponent)
    for j in order:
        def ok(v, j=j):
            t = s.copy()
            t[j] = v
            return design.figures(t, margin=True).met()
        lo, hi = s[j], min(largest, s[j] * 1e3)
        if ok(hi):
            s[j] = hi
            continue
        if not ok(lo * 1.01):
            continue
        for _ in range(12):
            mid = math.sqrt(lo * hi)
            lo, hi = (mid, hi) if ok(mid) else (lo, mid)
        s[j] = lo
    return s


def _zeroed(base: np.ndarray, idx) -> np.ndarray:
    s = base.copy()
    s[idx] = 0.0
    return s


def _why_impossible(design, idx) -> str:
    if not design.figures(np.zeros_like(design.ones()), margin=True).met():
        return ("no tolerances can meet the requirements at this set point: they fail even with "
                "every input known exactly (the set point itself misses them)")
    if not design.figures(_zeroed(design.ones(), idx), margin=True).met():
        return ("the inputs without a cost model, as written, break a requirement on their own "
                "(even with every costed input known exactly)")
    return "the allocation found no tolerances that meet every requirement"


#: Control deviations and the facility limit each one moves.
CONTROL_LIMITS = {"stagnation_pressure_control": "stagnation_pressure",
                  "stagnation_temperature_control": "stagnation_temperature",
                  "mach_control": "mach", "speed_control": "speed",
                  "static_pressure_control": "static_pressure",
                  "temperature_control": "temperature"}


def control_excursions(inputs, scale, setpoint) -> list[str]:
    """Facility limits that an allowed control deviation could cross.

    The excursion is the half-width of a bounded distribution, else 3 u (common practice, no
    source), at the allowed tolerance.
    """
    out = []
    for j, inp in enumerate(inputs):
        for target, factor in inp.effects:
            quantity = CONTROL_LIMITS.get(target)
            if quantity is None:
                continue
            half = inp.half_width
            reach = abs(factor) * float(scale[j]) * (half if half is not None
                                                     else 3.0 * inp.standard_uncertainty)
            for lim in setpoint.limits:
                if lim.quantity != quantity:
                    continue
                edge = lim.value + reach if lim.side == "max" else lim.value - reach
                if (lim.side == "max" and edge > lim.bound) or (lim.side == "min" and edge < lim.bound):
                    out.append(f"{inp.name}: a deviation of {reach:.4g} {lim.unit} about the set "
                               f"point {lim.value:.6g} {lim.unit} reaches past the facility "
                               f"{lim.side}imum {lim.bound:.6g} {lim.unit}")
    return out


def instrument_table(inputs, scale, allocated, grades, specs=None) -> pd.DataFrame:
    """Instrument and control requirements for the test plan.

    Columns: ``input``, ``quantity``, ``written`` (the tolerance as the study wrote it),
    ``allowed`` (the allowed tolerance in the same form and units, numbers rounded down to two
    significant digits; a chosen grade as its datasheet states it), ``scale``, ``distribution``,
    ``component``, ``source``, and in SI: ``U_k2_written``, ``U_k2_allowed`` (2u) and ``unit``.
    ``specs``: the inputs of a chosen balance on that balance (their allowed form).
    """
    rows = []
    specs = specs or {}
    for j, inp in enumerate(inputs):
        u = inp.standard_uncertainty * float(scale[j])
        if inp.name in specs:
            allowed, source = statement(specs[inp.name]), f"balance '{grades[inp.name]}'"
        elif inp.name in grades and inp.spec.cost is None:   # the written balance, chosen
            allowed, source = statement(inp.spec), f"balance '{grades[inp.name]}'"
        elif inp.name in grades:
            grade = next(g for g in inp.spec.cost.grades if g[0] == grades[inp.name])
            allowed, source = grade[3], f"grade '{grades[inp.name]}'"
        else:
            allowed = statement(inp.spec, float(scale[j]))
            source = "allocated" if j in allocated else "as written"
        rows.append({
            "input": inp.name, "quantity": inp.target.replace("_", " "),
            "written": statement(inp.spec), "allowed": allowed, "scale": float(scale[j]),
            "distribution": inp.kind, "component": inp.component, "source": source,
            "U_k2_written": 2.0 * inp.standard_uncertainty, "U_k2_allowed": 2.0 * u,
            "unit": inp.unit,
        })
    return pd.DataFrame(rows)
