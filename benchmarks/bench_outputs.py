"""Benchmark: where the time of a whole command goes, and the command end to end.

Run by hand:  python benchmarks/bench_outputs.py [--repeat N]

1. Phases of `cvsim run scenarios/nitrogen-blowdown.yaml --report`, each timed in a
   fresh interpreter in the order the command meets them (wall and CPU seconds):
   imports, reading the scenario (the property library loads here), importing
   SciPy, the solve, the result with its self-checks, importing matplotlib, each
   plot, the report, the CSV and summary files.
2. The command end to end (`python -m cvsim.cli run ...` in a subprocess, N runs of
   each case taken in turn; best and median): with plots and report as it runs
   (CoolProp's fluids loaded in a background thread, cvsim.preload; plotting helper
   processes, cvsim.painters), the same with CoolProp loaded in the foreground
   (CVSIM_PRELOAD=0), with the helpers off (CVSIM_PLOT_HELPERS=0: every figure drawn
   in the main process), and without plots.

Part 1 runs in one process, as the phases follow one another there: no helpers, no
background loading, the garbage collector as Python sets it.

The load average is printed with the figures: the machine is shared, and a busy
machine stretches every number. Target (issue 12): the demo run with plots and report
in at most 1.5 s on the 2-core machine.
"""
from __future__ import annotations

import argparse
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "scenarios" / "nitrogen-blowdown.yaml"

PHASES = r'''
import resource, sys, time
def cpu():
    r = resource.getrusage(resource.RUSAGE_SELF)
    return r.ru_utime + r.ru_stime
T0 = time.perf_counter(); C0 = cpu(); last = [T0, C0]
def lap(name):
    now, c = time.perf_counter(), cpu()
    print(f"{name:40s} {now - last[0]:7.3f} {c - last[1]:7.3f}")
    last[0], last[1] = now, c
import cvsim.cli; lap("import cvsim.cli")
from cvsim.scenario import load_scenario; lap("import the scenario reader (yaml, numpy)")
sc = load_scenario(sys.argv[1]); lap("read the scenario (CoolProp loads)")
from cvsim import api; lap("import the solver (SciPy)")
from cvsim.model import Model; from cvsim.solve import integrate
m = Model(sc.network); raw = integrate(m); lap("solve")
import cvsim.result as R
from cvsim.checks import run_checks
from cvsim.fluid import make_fluid
res = R.build_result(m, raw, api.provenance(sc)); lap("result, limits and self-checks")
f = sc.network.fluid
run_checks(res, make_fluid(f.name, f.model, f.molar_mass, f.cp, f.cp_temperature))
lap("  the self-checks alone (again)")
from matplotlib.figure import Figure
from matplotlib.backends.backend_agg import FigureCanvasAgg; lap("import matplotlib")
from cvsim import plot
from pathlib import Path
out = Path(sys.argv[2])
paths = []
for name in plot.plot_names(res):
    paths += plot.plot_run(res, out, only=[name]); lap(f"plot {name}.png")
from cvsim.report import render_run_report
(out / "report.html").write_text(render_run_report(res, sc, paths)); lap("report.html")
from cvsim.outputs import summary_text, write_csv
write_csv(res, out / "h.csv"); write_csv(res, out / "s.csv", fine=True)
(out / "summary.txt").write_text(summary_text(res)); lap("CSV files and summary")
print(f"{'total':40s} {time.perf_counter() - T0:7.3f} {cpu() - C0:7.3f}")
'''


def command(args: list[str], env: dict | None = None) -> tuple[float, float]:
    """Wall and CPU seconds (this process's children: the command and its helpers)."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    t0 = time.perf_counter()
    subprocess.run([sys.executable, "-m", "cvsim.cli", *args], check=True,
                   stdout=subprocess.DEVNULL, env={**os.environ, **(env or {})})
    wall = time.perf_counter() - t0
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    return wall, (after.ru_utime + after.ru_stime) - (before.ru_utime + before.ru_stime)


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=9)
    n = ap.parse_args().repeat
    print(f"load average before: {os.getloadavg()[0]:.2f} (2 cores: above 2 the machine "
          "is shared)")
    # as an installed cvsim runs: its modules compiled once to bytecode. Where the
    # environment sets PYTHONDONTWRITEBYTECODE, every command would compile them from
    # source again (about 0.1 s more per command), which is not what a user meets.
    env = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}
    subprocess.run([sys.executable, "-m", "compileall", "-q", str(ROOT / "cvsim")],
                   check=True, stdout=subprocess.DEVNULL, env=env)
    if os.environ.get("PYTHONDONTWRITEBYTECODE"):
        print("PYTHONDONTWRITEBYTECODE is set: cvsim's bytecode was written once first")
    with tempfile.TemporaryDirectory() as tmp:
        print(f"\n1. Phases of a run with plots and report, one process [s]")
        print(f"{'phase':40s} {'wall':>7} {'cpu':>7}")
        subprocess.run([sys.executable, "-c", PHASES, str(DEMO), tmp], check=True)
        print(f"\n2. The whole command, {n} runs of each, taken in turn (wall, and CPU of "
              "all its processes) [s]")
        cases = [("run --report (as it runs)", ["--report"], None),
                 ("run --report, CoolProp loaded in the foreground", ["--report"],
                  {"CVSIM_PRELOAD": "0"}),
                 ("run --report, plotting helpers off", ["--report"],
                  {"CVSIM_PLOT_HELPERS": "0"}),
                 ("run --no-plots", ["--no-plots"], None)]
        runs = {label: [] for label, _, _ in cases}
        for _ in range(n):  # in turn: a machine that slows down slows every case alike
            for label, extra, env in cases:
                runs[label].append(command(["run", str(DEMO), "--out", f"{tmp}/out",
                                            "--quiet", *extra], env))
        print(f"  {'':52s} {'wall best':>9} {'median':>7} {'cpu median':>10}")
        for label, _, _ in cases:
            walls = sorted(w for w, _ in runs[label])
            cpus = sorted(c for _, c in runs[label])
            print(f"  {label:52s} {walls[0]:9.3f} {walls[n // 2]:7.3f} {cpus[n // 2]:10.3f}")
    print(f"load average after: {os.getloadavg()[0]:.2f}")


if __name__ == "__main__":
    main()
