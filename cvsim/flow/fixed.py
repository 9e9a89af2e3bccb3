"""Forced flow: a compressor, pump or flow controller delivering a stated mass flow."""
from __future__ import annotations

from .base import NO_FLOW, Device, Flow, Switch
from ..fluid import fluid_of


class FixedFlowDevice(Device):
    """A mass flow [kg/s] imposed from source to target, whatever the pressures.

    The stream leaves the source with the source's stagnation enthalpy. It
    enters the target with the enthalpy of the stated delivery temperature at
    the target's pressure, h(p_target, T_delivery), when one is given (a
    compressor with an aftercooler: the difference is the net work and cooling
    of the machine, booked as energy added by the device); otherwise with the
    source's enthalpy (an isenthalpic flow controller).

    With ``stop_below`` the flow stops when the source pressure falls to that
    value (a discrete switch found by a solver event); it restarts when the
    source pressure rises to ``restart_above`` if one is given (a pressure
    switch with a deadband), otherwise it stays stopped. A switch without a
    deadband would chatter: heat flowing back into a vessel whose draw has just
    stopped raises its pressure again at once.
    """

    kind = "fixed-flow"

    def breakpoints(self):
        return tuple(self.d.mass_flow.breakpoints)

    def schedule(self):
        sig = self.d.mass_flow
        out = []
        if hasattr(sig, "times"):
            for (t0, v0), (t1, v1) in zip(zip(sig.times, sig.values),
                                          zip(sig.times[1:], sig.values[1:])):
                if t0 == t1 and v0 != v1:
                    out.append((t1, f"flow steps from {v0:.4g} to {v1:.4g} kg/s"))
        return out

    def initial_discrete(self, snapshot):
        if self.d.stop_below is None:
            return {}
        p = snapshot.states[self.source].p
        return {self.key("running"): p > self.d.stop_below}

    def switches(self, discrete):
        if self.d.stop_below is None:
            return []
        key = self.key("running")
        i = self.source
        if discrete[key]:
            p_stop = self.d.stop_below
            return [Switch(key, lambda t, snap: snap.states[i].p - p_stop, -1, False,
                           f"flow stopped: source pressure fell to {p_stop / 1e5:.6g} bar a")]
        if self.d.restart_above is None:
            return []
        p_start = self.d.restart_above
        return [Switch(key, lambda t, snap: snap.states[i].p - p_start, +1, True,
                       f"flow restarted: source pressure rose to {p_start / 1e5:.6g} bar a")]

    def flow(self, t, a, b, segment) -> Flow:
        if self.d.stop_below is not None and not segment.discrete[self.key("running")]:
            return NO_FLOW
        mdot = segment.signal(self.d.mass_flow, t)
        if mdot == 0.0:
            return NO_FLOW
        h_to = a.h
        if self.d.delivery_temperature is not None:
            # the stream keeps its composition (a mixture state carries its own fluid)
            st = fluid_of(a, self.fluid).state_pt(b.p, self.d.delivery_temperature)
            h_to = st.h
        return Flow(mdot, a.h, h_to, False)
