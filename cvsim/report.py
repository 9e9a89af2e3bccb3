"""Calculation reports: one self-contained HTML file per run or per sweep.

:func:`render_run_report` turns a :class:`~cvsim.result.Result` (and the
:class:`~cvsim.scenario.Scenario` it came from) into a document an engineer
can put in a calculation package: what was computed, the inputs as written
and as used, the model choices and assumptions, the results with their times,
the design limits met or crossed, plots, the balance closure, solver
statistics, versions and the scenario's hash, a sign-off block, and the
caution at the top and at the end. :func:`render_sweep_report` gives a study
of many runs the same look from plain data (a table as a list of dicts and
PNG files), so a sweep module needs nothing from here but this function.

The page is built by :mod:`cvsim.htmldoc` (inline styles, pictures as data
URIs, A4 print rules); numbers are written by the same helpers as
``summary.txt`` (:mod:`cvsim.outputs`), so both say the same thing.

Every section has a stable ``id``: ``job``, ``inputs`` (``inputs-given``,
``inputs-used``), ``model`` (``model-choices``, ``assumptions``,
``warnings``), ``summary``, ``limits``, ``plots``, ``checks``
(``balances``, ``solver``), ``software``, ``sign-off``; the caution is
``caution-top`` and ``caution-end``.
"""
from __future__ import annotations

import json
import math
import platform
import re
import shlex
import tempfile
from datetime import datetime
from pathlib import Path
from typing import TYPE_CHECKING

from . import __version__
from .contents import summary_lines
from .htmldoc import (Html, Section, bullets, document, esc, facts, figure, join, notice,
                      number, sign_off, subsection, table, tag, verbatim)
from .changes import as_simulated, before, changed
from .display import (RunUnits, bar, barg, degc, duration, engineering, limit_value,
                      margin, run_units)

if TYPE_CHECKING:
    from .result import Result

#: A balance that closes to better than this (relative) is reported as closed;
#: worse points to a numerical problem (the state variables are the conserved
#: quantities, so a sound run closes to round-off).
BALANCE_CLOSED = 1e-6

#: Captions of the plots :func:`cvsim.plot.plot_run` writes, by file stem.
PLOT_CAPTIONS = {
    "overview": "Overview: pressure, gas temperature, mass and mass flow against time.",
    "pressure": "Pressure in each vessel and reservoir (bar a; right axis bar g).",
    "temperature": "Gas temperature (and wall temperatures where modelled) in each vessel.",
    "mass": "Mass of gas in each vessel.",
    "flow": "Mass flow through each link, positive from its source to its target.",
    "opening": "Opening of each valve.",
    "level": "Liquid level above each vessel's inside bottom, with its inside height "
             "(liquid-full); or the liquid's share of the volume.",
    "rupture": "Rupture screening: the membrane stress in the wall, the stress allowed at "
               "the metal's hottest temperature and the margin between them; a vertical "
               "line marks the earliest time to rupture.",
}

#: Labels of the solver statistics (others are shown by their key).
SOLVER_LABELS = {
    "steps": "accepted steps",
    "rhs_calls": "right-hand-side evaluations",
    "jacobians": "Jacobian evaluations",
    "events": "events located (switches, stops)",
    "segments": "integration segments (between breakpoints and events)",
    "rejected_retries": "failed steps retried with a smaller step",
    "property_evaluations": "fluid-property evaluations",
    "wall_time_s": "wall-clock time [s]",
}

#: Summary keys drawn by the report's own tables; any other key a later
#: version adds to :meth:`Result.summary` is listed under "Further results".
SUMMARY_SHOWN = {"title", "status", "message", "end_time_s", "vessels", "links", "heat",
                 "events", "targets", "limits", "limits_crossed", "balance", "solver",
                 "self_checks", "self_checks_failed",
                 "assumptions", "provenance", "caution", "warnings"}

VERSION_LABELS = (("cvsim", "cvsim"), ("coolprop", "CoolProp"), ("thermopack", "thermopack"),
                  ("scipy", "SciPy"), ("numpy", "NumPy"), ("python", "Python"))


# =================================================================== one run

#: events listed in the body of the report; the rest are in an appendix
EVENTS_IN_BODY = 12
#: plots of the body (the others, one per quantity, are in an appendix)
BODY_PLOTS = ("overview",)


