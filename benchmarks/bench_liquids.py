"""Benchmark: vessels that hold liquid.

1. The LPG demo (scenarios/lpg-bullet-pool-fire.yaml): a propane bullet 60 % full in an
   API 521 pool fire for 30 minutes, lumped steel wall, relief valve (letter H).
2. The liquid CO2 demo (scenarios/co2-liquid-vent.yaml): 2 m3 of liquid CO2 at 60 bar g
   vented to atmosphere through 10 mm until 5.5 bar a (flashing contents, the jet
   reaching the triple point).
3. The water drum demo (scenarios/water-drum-liquid-full.yaml): heated into liquid-full,
   relieving liquid.

Run by hand:  python benchmarks/bench_liquids.py [--repeat N]
Prints, per case, the solver wall time (best of N; imports and the self-checks
excluded), steps, right-hand sides, property evaluations (every equation-of-state call:
the iterations of the state solves, saturation look-ups, slopes), the state solves of
the solver - (rho, u) -> state of the vessels, (rho, s) -> state on the isentropes of
the flow devices - with their mean iterations, and the two-phase isentrope points of
the homogeneous-equilibrium nozzle (lever rule at a temperature: one saturation call,
no iteration); counted by cvsim.fluid.RealFluid, the self-checks after the run not
included. Last, the time of the self-checks.
Aim (issue 8): <= 1 s solver time for the 30-minute fire and the CO2 vent.
"""
from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

import dataclasses  # noqa: E402

from cvsim.model import Model  # noqa: E402
from cvsim.result import build_result  # noqa: E402
from cvsim.scenario import load_scenario  # noqa: E402
from cvsim.solve import integrate  # noqa: E402

CASES = [
    ("LPG bullet, pool fire, 30 min", "lpg-bullet-pool-fire.yaml", 1800.0),
    ("liquid CO2 vent to 5.5 bar a", "co2-liquid-vent.yaml", None),
    ("water drum to liquid-full, 2 h", "water-drum-liquid-full.yaml", None),
]


def run_counted(net):
    """Solver wall time, the result (self-checks included) and the fluid's counters."""
    model = Model(net)
    raw = integrate(model)
    t0 = time.perf_counter()
    res = build_result(model, raw, {})
    return raw.stats["wall_time_s"], time.perf_counter() - t0, res, model.fluid


def main() -> None:
    import os
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args()
    print(f"load average before: {os.getloadavg()[0]:.2f} on {os.cpu_count()} CPUs")
    print(f"{'case':34s} {'solver [s]':>10s} {'steps':>6s} {'rhs':>6s} {'props':>8s} "
          f"{'(rho,u)':>8s} {'it/solve':>8s} {'(rho,s)':>8s} {'it/solve':>8s} {'s at T':>7s} "
          f"{'checks [s]':>10s}")
    for label, name, end in CASES:
        net = load_scenario(ROOT / "scenarios" / name).network
        if end is not None:
            net = dataclasses.replace(net, run=dataclasses.replace(net.run, end_time=end))
        best = None
        for _ in range(args.repeat):
            got = run_counted(net)
            if best is None or got[0] < best[0]:
                best = got
        solver, checks, res, fluid = best
        st = res.stats
        assert res.ok and not res.checks_failed, res.message
        n, it = fluid.solves, fluid.solve_iterations
        print(f"{label:34s} {solver:10.3f} {st['steps']:6d} {st['rhs_calls']:6d} "
              f"{st['property_evaluations']:8d} {n['u']:8d} {it['u'] / max(n['u'], 1):8.2f} "
              f"{n['s']:8d} {it['s'] / max(n['s'], 1):8.2f} {n['s@T']:7d} {checks:10.3f}")
    print(f"load average after: {os.getloadavg()[0]:.2f}")


if __name__ == "__main__":
    main()
