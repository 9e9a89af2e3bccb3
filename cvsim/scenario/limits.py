"""Design limits of a vessel: the ``limits:`` section and how it becomes VesselLimits."""
from __future__ import annotations

from dataclasses import dataclass

from .. import mechanics, units
from ..limits import ACCUMULATION, GUIDELINE_TIME, guideline_target
from ..network import RuptureLimit, VesselLimits
from .spec import BAD, Choice, Field, Kind, Quantity, Section, Sub, as_text, read_section


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


# ------------------------------------------------------------------ rupture

#: thermal materials of a wall layer whose strength at temperature is carbon steel's
CARBON_MATERIALS = ("carbon-steel", "steel")


@dataclass(frozen=True)
class StrengthKind(Kind):
    """Strength at temperature: a name of published data, or a table of
    ``[temperature, retained fraction]`` points of one's own."""

    def read(self, raw, at, ctx):
        if isinstance(raw, str) and raw in mechanics.STRENGTH_NAMES:
            data = mechanics.strength_data(raw)
            ctx.record(at, raw, raw, "", data.source)
            return raw
        if isinstance(raw, list) and raw:
            return self._table(raw, at, ctx)
        import difflib
        close = difflib.get_close_matches(str(raw), mechanics.STRENGTH_NAMES, n=1)
        hint = f"; did you mean '{close[0]}'?" if close else ""
        ctx.problem(at, f"'{as_text(raw)}' is not strength data: write one of "
                    f"{', '.join(mechanics.STRENGTH_NAMES)} or a table "
                    f"[[20 degC, 1.0], [600 degC, 0.4], ...] of the retained fraction of "
                    f"the room-temperature strength{hint}")
        return BAD

    def _table(self, rows, at, ctx):
        temperature, fraction = Quantity("temperature"), Quantity("dimensionless", at_least=0.0)
        lines = getattr(rows, "item_lines", [])
        Ts, ks = [], []
        for i, row in enumerate(rows):
            here = at.item(i, lines[i] if i < len(lines) else None)
            if not isinstance(row, list) or len(row) != 2:
                ctx.problem(here, f"each point is [temperature, retained fraction]; got "
                            f"{as_text(row)}")
                return BAD
            T = temperature.read_one(row[0], here.child(0, None), ctx)
            k = fraction.read_one(row[1], here.child(1, None), ctx)
            if T is BAD or k is BAD:
                return BAD
            if Ts and T <= Ts[-1]:
                ctx.problem(here, "the temperatures of a strength table must increase")
                return BAD
            Ts.append(T)
            ks.append(k)
        return (tuple(Ts), tuple(ks))

    def describe(self) -> str:
        names = " \\| ".join(f"`{n}`" for n in mechanics.STRENGTH_NAMES)
        return f"{names} \\| list of [temperature, retained fraction] points"


@dataclass(frozen=True)
class CurveKind(Kind):
    """A Larson-Miller master curve: ``[[P, rupture stress], ...]``."""

    def read(self, raw, at, ctx):
        if not isinstance(raw, list) or not raw:
            ctx.problem(at, "expected a list of [P, rupture stress] points, e.g. "
                        "[[17000, 200 MPa], [20000, 100 MPa], [23000, 40 MPa]]")
            return BAD
        number, stress = Quantity("dimensionless", above=0.0), Quantity("stress", above=0.0)
        lines = getattr(raw, "item_lines", [])
        Ps, Ss = [], []
        for i, row in enumerate(raw):
            here = at.item(i, lines[i] if i < len(lines) else None)
            if not isinstance(row, list) or len(row) != 2:
                ctx.problem(here, f"each point is [P, rupture stress]; got {as_text(row)}")
                return BAD
            P = number.read_one(row[0], here.child(0, None), ctx)
            S = stress.read_one(row[1], here.child(1, None), ctx)
            if P is BAD or S is BAD:
                return BAD
            if Ps and not (P > Ps[-1] and S < Ss[-1]):
                ctx.problem(here, "along a master curve P increases and the rupture stress "
                            "falls: list the points in that order")
                return BAD
            Ps.append(P)
            Ss.append(S)
        return (tuple(Ps), tuple(Ss))

    def describe(self) -> str:
        return "list of [P, rupture stress] points"


CREEP = Section(
    "limits: rupture: creep",
    "Creep damage of the load-bearing layer by Larson-Miller life fractions (Robinson's "
    "rule): t_r = 10^(P(S)/T - C) hours at the stress S and metal temperature T [K], "
    "D = integral of dt / t_r; creep rupture at D = 1 (Larson & Miller 1952). No material "
    "data are built in: give the steel's published master curve.",
    fields=(
        Field("larson_miller_constant", Quantity("dimensionless", above=0.0),
              "C of P = T (C + log10 t_r), T in K, t_r in h (often about 20).",
              required=True),
        Field("rupture_curve", CurveKind(),
              "The master curve: [P, rupture stress] points, P in K (with log10 of hours), "
              "P increasing; linear in log10 of the stress between them.", required=True),
    ),
)


