"""Check valve, bursting disc, time-varying reservoirs, equalisation, cascade sequences,
and the messages a user gets for mistakes in the keys of these devices."""
import math

import numpy as np
import pytest

from cvsim import network as nw
from cvsim.api import run_network
from cvsim.errors import ScenarioError
from cvsim.flow.nozzle import ideal_gas_mass_flux
from cvsim.scenario import load_scenario_text
from cvsim.signals import Constant, Table

from conftest import R_U, ideal_air, orifice_area

T0 = 300.0
AIR = ideal_air(1.4)


def vessel(name, volume, p, T=T0, heat=()):
    return nw.Vessel(name, nw.Geometry(volume), nw.InitialState(p, T), heat=heat)


def net(vessels, reservoirs, links, end, sequences=(), rtol=1e-8, method="LSODA",
        record_every=1.0, stop=()):
    return nw.Network(title="test", fluid=AIR, vessels=tuple(vessels),
                      reservoirs=tuple(reservoirs), links=tuple(links), sequences=sequences,
                      run=nw.RunSettings(end_time=end, record_every=record_every, rtol=rtol,
                                         method=method, stop=stop))


# --------------------------------------------------------------- check valve

def test_check_valve_blocks_reverse_flow_to_zero():
    check = nw.CheckValve(orifice_area(0.005), 0.8, cracking_pressure=0.2e5)
    res = run_network(net([vessel("low", 1.0, 5e5)],
                          [nw.Reservoir("high", Constant(10e5), Constant(T0))],
                          [nw.Link("nrv", "low", "high", check)], end=60.0))
    assert res.ok
    assert np.all(res.fine("nrv.mass_flow") == 0.0)
    assert np.all(res["nrv.opening"] == 0.0)
    assert res["low.pressure"] == pytest.approx(5e5, rel=1e-12)


def test_check_valve_opens_at_cracking_pressure_and_shuts_when_the_supply_falls_away():
    # supply rises from 10 to 20 bar a over 10 s, holds, then falls to 5 bar a at 60 s
    supply = Table((0.0, 10.0, 40.0, 60.0), (10e5, 20e5, 20e5, 5e5))
    crack = 0.5e5
    check = nw.CheckValve(orifice_area(0.004), 0.8, cracking_pressure=crack)
    res = run_network(net([vessel("tank", 0.2, 10e5)],
                          [nw.Reservoir("supply", supply, Constant(T0))],
                          [nw.Link("nrv", "supply", "tank", check)], end=100.0))
    assert res.ok
    opened = [t for t, e in res.events if "check valve opens" in e]
    shut = [t for t, e in res.events if "check valve shuts" in e]
    assert len(opened) == 1 and len(shut) == 1
    # it opens when the supply is the cracking pressure above the tank (still at 10 bar a):
    # 10 bar + 10 bar/10 s * t = 10.5 bar -> t = 0.5 s
    assert opened[0] == pytest.approx(0.5, rel=1e-6)
    # it shuts while the supply falls, when the supply meets the tank's pressure
    i = np.searchsorted(res.time, shut[0])
    assert res["supply.pressure"][i] == pytest.approx(res["tank.pressure"][i], rel=1e-6)
    assert np.min(res.fine("nrv.mass_flow")) >= 0.0  # never backwards
    after = res.time > shut[0] + 1e-9
    assert np.all(res["nrv.mass_flow"][after] == 0.0)
    assert res["tank.pressure"][after] == pytest.approx(res["tank.pressure"][i], rel=1e-9)


# ------------------------------------------------------------- bursting disc

def test_bursting_disc_bursts_once_and_never_recloses():
    disc = nw.BurstingDisc(orifice_area(0.02), 0.62, burst_pressure=15e5)
    res = run_network(net([vessel("drum", 1.0, 10e5)],
                          [nw.Reservoir("plant", Constant(50e5), Constant(T0)),
                           nw.Reservoir("atmosphere", Constant(1e5), Constant(T0))],
                          [nw.Link("feed", "plant", "drum",  # runs for 30 s, then stops
                                   nw.FixedFlow(Table((0.0, 30.0, 30.0), (0.2, 0.2, 0.0)))),
                           nw.Link("disc", "drum", "atmosphere", disc)], end=120.0))
    assert res.ok
    bursts = [t for t, e in res.events if "bursts" in e]
    assert len(bursts) == 1
    t_b = bursts[0]
    i = np.searchsorted(res.time, t_b)
    assert res["drum.pressure"][i] == pytest.approx(15e5, rel=1e-9)
    after = res.time > t_b + 1e-9
    assert np.all(res["disc.opening"][after] == 1.0)
    assert np.all(res["disc.opening"][res.time < t_b - 1e-9] == 0.0)
    assert res["drum.pressure"][-1] < 1.2e5  # it vents down to the atmosphere, still open
    # the open disc flows as an orifice: Cd A G of the ideal-gas nozzle at the recorded state
    # (a real-gas nozzle on an ideal-gas fluid reproduces the ideal-gas form)
    j = len(res.time) - 1
    g, _ = ideal_gas_mass_flux(res["drum.pressure"][j], res["drum.density"][j], 1.4, 1e5)
    assert res["disc.mass_flow"][j] == pytest.approx(0.62 * orifice_area(0.02) * g, rel=1e-6)
    assert res.summary()["links"]["disc"]["burst_at_s"] == pytest.approx(t_b)


