"""Vapour and liquid of one vessel as two zones at their own temperatures.

A vessel with ``phases: {model: separated}`` keeps its total mass m and internal
energy U in the model's vessel rows and, in a block of its own, the liquid zone's
mass m_l and internal energy U_l; the vapour zone is the rest, m_v = m - m_l,
U_v = U - U_l. Each zone is in internal equilibrium (the vapour zone may carry
condensate drops, quality x_v < 1; the liquid zone vapour bubbles, x_l > 0).

**One pressure, two temperatures.** The liquid zone's volume V_l solves

    p(m_l/V_l, U_l/m_l) = p(m_v/(V - V_l), U_v/m_v)

by Newton steps on V_l with the slope -(K_l/V_l + K_v/V_v), K = rho c^2 = rho
(dp/drho)_u + (p/rho)(dp/du)_rho (the zones' stiffnesses, exact in both regions),
kept inside a shrinking bracket and stopped on the residual |p_l - p_v| <=
SPLIT_RTOL p; warm-started from the liquid's last density.

**Between the zones** (all rates positive from the liquid to the vapour unless said):

* rain-out: drops of the vapour zone settle at their Stokes velocity
  w = g (rho_l - rho_v) d^2/(18 mu_v) across the vapour's height H_v:
  r = (1 - x_v) m_v w / H_v [kg/s], carried at the saturated liquid's enthalpy h_f;
* boil-off: bubbles of the liquid zone rise at u_b = C (g sigma (rho_l - rho_v)/
  rho_l^2)^(1/4) across the liquid's height H_l: b = x_l m_l u_b / H_l, at h_g;
* the interface at the saturation temperature T_s(p) receives q_v = h_v A_i (T_v - T_s)
  from the vapour and q_l = h_l A_i (T_l - T_s) from the liquid (natural convection at a
  horizontal surface, :func:`cvsim.heat.boiling.nu_horizontal_surface`); their sum
  evaporates Gamma = (q_v + q_l)/(h_g - h_f) (negative: condenses), the two-film model
  of a massless interface.

Liquid zone: dm_l/dt = sum(liquid streams) + r - b - Gamma,
dU_l/dt = E_l - p dV_l/dt with E_l the liquid streams' enthalpies, the heat terms'
liquid parts, r h_f - b h_g - Gamma h_f - q_l. The boundary work p dV_l/dt follows from
keeping the pressures equal: with a = (dp/drho)_u mdot/V + (dp/du)_rho (E - u mdot)/m
and b = K/V of each zone,

    dV_l/dt = (a_l - a_v)/(b_l + b_v)

(differentiate the constraint in time; dV_v = -dV_l, dU_v gains what dU_l loses).
The totals see only streams and heat: exchanges between the zones cancel there.

Sources: the zone balances are those of a control volume with a moving boundary
(Cengel & Boles, *Thermodynamics*, 9th ed., ch. 5); Stokes' settling velocity (Bird,
Stewart & Lightfoot, *Transport Phenomena*, 2nd ed., eq. 2.6-17, valid at drop Reynolds
numbers below about 1); the bubble rise velocity of Harmathy (AIChE J. 6 (1960) 281),
C = 1.53 for churn-turbulent swarms (Wallis, *One-dimensional Two-phase Flow*, 1969);
the two-film interface model as in published two-zone blowdown models (e.g. Haque,
Richardson, Saville & Chamberlain, Trans IChemE B 70 (1992) 3 and 10; Speranza &
Terenzi, Ind. Eng. Chem. Res. 44 (2005)), whose own correlations and parameters we could
not read: those used here are the ones cited above, with their parameters exposed.
"""
from __future__ import annotations

import math

from .errors import StateError
from .fluid import NAN
from .heat.boiling import (HORIZONTAL_SURFACE_STABLE, HORIZONTAL_SURFACE_UNSTABLE,
                           nu_horizontal_surface)
from .heat.convection import G, RangeWatch, prandtl, rayleigh
from .heat.walls import WATCH_MIN_DIFFERENCE
from .outlets import F_BOTTOM, F_TOP, side_liquid_share

