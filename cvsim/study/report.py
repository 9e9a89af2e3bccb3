"""Calculation reports of sweeps and target seeking: the study's table in engineering
units, its plots and notes, handed to :func:`cvsim.report.render_sweep_report`."""
from __future__ import annotations

import math
import os
from pathlib import Path

from .table import SweepResult


def _fmt(value) -> str:
    if value is None:
        return ""
    if isinstance(value, bool):
        return "met" if value else "CROSSED"
    if isinstance(value, float):
        return "" if not math.isfinite(value) else f"{value:.5g}"
    return str(value)


def study_rows(result: SweepResult, outcomes: list[str] | None = None):
    """(rows, columns) of a study for the report: parameters as given, status, error,
    the chosen outcomes and every limit check's met/CROSSED and margin, in the units
    of sweep.csv (times and flows in the study's units, :meth:`SweepResult.units`).
    Each row also carries ``status`` and ``limits_crossed`` so the report can mark
    it."""
    wanted = list(outcomes if outcomes is not None else result.outcome_defaults)
    for c in result.columns:
        if c.kind in ("limit-met", "limit-margin") and c.name not in wanted:
            wanted.append(c.name)
    any_error = any(r.get("error") for r in result.rows)
    # the report numbers the cases itself; the error column only when a case failed
    cols = [c for c in result.columns if c.kind in ("parameter", "status")
            or (c.kind == "error" and any_error)]
    cols += [result.column(n) for n in wanted]
    cols = [result.shown_column(c) for c in cols]  # times and flows as in every file
    rows = []
    for r in result.rows:
        row = {}
        for c in cols:
            unit, conv = c.shown()
            v = r.get(c.name)
            if isinstance(v, float) and not isinstance(v, bool) and math.isfinite(v):
                v = conv(v)
            row[c.header()] = _fmt(v)
        row["status"] = r["status"]
        row["limits_crossed"] = sum(1 for c in result.columns
                                    if c.kind == "limit-met" and r.get(c.name) is False)
        rows.append(row)
    return rows, [c.header() for c in cols]


def write_study_report(path, result: SweepResult, scenario=None, title: str | None = None,
                       notes=(), images=(), answer=()) -> Path:
    """Write report.html of a study next to its files (written via a temporary name,
    so a failed write leaves no partial report)."""
    from ..report import render_sweep_report
    rows, columns = study_rows(result)
    params = {p.key: [str(v) for v in p.values] for p in result.parameters}
    html = render_sweep_report(title or result.title, scenario=scenario, parameters=params,
                               rows=rows, columns=columns, images=list(images),
                               notes=list(notes), provenance=result.provenance,
                               answer=list(answer), keep=len(result.parameters))
    path = Path(path)
    tmp = path.with_name(f".{path.name}.partial")
    tmp.write_text(html, encoding="utf-8")
    os.replace(tmp, path)
    return path
