"""Control valve: compressible flow by IEC 60534-2-1, with an opening that moves in time.

Mass flow through a control valve passing a gas or vapour, turbulent, by the
sizing equations of IEC 60534-2-1:2011 (*Industrial-process control valves -
Part 2-1: Flow capacity - Sizing equations for fluid flow under installed
conditions*), clauses 6 (compressible fluids) and 7 (choked flow):

    x   = (p1 - p2) / p1                      pressure differential ratio
    Fg  = gamma / 1.40                        specific-heat-ratio factor (eq. 20)
    choked when x >= Fg xT; then x is replaced by Fg xT
    Y   = 1 - x / (3 Fg xT)                   expansion factor (eq. 19), 2/3 <= Y <= 1
    W   = N6 Fp C Y sqrt(x p1 rho1)           mass flow (eq. 14/16 with Fp, eq. 17)

with C the flow coefficient (Kv), Fp the piping geometry factor (1 without
reducers; with reducers give the combined xTP in place of xT, IEC 60534-2-1
eq. 24), rho1 the upstream density and gamma the upstream heat-capacity ratio.
cvsim uses the real upstream density (which holds the compressibility factor
Z of the standard's density form rho1 = p1 M / (Z R T1)) and for gamma the
ideal-gas heat-capacity ratio at the upstream temperature, the one exponent of
all cvsim's perfect-gas flow equations (:mod:`cvsim.flow.exponent`; the real
cp/cv, 8.3 for carbon dioxide at 80 bar and 310 K, would make Fg xT exceed 1 and
the valve never choke).

The gas path is :func:`gas_mass_flow` (pure) and
:meth:`ControlValveDevice._gas_flow` (the upstream state to a flow); another
service (liquid) adds its own pair beside them.

Constants in SI. IEC 60534-2-1 Table 1 gives N6 = 3.16 for Kv with W in kg/h,
p in kPa and rho in kg/m3. With W in kg/s and p in Pa:

    N6_SI = 3.16 / (3600 sqrt(1000)) = 2.7758e-5 kg/s / (m3/h) / sqrt(Pa kg/m3)

Kv [m3/h] and Cv [US gal/min] are related by Kv = 0.865 Cv (IEC 60534-2-1,
the N constants for Cv are those for Kv times 0.865; from the definitions,
1 US gal/min at 1 psi against 1 m3/h at 1 bar gives 0.86498).

The opening s (travel, 0 shut to 1 fully open) scales the rated coefficient by
the inherent characteristic f(s) (:func:`relative_flow_coefficient`).

Liquid service (a valve drawing liquid from a two-phase vessel, or from a
liquid-full vessel or a liquid reservoir): the IEC 60534-2-1 equations for
incompressible fluids, turbulent, with choking by flashing or cavitation
(:func:`liquid_mass_flow`):

    FF  = 0.96 - 0.28 sqrt(pv / pc)               liquid critical pressure ratio factor
    dp_choked = (FL / Fp)^2 (p1 - FF pv)          (FL: FLP with fittings)
    W   = N6 Fp C sqrt(min(p1 - p2, dp_choked) rho1)

with pv the saturation pressure at the inlet temperature and pc the critical
pressure. A saturated liquid (pv = p1) flashes in the valve and chokes at
FL^2 p1 (1 - FF): the standard's equations cover it. A two-phase mixture at the
inlet is outside the standard (no equation for it) and is refused.
"""
from __future__ import annotations

import math

from ..errors import StateError
from .base import NO_FLOW, Device, Flow
from .exponent import EXPONENT_ASSUMPTION, perfect_gas_exponent
from .liquid import LiquidProperties, passes_liquid
from .nozzle import LINEAR_BELOW
from .schedule import clip01, level_crossings, schedule_texts

#: Kv [m3/h] per Cv [US gal/min] (IEC 60534-2-1:2011, clause 4 and Table 1)
KV_PER_CV = 0.865

#: N6 of IEC 60534-2-1:2011 Table 1 for Kv, W [kg/h], p [kPa], rho [kg/m3]
N6_KV_KPA = 3.16

#: N6 in SI: W [kg/s] = N6_SI Kv [m3/h] Y sqrt(x p1 [Pa] rho1 [kg/m3])
N6_SI = N6_KV_KPA / (3600.0 * math.sqrt(1000.0))

#: heat-capacity ratio of air that Fg refers to (IEC 60534-2-1, eq. 20)
GAMMA_AIR = 1.40

CHARACTERISTICS = ("linear", "equal-percentage", "quick-opening")


