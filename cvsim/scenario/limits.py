"""Design limits of a vessel: the ``limits:`` section and how it becomes VesselLimits."""
from __future__ import annotations

from dataclasses import dataclass

from .. import units
from ..limits import ACCUMULATION, GUIDELINE_TIME, guideline_target
from ..network import VesselLimits
from .spec import BAD, Field, Kind, Quantity, Section, Sub, as_text, read_section


@dataclass(frozen=True)
class Accumulation(Kind):
    """A named relief case (its accumulation) or a stated fraction (``10 %``)."""

    def read(self, raw, at, ctx):
        if isinstance(raw, str) and raw in ACCUMULATION:
            frac = ACCUMULATION[raw][0]
            ctx.record(at, raw, frac, "-", f"{frac * 100:.0f} % of the design gauge pressure")
            return (raw, frac)
        try:
            frac = units.parse_quantity(raw, "fraction")
        except units.UnitsError:
            ctx.problem(at, f"'{as_text(raw)}' is not an accumulation: write one of "
                        f"{', '.join(ACCUMULATION)} or a percentage such as '10 %'")
            return BAD
        if not 0.0 <= frac <= 1.0:
            ctx.problem(at, f"accumulation {frac * 100:g} % is outside 0-100 %")
            return BAD
        ctx.record(at, raw, frac, "-", "stated")
        return ("stated", frac)

    def describe(self) -> str:
        names = " \\| ".join(f"`{n}`" for n in ACCUMULATION)
        return f"{names} \\| a percentage of the design gauge pressure"


@dataclass(frozen=True)
class PressureOrFraction(Kind):
    """A pressure (``6.9 barg``), a percentage of the design gauge pressure (``50 %``)
    or ``guideline`` (the API 521 guideline's target)."""

    def read(self, raw, at, ctx):
        if raw == "guideline":
            ctx.record(at, raw, "guideline", "", "690 kPa g or 50 % of design, whichever "
                       "is lower")
            return ("guideline", None)
        if isinstance(raw, str) and raw.strip().endswith("%"):
            try:
                frac = units.parse_quantity(raw, "fraction")
            except units.UnitsError as exc:
                ctx.problem(at, str(exc))
                return BAD
            ctx.record(at, raw, frac, "-", "fraction of the design gauge pressure")
            return ("fraction", frac)
        value = Quantity("pressure").read(raw, at, ctx)
        return BAD if value is BAD else ("pressure", value)

    def describe(self) -> str:
        return ("pressure [Pa], a percentage of the design gauge pressure (`50 %`) or "
                "`guideline`")


DEPRESSURE = Section(
    "limits: depressure",
    "Depressuring target: reach a pressure within a time, counted from the start of "
    "depressuring. `depressure: guideline` stands for 690 kPa gauge or 50 % of the "
    "design gauge pressure, whichever is lower, within 15 min (API 521 practice for "
    "walls about 25 mm or thicker; needs `design_pressure`).",
    fields=(
        Field("to", PressureOrFraction(), "Target pressure (`guideline`: the guideline's "
              "target).", required=True),
        Field("within", Quantity("time", above=0.0), "Time allowed.", required=True),
        Field("from", Quantity("time", at_least=0.0),
              "Time depressuring starts; not given: found from the run, at the last "
              "pressure peak before the target is reached (a valve opening after a "
              "fire has raised the pressure)."),
    ),
)


@dataclass(frozen=True)
class Depressure(Kind):
    """``guideline`` or ``{to, within}``."""

    def read(self, raw, at, ctx):
        if raw == "guideline":
            ctx.record(at, raw, "guideline", "",
                       "690 kPa g or 50 % of design, whichever is lower, within 15 min")
            return "guideline"
        if isinstance(raw, str):
            ctx.problem(at, f"'{raw}' is not a depressuring target: write 'guideline' or "
                        "{to: 6.9 barg, within: 15 min}")
            return BAD
        return read_section(raw, DEPRESSURE, at, ctx)

    def describe(self) -> str:
        return "`guideline` \\| mapping, see [limits: depressure](#limits-depressure)"

    def sections(self):
        return (DEPRESSURE,)


