"""Simple heat terms on a vessel's gas: a stated heat load and exchange with surroundings.

Each run-time heat term keeps the contract of :class:`HeatComponent`: it may own
states of its own (a wall's temperatures; none here), and gives the heat rate
into the gas [W] and the derivatives of its own states.
"""
from __future__ import annotations


def ambient_exchange(ua: float, T_ambient: float, T_gas: float) -> float:
    """Heat rate into the gas from surroundings through a fixed conductance.

    Q = UA (T_ambient - T_gas)   [W]

    Newton's law of cooling with an overall coefficient U [W/(m2 K)] times area
    A [m2] (Incropera et al., *Fundamentals of Heat and Mass Transfer*, 7th ed.,
    eq. 1.3a and sec. 3.3.1 for the overall coefficient).

    Parameters
    ----------
    ua : overall conductance UA [W/K]
    T_ambient : surrounding temperature [K]
    T_gas : gas temperature [K]
    """
    return ua * (T_ambient - T_gas)


class HeatComponent:
    """Base of run-time heat terms. ``n_states`` states of its own, stored in
    the model's state vector at ``offset`` (set by the model)."""

    n_states = 0
    offset = 0

    def __init__(self, definition, vessel_name: str):
        self.d = definition
        self.vessel = vessel_name

    @property
    def name(self) -> str:
        return self.d.name

    def breakpoints(self) -> tuple[float, ...]:
        return ()

    def initial_states(self, gas_state) -> list[float]:
        return []

    def evaluate(self, t, gas, own, segment, dydt) -> float:
        """Heat rate into the gas [W]; write own derivatives into ``dydt``."""
        raise NotImplementedError  # pragma: no cover - abstract


class HeatLoadTerm(HeatComponent):
    """A stated heat rate into the gas [W], constant or a table in time."""

    def breakpoints(self):
        return self.d.rate.breakpoints

    def evaluate(self, t, gas, own, segment, dydt) -> float:
        return segment.signal(self.d.rate, t)


class AmbientExchangeTerm(HeatComponent):
    """Q = UA (T_ambient(t) - T_gas), see :func:`ambient_exchange`."""

    def breakpoints(self):
        return self.d.ambient.breakpoints

    def evaluate(self, t, gas, own, segment, dydt) -> float:
        return ambient_exchange(self.d.ua, segment.signal(self.d.ambient, t), gas.T)
