"""Vessel geometry: head volumes and areas against handbook values and a numerical profile."""
import math

import numpy as np
import pytest

from cvsim.heat import geometry as geo
from cvsim.heat.level import area_below


def _profile_torispherical(D, R, r, n=20001):
    """Points (rho, z) along a torispherical head's profile, from the tangent line to the pole."""
    a = D / 2
    c = a - r
    h1 = math.sqrt((R - r) ** 2 - c**2)
    theta_j = math.asin(h1 / (R - r))
    t = np.linspace(0.0, theta_j, n)
    knuckle = np.column_stack([c + r * np.cos(t), r * np.sin(t)])
    phi = np.linspace(math.asin(c / (R - r)), 0.0, n)  # crown: angle from the axis
    crown = np.column_stack([R * np.sin(phi), -h1 + R * np.cos(phi)])
    return np.vstack([knuckle, crown[1:]])


def _revolve(points):
    """Volume and area of the surface of revolution of a polyline (frustums)."""
    rho, z = points[:, 0], points[:, 1]
    dz = np.diff(z)
    volume = np.sum(math.pi * dz * (rho[:-1] ** 2 + rho[:-1] * rho[1:] + rho[1:] ** 2) / 3)
    slant = np.hypot(np.diff(rho), dz)
    area = np.sum(math.pi * (rho[:-1] + rho[1:]) * slant)
    return volume, area


def test_torispherical_closed_form_matches_the_profile():
    for D, R, r in ((1.0, 1.0, 0.06), (2.0, 1.6, 0.2), (0.5, 0.5, 0.05)):
        head = geo.torispherical_head(D, R, r)
        volume, area = _revolve(_profile_torispherical(D, R, r))
        assert head.volume == pytest.approx(volume, rel=1e-6)
        assert head.area == pytest.approx(area, rel=1e-6)


def test_torispherical_handbook_values():
    head = geo.torispherical_head(1.0)
    # source: flanged-and-dished head (crown radius D, knuckle 6 % of D) tabulated as
    # V = 0.0809 D^3 and depth 0.169 D in tank-volume handbooks (from memory)
    assert head.volume == pytest.approx(0.0809, abs=2e-4)
    assert head.depth == pytest.approx(0.169, abs=1e-3)


def test_ellipsoidal_head():
    head = geo.ellipsoidal_head(2.0)
    assert head.volume == pytest.approx(math.pi * 8 / 24)
    # source: 2:1 ellipsoidal head inside area 1.084 D^2 (vessel handbooks, from memory)
    assert head.area / 4.0 == pytest.approx(1.084, abs=1e-3)
    assert head.depth == 0.5


def test_cylinder_with_hemispherical_heads_and_no_shell_is_a_sphere():
    assert geo.cylinder(1.3, 0.0, "hemispherical", "vertical") == pytest.approx(geo.sphere(1.3))


def test_cylinder_flat_heads_and_orientation():
    # source: closed forms of a right circular cylinder with flat ends, V = pi D^2 L / 4,
    # A = pi D L + 2 pi D^2 / 4 (e.g. Perry's Chemical Engineers' Handbook, 8th ed.,
    # mathematics section, mensuration formulas; from memory); 2:1 ellipsoidal heads are
    # D/4 deep (ASME VIII-1 UG-32(d): semi-ellipsoidal heads with a 2:1 axis ratio; from
    # memory)
    V, A, H = geo.cylinder(1.0, 2.0, "flat", "vertical")
    assert V == pytest.approx(math.pi / 4 * 2.0)
    assert A == pytest.approx(math.pi * 2.0 + 2 * math.pi / 4)
    assert H == 2.0
    assert geo.cylinder(1.0, 2.0, "2:1-ellipsoidal", "vertical")[2] == pytest.approx(2.5)
    assert geo.cylinder(1.0, 2.0, "2:1-ellipsoidal", "horizontal")[2] == 1.0


def test_docstring_examples():
    import doctest

    assert doctest.testmod(geo).failed == 0


# --------------------------------------------------------------- volumes and areas

HEAD_KINDS = ("flat", "2:1-ellipsoidal", "torispherical", "hemispherical")


def _fluids_head(kind, D):
    """Head arguments of the fluids library's tank functions for our standard heads."""
    return {"flat": dict(side=None), "2:1-ellipsoidal": dict(side="ellipsoidal", a=D / 4),
            "hemispherical": dict(side="spherical", a=D / 2),
            "torispherical": dict(side="torispherical", f=1.0, k=0.06)}[kind]


