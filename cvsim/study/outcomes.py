"""The figures of one run, flat and named, for sweep tables and requirements.

A sweep row and a target-seeking requirement both speak of a run's outcomes
by name: ``receiver.min_temperature``, ``vent.mass_passed``, ``end_time``,
``receiver.limit.depressure.margin``. This module lists those names for a
network (:func:`outcome_list`, known before any run), takes their values
from a :class:`~cvsim.result.Result` (:func:`outcome_values`, SI) and finds
a name a user typed (:func:`find_outcome`), suggesting close ones.

Names, for every vessel ``V``, link ``L`` and design-limit check ``K`` of a
vessel (see :attr:`cvsim.limits.LimitCheck.key`)::

    V.max_pressure  V.max_pressure_time  V.min_pressure  V.min_pressure_time
    V.max_temperature  V.max_temperature_time  V.min_temperature  V.min_temperature_time
    V.final_pressure  V.final_temperature  V.final_mass
    L.mass_passed  L.peak_flow  L.peak_flow_time
    end_time  limits_crossed
    V.limit.K.met  V.limit.K.limit  V.limit.K.actual  V.limit.K.margin
    V.rupture_time     (vessels whose limits state ``rupture``; NaN: no rupture)

The rupture check (``V.limit.rupture``) is dimensionless: its value is the highest
utilisation (stress over the allowed stress at the metal temperature), its limit 1
and its margin 1 less that utilisation.

A check shown for information only (the gas temperature beside the wall's metal
against the minimum design metal temperature, ``V.limit.min_metal_temperature.gas``)
has no ``.met``: it never counts in ``limits_crossed`` or as a requirement.
"""
from __future__ import annotations

import difflib
import math
import re
from dataclasses import dataclass


@dataclass(frozen=True)
class Outcome:
    """One named figure of a run.

    name        e.g. ``receiver.min_temperature``
    unit        SI unit of the value (``Pa``, ``K``, ``s``, ``kg``, ``kg/s``, ``""``)
    dimension   how a requirement's value is read (a :data:`cvsim.units.DIMENSIONS`
                key; ``temperature_difference`` for margins in K)
    text        what it is, in words (plot labels, the report)
    difference  a difference (a margin): shown in K or bar, not degC or bar a
    kind        ``figure``, ``limit-met``, ``limit-value``, ``limit-actual`` or
                ``limit-margin``
    """

    name: str
    unit: str
    dimension: str
    text: str
    difference: bool = False
    kind: str = "figure"


#: per vessel: (suffix, SI unit, dimension, words)
VESSEL_FIGURES = (
    ("max_pressure", "Pa", "pressure", "highest pressure in {}"),
    ("max_pressure_time", "s", "time", "time of the highest pressure in {}"),
    ("min_pressure", "Pa", "pressure", "lowest pressure in {}"),
    ("min_pressure_time", "s", "time", "time of the lowest pressure in {}"),
    ("max_temperature", "K", "temperature", "highest gas temperature in {}"),
    ("max_temperature_time", "s", "time", "time of the highest gas temperature in {}"),
    ("min_temperature", "K", "temperature", "lowest gas temperature in {}"),
    ("min_temperature_time", "s", "time", "time of the lowest gas temperature in {}"),
    ("final_pressure", "Pa", "pressure", "final pressure in {}"),
    ("final_temperature", "K", "temperature", "final gas temperature in {}"),
    ("final_mass", "kg", "mass", "final mass in {}"),
)
#: per link
LINK_FIGURES = (
    ("mass_passed", "kg", "mass", "mass passed through {}"),
    ("peak_flow", "kg/s", "mass_flow", "peak mass flow through {} (sign: direction)"),
    ("peak_flow_time", "s", "time", "time of the peak mass flow through {}"),
)
#: of the whole run
RUN_FIGURES = (
    ("end_time", "s", "time", "simulated time at the end of the run"),
    ("limits_crossed", "", "dimensionless", "number of design limits crossed"),
)
#: the scenario's ``limits:`` keys and the check keys they give before any run
LIMIT_FIELDS = (
    ("design_pressure", "design_pressure"),
    ("min_metal_temperature", "min_metal_temperature"),
    ("max_temperature", "max_temperature"),
    ("depressure_to", "depressure"),
    ("rupture", "rupture"),
)
_LIMIT_QUANTITY = {"Pa": "pressure", "K": "temperature", "s": "time"}
#: per vessel with a rupture screening (cvsim.rupture): the earliest time to rupture
RUPTURE_TIME = "rupture_time"


def limit_key(check) -> str:
    """The short name of a limit check (its ``key``; from its words if it has none)."""
    key = getattr(check, "key", "")
    return key or re.sub(r"[^a-z0-9]+", "_", check.name.lower()).strip("_")


def limit_outcomes(vessel: str, key: str, unit: str, words: str = "",
                   informative: bool = False) -> list[Outcome]:
    """The four outcomes of one limit check: met (1/0), the limit, the value
    reached, the margin. A check shown for information only
    (:attr:`cvsim.limits.LimitCheck.informative`) has no ``met``: it is never a
    requirement of ``--meet limits``."""
    base = f"{vessel}.limit.{key}"
    what = words or f"design limit '{key}' of {vessel}"
    dimension = _LIMIT_QUANTITY.get(unit, "dimensionless")
    diff_dimension = "temperature_difference" if unit == "K" else dimension
    met = [] if informative else [
        Outcome(f"{base}.met", "", "dimensionless", f"{what}: met (1) or crossed (0)",
                kind="limit-met")]
    return met + [
        Outcome(f"{base}.limit", unit, dimension, f"{what}: the limit", kind="limit-value"),
        Outcome(f"{base}.actual", unit, dimension,
                f"{what}: {'time taken' if unit == 's' else 'value reached'}",
                kind="limit-actual"),
        Outcome(f"{base}.margin", unit, diff_dimension,
                f"{what}: margin (positive when met)", difference=True, kind="limit-margin"),
    ]


