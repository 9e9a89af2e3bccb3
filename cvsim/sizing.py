"""Relief-valve sizing: required area by API 520 Part I, next API 526 letter, and a
confirming simulation with the chosen valve.

Relieving conditions: P1 = MAWP + the allowed accumulation of the protected vessel
(:func:`cvsim.relief_loads.relieving_pressure`), the set pressure checked against the
highest the codes allow for the relief case. A vessel that holds liquid relieves at
T_sat(P1): its contents heated at constant density to P1 (two-phase, or liquid-full
when the liquid fills the vessel first); a gas-filled vessel at the stated, else its
initial, temperature (a fire: the gas heated at constant density to P1).

The relief load is stated (a mass flow), taken from a blocked outlet (the largest
forced inflow into the protected vessel), or taken from a heat input such as a fire:

* boiling liquid: the vapour made, Q / latent heat (API 521) beside the exact
  constant-pressure first law (:func:`cvsim.relief_loads.vapour_generation_load`);
* single phase (gas, liquid-full, supercritical): the mass that must leave to hold
  the pressure (:func:`heat_relief_load`);
* fire on a gas-filled vessel: API 521's unwetted-vessel method
  (:func:`cvsim.relief_loads.api521_unwetted_load`).

The area follows from what the valve passes at relieving conditions: gas or vapour by
the API 520 gas equations; liquid that does not flash by the API 520 liquid equation
(with Kw and the viscosity correction Kv); flashing liquid by the homogeneous-equilibrium
flux and the API 520 Annex C omega method, the smaller flux sizing the valve. The next
API 526 letter is chosen; then the scenario is run again with that valve and its peak
pressure is compared with P1. A screening check: see the caution.
"""
from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass, field

from .errors import CvsimError
from .flow.liquid import LiquidProperties, passes_liquid
from .flow.relief import (API526_AREAS_IN2, INCH, api520_area, api520_c, api520_liquid_area,
                          api520_reynolds, api520_viscosity_correction, compressibility_factor,
                          critical_pressure_ratio, throat_void_fraction,
                          two_phase_discharge_coefficient)
from .fluid import root_on_bracket
from .limits import ACCUMULATION
from .units import PSI
from .network import FixedFlow, Network, ReliefValve
from .outlets import drawn_by
from .relief_loads import (WALL_TEMPERATURE_CARBON_STEEL, api521_unwetted_factor,
                           api521_unwetted_load, latent_heat_load, max_set_pressure,
                           relieving_pressure, vapour_generation_load)


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
    """What :func:`size_relief` found (SI). ``confirm`` is the confirming Result.

    ``service`` is what the valve passes at relieving conditions: ``gas`` (gas or
    vapour of a gas-filled vessel, or supercritical fluid), ``vapour`` (saturated vapour
    of a vessel holding liquid), ``liquid`` (liquid that does not flash) or
    ``flashing`` (liquid that flashes in the valve). ``loads`` and ``areas`` hold
    every candidate computed, ``[kg/s]`` and ``[m2]``, by name; ``sized_by`` says
    which one sized the valve and why; ``coefficients`` the factors used.
    """

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
    service: str = "gas"
    method: str = ""
    relieving_basis: str = ""
    mawp: float = math.nan         # [Pa a]
    set_pressure: float = math.nan  # [Pa a]
    max_set_pressure: float = math.nan  # [Pa a]
    density: float = math.nan      # [kg/m3] of the stream at relieving conditions
    loads: dict = field(default_factory=dict)
    areas: dict = field(default_factory=dict)
    coefficients: dict = field(default_factory=dict)
    sized_by: list = field(default_factory=list)
    confirm: object = None         # Result of the run with the chosen valve
    peak_pressure: float = math.nan
    peak_time: float = math.nan
    notes: list = field(default_factory=list)
    scenario_area: float = math.nan  # [m2] the valve's area in the scenario as read

    @property
    def met(self) -> bool:
        return bool(self.peak_pressure <= self.allowed_pressure)

    def changes(self) -> list:
        """The values the confirming run uses in place of the scenario's: the chosen
        API 526 letter and its effective area (:class:`cvsim.changes.Change`)."""
        from .changes import Change
        if self.letter is None or self.confirm is None:
            return []
        if math.isclose(self.letter_area, self.scenario_area, rel_tol=1e-9):
            return []  # the scenario's valve is the one chosen
        why = "cvsim relief: the API 526 letter sized for the relief load"
        return [Change(f"links.{self.link}.orifice_letter", self.letter, "", why),
                Change(f"links.{self.link}.area", float(self.letter_area), "m2",
                       f"{why} (its effective area)", derived=True)]

    def as_dict(self) -> dict:
        from .result import CAUTION
        d = {f.name: getattr(self, f.name) for f in dataclasses.fields(self)
             if f.name != "confirm"}
        d["met"] = self.met
        d["caution"] = CAUTION
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


