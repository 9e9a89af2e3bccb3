"""Vessel walls with temperatures of their own: lumped and layered (1-D conduction).

The wall is one-dimensional through its thickness: the gas is well mixed and the
heat transfer coefficients are surface averages, so every point of the wall at the
same depth x has the same temperature. The area at depth x is that of the vessel's
parallel surface, A(x) = a0 + a1 x + a2 x^2 (:class:`cvsim.heat.geometry.Surface`):
for a long cylinder this is conduction in cylindrical coordinates, for a sphere in
spherical coordinates, and heads of any kind are included with their own area law.

Discretisation (finite volumes, vertex centred). Each layer is cut into equal
slices; temperatures T_i sit at the slice faces, from the inside surface (i = 0)
to the outside surface (i = N - 1), with a face at every joint between two layers.
Node i holds the wall between the middles of its two neighbouring slices (half a
slice at each surface), so the surface nodes see the gas and the surroundings
directly. Slice s between nodes s and s + 1 conducts

    F_s = k(T_mean) S_s (T_s - T_s+1),    1/S_s = integral of dx / A(x) over the slice

(the exact steady conduction resistance of the slice: Incropera et al.,
*Fundamentals of Heat and Mass Transfer*, 7th ed., sec. 3.3 and Table 3.3), and node
i's energy E_i changes by

    dE_i/dt = F_{i-1} - F_i  (+ h_in A_in (T_gas - T_0) at i = 0,  + Q_out at i = N - 1)

A lumped wall is one node holding every layer (Incropera 7th ed., sec. 5.1-5.2; valid
for Biot numbers h L/k below 0.1, which the run watches).

The states are the node energies E_i = integral of C_i(T) dT from 0 K (C_i the
heat capacity of node i from the materials' tables), not the temperatures: the
energy of gas + wall + heat from outside is then a linear invariant of the
equations, which the integrators keep to round-off, so the run's energy balance
closes exactly also with temperature-dependent heat capacities. Temperatures
follow from the energies by inverting the piecewise-quadratic E(T) (see
:meth:`WallGrid._energy_tables`).
"""
from __future__ import annotations

import math

import numpy as np

from .convection import (JET_CAUTION, NATURAL, RangeWatch, jet_reynolds, nu_fill_jet,
                         prandtl, rayleigh)
from .definitions import FlameExposure, PoolFire, Wall
from .fire import FIRE_HEIGHT, SIGMA, api521_pool_fire_heat, flame_heat_flux, pool_fire_area
from .loads import HeatComponent
from .transport import AirTable, gas_properties

ZERO_CELSIUS = 273.15
T_TABLE_TOP = 5000.0  # [K] energy tables reach this far (end values held beyond the data)
BIOT_LIMIT = 0.1      # lumped-wall criterion (Incropera 7th ed., eq. 5.10)
#: [K] a convection correlation's groups are watched only while surface and fluid
#: differ by more than this (at smaller differences the heat flux is negligible
#: whatever the correlation, and the Rayleigh number tends to zero)
WATCH_MIN_DIFFERENCE = 0.1


def fire_equivalent_coefficient(q_flux: float, T_wall: float) -> float:
    """Coefficient [W/(m2 K)] that stands for a fire's heat flux in a Biot number.

        h_fire = q / (T_e - T_w),    T_e = (q / sigma + T_w^4)^(1/4)

    T_e is the temperature of a black-body flame that would give the heat flux q at
    the present wall temperature; h_fire is that flame's radiative coefficient. For
    a radiant flame of emissivity below one it is larger than q/(T_flame - T_w)
    (T_e is lower), so the check errs on the strict side; as q -> 0 it tends to the
    black-body radiative coefficient 4 sigma T_w^3.

    Parameters
    ----------
    q_flux : heat flux into the exposed surface [W/m2] (API 521 pool fire: its heat
        input over the exposed area; flame model: its flux)
    T_wall : outer wall temperature [K]

    Validity: a way to put a heat flux that does not depend on a fluid temperature
    (the API 521 empirical heat input) into the lumped-wall criterion; with q <= 0
    the radiative coefficient 4 sigma T_w^3 is returned.

    Source: Stefan-Boltzmann law and the radiative coefficient
    h_r = sigma (T_s + T_sur)(T_s^2 + T_sur^2) of Incropera et al., *Fundamentals of
    Heat and Mass Transfer*, 7th ed., eqs. 1.7-1.9, with the surroundings at T_e.

    >>> round(fire_equivalent_coefficient(82561.0, 300.0), 1)  # black flame at 1100 K
    103.2
    """
    if not q_flux > 0.0:
        return 4.0 * SIGMA * T_wall**3
    T_e = (q_flux / SIGMA + T_wall**4) ** 0.25
    return q_flux / (T_e - T_wall)


