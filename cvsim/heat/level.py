"""Liquid in a vessel: volume below a height, the height that holds a volume, and the
area of a vessel surface below a height.

For every shape of :mod:`cvsim.heat.geometry` (vertical and horizontal cylinders with
flat, 2:1 ellipsoidal, torispherical or hemispherical heads; spheres), a
:class:`Tank` gives, for a horizontal plane at height ``h`` above the lowest point of
the surface:

* ``volume_below(h)`` [m3] (inside surface only), and ``free_surface(h)`` = dV/dh
  [m2], the area of the liquid's surface;
* ``level(V)`` [m], the inverse, converged on the volume residual
  ``|V(h) - V| <= LEVEL_RTOL * V_total`` (bracketed Newton steps, warm-started);
* ``area_below(h)`` [m2] of the inside surface or of its parallel surface at depth
  ``offset`` into the wall (the outside of a wall of that thickness).

Equations (``R = D/2``, ``d = R - h`` the plane's distance below the axis of a
horizontal vessel; ``D_s = D + 2 offset``):

* spherical cap of radius R_k and height z: V = pi z^2 (3 R_k - z)/3, area (zone)
  2 pi R_k z (Archimedes; CRC Standard Mathematical Tables and Formulae, 31st ed.,
  sec. 4.8);
* circular segment: A = R^2 acos(d/R) - d sqrt(R^2 - d^2), arc 2 R acos(d/R)
  (CRC, ch. 4, plane figures; section from memory); a horizontal shell holds L times
  the segment and is wetted on L times the arc;
* 2:1 ellipsoidal head (semi-axes a = R, b = D/4) on a vertical axis: V = pi a^2 z^2
  (3 b - z)/(3 b^2) from the pole; its area from the tangent line to the parameter
  u = sin(s) of the point (a cos s, b sin s) and its parallel surface at depth t, with
  k = a^2 - b^2 and w = sqrt(b^2 + k u^2):
  A(u) = 2 pi [a (u w/2 + b^2 asinh(sqrt(k) u/b)/(2 sqrt(k))) + t a^2
  atan(sqrt(k) u/b)/sqrt(k) + t b u + t^2 a u/w] (integral of 2 pi rho ds along the
  profile, in closed form; at u = 1 it gives the head's whole area A + M t + 2 pi t^2
  of :func:`cvsim.heat.geometry.head_surface`); on a horizontal axis the two heads
  make a spheroid of axial semi-axis b, so V = (b/R) pi h^2 (3 R - h)/3 for both;
* torispherical head: a spherical crown (zones as above) and a toroidal knuckle,
  each an arc of a circle of radius R_k about (rho_c, x_c) in the profile plane;
  rotated about the axis, from the tangent line to the angle s:
  V = pi R_k [rho_c^2 sin s + rho_c R_k (s + sin s cos s) + R_k^2 (sin s -
  sin^3 s / 3)], A = 2 pi R_k (rho_c s + R_k sin s) (Pappus-Guldinus; integrals of
  pi rho^2 dx and 2 pi rho ds);
* heads on a horizontal axis with no closed form (the torispherical head, the
  ellipsoidal head's area, the ellipsoid's parallel surface): the head as rings
  along its profile, each cut by the plane: a ring of radius rho lies below the plane
  over the angle 2 acos(d/rho), and its disc holds the segment of area
  rho^2 acos(d/rho) - d sqrt(rho^2 - d^2):

      V = integral of seg(rho, d) dx,   A = integral of 2 rho acos(d/rho) ds

  by Gauss-Legendre quadrature (:data:`GAUSS_POINTS` points) on each smooth piece of
  the profile, split where the plane meets the ring (rho = |d|) and with the
  substitution s = s* - (s* - s0) v^2 there, which makes the square-root behaviour of
  the integrand at that point smooth in v: the quadrature then converges fast
  (relative error about 1e-11 against 120 points, and against the closed forms where
  they exist).

The ``fluids`` library computes the same quantities for partially filled tanks (after
D. Jones, *Calculating Tank Volume* and *Calculating Tank Wetted Area*, Chemical
Processing); the tests check every head and orientation against it.
"""
from __future__ import annotations

import math
from functools import lru_cache

import numpy as np

