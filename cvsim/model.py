"""The model of a whole network: state-vector layout and right-hand side.

State vector ``y`` (all SI):

* per vessel: mass m [kg] and internal energy U [J] of its contents;
* per vessel held as separated vapour and liquid zones: the liquid zone's mass and
  internal energy (the vapour zone is the rest; :mod:`cvsim.zones`);
* per heat term with states of its own (walls, later): those states;
* a mixture run: per vessel the mass of each component [kg]
  (:mod:`cvsim.mixture_contents`);
* bookkeeping integrals, which never feed back into the dynamics: per link the
  mass that passed [kg], the energy that left the node the stream leaves [J]
  and the energy that entered the node it enters [J]; per heat term the heat
  into the gas [J]. They make the balances of the whole run exact to the
  integrator's round-off (linear invariants are kept by every Runge-Kutta and
  multistep method) and give the mass vented or delivered per link.

Balances per vessel (first law for a control volume with rigid walls; flow work
is carried inside the stagnation enthalpy of each stream):

    dm/dt = sum(mdot_in) - sum(mdot_out)
    dU/dt = Q_heat - p dV/dt + sum(mdot_in h0_in) - sum(mdot_out h0_out)

with dV/dt = 0 for the rigid vessels built here (the term stays in the
equations so that a moving boundary can be added). The thermodynamic state
follows from the density m/V and the specific internal energy U/m through the
fluid layer. A stream leaving a vessel carries the vessel's specific enthalpy;
when two phases are present a top outlet draws vapour and a bottom outlet liquid,
and either draws the mixture as the level reaches it (:mod:`cvsim.outlets`).

The model is split by time: :meth:`Model.segment` prepares a
:class:`Segment` for one stretch between breakpoints with the discrete states
(valves open or shut, flows running or stopped) fixed; the solver integrates
it, and starts a new segment at every breakpoint and switch.

Controllers (sequences of links opened one after another) own discrete states
too; a link that belongs to a sequence passes flow only while its step is
active (:attr:`Model.gates`). Valve controllers (:mod:`cvsim.control`) own
states of the ODE as well (a PI integral, a measurement filter), placed after
the heat terms' states; the travel they set is read by the valve they move
through :meth:`Segment.driven_opening`.
"""
from __future__ import annotations

import math

import numpy as np

from . import contents
from . import network as nw
from .errors import FluidError, StateError
from .flow.base import NO_FLOW, Flow
from .flow.control_valve import ControlValveDevice
from .flow.disc import BurstingDiscDevice, CheckValveDevice
from .control import ValveController
from .flow.fixed import FixedFlowDevice
from .flow.line import LineDevice
from .flow.orifice import OrificeDevice
from .flow.regulator import RegulatorDevice
from .flow.relief import ReliefValveDevice
from .engines import fluid_for
from .outlets import drawn_by, drawn_state
from .heat.definitions import GasFire, Wall
from .heat.level import forget_levels
from .heat.loads import AmbientExchangeTerm, HeatLoadTerm
from .heat.walls import GasFireTerm, WallTerm
from .heat.zoned_wall import ZonedWallTerm
from .sequence import SequenceController
from .signals import Constant
from .zones import ZonedVessel, liquid_share_drawn

#: run-time class of each device definition; later devices register here
DEVICE_TYPES = {
    nw.Orifice: OrificeDevice,
    nw.FixedFlow: FixedFlowDevice,
    nw.ControlValve: ControlValveDevice,
    nw.ReliefValve: ReliefValveDevice,
    nw.BurstingDisc: BurstingDiscDevice,
    nw.CheckValve: CheckValveDevice,
    nw.Line: LineDevice,
    nw.Regulator: RegulatorDevice,
}

#: run-time class of each heat-term definition
HEAT_TYPES = {
    nw.HeatLoad: HeatLoadTerm,
    nw.AmbientExchange: AmbientExchangeTerm,
    Wall: WallTerm,
    GasFire: GasFireTerm,
}

ACC_PER_LINK = 3  # mass, energy out of the node left, energy into the node entered


class VesselRuntime:
    __slots__ = ("name", "index", "volume", "i_m", "i_U", "T_hint", "heat", "i_c")

    def __init__(self, definition: nw.Vessel, index: int):
        self.name = definition.name
        self.index = index
        self.volume = definition.volume
        self.i_m = 2 * index
        self.i_U = 2 * index + 1
        self.T_hint = definition.initial.temperature
        self.heat = []
        self.i_c = None   # a mixture run: first index of its component masses


