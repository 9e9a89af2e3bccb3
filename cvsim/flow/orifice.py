"""Restriction orifice or nozzle on a link, with an optional open time window."""
from __future__ import annotations

import math

from .base import NO_FLOW, Device, Flow
from .exponent import perfect_gas_exponent
from ..fluid import fluid_of
from .nozzle import (LINEAR_BELOW, NozzleHint, at_triple_point, ideal_gas_mass_flux,
                     real_gas_mass_flux)


class OrificeDevice(Device):
    """Compressible flow through an orifice: mdot = Cd * A * G(upstream, p_back).

    G is the isentropic throat mass flux of :mod:`cvsim.flow.nozzle`, real-gas
    (default) or ideal-gas form; the ideal-gas form takes the real upstream density
    and the ideal-gas k at the upstream temperature
    (:func:`cvsim.flow.exponent.perfect_gas_exponent`), also from a saturated or
    two-phase source. A mixture with ``expansion: frozen`` takes the frozen-composition
    nozzle (:mod:`cvsim.flow.frozen_nozzle`). The flow goes from the node at the higher
    pressure to the other; the upstream node gives the stagnation state.
    Outside ``[open_from, open_until)`` the orifice passes nothing (an isolation
    valve that opens or closes at once; both times are solver breakpoints).
    """

    kind = "orifice"

    def __init__(self, definition, fluid, index, source, target):
        super().__init__(definition, fluid, index, source, target)
        self.cda = definition.discharge_coefficient * definition.area
        self.real = definition.flow_model == "real-gas"
        self._hints = (NozzleHint(), NozzleHint())
        #: a mixture's nozzle with frozen composition (no phase change in the nozzle)
        self.frozen = getattr(definition, "expansion", "equilibrium") == "frozen"
        if self.frozen:
            from .frozen_nozzle import FrozenNozzleHint, frozen_mass_flux
            self._frozen_flux = frozen_mass_flux
            self._hints = (FrozenNozzleHint(), FrozenNozzleHint())
        #: earliest time [s] a throat was held at the triple point (solid in the jet)
        self.solid_from = None

    def breakpoints(self):
        return tuple(t for t in (self.d.open_from, self.d.open_until)
                     if t > 0.0 and math.isfinite(t))

    def schedule(self):
        out = []
        if self.d.open_from > 0.0:
            out.append((self.d.open_from, "opens"))
        if math.isfinite(self.d.open_until):
            out.append((self.d.open_until, "closes"))
        return out

    def is_open(self, segment) -> bool:
        mid = segment.midpoint
        return self.d.open_from <= mid < self.d.open_until

    @property
    def has_opening(self) -> bool:
        """An orifice with an open time window records its state (0 or 1)."""
        return self.d.open_from > 0.0 or math.isfinite(self.d.open_until)

    def opening(self, t, snapshot, segment) -> float:
        return 1.0 if self.is_open(segment) else 0.0

    def flow(self, t, a, b, segment) -> Flow:
        self._t = t
        if not self.is_open(segment) or a.p == b.p:
            return NO_FLOW
        if a.p > b.p:
            g, choked = self._flux(a, b.p, self._hints[0])
            return Flow(self.cda * g, a.h, a.h, choked)
        g, choked = self._flux(b, a.p, self._hints[1])
        return Flow(-self.cda * g, b.h, b.h, choked)

    def _flux(self, up, pb, hint):
        if self.frozen:
            g, choked, _ = self._frozen_flux(fluid_of(up, self.fluid), up, pb, hint,
                                             LINEAR_BELOW)
            return g, choked
        if self.real:
            g, choked, p_throat = real_gas_mass_flux(self.fluid, up, pb, hint)
            if choked and at_triple_point(self.fluid, p_throat) and (
                    self.solid_from is None or self._t < self.solid_from):
                self.solid_from = self._t
            return g, choked
        return ideal_gas_mass_flux(up.p, up.rho, perfect_gas_exponent(self.fluid, up), pb)

    def solid_warning(self) -> list[str]:
        """The warning when the expansion through the device reached the triple point."""
        if self.solid_from is None:
            return []
        return [f"from about t = {self.solid_from:.4g} s the expansion through the device "
                f"reaches the triple point of {self.fluid.name}: solid forms in the jet "
                "(and may plug the outlet or the line). The throat is held at the triple "
                "point, which underestimates the flow from then on."]

    def report(self, initial, switches, t_end):
        return {}, self.solid_warning()
