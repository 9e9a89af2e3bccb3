"""Benchmark: vapour and liquid as separated zones against the equilibrium model.

The two demos (scenarios/propane-drum-separated-blowdown.yaml, 15 min, layered wall;
scenarios/propane-bullet-separated-fire.yaml, 30 min, pool fire and relief valve), each
run as written (separated zones) and with ``phases: {model: equilibrium}``.

Run by hand:  python benchmarks/bench_zones.py [--repeat N]
Prints per case and model the solver wall time (best of N; imports and self-checks
excluded), steps, right-hand sides, Jacobians and property evaluations, and the ratio of
the separated model's time to the equilibrium model's; and what the two models give for
the coldest and hottest metal, and the load average before and after.
"""
from __future__ import annotations

import argparse
import dataclasses
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from cvsim.api import run_network  # noqa: E402
from cvsim.scenario import load_scenario  # noqa: E402

CASES = [("propane drum, fast blowdown, 15 min", "propane-drum-separated-blowdown.yaml"),
         ("propane bullet, pool fire, 30 min", "propane-bullet-separated-fire.yaml")]


def equilibrium(net):
    vessels = tuple(dataclasses.replace(v, zones=None) for v in net.vessels)
    return dataclasses.replace(net, vessels=vessels)


def timed(net, repeat):
    best = None
    for _ in range(repeat):
        t0 = time.perf_counter()
        r = run_network(net)
        wall = r.stats.get("wall_time_s", time.perf_counter() - t0)
        if best is None or wall < best[0]:
            best = (wall, r)
    return best


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args()
    import os
    print(f"load average before: {os.getloadavg()[0]:.2f} on {os.cpu_count()} CPUs "
          "(the machine is shared: a load above the cores slows every time, both models alike)")
    print(f"{'case':38s} {'model':12s} {'solver [s]':>10s} {'steps':>6s} {'rhs':>6s} "
          f"{'jac':>4s} {'props':>8s}  coldest / hottest metal [degC]")
    for label, name in CASES:
        net = load_scenario(ROOT / "scenarios" / name).network
        times = {}
        for model, n in (("equilibrium", equilibrium(net)), ("separated", net)):
            wall, r = timed(n, args.repeat)
            times[model] = wall
            v = r.summary()["vessels"][net.vessels[0].name]
            st = r.stats
            print(f"{label:38s} {model:12s} {wall:10.3f} {st['steps']:6d} {st['rhs_calls']:6d} "
                  f"{st['jacobians']:4d} {st['property_evaluations']:8d}  "
                  f"{v['min_wall_temperature_K'] - 273.15:7.1f} / "
                  f"{v['max_wall_temperature_K'] - 273.15:6.1f}")
        print(f"{'':38s} {'ratio':12s} {times['separated'] / times['equilibrium']:10.2f}")
    print(f"load average after: {os.getloadavg()[0]:.2f}")


if __name__ == "__main__":
    main()
