"""Benchmark: Sobol' indices of a 12-input similitude problem at N = 2^13 base samples.

Usage::

    python3 benchmarks/bench_sensitivity.py [--base-samples N] [--repeats R] [--no-salib]

The problem is the demo study ``studies/arven_cruise.toml`` (9 uncertain inputs) with three
more inputs added to the loaded study (invented, for timing only): a Mach-number control
fluctuation (``mach_control``), a second static-pressure transducer
(``static_pressure_indication``) and a gas-density model deviation (``density_model``).
Its correlation table is dropped (Sobol' indices take independent inputs).

Measured, in one run:

(a) the target case: :func:`simunc.uncertainty.sobol.sobol_analysis` with first and total indices
    and their bootstrap confidence intervals (R = 200 resamples, the default), 12 inputs,
    N = 2^13, on 10 outputs (the matched-group outputs plus the next varying model outputs);
    wall time of each of ``--repeats`` runs and the best, against the target of 5 s;
(b) the same on the matched-group outputs only (what ``simunc run`` computes);
(c) extra information: ``second_order=True``; the Sobol' G-function with 12 inputs at the
    same N; R = 1000 resamples; one output through SALib's own ``analyze`` (its bootstrap
    gathers every resample with fancy indexing) and the largest difference from ours.

A measuring script, not a test: the target is reported, never asserted.  The machine may be
shared; the load average is printed with the figures.
"""

from __future__ import annotations

import argparse
import os
import platform
import sys
import time
import tomllib
import warnings
from pathlib import Path

import numpy as np
import scipy

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from simunc.pipeline import prepare
from simunc.study.readers import parse_study
from simunc.uncertainty.problem import Problem
from simunc.uncertainty.sobol import sobol_analysis

STUDY = ROOT / "studies" / "arven_cruise.toml"
TARGET_SECONDS = 5.0
OUTPUTS = 10

#: Three more uncertain inputs (invented sizes, for timing only).
EXTRA_INPUTS = [
    {"name": "Mach control fluctuation", "perturbs": "mach_control",
     "distribution": "rectangular", "half_width": "0.0008", "component": "random"},
    {"name": "static-pressure transducer B", "perturbs": "static_pressure_indication",
     "distribution": "normal", "standard_uncertainty": "0.02 %"},
    {"name": "density model", "perturbs": "density_model",
     "distribution": "rectangular", "half_width": "0.02 %"},
]


def twelve_input_problem():
    """The demo study with three more inputs: its Problem, band outputs, 10 outputs."""
    data = tomllib.loads(STUDY.read_text())
    data["uncertain"] = list(data["uncertain"]) + EXTRA_INPUTS
    data.pop("correlations", None)
    study = parse_study(data, str(STUDY))
    problem = prepare(study).problem
    bands = [b.output for b in study.bands]
    u = np.random.default_rng(0).random((256, problem.dimension))
    y = problem.evaluate_unit(u)
    varying = [k for k, v in y.items() if np.ptp(v) > 1e-12 * max(1.0, np.max(np.abs(v)))]
    ten = bands + [k for k in varying if k not in bands][:OUTPUTS - len(bands)]
    return problem, bands, ten


def g_function_problem(d: int = 12) -> Problem:
    """Sobol' G-function, a = (0, 1, 4.5, 9, 99, ...)."""
    a = np.array([0.0, 1.0, 4.5, 9.0] + [99.0] * (d - 4))
    names = [f"x{i + 1}" for i in range(d)]
    from scipy import stats

    def g(x):
        y = 1.0
        for ai, n in zip(a, names):
            y = y * (np.abs(4.0 * x[n] - 2.0) + ai) / (1.0 + ai)
        return {"g": y}

    return Problem(names, [stats.uniform()] * d, g)


def timed(fn, repeats: int):
    runs = []
    for _ in range(repeats):
        t = time.perf_counter()
        out = fn()
        runs.append(time.perf_counter() - t)
    return out, runs


