"""Vessel walls: lumped and layered conduction against closed forms, energy closure of
gas + wall + surroundings, the grouped Jacobian, and warnings out of range."""
import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp
from scipy.special import erf

from cvsim import network as nw
from cvsim.api import run_network
from cvsim.heat import geometry as geo
from cvsim.heat.definitions import (InsideTransfer, OutsideTransfer, PoolFire, Wall,
                                    WallLayer)
from cvsim.heat.materials import MATERIALS, constant
from cvsim.heat.walls import WallTerm
from cvsim.model import Model
from cvsim.outputs import summary_text
from cvsim.signals import Constant

from conftest import orifice_area

STEEL = MATERIALS["steel"]  # EN 12524 constants: 7800 kg/m3, 450 J/(kg K), 50 W/(m K)
NITROGEN_IDEAL = nw.FluidSpec("Nitrogen", model="ideal-gas", molar_mass=0.0280134, cp=1040.0)


def make_wall(layers, surface, inside, outside, model="layered", fire=None, T0=None,
              shape="vertical", L_in=1.0, L_out=1.0, D=1.0):
    return Wall("wall", model, tuple(layers), surface, shape, L_in, L_out, D, inside, outside,
                fire, T0, "vessels.v.heat.wall")


class FixedGas:
    """A gas held at one temperature (a large, well-stirred bath)."""

    def __init__(self, T):
        self.T, self.rho, self.p = T, 1.0, 1e5
        self.two_phase = False


class Bench:
    """Just what a wall term reads from a solver segment."""

    midpoint = 0.0
    current_flows = []

    def signal(self, sig, t):
        return sig(t)


def integrate_wall(term, gas, t_end, t_eval, rtol=1e-9):
    """Integrate a wall term's own states alone, the gas held fixed."""
    bench = Bench()
    y0 = np.array(term.initial_states(gas))
    scale = np.array(term.scales())

    def f(t, y):
        d = np.zeros(term.n_states)
        term.evaluate(t, gas, y, bench, d)
        return d
    return solve_ivp(f, (0.0, t_end), y0, method="BDF", t_eval=t_eval, rtol=rtol,
                     atol=1e-12 * scale)


# ------------------------------------------------------------- lumped wall


def test_lumped_wall_cooling_with_a_fixed_coefficient_is_exponential():
    # source: Incropera et al., Fundamentals of Heat and Mass Transfer, 7th ed., eq. 5.6:
    # (T - T_inf)/(T_i - T_inf) = exp(-t h A / (rho V c)) for a lumped body
    D, L, t_w, h, T_amb, T_i = 0.8, 1.5, 0.012, 25.0, 290.0, 350.0
    surface = geo.wall_surface("cylinder", D, L, "hemispherical")
    wall = make_wall([WallLayer(STEEL, t_w)], surface, InsideTransfer("fixed", 0.0),
                     OutsideTransfer("fixed", Constant(T_amb), coefficient=h), model="lumped",
                     T0=T_i)
    V, A, H = geo.cylinder(D, L, "hemispherical")
    net = nw.Network(
        title="lumped wall cooling", fluid=NITROGEN_IDEAL,
        vessels=(nw.Vessel("v", nw.Geometry(V, "cylinder", D, L, "vertical", "hemispherical",
                                            A, H), nw.InitialState(2e5, 300.0), heat=(wall,)),),
        run=nw.RunSettings(end_time=4 * 3600.0, record_every=600.0, rtol=1e-9))
    res = run_network(net)
    assert res.ok
    mc = STEEL.density * surface.volume(0.0, t_w) * 450.0
    tau = mc / (h * surface.area(t_w))
    T = res["v.wall.inner_temperature"]
    closed = T_amb + (T_i - T_amb) * np.exp(-res.time / tau)
    assert np.max(np.abs(T - closed)) <= 1e-5 * (T_i - T_amb)
    assert np.array_equal(T, res["v.wall.outer_temperature"])
    # the gas, insulated from the wall, keeps its state
    assert np.ptp(res["v.temperature"]) < 1e-9


