"""Forced flow: a compressor, pump or flow controller delivering a stated mass flow."""
from __future__ import annotations

from .base import NO_FLOW, Device, Flow, Switch


class FixedFlowDevice(Device):
    """A mass flow [kg/s] imposed from source to target, whatever the pressures.

    The stream leaves the source with the source's stagnation enthalpy. It
    enters the target with the enthalpy of the stated delivery temperature at
    the target's pressure, h(p_target, T_delivery), when one is given (a
    compressor with an aftercooler: the difference is the net work and cooling
    of the machine, booked as energy added by the device); otherwise with the
    source's enthalpy (an isenthalpic flow controller).

    With ``stop_below`` the flow stops while the source pressure is below that
    value (a discrete switch with a relative hysteresis of 1e-6 so that the
    solver does not re-trigger at the switching point).
    """

    kind = "fixed-flow"
    HYSTERESIS = 1e-6

    def breakpoints(self):
        return tuple(self.d.mass_flow.breakpoints)

    def initial_discrete(self, snapshot):
        if self.d.stop_below is None:
            return {}
        p = snapshot.states[self.source].p
        return {self.key("running"): p >= self.d.stop_below}

    def switches(self, discrete):
        if self.d.stop_below is None:
            return []
        key = self.key("running")
        i, p_stop = self.source, self.d.stop_below
        if discrete[key]:
            return [Switch(key, lambda t, snap: snap.states[i].p - p_stop, -1, False,
                           "flow stopped: source pressure fell to the stop pressure")]
        p_start = p_stop * (1.0 + self.HYSTERESIS)
        return [Switch(key, lambda t, snap: snap.states[i].p - p_start, +1, True,
                       "flow restarted: source pressure rose above the stop pressure")]

    def flow(self, t, a, b, segment) -> Flow:
        if self.d.stop_below is not None and not segment.discrete[self.key("running")]:
            return NO_FLOW
        mdot = segment.signal(self.d.mass_flow, t)
        if mdot == 0.0:
            return NO_FLOW
        h_to = a.h
        if self.d.delivery_temperature is not None:
            st = self.fluid.state_pt(b.p, self.d.delivery_temperature)
            h_to = st.h
        return Flow(mdot, a.h, h_to, False)
