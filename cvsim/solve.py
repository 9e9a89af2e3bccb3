"""Integration of a model in time: segments, events, stops, recording.

The run is cut at every breakpoint (a schedule time, a table point) so that
no integration step straddles a jump. Inside a segment one of scipy's ODE
solvers (LSODA by default) is stepped by hand, which gives this module full
control of every accepted step:

* events (stop conditions, device switches) are located on the step's dense
  output by Brent's method, as ``solve_ivp`` does, and end the segment; at a
  switch the discrete state changes and a new segment starts at the event;
* a step that produced non-finite values (a trial state outside the equation
  of state's range: LSODA does not reject those by itself) is thrown away
  and retried from the last good state with a smaller first step; when that
  does not help the run ends with the reason and the last good time; so is a
  step on which scipy's solver itself raised (an implicit method factorising a
  Jacobian that holds NaN: "array must not contain infs or NaNs"), and the
  message names ``run.solver`` (:data:`SOLVER_ERRORS`);
* the histories hold every multiple of the recording interval (from the dense
  output), the start and end of every segment and every event, exactly; a
  finer history holds every accepted step (summaries take extremes from both).

A failed run is a result (status ``failed`` and a message), so that sweeps can
report it in a row and go on; the command line turns it into an error.

Two bounds keep a run from exhausting the machine: the recorded histories hold
at most :data:`MAX_RECORDED_POINTS` rows (a longer run is recorded at a coarser
interval, :func:`recording_interval`, and says so in its warnings), and a
wall-clock limit set with :func:`time_limit` (sweeps set one per case) ends a
run that takes longer with status ``failed`` and the reason.
"""
from __future__ import annotations

import contextlib
import contextvars
import math
import time as _time
from dataclasses import dataclass, field

import numpy as np
from scipy.integrate import BDF, DOP853, LSODA, RK23, RK45, Radau
from scipy.optimize import brentq

from .errors import CvsimError, StateError
from .model import Model

METHODS = {"LSODA": LSODA, "BDF": BDF, "Radau": Radau, "RK45": RK45, "RK23": RK23,
           "DOP853": DOP853}
IMPLICIT = {"LSODA", "BDF", "Radau"}

#: events closer than this to a segment's start [s] are taken as the switch
#: that started it and are not acted on again
_EVENT_AT_START = 1e-12

#: chattering guard: this many switches within a time span of CHATTER_SPAN
#: times the run's end time end the run with a message
CHATTER_COUNT = 50
CHATTER_SPAN = 1e-6
#: and no run handles more switches than this
MAX_SWITCHES = 20000
#: retries of a step that produced non-finite values, each with a first step
#: RETRY_SHRINK times smaller
MAX_RETRIES = 12
RETRY_SHRINK = 8.0
#: what scipy's solvers raise on values they cannot use (a NaN in a Jacobian, a singular
#: matrix: numpy's LinAlgError is a ValueError); cvsim's own errors are not among them
SOLVER_ERRORS = (ValueError, ArithmeticError)
#: most rows of the recorded histories (history.csv): a run whose end time over
#: its recording interval gives more is recorded at a coarser interval. 200 000
#: rows of a one-vessel run are about 60 MB of CSV and a few seconds of writing.
MAX_RECORDED_POINTS = 200_000

#: (wall-clock time [s, time.monotonic] at which the run in this thread gives up,
#: the limit [s]) or None
_DEADLINE: contextvars.ContextVar = contextvars.ContextVar("cvsim_deadline", default=None)


def recording_interval(end_time: float, record_every: float) -> tuple[float, str]:
    """(interval used [s], warning or ``""``): the requested interval, or the
    smallest 1-2-5 multiple of a power of ten that keeps the recorded points
    within :data:`MAX_RECORDED_POINTS` when ``end_time / record_every`` exceeds it.

    >>> recording_interval(1e9, 1.0)[0]
    5000.0
    >>> recording_interval(600.0, 0.5)
    (0.5, '')
    """
    if not (end_time / record_every > MAX_RECORDED_POINTS):
        return record_every, ""
    need = end_time / MAX_RECORDED_POINTS
    power = 10.0 ** math.floor(math.log10(need))
    used = next(f * power for f in (1.0, 2.0, 5.0, 10.0) if f * power >= need * (1 - 1e-12))
    return used, (f"the run would record {end_time / record_every:.3g} points (run.end "
                  f"{end_time:g} s / run.record_every {record_every:g} s), more than "
                  f"{MAX_RECORDED_POINTS}; recorded every {used:g} s instead. Set "
                  "run.record_every or a shorter run.end (with a stop condition) to choose")


