"""Two-phase and flashing flow through a relief valve by the omega method.

API 520 Part I (10th ed., 2020), Annex C, sizing for two-phase liquid/vapour relief,
after Leung (AIChE J. 32 (1986) 1743; *The omega method for discharge rate
evaluation*, 1995). The method replaces the isentropic (or isenthalpic)
homogeneous-equilibrium expansion by a density-pressure law with one parameter,
omega, read from two states of the fluid:

    v / v0 = omega (P0/P - 1) + 1                 saturated or two-phase inlet
    v / vs = omega_s (Ps/P - 1) + 1,  P < Ps       subcooled liquid below its
                                                   saturation pressure Ps (v = v0 above)
    omega = 9 (rho0 / rho9 - 1)                    two-point definition (Annex C):
                                                   rho9 the density after a flash
                                                   to 90 % of P0 (or of Ps)

Integrating the momentum balance of the homogeneous stream along this law gives
the mass flux at a throat pressure P = eta P0 (derivation in docs/theory.md,
section 7a):

    G(eta) = sqrt(P0 rho0) sqrt(N(eta)) / D(eta)
    N = 2 (1 - eta_s) + 2 [omega eta_s ln(eta_s/eta) - (omega - 1)(eta_s - eta)]
    D = omega (eta_s/eta - 1) + 1                  (eta < eta_s; eta_s = Ps/P0)
    G = sqrt(2 rho0 P0 (1 - eta))                  (eta >= eta_s: liquid)

With eta_s = 1 (saturated or two-phase inlet) N and D are the standard's
equations for the two-phase inlet; the throat chokes where G is largest, at the
critical pressure ratio eta_c, which for eta_s = 1 solves the standard's

    eta_c^2 + (omega^2 - 2 omega)(1 - eta_c)^2 + 2 omega^2 ln eta_c
        + 2 omega^2 (1 - eta_c) = 0,   G* = eta_c sqrt(P0 rho0 / omega).

A subcooled liquid chokes at its saturation pressure (high subcooling) when
eta_s <= eta_st = 2 omega_s / (1 + 2 omega_s), else in the two-phase region
(low subcooling) - the standard's transition, which is where dG/d eta changes
sign at eta_s.

All functions take and return SI (Pa, kg/m3, kg/(m2 s)).
"""
from __future__ import annotations

import math

from ..fluid import root_on_bracket
from .liquid import LiquidProperties

#: pressure at which the second state of the two-point omega is taken, as a share
#: of the inlet (or saturation) pressure (API 520 Part I, Annex C)
OMEGA_POINT = 0.9

#: residual tolerance of the critical-pressure-ratio solves (relative)
ETA_TOL = 1e-12


def omega_two_point(rho0: float, rho9: float) -> float:
    """omega = 9 (rho0/rho9 - 1) [-] from the inlet density and the density after a
    flash to 90 % of the inlet (or saturation) pressure.

    Parameters
    ----------
    rho0 : inlet density [kg/m3] (two-phase mixture, saturated or subcooled liquid)
    rho9 : density at 0.9 P0 (0.9 Ps for a subcooled inlet) [kg/m3]

    Source: API 520 Part I, 10th ed., Annex C (two-point omega; 9 = 1/(1/0.9 - 1)
    makes the law v/v0 = omega (P0/P - 1) + 1 pass through the second point).
    """
    return 9.0 * (rho0 / rho9 - 1.0)


def omega_critical_ratio(omega: float) -> float:
    """Critical pressure ratio eta_c [-] of a saturated or two-phase inlet, the root
    in (0, 1) of

        eta^2 + (omega^2 - 2 omega)(1 - eta)^2 + 2 omega^2 ln eta + 2 omega^2 (1 - eta) = 0

    solved on the residual (false position on a bracket). omega = 1 gives
    exp(-1/2), the isothermal perfect gas.

    Source: API 520 Part I, 10th ed., Annex C (Leung's critical-flow equation).
    """
    w = omega

    def f(eta):
        return eta * eta + (w * w - 2.0 * w) * (1.0 - eta) ** 2 + 2.0 * w * w * math.log(eta) \
            + 2.0 * w * w * (1.0 - eta)

    lo = 1e-12
    hi = 1.0 - 1e-15
    return root_on_bracket(f, lo, hi, f(lo), f(hi), ETA_TOL)


def omega_flux_at(P0: float, rho0: float, omega: float, eta: float, eta_s: float = 1.0
                  ) -> float:
    """Mass flux G [kg/(m2 s)] of the omega law with the throat at P = eta P0.

    Parameters
    ----------
    P0 : inlet (stagnation) pressure [Pa]; rho0 : inlet density [kg/m3]
    omega : omega (omega_s for a subcooled inlet) [-]
    eta : throat pressure ratio P/P0 [-]
    eta_s : saturation pressure ratio Ps/P0 [-]: 1 for a saturated or two-phase inlet
    """
    scale = math.sqrt(P0 * rho0)
    if eta >= eta_s:
        return scale * math.sqrt(max(2.0 * (1.0 - eta), 0.0))
    n = 2.0 * (1.0 - eta_s) + 2.0 * (omega * eta_s * math.log(eta_s / eta)
                                     - (omega - 1.0) * (eta_s - eta))
    d = omega * (eta_s / eta - 1.0) + 1.0
    return scale * math.sqrt(max(n, 0.0)) / d


