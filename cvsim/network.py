"""The network a scenario describes, as frozen definitions in SI units.

This is the hand-over point between the scenario reader (which knows YAML and
unit text) and the model (which knows only SI numbers). Nothing here parses or
validates text: the scenario reader guarantees that every value is present,
in SI and physically possible before it builds these objects.

Words: a *node* is a vessel (its state changes) or a reservoir (its state is
imposed); a *link* joins two nodes through a flow *device*; a *heat term*
adds heat to a vessel's gas.
"""
from __future__ import annotations

from dataclasses import dataclass, field

from .signals import Constant, Signal

# --------------------------------------------------------------------- fluid


@dataclass(frozen=True)
class FluidSpec:
    """Which fluid and which property model.

    name        CoolProp fluid name (pure or pseudo-pure), e.g. ``Nitrogen``.
    model       ``real`` (CoolProp HEOS) or ``ideal-gas`` (constant heat capacities).
    molar_mass  [kg/mol] ideal-gas model only; ``None``: CoolProp's value.
    cp          [J/(kg K)] ideal-gas model only; ``None``: CoolProp's ideal-gas
                value at ``cp_temperature``.
    """

    name: str
    model: str = "real"
    molar_mass: float | None = None
    cp: float | None = None
    cp_temperature: float = 298.15


# ------------------------------------------------------------------ geometry


@dataclass(frozen=True)
class Geometry:
    """Inside shape of a rigid vessel.

    volume         [m3] internal volume
    kind           ``volume`` (only the volume is known), ``cylinder`` or ``sphere``
    inner_diameter [m] cylinder or sphere; ``None`` for ``volume``
    length         [m] cylinder length tangent to tangent (straight part); ``None`` otherwise
    orientation    ``vertical`` or ``horizontal`` (cylinders)
    heads          head type of a cylinder: ``flat``, ``2:1-ellipsoidal``,
                   ``torispherical``, ``hemispherical``
    inner_area     [m2] inside surface area (for heat transfer)
    height         [m] inside height (for natural convection); ``None`` if unknown
    """

    volume: float
    kind: str = "volume"
    inner_diameter: float | None = None
    length: float | None = None
    orientation: str = "vertical"
    heads: str = "flat"
    inner_area: float | None = None
    height: float | None = None


# ----------------------------------------------------------------- heat terms


@dataclass(frozen=True)
class HeatLoad:
    """A heat rate into the gas [W] (negative: heat removed), constant or a table."""

    name: str
    rate: Signal


@dataclass(frozen=True)
class AmbientExchange:
    """Heat exchange with surroundings: Q = UA * (T_ambient - T_gas) [W].

    ua      [W/K] overall coefficient times area
    ambient [K] surrounding temperature, constant or a table in time
    """

    name: str
    ua: float
    ambient: Signal


HeatTerm = HeatLoad | AmbientExchange


# -------------------------------------------------------------------- nodes


@dataclass(frozen=True)
class InitialState:
    """Initial state of a vessel's contents: pressure [Pa] and temperature [K].

    liquid_fraction  [-] volume fraction of saturated liquid for two-phase contents
                     (``pressure`` and ``temperature`` are then on the saturation
                     line); ``None``: single phase at (pressure, temperature)
    """

    pressure: float
    temperature: float
    liquid_fraction: float | None = None


@dataclass(frozen=True)
class VesselLimits:
    """Design limits of a vessel, checked after the run (``None``: not checked).

    design_pressure        [Pa, absolute] MAWP / design pressure
    accumulation           [-] allowed overpressure above design pressure, as a fraction
                           of the design gauge pressure (0.10 single relief device,
                           0.16 several, 0.21 fire)
    accumulation_case      the case named in the scenario (``single-device``,
                           ``multiple-devices``, ``fire``) or ``stated``
    min_metal_temperature  [K] minimum design metal temperature (MDMT)
    max_temperature        [K] highest allowed gas or wall temperature
    depressure_to          [Pa, absolute] depressuring target pressure
    depressure_within      [s] time allowed to reach it, counted from the start of
                           depressuring
    depressure_basis       how the target was stated (for the report)
    depressure_start       [s] when depressuring starts; ``None``: found from the run
                           (the last pressure peak before the target,
                           :func:`cvsim.limits.depressuring_start`)
    """

    design_pressure: float | None = None
    accumulation: float | None = None
    accumulation_case: str = "stated"
    min_metal_temperature: float | None = None
    max_temperature: float | None = None
    depressure_to: float | None = None
    depressure_within: float | None = None
    depressure_basis: str = ""
    depressure_start: float | None = None


