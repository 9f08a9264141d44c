"""Command line: ``simunc check STUDY`` and ``simunc run STUDY``.

Exit codes: 0 success, 2 bad input, 1 internal error.  Errors are one line
on standard error, never a traceback (``SIMUNC_DEBUG=1`` shows one for
internal errors).
"""

from __future__ import annotations

import argparse
import os
import sys

from . import __version__
from .errors import EXIT_BAD_INPUT, EXIT_INTERNAL, EXIT_OK, SimuncError, StudyError


class _Parser(argparse.ArgumentParser):
    def error(self, message: str):  # one line, exit 2
        self.exit(EXIT_BAD_INPUT, f"simunc: error: {message} (see 'simunc {self.prog.split()[-1]} -h')\n"
                  if " " in self.prog else f"simunc: error: {message} (see 'simunc -h')\n")


def _positive_int(low: int):
    def conv(text: str) -> int:
        try:
            v = int(text)
        except ValueError:
            raise argparse.ArgumentTypeError(f"given {text!r}; expected a whole number >= {low}") from None
        if v < low:
            raise argparse.ArgumentTypeError(f"given {text!r}; expected a whole number >= {low}")
        return v
    return conv


def _parser() -> argparse.ArgumentParser:
    p = _Parser(prog="simunc", description="Uncertainty-aware Monte Carlo similitude analysis for "
                "scale-model tests: matched set point, coverage intervals, conformity probability "
                "and Sobol ranking.")
    p.add_argument("--version", action="version", version=f"simunc {__version__}")
    sub = p.add_subparsers(dest="command", required=True, parser_class=_Parser)
    c = sub.add_parser("check", help="validate a study file and print the solved set point")
    c.add_argument("study", help="study file (TOML)")
    r = sub.add_parser("run", help="solve, propagate, rank and write the report")
    r.add_argument("study", help="study file (TOML)")
    r.add_argument("--out", default="simunc-report", help="report folder (default: simunc-report)")
    r.add_argument("--trials", type=_positive_int(100), help="Monte Carlo trials (default: run.trials)")
    r.add_argument("--seed", type=_positive_int(0), help="random seed (default: run.seed)")
    r.add_argument("--samples", choices=("csv", "parquet"), help="also write the trials")
    return p


def _check(args) -> int:
    from .setpoint import solve
    from .study import load_study

    study = load_study(args.study)
    sp = solve(study)
    o = sp.outputs
    print(f"{args.study}: valid study '{study.title}' with {len(study.inputs)} uncertain inputs")
    solved = ", ".join(sp.solve_for) or "nothing"
    if study.kind == "gas":
        state = (f"p0 = {o['stagnation_pressure']:.6g} Pa, T0 = {o['stagnation_temperature']:.6g} K, "
                 f"Mach = {o['mach_model']:.6g}")
    else:
        state = (f"U = {o['speed']:.6g} m/s, p = {o['static_pressure']:.6g} Pa, "
                 f"T = {o['static_temperature']:.6g} K")
    groups = "; ".join(f"{b.output} = {o[b.output]:.6g}" for b in study.bands)
    print(f"set point ({solved} solved, {sp.method}): {state}, model reference length = "
          f"{o['model_length']:.6g} m; {groups}; {'feasible' if sp.feasible else 'NOT feasible'}")
    for m in sp.messages:
        print("  " + m)
    return EXIT_OK


def _run(args) -> int:
    from .analysis import run
    from .report import write_report
    from .study import load_study

    from .report.write import check_out_dir

    check_out_dir(args.out)
    study = load_study(args.study)
    result = run(study, trials=args.trials, seed=args.seed)
    written = write_report(result, args.out, samples=args.samples)
    sp = result.setpoint
    print(f"set point {'feasible' if sp.feasible else 'NOT feasible'}; "
          f"P(all matched groups in band) = {result.conformity['all']:.4f} over {result.trials} trials")
    print(f"wrote {len(written)} files to {args.out}: " + ", ".join(p.name for p in written))
    return EXIT_OK


def main(argv: list[str] | None = None) -> int:
    args = _parser().parse_args(argv)
    try:
        return _check(args) if args.command == "check" else _run(args)
    except StudyError as exc:
        print(f"simunc: error: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except MemoryError:
        print("simunc: error: not enough memory for this run (lower --trials or "
              "run.sobol_base_samples)", file=sys.stderr)
        return EXIT_BAD_INPUT
    except SimuncError as exc:
        print(f"simunc: error: {exc}", file=sys.stderr)
        return exc.exit_code
    except KeyboardInterrupt:
        print("simunc: interrupted", file=sys.stderr)
        return EXIT_INTERNAL
    except Exception as exc:  # noqa: BLE001 - last resort: one line, exit 1
        if os.environ.get("SIMUNC_DEBUG"):
            raise
        print(f"simunc: internal error: {type(exc).__name__}: {exc} (set SIMUNC_DEBUG=1 for a "
              "traceback)", file=sys.stderr)
        return EXIT_INTERNAL


if __name__ == "__main__":
    sys.exit(main())
