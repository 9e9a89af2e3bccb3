"""A pipe or hose as a link, with a valve and a restriction orifice in series on it.

The line is quasi-steady: it holds no gas of its own (its inventory is neglected,
which the run's review checks, :meth:`LineDevice.review`) and passes at each instant
the flow that its two end pressures drive through it. The flow is found by marching
backwards from the outlet (:mod:`cvsim.flow.pipe`): for a trial mass flow m each
element, from the last to the first, gives the stagnation pressure it needs at its
inlet; the flow is the root of

    F(m) = p_required(m) - p_up = 0,

which rises continuously and monotonically with m whether an element is choked or not.
It is found by false position with the Illinois modification
(:func:`cvsim.numerics.root_on_bracket`) on the residual |F| <= 1e-13 p_up, warm-started
from the last flow through the line, between 0 and the smallest choked capacity of an
element at the upstream pressure (an upper bound of the flow).

Elements, in the order of the link from ``from`` to ``to`` (reversed for reverse flow):
a control valve (IEC 60534-2-1, at either end), a restriction orifice (perfect-gas
isentropic nozzle times Cd, at either end) and the pipe (adiabatic Fanno flow or
isothermal flow with friction; Darcy-Weisbach for liquid). Gas is a perfect gas with one
exponent, the ideal-gas k at the upstream temperature, and theta = p0/rho0 of the
upstream stagnation state (the real density: Z R T0) held along the line
(:mod:`cvsim.flow.exponent`). The friction factor follows the Reynolds number of the
trial flow with the viscosity of the upstream state (:mod:`cvsim.flow.friction`).

Elevation: the static head rho_m g dz, with rho_m the mean density of the streams at the
two ends, is taken off the driving pressure difference, and the stream's stagnation
enthalpy changes by -g dz on the way (potential energy turned into internal energy of the
receiving node, so energy stays conserved). The flow goes the way the driving difference
p_from - p_to - rho_m g dz points; below a relative difference of LINEAR_BELOW it is
linear in the difference, as the orifice's.
"""
from __future__ import annotations

import math

from ..errors import StateError
from ..numerics import root_on_bracket
from .base import NO_FLOW, Device, Flow
from .control_valve import N6_SI, GAMMA_AIR, relative_flow_coefficient
from .exponent import EXPONENT_ASSUMPTION, perfect_gas_exponent
from .friction import friction_factor
from .liquid import LiquidProperties, passes_liquid
from .nozzle import LINEAR_BELOW
from .pipe import (adiabatic_pipe_inlet, isothermal_pipe_inlet, liquid_orifice_inlet,
                   liquid_pipe_loss, liquid_valve_inlet, nozzle_inlet, valve_inlet)
from .schedule import clip01, level_crossings, schedule_texts

#: standard acceleration of gravity [m/s2] (CGPM 1901, exact)
GRAVITY = 9.80665
#: residual tolerance of the line's flow solve, relative to the upstream pressure
LINE_RTOL = 1e-13
#: relative half-width of the warm-start bracket around the last flow
WARM_BRACKET = 1e-3
#: the review warns when the line's volume exceeds this share of a vessel it joins, or
#: its acoustic transit time this share of the shortest time in which a joined vessel's
#: contents turn over (m / |mdot|): common practice, no source
INVENTORY_SHARE = 0.05

PIPE, ORIFICE, VALVE = 0, 1, 2


class _Viscosity:
    """Dynamic viscosity [Pa s] of an upstream state: stated, or from CoolProp
    (its own AbstractState, so that the fluid layer's states never move)."""

    def __init__(self, fluid, stated: float | None):
        self.fluid = fluid
        self.stated = stated
        self._as = None
        self._key = None
        self._value = None

    def __call__(self, st) -> float:
        if self.stated is not None:
            return self.stated
        key = (st.rho, st.T)
        if key == self._key:
            return self._value
        try:
            if self._as is None:
                import CoolProp.CoolProp as CP
                self._CP = CP
                self._as = CP.AbstractState("HEOS", self.fluid.name)
            CP = self._CP
            if st.two_phase:
                self._as.update(CP.PQ_INPUTS, st.p, 0.0 if st.quality < 0.5 else 1.0)
            elif self.fluid.model == "ideal-gas":
                self._as.update(CP.PT_INPUTS, st.p, st.T)
            else:
                self._as.update(CP.DmassT_INPUTS, st.rho, st.T)
            mu = self._as.viscosity()
        except ValueError:
            raise StateError(f"CoolProp has no viscosity for {self.fluid.name} at "
                             f"{st.p / 1e5:.6g} bar a, {st.T - 273.15:.4g} degC; state "
                             "'viscosity' on the line") from None
        self._key, self._value = key, mu
        return mu


