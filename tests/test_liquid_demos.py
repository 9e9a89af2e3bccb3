"""The demos of vessels that hold liquid, and the outlet rule that keeps the drawn
stream continuous when a vessel becomes liquid-full or boils dry.

Outcomes are checked against independent figures: API 526 letter areas (API Std
526, as listed in `fluids`), the API 521 fire relieving accumulation (21 %), and
CoolProp's saturation states for the triple point of CO2 (5.18 bar a, -56.6 degC).
"""
from __future__ import annotations

import numpy as np
import pytest

import cvsim
from cvsim.fluid import RealFluid
from cvsim.outlets import F_BOTTOM, F_TOP, drawn_quality, drawn_state
from cvsim.scenario import load_scenario
from cvsim.sizing import size_relief


@pytest.mark.parametrize("x", [0.0, 0.01, 0.3, 0.9])
def test_the_drawn_stream_is_continuous_at_both_ends_of_the_level(x):
    # top outlet: vapour below F_TOP, the contents themselves at liquid-full (f = 1,
    # where the contents are saturated liquid, x = 0)
    assert drawn_quality("vapour", x, F_TOP) == 1.0
    assert drawn_quality("vapour", 0.0, 1.0) == 0.0
    assert drawn_quality("vapour", x, F_TOP + 1e-9) == pytest.approx(1.0, abs=1e-6)
    # bottom outlet: liquid above F_BOTTOM, the contents (saturated vapour) when dry
    assert drawn_quality("liquid", x, F_BOTTOM) == 0.0
    assert drawn_quality("liquid", 1.0, 0.0) == 1.0
    assert drawn_quality("liquid", x, F_BOTTOM - 1e-9) == pytest.approx(0.0, abs=1e-6)


def test_the_drawn_state_is_the_mixture_between():
    f = RealFluid("Water")
    liq = f.saturated_liquid_at_p(10e5)
    vap = f.saturated_vapour_at_p(10e5)
    st = f.two_phase_at_p(10e5, 1e-5)            # nearly liquid-full
    assert st.liquid_fraction > F_TOP
    out = drawn_state(f, st, "vapour")
    x = drawn_quality("vapour", st.quality, st.liquid_fraction)
    # lever rule on CoolProp's saturated phases (independent of the outlet rule)
    assert out.h == pytest.approx(liq.h + x * (vap.h - liq.h), rel=1e-9)


def test_lpg_bullet_relief_sized_on_vapour_and_confirmed_in_the_fire():
    sc = load_scenario("scenarios/lpg-bullet-pool-fire.yaml")
    s = size_relief(sc.network, "psv", fire=True, scenario=sc)
    # relieving at T_sat(P1) on vapour; the letter's area is API 526's
    assert s.letter == "H"
    assert s.letter_area == pytest.approx(0.785 * 0.0254 ** 2, rel=1e-12)  # API Std 526
    assert s.relieving_pressure == pytest.approx(
        sc.network.atmosphere + 1.21 * (17.5e5), rel=1e-9)   # API 521: 21 % fire
    assert s.met and s.confirm.ok
    res = cvsim.run("scenarios/lpg-bullet-pool-fire.yaml")
    assert res.ok and not res.checks_failed
    level = res["bullet.liquid_level"]
    assert level[-1] < level[0]                  # the fire boils the liquid away
    assert res.summary()["links"]["psv"]["openings"] >= 1


def test_liquid_co2_vent_warns_of_solid_in_the_jet_and_stops_above_the_triple_point():
    res = cvsim.run("scenarios/co2-liquid-vent.yaml")
    assert res.status == "stopped" and not res.checks_failed
    assert any("solid forms in the jet" in w for w in res.warnings)
    assert any("starts liquid-full" in w for w in res.warnings)
    T_min = res.summary()["vessels"]["drum"]["min_temperature_K"]
    assert T_min > 216.592                        # above the triple point (CoolProp)
    assert T_min - 273.15 < -50.0


def test_water_drum_goes_liquid_full_and_its_relief_valve_passes_liquid():
    res = cvsim.run("scenarios/water-drum-liquid-full.yaml")
    assert res.ok and not res.checks_failed
    full = res["drum.liquid_fraction"] >= 1.0
    assert full.any() and not full[0]
    flow = res["psv.mass_flow"]
    assert np.nanmax(flow[full]) > 0.0            # the valve relieves liquid while full
    assert any("liquid-full" in w for w in res.warnings)
    # hydraulic expansion held at the relief valve: within 10 % accumulation
    assert not res.limits_crossed