def kv_from_cv(cv: float) -> float:
    """Kv [m3/h] from Cv [US gal/min]: Kv = 0.865 Cv (IEC 60534-2-1).

    >>> round(kv_from_cv(100.0), 6)
    86.5
    """
    return KV_PER_CV * cv


def specific_heat_ratio_factor(gamma: float) -> float:
    """Fg = gamma / 1.40 [-] (IEC 60534-2-1:2011, eq. 20).

    Parameters
    ----------
    gamma : heat-capacity ratio cp/cv of the upstream gas [-]
    """
    return gamma / GAMMA_AIR


def expansion_factor(x: float, f_gamma: float, xt: float) -> float:
    """Expansion factor Y = 1 - x / (3 Fg xT) [-], x limited to Fg xT (choked).

    IEC 60534-2-1:2011, eq. 19; Y lies between 2/3 (choked) and 1.

    Parameters
    ----------
    x : pressure differential ratio (p1 - p2)/p1 [-]
    f_gamma : specific-heat-ratio factor Fg [-]
    xt : pressure differential ratio factor xT (xTP with fittings) [-]

    >>> round(expansion_factor(370.0 / 680.0, 1.30 / 1.40, 0.60), 3)  # IEC 60534-2-1 Ex. 3
    0.674
    """
    x_choked = f_gamma * xt
    return 1.0 - min(x, x_choked) / (3.0 * x_choked)


def is_choked(x: float, f_gamma: float, xt: float) -> bool:
    """Choked flow: x >= Fg xT (IEC 60534-2-1:2011, clause 7)."""
    return x >= f_gamma * xt


def gas_mass_flow(kv: float, p1: float, rho1: float, p2: float, gamma: float, xt: float,
                  fp: float = 1.0) -> tuple[float, bool]:
    """Mass flow of a gas through a control valve, IEC 60534-2-1, turbulent.

        W = N6 Fp Kv Y sqrt(x p1 rho1),   x = min((p1 - p2)/p1, Fg xT)

    Parameters
    ----------
    kv : flow coefficient Kv at the present opening [m3/h]
    p1 : upstream pressure [Pa] (absolute)
    rho1 : upstream density [kg/m3]
    p2 : downstream pressure [Pa] (absolute)
    gamma : upstream heat-capacity ratio [-]; cvsim passes the ideal-gas k at the
        upstream temperature (:func:`cvsim.flow.exponent.perfect_gas_exponent`)
    xt : pressure differential ratio factor xT (xTP with fittings) [-]
    fp : piping geometry factor Fp [-]

    Returns
    -------
    (W [kg/s], choked). W = 0 for p2 >= p1. Below a relative pressure
    difference of ``LINEAR_BELOW`` (1e-4) W is taken linear in the difference,
    matching the value there (the same regularisation as the orifice).

    Validity: turbulent flow (valve Reynolds number above 10 000), single-phase
    gas or vapour; the standard's equations are not meant for two-phase flow.
    Source: IEC 60534-2-1:2011, eqs. 14, 16, 17, 19, 20 and Table 1.

    >>> w, choked = gas_mass_flow(10.0, 80e5, 327.71, 1e5, 1.2832, 0.7)  # CO2 80 bar, 310 K
    >>> round(w, 2), choked
    (7.59, True)
    """
    if p2 >= p1 or kv <= 0.0:
        return 0.0, False
    x = (p1 - p2) / p1
    if x < LINEAR_BELOW:
        w_lin, _ = _mass_flow_at(kv, p1, rho1, LINEAR_BELOW, gamma, xt, fp)
        return w_lin * x / LINEAR_BELOW, False
    return _mass_flow_at(kv, p1, rho1, x, gamma, xt, fp)


#: the gas-service flow equation under its former name
mass_flow = gas_mass_flow


def _mass_flow_at(kv, p1, rho1, x, gamma, xt, fp):
    """W [kg/s] and choked at pressure differential ratio x (see :func:`gas_mass_flow`)."""
    f_gamma = specific_heat_ratio_factor(gamma)
    choked = is_choked(x, f_gamma, xt)
    x_eff = f_gamma * xt if choked else x
    y = expansion_factor(x_eff, f_gamma, xt)
    return N6_SI * fp * kv * y * math.sqrt(x_eff * p1 * rho1), choked


