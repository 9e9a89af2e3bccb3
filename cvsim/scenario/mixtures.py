"""Mixture keys of a scenario: the fluid as named components, and a reservoir's own supply.

``fluid`` is either a CoolProp fluid name or a mapping of this module's section::

    fluid:
      name: natural gas
      components: {Methane: 0.85, Ethane: 0.07, Propane: 0.04, n-Butane: 0.02,
                   Nitrogen: 0.01, CarbonDioxide: 0.01}
      fractions: mole            # or mass
      equation_of_state: Peng-Robinson

A reservoir of a mixture run may supply another composition (``components`` and
``fractions`` in the reservoir). The engine's component list is the union of the
fluid's and the reservoirs' components, in file order; a component a composition does
not name has fraction 0 there. Fractions that do not sum to 1 are normalised with a
warning in the echo (:func:`cvsim.components.make_composition`).
"""
from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

from ..components import (COMPONENTS, EQUATIONS, GERG_COMPONENTS, CompositionWarning,
                          component_name, equation_name, make_composition)
from ..errors import FluidError
from ..network import FluidSpec
from . import properties
from .spec import BAD, Choice, Field, Kind, Section, Text, as_text, read_section


@dataclass(frozen=True)
class MixtureGiven:
    """The fluid as written: a mixture (before the reservoirs' components are added)."""

    label: str
    names: tuple[str, ...]
    mole_fractions: tuple[float, ...]
    equation: str


class Fractions(Kind):
    """A mapping of component names to fractions (numbers, or shares such as ``85 %``)."""

    def read(self, raw, at, ctx):
        if not isinstance(raw, dict) or not raw:
            ctx.problem(at, "expected each component with its fraction, e.g. "
                        "{Methane: 0.9, Ethane: 0.06, Propane: 0.04}")
            return BAD
        out, ok = {}, True
        lines = getattr(raw, "key_lines", {})
        for name, value in raw.items():
            here = at.child(name, lines.get(name))
            try:
                canonical = component_name(str(name), here.key)
            except FluidError as exc:
                ctx.problem(here, str(exc))
                ok = False
                continue
            f = _fraction(value)
            if f is None:
                ctx.problem(here, f"fraction {as_text(value)!r} is not a number >= 0 "
                            "(write 0.85 or 85 %)")
                ok = False
                continue
            if canonical in out:
                ctx.problem(here, f"component {canonical} is given twice; give it once")
                ok = False
                continue
            out[canonical] = f
            ctx.record(here, value, f, "-", "CoolProp name " + canonical
                       if canonical != name else "")
        if ok and sum(out.values()) <= 0.0:
            ctx.problem(at, "all fractions are zero; give each component's share")
            ok = False
        return out if ok else BAD

    def describe(self) -> str:
        return "mapping of component names (CoolProp's, or CH4, nC4, CO2 ...) to fractions"


def _fraction(value) -> float | None:
    if isinstance(value, bool):
        return None
    if isinstance(value, (int, float)):
        f = float(value)
    elif isinstance(value, str):
        text = value.strip()
        try:
            f = float(text[:-1]) / 100.0 if text.endswith("%") else float(text)
        except ValueError:
            return None
    else:
        return None
    return f if math.isfinite(f) and f >= 0.0 else None


_FRACTIONS = Field("fractions", Choice(("mole", "mass")),
                   "Whether the fractions of `components` are mole (volume, for gases) or "
                   "mass fractions.", default="mole")

MIXTURE = Section(
    "fluid as a mixture",
    "A gas mixture of named components on an equation of state (instead of a CoolProp "
    "fluid name), e.g. `fluid: {components: {Methane: 0.9, Ethane: 0.06, Propane: 0.03, "
    "Nitrogen: 0.01}, equation_of_state: Peng-Robinson}`. The vessels start with this "
    "composition; each vessel's composition then follows what enters and leaves it (a "
    "top outlet draws the vapour phase, a bottom outlet the liquid). Components: "
    + ", ".join(f"`{n}`" for n in COMPONENTS) + ".",
    fields=(
        Field("components", Fractions(),
              "Each component with its fraction; fractions that do not sum to 1 are "
              "normalised (a warning in the echo).", required=True),
        _FRACTIONS,
        Field("equation_of_state", Choice(tuple(EQUATIONS)),
              "`Peng-Robinson` or `SRK` (cubic, thermopack's default interaction "
              "parameters; fast), `GERG-2008` (ISO 20765-2, the reference for natural "
              "gas; 21 components; its flash costs about 25 ms, so runs in two phases or "
              "whose composition keeps changing, such as a fill from a supply of another "
              "composition, take minutes: use it for one-phase runs of one composition "
              "and for checks).",
              default="Peng-Robinson"),
        Field("name", Text(), "A label for the mixture in the outputs.",
              default="mixture"),
    ),
)


