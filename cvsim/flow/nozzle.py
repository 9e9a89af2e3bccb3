"""Compressible flow through an orifice or nozzle: mass flux through the throat.

Two forms, both returning the *ideal* (isentropic) mass flux G [kg/(m2 s)]; the
device multiplies by the discharge coefficient and the area.

Ideal-gas form (perfect-gas nozzle, e.g. Anderson, *Modern Compressible Flow*,
3rd ed., sec. 5.4; ISO 9300:2022 eq. for the critical flow function C*):

    choked (p_b/p0 <= r* = (2/(g+1))^(g/(g-1))):
        G = C* p0 / sqrt(Z R T0) = sqrt(g p0 rho0) (2/(g+1))^((g+1)/(2(g-1)))
    subcritical, r = p_b/p0:
        G = sqrt(2 g/(g-1) p0 rho0 (r^(2/g) - r^((g+1)/g)))

with the stagnation density rho0 standing for p0/(Z R T0), so the real
compressibility of the upstream gas is kept, and g the exponent: cvsim passes the
ideal-gas heat-capacity ratio at the upstream temperature, never the real cp/cv
(:mod:`cvsim.flow.exponent`).

Real-gas form (isentropic nozzle on the real equation of state; the homogeneous
equilibrium model where the expansion enters the two-phase region): along the
isentrope s = s0 from the stagnation state (h0, s0),

    G(rho) = rho sqrt(2 (h0 - h(rho, s0)))

The throat is choked at the maximum of G over the isentrope (where the velocity
equals the speed of sound, c^2 = 2 (h0 - h), in single-phase flow); otherwise
the throat pressure is the back pressure. References: Thompson, *Compressible
Fluid Dynamics* (1972), ch. 5 (real-gas nozzle flow); ISO 9300:2022 sec. 4
(critical flow function of a real gas from the isentrope).

Near zero pressure difference G ~ sqrt(dp): its slope is unbounded, which
makes equalising vessels stiff without end. Below a relative pressure
difference of ``LINEAR_BELOW`` the flux is taken linear in the difference
(matching value at the joint), a documented regularisation (docs/theory.md).
"""
from __future__ import annotations

import math

from ..errors import StateError
from ..fluid import State, fluid_of

#: Relative pressure difference (p0 - pb)/p0 below which the flux is linear in
#: the difference instead of following the square root (regularisation). Since
#: G ~ sqrt(dp) there, the flux at 1e-4 is 10 % of its value at 1 % difference
#: (sqrt(1e-4/1e-2) = 0.1); below the joint the linear piece passes less than the
#: square root would, by at most a quarter of the flux at the joint (the largest
#: value of sqrt(u) - u), i.e. 2.5 % of the flux at 1 % difference.
LINEAR_BELOW = 1e-4

#: relative tolerance on the throat temperature of a two-phase throat search
THROAT_T_TOL = 1e-7

#: TRIPLE_THROAT: when the isentrope from a liquid or two-phase source reaches the
#: triple point before the flux has peaked (CO2 vented to atmosphere from below
#: about 10 bar a), solid forms in the jet, which the equation of state does not
#: cover. The throat is then held at the triple point: the flux there, the largest
#: reached on the fluid's range, is taken as the choked flux. It underestimates the
#: flux (the peak lies beyond); the device reports when it happens.


def critical_pressure_ratio(gamma: float) -> float:
    """Perfect-gas critical pressure ratio r* = (2/(g+1))^(g/(g-1)) [-].

    >>> round(critical_pressure_ratio(1.4), 6)  # Anderson, Modern Compressible Flow, Table A.1
    0.528282
    """
    return (2.0 / (gamma + 1.0)) ** (gamma / (gamma - 1.0))


