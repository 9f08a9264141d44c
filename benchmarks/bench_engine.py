"""Benchmark: the streaming Monte Carlo engine on the demo study.

Usage::

    python3 benchmarks/bench_engine.py [--trials N] [--memory-trials N] [--seeds S]
                                       [--methods random,lhs,sobol] [--skip-memory]

For the demo study ``studies/arven_cruise.toml`` (its Problem built as in
``benchmarks/bench_propagation.py``) the script measures, in one run:

(a) throughput: trials per second of :func:`simunc.uncertainty.propagate.propagate` at
    ``--trials`` (default 10^7) trials, statistics of every output from the
    streaming histogram, for each sampling method in ``--methods``;
(b) memory: the peak resident set size of a child process that runs one
    streaming propagation of ``--memory-trials`` (default 10^8) trials
    (``resource.getrusage(RUSAGE_CHILDREN).ru_maxrss``), beside the child's
    resident size after set-up, against the target of 2 GB;
(c) adaptive Monte Carlo (JCGM 101:2008, 7.9; two significant digits of u,
    outputs of interest: the matched groups' comparison outputs): the trials
    each method needs over ``--seeds`` seeds, their medians and the ratios of
    the LHS and scrambled-Sobol medians to the pseudo-random one (target
    <= 0.25).

A measuring script, not a test: targets are reported, never asserted.  The
machine may be shared; the load average is printed with the figures.
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import resource
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import scipy

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from simunc.pipeline import prepare
from simunc.study.readers import load_study
from simunc.uncertainty.propagate import adaptive, propagate
from simunc.uncertainty.sampling import BLOCK_SIZE

STUDY = ROOT / "studies" / "arven_cruise.toml"
TARGET_MEMORY_BYTES = 2 * 10**9
TARGET_RATIO = 0.25


def demo():
    """The demo study, its Problem, the outputs of its tolerance bands and the copula
    correlation of its inputs: the path ``simunc run`` takes."""
    study = load_study(STUDY)
    prep = prepare(study)
    return study, prep.problem, [b.output for b in study.bands], prep.copula


def _maxrss_bytes(usage) -> int:
    return int(usage.ru_maxrss) * (1 if sys.platform == "darwin" else 1024)


def memory_child(trials: int, seed: int) -> None:
    """Run in the child: one streaming propagation, then print JSON figures."""
    _, problem, _, corr = demo()
    propagate(problem, 1000, seed, correlation=corr)                  # imports and first calls
    before = _resident_bytes()
    t = time.perf_counter()
    r = propagate(problem, trials, seed, correlation=corr)
    seconds = time.perf_counter() - t
    rr = r["reynolds_ratio"]
    print(json.dumps({"trials": r.trials, "seconds": seconds, "rss_after_setup": before,
                      "peak_rss_self": _maxrss_bytes(resource.getrusage(resource.RUSAGE_SELF)),
                      "outputs": len(r.statistics), "chunk_size": r.chunk_size,
                      "reynolds_ratio": [rr.mean, rr.standard_uncertainty, rr.low, rr.high,
                                         rr.quantile_error_bound]}))


def _resident_bytes() -> int:
    try:
        with open("/proc/self/statm") as f:
            return int(f.read().split()[1]) * os.sysconf("SC_PAGE_SIZE")
    except OSError:
        return _maxrss_bytes(resource.getrusage(resource.RUSAGE_SELF))


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--trials", type=int, default=10_000_000, help="trials of the throughput runs")
    ap.add_argument("--memory-trials", type=int, default=100_000_000,
                    help="trials of the streaming run whose peak memory is measured")
    ap.add_argument("--seeds", type=int, default=10, help="seeds of the adaptive comparison")
    ap.add_argument("--methods", default="random,lhs,sobol", help="methods of the throughput runs")
    ap.add_argument("--seed", type=int, default=None, help="default: the study's run.seed")
    ap.add_argument("--skip-memory", action="store_true")
    ap.add_argument("--memory-child", type=int, default=None, help=argparse.SUPPRESS)
    args = ap.parse_args(argv)
    study, problem, bands, corr = demo()
    seed = study.run.seed if args.seed is None else args.seed
    if args.memory_child is not None:
        memory_child(args.memory_child, seed)
        return 0

    print(f"study                   {STUDY.relative_to(ROOT)}: {problem.dimension} inputs")
    print(f"environment             python {platform.python_version()}, numpy {np.__version__}, "
          f"scipy {scipy.__version__}, {os.cpu_count()} CPUs, load average "
          + " ".join(f"{v:.2f}" for v in os.getloadavg()))
    print(f"block / default chunk   {BLOCK_SIZE:_} / {4 * BLOCK_SIZE:_} trials")

    # (a) throughput
    propagate(problem, 1000, seed, correlation=corr)
    print(f"(a) throughput at {args.trials:_} trials (streaming statistics of every output)")
    rates = {}
    for method in [m for m in args.methods.split(",") if m]:
        t = time.perf_counter()
        r = propagate(problem, args.trials, seed, method=method, correlation=corr)
        sec = time.perf_counter() - t
        rates[method] = args.trials / sec
        rr = r["reynolds_ratio"]
        print(f"    {method:<7} {sec:8.2f} s  {rates[method]:12,.0f} trials/s  ({len(r.statistics)} "
              f"outputs; Re ratio mean {rr.mean:.9f}, u {rr.standard_uncertainty:.6e}, "
              f"95 % [{rr.low:.6f}, {rr.high:.6f}], bound h {rr.quantile_error_bound:.1e})")
    if "random" in rates:
        for m in rates:
            if m != "random":
                print(f"    throughput ratio {m}/random {rates[m] / rates['random']:.2f}")

    # (b) memory of a long streaming run, in a child process
    if not args.skip_memory:
        print(f"(b) peak memory of one streaming run of {args.memory_trials:_} trials (child process)")
        t = time.perf_counter()
        out = subprocess.run([sys.executable, __file__, "--memory-child", str(args.memory_trials),
                              "--seed", str(seed)], capture_output=True, text=True, check=False)
        wall = time.perf_counter() - t
        if out.returncode != 0:
            print("    child failed:", out.stderr.strip().splitlines()[-1:] or out.returncode)
        else:
            fig = json.loads(out.stdout.strip().splitlines()[-1])
            peak = _maxrss_bytes(resource.getrusage(resource.RUSAGE_CHILDREN))
            rr = fig["reynolds_ratio"]
            print(f"    trials {fig['trials']:_} in {fig['seconds']:.1f} s "
                  f"({fig['trials'] / fig['seconds']:,.0f} trials/s; child wall {wall:.1f} s), "
                  f"chunk {fig['chunk_size']:_}, {fig['outputs']} outputs")
            print(f"    resident after set-up {fig['rss_after_setup'] / 2**20:.0f} MiB, "
                  f"peak {peak / 2**20:.0f} MiB ({peak / 1e9:.3f} GB)  target < 2 GB: "
                  f"{'PASS' if peak < TARGET_MEMORY_BYTES else 'FAIL'}")
            print(f"    Re ratio mean {rr[0]:.9f}, u {rr[1]:.6e}, 95 % [{rr[2]:.6f}, {rr[3]:.6f}], "
                  f"bound h {rr[4]:.1e}")

    # (c) adaptive Monte Carlo: trials to reach the tolerance
    print(f"(c) adaptive MC (JCGM 101 7.9, n_dig = 2, p = {study.run.coverage_probability}, "
          f"outputs {', '.join(bands)}), seeds {seed} .. {seed + args.seeds - 1}")
    med = {}
    for method in ("random", "lhs", "sobol"):
        counts, conv, sec = [], [], 0.0
        for s in range(seed, seed + args.seeds):
            t = time.perf_counter()
            r = adaptive(problem, s, n_digits=2, method=method, outputs=bands, correlation=corr,
                         coverage_probability=study.run.coverage_probability)
            sec += time.perf_counter() - t
            counts.append(r.trials)
            conv.append(r.adaptive.converged)
        med[method] = float(np.median(counts))
        tol = r.adaptive.tolerance
        print(f"    {method:<7} median {med[method]:>11,.0f} trials  (M = {r.adaptive.batch_size:_}; "
              f"all converged: {all(conv)}; {sec:.1f} s; delta "
              + ", ".join(f"{k} {v:.0e}" for k, v in tol.items()) + ")")
        print(f"            per seed: " + " ".join(f"{c:_}" for c in counts))
    for method in ("lhs", "sobol"):
        ratio = med[method] / med["random"]
        print(f"    ratio {method}/random {ratio:.3f}  target <= {TARGET_RATIO}: "
              f"{'PASS' if ratio <= TARGET_RATIO else 'FAIL'}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
