"""Reading scenario files: the network built, every problem reported, overrides, docs."""
import hashlib
import math
import pickle
from pathlib import Path

import pytest

from cvsim import network as nw
from cvsim.errors import ScenarioError
from cvsim.heat import geometry
from cvsim.scenario import format_reference, load_scenario, load_scenario_text
from cvsim.scenario.reference import EXAMPLE
from cvsim.signals import Constant, Table

ROOT = Path(__file__).resolve().parents[1]

GOOD = """\
title: Nitrogen receiver depressured through a restriction orifice
fluid: Nitrogen
properties: real
atmosphere: {altitude: 1500 m}
vessels:
  receiver:
    volume: 1.5 m3
    initial: {pressure: 150 barg, temperature: 15 degC}
    heat:
      load: {table: [[0 s, 0 kW], [10 min, 5 kW]]}
      to_ambient: {ua: 50 W/K, ambient: 15 degC}
  buffer:
    shape: {kind: cylinder, inner_diameter: 1 m, length: 2 m, orientation: horizontal,
            heads: torispherical}
    initial: {pressure: 10 bar, temperature: 300 K}
    heat:
      to_ambient: {coefficient: 5 W/m2/K, ambient: 15 degC}
reservoirs:
  atmosphere: {pressure: 1 atm, temperature: 15 degC}
  supply: {pressure: {table: [[0 s, 10 bara], [60 s, 20 bara]]}, temperature: 20 degC}
links:
  vent:
    from: receiver
    to: atmosphere
    device: orifice
    diameter: 10 mm
    discharge_coefficient: 0.84
    closes_at: 10 min
  trim:
    from: receiver
    to: buffer
    device: orifice
    area: 20 mm2
    discharge_coefficient: 0.6
    flow_model: ideal-gas
    opens_at: 30 s
  compressor:
    from: supply
    to: buffer
    device: fixed-flow
    mass_flow: 100 kg/h
    delivery_temperature: 40 degC
    stop_below: 2 barg
  blower:
    from: atmosphere
    to: buffer
    device: fixed-flow
    flow: 500 Nm3/h
run:
  end: 15 min
  record_every: 2 s
  stop_when:
    - {vessel: receiver, pressure_below: 6.9 barg}
    - {vessel: buffer, temperature_above: 80 degC}
  solver: {method: BDF, relative_tolerance: 1e-7, max_step: 10 s}
"""

P_ATM_1500 = 101325.0 * (1 - 2.25577e-5 * 1500) ** 5.25588  # ISO 2533 at 1500 m [Pa]


@pytest.fixture(scope="module")
def good():
    return load_scenario_text(GOOD, "good.yaml")


def test_good_file_builds_the_network(good):
    net = good.network
    assert isinstance(net, nw.Network)
    assert net.title.startswith("Nitrogen receiver")
    assert net.fluid == nw.FluidSpec("Nitrogen", "real")
    assert net.atmosphere == pytest.approx(P_ATM_1500)
    assert net.node_names() == ("receiver", "buffer", "atmosphere", "supply")

    receiver, buffer = net.vessels
    assert receiver.geometry == nw.Geometry(volume=1.5)
    assert receiver.initial.pressure == pytest.approx(150e5 + P_ATM_1500)
    assert receiver.initial.temperature == pytest.approx(288.15)
    load, ambient = receiver.heat
    assert load == nw.HeatLoad("load", Table((0.0, 600.0), (0.0, 5000.0)))
    assert ambient == nw.AmbientExchange("to_ambient", 50.0, Constant(pytest.approx(288.15)))

    V, A, H = geometry.cylinder(1.0, 2.0, "torispherical", "horizontal")
    assert buffer.geometry.kind == "cylinder" and buffer.geometry.heads == "torispherical"
    assert buffer.geometry.volume == pytest.approx(V)
    assert buffer.geometry.inner_area == pytest.approx(A)
    assert buffer.geometry.height == pytest.approx(1.0)
    assert buffer.initial.pressure == pytest.approx(10e5)  # plain bar: absolute
    assert buffer.heat[0].ua == pytest.approx(5.0 * A)  # area defaults to the inner area

    atm, supply = net.reservoirs
    assert atm.pressure == Constant(101325.0)
    assert supply.pressure == Table((0.0, 60.0), (10e5, 20e5))
    assert supply.temperature == Constant(pytest.approx(293.15))


