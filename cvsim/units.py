"""Quantities written as text (``"150 barg"``, ``"15 degC"``) -> SI floats.

This is the only place where unit text is read; everything below the scenario
reader sees SI numbers only. One units registry (pint) is created on first use,
not at import, so ``import cvsim.units`` stays cheap.

Rules the reader follows (also written out in ``docs/scenario-format.md``):

* Every dimensioned quantity needs a unit; a bare number is accepted only for
  ``dimensionless`` and ``fraction`` values.
* Gauge pressures carry the gauge mark in the unit: ``barg``, ``bar(g)``,
  ``bar g``, ``psig``, ``kPag``, ``MPag``, ``mbarg``, ``kg/cm2g`` (also
  ``kgf/cm2 g``). They are added to the local atmospheric pressure
  ``atmosphere`` [Pa]. ``bara``, ``psia``, ``Pa``, ``kPa``, ``MPa``, ``atm``
  are absolute.
* Plain ``bar``, ``mbar``, ``psi`` and ``kg/cm2`` are read as absolute, but the
  trade uses them both ways; :func:`read_quantity` returns a note saying so,
  and the scenario echo shows it.
* Temperatures: ``K``, ``degC``/``°C``, ``degF``/``°F``, ``degR``. Inside a
  compound unit (``W/m2/degC``) a Celsius or Fahrenheit degree is a
  temperature difference.
* Exponents may be written ``m3``, ``m^3`` or ``m³``.
* Standard-volume flows (``Nm3/h``, ``Sm3/h``, ``SCFM``, ``SCFH``, ``MMSCFD``)
  are read by :func:`parse_standard_flow`, which also returns the basis
  (reference pressure and temperature) the unit names.
"""
from __future__ import annotations

import difflib
import math
import re
import tokenize
from dataclasses import dataclass

from .errors import CvsimError

ATMOSPHERE = 101325.0  # [Pa] one standard atmosphere (ISO 2533)
PSI = 6894.757293168361  # [Pa] one pound-force per square inch (exact by definition)
FOOT = 0.3048  # [m] exact by definition


class UnitsError(CvsimError, ValueError):
    """A quantity's text could not be read: no unit, unknown unit or wrong dimension."""


# ---------------------------------------------------------------- dimensions


@dataclass(frozen=True)
class Dimension:
    """One kind of quantity a scenario value can be.

    name     key used by :func:`parse_quantity` (``pressure``)
    noun     how a message names it (``a pressure``)
    si       pint expression of the SI unit values are converted to
    symbol   SI unit as shown in the echo and the docs (``Pa``)
    example  a unit to suggest in messages (``barg``)
    units    units accepted, as listed in the docs
    """

    name: str
    noun: str
    si: str
    symbol: str
    example: str
    units: str