def liquid_critical_pressure_ratio_factor(pv: float, pc: float) -> float:
    """FF = 0.96 - 0.28 sqrt(pv / pc) [-], the liquid critical pressure ratio factor.

    Parameters
    ----------
    pv : saturation (vapour) pressure of the liquid at the inlet temperature [Pa]
    pc : critical pressure of the fluid [Pa]

    Source: IEC 60534-2-1:2011, incompressible fluids, choked flow (FF).

    >>> round(liquid_critical_pressure_ratio_factor(70.1e3, 22120e3), 4)  # IEC Ex. 1 water
    0.9442
    """
    return 0.96 - 0.28 * math.sqrt(pv / pc)


def liquid_choked_differential(p1: float, pv: float, pc: float, fl: float,
                               fp: float = 1.0) -> float:
    """Pressure differential [Pa] at which liquid flow through the valve chokes
    (flashing or cavitation at the vena contracta):

        dp_choked = (FL / Fp)^2 (p1 - FF pv)

    Parameters
    ----------
    p1 : upstream pressure [Pa]; pv : saturation pressure at the inlet temperature [Pa];
    pc : critical pressure [Pa]; fl : liquid pressure recovery factor FL (FLP with
    fittings) [-]; fp : piping geometry factor Fp [-]

    Source: IEC 60534-2-1:2011, incompressible fluids, choked turbulent flow.
    """
    ff = liquid_critical_pressure_ratio_factor(pv, pc)
    return (fl / fp) ** 2 * (p1 - ff * pv)


def liquid_mass_flow(kv: float, p1: float, rho1: float, p2: float, pv: float, pc: float,
                     fl: float, fp: float = 1.0) -> tuple[float, bool]:
    """Mass flow of a liquid through a control valve, IEC 60534-2-1, turbulent.

        W = N6 Fp Kv sqrt(dp rho1),   dp = min(p1 - p2, (FL/Fp)^2 (p1 - FF pv))

    Parameters
    ----------
    kv : flow coefficient Kv at the present opening [m3/h]
    p1 : upstream pressure [Pa]; rho1 : upstream liquid density [kg/m3]
    p2 : downstream pressure [Pa]
    pv : saturation pressure at the inlet temperature [Pa] (pv = p1 for saturated liquid)
    pc : critical pressure [Pa]
    fl : liquid pressure recovery factor FL (FLP with fittings) [-]
    fp : piping geometry factor Fp [-]

    Returns
    -------
    (W [kg/s], choked). W = 0 for p2 >= p1; below a relative pressure difference of
    ``LINEAR_BELOW`` linear in the difference (as the gas equation).

    Validity: turbulent flow (valve Reynolds number above 10 000: the Reynolds factor
    FR = 1), liquid at the inlet (subcooled or saturated). Source: IEC 60534-2-1:2011,
    incompressible fluids (mass-flow form with N6, Table 1), choked flow with FF;
    the standard's worked examples 1 (globe valve, FL 0.9: Kv 165, not choked) and
    2 (ball valve, FL 0.6: Kv 238, choked) check it in the tests.
    """
    if p2 >= p1 or kv <= 0.0:
        return 0.0, False
    dp_max = liquid_choked_differential(p1, pv, pc, fl, fp)
    dp = p1 - p2
    if dp >= dp_max:
        return N6_SI * fp * kv * math.sqrt(max(dp_max, 0.0) * rho1), True
    if dp < LINEAR_BELOW * p1:
        w_lin = N6_SI * fp * kv * math.sqrt(LINEAR_BELOW * p1 * rho1)
        return w_lin * dp / (LINEAR_BELOW * p1), False
    return N6_SI * fp * kv * math.sqrt(dp * rho1), False


#: N2 and N5 of IEC 60534-2-1:2011 Table 1 for Kv with d in mm
N2_KV_MM = 1.6e-3
N5_KV_MM = 1.8e-3


def fitting_loss_coefficients(d: float, D1: float, D2: float) -> tuple[float, float]:
    """Velocity-head loss coefficients of concentric reducers at a valve [-].

        zeta1 = 0.5 (1 - (d/D1)^2)^2        inlet reducer
        zeta2 = 1.0 (1 - (d/D2)^2)^2        outlet increaser
        zetaB = 1 - (d/D)^4                 Bernoulli coefficient of each end

    Returns (sum zeta = zeta1 + zeta2 + zetaB1 - zetaB2, zeta_i = zeta1 + zetaB1).

    Parameters
    ----------
    d : valve size (nominal bore) [m]
    D1, D2 : inlet and outlet pipe inside diameters [m] (D = d: no reducer)

    Source: IEC 60534-2-1:2011, clause on the piping geometry factor (reducer
    coefficients for short concentric reducers).
    """
    r1 = (d / D1) ** 2
    r2 = (d / D2) ** 2
    zeta1 = 0.5 * (1.0 - r1) ** 2
    zeta2 = 1.0 * (1.0 - r2) ** 2
    zb1 = 1.0 - r1 * r1
    zb2 = 1.0 - r2 * r2
    return zeta1 + zeta2 + zb1 - zb2, zeta1 + zb1


