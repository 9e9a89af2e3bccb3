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
import tempfile
from datetime import datetime
from pathlib import Path
from typing import TYPE_CHECKING

from . import __version__
from .contents import summary_lines
from .htmldoc import (Html, Section, bullets, document, esc, facts, figure, join, notice,
                      number, sign_off, subsection, table, tag, verbatim)
from .outputs import _bar, _degc, _limit_value, _margin, _t

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

def render_run_report(result: Result, scenario=None, plots=None) -> str:
    """The calculation report of one run, as a complete HTML page.

    Parameters
    ----------
    result : the run.
    scenario : the :class:`~cvsim.scenario.Scenario` it was run from (file text,
        echo of the inputs, hash); ``None`` for a network built in code.
    plots : PNG files to embed (e.g. those :func:`cvsim.plot.plot_run` wrote);
        ``None``: draw them now into a temporary folder.
    """
    if plots is None:
        with tempfile.TemporaryDirectory(prefix="cvsim-report-") as tmp:
            drawn = []
            if len(result.data) > 1:
                from .plot import plot_run
                drawn = plot_run(result, Path(tmp))
            return render_run_report(result, scenario, drawn)

    s = result.summary()
    prov = result.provenance
    net = result.network
    sections = [
        Section("job", "Job statement", _job(result, s, scenario), new_page=False),
        Section("inputs", "Inputs", _inputs(scenario, prov), new_page=False),
        Section("model", "Model choices and assumptions", _model(result, scenario)),
        Section("summary", "Results", _results(result, s)),
        Section("limits", "Design limits", _limits(result)),
        Section("plots", "Plots", _plots(plots)),
        Section("checks", "Checks on the calculation", _checks(result, s)),
        Section("software", "Software and traceability", _software(prov), new_page=False),
        Section("sign-off", "Check and review", sign_off()),
    ]
    crossed = len(result.limits_crossed)
    counted = len(result.limits_counted)
    limits = ("none stated in the scenario" if not result.limits else
              f"{counted} checked: {counted - crossed} met, {crossed} CROSSED")
    head = [("Scenario file", prov.get("scenario", "(network built in code)")),
            ("Scenario SHA-256", tag("span", prov.get("scenario_sha256", "-"), cls="mono")),
            ("Run", f"{_status_line(result)}; started {prov.get('run_started', '-')}"),
            ("Design limits", limits),
            ("Software", f"cvsim {prov.get('cvsim', __version__)}, CoolProp "
                         f"{prov.get('coolprop', '?')}" + (
                             f", thermopack {prov['thermopack']}" if "thermopack" in prov
                             else "")),
            ("Report written", _now())]
    lead = Html("")
    if not result.ok:
        lead = notice(f"The run FAILED at t = {_t(_end(result))}: "
                      f"{result.message.rstrip('.')}. The "
                      "results below cover only the part that was computed and must not be "
                      "used as the answer.", id="failed")
    return document(title=net.title, kind="cvsim calculation report: one run",
                    summary_facts=head, sections=sections, lead=lead,
                    footer_right=_head_right(prov))


def write_run_report(result: Result, path, scenario=None, plots=None) -> Path:
    """Write :func:`render_run_report` to ``path`` (UTF-8); return the path."""
    path = Path(path)
    path.write_text(render_run_report(result, scenario, plots), encoding="utf-8")
    return path


def _end(result: Result) -> float:
    return float(result.time[-1]) if len(result.data) else 0.0


def _status_line(result: Result) -> str:
    t = _t(_end(result))
    if result.status == "failed":
        return f"FAILED at t = {t}"
    if result.status == "stopped":
        return f"stopped at t = {t}"
    return f"{result.status} at t = {t}"


def _head_right(prov: dict) -> str:
    sha = prov.get("scenario_sha256", "")
    return f"cvsim {prov.get('cvsim', __version__)}" + (f" - scenario sha256 {sha[:16]}"
                                                       if sha else "")


def _t_exact(t: float) -> str:
    """A time in seconds to 6 digits, with minutes or hours beside it when longer."""
    exact = f"{t:.6g} s"
    short = _t(t)
    return exact if short.endswith(" s") else f"{exact} ({short})"


def _now() -> str:
    return datetime.now().astimezone().isoformat(timespec="seconds")


def _words(name: str) -> str:
    """``FixedFlow`` -> ``fixed flow``."""
    return re.sub(r"(?<!^)(?=[A-Z])", " ", name).lower()


