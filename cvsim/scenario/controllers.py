"""The ``controllers`` and ``fills`` sections: valves moved to hold a measured quantity.

Read into :class:`cvsim.network.Controller` objects (a fill is a controller with a
:class:`cvsim.network.Fill`); the model turns each into a
:class:`cvsim.control.ValveController`. The kind of the set point, gain and deadband
follows the measured quantity, so those keys are read by the section's check once
``measures`` is known.
"""
from __future__ import annotations

from dataclasses import dataclass

from .. import units
from ..control import GAS_TEMPERATURE_LIMIT, MOP_SHARE
from ..errors import FluidError
from ..network import Controller, Fill
from ..signals import Table
from . import properties
from .spec import BAD, At, Choice, Field, Kind, Node, Quantity, Section, as_text
from .valves import PressureDifference, valve_moved_by_controller

#: measured quantity -> (dimension of its values, kind of a difference of them)
MEASURES = {
    "pressure": ("pressure", PressureDifference(above=0.0)),
    "temperature": ("temperature", Quantity("temperature_difference", above=0.0)),
    "mass-flow": ("mass_flow", Quantity("mass_flow", above=0.0)),
    "pressure-rise-rate": ("pressure_rate", Quantity("pressure_rate", above=0.0)),
}
#: where each measured quantity is read: node roles, or a link
MEASURED_AT = {"pressure": ("vessel", "reservoir"), "temperature": ("vessel",),
               "mass-flow": ("link",), "pressure-rise-rate": ("vessel",)}
#: default measurement lag of a filtered measurement [s] (a fast transmitter; common
#: practice, no source)
DEFAULT_LAG = "1 s"
#: devices whose valve a controller can move
MOVABLE = ("control-valve", "line")


@dataclass(frozen=True)
class Deferred(Kind):
    """A value whose kind depends on another key of the section: kept as written and
    read by the section's check."""

    text: str

    def read(self, raw, at, ctx):
        return (raw, at)

    def describe(self) -> str:
        return self.text


@dataclass(frozen=True)
class PerQuantity(Kind):
    """A value per unit of a quantity (a gain: ``10 %/bar``), > 0."""

    dimension: str

    def read(self, raw, at, ctx):
        try:
            reading = units.read_per_quantity(raw, self.dimension)
        except units.UnitsError as exc:
            ctx.problem(at, str(exc))
            return BAD
        if not reading.value > 0.0:
            ctx.problem(at, f"the gain must be greater than 0; got {as_text(raw)}")
            return BAD
        ctx.record(at, raw, reading.value, f"1/{units.DIMENSIONS[self.dimension].symbol}",
                   "travel per unit of the measured quantity")
        return reading.value

    def describe(self) -> str:
        return (f"travel per unit of {units.DIMENSIONS[self.dimension].noun[2:]} "
                f"[1/{units.DIMENSIONS[self.dimension].symbol}], e.g. `10 %/bar`, > 0")


_GAIN_DIMENSION = {"pressure": "pressure", "temperature": "temperature_difference",
                   "mass-flow": "mass_flow", "pressure-rise-rate": "pressure_rate"}


def _limits_check(values, ctx) -> None:
    lo, hi = values.get("minimum_opening"), values.get("maximum_opening")
    if isinstance(lo, float) and isinstance(hi, float) and not hi > lo:
        ctx.problem(values.where["maximum_opening"], "maximum_opening must be above "
                    "minimum_opening")


