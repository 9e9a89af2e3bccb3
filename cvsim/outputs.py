"""Files of a run: CSV histories, summary (text and JSON), plots, input echo.

Everything is written into a temporary folder beside the requested one and
moved into place only when complete, so a failed run never leaves files that
look finished; how folders are claimed, locked and replaced is in
:mod:`cvsim.outfolder`. Every file carries the caution and the provenance (cvsim and
CoolProp versions, the scenario file's hash).
"""
from __future__ import annotations

import csv
import json
import math
import os
from pathlib import Path

from .contents import summary_lines
from .display import (RunUnits, bar, degc, display, jsonable, limit_value, margin,
                      run_units)
from .outfolder import MARKER, atomic_folder, claim  # noqa: F401  (re-exported)
from .result import CAUTION, Result

def write_csv(result: Result, path: Path, fine: bool = False, decimal_comma: bool = False,
              units: RunUnits | None = None) -> Path:
    """Histories as CSV in engineering units (bar a, degC, kg, kJ/kg) with times and
    mass flows in the run's units (:func:`cvsim.display.run_units`, as the plots and
    the summary show them).

    The first lines start with ``#``: title, provenance, caution (pandas:
    ``read_csv(path, comment="#")``). Columns are ``<node>.<quantity> [unit]``; the
    first is always ``time [s]``, followed by the time in the run's unit when that
    is minutes or hours. With ``decimal_comma``, fields are separated by ``;`` and
    numbers written with a decimal comma, as spreadsheets expect in locales that
    write 1,5 (pandas: ``read_csv(path, comment="#", sep=";", decimal=",")``).
    """
    rows = result._all() if fine else result.data
    units = units or run_units(result)
    head = []
    convs = []
    for name, unit, kind in result.columns:
        if unit == "kg/s":
            shown, conv = units.flow, (lambda v, k=units.flow_size: v / k)
        else:
            shown, conv = display(unit)
        head.append(f"{name} [{shown}]")
        convs.append(conv)
        if name == "time" and units.time != "s":
            head.append(f"time [{units.time}]")
            convs.append(lambda v, k=units.time_size: v / k)
    index = [i for i, (name, _, _) in enumerate(result.columns)
             for _ in range(2 if name == "time" and units.time != "s" else 1)]
    fmt = _fmt_comma if decimal_comma else _fmt
    with open(path, "w", newline="", encoding="utf-8") as fh:
        for line in _header_lines(result):
            fh.write(f"# {line}\n")
        if decimal_comma:
            fh.write("# fields separated by ';', decimal comma\n")
        w = csv.writer(fh, delimiter=";" if decimal_comma else ",")
        w.writerow(head)
        for r in rows:
            w.writerow([fmt(c(r[i])) for c, i in zip(convs, index)])
    return path


def _fmt(v: float) -> str:
    if v != v:
        return ""
    return f"{v:.10g}"


def _fmt_comma(v: float) -> str:
    return _fmt(v).replace(".", ",")


def _header_lines(result: Result) -> list[str]:
    return header_lines(result.network.title, result.provenance,
                        f"status: {result.status} - {result.message}",
                        result.network.atmosphere)


def header_lines(title: str, provenance: dict, status: str, atmosphere: float) -> list[str]:
    """The ``#`` lines that open every CSV file: title, versions and scenario hash,
    status, gauge reference and the caution."""
    p = provenance
    return [title,
            f"cvsim {p.get('cvsim', '?')}, CoolProp {p.get('coolprop', '?')}, "
            + (f"thermopack {p['thermopack']}, " if "thermopack" in p else "")
            + f"scenario {p.get('scenario', '?')} sha256 {p.get('scenario_sha256', '?')[:16]}",
            status,
            "pressures absolute (bar a); gauge = absolute - "
            f"{atmosphere / 1e5:.5g} bar (the scenario's atmosphere)",
            CAUTION]


def write_summary_json(result: Result, path: Path) -> Path:
    with open(path, "w", encoding="utf-8") as fh:
        json.dump(jsonable(result.summary()), fh, indent=2)
        fh.write("\n")
    return path


#: the text summary lists at most this many events (the first ones and the last EVENTS_TAIL)
EVENTS_SHOWN = 40
EVENTS_TAIL = 10


