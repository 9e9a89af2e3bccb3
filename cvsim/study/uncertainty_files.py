"""Files of an uncertainty study: percentiles.csv, limits.csv, sensitivity.csv,
uncertainty.json and uncertainty.txt (the cases are the sweep table's files).

Values in the engineering units of the sweep table (bar a, degC, s, kg; spreads
and margins as differences in K or bar); the CSV files open with ``#`` lines
(title, provenance, status, gauge reference, the caution and the caution on
probabilities), like every cvsim table.
"""
from __future__ import annotations

import csv
import json
import math
from pathlib import Path

from ..result import CAUTION

#: significant digits in the text summary and the CSV files
TEXT_DIGITS = 4
CSV_DIGITS = 8
#: rows of the text's sensitivity list per outcome
TEXT_INPUTS = 5


def units_of(result, name: str) -> tuple[str, object, str, object]:
    """(unit shown, SI -> shown, unit of a difference, SI difference -> shown)
    of an outcome; times and mass flows in the study's units, as in cases.csv
    (:meth:`cvsim.study.table.SweepResult.units`)."""
    col = result.table.column(name)
    unit, conv = result.table.shown_column(col).shown()
    if col.unit in ("s", "kg/s"):
        return unit, conv, unit, conv
    if col.unit == "K":
        return unit, conv, "K", (lambda v: v)
    if col.unit == "Pa":
        return unit, conv, "bar", (lambda v: v / 1e5)
    return unit, conv, unit, conv


def number(x, digits: int = TEXT_DIGITS) -> str:
    if x is None:
        return ""
    if isinstance(x, float) and math.isinf(x):
        return "not reached" if x > 0 else "-inf"
    if isinstance(x, float) and math.isnan(x):
        return ""
    return f"{x:.{digits}g}"


def _status(result) -> str:
    c = result.counts
    rec = result.record()
    text = (f"uncertainty study of {rec['cases']} cases ({rec['sampling']}, seed {rec['seed']}): "
            f"{c.get('completed', 0)} completed, {c.get('stopped', 0)} stopped, "
            f"{c.get('failed', 0)} failed; {len(result.used)} in the statistics")
    return f"{result.partial}; {text}" if result.partial else text


def _head(result, fh) -> None:
    from ..outputs import header_lines
    t = result.table
    for line in header_lines(t.title, t.provenance, _status(result), t.atmosphere):
        fh.write(f"# {line}\n")
    from .uncertainty_terms import UNCERTAINTY_CAUTION
    fh.write(f"# {UNCERTAINTY_CAUTION}\n")


def write_percentiles_csv(result, path: Path) -> Path:
    """One row per outcome: cases, mean, standard deviation, extremes, and
    each percentile with its confidence interval."""
    pcts = list(result.spec.percentiles)
    conf = f"{100 * result.spec.confidence:.3g} %"
    with open(path, "w", newline="", encoding="utf-8") as fh:
        _head(result, fh)
        w = csv.writer(fh)
        head = ["outcome", "unit", "cases", "no value", "not reached", "mean",
                "standard deviation [difference unit]", "lowest", "highest"]
        for p in pcts:
            head += [f"P{p:g}", f"P{p:g} low ({conf})", f"P{p:g} high ({conf})"]
        w.writerow(head + ["what it is"])
        for name, s in result.spreads.items():
            unit, conv, dunit, dconv = units_of(result, name)
            if s.difference:
                conv = dconv
            row = [name, unit if not s.difference else dunit, s.count, s.missing,
                   s.not_reached, _cell(conv, s.mean), _cell(dconv, s.sd),
                   _cell(conv, s.lowest), _cell(conv, s.highest)]
            for _, v, lo, hi, _ in s.percentiles:
                row += [_cell(conv, v), _cell(conv, lo), _cell(conv, hi)]
            w.writerow(row + [s.text])
    return path


