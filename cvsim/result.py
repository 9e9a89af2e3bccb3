"""Results of a run: histories, totals, balances and the summary.

A :class:`Result` holds SI arrays. ``result["receiver.pressure"]`` is the
recorded history of one column (names as in :meth:`Result.columns`),
``result.time`` the recorded times; ``result.fine(...)`` the same at every
accepted solver step. :meth:`Result.summary` gives the figures engineers
look for, each with its time, the balances of the whole run and the caution.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .caution import CAUTION
from .contents import run_figures
from .histories import EXTREME_RTOL, Histories
from .flow.exponent import EXPONENT_ASSUMPTION
from .limits import check_vessel, first_time_at_or_below
from .model import ACC_PER_LINK, Model
from .rupture import add_rupture
from .solve import RawRun
from .zones import run_figures as zone_figures



@dataclass
class Result(Histories):
    """A run: its histories (:class:`~cvsim.histories.Histories`: network, status,
    message, columns, recorded and step data, events) and what was made of them."""

    stats: dict
    totals: dict             # per link: mass [kg], energy out [J], energy in [J]; per heat term
    balance: dict            # mass and energy closure of the whole run
    assumptions: list        # model choices, in words
    provenance: dict = field(default_factory=dict)  # versions, scenario hash
    limits: list = field(default_factory=list)      # LimitCheck per vessel limit
    warnings: list = field(default_factory=list)    # sentences: what to look at (chatter, ...)
    device_figures: dict = field(default_factory=dict)  # per link: figures of its device
    checks: list = field(default_factory=list)      # self-checks (cvsim.checks.Check)
    contents: dict = field(default_factory=dict)  # per vessel: phase, liquid share, level
    rupture: dict = field(default_factory=dict)   # per vessel: rupture screening figures

    @property
    def checks_failed(self) -> list:
        """The self-checks this run fails: its numbers must not be used."""
        return [c for c in self.checks if not c.passed]

    @property
    def limits_counted(self) -> list:
        """The design limits that count (met or crossed), without those shown for
        information only (:attr:`cvsim.limits.LimitCheck.informative`)."""
        return [c for c in self.limits if not c.informative]

    @property
    def limits_crossed(self) -> list:
        """The design limits this run crosses."""
        return [c for c in self.limits if c.crossed]

    def to_dataframe(self):
        """The recorded histories as a pandas DataFrame (SI units; needs pandas), with
        the caution and provenance in ``df.attrs``."""
        import pandas as pd
        df = pd.DataFrame(self.data, columns=[f"{n} [{u}]" for n, u, _ in self.columns])
        df.attrs.update({"caution": CAUTION, "title": self.network.title,
                         "provenance": dict(self.provenance)})
        return df

    # -------------------------------------------------------------- summary
    def targets(self) -> list[dict]:
        """Time each stop condition of the run was first met (``None``: not reached)."""
        out = []
        if not len(self.data):
            return out
        rows = self._all()
        t = rows[:, 0]
        for cond in self.network.run.stop:
            col = rows[:, self._col(f"{cond.node}.{cond.quantity}")]
            if cond.direction == "below":
                hit = first_time_at_or_below(t, col, cond.value)
            else:
                hit = first_time_at_or_below(t, -col, -cond.value)
            out.append({"condition": cond.describe(),
                        "time_s": hit if hit == hit else None})
        return out

    def summary(self) -> dict:
        """Figures for the summary (SI), plain data ready for JSON."""
        out = {
            "title": self.network.title,
            "status": self.status,
            "message": self.message,
            "end_time_s": float(self.time[-1]) if len(self.data) else 0.0,
            "vessels": {},
            "links": {},
            "heat": {},
            "warnings": list(self.warnings),
            "events": [{"time_s": float(t), "event": e} for t, e in self.events],
            "targets": self.targets(),
            "limits": [c.as_dict() for c in self.limits],
            "limits_crossed": len(self.limits_crossed),
            "balance": self.balance,
            "self_checks": [c.as_dict() for c in self.checks],
            "self_checks_failed": len(self.checks_failed),
            "solver": self.stats,
            "assumptions": self.assumptions,
            "provenance": self.provenance,
            "caution": CAUTION,
        }
        if not len(self.data):
            return out
        for v in self.network.vessels:
            n = v.name
            d = {}
            for q, unit in (("pressure", "Pa"), ("temperature", "K")):
                vmax, tmax = self.extreme(f"{n}.{q}", "max")
                vmin, tmin = self.extreme(f"{n}.{q}", "min")
                d[f"max_{q}_{unit}"] = vmax
                d[f"max_{q}_time_s"] = tmax
                d[f"min_{q}_{unit}"] = vmin
                d[f"min_{q}_time_s"] = tmin
            m = self[f"{n}.mass"]
            d["initial_mass_kg"] = float(m[0])
            d["final_mass_kg"] = float(m[-1])
            d["final_pressure_Pa"] = float(self[f"{n}.pressure"][-1])
            d["final_temperature_K"] = float(self[f"{n}.temperature"][-1])
            d.update(self._wall_extremes(n))
            q = self.fine(f"{n}.vapour_quality")
            if np.any(~np.isnan(q)):
                t_all = self._all()[:, 0]
                first = int(np.argmax(~np.isnan(q)))
                d["two_phase_from_s"] = float(t_all[first])
                d["min_vapour_quality"] = float(np.nanmin(q))
            if self.network.fluid.model == "mixture":
                # the composition at the start and at the end (mole fractions)
                comps = self.network.fluid.components
                for when, row in (("initial", 0), ("final", -1)):
                    d[f"{when}_mole_fractions"] = {
                        c: float(self[f"{n}.mole_fraction.{c}"][row]) for c in comps}
            d.update(self.contents.get(n, {}))
            d.update(self.rupture.get(n, {}))
            d.update(zone_figures(self, n))
            out["vessels"][n] = d
        for link in self.network.links:
            n = link.name
            flow = self[f"{n}.mass_flow"]
            fmax, tmax = self.extreme(f"{n}.mass_flow", "max")
            fmin, tmin = self.extreme(f"{n}.mass_flow", "min")
            tot = self.totals["links"][n]
            out["links"][n] = {
                "from": link.source, "to": link.target, "device": type(link.device).__name__,
                "mass_passed_kg": tot["mass_kg"],
                "max_mass_flow_kg_s": fmax, "max_mass_flow_time_s": tmax,
                "min_mass_flow_kg_s": fmin, "min_mass_flow_time_s": tmin,
                "final_mass_flow_kg_s": float(flow[-1]),
                "energy_added_by_device_J": tot["energy_in_J"] - tot["energy_out_J"],
            }
            out["links"][n].update(self.device_figures.get(n, {}))
        for name, q in self.totals["heat"].items():
            out["heat"][name] = {"heat_into_gas_J": q}
            out["heat"][name].update(self.totals.get("walls", {}).get(name, {}))
        return out

    def _wall_extremes(self, vessel: str) -> dict:
        """Lowest and highest metal temperature of a vessel's wall (any node), with
        the time and the column where each occurs; empty without a wall."""
        prefix = f"{vessel}.wall."
        names = [c[0] for c in self.columns if c[0].startswith(prefix)
                 and c[0].endswith("_temperature") and c[1] == "K"]
        if not names:
            return {}
        out = {}
        for kind in ("min", "max"):
            found = [(*self.extreme(c, kind), c) for c in names]
            found = [f for f in found if f[0] == f[0]]
            if not found:
                continue
            value, t, column = (min if kind == "min" else max)(found, key=lambda f: f[0])
            out[f"{kind}_wall_temperature_K"] = value
            out[f"{kind}_wall_temperature_time_s"] = t
            out[f"{kind}_wall_temperature_where"] = column[len(prefix):-len("_temperature")]
        return out


def build_result(model: Model, raw: RawRun, provenance: dict | None = None) -> Result:
    """Assemble a :class:`Result` from the integrator's output."""
    cols = raw.columns
    data = np.array(raw.rows, dtype=float) if raw.rows else np.zeros((0, len(cols)))
    fine = np.array(raw.fine_rows, dtype=float) if raw.fine_rows else np.zeros((0, len(cols)))
    totals, balance = _balances(model, raw)
    figures, warnings = _device_reports(model, raw)
    warnings = [w for _, term in model.heat_terms for w in term.warnings()] + warnings
    warnings += [w for zv in model.zoned.values() for w in zv.warnings()]
    warnings = list(getattr(raw, "warnings", ())) + warnings  # the solver's (recording)
    result = Result(network=model.network, status=raw.status, message=raw.message,
                    columns=cols, data=data, fine_data=fine, events=list(raw.events),
                    stats=dict(raw.stats), totals=totals, balance=balance,
                    assumptions=assumptions(model), provenance=dict(provenance or {}),
                    warnings=warnings, device_figures=figures)
    result.warnings += still_rising(result)
    _add_reviews(model, result)
    result.limits = check_limits(result)
    add_rupture(result)
    result.contents, liquid_full = run_figures(model, result)
    result.warnings += liquid_full
    result.checks = self_checks(result)
    result.warnings += [f"SELF-CHECK FAILED - do not use these results: {c.text()}"
                        for c in result.checks_failed]
    return result