def summary_text(result: Result) -> str:
    """The summary as text for the screen and for summary.txt."""
    s = result.summary()
    atm = result.network.atmosphere
    units = run_units(result)
    _t = units.t
    L = [f"{s['title']}", "=" * min(len(s['title']), 78),
         f"Status: {s['status']} - {s['message']}",
         f"Simulated time: {_t(s['end_time_s'])}", ""]
    if s.get("warnings"):
        L.append("Warnings:")
        L += [f"  ! {w}" for w in s["warnings"]]
        L.append("")
    for name, v in s["vessels"].items():
        L.append(f"Vessel '{name}':")
        L.append(f"  pressure    max {bar(v['max_pressure_Pa'], atm)} at {_t(v['max_pressure_time_s'])};"
                 f" min {bar(v['min_pressure_Pa'], atm)} at {_t(v['min_pressure_time_s'])}")
        L.append(f"  temperature max {degc(v['max_temperature_K'])} at "
                 f"{_t(v['max_temperature_time_s'])}; min {degc(v['min_temperature_K'])} at "
                 f"{_t(v['min_temperature_time_s'])}")
        if "min_wall_temperature_K" in v:
            L.append(f"  wall temp.  max {degc(v['max_wall_temperature_K'])} at "
                     f"{_t(v['max_wall_temperature_time_s'])} ({v['max_wall_temperature_where']});"
                     f" min {degc(v['min_wall_temperature_K'])} at "
                     f"{_t(v['min_wall_temperature_time_s'])} ({v['min_wall_temperature_where']})")
        L.append(f"  mass        {v['initial_mass_kg']:.5g} kg -> {v['final_mass_kg']:.5g} kg")
        L.append(f"  final state {bar(v['final_pressure_Pa'], atm)}, "
                 f"{degc(v['final_temperature_K'])}")
        if "two_phase_from_s" in v:
            L.append(f"  two phases present from {_t(v['two_phase_from_s'])} "
                     f"(lowest vapour quality {v['min_vapour_quality']:.4f})")
        if "final_mole_fractions" in v:
            L.append("  composition mole fractions, start -> end: " + ", ".join(
                f"{c} {v['initial_mole_fractions'][c]:.4g} -> {z:.4g}"
                for c, z in v["final_mole_fractions"].items()
                if z > 0.0 or v["initial_mole_fractions"][c] > 0.0))
        L += summary_lines(v, _t)
    if s["targets"]:
        L.append("")
        L.append("Targets (stop conditions):")
        for tg in s["targets"]:
            when = _t(tg["time_s"]) if tg["time_s"] is not None else "not reached"
            L.append(f"  {tg['condition']}: {when}")
    if s["links"]:
        L.append("")
        L.append("Links (flow positive from 'from' to 'to'):")
        for name, k in s["links"].items():
            L.append(f"  {name} ({k['from']} -> {k['to']}): {k['mass_passed_kg']:.5g} kg passed; "
                     f"peak {units.flow_text(k['max_mass_flow_kg_s'])} at {_t(k['max_mass_flow_time_s'])}")
            if abs(k["energy_added_by_device_J"]) > 0:
                L.append(f"    energy added by the device: {k['energy_added_by_device_J'] / 1e3:.5g} kJ")
            L += [f"    {note}" for note in k.get("notes", [])]
    if s["heat"]:
        L.append("")
        L.append("Heat into the gas:")
        for name, h in s["heat"].items():
            line = f"  {name}: {h['heat_into_gas_J'] / 1e3:.5g} kJ"
            if "heat_from_outside_J" in h:
                line += (f" (wall: {h['heat_from_outside_J'] / 1e3:.5g} kJ from outside, "
                         f"its energy changed by {h['energy_change_J'] / 1e3:.5g} kJ)")
            L.append(line)
    if s["events"]:
        L.append("")
        L.append("Events:")
        events = s["events"]
        if len(events) > EVENTS_SHOWN:  # a cycling valve: the first and the last ones
            head, tail = events[:EVENTS_SHOWN - EVENTS_TAIL], events[-EVENTS_TAIL:]
            hidden = len(events) - len(head) - len(tail)
            events = head + [{"time_s": math.nan,
                              "event": f"... {hidden} more (all in summary.json) ..."}] + tail
        for e in events:
            when = f"{_t(e['time_s'])}: " if math.isfinite(e["time_s"]) else ""
            L.append(f"  {when}{e['event']}")
    if result.limits:
        L.append("")
        L.append(limits_text(result))
    if result.checks:
        L.append("")
        n_bad = len(result.checks_failed)
        L.append(f"Self-checks ({len(result.checks)}, "
                 + (f"{n_bad} FAILED - do not use these results" if n_bad else "all passed")
                 + "): recomputed from the recorded histories")
        L += [f"  {c.text()}" for c in result.checks]
    b = s["balance"]
    if b:
        L.append("")
        L.append(f"Bookkeeping of the whole run (integrator round-off only, not a model check): "
                 f"mass {b['mass_closure_relative']:.2e}, energy "
                 f"{b['energy_closure_relative']:.2e} (relative)")
    st = s["solver"]
    if st:
        L.append(f"Solver: {st.get('steps', 0)} steps, {st.get('rhs_calls', 0)} right-hand-side "
                 f"calls, {st.get('events', 0)} events, {st.get('wall_time_s', 0):.3g} s")
    L.append("")
    L.append("Assumptions:")
    L += [f"  - {a}" for a in s["assumptions"]]
    L.append("")
    L.append("CAUTION: " + CAUTION)
    return "\n".join(L) + "\n"