# ------------------------------------------------------------ layered wall


def test_layered_slab_follows_the_semi_infinite_solid_after_a_surface_step():
    # source: Incropera et al., 7th ed., sec. 5.7, eqs. 5.57-5.58 (semi-infinite solid,
    # constant surface temperature): (T - T_s)/(T_i - T_s) = erf(x / (2 sqrt(alpha t)));
    # heat absorbed per area Q = 2 k (T_s - T_i) sqrt(t / (pi alpha))
    k, rho, c = 50.0, 7800.0, 450.0
    alpha = k / (rho * c)
    slab = constant("test steel", rho, c, k)
    plane = geo.Surface(1.0, 0.0, 0.0)  # 1 m2 of plane wall
    thickness, divisions = 0.3, 120      # 2.5 mm slices; the back face never feels the step
    T_i, T_s = 300.0, 400.0
    wall = make_wall([WallLayer(slab, thickness, divisions)], plane,
                     InsideTransfer("fixed", 1e9), OutsideTransfer("insulated", None), T0=T_i)
    term = WallTerm(wall, "v")
    times = [20.0, 60.0, 120.0]
    sol = integrate_wall(term, FixedGas(T_s), 120.0, times)
    x = term.grid.x
    for j, t in enumerate(times):
        T = term.grid.temperatures(sol.y[:term.n_nodes, j])
        exact = T_s + (T_i - T_s) * erf(x / (2.0 * math.sqrt(alpha * t)))
        assert np.max(np.abs(T - exact)) <= 2e-3 * (T_s - T_i), t
        E = np.sum(sol.y[:term.n_nodes, j]) - np.sum(term.grid.energies(T_i))
        assert E == pytest.approx(2 * k * (T_s - T_i) * math.sqrt(t / (math.pi * alpha)),
                                  rel=2e-3)


@pytest.mark.parametrize("kind", ["cylinder", "sphere"])
def test_steady_conduction_through_a_thick_shell_matches_the_exact_resistance(kind):
    # source: Incropera et al., 7th ed., Table 3.3: R = ln(r2/r1)/(2 pi L k) (cylinder),
    # (1/r1 - 1/r2)/(4 pi k) (sphere); in series with the film resistances 1/(h A)
    r1, t_w, L, k = 0.4, 0.1, 1.0, 15.0
    mat = constant("test", 8000.0, 500.0, k)
    if kind == "cylinder":
        surface = geo.Surface(2 * math.pi * r1 * L, 2 * math.pi * L, 0.0)
        R_wall = math.log((r1 + t_w) / r1) / (2 * math.pi * L * k)
    else:
        surface = geo.wall_surface("sphere", 2 * r1)
        R_wall = (1 / r1 - 1 / (r1 + t_w)) / (4 * math.pi * k)
    h, T_in, T_out = 2000.0, 420.0, 300.0
    wall = make_wall([WallLayer(mat, 0.04, 3), WallLayer(mat, t_w - 0.04, 5)], surface,
                     InsideTransfer("fixed", h),
                     OutsideTransfer("fixed", Constant(T_out), coefficient=h), T0=T_out)
    term = WallTerm(wall, "v")
    gas = FixedGas(T_in)
    sol = integrate_wall(term, gas, 2e6, [2e6])
    d = np.zeros(term.n_states)
    q_wall = -term.evaluate(0.0, gas, sol.y[:, -1], Bench(), d)  # gas to wall
    R = 1 / (h * surface.area(0.0)) + R_wall + 1 / (h * surface.area(t_w))
    assert q_wall == pytest.approx((T_in - T_out) / R, rel=1e-7)
    assert np.max(np.abs(d[:term.n_nodes])) < 1e-6 * q_wall  # at steady state


