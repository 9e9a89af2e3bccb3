"""What vessels hold: liquid share and level in the histories, the initial contents that
`cvsim check` states, liquid-full vessels in the summary, the level plot."""
import pytest

from cvsim import run
from cvsim.cli import main
from cvsim.scenario import load_scenario_text

#: a horizontal propane bullet, torispherical heads, 60 % liquid, heated with no outlet
BULLET = """
title: heated propane bullet
fluid: Propane
vessels:
  bullet:
    shape: {kind: cylinder, inner_diameter: 1.6 m, length: 4 m, orientation: horizontal,
            heads: torispherical}
    initial: {temperature: 20 degC, liquid_fraction: 60 %}
    heat: {load: 300 kW}
run: {end: 120 s, record_every: 20 s}
"""

#: liquid CO2 in a drum given by its volume, and a two-phase CO2 sphere
CO2 = """
title: liquid carbon dioxide
fluid: CarbonDioxide
vessels:
  drum: {volume: 2 m3, initial: {pressure: 60 barg, temperature: 20 degC}}
  sphere:
    shape: {kind: sphere, inner_diameter: 1.5 m}
    initial: {temperature: 20 degC, liquid_fraction: 30 %}
run: {end: 1 s}
"""

#: a water drum 95 % full of saturated liquid at 100 degC, heated until it is liquid-full
WATER = """
title: heated water drum
fluid: Water
vessels:
  drum:
    shape: {kind: cylinder, inner_diameter: 1.0 m, length: 1.2 m, heads: 2:1-ellipsoidal}
    initial: {temperature: 100 degC, liquid_fraction: 95 %}
    heat: {load: 500 kW}
run: {end: 545 s, record_every: 1 s}
"""


def _fluids_tank(D, L):
    from fluids.geometry import TANK
    return TANK(D=D, L=L, horizontal=True, sideA="torispherical", sideB="torispherical",
                sideA_f=1.0, sideA_k=0.06, sideB_f=1.0, sideB_k=0.06)


def test_histories_carry_the_liquid_share_and_level():
    import CoolProp.CoolProp as CP

    res = run(load_scenario_text(BULLET))
    assert res.unit("bullet.liquid_fraction") == "-"
    assert res.unit("bullet.liquid_level") == "m"
    tank = _fluids_tank(1.6, 4.0)
    V = res.network.vessels[0].volume
    lf = res["bullet.liquid_fraction"]
    assert lf[-1] > lf[0]  # heated liquid expands
    for rho, T, share, level in zip(res["bullet.density"], res["bullet.temperature"], lf,
                                    res["bullet.liquid_level"]):
        # source: CoolProp (general-purpose reference): quality at (rho, T) and the
        # saturated liquid's density give the liquid's share of the volume (1 - x) rho/rho_l
        x = CP.PropsSI("Q", "D", rho, "T", T, "Propane")
        rho_l = CP.PropsSI("D", "T", T, "Q", 0, "Propane")
        assert share == pytest.approx((1 - x) * rho / rho_l, rel=1e-6)
        # source: fluids library, TANK.V_from_h (horizontal tank, torispherical heads
        # f = 1, k = 0.06): the liquid below the level fills that share of the volume
        assert tank.V_from_h(level) == pytest.approx(share * V, rel=1e-8)


def test_volume_only_vessels_have_a_liquid_share_but_no_level():
    res = run(load_scenario_text(CO2))
    names = res.names()
    assert "drum.liquid_fraction" in names and "drum.liquid_level" not in names
    assert "sphere.liquid_level" in names
    assert res["drum.liquid_fraction"][0] == 1.0


def test_check_states_the_initial_contents_and_warns_of_a_liquid_full_vessel(tmp_path,
                                                                              capsys):
    import CoolProp.CoolProp as CP

    path = tmp_path / "co2.yaml"
    path.write_text(CO2)
    assert main(["check", str(path)]) == 0
    out = capsys.readouterr().out
    lines = {line.split()[0]: line for line in out.splitlines()[-4:] if line.startswith("  ")}
    # source: CoolProp, CO2 at 61.01 bar a and 20 degC is compressed liquid of 786 kg/m3
    rho = CP.PropsSI("D", "P", 60e5 + 101325, "T", 293.15, "CarbonDioxide")
    assert f"liquid, {rho:.4g} kg/m3" in lines["drum"]
    assert f"{rho * 2.0:.5g} kg" in lines["drum"]
    assert "liquid-full" in lines["drum"]
    assert "two-phase" in lines["sphere"] and "liquid 30 % of the volume" in lines["sphere"]
    assert "WARNING: vessel 'drum' starts liquid-full" in out
    # source: CoolProp's (dp/dT) at constant density of the liquid: the pressure rise of
    # the liquid-full drum per kelvin
    rise = CP.PropsSI("d(P)/d(T)|Dmass", "D", rho, "T", 293.15, "CarbonDioxide")
    assert f"about {rise / 1e5:.3g} bar per K" in out
    assert "sphere" not in out.split("WARNING")[1]


