"""The scenario format: every key, its kind of value, default and meaning.

The sections here (with the devices of :mod:`.devices` and the nodes of
:mod:`.vessels`) are the single statement of the format: the reader
validates against them and :func:`format_reference` renders them as
``docs/scenario-format.md``. Regenerate that file after changing the schema::

    python -m cvsim.scenario > docs/scenario-format.md
"""
from __future__ import annotations

from .. import units
from . import devices as _devices  # noqa: F401  (registers the flow devices)
from . import valves as _valves  # noqa: F401  (registers the valves)
from .reference import DECISIONS, EXAMPLE, INTRO, WRITING_VALUES
from .registry import DEVICES
from .sequences import SEQUENCE, check_sequences
from .uncertainty import UNCERTAINTY
from .spec import (BAD, At, Choice, Entries, Field, Kind, Node, OneOrMore, Quantity, Section,
                   Sub, Text, as_text, read_section)
from .mixtures import FluidKind, check_mixture_top
from .vessels import RESERVOIR, VESSEL
from . import walls as _walls  # noqa: E402,F401  (registers walls and fire exposure)
from . import lines as _lines  # noqa: E402,F401  (registers lines and regulators)
from .controllers import CONTROLLER, FILL, check_controllers  # noqa: E402

# ------------------------------------------------------------ special kinds


ALTITUDE = Section(
    "atmosphere by altitude",
    "The atmospheric pressure of the standard atmosphere (ISO 2533) at the site's altitude, "
    "e.g. `atmosphere: {altitude: 1500 m}`.",
    fields=(Field("altitude", Quantity("length", at_least=-610.0, at_most=11000.0),
                  "Height of the site above mean sea level.", required=True),),
)


class Atmosphere(Kind):
    """The local atmospheric pressure: an absolute pressure or ``{altitude: ...}``.

    Reading it sets the reference of the gauge pressures read after it.
    """

    def read(self, raw, at, ctx):
        if isinstance(raw, dict):
            values = read_section(raw, ALTITUDE, at, ctx)
            if values is BAD or not values.ok("altitude"):
                return BAD
            pressure = units.standard_atmosphere(values["altitude"])
            ctx.record(at, raw, pressure, "Pa",
                       f"standard atmosphere (ISO 2533) at {values['altitude']:g} m")
        else:
            try:
                reading = units.read_quantity(raw, "pressure")
            except units.UnitsError as exc:
                ctx.problem(at, str(exc))
                return BAD
            if reading.reference == "gauge" or reading.value <= 0.0:
                ctx.problem(at, f'"{raw}": the atmosphere is an absolute pressure, '
                            'e.g. "101.325 kPa" or "0.96 bara"')
                return BAD
            pressure = reading.value
            ctx.record(at, raw, pressure, "Pa",
                       "reference of gauge pressures" + ("; " + reading.note if reading.note
                                                          else ""))
        ctx.atmosphere = pressure
        return pressure

    def describe(self) -> str:
        return "pressure [Pa] (absolute) or mapping, see [atmosphere by altitude]" \
               "(#atmosphere-by-altitude)"

    def sections(self):
        return (ALTITUDE,)


# ------------------------------------------------------------------- fluid

IDEAL_GAS = Section(
    "ideal_gas",
    "Constants of the ideal-gas property model; only with `properties: ideal-gas`.",
    fields=(
        Field("molar_mass", Quantity("molar_mass", above=0.0),
              "Molar mass; not given: CoolProp's value for the fluid."),
        Field("heat_capacity", Quantity("specific_heat", above=0.0),
              "Constant isobaric heat capacity cp; not given: CoolProp's ideal-gas cp of "
              "the fluid at 25 degC."),
    ),
)

# ------------------------------------------------------------------- links


def _check_link(values, ctx) -> None:
    a, b = values.get("from"), values.get("to")
    if not isinstance(a, str) or not isinstance(b, str):
        return
    reservoirs = ctx.names.get("reservoir", [])
    if a == b:
        ctx.problem(values.where["to"], f"a link joins two different nodes; 'from' and 'to' "
                    f"are both '{a}'")
    elif a in reservoirs and b in reservoirs:
        ctx.problem(values.at, f"the link joins two reservoirs ('{a}' and '{b}'); a flow "
                    "between imposed states changes nothing: one end must be a vessel")
    if values.get("outlet_height") is not None and "draws" in values.given:
        ctx.problem(values.where["outlet_height"],
                    "outlet_height and draws are two ways of placing the outlet: give one "
                    "(draws: vapour is an outlet at the top, draws: liquid one at the bottom)")