def outcome_list(network) -> list[Outcome]:
    """Every outcome a run of ``network`` gives, in table order (limit checks
    as far as they are known before a run: one per stated limit)."""
    out = []
    for v in network.vessels:
        out += [Outcome(f"{v.name}.{s}", u, d, t.format(v.name)) for s, u, d, t in VESSEL_FIGURES]
    for k in network.links:
        out += [Outcome(f"{k.name}.{s}", u, d, t.format(k.name)) for s, u, d, t in LINK_FIGURES]
    out += [Outcome(s, u, d, t) for s, u, d, t in RUN_FIGURES]
    units = {"design_pressure": "Pa", "min_metal_temperature": "K", "max_temperature": "K",
             "depressure": "s", "rupture": ""}
    for v in network.vessels:
        if v.limits is None:
            continue
        if getattr(v.limits, "rupture", None) is not None:
            out.append(Outcome(f"{v.name}.{RUPTURE_TIME}", "s", "time",
                               f"earliest time to rupture of {v.name}'s wall (blank: none "
                               "in the run)"))
        for field, key in LIMIT_FIELDS:
            if getattr(v.limits, field, None) is not None:
                out += limit_outcomes(v.name, key, units[key])
    return out


def outcome_values(result) -> tuple[list[Outcome], dict]:
    """(outcomes, name -> SI value) of a run; limit checks as the run made them."""
    s = result.summary()
    values: dict[str, float] = {}
    outcomes = outcome_list(result.network)
    for v in result.network.vessels:
        d = s["vessels"].get(v.name, {})
        for q in ("pressure", "temperature"):
            unit = "Pa" if q == "pressure" else "K"
            for kind in ("max", "min"):
                values[f"{v.name}.{kind}_{q}"] = d.get(f"{kind}_{q}_{unit}", math.nan)
                values[f"{v.name}.{kind}_{q}_time"] = d.get(f"{kind}_{q}_time_s", math.nan)
        values[f"{v.name}.final_pressure"] = d.get("final_pressure_Pa", math.nan)
        values[f"{v.name}.final_temperature"] = d.get("final_temperature_K", math.nan)
        values[f"{v.name}.final_mass"] = d.get("final_mass_kg", math.nan)
        if getattr(v.limits, "rupture", None) is not None:
            t_rupture = d.get("rupture_time_s")
            values[f"{v.name}.{RUPTURE_TIME}"] = math.nan if t_rupture is None else t_rupture
    for k in result.network.links:
        d = s["links"].get(k.name)
        if d is None:
            values.update({f"{k.name}.{f[0]}": math.nan for f in LINK_FIGURES})
            continue
        hi, lo = d["max_mass_flow_kg_s"], d["min_mass_flow_kg_s"]
        peak_is_max = not abs(lo) > abs(hi)
        values[f"{k.name}.mass_passed"] = d["mass_passed_kg"]
        values[f"{k.name}.peak_flow"] = hi if peak_is_max else lo
        values[f"{k.name}.peak_flow_time"] = (d["max_mass_flow_time_s"] if peak_is_max
                                              else d["min_mass_flow_time_s"])
    values["end_time"] = s["end_time_s"]
    values["limits_crossed"] = float(len(result.limits_crossed))
    where = {o.name: i for i, o in enumerate(outcomes)}
    for c in result.limits:
        key = limit_key(c)
        for o in limit_outcomes(c.vessel, key, c.unit, c.name, c.informative):
            if o.name in where:  # the run's words for it ("depressured to ... within ...")
                outcomes[where[o.name]] = o
            else:
                where[o.name] = len(outcomes)
                outcomes.append(o)
        base = f"{c.vessel}.limit.{key}"
        if not c.informative:
            values[f"{base}.met"] = 1.0 if c.met else 0.0
        values[f"{base}.limit"] = c.limit
        values[f"{base}.actual"] = c.actual
        values[f"{base}.margin"] = c.margin
    return outcomes, {k: float(v) for k, v in values.items()}


def find_outcome(name: str, outcomes: list[Outcome], what: str = "outcome") -> Outcome:
    """The outcome called ``name``; a :class:`~cvsim.errors.StudyError` naming
    close matches otherwise."""
    from ..errors import StudyError
    for o in outcomes:
        if o.name == name:
            return o
    names = [o.name for o in outcomes]
    close = difflib.get_close_matches(name, names, n=3, cutoff=0.5)
    hint = f" Did you mean {' or '.join(repr(c) for c in close)}?" if close else ""
    listed = ", ".join(names[:14]) + (", ..." if len(names) > 14 else "")
    raise StudyError(f"unknown {what} '{name}'.{hint} Outcomes of this scenario: {listed} "
                     "(list them all with: cvsim outcomes SCENARIO).")


__all__ = ["Outcome", "find_outcome", "limit_key", "limit_outcomes", "outcome_list",
           "outcome_values"]
