"""Thermodynamic states of gas mixtures of named components, through two phases.

A sibling of :mod:`cvsim.fluid`: :class:`MixtureFluid` offers the methods of
:class:`cvsim.fluid.RealFluid` (``state_pt``, ``state_dt``, ``state_du``,
``isentrope_at``, ``saturated_vapour_at_p`` ...) for a fixed overall composition
z, so the model and the nozzle use it unchanged. The equation of state and the
isothermal-isobaric flash come from thermopack (SINTEF/NTNU; Peng-Robinson, SRK,
GERG-2008); every other specification is solved here, on the residual:

    (T, p) flash        thermopack: stability analysis (tangent-plane distance),
                        successive substitution and Newton on the K-values, the
                        Rachford-Rice split (Michelsen & Mollerup, *Thermodynamic
                        Models: Fundamentals and Computational Aspects*, 2nd ed.
                        2007, ch. 9-10)
    (v, u), (v, s)      single phase: Newton on T at fixed v with du = cv dT
                        (ds = cv/T dT), bracketed; kept when the (T, p) it gives is
                        stable (outside the phase envelope, or the (T, p) flash
                        finds one phase). Otherwise two phases: Newton in
                        (ln T, ln p) on
                            r_v = (v(T, p) - v)/v,  r_u = (u(T, p) - u)/(|u| + R Tc)
                        with v(T, p) = beta v_V(y) + (1 - beta) v_L(x), likewise u
                        and s, from the (T, p) flash (Michelsen, Fluid Phase
                        Equilib. 158-160 (1999) 617, "state function based flash
                        specifications"); the Jacobian is kept between calls and
                        updated by Broyden's rule (warm start), refreshed by finite
                        differences when a step fails to reduce the residual
    (v, T)              single phase from p(T, v); else bracketed secant in ln p
    (p, s)              bracketed secant in T over (T, p) flashes

Units at the interface are SI and per kilogram, as in :mod:`cvsim.fluid`;
inside, thermopack works per mole (J/mol, m3/mol). ``beta`` is the vapour
*mole* fraction, ``quality`` the vapour *mass* fraction.

For phase-resolved work (a per-vessel composition, a top outlet drawing vapour)
a two-phase :class:`MixtureState` carries the phase compositions ``x`` (liquid)
and ``y`` (vapour), ``beta``, and each phase as a :class:`cvsim.fluid.State`
(``vapour``, ``liquid``); :meth:`MixtureEngine.fluid` gives the fixed-composition
view for any z on the same engine.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .components import (COMPONENTS, EQUATIONS, GERG_COMPONENTS,  # noqa: F401 (re-exported)
                         Composition, CompositionWarning, component_name, equation_name,
                         make_composition)
from .errors import FluidError, StateError
from .fluid import NAN, R_UNIVERSAL, State
from .numerics import root_on_bracket
from .mixture_calls import LeanCalls

#: relative residual tolerance of the mixture state solves (v and u, s relative to
#: |u| + R Tc, |s| + R); looser than the pure-fluid STATE_RTOL because the (T, p)
#: flash itself converges to about 1e-13 relative in v and u
MIX_RTOL = 1e-11
#: a residual up to this is accepted when the iteration stalls on flash round-off
MIX_RTOL_FLOOR = 1e-9
MAX_ITERATIONS = 60

#: views of compositions closer than this (max |dz|) are the same view (MixtureEngine.view)
VIEW_SAME = 1e-12
#: a view borrows the phase envelope and critical point of an anchor composition
#: within this (max |dz|). Measured (PR): the cricondentherm moves by at most 0.06 K
#: and the cricondenbar by 0.04 % per 1e-4 for a C1-C4 + N2 gas, and by 0.62 K and
#: 0.43 % per 1e-4 for a C1-C7 + N2 + CO2 gas with 0.2 % heptane: at 3e-5 at most
#: 0.2 K and 0.13 %, a tenth of the screen's margins (ENVELOPE_MARGIN_T, _P)
VIEW_SHARE = 3e-5
#: an anchor's envelope is traced after it has served this many views
ANCHOR_TRACE_AFTER = 100
MAX_ANCHORS = 64


# ----------------------------------------------------------------------- states
class MixtureState(State):
    """An equilibrium state of a mixture: a :class:`cvsim.fluid.State` plus its phases.

    ``z`` overall, ``x`` liquid and ``y`` vapour mole fractions (numpy arrays;
    in one phase both equal z), ``beta`` the vapour mole fraction (NaN in one
    phase), ``vapour`` and ``liquid`` the phases as States at the same T and p
    (None in one phase), ``molar_mass`` [kg/mol] of the overall mixture, ``fluid``
    the :class:`MixtureFluid` of composition z that made it (devices take the stream's
    properties from it, :func:`cvsim.fluid.fluid_of`).
    """

    __slots__ = ("z", "x", "y", "beta", "vapour", "liquid", "molar_mass", "fluid")

    def __init__(self, rho, T, p, u, h, s, cp, cv, c, quality=NAN, phase="gas",
                 liquid_fraction=0.0, z=None, x=None, y=None, beta=NAN, vapour=None,
                 liquid=None, molar_mass=NAN):
        super().__init__(rho, T, p, u, h, s, cp, cv, c, quality, phase, liquid_fraction)
        self.z, self.x, self.y, self.beta = z, x, y, beta
        self.vapour, self.liquid, self.molar_mass = vapour, liquid, molar_mass
        #: the :class:`MixtureFluid` of composition z this state belongs to (or None)
        self.fluid = None


@dataclass
class FlashHint:
    """Warm start of one solve kind for one vessel or link: the last (T, p), whether
    it was two-phase, and the last Jacobian of the two-phase residuals in (ln T, ln p)."""

    T: float = NAN
    p: float = NAN
    two_phase: bool = False
    jac: np.ndarray | None = None
    #: one phase: the last root was liquid (pressure-based solves pick the root by it)
    liquid: bool = False
    #: two phases at fixed p: the last slope dy/dT of s or h [J/(mol K) per K or J/(mol K)]
    slope: float = NAN
    #: two phases at fixed v: the last solution's molar volume and u (or s), and which
    v: float = NAN
    y: float = NAN
    kind: str = ""


class _Phase:
    """Molar properties of one phase at (T, v, composition w) (internal)."""

    __slots__ = ("T", "v", "p", "u", "s", "cv", "dpdt", "dpdv", "w", "M")


# ---------------------------------------------------------------------- engine
class MixtureEngine:
    """An equation of state for a set of components, with the flashes of the module.

    Parameters
    ----------
    names : component names (CoolProp's, see :data:`COMPONENTS`)
    equation : ``Peng-Robinson``, ``SRK`` or ``GERG-2008`` (:data:`EQUATIONS`);
        the cubics use thermopack's default binary interaction parameters and
        classic alpha functions, no volume translation.

    All methods take the overall composition z (mole fractions, numpy array in
    the order of ``names``) so one engine serves every vessel of a network.
    """

    def __init__(self, names, equation: str = "Peng-Robinson"):
        equation = equation_name(equation)
        names = tuple(component_name(n) for n in names)
        if len(set(names)) != len(names):
            raise FluidError("a component is listed twice; list each once.")
        if equation == "GERG-2008":
            bad = [n for n in names if n not in GERG_COMPONENTS]
            if bad:
                raise FluidError(f"GERG-2008 does not cover {', '.join(bad)}; use "
                                 "Peng-Robinson or SRK, or leave the component out.")
        self.names = names
        self.equation = equation
        self.nc = len(names)
        self.M = np.array([COMPONENTS[n][1] for n in names])
        kind, key = EQUATIONS[equation]
        ids = ",".join(COMPONENTS[n][0] for n in names)
        if kind == "cubic":
            from thermopack.cubic import cubic
            self._tp = cubic(ids, key)
        else:
            from thermopack.multiparameter import multiparam
            self._tp = multiparam(ids, key)
        tp = self._tp
        self._LIQ, self._VAP, self._TWO = tp.LIQPH, tp.VAPPH, tp.TWOPH
        self.t_min = tp.get_tmin()
        self.t_max = tp.get_tmax()
        self.p_max = tp.get_pmax()
        self._lean = LeanCalls(tp, self.nc)
        self.evaluations = 0   # equation-of-state property calls
        self.flashes = 0       # (T, p) flashes
        self._anchors: list = []     # [view, views served] (see view())
        self._anchor_z = np.zeros((MAX_ANCHORS, self.nc))
        self._tc = np.array([tp.critical_temperature(i + 1) for i in range(self.nc)])
        self._pc = np.array([tp.critical_pressure(i + 1) for i in range(self.nc)])

    def fluid(self, z, name: str | None = None) -> "MixtureFluid":
        """The fixed-composition fluid object for overall mole fractions z on this engine."""
        return MixtureFluid(self, z, name)

    def view(self, z: np.ndarray, last: "MixtureFluid | None" = None) -> "MixtureFluid":
        """The fluid object for a composition z that changes along a run (a vessel's
        contents, the phase a stream draws).

        ``last`` (the view used for the same vessel or stream before) is returned
        while max |z - last.z| <= VIEW_SAME: the state error that makes is of that
        order, far below the solver's tolerances. Otherwise a new view, which takes
        the phase envelope (the screen of :meth:`MixtureFluid._surely_single`) and
        the critical point of an anchor composition within VIEW_SHARE (see there for
        the error); an anchor's envelope is traced once it has served
        ANCHOR_TRACE_AFTER views (tracing costs 5-10 ms, one (T, p) flash 0.05 ms).
        Without an envelope every state is flash-tested.
        """
        if last is not None and float(np.max(np.abs(z - last.z))) <= VIEW_SAME:
            return last
        f = MixtureFluid(self, z, checked=True)
        anchors = self._anchors
        k = -1
        if anchors:
            d = np.max(np.abs(self._anchor_z[:len(anchors)] - f.z), axis=1)
            k = int(np.argmin(d))
            if d[k] > VIEW_SHARE:
                k = -1
        if k < 0:
            if len(anchors) >= MAX_ANCHORS:   # forget the oldest
                anchors.pop(0)
                self._anchor_z[:-1] = self._anchor_z[1:].copy()
            anchors.append([f, 0])
            self._anchor_z[len(anchors) - 1] = f.z
            k = len(anchors) - 1
        entry = anchors[k]
        entry[1] += 1
        anchor = entry[0]
        if anchor._envelope is None and entry[1] >= ANCHOR_TRACE_AFTER:
            anchor.envelope()
        f._envelope = anchor._envelope if anchor._envelope is not None else False
        f._crit = anchor._crit
        return f

    # -------------------------------------------------------------- phases
    def _phase_tv(self, T: float, v: float, w: np.ndarray) -> _Phase:
        self.evaluations += 3
        ph = _Phase()
        ph.T, ph.v, ph.w = T, v, w
        ph.M = float(w @ self.M)
        ph.p, ph.dpdt, ph.dpdv, ph.u, ph.cv, ph.s = self._lean.tv(T, v, w)
        return ph

    def _phase_tp(self, T: float, p: float, w: np.ndarray, flag: int) -> _Phase:
        self.evaluations += 1
        return self._phase_tv(T, self._lean.volume(T, p, w, flag), w)

    @staticmethod
    def _state_of(ph: _Phase, phase: str) -> State:
        """A single-phase State (per kg) from molar properties."""
        M = ph.M
        cp = ph.cv - ph.T * ph.dpdt ** 2 / ph.dpdv
        c2 = -ph.v * ph.v * ph.dpdv * cp / ph.cv / M
        c = math.sqrt(c2) if c2 > 0.0 else NAN
        return State(M / ph.v, ph.T, ph.p, ph.u / M, (ph.u + ph.p * ph.v) / M, ph.s / M,
                     cp / M, ph.cv / M, c, NAN, phase, 1.0 if phase == "liquid" else 0.0)

    def _single_label(self, ph: _Phase, z: np.ndarray) -> str:
        """gas / liquid / supercritical for a one-phase state by Kay's pseudo-critical
        point (T_pc = sum z_i Tc_i, p_pc = sum z_i pc_i): supercritical above both,
        gas above T_pc alone; below T_pc by the root's compressibility (Z < 0.3 liquid)."""
        if ph.T >= float(z @ self._tc):
            return "supercritical" if ph.p >= float(z @ self._pc) else "gas"
        Z = ph.p * ph.v / (R_UNIVERSAL * ph.T)
        return "liquid" if Z < 0.3 else "gas"

    # -------------------------------------------------------------- flashes
    def flash_tp(self, T: float, p: float, z: np.ndarray):
        """Equilibrium at (T [K], p [Pa]) for overall composition z.

        Returns (beta, x, y, vapour _Phase or None, liquid _Phase or None):
        beta in (0, 1) in two phases; 1 (vapour/gas/supercritical) or 0 (liquid) in one.
        """
        self.flashes += 1
        phase, betaV, x, y = self._lean.flash(T, p, z)
        if phase == self._TWO and 0.0 < betaV < 1.0:
            return (betaV, x, y, self._phase_tp(T, p, y, self._VAP),
                    self._phase_tp(T, p, x, self._LIQ))
        if phase == self._LIQ:
            return 0.0, z, z, None, self._phase_tp(T, p, z, self._LIQ)
        V = self._phase_tp(T, p, z, self._VAP)
        if phase != self._VAP:
            # one phase (thermopack could not tell which): the root of least Gibbs energy
            L = self._phase_tp(T, p, z, self._LIQ)
            if abs(L.v - V.v) > 1e-9 * V.v and (L.u - T * L.s + p * L.v) < (V.u - T * V.s + p * V.v):
                return 0.0, z, z, None, L
        return 1.0, z, z, V, None

    def equilibrium_tp(self, T: float, p: float, z: np.ndarray):
        """(v [m3/mol], u [J/mol], s [J/(mol K)], flash) of the equilibrium at (T, p)."""
        fl = self.flash_tp(T, p, z)
        beta, _, _, V, L = fl
        if V is not None and L is not None:
            return (beta * V.v + (1 - beta) * L.v, beta * V.u + (1 - beta) * L.u,
                    beta * V.s + (1 - beta) * L.s, fl)
        ph = V if V is not None else L
        return ph.v, ph.u, ph.s, fl

    def make_state(self, z: np.ndarray, T: float, p: float, fl) -> MixtureState:
        """A MixtureState from a (T, p) flash result."""
        beta, x, y, V, L = fl
        Mz = float(z @ self.M)
        if V is not None and L is not None:
            vap, liq = self._state_of(V, "gas"), self._state_of(L, "liquid")
            v = beta * V.v + (1 - beta) * L.v
            u = beta * V.u + (1 - beta) * L.u
            s = beta * V.s + (1 - beta) * L.s
            quality = beta * V.M / Mz
            lf = (1 - beta) * L.v / v
            return MixtureState(Mz / v, T, p, u / Mz, (u + p * v) / Mz, s / Mz, NAN, NAN, NAN,
                                quality, "two-phase", lf, z, x, y, beta, vap, liq, Mz)
        ph = V if V is not None else L
        label = "liquid" if L is not None else self._single_label(ph, z)
        st = self._state_of(ph, label)
        return MixtureState(st.rho, T, ph.p, st.u, st.h, st.s, st.cp, st.cv, st.c, NAN, label,
                            st.liquid_fraction, z, z, z, NAN, None, None, Mz)


# ---------------------------------------------------------------------- fluid
class MixtureFluid:
    """A mixture of fixed overall composition, with the interface of
    :class:`cvsim.fluid.RealFluid` (per kilogram, SI).

    Parameters
    ----------
    engine : the :class:`MixtureEngine` (components and equation of state)
    z : overall mole fractions in the engine's component order (normalised here)
    name : label (default: the components and their mole fractions)
    """

    model = "mixture"

    def __init__(self, engine: MixtureEngine, z, name: str | None = None, *,
                 checked: bool = False):
        z = np.asarray(z, dtype=float)
        if not checked and (z.shape != (engine.nc,) or not np.all(np.isfinite(z))
                            or np.any(z < 0) or z.sum() <= 0):
            raise FluidError(f"composition {list(z)} does not fit the components "
                             f"{', '.join(engine.names)}: give one fraction >= 0 for each.")
        self.engine = engine
        self.z = z / z.sum()
        self.names = engine.names
        self.equation = engine.equation
        self._name = name
        self.molar_mass = float(self.z @ engine.M)
        self.t_min, self.t_max, self.p_max = engine.t_min, engine.t_max, engine.p_max
        self.t_triple = self.t_min   # no solid model: the equation of state's lower end
        R = R_UNIVERSAL
        self._u_scale = R * max(float(self.z @ engine._tc), 100.0)   # [J/mol]
        self._s_scale = R                                             # [J/(mol K)]
        #: the energy scale of the residual tolerances [J/kg] (R T_pc per kilogram)
        self.energy_scale = self._u_scale / self.molar_mass
        self._hints = {"u": FlashHint(), "s": FlashHint(), "T": FlashHint(),
                       "ps": FlashHint(), "ph": FlashHint()}
        self._envelope = None
        self._crit = None
        #: one component: two phases lie on its saturation curve (lever rule)
        self._pure = int(np.count_nonzero(self.z)) == 1
        #: corrections made to the composition on the way in (see make_composition)
        self.notes: list[str] = []

    @property
    def name(self) -> str:
        """Label: the name given, else the components and their mole fractions."""
        if self._name is None:
            self._name = "mixture (" + ", ".join(
                f"{n} {f:.4g}" for n, f in zip(self.names, self.z) if f > 0.0) + ")"
        return self._name

    def mass_fractions(self) -> np.ndarray:
        """Mass fractions w_i = z_i M_i / sum z M [-] in the engine's component order."""
        w = self.z * self.engine.M
        return w / w.sum()

    def _make(self, T: float, p: float, fl) -> MixtureState:
        st = self.engine.make_state(self.z, T, p, fl)
        st.fluid = self
        return st

    # ------------------------------------------------------------ counters
    @property
    def evaluations(self) -> int:
        """Equation-of-state calls plus (T, p) flashes on the engine (for benchmarks)."""
        return self.engine.evaluations + self.engine.flashes

    @property
    def flashes(self) -> int:
        return self.engine.flashes

    # ------------------------------------------------------------- limits
    def _critical(self):
        if self._crit is None:
            try:
                Tc, _, pc = self.engine._tp.critical(self.z)
            except Exception:  # no critical point found (thermopack raises bare Exception)
                Tc, pc = NAN, NAN
            self._crit = (Tc, pc)
        return self._crit

    @property
    def t_crit(self) -> float:
        """Critical temperature of the mixture [K] (NaN where none was found)."""
        return self._critical()[0]

    @property
    def p_crit(self) -> float:
        """Critical pressure of the mixture [Pa] (NaN where none was found)."""
        return self._critical()[1]

    def envelope(self):
        """(cricondentherm [K], cricondenbar [Pa]) of the phase envelope of z, or None
        when thermopack's envelope trace fails (then every state is flash-tested)."""
        if self._envelope is None:
            try:
                T, p = self.engine._tp.get_envelope_twophase(1.0e5, self.z,
                                                            maximum_pressure=self.p_max)
                T, p = np.asarray(T), np.asarray(p)
                ok = np.isfinite(T) & np.isfinite(p)
                self._envelope = (float(T[ok].max()), float(p[ok].max())) if ok.sum() > 5 else False
            except Exception:  # thermopack raises bare Exception when the trace fails
                self._envelope = False
        return self._envelope or None

    def _surely_single(self, T: float, p: float) -> bool:
        """True where (T, p) lies outside the phase envelope by a margin (no flash needed)."""
        env = self.envelope()
        if env is None:
            return False
        return T > env[0] + ENVELOPE_MARGIN_T or p > env[1] * (1.0 + ENVELOPE_MARGIN_P)

    def _check_T(self, T: float, what: str) -> None:
        if not (self.t_min <= T <= self.t_max):
            raise StateError(
                f"temperature {T:.6g} K is outside the range of the {self.equation} mixture "
                f"model ({self.t_min:.6g} to {self.t_max:.6g} K) ({what}). Below it solids "
                "(CO2, water ice, heavy hydrocarbons) may form, which cvsim does not model: "
                "stop the run earlier (a pressure or temperature stop) or add heat input.")

    def _check_rho(self, rho: float, what: str) -> None:
        if not (rho > 0.0) or not math.isfinite(rho):
            raise StateError(f"density {rho:.6g} kg/m3 is not positive ({what}); the vessel has "
                             "emptied or the solver overshot. Add a stop condition before "
                             "the vessel empties.")

    def _check_p(self, p: float) -> None:
        if p > self.p_max:
            raise StateError(f"pressure {p / 1e5:.6g} bar is above the highest pressure of the "
                             f"{self.equation} mixture model ({self.p_max / 1e5:.6g} bar).")

    # -------------------------------------------------------------- states
    def state_pt(self, p: float, T: float) -> MixtureState:
        """Equilibrium state from pressure [Pa] and temperature [K] (two phases inside
        the envelope)."""
        if not (p > 0.0) or not math.isfinite(p):
            raise StateError(f"pressure {p:.6g} Pa is not positive")
        self._check_T(T, "pressure-temperature state")
        self._check_p(p)
        e = self.engine
        return self._make(T, p, e.flash_tp(T, p, self.z))

    def state_dt(self, rho: float, T: float) -> MixtureState:
        """Equilibrium state from density [kg/m3] and temperature [K]."""
        self._check_rho(rho, "density-temperature state")
        self._check_T(T, "density-temperature state")
        hint = self._hints["T"]
        out = self._equilibrium_tv(T, self.molar_mass / rho,
                                   hint.p if hint.two_phase else None)
        if out is None:
            raise StateError(f"the {self.name} state at rho = {rho:.6g} kg/m3, T = {T:.6g} K "
                             "could not be solved (two-phase density-temperature flash); "
                             "please report it with the scenario.")
        p, fl = out
        self._check_p(p)
        hint.T, hint.p, hint.two_phase = T, p, fl[3] is not None and fl[4] is not None
        return self._make(T, p, fl)

    def _equilibrium_tv(self, T: float, v: float, p_guess: float | None = None):
        """Equilibrium at (T [K], v [m3/mol]): (p [Pa], flash tuple), or None.

        One phase when p(T, v) of the equation of state is mechanically stable and
        the (T, p) flash finds that same root; else two phases: v(T, p) = v, with v
        falling as p rises, by a bracketed secant in ln p (lever rule on the
        saturation curve for a single component)."""
        e, z = self.engine, self.z
        ph = e._phase_tv(T, v, z)
        if ph.p > 0.0 and ph.dpdv < 0.0:
            if self._surely_single(T, ph.p):
                return ph.p, (1.0, z, z, ph, None)
            fl = e.flash_tp(T, ph.p, z)
            if self._same_root(fl, v):
                return ph.p, ((0.0, z, z, None, ph) if fl[3] is None else (1.0, z, z, ph, None))
        if self._pure:
            _, p, fl = self._pure_split_at(T, v)
            return (p, fl) if 0.0 <= fl[0] <= 1.0 else None
        p0 = p_guess if p_guess else (ph.p if ph.p > 0.0 else 1e5)
        seen = {}

        def f(lnp):
            vv, _, _, fl = e.equilibrium_tp(T, math.exp(lnp), z)
            seen[lnp] = fl
            return (v - vv) / v          # rises with p

        lnp = _solve_increasing(f, math.log(p0), 0.05, math.log(1e2), math.log(self.p_max),
                                MIX_RTOL)
        if lnp is None:
            return None
        p = math.exp(lnp)
        fl = seen.get(lnp) or e.flash_tp(T, p, z)
        return p, fl

    def _nested(self, v: float, target: float, kind: str, T0: float, tol: float):
        """(v, u) or (v, s) by nested one-dimensional solves, the robust fallback:
        outer bracketed secant in T on y(T, v) - y (u and s rise with T at fixed v,
        also in two phases), inner (T, v) equilibrium (:meth:`_equilibrium_tv`).
        Returns (T, p, flash) or None."""
        seen = {}

        def f(T):
            out = self._equilibrium_tv(T, v, f.p)
            if out is None:
                raise StateError("inner (T, v) equilibrium failed")
            p, fl = out
            f.p = p
            seen[T] = (p, fl)
            beta, _, _, V, L = fl
            if V is not None and L is not None:
                y = beta * (V.u if kind == "u" else V.s) + (1 - beta) * (L.u if kind == "u" else L.s)
            else:
                ph = V if V is not None else L
                y = ph.u if kind == "u" else ph.s
            return y - target

        f.p = None
        T0 = min(max(T0, self.t_min), self.t_max)
        try:
            T = _solve_increasing(f, T0, 0.02 * T0, self.t_min, self.t_max, tol)
        except StateError:
            return None
        if T is None:
            return None
        p, fl = seen[T] if T in seen else self._equilibrium_tv(T, v, f.p)
        return T, p, fl

    def _single(self, ph: _Phase, fl=None) -> MixtureState:
        if fl is None:
            fl = (1.0, self.z, self.z, ph, None)
        elif fl[3] is None:          # the flash found liquid: keep this root, labelled liquid
            fl = (0.0, self.z, self.z, None, ph)
        else:
            fl = (1.0, self.z, self.z, ph, None)
        self._check_p(ph.p)
        return self._make(ph.T, ph.p, fl)

    def state_du(self, rho: float, u: float, T_guess: float | None = None,
                 hint: FlashHint | None = None) -> MixtureState:
        """Equilibrium state from density [kg/m3] and specific internal energy [J/kg].

        Converged on the residuals |v(T, p) - v|/v and |u(T, p) - u|/(|u| + R Tc)
        <= MIX_RTOL; warm-started from ``T_guess`` and ``hint`` (one per vessel;
        default: the fluid's own last (rho, u) solve).
        """
        if not (rho > 0.0) or not math.isfinite(rho) or not math.isfinite(u):
            raise StateError(f"density {rho:.6g} kg/m3 / internal energy {u:.6g} J/kg is not "
                             "a physical state; the vessel has emptied or the solver "
                             "overshot. Add a stop condition before the vessel empties.")
        return self._solve_v(rho, u * self.molar_mass, T_guess, hint or self._hints["u"], "u")

    def isentrope_at(self, rho: float, s: float, T_guess: float,
                     hint: FlashHint | None = None) -> MixtureState:
        """Equilibrium state at density [kg/m3] with specific entropy s [J/(kg K)]
        (homogeneous equilibrium through two phases), warm-started from ``T_guess``."""
        self._check_rho(rho, "isentrope")
        return self._solve_v(rho, s * self.molar_mass, T_guess, hint or self._hints["s"], "s")

    def _solve_v(self, rho: float, target: float, T_guess, hint: FlashHint,
                 kind: str) -> MixtureState:
        """(v, u) or (v, s) flash: single phase first unless the hint was two-phase."""
        e, z = self.engine, self.z
        v = self.molar_mass / rho
        scale = self._u_scale if kind == "u" else self._s_scale
        tol = MIX_RTOL * (abs(target) + scale)
        good_start = True
        if not hint.two_phase:
            ph = self._single_T(v, target, T_guess, kind, tol)
            if ph is not None and ph.p > 0.0 and ph.dpdv < 0.0:
                if self._surely_single(ph.T, ph.p):
                    hint.T, hint.p, hint.two_phase = ph.T, ph.p, False
                    return self._single(ph)
                fl = e.flash_tp(ph.T, ph.p, z)
                if self._same_root(fl, v):
                    hint.T, hint.p, hint.two_phase = ph.T, ph.p, False
                    return self._single(ph, fl)
                T0, p0 = ph.T, ph.p
            else:
                # the one-phase root is mechanically unstable or missing: no good start
                good_start = False
                T0 = T_guess if T_guess else (hint.T if math.isfinite(hint.T) else 250.0)
                p0 = hint.p if math.isfinite(hint.p) else 1e6
        else:
            T0 = T_guess if T_guess else hint.T
            p0 = hint.p
            if hint.jac is not None and hint.kind == kind and math.isfinite(hint.v):
                # predictor: the residual of the last solution for the new target is
                # known without a flash; one step with the kept Jacobian (composition
                # changes since then are left to the Newton iteration that follows)
                sc = abs(target) + scale
                r = np.array([(hint.v - v) / v, (hint.y - target) / sc])
                try:
                    dx = -np.linalg.solve(hint.jac, r)
                except np.linalg.LinAlgError:
                    dx = None
                if dx is not None and np.all(np.abs(dx) < 0.05):
                    T0, p0 = hint.T * math.exp(dx[0]), hint.p * math.exp(dx[1])
        if self._pure:
            out = self._pure_two_phase(v, target, kind, T0, tol)
        else:
            out = self._newton_tp(v, target, kind, T0, p0, hint, tol) if good_start else None
            if out is None:
                # no good start (or Newton failed): nested solves, then Newton to polish
                # and to leave a fresh Jacobian in the hint
                out = self._nested(v, target, kind, T0, tol)
                if out is not None:
                    hint.jac = None
                    out = self._newton_tp(v, target, kind, out[0], out[1], hint, tol) or out
        if out is None:
            raise self._unsolved(rho, target / self.molar_mass, kind)
        T, p, fl = out
        self._check_T(T, "state")
        self._check_p(p)
        hint.T, hint.p = T, p
        hint.v, hint.y, hint.kind = v, target, kind
        hint.two_phase = fl[3] is not None and fl[4] is not None
        return self._make(T, p, fl)

    @staticmethod
    def _same_root(fl, v: float) -> bool:
        """True when a (T, p) flash found one phase, on the volume root v [m3/mol]
        (a one-phase flash on another root means (T, v) lies inside the envelope)."""
        if fl[3] is not None and fl[4] is not None:
            return False
        ph = fl[3] if fl[3] is not None else fl[4]
        return abs(ph.v - v) <= 1e-7 * v

    # ------------------------------------------------ one component, two phases
    def _pure_split_at(self, T: float, v: float):
        """Saturated liquid and vapour of a single component at T [K], split by the
        lever rule on the molar volume v: beta = (v - v_L)/(v_V - v_L).
        Returns (T, p_sat, flash tuple) (beta may leave [0, 1] slightly)."""
        e, z = self.engine, self.z
        e.flashes += 1
        try:
            p, _ = e._tp.dew_pressure(T, z)
        except Exception:  # thermopack raises bare Exception above the critical point
            raise StateError(f"{self.name}: no saturation pressure at {T:.6g} K "
                             f"(critical temperature {self.t_crit:.6g} K).") from None
        V = e._phase_tp(T, p, z, e._VAP)
        L = e._phase_tp(T, p, z, e._LIQ)
        beta = (v - L.v) / (V.v - L.v)
        return T, p, (beta, z, z, V, L)

    def _pure_two_phase(self, v: float, target: float, kind: str, T0: float, tol: float):
        """(v, u) or (v, s) of a single component in two phases: y(T) = y_L + beta
        (y_V - y_L) rises with T at fixed v; bracketed secant in T below Tc."""
        Tc = self.t_crit
        hi = Tc * (1.0 - 1e-6) if Tc == Tc else self.t_max

        def f(T):
            _, p, fl = self._pure_split_at(T, v)
            beta, _, _, V, L = fl
            y = (L.u + beta * (V.u - L.u)) if kind == "u" else (L.s + beta * (V.s - L.s))
            f.last = (T, p, fl)
            return y - target

        f.last = None
        T0 = min(max(T0, self.t_min), hi)
        T = _solve_increasing(f, T0, 0.01 * T0, self.t_min, hi, tol)
        if T is None:
            return None
        T, p, fl = f.last if f.last[0] == T else self._pure_split_at(T, v)
        if not (0.0 < fl[0] < 1.0):
            return None
        return T, p, fl

    def _single_T(self, v: float, target: float, T_guess, kind: str, tol: float):
        """Single-phase temperature at molar volume v with u (or s) = target, by Newton
        on the equation of state at fixed v (du = cv dT, ds = cv/T dT), bracketed in
        [t_min, t_max]; None when no temperature in that range meets it."""
        e, z = self.engine, self.z
        lo, hi = self.t_min, self.t_max
        T = T_guess if (T_guess is not None and lo < T_guess < hi) else 300.0
        f_lo = f_hi = None
        for _ in range(MAX_ITERATIONS):
            ph = e._phase_tv(T, v, z)
            val = ph.u if kind == "u" else ph.s
            err = val - target
            if abs(err) <= tol:
                return ph
            if err > 0.0:
                hi, f_hi = T, err
            else:
                lo, f_lo = T, err
            slope = ph.cv if kind == "u" else ph.cv / T
            T_new = T - err / slope if slope > 0.0 else NAN
            if not (lo < T_new < hi):
                if f_lo is not None and f_hi is not None:
                    T_new = lo - f_lo * (hi - lo) / (f_hi - f_lo)
                else:
                    T_new = 0.5 * (lo + hi)
            if hi - lo <= 1e-14 * hi:
                return ph if abs(err) <= MIX_RTOL_FLOOR / MIX_RTOL * tol else None
            T = T_new
        return None

    def _residual(self, v, target, kind, lnT, lnp, scale_t):
        T, p = math.exp(lnT), math.exp(lnp)
        if not (self.t_min <= T <= self.t_max) or not (1e2 <= p <= self.p_max):
            return None, None
        try:
            vv, uu, ss, fl = self.engine.equilibrium_tp(T, p, self.z)
        except StateError:
            return None, None
        val = uu if kind == "u" else ss
        return np.array([(vv - v) / v, (val - target) / scale_t]), fl

    def _newton_tp(self, v, target, kind, T0, p0, hint: FlashHint, tol):
        """Two-dimensional Newton in (ln T, ln p) on the equilibrium at (T, p).

        Residuals r = ((v(T,p) - v)/v, (y(T,p) - y)/scale), y = u or s. The Jacobian
        comes from the hint (Broyden-updated from the last solve) or by forward
        differences (step 1e-7); a step that does not reduce |r| is halved up to 8
        times (a kept Jacobian gets one trial, then is refreshed). Returns (T, p, flash)
        or None.
        """
        scale = (abs(target) + (self._u_scale if kind == "u" else self._s_scale))
        tol_r = tol / scale
        x = np.array([math.log(T0), math.log(p0)])
        r, fl = self._residual(v, target, kind, x[0], x[1], scale)
        if r is None:
            return None
        J = hint.jac.copy() if hint.jac is not None else None
        fresh = False
        for _ in range(MAX_ITERATIONS):
            if abs(r[0]) <= MIX_RTOL and abs(r[1]) <= tol_r:
                hint.jac = J
                return math.exp(x[0]), math.exp(x[1]), fl
            if J is None:
                J = self._fd_jacobian(v, target, kind, x, r, scale)
                fresh = True
                if J is None:
                    return None
            try:
                dx = -np.linalg.solve(J, r)
            except np.linalg.LinAlgError:
                dx = None
            if dx is None or not np.all(np.isfinite(dx)):
                if fresh:
                    return None
                J = None
                continue
            lim = np.max(np.abs(dx))
            if lim > 0.5:
                dx *= 0.5 / lim
            norm0 = np.max(np.abs(r) / np.array([MIX_RTOL, tol_r]))
            step = 1.0
            accepted = False
            # with a kept (Broyden) Jacobian one trial step, then a fresh Jacobian
            for _ls in range(8 if fresh else 1):
                xn = x + step * dx
                rn, fln = self._residual(v, target, kind, xn[0], xn[1], scale)
                if rn is not None and np.max(np.abs(rn) / np.array([MIX_RTOL, tol_r])) < norm0:
                    accepted = True
                    break
                step *= 0.5
            if not accepted:
                if fresh:
                    # no descent even with a fresh Jacobian: accept a floor-level residual
                    if abs(r[0]) <= MIX_RTOL_FLOOR and abs(r[1]) <= MIX_RTOL_FLOOR / MIX_RTOL * tol_r:
                        hint.jac = J
                        return math.exp(x[0]), math.exp(x[1]), fl
                    return None
                J = None
                continue
            s = xn - x
            # Broyden's ("good") rank-one update keeps the Jacobian for the next call
            J = J + np.outer(rn - r - J @ s, s) / float(s @ s)
            fresh = False
            x, r, fl = xn, rn, fln
        return None

    def _fd_jacobian(self, v, target, kind, x, r, scale):
        J = np.empty((2, 2))
        for j in range(2):
            h = 1e-7
            xh = x.copy()
            xh[j] += h
            rh, _ = self._residual(v, target, kind, xh[0], xh[1], scale)
            if rh is None:
                xh[j] -= 2 * h
                rh, _ = self._residual(v, target, kind, xh[0], xh[1], scale)
                if rh is None:
                    return None
                h = -h
            J[:, j] = (rh - r) / h
        return J

    def _unsolved(self, rho: float, target: float, kind: str) -> StateError:
        what = "internal energy" if kind == "u" else "entropy"
        unit = "J/kg" if kind == "u" else "J/(kg K)"
        v = self.molar_mass / rho
        e = self.engine
        try:
            ph = e._phase_tv(self.t_min, v, self.z)
            low = (ph.u if kind == "u" else ph.s) / self.molar_mass
        except Exception:  # thermopack raises bare Exception; the message below stands
            low = NAN
        if low == low and low > target:
            return StateError(
                f"the state (rho = {rho:.6g} kg/m3, {what} {target:.6g} {unit}) lies below the "
                f"lowest temperature of the {self.equation} mixture model ({self.t_min:.6g} K): "
                "solids may form, which cvsim does not model. Stop the run earlier (a pressure "
                "or temperature stop) or add heat input.")
        return StateError(
            f"the {self.name} state at rho = {rho:.6g} kg/m3 and {what} {target:.6g} {unit} "
            f"could not be solved to the residual tolerance ({MIX_RTOL:g} relative); this is a "
            "defect of the mixture flash: please report it with the scenario.")

    def isentrope_at_p(self, p: float, s: float, T_guess: float | None = None,
                       hint: FlashHint | None = None) -> MixtureState:
        """Equilibrium state at pressure p [Pa] with specific entropy s [J/(kg K)]
        (homogeneous equilibrium), converged on |s(T, p) - s| <= MIX_RTOL (|s| + R);
        warm-started from ``T_guess`` and ``hint`` (one per nozzle link)."""
        return self._solve_p(p, s * self.molar_mass, T_guess, hint or self._hints["ps"], "s")

    def state_ph(self, p: float, h: float, T_guess: float | None = None,
                 hint: FlashHint | None = None) -> MixtureState:
        """Equilibrium state from pressure p [Pa] and specific enthalpy h [J/kg],
        converged on |h(T, p) - h| <= MIX_RTOL (|h| + R T_pc)."""
        return self._solve_p(p, h * self.molar_mass, T_guess, hint or self._hints["ph"], "h")

    def _solve_p(self, p: float, target: float, T_guess, hint: FlashHint,
                 kind: str) -> MixtureState:
        """(p, s) or (p, h) flash. One phase first (unless the hint was two-phase):
        Newton on T at fixed p on the hinted root (vapour unless the last state was
        liquid), dy/dT = c_p/T (s) or c_p (h), kept when the envelope screen or the
        (T, p) flash confirms that root. Otherwise two phases: y(T, p) rises with T
        at fixed p (c_p > 0 also in equilibrium), solved by secant steps from the
        hint's slope, then false position on the bracket (lever rule on the
        saturation curve for a single component)."""
        if not (p > 0.0) or not math.isfinite(p):
            raise StateError(f"pressure {p:.6g} Pa is not positive")
        self._check_p(p)
        e, z = self.engine, self.z
        tol = MIX_RTOL * (abs(target) + (self._s_scale if kind == "s" else self._u_scale))
        T0 = T_guess if (T_guess and self.t_min < T_guess < self.t_max) else (
            hint.T if math.isfinite(hint.T) else 300.0)
        if not hint.two_phase:
            flag = e._LIQ if hint.liquid else e._VAP
            ph = self._single_T_p(p, target, T0, kind, tol, flag)
            if ph is not None:
                one = self._surely_single(ph.T, p)
                fl = None if one else e.flash_tp(ph.T, p, z)
                if one or self._same_root(fl, ph.v):
                    hint.T, hint.p, hint.two_phase = ph.T, p, False
                    hint.liquid = fl is not None and fl[3] is None
                    return self._single(ph, fl)
                T0 = ph.T
        out = (self._pure_at_p(p, target, kind) if self._pure else
               self._two_phase_at_p(p, target, kind, T0, hint, tol))
        if out is None:
            raise self._unsolved_p(p, target / self.molar_mass, kind)
        T, fl = out
        self._check_T(T, "pressure-" + ("entropy" if kind == "s" else "enthalpy") + " state")
        hint.T, hint.p = T, p
        hint.two_phase = fl[3] is not None and fl[4] is not None
        if not hint.two_phase:
            hint.liquid = fl[3] is None
        return self._make(T, p, fl)

    def root_of(self, st: MixtureState) -> str:
        """Which volume root of the equation of state a one-phase state of this
        composition lies on at its (T, p): ``vapour`` or ``liquid`` (the nearer in
        molar volume; one root only: ``vapour``)."""
        e = self.engine
        v = self.molar_mass / st.rho
        vV = e._lean.volume(st.T, st.p, self.z, e._VAP)
        vL = e._lean.volume(st.T, st.p, self.z, e._LIQ)
        e.evaluations += 2
        return "liquid" if abs(vL - v) < abs(vV - v) else "vapour"

    def metastable_isentrope_at_p(self, p: float, s: float, T_guess: float,
                                  root: str = "vapour") -> MixtureState:
        """One-phase state at pressure p [Pa] with specific entropy s [J/(kg K)] on one
        volume root (``vapour`` or ``liquid``) of the equation of state at this fixed
        composition, with no stability test: the phase is kept from splitting, as in a
        frozen expansion (a vapour supersaturated inside the phase envelope stays
        vapour). Newton on T at fixed p, ds/dT = c_p/T, bracketed; converged to
        MIX_RTOL (|s| + R). Where the root ceases to exist (beyond its spinodal) the
        equation of state has only the other root, and the state is that root's.

        Raises StateError when no temperature in range gives the entropy."""
        if not (p > 0.0) or not math.isfinite(p):
            raise StateError(f"pressure {p:.6g} Pa is not positive")
        self._check_p(p)
        e = self.engine
        target = s * self.molar_mass
        tol = MIX_RTOL * (abs(target) + self._s_scale)
        T0 = T_guess if (T_guess and self.t_min < T_guess < self.t_max) else 300.0
        liquid = root == "liquid"
        ph = self._single_T_p(p, target, T0, "s", tol, e._LIQ if liquid else e._VAP)
        if ph is None:
            raise self._unsolved_p(p, s)
        return self._make(ph.T, p, (0.0, self.z, self.z, None, ph) if liquid else
                          (1.0, self.z, self.z, ph, None))

    def _single_T_p(self, p: float, target: float, T0: float, kind: str, tol: float,
                    flag: int):
        """One-phase temperature at pressure p on the root ``flag`` with s (or h) =
        target: Newton with dy/dT = c_p/T (or c_p), bracketed in [t_min, t_max];
        None when it does not converge (the root vanished, or no T in range)."""
        e, z = self.engine, self.z
        lo, hi = self.t_min, self.t_max
        T = T0
        f_lo = f_hi = None
        for _ in range(MAX_ITERATIONS):
            ph = e._phase_tv(T, e._lean.volume(T, p, z, flag), z)
            if not (ph.dpdv < 0.0):
                return None
            val = ph.s if kind == "s" else ph.u + p * ph.v
            err = val - target
            if abs(err) <= tol:
                return ph
            if err > 0.0:
                hi, f_hi = T, err
            else:
                lo, f_lo = T, err
            cp = ph.cv - T * ph.dpdt ** 2 / ph.dpdv
            slope = cp / T if kind == "s" else cp
            T_new = T - err / slope if slope > 0.0 else NAN
            if not (lo < T_new < hi):
                if f_lo is not None and f_hi is not None:
                    T_new = lo - f_lo * (hi - lo) / (f_hi - f_lo)
                else:
                    T_new = 0.5 * (lo + hi) if abs(hi - lo) < 50.0 else (
                        min(T * 1.2, 0.5 * (T + hi)) if err < 0.0 else max(T / 1.2, 0.5 * (T + lo)))
            if hi - lo <= 1e-14 * hi:
                return ph if abs(err) <= MIX_RTOL_FLOOR / MIX_RTOL * tol else None
            T = T_new
        return None

    def _two_phase_at_p(self, p, target, kind, T0, hint: FlashHint, tol):
        """Equilibrium (two or one phase) at p with y = target by secant steps in T
        from the hint's slope dy/dT, then false position once bracketed.
        Returns (T, flash) or None."""
        e, z = self.engine, self.z
        seen = {}

        def f(T):
            v, u, s, fl = e.equilibrium_tp(T, p, z)
            r = (s if kind == "s" else u + p * v) - target
            seen[T] = (fl, r)
            return r

        lo, hi = self.t_min, self.t_max
        T0 = min(max(T0, lo), hi)
        try:
            f0 = f(T0)
            if abs(f0) <= tol:
                return T0, seen[T0][0]
            slope = hint.slope if (math.isfinite(hint.slope) and hint.slope > 0.0) else NAN
            T1 = T0 - f0 / slope if slope == slope else T0 * (0.99 if f0 > 0.0 else 1.01)
            T1 = min(max(T1, T0 - 0.05 * T0, lo), T0 + 0.05 * T0, hi)
            T = None
            for _ in range(8):
                f1 = f(T1)
                if abs(f1) <= tol:
                    T = T1
                    break
                if (f1 > 0.0) != (f0 > 0.0):
                    a, b, fa, fb = (T0, T1, f0, f1) if f0 < 0.0 else (T1, T0, f1, f0)
                    T = root_on_bracket(f, a, b, fa, fb, tol)
                    break
                step = -f1 * (T1 - T0) / (f1 - f0) if f1 != f0 else NAN
                if not (step == step) or (step > 0.0) != (f1 < 0.0):
                    step = math.copysign(0.02 * T1, -f1)
                T0, f0 = T1, f1
                T1 = min(max(T1 + max(min(step, 0.1 * T1), -0.1 * T1), lo), hi)
            if T is None:
                T = _solve_increasing(f, T0, 0.02 * T0, lo, hi, tol)
        except StateError:
            return None
        if T is None:
            return None
        fl = seen[T][0] if T in seen else e.flash_tp(T, p, z)
        # the slope dy/dT between the two points nearest the root, for the next call
        near = sorted(seen, key=lambda x: abs(x - T))[:2]
        if len(near) == 2 and near[0] != near[1]:
            sl = (seen[near[0]][1] - seen[near[1]][1]) / (near[0] - near[1])
            if sl > 0.0:
                hint.slope = sl
        return T, fl

    def _pure_at_p(self, p: float, target: float, kind: str):
        """A single component at p inside its two-phase region: T = T_sat(p), the
        vapour mole fraction by the lever rule on s (or h). (T, flash) or None."""
        e, z = self.engine, self.z
        try:
            T = self.dew_temperature(p)
        except StateError:
            return None
        V = e._phase_tp(T, p, z, e._VAP)
        L = e._phase_tp(T, p, z, e._LIQ)
        yV = V.s if kind == "s" else V.u + p * V.v
        yL = L.s if kind == "s" else L.u + p * L.v
        if not (yV > yL):
            return None
        beta = (target - yL) / (yV - yL)
        if not (0.0 < beta < 1.0):
            return None
        return T, (beta, z, z, V, L)

    def phase_state(self, st: MixtureState, which: str,
                    last: "MixtureFluid | None" = None) -> MixtureState:
        """One phase of a two-phase state as a state of its own composition (y for
        ``vapour``, x for ``liquid``) at the same T and p, on the view of that
        composition (:meth:`MixtureEngine.view`; ``last``: the view used for the same
        stream before). It is saturated: vapour at its dew point (quality 1), liquid
        at its bubble point (quality 0), as a pure fluid's saturated phases are."""
        e = self.engine
        vapour = which == "vapour"
        view = e.view(st.y if vapour else st.x, last)
        ph = e._phase_tp(st.T, st.p, view.z, e._VAP if vapour else e._LIQ)
        out = view._make(st.T, st.p, (1.0, view.z, view.z, ph, None) if vapour else
                         (0.0, view.z, view.z, None, ph))
        out.phase, out.quality = ("gas", 1.0) if vapour else ("liquid", 0.0)
        out.liquid_fraction = 0.0 if vapour else 1.0
        return out

    def stream_state(self, st: MixtureState, quality: float,
                     last: "MixtureFluid | None" = None) -> MixtureState:
        """The stream an outlet draws from two-phase contents ``st`` when it carries the
        vapour mass fraction ``quality`` (1: the vapour phase, 0: the liquid phase,
        between: both phases as they are in the vessel, e.g. a top outlet the level has
        reached; :mod:`cvsim.outlets`): its composition is the phases' in that
        proportion, its state the same phases at the vessel's T and p, on the view of
        that composition."""
        if quality >= 1.0:
            return self.phase_state(st, "vapour", last)
        if quality <= 0.0:
            return self.phase_state(st, "liquid", last)
        e = self.engine
        V = e._phase_tp(st.T, st.p, st.y, e._VAP)
        L = e._phase_tp(st.T, st.p, st.x, e._LIQ)
        nV, nL = quality / V.M, (1.0 - quality) / L.M
        beta = nV / (nV + nL)
        view = e.view(beta * st.y + (1.0 - beta) * st.x, last)
        return view._make(st.T, st.p, (beta, st.x, st.y, V, L))

    def sound_speed(self, st: MixtureState) -> float:
        """Equilibrium speed of sound [m/s] of a state of this mixture: the phase's own
        in one phase; in two phases with mechanical, thermal and phase equilibrium
        kept through the wave (thermopack's two-phase sound velocity; the homogeneous
        equilibrium model's c, checked in the tests against (dp/drho)_s from the
        isentrope)."""
        if not st.two_phase:
            return st.c
        e = self.engine
        e.evaluations += 1
        return e._lean.sound_speed(st.T, st.p, st.x, st.y, st.z, st.beta, e._TWO)

    def _unsolved_p(self, p, y, kind="s"):
        what = "entropy" if kind == "s" else "enthalpy"
        unit = "J/(kg K)" if kind == "s" else "J/kg"
        return StateError(
            f"no {self.name} state at p = {p / 1e5:.6g} bar a with {what} {y:.6g} {unit} "
            f"within {self.t_min:.6g} to {self.t_max:.6g} K; below the range solids may form, "
            "which cvsim does not model.")

    # ------------------------------------------------------------ saturation
    def dew_temperature(self, p: float) -> float:
        """Dew-point temperature [K] of z at p [Pa] (below the cricondenbar)."""
        return self._sat_T(p, "dew")

    def bubble_temperature(self, p: float) -> float:
        """Bubble-point temperature [K] of z at p [Pa] (below the critical pressure)."""
        return self._sat_T(p, "bubble")

    def saturation_temperature(self, p: float) -> float:
        """Dew-point temperature [K] at p [Pa]: where the mixture starts to condense
        (a mixture condenses over a range, down to the bubble point)."""
        return self.dew_temperature(p)

    def _sat_T(self, p: float, which: str) -> float:
        tp = self.engine._tp
        self.engine.flashes += 1
        try:
            T, _ = (tp.dew_temperature if which == "dew" else tp.bubble_temperature)(p, self.z)
        except Exception:  # thermopack raises bare Exception when the saturation fails
            T = NAN
        if not (T == T and self.t_min <= T <= self.t_max):
            env = self.envelope()
            above = f" (cricondenbar {env[1] / 1e5:.6g} bar a)" if env else ""
            raise StateError(f"the {self.name} has no {which} point at {p / 1e5:.6g} bar a"
                             f"{above}: above the phase envelope it stays one phase.")
        return T

    def saturated_vapour_at_p(self, p: float) -> MixtureState:
        """The mixture at its dew point at p [Pa] (all vapour, on the verge of condensing)."""
        T = self.dew_temperature(p)
        e = self.engine
        ph = e._phase_tp(T, p, self.z, e._VAP)
        st = self._make(T, p, (1.0, self.z, self.z, ph, None))
        st.phase, st.quality = "gas", 1.0
        return st

    def saturated_liquid_at_p(self, p: float) -> MixtureState:
        """The mixture at its bubble point at p [Pa] (all liquid, on the verge of boiling)."""
        T = self.bubble_temperature(p)
        e = self.engine
        ph = e._phase_tp(T, p, self.z, e._LIQ)
        st = self._make(T, p, (0.0, self.z, self.z, None, ph))
        st.phase, st.quality = "liquid", 0.0
        return st

    def ideal_gas_gamma(self, rho: float, T: float) -> float:
        """Ideal-gas heat-capacity ratio cp0/(cp0 - R) of the mixture at T [K] [-],
        cp0 = sum z_i cp0_i(T) (``rho`` unused, kept for the common interface)."""
        self.engine.evaluations += 1
        # the ideal-gas part of the equation of state at any volume: cv0, cp0 = cv0 + R
        cv0 = self.engine._lean.ideal_cv(T, self.z)
        cp0 = cv0 + R_UNIVERSAL
        return cp0 / (cp0 - R_UNIVERSAL)


#: margins outside the phase envelope within which a state is still flash-tested
ENVELOPE_MARGIN_T = 2.0     # [K] above the cricondentherm
ENVELOPE_MARGIN_P = 0.02    # [-] relative, above the cricondenbar


def _solve_increasing(f, x0: float, dx0: float, lo: float, hi: float, tol: float):
    """Root of an increasing function f on [lo, hi] from x0: step outward by dx0
    (doubling) until the sign changes, then Illinois false position
    (:func:`cvsim.numerics.root_on_bracket`) to |f| <= tol. None when no sign change."""
    x0 = min(max(x0, lo), hi)
    f0 = f(x0)
    if abs(f0) <= tol:
        return x0
    step = dx0 if f0 < 0.0 else -dx0
    a, fa = x0, f0
    for _ in range(60):
        b = min(max(a + step, lo), hi)
        fb = f(b)
        if (fb > 0.0) != (fa > 0.0) or abs(fb) <= tol:
            break
        if b in (lo, hi):
            return None
        a, fa = b, fb
        step *= 2.0
    else:
        return None
    if abs(fb) <= tol:
        return b
    lo_, hi_, flo, fhi = (a, b, fa, fb) if fa < 0.0 else (b, a, fb, fa)
    return root_on_bracket(f, lo_, hi_, flo, fhi, tol)


def make_mixture(fractions: dict[str, float], equation: str = "Peng-Robinson",
                 basis: str = "mole", name: str | None = None) -> MixtureFluid:
    """A :class:`MixtureFluid` from fractions of named components (see
    :func:`make_composition`) on the named equation of state."""
    comp = make_composition(fractions, basis)
    engine = MixtureEngine(comp.names, equation)
    fluid = engine.fluid(comp.mole_fractions, name)
    fluid.notes = [comp.note] if comp.note else []
    return fluid