class Model:
    """Run-time model of a :class:`cvsim.network.Network` (see module docstring)."""

    def __init__(self, network: nw.Network):
        self.network = network
        # a run must not depend on what ran before it in the same process: the shapes'
        # level solves are warm-started from the last level found, so start them afresh
        forget_levels()
        self.fluid = fluid_for(network.fluid)
        #: a mixture run: compositions of the vessels and reservoirs (else None)
        self.mix = None
        if self.fluid.model == "mixture":
            from .mixture_contents import MixtureContents
            self.mix = MixtureContents(self.fluid, network)
        self.vessels = [VesselRuntime(v, i) for i, v in enumerate(network.vessels)]
        self.reservoirs = list(network.reservoirs)
        self.node_names = [v.name for v in network.vessels] + [r.name for r in network.reservoirs]
        self.node_index = {n: i for i, n in enumerate(self.node_names)}
        self.n_vessels = len(self.vessels)

        # vessels held as separated zones: the liquid zone's (m_l, U_l)
        offset = 2 * self.n_vessels
        self.zoned: dict[int, ZonedVessel] = {}
        for vrt, vdef in zip(self.vessels, network.vessels):
            if vdef.zones is not None:
                if self.mix is not None:
                    raise FluidError(f"vessel '{vdef.name}': separated vapour and liquid "
                                     "zones are not built for mixtures; hold it in "
                                     "equilibrium (one zone)")
                from .heat.transport import GasProperties
                zv = ZonedVessel(vdef, vrt, self.fluid, offset, GasProperties(self.fluid))
                offset += zv.n_states
                self.zoned[vrt.index] = zv

        # heat terms and their own states
        self.heat_terms = []
        for vrt, vdef in zip(self.vessels, network.vessels):
            zv = self.zoned.get(vrt.index)
            for h in vdef.heat:
                if zv is not None and isinstance(h, Wall):
                    term = ZonedWallTerm(h, vdef.name, zv)
                else:
                    term = HEAT_TYPES[type(h)](h, vdef.name)
                if zv is not None:
                    term.liquid_row = zv.offset + 1
                term.offset = offset
                offset += term.n_states
                vrt.heat.append(term)
                self.heat_terms.append((vrt.index, term))
        #: the heat terms' own states (wall temperatures): nothing else depends on them
        #: but the heat terms, so the cache of vessel states and flows ignores them
        self.heat_states = (self.heat_terms[0][1].offset if self.heat_terms else offset,
                            offset)
        # a mixture run: the component masses of each vessel
        self.i_comp = offset
        if self.mix is not None:
            for vrt in self.vessels:
                vrt.i_c = offset
                offset += self.mix.nc
        self.n_dynamic = offset

        # links
        self.links = list(network.links)
        #: what each link draws from its ``from`` vessel (:func:`cvsim.outlets.drawn_by`)
        self.draw_keys = [drawn_by(link) for link in self.links]
        self.draws_liquid = any(k == "liquid" for k in self.draw_keys)
        #: the shares of the volume below the side outlets (``outlet_height``)
        self.side_outlets = sorted({k for k in self.draw_keys if not isinstance(k, str)})
        if self.mix is not None:
            for link in self.links:
                if link.outlet_height is not None:
                    raise FluidError(f"link '{link.name}': outlet_height is not built for "
                                     "mixtures in this version; use draws: vapour or draws: "
                                     "liquid")
        self.devices = []
        for i, link in enumerate(self.links):
            cls = DEVICE_TYPES[type(link.device)]
            self.devices.append(cls(link.device, self.fluid, i, self.node_index[link.source],
                                    self.node_index[link.target]))
        for _, term in self.heat_terms:
            term.bind(self)
        for d in self.devices:
            d.bind(self)

        # controllers; gates[k] = (discrete key, step) of a link in a sequence, else None
        self.link_index = {link.name: i for i, link in enumerate(self.links)}
        self.controllers = [SequenceController(sq, i, self.link_index, self.devices)
                            for i, sq in enumerate(network.sequences)]
        # valve controllers and their own states, after the heat terms' states
        self.valve_controllers = [ValveController(c, i, self)
                                  for i, c in enumerate(network.controllers)]
        self.controller_states = (offset, offset)
        for c in self.valve_controllers:
            c.offset = offset
            offset += c.n_states
        self.controller_states = (self.controller_states[0], offset)
        self.n_dynamic = offset
        self.controllers += self.valve_controllers
        self.gates: list[tuple[str, int] | None] = [None] * len(self.links)
        for c in self.controllers:
            if c.kind != "sequence":
                continue
            for j, k in enumerate(c.links):
                self.gates[k] = (c.key, j)
        self.initial_events: list[tuple[float, str]] = []

        # bookkeeping integrals
        self.i_acc_links = offset
        offset += ACC_PER_LINK * len(self.links)
        self.i_acc_heat = offset
        offset += len(self.heat_terms)
        self.n_states = offset
        self._reservoir_cache: dict[tuple[int, float, float], object] = {}
        self.jacobian_groups = self._jacobian_groups()

    # ------------------------------------------------------------ set-up
    def initial_states(self):
        """Initial thermodynamic state of each vessel (from pressure and temperature)."""
        out = []
        for v in self.network.vessels:
            try:
                if v.initial.liquid_fraction is None:
                    st = self.fluid.state_pt(v.initial.pressure, v.initial.temperature)
                    if self.mix is not None:   # a state of the vessel's own view
                        st = self.mix.views[len(out)].state_du(st.rho, st.u, st.T,
                                                               self.mix.hints[len(out)])
                    out.append(st)
                else:
                    out.append(self._saturated_mixture(v.initial.pressure,
                                                       v.initial.liquid_fraction))
            except StateError as exc:
                raise StateError(f"initial state: {exc.detail}", where=f"vessel '{v.name}'",
                                 time=0.0) from None
        return out

    def _saturated_mixture(self, p: float, liquid_fraction: float):
        """Two-phase contents at pressure p [Pa] with a volume fraction of liquid:
        rho = f rho_l + (1 - f) rho_v, u = (f rho_l u_l + (1 - f) rho_v u_v) / rho."""
        liq = self.fluid.saturated_liquid_at_p(p)
        vap = self.fluid.saturated_vapour_at_p(p)
        f = liquid_fraction
        rho = f * liq.rho + (1.0 - f) * vap.rho
        u = (f * liq.rho * liq.u + (1.0 - f) * vap.rho * vap.u) / rho
        return self.fluid.state_du(rho, u, liq.T)

    def y0(self) -> np.ndarray:
        y = np.zeros(self.n_states)
        states = self.initial_states()
        for vrt, st in zip(self.vessels, states):
            m = st.rho * vrt.volume
            y[vrt.i_m] = m
            y[vrt.i_U] = m * st.u
            vrt.T_hint = st.T
            if self.mix is not None:
                y[vrt.i_c:vrt.i_c + self.mix.nc] = self.mix.initial_masses(m)
        for vi, zv in self.zoned.items():
            zv.check_initial(states[vi])
            y[zv.offset:zv.offset + 2] = zv.initial(states[vi])
        for vi, term in self.heat_terms:
            init = term.initial_states(states[vi])
            y[term.offset:term.offset + term.n_states] = init
        if self.valve_controllers:
            snap = Segment(self, 0.0, 0.0, {}).states(0.0, y)
            for c in self.valve_controllers:
                c.initial_states(snap, y)
        return y

    def scales(self, y0: np.ndarray) -> np.ndarray:
        """Characteristic size of each state, for absolute tolerances.

        Vessel mass: its volume times the density at the highest pressure in
        the network (so an evacuated vessel that fills gets a sensible scale);
        internal energy: that mass times a characteristic specific energy.
        """
        p_ref = max([v.initial.pressure for v in self.network.vessels]
                    + [r.pressure.extremes()[1] for r in self.reservoirs])
        sc = np.ones(self.n_states)
        m_total = 0.0
        e_total = 0.0
        for vrt, vdef in zip(self.vessels, self.network.vessels):
            T = vdef.initial.temperature
            try:
                rho = self.fluid.state_pt(p_ref, T).rho
            except StateError:
                rho = y0[vrt.i_m] / vrt.volume
            m = max(rho * vrt.volume, y0[vrt.i_m], 1e-12)
            e = m * max(abs(y0[vrt.i_U]) / max(y0[vrt.i_m], 1e-30), 1000.0 * T)
            sc[vrt.i_m], sc[vrt.i_U] = m, e
            if vrt.i_c is not None:
                sc[vrt.i_c:vrt.i_c + self.mix.nc] = m
            zv = self.zoned.get(vrt.index)
            if zv is not None:
                sc[zv.offset], sc[zv.offset + 1] = m, e
            m_total += m
            e_total += e
        for vi, term in self.heat_terms:
            sc[term.offset:term.offset + term.n_states] = term.scales()
        for c in self.valve_controllers:
            sc[c.offset:c.offset + c.n_states] = c.scales(p_ref)
        sc[self.i_acc_links:] = m_total
        for k in range(len(self.links)):
            j = self.i_acc_links + ACC_PER_LINK * k
            sc[j + 1:j + 3] = e_total
        sc[self.i_acc_heat:] = e_total
        return sc

    def breakpoints(self) -> list[float]:
        bps = set()
        for d in self.devices:
            bps.update(d.breakpoints())
        for vi, term in self.heat_terms:
            bps.update(term.breakpoints())
        for c in self.valve_controllers:
            bps.update(c.breakpoints())
        for r in self.reservoirs:
            bps.update(r.pressure.breakpoints)
            bps.update(r.temperature.breakpoints)
        return sorted(t for t in bps if t > 0.0 and math.isfinite(t))

    def schedule(self) -> list[tuple[float, str]]:
        """Scheduled changes of the devices, (time [s], text), in time order."""
        out = []
        for d in self.devices:
            name = self.links[d.index].name
            out += [(t, f"{name}: {text}") for t, text in d.schedule()]
        return sorted(out, key=lambda e: e[0])

    def initial_discrete(self, y0: np.ndarray) -> dict:
        """Discrete states at the start (devices first, then controllers, which
        may look at the devices' flows); what the controllers decide at the start
        goes into :attr:`initial_events`."""
        seg = Segment(self, 0.0, 0.0, {})
        snap = seg.states(0.0, y0)
        discrete = {}
        for d in self.devices:
            discrete.update(d.initial_discrete(snap))
        self.initial_events = []
        if self.controllers:
            bps = self.breakpoints()
            seg = Segment(self, 0.0, bps[0] if bps else self.network.run.end_time, discrete)
            snap = seg.states(0.0, y0)
            for c in self.controllers:
                state, text = c.initial_discrete(seg, snap)
                discrete.update(state)
                self.initial_events.append((0.0, f"{c.name}: {text}"))
        return discrete

    def segment(self, t0: float, t1: float, discrete: dict) -> "Segment":
        return Segment(self, t0, t1, discrete)

    # ------------------------------------------------------------ helpers
    def reservoir_state(self, p: float, T: float, name: str, t: float, j: int = 0):
        """State of reservoir ``name`` (index ``j``) at (p [Pa], T [K]), cached."""
        key = (j, p, T)
        st = self._reservoir_cache.get(key)
        if st is None:
            try:
                st = (self.fluid.state_pt(p, T) if self.mix is None else
                      self.mix.reservoir_state(j, p, T))
            except StateError as exc:
                raise StateError(exc.detail, where=f"reservoir '{name}'", time=t) from None
            if len(self._reservoir_cache) > 256:
                self._reservoir_cache.clear()
            self._reservoir_cache[key] = st
        return st

    def columns(self) -> list[tuple[str, str, str]]:
        """(column name, SI unit, kind) of each observed quantity, in order."""
        cols = [("time", "s", "time")]
        for v in self.vessels:
            for q, u in (("pressure", "Pa"), ("temperature", "K"), ("mass", "kg"),
                         ("density", "kg/m3"), ("specific_enthalpy", "J/kg"),
                         ("specific_internal_energy", "J/kg"), ("specific_entropy", "J/(kg K)"),
                         ("vapour_quality", "-")):
                cols.append((f"{v.name}.{q}", u, "vessel"))
            cols += contents.columns(self.network.vessels[v.index])
            if self.mix is not None:
                from .mixture_contents import component_mass_columns, mole_fraction_columns
                cols += mole_fraction_columns(v.name, self.mix.names)
                cols += component_mass_columns(v.name, self.mix.names)
            for term in v.heat:
                cols.append((f"{v.name}.heat.{term.name}", "W", "heat"))
                if term.has_source:
                    cols.append((f"{v.name}.heat.{term.name}.source_temperature", "K",
                                 "heat-source"))
                cols += term.columns(v.name)
            if v.index in self.zoned:
                cols += self.zoned[v.index].columns()
        for r in self.reservoirs:
            cols.append((f"{r.name}.pressure", "Pa", "reservoir"))
            cols.append((f"{r.name}.temperature", "K", "reservoir"))
        for link, d, gate in zip(self.links, self.devices, self.gates):
            cols.append((f"{link.name}.mass_flow", "kg/s", "link"))
            cols.append((f"{link.name}.choked", "-", "link"))
            if d.has_opening or gate is not None:
                cols.append((f"{link.name}.opening", "-", "link"))
        for c in self.controllers:
            cols += c.columns()
        return cols

    def _jacobian_groups(self) -> list[tuple[list[int], list[list[int]] | None]]:
        """Columns of the dynamic states that the Jacobian perturbs together.

        Each group is (columns, rows of each column or ``None``). A vessel state, or
        a heat-term state whose rows are not declared, is perturbed alone and fills
        its whole column. Heat-term states that declare the rows they can change
        (:meth:`~cvsim.heat.loads.HeatComponent.jacobian_rows`: a wall node changes
        its neighbours, and the gas at the surface) are grouped greedily so that no
        two columns of a group share a row, as scipy's ``group_columns`` does for
        sparse finite differences (Curtis, Powell & Reid, J. Inst. Maths Applics 13
        (1974) 117): a wall of any number of nodes then costs three right-hand sides
        per Jacobian. Columns that change nothing (bookkeeping integrals) are left out.
        """
        groups = [([j], None) for j in range(self.heat_states[0])]   # vessels, zones
        # the component masses of a mixture run change every vessel state and flow
        groups += [([j], None) for j in range(self.i_comp, self.controller_states[0])]
        groups += [([j], None) for j in range(*self.controller_states)]
        declared = []
        for k, (vi, term) in enumerate(self.heat_terms):
            rows = term.jacobian_rows(2 * vi + 1, self.i_acc_heat + k)
            for j in range(term.n_states):
                col = term.offset + j
                if rows is None:
                    groups.append(([col], None))
                elif rows[j]:
                    declared.append((col, set(rows[j])))
        packed: list[tuple[list[int], list[list[int]], set]] = []
        for col, rows in declared:
            for cols, col_rows, used in packed:
                if not used & rows:
                    cols.append(col)
                    col_rows.append(sorted(rows))
                    used |= rows
                    break
            else:
                packed.append(([col], [sorted(rows)], set(rows)))
        # the grouped columns first: they leave the vessel states as they are, so the
        # states cached for the unperturbed point serve them all (and their differences
        # carry no noise from re-solving the gas state)
        return [(cols, col_rows) for cols, col_rows, _ in packed] + groups


