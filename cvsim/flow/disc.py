"""Bursting disc and check valve: orifices that open (and a check valve shuts) by pressure.

Both flow, when open, as the orifice of :mod:`cvsim.flow.orifice` (real-gas
isentropic nozzle by default, or the perfect-gas form, times a discharge
coefficient). What moves them is a discrete state switched by solver events:

* bursting disc: bursts when the pressure of its ``from`` node reaches the
  burst pressure, and stays open for good (both flow directions);
* check valve: opens when p_from - p_to reaches the cracking pressure, shuts
  when the difference falls back to zero; the cracking pressure is the
  switch's deadband. It passes flow from ``from`` to ``to`` only.
"""
from __future__ import annotations

from .base import NO_FLOW, Flow, Switch
from .orifice import OrificeDevice


class _PressureMovedOrifice(OrificeDevice):
    """An orifice moved by pressure (a discrete state), never by a schedule."""

    has_opening = True

    def breakpoints(self):
        return ()

    def schedule(self):
        return []


class BurstingDiscDevice(_PressureMovedOrifice):
    """A bursting (rupture) disc: shut, then once burst an open orifice for the rest of the run."""

    kind = "bursting-disc"

    def initial_discrete(self, snapshot):
        return {self.key("burst"): snapshot.states[self.source].p >= self.d.burst_pressure}

    def switches(self, discrete):
        key = self.key("burst")
        if discrete[key]:
            return []  # a burst disc never recloses
        i, pb = self.source, self.d.burst_pressure
        return [Switch(key, lambda t, s: s.states[i].p - pb, +1, True,
                       f"bursting disc bursts at {pb / 1e5:.6g} bar a")]

    def is_open(self, segment) -> bool:
        return bool(segment.discrete[self.key("burst")])

    def opening(self, t, snapshot, segment) -> float:
        return 1.0 if self.is_open(segment) else 0.0

    def report(self, initial, switches, t_end):
        w = self.solid_warning()
        if initial.get(self.key("burst")):
            return {"burst_at_s": 0.0, "notes": ["burst from the start (pressure above burst "
                                                 "pressure at t = 0)"]}, w
        times = [t for t, key, v in switches if v is True]
        if not times:
            return {"burst_at_s": None, "notes": ["did not burst"]}, w
        return {"burst_at_s": times[0], "notes": [f"burst at {times[0]:.4g} s"]}, w

    @classmethod
    def assumptions(cls, definitions):
        return ["Bursting discs burst when the absolute pressure of the protected node "
                "reaches the burst pressure (back pressure does not shift it) and then flow "
                "as an orifice with the stated discharge coefficient, both ways, for good."]


class CheckValveDevice(_PressureMovedOrifice):
    """A check (non-return) valve: one-way orifice with a cracking pressure."""

    kind = "check-valve"

    def initial_discrete(self, snapshot):
        dp = snapshot.states[self.source].p - snapshot.states[self.target].p
        return {self.key("open"): dp >= self.d.cracking_pressure}

    def switches(self, discrete):
        key = self.key("open")
        i, j, pc = self.source, self.target, self.d.cracking_pressure
        if discrete[key]:
            return [Switch(key, lambda t, s: s.states[i].p - s.states[j].p, -1, False,
                           "check valve shuts (no forward pressure difference)")]
        return [Switch(key, lambda t, s: s.states[i].p - s.states[j].p - pc, +1, True,
                       f"check valve opens (cracking pressure {pc / 1e5:.4g} bar reached)")]

    def is_open(self, segment) -> bool:
        return bool(segment.discrete[self.key("open")])

    def opening(self, t, snapshot, segment) -> float:
        return 1.0 if self.is_open(segment) else 0.0

    def flow(self, t, a, b, segment) -> Flow:
        if a.p <= b.p:
            return NO_FLOW  # never backwards
        return super().flow(t, a, b, segment)

    @classmethod
    def assumptions(cls, definitions):
        return ["Check valves open when the forward pressure difference reaches the cracking "
                "pressure and shut when it falls to zero; open, they flow as an orifice in the "
                "forward direction only (no pressure loss for holding the disc open)."]
