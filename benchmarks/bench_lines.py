"""Benchmark: what a 30 m line costs against a bare orifice.

Nitrogen 1 m3 from 150 bar g, 15 degC to the atmosphere until 10 bar a (the blowdown of
bench_blowdown.py), through
  * a bare 10 mm orifice, Cd 0.84 (real-gas and perfect-gas nozzle);
  * the same orifice at the end of 30 m of 1-inch line (26.6 mm bore, steel, fittings K 1.5);
  * the same line with the orifice at its start and the isothermal model;
  * 30 m of 1/2-inch line (15.8 mm) with the orifice, where the line itself chokes.
Prints, per case: solver wall time (the least of five runs; imports and start-up
excluded) and its ratio to the real-gas orifice's, steps, right-hand-side calls, the cost of one flow evaluation of the link
(best of many calls at the initial state), the time to 10 bar a and the minimum gas
temperature. Then the PI-controlled and ramp-filled demos' solver times.

Run by hand:  python benchmarks/bench_lines.py
"""
from __future__ import annotations

import math
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from cvsim import network as nw  # noqa: E402
from cvsim.api import run, run_network  # noqa: E402
from cvsim.model import Model  # noqa: E402
from cvsim.signals import Constant  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
ORIFICE_AREA = math.pi * 0.010 ** 2 / 4


def network(device) -> nw.Network:
    return nw.Network(
        title="benchmark: nitrogen blowdown through a line", fluid=nw.FluidSpec("Nitrogen"),
        vessels=(nw.Vessel("receiver", nw.Geometry(1.0),
                           nw.InitialState(150e5 + 101325.0, 288.15)),),
        reservoirs=(nw.Reservoir("atmosphere", Constant(101325.0), Constant(288.15)),),
        links=(nw.Link("vent", "receiver", "atmosphere", device),),
        run=nw.RunSettings(end_time=3600.0, record_every=1.0,
                           stop=(nw.StopCondition("receiver", "pressure", "below", 10e5),)))


CASES = {
    "orifice, real-gas": nw.Orifice(ORIFICE_AREA, 0.84, "real-gas"),
    "orifice, perfect-gas": nw.Orifice(ORIFICE_AREA, 0.84, "ideal-gas"),
    "30 m 1-inch line + orifice at end": nw.Line(
        length=30.0, diameter=0.0266, roughness=4.5e-5, fittings_k=1.5,
        orifice=nw.LineOrifice(ORIFICE_AREA, 0.84, "to")),
    "same, orifice at start, isothermal": nw.Line(
        length=30.0, diameter=0.0266, roughness=4.5e-5, fittings_k=1.5,
        flow_model="isothermal", orifice=nw.LineOrifice(ORIFICE_AREA, 0.84, "from")),
    "30 m 1/2-inch line + orifice": nw.Line(
        length=30.0, diameter=0.0158, roughness=4.5e-5, fittings_k=1.5,
        orifice=nw.LineOrifice(ORIFICE_AREA, 0.84, "to")),
    "30 m 1/2-inch line alone": nw.Line(
        length=30.0, diameter=0.0158, roughness=4.5e-5, fittings_k=1.5),
}


def best_of(n, fn):
    best, out = None, None
    for _ in range(n):
        t0 = time.perf_counter()
        out = fn()
        dt = time.perf_counter() - t0
        best = dt if best is None or dt < best else best
    return best, out


def flow_call_cost(device, calls: int = 300) -> float:
    """Best time [s] of one flow evaluation of the link at the initial state, warm."""
    model = Model(network(device))
    y = model.y0()
    seg = model.segment(0.0, 1.0, model.initial_discrete(y))
    s = seg.states(0.0, y)
    dev = model.devices[0]
    dev.flow(0.0, s.outflow[0], s.outflow[1], seg)
    best = math.inf
    for _ in range(5):
        t0 = time.perf_counter()
        for _ in range(calls):
            dev.flow(0.0, s.outflow[0], s.outflow[1], seg)
        best = min(best, (time.perf_counter() - t0) / calls)
    return best


def best_solver_time(n, device):
    """(least solver wall time [s] of ``n`` runs, the last run's result)."""
    times, res = [], None
    for _ in range(n):
        res = run_network(network(device))
        times.append(res.stats["wall_time_s"])
    return min(times), res


def main():
    import os
    run_network(network(CASES["orifice, real-gas"]))  # warm-up: imports, CoolProp
    print(f"load average at the start: {os.getloadavg()[0]:.2f} (1 min)")
    print(f"{'case':>36} {'solver [s]':>10} {'x orifice':>9} {'steps':>6} {'rhs':>6} "
          f"{'flow call [us]':>15} {'to 10 bar a [s]':>15} {'min T [degC]':>12}")
    base = None
    for name, device in CASES.items():
        solver, res = best_solver_time(5, device)
        st = res.stats
        tmin, _ = res.extreme("receiver.temperature", "min")
        cost = flow_call_cost(device)
        if base is None:
            base = solver
        print(f"{name:>36} {solver:10.4f} {solver / base:9.2f} {st['steps']:6d} "
              f"{st['rhs_calls']:6d} {cost * 1e6:15.1f} {res.time[-1]:15.1f} "
              f"{tmin - 273.15:12.2f}")
    print(f"(solver time: the least of five runs; 'x orifice' against the real-gas "
          f"orifice's {base:.4f} s)")
    print(f"load average at the end: {os.getloadavg()[0]:.2f} (1 min)")
    for demo in ("flare-header-blowdown", "nitrogen-regulated-fill", "hydrogen-ramp-fill"):
        run(ROOT / "scenarios" / f"{demo}.yaml")
        wall, res = best_of(3, lambda: run(ROOT / "scenarios" / f"{demo}.yaml"))
        st = res.stats
        print(f"demo {demo}: solver {st['wall_time_s']:.3f} s, {st['steps']} steps, "
              f"{st['rhs_calls']} rhs, whole run with checks {wall:.2f} s")


if __name__ == "__main__":
    main()