def critical_flow_function(gamma: float) -> float:
    """Perfect-gas critical flow function C* = sqrt(g) (2/(g+1))^((g+1)/(2(g-1))) [-].

    Choked mass flux G* = C* p0 / sqrt(R T0). ISO 9300:2022 defines C* this way.

    >>> round(critical_flow_function(1.4), 6)
    0.684731
    """
    return math.sqrt(gamma) * (2.0 / (gamma + 1.0)) ** ((gamma + 1.0) / (2.0 * (gamma - 1.0)))


def ideal_gas_mass_flux(p0: float, rho0: float, gamma: float, pb: float) -> tuple[float, bool]:
    """Isentropic mass flux of a perfect gas through a nozzle throat.

    Parameters
    ----------
    p0 : upstream stagnation pressure [Pa]
    rho0 : upstream stagnation density [kg/m3] (p0/(Z R T0) for a real gas)
    gamma : exponent [-]: the ideal-gas heat-capacity ratio at the upstream temperature
        (:func:`cvsim.flow.exponent.perfect_gas_exponent`)
    pb : back pressure [Pa]

    Returns
    -------
    (G [kg/(m2 s)], choked)
    """
    if pb >= p0:
        return 0.0, False
    r_crit = critical_pressure_ratio(gamma)
    r = pb / p0
    if r <= r_crit:
        return math.sqrt(gamma * p0 * rho0) * (2.0 / (gamma + 1.0)) ** (
            (gamma + 1.0) / (2.0 * (gamma - 1.0))), True
    r_lin = 1.0 - LINEAR_BELOW
    if r > r_lin:
        g_lin = _ideal_subcritical(p0, rho0, gamma, r_lin)
        return g_lin * (1.0 - r) / LINEAR_BELOW, False
    return _ideal_subcritical(p0, rho0, gamma, r), False


def _ideal_subcritical(p0, rho0, gamma, r):
    return math.sqrt(2.0 * gamma / (gamma - 1.0) * p0 * rho0
                     * (r ** (2.0 / gamma) - r ** ((gamma + 1.0) / gamma)))


class NozzleHint:
    """Warm start for the real-gas throat search of one link (log density ratio
    of the last throat and the temperature there)."""

    __slots__ = ("x", "T", "mixture")

    def __init__(self):
        self.x = None
        self.T = None
        #: the warm start of a mixture's throat search (:mod:`cvsim.flow.mixture_nozzle`)
        self.mixture = None


def real_gas_mass_flux(fluid, up: State, pb: float, hint: NozzleHint | None = None
                       ) -> tuple[float, bool, float]:
    """Isentropic mass flux through a throat on the real equation of state.

    Parameters
    ----------
    fluid : a fluid object (``cvsim.fluid``) offering ``isentrope_at``; a mixture
        (``model == "mixture"``) takes :func:`cvsim.flow.mixture_nozzle.mixture_mass_flux`
        on the composition of ``up``
    up : upstream stagnation state
    pb : back pressure [Pa]
    hint : warm start kept per link between calls (optional)

    Returns
    -------
    (G [kg/(m2 s)], choked, throat pressure [Pa])
    """
    p0 = up.p
    if pb >= p0:
        return 0.0, False, p0
    if hint is None:
        hint = NozzleHint()
    if fluid.model == "mixture":
        # a mixture: the throat is searched in pressure, on the stream's own composition
        from .mixture_nozzle import MixtureNozzleHint, mixture_mass_flux
        if hint.mixture is None:
            hint.mixture = MixtureNozzleHint()
        return mixture_mass_flux(fluid_of(up, fluid), up, pb, hint.mixture, LINEAR_BELOW)
    T_entry = _dome_entry(fluid, up)
    frac = (p0 - pb) / p0
    if frac < LINEAR_BELOW:
        g_lin = _flux_at(fluid, up, p0 * (1.0 - LINEAR_BELOW), hint, T_entry)
        return g_lin * frac / LINEAR_BELOW, False, pb
    if T_entry is not None:
        T_star, st_star, g_star = _dome_throat(fluid, up, T_entry)
        x_star = math.log(st_star.rho / up.rho)
    else:
        x_star, st_star, g_star = _throat(fluid, up, hint)
    if st_star.p >= pb:
        hint.x, hint.T = x_star, st_star.T
        return g_star, True, st_star.p
    return _flux_at(fluid, up, pb, hint, T_entry, x_star), False, pb


