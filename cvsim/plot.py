"""PNG plots of a run, ready for a calculation package.

:func:`plot_run` writes an overview (pressure, temperature, mass and mass
flow on one page) and one figure per quantity. Every figure carries the
scenario title, the run's status, axis labels with units, a legend, a grid
and a footer with the caution and the cvsim version.

Units on the plots: pressure in bar absolute (right-hand axis in bar gauge
relative to the network's atmosphere), temperature in °C, mass in kg, mass
flow in kg/s, g/s or kg/h by magnitude (:func:`flow_unit`), time in s, min
or h by the length of the run (:func:`time_unit`), openings in %.

Columns added later are picked up by name: every column in K whose name
starts with a vessel's name is drawn with that vessel's gas temperature
(walls, for instance), and ``<link>.opening`` columns get a figure of their
own when there are any. The temperatures through a layered wall
(``<vessel>.wall.node<i>_temperature``) get a figure of their own (``wall.png``);
the temperature panel keeps only the wall's surfaces. When any vessel holds liquid at
some time, ``level.png`` shows the liquid level of those vessels (``<vessel>.liquid_level``,
with each vessel's inside height), or their liquid share of the volume when one of them
is given by its volume only (no height). A vessel with a rupture screening
(``<vessel>.rupture.*``, :mod:`cvsim.rupture`) gets ``rupture.png``: the stress in the
wall, the stress allowed at the metal's temperature and the margin between them.

matplotlib (and the rest of cvsim) is imported only inside the functions
(the command line starts faster) and only through its object interface with the Agg canvas: no
pyplot, no global backend switch, so plotting never disturbs the figures of
an interactive session and needs no display.
"""
from __future__ import annotations

import contextlib
import math
import textwrap
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from .display import RunUnits, duration, flow_unit, run_units, time_unit

if TYPE_CHECKING:
    from .result import Result

BAR = 1e5                 # [Pa]
ZERO_CELSIUS = 273.15     # [K]
DPI = 150
OVERVIEW_SIZE = (11.0, 8.0)   # [in] fits a landscape A4 page inside its margins
SINGLE_SIZE = (10.0, 6.0)     # [in]
MAX_EVENT_LABELS = 8      # more events than this: lines only, no text
MAX_EVENT_LINES = 40      # more events than this (a cycling valve): no lines, they would
                          # hide the curves; the openings panel shows the switching
EVENT_LABEL_HEIGHT = 0.6  # event text is cut to this fraction of the panel height
SUBTITLE_MESSAGE_CHARS = 240  # a longer status message is cut (the summary has it whole)
EVENT_SHORT = (("stop condition met: ", "stop: "), ("run failed: ", "failed: "))
EVENT_MIN_GAP = 0.03      # labels closer than this fraction of the time span are dropped

# colour-blind safe palette (Okabe & Ito), without the yellow that fades on paper
COLOURS = ("#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9", "#000000")
DASHES = ("-", (0, (6, 2)), (0, (1, 1.5)), (0, (6, 2, 1, 2)))

# [in] size of one panel's plotting area, a little less than it turns out after
# layout (to place legends and cut event texts before the layout is known)
PANEL_IN = {True: (4.4, 2.8), False: (8.6, 3.8)}
# the same for the overview with a row of valve openings: the four quantities in
# half-width panels, the openings in a wide, low panel below them
PANEL_WITH_OPENINGS_IN = {False: (4.4, 1.9), True: (9.6, 1.3)}

TITLE_PT = 12.0
SUBTITLE_PT = 9.0
FOOTER_PT = 7.0
#: lines of title and subtitle at most (a longer title is cut with an ellipsis:
#: the whole title is in every text output)
TITLE_LINES = 3
SUBTITLE_LINES = 4
LEGEND_PT = 7.5
LEGEND_ROWS = 6           # a longer legend is set in two columns
EVENT_PT = 6.5

#: vessels whose largest masses differ by more than this factor do not share a mass
#: axis: the overview shows each one's change of mass, mass.png one panel per vessel
MASS_RATIO = 10.0
LIMIT_COLOUR = "0.2"
CROSSED_COLOUR = "#A00000"
#: line styles of the limits: the design pressure (MAWP), the highest allowed pressure
#: (MAWP + accumulation), relief set pressures, the depressuring target, the MDMT and the
#: highest allowed temperature
LIMIT_DASH = {"mawp": (0, (4, 2)), "allowed": (0, (8, 2, 2, 2)), "set": (0, (1, 1.5)),
              "target": (0, (6, 3)), "temperature": (0, (4, 2)), "hot": (0, (8, 2, 2, 2))}


# ---------------------------------------------------------------- the run

def plot_names(result: Result) -> list[str]:
    """Stems of the files :func:`plot_run` writes for ``result``, in order."""
    names = ["overview", "pressure", "temperature", "mass", "flow"]
    n = len(result.data)
    columns = result.names()
    if any(f"{k}.opening" in columns for k in result.link_names()):
        names.append("opening")
    if any(c.startswith(f"{v}.wall.node") for v in result.vessel_names() for c in columns):
        names.append("wall")
    if n and any(f"{v}.liquid_fraction" in columns
                 and bool(np.any(result[f"{v}.liquid_fraction"] > 0.0))
                 for v in result.vessel_names()):
        names.append("level")
    if n and result.network.fluid.model == "mixture" and any(
            bool(np.any(~np.isnan(result[f"{v}.vapour_quality"])))
            for v in result.vessel_names()):
        names.append("phases")
    if any(f"{v}.rupture.stress" in columns for v in result.vessel_names()):
        names.append("rupture")
    return names


