"""Scenario keys of vessel walls and fire exposure, and how they become network definitions.

Registers two heat terms under a vessel's ``heat``:

* ``wall``: a lumped or layered wall with heat transfer inside (gas to wall) and
  outside (wall to surroundings, optionally a fire);
* ``fire``: an API 521 pool fire heating the contents directly (no wall).

Both need the vessel's ``shape`` (areas, lengths for the correlations).
"""
from __future__ import annotations

from dataclasses import dataclass

from ..heat import geometry as geo
from ..heat.level import area_below
from ..heat.definitions import (FlameExposure, GasFire, InsideTransfer, OutsideTransfer,
                                PoolFire, Wall, WallLayer, WettedSurface)
from ..heat.fire import FIRE_HEIGHT
from ..heat.materials import MATERIALS, constant
from .registry import HeatTermKind, register_heat_term
from .spec import (BAD, Choice, Field, Kind, OneOrMore, Quantity, Section, Sub, Text,
                   Variant, read_section)

DEFAULT_DIVISIONS = 4
MAX_DIVISIONS = 100

# ---------------------------------------------------------------- materials

OWN_MATERIAL = Section(
    "material values",
    "A wall material given by its values (constant in temperature), e.g. "
    "`material: {name: carbon fibre composite, density: 1550 kg/m3, heat_capacity: "
    "1000 J/kg/K, conductivity: 0.7 W/m/K}`.",
    fields=(
        Field("name", Text(), "Label shown in outputs.", default="material given in the scenario"),
        Field("density", Quantity("density", above=0.0), "Density.", required=True),
        Field("heat_capacity", Quantity("specific_heat", above=0.0),
              "Specific heat capacity.", required=True),
        Field("conductivity", Quantity("thermal_conductivity", above=0.0),
              "Thermal conductivity (through the thickness).", required=True),
    ),
)


class MaterialKind(Kind):
    """A material name from the table, or a mapping of the material's values."""

    def read(self, raw, at, ctx):
        if isinstance(raw, str) and raw in MATERIALS:
            mat = MATERIALS[raw]
            ctx.record(at, raw, raw, "", f"{mat.name}; {mat.source}")
            return mat
        if isinstance(raw, dict):
            values = read_section(raw, OWN_MATERIAL, at, ctx)
            if values is BAD or not values.ok("name", "density", "heat_capacity",
                                               "conductivity"):
                return BAD
            return constant(values["name"], values["density"], values["heat_capacity"],
                            values["conductivity"])
        import difflib
        close = difflib.get_close_matches(str(raw), list(MATERIALS), n=1)
        hint = f"; did you mean '{close[0]}'?" if close else ""
        ctx.problem(at, f"'{raw}' is not a material: write one of {', '.join(MATERIALS)} or "
                    f"{{density: ..., heat_capacity: ..., conductivity: ...}}{hint}")
        return BAD

    def describe(self) -> str:
        names = " \\| ".join(f"`{n}`" for n in MATERIALS)
        return f"{names} \\| mapping, see [material values](#material-values)"

    def sections(self):
        return (OWN_MATERIAL,)


@dataclass(frozen=True)
class Count(Kind):
    """A whole number between ``low`` and ``high``."""

    low: int = 1
    high: int = MAX_DIVISIONS

    def read(self, raw, at, ctx):
        if isinstance(raw, bool) or not isinstance(raw, int) or not self.low <= raw <= self.high:
            ctx.problem(at, f"expected a whole number from {self.low} to {self.high}, "
                        f"got {raw!r}")
            return BAD
        ctx.record(at, raw, float(raw))
        return raw

    def describe(self) -> str:
        return f"whole number, {self.low} to {self.high}"


LAYER = Section(
    "wall layer",
    "One layer of a wall; layers are listed from the inside out.",
    fields=(
        Field("material", MaterialKind(), "The layer's material: a name from the material "
              "table (values and sources in docs/theory.md) or its own values.",
              required=True),
        Field("thickness", Quantity("length", above=0.0), "Thickness.", required=True),
        Field("divisions", Count(),
              f"Layered walls: number of equal slices the layer is cut into; temperatures "
              f"are computed at every slice face (default {DEFAULT_DIVISIONS}). Not for "
              "lumped walls."),
    ),
)

# ------------------------------------------------------------------- inside

