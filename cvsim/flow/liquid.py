"""What a stream is (gas or liquid) and the liquid properties valves need.

Devices that pass liquid by their own equations (relief valves by API 520 Part I,
control valves by IEC 60534-2-1) need the liquid's saturation pressure at its
temperature and, for the relief valve's viscosity correction, its viscosity.
:class:`LiquidProperties` reads both from a CoolProp state of its own, so that it
never moves the states the fluid layer is iterating.
"""
from __future__ import annotations


def passes_liquid(state) -> bool:
    """True for a liquid or flashing stream (compressed or saturated liquid, or a
    two-phase mixture with liquid); False for gas, saturated vapour and
    supercritical fluid."""
    if state.two_phase:
        return state.quality < 1.0
    return state.phase == "liquid"


class LiquidProperties:
    """Saturation pressure [Pa] and viscosity [Pa s] of a CoolProp fluid at a temperature.

    Parameters
    ----------
    name : CoolProp fluid name
    """

    def __init__(self, name: str):
        self.name = name
        self._as = None
        self._CP = None

    def _state(self):
        if self._as is None:
            import CoolProp.CoolProp as CP
            self._CP = CP
            self._as = CP.AbstractState("HEOS", self.name)
        return self._as

    def saturation_pressure(self, T: float) -> float:
        """Saturation pressure [Pa] at T [K], below the critical temperature."""
        a = self._state()
        a.update(self._CP.QT_INPUTS, 0.0, T)
        return a.p()

    def viscosity(self, rho: float, T: float) -> float | None:
        """Dynamic viscosity [Pa s] at (rho [kg/m3], T [K]); None where CoolProp has no
        viscosity model for the fluid."""
        a = self._state()
        try:
            a.update(self._CP.DmassT_INPUTS, rho, T)
            return a.viscosity()
        except ValueError:
            return None


__all__ = ["LiquidProperties", "passes_liquid"]