#: a vessel's pressure still rising at the end of a completed run by more than this
#: fraction of its range over the last tenth of the run: the peak may come later
RISING_SHARE = 0.01


def still_rising(result: Result) -> list[str]:
    """Warnings for a run that ran to its end time (no stop) while a vessel's pressure
    was still at its highest and rising: its peak may lie beyond the end."""
    if result.status != "completed" or len(result.data) < 3:
        return []
    t = result.fine("time")
    t_end = float(t[-1])
    last = t >= t[0] + 0.9 * (t_end - t[0])
    out = []
    for v in result.vessel_names():
        p = result.fine(f"{v}.pressure")
        if not np.all(np.isfinite(p)):
            continue
        span = float(p.max() - p.min())
        tail = p[last]
        if span > 0.0 and tail.size > 1 and p[-1] >= p.max() - EXTREME_RTOL * abs(p[-1]) \
                and tail[-1] - tail[0] > RISING_SHARE * span:
            out.append(f"vessel '{v}': the pressure is still rising at the end of the run "
                       f"(t = {t_end:.6g} s), so its peak may come later: run longer "
                       "(run.end) or stop on a condition (run.stop_when)")
    return out


def self_checks(result: Result) -> list:
    """The self-checks of :mod:`cvsim.checks`, with a fresh fluid object."""
    from .checks import run_checks
    from .engines import fluid_for
    return run_checks(result, fluid_for(result.network.fluid))


