"""Fire exposure: API 521 pool-fire heat input and the radiant flame model."""
import math

import numpy as np

import pytest

from cvsim.heat import fire


def test_api521_heat_input_for_ten_square_metres():
    # source: API Std 521 wetted-surface fire equation in SI, Q = 43 200 F A^0.82 W
    # (prompt fire-fighting and drainage); A = 10 m2, F = 1 -> 285.4 kW (computed in
    # shared/references.md and recomputed here by hand: 43 200 x 10^0.82)
    assert fire.api521_pool_fire_heat(10.0, 1.0, True) == pytest.approx(285.4e3, rel=2e-4)
    assert 43200 * 10**0.82 == pytest.approx(285.4e3, rel=2e-4)


def test_api521_si_constants_are_the_us_constants_converted():
    # source: API Std 521, US customary form Q [Btu/h] = 21 000 F A^0.82 (with drainage and
    # fire-fighting) and 34 500 F A^0.82 (without), A in ft2; SI form 43 200 and 70 900
    # W with A in m2. Conversion: C1_SI = C1_US * (W per Btu/h) / (m2 per ft2)^0.82
    factor = fire.BTU_PER_HOUR / fire.SQUARE_FOOT**0.82
    assert 21000 * factor == pytest.approx(43200, rel=1e-3)   # 43 197
    assert 34500 * factor == pytest.approx(70900, rel=1e-3)   # 70 966 (printed rounded down)
    for drainage in (True, False):
        for A in (1.0, 25.0, 300.0):
            us = fire.api521_pool_fire_heat_us(A / fire.SQUARE_FOOT, 1.0, drainage)
            assert fire.api521_pool_fire_heat(A, 1.0, drainage) == pytest.approx(
                us * fire.BTU_PER_HOUR, rel=1e-3)


@pytest.mark.parametrize("F", [1.0, 0.3, 0.075])
def test_environment_factor_scales_the_heat_input(F):
    # source: API Std 521: Q proportional to the environment factor F
    q1 = fire.api521_pool_fire_heat(37.0, 1.0, False)
    assert fire.api521_pool_fire_heat(37.0, F, False) == pytest.approx(F * q1, rel=1e-14)
    assert q1 == pytest.approx(70900 * 37.0**0.82, rel=1e-14)


def test_unit_conversions_of_the_fire_constants():
    # source: International Table Btu = 1055.05585262 J; 1 ft = 0.3048 m (exact)
    assert fire.BTU_PER_HOUR == pytest.approx(0.29307107, rel=1e-8)
    assert fire.SQUARE_FOOT == 0.3048**2
    assert fire.FIRE_HEIGHT == pytest.approx(25 * 0.3048, abs=0.03)  # 25 ft (API 521)


def test_flame_flux_closed_forms():
    # source: Stefan-Boltzmann law (Incropera 7th ed., eqs. 1.5-1.6) and Newton's law of
    # cooling: a black surface at T_s under a black flame at T_f receives sigma (T_f^4 - T_s^4)
    q = fire.flame_heat_flux(300.0, 1100.0, 1.0, 1.0, 0.0)
    assert q == pytest.approx(5.670374419e-8 * (1100.0**4 - 300.0**4), rel=1e-14)
    # no flux at equilibrium with a black flame and no convection difference
    assert fire.flame_heat_flux(1100.0, 1100.0, 1.0, 0.8, 30.0) == pytest.approx(0.0, abs=1e-9)
    # the convective part alone
    assert fire.flame_heat_flux(400.0, 1000.0, 0.0, 0.0, 50.0) == pytest.approx(30000.0)
    # a grey flame (eps_f < 1) leaves the surface cooler than the flame at zero net flux
    T_eq = (0.5) ** 0.25 * 1100.0
    assert fire.flame_heat_flux(T_eq, 1100.0, 0.5, 0.9, 0.0) == pytest.approx(0.0, abs=1e-6)
    assert math.isclose(fire.SIGMA, 5.670374419e-8)


