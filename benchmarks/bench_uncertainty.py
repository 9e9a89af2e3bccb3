"""Benchmark: an uncertainty study of 1000 cases of the nitrogen demo on local workers.

Run by hand:  python benchmarks/bench_uncertainty.py [--cases 1000] [--workers 2]

The demo scenarios/nitrogen-blowdown.yaml (real-gas nitrogen, 150 bar g to 6.9 bar g
through a 10 mm orifice) with three uncertain inputs: the discharge coefficient
(normal, sd 0.03, at most 1), the initial temperature (triangular -15 / 10 / 35 degC)
and the bore (uniform 9.9 to 10.1 mm). Prints:

* one run of the nominal scenario in this process (median of 5, after a warm-up);
* the mean time of the study's own first 40 cases run one after another in this
  process (the cases differ: cold ones take longer), and that mean x cases;
* the wall time of the whole study (design, range checks, the cases on the
  workers, statistics), the time to write its files and plots;
* the speed-up against the cases run one after another, and the parallel
  efficiency (speed-up / workers);
* the CPU time the worker processes used per case against the CPU time of a
  case run in this process (the overhead of the workers, whatever else runs
  on the machine), and the load average before and after (the machine is
  shared: a load above the number of cores slows every wall time).

Speed is measured here, by hand, never asserted in tests.
"""
from __future__ import annotations

import argparse
import statistics
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

SCENARIO = Path(__file__).resolve().parents[1] / "scenarios" / "nitrogen-blowdown.yaml"
INPUTS = {
    "links.vent.discharge_coefficient": "{distribution: normal, standard_deviation: 0.03, "
                                        "highest: 1}",
    "vessels.receiver.initial.temperature": "{distribution: triangular, lowest: -15 degC, "
                                            "most_likely: 10 degC, highest: 35 degC}",
    "links.vent.diameter": "{distribution: uniform, lowest: 9.9 mm, highest: 10.1 mm}",
}
SERIAL_SAMPLE = 40


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--cases", type=int, default=1000)
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--seed", type=int, default=1)
    args = ap.parse_args()

    import os
    import resource

    import cvsim
    print(f"load average before: {os.getloadavg()[0]:.2f} on {os.cpu_count()} CPUs")
    cvsim.run(SCENARIO)  # warm-up: imports, CoolProp
    times = []
    for _ in range(5):
        t0 = time.perf_counter()
        cvsim.run(SCENARIO)
        times.append(time.perf_counter() - t0)
    nominal = statistics.median(times)
    print(f"one nominal run in this process: {nominal:.3f} s")

    children = resource.getrusage(resource.RUSAGE_CHILDREN)
    t0 = time.perf_counter()
    study = cvsim.uncertainty(SCENARIO, inputs=INPUTS, cases=args.cases, seed=args.seed,
                              workers=args.workers, progress=False)
    wall = time.perf_counter() - t0
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    worker_cpu = (after.ru_utime + after.ru_stime) - (children.ru_utime + children.ru_stime)
    with tempfile.TemporaryDirectory() as tmp:
        t1 = time.perf_counter()
        study.write(Path(tmp) / "study")
        files = time.perf_counter() - t1

    serial, serial_cpu = [], []
    for values in [dict(zip(study.design.keys, (r[k] for k in study.design.keys)))
                   for r in study.table.rows[:SERIAL_SAMPLE]]:
        t2, c2 = time.perf_counter(), time.process_time()
        cvsim.run(SCENARIO, overrides=values)
        serial.append(time.perf_counter() - t2)
        serial_cpu.append(time.process_time() - c2)
    mean_case = statistics.mean(serial)
    cpu_case = statistics.mean(serial_cpu)
    one_by_one = mean_case * args.cases
    c = study.counts
    print(f"study: {args.cases} cases on {study.table.ran_on}: {wall:.1f} s wall "
          f"({study.table.wall_time:.1f} s running cases), files and plots {files:.1f} s")
    print(f"  {c.get('completed', 0)} completed, {c.get('stopped', 0)} stopped, "
          f"{c.get('failed', 0)} failed")
    print(f"mean of the first {SERIAL_SAMPLE} cases run one after another: {mean_case:.3f} s "
          f"-> x {args.cases} = {one_by_one:.1f} s; nominal run x {args.cases} = "
          f"{nominal * args.cases:.1f} s")
    speed_up = one_by_one / wall
    print(f"speed-up {speed_up:.2f} on {args.workers} workers: parallel efficiency "
          f"{100 * speed_up / args.workers:.0f} % (against the same cases one by one), "
          f"{100 * nominal * args.cases / wall / args.workers:.0f} % against the nominal run "
          f"x {args.cases}")
    worker_case = worker_cpu / args.cases
    print(f"CPU per case: {worker_case:.3f} s in the workers, {cpu_case:.3f} s in this process "
          f"(first {SERIAL_SAMPLE} cases): the workers' work is "
          f"{100 * cpu_case / worker_case:.0f} % useful")
    print(f"load average after: {os.getloadavg()[0]:.2f}")
    name = "receiver.min_temperature"
    v, lo, hi, _ = study.spreads[name].at(5)
    print(f"{name} P5 = {v - 273.15:.2f} degC [{lo - 273.15:.2f}, {hi - 273.15:.2f}]")
    for ch in study.chances:
        print(f"  P(crossed) {ch.name}: {ch.crossed}/{ch.cases} = {100 * ch.probability:.1f} % "
              f"({100 * ch.low:.1f} to {100 * ch.high:.1f} %)")


if __name__ == "__main__":
    main()
