"""Calculation reports of sweeps and target seeking: the study's table in engineering
units, its plots and notes, handed to :func:`cvsim.report.render_sweep_report`."""
from __future__ import annotations

import math
import os
from pathlib import Path

from .table import NOT_RUN, SweepResult


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


def sweep_answer(result: SweepResult) -> list[tuple[str, str]]:
    """The answer of a sweep, as ``(label, text)`` pairs for the title block and the
    job statement: how many cases meet every design limit the scenario states, the
    smallest and largest value of each varied key that does (among the values swept),
    and the binding limit: the one crossed in the most cases or, when no case crosses
    one, the one with the least margin (relative to the limit) in any case."""
    from ..display import limit_value, margin
    checks = [c for c in result.columns if c.kind == "limit-met"]
    n = len(result.rows)
    ran = [r for r in result.rows if r["status"] not in ("failed", NOT_RUN)]
    left = n - len(ran)
    aside = (f"; {left} of them did not run to an end (failed or not run) and count as "
             "not meeting" if left else "")
    if not checks:
        return [("Answer", f"the scenario states no design limits, so no case was checked "
                 f"against one; {len(ran)} of {n} cases ran to their end or stop condition "
                 "(the table gives each case's results)")]
    meets = [r for r in ran if all(r.get(c.name) is True for c in checks)]
    names = [c.name.removesuffix(".met") for c in checks]
    said = {c.name.removesuffix(".met"): c.text.removesuffix(": met (1) or crossed (0)")
            for c in checks}
    answer = [("Answer", f"{len(meets)} of {n} cases meet every design limit the scenario "
               f"states{aside}")]
    for p in result.parameters:
        if not meets:
            break
        label = f"{p.key} meeting every limit"
        if p.numbers and len(p.numbers) == len(p.values):
            where = dict(zip(p.texts(), p.numbers))
            order = sorted(meets, key=lambda r: where[r[p.key]])
            answer.append((label, f"smallest {_case(result, order[0], p.key)}, largest "
                           f"{_case(result, order[-1], p.key)} (of the values swept; "
                           "cvsim find narrows a crossing down)"))
        else:
            seen = list(dict.fromkeys(r[p.key] for r in meets))
            answer.append((label, ", ".join(seen)))
    crossed = {name: [r for r in ran if r.get(f"{name}.met") is False] for name in names}
    order = sorted((name for name in names if crossed[name]), key=lambda x: -len(crossed[x]))
    u = result.units()
    if order:
        def told(name):
            rows = crossed[name]
            return (f"{name} ({said[name]}), crossed in {len(rows)} of {n} cases ("
                    + "; ".join(_case(result, r) for r in rows[:6])
                    + ("; ..." if len(rows) > 6 else "") + ")")
        text = told(order[0])
        if len(order) > 1:
            text += "; also crossed: " + "; ".join(told(x) for x in order[1:])
        answer.append(("Binding limit", text))
    else:
        closest = None
        for name in names:
            col = result.column(f"{name}.margin")
            for r in ran:
                m, lim = r.get(f"{name}.margin"), r.get(f"{name}.limit")
                if not isinstance(m, (int, float)) or not math.isfinite(m):
                    continue
                share = m / abs(lim) if isinstance(lim, (int, float)) and lim else math.inf
                if closest is None or share < closest[0]:
                    closest = (share, name, r, m, col.unit, lim)
        if closest is not None:
            _, name, r, m, unit, lim = closest
            answer.append(("Binding limit", f"none is crossed; the least margin is that of "
                           f"{name} ({said[name]}; limit "
                           f"{limit_value(lim, unit, result.atmosphere, u.t)}), "
                           f"{margin(m, unit, u)} in {_case(result, r)}"))
    answer.append(("Limits checked", "; ".join(names)))
    return answer


def _case(result: SweepResult, row: dict, key: str | None = None) -> str:
    """``20 mm (case 2)`` for ``key``; without ``key``: ``case 2: d = 20 mm, ...``."""
    given = ", ".join(f"{p.key} = {row[p.key]}" for p in result.parameters if p.key != key)
    if key is None:
        return f"case {row['case']}: {given}"
    return f"{row[key]} (case {row['case']}" + (f", {given})" if given else ")")