def line(label: str, runs, extra: str = "") -> None:
    each = ", ".join(f"{r:.3f}" for r in runs)
    print(f"{label:<44} best {min(runs):7.3f} s   (runs: {each} s){extra}")


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--base-samples", type=int, default=2**13)
    ap.add_argument("--repeats", type=int, default=3)
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--no-salib", action="store_true", help="skip the SALib comparison")
    args = ap.parse_args(argv)
    n, seed, rep = args.base_samples, args.seed, args.repeats

    t = time.perf_counter()
    problem, bands, ten = twelve_input_problem()
    setup = time.perf_counter() - t
    d = problem.dimension
    print(f"problem                 {STUDY.relative_to(ROOT)} + 3 inputs: {d} inputs "
          f"(set-up {setup:.2f} s)")
    print(f"outputs (target case)   {len(ten)}: {', '.join(ten)}")
    print(f"environment             python {platform.python_version()}, numpy {np.__version__}, "
          f"scipy {scipy.__version__}, {os.cpu_count()} CPUs, load average "
          + " ".join(f"{v:.2f}" for v in os.getloadavg()))
    print(f"base samples            N = {n}; runs N (d + 2) = {n * (d + 2):_}, "
          f"with second order N (2d + 2) = {n * (2 * d + 2):_}")
    print()

    sobol_analysis(problem, ten, 256, seed)          # imports and first calls
    r, runs = timed(lambda: sobol_analysis(problem, ten, n, seed), rep)
    ok = min(runs) <= TARGET_SECONDS
    line(f"(a) first+total, CIs, {len(ten)} outputs", runs,
         f"   target <= {TARGET_SECONDS:.0f} s: {'PASS' if ok else 'FAIL'}")
    _, runs_b = timed(lambda: sobol_analysis(problem, bands, n, seed), rep)
    line(f"(b) first+total, CIs, {len(bands)} band outputs", runs_b)
    print()
    print("extra information")
    _, runs_c = timed(lambda: sobol_analysis(problem, ten, n, seed, second_order=True), rep)
    line(f"    second_order=True, {len(ten)} outputs", runs_c)
    gp = g_function_problem(d)
    _, runs_g = timed(lambda: sobol_analysis(gp, ["g"], n, seed), rep)
    line(f"    G-function, {d} inputs, 1 output", runs_g)
    _, runs_gs = timed(lambda: sobol_analysis(gp, ["g"], n, seed, second_order=True), rep)
    line(f"    G-function, {d} inputs, second_order=True", runs_gs)
    _, runs_r = timed(lambda: sobol_analysis(problem, ten, n, seed, num_resamples=1000), rep)
    line(f"    R = 1000 resamples, {len(ten)} outputs", runs_r)
    groups = {"pressure chain": [problem.names[0], problem.names[1], problem.names[2]],
              "temperature chain": ["T0 thermometer", "T0 control stability"]}
    rg, runs_grp = timed(lambda: sobol_analysis(problem, ten, n, seed, groups=groups), rep)
    line(f"    with 2 groups, {len(ten)} outputs", runs_grp,
         f"   ({rg.evaluations:_} runs)")

    if not args.no_salib:
        from SALib.analyze import sobol as salib_analyze
        from SALib.sample import sobol as salib_sample

        spec = {"num_vars": d, "names": list(problem.names), "bounds": [[0.0, 1.0]] * d}
        t = time.perf_counter()
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            u = salib_sample.sample(spec, n, calc_second_order=False, scramble=True, seed=seed)
        t_sample = time.perf_counter() - t
        y = problem.evaluate_unit(u)[bands[0]]
        t = time.perf_counter()
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            ref = salib_analyze.analyze(spec, y, calc_second_order=False, conf_level=0.95,
                                        num_resamples=200, seed=seed)
        t_analyze = time.perf_counter() - t
        ours = r.first_total[bands[0]]
        diff = max(float(np.max(np.abs(ours[k].to_numpy() - ref[k])))
                   for k in ("S1", "S1_conf", "ST", "ST_conf"))
        print(f"    SALib sample (its Python loop)            {t_sample:7.3f} s")
        print(f"    SALib analyze, 1 output ({bands[0]})  {t_analyze:7.3f} s   "
              f"(x {len(ten)} outputs ~ {t_analyze * len(ten):.1f} s); "
              f"largest |ours - SALib| = {diff:.1e}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
