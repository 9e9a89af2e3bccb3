"""Lines (pipes and hoses) as links: the device against published examples, the fluids
library and brute-force computations; runs with lines; the scenario keys."""
import math

import CoolProp.CoolProp as CP
import fluids
import numpy as np
import pytest
from scipy.optimize import brentq

import cvsim
from cvsim.errors import ScenarioError
from cvsim.flow.exponent import perfect_gas_exponent
from cvsim.flow.friction import friction_factor
from cvsim.flow.line import GRAVITY, LineDevice
from cvsim.flow.nozzle import ideal_gas_mass_flux
from cvsim.fluid import R_UNIVERSAL, IdealGas, make_fluid
from cvsim.network import ControlValve, Line, LineOrifice
from cvsim.scenario import load_scenario_text
from cvsim.signals import Constant

PSI = 6894.757293168361
FT = 0.3048


class _Segment:
    """What a line without a controlled valve needs of a segment."""

    def signal(self, sig, t):
        return sig(t)


def _line(fluid, **keys):
    keys.setdefault("roughness", 4.5e-5)
    return LineDevice(Line(**keys), fluid, 0, 0, 1)


def _flow(dev, a, b):
    return dev.flow(0.0, a, b, _Segment())


# ------------------------------------------------------------------ the device


def test_a_short_line_ending_in_an_orifice_passes_the_orifice_flow():
    # a 1 mm line of 50 mm bore adds nothing to a 11 mm orifice at its end: the flow is
    # that of the perfect-gas nozzle (cvsim.flow.nozzle, ISO 9300 critical flow function)
    fl = make_fluid("Nitrogen")
    a = fl.state_pt(10e5, 300.0)
    k = perfect_gas_exponent(fl, a)
    dev = _line(fl, length=1e-3, diameter=0.05, orifice=LineOrifice(1e-4, 0.8, "to"))
    for pb in (1e5, 8e5, 9.99e5):
        G, choked = ideal_gas_mass_flux(a.p, a.rho, k, pb)
        f = _flow(dev, a, fl.state_pt(pb, 300.0))
        assert f.mdot == pytest.approx(0.8e-4 * G, rel=1e-6) and f.choked == choked


def test_reverse_flow_mirrors_forward_flow_and_the_valve_shuts_it():
    fl = make_fluid("Nitrogen")
    a, b = fl.state_pt(20e5, 290.0), fl.state_pt(3e5, 290.0)
    valve = ControlValve(kv=20.0, xt=0.7, opening=Constant(0.6))
    dev = _line(fl, length=25.0, diameter=0.025, fittings_k=1.5,
                orifice=LineOrifice(1e-4, 0.84, "from"), valve=valve, valve_at="to")
    fwd = _flow(dev, a, b)
    rev = LineDevice(dev.d, fl, 0, 0, 1)
    back = _flow(rev, b, a)
    assert back.mdot < 0.0 and fwd.mdot > 0.0
    # mirrored: the reversed line (orifice at 'to', valve at 'from') with the ends swapped
    mirror = _line(fl, length=25.0, diameter=0.025, fittings_k=1.5,
                   orifice=LineOrifice(1e-4, 0.84, "to"), valve=valve, valve_at="from")
    assert -back.mdot == pytest.approx(_flow(mirror, a, b).mdot, rel=1e-10)
    shut = _line(fl, length=25.0, diameter=0.025,
                 valve=ControlValve(kv=20.0, xt=0.7, opening=Constant(0.0)))
    assert _flow(shut, a, b).mdot == 0.0


def test_more_friction_less_flow_and_isothermal_chokes_below_adiabatic():
    # Shapiro (1953) vol. 1, ch. 6: the choked flow of an isothermal line is below that
    # of the adiabatic line of the same length (choking at M = 1/sqrt(k) against M = 1)
    fl = make_fluid("Methane")
    a, b = fl.state_pt(50e5, 300.0), fl.state_pt(1e5, 300.0)
    flows = [_flow(_line(fl, length=L, diameter=0.05), a, b).mdot for L in (1, 10, 100, 1000)]
    assert all(x > y for x, y in zip(flows, flows[1:]))
    adia = _flow(_line(fl, length=30.0, diameter=0.05), a, b)
    iso = _flow(_line(fl, length=30.0, diameter=0.05, flow_model="isothermal"), a, b)
    assert adia.choked and iso.choked and iso.mdot < adia.mdot


