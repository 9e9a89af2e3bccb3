"""The pool fire's wetted area follows the liquid level (API 521): the area function against
the fluids library's tank functions, whole runs whose fire heat follows
Q = 43 200 F A^0.82 with the wetted area of the moment, and the relief-load basis."""
import math

import pytest

from cvsim import run
from cvsim.heat import fire
from cvsim.heat.definitions import PoolFire, WettedSurface
from cvsim.heat.walls import FireArea
from cvsim.scenario import load_scenario_text
from cvsim.sizing import fire_heat_input

D, L = 1.6, 4.0

#: a horizontal propane bullet (torispherical heads) in a pool fire, its liquid drained
DRAINED = """
title: propane bullet in a pool fire, drained
fluid: Propane
vessels:
  bullet:
    shape: {kind: cylinder, inner_diameter: 1.6 m, length: 4 m, orientation: horizontal,
            heads: torispherical}
    initial: {temperature: 20 degC, liquid_fraction: 70 %}
    heat:
      HEAT
reservoirs:
  air: {pressure: 1 atm, temperature: 20 degC}
links:
  drain: {from: bullet, to: air, device: orifice, diameter: 25 mm, discharge_coefficient: 0.8,
          draws: liquid}
run: {end: 10 min, record_every: 60 s}
"""
GAS_FIRE = "fire: {drainage_and_firefighting: adequate}"
WALL_FIRE = """wall:
        model: lumped
        layers: {material: carbon-steel, thickness: 12 mm}
        outside:
          model: insulated
          fire: {model: pool, drainage_and_firefighting: inadequate, elevation: 6.8 m}"""


def _tank(d, t=0.0):
    """The fluids library's horizontal tank with torispherical heads (crown D, knuckle
    0.06 D), or its parallel surface at distance t outside (a torispherical head again,
    with crown D + t and knuckle 0.06 D + t on the diameter D + 2t)."""
    from fluids.geometry import TANK
    ds = d + 2 * t
    f, k = (d + t) / ds, (0.06 * d + t) / ds
    return TANK(D=ds, L=L, horizontal=True, sideA="torispherical", sideB="torispherical",
                sideA_f=f, sideA_k=k, sideB_f=f, sideB_k=k)


def _surface(offset=0.0, elevation=0.0, orientation="horizontal", kind="cylinder",
             heads="torispherical", D=D, L=L):
    return WettedSurface(kind, D, L, heads, orientation, offset, elevation,
                         fire.FIRE_HEIGHT - elevation)


def test_wetted_area_follows_the_level_against_the_fluids_library():
    inside, outside = _tank(D), _tank(D, 0.02)
    full_in = inside.SA_from_h(D)
    for share in (0.01, 0.2, 0.5, 0.83, 0.999):
        # source: fluids library, TANK.h_from_V (root-finding) and SA_from_h: the level
        # that holds the liquid, and the tank surface below it
        h = inside.h_from_V(share * inside.V_total, method="brenth")
        pf = PoolFire(area=full_in, wetted=_surface())
        A, level = fire.pool_fire_area(pf, share)
        assert level == pytest.approx(h, rel=1e-8)
        assert A == pytest.approx(inside.SA_from_h(h), rel=1e-7)
        # outside of a 20 mm wall: the level mapped onto the outside, h (D + 2t)/D
        pf = PoolFire(area=outside.SA_from_h(D + 0.04), wetted=_surface(offset=0.02))
        A, _ = fire.pool_fire_area(pf, share)
        assert A == pytest.approx(outside.SA_from_h(h * (D + 0.04) / D), rel=1e-7)
    # no liquid level (gas, supercritical) and liquid-full: the whole area within reach
    pf = PoolFire(area=full_in, wetted=_surface())
    for share in (0.0, 1.0):
        assert fire.pool_fire_area(pf, share)[0] == full_in
    # and the wetted area reaches it continuously as the vessel fills (the dry strip at the
    # top of a horizontal vessel shrinks as the cube root of the vapour's volume)
    gaps = [full_in - fire.pool_fire_area(pf, 1.0 - v)[0] for v in (1e-3, 1e-6, 1e-9)]
    assert gaps[0] > gaps[1] > gaps[2] > 0.0 and gaps[2] < 1e-3 * full_in
    # a stated area is held whatever the level
    assert fire.pool_fire_area(PoolFire(area=7.0), 0.3)[0] == 7.0