def _fire_exposure(network: Network, vessel: str):
    """The vessel's API 521 pool fire (its exposed area and environment factor)."""
    from .heat.definitions import PoolFire
    for v in network.vessels:
        if v.name == vessel:
            for term in v.heat:
                fire = getattr(term, "fire", None)
                if isinstance(fire, PoolFire):
                    return fire
    raise SizingError(f"vessel '{vessel}' has no pool fire in its heat terms (heat: wall: "
                      "outside: fire, or heat: fire); state the load or the heat input "
                      "instead")


def heated_at_constant_density(fluid, rho: float, p: float, T_start: float):
    """State of density ``rho`` [kg/m3] at pressure ``p`` [Pa]: the contents of a rigid
    vessel heated to p from the temperature ``T_start`` [K] (p rises with T at constant
    density). Converged on the residual |p(rho, T) - p| <= 1e-10 p."""
    def f(T):
        return fluid.state_dt(rho, T).p - p

    lo, hi = T_start, min(fluid.t_max, max(2.0 * T_start, T_start + 100.0))
    f_lo, f_hi = f(lo), f(hi)
    while f_hi < 0.0 and hi < fluid.t_max:
        lo, f_lo = hi, f_hi
        hi = min(fluid.t_max, 1.5 * hi)
        f_hi = f(hi)
    if f_lo > 0.0 or f_hi < 0.0:
        raise SizingError(f"the contents (density {rho:.6g} kg/m3) do not reach the relieving "
                          f"pressure {p / 1e5:.6g} bar a between {T_start:.6g} K and the "
                          f"highest temperature of the equation of state ({fluid.t_max:.6g} K)")
    return fluid.state_dt(rho, root_on_bracket(f, lo, hi, f_lo, f_hi, 1e-10 * p))


def _letter_for_liquid(A0: float, W: float, rho: float, mu: float | None):
    """API 520 Part I liquid sizing with the viscosity correction: start from the area at
    Kv = 1, take the next API 526 letter, Kv from the Reynolds number at that letter's
    area, A = A0 / Kv; if A exceeds the letter, the next letter (the standard's
    procedure, Example 5). Returns (A, Kv, Re, letter pick)."""
    if mu is None:
        return A0, 1.0, math.nan, next_api526_letter(A0)
    area = A0
    while True:
        pick = next_api526_letter(area)
        if pick is None:
            Re = api520_reynolds(W, rho, mu, A0)
            kv = api520_viscosity_correction(Re)
            return A0 / kv, kv, Re, next_api526_letter(A0 / kv)
        Re = api520_reynolds(W, rho, mu, pick[1])
        kv = api520_viscosity_correction(Re)
        if A0 / kv <= pick[1] * (1.0 + 1e-12):
            return A0 / kv, kv, Re, pick
        area = pick[1] * (1.0 + 1e-9)


def _g(p: float, atm: float) -> str:
    return f"{(p - atm) / 1e5:.4g} bar g"


