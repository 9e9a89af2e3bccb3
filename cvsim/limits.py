"""Design-limit checks: pressure with allowed accumulation, metal and gas temperatures,
depressuring target.

Pure functions on SI numbers and arrays. Each check gives a :class:`LimitCheck`:
the limit, the extreme reached and when, met or crossed, the margin, and the
governing practice named, so the summary and report can list it beside the
caution that every result carries.
"""
from __future__ import annotations

from dataclasses import asdict, dataclass

import numpy as np

from .units import PSI

#: Allowed accumulation above MAWP as a fraction of the MAWP (gauge), and the
#: smallest allowed overpressure [Pa] for low design pressures.
#: Source: ASME BPVC Section VIII Div. 1, UG-125(c) (10 % or 3 psi for a single device,
#: 16 % or 4 psi for several devices, 21 % for fire); API 520 Part I, sec. 4 (table of
#: accumulation). Values from memory; the percentages are also listed in
#: shared/references.md from a relief-valve engineering handbook citing API.
ACCUMULATION = {
    "single-device": (0.10, 3.0 * PSI),
    "multiple-devices": (0.16, 4.0 * PSI),
    "fire": (0.21, 0.0),
}
ACCUMULATION_SOURCE = "ASME VIII-1 UG-125(c); API 520 Part I (allowed accumulation)"

#: Depressuring guideline: to 690 kPa gauge (100 psig) or 50 % of the design gauge
#: pressure, whichever is lower, in about 15 min from the start of depressuring, for
#: vessels with walls about 25 mm (1 in) thick or more; thinner walls heat faster in a
#: fire and need faster depressuring (API 521, vapour depressuring; from memory and
#: secondary sources: common practice, no primary source at hand).
GUIDELINE_GAUGE = 690e3
GUIDELINE_FRACTION = 0.5
GUIDELINE_TIME = 15 * 60.0
#: [m] the wall thickness the guideline is meant for (about 25 mm, 1 in)
GUIDELINE_WALL = 0.025
GUIDELINE_SOURCE = ("API 521 depressuring guideline for vessels with walls about 25 mm "
                    "(1 in) thick or more: 690 kPa g or 50 % of design pressure, whichever "
                    "is lower, within about 15 min from the start of depressuring; thinner "
                    "walls need faster depressuring (common practice)")
MDMT_SOURCE = "ASME VIII-1 UG-20 / UCS-66 (minimum design metal temperature)"
#: the minimum design metal temperature is a limit on the metal (ASME VIII-1 UCS-66
#: rates the material and thickness): with a wall modelled the gas temperature is
#: shown for information only; without one the gas stands in for the metal
MDMT_GAS_WITH_WALL = ("for information only: the minimum design metal temperature is a "
                      "limit on the metal (ASME VIII-1 UCS-66), checked on the wall above; "
                      "the gas next to it is colder in a blowdown")
MDMT_GAS_STAND_IN = ("checked on the gas temperature because no wall is modelled: a "
                     "conservative stand-in for the metal, which a wall keeps warmer in a "
                     "blowdown (model the wall to check the metal itself)")


def allowed_pressure(design_pressure: float, atmosphere: float, accumulation: float,
                     min_overpressure: float = 0.0) -> float:
    """Highest allowed pressure [Pa, absolute] during relief.

        p_allowed = p_atm + p_design,g + max(a * p_design,g, dp_min)

    Parameters
    ----------
    design_pressure : MAWP [Pa, absolute]
    atmosphere : local atmospheric pressure [Pa]
    accumulation : allowed accumulation as a fraction of the design gauge pressure [-]
    min_overpressure : smallest allowed overpressure [Pa] (3 psi single device)

    >>> round(allowed_pressure(10e5 + 101325, 101325, 0.10) - 101325)  # 10 bar g + 10 %
    1100000
    """
    gauge = design_pressure - atmosphere
    return atmosphere + gauge + max(accumulation * gauge, min_overpressure)


def guideline_target(design_pressure: float, atmosphere: float) -> float:
    """Depressuring target of the API 521 guideline [Pa, absolute]:
    690 kPa gauge or half the design gauge pressure, whichever is lower.

    >>> round(guideline_target(20e5 + 101325, 101325) - 101325)  # 20 bar g design
    690000
    >>> round(guideline_target(10e5 + 101325, 101325) - 101325)  # 10 bar g design
    500000
    """
    return atmosphere + min(GUIDELINE_GAUGE, GUIDELINE_FRACTION * (design_pressure - atmosphere))