def check_limits(result: Result) -> list:
    """Design-limit checks of every vessel that states limits (see :mod:`cvsim.limits`)."""
    out = []
    if len(result.data) == 0:
        return out
    rows = result._all()
    t = rows[:, 0]
    steps = result.fine_data if len(result.fine_data) else result.data
    for v in result.network.vessels:
        if v.limits is None:
            continue
        walls = {name: rows[:, i] for i, (name, unit, kind) in enumerate(result.columns)
                 if name.startswith(f"{v.name}.wall.") and unit == "K"}
        i_p = result._col(f"{v.name}.pressure")
        thickness = [h.thickness for h in v.heat if hasattr(h, "layers")]
        out += check_vessel(v.name, v.limits, result.network.atmosphere, t, rows[:, i_p],
                            rows[:, result._col(f"{v.name}.temperature")], walls,
                            steps=(steps[:, 0], steps[:, i_p]),
                            wall_thickness=max(thickness) if thickness else None)
    return out


def _device_reports(model: Model, raw: RawRun) -> tuple[dict, list[str]]:
    """Each device's figures and warnings from its switches over the run."""
    figures, warnings = {}, []
    for link, d in zip(model.links, model.devices):
        prefix = d.key("")
        initial = {k: v for k, v in raw.initial_discrete.items() if k.startswith(prefix)}
        log = [sw for sw in raw.switches if sw[1].startswith(prefix)]
        f, w = d.report(initial, log, raw.t_final)
        if f:
            figures[link.name] = f
        warnings += [f"link '{link.name}': {text}" for text in w]
    return figures, warnings


