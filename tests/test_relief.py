"""Relief valve: API 520 Part I gas capacity, API 526 areas, pop cycling and modulating lift."""
import math

import numpy as np
import pytest

from cvsim import network as nw
from cvsim.api import run_network
from cvsim.flow import relief
from cvsim.flow.nozzle import critical_flow_function
from cvsim.signals import Constant

from conftest import M_AIR, R_U, ideal_air

IN2 = 0.0254 ** 2  # [m2]


# ------------------------------------------------------------- coefficient C

def test_coefficient_c_in_si_form():
    # source: API 520 Part I, sizing for gas or vapour relief, C = 0.03948 sqrt(k (2/(k+1))
    # ^((k+1)/(k-1))) in the SI form; C(1.40) = 0.027033 (references.md)
    assert round(relief.api520_c(1.40), 6) == 0.027033


@pytest.mark.parametrize("k, c_us", [(1.01, 317), (1.40, 356), (1.45, 360), (1.50, 365)])
def test_coefficient_c_in_us_units_against_the_table(k, c_us):
    # source: Smith & Zappe, Valve Selection Handbook, 5th ed., Table 7-2 (API coefficient C
    # in US units, C = 520 sqrt(k (2/(k+1))^((k+1)/(k-1)))): 317 at 1.01, 356 at 1.40, 360 at
    # 1.45, 365 at 1.50 (as listed in references.md)
    assert round(520.0 * relief.flow_function(k)) == c_us
    # the SI coefficient is the same function with the SI constant
    assert relief.api520_c(k) == pytest.approx(0.03948 / 520.0 * c_us, rel=2e-3)


def test_coefficient_c_at_k_equal_to_one_is_the_limit():
    # the k -> 1 limit of (2/(k+1))^((k+1)/(k-1)) is 1/e (a standard limit)
    assert relief.flow_function(1.0) == pytest.approx(relief.flow_function(1.0 + 1e-7),
                                                      rel=1e-6)


def test_c_constant_is_the_perfect_gas_critical_flux():
    # physics check: 0.03948 is the perfect-gas choked mass flux C* p / sqrt(R T) written in
    # the SI form's units (kg/h, mm2, kPa, kg/kmol): 3.6 / sqrt(R[J/(kmol K)]) = 0.039481
    # (R: CODATA 2018). So W / (Kd A) equals the ideal nozzle flux to the constant's rounding.
    M, T, p1, k = 0.0289647, 300.0, 10e5, 1.4
    w, critical = relief.api520_mass_flow(1e-4, p1, 1e5, T, 1.0, M, k, kd=1.0)
    ideal = 1e-4 * critical_flow_function(k) * p1 / math.sqrt(R_U / M * T)
    assert critical
    assert w / ideal == pytest.approx(0.03948 / (3.6 / math.sqrt(8314.462618)), rel=1e-12)
    assert w / ideal == pytest.approx(1.0, abs=3e-5)


# ------------------------------------------------------------- sizing, areas

def test_api520_example_1_critical_flow_area():
    # source: API 520 Part I, Example 1 (critical flow), as reproduced in references.md:
    # W = 24 270 kg/h, T = 348 K, Z = 0.90, M = 51, k = 1.11, P1 = 670 kPa a, Kd = 0.975,
    # Kb = Kc = 1 -> A = 3699 mm2
    A = relief.api520_area(24270 / 3600, 670e3, 101.325e3, 348.0, 0.90, 0.051, 1.11,
                           kd=0.975, kb=1.0, kc=1.0)
    assert round(A * 1e6) == 3699


def test_api520_example_2_subcritical_flow_area():
    # source: API 520 Part I, Example 2 (subcritical, P2 = 532 kPa a, otherwise Example 1),
    # A = 4248 mm2 as reproduced in the fluids library's documentation of API520_A_g (value
    # not seen in the standard here)
    A = relief.api520_area(24270 / 3600, 670e3, 532e3, 348.0, 0.90, 0.051, 1.11)
    assert not relief.is_critical(670e3, 532e3, 1.11)
    assert round(A * 1e6) == 4248


