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

R_UNIVERSAL = 8.314462618  # [J/(mol K)] CODATA 2018 (exact since the 2019 SI)

NAN = float("nan")


class State:
    """One equilibrium state. ``quality`` is the vapour mass fraction in the
    two-phase region and NaN outside it; ``c`` (speed of sound) and ``cp`` are
    NaN in the two-phase region, where they are not defined for equilibrium."""

    __slots__ = ("rho", "T", "p", "u", "h", "s", "cp", "cv", "c", "quality")

    def __init__(self, rho, T, p, u, h, s, cp, cv, c, quality=NAN):
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
                f"h={self.h:.6g} J/kg{q})")


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
        self._twophase = CP.iphase_twophase
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
        self.evaluations = 0  # count of equation-of-state evaluations (for benchmarks)

    # ------------------------------------------------------------- reading
    def _read(self) -> State:
        a = self._as
        if a.phase() == self._twophase:
            return State(a.rhomass(), a.T(), a.p(), a.umass(), a.hmass(), a.smass(),
                         NAN, a.cvmass(), NAN, a.Q())
        return State(a.rhomass(), a.T(), a.p(), a.umass(), a.hmass(), a.smass(),
                     a.cpmass(), a.cvmass(), a.speed_sound())

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

    def state_du(self, rho: float, u: float, T_guess: float | None = None) -> State:
        """State from density [kg/m3] and specific internal energy [J/kg].

        Solves u(rho, T) = u for T (see :meth:`_solve_T`), du/dT at constant
        density being cv. Warm-start it with the previous temperature of the
        same vessel.
        """
        if not (rho > 0.0) or not math.isfinite(rho) or not math.isfinite(u):
            raise StateError(f"density {rho:.6g} kg/m3 / internal energy {u:.6g} J/kg is not "
                             "a physical state; the vessel has emptied or the solver "
                             "overshot. Add a stop condition before the vessel empties.")
        a = self._as
        T = self._solve_T(rho, u, T_guess, a.umass, 1)
        if T <= self.t_min * (1 + 1e-9) and a.umass() > u:
            raise StateError(
                f"the state (rho = {rho:.6g} kg/m3, u = {u:.6g} J/kg) lies below the lowest "
                f"temperature of the {self.name} equation of state ({self.t_min:.6g} K); "
                "solid may form. Stop the run earlier or add heat input.")
        if T >= self.t_max * (1 - 1e-9) and a.umass() < u:
            raise StateError(f"the state (rho = {rho:.6g} kg/m3, u = {u:.6g} J/kg) lies above "
                             f"the highest temperature of the {self.name} equation of state "
                             f"({self.t_max:.6g} K).")
        st = self._read()
        if st.p > self.p_max:
            raise StateError(f"pressure {st.p / 1e5:.6g} bar is above the highest pressure of "
                             f"the {self.name} equation of state ({self.p_max / 1e5:.6g} bar).")
        return st

    def _solve_T(self, rho: float, target: float, T_guess, read, power: int) -> float:
        """Temperature at which ``read()`` (u or s at this density) equals ``target``.

        Both u and s rise with T at constant density (du = cv dT, ds = cv/T dT).
        Newton with that slope in single phase; in the two-phase region, where
        the equilibrium slope is not the cv CoolProp reports, secant steps;
        every step kept inside the bracket learned so far, else bisection.
        Leaves the AbstractState updated at the returned temperature.
        """
        a = self._as
        lo, hi = self.t_min, self.t_max
        T = T_guess if (T_guess is not None and lo < T_guess < hi) else min(300.0, 0.5 * (lo + hi))
        T_prev = err_prev = None
        for _ in range(100):
            self._update_dt(rho, T)
            err = read() - target
            if err == 0.0:
                return T
            if err > 0.0:
                hi = min(hi, T)
            else:
                lo = max(lo, T)
            if a.phase() == self._twophase and T_prev is not None and err != err_prev:
                T_new = T - err * (T - T_prev) / (err - err_prev)
            else:
                cv = a.cvmass()
                slope = cv / T if power == 0 else cv
                T_new = T - err / slope if slope > 0.0 else 0.5 * (lo + hi)
            if not (lo < T_new < hi):
                T_new = 0.5 * (lo + hi)
            if abs(T_new - T) <= 1e-12 * T or hi - lo <= 1e-12 * T:
                return T
            T_prev, err_prev = T, err
            T = T_new
        return T  # pragma: no cover - bisection has converged long before

    def _flash_du(self, rho: float, u: float) -> State:  # pragma: no cover - fallback
        self.evaluations += 1
        try:
            self._as.update(self._DU, rho, u)
        except ValueError as exc:
            raise StateError(f"{self.name} properties failed at rho = {rho:.6g} kg/m3, "
                             f"u = {u:.6g} J/kg: {exc}") from None
        return self._read()

    def isentrope_at(self, rho: float, s: float, T_guess: float) -> State:
        """State at density [kg/m3] on the isentrope of specific entropy ``s`` [J/(kg K)].

        Solves s(rho, T) = s for T (see :meth:`_solve_T`), warm-started from ``T_guess``.
        """
        T = self._solve_T(rho, s, T_guess, self._as.smass, 0)
        if T <= self.t_min * (1 + 1e-9):
            raise StateError(f"the expansion of {self.name} through the device reaches the "
                             f"lowest temperature of its equation of state ({self.t_min:.6g} "
                             f"K, triple point {self.t_triple:.6g} K): solid would form, which "
                             "cvsim does not model. Stop the run earlier (a pressure or "
                             "temperature stop) or add heat input.")
        return self._read()

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
        return State(a.rhomass(), a.T(), a.p(), a.umass(), a.hmass(), a.smass(),
                     NAN, a.cvmass(), NAN, quality)


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
