"""Plots of an uncertainty study: convergence, sensitivity (tornado) and spread.

* ``convergence.png``: each main outcome's percentiles estimated from the first
  n cases, against n, with their confidence bands: where the lines have
  settled and the bands are narrow enough, more cases would not change the
  answer.
* ``sensitivity.png``: per outcome, the inputs as horizontal bars, largest on
  top (a tornado): the rank correlation (filled) and the partial rank
  correlation (outlined); with a variance design, the first-order and total
  Sobol' indices with their bootstrap intervals.
* ``spread.png``: per outcome, the share of cases at or below each value (the
  empirical cumulative distribution), the percentiles marked, and the design
  limit whose reached value the outcome is, the side that crosses it shaded.

Drawn like every cvsim plot (:func:`cvsim.plot.figure`: the Agg canvas, the
caution footer); the uncertainty caution is in each subtitle.
"""
from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from ..plot import COLOURS, figure, save

PANEL = (5.2, 3.0)       # [in] one panel
HEADER_IN = 1.5          # [in] title, subtitle and footer
MOST_PANELS = 6
BAND_ALPHA = 0.18
LIMIT_COLOUR = "0.25"
BAD_COLOUR = "#A00000"
#: cases at which the running percentiles are drawn: about this many points
CONVERGENCE_POINTS = 40
#: fewest cases before a running percentile is drawn
FIRST_COUNT = 5


def _grid(n: int, width_in: float = PANEL[0]):
    cols = 1 if n == 1 else 2
    rows = math.ceil(n / cols)
    return rows, cols, (max(8.0, cols * (width_in + 0.9)), HEADER_IN + rows * (PANEL[1] + 0.8))


def _subtitle(result, what: str) -> str:
    from .uncertainty_terms import UNCERTAINTY_CAUTION
    rec, c = result.record(), result.counts
    text = (f"{what}. {rec['cases']} cases ({rec['sampling']}, seed {rec['seed']}): "
            f"{c.get('completed', 0)} completed, {c.get('stopped', 0)} stopped, "
            f"{c.get('failed', 0)} failed. {UNCERTAINTY_CAUTION}")
    return f"{result.partial}. {text}" if result.partial else text


def _label(result, name: str) -> tuple[str, object]:
    from .uncertainty_files import units_of
    unit, conv, dunit, dconv = units_of(result, name)
    if result.spreads[name].difference:
        unit, conv = dunit, dconv
    shown = "°C" if unit == "degC" else unit
    return shown, conv


def _title(ax, result, name):
    text = result.spreads[name].text or name
    text = text[0].upper() + text[1:]
    ax.set_title(text if len(text) <= 70 else text[:69] + "…", fontsize=9.5, loc="left")


def plot_convergence(result, path: Path, outcomes=None) -> Path:
    """Running percentiles of the main outcomes against the number of cases."""
    from .statistics import running_percentiles
    names = list(outcomes or result.main)[:MOST_PANELS]
    rows, cols, size = _grid(max(1, len(names)))
    used = result.used
    n = len(used)
    counts = sorted({int(round(x)) for x in np.geomspace(min(FIRST_COUNT, n), max(n, 1),
                                                          CONVERGENCE_POINTS)} | {n})
    with figure(size, f"Convergence: {result.title}",
                _subtitle(result, "Percentiles from the first n cases, with their "
                          f"{100 * result.spec.confidence:.3g} % confidence bands"),
                alarm=bool(result.partial)) as fig:
        axes = np.atleast_1d(fig.subplots(rows, cols, squeeze=False).ravel())
        for ax, name in zip(axes, names):
            col = result.table.column(name)
            values = [result.case_value(col, result.table.rows[i]) for i in used]
            unit, conv = _label(result, name)
            for k, p in enumerate(result.spec.percentiles):
                pts = running_percentiles(values, p, result.spec.confidence, counts)
                colour = COLOURS[k % len(COLOURS)]
                xs = [q[0] for q in pts]
                ys = [_finite(conv, q[1]) for q in pts]
                lo = [_finite(conv, q[2]) for q in pts]
                hi = [_finite(conv, q[3]) for q in pts]
                ax.plot(xs, ys, color=colour, lw=1.5, label=f"P{p:g}")
                ax.fill_between(xs, lo, hi, color=colour, alpha=BAND_ALPHA, lw=0)
            ax.set_xscale("log")
            ax.set_xlabel("cases")
            ax.set_ylabel(unit)
            _title(ax, result, name)
            ax.grid(True, color="0.85", lw=0.6)
            ax.legend(fontsize=7.5, framealpha=0.9)
        for ax in axes[len(names):]:
            ax.set_visible(False)
        save(fig, path)
    return Path(path)


