"""`cvsim check` refuses a device that cannot model the liquid it will pass (issue 8)."""
import pytest

from cvsim import load_scenario_text
from cvsim.errors import ScenarioError

BASE = """
title: liquid service
fluid: FLUID
properties: MODEL
vessels:
  tank:
    volume: 2 m3
    initial: INITIAL
reservoirs:
  out: {pressure: 1 atm, temperature: 20 degC}
links:
  vent: {from: tank, to: out, device: DEVICE, DRAWS}
run: {end: 1 s, record_every: 1 s}
"""
ORIFICE_IDEAL = "orifice, diameter: 5 mm, discharge_coefficient: 0.8, flow_model: ideal-gas"
ORIFICE_REAL = "orifice, diameter: 5 mm, discharge_coefficient: 0.8"
TWO_PHASE = "{temperature: 20 degC, liquid_fraction: 60 %}"


def scenario(device, draws="draws: liquid", initial=TWO_PHASE, fluid="Propane",
             model="real"):
    return (BASE.replace("DEVICE", device).replace("DRAWS", draws)
            .replace("INITIAL", initial).replace("FLUID", fluid).replace("MODEL", model))


def problems(text) -> str:
    with pytest.raises(ScenarioError) as err:
        load_scenario_text(text)
    return str(err.value)


def test_perfect_gas_nozzle_drawing_liquid_is_refused_with_what_to_do():
    text = problems(scenario(ORIFICE_IDEAL))
    assert "links.vent" in text and "passes liquid" in text
    assert "flow_model: real-gas" in text


def test_liquid_full_vessel_is_noticed_without_draws():
    # CO2 at 60 barg and 20 degC is liquid (issue 8 item 6): the outlet passes liquid
    # whatever it draws
    text = problems(scenario(ORIFICE_IDEAL, draws="draws: vapour",
                             initial="{pressure: 60 barg, temperature: 20 degC}",
                             fluid="CarbonDioxide"))
    assert "holds liquid only" in text and "links.vent" in text


def test_draws_liquid_needs_real_fluid_properties():
    text = problems(scenario(ORIFICE_IDEAL, initial="{pressure: 5 barg, temperature: 20 degC}",
                             fluid="Nitrogen", model="ideal-gas"))
    assert "links.vent.draws" in text and "properties: real" in text


def test_devices_that_model_liquid_pass_and_say_how():
    sc = load_scenario_text(scenario(ORIFICE_REAL))
    rows = {r.key: r for r in sc.echo}
    assert "homogeneous-equilibrium" in rows["links.vent.liquid_service"].used
    relief = ("relief-valve, set_pressure: 15 barg, blowdown: 7 %, orifice_letter: D")
    sc = load_scenario_text(scenario(relief))
    assert "API 520 Part I liquid" in {r.key: r for r in sc.echo}[
        "links.vent.liquid_service"].used
    # drawing vapour from the same vessel passes gas: no liquid-service row
    sc = load_scenario_text(scenario(ORIFICE_IDEAL, draws="draws: vapour"))
    assert "links.vent.liquid_service" not in {r.key for r in sc.echo}


def test_reverse_flow_from_a_liquid_reservoir_is_noticed():
    text = BASE.replace("FLUID", "Water").replace("MODEL", "real").replace(
        "INITIAL", "{pressure: 1 bara, temperature: 20 degC}").replace(
        "DEVICE", ORIFICE_IDEAL).replace(", DRAWS", "").replace(
        "out: {pressure: 1 atm, temperature: 20 degC}",
        "out: {pressure: 5 barg, temperature: 20 degC}")
    assert "reverse flow would come from the liquid in its 'to' reservoir" in problems(text)
