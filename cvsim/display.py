"""How numbers are shown to a person: engineering units, times, plain JSON.

One home for the formatting every output shares (summary text, CSV files, plots,
the HTML reports, study tables), so that they all say the same thing in the same
units and no output module reaches into another's helpers.

Units shown: pressures in bar a (with bar g beside them where a person reads
them), temperatures in degC, energies in kJ, powers in kW. Each run has one time
unit and one mass-flow unit (:class:`RunUnits`), chosen from the run's length and
its largest flow, and every output of the run states times and flows in them.
Pure functions of numbers: no cvsim imports beyond the standard library and numpy
(for :func:`jsonable`'s numpy scalars, duck-typed).
"""
from __future__ import annotations

import math
from dataclasses import dataclass

#: SI unit -> (engineering unit shown, function SI -> shown)
DISPLAY = {
    "Pa": ("bar a", lambda v: v / 1e5),
    "K": ("degC", lambda v: v - 273.15),
    "J/kg": ("kJ/kg", lambda v: v / 1e3),
    "J/(kg K)": ("kJ/(kg K)", lambda v: v / 1e3),
    "W": ("kW", lambda v: v / 1e3),
    "J": ("kJ", lambda v: v / 1e3),
    "N/m2": ("MPa", lambda v: v / 1e6),  # stresses (cvsim.rupture)
}

# (unit, seconds per unit, use above this run length [s])
TIME_UNITS = (("h", 3600.0, 3 * 3600.0), ("min", 60.0, 600.0), ("s", 1.0, -math.inf))
# (unit, kg/s per unit, use at or above this peak flow [kg/s]); the smallest flows
# are shown in kg/h, the unit that gives them the largest numbers of the three
FLOW_UNITS = (("kg/s", 1.0, 1.0), ("g/s", 1e-3, 1e-3), ("kg/h", 1 / 3600.0, -math.inf))


def display(unit: str):
    """(shown unit, converter) for an SI unit; identity for the others."""
    return DISPLAY.get(unit, (unit, lambda v: v))


def time_unit(t_end: float) -> tuple[str, float]:
    """Time unit for a run of length ``t_end`` [s]: (name, seconds per unit).

    Longer than 3 h: hours; longer than 600 s: minutes; otherwise seconds.

    >>> time_unit(172.0), time_unit(1800.0), time_unit(4 * 3600.0)
    (('s', 1.0), ('min', 60.0), ('h', 3600.0))
    """
    for name, size, above in TIME_UNITS:
        if t_end > above:
            return name, size
    return TIME_UNITS[-1][:2]


def flow_unit(peak: float) -> tuple[str, float]:
    """Mass-flow unit for flows whose largest magnitude is ``peak`` [kg/s]:
    (name, kg/s per unit).

    At least 1 kg/s: kg/s; at least 1 g/s: g/s; below: kg/h.

    >>> flow_unit(25.0), flow_unit(0.1), flow_unit(2e-4)
    (('kg/s', 1.0), ('g/s', 0.001), ('kg/h', 0.0002777777777777778))
    """
    for name, size, at_least in FLOW_UNITS:
        if peak >= at_least:
            return name, size
    return FLOW_UNITS[-1][:2]


@dataclass(frozen=True)
class RunUnits:
    """The time and mass-flow units of one run, shared by all its outputs.

    time, time_size  unit name and seconds per unit (:func:`time_unit` of the run's end)
    flow, flow_size  unit name and kg/s per unit (:func:`flow_unit` of its largest flow)
    """

    time: str = "s"
    time_size: float = 1.0
    flow: str = "kg/s"
    flow_size: float = 1.0

    @classmethod
    def of(cls, t_end: float, peak_flow: float) -> "RunUnits":
        t, ts = time_unit(t_end)
        f, fs = flow_unit(peak_flow)
        return cls(t, ts, f, fs)

    def t(self, seconds: float) -> str:
        """A time in the run's unit (``-`` when not finite)."""
        if not math.isfinite(seconds):
            return "-"
        return f"{seconds / self.time_size:.4g} {self.time}"

    def flow_text(self, kg_s: float) -> str:
        """A mass flow in the run's unit."""
        return f"{kg_s / self.flow_size:.4g} {self.flow}"


def run_units(result) -> RunUnits:
    """The :class:`RunUnits` of a result (its last recorded time, its largest flow
    through any link over every step)."""
    import numpy as np
    n = len(result.data)
    t_end = float(result.time[-1]) if n else result.network.run.end_time
    peak = 0.0
    if n:
        for link in result.network.links:
            col = result.fine(f"{link.name}.mass_flow")
            col = np.abs(col[np.isfinite(col)])
            if col.size:
                peak = max(peak, float(col.max()))
    return RunUnits.of(t_end, peak)


def bar(p: float, atm: float) -> str:
    """``151 bar a (150 bar g)``."""
    return f"{p / 1e5:.4g} bar a ({(p - atm) / 1e5:.4g} bar g)"


def barg(p: float, atm: float) -> str:
    """``150 bar g``."""
    return f"{(p - atm) / 1e5:.4g} bar g"


def degc(T: float) -> str:
    """``-153.7 degC``."""
    return f"{T - 273.15:.1f} degC"