def _flux_at(fluid, up: State, pb: float, hint, T_entry, x_crit=None) -> float:
    """Isentropic mass flux with the throat at pressure pb (not choked)."""
    if T_entry is not None:
        T_b = fluid.saturation_temperature(pb) if pb < fluid.p_crit else math.inf
        if T_b < T_entry:   # the throat lies in the two-phase region
            st = fluid.two_phase_isentrope_at_T(up.s, T_b)
            if st is not None:
                dh = up.h - st.h
                return st.rho * math.sqrt(2.0 * dh) if dh > 0.0 else 0.0
        # the throat lies in the compressed liquid, above the saturation pressure
        liq = fluid.two_phase_isentrope_at_T(up.s, T_entry)
        if liq is not None and liq.rho < up.rho:
            x_crit = math.log(liq.rho / up.rho)
    g, _ = _subcritical(fluid, up, pb, hint, x_crit)
    return g


def _dome_entry(fluid, up: State) -> float | None:
    """Saturation temperature [K] at which the isentrope from a liquid or two-phase
    source enters the two-phase region: the source's own temperature when it is
    two-phase, saturated liquid, or saturated vapour that condenses on expansion
    (a "wet" fluid such as water, CO2, ammonia); ``None`` for gas, supercritical or
    saturated vapour that superheats on expansion, which take the general search."""
    if not hasattr(fluid, "two_phase_isentrope_at_T"):
        return None
    if up.two_phase and up.quality < 1.0:
        return up.T
    if up.two_phase:   # saturated vapour: into the dome if it condenses on expansion
        if up.T <= fluid.t_triple * (1.0 + 1e-6):
            return up.T   # at the triple point (the throat search says so)
        probe = max(up.T * (1.0 - 1e-6), fluid.t_triple * (1.0 + 1e-9))
        below = fluid.two_phase_isentrope_at_T(up.s, probe)
        return up.T if below is not None else None
    if up.phase == "liquid":
        return fluid.liquid_isentrope_entry(up.s)
    return None


def _dome_throat(fluid, up: State, T_entry: float):
    """Choked throat of a liquid or two-phase source (homogeneous equilibrium).

    In the two-phase region the isentrope is explicit in the saturation
    temperature T (lever rule on s, :meth:`~cvsim.fluid.RealFluid.two_phase_isentrope_at_T`),
    so G(T) = rho(T) sqrt(2 (h0 - h(T))) is maximised over T in [T_triple, T_entry]
    by Brent's bounded search (scipy ``minimize_scalar``) to 1e-7 T: at a smooth
    maximum the flux is then exact to about 1e-12. Compressed liquid cannot choke (its sound
    speed is far above the flow speed), so the maximum lies in the two-phase region
    or at its entry (a subcooled liquid then chokes at its saturation pressure).
    Reference: homogeneous equilibrium model, e.g. Leung, AIChE J. 32 (1986) 1743;
    API 520 Part I (10th ed.) Annex C (HEM as the basis of the two-phase methods).
    Returns (T, state, G).
    """
    s0, h0 = up.s, up.h

    def G(T):
        st = fluid.two_phase_isentrope_at_T(s0, T)
        if st is None:
            return -1.0, None
        dh = h0 - st.h
        return (st.rho * math.sqrt(2.0 * dh) if dh > 0.0 else 0.0), st

    from scipy.optimize import minimize_scalar
    if T_entry <= fluid.t_triple * (1.0 + 1e-6):
        raise StateError(f"the {fluid.name} upstream of the device is at its triple point "
                         f"({fluid.t_triple:.6g} K, {up.p / 1e5:.6g} bar a): solid forms in "
                         "the vessel, which cvsim does not model. Stop the run before it "
                         "(a pressure stop above the triple-point pressure) or add heat input.")
    a, b = fluid.t_triple * (1.0 + 1e-9), T_entry
    seen = {}

    def minus_g(T):
        g, st = G(T)
        seen[T] = (g, st)
        return -g

    res = minimize_scalar(minus_g, bounds=(a, b), method="bounded",
                          options={"xatol": THROAT_T_TOL * b})
    g_b, st_b = G(b)
    g_x, st_x = seen.get(res.x) or G(res.x)
    T_best, g_best, st_best = (b, g_b, st_b) if g_b >= g_x else (res.x, g_x, st_x)
    if st_best is not None and T_best - a <= 2.0 * THROAT_T_TOL * b:
        # the flux still rises where the isentrope reaches the triple point: solid
        # forms in the jet; the throat is held at the triple point (see TRIPLE_THROAT)
        st_best = fluid.two_phase_isentrope_at_T(s0, a)
        if st_best is not None:
            dh = h0 - st_best.h
            g_best = st_best.rho * math.sqrt(2.0 * dh) if dh > 0.0 else 0.0
            T_best = a
    if st_best is None:
        raise StateError(f"no throat state found for {fluid.name} expanding from "
                         f"{up.p / 1e5:.6g} bar a, {up.T:.6g} K")
    return T_best, st_best, g_best