# ---------------------------------------------------------------- in a run

def _vessel_text(heat: str, links: str = "", end: str = "10 min") -> str:
    return f"""
title: fire
fluid: Nitrogen
vessels:
  tank:
    shape: {{kind: cylinder, inner_diameter: 1 m, length: 2 m, orientation: horizontal,
            heads: 2:1-ellipsoidal}}
    initial: {{pressure: 10 barg, temperature: 20 degC}}
    heat:
{heat}
reservoirs:
  air: {{pressure: 1 atm, temperature: 20 degC}}
{links}
run: {{end: {end}, record_every: 10 s}}
"""


def test_pool_fire_on_the_gas_adds_the_api521_heat_from_its_start():
    from cvsim import load_scenario_text, run

    sc = load_scenario_text(_vessel_text("""
      fire: {drainage_and_firefighting: adequate, environment_factor: 0.5, starts_at: 60 s}
""", end="2 min"))
    res = run(sc)
    assert res.status == "completed", res.message
    area = sc.network.vessels[0].heat[0].fire.area
    Q = 0.5 * 43200 * area**0.82  # source: API Std 521, SI form (see the tests above)
    assert res.totals["heat"]["tank.fire"] == pytest.approx(Q * (120 - 60), rel=1e-9)
    assert res.balance["energy_closure_relative"] <= 1e-9
    q = res["tank.heat.fire"]
    assert q[res.time < 60].max() == 0.0 and q[res.time > 60].min() == pytest.approx(Q)


def test_flame_on_an_insulated_lumped_wall_heats_it_with_the_flame_flux():
    from cvsim import load_scenario_text, run

    sc = load_scenario_text(_vessel_text("""
      wall:
        model: lumped
        layers: {material: steel, thickness: 10 mm}
        inside: {model: fixed, coefficient: 0 W/m2/K}
        outside:
          model: insulated
          fire: {model: flame, flame_temperature: 1000 K, flame_emissivity: 1,
                 surface_emissivity: 0.9, convective_coefficient: 20 W/m2/K, area: 2 m2}
"""))
    res = run(sc)
    T = res["tank.wall.outer_temperature"]
    q = res["tank.wall.fire_heat"]
    expected = [2.0 * fire.flame_heat_flux(t, 1000.0, 1.0, 0.9, 20.0) for t in T]
    assert q == pytest.approx(expected, rel=1e-12)
    assert np.all(np.diff(T) > 0) and T[-1] < 1000.0
    # all the flame's heat is in the wall (insulated outside, no exchange with the gas)
    w = res.totals["walls"]["tank.wall"]
    assert w["energy_change_J"] == pytest.approx(w["heat_from_outside_J"], rel=1e-9)
    assert any("steel (EN 12524)" in m and "above the range" in m for m in res.warnings)


def test_fixed_coefficient_while_filling_and_ambient_table():
    from cvsim import load_scenario_text, run

    sc = load_scenario_text(_vessel_text("""
      wall:
        model: layered
        layers: {material: aluminium-alloy, thickness: 8 mm, divisions: 2}
        inside: {model: fixed, coefficient: 250 W/m2/K, while_filling: 500 W/m2/K}
        outside:
          model: fixed
          coefficient: 4.5 W/m2/K
          ambient: {table: [[0 s, 20 degC], [5 min, 40 degC]]}
""", links="""
links:
  fill: {from: air, to: tank, device: fixed-flow, delivery_temperature: 60 degC,
         mass_flow: {table: [[0 s, 5 g/s], [2 min, 5 g/s], [2 min, 0 g/s]]}}
"""))
    res = run(sc)
    assert res.ok, res.message
    h = res["tank.wall.inside_coefficient"]
    t = res.time
    # the stated coefficient while the compressor delivers, the other after
    assert np.all(h[(t > 0) & (t < 120)] == 500.0) and np.all(h[t > 120] == 250.0)
    assert res.balance["energy_closure_relative"] <= 1e-9
    # the ambient follows its table: 30 degC at 150 s (linear between 20 and 40 degC)
    heat_out = res["tank.wall.heat_from_outside"]
    Tw = res["tank.wall.outer_temperature"]
    A_out = sc.network.vessels[0].heat[0].surface.area(0.008)
    k = int(np.searchsorted(t, 150.0))
    assert t[k] == 150.0
    assert heat_out[k] == pytest.approx(4.5 * A_out * (303.15 - Tw[k]), rel=1e-9)