INSIDE_MODELS: dict[str, Variant] = {}
for _variant in (
    Variant("natural", "Natural convection from the Churchill & Chu correlations with the "
            "gas's transport properties at the film temperature (vertical surface, "
            "horizontal cylinder or sphere by the vessel's shape). Filling jets are not "
            "counted: the conservative choice for a fill's peak gas temperature.",
            Section("inside: natural", "No further keys.")),
    Variant("natural+jet", "Natural convection combined (h^3 = h_F^3 + h_N^3) with the forced "
            "convection of every stream entering the vessel, Nu_D = 0.56 Re_d^0.67 on the "
            "jet's Reynolds number (coefficients from memory: see docs/theory.md; every "
            "run that uses it warns that its peak gas temperature may be optimistic).",
            Section("inside: natural+jet", "Keys of `inside` with `model: natural+jet`.",
                    fields=(Field("inlet_diameter", Quantity("length", above=0.0),
                                  "Diameter of the jets entering the vessel; default: each "
                                  "inlet orifice's bore."),))),
    Variant("fixed", "A stated coefficient.",
            Section("inside: fixed", "Keys of `inside` with `model: fixed`.",
                    fields=(Field("coefficient", Quantity("heat_transfer_coefficient",
                                                          at_least=0.0),
                                  "Gas-to-wall heat transfer coefficient.", required=True),
                            Field("while_filling", Quantity("heat_transfer_coefficient",
                                                            at_least=0.0),
                                  "Coefficient while a stream enters the vessel; default: "
                                  "`coefficient`."),))),
):
    INSIDE_MODELS[_variant.name] = _variant

INSIDE = Section(
    "wall inside",
    "Heat transfer between the gas and the wall's inside surface; `model` picks the keys "
    "that follow.",
    fields=(Field("model", Choice(INSIDE_MODELS), "How the coefficient is found.",
                  required=True),),
    variant=("model", INSIDE_MODELS),
)

# ---------------------------------------------------------------------- fire

FIRE_MODELS: dict[str, Variant] = {}

_AREA = Field("area", Quantity("area", above=0.0),
              f"Exposed (wetted) area, held constant; default: the outside area within "
              f"{FIRE_HEIGHT:g} m above the base of the fire, and for the pool fire, while "
              "the vessel holds a liquid level, the part of it below the level (API 521), "
              "following the level in time.")
_ELEVATION = Field("elevation", Quantity("length", at_least=0.0),
                   "Height of the vessel's lowest outside point above the base of the fire "
                   f"(grade, or where a pool can form): surfaces count up to {FIRE_HEIGHT:g} m "
                   "above the base (API 521). Not used with a stated `area`.",
                   default="0 m")
_STARTS = Field("starts_at", Quantity("time", at_least=0.0), "Time the fire starts.",
                default="0 s")

POOL_FIELDS = (
    Field("drainage_and_firefighting", Choice(("adequate", "inadequate")),
          "Prompt fire-fighting and adequate drainage of spilled liquid present "
          "(C1 = 43 200 W/m^1.64) or not (70 900).", required=True),
    Field("environment_factor", Quantity("dimensionless", above=0.0, at_most=1.0),
          "Environment factor F (1 for a bare vessel; see API 521 for insulation, water "
          "spray, burial).", default=1.0),
    _AREA, _ELEVATION, _STARTS,
)

for _variant in (
    Variant("pool", "API 521 heat input Q = C1 F A^0.82 on the wetted (exposed) area.",
            Section("fire: pool", "Keys of `fire` with `model: pool`.", fields=POOL_FIELDS)),
    Variant("flame", "A flame on the exposed outside area: q = eps_s sigma (eps_f T_f^4 - "
            "T_s^4) + h_f (T_f - T_s); every value is an input (no defaults).",
            Section("fire: flame", "Keys of `fire` with `model: flame` (walls only).", fields=(
                Field("flame_temperature", Quantity("temperature"), "Flame temperature.",
                      required=True),
                Field("flame_emissivity", Quantity("dimensionless", above=0.0, at_most=1.0),
                      "Flame emissivity.", required=True),
                Field("surface_emissivity", Quantity("dimensionless", above=0.0, at_most=1.0),
                      "Emissivity (and absorptivity) of the outside surface.", required=True),
                Field("convective_coefficient", Quantity("heat_transfer_coefficient",
                                                         at_least=0.0),
                      "Convective coefficient between flame gases and surface.",
                      required=True),
                _AREA, _ELEVATION, _STARTS))),
):
    FIRE_MODELS[_variant.name] = _variant

FIRE = Section(
    "fire",
    "Fire exposure of the outside; `model` picks the keys that follow.",
    fields=(Field("model", Choice(FIRE_MODELS), "Fire model.", required=True),),
    variant=("model", FIRE_MODELS),
)

# ------------------------------------------------------------------- outside

OUTSIDE_MODELS: dict[str, Variant] = {}
_AMBIENT = Field("ambient", Quantity("temperature", table=True),
                 "Temperature of the surroundings.", required=True)