@pytest.mark.parametrize("kind", HEAD_KINDS)
def test_cylinder_volume_and_area_match_the_fluids_library(kind):
    import fluids.geometry as fg

    D, L = 1.3, 2.7
    h = _fluids_head(kind, D)
    kw = {}
    if h["side"] is not None:
        kw = dict(sideA=h["side"], sideB=h["side"])
        if "a" in h:
            kw.update(sideA_a=h["a"], sideB_a=h["a"])
        if "f" in h:
            kw.update(sideA_f=h["f"], sideA_k=h["k"], sideB_f=h["f"], sideB_k=h["k"])
    V, A, _ = geo.cylinder(D, L, kind)
    # source: fluids library (Caleb Bell), fluids.geometry.V_tank and SA_tank, used as a
    # general-purpose reference implementation of the handbook head formulas
    V_ref = fg.V_tank(D=D, L=L, horizontal=True, **kw)[0]
    assert V == pytest.approx(V_ref, rel=1e-9)
    A_ref = fg.SA_tank(D=D, L=L, **kw)[0]  # without heads: flat ends included
    assert A == pytest.approx(A_ref, rel=1e-6)


# ----------------------------------------------------------- wall: parallel surfaces

def test_sphere_and_hemispherical_heads_offset_exactly():
    # source: area of a sphere 4 pi r^2 (CRC Standard Mathematical Tables, sec. 4.8)
    for t in (0.0, 0.01, 0.2):
        s = geo.wall_surface("sphere", 2.0)
        assert s.area(t) == pytest.approx(4 * math.pi * (1.0 + t) ** 2, rel=1e-14)
        # metal volume of a spherical shell 4/3 pi (r1^3 - r0^3)
        assert s.volume(0.0, t) == pytest.approx(4 / 3 * math.pi * ((1 + t) ** 3 - 1), rel=1e-13,
                                                 abs=1e-15)
        h = geo.head_surface(2.0, "hemispherical")
        assert h.area(t) == pytest.approx(2 * math.pi * (1.0 + t) ** 2, rel=1e-14)


def test_torispherical_parallel_surface_is_torispherical_with_grown_radii():
    # the surface at depth t of a torispherical head (crown R, knuckle r, shell D) is the
    # torispherical head with crown R + t, knuckle r + t on the diameter D + 2t (same
    # centres): checks the Steiner coefficients against the independent closed form above
    D = 1.6
    s = geo.head_surface(D, "torispherical")
    for t in (0.005, 0.04, 0.09):
        outer = geo.torispherical_head(D + 2 * t, D + t, 0.06 * D + t)
        assert s.area(t) == pytest.approx(outer.area, rel=1e-12)
        inner = geo.torispherical_head(D)
        assert s.volume(0.0, t) == pytest.approx(outer.volume - inner.volume, rel=1e-9)


def _ellipse_offset_profile(D, t, n=200001):
    """Parallel curve at distance t outside the 2:1 ellipse meridian (a = D/2, b = D/4)."""
    a, b = D / 2, D / 4
    u = np.linspace(0.0, math.pi / 2, n)
    x, y = a * np.cos(u), b * np.sin(u)
    dx, dy = -a * np.sin(u), b * np.cos(u)
    norm = np.hypot(dx, dy)
    return np.column_stack([x + t * dy / norm, y - t * dx / norm])


def test_ellipsoidal_parallel_surface_area_against_a_numerical_offset():
    # the Steiner coefficients of the spheroid, in closed form, against the area of the
    # numerically offset profile revolved (frustums)
    D = 1.2
    s = geo.head_surface(D, "2:1-ellipsoidal")
    for t in (0.0, 0.02, 0.08):
        _, area = _revolve(_ellipse_offset_profile(D, t))
        assert s.area(t) == pytest.approx(area, rel=1e-7)


