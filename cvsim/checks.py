"""Self-checks of a run that a wrong model would fail.

The bookkeeping integrals of :mod:`cvsim.model` integrate the same terms as the
states, so their closure proves only that the integrator kept a linear invariant.
The checks here are computed afterwards from the recorded histories, with a fresh
fluid object and formulas written independently of the model's right-hand side:

* **state residual** of every vessel at every recorded point and solver step: the
  recorded temperature and the density m/V, put back into the equation of state,
  must give the conserved specific internal energy U/m:
  |u(m/V, T) - U/m| / (|U/m| + R T_c) <= STATE_TOLERANCE; for a vessel held as
  separated zones the same for each zone (the vapour zone from the totals less the
  liquid's recorded mass, energy and volume), and the two zones' pressures, recomputed
  from their (density, temperature), must agree with the recorded pressure to
  PRESSURE_TOLERANCE;
* **first law of the liquid zone** of a vessel held as separated zones: the change of
  its internal energy against the integral of the streams it gives to outlets, the
  heat into it, what rain-out, boil-off and the interface bring or take (at the
  saturated enthalpies recomputed from the recorded pressure) and the boundary work
  -p dV_l (from the recorded pressure and liquid volume), trapezoidal as below;
* **first law of every vessel, recomputed**: the change of its internal energy
  against the time integral of the enthalpy streams and heat, where each stream's
  specific enthalpy is recomputed from the recorded state of the node it leaves
  (what the outlet draws at the saturation pressure when two phases are present, the
  node's own state otherwise; a forced flow with a delivery temperature brings
  h(p, T_delivery); a line with an elevation change delivers it with g dz less, the
  potential energy given up) and integrated by the trapezoidal rule over the recorded
  points and steps. The tolerance is three times the Richardson estimate of the
  quadrature error (the rule on every second point against the rule on all) plus
  1e-6 of the energy turned over, plus the integrator's own allowance on U, the run's
  relative tolerance times the largest |U| (U counted from the equation of state's
  reference, as the solver controls it), relative to the energy turned over;
* **components of every vessel** (mixture runs): the component masses sum to the
  vessel's mass at every recorded point (|sum m_i - m| / m <= COMPONENT_TOLERANCE), and
  the change of each component's mass against the time integral of the component
  streams, mdot w_i with the mass fractions w_i of what each stream draws recomputed
  from the recorded state of the node it leaves (the vapour or liquid phase of a
  fresh flash of the recorded density, temperature and composition), with the
  energy check's quadrature tolerance plus a tenth of the run's relative tolerance on
  the component's content (for a component that mostly stays in the vessel);
* **entropy produced** by every passive link (orifices, valves, lines: adiabatic
  throttling, Gibbs's inequality) at every recorded point,
  sigma = |mdot| (s(p_down, h_up - g dz) - s_up) >= 0 (dz: the rise of a line in the
  direction of flow; 0 for other devices), and by every heat term that states
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
from .outlets import drawn_by, drawn_quality
from .zones import liquid_share_drawn

#: largest relative state residual accepted at a recorded point (the state solve
#: itself guarantees 1e-10 and usually 1e-13)
STATE_TOLERANCE = 1e-8
#: separated zones: largest relative difference of the zones' pressures from the
#: recorded one (the split is solved to 1e-11)
PRESSURE_TOLERANCE = 1e-7
#: a link may produce entropy down to -ENTROPY_TOLERANCE |mdot| R (round-off)
ENTROPY_TOLERANCE = 1e-7
#: a heat term may produce entropy down to -HEAT_ENTROPY_TOLERANCE |Q| / T
HEAT_ENTROPY_TOLERANCE = 1e-9
#: the energy check's floor, relative to the energy turned over
ENERGY_FLOOR = 1e-6
#: the energy check allows this share of the integrator's relative tolerance on the
#: vessel's internal energy (a drum drained past a side outlet showed 0.9 rtol |U|)
ENERGY_CONTENT_SHARE = 1.0
#: the liquid zone's energy check's floor, relative to the energy turned over: its
#: rates (boil-off, rain-out) relax fast when the transfer is fast, and the solver's
#: error on them (relative tolerance 1e-6 per step) adds up over the run to about 1e-5
#: (measured: 1.5e-5 with transfers 100 times the published ones); a missing boundary
#: work term shows as 2e-3 or more in the demos
ZONE_ENERGY_FLOOR = 1e-4
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
    out += zone_residuals(h)
    out += energy_balances(h)
    if h.mixture:
        out += component_balances(h)
    out += liquid_zone_balances(h)
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
        self.zoned = {v.name: v for v in self.net.vessels if v.zones is not None}
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
        if node in self.zoned:
            vap, liq = self.zones(node, i)
            w = liquid_share_drawn(draws, self.col(f"{node}.liquid_fraction")[i],
                                   liq is not None)
            st = vap if w == 0.0 else liq if w == 1.0 else f.state_ph(
                p, (1.0 - w) * vap.h + w * liq.h)
        elif node in self.vessels:
            q = self.col(f"{node}.vapour_quality")[i]
            if q == q:  # two phases present: what the outlet draws, from the recorded
                # quality and liquid share (the rule of cvsim.outlets)
                x = drawn_quality(draws, q, self.col(f"{node}.liquid_fraction")[i])
                st = f.two_phase_at_p(p, x) if 0.0 < x < 1.0 else (
                    f.saturated_vapour_at_p(p) if x == 1.0 else f.saturated_liquid_at_p(p))
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
                # what the outlet draws (the rule of cvsim.outlets): its phase, or both
                x = drawn_quality(draws, st.quality, st.liquid_fraction)
                e = self.fluid.engine
                wv, wl = e.view(st.y).mass_fractions(), e.view(st.x).mass_fractions()
                w = x * wv + (1.0 - x) * wl
                zw = w / e.M
                f = e.view(zw / zw.sum())
                return (x * st.vapour.h + (1.0 - x) * st.liquid.h,
                        x * st.vapour.s + (1.0 - x) * st.liquid.s, p, f, w)
        else:
            st = self.fluid_at(node, i).state_pt(p, self.col(f"{node}.temperature")[i])
        return (st.h, st.s, p, st.fluid, st.fluid.mass_fractions())

    def zones(self, node: str, i: int):
        """(vapour zone, liquid zone or ``None``) of a vessel held as separated zones at
        row ``i``, recomputed from the recorded masses, volume and temperatures."""
        key = (node, "zones", i)
        got = self._drawn.get(key)
        if got is not None:
            return got
        V = self.vessels[node].volume
        m_l = self.col(f"{node}.liquid_mass")[i]
        V_l = self.col(f"{node}.liquid_volume")[i]
        T_l = self.col(f"{node}.liquid_temperature")[i]
        vap = self.fluid.state_dt((self.col(f"{node}.mass")[i] - m_l) / (V - V_l),
                                  self.col(f"{node}.vapour_temperature")[i])
        liq = self.fluid.state_dt(m_l / V_l, T_l) if (T_l == T_l and V_l > 0.0) else None
        self._drawn[key] = (vap, liq)
        return vap, liq


# ------------------------------------------------------------------ states

def state_residuals(h: _Histories) -> list[Check]:
    out = []
    for name, v in h.vessels.items():
        if name in h.zoned:
            continue  # two temperatures: each zone is checked (zone_residuals)
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


def zone_residuals(h: _Histories) -> list[Check]:
    """State residuals of each zone and the agreement of the zones' pressures."""
    out = []
    scale = h.fluid.energy_scale
    for name, v in h.zoned.items():
        m, u = h.col(f"{name}.mass"), h.col(f"{name}.specific_internal_energy")
        m_l, u_l = h.col(f"{name}.liquid_mass"), h.col(f"{name}.liquid_specific_internal_energy")
        V_l = h.col(f"{name}.liquid_volume")
        T_v, T_l = h.col(f"{name}.vapour_temperature"), h.col(f"{name}.liquid_temperature")
        p = h.col(f"{name}.pressure")
        worst = {"vapour": (0.0, math.nan), "liquid": (0.0, math.nan), "p": (0.0, math.nan)}
        for i in range(len(h.t)):
            m_v = m[i] - m_l[i]
            u_v = (m[i] * u[i] - m_l[i] * u_l[i]) / m_v if m_l[i] > 0.0 else u[i]
            try:
                vap = h.fluid.state_dt(m_v / (v.volume - V_l[i]), T_v[i])
                zones = [("vapour", vap, u_v)]
                if T_l[i] == T_l[i]:
                    zones.append(("liquid", h.fluid.state_dt(m_l[i] / V_l[i], T_l[i]), u_l[i]))
            except StateError:
                worst["vapour"] = (math.inf, h.t[i])
                break
            for zone, st, target in zones:
                r = abs(st.u - target) / (abs(target) + scale)
                if r > worst[zone][0]:
                    worst[zone] = (r, h.t[i])
                dp = abs(st.p - p[i]) / p[i]
                if dp > worst["p"][0]:
                    worst["p"] = (dp, h.t[i])
        for zone in ("vapour", "liquid"):
            r, at = worst[zone]
            out.append(Check(
                f"state of the {zone} zone of vessel '{name}'",
                "largest |u(m/V, T) - U/m| / (|U/m| + R Tc) of the zone", r, STATE_TOLERANCE,
                r <= STATE_TOLERANCE, f"at t = {at:.6g} s" if at == at else ""))
        r, at = worst["p"]
        out.append(Check(
            f"one pressure in the zones of vessel '{name}'",
            "largest |p(zone) - p| / p", r, PRESSURE_TOLERANCE, r <= PRESSURE_TOLERANCE,
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
        g_dz = _g_dz(link)
        for i in range(n):
            md = mdot[i]
            if md == 0.0 or md != md:
                continue
            if md > 0.0:
                h_up, _, _, f_up, _ = h.stream(link.source, drawn_by(link), i)
                h_in = h_up - g_dz
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
                    rate[i] -= md * (h_up + g_dz)   # into the source
    return rate


def _g_dz(link) -> float:
    """g times the rise [J/kg] from the ``from`` to the ``to`` end of a link (lines with
    an elevation change; 0 for every other device)."""
    from .flow.line import GRAVITY
    return GRAVITY * getattr(link.device, "elevation_change", 0.0)


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
        residual, tol, full, turned = _closure(t, total, lambda ok_: dU)
        # the integrator controls each step's error on U to rtol |U| (U counted from the
        # equation of state's reference): allow that much of the largest |U|, which
        # matters where U is much larger than the energy turned over
        U_abs = np.abs(m[ok] * u[ok])
        tol += ENERGY_CONTENT_SHARE * h.net.run.rtol * float(np.max(U_abs)) / turned
        out.append(Check(
            f"first law of vessel '{name}'",
            "|change of U - integral of streams and heat| / energy turned over",
            residual, tol, residual <= tol,
            f"change {dU / 1e3:.6g} kJ, streams and heat {full / 1e3:.6g} kJ (enthalpies "
            "recomputed from the recorded states)"))
    return out


def liquid_zone_balances(h: _Histories) -> list[Check]:
    """First law of each liquid zone (module docstring)."""
    out = []
    t = h.t
    n = len(t)
    for name in h.zoned:
        m_l = h.col(f"{name}.liquid_mass")
        u_l = h.col(f"{name}.liquid_specific_internal_energy")
        T_l = h.col(f"{name}.liquid_temperature")
        if not np.any(T_l == T_l):
            continue
        p = h.col(f"{name}.pressure")
        V_l = h.col(f"{name}.liquid_volume")
        rain, boil = h.col(f"{name}.rain_out"), h.col(f"{name}.boil_off")
        evap = h.col(f"{name}.interface_evaporation")
        q_l = h.col(f"{name}.interface_heat_from_liquid")
        heat = h.col(f"{name}.heat_into_liquid")
        rate = np.zeros(n)
        gross = np.zeros(n)   # the energy moved, each term counted by its size
        mass_rate = np.zeros(n)
        h_scale = 0.0
        for i in range(n):
            if not T_l[i] == T_l[i]:
                rate[i] = math.nan
                continue
            e = heat[i] - q_l[i]
            g = abs(heat[i]) + abs(q_l[i])
            if rain[i] or boil[i] or evap[i]:
                liq = h.fluid.saturated_liquid_at_p(p[i])
                vap = h.fluid.saturated_vapour_at_p(p[i])
                e += (rain[i] - evap[i]) * liq.h - boil[i] * vap.h
                g += (abs(rain[i]) + abs(evap[i])) * abs(liq.h) + abs(boil[i] * vap.h)
                h_scale = max(h_scale, abs(liq.h), abs(vap.h))
            mass_rate[i] = rain[i] - boil[i] - evap[i]
            for link in h.net.links:
                md = h.col(f"{link.name}.mass_flow")[i]
                if md > 0.0 and link.source == name:
                    draws = drawn_by(link)
                elif md < 0.0 and link.target == name:
                    draws = "vapour"
                else:
                    continue
                _, liquid = h.zones(name, i)
                w = liquid_share_drawn(draws, h.col(f"{name}.liquid_fraction")[i],
                                       liquid is not None)
                if w > 0.0:
                    e -= w * abs(md) * liquid.h
                    g += w * abs(md * liquid.h)
                    mass_rate[i] -= w * abs(md)
                    h_scale = max(h_scale, abs(liquid.h))
            rate[i] = e
            gross[i] = g
        ok = np.isfinite(rate)
        if ok.sum() < 3 or not ok[0]:
            continue
        # from the first row on, while the liquid zone is more than a trace
        last = int(np.argmin(ok)) if not ok.all() else n
        tt, yy, pp, vv = t[:last], rate[:last], p[:last], V_l[:last]
        work = float(np.sum(0.5 * (pp[1:] + pp[:-1]) * np.diff(vv)))
        full = _trapezoid(tt, yy) - work
        half_t = tt[::2] if len(tt) % 2 == 1 else np.append(tt[:-1:2], tt[-1])
        half_y = yy[::2] if len(tt) % 2 == 1 else np.append(yy[:-1:2], yy[-1])
        dU = m_l[last - 1] * u_l[last - 1] - m_l[0] * u_l[0]
        turned = max(abs(dU), _trapezoid(tt, gross[:last]), 1e-300)
        residual = abs(dU - full) / turned
        # the quadrature error of the rates, measured on the mass: the model keeps the
        # zone's mass exactly, so what the rule misses of it is quadrature error
        mass_miss = abs(m_l[last - 1] - m_l[0] - _trapezoid(tt, mass_rate[:last]))
        tol = (ZONE_ENERGY_FLOOR + 3.0 * abs(_trapezoid(tt, yy) - _trapezoid(half_t, half_y))
               / turned + 3.0 * mass_miss * h_scale / turned)
        out.append(Check(
            f"first law of the liquid zone of vessel '{name}'",
            "|change of U_l - integral of streams, heat, transfers and work| / energy "
            "turned over", residual, tol, residual <= tol,
            f"change {dU / 1e3:.6g} kJ, recomputed {full / 1e3:.6g} kJ (boundary work "
            f"{-work / 1e3:.6g} kJ)"))
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
            up, draws = (link.source, drawn_by(link)) if md > 0.0 else (link.target, "vapour")
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
        g_dz = _g_dz(link)
        worst, at, flowing, skipped = math.inf, math.nan, 0, 0
        for i in _sample(len(h.t), ENTROPY_ROWS):
            md = mdot[i]
            if md == 0.0 or md != md:
                continue
            up, down, draws = ((link.source, link.target, drawn_by(link)) if md > 0.0 else
                               (link.target, link.source, "vapour"))
            h_up, s_up, _, f_up, _ = h.stream(up, draws, i)
            p_down = h.col(f"{down}.pressure")[i]
            R = 8.314462618 / f_up.molar_mass
            h_down = h_up - (g_dz if md > 0.0 else -g_dz)
            try:
                s_down = f_up.state_ph(p_down, h_down).s
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
        for col in sorted(h.names):
            if not (col.startswith(f"{name}.heat.") and col.endswith(".source_temperature")):
                continue
            term = col[len(f"{name}.heat."):-len(".source_temperature")]
            Q = h.col(f"{name}.heat.{term}")
            # the temperature of what receives the heat: a zone, or the contents
            own = f"{name}.heat.{term}.contents_temperature"
            T_gas = h.col(own if own in h.names else f"{name}.temperature")
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