def limits_text(result: Result) -> str:
    """The design-limit table of a run, for the screen and summary.txt."""
    atm = result.network.atmosphere
    units = run_units(result)
    _t = units.t
    crossed = result.limits_crossed
    counted = result.limits_counted
    info = len(result.limits) - len(counted)
    L = [f"Design limits: {len(counted) - len(crossed)} met, {len(crossed)} CROSSED"
         + (f" ({info} more shown for information)" if info else "")]
    for c in result.limits:
        state = "info   " if c.informative else ("met    " if c.met else "CROSSED")
        when = f" at {_t(c.time)}" if c.unit != "s" and c.time == c.time else ""
        L.append(f"  [{state}] {c.vessel}: {c.name}")
        L.append(f"            limit {limit_value(c.limit, c.unit, atm, _t)}, reached "
                 f"{limit_value(c.actual, c.unit, atm, _t)}{when}, margin {margin(c.margin, c.unit, units)}")
        L.append(f"            practice: {c.practice}" + (f"; {c.note}" if c.note else ""))
    return "\n".join(L)


def write_run_outputs(result: Result, out_dir: Path, plots: bool = True,
                      echo: list | None = None, report: bool = False,
                      scenario=None, extra_files: dict | None = None, relief: dict | None = None,
                      changes=(), decimal_comma: bool = False, painters=None) -> list[Path]:
    """Write history.csv, steps.csv, summary.txt, summary.json, inputs.txt and
    plots into ``out_dir``, atomically: all of them or none.

    With ``report``, also report.html, the calculation report
    (:mod:`cvsim.report`) of ``result`` and its ``scenario`` (with ``relief``, the
    relief sizing it confirms, as plain data). ``changes`` are values the command
    changed after reading the scenario (:class:`cvsim.changes.Change`): inputs.txt and
    the report show them as simulated and marked as changed. ``extra_files`` maps
    further file names to their text (written in the same atomic step).
    ``decimal_comma``: CSV files separated by ``;`` with decimal commas. ``painters``:
    helper processes that draw the plots (:class:`cvsim.painters.Painters`)."""
    out_dir = Path(out_dir)
    with atomic_folder(out_dir) as tmp:
        write_run_files(result, tmp, plots=plots, echo=echo, report=report,
                        scenario=scenario, extra_files=extra_files, relief=relief,
                        changes=changes, decimal_comma=decimal_comma, painters=painters)
    return sorted(out_dir.iterdir())


def write_run_files(result: Result, folder: Path, plots: bool = True,
                    echo: list | None = None, report: bool = False, scenario=None,
                    extra_files: dict | None = None, relief: dict | None = None,
                    changes=(), decimal_comma: bool = False, painters=None) -> None:
    """The files of :func:`write_run_outputs`, written into an existing folder.

    With helper processes (``painters``) the plots are sent to them first and the
    histories are written while they draw. A plot that fails is left out with a warning
    in the summary (naming it), so the summary, the inputs and the report are written
    after the plots; the histories and summary are written all the same."""
    drawing = len(result.data) > 1 and (plots or report)
    if report and not plots:
        # the report's plots, drawn into a folder of their own (only the report keeps them)
        import tempfile
        with tempfile.TemporaryDirectory(prefix="cvsim-report-") as tmp:
            plot_folder = Path(tmp)
            pending = _submit(result, plot_folder, painters) if drawing else None
            _write_histories(result, folder, decimal_comma)
            drawn = (_plots(result, plot_folder, painters, pending) if drawing else None)
            _write_texts(result, folder, echo, extra_files, changes, report, scenario, drawn,
                         relief)
        return
    pending = _submit(result, folder, painters) if drawing else None
    _write_histories(result, folder, decimal_comma)
    drawn = None  # plots for the report: None = the report draws its own
    if plots:
        drawn = _plots(result, folder, painters, pending) if drawing else []
    _write_texts(result, folder, echo, extra_files, changes, report, scenario, drawn, relief)