def _plural(n: int, word: str) -> str:
    return f"{'one' if n == 1 else n} {word}{'' if n == 1 else 's'}"


# ------------------------------------------------------------------ job

def _job(result: Result, s: dict, scenario) -> Html:
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
    until = f"{_t(net.run.end_time)}" + (f", or until {' or '.join(stops)}" if stops else "")
    what = (f"cvsim {__version__} simulated how the gas in {_plural(len(net.vessels), 'vessel')} "
            f"({vessels}) changes with time while it flows "
            + (f"through {_plural(len(net.links), 'link')} ({links})" if net.links
               else "nowhere (no links: heat terms only)")
            + (f" to and from {_plural(len(net.reservoirs), 'reservoir')} at imposed pressure "
               f"and temperature ({', '.join(r.name for r in net.reservoirs)})"
               if net.reservoirs else "")
            + f". It integrated the mass and energy balance of each vessel, with {props}, "
            f"from t = 0 to {until}.")
    gives = ("The report gives the inputs as written and as used, the model choices and "
             "assumptions, the extremes of pressure, temperature and mass with their times, "
             "the mass passed through each link, the events of the run"
             + (", the design limits stated in the scenario, met or crossed" if result.limits
                else "")
             + ", plots, the mass and energy balances of the whole run, and the versions "
             "needed to repeat it.")
    out = [tag("p", what), tag("p", gives)]
    notes = _head_comment(scenario.source_text) if scenario is not None else ""
    if notes:
        out.append(tag("p", "Description at the head of the scenario file:", cls="muted"))
        out.append(tag("blockquote", notes))
    out.append(tag("h3", "Outcome at a glance"))
    out.append(bullets(_glance(result, s), cls="outcome"))
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


def _glance(result: Result, s: dict) -> list:
    atm = result.network.atmosphere
    out = [Html(f"<b>Run:</b> {esc(_status_line(result))}" + (
        f": {esc(result.message)}" if result.message else ""))]
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
            f"<b>{esc(name)}:</b> pressure highest {esc(_bar(v['max_pressure_Pa'], atm))} at "
            f"{esc(_t(v['max_pressure_time_s']))}, lowest {esc(_bar(v['min_pressure_Pa'], atm))} "
            f"at {esc(_t(v['min_pressure_time_s']))};"
            f" gas temperature lowest {esc(_degc(v['min_temperature_K']))} at "
            f"{esc(_t(v['min_temperature_time_s']))}, highest "
            f"{esc(_degc(v['max_temperature_K']))} at {esc(_t(v['max_temperature_time_s']))}."))
    if result.checks:
        bad = result.checks_failed
        out.append(Html(
            f"<b>Self-checks:</b> {len(result.checks)} recomputed from the recorded histories "
            "(state residuals, first law of each vessel, entropy produced by links and heat "
            "terms): " + (f'<span class="state-crossed">{len(bad)} FAILED - do not use these '
                          "results</span>." if bad else "all passed.")))
    return out


# --------------------------------------------------------------- inputs

def _inputs(scenario, prov: dict) -> Html:
    if scenario is None:
        return tag("p", "This run was built in code, not read from a scenario file, so "
                   "there is no file text and no echo of inputs to show. The network's "
                   "values are those of the Python objects the caller built.")
    out = [tag("p", "The scenario file exactly as read (before any change made on the "
               "command line), then every value as cvsim used it: converted to SI units "
               "(pressures absolute), with defaults and computed values marked.")]
    if scenario.overrides:
        out.append(subsection("inputs-changed", "Values changed for this run",
                              join([tag("p", "These values replace those in the file below "
                                         "(command line --set or Python overrides):"),
                                    table(["Key", "Value given"],
                                          [[tag("code", k), str(v)]
                                           for k, v in scenario.overrides.items()])])))
    given = join([tag("p", Html(f"File <code>{esc(scenario.source_name)}</code>, SHA-256 "
                                f'<span class="mono">{esc(scenario.sha256)}</span>.')),
                  verbatim(scenario.source_text)])
    out.append(subsection("inputs-given", "Scenario file as given", given))
    out.append(subsection("inputs-used", "Values as used (SI)", _echo_table(scenario.echo)))
    return join(out)