def test_wetted_area_stops_at_the_fires_reach():
    # a vertical vessel standing 2 m above the fire's base: surfaces count up to 7.6 m
    # above it, i.e. 5.6 m of the vessel; source: fluids TANK.SA_from_h (vertical tank,
    # 2:1 ellipsoidal heads), API 521 (7.6 m)
    from fluids.geometry import TANK
    D_v, L_v = 1.5, 8.0
    ref = TANK(D=D_v, L=L_v, horizontal=False, sideA="ellipsoidal", sideB="ellipsoidal",
               sideA_a=D_v / 4, sideB_a=D_v / 4)
    ws = _surface(elevation=2.0, orientation="vertical", heads="2:1-ellipsoidal", D=D_v, L=L_v)
    pf = PoolFire(area=ref.SA_from_h(5.6), wetted=ws)
    for share, expect_h in ((0.3, None), (0.9, 5.6)):
        A, h = fire.pool_fire_area(pf, share)
        assert A == pytest.approx(ref.SA_from_h(min(h, 5.6)), rel=1e-9)
        if expect_h:
            assert h > 5.6 and A == pytest.approx(pf.area, rel=1e-12)


def _independent_fire_heat(res, C1, offset=0.0):
    """API 521 heat in the test: level from the recorded liquid share (fluids' root
    finder), wetted area from fluids, Q = C1 A^0.82."""
    inside, outside = _tank(D), _tank(D, offset)
    out = []
    for share in res["bullet.liquid_fraction"]:
        h = inside.h_from_V(share * inside.V_total, method="brenth")
        A = outside.SA_from_h(h * (D + 2 * offset) / D)
        out.append((A, C1 * A**0.82))
    return out


def test_whole_run_fire_heat_follows_the_falling_level():
    res = run(load_scenario_text(DRAINED.replace("HEAT", GAS_FIRE)))
    level = res["bullet.liquid_level"]
    assert level[-1] < 0.7 * level[0]                 # the level falls
    heat = res["bullet.heat.fire"]
    assert heat[-1] < 0.8 * heat[0]                   # and the fire heat with it
    # source: API Std 521, Q = 43 200 F A^0.82 W (SI form, prompt fire-fighting and
    # drainage, F = 1) with A the area wetted at that moment, computed in the test from the
    # fluids library's tank functions
    for (A, Q), A_run, Q_run in zip(_independent_fire_heat(res, 43200.0),
                                    res["bullet.fire.wetted_area"], heat):
        assert A_run == pytest.approx(A, rel=1e-7)
        assert Q_run == pytest.approx(Q, rel=1e-7)
    assert any("below the liquid level" in a for a in res.assumptions)


def test_whole_run_wall_fire_counts_the_outside_below_the_level_within_reach():
    # the vessel's bottom 6.8 m above the fire's base: only its lowest 0.8 m of outside
    # counts, so the wetted area is capped while the level (in outside terms) is above
    res = run(load_scenario_text(DRAINED.replace("HEAT", WALL_FIRE)))
    t = 0.012
    capped = _tank(D, t).SA_from_h(fire.FIRE_HEIGHT - 6.8)
    # source: API Std 521 without prompt fire-fighting and drainage, Q = 70 900 F A^0.82 W;
    # A: the outside below the level and within 7.6 m, fluids library in the test
    for (A, Q), A_run, Q_run in zip(_independent_fire_heat(res, 70900.0, t),
                                    res["bullet.wall.fire_wetted_area"],
                                    res["bullet.wall.fire_heat"]):
        A = min(A, capped)
        assert A_run == pytest.approx(A, rel=1e-7)
        assert Q_run == pytest.approx(70900.0 * A**0.82, rel=1e-7)
    levels = res["bullet.liquid_level"]
    assert levels[0] > 0.8 > levels[-1]  # capped at first, then following the level


def test_relief_load_basis_is_the_wetted_area_at_the_initial_level():
    scenario = load_scenario_text(DRAINED.replace("HEAT", GAS_FIRE))
    Q, text = fire_heat_input(scenario.network, "bullet")
    inside = _tank(D)
    h = inside.h_from_V(0.7 * inside.V_total, method="brenth")
    # source: API Std 521 Q = 43 200 F A^0.82, A wetted at the initial level (fluids)
    assert Q == pytest.approx(43200.0 * inside.SA_from_h(h) ** 0.82, rel=1e-7)
    assert "wetted at the initial liquid level" in text


def test_a_step_of_the_area_basis_is_warned():
    pf = PoolFire(area=20.0, wetted=_surface())
    fa = FireArea(pf)
    for t, share in ((0.0, 0.05), (10.0, 0.01), (20.0, 0.0), (30.0, 0.0)):
        fa.watch(t, share, fa.area(share))
    (warning,) = fa.warnings("vessel 'bullet' pool fire")
    assert "t = 20 s" in warning and "last liquid evaporated" in warning
    assert "to 20 m2" in warning
    # liquid-full after two phases is no step (the level reaches the top)
    fa = FireArea(pf)
    for t, share in ((0.0, 0.99), (1.0, 1.0)):
        fa.watch(t, share, fa.area(share))
    assert fa.warnings("x") == []
    assert math.isclose(fa.area(1.0), 20.0)