_EMISSIVITY = Field("emissivity", Quantity("dimensionless", at_least=0.0, at_most=1.0),
                    "Emissivity of the outside surface for radiation to surroundings at the "
                    "ambient temperature (0: none).", default=0.0)
for _variant in (
    Variant("natural", "Natural convection in air (Churchill & Chu, by the vessel's shape) at "
            "the local atmospheric pressure and the film temperature.",
            Section("outside: natural", "Keys of `outside` with `model: natural`.",
                    fields=(_AMBIENT, _EMISSIVITY))),
    Variant("fixed", "A stated coefficient.",
            Section("outside: fixed", "Keys of `outside` with `model: fixed`.",
                    fields=(Field("coefficient", Quantity("heat_transfer_coefficient",
                                                          at_least=0.0),
                                  "Wall-to-surroundings convective coefficient.",
                                  required=True), _AMBIENT, _EMISSIVITY))),
    Variant("insulated", "No heat exchange with the surroundings (a fire, if any, still "
            "heats the wall).", Section("outside: insulated", "No further keys.")),
):
    OUTSIDE_MODELS[_variant.name] = _variant

OUTSIDE = Section(
    "wall outside",
    "Heat transfer between the wall's outside surface and the surroundings, and fire "
    "exposure; `model` picks the keys that follow.",
    fields=(Field("model", Choice(OUTSIDE_MODELS), "How the coefficient is found.",
                  required=True),
            Field("fire", Sub(FIRE), "Fire on the outside; none given: no fire.")),
    variant=("model", OUTSIDE_MODELS),
)

# ---------------------------------------------------------------------- wall


def _check_wall(values, ctx) -> None:
    layers = values.get("layers")
    if values.get("model") == "lumped" and isinstance(layers, list):
        for layer in layers:
            if layer is not BAD and layer.get("divisions") not in (None, BAD):
                ctx.problem(layer.where["divisions"], "a lumped wall has one temperature; "
                            "'divisions' applies to layered walls only")


WALL = Section(
    "heat: wall",
    "The vessel's wall with temperatures of its own: lumped (one temperature) or layered "
    "(1-D transient conduction through the thickness, the area at each depth that of the "
    "vessel's parallel surface). Needs the vessel's `shape`.",
    fields=(
        Field("model", Choice(("lumped", "layered")),
              "`lumped`: one temperature for the whole wall; `layered`: temperatures "
              "through the thickness.", required=True),
        Field("layers", OneOrMore(LAYER), "The wall's layers from the inside out.",
              required=True),
        Field("initial_temperature", Quantity("temperature"),
              "Uniform wall temperature at time 0; default: the gas's initial temperature."),
        Field("inside", Sub(INSIDE), "Heat transfer from the gas to the wall.",
              default={"model": "natural"}),
        Field("outside", Sub(OUTSIDE), "Heat transfer from the wall to the surroundings, "
              "and fire.", required=True),
    ),
    checks=(_check_wall,),
)


def _needs_shape(name):
    def check(value, vessel, at, ctx):
        if vessel.get("shape") is None and vessel.get("volume") not in (None, BAD):
            ctx.problem(at, f"'{name}' needs the vessel's shape (areas and lengths for the "
                        "heat transfer): give 'shape' instead of 'volume'")
        heat = vessel.get("heat")
        if name == "fire" and isinstance(heat, dict) and heat.get("wall") not in (None, BAD):
            ctx.problem(at, "with a wall, put the fire under 'wall.outside.fire' (it heats "
                        "the wall, not the gas)")
    return check


def _fire_area(values, geometry, thickness, at, ctx) -> float | None:
    """The exposed area: given, or the area within the fire's height (API 521)."""
    if values["area"] is not None:
        return values["area"]
    reach = FIRE_HEIGHT - values["elevation"]
    area = 0.0
    if reach > 0.0:
        area = area_below(reach, geometry.kind, geometry.inner_diameter,
                          geometry.length or 0.0, geometry.heads, geometry.orientation,
                          offset=thickness)
    if area <= 0.0:
        ctx.problem(values.where["elevation"], f"the vessel lies entirely above the fire's "
                    f"reach ({FIRE_HEIGHT:g} m above its base): no area is exposed; give "
                    "'area' to expose one anyway")
        return None
    surface = "outside area" if thickness > 0.0 else "area (inside dimensions)"
    note = (f"{surface} within {FIRE_HEIGHT:g} m above the base of the fire (API 521), "
            f"vessel bottom {values['elevation']:g} m above it")
    if values.variant is None or values.variant.name == "pool":
        note += ("; while the vessel holds a liquid level, the part below the level "
                 "(wetted area), following the level")
    ctx.record(values.at.child("area", None), "(computed)", area, "m2", note)
    return area