DIMENSIONS: dict[str, Dimension] = {d.name: d for d in (
    Dimension("pressure", "a pressure", "Pa", "Pa", "barg",
              "bara, barg, mbar, psia, psig, Pa, kPa, kPag, MPa, MPag, kg/cm2 (a or g), atm"),
    Dimension("temperature", "a temperature", "K", "K", "degC",
              "K, degC (°C), degF (°F), degR"),
    Dimension("temperature_difference", "a temperature difference", "K", "K", "K",
              "K, degC, degF, degR (as differences)"),
    Dimension("length", "a length", "m", "m", "mm", "m, cm, mm, in, ft"),
    Dimension("area", "an area", "m**2", "m2", "mm2", "m2, cm2, mm2, in2, ft2"),
    Dimension("volume", "a volume", "m**3", "m3", "m3", "m3, L, ft3, gal (US)"),
    Dimension("mass", "a mass", "kg", "kg", "kg", "kg, g, t, lb"),
    Dimension("time", "a time", "s", "s", "s", "s, min, h, d"),
    Dimension("mass_flow", "a mass flow", "kg/s", "kg/s", "kg/h", "kg/s, kg/h, t/h, lb/h"),
    Dimension("volume_flow", "a volume flow", "m**3/s", "m3/s", "m3/h", "m3/s, m3/h, L/min, ft3/min"),
    Dimension("power", "a power", "W", "W", "kW", "W, kW, MW, BTU/h, hp"),
    Dimension("heat_transfer_coefficient", "a heat transfer coefficient", "W/m**2/K",
              "W/(m2 K)", "W/m2/K", "W/m2/K, W/(m2 K), BTU/h/ft2/degF"),
    Dimension("thermal_conductance", "a thermal conductance (UA)", "W/K", "W/K",
              "W/K", "W/K, kW/K"),
    Dimension("energy", "an energy", "J", "J", "kJ", "J, kJ, MJ, kWh, BTU"),
    Dimension("thermal_conductivity", "a thermal conductivity", "W/m/K", "W/(m K)",
              "W/m/K", "W/m/K, W/(m K), BTU/h/ft/degF"),
    Dimension("specific_heat", "a specific heat capacity", "J/kg/K", "J/(kg K)",
              "J/kg/K", "J/kg/K, kJ/kg/K, BTU/lb/degF"),
    Dimension("molar_mass", "a molar mass", "kg/mol", "kg/mol", "g/mol", "g/mol, kg/mol"),
    Dimension("density", "a density", "kg/m**3", "kg/m3", "kg/m3", "kg/m3, g/L, lb/ft3"),
    Dimension("velocity", "a velocity", "m/s", "m/s", "m/s", "m/s, km/h, ft/s"),
    Dimension("pressure_rate", "a pressure-rise rate", "Pa/s", "Pa/s", "MPa/min",
              "Pa/s, kPa/s, bar/s, bar/min, MPa/min, psi/s"),
    Dimension("viscosity", "a dynamic viscosity", "Pa*s", "Pa s", "cP", "Pa s, mPa s, cP"),
    Dimension("stress", "a stress", "Pa", "Pa", "MPa", "MPa, N/mm2, kPa, Pa, ksi, psi"),
    Dimension("dimensionless", "a plain number", "", "-", "", "a plain number"),
    Dimension("fraction", "a fraction", "", "-", "%", "a plain number (0.07) or a percentage (7 %)"),
)}

_PLAIN = ("dimensionless", "fraction")


# ------------------------------------------------------------------ registry

_REGISTRY = None


def registry():
    """The one pint UnitRegistry, created on first use.

    Creation reads pint's definition file; a cache folder (pint's ``:auto:``,
    the user cache directory) cuts it from about 0.17 s to 0.04 s on the
    development machine. Where the cache cannot be written the registry is
    built without it.
    """
    global _REGISTRY
    if _REGISTRY is None:
        import pint

        try:
            _REGISTRY = pint.UnitRegistry(cache_folder=":auto:")
        except OSError:
            _REGISTRY = pint.UnitRegistry()
    return _REGISTRY


# ---------------------------------------------------------------- text forms

_NUMBER = re.compile(r"\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*")

# pressure units that may carry a gauge or absolute mark; key: as written
# (lower case for the bar/psi/kg families, exact case for the pascal family,
# where m and M differ), value: pint expression
_PRESSURE_BASES_NOCASE = {
    "bar": "bar", "mbar": "mbar", "psi": "psi",
    "kg/cm2": "kgf/cm**2", "kg/cm^2": "kgf/cm**2", "kg/cm²": "kgf/cm**2",
    "kgf/cm2": "kgf/cm**2", "kgf/cm^2": "kgf/cm**2", "kgf/cm²": "kgf/cm**2",
}
_PRESSURE_BASES_CASE = {"Pa": "Pa", "hPa": "hPa", "kPa": "kPa", "MPa": "MPa"}
# plain units the trade uses for both gauge and absolute values
_AMBIGUOUS = {"bar", "mbar", "psi", "kgf/cm**2"}

_MARKS = (  # (pattern at the end of the unit, reference); tried in order
    (re.compile(r"\(\s*(?:g|gauge)\s*\)$", re.I), "gauge"),
    (re.compile(r"\(\s*(?:a|abs|absolute)\s*\)$", re.I), "absolute"),
    (re.compile(r"\s+(?:g|gauge)$", re.I), "gauge"),
    (re.compile(r"\s+(?:a|abs|absolute)$", re.I), "absolute"),
    (re.compile(r"g$", re.I), "gauge"),
    (re.compile(r"a$", re.I), "absolute"),
)

