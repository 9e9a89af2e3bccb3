"""Friction factors and the flow of gas and liquid through pipes (cvsim.flow.friction, pipe)."""
import math

import fluids
import pytest
from scipy.integrate import solve_ivp
from scipy.optimize import brentq

from cvsim.flow.control_valve import gas_mass_flow, liquid_mass_flow
from cvsim.flow.friction import colebrook, friction_factor
from cvsim.flow.nozzle import ideal_gas_mass_flux
from cvsim.flow.pipe import (adiabatic_pipe_inlet, fanno_friction_length, fanno_mach,
                             fanno_pressure_ratio, fanno_stagnation_pressure_ratio,
                             fanno_temperature_ratio, isothermal_pipe_inlet,
                             liquid_valve_inlet, nozzle_inlet, valve_inlet)

# ------------------------------------------------------------------ friction


@pytest.mark.parametrize("Re", [4e3, 1e4, 1e5, 1e6, 1e8])
@pytest.mark.parametrize("eD", [0.0, 1e-6, 1e-4, 1e-2, 0.05])
def test_colebrook_matches_the_fluids_library(Re, eD):
    # source: fluids library, friction.Colebrook (exact solution of the Colebrook
    # equation by the Lambert W function); Colebrook, J. Inst. Civil Eng. 11 (1939) 133
    assert colebrook(Re, eD) == pytest.approx(fluids.friction.Colebrook(Re, eD), rel=1e-12)


def test_friction_factor_is_laminar_below_2000_and_continuous_across_the_critical_zone():
    # source: Hagen-Poiseuille, f = 64/Re (e.g. White, Fluid Mechanics, ch. 6)
    assert friction_factor(1000.0, 1e-3) == pytest.approx(0.064, rel=1e-15)
    for eD in (0.0, 1e-3):
        for Re in (2000.0, 4000.0):
            below, above = friction_factor(Re * (1 - 1e-9), eD), friction_factor(
                Re * (1 + 1e-9), eD)
            assert above == pytest.approx(below, rel=1e-7)
    # Moody chart, smooth pipe at Re = 1e5: f about 0.018 (from memory; the Colebrook
    # value is 0.01799)
    assert friction_factor(1e5, 0.0) == pytest.approx(0.018, abs=5e-4)


# ------------------------------------------------------------------ Fanno


@pytest.mark.parametrize("M, fl, p_ratio, p0_ratio, T_ratio", [
    (0.1, 66.922, 10.9435, 5.8218, 1.1976),
    (0.2, 14.533, 5.4554, 2.9635, 1.1905),
    (0.5, 1.0691, 2.1381, 1.3398, 1.1429),
    (0.8, 0.07229, 1.2893, 1.0382, 1.0638),
])
def test_fanno_functions_match_the_published_table(M, fl, p_ratio, p0_ratio, T_ratio):
    # source: Anderson, Modern Compressible Flow, 3rd ed., App. A, table of Fanno flow
    # (4fL*/D, p/p*, p0/p0*, T/T*) for gamma = 1.4; values from memory at printed precision
    k = 1.4
    assert fanno_friction_length(M, k) == pytest.approx(fl, rel=1e-4)
    assert fanno_pressure_ratio(M, k) == pytest.approx(p_ratio, rel=1e-4)
    assert fanno_stagnation_pressure_ratio(M, k) == pytest.approx(p0_ratio, rel=1e-4)
    assert fanno_temperature_ratio(M, k) == pytest.approx(T_ratio, rel=1e-4)
    assert fanno_mach(fanno_friction_length(M, k), k) == pytest.approx(M, rel=1e-13)


def test_fanno_inverse_is_accurate_near_sonic_and_at_long_lengths():
    k = 1.3
    for M in (0.999999, 0.99, 0.05, 0.002):
        assert fanno_mach(fanno_friction_length(M, k), k) == pytest.approx(M, rel=1e-11)


def _brute_force_fanno(p0, T0, G, f, L, D, R, k):
    """Exit static pressure of adiabatic flow with friction, by integrating the
    equations of continuity, momentum and energy written here from first principles:
    rho V = G, dp + G dV = -f G V/(2D) dx, cp T + V^2/2 = cp T0, p = rho R T; inlet
    from rest by an isentropic nozzle (p/p0 = (T/T0)^(k/(k-1)))."""
    cp = k * R / (k - 1.0)

    def flux(V):
        T = T0 - V * V / (2.0 * cp)
        p = p0 * (T / T0) ** (k / (k - 1.0))
        return p / (R * T) * V - G
    V_sonic = math.sqrt(2.0 * cp * T0 * (k - 1.0) / (k + 1.0))
    V1 = brentq(flux, 1e-9, V_sonic, xtol=1e-14)

    def dVdx(x, V):
        T = T0 - V[0] ** 2 / (2.0 * cp)
        return [-(f * V[0] / (2.0 * D)) / (1.0 - R * T / V[0] ** 2 - R / cp)]
    sol = solve_ivp(dVdx, (0.0, L), [V1], method="LSODA", rtol=1e-12, atol=1e-12)
    V2 = sol.y[0, -1]
    T2 = T0 - V2 * V2 / (2.0 * cp)
    return G / V2 * R * T2