#: the pressures of the two zones agree to |p_l - p_v| <= SPLIT_RTOL p
SPLIT_RTOL = 1e-11
MAX_SPLIT_ITERATIONS = 60
#: below this share of the vessel's mass the liquid zone is a trace: it is taken as
#: saturated liquid at the vapour's pressure (its own U_l/m_l, the ratio of two
#: numbers near the integrator's absolute tolerance, is not used) and exchanges only
#: rain-out with the vapour
LIQUID_TRACE = 1e-6
#: heights in the rain-out and boil-off rates are at least this share of the vessel's
HEIGHT_FLOOR = 0.01
#: a vapour zone smaller than this share of the volume ends the run (liquid-full)
VAPOUR_MIN = 1e-6


def stokes_velocity(d: float, rho_l: float, rho_v: float, mu_v: float,
                    g: float = G) -> float:
    """Settling velocity of a drop in a gas by Stokes' law [m/s].

        w = g (rho_l - rho_v) d^2 / (18 mu_v)

    Parameters: d drop diameter [m]; rho_l, rho_v densities [kg/m3]; mu_v gas
    viscosity [Pa s]. Valid for drop Reynolds numbers rho_v w d/mu_v below about 1
    (Bird, Stewart & Lightfoot, *Transport Phenomena*, 2nd ed., eq. 2.6-17).

    >>> round(stokes_velocity(1e-4, 1000.0, 1.2, 1.8e-5), 4)   # 0.1 mm water drop in air
    0.3025
    """
    return g * (rho_l - rho_v) * d * d / (18.0 * mu_v)


def bubble_rise_velocity(sigma: float, rho_l: float, rho_v: float, C: float = 1.53,
                         g: float = G) -> float:
    """Rise velocity of vapour bubbles in a liquid [m/s] (Harmathy).

        u_b = C (g sigma (rho_l - rho_v) / rho_l^2)^(1/4)

    C = 1.53 (Harmathy, AIChE J. 6 (1960) 281: single bubbles in the distorted regime,
    the value taken for churn-turbulent swarms in drift-flux models, Wallis,
    *One-dimensional Two-phase Flow*, 1969). sigma [N/m], densities [kg/m3].

    >>> round(bubble_rise_velocity(0.072, 1000.0, 0.6), 4)   # air-water: about 0.25 m/s
    0.2521
    """
    return C * (g * sigma * (rho_l - rho_v) / (rho_l * rho_l)) ** 0.25


class ZonedState:
    """The state of a vessel held as two zones, with the attributes of
    :class:`cvsim.fluid.State` for the whole contents (mass-weighted specific values,
    the vapour zone's temperature as ``T``, ``liquid_fraction`` the liquid zone's share
    of the volume, ``quality`` the vapour mass fraction of the contents, NaN while no
    liquid is held) and the zones themselves."""

    __slots__ = ("rho", "T", "p", "u", "h", "s", "cp", "cv", "c", "quality", "phase",
                 "liquid_fraction", "vapour", "liquid", "V_l", "level", "wetted_share",
                 "dshare_dV", "sat", "slopes", "rates", "trace", "m_l", "u_l", "m_v", "u_v")

    zoned = True

    @property
    def two_phase(self) -> bool:
        return self.quality == self.quality

    @property
    def gamma(self) -> float:
        return NAN

    def __repr__(self) -> str:
        tl = f"{self.liquid.T:.6g} K" if self.liquid is not None else "none"
        return (f"ZonedState(p={self.p:.6g} Pa, T_vapour={self.T:.6g} K, T_liquid={tl}, "
                f"liquid share={self.liquid_fraction:.4g})")