def _crane(M, k, p1, T1, pb, L, D, eps, K, mu, model):
    gas = IdealGas("gas", M, k / (k - 1.0) * R_UNIVERSAL / M)
    dev = LineDevice(Line(length=L, diameter=D, roughness=eps, fittings_k=K, viscosity=mu,
                          flow_model=model), gas, 0, 0, 1)
    f = _flow(dev, gas.state_pt(p1, T1), gas.state_pt(pb, T1))
    rho_std = 14.696 * PSI * M / (R_UNIVERSAL * (60.0 + 459.67) * 5.0 / 9.0)
    return f.mdot / rho_std * 3600.0 / FT ** 3   # standard cubic feet per hour


def test_crane_tp410_example_7_22_air_at_subsonic_velocity():
    # source: Crane Technical Paper 410, Example 7-22 (air at 19.3 psig and 100 degF out
    # of 10 ft of 1/2-inch schedule 80 pipe to the atmosphere: 3762 scfh), as reproduced
    # in the fluids library's documentation (Crane TP 410 solved problems). Crane's
    # resistance and net expansion factor charts are read to 2-3 digits.
    _, D, _, _ = fluids.nearest_pipe(NPS=0.5, schedule="80")
    args = (0.028964, 1.4, 19.3 * PSI + 14.696 * PSI, (100 + 459.67) * 5 / 9, 14.696 * PSI,
            10 * FT, D, 0.0018 * 0.0254, 0.0, 1.9e-5)
    assert _crane(*args, "isothermal") == pytest.approx(3762.0, rel=0.01)
    assert _crane(*args, "adiabatic") == pytest.approx(3762.0, rel=0.025)


def test_crane_tp410_example_7_21_gas_at_sonic_velocity():
    # source: Crane Technical Paper 410, Example 7-21 (coke-oven gas, specific gravity
    # 0.42, 125 psig, 140 degF, 20 ft of 3-inch schedule 40 pipe to the atmosphere, entrance
    # K 0.5: 1 028 000 scfh), as reproduced in the fluids library's documentation. The
    # adiabatic (Fanno) line chokes a few per cent above the isothermal one and the
    # chart method; the isothermal line agrees with the chart.
    _, D, _, _ = fluids.nearest_pipe(NPS=3, schedule="40")
    args = (0.42 * 0.028964, 1.4, 125 * PSI + 14.696 * PSI, (140 + 459.67) * 5 / 9,
            14.696 * PSI, 20 * FT, D, 0.0018 * 0.0254, 0.5, 1.2e-5)
    iso, adia = _crane(*args, "isothermal"), _crane(*args, "adiabatic")
    assert iso == pytest.approx(1.028e6, rel=0.015)
    assert 1.0 < adia / 1.028e6 < 1.06


def _real_gas_line(name, p0, T0, G, L, D, f, steps=300):
    """Exit static pressure of adiabatic flow with friction of the real gas, marched along
    the pipe with CoolProp: isentropic entrance from rest, then h + G^2/(2 rho^2) = h0 and
    dp + G^2 d(1/rho) = -f G^2/(2 D rho) dx step by step (trapezoidal in 1/rho)."""
    a = CP.AbstractState("HEOS", name)
    a.update(CP.PT_INPUTS, p0, T0)
    h0, s0, rho0 = a.hmass(), a.smass(), a.rhomass()

    def at_hs(h):
        a.update(CP.HmassSmass_INPUTS, h, s0)
        return a.rhomass(), a.p()

    def flux(V):
        return at_hs(h0 - V * V / 2)[0] * V - G
    V = G / rho0
    while flux(V) < 0.0:
        V *= 1.05
    rho, p = at_hs(h0 - (V1 := brentq(flux, V / 1.05, V, xtol=1e-14)) ** 2 / 2)
    dx = L / steps
    for _ in range(steps):
        def resid(rn):
            pn = p - G * G * (1 / rn - 1 / rho) - f * dx * G * G / (2 * D) * 0.5 * (1 / rn + 1 / rho)
            a.update(CP.DmassP_INPUTS, rn, pn)
            return a.hmass() + G * G / (2 * rn * rn) - h0
        rn = brentq(resid, rho * 0.5, rho * 1.0000001, xtol=1e-15 * rho)
        p = p - G * G * (1 / rn - 1 / rho) - f * dx * G * G / (2 * D) * 0.5 * (1 / rn + 1 / rho)
        rho = rn
    return p


