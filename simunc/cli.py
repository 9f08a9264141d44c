"""Command line: ``simunc check|run|rank|sweep|allocate STUDY``.

Exit codes: 0 success, 2 bad input, 1 internal error.  Errors are one line
on standard error, never a traceback (``SIMUNC_DEBUG=1`` shows one for
internal errors).
"""

from __future__ import annotations

import argparse
import os
import sys
import time
import warnings
from collections.abc import Callable
from typing import TYPE_CHECKING

from simunc import __version__
from simunc.errors import (
    EXIT_BAD_INPUT,
    EXIT_INTERNAL,
    EXIT_OK,
    SimuncError,
    StudyError,
    plain,
)

if TYPE_CHECKING:
    from simunc.pipeline import Part  # imported on first use at run time (start-up time)


class _Parser(argparse.ArgumentParser):
    def error(self, message: str):  # one line, exit 2
        message = plain(message)  # it may quote the command line
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
        r.add_argument("--overwrite", action="store_true",
                       help="replace files under the report's names that simunc did not write")
        r.add_argument("--quiet", action="store_true",
                       help="no progress display on standard error")
        r.add_argument("--workers", type=_positive_int(0), help="test matrix: local worker "
                       "processes (default: one per core; 0: run the points in this process)")
        r.add_argument("--scheduler", metavar="ADDRESS", help="test matrix: run the points on "
                       "the dask scheduler at this address (e.g. tcp://10.0.0.5:8786)")
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
    from simunc.similitude.prepared import prepare
    from simunc.study.readers import load_study
    from simunc.study.slips import likely_slips
    from simunc.units import quantity_text

    study = load_study(args.study)
    sp = prepare(study).setpoint  # the set point, and every input's extremes physical
    o = sp.outputs
    print(f"{plain(args.study)}: valid study '{plain(study.title)}' with {len(study.inputs)} "
          "uncertain inputs")
    solved = ", ".join(sp.solve_for) or "nothing"
    def shown(value: float, si: str) -> str:
        """A set-point value in the unit the study writes its dimension in."""
        return quantity_text(value, si, study.display_units)

    if study.kind == "gas":
        state = (f"p0 = {shown(o['stagnation_pressure'], 'Pa')}, "
                 f"T0 = {shown(o['stagnation_temperature'], 'K')}, "
                 f"Mach = {o['mach_model']:.6g}" + (
                     f" (set {o['mach_uncorrected']:.6g}, corrected for the walls)"
                     if "mach_uncorrected" in o else ""))
    else:
        state = (f"U = {o['speed']:.6g} m/s" + (
                     f" (set {o['speed_uncorrected']:.6g}, corrected for the walls)"
                     if "speed_uncorrected" in o else "")
                 + f", p = {shown(o['static_pressure'], 'Pa')}, "
                 f"T = {shown(o['static_temperature'], 'K')}")
    # a difference matched to round-off (-1.7e-15) is zero
    groups = "; ".join(f"{b.output} = {0.0 if abs(o[b.output]) < 1e-12 else o[b.output]:.6g}"
                       for b in study.bands)
    print(f"set point ({solved} solved, {sp.method}): {state}, model reference length = "
          f"{shown(o['model_length'], 'm')}; {groups}; {'feasible' if sp.feasible else 'NOT feasible'}")
    for m in sp.messages:
        print("  " + plain(m))
    if study.measurement is not None and study.measurement.capacity:
        from simunc.decisions.balance import utilisation_rows

        print(f"balance utilisation ({plain(study.measurement.balance)}) at the set point: " + "; ".join(
            f"{r['component'].replace('_', ' ')} {100 * r['utilisation']:.0f} %"
            + ("" if r["status"] in ("ok", "no load expected") else f" ({r['status']})")
            for r in utilisation_rows(study.measurement, o)))
    for m in likely_slips(study):
        print("  warning: " + plain(m))
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
    from simunc.report.folder import check_out_dir, folder_lock, foreign_report_files
    from simunc.study.readers import load_study

    out = check_out_dir(args.out)
    foreign_report_files(out, args.out, args.overwrite)
    study = load_study(args.study)
    with folder_lock(out, args.out):   # one run per report folder, from the start
        return _run_locked(args, study)


