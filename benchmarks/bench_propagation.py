"""Benchmark: framework Monte Carlo propagation against a hand-written numpy evaluation.

Usage::

    python3 benchmarks/bench_propagation.py [--trials N] [--seed S] [--repeats R] [--profile]

For the demo study ``studies/arven_cruise.toml`` the script

1. solves the set point and builds the :class:`simunc.uncertainty.problem.Problem`;
2. times the framework path: :func:`simunc.uncertainty.propagate.monte_carlo`, then
   :func:`simunc.uncertainty.propagate.summarize` on every output and
   :func:`simunc.pipeline.conformity`;
3. times a hand-written plain-numpy evaluation of the same measurement model
   (isentropic relations, Sutherland law, Reynolds number written inline) on
   the same PCG64 uniforms, with the same statistics (mean, standard
   deviation, the two coverage-interval quantiles of every output, the
   conformity probabilities);
4. checks that both give the same numbers, so that the timing comparison is
   fair;
5. prints the best-of-R times (framework and hand-written repeats interleaved
   so both see the same machine noise), their ratio and PASS/FAIL against the
   targets ``ratio <= 1.5`` and ``framework < 2 s``.

``--profile`` adds a breakdown of both paths into sampling, inverse-CDF
mapping, model and statistics.

This is a measuring script, not a test: the timing targets are reported, never
asserted.  The exit status is 1 only when the two evaluations disagree (the
comparison would then be meaningless), else 0.
"""

from __future__ import annotations

import argparse
import gc
import math
import os
import platform
import sys
import time
from dataclasses import replace
from pathlib import Path

import numpy as np
import scipy
from scipy.special import ndtri

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from simunc.pipeline import conformity, prepare
from simunc.study.readers import load_study
from simunc.uncertainty.propagate import monte_carlo, summarize
from simunc.uncertainty.sampling import map_to_inputs, unit_samples

STUDY = ROOT / "studies" / "arven_cruise.toml"
TARGET_RATIO = 1.5
TARGET_SECONDS = 2.0
#: Kept away from 0 and 1 before the inverse CDF, as the framework does.
EPS = 1e-15
#: Reference temperature of the Sutherland law about T_ref [K].
T_REF = 273.15


# ---------------------------------------------------------------------------
# Setup (framework objects; also the source of the hand-written path's data)
# ---------------------------------------------------------------------------

class Case:
    """The demo study, solved once; plain data for the hand-written path."""

    def __init__(self, path: Path):
        # The hand-written path has no copula: compare on independent inputs.
        self.study = replace(load_study(path), correlation=None)
        prep = prepare(self.study)
        self.model, self.setpoint = prep.model, prep.setpoint
        self.inputs, self.problem = list(prep.inputs), prep.problem
        self.coverage_probability = self.study.run.coverage_probability
        # Plain numbers only: no simunc function is called by the hand-written path.
        fac = self.study.facility
        if fac.mach_from != "pressure_ratio" or self.study.full_scale.given != "mach":
            raise SystemExit("the hand-written model covers mach_from = pressure_ratio and a "
                             "full-scale Mach number, as in the demo study")
        self.gas = (fac.gas.gamma, fac.gas.gas_constant, fac.gas.mu_ref)
        fs_gas = self.model.full_scale_fluid
        self.fs_gas = (fs_gas.gamma, fs_gas.gas_constant, fs_gas.mu_ref)
        self.nominal = dict(self.setpoint.nominal)
        # (target, kind, standard uncertainty, half-width) of each input, in column order.
        self.specs = [(i.target, i.kind, i.standard_uncertainty, i.half_width) for i in self.inputs]
        self.bands = [(b.group, b.output, b.centre, b.tolerance) for b in self.study.bands]
        supported = {"stagnation_pressure_indication", "stagnation_pressure_control",
                     "static_pressure_indication", "mach_indication", "mach_control",
                     "stagnation_temperature_indication", "stagnation_temperature_control",
                     "model_reference_length", "viscosity_model", "full_scale_temperature"}
        other = {t for t, *_ in self.specs} - supported
        if other:
            raise SystemExit(f"the hand-written model does not cover the targets {sorted(other)}")


