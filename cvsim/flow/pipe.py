"""Flow through a pipe or hose with friction, and the restrictions in series with it.

Everything here is a small pure function in SI. A line (:mod:`cvsim.flow.line`) is a
chain of *elements* - a valve, an orifice, the pipe itself - and its flow is found
by marching *backwards* from the outlet: for a trial mass flow, each element gives
the pressure it needs at its inlet to pass that flow into the pressure at its
outlet. That required pressure rises continuously and monotonically with the flow,
choked or not (a choked element simply needs an inlet pressure proportional to the
flow), so the line's flow is the one root of "required inlet pressure = upstream
pressure". The functions below are those backward steps.

Gas: the perfect-gas forms with one exponent ``k`` (the ideal-gas heat-capacity ratio
at the upstream temperature, :mod:`cvsim.flow.exponent`) and ``theta`` = p0/rho0 [J/kg],
the upstream stagnation pressure over density - Z R T0 of the real gas -, held constant
along the line (stagnation temperature constant; Z taken constant). Liquid: constant
density, Darcy-Weisbach.

Adiabatic flow with friction (Fanno flow), Darcy friction factor f (4x Fanning),
Mach number M (Shapiro, *The Dynamics and Thermodynamics of Compressible Fluid Flow*,
vol. 1, 1953, ch. 6; Anderson, *Modern Compressible Flow*, 3rd ed., sec. 3.9):

    f L*/D = (1 - M^2)/(k M^2) + (k+1)/(2k) ln[ (k+1) M^2 / (2 + (k-1) M^2) ]
           = (k+1)/(2k) (e - ln(1 + e)),   e = 2 (1 - M^2) / ((k+1) M^2)
    p/p*   = (1/M) sqrt( (k+1) / (2 + (k-1) M^2) )
    p0/p0* = (1/M) [ (2 + (k-1) M^2)/(k+1) ]^((k+1)/(2(k-1)))

(the second form of f L*/D is the same function written without cancellation near
M = 1). Between two stations of a pipe, f L/D + sum(K) = fL*/D(M1) - fL*/D(M2):
fittings count as an equivalent friction length (Crane Technical Paper 410, ch. 1,
resistance coefficient K = f L/D, used for compressible flow as well). Mass flux at
Mach M and static pressure p: G = p M sqrt(k/theta) sqrt(1 + (k-1)/2 M^2).

Isothermal flow with friction (Shapiro vol. 1, ch. 6.7; the form of the `fluids`
library's ``isothermal_gas``), theta = p/rho constant:

    p1^2 - p2^2 = G^2 theta [ f L/D + sum(K) + 2 ln(p1/p2) ],

choking where the velocity reaches sqrt(theta) (M = 1/sqrt(k)).

Liquid (Darcy-Weisbach; Crane TP 410 ch. 1): stagnation pressure lost along the pipe
(f L/D + sum(K)) rho V^2 / 2; the velocity head of the jet at the outlet is lost too.
"""
from __future__ import annotations

import math

from ..numerics import root_on_bracket
from .control_valve import N6_SI, GAMMA_AIR

#: relative residual tolerance of the inner solves (Mach number, pressure ratio)
INNER_RTOL = 1e-15


# ------------------------------------------------------------------ Fanno

def _psi(e: float) -> float:
    """e - ln(1 + e) [-], accurate for small e (series below 0.05)."""
    if e < 0.05:
        # e^2/2 - e^3/3 + e^4/4 - ...; 14 terms leave < 1e-19 for e < 0.05
        term, total, sign = e * e, 0.0, 1.0
        for n in range(2, 16):
            total += sign * term / n
            term *= e
            sign = -sign
        return total
    return e - math.log1p(e)


def _e_of_mach(M: float, k: float) -> float:
    return 2.0 * (1.0 - M * M) / ((k + 1.0) * M * M)


def _mach_of_e(e: float, k: float) -> float:
    return math.sqrt(2.0 / ((k + 1.0) * e + 2.0))


def fanno_friction_length(M: float, k: float) -> float:
    """f L*/D [-]: friction length (Darcy f) from Mach number M to M = 1 in Fanno flow.

        f L*/D = (1 - M^2)/(k M^2) + (k+1)/(2k) ln[(k+1) M^2 / (2 + (k-1) M^2)]

    Parameters
    ----------
    M : Mach number [-] (> 0)
    k : ratio of heat capacities of the perfect gas [-]

    Source: Shapiro (1953) vol. 1, eq. 6.19 (4 f L*/D with the Fanning f);
    Anderson, *Modern Compressible Flow*, 3rd ed., eq. 3.107.

    >>> round(fanno_friction_length(0.5, 1.4), 4)   # Fanno tables (Anderson, App. A)
    1.0691
    """
    return (k + 1.0) / (2.0 * k) * _psi(_e_of_mach(M, k))