RUPTURE = Section(
    "limits: rupture",
    "Rupture screening of the wall in a fire: at every moment, the membrane stress from "
    "the pressure (inside less the atmosphere's; ASME VIII-1 UG-27, thick walls Appendix "
    "1-2 / 1-3) against the strength of the load-bearing layer's metal at its hottest "
    "temperature (room-temperature strength times its retained fraction: EN 1993-1-2). "
    "Met while the stress stays at or below the criterion; the earliest time to rupture is "
    "when it first reaches it. Needs the vessel's `heat: wall`.",
    fields=(
        Field("criterion", Choice(("tensile", "yield")),
              "`tensile`: the stress against the ultimate tensile strength at temperature "
              "(the usual rupture criterion for vessels in fires, API 521); `yield`: "
              "against the effective yield strength at temperature (EN 1993-1-2 k_y, "
              "2 % strain; conservative).", default="tensile"),
        Field("fraction", Quantity("fraction", above=0.0, at_most=1.0),
              "Share of that strength the stress may reach.", default="100 %"),
        Field("tensile_strength", Quantity("stress", above=0.0),
              "Ultimate tensile strength at room temperature (e.g. the specified "
              "minimum); needed with `criterion: tensile`."),
        Field("yield_strength", Quantity("stress", above=0.0),
              "Yield strength at room temperature; needed with `criterion: yield`."),
        Field("strength_at_temperature", StrengthKind(),
              "How the strength falls with temperature: `carbon-steel` (EN 1993-1-2 "
              "Table 3.1 and Annex A), `stainless-1.4301` or `stainless-1.4401` (EN "
              "1993-1-2 Annex C, values from memory: verify), or a list of [temperature, "
              "retained fraction] points of your own. Default: `carbon-steel` when the "
              "load-bearing layer is `carbon-steel` or `steel`; otherwise required."),
        Field("stress", Choice(("hoop", "equivalent")),
              "Stress compared: `hoop` (the larger membrane stress) or `equivalent` (von "
              "Mises of the hoop and longitudinal stresses).", default="hoop"),
        Field("corrosion_allowance", Quantity("length", at_least=0.0),
              "Taken off the load-bearing layer on its inside (ASME VIII-1 UG-25: "
              "dimensions in the corroded condition).", default="0 mm"),
        Field("layer", Quantity("dimensionless", at_least=1.0),
              "Which wall layer bears the pressure, counted from the inside (1: "
              "innermost).", default=1),
        Field("creep", Sub(CREEP), "Creep damage by Larson-Miller life fractions; none "
              "given: short-time strengths only."),
    ),
)


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
        Field("rupture", Sub(RUPTURE), "Rupture screening of the wall in a fire (needs "
              "`heat: wall`)."),
    ),
    checks=(_check_limits,),
)

LIMITS_FIELD = Field("limits", Sub(LIMITS), "Design limits to check; none given: none checked.")


def build_rupture(values, heat, ctx) -> RuptureLimit | None:
    """RuptureLimit (SI) from ``limits.rupture`` and the vessel's heat terms (its wall)."""
    from ..heat.definitions import Wall
    at = values.at
    wall = next((h for h in heat if isinstance(h, Wall)), None)
    if wall is None:
        ctx.problem(at, "rupture screening needs the vessel's wall (heat: wall) for the "
                    "metal temperature and the thickness; add a wall or remove 'rupture'")
        return None
    layer = values["layer"]
    if layer != int(layer) or not 1 <= layer <= len(wall.layers):
        ctx.problem(values.where["layer"], f"layer {layer:g} is not one of the wall's "
                    f"{len(wall.layers)} layer(s); count from 1 (innermost)")
        return None
    index = int(layer) - 1
    chosen = wall.layers[index]
    ca = values["corrosion_allowance"]
    if ca >= chosen.thickness:
        ctx.problem(values.where["corrosion_allowance"], f"the corrosion allowance "
                    f"({ca * 1e3:g} mm) leaves nothing of layer {index + 1} "
                    f"({chosen.thickness * 1e3:g} mm)")
        return None
    criterion = values["criterion"]
    room = values["tensile_strength" if criterion == "tensile" else "yield_strength"]
    if room is None:
        key = "tensile_strength" if criterion == "tensile" else "yield_strength"
        ctx.problem(at.child(key, None), f"criterion '{criterion}' needs the room-"
                    f"temperature {key.replace('_', ' ')} (e.g. {key}: 485 MPa)")
        return None
    given = values["strength_at_temperature"]
    material = next((n for n, m in _named_materials().items() if m == chosen.material), None)
    if given is None:
        if material in CARBON_MATERIALS:
            given = "carbon-steel"
            ctx.record(values.where["strength_at_temperature"], "(not given)", given, "",
                       f"default for the {material} layer: "
                       f"{mechanics.strength_data(given).source}")
        else:
            what = (f"the '{material}' layer" if material == "stainless-steel" else
                    f"layer {index + 1} ({chosen.material.name})")
            hint = (" (name the grade: stainless-1.4301 or stainless-1.4401)"
                    if material == "stainless-steel" else
                    " (a list of [temperature, retained fraction] points for this material)")
            ctx.problem(values.where["strength_at_temperature"], f"give the strength at "
                        f"temperature of {what}{hint}")
            return None
    if isinstance(given, str):
        data = mechanics.strength_data(given)
        if criterion == "yield" and data.yield_ is None:
            ctx.problem(values.where["criterion"], f"'{given}' gives no yield strength at "
                        "temperature; use criterion: tensile")
            return None
    else:
        data = mechanics.stated_strength(given[0], given[1])
    creep = values["creep"]
    if creep is not None:
        creep = (creep["larson_miller_constant"], *creep["rupture_curve"])
    return RuptureLimit(strength=data, criterion=criterion, fraction=values["fraction"],
                        tensile_strength=values["tensile_strength"],
                        yield_strength=values["yield_strength"], stress=values["stress"],
                        corrosion_allowance=ca, layer=index, creep=creep, key=at.key)


def _named_materials():
    from ..heat.materials import MATERIALS
    return MATERIALS


def build_limits(values, ctx, heat=()) -> VesselLimits | None:
    """VesselLimits (SI) from the values read for ``vessels.<name>.limits`` and the
    vessel's heat terms (``heat``: for the rupture screening's wall)."""
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
                        depressure_start=start,
                        rupture=(build_rupture(values["rupture"], heat, ctx)
                                 if values["rupture"] is not None else None))