def size_relief(network: Network, link_name: str, *, load: float | None = None,
                heat: float | None = None, blocked_outlet: bool = False, fire: bool = False,
                relieving_temperature: float | None = None,
                wall_temperature: float | None = None, confirm: bool = True,
                scenario=None) -> ReliefSizing:
    """Size the relief valve on link ``link_name`` for one relief load.

    Give exactly one of ``load`` [kg/s], ``heat`` [W], ``fire=True`` (the vessel's
    API 521 pool fire: its wetted heat input for a vessel holding liquid, the
    unwetted-vessel method for a gas-filled one) or ``blocked_outlet=True``.

    Relieving pressure P1 = MAWP (the vessel's design pressure, else the set pressure)
    plus the allowed accumulation of its limits (default single device: 10 % or 3 psi);
    a set pressure above what the relief case allows is refused. Relieving temperature:
    T_sat(P1) for a vessel holding liquid (``relieving_temperature`` is then refused);
    for a gas-filled vessel the stated value, else its initial temperature (a fire: the
    gas heated at constant density to P1). ``wall_temperature`` [K]: the unwetted fire
    method's wall temperature (default 593 degC, carbon steel). Back pressure: the
    highest pressure of the node the valve discharges into.
    """
    from .api import run_network
    from .engines import fluid_for
    from .model import Model
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
    notes: list[str] = []

    # -- relieving pressure: MAWP + accumulation; set pressure within the case's limit
    lim = vessel.limits
    if lim is not None and lim.accumulation is not None:
        acc, case = lim.accumulation, lim.accumulation_case
    else:
        acc, case = ACCUMULATION["single-device"][0], "single-device"
    dp_min = ACCUMULATION.get(case, (acc, 0.0))[1]
    if lim is not None and lim.design_pressure:
        mawp, mawp_text = lim.design_pressure, "design pressure (MAWP)"
    else:
        mawp, mawp_text = dev.set_pressure, "set pressure (no design pressure stated)"
        notes.append("no design pressure stated for the vessel: its MAWP is taken equal to "
                     "the set pressure")
    p_set_max, rule = max_set_pressure(mawp, atm, case)
    if dev.set_pressure > p_set_max * (1.0 + 1e-12):
        raise SizingError(
            f"relief valve '{link_name}' is set at {_g(dev.set_pressure, atm)}, above the "
            f"{_g(p_set_max, atm)} allowed for the '{case}' case with the MAWP of "
            f"'{vessel.name}' at {_g(mawp, atm)}: {rule}. Lower the set pressure, or state "
            "the relief case under the vessel's limits: accumulation (multiple-devices, "
            "fire)")
    p1 = relieving_pressure(mawp, atm, acc, dp_min)
    acc_text = (f"{acc * 100:.0f} % accumulation ({case}"
                + (f", at least {dp_min / PSI:.0f} psi" if dp_min else "")
                + f") above the {mawp_text}")

    # -- the contents at relieving conditions and what the valve passes
    fluid = fluid_for(network.fluid)
    init = Model(network).initial_states()[list(vessels).index(vessel.name)]
    holds_liquid = passes_liquid(init)
    mixture = fluid.model == "mixture"
    if mixture and holds_liquid:
        raise SizingError(
            f"vessel '{vessel.name}' holds liquid of the {fluid.name} mixture at the start: "
            "relief sizing of a boiling or flashing mixture is not built in this version "
            "(the vapour a boiling mixture makes shifts its composition; API 520 Part I "
            "Annex C needs a two-phase model of the mixture). Size it with a tool that "
            "models the mixture's two-phase relief, or check a chosen valve with 'cvsim run'.")
    unwetted_fire = fire and not holds_liquid
    if holds_liquid:
        if relieving_temperature is not None:
            raise SizingError(
                f"vessel '{vessel.name}' holds liquid: its relieving temperature is the "
                f"saturation temperature at P1 = {_g(p1, atm)}, found from the contents; "
                "drop the stated relieving temperature")
        if init.p >= p1:
            raise SizingError(f"vessel '{vessel.name}' starts at {_g(init.p, atm)}, at or "
                              f"above the relieving pressure {_g(p1, atm)}")
        heated = heat is not None or fire
        if init.phase == "liquid" and not init.two_phase and not heated:
            contents = fluid.state_pt(p1, init.T)   # pumped up, not heated
        else:
            contents = heated_at_constant_density(fluid, init.rho, p1, init.T)
        if contents.two_phase:
            rel_text = (f"T_sat(P1) = {contents.T - 273.15:.1f} degC: the contents heated at "
                        f"constant density to P1 boil, {contents.liquid_fraction * 100:.0f} % "
                        "liquid by volume")
        elif contents.phase == "liquid" and not heated:
            rel_text = "liquid-full vessel at its initial temperature"
        elif contents.phase == "liquid":
            full = "is liquid-full" if init.phase == "liquid" and not init.two_phase else \
                "fills with liquid before P1"
            rel_text = (f"the vessel {full}: the liquid heated at constant density reaches "
                        f"P1 at {contents.T - 273.15:.1f} degC (hydraulic expansion)")
            notes.append(f"vessel '{vessel.name}' {full}: the valve relieves liquid "
                         "(thermal expansion); a vessel blocked in full of liquid can burst "
                         "from heat alone")
        else:
            rel_text = (f"P1 is above the critical pressure: the contents are supercritical "
                        f"at {contents.T - 273.15:.1f} degC (no latent heat)")
    elif unwetted_fire and relieving_temperature is None:
        contents = heated_at_constant_density(fluid, init.rho, p1, init.T)
        rel_text = ("the gas heated at constant density from its initial state to P1 "
                    "(API 521 unwetted-vessel method)")
    else:
        T1 = relieving_temperature if relieving_temperature else init.T
        contents = fluid.state_pt(p1, T1)
        rel_text = ("stated relieving temperature" if relieving_temperature
                    else "the vessel's initial temperature")
    if mixture and (contents.two_phase or contents.phase == "liquid"):
        raise SizingError(
            f"at relieving conditions ({_g(p1, atm)}, {contents.T - 273.15:.1f} degC) the "
            f"{fluid.name} mixture in '{vessel.name}' holds liquid: relief sizing of a "
            "two-phase mixture is not built in this version. State a relieving temperature "
            "above its dew point if the gas is relieved, or check a chosen valve with "
            "'cvsim run'.")
    if contents.two_phase:
        liq, vap = fluid.saturated_liquid_at_p(p1), fluid.saturated_vapour_at_p(p1)
        draws = drawn_by(link)
        if not isinstance(draws, str):  # a side outlet: the phase at its height
            draws = "liquid" if contents.liquid_fraction >= draws else "vapour"
        stream = liq if draws == "liquid" else vap
    else:
        stream = contents
    flows_liquid = passes_liquid(stream)
    service = "vapour" if contents.two_phase else "gas"
    M = fluid.molar_mass
    p2 = max((r.pressure.extremes()[1] for r in network.reservoirs if r.name == link.target),
             default=atm)
    if link.target in vessels:
        p2 = vessels[link.target].initial.pressure
        notes.append("the valve discharges into a vessel: its initial pressure is taken as "
                     "the back pressure")

    # -- the relief load
    loads: dict[str, float] = {}
    sized_by: list[str] = []
    area_override = None
    if load is not None:
        W, basis = load, "stated relief load"
    elif blocked_outlet:
        W = blocked_outlet_load(network, vessel.name)
        if W <= 0.0:
            raise SizingError(f"no forced inflow (fixed-flow link) into '{vessel.name}': "
                              "state the load instead")
        basis = "blocked outlet: largest forced inflow into the vessel"
    elif unwetted_fire:
        W, basis, area_override = _unwetted_fire(network, vessel, fluid, init, contents, p1, p2,
                                                 dev, wall_temperature, loads, sized_by, notes)
    else:
        if fire:
            Q, what = fire_heat_input(network, vessel.name)
            what += f", {Q / 1e3:.4g} kW"
            notes.append("all the fire's heat is taken to reach the contents (no wall heat "
                         "capacity): conservative for the load; the confirming run keeps "
                         "the wall if one is modelled")
        else:
            Q, what = heat, f"heat input {heat / 1e3:.4g} kW"
        if contents.two_phase:
            W, basis = _boiling_load(Q, what, liq, vap, stream, loads, sized_by)
        else:
            W = heat_relief_load(Q, p1, contents.rho, du_drho_at_p(fluid, p1, contents.T))
            basis = f"{what} converted to the mass that must leave to hold the relieving " \
                    "pressure (single phase)"

    # -- the area for what the valve passes
    Z = k = math.nan
    coefficients = {"Kd": dev.kd, "Kb": dev.kb, "Kc": dev.kc}
    areas: dict[str, float] = {}
    critical = False
    pick = None
    if not flows_liquid:
        Z = compressibility_factor(p1, stream.rho, stream.T, M)
        k = fluid.ideal_gas_gamma(stream.rho, stream.T)
        critical = p2 / p1 <= critical_pressure_ratio(k)
        A = api520_area(W, p1, p2, stream.T, Z, M, k, dev.kd, dev.kb, dev.kc,
                        balanced=dev.design == "balanced-bellows")
        method = ("API 520 Part I gas or vapour sizing (sec. 5.6), "
                  + ("critical" if critical else "subcritical") + " flow, Z and k at (P1, T1)")
        areas["API 520 Part I gas equation"] = A
        if area_override is not None:
            areas.update(area_override)
            name = max(areas, key=areas.get)
            A = areas[name]
            sized_by.append(f"area: '{name}' sizes the valve, the larger of the two readings "
                            "of the unwetted method")
    else:
        service, method, A, critical, pick = _liquid_area(
            fluid, stream, W, p1, p2, dev, coefficients, areas, sized_by, notes)
    if pick is None:
        pick = next_api526_letter(A)
    out = ReliefSizing(
        link=link_name, vessel=vessel.name, load=W, load_basis=basis, relieving_pressure=p1,
        relieving_temperature=stream.T, back_pressure=p2, Z=Z, k=k, molar_mass=M,
        kd=dev.kd, kb=dev.kb, kc=dev.kc, critical=critical, required_area=A,
        letter=pick[0] if pick else None, letter_area=pick[1] if pick else None,
        allowed_pressure=p1, accumulation_basis=acc_text, service=service, method=method,
        relieving_basis=rel_text, mawp=mawp, set_pressure=dev.set_pressure,
        max_set_pressure=p_set_max, density=stream.rho, loads=loads, areas=areas,
        coefficients=coefficients, sized_by=sized_by, notes=notes, scenario_area=dev.area)
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