def test_good_file_links(good):
    vent, trim, compressor, blower = good.network.links
    assert (vent.source, vent.target) == ("receiver", "atmosphere")
    assert vent.device == nw.Orifice(area=pytest.approx(math.pi * 0.01**2 / 4),
                                     discharge_coefficient=0.84, flow_model="real-gas",
                                     open_from=0.0, open_until=600.0)
    assert trim.device == nw.Orifice(pytest.approx(20e-6), 0.6, "ideal-gas", 30.0, math.inf)
    assert compressor.device.mass_flow == Constant(pytest.approx(100 / 3600))
    assert compressor.device.delivery_temperature == pytest.approx(313.15)
    assert compressor.device.stop_below == pytest.approx(2e5 + P_ATM_1500)
    # 500 Nm3/h of nitrogen: 1.2504 kg/m3 at 0 degC, 101.325 kPa (CoolProp)
    rho = blower.device.mass_flow.value / (500 / 3600)
    assert rho == pytest.approx(1.2504, rel=1e-4)
    assert blower.device.delivery_temperature is None


def test_good_file_run_settings(good):
    run = good.network.run
    assert run.end_time == 900.0 and run.record_every == 2.0
    assert run.stop == (
        nw.StopCondition("receiver", "pressure", "below", pytest.approx(6.9e5 + P_ATM_1500)),
        nw.StopCondition("buffer", "temperature", "above", pytest.approx(353.15)),
    )
    assert (run.method, run.rtol, run.atol_scale, run.max_step) == ("BDF", 1e-7, 1e-9, 10.0)


def test_echo_shows_given_used_and_notes(good):
    rows = {r.key: r for r in good.echo}
    assert rows["atmosphere"].given == "{altitude: 1500 m}"
    assert "ISO 2533" in rows["atmosphere"].note
    p = rows["vessels.receiver.initial.pressure"]
    assert p.given == "150 barg" and p.unit == "Pa" and "gauge" in p.note
    assert "read as absolute" in rows["vessels.buffer.initial.pressure"].note
    assert rows["links.vent.flow_model"].note == "default"
    assert rows["run.solver.absolute_tolerance"].note == "default"
    assert rows["vessels.buffer.shape.volume"].value == pytest.approx(
        good.network.vessels[1].volume)
    assert rows["links.blower.flow.basis_density"].unit == "kg/m3"
    assert good.sha256 == hashlib.sha256(GOOD.encode()).hexdigest()
    assert good.source_name == "good.yaml" and good.source_text == GOOD


def test_load_from_file_and_the_docs_example(tmp_path):
    path = tmp_path / "example.yaml"
    path.write_text(EXAMPLE, encoding="utf-8")
    scenario = load_scenario(path)
    assert scenario.sha256 == hashlib.sha256(path.read_bytes()).hexdigest()
    assert scenario.network.vessels[0].geometry.heads == "2:1-ellipsoidal"
    flow = scenario.network.links[1].device.mass_flow
    assert flow.times == (0.0, 600.0, 600.0) and flow.values[:2] == (0.0, 0.0)


def test_vessel_without_links_is_a_note_not_a_problem():
    text = """
fluid: Air
vessels:
  alone: {volume: 50 L, initial: {pressure: 200 barg, temperature: 20 degC},
          heat: {load: 100 W}}
run: {end: 1 h}
"""
    scenario = load_scenario_text(text)
    notes = [r.note for r in scenario.echo if r.key == "vessels.alone"]
    assert notes and "no link" in notes[0]


