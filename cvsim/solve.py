"""Integration of a model in time: segments, events, stops, recording.

The run is cut at every breakpoint (a schedule time, a table point) so that
no integration step straddles a jump. Inside a segment, scipy's ``solve_ivp``
integrates with terminal events for the stop conditions and for the devices'
discrete switches; at a switch the discrete state changes and a new segment
starts at the event time, from the state found there.

Recording: the histories hold the state at every multiple of the recording
interval (from the solver's dense output), at the start and end of every
segment and at every event, exactly. A second, finer history holds every
accepted solver step; summaries take extremes from both.

A failed run is a result (status ``failed`` and a message), so that sweeps can
report it in a row and go on; the command line turns it into an error.
"""
from __future__ import annotations

import math
import time as _time
from dataclasses import dataclass, field

import numpy as np
from scipy.integrate import solve_ivp

from .errors import StateError
from .model import Model

#: events closer than this to a segment's start [s] are taken as the switch
#: that started it and are not acted on again
_EVENT_AT_START = 1e-12

#: chattering guard: this many switches within a time span of CHATTER_SPAN
#: times the run's end time end the run with a message
CHATTER_COUNT = 50
CHATTER_SPAN = 1e-6
#: and no run handles more switches than this
MAX_SWITCHES = 20000


@dataclass
class RawRun:
    """What the integrator produced; :mod:`cvsim.result` turns it into a Result."""

    columns: list
    rows: list = field(default_factory=list)          # recorded rows (grid, segment ends, events)
    fine_rows: list = field(default_factory=list)     # every accepted step
    events: list = field(default_factory=list)        # (time [s], text)
    status: str = "completed"                         # completed | stopped | failed
    message: str = ""
    y_final: np.ndarray | None = None
    y_initial: np.ndarray | None = None
    t_final: float = 0.0
    stats: dict = field(default_factory=dict)


