"""What each link will pass at the start: gas, or liquid from a vessel that holds it.

A link passes liquid when it draws liquid from a vessel that starts with two
phases (``draws: liquid``, or an ``outlet_height`` whose band reaches up to the
starting level), when its upstream vessel starts liquid-full, or when a reservoir
at its end is a liquid. Every device kind says, through
:data:`~cvsim.scenario.registry.LIQUID_SERVICE`, whether it can model that
and with which equations; a device that cannot is a problem of the scenario,
named at the link with what to do, so that ``cvsim check`` refuses it before
any run. The echo records the equations of each link that passes liquid.

Only the initial states are known here: a vessel that becomes liquid-full or
two-phase during a run is handled by the devices at run time.
"""
from __future__ import annotations

from ..errors import CvsimError
from ..network import ControlValve, Line, Orifice
from ..outlets import BAND, drawn_by
from .registry import LIQUID_SERVICE

#: device kinds that pass reverse flow (from their ``to`` node)
REVERSIBLE = (Orifice, ControlValve, Line)


def node_phases(fluid_spec, vessels, reservoirs) -> dict[str, str]:
    """Phase of every node at time 0: ``liquid``, ``two-phase``, ``gas`` (gas, vapour or
    supercritical), from the vessels' initial states and the reservoirs' first values."""
    from ..engines import fluid_for
    if fluid_spec.model not in ("real", "mixture"):
        return {n.name: "gas" for n in (*vessels, *reservoirs)}
    fluid = fluid_for(fluid_spec)
    out = {}
    for v in vessels:
        f = v.initial.liquid_fraction
        if f is not None:
            out[v.name] = "two-phase" if f > 0.0 else "gas"
            continue
        out[v.name] = _phase(fluid, v.initial.pressure, v.initial.temperature)
    for r in reservoirs:
        supply = fluid
        if getattr(r, "composition", None) is not None:
            supply = fluid.engine.fluid(r.composition)
        out[r.name] = _phase(supply, r.pressure(0.0), r.temperature(0.0))
    return out


def _phase(fluid, p: float, T: float) -> str:
    try:
        st = fluid.state_pt(p, T)
    except CvsimError:
        return "gas"   # reported where the state itself is checked
    if st.phase == "liquid":
        return "liquid"
    # a mixture inside its phase envelope holds two phases at (p, T)
    return "two-phase" if fluid.model == "mixture" and st.two_phase else "gas"


def liquid_reasons(link, phases: dict[str, str], vessel_names,
                   fractions: dict | None = None) -> list[str]:
    """Why ``link`` passes liquid at the start (empty: it does not); ``fractions`` are
    the vessels' starting liquid shares of the volume (``None`` where not stated)."""
    out = []
    src, tgt = link.source, link.target
    draws = drawn_by(link)
    if phases.get(src) == "liquid":
        what = "vessel" if src in vessel_names else "reservoir"
        out.append(f"its 'from' {what} '{src}' holds liquid only")
    elif phases.get(src) == "two-phase" and draws == "liquid":
        out.append(f"it draws liquid from the two-phase vessel '{src}'")
    elif phases.get(src) == "two-phase" and draws != "vapour":
        f = (fractions or {}).get(src)
        if f is None or f > draws - 0.5 * BAND:
            out.append(f"the liquid level of the two-phase vessel '{src}' starts at or above "
                       "the band around its outlet_height" if f is not None else
                       f"its outlet_height may be below the liquid level of the two-phase "
                       f"vessel '{src}'")
    if isinstance(link.device, REVERSIBLE) and phases.get(tgt) == "liquid":
        what = "vessel" if tgt in vessel_names else "reservoir"
        out.append(f"reverse flow would come from the liquid in its 'to' {what} '{tgt}'")
    return out


def check_liquid_service(fluid_spec, vessels, reservoirs, links, link_at, ctx) -> None:
    """Record a problem for every link whose device cannot pass the liquid it will draw,
    and an echo row naming the equations of every link that passes liquid.

    ``link_at[name]`` is the link's :class:`~cvsim.scenario.spec.At` (key and line).
    """
    for link in links:
        if link.draws == "liquid" and fluid_spec.model == "ideal-gas":
            ctx.problem(link_at[link.name].child("draws", None),
                        "draws: liquid needs the real-fluid property model: an ideal gas has "
                        "no liquid (write properties: real, or draw vapour)")
    if fluid_spec.model not in ("real", "mixture"):
        return
    phases = node_phases(fluid_spec, vessels, reservoirs)
    names = {v.name for v in vessels}
    fractions = {v.name: v.initial.liquid_fraction for v in vessels}
    for link in links:
        reasons = liquid_reasons(link, phases, names, fractions)
        check = LIQUID_SERVICE.get(type(link.device))
        if not reasons or check is None:
            continue
        problem, model = check(link.device)
        if fluid_spec.model == "mixture" and not problem:
            problem, model = _mixture_liquid(link.device, model)
        at = link_at[link.name]
        why = "; ".join(reasons)
        if problem:
            ctx.problem(at, f"link '{link.name}' passes liquid ({why}), which its device "
                        f"cannot model: {problem}")
        else:
            ctx.record(at.child("liquid_service", None), "(from the initial states)", model,
                       "", why)


def _mixture_liquid(device, model: str) -> tuple[str, str]:
    """A mixture's liquid passes orifices only (the homogeneous equilibrium nozzle on
    the liquid's own composition); the liquid forms of the valve equations need a pure
    fluid's vapour pressure and are refused."""
    if isinstance(device, Orifice) and device.flow_model == "real-gas":
        if device.expansion == "frozen":
            return "", ("frozen-composition nozzle: the liquid incompressible, no flashing "
                        "(homogeneous frozen model)")
        return "", ("homogeneous equilibrium nozzle on the mixture's equation of state "
                    "(the liquid phase's own composition)")
    return ("the liquid of a mixture passes only an orifice with flow_model: real-gas in "
            "this version (the valve equations for liquid need a pure fluid's vapour "
            "pressure); draw vapour, or use an orifice", model)


__all__ = ["REVERSIBLE", "check_liquid_service", "liquid_reasons", "node_phases"]