def test_ideal_gas_model_and_standard_flow_density():
    text = """
fluid: N2
properties: ideal-gas
ideal_gas: {molar_mass: 28.0134 g/mol, heat_capacity: 1040 J/kg/K}
vessels:
  tank: {volume: 1 m3, initial: {pressure: 1 bara, temperature: 300 K}}
reservoirs:
  header: {pressure: 10 bara, temperature: 300 K}
links:
  feed: {from: header, to: tank, device: fixed-flow, flow: 100 m3/h,
         basis: {pressure: 1 atm, temperature: 20 degC}}
run: {end: 60 s}
"""
    net = load_scenario_text(text).network
    assert net.fluid == nw.FluidSpec("Nitrogen", "ideal-gas", pytest.approx(0.0280134),
                                     pytest.approx(1040.0))
    rho = 101325.0 * 0.0280134 / (8.314462618 * 293.15)
    assert net.links[0].device.mass_flow.value == pytest.approx(100 / 3600 * rho)


BAD = """\
title: many mistakes
fluid: Nitrogn
ideal_gas: {molar_mass: 28 g/mol}
vessels:
  tank:
    volume: 1.5 m3
    shape: {kind: sphere, inner_diameter: 1 m}
    initial: {pressure: -2 barg, temperature: 15}
  drum:
    shape: {kind: cylinder, inner_diameter: -1 m, length: 2 kg, heads: elliptical}
    initial: {pressure: 10 bara}
    heat:
      lod: 2 kW
  box:
    volume: 1 m3
    initial: {pressure: 2 bara, temperature: 0 K}
    heat: {to_ambient: {coefficient: 5 W/m2/K, ambient: 15 degC}}
reservoirs:
  air: {pressure: 1 atm, temperature: 15 degC}
  air2: {pressure: {table: [[0 s, 1 bara], [10 s, 2 bara], [5 s, 3 bara]]}, temperature: 15 degC}
  tank: {pressure: 1 atm, temperature: 15 degC}
links:
  vent:
    from: tnak
    to: air
    device: orifice
    diamter: 10 mm
    discharge_coefficient: 1.2
    opens_at: 10 s
    closes_at: 5 s
  loop: {from: drum, to: drum, device: orifice, area: 1 mm2, discharge_coefficient: 0.6}
  rr: {from: air, to: air2, device: valve}
  feed: {from: air, to: drum, device: fixed-flow,
         mass_flow: {table: [[0 s, 1 kg/h], [10 s, -1 kg/h]]}}
  feed2: {from: air, to: drum, device: fixed-flow, flow: 500 m3/h}
run:
  end: 0 s
  record_every: -1 s
  stop_when:
    - {vessel: tnk, pressure_below: 2 barg}
    - {vessel: drum, pressure_below: 2 barg, mass_below: 1 kg}
    - {vessel: air, pressure_below: 2 barg}
  solver: {method: Euler}
"""

EXPECTED_BAD = [  # (key, line, words in the message)
    ("fluid", 2, "did you mean 'Nitrogen'"),
    ("ideal_gas", 3, "only with 'properties: ideal-gas'"),
    ("vessels.tank.shape", 7, "only one of 'volume' or 'shape'"),
    ("vessels.tank.initial.pressure", 8, "vacuum"),
    ("vessels.tank.initial.temperature", 8, "missing unit"),
    ("vessels.drum.shape.inner_diameter", 10, "greater than 0"),
    ("vessels.drum.shape.length", 10, "is a mass, expected a length"),
    ("vessels.drum.shape.heads", 10, "did you mean '2:1-ellipsoidal'"),
    ("vessels.drum.initial.temperature", 11, "missing key 'temperature'"),
    ("vessels.drum.heat.lod", 13, "did you mean 'load'"),
    ("vessels.box.initial.temperature", 16, "absolute zero"),
    ("vessels.box.heat.to_ambient", 17, "needs an 'area'"),
    ("reservoirs.air2.pressure.table[2]", 20, "times must increase"),
    ("reservoirs.tank", 21, "both a vessel and a reservoir"),
    ("links.vent", 23, "give one of 'diameter' or 'area'"),
    ("links.vent.from", 24, "did you mean 'tank'"),
    ("links.vent.diamter", 27, "did you mean 'diameter'"),
    ("links.vent.discharge_coefficient", 28, "at most 1"),
    ("links.vent.closes_at", 30, "later than opens_at"),
    ("links.loop.to", 31, "two different nodes"),
    ("links.rr", 32, "two reservoirs"),
    ("links.rr.device", 32, "not one of: orifice, fixed-flow"),
    ("links.feed.mass_flow.table[1]", 34, "at least 0"),
    ("links.feed2.flow", 35, "needs its basis"),
    ("run.end", 37, "greater than 0"),
    ("run.record_every", 38, "greater than 0"),
    ("run.stop_when[0].vessel", 40, "did you mean 'tank'"),
    ("run.stop_when[1].mass_below", 41, "give only one of"),
    ("run.stop_when[2].vessel", 42, "is a reservoir"),
    ("run.solver.method", 43, "not one of"),
]