def lumped_biot_number(h: float, resistance: float) -> float:
    """Biot number of a lumped wall, Bi = h R [-], R = sum of L_i/k_i [m2 K/W].

    The lumped (one-temperature) wall holds when Bi < 0.1 with h the largest
    coefficient acting on either face (Incropera et al., 7th ed., sec. 5.1-5.2,
    eq. 5.10, with L_c the thickness for a wall heated from one side): cvsim takes the
    largest of the inside coefficient, the outside convective plus radiative one and,
    in a fire, the fire's equivalent coefficient (:func:`fire_equivalent_coefficient`).

    >>> lumped_biot_number(50.0, 0.01 / 50.0)   # 10 mm of steel, k = 50 W/(m K)
    0.01
    """
    return h * resistance


class FireArea:
    """The area of a pool fire's heat input as the liquid level moves (API 521 wetted
    area, :func:`cvsim.heat.fire.pool_fire_area`, whose level solve is warm-started from
    the last level): keeps the last answer (the Jacobian's perturbations of wall states
    leave the liquid share as it was). Watches, while the fire burns, the steps between
    the wetted area and the whole area within the fire's reach: the vessel's last liquid
    evaporating (or liquid forming in a vessel that held none) for the warnings; the
    change from two phases to liquid-full is continuous (the level reaches the top)."""

    def __init__(self, fire: PoolFire):
        self.fire = fire
        self._last = (math.nan, fire.area)
        self._liquid_before = None
        self._area_before = fire.area
        self.switches = []  # (time [s], from area [m2], to area [m2], liquid now)

    def area(self, liquid_fraction: float) -> float:
        """A [m2] for the vessel's liquid share [-]."""
        if liquid_fraction == self._last[0]:
            return self._last[1]
        A = pool_fire_area(self.fire, liquid_fraction)[0]
        self._last = (liquid_fraction, A)
        return A

    def watch(self, t: float, liquid_fraction: float, A: float) -> None:
        """At a recorded point or accepted step: note a change of basis while burning."""
        liquid = liquid_fraction > 0.0
        if (self._liquid_before is not None and liquid != self._liquid_before
                and t > self.fire.starts_at):
            self.switches.append((t, self._area_before, A, liquid))
        self._liquid_before, self._area_before = liquid, A

    def warnings(self, where: str) -> list[str]:
        if self.fire.wetted is None or not self.switches:
            return []
        t, a0, a1, liquid = self.switches[0]
        what = ("liquid formed: the area now counted is the wetted area below the level"
                if liquid else "the vessel's last liquid evaporated (no liquid level is "
                "left): the area now counted is the whole outside area within "
                f"{FIRE_HEIGHT:g} m")
        more = f" ({len(self.switches)} such changes in all)" if len(self.switches) > 1 else ""
        return [f"{where}: at t = {t:.4g} s {what}, so the API 521 heat-input area stepped "
                f"from {a0:.4g} to {a1:.4g} m2{more}. The API 521 wetted-surface heat input "
                "is meant for liquid-wetted walls; a dry wall heats up instead and may "
                "fail by overheating (model the wall to see its temperature)."]

    def assumption(self) -> str:
        f, w = self.fire, self.fire.wetted
        if w is None:
            return f"A = {f.area:.4g} m2 as stated, held constant (it does not follow the "\
                   "liquid level)"
        surface = "outside" if w.offset > 0.0 else "inside-dimension"
        return (f"A = the {surface} area below the liquid level and within {FIRE_HEIGHT:g} m "
                f"above the base of the fire (vessel bottom {w.elevation:g} m above it), "
                "recomputed from the liquid share as the level moves; while there is no "
                "level (gas or supercritical contents) or the vessel is liquid-full, the "
                f"whole {surface} area within {FIRE_HEIGHT:g} m, {f.area:.4g} m2")