def _add_reviews(model: Model, result: Result) -> None:
    """Figures and warnings that devices and controllers draw from the recorded
    histories (a line's inventory, a fill's state of charge), merged into the
    link's figures (their notes appended) and the run's warnings."""
    if not len(result.data):
        return
    found = []
    for link, d in zip(model.links, model.devices):
        figures, warnings = d.review(result, link.name)
        found.append((link.name, figures, [f"link '{link.name}': {w}" for w in warnings]))
    for c in model.valve_controllers:
        found.append(c.review(result))
    for name, figures, warnings in found:
        if figures:
            mine = result.device_figures.setdefault(name, {})
            notes = mine.get("notes", []) + figures.pop("notes", [])
            mine.update(figures)
            if notes:
                mine["notes"] = notes
        result.warnings += warnings


def _balances(model: Model, raw: RawRun):
    """Mass and energy balance of the vessels over the whole run.

    closure = change of content - (inflow - outflow across the boundary + heat),
    relative to the largest of the initial content, final content and the
    throughput. Links between two vessels cancel; links to reservoirs cross the
    boundary. The energy a device adds (compressor work less aftercooling) is
    part of what it delivers. Heat terms with states of their own (walls) are
    inside the boundary: their stored energy counts with the content, and only
    the heat from outside crosses it.
    """
    links = {}
    heat = {}
    y0, y1 = raw.y_initial, raw.y_final
    if y0 is None or y1 is None:
        return {"links": {k.name: {"mass_kg": 0.0, "energy_out_J": 0.0, "energy_in_J": 0.0}
                          for k in model.links}, "heat": {}}, {}
    nv = model.n_vessels
    m0 = sum(y0[2 * i] for i in range(nv))
    m1 = sum(y1[2 * i] for i in range(nv))
    U0 = sum(y0[2 * i + 1] for i in range(nv))
    U1 = sum(y1[2 * i + 1] for i in range(nv))
    net_m = 0.0
    net_e = 0.0
    through_m = 0.0
    through_e = 0.0
    for k, (link, d) in enumerate(zip(model.links, model.devices)):
        j = model.i_acc_links + ACC_PER_LINK * k
        M, Eout, Ein = float(y1[j]), float(y1[j + 1]), float(y1[j + 2])
        links[link.name] = {"mass_kg": M, "energy_out_J": Eout, "energy_in_J": Ein}
        if d.target < nv:
            net_m += M
            net_e += Ein
        if d.source < nv:
            net_m -= M
            net_e -= Eout
        through_m += abs(M)
        through_e += abs(Ein) + abs(Eout)
    walls = {}
    stored = 0.0
    for k, (vi, term) in enumerate(model.heat_terms):
        q = float(y1[model.i_acc_heat + k])
        name = f"{term.vessel}.{term.name}"
        heat[name] = q
        own0 = y0[term.offset:term.offset + term.n_states]
        own1 = y1[term.offset:term.offset + term.n_states]
        q_out = term.heat_from_outside(own1, q)
        dE = term.stored_energy(own1) - term.stored_energy(own0)
        net_e += q_out - dE
        through_e += abs(q_out) + abs(dE)
        stored += dE
        if term.n_states:
            walls[name] = {"heat_from_outside_J": q_out, "energy_change_J": dE}
    res_m = (m1 - m0) - net_m
    res_e = (U1 - U0) - net_e
    ref_m = max(m0, m1, through_m, 1e-300)
    ref_e = max(abs(U0), abs(U1), through_e, 1e-300)
    balance = {
        "initial_mass_kg": m0, "final_mass_kg": m1, "net_mass_in_kg": net_m,
        "mass_residual_kg": res_m, "mass_closure_relative": abs(res_m) / ref_m,
        "initial_internal_energy_J": U0, "final_internal_energy_J": U1,
        "net_energy_in_J": net_e, "energy_residual_J": res_e,
        "energy_closure_relative": abs(res_e) / ref_e,
    }
    if walls:
        balance["wall_energy_change_J"] = stored
    return {"links": links, "heat": heat, "walls": walls}, balance