def test_all_problems_are_reported_with_keys_and_lines():
    with pytest.raises(ScenarioError) as info:
        load_scenario_text(BAD, "bad.yaml")
    problems = info.value.problems
    found = {(p.key, p.line): p.message for p in problems}
    for key, line, words in EXPECTED_BAD:
        assert (key, line) in found, f"no problem at {key} (line {line}); got {sorted(found)}"
        assert words in found[(key, line)], (key, found[(key, line)])
    assert len(problems) == len(EXPECTED_BAD)
    assert [p.line for p in problems] == sorted(p.line for p in problems)
    assert str(info.value).startswith(f"bad.yaml: {len(EXPECTED_BAD)} problems")
    again = pickle.loads(pickle.dumps(info.value))
    assert again.problems == info.value.problems


@pytest.mark.parametrize("text,line,words", [
    ("fluid: Nitrogen\nvessels:\n  a: {volume: 1 m3\nrun: {end: 1 s}\n", 4, "YAML syntax"),
    ("fluid: N2\n  bad: indent\n", 2, "mapping values are not allowed"),
    ("fluid: [a, b\n", 2, "YAML syntax"),
    ("", 1, "empty"),
    ("- a\n- b\n", 1, "must be a mapping"),
])
def test_bad_yaml_gives_a_problem_with_a_line(text, line, words):
    with pytest.raises(ScenarioError) as info:
        load_scenario_text(text)
    (problem,) = info.value.problems
    assert problem.line == line and words in problem.message


def test_repeated_keys_are_problems():
    text = GOOD.replace("    volume: 1.5 m3\n", "    volume: 1.5 m3\n    volume: 2 m3\n")
    with pytest.raises(ScenarioError) as info:
        load_scenario_text(text)
    (problem,) = info.value.problems
    assert (problem.key, problem.line) == ("vessels.receiver.volume", 8)


@pytest.mark.parametrize("text", [
    "fluid: N2\nvessels: 5\nrun: {end: 1 s}\n",
    "fluid: N2\nvessels: {a: 5}\nrun: [1, 2]\n",
    "fluid: 7\nvessels: {a: {volume: [1], initial: x}}\nrun: {end: {table: 3}}\n",
    "fluid: N2\nvessels: {a: {volume: 1 m3, initial: {pressure: {table: []}, temperature: {}}}}\n"
    "links: {x: {from: [a], to: {b: 1}, device: [orifice]}}\nrun: {end: 1 s, stop_when: 3}\n",
    "fluid: N2\natmosphere: 1 barg\nvessels: {'a.b': {volume: 1 m3}}\nrun: {end: 1 s}\n",
])
def test_malformed_files_give_problems_not_tracebacks(text):
    with pytest.raises(ScenarioError) as info:
        load_scenario_text(text)
    assert info.value.problems


def test_overrides_apply_before_validation():
    scenario = load_scenario_text(GOOD, overrides={
        "links.vent.diameter": "12 mm",
        "links.vent.discharge_coefficient": 0.6,
        "run.stop_when[0].pressure_below": "5 barg",
        "vessels.receiver.heat": "{load: 2 kW}",
    })
    vent = scenario.network.links[0].device
    assert vent.area == pytest.approx(math.pi * 0.012**2 / 4)
    assert vent.discharge_coefficient == 0.6
    assert scenario.network.run.stop[0].value == pytest.approx(5e5 + P_ATM_1500)
    assert scenario.network.vessels[0].heat == (nw.HeatLoad("load", Constant(2000.0)),)
    notes = {r.key: r.note for r in scenario.echo}
    assert notes["links.vent.diameter"].startswith("set by override")
    assert scenario.overrides["links.vent.diameter"] == "12 mm"


