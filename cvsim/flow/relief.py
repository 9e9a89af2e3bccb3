"""Pressure relief valve: API 520 Part I gas capacity, pop or modulating lift, reseat.

Capacity (API 520 Part I, *Sizing, Selection, and Installation of Pressure-relieving
Devices - Sizing and Selection*, 9th/10th ed., sec. 5.6 "Sizing for gas or vapor
relief", equations as printed in the SI form: A [mm2], W [kg/h], P [kPa a],
T [K], M [kg/kmol]):

    critical flow (P2/P1 <= (2/(k+1))^(k/(k-1))):
        W = A C Kd P1 Kb Kc sqrt(M / (T Z)),
        C = 0.03948 sqrt(k (2/(k+1))^((k+1)/(k-1)))
    subcritical flow:
        W = A F2 Kd Kc sqrt(M P1 (P1 - P2) / (T Z)) / 17.9,
        F2 = sqrt( k/(k-1) r^(2/k) (1 - r^((k-1)/k)) / (1 - r) ),  r = P2/P1

The functions here take and return SI base units (A [m2], P [Pa], M [kg/mol],
W [kg/s]) and convert to the standard's units inside, so the printed constants
0.03948 and 17.9 are used as printed. (0.03948 is the perfect-gas critical
mass flux with R = 8314.46 J/(kmol K) in the standard's units; 17.9 is the
subcritical counterpart rounded to three digits, 0.05 % off the exact value,
so the two forms differ by that much at the critical pressure ratio.)

Z is the compressibility factor at relieving conditions, Z = p M / (rho R T),
from the real fluid; k is the ideal-gas heat-capacity ratio at the relieving
temperature (:meth:`cvsim.fluid.RealFluid.ideal_gas_gamma`), as API 520 Part I
asks for these equations (the equations are the perfect-gas nozzle corrected
by Z; the real cp/cv near the critical point would mix two models).

API 526 (*Flanged Steel Pressure-relief Valves*) lettered effective orifice
areas are in :data:`API526_AREAS_IN2`.

Liquid and flashing service (the valve draws liquid, or the protected vessel is
liquid-full): API 520 Part I, 10th ed., sec. 5.9 "Sizing for liquid relief"
(certified valves), SI form with A [mm2], Q [L/min], P [kPa], mu [cP]:

    A  = 11.78 Q / (Kd Kw Kc Kv) sqrt(G1 / (P1 - P2))
    Re = Q (18 800 G1) / (mu sqrt(A)),   Kv = (1 + 170/Re)^(-1/2)   (10th ed.)

with G1 the specific gravity referred to water at 60 degF, Kd = 0.65 for
preliminary sizing, Kw the back-pressure correction of balanced-bellows valves
(1 for conventional and pilot-operated valves). That equation holds while the
stream stays liquid through the throat. A liquid that flashes (its saturation
pressure above the back pressure: saturated liquid drawn from a two-phase vessel,
or a hot subcooled liquid) passes the homogeneous-equilibrium (HEM) flux of
:func:`cvsim.flow.nozzle.real_gas_mass_flux`, the model the API 520 Part I Annex C
omega method approximates (:mod:`cvsim.flow.omega`), with the coefficient of
discharge weighted by the throat's vapour share (:func:`two_phase_discharge_coefficient`).
"""
from __future__ import annotations

import math

from ..errors import StateError
from ..fluid import R_UNIVERSAL, fluid_of
from .base import NO_FLOW, Device, Flow, Switch
from .liquid import LiquidProperties, passes_liquid
from .nozzle import LINEAR_BELOW, NozzleHint, critical_pressure_ratio, real_gas_mass_flux

