"""Self-checks of a run that a wrong model would fail.

The bookkeeping integrals of :mod:`cvsim.model` integrate the same terms as the
states, so their closure proves only that the integrator kept a linear invariant.
The checks here are computed afterwards from the recorded histories, with a fresh
fluid object and formulas written independently of the model's right-hand side:

* **state residual** of every vessel at every recorded point and solver step: the
  recorded temperature and the density m/V, put back into the equation of state,
  must give the conserved specific internal energy U/m:
  |u(m/V, T) - U/m| / (|U/m| + R T_c) <= STATE_TOLERANCE;
* **first law of every vessel, recomputed**: the change of its internal energy
  against the time integral of the enthalpy streams and heat, where each stream's
  specific enthalpy is recomputed from the recorded state of the node it leaves
  (vapour or liquid at the saturation pressure when two phases are present, the
  node's own state otherwise; a forced flow with a delivery temperature brings
  h(p, T_delivery)) and integrated by the trapezoidal rule over the recorded
  points and steps. The tolerance is three times the Richardson estimate of the
  quadrature error (the rule on every second point against the rule on all) plus
  1e-6 of the energy turned over;
* **components of every vessel** (mixture runs): the component masses sum to the
  vessel's mass at every recorded point (|sum m_i - m| / m <= COMPONENT_TOLERANCE), and
  the change of each component's mass against the time integral of the component
  streams, mdot w_i with the mass fractions w_i of what each stream draws recomputed
  from the recorded state of the node it leaves (the vapour or liquid phase of a
  fresh flash of the recorded density, temperature and composition), with the
  energy check's quadrature tolerance plus a tenth of the run's relative tolerance on
  the component's content (for a component that mostly stays in the vessel);
* **entropy produced** by every passive link (orifices and valves: adiabatic
  throttling, Gibbs's inequality) at every recorded point,
  sigma = |mdot| (s(p_down, h_up) - s_up) >= 0, and by every heat term that states
  where its heat comes from, sigma = Q (1/T_contents - 1/T_source) >= 0 (Clausius).
  Forced flows (compressors, pumps) add work and are not checked this way.

Each check reports its worst value, where and when, its tolerance and whether it
passed. A run whose check fails carries a warning: its numbers must not be used.

References: first law for a control volume and the entropy balance, e.g. Cengel &
Boles, *Thermodynamics: An Engineering Approach*, 9th ed., ch. 5 and 7 (sec. 7-13,
entropy generation); trapezoidal rule error and Richardson extrapolation, e.g.
Press et al., *Numerical Recipes*, 3rd ed., sec. 4.2-4.3.
"""
from __future__ import annotations

import math
from dataclasses import asdict, dataclass

import numpy as np

from .errors import StateError

#: largest relative state residual accepted at a recorded point (the state solve
#: itself guarantees 1e-10 and usually 1e-13)
STATE_TOLERANCE = 1e-8
#: a link may produce entropy down to -ENTROPY_TOLERANCE |mdot| R (round-off)
ENTROPY_TOLERANCE = 1e-7
#: a heat term may produce entropy down to -HEAT_ENTROPY_TOLERANCE |Q| / T
HEAT_ENTROPY_TOLERANCE = 1e-9
#: the energy check's floor, relative to the energy turned over
ENERGY_FLOOR = 1e-6
#: rows checked for entropy per link at most (evenly spread; (p, h) flashes cost)
ENTROPY_ROWS = 400
#: largest |sum of component masses - mass| / mass accepted at a recorded point
COMPONENT_TOLERANCE = 1e-9
#: the component balance allows this share of the integrator's relative tolerance on
#: the component's content (the solver controls each state's error as rtol |y|)
COMPONENT_CONTENT_SHARE = 0.1


@dataclass
class Check:
    """One self-check: ``value`` against ``tolerance`` (both relative, as ``what`` says)."""

    name: str
    what: str
    value: float
    tolerance: float
    passed: bool
    detail: str = ""

    def as_dict(self) -> dict:
        return asdict(self)

    def text(self) -> str:
        verdict = "passed" if self.passed else "FAILED"
        return (f"{self.name}: {verdict} ({self.what} {self.value:.3g}, tolerance "
                f"{self.tolerance:.3g}){'; ' + self.detail if self.detail else ''}")