def _boiling_load(Q, what, liq, vap, stream, loads, sized_by):
    """Relief load [kg/s] of heat Q [W] into boiling liquid, and its basis: Q / latent heat
    and the exact constant-pressure first law for the stream that leaves."""
    latent = latent_heat_load(Q, liq, vap)
    exact = vapour_generation_load(Q, liq, vap, stream.h)
    h_fg = vap.h - liq.h
    if stream is vap:
        loads["Q / latent heat (API 521)"] = latent
        loads["first law at constant p and V, vapour outlet"] = exact
        sized_by.append(
            f"load: Q / latent heat ({h_fg / 1e3:.4g} kJ/kg, API 521) sizes the valve: it "
            f"is the larger, by rho_g/rho_l = {vap.rho / liq.rho * 100:.3g} %; the exact "
            "first law keeps part of the vapour made in the vessel, where it fills the "
            "volume the boiled liquid frees")
        return latent, f"{what} into boiling liquid: vapour made at relieving conditions"
    loads["first law at constant p and V, liquid outlet"] = exact
    loads["Q / latent heat (vapour made)"] = latent
    sized_by.append(
        "load: the first law with a liquid outlet sizes the valve: the valve passes the "
        "liquid the vapour made displaces (W = Q v_fg / (v_l h_fg)); Q / latent heat counts "
        "vapour, which does not leave through a liquid outlet")
    return exact, f"{what} into boiling liquid: liquid displaced by the vapour made"