def _run_locked(args, study) -> int:
    from simunc.pipeline import run
    from simunc.report import write_report

    parts_of: dict[str, tuple[Part, ...]] = {"run": ("requirements", "sweeps"), "rank": (),
                                             "sweep": ("sweeps",), "allocate": ("requirements",)}
    parts, extra = parts_of[args.command], ()
    if args.command == "allocate" and not study.requirements:
        only_plan = bool(study.plan_requirements)
        raise StudyError("requirement", "only a requirement on the extrapolated drag, which the "
                         "number of sweep runs meets (simunc run reports it)" if only_plan
                         else "no [[requirement]] tables", "at least one requirement on a "
                         "tolerance-driven output for 'simunc allocate' (see docs/study-file.md)")
    if args.command == "sweep":
        extra = _cli_sweeps(args, study)
    if args.samples:
        from simunc.pipeline import require_samples
        require_samples(study, args.trials)  # before anything runs
    progress = None if args.quiet else _progress()
    try:
        result = run(study, trials=args.trials, seed=args.seed, parts=parts, extra_sweeps=extra,
                     progress=progress, workers=args.workers, scheduler=args.scheduler)
    finally:
        if progress is not None:
            sys.stderr.write("\r\x1b[K")  # the progress line goes before anything else shows
    written = write_report(result, args.out, samples=args.samples, overwrite=args.overwrite)
    sp = result.setpoint
    print(f"set point {'feasible' if sp.feasible else 'NOT feasible'}; "
          f"P(all matched groups in band) = {result.conformity['all']:.4f} over {result.trials} trials")
    if result.coefficients is not None:
        from simunc.report.coefficients import summary_lines
        from simunc.report.text import unmarked

        for line in summary_lines(result):
            print(unmarked(line))
    e = result.extrapolation
    if e is not None or study.plan_requirements:
        from simunc.report.coefficients import extrapolation_lines
        from simunc.report.text import two_digits, unmarked

        if e is not None:
            print(f"extrapolated to full-scale Re (ratio {e.ratio:.3g}): drag coefficient "
                  f"{e.estimate:.5f}, U ({100 * e.probability:g} %) = "
                  f"{two_digits(e.U_counts)} counts")
        for line in extrapolation_lines(result)[0 if e is None else 1:]:
            print(unmarked(line))
    if result.matrix is not None:
        from simunc.report.matrix import summary_lines as matrix_lines
        from simunc.report.text import unmarked

        for line in matrix_lines(result):
            print(unmarked(line))
    # as in the report's verdict: tighter tolerances cannot make up an unreachable set point
    if result.setpoint.feasible and result.tightening is not None \
            and result.tightening["controllable"].any():
        t = result.tightening
        print(f"control more tightly first: {plain(t[t['controllable']].index[0])}")
    if result.requirement_checks is not None:
        met = sum(c.met for c in result.requirement_checks)
        print(f"requirements on the outputs met at the written tolerances: {met} of "
              f"{len(result.requirement_checks)}")
    a = result.allocation
    if a is not None:
        from simunc.report.blocks import cost_text

        written_cost = (f" (as written {cost_text(a.cost_written)})" if a.cost_written is not None
                        else "")
        print(f"allocation: {plain(a.message)}" if a.message else
              f"allocation: cost {cost_text(a.cost)}{written_cost}; fresh Monte Carlo check "
              f"{'passed' if a.verified else 'FAILED'} ({a.verify_trials} trials)")
    print(f"wrote {len(written)} files to {plain(args.out)}: " + ", ".join(p.name for p in written))
    return EXIT_OK


def _progress() -> Callable[[str, int, int], None] | None:
    """Progress of the long stages on standard error (one line rewritten in place, with an
    estimate of the time left), when standard error is a terminal."""
    if not sys.stderr.isatty():
        return None
    state: dict = {"stage": "", "start": 0.0, "shown": 0.0}

    def show(stage: str, done: int, total: int) -> None:
        now = time.monotonic()
        if stage != state["stage"]:
            state.update(stage=stage, start=now, shown=0.0)
        if now - state["shown"] < 0.5 and done < total:
            return
        state["shown"] = now
        elapsed = now - state["start"]
        left = f", about {elapsed * (total - done) / done:.0f} s left" if 0 < done < total \
            and elapsed > 2.0 else ""
        count = f" {done} of {total}{left}" if total > 1 else "..."
        sys.stderr.write(f"\r\x1b[Ksimunc: {stage}{count}" + ("\r\x1b[K" if done >= total > 1
                                                             else ""))
        sys.stderr.flush()

    return show


def main(argv: list[str] | None = None) -> int:
    args = _parser().parse_args(argv)
    try:
        with warnings.catch_warnings():  # numbers outside a formula's range are refused or
            warnings.simplefilter("ignore", RuntimeWarning)  # reported, never printed raw
            return _check(args) if args.command == "check" else _run(args)
    except StudyError as exc:
        print(f"simunc: error: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except MemoryError:
        print("simunc: error: not enough memory for this run (lower --trials, "
              "run.sobol_base_samples or design.trials)", file=sys.stderr)
        return EXIT_BAD_INPUT
    except SimuncError as exc:
        print(f"simunc: error: {plain(exc)}", file=sys.stderr)
        return exc.exit_code
    except KeyboardInterrupt:
        print("simunc: interrupted", file=sys.stderr)
        return EXIT_INTERNAL
    except Exception as exc:  # noqa: BLE001 - last resort: one line, exit 1
        if os.environ.get("SIMUNC_DEBUG"):
            raise
        print(f"simunc: internal error: {type(exc).__name__}: {plain(exc)} (set SIMUNC_DEBUG=1 for a "
              "traceback)", file=sys.stderr)
        return EXIT_INTERNAL


if __name__ == "__main__":
    sys.exit(main())
