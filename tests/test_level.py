"""Liquid level: volume below a height, its inverse and areas below a height, against the
fluids library's tank functions, closed forms and brute-force computations in the test."""
import math
from decimal import Decimal, getcontext
from pathlib import Path

import numpy as np
import pytest

from cvsim.heat import level as lv

HEADS = ("flat", "2:1-ellipsoidal", "torispherical", "hemispherical")
ORIENTATIONS = ("vertical", "horizontal")
#: shares of the height: nearly empty, ordinary, at the knuckle-crown joints, nearly full
SHARES = (1e-4, 0.003, 0.05, 0.2, 0.37, 0.62, 0.8, 0.96, 0.997, 1 - 1e-4)


def _fluids_tank(kind, D, L, orientation, t=0.0):
    """The fluids library's TANK for our head proportions; ``t``: the parallel surface at
    distance t outside (exact for spherical and torispherical heads, see below)."""
    from fluids.geometry import TANK
    Ds = D + 2 * t
    kw = {}
    if kind == "2:1-ellipsoidal":
        assert t == 0.0
        kw = dict(sideA="ellipsoidal", sideB="ellipsoidal", sideA_a=D / 4, sideB_a=D / 4)
    elif kind == "hemispherical":
        kw = dict(sideA="spherical", sideB="spherical", sideA_a=Ds / 2, sideB_a=Ds / 2)
    elif kind == "torispherical":
        # the surface parallel to a torispherical head (crown D, knuckle 0.06 D) at distance
        # t is the torispherical head on D + 2t with crown D + t and knuckle 0.06 D + t (same
        # centres): f and k relative to the new diameter
        f, k = (D + t) / Ds, (0.06 * D + t) / Ds
        kw = dict(sideA="torispherical", sideB="torispherical", sideA_f=f, sideA_k=k,
                  sideB_f=f, sideB_k=k)
    return TANK(D=Ds, L=L, horizontal=orientation == "horizontal", **kw)


@pytest.mark.parametrize("heads", HEADS)
@pytest.mark.parametrize("orientation", ORIENTATIONS)
def test_volume_level_and_area_match_the_fluids_library(heads, orientation):
    D, L = 1.8, 4.0
    tank = lv.Tank("cylinder", D, L, heads, orientation)
    ref = _fluids_tank(heads, D, L, orientation)
    # source: fluids library (Caleb Bell), fluids.geometry.TANK.V_from_h, h_from_V and
    # SA_from_h (partially filled tanks after D. Jones, "Calculating Tank Volume" and
    # "Calculating Tank Wetted Area", Chemical Processing), a general-purpose reference
    assert tank.volume == pytest.approx(ref.V_total, rel=1e-12)
    assert tank.height == pytest.approx(ref.h_max, rel=1e-12)
    for share in SHARES:
        h = share * tank.height
        V = tank.volume_below(h)
        assert V == pytest.approx(ref.V_from_h(h), rel=1e-9), share
        level = tank.level(V)
        assert ref.V_from_h(level) == pytest.approx(V, abs=1e-10 * tank.volume), share
        # fluids' root-finding inverse (its default is a spline table, 1e-5 at best)
        assert level == pytest.approx(ref.h_from_V(V, method="brenth"), rel=1e-7,
                                      abs=1e-9), share
        # the inverse is converged on the volume residual
        assert abs(tank.volume_below(level) - V) <= lv.LEVEL_RTOL * tank.volume
        # fluids' horizontal torispherical area loses about 3e-5 within 1e-4 D of the
        # axis (checked below by symmetry instead); 1e-8 elsewhere
        assert tank.area_below(h) == pytest.approx(ref.SA_from_h(h), rel=1e-8), share


def test_nearly_empty_and_nearly_full_keep_their_precision():
    # source: circular segment R^2 (theta - sin theta)/2, theta = 4 asin(sqrt(h/2R)) (CRC
    # Standard Mathematical Tables and Formulae, 31st ed., ch. 4; section from memory),
    # summed in 50-digit decimal arithmetic in the test; spherical cap pi h^2 (3R - h)/3
    # (sec. 4.8)
    getcontext().prec = 50
    R, L, h = 0.9, 4.0, 1.8e-6
    x = (Decimal(h) / (2 * Decimal(R))).sqrt()
    asin, term = x, x
    for n in range(1, 20):
        term = term * x * x * Decimal((2 * n - 1) ** 2) / Decimal(2 * n * (2 * n + 1))
        asin += term
    theta = 4 * asin
    tms, term, k = Decimal(0), theta**3 / 6, 3
    while abs(term) > Decimal("1e-60"):
        tms += term
        term = -term * theta * theta / Decimal((k + 1) * (k + 2))
        k += 2
    exact = float(Decimal(L) * Decimal(R) ** 2 / 2 * tms)
    flat = lv.Tank("cylinder", 2 * R, L, "flat", "horizontal")
    assert flat.volume_below(h) == pytest.approx(exact, rel=1e-9)
    sphere = lv.Tank("sphere", 2 * R)
    for z in (1e-7, 1e-4):
        assert sphere.volume_below(z) == pytest.approx(math.pi * z * z * (3 * R - z) / 3,
                                                       rel=1e-12)
        top = sphere.volume - sphere.volume_below(2 * R - z)
        assert top == pytest.approx(math.pi * z * z * (3 * R - z) / 3, rel=1e-6)


