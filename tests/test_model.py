"""The whole engine (model + solver + result) against closed forms and textbook cases."""
import math

import numpy as np
import pytest

from cvsim import network as nw
from cvsim.api import run_network
from cvsim.flow.nozzle import critical_flow_function
from cvsim.signals import Constant, Table

from conftest import R_U, M_AIR, blowdown_network, ideal_air, orifice_area


def fill_network(fluid, p_line, T_line, p1, T1, volume=0.02, d=0.002, end=600.0, stop=None,
                 rtol=1e-9):
    return nw.Network(
        title="test fill", fluid=fluid,
        vessels=(nw.Vessel("tank", nw.Geometry(volume), nw.InitialState(p1, T1)),),
        reservoirs=(nw.Reservoir("line", Constant(p_line), Constant(T_line)),),
        links=(nw.Link("valve", "line", "tank", nw.Orifice(orifice_area(d), 1.0)),),
        run=nw.RunSettings(end_time=end, record_every=1.0, rtol=rtol,
                           stop=(stop,) if stop else ()))


def test_ideal_gas_adiabatic_filling_of_evacuated_tank_gives_gamma_times_line_temperature():
    # source: closed form of the mass and energy balances of a rigid adiabatic tank filled
    # from a constant line (Cengel & Boles, Thermodynamics: An Engineering Approach, ch. 5,
    # charging of a rigid tank; T2 = k T_line for an evacuated tank, ideal gas, constant k).
    # Partial fill from (P1, T1): T2 = P2 / ((P2 - P1)/(k T_line) + P1/T1).
    k, T_line, p_line = 1.4, 300.0, 5e5
    p1, T1 = 50.0, 300.0   # practically evacuated
    res = run_network(fill_network(ideal_air(k), p_line, T_line, p1, T1))
    assert res.ok
    P2 = res["tank.pressure"][-1]
    T2 = res["tank.temperature"][-1]
    assert P2 == pytest.approx(p_line, rel=1e-4)
    T2_closed = P2 / ((P2 - p1) / (k * T_line) + p1 / T1)
    assert T2 == pytest.approx(T2_closed, rel=1e-6)
    assert T2 == pytest.approx(k * T_line, rel=1e-4)  # 420 K for air from 300 K (textbook)


def test_real_steam_charging_of_evacuated_tank_textbook_example():
    # source: Cengel & Boles, Thermodynamics: An Engineering Approach, ch. 5, example
    # "Charging of a rigid tank by steam": line 1 MPa, 300 C; evacuated insulated tank
    # filled until its pressure equals the line pressure -> u2 = h_line = 3051.6 kJ/kg,
    # T2 = 456.1 C (printed; IAPWS-95 via CoolProp gives 456.45 C).
    p_line, T_line = 1e6, 573.15
    stop = nw.StopCondition("tank", "pressure", "above", p_line * (1 - 2e-5))
    res = run_network(fill_network(nw.FluidSpec("Water"), p_line, T_line, 100.0, 573.15,
                                   stop=stop, end=3000.0))
    assert res.status == "stopped"
    u2 = res["tank.specific_internal_energy"][-1]
    assert u2 / 1e3 == pytest.approx(3051.6, abs=1.0)       # printed u2 = h_line
    assert res["tank.temperature"][-1] - 273.15 == pytest.approx(456.1, abs=0.6)
    # exact statement of the first law for this case: m2 u2 - m1 u1 = (m2 - m1) h_line
    import CoolProp.CoolProp as CP
    h_line = CP.PropsSI("Hmass", "P", p_line, "T", T_line, "Water")
    m = res["tank.mass"]
    u = res["tank.specific_internal_energy"]
    assert m[-1] * u[-1] - m[0] * u[0] == pytest.approx((m[-1] - m[0]) * h_line, rel=1e-7)


def test_adiabatic_real_gas_blowdown_keeps_residual_gas_entropy():
    # source: Bar-Meir, Fundamentals of Compressible Fluid Mechanics, ch. "Evacuating and
    # filling a semi-rigid chamber": the gas left in an adiabatic vessel expands
    # isentropically (for a real fluid: its specific entropy stays constant).
    net = blowdown_network(nw.FluidSpec("Nitrogen"), 151.325e5, 288.15, p_stop=10e5,
                           rtol=1e-6)
    res = run_network(net)
    assert res.status == "stopped"
    s = res.fine("tank.specific_entropy")
    assert np.max(np.abs(s / s[0] - 1.0)) <= 1e-5


def test_ideal_gas_choked_adiabatic_discharge_matches_closed_form(air14):
    # source: closed form for a perfect gas, choked orifice, adiabatic vessel (Bar-Meir,
    # Fundamentals of Compressible Fluid Mechanics, eq. 11.17 with the choked flow of a
    # nozzle): P/P0 = [1 + (k-1)/2 t/tau]^(-2k/(k-1)), tau = V/(Cd A C* sqrt(R T0))
    k, V, d, cd, p0, T0 = 1.4, 0.5, 0.008, 0.8, 50e5, 300.0
    net = blowdown_network(air14, p0, T0, volume=V, d=d, cd=cd, flow_model="ideal-gas",
                           p_stop=3e5, p_back=1e5, rtol=1e-8)
    res = run_network(net)
    R = R_U / M_AIR
    tau = V / (cd * orifice_area(d) * critical_flow_function(k) * math.sqrt(R * T0))
    t = res.time
    p = res["tank.pressure"]
    closed = p0 * (1 + (k - 1) / 2 * t / tau) ** (-2 * k / (k - 1))
    assert np.max(np.abs(p / closed - 1)) <= 1e-3
    T = res["tank.temperature"]
    assert np.max(np.abs(T / (T0 * (1 + (k - 1) / 2 * t / tau) ** -2) - 1)) <= 1e-3