def _write_histories(result: Result, folder: Path, decimal_comma: bool) -> None:
    units = run_units(result)
    write_csv(result, folder / "history.csv", decimal_comma=decimal_comma, units=units)
    write_csv(result, folder / "steps.csv", fine=True, decimal_comma=decimal_comma,
              units=units)


def _write_texts(result: Result, folder: Path, echo, extra_files, changes, report: bool,
                 scenario, drawn, relief) -> None:
    """Summary, inputs, extra files and the report: after the plots, whose failure
    would be a warning in them."""
    (folder / "summary.txt").write_text(summary_text(result), encoding="utf-8")
    write_summary_json(result, folder / "summary.json")
    if echo is not None:
        (folder / "inputs.txt").write_text(echo_text(result, echo, changes),
                                           encoding="utf-8")
    for name, text in (extra_files or {}).items():
        (folder / name).write_text(text, encoding="utf-8")
    if report:
        from .report import write_run_report
        write_run_report(result, folder / "report.html", scenario, plots=drawn, relief=relief,
                         changes=changes)


def _submit(result: Result, folder: Path, painters):
    """Send the run's plots to the helper processes; ``None`` without helpers or when
    they cannot take the work (then :func:`_plots` draws here)."""
    if painters is None:
        return None
    try:
        return painters.submit(result, folder, _plot_names(result))
    except (RuntimeError, OSError):
        return None


def _plots(result: Result, folder: Path, painters=None, pending=None) -> list[Path]:
    """The run's plots: collected from the helper processes when sent to them
    (``pending``, from :func:`_submit`) or drawn by them (``painters``), else drawn here.
    A plot that fails must not cost the results: the plots drawn whole are kept, the
    rest left out, and the result carries a warning naming the first one that could not
    be drawn. ``folder`` holds no other PNG files than the plots."""
    if painters is not None:
        try:
            if pending is None:
                pending = painters.submit(result, folder, _plot_names(result))
            return painters.collect(pending)
        except (RuntimeError, OSError):
            pass  # drawn again below, in this process, where the failure shows
    try:
        from .plot import plot_run
        return plot_run(result, folder)
    except Exception as exc:  # matplotlib layout, fonts, memory: never lose the run
        made = {p.name: p for p in folder.glob("*.png")}
        order = [f"{n}.png" for n in _plot_names(result)]
        whole = [n for n in order if n in made and _whole_png(made[n])]
        for name, p in made.items():
            if name not in whole:
                p.unlink()
        first = next((n for n in order if n not in whole), "a plot")
        what = " ".join(f"{type(exc).__name__}: {exc}".split())[:200]
        result.warnings.append(f"plots left out: '{first}' could not be drawn ({what}); "
                               "the histories and the summary are complete")
        return [made[n] for n in whole]


def _plot_names(result: Result) -> list[str]:
    from .plot import plot_names
    return plot_names(result)


def _whole_png(path: Path) -> bool:
    """True for a PNG file written to its end (its last chunk is IEND)."""
    try:
        with open(path, "rb") as fh:
            head = fh.read(8)
            fh.seek(-12, os.SEEK_END)
            tail = fh.read()
    except OSError:
        return False
    return head == b"\x89PNG\r\n\x1a\n" and tail[4:8] == b"IEND"


def echo_text(result: Result, echo: list, changes=()) -> str:
    """Inputs as given and as used (SI), with notes, plus provenance; the values a
    command changed (``changes``) as simulated, their notes starting CHANGED."""
    from .changes import as_simulated
    p = result.provenance
    L = [f"Inputs of: {result.network.title}",
         f"scenario file: {p.get('scenario', '?')}  sha256 {p.get('scenario_sha256', '?')}",
         f"cvsim {p.get('cvsim', '?')}, CoolProp {p.get('coolprop', '?')}", ""]
    if changes:
        L.append("Values changed by the command (simulated with these, not the file's):")
        L += [f"  {c.key} = {c.as_set()}   ({c.why})" for c in changes]
        L.append("")
    echo = as_simulated(echo, changes, p.get("overrides"))
    w = max([len(str(r.key)) for r in echo] + [10])
    for r in echo:
        line = f"{r.key:<{w}}  {r.given!s:<22}  ->  {r.used}"
        if getattr(r, "note", ""):
            line += f"   ({r.note})"
        L.append(line)
    L.append("")
    L.append("CAUTION: " + CAUTION)
    return "\n".join(L) + "\n"
