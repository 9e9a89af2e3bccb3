"""What the vessels of a mixture run hold, and what their streams carry.

Each vessel of a mixture run carries, besides its mass m and internal energy U, the
mass m_i of every component (a block of the state vector of its own,
:class:`cvsim.model.Model`). From them, per right-hand side:

    n_i = m_i / M_i,   z_i = n_i / sum(n)           overall mole fractions
    state = view(z).state_du(m / V, U / m)            (rho, u) flash of that composition

(``view``: :meth:`cvsim.mixture.MixtureEngine.view`, one fluid object per
composition, kept while z moves by less than VIEW_SAME). Every stream carries the
composition of what it draws, and the component flows follow from the mass flow:

    mdot_i = mdot w_i,   w_i = y_i M_i / sum(y M)      (mass fractions of that phase)

* a top outlet of a two-phase vessel draws its vapour phase (composition y, at the
  vessel's T and p: its dew point), a bottom outlet its liquid phase (x, at its
  bubble point), each with its own enthalpy; as the level reaches an outlet it draws
  both phases in the proportion of :func:`cvsim.outlets.drawn_quality`; a
  single-phase vessel gives its own contents (w_i = m_i / sum m);
* a reservoir supplies its own composition (the fluid's unless it states one).

Since sum(w) = 1 for every stream, sum(dm_i/dt) = dm/dt: the component masses sum to
m to the integrator's round-off, a self-check of every run (:mod:`cvsim.checks`).
Warm starts: one :class:`cvsim.mixture.FlashHint` per vessel (the (rho, u) flash) and
one view per vessel and drawn phase.
"""
from __future__ import annotations

import numpy as np

from .errors import StateError
from .outlets import drawn_quality


class MixtureContents:
    """Compositions and states of the vessels and reservoirs of a mixture run.

    Parameters
    ----------
    fluid : the run's :class:`cvsim.mixture.MixtureFluid` (the network's composition)
    network : the :class:`cvsim.network.Network`
    """

    def __init__(self, fluid, network):
        from .mixture import FlashHint
        self.fluid = fluid
        self.engine = fluid.engine
        self.nc = self.engine.nc
        self.M = self.engine.M                      # [kg/mol] per component
        self.names = self.engine.names
        nv = len(network.vessels)
        #: per vessel: the view of its contents, and of its vapour and liquid phase
        self.views = [fluid] * nv
        self.vapour_views = [None] * nv
        self.liquid_views = [None] * nv
        self.hints = [FlashHint() for _ in range(nv)]
        #: per reservoir: the fluid of what it supplies and its mass fractions
        self.reservoir_fluids = []
        for r in network.reservoirs:
            z = np.asarray(r.composition, dtype=float) if r.composition is not None else fluid.z
            f = fluid if r.composition is None else self.engine.fluid(z, f"{r.name} supply")
            self.reservoir_fluids.append(f)
        self.reservoir_w = [f.mass_fractions() for f in self.reservoir_fluids]

    # ---------------------------------------------------------------- set-up
    def initial_masses(self, vessel_mass: float) -> np.ndarray:
        """Component masses [kg] of a vessel holding ``vessel_mass`` of the fluid's composition."""
        return vessel_mass * self.fluid.mass_fractions()

    def mole_fractions(self, masses: np.ndarray) -> np.ndarray:
        """Overall mole fractions from component masses [kg] (negative round-off clipped)."""
        n = np.maximum(masses, 0.0) / self.M
        total = n.sum()
        if not (total > 0.0):
            raise StateError("the vessel holds no component mass (it has emptied); add a "
                             "stop condition before the vessel empties.")
        return n / total

    # ---------------------------------------------------------------- states
    def vessel_states(self, k: int, rho: float, u: float, masses: np.ndarray, T_hint: float,
                      draws_liquid: bool):
        """(contents, top-outlet stream, bottom-outlet stream or None, w top, w bottom)
        of vessel ``k``: states of :class:`cvsim.mixture.MixtureState` and the mass
        fractions of each stream."""
        z = self.mole_fractions(masses)
        view = self.engine.view(z, self.views[k])
        self.views[k] = view
        st = view.state_du(rho, u, T_hint, self.hints[k])
        if not st.two_phase:
            w = np.maximum(masses, 0.0)
            w = w / w.sum()
            return st, st, (st if draws_liquid else None), w, w
        # what each outlet draws: its phase, or both as the level reaches it
        q = drawn_quality("vapour", st.quality, st.liquid_fraction)
        vap = view.stream_state(st, q, self.vapour_views[k])
        self.vapour_views[k] = vap.fluid
        w_vap = vap.fluid.mass_fractions()
        liq = w_liq = None
        if draws_liquid:
            q = drawn_quality("liquid", st.quality, st.liquid_fraction)
            liq = view.stream_state(st, q, self.liquid_views[k])
            self.liquid_views[k] = liq.fluid
            w_liq = liq.fluid.mass_fractions()
        return st, vap, liq, w_vap, w_liq

    def reservoir_state(self, j: int, p: float, T: float):
        """State of what reservoir ``j`` supplies at (p [Pa], T [K])."""
        return self.reservoir_fluids[j].state_pt(p, T)