def duration(t: float) -> str:
    """A time [s] in s, min or h by its own size (``-`` when not finite); for times
    that stand alone (a wall-clock time, a limit); times of a run use
    :meth:`RunUnits.t`."""
    if not math.isfinite(t):
        return "-"
    if t < 600:
        return f"{t:.4g} s"
    if t < 3 * 3600:
        return f"{t / 60:.4g} min"
    return f"{t / 3600:.4g} h"


def limit_value(value: float, unit: str, atm: float, t=duration) -> str:
    """A limit's value or the value reached, for tables: gauge pressures, degC, times."""
    if value != value:
        return "-"
    if unit == "Pa":
        return f"{(value - atm) / 1e5:.4g} bar g"
    if unit == "K":
        return f"{value - 273.15:.1f} degC"
    if unit == "s":
        return t(value)
    return f"{value:.4g} {unit}".rstrip()


def margin(value: float, unit: str, units: RunUnits | None = None) -> str:
    """A margin (a difference): bar, K, and times in s or the run's ``units``."""
    if value != value:
        return "-"
    if unit == "Pa":
        return f"{value / 1e5:+.3g} bar"
    if unit == "K":
        return f"{value:+.1f} K"
    if unit == "s":
        if units is not None:
            return f"{value / units.time_size:+.4g} {units.time}"
        return f"{value:+.4g} s"
    return f"{value:+.4g} {unit}".rstrip()


#: SI unit of an echoed input -> (shown unit, SI -> shown, digits) for "values as used"
INPUT_UNITS = {
    "Pa": ("bar a", lambda v: v / 1e5),
    "K": ("degC", lambda v: v - 273.15),
    "m": ("mm", lambda v: v * 1e3),
    "m2": ("mm2", lambda v: v * 1e6),
    "m3": ("m3", lambda v: v),
    "kg/s": ("kg/h", lambda v: v * 3600.0),
    "W": ("kW", lambda v: v / 1e3),
    "J/kg": ("kJ/kg", lambda v: v / 1e3),
    "kg/mol": ("g/mol", lambda v: v * 1e3),
    "J/(kg K)": ("kJ/(kg K)", lambda v: v / 1e3),
}
#: kind of an echoed input (:attr:`cvsim.scenario.spec.EchoRow.kind`) -> (shown unit,
#: SI -> shown), where the SI unit alone would mislead: a stress or a pressure
#: difference is in Pa like a pressure, but has no absolute or gauge value
INPUT_KINDS = {
    "stress": ("MPa", lambda v: v / 1e6),
    "pressure_difference": ("bar", lambda v: v / 1e5),
}
#: lengths at least this [m] are shown in m rather than mm; areas at least
#: SQUARE_METRES_FROM [m2] in m2 rather than mm2 (a vessel's area, not an orifice's)
METRES_FROM = 1.0
SQUARE_METRES_FROM = 0.01


def engineering(value, unit: str, atm: float | None = None, kind: str = "") -> str:
    """An input value used (SI) as an engineer reads it: bar a (and bar g when the
    gauge reference ``atm`` [Pa] is given), degC, mm (m from 1 m), mm2, kg/h, kW,
    g/mol; a stress in MPa and a pressure difference in bar when ``kind`` says so
    (:data:`INPUT_KINDS`); other units and words as they are.

    >>> engineering(1.51013e7, "Pa", 101325.0)
    '151.013 bar a (150 bar g)'
    >>> engineering(4.85e8, "Pa", 101325.0, kind="stress")
    '485 MPa'
    >>> engineering(0.01, "m"), engineering(1.13, "m"), engineering(288.15, "K")
    ('10 mm', '1.13 m', '15 degC')
    """
    if not isinstance(value, (int, float)) or isinstance(value, bool):
        return "" if value is None else str(value)
    if not math.isfinite(value):
        return f"{value} {unit}".strip()
    if kind in INPUT_KINDS:
        shown, conv = INPUT_KINDS[kind]
        return f"{conv(value):.6g} {shown}"
    if unit == "m" and abs(value) >= METRES_FROM:
        return f"{value:.6g} m"
    if unit == "m2" and abs(value) >= SQUARE_METRES_FROM:
        return f"{value:.6g} m2"
    if unit in INPUT_UNITS:
        shown, conv = INPUT_UNITS[unit]
        text = f"{conv(value):.6g} {shown}"
        if unit == "Pa" and atm is not None:
            text += f" ({(value - atm) / 1e5:.6g} bar g)"
        return text
    return f"{value:.6g} {unit}".strip() if unit not in ("", "-") else f"{value:.6g}"


def jsonable(obj):
    """``obj`` as plain JSON data: dict keys as text, tuples as lists, NaN and
    infinities as ``None``, numpy scalars as Python numbers."""
    if isinstance(obj, dict):
        return {str(k): jsonable(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [jsonable(v) for v in obj]
    if isinstance(obj, float):
        return obj if math.isfinite(obj) else None
    if hasattr(obj, "item"):  # numpy scalars
        return jsonable(obj.item())
    return obj


__all__ = ["DISPLAY", "INPUT_KINDS", "RunUnits", "bar", "barg", "degc", "display", "duration",
           "engineering", "flow_unit", "jsonable", "limit_value", "margin", "run_units",
           "time_unit"]