def test_unknown_override_paths_are_problems():
    with pytest.raises(ScenarioError) as info:
        load_scenario_text(GOOD, overrides={"links.vnt.diameter": "12 mm",
                                            "links.vent.diamter": "12 mm",
                                            "run.stop_when[7].vessel": "receiver",
                                            "links.trim.area": "-1 mm2"})
    found = {p.key: p.message for p in info.value.problems}
    assert "did you mean 'vent'" in found["links.vnt.diameter"]
    assert "did you mean 'diameter'" in found["links.vent.diamter"]
    assert "no item [7]" in found["run.stop_when[7].vessel"]
    assert "set by override" in found["links.trim.area"]
    assert len(found) == 4


# warnings a demo gives on purpose (its comments say so), by file name: none today
DEMO_WARNINGS_ON_PURPOSE: dict[str, tuple[str, ...]] = {}


@pytest.mark.parametrize("path", sorted((ROOT / "scenarios").glob("*.yaml")),
                         ids=lambda p: p.stem)
def test_no_demo_gives_a_reader_warning_it_does_not_mean(path):
    # the reader's warnings reach the user through the command line (run, check) but not
    # through cvsim.run's Result, so the demo tests that look at res.warnings cannot see
    # them: a false unit warning on a demo would go unnoticed without this test
    meant = DEMO_WARNINGS_ON_PURPOSE.get(path.name, ())
    unmeant = [w for w in load_scenario(path).warnings if not any(m in w for m in meant)]
    assert not unmeant


def test_docs_reference_is_up_to_date():
    on_disk = (ROOT / "docs" / "scenario-format.md").read_text(encoding="utf-8")
    assert on_disk == format_reference(), (
        "docs/scenario-format.md is stale: run python -m cvsim.scenario > docs/scenario-format.md")


def test_an_override_creates_a_missing_section_and_null_removes_a_key():
    scenario = load_scenario_text(GOOD, overrides={"run.solver.method": "BDF",
                                                   "run.record_every": "null"})
    assert scenario.network.run.method == "BDF"   # no 'solver:' section in the file
    notes = {r.key: r.note for r in scenario.echo}
    given = {r.key: r.given for r in scenario.echo}
    assert "set by override" in notes["run.solver.method"]
    # record_every removed: its default (1 s) applies and the echo says so
    assert scenario.network.run.record_every == 1.0
    assert "default" in notes["run.record_every"] and given["run.record_every"] == "1 s"


def test_an_override_mapping_for_a_section_is_read_and_null_on_a_required_key_is_a_problem():
    scenario = load_scenario_text(GOOD, overrides={"run.solver": "{method: BDF}"})
    assert scenario.network.run.method == "BDF"
    with pytest.raises(ScenarioError) as info:
        load_scenario_text(GOOD, overrides={"links.vent.diameter": "~"})
    (problem,) = info.value.problems
    assert problem.key == "links.vent" and "'diameter'" in problem.message


def test_null_on_a_key_that_is_not_there_is_a_problem_with_the_name_meant():
    # a misspelt key to remove: not silently ignored (the key meant would stay)
    with pytest.raises(ScenarioError) as info:
        load_scenario_text(GOOD, overrides={"links.vent.discharge_coefficent": "null"})
    (problem,) = info.value.problems
    assert problem.key == "links.vent.discharge_coefficent"
    assert "nothing to remove" in problem.message
    assert "did you mean 'discharge_coefficient'?" in problem.message
    # a section that is not there: nothing to remove, and nothing created on the way
    with pytest.raises(ScenarioError) as info:
        load_scenario_text(GOOD, overrides={"vessels.receiver.limits.design_pressure": "~"})
    (problem,) = info.value.problems
    assert problem.key == "vessels.receiver.limits.design_pressure"
    assert "nothing to remove: no key 'limits' in vessels.receiver" in problem.message