def _unwetted_fire(network, vessel, fluid, init, contents, p1, p2, dev, wall_temperature,
                   loads, sized_by, notes):
    """API 521 unwetted-vessel fire: the load with T1 from the real gas (heated at constant
    density) and the area of the standard's printed form (T1 = (P1/Pn) Tn, F' with Z = 1);
    the larger area sizes the valve."""
    fire = _fire_exposure(network, vessel.name)
    Tw = wall_temperature if wall_temperature else WALL_TEMPERATURE_CARBON_STEEL
    M = fluid.molar_mass
    T1 = contents.T
    T1_std = p1 / init.p * init.T
    W = api521_unwetted_load(fire.area, p1, T1, Tw, M)
    W_std = api521_unwetted_load(fire.area, p1, T1_std, Tw, M)
    if W <= 0.0:
        raise SizingError(f"the gas at relieving conditions ({T1:.6g} K) is as hot as the wall "
                          f"temperature ({Tw:.6g} K): the unwetted-vessel method gives no load; "
                          "state the wall temperature or the load")
    loads["API 521 unwetted, T1 of the real gas heated at constant density"] = W
    loads["API 521 unwetted, T1 = (P1/Pn) Tn as printed"] = W_std
    k_std = fluid.ideal_gas_gamma(contents.rho, T1_std)
    F = api521_unwetted_factor(Tw, T1_std, api520_c(k_std), dev.kd)
    A_std = F * fire.area / math.sqrt(p1 * 1e-3) * 1e-6
    if fire.environment_factor != 1.0:
        notes.append(f"the fire's environment factor F = {fire.environment_factor:g} is not "
                     "used by the unwetted-vessel method (a bare wall at the stated wall "
                     "temperature); insulation lowers the wall temperature instead")
    notes.append(f"API 521 unwetted vessel: exposed area {fire.area:.4g} m2, wall "
                 f"{Tw - 273.15:.0f} degC, T1 = {T1 - 273.15:.1f} degC (real gas) or "
                 f"{T1_std - 273.15:.1f} degC (T1 = P1 Tn/Pn); F' = {F:.4g} (SI form: A mm2, "
                 "A' m2, P1 kPa)")
    sized_by.append(f"load: {W * 3600:.5g} kg/h with T1 of the real gas (the standard's "
                    f"T1 = P1 Tn/Pn gives {W_std * 3600:.5g} kg/h)")
    basis = (f"API 521 fire on an unwetted (gas-filled) vessel: exposed area {fire.area:.4g} m2,"
             f" wall {Tw - 273.15:.0f} degC")
    return W, basis, {"API 521 F' form (T1 = P1 Tn/Pn, Z = 1)": A_std}


