"""The calculation report of an uncertainty study.

The report of a study of many runs (:func:`cvsim.report.render_sweep_report`,
fed by :func:`cvsim.study.report.study_rows`) with the sections of an
uncertainty study: the uncertain inputs and how the cases were drawn (in place
of the values varied), the percentiles of the results, the probability of
crossing each design limit and which inputs drive the results, and the caution
that a probability is only as good as the distributions stated.
"""
from __future__ import annotations

import math
import os
from pathlib import Path

from ..htmldoc import Section, facts, join, notice, table, tag
from .uncertainty_files import describe_input, input_unit, units_of

#: a study of more cases than this lists only its failed cases in the report
#: (every case is in cases.csv)
MOST_ROWS = 200

METHODS = (
    "Percentiles: linear interpolation between order statistics (Hyndman & Fan 1996, "
    "definition 7). Their confidence intervals are distribution-free, from order statistics "
    "and the binomial distribution (Conover, Practical Nonparametric Statistics, 3rd ed. "
    "1999, sec. 3.2); they assume independent cases and are conservative for a Latin "
    "hypercube or Sobol' design. An end marked '-' cannot be bounded with this number of "
    "cases (a 95 % lower bound of P5 needs 72 cases).",
    "Probabilities of crossing a limit: the share of the cases that crossed it, with the "
    "exact binomial (Clopper-Pearson 1934) interval. Failed cases have no verdict; the "
    "probability if all of them had crossed is given beside it.",
    "Sensitivity: Spearman rank correlation and partial rank correlation of each input with "
    "each outcome (Helton & Davis 2003); with a variance design, Sobol' first-order "
    "(Saltelli et al. 2010) and total (Jansen 1999) indices with bootstrap intervals.",
)


def _fmt(conv, x) -> str:
    if x is None:
        return "-"
    if isinstance(x, float) and math.isinf(x):
        return "not reached" if x > 0 else "-inf"
    if isinstance(x, float) and math.isnan(x):
        return "-"
    return f"{conv(x):.4g}"


def _pct(x) -> str:
    if x is None or not math.isfinite(x):
        return "-"
    v = 100 * x
    return f"{v:.2g} %" if v < 10 else f"{v:.3g} %"


def inputs_section(result) -> Section:
    from .uncertainty_terms import UNCERTAINTY_CAUTION
    spec, rec = result.spec, result.record()
    rows = [[tag("code", i.key), describe_input(i), i.given] for i in spec.inputs]
    body = [table(["Key", "Distribution", "Value in the file"], rows,
                  widths=["38%", "45%", "17%"])]
    if spec.correlations:
        body.append(tag("p", "Rank correlations (Gaussian copula): " + "; ".join(
            f"{a} and {b}: {rho:+.3g}" for a, b, rho in spec.correlations) + "."))
    else:
        body.append(tag("p", "The inputs are drawn independently of each other."))
    design = {"latin-hypercube": "Latin hypercube", "sobol": "scrambled Sobol' points",
              "random": "independent random points"}[rec["sampling"]]
    pairs = [("Design", design), ("Seed", str(rec["seed"])),
             ("Cases", f"{rec['cases']} run ({rec['cases_asked']} asked)"),
             ("In the statistics", str(len(result.used))),
             ("Percentiles", ", ".join(f"P{p:g}" for p in rec["percentiles"])),
             ("Confidence", f"{100 * rec['confidence']:.3g} %"),
             ("Sensitivity", "variance-based (Sobol' indices), N = "
              f"{rec.get('base_points')} base points" if rec["sensitivity"] == "variance"
              else "rank correlations")]
    body += [facts(pairs), notice(UNCERTAINTY_CAUTION, kind="info")]
    return Section("parameters", "Uncertain inputs and cases drawn", join(body),
                   new_page=False)


def percentiles_section(result) -> Section:
    pct = list(result.spec.percentiles)
    head = ["Outcome", "Unit", "Cases"] + [f"P{p:g} [interval]" for p in pct]
    rows = []
    names = list(result.main) + [n for n in result.spreads if n not in result.main]
    for name in names:
        s = result.spreads[name]
        unit, conv, dunit, dconv = units_of(result, name)
        if s.difference:
            unit, conv = dunit, dconv
        cells = [tag("code", name), unit, str(s.count)]
        for _, v, lo, hi, _ in s.percentiles:
            cells.append(f"{_fmt(conv, v)} [{_fmt(conv, lo)}, {_fmt(conv, hi)}]")
        rows.append(cells)
    conf = f"{100 * result.spec.confidence:.3g} %"
    body = [tag("p", f"Each outcome's percentiles over the cases, with {conf} confidence "
                "intervals in brackets. The outcomes shown in the plots come first."),
            table(head, rows, cls="wide" if len(head) > 7 else None)]
    return Section("uncertainty-percentiles", "How sure: percentiles of the results",
                   join(body))