def _wetted(values, geometry, thickness) -> WettedSurface | None:
    """How the pool fire's wetted area follows the level; ``None`` for a stated area."""
    if values["area"] is not None:
        return None
    return WettedSurface(kind=geometry.kind, inner_diameter=geometry.inner_diameter,
                         length=geometry.length or 0.0, heads=geometry.heads,
                         orientation=geometry.orientation, offset=thickness,
                         elevation=values["elevation"],
                         reach=FIRE_HEIGHT - values["elevation"])


def _pool(values, area, wetted) -> PoolFire:
    return PoolFire(area=area, environment_factor=values["environment_factor"],
                    drainage=values["drainage_and_firefighting"] == "adequate",
                    starts_at=values["starts_at"], wetted=wetted)


def _build_fire(values, geometry, thickness, at, ctx):
    area = _fire_area(values, geometry, thickness, at, ctx)
    if area is None:
        return None
    if values.variant.name == "pool":
        return _pool(values, area, _wetted(values, geometry, thickness))
    return FlameExposure(area=area, flame_temperature=values["flame_temperature"],
                         flame_emissivity=values["flame_emissivity"],
                         surface_emissivity=values["surface_emissivity"],
                         convective_coefficient=values["convective_coefficient"],
                         starts_at=values["starts_at"])


def _build_wall(values, geometry, at, ctx) -> Wall:
    layers = []
    for layer in values["layers"]:
        divisions = layer["divisions"]
        if values["model"] == "layered" and divisions is None:
            divisions = DEFAULT_DIVISIONS
            ctx.record(layer.at.child("divisions", None), f"(default {DEFAULT_DIVISIONS})",
                       float(divisions), "", "default")
        layers.append(WallLayer(layer["material"], layer["thickness"], divisions or 1))
    layers = tuple(layers)
    thickness = sum(la.thickness for la in layers)
    D, L = geometry.inner_diameter, geometry.length or 0.0
    surface = geo.wall_surface(geometry.kind, D, L, geometry.heads)
    shape = "sphere" if geometry.kind == "sphere" else geometry.orientation
    outer = geo.outer_height(geometry.kind, D, L, geometry.heads, geometry.orientation,
                             thickness)
    ins = values["inside"]
    inside = InsideTransfer(ins.variant.name, coefficient=ins.get("coefficient"),
                            while_filling=ins.get("while_filling"),
                            inlet_diameter=ins.get("inlet_diameter"))
    out = values["outside"]
    model = out.variant.name
    outside = OutsideTransfer(model, ambient=out.get("ambient"),
                              coefficient=out.get("coefficient"),
                              emissivity=out.get("emissivity") or 0.0)
    fire = None
    if out["fire"] is not None:
        fire = _build_fire(out["fire"], geometry, thickness, out.where["fire"], ctx)
    mass = sum(la.material.density * surface.volume(x0, x0 + la.thickness)
               for la, x0 in zip(layers, _starts(layers)))
    ctx.record(at.child("outer_area", None), "(computed)", surface.area(thickness), "m2",
               "outside surface of the wall (parallel surface at the wall's thickness)")
    ctx.record(at.child("mass", None), "(computed)", mass, "kg", "wall mass")
    if values["model"] == "layered":
        n = sum(la.divisions for la in layers) + 1
        ctx.record(at.child("temperatures", None), "(computed)", float(n), "",
                   "temperatures through the thickness (slice faces)")
    return Wall(name="wall", model=values["model"], layers=layers, surface=surface,
                convection_shape=shape, inside_length=geometry.height,
                outside_length=outer, inside_diameter=D, inside=inside, outside=outside,
                fire=fire, initial_temperature=values["initial_temperature"], key=at.key)


def _starts(layers):
    x = 0.0
    for la in layers:
        yield x
        x += la.thickness


register_heat_term(HeatTermKind(
    Field("wall", Sub(WALL), "The vessel's wall: heat capacity, conduction, heat transfer "
          "inside and outside, fire."),
    _build_wall,
    _needs_shape("wall"),
))

# ------------------------------------------------------------- fire on the gas

GAS_FIRE = Section(
    "heat: fire",
    "An API 521 pool fire heating the vessel's contents directly, without a wall (the "
    "usual relief-load basis). Needs the vessel's `shape`; with a wall, give the fire "
    "under `wall.outside.fire` instead.",
    fields=POOL_FIELDS,
)


def _build_gas_fire(values, geometry, at, ctx):
    area = _fire_area(values, geometry, 0.0, at, ctx)
    return GasFire(name="fire", fire=_pool(values, area, _wetted(values, geometry, 0.0)))


register_heat_term(HeatTermKind(
    Field("fire", Sub(GAS_FIRE), "Pool fire heating the contents (no wall)."),
    _build_gas_fire,
    _needs_shape("fire"),
))