@pytest.mark.parametrize("name, p0, T0, D, L, bound", [
    ("Nitrogen", 150e5, 288.15, 0.02, 30.0, 0.025),
    ("Hydrogen", 875e5, 233.15, 0.006, 5.0, 0.05),
    ("Methane", 70e5, 288.15, 0.05, 30.0, 0.005),
])
def test_perfect_gas_line_against_a_real_gas_march(name, p0, T0, D, L, bound):
    # source: brute-force march of the real-gas balances with CoolProp (above). The line
    # is a perfect gas with the ideal-gas k and the upstream Z held along it: it
    # underestimates the flow of gases whose Z falls with pressure (measured: nitrogen at
    # 150 bar -2.1 %, hydrogen at 875 bar -4.6 %, methane at 70 bar -0.3 %, nearest choking)
    fl = make_fluid(name)
    up = fl.state_pt(p0, T0)
    mu = 2e-5
    dev = _line(fl, length=L, diameter=D, viscosity=mu)
    choked = _flow(dev, up, fl.state_pt(1e5, T0)).mdot
    for share in (0.7, 0.97):
        G = share * choked / dev.area
        p2 = _real_gas_line(name, p0, T0, G, L, D, friction_factor(G * D / mu, 4.5e-5 / D))
        ours = _flow(_line(fl, length=L, diameter=D, viscosity=mu), up,
                     fl.state_pt(p2, T0)).mdot / (G * dev.area)
        assert -bound < ours - 1.0 < 0.002


def test_liquid_line_is_darcy_weisbach_with_the_fluids_library():
    # source: fluids library, one_phase_dP (Darcy-Weisbach with the Clamond solution of
    # Colebrook) and dP_from_K; the line's loss is friction + fittings + the outlet
    # jet's velocity head
    fl = make_fluid("Water")
    a, b = fl.state_pt(5e5, 293.15), fl.state_pt(1e5, 293.15)
    D, L, K, eps = 0.04, 60.0, 3.0, 4.5e-5
    f = _flow(_line(fl, length=L, diameter=D, roughness=eps, fittings_k=K), a, b)
    mu = CP.PropsSI("V", "P", 5e5, "T", 293.15, "Water")
    V = f.mdot / (a.rho * math.pi * D * D / 4)
    dp = (fluids.one_phase_dP(f.mdot, a.rho, mu, D, eps, L)
          + fluids.dP_from_K(K + 1.0, a.rho, V))
    assert dp == pytest.approx(4e5, rel=1e-6)
    assert not f.choked


def test_liquid_line_with_elevation_holds_the_static_head():
    # hydrostatics: between two water vessels with the 'to' end 20 m higher, no flow when
    # p_from - p_to = rho g dz; flow downhill (to -> from) below it, uphill above it
    fl = make_fluid("Water")
    dz = 20.0
    b = fl.state_pt(2e5, 293.15)
    head = b.rho * GRAVITY * dz
    dev = _line(fl, length=50.0, diameter=0.05, elevation_change=dz)
    a = fl.state_pt(2e5 + head, 293.15)
    rho_m = 0.5 * (a.rho + b.rho)
    a = fl.state_pt(2e5 + rho_m * GRAVITY * dz, 293.15)   # the head of the mean density
    assert abs(_flow(dev, a, b).mdot) < 1e-3
    assert _flow(dev, fl.state_pt(2e5 + head - 5e3, 293.15), b).mdot < 0.0
    up = _flow(dev, fl.state_pt(2e5 + head + 5e3, 293.15), b)
    assert up.mdot > 0.0 and up.h_to == pytest.approx(up.h_from - GRAVITY * dz, abs=1e-9)


