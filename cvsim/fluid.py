"""Thermodynamic states of the working fluid: real (CoolProp HEOS) or ideal gas.

The solver carries each vessel's mass and internal energy, so the hot path asks
for the state at a given density and specific internal energy. CoolProp's
direct (density, internal energy) flash costs 25-100 us; a Newton iteration on
temperature with (density, temperature) calls, warm-started from the previous
temperature, costs two or three 2-3 us calls on a smooth path
(shared/notes-coolprop.md), so that is what :meth:`RealFluid.state_du` does, with
a bracketed fallback and the direct flash as last resort.

All values SI: density [kg/m3], temperature [K], pressure [Pa], specific
energies [J/kg], entropy [J/(kg K)], heat capacities [J/(kg K)], speed of
sound [m/s].

Both fluid classes offer the same methods, so every model above works with
either: ``state_dt``, ``state_du``, ``state_pt``, ``isentrope_at``,
``saturated_vapour_at_p`` and the limits ``t_min``, ``t_max``, ``p_max``.
"""
from __future__ import annotations

import difflib
import math

from .errors import FluidError, StateError
from .numerics import root_on_bracket

R_UNIVERSAL = 8.314462618  # [J/(mol K)] CODATA 2018 (exact since the 2019 SI)

NAN = float("nan")

#: relative residual tolerance of the (density, u) and (density, s) solves:
#: |u(rho, T) - u| <= STATE_RTOL (|u| + R T_c), |s(rho, T) - s| <= STATE_RTOL (|s| + R).
#: Tight, because the solver's finite-difference Jacobian divides state differences
#: by steps of 1.5e-8 relative: noise of 1e-13 leaves it exact to about 1e-5.
STATE_RTOL = 1e-13
#: where the equation of state's own round-off exceeds STATE_RTOL (the bracket has
#: shrunk to adjacent floating-point temperatures), a residual up to this is accepted
STATE_RTOL_FLOOR = 1e-10
MAX_STATE_ITERATIONS = 100


class State:
    """One equilibrium state.

    ``quality`` is the vapour mass fraction in the two-phase region and NaN
    outside it; ``c`` (speed of sound) and ``cp`` are NaN in the two-phase
    region, where they are not defined for equilibrium. ``phase`` is one of
    ``gas``, ``liquid``, ``two-phase`` or ``supercritical`` (above the critical
    temperature or pressure; no liquid level can form). ``liquid_fraction`` is
    the share of the volume taken by liquid [-]: 0 for gas and supercritical
    fluid, 1 for liquid, and (1 - x) rho / rho_l in two phases (rho_l: the
    saturated liquid's density).
    """

    __slots__ = ("rho", "T", "p", "u", "h", "s", "cp", "cv", "c", "quality", "phase",
                 "liquid_fraction")

    def __init__(self, rho, T, p, u, h, s, cp, cv, c, quality=NAN, phase="gas",
                 liquid_fraction=0.0):
        self.rho = rho
        self.T = T
        self.p = p
        self.u = u
        self.h = h
        self.s = s
        self.cp = cp
        self.cv = cv
        self.c = c
        self.quality = quality
        self.phase = phase
        self.liquid_fraction = liquid_fraction

    @property
    def two_phase(self) -> bool:
        return self.quality == self.quality  # not NaN

    @property
    def gamma(self) -> float:
        """Heat-capacity ratio cp/cv [-] (NaN in the two-phase region)."""
        return self.cp / self.cv

    def __repr__(self) -> str:
        q = f", quality={self.quality:.4f}" if self.two_phase else ""
        return (f"State(p={self.p:.6g} Pa, T={self.T:.6g} K, rho={self.rho:.6g} kg/m3, "
                f"h={self.h:.6g} J/kg, {self.phase}{q})")


def fluid_of(state, default):
    """The fluid object a state belongs to: a mixture state carries its own (its phase
    or stream composition, :class:`cvsim.mixture.MixtureState`); any other state the
    ``default`` (the run's fluid)."""
    return getattr(state, "fluid", None) or default


def _cp_module():
    # CoolProp takes about a second to import; import it only when a fluid is made.
    import CoolProp.CoolProp as CP
    return CP