def _check_limits(values, ctx) -> None:
    design = values.get("design_pressure")
    dep = values.get("depressure")
    if design is None:
        if values.get("accumulation") not in (None, BAD):
            ctx.problem(values.where["accumulation"],
                        "accumulation needs design_pressure (the pressure it is added to)")
        if dep == "guideline" or (isinstance(dep, dict) and isinstance(dep.get("to"), tuple)
                                  and dep["to"][0] in ("fraction", "guideline")):
            ctx.problem(values.where["depressure"], "a depressuring target given as the "
                        "guideline or as a percentage needs design_pressure")


LIMITS = Section(
    "limits",
    "Design limits of the vessel, checked after the run and listed in the summary as met "
    "or crossed, with margin, time and the governing practice.",
    fields=(
        Field("design_pressure", Quantity("pressure"),
              "Maximum allowable working pressure (MAWP) or design pressure."),
        Field("accumulation", Accumulation(),
              "Allowed accumulation above the design pressure during relief: "
              "`single-device` 10 % (or 3 psi), `multiple-devices` 16 % (or 4 psi), "
              "`fire` 21 % (ASME VIII-1 UG-125, API 520 Part I); or a percentage. "
              "Default with a design pressure: `single-device`."),
        Field("min_metal_temperature", Quantity("temperature"),
              "Minimum design metal temperature (MDMT); checked on the wall temperature "
              "when a wall is modelled, else on the gas temperature (conservative)."),
        Field("max_temperature", Quantity("temperature"),
              "Highest allowed gas (and wall) temperature, e.g. 85 degC for hydrogen "
              "vehicle cylinders."),
        Field("depressure", Depressure(), "Depressuring target and time allowed."),
    ),
    checks=(_check_limits,),
)

LIMITS_FIELD = Field("limits", Sub(LIMITS), "Design limits to check; none given: none checked.")


def build_limits(values, ctx) -> VesselLimits | None:
    """VesselLimits (SI) from the values read for ``vessels.<name>.limits``."""
    if values is None:
        return None
    atm = ctx.atmosphere
    design = values["design_pressure"]
    case, acc = values["accumulation"] or (None, None)
    if design is not None and acc is None:
        case, acc = "single-device", ACCUMULATION["single-device"][0]
        ctx.record(values.where["accumulation"], "(not given)", acc, "-",
                   "default: single relief device, 10 % (or 3 psi)")
    to = within = start = None
    basis = ""
    dep = values["depressure"]
    if dep == "guideline":
        to, within = guideline_target(design, atm), GUIDELINE_TIME
        basis = "API 521 guideline (690 kPa g or 50 % of design pressure, 15 min)"
        ctx.record(values.where["depressure"].child("to", None), "guideline", to, "Pa",
                   "computed")
    elif dep is not None:
        kind, v = dep["to"]
        within = dep["within"]
        start = dep["from"]
        if kind == "guideline":
            to = guideline_target(design, atm)
            basis = ("API 521 guideline target (690 kPa g or 50 % of design pressure), "
                     f"{within / 60:g} min")
            ctx.record(values.where["depressure"].child("to", None), "guideline", to, "Pa",
                       "computed")
        else:
            to = atm + v * (design - atm) if kind == "fraction" else v
            basis = (f"{v * 100:g} % of the design gauge pressure" if kind == "fraction"
                     else "stated pressure")
    return VesselLimits(design_pressure=design, accumulation=acc,
                        accumulation_case=case or "stated",
                        min_metal_temperature=values["min_metal_temperature"],
                        max_temperature=values["max_temperature"], depressure_to=to,
                        depressure_within=within, depressure_basis=basis,
                        depressure_start=start)
