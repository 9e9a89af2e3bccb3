"""Mass flux of a mixture through a nozzle with frozen composition (no phase change).

The stream keeps its phases as they enter: a mass share X of vapour (composition y)
and 1 - X of liquid (composition x), no mass or heat passing between them. The
vapour expands isentropically on its own volume root of the equation of state at
fixed composition (:meth:`cvsim.mixture.MixtureFluid.metastable_isentrope_at_p`): a
vapour that would condense in equilibrium stays a supersaturated, metastable vapour.
The liquid is incompressible at its inlet density, as in the homogeneous frozen model
(dh_L = v_L dp on its isentrope). Per kilogram of stream, at throat pressure p,

    v(p)      = X v_V(p) + (1 - X) v_L
    h0 - h(p) = X (h_V0 - h_V(p)) + (1 - X) v_L (p0 - p)
    G(p)      = sqrt(2 (h0 - h(p))) / v(p)

Each phase is isentropic, so dh = v dp for the stream and G peaks where the flow
speed equals the frozen speed of sound (Thompson, *Compressible Fluid Dynamics*,
1972, ch. 5, as in :mod:`cvsim.flow.mixture_nozzle`), with

    dv/dp|_s = -X v_V^2 / c_V^2,      c_f^2 = -v^2 / (dv/dp|_s) = v^2 c_V^2 / (X v_V^2)

(c_V the vapour's one-phase sound speed on its root; the liquid adds volume but no
compressibility). The throat is the root of phi(x) = 2 (h0 - h) / c_f^2 - 1 = M^2 - 1
in x = ln(p/p0), which rises as x falls; found by secant steps from the last throat
of the same link (``FrozenNozzleHint``), then Illinois false position on the bracket
to |phi| <= PHI_TOL. When phi is still negative at the back pressure the flow is not
choked: G at the back pressure. An all-liquid stream (X = 0) never chokes:
G = sqrt(2 rho_L (p0 - pb)) (Bernoulli).

The homogeneous frozen and equilibrium models bound a flashing two-phase flow: with
no time for interphase transfer (short nozzles) the measured flux approaches the
frozen one, and the equilibrium (HEM) flux is the lower bound (Henry & Fauske,
J. Heat Transfer 93 (1971) 179; from memory). The equilibrium nozzle is
:mod:`cvsim.flow.mixture_nozzle`; an orifice takes this one with ``expansion: frozen``.
"""
from __future__ import annotations

import math

from ..errors import StateError
from ..numerics import root_on_bracket

#: the throat is converged when |M^2 - 1| <= PHI_TOL (G, flat at its maximum, is then
#: exact to ~1e-14 relative; see :mod:`cvsim.flow.mixture_nozzle`)
PHI_TOL = 1e-7
#: the throat search stays above p0 exp(X_FLOOR)
X_FLOOR = -12.0
#: steps of the search for a bracket at most
MAX_STEPS = 60


class FrozenNozzleHint:
    """Warm start of one link and direction: ln(p*/p0) of the last throat, dphi/dx
    there, the vapour's temperature there, and the view of the vapour's composition."""

    __slots__ = ("x", "slope", "T", "view")

    def __init__(self):
        self.x = None
        self.slope = None
        self.T = None
        self.view = None


class _Stream:
    """The frozen stream: vapour share X, its fluid view, root and inlet (h, s); the
    liquid's volume v_L [m3/kg]."""

    __slots__ = ("X", "vap", "root", "hV0", "sV0", "TV0", "vL", "p0", "h0")


def _stream(fluid, up, hint: FrozenNozzleHint) -> _Stream:
    s = _Stream()
    s.p0, s.h0 = up.p, up.h
    if up.two_phase and up.vapour is not None and up.liquid is not None:
        s.X = min(max(up.quality, 0.0), 1.0)
        s.vap = fluid.engine.view(up.y, hint.view)
        s.root = "vapour"
        s.hV0, s.sV0, s.TV0 = up.vapour.h, up.vapour.s, up.T
        s.vL = 1.0 / up.liquid.rho
    elif up.phase == "liquid":
        s.X, s.vap, s.root = 0.0, None, None
        s.hV0 = s.sV0 = s.TV0 = math.nan
        s.vL = 1.0 / up.rho
    else:
        s.X, s.vap = 1.0, fluid
        s.root = fluid.root_of(up)
        s.hV0, s.sV0, s.TV0 = up.h, up.s, up.T
        s.vL = 0.0
    if s.vap is not None:
        hint.view = s.vap
    return s


class _Point:
    __slots__ = ("x", "G", "phi", "T")

    def __init__(self, x, G, phi, T):
        self.x, self.G, self.phi, self.T = x, G, phi, T