def fanno_pressure_ratio(M: float, k: float) -> float:
    """p/p* [-] of Fanno flow (static pressure over that at M = 1).

    >>> round(fanno_pressure_ratio(0.5, 1.4), 4)   # Fanno tables (Anderson, App. A)
    2.1381
    """
    return math.sqrt((k + 1.0) / (2.0 + (k - 1.0) * M * M)) / M


def fanno_stagnation_pressure_ratio(M: float, k: float) -> float:
    """p0/p0* [-] of Fanno flow.

    >>> round(fanno_stagnation_pressure_ratio(0.5, 1.4), 4)   # Fanno tables
    1.3398
    """
    return ((2.0 + (k - 1.0) * M * M) / (k + 1.0)) ** ((k + 1.0) / (2.0 * (k - 1.0))) / M


def fanno_temperature_ratio(M: float, k: float) -> float:
    """T/T* [-] of Fanno flow: (k+1)/(2 + (k-1) M^2)."""
    return (k + 1.0) / (2.0 + (k - 1.0) * M * M)


def fanno_mach(fl: float, k: float) -> float:
    """Subsonic Mach number [-] whose friction length f L*/D equals ``fl`` (>= 0).

    Solves (k+1)/(2k) (e - ln(1+e)) = fl for e >= 0 by Newton's method from above
    (the function is convex and increasing in e, so the iterates fall monotonically
    to the root), converged on the residual; then M = sqrt(2 / ((k+1) e + 2)).
    """
    if fl <= 0.0:
        return 1.0
    c = fl * 2.0 * k / (k + 1.0)
    e = c + math.sqrt(2.0 * c) + math.log1p(c + math.sqrt(2.0 * c))
    while _psi(e) < c:
        e *= 2.0
    for _ in range(100):
        r = _psi(e) - c
        if r <= INNER_RTOL * c:
            break
        e -= r * (1.0 + e) / e
    return _mach_of_e(e, k)


def exit_mach(G: float, p: float, k: float, theta: float) -> float:
    """Mach number [-] at static pressure p [Pa] and mass flux G [kg/(m2 s)] of a
    perfect gas with stagnation p0/rho0 = theta [J/kg]; may exceed 1 (then the
    exit cannot be at p: it chokes).

        G = p M sqrt(k/theta) sqrt(1 + (k-1)/2 M^2)  ->  M^2 = 2 q^2 / (1 + sqrt(1 + 2 (k-1) q^2)),
        q = G sqrt(theta/k) / p
    """
    q2 = G * G * theta / (k * p * p)
    return math.sqrt(2.0 * q2 / (1.0 + math.sqrt(1.0 + 2.0 * (k - 1.0) * q2)))


def isentropic_mach(G: float, p0: float, k: float, theta: float) -> float:
    """Subsonic Mach number [-] at which the isentropic mass flux from stagnation
    pressure p0 [Pa] equals G: G = p0 sqrt(k/theta) M (1 + (k-1)/2 M^2)^(-(k+1)/(2(k-1))).
    Returns 1 when G is at or above the choked flux.

    The flux function phi(M) is increasing and concave on (0, 1), and phi(M) <= M, so
    Newton's method from M = phi climbs monotonically to the root; it is converged on
    the residual (bisection takes over should the derivative vanish near M = 1).
    """
    target = G * math.sqrt(theta / k) / p0
    a = 0.5 * (k - 1.0)
    n = (k + 1.0) / (2.0 * (k - 1.0))
    if target >= (1.0 + a) ** -n:
        return 1.0
    tol = INNER_RTOL * target
    M = target
    for _ in range(60):
        q = 1.0 + a * M * M
        f = M * q ** -n - target
        if abs(f) <= tol:
            return M
        M_new = M - f / (q ** (-n - 1.0) * (1.0 - M * M))
        if not M < M_new < 1.0:
            break
        M = M_new

    def phi(x):
        return x * (1.0 + a * x * x) ** -n - target
    return root_on_bracket(phi, M, 1.0, phi(M), phi(1.0), tol + 1e-300)


# -------------------------------------------------------- backward steps, gas

