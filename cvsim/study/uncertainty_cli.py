"""Command line of uncertainty studies: ``cvsim uncertainty``.

Added to the parser by :func:`cvsim.study.cli.add_study_commands`; heavy
libraries are imported inside the command.
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

HELP = """\
Draw the uncertain inputs of a scenario many times, run every case in parallel,
and tell how sure the outcomes are and which input drives them: percentiles of
every outcome with confidence intervals, the probability of crossing each design
limit, rank correlations (and with --sensitivity variance, Sobol' indices).

The inputs are the scenario's 'uncertainty:' section (docs/studies.md) and any
--uncertain given here (which replaces the file's entry for the same key):
  --uncertain links.vent.discharge_coefficient="{distribution: normal, standard_deviation: 0.03, highest: 1}"
  --uncertain vessels.tank.initial.temperature="{distribution: uniform, lowest: -20 degC, highest: 40 degC}"
  --uncertain links.vent.diameter="{distribution: triangular, lowest: 9.8 mm, highest: 10.2 mm}"
  --uncertain vessels.tank.heat.inside.coefficient="{distribution: log-normal, factor: 2}"
A centre not given (mean, median, most_likely) is the value the file states.

Writes cases.csv (every case, failed ones with their error), percentiles.csv,
limits.csv, sensitivity.csv, uncertainty.txt/.json and convergence.png,
sensitivity.png, spread.png (and report.html with --report). The seed is
recorded: the same seed, cases and sampling give the same cases. Ctrl-C writes
the cases finished, marked PARTIAL. Exit status: 0 when written, 1 when every
case failed, 2 for a wrong option, 130 (143 on SIGTERM) when stopped.

A probability is only as good as the distributions stated for the inputs."""

EXAMPLES = """\
examples:
  cvsim uncertainty scenarios/nitrogen-uncertain.yaml --out results/n2-uncertain --report
  cvsim uncertainty scenarios/nitrogen-uncertain.yaml --cases 1000 --seed 7 --percentile 1
  cvsim uncertainty scenarios/nitrogen-uncertain.yaml --sensitivity variance --cases 320
  cvsim uncertainty scenarios/nitrogen-blowdown.yaml \\
      --uncertain links.vent.discharge_coefficient="{distribution: normal, standard_deviation: 0.03, highest: 1}" \\
      --uncertain vessels.receiver.initial.temperature="{distribution: uniform, lowest: -20 degC, highest: 40 degC}"
"""


def add_uncertainty_command(sub) -> None:
    from .options import common_options
    p = sub.add_parser("uncertainty", help="how sure the outcomes are, and which input drives "
                       "them (uncertain inputs drawn many times)", description=HELP,
                       epilog=EXAMPLES, formatter_class=argparse.RawDescriptionHelpFormatter)
    common_options(p)
    p.add_argument("--uncertain", action="append", default=[], metavar="KEY=DISTRIBUTION",
                   help="an uncertain input and its distribution (repeatable)")
    p.add_argument("--correlate", action="append", default=[], metavar="KEY,KEY=VALUE",
                   help="a rank correlation between two uncertain inputs, e.g. "
                   "vessels.tank.initial.temperature,reservoirs.air.temperature=0.8")
    p.add_argument("--cases", type=int, default=None, metavar="N",
                   help="number of simulations (default: the file's, else 200)")
    p.add_argument("--sampling", choices=("latin-hypercube", "sobol", "random"), default=None,
                   help="how the cases are drawn (default latin-hypercube)")
    p.add_argument("--seed", type=int, default=None, metavar="N",
                   help="seed of the random numbers (default: the file's, else a new one, "
                   "recorded)")
    p.add_argument("--percentile", action="append", type=float, default=None, metavar="P",
                   help="a percentile to report besides P5, P50, P95 (repeatable)")
    p.add_argument("--confidence", default=None, metavar="LEVEL",
                   help="confidence level of the intervals, e.g. '90 %%' (default 95 %%)")
    p.add_argument("--sensitivity", choices=("ranks", "variance"), default=None,
                   help="ranks: rank correlations from the cases (default); variance: "
                   "Sobol' indices (Saltelli design, N (d + 2) cases)")
    p.add_argument("--case-time-limit", default=None, metavar="TIME",
                   help="wall-clock limit of one case, e.g. '30 min' or 'none' (default 10 min)")


def _uncertain(items: list[str]) -> dict:
    from ..errors import StudyError
    out = {}
    for item in items:
        key, sep, text = item.partition("=")
        if not sep or not key.strip() or not text.strip():
            raise StudyError(f"--uncertain '{item}': write KEY=DISTRIBUTION, e.g. "
                             "links.vent.discharge_coefficient='{distribution: normal, "
                             "standard_deviation: 0.03, highest: 1}'")
        out[key.strip()] = text.strip()
    return out


def _correlations(items: list[str]) -> list:
    from ..errors import StudyError
    out = []
    for item in items:
        keys, sep, value = item.rpartition("=")
        pair = [k.strip() for k in keys.split(",")]
        try:
            rho = float(value)
        except ValueError:
            rho = None
        if not sep or len(pair) != 2 or not all(pair) or rho is None:
            raise StudyError(f"--correlate '{item}': write KEY,KEY=VALUE, e.g. "
                             "vessels.tank.initial.temperature,reservoirs.air.temperature=0.8")
        out.append((pair[0], pair[1], rho))
    return out


def cmd_uncertainty(args) -> int:
    from ..errors import Terminated
    from ..outfolder import claim
    from .options import progress_wanted, read_time_limit, set_overrides
    from .sweep import Interrupted
    from .uncertainty import uncertainty
    limit = read_time_limit(args.case_time_limit)
    inputs = _uncertain(args.uncertain)
    corr = _correlations(args.correlate)
    out = args.out or Path("results") / f"{args.scenario.stem}-uncertainty"
    stopped = None
    with claim(out) as folder:  # checked and locked before any case runs
        try:
            result = uncertainty(args.scenario, inputs=inputs, correlations=corr,
                                 cases=args.cases, sampling=args.sampling, seed=args.seed,
                                 percentiles=args.percentile, confidence=args.confidence,
                                 sensitivity=args.sensitivity, workers=args.workers,
                                 cluster=args.cluster, progress=progress_wanted(args),
                                 overrides=set_overrides(args.overrides), case_time_limit=limit)
        except Interrupted as stop:
            if stop.result is None:
                raise
            result, stopped = stop.result, stop
            print("cvsim: stopping; writing the cases finished so far", file=sys.stderr)
        result.write(out, plots=not args.no_plots)
        if args.report:
            from ..scenario import load_scenario
            from .uncertainty_report import write_uncertainty_report
            scenario = load_scenario(args.scenario, overrides=set_overrides(args.overrides))
            with folder.adding("report.html") as path:
                write_uncertainty_report(path, result, scenario)
    if not args.quiet:
        print(result.text())
    if stopped is not None:
        print(f"Partial study written to {out}/ ({result.partial})", file=sys.stderr)
        return 143 if isinstance(stopped.cause, Terminated) else 130
    print(f"Study written to {out}/ (seed {result.design.seed})")
    c = result.counts
    if c.get("failed", 0) == len(result.table.rows):
        print(f"cvsim: every case failed; the first: {result.table.rows[0]['error']}",
              file=sys.stderr)
        return 1
    if c.get("failed"):
        print(f"cvsim: {c['failed']} of {len(result.table.rows)} cases failed (see cases.csv); "
              "they are left out of the statistics", file=sys.stderr)
    return 0


__all__ = ["add_uncertainty_command", "cmd_uncertainty"]
