"""What each vessel holds: phase, liquid share and liquid level.

* columns of the histories: ``<vessel>.liquid_fraction`` [-] (share of the volume taken
  by liquid, from the fluid's state) for every vessel and ``<vessel>.liquid_level`` [m]
  (height of the liquid above the inside bottom) for vessels given by their shape;
* the initial contents (phase, density, liquid share, mass, level), for ``cvsim check``
  and the summary, computed from the initial state without a run;
* figures of a run: the highest and lowest level with their times, the time a vessel
  became liquid-full, and the warning that goes with it.

A vessel is liquid-full when its contents are single-phase liquid (liquid share 1):
heated or filled further it has no vapour space to take up the liquid's expansion, and
its pressure rises by (dp/dT) at constant density - tens of bar per kelvin for
liquids far from their critical point (isochoric thermal pressure coefficient,
alpha_p / kappa_T; e.g. Poling, Prausnitz & O'Connell, *The Properties of Gases and
Liquids*, 5th ed., ch. 4). This is how liquid-full vessels and pipes burst.
"""
from __future__ import annotations

import math

from .heat.level import tank
from .network import Geometry, Vessel

#: the vessel is taken as liquid-full where the recorded liquid share reaches this
LIQUID_FULL = 1.0
#: [K] step of the difference for (dp/dT) at constant density
DPDT_STEP = 0.05


def has_level(geometry: Geometry) -> bool:
    """A liquid level can be given: the vessel is given by its shape, not its volume."""
    return geometry.kind in ("cylinder", "sphere")


def _tank(geometry: Geometry):
    return tank(geometry.kind, geometry.inner_diameter, geometry.length or 0.0,
                geometry.heads, geometry.orientation)


def liquid_level(geometry: Geometry, liquid_fraction: float) -> float:
    """Height [m] of the liquid above the vessel's inside bottom for a share
    ``liquid_fraction`` [-] of the volume taken by liquid (NaN for a vessel given by
    its volume only).

    The inverse of the volume below a height (:mod:`cvsim.heat.level`), warm-started from
    the last level found for the same shape.
    """
    if not has_level(geometry):
        return math.nan
    t = _tank(geometry)
    return t.level(liquid_fraction * t.volume)


def inside_height(geometry: Geometry) -> float:
    """Inside height [m] of a vessel given by its shape (NaN for one given by its volume)."""
    return _tank(geometry).height if has_level(geometry) else math.nan


def share_below(geometry: Geometry, height: float) -> float:
    """Share [-] of the volume of a vessel given by its shape that lies below ``height``
    [m] above its inside bottom (the liquid share at which the level stands there)."""
    t = _tank(geometry)
    return min(max(t.volume_below(height) / t.volume, 0.0), 1.0)


def columns(vessel: Vessel) -> list[tuple[str, str, str]]:
    """The history columns of a vessel's contents: (name, SI unit, kind)."""
    out = [(f"{vessel.name}.liquid_fraction", "-", "vessel")]
    if has_level(vessel.geometry):
        out.append((f"{vessel.name}.liquid_level", "m", "vessel"))
    return out


def values(vessel: Vessel, state) -> list[float]:
    """The values of :func:`columns` for the vessel's state."""
    lf = state.liquid_fraction
    if has_level(vessel.geometry):
        return [lf, liquid_level(vessel.geometry, lf)]
    return [lf]


# ------------------------------------------------------------------ initial contents


def hydraulic_pressure_rise(fluid, rho: float, T: float) -> float:
    """(dp/dT) at constant density [Pa/K] of a liquid state: the pressure rise per kelvin
    of a liquid-full rigid vessel. One-sided second-order difference towards higher
    temperature (a liquid-full state cooled at constant density may enter two phases):
    (-3 p(T) + 4 p(T + dT) - p(T + 2 dT))/(2 dT), dT = :data:`DPDT_STEP`. NaN where the
    fluid's equation of state does not reach."""
    from .errors import CvsimError
    try:
        p0, p1, p2 = (fluid.state_dt(rho, T + k * DPDT_STEP).p for k in (0, 1, 2))
    except CvsimError:
        return math.nan
    return (-3.0 * p0 + 4.0 * p1 - p2) / (2.0 * DPDT_STEP)