#: constant of the API 520 Part I SI-form critical-flow coefficient C
API_C_CONSTANT = 0.03948
#: constant of the API 520 Part I SI-form subcritical equation
API_SUBCRITICAL_CONSTANT = 17.9
#: effective discharge coefficient for preliminary gas sizing (API 520 Part I)
KD_GAS = 0.975
#: combination correction with an uncertified rupture disc upstream (API 520 Part I)
KC_RUPTURE_DISC = 0.9
#: effective coefficient of discharge for preliminary liquid sizing of valves whose
#: liquid capacity is certified (API 520 Part I, 10th ed., sec. 5.9)
KD_LIQUID = 0.65
#: constants of the API 520 Part I liquid equations in the SI form (Q [L/min], P [kPa],
#: A [mm2], mu [cP]): area constant and Reynolds-number constant, as printed
API_LIQUID_CONSTANT = 11.78
API_REYNOLDS_CONSTANT = 18800.0
#: constant of the 10th-edition viscosity correction Kv = (1 + 170/Re)^(-1/2)
KV_REYNOLDS = 170.0
#: density of water at 60 degF (15.56 degC) and 1 atm [kg/m3], the reference of the
#: specific gravity G1 (API 520 Part I: water at standard conditions); IAPWS-95 by
#: CoolProp gives 999.01. With it, 11.78 is the exact unit conversion 11.779.
WATER_DENSITY_60F = 999.0

INCH = 0.0254  # [m] exact by definition

#: API Std 526 effective orifice areas [in2], letters D to T
API526_AREAS_IN2 = {
    "D": 0.110, "E": 0.196, "F": 0.307, "G": 0.503, "H": 0.785, "J": 1.287, "K": 1.838,
    "L": 2.853, "M": 3.60, "N": 4.34, "P": 6.38, "Q": 11.05, "R": 16.00, "T": 26.00,
}
API526_LETTERS = tuple(API526_AREAS_IN2)

#: a relief valve that opens this many times within CHATTER_WINDOW [s] is
#: reported as cycling rapidly (chatter risk); common practice, no source
CHATTER_OPENINGS = 5
CHATTER_WINDOW = 60.0
#: a pop valve that opens at least CYCLING_OPENINGS times in a run while open less than
#: CYCLING_OPEN_SHARE of the time since it first opened passes far more than the load in
#: short bursts: reported as likely oversized (common practice, no source)
CYCLING_OPENINGS = 10
CYCLING_OPEN_SHARE = 0.5


# ----------------------------------------------------------------- API 520

def api526_area(letter: str) -> float:
    """Effective orifice area [m2] of an API 526 orifice letter (D ... T).

    >>> round(api526_area("J") / 1e-6, 1)   # 1.287 in2
    830.3
    """
    try:
        return API526_AREAS_IN2[letter] * INCH * INCH
    except KeyError:
        raise ValueError(f"'{letter}' is not an API 526 orifice letter; use one of "
                         f"{', '.join(API526_LETTERS)}") from None


def flow_function(k: float) -> float:
    """sqrt(k (2/(k+1))^((k+1)/(k-1))) [-], the perfect-gas critical flow function.

    At k = 1 the limit sqrt(1/e) is taken.
    """
    if abs(k - 1.0) < 1e-9:
        return math.sqrt(math.exp(-1.0))
    return math.sqrt(k * (2.0 / (k + 1.0)) ** ((k + 1.0) / (k - 1.0)))


def api520_c(k: float) -> float:
    """API 520 Part I coefficient C in the SI form [as printed, units of the SI form].

        C = 0.03948 sqrt(k (2/(k+1))^((k+1)/(k-1)))

    Parameters
    ----------
    k : ideal-gas heat-capacity ratio at relieving temperature [-]

    >>> round(api520_c(1.40), 6)   # API 520 Part I; 356 in US units
    0.027033
    """
    return API_C_CONSTANT * flow_function(k)


def api520_f2(k: float, r: float) -> float:
    """API 520 Part I subcritical coefficient F2 [-] at pressure ratio r = P2/P1.

        F2 = sqrt( k/(k-1) r^(2/k) (1 - r^((k-1)/k)) / (1 - r) )

    The limit r -> 1 is 1.
    """
    if r >= 1.0 - 1e-12:
        return 1.0
    return math.sqrt(k / (k - 1.0) * r ** (2.0 / k) * (1.0 - r ** ((k - 1.0) / k)) / (1.0 - r))


