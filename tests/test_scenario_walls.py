"""Scenario keys of walls and fire: what a file builds, and the problems it reports."""
import math

import pytest

from cvsim.errors import ScenarioError
from cvsim.heat import geometry as geo
from cvsim.heat.definitions import FlameExposure, GasFire, PoolFire, Wall
from cvsim.heat.level import area_below
from cvsim.scenario import load_scenario_text

HEAD = """
title: walls
fluid: Hydrogen
vessels:
  tank:
    shape: {kind: cylinder, inner_diameter: 400 mm, length: 1.2 m, orientation: horizontal,
            heads: hemispherical}
    initial: {pressure: 20 barg, temperature: 15 degC}
    heat:
"""
TAIL = """
reservoirs:
  supply: {pressure: 400 barg, temperature: 15 degC}
links:
  fill: {from: supply, to: tank, device: orifice, diameter: 1.5 mm, discharge_coefficient: 0.9}
run: {end: 5 min}
"""


def load(heat: str, head=HEAD, tail=TAIL):
    return load_scenario_text(head + heat + tail)


def problems(heat: str, head=HEAD, tail=TAIL) -> list[str]:
    with pytest.raises(ScenarioError) as info:
        load(heat, head, tail)
    return [str(p) for p in info.value.problems]


def test_a_type_iv_wall_builds_with_layers_materials_and_jets():
    sc = load("""
      wall:
        model: layered
        layers:
          - {material: hdpe, thickness: 5 mm, divisions: 3}
          - material: {name: CFRP, density: 1550 kg/m3, heat_capacity: 1000 J/kg/K,
                       conductivity: 0.7 W/m/K}
            thickness: 20 mm
        inside: {model: natural+jet, inlet_diameter: 4 mm}
        outside: {model: fixed, coefficient: 4.5 W/m2/K, ambient: 15 degC}
""")
    (wall,) = sc.network.vessels[0].heat
    assert isinstance(wall, Wall)
    assert [la.divisions for la in wall.layers] == [3, 4]  # default 4 slices
    assert wall.layers[1].material.conductivity(300.0) == 0.7
    # source: EN 12524:2000 Table 1, high-density polyethylene 980 kg/m3 (as tabulated in
    # the ht library, ht.insulation; the same value test_materials.py checks against it)
    assert wall.layers[0].material.density == 980.0
    assert wall.thickness == pytest.approx(0.025)
    assert wall.inside.model == "natural+jet" and wall.inside.inlet_diameter == 0.004
    assert wall.convection_shape == "horizontal"
    assert wall.inside_length == pytest.approx(0.4) and wall.outside_length == pytest.approx(0.45)
    assert wall.initial_temperature is None  # the gas's
    assert wall.surface.a0 == pytest.approx(geo.cylinder(0.4, 1.2, "hemispherical")[1])
    echo = {r.key: r for r in sc.echo}
    assert echo["vessels.tank.heat.wall.temperatures"].value == 3 + 4 + 1
    assert echo["vessels.tank.heat.wall.layers[1].divisions"].note == "default"


def test_pool_fire_area_defaults_to_the_outside_within_the_fires_reach():
    sc = load("""
      wall:
        model: lumped
        layers: {material: carbon-steel, thickness: 10 mm}
        outside:
          model: natural
          ambient: 20 degC
          emissivity: 0.9
          fire: {model: pool, drainage_and_firefighting: inadequate, elevation: 7 m}
""")
    fire = sc.network.vessels[0].heat[0].fire
    assert isinstance(fire, PoolFire) and not fire.drainage
    # 0.6 m of the 0.42 m tall horizontal vessel is within 7.6 m: all of it is exposed
    whole = geo.wall_surface("cylinder", 0.4, 1.2, "hemispherical").area(0.01)
    assert fire.area == pytest.approx(whole, rel=1e-6)
    sc = load("""
      wall:
        model: lumped
        layers: {material: carbon-steel, thickness: 10 mm}
        outside:
          model: natural
          ambient: 20 degC
          fire: {model: pool, drainage_and_firefighting: adequate, elevation: 7.41 m}
""")
    fire = sc.network.vessels[0].heat[0].fire
    expected = area_below(0.19, "cylinder", 0.4, 1.2, "hemispherical", "horizontal", 0.01)
    assert fire.area == pytest.approx(expected, rel=1e-9) and fire.area < whole / 2