def coolprop_fluid_names() -> list[str]:
    """Names of the pure and pseudo-pure fluids CoolProp knows, sorted."""
    CP = _cp_module()
    return sorted(CP.get_global_param_string("FluidsList").split(","), key=str.lower)


def coolprop_version() -> str:
    return _cp_module().get_global_param_string("version")


class RealFluid:
    """A pure or pseudo-pure CoolProp fluid on its Helmholtz-energy equation of state.

    Parameters
    ----------
    name : CoolProp fluid name, e.g. ``Nitrogen``, ``Hydrogen``, ``Air``, ``Water``.

    Raises
    ------
    FluidError : unknown name, or a mixture (``A&B``), which the fast
        (density, temperature) path of CoolProp does not support.
    """

    model = "real"

    def __init__(self, name: str):
        CP = _cp_module()
        if "&" in name:
            raise FluidError(
                f"fluid '{name}' is a mixture; cvsim handles pure and pseudo-pure CoolProp "
                "fluids (e.g. Nitrogen, Hydrogen, Methane, Air). Use a pseudo-pure fluid "
                "such as Air, or the dominant component, and say so in the report.")
        try:
            self._as = CP.AbstractState("HEOS", name)
        except ValueError:
            close = difflib.get_close_matches(name, coolprop_fluid_names(), n=3, cutoff=0.6)
            hint = f" Did you mean {', '.join(close)}?" if close else ""
            raise FluidError(
                f"unknown fluid '{name}'.{hint} Run 'cvsim fluids' for the list.") from None
        self.name = name
        self._CP = CP
        self._DT = CP.DmassT_INPUTS
        self._DU = CP.DmassUmass_INPUTS
        self._PT = CP.PT_INPUTS
        self._PQ = CP.PQ_INPUTS
        self._QT = CP.QT_INPUTS
        self._twophase = CP.iphase_twophase
        self._liquid_phases = (CP.iphase_liquid, CP.iphase_supercritical_liquid)
        self._supercritical_phases = (CP.iphase_supercritical, CP.iphase_critical_point)
        self._iD, self._iU, self._iS = CP.iDmass, CP.iUmass, CP.iSmass
        # a second state object for saturation look-ups, so that they never move
        # the state being iterated
        self._sat = CP.AbstractState("HEOS", name)
        a = self._as
        self.molar_mass = a.molar_mass()
        self.t_min = a.Tmin()
        self.t_max = a.Tmax()
        self.p_max = a.pmax()
        self.t_crit = a.T_critical()
        self.p_crit = a.p_critical()
        self.rho_crit = a.rhomass_critical()
        try:
            self.t_triple = a.Ttriple()
        except ValueError:
            self.t_triple = self.t_min
        try:
            self._sat.update(CP.QT_INPUTS, 0.0, self.t_triple)
            #: [Pa] saturation pressure at the triple point (None: not available)
            self.p_triple = self._sat.p()
        except ValueError:
            self.p_triple = None
        self.evaluations = 0  # count of equation-of-state evaluations (for benchmarks)
        #: (rho, u) and (rho, s) solves and their iterations, by kind "u" / "s", and
        #: the two-phase isentrope points by the lever rule at T ("s@T", one
        #: saturation evaluation each, no iteration). Read by
        #: benchmarks/bench_liquids.py; nothing in a run depends on them.
        self.solves = {"u": 0, "s": 0, "s@T": 0}
        self.solve_iterations = {"u": 0, "s": 0}
        R = R_UNIVERSAL / self.molar_mass
        #: residual tolerances of the state solves (see :meth:`_solve_T`): an
        #: energy [J/kg] and an entropy [J/(kg K)] scale of this fluid
        self._u_scale = R * max(self.t_crit, 100.0)
        self._s_scale = R
        #: the energy scale of the residual tolerances [J/kg] (R T_c)
        self.energy_scale = self._u_scale

    # ------------------------------------------------------------- reading
    def _read(self) -> State:
        a = self._as
        ph = a.phase()
        if ph == self._twophase:
            x = a.Q()
            rho = a.rhomass()
            lf = (1.0 - x) * rho / a.saturated_liquid_keyed_output(self._iD)
            return State(rho, a.T(), a.p(), a.umass(), a.hmass(), a.smass(),
                         NAN, a.cvmass(), NAN, x, "two-phase", lf)
        if ph in self._liquid_phases:
            phase, lf = "liquid", 1.0
        elif ph in self._supercritical_phases:
            phase, lf = "supercritical", 0.0
        else:
            phase, lf = "gas", 0.0
        return State(a.rhomass(), a.T(), a.p(), a.umass(), a.hmass(), a.smass(),
                     a.cpmass(), a.cvmass(), a.speed_sound(), NAN, phase, lf)

    def _check(self, rho: float, T: float, what: str) -> None:
        if not (rho > 0.0) or not math.isfinite(rho):
            raise StateError(f"density {rho:.6g} kg/m3 is not positive ({what}); the vessel "
                             "has emptied or the solver overshot. Add a stop condition "
                             "before the vessel empties.")
        if T < self.t_min:
            raise StateError(
                f"temperature {T:.6g} K is below the lowest temperature of the {self.name} "
                f"equation of state ({self.t_min:.6g} K; triple point {self.t_triple:.6g} K) "
                f"({what}); solid may form. Stop the run earlier or add heat input.")
        if T > self.t_max:
            raise StateError(f"temperature {T:.6g} K is above the highest temperature of the "
                             f"{self.name} equation of state ({self.t_max:.6g} K) ({what}).")

    def _update_dt(self, rho: float, T: float) -> None:
        self.evaluations += 1
        try:
            self._as.update(self._DT, rho, T)
        except ValueError as exc:
            raise StateError(f"{self.name} properties failed at rho = {rho:.6g} kg/m3, "
                             f"T = {T:.6g} K: {exc}") from None

    # -------------------------------------------------------------- states
    def state_dt(self, rho: float, T: float) -> State:
        """State from density [kg/m3] and temperature [K]."""
        self._check(rho, T, "density-temperature state")
        self._update_dt(rho, T)
        st = self._read()
        if st.p > self.p_max:
            raise StateError(f"pressure {st.p / 1e5:.6g} bar is above the highest pressure of "
                             f"the {self.name} equation of state ({self.p_max / 1e5:.6g} bar).")
        return st

    def state_pt(self, p: float, T: float) -> State:
        """State from pressure [Pa] and temperature [K] (single phase)."""
        if not (p > 0.0):
            raise StateError(f"pressure {p:.6g} Pa is not positive")
        self._check(1.0, T, "pressure-temperature state")
        if p > self.p_max:
            raise StateError(f"pressure {p / 1e5:.6g} bar is above the highest pressure of the "
                             f"{self.name} equation of state ({self.p_max / 1e5:.6g} bar).")
        self.evaluations += 1
        try:
            self._as.update(self._PT, p, T)
        except ValueError as exc:
            raise StateError(f"{self.name} properties failed at p = {p:.6g} Pa, "
                             f"T = {T:.6g} K: {exc}") from None
        return self._read()

    def state_ph(self, p: float, h: float) -> State:
        """State from pressure [Pa] and specific enthalpy [J/kg] (CoolProp's own
        flash; used by the self-checks, not on the solver's path)."""
        if not (p > 0.0):
            raise StateError(f"pressure {p:.6g} Pa is not positive")
        self.evaluations += 1
        try:
            self._as.update(self._CP.HmassP_INPUTS, h, p)
        except ValueError as exc:
            raise StateError(f"{self.name} properties failed at p = {p:.6g} Pa, "
                             f"h = {h:.6g} J/kg: {exc}") from None
        st = self._read()
        if st.T < self.t_min:
            raise StateError(f"{self.name} at p = {p:.6g} Pa, h = {h:.6g} J/kg lies below "
                             "the lowest temperature of its equation of state")
        return st

    def state_du(self, rho: float, u: float, T_guess: float | None = None) -> State:
        """State from density [kg/m3] and specific internal energy [J/kg].

        Solves u(rho, T) = u for T (see :meth:`_solve_T`), converged on the
        residual |u(rho, T) - u| <= STATE_RTOL (|u| + R T_c). Warm-start it with the
        previous temperature of the same vessel.
        """
        if not (rho > 0.0) or not math.isfinite(rho) or not math.isfinite(u):
            raise StateError(f"density {rho:.6g} kg/m3 / internal energy {u:.6g} J/kg is not "
                             "a physical state; the vessel has emptied or the solver "
                             "overshot. Add a stop condition before the vessel empties.")
        T = self._solve_T(rho, u, T_guess, self._as.umass, "u")
        if T is None:
            raise self._unsolved(rho, u, "u")
        st = self._read()
        if st.p > self.p_max:
            raise StateError(f"pressure {st.p / 1e5:.6g} bar is above the highest pressure of "
                             f"the {self.name} equation of state ({self.p_max / 1e5:.6g} bar).")
        return st

    def residual_du(self, rho: float, u: float, st: State) -> float:
        """Relative residual of a state returned for (rho, u): |u(rho, T) - u| over the
        fluid's energy scale, recomputed by an independent (rho, T) evaluation.
        The solve guarantees <= STATE_RTOL_FLOOR; a run's self-check reports the largest."""
        self._update_dt(rho, st.T)
        return abs(self._as.umass() - u) / (abs(u) + self._u_scale)

    def _tolerance(self, target: float, kind: str) -> float:
        if kind == "u":
            return STATE_RTOL * (abs(target) + self._u_scale)
        return STATE_RTOL * (abs(target) + self._s_scale)

    def _solve_T(self, rho: float, target: float, T_guess, read, kind: str) -> float | None:
        """Temperature at which ``read()`` (u or s at this density) equals ``target``.

        Both u and s rise with T at constant density (du = cv dT, ds = cv/T dT,
        and in two phases with the equilibrium slope). The iteration stops on
        the residual only: |read() - target| <= STATE_RTOL (|target| + scale).

        Steps: Newton with the single-phase slope cv (cv/T for s); in the
        two-phase region with the *equilibrium* slope at constant density from
        saturation states at T +- dT (:meth:`_two_phase_slope`; CoolProp's cv
        there is not the equilibrium one and can be 1e12 too large). Every step
        stays inside the bracket learned so far; outside it, false position
        (Illinois) once both sides are known, else bisection.

        Returns None when no temperature within the equation of state's range
        meets the residual (the caller explains). Leaves the AbstractState
        updated at the returned temperature.
        """
        a = self._as
        tol = self._tolerance(target, kind)
        lo, hi = self.t_min, self.t_max
        f_lo = f_hi = None
        last_side = 0
        err_prev = math.inf
        best_T, best_err = NAN, math.inf
        T = T_guess if (T_guess is not None and lo < T_guess < hi) else min(300.0, 0.5 * (lo + hi))
        self.solves[kind] += 1
        for _ in range(MAX_STATE_ITERATIONS):
            self.solve_iterations[kind] += 1
            self._update_dt(rho, T)
            err = read() - target
            if abs(err) <= tol:
                return T
            if abs(err) < best_err:
                best_T, best_err = T, abs(err)
            side = 1 if err > 0.0 else -1
            if side == 1:
                hi, f_hi = T, err
            else:
                lo, f_lo = T, err
            if side == last_side:  # Illinois: the other end is stale, halve its value
                if side == 1 and f_lo is not None:
                    f_lo *= 0.5
                elif side == -1 and f_hi is not None:
                    f_hi *= 0.5
            last_side = side
            if a.phase() == self._twophase:
                slope = self._two_phase_slope(rho, T, kind)
            else:
                cv = a.cvmass()
                slope = cv / T if kind == "s" else cv
            T_new = T - err / slope if slope > 0.0 and math.isfinite(slope) else NAN
            # Newton only while it stays in the bracket and at least halves the
            # residual; else false position, else bisection
            if not (lo < T_new < hi) or abs(err) > 0.5 * err_prev:
                T_new = NAN
                if f_lo is not None and f_hi is not None:
                    T_new = lo - f_lo * (hi - lo) / (f_hi - f_lo)
                if not (lo < T_new < hi):
                    T_new = 0.5 * (lo + hi)
            err_prev = abs(err)
            if hi - lo <= 1e-15 * hi or T_new == T:
                break
            T = T_new
        # the bracket has shrunk to a point without meeting the residual: where the
        # equation of state's own round-off is larger than the tolerance (liquids),
        # accept the best point if within the floor; else the target lies outside
        # the range of the equation of state at this density, or the iteration failed
        if best_err <= STATE_RTOL_FLOOR / STATE_RTOL * tol:
            self._update_dt(rho, best_T)
            return best_T
        return None

    def _two_phase_slope(self, rho: float, T: float, kind: str) -> float:
        """Equilibrium slope d(u)/dT (or d(s)/dT) at constant density in two phases
        [J/(kg K)] (or [J/(kg K2)]), by central differences of
        y(T) = y_l + x (y_v - y_l), x = (1/rho - v_l)/(v_v - v_l), over saturation
        states at T +- dT (one-sided below the critical temperature)."""
        dT = max(1e-4, 1e-7 * T)
        up = T + dT if T + dT < self.t_crit else T
        down = T - dT
        return (self._two_phase_value(rho, up, kind) - self._two_phase_value(rho, down, kind)) / (
            up - down)

    def _two_phase_value(self, rho: float, T: float, kind: str) -> float:
        """u or s [SI] of the equilibrium mixture of density rho at saturation temperature T
        (the lever rule; x may leave [0, 1] slightly for the finite differences)."""
        b = self._sat
        self.evaluations += 1
        b.update(self._QT, 0.0, T)
        key = self._iU if kind == "u" else self._iS
        vl = 1.0 / b.saturated_liquid_keyed_output(self._iD)
        vv = 1.0 / b.saturated_vapor_keyed_output(self._iD)
        yl = b.saturated_liquid_keyed_output(key)
        yv = b.saturated_vapor_keyed_output(key)
        x = (1.0 / rho - vl) / (vv - vl)
        return yl + x * (yv - yl)

    def _unsolved(self, rho: float, target: float, kind: str) -> StateError:
        """The error for a (density, u or s) pair no temperature of the equation of
        state meets: below its lowest temperature (solid), above its highest, or a
        failed iteration (with what was being solved)."""
        what = "internal energy" if kind == "u" else "entropy"
        unit = "J/kg" if kind == "u" else "J/(kg K)"
        read = self._as.umass if kind == "u" else self._as.smass
        self._update_dt(rho, self.t_min)
        if read() > target:
            return StateError(
                f"the state (rho = {rho:.6g} kg/m3, {what} {target:.6g} {unit}) lies below the "
                f"lowest temperature of the {self.name} equation of state ({self.t_min:.6g} K; "
                f"triple point {self.t_triple:.6g} K): solid would form, which cvsim does not "
                "model. Stop the run earlier (a pressure or temperature stop) or add heat input.")
        self._update_dt(rho, self.t_max)
        if read() < target:
            return StateError(
                f"the state (rho = {rho:.6g} kg/m3, {what} {target:.6g} {unit}) lies above the "
                f"highest temperature of the {self.name} equation of state "
                f"({self.t_max:.6g} K).")
        return StateError(
            f"the {self.name} state at rho = {rho:.6g} kg/m3 and {what} {target:.6g} {unit} "
            f"could not be solved to the residual tolerance ({STATE_RTOL:g} relative) in "
            f"{MAX_STATE_ITERATIONS} iterations; this is a defect of the property solve: "
            "please report it with the scenario.")

    def isentrope_at(self, rho: float, s: float, T_guess: float) -> State:
        """State at density [kg/m3] on the isentrope of specific entropy ``s`` [J/(kg K)].

        Solves s(rho, T) = s for T (see :meth:`_solve_T`), converged on the
        residual, warm-started from ``T_guess``.
        """
        T = self._solve_T(rho, s, T_guess, self._as.smass, "s")
        if T is None:
            err = self._unsolved(rho, s, "s")
            if "below the lowest" in err.detail:
                raise StateError(
                    f"the expansion of {self.name} through the device reaches the lowest "
                    f"temperature of its equation of state ({self.t_min:.6g} K, triple point "
                    f"{self.t_triple:.6g} K): solid would form, which cvsim does not model. "
                    "Stop the run earlier (a pressure or temperature stop) or add heat input.")
            raise err
        return self._read()

    def pressure_derivatives(self, st: State) -> tuple[float, float]:
        """Slopes of the pressure at a state: ((dp/drho) at constant u [m2/s2],
        (dp/du) at constant rho [kg/m3]).

        Single phase: CoolProp's partial derivatives of the equation of state. Two
        phases (equilibrium, p = p_sat(T)): with the Clapeyron slope
        p' = (h_v - h_l)/(T (v_v - v_l)), the equilibrium slope c_eq = (du/dT) at
        constant density (:meth:`_two_phase_slope`) and
        (du/drho)_T = -(u_v - u_l)/(rho^2 (v_v - v_l)) of the lever rule:

            (dp/du)_rho = p'/c_eq,   (dp/drho)_u = -p' (du/drho)_T / c_eq

        (Clapeyron: e.g. Cengel & Boles, 9th ed., sec. 12-3). ``rho (dp/drho)_u +
        (p/rho)(dp/du)_rho`` is rho c^2, the isentropic stiffness, in both regions.
        """
        if st.two_phase:
            b = self._sat
            self.evaluations += 1
            b.update(self._QT, 0.0, st.T)
            L, V = b.saturated_liquid_keyed_output, b.saturated_vapor_keyed_output
            iH = self._CP.iHmass
            dv = 1.0 / V(self._iD) - 1.0 / L(self._iD)
            slope_p = (V(iH) - L(iH)) / (st.T * dv)
            c_eq = self._two_phase_slope(st.rho, st.T, "u")
            du_drho = -(V(self._iU) - L(self._iU)) / (st.rho * st.rho * dv)
            return -slope_p * du_drho / c_eq, slope_p / c_eq
        self._update_dt(st.rho, st.T)
        a, CP = self._as, self._CP
        return (a.first_partial_deriv(CP.iP, CP.iDmass, CP.iUmass),
                a.first_partial_deriv(CP.iP, CP.iUmass, CP.iDmass))

    def saturation_at_p(self, p: float) -> tuple[State, State]:
        """(saturated liquid, saturated vapour) at pressure p [Pa] from one saturation
        evaluation (below the critical pressure)."""
        b = self._sat
        self.evaluations += 1
        try:
            b.update(self._PQ, p, 0.0)
        except ValueError as exc:
            raise StateError(f"{self.name} saturation state failed at p = {p:.6g} Pa: "
                             f"{exc}") from None
        out = []
        for side, x in ((b.saturated_liquid_keyed_output, 0.0),
                        (b.saturated_vapor_keyed_output, 1.0)):
            rho = side(self._iD)
            out.append(State(rho, b.T(), p, side(self._iU), side(self._CP.iHmass),
                             side(self._iS), NAN, NAN, NAN, x,
                             "liquid" if x == 0.0 else "gas", 1.0 - x))
        return out[0], out[1]

    def ideal_gas_gamma(self, rho: float, T: float) -> float:
        """Ideal-gas heat-capacity ratio cp0/(cp0 - R) at temperature T [K] [-].

        cp0 depends on T only; ``rho`` [kg/m3] is any density at which (rho, T)
        is a valid state (the state's own), used only to place CoolProp there.
        """
        self._update_dt(rho, T)
        cp0 = self._as.cp0mass()
        return cp0 / (cp0 - R_UNIVERSAL / self.molar_mass)

    def saturated_vapour_at_p(self, p: float) -> State:
        """Saturated vapour at pressure p [Pa] (below the critical pressure)."""
        return self._saturated(p, 1.0)

    def saturated_liquid_at_p(self, p: float) -> State:
        """Saturated liquid at pressure p [Pa] (below the critical pressure)."""
        return self._saturated(p, 0.0)

    def saturation_temperature(self, p: float) -> float:
        """Saturation temperature [K] at pressure p [Pa] (below the critical pressure)."""
        b = self._sat
        self.evaluations += 1
        try:
            b.update(self._PQ, p, 0.0)
        except ValueError as exc:
            raise StateError(f"{self.name} saturation state failed at p = {p:.6g} Pa: "
                             f"{exc}") from None
        return b.T()

    def two_phase_isentrope_at_T(self, s: float, T: float) -> State | None:
        """Equilibrium two-phase state of specific entropy s [J/(kg K)] at saturation
        temperature T [K], by the lever rule on the saturated phases at T:

            x = (s - s_l)/(s_v - s_l),  y = y_l + x (y_v - y_l)  for v, u, h,

        with p the saturation pressure. ``None`` when s lies outside [s_l, s_v] at T
        (the isentrope is single phase there). No iteration: one saturation
        evaluation (CoolProp's saturation curves of pure fluids).
        """
        if not (self.t_triple <= T < self.t_crit):
            return None
        b = self._sat
        self.evaluations += 1
        self.solves["s@T"] += 1
        try:
            b.update(self._QT, 0.0, T)
        except ValueError:
            return None
        L, V = b.saturated_liquid_keyed_output, b.saturated_vapor_keyed_output
        sl, sv = L(self._iS), V(self._iS)
        x = (s - sl) / (sv - sl)
        if not (0.0 <= x <= 1.0):
            # on a saturation line to within the entropy tolerance: take it as on it
            tol = self._tolerance(s, "s")
            if -tol <= s - sl < 0.0:
                x = 0.0
            elif 0.0 < s - sv <= tol:
                x = 1.0
            else:
                return None
        iH = self._CP.iHmass
        vl, vv = 1.0 / L(self._iD), 1.0 / V(self._iD)
        v = vl + x * (vv - vl)
        u = L(self._iU) + x * (V(self._iU) - L(self._iU))
        h = L(iH) + x * (V(iH) - L(iH))
        return State(1.0 / v, T, b.p(), u, h, s, NAN, NAN, NAN, x, "two-phase",
                     (1.0 - x) * vl / v)

    def liquid_isentrope_entry(self, s: float) -> float | None:
        """Temperature [K] at which an isentrope of entropy s [J/(kg K)] meets the
        saturated-liquid line, s_l(T) = s (s_l rises with T up to the critical
        point); ``None`` when s is not on the liquid side (s above the critical
        point's entropy or below the triple point's saturated liquid).
        Converged on the residual |s_l(T) - s| <= STATE_RTOL (|s| + R)."""
        b = self._sat
        iS = self._iS

        def sl(T):
            self.evaluations += 1
            b.update(self._QT, 0.0, T)
            return b.saturated_liquid_keyed_output(iS) - s

        lo, hi = self.t_triple, self.t_crit * (1.0 - 1e-9)
        f_lo, f_hi = sl(lo), sl(hi)
        if f_lo > 0.0 or f_hi < 0.0:
            return None
        return root_on_bracket(sl, lo, hi, f_lo, f_hi, self._tolerance(s, "s"),
                               MAX_STATE_ITERATIONS)

    def two_phase_at_p(self, p: float, quality: float) -> State:
        """Equilibrium mixture of vapour mass fraction ``quality`` [-] (0..1) at
        pressure p [Pa] below the critical pressure."""
        return self._saturated(p, quality)

    def _saturated(self, p: float, quality: float) -> State:
        self.evaluations += 1
        try:
            self._as.update(self._PQ, p, quality)
        except ValueError as exc:
            raise StateError(f"{self.name} saturation state failed at p = {p:.6g} Pa: "
                             f"{exc}") from None
        a = self._as
        # on the saturation line cp and the speed of sound are those of a phase
        # boundary; report them as undefined, like the two-phase states
        if quality == 0.0:
            phase, lf = "liquid", 1.0
        elif quality == 1.0:
            phase, lf = "gas", 0.0
        else:
            phase = "two-phase"
            lf = (1.0 - quality) * a.rhomass() / a.saturated_liquid_keyed_output(self._iD)
        return State(a.rhomass(), a.T(), a.p(), a.umass(), a.hmass(), a.smass(),
                     NAN, a.cvmass(), NAN, quality, phase, lf)


