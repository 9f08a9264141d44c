"""Set-point solve time of the cryogenic demo over band widths and priorities.

The exact match of ``studies/halden_cryogenic.toml`` (T0 = 105.833 K at p0 = 4.3 bar) must be
found whatever the Reynolds tolerance (0.1 % to 300 %) and priority numbers (1 to 9), in well
under a second.  Prints, measured in one run, the solved T0 and the time of every variant (after
one warm-up solve that loads the nitrogen model), and the slowest time against a 1 s target.

Run: ``python3 benchmarks/bench_solver.py``.
"""

from __future__ import annotations

import time
import tomllib
from pathlib import Path

import simunc

ROOT = Path(__file__).resolve().parent.parent
TARGET_SECONDS = 1.0


def variant(tolerance: str, priorities: tuple[int, int] | None):
    data = tomllib.loads((ROOT / "studies" / "halden_cryogenic.toml").read_text())
    data["match"]["reynolds"] = {"tolerance": tolerance}
    if priorities is not None:
        data["match"]["reynolds"]["priority"], data["match"]["mach"]["priority"] = priorities
    return simunc.parse_study(data)


def main() -> None:
    simunc.solve(variant("2 %", None))  # warm-up: the nitrogen property model loads once
    slowest = 0.0
    print(f"{'tolerance':>9} {'priorities':>10} {'T0 [K]':>10} {'method':>13} {'time [s]':>8}")
    for tol in ("0.1 %", "2 %", "30 %", "300 %"):
        for pr in (None, (1, 2), (2, 1), (1, 9), (9, 1)):
            study = variant(tol, pr)
            t = time.perf_counter()
            sp = simunc.solve(study)
            dt = time.perf_counter() - t
            slowest = max(slowest, dt)
            print(f"{tol:>9} {str(pr or 'default'):>10} {sp.nominal['stagnation_temperature']:10.4f} "
                  f"{sp.method:>13} {dt:8.3f}")
    print(f"slowest solve {slowest:.3f} s; ratio to the {TARGET_SECONDS:g} s target: "
          f"{slowest / TARGET_SECONDS:.2f}")


if __name__ == "__main__":
    main()
