"""Command line for studies: ``cvsim sweep``, ``cvsim find``, ``cvsim outcomes``
(and ``cvsim uncertainty``, from :mod:`cvsim.study.uncertainty_cli`).

Kept apart from :mod:`cvsim.cli` (which adds these commands to its parser) so
that the run commands and the study commands can change independently.
Heavy libraries are imported inside the commands, as in :mod:`cvsim.cli`.
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

from .options import (common_options, decimal_comma_option, progress_wanted,
                      read_time_limit)

SWEEP_HELP = """\
Run a scenario for many values of one or more of its keys, in parallel, and
write a table (sweep.csv, sweep.json, sweep.txt) and a plot (sweep.png) of
outcomes against the first varied key. Several --vary make a grid (every
combination). A case that fails is a row with its error; the sweep goes on.

values (units as in the scenario file):
  a list          --vary links.orifice.diameter="10 mm, 15 mm, 20 mm"
  a range         --vary links.orifice.diameter="10 mm:30 mm:9"      (9 values, ends included)
  a log range     --vary links.orifice.diameter="log:5 mm:50 mm:7"
  mixed           --vary links.orifice.diameter="8 mm, 10 mm:30 mm:5"
  words, mappings --vary run.solver.method="LSODA, BDF"

Local worker processes are used by default (one per CPU); --cluster runs the
cases on a Dask cluster instead (in the cvsim checkout: pip install -e
'.[cluster]'). A case that runs longer than --case-time-limit (default 10 min)
is stopped and fails with that reason. Ctrl-C (or SIGTERM) stops the sweep: the cases finished are written as
a table marked PARTIAL. Exit status: 0 when the table is written, 1 when every
case failed, 2 for a wrong option, 130 (143 on SIGTERM) when stopped."""

SWEEP_EXAMPLES = """\
examples:
  cvsim sweep scenarios/separator-depressuring.yaml --vary links.orifice.diameter="10 mm:30 mm:11"
  cvsim sweep scenarios/nitrogen-blowdown.yaml --vary links.vent.diameter="6 mm, 8 mm, 10 mm" \\
      --vary vessels.receiver.initial.temperature="-10 degC, 15 degC, 40 degC" \\
      --plot receiver.min_temperature --plot end_time --out results/grid
  cvsim sweep scenarios/nitrogen-blowdown.yaml --vary links.vent.diameter="log:2 mm:40 mm:9" \\
      --cluster tcp://10.0.0.5:8786
  cvsim outcomes scenarios/nitrogen-blowdown.yaml      # names for --plot and --meet
"""

FIND_HELP = """\
Find the smallest (--smallest) or largest (--largest) value of one scenario key
that meets every requirement given with --meet: a coarse scan of the range in
parallel, then a bracketing root finder on the margin over whole simulations.
The answer is a value that was simulated and met; the bracket's other end was
simulated and did not. Writes seek.txt, seek.json, every simulation in
cases.csv and cases.png, and the full outputs of a run at the answer in run/.

requirements (--meet, repeatable; all must hold):
  limits                                  every design limit the scenario states
  limits:temperature                      only those on a temperature (or pressure, time)
  separator.limits                        only those of one vessel
  separator.limit.depressure              one limit check (names: cvsim outcomes SCENARIO)
  "separator.min_temperature >= -46 degC" an outcome against a value (>=, <=, >, <)
  "end_time <= 15 min"

Exit status: 0 when the crossing was found, 1 when not (nothing in the range
meets, or the end of the range already meets), 2 for a wrong option."""

FIND_EXAMPLES = """\
examples:
  cvsim find scenarios/separator-depressuring.yaml --vary links.orifice.diameter="10 mm:30 mm" \\
      --smallest --meet limits
  cvsim find scenarios/nitrogen-blowdown.yaml --vary links.vent.diameter="4 mm:30 mm" \\
      --largest --meet "receiver.min_temperature >= -60 degC" --tolerance 0.5%