# ---------------------------------------------------------------------------
# Framework path
# ---------------------------------------------------------------------------

#: The outputs the hand-written path computes; the framework summarises the same ones (its model
#: still computes all its groups, and that time counts).
COMPARED = ("reynolds_ratio", "mach_difference", "reynolds_model", "mach_model",
            "reynolds_full_scale", "mach_full_scale", "dynamic_pressure", "speed", "density",
            "viscosity", "static_pressure", "static_temperature", "stagnation_pressure",
            "stagnation_temperature", "model_length", "full_scale_temperature", "full_scale_speed",
            "sutherland")


def framework(case: Case, trials: int, seed: int):
    """monte_carlo + summarize on the compared outputs + conformity."""
    _, y = monte_carlo(case.problem, trials, seed)
    stats = {k: summarize(y[k], case.coverage_probability) for k in COMPARED}
    conf = conformity(y, case.study)
    return stats, conf


# ---------------------------------------------------------------------------
# Hand-written path (numpy + scipy.special.ndtri only)
# ---------------------------------------------------------------------------

def hand_uniforms(trials: int, d: int, seed: int) -> np.ndarray:
    """The same kind of uniforms: PCG64 seeded with ``seed``, (trials, d), clipped."""
    u = np.random.default_rng(seed).random((trials, d))
    return np.clip(u, EPS, 1.0 - EPS)


def hand_deviations(u: np.ndarray, specs) -> list[np.ndarray]:
    """Inverse CDFs written out: normal via ndtri, rectangular and symmetric triangular."""
    cols = []
    for j, (_, kind, s, a) in enumerate(specs):
        q = u[:, j]
        if kind == "normal":
            cols.append(ndtri(q) * s)
        elif kind == "rectangular":
            cols.append(q * (2.0 * a) - a)
        elif kind == "triangular":  # mode at the centre (c = 1/2)
            cols.append(np.where(q < 0.5, np.sqrt(0.5 * q), 1.0 - np.sqrt(0.5 * (1.0 - q)))
                        * (2.0 * a) - a)
        else:
            raise SystemExit(f"no hand-written inverse CDF for {kind!r}")
    return cols