def at_triple_point(fluid, p_throat: float) -> bool:
    """True when a throat pressure [Pa] is the triple-point pressure, where
    :func:`real_gas_mass_flux` holds a throat whose expansion would form solid
    (TRIPLE_THROAT)."""
    p_t = getattr(fluid, "p_triple", None)
    return p_t is not None and p_throat <= p_t * (1.0 + 1e-6)


def _kappa(up: State) -> float:
    """Isentropic exponent rho c^2 / p, a good guess for the throat (1.3 if unknown)."""
    if up.c == up.c and up.p > 0:
        k = up.rho * up.c * up.c / up.p
        if 1.0 < k < 10.0:
            return k
    g = up.gamma
    return g if (g == g and 1.0 < g < 10.0) else 1.3


def _point(fluid, up: State, x: float, T_guess: float):
    """State and mass flux at log density ratio x = ln(rho/rho0) on the isentrope."""
    st = fluid.isentrope_at(up.rho * math.exp(x), up.s, T_guess)
    dh = up.h - st.h
    g = st.rho * math.sqrt(2.0 * dh) if dh > 0.0 else 0.0
    return st, g, dh


def _throat(fluid, up: State, hint: NozzleHint):
    """Throat of the choked nozzle: maximum of G on the isentrope.

    Single phase: secant iteration on F(x) = 2 (h0 - h) - c^2 = 0, which marks
    dG/dx = 0. Two-phase throat (c undefined): golden-section on G.
    """
    k = _kappa(up)
    x_ideal = math.log((2.0 / (k + 1.0)) ** (1.0 / (k - 1.0)))
    x0 = hint.x if hint.x is not None else x_ideal
    T0 = hint.T if hint.T is not None else up.T * math.exp((k - 1.0) * x0)
    st0, g0, dh0 = _point(fluid, up, x0, T0)
    if st0.two_phase or st0.c != st0.c:
        return _throat_by_maximum(fluid, up, x_ideal, st0.T)
    f0 = 2.0 * dh0 - st0.c * st0.c
    # second point: one ideal-gas Newton step, d F / dx ~ -2 c^2 (1 + ...) ~ -(k+1) c^2
    x1 = x0 + f0 / ((k + 1.0) * st0.c * st0.c)
    if x1 >= 0.0:
        x1 = 0.5 * x0
    best = (x0, st0, g0)
    for _ in range(30):
        st1, g1, dh1 = _point(fluid, up, x1, st0.T * math.exp((k - 1.0) * (x1 - x0)))
        if st1.two_phase or st1.c != st1.c:
            return _throat_by_maximum(fluid, up, x_ideal, st1.T)
        if g1 > best[2]:
            best = (x1, st1, g1)
        f1 = 2.0 * dh1 - st1.c * st1.c
        if abs(x1 - x0) < 1e-7:
            break
        denom = f1 - f0
        x2 = x1 - f1 * (x1 - x0) / denom if denom != 0.0 else x1
        if not (x2 < 0.0) or abs(x2 - x1) > 1.0:
            x2 = min(x1 + math.copysign(0.2, f1 * -1.0), -1e-6)  # pragma: no cover
        x0, st0, f0 = x1, st1, f1
        x1 = x2
    return best