@dataclass(frozen=True)
class Vessel:
    name: str
    geometry: Geometry
    initial: InitialState
    heat: tuple[HeatTerm, ...] = ()
    limits: VesselLimits | None = None

    @property
    def volume(self) -> float:
        return self.geometry.volume


@dataclass(frozen=True)
class Reservoir:
    """A node with imposed pressure [Pa] and temperature [K] (constant or tables)."""

    name: str
    pressure: Signal
    temperature: Signal


# ------------------------------------------------------------------ devices


@dataclass(frozen=True)
class Orifice:
    """Restriction orifice or nozzle.

    area                  [m2] geometric flow area
    discharge_coefficient [-]
    flow_model            ``real-gas`` (isentropic nozzle on the real equation of
                          state) or ``ideal-gas`` (perfect-gas nozzle with the real
                          density and the ideal-gas k at the upstream temperature)
    open_from, open_until [s] the orifice passes flow only in this time window
                          (an isolation valve opening or closing instantly)
    """

    area: float
    discharge_coefficient: float
    flow_model: str = "real-gas"
    open_from: float = 0.0
    open_until: float = float("inf")


@dataclass(frozen=True)
class FixedFlow:
    """A forced mass flow [kg/s] from ``source`` to ``target`` (compressor, pump, controller).

    mass_flow            [kg/s] constant or a table in time (>= 0)
    delivery_temperature [K] temperature of the stream as it enters the
                         receiving vessel, at that vessel's pressure; ``None``:
                         the stream carries the stagnation enthalpy of the
                         source node (a throttling flow controller)
    stop_below           [Pa] the flow stops when the source node's pressure falls
                         to this (a low-pressure cut-off that keeps a vessel from
                         being drawn empty); ``None``: no cut-off
    restart_above        [Pa] after a cut-off the flow restarts when the source
                         pressure rises to this (the switch's deadband);
                         ``None``: it stays stopped (a latching cut-off)
    """

    mass_flow: Signal
    delivery_temperature: float | None = None
    stop_below: float | None = None
    restart_above: float | None = None


@dataclass(frozen=True)
class ControlValve:
    """Control valve, compressible flow by IEC 60534-2-1.

    kv             [m3/h] rated flow coefficient Kv at full opening (a Cv is
                   converted with Kv = 0.865 Cv before it gets here)
    xt             [-] pressure differential ratio factor xT (with fittings: xTP)
    opening        [-] valve travel 0..1, constant or a table in time
    characteristic ``linear``, ``equal-percentage`` or ``quick-opening``
    rangeability   [-] R of the equal-percentage characteristic (> 1)
    piping_factor  [-] piping geometry factor Fp (1: no fittings)
    fl             [-] liquid pressure recovery factor FL (with fittings: FLP), needed
                   when the valve passes liquid; ``None``: not given
    """

    kv: float
    xt: float
    opening: Signal
    characteristic: str = "linear"
    rangeability: float = 50.0
    piping_factor: float = 1.0
    fl: float | None = None


@dataclass(frozen=True)
class ReliefValve:
    """Spring-loaded pressure relief valve sized by API 520 Part I (gas).

    area          [m2] effective discharge area (API 526 letter or stated)
    set_pressure  [Pa] absolute pressure of the ``from`` node at which it opens
    action        ``pop`` (full lift at set, shuts at reseat) or ``modulating``
                  (lift grows linearly from set to ``full_lift_pressure``)
    reseat_pressure    [Pa] pop action: the valve shuts when the pressure falls to this
    full_lift_pressure [Pa] modulating action: full lift from this pressure on
    kd, kb, kc    [-] effective discharge coefficient, back-pressure correction,
                  combination correction (rupture disc upstream)
    design        ``conventional``, ``balanced-bellows`` or ``pilot-operated``: a
                  balanced-bellows valve in subcritical flow takes the critical-flow
                  equation with Kb (API 520 Part I)
    kd_liquid, kw [-] effective discharge coefficient and back-pressure correction for
                  liquid (API 520 Part I liquid sizing)
    """

    area: float
    set_pressure: float
    action: str = "pop"
    reseat_pressure: float | None = None
    full_lift_pressure: float | None = None
    kd: float = 0.975
    kb: float = 1.0
    kc: float = 1.0
    design: str = "conventional"
    kd_liquid: float = 0.65
    kw: float = 1.0


@dataclass(frozen=True)
class BurstingDisc:
    """Bursting (rupture) disc: shut until the ``from`` node reaches ``burst_pressure``
    [Pa, absolute], then an open orifice for good (area [m2], discharge coefficient,
    flow model as :class:`Orifice`)."""

    area: float
    discharge_coefficient: float
    burst_pressure: float
    flow_model: str = "real-gas"