def piping_geometry_factor(kv: float, d: float, D1: float, D2: float) -> float:
    """Piping geometry factor Fp [-] of a valve between reducers.

        Fp = 1 / sqrt(1 + (sum zeta / N2) (C / d^2)^2),  d in mm, C = Kv [m3/h]

    Source: IEC 60534-2-1:2011, equation of Fp with N2 = 1.6e-3 (Table 1).
    Fp depends on the flow coefficient, so on the valve's opening.
    """
    sum_zeta, _ = fitting_loss_coefficients(d, D1, D2)
    c_d2 = kv / (d * 1e3) ** 2
    return 1.0 / math.sqrt(1.0 + sum_zeta / N2_KV_MM * c_d2 * c_d2)


def xt_with_fittings(xt: float, kv: float, d: float, D1: float, D2: float) -> float:
    """Combined pressure differential ratio factor xTP [-] of a valve with reducers.

        xTP = (xT / Fp^2) / (1 + xT zeta_i / N5 (C / d^2)^2),  d in mm

    Source: IEC 60534-2-1:2011, equation of xTP with N5 = 1.8e-3 (Table 1).
    """
    _, zeta_i = fitting_loss_coefficients(d, D1, D2)
    fp = piping_geometry_factor(kv, d, D1, D2)
    c_d2 = kv / (d * 1e3) ** 2
    return xt / (fp * fp) / (1.0 + xt * zeta_i / N5_KV_MM * c_d2 * c_d2)


def equal_percentage_joint(rangeability: float) -> float:
    """Travel s0 = 1/R [-] below which the equal-percentage curve is replaced by a
    straight line to the origin (see :func:`relative_flow_coefficient`)."""
    return 1.0 / rangeability


def relative_flow_coefficient(s: float, characteristic: str, rangeability: float = 50.0
                              ) -> float:
    """Inherent characteristic f(s) = C(s)/C_rated [-] at travel s [-] (0 shut, 1 open).

    * ``linear``: f = s.
    * ``equal-percentage``: f = R^(s - 1) with rangeability R, the usual form of
      the inherent equal-percentage characteristic (e.g. Seborg, Edgar &
      Mellichamp, *Process Dynamics and Control*, chapter on control valves;
      from memory).
      The curve gives f = 1/R, not 0, at s = 0; a valve shuts tight at s = 0, so
      below s0 = 1/R the curve is bridged by the straight line from the origin
      to (s0, R^(s0 - 1)). The joint is a kink, continuous in f; the solver
      breaks its steps where the travel passes s0.
    * ``quick-opening``: f = sqrt(s), the usual idealisation of the quick-opening
      curve (Seborg, Edgar & Mellichamp, same chapter; from memory).

    s is clipped to [0, 1].
    """
    s = clip01(s)
    if characteristic == "linear":
        return s
    if characteristic == "equal-percentage":
        s0 = equal_percentage_joint(rangeability)
        if s >= s0:
            return rangeability ** (s - 1.0)
        return s / s0 * rangeability ** (s0 - 1.0)
    if characteristic == "quick-opening":
        return math.sqrt(s)
    raise ValueError(f"unknown characteristic {characteristic!r}")


