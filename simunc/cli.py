"""Command line: ``simunc check|run|rank|sweep|allocate STUDY``.

Exit codes: 0 success, 2 bad input, 1 internal error.  Errors are one line
on standard error, never a traceback (``SIMUNC_DEBUG=1`` shows one for
internal errors).
"""

from __future__ import annotations

import argparse
import os
import sys
from typing import TYPE_CHECKING

from simunc import __version__
from simunc.errors import (
    EXIT_BAD_INPUT,
    EXIT_INTERNAL,
    EXIT_OK,
    SimuncError,
    StudyError,
)

if TYPE_CHECKING:
    from simunc.pipeline import Part  # imported on first use at run time (start-up time)


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
    helps = {
        "run": "solve, propagate, rank, solve the requirements, sweep; write the report",
        "rank": "solve, propagate and rank the inputs (no requirements, no sweeps)",
        "sweep": "rank, then sweep one or two tolerances (--input, or the study's [[sweep]])",
        "allocate": "rank, then solve the study's [[requirement]] tables: tolerance limits, "
                    "cheapest allocation, fresh verification",
    }
    for name, text in helps.items():
        r = sub.add_parser(name, help=text)
        r.add_argument("study", help="study file (TOML)")
        r.add_argument("--out", default="simunc-report", help="report folder (default: simunc-report)")
        r.add_argument("--trials", type=_positive_int(100), help="Monte Carlo trials (default: run.trials)")
        r.add_argument("--seed", type=_positive_int(0), help="random seed (default: run.seed)")
        r.add_argument("--samples", choices=("csv", "parquet"), help="also write the trials")
        if name == "sweep":
            r.add_argument("--input", action="append", metavar="NAME",
                           help="input to sweep (give it twice for a 2-D sweep)")
            r.add_argument("--scale", nargs=2, type=float, metavar=("LOW", "HIGH"),
                           default=None, help="tolerance scales (default 0.1 3)")
            r.add_argument("--points", type=_positive_int(3), help="points per input "
                           "(default 15, 11 for two inputs)")
            r.add_argument("--spacing", choices=("linear", "log"), default="linear")
    return p


def _check(args) -> int:
    from simunc.similitude.setpoint import solve
    from simunc.study.readers import load_study

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


def _cli_sweeps(args, study) -> tuple:
    from simunc.study.planning import sweep

    if not args.input:
        if args.scale is not None or args.points is not None:
            raise StudyError("--input", "nothing", "the input to sweep with --scale or --points")
        if not study.sweeps:
            raise StudyError("--input", "nothing (and the study has no [[sweep]] tables)",
                             "one or two input names, e.g. --input 'T0 control stability'")
        return ()
    data = {"inputs": list(args.input), "spacing": args.spacing}
    if args.scale is not None:
        data["scale"] = list(args.scale)
    if args.points is not None:
        data["points"] = args.points
    try:
        sw = sweep(data, 0, [i.name for i in study.inputs])
    except StudyError as exc:  # name the command-line option, not a study key
        option = exc.key.split(".", 1)[-1].split("[")[0]
        raise StudyError({"inputs": "--input", "scale": "--scale", "points": "--points"}.get(
            option, "--" + option), exc.given, exc.expected, exc.hint) from None
    from dataclasses import replace
    return (replace(sw, key="--input " + " --input ".join(sw.inputs)),)


def _run(args) -> int:
    from simunc.pipeline import run
    from simunc.report import write_report
    from simunc.report.write import check_out_dir
    from simunc.study.readers import load_study

    check_out_dir(args.out)
    study = load_study(args.study)
    parts_of: dict[str, tuple[Part, ...]] = {"run": ("requirements", "sweeps"), "rank": (),
                                             "sweep": ("sweeps",), "allocate": ("requirements",)}
    parts, extra = parts_of[args.command], ()
    if args.command == "allocate" and not study.requirements:
        raise StudyError("requirement", "no [[requirement]] tables", "at least one requirement "
                         "for 'simunc allocate' (see docs/study-file.md)")
    if args.command == "sweep":
        extra = _cli_sweeps(args, study)
    result = run(study, trials=args.trials, seed=args.seed, parts=parts, extra_sweeps=extra)
    written = write_report(result, args.out, samples=args.samples)
    sp = result.setpoint
    print(f"set point {'feasible' if sp.feasible else 'NOT feasible'}; "
          f"P(all matched groups in band) = {result.conformity['all']:.4f} over {result.trials} trials")
    if result.tightening is not None and result.tightening["controllable"].any():
        t = result.tightening
        print(f"control more tightly first: {t[t['controllable']].index[0]}")
    if result.requirement_checks is not None:
        met = sum(c.met for c in result.requirement_checks)
        print(f"requirements met at the written tolerances: {met} of "
              f"{len(result.requirement_checks)}")
    a = result.allocation
    if a is not None:
        print(f"allocation: {a.message}" if a.message else
              f"allocation: cost {a.cost:.6g}; fresh Monte Carlo check "
              f"{'passed' if a.verified else 'FAILED'} ({a.verify_trials} trials)")
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