def _check_controller(values, ctx) -> None:
    measures = values.get("measures")
    if measures in (None, BAD):
        return
    dim, diff = MEASURES[measures]
    if isinstance(values.get("of"), tuple):
        raw, at = values["of"]
        values["of"] = Node(MEASURED_AT[measures]).read(raw, at, ctx)
    if isinstance(values.get("set_point"), tuple):
        raw, at = values["set_point"]
        values["set_point"] = Quantity(dim, table=True, at_least=0.0 if measures == "mass-flow"
                                       else None).read(raw, at, ctx)
    mode = values.get("mode")
    gain, deadband = values.get("gain"), values.get("deadband")
    if gain is not None:
        raw, at = gain
        values["gain"] = PerQuantity(_GAIN_DIMENSION[measures]).read(raw, at, ctx)
    if deadband is not None:
        raw, at = deadband
        values["deadband"] = diff.read(raw, at, ctx)
    if mode == "pi":
        for key in ("gain", "integral_time"):
            if values.get(key) is None:
                ctx.problem(values.at, f"missing key '{key}' in {values.at.key}: a PI "
                            "controller needs its gain and integral time")
        if deadband is not None:
            ctx.problem(values.where["deadband"], "'deadband' applies to 'mode: on-off'")
    elif mode == "on-off":
        if values.get("deadband") is None:
            ctx.problem(values.at, f"missing key 'deadband' in {values.at.key}: an on-off "
                        "controller needs a deadband (it would chatter without one)")
        for key in ("gain", "integral_time"):
            if values.get(key) is not None:
                ctx.problem(values.where[key], f"'{key}' applies to 'mode: pi'")
    lag = values.get("measurement_lag")
    if measures in ("mass-flow", "pressure-rise-rate"):
        if lag is None:
            values["measurement_lag"] = Quantity("time").read(
                DEFAULT_LAG, At(values.where["measurement_lag"].key, values.at.line, True), ctx)
    elif lag is not None:
        ctx.problem(values.where["measurement_lag"], "'measurement_lag' applies to "
                    "'mass-flow' and 'pressure-rise-rate' (pressures and temperatures are "
                    "read as they are)")
    _limits_check(values, ctx)
    init = values.get("initial_opening")
    lo, hi = values.get("minimum_opening"), values.get("maximum_opening")
    if isinstance(init, float) and isinstance(lo, float) and isinstance(hi, float) and \
            not lo <= init <= hi:
        ctx.problem(values.where["initial_opening"], "initial_opening must lie between the "
                    "minimum and maximum openings")


_OPENING_FIELDS = (
    Field("minimum_opening", Quantity("fraction", at_least=0.0, at_most=1.0),
          "Lower limit of the travel the controller sets.", default="0 %"),
    Field("maximum_opening", Quantity("fraction", above=0.0, at_most=1.0),
          "Upper limit of the travel the controller sets.", default="100 %"),
)

CONTROLLER = Section(
    "controllers",
    "Each controller moves the valve of one link (a `control-valve`, or a `line` with a "
    "`valve`; that valve then gives neither `opening` nor `stroke`) to hold a measured "
    "quantity at its set point. `mode: pi`: proportional-integral, continuous, output "
    "u = gain e + integral, limited to the openings with anti-windup "
    "(docs/theory.md); `mode: on-off`: fully open or at the minimum, switching at half "
    "the deadband either side of the set point. The histories hold `<controller>.output`, "
    "`.set_point` and `.measured`.",
    fields=(
        Field("valve", Node(("link",)), "The link whose valve the controller moves.",
              required=True),
        Field("measures", Choice(tuple(MEASURES)),
              "`pressure` or `temperature` of a node, `mass-flow` through a link (positive "
              "from its `from` to its `to`), or `pressure-rise-rate` of a vessel.",
              required=True),
        Field("of", Deferred("name of the node (a vessel for `temperature` and "
                             "`pressure-rise-rate`), or of the link for `mass-flow`"),
              "What is measured.", required=True),
        Field("set_point", Deferred("quantity of the measured kind (`80 barg`, `20 degC`, "
                                    "`0.5 kg/s`, `20 MPa/min`); or a table in time"),
              "The value to hold.", required=True),
        Field("mode", Choice(("pi", "on-off")), "Control action.", default="pi"),
        Field("opens_when", Choice(("below", "above")),
              "`below`: the valve opens further while the measured value is below the set "
              "point (a valve that fills or feeds what it measures); `above`: while it is "
              "above (a valve that vents or drains it).", required=True),
        Field("gain", Deferred("travel per unit of the measured quantity, e.g. `10 %/bar`, "
                               "`2 %/K`, `50 %/(kg/s)`, `2 %/(MPa/min)`"),
              "Proportional gain Kc (PI).",),
        Field("integral_time", Quantity("time", above=0.0), "Integral time Ti (PI)."),
        Field("deadband", Deferred("difference of the measured quantity (`1 bar`, `2 K`)"),
              "Deadband of an on-off controller, centred on the set point."),
        *_OPENING_FIELDS,
        Field("initial_opening", Quantity("fraction", at_least=0.0, at_most=1.0),
              "Travel at the start (PI; the integral starts where this output needs it); "
              "not given: the minimum opening."),
        Field("measurement_lag", Quantity("time", above=0.0),
              f"Time constant of the first-order filter through which a mass flow or a "
              f"pressure-rise rate is measured; default {DEFAULT_LAG}."),
    ),
    checks=(_check_controller,),
)