def run_checks(result, fluid) -> list[Check]:
    """All self-checks of a run (see the module docstring); ``fluid`` is a fresh
    fluid object of the run's fluid (not the one the model used)."""
    if len(result.data) < 2:
        return []
    h = _Histories(result, fluid)
    out = []
    out += state_residuals(h)
    out += energy_balances(h)
    if h.mixture:
        out += component_balances(h)
    out += link_entropy(h)
    out += heat_entropy(h)
    return out


class _Histories:
    """Recorded columns over every recorded point and accepted step, and the
    enthalpy and entropy of the streams, recomputed with a fresh fluid object."""

    def __init__(self, result, fluid):
        self.result = result
        self.fluid = fluid
        self.net = result.network
        self.t = result.fine("time")
        self.names = set(result.names())
        self.vessels = {v.name: v for v in self.net.vessels}
        self.reservoirs = {r.name: r for r in self.net.reservoirs}
        self._drawn: dict = {}
        self._cols: dict = {}
        #: a mixture run: component names; each row's composition is recorded per vessel
        self.mixture = getattr(fluid, "model", "") == "mixture"
        self.components = fluid.names if self.mixture else ()

    def fluid_at(self, node: str, i: int):
        """The fluid object of a node's contents at row ``i``: the run's fluid, or for a
        mixture a fluid of the vessel's recorded composition (the reservoir's supply)
        on the fresh engine."""
        if not self.mixture:
            return self.fluid
        e = self.fluid.engine
        if node in self.vessels:
            z = np.array([self.col(f"{node}.mole_fraction.{n}")[i] for n in self.components])
            return e.view(z / z.sum())
        r = self.reservoirs[node]
        return e.fluid(r.composition) if r.composition is not None else self.fluid

    def vessel_state(self, node: str, i: int):
        """The recorded state of a vessel re-solved from its density and temperature."""
        rho = self.col(f"{node}.mass")[i] / self.vessels[node].volume
        return self.fluid_at(node, i).state_dt(rho, self.col(f"{node}.temperature")[i])

    def col(self, name: str) -> np.ndarray:
        got = self._cols.get(name)
        if got is None:
            got = self._cols[name] = self.result.fine(name)
        return got

    def drawn(self, node: str, draws: str, i: int):
        """(h, s, p) of what leaves ``node`` through an outlet that draws ``draws``
        at row ``i``, recomputed from the recorded state."""
        return self.stream(node, draws, i)[:3]

    def stream(self, node: str, draws: str, i: int):
        """(h, s, p, fluid, mass fractions or None) of what leaves ``node`` through an
        outlet that draws ``draws`` at row ``i``, recomputed from the recorded state;
        ``fluid`` is the stream's own (its composition, for a mixture)."""
        key = (node, draws, i)
        got = self._drawn.get(key)
        if got is not None:
            return got
        if self.mixture:
            got = self._mixture_stream(node, draws, i)
            self._drawn[key] = got
            return got
        f = self.fluid
        p = self.col(f"{node}.pressure")[i]
        T = self.col(f"{node}.temperature")[i]
        if node in self.vessels:
            q = self.col(f"{node}.vapour_quality")[i]
            if q == q:  # two phases present
                st = (f.saturated_liquid_at_p(p) if draws == "liquid"
                      else f.saturated_vapour_at_p(p))
            else:
                rho = self.col(f"{node}.mass")[i] / self.vessels[node].volume
                st = f.state_dt(rho, T)
        else:
            st = f.state_pt(p, T)
        got = (st.h, st.s, p, f, None)
        self._drawn[key] = got
        return got

    def _mixture_stream(self, node: str, draws: str, i: int):
        p = self.col(f"{node}.pressure")[i]
        if node in self.vessels:
            st = self.vessel_state(node, i)
            if st.two_phase:
                phase = st.liquid if draws == "liquid" else st.vapour
                w = st.x if draws == "liquid" else st.y
                f = self.fluid.engine.view(w)
                return (phase.h, phase.s, p, f, f.mass_fractions())
        else:
            st = self.fluid_at(node, i).state_pt(p, self.col(f"{node}.temperature")[i])
        return (st.h, st.s, p, st.fluid, st.fluid.mass_fractions())


# ------------------------------------------------------------------ states

