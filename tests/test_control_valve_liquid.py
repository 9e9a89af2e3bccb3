"""Control valves passing liquid: IEC 60534-2-1 incompressible equations, FF, choking."""
import math

import pytest

from cvsim import load_scenario_text
from cvsim.api import run
from cvsim.errors import ScenarioError
from cvsim.flow import control_valve as cv

ATM = 101325.0
# IEC 60534-2-1 worked examples 1 and 2 (water at 363 K), as reproduced by the `fluids`
# library (size_control_valve_l docstring and tests, stated to match the standard)
RHO, PV, PC = 965.4, 70.1e3, 22120e3
P1, P2, Q = 680e3, 220e3, 360.0 / 3600.0   # [Pa], [Pa], [m3/s]


def test_ff_of_the_standards_example():
    # source: IEC 60534-2-1:2011, worked example 1 (water at 363 K: pv 70.1 kPa,
    # pc 22 120 kPa): FF = 0.944 (as in the `fluids` documentation)
    assert cv.liquid_critical_pressure_ratio_factor(PV, PC) == pytest.approx(0.9442375,
                                                                              rel=1e-6)


def test_iec_example_1_globe_valve_not_choked():
    # source: IEC 60534-2-1:2011, example 1 (globe valve, FL 0.9): Q = 360 m3/h passes at
    # Kv = 165 (not choked: 460 kPa below FL^2 (p1 - FF pv) = 497 kPa)
    w, choked = cv.liquid_mass_flow(164.9954763704956, P1, RHO, P2, PV, PC, fl=0.9)
    assert not choked
    # N6 = 3.16 of Table 1 against N1 sqrt(rho0) = 0.1 sqrt(999.1) = 3.1609: 3e-4
    assert w == pytest.approx(Q * RHO, rel=5e-4)


def test_iec_example_2_ball_valve_choked():
    # source: IEC 60534-2-1:2011, example 2 (ball valve, FL 0.6): choked, Kv = 238
    w, choked = cv.liquid_mass_flow(238.05817216710483, P1, RHO, P2, PV, PC, fl=0.6)
    assert choked
    assert w == pytest.approx(Q * RHO, rel=5e-4)
    # choked: the flow no longer grows with a lower downstream pressure
    assert cv.liquid_mass_flow(238.0, P1, RHO, 1e5, PV, PC, fl=0.6)[0] == pytest.approx(
        cv.liquid_mass_flow(238.0, P1, RHO, 2e5, PV, PC, fl=0.6)[0])


def test_liquid_flow_agrees_with_the_fluids_library_over_a_range():
    # reference: `fluids` size_control_valve_l (an independent implementation of
    # IEC 60534-2-1; full-bore reducers so Fp = 1, low viscosity so FR = 1): the Kv it
    # returns for our flow is the Kv we started from
    from fluids.control_valve import size_control_valve_l
    for fl, p2 in ((0.9, 600e3), (0.9, 300e3), (0.75, 100e3), (0.6, 400e3)):
        w, _ = cv.liquid_mass_flow(50.0, P1, RHO, p2, PV, PC, fl=fl)
        kv = size_control_valve_l(rho=RHO, Psat=PV, Pc=PC, mu=3.1472e-4, P1=P1, P2=p2,
                                  Q=w / RHO, D1=0.1, D2=0.1, d=0.1, FL=fl, Fd=0.46)
        assert kv == pytest.approx(50.0, rel=5e-4)


BULLET = """
title: propane bullet, control valve drawing liquid
fluid: Propane
vessels:
  bullet:
    volume: 2 m3
    initial: {temperature: 20 degC, liquid_fraction: 60 %}
reservoirs:
  air: {pressure: 1 atm, temperature: 20 degC}
links:
  cv: {from: bullet, to: air, device: control-valve, Kv: 1, xT: 0.7, opening: 100 %,
       draws: liquid FL}
run: {end: 1 s, record_every: 1 s}
"""


def test_control_valve_drawing_saturated_propane_liquid_chokes_by_flashing():
    # issue 8 item 4: Kv 1 passed 1 024 kg/h by the gas equation; by the IEC choked-liquid
    # equation with FL 0.9 about 746 kg/h. Reference by hand from IEC 60534-2-1
    # (W = N6 Kv sqrt(FL^2 (p1 - FF pv) rho), pv = p1 for saturated liquid) with CoolProp
    # saturation properties of propane at 20 degC (general-purpose library)
    import CoolProp.CoolProp as CP
    res = run(load_scenario_text(BULLET.replace("FL", ", FL: 0.9")))
    p1 = CP.PropsSI("P", "T", 293.15, "Q", 0, "Propane")
    rho = CP.PropsSI("D", "T", 293.15, "Q", 0, "Propane")
    ff = 0.96 - 0.28 * math.sqrt(p1 / CP.PropsSI("Pcrit", "Propane"))
    by_hand = 3.16 / 3600 * math.sqrt(0.81 * (p1 - ff * p1) * 1e-3 * rho)
    w = res["cv.mass_flow"][0]
    assert w == pytest.approx(by_hand, rel=1e-6)
    assert w * 3600 == pytest.approx(746, abs=1.5)
    # saturated liquid flashes: choked whatever the downstream pressure below p1 (1 - FF)
    assert cv.liquid_mass_flow(1.0, p1, rho, 0.5 * p1, p1, 42.5e5, 0.9)[1]


def test_control_valve_drawing_liquid_without_fl_is_refused_at_check():
    # issue 8: a device that cannot model what it draws refuses at `cvsim check`
    with pytest.raises(ScenarioError) as err:
        load_scenario_text(BULLET.replace("FL", ""))
    text = str(err.value)
    assert "links.cv" in text and "passes liquid" in text and "state FL" in text
