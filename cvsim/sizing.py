"""Relief-valve sizing: required area by API 520 Part I, next API 526 letter, and a
confirming simulation with the chosen valve.

The relief load is stated (a mass flow), taken from a blocked outlet (the largest
forced inflow into the protected vessel), or taken from a heat input such as a fire
(converted to the mass that must leave to hold the relieving pressure, see
:func:`heat_relief_load`). The required area follows from the API 520 gas equations
at relieving conditions (set pressure plus the allowed overpressure); the next API 526
letter is chosen; then the scenario is run again with that valve and its peak pressure
is compared with the allowed accumulation. A screening check: see the caution.
"""
from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass, field

from .errors import CvsimError
from .flow.relief import (API526_AREAS_IN2, INCH, api520_area, api520_mass_flow,
                          compressibility_factor, critical_pressure_ratio)
from .limits import ACCUMULATION, allowed_pressure
from .network import FixedFlow, Network, ReliefValve


class SizingError(CvsimError, ValueError):
    """The sizing request does not fit the scenario (no such valve, no load, ...)."""


def next_api526_letter(area: float) -> tuple[str, float] | None:
    """Smallest API 526 letter whose effective area [m2] is at least ``area`` [m2];
    ``None`` when even T (26 in2) is too small (use several valves).

    >>> next_api526_letter(3699e-6)   # API 520 Part I Example 1: 5.73 in2 -> P (6.38 in2)
    ('P', 0.00411612...)
    """
    for letter, a_in2 in API526_AREAS_IN2.items():
        a = a_in2 * INCH * INCH
        if a >= area * (1.0 - 1e-12):
            return letter, a
    return None


def heat_relief_load(Q: float, p: float, rho: float, du_drho_p: float) -> float:
    """Mass flow [kg/s] that must leave a rigid vessel to hold its pressure while heat
    ``Q`` [W] enters its contents (the stream leaving with the contents' enthalpy).

        W = Q / (p/rho - rho (du/drho)_p)

    Derivation: at constant p and V, U = rho V u and m = rho V give
    V (u + rho (du/drho)_p) drho = Q dt + h V drho with h = u + p/rho, so
    -V drho/dt = Q / (p/rho - rho (du/drho)_p). For a perfect gas
    rho (du/drho)_p = -cv T and W = Q/(cp T) (first law of a control volume,
    e.g. Cengel & Boles, *Thermodynamics: An Engineering Approach*, ch. 5).

    Parameters
    ----------
    Q : heat rate into the contents [W]
    p : relieving pressure [Pa]; rho : density at relieving conditions [kg/m3]
    du_drho_p : (du/drho) at constant pressure [J m3/kg2]
    """
    return Q / (p / rho - rho * du_drho_p)


def du_drho_at_p(fluid, p: float, T: float, dT: float = 0.01) -> float:
    """(du/drho) at constant pressure [J m3/kg2] by central differences in T."""
    a = fluid.state_pt(p, T + dT)
    b = fluid.state_pt(p, T - dT)
    return (a.u - b.u) / (a.rho - b.rho)


@dataclass
class ReliefSizing:
    """What :func:`size_relief` found (SI). ``confirm`` is the confirming Result."""

    link: str
    vessel: str
    load: float                    # [kg/s]
    load_basis: str
    relieving_pressure: float      # [Pa a]
    relieving_temperature: float   # [K]
    back_pressure: float           # [Pa a]
    Z: float
    k: float
    molar_mass: float
    kd: float
    kb: float
    kc: float
    critical: bool
    required_area: float           # [m2]
    letter: str | None
    letter_area: float | None      # [m2]
    allowed_pressure: float        # [Pa a]
    accumulation_basis: str
    confirm: object = None         # Result of the run with the chosen valve
    peak_pressure: float = math.nan
    peak_time: float = math.nan
    notes: list = field(default_factory=list)

    @property
    def met(self) -> bool:
        return bool(self.peak_pressure <= self.allowed_pressure)

    def as_dict(self) -> dict:
        d = {f.name: getattr(self, f.name) for f in dataclasses.fields(self)
             if f.name != "confirm"}
        d["met"] = self.met
        return d


def _find_valve(network: Network, link_name: str):
    for link in network.links:
        if link.name == link_name:
            if not isinstance(link.device, ReliefValve):
                raise SizingError(f"link '{link_name}' is a {type(link.device).__name__}, not a "
                                  "relief valve; name the relief-valve link with --valve")
            return link
    valves = [k.name for k in network.links if isinstance(k.device, ReliefValve)]
    raise SizingError(f"no link '{link_name}' in the scenario (relief valves: "
                      f"{', '.join(valves) or 'none'})")