def hand_model(case: Case, cols: list[np.ndarray]) -> dict[str, np.ndarray]:
    """The measurement model of simunc/model.py, written inline for this study."""
    e: dict[str, object] = {}
    for (target, *_), v in zip(case.specs, cols):
        e[target] = e[target] + v if target in e else v
    z = 0.0
    nom = case.nominal
    gamma, r_gas, mu_ref = case.gas
    gm1 = gamma - 1.0
    expo = gamma / gm1

    # Facility: true values from set point, indication errors and control deviations.
    p0_indicated = nom["stagnation_pressure"] + e.get("stagnation_pressure_control", z)
    p0 = p0_indicated - e.get("stagnation_pressure_indication", z)
    t0 = (nom["stagnation_temperature"] - e.get("stagnation_temperature_indication", z)
          + e.get("stagnation_temperature_control", z))
    mach_dev = e.get("mach_control", z) - e.get("mach_indication", z)
    # Mach number from the indicated pressure ratio (isentropic, subsonic).
    p_over_p0_set = (1.0 / (1.0 + 0.5 * gm1 * nom["mach"] ** 2)) ** expo
    p_true = p0_indicated * p_over_p0_set - e.get("static_pressure_indication", z)
    mach = np.sqrt(2.0 / gm1 * ((p0 / p_true) ** (gm1 / gamma) - 1.0)) + mach_dev
    # Test-section state.
    t_over_t0 = 1.0 / (1.0 + 0.5 * gm1 * mach ** 2)
    t = t0 * t_over_t0
    p = p0 * t_over_t0 ** expo
    rho = p / (r_gas * t)
    speed = mach * np.sqrt(gamma * r_gas * t)
    s = nom["sutherland"] + e.get("sutherland_constant", z)
    mu = mu_ref * (t / T_REF) ** 1.5 * (T_REF + s) / (t + s) * (1.0 + e.get("viscosity_model", z))
    length = nom["model_length"] + e.get("model_reference_length", z)
    re_model = rho * speed * length / mu

    # Full scale at the stated Mach number.
    fg_gamma, fg_r, fg_mu_ref = case.fs_gas
    t_fs = nom["full_scale_static_temperature"] + e.get("full_scale_temperature", z)
    mach_fs = nom["full_scale_speed_or_mach"]
    speed_fs = mach_fs * np.sqrt(fg_gamma * fg_r * t_fs)
    rho_fs = nom["full_scale_static_pressure"] / (fg_r * t_fs)
    mu_fs = fg_mu_ref * (t_fs / T_REF) ** 1.5 * (T_REF + s) / (t_fs + s)
    re_fs = rho_fs * speed_fs * nom["full_scale_length"] / mu_fs

    out = {
        "reynolds_ratio": re_model / re_fs,
        "mach_difference": mach - mach_fs,
        "reynolds_model": re_model,
        "mach_model": mach,
        "reynolds_full_scale": re_fs,
        "mach_full_scale": mach_fs,
        "dynamic_pressure": 0.5 * gamma * p * mach ** 2,
        "speed": speed,
        "density": rho,
        "viscosity": mu,
        "static_pressure": p,
        "static_temperature": t,
        "stagnation_pressure": p0,
        "stagnation_temperature": t0,
        "model_length": length,
        "full_scale_temperature": t_fs,
        "full_scale_speed": speed_fs,
        "sutherland": s,
    }
    n = len(cols[0])
    return {k: np.broadcast_to(np.asarray(v, dtype=float), (n,)) for k, v in out.items()}


def hand_statistics(case: Case, y: dict[str, np.ndarray]):
    """Mean, standard deviation (n - 1), the two interval quantiles, conformity."""
    a = 0.5 * (1.0 - case.coverage_probability)
    stats = {}
    for k, v in y.items():
        low, high = np.quantile(v, [a, 1.0 - a])
        stats[k] = {"mean": float(np.mean(v)), "standard_uncertainty": float(np.std(v, ddof=1)),
                    "low": float(low), "high": float(high)}
    inside_all = None
    conf = {}
    for group, output, centre, tol in case.bands:
        inside = np.abs(y[output] - centre) <= tol
        conf[group] = float(np.mean(inside))
        inside_all = inside if inside_all is None else inside_all & inside
    conf["all"] = float(np.mean(inside_all))
    return stats, conf


def hand_written(case: Case, trials: int, seed: int):
    u = hand_uniforms(trials, len(case.specs), seed)
    y = hand_model(case, hand_deviations(u, case.specs))
    return hand_statistics(case, y)


# ---------------------------------------------------------------------------
# Agreement
# ---------------------------------------------------------------------------

def same_input_samples(case: Case, seed: int, n: int = 20_000) -> bool:
    """Whether the framework draws the input values the hand-written path draws."""
    x, _ = monte_carlo(case.problem, n, seed)
    cols = hand_deviations(hand_uniforms(n, len(case.specs), seed), case.specs)
    return x.shape == (n, len(cols)) and all(
        np.allclose(x[:, j], c, rtol=1e-12, atol=0.0) for j, c in enumerate(cols))