def _cell(conv, x) -> str:
    if x is None:
        return ""
    if isinstance(x, float) and math.isinf(x):
        return "inf" if x > 0 else "-inf"
    if isinstance(x, float) and math.isnan(x):
        return ""
    return f"{conv(x):.{CSV_DIGITS}g}"


def write_limits_csv(result, path: Path) -> Path:
    """One row per design limit: cases that crossed it, the probability and
    its exact interval, and the bound if every failed case had crossed it."""
    conf = f"{100 * result.spec.confidence:.3g} %"
    with open(path, "w", newline="", encoding="utf-8") as fh:
        _head(result, fh)
        w = csv.writer(fh)
        w.writerow(["limit", "crossed", "cases", "probability [%]", f"low ({conf}) [%]",
                    f"high ({conf}) [%]", "failed cases",
                    "probability if every failed case crossed [%]", "what it is"])
        for c in result.chances:
            w.writerow([c.name, c.crossed, c.cases, _pct(c.probability), _pct(c.low),
                        _pct(c.high), c.failed, _pct(c.if_failed_crossed), c.text])
    return path


def _pct(x) -> str:
    return "" if x is None or not math.isfinite(x) else f"{100 * x:.6g}"


def write_sensitivity_csv(result, path: Path) -> Path:
    """One row per outcome and input: rank and partial rank correlations, and
    with a variance design the Sobol' indices with their intervals."""
    with open(path, "w", newline="", encoding="utf-8") as fh:
        _head(result, fh)
        w = csv.writer(fh)
        head = ["outcome", "input", "rank correlation", "partial rank correlation"]
        if result.sobol:
            head += ["first-order index", "low", "high", "total index", "low", "high"]
        w.writerow(head)
        for name, items in result.ranks.items():
            sob = result.sobol.get(name)
            for i, (key, rho, prcc) in enumerate(items):
                row = [name, key, number(float(rho), 6), number(float(prcc), 6)]
                if result.sobol:
                    row += ([number(float(getattr(sob, a)[i]), 6) for a in
                             ("first", "first_low", "first_high", "total", "total_low",
                              "total_high")] if sob is not None else [""] * 6)
                w.writerow(row)
    return path


def write_json(result, path: Path) -> Path:
    with open(path, "w", encoding="utf-8") as fh:
        json.dump(plain(result.as_dict()), fh, indent=1)
        fh.write("\n")
    return path