def render_run_report(result: Result, scenario=None, plots=None, relief: dict | None = None,
                      changes=()) -> str:
    """The calculation report of one run, as a complete HTML page.

    Parameters
    ----------
    result : the run.
    scenario : the :class:`~cvsim.scenario.Scenario` it was run from (file text,
        echo of the inputs, hash); ``None`` for a network built in code.
    plots : PNG files to embed (e.g. those :func:`cvsim.plot.plot_run` wrote);
        ``None``: draw them now into a temporary folder.
    relief : the relief sizing this run confirms, as plain data
        (:meth:`cvsim.sizing.ReliefSizing.as_dict`): the report then opens with the
        sizing calculation.
    changes : values the command changed after reading the scenario
        (:class:`cvsim.changes.Change`), listed as changed and shown as simulated.
    """
    if plots is None:
        with tempfile.TemporaryDirectory(prefix="cvsim-report-") as tmp:
            drawn = []
            if len(result.data) > 1:
                from .plot import plot_run
                drawn = plot_run(result, Path(tmp))
            return render_run_report(result, scenario, drawn, relief, changes)

    s = result.summary()
    prov = result.provenance
    net = result.network
    u = run_units(result)
    echo = (as_simulated(scenario.echo, changes, scenario.overrides) if scenario is not None
            else [])
    body_plots = [p for p in plots if Path(p).stem in BODY_PLOTS]
    more_plots = [p for p in plots if Path(p).stem not in BODY_PLOTS]
    events = s["events"]
    sections = [Section("job", "Job statement", _job(result, s, scenario, u, relief),
                        new_page=False)]
    if relief is not None:
        sections.append(Section("relief-sizing", "Relief valve sizing",
                                _relief(relief, net.atmosphere, u), new_page=False))
    sections += [
        Section("inputs", "Inputs", _inputs(scenario, prov, echo, changes), new_page=False),
        Section("model", "Model choices and assumptions", _model(result, scenario, u),
                new_page=False),
        Section("summary", "Results", _results(result, s, u), new_page=relief is None),
        Section("limits", "Design limits", _limits(result, u), new_page=False),
        Section("plots", "Plots", _plots(body_plots, more_plots)),
        Section("checks", "Checks on the calculation", _checks(result, s, u)),
        Section("software", "Software and traceability", _software(prov, "run", changes),
                new_page=False),
        Section("sign-off", "Check and review", sign_off(), new_page=False),
    ]
    if scenario is not None:
        sections.append(Section("inputs-given", "Scenario file as given",
                                _given(scenario), appendix=True))
        sections.append(Section("inputs-used", "Values as used", _used(echo, net.atmosphere),
                                appendix=True, new_page=False))
    if len(events) > EVENTS_IN_BODY:
        sections.append(Section("events-all", f"Every event ({len(events)})",
                                _events_table(events, u), appendix=True))
    if more_plots:
        sections.append(Section("plots-each", "Plots of each quantity",
                                _figures(more_plots, start=len(body_plots) + 1),
                                appendix=True))
    crossed = len(result.limits_crossed)
    counted = len(result.limits_counted)
    limits = ("none stated in the scenario" if not result.limits else
              f"{counted} checked: {counted - crossed} met, {crossed} CROSSED")
    head = [("Scenario file", prov.get("scenario", "(network built in code)")),
            ("Scenario SHA-256", tag("span", prov.get("scenario_sha256", "-"), cls="mono"))]
    if relief is not None:
        head.append(("Relief valve sized", Html(_relief_answer(relief, net.atmosphere))))
    head += [("Run", f"{_status_line(result, u)}; started {prov.get('run_started', '-')}"),
             ("Design limits", limits)]
    if changes:
        head.append(("Values changed by the command",
                     "; ".join(f"{c.key} = {c.used()}" for c in changes)))
    head += [("Software", f"cvsim {prov.get('cvsim', __version__)}, CoolProp "
                          f"{prov.get('coolprop', '?')}" + (
                              f", thermopack {prov['thermopack']}" if "thermopack" in prov
                              else "")),
             ("Report written", _now())]
    lead = Html("")
    if not result.ok:
        lead = notice(f"The run FAILED at t = {u.t(_end(result))}: "
                      f"{result.message.rstrip('.')}. The "
                      "results below cover only the part that was computed and must not be "
                      "used as the answer.", id="failed")
    kind = ("cvsim calculation report: relief valve sizing" if relief is not None
            else "cvsim calculation report: one run")
    return document(title=net.title, kind=kind, summary_facts=head, sections=sections,
                    lead=lead, footer_right=_head_right(prov))


def write_run_report(result: Result, path, scenario=None, plots=None,
                     relief: dict | None = None, changes=()) -> Path:
    """Write :func:`render_run_report` to ``path`` (UTF-8); return the path."""
    path = Path(path)
    path.write_text(render_run_report(result, scenario, plots, relief, changes),
                    encoding="utf-8")
    return path


def _end(result: Result) -> float:
    return float(result.time[-1]) if len(result.data) else 0.0


def _status_line(result: Result, u: RunUnits) -> str:
    t = u.t(_end(result))
    if result.status == "failed":
        return f"FAILED at t = {t}"
    if result.status == "stopped":
        return f"stopped at t = {t}"
    return f"{result.status} at t = {t}"


def _head_right(prov: dict) -> str:
    sha = prov.get("scenario_sha256", "")
    return f"cvsim {prov.get('cvsim', __version__)}" + (f" - scenario sha256 {sha[:16]}"
                                                       if sha else "")


def _t_exact(t: float, u: RunUnits) -> str:
    """A time to 6 digits in the run's unit."""
    return f"{t / u.time_size:.6g} {u.time}"


def _now() -> str:
    return datetime.now().astimezone().isoformat(timespec="seconds")


def _words(name: str) -> str:
    """``FixedFlow`` -> ``fixed flow``."""
    return re.sub(r"(?<!^)(?=[A-Z])", " ", name).lower()


def _plural(n: int, word: str) -> str:
    return f"{'one' if n == 1 else n} {word}{'' if n == 1 else 's'}"


# ------------------------------------------------------------------ job

def _job(result: Result, s: dict, scenario, u: RunUnits, relief) -> Html:
    net = result.network
    fluid = net.fluid
    vessels = "; ".join(f"{v.name}, {v.volume:.4g} m3" for v in net.vessels)
    links = "; ".join(f"{k.name}: {_words(type(k.device).__name__)} from {k.source} to "
                      f"{k.target}" for k in net.links)
    props = (f"real-fluid properties of {fluid.name} (CoolProp equation of state)"
             if fluid.model == "real" else
             f"the {fluid.name} mixture on the {fluid.equation} equation of state, with the "
             "composition of each vessel followed through the run" if fluid.model == "mixture"
             else f"{fluid.name} taken as an ideal gas")
    stops = [c.describe() for c in net.run.stop]
    until = f"{u.t(net.run.end_time)}" + (f", or until {' or '.join(stops)}" if stops else "")
    out = []
    if relief is not None:
        out.append(tag("p", f"cvsim {__version__} sized the relief valve '{relief['link']}' "
                       f"protecting '{relief['vessel']}' by API 520 Part I for one relief load "
                       f"({relief['load_basis']}), chose the next API 526 orifice letter, and "
                       "confirmed it with a simulation of the scenario with that valve "
                       "(section 2 gives the calculation; the run below is the confirming "
                       "run, with the values the sizing changed listed in section 3)."))
    what = (f"{'The confirming run' if relief is not None else f'cvsim {__version__}'} "
            f"simulated how the contents of {_plural(len(net.vessels), 'vessel')} "
            f"({vessels}) change with time while they flow "
            + (f"through {_plural(len(net.links), 'link')} ({links})" if net.links
               else "nowhere (no links: heat terms only)")
            + (f" to and from {_plural(len(net.reservoirs), 'reservoir')} at imposed pressure "
               f"and temperature ({', '.join(r.name for r in net.reservoirs)})"
               if net.reservoirs else "")
            + f". It integrated the mass and energy balance of each vessel, with {props}, "
            f"from t = 0 to {until}.")
    out.append(tag("p", what))
    notes = _head_comment(scenario.source_text) if scenario is not None else ""
    if notes:
        out.append(tag("p", "Description at the head of the scenario file:", cls="muted"))
        out.append(tag("blockquote", notes))
    out.append(tag("h3", "Outcome at a glance"))
    out.append(bullets(_glance(result, s, u, relief), cls="outcome"))
    return join(out)


def _head_comment(text: str) -> str:
    """The comment lines at the head of a scenario file, joined into one text."""
    lines = []
    for line in text.splitlines():
        stripped = line.strip()
        if stripped.startswith("#"):
            lines.append(stripped.lstrip("#").strip())
        elif stripped:
            break
    return " ".join(x for x in lines if x)