def describe_state(fluid, vessel: Vessel, state) -> dict:
    """Phase, density, liquid share, mass and level of a vessel's contents (SI)."""
    d = {"phase": state.phase, "pressure_Pa": state.p, "temperature_K": state.T,
         "density_kg_m3": state.rho, "liquid_fraction": state.liquid_fraction,
         "mass_kg": state.rho * vessel.volume}
    if has_level(vessel.geometry):
        d["liquid_level_m"] = liquid_level(vessel.geometry, state.liquid_fraction)
    if state.liquid_fraction >= LIQUID_FULL:
        d["pressure_rise_Pa_per_K"] = hydraulic_pressure_rise(fluid, state.rho, state.T)
    return d


def initial_contents(model) -> dict[str, dict]:
    """Each vessel's initial contents (see :func:`describe_state`), from the model's
    initial states (no run)."""
    states = model.initial_states()
    return {v.name: describe_state(model.fluid, v, st)
            for v, st in zip(model.network.vessels, states)}


def liquid_full_warning(vessel: str, t: float, rho: float, rise: float) -> str:
    """The warning for a vessel that is liquid-full from time ``t`` [s]."""
    when = "starts liquid-full" if t <= 0.0 else f"is liquid-full from t = {t:.4g} s"
    rate = (f" (about {rise / 1e5:.3g} bar per K at constant volume here)"
            if rise == rise else "")
    return (f"vessel '{vessel}' {when} (liquid at {rho:.4g} kg/m3, no vapour space): "
            "heated or filled further, a liquid-full vessel rises steeply in pressure by "
            f"hydraulic expansion{rate} - this is how vessels burst. Keep a vapour space, "
            "or protect the vessel against thermal expansion (relief sized for liquid).")


def share_text(phase: str, liquid_fraction: float, level: float | None = None) -> str:
    """The liquid share in words: ``no liquid``, ``liquid 60 % of the volume (level
    1.21 m)``, ``liquid-full``, or ``no liquid level (supercritical)``."""
    if phase == "supercritical":
        return "no liquid level (above the critical point)"
    if liquid_fraction <= 0.0:
        return "no liquid"
    if liquid_fraction >= LIQUID_FULL:
        return "liquid-full (100 % of the volume)"
    text = f"liquid {100.0 * liquid_fraction:.3g} % of the volume"
    if level is not None and level == level:
        text += f" (level {level:.4g} m)"
    return text


def contents_line(d: dict) -> str:
    """One line for a vessel's contents from :func:`describe_state`, e.g. ``two-phase,
    307.3 kg/m3, liquid 60 % of the volume (level 1.154 m), 9009.5 kg at 8.365 bar a,
    20.0 degC``."""
    share = share_text(d["phase"], d["liquid_fraction"], d.get("liquid_level_m"))
    return (f"{d['phase']}, {d['density_kg_m3']:.4g} kg/m3, {share}, {d['mass_kg']:.5g} kg "
            f"at {d['pressure_Pa'] / 1e5:.4g} bar a, {d['temperature_K'] - 273.15:.1f} degC")


def initial_text(model) -> list[str]:
    """Lines for ``cvsim check``: each vessel's initial contents (of the
    :class:`~cvsim.model.Model` ``model``) and, for a vessel that starts liquid-full,
    the warning."""
    contents = initial_contents(model)
    lines = ["Initial contents (from the initial state, no run):"]
    warnings = []
    w = max(len(n) for n in contents)
    for name, d in contents.items():
        lines.append(f"  {name:<{w}}  {contents_line(d)}")
        if d["liquid_fraction"] >= LIQUID_FULL:
            warnings.append(liquid_full_warning(name, 0.0, d["density_kg_m3"],
                                                d.get("pressure_rise_Pa_per_K", math.nan)))
    lines += [f"  WARNING: {w_}" for w_ in warnings]
    return lines