# ---------------------------------------------------- time-varying reservoir

RAMP = """
title: Cylinder filled from a supply that ramps its pressure, pre-cooled gas
fluid: Hydrogen
properties: ideal-gas
ideal_gas: {molar_mass: 2.016 g/mol, heat_capacity: 14300 J/kg/K}
vessels:
  cylinder: {volume: 50 L, initial: {pressure: 20 bara, temperature: 20 degC}}
reservoirs:
  supply:
    pressure: {table: [[0 s, 20 bara], [2 min, 350 bara]]}
    temperature: -40 degC
links:
  nozzle: {from: supply, to: cylinder, device: orifice, diameter: 3 mm,
           discharge_coefficient: 0.9}
run: {end: 3 min, record_every: 1 s, solver: {relative_tolerance: 1e-9}}
"""


def test_supply_ramping_its_pressure_with_precooled_gas_end_to_end():
    # source: mass and energy balances of an adiabatic rigid tank filled with gas of constant
    # enthalpy (Cengel & Boles, Thermodynamics: An Engineering Approach, ch. 5, charging of a
    # rigid tank): m2 u2 - m1 u1 = (m2 - m1) h_line holds whatever the line pressure does, so
    # for a perfect gas T2 = P2 / ((P2 - P1)/(k T_line) + P1/T1).
    scenario = load_scenario_text(RAMP)
    supply = scenario.network.reservoirs[0]
    assert supply.pressure == Table((0.0, 120.0), (20e5, 350e5))
    assert supply.temperature == Constant(pytest.approx(233.15))
    res = run_network(scenario.network)
    assert res.ok
    t = res.time
    assert res["supply.pressure"] == pytest.approx(np.interp(t, [0, 120], [20e5, 350e5]))
    assert np.all(res["supply.temperature"] == pytest.approx(233.15))
    p = res["cylinder.pressure"]
    assert np.all(p <= res["supply.pressure"] * (1 + 1e-12))   # it follows the ramp from below
    assert p[-1] == pytest.approx(350e5, rel=1e-3)              # and catches up once it holds
    R = R_U / 2.016e-3
    k = 14300.0 / (14300.0 - R)
    P1, T1, T_line = 20e5, 293.15, 233.15
    closed = p / ((p - P1) / (k * T_line) + P1 / T1)
    assert np.max(np.abs(res["cylinder.temperature"] / closed - 1.0)) <= 1e-7


# -------------------------------------------------------------- equalisation

V1, V2 = 0.5, 1.5
P1, P2 = 50e5, 5e5
TA, TB = 320.0, 280.0


def pair(heat_a=(), heat_b=(), method="LSODA"):
    return net([vessel("a", V1, P1, TA, heat_a), vessel("b", V2, P2, TB, heat_b)], [],
               [nw.Link("valve", "a", "b", nw.Orifice(orifice_area(0.004), 0.8))],
               end=1500.0, method=method, record_every=5.0)


def test_adiabatic_equalisation_of_two_ideal_gas_vessels():
    # closed form: rigid adiabatic pair of a perfect gas with constant cv: total U =
    # (p1 V1 + p2 V2)/(k - 1) is conserved, so sum(p V) is constant at every instant and the
    # common final pressure is p_f = (p1 V1 + p2 V2)/(V1 + V2), whatever the temperatures
    res = run_network(pair())
    assert res.ok
    pv = res["a.pressure"] * V1 + res["b.pressure"] * V2
    assert np.max(np.abs(pv / (P1 * V1 + P2 * V2) - 1.0)) <= 1e-12
    p_f = (P1 * V1 + P2 * V2) / (V1 + V2)
    assert res["a.pressure"][-1] == pytest.approx(p_f, rel=1e-6)
    assert res["b.pressure"][-1] == pytest.approx(p_f, rel=1e-6)
    assert abs(res["a.temperature"][-1] - res["b.temperature"][-1]) > 10.0  # not equal
    assert res.balance["mass_closure_relative"] <= 1e-6
    assert res.balance["energy_closure_relative"] <= 1e-6