@pytest.mark.parametrize("p2", [101.325e3, 300e3, 400e3, 500e3, 600e3, 660e3])
@pytest.mark.parametrize("k", [1.11, 1.31, 1.66])
def test_sizing_agrees_with_fluids(k, p2):
    # reference: fluids library (general purpose), fluids.safety_valve.API520_A_g, API520_F2,
    # API520_C (API 520 Part I gas sizing, critical and subcritical)
    from fluids.safety_valve import API520_A_g, API520_C, API520_F2
    W, T, Z, M, p1 = 5.0, 360.0, 0.93, 0.0442, 670e3
    ours = relief.api520_area(W, p1, p2, T, Z, M, k, kd=0.975, kb=0.9, kc=0.9)
    theirs = API520_A_g(m=W, T=T, Z=Z, MW=M * 1e3, k=k, P1=p1, P2=p2, Kd=0.975, Kb=0.9,
                        Kc=0.9)
    assert ours == pytest.approx(theirs, rel=1e-12)
    assert relief.api520_c(k) == pytest.approx(API520_C(k), rel=1e-14)
    if p2 > 101.325e3:
        assert relief.api520_f2(k, p2 / p1) == pytest.approx(API520_F2(k, p1, p2), rel=1e-13)


def test_critical_and_subcritical_forms_meet_at_the_critical_ratio():
    # the printed constants 0.03948 and 17.9 are rounded: the two forms differ by < 0.1 %
    # at the critical pressure ratio (a check of our reading of both equations)
    k, p1 = 1.3, 10e5
    r = (2 / (k + 1)) ** (k / (k - 1))
    crit, c1 = relief.api520_mass_flow(1e-4, p1, p1 * r * (1 - 1e-9), 300, 1, 0.029, k)
    sub, c2 = relief.api520_mass_flow(1e-4, p1, p1 * r * (1 + 1e-9), 300, 1, 0.029, k)
    assert c1 and not c2
    assert sub == pytest.approx(crit, rel=1e-3)


def test_api526_letter_areas():
    # source: API Std 526 effective orifice areas [in2] (references.md), D to T
    printed = {"D": 0.110, "E": 0.196, "F": 0.307, "G": 0.503, "H": 0.785, "J": 1.287,
               "K": 1.838, "L": 2.853, "M": 3.60, "N": 4.34, "P": 6.38, "Q": 11.05,
               "R": 16.00, "T": 26.00}
    assert relief.API526_LETTERS == tuple(printed)
    for letter, in2 in printed.items():
        assert relief.api526_area(letter) == pytest.approx(in2 * IN2, rel=1e-12)
    # reference: fluids library, fluids.safety_valve.API526_letters / API526_A [m2]
    from fluids.safety_valve import API526_A, API526_letters
    assert list(API526_letters) == list(printed)
    assert [relief.api526_area(x) for x in API526_letters] == pytest.approx(API526_A,
                                                                            rel=1e-4)
    with pytest.raises(ValueError, match="D, E, F, G"):
        relief.api526_area("Z")


# ------------------------------------------------------------------- in runs

T0 = 300.0
V = 1.0
R_AIR = R_U / M_AIR
P_SET, P_RESEAT, P_OUT = 11e5, 10e5, 1e5
AREA = relief.api526_area("F")


def capacity_per_pressure(T):
    """K [kg/(s Pa)]: critical API 520 capacity W = K p of a perfect gas (Z = 1, k = 1.4)
    with the printed SI-form constant, computed here from the standard's equation."""
    C = 0.03948 * math.sqrt(1.4 * (2 / 2.4) ** (2.4 / 0.4))
    return AREA * 1e6 * C * 0.975 * 1e-3 * math.sqrt(M_AIR * 1e3 / T) / 3600.0


def relief_network(valve, inflow, end, heat=(), p0=P_RESEAT, method="LSODA"):
    return nw.Network(
        title="relief", fluid=ideal_air(1.4),
        vessels=(nw.Vessel("drum", nw.Geometry(V), nw.InitialState(p0, T0), heat=heat),),
        reservoirs=(nw.Reservoir("header", Constant(50e5), Constant(T0)),
                    nw.Reservoir("atmosphere", Constant(P_OUT), Constant(T0))),
        links=(nw.Link("feed", "header", "drum", nw.FixedFlow(Constant(inflow))),
               nw.Link("psv", "drum", "atmosphere", valve)),
        run=nw.RunSettings(end_time=end, record_every=0.5, method=method))