def test_a_misspelt_section_on_an_override_path_names_the_section_meant():
    # a section close to one in the file is not created: a likely typo
    with pytest.raises(ScenarioError) as info:
        load_scenario_text(GOOD, overrides={"links.vnet.diameter": "12 mm"})
    (problem,) = info.value.problems
    assert problem.key == "links.vnet.diameter"
    assert "no key 'vnet' in links; did you mean 'vent'?" in problem.message
    with pytest.raises(ScenarioError) as info:
        load_scenario_text(GOOD, overrides={"run.solvr.method": "BDF"})
    (problem,) = info.value.problems
    assert problem.key == "run.solvr.method"
    assert "no key 'solvr' in run; did you mean 'solver'?" in problem.message
    # a file without a solver section: the misspelt section is created, and the check
    # of the file reports it as an unknown key with the name meant
    solver = "  solver: {method: BDF, relative_tolerance: 1e-7, max_step: 10 s}\n"
    assert solver in GOOD
    with pytest.raises(ScenarioError) as info:
        load_scenario_text(GOOD.replace(solver, ""), overrides={"run.solvr.method": "BDF"})
    (problem,) = info.value.problems
    assert problem.key == "run.solvr"
    assert "unknown key 'solvr' in run; did you mean 'solver'?" in problem.message


def test_the_format_reference_example_runs_to_a_real_stop():
    """The example in docs/scenario-format.md: vented for 10 min, then refilled by the
    compressor until 100 barg; not a run that ends at t = 0."""
    from cvsim.api import run
    from cvsim.scenario.reference import EXAMPLE
    result = run(load_scenario_text(EXAMPLE))
    assert result.status == "stopped" and "pressure above" in result.message
    s = result.summary()
    assert result.time[-1] > 600.0                      # after the compressor starts
    assert s["links"]["compressor"]["max_mass_flow_time_s"] >= 600.0  # its table: 0 until 10 min
    assert s["vessels"]["receiver"]["max_pressure_Pa"] >= 100e5 + 101325.0 - 1.0


STOP_AT_START = """
title: Stop met at the start
fluid: Nitrogen
properties: ideal-gas
ideal_gas: {molar_mass: 28.0134 g/mol, heat_capacity: 1040 J/kg/K}
vessels:
  v: {volume: 1 m3, initial: {pressure: 150 barg, temperature: 15 degC}}
run:
  end: 10 s
  stop_when: {vessel: v, pressure_above: 100 barg%s}
"""


def test_a_stop_condition_met_at_the_start_is_a_problem_unless_asked_for():
    from cvsim.api import run
    with pytest.raises(ScenarioError) as info:
        load_scenario_text(STOP_AT_START % "")
    (problem,) = info.value.problems
    assert problem.key == "run.stop_when.pressure_above" or problem.key.endswith(
        "pressure_above")
    assert "already met at the start" in problem.message and "150 bar g" in problem.message
    asked = run(load_scenario_text(STOP_AT_START % ", if_met_at_start: stop"))
    assert asked.status == "stopped" and asked.time[-1] == 0.0


def test_the_solver_refuses_a_stop_met_at_the_start_of_a_network_built_in_code():
    from cvsim.api import run_network
    from cvsim import network as nw
    net = nw.Network(
        title="t", fluid=nw.FluidSpec("Nitrogen", "ideal-gas", 0.0280134, 1040.0),
        vessels=(nw.Vessel("v", nw.Geometry(1.0), nw.InitialState(20e5, 288.15)),),
        run=nw.RunSettings(end_time=10.0, record_every=1.0,
                           stop=(nw.StopCondition("v", "pressure", "above", 10e5),)))
    result = run_network(net)
    assert result.status == "failed" and "already met at the start" in result.message
    import dataclasses
    stop = dataclasses.replace(net.run.stop[0], at_start="stop")
    ok = run_network(dataclasses.replace(net, run=dataclasses.replace(net.run, stop=(stop,))))
    assert ok.status == "stopped"