class SaturationProperties:
    """Saturated liquid and vapour properties at a pressure, and liquid-film properties,
    from CoolProp with an AbstractState of their own (the last of each kept)."""

    def __init__(self, fluid):
        import CoolProp.CoolProp as CP
        self._CP = CP
        self._as = CP.AbstractState("HEOS", fluid.name)
        self._key = self._value = None
        self._film_key = self._film_value = None

    def at(self, p: float) -> dict:
        """rho_f, rho_g, mu_f, mu_g, k_f, cp_f, sigma, h_f, h_g, T_s at pressure p [Pa]."""
        if p == self._key:
            return self._value
        a, CP = self._as, self._CP
        try:
            a.update(CP.PQ_INPUTS, p, 0.0)
            d = {"T_s": a.T(), "rho_f": a.rhomass(), "h_f": a.hmass(), "mu_f": a.viscosity(),
                 "k_f": a.conductivity(), "cp_f": a.cpmass(), "sigma": a.surface_tension()}
            a.update(CP.PQ_INPUTS, p, 1.0)
            d.update(rho_g=a.rhomass(), h_g=a.hmass(), mu_g=a.viscosity())
        except ValueError as exc:
            raise StateError(f"saturation properties failed at p = {p:.6g} Pa: {exc}") from None
        self._key, self._value = p, d
        return d

    def liquid_film(self, p: float, T_f: float) -> tuple[float, float, float, float, float]:
        """(rho, cp, mu, k, beta) of the liquid at p [Pa] and the film temperature T_f [K];
        the saturated liquid where (p, T_f) is not liquid."""
        key = (p, T_f)
        if key == self._film_key:
            return self._film_value
        a, CP = self._as, self._CP
        try:
            a.update(CP.PT_INPUTS, p, T_f)
            if a.phase() not in (CP.iphase_liquid, CP.iphase_supercritical_liquid):
                a.update(CP.PQ_INPUTS, p, 0.0)
        except ValueError:
            a.update(CP.PQ_INPUTS, p, 0.0)
        value = (a.rhomass(), a.cpmass(), a.viscosity(), a.conductivity(),
                 a.isobaric_expansion_coefficient())
        self._film_key, self._film_value = key, value
        return value


def interface_length(tank, h: float, area: float) -> float:
    """Characteristic length A/P [m] of the liquid's surface at height h [m]: a circle
    (vertical vessels, spheres) or a rectangle of the chord's width (horizontal)."""
    if area <= 0.0:
        return 0.0
    if tank.orientation == "vertical":
        return 0.5 * math.sqrt(area / math.pi)
    d = tank.R - h
    chord = 2.0 * math.sqrt(max(tank.R**2 - d * d, 0.0))
    if chord <= 0.0:
        return 0.0
    return area / (2.0 * (chord + area / chord))