def blocked_outlet_load(network: Network, vessel: str) -> float:
    """Largest total forced inflow [kg/s] into ``vessel`` (its fixed-flow links)."""
    total = 0.0
    for link in network.links:
        if isinstance(link.device, FixedFlow) and link.target == vessel:
            total += link.device.mass_flow.extremes()[1]
    return total


def fire_heat_input(network: Network, vessel: str) -> tuple[float, str]:
    """API 521 pool-fire heat input [W] on ``vessel`` from its fire heat term, on the
    wetted area at the initial liquid level (:func:`cvsim.heat.fire.pool_fire_area`), and
    a description of it."""
    from .heat.definitions import PoolFire
    from .heat.fire import api521_pool_fire_heat, pool_fire_area
    for v in network.vessels:
        if v.name != vessel:
            continue
        for term in v.heat:
            fire = getattr(term, "fire", None)
            if isinstance(fire, PoolFire):
                share = v.initial.liquid_fraction
                A = fire.area if share is None else pool_fire_area(fire, share)[0]
                Q = api521_pool_fire_heat(A, fire.environment_factor, fire.drainage)
                where = (" wetted at the initial liquid level" if A != fire.area else "")
                return Q, (f"API 521 pool fire: A = {A:.4g} m2{where}, F = "
                           f"{fire.environment_factor:g}, "
                           + ("with" if fire.drainage else "without")
                           + " prompt fire-fighting and drainage")
    raise SizingError(f"vessel '{vessel}' has no pool fire in its heat terms (heat: wall: "
                      "outside: fire, or heat: fire); state the load or the heat input "
                      "instead")


def size_relief(network: Network, link_name: str, *, load: float | None = None,
                heat: float | None = None, blocked_outlet: bool = False, fire: bool = False,
                relieving_temperature: float | None = None, confirm: bool = True,
                scenario=None) -> ReliefSizing:
    """Size the relief valve on link ``link_name`` for one relief load.

    Give exactly one of ``load`` [kg/s], ``heat`` [W] (converted by
    :func:`heat_relief_load` at relieving conditions), ``fire=True`` (the API 521
    pool-fire heat input of the vessel's fire term, converted the same way) or
    ``blocked_outlet=True``.
    Relieving pressure: set pressure plus the allowed accumulation of the protected
    vessel's limits (default: single device, 10 %); relieving temperature: stated,
    else the vessel's initial temperature; back pressure: the highest pressure of
    the node the valve discharges into.
    """
    from .fluid import make_fluid
    from .api import run_network
    if sum((load is not None, heat is not None, bool(blocked_outlet), bool(fire))) != 1:
        raise SizingError("give exactly one relief load: a mass flow, a heat input, a fire, "
                          "or the blocked-outlet inflow")
    link = _find_valve(network, link_name)
    dev: ReliefValve = link.device
    vessels = {v.name: v for v in network.vessels}
    if link.source not in vessels:
        raise SizingError(f"relief valve '{link_name}' protects '{link.source}', which is not "
                          "a vessel")
    vessel = vessels[link.source]
    atm = network.atmosphere
    lim = vessel.limits
    if lim is not None and lim.accumulation is not None:
        acc, case = lim.accumulation, lim.accumulation_case
    else:
        acc, case = ACCUMULATION["single-device"][0], "single-device"
    dp_min = ACCUMULATION.get(case, (acc, 0.0))[1]
    set_g = dev.set_pressure - atm
    p1 = atm + set_g + max(acc * set_g, dp_min)
    design = lim.design_pressure if (lim is not None and lim.design_pressure) else None
    p_allowed = allowed_pressure(design if design else dev.set_pressure, atm, acc, dp_min)
    acc_basis = (f"{acc * 100:.0f} % accumulation ({case}) above the "
                 + ("design pressure" if design else "set pressure (no design pressure "
                                                       "stated)"))
    T1 = relieving_temperature if relieving_temperature else vessel.initial.temperature
    f = network.fluid
    fluid = make_fluid(f.name, f.model, f.molar_mass, f.cp, f.cp_temperature)
    st = fluid.state_pt(p1, T1)
    Z = compressibility_factor(st.p, st.rho, st.T, fluid.molar_mass)
    k = fluid.ideal_gas_gamma(st.rho, st.T)
    notes = []
    if load is not None:
        W, basis = load, "stated relief load"
    elif heat is not None or fire:
        what = f"heat input {heat / 1e3:.4g} kW" if heat is not None else ""
        if fire:
            heat, what = fire_heat_input(network, vessel.name)
            what += f", {heat / 1e3:.4g} kW"
            notes.append("all the fire's heat is taken to reach the gas (no wall heat "
                         "capacity): conservative for the load; the confirming run keeps "
                         "the wall if one is modelled")
        W = heat_relief_load(heat, st.p, st.rho, du_drho_at_p(fluid, p1, T1))
        basis = f"{what} converted to the mass that must leave to hold the relieving pressure"
    else:
        W = blocked_outlet_load(network, vessel.name)
        if W <= 0.0:
            raise SizingError(f"no forced inflow (fixed-flow link) into '{vessel.name}': "
                              "state the load instead")
        basis = "blocked outlet: largest forced inflow into the vessel"
    p2 = max((r.pressure.extremes()[1] for r in network.reservoirs if r.name == link.target),
             default=atm)
    if link.target in vessels:
        p2 = vessels[link.target].initial.pressure
        notes.append("the valve discharges into a vessel: its initial pressure is taken as "
                     "the back pressure")
    A = api520_area(W, p1, p2, T1, Z, fluid.molar_mass, k, dev.kd, dev.kb, dev.kc)
    critical = p2 / p1 <= critical_pressure_ratio(k)
    pick = next_api526_letter(A)
    out = ReliefSizing(link=link_name, vessel=vessel.name, load=W, load_basis=basis,
                       relieving_pressure=p1, relieving_temperature=T1, back_pressure=p2,
                       Z=Z, k=k, molar_mass=fluid.molar_mass, kd=dev.kd, kb=dev.kb, kc=dev.kc,
                       critical=critical, required_area=A,
                       letter=pick[0] if pick else None, letter_area=pick[1] if pick else None,
                       allowed_pressure=p_allowed, accumulation_basis=acc_basis, notes=notes)
    if pick is None:
        notes.append("the required area exceeds the largest API 526 letter (T, 26 in2): "
                     "several valves or a larger special valve are needed; no confirming "
                     "run made")
        return out
    if confirm:
        new_dev = dataclasses.replace(dev, area=pick[1])
        links = tuple(dataclasses.replace(k_, device=new_dev) if k_.name == link_name else k_
                      for k_ in network.links)
        result = run_network(dataclasses.replace(network, links=links), scenario)
        out.confirm = result
        out.peak_pressure, out.peak_time = result.extreme(f"{vessel.name}.pressure", "max")
        if not result.ok:
            notes.append(f"the confirming run failed: {result.message}")
    return out


