"""Command line: ``cvsim run | check | fluids`` (and the study commands
``sweep | find | outcomes | uncertainty`` of :mod:`cvsim.study.cli`).

Heavy libraries (CoolProp, scipy, matplotlib, pint) are imported inside the
commands, so that ``cvsim --help`` answers at once. Errors a user can cause
end in one message and exit status 2; a run that fails part-way exits 1.
"""
from __future__ import annotations

import argparse
import contextlib
import os
import signal
import sys
import threading
import warnings
from pathlib import Path

from . import __version__, collector
from .cliargs import parse_overrides

DESCRIPTION = """\
cvsim - transient simulation of pressurised gas vessels and networks: filling,
venting, blowdown and relief on real-fluid properties. Each scenario is a YAML
file with units written out (see docs/scenario-format.md).

Results are screening estimates: verify against the governing codes (ASME VIII,
API 520/521, ISO 4126, ISO 23251, local regulations) and have them reviewed by a
qualified engineer."""

EPILOG = """\
examples:
  cvsim run scenarios/nitrogen-blowdown.yaml --out results/blowdown --report
  cvsim check scenarios/hydrogen-fast-fill.yaml
  cvsim fluids
  cvsim sweep scenarios/separator-depressuring.yaml --vary links.orifice.diameter="10 mm:30 mm:11"
  cvsim find scenarios/separator-depressuring.yaml --vary links.orifice.diameter="10 mm:30 mm" \\
      --smallest --meet limits
  cvsim uncertainty scenarios/nitrogen-uncertain.yaml --cases 200 --seed 7 --report
"""


