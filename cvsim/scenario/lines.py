"""Lines and regulators a link can hold: their keys, checks and builds.

``device: line`` is a pipe or hose with friction, optionally with a control valve and a
restriction orifice on the same link (:mod:`cvsim.flow.line`); ``device:
pressure-regulator`` and ``device: back-pressure-regulator`` are self-acting regulators
(:mod:`cvsim.flow.regulator`).
"""
from __future__ import annotations

import math

from ..network import Line, LineOrifice, Regulator
from .registry import register_device, register_liquid_service
from .spec import BAD, Choice, Field, Quantity, Section, Sub, Variant
from ..flow.control_valve import KV_PER_CV
from .valves import CONTROL_VALVE, ShareOrDifference, build_control_valve, share_or_difference

#: default wall roughness: commercial steel, 0.045 mm (Moody 1944 chart; the value
#: tabulated in Crane TP 410 and most handbooks; common practice)
DEFAULT_ROUGHNESS = "0.045 mm"

_ENDS = Choice(("from", "to"))


LINE_ORIFICE = Section(
    "line: orifice",
    "A restriction orifice on the line, at its `from` or `to` end (a restriction orifice "
    "at the end of a vent line is the common case), e.g. `orifice: {diameter: 12 mm, "
    "discharge_coefficient: 0.84}`.",
    fields=(
        Field("diameter", Quantity("length", above=0.0), "Bore diameter."),
        Field("area", Quantity("area", above=0.0), "Flow area, instead of `diameter`."),
        Field("discharge_coefficient", Quantity("dimensionless", above=0.0, at_most=1.0),
              "Actual over ideal flow.", required=True),
        Field("at", _ENDS, "The end of the line the orifice sits at.", default="to"),
    ),
    one_of=(("diameter", "area"),),
)

LINE_VALVE = Section(
    "line: valve",
    "A control valve on the line (a blowdown or isolation valve at the vessel, a dispenser "
    "valve), with the keys of `device: control-valve` and the end it sits at.",
    fields=CONTROL_VALVE.section.fields + (
        Field("at", _ENDS, "The end of the line the valve sits at.", default="from"),),
    one_of=CONTROL_VALVE.section.one_of,
    checks=CONTROL_VALVE.section.checks,
)


def _check_line(values, ctx) -> None:
    D, orifice = values.get("inside_diameter"), values.get("orifice")
    if isinstance(D, float) and orifice not in (None, BAD):
        d = orifice.get("diameter")
        area = (math.pi * d * d / 4.0) if isinstance(d, float) else orifice.get("area")
        cd = orifice.get("discharge_coefficient")
        if isinstance(area, float) and isinstance(cd, float) and \
                not cd * area < math.pi * D * D / 4.0:
            ctx.problem(orifice.at, "the orifice's effective area (discharge coefficient x "
                        "area) must be smaller than the line's bore; it is no restriction "
                        "otherwise - leave it out")
    e = values.get("roughness")
    if isinstance(D, float) and isinstance(e, float) and not e < 0.5 * D:
        ctx.problem(values.where["roughness"], "the roughness must be well below the inside "
                    "diameter")


def _build_line(values, ctx) -> Line:
    orifice = None
    o = values["orifice"]
    if o is not None:
        area = o["area"]
        if o["diameter"] is not None:
            area = math.pi * o["diameter"] ** 2 / 4.0
            ctx.record(o.at.child("area", None), "(from diameter)", area, "m2", "pi d^2 / 4")
        orifice = LineOrifice(area=area, discharge_coefficient=o["discharge_coefficient"],
                              at=o["at"])
    valve, valve_at = None, "from"
    if values["valve"] is not None:
        valve = build_control_valve(values["valve"], ctx)
        valve_at = values["valve"]["at"]
    return Line(length=values["length"], diameter=values["inside_diameter"],
                roughness=values["roughness"], fittings_k=values["fittings_K"],
                fittings_length=values["fittings_equivalent_length"],
                elevation_change=values["elevation_change"], flow_model=values["flow_model"],
                orifice=orifice, valve=valve, valve_at=valve_at,
                viscosity=values["viscosity"])