def _liquid_area(fluid, stream, W, p1, p2, dev, coefficients, areas, sized_by, notes):
    """Area for a liquid or flashing stream: API 520 liquid equation when it does not flash,
    else HEM and the omega method (the smaller flux sizes). Returns (service, method, A,
    choked, letter pick or None)."""
    from .flow.nozzle import real_gas_mass_flux
    from .flow.omega import omega_mass_flux, omega_of_state
    props = LiquidProperties(fluid.name)
    coefficients.update({"Kd liquid": dev.kd_liquid, "Kw": dev.kw})
    if not stream.two_phase and stream.T < fluid.t_crit and \
            props.saturation_pressure(stream.T) <= p2:
        A0 = api520_liquid_area(W, stream.rho, p1, p2, dev.kd_liquid, dev.kw, dev.kc)
        mu = props.viscosity(stream.rho, stream.T)
        A, kv, Re, pick = _letter_for_liquid(A0, W, stream.rho, mu)
        coefficients.update({"Kv": kv, "Re": Re,
                             "viscosity_Pa_s": mu if mu is not None else math.nan})
        if mu is None:
            notes.append("no viscosity model for this fluid in CoolProp: Kv = 1")
        areas["API 520 Part I liquid equation, Kv = 1"] = A0
        areas["API 520 Part I liquid equation with Kv"] = A
        sized_by.append(f"area: API 520 Part I liquid equation with Kv = {kv:.4f} (Re = "
                        f"{Re:.4g} at the chosen letter's area, the standard's procedure)")
        return ("liquid", "API 520 Part I liquid sizing (sec. 5.9), certified valve, "
                "liquid Kd", A, False, pick)
    g_hem, choked, p_throat = real_gas_mass_flux(fluid, stream, p2)
    void = throat_void_fraction(fluid, stream, p_throat)
    kd = two_phase_discharge_coefficient(void, dev.kd * (dev.kb if choked else 1.0),
                                         dev.kd_liquid * dev.kw)
    coefficients.update({"throat void fraction": void, "Kd two-phase": kd,
                         "G HEM [kg/m2/s]": g_hem, "throat pressure [Pa]": p_throat})
    A_hem = W / (dev.kc * kd * g_hem)
    areas["homogeneous equilibrium (HEM)"] = A_hem
    om = omega_of_state(fluid, stream)
    if om is not None:
        w, eta_s = om
        g_om, choked_om = omega_mass_flux(p1, stream.rho, w, p2, eta_s)
        coefficients.update({"omega": w, "Ps/P0": eta_s, "G omega [kg/m2/s]": g_om})
        areas["API 520 Part I Annex C omega method"] = W / (dev.kc * kd * g_om)
    name = max(areas, key=areas.get)
    sized_by.append(
        f"area: '{name}' sizes the valve, the smaller flux of the two (HEM is the exact "
        "equilibrium isentrope of the fluid, the omega method its two-point approximation "
        f"in the standard); Kd {kd:.4g} weighted by the throat's vapour share {void:.3g} "
        f"between the liquid {dev.kd_liquid:g} and gas {dev.kd:g} values")
    return ("flashing", "two-phase (flashing) sizing: homogeneous equilibrium and API 520 "
            "Part I Annex C omega method", areas[name], choked, None)