"""


def add_study_commands(sub) -> None:
    """Add ``sweep``, ``find`` and ``outcomes`` to the command line's sub-parsers."""
    fmt = argparse.RawDescriptionHelpFormatter
    s = sub.add_parser("sweep", help="run a scenario for many values of its keys, in parallel",
                       description=SWEEP_HELP, epilog=SWEEP_EXAMPLES, formatter_class=fmt)
    common_options(s)
    decimal_comma_option(s)
    s.add_argument("--vary", action="append", default=[], metavar="KEY=VALUES", required=True,
                   help="a key path and its values (repeatable: a grid)")
    s.add_argument("--plot", dest="plot", action="append", default=None, metavar="OUTCOME",
                   help="an outcome to draw against the first varied key (repeatable; "
                   "default: temperatures, peak pressure, limits and end time that change)")
    s.add_argument("--case-time-limit", default=None, metavar="TIME",
                   help="wall-clock limit of one case, e.g. '30 min' or 'none' (default "
                   "10 min); a case that takes longer fails with that reason")

    f = sub.add_parser("find", help="find the smallest or largest value that meets requirements",
                       description=FIND_HELP, epilog=FIND_EXAMPLES, formatter_class=fmt)
    common_options(f)
    decimal_comma_option(f)
    f.add_argument("--vary", required=True, metavar="KEY=RANGE",
                   help="the key to search and its range, e.g. "
                   "links.orifice.diameter='10 mm:30 mm' (':COUNT' sets the scan points; "
                   "'log:' scans in log)")
    goal = f.add_mutually_exclusive_group(required=True)
    goal.add_argument("--smallest", dest="goal", action="store_const", const="smallest",
                      help="the smallest value that meets the requirements")
    goal.add_argument("--largest", dest="goal", action="store_const", const="largest",
                      help="the largest value that meets the requirements")
    f.add_argument("--meet", action="append", default=None, metavar="REQUIREMENT",
                   help="a requirement (repeatable; default: limits)")
    f.add_argument("--tolerance", default="0.1 %", metavar="FRACTION",
                   help="relative width of the final bracket, e.g. '0.1 %%' (default) or 0.005")
    f.add_argument("--max-runs", type=int, default=None, metavar="N",
                   help="most simulations, scan included (default 40)")
    f.add_argument("--no-run", action="store_true",
                   help="do not write the full outputs of a run at the answer (run/)")

    from .uncertainty_cli import add_uncertainty_command
    add_uncertainty_command(sub)

    o = sub.add_parser("outcomes", help="list the outcome names of a scenario (for --plot, --meet)",
                       description="List the outcomes a run of the scenario gives, with their "
                       "units: the names sweep columns, --plot and --meet use.")
    o.add_argument("scenario", type=Path, help="scenario file (YAML)")


def cmd_sweep(args) -> int:
    from ..cliargs import parse_overrides
    from ..display import duration
    from ..errors import Terminated
    from ..outfolder import claim
    from .sweep import Interrupted, check_distinct, parse_vary, sweep
    from .table import NOT_RUN
    params = [parse_vary(v) for v in args.vary]
    check_distinct(params)
    limit = read_time_limit(args.case_time_limit)
    out = args.out or Path("results") / f"{args.scenario.stem}-sweep"
    stopped = None
    with claim(out) as folder:  # checked and locked before any case runs
        try:
            result = sweep(args.scenario, {p.key: p.spec for p in params},
                           workers=args.workers, cluster=args.cluster,
                           progress=progress_wanted(args), overrides=parse_overrides(args.overrides),
                           plot=args.plot, case_time_limit=limit)
        except Interrupted as stop:
            if stop.result is None:
                raise
            result, stopped = stop.result, stop
            print("cvsim: stopping; writing the cases finished so far", file=sys.stderr)
        result.decimal_comma = args.decimal_comma
        result.write(out, plots=not args.no_plots)
        if args.report:
            from ..scenario import load_scenario
            from .report import sweep_answer, write_study_report
            scenario = load_scenario(args.scenario, overrides=parse_overrides(args.overrides))
            c = result.counts()
            notes = ([result.partial + "."] if result.partial else []) + [
                f"{len(result.rows)} cases: {c['completed']} completed, {c['stopped']} "
                f"stopped at a stop condition, {c['failed']} failed"
                + (f", {c[NOT_RUN]} not run" if c.get(NOT_RUN) else "")
                + f"; ran on {result.ran_on} in {duration(result.wall_time)}.",
                "A case meets every limit when each design limit the scenario states is met "
                "in its run; the smallest and largest values that do are among the values "
                "swept (cvsim find narrows a crossing down)."]
            with folder.adding("report.html") as path:
                write_study_report(path, result, scenario,
                                   title=f"Sweep: {result.title}", notes=notes,
                                   images=[p for k, p in result.files.items() if k == "plot"],
                                   answer=sweep_answer(result))
    if not args.quiet:
        print(result.text())
    if stopped is not None:
        print(f"Partial table written to {out}/ ({result.partial})", file=sys.stderr)
        return 143 if isinstance(stopped.cause, Terminated) else 130
    print(f"Table and plot written to {out}/")
    c = result.counts()
    if c["failed"] == len(result.rows):
        print(f"cvsim: every case failed; the first: {result.rows[0]['error']}", file=sys.stderr)
        return 1
    if c["failed"]:
        print(f"cvsim: {c['failed']} of {len(result.rows)} cases failed (see the table)",
              file=sys.stderr)
    return 0