_DEGREES = re.compile(r"(?<![A-Za-z_])(?:deg\s*C|°\s*C|ºC|℃|degC|celsius)(?![A-Za-z_])")
_DEGREES_F = re.compile(r"(?<![A-Za-z_])(?:deg\s*F|°\s*F|ºF|℉|degF|fahrenheit)(?![A-Za-z_])")
_DEGREES_R = re.compile(r"(?<![A-Za-z_])(?:deg\s*R|°\s*R|ºR|degR|rankine)(?![A-Za-z_])")
_EXPONENT = re.compile(r"(?<=[A-Za-z])(\d+)")
# what pint's unit parser raises for text it cannot read (an unknown name is an
# AttributeError subclass; malformed expressions surface as the others)
_PARSE_ERRORS = (AttributeError, AssertionError, TypeError, ValueError, SyntaxError,
                 KeyError, tokenize.TokenError)


def _pressure_base(unit: str) -> str | None:
    """Pint expression of a pressure unit that may take a gauge mark, else ``None``."""
    unit = unit.strip()
    return _PRESSURE_BASES_CASE.get(unit) or _PRESSURE_BASES_NOCASE.get(unit.lower())


def _split_reference(unit: str) -> tuple[str, str | None]:
    """Split ``barg`` into (``bar``, ``gauge``); units without a mark give ``None``."""
    for pattern, reference in _MARKS:
        m = pattern.search(unit)
        if m:
            base = _pressure_base(unit[:m.start()])
            if base is not None:
                return base, reference
    return unit, None


def _pint_expression(unit: str, offset_ok: bool) -> str:
    """Rewrite a unit as written into a pint expression.

    ``offset_ok``: a lone Celsius/Fahrenheit degree stays an absolute
    temperature; otherwise degrees become temperature differences.
    """
    celsius, fahrenheit = ("degC", "degF") if offset_ok else ("delta_degC", "delta_degF")
    unit = _DEGREES.sub(celsius, unit)
    unit = _DEGREES_F.sub(fahrenheit, unit)
    unit = _DEGREES_R.sub("degR", unit)
    unit = unit.replace("kg/cm", "kgf/cm")
    return _EXPONENT.sub(r"**\1", unit)


#: The commonest units of each dimension as (SI per unit, SI offset): read without
#: pint, so that a scenario written in them never loads it (pint's import and registry
#: cost about a quarter of a second of a command, most of it pint's probing of optional
#: array libraries). Keys are pint expressions as :func:`_pint_expression` writes them;
#: every factor is an exact definition, and a test compares each with pint itself.
FAST_UNITS: dict[tuple[str, str], tuple[float, float]] = {
    **{("pressure", u): (f, 0.0) for u, f in (
        ("Pa", 1.0), ("kPa", 1e3), ("MPa", 1e6), ("hPa", 100.0), ("bar", 1e5),
        ("mbar", 100.0), ("psi", PSI), ("atm", ATMOSPHERE))},
    ("temperature", "K"): (1.0, 0.0),
    ("temperature", "degC"): (1.0, 273.15),
    ("temperature_difference", "K"): (1.0, 0.0),
    ("temperature_difference", "delta_degC"): (1.0, 0.0),
    **{("length", u): (f, 0.0) for u, f in (("m", 1.0), ("cm", 0.01), ("mm", 1e-3),
                                            ("km", 1e3), ("in", 0.0254), ("ft", FOOT))},
    **{("area", u): (f, 0.0) for u, f in (("m**2", 1.0), ("cm**2", 1e-4), ("mm**2", 1e-6),
                                          ("in**2", 0.0254 ** 2))},
    **{("volume", u): (f, 0.0) for u, f in (("m**3", 1.0), ("L", 1e-3), ("l", 1e-3))},
    **{("mass", u): (f, 0.0) for u, f in (("kg", 1.0), ("g", 1e-3), ("t", 1e3))},
    **{("time", u): (f, 0.0) for u, f in (("s", 1.0), ("ms", 1e-3), ("min", 60.0),
                                          ("h", 3600.0), ("d", 86400.0))},
    **{("mass_flow", u): (f, 0.0) for u, f in (("kg/s", 1.0), ("g/s", 1e-3),
                                               ("kg/h", 1 / 3600.0), ("t/h", 1e3 / 3600.0),
                                               ("kg/min", 1 / 60.0))},
    **{("volume_flow", u): (f, 0.0) for u, f in (("m**3/s", 1.0), ("m**3/h", 1 / 3600.0),
                                                 ("L/min", 1e-3 / 60.0), ("L/s", 1e-3))},
    **{("power", u): (f, 0.0) for u, f in (("W", 1.0), ("kW", 1e3), ("MW", 1e6))},
    **{("heat_transfer_coefficient", u): (1.0, 0.0)
       for u in ("W/m**2/K", "W/(m**2*K)", "W/m**2/delta_degC")},
    ("thermal_conductance", "W/K"): (1.0, 0.0),
    ("thermal_conductance", "kW/K"): (1e3, 0.0),
    **{("energy", u): (f, 0.0) for u, f in (("J", 1.0), ("kJ", 1e3), ("MJ", 1e6),
                                            ("kWh", 3.6e6))},
    ("thermal_conductivity", "W/m/K"): (1.0, 0.0),
    ("specific_heat", "J/kg/K"): (1.0, 0.0),
    ("specific_heat", "kJ/kg/K"): (1e3, 0.0),
    ("molar_mass", "g/mol"): (1e-3, 0.0),
    ("molar_mass", "kg/mol"): (1.0, 0.0),
    ("density", "kg/m**3"): (1.0, 0.0),
    ("velocity", "m/s"): (1.0, 0.0),
    ("fraction", "%"): (0.01, 0.0),
}