def sizing_text(s: ReliefSizing, atmosphere: float) -> str:
    """The sizing as text for the screen and relief-sizing.txt."""
    from .result import CAUTION

    def g(p):
        return _g(p, atmosphere)
    what = {"gas": "gas", "vapour": "vapour of boiling liquid", "liquid": "liquid",
            "flashing": "flashing liquid"}[s.service]
    L = [f"Relief valve '{s.link}' protecting '{s.vessel}': passes {what}",
         f"  method             {s.method}",
         f"  relief load        {s.load * 3600:.6g} kg/h ({s.load_basis})"]
    for name, w in s.loads.items():
        L.append(f"    {name}: {w * 3600:.6g} kg/h")
    L += [f"  relieving pressure {g(s.relieving_pressure)} ({s.accumulation_basis}; MAWP "
          f"{g(s.mawp)}, set {g(s.set_pressure)}, highest set allowed "
          f"{g(s.max_set_pressure)})",
          f"  relieving temperature {s.relieving_temperature - 273.15:.1f} degC "
          f"({s.relieving_basis})",
          f"  back pressure      {g(s.back_pressure)} ("
          + (("critical" if s.critical else "subcritical") if s.service in ("gas", "vapour")
             else ("choked" if s.critical else "not choked")) + " flow)"]
    if s.service in ("gas", "vapour"):
        L.append(f"  Z = {s.Z:.4f}, k = {s.k:.4f}, M = {s.molar_mass * 1e3:.4f} g/mol, "
                 f"density {s.density:.5g} kg/m3")
    else:
        L.append(f"  density {s.density:.5g} kg/m3 at the valve inlet")
    L.append("  coefficients       " + ", ".join(
        f"{k} = {v:.5g}" if isinstance(v, float) else f"{k} = {v}"
        for k, v in s.coefficients.items()))
    for name, a in s.areas.items():
        L.append(f"    area by {name}: {a * 1e6:.5g} mm2")
    L.append(f"  required effective area {s.required_area * 1e6:.5g} mm2 "
             f"({s.required_area / (INCH * INCH):.4g} in2)")
    L += [f"  sized by           {t}" for t in s.sized_by]
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