def _glance(result: Result, s: dict, u: RunUnits, relief) -> list:
    atm = result.network.atmosphere
    out = []
    if relief is not None:
        out.append(Html(f"<b>Relief valve:</b> {_relief_answer(relief, atm)} (section "
                        '<a href="#relief-sizing">Relief valve sizing</a>).'))
    out.append(Html(f"<b>Run:</b> {esc(_status_line(result, u))}" + (
        f": {esc(result.message)}" if result.message else "")))
    if result.limits:
        crossed = result.limits_crossed
        counted = result.limits_counted
        text = (f"{len(counted)} checked, {len(counted) - len(crossed)} met, "
                f"{len(crossed)} crossed")
        if crossed:
            names = "; ".join(f"{c.vessel}: {c.name}" for c in crossed)
            out.append(Html(f'<b>Design limits:</b> {esc(text)}. <span class="state-crossed">'
                            f"CROSSED:</span> {esc(names)} (section "
                            f'<a href="#limits">Design limits</a>).'))
        else:
            out.append(Html(f"<b>Design limits:</b> {esc(text)}: all met."))
    else:
        out.append(Html("<b>Design limits:</b> none stated in the scenario, so none were "
                        "checked."))
    for name, v in s["vessels"].items():
        out.append(Html(
            f"<b>{esc(name)}:</b> pressure highest {esc(bar(v['max_pressure_Pa'], atm))} at "
            f"{esc(u.t(v['max_pressure_time_s']))}, lowest {esc(bar(v['min_pressure_Pa'], atm))} "
            f"at {esc(u.t(v['min_pressure_time_s']))};"
            f" gas temperature lowest {esc(degc(v['min_temperature_K']))} at "
            f"{esc(u.t(v['min_temperature_time_s']))}, highest "
            f"{esc(degc(v['max_temperature_K']))} at {esc(u.t(v['max_temperature_time_s']))}."))
    if result.checks:
        bad = result.checks_failed
        out.append(Html(
            f"<b>Self-checks:</b> {len(result.checks)} recomputed from the recorded histories "
            "(state residuals, first law of each vessel, entropy produced by links and heat "
            "terms): " + (f'<span class="state-crossed">{len(bad)} FAILED - do not use these '
                          "results</span>." if bad else "all passed.")))
    return out


# --------------------------------------------------------------- relief

INCH2 = 0.0254 ** 2  # [m2]


def _relief_answer(r: dict, atm: float) -> str:
    """One line of HTML: the letter chosen, its area, and the confirming run's verdict."""
    if not r.get("letter"):
        return (f"required effective area {r['required_area'] * 1e6:.5g} mm2: more than the "
                "largest API 526 letter (T); no confirming run")
    text = (f'API 526 letter <b>{esc(r["letter"])}</b> '
            f"({r['letter_area'] * 1e6:.5g} mm2) for a required effective area of "
            f"{r['required_area'] * 1e6:.5g} mm2")
    peak = r.get("peak_pressure", math.nan)
    if peak == peak:
        verdict = ("within" if r["met"] else '<span class="state-crossed">ABOVE</span>')
        text += (f"; confirming run: peak {esc(barg(peak, atm))}, {verdict} the allowed "
                 f"{esc(barg(r['allowed_pressure'], atm))}")
    return text


def _relief(r: dict, atm: float, u: RunUnits) -> Html:
    """The sizing calculation: load case, relieving conditions, coefficients, areas,
    the letter chosen, its capacity, and the confirming run against the allowed
    pressure."""
    service = {"gas": "gas", "vapour": "vapour of boiling liquid", "liquid": "liquid",
               "flashing": "flashing liquid"}.get(r.get("service", "gas"), r.get("service"))
    gas = r.get("service", "gas") in ("gas", "vapour")
    regime = (("critical" if r["critical"] else "subcritical") if gas
              else ("choked" if r["critical"] else "not choked")) + " flow"
    out = [tag("p", f"Relief valve '{r['link']}' protecting vessel '{r['vessel']}', passing "
               f"{service} at relieving conditions. Method: {r.get('method', '')}.")]
    load = [("Relief case and load", f"{r['load_basis']}: {r['load'] * 3600:.6g} kg/h "
             f"({r['load']:.5g} kg/s)")]
    load += [(f"  candidate: {name}", f"{w * 3600:.6g} kg/h")
             for name, w in (r.get("loads") or {}).items()]
    cond = [("Relieving pressure P1", f"{bar(r['relieving_pressure'], atm)}: "
             f"{r['accumulation_basis']}"),
            ("MAWP", bar(r["mawp"], atm)),
            ("Set pressure", f"{bar(r['set_pressure'], atm)} (highest allowed for the case: "
             f"{barg(r['max_set_pressure'], atm)})"),
            ("Relieving temperature T1", f"{degc(r['relieving_temperature'])} "
             f"({r.get('relieving_basis', '')})"),
            ("Back pressure P2", f"{bar(r['back_pressure'], atm)} ({regime})")]
    if gas:
        cond.append(("Z, k, M at (P1, T1)", f"Z = {r['Z']:.4f}, k = {r['k']:.4f}, M = "
                     f"{r['molar_mass'] * 1e3:.4f} g/mol"))
    cond.append(("Density of the stream at the inlet", f"{r['density']:.5g} kg/m3"))
    coeff = [[k, f"{v:.5g}" if isinstance(v, float) else str(v)]
             for k, v in (r.get("coefficients") or {}).items()]
    areas = [[name, f"{a * 1e6:.5g}", f"{a / INCH2:.4g}"]
             for name, a in (r.get("areas") or {}).items()]
    areas.append([Html("<b>required effective area</b>"),
                  Html(f"<b>{r['required_area'] * 1e6:.5g}</b>"),
                  Html(f"<b>{r['required_area'] / INCH2:.4g}</b>")])
    if r.get("letter"):
        share = r["required_area"] / r["letter_area"]
        areas.append([Html(f"<b>API 526 letter {esc(r['letter'])}</b> (the next letter up)"),
                      Html(f"<b>{r['letter_area'] * 1e6:.5g}</b>"),
                      Html(f"<b>{r['letter_area'] / INCH2:.4g}</b>")])
    out.append(subsection("relief-load", "Load case and relieving conditions",
                          facts(load + cond)))
    out.append(subsection("relief-coefficients", "Coefficients",
                          table(["Coefficient", "Value"], coeff, numeric={1},
                                widths=["50%", "50%"])))
    out.append(subsection("relief-areas", "Areas", join([
        table(["Area by", "[mm2]", "[in2]"], areas, numeric={1, 2},
              widths=["60%", "20%", "20%"]),
        bullets(r.get("sized_by") or [])])))
    chosen = []
    if r.get("letter"):
        chosen.append(("Letter chosen", Html(
            f'<b id="relief-letter">{esc(r["letter"])}</b>, effective area '
            f"{r['letter_area'] * 1e6:.5g} mm2 ({r['letter_area'] / INCH2:.4g} in2)")))
        chosen.append(("Its capacity at relieving conditions",
                       f"{r['load'] / share * 3600:.6g} kg/h ({100 / share:.4g} % of the load), "
                       "the load times the area ratio (the sizing equations are linear in "
                       "the area at fixed relieving conditions)"))
        peak = r.get("peak_pressure", math.nan)
        if peak == peak:
            verdict = (esc("within the allowed pressure: met") if r["met"] else
                       Html('<span class="state-crossed">ABOVE the allowed pressure: '
                            'NOT met</span>'))
            chosen.append(("Confirming run", join([
                esc(f"peak pressure {bar(peak, atm)} at {u.t(r['peak_time'])} against the "
                    f"allowed {bar(r['allowed_pressure'], atm)}, margin "
                    f"{(r['allowed_pressure'] - peak) / 1e5:+.3g} bar: "), verdict])))
        else:
            chosen.append(("Confirming run", "not made"))
    out.append(subsection("relief-chosen", "Valve chosen and confirming run",
                          facts(chosen) if chosen else tag(
                              "p", "No API 526 letter is large enough: several valves or a "
                              "larger special valve are needed.")))
    if r.get("notes"):
        out.append(subsection("relief-notes", "Notes", bullets(r["notes"], prefix="R")))
    return join(out)