@pytest.mark.parametrize("fl, p_exit", [(0.5, 6e5), (5.0, 4e5), (40.0, 1.5e5)])
def test_adiabatic_pipe_agrees_with_a_brute_force_integration(fl, p_exit):
    # source: brute-force integration of the one-dimensional balances (above), an
    # independent computation of Fanno flow (Shapiro 1953, vol. 1, ch. 6)
    R, k, T0, D, f = 287.0, 1.4, 300.0, 0.05, 0.02
    L = fl * D / f
    theta = R * T0
    G = 80.0 * (1.0 + 10.0 / fl)   # a subsonic exit in every case
    p01, choked = adiabatic_pipe_inlet(G, p_exit, fl, k, theta)
    assert not choked
    assert _brute_force_fanno(p01, T0, G, f, L, D, R, k) == pytest.approx(p_exit, rel=1e-7)


def test_zero_length_pipe_is_the_isentropic_nozzle():
    # the pipe inlet is an isentropic nozzle: with no friction it must give the same
    # stagnation pressure as the nozzle equations (cvsim.flow.nozzle)
    k, p0, rho0 = 1.4, 10e5, 11.6
    for pb in (1e5, 6e5, 9.5e5):
        G, choked = ideal_gas_mass_flux(p0, rho0, k, pb)
        assert adiabatic_pipe_inlet(G, pb, 0.0, k, p0 / rho0)[0] == pytest.approx(p0, rel=1e-12)
        p, c = nozzle_inlet(G, pb, k, p0 / rho0)
        assert p == pytest.approx(p0, rel=1e-12) and c == choked


def test_choked_pipe_exit_is_sonic():
    # with the exit choked, the Fanno length from the inlet Mach number to M = 1 equals
    # the pipe's f L/D (Shapiro 1953, ch. 6: L* is the length to sonic)
    k, theta, fl = 1.4, 287.0 * 300.0, 3.0
    G = 300.0
    p01, choked = adiabatic_pipe_inlet(G, 1e3, fl, k, theta)
    assert choked
    # inlet Mach number from the isentropic flux at p01
    target = G * math.sqrt(theta / k) / p01
    M1 = brentq(lambda M: M * (1 + 0.2 * M * M) ** -3.0 - target, 1e-6, 1.0, xtol=1e-15)
    assert fanno_friction_length(M1, k) == pytest.approx(fl, rel=1e-9)


# ------------------------------------------------------------------ isothermal


@pytest.mark.parametrize("P2", [9e5, 7e5, 5e5])
def test_isothermal_pipe_matches_the_fluids_library(P2):
    # source: fluids library, compressible.isothermal_gas (complete isothermal flow
    # equation; Crane TP 410 and Rennels & Hudson, Pipe Flow, 2012, as cited there)
    theta, fd, L, D, P1 = 287.0 * 288.15, 0.015, 1000.0, 0.5, 1e6
    m = fluids.isothermal_gas(rho=P1 / theta, fd=fd, P1=P1, P2=P2, L=L, D=D)
    G = m / (math.pi * D * D / 4)
    p0, choked = isothermal_pipe_inlet(G, P2, fd * L / D, theta)
    assert not choked
    # our inlet is the stagnation pressure: p0 = p1 exp(G^2 theta / (2 p1^2))
    p1 = brentq(lambda p: p * math.exp(G * G * theta / (2 * p * p)) - p0, P2, p0, xtol=1e-6)
    assert p1 == pytest.approx(P1, rel=1e-9)


def test_isothermal_choking_pressure_matches_the_fluids_library():
    # source: fluids library, compressible.P_isothermal_critical_flow (Wilkes, Fluid
    # Mechanics for Chemical Engineers, 2nd ed., as cited there)
    theta, fd, L, D, P1 = 287.0 * 288.15, 0.00185, 1000.0, 0.5, 1e6
    fl = fd * L / D

    def inlet_static(G):   # p1 of the choked pipe at flux G
        p0, _ = isothermal_pipe_inlet(G, 1.0, fl, theta)
        return brentq(lambda p: p * math.exp(G * G * theta / (2 * p * p)) - p0,
                      G * math.sqrt(theta), p0, xtol=1e-9)
    G = brentq(lambda G: inlet_static(G) - P1, 1.0, 3000.0, xtol=1e-12)
    assert G * math.sqrt(theta) == pytest.approx(
        fluids.P_isothermal_critical_flow(P=P1, fd=fd, D=D, L=L), rel=1e-8)


# ------------------------------------------------------------------ restrictions


@pytest.mark.parametrize("p2", [2e5, 5e5, 7e5, 7.99e5])
def test_valve_inverse_matches_the_iec_equation(p2):
    # the inverse of IEC 60534-2-1 (cvsim.flow.control_valve.gas_mass_flow, itself
    # checked against the standard's example 3): same valve, same flow
    kv, xt, k, theta, p1 = 20.0, 0.7, 1.3, 3.0e5, 8e5
    W, choked = gas_mass_flow(kv, p1, p1 / theta, p2, k, xt)
    p, c = valve_inlet(W, p2, kv, xt, 1.0, k, theta)
    assert c == choked
    if not choked:
        assert p == pytest.approx(p1, rel=1e-12)
    else:
        assert p == pytest.approx(p1, rel=1e-12) and p2 <= p * (1 - k / 1.4 * xt)


def test_liquid_valve_inverse_matches_the_iec_equation():
    kv, fl_v, rho, pv, pc, p1 = 30.0, 0.9, 998.0, 3.17e3, 22.06e6, 6e5
    for p2 in (5e5, 1e5, 0.2e5):
        W, choked = liquid_mass_flow(kv, p1, rho, p2, pv, pc, fl_v)
        p, c = liquid_valve_inlet(W, p2, rho, kv, fl_v, 1.0, pv, pc)
        assert c == choked and p == pytest.approx(p1, rel=1e-12)