def integrate(model: Model, progress=None) -> RawRun:
    """Integrate ``model`` over its run settings; never raises for a run that
    fails part-way (the failure is in the returned status and message)."""
    settings = model.network.run
    raw = RawRun(columns=model.columns())
    wall0 = _time.perf_counter()
    evals0 = model.fluid.evaluations
    stats = {"segments": 0, "steps": 0, "rhs_calls": 0, "jacobians": 0, "events": 0}
    t = 0.0
    t_end = settings.end_time
    try:
        y = model.y0()
    except StateError as exc:
        raw.status, raw.message = "failed", str(exc)
        raw.stats = stats
        return raw
    raw.y_initial = y.copy()
    scale = model.scales(y)
    atol = settings.atol_scale * scale
    breakpoints = [b for b in model.breakpoints() if b < t_end] + [t_end]
    try:
        discrete = model.initial_discrete(y)
    except StateError as exc:
        raw.status, raw.message = "failed", str(exc)
        raw.stats = stats
        return raw
    dt_rec = settings.record_every

    # a stop condition already met at the start ends the run at once
    seg = model.segment(0.0, breakpoints[0], discrete)
    met = _met_at_start(seg, settings.stop, y)
    if met is not None:
        raw.rows.append(seg.observe(0.0, y))
        raw.status = "stopped"
        raw.message = f"stop condition already met at the start: {met.describe()}"
        raw.events.append((0.0, raw.message))
        raw.y_final, raw.t_final = y, 0.0
        raw.stats = stats
        return raw

    schedule = [e for e in model.schedule() if e[0] <= t_end]
    switch_times: list[float] = []
    bi = 0
    while t < t_end:
        while schedule and schedule[0][0] <= t:
            raw.events.append(schedule.pop(0))
        while bi < len(breakpoints) - 1 and breakpoints[bi] <= t:
            bi += 1
        t1 = breakpoints[bi]
        seg = model.segment(t, t1, discrete)
        seg.scale = scale
        events = seg.events(settings.stop)
        stats["segments"] += 1
        try:
            raw.rows.append(seg.observe(t, y))
        except StateError as exc:
            return _fail(raw, stats, str(exc), y, t, model, evals0, wall0)
        sol = solve_ivp(seg.rhs, (t, t1), y, method=settings.method, rtol=settings.rtol,
                        atol=atol, jac=seg.jac if settings.method in ("LSODA", "BDF", "Radau")
                        else None, events=events or None, dense_output=True,
                        max_step=settings.max_step)
        stats["rhs_calls"] += seg.rhs_calls
        stats["jacobians"] += seg.jac_calls
        stats["steps"] += max(len(sol.t) - 1, 0)
        if sol.status == -1 or not np.all(np.isfinite(sol.y[:, -1])):
            why = str(seg.last_error) if seg.last_error is not None else sol.message
            return _fail(raw, stats, f"the solver could not proceed past t = {sol.t[-1]:.6g} s: "
                         f"{why}", sol.y[:, -1], sol.t[-1], model, evals0, wall0)

        # earliest event that is not the one this segment started with
        hit = None
        if sol.status == 1:
            for k, te in enumerate(sol.t_events):
                for j, tk in enumerate(te):
                    if tk - t > _EVENT_AT_START and (hit is None or tk < hit[0]):
                        hit = (tk, sol.y_events[k][j], events[k].action)
        t_stop = hit[0] if hit is not None else sol.t[-1]

        try:
            for tk, yk in zip(sol.t[1:], sol.y.T[1:]):
                if tk <= t_stop:
                    raw.fine_rows.append(seg.observe(tk, yk))
            n0 = math.floor(t / dt_rec + 1e-9) + 1
            for n in range(n0, math.floor(t_stop / dt_rec * (1 + 1e-12)) + 1):
                tk = n * dt_rec
                if t < tk < t_stop:
                    raw.rows.append(seg.observe(tk, sol.sol(tk)))
            y_stop = hit[1] if hit is not None else sol.y[:, -1]
            raw.rows.append(seg.observe(t_stop, y_stop))
        except StateError as exc:
            return _fail(raw, stats, str(exc), sol.y[:, -1], sol.t[-1], model, evals0, wall0)

        t, y = t_stop, np.array(y_stop, dtype=float)
        if progress is not None:
            progress(t, t_end)
        if hit is None:
            continue
        stats["events"] += 1
        kind, what, text = hit[2]
        if kind == "stop":
            raw.status = "stopped"
            raw.message = f"stop condition met: {text}"
            raw.events.append((t, raw.message))
            break
        discrete = dict(discrete)
        discrete[what.key] = what.new_value
        raw.events.append((t, text))
        switch_times.append(t)
        if len(switch_times) >= CHATTER_COUNT and (
                t - switch_times[-CHATTER_COUNT] <= CHATTER_SPAN * max(t_end, 1.0)):
            return _fail(raw, stats, f"{CHATTER_COUNT} switches within "
                         f"{CHATTER_SPAN * max(t_end, 1.0):.3g} s at t = {t:.6g} s ({text}): "
                         "the device chatters. Give its switch a deadband (e.g. "
                         "restart_above for a cut-off, a larger blowdown for a relief valve).",
                         y, t, model, evals0, wall0)
        if len(switch_times) > MAX_SWITCHES:
            return _fail(raw, stats, f"more than {MAX_SWITCHES} switches by t = {t:.6g} s "
                         f"(last: {text}); the run is cycling too often to integrate. Widen "
                         "the device's deadband or shorten the run.", y, t, model, evals0,
                         wall0)
    else:
        raw.message = f"end time reached ({t_end:g} s)"

    raw.y_final, raw.t_final = y, t
    stats["property_evaluations"] = model.fluid.evaluations - evals0
    stats["wall_time_s"] = _time.perf_counter() - wall0
    raw.stats = stats
    return raw


def _met_at_start(seg, conditions, y):
    for cond in conditions:
        st = seg.states(0.0, y).states[seg.model.node_index[cond.node]]
        vi = seg.model.node_index[cond.node]
        value = (y[2 * vi] if cond.quantity == "mass" else
                 st.p if cond.quantity == "pressure" else st.T)
        if (cond.direction == "below" and value <= cond.value) or (
                cond.direction == "above" and value >= cond.value):
            return cond
    return None


def _fail(raw, stats, message, y, t, model, evals0, wall0):
    raw.status = "failed"
    raw.message = message
    raw.y_final, raw.t_final = np.asarray(y, dtype=float), float(t)
    raw.events.append((float(t), "run failed: " + message))
    stats["property_evaluations"] = model.fluid.evaluations - evals0
    stats["wall_time_s"] = _time.perf_counter() - wall0
    raw.stats = stats
    return raw