def test_resistance_factor_gives_the_cylinder_and_sphere_conduction_resistances():
    # source: Incropera et al., Fundamentals of Heat and Mass Transfer, 7th ed., Table 3.3:
    # R = ln(r2/r1)/(2 pi L k) for a cylindrical wall, (1/r1 - 1/r2)/(4 pi k) for a sphere
    r1, r2, L = 0.5, 0.56, 3.0
    shell = geo.Surface(2 * math.pi * r1 * L, 2 * math.pi * L, 0.0)
    assert shell.resistance_factor(0.0, r2 - r1) == pytest.approx(
        math.log(r2 / r1) / (2 * math.pi * L), rel=1e-13)
    sphere = geo.wall_surface("sphere", 2 * r1)
    assert sphere.resistance_factor(0.0, r2 - r1) == pytest.approx(
        (1 / r1 - 1 / r2) / (4 * math.pi), rel=1e-13)


# ------------------------------------------------------------ area below a level

@pytest.mark.parametrize("kind", ["2:1-ellipsoidal", "torispherical", "hemispherical"])
@pytest.mark.parametrize("orientation", ["horizontal", "vertical"])
def test_wetted_area_matches_the_fluids_library(kind, orientation):
    import fluids.geometry as fg

    D, L = 1.2, 2.0
    h = _fluids_head(kind, D)
    depth = geo.head(D, kind).depth
    levels = ([0.05, 0.3, 0.6, 0.9, 1.15] if orientation == "horizontal"
              else [0.04, depth * 0.7, depth + 0.5, depth + L + 0.3 * depth])
    for level in levels:
        ours = area_below(level, "cylinder", D, L, kind, orientation)
        # source: fluids library (Caleb Bell), fluids.geometry SA_partial_* functions
        # (partial surface areas of tank heads and the cylindrical body)
        if orientation == "horizontal":
            head = {"ellipsoidal": fg.SA_partial_horiz_ellipsoidal_head,
                    "spherical": fg.SA_partial_horiz_spherical_head}.get(h["side"])
            one = (head(D, h["a"], level) if head else
                   fg.SA_partial_horiz_torispherical_head(D, h["f"], h["k"], level))
            ref = 2 * one + fg.SA_partial_cylindrical_body(L, D, level)
        else:
            def vhead(z):
                z = min(max(z, 0.0), depth)
                if h["side"] == "ellipsoidal":
                    return fg.SA_partial_vertical_ellipsoidal_head(D, h["a"], z)
                if h["side"] == "spherical":
                    return fg.SA_partial_vertical_spherical_head(D, h["a"], z)
                return fg.SA_partial_vertical_torispherical_head(D, h["f"], h["k"], z)
            top = vhead(depth) - vhead(depth - (level - depth - L)) if level > depth + L else 0.0
            ref = vhead(level) + math.pi * D * min(max(level - depth, 0.0), L) + top
        assert ours == pytest.approx(ref, rel=2e-6), level


def test_wetted_area_of_flat_heads_and_spheres():
    D, L = 1.0, 2.0
    # horizontal, level at the axis: half the shell and half of each flat end
    half = area_below(0.5, "cylinder", D, L, "flat", "horizontal")
    assert half == pytest.approx(math.pi * D * L / 2 + math.pi * D**2 / 4, rel=1e-12)
    # source: area of a spherical zone 2 pi R h (Archimedes; CRC Standard Mathematical
    # Tables and Formulae, 31st ed., sec. 4.8)
    assert area_below(0.3, "sphere", 2.0) == pytest.approx(2 * math.pi * 1.0 * 0.3)
    # vertical, flat ends: the bottom disc as soon as there is liquid, the top one when full
    assert area_below(0.5, "cylinder", D, L, "flat") == pytest.approx(
        math.pi / 4 + math.pi * 0.5)
    assert area_below(5.0, "cylinder", D, L, "flat") == pytest.approx(geo.cylinder(D, L)[1])


def test_area_below_of_the_outside_surface_is_the_whole_outside_when_submerged():
    for kind in HEAD_KINDS:
        for orientation in ("vertical", "horizontal"):
            t = 0.04
            s = geo.wall_surface("cylinder", 1.1, 2.5, kind)
            full = area_below(100.0, "cylinder", 1.1, 2.5, kind, orientation, offset=t)
            assert full == pytest.approx(s.area(t), rel=1e-7), (kind, orientation)


def test_outer_height():
    assert geo.outer_height("cylinder", 1.0, 2.0, "2:1-ellipsoidal", "vertical", 0.05) == \
        pytest.approx(2.0 + 2 * (0.25 + 0.05))
    assert geo.outer_height("cylinder", 1.0, 2.0, "flat", "horizontal", 0.05) == 1.1