LINK = Section(
    "links",
    "Each link carries flow between two nodes through one device; positive flow goes "
    "from `from` to `to`, and devices that allow it also pass reverse flow. `device` "
    "picks the keys that follow.",
    fields=(
        Field("from", Node(), "Upstream node (for positive flow).", required=True),
        Field("to", Node(), "Downstream node.", required=True),
        Field("device", Choice(DEVICES), "Flow device kind.", required=True),
        Field("draws", Choice(("vapour", "liquid")),
              "What leaves the `from` vessel through this link while it holds two "
              "phases: `vapour` (top outlet) or `liquid` (bottom outlet, flashing through "
              "the device). Reverse flow draws vapour. An outlet between the two: "
              "`outlet_height` instead.", default="vapour"),
        Field("outlet_height", Quantity("length", at_least=0.0),
              "Height of the outlet above the `from` vessel's inside bottom, instead of "
              "`draws` (vessels given by their shape; 0 up to the inside height): it draws "
              "vapour while the liquid level is below it, liquid while the level is above "
              "it, and both across the band of levels around it that holds 2 % of the "
              "volume. Not with mixtures in this version. Reverse flow draws vapour."),
    ),
    variant=("device", DEVICES),
    checks=(_check_link,),
)

# --------------------------------------------------------------------- run

STOP_KEYS = ("pressure_below", "pressure_above", "temperature_below", "temperature_above",
             "mass_below", "mass_above")

STOP = Section(
    "stop_when",
    "A condition that ends the run early: one vessel and exactly one of the keys below, "
    "e.g. `{vessel: receiver, pressure_below: 6.9 barg}`. With several conditions the "
    "first one met ends the run.",
    fields=(
        Field("vessel", Node(("vessel",)), "The vessel watched.", required=True),
        Field("pressure_below", Quantity("pressure"), "Stop when the pressure falls below."),
        Field("pressure_above", Quantity("pressure"), "Stop when the pressure rises above."),
        Field("temperature_below", Quantity("temperature"),
              "Stop when the gas temperature falls below."),
        Field("temperature_above", Quantity("temperature"),
              "Stop when the gas temperature rises above."),
        Field("mass_below", Quantity("mass", at_least=0.0),
              "Stop when the mass of gas falls below."),
        Field("mass_above", Quantity("mass", above=0.0), "Stop when the mass of gas rises above."),
        Field("if_met_at_start", Choice(("error", "stop")),
              "When the condition already holds at the start: `error` (a problem: usually "
              "a condition written the wrong way round) or `stop` (the run ends at t = 0, "
              "on purpose).", default="error"),
    ),
    one_of=(STOP_KEYS,),
)

SOLVER = Section(
    "solver",
    "Integration settings; the defaults suit most runs.",
    fields=(
        Field("method", Choice(("LSODA", "BDF", "Radau", "RK45", "RK23", "DOP853")),
              "scipy `solve_ivp` method.", default="LSODA"),
        Field("relative_tolerance", Quantity("dimensionless", above=0.0, at_most=0.01),
              "Relative tolerance of each state.", default="1e-6"),
        Field("absolute_tolerance", Quantity("dimensionless", above=0.0, at_most=0.01),
              "Absolute tolerance of each state, as a fraction of the state's initial size.",
              default="1e-9"),
        Field("max_step", Quantity("time", above=0.0), "Largest time step; not given: no limit."),
    ),
)


def _check_run(values, ctx) -> None:
    end, every = values.get("end"), values.get("record_every")
    if isinstance(end, float) and isinstance(every, float) and every > end:
        ctx.problem(values.where["record_every"],
                    f"record_every ({every:g} s) is longer than the run (end = {end:g} s)")


RUN = Section(
    "run",
    "How long to run, how often to record, when to stop early.",
    fields=(
        Field("end", Quantity("time", above=0.0), "Time the run ends (at the latest).",
              required=True),
        Field("record_every", Quantity("time", above=0.0),
              "Interval of the recorded histories; event times are recorded too.",
              default="1 s"),
        Field("stop_when", OneOrMore(STOP), "Conditions that end the run early."),
        Field("solver", Sub(SOLVER), "Integration settings.", default={}),
    ),
    checks=(_check_run,),
)

# --------------------------------------------------------------- top level


def _check_top(values, ctx) -> None:
    if values.get("ideal_gas") not in (None, BAD) and values.get("properties") == "real":
        ctx.problem(values.where["ideal_gas"], "'ideal_gas' applies only with "
                    "'properties: ideal-gas'; remove it or change 'properties'")
    vessels, reservoirs = values.get("vessels"), values.get("reservoirs")
    if isinstance(vessels, dict) and isinstance(reservoirs, dict):
        for name in reservoirs:
            if name in vessels:
                entry = reservoirs[name]
                at = entry.at if entry is not BAD else values.where["reservoirs"]
                ctx.problem(at, f"'{name}' names both a vessel and a reservoir; node names "
                            "must be unique")
    check_sequences(values, ctx)
    check_controllers(values, ctx)


