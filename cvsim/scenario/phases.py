"""The ``phases:`` key of a vessel: one equilibrium mixture (the default) or vapour and
liquid held as separated zones at their own temperatures (:mod:`cvsim.zones`)."""
from __future__ import annotations

from ..network import SeparatedZones
from .spec import BAD, Choice, Field, Quantity, Section

_DEFAULTS = SeparatedZones()

PHASES = Section(
    "phases",
    "How a vessel's vapour and liquid are held. `equilibrium`: one well-mixed state (one "
    "temperature). `separated`: a vapour zone and a liquid zone at one pressure and their "
    "own temperatures, with rain-out, boil-off and heat across the level, and the wall "
    "(if any) split into a wetted and an unwetted part. Needs `properties: real`, a pure "
    "fluid and the vessel's `shape`.",
    fields=(
        Field("model", Choice(("equilibrium", "separated")), "How vapour and liquid are held.",
              default="equilibrium"),
        Field("droplet_diameter", Quantity("length", above=0.0),
              "Separated: diameter of the condensate drops that settle out of the vapour "
              "at their Stokes velocity (rain-out).",
              default=f"{_DEFAULTS.droplet_diameter * 1e6:g} um"),
        Field("bubble_rise_coefficient", Quantity("dimensionless", above=0.0),
              "Separated: C of the bubble rise velocity C (g sigma (rho_l - rho_v)/rho_l^2)^"
              "(1/4) that carries vapour formed in the liquid to the vapour (boil-off; "
              "1.53: Harmathy).", default=_DEFAULTS.bubble_rise_coefficient),
        Field("interface_factor", Quantity("dimensionless", above=0.0),
              "Separated: factor on the natural-convection coefficients across the level "
              "(1: as published).", default=_DEFAULTS.interface_factor),
        Field("boiling_surface_constant", Quantity("dimensionless", above=0.0),
              "Separated, with a wall: C_sf of Rohsenow's nucleate boiling on the wetted "
              "wall.", default=_DEFAULTS.boiling_surface_constant),
        Field("boiling_prandtl_exponent", Quantity("dimensionless", above=0.0),
              "Separated, with a wall: n of Rohsenow's correlation (1 for water, 1.7 for "
              "other fluids).", default=_DEFAULTS.boiling_prandtl_exponent),
    ),
)


def check_phases(values, vessel, ctx) -> None:
    """Separated zones need a shape, the real property model and a pure fluid."""
    if values in (None, BAD) or values.get("model") != "separated":
        return
    at = vessel.where["phases"]
    if vessel.get("shape") is None and vessel.get("volume") not in (None, BAD):
        ctx.problem(at, "separated zones need the vessel's shape (the liquid level, the "
                    "area of the liquid's surface and the heights): give 'shape' instead of "
                    "'volume'")


def build_phases(values, at, ctx) -> SeparatedZones | None:
    if values is None or values["model"] != "separated":
        return None
    fluid = ctx.fluid
    if fluid is not None and fluid.model != "real":
        ctx.problem(at, "separated zones need 'properties: real' (an ideal gas has no "
                    "liquid)")
    if fluid is not None and (getattr(fluid, "components", None) or "&" in fluid.name):
        ctx.problem(at, "separated zones are for pure fluids; a mixture's zones would "
                    "differ in composition, which cvsim does not model yet: use the "
                    "equilibrium model")
    return SeparatedZones(droplet_diameter=values["droplet_diameter"],
                          bubble_rise_coefficient=values["bubble_rise_coefficient"],
                          interface_factor=values["interface_factor"],
                          boiling_surface_constant=values["boiling_surface_constant"],
                          boiling_prandtl_exponent=values["boiling_prandtl_exponent"])


__all__ = ["PHASES", "build_phases", "check_phases"]