from ..numerics import root_on_bracket
from .geometry import CROWN_RATIO, HEADS, KNUCKLE_RATIO, head

#: Gauss-Legendre points on each piece of a head's profile
GAUSS_POINTS = 20
#: the height that holds a volume is converged to |V(h) - V| <= LEVEL_RTOL * V_total
LEVEL_RTOL = 1e-12
MAX_LEVEL_ITERATIONS = 60


def _gauss_legendre_01(n: int):
    u, w = np.polynomial.legendre.leggauss(n)
    return tuple(zip((0.5 * (u + 1.0)).tolist(), (0.5 * w).tolist()))


#: Gauss-Legendre (node, weight) on [0, 1]; and for the substitution s = s* - span v^2:
#: (v^2, 2 v w)
_NODES = _gauss_legendre_01(GAUSS_POINTS)
_KINK = tuple((v * v, 2.0 * v * w) for v, w in _NODES)


class _Arc:
    """A piece of a head's profile that is an arc of a circle: rho = rho_c + R_k cos s,
    x = x_c + R_k sin s for s in [s0, s1] (x: distance from the tangent line towards
    the pole; s: angle of the outward normal above the plane of the tangent line)."""

    def __init__(self, rho_c: float, x_c: float, R_k: float, s0: float, s1: float):
        self.rho_c, self.x_c, self.R_k, self.s0, self.s1 = rho_c, x_c, R_k, s0, s1
        self.rho0, self.rho1 = self.rho(s0), max(self.rho(s1), 0.0)
        self.x1 = self.x(s1)

    def rho(self, s):
        return self.rho_c + self.R_k * math.cos(s)

    def x(self, s):
        return self.x_c + self.R_k * math.sin(s)

    def dx(self, s):
        return self.R_k * math.cos(s)

    def speed(self, s):
        return self.R_k

    def ring(self, s: float) -> tuple[float, float, float]:
        """(rho, ds/d(param), |dx/d(param)|) at s."""
        c = math.cos(s)
        return self.rho_c + self.R_k * c, self.R_k, self.R_k * c

    def s_at_rho(self, rho: float) -> float:
        return math.acos(min(max((rho - self.rho_c) / self.R_k, -1.0), 1.0))

    def s_at_x(self, x: float) -> float:
        return math.asin(min(max((x - self.x_c) / self.R_k, -1.0), 1.0))

    def from_tangent(self, s: float, what: str) -> float:
        """Area (2 pi rho ds) or volume (pi rho^2 dx) of the piece from s0 to s."""
        c, R = self.rho_c, self.R_k
        if what == "area":
            def prim(t):
                return c * t + R * math.sin(t)
            return 2.0 * math.pi * R * (prim(s) - prim(self.s0))

        def prim(t):
            st = math.sin(t)
            return c * c * st + c * R * (t + st * math.cos(t)) + R * R * (st - st**3 / 3.0)
        return math.pi * R * (prim(s) - prim(self.s0))

    def to_pole(self, z: float, what: str) -> float:
        """An arc that ends on the axis is a spherical cap: within z [m] of the pole,
        zone area 2 pi R_k z or volume pi z^2 (3 R_k - z)/3."""
        if what == "area":
            return 2.0 * math.pi * self.R_k * z
        return math.pi * z * z * (3.0 * self.R_k - z) / 3.0