def test_horizontal_heads_are_symmetric_about_the_axis():
    # a head cut through its axis: half of it below (symmetry); just off the axis the area
    # changes by twice the profile's length per metre of level (each ring is cut at right
    # angles there) - checks the quadrature where the fluids library is less precise
    for heads in ("2:1-ellipsoidal", "torispherical"):
        for t in (0.0, 0.03):
            tank = lv.Tank("cylinder", 1.8, 0.0, heads, "horizontal", offset=t)
            half = tank.head_area / 2
            assert tank._horizontal_head_area(0.0) == pytest.approx(half, rel=1e-13)
            s = np.linspace(0.0, math.pi / 2, 200001)
            if heads == "torispherical":
                length = sum((p.s1 - p.s0) * p.R_k for p in tank.pieces)
            else:
                p = tank.pieces[0]
                rho = np.array([p.rho(v) for v in s])
                x = np.array([p.x(v) for v in s])
                length = float(np.sum(np.hypot(np.diff(rho), np.diff(x))))
            for d in (1e-4, -1e-4):
                assert tank._horizontal_head_area(d) == pytest.approx(
                    half - 2 * length * d, rel=1e-9)


def test_free_surface_is_the_slope_of_the_volume():
    # the area of the liquid's surface is dV/dh (central differences in the test), and
    # pi D^2/4 in a vertical shell, L D + pi R^2 at the axis of a horizontal vessel with
    # hemispherical heads (the two heads' cut makes a disc of radius R)
    for heads in HEADS:
        for orientation in ORIENTATIONS:
            tank = lv.Tank("cylinder", 1.5, 3.0, heads, orientation)
            for share in (0.02, 0.3, 0.5, 0.71, 0.97):
                h = share * tank.height
                dh = 1e-6 * tank.height
                slope = (tank.volume_below(h + dh) - tank.volume_below(h - dh)) / (2 * dh)
                assert tank.free_surface(h) == pytest.approx(slope, rel=1e-6), (heads, share)
    assert lv.Tank("cylinder", 1.5, 3.0, "torispherical").free_surface(2.0) == \
        pytest.approx(math.pi * 1.5**2 / 4)
    assert lv.Tank("cylinder", 1.5, 3.0, "hemispherical", "horizontal").free_surface(0.75) \
        == pytest.approx(3.0 * 1.5 + math.pi * 0.75**2, rel=1e-14)


def test_level_warm_start_and_limits():
    tank = lv.Tank("cylinder", 2.0, 5.0, "torispherical", "horizontal")
    V = 0.4 * tank.volume
    cold = tank.level(V)
    for guess in (cold * 1.001, cold * 0.5, 1.999, 1e-9):
        warm = tank.level(V, guess)
        assert abs(tank.volume_below(warm) - V) <= lv.LEVEL_RTOL * tank.volume
    assert tank.level(0.0) == 0.0 and tank.level(-1.0) == 0.0
    assert tank.level(tank.volume) == tank.height
    assert lv.height_from_volume(V, "cylinder", 2.0, 5.0, "torispherical", "horizontal") == \
        pytest.approx(cold, rel=1e-12)


def _revolve_below(rho, x, R, d):
    """Brute force: area of the surface of revolution of a dense polyline (rho, x) lying
    below a plane at distance d below the axis, by frustums, each taken with the share of
    its mid ring below the plane."""
    rm = 0.5 * (rho[1:] + rho[:-1])
    ds = np.hypot(np.diff(rho), np.diff(x))
    ratio = np.clip(d / np.maximum(rm, 1e-300), -1.0, 1.0)
    return float(np.sum(2.0 * rm * np.arccos(ratio) * ds))