def test_isothermal_equalisation_when_heat_exchange_is_forced_large():
    # closed form: both vessels held at the surroundings' temperature T by heat exchange;
    # total mass conserved: p_f = T (p1 V1 / T1 + p2 V2 / T2) / (V1 + V2)
    T = 300.0
    jacket = (nw.AmbientExchange("jacket", 5e6, Constant(T)),)
    res = run_network(pair(jacket, jacket, method="BDF"))
    assert res.ok
    p_f = T * (P1 * V1 / TA + P2 * V2 / TB) / (V1 + V2)
    assert res["a.pressure"][-1] == pytest.approx(p_f, rel=1e-6)
    assert res["b.pressure"][-1] == pytest.approx(p_f, rel=1e-6)
    assert res.balance["mass_closure_relative"] <= 1e-6
    assert res.balance["energy_closure_relative"] <= 1e-6


# -------------------------------------------------------------------- cascade

def cascade(flow_below=None, dp_below=None, longest_step=None, banks=(100e5, 200e5, 300e5),
            receiver=20e5, end=600.0, shortest_step=None):
    vessels = [vessel(f"bank{i + 1}", 0.5, p) for i, p in enumerate(banks)]
    vessels.append(vessel("receiver", 0.1, receiver))
    links = [nw.Link(f"valve{i + 1}", f"bank{i + 1}", "receiver",
                     nw.Orifice(orifice_area(0.002), 0.8)) for i in range(len(banks))]
    seq = nw.Sequence("cascade", tuple(k.name for k in links), flow_below,
                      dp_below, longest_step, shortest_step)
    return net(vessels, [], links, end=end, sequences=(seq,), record_every=1.0)


def test_cascade_moves_from_bank_to_bank_and_closes_its_balances():
    thr = 0.02
    res = run_network(cascade(flow_below=thr))
    assert res.ok
    texts = [e for _, e in res.events if e.startswith("cascade:")]
    assert "step 1 of 3 ('valve1') opens" in texts[0]
    assert "step 2 of 3 ('valve2') opens" in texts[1]
    assert "step 3 of 3 ('valve3') opens" in texts[2]
    assert "sequence finished" in texts[3]
    switches = [t for t, e in res.events if e.startswith("cascade: flow through")]
    assert len(switches) == 3
    # each switch happens when the active link's flow has fallen to the threshold
    for k, t in enumerate(switches):
        i = int(np.flatnonzero(res.time == t)[0])  # the row recorded at the event
        assert res[f"valve{k + 1}.mass_flow"][i] == pytest.approx(thr, rel=1e-6)
    # only the active link passes flow; the step column says which
    flows = np.column_stack([res[f"valve{k}.mass_flow"] for k in (1, 2, 3)])
    assert np.all(np.count_nonzero(flows, axis=1) <= 1)
    step = res["cascade.step"]
    assert list(dict.fromkeys(step.astype(int))) == [1, 2, 3, 0]
    for k in (1, 2, 3):
        assert np.all(res[f"valve{k}.opening"][step == k] == 1.0)
        assert np.all(res[f"valve{k}.mass_flow"][step != k] == 0.0)
        assert np.all(res[f"valve{k}.opening"][step != k] == 0.0)
    assert res.balance["mass_closure_relative"] <= 1e-6
    assert res.balance["energy_closure_relative"] <= 1e-6
    # the receiver ends above the first bank's pressure when the first step ended
    assert res["receiver.pressure"][-1] > res["bank1.pressure"][-1]


def test_cascade_skips_a_bank_already_below_the_receiver_and_moves_on_by_time():
    res = run_network(cascade(dp_below=2e5, longest_step=20.0,
                              banks=(100e5, 15e5, 300e5), end=100.0))
    assert res.ok
    texts = [e for t, e in res.events if e.startswith("cascade:")]
    assert "step 2 ('valve2') skipped" in texts[1] and "step 3 of 3 ('valve3') opens" in texts[1]
    steps = res["cascade.step"].astype(int)
    assert 2 not in steps
    assert np.all(res.fine("valve2.mass_flow") == 0.0)  # never drew the receiver back
    # the first step ended on time (20 s), not on the pressure difference
    first = [t for t, e in res.events if "has been open 20 s" in e]
    assert first and first[0] == pytest.approx(20.0, abs=1e-9)