def test_a_heated_drum_that_fills_with_liquid_is_reported_liquid_full():
    import CoolProp.CoolProp as CP

    res = run(load_scenario_text(WATER))
    d = res.summary()["vessels"]["drum"]
    # first law at constant density, in the test: the drum is liquid-full when the
    # saturated liquid's density has fallen to the mean density m/V, i.e. after
    # t = m (u_l(T_full) - u0)/Q (source: CoolProp saturation states of water)
    m = res["drum.mass"][0]
    rho = m / res.network.vessels[0].volume
    T_full = CP.PropsSI("T", "D", rho, "Q", 0, "Water")
    t_full = m * (CP.PropsSI("U", "T", T_full, "Q", 0, "Water")
                  - res["drum.specific_internal_energy"][0]) / 500e3
    assert d["liquid_full_from_s"] == pytest.approx(t_full, abs=1.0)  # records every 1 s
    assert d["initial_phase"] == "two-phase"
    assert d["initial_liquid_fraction"] == pytest.approx(0.95)
    assert d["max_liquid_level_m"] == pytest.approx(res.network.vessels[0].geometry.height)
    # the warning gives the pressure rise per kelvin of the liquid-full drum; source:
    # CoolProp's (dp/dT) at constant density, at the state recorded then
    T = res["drum.temperature"][res.time == d["liquid_full_from_s"]][0]
    rise = CP.PropsSI("d(P)/d(T)|Dmass", "D", rho, "T", T, "Water")
    assert d["liquid_full_pressure_rise_Pa_per_K"] == pytest.approx(rise, rel=1e-3)
    warning = next(w for w in res.warnings if "liquid-full" in w)
    assert "hydraulic expansion" in warning and "burst" in warning
    assert f"{rise / 1e5:.2g}" in warning or f"{rise / 1e5:.3g}" in warning


def test_summary_states_the_initial_density_and_mass_of_a_two_phase_vessel(tmp_path):
    import json

    import CoolProp.CoolProp as CP

    path = tmp_path / "bullet.yaml"
    path.write_text(BULLET)
    out = tmp_path / "out"
    assert main(["run", str(path), "--no-plots", "--quiet", "--out", str(out)]) == 0
    # source: CoolProp saturation states of propane at 20 degC: 60 % of the volume
    # saturated liquid, 40 % saturated vapour; the volume from the fluids library's TANK
    rho_l = CP.PropsSI("D", "T", 293.15, "Q", 0, "Propane")
    rho_v = CP.PropsSI("D", "T", 293.15, "Q", 1, "Propane")
    rho = 0.6 * rho_l + 0.4 * rho_v
    V = _fluids_tank(1.6, 4.0).V_total
    d = json.loads((out / "summary.json").read_text())["vessels"]["bullet"]
    assert d["initial_phase"] == "two-phase"
    assert d["initial_density_kg_m3"] == pytest.approx(rho, rel=1e-9)
    assert d["initial_mass_kg"] == pytest.approx(rho * V, rel=1e-8)
    text = (out / "summary.txt").read_text()
    line = next(ln for ln in text.splitlines() if ln.strip().startswith("initially"))
    assert f"{rho:.4g} kg/m3" in line and f"{rho * V:.1f} kg" in line
    assert "liquid 60 % of the volume" in line


def test_level_plot_only_when_a_vessel_holds_liquid(tmp_path):
    from cvsim.plot import plot_run

    res = run(load_scenario_text(BULLET))
    names = {p.name for p in plot_run(res, tmp_path / "liquid")}
    assert "level.png" in names
    gas = run(load_scenario_text(BULLET.replace("temperature: 20 degC, liquid_fraction: 60 %",
                                                "pressure: 5 bara, temperature: 20 degC")))
    assert not (gas["bullet.liquid_fraction"] > 0).any()
    assert "level.png" not in {p.name for p in plot_run(gas, tmp_path / "gas")}