def build_controller(name: str, values) -> Controller:
    init = values["initial_opening"]
    return Controller(name=name, valve=values["valve"], measures=values["measures"],
                      of=values["of"], set_point=values["set_point"], mode=values["mode"],
                      opens_when=values["opens_when"], gain=values["gain"],
                      integral_time=values["integral_time"], deadband=values["deadband"],
                      minimum_opening=values["minimum_opening"],
                      maximum_opening=values["maximum_opening"],
                      initial_opening=values["minimum_opening"] if init is None else init,
                      measurement_lag=values["measurement_lag"])


# ---------------------------------------------------------------- fills

FILL = Section(
    "fills",
    "Each fill ramps the pressure of a receiving vessel at a stated average rate by moving "
    "the valve of one link (PI control of the receiver's pressure on a set point that "
    "rises from its initial pressure at `pressure_ramp`), and ends - the valve shut for "
    "the rest of the run - at the first of: the final pressure, the gas temperature limit, "
    "the state of charge (the gas density over its density at the nominal working pressure "
    "and 15 degC). Its summary gives the state of charge, the peak gas temperature against "
    "the limit and the peak pressure against 125 % of the nominal working pressure "
    "(the maximum operating pressure). The histories hold `<fill>.state_of_charge` beside "
    "the controller's columns.",
    fields=(
        Field("receiver", Node(("vessel",)), "The vessel filled.", required=True),
        Field("valve", Node(("link",)), "The link whose valve the fill moves (a "
              "`control-valve`, or a `line` with a `valve`).", required=True),
        Field("pressure_ramp", Quantity("pressure_rate", above=0.0),
              "Average pressure-rise rate of the receiver, e.g. `20 MPa/min`.", required=True),
        Field("nominal_working_pressure", Quantity("pressure"),
              "Nominal working pressure (NWP) of the receiving system, e.g. `70 MPag`; the "
              "state of charge is the density over that at NWP and 15 degC.", required=True),
        Field("final_pressure", Quantity("pressure"),
              "The fill ends when the receiver reaches this; not given: 125 % of NWP (the "
              "maximum operating pressure)."),
        Field("temperature_limit", Quantity("temperature"),
              "The fill ends when the receiver's gas reaches this (85 degC: the usual limit "
              "of vehicle cylinders, SAE J2601 and UN GTR No. 13).",
              default=f"{GAS_TEMPERATURE_LIMIT - 273.15:g} degC"),
        Field("state_of_charge", Quantity("fraction", above=0.0, at_most=1.5),
              "The fill ends when the state of charge reaches this.", default="100 %"),
        Field("gain", PerQuantity("pressure"), "Proportional gain Kc on the pressure error, "
              "e.g. `5 %/MPa`.", required=True),
        Field("integral_time", Quantity("time", above=0.0), "Integral time Ti.",
              required=True),
        *_OPENING_FIELDS,
    ),
    checks=(_limits_check,),
)