LINE = register_device(Variant(
    "line",
    "A pipe or hose with friction (length, bore, roughness, fittings, elevation), "
    "optionally with a control valve and a restriction orifice on the same link: "
    "compressible flow with friction choking at the outlet, or liquid by Darcy-Weisbach; "
    "flow in either direction.",
    Section(
        "device: line",
        "Keys of a link with `device: line`, besides `from`, `to` and `device`. The line is "
        "quasi-steady: it passes the flow its end pressures drive and holds no gas of its "
        "own (the run warns when its volume or transit time is not small; a long line is "
        "built as a chain of vessels, docs/lines.md). Gas: adiabatic flow with friction "
        "(Fanno flow) from rest at the upstream node, choked at the outlet, as a perfect "
        "gas with the ideal-gas k at the upstream temperature and the real upstream "
        "density; or isothermal flow. Darcy friction factor by the Colebrook equation.",
        fields=(
            Field("length", Quantity("length", above=0.0), "Straight length.", required=True),
            Field("inside_diameter", Quantity("length", above=0.0), "Inside diameter (bore).",
                  required=True),
            Field("roughness", Quantity("length", at_least=0.0),
                  "Absolute roughness of the wall (commercial steel 0.045 mm, drawn tubing "
                  "0.0015 mm, a smooth hose 0 mm).", default=DEFAULT_ROUGHNESS),
            Field("fittings_K", Quantity("dimensionless", at_least=0.0),
                  "Sum of the resistance coefficients K of the fittings, in velocity heads of "
                  "the line's bore (entrance 0.5, each standard elbow about 0.3-0.75, an open "
                  "ball valve about 0.05); the loss of the outlet jet is counted already.",
                  default="0"),
            Field("fittings_equivalent_length", Quantity("length", at_least=0.0),
                  "Equivalent length of the fittings, added to `length` (an alternative to "
                  "`fittings_K`).", default="0 m"),
            Field("elevation_change", Quantity("length"),
                  "Height of the `to` end above the `from` end (negative: downhill); its "
                  "static head counts, mostly for liquid.", default="0 m"),
            Field("flow_model", Choice(("adiabatic", "isothermal")),
                  "`adiabatic`: Fanno flow (insulated or short lines); `isothermal`: the gas "
                  "stays at the upstream temperature (long bare lines).",
                  default="adiabatic"),
            Field("orifice", Sub(LINE_ORIFICE), "A restriction orifice on the line."),
            Field("valve", Sub(LINE_VALVE), "A control valve on the line."),
            Field("viscosity", Quantity("viscosity", above=0.0),
                  "Dynamic viscosity for the Reynolds number; not given: CoolProp's at the "
                  "upstream state."),
        ),
        checks=(_check_line,),
    ),
    _build_line,
))


def _line_liquid(device: Line) -> tuple[str, str]:
    if device.valve is not None and device.valve.fl is None:
        return ("the line's valve needs its liquid pressure recovery factor FL to pass "
                "liquid (IEC 60534-2-1): state FL under 'valve', or draw vapour", "")
    return "", ("Darcy-Weisbach (single-phase liquid, constant density); flashing in the "
                "line is not modelled and is warned")


register_liquid_service(Line, _line_liquid)

# ---------------------------------------------------------------- regulators


def _check_regulator(band_key):
    def check(values, ctx) -> None:
        p_set, band = values.get("set_pressure"), values.get(band_key)
        if isinstance(p_set, float) and not p_set > ctx.atmosphere:
            ctx.problem(values.where["set_pressure"], "the set pressure must be above the "
                        f"atmosphere ({ctx.atmosphere / 1e5:.6g} bar a)")
            return
        if isinstance(p_set, float) and band not in (None, BAD):
            amount = share_or_difference(band, p_set - ctx.atmosphere)
            if not amount > 0.0:
                ctx.problem(values.where[band_key], f"'{band_key}' must be greater than 0 (it "
                            "is the regulator's proportional band)")
            elif band_key == "droop" and not amount < p_set:
                ctx.problem(values.where[band_key], "the droop must be less than the set "
                            "pressure (absolute)")
    return check