@dataclass(frozen=True)
class LimitCheck:
    """One design limit against the run.

    quantity  what is limited (``pressure``, ``temperature``, ``time``)
    limit     the limit [SI]; ``actual`` the extreme reached [SI] at ``time`` [s]
    margin    [SI] positive when met (how far from the limit), negative when crossed
    key       short name of the check, stable from run to run, for tables and
              requirements: the ``limits:`` key it comes from (``design_pressure``,
              ``min_metal_temperature``, ``max_temperature``, ``depressure``), with
              ``.gas`` or the wall's column name added where one key gives several
              checks (``min_metal_temperature.gas``, ``max_temperature.wall``: one per wall)
    informative  shown for information only: never met or crossed, never counted
              (the gas temperature against the minimum design metal temperature when
              the wall's metal is checked); ``met`` then says only which side it is on
    """

    vessel: str
    name: str
    quantity: str
    limit: float
    actual: float
    time: float
    met: bool
    margin: float
    unit: str
    practice: str
    note: str = ""
    key: str = ""
    informative: bool = False

    @property
    def crossed(self) -> bool:
        """A limit that counts and is not met."""
        return not self.met and not self.informative

    @property
    def state(self) -> str:
        """``met``, ``CROSSED`` or ``information`` (for tables)."""
        if self.informative:
            return "information"
        return "met" if self.met else "CROSSED"

    def as_dict(self) -> dict:
        return {**asdict(self), "state": self.state}


def _extreme(t, values, kind):
    values = np.asarray(values, dtype=float)
    if values.size == 0 or np.all(np.isnan(values)):
        return float("nan"), float("nan")
    i = int(np.nanargmax(values) if kind == "max" else np.nanargmin(values))
    return float(values[i]), float(t[i])


#: a history reaches a target when it comes within this fraction of it. The one
#: tolerance of every "reached" verdict - stop conditions in the summary's targets,
#: depressuring limits, sweep outcomes - so that a run the solver stopped on a
#: target always counts as having reached it: the solver places a stop on its
#: target to the accuracy of the property flash (about 1e-9 relative), well inside.
REACHED_RTOL = 1e-6


def depressuring_start(t, pressure, t_reach: float) -> float:
    """Start of depressuring [s]: where the pressure's last uninterrupted fall before
    ``t_reach`` began (the last pressure peak before the target is reached).

        t_start = t_j,  j the smallest index with p_j > p_{j+1} > ... > p_reach

    Parameters
    ----------
    t : times [s] of the solver's accepted steps (increasing; repeated times dropped)
    pressure : pressures [Pa] at those times
    t_reach : time [s] the target is first reached (NaN: not reached; then the end)

    A vessel that sits at constant pressure until a valve opens starts at the
    opening; one heated by a fire until then, at the peak the valve turns; a run that
    depressures from its first instant, at 0. A pressure that rises again during the
    depressuring (another source filling the vessel) restarts the count, so state
    the start (``depressure: {from: ...}``) where that is not what is meant.
    Definition: API 521 times the guideline from the start of depressuring.
    """
    t = np.asarray(t, dtype=float)
    p = np.asarray(pressure, dtype=float)
    if t.size == 0:
        return 0.0
    keep = np.concatenate([t[1:] != t[:-1], [True]])  # the last value at a repeated time
    t, p = t[keep], p[keep]
    end = t_reach if t_reach == t_reach else t[-1]
    j = int(np.searchsorted(t, end, side="right")) - 1
    j = max(j, 0)
    while j > 0 and p[j - 1] > p[j]:
        j -= 1
    return float(t[j])


def first_time_at_or_below(t, values, target: float) -> float:
    """First time [s] a history reaches ``target`` from above, to within
    :data:`REACHED_RTOL` (linear between points); NaN if never."""
    t = np.asarray(t, dtype=float)
    v = np.asarray(values, dtype=float)
    below = np.nonzero(v <= target + REACHED_RTOL * abs(target))[0]
    if below.size == 0:
        return float("nan")
    i = int(below[0])
    if i == 0:
        return float(t[0])
    t0, t1, v0, v1 = t[i - 1], t[i], v[i - 1], v[i]
    if v1 >= target or v0 == v1:
        return float(t1)
    return float(t0 + (t1 - t0) * (v0 - target) / (v0 - v1))