def build_fill(name: str, values, vessel, fluid, end_time: float, atmosphere: float, ctx,
               at) -> Controller | None:
    """The controller of a fill (``vessel``: the receiver's :class:`~cvsim.network.Vessel`;
    ``end_time``: the run's end [s], the end of the set point's ramp)."""
    nwp = values["nominal_working_pressure"]
    try:
        rho_ref = properties.density(fluid, nwp, 288.15)
    except FluidError as exc:
        ctx.problem(values.where["nominal_working_pressure"], str(exc))
        return None
    ctx.record(at.child("reference_density", None), "(at NWP and 15 degC)", rho_ref, "kg/m3",
               f"{fluid.name}, CoolProp; 100 % state of charge")
    mop = atmosphere + MOP_SHARE * (nwp - atmosphere)
    ctx.record(at.child("maximum_operating_pressure", None), "(125 % of NWP, gauge)", mop,
               "Pa", "peak-pressure limit: 125 % of NWP (SAE J2601, UN GTR No. 13; from "
               "memory)")
    final = values["final_pressure"]
    if final is None:
        final = mop
        ctx.record(at.child("final_pressure", None), "(default)", final, "Pa",
                   "default: the maximum operating pressure, 125 % of NWP")
    p0, T0 = vessel.initial.pressure, vessel.initial.temperature
    try:
        rho0 = properties.density(fluid, p0, T0)
    except FluidError as exc:
        ctx.problem(values.where["receiver"], str(exc))
        return None
    limit = values["temperature_limit"]
    soc = values["state_of_charge"]
    for met, key, what in ((p0 >= final, "final_pressure", "its initial pressure is at or "
                            "above the final pressure"),
                           (T0 >= limit, "temperature_limit", "its gas starts at or above the "
                            "temperature limit"),
                           (rho0 >= soc * rho_ref, "state_of_charge", "it starts at or above "
                            "the state of charge")):
        if met:
            ctx.problem(values.where[key], f"the fill of '{vessel.name}' would end at once: "
                        f"{what}")
    if ctx.problems:
        return None
    rate = values["pressure_ramp"]
    set_point = Table((0.0, end_time), (p0, p0 + rate * end_time))
    fill = Fill(receiver=vessel.name, pressure_ramp=rate, start_pressure=p0,
                nominal_working_pressure=nwp, maximum_operating_pressure=mop,
                reference_density=rho_ref, final_pressure=final, temperature_limit=limit,
                state_of_charge=soc)
    return Controller(name=name, valve=values["valve"], measures="pressure", of=vessel.name,
                      set_point=set_point, mode="pi", opens_when="below", gain=values["gain"],
                      integral_time=values["integral_time"],
                      minimum_opening=values["minimum_opening"],
                      maximum_opening=values["maximum_opening"],
                      initial_opening=values["minimum_opening"], fill=fill)


# ---------------------------------------------------------------- top level

def check_controllers(values, ctx) -> None:
    """Top-level checks: each controlled link holds a valve a controller can move, moved
    by one controller or fill only and by no sequence; a control valve (or a line's
    valve) states its opening exactly when no controller moves it."""
    links = values.get("links") if isinstance(values.get("links"), dict) else {}
    owner: dict[str, str] = {}
    for section in ("controllers", "fills"):
        entries = values.get(section)
        if not isinstance(entries, dict):
            continue
        for name, entry in entries.items():
            if entry is BAD or not isinstance(entry.get("valve"), str):
                continue
            link = entry["valve"]
            at = entry.where["valve"]
            if link in owner:
                ctx.problem(at, f"the valve of link '{link}' is already moved by '{owner[link]}'; "
                            "one controller per valve")
                continue
            owner[link] = name
            lv = links.get(link)
            if lv in (None, BAD):
                continue
            device = lv.get("device")
            if device not in MOVABLE or (device == "line" and lv.get("valve") is None):
                ctx.problem(at, f"link '{link}' holds no valve a controller can move (a "
                            "control-valve, or a line with a valve)")
    names = {}
    for section in ("sequences", "controllers", "fills"):
        entries = values.get(section)
        for name, entry in (entries.items() if isinstance(entries, dict) else ()):
            if name in names and entry is not BAD:
                ctx.problem(entry.at, f"'{name}' names both a {names[name]} and a "
                            f"{section[:-1]}; give each its own name (it heads history columns)")
            names.setdefault(name, section[:-1])
    sequences = values.get("sequences")
    if isinstance(sequences, dict):
        for sname, seq in sequences.items():
            if seq is BAD or not isinstance(seq.get("steps"), tuple):
                continue
            for link in seq["steps"]:
                if link in owner:
                    ctx.problem(seq.where["steps"], f"link '{link}' is moved by '{owner[link]}' "
                                "and cannot also be a step of a sequence")
    for name, lv in links.items():
        if lv is BAD:
            continue
        valve = lv if lv.get("device") == "control-valve" else (
            lv.get("valve") if lv.get("device") == "line" else None)
        if valve in (None, BAD):
            continue
        free = valve_moved_by_controller(valve)
        if free and name not in owner:
            ctx.problem(valve.at, f"give the valve's 'opening' or 'stroke' in {valve.at.key} "
                        "(or name the link in a controller or fill that moves it)")
        elif not free and name in owner:
            ctx.problem(valve.where["opening" if valve.get("opening") is not None else "stroke"],
                        f"'{owner[name]}' moves this valve: leave out its 'opening' and "
                        "'stroke'")


__all__ = ["CONTROLLER", "FILL", "MEASURES", "build_controller", "build_fill",
           "check_controllers"]