class ZonedVessel:
    """Run-time of one vessel held as separated zones (see the module docstring).

    ``offset``: row of m_l in the state vector (U_l at ``offset + 1``)."""

    n_states = 2

    def __init__(self, definition, vrt, fluid, offset: int, gas_props):
        from .heat.level import tank
        self.d = definition
        self.z = definition.zones
        self.name = definition.name
        self.vrt = vrt
        self.fluid = fluid
        self.offset = offset
        g = definition.geometry
        self.tank = tank(g.kind, g.inner_diameter, g.length or 0.0, g.heads, g.orientation)
        self.inside_area = self.tank.area
        self.V = definition.volume
        self.sat = SaturationProperties(fluid)
        self.gas_props = gas_props
        self.watch = RangeWatch()
        self._Vl = None
        self._Tv = self._Tl = None
        self._level = None
        self.reynolds_max = (0.0, 0.0)
        self.trace_times = []

    # ------------------------------------------------------------ set-up
    def initial(self, state) -> tuple[float, float]:
        """(m_l, U_l) of the initial contents: the saturated liquid of a two-phase state
        (its share of the volume), none for gas; see :meth:`check_initial`."""
        if not state.two_phase:
            return 0.0, 0.0
        liq = self.fluid.saturated_liquid_at_p(state.p)
        m_l = state.liquid_fraction * self.V * liq.rho
        return m_l, m_l * liq.u

    def check_initial(self, state) -> None:
        if state.phase == "liquid":
            raise StateError("separated zones need a vapour space; the initial contents are "
                             "liquid: give liquid_fraction below 100 % or use the "
                             "equilibrium model", where=f"vessel '{self.name}'", time=0.0)

    # ------------------------------------------------------------ state
    def state(self, m: float, U: float, m_l: float, U_l: float) -> ZonedState:
        """The zones and the transfers between them from the totals and the liquid's
        (m_l, U_l)."""
        f = self.fluid
        V = self.V
        z = ZonedState()
        z.m_l, z.m_v = m_l, m - m_l
        trace = m_l <= LIQUID_TRACE * m
        z.trace = trace
        if m_l <= 0.0 or trace:
            # the vapour zone fills the vessel, apart from a trace of saturated liquid
            if m_l > 0.0:
                vap, V_l = self._trace_split(m, U, m_l, U_l)
            else:
                vap = f.state_du(m / V, U / m, self._Tv)
                V_l = 0.0
            self._Tv = vap.T
            z.vapour, z.liquid, z.V_l = vap, None, V_l
            z.m_v, z.u_v = m - m_l, (U - U_l) / (m - m_l)
            z.u_l = U_l / m_l if m_l > 0.0 else NAN
            z.slopes = (f.pressure_derivatives(vap), None)
        else:
            z.u_l = U_l / m_l
            z.u_v = (U - U_l) / z.m_v
            vap, liq, V_l, slopes = self._split(z.m_v, z.u_v, m_l, z.u_l)
            z.vapour, z.liquid, z.V_l, z.slopes = vap, liq, V_l, slopes
        vap, liq = z.vapour, z.liquid
        z.p = vap.p
        z.T = vap.T
        z.rho = m / V
        z.u = U / m
        if liq is not None:
            z.h = (z.m_v * vap.h + m_l * liq.h) / m
            z.s = (z.m_v * vap.s + m_l * liq.s) / m
            xv = vap.quality if vap.two_phase else 1.0
            xl = liq.quality if liq.two_phase else 0.0
            z.quality = (z.m_v * xv + m_l * xl) / m
            z.phase = "two-phase"
        else:
            z.h, z.s = vap.h, vap.s
            z.quality = vap.quality if (vap.two_phase or m_l > 0.0) else NAN
            if m_l > 0.0 and z.quality != z.quality:
                z.quality = z.m_v / m
            z.phase = "two-phase" if z.quality == z.quality else vap.phase
        z.cp = z.cv = z.c = NAN
        z.liquid_fraction = V_l / V
        self._geometry(z)
        z.sat = self.sat.at(z.p) if z.phase == "two-phase" or vap.two_phase else None
        z.rates = self._transfers(z)
        return z

    def _trace_split(self, m, U, m_l, U_l):
        """A trace of liquid: saturated liquid at the vapour's pressure, the vapour in
        the rest of the volume (one fixed-point pass on the liquid's volume)."""
        f = self.fluid
        V_l = 0.0
        vap = None
        for _ in range(3):
            vap = f.state_du((m - m_l) / (self.V - V_l), (U - U_l) / (m - m_l), self._Tv)
            if vap.p >= f.p_crit:
                break
            V_l = m_l / f.saturated_liquid_at_p(vap.p).rho
        return vap, V_l

    def _split(self, m_v: float, u_v: float, m_l: float, u_l: float):
        """(vapour, liquid, V_l, slopes) at equal pressures (see the module docstring)."""
        f = self.fluid
        V = self.V
        lo, hi = 0.0, V
        if self._Vl is not None and self._Vl[1] > 0.0:
            Vl = m_l / self._Vl[1]   # the liquid's last density
        else:
            try:   # the saturated liquid's density at the pressure of the vapour alone
                Vl = m_l / f.saturated_liquid_at_p(f.state_du(m_v / V, u_v, self._Tv).p).rho
            except StateError:
                Vl = 0.5 * V
        if not 0.0 < Vl < V:
            Vl = 0.5 * V
        best = None
        for _ in range(MAX_SPLIT_ITERATIONS):
            try:
                liq = f.state_du(m_l / Vl, u_l, self._Tl)
            except StateError:
                lo = Vl             # too dense a liquid: give it more room
                Vl = 0.5 * (lo + hi)
                continue
            if V - Vl < VAPOUR_MIN * V:
                raise StateError(
                    "the vapour zone has vanished (the liquid fills the vessel), which the "
                    "separated model cannot follow; use the equilibrium model "
                    "(phases: {model: equilibrium}) for a vessel that goes liquid-full")
            vap = f.state_du(m_v / (V - Vl), u_v, self._Tv)
            r = liq.p - vap.p
            sl = f.pressure_derivatives(liq)
            sv = f.pressure_derivatives(vap)
            if abs(r) <= SPLIT_RTOL * max(abs(liq.p), abs(vap.p)):
                self._Vl = (Vl, m_l / Vl)
                self._Tl, self._Tv = liq.T, vap.T
                return vap, liq, Vl, (sv, sl)
            if best is None or abs(r) < best[0]:
                best = (abs(r), vap, liq, Vl, (sv, sl))
            if r > 0.0:
                lo = Vl
            else:
                hi = Vl
            K_l = liq.rho * sl[0] + liq.p / liq.rho * sl[1]
            K_v = vap.rho * sv[0] + vap.p / vap.rho * sv[1]
            slope = -(K_l / Vl + K_v / (V - Vl))
            Vn = Vl - r / slope if slope < 0.0 else NAN
            if not lo < Vn < hi:
                Vn = 0.5 * (lo + hi)
            if Vn == Vl or hi - lo <= 1e-15 * V:
                break
            Vl = Vn
        if best is not None and best[0] <= 1e3 * SPLIT_RTOL * best[1].p:
            # the bracket has shrunk to adjacent floating-point volumes (a stiff liquid)
            _, vap, liq, Vl, slopes = best
            self._Vl = (Vl, m_l / Vl)
            return vap, liq, Vl, slopes
        raise StateError(f"the volumes of the vapour and liquid zones could not be found at "
                         f"equal pressures (vapour {m_v:.6g} kg, {u_v:.6g} J/kg; liquid "
                         f"{m_l:.6g} kg, {u_l:.6g} J/kg)")

    def _geometry(self, z: ZonedState) -> None:
        """Level, interface area, the inside area's wetted share and its rate with V_l."""
        t = self.tank
        H = t.height
        if z.V_l <= 0.0:
            z.level, z.wetted_share, z.dshare_dV = 0.0, 0.0, 0.0
            return
        h = t.level(z.V_l)
        z.level = h
        A = self.inside_area
        z.wetted_share = min(max(t.area_below(h) / A, 0.0), 1.0)
        dh = 1e-6 * H
        a, b = max(h - dh, 0.0), min(h + dh, H)
        free = t.free_surface(h)
        if b > a and free > 0.0:
            dA = (t.area_below(b) - t.area_below(a)) / (b - a)
            z.dshare_dV = dA / (A * free)
        else:
            z.dshare_dV = 0.0

    # ------------------------------------------------------------ transfers
    def _transfers(self, z: ZonedState) -> dict:
        """Rain-out, boil-off, interface heat and evaporation [kg/s, W]."""
        vap, liq = z.vapour, z.liquid
        out = {"rain": 0.0, "boil": 0.0, "evaporation": 0.0, "q_vapour": 0.0,
               "q_liquid": 0.0, "h_vapour": 0.0, "h_liquid": 0.0, "Ra_v": NAN, "Ra_l": NAN}
        if z.sat is None:
            return out
        s = z.sat
        zp = self.z
        H = self.tank.height
        if vap.two_phase:
            w = stokes_velocity(zp.droplet_diameter, s["rho_f"], s["rho_g"], s["mu_g"])
            out["rain"] = (1.0 - vap.quality) * z.m_v * w / max(H - z.level, HEIGHT_FLOOR * H)
            out["drop_reynolds"] = s["rho_g"] * w * zp.droplet_diameter / s["mu_g"]
        if liq is None:
            return out
        if liq.two_phase:
            ub = bubble_rise_velocity(s["sigma"], s["rho_f"], s["rho_g"],
                                      zp.bubble_rise_coefficient)
            out["boil"] = liq.quality * z.m_l * ub / max(z.level, HEIGHT_FLOOR * H)
        A = self.tank.free_surface(z.level)
        L = interface_length(self.tank, z.level, A)
        Ts = s["T_s"]
        if A > 0.0 and L > 0.0:
            dTv = vap.T - Ts
            if dTv != 0.0:
                rho, cp, mu, k, beta = self.gas_props.film(vap, Ts)
                Ra = rayleigh(abs(beta), dTv, L, rho, mu, k, cp)
                # vapour above the interface: unstable when the vapour is colder
                hv = zp.interface_factor * nu_horizontal_surface(Ra, dTv < 0.0) * k / L
                out["q_vapour"], out["h_vapour"] = hv * A * dTv, hv
                if abs(dTv) > WATCH_MIN_DIFFERENCE:
                    out["Ra_v"] = Ra
                out["unstable_v"] = dTv < 0.0
            dTl = liq.T - Ts
            if dTl != 0.0:
                rho, cp, mu, k, beta = self.sat.liquid_film(z.p, 0.5 * (liq.T + Ts))
                Ra = rayleigh(abs(beta), dTl, L, rho, mu, k, cp)
                # liquid below the interface: unstable when the liquid is warmer
                hl = zp.interface_factor * nu_horizontal_surface(Ra, dTl > 0.0) * k / L
                out["q_liquid"], out["h_liquid"] = hl * A * dTl, hl
                if abs(dTl) > WATCH_MIN_DIFFERENCE:
                    out["Ra_l"] = Ra
                out["unstable_l"] = dTl > 0.0
                out["Pr_l"] = prandtl(mu, k, cp)
        out["evaporation"] = (out["q_vapour"] + out["q_liquid"]) / (s["h_g"] - s["h_f"])
        return out

    def liquid_rates(self, z: ZonedState) -> tuple[float, float]:
        """(dm_l/dt, energy into the liquid zone [W]) of the transfers between the zones
        (the vapour zone gets the opposite: the totals do not change)."""
        r = z.rates
        if z.sat is None:
            return 0.0, 0.0
        s = z.sat
        mdot = r["rain"] - r["boil"] - r["evaporation"]
        e = (r["rain"] * s["h_f"] - r["boil"] * s["h_g"] - r["evaporation"] * s["h_f"]
             - r["q_liquid"])
        return mdot, e

    def volume_rate(self, z: ZonedState, mdot: float, U_dot: float, mdot_l: float,
                    E_l: float) -> float:
        """dV_l/dt [m3/s] that keeps the zones' pressures equal (module docstring), from
        the totals' rates and the liquid's mass rate and energy rate without work."""
        if z.liquid is None:   # none or a trace: saturated liquid at the pressure
            return mdot_l / z.sat["rho_f"] if z.sat is not None else 0.0
        vap, liq = z.vapour, z.liquid
        (Pr_v, Pu_v), (Pr_l, Pu_l) = z.slopes
        V_l, V_v = z.V_l, self.V - z.V_l
        mdot_v, E_v = mdot - mdot_l, U_dot - E_l
        a_l = Pr_l * mdot_l / V_l + Pu_l * (E_l - z.u_l * mdot_l) / z.m_l
        a_v = Pr_v * mdot_v / V_v + Pu_v * (E_v - z.u_v * mdot_v) / z.m_v
        b_l = Pr_l * liq.rho / V_l + Pu_l * z.p / z.m_l
        b_v = Pr_v * vap.rho / V_v + Pu_v * z.p / z.m_v
        return (a_l - a_v) / (b_l + b_v)

    # ------------------------------------------------------------ outlets
    def drawn(self, z: ZonedState, draws):
        """(state drawn, share of its mass from the liquid zone) through an outlet at the
        top (``vapour``), bottom (``liquid``) or side (the share of the volume below it,
        :func:`cvsim.outlets.drawn_by`); near liquid-full (top), dry (bottom) or the
        side outlet's height the outlet draws a mixture of the zones' streams, linear in
        the liquid share as :mod:`cvsim.outlets` (its F_TOP, F_BOTTOM, BAND)."""
        w = liquid_share_drawn(draws, z.liquid_fraction, z.liquid is not None)
        if w == 0.0:
            return z.vapour, 0.0
        if w == 1.0:
            return z.liquid, 1.0
        h = (1.0 - w) * z.vapour.h + w * z.liquid.h
        return self.fluid.state_ph(z.p, h), w

    # ------------------------------------------------------------ outputs
    def columns(self) -> list[tuple[str, str, str]]:
        n = self.name
        return [(f"{n}.vapour_temperature", "K", "zones"),
                (f"{n}.liquid_temperature", "K", "zones"),
                (f"{n}.interface_temperature", "K", "zones"),
                (f"{n}.liquid_mass", "kg", "zones"),
                (f"{n}.liquid_specific_internal_energy", "J/kg", "zones"),
                (f"{n}.liquid_volume", "m3", "zones"),
                (f"{n}.vapour_quality_of_vapour_zone", "-", "zones"),
                (f"{n}.vapour_quality_of_liquid_zone", "-", "zones"),
                (f"{n}.rain_out", "kg/s", "zones"),
                (f"{n}.boil_off", "kg/s", "zones"),
                (f"{n}.interface_evaporation", "kg/s", "zones"),
                (f"{n}.interface_heat_from_vapour", "W", "zones"),
                (f"{n}.interface_heat_from_liquid", "W", "zones"),
                (f"{n}.heat_into_liquid", "W", "zones")]

    def values(self, t: float, z: ZonedState, heat_into_liquid: float) -> list[float]:
        r = z.rates
        liq = z.liquid
        vap = z.vapour
        self._watch(t, z)
        return [vap.T, liq.T if liq is not None else NAN,
                z.sat["T_s"] if z.sat is not None else NAN,
                z.m_l, z.u_l if z.m_l > 0.0 else NAN, z.V_l,
                vap.quality if vap.two_phase else (1.0 if vap.phase != "liquid" else 0.0),
                (liq.quality if liq.two_phase else 0.0) if liq is not None else NAN,
                r["rain"], r["boil"], r["evaporation"], r["q_vapour"], r["q_liquid"],
                heat_into_liquid]

    def _watch(self, t: float, z: ZonedState) -> None:
        r = z.rates
        for key, unstable_key in (("Ra_v", "unstable_v"), ("Ra_l", "unstable_l")):
            Ra = r.get(key, NAN)
            if Ra == Ra and Ra > 0.0:
                v = (HORIZONTAL_SURFACE_UNSTABLE if r.get(unstable_key) else
                     HORIZONTAL_SURFACE_STABLE)
                self.watch.see(v, "Rayleigh number", Ra, t)
        re = r.get("drop_reynolds", 0.0)
        if re > self.reynolds_max[0]:
            self.reynolds_max = (re, t)
        if z.trace and z.m_l > 0.0:
            self.trace_times.append(t)

    def warnings(self) -> list[str]:
        where = f"vessel '{self.name}' interface"
        out = self.watch.warnings(where)
        re, t = self.reynolds_max
        if re > 1.0:
            out.append(f"vessel '{self.name}': the rain-out drops ({self.z.droplet_diameter * 1e6:.3g} "
                       f"um) settle at a Reynolds number up to {re:.3g} (t = {t:.4g} s), above "
                       "the about 1 of Stokes' law: their settling velocity, and so the "
                       "rain-out rate, is overstated (a smaller droplet_diameter keeps it "
                       "within range)")
        return out

    def assumptions(self) -> list[str]:
        z = self.z
        return [
            f"Vessel '{self.name}': vapour and liquid as separated zones at one pressure and "
            "their own temperatures, each in internal equilibrium (drops in the vapour, "
            "bubbles in the liquid); streams entering the vessel join the vapour zone; a "
            "top outlet draws the vapour zone and a bottom outlet the liquid zone (mixed "
            "as the level comes within 2 % of the volume of the outlet).",
            f"Vessel '{self.name}': rain-out of drops of {z.droplet_diameter * 1e6:.3g} um at "
            "their Stokes velocity across the vapour's height; boil-off of bubbles at "
            f"{z.bubble_rise_coefficient:g} (g sigma drho/rho_l^2)^(1/4) (Harmathy) across the "
            "liquid's height; heat across the interface (at the saturation temperature) by "
            "natural convection at a horizontal surface (McAdams) on each side"
            + (f", times {z.interface_factor:g}" if z.interface_factor != 1.0 else "")
            + ", the sum evaporating or condensing at the interface (two-film model)."]