def state_residuals(h: _Histories) -> list[Check]:
    out = []
    for name, v in h.vessels.items():
        m = h.col(f"{name}.mass")
        T = h.col(f"{name}.temperature")
        u = h.col(f"{name}.specific_internal_energy")
        worst, at = 0.0, math.nan
        for i in range(len(h.t)):
            if not (m[i] > 0.0 and T[i] == T[i] and u[i] == u[i]):
                continue
            try:
                st = h.vessel_state(name, i)
            except StateError:
                worst, at = math.inf, h.t[i]
                break
            scale = st.fluid.energy_scale if h.mixture else h.fluid.energy_scale
            r = abs(st.u - u[i]) / (abs(u[i]) + scale)
            if r > worst:
                worst, at = r, h.t[i]
        out.append(Check(
            f"state of vessel '{name}'",
            "largest |u(m/V, T) - U/m| / (|U/m| + R Tc)", worst, STATE_TOLERANCE,
            worst <= STATE_TOLERANCE,
            f"at t = {at:.6g} s" if at == at else ""))
    return out


# ------------------------------------------------------------------ energy

def _stream_rates(h: _Histories, vessel: str) -> np.ndarray:
    """Enthalpy streams into ``vessel`` minus those out [W] at each row."""
    from .network import FixedFlow
    n = len(h.t)
    rate = np.zeros(n)
    for link in h.net.links:
        if vessel not in (link.source, link.target):
            continue
        mdot = h.col(f"{link.name}.mass_flow")
        delivery = (link.device.delivery_temperature
                    if isinstance(link.device, FixedFlow) else None)
        for i in range(n):
            md = mdot[i]
            if md == 0.0 or md != md:
                continue
            if md > 0.0:
                h_up, _, _, f_up, _ = h.stream(link.source, link.draws, i)
                h_in = h_up
                if delivery is not None:
                    p_to = h.col(f"{link.target}.pressure")[i]
                    h_in = f_up.state_pt(p_to, delivery).h
                if link.source == vessel:
                    rate[i] -= md * h_up
                if link.target == vessel:
                    rate[i] += md * h_in
            else:
                h_up, _, _ = h.drawn(link.target, "vapour", i)
                if link.target == vessel:
                    rate[i] += md * h_up      # md < 0: out of the target
                if link.source == vessel:
                    rate[i] -= md * h_up      # into the source
    return rate


def _trapezoid(t: np.ndarray, y: np.ndarray) -> float:
    return float(np.sum(0.5 * (y[1:] + y[:-1]) * np.diff(t)))


def _closure(t: np.ndarray, rate: np.ndarray, change) -> tuple[float, float, float, float]:
    """(residual, tolerance, integral, turned over) of ``change(ok)`` (the change of a
    content over the finite rows ``ok``) against the trapezoidal integral of ``rate``;
    tolerance ENERGY_FLOOR + 3 x the Richardson estimate (every second point)."""
    ok = np.isfinite(rate)
    tt, yy = t[ok], rate[ok]
    if len(tt) < 3:
        return math.nan, math.nan, math.nan, math.nan
    full = _trapezoid(tt, yy)
    half = _trapezoid(tt[::2], yy[::2]) if len(tt) % 2 == 1 else _trapezoid(
        np.append(tt[:-1:2], tt[-1]), np.append(yy[:-1:2], yy[-1]))
    d = change(ok)
    turned = max(abs(d), _trapezoid(tt, np.abs(yy)), 1e-300)
    return abs(d - full) / turned, ENERGY_FLOOR + 3.0 * abs(full - half) / turned, full, turned


def energy_balances(h: _Histories) -> list[Check]:
    out = []
    t = h.t
    for name in h.vessels:
        m = h.col(f"{name}.mass")
        u = h.col(f"{name}.specific_internal_energy")
        rate = _stream_rates(h, name)
        heat = np.zeros(len(t))
        for col in h.names:
            if col.startswith(f"{name}.heat.") and col.count(".") == 2:
                heat += np.nan_to_num(h.col(col))
        total = rate + heat
        ok = np.isfinite(total)
        if ok.sum() < 3:
            continue
        dU = m[ok][-1] * u[ok][-1] - m[ok][0] * u[ok][0]
        residual, tol, full, _ = _closure(t, total, lambda ok_: dU)
        out.append(Check(
            f"first law of vessel '{name}'",
            "|change of U - integral of streams and heat| / energy turned over",
            residual, tol, residual <= tol,
            f"change {dU / 1e3:.6g} kJ, streams and heat {full / 1e3:.6g} kJ (enthalpies "
            "recomputed from the recorded states)"))
    return out