def test_fittings_as_equivalent_length_are_cranes_l_over_d():
    # source: Crane Technical Paper 410 (2009), as implemented in the fluids library's
    # fittings.K_globe_valve_Crane: a full-bore globe valve is K = 340 f, an equivalent
    # length of 340 diameters; fluids.one_phase_dP and dP_from_K for the pipe and the
    # outlet jet (Darcy-Weisbach, Clamond solution of Colebrook). The line multiplies the
    # equivalent length by the friction factor of the flow (the fd fluids takes).
    fl = make_fluid("Water")
    a, b = fl.state_pt(5e5, 293.15), fl.state_pt(1e5, 293.15)
    D, L, eps = 0.04, 60.0, 4.5e-5
    f = _flow(_line(fl, length=L, diameter=D, roughness=eps, fittings_length=340 * D), a, b)
    mu = CP.PropsSI("V", "P", 5e5, "T", 293.15, "Water")
    V = f.mdot / (a.rho * math.pi * D * D / 4)
    fd = fluids.friction_factor(Re=a.rho * V * D / mu, eD=eps / D)
    K_valve = fluids.fittings.K_globe_valve_Crane(D, D, fd=fd)
    dp = fluids.one_phase_dP(f.mdot, a.rho, mu, D, eps, L) + fluids.dP_from_K(
        K_valve + 1.0, a.rho, V)
    assert dp == pytest.approx(4e5, rel=1e-6)
    # and it is a real resistance: 13.6 m more on 60 m takes a tenth of the flow
    bare = _flow(_line(fl, length=L, diameter=D, roughness=eps), a, b)
    assert f.mdot < 0.95 * bare.mdot


def test_the_equivalent_length_key_runs_as_that_much_more_line():
    # the scenario key reaches the line: 5 m of fittings' equivalent length runs as 5 m
    # more pipe (the definition of an equivalent length; Crane TP 410, ch. 2)
    given = load_scenario_text(NITROGEN_LINE.replace(
        "fittings_K: 1.5", "fittings_K: 1.5\n    fittings_equivalent_length: 5 m"))
    assert given.network.links[0].device.fittings_length == 5.0
    longer = load_scenario_text(NITROGEN_LINE.replace("length: 30 m", "length: 35 m"))
    one, two = cvsim.run(given), cvsim.run(longer)
    base = cvsim.run(load_scenario_text(NITROGEN_LINE))
    assert np.allclose(one["v.pressure"], two["v.pressure"], rtol=1e-9, atol=0.0)
    # 5 m more of 30 m is slower (not a key that does nothing)
    assert one["v.pressure"][-1] > base["v.pressure"][-1] * 1.01


def _barometric(fl, p_low, T, dz):
    """Pressure [Pa] dz [m] above p_low in a still isothermal gas column with Z held at
    its value at p_low: dp/dz = -rho g, rho = p/(Z R T), so p = p_low exp(-g dz/(Z R T))
    (hydrostatics of a perfect gas, by hand)."""
    st = fl.state_pt(p_low, T)
    R = CP.PropsSI("gas_constant", fl.name) / CP.PropsSI("molar_mass", fl.name)
    return p_low * math.exp(-GRAVITY * dz / (p_low / (st.rho * R * T) * R * T))


def test_a_gas_line_with_elevation_holds_the_barometric_head():
    # nitrogen at 50 bar, the 'to' end 100 m higher: the head is small (0.56 bar, 1.1 %
    # of the pressure) but the flow turns at it. Above the barometric pressure of the
    # column (by a thousandth of the head) the gas runs downhill, below it uphill; at
    # equal end pressures it runs downhill.
    fl = make_fluid("Nitrogen")
    T, dz = 293.15, 100.0
    a = fl.state_pt(50e5, T)
    p_top = _barometric(fl, a.p, T, dz)
    head = a.p - p_top
    assert head == pytest.approx(0.5638e5, rel=1e-3)   # rho g dz, 57.5 kg/m3 x g x 100 m
    dev = _line(fl, length=150.0, diameter=0.025, elevation_change=dz)
    flat = _flow(_line(fl, length=150.0, diameter=0.025), a, fl.state_pt(p_top, T)).mdot
    up = _flow(dev, a, fl.state_pt(p_top - 1e-3 * head, T))
    down = _flow(dev, a, fl.state_pt(p_top + 1e-3 * head, T))
    assert up.mdot > 0.0 > down.mdot
    assert abs(_flow(dev, a, fl.state_pt(p_top, T)).mdot) < 1e-3 * flat
    # the stream gains g dz of potential energy going up, gives it back coming down
    assert up.h_from - up.h_to == pytest.approx(GRAVITY * dz, rel=1e-12)
    assert down.h_from - down.h_to == pytest.approx(-GRAVITY * dz, rel=1e-12)
    # equal end pressures: the column's weight drives the gas downhill, as much as the
    # head drives it through the level line
    level = _flow(dev, a, fl.state_pt(a.p, T)).mdot
    assert level < 0.0 and -level == pytest.approx(flat, rel=0.02)