def _quote(text) -> str:
    return f'"{text}"'


def _number(value: float) -> str:
    return f"{value:g}"


def _missing_unit_message(text: str, number: float, dim: Dimension) -> str:
    n = _number(number)
    if dim.name == "pressure":
        hint = f'"{n} barg" (gauge) or "{n} bara" (absolute)'
    elif dim.name == "temperature":
        hint = f'"{n} degC" or "{n} K"'
    else:
        hint = f'"{n} {dim.example}"'
    return f"missing unit in {_quote(text)}: write e.g. {hint}"


def split_quantity(text: str) -> tuple[float, str] | None:
    """``"150 barg"`` -> ``(150.0, "barg")``; ``None`` if the text does not start with a number."""
    m = _NUMBER.fullmatch(text)
    return None if m is None else (float(m.group(1)), m.group(2))


@dataclass(frozen=True)
class Reading:
    """A quantity read from text.

    value      [SI] the value in the dimension's SI unit
    unit       the unit as written (``""`` for a plain number)
    reference  pressures: ``gauge``, ``absolute`` (marked) or ``None``
    note       what the reader assumed, for the echo (``""``: nothing)
    """

    value: float
    unit: str
    reference: str | None = None
    note: str = ""


def read_quantity(text: str | float | int, dimension: str, *,
                  atmosphere: float = ATMOSPHERE) -> Reading:
    """Read a quantity written as text and convert it to SI.

    Parameters
    ----------
    text : str or number
        e.g. ``"150 barg"``, ``"15 degC"``, ``"10 mm"``; numbers are accepted
        only for the ``dimensionless`` and ``fraction`` dimensions.
    dimension : str
        one of :data:`DIMENSIONS`.
    atmosphere : float
        [Pa] local atmospheric pressure that gauge pressures are added to.

    Returns
    -------
    Reading
        the SI value with the unit as written and a note on any assumption.

    Raises
    ------
    UnitsError
        no unit where one is needed, an unknown unit, or a unit of another
        dimension.

    Examples
    --------
    >>> read_quantity("150 barg", "pressure").value
    15101325.0
    >>> read_quantity("15 degC", "temperature").value
    288.15
    """
    dim = DIMENSIONS.get(dimension)
    if dim is None:
        raise ValueError(f"unknown dimension {dimension!r}; one of {', '.join(DIMENSIONS)}")
    if isinstance(text, bool) or not isinstance(text, (str, int, float)):
        raise UnitsError(f"expected {dim.noun} written as text such as "
                         f'"10 {dim.example}", got {text!r}')
    if not isinstance(text, str):
        number, unit = float(text), ""
    else:
        split = split_quantity(text)
        if split is None:
            example = f'"10 {dim.example}"' if dim.example else '"0.5"'
            raise UnitsError(f"cannot read {_quote(text)} as {dim.noun}: "
                             f"write a number and a unit, e.g. {example}")
        number, unit = split
    if not math.isfinite(number):
        raise UnitsError(f"{_quote(text)} is not a finite number")

    if unit == "":
        if dim.name in _PLAIN:
            return Reading(number, "")
        raise UnitsError(_missing_unit_message(str(text), number, dim))

    if standard_flow_unit(unit) is not None:
        raise UnitsError(f"{_quote(text)} is a standard-volume flow, expected {dim.noun}"
                         + (f' (e.g. "{_number(number)} {dim.example}")' if dim.example else ""))

    base, reference = _split_reference(unit)
    expression = _pint_expression(base, offset_ok=(dim.name == "temperature"))
    fast = FAST_UNITS.get((dim.name, expression))
    if fast is not None:
        value = number * fast[0] + fast[1]
    else:
        ureg = registry()
        try:
            units = ureg.parse_units(expression)
        except _PARSE_ERRORS as exc:
            raise UnitsError(_unknown_unit_message(str(text), unit, dim)) from exc
        quantity = ureg.Quantity(number, units)
        target = ureg.parse_units(dim.si) if dim.si else ureg.dimensionless
        if quantity.dimensionality != target.dimensionality:
            raise UnitsError(_wrong_dimension_message(str(text), quantity, number, dim, unit))
        value = float(quantity.to(target).magnitude)

    note = ""
    if reference is not None and dim.name == "stress":
        raise UnitsError(f"{_quote(text)}: a stress has no gauge or absolute reference; "
                         f"write it in MPa, N/mm2, ksi or psi")
    if reference == "gauge":
        value += atmosphere
        note = f"gauge: atmosphere {atmosphere:.6g} Pa added"
    elif reference is None and dim.name == "pressure" and _pressure_base(unit) in _AMBIGUOUS:
        note = (f"warning: '{unit}' read as absolute; write {unit}a or {unit}g to be "
                "explicit")
    return Reading(value, unit, reference, note)