# ------------------------------------------------ the lumped-wall check with a fire

def test_fire_equivalent_coefficient_is_the_radiative_coefficient_of_a_black_flame():
    # source: Incropera et al., Fundamentals of Heat and Mass Transfer, 7th ed., eq. 1.9:
    # h_r = sigma (T_s + T_sur)(T_s^2 + T_sur^2) for exchange with black surroundings at
    # T_sur; a black flame at 1100 K on a wall at 300 K gives q = sigma (T_f^4 - T_s^4)
    from cvsim.heat.walls import fire_equivalent_coefficient
    sigma = 5.670374419e-8  # CODATA 2018
    Tf, Ts = 1100.0, 300.0
    q = sigma * (Tf**4 - Ts**4)
    h_r = sigma * (Tf + Ts) * (Tf * Tf + Ts * Ts)
    assert fire_equivalent_coefficient(q, Ts) == pytest.approx(h_r, rel=1e-12)
    # vanishing flux: the linearised black-body coefficient 4 sigma T^3 (eq. 1.9 at T_sur = T_s)
    assert fire_equivalent_coefficient(1e-6, Ts) == pytest.approx(4 * sigma * Ts**3, rel=1e-6)
    assert fire_equivalent_coefficient(0.0, Ts) == pytest.approx(4 * sigma * Ts**3, rel=1e-15)


def _lumped_wall_in_fire(fire: str) -> str:
    return _vessel_text(f"""
      wall:
        model: lumped
        layers: {{material: stainless-steel, thickness: 25 mm}}
        inside: {{model: natural}}
        outside:
          model: natural
          ambient: 20 degC
          emissivity: 0.8
{fire}
""", end="3 min")


def test_lumped_wall_biot_check_counts_the_fires_heat_flux():
    # source: Incropera 7th ed., sec. 5.1-5.2, eq. 5.10: a lumped wall needs Bi = h L/k < 0.1
    # for the coefficient acting on its faces. 25 mm of stainless steel (k = 17 W/(m K),
    # EN 12524): natural convection and radiation stay far below 0.1, but the API 521
    # pool fire without drainage (70 900 F A^0.82 W, SI form) on the exposed 9 m2 is
    # 48 kW/m2, whose black-flame coefficient (Incropera eq. 1.9) is 72 W/(m2 K) at 20 degC:
    # Bi = 0.105, and more as the wall heats
    from cvsim import load_scenario_text, run
    from cvsim.heat.walls import fire_equivalent_coefficient

    quiet = run(load_scenario_text(_lumped_wall_in_fire("")))
    assert quiet.ok and not any("Biot" in w for w in quiet.warnings)
    sc = load_scenario_text(_lumped_wall_in_fire("""
          fire: {model: pool, drainage_and_firefighting: inadequate, environment_factor: 1}
"""))
    res = run(sc)
    assert res.ok
    biot = [w for w in res.warnings if "Biot number" in w]
    assert len(biot) == 1 and "fire" in biot[0]
    area = sc.network.vessels[0].heat[0].fire.area
    q = 70900.0 * area**0.82 / area
    h = fire_equivalent_coefficient(q, 293.15)
    assert 0.1 < h * 0.025 / 17.0 < 0.2