def test_flame_needs_every_value_and_gas_fire_uses_inside_dimensions():
    sc = load("""
      wall:
        model: layered
        layers: {material: steel, thickness: 8 mm}
        outside:
          model: insulated
          fire: {model: flame, flame_temperature: 900 degC, flame_emissivity: 0.8,
                 surface_emissivity: 0.85, convective_coefficient: 30 W/m2/K, area: 1 m2}
""")
    fire = sc.network.vessels[0].heat[0].fire
    assert isinstance(fire, FlameExposure) and fire.flame_temperature == pytest.approx(1173.15)
    found = problems("""
      wall:
        model: layered
        layers: {material: steel, thickness: 8 mm}
        outside: {model: insulated, fire: {model: flame, flame_temperature: 900 degC}}
""")
    for key in ("flame_emissivity", "surface_emissivity", "convective_coefficient"):
        assert any(key in p for p in found), key
    sc = load("""
      fire: {drainage_and_firefighting: adequate, environment_factor: 0.3}
""")
    (gas_fire,) = sc.network.vessels[0].heat
    assert isinstance(gas_fire, GasFire) and gas_fire.fire.environment_factor == 0.3
    assert gas_fire.fire.area == pytest.approx(geo.cylinder(0.4, 1.2, "hemispherical")[1])


@pytest.mark.parametrize("heat, key, words", [
    ("""
      wall: {model: lumped, layers: {material: steel, thickness: 5 mm, divisions: 3},
             outside: {model: insulated}}
""", "divisions", "lumped wall has one temperature"),
    ("""
      wall: {model: layered, layers: {material: unobtainium, thickness: 5 mm},
             outside: {model: insulated}}
""", "material", "not a material"),
    ("""
      wall: {model: layered, layers: {material: steel, thickness: 5 mm}, outside: {model: fixed,
             ambient: 10 degC}}
""", "outside.coefficient", "missing key 'coefficient'"),
    ("""
      wall: {model: layered, layers: {material: steel, thickness: 5 mm},
             outside: {model: natural, ambient: 10 degC}}
      fire: {drainage_and_firefighting: adequate}
""", "heat.fire", "wall.outside.fire"),
    ("""
      wall: {model: layered, layers: {material: steel, thickness: 5 mm}, inside: {coefficient:
             5 W/m2/K}, outside: {model: insulated}}
""", "inside.model", "missing key 'model'"),
    ("""
      wall: {model: layered, layers: {material: steel, thickness: 5 mm, divisions: 0},
             outside: {model: insulated}}
""", "divisions", "whole number"),
    ("""
      fire: {drainage_and_firefighting: adequate, elevation: 8 m}
""", "elevation", "entirely above the fire's reach"),
])
def test_wall_problems_name_the_key(heat, key, words):
    found = problems(heat)
    assert any(key in p and words in p for p in found), found


def test_a_wall_needs_the_vessels_shape():
    shape = HEAD[HEAD.index("    shape:"):HEAD.index("    initial:")]
    head = HEAD.replace(shape, "    volume: 150 L\n")
    found = problems("""
      wall: {model: lumped, layers: {material: steel, thickness: 5 mm}, outside: {model: insulated}}
""", head=head)
    assert any("needs the vessel's shape" in p for p in found)


def test_jets_need_a_diameter_when_a_link_has_no_bore():
    from cvsim.api import run_network

    tail = """
reservoirs:
  supply: {pressure: 400 barg, temperature: 15 degC}
links:
  pump: {from: supply, to: tank, device: fixed-flow, mass_flow: 1 g/s}
run: {end: 5 s}
"""
    sc = load("""
      wall: {model: lumped, layers: {material: steel, thickness: 5 mm},
             inside: {model: natural+jet}, outside: {model: insulated}}
""", tail=tail)
    with pytest.raises(ScenarioError, match="inlet_diameter"):
        run_network(sc.network)
    sc = load("""
      wall: {model: lumped, layers: {material: steel, thickness: 5 mm},
             inside: {model: natural+jet, inlet_diameter: 3 mm}, outside: {model: insulated}}
""", tail=tail)
    assert run_network(sc.network).ok
    assert math.isfinite(sc.network.vessels[0].heat[0].inside.inlet_diameter)