def _build_regulator(holds: str, band_key: str):
    def build(values, ctx) -> Regulator:
        if values["Kv"] is not None:
            kv = values["Kv"]
        else:
            kv = KV_PER_CV * values["Cv"]
            ctx.record(values.at.child("Kv", None), "(from Cv)", kv, "m3/h",
                       "Kv = 0.865 Cv (IEC 60534-2-1)")
        p_set = values["set_pressure"]
        band = share_or_difference(values[band_key], p_set - ctx.atmosphere)
        ctx.record(values.at.child(f"{band_key}_pressure", None), "(from the set pressure)",
                   band, "Pa", "the proportional band as a pressure difference",
                   kind="pressure_difference")
        return Regulator(holds=holds, set_pressure=p_set, band=band, kv=kv, xt=values["xT"],
                         fl=values["FL"])
    return build


def _regulator_fields(band_key: str, band_doc: str) -> tuple[Field, ...]:
    return (
        Field("set_pressure", Quantity("pressure"), "Set pressure (where the regulator "
              "shuts).", required=True),
        Field(band_key, ShareOrDifference(), band_doc, required=True),
        Field("Cv", Quantity("dimensionless", above=0.0),
              "Flow coefficient Cv of the fully open regulator (its capacity)."),
        Field("Kv", Quantity("dimensionless", above=0.0), "Flow coefficient Kv, instead of "
              "`Cv`."),
        Field("xT", Quantity("dimensionless", above=0.0, at_most=1.0),
              "Pressure differential ratio factor at choked flow (IEC 60534-2-1), from the "
              "maker; 0.7 is a usual value for globe-style bodies (common practice, no "
              "source).", default="0.7"),
        Field("FL", Quantity("dimensionless", above=0.0, at_most=1.0),
              "Liquid pressure recovery factor, needed when the regulator passes liquid."),
    )


PRESSURE_REGULATOR = register_device(Variant(
    "pressure-regulator",
    "A self-acting pressure-reducing regulator holding the pressure of its `to` node: shut "
    "at the set pressure, fully open at set minus the droop.",
    Section(
        "device: pressure-regulator",
        "Keys of a link with `device: pressure-regulator`, besides `from`, `to` and "
        "`device`. It senses the pressure of the `to` node; its travel grows in proportion "
        "as that pressure falls below the set pressure, reaching full travel (the "
        "regulator's capacity, Cv or Kv) at set minus `droop`. Flow by IEC 60534-2-1, from "
        "`from` to `to` only.",
        fields=_regulator_fields(
            "droop", "Fall of the downstream pressure from set (no flow) to full travel, as "
            "a pressure difference (`5 bar`) or a share of the set pressure (gauge), `5 %`."),
        one_of=(("Cv", "Kv"),),
        checks=(_check_regulator("droop"),),
    ),
    _build_regulator("downstream", "droop"),
))

BACK_PRESSURE_REGULATOR = register_device(Variant(
    "back-pressure-regulator",
    "A self-acting back-pressure regulator holding the pressure of its `from` node: shut at "
    "the set pressure, fully open at set plus the build-up.",
    Section(
        "device: back-pressure-regulator",
        "Keys of a link with `device: back-pressure-regulator`, besides `from`, `to` and "
        "`device`. It senses the pressure of the `from` node; its travel grows in proportion "
        "as that pressure rises above the set pressure, reaching full travel at set plus "
        "`build_up`. Flow by IEC 60534-2-1, from `from` to `to` only.",
        fields=_regulator_fields(
            "build_up", "Rise of the upstream pressure from set (no flow) to full travel, as "
            "a pressure difference (`2 bar`) or a share of the set pressure (gauge), `10 %`."),
        one_of=(("Cv", "Kv"),),
        checks=(_check_regulator("build_up"),),
    ),
    _build_regulator("upstream", "build_up"),
))


def _regulator_liquid(device: Regulator) -> tuple[str, str]:
    if device.fl is None:
        return ("the regulator's IEC 60534-2-1 liquid equation needs FL: state it, or draw "
                "vapour", "")
    return "", f"IEC 60534-2-1 incompressible-flow equations, FL = {device.fl:g}"


register_liquid_service(Regulator, _regulator_liquid)

__all__ = ["BACK_PRESSURE_REGULATOR", "LINE", "PRESSURE_REGULATOR"]