# ------------------------------------------------------------------ entropy

# ------------------------------------------------------------------ components

def _component_rates(h: _Histories, vessel: str) -> np.ndarray:
    """Component mass streams into ``vessel`` minus those out [kg/s], rows x components,
    with the mass fractions of each stream recomputed from the recorded states."""
    n = len(h.t)
    rate = np.zeros((n, len(h.components)))
    for link in h.net.links:
        if vessel not in (link.source, link.target):
            continue
        mdot = h.col(f"{link.name}.mass_flow")
        for i in range(n):
            md = mdot[i]
            if md == 0.0 or md != md:
                continue
            up, draws = (link.source, link.draws) if md > 0.0 else (link.target, "vapour")
            w = h.stream(up, draws, i)[4]
            if link.target == vessel:
                rate[i] += md * w
            if link.source == vessel:
                rate[i] -= md * w
    return rate


def component_balances(h: _Histories) -> list[Check]:
    """The component masses of each vessel sum to its mass at every recorded point, and
    each component's change closes against the recomputed component streams."""
    out = []
    for name in h.vessels:
        m = h.col(f"{name}.mass")
        masses = np.array([h.col(f"{name}.component_mass.{c}") for c in h.components]).T
        total = masses.sum(axis=1)
        ok = m > 0.0
        dev = np.abs(total[ok] - m[ok]) / m[ok] if ok.any() else np.zeros(1)
        k = int(np.argmax(dev))
        worst = float(dev[k])
        out.append(Check(
            f"component masses of vessel '{name}'",
            "largest |sum of component masses - mass| / mass", worst, COMPONENT_TOLERANCE,
            worst <= COMPONENT_TOLERANCE, f"at t = {h.t[ok][k]:.6g} s" if ok.any() else ""))
        rates = _component_rates(h, name)
        worst, where, tol_at = 0.0, "", COMPONENT_TOLERANCE
        rtol = h.net.run.rtol
        for j, c in enumerate(h.components):
            col = masses[:, j]
            residual, tol, full, turned = _closure(
                h.t, rates[:, j], lambda ok_, col=col: col[ok_][-1] - col[ok_][0])
            # a component that stays mostly in the vessel (its content >> what passes)
            # carries the integrator's error on its content: allow a tenth of rtol of it
            tol += COMPONENT_CONTENT_SHARE * rtol * float(np.max(np.abs(col))) / turned
            if residual == residual and residual / tol > worst / tol_at:
                worst, tol_at = residual, tol
                where = (f"{c}: change {1e3 * (col[-1] - col[0]):.6g} g, streams "
                         f"{1e3 * full:.6g} g (mass fractions recomputed from the recorded "
                         "states)")
        out.append(Check(
            f"components of vessel '{name}'",
            "largest |change of a component's mass - integral of its streams| / mass "
            "turned over", worst, tol_at, worst <= tol_at, where))
    return out


def _sample(n: int, k: int) -> range | np.ndarray:
    if n <= k:
        return range(n)
    return np.unique(np.linspace(0, n - 1, k).round().astype(int))


def link_entropy(h: _Histories) -> list[Check]:
    from .network import FixedFlow
    out = []
    for link in h.net.links:
        if isinstance(link.device, FixedFlow):
            continue
        mdot = h.col(f"{link.name}.mass_flow")
        worst, at, flowing, skipped = math.inf, math.nan, 0, 0
        for i in _sample(len(h.t), ENTROPY_ROWS):
            md = mdot[i]
            if md == 0.0 or md != md:
                continue
            up, down, draws = ((link.source, link.target, link.draws) if md > 0.0 else
                               (link.target, link.source, "vapour"))
            h_up, s_up, _, f_up, _ = h.stream(up, draws, i)
            p_down = h.col(f"{down}.pressure")[i]
            R = 8.314462618 / f_up.molar_mass
            try:
                s_down = f_up.state_ph(p_down, h_up).s
            except StateError:
                skipped += 1
                continue
            flowing += 1
            sigma = (s_down - s_up) / R   # per unit |mdot|, in units of R
            if sigma < worst:
                worst, at = sigma, h.t[i]
        if not flowing:
            continue
        detail = f"least at t = {at:.6g} s over {flowing} points"
        if skipped:
            detail += f" ({skipped} points beyond the equation of state skipped)"
        out.append(Check(
            f"entropy produced by link '{link.name}'",
            "least (s_down - s_up)/R per unit mass flow", worst, -ENTROPY_TOLERANCE,
            worst >= -ENTROPY_TOLERANCE, detail))
    return out


