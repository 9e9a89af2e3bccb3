"""Isentropic mass flux of a mixture through a nozzle throat, the throat found in pressure.

Along the isentrope s = s0 from the stagnation state (h0, s0) of the stream (a
vessel's contents, or the phase it draws),

    G(p) = rho(p) sqrt(2 (h0 - h(p))),     u = sqrt(2 (h0 - h))

and since dh = dp / rho on an isentrope (u du = -dp / rho),

    dG/dp = (u^2 - c^2) / (u c^2)

so G rises as p falls while the flow is slower than sound and peaks where the Mach
number u/c = 1 (Thompson, *Compressible Fluid Dynamics*, 1972, ch. 5; the homogeneous
equilibrium model through two phases, with c the equilibrium speed of sound, e.g.
Leung, AIChE J. 32 (1986) 1743; API 520 Part I, 10th ed., Annex C). The throat is the
root of

    phi(x) = 2 (h0 - h) / c^2 - 1 = M^2 - 1,      x = ln(p / p0)

which rises as x falls (u grows, c falls), found by secant steps from the last
throat of the same link (warm start: ``MixtureNozzleHint``) with the last slope
dphi/dx, then false position on the bracket. Each point is one (p, s) flash
(:meth:`cvsim.mixture.MixtureFluid.isentrope_at_p`), warm-started too. Where the
isentrope enters the two-phase region c drops at once, and phi with it jumps up:
when phi < 0 just above the phase boundary and phi > 0 just below it, the flux
peaks on the boundary itself, the bracket closes on it (bisection to
``BOUNDARY_X_TOL``) and the larger flux of its two ends is taken. When phi is still
negative at the back pressure, the flow is not choked: G at the back pressure.

Accuracy: phi is converged to ``PHI_TOL``; since dphi/dx is about -(k+1)/k (-1.7 for
natural gas), the throat lies within ~1e-7 in ln p of the converged point and G, flat
at its maximum, is exact to about 1e-14 relative (to ~1e-9 on a phase boundary).

Cost (measured, ``python benchmarks/bench_mixture_blowdown.py``): two or three
points per call when warm-started, each one (p, s) flash (one phase: a Newton
iteration on the equation of state and one (T, p) flash as a stability test; two
phases: three or four (T, p) flashes).

The pure-fluid path (:mod:`cvsim.flow.nozzle`) searches the throat in density with
(rho, s) states, which for a mixture costs a two-dimensional flash per point; this
module serves every fluid with ``model == "mixture"``.
"""
from __future__ import annotations

import math

from ..errors import StateError

#: the throat is converged when |M^2 - 1| <= PHI_TOL
PHI_TOL = 1e-7
#: a bracket narrower than this in ln p that straddles a phase boundary with a
#: jump of phi through zero locates a throat on the boundary
BOUNDARY_X_TOL = 1e-9
#: a point with |M^2 - 1| <= PHI_PREDICT in the phase region of the last throat (or
#: of the point before) gives the flux by one Newton step from that point: the error
#: is third order in the step, ~ (PHI_PREDICT / 1.7)^3 ~ 2e-10 relative
PHI_PREDICT = 1e-3
#: iterations of the throat search at most
MAX_THROAT_ITERATIONS = 80
#: the throat search stays above p0 exp(X_FLOOR) (the flux is zero beyond any real throat)
X_FLOOR = -12.0


class MixtureNozzleHint:
    """Warm start of one link and direction: ln(p*/p0) of the last throat and dphi/dx
    there, and the warm start of the (p, s) flashes (:class:`cvsim.mixture.FlashHint`)."""

    __slots__ = ("x", "slope", "flash", "boundary", "two_phase")

    def __init__(self):
        from ..mixture import FlashHint
        self.x = None
        self.slope = None
        self.flash = FlashHint()
        self.boundary = False
        self.two_phase = False


class _Point:
    __slots__ = ("x", "st", "G", "phi")

    def __init__(self, x, st, G, phi):
        self.x, self.st, self.G, self.phi = x, st, G, phi


def _point(fluid, up, x: float, hint: MixtureNozzleHint) -> _Point:
    st = fluid.isentrope_at_p(up.p * math.exp(x), up.s, None, hint.flash)
    dh = up.h - st.h
    if not (dh > 0.0):
        return _Point(x, st, 0.0, -1.0)
    c = fluid.sound_speed(st)
    G = st.rho * math.sqrt(2.0 * dh)
    phi = 2.0 * dh / (c * c) - 1.0 if c > 0.0 else math.inf
    return _Point(x, st, G, phi)


def _kappa(up) -> float:
    if up.c == up.c and up.p > 0.0:
        k = up.rho * up.c * up.c / up.p
        if 1.0 < k < 10.0:
            return k
    return 1.3


def mixture_mass_flux(fluid, up, pb: float, hint: MixtureNozzleHint | None = None,
                      linear_below: float = 1e-4) -> tuple[float, bool, float]:
    """Isentropic mass flux of a mixture through a throat (homogeneous equilibrium).

    Parameters
    ----------
    fluid : :class:`cvsim.mixture.MixtureFluid` of the stream's composition
    up : upstream stagnation state (a state of ``fluid``)
    pb : back pressure [Pa]
    hint : warm start kept per link and direction (optional)
    linear_below : relative pressure difference below which the flux is taken linear
        in the difference (the regularisation of :mod:`cvsim.flow.nozzle`)

    Returns
    -------
    (G [kg/(m2 s)], choked, throat pressure [Pa])
    """
    p0 = up.p
    if pb >= p0:
        return 0.0, False, p0
    if hint is None:
        hint = MixtureNozzleHint()
    frac = (p0 - pb) / p0
    if frac < linear_below:
        pt = _point(fluid, up, math.log(1.0 - linear_below), hint)
        return pt.G * frac / linear_below, False, pb
    x_b = max(math.log(pb / p0), X_FLOOR)
    pt = _throat(fluid, up, x_b, hint)
    return pt.G, pt.x > x_b, p0 * math.exp(pt.x) if pt.x > x_b else pb