def test_pop_valve_cycles_as_often_as_fill_and_vent_times_predict():
    # independent estimate from first principles (ideal gas held at T0 by strong heat
    # exchange, m = p V / (R T0)):
    #   fill, valve shut:  dp/dt = R T0 mdot_in / V        -> t_fill = (p_set - p_reseat) V / (R T0 mdot_in)
    #   vent, valve open:  dp/dt = R T0 (mdot_in - K p) / V -> t_vent = V/(R T0 K) ln((K p_set - mdot_in)/(K p_reseat - mdot_in))
    # with the API 520 critical capacity W = K p; first opening after t_fill from p_reseat.
    inflow = 0.3
    K = capacity_per_pressure(T0)
    assert K * P_RESEAT > inflow  # the valve outruns the inflow: it must cycle
    t_fill = (P_SET - P_RESEAT) * V / (R_AIR * T0 * inflow)
    t_vent = V / (R_AIR * T0 * K) * math.log((K * P_SET - inflow) / (K * P_RESEAT - inflow))
    period = t_fill + t_vent
    end = 125.0
    expected = 1 + math.floor((end - t_fill) / period)
    assert 0.2 < (end - t_fill) / period % 1 < 0.8  # far from a count boundary
    valve = nw.ReliefValve(AREA, P_SET, "pop", reseat_pressure=P_RESEAT)
    heat = (nw.AmbientExchange("jacket", 5e6, Constant(T0)),)
    res = run_network(relief_network(valve, inflow, end, heat, method="BDF"))
    assert res.ok, res.message
    fig = res.summary()["links"]["psv"]
    assert fig["openings"] == expected
    assert fig["first_opening_s"] == pytest.approx(t_fill, rel=1e-3)
    assert fig["mean_cycle_s"] == pytest.approx(period, rel=1e-3)
    p = res.fine("drum.pressure")
    assert p.max() == pytest.approx(P_SET, rel=1e-6) and p.min() >= P_RESEAT * (1 - 1e-6)
    assert set(np.unique(res["psv.opening"])) == {0.0, 1.0}
    assert res.balance["mass_closure_relative"] <= 1e-9


def test_rapid_cycling_is_warned_in_the_summary():
    valve = nw.ReliefValve(AREA, P_SET, "pop", reseat_pressure=P_SET - 0.2e5)
    res = run_network(relief_network(valve, 0.3, 60.0, p0=P_SET - 0.1e5))
    assert res.ok
    assert res.summary()["links"]["psv"]["openings"] >= relief.CHATTER_OPENINGS
    (warning,) = res.warnings
    assert warning.startswith("link 'psv': relief valve opened") and "chatter" in warning
    assert res.summary()["warnings"] == res.warnings


def test_modulating_valve_settles_between_set_and_full_lift():
    # steady state of an adiabatic perfect-gas vessel: mass in = mass out and h_in = h_out,
    # so T -> T_in; with lift L = (p - p_set)/(p_full - p_set) and critical capacity K p:
    #   K p (p - p_set) = mdot_in (p_full - p_set)  ->  p = [p_set + sqrt(p_set^2 + 4 mdot_in (p_full - p_set)/K)]/2
    p_full = P_SET + 0.1 * (P_SET - P_OUT)
    K = capacity_per_pressure(T0)
    inflow = 0.5 * K * p_full  # between zero (capacity at set) and the capacity at full lift
    p_ss = 0.5 * (P_SET + math.sqrt(P_SET ** 2 + 4 * inflow * (p_full - P_SET) / K))
    valve = nw.ReliefValve(AREA, P_SET, "modulating", full_lift_pressure=p_full)
    res = run_network(relief_network(valve, inflow, 400.0))
    assert res.ok
    p = res["drum.pressure"]
    assert P_SET < p[-1] < p_full
    assert p[-1] == pytest.approx(p_ss, rel=1e-5)
    assert res["drum.temperature"][-1] == pytest.approx(T0, rel=1e-4)  # still settling
    lift = res["psv.opening"][-1]
    assert lift == pytest.approx((p_ss - P_SET) / (p_full - P_SET), rel=1e-3)
    assert res.summary()["links"]["psv"]["openings"] == 1
    assert not res.warnings


def test_modulating_valve_reaches_full_lift_when_the_inflow_exceeds_its_capacity():
    p_full = P_SET + 0.1 * (P_SET - P_OUT)
    inflow = 1.2 * capacity_per_pressure(T0) * p_full
    valve = nw.ReliefValve(AREA, P_SET, "modulating", full_lift_pressure=p_full)
    res = run_network(relief_network(valve, inflow, 200.0))
    assert res["psv.opening"][-1] == 1.0
    assert res["drum.pressure"][-1] > p_full
    texts = [e for _, e in res.events]
    assert any("starts to open" in e for e in texts)
    assert any("full lift" in e for e in texts)


