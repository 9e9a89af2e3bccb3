"""The plot of a sweep: chosen outcomes against the first varied value.

One panel per outcome; the x axis is the first varied key (in the unit its
values were written in, on a log axis for a log range; named values are set
side by side), one line per value of the other varied keys. Failed cases are
marked at the foot of every panel (dark red x); a case without a value (a
depressuring target not reached in the run) at its head (open triangle). A
design limit whose reached value is the outcome drawn - and that is the same
in every case - is a dashed line with the side that crosses it shaded.

Drawn like every cvsim plot (:mod:`cvsim.plot`): the Agg canvas without
pyplot, the Okabe-Ito colours, title, subtitle and the caution footer.
"""
from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from ..plot import COLOURS, DASHES, figure, least_span, save

PANEL_SIZE = (5.1, 2.9)     # [in] one panel's plotting area, about
HEADER_IN = 1.3             # [in] title, subtitle and footer together
FAILED_COLOUR = "#A00000"   # as the subtitle of a failed run
LIMIT_COLOUR = "0.25"
MAX_TICK_LABELS = 12        # named values: more than this, and labels are thinned
#: y-axis words by SI unit
QUANTITY_WORDS = {"Pa": "Pressure", "K": "Temperature", "s": "Time", "kg": "Mass",
                  "kg/s": "Mass flow"}


def plot_sweep(result, path: Path, outcomes: list[str], mark: tuple | None = None,
               subtitle: str | None = None, required: list | None = None) -> Path:
    """Write the sweep plot of ``result`` (a :class:`~cvsim.study.table.SweepResult`)
    for ``outcomes`` (column names) to ``path``.

    ``mark`` = (x in the first parameter's plot unit, label) draws a vertical
    line there (target seeking marks its answer); ``subtitle`` replaces the
    count of cases under the title; ``required`` = [(outcome, value [SI], op)]
    draws a requirement on its outcome's panel, the side that fails shaded.
    """
    path = Path(path)
    axis = _XAxis(result)
    groups = _groups(result)
    n = max(1, len(outcomes))
    cols = 1 if n == 1 else 2
    rows = math.ceil(n / cols)
    size = (max(8.0, cols * (PANEL_SIZE[0] + 0.9)), HEADER_IN + rows * (PANEL_SIZE[1] + 1.5))
    c = result.counts()
    if subtitle is None:
        subtitle = (f"{len(result.rows)} cases: {c['completed']} completed, "
                    f"{c['stopped']} stopped, {c['failed']} failed. Varied: " +
                    "; ".join(f"{p.key} = {p.spec}" for p in result.parameters))
    with figure(size, result.title, subtitle, alarm=c["failed"] > 0) as fig:
        axes = np.atleast_1d(fig.subplots(rows, cols, squeeze=False).ravel())
        for ax, name in zip(axes, outcomes):
            _panel(ax, result, name, axis, groups, mark,
                   [(v, op) for n, v, op in required or () if n == name])
        for ax in axes[len(outcomes):]:
            ax.set_visible(False)
        save(fig, path)
    return path


class _XAxis:
    """Where each case sits along x, and the axis label."""

    def __init__(self, result):
        p = result.parameters[0]
        self.log = False
        self.ticks = None
        if p.numbers and len(p.numbers) == len(p.values):
            where = dict(zip(p.texts(), p.numbers))
            self.x = [where[r[p.key]] for r in result.rows]
            words = axis_words(p.key)
            unit = p.unit or (_common_unit(p.values) if p.kind == "list" else "")
            self.label = f"{words} [{_deg(unit)}]" if unit else words
            self.log = p.kind == "log"
            return
        si = [r.get(f"{p.key}.si") for r in result.rows]
        unit = result.column(f"{p.key}.si").unit
        if all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in si):
            self.x = [float(v) for v in si]
            words = axis_words(p.key)
            self.label = f"{words} [{unit}] (as used, SI)" if unit else words
            return
        order = p.texts()
        self.x = [float(order.index(r[p.key])) for r in result.rows]
        self.ticks = order
        self.label = axis_words(p.key)


def _common_unit(values) -> str:
    from ..units import split_quantity
    units = {split_quantity(v)[1] for v in values if isinstance(v, str) and split_quantity(v)}
    return units.pop() if len(units) == 1 else ""


def _groups(result) -> list[tuple[str, list[int]]]:
    """(label, row indices) for each combination of the other varied keys."""
    others = result.parameters[1:]
    if not others:
        return [("", list(range(len(result.rows))))]
    out: dict = {}
    for i, r in enumerate(result.rows):
        label = ", ".join(f"{p.key.rsplit('.', 1)[-1]} = {r[p.key]}" for p in others)
        out.setdefault(label, []).append(i)
    return list(out.items())


