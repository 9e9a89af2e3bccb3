"""The wall of a vessel held as separated zones, split at the liquid level into a wetted
and an unwetted part.

Each part is the wall of :mod:`cvsim.heat.walls` (lumped or layered, the same layers
and nodes) over its share of the area: the wetted part over the share phi of the inside
area below the liquid level (:class:`cvsim.zones.ZonedState` ``wetted_share``), the
unwetted part over 1 - phi; conduction through the thickness of each part is that of
the whole wall times its share (1-D: no conduction along the wall between the parts).

States: the node energies of the wetted part E_w,i and of the unwetted part E_u,i
[J, from 0 K], then the heat from outside and the part of it from fire [J]. A part's
temperatures follow from its energy per unit share, e = E/phi (regularised as
(E + eps E_tot)/(phi + eps), eps = :data:`SHARE_EPS`, so a part of vanishing share takes
the wall's mean temperature).

**The split follows the level.** When the level rises (dphi/dt > 0) metal moves from
the unwetted to the wetted part with the unwetted part's energy per unit share, and the
other way when it falls:

    dE_w,i/dt = ... + phi' e_src,i,   dE_u,i/dt = ... - phi' e_src,i,
    e_src = e_u (phi' > 0) or e_w (phi' < 0)

so the wall's energy sum(E_w + E_u) changes only by heat (a linear invariant: the
run's energy balance closes to round-off). phi' = (dphi/dV_l) dV_l/dt with the liquid
zone's volume rate that keeps the zones' pressures equal (:mod:`cvsim.zones`).

**Inside.** Unwetted part: natural convection with the vapour zone, as a whole wall
(:mod:`cvsim.heat.walls`). Wetted part: natural convection in the liquid (the same
Churchill & Chu forms on the liquid's properties at the film temperature) combined
with nucleate boiling while the wall is above the saturation temperature (Rohsenow,
:func:`cvsim.heat.boiling.rohsenow_coefficient`):

    h = (h_nc^3 + h_nb^3)^(1/3)   on (T_wall - T_liquid)

(the asymptotic combination of Churchill & Usagi, AIChE J. 18 (1972) 1121; at small
superheat natural convection, at large boiling). The critical heat flux of Zuber is
watched and warned.

**Outside and fire.** Each part exchanges with the surroundings over its share of the
outside area. An API 521 pool fire's heat input Q = C1 F A_wet^0.82 (its wetted area
following the level) goes into the wetted part, the relief-load basis unchanged; the
exposed area above the level (the area within the fire's reach less the wetted area)
gets the flux that cvsim gives the wall of a gas-filled vessel, C1 F A_reach^0.82 /
A_reach (API 521's heat input spread over the whole area within reach: a screening
choice, as for gas-filled vessels; API 521's equation is for wetted walls). Exposed
areas exchange no heat with the surroundings while the fire burns. A flame's flux
(``fire: {model: flame}``) acts on each part's share of the exposed area at that
part's outside temperature.
"""
from __future__ import annotations

import math

import numpy as np

from .boiling import ROHSENOW_CSF, ROHSENOW_N, rohsenow_coefficient, zuber_critical_heat_flux
from .convection import NATURAL, prandtl, rayleigh
from .definitions import FlameExposure, PoolFire
from .fire import api521_pool_fire_heat, flame_heat_flux
from .walls import WallTerm, fire_equivalent_coefficient

#: regularisation of a part's energy per unit share (see the module docstring)
SHARE_EPS = 1e-7
PARTS = ("wetted", "unwetted")