class FluidKind(Kind):
    """A CoolProp fluid name, or a mixture (:data:`MIXTURE`)."""

    def read(self, raw, at, ctx):
        if isinstance(raw, dict):
            values = read_section(raw, MIXTURE, at, ctx)
            if values is BAD or not values.ok("components", "fractions", "equation_of_state"):
                return BAD
            comp = composition(values["components"], values["fractions"], at, ctx)
            if comp is None:
                return BAD
            given = MixtureGiven(values["name"], comp.names, comp.mole_fractions,
                                 equation_name(values["equation_of_state"]))
            if not _gerg_covers(given.equation, comp.names, values.where["components"], ctx):
                return BAD
            ctx.record(at, "(mixture)", given.label, "",
                       f"{given.equation}; mole fractions " + ", ".join(
                           f"{n} {z:.6g}" for n, z in zip(comp.names, comp.mole_fractions)))
            return given
        if not isinstance(raw, str) or not raw.strip():
            ctx.problem(at, "expected a CoolProp fluid name such as Nitrogen, Air, Hydrogen, "
                        "or a mixture {components: {...}}")
            return BAD
        try:
            name = properties.canonical_fluid(raw.strip())
        except FluidError as exc:
            ctx.problem(at, str(exc) + "; a mixture is written {components: {Methane: 0.9, "
                        "...}}")
            return BAD
        ctx.record(at, raw, name, "", "CoolProp name" if name != raw else "")
        return name

    def describe(self) -> str:
        return ("CoolProp fluid name, or mapping, see [fluid as a mixture]"
                "(#fluid-as-a-mixture)")

    def sections(self):
        return (MIXTURE,)


def _gerg_covers(equation: str, names, at, ctx) -> bool:
    bad = [n for n in names if n not in GERG_COMPONENTS] if equation == "GERG-2008" else []
    if bad:
        ctx.problem(at, f"GERG-2008 does not cover {', '.join(bad)}; use "
                    "equation_of_state: Peng-Robinson or SRK, or leave the component out")
    return not bad


def composition(fractions: dict, basis: str, at, ctx):
    """A :class:`cvsim.components.Composition` from fractions read, or None (problem
    recorded); a normalisation is a warning row of the echo."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", CompositionWarning)
        try:
            comp = make_composition(fractions, basis, at.key)
        except FluidError as exc:
            ctx.problem(at, str(exc))
            return None
    if comp.note:
        ctx.record(at.child("components", None), "(normalised)", "", "",
                   "warning: " + comp.note)
    return comp


# ------------------------------------------------------------------ reservoirs

RESERVOIR_FIELDS = (
    Field("components", Fractions(),
          "Mixture runs only: the composition this reservoir supplies, when it differs "
          "from the fluid's (a supply of another gas); not given: the fluid's."),
    Field("fractions", Choice(("mole", "mass")),
          "Whether the reservoir's `components` are mole or mass fractions; not given: "
          "mole."),
)


def check_mixture_top(values, ctx) -> None:
    """Top-level checks of a mixture run: properties, ideal_gas, reservoirs' and
    vessels' keys that need a pure fluid."""
    fluid = values.get("fluid")
    mixture = isinstance(fluid, MixtureGiven)
    if mixture and values.get("properties") == "ideal-gas":
        ctx.problem(values.where["properties"], "a mixture uses its equation of state: "
                    "remove 'properties: ideal-gas' (or give one CoolProp fluid name)")
    reservoirs = values.get("reservoirs")
    if isinstance(reservoirs, dict):
        for name, r in reservoirs.items():
            if r is BAD or r.get("components") is None:
                continue
            if isinstance(fluid, str):
                ctx.problem(r.where["components"], f"reservoir '{name}': 'components' "
                            "applies to a mixture fluid; write the fluid as a mixture "
                            "{components: {...}} or remove it")
            elif mixture:
                _gerg_covers(fluid.equation, list(r["components"]), r.where["components"], ctx)
    vessels = values.get("vessels")
    if mixture and isinstance(vessels, dict):
        for name, v in vessels.items():
            init = v.get("initial") if v is not BAD else None
            if init not in (None, BAD) and init.get("liquid_fraction") is not None:
                ctx.problem(init.where["liquid_fraction"],
                            f"vessel '{name}': a mixture's liquid share follows from its "
                            "pressure and temperature (the flash); give both and remove "
                            "liquid_fraction")


def mixture_spec(given: MixtureGiven, reservoirs: dict) -> FluidSpec:
    """The :class:`~cvsim.network.FluidSpec` of a mixture run: the fluid's components
    then any new ones the reservoirs supply (fraction 0 in the fluid)."""
    names = list(given.names)
    for r in reservoirs.values():
        for n in (r.get("components") or {}):
            if n not in names:
                names.append(n)
    z = list(given.mole_fractions) + [0.0] * (len(names) - len(given.names))
    return FluidSpec(name=given.label, model="mixture", components=tuple(names),
                     mole_fractions=tuple(z), equation=given.equation)


def reservoir_composition(name: str, values, fluid: FluidSpec, at, ctx):
    """Mole fractions a reservoir supplies, on the fluid's components (None: the fluid's)."""
    if fluid.model != "mixture" or values.get("components") is None:
        return None
    comp = composition(values["components"], values["fractions"] or "mole", at, ctx)
    if comp is None:
        return None
    z = dict(zip(comp.names, comp.mole_fractions))
    out = tuple(z.get(n, 0.0) for n in fluid.components)
    ctx.record(at.child("components", None), "(mole fractions)", "", "",
               ", ".join(f"{n} {x:.6g}" for n, x in zip(fluid.components, out) if x > 0.0))
    return out


__all__ = ["FluidKind", "Fractions", "MIXTURE", "MixtureGiven", "RESERVOIR_FIELDS",
           "check_mixture_top", "mixture_spec", "reservoir_composition"]