def _finite(conv, x) -> float:
    if x is None or not math.isfinite(x):
        return math.nan
    return conv(x)


def plot_sensitivity(result, path: Path, outcomes=None) -> Path:
    """Tornado charts: which inputs drive each main outcome."""
    names = [n for n in (outcomes or result.main) if n in result.ranks][:MOST_PANELS]
    d = len(result.design.keys)
    panel_h = max(PANEL[1], 0.9 + 0.32 * d)
    cols = 1 if len(names) <= 1 else 2
    rows = max(1, math.ceil(len(names) / cols))
    size = (max(8.0, cols * (PANEL[0] + 2.2)), HEADER_IN + rows * (panel_h + 0.8))
    variance = bool(result.sobol)
    what = ("Sobol' indices: first order (filled) and total (outlined), with bootstrap "
            "intervals" if variance else
            "Rank correlation (filled) and partial rank correlation (outlined)")
    with figure(size, f"Sensitivity: {result.title}", _subtitle(result, what),
                alarm=bool(result.partial)) as fig:
        axes = np.atleast_1d(fig.subplots(rows, cols, squeeze=False).ravel())
        for ax, name in zip(axes, names):
            items = result.ranks[name]
            sob = result.sobol.get(name)
            if sob is not None:
                a, b = np.asarray(sob.first), np.asarray(sob.total)
                aerr = _errors(a, sob.first_low, sob.first_high)
                berr = _errors(b, sob.total_low, sob.total_high)
                order = np.argsort(np.nan_to_num(b, nan=-1.0))
            else:
                a = np.array([float(x[1]) for x in items])
                b = np.array([float(x[2]) for x in items])
                aerr = berr = None
                order = np.argsort(np.nan_to_num(np.abs(b), nan=-1.0))
            y = np.arange(d)
            labels = [_short(items[i][0]) for i in order]
            ax.barh(y + 0.18, np.nan_to_num(a[order]), height=0.34, color=COLOURS[0],
                    xerr=None if aerr is None else aerr[:, order], ecolor="0.3",
                    label="first order" if variance else "rank correlation")
            ax.barh(y - 0.18, np.nan_to_num(b[order]), height=0.34, facecolor="none",
                    edgecolor=COLOURS[1], lw=1.4,
                    xerr=None if berr is None else berr[:, order], ecolor="0.3",
                    label="total" if variance else "partial rank correlation")
            ax.set_yticks(y, labels, fontsize=7.5)
            ax.axvline(0.0, color="0.2", lw=0.8)
            ax.set_xlim((-0.05, 1.05) if variance else (-1.05, 1.05))
            ax.set_xlabel("share of the variance" if variance else "correlation")
            _title(ax, result, name)
            ax.grid(True, axis="x", color="0.85", lw=0.6)
            ax.legend(fontsize=7, framealpha=0.9, loc="lower right")
        for ax in axes[len(names):]:
            ax.set_visible(False)
        if not names:
            axes[0].set_visible(True)
            axes[0].text(0.5, 0.5, "no outcome varies from case to case", ha="center",
                         va="center", transform=axes[0].transAxes)
            axes[0].set_axis_off()
        save(fig, path)
    return Path(path)


def _errors(centre, low, high):
    low, high = np.asarray(low, dtype=float), np.asarray(high, dtype=float)
    err = np.vstack([centre - low, high - centre])
    return np.clip(np.nan_to_num(err), 0.0, None)