def plain(obj):
    """Plain JSON data: numpy numbers as Python numbers, non-finite floats as None,
    paths as text."""
    if isinstance(obj, dict):
        return {str(k): plain(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [plain(v) for v in obj]
    if hasattr(obj, "item") and not isinstance(obj, (str, bytes)):
        obj = obj.item()
    if isinstance(obj, float) and not math.isfinite(obj):
        return None
    if isinstance(obj, Path):
        return str(obj)
    return obj


def duration(t: float) -> str:
    """A wall time in s, min or h."""
    if not math.isfinite(t):
        return "-"
    if t < 600:
        return f"{t:.3g} s"
    return f"{t / 60:.3g} min" if t < 3 * 3600 else f"{t / 3600:.3g} h"


# ------------------------------------------------------------------- text

def summary_text(result) -> str:
    from .uncertainty_terms import ANY_LIMIT, UNCERTAINTY_CAUTION
    spec, rec, c = result.spec, result.record(), result.counts
    conf = f"{100 * spec.confidence:.3g} %"
    L = [result.title, "=" * min(len(result.title), 78)]
    if result.partial:
        L += [result.partial + ".", ""]
    design = {"latin-hypercube": "Latin hypercube", "sobol": "scrambled Sobol' points",
              "random": "independent random points"}[rec["sampling"]]
    L += [f"Uncertainty study: {rec['cases']} cases, {design}, seed {rec['seed']}"
          + (f"; Saltelli design, N = {rec['base_points']} base points"
             if rec.get("base_points") else ""),
          f"{c.get('completed', 0)} completed, {c.get('stopped', 0)} stopped, "
          f"{c.get('failed', 0)} failed" + (f", {c[NOT_RUN_KEY]} not run" if c.get(NOT_RUN_KEY)
                                            else "")
          + f"; {len(result.used)} cases in the statistics; ran on "
          f"{result.table.ran_on or '-'} in {duration(result.table.wall_time)}",
          f"Repeat it with: --seed {rec['seed']} --cases {rec['cases_asked']} "
          f"--sampling {rec['sampling']}", ""]
    if result.warnings or result.table.warnings:
        L += ["Warnings:"] + [f"  ! {w}" for w in result.warnings + result.table.warnings] + [""]
    L.append("Uncertain inputs:")
    width = max(len(i.key) for i in spec.inputs)
    for i in spec.inputs:
        L.append(f"  {i.key:<{width}}  {describe_input(i)}")
    for a, b, rho in spec.correlations:
        L.append(f"  rank correlation {rho:+.3g} between {a} and {b}")
    L.append("")
    pct = list(spec.percentiles)
    L.append(f"Outcomes: percentiles with their {conf} confidence intervals "
             "[low, high] (order statistics)")
    head = ["outcome", "unit"] + [f"P{p:g}" for p in pct]
    body = []
    for name in result.main:
        s = result.spreads[name]
        unit, conv, dunit, dconv = units_of(result, name)
        if s.difference:
            unit, conv = dunit, dconv
        cells = [name, unit]
        for _, v, lo, hi, _ in s.percentiles:
            cells.append(f"{_n(conv, v)} [{_n(conv, lo, '-')}, {_n(conv, hi, '-')}]")
        body.append(cells)
    L += _columns(head, body)
    missing = [(n, result.spreads[n]) for n in result.main if result.spreads[n].not_reached
               or result.spreads[n].missing]
    for n, s in missing:
        L.append(f"  {n}: " + ", ".join(
            t for t in (f"{s.not_reached} cases did not reach it in the run" if s.not_reached
                        else "", f"{s.missing} cases without a value" if s.missing else "")
            if t))
    L += ["  (every outcome, with mean, standard deviation and extremes: percentiles.csv)", ""]
    if result.chances:
        L.append(f"Probability of crossing each design limit ({conf} confidence, exact "
                 "binomial interval):")
        width = max(len(ch.name) for ch in result.chances)
        for ch in result.chances:
            line = (f"  {ch.name:<{width}}  {ch.crossed} of {ch.cases} cases: "
                    f"{_p(ch.probability)} ({_p(ch.low)} to {_p(ch.high)})")
            if ch.failed:
                line += (f"; {ch.failed} failed case{'s' if ch.failed != 1 else ''}: "
                         f"{_p(ch.if_failed_crossed)} if they all crossed")
            L.append(line)
        if any(ch.name == ANY_LIMIT for ch in result.chances):
            L.append(f"  ({ANY_LIMIT}: the cases that crossed one limit or more)")
        L.append("")
    else:
        L += ["No design limits stated: no probability of crossing (add 'limits:' to a "
              "vessel).", ""]
    if result.ranks:
        L.append("Which inputs drive the outcomes: rank correlation (partial rank "
                 "correlation)" + ("; Sobol' first-order / total index" if result.sobol
                                  else ""))
        for name in result.main:
            items = result.ranks.get(name)
            if not items:
                continue
            sob = result.sobol.get(name)
            order = sorted(range(len(items)), key=lambda i: -_size(items[i], sob, i))
            parts = []
            for i in order[:TEXT_INPUTS]:
                key, rho, prcc = items[i]
                part = f"{key} {rho:+.2f} ({prcc:+.2f})"
                if sob is not None and math.isfinite(sob.first[i]):
                    part += f" S {sob.first[i]:.2f} / ST {sob.total[i]:.2f}"
                parts.append(part)
            L.append(f"  {name}: " + "; ".join(parts))
        L.append("")
    if result.table.failed:
        L.append("Failed cases (kept in cases.csv, left out of the statistics):")
        for r in result.table.failed[:20]:
            given = ", ".join(f"{k} = {r.get(k + '.si') if r.get(k + '.si') is not None else r[k]}"
                              for k in result.design.keys)
            err = r["error"] if len(r["error"]) <= 160 else r["error"][:159] + "…"
            L.append(f"  case {r['case']} ({given}): {err}")
        if len(result.table.failed) > 20:
            L.append(f"  ... and {len(result.table.failed) - 20} more (cases.csv)")
        L.append("")
    if result.notes:
        L += ["Notes:"] + [f"  - {n}" for n in result.notes] + [""]
    L += ["Units: pressures absolute (bar a), gauge = absolute - "
          f"{result.table.atmosphere / 1e5:.5g} bar; margins and spreads as differences.",
          "", "CAUTION: " + UNCERTAINTY_CAUTION, CAUTION]
    return "\n".join(L) + "\n"


NOT_RUN_KEY = "not run"


def describe_input(inp) -> str:
    """A distribution in the units it would be written in (degC, bar a)."""
    d = inp.distribution
    unit, conv = input_unit(inp)

    def show(x, difference=False):
        if difference:
            dunit, dconv = {"K": ("K", lambda v: v), "Pa": ("bar", lambda v: v / 1e5)}.get(
                d.unit, (unit, conv))
            return f"{dconv(x):.4g} {dunit}".strip()
        return f"{conv(x):.4g} {unit}".strip() if unit not in ("", "-") else f"{x:.4g}"
    return d.describe(show)


def input_unit(inp) -> tuple[str, object]:
    """(unit, SI -> unit) an input is shown in: the unit the file writes it in
    (``10 mm``), else the engineering unit of the tables (degC, bar a)."""
    from ..display import display
    return _unit_of(inp) or display(inp.distribution.unit)


def _unit_of(inp):
    """(unit, SI -> unit) of the value as the file writes it (``10 mm``), for
    quantities without an offset or a gauge reference; ``None`` otherwise."""
    from ..units import UnitsError, read_quantity, split_quantity
    if inp.dimension in ("pressure", "temperature", "fraction", "dimensionless"):
        return None
    split = split_quantity(inp.given) if isinstance(inp.given, str) else None
    if split is None or not split[1]:
        return None
    try:
        size = read_quantity(f"1 {split[1]}", inp.dimension).value
    except UnitsError:
        return None
    return (split[1], lambda v: v / size) if size > 0 else None


def _size(item, sob, i) -> float:
    if sob is not None and math.isfinite(sob.total[i]):
        return float(sob.total[i])
    v = abs(float(item[2])) if math.isfinite(item[2]) else abs(float(item[1]))
    return v if math.isfinite(v) else -1.0


def _n(conv, x, missing: str = "") -> str:
    if x is None:
        return missing
    if isinstance(x, float) and math.isinf(x):
        return "not reached" if x > 0 else "-inf"
    if isinstance(x, float) and math.isnan(x):
        return missing
    return f"{conv(x):.{TEXT_DIGITS}g}"


def _p(x) -> str:
    if x is None or not math.isfinite(x):
        return "-"
    v = 100 * x
    return f"{v:.2g} %" if v < 10 else f"{v:.3g} %"


def _columns(head, body) -> list[str]:
    rows = [head] + body
    widths = [max(len(r[i]) for r in rows) for i in range(len(head))]
    return ["  " + "  ".join(c.ljust(w) if k < 2 else c.rjust(w)
                             for k, (c, w) in enumerate(zip(r, widths))).rstrip() for r in rows]


__all__ = ["describe_input", "input_unit", "summary_text", "units_of", "write_json", "write_limits_csv",
           "write_percentiles_csv", "write_sensitivity_csv"]