@contextlib.contextmanager
def time_limit(seconds: float | None):
    """Runs integrated in this block (in this thread) end with status
    ``failed`` once they have taken ``seconds`` of wall-clock time (``None``:
    no limit)."""
    token = _DEADLINE.set(None if seconds is None else (_time.monotonic() + seconds, seconds))
    try:
        yield
    finally:
        _DEADLINE.reset(token)


class _TimeUp(Exception):
    def __init__(self, t, y):
        super().__init__("time limit")
        self.t, self.y = t, y


@dataclass
class RawRun:
    """What the integrator produced; :mod:`cvsim.result` turns it into a Result."""

    columns: list
    rows: list = field(default_factory=list)          # recorded rows (grid, segment ends, events)
    fine_rows: list = field(default_factory=list)     # every accepted step
    events: list = field(default_factory=list)        # (time [s], text)
    initial_discrete: dict = field(default_factory=dict)  # discrete states at the start
    switches: list = field(default_factory=list)      # (time [s], key, new value)
    status: str = "completed"                         # completed | stopped | failed
    message: str = ""
    y_final: np.ndarray | None = None
    y_initial: np.ndarray | None = None
    t_final: float = 0.0
    stats: dict = field(default_factory=dict)
    warnings: list = field(default_factory=list)      # sentences for the summary


class _Failure(Exception):
    def __init__(self, message, t, y):
        super().__init__(message)
        self.t, self.y = t, y


def integrate(model: Model, progress=None) -> RawRun:
    """Integrate ``model`` over its run settings; never raises for a run that
    fails part-way (the failure is in the returned status and message)."""
    settings = model.network.run
    raw = RawRun(columns=model.columns())
    wall0 = _time.perf_counter()
    evals0 = model.fluid.evaluations
    stats = {"segments": 0, "steps": 0, "rejected_retries": 0, "rhs_calls": 0,
             "jacobians": 0, "events": 0}
    raw.stats = stats
    t_end = settings.end_time
    record_every, note = recording_interval(t_end, settings.record_every)
    if note:
        raw.warnings.append(note)
    deadline, limit = _DEADLINE.get() or (None, None)
    try:
        y = model.y0()
        raw.y_initial = y.copy()
        discrete = model.initial_discrete(y)
        raw.initial_discrete = dict(discrete)
        raw.events += model.initial_events
        seg = model.segment(0.0, t_end, discrete)
        met = _met_at_start(seg, settings.stop, y)
    except StateError as exc:
        return _finish(raw, "failed", str(exc), None, 0.0, model, evals0, wall0)
    if met is not None:
        raw.rows.append(seg.observe(0.0, y))
        if met.at_start != "stop":  # not asked for: most likely written the wrong way
            msg = (f"the stop condition '{met.describe()}' is already met at the start, so "
                   "the run would end at t = 0; write it the other way round or change the "
                   "initial state (run.stop_when), or add 'if_met_at_start: stop' to the "
                   "condition to end the run there on purpose")
            return _finish(raw, "failed", msg, y, 0.0, model, evals0, wall0)
        msg = f"stop condition already met at the start: {met.describe()}"
        raw.events.append((0.0, msg))
        return _finish(raw, "stopped", msg, y, 0.0, model, evals0, wall0)

    scale = model.scales(y)
    atol = settings.atol_scale * scale
    breakpoints = [b for b in model.breakpoints() if b < t_end] + [t_end]
    schedule = [e for e in model.schedule() if e[0] <= t_end]
    switch_times: list[float] = []
    t = 0.0
    bi = 0
    while t < t_end:
        while schedule and schedule[0][0] <= t:
            raw.events.append(schedule.pop(0))
        while bi < len(breakpoints) - 1 and breakpoints[bi] <= t:
            bi += 1
        seg = model.segment(t, breakpoints[bi], discrete)
        seg.scale = scale
        stats["segments"] += 1
        try:
            raw.rows.append(seg.observe(t, y))
            t, y, hit = _integrate_segment(seg, settings, atol, y, raw, stats,
                                           record_every, deadline)
        except _TimeUp as up:
            stats["rhs_calls"] += seg.rhs_calls
            stats["jacobians"] += seg.jac_calls
            return _finish(raw, "failed", f"the run took longer than its time limit of "
                           f"{limit:.4g} s (wall clock) and was stopped at t = {up.t:.6g} s "
                           f"of {t_end:g} s; give it more time (sweeps: --case-time-limit) "
                           "or shorten run.end", up.y, up.t, model, evals0, wall0)
        except _Failure as f:
            stats["rhs_calls"] += seg.rhs_calls
            stats["jacobians"] += seg.jac_calls
            return _finish(raw, "failed", f"{f} {_last_good(seg, f.t, f.y)}", f.y, f.t, model,
                           evals0, wall0)
        except StateError as exc:  # observing a recorded point
            return _finish(raw, "failed", str(exc), y, t, model, evals0, wall0)
        except SOLVER_ERRORS as exc:  # scipy raised outside a step (starting, dense output)
            if isinstance(exc, CvsimError):
                raise
            stats["rhs_calls"] += seg.rhs_calls
            stats["jacobians"] += seg.jac_calls
            return _finish(raw, "failed", f"the solver could not proceed past t = {t:.6g} s: "
                           f"{_solver_raised(settings, exc)} {_last_good(seg, t, y)}", y, t,
                           model, evals0, wall0)
        stats["rhs_calls"] += seg.rhs_calls
        stats["jacobians"] += seg.jac_calls
        if progress is not None:
            progress(t, t_end)
        if hit is None:
            continue
        stats["events"] += 1
        kind, what, text = hit
        if kind == "stop":
            msg = f"stop condition met: {text}"
            raw.events.append((t, msg))
            return _finish(raw, "stopped", msg, y, t, model, evals0, wall0)
        value = what.new_value
        if callable(value):  # decided at the event from the state there (a sequence's step)
            try:
                value, note = value(t, y, seg)
            except StateError as exc:
                return _finish(raw, "failed", str(exc), y, t, model, evals0, wall0)
            text += note
        discrete = dict(discrete)
        discrete[what.key] = value
        raw.switches.append((t, what.key, value))
        raw.events.append((t, text))
        switch_times.append(t)
        span = CHATTER_SPAN * max(t_end, 1.0)
        if len(switch_times) >= CHATTER_COUNT and t - switch_times[-CHATTER_COUNT] <= span:
            return _finish(raw, "failed", f"{CHATTER_COUNT} switches within {span:.3g} s at "
                           f"t = {t:.6g} s ({text}): the device chatters. Give its switch a "
                           "deadband (e.g. restart_above for a cut-off, a larger blowdown "
                           "for a relief valve).", y, t, model, evals0, wall0)
        if len(switch_times) > MAX_SWITCHES:
            return _finish(raw, "failed", f"more than {MAX_SWITCHES} switches by t = {t:.6g} s "
                           f"(last: {text}); the run is cycling too often to integrate. Widen "
                           "the device's deadband or shorten the run.", y, t, model, evals0,
                           wall0)
    return _finish(raw, "completed", f"end time reached ({t_end:g} s)", y, t, model, evals0,
                   wall0)


