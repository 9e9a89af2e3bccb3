"""Benchmark: cost of a relief valve that cycles (pop action, solver events).

Run by hand:  python benchmarks/bench_relief.py
Cases: the demo scenario scenarios/relief-blocked-outlet.yaml (methane, real-fluid
properties, 5 min, the valve cycles about every 30 s), the same run for 1 h, and a
rapidly cycling air receiver (ideal gas and real fluid, 10 min, a cycle every ~10 s).
Prints solver wall time (best of several runs, imports and plots excluded), steps,
right-hand-side calls, events and the wall time per event.
"""
from __future__ import annotations

import dataclasses
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from cvsim import network as nw  # noqa: E402
from cvsim.api import run_network  # noqa: E402
from cvsim.flow.relief import api526_area  # noqa: E402
from cvsim.scenario import load_scenario  # noqa: E402
from cvsim.signals import Constant  # noqa: E402


def receiver(fluid: nw.FluidSpec, end: float) -> nw.Network:
    """1 m3 air receiver at 9 bar g fed 0.3 kg/s, pop valve F orifice set 10 bar g, 7 %."""
    atm = 101325.0
    p_set = 10e5 + atm
    return nw.Network(
        title="benchmark: cycling relief valve", fluid=fluid,
        vessels=(nw.Vessel("drum", nw.Geometry(1.0), nw.InitialState(9e5 + atm, 293.15)),),
        reservoirs=(nw.Reservoir("atmosphere", Constant(atm), Constant(293.15)),),
        links=(nw.Link("compressor", "atmosphere", "drum",
                       nw.FixedFlow(Constant(0.3), delivery_temperature=313.15)),
               nw.Link("psv", "drum", "atmosphere",
                       nw.ReliefValve(api526_area("F"), p_set, "pop",
                                      reseat_pressure=p_set - 0.07 * 10e5))),
        run=nw.RunSettings(end_time=end, record_every=1.0))


def best_of(n, fn):
    best = None
    for _ in range(n):
        res = fn()
        wall = res.stats["wall_time_s"]
        if best is None or wall < best[0]:
            best = (wall, res)
    return best


def main():
    demo = load_scenario(ROOT / "scenarios" / "relief-blocked-outlet.yaml").network
    cases = [
        ("demo: methane drum, 5 min", demo),
        ("demo: methane drum, 1 h", dataclasses.replace(
            demo, run=dataclasses.replace(demo.run, end_time=3600.0))),
        ("air receiver, real fluid, 10 min", receiver(nw.FluidSpec("Air"), 600.0)),
        ("air receiver, ideal gas, 10 min", receiver(
            nw.FluidSpec("Air", "ideal-gas", 0.0289647, 1004.5), 600.0)),
    ]
    run_network(cases[0][1])  # warm-up (CoolProp set-up)
    print(f"{'case':<36} {'wall [s]':>8} {'steps':>6} {'rhs':>6} {'events':>6} "
          f"{'openings':>8} {'ms/event':>8}")
    for name, network in cases:
        wall, res = best_of(3, lambda: run_network(network))
        st = res.stats
        opens = res.summary()["links"]["psv"]["openings"]
        per = 1e3 * wall / max(st["events"], 1)
        print(f"{name:<36} {wall:8.3f} {st['steps']:6d} {st['rhs_calls']:6d} "
              f"{st['events']:6d} {opens:8d} {per:8.2f}")


if __name__ == "__main__":
    main()