# --------------------------------------------------------------- inputs

def _inputs(scenario, prov: dict, echo, changes) -> Html:
    if scenario is None:
        return tag("p", "This run was built in code, not read from a scenario file, so "
                   "there is no file text and no echo of inputs to show. The network's "
                   "values are those of the Python objects the caller built.")
    out = [tag("p", Html(
        f"Scenario file <code>{esc(scenario.source_name)}</code>, SHA-256 "
        f'<span class="mono">{esc(scenario.sha256)}</span>. The file exactly as read is '
        'in <a href="#inputs-given">Appendix A</a>; every value as the run used it, in '
        "engineering units with defaults and computed values marked, in "
        '<a href="#inputs-used">Appendix B</a>.'))]
    by_command = {c.key for c in changes}
    # a --set value a command then changed did not run: it is told in the command's row
    rows = [[tag("code", k), str(v), "command line --set or Python overrides"]
            for k, v in scenario.overrides.items() if k not in by_command]
    given = {r.key: r for r in scenario.echo}
    for c in changes:
        row = given.get(c.key)
        was = (f" (was {before(row)}" + (", given with --set" if c.key in scenario.overrides
                                         else "") + ")") if row is not None else (
            " (not in the file)")
        who = (f"command line --set ({scenario.overrides[c.key]}), then {c.why}"
               if c.key in scenario.overrides else c.why)
        rows.append([tag("code", c.key), Html(f"<b>{esc(c.used())}</b>{esc(was)}"), who])
    if rows:
        out.append(subsection("inputs-changed", "Values changed for this run", join([
            tag("p", "These values replace those in the file: the run was simulated with "
                "them."),
            table(["Key", "Value simulated", "Changed by"], rows,
                  widths=["34%", "36%", "30%"])])))
    else:
        out.append(tag("p", "No value was changed: the run used the file as it is."))
    return join(out)


def _given(scenario) -> Html:
    return join([tag("p", Html(f"File <code>{esc(scenario.source_name)}</code>, SHA-256 "
                               f'<span class="mono">{esc(scenario.sha256)}</span>, before '
                               "any change made on the command line.")),
                 verbatim(scenario.source_text)])


def _used(echo, atm: float) -> Html:
    rows, classes = [], []
    group = None
    for r in echo:
        parts = str(r.key).split(".")
        g = ".".join(parts[:2]) if parts[0] in ("vessels", "reservoirs", "links") else parts[0]
        if g != group and (len(parts) > 1):
            rows.append(("group", g))
            classes.append(None)
        group = g if len(parts) > 1 else None
        used = engineering(r.value, r.unit, atm if r.unit == "Pa" else None,
                           kind=getattr(r, "kind", ""))
        if changed(r):
            used = Html(f"<b>{esc(used)}</b>")
        rows.append([_breakable(str(r.key)), str(r.given), used, r.note or ""])
        classes.append("crossed" if changed(r) else
                       "warning" if "warning" in (r.note or "") else None)
    return join([tag("p", "Every value as the run used it: pressures absolute (bar a) with "
                     "the gauge value beside them, pressure differences in bar, stresses and "
                     "strengths in MPa, temperatures in degC, lengths in mm (m from 1 m), "
                     "areas in mm2, mass flows in kg/h; a value a command changed is in bold "
                     "on a marked row, its note starting CHANGED."),
                 table(["Key", "As given", "Used", "Note"], rows, row_classes=classes,
                       cls="echo", widths=["32%", "22%", "22%", "24%"])])


def _breakable(key: str, after: str = ".") -> Html:
    """A key that may wrap after its dots (and the other characters in ``after``)."""
    return Html(re.sub(f"([{re.escape(after)}])", r"\1<wbr>", str(esc(key))))


# ---------------------------------------------------------------- model