def _throat_by_maximum(fluid, up: State, x_guess: float, T_guess: float):
    """Golden-section search for the maximum of G(x) on [x_guess - 1.5, -1e-4].

    Points beyond the end of the equation of state (below the triple point)
    count as zero flux: the maximum lies at higher density.
    """
    invphi = (math.sqrt(5.0) - 1.0) / 2.0
    a, b = x_guess - 1.5, -1e-4

    def point(x, T):
        try:
            return _point(fluid, up, x, T)
        except StateError:
            return None, -1.0, 0.0

    c = b - invphi * (b - a)
    d = a + invphi * (b - a)
    stc, gc, _ = point(c, T_guess)
    std, gd, _ = point(d, stc.T if stc is not None else T_guess)
    while b - a > 1e-6:
        if gc > gd:
            b, d, std, gd = d, c, stc, gc
            c = b - invphi * (b - a)
            stc, gc, _ = point(c, std.T if std is not None else T_guess)
        else:
            a, c, stc, gc = c, d, std, gd
            d = a + invphi * (b - a)
            std, gd, _ = point(d, stc.T if stc is not None else T_guess)
    best = (c, stc, gc) if gc > gd else (d, std, gd)
    if best[1] is None:
        raise StateError(f"no throat state found for {fluid.name} expanding from "
                         f"{up.p / 1e5:.6g} bar a, {up.T:.6g} K")
    return best


def _subcritical(fluid, up: State, pb: float, hint: NozzleHint, x_crit: float | None = None):
    """Mass flux with the throat at the back pressure: solve p(x) = pb on the isentrope.

    Newton in x = ln(rho/rho0) with dp/dx = rho c^2 (single phase; secant steps
    in the two-phase region), safeguarded by bisection on [x_crit, 0].
    """
    k = _kappa(up)
    lo = x_crit if x_crit is not None else math.log((2.0 / (k + 1.0)) ** (1.0 / (k - 1.0))) - 1.0
    hi = 0.0
    x = math.log(pb / up.p) / k
    if not (lo < x < hi):
        x = 0.5 * (lo + hi)
    T = up.T * math.exp((k - 1.0) * x)
    st = None
    x_prev = err_prev = None
    for _ in range(100):
        st = fluid.isentrope_at(up.rho * math.exp(x), up.s, T)
        T = st.T
        err = st.p - pb
        if err > 0.0:
            hi = x
        else:
            lo = x
        if st.c == st.c:  # single phase: Newton with dp/dx = rho c^2
            x_new = x - err / (st.rho * st.c * st.c)
        elif x_prev is not None and err != err_prev:  # two-phase: secant
            x_new = x - err * (x - x_prev) / (err - err_prev)
        else:
            x_new = 0.5 * (lo + hi)
        if not (lo < x_new < hi):
            x_new = 0.5 * (lo + hi)
        if abs(x_new - x) < 1e-13 or abs(err) < 1e-12 * pb:
            break
        x_prev, err_prev = x, err
        x = x_new
    dh = up.h - st.h
    g = st.rho * math.sqrt(2.0 * dh) if dh > 0.0 else 0.0
    return g, st