def test_shortest_step_holds_a_step_and_then_moves_on_at_once_if_its_rule_is_met():
    thr = 0.02
    plain = run_network(cascade(flow_below=thr, end=200.0))
    t1 = [t for t, e in plain.events if "flow through 'valve1' fell" in e][0]
    # shorter than the step takes anyway: the rules are watched from then, same switch
    early = run_network(cascade(flow_below=thr, shortest_step=0.5 * t1, end=200.0))
    watched = [t for t, e in early.events if "rules are watched from now" in e]
    assert watched[0] == pytest.approx(0.5 * t1, abs=1e-9)
    t1_early = [t for t, e in early.events if "flow through 'valve1' fell" in e][0]
    assert t1_early == pytest.approx(t1, rel=1e-6)
    # longer: the step lasts its shortest time, then moves on at once (its rule is met);
    # the next bank, below the receiver by then, is skipped for want of a forward
    # pressure difference
    late = run_network(cascade(flow_below=thr, shortest_step=t1 + 10.0,
                               banks=(100e5, 30e5, 300e5), end=200.0))
    (text,) = [e for t, e in late.events if "its shortest time" in e and "valve1" in e]
    (t_switch,) = [t for t, e in late.events if "its shortest time" in e and "valve1" in e]
    assert t_switch == pytest.approx(t1 + 10.0, abs=1e-9)
    assert "flow through 'valve1'" in text and "step 2 ('valve2') skipped: no forward " \
        "pressure difference" in text and "step 3 of 3 ('valve3') opens" in text
    assert np.all(late.fine("valve2.mass_flow") == 0.0)


# ---------------------------------------------------------------- user errors

BAD = """\
fluid: Air
vessels:
  drum: {volume: 1 m3, initial: {pressure: 5 barg, temperature: 20 degC}}
reservoirs:
  air: {pressure: 1 atm, temperature: 20 degC}
links:
  cv1: {from: drum, to: air, device: control-valve, Cv: -5, xT: 0.7, opening: 50 %}
  cv2: {from: drum, to: air, device: control-valve, Kv: 10, xT: 0.7, rangeability: 30,
        stroke: {opens_at: 10 s, closes_at: 20 s, stroke_time: 30 s}}
  psv1: {from: drum, to: air, device: relief-valve, set_pressure: 10 barg,
         blowdown: 120 %, orifice_letter: J}
  psv2: {from: drum, to: air, device: relief-valve, set_pressure: 10 barg,
         blowdown: 7 %, orifice_letter: Z}
  psv3: {from: drum, to: air, device: relief-valve, set_pressure: 10 barg, area: 1 cm2}
  psv4: {from: drum, to: air, device: relief-valve, set_pressure: 10 barg, blowdown: -0.5 bar,
         area: 1 cm2}
  disc: {from: drum, to: flare, device: bursting-disc, burst_pressure: 12 barg,
         diameter: 50 mm, discharge_coefficient: 0.7}
  nrv: {from: air, to: drum, device: check-valve, cracking_pressure: 0.1 barg,
        diameter: 10 mm, discharge_coefficient: 0.7}
  disc2: {from: drum, to: air, device: bursting-disc, burst_pressure: 12, area: 1 cm2,
          discharge_coefficient: 0.7}
  mod: {from: drum, to: air, device: relief-valve, set_pressure: 10 barg, action: modulating,
        blowdown: 5 %, area: 1 cm2}
sequences:
  fill:
    steps: [cv1, cv2]
    next_when: {}
  other:
    steps: [cv1, psv1]
    next_when: {mass_flow_below: 1 g/s}
  third: {steps: [cv3], next_when: {longest_step: 1 min}}
  fourth: {steps: [nrv], next_when: {shortest_step: 2 min, longest_step: 1 min}}
run: {end: 10 s}
"""

EXPECTED = [  # (key, words in the message)
    ("links.cv1.Cv", "greater than 0"),
    ("links.cv2.rangeability", "applies to 'characteristic: equal-percentage' only"),
    ("links.cv2.stroke.closes_at", "must not come before the valve is fully open"),
    ("links.psv1.blowdown", "less than 100 %"),
    ("links.psv2.orifice_letter", "not one of: D, E, F, G, H, J, K, L, M, N, P, Q, R, T"),
    ("links.psv3", "missing key 'blowdown'"),
    ("links.psv4.blowdown", "reseat pressure at or above the set pressure"),
    ("links.disc.to", "unknown vessel or reservoir 'flare'"),
    ("links.nrv.cracking_pressure", "a pressure difference is written in plain pressure"),
    ("links.disc2.burst_pressure", "missing unit"),
    ("links.mod.blowdown", "applies to 'action: pop'"),
    ("sequences.third.steps[0]", "unknown link 'cv3'; did you mean"),
    ("sequences.fourth.next_when.longest_step", "must be longer than shortest_step"),
    ("sequences.fourth.next_when.shortest_step", "give one of them"),
    ("sequences.fill.next_when", "give at least one rule"),
    ("sequences.other.steps", "already a step of sequence 'fill'"),
    ("sequences.other.steps", "is a relief-valve, which a sequence cannot open and shut"),
]