@dataclass(frozen=True)
class CheckValve:
    """Non-return valve: opens when p_from - p_to reaches ``cracking_pressure`` [Pa],
    shuts when the difference falls to zero; open, it is an orifice (area [m2],
    discharge coefficient, flow model) passing flow from ``from`` to ``to`` only."""

    area: float
    discharge_coefficient: float
    cracking_pressure: float
    flow_model: str = "real-gas"


Device = Orifice | FixedFlow | ControlValve | ReliefValve | BurstingDisc | CheckValve


@dataclass(frozen=True)
class Link:
    """A flow device between two nodes; positive flow goes ``source`` -> ``target``.

    draws  what leaves the ``source`` vessel through this link when two phases are
           present in it: ``vapour`` (an outlet at the top) or ``liquid`` (at the
           bottom). A stream leaving the ``target`` (reverse flow) draws vapour.
    """

    name: str
    source: str
    target: str
    device: Device
    draws: str = "vapour"


# ---------------------------------------------------------------- sequences


@dataclass(frozen=True)
class Sequence:
    """Links opened one after another (cascade charging from storage banks).

    Only the link of the active step passes flow; the others are shut. The
    sequence moves to the next step when the first of the stated rules is met
    for the active link (``None``: rule not used):

    flow_below                 [kg/s] the link's mass flow (positive from -> to) falls to this
    pressure_difference_below  [Pa] p_from - p_to of the link falls to this
    longest_step               [s] the step has lasted this long
    shortest_step              [s] the flow and pressure-difference rules are watched
                               only once the step has lasted this long

    A step whose rule is already met when it comes up is skipped (with
    ``shortest_step``: only a step without forward pressure difference); after
    the last step every link of the sequence is shut.
    """

    name: str
    steps: tuple[str, ...]
    flow_below: float | None = None
    pressure_difference_below: float | None = None
    longest_step: float | None = None
    shortest_step: float | None = None


# ------------------------------------------------------------------- the run


@dataclass(frozen=True)
class StopCondition:
    """Stop the run when ``quantity`` of ``node`` goes ``direction`` ``value``.

    quantity  ``pressure`` [Pa], ``temperature`` [K] or ``mass`` [kg]
    direction ``below`` or ``above``
    at_start  when the condition already holds at t = 0: ``error`` (the run fails
              with a message: usually a condition written the wrong way round) or
              ``stop`` (the run ends at once, asked for)
    """

    node: str
    quantity: str
    direction: str
    value: float
    at_start: str = "error"

    def describe(self) -> str:
        if self.quantity == "pressure":
            v = f"{self.value / 1e5:.6g} bar a"
        elif self.quantity == "temperature":
            v = f"{self.value - 273.15:.6g} degC"
        else:
            v = f"{self.value:.6g} kg"
        return f"{self.node} {self.quantity} {self.direction} {v}"


@dataclass(frozen=True)
class RunSettings:
    """How to integrate and record.

    end_time     [s]
    record_every [s] interval of the recorded histories (event times are added exactly)
    stop         conditions that end the run early (first one met wins)
    method       scipy solve_ivp method
    rtol, atol_scale  relative tolerance; absolute tolerance as a fraction of each
                 state's initial scale
    max_step     [s] largest solver step (``inf``: no limit)
    """

    end_time: float
    record_every: float
    stop: tuple[StopCondition, ...] = ()
    method: str = "LSODA"
    rtol: float = 1e-6
    atol_scale: float = 1e-9
    max_step: float = float("inf")


@dataclass(frozen=True)
class Network:
    """Everything the model needs: fluid, nodes, links and run settings (SI)."""

    title: str
    fluid: FluidSpec
    vessels: tuple[Vessel, ...]
    reservoirs: tuple[Reservoir, ...] = ()
    links: tuple[Link, ...] = ()
    run: RunSettings = field(default_factory=lambda: RunSettings(end_time=60.0, record_every=1.0))
    atmosphere: float = 101325.0  # [Pa] the local atmosphere gauge pressures refer to
    sequences: tuple[Sequence, ...] = ()

    def node_names(self) -> tuple[str, ...]:
        return tuple(v.name for v in self.vessels) + tuple(r.name for r in self.reservoirs)


__all__ = [
    "AmbientExchange", "BurstingDisc", "CheckValve", "Constant", "ControlValve", "Device",
    "FixedFlow", "FluidSpec", "Geometry", "HeatLoad", "HeatTerm", "InitialState", "Link",
    "Network", "Orifice", "ReliefValve", "Reservoir", "RunSettings", "Sequence",
    "StopCondition", "Vessel", "VesselLimits",
]