def _throat(fluid, up, x_b: float, hint: MixtureNozzleHint) -> _Point:
    """The throat on [x_b, 0): the root of phi, or x_b when phi(x_b) <= 0 (not choked)."""
    k = _kappa(up)
    slope = hint.slope if hint.slope is not None else -(k + 1.0) / k
    x0 = hint.x if hint.x is not None else math.log((2.0 / (k + 1.0)) ** (k / (k - 1.0)))
    x0 = min(max(x0, x_b), -1e-6)
    hi = lo = None            # hi: phi < 0 (nearer p0), lo: phi > 0 (lower pressure)
    if hint.boundary and hint.x is not None:
        # a throat on a phase boundary last time: start from a narrow bracket around it
        a = _point(fluid, up, min(x0 + 1e-6, -1e-9), hint)
        b = _point(fluid, up, max(x0 - 1e-6, x_b), hint)
        if a.phi < 0.0 < b.phi:
            hi, lo = a, b
            pt = a
        else:
            pt = a if abs(a.phi) < abs(b.phi) else b
            for q in (a, b):
                if q.phi < 0.0 and (hi is None or q.x < hi.x):
                    hi = q
                if q.phi > 0.0 and (lo is None or q.x > lo.x):
                    lo = q
            if abs(pt.phi) <= PHI_TOL:
                return _done(pt, hint, slope, False)
            if b.x <= x_b and b.phi <= 0.0:
                return _done(b, hint, slope, False)
    else:
        pt = _point(fluid, up, x0, hint)
    prev = None
    same = hint.two_phase if hint.x is not None else None
    for _ in range(MAX_THROAT_ITERATIONS):
        if abs(pt.phi) <= PHI_TOL:
            return _done(pt, hint, slope, False)
        if abs(pt.phi) <= PHI_PREDICT and pt.st.two_phase == same and \
                all(q is None or q.st.two_phase == same for q in (hi, lo)):
            # close to a throat in the same phase region: the flux at the maximum by
            # one Newton step, G* = G + (dG/dx) dx / 2 with dG/dx = p phi / u (exact
            # for a parabola; the error is third order in dx ~ PHI_PREDICT / |slope|)
            dx = -pt.phi / slope
            x_star = pt.x + dx
            if x_b < x_star < 0.0:
                u = math.sqrt(2.0 * (up.h - pt.st.h))
                G = pt.G + 0.5 * pt.st.p * pt.phi / u * dx
                return _done(_Point(x_star, pt.st, G, 0.0), hint, slope, False)
        same = pt.st.two_phase
        if pt.phi < 0.0:
            if pt.x <= x_b:
                return _done(pt, hint, slope, False)       # not choked
            if hi is None or pt.x < hi.x:
                hi = pt
        elif lo is None or pt.x > lo.x:
            lo = pt
        if hi is not None and lo is not None and hi.x - lo.x <= BOUNDARY_X_TOL:
            # phi jumps through zero inside a vanishing bracket: a phase boundary
            if hi.st.two_phase != lo.st.two_phase or not (math.isfinite(hi.phi)
                                                          and math.isfinite(lo.phi)):
                best = hi if hi.G >= lo.G else lo
                return _done(best, hint, slope, True)
            return _done(hi if abs(hi.phi) < abs(lo.phi) else lo, hint, slope, False)
        if prev is not None and prev.phi != pt.phi and math.isfinite(prev.phi) and \
                math.isfinite(pt.phi) and prev.st.two_phase == pt.st.two_phase:
            s = (pt.phi - prev.phi) / (pt.x - prev.x)
            if s < 0.0:
                slope = s
        x_new = pt.x - pt.phi / slope if math.isfinite(pt.phi) else math.nan
        if hi is not None and lo is not None:
            # bracketed: secant inside the bracket while both ends lie in the same
            # phase region; bisection when it straddles a phase boundary (phi may jump)
            if not (lo.x < x_new < hi.x) or hi.st.two_phase != lo.st.two_phase:
                x_new = 0.5 * (hi.x + lo.x)
        else:
            top = hi.x if hi is not None else 0.0
            if not (x_new < top):
                x_new = 0.5 * (pt.x + top)
            if not (x_new > x_b):
                x_new = x_b if lo is None else 0.5 * (pt.x + x_b)
        prev, pt = pt, _point(fluid, up, x_new, hint)
    raise StateError(f"no throat found for {fluid.name} expanding from {up.p / 1e5:.6g} bar a, "
                     f"{up.T:.6g} K (the throat search did not converge)")


def _done(pt: _Point, hint: MixtureNozzleHint, slope: float, boundary: bool) -> _Point:
    hint.x = pt.x
    hint.slope = slope
    hint.boundary = boundary
    hint.two_phase = pt.st.two_phase
    return pt


__all__ = ["MixtureNozzleHint", "PHI_TOL", "mixture_mass_flux"]
