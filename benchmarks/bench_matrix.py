"""Benchmark: a 200-point test matrix on 1 and 2 local dask workers.

Usage::

    python3 benchmarks/bench_matrix.py [--trials N]

The matrix is the demo ``studies/corvel_polar_matrix.toml`` with its axes replaced by 10 Mach
numbers x 20 stagnation pressures (0.8 to 8 bar): 200 points, each of which solves its own set
point (the Mach number at the given pressure), propagates its trials and forms its budget weights
-- the path ``simunc run`` takes.  The script runs the points

1. in this process (``workers = 0``), for reference;
2. on a local cluster of 1 worker process, then of 2 (``run_matrix``, as the CLI does; the wall
   time includes starting the cluster);

and prints the wall times, the parallel efficiency T1 / (2 T2) (target >= 80 % on 2 workers),
seconds per point, the largest peak resident memory of a worker process, and whether the results
are the same bit for bit.  A measuring script, not a test: targets are reported, never asserted.
"""

from __future__ import annotations

import argparse
import sys
import time
import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from simunc.matrix.execute import run_matrix  # noqa: E402
from simunc.similitude.prepared import prepare  # noqa: E402
from simunc.study.readers import parse_study  # noqa: E402

AXES = """[matrix.axes]
mach = [0.60, 0.63, 0.66, 0.69, 0.72, 0.74, 0.76, 0.78, 0.80, 0.82]
stagnation_pressure = [{pressures}]
"""


def study(trials: int):
    text = (ROOT / "studies" / "corvel_polar_matrix.toml").read_text()
    head, rest = text.split("[matrix]", 1)
    tail = rest[rest.index("# ---- The flow condition"):]
    pressures = ", ".join(f'"{0.8 + 0.38 * i:.2f} bar"' for i in range(20))
    matrix = (f"[matrix]\ncombine = \"product\"\ntrials = {trials}\n"
              + AXES.format(pressures=pressures))
    data = tomllib.loads(head + matrix + "\n" + tail)
    return parse_study(data, str(ROOT / "studies" / "bench.toml"))


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--trials", type=int, default=20_000)
    args = ap.parse_args()
    st = study(args.trials)
    nominal = prepare(st).setpoint.nominal
    n = len(st.matrix.points)
    print(f"{n} points, {args.trials} trials each, {len(st.inputs)} inputs")
    runs = {}
    for workers in (0, 1, 2):
        t = time.perf_counter()
        runs[workers] = run_matrix(st, nominal, 1, workers=workers)
        wall = time.perf_counter() - t
        r = runs[workers]
        peak = max(p.peak_memory for p in r.points if p.ok) / 2 ** 20
        where = "in this process" if workers == 0 else f"{workers} local worker(s)"
        print(f"{where:>20}: {wall:7.1f} s wall, {wall / n:.3f} s per point, "
              f"failed {len(r.failed)}, peak memory of a worker process {peak:.0f} MiB")
        runs[workers] = (r, wall)
    t1, t2 = runs[1][1], runs[2][1]
    print(f"parallel efficiency on 2 workers T1 / (2 T2) = {t1 / (2 * t2):.0%} (target >= 80 %); "
          f"speed-up {t1 / t2:.2f}")
    same = all(a.statistics.equals(b.statistics) and a.statistics.equals(c.statistics)
               for a, b, c in zip(runs[0][0].points, runs[1][0].points, runs[2][0].points))
    print(f"bit-identical point statistics with 0, 1 and 2 workers: {same}")


if __name__ == "__main__":
    main()
