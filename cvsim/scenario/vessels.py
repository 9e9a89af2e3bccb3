"""Nodes of a scenario: vessels (shape, initial state, heat terms) and reservoirs.

Vessel shapes and heat terms are registered in
:mod:`cvsim.scenario.registry`; a new wall model or heat source is one more
registered :class:`~cvsim.scenario.registry.HeatTermKind`.
"""
from __future__ import annotations

from ..errors import FluidError
from ..heat import geometry as geo
from ..network import AmbientExchange, Geometry, HeatLoad, InitialState, Reservoir, Vessel
from . import properties
from .limits import LIMITS_FIELD, build_limits
from .phases import PHASES, build_phases, check_phases
from .registry import HEAT_TERMS, SHAPES, HeatTermKind, register_heat_term, register_shape
from .spec import BAD, Choice, Field, Quantity, Section, Sub, Variant

# -------------------------------------------------------------------- shapes


def _build_cylinder(values, ctx) -> Geometry:
    D, L = values["inner_diameter"], values["length"]
    volume, area, height = geo.cylinder(D, L, values["heads"], values["orientation"])
    return Geometry(volume=volume, kind="cylinder", inner_diameter=D, length=L,
                    orientation=values["orientation"], heads=values["heads"],
                    inner_area=area, height=height)


def _build_sphere(values, ctx) -> Geometry:
    D = values["inner_diameter"]
    volume, area, height = geo.sphere(D)
    return Geometry(volume=volume, kind="sphere", inner_diameter=D, inner_area=area,
                    height=height)


_DIAMETER = Field("inner_diameter", Quantity("length", above=0.0), "Inside diameter.",
                  required=True)

register_shape(Variant(
    "cylinder", "A straight cylindrical shell closed by two equal heads.",
    Section(
        "shape: cylinder",
        "Keys of `shape` with `kind: cylinder`. Volume, inner area and inside height are "
        "computed from the heads' standard proportions (see the decisions below).",
        fields=(
            _DIAMETER,
            Field("length", Quantity("length", above=0.0),
                  "Length of the straight shell, tangent line to tangent line.", required=True),
            Field("orientation", Choice(geo.ORIENTATIONS),
                  "Axis vertical or horizontal (sets the inside height).", default="vertical"),
            Field("heads", Choice(geo.HEADS),
                  "Head type at both ends; `torispherical` is crown radius D, knuckle "
                  "radius 0.06 D.", default="flat"),
        ),
    ),
    _build_cylinder,
))

register_shape(Variant(
    "sphere", "A sphere.",
    Section("shape: sphere", "Keys of `shape` with `kind: sphere`.", fields=(_DIAMETER,)),
    _build_sphere,
))

SHAPE = Section(
    "shape",
    "Inside shape of a vessel, instead of `volume`; `kind` picks the keys that follow.",
    fields=(Field("kind", Choice(SHAPES), "Shape kind.", required=True),),
    variant=("kind", SHAPES),
)

# ---------------------------------------------------------------- heat terms


def _build_load(value, geometry, at, ctx) -> HeatLoad:
    return HeatLoad(name="load", rate=value)


register_heat_term(HeatTermKind(
    Field("load", Quantity("power", table=True),
          "Heat rate into the gas (negative: removed), e.g. an electric heater or a "
          "cooling coil."),
    _build_load,
))


def _check_ambient(values, ctx) -> None:
    if values.get("area") not in (None, BAD) and values.get("ua") not in (None, BAD):
        ctx.problem(values.where["area"], "'area' goes with 'coefficient'; 'ua' already "
                    "includes the area")


TO_AMBIENT = Section(
    "heat: to_ambient",
    "Heat exchange with the surroundings, Q = UA (T_ambient - T_gas), with UA given "
    "directly or as a coefficient times an area.",
    fields=(
        Field("ua", Quantity("thermal_conductance", at_least=0.0),
              "Overall coefficient times area, UA."),
        Field("coefficient", Quantity("heat_transfer_coefficient", at_least=0.0),
              "Overall heat transfer coefficient U, based on `area`."),
        Field("area", Quantity("area", above=0.0),
              "Area for `coefficient`; default: the vessel's inner area (needs `shape`)."),
        Field("ambient", Quantity("temperature", table=True),
              "Temperature of the surroundings.", required=True),
    ),
    one_of=(("ua", "coefficient"),),
    checks=(_check_ambient,),
)


def _check_ambient_in_vessel(values, vessel, at, ctx) -> None:
    if (values.get("coefficient") not in (None, BAD) and values.get("area") is None
            and vessel.get("shape") is None and vessel.get("volume") not in (None, BAD)):
        ctx.problem(at, "'coefficient' needs an 'area' here: the vessel is given by its "
                    "volume, so its inner area is unknown (give 'area', or 'shape' instead "
                    "of 'volume')")


def _build_ambient(values, geometry, at, ctx) -> AmbientExchange:
    ua = values["ua"]
    if ua is None:
        area = values["area"]
        if area is None:
            area = geometry.inner_area
            ctx.record(at.child("area", None), "(inner area)", area, "m2",
                       "the vessel's inner area")
        ua = values["coefficient"] * area
        ctx.record(at.child("ua", None), "(coefficient x area)", ua, "W/K", "")
    return AmbientExchange(name="to_ambient", ua=ua, ambient=values["ambient"])


register_heat_term(HeatTermKind(
    Field("to_ambient", Sub(TO_AMBIENT), "Heat exchange with the surroundings."),
    _build_ambient,
    _check_ambient_in_vessel,
))

