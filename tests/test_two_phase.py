"""Two-phase contents: initial liquid share, vapour and liquid outlets."""
import math

import numpy as np
import pytest

from cvsim import load_scenario_text
from cvsim.api import run
from cvsim.errors import ScenarioError

BULLET = """
title: propane bullet
fluid: Propane
vessels:
  bullet:
    volume: 2 m3
    initial: {temperature: 20 degC, liquid_fraction: 60 %}
reservoirs:
  air: {pressure: 1 atm, temperature: 20 degC}
links:
  drain: {from: bullet, to: air, device: orifice, diameter: 5 mm, discharge_coefficient: 0.8,
          draws: DRAWS}
run: {end: 60 s, record_every: 1 s}
"""


def test_initial_liquid_share_gives_the_saturated_mixture():
    # reference: CoolProp saturation states of propane at 20 degC (general-purpose library)
    import CoolProp.CoolProp as CP
    res = run(load_scenario_text(BULLET.replace("DRAWS", "vapour")))
    rho_l = CP.PropsSI("D", "T", 293.15, "Q", 0, "Propane")
    rho_v = CP.PropsSI("D", "T", 293.15, "Q", 1, "Propane")
    m0 = 2.0 * (0.6 * rho_l + 0.4 * rho_v)
    assert res["bullet.mass"][0] == pytest.approx(m0, rel=1e-9)
    assert res["bullet.vapour_quality"][0] == pytest.approx(0.4 * rho_v * 2.0 / m0, rel=1e-6)
    assert res["bullet.pressure"][0] == pytest.approx(
        CP.PropsSI("P", "T", 293.15, "Q", 0, "Propane"), rel=1e-6)


def test_liquid_outlet_passes_the_flashing_flow_of_saturated_liquid():
    # reference: homogeneous equilibrium flux of saturated liquid expanding isentropically,
    # maximised over throat pressures with CoolProp (p, s) flashes (independent of cvsim)
    import CoolProp.CoolProp as CP
    res_l = run(load_scenario_text(BULLET.replace("DRAWS", "liquid")))
    res_v = run(load_scenario_text(BULLET.replace("DRAWS", "vapour")))
    p0 = res_l["bullet.pressure"][0]
    h0 = CP.PropsSI("H", "P", p0, "Q", 0, "Propane")
    s0 = CP.PropsSI("S", "P", p0, "Q", 0, "Propane")
    g = 0.0
    for p in np.linspace(0.5 * p0, 0.99 * p0, 500):
        h = CP.PropsSI("H", "P", p, "S", s0, "Propane")
        rho = CP.PropsSI("D", "P", p, "S", s0, "Propane")
        g = max(g, rho * math.sqrt(2 * (h0 - h)))
    area = math.pi * 0.005 ** 2 / 4
    assert res_l["drain.mass_flow"][0] == pytest.approx(0.8 * area * g, rel=1e-3)
    # the same bore passes more mass of flashing liquid than of vapour (denser stream)
    assert res_l["drain.mass_flow"][0] > res_v["drain.mass_flow"][0]
    # drawing liquid leaves the vapour share rising (quality up), drawing vapour lowers it
    ql, qv = res_l["bullet.vapour_quality"], res_v["bullet.vapour_quality"]
    assert ql[-1] > ql[0] and qv[-1] < qv[0]
    assert res_l.balance["mass_closure_relative"] < 1e-9


@pytest.mark.parametrize("initial,expected", [
    ("{pressure: 8 bara, temperature: 20 degC, liquid_fraction: 60 %}", "not both"),
    ("{temperature: 120 degC, liquid_fraction: 60 %}", "critical point"),
    ("{temperature: 20 degC, liquid_fraction: 160 %}", "at most 1"),
    ("{temperature: 20 degC}", "missing key 'pressure'"),
])
def test_initial_two_phase_input_errors(initial, expected):
    text = BULLET.replace("DRAWS", "vapour").replace(
        "{temperature: 20 degC, liquid_fraction: 60 %}", initial)
    with pytest.raises(ScenarioError) as err:
        load_scenario_text(text)
    assert expected in str(err.value)
    assert "vessels.bullet.initial" in str(err.value)
