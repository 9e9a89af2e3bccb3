"""Flow devices a link can hold: their keys, checks and how each becomes a network device.

Each device registers one :class:`~cvsim.scenario.spec.Variant` in
:data:`~cvsim.scenario.registry.DEVICES`; ``device: <name>`` in a link picks
it. To add a device, write its section, checks and ``build`` in a module like
this one and register it.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

from .. import units
from ..errors import FluidError
from ..network import FixedFlow, Orifice
from ..signals import Constant, Signal, Table
from . import properties
from .registry import register_device, register_liquid_service
from .spec import BAD, Choice, Field, Kind, Quantity, Section, Variant, read_section

# ------------------------------------------------------------------- orifice


def _check_orifice(values, ctx) -> None:
    opens, closes = values.get("opens_at"), values.get("closes_at")
    if isinstance(opens, float) and isinstance(closes, float) and not closes > opens:
        ctx.problem(values.where["closes_at"],
                    f"closes_at ({closes:g} s) must be later than opens_at ({opens:g} s)")


def _build_orifice(values, ctx) -> Orifice:
    if values["diameter"] is not None:
        area = math.pi * values["diameter"] ** 2 / 4.0
        ctx.record(values.at.child("area", None), "(from diameter)", area, "m2",
                   "pi d^2 / 4")
    else:
        area = values["area"]
    closes = values["closes_at"]
    expansion = values["expansion"]
    if expansion == "frozen":
        at = values.where["expansion"]
        if ctx.fluid is None or ctx.fluid.model != "mixture":
            ctx.problem(at, "expansion: frozen is offered for mixtures only (a fluid given as "
                            "components); a pure fluid's nozzle is the equilibrium one: "
                            "leave the key out")
        elif values["flow_model"] != "real-gas":
            ctx.problem(at, "expansion: frozen needs flow_model: real-gas (the perfect-gas "
                            "nozzle has no phases to freeze): write flow_model: real-gas or "
                            "leave expansion out")
    return Orifice(area=area, discharge_coefficient=values["discharge_coefficient"],
                   flow_model=values["flow_model"], open_from=values["opens_at"],
                   open_until=math.inf if closes is None else closes, expansion=expansion)


ORIFICE = register_device(Variant(
    "orifice",
    "A restriction orifice, nozzle or fully open valve bore: compressible flow through a "
    "fixed area with a discharge coefficient, choked or subcritical, in either direction.",
    Section(
        "device: orifice",
        "Keys of a link with `device: orifice`, besides `from`, `to` and `device`.",
        fields=(
            Field("diameter", Quantity("length", above=0.0),
                  "Bore diameter; the flow area is pi d^2/4."),
            Field("area", Quantity("area", above=0.0), "Flow area, instead of `diameter`."),
            Field("discharge_coefficient", Quantity("dimensionless", above=0.0, at_most=1.0),
                  "Actual over ideal flow (sharp-edged orifice about 0.6, rounded nozzle "
                  "0.95 to 0.99).", required=True),
            Field("flow_model", Choice(("real-gas", "ideal-gas")),
                  "`real-gas`: isentropic nozzle on the real equation of state; "
                  "`ideal-gas`: perfect-gas nozzle with the real upstream density and the "
                  "ideal-gas k at the upstream temperature (docs/theory.md, section 2a).",
                  default="real-gas"),
            Field("expansion", Choice(("equilibrium", "frozen")),
                  "A mixture's real-gas nozzle: `equilibrium`: the phases split and "
                  "exchange mass through the nozzle (homogeneous equilibrium); `frozen`: "
                  "no phase change in the nozzle, each phase keeps its mass share and "
                  "composition (a vapour stays vapour, supersaturated; liquid "
                  "incompressible), the upper bound of a flashing flow (docs/theory.md, "
                  "section 13).", default="equilibrium"),
            Field("opens_at", Quantity("time", at_least=0.0),
                  "Time the orifice opens (an isolation valve opening instantly).",
                  default="0 s"),
            Field("closes_at", Quantity("time", above=0.0),
                  "Time the orifice closes; not given: it stays open."),
        ),
        one_of=(("diameter", "area"),),
        checks=(_check_orifice,),
    ),
    _build_orifice,
))


def nozzle_liquid_service(device) -> tuple[str, str]:
    """How an orifice-like device (orifice, bursting disc, check valve) passes liquid:
    the real-gas nozzle is the homogeneous-equilibrium model through two phases; the
    perfect-gas form is not a model of liquid."""
    if device.flow_model == "ideal-gas":
        return ("its perfect-gas nozzle (flow_model: ideal-gas) is no model of liquid or "
                "flashing flow: write flow_model: real-gas (homogeneous equilibrium through "
                "two phases) or draw vapour", "")
    return "", "homogeneous-equilibrium nozzle (isentropic, flashing through two phases)"


register_liquid_service(Orifice, nozzle_liquid_service)


# ---------------------------------------------------------------- fixed flow


@dataclass(frozen=True)
class FlowValue:
    """A standard-volume flow as read: [m3/s at the basis] and the basis its unit names."""

    volume_flow: Signal
    basis: units.FlowBasis | None


def _unit_basis(text) -> units.FlowBasis | None:
    split = units.split_quantity(text) if isinstance(text, str) else None
    named = units.standard_flow_unit(split[1]) if split else None
    return named[1] if named else None


@dataclass(frozen=True)
class StandardFlow(Quantity):
    """A standard-volume flow (``500 Nm3/h``), or a volume flow with a separate basis."""

    dimension: str = "volume_flow"
    table: bool = True
    at_least: float | None = 0.0

    def convert(self, raw, ctx) -> units.Reading:
        basis = _unit_basis(raw)
        if basis is None:
            return units.read_quantity(raw, "volume_flow")
        value = units.parse_standard_flow(raw)[0]
        return units.Reading(value, units.split_quantity(raw)[1], None,
                             f"at the {basis.name} basis")

    def read(self, raw, at, ctx):
        signal = super().read(raw, at, ctx)
        if signal is BAD:
            return BAD
        rows = raw["table"] if isinstance(raw, dict) else [[None, raw]]
        bases = {_unit_basis(row[1]) for row in rows}
        if len(bases) > 1:
            ctx.problem(at, "all points of a flow table must use the same basis "
                        "(the same kind of unit)")
            return BAD
        return FlowValue(signal, bases.pop())

    def describe(self) -> str:
        return ("standard-volume flow (`500 Nm3/h`, `20 SCFM`) or volume flow with "
                "`basis` [m3/s at the basis], >= 0; or a table in time")


@dataclass(frozen=True)
class Basis(Kind):
    """A named standard-volume basis, or ``{pressure, temperature}``."""

    def read(self, raw, at, ctx):
        if isinstance(raw, str) and raw in units.STANDARD_BASES:
            basis = units.STANDARD_BASES[raw]
            ctx.record(at, raw, raw, "", basis.description)
            return basis
        if isinstance(raw, dict):
            values = read_section(raw, STATED_BASIS, at, ctx)
            if values is BAD or not values.ok("pressure", "temperature"):
                return BAD
            return units.FlowBasis("stated", values["pressure"], values["temperature"],
                                   "stated in the scenario")
        ctx.problem(at, f"'{raw}' is not a basis: write one of "
                    f"{', '.join(units.STANDARD_BASES)} or {{pressure: ..., temperature: ...}}")
        return BAD

    def describe(self) -> str:
        names = " \\| ".join(f"`{n}`" for n in units.STANDARD_BASES)
        return f"{names} \\| mapping, see [basis](#basis)"

    def sections(self):
        return (STATED_BASIS,)


STATED_BASIS = Section(
    "basis",
    "Reference conditions of a standard-volume flow stated as numbers, e.g. "
    "`basis: {pressure: 1 atm, temperature: 20 degC}`.",
    fields=(
        Field("pressure", Quantity("pressure"), "Reference pressure.", required=True),
        Field("temperature", Quantity("temperature"), "Reference temperature.", required=True),
    ),
)


def _check_fixed_flow(values, ctx) -> None:
    stop, restart = values.get("stop_below"), values.get("restart_above")
    if restart not in (None, BAD):
        if stop is None:
            ctx.problem(values.where["restart_above"],
                        "restart_above needs stop_below (the cut-off it restarts from)")
        elif stop is not BAD and not restart > stop:
            ctx.problem(values.where["restart_above"],
                        f"restart_above ({restart / 1e5:.6g} bar a) must be above stop_below "
                        f"({stop / 1e5:.6g} bar a): the difference is the switch's deadband")
    flow, basis = values.get("flow"), values.get("basis")
    if basis not in (None, BAD) and values.get("mass_flow") not in (None, BAD):
        ctx.problem(values.where["basis"], "'basis' applies to 'flow' only; a mass flow "
                    "needs no basis")
    if not isinstance(flow, FlowValue) or basis is BAD:
        return
    if flow.basis is None and basis is None:
        ctx.problem(values.where["flow"],
                    "a volume flow needs its basis: write a unit that names one (Nm3/h, "
                    "Sm3/h, SCFM, MMSCFD) or add basis: normal | iso-standard | us-standard "
                    "| {pressure: ..., temperature: ...}")
    elif flow.basis is not None and basis is not None and (
            (flow.basis.pressure, flow.basis.temperature) != (basis.pressure, basis.temperature)):
        ctx.problem(values.where["basis"],
                    f"the unit of 'flow' names the {flow.basis.name} basis but 'basis' says "
                    f"{basis.name}; write the flow in m3/h or drop 'basis'")


def _scaled(signal: Signal, factor: float) -> Signal:
    if isinstance(signal, Constant):
        return Constant(signal.value * factor)
    return Table(signal.times, tuple(v * factor for v in signal.values))


def _build_fixed_flow(values, ctx) -> FixedFlow:
    mass_flow = values["mass_flow"]
    if mass_flow is None:
        flow: FlowValue = values["flow"]
        basis = flow.basis or values["basis"]
        supply = getattr(ctx, "supplies", {}).get(values.get("from"))
        try:
            rho = properties.basis_density(ctx.fluid, basis.pressure, basis.temperature,
                                           supply)
        except FluidError as exc:
            ctx.problem(values.where["flow"], str(exc))
            return None
        source = {"ideal-gas": "p M / (R T)", "mixture": "mixture equation of state, "
                  + ("the supply's composition" if supply is not None else
                     "the fluid's composition")}.get(ctx.fluid.model, "CoolProp")
        ctx.record(values.where["flow"].child("basis_density", None),
                   f"{basis.name}: {basis.pressure:g} Pa, {basis.temperature:g} K", rho,
                   "kg/m3", f"{ctx.fluid.name}, {source}; mass flow = flow x density")
        mass_flow = _scaled(flow.volume_flow, rho)
        if isinstance(mass_flow, Constant):
            ctx.record(values.at.child("mass_flow", None), "(from flow)", mass_flow.value,
                       "kg/s", "")
    return FixedFlow(mass_flow=mass_flow, delivery_temperature=values["delivery_temperature"],
                     stop_below=values["stop_below"], restart_above=values["restart_above"])


FIXED_FLOW = register_device(Variant(
    "fixed-flow",
    "A forced flow from `from` to `to` whatever the pressures (a compressor, pump or flow "
    "controller), as a mass flow or a standard-volume flow, constant or a table in time.",
    Section(
        "device: fixed-flow",
        "Keys of a link with `device: fixed-flow`, besides `from`, `to` and `device`.",
        fields=(
            Field("mass_flow", Quantity("mass_flow", table=True, at_least=0.0),
                  "Mass flow from `from` to `to`."),
            Field("flow", StandardFlow(),
                  "Standard-volume flow, turned into a mass flow with the gas density at "
                  "the basis."),
            Field("basis", Basis(),
                  "Basis of `flow` when its unit names none (`m3/h`, `ft3/min`)."),
            Field("delivery_temperature", Quantity("temperature"),
                  "Temperature of the stream entering the receiving node (a compressor "
                  "after-cooler); not given: the stream carries the stagnation enthalpy of "
                  "the source node."),
            Field("stop_below", Quantity("pressure"),
                  "Low-pressure cut-off: the flow stops when the source node's pressure "
                  "falls to this."),
            Field("restart_above", Quantity("pressure"),
                  "After a cut-off the flow restarts when the source pressure rises to this "
                  "(the switch's deadband); not given: it stays stopped."),
        ),
        one_of=(("mass_flow", "flow"),),
        checks=(_check_fixed_flow,),
    ),
    _build_fixed_flow,
))