def is_critical(p1: float, p2: float, k: float) -> bool:
    """Critical (choked) flow through the valve: P2/P1 <= (2/(k+1))^(k/(k-1))."""
    return p2 / p1 <= critical_pressure_ratio(k)


def uses_critical_equation(r: float, k: float, balanced: bool) -> bool:
    """Whether a valve's gas capacity takes API 520 Part I's critical-flow equation
    (with Kb) at pressure ratio r = P2/P1 [-], else the subcritical (F2) equation.

    * critical flow, r <= (2/(k+1))^(k/(k-1)): the critical-flow equation, any valve;
    * subcritical flow, conventional and pilot-operated valves: the subcritical
      equation with F2 (Kb does not enter it; the back pressure acts through F2);
    * subcritical flow, balanced-bellows valves: the critical-flow equation with the
      back-pressure correction factor Kb (from the valve's maker).

    Parameters
    ----------
    r : back pressure over relieving pressure, P2/P1 [-]
    k : ideal-gas heat-capacity ratio at relieving temperature [-]
    balanced : the valve is a balanced-bellows valve

    Source: API 520 Part I, sec. 5.6.3 (sizing for subcritical flow): 5.6.3.1
    conventional and pilot-operated valves by the F2 equations, 5.6.3.2 balanced
    valves in subcritical flow by the critical-flow equations with Kb obtained from
    the manufacturer (section numbers of the 9th/10th editions, from memory).

    >>> uses_critical_equation(0.794, 1.11, False), uses_critical_equation(0.794, 1.11, True)
    (False, True)
    """
    return balanced or r <= critical_pressure_ratio(k)


def compressibility_factor(p: float, rho: float, T: float, molar_mass: float) -> float:
    """Z = p M / (rho R T) [-] of a state: p [Pa], rho [kg/m3], T [K], M [kg/mol]."""
    return p * molar_mass / (rho * R_UNIVERSAL * T)


def api520_mass_flow(area: float, p1: float, p2: float, T: float, Z: float, M: float,
                     k: float, kd: float = KD_GAS, kb: float = 1.0, kc: float = 1.0,
                     balanced: bool = False) -> tuple[float, bool]:
    """Gas capacity of a relief valve by API 520 Part I (critical or subcritical).

    Parameters
    ----------
    area : effective discharge area [m2]
    p1 : upstream relieving pressure [Pa] (absolute)
    p2 : back pressure [Pa] (absolute)
    T : relieving temperature [K]
    Z : compressibility factor at relieving conditions [-]
    M : molar mass [kg/mol]
    k : ideal-gas heat-capacity ratio at relieving temperature [-]
    kd : effective coefficient of discharge [-] (0.975 for preliminary gas sizing)
    kb : back-pressure correction factor [-] (critical flow; for balanced-bellows
        valves also subcritical flow, as in API 520: :func:`uses_critical_equation`)
    kc : combination correction factor [-] (0.9 with an uncertified rupture disc)
    balanced : a balanced-bellows valve

    Returns
    -------
    (W [kg/s], critical). W = 0 for p2 >= p1; below a relative pressure
    difference of 1e-4 W is linear in the difference (regularisation). A
    balanced-bellows valve in subcritical flow passes the critical-flow capacity
    times Kb, but never more than the subcritical (F2) capacity, the isentropic
    nozzle's at that back pressure: with a constant Kb the flow still falls to zero
    as P2 reaches P1 (a maker's Kb falls with back pressure by itself).

    Source: API 520 Part I, sec. 5.6, SI-form equations (see module docstring).
    """
    if p2 >= p1:
        return 0.0, False
    frac = (p1 - p2) / p1
    if frac < LINEAR_BELOW:
        w_lin, _ = _api520_at(area, p1, 1.0 - LINEAR_BELOW, T, Z, M, k, kd, kb, kc, balanced)
        return w_lin * frac / LINEAR_BELOW, False
    return _api520_at(area, p1, p2 / p1, T, Z, M, k, kd, kb, kc, balanced)


