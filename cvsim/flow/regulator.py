"""Self-acting pressure regulators: pressure-reducing and back-pressure.

A spring-loaded regulator is a valve whose travel follows the pressure it senses, in
proportion (its proportional band), without a controller of its own:

* pressure-reducing regulator (``holds: downstream``), sensing the ``to`` node:
  shut (locked up) while that pressure is at or above the set pressure, fully open at
  the set pressure minus the droop, in proportion between:
      s = clip((p_set - p_to) / droop, 0, 1);
* back-pressure regulator (``holds: upstream``), sensing the ``from`` node: shut at or
  below the set pressure, fully open at the set pressure plus the build-up:
      s = clip((p_from - p_set) / build_up, 0, 1).

The flow at travel s is that of a valve with flow coefficient s Kv (a linear
characteristic: droop proportional to flow, the usual idealisation of a regulator's
proportional band - common practice, no source) by IEC 60534-2-1, gas
(:func:`cvsim.flow.control_valve.gas_mass_flow`) or liquid (with FL). Kv of the fully
open regulator is its capacity. The travel follows the pressure at once (no spring-mass
dynamics); flow goes from ``from`` to ``to`` only. The two kinks of the travel (shut,
fully open) are solver events, so no step straddles them: a discrete state with the
regime 0 (shut), 1 (in its band) or 2 (fully open).
"""
from __future__ import annotations

from ..errors import StateError
from .base import NO_FLOW, Device, Flow, Switch
from .control_valve import gas_mass_flow, liquid_mass_flow
from .exponent import EXPONENT_ASSUMPTION, perfect_gas_exponent
from .liquid import LiquidProperties, passes_liquid

SHUT, BAND, FULL = 0, 1, 2


def regulator_travel(p: float, p_set: float, band: float, holds: str) -> float:
    """Travel s [-] of a regulator sensing pressure p [Pa]: clip((p_set - p)/band, 0, 1)
    for a pressure-reducing regulator (``holds = "downstream"``), clip((p - p_set)/band,
    0, 1) for a back-pressure regulator (``"upstream"``)."""
    s = (p_set - p) / band if holds == "downstream" else (p - p_set) / band
    return 0.0 if s <= 0.0 else (1.0 if s >= 1.0 else s)


class RegulatorDevice(Device):
    """A pressure-reducing or back-pressure regulator on a link (module docstring)."""

    has_opening = True

    def __init__(self, definition, fluid, index, source, target):
        super().__init__(definition, fluid, index, source, target)
        self.reducing = definition.holds == "downstream"
        self.kind = "pressure-regulator" if self.reducing else "back-pressure-regulator"
        self.sensed = target if self.reducing else source
        d = definition
        # pressure at which the travel reaches 1
        self.p_full = d.set_pressure - d.band if self.reducing else d.set_pressure + d.band
        self._props = None

    def _regime(self, p: float) -> int:
        s = regulator_travel(p, self.d.set_pressure, self.d.band, self.d.holds)
        return SHUT if s <= 0.0 else (FULL if s >= 1.0 else BAND)

    def initial_discrete(self, snapshot):
        return {self.key("regime"): self._regime(snapshot.states[self.sensed].p)}

    def switches(self, discrete):
        key = self.key("regime")
        i = self.sensed
        ps, pf = self.d.set_pressure, self.p_full
        # crossing "towards open" is falling pressure for a reducing regulator
        opening = -1 if self.reducing else +1
        regime = discrete[key]
        who = "regulator" if self.reducing else "back-pressure regulator"
        out = []
        if regime == SHUT:
            out.append(Switch(key, lambda t, s: s.states[i].p - ps, opening, BAND,
                              f"{who} opens at {ps / 1e5:.6g} bar a"))
        if regime == BAND:
            out.append(Switch(key, lambda t, s: s.states[i].p - ps, -opening, SHUT,
                              f"{who} shuts at {ps / 1e5:.6g} bar a"))
            out.append(Switch(key, lambda t, s: s.states[i].p - pf, opening, FULL,
                              f"{who} fully open at {pf / 1e5:.6g} bar a (capacity reached)"))
        if regime == FULL:
            out.append(Switch(key, lambda t, s: s.states[i].p - pf, -opening, BAND,
                              f"{who} back within its band at {pf / 1e5:.6g} bar a"))
        return out

    def _travel(self, p: float, discrete) -> float:
        regime = discrete[self.key("regime")]
        if regime == SHUT:
            return 0.0
        if regime == FULL:
            return 1.0
        d = self.d
        s = (d.set_pressure - p) / d.band if self.reducing else (p - d.set_pressure) / d.band
        return min(max(s, 0.0), 1.0)

    def opening(self, t, snapshot, segment) -> float:
        return self._travel(snapshot.states[self.sensed].p, segment.discrete)

    def flow(self, t, a, b, segment) -> Flow:
        s = self._travel(b.p if self.reducing else a.p, segment.discrete)
        if s <= 0.0 or a.p <= b.p:
            return NO_FLOW
        kv = self.d.kv * s
        if passes_liquid(a):
            w, choked = self._liquid_flow(kv, a, b.p)
        else:
            w, choked = gas_mass_flow(kv, a.p, a.rho, b.p, perfect_gas_exponent(self.fluid, a),
                                      self.d.xt)
        return Flow(w, a.h, a.h, choked)

    def _liquid_flow(self, kv, up, p_down):
        d = self.d
        if d.fl is None:
            raise StateError("the regulator passes liquid but its liquid pressure recovery "
                             "factor is not given: state FL (from the maker)")
        if up.two_phase and up.quality > 0.0:
            raise StateError(f"a two-phase mixture (quality {up.quality:.3g}) reaches the "
                             "regulator; IEC 60534-2-1 has no equation for it")
        if self._props is None:
            self._props = LiquidProperties(self.fluid.name)
        pv = up.p if up.two_phase else min(self._props.saturation_pressure(up.T), up.p)
        return liquid_mass_flow(kv, up.p, up.rho, p_down, pv, self.fluid.p_crit, d.fl)

    def report(self, initial, switches, t_end):
        prev = initial.get(self.key("regime"))
        spans, start = [], (0.0 if prev == FULL else None)
        for t, key, v in switches:
            if v == FULL and prev != FULL:
                start = t
            elif prev == FULL and v != FULL and start is not None:
                spans.append((start, t))
                start = None
            prev = v
        if start is not None:
            spans.append((start, t_end))
        full = sum(b - a for a, b in spans)
        figures = {"fully_open_s": full}
        if not spans:
            figures["notes"] = ["stayed within its band (never fully open)"]
            return figures, []
        where = "downstream pressure fell below set minus droop" if self.reducing else \
            "upstream pressure rose above set plus build-up"
        figures["notes"] = [f"fully open for {full:.4g} s, first from {spans[0][0]:.4g} s"]
        return figures, [f"the regulator was fully open for {full:.4g} s (first from "
                         f"t = {spans[0][0]:.4g} s): its capacity limited the flow and the "
                         f"{where}; a larger regulator (Kv) would hold its set pressure"]

    @classmethod
    def assumptions(cls, definitions):
        return ["Regulators (self-acting): travel proportional to the sensed pressure's "
                "departure from the set pressure, shut at set, fully open at the droop "
                "(pressure-reducing) or build-up (back-pressure); flow of a valve with Kv "
                "times the travel by IEC 60534-2-1 (gas: " + EXPONENT_ASSUMPTION + "); the "
                "travel follows the pressure at once; forward flow only."]


__all__ = ["RegulatorDevice", "regulator_travel"]