def liquid_share_drawn(draws, liquid_fraction: float, has_liquid: bool) -> float:
    """Mass share [-] of an outlet's stream that comes from the liquid zone: a top outlet
    (``vapour``) 0 up to a liquid share of the volume F_TOP, rising linearly to 1 at a
    full vessel; a bottom outlet (``liquid``) 1 down to F_BOTTOM, falling linearly to 0
    at an empty one; a side outlet (``draws`` the share of the volume below it) 0 below
    its band, 1 above it, linear across it (the rule of :mod:`cvsim.outlets` applied to
    the zones' streams)."""
    if not has_liquid:
        return 0.0
    f = liquid_fraction
    if draws == "liquid":
        return 1.0 if f >= F_BOTTOM else max(f / F_BOTTOM, 0.0)
    if draws != "vapour":
        return side_liquid_share(draws, f)
    return 0.0 if f <= F_TOP else min((f - F_TOP) / (1.0 - F_TOP), 1.0)


# ------------------------------------------------------------------ a run's figures

#: (key, column suffix, unit) of the zone figures integrated over the run
_MOVED = (("rain_out_kg", "rain_out"), ("boil_off_kg", "boil_off"),
          ("interface_evaporation_kg", "interface_evaporation"))


def run_figures(result, vessel: str) -> dict:
    """Figures of a vessel held as separated zones, from the run's public columns
    (empty for other vessels): lowest and highest vapour and liquid temperatures with
    their times; the mass moved between the zones (trapezoidal integrals of the rates
    over every recorded point and step); per wall part the coldest and hottest metal
    (any node) with time and place."""
    names = set(result.names())
    if f"{vessel}.liquid_temperature" not in names:
        return {}
    d: dict = {}
    for zone in ("vapour", "liquid"):
        col = f"{vessel}.{zone}_temperature"
        for kind in ("min", "max"):
            value, when = result.extreme(col, kind)
            if value == value:
                d[f"{kind}_{zone}_temperature_K"] = value
                d[f"{kind}_{zone}_temperature_time_s"] = when
    t = result.fine("time")
    for key, suffix in _MOVED:
        y = result.fine(f"{vessel}.{suffix}")
        ok = y == y
        d[key] = float(sum(0.5 * (y[ok][1:] + y[ok][:-1]) * (t[ok][1:] - t[ok][:-1])))
    for part in ("wetted", "unwetted"):
        prefix = f"{vessel}.wall.{part}."
        cols = [n for n in result.names() if n.startswith(prefix)
                and n.endswith("_temperature") and result.unit(n) == "K"]
        for kind in ("min", "max"):
            found = [(*result.extreme(c, kind), c) for c in cols]
            found = [f for f in found if f[0] == f[0]]
            if not found:
                continue
            value, when, col = (min if kind == "min" else max)(found, key=lambda f: f[0])
            d[f"{kind}_{part}_wall_temperature_K"] = value
            d[f"{kind}_{part}_wall_temperature_time_s"] = when
            d[f"{kind}_{part}_wall_temperature_where"] = col[len(prefix):-len("_temperature")]
    return d