class States:
    """Node states at one (t, y): vessels first, then reservoirs; ``outflow``
    are the states a stream leaving each node carries through a top outlet
    (vapour when two phases are present), ``liquid`` those through a bottom
    outlet (saturated liquid when two phases are present; ``None`` when no link
    draws liquid); ``side[f_o]`` those through a side outlet with a share f_o of the
    volume below it (``None`` without side outlets)."""

    __slots__ = ("t", "states", "outflow", "liquid", "y", "w_out", "w_liq", "side")

    def __init__(self, t, states, outflow, liquid=None, y=None, w_out=None, w_liq=None,
                 side=None):
        self.t = t
        self.states = states
        self.outflow = outflow
        self.liquid = liquid
        self.side = side
        #: the state vector they were made from (controllers read their own states)
        self.y = y
        #: a mixture run: mass fractions of the top- and bottom-outlet streams per node
        self.w_out = w_out
        self.w_liq = w_liq


class Segment:
    """The model on one stretch of time [t0, t1] with fixed discrete states."""

    def __init__(self, model: Model, t0: float, t1: float, discrete: dict):
        self.model = model
        self.t0 = t0
        self.t1 = t1
        self.midpoint = 0.5 * (t0 + t1) if math.isfinite(t1) else t0 + 1.0
        self.discrete = discrete
        self._coef: dict[int, tuple[float, float]] = {}
        self._key = None
        self._states = None
        self._flows_key = None
        self._flows = None
        self.last_error: StateError | None = None
        self.rhs_calls = 0
        self.jac_calls = 0
        #: travel set by each valve controller, by link position (:meth:`flows`)
        self.driven: dict[int, float] = {}
        n = model.n_states
        self._dydt = np.zeros(n)
        self._own_heat = model.heat_states

    # ---------------------------------------------------------- signals
    def signal(self, sig, t: float) -> float:
        if type(sig) is Constant:
            return sig.value
        c = self._coef.get(id(sig))
        if c is None:
            c = sig.linear_on(self.t0, self.t1)
            self._coef[id(sig)] = c
        return c[0] + c[1] * (t - self.t0)

    # ---------------------------------------------------------- states
    def states(self, t: float, y: np.ndarray) -> States:
        # node states (and the flows) do not depend on the heat terms' own states
        # (wall temperatures): leave those out of the key, so that perturbing them
        # for the Jacobian reuses the vessel states and link flows
        h0, h1 = self._own_heat
        key = (t, y[:h0].tobytes(), y[h1:].tobytes())
        if key == self._key:
            return self._states
        m = self.model
        if m.mix is not None:
            s = self._mixture_states(t, y)
            self._key, self._states = key, s
            return s
        fluid = m.fluid
        states = []
        outflow = []
        zoned = m.zoned
        for v in m.vessels:
            mass = y[v.i_m]
            zv = zoned.get(v.index)
            try:
                if zv is not None:   # separated zones: what a top outlet draws
                    st = zv.state(mass, y[v.i_U], y[zv.offset], y[zv.offset + 1])
                    states.append(st)
                    outflow.append(zv.drawn(st, "vapour")[0])
                    continue
                st = fluid.state_du(mass / v.volume, y[v.i_U] / mass if mass > 0 else math.nan,
                                    v.T_hint)
                v.T_hint = st.T
                states.append(st)
                outflow.append(drawn_state(fluid, st, "vapour"))
            except StateError as exc:
                raise StateError(exc.detail, where=f"vessel '{v.name}'", time=t) from None
        liquid = None
        if m.draws_liquid:
            liquid = [zoned[i].drawn(st, "liquid")[0] if i in zoned else
                      drawn_state(fluid, st, "liquid") for i, st in enumerate(states)]
        side = None
        if m.side_outlets:
            side = {f_o: [zoned[i].drawn(st, f_o)[0] if i in zoned else
                          drawn_state(fluid, st, f_o) for i, st in enumerate(states)]
                    for f_o in m.side_outlets}
        for r in m.reservoirs:
            p = self.signal(r.pressure, t)
            T = self.signal(r.temperature, t)
            st = m.reservoir_state(p, T, r.name, t, len(states) - len(m.vessels))
            states.append(st)
            outflow.append(st)
            if liquid is not None:
                liquid.append(st)
            if side is not None:
                for drawn in side.values():
                    drawn.append(st)
        s = States(t, states, outflow, liquid, y, side=side)
        self._key, self._states = key, s
        return s

    def driven_opening(self, link: int) -> float:
        """Travel [-] the controller that moves link ``link``'s valve sets at the state
        last evaluated by :meth:`flows`."""
        return self.driven[link]

    def _mixture_states(self, t: float, y: np.ndarray) -> States:
        """Node states of a mixture run: each vessel's composition from its component
        masses, the phases its outlets draw, the reservoirs' supplies
        (:class:`cvsim.mixture_contents.MixtureContents`)."""
        m = self.model
        mix = m.mix
        nc = mix.nc
        states, outflow, w_out = [], [], []
        liquid, w_liq = ([], []) if m.draws_liquid else (None, None)
        for v in m.vessels:
            mass = y[v.i_m]
            try:
                st, top, bottom, wt, wb = mix.vessel_states(
                    v.index, mass / v.volume, y[v.i_U] / mass if mass > 0 else math.nan,
                    y[v.i_c:v.i_c + nc], v.T_hint, m.draws_liquid)
            except StateError as exc:
                raise StateError(exc.detail, where=f"vessel '{v.name}'", time=t) from None
            v.T_hint = st.T
            states.append(st)
            outflow.append(top)
            w_out.append(wt)
            if liquid is not None:
                liquid.append(bottom)
                w_liq.append(wb)
        for j, r in enumerate(m.reservoirs):
            st = m.reservoir_state(self.signal(r.pressure, t), self.signal(r.temperature, t),
                                   r.name, t, j)
            states.append(st)
            outflow.append(st)
            w_out.append(mix.reservoir_w[j])
            if liquid is not None:
                liquid.append(st)
                w_liq.append(mix.reservoir_w[j])
        return States(t, states, outflow, liquid, y, w_out, w_liq)

    @property
    def current_flows(self) -> list[Flow]:
        """The link flows of the state last evaluated (heat terms read filling jets here)."""
        return self._flows

    def flows(self, t: float, y: np.ndarray) -> tuple[States, list[Flow]]:
        s = self.states(t, y)
        if self._flows_key is self._key:
            return s, self._flows
        flows = []
        gates = self.model.gates
        keys = self.model.draw_keys
        for c in self.model.valve_controllers:
            self.driven[c.link] = c.output(t, y, s, self)
        for d in self.model.devices:
            gate = gates[d.index]
            if gate is not None and self.discrete[gate[0]][0] != gate[1]:
                flows.append(NO_FLOW)  # a link of a sequence whose step is not active
                continue
            key = keys[d.index]
            source = (s.outflow if key == "vapour" else s.liquid if key == "liquid" else
                      s.side[key])
            try:
                flows.append(d.flow(t, source[d.source], s.outflow[d.target], self))
            except StateError as exc:
                name = self.model.links[d.index].name
                raise StateError(exc.detail, where=f"link '{name}'", time=t) from None
        self._flows_key, self._flows = self._key, flows
        return s, flows

    # ---------------------------------------------------------- dynamics
    def rhs(self, t: float, y: np.ndarray) -> np.ndarray:
        """dy/dt. On a state outside the equation of state's range it returns
        NaN (so the integrator rejects the step and retries smaller) and keeps
        the error for the message if the integrator cannot go on."""
        self.rhs_calls += 1
        try:
            return self._rhs(t, y)
        except StateError as exc:
            if self.last_error is None:  # the first error of a step is the cause
                self.last_error = exc
            return np.full(self.model.n_states, np.nan)

    def _rhs(self, t: float, y: np.ndarray) -> np.ndarray:
        m = self.model
        s, flows = self.flows(t, y)
        dydt = np.zeros(m.n_states)
        nv = m.n_vessels
        acc = m.i_acc_links
        zoned = m.zoned
        for k, (d, f) in enumerate(zip(m.devices, flows)):
            mdot = f.mdot
            if mdot == 0.0:
                continue
            if mdot > 0.0:
                e_src, e_tgt = mdot * f.h_from, mdot * f.h_to
            else:
                e_src, e_tgt = mdot * f.h_to, mdot * f.h_from
            if d.source < nv:
                dydt[2 * d.source] -= mdot
                dydt[2 * d.source + 1] -= e_src
            if d.target < nv:
                dydt[2 * d.target] += mdot
                dydt[2 * d.target + 1] += e_tgt
            if zoned:   # the part of a stream leaving a liquid zone (entering: the vapour)
                left, draws = ((d.source, m.draw_keys[k]) if mdot > 0.0 else
                               (d.target, "vapour"))
                zv = zoned.get(left)
                if zv is not None:
                    z = s.states[left]
                    w = liquid_share_drawn(draws, z.liquid_fraction, z.liquid is not None)
                    if w > 0.0:
                        dydt[zv.offset] -= w * abs(mdot)
                        dydt[zv.offset + 1] -= w * abs(mdot) * z.liquid.h
            j = acc + ACC_PER_LINK * k
            dydt[j] = mdot
            dydt[j + 1] = e_src
            dydt[j + 2] = e_tgt
            if m.mix is not None:
                # component flows: the mass fractions of what the stream draws
                if mdot > 0.0:
                    w = (s.w_liq if m.draw_keys[k] == "liquid" else s.w_out)[d.source]
                else:
                    w = s.w_out[d.target]
                nc = m.mix.nc
                if d.source < nv:
                    i = m.vessels[d.source].i_c
                    dydt[i:i + nc] -= mdot * w
                if d.target < nv:
                    i = m.vessels[d.target].i_c
                    dydt[i:i + nc] += mdot * w
        for vi, zv in zoned.items():   # rain-out, boil-off, interface
            mdot_l, e_l = zv.liquid_rates(s.states[vi])
            dydt[zv.offset] += mdot_l
            dydt[zv.offset + 1] += e_l
        for c in m.valve_controllers:
            c.derivatives(t, y, s, flows, self, dydt)
        jh = m.i_acc_heat
        for k, (vi, term) in enumerate(m.heat_terms):
            own = y[term.offset:term.offset + term.n_states]
            q = term.evaluate(t, s.states[vi], own, self, dydt)
            dydt[2 * vi + 1] += q
            dydt[jh + k] = q
        for vi, zv in zoned.items():   # the boundary work between the zones
            z = s.states[vi]
            W = zv.volume_rate(z, dydt[2 * vi], dydt[2 * vi + 1], dydt[zv.offset],
                               dydt[zv.offset + 1])
            dydt[zv.offset + 1] -= z.p * W
            for term in m.vessels[vi].heat:
                if isinstance(term, ZonedWallTerm):
                    term.transfer(z.dshare_dV * W, dydt)
        return dydt

    def jac(self, t: float, y: np.ndarray) -> np.ndarray:
        """Finite-difference Jacobian over the dynamic states only (the
        bookkeeping integrals never feed back, so their columns are zero).
        Columns with disjoint rows are perturbed together (:meth:`Model._jacobian_groups`)."""
        self.jac_calls += 1
        m = self.model
        n = m.n_states
        f0 = self.rhs(t, y)
        J = np.zeros((n, n))
        eps = 1.4901161193847656e-08  # sqrt(machine epsilon)
        yp = y.copy()
        for cols, rows in m.jacobian_groups:
            steps = []
            for j in cols:
                h = eps * max(abs(y[j]), self.scale[j] if self.scale is not None else 1.0)
                yp[j] = y[j] + h
                steps.append(yp[j] - y[j])
            df = self.rhs(t, yp) - f0
            if rows is None:
                J[:, cols[0]] = df / steps[0]
            else:
                for j, r, h in zip(cols, rows, steps):
                    J[r, j] = df[r] / h
            for j in cols:
                yp[j] = y[j]
        return J

    scale = None

    # ---------------------------------------------------------- events
    def events(self, stop_conditions) -> list:
        """Event functions for scipy (terminal), each with ``.action``:
        ``("stop", condition, text)`` or ``("switch", Switch, text)``."""
        m = self.model
        evs = []
        for cond in stop_conditions:
            i = m.node_index[cond.node]
            sign = 1.0 if cond.direction == "above" else -1.0
            fn = _quantity_event(self, i, cond.quantity, cond.value)
            fn.terminal = True
            fn.direction = sign
            fn.action = ("stop", cond, cond.describe())
            evs.append(fn)
        for d in m.devices:
            for sw in d.switches(self.discrete):
                fn = _switch_event(self, sw)
                fn.terminal = True
                fn.direction = sw.direction
                fn.action = ("switch", sw, f"{m.links[d.index].name}: {sw.describe}")
                evs.append(fn)
        for c in m.controllers:
            for sw in c.switches(self):
                fn = _switch_event(self, sw)
                fn.terminal = True
                fn.direction = sw.direction
                fn.action = ("switch", sw, f"{c.name}: {sw.describe}")
                evs.append(fn)
        return evs

    # ---------------------------------------------------------- output
    def observe(self, t: float, y: np.ndarray) -> list[float]:
        """One row of the observed quantities, in the order of :meth:`Model.columns`."""
        m = self.model
        s, flows = self.flows(t, y)
        row = [t]
        nv = m.n_vessels
        for v in m.vessels:
            st = s.states[v.index]
            # the specific internal energy recorded is the conserved U/m (the state's
            # own u agrees with it to the solve's residual: the self-checks verify it)
            mass = y[v.i_m]
            row += [st.p, st.T, mass, st.rho, st.h, y[v.i_U] / mass if mass > 0 else st.u,
                    st.s, st.quality]
            row += contents.values(m.network.vessels[v.index], st)
            if m.mix is not None:
                row += list(st.z)
                row += list(y[v.i_c:v.i_c + m.mix.nc])
            scratch = np.zeros(m.n_states)
            for term in v.heat:
                own = y[term.offset:term.offset + term.n_states]
                row.append(term.evaluate(t, st, own, self, scratch))
                if term.has_source:
                    row.append(term.source_temperature(t, st, own, self))
                row += term.values(t, st, own, self)
            zv = m.zoned.get(v.index)
            if zv is not None:
                row += zv.values(t, st, float(scratch[zv.offset + 1]))
        for k, r in enumerate(m.reservoirs):
            st = s.states[nv + k]
            row += [st.p, st.T]
        for d, f, gate in zip(m.devices, flows, m.gates):
            row += [f.mdot, 1.0 if f.choked else 0.0]
            if d.has_opening or gate is not None:
                shut = gate is not None and self.discrete[gate[0]][0] != gate[1]
                row.append(0.0 if shut else d.opening(t, s, self))
        for c in m.controllers:
            row += c.values(t, y, s, self)
        return row


def _quantity_event(seg: Segment, node: int, quantity: str, value: float):
    nv = seg.model.n_vessels

    def g(t, y):
        if quantity == "mass":
            return (y[2 * node] if node < nv else math.inf) - value
        try:
            st = seg.states(t, y).states[node]
        except StateError as exc:
            if seg.last_error is None:
                seg.last_error = exc
            return math.nan
        return (st.p if quantity == "pressure" else st.T) - value
    return g


def _switch_event(seg: Segment, sw):
    def g(t, y):
        try:
            return sw.function(t, seg.states(t, y))
        except StateError as exc:
            if seg.last_error is None:
                seg.last_error = exc
            return math.nan
    return g
