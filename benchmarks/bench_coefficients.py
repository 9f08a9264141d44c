"""Benchmark: what the coefficient outputs cost the Monte Carlo, and the pre-test chart's time.

Usage::

    python3 benchmarks/bench_coefficients.py [--repeats R]

For the demo ``studies/arven_cruise_balance.toml`` the script

1. prepares the study as written (balance, attitude, upflow, taps: 19 inputs);
2. times the Monte Carlo stage (:func:`simunc.pipeline.monte_carlo_stage`: sampling, the model,
   the statistics of every output) with the coefficient outputs and without them -- the same 19
   inputs and draws, the model without its data reduction -- interleaved, best of R, and prints
   the ratio: what the coefficient outputs cost (target <= 1.5);
   for scale, also the same study without its measuring chain at all (no ``[measurement]``, the
   7 inputs of the flow condition): the whole cost of measuring with 12 more inputs;
3. times the pre-test chart (:func:`simunc.decisions.pretest.pressure_chart`) of 20 pressures on
   common random numbers, for the written balance alone and for every candidate balance (target
   <= 2 s for the written balance).

A measuring script, not a test: targets are reported, never asserted.
"""

from __future__ import annotations

import argparse
import sys
import time
import tomllib
from dataclasses import replace
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from simunc.decisions.pretest import pressure_chart  # noqa: E402
from simunc.pipeline import monte_carlo_stage, prepare, similitude_problem  # noqa: E402
from simunc.study.catalogue import MEASUREMENT_TARGETS  # noqa: E402
from simunc.study.readers import parse_study  # noqa: E402

DEMO = ROOT / "studies" / "arven_cruise_balance.toml"


def _studies():
    data = tomllib.loads(DEMO.read_text())
    plain = {k: v for k, v in data.items() if k not in ("measurement", "requirement")}
    plain["uncertain"] = [d for d in data["uncertain"] if d["perturbs"] not in MEASUREMENT_TARGETS]
    return parse_study(data, str(DEMO)), parse_study(plain, str(DEMO))


def _best(fn, repeats: int) -> float:
    best = float("inf")
    for _ in range(repeats):
        t = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t)
    return best


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=3)
    args = ap.parse_args()
    measured, flow_only = _studies()
    prep_m, prep_f = prepare(measured), prepare(flow_only)
    bare = replace(prep_m.model, measurement=None)
    prep_b = replace(prep_m, model=bare, problem=similitude_problem(bare, prep_m.setpoint,
                                                                    list(prep_m.inputs)))
    t_m = t_b = t_f = float("inf")
    for _ in range(args.repeats):  # interleaved: all see the same machine noise
        t_b = min(t_b, _best(lambda: monte_carlo_stage(prep_b), 1))
        t_m = min(t_m, _best(lambda: monte_carlo_stage(prep_m), 1))
        t_f = min(t_f, _best(lambda: monte_carlo_stage(prep_f), 1))
    n_m = len(prep_m.model(prep_m.setpoint.nominal))
    n_b = len(bare(prep_m.setpoint.nominal))
    ratio = t_m / t_b
    print(f"Monte Carlo stage, {prep_m.settings.trials} trials, {len(prep_m.inputs)} inputs: "
          f"without the coefficient outputs ({n_b} outputs) {t_b:.3f} s; with them ({n_m} "
          f"outputs) {t_m:.3f} s")
    print(f"ratio {ratio:.2f} (target <= 1.5): {'PASS' if ratio <= 1.5 else 'FAIL'}")
    print(f"for scale: the flow condition alone ({len(prep_f.inputs)} inputs, no measuring chain) "
          f"{t_f:.3f} s; the whole measuring chain costs {t_m / t_f:.2f}x")
    m = measured.measurement
    assert m is not None
    one = replace(prep_m, study=replace(measured, measurement=replace(m, options=())))
    t_one = _best(lambda: pressure_chart(one), args.repeats)
    t_all = _best(lambda: pressure_chart(prep_m), args.repeats)
    print(f"pre-test chart, 20 pressures on common random numbers: written balance {t_one:.3f} s "
          f"(target <= 2 s: {'PASS' if t_one <= 2.0 else 'FAIL'}); all {1 + len(m.options)} "
          f"balances {t_all:.3f} s")
    return 0


if __name__ == "__main__":
    sys.exit(main())