def _short(key: str) -> str:
    parts = key.split(".")
    return ".".join(parts[-3:]) if len(parts) > 3 else key


def plot_spread(result, path: Path, outcomes=None) -> Path:
    """The empirical cumulative distribution of each main outcome."""
    names = list(outcomes or result.main)[:MOST_PANELS]
    rows, cols, size = _grid(max(1, len(names)))
    with figure(size, f"Spread of the results: {result.title}",
                _subtitle(result, "Share of the cases at or below each value; percentiles "
                          "marked"), alarm=bool(result.partial)) as fig:
        axes = np.atleast_1d(fig.subplots(rows, cols, squeeze=False).ravel())
        for ax, name in zip(axes, names):
            col = result.table.column(name)
            unit, conv = _label(result, name)
            values = np.sort([result.case_value(col, result.table.rows[i]) for i in result.used])
            values = values[~np.isnan(values)]
            n = values.size
            finite = values[np.isfinite(values)]
            shown = np.array([conv(v) for v in finite])
            share = np.arange(1, finite.size + 1) / max(n, 1)
            ax.step(shown, share, where="post", color=COLOURS[0], lw=1.5, label="cases")
            s = result.spreads[name]
            for k, (p, v, _, _, _) in enumerate(s.percentiles):
                if v is not None and math.isfinite(v):
                    ax.axvline(conv(v), color=COLOURS[(k + 1) % len(COLOURS)], lw=1.0,
                               ls=":", label=f"P{p:g} = {conv(v):.4g} {unit}")
            _limit(ax, result, name, conv, unit)
            if s.not_reached:
                ax.text(0.98, 0.04, f"{s.not_reached} cases did not reach it", ha="right",
                        transform=ax.transAxes, fontsize=7.5, color=BAD_COLOUR)
            ax.set_ylim(0.0, 1.02)
            ax.set_xlabel(unit)
            ax.set_ylabel("share of cases")
            _title(ax, result, name)
            ax.grid(True, color="0.85", lw=0.6)
            ax.legend(fontsize=7, framealpha=0.9)
        for ax in axes[len(names):]:
            ax.set_visible(False)
        save(fig, path)
    return Path(path)


def _limit(ax, result, name, conv, unit) -> None:
    """The design limit whose reached value this outcome is (same in every case);
    not a check shown for information only, which no case can cross."""
    rows = [result.table.rows[i] for i in result.used]
    names = {c.name for c in result.table.columns}
    for col in result.table.columns:
        if col.kind != "limit-actual":
            continue
        base = col.name.removesuffix(".actual")
        if f"{base}.met" not in names:  # shown for information only (the gas beside the metal)
            continue
        if col.name != name and not all(_same(r.get(col.name), r.get(name)) for r in rows):
            continue
        limits = {r.get(f"{base}.limit") for r in rows}
        if len(limits) != 1 or None in limits:
            continue
        value = conv(limits.pop())
        ax.axvline(value, color=LIMIT_COLOUR, lw=1.2, ls="--",
                   label=f"limit {value:.4g} {unit}")
        below = _below_is_bad(rows, base)
        if below is not None:
            lo, hi = ax.get_xlim()
            span = max(hi - lo, 1e-9)
            ax.axvspan(value - 10 * span if below else value, value if below else value + 10 * span,
                       color=BAD_COLOUR, alpha=0.07, lw=0)
            ax.set_xlim(min(lo, value - 0.05 * span), max(hi, value + 0.05 * span))
        return


def _same(a, b) -> bool:
    if a is None or b is None:
        return a is b
    return float(a) == float(b) or (math.isnan(float(a)) and math.isnan(float(b)))


def _below_is_bad(rows, base):
    for r in rows:
        a, m, lim = r.get(f"{base}.actual"), r.get(f"{base}.margin"), r.get(f"{base}.limit")
        if None in (a, m, lim) or not all(math.isfinite(v) for v in (a, m, lim)) or a == lim:
            continue
        return math.isclose(m, a - lim, rel_tol=1e-9, abs_tol=1e-12)
    return None


__all__ = ["plot_convergence", "plot_sensitivity", "plot_spread"]