def adiabatic_pipe_inlet(G: float, p_out: float, fl: float, k: float, theta: float,
                         out_is_stagnation: bool = False) -> tuple[float, bool]:
    """Stagnation pressure [Pa] needed at the inlet of a pipe in adiabatic flow.

    Parameters
    ----------
    G : mass flux in the pipe [kg/(m2 s)]
    p_out : [Pa] the static pressure the pipe discharges into (a free jet: the
        pipe is the last element), or, with ``out_is_stagnation``, the stagnation
        pressure needed at its outlet by the restriction that follows it
    fl : f L/D + sum(K) of the pipe and its fittings [-]
    k : exponent [-]; theta : p0/rho0 of the gas [J/kg]

    Returns
    -------
    (p01 [Pa], choked): choked when the outlet is at M = 1 (the static pressure there
    is then above ``p_out``). The inlet stagnation pressure includes the isentropic
    acceleration from rest into the pipe.
    """
    if out_is_stagnation:
        M2 = isentropic_mach(G, p_out, k, theta)
        choked = M2 >= 1.0
        if choked:
            p2 = G * math.sqrt(theta / k) / math.sqrt(0.5 * (k + 1.0))
        else:
            p2 = p_out * (1.0 + 0.5 * (k - 1.0) * M2 * M2) ** (-k / (k - 1.0))
    else:
        M2 = exit_mach(G, p_out, k, theta)
        choked = M2 >= 1.0
        if choked:
            M2 = 1.0
            p2 = G * math.sqrt(theta / k) / math.sqrt(0.5 * (k + 1.0))
        else:
            p2 = p_out
    M1 = fanno_mach(fanno_friction_length(M2, k) + fl, k) if fl > 0.0 else M2
    p1 = p2 * fanno_pressure_ratio(M1, k) / fanno_pressure_ratio(M2, k)
    return p1 * (1.0 + 0.5 * (k - 1.0) * M1 * M1) ** (k / (k - 1.0)), choked


def isothermal_pipe_inlet(G: float, p_out: float, fl: float, theta: float,
                          out_is_stagnation: bool = False) -> tuple[float, bool]:
    """Inlet pressure [Pa] (stagnation: rest upstream) of a pipe in isothermal flow.

        p1^2 - p2^2 = G^2 theta (fl + 2 ln(p1/p2)),  p0 = p1 exp(G^2 theta / (2 p1^2))

    (the last: isothermal acceleration from rest, int dp/rho + V^2/2 = 0). Choked
    where the outlet velocity reaches sqrt(theta): p2* = G sqrt(theta).

    Parameters as :func:`adiabatic_pipe_inlet` (``theta`` = p/rho of the gas at the
    line's temperature); returns (p0 [Pa], choked).
    """
    p_star = G * math.sqrt(theta)
    if out_is_stagnation:
        # outlet stagnation p_out = p2 exp(a / p2^2), a = G^2 theta / 2: take the root
        # p2 >= p_star (subsonic side), or choke
        a = 0.5 * G * G * theta
        choked = p_out <= p_star * math.exp(0.5)
        if choked:
            p2 = p_star
        else:
            def g(p):
                return p * math.exp(a / (p * p)) - p_out
            p2 = root_on_bracket(g, p_star, p_out, g(p_star), g(p_out), INNER_RTOL * p_out)
    else:
        choked = p_out <= p_star
        p2 = p_star if choked else p_out
    if fl <= 0.0 or G == 0.0:
        p1 = p2
    else:
        a = G * G * theta / (p2 * p2)

        def h(d):   # u = 1 + d: u^2 - 1 - 2 a ln u - a fl
            return d * (2.0 + d) - 2.0 * a * math.log1p(d) - a * fl

        hi = math.sqrt(1.0 + a * fl) - 1.0
        while h(hi) < 0.0:
            hi = 2.0 * hi + 1e-12
        p1 = p2 * (1.0 + root_on_bracket(h, 0.0, hi, h(0.0), h(hi),
                                         INNER_RTOL * (1.0 + a * fl)))
    return p1 * math.exp(0.5 * G * G * theta / (p1 * p1)), choked


def nozzle_inlet(G: float, p_down: float, k: float, theta: float) -> tuple[float, bool]:
    """Stagnation pressure [Pa] needed upstream of an isentropic perfect-gas nozzle to
    pass the ideal mass flux G [kg/(m2 s)] into the pressure p_down [Pa].

    Choked, p_down <= r* p0: p0 = G sqrt(theta/k) / (2/(k+1))^((k+1)/(2(k-1))).
    Otherwise, with w = r^(-(k-1)/k) and r = p_down/p0, the subcritical flux
    G^2 theta (k-1)/(2k) = p0^2 (r^(2/k) - r^((k+1)/k)) becomes w^2 - w = c,
    c = G^2 theta (k-1) / (2 k p_down^2): w = (1 + sqrt(1 + 4c))/2, p0 = p_down w^(k/(k-1)).
    The inverse of :func:`cvsim.flow.nozzle.ideal_gas_mass_flux` (same equations).

    Returns (p0 [Pa], choked).
    """
    ck = (2.0 / (k + 1.0)) ** ((k + 1.0) / (2.0 * (k - 1.0)))
    p0c = G * math.sqrt(theta / k) / ck
    if p_down <= (2.0 / (k + 1.0)) ** (k / (k - 1.0)) * p0c:
        return p0c, True
    c = G * G * theta * (k - 1.0) / (2.0 * k * p_down * p_down)
    wm1 = 2.0 * c / (1.0 + math.sqrt(1.0 + 4.0 * c))
    return p_down * math.exp(k / (k - 1.0) * math.log1p(wm1)), False


