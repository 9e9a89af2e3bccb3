"""Heat transfer from a wall into boiling liquid, and across a horizontal liquid surface.

Small pure functions, SI in and out, used by the separated vapour and liquid zones
(:mod:`cvsim.zones`) and the wall split at the liquid level
(:mod:`cvsim.heat.zoned_wall`).
"""
from __future__ import annotations

from .convection import G, Validity

#: Rohsenow's nucleate-boiling correlation: defaults of the surface-fluid constant and
#: the Prandtl-number exponent (C_sf = 0.013 is the value commonly taken when no
#: measurement of the surface-fluid pair exists, n = 1.7 for fluids other than water;
#: Incropera et al., *Fundamentals of Heat and Mass Transfer*, 7th ed., sec. 10.4.1 and
#: Table 10.1; the ``ht`` library uses the same defaults)
ROHSENOW_CSF = 0.013
ROHSENOW_N = 1.7

HORIZONTAL_SURFACE_UNSTABLE = Validity(
    "natural convection at a horizontal surface, unstable side (McAdams)",
    "McAdams, Heat Transmission, 3rd ed. (1954); Incropera 7th ed. eqs. 9.30-9.31",
    {"Rayleigh number": (1e4, 1e11)})
HORIZONTAL_SURFACE_STABLE = Validity(
    "natural convection at a horizontal surface, stable side (McAdams)",
    "McAdams, Heat Transmission, 3rd ed. (1954); Incropera 6th ed. eq. 9.32",
    {"Rayleigh number": (1e5, 1e10)})


def nu_horizontal_surface(Ra: float, unstable: bool) -> float:
    """Mean Nusselt number of natural convection at a horizontal isothermal surface.

    Unstable side (the upper face of a hot surface, the lower face of a cold one):
        Nu = 0.54 Ra^(1/4)  (Ra <= 1e7),   Nu = 0.15 Ra^(1/3)  (Ra > 1e7)
    Stable side (the lower face of a hot surface, the upper face of a cold one):
        Nu = 0.27 Ra^(1/4)

    with Nu and Ra on the length L = A/P (area over perimeter of the surface).

    Parameters
    ----------
    Ra : Rayleigh number on L [-]
    unstable : the fluid next to the surface is pushed away from it by buoyancy

    Validity: Ra 1e4 to 1e11 (unstable, Pr >= 0.7 for the 1/4 law), 1e5 to 1e10
    (stable); beyond them an extrapolation (the run warns).

    Source: McAdams, *Heat Transmission*, 3rd ed., McGraw-Hill (1954); as printed in
    Incropera et al., *Fundamentals of Heat and Mass Transfer*, 7th ed., eqs. 9.30-9.31,
    and 6th ed., eq. 9.32 (the stable side, 1e5 to 1e10).

    >>> round(nu_horizontal_surface(3.21e8 * 5.54, True), 2)   # ht library's example
    181.73
    """
    if unstable:
        return 0.54 * Ra**0.25 if Ra <= 1e7 else 0.15 * Ra ** (1.0 / 3.0)
    return 0.27 * Ra**0.25


def rohsenow_coefficient(dT_excess: float, mu_l: float, h_fg: float, rho_l: float,
                         rho_v: float, sigma: float, cp_l: float, k_l: float,
                         C_sf: float = ROHSENOW_CSF, n: float = ROHSENOW_N,
                         g: float = G) -> float:
    """Nucleate pool-boiling heat transfer coefficient h = q/dT_e [W/(m2 K)] (Rohsenow).

        q = mu_l h_fg [g (rho_l - rho_v)/sigma]^(1/2) [cp_l dT_e / (C_sf h_fg Pr_l^n)]^3

    Parameters
    ----------
    dT_excess : wall superheat T_wall - T_sat [K] (<= 0: no boiling, h = 0)
    mu_l : liquid viscosity [Pa s];  h_fg : enthalpy of vaporisation [J/kg]
    rho_l, rho_v : saturated liquid and vapour densities [kg/m3]
    sigma : surface tension [N/m];  cp_l : liquid heat capacity [J/(kg K)]
    k_l : liquid conductivity [W/(m K)] (for Pr_l = cp_l mu_l / k_l)
    C_sf, n : surface-fluid constant and Prandtl exponent [-]

    Validity: nucleate boiling on clean surfaces, below the critical heat flux
    (:func:`zuber_critical_heat_flux`); the correlation's scatter is large (+-100 % in
    q for a given superheat is often quoted).

    Source: Rohsenow, Trans. ASME 74 (1952) 969; Incropera et al., *Fundamentals of
    Heat and Mass Transfer*, 7th ed., eq. 10.5.
    """
    if not dT_excess > 0.0:
        return 0.0
    Pr = cp_l * mu_l / k_l
    q = (mu_l * h_fg * (g * (rho_l - rho_v) / sigma) ** 0.5
         * (cp_l * dT_excess / (C_sf * h_fg * Pr**n)) ** 3)
    return q / dT_excess


def zuber_critical_heat_flux(h_fg: float, rho_l: float, rho_v: float, sigma: float,
                             g: float = G) -> float:
    """Critical (maximum) heat flux of nucleate pool boiling [W/m2] (Zuber).

        q_max = 0.149 h_fg rho_v [sigma g (rho_l - rho_v) / rho_v^2]^(1/4)

    Source: Zuber, AEC Report AECU-4439 (1959); Incropera et al., 7th ed., eq. 10.7
    (constant 0.149 of Lienhard & Dhir).
    """
    return 0.149 * h_fg * rho_v * (sigma * g * (rho_l - rho_v) / rho_v**2) ** 0.25


__all__ = ["HORIZONTAL_SURFACE_STABLE", "HORIZONTAL_SURFACE_UNSTABLE", "ROHSENOW_CSF",
           "ROHSENOW_N", "nu_horizontal_surface", "rohsenow_coefficient",
           "zuber_critical_heat_flux"]