def test_device_mistakes_are_reported_with_their_keys():
    with pytest.raises(ScenarioError) as info:
        load_scenario_text(BAD, "bad.yaml")
    problems = info.value.problems
    for key, words in EXPECTED:
        assert any(p.key == key and words in p.message for p in problems), (
            key, words, [str(p) for p in problems if p.key.startswith(key)])
    assert len(problems) == len(EXPECTED), "\n".join(map(str, problems))


GOOD = """\
fluid: Nitrogen
vessels:
  drum: {volume: 2 m3, initial: {pressure: 8 barg, temperature: 15 degC}}
reservoirs:
  atmosphere: {pressure: 1 atm, temperature: 15 degC}
links:
  pcv: {from: drum, to: atmosphere, device: control-valve, Cv: 20, xT: 0.72,
        characteristic: equal-percentage, stroke: {opens_at: 5 s, stroke_time: 20 s}}
  psv: {from: drum, to: atmosphere, device: relief-valve, set_pressure: 10 barg,
        blowdown: 0.7 bar, orifice_letter: G, combination_factor: 0.9}
  mod: {from: drum, to: atmosphere, device: relief-valve, set_pressure: 10 barg,
        action: modulating, area: 500 mm2}
  disc: {from: drum, to: atmosphere, device: bursting-disc, burst_pressure: 15 barg,
         diameter: 2 in, discharge_coefficient: 0.7}
  nrv: {from: atmosphere, to: drum, device: check-valve, cracking_pressure: 50 mbar,
        area: 1 cm2, discharge_coefficient: 0.6, flow_model: ideal-gas}
run: {end: 1 min}
"""


def test_device_keys_are_read_into_si_definitions():
    sc = load_scenario_text(GOOD)
    atm = 101325.0
    pcv, psv, mod, disc, nrv = (link.device for link in sc.network.links)
    assert pcv == nw.ControlValve(pytest.approx(17.3), 0.72, Table((5.0, 25.0), (0.0, 1.0)),
                                  "equal-percentage", 50.0, 1.0)
    assert psv.set_pressure == pytest.approx(10e5 + atm)
    assert psv.reseat_pressure == pytest.approx(10e5 + atm - 0.7e5)
    assert psv.area == pytest.approx(0.503 * 0.0254 ** 2)  # API 526 G
    assert (psv.kd, psv.kb, psv.kc) == (0.975, 1.0, 0.9)
    assert mod.full_lift_pressure == pytest.approx(10e5 + atm + 0.1 * 10e5)  # default 10 %
    assert disc.burst_pressure == pytest.approx(15e5 + atm)
    assert disc.area == pytest.approx(math.pi * 0.0508 ** 2 / 4)
    assert nrv == nw.CheckValve(pytest.approx(1e-4), 0.6, pytest.approx(5e3), "ideal-gas")
    rows = {r.key: r for r in sc.echo}
    assert "default" in rows["links.pcv.rangeability"].note
    assert "API 526" in rows["links.psv.area"].note
    assert "default" in rows["links.mod.full_lift_overpressure"].note
    res = run_network(sc.network)
    assert res.ok
    names = res.names()
    for link in ("pcv", "psv", "mod", "disc", "nrv"):
        assert f"{link}.opening" in names


def test_a_forced_flow_in_a_sequence_is_not_skipped_for_want_of_a_pressure_difference():
    # a compressor step pushes gas up a pressure difference; the shortest-step skip rule
    # (no forward pressure difference) does not apply to it
    comp = nw.FixedFlow(Constant(0.01))
    seq = nw.Sequence("charge", ("compressor", "topup"), flow_below=1e-3, shortest_step=5.0)
    res = run_network(net([vessel("rx", 0.2, 20e5)],
                          [nw.Reservoir("suction", Constant(2e5), Constant(T0)),
                           nw.Reservoir("header", Constant(30e5), Constant(T0))],
                          [nw.Link("compressor", "suction", "rx", comp),
                           nw.Link("topup", "header", "rx", nw.Orifice(orifice_area(0.002),
                                                                        0.8))],
                          end=20.0, sequences=(seq,)))
    assert res.ok
    assert "step 1 of 2 ('compressor') opens" in res.events[0][1]
    assert res["compressor.mass_flow"][1] == 0.01