def _model(result: Result, scenario, u: RunUnits) -> Html:
    net = result.network
    prov = result.provenance
    f = net.fluid
    rows = []
    if f.model == "real":
        rows.append(["Fluid properties", f"{f.name}: real fluid, Helmholtz-energy equation of "
                     f"state of CoolProp {prov.get('coolprop', '')} (HEOS backend), equilibrium "
                     "single- and two-phase states"])
    elif f.model == "mixture":
        comp = ", ".join(f"{n} {z:.4g}" for n, z in zip(f.components, f.mole_fractions)
                         if z > 0.0)
        rows.append(["Fluid properties", f"{f.name}: mixture of mole fractions {comp}; "
                     f"{f.equation} equation of state of thermopack "
                     f"{prov.get('thermopack', '')}, equilibrium single- and two-phase states "
                     "(our own density-energy flash over thermopack's pressure-temperature "
                     "flash); each vessel's composition from its component masses"])
        for r in net.reservoirs:
            if r.composition is not None:
                own = ", ".join(f"{n} {z:.4g}" for n, z in zip(f.components, r.composition)
                                if z > 0.0)
                rows.append([f"Supply of {r.name}", f"mole fractions {own}"])
    else:
        rows.append(["Fluid properties", f"{f.name}: ideal gas with constant heat capacities"])
    for k in net.links:
        d = k.device
        text = _words(type(d).__name__)
        if getattr(d, "flow_model", None):
            text += f", {d.flow_model} form"
        if getattr(d, "validity", None):
            text += f"; valid for {d.validity}"
        rows.append([f"Link {k.name} ({k.source} → {k.target})", text])
    for v in net.vessels:
        terms = [f"{h.name}: {_words(type(h).__name__)}"
                 + (f" (valid for {h.validity})" if getattr(h, "validity", None) else "")
                 for h in v.heat]
        rows.append([f"Heat, vessel {v.name}",
                     "; ".join(terms) if terms else "none: adiabatic (no heat exchanged)"])
    r = net.run
    step = "no limit" if math.isinf(r.max_step) else duration(r.max_step)
    rows.append(["Integration", f"{r.method}, relative tolerance {r.rtol:g}, absolute "
                 f"tolerance {r.atol_scale:g} of each state's initial size, largest step "
                 f"{step}; integrated piecewise between breakpoints, switches and stops "
                 "located as events"])
    rows.append(["Recorded histories", f"every {duration(r.record_every)} and at every "
                 "event; extremes are taken over every accepted solver step"])
    choices = table(["Item", "Model"], rows, widths=["28%", "72%"])
    register = bullets(result.assumptions, prefix="A") if result.assumptions else tag(
        "p", "No assumptions recorded.")
    warn = _warnings(result, scenario)
    parts = [subsection("model-choices", "Models used", choices),
             subsection("assumptions", "Assumption register",
                        join([tag("p", "The model choices of this run in words; each one is "
                                  "a simplification a reviewer should accept for the case at "
                                  "hand."), register])),
             subsection("warnings", "Warnings",
                        bullets(warn, prefix="W") if warn else tag(
                            "p", "None were raised while reading the scenario or by the run."))]
    return join(parts)


def _warnings(result: Result, scenario) -> list[str]:
    """Warnings from reading the scenario (echo notes) and any the result carries
    (the reader's warnings that the command put into the result are not repeated)."""
    out = []
    if scenario is not None:
        for r in scenario.echo:
            for note in (r.note or "").split("; "):
                if note.startswith("warning"):
                    out.append(f"{r.key}: {note.split(':', 1)[-1].strip()}")
    for w in list(getattr(result, "warnings", None) or []):
        if str(w) not in out:
            out.append(str(w))
    return out


# -------------------------------------------------------------- results

def _results(result: Result, s: dict, u: RunUnits) -> Html:
    atm = result.network.atmosphere
    out = [tag("p", f"Run {_status_line(result, u)}: {result.message}. Pressures are absolute "
               f"(bar a) with the gauge value (bar g) relative to the scenario's atmosphere of "
               f"{atm / 1e5:.5g} bar a. Extremes are over every accepted solver step; times "
               f"in {u.time}, mass flows in {u.flow} (as in the plots and the CSV files).")]
    if not s["vessels"]:
        out.append(tag("p", "No states were recorded."))
        return join(out)
    rows = []
    for name, v in s["vessels"].items():
        p, T, m = (result[f"{name}.{q}"] for q in ("pressure", "temperature", "mass"))
        mmax, tmmax = result.extreme(f"{name}.mass", "max")
        mmin, tmmin = result.extreme(f"{name}.mass", "min")
        rows.append(("group", f"vessel {name}"))
        rows.append(["pressure", bar(p[0], atm), bar(v["max_pressure_Pa"], atm),
                     u.t(v["max_pressure_time_s"]), bar(v["min_pressure_Pa"], atm),
                     u.t(v["min_pressure_time_s"]), bar(v["final_pressure_Pa"], atm)])
        rows.append(["gas temperature", degc(T[0]), degc(v["max_temperature_K"]),
                     u.t(v["max_temperature_time_s"]), degc(v["min_temperature_K"]),
                     u.t(v["min_temperature_time_s"]), degc(v["final_temperature_K"])])
        if "min_wall_temperature_K" in v:
            rows.append(["wall temperature", "-",
                         f"{degc(v['max_wall_temperature_K'])} "
                         f"({v['max_wall_temperature_where']})",
                         u.t(v["max_wall_temperature_time_s"]),
                         f"{degc(v['min_wall_temperature_K'])} "
                         f"({v['min_wall_temperature_where']})",
                         u.t(v["min_wall_temperature_time_s"]), "-"])
        rows.append(["mass", f"{m[0]:.5g} kg", f"{mmax:.5g} kg", u.t(tmmax),
                     f"{mmin:.5g} kg", u.t(tmmin), f"{v['final_mass_kg']:.5g} kg"])
    body = [table(["Quantity", "Start", "Highest", "at", "Lowest", "at", "End"],
                  rows, numeric={3, 5}, widths=["15%", "15%", "15%", "10%", "15%", "10%", "20%"])]
    for name, v in s["vessels"].items():
        if "two_phase_from_s" in v:
            body.append(tag("p", f"{name}: two phases present from {u.t(v['two_phase_from_s'])}"
                            f" (lowest vapour quality {v['min_vapour_quality']:.4f})."))
        body += [tag("p", f"{name}: {' '.join(line.split())}.")
                 for line in summary_lines(v, u.t)]
    out.append(subsection("summary-vessels", "Vessels", join(body)))
    if s.get("targets"):
        out.append(subsection("summary-targets", "Stop conditions", table(
            ["Condition", "First met at"],
            [[t["condition"], u.t(t["time_s"]) if t.get("time_s") is not None
              else "not reached"] for t in s["targets"]])))
    if s["links"]:
        rows = [[name, f"{k['from']} → {k['to']}", _words(k["device"]),
                 f"{k['mass_passed_kg']:.5g}",
                 f"{k['max_mass_flow_kg_s'] / u.flow_size:.4g}", u.t(k["max_mass_flow_time_s"]),
                 f"{k['min_mass_flow_kg_s'] / u.flow_size:.4g}", u.t(k["min_mass_flow_time_s"]),
                 f"{k['energy_added_by_device_J'] / 1e3:.5g}"]
                for name, k in s["links"].items()]
        notes = [f"{name}: {note}" for name, k in s["links"].items()
                 for note in k.get("notes", [])]
        out.append(subsection("summary-links", "Links (flow positive from source to target)",
                              join([table(["Link", "Direction", "Device", "Mass passed [kg]",
                                           f"Highest flow [{u.flow}]", "at",
                                           f"Lowest flow [{u.flow}]", "at",
                                           "Energy added by the device [kJ]"],
                                          rows, numeric={3, 4, 5, 6, 7, 8}),
                                    bullets(notes) if notes else Html("")])))
    if s["heat"]:
        out.append(subsection("summary-heat", "Heat into the gas", table(
            ["Heat term", "Heat into the gas over the run [kJ]"],
            [[n, f"{h['heat_into_gas_J'] / 1e3:.5g}"] for n, h in s["heat"].items()],
            numeric={1})))
    events = s["events"]
    shown = events[:EVENTS_IN_BODY]
    more = (tag("p", Html(f"The first {len(shown)} of {len(events)} events; every event is "
                          'in <a href="#events-all">Appendix C</a>.'))
            if len(events) > len(shown) else Html(""))
    out.append(subsection("summary-events", "Events", join([
        _events_table(shown, u), more]) if events else tag("p", "No events.")))
    further = {k: v for k, v in s.items() if k not in SUMMARY_SHOWN}
    if further:
        out.append(subsection("summary-further", "Further results", table(
            ["Figure", "Value (SI)"],
            [[k, tag("code", json.dumps(v, default=str))] for k, v in further.items()])))
    return join(out)


