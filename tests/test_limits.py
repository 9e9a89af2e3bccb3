"""Design-limit checks: accumulation, minimum metal temperature, depressuring target."""
import math

import numpy as np
import pytest

from cvsim import network as nw
from cvsim.api import run_network
from cvsim.cli import main
from cvsim.flow.nozzle import critical_flow_function
from cvsim.limits import ACCUMULATION, allowed_pressure, check_vessel, guideline_target
from cvsim.scenario import load_scenario_text

from conftest import M_AIR, R_U, blowdown_network, orifice_area

ATM = 101325.0
PSI = 6894.757


def test_allowed_accumulation_percentages():
    # source: ASME BPVC VIII-1 UG-125(c) and API 520 Part I: 10 % single device, 16 %
    # several devices, 21 % fire (percentages also in shared/references.md from a
    # relief-valve engineering handbook citing API); from memory for the 3 psi / 4 psi floor
    assert ACCUMULATION["single-device"][0] == 0.10
    assert ACCUMULATION["multiple-devices"][0] == 0.16
    assert ACCUMULATION["fire"][0] == 0.21
    design = ATM + 100 * PSI
    assert allowed_pressure(design, ATM, 0.10) - ATM == pytest.approx(110 * PSI)
    # low design pressure: 3 psi floor governs (15 psig + 3 psi = 18 psig)
    low = ATM + 15 * PSI
    p = allowed_pressure(low, ATM, *ACCUMULATION["single-device"])
    assert (p - ATM) / PSI == pytest.approx(18.0, rel=1e-4)


def test_depressuring_guideline_target():
    # source: API 521 depressuring guideline, 690 kPa g (100 psig) or 50 % of design
    # gauge pressure whichever is lower (secondary sources; common practice)
    assert guideline_target(ATM + 30e5, ATM) - ATM == pytest.approx(690e3)
    assert guideline_target(ATM + 10e5, ATM) - ATM == pytest.approx(5e5)


def test_checks_report_margin_time_and_state():
    t = np.array([0.0, 10.0, 20.0, 30.0])
    p = ATM + np.array([10e5, 8e5, 6e5, 4e5])
    T = np.array([288.0, 260.0, 240.0, 230.0])
    lim = nw.VesselLimits(design_pressure=ATM + 12e5, accumulation=0.10,
                          accumulation_case="single-device", min_metal_temperature=243.15,
                          depressure_to=ATM + 5e5, depressure_within=20.0,
                          depressure_basis="stated pressure")
    checks = {c.quantity + (c.name[:9] if c.quantity == "temperature" else ""): c
              for c in check_vessel("v", lim, ATM, t, p, T)}
    pres = checks["pressure"]
    assert pres.met and pres.margin == pytest.approx(ATM + 13.2e5 - p[0])
    cold = checks["temperaturelowest me"]
    assert not cold.met and cold.actual == 230.0 and cold.time == 30.0
    dep = checks["time"]
    assert not dep.met and dep.actual == pytest.approx(25.0)  # 6 -> 4 bar g, linear
    assert dep.margin == pytest.approx(-5.0)


def test_depressuring_time_matches_closed_form(air14):
    # source: closed form of a perfect-gas choked adiabatic discharge (docs/theory.md,
    # Bar-Meir, Fundamentals of Compressible Fluid Mechanics, ch. 11):
    # t(p) = 2 tau/(k-1) ((p/p0)^(-(k-1)/(2k)) - 1)
    k, V, d, cd, p0, T0 = 1.4, 0.5, 0.008, 0.8, 50e5, 300.0
    target = 8e5
    net = blowdown_network(air14, p0, T0, volume=V, d=d, cd=cd, flow_model="ideal-gas",
                           p_stop=3e5, p_back=1e5, rtol=1e-8)
    lim = nw.VesselLimits(depressure_to=target, depressure_within=60.0)
    v = net.vessels[0]
    import dataclasses
    net = dataclasses.replace(net, vessels=(dataclasses.replace(v, limits=lim),))
    res = run_network(net)
    tau = V / (cd * orifice_area(d) * critical_flow_function(k) * math.sqrt(R_U / M_AIR * T0))
    t_closed = 2 * tau / (k - 1) * ((target / p0) ** (-(k - 1) / (2 * k)) - 1)
    (check,) = res.limits
    assert check.actual == pytest.approx(t_closed, rel=1e-3)
    assert check.met == (t_closed <= 60.0)