def _scale(result, name: str) -> tuple[str, object]:
    """(unit shown, SI -> shown) for a column; times and flows in the study's units."""
    return result.shown_column(result.column(name)).shown()


def _panel(ax, result, name, axis: _XAxis, groups, mark, required=()):
    col = result.column(name)
    unit, conv = _scale(result, name)
    values = result.values(name)
    y = [conv(float(v)) if isinstance(v, (int, float)) and v is not None else math.nan
         for v in values]
    if col.kind == "limit-met":
        y = [1.0 if v else (0.0 if v is not None else math.nan) for v in values]
    for k, (label, idx) in enumerate(groups):
        order = sorted(idx, key=lambda i: axis.x[i])
        ok = [i for i in order if result.rows[i]["status"] != "failed"]
        colour = COLOURS[k % len(COLOURS)]
        # named values (words, mappings) are not a scale: points, no line between
        ls = "none" if axis.ticks is not None else DASHES[(k // len(COLOURS)) % len(DASHES)]
        ax.plot([axis.x[i] for i in ok], [y[i] for i in ok], color=colour, ls=ls, lw=1.6,
                marker="o", ms=3.5 if axis.ticks is None else 6, label=label or None)
    if col.kind != "limit-met":
        least_span(ax, 0.0)  # round-off between cases must not show as ticks
    _limit_line(ax, result, name, conv, unit)
    for value, op in required:
        _threshold(ax, conv(value), below_is_bad=op.startswith(">"),
                   label=f"required: {op} {_short_unit(conv(value), _deg(unit))}", ls=":")
    _marks(ax, result, axis, y)
    if mark is not None:
        ax.axvline(mark[0], color="0.1", lw=1.0, ls="-.", label=mark[1])
    if axis.log:
        ax.set_xscale("log")
        ticks = sorted(set(axis.x))
        if len(ticks) <= MAX_TICK_LABELS:
            ax.set_xticks(ticks, [f"{t:.3g}" for t in ticks])
            ax.set_xticks([], minor=True)
    if axis.ticks is not None:
        step = max(1, math.ceil(len(axis.ticks) / MAX_TICK_LABELS))
        ax.set_xticks(range(0, len(axis.ticks), step), axis.ticks[::step], rotation=30,
                      ha="right", fontsize=8)
    ax.set_xlabel(axis.label)
    word = QUANTITY_WORDS.get(col.unit, "")
    shown = "°C" if unit == "degC" else unit
    ax.set_ylabel(f"{word} [{shown}]".strip() if shown else word)
    ax.set_title(_title(col), fontsize=10, loc="left")
    ax.grid(True, color="0.85", lw=0.6)
    ax.set_axisbelow(True)
    ax.ticklabel_format(axis="y", useOffset=False)
    if col.kind == "limit-met":
        ax.set_ylim(-0.2, 1.2)
        ax.set_yticks([0, 1], ["crossed", "met"])
    _legend_below(ax)


#: characters of a panel title per line (two lines at most; the whole text is in the
#: table's column description)
TITLE_CHARS = 58


def _legend_below(ax):
    """The legend under the panel (below its axis label), where it hides no point."""
    handles, labels = ax.get_legend_handles_labels()
    if handles:
        ax.legend(loc="upper center", bbox_to_anchor=(0.5, -0.2), ncols=2, fontsize=7.5,
                  frameon=False)


def _title(col) -> str:
    """The outcome's words, wrapped on two lines (cut with an ellipsis after them)."""
    import textwrap
    text = col.text or col.name
    text = text[0].upper() + text[1:]
    lines = textwrap.wrap(text, TITLE_CHARS)
    if len(lines) > 2:
        lines = [lines[0], lines[1][:TITLE_CHARS - 1].rstrip() + "…"]
    return "\n".join(lines)


#: words for the sections of a key path (``links.orifice.diameter``)
SECTION_WORDS = {"links": "link", "vessels": "vessel", "reservoirs": "reservoir"}


def axis_words(key: str) -> str:
    """A varied key path in words for an axis label:
    ``links.orifice.diameter`` -> ``Diameter of link 'orifice'``,
    ``vessels.drum.initial.temperature`` -> ``Initial temperature of vessel 'drum'``,
    ``run.end`` -> ``Run end``.

    >>> axis_words("links.orifice.diameter"), axis_words("vessels.drum.initial.temperature")
    ("Diameter of link 'orifice'", "Initial temperature of vessel 'drum'")
    """
    import re
    parts = [p for p in re.split(r"[.\[\]]", key) if p]
    if len(parts) >= 3 and parts[0] in SECTION_WORDS:
        what = " ".join(parts[2:]).replace("_", " ")
        return f"{what[0].upper()}{what[1:]} of {SECTION_WORDS[parts[0]]} '{parts[1]}'"
    what = " ".join(parts).replace("_", " ")
    return what[0].upper() + what[1:] if what else key


def _limit_line(ax, result, name, conv, unit):
    """The limit whose reached value is this outcome, if it is the same in every case."""
    completed = [r for r in result.rows if r["status"] != "failed"]
    if not completed:
        return
    for col in result.columns:
        if col.kind != "limit-actual":
            continue
        base = col.name.removesuffix(".actual")
        if col.name != name and not all(_same(r.get(col.name), r.get(name)) for r in completed):
            continue
        limits = {r.get(f"{base}.limit") for r in completed}
        if len(limits) != 1 or None in limits:
            continue
        shown = conv(limits.pop())
        _threshold(ax, shown, _below_is_bad(completed, base),
                   f"limit: {_short_unit(shown, _deg(unit))} "
                   f"({limit_words(base.split('.limit.')[-1])})")
        return


#: words for the limit checks' keys (``cvsim.limits.LimitCheck.key``)
LIMIT_WORDS = {"design_pressure": "allowed pressure", "min_metal_temperature": "MDMT",
               "max_temperature": "highest allowed temperature",
               "depressure": "depressuring time"}


def limit_words(key: str) -> str:
    """``min_metal_temperature.gas`` -> ``MDMT, gas temperature for information``."""
    head, _, rest = key.partition(".")
    words = LIMIT_WORDS.get(head, head.replace("_", " "))
    if rest == "gas" and head == "min_metal_temperature":
        return f"{words}; the gas, for information"
    return f"{words}, {rest.replace('.', ' ')}" if rest else words


def _deg(unit: str) -> str:
    return "°C" if unit == "degC" else unit


def _threshold(ax, shown: float, below_is_bad, label: str, ls: str = "--"):
    """A horizontal line at ``shown``, the side that fails (if known) shaded."""
    ax.axhline(shown, color=LIMIT_COLOUR, lw=1.1, ls=ls, label=label)
    lo, hi = ax.get_ylim()
    span = max(hi - lo, abs(shown) * 0.05, 1e-9)
    if below_is_bad is not None:
        ax.axhspan(shown - 10 * span if below_is_bad else shown,
                   shown if below_is_bad else shown + 10 * span,
                   color=FAILED_COLOUR, alpha=0.07, lw=0)
    ax.set_ylim(min(lo, shown - 0.05 * span), max(hi, shown + 0.05 * span))


def _same(a, b) -> bool:
    if a is None or b is None:
        return a is b
    a, b = float(a), float(b)
    return (math.isnan(a) and math.isnan(b)) or a == b


def _below_is_bad(rows, base) -> bool | None:
    """True when values below the limit cross it (a minimum), False for a
    maximum, None if no case tells (margin = actual - limit for a minimum)."""
    for r in rows:
        a, m, lim = r.get(f"{base}.actual"), r.get(f"{base}.margin"), r.get(f"{base}.limit")
        if None in (a, m, lim) or not all(math.isfinite(v) for v in (a, m, lim)) or a == lim:
            continue
        return math.isclose(m, a - lim, rel_tol=1e-9, abs_tol=1e-12)
    return None


def _short_unit(value: float, unit: str) -> str:
    return f"{value:.4g} {unit}".strip()


def _marks(ax, result, axis: _XAxis, y):
    """Failed cases at the foot of the panel; cases without a value at its head."""
    trans = ax.get_xaxis_transform()
    failed = [axis.x[i] for i, r in enumerate(result.rows) if r["status"] == "failed"]
    if failed:
        ax.plot(failed, [0.04] * len(failed), transform=trans, ls="none", marker="x", ms=7,
                mew=2.0, color=FAILED_COLOUR, label="failed case", clip_on=False)
    none = [axis.x[i] for i, r in enumerate(result.rows)
            if r["status"] != "failed" and not math.isfinite(y[i])]
    if none:
        ax.plot(none, [0.96] * len(none), transform=trans, ls="none", marker="^", ms=6,
                mfc="none", color="0.2", label="no value (e.g. target not reached)",
                clip_on=False)


__all__ = ["plot_sweep"]