def _events_table(events, u: RunUnits) -> Html:
    return table(["Time", "Event"], [[_t_exact(e["time_s"], u), e["event"]] for e in events],
                 numeric={0}, widths=["18%", "82%"])


def _limits(result: Result, u: RunUnits) -> Html:
    if not result.limits:
        return tag("p", "No design limits are stated in the scenario, so this run was not "
                   "checked against any (design pressure, minimum design metal temperature, "
                   "maximum temperature, depressuring target). State them under 'limits:' of "
                   "each vessel to have them checked.")
    atm = result.network.atmosphere
    crossed = result.limits_crossed
    counted = result.limits_counted
    rows, classes, basis = [], [], []
    for i, c in enumerate(result.limits, 1):
        state = (esc("for information") if c.informative else
                 Html('<span class="state-crossed">✗ CROSSED</span>') if not c.met else
                 Html('<span class="state-met">✓ met</span>'))
        when = u.t(c.time) if c.unit != "s" and c.time == c.time else "-"
        rows.append([str(i), state, c.vessel, c.name, limit_value(c.limit, c.unit, atm, u.t),
                     limit_value(c.actual, c.unit, atm, u.t), when,
                     margin(c.margin, c.unit, u), Html(f'<a href="#L{i}">L{i}</a>')])
        classes.append("crossed" if c.crossed else None)
        basis.append(c.practice + (f"; {c.note}" if c.note else ""))
    verdict = (Html(f'<span class="state-crossed">{len(crossed)} of {len(counted)} '
                    "CROSSED</span> (rows marked ✗ CROSSED).") if crossed else
               esc(f"All {len(counted)} met."))
    info = len(result.limits) - len(counted)
    if info:
        verdict = join([verdict, esc(f" {info} more row{'s' if info != 1 else ''} shown for "
                                     "information only, not counted (the gas temperature "
                                     "against the minimum design metal temperature, which "
                                     "is checked on the wall's metal).")])
    intro = tag("p", Html("Each limit stated in the scenario against the extreme the run "
                          "reached. The margin is positive when the limit is met and negative "
                          "when it is crossed. The plots draw each limit as a line. "
                          + verdict))
    return join([intro, table(["#", "Outcome", "Vessel", "Check", "Limit", "Reached", "at",
                               "Margin", "Basis"], rows,
                              row_classes=classes, numeric={0, 6, 7},
                              widths=["4%", "12%", "10%", "30%", "10%", "10%", "8%", "9%",
                                      "7%"]),
                 tag("h3", "Governing practice and notes"),
                 bullets(basis, prefix="L", cls="limits-basis")])


def _plots(body, more) -> Html:
    if not body and not more:
        return tag("p", "No plots: the run recorded fewer than two points.")
    out = [tag("p", Html("The design limits stated in the scenario are drawn on the plots "
                         "(dashed lines, with the side that crosses them shaded); a crossed "
                         "limit is marked where it is crossed."
                         + (' One figure per quantity is in <a href="#plots-each">the '
                            "appendix</a>." if more else "")))]
    out.append(_figures(body or more[:1], start=1))
    return join(out)


def _figures(paths, start: int = 1) -> Html:
    out = []
    for i, p in enumerate(paths, start):
        stem = Path(p).stem
        out.append(figure(p, PLOT_CAPTIONS.get(stem, stem.replace("_", " ")), number=i,
                          id=f"plot-{stem}"))
    return join(out)


# --------------------------------------------------------------- checks

def _checks(result: Result, s: dict, u: RunUnits) -> Html:
    b = s["balance"]
    if b:
        def verdict(x):
            return "closed" if x <= BALANCE_CLOSED else Html(
                '<span class="state-crossed">NOT CLOSED: check the run</span>')
        rows = [["Mass [kg]", number(b["initial_mass_kg"]), number(b["final_mass_kg"]),
                 number(b["net_mass_in_kg"]), f"{b['mass_residual_kg']:.3g}",
                 f"{b['mass_closure_relative']:.2e}", verdict(b["mass_closure_relative"])],
                ["Internal energy [kJ]", number(b["initial_internal_energy_J"] / 1e3),
                 number(b["final_internal_energy_J"] / 1e3), number(b["net_energy_in_J"] / 1e3),
                 f"{b['energy_residual_J'] / 1e3:.3g}", f"{b['energy_closure_relative']:.2e}",
                 verdict(b["energy_closure_relative"])]]
        bal = join([tag("p", "These integrals are carried by the integrator beside the states "
                        "and close by construction (to its round-off): they confirm the "
                        "bookkeeping, not the model; the self-checks above test the model. "
                        "Content of all vessels at the start and end, what crossed the "
                        "boundary of the vessels (flows to and from reservoirs, heat, energy "
                        "added by devices; flows between vessels cancel), and the residual: "
                        "change of content minus net inflow. The relative closure divides the "
                        "residual by the largest of the initial content, final content and "
                        f"throughput; below {BALANCE_CLOSED:g} it is reported as closed."),
                    table(["Balance", "Initial", "Final", "Net in", "Residual",
                           "Relative closure", "Verdict"], [r for r in rows],
                          numeric={1, 2, 3, 4, 5})])
    else:
        bal = tag("p", "No balance: the run failed before its first step.")
    if result.checks:
        checks = join([
            tag("p", "Checks a wrong model would fail, computed after the run from the "
                "recorded histories with a fresh fluid object: the state residual of every "
                "vessel, the first law of every vessel with the stream enthalpies recomputed "
                "from the recorded states (trapezoidal rule; tolerance from its own error "
                "estimate), and the entropy produced by every passive link and every heat "
                "term (never negative)."),
            table(["Check", "Figure", "Value", "Tolerance", "Verdict", "Where"],
                  [[c.name, c.what, f"{c.value:.3g}", f"{c.tolerance:.3g}",
                    "passed" if c.passed else Html('<span class="state-crossed">FAILED</span>'),
                    c.detail] for c in result.checks], numeric={2, 3})])
    else:
        checks = tag("p", "No self-checks: the run recorded fewer than two points.")
    st = s["solver"]
    solver = facts([(SOLVER_LABELS.get(k, k), number(v, 4) if k == "wall_time_s" else number(v))
                    for k, v in st.items()]) if st else tag("p", "No statistics recorded.")
    return join([subsection("self-checks", "Self-checks", checks),
                 subsection("balances", "Bookkeeping of mass and energy", bal),
                 subsection("solver", "Solver statistics", solver)])