SCENARIO = """
title: limits test
fluid: Nitrogen
vessels:
  tank:
    volume: 0.2 m3
    initial: {pressure: 60 barg, temperature: 20 degC}
    limits:
      design_pressure: 66 barg
      accumulation: fire
      min_metal_temperature: -46 degC
      max_temperature: 60 degC
      depressure: {to: 50 %, within: 2 min}
reservoirs:
  air: {pressure: 1 atm, temperature: 20 degC}
links:
  vent: {from: tank, to: air, device: orifice, diameter: 6 mm, discharge_coefficient: 0.84}
run: {end: 10 min, stop_when: [{vessel: tank, pressure_below: 5 barg}]}
"""


def test_limits_from_a_scenario_and_exit_status(tmp_path, capsys):
    sc = load_scenario_text(SCENARIO)
    lim = sc.network.vessels[0].limits
    assert lim.accumulation == 0.21 and lim.accumulation_case == "fire"
    assert lim.depressure_to == pytest.approx(sc.network.atmosphere + 33e5)
    path = tmp_path / "s.yaml"
    path.write_text(SCENARIO)
    code = main(["run", str(path), "--out", str(tmp_path / "o"), "--no-plots",
                 "--fail-on-limits"])
    out = capsys.readouterr()
    assert "Design limits" in out.out
    assert code == 3  # the gas falls below -46 degC in this adiabatic blowdown
    assert "CROSSED" in (tmp_path / "o" / "summary.txt").read_text()


def test_limit_input_errors_name_the_key():
    from cvsim.errors import ScenarioError
    bad = SCENARIO.replace("      design_pressure: 66 barg\n", "").replace(
        "accumulation: fire", "accumulation: lots")
    with pytest.raises(ScenarioError) as err:
        load_scenario_text(bad)
    text = str(err.value)
    assert "vessels.tank.limits.accumulation" in text
    assert "vessels.tank.limits.depressure" in text


def test_every_check_has_a_short_stable_key():
    # the keys name the scenario's limits: keys, so that sweep columns and target-seeking
    # requirements can refer to a check (cvsim.outcomes)
    t = np.array([0.0, 10.0])
    lim = nw.VesselLimits(design_pressure=ATM + 12e5, accumulation=0.10,
                          min_metal_temperature=243.15, max_temperature=330.0,
                          depressure_to=ATM + 5e5, depressure_within=20.0)
    walls = {"v.wall.inner": np.array([290.0, 280.0])}
    keys = [c.key for c in check_vessel("v", lim, ATM, t, ATM + np.array([10e5, 4e5]),
                                        np.array([288.0, 250.0]), walls)]
    assert keys == ["design_pressure", "min_metal_temperature", "min_metal_temperature.gas",
                    "max_temperature", "max_temperature.wall", "depressure"]


def test_one_maximum_temperature_check_per_wall_states_where_it_occurs():
    """A layered wall records its surfaces and every node; the limit on its highest
    temperature is one check, at the hottest of them (brute force here)."""
    t = np.array([0.0, 10.0, 20.0])
    lim = nw.VesselLimits(max_temperature=400.0)
    walls = {"v.wall.inner_temperature": np.array([300.0, 390.0, 395.0]),
             "v.wall.outer_temperature": np.array([300.0, 420.0, 410.0]),
             **{f"v.wall.node{i}_temperature": np.array([300.0, 380.0 + 5 * i, 390.0])
                for i in range(5)}}
    checks = check_vessel("v", lim, ATM, t, np.full(3, ATM), np.array([290.0, 300.0, 305.0]),
                          walls)
    assert [c.key for c in checks] == ["max_temperature", "max_temperature.wall"]
    wall = checks[1]
    hottest = max((float(v.max()), k) for k, v in walls.items())
    assert wall.actual == hottest[0] == 420.0 and wall.time == 10.0 and wall.crossed
    assert "outside surface" in wall.note


# ------------------------------------- the minimum design metal temperature is a metal one