class _Ellipse:
    """The 2:1 ellipsoidal head's profile (a cos s, b sin s), s in [0, pi/2], or its
    parallel curve at distance ``t`` outside it."""

    def __init__(self, a: float, b: float, t: float):
        self.a, self.b, self.t = a, b, t
        self.k = a * a - b * b
        self.s0, self.s1 = 0.0, 0.5 * math.pi
        self.rho0, self.rho1 = a + t, 0.0
        self.x1 = b + t

    def _w(self, s):
        return math.sqrt(self.b**2 + self.k * math.sin(s) ** 2)

    def rho(self, s):
        return math.cos(s) * (self.a + self.t * self.b / self._w(s))

    def x(self, s):
        return math.sin(s) * (self.b + self.t * self.a / self._w(s))

    def dx(self, s):  # the inside profile's (volumes are inside only)
        return self.b * math.cos(s)

    def speed(self, s):
        w = self._w(s)
        return w + self.t * self.a * self.b / (w * w)

    def ring(self, s: float) -> tuple[float, float, float]:
        """(rho, ds/d(param), |dx/d(param)|) at s (dx of the inside profile)."""
        c = math.cos(s)
        w = math.sqrt(self.b * self.b + self.k * (1.0 - c * c))
        return (c * (self.a + self.t * self.b / w), w + self.t * self.a * self.b / (w * w),
                self.b * c)

    def _newton(self, fn, target: float, s: float, sign: float) -> float:
        """Root of fn(s) = target on [0, pi/2] (fn monotone, increasing for sign > 0) by
        Newton steps with a numerical slope from a close first guess, falling back on
        the bracketed search."""
        tol = 1e-15 * self.a
        for _ in range(8):
            f = fn(s) - target
            if abs(f) <= tol:
                return s
            step = 1e-7
            slope = (fn(min(s + step, self.s1)) - fn(max(s - step, self.s0))) / (
                min(s + step, self.s1) - max(s - step, self.s0))
            if slope == 0.0:
                break
            s_new = s - f / slope
            if not self.s0 <= s_new <= self.s1:
                break
            s = s_new
        return _monotone_root(lambda v: fn(v) - target, self.s0, self.s1, sign, tol)

    def s_at_rho(self, rho: float) -> float:
        guess = math.acos(min(max(rho / self.a, -1.0), 1.0))  # the inside profile's
        if self.t == 0.0:
            return guess
        return self._newton(self.rho, rho, guess, -1.0)

    def s_at_x(self, x: float) -> float:
        guess = math.asin(min(max(x / self.b, -1.0), 1.0))
        if self.t == 0.0:
            return guess
        return self._newton(self.x, x, guess, 1.0)

    def from_tangent(self, s: float, what: str) -> float:
        """Area or volume (inside) of the head from the tangent line to s, in closed form
        (module docstring)."""
        a, b, t, k = self.a, self.b, self.t, self.k
        if what == "volume":
            x = b * math.sin(s)
            return math.pi * a * a * (x - x**3 / (3.0 * b * b))
        u = math.sin(s)
        w = math.sqrt(b * b + k * u * u)
        rk = math.sqrt(k)
        return 2.0 * math.pi * (a * (u * w / 2.0 + b * b * math.asinh(rk * u / b) / (2.0 * rk))
                                + t * a * a * math.atan(rk * u / b) / rk + t * b * u
                                + t * t * a * u / w)

    def to_pole(self, z: float, what: str) -> float:
        """Area or volume (inside) within z [m] of the pole: the volume in closed form,
        pi a^2 z^2 (3 b - z)/(3 b^2); the area by quadrature of 2 pi rho ds, which keeps
        its relative precision near the pole."""
        if what == "volume":
            return math.pi * self.a**2 * z * z * (3.0 * self.b - z) / (3.0 * self.b**2)
        s0 = self.s_at_x(self.x1 - z)
        span = self.s1 - s0
        return 2.0 * math.pi * span * sum(w * self.rho(s0 + span * v) * self.speed(s0 + span * v)
                                          for v, w in _NODES)


def _monotone_root(fn, lo: float, hi: float, sign: float, tol: float) -> float:
    """Root of a monotone function on [lo, hi] (``sign`` +1 increasing, -1 decreasing),
    stopped on |fn| <= tol (:func:`cvsim.numerics.root_on_bracket`)."""
    f_lo, f_hi = sign * fn(lo), sign * fn(hi)
    if f_lo >= 0.0:
        return lo
    if f_hi <= 0.0:
        return hi
    return root_on_bracket(lambda x: sign * fn(x), lo, hi, f_lo, f_hi, tol)


def _head_pieces(D: float, kind: str, t: float) -> list:
    """The smooth pieces of a curved head's profile (its parallel curve at depth ``t``
    into the wall), from the tangent line to the pole."""
    a = D / 2.0
    if kind == "hemispherical":
        return [_Arc(0.0, 0.0, a + t, 0.0, 0.5 * math.pi)]
    if kind == "2:1-ellipsoidal":
        return [_Ellipse(a, D / 4.0, t)]
    Rc, r = CROWN_RATIO * D, KNUCKLE_RATIO * D
    c = a - r
    h1 = math.sqrt((Rc - r) ** 2 - c * c)
    theta = math.asin(h1 / (Rc - r))
    return [_Arc(c, 0.0, r + t, 0.0, theta), _Arc(0.0, -h1, Rc + t, theta, 0.5 * math.pi)]