def test_relief_valve_never_passes_reverse_flow():
    valve = nw.ReliefValve(AREA, 2e5, "pop", reseat_pressure=1.8e5)
    net = nw.Network(
        title="reverse", fluid=ideal_air(1.4),
        vessels=(nw.Vessel("drum", nw.Geometry(V), nw.InitialState(3e5, T0)),),
        reservoirs=(nw.Reservoir("header", Constant(10e5), Constant(T0)),),
        links=(nw.Link("psv", "drum", "header", valve),),  # discharges into a higher pressure
        run=nw.RunSettings(end_time=10.0, record_every=1.0))
    res = run_network(net)
    assert res["psv.opening"][0] == 1.0  # above set from the start
    assert np.all(res.fine("psv.mass_flow") == 0.0)


def test_capacity_at_the_joint_of_the_linear_piece_for_any_pressure():
    # p2 = p1 (1 - 1e-4) rounds either side of the joint depending on p1: finite, continuous
    for p1 in np.geomspace(2e5, 9e7, 300):
        w, _ = relief.api520_mass_flow(1e-4, p1, p1 * (1.0 - 1e-4), 300.0, 1.0, 0.029, 1.4)
        w_above, _ = relief.api520_mass_flow(1e-4, p1, p1 * (1.0 - 1.0001e-4), 300.0, 1.0,
                                             0.029, 1.4)
        assert w == pytest.approx(w_above, rel=2e-4)


# --------------------------------------- balanced-bellows valves in subcritical flow

def test_balanced_bellows_valve_in_subcritical_flow_takes_the_critical_equation_with_kb():
    # source: API 520 Part I, sec. 5.6.3.2 (from memory): balanced valves in subcritical
    # flow are sized with the critical-flow equations and the back-pressure correction
    # factor Kb from the maker; conventional and pilot-operated valves with F2 (5.6.3.1).
    # Reference values: fluids library, fluids.safety_valve.API520_A_g (its critical
    # branch, which does not depend on P2) at the conditions of API 520 Example 2
    # (P2 = 532 kPa a, subcritical: A = 4248 mm2 for a conventional valve)
    from fluids.safety_valve import API520_A_g
    W, T, Z, M, k, p1, p2, kb = 24270 / 3600, 348.0, 0.90, 0.051, 1.11, 670e3, 532e3, 0.80
    assert not relief.is_critical(p1, p2, k)
    assert relief.uses_critical_equation(p2 / p1, k, balanced=True)
    assert not relief.uses_critical_equation(p2 / p1, k, balanced=False)
    critical_form = API520_A_g(m=W, T=T, Z=Z, MW=51.0, k=k, P1=p1, P2=101325.0, Kd=0.975,
                               Kb=kb, Kc=1.0)
    balanced = relief.api520_area(W, p1, p2, T, Z, M, k, kb=kb, balanced=True)
    assert balanced == pytest.approx(critical_form, rel=1e-12)
    conventional = relief.api520_area(W, p1, p2, T, Z, M, k, kb=kb)
    assert round(conventional * 1e6) == 4248  # Kb does not enter the F2 equation
    # a balanced valve never passes more than the isentropic nozzle (the F2 capacity):
    # with Kb = 1 it is the conventional valve's, and it vanishes as P2 reaches P1
    assert relief.api520_area(W, p1, p2, T, Z, M, k, kb=1.0, balanced=True) == pytest.approx(
        conventional, rel=1e-12)
    w_near, _ = relief.api520_mass_flow(1e-3, p1, p1 * (1 - 1e-6), T, Z, M, k, kb=0.8,
                                        balanced=True)
    w_conv, _ = relief.api520_mass_flow(1e-3, p1, p1 * (1 - 1e-6), T, Z, M, k)
    assert w_near == pytest.approx(w_conv, rel=1e-12)