def _point(s: _Stream, x: float, hint: FrozenNozzleHint) -> _Point:
    p = s.p0 * math.exp(x)
    X = s.X
    T_guess = hint.T if hint.T is not None else s.TV0 * math.exp(0.25 * x)
    st = s.vap.metastable_isentrope_at_p(p, s.sV0, T_guess, s.root)
    hint.T = st.T           # the next point's first guess
    vV = 1.0 / st.rho
    dh = X * (s.hV0 - st.h) + (1.0 - X) * s.vL * (s.p0 - p)
    v = X * vV + (1.0 - X) * s.vL
    if not (dh > 0.0):
        return _Point(x, 0.0, -1.0, st.T)
    cf2 = (v * v) * st.c * st.c / (X * vV * vV) if st.c == st.c else math.inf
    return _Point(x, math.sqrt(2.0 * dh) / v, 2.0 * dh / cf2 - 1.0, st.T)


def frozen_mass_flux(fluid, up, pb: float, hint: FrozenNozzleHint | None = None,
                     linear_below: float = 1e-4) -> tuple[float, bool, float]:
    """Isentropic mass flux of a mixture through a throat with frozen composition.

    Parameters
    ----------
    fluid : :class:`cvsim.mixture.MixtureFluid` of the stream's overall composition
    up : upstream stagnation state of the stream (a state of ``fluid``; two-phase
        states carry their phases)
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
        hint = FrozenNozzleHint()
    s = _stream(fluid, up, hint)
    frac = (p0 - pb) / p0
    if s.X <= 0.0:
        # incompressible liquid: Bernoulli, never choked
        if frac < linear_below:
            return math.sqrt(2.0 * p0 * linear_below / s.vL) * frac / linear_below, False, pb
        return math.sqrt(2.0 * (p0 - pb) / s.vL), False, pb
    if frac < linear_below:
        pt = _point(s, math.log(1.0 - linear_below), hint)
        return pt.G * frac / linear_below, False, pb
    x_b = max(math.log(pb / p0), X_FLOOR)
    pt = _throat(s, x_b, hint)
    choked = pt.x > x_b
    return pt.G, choked, p0 * math.exp(pt.x) if choked else pb


def _throat(s: _Stream, x_b: float, hint: FrozenNozzleHint) -> _Point:
    """The throat on [x_b, 0): the root of phi, or x_b when phi(x_b) <= 0 (not choked)."""
    # a first guess from the perfect-gas critical ratio with the vapour's exponent
    k = 1.3
    slope = hint.slope if hint.slope is not None else -(k + 1.0) / k
    x0 = hint.x if hint.x is not None else math.log((2.0 / (k + 1.0)) ** (k / (k - 1.0)))
    x0 = min(max(x0, x_b), -1e-6)
    pt = _point(s, x0, hint)
    hi = lo = None          # hi: phi < 0 (nearer p0), lo: phi > 0 (lower pressure)
    prev = None
    for _ in range(MAX_STEPS):
        if abs(pt.phi) <= PHI_TOL:
            return _done(pt, hint, slope)
        if pt.phi < 0.0:
            if pt.x <= x_b:
                return _done(pt, hint, slope)          # not choked
            hi = pt if hi is None or pt.x < hi.x else hi
        else:
            lo = pt if lo is None or pt.x > lo.x else lo
        if hi is not None and lo is not None:
            break
        if prev is not None and prev.phi != pt.phi:
            sl = (pt.phi - prev.phi) / (pt.x - prev.x)
            if sl < 0.0:
                slope = sl
        x_new = pt.x - pt.phi / slope
        top = hi.x if hi is not None else 0.0
        if not (x_new < top):
            x_new = 0.5 * (pt.x + top)
        if not (x_new > x_b):
            x_new = x_b if lo is None else 0.5 * (pt.x + x_b)
        prev, pt = pt, _point(s, x_new, hint)
    else:
        raise StateError(f"no frozen throat found expanding from {s.p0 / 1e5:.6g} bar a "
                         "(the search for a bracket did not converge)")
    seen = {lo.x: lo, hi.x: hi}

    def minus_phi(x):           # rises with x, <= 0 at lo, >= 0 at hi
        q = _point(s, x, hint)
        seen[x] = q
        return -q.phi

    sl = (hi.phi - lo.phi) / (hi.x - lo.x)
    if sl < 0.0:
        slope = sl
    x_star = root_on_bracket(minus_phi, lo.x, hi.x, -lo.phi, -hi.phi, PHI_TOL)
    return _done(seen[x_star], hint, slope)


def _done(pt: _Point, hint: FrozenNozzleHint, slope: float) -> _Point:
    hint.x = pt.x
    hint.slope = slope
    hint.T = pt.T
    return pt


__all__ = ["FrozenNozzleHint", "PHI_TOL", "frozen_mass_flux"]