def heat_entropy(h: _Histories) -> list[Check]:
    out = []
    for name in h.vessels:
        T_gas = h.col(f"{name}.temperature")
        for col in sorted(h.names):
            if not (col.startswith(f"{name}.heat.") and col.endswith(".source_temperature")):
                continue
            term = col[len(f"{name}.heat."):-len(".source_temperature")]
            Q = h.col(f"{name}.heat.{term}")
            T_src = h.col(col)
            worst, at = math.inf, math.nan
            for i in range(len(h.t)):
                if not (Q[i] != 0.0 and Q[i] == Q[i] and T_src[i] == T_src[i]):
                    continue
                # sigma T_gas / |Q| = sign(Q) (1 - T_gas / T_src)
                val = math.copysign(1.0, Q[i]) * (1.0 - T_gas[i] / T_src[i])
                if val < worst:
                    worst, at = val, h.t[i]
            if worst == math.inf:
                continue
            out.append(Check(
                f"entropy produced by heat term '{name}.{term}'",
                "least sign(Q) (1 - T_contents/T_source)", worst, -HEAT_ENTROPY_TOLERANCE,
                worst >= -HEAT_ENTROPY_TOLERANCE, f"least at t = {at:.6g} s"))
    return out


# ------------------------------------------------------------------ rerun

#: the rerun is made with the tolerances divided by this
VERIFY_FACTOR = 100.0
#: largest relative difference of a key figure between the run and its rerun
VERIFY_TOLERANCE = 1e-3


def key_figures(result) -> dict[str, tuple[float, float]]:
    """The figures a rerun is compared on, each with the scale its difference is
    divided by: extremes of every vessel's pressure (scale: the value), gas and
    wall temperatures (the value in K), the final mass of each vessel and the mass
    passed by each link (the largest initial content), the time each stop
    condition was met and the end time (the end time)."""
    s = result.summary()
    out = {}
    m_ref = max([v.get("initial_mass_kg", 0.0) for v in s["vessels"].values()] + [1e-300])
    t_ref = max(s["end_time_s"], 1e-300)
    for name, v in s["vessels"].items():
        for k in ("max_pressure_Pa", "min_pressure_Pa", "max_temperature_K",
                  "min_temperature_K", "min_wall_temperature_K", "max_wall_temperature_K"):
            if k in v and v[k] == v[k]:
                out[f"{name}.{k}"] = (v[k], abs(v[k]))
        out[f"{name}.final_mass_kg"] = (v["final_mass_kg"], m_ref)
    for name, link in s["links"].items():
        out[f"{name}.mass_passed_kg"] = (link["mass_passed_kg"], m_ref)
    for k, target in enumerate(s["targets"]):
        if target["time_s"] is not None:
            out[f"target{k + 1}.time_s"] = (target["time_s"], t_ref)
    out["end_time_s"] = (s["end_time_s"], t_ref)
    return out


def rerun_check(result, tight) -> Check:
    """Compare a run with its rerun at tolerances VERIFY_FACTOR times tighter: the
    largest relative difference of the :func:`key_figures`."""
    a, b = key_figures(result), key_figures(tight)
    worst, where = 0.0, ""
    for k, (va, scale) in a.items():
        if k not in b:
            worst, where = math.inf, f"{k} missing from the rerun"
            break
        d = abs(va - b[k][0]) / max(scale, 1e-300)
        if d > worst:
            worst, where = d, f"{k}: {va:.10g} against {b[k][0]:.10g} in the rerun"
    if tight.status != result.status:
        worst, where = math.inf, f"status {result.status} against {tight.status} in the rerun"
    return Check("rerun at tight tolerance",
                 f"largest relative difference of the key figures (rtol / {VERIFY_FACTOR:g})",
                 worst, VERIFY_TOLERANCE, worst <= VERIFY_TOLERANCE, where)


__all__ = ["Check", "STATE_TOLERANCE", "key_figures", "rerun_check", "run_checks"]
