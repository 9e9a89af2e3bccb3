"""Opening schedules of moving devices: tables in time, stroke ramps, their breakpoints.

An opening is a :class:`~cvsim.signals.Signal` of the valve travel, 0 (shut) to
1 (fully open), piecewise linear in time. A schedule written as "opens at, closes
at, stroke time" becomes such a table of straight ramps (:func:`stroke_table`).
Every table point is a solver breakpoint; :func:`level_crossings` adds the
times at which the travel passes a kink of the valve's characteristic, so that
no integration step straddles a jump in slope either.
"""
from __future__ import annotations

from ..signals import Constant, Signal, Table


def stroke_table(opens_at: float | None, closes_at: float | None, stroke_time: float,
                 open_position: float = 1.0) -> Table:
    """Travel table of a valve that opens and/or closes at stated times with a linear stroke.

    Parameters
    ----------
    opens_at : [s] time the valve starts to open; ``None``: open from the start
    closes_at : [s] time it starts to close; ``None``: it stays open
    stroke_time : [s] time for a full stroke, shut to ``open_position`` (0: instant)
    open_position : [-] travel when open, 0 < open_position <= 1

    The valve is shut before ``opens_at`` and after ``closes_at + stroke_time``.
    ``closes_at`` must not come before ``opens_at + stroke_time`` (checked by the
    scenario reader). At least one of the two times must be given.

    >>> stroke_table(10.0, None, 30.0).times, stroke_table(10.0, None, 30.0).values
    ((10.0, 40.0), (0.0, 1.0))
    """
    if opens_at is None and closes_at is None:
        raise ValueError("a stroke schedule needs opens_at or closes_at")
    times: list[float] = []
    values: list[float] = []
    if opens_at is not None:
        times += [opens_at, opens_at + stroke_time]
        values += [0.0, open_position]
    if closes_at is not None:
        times += [closes_at, closes_at + stroke_time]
        values += [open_position, 0.0]
    # merge a repeated point (closing right when fully open)
    pts = []
    for t, v in zip(times, values):
        if pts and pts[-1] == (t, v):
            continue
        pts.append((t, v))
    return Table(tuple(p[0] for p in pts), tuple(p[1] for p in pts))


def level_crossings(signal: Signal, levels: tuple[float, ...]) -> tuple[float, ...]:
    """Times [s] where a piecewise-linear signal passes one of ``levels`` strictly
    inside one of its linear pieces (table points are breakpoints already)."""
    if isinstance(signal, Constant) or not levels:
        return ()
    out = []
    ts, vs = signal.times, signal.values
    for (t0, v0), (t1, v1) in zip(zip(ts, vs), zip(ts[1:], vs[1:])):
        if t1 <= t0 or v0 == v1:
            continue
        lo, hi = min(v0, v1), max(v0, v1)
        for level in levels:
            if lo < level < hi:
                out.append(t0 + (level - v0) / (v1 - v0) * (t1 - t0))
    return tuple(sorted(out))


def schedule_texts(signal: Signal) -> list[tuple[float, str]]:
    """(time [s], text) of each change of an opening table, for the event log."""
    if isinstance(signal, Constant):
        return []
    out = []
    ts, vs = signal.times, signal.values
    for (t0, v0), (t1, v1) in zip(zip(ts, vs), zip(ts[1:], vs[1:])):
        if v0 == v1:
            continue
        if t1 == t0:
            out.append((t0, f"opening steps from {_pc(v0)} to {_pc(v1)}"))
        else:
            out.append((t0, f"opening moves from {_pc(v0)} to {_pc(v1)} over {t1 - t0:.4g} s"))
    return out


def _pc(v: float) -> str:
    return f"{100.0 * v:.4g} %"


def clip01(v: float) -> float:
    """``v`` limited to [0, 1] (a NaN becomes 0)."""
    if not v > 0.0:
        return 0.0
    return 1.0 if v > 1.0 else v


__all__ = ["clip01", "level_crossings", "schedule_texts", "stroke_table"]