class WallGrid:
    """Nodes of a wall: positions, heat capacities and slice conductances.

    Parameters
    ----------
    layers : the wall's layers, inside to outside (:class:`~cvsim.heat.definitions.WallLayer`)
    surface : area at depth x (:class:`~cvsim.heat.geometry.Surface`)
    lumped : one node for the whole wall
    """

    def __init__(self, layers, surface, lumped: bool):
        self.surface = surface
        parts: list[dict] = []  # per node: material -> mass [kg]
        if lumped:
            x0 = 0.0
            node = {}
            for layer in layers:
                x1 = x0 + layer.thickness
                m = layer.material.density * surface.volume(x0, x1)
                node[layer.material] = node.get(layer.material, 0.0) + m
                x0 = x1
            parts = [node]
            self.x = np.array([0.0])
            self.slice_factor = np.zeros(0)
            self.slice_material = []
        else:
            x = [0.0]
            materials = []
            for layer in layers:
                step = layer.thickness / layer.divisions
                start = x[-1]
                for j in range(layer.divisions):
                    x.append(start + (j + 1) * step)
                    materials.append(layer.material)
            self.x = np.array(x)
            parts = [{} for _ in x]
            factors = []
            for s, mat in enumerate(materials):
                a, b = x[s], x[s + 1]
                mid = 0.5 * (a + b)
                parts[s][mat] = parts[s].get(mat, 0.0) + mat.density * surface.volume(a, mid)
                parts[s + 1][mat] = (parts[s + 1].get(mat, 0.0)
                                     + mat.density * surface.volume(mid, b))
                factors.append(1.0 / surface.resistance_factor(a, b))
            self.slice_factor = np.array(factors)   # [m] conductance / k of each slice
            self.slice_material = materials
        self.n = len(parts)
        self.parts = parts
        self.mass = np.array([sum(p.values()) for p in parts])
        # conductances: constant ones once; temperature-dependent ones per material
        self.k_constant = all(len(m.k) == 1 for m in self.slice_material)
        self.G0 = np.array([m.k[0] for m in self.slice_material]) * self.slice_factor
        self.k_groups = []
        for mat in {m for m in self.slice_material if len(m.k) > 1}:
            idx = np.array([s for s, m in enumerate(self.slice_material) if m is mat])
            self.k_groups.append((idx, np.array(mat.k_T), np.array(mat.k)))
        self._energy_tables()

    # ---------------------------------------------------------------- energy
    def _energy_tables(self):
        """Energy E(T) = integral of C dT from 0 K of each node, with C piecewise linear
        in T between the materials' table points (held constant beyond the ends), so E
        is piecewise quadratic and is inverted exactly. Nodes of one material share
        that material's table per kg; a node at the joint of two layers has its own."""
        materials = sorted({m for p in self.parts for m in p}, key=lambda m: m.name)
        self.constant_capacity = all(len(m.cp) == 1 for m in materials)
        self.C_const = np.array([sum(mass * m.cp[0] for m, mass in p.items())
                                 for p in self.parts])

        def table(parts):
            points = {0.0, T_TABLE_TOP}
            for m in parts:
                points.update(t for t in m.cp_T if 0.0 < t < T_TABLE_TOP)
            Tp = np.array(sorted(points))
            Cp = sum(w * np.interp(Tp, m.cp_T, m.cp) for m, w in parts.items())
            Ep = np.concatenate([[0.0], np.cumsum(0.5 * (Cp[1:] + Cp[:-1]) * np.diff(Tp))])
            slope = np.diff(Cp) / np.diff(Tp)
            return Tp, Cp[:-1], slope, Ep

        groups = []
        for m in materials:
            idx = [i for i, p in enumerate(self.parts) if list(p) == [m]]
            if idx:
                groups.append((np.array(idx), self.mass[idx], *table({m: 1.0})))
        for i, p in enumerate(self.parts):
            if len(p) > 1:
                groups.append((np.array([i]), np.array([1.0]), *table(p)))
        self._energy_groups = groups

    def energies(self, T) -> np.ndarray:
        """Node energies [J] (from 0 K) at node temperatures T [K] (scalar or per node)."""
        T = np.broadcast_to(np.asarray(T, dtype=float), (self.n,))
        if self.constant_capacity:
            return self.C_const * T
        E = np.empty(self.n)
        for idx, scale, Tp, C0, slope, Ep in self._energy_groups:
            t = T[idx]
            k = np.clip(np.searchsorted(Tp, t, side="right") - 1, 0, len(Tp) - 2)
            dT = t - Tp[k]
            E[idx] = scale * (Ep[k] + C0[k] * dT + 0.5 * slope[k] * dT * dT)
        return E

    def temperatures(self, E) -> np.ndarray:
        """Node temperatures [K] from node energies E [J] (exact inverse of :meth:`energies`)."""
        if self.constant_capacity:
            return E / self.C_const
        T = np.empty(self.n)
        for idx, scale, Tp, C0, slope, Ep in self._energy_groups:
            e = E[idx] / scale
            k = np.clip(np.searchsorted(Ep, e, side="right") - 1, 0, len(Tp) - 2)
            c = C0[k]
            de = e - Ep[k]
            T[idx] = Tp[k] + 2.0 * de / (c + np.sqrt(np.maximum(c * c + 2.0 * slope[k] * de,
                                                                  0.0)))
        return T

    def capacities(self, T) -> np.ndarray:
        """Node heat capacities C_i(T_i) [J/K]."""
        T = np.broadcast_to(np.asarray(T, dtype=float), (self.n,))
        return np.array([sum(mass * m.heat_capacity(float(T[i])) for m, mass in p.items())
                         for i, p in enumerate(self.parts)])

    # ---------------------------------------------------------------- conduction
    def conduction(self, T: np.ndarray) -> np.ndarray:
        """Net heat conducted into each node [W] at node temperatures T [K]."""
        out = np.zeros(self.n)
        if self.n == 1:
            return out
        if self.k_constant:
            G = self.G0
        else:
            G = self.G0.copy()
            Tm = 0.5 * (T[1:] + T[:-1])
            for idx, kT, k in self.k_groups:
                G[idx] = np.interp(Tm[idx], kT, k) * self.slice_factor[idx]
        F = G * (T[:-1] - T[1:])
        out[:-1] -= F
        out[1:] += F
        return out