def parse_quantity(text: str | float | int, dimension: str, *,
                   atmosphere: float = ATMOSPHERE) -> float:
    """SI value [SI unit of ``dimension``] of a quantity written as text.

    See :func:`read_quantity` for the rules; this returns only the number.

    >>> parse_quantity("10 mm", "length")
    0.01
    """
    return read_quantity(text, dimension, atmosphere=atmosphere).value


def read_per_quantity(text: str | float | int, dimension: str) -> Reading:
    """Read a value per unit of a quantity, such as a controller's gain: travel per unit
    of the measured quantity, ``"10 %/bar"``, ``"0.05 /K"``, ``"2 %/(MPa/min)"``.

    Returns the value in [1 / SI unit of ``dimension``] (``"10 %/bar"`` -> 1e-6 per Pa).
    Degrees in the unit are differences (``%/degC`` is ``%/K``).

    >>> round(read_per_quantity("10 %/bar", "pressure").value, 15)
    1e-06
    """
    dim = DIMENSIONS.get(dimension)
    if dim is None:
        raise ValueError(f"unknown dimension {dimension!r}")
    per = {"pressure": "bar", "temperature": "K", "mass_flow": "(kg/h)",
           "pressure_rate": "(MPa/min)"}.get(dimension, dim.example)
    example = f'"10 %/{per}"' if per else '"0.1"'
    split = split_quantity(text) if isinstance(text, str) else None
    if split is None or not split[1].strip():
        raise UnitsError(f"cannot read {_quote(text)} as a value per {dim.noun[2:].strip()}: "
                         f"write a number and a unit, e.g. {example}")
    number, unit = split
    unit = unit.strip()
    if unit.startswith("/"):
        unit = "1" + unit
    expression = _pint_expression(unit.replace("%", "percent"), offset_ok=False)
    ureg = registry()
    try:
        units = ureg.parse_units(expression)
    except _PARSE_ERRORS as exc:
        raise UnitsError(f"unknown unit '{unit}' in {_quote(text)}; write e.g. {example}"
                         ) from exc
    target = 1 / ureg.parse_units(dim.si) if dim.si else ureg.dimensionless
    quantity = ureg.Quantity(number, units)
    if quantity.dimensionality != target.dimensionality:
        raise UnitsError(f"{_quote(text)} is not a value per {dim.noun[2:].strip()} "
                         f"({dim.symbol}); write e.g. {example}")
    return Reading(float(quantity.to(target).magnitude), unit, None,
                   f"per {dim.symbol}")