HEAT = Section(
    "heat",
    "Heat terms of a vessel, each optional; their heat rates add up.",
    extra=HEAT_TERMS,
)

# ----------------------------------------------------------- vessel, reservoir

def _check_initial(values, ctx) -> None:
    given = [n for n in ("pressure", "temperature") if values.get(n) is not None]
    if values.get("liquid_fraction") is None:
        for n in ("pressure", "temperature"):
            if n not in given:
                ctx.problem(values.where[n], f"missing key '{n}' in {values.at.key}: give "
                            "pressure and temperature (single phase), or one of them with "
                            "liquid_fraction (two-phase contents)")
    elif len(given) != 1:
        ctx.problem(values.at, f"with liquid_fraction give pressure or temperature, not both, "
                    f"in {values.at.key}: two-phase contents sit on the saturation line")


INITIAL = Section(
    "initial",
    "State of a vessel's contents at time 0: pressure and temperature (single phase), or "
    "saturated two-phase contents given by pressure or temperature and the liquid's "
    "share of the volume.",
    fields=(
        Field("pressure", Quantity("pressure"), "Initial pressure."),
        Field("temperature", Quantity("temperature"), "Initial gas temperature."),
        Field("liquid_fraction", Quantity("fraction", at_least=0.0, at_most=1.0),
              "Share of the volume filled with saturated liquid (two-phase contents, e.g. "
              "`40 %`); needs `properties: real`."),
    ),
    checks=(_check_initial,),
)


def build_initial(values, at, ctx) -> InitialState:
    """InitialState (SI) from ``initial``; two-phase contents get the saturation
    pressure or temperature that goes with the one given."""
    f = values["liquid_fraction"]
    if f is None:
        return InitialState(values["pressure"], values["temperature"])
    try:
        p, T = properties.saturation(ctx.fluid, values["pressure"], values["temperature"])
    except FluidError as exc:
        ctx.problem(at, str(exc))
        return InitialState(1e5, 300.0, f)
    if values["pressure"] is None:
        ctx.record(at.child("pressure", None), "(saturation)", p, "Pa",
                   "saturation pressure at the temperature given")
    else:
        ctx.record(at.child("temperature", None), "(saturation)", T, "K",
                   "saturation temperature at the pressure given")
    return InitialState(p, T, f)


def _check_vessel(values, ctx) -> None:
    check_phases(values.get("phases"), values, ctx)
    heat = values.get("heat")
    if not isinstance(heat, dict):
        return
    for name, kind in HEAT_TERMS.items():
        term = heat.get(name)
        if kind.check is not None and term not in (None, BAD):
            kind.check(term, values, heat.where[name], ctx)


VESSEL = Section(
    "vessels",
    "Each vessel is a rigid control volume whose mass and energy change with its links "
    "and heat terms. Give `volume` or `shape`.",
    fields=(
        Field("volume", Quantity("volume", above=0.0),
              "Internal volume (a gas cylinder's water capacity)."),
        Field("shape", Sub(SHAPE), "Inside shape; gives the volume, inner area and height."),
        Field("initial", Sub(INITIAL), "Initial state.", required=True),
        Field("heat", Sub(HEAT), "Heat terms; none given: adiabatic."),
        Field("phases", Sub(PHASES), "How vapour and liquid are held: one equilibrium "
              "state (default) or separated zones at their own temperatures."),
        LIMITS_FIELD,
    ),
    one_of=(("volume", "shape"),),
    checks=(_check_vessel,),
)

RESERVOIR = Section(
    "reservoirs",
    "Each reservoir is a node whose pressure and temperature are imposed (the atmosphere, "
    "a supply header, a flare header), constant or following a table in time.",
    fields=(
        Field("pressure", Quantity("pressure", table=True), "Pressure.", required=True),
        Field("temperature", Quantity("temperature", table=True),
              "Temperature (flow out of the reservoir leaves at this temperature).",
              required=True),
    ),
)


def build_vessel(name: str, values, ctx) -> Vessel:
    """A :class:`~cvsim.network.Vessel` from the values read for ``vessels.<name>``."""
    if values["volume"] is not None:
        geometry = Geometry(volume=values["volume"])
    else:
        shape = values["shape"]
        geometry = shape.variant.build(shape, ctx)
        at = values.where["shape"]
        ctx.record(at.child("volume", None), "(from shape)", geometry.volume, "m3", "computed")
        ctx.record(at.child("inner_area", None), "(from shape)", geometry.inner_area, "m2",
                   "computed")
        ctx.record(at.child("height", None), "(from shape)", geometry.height, "m",
                   "computed inside height")
    initial = values["initial"]
    heat = values["heat"] or {}
    terms = tuple(kind.build(heat[key], geometry, heat.where[key], ctx)
                  for key, kind in HEAT_TERMS.items() if heat.get(key) is not None)
    return Vessel(name=name, geometry=geometry,
                  initial=build_initial(initial, values.where["initial"], ctx), heat=terms,
                  limits=build_limits(values["limits"], ctx, terms),
                  zones=build_phases(values["phases"], values.where["phases"], ctx))


def build_reservoir(name: str, values, ctx) -> Reservoir:
    """A :class:`~cvsim.network.Reservoir` from the values read for ``reservoirs.<name>``."""
    return Reservoir(name=name, pressure=values["pressure"], temperature=values["temperature"])