# ------------------------------------------------------------- software

def _software(prov: dict, what: str = "run", changes=()) -> Html:
    """Versions, the scenario's hash and every value changed for the run: those given
    with ``--set`` and those the command changed (``changes``), so that the run can be
    repeated from this section alone."""
    rows = [(label, prov[key]) for key, label in VERSION_LABELS if key in prov]
    rows.append(("matplotlib (plots)", _dist_version("matplotlib")))
    rows.append(("Platform", platform.platform()))
    if "scenario" in prov:
        rows.append(("Scenario file", tag("code", prov["scenario"])))
        rows.append(("Scenario SHA-256", tag("span", prov.get("scenario_sha256", "-"),
                                             cls="mono")))
    overrides = prov.get("overrides") or {}
    by_command = {c.key: c for c in changes}
    for k, v in overrides.items():
        c = by_command.get(k)
        text = f"{k} = {v}" + (f" (given with --set; not simulated: the command changed it "
                               f"to {c.used()}, below)" if c else " (--set)")
        rows.append(("Changed for this run", tag("code", text)))
    for c in changes:
        rows.append(("Changed for this run", join([
            tag("code", f"{c.key} = {c.used()}"), esc(f" by {c.why}")])))
    if "run_started" in prov:
        rows.append(("Run started", prov["run_started"]))
    shown = {k for k, _ in VERSION_LABELS} | {"scenario", "scenario_sha256", "overrides",
                                               "run_started"}
    rows += [(k, str(v)) for k, v in prov.items() if k not in shown]
    rows.append(("Report written", _now()))
    repeat = (f"To repeat the {what}: the same scenario file (same SHA-256), the same changes, "
              "and the versions above; small differences in the last digits can come from "
              "other library versions.")
    out = [facts(rows), tag("p", repeat, cls="muted")]
    if changes and "scenario" in prov:
        sets = {k: str(v) for k, v in overrides.items()}
        sets.update({c.key: c.as_set() for c in changes if not c.derived})
        line = " ".join(["cvsim", "run", shlex.quote(str(prov["scenario"]))]
                        + [f"--set {shlex.quote(f'{k}={v}')}" for k, v in sets.items()])
        out.append(tag("p", join([
            esc("The values the command changed are part of the run: the command run again "
                "makes the same changes, and the run alone is repeated by "),
            tag("code", line), esc(".")]), cls="muted", id="repeat"))
    return join(out)


def _dist_version(name: str) -> str:
    from importlib.metadata import PackageNotFoundError, version
    try:
        return version(name)
    except PackageNotFoundError:
        return "not installed"


# ==================================================================== sweeps

#: a table of cases with more columns than this is split into parts, each repeating
#: the case number and the first ``KEEP_COLUMNS`` columns (the values varied)
MOST_COLUMNS = 11


