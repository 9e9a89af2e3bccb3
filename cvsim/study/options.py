"""Command-line options shared by the study commands (``cvsim sweep``, ``find``,
``outcomes`` in :mod:`cvsim.study.cli`; ``cvsim uncertainty`` in
:mod:`cvsim.study.uncertainty_cli`): kept apart so that those modules import it and
not each other."""
from __future__ import annotations

import argparse
import sys
from pathlib import Path


def workers_option(p: argparse.ArgumentParser) -> None:
    g = p.add_mutually_exclusive_group()
    g.add_argument("--workers", type=int, default=None, metavar="N",
                   help="local worker processes (default: one per CPU)")
    g.add_argument("--cluster", default=None, metavar="ADDRESS",
                   help="run on a Dask cluster, e.g. tcp://host:8786 (needs the cluster "
                   "extra: pip install -e '.[cluster]' in the cvsim checkout, "
                   "and cvsim on every worker)")


def common_options(p: argparse.ArgumentParser) -> None:
    p.add_argument("scenario", type=Path, help="scenario file (YAML)")
    p.add_argument("--set", dest="overrides", action="append", default=[], metavar="KEY=VALUE",
                   help="change one scenario value in every case (repeatable)")
    workers_option(p)
    p.add_argument("--out", type=Path, default=None, help="output folder")
    p.add_argument("--no-plots", action="store_true", help="skip the PNG plots")
    p.add_argument("--report", action="store_true",
                   help="also write report.html, the calculation report of the study")
    p.add_argument("--quiet", action="store_true", help="no progress bar, no table on screen")


def decimal_comma_option(p: argparse.ArgumentParser) -> None:
    p.add_argument("--decimal-comma", action="store_true",
                   help="CSV files for spreadsheets that expect a decimal comma: ';' between "
                   "fields, numbers written 1,5")


def progress_wanted(args) -> bool:
    return not args.quiet and sys.stderr.isatty()


def read_time_limit(text: str | None) -> float | None:
    from ..errors import StudyError
    from ..units import UnitsError, parse_quantity
    from .sweep import CASE_TIME_LIMIT
    if text is None:
        return CASE_TIME_LIMIT
    if text.strip().lower() in ("none", "off", "no"):
        return None
    try:
        value = parse_quantity(text, "time")
    except UnitsError as exc:
        raise StudyError(f"--case-time-limit: {exc}; e.g. '30 min' or 'none'") from None
    if not value > 0:
        raise StudyError(f"--case-time-limit: give a time above zero (e.g. '30 min') or "
                         f"'none', not '{text}'")
    return value


def set_overrides(items: list[str]) -> dict:
    """``--set KEY=VALUE`` items as a mapping (as ``cvsim run`` reads them)."""
    from ..cliargs import parse_overrides
    return parse_overrides(items)


__all__ = ["common_options", "decimal_comma_option", "progress_wanted", "read_time_limit",
           "set_overrides", "workers_option"]