def _echo_table(echo) -> Html:
    rows, classes = [], []
    group = None
    for r in echo:
        parts = str(r.key).split(".")
        g = ".".join(parts[:2]) if parts[0] in ("vessels", "reservoirs", "links") else parts[0]
        if g != group and (len(parts) > 1):
            rows.append(("group", g))
            classes.append(None)
        group = g if len(parts) > 1 else None
        rows.append([_breakable(str(r.key)), str(r.given), r.used, r.note or ""])
        classes.append("warning" if "warning" in (r.note or "") else None)
    return table(["Key", "As given", "Used (SI)", "Note"], rows, row_classes=classes,
                 cls="echo", widths=["33%", "24%", "19%", "24%"])


def _breakable(key: str, after: str = ".") -> Html:
    """A key that may wrap after its dots (and the other characters in ``after``)."""
    return Html(re.sub(f"([{re.escape(after)}])", r"\1<wbr>", str(esc(key))))


# ---------------------------------------------------------------- model

def _model(result: Result, scenario) -> Html:
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
    step = "no limit" if math.isinf(r.max_step) else _t(r.max_step)
    rows.append(["Integration", f"{r.method}, relative tolerance {r.rtol:g}, absolute "
                 f"tolerance {r.atol_scale:g} of each state's initial size, largest step "
                 f"{step}; integrated piecewise between breakpoints, switches and stops "
                 "located as events"])
    rows.append(["Recorded histories", f"every {_t(r.record_every)} and at every event; "
                 "extremes are taken over every accepted solver step"])
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
    """Warnings from reading the scenario (echo notes) and any the result carries."""
    out = []
    if scenario is not None:
        for r in scenario.echo:
            for note in (r.note or "").split("; "):
                if note.startswith("warning"):
                    out.append(f"{r.key}: {note.split(':', 1)[-1].strip()}")
    for w in list(getattr(result, "warnings", None) or []):
        out.append(str(w))
    return out


# -------------------------------------------------------------- results

def _results(result: Result, s: dict) -> Html:
    atm = result.network.atmosphere
    out = [tag("p", f"Run {_status_line(result)}: {result.message}. Pressures are absolute "
               f"(bar a) with the gauge value (bar g) relative to the scenario's atmosphere of "
               f"{atm / 1e5:.5g} bar a. Extremes are over every accepted solver step.")]
    if not s["vessels"]:
        out.append(tag("p", "No states were recorded."))
        return join(out)
    rows = []
    for name, v in s["vessels"].items():
        p, T, m = (result[f"{name}.{q}"] for q in ("pressure", "temperature", "mass"))
        mmax, tmmax = result.extreme(f"{name}.mass", "max")
        mmin, tmmin = result.extreme(f"{name}.mass", "min")
        rows.append(("group", f"vessel {name}"))
        rows.append(["pressure", _bar(p[0], atm), _bar(v["max_pressure_Pa"], atm),
                     _t(v["max_pressure_time_s"]), _bar(v["min_pressure_Pa"], atm),
                     _t(v["min_pressure_time_s"]), _bar(v["final_pressure_Pa"], atm)])
        rows.append(["gas temperature", _degc(T[0]), _degc(v["max_temperature_K"]),
                     _t(v["max_temperature_time_s"]), _degc(v["min_temperature_K"]),
                     _t(v["min_temperature_time_s"]), _degc(v["final_temperature_K"])])
        rows.append(["mass", f"{m[0]:.5g} kg", f"{mmax:.5g} kg", _t(tmmax),
                     f"{mmin:.5g} kg", _t(tmmin), f"{v['final_mass_kg']:.5g} kg"])
    body = [table(["Quantity", "Start", "Highest", "at", "Lowest", "at", "End"],
                  rows, numeric={3, 5}, widths=["15%", "15%", "15%", "10%", "15%", "10%", "20%"])]
    for name, v in s["vessels"].items():
        if "two_phase_from_s" in v:
            body.append(tag("p", f"{name}: two phases present from {_t(v['two_phase_from_s'])}"
                            f" (lowest vapour quality {v['min_vapour_quality']:.4f})."))
        body += [tag("p", f"{name}: {' '.join(line.split())}.")
                 for line in summary_lines(v, _t)]
    out.append(subsection("summary-vessels", "Vessels", join(body)))
    if s.get("targets"):
        out.append(subsection("summary-targets", "Stop conditions", table(
            ["Condition", "First met at"],
            [[t["condition"], _t(t["time_s"]) if t.get("time_s") is not None else "not reached"]
             for t in s["targets"]])))
    if s["links"]:
        rows = [[name, f"{k['from']} → {k['to']}", _words(k["device"]),
                 f"{k['mass_passed_kg']:.5g}",
                 f"{k['max_mass_flow_kg_s']:.4g}", _t(k["max_mass_flow_time_s"]),
                 f"{k['min_mass_flow_kg_s']:.4g}", _t(k["min_mass_flow_time_s"]),
                 f"{k['energy_added_by_device_J'] / 1e3:.5g}"]
                for name, k in s["links"].items()]
        # what each device says of its run (a relief valve's cycles, a fill's state of
        # charge and limits, a line's volume), as in summary.txt
        notes = [tag("p", f"{name}: {note}.") for name, k in s["links"].items()
                 for note in k.get("notes", [])]
        out.append(subsection("summary-links", "Links (flow positive from source to target)",
                              join([table(["Link", "Direction", "Device", "Mass passed [kg]",
                                           "Highest flow [kg/s]", "at", "Lowest flow [kg/s]",
                                           "at", "Energy added by the device [kJ]"],
                                          rows, numeric={3, 4, 5, 6, 7, 8})] + notes)))
    if s["heat"]:
        out.append(subsection("summary-heat", "Heat into the gas", table(
            ["Heat term", "Heat into the gas over the run [kJ]"],
            [[n, f"{h['heat_into_gas_J'] / 1e3:.5g}"] for n, h in s["heat"].items()],
            numeric={1})))
    events = s["events"]
    out.append(subsection("summary-events", "Events", table(
        ["Time", "Event"], [[_t_exact(e["time_s"]), e["event"]] for e in events],
        numeric={0}, widths=["22%", "78%"]) if events else tag("p", "No events.")))
    further = {k: v for k, v in s.items() if k not in SUMMARY_SHOWN}
    if further:
        out.append(subsection("summary-further", "Further results", table(
            ["Figure", "Value (SI)"],
            [[k, tag("code", json.dumps(v, default=str))] for k, v in further.items()])))
    return join(out)