def test_a_gas_riser_settles_at_the_barometric_head_and_counts_its_potential_energy():
    # two nitrogen vessels at one pressure joined by a line rising 100 m: gas runs down
    # until the lower vessel is above the upper by the column's head, and the energy the
    # line adds is the potential energy of the gas that came down, g dz per kilogram
    text = """
fluid: Nitrogen
vessels:
  low: {volume: 2 m3, initial: {pressure: 50 bara, temperature: 20 degC}}
  high: {volume: 2 m3, initial: {pressure: 50 bara, temperature: 20 degC}}
links:
  riser: {from: low, to: high, device: line, length: 150 m, inside_diameter: 25 mm,
          elevation_change: 100 m}
run: {end: 60 s, record_every: 1 s}
"""
    res = cvsim.run(load_scenario_text(text))
    assert res.ok and not res.checks_failed and not res.warnings
    assert res["riser.mass_flow"][1] < 0.0                      # downhill at first
    p_low, p_high = res["low.pressure"][-1], res["high.pressure"][-1]
    T = 0.5 * (res["low.temperature"][-1] + res["high.temperature"][-1])
    fl = make_fluid("Nitrogen")
    assert p_low - p_high == pytest.approx(p_low - _barometric(fl, p_low, T, 100.0),
                                           rel=2e-3)
    came_down = res["low.mass"][-1] - res["low.mass"][0]
    assert came_down > 0.0
    assert res.summary()["links"]["riser"]["energy_added_by_device_J"] == pytest.approx(
        came_down * GRAVITY * 100.0, rel=1e-6)


# ------------------------------------------------------------------ runs

NITROGEN_LINE = """
title: nitrogen vented through a line
fluid: Nitrogen
vessels:
  v: {volume: 2 m3, initial: {pressure: 50 barg, temperature: 20 degC}}
reservoirs:
  atm: {pressure: 1 atm, temperature: 20 degC}
links:
  vent:
    from: v
    to: atm
    device: line
    length: 30 m
    inside_diameter: 25 mm
    fittings_K: 1.5
run:
  end: 5 min
  record_every: 5 s
"""


def _chain(text: str) -> str:
    """The 300 m line of ``text`` built as three 100 m lines joined by two vessels of
    their own volume (docs/lines.md)."""
    vol = math.pi * 0.025 ** 2 / 4 * 100.0
    text = text.replace("""  vent:
    from: v
    to: atm
    device: line
    length: 300 m
""", """  vent:
    from: v
    to: mid1
    device: line
    length: 100 m
""").replace("run:", """  vent2: {from: mid1, to: mid2, device: line, length: 100 m, inside_diameter: 25 mm}
  vent3: {from: mid2, to: atm, device: line, length: 100 m, inside_diameter: 25 mm}
run:""")
    return text.replace("reservoirs:", f"""  mid1: {{volume: {vol} m3, initial: {{pressure: 50 barg, temperature: 20 degC}}}}
  mid2: {{volume: {vol} m3, initial: {{pressure: 50 barg, temperature: 20 degC}}}}
reservoirs:""")


@pytest.mark.slow
def test_a_long_line_is_a_chain_of_vessels():
    # docs/lines.md: a 300 m line holding 0.7 % of its vessel's volume, built as three
    # 100 m lines joined by two vessels of their own volume, gives the single line's
    # blowdown times within 1 % (the chain adds the lines' inventory and a velocity head
    # at each joint); a computation independent of the long line's own solve
    long = NITROGEN_LINE.replace("30 m", "300 m").replace("volume: 2 m3", "volume: 20 m3") \
        .replace("end: 5 min", "end: 30 min")
    one = cvsim.run(load_scenario_text(long))
    three = cvsim.run(load_scenario_text(_chain(long)))
    assert not one.checks_failed and not three.checks_failed
    assert not one.warnings
    for p in (40e5, 20e5):
        t1 = np.interp(-p, -one["v.pressure"], one.time)
        t3 = np.interp(-p, -three["v.pressure"], three.time)
        assert t3 == pytest.approx(t1, rel=0.01)


