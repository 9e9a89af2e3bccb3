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
    """Base of run-time heat terms.

    Contract:

    * ``n_states`` states of its own, stored in the model's state vector at
      ``offset`` (set by the model); :meth:`initial_states` gives their start values
      and :meth:`scales` their characteristic sizes (for absolute tolerances);
    * :meth:`evaluate` returns the heat rate into the gas [W] and writes the
      derivatives of its own states into ``dydt[offset:offset + n_states]``;
    * :meth:`jacobian_rows`: for each own state, the rows of the state vector that
      it can change (the model perturbs states with disjoint rows together when it
      forms the Jacobian); ``None``: any row;
    * energy: :meth:`stored_energy` is the energy its own states hold [J] and
      :meth:`heat_from_outside` the heat that crossed the outer boundary of vessel
      and term [J]; the run's energy balance counts both. A term without states
      stores nothing and all its heat comes from outside the vessel;
    * outputs: :meth:`columns` and :meth:`values` add recorded columns (values are
      taken at recorded points and accepted steps only, so they may also watch the
      validity of correlations); :meth:`warnings` and :meth:`assumptions` go into
      the summary;
    * :meth:`bind` is called once the model's links exist;
    * :meth:`source_temperature`: the temperature [K] of what gives the heat to the
      contents (a wall's inner surface, the surroundings), where the term has one
      (``has_source``); the self-checks verify that heat flows from hot to cold;
    * in a vessel held as separated zones (:mod:`cvsim.zones`) ``gas`` is a
      :class:`cvsim.zones.ZonedState` and ``liquid_row`` the row of the liquid zone's
      internal energy: the term adds there the part of its heat that goes into the
      liquid (the rest goes into the vapour zone).
    """

    n_states = 0
    offset = 0
    #: row of the liquid zone's internal energy in a vessel of separated zones
    liquid_row = None
    #: the term can say where its heat comes from (:meth:`source_temperature`)
    has_source = False

    def __init__(self, definition, vessel_name: str):
        self.d = definition
        self.vessel = vessel_name

    @property
    def name(self) -> str:
        return self.d.name

    def breakpoints(self) -> tuple[float, ...]:
        return ()

    def bind(self, model) -> None:
        """Called by the model after it has built its devices."""

    def initial_states(self, gas_state) -> list[float]:
        return []

    def scales(self) -> list[float]:
        """Characteristic size of each own state (absolute tolerance = fraction of it)."""
        return [300.0] * self.n_states

    def jacobian_rows(self, gas_row: int, heat_row: int) -> list | None:
        """Rows each own state can change (``gas_row``: the vessel's internal energy,
        ``heat_row``: this term's heat integral); ``None``: unknown, any row."""
        return None

    def evaluate(self, t, gas, own, segment, dydt) -> float:
        """Heat rate into the gas [W]; write own derivatives into ``dydt``."""
        raise NotImplementedError  # pragma: no cover - abstract

    def stored_energy(self, own) -> float:
        """Energy held by the own states [J] (relative to a fixed reference)."""
        return 0.0

    def heat_from_outside(self, own, heat_into_gas: float) -> float:
        """Heat that entered vessel and term from outside over the run [J], given the
        final own states and the integral of the heat into the gas."""
        return heat_into_gas

    def columns(self, vessel: str) -> list[tuple[str, str, str]]:
        """Extra recorded columns: (name, SI unit, kind)."""
        return []

    def values(self, t, gas, own, segment) -> list[float]:
        """Values of :meth:`columns` at a recorded point or accepted step."""
        return []

    def source_temperature(self, t, gas, own, segment) -> float:
        """Temperature [K] at which the heat into the contents is given (``has_source``)."""
        raise NotImplementedError  # pragma: no cover - only where has_source

    def warnings(self) -> list[str]:
        return []

    def assumptions(self) -> list[str]:
        return []


class HeatLoadTerm(HeatComponent):
    """A stated heat rate into the gas [W], constant or a table in time."""

    def breakpoints(self):
        return self.d.rate.breakpoints

    def evaluate(self, t, gas, own, segment, dydt) -> float:
        q = segment.signal(self.d.rate, t)
        if self.liquid_row is not None and gas.liquid is not None:
            dydt[self.liquid_row] += q   # separated zones: a heater in the liquid
        return q


class AmbientExchangeTerm(HeatComponent):
    """Q = UA (T_ambient(t) - T_gas), see :func:`ambient_exchange`."""

    has_source = True

    def source_temperature(self, t, gas, own, segment) -> float:
        return segment.signal(self.d.ambient, t)

    def breakpoints(self):
        return self.d.ambient.breakpoints

    def evaluate(self, t, gas, own, segment, dydt) -> float:
        T_a = segment.signal(self.d.ambient, t)
        if self.liquid_row is not None and gas.liquid is not None:
            # separated zones: each zone through its share of the inside area
            phi = gas.wetted_share
            q_l = ambient_exchange(phi * self.d.ua, T_a, gas.liquid.T)
            dydt[self.liquid_row] += q_l
            return q_l + ambient_exchange((1.0 - phi) * self.d.ua, T_a, gas.T)
        return ambient_exchange(self.d.ua, T_a, gas.T)