def _where(column: str) -> str:
    """``inner_temperature`` -> ``the inside surface``; ``node3_temperature`` ->
    ``node 3``; ``unwetted.outer_temperature`` -> ``the outside surface of the unwetted
    part``."""
    *part, last = column.removesuffix("_temperature").split(".")
    what = {"inner": "the inside surface", "outer": "the outside surface"}.get(
        last, f"node {last[4:]}" if last.startswith("node") and last[4:].isdigit() else last)
    return what + (f" of the {' '.join(part)} part" if part else "")


def check_vessel(name: str, limits, atmosphere: float, t, pressure, gas_temperature,
                 wall_temperatures: dict | None = None, end_time: float | None = None,
                 steps: tuple | None = None, wall_thickness: float | None = None
                 ) -> list[LimitCheck]:
    """All limit checks of one vessel from its histories (SI arrays on times ``t``).

    ``wall_temperatures`` maps a wall column name to its history. The minimum
    design metal temperature is a metal temperature (ASME VIII-1 UCS-66): with a
    wall modelled it is checked on the wall's coldest node, and the gas's lowest
    temperature is added as an informative check (never counted as crossed);
    without a wall the gas temperature stands in for the metal (in a blowdown the
    gas is colder than the wall, so this is conservative) and the check's note says
    so.

    The depressuring time counts from the start of depressuring: the stated
    ``depressure_start``, else :func:`depressuring_start` on ``steps`` (times and
    pressures of the solver's accepted steps; default: ``t`` and ``pressure``). The
    guideline's note says when its basis (walls about 25 mm or thicker) is not met by
    ``wall_thickness`` [m] (``None``: no wall modelled).
    """
    out: list[LimitCheck] = []
    t = np.asarray(t, dtype=float)
    walls = wall_temperatures or {}
    if limits is None:
        return out
    if limits.design_pressure is not None:
        acc = limits.accumulation if limits.accumulation is not None else 0.10
        dp_min = ACCUMULATION.get(limits.accumulation_case, (acc, 0.0))[1]
        p_allow = allowed_pressure(limits.design_pressure, atmosphere, acc, dp_min)
        p_max, t_max = _extreme(t, pressure, "max")
        out.append(LimitCheck(
            name, f"peak pressure within design pressure + {acc * 100:.0f} % accumulation "
            f"({limits.accumulation_case})", "pressure", p_allow, p_max, t_max,
            bool(p_max <= p_allow), p_allow - p_max, "Pa", ACCUMULATION_SOURCE,
            f"design pressure {(limits.design_pressure - atmosphere) / 1e5:.6g} bar g",
            key="design_pressure"))
    if limits.min_metal_temperature is not None:
        if walls:
            mins = [(_extreme(t, v, "min"), k) for k, v in walls.items()]
            (T_min, t_min), col = min(mins, key=lambda m: m[0][0])
            note = f"checked on the wall temperature ({col})"
            # a wall split at the liquid level: one check over both parts, at the
            # coldest column of either, and the part it is in named
            label, _, rest = col.removeprefix(name + ".").partition(".")
            if rest.split(".")[0] in ("wetted", "unwetted"):
                note = (f"checked on the wall temperature ({col}: {_where(rest)}, the colder "
                        f"of the {label}'s wetted and unwetted parts)")
        else:
            T_min, t_min = _extreme(t, gas_temperature, "min")
            note = MDMT_GAS_STAND_IN
        out.append(LimitCheck(
            name, "lowest metal temperature above the minimum design metal temperature",
            "temperature", limits.min_metal_temperature, T_min, t_min,
            bool(T_min >= limits.min_metal_temperature), T_min - limits.min_metal_temperature,
            "K", MDMT_SOURCE, note, key="min_metal_temperature"))
        # a wall split at the liquid level: each part's own lowest metal temperature and
        # margin, for information (the verdict is the check above, on the colder part)
        parts: dict[tuple[str, str], list] = {}
        for column, values in walls.items():
            label, _, rest = column.removeprefix(name + ".").partition(".")
            part = rest.split(".")[0]
            if part in ("wetted", "unwetted"):
                parts.setdefault((label, part), []).append((_extreme(t, values, "min"),
                                                            column))
        for (label, part), found in sorted(parts.items(),
                                           key=lambda kv: (kv[0][0], kv[0][1] != "wetted")):
            (T_p, t_p), col = min(found, key=lambda m: m[0][0])
            out.append(LimitCheck(
                name, f"lowest metal temperature of the {part} part of the {label} against "
                "the minimum design metal temperature", "temperature",
                limits.min_metal_temperature, T_p, t_p,
                bool(T_p >= limits.min_metal_temperature),
                T_p - limits.min_metal_temperature, "K", MDMT_SOURCE,
                f"each part of a wall split at the liquid level, for information: the "
                f"verdict is the wall's check, on the colder part; lowest at "
                f"{_where(col.removeprefix(name + '.' + label + '.'))}",
                key=f"min_metal_temperature.{label}.{part}", informative=True))
        if walls:
            Tg, tg = _extreme(t, gas_temperature, "min")
            out.append(LimitCheck(
                name, "lowest gas temperature against the minimum design metal temperature",
                "temperature", limits.min_metal_temperature, Tg, tg,
                bool(Tg >= limits.min_metal_temperature), Tg - limits.min_metal_temperature,
                "K", MDMT_SOURCE, MDMT_GAS_WITH_WALL, key="min_metal_temperature.gas",
                informative=True))
    if limits.max_temperature is not None:
        # one check for the gas and one per wall: a wall's highest temperature over all
        # its columns (surfaces and nodes), with the column where it occurs
        series = {"gas": [("gas", gas_temperature)]}
        for column, values in walls.items():
            wall = column.removeprefix(name + ".").split(".")[0]
            series.setdefault(wall, []).append((column, values))
        for label, columns in series.items():
            found = [(*_extreme(t, v, "max"), c) for c, v in columns]
            found = [f for f in found if f[0] == f[0]] or found
            T_max, t_max, column = max(found, key=lambda f: f[0] if f[0] == f[0] else -1e300)
            where = "" if label == "gas" else (
                f"highest at {_where(column.removeprefix(name + '.' + label + '.'))}")
            out.append(LimitCheck(
                name, f"highest {label} temperature below the allowed maximum",
                "temperature", limits.max_temperature, T_max, t_max,
                bool(T_max <= limits.max_temperature), limits.max_temperature - T_max, "K",
                "design limit stated in the scenario (e.g. 85 degC for hydrogen vehicle "
                "cylinders, SAE J2601)", where,
                key="max_temperature" if label == "gas" else f"max_temperature.{label}"))
    if limits.depressure_to is not None and limits.depressure_within is not None:
        t_reach = first_time_at_or_below(t, pressure, limits.depressure_to)
        reached = t_reach == t_reach
        start = getattr(limits, "depressure_start", None)
        if start is None:
            ts, ps = steps if steps is not None else (t, pressure)
            if len(ts) and len(t) and ts[0] > t[0]:  # the steps start after the first record
                ts = np.concatenate([[t[0]], ts])
                ps = np.concatenate([[np.asarray(pressure)[0]], ps])
            start = depressuring_start(ts, ps, t_reach)
            how = "the last pressure peak before the target"
        else:
            how = "stated"
        taken = t_reach - start if reached else float("nan")
        met = bool(reached and taken <= limits.depressure_within)
        guideline = "guideline" in limits.depressure_basis
        notes = [] if guideline else [limits.depressure_basis]
        notes.append(f"timed from the start of depressuring, t = {start:.6g} s ({how})")
        if guideline and (wall_thickness is None or wall_thickness < 0.98 * GUIDELINE_WALL):
            notes.append(
                "no wall modelled: the guideline is meant for walls about 25 mm or thicker"
                if wall_thickness is None else
                f"the wall is {wall_thickness * 1e3:.3g} mm, thinner than the about 25 mm "
                "the guideline is meant for: a thinner wall heats faster in a fire and "
                "needs faster depressuring (API 521); state a target of your own")
        if not reached:
            p_end = float(np.asarray(pressure)[-1])
            notes.append(f"not reached by the end of the run (t = {t[-1]:.6g} s, "
                         f"{(p_end - atmosphere) / 1e5:.4g} bar g)")
        out.append(LimitCheck(
            name, f"depressured to {(limits.depressure_to - atmosphere) / 1e5:.4g} bar g "
            f"within {limits.depressure_within / 60:.4g} min", "time",
            limits.depressure_within, taken, t_reach if reached else float("nan"), met,
            limits.depressure_within - taken if reached else float("nan"), "s",
            GUIDELINE_SOURCE if guideline else
            "depressuring target stated in the scenario (API 521 practice)",
            "; ".join(n for n in notes if n), key="depressure"))
    return out