def render_sweep_report(title: str, scenario=None, parameters=None, rows=(), columns=None,
                        images=(), notes=(), provenance: dict | None = None,
                        answer=(), keep: int = 1, extra_sections=()) -> str:
    """The report of a study of many runs, with the look of the run report.

    Plain data in, so that any study module can use it:

    title       what the study is (one line)
    scenario    the base :class:`~cvsim.scenario.Scenario` (file text, echo,
                hash) or ``None``
    parameters  the values varied: a mapping ``key path -> list of values`` (as given)
    rows        one dict per case (parameters, results, ...), in case order;
                a row with ``status == "failed"`` or a true/non-zero
                ``limits_crossed`` is marked in words and with a border
    columns     the columns shown: keys of ``rows``, or ``(key, heading)``
                pairs; ``None``: every key, in order of first appearance
    images      PNG files (or ``(path, caption)`` pairs) to embed
    notes       notes and assumptions of the study, in words
    provenance  versions and the scenario's hash; ``None``: those of this
                process (:func:`cvsim.api.provenance`)
    answer      the study's answer as ``(label, text)`` pairs (a search's value, its
                bracket and margins): shown in the title block and the job statement
    keep        columns repeated in every part of a table split for width (the
                values varied)
    extra_sections  further :class:`~cvsim.htmldoc.Section` s of a kind of study
                (an uncertainty study's results): one whose id is that of a
                section below replaces it, the others follow the values varied

    Section ids: ``job`` (the answer: ``answer``), ``parameters``, ``cases``,
    ``plots``, ``notes``, ``software``, ``sign-off``; appendices ``inputs-given`` and
    ``inputs-used`` (with a base scenario); the caution ``caution-top`` and
    ``caution-end``. The table of cases is printed on landscape pages and split into
    parts of at most :data:`MOST_COLUMNS` columns.
    """
    if provenance is None:
        from .api import provenance as current
        provenance = current(scenario)
    rows = [dict(r) for r in rows]
    params = _parameters(parameters)
    cols = _columns(columns, rows)
    flags = [_flag(r) for r in rows]
    failed = sum(1 for r in rows if str(r.get("status", "")).lower() == "failed")
    crossed = sum(1 for f in flags if f == "LIMIT CROSSED")
    answer = [(str(k), v) for k, v in answer]

    base = (f"the scenario '{scenario.network.title}' ({scenario.source_name})"
            if scenario is not None else "a base scenario")
    varied = ", ".join(k for k, _ in params) or "no parameter"
    job = [tag("p", f"A study of {_plural(len(rows), 'case')} of {base}, varying {varied}. "
               "Each case is a complete simulation with cvsim; the table gives one row per "
               "case with the values varied and the results collected.")]
    if answer:
        job.append(subsection("answer", "Answer", facts(answer)))
    job.append(bullets([f"{len(rows) - failed} of {len(rows)} cases ran to their end or stop "
                        "condition" + (f"; {failed} FAILED (marked in the table)" if failed
                                       else ""),
                        (f"{_plural(crossed, 'case')} CROSS{'ES' if crossed == 1 else ''} a "
                         "design limit (marked in the table)" if crossed
                         else "No case is marked as crossing a design limit"
                         + ("" if any("limits_crossed" in r for r in rows)
                            else " (the table has no limits column)"))], cls="outcome"))
    sections = [
        Section("job", "Job statement", join(job), new_page=False),
        Section("parameters", "Values varied", table(
            ["Key", "Values", "Count"],
            [[tag("code", k), ", ".join(number(x) for x in v), str(len(v))] for k, v in params],
            numeric={2}, widths=["35%", "55%", "10%"]) if params else tag(
            "p", "No parameters given."), new_page=False),
        Section("notes", "Notes and assumptions", bullets([str(n) for n in notes], prefix="N")
                if notes else tag("p", "No notes."), new_page=False),
        Section("plots", "Plots", _images(images)),
        Section("cases", "Cases", _cases(rows, cols, flags, keep), landscape=True),
        Section("software", "Software and traceability", _software(provenance, "study")),
        Section("sign-off", "Check and review", sign_off(), new_page=False),
    ]
    if extra_sections:
        sections = _with_sections(sections, extra_sections)
    if scenario is not None:
        sections.append(Section("inputs-given", "Base scenario file as given",
                                _given(scenario), appendix=True))
        sections.append(Section("inputs-used", "Base scenario: values as used",
                                _used(scenario.echo, scenario.network.atmosphere),
                                appendix=True, new_page=False))
    head = [("Base scenario", provenance.get("scenario", "-")),
            ("Scenario SHA-256", tag("span", provenance.get("scenario_sha256", "-"),
                                     cls="mono"))]
    head += answer
    head += [("Cases", f"{len(rows)}" + (f" ({failed} failed)" if failed else "")),
             ("Software", f"cvsim {provenance.get('cvsim', __version__)}, CoolProp "
                          f"{provenance.get('coolprop', '?')}"),
             ("Report written", _now())]
    return document(title=title, kind="cvsim calculation report: study of many runs",
                    summary_facts=head, sections=sections, footer_right=_head_right(provenance))


def _with_sections(sections: list, extra) -> list:
    """``sections`` with those of ``extra`` of the same id replaced, and the
    others of ``extra`` placed after the values varied (before the cases)."""
    given = {s.id: s for s in extra}
    place = [s.id for s in sections].index("parameters") + 1
    out = [given.pop(s.id, s) for s in sections]
    out[place:place] = list(given.values())
    return out


def write_sweep_report(path, title: str, **kwargs) -> Path:
    """Write :func:`render_sweep_report` to ``path`` (UTF-8); return the path."""
    path = Path(path)
    path.write_text(render_sweep_report(title, **kwargs), encoding="utf-8")
    return path


def _parameters(parameters) -> list[tuple[str, list]]:
    if not parameters:
        return []
    items = parameters.items() if hasattr(parameters, "items") else parameters
    return [(str(k), list(v) if isinstance(v, (list, tuple)) else [v]) for k, v in items]


def _columns(columns, rows) -> list[tuple[str, str]]:
    if columns is None:
        seen = {}
        for r in rows:
            for k in r:
                seen.setdefault(k, k)
        return list(seen.items())
    return [(c, c) if isinstance(c, str) else (str(c[0]), str(c[1])) for c in columns]


def _flag(row: dict) -> str:
    if str(row.get("status", "")).lower() == "failed":
        return "FAILED"
    lc = row.get("limits_crossed")
    if lc is not None and not (isinstance(lc, float) and math.isnan(lc)) and lc:
        return "LIMIT CROSSED"
    return ""


def _cases(rows, cols, flags, keep: int = 1) -> Html:
    """The table of cases; with more than :data:`MOST_COLUMNS` columns, split into
    parts that each repeat the case number, the flag and the first ``keep`` columns."""
    if not rows:
        return tag("p", "No cases.")
    flagged = any(flags)
    keep = max(0, min(keep, len(cols)))
    fixed = 1 + (1 if flagged else 0) + keep
    room = max(1, MOST_COLUMNS - fixed)
    rest = cols[keep:]
    parts = [rest[i:i + room] for i in range(0, len(rest), room)] or [[]]
    out = []
    if len(parts) > 1:
        out.append(tag("p", f"{len(cols) + 1} columns, set in {len(parts)} tables of at most "
                       f"{MOST_COLUMNS}; each repeats the case number"
                       + (", its flag" if flagged else "")
                       + (" and the values varied" if keep else "") + "."))
    for n, part in enumerate(parts, 1):
        shown = cols[:keep] + part
        head = (["Case"] + (["Flag"] if flagged else [])
                + [_breakable(h, "._") for _, h in shown])
        body = []
        for i, (r, f) in enumerate(zip(rows, flags), 1):
            cells = [str(i)]
            if flagged:
                cells.append(Html(f'<span class="state-crossed">✗ {esc(f)}</span>') if f
                             else "")
            cells += [number(r.get(k)) for k, _ in shown]
            body.append(cells)
        numeric = {0} | {j + (2 if flagged else 1) for j, (k, _) in enumerate(shown)
                         if all(isinstance(r.get(k), (int, float)) or r.get(k) is None
                                for r in rows)}
        cls = "wide" if len(head) > 8 else None
        caption = f"Cases, part {n} of {len(parts)}" if len(parts) > 1 else None
        out.append(table(head, body, numeric=numeric, cls=cls, caption=caption,
                         row_classes=["crossed" if f else None for f in flags]))
    return join(out)


def _images(images) -> Html:
    if not images:
        return tag("p", "No plots.")
    out = []
    for i, item in enumerate(images, 1):
        path, caption = (item if isinstance(item, (tuple, list))
                         else (item, Path(item).stem.replace("_", " ")))
        out.append(figure(path, caption, number=i, id=f"plot-{i}"))
    return join(out)


__all__ = ["render_run_report", "render_sweep_report", "write_run_report",
           "write_sweep_report"]
