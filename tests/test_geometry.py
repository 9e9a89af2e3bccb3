"""Vessel geometry: head volumes and areas against handbook values and a numerical profile."""
import math

import numpy as np
import pytest

from cvsim.heat import geometry as geo


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
    V, A, H = geo.cylinder(1.0, 2.0, "flat", "vertical")
    assert V == pytest.approx(math.pi / 4 * 2.0)
    assert A == pytest.approx(math.pi * 2.0 + 2 * math.pi / 4)
    assert H == 2.0
    assert geo.cylinder(1.0, 2.0, "2:1-ellipsoidal", "vertical")[2] == pytest.approx(2.5)
    assert geo.cylinder(1.0, 2.0, "2:1-ellipsoidal", "horizontal")[2] == 1.0


def test_docstring_examples():
    import doctest

    assert doctest.testmod(geo).failed == 0