def test_a_joint_node_shares_its_two_layers():
    liner, shell = MATERIALS["hdpe"], MATERIALS["aluminium-alloy"]
    plane = geo.Surface(2.0, 0.0, 0.0)
    wall = make_wall([WallLayer(liner, 0.004, 2), WallLayer(shell, 0.01, 5)], plane,
                     InsideTransfer("fixed", 1.0), OutsideTransfer("insulated", None))
    grid = WallTerm(wall, "v").grid
    assert grid.n == 8
    assert grid.x[2] == pytest.approx(0.004)
    # half a liner slice and half a shell slice; densities 980 (HDPE) and 2800 kg/m3
    # (aluminium alloys): source EN 12524:2000 Table 1, as tabulated in the ht library
    assert grid.mass[2] == pytest.approx(2.0 * (980 * 0.001 + 2800 * 0.001))
    assert np.sum(grid.mass) == pytest.approx(2.0 * (980 * 0.004 + 2800 * 0.01))
    T = np.linspace(280.0, 320.0, grid.n)
    assert np.allclose(grid.temperatures(grid.energies(T)), T, rtol=0, atol=1e-9)


def test_temperature_dependent_heat_capacity_energy_round_trip():
    steel = MATERIALS["carbon-steel"]
    wall = make_wall([WallLayer(steel, 0.05, 6)], geo.wall_surface("sphere", 2.0),
                     InsideTransfer("fixed", 1.0), OutsideTransfer("insulated", None))
    grid = WallTerm(wall, "v").grid
    for T in (150.0, 293.15, 700.0, 1005.0, 1008.3, 1400.0, 3000.0):
        E = grid.energies(T)
        assert np.allclose(grid.temperatures(E), T, rtol=1e-12, atol=0)
    # dE/dT is the tabulated heat capacity (EN 1993-1-2 via the material table)
    T, dT = 600.0, 1e-3
    slope = (grid.energies(T + dT) - grid.energies(T - dT)) / (2 * dT)
    assert np.allclose(slope / grid.mass, steel.heat_capacity(T), rtol=1e-6)


# ------------------------------------------------------------- whole runs


def blowdown_with_wall(wall_model="layered", fire=None, inside=None, divisions=5,
                       material="carbon-steel", end=3600.0, p_stop=8e5):
    D, L, heads, t_w = 1.0, 1.5, "2:1-ellipsoidal", 0.04
    V, A, H = geo.cylinder(D, L, heads)
    surface = geo.wall_surface("cylinder", D, L, heads)
    wall = make_wall([WallLayer(MATERIALS[material], t_w, divisions)], surface,
                     inside or InsideTransfer("natural"),
                     OutsideTransfer("natural", Constant(288.15), emissivity=0.8),
                     model=wall_model, fire=fire, L_in=H,
                     L_out=geo.outer_height("cylinder", D, L, heads, "vertical", t_w), D=D)
    return nw.Network(
        title="blowdown with a wall", fluid=nw.FluidSpec("Nitrogen"),
        vessels=(nw.Vessel("v", nw.Geometry(V, "cylinder", D, L, "vertical", heads, A, H),
                           nw.InitialState(100e5, 288.15), heat=(wall,)),),
        reservoirs=(nw.Reservoir("air", Constant(101325.0), Constant(288.15)),),
        links=(nw.Link("vent", "v", "air", nw.Orifice(orifice_area(0.008), 0.84)),),
        run=nw.RunSettings(end_time=end, record_every=5.0,
                           stop=(nw.StopCondition("v", "pressure", "below", p_stop),)))


def test_energy_of_gas_wall_and_surroundings_closes_on_a_full_run():
    # temperature-dependent steel, natural convection both sides, radiation, a fire from 60 s
    fire = PoolFire(area=4.0, environment_factor=1.0, drainage=False, starts_at=60.0)
    res = run_network(blowdown_with_wall(fire=fire))
    assert res.status == "stopped", res.message
    b = res.balance
    assert b["energy_closure_relative"] <= 1e-6
    assert b["mass_closure_relative"] <= 1e-6
    # the wall gave heat to the gas and took the fire's
    walls = res.totals["walls"]["v.wall"]
    assert walls["heat_from_outside_J"] > 0 and res.totals["heat"]["v.wall"] > 0
    assert walls["heat_from_outside_J"] - walls["energy_change_J"] == pytest.approx(
        res.totals["heat"]["v.wall"], rel=1e-6)
    # the recorded fire heat is the API 521 value once burning
    q = res["v.wall.fire_heat"]
    burning = res.time > 60.0
    assert np.allclose(q[burning], 70900.0 * 4.0**0.82, rtol=1e-12)
    assert np.all(q[res.time < 60.0] == 0.0)