class WallTerm(HeatComponent):
    """Run-time wall of one vessel (definition :class:`~cvsim.heat.definitions.Wall`).

    Own states: the node energies [J], then two integrals that never feed back: the
    heat into the wall from outside [J] and the part of it from fire [J].
    """

    has_source = True

    def source_temperature(self, t, gas, own, segment) -> float:
        """The inner surface's temperature [K]: the wall gives heat to the contents there."""
        return float(self.grid.temperatures(own[:self.n_nodes])[0])

    def __init__(self, definition: Wall, vessel_name: str):
        super().__init__(definition, vessel_name)
        d = definition
        self.grid = WallGrid(d.layers, d.surface, d.model == "lumped")
        self.n_nodes = self.grid.n
        self.n_states = self.n_nodes + 2
        self.A_in = d.surface.area(0.0)
        self.A_out = d.surface.area(d.thickness)
        self.exposed = 0.0 if d.fire is None else min(d.fire.area, self.A_out)
        self.fire_area = FireArea(d.fire) if isinstance(d.fire, PoolFire) else None
        self.watch = RangeWatch()
        self._T_range = {}      # layer index -> [min, t, max, t]
        self._biot = [0.0, 0.0, 0.0]  # largest Biot number of a lumped wall, time, h
        self._h_biot_out = 0.0   # outside coefficient for the Biot number (fire included)
        self._jets = []          # (device index, +1/-1 for flow into the vessel, diameter)
        self._gas = None
        self._air = None
        self._last = None
        self._in_groups = None
        self._out_groups = None
        self._T0 = definition.initial_temperature
        self.layer_of_node = self._layer_of_nodes()

    def _layer_of_nodes(self) -> list[tuple[int, ...]]:
        if self.d.model == "lumped":
            return [tuple(range(len(self.d.layers)))]
        out = []
        for li, layer in enumerate(self.d.layers):
            for j in range(layer.divisions):
                out.append((li,) if j > 0 or li == 0 else (li - 1, li))
        out.append((len(self.d.layers) - 1,))
        return out

    # ------------------------------------------------------------------ set-up
    def bind(self, model) -> None:
        d = self.d
        if d.inside.model in ("natural", "natural+jet"):
            self._gas = gas_properties(model.fluid)
        if d.outside.model == "natural":
            self._air = AirTable(model.network.atmosphere)
        vi = model.node_index[self.vessel]
        if d.inside.model == "natural+jet" or d.inside.while_filling is not None:
            for dev in model.devices:
                if vi not in (dev.source, dev.target):
                    continue
                sign = 1 if dev.target == vi else -1
                diameter = d.inside.inlet_diameter
                if diameter is None:
                    area = getattr(dev.d, "area", None)
                    if area is None and d.inside.model == "natural+jet":
                        from ..errors import ScenarioError, Problem
                        link = model.links[dev.index].name
                        raise ScenarioError([Problem(
                            f"{d.key}.inside.inlet_diameter",
                            f"link '{link}' feeds vessel '{self.vessel}' but has no bore "
                            "diameter; give the jet's inlet_diameter")])
                    diameter = math.sqrt(4.0 * area / math.pi) if area else 0.0
                self._jets.append((dev.index, sign, diameter))

    def breakpoints(self):
        ambient = self.d.outside.ambient
        out = set(ambient.breakpoints) if ambient is not None else set()
        if self.d.fire is not None and self.d.fire.starts_at > 0.0:
            out.add(self.d.fire.starts_at)
        return tuple(sorted(out))

    def initial_states(self, gas_state) -> list[float]:
        T0 = self.d.initial_temperature
        if T0 is None:
            T0 = gas_state.T
        self._T0 = T0
        return list(self.grid.energies(T0)) + [0.0, 0.0]

    def scales(self) -> list[float]:
        T0 = self._T0 if self._T0 is not None else 300.0
        E = np.maximum(self.grid.energies(T0), 300.0 * self.grid.capacities(T0))
        return list(E) + [float(np.sum(E))] * 2

    def jacobian_rows(self, gas_row: int, heat_row: int) -> list:
        o, N = self.offset, self.n_nodes
        rows = []
        for j in range(N):
            r = [o + i for i in (j - 1, j, j + 1) if 0 <= i < N]
            if j == 0:
                r += [gas_row, heat_row]
            if j == N - 1:
                r += [o + N, o + N + 1]
            rows.append(sorted(set(r)))
        return rows + [[], []]

    # ------------------------------------------------------------------ physics
    def evaluate(self, t, gas, own, segment, dydt) -> float:
        N, o = self.n_nodes, self.offset
        T = self.grid.temperatures(own[:N])
        self._in_groups = self._out_groups = None
        h_in = self._inside(gas, T[0], segment)
        q_in = h_in * self.A_in * (gas.T - T[0])
        share = gas.liquid_fraction if self.fire_area is not None else math.nan
        wetted = self.fire_area.area(share) if self.fire_area is not None else math.nan
        q_out, q_fire, h_out = self._outside(t, T[-1], segment, wetted)
        dE = self.grid.conduction(T)
        dE[0] += q_in
        dE[-1] += q_out
        dydt[o:o + N] = dE
        dydt[o + N] = q_out
        dydt[o + N + 1] = q_fire
        self._last = ((t, gas.rho, gas.T, own.tobytes()), T, h_in, h_out, q_out, q_fire,
                      self._in_groups, self._out_groups, max(h_in, self._h_biot_out), wetted,
                      share)
        return -q_in

    def _inflows(self, segment):
        flows = segment.current_flows
        for index, sign, diameter in self._jets:
            mdot = sign * flows[index].mdot
            if mdot > 0.0:
                yield mdot, diameter

    def _inside(self, gas, Tw: float, segment) -> float:
        ins = self.d.inside
        if ins.model == "fixed":
            if ins.while_filling is not None and any(True for _ in self._inflows(segment)):
                return ins.while_filling
            return ins.coefficient
        # natural convection: properties at the film temperature (Incropera 7th ed. 9.6)
        rho, cp, mu, k, beta = self._gas.film(gas, Tw)
        L = self.d.inside_length
        Ra = rayleigh(abs(beta), gas.T - Tw, L, rho, mu, k, cp)
        Pr = prandtl(mu, k, cp)
        nu, validity = NATURAL[self.d.convection_shape]
        h = nu(Ra, Pr) * k / L
        self._in_groups = (validity, Ra, Pr, gas.T - Tw)
        if ins.model == "natural":
            return h
        D = self.d.inside_diameter
        cubes = h**3
        for mdot, diameter in self._inflows(segment):
            if diameter > 0.0:
                # the jet's Reynolds number and Nusselt number on the gas's own properties
                _, _, mu_g, k_g, _ = self._gas.at(gas)
                cubes += (nu_fill_jet(jet_reynolds(mdot, diameter, mu_g)) * k_g / D) ** 3
        # several jets and natural convection: h^3 = sum h_F^3 + h_N^3 (see convection.mixed)
        return cubes ** (1.0 / 3.0) if cubes > h**3 else h

    def _outside(self, t, Tw: float, segment, wetted: float):
        out = self.d.outside
        fire = self.d.fire
        burning = fire is not None and segment.midpoint >= fire.starts_at
        q_fire = 0.0
        self._h_biot_out = 0.0
        if burning:
            if isinstance(fire, PoolFire):
                q_fire = api521_pool_fire_heat(wetted, fire.environment_factor,
                                               fire.drainage)
            else:
                q_fire = self.exposed * flame_heat_flux(
                    Tw, fire.flame_temperature, fire.flame_emissivity,
                    fire.surface_emissivity, fire.convective_coefficient)
            # the heat flux: API 521's heat input over the wetted area it is counted on
            flux_area = wetted if (isinstance(fire, PoolFire) and wetted > 0.0) else self.exposed
            if flux_area > 0.0:
                self._h_biot_out = fire_equivalent_coefficient(q_fire / flux_area, Tw)
        if out.model == "insulated":
            return q_fire, q_fire, 0.0
        T_amb = segment.signal(out.ambient, t)
        area = self.A_out - (self.exposed if burning else 0.0)
        q, h = self._surface_exchange(Tw, T_amb)
        return area * q + q_fire, q_fire, h

    def _surface_exchange(self, Tw: float, T_amb: float) -> tuple[float, float]:
        """Heat flux [W/m2] into an outside surface at Tw [K] from surroundings at T_amb
        [K] (natural convection or a fixed coefficient, plus grey radiation), and the
        convective coefficient [W/(m2 K)]; keeps the largest surface coefficient (with
        the radiative one, Incropera 7th ed., eq. 1.9) for the Biot number and the
        dimensionless groups for the range watch."""
        out = self.d.outside
        if out.model == "fixed":
            h = out.coefficient
        else:
            rho, cp, mu, k, beta = self._air.at(0.5 * (Tw + T_amb))
            L = self.d.outside_length
            Ra = rayleigh(abs(beta), Tw - T_amb, L, rho, mu, k, cp)
            Pr = prandtl(mu, k, cp)
            nu, validity = NATURAL[self.d.convection_shape]
            h = nu(Ra, Pr) * k / L
            self._out_groups = (validity, Ra, Pr, Tw - T_amb)
        q = h * (T_amb - Tw)
        h_surface = h
        if out.emissivity > 0.0:
            q += out.emissivity * SIGMA * (T_amb**4 - Tw**4)
            h_surface += out.emissivity * SIGMA * (Tw + T_amb) * (Tw * Tw + T_amb * T_amb)
        self._h_biot_out = max(self._h_biot_out, h_surface)
        return q, h

    # ------------------------------------------------------------------ energy
    def stored_energy(self, own) -> float:
        return float(np.sum(own[:self.n_nodes]))

    def heat_from_outside(self, own, heat_into_gas: float) -> float:
        return float(own[self.n_nodes])

    # ------------------------------------------------------------------ outputs
    def columns(self, vessel: str) -> list[tuple[str, str, str]]:
        p = f"{vessel}.wall"
        cols = [(f"{p}.inner_temperature", "K", "wall"), (f"{p}.outer_temperature", "K", "wall")]
        if self.d.model == "layered":
            cols += [(f"{p}.node{i}_temperature", "K", "wall") for i in range(self.n_nodes)]
        cols += [(f"{p}.inside_coefficient", "W/(m2 K)", "wall"),
                 (f"{p}.outside_coefficient", "W/(m2 K)", "wall"),
                 (f"{p}.heat_from_outside", "W", "wall")]
        if self.d.fire is not None:
            cols.append((f"{p}.fire_heat", "W", "wall"))
        if self.fire_area is not None:
            cols.append((f"{p}.fire_wetted_area", "m2", "wall"))
        return cols

    def values(self, t, gas, own, segment) -> list[float]:
        if self._last is None or self._last[0] != (t, gas.rho, gas.T, own.tobytes()):
            self.evaluate(t, gas, own, segment, np.zeros(self.offset + self.n_states))
        _, T, h_in, h_out, q_out, q_fire, inside, outside, h_biot, wetted, share = self._last
        self._watch(t, T, h_biot, inside, outside)
        row = [float(T[0]), float(T[-1])]
        if self.d.model == "layered":
            row += [float(v) for v in T]
        row += [h_in, h_out, q_out]
        if self.d.fire is not None:
            row.append(q_fire)
        if self.fire_area is not None:
            self.fire_area.watch(t, share, wetted)
            row.append(wetted)
        return row

    def _watch(self, t, T, h_biot, inside, outside):
        for groups in (inside, outside):
            if groups is not None:
                validity, Ra, Pr, dT = groups
                if abs(dT) < WATCH_MIN_DIFFERENCE:
                    continue
                for name, value in (("Rayleigh number", Ra), ("Prandtl number", Pr)):
                    if name in validity.limits:
                        self.watch.see(validity, name, value, t)
        for i, layers in enumerate(self.layer_of_node):
            for li in layers:
                entry = self._T_range.get(li)
                if entry is None:
                    self._T_range[li] = [T[i], t, T[i], t]
                    continue
                if T[i] < entry[0]:
                    entry[0], entry[1] = T[i], t
                if T[i] > entry[2]:
                    entry[2], entry[3] = T[i], t
        if self.d.model == "lumped":
            resistance = sum(la.thickness / la.material.conductivity(T[0])
                             for la in self.d.layers)
            bi = lumped_biot_number(h_biot, resistance)
            if bi > self._biot[0]:
                self._biot = [bi, t, h_biot]

    def warnings(self) -> list[str]:
        where = f"vessel '{self.vessel}' wall"
        out = self.watch.warnings(where)
        for li, (lo, t_lo, hi, t_hi) in sorted(self._T_range.items()):
            mat = self.d.layers[li].material
            rng = (f"{mat.T_min - ZERO_CELSIUS:.4g} to {mat.T_max - ZERO_CELSIUS:.4g} degC; "
                   f"{mat.source}")
            if lo < mat.T_min:
                out.append(f"{where}: layer {li + 1} ({mat.name}) reaches "
                           f"{lo - ZERO_CELSIUS:.1f} degC at t = {t_lo:.4g} s, below the "
                           f"range of its property data ({rng}); {mat.beyond}")
            if hi > mat.T_max:
                out.append(f"{where}: layer {li + 1} ({mat.name}) reaches "
                           f"{hi - ZERO_CELSIUS:.1f} degC at t = {t_hi:.4g} s, above the "
                           f"range of its property data ({rng}); {mat.beyond}")
        if self.fire_area is not None:
            out += self.fire_area.warnings(f"vessel '{self.vessel}' pool fire")
        if self.d.model == "lumped" and self._biot[0] > BIOT_LIMIT:
            out.append(f"{where}: lumped wall with Biot number up to {self._biot[0]:.3g} "
                       f"(at t = {self._biot[1]:.4g} s, coefficient {self._biot[2]:.4g} "
                       "W/(m2 K), the largest of inside, outside and fire), above "
                       f"{BIOT_LIMIT:g}: the wall's temperature is not uniform through its "
                       "thickness (Incropera 7th ed., sec. 5.2); use a layered wall")
        if self.d.inside.model == "natural+jet":
            out.append(f"{where}: {JET_CAUTION}")
        return out

    def assumptions(self) -> list[str]:
        d = self.d
        v = self.vessel
        layers = ", ".join(f"{la.material.name} {la.thickness * 1e3:.4g} mm" for la in d.layers)
        if d.model == "lumped":
            wall = (f"Vessel '{v}': lumped wall (one temperature) of {layers}, "
                    f"{float(np.sum(self.grid.mass)):.4g} kg.")
        else:
            wall = (f"Vessel '{v}': layered wall of {layers}, 1-D transient conduction through "
                    f"the thickness with {self.n_nodes} temperatures (area varying with depth "
                    f"as the vessel's parallel surfaces), {float(np.sum(self.grid.mass)):.4g} kg.")
        out = [wall]
        ins = d.inside
        shape = {"vertical": "vertical surface", "horizontal": "horizontal cylinder",
                 "sphere": "sphere"}[d.convection_shape]
        if ins.model == "fixed":
            text = f"fixed coefficient {ins.coefficient:g} W/(m2 K)"
            if ins.while_filling is not None:
                text += f", {ins.while_filling:g} W/(m2 K) while a stream enters"
        else:
            source = ("CoolProp" if not getattr(self._gas, "engine", None) else
                      "corresponding-states (mixture)")
            text = (f"natural convection (Churchill & Chu, {shape}) with the gas's {source} "
                    "transport properties at the film temperature (T_gas + T_wall)/2 and the "
                    "gas's pressure (saturated vapour's when two phases are present), "
                    "correlations for a surface in an extensive fluid applied inside")
            if ins.model == "natural+jet":
                text += ("; combined (h^3 = h_F^3 + h_N^3) with the forced convection of each "
                         "entering jet, Nu_D = 0.56 Re_d^0.67 on the gas's own properties "
                         "(Woodfield et al. 2007 form; coefficients from memory and range not "
                         "confirmed: verify; the peak gas temperature may be optimistic, see "
                         "the warnings)")
            else:
                text += ("; streams entering the vessel add no forced convection (jets not "
                         "counted: the conservative choice for the peak gas temperature of a "
                         "fill, which a higher coefficient would lower)")
        out.append(f"Vessel '{v}': gas to wall by {text}.")
        o = d.outside
        if o.model == "insulated":
            text = "none (insulated)"
        else:
            text = (f"fixed coefficient {o.coefficient:g} W/(m2 K)" if o.model == "fixed" else
                    f"natural convection in air (Churchill & Chu, {shape}) at the film "
                    "temperature")
            if o.emissivity > 0.0:
                text += f" and radiation (emissivity {o.emissivity:g}) to surroundings"
        out.append(f"Vessel '{v}': wall to surroundings by {text}.")
        if isinstance(d.fire, PoolFire):
            f = d.fire
            out.append(
                f"Vessel '{v}': API 521 pool-fire heat input Q = C1 F A^0.82 on the outer wall "
                f"({self.fire_area.assumption()}; F = {f.environment_factor:g}, "
                f"{'with' if f.drainage else 'without'} prompt fire-fighting and drainage), "
                "independent of the wall temperature and spread over the whole wall (1-D); "
                f"the exposed area ({f.area:.4g} m2) exchanges no heat with the surroundings "
                "while it burns.")
        elif isinstance(d.fire, FlameExposure):
            f = d.fire
            out.append(
                f"Vessel '{v}': flame on {self.exposed:.4g} m2 of the outer wall, "
                f"q = eps_s sigma (eps_f T_f^4 - T_s^4) + h_f (T_f - T_s) with "
                f"T_f = {f.flame_temperature - ZERO_CELSIUS:.4g} degC, "
                f"eps_f = {f.flame_emissivity:g}, eps_s = {f.surface_emissivity:g}, "
                f"h_f = {f.convective_coefficient:g} W/(m2 K) (inputs), spread over the whole "
                "wall (1-D): local temperatures of the exposed part are higher.")
        return out


