"""Inside geometry of rigid vessels: volume [m3], inner area [m2], inside height [m].

A cylinder is its straight shell (inner diameter ``D``, length ``L`` tangent to
tangent) closed by two equal heads; a sphere is given by its inner diameter.
All functions take and return SI floats.

Heads (``D`` the inside diameter of the shell):

==================  =================================  =====================
head                shape                              depth
==================  =================================  =====================
flat                a flat plate                       0
2:1-ellipsoidal     half an oblate spheroid, axes      D/4
                    D/2 and D/4
hemispherical       half a sphere of diameter D        D/2
torispherical       spherical crown radius D and       0.1693 D
                    toroidal knuckle radius 0.06 D
                    (the usual flanged-and-dished
                    proportions)
==================  =================================  =====================

References
----------
* Spheroid surface area: S = 2 pi a^2 [1 + (1 - e^2)/e artanh(e)] for an
  oblate spheroid of semi-axes a, a, b with e^2 = 1 - b^2/a^2; CRC Standard
  Mathematical Tables and Formulae, 31st ed., section 4.8 (surfaces of
  revolution).
* Torispherical proportions (crown radius equal to the diameter, knuckle
  radius 6 % of it): ASME Boiler and Pressure Vessel Code, Section VIII
  Division 1, UG-32. Here both are taken on the inside diameter.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

HEADS = ("flat", "2:1-ellipsoidal", "hemispherical", "torispherical")
ORIENTATIONS = ("vertical", "horizontal")

CROWN_RATIO = 1.0  # torispherical crown radius / diameter [-]
KNUCKLE_RATIO = 0.06  # torispherical knuckle radius / diameter [-]


@dataclass(frozen=True)
class Head:
    """One vessel head: volume [m3], inside area [m2] and depth [m] beyond the tangent line."""

    volume: float
    area: float
    depth: float


def flat_head(D: float) -> Head:
    """A flat end plate: no volume, area pi D^2/4, no depth."""
    return Head(0.0, math.pi * D**2 / 4.0, 0.0)


def ellipsoidal_head(D: float) -> Head:
    """A 2:1 ellipsoidal head: half an oblate spheroid with semi-axes D/2 and D/4.

    V = pi D^3 / 24;  A = pi a^2 [1 + (1 - e^2)/e artanh(e)],  a = D/2,
    e = sqrt(1 - (b/a)^2) = sqrt(3)/2;  A = 1.0840 D^2.

    >>> round(ellipsoidal_head(1.0).area, 4)
    1.084
    """
    a, b = D / 2.0, D / 4.0
    e = math.sqrt(1.0 - (b / a) ** 2)
    area = math.pi * a**2 * (1.0 + (1.0 - e**2) / e * math.atanh(e))
    return Head(math.pi * D**3 / 24.0, area, b)


def hemispherical_head(D: float) -> Head:
    """A hemispherical head: V = pi D^3/12, A = pi D^2/2, depth D/2."""
    return Head(math.pi * D**3 / 12.0, math.pi * D**2 / 2.0, D / 2.0)


def torispherical_head(D: float, crown_radius: float | None = None,
                       knuckle_radius: float | None = None) -> Head:
    """A torispherical head: spherical crown joined to the shell by a toroidal knuckle.

    With a = D/2, crown radius R, knuckle radius r, c = a - r (radius of the
    knuckle's centre circle) and h1 = sqrt((R - r)^2 - c^2) (distance of the
    crown's centre behind the tangent line), the knuckle runs from the tangent
    line (z = 0) to z_j = r h1 / (R - r) and the crown from z_j to the depth
    H = R - h1. Integrating the profile rho(z) = c + sqrt(r^2 - z^2):

    V_knuckle = pi [(c^2 + r^2) z_j - z_j^3/3 + c (z_j sqrt(r^2 - z_j^2) + r^2 asin(z_j/r))]
    V_crown   = pi h_c^2 (3R - h_c)/3,  h_c = H - z_j   (spherical cap)
    A_knuckle = 2 pi r (c theta_j + r sin theta_j),  sin theta_j = z_j / r
    A_crown   = 2 pi R h_c

    Defaults R = D and r = 0.06 D give V = 0.0810 D^3, A = 0.9306 D^2 and
    H = 0.1693 D (tabulated handbook values for such heads: 0.0809 D^3 and
    0.169 D).

    Parameters
    ----------
    D : float
        [m] inside diameter of the shell.
    crown_radius, knuckle_radius : float, optional
        [m] defaults ``CROWN_RATIO * D`` and ``KNUCKLE_RATIO * D``.

    >>> round(torispherical_head(1.0).volume, 4)
    0.081
    """
    R = CROWN_RATIO * D if crown_radius is None else crown_radius
    r = KNUCKLE_RATIO * D if knuckle_radius is None else knuckle_radius
    a = D / 2.0
    c = a - r
    if not (0.0 < r < a <= R):
        raise ValueError("torispherical head needs 0 < knuckle radius < D/2 <= crown radius")
    h1 = math.sqrt((R - r) ** 2 - c**2)
    zj = r * h1 / (R - r)
    depth = R - h1
    hc = depth - zj
    v_knuckle = math.pi * ((c**2 + r**2) * zj - zj**3 / 3.0
                           + c * (zj * math.sqrt(r**2 - zj**2) + r**2 * math.asin(zj / r)))
    v_crown = math.pi * hc**2 * (3.0 * R - hc) / 3.0
    theta = math.asin(zj / r)
    a_knuckle = 2.0 * math.pi * r * (c * theta + r * math.sin(theta))
    a_crown = 2.0 * math.pi * R * hc
    return Head(v_knuckle + v_crown, a_knuckle + a_crown, depth)


_HEAD_FUNCTIONS = {
    "flat": flat_head,
    "2:1-ellipsoidal": ellipsoidal_head,
    "hemispherical": hemispherical_head,
    "torispherical": torispherical_head,
}


def head(D: float, kind: str) -> Head:
    """The head of the named kind (one of :data:`HEADS`) for inside diameter ``D`` [m]."""
    return _HEAD_FUNCTIONS[kind](D)


def cylinder(D: float, L: float, heads: str = "flat",
             orientation: str = "vertical") -> tuple[float, float, float]:
    """Volume [m3], inner area [m2] and inside height [m] of a cylinder with two heads.

    V = pi D^2 L / 4 + 2 V_head;  A = pi D L + 2 A_head;
    height = L + 2 depth_head (vertical) or D (horizontal).

    Parameters
    ----------
    D : float
        [m] inside diameter.
    L : float
        [m] length of the straight shell, tangent line to tangent line.
    heads : str
        one of :data:`HEADS`.
    orientation : str
        ``vertical`` or ``horizontal``.
    """
    h = head(D, heads)
    volume = math.pi * D**2 * L / 4.0 + 2.0 * h.volume
    area = math.pi * D * L + 2.0 * h.area
    height = L + 2.0 * h.depth if orientation == "vertical" else D
    return volume, area, height


def sphere(D: float) -> tuple[float, float, float]:
    """Volume [m3], inner area [m2] and inside height [m] of a sphere of inside diameter D [m]."""
    return math.pi * D**3 / 6.0, math.pi * D**2, D


# ------------------------------------------------------- the wall as an offset surface
#
# A wall of uniform thickness is the set of surfaces parallel to the inside surface.
# For a smooth surface the area of the parallel surface at distance x outward is
# (Steiner's formula for parallel surfaces; do Carmo, *Differential Geometry of Curves
# and Surfaces*, sec. 3-5, exercise on parallel surfaces)
#
#     A(x) = A + M x + K x^2,   M = integral of (k1 + k2) dA,   K = integral of k1 k2 dA
#
# with k1, k2 the principal curvatures. A head joined tangentially to a cylindrical
# shell has K = 2 pi (Gauss-Bonnet: its rim is a geodesic), a cylindrical shell has
# K = 0, a sphere K = 4 pi. The formula fails only where parallel surfaces fold, at a
# distance of a radius of curvature towards its centre; a wall grows outwards, away
# from the centres of curvature of these convex surfaces, so it is exact for any
# thickness.


@dataclass(frozen=True)
class Surface:
    """Area of a wall at depth ``x`` [m] from its inside surface: A(x) = a0 + a1 x + a2 x^2.

    a0 [m2] inside area; a1 [m] integral of the mean-curvature sum; a2 [-] integral of
    the Gaussian curvature (see the notes above :class:`Surface`).
    """

    a0: float
    a1: float
    a2: float

    def __add__(self, other: "Surface") -> "Surface":
        return Surface(self.a0 + other.a0, self.a1 + other.a1, self.a2 + other.a2)

    def scaled(self, n: float) -> "Surface":
        return Surface(n * self.a0, n * self.a1, n * self.a2)

    def area(self, x: float) -> float:
        """A(x) [m2] at depth x [m]."""
        return self.a0 + self.a1 * x + self.a2 * x * x

    def volume(self, x0: float, x1: float) -> float:
        """Volume [m3] of the wall between depths x0 and x1 [m]: the integral of A dx."""
        def prim(x):
            return self.a0 * x + self.a1 * x * x / 2.0 + self.a2 * x**3 / 3.0
        return prim(x1) - prim(x0)

    def resistance_factor(self, x0: float, x1: float) -> float:
        """Integral of dx / A(x) [1/m] from x0 to x1 [m].

        The steady conduction resistance of a slice of conductivity k is this factor
        divided by k (for a cylinder it gives ln(r1/r0)/(2 pi L), for a sphere
        (1/r0 - 1/r1)/(4 pi); Incropera et al., *Fundamentals of Heat and Mass
        Transfer*, 7th ed., Table 3.3). Ten-point Gauss-Legendre quadrature: 1/A is
        smooth and positive over a slice, the error is far below round-off of the
        slices used.
        """
        half = 0.5 * (x1 - x0)
        mid = 0.5 * (x1 + x0)
        return half * sum(w / self.area(mid + half * u) for u, w in _GAUSS10)


def _gauss_legendre(n: int) -> tuple[tuple[float, float], ...]:
    import numpy as np
    u, w = np.polynomial.legendre.leggauss(n)
    return tuple(zip(u.tolist(), w.tolist()))


_GAUSS10 = _gauss_legendre(10)


def head_surface(D: float, kind: str) -> Surface:
    """Area of one head's wall at depth x [m] from its inside, A(x) = A + M x + K x^2.

    * flat: a plate covering the shell's end, A(x) = pi (D/2 + x)^2 (the area of the
      plate at depth x grows with the shell's thickness; conduction near the corner
      is taken 1-D by this area);
    * hemispherical: a half sphere, A(x) = 2 pi (D/2 + x)^2;
    * 2:1 ellipsoidal, semi-axes a = D/2, b = D/4:
      M = 2 pi b + 2 pi a^2 atan(sqrt(a^2 - b^2)/b) / sqrt(a^2 - b^2), K = 2 pi
      (integral of the principal curvatures of the spheroid, in closed form);
    * torispherical, crown radius R, knuckle radius r, knuckle angle theta_j:
      M = 2 pi (c theta_j + 2 r sin theta_j) + 4 pi h_c, K = 2 pi; the parallel surface
      at depth x is again torispherical with radii R + x, r + x.

    Parameters
    ----------
    D : float
        [m] inside diameter of the shell.
    kind : str
        one of :data:`HEADS`.

    >>> s = head_surface(2.0, "hemispherical")
    >>> round(s.area(0.1) / (2 * math.pi * 1.1**2), 12)
    1.0
    """
    if kind == "flat":
        return Surface(math.pi * D**2 / 4.0, math.pi * D, math.pi)
    if kind == "hemispherical":
        return Surface(math.pi * D**2 / 2.0, 2.0 * math.pi * D, 2.0 * math.pi)
    if kind == "2:1-ellipsoidal":
        a, b = D / 2.0, D / 4.0
        f = math.sqrt(a * a - b * b)
        M = 2.0 * math.pi * b + 2.0 * math.pi * a * a * math.atan(f / b) / f
        return Surface(ellipsoidal_head(D).area, M, 2.0 * math.pi)
    if kind == "torispherical":
        R, r, c, h1, theta = _torispherical_parts(D)
        hc = R - h1 - r * math.sin(theta)
        M = 2.0 * math.pi * (c * theta + 2.0 * r * math.sin(theta)) + 4.0 * math.pi * hc
        return Surface(torispherical_head(D).area, M, 2.0 * math.pi)
    raise ValueError(f"unknown head '{kind}'")


def _torispherical_parts(D: float, crown_radius: float | None = None,
                         knuckle_radius: float | None = None):
    """(R, r, c, h1, theta_j) of a torispherical head: crown and knuckle radii, radius
    of the knuckle's centre circle, distance of the crown's centre behind the tangent
    line, angle of the knuckle-crown joint above the tangent plane."""
    R = CROWN_RATIO * D if crown_radius is None else crown_radius
    r = KNUCKLE_RATIO * D if knuckle_radius is None else knuckle_radius
    c = D / 2.0 - r
    h1 = math.sqrt((R - r) ** 2 - c**2)
    return R, r, c, h1, math.asin(h1 / (R - r))


def wall_surface(kind: str, D: float, L: float = 0.0, heads: str = "flat") -> Surface:
    """Area of a whole vessel wall at depth x [m] from the inside, A(x) = a0 + a1 x + a2 x^2.

    Cylinder: the shell, pi L (D + 2 x), plus two heads (:func:`head_surface`);
    sphere: pi (D + 2 x)^2.

    Parameters
    ----------
    kind : str
        ``cylinder`` or ``sphere``.
    D : float
        [m] inside diameter.
    L : float
        [m] length of the straight shell (cylinders).
    heads : str
        head type (cylinders), one of :data:`HEADS`.

    >>> s = wall_surface("sphere", 1.0)
    >>> round(s.area(0.05) / (math.pi * 1.1**2), 12)
    1.0
    """
    if kind == "sphere":
        return Surface(math.pi * D**2, 4.0 * math.pi * D, 4.0 * math.pi)
    shell = Surface(math.pi * D * L, 2.0 * math.pi * L, 0.0)
    return shell + head_surface(D, heads).scaled(2.0)


# ------------------------------------------------ area below a level (wetted, exposed)


def outer_height(kind: str, D: float, L: float, heads: str, orientation: str,
                 thickness: float) -> float:
    """Height [m] of the outside surface of a wall of uniform ``thickness`` [m]."""
    if kind == "sphere" or orientation == "horizontal":
        return D + 2.0 * thickness
    return L + 2.0 * (head(D, heads).depth + thickness)


__all__ = [
    "HEADS", "Head", "ORIENTATIONS", "Surface", "cylinder", "ellipsoidal_head",
    "flat_head", "head", "head_surface", "hemispherical_head", "outer_height", "sphere",
    "torispherical_head", "wall_surface",
]