def test_balanced_bellows_kb_from_the_standards_figure_in_a_run():
    # source: API 520 Part I, Figure 30 (Kb of balanced-bellows valves, vapours and gases),
    # as tabulated by the fluids library (fluids.safety_valve.API520_B): 0.793 at 50 %
    # gauge back pressure and 10 % overpressure; the capacity of a balanced valve in
    # subcritical flow is the critical-flow capacity times Kb (sec. 5.6.3.2, from memory)
    from fluids.safety_valve import API520_B
    kb = API520_B(1e6, 5e5)
    assert round(kb, 3) == 0.793
    from cvsim import network as nw
    from cvsim.fluid import RealFluid
    f = RealFluid("Nitrogen")
    valve = nw.ReliefValve(area=1e-4, set_pressure=10e5, reseat_pressure=9e5, kb=kb,
                           design="balanced-bellows")
    dev = relief.ReliefValveDevice(valve, f, 0, 0, 1)
    up, down = f.state_pt(11e5, 300.0), f.state_pt(7e5, 300.0)   # r = 0.64, subcritical
    flow = dev.flow(0.0, up, down, type("Seg", (), {"discrete": {dev.key("open"): True}}))
    Z = relief.compressibility_factor(up.p, up.rho, up.T, f.molar_mass)
    k = f.ideal_gas_gamma(up.rho, up.T)
    assert not relief.is_critical(up.p, down.p, k)
    w_crit, _ = relief.api520_mass_flow(1e-4, up.p, 1e5, up.T, Z, f.molar_mass, k, kb=kb)
    assert flow.mdot == pytest.approx(w_crit, rel=1e-12)
    assert not flow.choked


# --------------------------------------------- cycling, first peak, still rising

def _pop_valve():
    from cvsim import network as nw
    from cvsim.fluid import make_fluid
    f = make_fluid("Nitrogen", "ideal-gas", 0.0280134, 1040.0)
    valve = nw.ReliefValve(area=1e-4, set_pressure=10e5, reseat_pressure=9.3e5)
    return relief.ReliefValveDevice(valve, f, 0, 0, 1)


def _switches(dev, opens, open_for):
    log = []
    for t in opens:
        log += [(t, dev.key("open"), True), (t + open_for, dev.key("open"), False)]
    return log


def test_a_pop_valve_that_cycles_open_briefly_is_cautioned_as_oversized():
    dev = _pop_valve()
    # 34 openings over 15 min, each open 2 s of a 26 s cycle: open 8 % of the time,
    # never 5 within 60 s (so not the chatter warning)
    opens = [60.0 + 26.0 * i for i in range(34)]
    figures, warnings = dev.report({dev.key("open"): False}, _switches(dev, opens, 2.0), 950.0)
    assert figures["openings"] == 34
    # open share by hand: 34 x 2 s over the time from the first opening to the end
    assert figures["open_share"] == pytest.approx(34 * 2.0 / (950.0 - 60.0))
    (warning,) = warnings
    assert "cycled 34 times" in warning and "oversized" in warning
    # the same valve open most of the time is not oversized: no caution
    _, quiet = dev.report({dev.key("open"): False}, _switches(dev, opens, 20.0), 950.0)
    assert quiet == []


def test_a_repeated_peak_is_timed_at_its_first_occurrence_and_a_rising_end_is_told():
    import numpy as np
    from cvsim import network as nw
    from cvsim.histories import Histories
    from cvsim.result import still_rising
    t = np.linspace(0.0, 100.0, 101)
    p = 10e5 + 1e5 * np.abs(np.sin(t * np.pi / 20.0))   # peaks at 10, 30, 50, 70, 90 s
    p[90] += 1e-4   # the last peak higher by round-off only (1e-10 relative)
    net = nw.Network(title="t", fluid=nw.FluidSpec("Nitrogen", "ideal-gas", 0.028, 1040.0),
                     vessels=(nw.Vessel("v", nw.Geometry(1.0), nw.InitialState(10e5, 300.0)),),
                     run=nw.RunSettings(end_time=100.0, record_every=1.0))
    h = Histories(net, "completed", "", [("time", "s", "time"), ("v.pressure", "Pa", "vessel")],
                  np.column_stack([t, p]), np.zeros((0, 2)), [])
    value, when = h.extreme("v.pressure", "max")
    assert value == p.max() and when == 10.0   # the first pop, not the last
    assert still_rising(h) == []                # falling at the end
    rising = Histories(net, "completed", "", h.columns, np.column_stack([t, 1e5 + 1e3 * t]),
                       np.zeros((0, 2)), [])
    (hint,) = still_rising(rising)
    assert "still rising at the end" in hint and "run longer" in hint
    stopped = Histories(net, "stopped", "", h.columns, rising.data, rising.fine_data, [])
    assert still_rising(stopped) == []          # a stop condition ended it on purpose