def assumptions(model: Model) -> list[str]:
    """The model choices of this run, in words (the assumption register)."""
    net = model.network
    f = net.fluid
    out = []
    if f.model == "real":
        out.append(f"Fluid properties: {f.name}, Helmholtz-energy equation of state (CoolProp "
                   "HEOS), equilibrium single- and two-phase states.")
    elif f.model == "mixture":
        from .mixture_contents import assumption_lines
        out += assumption_lines(f, net)
    else:
        fl = model.fluid
        out.append(f"Fluid properties: {f.name} as an ideal gas with constant heat capacities "
                   f"(M = {fl.molar_mass * 1000:.4f} g/mol, cp = {fl.cp:.1f} J/(kg K), "
                   f"gamma = {fl.gamma:.4f}).")
    out.append("Vessels are rigid and their contents well mixed (one uniform state per vessel"
               + ("; vessels held as separated zones: one state per zone" if model.zoned else "")
               + ").")
    out.append("A stream leaving a vessel carries the specific enthalpy of what it draws: the "
               "vessel's contents while single phase; with two phases present, saturated "
               "vapour" + (" (the vapour phase, with its own composition)"
                           if f.model == "mixture" else "")
               + (" (saturated liquid through links that draw liquid: "
                  + ", ".join(k.name for k in net.links if k.draws == "liquid") + ")"
                  if any(k.draws == "liquid" for k in net.links) else "")
               + (" (a side outlet (" + ", ".join(k.name for k in net.links
                                                  if k.outlet_height is not None)
                  + ") draws vapour while the level is below it and liquid while above it)"
                  if any(k.outlet_height is not None for k in net.links) else "")
               + "; an outlet draws the mixture itself as the level comes within 2 % of the "
               "volume of it (a regularisation, common practice, no source: cvsim.outlets).")
    kinds = {type(link.device).__name__ for link in net.links}
    if "Orifice" in kinds:
        models = sorted({link.device.flow_model for link in net.links
                         if type(link.device).__name__ == "Orifice"})
        for fm in models:
            if fm == "real-gas":
                out.append("Orifices (real-gas form): isentropic nozzle on the real equation of "
                           "state, choked at the maximum mass flux, times the discharge "
                           "coefficient.")
            else:
                out.append("Orifices (ideal-gas form): perfect-gas nozzle times the discharge "
                           f"coefficient; {EXPONENT_ASSUMPTION}.")
        out.append("Below a relative pressure difference of 1e-4 the orifice flow is taken "
                   "linear in the difference (regularisation of the square-root law).")
    if "FixedFlow" in kinds:
        out.append("Fixed flows are imposed whatever the pressures; with a delivery temperature "
                   "the stream enters at that temperature and the receiving vessel's pressure.")
    by_class: dict = {}
    for link, d in zip(net.links, model.devices):
        if type(link.device).__name__ not in ("Orifice", "FixedFlow"):
            by_class.setdefault(type(d), []).append(link.device)
    for cls, defs in by_class.items():
        out += cls.assumptions(defs)
    sequences = [c for c in model.controllers if c.kind == "sequence"]
    if sequences:
        out += type(sequences[0]).assumptions()
    if model.valve_controllers:
        out += model.valve_controllers[0].assumptions([c.d for c in model.valve_controllers])
    if not any(v.heat for v in net.vessels):
        out.append("No heat exchange with the vessel walls or surroundings (adiabatic vessels): "
                   "walls would damp the temperature swings.")
    else:
        terms = [term for _, term in model.heat_terms]
        if not all(term.n_states for term in terms):
            out.append("Heat terms as stated per vessel; no wall heat capacity unless a wall "
                       "is modelled.")
        out += [a for term in terms for a in term.assumptions()]
    out += [a for zv in model.zoned.values() for a in zv.assumptions()]
    return out
