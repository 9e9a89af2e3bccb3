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

    name        CoolProp fluid name (pure or pseudo-pure), e.g. ``Nitrogen``; for a
                mixture its label.
    model       ``real`` (CoolProp HEOS), ``ideal-gas`` (constant heat capacities) or
                ``mixture`` (named components on an equation of state, :mod:`cvsim.mixture`).
    molar_mass  [kg/mol] ideal-gas model only; ``None``: CoolProp's value.
    cp          [J/(kg K)] ideal-gas model only; ``None``: CoolProp's ideal-gas
                value at ``cp_temperature``.
    components  mixture only: component names (CoolProp's), in the engine's order
    mole_fractions  mixture only: overall mole fractions of the network's contents
                (normalised), one per component
    equation    mixture only: ``Peng-Robinson``, ``SRK`` or ``GERG-2008``
    """

    name: str
    model: str = "real"
    molar_mass: float | None = None
    cp: float | None = None
    cp_temperature: float = 298.15
    components: tuple[str, ...] = ()
    mole_fractions: tuple[float, ...] = ()
    equation: str = ""


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
class RuptureLimit:
    """Rupture screening of a vessel's wall in a fire (:mod:`cvsim.rupture`).

    strength             how the metal's strength falls with temperature
                         (:class:`cvsim.mechanics.StrengthData`)
    criterion            ``tensile`` (ultimate tensile strength at temperature) or
                         ``yield`` (yield strength at temperature)
    fraction             [-] share of that strength the stress may reach
    tensile_strength     [Pa] room-temperature ultimate tensile strength (``None``:
                         not given)
    yield_strength       [Pa] room-temperature yield strength (``None``: not given)
    stress               ``hoop`` (the larger membrane stress) or ``equivalent``
                         (von Mises of the membrane stresses)
    corrosion_allowance  [m] taken off the load-bearing layer, on its inside
    layer                index (0: innermost) of the wall layer that bears the pressure
    creep                ``None`` or (Larson-Miller constant C [-], the master curve's
                         parameters P [K], its rupture stresses [Pa]): creep damage by
                         life fractions (:func:`cvsim.mechanics.creep_damage`)
    key                  key path in the scenario, for messages
    """

    strength: object
    criterion: str = "tensile"
    fraction: float = 1.0
    tensile_strength: float | None = None
    yield_strength: float | None = None
    stress: str = "hoop"
    corrosion_allowance: float = 0.0
    layer: int = 0
    creep: tuple | None = None
    key: str = ""

    @property
    def room_strength(self) -> float:
        """[Pa] the room-temperature strength the criterion scales."""
        return self.tensile_strength if self.criterion == "tensile" else self.yield_strength


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
    rupture                rupture screening of the wall in a fire, or ``None``
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
    rupture: RuptureLimit | None = None


@dataclass(frozen=True)
class SeparatedZones:
    """Vapour and liquid held as two zones at their own temperatures (one pressure),
    with heat and mass moving between them (:mod:`cvsim.zones`).

    droplet_diameter   [m] condensate drops in the vapour zone, which settle into the
                       liquid at their Stokes velocity (rain-out)
    bubble_rise_coefficient  [-] C of the bubble rise velocity
                       C (g sigma (rho_l - rho_v)/rho_l^2)^(1/4) that carries vapour
                       formed in the liquid to the vapour zone (boil-off)
    interface_factor   [-] multiplies the natural-convection coefficients across the
                       interface (1: the correlations as published)
    boiling_surface_constant  [-] C_sf of Rohsenow's nucleate-boiling correlation on
                       the wetted wall
    boiling_prandtl_exponent  [-] n of the same correlation
    """

    droplet_diameter: float = 20e-6
    bubble_rise_coefficient: float = 1.53
    interface_factor: float = 1.0
    boiling_surface_constant: float = 0.013
    boiling_prandtl_exponent: float = 1.7


@dataclass(frozen=True)
class Vessel:
    name: str
    geometry: Geometry
    initial: InitialState
    heat: tuple[HeatTerm, ...] = ()
    limits: VesselLimits | None = None
    #: ``None``: one equilibrium state (the default); else separated zones
    zones: SeparatedZones | None = None

    @property
    def volume(self) -> float:
        return self.geometry.volume


@dataclass(frozen=True)
class Reservoir:
    """A node with imposed pressure [Pa] and temperature [K] (constant or tables).

    composition  mixture only: mole fractions of what it supplies, one per component
                 of the fluid; ``None``: the fluid's composition
    """

    name: str
    pressure: Signal
    temperature: Signal
    composition: tuple[float, ...] | None = None


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
    expansion             a mixture's real-gas nozzle: ``equilibrium`` (phases split
                          and exchange mass through the nozzle, homogeneous
                          equilibrium) or ``frozen`` (each phase keeps its share and
                          composition: :mod:`cvsim.flow.frozen_nozzle`)
    """

    area: float
    discharge_coefficient: float
    flow_model: str = "real-gas"
    open_from: float = 0.0
    open_until: float = float("inf")
    expansion: str = "equilibrium"


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
    opening        [-] valve travel 0..1, constant or a table in time; ``None``: moved
                   by a controller (:class:`Controller`)
    characteristic ``linear``, ``equal-percentage`` or ``quick-opening``
    rangeability   [-] R of the equal-percentage characteristic (> 1)
    piping_factor  [-] piping geometry factor Fp (1: no fittings)
    fl             [-] liquid pressure recovery factor FL (with fittings: FLP), needed
                   when the valve passes liquid; ``None``: not given
    """

    kv: float
    xt: float
    opening: Signal | None
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


@dataclass(frozen=True)
class LineOrifice:
    """A restriction orifice at one end of a line: area [m2], discharge coefficient [-],
    ``at`` the ``from`` or ``to`` end of the link."""

    area: float
    discharge_coefficient: float
    at: str = "to"


@dataclass(frozen=True)
class Line:
    """A pipe or hose with friction between two nodes, optionally with a control valve
    and a restriction orifice in series on the same link (:mod:`cvsim.flow.line`).

    length            [m] straight length
    diameter          [m] inside diameter
    roughness         [m] absolute roughness of the wall
    fittings_k        [-] sum of the resistance coefficients K of the fittings (velocity
                      heads of the line's bore; an entrance counts, the exit does not)
    fittings_length   [m] equivalent length of fittings, added to ``length``
    elevation_change  [m] height of the ``to`` end above the ``from`` end
    flow_model        ``adiabatic`` (Fanno flow) or ``isothermal`` (gas)
    orifice           :class:`LineOrifice` or ``None``
    valve             :class:`ControlValve` in series, or ``None``; its ``opening`` is
                      ``None`` when a controller moves it
    valve_at          the end the valve sits at, ``from`` or ``to``
    viscosity         [Pa s] stated viscosity; ``None``: from the fluid (CoolProp)
    """

    length: float
    diameter: float
    roughness: float
    fittings_k: float = 0.0
    fittings_length: float = 0.0
    elevation_change: float = 0.0
    flow_model: str = "adiabatic"
    orifice: LineOrifice | None = None
    valve: ControlValve | None = None
    valve_at: str = "from"
    viscosity: float | None = None


@dataclass(frozen=True)
class Regulator:
    """A self-acting (spring-loaded) regulator: a valve whose travel follows the
    pressure it senses, with a proportional band.

    holds         ``downstream``: a pressure-reducing regulator sensing the ``to`` node,
                  shut at ``set_pressure`` and fully open ``band`` below it (the droop);
                  ``upstream``: a back-pressure regulator sensing the ``from`` node, shut
                  at ``set_pressure`` and fully open ``band`` above it (the build-up)
    set_pressure  [Pa] absolute
    band          [Pa] droop or build-up (> 0)
    kv            [m3/h] flow coefficient Kv of the fully open regulator (its capacity)
    xt            [-] pressure differential ratio factor xT of IEC 60534-2-1
    fl            [-] liquid pressure recovery factor FL, or ``None``
    """

    holds: str
    set_pressure: float
    band: float
    kv: float
    xt: float
    fl: float | None = None


Device = (Orifice | FixedFlow | ControlValve | ReliefValve | BurstingDisc | CheckValve | Line
          | Regulator)


@dataclass(frozen=True)
class Link:
    """A flow device between two nodes; positive flow goes ``source`` -> ``target``.

    draws  what leaves the ``source`` vessel through this link when two phases are
           present in it: ``vapour`` (an outlet at the top) or ``liquid`` (at the
           bottom). A stream leaving the ``target`` (reverse flow) draws vapour.
    outlet_height  [m] height of the outlet above the ``source`` vessel's inside bottom
           (vessels given by their shape); ``None``: the outlet is where ``draws`` says
    outlet_share   [-] share of the ``source`` vessel's volume below ``outlet_height``
           (what :func:`cvsim.outlets.drawn_by` reads); ``None`` without a height
    """

    name: str
    source: str
    target: str
    device: Device
    draws: str = "vapour"
    outlet_height: float | None = None
    outlet_share: float | None = None


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


# -------------------------------------------------------------- controllers


@dataclass(frozen=True)
class Fill:
    """What makes a controller a fuelling fill: it ramps the receiver's pressure and
    ends on a final pressure, a gas temperature or a state of charge.

    receiver                  the vessel filled
    pressure_ramp             [Pa/s] average pressure-rise rate the set point follows
    start_pressure            [Pa] receiver pressure at the start (the ramp's origin)
    nominal_working_pressure  [Pa] NWP of the receiving system
    maximum_operating_pressure  [Pa] 125 % of NWP (gauge), the peak pressure's limit
    reference_density         [kg/m3] density at NWP and 15 degC (100 % state of charge)
    final_pressure            [Pa] the fill ends when the receiver reaches this
    temperature_limit         [K] ... or when its gas reaches this
    state_of_charge           [-] ... or when its density reaches this share of the
                              reference density
    """

    receiver: str
    pressure_ramp: float
    start_pressure: float
    nominal_working_pressure: float
    maximum_operating_pressure: float
    reference_density: float
    final_pressure: float
    temperature_limit: float
    state_of_charge: float


@dataclass(frozen=True)
class Controller:
    """A controller that moves the valve of a link to hold a measured quantity.

    valve             name of the link whose valve it moves (a control valve, or a line
                      with a valve)
    measures          ``pressure``, ``temperature``, ``mass-flow`` or
                      ``pressure-rise-rate``
    of                the node measured (the link, for ``mass-flow``)
    set_point         [SI unit of the measured quantity] constant or a table in time
    mode              ``pi`` (proportional-integral) or ``on-off``
    opens_when        ``below``: the valve opens further while the measured value is
                      below the set point (a fill valve); ``above``: while it is above
                      (a vent valve)
    gain              [opening per SI unit of the measured quantity] PI
    integral_time     [s] PI
    deadband          [SI unit of the measured quantity] on-off: the band, centred on the
                      set point, between opening and shutting
    minimum_opening, maximum_opening  [-] limits of the output (the integral stops at
                      them: anti-windup)
    initial_opening   [-] output at the start
    measurement_lag   [s] time constant of the first-order filter through which a mass
                      flow or a pressure-rise rate is measured (the rate is the
                      filtered derivative of the pressure)
    fill              :class:`Fill` for a fuelling fill, else ``None``
    """

    name: str
    valve: str
    measures: str
    of: str
    set_point: Signal
    mode: str = "pi"
    opens_when: str = "below"
    gain: float | None = None
    integral_time: float | None = None
    deadband: float | None = None
    minimum_opening: float = 0.0
    maximum_opening: float = 1.0
    initial_opening: float = 0.0
    measurement_lag: float | None = None
    fill: Fill | None = None


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
    controllers: tuple[Controller, ...] = ()

    def node_names(self) -> tuple[str, ...]:
        return tuple(v.name for v in self.vessels) + tuple(r.name for r in self.reservoirs)


__all__ = [
    "AmbientExchange", "BurstingDisc", "CheckValve", "Constant", "ControlValve", "Controller",
    "Device", "Fill", "FixedFlow", "FluidSpec", "Geometry", "HeatLoad", "HeatTerm",
    "InitialState", "Line", "LineOrifice", "Link", "Network", "Orifice", "Regulator",
    "ReliefValve", "Reservoir", "RunSettings", "RuptureLimit", "SeparatedZones", "Sequence",
    "StopCondition", "Vessel", "VesselLimits",
]
