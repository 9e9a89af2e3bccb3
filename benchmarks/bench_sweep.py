"""Benchmark: sweep throughput on local worker processes and on Dask, and the
parallel efficiency with 2 workers against 1.

Run by hand:  python benchmarks/bench_sweep.py [--cases 12] [--max-step 0.04] [--repeat 2]

Each case is the demo separator depressuring (real-gas methane, 15 min of
blowdown) with the solver's largest step cut to make it take about 1 s, with
the orifice varied slightly from case to case so that every case does the
same work. Prints:

* the time of one case run in this process (no pool);
* how long local workers take to start and give a first result, for each
  start method (fork, forkserver, spawn);
* cases per second with 1 and 2 local worker processes, and the parallel
  efficiency T(1 worker) / (2 T(2 workers)) (target: at least 80 %);
* the same on a Dask LocalCluster on the loopback address (2 worker processes,
  1 thread each): a first sweep (workers import cvsim and CoolProp) and a
  second one on the warm cluster.

Speed is measured here, by hand, never asserted in tests.
"""
from __future__ import annotations

import argparse
import os
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

SCENARIO = Path(__file__).resolve().parents[1] / "scenarios" / "separator-depressuring.yaml"


def case_overrides(max_step: float) -> dict:
    return {"run.solver": f"{{relative_tolerance: 1e-8, max_step: {max_step} s}}"}


def diameters(n: int) -> str:
    # a narrow band above the answer (17.40 mm): every case stops at the target
    # pressure after about 12 to 13.5 minutes, so every case does about the same work
    return f"18.5 mm:19.5 mm:{n}"


def one_case(max_step: float) -> float:
    from cvsim import run
    run(SCENARIO, overrides=case_overrides(max_step))  # warm-up: imports, CoolProp
    times = []
    for _ in range(3):
        t0 = time.perf_counter()
        result = run(SCENARIO, overrides={**case_overrides(max_step),
                                          "links.orifice.diameter": "19 mm"})
        times.append(time.perf_counter() - t0)
    steps = result.stats["steps"]
    return statistics.median(times), steps


def start_up(method: str) -> float:
    """Seconds from creating a pool to the first result of a tiny case."""
    from cvsim.study.parallel import Workers
    from cvsim.study.sweep import Source, make_jobs, run_case
    source = Source.of(SCENARIO, {"run.end": "1 s"})
    job = make_jobs(source, [{}])[0]
    t0 = time.perf_counter()
    with Workers(workers=2, start_method=method) as pool:
        for _ in pool.map(run_case, [job]):
            pass
        return time.perf_counter() - t0


def sweep_time(n: int, max_step: float, repeat: int, **where) -> tuple[float, int]:
    """Best wall time of ``repeat`` sweeps of ``n`` cases (the least disturbed by
    other work on the machine), and the failed cases of the last."""
    from cvsim import sweep
    best = None
    for _ in range(repeat):
        t0 = time.perf_counter()
        result = sweep(SCENARIO, {"links.orifice.diameter": diameters(n)}, progress=False,
                       overrides=case_overrides(max_step), **where)
        wall = time.perf_counter() - t0
        best = wall if best is None else min(best, wall)
    return best, result.counts()["failed"]


def load() -> str:
    one, five, _ = os.getloadavg()
    return f"load average {one:.2f} (1 min), {five:.2f} (5 min) on {os.cpu_count()} CPUs"


def main():
    ap = argparse.ArgumentParser(description=__doc__,
                                 formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--cases", type=int, default=12)
    ap.add_argument("--max-step", type=float, default=0.04, help="[s] largest solver step")
    ap.add_argument("--repeat", type=int, default=2, help="sweeps per configuration (best kept)")
    args = ap.parse_args()
    n, ms, rep = args.cases, args.max_step, args.repeat
    print(f"before: {load()} (other work on the machine slows every figure below)")

    t_case, steps = one_case(ms)
    print(f"one case in this process: {t_case:.3f} s ({steps} solver steps); "
          f"{n} cases in a row would take {n * t_case:.1f} s")

    print("\nstart-up of 2 local workers to a first result:")
    for method in ("fork", "forkserver", "spawn"):
        print(f"  {method:<10} {start_up(method):6.2f} s")

    print(f"\nlocal worker processes, {n} cases:")
    rows = {}
    for workers in (1, 2):
        wall, failed = sweep_time(n, ms, rep, workers=workers)
        rows[workers] = wall
        print(f"  {workers} worker{'s' if workers > 1 else ' '}  {wall:7.2f} s  "
              f"{n / wall:6.2f} cases/s  ({failed} failed)")
    eff = rows[1] / (2 * rows[2])
    print(f"  parallel efficiency with 2 workers: {eff * 100:.0f} % of linear "
          f"(T1 / (2 T2)); against the serial in-process time: "
          f"{n * t_case / (2 * rows[2]) * 100:.0f} %")

    from distributed import LocalCluster
    t0 = time.perf_counter()
    with LocalCluster(processes=True, n_workers=2, threads_per_worker=1, host="127.0.0.1",
                      dashboard_address=None) as cluster:
        up = time.perf_counter() - t0
        print(f"\nDask LocalCluster on 127.0.0.1 (2 workers x 1 thread), started in {up:.2f} s; "
              f"{n} cases:")
        for label, r in (("first sweep (cold workers)", 1), ("warm workers", rep)):
            wall, failed = sweep_time(n, ms, r, cluster=cluster.scheduler_address)
            print(f"  {label:<28} {wall:7.2f} s  {n / wall:6.2f} cases/s  "
                  f"efficiency vs 1 local worker {rows[1] / (2 * wall) * 100:.0f} %  "
                  f"({failed} failed)")
    print(f"\nafter: {load()}")


if __name__ == "__main__":
    main()
