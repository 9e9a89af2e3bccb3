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


__all__ = [
    "HEADS", "Head", "ORIENTATIONS", "cylinder", "ellipsoidal_head", "flat_head", "head",
    "hemispherical_head", "sphere", "torispherical_head",
]