class GasFireTerm(HeatComponent):
    """API 521 pool-fire heat input straight into a vessel's contents (no wall), on the
    wetted area at the present liquid level (:class:`FireArea`)."""

    def __init__(self, definition, vessel_name: str):
        super().__init__(definition, vessel_name)
        self.fire_area = FireArea(definition.fire)

    def breakpoints(self):
        s = self.d.fire.starts_at
        return (s,) if s > 0.0 else ()

    def evaluate(self, t, gas, own, segment, dydt) -> float:
        f = self.d.fire
        if segment.midpoint < f.starts_at:
            return 0.0
        q = api521_pool_fire_heat(self.fire_area.area(gas.liquid_fraction),
                                  f.environment_factor, f.drainage)
        if self.liquid_row is not None and gas.liquid is not None:
            dydt[self.liquid_row] += q   # separated zones: the wetted-surface heat
        return q

    def columns(self, vessel: str) -> list[tuple[str, str, str]]:
        return [(f"{vessel}.fire.wetted_area", "m2", "heat")]

    def values(self, t, gas, own, segment) -> list[float]:
        A = self.fire_area.area(gas.liquid_fraction)
        self.fire_area.watch(t, gas.liquid_fraction, A)
        return [A]

    def warnings(self) -> list[str]:
        return self.fire_area.warnings(f"vessel '{self.vessel}' pool fire")

    def assumptions(self) -> list[str]:
        f = self.d.fire
        return [f"Vessel '{self.vessel}': API 521 pool-fire heat input Q = C1 F A^0.82 "
                f"({self.fire_area.assumption()}; F = {f.environment_factor:g}, "
                f"{'with' if f.drainage else 'without'} prompt fire-fighting and drainage) "
                "into the contents directly, no wall modelled."]


__all__ = ["FireArea", "GasFireTerm", "WallGrid", "WallTerm", "fire_equivalent_coefficient",
           "lumped_biot_number"]