def test_outside_of_an_ellipsoidal_head_against_a_numerical_parallel_curve():
    # the parallel curve at distance t outside the 2:1 ellipse, built point by point in the
    # test, revolved and cut by the plane (brute force); vertical: the zone below a height
    D, t = 1.2, 0.05
    a, b = D / 2, D / 4
    u = np.linspace(0.0, math.pi / 2, 400001)
    dx, dy = -a * np.sin(u), b * np.cos(u)
    norm = np.hypot(dx, dy)
    rho = a * np.cos(u) + t * dy / norm
    x = b * np.sin(u) - t * dx / norm
    tank = lv.Tank("cylinder", D, 0.0, "2:1-ellipsoidal", "horizontal", offset=t)
    for level in (0.05, 0.3, 0.62, 1.2):
        d = tank.Rs - level
        assert tank._horizontal_head_area(d) == pytest.approx(
            _revolve_below(rho, x, tank.Rs, d), rel=2e-7), level
    vert = lv.Tank("cylinder", D, 1.0, "2:1-ellipsoidal", "vertical", offset=t)
    ring = 2 * math.pi * 0.5 * (rho[1:] + rho[:-1]) * np.hypot(np.diff(rho), np.diff(x))
    for z in (0.02, 0.1, 0.25, b + t):
        plane = b + t - z
        zone = float(np.sum(ring[(x[1:] >= plane) & (x[:-1] >= plane)]))
        k = np.nonzero((x[:-1] < plane) & (x[1:] > plane))[0]  # the frustum the plane cuts
        if len(k):
            zone += float(ring[k[0]] * (x[k[0] + 1] - plane) / (x[k[0] + 1] - x[k[0]]))
        assert vert.area_below(z) == pytest.approx(zone, rel=1e-9), z


@pytest.mark.parametrize("heads", ("torispherical", "hemispherical"))
@pytest.mark.parametrize("orientation", ORIENTATIONS)
def test_outside_surface_matches_the_fluids_library(heads, orientation):
    # the parallel surfaces of spherical and torispherical heads are heads of the same kind
    # (see _fluids_tank); source: fluids library, fluids.geometry.TANK.SA_from_h
    D, L, t = 1.8, 4.0, 0.04
    tank = lv.Tank("cylinder", D, L, heads, orientation, offset=t)
    ref = _fluids_tank(heads, D, L, orientation, t)
    assert tank.height == pytest.approx(ref.h_max, rel=1e-12)
    for share in (0.01, 0.2, 0.45, 0.8, 0.999):
        h = share * tank.height
        assert tank.area_below(h) == pytest.approx(ref.SA_from_h(h), rel=1e-8), share


def test_outside_level_bounds_the_wall_behind_the_wetted_inside():
    # sphere and horizontal shell: the mapped plane cuts the outside exactly where the
    # wall's normals from the wetted inside end, so the areas scale as (R + t)/R per unit
    # (zone 2 pi R h; arc R angle) - closed forms, CRC Standard Mathematical Tables,
    # ch. 4 (sections from memory)
    D, t = 2.0, 0.03
    for h in (0.1, 0.9, 1.7):
        out = lv.outside_level(h, "sphere", D, offset=t)
        assert lv.area_below(out, "sphere", D, offset=t) == pytest.approx(
            lv.area_below(h, "sphere", D) * ((1 + t) / 1) ** 2, rel=1e-12)
        shell_in = lv.area_below(h, "cylinder", D, 5.0, "flat", "horizontal") \
            - lv.area_below(h, "cylinder", D, 0.0, "flat", "horizontal")
        out = lv.outside_level(h, "cylinder", D, 5.0, "flat", "horizontal", offset=t)
        shell_out = lv.area_below(out, "cylinder", D, 5.0, "flat", "horizontal", offset=t) \
            - lv.area_below(out, "cylinder", D, 0.0, "flat", "horizontal", offset=t)
        assert shell_out == pytest.approx(shell_in * (1 + t), rel=1e-12)
    for heads in HEADS:
        for orientation in ORIENTATIONS:
            tank = lv.Tank("cylinder", D, 3.0, heads, orientation)
            outer = lv.Tank("cylinder", D, 3.0, heads, orientation, offset=t)
            top = lv.outside_level(tank.height, "cylinder", D, 3.0, heads, orientation, t)
            assert top == pytest.approx(outer.height, rel=1e-14)
            assert outer.area_below(top) == pytest.approx(outer.area, rel=1e-12)
            levels = [lv.outside_level(s * tank.height, "cylinder", D, 3.0, heads,
                                       orientation, t) for s in np.linspace(0, 1, 41)]
            assert np.all(np.diff(levels) > 0)


def test_docstring_examples():
    import doctest

    assert doctest.testmod(lv).failed == 0


def test_a_run_gives_the_same_numbers_whatever_ran_before_it():
    """The shapes' level solves are cached and warm-started from the last level found;
    a second run of the same scenario in the same process must still give the same
    numbers to the last bit (a sweep's worker runs many cases one after the other).
    Before Model reset the warm starts, the LPG demo's histories differed in the second
    run (and the separated-zones bullet took 473 steps instead of 438)."""
    from cvsim import api
    from cvsim.scenario import load_scenario
    path = Path(__file__).resolve().parents[1] / "scenarios" / "lpg-bullet-pool-fire.yaml"
    first = api.run(load_scenario(path))
    again = api.run(load_scenario(path))
    assert first.data.shape == again.data.shape
    assert np.array_equal(first.data, again.data, equal_nan=True)
    assert np.array_equal(first.fine_data, again.fine_data, equal_nan=True)