def valve_inlet(W: float, p_down: float, kv: float, xt: float, fp: float, k: float,
                theta: float) -> tuple[float, bool]:
    """Upstream pressure [Pa] a control valve needs to pass W [kg/s] of gas into
    p_down [Pa]: the inverse of IEC 60534-2-1 (:func:`cvsim.flow.control_valve.gas_mass_flow`)
    with the upstream density p1/theta,

        W = N6 Fp Kv Y p1 sqrt(x / theta),  Y = 1 - x/(3 Fg xT),  x = 1 - p_down/p1,

    choked at x = Fg xT (Fg = k/1.40). Returns (p1 [Pa], choked).
    """
    if W <= 0.0:
        return p_down, False
    xc = k / GAMMA_AIR * xt
    cap = N6_SI * fp * kv / math.sqrt(theta)   # W = cap Y p1 sqrt(x)
    if xc < 1.0:
        p1c = W / (cap * (2.0 / 3.0) * math.sqrt(xc))
        if p_down <= p1c * (1.0 - xc):
            return p1c, True
    target = W / (cap * p_down)
    s_max = math.sqrt(min(xc, 1.0))

    def chi(s):   # Y sqrt(x) / (1 - x) - target, x = s^2
        x = s * s
        return s * (1.0 - x / (3.0 * xc)) / (1.0 - x) - target if x < 1.0 else math.inf

    hi = s_max * (1.0 - 1e-15) if xc >= 1.0 else s_max
    f_hi = chi(hi)
    if not f_hi >= 0.0:  # pragma: no cover - the choked branch covers it
        f_hi = math.inf
    s = root_on_bracket(chi, 0.0, hi, -target, f_hi, INNER_RTOL * target)
    return p_down / (1.0 - s * s), False


# ------------------------------------------------------ backward steps, liquid

def liquid_pipe_loss(G: float, rho: float, fl: float) -> float:
    """Stagnation-pressure loss [Pa] of a liquid along a pipe: fl G^2 / (2 rho)
    (Darcy-Weisbach with fittings, fl = f L/D + sum(K))."""
    return fl * G * G / (2.0 * rho)


def liquid_orifice_inlet(G: float, p_down: float, rho: float) -> float:
    """Stagnation pressure [Pa] upstream of an orifice passing liquid at the ideal mass
    flux G [kg/(m2 s)] (the actual flow over Cd A) into p_down: p_down + G^2/(2 rho)."""
    return p_down + G * G / (2.0 * rho)


def liquid_valve_inlet(W: float, p_down: float, rho: float, kv: float, fl_valve: float,
                       fp: float, pv: float, pc: float) -> tuple[float, bool]:
    """Upstream pressure [Pa] a control valve needs to pass W [kg/s] of liquid into
    p_down: the inverse of IEC 60534-2-1 (:func:`cvsim.flow.control_valve.liquid_mass_flow`),
    the larger of p_down + (W/(N6 Fp Kv))^2/rho and the pressure at which the choked
    flow is W, (W/(N6 Fp Kv))^2 / (rho (FL/Fp)^2) + FF pv. Returns (p1, choked)."""
    from .control_valve import liquid_critical_pressure_ratio_factor
    q = (W / (N6_SI * fp * kv)) ** 2 / rho
    p_free = p_down + q
    p_choked = q / (fl_valve / fp) ** 2 + liquid_critical_pressure_ratio_factor(pv, pc) * pv
    return (p_choked, True) if p_choked > p_free else (p_free, False)


__all__ = ["adiabatic_pipe_inlet", "exit_mach", "fanno_friction_length", "fanno_mach",
           "fanno_pressure_ratio", "fanno_stagnation_pressure_ratio", "fanno_temperature_ratio",
           "isentropic_mach", "isothermal_pipe_inlet", "liquid_orifice_inlet",
           "liquid_pipe_loss", "liquid_valve_inlet", "nozzle_inlet", "valve_inlet"]