def _acos_ratio(d: float, rho: float) -> float:
    """acos(d/rho) for rho >= |d|, as 2 asin(sqrt((rho - d)/(2 rho))) (keeps its
    precision where d/rho is near 1)."""
    return 2.0 * math.asin(math.sqrt(min(max((rho - d) / (2.0 * rho), 0.0), 1.0)))


#: below this angle theta - sin(theta) is summed as its series (no cancellation)
SERIES_BELOW = 0.5


def _theta_minus_sin(theta: float) -> float:
    """theta - sin(theta) [rad], by its series below :data:`SERIES_BELOW`."""
    if theta >= SERIES_BELOW:
        return theta - math.sin(theta)
    t2 = theta * theta
    return theta * t2 / 6.0 * (1.0 - t2 / 20.0 * (1.0 - t2 / 42.0 * (1.0 - t2 / 72.0 * (
        1.0 - t2 / 110.0 * (1.0 - t2 / 156.0)))))


def _segment(R: float, d: float) -> float:
    """Area [m2] of the part of a disc of radius R below a chord at distance d below
    its centre (negative: above): R^2 (theta - sin theta)/2, theta = 2 acos(d/R)."""
    if d >= R:
        return 0.0
    if d <= -R:
        return math.pi * R * R
    return 0.5 * R * R * _theta_minus_sin(2.0 * _acos_ratio(d, R))


def _sphere_cut(R: float, d: float, what: str) -> float:
    """A sphere of radius R cut by a plane d below its centre: the area (zone) or the
    volume (cap) below the plane, or the area of the cut (``surface``)."""
    h = min(max(R - d, 0.0), 2.0 * R)
    if what == "area":
        return 2.0 * math.pi * R * h
    if what == "volume":
        return math.pi * h * h * (3.0 * R - h) / 3.0
    return math.pi * max(R * R - d * d, 0.0)