def _describe(quantity, number: float, unit: str) -> str:
    """Name the kind of quantity ``quantity`` is (``a mass``), or its dimension."""
    ureg = registry()
    for dim in DIMENSIONS.values():
        if dim.name in ("temperature_difference", "fraction"):
            continue
        target = ureg.parse_units(dim.si) if dim.si else ureg.dimensionless
        if quantity.dimensionality == target.dimensionality:
            return f"is {dim.noun}"
    return f"has the dimension {quantity.dimensionality}"


def _wrong_dimension_message(text, quantity, number, dim: Dimension, unit: str) -> str:
    what = _describe(quantity, number, unit)
    hint = ""
    if dim.name == "temperature" and unit.strip() in ("C", "F", "R"):
        hint = f'; write "{_number(number)} deg{unit.strip()}"'
    elif dim.example:
        hint = f' (e.g. "{_number(number)} {dim.example}")'
    return f"{_quote(text)} {what}, expected {dim.noun}{hint}"


_COMMON_UNITS = sorted({u.strip().split(" ")[0] for d in DIMENSIONS.values()
                        for u in d.units.split(",") if d.name not in _PLAIN}
                       | {"barg", "bara", "psig", "psia", "kPag", "MPag", "mbarg",
                          "kg/cm2g", "Nm3/h", "Sm3/h", "SCFM", "SCFH", "MMSCFD"})


def _unknown_unit_message(text: str, unit: str, dim: Dimension) -> str:
    close = difflib.get_close_matches(unit, _COMMON_UNITS, n=3, cutoff=0.6)
    suggestion = f"; did you mean {' or '.join(repr(c) for c in close)}?" if close else ""
    return (f"unknown unit '{unit}' in {_quote(text)}{suggestion} "
            f"(units for {dim.noun}: {dim.units})")


# --------------------------------------------------------- standard volumes


@dataclass(frozen=True)
class FlowBasis:
    """Reference conditions that turn a standard volume into an amount of gas.

    name        ``normal``, ``iso-standard``, ``us-standard`` or ``stated``
    pressure    [Pa]
    temperature [K]
    description where the conditions come from
    """

    name: str
    pressure: float
    temperature: float
    description: str = ""


STANDARD_BASES: dict[str, FlowBasis] = {b.name: b for b in (
    FlowBasis("normal", ATMOSPHERE, 273.15,
              "0 degC, 101.325 kPa (normal conditions, DIN 1343); units Nm3/h, Nm3/d, NL/min"),
    FlowBasis("iso-standard", ATMOSPHERE, 288.15,
              "15 degC, 101.325 kPa (ISO 13443 standard reference conditions); "
              "units Sm3/h, Sm3/d"),
    FlowBasis("us-standard", 14.696 * PSI, (60.0 + 459.67) * 5.0 / 9.0,
              "60 degF, 14.696 psia (US standard cubic foot); units SCFM, SCFH, SCFD, "
              "MSCFD, MMSCFD"),
)}

_TIME = {"s": 1.0, "sec": 1.0, "min": 60.0, "h": 3600.0, "hr": 3600.0, "d": 86400.0,
         "day": 86400.0}
_METRIC_STANDARD = re.compile(r"(?P<basis>[NS])(?P<volume>m3|m\^3|m³|L|l)\s*/\s*(?P<time>\w+)")
_US_STANDARD = {  # lower-case unit -> (cubic feet, time unit)
    "scfm": (1.0, "min"), "scfh": (1.0, "h"), "scfd": (1.0, "d"),
    "scf/min": (1.0, "min"), "scf/h": (1.0, "h"), "scf/d": (1.0, "d"),
    "mscfd": (1e3, "d"), "mscf/d": (1e3, "d"),
    "mmscfd": (1e6, "d"), "mmscf/d": (1e6, "d"),
}


