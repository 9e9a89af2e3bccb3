"""Components and compositions of mixtures: names, molar masses, fractions, and the
equations of state offered for them (used by :mod:`cvsim.mixture`; no thermopack here).

Component names are CoolProp's (``Methane``, ``n-Butane``, ``CarbonDioxide`` ...); common
formulas (``CH4``, ``nC4``, ``CO2``) are accepted too. Fractions that do not sum to 1 are
normalised with a :class:`CompositionWarning` and a note for the report.
"""
from __future__ import annotations

import difflib
import math
import warnings
from dataclasses import dataclass

from .errors import FluidError

#: equations of state offered, as the trade names them -> (thermopack class, its key)
EQUATIONS = {
    "Peng-Robinson": ("cubic", "PR"),
    "SRK": ("cubic", "SRK"),
    "GERG-2008": ("multiparameter", "GERG2008"),
}
_EQUATION_ALIASES = {
    "peng-robinson": "Peng-Robinson", "pr": "Peng-Robinson", "peng robinson": "Peng-Robinson",
    "srk": "SRK", "soave-redlich-kwong": "SRK", "soave redlich kwong": "SRK",
    "gerg-2008": "GERG-2008", "gerg2008": "GERG-2008", "gerg": "GERG-2008",
}

#: components by CoolProp name -> (thermopack identifier, molar mass [kg/mol]);
#: molar masses as in thermopack's component data base
COMPONENTS: dict[str, tuple[str, float]] = {
    "Methane": ("C1", 16.0425e-3),
    "Ethane": ("C2", 30.07e-3),
    "Propane": ("C3", 44.097e-3),
    "n-Butane": ("NC4", 58.124e-3),
    "IsoButane": ("IC4", 58.124e-3),
    "n-Pentane": ("NC5", 72.151e-3),
    "Isopentane": ("IC5", 72.151e-3),
    "n-Hexane": ("NC6", 86.178e-3),
    "n-Heptane": ("NC7", 100.205e-3),
    "n-Octane": ("NC8", 114.232e-3),
    "n-Nonane": ("NC9", 128.259e-3),
    "n-Decane": ("NC10", 142.286e-3),
    "Nitrogen": ("N2", 28.013e-3),
    "CarbonDioxide": ("CO2", 44.01e-3),
    "HydrogenSulfide": ("H2S", 34.08e-3),
    "Water": ("H2O", 18.015e-3),
    "Hydrogen": ("H2", 2.016e-3),
    "Oxygen": ("O2", 31.999e-3),
    "Argon": ("AR", 39.948e-3),
    "Helium": ("HE", 4.003e-3),
    "CarbonMonoxide": ("CO", 28.01e-3),
    "Ethylene": ("C2_1", 28.054e-3),
    "Propylene": ("PRLN", 42.081e-3),
    "Ammonia": ("NH3", 17.031e-3),
    "SulfurDioxide": ("SO2", 64.065e-3),
    "Benzene": ("BENZENE", 78.114e-3),
    "Toluene": ("TOLU", 92.141e-3),
}
#: the 21 components of GERG-2008 (ISO 20765-2, Kunz & Wagner 2012, table A1)
GERG_COMPONENTS = frozenset((
    "Methane", "Nitrogen", "CarbonDioxide", "Ethane", "Propane", "n-Butane", "IsoButane",
    "n-Pentane", "Isopentane", "n-Hexane", "n-Heptane", "n-Octane", "n-Nonane", "n-Decane",
    "Hydrogen", "Oxygen", "CarbonMonoxide", "Water", "HydrogenSulfide", "Helium", "Argon"))
#: other spellings accepted (lower case) -> CoolProp name
_ALIASES = {
    "c1": "Methane", "ch4": "Methane", "c2": "Ethane", "c2h6": "Ethane", "c3": "Propane",
    "c3h8": "Propane", "butane": "n-Butane", "nc4": "n-Butane", "n-c4": "n-Butane",
    "isobutane": "IsoButane", "i-butane": "IsoButane", "ic4": "IsoButane", "i-c4": "IsoButane",
    "pentane": "n-Pentane", "nc5": "n-Pentane", "isopentane": "Isopentane", "ic5": "Isopentane",
    "hexane": "n-Hexane", "nc6": "n-Hexane", "heptane": "n-Heptane", "octane": "n-Octane",
    "nonane": "n-Nonane", "decane": "n-Decane", "n2": "Nitrogen", "co2": "CarbonDioxide",
    "h2s": "HydrogenSulfide", "h2o": "Water", "h2": "Hydrogen", "o2": "Oxygen", "ar": "Argon",
    "he": "Helium", "co": "CarbonMonoxide", "c2h4": "Ethylene", "c3h6": "Propylene",
    "nh3": "Ammonia", "so2": "SulfurDioxide",
}


