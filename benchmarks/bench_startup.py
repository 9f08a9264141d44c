"""Start-up time of ``simunc check`` on a dry-air study against the bare library imports.

Prints, measured in one run (best of ``--repeat`` fresh interpreters each, interleaved):

* ``python3 -c "import numpy, scipy.optimize, pint"`` -- the floor any simunc command pays;
* ``python3 -m simunc check studies/arven_cruise.toml`` -- load, validate and solve a study
  whose fluids are closed forms (no CoolProp, no matplotlib);
* their ratio, against the target of 2.

Run: ``python3 benchmarks/bench_startup.py [--repeat 7]``.
"""

from __future__ import annotations

import argparse
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
STUDY = ROOT / "studies" / "arven_cruise.toml"
TARGET_RATIO = 2.0

COMMANDS = {
    "bare imports": [sys.executable, "-c", "import numpy, scipy.optimize, pint"],
    "simunc check": [sys.executable, "-m", "simunc", "check", str(STUDY)],
}


def _once(cmd: list[str]) -> float:
    t0 = time.perf_counter()
    subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL, cwd=ROOT)
    return time.perf_counter() - t0


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=7)
    args = ap.parse_args()
    best = {k: float("inf") for k in COMMANDS}
    for _ in range(args.repeat):
        for name, cmd in COMMANDS.items():
            best[name] = min(best[name], _once(cmd))
    for name, t in best.items():
        print(f"{name:14s} {t:7.3f} s (best of {args.repeat})")
    ratio = best["simunc check"] / best["bare imports"]
    print(f"ratio          {ratio:7.2f} (target <= {TARGET_RATIO:g}: "
          f"{'pass' if ratio <= TARGET_RATIO else 'FAIL'})")


if __name__ == "__main__":
    main()