def _new_solver(seg, settings, atol, t, y, first_step):
    cls = METHODS[settings.method]
    opts = dict(rtol=settings.rtol, atol=atol, max_step=settings.max_step)
    if settings.method in IMPLICIT:
        opts["jac"] = seg.jac
    if first_step is not None:
        opts["first_step"] = min(first_step, seg.t1 - t)
    return cls(seg.rhs, t, y, seg.t1, **opts)


def _integrate_segment(seg, settings, atol, y, raw, stats, dt_rec, deadline=None):
    """Step one segment; returns (t, y, event action or None). Raises
    :class:`_TimeUp` (at the last accepted step) past the ``deadline``."""
    t = seg.t0
    events = seg.events(settings.stop)
    g = [ev(t, y) for ev in events]
    solver = _new_solver(seg, settings, atol, t, y, None)
    retries = 0
    h_last = None
    while True:
        if deadline is not None and _time.monotonic() > deadline:
            raise _TimeUp(t, y)
        t_old, y_old = t, y
        seg.last_error = None
        raised = None
        try:
            msg = solver.step()
        except SOLVER_ERRORS as exc:  # scipy gave up on this step's values
            if isinstance(exc, CvsimError):
                raise
            raised, msg = exc, None
        bad = (raised is not None or solver.status == "failed"
               or not np.all(np.isfinite(solver.y)))
        if bad:
            why = str(seg.last_error) if seg.last_error is not None else (
                msg or "non-finite values")
            if raised is not None:  # the state error behind it, if any, and what scipy said
                why = (f"{seg.last_error}; " if seg.last_error is not None else "") + \
                    _solver_raised(settings, raised)
            retries += 1
            stats["rejected_retries"] += 1
            if retries > MAX_RETRIES:
                raise _Failure(f"the solver could not proceed past t = {t_old:.6g} s: {why}",
                               t_old, y_old)
            h_try = (h_last or max(seg.t1 - t_old, 1e-9) * 1e-3) / RETRY_SHRINK ** retries
            if h_try < 1e-12 * max(abs(t_old), 1.0):
                raise _Failure(f"the solver could not proceed past t = {t_old:.6g} s: {why}",
                               t_old, y_old)
            solver = _new_solver(seg, settings, atol, t_old, y_old, h_try)
            continue
        retries = 0
        t, y = solver.t, solver.y.copy()
        h_last = t - t_old
        stats["steps"] += 1
        dense = None
        hit = None
        if events:
            g_new = [ev(t, y) for ev in events]
            for k, ev in enumerate(events):
                if _crossed(g[k], g_new[k], ev.direction):
                    dense = dense or solver.dense_output()
                    te = _locate(ev, dense, t_old, t)
                    if te - seg.t0 > _EVENT_AT_START and (hit is None or te < hit[0]):
                        hit = (te, k)
            g = g_new
        t_stop = hit[0] if hit is not None else t
        if dense is None and _grid_between(t_old, t_stop, dt_rec):
            dense = solver.dense_output()
        for tk in _grid_between(t_old, t_stop, dt_rec):
            raw.rows.append(seg.observe(tk, dense(tk)))
        if hit is not None:
            y_stop = dense(t_stop)
            raw.rows.append(seg.observe(t_stop, y_stop))
            return t_stop, y_stop, events[hit[1]].action
        raw.fine_rows.append(seg.observe(t, y))
        if solver.status == "finished":
            raw.rows.append(seg.observe(t, y))
            return t, y, None