class ZonedWallTerm(WallTerm):
    """Run-time wall of a vessel held as separated zones (see the module docstring)."""

    has_source = False  # each part states its own (columns heat.wall.<part>...)

    def __init__(self, definition, vessel_name: str, zoned):
        super().__init__(definition, vessel_name)
        self.zoned = zoned
        self.n_states = 2 * self.n_nodes + 2
        #: row of the liquid zone's internal energy (set by the model)
        self.liquid_row = None
        zp = zoned.z
        self.C_sf = getattr(zp, "boiling_surface_constant", ROHSENOW_CSF)
        self.n_pr = getattr(zp, "boiling_prandtl_exponent", ROHSENOW_N)
        self._sat = None
        self._pending = None
        self._last_z = None
        self._chf = (0.0, 0.0)

    def bind(self, model) -> None:
        super().bind(model)
        from ..zones import SaturationProperties
        self._sat = SaturationProperties(model.fluid)

    def initial_states(self, gas_state) -> list[float]:
        T0 = self.d.initial_temperature
        if T0 is None:
            T0 = gas_state.T
        self._T0 = T0
        t = self.zoned.tank
        lf = gas_state.liquid_fraction if gas_state.two_phase else 0.0
        phi = 0.0
        if lf > 0.0:
            phi = min(max(t.area_below(t.level(lf * t.volume)) / t.area, 0.0), 1.0)
        E = self.grid.energies(T0)
        return list(phi * E) + list((1.0 - phi) * E) + [0.0, 0.0]

    def scales(self) -> list[float]:
        s = super().scales()
        N = self.n_nodes
        return s[:N] + s[:N] + s[N:]

    def jacobian_rows(self, gas_row: int, heat_row: int):
        # a node changes the liquid's energy, hence the liquid's volume rate and the
        # metal moving between the parts at every node: any row
        return None

    # ------------------------------------------------------------------ physics
    def temperatures(self, own, phi: float):
        N = self.n_nodes
        Ew, Eu = own[:N], own[N:2 * N]
        Et = Ew + Eu
        ew = (Ew + SHARE_EPS * Et) / (phi + SHARE_EPS)
        eu = (Eu + SHARE_EPS * Et) / (1.0 - phi + SHARE_EPS)
        return ew, eu, self.grid.temperatures(ew), self.grid.temperatures(eu)

    def _wetted(self, z, Tw: float):
        """(h [W/(m2 K)], natural-convection groups, boiling flux [W/m2])."""
        liq, s = z.liquid, z.sat
        rho, cp, mu, k, beta = self._sat.liquid_film(z.p, 0.5 * (liq.T + Tw))
        L = self.d.inside_length
        Ra = rayleigh(abs(beta), liq.T - Tw, L, rho, mu, k, cp)
        Pr = prandtl(mu, k, cp)
        nu, validity = NATURAL[self.d.convection_shape]
        h_nc = nu(Ra, Pr) * k / L
        dTe = Tw - s["T_s"]
        h_nb = rohsenow_coefficient(dTe, s["mu_f"], s["h_g"] - s["h_f"], s["rho_f"],
                                    s["rho_g"], s["sigma"], s["cp_f"], s["k_f"], self.C_sf,
                                    self.n_pr)
        h = (h_nc**3 + h_nb**3) ** (1.0 / 3.0)
        return h, (validity, Ra, Pr, liq.T - Tw), h_nb * max(dTe, 0.0)

    def evaluate(self, t, gas, own, segment, dydt) -> float:
        z = gas
        N, o = self.n_nodes, self.offset
        phi = z.wetted_share
        ew, eu, Tw, Tu = self.temperatures(own, phi)
        self._in_groups = self._out_groups = None
        vap = z.vapour
        h_u = self._inside(vap, Tu[0], segment)
        groups_u = self._in_groups
        q_in_u = h_u * self.A_in * (1.0 - phi) * (vap.T - Tu[0])
        h_w, groups_w, q_nb = (0.0, None, 0.0)
        q_in_w = 0.0
        if z.liquid is not None:
            h_w, groups_w, q_nb = self._wetted(z, Tw[0])
            q_in_w = h_w * self.A_in * phi * (z.liquid.T - Tw[0])
        share = z.liquid_fraction
        wetted_area = self.fire_area.area(share) if self.fire_area is not None else math.nan
        (qo_w, qo_u, q_fire, h_out) = self._outside_parts(t, Tw[-1], Tu[-1], segment,
                                                            wetted_area, phi)
        dEw = phi * self.grid.conduction(Tw)
        dEu = (1.0 - phi) * self.grid.conduction(Tu)
        dEw[0] += q_in_w
        dEu[0] += q_in_u
        dEw[-1] += qo_w
        dEu[-1] += qo_u
        dydt[o:o + N] = dEw
        dydt[o + N:o + 2 * N] = dEu
        dydt[o + 2 * N] = qo_w + qo_u
        dydt[o + 2 * N + 1] = q_fire
        if self.liquid_row is not None:
            dydt[self.liquid_row] -= q_in_w
        self._pending = (ew, eu)
        self._last_z = ((t, z.p, z.T, phi, own.tobytes()), Tw, Tu, h_w, h_u, h_out,
                        qo_w + qo_u, q_fire, wetted_area, share, -q_in_w, -q_in_u,
                        groups_w, groups_u, q_nb, z)
        return -(q_in_w + q_in_u)

    def transfer(self, dshare_dt: float, dydt) -> None:
        """Metal moving between the parts as the level moves (after :meth:`evaluate`)."""
        if self._pending is None or dshare_dt == 0.0:
            return
        ew, eu = self._pending
        N, o = self.n_nodes, self.offset
        move = dshare_dt * (eu if dshare_dt > 0.0 else ew)
        dydt[o:o + N] += move
        dydt[o + N:o + 2 * N] -= move

    def _outside_parts(self, t, Tw: float, Tu: float, segment, wetted_area: float,
                       phi: float):
        """(heat into the wetted part's outer node, into the unwetted one's, fire heat,
        outside coefficient) [W, W, W, W/(m2 K)]."""
        out = self.d.outside
        fire = self.d.fire
        burning = fire is not None and segment.midpoint >= fire.starts_at
        A_w, A_u = phi * self.A_out, (1.0 - phi) * self.A_out
        ex_w = ex_u = 0.0
        fire_w = fire_u = 0.0
        self._h_biot_out = 0.0
        if burning:
            if isinstance(fire, PoolFire):
                A_wet = wetted_area if phi > 0.0 else 0.0
                fire_w = api521_pool_fire_heat(A_wet, fire.environment_factor,
                                               fire.drainage) if A_wet > 0.0 else 0.0
                ex_w = min(A_wet, A_w)
                if ex_w > 0.0:
                    self._h_biot_out = fire_equivalent_coefficient(fire_w / ex_w, Tw)
                if fire.wetted is not None and fire.area > 0.0:
                    # the exposed area above the level: the flux cvsim gives a gas-filled
                    # vessel's wall, API 521's heat input spread over the whole area
                    # within the fire's reach
                    ex_u = min(max(fire.area - A_wet, 0.0), A_u)
                    flux = api521_pool_fire_heat(fire.area, fire.environment_factor,
                                                 fire.drainage) / fire.area
                    fire_u = ex_u * flux
                    if ex_u > 0.0:
                        self._h_biot_out = max(self._h_biot_out,
                                               fire_equivalent_coefficient(flux, Tu))
            elif isinstance(fire, FlameExposure):
                ex_w, ex_u = self.exposed * phi, self.exposed * (1.0 - phi)
                fire_w = ex_w * flame_heat_flux(Tw, fire.flame_temperature,
                                                fire.flame_emissivity,
                                                fire.surface_emissivity,
                                                fire.convective_coefficient)
                fire_u = ex_u * flame_heat_flux(Tu, fire.flame_temperature,
                                                fire.flame_emissivity,
                                                fire.surface_emissivity,
                                                fire.convective_coefficient)
                flux = fire_u / ex_u if ex_u > 0.0 else fire_w / max(ex_w, 1e-300)
                self._h_biot_out = fire_equivalent_coefficient(flux, max(Tw, Tu))
        q_fire = fire_w + fire_u
        if out.model == "insulated":
            return fire_w, fire_u, q_fire, 0.0
        T_amb = segment.signal(out.ambient, t)
        res = []
        h_report = 0.0
        for T, area in ((Tw, A_w - ex_w), (Tu, A_u - ex_u)):
            q, h = self._surface_exchange(T, T_amb)
            res.append(max(area, 0.0) * q)
            h_report = max(h_report, h)
        return res[0] + fire_w, res[1] + fire_u, q_fire, h_report

    # ------------------------------------------------------------------ energy
    def stored_energy(self, own) -> float:
        return float(np.sum(own[:2 * self.n_nodes]))

    def heat_from_outside(self, own, heat_into_gas: float) -> float:
        return float(own[2 * self.n_nodes])

    # ------------------------------------------------------------------ outputs
    def columns(self, vessel: str) -> list[tuple[str, str, str]]:
        p = f"{vessel}.wall"
        cols = []
        for part in PARTS:
            cols += [(f"{p}.{part}.inner_temperature", "K", "wall"),
                     (f"{p}.{part}.outer_temperature", "K", "wall")]
            if self.d.model == "layered":
                cols += [(f"{p}.{part}.node{i}_temperature", "K", "wall")
                         for i in range(self.n_nodes)]
            cols.append((f"{p}.{part}.inside_coefficient", "W/(m2 K)", "wall"))
        cols += [(f"{p}.wetted_share", "-", "wall"),
                 (f"{p}.outside_coefficient", "W/(m2 K)", "wall"),
                 (f"{p}.heat_from_outside", "W", "wall")]
        if self.d.fire is not None:
            cols.append((f"{p}.fire_heat", "W", "wall"))
        if self.fire_area is not None:
            cols.append((f"{p}.fire_wetted_area", "m2", "wall"))
        for part in PARTS:   # what each part gives its zone, for the self-checks
            h = f"{vessel}.heat.{self.name}.{part}"
            cols += [(h, "W", "heat-part"), (f"{h}.source_temperature", "K", "heat-part"),
                     (f"{h}.contents_temperature", "K", "heat-part")]
        return cols

    def values(self, t, gas, own, segment) -> list[float]:
        z = gas
        key = (t, z.p, z.T, z.wetted_share, own.tobytes())
        if self._last_z is None or self._last_z[0] != key:
            self.evaluate(t, z, own, segment, np.zeros(self.offset + self.n_states))
        (_, Tw, Tu, h_w, h_u, h_out, q_out, q_fire, wetted, share, q_w, q_u, groups_w,
         groups_u, q_nb, _) = self._last_z
        h_biot = max(h_w, h_u, self._h_biot_out)
        self._watch(t, Tw, h_biot, groups_w, self._out_groups)
        self._watch(t, Tu, h_biot, groups_u, None)
        if z.sat is not None and q_nb > 0.0:
            s = z.sat
            ratio = q_nb / zuber_critical_heat_flux(s["h_g"] - s["h_f"], s["rho_f"],
                                                    s["rho_g"], s["sigma"])
            if ratio > self._chf[0]:
                self._chf = (ratio, t)
        row = []
        for T, h in ((Tw, h_w), (Tu, h_u)):
            row += [float(T[0]), float(T[-1])]
            if self.d.model == "layered":
                row += [float(v) for v in T]
            row.append(h)
        row += [z.wetted_share, h_out, q_out]
        if self.d.fire is not None:
            row.append(q_fire)
        if self.fire_area is not None:
            self.fire_area.watch(t, share, wetted)
            row.append(wetted)
        T_l = z.liquid.T if z.liquid is not None else math.nan
        row += [q_w, float(Tw[0]), T_l, q_u, float(Tu[0]), z.vapour.T]
        return row

    def warnings(self) -> list[str]:
        out = super().warnings()
        ratio, t = self._chf
        if ratio > 1.0:
            out.append(f"vessel '{self.vessel}' wetted wall: the nucleate-boiling heat flux "
                       f"reaches {ratio:.3g} times the critical heat flux (Zuber) at "
                       f"t = {t:.4g} s: the wall would leave nucleate boiling (film boiling, "
                       "a much lower coefficient), which is not modelled")
        return out

    def assumptions(self) -> list[str]:
        out = super().assumptions()
        out.append(
            f"Vessel '{self.vessel}': the wall is split at the liquid level into a wetted and "
            "an unwetted part (shares of the inside area below and above the level, each "
            "with the whole wall's layers, no conduction between them); metal changing "
            "side as the level moves carries its energy. Wetted part to liquid: natural "
            "convection (Churchill & Chu on the liquid's properties) combined with "
            f"Rohsenow nucleate boiling (C_sf = {self.C_sf:g}, n = {self.n_pr:g}) as "
            "h^3 = h_nc^3 + h_nb^3; unwetted part to vapour: natural convection "
            "(condensation on a cold wall not modelled).")
        if isinstance(self.d.fire, PoolFire):
            out.append(f"Vessel '{self.vessel}': the API 521 pool-fire heat input "
                       "C1 F A_wet^0.82 goes into the wetted part; the exposed area above "
                       "the level gets the flux C1 F A_reach^0.82 / A_reach (the API 521 "
                       "heat input spread over the whole area within the fire's reach, as "
                       "for a gas-filled vessel: a screening choice).")
        return out


__all__ = ["PARTS", "SHARE_EPS", "ZonedWallTerm"]