TOP = Section(
    "top level",
    "The keys of a scenario file.",
    fields=(
        Field("title", Text(), "One line saying what the scenario is.", default="(untitled)"),
        Field("fluid", FluidKind(),
              "CoolProp name of a pure or pseudo-pure fluid (`Nitrogen`, `Air`, `Hydrogen`, "
              "`Methane`, `CarbonDioxide`); aliases such as `N2` are accepted. Or a gas "
              "mixture of named components (see [fluid as a mixture](#fluid-as-a-mixture)).",
              required=True),
        Field("properties", Choice(("real", "ideal-gas")),
              "`real`: CoolProp equation of state (a mixture: its own equation of state); "
              "`ideal-gas`: ideal gas with constant heat capacities (pure fluids only).",
              default="real"),
        Field("ideal_gas", Sub(IDEAL_GAS), "Ideal-gas constants (optional)."),
        Field("atmosphere", Atmosphere(),
              "Local atmospheric pressure: the reference of every gauge pressure.",
              default="101.325 kPa"),
        Field("vessels", Entries(VESSEL, at_least_one=True), "The vessels, by name.",
              required=True),
        Field("reservoirs", Entries(RESERVOIR), "The reservoirs, by name."),
        Field("links", Entries(LINK), "The links, by name."),
        Field("sequences", Entries(SEQUENCE),
              "Links opened one after another (cascade charging), by name."),
        Field("controllers", Entries(CONTROLLER),
              "Controllers that move a valve to hold a measured quantity, by name."),
        Field("fills", Entries(FILL),
              "Fuelling fills at a controlled pressure ramp, by name."),
        Field("run", Sub(RUN), "Run settings.", required=True),
        # read last: its inputs name keys read above (their units, their values)
        Field("uncertainty", Sub(UNCERTAINTY),
              "Uncertain inputs for `cvsim uncertainty`; a run uses the values stated."),
    ),
    checks=(_check_top, check_mixture_top),
)


def read(tree, ctx):
    """Read a whole scenario tree against :data:`TOP`; returns the values or BAD."""
    for role, key in (("vessel", "vessels"), ("reservoir", "reservoirs"), ("link", "links")):
        entries = tree.get(key) if isinstance(tree, dict) else None
        ctx.names[role] = [n for n in entries if isinstance(n, str)] \
            if isinstance(entries, dict) else []
    return read_section(tree, TOP, At("", 1), ctx)


# -------------------------------------------------------------- reference

def render_section(section: Section, level: int = 3) -> list[str]:
    """Markdown for one section: heading, doc and a table of its keys."""
    out = [f"{'#' * level} {section.title}", "", section.doc, ""]
    fields = section.all_fields()
    if fields:
        out += ["| key | value | required / default | meaning |", "|---|---|---|---|"]
        groups = {n: g for g in section.one_of for n in g}
        for f in fields:
            if f.required:
                need = "required"
            elif f.name in groups:
                group = groups[f.name]
                need = ("one of " + ", ".join(f"`{n}`" for n in group) if len(group) <= 3
                        else f"exactly one of the {len(group)} keys `{group[0]}` ... `{group[-1]}`")
            elif f.default is not None:
                need = f"default `{as_text(f.default)}`" if f.default != {} else "defaults below"
            else:
                need = "optional"
            out.append(f"| `{f.name}` | {f.kind.describe()} | {need} | {f.doc} |")
        out.append("")
    return out


def walk_sections(section: Section, seen: list[Section] | None = None) -> list[Section]:
    """``section`` and every section nested in it, depth first, each once."""
    seen = [] if seen is None else seen
    if any(s is section for s in seen):
        return seen
    seen.append(section)
    if section.variant is not None:
        for variant in section.variant[1].values():
            walk_sections(variant.section, seen)
    for f in section.all_fields():
        for sub in f.kind.sections():
            walk_sections(sub, seen)
    return seen



def _dimension_table() -> list[str]:
    out = ["| dimension | SI unit used | units accepted |", "|---|---|---|"]
    for dim in units.DIMENSIONS.values():
        out.append(f"| {dim.name.replace('_', ' ')} | {dim.symbol} | {dim.units} |")
    return out + [""]


def _basis_table() -> list[str]:
    out = ["| basis | pressure [Pa] | temperature [K] | conditions |", "|---|---|---|---|"]
    for b in units.STANDARD_BASES.values():
        out.append(f"| `{b.name}` | {b.pressure:.2f} | {b.temperature:.2f} | {b.description} |")
    return out + [""]


def format_reference() -> str:
    """The scenario-format reference (markdown), as kept in ``docs/scenario-format.md``."""
    out = [INTRO.strip(), "", "## Example", "", "```yaml", EXAMPLE.strip(), "```", "",
           WRITING_VALUES.strip(), "", "### Units", ""]
    out += _dimension_table()
    out += ["### Standard-volume bases", ""]
    out += _basis_table()
    out += ["## Keys", ""]
    for section in walk_sections(TOP):
        out += render_section(section)
        if section.variant is not None:
            key, registry = section.variant
            out += [f"Values of `{key}`:", ""]
            out += [f"- `{name}`: {v.doc}" for name, v in registry.items()] + [""]
    out += [DECISIONS.strip(), ""]
    return "\n".join(out)