def _solver_raised(settings, exc: BaseException) -> str:
    """Words for an error scipy's solver raised, naming the scenario keys that choose it."""
    other = "LSODA (the default)" if settings.method != "LSODA" else "BDF or Radau"
    return (f"scipy's {settings.method} solver stopped with {type(exc).__name__}: {exc} "
            f"(run.solver.method {settings.method}; try run.solver.method {other}, or "
            "other run.solver tolerances).")


def _grid_between(t0, t1, dt):
    """Multiples of dt strictly between t0 and t1."""
    n0 = math.floor(t0 / dt + 1e-9) + 1
    n1 = math.ceil(t1 / dt - 1e-9) - 1
    return [n * dt for n in range(n0, n1 + 1) if t0 < n * dt < t1]


def _crossed(g0, g1, direction) -> bool:
    """A zero crossing in the watched direction (as scipy's solve_ivp decides)."""
    if not (g0 == g0 and g1 == g1):
        return False
    up = g0 <= 0.0 <= g1 and g0 != g1
    down = g0 >= 0.0 >= g1 and g0 != g1
    return (up and direction > 0) or (down and direction < 0) or (
        (up or down) and direction == 0)


def _locate(ev, dense, t0, t1) -> float:
    """Time of the zero of an event function inside a step, on the dense output."""
    f0 = ev(t0, dense(t0))
    f1 = ev(t1, dense(t1))
    if f0 == 0.0:
        return t0
    if f1 == 0.0 or f0 * f1 > 0.0:
        return t1
    return brentq(lambda tt: ev(tt, dense(tt)), t0, t1, xtol=4 * np.finfo(float).eps,
                  rtol=4 * np.finfo(float).eps)


def _met_at_start(seg, conditions, y):
    for cond in conditions:
        i = seg.model.node_index[cond.node]
        st = seg.states(0.0, y).states[i]
        value = (y[2 * i] if cond.quantity == "mass" else
                 st.p if cond.quantity == "pressure" else st.T)
        if (cond.direction == "below" and value <= cond.value) or (
                cond.direction == "above" and value >= cond.value):
            return cond
    return None


def _last_good(seg, t, y) -> str:
    """The vessels' states at the last good point, in words, for a failure message."""
    try:
        states = seg.states(t, y).states
    except StateError:
        return ""
    parts = []
    for v in seg.model.vessels:
        st = states[v.index]
        text = (f"vessel '{v.name}' {st.p / 1e5:.6g} bar a, {st.T - 273.15:.4g} degC, "
                f"{st.rho:.5g} kg/m3, {st.phase}")
        if st.two_phase:
            text += (f" (vapour quality {st.quality:.4g}, liquid {100 * st.liquid_fraction:.3g} "
                     "% of the volume)")
        parts.append(text)
    return f"Last good state at t = {t:.6g} s: " + "; ".join(parts) + "."


def _finish(raw, status, message, y, t, model, evals0, wall0):
    raw.status = status
    raw.message = message
    raw.y_final = None if y is None else np.asarray(y, dtype=float)
    raw.t_final = float(t)
    if status == "failed":
        raw.events.append((float(t), "run failed: " + message))
    raw.stats["property_evaluations"] = model.fluid.evaluations - evals0
    raw.stats["wall_time_s"] = _time.perf_counter() - wall0
    return raw
