"""Benchmark: nitrogen 1 m3 from 150 bar g, 15 degC through a 10 mm orifice (Cd 0.84)
to atmosphere, adiabatic, real-gas flow, until 10 bar a.

Run by hand:  python benchmarks/bench_blowdown.py
Prints the solver wall time (imports excluded; best of several runs), right-hand-side
calls, property evaluations, and the error of the minimum gas temperature against a
tight-tolerance run; then the start-up time of `cvsim --help`.
Target (issue 2): <= 0.3 s, minimum temperature within 0.1 K of the tight run;
`cvsim --help` <= 0.5 s.
"""
from __future__ import annotations

import math
import subprocess
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from cvsim import network as nw  # noqa: E402
from cvsim.api import run_network  # noqa: E402
from cvsim.signals import Constant  # noqa: E402


def network(rtol: float, method: str = "LSODA", flow_model: str = "real-gas") -> nw.Network:
    return nw.Network(
        title="benchmark: nitrogen blowdown", fluid=nw.FluidSpec("Nitrogen"),
        vessels=(nw.Vessel("receiver", nw.Geometry(1.0),
                           nw.InitialState(150e5 + 101325.0, 288.15)),),
        reservoirs=(nw.Reservoir("atmosphere", Constant(101325.0), Constant(288.15)),),
        links=(nw.Link("vent", "receiver", "atmosphere",
                       nw.Orifice(math.pi * 0.010 ** 2 / 4, 0.84, flow_model)),),
        run=nw.RunSettings(end_time=3600.0, record_every=1.0, rtol=rtol, method=method,
                           stop=(nw.StopCondition("receiver", "pressure", "below", 10e5),)))


def best_of(n, fn):
    best = None
    for _ in range(n):
        t0 = time.perf_counter()
        out = fn()
        dt = time.perf_counter() - t0
        best = dt if best is None or dt < best else best
    return best, out


def main():
    run_network(network(1e-6))  # warm-up: CoolProp fluid set-up, imports
    ref = run_network(network(1e-11))
    T_ref, t_ref = ref.extreme("receiver.temperature", "min")
    print(f"reference (rtol 1e-11): min gas T = {T_ref - 273.15:.4f} degC at "
          f"{t_ref:.2f} s, end {ref.time[-1]:.3f} s")
    print(f"{'method':>7} {'rtol':>7} {'flow':>9} {'wall [s]':>9} {'solver [s]':>10} "
          f"{'steps':>6} {'rhs':>6} {'props':>7} {'dTmin [K]':>10} {'dt_end [s]':>10}")
    for method, rtol, fm in (("LSODA", 1e-6, "real-gas"), ("BDF", 1e-6, "real-gas"),
                             ("Radau", 1e-6, "real-gas"), ("LSODA", 1e-4, "real-gas"),
                             ("LSODA", 1e-6, "ideal-gas")):
        wall, res = best_of(5, lambda: run_network(network(rtol, method, fm)))
        Tmin, _ = res.extreme("receiver.temperature", "min")
        st = res.stats
        print(f"{method:>7} {rtol:7.0e} {fm:>9} {wall:9.4f} {st['wall_time_s']:10.4f} "
              f"{st['steps']:6d} {st['rhs_calls']:6d} {st['property_evaluations']:7d} "
              f"{Tmin - T_ref:10.2e} {res.time[-1] - ref.time[-1]:10.2e}")
    # start-up of the command line
    cmd = [sys.executable, "-m", "cvsim.cli", "--help"]
    subprocess.run(cmd, capture_output=True)
    times = []
    for _ in range(5):
        t0 = time.perf_counter()
        subprocess.run(cmd, capture_output=True, check=True)
        times.append(time.perf_counter() - t0)
    print(f"cvsim --help: best {min(times):.3f} s, median {sorted(times)[2]:.3f} s")


if __name__ == "__main__":
    main()