def _limits(result: Result) -> Html:
    if not result.limits:
        return tag("p", "No design limits are stated in the scenario, so this run was not "
                   "checked against any (design pressure, minimum design metal temperature, "
                   "maximum temperature, depressuring target). State them under 'limits:' of "
                   "each vessel to have them checked.")
    atm = result.network.atmosphere
    crossed = result.limits_crossed
    counted = result.limits_counted
    rows, classes = [], []
    for i, c in enumerate(result.limits, 1):
        state = (esc("for information") if c.informative else
                 Html('<span class="state-crossed">✗ CROSSED</span>') if not c.met else
                 Html('<span class="state-met">✓ met</span>'))
        when = _t(c.time) if c.unit != "s" and c.time == c.time else "-"
        practice = c.practice + (f"; {c.note}" if c.note else "")
        rows.append([str(i), state, c.vessel, c.name, _limit_value(c.limit, c.unit, atm),
                     _limit_value(c.actual, c.unit, atm), when, _margin(c.margin, c.unit),
                     practice])
        classes.append("crossed" if c.crossed else None)
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
                          "when it is crossed. " + verdict))
    return join([intro, table(["#", "Outcome", "Vessel", "Check", "Limit", "Reached", "at",
                               "Margin", "Governing practice and notes"], rows,
                              row_classes=classes, numeric={0, 6, 7},
                              widths=["4%", "11%", "10%", "19%", "9%", "9%", "8%", "8%", "22%"])])


def _plots(paths) -> Html:
    if not paths:
        return tag("p", "No plots: the run recorded fewer than two points.")
    out = []
    for i, p in enumerate(paths, 1):
        stem = Path(p).stem
        out.append(figure(p, PLOT_CAPTIONS.get(stem, stem.replace("_", " ")), number=i,
                          id=f"plot-{stem}"))
    return join(out)


# --------------------------------------------------------------- checks

def _checks(result: Result, s: dict) -> Html:
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

def _software(prov: dict, what: str = "run") -> Html:
    rows = [(label, prov[key]) for key, label in VERSION_LABELS if key in prov]
    rows.append(("matplotlib (plots)", _dist_version("matplotlib")))
    rows.append(("Platform", platform.platform()))
    if "scenario" in prov:
        rows.append(("Scenario file", tag("code", prov["scenario"])))
        rows.append(("Scenario SHA-256", tag("span", prov.get("scenario_sha256", "-"),
                                             cls="mono")))
    for k, v in (prov.get("overrides") or {}).items():
        rows.append(("Changed for this run", tag("code", f"{k} = {v}")))
    if "run_started" in prov:
        rows.append(("Run started", prov["run_started"]))
    shown = {k for k, _ in VERSION_LABELS} | {"scenario", "scenario_sha256", "overrides",
                                               "run_started"}
    rows += [(k, str(v)) for k, v in prov.items() if k not in shown]
    rows.append(("Report written", _now()))
    repeat = (f"To repeat the {what}: the same scenario file (same SHA-256), the same changes, "
              "and the versions above; small differences in the last digits can come from "
              "other library versions.")
    return join([facts(rows), tag("p", repeat, cls="muted")])