# ------------------------------------------------------------------ a run's figures


def run_figures(model, result) -> tuple[dict, list[str]]:
    """Per vessel: initial contents, extremes of the level (or liquid share) with their
    times when the vessel ever holds liquid, and the time it became liquid-full; and the
    warnings (liquid-full vessels)."""
    out: dict[str, dict] = {}
    warnings: list[str] = []
    from .errors import CvsimError
    try:
        initial = initial_contents(model)
    except CvsimError:  # a run that failed at its start: no initial contents to show
        initial = {}
    if not len(result.data):
        return out, warnings
    t = result.fine("time")
    for v in model.network.vessels:
        n = v.name
        d = {f"initial_{k}": val for k, val in initial.get(n, {}).items()
             if k in ("phase", "density_kg_m3", "liquid_fraction", "liquid_level_m",
                      "mass_kg")}
        lf = result.fine(f"{n}.liquid_fraction")
        if (lf > 0.0).any():
            column, key, unit = ((f"{n}.liquid_level", "liquid_level", "_m")
                                 if has_level(v.geometry) else
                                 (f"{n}.liquid_fraction", "liquid_fraction", ""))
            for kind in ("max", "min"):
                value, when = result.extreme(column, kind)
                d[f"{kind}_{key}{unit}"] = value
                d[f"{kind}_{key}_time_s"] = when
        full = lf >= LIQUID_FULL
        if full.any():
            k = int(full.argmax())
            rho = float(result.fine(f"{n}.density")[k])
            T = float(result.fine(f"{n}.temperature")[k])
            d["liquid_full_from_s"] = float(t[k])
            after = ~full[k:]
            if after.any():
                d["liquid_full_until_s"] = float(t[k + int(after.argmax())])
            fluid = model.fluid
            if model.mix is not None:   # a mixture: the vessel's composition at that time
                import numpy as np
                z = np.array([result.fine(f"{n}.mole_fraction.{c}")[k]
                              for c in model.mix.names])
                fluid = model.mix.engine.view(z / z.sum())
            rise = hydraulic_pressure_rise(fluid, rho, T)
            d["liquid_full_pressure_rise_Pa_per_K"] = rise
            warnings.append(liquid_full_warning(n, float(t[k]), rho, rise))
        out[n] = d
    return out, warnings


def summary_lines(d: dict, time_text) -> list[str]:
    """Lines of the text summary for one vessel's figures from :func:`run_figures`
    (merged into the summary's vessel entry); ``time_text`` formats a time [s]."""
    out = []
    if "initial_phase" in d:
        share = share_text(d["initial_phase"], d["initial_liquid_fraction"],
                           d.get("initial_liquid_level_m"))
        out.append(f"  initially   {d['initial_phase']}, {d['initial_density_kg_m3']:.4g} "
                   f"kg/m3, {share}, {d['initial_mass_kg']:.5g} kg")
    for key, unit, label, fmt in (
            ("liquid_level", "_m", "liquid level", lambda v: f"{v:.4g} m"),
            ("liquid_fraction", "", "liquid share", lambda v: f"{100.0 * v:.3g} % of the volume")):
        if f"max_{key}{unit}" in d:
            out.append(f"  {label:<11} max {fmt(d[f'max_{key}{unit}'])} at "
                       f"{time_text(d[f'max_{key}_time_s'])}; min {fmt(d[f'min_{key}{unit}'])} "
                       f"at {time_text(d[f'min_{key}_time_s'])}")
    from .zones import summary_lines as zone_lines
    out += zone_lines(d, time_text)
    if "liquid_full_from_s" in d:
        until = d.get("liquid_full_until_s")
        out.append(f"  LIQUID-FULL from {time_text(d['liquid_full_from_s'])}"
                   + (f" until {time_text(until)}" if until is not None else "")
                   + " (see the warnings)")
    return out


__all__ = ["columns", "contents_line", "describe_state", "has_level",
           "hydraulic_pressure_rise", "initial_contents", "initial_text", "liquid_level",
           "run_figures", "share_text", "summary_lines", "values"]
