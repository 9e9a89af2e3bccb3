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
excluded), steps, right-hand sides, property evaluations (state solves and saturation
look-ups), and the time of the self-checks computed after the run.
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

from cvsim.api import run_network  # noqa: E402
from cvsim.scenario import load_scenario  # noqa: E402

CASES = [
    ("LPG bullet, pool fire, 30 min", "lpg-bullet-pool-fire.yaml", 1800.0),
    ("liquid CO2 vent to 5.5 bar a", "co2-liquid-vent.yaml", None),
    ("water drum to liquid-full, 2 h", "water-drum-liquid-full.yaml", None),
]


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args()
    print(f"{'case':34s} {'solver [s]':>10s} {'steps':>6s} {'rhs':>6s} {'props':>8s} "
          f"{'checks [s]':>10s}")
    for label, name, end in CASES:
        net = load_scenario(ROOT / "scenarios" / name).network
        if end is not None:
            net = dataclasses.replace(net, run=dataclasses.replace(net.run, end_time=end))
        best = None
        for _ in range(args.repeat):
            t0 = time.perf_counter()
            res = run_network(net)
            total = time.perf_counter() - t0
            solver = res.stats["wall_time_s"]
            if best is None or solver < best[0]:
                best = (solver, total, res)
        solver, total, res = best
        st = res.stats
        assert res.ok and not res.checks_failed, res.message
        print(f"{label:34s} {solver:10.3f} {st['steps']:6d} {st['rhs_calls']:6d} "
              f"{st['property_evaluations']:8d} {total - solver:10.3f}")


if __name__ == "__main__":
    main()