class Tank:
    """Level geometry of one vessel surface (see the module docstring).

    Parameters
    ----------
    kind : ``cylinder`` or ``sphere``
    D : [m] inside diameter
    L : [m] straight shell length, tangent line to tangent line (cylinders)
    heads : one of :data:`cvsim.heat.geometry.HEADS`
    orientation : ``vertical`` or ``horizontal``
    offset : [m] depth into the wall of the surface considered (0: the inside
        surface); volumes and levels are those of the inside surface
    """

    def __init__(self, kind: str, D: float, L: float = 0.0, heads: str = "flat",
                 orientation: str = "vertical", offset: float = 0.0):
        if kind == "sphere":  # two hemispheres and no shell
            L, heads, orientation = 0.0, "hemispherical", "vertical"
        if heads not in HEADS:
            raise ValueError(f"unknown head '{heads}'")
        self.D, self.L, self.heads = D, L, heads
        self.orientation, self.offset = orientation, offset
        self.R = D / 2.0
        self.Rs = self.R + offset                  # radius of the shell surface considered
        self.flat = heads == "flat"
        self.pieces = [] if self.flat else _head_pieces(D, heads, offset)
        self.inside_depth = head(D, heads).depth
        self.depth = self.inside_depth + offset    # head depth beyond the tangent line
        self.height = L + 2.0 * self.depth if orientation == "vertical" else 2.0 * self.Rs
        self.head_area = (math.pi * self.Rs**2 if self.flat else
                          sum(p.from_tangent(p.s1, "area") for p in self.pieces))
        self.head_volume = (0.0 if self.flat else
                            sum(p.from_tangent(p.s1, "volume") for p in self.pieces))
        self.area = 2.0 * math.pi * self.Rs * L + 2.0 * self.head_area
        self.volume = math.pi * self.R**2 * L + 2.0 * self.head_volume
        self._last = None  # (h, V(h), dV/dh) of the last level found: the warm start

    # --------------------------------------------------------- vertical axis
    def _head_from_pole(self, z: float, what: str) -> float:
        """Area (``area``) or volume (``volume``, inside only) of a head on a vertical
        axis within the height z [m] of its pole."""
        if z <= 0.0 or self.flat:
            return 0.0 if z <= 0.0 or what == "volume" else self.head_area
        if z >= self.depth:
            return self.head_area if what == "area" else self.head_volume
        x = self.depth - z  # distance of the plane from the tangent line
        out = 0.0
        for p in reversed(self.pieces):  # from the pole
            x0 = p.x(p.s0)
            if p is self.pieces[-1] and x >= x0:
                return out + p.to_pole(z, what)
            whole = p.from_tangent(p.s1, what)
            if x <= x0:
                out += whole
                continue
            return out + whole - p.from_tangent(p.s_at_x(x), what)
        return out  # pragma: no cover - the first piece starts at the tangent line

    def _head_rho_at_x(self, x: float) -> float:
        p = next((p for p in self.pieces if x <= p.x1), self.pieces[-1])
        return p.rho(p.s_at_x(x))

    # --------------------------------------------------------- horizontal axis
    def _ring_parts(self, d: float):
        """The profile of one head on a horizontal axis, for a plane d below the axis:
        per piece (piece, s0 and s* bounding the rings the plane cuts or ``None``, s*
        and s1 bounding the rings wholly below it or ``None``)."""
        ad = abs(d)
        out = []
        for p in self.pieces:
            if ad >= p.rho0:      # no ring of the piece reaches the plane
                cut = p.s0
            elif ad <= p.rho1:    # the plane cuts every ring of the piece
                cut = p.s1
            else:
                cut = p.s_at_rho(ad)
            out.append((p, (p.s0, cut) if cut > p.s0 else None,
                        (cut, p.s1) if d < 0.0 and cut < p.s1 else None))
        return out

    def _horizontal_head_area(self, d: float) -> float:
        """Area [m2] of one head on a horizontal axis below a plane d below the axis:
        the integral of 2 rho acos(d/rho) ds over the rings the plane cuts and of
        2 pi rho ds over those wholly below it."""
        if self.heads == "hemispherical":
            return 0.5 * _sphere_cut(self.Rs, d, "area")
        total = 0.0
        for p, cut, whole in self._ring_parts(d):
            if cut is not None:
                s0, sk = cut
                span = sk - s0
                acc = 0.0
                for v2, w in _KINK:
                    rho, speed, _ = p.ring(sk - span * v2)
                    acc += w * rho * _acos_ratio(d, rho) * speed
                total += 2.0 * span * acc
            if whole is not None:
                s0, s1 = whole
                span = s1 - s0
                acc = 0.0
                for v, w in _NODES:
                    rho, speed, _ = p.ring(s0 + span * v)
                    acc += w * rho * speed
                total += 2.0 * math.pi * span * acc
        return total

    def _horizontal_head_volume(self, d: float) -> tuple[float, float]:
        """Volume [m3] of one head on a horizontal axis below a plane d below the axis
        (the integral of the rings' segments over the axis) and the area [m2] of the
        liquid's surface in it (of their chords 2 sqrt(rho^2 - d^2)); inside surface."""
        if self.heads in ("hemispherical", "2:1-ellipsoidal"):
            scale = 0.5 * self.inside_depth / self.R   # half a sphere, or half a spheroid
            return (scale * _sphere_cut(self.R, d, "volume"),
                    scale * _sphere_cut(self.R, d, "surface"))
        volume = surface = 0.0
        for p, cut, whole in self._ring_parts(d):
            if cut is not None:
                s0, sk = cut
                span = sk - s0
                acc_v = acc_s = 0.0
                for v2, w in _KINK:
                    rho, _, dx = p.ring(sk - span * v2)
                    # the ring's disc below the chord: half-angle a = acos(d/rho)/2 ...
                    r = min(max((rho - d) / (2.0 * rho), 0.0), 1.0)   # sin^2(a)
                    theta = 4.0 * math.asin(math.sqrt(r))             # whole angle
                    if theta < SERIES_BELOW:
                        tms = _theta_minus_sin(theta)
                    else:
                        tms = theta - math.sin(theta)
                    acc_v += w * 0.5 * rho * rho * tms * dx            # segment area
                    acc_s += w * 2.0 * rho * math.sqrt(r * (1.0 - r)) * dx  # half chord
                volume += span * acc_v
                surface += 2.0 * span * acc_s
            if whole is not None:
                s0, s1 = whole
                span = s1 - s0
                acc = 0.0
                for v, w in _NODES:
                    rho, _, dx = p.ring(s0 + span * v)
                    acc += w * rho * rho * dx
                volume += math.pi * span * acc
        return volume, surface

    # --------------------------------------------------------- public
    def volume_and_surface(self, h: float) -> tuple[float, float]:
        """Volume [m3] inside the (inside) surface below the height h [m], and the area
        [m2] of the liquid's surface there (dV/dh)."""
        h = min(max(h, 0.0), self.height)
        inside = 0.0 < h < self.height
        if self.orientation == "vertical":
            dep, L = self.depth, self.L
            v = self._head_from_pole(h, "volume")
            v += math.pi * self.R**2 * min(max(h - dep, 0.0), L)
            if h > dep + L:
                v += self.head_volume - self._head_from_pole(self.height - h, "volume")
            if not inside:
                return v, 0.0
            if self.flat or dep <= h <= dep + L:
                return v, math.pi * self.R**2
            return v, math.pi * self._head_rho_at_x(dep - h if h < dep else h - dep - L) ** 2
        d = self.R - h
        v = self.L * _segment(self.R, d)
        s = self.L * 2.0 * math.sqrt(max(self.R**2 - d * d, 0.0)) if inside else 0.0
        if not self.flat:
            hv, hs = self._horizontal_head_volume(d)
            v += 2.0 * hv
            s += 2.0 * hs if inside else 0.0
        return v, s

    def volume_below(self, h: float) -> float:
        """Volume [m3] inside the (inside) surface below the height h [m]."""
        return self.volume_and_surface(h)[0]

    def free_surface(self, h: float) -> float:
        """Area [m2] of the liquid's surface at the height h [m]: dV/dh."""
        return self.volume_and_surface(h)[1]

    def area_below(self, h: float) -> float:
        """Area [m2] of this surface below the height h [m] above its lowest point."""
        if h <= 0.0:
            return 0.0
        h = min(h, self.height)
        Rs = self.Rs
        if self.orientation == "vertical":
            dep = self.depth
            shell = 2.0 * math.pi * Rs * min(max(h - dep, 0.0), self.L)
            if self.flat:  # the bottom disc once wetted at all, the top one when full
                return self.head_area * (1.0 + (h >= self.height)) + shell
            top = 0.0
            if h > dep + self.L:
                top = self.head_area - self._head_from_pole(self.height - h, "area")
            return self._head_from_pole(h, "area") + shell + top
        d = Rs - h
        shell = self.L * 2.0 * Rs * _acos_ratio(d, Rs)
        if self.flat:
            return shell + 2.0 * _segment(Rs, d)
        return shell + 2.0 * self._horizontal_head_area(d)

    def level(self, V: float, guess: float | None = None) -> float:
        """Height [m] of the liquid holding the volume V [m3] (inside surface).

        Newton steps on V(h) - V with the slope dV/dh (the area of the liquid's
        surface), kept inside a shrinking bracket (bisection when a step leaves it),
        stopped on the residual |V(h) - V| <= LEVEL_RTOL V_total. Warm start: from
        ``guess`` [m] if given, else by a Newton step from the last level this shape
        found (its volume and slope are kept, so a small change of V often needs one
        evaluation), else from the height at the same share of the volume.
        """
        H, Vt = self.height, self.volume
        if V <= 0.0:
            return 0.0
        if V >= Vt:
            return H
        tol = LEVEL_RTOL * Vt
        lo, hi = 0.0, H
        h = H * V / Vt
        if guess is not None and 0.0 < guess < H:
            h = guess
        elif self._last is not None:
            h_l, v_l, s_l = self._last
            step = h_l + (V - v_l) / s_l if s_l > 0.0 else h_l
            if 0.0 < step < H:
                h = step
        for _ in range(MAX_LEVEL_ITERATIONS):
            v, slope = self.volume_and_surface(h)
            f = v - V
            if abs(f) <= tol:
                self._last = (h, v, slope)
                return h
            if f > 0.0:
                hi = h
            else:
                lo = h
            step = h - f / slope if slope > 0.0 else math.nan
            h = step if lo < step < hi else 0.5 * (lo + hi)
            if hi - lo <= 4e-16 * H:
                return h
        return h