def test_wall_damps_the_blowdown_and_reports_metal_temperatures():
    adiabatic = blowdown_with_wall()
    adiabatic = nw.Network(**{**adiabatic.__dict__, "vessels": (
        nw.Vessel("v", adiabatic.vessels[0].geometry, adiabatic.vessels[0].initial),)})
    cold = run_network(adiabatic).summary()["vessels"]["v"]["min_temperature_K"]
    res = run_network(blowdown_with_wall())
    s = res.summary()["vessels"]["v"]
    assert s["min_temperature_K"] > cold + 20.0  # tens of kelvin warmer with the wall
    assert s["min_wall_temperature_K"] < 288.15
    assert s["min_wall_temperature_where"] == "inner"
    assert s["min_wall_temperature_K"] == pytest.approx(
        np.min(res.fine("v.wall.inner_temperature")))
    nodes = [c for c in res.names() if c.startswith("v.wall.node")]
    assert len(nodes) == 6
    assert np.array_equal(res["v.wall.node0_temperature"], res["v.wall.inner_temperature"])
    assert np.array_equal(res["v.wall.node5_temperature"], res["v.wall.outer_temperature"])
    assert res.unit("v.wall.inside_coefficient") == "W/(m2 K)"
    text = summary_text(res)
    assert "wall temp." in text and "Warnings" in text


def test_grouped_jacobian_equals_the_column_by_column_one():
    model = Model(blowdown_with_wall(divisions=7))
    y = model.y0()
    y[model.heat_terms[0][1].offset:][:8] *= np.linspace(0.99, 1.0, 8)  # a gradient
    seg = model.segment(0.0, 100.0, model.initial_discrete(y))
    seg.scale = model.scales(y)
    cols = [c for c, _ in model.jacobian_groups]
    assert len(model.jacobian_groups) == 2 + 3  # two gas states, three groups of 8 nodes
    assert sorted(j for c in cols for j in c) == list(range(0, 2 + 8))
    J = seg.jac(10.0, y)
    eps = 1.4901161193847656e-08
    for j in range(model.n_dynamic):
        f0 = seg.rhs(10.0, y)  # the unperturbed state, as at the start of a Jacobian
        yp = y.copy()
        h = eps * max(abs(y[j]), seg.scale[j])
        yp[j] += h
        col = (seg.rhs(10.0, yp) - f0) / (yp[j] - y[j])
        # wall columns leave the gas state as it was: the grouped differences are the
        # same to round-off; gas columns re-solve the gas state (inner iterations to ~1e-12
        # make finite differences agree only to about 1e-3 between two evaluations)
        tol = 1e-9 if j >= 2 else 1e-3
        assert np.allclose(J[:, j], col, rtol=tol, atol=tol * np.max(np.abs(col))), j


def test_out_of_range_inputs_give_warnings_in_the_summary():
    # a lumped wall with a large inside coefficient: Biot number h t / k = 3000 x 0.04 / 50
    res = run_network(blowdown_with_wall("lumped", inside=InsideTransfer("fixed", 3000.0),
                                         material="steel", end=60.0, p_stop=1e5))
    w = res.summary()["warnings"]
    assert any("Biot number" in m for m in w)
    # the steel (EN 12524, taken for -40 to 60 degC) is cooled below its range: warned
    res = run_network(blowdown_with_wall("layered", material="steel"))
    w = res.summary()["warnings"]
    assert any("Rayleigh number" in m and "above the range" in m for m in w)
    assert not any("Biot" in m for m in w)
    assert summary_text(res).count("extrapolation") >= 1