class ControlValveDevice(Device):
    """A control valve on a link (see the module docstring).

    The flow goes from the node at the higher pressure; the stream carries that
    node's stagnation enthalpy (throttling is isenthalpic). The opening follows
    the valve's schedule (a table in time); its points and the times where the
    travel passes a kink of the characteristic are solver breakpoints.
    """

    kind = "control-valve"
    has_opening = True
    _props = None   # liquid properties, made when the valve first passes liquid

    def breakpoints(self):
        sig = self.d.opening
        if sig is None:   # moved by a controller
            return ()
        kinks = ()
        if self.d.characteristic == "equal-percentage":
            kinks = (equal_percentage_joint(self.d.rangeability),)
        return tuple(sig.breakpoints) + level_crossings(sig, kinks)

    def schedule(self):
        return [] if self.d.opening is None else schedule_texts(self.d.opening)

    def travel(self, t, segment) -> float:
        """Valve travel [-] at t: from its schedule, or from the controller that moves it
        (``opening`` None: :meth:`cvsim.model.Segment.driven_opening`)."""
        if self.d.opening is None:
            return segment.driven_opening(self.index)
        return segment.signal(self.d.opening, t)

    def opening(self, t, snapshot, segment) -> float:
        return clip01(self.travel(t, segment))

    def flow(self, t, a, b, segment) -> Flow:
        if a.p == b.p:
            return NO_FLOW
        d = self.d
        f = relative_flow_coefficient(self.travel(t, segment), d.characteristic,
                                      d.rangeability)
        if f <= 0.0:
            return NO_FLOW
        kv = d.kv * f
        up, p_down, sign = (a, b.p, 1.0) if a.p > b.p else (b, a.p, -1.0)
        if passes_liquid(up):   # liquid service: IEC 60534-2-1 incompressible equations
            w, choked = self._liquid_flow(kv, up, p_down)
            return Flow(sign * w, up.h, up.h, choked)
        if a.p > b.p:
            w, choked = self._gas_flow(kv, a, b.p)
            return Flow(w, a.h, a.h, choked)
        w, choked = self._gas_flow(kv, b, a.p)
        return Flow(-w, b.h, b.h, choked)

    def _gas_flow(self, kv: float, up, p_down: float) -> tuple[float, bool]:
        """(W [kg/s], choked) of gas from the upstream state ``up`` to ``p_down`` [Pa]
        at flow coefficient ``kv`` [m3/h]: IEC 60534-2-1 with the real density and
        the ideal-gas k at the upstream temperature."""
        d = self.d
        return gas_mass_flow(kv, up.p, up.rho, p_down, perfect_gas_exponent(self.fluid, up),
                             d.xt, d.piping_factor)
    def _liquid_flow(self, kv: float, up, p_down: float) -> tuple[float, bool]:
        """(W [kg/s], choked) of liquid from the upstream state ``up`` to ``p_down`` [Pa]
        at flow coefficient ``kv`` [m3/h]: IEC 60534-2-1 incompressible equations with
        FL, FF from the saturation pressure at the inlet temperature."""
        d = self.d
        if d.fl is None:
            raise StateError(
                f"the control valve passes liquid ({up.p / 1e5:.6g} bar a, "
                f"{up.T - 273.15:.4g} degC) but its liquid pressure recovery factor is not "
                "given: state FL (from the valve maker; about 0.9 for globe valves, 0.6 for "
                "ball valves) on the link")
        if up.two_phase and up.quality > 0.0:
            raise StateError(
                f"a two-phase mixture (quality {up.quality:.3g}) reaches the control valve; "
                "IEC 60534-2-1 has no equation for it: draw liquid or vapour, or use an "
                "orifice (homogeneous equilibrium) for this link")
        if self._props is None:
            self._props = LiquidProperties(self.fluid.name)
        pv = up.p if up.two_phase else min(self._props.saturation_pressure(up.T), up.p)
        return liquid_mass_flow(kv, up.p, up.rho, p_down, pv, self.fluid.p_crit, d.fl,
                                d.piping_factor)

    @classmethod
    def assumptions(cls, definitions):
        return ["Control valves: IEC 60534-2-1 compressible-flow equation, turbulent, "
                f"{EXPONENT_ASSUMPTION}; xT (or xTP) and Fp constant over the "
                "travel; flow coefficient scaled by the inherent characteristic; "
                "isenthalpic throttling."] + cls.liquid_assumptions(definitions)

    @classmethod
    def liquid_assumptions(cls, definitions) -> list[str]:
        """The liquid-service line of the assumption register (valves with FL)."""
        if not any(d.fl is not None for d in definitions):
            return []
        return ["Control valves passing liquid: IEC 60534-2-1 incompressible-flow equations, "
                "turbulent (Reynolds factor 1), choked at (FL/Fp)^2 (p1 - FF pv) with "
                "FF = 0.96 - 0.28 sqrt(pv/pc) and pv the saturation pressure at the inlet "
                "temperature (saturated liquid: pv = p1, flashing); FL constant over the "
                "travel."]


__all__ = ["CHARACTERISTICS", "ControlValveDevice", "KV_PER_CV", "N6_SI", "expansion_factor",
           "fitting_loss_coefficients", "gas_mass_flow", "is_choked", "kv_from_cv",
           "liquid_choked_differential",
           "liquid_critical_pressure_ratio_factor", "liquid_mass_flow", "mass_flow",
           "piping_geometry_factor", "relative_flow_coefficient", "specific_heat_ratio_factor",
           "xt_with_fittings"]