def _parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(prog="cvsim", description=DESCRIPTION, epilog=EPILOG,
                                formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("--version", action="version", version=f"cvsim {__version__}")
    sub = p.add_subparsers(dest="command", metavar="COMMAND")

    r = sub.add_parser("run", help="simulate a scenario; write histories, plots and a summary",
                       description="Simulate a scenario and write history.csv, steps.csv, "
                       "summary.txt, summary.json, inputs.txt and PNG plots (and with --report "
                       "report.html) into an output folder. The folder is written completely "
                       "or not at all.")
    r.add_argument("scenario", type=Path, help="scenario file (YAML)")
    r.add_argument("--out", type=Path, default=None,
                   help="output folder (default: results/<scenario name>)")
    r.add_argument("--set", dest="overrides", action="append", default=[], metavar="KEY=VALUE",
                   help="change one scenario value, e.g. --set links.vent.diameter='12 mm' "
                   "(repeatable); a missing section is created (run.solver.method=BDF) "
                   "and KEY=null removes a key")
    r.add_argument("--no-plots", action="store_true", help="skip the PNG plots")
    r.add_argument("--report", action="store_true",
                   help="also write report.html: the calculation report of the run, one "
                   "self-contained HTML file that prints to PDF (docs/report.md)")
    r.add_argument("--keep-failed", action="store_true",
                   help="if the run fails part-way, still write what was computed (every "
                   "file then says the run failed)")
    r.add_argument("--quiet", action="store_true", help="do not print the summary")
    r.add_argument("--decimal-comma", action="store_true",
                   help="write the CSV files for spreadsheets that expect a decimal comma: "
                   "fields separated by ';', numbers written 1,5")
    r.add_argument("--verify", action="store_true",
                   help="run again at tolerances 100 times tighter and report the largest "
                   "difference of the key figures as a self-check (about twice the time)")
    r.add_argument("--fail-on-limits", action="store_true",
                   help="exit with status 3 when a design limit stated in the scenario is "
                   "crossed (for scripted studies)")

    c = sub.add_parser("check", help="validate a scenario without running it",
                       description="Read and validate a scenario; list every problem at once "
                       "with its key and line, or show the inputs as they will be used (SI).")
    c.add_argument("scenario", type=Path, help="scenario file (YAML)")
    c.add_argument("--set", dest="overrides", action="append", default=[], metavar="KEY=VALUE",
                   help="change one scenario value before checking (repeatable)")

    rv = sub.add_parser(
        "relief", help="size a relief valve by API 520 and confirm it with a run",
        description="Required effective area of a relief valve in the scenario for one "
        "relief load (API 520 Part I: gas or vapour, liquid, or flashing liquid by "
        "homogeneous equilibrium and the Annex C omega method; fire loads by API 521), the "
        "next API 526 orifice letter, and a confirming run with that valve whose peak "
        "pressure is compared with the relieving pressure. Relieving pressure: the "
        "protected vessel's MAWP (design pressure) plus its allowed accumulation (default "
        "single device, 10 %); a vessel holding liquid relieves at the saturation "
        "temperature there.",
        epilog="examples:\n"
        "  cvsim relief scenarios/relief-blocked-outlet.yaml --valve psv --blocked-outlet\n"
        "  cvsim relief scenarios/gas-vessel-pool-fire.yaml --valve psv --fire "
        "--relieving-temperature '130 degC'\n"
        "  cvsim relief my.yaml --valve psv --load '12 t/h' --out results/psv",
        formatter_class=argparse.RawDescriptionHelpFormatter)
    rv.add_argument("scenario", type=Path, help="scenario file (YAML) with the relief valve")
    rv.add_argument("--valve", required=True, metavar="LINK",
                    help="name of the relief-valve link to size")
    load = rv.add_mutually_exclusive_group(required=True)
    load.add_argument("--load", metavar="MASS_FLOW", help="stated relief load, e.g. '8 t/h'")
    load.add_argument("--heat", metavar="POWER",
                      help="heat input into the contents, e.g. '1.5 MW' (converted to the "
                      "mass that must leave to hold the relieving pressure)")
    load.add_argument("--fire", action="store_true",
                      help="the API 521 pool-fire heat input of the vessel's fire term")
    load.add_argument("--blocked-outlet", action="store_true",
                      help="the largest forced inflow (fixed-flow links) into the vessel")
    rv.add_argument("--relieving-temperature", metavar="TEMPERATURE",
                    help="gas temperature at relieving conditions of a gas-filled vessel "
                    "(default: the vessel's initial temperature; with --fire the gas heated "
                    "at constant density to the relieving pressure)")
    rv.add_argument("--wall-temperature", metavar="TEMPERATURE",
                    help="with --fire on a gas-filled vessel: the wall temperature of API "
                    "521's unwetted-vessel method (default 593 degC, carbon steel)")
    rv.add_argument("--set", dest="overrides", action="append", default=[], metavar="KEY=VALUE",
                    help="change one scenario value first (repeatable)")
    rv.add_argument("--out", type=Path, default=None,
                    help="write the confirming run and relief-sizing.txt/.json here")
    rv.add_argument("--report", action="store_true",
                    help="with --out: also the calculation report of the confirming run")
    rv.add_argument("--no-confirm", action="store_true", help="skip the confirming run")
    rv.add_argument("--decimal-comma", action="store_true",
                    help="CSV files with ';' between fields and decimal commas")

    f = sub.add_parser("fluids", help="list the fluid names CoolProp offers",
                       description="List the pure and pseudo-pure fluids available (CoolProp "
                       "names, to be written as 'fluid:' in a scenario).")
    f.add_argument("--search", default=None, help="show only names containing this text")

    from .study.cli import add_study_commands
    add_study_commands(sub)
    return p


def cmd_run(args) -> int:
    # plotting helpers import matplotlib while this process reads and solves
    painters = _painters(not args.no_plots or args.report)
    with painters or contextlib.nullcontext():
        return _run(args, painters)


def _painters(wanted: bool):
    """Plotting helper processes (:mod:`cvsim.painters`) when plots will be drawn."""
    if not wanted:
        return None
    from .painters import Painters
    return Painters.start()


def _run(args, painters) -> int:
    from . import preload
    preload.start()  # CoolProp's fluids load in the background (after the helpers' fork)
    from .api import run
    from .outfolder import claim
    from .outputs import summary_text, write_run_outputs
    from .scenario import load_scenario

    scenario = load_scenario(args.scenario, overrides=parse_overrides(args.overrides))
    collector.settle()  # the libraries are loaded (see command())
    out = args.out or Path("results") / args.scenario.stem
    with claim(out):  # checked and locked before solving: a wrong --out costs nothing
        _say_warnings(scenario_warnings(scenario))
        progress = None
        bar = None
        if not args.quiet and sys.stderr.isatty():
            from tqdm import tqdm
            end = scenario.network.run.end_time
            bar = tqdm(total=end, unit="s", desc="simulating", leave=False,
                       bar_format="{desc}: {percentage:3.0f}%|{bar}| {n:.4g}/{total:.4g} s")

            def progress(t, t_end):
                bar.update(t - bar.n)
        try:
            result = run(scenario, progress=progress, verify_tolerance=args.verify)
        finally:
            if bar is not None:
                bar.close()
        if not result.ok and not args.keep_failed:
            print(f"cvsim: the run failed: {result.message}", file=sys.stderr)
            print("No output written (use --keep-failed to write what was computed).",
                  file=sys.stderr)
            return 1
        result.warnings[:0] = scenario.warnings  # the reader's warnings join the summary's
        write_run_outputs(result, out, plots=not args.no_plots, echo=scenario.echo,
                          report=args.report, scenario=scenario,
                          decimal_comma=args.decimal_comma, painters=painters)
    if not args.quiet:
        print(summary_text(result))
    print(f"Results written to {out}/")
    if args.report:
        print(f"Calculation report: {out / 'report.html'}")
    if not result.ok:
        return 1
    if args.fail_on_limits and result.limits_crossed:
        print(f"cvsim: {len(result.limits_crossed)} design limit(s) crossed", file=sys.stderr)
        return 3
    return 0


def scenario_warnings(scenario) -> list[str]:
    """The reader's warnings and the solver's word on the recording interval
    (both known before the run)."""
    from .solve import recording_interval
    run = scenario.network.run
    _, note = recording_interval(run.end_time, run.record_every)
    return list(scenario.warnings) + ([f"run.record_every: {note}"] if note else [])


def _say_warnings(warnings: list[str]) -> None:
    for w in warnings:
        print(f"cvsim: warning: {w}", file=sys.stderr)


def cmd_check(args) -> int:
    from . import preload
    preload.start()  # as in _run
    from .scenario import load_scenario
    scenario = load_scenario(args.scenario, overrides=parse_overrides(args.overrides))
    warnings = scenario_warnings(scenario)
    print(f"{args.scenario}: no problems found"
          + (f", {len(warnings)} warning{'s' if len(warnings) != 1 else ''}:" if warnings
             else "."))
    for text in warnings:
        print(f"  ! {text}")
    w = min(max([len(str(r.key)) for r in scenario.echo] + [10]), 60)
    for r in scenario.echo:
        line = f"  {r.key:<{w}}  {r.given!s:<22} -> {r.used}"
        if getattr(r, "note", ""):
            line += f"   ({r.note})"
        print(line)
    from .contents import initial_text
    from .model import Model
    print()
    print("\n".join(initial_text(Model(scenario.network))))
    return 0


def cmd_relief(args) -> int:
    painters = _painters(bool(args.out) and not args.no_confirm)
    with painters or contextlib.nullcontext():
        return _relief(args, painters)


def _relief(args, painters) -> int:
    from . import preload
    preload.start()  # as in _run
    import json
    from .errors import CvsimError
    from .display import jsonable
    from .outputs import write_run_outputs
    from .scenario import load_scenario
    from .sizing import size_relief, sizing_text
    from .units import parse_quantity

    scenario = load_scenario(args.scenario, overrides=parse_overrides(args.overrides))
    collector.settle()  # the libraries are loaded (see command())
    net = scenario.network
    kw = {}
    try:
        if args.load:
            kw["load"] = parse_quantity(args.load, "mass_flow")
        elif args.heat:
            kw["heat"] = parse_quantity(args.heat, "power")
        elif args.fire:
            kw["fire"] = True
        else:
            kw["blocked_outlet"] = True
        T1 = (parse_quantity(args.relieving_temperature, "temperature")
              if args.relieving_temperature else None)
        Tw = (parse_quantity(args.wall_temperature, "temperature")
              if args.wall_temperature else None)
    except CvsimError as exc:
        raise CvsimError(f"relief: {exc}") from None
    if args.out and args.no_confirm:
        raise CvsimError("--out needs the confirming run (drop --no-confirm)")
    from .outfolder import claim
    with claim(args.out) if args.out else contextlib.nullcontext():
        sizing = size_relief(net, args.valve, relieving_temperature=T1, wall_temperature=Tw,
                             confirm=not args.no_confirm, scenario=scenario, **kw)
        text = sizing_text(sizing, net.atmosphere)
        print(text, end="")
        if args.out:
            from .result import CAUTION
            # every output a person could act on carries the caution
            record = {**sizing.as_dict(), "caution": CAUTION}
            extra = {"relief-sizing.txt": text,
                     "relief-sizing.json": json.dumps(jsonable(record), indent=2) + "\n"}
            write_run_outputs(sizing.confirm, args.out, echo=scenario.echo,
                              report=args.report, scenario=scenario, extra_files=extra,
                              relief=jsonable(sizing.as_dict()), changes=sizing.changes(),
                              decimal_comma=args.decimal_comma, painters=painters)
            print(f"Confirming run and sizing written to {args.out}/")
    if sizing.confirm is not None and not sizing.met:
        return 3
    return 0


def cmd_fluids(args) -> int:
    from .fluid import coolprop_fluid_names, coolprop_version
    names = coolprop_fluid_names()
    if args.search:
        names = [n for n in names if args.search.lower() in n.lower()]
    print(f"CoolProp {coolprop_version()}: {len(names)} fluids")
    for n in names:
        print(f"  {n}")
    return 0


COMMANDS = {"run": cmd_run, "check": cmd_check, "relief": cmd_relief, "fluids": cmd_fluids}


def _commands() -> dict:
    from .study.cli import STUDY_COMMANDS
    return {**COMMANDS, **STUDY_COMMANDS}


def _terminate(signum, frame):
    from .errors import Terminated
    raise Terminated()


@contextlib.contextmanager
def _signals():
    """SIGTERM ends the command as Ctrl-C does, and warnings about output
    folders are printed as one line each."""
    from .outfolder import OutputWarning
    old = None
    if threading.current_thread() is threading.main_thread():
        old = signal.signal(signal.SIGTERM, _terminate)
    shown = warnings.showwarning

    def show(message, category, filename, lineno, file=None, line=None):
        if issubclass(category, OutputWarning):
            print(f"cvsim: warning: {message}", file=sys.stderr)
        else:
            shown(message, category, filename, lineno, file, line)
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("always", OutputWarning)
            warnings.showwarning = show
            yield
    finally:
        if old is not None:
            signal.signal(signal.SIGTERM, old)


def main(argv: list[str] | None = None) -> int:
    parser = _parser()
    args = parser.parse_args(argv)
    if not args.command:
        parser.print_help()
        return 0
    from .errors import CvsimError, Terminated
    try:
        with _signals():
            return _commands()[args.command](args)
    except CvsimError as exc:
        print(f"cvsim: {exc}", file=sys.stderr)
        return 2
    except KeyboardInterrupt as exc:
        how = "terminated" if isinstance(exc, Terminated) else "interrupted"
        print(f"cvsim: {how}; no output written.", file=sys.stderr)
        return 143 if isinstance(exc, Terminated) else 130


#: commands that start no worker pool or cluster client: after them the process may
#: leave without the interpreter's clean-up
QUICK_EXIT = {"run", "check", "relief", "fluids"}
#: commands that load their libraries with the garbage collector paused (cvsim.collector)
#: and resume it once the scenario is read
LOAD_PAUSED = {"run", "relief"}


def command(argv: list[str] | None = None) -> None:
    """The ``cvsim`` program: :func:`main`, then leave.

    After the commands in :data:`QUICK_EXIT` (every file written and closed, every
    helper process ended) the process leaves by ``os._exit`` once its output is
    flushed: tearing down the imported libraries (the property library, SciPy,
    matplotlib) would add about 0.1 s to every run for nothing
    (benchmarks/bench_outputs.py). Other commands leave the usual way, so that worker
    pools and cluster clients shut down by their own handlers.

    The commands in :data:`LOAD_PAUSED` load their libraries with the garbage collector
    paused and resume it, with everything loaded frozen out of its sight, once the
    scenario is read (:mod:`cvsim.collector`; the plotting helpers, forked paused, once
    matplotlib is loaded): about 0.1 s of the demo run."""
    argv = sys.argv[1:] if argv is None else argv
    if argv and argv[0] in LOAD_PAUSED:
        collector.pause()
    try:
        code = main(argv)
        sys.stdout.flush()
    except BrokenPipeError:  # `cvsim check ... | head`: the reader left; no traceback
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        os._exit(1)
    quick = bool(argv) and argv[0] in QUICK_EXIT
    if not quick:
        sys.exit(code)
    import multiprocessing
    if multiprocessing.active_children():  # never leave a helper behind
        sys.exit(code)
    try:
        sys.stdout.flush()
        sys.stderr.flush()
    except (OSError, ValueError):  # a closed pipe: the usual way says so
        sys.exit(code)
    os._exit(code)


if __name__ == "__main__":  # pragma: no cover
    command()