def omega_choke_ratio(omega: float, eta_s: float = 1.0) -> float:
    """Throat pressure ratio eta_c [-] at which the omega-law flux is largest.

    * eta_s = 1 (saturated or two-phase inlet): :func:`omega_critical_ratio`;
    * high subcooling, eta_s <= 2 omega / (1 + 2 omega): eta_s (the flow chokes
      where it starts to flash);
    * low subcooling: the root of dG/d eta = 0 below eta_s, i.e. of
      N'(eta) D(eta) - 2 N(eta) D'(eta) = 0 with N, D of :func:`omega_flux_at`,
      solved on the residual.

    Source: API 520 Part I, 10th ed., Annex C (subcooled inlet: transition at
    eta_st = 2 omega_s/(1 + 2 omega_s)).
    """
    if eta_s >= 1.0:
        return omega_critical_ratio(omega)
    if eta_s <= 2.0 * omega / (1.0 + 2.0 * omega):
        return eta_s
    w, es = omega, eta_s

    def slope(eta):
        n = 2.0 * (1.0 - es) + 2.0 * (w * es * math.log(es / eta) - (w - 1.0) * (es - eta))
        dn = 2.0 * (-w * es / eta + (w - 1.0))
        d = w * (es / eta - 1.0) + 1.0
        dd = -w * es / (eta * eta)
        return -(dn * d - 2.0 * n * dd)   # rises through zero at the maximum of G

    lo, hi = 1e-12, es * (1.0 - 1e-12)
    return root_on_bracket(slope, lo, hi, slope(lo), slope(hi), ETA_TOL)


def omega_mass_flux(P0: float, rho0: float, omega: float, Pa: float, eta_s: float = 1.0
                    ) -> tuple[float, bool]:
    """Mass flux through the relief valve's throat by the omega method.

        choked (Pa <= eta_c P0):  G = G(eta_c)   (= eta_c sqrt(P0 rho0/omega), eta_s = 1)
        subcritical:              G = G(Pa/P0)

    Parameters
    ----------
    P0 : inlet pressure [Pa]; rho0 : inlet density [kg/m3]
    omega : omega (omega_s for a subcooled inlet) [-]
    Pa : back pressure [Pa]
    eta_s : saturation pressure ratio Ps/P0 [-] (1: saturated or two-phase inlet)

    Returns
    -------
    (G [kg/(m2 s)], choked)

    Source: API 520 Part I, 10th ed., Annex C; Leung (1986, 1995).
    """
    if Pa >= P0:
        return 0.0, False
    eta_c = omega_choke_ratio(omega, eta_s)
    eta_a = Pa / P0
    if eta_a <= eta_c:
        return omega_flux_at(P0, rho0, omega, eta_c, eta_s), True
    return omega_flux_at(P0, rho0, omega, eta_a, eta_s), False


# ------------------------------------------------------- omega from the fluid

def flash_density(fluid, p: float, s: float | None = None, h: float | None = None) -> float:
    """Density [kg/m3] after an equilibrium flash to pressure p [Pa] at the entropy
    ``s`` [J/(kg K)] (isentropic) or the enthalpy ``h`` [J/kg] (isenthalpic), by the
    lever rule between the saturated phases at p; ``None`` outside the two-phase region."""
    liq = fluid.saturated_liquid_at_p(p)
    vap = fluid.saturated_vapour_at_p(p)
    if s is not None:
        x = (s - liq.s) / (vap.s - liq.s)
    else:
        x = (h - liq.h) / (vap.h - liq.h)
    if not 0.0 <= x <= 1.0:
        return None
    v = 1.0 / liq.rho + x * (1.0 / vap.rho - 1.0 / liq.rho)
    return 1.0 / v


def omega_of_state(fluid, up, isentropic: bool = True):
    """The omega parameter of an inlet state by the two-point definition of API 520
    Part I Annex C, with the second state from the fluid.

    * two-phase or saturated-liquid inlet at P0: rho9 after a flash to 0.9 P0;
    * subcooled liquid at (P0, T0): Ps = saturation pressure at T0, rho9 after a
      flash of the saturated liquid at T0 to 0.9 Ps, and omega_s = 9 (rho0/rho9 - 1)
      with rho0 the inlet liquid's density.

    The flash is isentropic (``isentropic=True``, as the homogeneous-equilibrium
    nozzle) or isenthalpic.

    Returns
    -------
    (omega [-], eta_s = Ps/P0 [-]) or ``None`` when the inlet cannot flash (gas,
    supercritical, or no saturation pressure).
    """
    p0 = up.p
    if up.phase == "liquid" and not up.two_phase:   # subcooled (compressed) liquid
        if up.T >= fluid.t_crit:
            return None
        ps = LiquidProperties(fluid.name).saturation_pressure(up.T)
        sat = fluid.saturated_liquid_at_p(ps)
        ps = sat.p
        if ps >= p0:
            ps = p0
        ref = sat
    elif up.two_phase and up.quality < 1.0:
        ps, ref = p0, up
    else:
        return None
    rho9 = flash_density(fluid, OMEGA_POINT * ps, s=ref.s if isentropic else None,
                         h=None if isentropic else ref.h)
    if rho9 is None:
        return None
    return omega_two_point(up.rho, rho9), ps / p0


__all__ = ["OMEGA_POINT", "flash_density", "omega_choke_ratio", "omega_critical_ratio",
           "omega_flux_at", "omega_mass_flux", "omega_of_state", "omega_two_point"]