def test_a_line_run_closes_its_balances_and_reports_its_inventory():
    res = cvsim.run(load_scenario_text(NITROGEN_LINE))
    assert res.ok and not res.checks_failed
    fig = res.summary()["links"]["vent"]
    assert fig["line_volume_m3"] == pytest.approx(math.pi * 0.025 ** 2 / 4 * 30.0)
    assert fig["volume_share_of_v"] == pytest.approx(fig["line_volume_m3"] / 2.0)
    assert not any("inventory" in w for w in res.warnings)
    # a line holding a tenth of its vessel's volume is warned
    small = cvsim.run(load_scenario_text(NITROGEN_LINE.replace("volume: 2 m3", "volume: 0.1 m3")
                                         .replace("25 mm", "60 mm")))
    assert any("gas inventory" in w and "chain of vessels" in w for w in small.warnings)


def test_a_liquid_line_draining_downhill_passes_the_self_checks():
    # two drums of saturated water at one temperature: the static head alone drives the
    # liquid downhill; the energy and entropy self-checks count the potential energy
    # the stream gives up (cvsim.checks)
    text = """
fluid: Water
vessels:
  upper: {volume: 2 m3, initial: {pressure: 1.9854 bara, liquid_fraction: 0.6}}
  lower: {volume: 2 m3, initial: {pressure: 1.9854 bara, liquid_fraction: 0.2}}
links:
  drain: {from: upper, to: lower, device: line, length: 40 m, inside_diameter: 25 mm,
          elevation_change: -10 m, draws: liquid}
run: {end: 20 s, record_every: 1 s}
"""
    res = cvsim.run(load_scenario_text(text))
    assert res.ok and not res.checks_failed, [c.text() for c in res.checks]
    assert len([c for c in res.checks if "entropy produced by link" in c.name]) == 1
    assert res["drain.mass_flow"][1] > 0.1   # the head drives it downhill
    # the potential energy given up shows as energy the device adds
    assert res.summary()["links"]["drain"]["energy_added_by_device_J"] > 0.0
    # saturated liquid flashes as its pressure falls in the line: warned
    assert any("flashes" in w for w in res.warnings)


# ------------------------------------------------------------------ scenario keys


def _problems(text):
    with pytest.raises(ScenarioError) as err:
        load_scenario_text(text)
    return str(err.value)


def test_line_keys_are_checked():
    text = NITROGEN_LINE.replace("fittings_K: 1.5", "fittings_K: 1.5\n    orifice: "
                                 "{diameter: 30 mm, discharge_coefficient: 0.9}")
    assert "smaller than the line's bore" in _problems(text)
    text = NITROGEN_LINE.replace("fittings_K: 1.5", "fittings_K: 1.5\n    valve: {Cv: 5, xT: 0.7}")
    assert "give the valve's 'opening' or 'stroke'" in _problems(text)
    net = load_scenario_text(NITROGEN_LINE).network
    assert net.links[0].device.roughness == pytest.approx(4.5e-5)   # the default, steel


# ------------------------------------------------------------------ the demos


def test_flare_header_demo_shows_the_header_back_pressure():
    res = cvsim.run("scenarios/flare-header-blowdown.yaml")
    assert res.status == "stopped" and not res.checks_failed and not res.warnings
    s = res.summary()
    header = s["vessels"]["header"]
    # the two blowdowns raise the shared header well above the atmosphere ...
    assert header["max_pressure_Pa"] > 2.0e5
    i = int(np.argmin(abs(res.fine("time") - header["max_pressure_time_s"])))
    # ... while both blowdown lines are choked at their orifices, so the back pressure
    # does not yet cut their flow; the flare line carries what the header receives
    assert res.fine("separator_blowdown.choked")[i] == 1.0
    assert res.fine("scrubber_blowdown.choked")[i] == 1.0
    into = res.fine("separator_blowdown.mass_flow")[i] + res.fine("scrubber_blowdown.mass_flow")[i]
    assert res.fine("flare_line.mass_flow")[i] == pytest.approx(into, rel=0.05)
    # the separator reaches the depressuring target within the run
    assert s["targets"][0]["time_s"] < 900.0