WALLED_BLOWDOWN = """
title: blowdown of a steel vessel
fluid: Nitrogen
vessels:
  v:
    shape: {kind: cylinder, inner_diameter: 1.0 m, length: 1.5 m, orientation: vertical,
            heads: 2:1-ellipsoidal}
    initial: {pressure: 100 barg, temperature: 15 degC}
    heat:
      wall:
        model: layered
        layers: {material: carbon-steel, thickness: 40 mm, divisions: 3}
        inside: {model: natural}
        outside: {model: natural, ambient: 15 degC}
    limits: {min_metal_temperature: -29 degC}
reservoirs:
  air: {pressure: 1 atm, temperature: 15 degC}
links:
  vent: {from: v, to: air, device: orifice, diameter: 15 mm, discharge_coefficient: 0.84}
run: {end: 20 min, record_every: 10 s, stop_when: [{vessel: v, pressure_below: 5 barg}]}
"""


def test_mdmt_binds_on_the_metal_and_the_gas_is_shown_for_information(tmp_path):
    # source: ASME BPVC VIII-1 UG-20(b) and UCS-66: the minimum design metal temperature is
    # the lowest temperature of the metal (UCS-66 rates material and thickness); with the
    # wall modelled, the gas below -29 degC (-20 degF, UG-20(f)) is not a crossed limit
    from cvsim import run
    from cvsim.outputs import summary_text
    from cvsim.study.outcomes import outcome_values
    from cvsim.study.seek import parse_requirement

    res = run(load_scenario_text(WALLED_BLOWDOWN))
    assert res.status == "stopped"
    metal, gas = res.limits
    assert metal.key == "min_metal_temperature" and not metal.informative and metal.met
    assert metal.actual == pytest.approx(np.min(res["v.wall.inner_temperature"]), abs=1e-9)
    assert gas.key == "min_metal_temperature.gas" and gas.informative
    assert gas.actual < 243.15 and not gas.crossed and gas.state == "information"
    assert res.limits_crossed == [] and res.limits_counted == [metal]
    assert res.summary()["limits_crossed"] == 0
    text = summary_text(res)
    assert "[info   ]" in text and "for information only" in text and "0 CROSSED" in text
    # target seeking ('--meet limits') sees the metal, not the gas
    outcomes, values = outcome_values(res)
    names = {o.name for o in outcomes}
    assert "v.limit.min_metal_temperature.met" in names
    assert "v.limit.min_metal_temperature.gas.met" not in names
    assert "v.limit.min_metal_temperature.gas.margin" in names  # still shown
    units = {o.name: o.unit for o in outcomes}
    checks = parse_requirement("limits", outcomes, res.network).check(values, units)
    assert [c[0] for c in checks] == ["v.limit.min_metal_temperature"] and checks[0][1]


def test_without_a_wall_the_gas_stands_in_for_the_metal_and_says_so():
    # source: ASME VIII-1 UCS-66 (a metal temperature); common practice, no source: in a
    # blowdown the gas is colder than the wall, so the gas is a conservative stand-in
    from cvsim import run
    from cvsim.outputs import summary_text

    no_wall = WALLED_BLOWDOWN.replace("""    heat:
      wall:
        model: layered
        layers: {material: carbon-steel, thickness: 40 mm, divisions: 3}
        inside: {model: natural}
        outside: {model: natural, ambient: 15 degC}
""", "")
    res = run(load_scenario_text(no_wall))
    (check,) = res.limits
    assert not check.informative and not check.met and check.crossed
    assert check.actual == pytest.approx(np.min(res.fine("v.temperature")), abs=1e-6)
    assert "stand-in" in check.note and "no wall is modelled" in check.note
    assert "stand-in" in summary_text(res)


def test_a_blowdown_from_the_first_instant_is_timed_from_zero():
    # the solver's first accepted step lies after t = 0; depressuring started at 0
    from cvsim import run
    res = run(load_scenario_text(SCENARIO))
    dep = next(c for c in res.limits if c.key == "depressure")
    assert "t = 0 s" in dep.note
    assert dep.actual == dep.time


# --------------------------------- the depressuring guideline: its basis and its start