def cmd_find(args) -> int:
    from ..cliargs import parse_overrides
    from ..errors import StudyError
    from .seek import MAX_RUNS, seek
    from .sweep import parse_vary
    from ..units import UnitsError, parse_quantity
    try:
        tolerance = parse_quantity(args.tolerance, "fraction")
    except UnitsError as exc:
        raise StudyError(f"--tolerance: {exc}") from None
    from ..outfolder import claim
    param = parse_vary(args.vary, need_count=False)
    out = args.out or Path("results") / f"{args.scenario.stem}-find"
    with claim(out) as folder:  # checked and locked before any case runs
        result = seek(args.scenario, {param.key: param.spec}, meet=args.meet or "limits",
                      goal=args.goal, workers=args.workers, cluster=args.cluster,
                      tolerance=tolerance, max_runs=args.max_runs or MAX_RUNS,
                      progress=progress_wanted(args), overrides=parse_overrides(args.overrides))
        result.cases.decimal_comma = args.decimal_comma
        result.write(out, plots=not args.no_plots, run=not args.no_run,
                     decimal_comma=args.decimal_comma)
        if args.report:
            _find_report(args, result, out, folder)
    if not args.quiet:
        print(result.text())
    print(f"Results written to {out}/")
    if result.status != "found":
        print(f"cvsim: {result.message}", file=sys.stderr)
        return 1
    return 0


def _find_report(args, result, out: Path, folder) -> None:
    """The calculation report of a search, added to its written folder: the answer (the
    value, its bracket and its margins) in the title block and the job statement."""
    from ..cliargs import parse_overrides
    from ..display import margin
    from ..scenario import load_scenario
    from .report import write_study_report
    scenario = load_scenario(args.scenario, overrides=parse_overrides(args.overrides))
    answer = [("Answer", f"{result.value}: the {result.goal} {result.key} meeting every "
               "requirement (simulated and met)" if result.value is not None
               else f"no value found ({result.status}): {result.message}")]
    if result.bracket[0] is not None:
        answer.append(("Bracket", f"the crossing lies between {result.bracket[0]} (not met) "
                       f"and {result.bracket[1]} (met), relative width at most "
                       f"{result.tolerance:g}; {result.simulations} simulations in "
                       f"{result.rounds} rounds"))
    if result.margins:
        answer.append(("Margins at the answer", "; ".join(
            f"{c}: {'met' if m else 'CROSSED'}, margin {margin(g, u)}"
            for c, m, g, u in result.margins)))
    if result.binding:
        answer.append(("Binding requirement", result.binding))
    answer.append(("Requirements", "; ".join(result.requirements)))
    notes = ["Every simulation of the search is a row of the table; cases.csv holds them "
             "all. The answer's own run is in run/."]
    images = [p for k, p in result.files.items() if k == "plot"]
    overview = out / "run" / "overview.png"
    if overview.exists():
        images.append((overview, f"Run at the answer, {result.key} = {result.value}"))
    with folder.adding("report.html") as path:
        write_study_report(path, result.cases, scenario,
                           title=f"Search for the {result.goal} {result.key}: "
                           f"{result.cases.title}",
                           notes=notes, images=images, answer=answer)


def cmd_outcomes(args) -> int:
    from .outcomes import outcome_list
    from ..scenario import load_scenario
    from .table import Column
    scenario = load_scenario(args.scenario)
    outcomes = outcome_list(scenario.network)
    w = max(len(o.name) for o in outcomes)
    print(f"Outcomes of {args.scenario} (units as in sweep.csv):")
    # times and flows take the study's units, known once it has run
    study = {"s": "s|min|h", "kg/s": "kg/s|g/s|kg/h"}
    for o in outcomes:
        unit = study.get(o.unit) or Column(o.name, o.unit, o.kind,
                                           difference=o.difference).shown()[0]
        print(f"  {o.name:<{w}}  {('[' + unit + ']') if unit else '':<9} {o.text}")
    print("Limit checks of walls (when modelled) add names such as "
          "<vessel>.limit.max_temperature.<wall>.")
    print("Times and mass flows are in the study's units: min over 600 s, h over 3 h; "
          "kg/s from 1 kg/s, g/s from 1 g/s, else kg/h (as a run chooses them).")
    return 0


def cmd_uncertainty(args) -> int:
    from .uncertainty_cli import cmd_uncertainty as command
    return command(args)


STUDY_COMMANDS = {"sweep": cmd_sweep, "find": cmd_find, "outcomes": cmd_outcomes,
                  "uncertainty": cmd_uncertainty}
