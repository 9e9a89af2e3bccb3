"""Benchmark: what walls cost the solver, against the adiabatic run of the same case.

Run by hand:  python benchmarks/bench_walls.py

Two cases, each adiabatic, with a lumped wall and with layered walls of 7, 13 and 25
temperatures:

* blowdown: nitrogen 1 m3 vertical cylinder (D 1.0 m, 2:1 ellipsoidal heads) from
  100 bar a, 15 degC through an 8 mm orifice (Cd 0.84) to 8 bar a; 40 mm carbon steel
  (EN 1993-1-2), natural convection inside and outside;
* fill: hydrogen type IV cylinder (D 0.36 m, L 1.0 m, hemispherical heads) from 20 bar
  to 700 bar through a 2.5 mm orifice from a -40 degC supply ramped over 180 s; 5 mm
  HDPE liner + 25 mm composite, natural convection + fill jet inside.

Prints per run the best-of-N solver time (imports excluded), steps, right-hand sides,
Jacobians, equation-of-state and transport-property evaluations and the ratio to the
adiabatic run; then the Jacobian's cost with and without grouping the wall's columns,
and the cost of one transport-property evaluation.
Target (issue 5): walls add no more than a few times the adiabatic solver cost.
"""
from __future__ import annotations

import math
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from cvsim import network as nw  # noqa: E402
from cvsim.api import run_network  # noqa: E402
from cvsim.heat import geometry as geo  # noqa: E402
from cvsim.heat.definitions import (InsideTransfer, OutsideTransfer, Wall,  # noqa: E402
                                    WallLayer)
from cvsim.heat.materials import MATERIALS, constant  # noqa: E402
from cvsim.model import Model  # noqa: E402
from cvsim.signals import Constant, Table  # noqa: E402

COMPOSITE = constant("composite (illustrative)", 1550.0, 1000.0, 0.6)


def wall(model, layers, D, L, heads, orientation, inside):
    t = sum(la.thickness for la in layers)
    V, A, H = geo.cylinder(D, L, heads, orientation)
    return Wall("wall", model, tuple(layers), geo.wall_surface("cylinder", D, L, heads),
                orientation, H, geo.outer_height("cylinder", D, L, heads, orientation, t), D,
                inside, OutsideTransfer("natural", Constant(288.15)), None, None, "bench")


def blowdown(kind: str, divisions: int = 6) -> nw.Network:
    D, L, heads = 1.0, 1.0, "2:1-ellipsoidal"
    V, A, H = geo.cylinder(D, L, heads)
    heat = ()
    if kind != "adiabatic":
        layers = [WallLayer(MATERIALS["carbon-steel"], 0.04, divisions)]
        heat = (wall(kind, layers, D, L, heads, "vertical", InsideTransfer("natural")),)
    return nw.Network(
        title="benchmark: nitrogen blowdown with walls", fluid=nw.FluidSpec("Nitrogen"),
        vessels=(nw.Vessel("v", nw.Geometry(V, "cylinder", D, L, "vertical", heads, A, H),
                           nw.InitialState(100e5, 288.15), heat=heat),),
        reservoirs=(nw.Reservoir("air", Constant(101325.0), Constant(288.15)),),
        links=(nw.Link("vent", "v", "air", nw.Orifice(math.pi * 0.008**2 / 4, 0.84)),),
        run=nw.RunSettings(end_time=3600.0, record_every=1.0,
                           stop=(nw.StopCondition("v", "pressure", "below", 8e5),)))