def _api520_at(area, p1, r, T, Z, M, k, kd, kb, kc, balanced=False):
    """W [kg/s] and critical at pressure ratio r = P2/P1 (see :func:`api520_mass_flow`)."""
    a_mm2 = area * 1e6
    m_kmol = M * 1e3
    p1_kpa = p1 * 1e-3
    critical = r <= critical_pressure_ratio(k)
    w_crit = None
    if uses_critical_equation(r, k, balanced):
        w_crit = a_mm2 * api520_c(k) * kd * p1_kpa * kb * kc * math.sqrt(m_kmol / (T * Z))
        if critical:
            return w_crit / 3600.0, True
    f2 = api520_f2(k, r)
    w_h = a_mm2 * f2 * kd * kc / API_SUBCRITICAL_CONSTANT * math.sqrt(
        m_kmol * p1_kpa * p1_kpa * (1.0 - r) / (T * Z))
    if w_crit is not None:  # balanced bellows, subcritical: Kb form, nozzle-limited
        w_h = min(w_crit, w_h)
    return w_h / 3600.0, False


def api520_area(mass_flow: float, p1: float, p2: float, T: float, Z: float, M: float,
                k: float, kd: float = KD_GAS, kb: float = 1.0, kc: float = 1.0,
                balanced: bool = False) -> float:
    """Required effective discharge area [m2] for a gas relief load ``mass_flow`` [kg/s]
    (API 520 Part I sizing equations; arguments as :func:`api520_mass_flow`).

    >>> round(api520_area(24270 / 3600, 670e3, 101.325e3, 348.0, 0.90, 0.051, 1.11) * 1e6)
    3699
    """
    w_unit, _ = api520_mass_flow(1.0, p1, p2, T, Z, M, k, kd, kb, kc, balanced)
    return mass_flow / w_unit


# ------------------------------------------------------------ API 520, liquid

def api520_liquid_area(mass_flow: float, rho: float, p1: float, p2: float,
                       kd: float = KD_LIQUID, kw: float = 1.0, kc: float = 1.0,
                       kv: float = 1.0) -> float:
    """Required effective discharge area [m2] for a liquid relief load (API 520 Part I).

        A [mm2] = 11.78 Q / (Kd Kw Kc Kv) sqrt(G1 / (P1 - P2)),   Q [L/min], P [kPa]

    Parameters
    ----------
    mass_flow : relief load [kg/s]
    rho : liquid density at relieving conditions [kg/m3] (G1 = rho / 999.0)
    p1 : relieving pressure [Pa]; p2 : back pressure [Pa] (absolute, p2 < p1)
    kd : effective coefficient of discharge [-] (0.65 for preliminary sizing)
    kw : back-pressure correction [-] (balanced-bellows valves; 1 for conventional
        and pilot-operated valves, whose back pressure enters through P2)
    kc : combination correction [-] (0.9 with an uncertified rupture disc upstream)
    kv : viscosity correction [-] (:func:`api520_viscosity_correction`)

    Validity: liquid that stays liquid through the valve (no flashing: its saturation
    pressure is below the back pressure); valves with certified liquid capacity.
    Source: API 520 Part I, 10th ed. (2020), sec. 5.9, SI form as printed.

    >>> round(api520_liquid_area(6814 / 60000 * 0.9 * 999.0, 0.9 * 999.0,
    ...       1.1 * 1724e3 + 101325, 0.2 * 1724e3 + 101325, kw=0.97) * 1e6)   # API 520 Ex. 5
    3066
    """
    q_lpm = mass_flow / rho * 60000.0
    g1 = rho / WATER_DENSITY_60F
    a_mm2 = API_LIQUID_CONSTANT * q_lpm / (kd * kw * kc * kv) * math.sqrt(
        g1 / ((p1 - p2) * 1e-3))
    return a_mm2 * 1e-6