class IdealGas:
    """Perfect gas with constant heat capacities: p = rho R T, u = cv (T - T_ref).

    For cross-checks against closed forms and for speed. The energy reference is
    u = 0 at T_ref = 0 K (h = cp T), the entropy reference s = 0 at 1 atm, 298.15 K.

    Parameters
    ----------
    name : label of the gas (a CoolProp name when defaults were taken from it)
    molar_mass : [kg/mol]
    cp : isobaric heat capacity [J/(kg K)]; must exceed R = R_u/M.
    """

    model = "ideal-gas"
    t_min = 1.0
    t_max = 1.0e5
    p_max = 1.0e12
    t_crit = 0.0

    def __init__(self, name: str, molar_mass: float, cp: float):
        self.name = name
        self.molar_mass = molar_mass
        self.R = R_UNIVERSAL / molar_mass
        if not cp > self.R:
            raise FluidError(f"ideal-gas heat capacity {cp:.6g} J/(kg K) must exceed the gas "
                             f"constant R = {self.R:.6g} J/(kg K)")
        self.cp = cp
        self.cv = cp - self.R
        self.gamma = cp / self.cv
        self.evaluations = 0
        self.energy_scale = self.R * 300.0

    @classmethod
    def from_coolprop(cls, name: str, molar_mass: float | None = None,
                      cp: float | None = None, T: float = 298.15) -> "IdealGas":
        """Ideal gas with CoolProp's molar mass and ideal-gas cp0 at ``T`` unless given."""
        if molar_mass is None or cp is None:
            real = RealFluid(name)
            a = real._as
            if molar_mass is None:
                molar_mass = a.molar_mass()
            if cp is None:
                a.update(real._CP.DmassT_INPUTS, 1e-6, T)  # vanishing density: ideal gas
                cp = a.cp0mass()
        return cls(name, molar_mass, cp)

    def _state(self, rho: float, T: float) -> State:
        R, cp, cv = self.R, self.cp, self.cv
        p = rho * R * T
        s = cp * math.log(T / 298.15) - R * math.log(p / 101325.0)
        return State(rho, T, p, cv * T, cp * T, s, cp, cv, math.sqrt(self.gamma * R * T))

    def _check(self, rho: float, T: float) -> None:
        if not (rho > 0.0) or not math.isfinite(rho):
            raise StateError(f"density {rho:.6g} kg/m3 is not positive; the vessel has "
                             "emptied or the solver overshot.")
        if not (T > 0.0) or not math.isfinite(T):
            raise StateError(f"temperature {T:.6g} K is not positive")

    def state_dt(self, rho: float, T: float) -> State:
        self._check(rho, T)
        self.evaluations += 1
        return self._state(rho, T)

    def state_pt(self, p: float, T: float) -> State:
        self._check(p / (self.R * T) if T > 0 else NAN, T)
        self.evaluations += 1
        return self._state(p / (self.R * T), T)

    def state_ph(self, p: float, h: float) -> State:
        T = h / self.cp
        return self.state_pt(p, T)

    def state_du(self, rho: float, u: float, T_guess: float | None = None) -> State:
        T = u / self.cv
        self._check(rho, T)
        self.evaluations += 1
        return self._state(rho, T)

    def isentrope_at(self, rho: float, s: float, T_guess: float) -> State:
        # s = cp ln(T/T0) - R ln(rho R T / p0)  ->  cv ln T = s + R ln(rho R / p0) + cp ln T0
        lnT = (s + self.R * math.log(rho * self.R / 101325.0) + self.cp * math.log(298.15)) / self.cv
        T = math.exp(lnT)
        self.evaluations += 1
        return self._state(rho, T)

    def ideal_gas_gamma(self, rho: float, T: float) -> float:
        """Heat-capacity ratio [-] (constant for this model)."""
        return self.gamma

    def saturated_vapour_at_p(self, p: float) -> State:  # pragma: no cover - never two-phase
        raise StateError("an ideal gas has no saturation")


Fluid = RealFluid | IdealGas


def make_fluid(name: str, model: str = "real", molar_mass: float | None = None,
               cp: float | None = None, cp_temperature: float = 298.15) -> Fluid:
    """The fluid object for a property model: ``real`` or ``ideal-gas``."""
    if model == "real":
        return RealFluid(name)
    if model == "ideal-gas":
        return IdealGas.from_coolprop(name, molar_mass, cp, cp_temperature)
    raise FluidError(f"unknown property model '{model}': use 'real' or 'ideal-gas'")