def test_depressuring_start_is_the_last_pressure_peak_before_the_target():
    # definition: API 521 times the depressuring guideline from the start of depressuring
    # (from memory; common practice). The start is where the last fall began.
    from cvsim.limits import depressuring_start
    t = np.arange(0.0, 10.0)
    falling = 10.0 - t
    assert depressuring_start(t, falling, 7.5) == 0.0
    idle = np.array([9, 9, 9, 9, 8, 7, 6, 5, 4, 3], float)   # valve opens at t = 3
    assert depressuring_start(t, idle, 8.0) == 3.0
    fire = np.array([5, 6, 7, 6.5, 6.8, 7.0, 6, 5, 4, 3], float)  # relief, then valve at 5
    assert depressuring_start(t, fire, 8.5) == 5.0
    # repeated times (an event) do not stop the walk back
    t2 = np.array([0, 1, 2, 2, 3, 4], float)
    assert depressuring_start(t2, np.array([6, 5, 4, 4, 3, 2], float), 3.5) == 0.0
    assert depressuring_start(t, falling, float("nan")) == 0.0  # not reached: last fall


def test_depressuring_time_counts_from_the_valve_opening(air14):
    # source: closed form of a perfect-gas choked adiabatic discharge (Bar-Meir, Fundamentals
    # of Compressible Fluid Mechanics, ch. 11; docs/theory.md), counted from the opening of
    # the valve at 100 s (API 521: from the start of depressuring)
    import dataclasses
    k, V, d, cd, p0, T0, t_open = 1.4, 0.5, 0.008, 0.8, 50e5, 300.0, 100.0
    target = 8e5
    net = blowdown_network(air14, p0, T0, volume=V, d=d, cd=cd, flow_model="ideal-gas",
                           p_stop=3e5, p_back=1e5, rtol=1e-8)
    link = dataclasses.replace(net.links[0], device=dataclasses.replace(
        net.links[0].device, open_from=t_open))
    lim = nw.VesselLimits(depressure_to=target, depressure_within=60.0)
    net = dataclasses.replace(net, links=(link,), vessels=(
        dataclasses.replace(net.vessels[0], limits=lim),))
    res = run_network(net)
    tau = V / (cd * orifice_area(d) * critical_flow_function(k) * math.sqrt(R_U / M_AIR * T0))
    t_closed = 2 * tau / (k - 1) * ((target / p0) ** (-(k - 1) / (2 * k)) - 1)
    (check,) = res.limits
    assert check.actual == pytest.approx(t_closed, rel=1e-3)
    assert check.time == pytest.approx(t_open + t_closed, rel=1e-3)
    assert "t = 100 s" in check.note
    # a stated start overrides the one found from the run
    stated = dataclasses.replace(lim, depressure_start=0.0)
    net0 = dataclasses.replace(net, vessels=(dataclasses.replace(net.vessels[0],
                                                                 limits=stated),))
    (check0,) = run_network(net0).limits
    assert check0.actual == pytest.approx(t_open + t_closed, rel=1e-3)
    assert "stated" in check0.note


def test_guideline_states_its_basis_and_warns_for_thin_walls():
    # source: API 521 depressuring guideline, meant for vessels with walls about 25 mm
    # (1 in) thick or more; thinner walls need faster depressuring (from memory; secondary
    # sources, common practice)
    from cvsim.limits import GUIDELINE_SOURCE
    assert "25 mm" in GUIDELINE_SOURCE and "start of depressuring" in GUIDELINE_SOURCE
    t = np.array([0.0, 10.0, 20.0])
    p = ATM + np.array([20e5, 10e5, 5e5])
    T = np.full(3, 280.0)
    lim = nw.VesselLimits(design_pressure=ATM + 20e5, depressure_to=ATM + 6.9e5,
                          depressure_within=900.0, depressure_basis="API 521 guideline")
    thin, = check_vessel("v", lim, ATM, t, p, T, wall_thickness=0.012)[1:]
    thick, = check_vessel("v", lim, ATM, t, p, T, wall_thickness=0.040)[1:]
    assert "12 mm, thinner than the about 25 mm" in thin.note
    assert "thinner" not in thick.note and thick.practice == GUIDELINE_SOURCE
    bare, = check_vessel("v", lim, ATM, t, p, T)[1:]
    assert "no wall modelled" in bare.note


def test_guideline_target_with_a_stated_start_from_a_scenario():
    sc = load_scenario_text(SCENARIO.replace("depressure: {to: 50 %, within: 2 min}",
                                             "depressure: {to: guideline, within: 10 min, "
                                             "from: 30 s}"))
    lim = sc.network.vessels[0].limits
    assert lim.depressure_start == 30.0 and lim.depressure_within == 600.0
    assert lim.depressure_to == pytest.approx(sc.network.atmosphere + 690e3)