def agreement(fw, hw, same_uniforms: bool, trials: int):
    """Largest relative differences and whether they are within tolerance.

    With the same uniforms the two paths compute the same numbers up to
    rounding (tolerance 1e-9 on every statistic of every output).  If the
    framework's sampling no longer matches (independent draws), the
    Reynolds-ratio mean must agree to 1e-3 and its standard uncertainty to
    3e-3 relative (about 4 Monte Carlo standard errors at 1e6 trials).
    """
    fs, fc = fw
    hs, hc = hw

    def rel(a, b):
        return abs(a - b) / max(abs(a), abs(b), 1e-300)
    rr_mean = rel(fs["reynolds_ratio"]["mean"], hs["reynolds_ratio"]["mean"])
    rr_u = rel(fs["reynolds_ratio"]["standard_uncertainty"],
               hs["reynolds_ratio"]["standard_uncertainty"])
    keys = ("mean", "standard_uncertainty", "low", "high")
    worst = max((rel(fs[o][k], hs[o][k]) for o in set(hs) & set(fs) for k in keys), default=0.0)
    conf = max(abs(fc[g] - hc[g]) for g in hc)
    missing = set(hs) - set(fs)  # the framework may compute more groups; it must cover these
    if same_uniforms:
        ok = not missing and worst <= 1e-9 and conf <= 2.0 / trials
    else:
        p = fc["all"]
        ok = (not missing and rr_mean <= 1e-3 and rr_u <= 3e-3
              and conf <= 4.0 * math.sqrt(2.0 * p * (1.0 - p) / trials) + 1.0 / trials)
    return ok, rr_mean, rr_u, worst, conf, missing


# ---------------------------------------------------------------------------
# Timing
# ---------------------------------------------------------------------------

def timed(fn, *args):
    gc.collect()
    t = time.perf_counter()
    out = fn(*args)
    return time.perf_counter() - t, out


def best(fn, repeats: int, *args) -> float:
    return min(timed(fn, *args)[0] for _ in range(repeats))


