"""Benchmark: what following the liquid level costs.

Run by hand:  python benchmarks/bench_level.py

1. One call of the level solve (warm-started, the volume changed by 1e-7 as between two
   right-hand sides) and of the outside area below a height, per head and orientation
   (D 2 m, L 8 m, 15 mm wall).
2. Whole runs, 30 minutes: a propane bullet (D 2 m, L 8 m, horizontal, 60 % liquid at
   20 degC, steel wall 15 mm) in an API 521 pool fire with a letter-J relief valve set at
   17.5 barg, with hemispherical and with torispherical heads, once with the wetted area
   following the level and once with the same area at the initial level stated (held
   constant): best-of-N solver time (imports excluded), steps and right-hand sides.
"""
from __future__ import annotations

import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from cvsim.api import run  # noqa: E402
from cvsim.heat.fire import pool_fire_area  # noqa: E402
from cvsim.heat.level import Tank  # noqa: E402
from cvsim.scenario import load_scenario_text  # noqa: E402

HEADS = ("flat", "2:1-ellipsoidal", "torispherical", "hemispherical")

BULLET = """
title: propane bullet in a pool fire
fluid: Propane
vessels:
  bullet:
    shape: {{kind: cylinder, inner_diameter: 2 m, length: 8 m, orientation: horizontal,
            heads: {heads}}}
    initial: {{temperature: 20 degC, liquid_fraction: 60 %}}
    heat:
      wall:
        model: lumped
        layers: {{material: carbon-steel, thickness: 15 mm}}
        outside:
          model: natural
          ambient: 20 degC
          fire: {{model: pool, drainage_and_firefighting: adequate{area}}}
reservoirs:
  air: {{pressure: 1 atm, temperature: 20 degC}}
links:
  psv: {{from: bullet, to: air, device: relief-valve, set_pressure: 17.5 barg, action: pop,
         blowdown: 7 %, orifice_letter: J}}
run: {{end: 30 min, record_every: 30 s}}
"""


def per_call(fn, n: int = 2000, repeat: int = 5) -> float:
    best = float("inf")
    for _ in range(repeat):
        t0 = time.perf_counter()
        for _ in range(n):
            fn()
        best = min(best, (time.perf_counter() - t0) / n)
    return best * 1e6


def calls() -> None:
    print("one call [us]            level (warm)   outside area below a height")
    for heads in HEADS:
        for orientation in ("vertical", "horizontal"):
            inside = Tank("cylinder", 2.0, 8.0, heads, orientation)
            outside = Tank("cylinder", 2.0, 8.0, heads, orientation, 0.015)
            V = 0.6 * inside.volume
            h = inside.level(V)
            volumes = [V * (1.0 + 1e-7), V]
            k = [0]

            def level():
                k[0] ^= 1
                inside.level(volumes[k[0]])
            print(f"  {heads:16s} {orientation:10s} {per_call(level):8.1f}      "
                  f"{per_call(lambda: outside.area_below(h + 0.015)):8.1f}")


def runs(repeat: int = 3) -> None:
    print("30 min fire runs          solver [s]  steps  rhs   (best of %d)" % repeat)
    for heads in ("hemispherical", "torispherical"):
        follow = load_scenario_text(BULLET.format(heads=heads, area=""))
        fire = follow.network.vessels[0].heat[0].fire
        A0 = pool_fire_area(fire, 0.6)[0]
        fixed = load_scenario_text(BULLET.format(heads=heads, area=f", area: {A0} m2"))
        for name, scenario in (("level followed", follow), ("area held", fixed)):
            best = None
            for _ in range(repeat):
                res = run(scenario)
                if best is None or res.stats["wall_time_s"] < best.stats["wall_time_s"]:
                    best = res
            s = best.stats
            print(f"  {heads:14s} {name:15s} {s['wall_time_s']:7.3f} {s['steps']:6d} "
                  f"{s['rhs_calls']:5d}   ({best.status})")


if __name__ == "__main__":
    calls()
    runs()