class CompositionWarning(UserWarning):
    """A composition was accepted after a correction (fractions normalised)."""


# ------------------------------------------------------------------ composition
@dataclass(frozen=True)
class Composition:
    """Overall composition: component names (CoolProp's) and mole fractions summing to 1.

    ``note`` says what was corrected on the way in (empty when nothing was).
    """

    names: tuple[str, ...]
    mole_fractions: tuple[float, ...]
    note: str = ""

    @property
    def molar_mass(self) -> float:
        """Molar mass of the mixture, sum z_i M_i [kg/mol]."""
        return sum(z * COMPONENTS[n][1] for n, z in zip(self.names, self.mole_fractions))

    def mass_fractions(self) -> tuple[float, ...]:
        M = self.molar_mass
        return tuple(z * COMPONENTS[n][1] / M for n, z in zip(self.names, self.mole_fractions))


def component_name(name: str, where: str = "composition") -> str:
    """The CoolProp name of a component given by that name or a common formula
    (case-insensitive); :class:`FluidError` naming ``where`` for an unknown one."""
    if name in COMPONENTS:
        return name
    low = name.strip().lower()
    for known in COMPONENTS:
        if known.lower() == low:
            return known
    if low in _ALIASES:
        return _ALIASES[low]
    close = difflib.get_close_matches(name, list(COMPONENTS), n=3, cutoff=0.5)
    hint = f" Did you mean {', '.join(close)}?" if close else ""
    raise FluidError(f"{where}: unknown component '{name}'.{hint} Components known: "
                     f"{', '.join(COMPONENTS)}.")


def make_composition(fractions: dict[str, float], basis: str = "mole",
                     where: str = "composition") -> Composition:
    """Composition from fractions of named components.

    Parameters
    ----------
    fractions : {component name: fraction [-]}; CoolProp names or common formulas
    basis : ``mole`` or ``mass``
    where : the scenario key the fractions come from, for messages

    Fractions that do not sum to 1 (within 1e-6) are normalised with a
    :class:`CompositionWarning` and a ``note``; components with fraction 0 are dropped.
    Negative, non-finite or all-zero fractions, unknown or repeated names raise
    :class:`FluidError`.
    """
    if basis not in ("mole", "mass"):
        raise FluidError(f"{where}: basis '{basis}' unknown: write 'mole' or 'mass'.")
    if not fractions:
        raise FluidError(f"{where}: no components given; list at least one with its fraction.")
    names, values = [], []
    for raw, value in fractions.items():
        name = component_name(str(raw), where)
        if name in names:
            raise FluidError(f"{where}: component {name} is given twice ('{raw}'); give it once.")
        try:
            f = float(value)
        except (TypeError, ValueError):
            raise FluidError(f"{where}.{raw}: fraction '{value}' is not a number.") from None
        if not math.isfinite(f) or f < 0.0:
            raise FluidError(f"{where}.{raw}: fraction {value} must be a finite number >= 0.")
        if f > 0.0:
            names.append(name)
            values.append(f)
    total = sum(values)
    if total <= 0.0:
        raise FluidError(f"{where}: all fractions are zero; give each component's share.")
    note = ""
    if abs(total - 1.0) > 1e-6:
        note = (f"{where}: {basis} fractions summed to {total:.6g}, not 1; each was divided "
                "by the sum (normalised). Check the composition if that was not intended.")
        warnings.warn(note, CompositionWarning, stacklevel=2)
    values = [f / total for f in values]
    if basis == "mass":
        moles = [w / COMPONENTS[n][1] for n, w in zip(names, values)]
        s = sum(moles)
        values = [m / s for m in moles]
    return Composition(tuple(names), tuple(values), note)


def equation_name(equation: str) -> str:
    """The trade name of an equation of state given in any accepted spelling."""
    if equation in EQUATIONS:
        return equation
    key = equation.strip().lower()
    if key in _EQUATION_ALIASES:
        return _EQUATION_ALIASES[key]
    raise FluidError(f"unknown equation of state '{equation}' for a mixture: use one of "
                     f"{', '.join(EQUATIONS)}.")