def api520_liquid_mass_flow(area: float, rho: float, p1: float, p2: float,
                            kd: float = KD_LIQUID, kw: float = 1.0, kc: float = 1.0,
                            kv: float = 1.0) -> float:
    """Liquid capacity [kg/s] of a relief valve of effective area ``area`` [m2], the
    API 520 Part I liquid equation solved for the flow (arguments as
    :func:`api520_liquid_area`). 0 for p2 >= p1; below a relative pressure difference
    of 1e-4 linear in the difference (regularisation, as the gas equations)."""
    if p2 >= p1:
        return 0.0
    frac = (p1 - p2) / p1
    if frac < LINEAR_BELOW:
        w_lin = api520_liquid_mass_flow(area, rho, p1, p1 * (1.0 - LINEAR_BELOW), kd, kw, kc,
                                        kv)
        return w_lin * frac / LINEAR_BELOW
    return area / api520_liquid_area(1.0, rho, p1, p2, kd, kw, kc, kv)


def api520_reynolds(mass_flow: float, rho: float, mu: float, area: float) -> float:
    """Reynolds number of the liquid relief equation [-] (API 520 Part I, SI form):

        Re = Q (18 800 G1) / (mu sqrt(A)),   Q [L/min], mu [cP], A [mm2]

    Parameters
    ----------
    mass_flow : [kg/s]; rho : liquid density [kg/m3]; mu : dynamic viscosity [Pa s];
    area : effective discharge area [m2]

    Source: API 520 Part I, 10th ed., sec. 5.9 (the constant 18 800 is 60000/1000 x
    sqrt(4/pi) x 1e3 in these units, rounded; the exact value is 18 806).
    """
    q_lpm = mass_flow / rho * 60000.0
    g1 = rho / WATER_DENSITY_60F
    return q_lpm * API_REYNOLDS_CONSTANT * g1 / (mu * 1e3 * math.sqrt(area * 1e6))


def api520_viscosity_correction(Re: float) -> float:
    """Viscosity correction Kv = (1 + 170/Re)^(-1/2) [-] of the liquid relief equation.

    Source: API 520 Part I, 10th ed. (2020), sec. 5.9 (the 9th and earlier editions used
    Kv = (0.9935 + 2.878/Re^0.5 + 342.75/Re^1.5)^-1). Valid for Re above about 80.

    >>> round(api520_viscosity_correction(4525), 4)   # API 520 Part I Example 5
    0.9817
    """
    return 1.0 / math.sqrt(1.0 + KV_REYNOLDS / Re)


def viscosity_correction_at_area(mass_flow_kv1: float, rho: float, mu: float,
                                 area: float) -> float:
    """Kv [-] of a valve of area ``area`` [m2] passing ``mass_flow_kv1`` [kg/s] when
    Kv = 1, consistent with its own flow: the flow scales with Kv, so Re = Re1 Kv and
    Kv^2 (1 + 170/(Re1 Kv)) = 1, whose root is

        Kv = (-a + sqrt(a^2 + 4)) / 2,   a = 170 / Re1

    (Re1: :func:`api520_reynolds` at the Kv = 1 flow; mu [Pa s])."""
    a = KV_REYNOLDS / api520_reynolds(mass_flow_kv1, rho, mu, area)
    return 0.5 * (-a + math.sqrt(a * a + 4.0))


def two_phase_discharge_coefficient(void: float, kd_gas: float, kd_liquid: float) -> float:
    """Coefficient of discharge [-] of a flashing or two-phase stream, weighted by the
    share of the throat's cross-section the vapour takes (homogeneous flow: the void
    fraction alpha of the throat state):

        Kd = (1 - alpha) Kd_liquid + alpha Kd_gas

    It is the liquid value where the stream reaches the throat as liquid and the gas
    value where it reaches it as vapour, and continuous in between. API 520 Part I
    Annex C leaves the two-phase Kd to the valve's certification; this interpolation
    is cvsim's preliminary choice (docs/decisions.md), no published source.
    """
    return (1.0 - void) * kd_liquid + void * kd_gas