def fill(kind: str, divisions: int = 6) -> nw.Network:
    D, L, heads = 0.36, 1.0, "hemispherical"
    V, A, H = geo.cylinder(D, L, heads, "horizontal")
    heat = ()
    if kind != "adiabatic":
        n_liner = max(2, divisions // 3)
        layers = [WallLayer(MATERIALS["hdpe"], 0.005, n_liner),
                  WallLayer(COMPOSITE, 0.025, max(1, divisions - n_liner))]
        heat = (wall(kind, layers, D, L, heads, "horizontal",
                     InsideTransfer("natural+jet", inlet_diameter=0.005)),)
    return nw.Network(
        title="benchmark: type IV fill with walls", fluid=nw.FluidSpec("Hydrogen"),
        vessels=(nw.Vessel("c", nw.Geometry(V, "cylinder", D, L, "horizontal", heads, A, H),
                           nw.InitialState(21e5, 293.15), heat=heat),),
        reservoirs=(nw.Reservoir("supply", Table((0.0, 180.0, 400.0), (21e5, 761e5, 761e5)),
                                 Constant(233.15)),),
        links=(nw.Link("nozzle", "supply", "c", nw.Orifice(math.pi * 0.0025**2 / 4, 0.9)),),
        run=nw.RunSettings(end_time=480.0, record_every=1.0,
                           stop=(nw.StopCondition("c", "pressure", "above", 701e5),)))


def best_of(n, fn):
    best, out = None, None
    for _ in range(n):
        res = fn()
        t = res.stats["wall_time_s"]
        if best is None or t < best:
            best, out = t, res
    return best, out


def main(repeats: int = 7):
    print(f"{'case':>9} {'wall':>10} {'nodes':>5} {'solver [s]':>10} {'ratio':>6} "
          f"{'steps':>6} {'rhs':>6} {'jac':>5} {'EOS':>7} {'T_min/max gas [degC]':>21}")
    for name, build, extreme in (("blowdown", blowdown, "min"), ("fill", fill, "max")):
        run_network(build("adiabatic"))  # warm-up
        base = None
        for kind, div in (("adiabatic", 0), ("lumped", 0), ("layered", 6), ("layered", 12),
                          ("layered", 24)):
            t, res = best_of(repeats, lambda: run_network(build(kind, div)))
            base = base or t
            nodes = {"adiabatic": 0, "lumped": 1}.get(kind, div + 1)
            T, _ = res.extreme(f"{res.vessel_names()[0]}.temperature", extreme)
            st = res.stats
            print(f"{name:>9} {kind:>10} {nodes:5d} {t:10.4f} {t / base:6.2f} {st['steps']:6d} "
                  f"{st['rhs_calls']:6d} {st['jacobians']:5d} "
                  f"{st['property_evaluations']:7d} {T - 273.15:21.2f}")

    # the Jacobian with and without grouping the wall's columns (25 wall temperatures)
    model = Model(blowdown("layered", 24))
    y = model.y0()
    seg = model.segment(0.0, 100.0, model.initial_discrete(y))
    seg.scale = model.scales(y)
    grouped = model.jacobian_groups
    single = [([j], None) for j in range(model.n_dynamic)]
    for label, groups in (("grouped", grouped), ("one column at a time", single)):
        model.jacobian_groups = groups
        seg.rhs_calls = 0
        n = 200
        t0 = time.perf_counter()
        for _ in range(n):
            seg.jac(1.0, y)
        dt = (time.perf_counter() - t0) / n
        print(f"Jacobian, 25 wall temperatures, {label}: {dt * 1e3:.3f} ms, "
              f"{seg.rhs_calls // n} right-hand sides")
    model.jacobian_groups = grouped

    # one transport-property evaluation (a new gas state), per fluid
    from cvsim.fluid import RealFluid
    from cvsim.heat.transport import GasProperties
    for fluid, rho, T in (("Nitrogen", 100.0, 250.0), ("Hydrogen", 30.0, 320.0),
                          ("Methane", 80.0, 260.0)):
        props = GasProperties(RealFluid(fluid))
        f = RealFluid(fluid)
        states = [f.state_dt(rho * (1 + 1e-4 * i), T) for i in range(2000)]
        t0 = time.perf_counter()
        for st in states:
            props.at(st)
        dt = (time.perf_counter() - t0) / len(states)
        print(f"transport properties of {fluid}: {dt * 1e6:.1f} us per new gas state "
              "(cached while only wall temperatures change)")
        t0 = time.perf_counter()
        for st in states:
            props.film(st, T + 20.0)
        dt = (time.perf_counter() - t0) / len(states)
        print(f"  at the film temperature (natural convection inside): {dt * 1e6:.1f} us per "
              "new gas or inside-wall state")


if __name__ == "__main__":
    main()