def plot_run(result: Result, folder: Path, only=None) -> list[Path]:
    """Write the plots of ``result`` into ``folder`` (created if missing).

    Files: ``overview.png`` (pressure, temperature, mass, mass flow, and the
    valve openings across the foot of the page when there are any),
    ``pressure.png``, ``temperature.png``, ``mass.png``, ``flow.png`` and,
    only when the result has ``<link>.opening`` columns, ``opening.png``; only
    with layered walls, ``wall.png``; only when a vessel holds liquid at some time,
    ``level.png``; a mixture run whose vessel holds two phases, ``phases.png`` (vapour
    share of the mass, liquid share of the volume); only with a rupture screening,
    ``rupture.png``. Returns the paths written, in that order. ``only``: the stems to
    draw (of :func:`plot_names`), so that several processes can share the work.
    """
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    view = _View(result)
    panels = [("pressure", _pressure), ("temperature", _temperature), ("mass", _mass),
              ("flow", _flow)]
    if view.openings:
        panels.append(("opening", _opening))
    if view.wall_nodes:
        panels.append(("wall", _wall))
    if view.liquid:
        panels.append(("level", _level))
    if view.phases:
        panels.append(("phases", _phases))
    if view.rupture:
        panels.append(("rupture", _rupture))
    wanted = set(plot_names(result) if only is None else only)
    written = []
    if "overview" in wanted:
        written.append(_draw_overview(view, panels, folder / "overview.png"))
    for name, draw in panels:
        if name in wanted:
            written.append(_draw_single(view, name, draw, folder / f"{name}.png"))
    return written


def _draw_overview(view: _View, panels, path: Path) -> Path:
    """The overview holds the four quantities and the openings; walls, levels, phases
    and the rupture screening have their own pages."""
    with _figure(OVERVIEW_SIZE, view) as fig:
        _overview_panels(fig, view, panels)
        save(fig, path)
    return path


def _overview_panels(fig, view: _View, panels) -> list:
    """Draw the overview's panels on ``fig``; returns their axes, in drawing order.

    Each column of quantities has its time scale under it: the lower row of the 2 x 2
    grid; with a row of valve openings across the foot of the page (whose time axis
    is wider, so it does not line up with the columns) the mass and flow panels keep
    their own time ticks and label too."""
    overview = [p for p in panels if p[0] not in ("wall", "level", "phases", "rupture")]
    if view.openings:  # valve states under the four quantities, across the page
        grid = fig.subplot_mosaic([["pressure", "temperature"], ["mass", "flow"],
                                   ["opening", "opening"]], sharex=True,
                                  height_ratios=[1.0, 1.0, 0.7])
        axes = [grid[name] for name, _ in overview]
        timed = [grid["mass"], grid["flow"], grid["opening"]]
        for ax in timed:  # sharex hides the ticks of every panel but the lowest
            ax.tick_params(axis="x", labelbottom=True)
    else:
        axes = list(fig.subplots(2, 2, sharex=True).ravel())
        timed = axes[2:]
    for ax, (_, draw) in zip(axes, overview):
        draw(ax, view, overview=True)
    for ax in timed:
        ax.set_xlabel(view.time_label)
    return axes


def _draw_single(view: _View, name: str, draw, path: Path) -> Path:
    with _figure(SINGLE_SIZE, view) as fig:
        if name == "mass" and view.mass_apart:
            axes = fig.subplots(len(view.vessels), 1, sharex=True, squeeze=False)[:, 0]
            for ax, v in zip(axes, view.vessels):
                _mass_of(ax, view, v)
            axes[-1].set_xlabel(view.time_label)
        else:
            ax = fig.subplots()
            draw(ax, view, overview=False)
            ax.set_xlabel(view.time_label)
        save(fig, path)
    return path