class LineDevice(Device):
    """A pipe or hose on a link (see the module docstring)."""

    kind = "line"

    def __init__(self, definition, fluid, index, source, target):
        super().__init__(definition, fluid, index, source, target)
        d = definition
        self.area = math.pi * d.diameter ** 2 / 4.0
        self.eD = d.roughness / d.diameter
        self.l_over_d = (d.length + d.fittings_length) / d.diameter
        self.isothermal = d.flow_model == "isothermal"
        self.valve = d.valve
        self.has_opening = d.valve is not None
        self.cda = (d.orifice.area * d.orifice.discharge_coefficient
                    if d.orifice is not None else None)
        order = []
        if d.valve is not None and d.valve_at == "from":
            order.append(VALVE)
        if d.orifice is not None and d.orifice.at == "from":
            order.append(ORIFICE)
        order.append(PIPE)
        if d.orifice is not None and d.orifice.at == "to":
            order.append(ORIFICE)
        if d.valve is not None and d.valve_at == "to":
            order.append(VALVE)
        #: elements met by the flow, forward (from -> to) and reverse
        self.order = (tuple(order), tuple(reversed(order)))
        self._last = [None, None]
        self._mu = _Viscosity(fluid, d.viscosity)
        self._liquid = None
        #: earliest time [s] the liquid in the line was found below its saturation pressure
        self.flash_from = None
        #: volumes [m3] of the vessels at the from and to ends (None: a reservoir)
        self.volumes = (None, None)

    @property
    def volume(self) -> float:
        """Inside volume of the line [m3] (straight length)."""
        return self.area * self.d.length

    def bind(self, model) -> None:
        nv = model.n_vessels
        self.volumes = tuple(model.vessels[i].volume if i < nv else None
                             for i in (self.source, self.target))

    # ------------------------------------------------------------ the valve
    def breakpoints(self):
        v = self.valve
        if v is None or v.opening is None:
            return ()
        kinks = (v.rangeability ** -1.0,) if v.characteristic == "equal-percentage" else ()
        return tuple(v.opening.breakpoints) + level_crossings(v.opening, kinks)

    def schedule(self):
        v = self.valve
        if v is None or v.opening is None:
            return []
        return [(t, f"valve {text}") for t, text in schedule_texts(v.opening)]

    def travel(self, t, segment) -> float:
        """Travel [-] of the line's valve: its schedule, or the controller's output."""
        if self.valve.opening is None:
            return segment.driven_opening(self.index)
        return segment.signal(self.valve.opening, t)

    def opening(self, t, snapshot, segment) -> float:
        return clip01(self.travel(t, segment)) if self.valve is not None else 1.0

    # ------------------------------------------------------------ flow
    def flow(self, t, a, b, segment) -> Flow:
        kv = None
        if self.valve is not None:
            v = self.valve
            f = relative_flow_coefficient(self.travel(t, segment), v.characteristic,
                                          v.rangeability)
            if f <= 0.0:
                return NO_FLOW
            kv = v.kv * f
        dz = self.d.elevation_change
        drive = a.p - b.p - (0.5 * (a.rho + b.rho) * GRAVITY * dz if dz else 0.0)
        if drive == 0.0:
            return NO_FLOW
        up, direction, dz_dir = (a, 0, dz) if drive > 0.0 else (b, 1, -dz)
        frac = abs(drive) / up.p
        if frac < LINEAR_BELOW:
            m, choked = self._mass_flow(t, up, up.p * (1.0 - LINEAR_BELOW), direction, kv)
            m *= frac / LINEAR_BELOW
            choked = False
        else:
            m, choked = self._mass_flow(t, up, up.p - abs(drive), direction, kv)
        return Flow(m if direction == 0 else -m, up.h, up.h - GRAVITY * dz_dir, choked)

    def _fl(self, G: float, mu: float) -> float:
        """f L/D + sum(K) at mass flux G [kg/(m2 s)]."""
        Re = G * self.d.diameter / mu
        return friction_factor(Re, self.eD) * self.l_over_d + self.d.fittings_k

    def _mass_flow(self, t, up, p_down: float, direction: int, kv) -> tuple[float, bool]:
        """(m [kg/s] >= 0, choked) from the upstream state ``up`` into ``p_down`` [Pa]."""
        order = self.order[direction]
        if passes_liquid(up):
            required, hi = self._liquid_setup(t, up, p_down, order, kv)
        else:
            required, hi = self._gas_setup(up, p_down, order, kv)
        p_up = up.p
        seen = [None, False]   # last flow evaluated and whether it choked

        def F(m):
            p, choked = required(m)
            seen[0], seen[1] = m, choked
            return p - p_up

        lo, f_lo, f_hi = 0.0, p_down - p_up, None
        last = self._last[direction]
        if last is not None and 0.0 < last < hi:   # warm start: a tight bracket
            a = last * (1.0 - WARM_BRACKET)
            fa = F(a)
            if fa > 0.0:
                hi, f_hi = a, fa
            else:
                lo, f_lo = a, fa
                b = last * (1.0 + WARM_BRACKET)
                if b < hi:
                    fb = F(b)
                    if fb >= 0.0:
                        hi, f_hi = b, fb
                    else:
                        lo, f_lo = b, fb
        if f_hi is None:
            f_hi = F(hi)
            while f_hi < 0.0:   # round-off at the bound: widen it
                hi *= 1.0 + 1e-9
                f_hi = F(hi)
        m = root_on_bracket(F, lo, hi, f_lo, f_hi, LINE_RTOL * p_up)
        self._last[direction] = m
        return m, (seen[1] if seen[0] == m else required(m)[1])

    # ------------------------------------------------------------ gas
    def _gas_setup(self, up, p_down, order, kv):
        k = perfect_gas_exponent(self.fluid, up)
        theta = up.p / up.rho
        mu = self._mu(up)
        area, cda, valve, iso = self.area, self.cda, self.valve, self.isothermal

        def required(m):
            if m <= 0.0:
                return p_down, False
            p, stag, choked = p_down, False, False
            for el in reversed(order):
                if el == PIPE:
                    G = m / area
                    fl = self._fl(G, mu)
                    if iso:
                        p, ch = isothermal_pipe_inlet(G, p, fl, theta, stag)
                    else:
                        p, ch = adiabatic_pipe_inlet(G, p, fl, k, theta, stag)
                elif el == ORIFICE:
                    p, ch = nozzle_inlet(m / cda, p, k, theta)
                else:
                    p, ch = valve_inlet(m, p, kv, valve.xt, valve.piping_factor, k, theta)
                stag = True
                choked = choked or ch
            return p, choked

        # the smallest choked capacity of an element at the upstream pressure
        p0 = up.p
        g_star = p0 * math.sqrt(k / theta) * (2.0 / (k + 1.0)) ** ((k + 1.0) / (2.0 * (k - 1.0)))
        caps = [self.area * (p0 * math.exp(-0.5) / math.sqrt(theta) if iso else g_star)]
        if cda is not None:
            caps.append(cda * g_star)
        if valve is not None:
            xc = k / GAMMA_AIR * valve.xt
            y_sqrt_x = (2.0 / 3.0) * math.sqrt(xc) if xc < 1.0 else 1.0
            caps.append(N6_SI * valve.piping_factor * kv * y_sqrt_x * p0 / math.sqrt(theta))
        return required, min(caps)

    # ------------------------------------------------------------ liquid
    def _liquid_setup(self, t, up, p_down, order, kv):
        if up.two_phase and up.quality > 0.0:
            raise StateError(f"a two-phase mixture (quality {up.quality:.3g}) enters the line; "
                             "its single-phase friction equations do not hold: draw liquid or "
                             "vapour, or use an orifice (homogeneous equilibrium) for this link")
        rho, mu = up.rho, self._mu(up)
        if self._liquid is None:
            self._liquid = LiquidProperties(self.fluid.name)
        if up.two_phase:
            pv = up.p
        elif up.T < self.fluid.t_crit:
            pv = min(self._liquid.saturation_pressure(up.T), up.p)
        else:
            pv = 0.0
        if pv > p_down and (self.flash_from is None or t < self.flash_from):
            self.flash_from = t
        valve = self.valve
        if valve is not None and valve.fl is None:
            raise StateError("the line's valve passes liquid but its liquid pressure recovery "
                             "factor is not given: state FL of the valve (from the valve maker)")
        area, cda, pc = self.area, self.cda, self.fluid.p_crit

        def required(m):
            if m <= 0.0:
                return p_down, False
            p, last, choked = p_down, True, False
            for el in reversed(order):
                if el == PIPE:
                    G = m / area
                    p += liquid_pipe_loss(G, rho, self._fl(G, mu)) + (
                        G * G / (2.0 * rho) if last else 0.0)
                elif el == ORIFICE:
                    p = liquid_orifice_inlet(m / cda, p, rho)
                else:
                    p, ch = liquid_valve_inlet(m, p, rho, kv, valve.fl, valve.piping_factor,
                                               pv, pc)
                    choked = choked or ch
                last = False
            return p, choked

        dp = up.p - p_down
        caps = [self.area * math.sqrt(2.0 * rho * dp)]
        if cda is not None:
            caps.append(cda * math.sqrt(2.0 * rho * dp))
        if valve is not None:
            caps.append(N6_SI * valve.piping_factor * kv * math.sqrt(rho * dp))
        return required, min(caps)

    # ------------------------------------------------------------ outputs
    def report(self, initial, switches, t_end):
        if self.flash_from is None:
            return {}, []
        return {}, [f"from about t = {self.flash_from:.4g} s the liquid in the line is below its "
                    "saturation pressure at the outlet: it flashes, which the single-phase "
                    "(Darcy-Weisbach) line does not model; its flow is overestimated. Model "
                    "the flashing part with an orifice (homogeneous equilibrium) or raise the "
                    "back pressure."]

    def review(self, result, name: str) -> tuple[dict, list[str]]:
        """Figures on the line's own gas inventory and transit time, from the run's
        histories, with a warning when the quasi-steady line is not a fair model."""
        import numpy as np
        d = self.d
        figures = {"line_volume_m3": self.volume}
        warnings = []
        notes = []
        ends = (result.network.links[self.index].source, result.network.links[self.index].target)
        for node, vol in zip(ends, self.volumes):
            if vol is None:
                continue
            share = self.volume / vol
            figures[f"volume_share_of_{node}"] = share
            if share > INVENTORY_SHARE:
                warnings.append(
                    f"the line holds {100 * share:.3g} % of the volume of vessel '{node}': its "
                    "own gas inventory, neglected by the quasi-steady line, is no longer small. "
                    "Build the line as a chain of vessels joined by shorter lines "
                    "(docs/lines.md).")
        mdot = np.abs(result.fine(f"{name}.mass_flow"))
        if not np.any(mdot > 0.0):
            return figures, warnings
        i = int(np.nanargmax(mdot))
        forward = result.fine(f"{name}.mass_flow")[i] > 0.0
        up = ends[0] if forward else ends[1]
        try:
            st = self.fluid.state_pt(result.fine(f"{up}.pressure")[i],
                                     result.fine(f"{up}.temperature")[i])
            c = st.c if st.c == st.c else math.sqrt(st.p / st.rho)
        except StateError:
            return figures, warnings
        transit = d.length / c
        figures["acoustic_transit_time_s"] = transit
        shortest = math.inf
        for node, vol in zip(ends, self.volumes):
            if vol is None:
                continue
            m = result.fine(f"{node}.mass")
            ok = mdot > 0.0
            if np.any(ok):
                shortest = min(shortest, float(np.min(m[ok] / mdot[ok])))
        if math.isfinite(shortest):
            figures["shortest_turnover_time_s"] = shortest
            if transit > INVENTORY_SHARE * shortest:
                warnings.append(
                    f"pressure waves take about {transit:.3g} s along the line, not short "
                    f"against the {shortest:.3g} s in which a vessel it joins turns its "
                    "contents over: the quasi-steady line is a rough model here; build it as "
                    "a chain of vessels (docs/lines.md).")
        notes.append(f"line volume {self.volume * 1e3:.4g} L; acoustic transit {transit:.3g} s")
        figures["notes"] = notes
        return figures, warnings

    @classmethod
    def assumptions(cls, definitions):
        out = ["Lines (pipes and hoses): quasi-steady, holding no gas of their own (the run "
               "warns when a line's volume or transit time is not small); gas as a perfect gas "
               f"({EXPONENT_ASSUMPTION}), the upstream Z held along the line; Darcy friction "
               "factor by the Colebrook equation (64/Re in laminar flow, interpolated between "
               "Re 2000 and 4000) with the upstream viscosity; fittings as resistance "
               "coefficients K added to f L/D (equivalent length), also in compressible flow; "
               "liquid by Darcy-Weisbach at constant density; the static head of the mean "
               "density of the two ends, and the potential energy of the stream, counted."]
        if any(d.flow_model == "adiabatic" for d in definitions):
            out.append("Adiabatic lines: Fanno flow from rest at the upstream node, choked at "
                       "the outlet at Mach 1.")
        if any(d.flow_model == "isothermal" for d in definitions):
            out.append("Isothermal lines: the gas at the upstream temperature all along, choked "
                       "where the velocity reaches sqrt(p/rho); for the energy balance the "
                       "stream keeps its stagnation enthalpy (the heat the line picks up, at "
                       "most the exit kinetic energy, is not counted).")
        if any(d.orifice is not None for d in definitions):
            out.append("Orifices on lines: perfect-gas isentropic nozzle times the discharge "
                       "coefficient with the line's exponent, the jet's velocity head lost "
                       "downstream.")
        if any(d.valve is not None for d in definitions):
            out.append("Valves on lines: IEC 60534-2-1 (gas with the line's exponent; liquid "
                       "with FL), the valve's outlet velocity head lost.")
        return out


__all__ = ["GRAVITY", "LineDevice"]