def test_isothermal_discharge_with_strong_heat_exchange(air14):
    # source: closed form for a perfect gas, choked orifice, vessel held at T0 by heat
    # exchange: P/P0 = exp(-t/tau) (derived in docs/theory.md; e.g. Bar-Meir, ch. 11,
    # isothermal chamber). A very large UA keeps the gas within ~0.01 K of the surroundings.
    k, V, d, cd, p0, T0 = 1.4, 0.5, 0.004, 0.8, 50e5, 300.0
    heat = (nw.AmbientExchange("jacket", 5e6, Constant(T0)),)
    net = blowdown_network(air14, p0, T0, volume=V, d=d, cd=cd, flow_model="ideal-gas",
                           p_stop=4e5, p_back=1e5, heat=heat, rtol=1e-8, method="BDF")
    res = run_network(net)
    R = R_U / M_AIR
    tau = V / (cd * orifice_area(d) * critical_flow_function(k) * math.sqrt(R * T0))
    t, p = res.time, res["tank.pressure"]
    assert np.max(np.abs(p / (p0 * np.exp(-t / tau)) - 1)) <= 2e-3


def test_two_vessels_with_heat_loads_close_mass_and_energy_balances():
    air = nw.FluidSpec("Air")
    net = nw.Network(
        title="closure", fluid=air,
        vessels=(
            nw.Vessel("a", nw.Geometry(0.2), nw.InitialState(60e5, 300.0),
                      heat=(nw.HeatLoad("heater", Table((0.0, 30.0, 30.0, 100.0),
                                                        (2e3, 2e3, 5e3, 0.0))),)),
            nw.Vessel("b", nw.Geometry(0.1), nw.InitialState(2e5, 280.0),
                      heat=(nw.AmbientExchange("skin", 20.0, Constant(290.0)),)),
        ),
        reservoirs=(nw.Reservoir("air", Constant(1.01325e5), Constant(293.15)),),
        links=(
            nw.Link("ab", "a", "b", nw.Orifice(orifice_area(0.003), 0.8)),
            nw.Link("b_out", "b", "air", nw.Orifice(orifice_area(0.001), 0.6, "ideal-gas")),
            nw.Link("fill", "air", "a", nw.FixedFlow(Constant(0.01), delivery_temperature=320.0)),
        ),
        run=nw.RunSettings(end_time=120.0, record_every=2.0, rtol=1e-6))
    res = run_network(net)
    assert res.ok
    b = res.balance
    assert b["mass_closure_relative"] <= 1e-6
    assert b["energy_closure_relative"] <= 1e-6
    # the compressor adds energy: delivered at 320 K and vessel pressure vs drawn at 293 K
    assert res.summary()["links"]["fill"]["energy_added_by_device_J"] > 0
    # a quadrature of the recorded flows agrees with the bookkeeping integrals
    m_fill = np.trapezoid(res.fine("fill.mass_flow"), res._all()[:, 0])
    assert m_fill == pytest.approx(0.01 * 120.0, rel=1e-6)


def test_nitrogen_blowdown_reaches_two_phase_with_quality_reported():
    """Adiabatic N2 blowdown from 150 bar enters the dome near 1-2 bar: it goes on with
    equilibrium two-phase properties and reports the vapour quality."""
    net = blowdown_network(nw.FluidSpec("Nitrogen"), 151.325e5, 288.15, d=0.02,
                           end=3000.0, rtol=1e-6, p_back=1e5)
    res = run_network(net)
    q = res.fine("tank.vapour_quality")
    assert np.any(~np.isnan(q)), res.message
    s = res.summary()["vessels"]["tank"]
    assert 0.0 < s["min_vapour_quality"] < 1.0
    # with two phases present the temperature is the saturation temperature at the pressure
    import CoolProp.CoolProp as CP
    i = int(np.nanargmin(res["tank.vapour_quality"]))
    T_sat = CP.PropsSI("T", "P", res["tank.pressure"][i], "Q", 1, "Nitrogen")
    assert res["tank.temperature"][i] == pytest.approx(T_sat, abs=1e-3)


def test_fixed_flow_stops_below_its_source_pressure():
    air = nw.FluidSpec("Air")
    net = nw.Network(
        title="draw-down", fluid=air,
        vessels=(nw.Vessel("rx", nw.Geometry(1.0), nw.InitialState(9e5, 293.15)),),
        reservoirs=(nw.Reservoir("use", Constant(1e5), Constant(293.15)),),
        links=(nw.Link("use", "rx", "use", nw.FixedFlow(Constant(0.02), stop_below=5e5)),),
        run=nw.RunSettings(end_time=600.0, record_every=5.0))
    res = run_network(net)
    assert res.ok
    assert res["rx.pressure"][-1] == pytest.approx(5e5, rel=1e-5)
    assert any("stopped" in e for _, e in res.events)


def test_carbon_dioxide_blowdown_stops_clearly_at_solid_formation():
    """Below the triple point (5.18 bar a, -56.6 degC; references.md) solid CO2 would form:
    the run ends with status 'failed', naming the time and the reason, never silently."""
    net = blowdown_network(nw.FluidSpec("CarbonDioxide"), 40e5, 293.15, volume=0.05,
                           d=0.005, cd=0.8, end=3600.0, rtol=1e-6)
    res = run_network(net)
    assert res.status == "failed"
    assert "solid" in res.message and "t = " in res.message
    # it got as far as the two-phase region first, with quality reported
    assert res.summary()["vessels"]["tank"]["min_vapour_quality"] < 1.0