class _View:
    """What the plots need from a result, in plotting units."""

    def __init__(self, result: Result):
        self.result = result
        net = result.network
        n = len(result.data)
        self.empty = n == 0
        self.units: RunUnits = run_units(result)  # as the summary and the CSV files
        self.time_name, self.time_size = self.units.time, self.units.time_size
        self.time_label = f"Time [{self.time_name}]"
        self.t = result.time / self.time_size if n else np.zeros(0)
        self.vessels = result.vessel_names()
        self.reservoirs = [r.name for r in net.reservoirs]
        self.links = result.link_names()
        names = result.names()
        self.openings = [k for k in self.links if f"{k}.opening" in names]
        # one colour per object across every figure: vessels, reservoirs, links;
        # past the palette's end the colours come again with a dash
        order = self.vessels + self.reservoirs + self.links
        self.colour = {o: COLOURS[i % len(COLOURS)] for i, o in enumerate(order)}
        self.dash = {o: DASHES[(i // len(COLOURS)) % len(DASHES)] for i, o in enumerate(order)}
        self.wall_nodes = self._wall_nodes(names)
        # vessels that hold liquid at some recorded time
        self.liquid = [v for v in self.vessels if n and f"{v}.liquid_fraction" in names
                       and bool(np.any(result[f"{v}.liquid_fraction"] > 0.0))]
        # a mixture run: vessels that hold two phases at some recorded time
        self.phases = [v for v in self.vessels if n and net.fluid.model == "mixture"
                       and bool(np.any(~np.isnan(result[f"{v}.vapour_quality"])))]
        self.extra_temperatures = self._extra_temperatures(names)
        # vessels with a rupture screening (cvsim.rupture)
        self.rupture = [v for v in self.vessels if f"{v}.rupture.stress" in names]
        self.atmosphere_bar = net.atmosphere / BAR
        self.events = [(float(t) / self.time_size, str(text)) for t, text in result.events]
        self.limits = {v.name: v.limits for v in net.vessels if v.limits is not None}
        self.checks = list(result.limits)
        # relief valves and bursting discs that protect a vessel: (link, vessel, p [Pa])
        from .network import BurstingDisc, ReliefValve
        self.set_points = []
        for link in net.links:
            if link.source not in self.vessels:
                continue
            if isinstance(link.device, ReliefValve):
                self.set_points.append((link.name, float(link.device.set_pressure), "set"))
            elif isinstance(link.device, BurstingDisc):
                self.set_points.append((link.name, float(link.device.burst_pressure),
                                        "bursts at"))
        peaks = [float(np.nanmax(result[f"{v}.mass"])) for v in self.vessels] if n else []
        peaks = [m for m in peaks if m > 0.0]
        self.mass_apart = len(peaks) > 1 and max(peaks) > MASS_RATIO * min(peaks)

    def _extra_temperatures(self, names: list[str]) -> dict[str, list[str]]:
        """Columns in K other than the gas temperature, by the vessel whose name
        (the longest that fits) starts them, e.g. ``receiver.wall.inner``."""
        out = {v: [] for v in self.vessels}
        by_length = sorted(self.vessels, key=len, reverse=True)
        for name in names:
            if (self.result.unit(name) != "K" or name.endswith(".source_temperature")
                    or name.endswith(".contents_temperature")
                    or name.endswith(".vapour_temperature")   # the gas line itself
                    or "wetted.node" in name):   # wall parts: inner and outer shown
                continue
            owner = next((v for v in by_length if name.startswith(v + ".")), None)
            if (owner is not None and name != f"{owner}.temperature"
                    and name not in self.wall_nodes.get(owner, ())):
                out[owner].append(name)
        return out

    def _wall_nodes(self, names: list[str]) -> dict[str, list[str]]:
        """Temperatures through each vessel's layered wall, inside to outside."""
        out = {}
        for v in self.vessels:
            nodes = [n for n in names if n.startswith(f"{v}.wall.node")
                     and n.endswith("_temperature") and self.result.unit(n) == "K"]
            if nodes:
                out[v] = sorted(nodes, key=lambda n: int(n[len(f"{v}.wall.node"):-12]))
        return out

    def subtitle(self) -> str:
        r = self.result
        fluid = r.network.fluid
        props = {"real": "real-fluid properties", "mixture": f"{fluid.equation} mixture"
                 }.get(fluid.model, "ideal gas")
        head = f"{fluid.name} ({props})"
        if self.empty:
            return (f"{head}. Run {r.status.upper()} before the first record: "
                    f"{_cut(r.message, SUBTITLE_MESSAGE_CHARS)}")
        t_end = float(r.time[-1])
        if r.status in ("failed", "stopped"):
            at = float(r.events[-1][0]) if r.events else t_end
            last = ("" if abs(at - t_end) <= 1e-9 * max(abs(at), 1.0) else
                    f" (last recorded state at t = {_fmt_time(t_end)})")
            message = _cut(r.message, SUBTITLE_MESSAGE_CHARS)
            return f"{head}. Run {r.status.upper()} at t = {_fmt_time(at)}{last}: {message}"
        return f"{head}. Run {r.status} at t = {_fmt_time(t_end)}."


def _cut(text: str, most: int) -> str:
    return text if len(text) <= most else text[:most - 1] + "…"


def _fmt_time(t: float) -> str:
    """A time [s] with its size in minutes or hours when that helps."""
    name, size = time_unit(t)
    if name == "s":
        return f"{t:.4g} s"
    return f"{t:.6g} s ({t / size:.4g} {name})"


# ---------------------------------------------------------------- panels

def _pressure(ax, view: _View, overview: bool):
    r = view.result
    for v in view.vessels:
        _line(ax, view, r[f"{v}.pressure"] / BAR, v, view.colour[v], lw=1.6, ls=view.dash[v])
    for res in view.reservoirs:
        _line(ax, view, r[f"{res}.pressure"] / BAR, f"{res} (reservoir)", view.colour[res],
              lw=0.9, ls="--")
    ax.set_ylabel("Pressure [bar a]")
    atm = view.atmosphere_bar
    if view.empty:
        _finish(ax, view, "Pressure", floor=None, overview=overview)
        return
    _pressure_limits(ax, view)
    gauge = ax.secondary_yaxis("right", functions=(lambda b: b - atm, lambda g: g + atm))
    gauge.set_ylabel(f"Pressure [bar g]  (atmosphere {atm:.4g} bar a)", fontsize=8)
    gauge.tick_params(labelsize=8)
    gauge.ticklabel_format(axis="y", useOffset=False)  # as the bar a axis: whole values
    _finish(ax, view, "Pressure", floor=1e-3, overview=overview, event_labels=True)


def _who(view: _View, vessel: str) -> str:
    """``"receiver: "`` when several vessels could own a limit, else nothing."""
    return f"{vessel}: " if len(view.vessels) > 1 else ""


def _span(view: _View) -> tuple[float, float]:
    return float(view.t[0]), float(view.t[-1]) if view.t[-1] > view.t[0] else view.t[0] + 1.0


def _limit_line(ax, view: _View, y: float, label: str, ls, bad_side: str | None = None,
                until: float | None = None):
    """A limit across the panel (a curve of two points, so that legends avoid it), the
    side that crosses it (``above``/``below``) lightly shaded."""
    t0, t1 = _span(view)
    ax.plot([t0, t1 if until is None else min(until, t1)], [y, y], color=LIMIT_COLOUR, lw=1.1,
            ls=ls, label=label, zorder=3)
    if bad_side is not None:
        lo, hi = ax.get_ylim()
        far = 10.0 * max(abs(hi - lo), abs(y), 1.0)
        ax.axhspan(y, y + far if bad_side == "above" else y - far, color=CROSSED_COLOUR,
                   alpha=0.06, lw=0, zorder=0)


def _crossed(ax, view: _View, t: float, y: float, label: str):
    """Where a limit is crossed: a red cross on the curve."""
    ax.plot([t], [y], ls="none", marker="X", ms=9, mew=0.8, mec="white",
            color=CROSSED_COLOUR, label=label, zorder=6, clip_on=False)


def _check(view: _View, vessel: str, key: str):
    return next((c for c in view.checks if c.vessel == vessel and c.key == key), None)


def _pressure_limits(ax, view: _View):
    """Design pressure (MAWP), the highest allowed pressure (MAWP + accumulation),
    the set pressures of relief devices and the depressuring target of each vessel
    with its deadline, as limit lines; a crossed limit marked where it is crossed."""
    atm = view.atmosphere_bar
    lo, hi = ax.get_ylim()
    ys = []
    for v, lim in view.limits.items():
        who = _who(view, v)
        if lim.design_pressure is not None:
            mawp = lim.design_pressure / BAR
            _limit_line(ax, view, mawp, f"{who}MAWP {mawp - atm:.4g} bar g", LIMIT_DASH["mawp"])
            c = _check(view, v, "design_pressure")
            if c is not None:
                allowed = c.limit / BAR
                _limit_line(ax, view, allowed, f"{who}allowed {allowed - atm:.4g} bar g "
                            f"(MAWP + accumulation)", LIMIT_DASH["allowed"], "above")
                ys += [mawp, allowed]
                if c.crossed and c.time == c.time:
                    _crossed(ax, view, c.time / view.time_size, c.actual / BAR,
                             f"CROSSED: {who}allowed pressure")
        if lim.depressure_to is not None and lim.depressure_within is not None:
            target = lim.depressure_to / BAR
            c = _check(view, v, "depressure")
            start = _depressuring_start(view, v, c, lim)
            deadline = (start + lim.depressure_within) / view.time_size
            within = duration(lim.depressure_within)
            _limit_line(ax, view, target, f"{who}depressure to {target - atm:.4g} bar g "
                        f"within {within}", LIMIT_DASH["target"], until=deadline)
            ys.append(target)
            t0, t1 = _span(view)
            if deadline <= t1:
                ax.axvline(deadline, color=LIMIT_COLOUR, lw=1.1, ls=LIMIT_DASH["target"],
                           zorder=3)
            if c is not None and c.crossed:
                at = min(deadline, t1)
                p_at = float(np.interp(at, view.t, view.result[f"{v}.pressure"] / BAR))
                _crossed(ax, view, at, p_at, f"CROSSED: {who}depressuring target "
                         + ("not reached" if c.time != c.time else "reached late"))
    for name, p, what in view.set_points:
        _limit_line(ax, view, p / BAR, f"{name} {what} {p / BAR - atm:.4g} bar g",
                    LIMIT_DASH["set"])
        ys.append(p / BAR)
    if ys:  # every limit inside the range, with a little room
        top, bottom = max(ys + [hi]), min(ys + [lo])
        pad = 0.03 * (top - bottom)
        ax.set_ylim(min(lo, min(ys) - pad), max(hi, max(ys) + pad))


def _depressuring_start(view: _View, vessel: str, check, lim) -> float:
    """Start of depressuring [s]: stated, else from the check (reached: reach time
    less time taken), else found from the run as the limit check finds it."""
    if getattr(lim, "depressure_start", None) is not None:
        return float(lim.depressure_start)
    if check is not None and check.time == check.time and check.actual == check.actual:
        return float(check.time - check.actual)
    from .limits import depressuring_start
    r = view.result
    return depressuring_start(r.fine("time"), r.fine(f"{vessel}.pressure"), math.nan)


def _temperature_limits(ax, view: _View):
    """Minimum design metal temperature and highest allowed temperature of each vessel,
    shaded on the side that crosses them; crossed limits marked where crossed."""
    lo, hi = ax.get_ylim()
    ys = []
    for v, lim in view.limits.items():
        who = _who(view, v)
        if lim.min_metal_temperature is not None:
            y = lim.min_metal_temperature - ZERO_CELSIUS
            _limit_line(ax, view, y, f"{who}MDMT {y:.1f} °C", LIMIT_DASH["temperature"],
                        "below")
            ys.append(y)
        if lim.max_temperature is not None:
            y = lim.max_temperature - ZERO_CELSIUS
            _limit_line(ax, view, y, f"{who}highest allowed {y:.1f} °C", LIMIT_DASH["hot"],
                        "above")
            ys.append(y)
        for c in view.checks:
            if (c.vessel == v and c.quantity == "temperature" and c.crossed
                    and c.time == c.time):
                what = ("MDMT" if c.key.startswith("min_metal") else "highest allowed")
                worst = "lowest" if c.key.startswith("min_metal") else "highest"
                on = (c.key.split(".", 1)[1].replace(".", " ") if "." in c.key else
                      "metal" if c.note.startswith("checked on the wall") else "gas")
                _crossed(ax, view, c.time / view.time_size, c.actual - ZERO_CELSIUS,
                         f"CROSSED: {who}{what} ({on} {worst} "
                         f"{c.actual - ZERO_CELSIUS:.1f} °C)")
    if ys:
        top, bottom = max(ys + [hi]), min(ys + [lo])
        pad = 0.03 * (top - bottom)
        ax.set_ylim(min(lo, min(ys) - pad), max(hi, max(ys) + pad))


def temperature_label(vessel: str, column: str) -> str:
    """Words for a temperature column of a vessel in a legend:
    ``drum.wall.inner_temperature`` -> ``drum wall, inside surface``."""
    rest = column[len(vessel) + 1:] if column.startswith(vessel + ".") else column
    term, _, what = rest.rpartition(".")
    words = {"inner_temperature": "inside surface", "outer_temperature": "outside surface",
             "temperature": ""}.get(what)
    if words is None:
        words = what.removesuffix("_temperature").replace("_", " ")
        if words.startswith("node") and words[4:].isdigit():
            words = f"node {words[4:]}"
    head = f"{vessel} {term.replace('.', ' ').replace('_', ' ')}".strip()
    return f"{head}, {words}" if words else head


#: line styles of a vessel's temperatures other than the gas: a wall's inside surface
#: dashed, its outside surface dotted, anything else (a zone, a node) dash-dot; then
#: these others when a pen (colour and style) is taken already
SURFACE_DASH = {"inner_temperature": DASHES[1], "outer_temperature": DASHES[2]}
MORE_DASHES = ((0, (3, 1, 1, 1, 1, 1)), (0, (10, 3)), (0, (2, 3)), (0, (8, 2, 1, 2, 1, 2)))


def _temperature_pens(view: _View) -> dict[str, tuple[str, object]]:
    """(colour, line style) of every temperature line of the panel, by column, no two
    the same: the gas in its vessel's colour and style. With one vessel, colour tells the
    part (the wetted wall, the unwetted wall, the liquid, the interface) and style the
    surface (inside dashed, outside dotted); with several, colour tells the vessel and
    style each of its lines."""
    pens: dict[str, tuple[str, object]] = {}
    taken: set = set()
    styles = [DASHES[1], DASHES[2], DASHES[3], *MORE_DASHES]

    def take(column, colour, style):
        order = [style] + [s for s in ["-", *styles] if s != style]
        colours = [colour] + [c for c in COLOURS if c != colour]
        pen = next(((c, s) for c in colours for s in order if (c, repr(s)) not in taken),
                   (colour, style))  # every pen taken (49 lines in one panel)
        taken.add((pen[0], repr(pen[1])))
        pens[column] = pen

    for v in view.vessels:
        take(f"{v}.temperature", view.colour[v], view.dash[v])
    single = len(view.vessels) == 1
    part_colour: dict[str, str] = {}
    spare = [c for c in COLOURS if c not in {view.colour[v] for v in view.vessels}]
    for v in view.vessels:
        for k, name in enumerate(view.extra_temperatures[v]):
            term, _, what = name[len(v) + 1:].rpartition(".")
            style = SURFACE_DASH.get(what, DASHES[3]) if single else styles[k % len(styles)]
            if single:   # a wall part's surfaces share a colour; a zone has its own
                part = term if what in SURFACE_DASH else name
                colour = part_colour.setdefault(part, spare[len(part_colour) % len(spare)])
            else:
                colour = view.colour[v]
            take(name, colour, style)
    return pens


def _temperature(ax, view: _View, overview: bool):
    r = view.result
    pens = _temperature_pens(view)
    for v in view.vessels:
        colour, style = pens[f"{v}.temperature"]
        _line(ax, view, r[f"{v}.temperature"] - ZERO_CELSIUS, f"{v} gas", colour, lw=1.6,
              ls=style)
        drawn = []  # (values, line): a column equal to one drawn joins its label
        for name in view.extra_temperatures[v]:
            values = r[name]
            same = next((ln for vals, ln in drawn if np.array_equal(vals, values,
                                                                    equal_nan=True)), None)
            label = temperature_label(v, name)
            if same is not None:
                same.set_label(f"{same.get_label()} = {label.split(', ', 1)[-1]}")
                continue
            colour, style = pens[name]
            _line(ax, view, values - ZERO_CELSIUS, label, colour, lw=1.1, ls=style)
            if not view.empty:
                drawn.append((values, ax.get_lines()[-1]))
    ax.set_ylabel("Temperature [°C]")
    walls = any(view.extra_temperatures.values())
    title = "Gas and wall temperatures" if walls else "Gas temperature"
    if not view.empty:
        least_span(ax, 1e-2)
        _temperature_limits(ax, view)
    _finish(ax, view, title, floor=1e-2, overview=overview)


def _mass(ax, view: _View, overview: bool):
    if view.mass_apart:  # one axis cannot show a small vessel beside a large one
        for v in view.vessels:
            m = view.result[f"{v}.mass"]
            _line(ax, view, m - (m[0] if len(m) else 0.0), v, view.colour[v], lw=1.6,
                  ls=view.dash[v])
        ax.set_ylabel("Mass change since the start [kg]")
        _finish(ax, view, "Change of mass in each vessel", floor=1e-6, overview=overview)
        return
    for v in view.vessels:
        _line(ax, view, view.result[f"{v}.mass"], v, view.colour[v], lw=1.6, ls=view.dash[v])
    ax.set_ylabel("Mass in vessel [kg]")
    _finish(ax, view, "Mass in each vessel", floor=1e-6, overview=overview)


def _mass_of(ax, view: _View, vessel: str):
    """One vessel's mass on an axis of its own (vessels of very different sizes)."""
    _line(ax, view, view.result[f"{vessel}.mass"], vessel, view.colour[vessel], lw=1.6,
          ls=view.dash[vessel])
    ax.set_ylabel("Mass [kg]")
    _finish(ax, view, f"Mass in {vessel}", floor=1e-6, overview=True)
    if ax.get_legend() is not None:  # the title names the one vessel
        ax.get_legend().remove()


def _flow(ax, view: _View, overview: bool):
    r = view.result
    net = r.network
    flows = {k: r[f"{k}.mass_flow"] for k in view.links}
    name, size = view.units.flow, view.units.flow_size
    for link in net.links:
        label = f"{link.name} ({link.source} → {link.target})"
        _line(ax, view, flows[link.name] / size, label, view.colour[link.name], lw=1.6,
              ls=view.dash[link.name])
    if view.links:
        ax.set_ylabel(f"Mass flow [{name}]")
    else:
        ax.set_ylabel("Mass flow")
        ax.set_yticks([])
        if not view.empty:
            _note(ax, "no links in this network")
    _finish(ax, view, "Mass flow through each link (positive from source to target)",
            floor=1e-3, overview=overview)


def _opening(ax, view: _View, overview: bool):
    # valves often share a value (shut, fully open): earlier lines are drawn wider so
    # that the ones on top of them leave them visible
    n = len(view.openings)
    step = min(1.2, 3.6 / max(n - 1, 1))  # [pt] the widest line at most 5.2 pt
    for i, k in enumerate(view.openings):
        _line(ax, view, 100.0 * view.result[f"{k}.opening"], k, view.colour[k],
              lw=1.6 + step * (n - 1 - i), ls=view.dash[k])
    ax.set_ylabel("Opening [%]")
    ax.set_ylim(-5.0, 105.0)
    ax.set_yticks([0.0, 25.0, 50.0, 75.0, 100.0])
    _finish(ax, view, "Valve opening", floor=None, overview=overview, legend_outside=True)


WALL_LABELS = 7  # most node labels in the wall figure's legend


def _wall(ax, view: _View, overview: bool):
    """Temperatures through each layered wall: one line per node, inside (dark) to
    outside (light); the gas is left out so that the scale shows the wall."""
    from matplotlib import colormaps

    r = view.result
    cmap = colormaps["viridis"]
    for v, nodes in view.wall_nodes.items():
        n = len(nodes)
        every = max(1, math.ceil((n - 1) / (WALL_LABELS - 1)))
        for i, name in enumerate(nodes):
            where = " (inside surface)" if i == 0 else " (outside surface)" if i == n - 1 else ""
            labelled = i % every == 0 or i == n - 1
            label = f"{v} wall node {i}{where}" if labelled else "_node"
            _line(ax, view, r[name] - ZERO_CELSIUS, label, cmap(0.85 * i / max(n - 1, 1)),
                  lw=1.1)
    ax.set_ylabel("Temperature [°C]")
    _finish(ax, view, "Temperatures through the wall (node 0: inside surface)", floor=1e-2,
            overview=overview)


def _rupture(ax, view: _View, overview: bool):
    """Rupture screening: the stress in the wall and the stress allowed at the metal's
    temperature (MPa), the margin between them, and the time the margin first reaches
    zero (the earliest time to rupture)."""
    r = view.result
    for v in view.rupture:
        colour = view.colour[v]
        stress = r[f"{v}.rupture.stress"] / 1e6
        allowed = r[f"{v}.rupture.allowed_stress"] / 1e6
        _line(ax, view, stress, f"{v}: stress in the wall", colour, lw=1.6)
        _line(ax, view, allowed, f"{v}: allowed at the metal temperature", colour, lw=1.6,
              ls=DASHES[1])
        _line(ax, view, allowed - stress, f"{v}: margin (allowed - stress)", colour, lw=0.9,
              ls=DASHES[2])
        when = r.rupture.get(v, {}).get("rupture_time_s")
        if when is not None:
            x = when / view.time_size
            ax.axvline(x, color=colour, lw=1.2, ls="-", alpha=0.6)
            ax.annotate(f"{v}: rupture at {_fmt_time(when)}", (x, 0.97),
                        xycoords=("data", "axes fraction"), fontsize=EVENT_PT + 1,
                        color=colour, ha="right", va="top", rotation=90)
    ax.axhline(0.0, color="0.4", lw=0.7)
    ax.set_ylabel("Stress [MPa]")
    _finish(ax, view, "Rupture screening: stress against the strength at temperature",
            floor=1e-3, overview=overview)


def _level(ax, view: _View, overview: bool):
    """Liquid level of the vessels that hold liquid, with each one's inside height (a
    vessel full to it is liquid-full); their liquid share of the volume [%] when one of
    them has no height (given by its volume)."""
    r = view.result
    names = r.names()
    heights = {v.name: v.geometry.height for v in r.network.vessels}
    levels = all(f"{v}.liquid_level" in names for v in view.liquid)
    for v in view.liquid:
        if levels:
            _line(ax, view, r[f"{v}.liquid_level"], v, view.colour[v], lw=1.6,
                  ls=view.dash[v])
            ax.axhline(heights[v], color=view.colour[v], lw=0.8, ls=":",
                       label=f"{v}: inside height (liquid-full)")
        else:
            _line(ax, view, 100.0 * r[f"{v}.liquid_fraction"], v, view.colour[v], lw=1.6,
                  ls=view.dash[v])
    if levels:
        ax.set_ylabel("Liquid level above the inside bottom [m]")
        ax.set_ylim(bottom=0.0)
        title = "Liquid level"
    else:
        ax.set_ylabel("Liquid share of the volume [%]")
        top = max(float(np.nanmax(r[f"{v}.liquid_fraction"])) for v in view.liquid)
        # a small share (condensate) is drawn on its own scale, not on 0-100 %
        ax.set_ylim(-2.0, 102.0) if top > 0.25 else ax.set_ylim(bottom=0.0)
        title = "Liquid share of each vessel's volume (100 %: liquid-full)"
    _finish(ax, view, title, floor=None, overview=overview)


def _phases(ax, view: _View, overview: bool):
    """A mixture's phases in each vessel that holds two: the vapour's share of the mass
    (solid) and the liquid's share of the volume (dashed), in per cent."""
    r = view.result
    for v in view.phases:
        _line(ax, view, 100.0 * r[f"{v}.vapour_quality"], f"{v}: vapour, % of the mass",
              view.colour[v], lw=1.6)
        _line(ax, view, 100.0 * r[f"{v}.liquid_fraction"], f"{v}: liquid, % of the volume",
              view.colour[v], lw=1.2, ls="--")
    ax.set_ylabel("Share [%]")
    ax.set_ylim(-2.0, 102.0)
    _finish(ax, view, "Phases: vapour share of the mass, liquid share of the volume",
            floor=None, overview=overview)


def _line(ax, view: _View, y, label, colour, lw, ls="-"):
    if view.empty:
        return
    marker = "o" if len(view.t) < 2 else None  # a single record shows as a dot
    ax.plot(view.t, y, label=label, color=colour, lw=lw, ls=ls, marker=marker, ms=4)


def _peak(values: np.ndarray) -> float:
    finite = np.abs(values[np.isfinite(values)])
    return float(finite.max()) if finite.size else 0.0


def _note(ax, text: str):
    ax.text(0.5, 0.5, text, transform=ax.transAxes, ha="center", va="center",
            fontsize=10, color="0.35")


def _finish(ax, view: _View, title: str, floor: float | None, overview: bool,
            event_labels: bool = False, legend_outside: bool = False):
    """Grid, y range, event lines, legend and title of a panel.

    floor  smallest y span shown [plot unit] (with at least 1e-3 of the largest
           value), so that a flat line does not show rounding noise as ticks;
           ``None``: the panel sets its own range
    """
    ax.grid(True, which="major", color="0.85", lw=0.6)
    ax.set_axisbelow(True)
    ax.ticklabel_format(axis="y", useOffset=False)
    size = _panel_size(ax, view, overview)
    obstacles = []
    if view.empty:
        ax.set_yticks([])
        _note(ax, "no recorded data")
    else:
        ax.set_xlim(view.t[0], view.t[-1] if view.t[-1] > view.t[0] else view.t[0] + 1.0)
        if floor is not None:
            least_span(ax, floor)
        obstacles = _events(ax, view, event_labels, size)
    if legend_outside:  # a low panel of fixed range: the legend beside it hides nothing
        if ax.get_legend_handles_labels()[0]:
            ax.legend(loc="center left", bbox_to_anchor=(1.005, 0.5), fontsize=LEGEND_PT,
                      framealpha=0.9)
    else:
        place_legend(ax, size, obstacles)
    # the y range is final here: the title is set last, fixed at the top where it can be
    ax.set_title(title, fontsize=10, loc="left", y=1.0 if title_fits_at_top(ax) else None)


#: a y axis whose range reaches this size [plot unit], or stays below the smaller one, may
#: be labelled with a power of ten above it (matplotlib's ``axes.formatter.limits``, -5 and
#: 6: an exponent when the largest tick is from 1e6 up or below 1e-4; the smaller bound
#: leaves room for ticks that stay inside the range)
EXPONENT_FROM = 1e6
EXPONENT_BELOW = 1e-3


def title_fits_at_top(ax) -> bool:
    """Whether nothing can be drawn over the panel ``ax`` that its title must clear, so
    that the title can be fixed at the top (``set_title(..., y=1.0)``), where matplotlib
    puts it in that case.

    Otherwise matplotlib searches, at every draw (and twice more for the layout), for tick
    labels set on top of the panel and for an offset or power-of-ten text over a y axis,
    its own or a secondary one's: about a tenth of the drawing time
    (benchmarks/bench_outputs.py). True when every y axis of the panel has a plain number
    format without offset and a range from :data:`EXPONENT_BELOW` to below
    :data:`EXPONENT_FROM` (or no ticks), and no x ticks or label are on top. The pixels are
    the same either way; only the search is saved. Call it once the y range is final."""
    from matplotlib.ticker import ScalarFormatter

    for axes in (ax, *ax.child_axes):
        if axes.xaxis.get_label_position() != "bottom" or any(
                params.get("top") or params.get("labeltop")
                for params in (axes.xaxis.get_tick_params(which="major"),
                               axes.xaxis.get_tick_params(which="minor"))):
            return False
        formatter = axes.yaxis.get_major_formatter()
        if not isinstance(formatter, ScalarFormatter) or formatter.get_useOffset():
            return False
        if not len(axes.yaxis.get_ticklocs()):
            continue  # no ticks (an empty panel): no labels, no exponent
        top = max(abs(float(v)) for v in axes.get_ylim())
        if not EXPONENT_BELOW <= top < EXPONENT_FROM:
            return False
    return True


def _panel_size(ax, view: _View, overview: bool) -> tuple[float, float]:
    """Estimated plotting area of a panel [in], for placing legends and event texts."""
    if overview and view.openings:
        spec = ax.get_subplotspec()
        wide = spec is not None and len(spec.colspan) > 1
        return PANEL_WITH_OPENINGS_IN[wide]
    return PANEL_IN[overview]


def _curves(ax) -> list:
    """The data lines of a panel (event lines and the like have no label)."""
    return [ln for ln in ax.get_lines() if not ln.get_label().startswith("_")]


def least_span(ax, floor: float):
    """Widen a panel's y range to at least ``floor`` (and 1e-3 of its largest value), so
    that round-off does not show as ticks."""
    parts = [np.asarray(ln.get_ydata(), dtype=float) for ln in _curves(ax)]
    values = np.concatenate(parts) if parts else np.zeros(0)
    values = values[np.isfinite(values)]
    if not len(values):
        return
    lo, hi = float(values.min()), float(values.max())
    least = max(floor, 1e-3 * max(abs(lo), abs(hi)))
    if hi - lo < least:
        mid = 0.5 * (lo + hi)
        ax.set_ylim(mid - 0.5 * least, mid + 0.5 * least)


def _events(ax, view: _View, labels: bool, size: tuple[float, float]) -> list:
    """Event times as thin dotted lines, with text beside them when there are few;
    returns the boxes the texts take (axes fractions x0, y0, x1, y1). The stop or
    failure that ends a run gets a line but no text: the subtitle says it, and a text
    at the right edge would run over the axis beside it."""
    span = view.t[-1] - view.t[0] if len(view.t) else 0.0
    if len(view.events) > MAX_EVENT_LINES:
        return []
    said = [(t, text) for t, text in view.events
            if not text.startswith(tuple(long for long, _ in EVENT_SHORT))]
    show = labels and len(said) <= MAX_EVENT_LABELS
    glyph = 0.56 * EVENT_PT / 72.0  # [in] average character width
    most = int(EVENT_LABEL_HEIGHT * size[1] / glyph)
    thick = 1.5 * EVENT_PT / 72.0 / size[0]  # text height across the panel [axes fraction]
    boxes = []
    last = -math.inf
    lo, hi = ax.get_xlim()
    for t, text in view.events:
        if not lo <= t <= hi:
            continue
        ax.axvline(t, color="0.4", lw=0.8, ls=":", zorder=1)
        if not show or (t, text) not in said or (span > 0 and t - last < EVENT_MIN_GAP * span):
            continue
        last = t
        text = _cut(text, most)
        at_right = span > 0 and t > view.t[0] + 0.5 * span
        # beside the line, on the side towards the middle, always inside the panel
        ax.annotate(text, (t, 0.98), xycoords=ax.get_xaxis_transform(),
                    xytext=(-2.0 if at_right else 2.0, 0.0), textcoords="offset points",
                    rotation=90, ha="right" if at_right else "left", va="top",
                    fontsize=EVENT_PT, color="0.2", zorder=4, annotation_clip=True,
                    bbox=dict(boxstyle="square,pad=0.1", fc="white", ec="none", alpha=0.6))
        x = (t - lo) / (hi - lo)
        height = len(text) * glyph / size[1]
        boxes.append((x - thick, 0.98 - height, x, 0.98) if at_right else
                     (x, 0.98 - height, x + thick, 0.98))
    return boxes


def place_legend(ax, size: tuple[float, float], obstacles: list):
    """A legend where it hides no curve and no event text.

    Tries the corners and edge middles in turn with the legend's size
    estimated from its text; if every place covers something, raises the top
    of the y range until the legend fits above the curves at the upper right
    or upper left (one that hides no event text, then the one that needs less).
    """
    handles, labels = ax.get_legend_handles_labels()
    if not handles:
        return
    columns = 1 if len(labels) <= LEGEND_ROWS else 2
    kw = dict(fontsize=LEGEND_PT, framealpha=0.9, ncols=columns)
    # legend size in axes fractions (text, handle, padding and frame)
    rows = math.ceil(len(labels) / columns)
    w = columns * (max(map(len, labels)) * 0.56 + 4.2) * LEGEND_PT / 72.0 / size[0]
    h = (rows * 1.42 + 1.2) * LEGEND_PT / 72.0 / size[1]
    m = 0.02
    places = {
        "upper right": (1 - m - w, 1 - m - h), "upper left": (m, 1 - m - h),
        "lower right": (1 - m - w, m), "lower left": (m, m),
        "center right": (1 - m - w, 0.5 - h / 2), "center left": (m, 0.5 - h / 2),
        "upper center": (0.5 - w / 2, 1 - m - h), "lower center": (0.5 - w / 2, m),
    }
    x, y = _outline(ax)
    for loc, (x0, y0) in places.items():
        box = (x0, y0, x0 + w, y0 + h)
        if not _hits_curves(x, y, box) and not _hits_boxes(obstacles, box):
            ax.legend(loc=loc, **kw)
            return
    lo, hi = ax.get_ylim()
    options = []
    for loc, x0 in (("upper right", 1 - m - w), ("upper left", m)):
        inside = (x >= x0 - m) & (x <= x0 + w + m)
        ymax = float(y[inside].max()) if inside.any() else 0.0
        top = lo + (hi - lo) * ymax / max(1.0 - 2 * m - h, 0.2)
        hides_text = _hits_boxes(obstacles, (x0, 1 - m - h, x0 + w, 1 - m))
        options.append((hides_text, top, loc))
    _, top, loc = min(options)
    ax.set_ylim(lo, max(hi, top))
    ax.legend(loc=loc, **kw)


def _outline(ax) -> tuple[np.ndarray, np.ndarray]:
    """Points along every curve of a panel, in axes fractions, close enough
    together that a legend box cannot fall between two of them."""
    (x0, x1), (y0, y1) = ax.get_xlim(), ax.get_ylim()
    xs, ys = [], []
    for ln in _curves(ax):
        x = (np.asarray(ln.get_xdata(), dtype=float) - x0) / (x1 - x0)
        y = (np.asarray(ln.get_ydata(), dtype=float) - y0) / (y1 - y0)
        ok = np.isfinite(x) & np.isfinite(y)
        x, y = x[ok], y[ok]
        if len(x) < 2:
            xs.append(x)
            ys.append(y)
            continue
        s = np.concatenate([[0.0], np.cumsum(np.hypot(np.diff(x), np.diff(y)))])
        at = np.linspace(0.0, s[-1], max(2, int(s[-1] / 0.004) + 1))
        xs.append(np.interp(at, s, x))
        ys.append(np.interp(at, s, y))
    if not xs:
        return np.zeros(0), np.zeros(0)
    return np.concatenate(xs), np.concatenate(ys)


def _hits_curves(x, y, box) -> bool:
    x0, y0, x1, y1 = box
    return bool(np.any((x >= x0) & (x <= x1) & (y >= y0) & (y <= y1)))


def _hits_boxes(boxes, box) -> bool:
    x0, y0, x1, y1 = box
    return any(b[0] <= x1 and b[2] >= x0 and b[1] <= y1 and b[3] >= y0 for b in boxes)


# ---------------------------------------------------------------- figures

def save(fig, path) -> None:
    """Write ``fig`` (made by :func:`figure`, at :data:`DPI`) as PNG to ``path`` (a file
    name, or a binary file object).

    One draw on the Agg canvas (layout and rendering) and the canvas's pixels written as
    they are by :func:`cvsim.png.png_bytes`: ``Figure.savefig`` would first draw once more
    without rendering to lay the figure out, and Pillow's encoder tries every filter on
    every row; together about a fifth of the time for the same pixels (checked pixel for
    pixel on every demo's plots; benchmarks/bench_outputs.py)."""
    from matplotlib import __version__ as mpl_version

    from . import __version__
    from .png import png_bytes
    canvas = fig.canvas
    canvas.draw()
    data = png_bytes(np.asarray(canvas.buffer_rgba()), dpi=fig.dpi,
                     text={"Software": f"cvsim {__version__} (Matplotlib {mpl_version})"})
    if hasattr(path, "write"):
        path.write(data)
    else:
        Path(path).write_bytes(data)


@contextlib.contextmanager
def _figure(size: tuple[float, float], view: _View):
    """A figure for a run (see :func:`figure`)."""
    with figure(size, view.result.network.title or "cvsim run", view.subtitle(),
                alarm=view.result.status == "failed") as fig:
        yield fig


@contextlib.contextmanager
def figure(size: tuple[float, float], title: str, subtitle: str, alarm: bool = False):
    """A figure on the Agg canvas with the header (title, subtitle in dark red
    when ``alarm``) and footer (caution, version) drawn and the space between
    them left to the panels.

    The figure is not cleared on leaving: that would rebuild every axis only to throw it
    away (about 3 % of the drawing time); the garbage collector takes it (drawing 60
    overview-sized figures in one process holds the memory at 157 MB)."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=size, dpi=DPI, layout="constrained")
    FigureCanvasAgg(fig)
    top, bottom = _frame(fig, title, subtitle, alarm)
    fig.get_layout_engine().set(rect=(0.0, bottom, 1.0, top - bottom))
    yield fig


def _frame(fig, title_text: str, subtitle: str, alarm: bool) -> tuple[float, float]:
    """Draw title, subtitle and footer; return the free band (top, bottom) as
    fractions of the figure height."""
    width, height = fig.get_size_inches()
    pad = 0.12 * 72  # [pt]
    to_frac = 1.0 / (72.0 * height)
    spacing = 1.25

    title = _wrap(title_text, width, TITLE_PT, bold=True, max_lines=TITLE_LINES)
    sub = _wrap(subtitle, width, SUBTITLE_PT, max_lines=SUBTITLE_LINES)
    y = 1.0 - pad * to_frac
    fig.text(0.5, y, "\n".join(title), ha="center", va="top", fontsize=TITLE_PT,
             fontweight="bold", linespacing=spacing)
    y -= len(title) * TITLE_PT * spacing * to_frac + 0.25 * pad * to_frac
    colour = "#A00000" if alarm else "0.15"
    fig.text(0.5, y, "\n".join(sub), ha="center", va="top", fontsize=SUBTITLE_PT,
             color=colour, linespacing=spacing)
    y -= len(sub) * SUBTITLE_PT * spacing * to_frac + pad * to_frac

    from . import __version__
    from .caution import CAUTION  # not .result, which loads the solver
    foot = _wrap(CAUTION, width, FOOTER_PT) + [f"cvsim {__version__}"]
    fig.text(0.012, pad * to_frac, "\n".join(foot), ha="left", va="bottom",
             fontsize=FOOTER_PT, color="0.3", linespacing=spacing)
    bottom = (pad + len(foot) * FOOTER_PT * spacing + 0.5 * pad) * to_frac
    return y, bottom


def _wrap(text: str, width_in: float, size_pt: float, bold: bool = False,
          max_lines: int | None = None) -> list[str]:
    """Lines of ``text`` that fit a figure ``width_in`` wide at ``size_pt``
    (average glyph of DejaVu Sans about 0.55 em, bold 0.62 em); at most
    ``max_lines``, the last one ending in an ellipsis when text is cut."""
    em = 0.62 if bold else 0.55
    chars = max(20, int(0.96 * width_in * 72.0 / (em * size_pt)))
    if max_lines is not None:
        text = text[:chars * (max_lines + 1)]  # a very long title: wrap no more than needed
    lines = textwrap.wrap(text, chars) or [""]
    if max_lines is not None and len(lines) > max_lines:
        lines = lines[:max_lines]
        lines[-1] = lines[-1][:chars - 1].rstrip() + "\u2026"
    return lines


__all__ = ["figure", "flow_unit", "least_span", "place_legend", "plot_names", "plot_run", "save",
           "temperature_label", "time_unit"]