def summary_lines(d: dict, time_text) -> list[str]:
    """Lines of the text summary for the figures of :func:`run_figures`."""
    def c(K):
        return f"{K - 273.15:.1f} degC"
    out = []
    for zone in ("vapour", "liquid"):
        if f"min_{zone}_temperature_K" in d:
            out.append(f"  {zone + ' zone':<11} min {c(d[f'min_{zone}_temperature_K'])} at "
                       f"{time_text(d[f'min_{zone}_temperature_time_s'])}; max "
                       f"{c(d[f'max_{zone}_temperature_K'])} at "
                       f"{time_text(d[f'max_{zone}_temperature_time_s'])}")
    for part in ("wetted", "unwetted"):
        if f"min_{part}_wall_temperature_K" in d:
            out.append(f"  {part + ' wall':<11} coldest {c(d[f'min_{part}_wall_temperature_K'])} "
                       f"at {time_text(d[f'min_{part}_wall_temperature_time_s'])} "
                       f"({d[f'min_{part}_wall_temperature_where']}); hottest "
                       f"{c(d[f'max_{part}_wall_temperature_K'])} at "
                       f"{time_text(d[f'max_{part}_wall_temperature_time_s'])} "
                       f"({d[f'max_{part}_wall_temperature_where']})")
    if "rain_out_kg" in d:
        out.append(f"  between zones  rain-out {d['rain_out_kg']:.4g} kg, boil-off "
                   f"{d['boil_off_kg']:.4g} kg, evaporated at the interface "
                   f"{d['interface_evaporation_kg']:.4g} kg (negative: condensed)")
    return out


__all__ = ["LIQUID_TRACE", "SPLIT_RTOL", "SaturationProperties", "ZonedState",
           "ZonedVessel", "bubble_rise_velocity", "interface_length",
           "liquid_share_drawn", "run_figures", "stokes_velocity", "summary_lines"]