def limits_section(result) -> Section:
    if not result.chances:
        body = tag("p", "The scenario states no design limit: no probability of crossing.")
    else:
        conf = f"{100 * result.spec.confidence:.3g} %"
        rows = [[tag("code", c.name), c.text, f"{c.crossed} of {c.cases}", _pct(c.probability),
                 f"{_pct(c.low)} to {_pct(c.high)}",
                 f"{_pct(c.if_failed_crossed)} ({c.failed} failed)" if c.failed else "-"]
                for c in result.chances]
        body = join([tag("p", f"The share of the cases that crossed each limit, with its {conf} "
                              "exact interval."),
                     table(["Limit", "What it is", "Crossed", "Probability", f"{conf} interval",
                            "If every failed case crossed"], rows)])
    return Section("uncertainty-limits", "Probability of crossing the design limits", body,
                   new_page=False)


def sensitivity_section(result) -> Section:
    variance = bool(result.sobol)
    head = ["Outcome", "Input", "Rank correlation", "Partial rank correlation"]
    if variance:
        head += ["First-order index [interval]", "Total index [interval]"]
    rows = []
    for name in result.main:
        items = result.ranks.get(name) or []
        sob = result.sobol.get(name)
        for i, (key, rho, prcc) in enumerate(items):
            cells = [tag("code", name) if i == 0 else "", tag("code", key),
                     f"{rho:+.2f}" if math.isfinite(rho) else "-",
                     f"{prcc:+.2f}" if math.isfinite(prcc) else "-"]
            if variance:
                cells += [_index(sob, "first", i), _index(sob, "total", i)] if sob else ["-", "-"]
            rows.append(cells)
    body = [tag("p", "Which inputs drive each outcome shown in the plots: a value near +1 or "
                "-1 is an input that moves the outcome up or down; the partial rank "
                "correlation takes the other inputs out first"
                + ("; a Sobol' index is the share of the outcome's variance the input "
                   "explains alone (first order) or with its interactions (total)." if variance
                   else "."))]
    body.append(table(head, rows) if rows else tag("p", "No outcome varies from case to case."))
    return Section("uncertainty-sensitivity", "Which inputs drive the results", join(body),
                   new_page=False)


def _index(sob, which: str, i: int) -> str:
    v = float(getattr(sob, which)[i])
    lo, hi = float(getattr(sob, f"{which}_low")[i]), float(getattr(sob, f"{which}_high")[i])
    if not math.isfinite(v):
        return "-"
    return f"{v:.2f} [{lo:.2f}, {hi:.2f}]"


def short_cases_section(result) -> Section:
    failed = result.table.failed
    body = [tag("p", f"{len(result.table.rows)} cases: every one is in cases.csv (inputs as "
                     "given and in SI, status, outcomes). "
                     + (f"The {len(failed)} failed cases:" if failed else "No case failed."))]
    if failed:
        rows = [[str(r["case"])] + [_si(r, k) for k in result.design.keys] + [r["error"]]
                for r in failed[:MOST_ROWS]]
        body.append(table(["Case"] + [tag("code", k) for k in result.design.keys] + ["Error"],
                          rows, cls="wide"))
    return Section("cases", "Cases", join(body), new_page=False)


def _si(row, key) -> str:
    v = row.get(f"{key}.si")
    return f"{v:.6g}" if isinstance(v, float) else str(row.get(key, ""))


def write_uncertainty_report(path, result, scenario=None) -> Path:
    """Write report.html of an uncertainty study (via a temporary name)."""
    from ..report import render_sweep_report
    from .report import study_rows
    from .uncertainty_terms import UNCERTAINTY_CAUTION
    rows, columns = study_rows(result.table, result.main)
    # the inputs in the unit the file writes them in, 5 digits (cases.csv has every digit)
    shown = []
    for inp in result.spec.inputs:
        unit, conv = input_unit(inp)
        head = f"{inp.key} [{unit}]" if unit not in ("", "-") else inp.key
        shown.append(head)
        for row, raw in zip(rows, result.table.rows):
            row.pop(inp.key, None)
            v = raw.get(f"{inp.key}.si")
            row[head] = f"{conv(v):.5g}" if isinstance(v, float) else ""
    columns = shown + [c for c in columns if c not in result.design.keys]
    params = {i.key: [describe_input(i)] for i in result.spec.inputs}
    extra = [inputs_section(result), percentiles_section(result), limits_section(result),
             sensitivity_section(result)]
    if len(rows) > MOST_ROWS:
        extra.append(short_cases_section(result))
    captions = {"spread": "Spread of the results: the share of cases at or below each value, "
                          "percentiles and the design limit marked",
                "convergence": "Convergence: each percentile from the first n cases, with "
                               "its confidence band",
                "sensitivity": "Sensitivity: which inputs drive each outcome"}
    images = [(result.files[k], text) for k, text in captions.items() if k in result.files]
    notes = ([result.partial + "."] if result.partial else []) + [
        UNCERTAINTY_CAUTION, *METHODS, *result.notes, *result.warnings,
        f"Repeat the cases with seed {result.design.seed}, {result.spec.cases} cases, sampling "
        f"{result.design.method} (and the same cvsim, CoolProp and scipy versions)."]
    html = render_sweep_report(f"Uncertainty study: {result.title}", scenario=scenario,
                               parameters=params, rows=rows, columns=columns, images=images,
                               notes=notes, provenance=result.table.provenance,
                               extra_sections=extra)
    path = Path(path)
    tmp = path.with_name(f".{path.name}.partial")
    tmp.write_text(html, encoding="utf-8")
    os.replace(tmp, path)
    return path


__all__ = ["write_uncertainty_report"]