@lru_cache(maxsize=256)
def tank(kind: str, D: float, L: float = 0.0, heads: str = "flat",
         orientation: str = "vertical", offset: float = 0.0) -> Tank:
    """The :class:`Tank` of a shape (cached: shapes are few, calls many)."""
    return Tank(kind, D, L, heads, orientation, offset)


def forget_levels() -> None:
    """Start every shape's level solve afresh (:func:`tank` is cached, and each
    :class:`Tank` warm-starts from the last level it found): called when a model is
    built, so that a run gives the same numbers whatever ran before it in the process."""
    tank.cache_clear()


# ------------------------------------------------------------ pure functions


def volume_below(h: float, kind: str, D: float, L: float = 0.0, heads: str = "flat",
                 orientation: str = "vertical") -> float:
    """Volume [m3] of liquid standing at height h [m] above the inside bottom.

    Parameters
    ----------
    h : [m] liquid height above the lowest inside point
    kind, D, L, heads, orientation : the shape as in :func:`cvsim.heat.geometry.cylinder`
        and :func:`~cvsim.heat.geometry.sphere`

    Validity: rigid vessels of the shapes listed; equations and sources in the module
    docstring.

    >>> round(volume_below(1.0, "sphere", 2.0), 6)   # half a sphere of radius 1: 2 pi / 3
    2.094395
    """
    return tank(kind, D, L, heads, orientation).volume_below(h)