def assumption_lines(spec, network) -> list[str]:
    """The mixture's lines of the assumption register."""
    comp = ", ".join(f"{n} {z:.4g}" for n, z in zip(spec.components, spec.mole_fractions)
                     if z > 0.0)
    out = [f"Fluid properties: {spec.name}, a mixture (mole fractions {comp}) on the "
           f"{spec.equation} equation of state (thermopack), equilibrium single- and "
           "two-phase states from our own (rho, u) flash over thermopack's (T, p) flash; no "
           "solids (hydrates, CO2 or wax), no second liquid phase, cubic equations with "
           "thermopack's default binary interaction parameters.",
           "Each vessel's composition follows its component masses: a top outlet draws the "
           "vapour phase (its composition y), a bottom outlet the liquid phase (x); streams "
           "into a vessel mix with its contents at once (well mixed)."]
    own = [r.name for r in network.reservoirs if r.composition is not None]
    if own:
        out.append("Reservoirs supplying their own composition: " + ", ".join(own) + ".")
    frozen = [k.name for k in network.links
              if getattr(k.device, "expansion", "equilibrium") == "frozen"]
    if any(type(k.device).__name__ in ("Orifice", "ReliefValve", "BurstingDisc", "CheckValve")
           and k.name not in frozen for k in network.links):
        out.append("Mixture through a nozzle throat: homogeneous equilibrium (phases at one "
                   "velocity and temperature, in phase equilibrium), throat where the flow "
                   "reaches the equilibrium speed of sound, found in pressure.")
    if frozen:
        out.append("Frozen composition through the orifice(s) " + ", ".join(frozen) + ": no "
                   "phase change in the nozzle (each phase keeps its mass share and "
                   "composition; the vapour expands isentropically on its own root of the "
                   "equation of state, supersaturated where equilibrium would condense it; "
                   "the liquid incompressible), throat where the flow reaches the frozen "
                   "speed of sound; the upper bound of a flashing flow, equilibrium the "
                   "lower.")
    return out


def mole_fraction_columns(vessel: str, names) -> list[tuple[str, str, str]]:
    """History columns of a mixture vessel: overall mole fraction of each component."""
    return [(f"{vessel}.mole_fraction.{n}", "-", "vessel") for n in names]


def component_mass_columns(vessel: str, names) -> list[tuple[str, str, str]]:
    """History columns of a mixture vessel: mass of each component [kg]."""
    return [(f"{vessel}.component_mass.{n}", "kg", "vessel") for n in names]


__all__ = ["MixtureContents", "component_mass_columns", "mole_fraction_columns"]
