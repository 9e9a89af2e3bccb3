"""Valves a link can hold: control valve, relief valve, bursting disc, check valve.

Each registers a :class:`~cvsim.scenario.spec.Variant` (keys, checks, build) in
:data:`~cvsim.scenario.registry.DEVICES`, like the orifice and the fixed flow of
:mod:`.devices`. Pressures that are differences (blowdown, cracking pressure)
are read by :class:`PressureDifference`: plain pressure units, no gauge or
absolute mark.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

from .. import units
from ..flow.control_valve import CHARACTERISTICS, KV_PER_CV
from ..flow.relief import (API526_AREAS_IN2, API526_LETTERS, KC_RUPTURE_DISC, KD_GAS, KD_LIQUID,
                           api526_area)
from ..flow.schedule import stroke_table
from ..network import BurstingDisc, CheckValve, ControlValve, ReliefValve
from .devices import nozzle_liquid_service
from .registry import register_device, register_liquid_service
from .spec import BAD, Choice, Field, Kind, Quantity, Section, Sub, Variant, as_text

# -------------------------------------------------------------------- kinds


@dataclass(frozen=True)
class PressureDifference(Quantity):
    """A pressure difference, ``0.5 bar``, ``50 kPa``, ``7 psi``: no gauge or absolute mark."""

    dimension: str = "pressure"

    @property
    def echo_kind(self) -> str:
        return "pressure_difference"

    def convert(self, raw, ctx) -> units.Reading:
        reading = units.read_quantity(raw, "pressure", atmosphere=ctx.atmosphere)
        if reading.reference is not None:
            raise units.UnitsError(
                f'"{raw}" is marked {reading.reference}; a pressure difference is written '
                'in plain pressure units, e.g. "0.5 bar", "50 kPa", "7 psi"')
        return units.Reading(reading.value, reading.unit, None, "a pressure difference")

    def _limit_problem(self, value, raw, dim) -> str:
        shown = f'"{raw}"' if isinstance(raw, str) else as_text(raw)
        if self.above is not None and not value > self.above:
            return f"must be greater than {self.above:g} Pa; got {shown}"
        if self.at_least is not None and not value >= self.at_least:
            return f"must be at least {self.at_least:g} Pa; got {shown}"
        return ""

    def describe(self) -> str:
        return "pressure difference [Pa] (no g/a mark)" + (
            f", > {self.above:g}" if self.above is not None else "")


@dataclass(frozen=True)
class ShareOrDifference(Kind):
    """A fraction of a (gauge) pressure, ``7 %`` or ``0.07``, or a pressure difference,
    ``0.7 bar``. Read as ``("fraction", value)`` or ``("pressure", value [Pa])``."""

    def read(self, raw, at, ctx):
        if isinstance(raw, (int, float)) and not isinstance(raw, bool) or (
                isinstance(raw, str) and raw.strip().endswith("%")):
            value = Quantity("fraction").read(raw, at, ctx)
            return BAD if value is BAD else ("fraction", value)
        value = PressureDifference().read(raw, at, ctx)
        return BAD if value is BAD else ("pressure", value)

    def describe(self) -> str:
        return "fraction of the set pressure (gauge), `7 %`; or a pressure difference, `0.7 bar`"


def _amount(value, p_gauge: float) -> float:
    """[Pa] a :class:`ShareOrDifference` value as a pressure difference."""
    kind, v = value
    return v * p_gauge if kind == "fraction" else v


def _area(values, ctx) -> float:
    if values.get("diameter") is not None:
        area = math.pi * values["diameter"] ** 2 / 4.0
        ctx.record(values.at.child("area", None), "(from diameter)", area, "m2", "pi d^2 / 4")
        return area
    return values["area"]


_DIAMETER = Field("diameter", Quantity("length", above=0.0),
                  "Bore diameter; the flow area is pi d^2/4.")
_AREA = Field("area", Quantity("area", above=0.0), "Flow area, instead of `diameter`.")
_CD = Field("discharge_coefficient", Quantity("dimensionless", above=0.0, at_most=1.0),
            "Actual over ideal flow through the open bore.", required=True)
_FLOW_MODEL = Field("flow_model", Choice(("real-gas", "ideal-gas")),
                    "Nozzle model of the open bore, as for `device: orifice`.",
                    default="real-gas")

# ------------------------------------------------------------ control valve

STROKE = Section(
    "stroke",
    "An opening schedule written as times: the valve opens and/or closes along straight "
    "ramps of `stroke_time`, e.g. `stroke: {opens_at: 10 s, stroke_time: 30 s}`. Before "
    "`opens_at` it is shut; without `opens_at` it is open from the start.",
    fields=(
        Field("opens_at", Quantity("time", at_least=0.0), "Time the valve starts to open."),
        Field("closes_at", Quantity("time", at_least=0.0), "Time the valve starts to close."),
        Field("stroke_time", Quantity("time", at_least=0.0),
              "Time for a full stroke between shut and `open_position` (0 s: instant).",
              required=True),
        Field("open_position", Quantity("fraction", above=0.0, at_most=1.0),
              "Travel when open.", default="100 %"),
    ),
)


def _check_stroke(values, ctx) -> None:
    opens, closes, stroke = (values.get(k) for k in ("opens_at", "closes_at", "stroke_time"))
    if opens is None and closes is None:
        ctx.problem(values.at, "give 'opens_at', 'closes_at' or both")
    elif isinstance(opens, float) and isinstance(closes, float) and isinstance(stroke, float) \
            and closes < opens + stroke:
        ctx.problem(values.where["closes_at"],
                    f"closes_at ({closes:g} s) must not come before the valve is fully open "
                    f"(opens_at + stroke_time = {opens + stroke:g} s)")


STROKE = STROKE.with_checks(_check_stroke)


def _check_control_valve(values, ctx) -> None:
    if values.get("rangeability") not in (None, BAD) and \
            values.get("characteristic") != "equal-percentage":
        ctx.problem(values.where["rangeability"],
                    "'rangeability' applies to 'characteristic: equal-percentage' only")
    if values.get("opening") is not None and values.get("stroke") is not None:
        ctx.problem(values.where["stroke"], f"give only one of 'opening' or 'stroke' in "
                    f"{values.at.key}")


def valve_moved_by_controller(values) -> bool:
    """True when a control valve's keys give neither ``opening`` nor ``stroke``: a
    controller moves it (checked against the controllers by the top-level checks)."""
    return values.get("opening") is None and values.get("stroke") is None


def build_control_valve(values, ctx) -> ControlValve:
    """The :class:`~cvsim.network.ControlValve` of a control valve's keys (also the
    valve of a line); ``opening`` None when a controller moves it."""
    if values["Kv"] is not None:
        kv = values["Kv"]
    else:
        kv = KV_PER_CV * values["Cv"]
        ctx.record(values.at.child("Kv", None), "(from Cv)", kv, "m3/h",
                   "Kv = 0.865 Cv (IEC 60534-2-1)")
    if values["opening"] is not None:
        opening = values["opening"]
    elif values["stroke"] is None:
        opening = None   # moved by a controller
    else:
        st = values["stroke"]
        opening = stroke_table(st["opens_at"], st["closes_at"], st["stroke_time"],
                               st["open_position"])
        ctx.record(values.where["stroke"].child("table", None), "(from stroke)",
                   ", ".join(f"{t:g} s: {100 * v:g} %" for t, v in
                             zip(opening.times, opening.values)), "", "opening table used")
    rangeability = values["rangeability"]
    if values["characteristic"] == "equal-percentage" and rangeability is None:
        rangeability = 50.0
        ctx.record(values.at.child("rangeability", None), "(default)", rangeability, "",
                   "default: R = 50, a usual value (common practice, no source)")
    return ControlValve(kv=kv, xt=values["xT"], opening=opening,
                        characteristic=values["characteristic"],
                        rangeability=rangeability if rangeability is not None else 50.0,
                        piping_factor=values["piping_geometry_factor"], fl=values["FL"])


CONTROL_VALVE = register_device(Variant(
    "control-valve",
    "A control valve sized by IEC 60534-2-1 for compressible flow (Cv or Kv, xT, Fp) and "
    "for liquid (FL), "
    "with an inherent characteristic and an opening that follows a schedule; flow in "
    "either direction.",
    Section(
        "device: control-valve",
        "Keys of a link with `device: control-valve`, besides `from`, `to` and `device`. "
        "The flow coefficient is that of the fully open valve; the opening (travel) scales "
        "it through the characteristic.",
        fields=(
            Field("Cv", Quantity("dimensionless", above=0.0),
                  "Flow coefficient Cv [US gal/min of water at 1 psi], fully open."),
            Field("Kv", Quantity("dimensionless", above=0.0),
                  "Flow coefficient Kv [m3/h of water at 1 bar], fully open, instead of `Cv` "
                  "(Kv = 0.865 Cv)."),
            Field("xT", Quantity("dimensionless", above=0.0, at_most=1.0),
                  "Pressure differential ratio factor at choked flow, from the valve maker "
                  "(with reducers: the combined xTP).", required=True),
            Field("piping_geometry_factor", Quantity("dimensionless", above=0.0, at_most=1.0),
                  "Fp of IEC 60534-2-1 for reducers or fittings at the valve (1: none).",
                  default="1"),
            Field("FL", Quantity("dimensionless", above=0.0, at_most=1.0),
                  "Liquid pressure recovery factor from the valve maker (with reducers: the "
                  "combined FLP); needed when the valve passes liquid (`draws: liquid`, or a "
                  "liquid-full vessel or liquid reservoir upstream): IEC 60534-2-1 "
                  "incompressible-flow equations, choked at (FL/Fp)^2 (p1 - FF pv)."),
            Field("characteristic", Choice(CHARACTERISTICS),
                  "Inherent characteristic: flow coefficient vs travel.", default="linear"),
            Field("rangeability", Quantity("dimensionless", above=1.0),
                  "Rangeability R of `equal-percentage` (f = R^(s-1)); not given: 50."),
            Field("opening", Quantity("fraction", table=True, at_least=0.0, at_most=1.0),
                  "Travel, 0 (shut) to 100 % (fully open), constant or a table in time. "
                  "Give `opening` or `stroke`, or neither when a controller or a fill moves "
                  "the valve."),
            Field("stroke", Sub(STROKE), "Opening schedule by times and stroke time, "
                  "instead of `opening`."),
        ),
        one_of=(("Cv", "Kv"),),
        checks=(_check_control_valve,),
    ),
    build_control_valve,
))

# -------------------------------------------------------------- relief valve


def _check_relief(values, ctx) -> None:
    action = values.get("action")
    p_set = values.get("set_pressure")
    if isinstance(p_set, float) and not p_set > ctx.atmosphere:
        ctx.problem(values.where["set_pressure"],
                    f"the set pressure ({p_set / 1e5:.6g} bar a) must be above the atmosphere "
                    f"({ctx.atmosphere / 1e5:.6g} bar a)")
        p_set = None
    if action == "pop":
        if values.get("full_lift_overpressure") is not None:
            ctx.problem(values.where["full_lift_overpressure"],
                        "'full_lift_overpressure' applies to 'action: modulating'; a pop valve "
                        "is at full lift from its set pressure")
        blowdown = values.get("blowdown")
        if blowdown is None:
            ctx.problem(values.at, "missing key 'blowdown' in " + values.at.key + ": a pop "
                        "valve reseats at set pressure minus blowdown (e.g. 'blowdown: 7 %' of "
                        "the set pressure, or 'blowdown: 0.7 bar')")
        elif blowdown is not BAD and isinstance(p_set, float):
            amount = _amount(blowdown, p_set - ctx.atmosphere)
            kind, v = blowdown
            shown = f"{100 * v:g} %" if kind == "fraction" else f"{v / 1e5:g} bar"
            if not amount > 0.0:
                ctx.problem(values.where["blowdown"],
                            f"blowdown {shown} would put the reseat pressure at or above the "
                            "set pressure; it must be greater than 0 (the valve shuts below "
                            "its set pressure)")
            elif not amount < p_set - ctx.atmosphere:
                ctx.problem(values.where["blowdown"],
                            f"blowdown {shown} would put the reseat pressure at or below the "
                            f"atmosphere (set pressure {(p_set - ctx.atmosphere) / 1e5:.6g} "
                            "bar g); it must be less than 100 % of the set pressure")
    elif action == "modulating":
        if values.get("blowdown") is not None:
            ctx.problem(values.where["blowdown"],
                        "'blowdown' applies to 'action: pop'; a modulating valve shuts at its "
                        "set pressure")
        over = values.get("full_lift_overpressure")
        if over not in (None, BAD) and not over[1] > 0.0:
            ctx.problem(values.where["full_lift_overpressure"],
                        "the overpressure at full lift must be greater than 0")


def _build_relief(values, ctx) -> ReliefValve:
    at = values.at
    if values["orifice_letter"] is not None:
        letter = values["orifice_letter"]
        area = api526_area(letter)
        ctx.record(at.child("area", None), f"(letter {letter})", area, "m2",
                   f"API 526 effective area {API526_AREAS_IN2[letter]:g} in2")
    else:
        area = values["area"]
    p_set = values["set_pressure"]
    p_gauge = p_set - ctx.atmosphere
    reseat = full = None
    if values["action"] == "pop":
        reseat = p_set - _amount(values["blowdown"], p_gauge)
        share = values["blowdown"][0] == "fraction"
        ctx.record(at.child("reseat_pressure", None), "(set - blowdown)", reseat, "Pa",
                   "blowdown as a share of the gauge set pressure" if share else "")
    else:
        over = values["full_lift_overpressure"]
        if over is None:
            over = ("fraction", 0.10)
            ctx.record(at.child("full_lift_overpressure", None), "(default)", 0.10, "",
                       "default: 10 % of the set pressure (gauge), the usual allowed "
                       "overpressure of a single device (API 520 Part I)")
        full = p_set + _amount(over, p_gauge)
        ctx.record(at.child("full_lift_pressure", None), "(set + overpressure)", full, "Pa", "")
    return ReliefValve(area=area, set_pressure=p_set, action=values["action"],
                       reseat_pressure=reseat, full_lift_pressure=full,
                       kd=values["discharge_coefficient"], kb=values["back_pressure_factor"],
                       kc=values["combination_factor"], design=values["design"],
                       kd_liquid=values["liquid_discharge_coefficient"],
                       kw=values["liquid_back_pressure_factor"])


RELIEF_VALVE = register_device(Variant(
    "relief-valve",
    "A spring-loaded pressure relief valve protecting the `from` node, discharging to the "
    "`to` node: pop or modulating action, capacity by API 520 Part I for gas and liquid, "
    "homogeneous equilibrium for flashing liquid.",
    Section(
        "device: relief-valve",
        "Keys of a link with `device: relief-valve`, besides `from` (the protected node), "
        "`to` (where it discharges) and `device`. Set, reseat and full-lift pressures are "
        "compared with the pressure of the `from` node. Capacity: API 520 Part I gas "
        "equations (critical or subcritical) at the present pressures, with Z from the real "
        "fluid and the ideal-gas k at the relieving temperature; liquid that does not "
        "flash by the API 520 Part I liquid equation; flashing liquid (drawn from a "
        "two-phase vessel with `draws: liquid`, or a hot liquid-full vessel) by the "
        "homogeneous-equilibrium flux.",
        fields=(
            Field("set_pressure", Quantity("pressure"), "Set pressure (gauge values refer to "
                  "the scenario's atmosphere).", required=True),
            Field("action", Choice(("pop", "modulating")),
                  "`pop`: full lift at set pressure, shut again at set minus `blowdown`; "
                  "`modulating`: lift proportional to overpressure, full at "
                  "`full_lift_overpressure`.", default="pop"),
            Field("blowdown", ShareOrDifference(),
                  "Pop action: set minus reseat pressure, as a share of the set pressure "
                  "(gauge) or as a pressure difference. Required for `pop`."),
            Field("full_lift_overpressure", ShareOrDifference(),
                  "Modulating action: overpressure above set at which the valve is at full "
                  "lift; not given: 10 %."),
            Field("orifice_letter", Choice(API526_LETTERS),
                  "API 526 orifice letter (effective area D 0.110 in2 ... T 26.00 in2)."),
            Field("area", Quantity("area", above=0.0),
                  "Effective discharge area, instead of `orifice_letter`."),
            Field("discharge_coefficient", Quantity("dimensionless", above=0.0, at_most=1.0),
                  f"Effective coefficient of discharge Kd ({KD_GAS} for preliminary gas "
                  "sizing with API 526 effective areas, API 520 Part I).",
                  default=str(KD_GAS)),
            Field("back_pressure_factor", Quantity("dimensionless", above=0.0, at_most=1.0),
                  "Kb, capacity correction for back pressure (from the valve maker or API 520 "
                  "Part I): in critical flow; for `balanced-bellows` valves also in "
                  "subcritical flow.", default="1"),
            Field("design", Choice(("conventional", "balanced-bellows", "pilot-operated")),
                  "Valve design. In subcritical flow `conventional` and `pilot-operated` "
                  "valves take API 520 Part I's subcritical (F2) equation, "
                  "`balanced-bellows` valves its critical-flow equation with Kb, at most "
                  "the F2 capacity (API 520 Part I, subcritical flow).",
                  default="conventional"),
            Field("combination_factor", Quantity("dimensionless", above=0.0, at_most=1.0),
                  f"Kc: {KC_RUPTURE_DISC} with a rupture disc upstream when the combination is "
                  "not certified, else 1 (API 520 Part I).", default="1"),
            Field("liquid_discharge_coefficient",
                  Quantity("dimensionless", above=0.0, at_most=1.0),
                  f"Kd for liquid ({KD_LIQUID} for preliminary sizing of valves with certified "
                  "liquid capacity, API 520 Part I); a flashing stream takes a Kd between this "
                  "and `discharge_coefficient`, weighted by the vapour share at the throat.",
                  default=str(KD_LIQUID)),
            Field("liquid_back_pressure_factor",
                  Quantity("dimensionless", above=0.0, at_most=1.0),
                  "Kw, capacity correction for back pressure in liquid service (balanced-"
                  "bellows valves, from the maker or API 520 Part I; 1 for conventional and "
                  "pilot-operated valves).", default="1"),
        ),
        one_of=(("orifice_letter", "area"),),
        checks=(_check_relief,),
    ),
    _build_relief,
))

# ------------------------------------------------------------ bursting disc


def _build_disc(values, ctx) -> BurstingDisc:
    return BurstingDisc(area=_area(values, ctx),
                        discharge_coefficient=values["discharge_coefficient"],
                        burst_pressure=values["burst_pressure"], flow_model=values["flow_model"])


BURSTING_DISC = register_device(Variant(
    "bursting-disc",
    "A bursting (rupture) disc: shut until the `from` node reaches the burst pressure, then "
    "an open orifice for the rest of the run.",
    Section(
        "device: bursting-disc",
        "Keys of a link with `device: bursting-disc`, besides `from` (the protected node), "
        "`to` and `device`.",
        fields=(
            Field("burst_pressure", Quantity("pressure"),
                  "Pressure of the `from` node at which the disc bursts.", required=True),
            _DIAMETER, _AREA, _CD, _FLOW_MODEL,
        ),
        one_of=(("diameter", "area"),),
    ),
    _build_disc,
))

# -------------------------------------------------------------- check valve


def _build_check(values, ctx) -> CheckValve:
    return CheckValve(area=_area(values, ctx),
                      discharge_coefficient=values["discharge_coefficient"],
                      cracking_pressure=values["cracking_pressure"],
                      flow_model=values["flow_model"])


CHECK_VALVE = register_device(Variant(
    "check-valve",
    "A check (non-return) valve: passes flow from `from` to `to` only, opening at a "
    "cracking pressure; open, an orifice.",
    Section(
        "device: check-valve",
        "Keys of a link with `device: check-valve`, besides `from`, `to` and `device`. It "
        "opens when p(from) - p(to) reaches `cracking_pressure` and shuts when the "
        "difference falls to zero.",
        fields=(
            Field("cracking_pressure", PressureDifference(above=0.0),
                  "Forward pressure difference that opens the valve (also the deadband of "
                  "its open/shut switch, so it must be above 0).", required=True),
            _DIAMETER, _AREA, _CD, _FLOW_MODEL,
        ),
        one_of=(("diameter", "area"),),
    ),
    _build_check,
))

__all__ = ["BURSTING_DISC", "CHECK_VALVE", "CONTROL_VALVE", "PressureDifference",
           "RELIEF_VALVE", "ShareOrDifference", "build_control_valve", "share_or_difference",
           "valve_moved_by_controller"]


def share_or_difference(value, p_gauge: float) -> float:
    """[Pa] a :class:`ShareOrDifference` value as a pressure difference, a share being
    of ``p_gauge`` [Pa]."""
    return _amount(value, p_gauge)


# ------------------------------------------------------------ liquid service


def _control_valve_liquid(device: ControlValve) -> tuple[str, str]:
    if device.fl is None:
        return ("the IEC 60534-2-1 liquid equations need the liquid pressure recovery factor: "
                "state FL from the valve maker (about 0.9 for globe valves, 0.6 for ball "
                "valves), or draw vapour", "")
    return "", (f"IEC 60534-2-1 incompressible-flow equations, FL = {device.fl:g}, choked at "
                "(FL/Fp)^2 (p1 - FF pv)")


def _relief_valve_liquid(device: ReliefValve) -> tuple[str, str]:
    return "", (f"API 520 Part I liquid equation (Kd {device.kd_liquid:g}, Kw {device.kw:g}, "
                "Kv) while the liquid does not flash; homogeneous-equilibrium flux with Kd "
                f"between {device.kd_liquid:g} and {device.kd:g} by the throat's vapour share "
                "when it flashes")


register_liquid_service(ControlValve, _control_valve_liquid)
register_liquid_service(ReliefValve, _relief_valve_liquid)
register_liquid_service(BurstingDisc, nozzle_liquid_service)
register_liquid_service(CheckValve, nozzle_liquid_service)