def standard_flow_unit(unit: str) -> tuple[float, FlowBasis] | None:
    """For a standard-volume flow unit: ([m3/s] per unit, basis); else ``None``.

    >>> round(standard_flow_unit("SCFM")[0], 12)
    0.000471947443
    """
    unit = unit.strip()
    m = _METRIC_STANDARD.fullmatch(unit)
    if m and m.group("time") in _TIME:
        per = (1.0 if m.group("volume").lower().startswith("m") else 1e-3) / _TIME[m.group("time")]
        return per, STANDARD_BASES["normal" if m.group("basis") == "N" else "iso-standard"]
    us = _US_STANDARD.get(unit.lower())
    if us is not None:
        return us[0] * FOOT**3 / _TIME[us[1]], STANDARD_BASES["us-standard"]
    return None


def parse_standard_flow(text: str, basis: FlowBasis | None = None
                        ) -> tuple[float, str, float, float]:
    """Read a standard-volume flow and its basis.

    The unit may name its basis (``Nm3/h``: normal, ``Sm3/h``: ISO standard,
    ``SCFM``: US standard), or a plain volume-flow unit (``m3/h``, ``ft3/min``)
    is given together with an explicit ``basis``.

    Parameters
    ----------
    text : str
        e.g. ``"500 Nm3/h"``, ``"20 SCFM"``, ``"500 m3/h"`` (with ``basis``).
    basis : FlowBasis, optional
        required for a plain volume-flow unit; if the unit names a basis too,
        the two must agree.

    Returns
    -------
    (volume_flow [m3/s at the basis], basis name, basis pressure [Pa],
    basis temperature [K])

    Examples
    --------
    >>> q, basis, p, T = parse_standard_flow("1 SCFM")
    >>> round(q, 13), basis
    (0.0004719474432, 'us-standard')
    """
    if not isinstance(text, str):
        raise UnitsError(f"expected a standard-volume flow written as text such as "
                         f'"500 Nm3/h", got {text!r}')
    split = split_quantity(text)
    if split is None:
        raise UnitsError(f'cannot read "{text}" as a standard-volume flow: write e.g. "500 Nm3/h"')
    number, unit = split
    named = standard_flow_unit(unit)
    if named is not None:
        per, unit_basis = named
        if basis is not None and (basis.pressure, basis.temperature) != (
                unit_basis.pressure, unit_basis.temperature):
            raise UnitsError(f'"{text}" names the {unit_basis.name} basis but the basis '
                             f"given is {basis.name}; write the flow in m3/h or drop the basis")
        b = unit_basis
        value = number * per
    else:
        if basis is None:
            raise UnitsError(
                f'"{text}" has no basis: write a unit that names one (Nm3/h, Sm3/h, SCFM, '
                "MMSCFD) or state basis: normal | iso-standard | us-standard | "
                "{pressure: ..., temperature: ...}")
        value = parse_quantity(text, "volume_flow")
        b = basis
    return value, b.name, b.pressure, b.temperature


# --------------------------------------------------------------- atmosphere


def standard_atmosphere(altitude: float) -> float:
    """Pressure of the standard atmosphere at an altitude [Pa].

    p = 101325 * (1 - 2.25577e-5 * h) ** 5.25588

    the troposphere of the ICAO / ISO 2533 standard atmosphere (sea level
    288.15 K and 101 325 Pa, lapse rate 6.5 K/km; identical to the U.S.
    Standard Atmosphere 1976 below 11 km).

    Parameters
    ----------
    altitude : float
        [m] height above mean sea level (geopotential; below a few km it
        differs from the geometric height by less than 0.1 %), valid from
        -610 m to 11 000 m.

    Returns
    -------
    float
        [Pa]

    Reference: ISO 2533:1975 Standard Atmosphere; ICAO Doc 7488/3.

    >>> round(standard_atmosphere(1500.0))
    84556
    """
    if not -610.0 <= altitude <= 11000.0:
        raise UnitsError(f"altitude {altitude:g} m is outside the troposphere formula's "
                         "range (-610 m to 11 000 m); give the atmospheric pressure instead")
    return ATMOSPHERE * (1.0 - 2.25577e-5 * altitude) ** 5.25588


__all__ = [
    "ATMOSPHERE", "DIMENSIONS", "Dimension", "FlowBasis", "Reading", "STANDARD_BASES",
    "UnitsError", "parse_quantity", "parse_standard_flow", "read_per_quantity",
    "read_quantity", "registry",
    "split_quantity", "standard_atmosphere", "standard_flow_unit",
]