def _dist_version(name: str) -> str:
    from importlib.metadata import PackageNotFoundError, version
    try:
        return version(name)
    except PackageNotFoundError:
        return "not installed"


# ==================================================================== sweeps

def render_sweep_report(title: str, scenario=None, parameters=None, rows=(), columns=None,
                        images=(), notes=(), provenance: dict | None = None,
                        extra_sections=()) -> str:
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
    extra_sections  further :class:`~cvsim.htmldoc.Section` s of a kind of study
                (an uncertainty study's results): one whose id is that of a
                section below replaces it, the others follow the values varied

    Section ids: ``job``, ``parameters``, ``cases``, ``plots``, ``notes``,
    ``inputs`` (``inputs-given``, ``inputs-used``), ``software``,
    ``sign-off``; the caution ``caution-top`` and ``caution-end``.
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

    base = (f"the scenario '{scenario.network.title}' ({scenario.source_name})"
            if scenario is not None else "a base scenario")
    varied = ", ".join(k for k, _ in params) or "no parameter"
    job = [tag("p", f"A study of {_plural(len(rows), 'case')} of {base}, varying {varied}. "
               "Each case is a complete simulation with cvsim; the table gives one row per "
               "case with the values varied and the results collected."),
           bullets([f"{len(rows) - failed} of {len(rows)} cases ran to their end or stop "
                    "condition" + (f"; {failed} FAILED (marked in the table)" if failed else ""),
                    (f"{_plural(crossed, 'case')} CROSS{'ES' if crossed == 1 else ''} a design "
                     "limit (marked in the table)" if crossed
                     else "No case is marked as crossing a design limit"
                     + ("" if any("limits_crossed" in r for r in rows)
                        else " (the table has no limits column)"))], cls="outcome")]
    sections = [
        Section("job", "Job statement", join(job), new_page=False),
        Section("parameters", "Values varied", table(
            ["Key", "Values", "Count"],
            [[tag("code", k), ", ".join(number(x) for x in v), str(len(v))] for k, v in params],
            numeric={2}, widths=["35%", "55%", "10%"]) if params else tag(
            "p", "No parameters given."), new_page=False),
        Section("cases", "Cases", _cases(rows, cols, flags), new_page=False),
        Section("plots", "Plots", _images(images)),
        Section("notes", "Notes and assumptions", bullets([str(n) for n in notes], prefix="N")
                if notes else tag("p", "No notes."), new_page=False),
        Section("inputs", "Base scenario", _inputs(scenario, provenance)),
        Section("software", "Software and traceability", _software(provenance, "study"),
                new_page=False),
        Section("sign-off", "Check and review", sign_off()),
    ]
    if extra_sections:
        sections = _with_sections(sections, extra_sections)
    head = [("Base scenario", provenance.get("scenario", "-")),
            ("Scenario SHA-256", tag("span", provenance.get("scenario_sha256", "-"),
                                     cls="mono")),
            ("Cases", f"{len(rows)}" + (f" ({failed} failed)" if failed else "")),
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


def _cases(rows, cols, flags) -> Html:
    if not rows:
        return tag("p", "No cases.")
    flagged = any(flags)
    head = ["Case"] + (["Flag"] if flagged else []) + [_breakable(h, "._") for _, h in cols]
    body = []
    for i, (r, f) in enumerate(zip(rows, flags), 1):
        cells = [str(i)]
        if flagged:
            cells.append(Html(f'<span class="state-crossed">✗ {esc(f)}</span>') if f else "")
        cells += [number(r.get(k)) for k, _ in cols]
        body.append(cells)
    numeric = {0} | {j + (2 if flagged else 1) for j, (k, _) in enumerate(cols)
                     if all(isinstance(r.get(k), (int, float)) or r.get(k) is None
                            for r in rows)}
    cls = "wide" if len(head) > 8 else None
    return table(head, body, numeric=numeric, cls=cls,
                 row_classes=["crossed" if f else None for f in flags])


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