def height_from_volume(V: float, kind: str, D: float, L: float = 0.0, heads: str = "flat",
                       orientation: str = "vertical", guess: float | None = None) -> float:
    """Liquid height [m] above the inside bottom that holds the volume V [m3].

    The inverse of :func:`volume_below`, converged on the volume residual
    |V(h) - V| <= LEVEL_RTOL V_total; ``guess`` [m] warm-starts it.

    >>> D = 2.0; V = volume_below(0.3, "cylinder", D, 5.0, "torispherical", "horizontal")
    >>> round(height_from_volume(V, "cylinder", D, 5.0, "torispherical", "horizontal"), 12)
    0.3
    """
    return tank(kind, D, L, heads, orientation).level(V, guess)


def area_below(h: float, kind: str, D: float, L: float = 0.0, heads: str = "flat",
               orientation: str = "vertical", offset: float = 0.0) -> float:
    """Area [m2] of a vessel surface below a horizontal plane at height h [m] above
    the surface's lowest point: the inside surface (``offset = 0``) or its parallel
    surface at depth ``offset`` [m] into the wall (the outside of the wall).

    >>> round(area_below(0.5, "sphere", 2.0) / math.pi, 12)   # zone: pi D h
    1.0
    """
    return tank(kind, D, L, heads, orientation, offset).area_below(h)


def outside_level(h: float, kind: str, D: float, L: float = 0.0, heads: str = "flat",
                  orientation: str = "vertical", offset: float = 0.0) -> float:
    """Height [m] on the outside surface (a wall ``offset`` [m] thick) that stands for
    the inside level h [m]: each part of the vessel (bottom head, shell, top head;
    the whole height of a horizontal vessel or a sphere) is mapped in proportion to
    its height inside and outside.

    Exact for the shell and for spherical surfaces (the plane then bounds the wall
    behind the wetted inside surface, measured along the wall's normal); for the
    other heads the bounding plane differs from that by less than the wall
    thickness. An empty vessel maps to 0, a full one to the outside's top.
    """
    t = tank(kind, D, L, heads, orientation)
    if h <= 0.0:
        return 0.0
    if h >= t.height:
        return t.height + 2.0 * offset
    if t.orientation == "horizontal":
        return h * (t.height + 2.0 * offset) / t.height
    dep = t.depth
    if h < dep:
        return h * (dep + offset) / dep
    if h <= dep + t.L:
        return h + offset
    return dep + offset + t.L + (h - dep - t.L) * (dep + offset) / dep


__all__ = ["GAUSS_POINTS", "LEVEL_RTOL", "Tank", "forget_levels", "area_below", "height_from_volume",
           "outside_level", "tank", "volume_below"]