def sizing_text(s: ReliefSizing, atmosphere: float) -> str:
    """The sizing as text for the screen and relief-sizing.txt."""
    from .result import CAUTION

    def g(p):
        return f"{(p - atmosphere) / 1e5:.4g} bar g"
    L = [f"Relief valve '{s.link}' protecting '{s.vessel}' (API 520 Part I, gas)",
         f"  relief load        {s.load * 3600:.6g} kg/h ({s.load_basis})",
         f"  relieving pressure {g(s.relieving_pressure)} (set + allowed overpressure), "
         f"temperature {s.relieving_temperature - 273.15:.1f} degC",
         f"  back pressure      {g(s.back_pressure)} ({'critical' if s.critical else 'subcritical'}"
         " flow)",
         f"  Z = {s.Z:.4f}, k = {s.k:.4f}, M = {s.molar_mass * 1e3:.4f} g/mol, Kd = {s.kd}, "
         f"Kb = {s.kb}, Kc = {s.kc}",
         f"  required effective area {s.required_area * 1e6:.5g} mm2 "
         f"({s.required_area / (INCH * INCH):.4g} in2)"]
    if s.letter:
        L.append(f"  API 526 letter     {s.letter} ({s.letter_area * 1e6:.5g} mm2, "
                 f"{s.letter_area / (INCH * INCH):.4g} in2)")
    if s.confirm is not None:
        verdict = "within" if s.met else "ABOVE"
        L.append(f"  confirming run     peak pressure {g(s.peak_pressure)} at "
                 f"{s.peak_time:.4g} s: {verdict} the allowed {g(s.allowed_pressure)} "
                 f"({s.accumulation_basis})")
    L += [f"  note: {n}" for n in s.notes]
    L.append("")
    L.append("CAUTION: " + CAUTION)
    return "\n".join(L) + "\n"