def profile(case: Case, trials: int, seed: int, repeats: int) -> None:
    """Best-of-``repeats`` time of each stage of both paths, on the same data."""
    p = case.coverage_probability
    d = case.problem.dimension
    a = 0.5 * (1.0 - p)
    u = unit_samples(trials, d, seed)
    x = map_to_inputs(u, case.problem.distributions)
    y = case.problem.evaluate(x)
    uc = hand_uniforms(trials, d, seed)
    cols = hand_deviations(uc, case.specs)
    yh = hand_model(case, cols)

    def all_summaries():
        for v in y.values():
            summarize(v, p)

    def each(f):
        def g():
            for v in y.values():
                f(np.asarray(v, dtype=float))
        return g

    def ppf_only():
        for j, dist in enumerate(case.problem.distributions):
            dist.ppf(uc[:, j])

    rows = [
        ("framework", "sampling: unit_samples", lambda: unit_samples(trials, d, seed)),
        ("framework", "mapping: map_to_inputs (clip + frozen ppf)",
         lambda: map_to_inputs(u, case.problem.distributions)),
        ("framework", "  of which np.clip", lambda: np.clip(u, EPS, 1.0 - EPS)),
        ("framework", "  of which frozen .ppf x %d" % d, ppf_only),
        ("framework", "model: problem.evaluate", lambda: case.problem.evaluate(x)),
        ("framework", "statistics: summarize x %d" % len(y), all_summaries),
        ("framework", "  of which np.isfinite/all", each(lambda v: np.all(np.isfinite(v)))),
        ("framework", "  of which np.quantile (2 q)", each(lambda v: np.quantile(v, [a, 1 - a]))),
        ("framework", "  of which np.mean", each(np.mean)),
        ("framework", "  of which np.std(ddof=1)", each(lambda v: np.std(v, ddof=1))),
        ("framework", "conformity", lambda: conformity(y, case.study)),
        ("hand", "sampling + clip", lambda: hand_uniforms(trials, d, seed)),
        ("hand", "mapping: ndtri / closed forms", lambda: hand_deviations(uc, case.specs)),
        ("hand", "model inline", lambda: hand_model(case, cols)),
        ("hand", "statistics + conformity", lambda: hand_statistics(case, yh)),
    ]
    print()
    print(f"profile (best of {repeats}, {trials:_} trials)")
    for path, label, fn in rows:
        print(f"  {path:<9} {label:<46} {best(fn, repeats):8.3f} s")


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--trials", type=int, default=1_000_000)
    ap.add_argument("--seed", type=int, default=None, help="default: the study's run.seed")
    ap.add_argument("--repeats", type=int, default=3)
    ap.add_argument("--profile", action="store_true", help="also print a per-stage breakdown")
    args = ap.parse_args(argv)
    if args.trials < 2 or args.repeats < 1:
        ap.error("need --trials >= 2 and --repeats >= 1")

    case = Case(STUDY)
    seed = case.study.run.seed if args.seed is None else args.seed
    n = args.trials

    # Warm-up (imports, first-call overheads) on a small run of each path.
    framework(case, 1000, seed)
    hand_written(case, 1000, seed)

    t_fw, t_hw = [], []
    fw = hw = None
    for _ in range(args.repeats):
        t, fw = timed(framework, case, n, seed)
        t_fw.append(t)
        t, hw = timed(hand_written, case, n, seed)
        t_hw.append(t)

    same = same_input_samples(case, seed)
    ok, rr_mean, rr_u, worst, conf, missing = agreement(fw, hw, same, n)
    best_fw, best_hw = min(t_fw), min(t_hw)
    ratio = best_fw / best_hw

    rr = fw[0]["reynolds_ratio"]
    print(f"study                    {STUDY.relative_to(ROOT)}")
    print(f"inputs / outputs         {case.problem.dimension} / {len(fw[0])}")
    print(f"trials                   {n:_}")
    print(f"seed                     {seed}")
    print(f"environment              python {platform.python_version()}, numpy {np.__version__}, "
          f"scipy {scipy.__version__}, {os.cpu_count()} CPUs, OPENBLAS_CORETYPE="
          f"{os.environ.get('OPENBLAS_CORETYPE', '(unset)')}")
    print(f"framework seconds        {best_fw:.3f}  (best of {args.repeats}: "
          + ", ".join(f"{t:.3f}" for t in t_fw) + ")")
    print(f"hand-written seconds     {best_hw:.3f}  (best of {args.repeats}: "
          + ", ".join(f"{t:.3f}" for t in t_hw) + ")")
    print(f"ratio framework/hand     {ratio:.2f}")
    print(f"Re ratio mean, u         {rr['mean']:.9f}, {rr['standard_uncertainty']:.6e}")
    print(f"conformity (framework)   " + ", ".join(f"{k} {v:.6f}" for k, v in fw[1].items()))
    print(f"agreement                {'OK' if ok else 'MISMATCH'} "
          f"({'same uniforms' if same else 'independent draws'}; Re ratio mean rel diff "
          f"{rr_mean:.1e}, u rel diff {rr_u:.1e}; worst statistic rel diff {worst:.1e}; "
          f"conformity abs diff {conf:.1e})")
    if missing:
        print(f"  outputs the framework lacks: {sorted(missing)}")
    print(f"  statistics compared on {len(COMPARED)} outputs; the framework's model also computes "
          "its other groups (Froude, Euler, Prandtl, gamma), and that time counts")
    print(f"target ratio <= {TARGET_RATIO}       {'PASS' if ratio <= TARGET_RATIO else 'FAIL'}")
    print(f"target framework < {TARGET_SECONDS:g} s   "
          f"{'PASS' if best_fw < TARGET_SECONDS else 'FAIL'}"
          + ("" if n == 1_000_000 else f"  (measured at {n:_} trials; the target is for 1e6)"))
    if args.profile:
        profile(case, n, seed, args.repeats)
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