def throat_void_fraction(fluid, up, p_throat: float) -> float:
    """Vapour share of the volume [-] at the HEM throat pressure ``p_throat`` [Pa] on the
    isentrope of ``up``: 0 where the throat is still liquid."""
    if not hasattr(fluid, "two_phase_isentrope_at_T") or p_throat >= fluid.p_crit:
        return 1.0 if up.phase in ("gas", "supercritical") else 0.0
    st = fluid.two_phase_isentrope_at_T(up.s, fluid.saturation_temperature(p_throat))
    if st is None:
        return 0.0 if up.phase == "liquid" else 1.0
    return 1.0 - st.liquid_fraction


def modulating_lift(p: float, p_set: float, p_full: float) -> float:
    """Lift [-] of a modulating valve: 0 below set, rising linearly to 1 at full-lift
    pressure: clip((p - p_set)/(p_full - p_set), 0, 1). Capacity is taken
    proportional to lift (a simplification; common practice, no source)."""
    if p <= p_set:
        return 0.0
    if p >= p_full:
        return 1.0
    return (p - p_set) / (p_full - p_set)


# ------------------------------------------------------------------- device

class ReliefValveDevice(Device):
    """A relief valve on a link: protects the ``from`` node, discharges to the ``to`` node.

    ``pop``: shut until the ``from`` pressure rises to the set pressure, then at
    full lift (full rated capacity at the present pressures) until it falls to
    the reseat pressure (set minus blowdown): a discrete state switched by
    solver events, with the blowdown as deadband. ``modulating``: lift
    proportional to overpressure, 0 at set and 1 at the full-lift pressure;
    the two kinks are solver events too, so that no step straddles them.
    Flow never goes backwards through a relief valve.
    """

    kind = "relief-valve"
    has_opening = True

    def __init__(self, definition, fluid, index, source, target):
        super().__init__(definition, fluid, index, source, target)
        self.molar_mass = fluid.molar_mass
        self.pop = definition.action == "pop"
        # a mixture has no CoolProp name: its liquid is refused at run time (liquid_flow)
        self._liquid = LiquidProperties(fluid.name) if fluid.model != "mixture" else None
        self._hint = NozzleHint()

    # ---------------------------------------------------------- discrete state
    def _regime(self, p: float) -> int:
        d = self.d
        return 0 if p < d.set_pressure else (1 if p < d.full_lift_pressure else 2)

    def initial_discrete(self, snapshot):
        p = snapshot.states[self.source].p
        if self.pop:
            return {self.key("open"): p >= self.d.set_pressure}
        return {self.key("regime"): self._regime(p)}

    def switches(self, discrete):
        i = self.source
        d = self.d
        ps, pr, pf = d.set_pressure, d.reseat_pressure, d.full_lift_pressure
        if self.pop:
            key = self.key("open")
            if discrete[key]:
                return [Switch(key, lambda t, s: s.states[i].p - pr, -1, False,
                               f"relief valve reseats at {pr / 1e5:.6g} bar a")]
            return [Switch(key, lambda t, s: s.states[i].p - ps, +1, True,
                           f"relief valve pops open at {ps / 1e5:.6g} bar a")]
        key = self.key("regime")
        regime = discrete[key]
        out = []
        if regime == 0:
            out.append(Switch(key, lambda t, s: s.states[i].p - ps, +1, 1,
                              f"relief valve starts to open at {ps / 1e5:.6g} bar a"))
        if regime == 1:
            out.append(Switch(key, lambda t, s: s.states[i].p - ps, -1, 0,
                              f"relief valve shuts at {ps / 1e5:.6g} bar a"))
            out.append(Switch(key, lambda t, s: s.states[i].p - pf, +1, 2,
                              f"relief valve at full lift at {pf / 1e5:.6g} bar a"))
        if regime == 2:
            out.append(Switch(key, lambda t, s: s.states[i].p - pf, -1, 1,
                              f"relief valve leaves full lift at {pf / 1e5:.6g} bar a"))
        return out

    # ------------------------------------------------------------------ flow
    def _lift(self, p: float, discrete) -> float:
        if self.pop:
            return 1.0 if discrete[self.key("open")] else 0.0
        d = self.d
        return modulating_lift(p, d.set_pressure, d.full_lift_pressure)

    def opening(self, t, snapshot, segment) -> float:
        return self._lift(snapshot.states[self.source].p, segment.discrete)

    def flow(self, t, a, b, segment) -> Flow:
        lift = self._lift(a.p, segment.discrete)
        if lift <= 0.0 or a.p <= b.p:
            return NO_FLOW
        if passes_liquid(a):
            w, critical = self.liquid_flow(a, b.p)
            return Flow(lift * w, a.h, a.h, critical)
        d = self.d
        own = fluid_of(a, self.fluid)    # a mixture stream: its own composition
        M = own.molar_mass
        Z = compressibility_factor(a.p, a.rho, a.T, M)
        k = own.ideal_gas_gamma(a.rho, a.T)
        w, critical = api520_mass_flow(d.area, a.p, b.p, a.T, Z, M, k, d.kd, d.kb, d.kc,
                                       d.design == "balanced-bellows")
        return Flow(lift * w, a.h, a.h, critical)

    def liquid_flow(self, up, p2: float) -> tuple[float, bool]:
        """(W [kg/s], choked) at full lift of a liquid or flashing stream ``up`` into the
        back pressure ``p2`` [Pa].

        * Liquid whose saturation pressure is at or below p2 does not flash: API 520
          Part I liquid equation with the liquid Kd, Kw, Kc and the viscosity
          correction Kv at the valve's own flow (:func:`viscosity_correction_at_area`).
        * Otherwise the stream flashes: W = A Kc Kd G, with G the homogeneous-equilibrium
          flux (:func:`cvsim.flow.nozzle.real_gas_mass_flux`) and Kd weighted by the
          throat's vapour share (:func:`two_phase_discharge_coefficient`; Kw on the liquid
          share, Kb on the vapour share when choked).
        """
        d = self.d
        if up.p <= p2:
            return 0.0, False
        if self._liquid is None:
            raise StateError(
                f"the relief valve passes the liquid of a mixture ({up.p / 1e5:.6g} bar a, "
                f"{up.T - 273.15:.4g} degC), which cvsim does not model for relief valves "
                "(the API 520 liquid and flashing methods need a pure fluid's vapour "
                "pressure). Draw vapour (keep a vapour space) or relieve through an orifice.")
        if not up.two_phase and up.T < self.fluid.t_crit and \
                self._liquid.saturation_pressure(up.T) <= p2:
            w1 = api520_liquid_mass_flow(d.area, up.rho, up.p, p2, d.kd_liquid, d.kw, d.kc)
            mu = self._liquid.viscosity(up.rho, up.T)
            kv = viscosity_correction_at_area(w1, up.rho, mu, d.area) if mu and w1 > 0 else 1.0
            return w1 * kv, False
        g, choked, p_throat = real_gas_mass_flux(self.fluid, up, p2, self._hint)
        void = throat_void_fraction(self.fluid, up, p_throat)
        kd = two_phase_discharge_coefficient(void, d.kd * (d.kb if choked else 1.0),
                                             d.kd_liquid * d.kw)
        return d.area * d.kc * kd * g, choked

    # --------------------------------------------------------------- summary
    def report(self, initial, switches, t_end):
        # an opening is a change from shut (False / regime 0) to open
        prev = initial.get(self.key("open" if self.pop else "regime"))
        opens = []
        open_time, since = 0.0, (0.0 if prev == 1 else None)
        for t, key, v in switches:
            if v == 1 and prev == 0:  # True == 1 and False == 0 for the pop state
                opens.append(t)
                since = t
            elif v == 0 and prev == 1 and since is not None:
                open_time += t - since
                since = None
            prev = v
        if since is not None:
            open_time += t_end - since
        figures = {"openings": len(opens)}
        notes = []
        warnings = []
        if opens:
            figures["first_opening_s"] = opens[0]
            gaps = [b - a for a, b in zip(opens, opens[1:])]
            if gaps:
                figures["shortest_cycle_s"] = min(gaps)
                figures["mean_cycle_s"] = sum(gaps) / len(gaps)
            text = f"opened {len(opens)} time{'s' if len(opens) != 1 else ''}, first at " \
                   f"{opens[0]:.4g} s"
            if gaps:
                text += (f"; cycle {min(gaps):.4g} s shortest, {sum(gaps) / len(gaps):.4g} s "
                         "mean")
            notes.append(text)
            busiest, start = _most_within(opens, CHATTER_WINDOW)
            if busiest >= CHATTER_OPENINGS:
                warnings.append(
                    f"relief valve opened {busiest} times within {CHATTER_WINDOW:g} s (from "
                    f"t = {start:.4g} s): rapid cycling, a risk of chatter and seat damage. "
                    "The valve may be oversized for this relief load, or the blowdown too "
                    "small; review against API 520 Part II (installation, inlet pressure loss) "
                    "and API 521.")
            span = t_end - opens[0]
            share = open_time / span if span > 0.0 else 1.0
            figures["open_share"] = share
            if (self.pop and len(opens) >= CYCLING_OPENINGS and share < CYCLING_OPEN_SHARE
                    and busiest < CHATTER_OPENINGS):
                warnings.append(
                    f"relief valve cycled {len(opens)} times, open {share * 100:.0f} % of the "
                    f"time since it first opened at {opens[0]:.4g} s: it passes far more than "
                    "the relief load in short bursts, so it is likely oversized for this case "
                    "(cycling wears the seat and can turn into chatter). Check the letter "
                    "against the load (cvsim relief), or consider a smaller valve, a "
                    "modulating (pilot) valve or a longer blowdown.")
        figures["notes"] = notes
        return figures, warnings

    @classmethod
    def assumptions(cls, definitions):
        out = ["Relief valves: API 520 Part I gas capacity (critical or subcritical) at the "
               "present upstream state and back pressure, with Z from the real fluid and the "
               "ideal-gas k at the relieving temperature; set, reseat and full-lift pressures "
               "compare the absolute pressure of the protected node (back pressure does not "
               "shift them).",
               "Relief valves passing liquid: API 520 Part I liquid equation (liquid Kd, Kw, "
               "Kc, Kv) while the liquid does not flash; a flashing or two-phase stream passes "
               "the homogeneous-equilibrium flux with Kd weighted by the throat's vapour share "
               "between the liquid and the gas Kd."]
        if any(d.design == "balanced-bellows" for d in definitions):
            out.append("Balanced-bellows relief valves in subcritical flow: the critical-flow "
                       "equation with the stated Kb (API 520 Part I), at most the "
                       "subcritical (F2) capacity.")
        actions = {d.action for d in definitions}
        if "pop" in actions:
            out.append("Pop-action relief valves reach full lift (full rated capacity) at set "
                       "pressure and stay open until the pressure falls to set minus blowdown.")
        if "modulating" in actions:
            out.append("Modulating relief valves: lift and capacity proportional to "
                       "overpressure, full lift at the stated overpressure.")
        return out


def _most_within(times: list[float], window: float) -> tuple[int, float]:
    """Largest number of ``times`` inside any interval of length ``window``, and where it starts."""
    best, start = 0, times[0] if times else 0.0
    j = 0
    for i, t in enumerate(times):
        while times[j] < t - window:
            j += 1
        if i - j + 1 > best:
            best, start = i - j + 1, times[j]
    return best, start


__all__ = ["API526_AREAS_IN2", "API526_LETTERS", "KC_RUPTURE_DISC", "KD_GAS", "KD_LIQUID",
           "ReliefValveDevice", "api520_area", "api520_c", "api520_f2",
           "api520_liquid_area", "api520_liquid_mass_flow", "api520_mass_flow",
           "api520_reynolds", "api520_viscosity_correction", "api526_area",
           "compressibility_factor", "flow_function", "is_critical", "modulating_lift",
           "throat_void_fraction", "two_phase_discharge_coefficient", "uses_critical_equation",
           "viscosity_correction_at_area"]
