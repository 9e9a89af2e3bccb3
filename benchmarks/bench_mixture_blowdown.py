"""Benchmark: blowdown of a 5-component natural gas into the two-phase region.

Run by hand:  python benchmarks/bench_mixture_blowdown.py [--equation SRK] [--method LSODA]

The case of issue 11: 1 m3 of natural gas (C1 0.80, C2 0.08, C3 0.06, nC4 0.04, N2
0.02, mole fractions) from 100 bar a and 15 degC through a 10 mm orifice (Cd 0.84,
real-gas nozzle) to the atmosphere, adiabatic, Peng-Robinson; the contents cool
into the phase envelope and condense (retrograde). Prints the solver time, the
right-hand sides and Jacobians, the (T, p) flashes and equation-of-state calls (per
right-hand side), the state at the end, and how the time splits between the vessel
states and the nozzle.
"""
from __future__ import annotations

import argparse
import cProfile
import pstats
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from cvsim import network as nw  # noqa: E402
from cvsim.components import make_composition  # noqa: E402
from cvsim.model import Model  # noqa: E402
from cvsim.signals import Constant  # noqa: E402
from cvsim.solve import integrate  # noqa: E402

GAS = {"Methane": 0.80, "Ethane": 0.08, "Propane": 0.06, "n-Butane": 0.04, "Nitrogen": 0.02}


def network(equation: str, method: str, end: float, stop_bar: float, rtol: float = 1e-6,
            record: float = 1.0) -> nw.Network:
    comp = make_composition(GAS)
    fluid = nw.FluidSpec(name="natural gas", model="mixture", components=comp.names,
                         mole_fractions=comp.mole_fractions, equation=equation)
    vessel = nw.Vessel("vessel", nw.Geometry(volume=1.0), nw.InitialState(100e5, 288.15))
    atm = nw.Reservoir("atmosphere", Constant(101325.0), Constant(288.15))
    area = 3.141592653589793 / 4 * 0.010 ** 2
    vent = nw.Link("vent", "vessel", "atmosphere", nw.Orifice(area, 0.84))
    run = nw.RunSettings(end_time=end, record_every=record, method=method, rtol=rtol,
                         atol_scale=1e-3 * rtol,
                         stop=(nw.StopCondition("vessel", "pressure", "below", stop_bar * 1e5),))
    return nw.Network("natural gas blowdown", fluid, (vessel,), (atm,), (vent,), run)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--equation", default="Peng-Robinson")
    ap.add_argument("--method", default="LSODA")
    ap.add_argument("--end", type=float, default=3600.0)
    ap.add_argument("--stop-bar", type=float, default=2.0)
    ap.add_argument("--profile", action="store_true")
    ap.add_argument("--rtol", type=float, default=1e-6)
    ap.add_argument("--record", type=float, default=1.0)
    ap.add_argument("--accuracy", action="store_true", help="rerun at rtol/100 and compare")
    a = ap.parse_args()
    net = network(a.equation, a.method, a.end, a.stop_bar, a.rtol, a.record)
    t0 = time.perf_counter()
    model = Model(net)
    t_setup = time.perf_counter() - t0
    eng = model.fluid.engine
    prof = cProfile.Profile() if a.profile else None
    if prof:
        prof.enable()
    t0, c0 = time.perf_counter(), time.process_time()
    raw = integrate(model)
    wall, cpu = time.perf_counter() - t0, time.process_time() - c0
    if prof:
        prof.disable()
    st = raw.stats
    cols = [c[0] for c in raw.columns]
    last = raw.rows[-1]
    get = dict(zip(cols, last))
    first_two = next((r[0] for r in raw.fine_rows
                      if r[cols.index("vessel.vapour_quality")] == r[cols.index(
                          "vessel.vapour_quality")]), None)
    lf_max = max(r[cols.index("vessel.liquid_fraction")] for r in raw.rows + raw.fine_rows)
    T_min = min(r[cols.index("vessel.temperature")] for r in raw.rows + raw.fine_rows)
    print(f"{a.equation}, {a.method}: status {raw.status} ({raw.message}) at t = {raw.t_final:.1f} s")
    print(f"  model set-up {t_setup:.2f} s; solver time {wall:.2f} s (processor time "
          f"{cpu:.2f} s)")
    print(f"  steps {st['steps']}, right-hand sides {st['rhs_calls']}, Jacobians {st['jacobians']}, "
          f"retries {st['rejected_retries']}")
    n_eval = st["rhs_calls"] + len(raw.rows) + len(raw.fine_rows)
    print(f"  (T, p) flashes {eng.flashes}, equation-of-state calls {eng.evaluations}; per "
          f"evaluation of the network (right-hand sides {st['rhs_calls']} + recorded rows "
          f"{len(raw.rows) + len(raw.fine_rows)}): {eng.flashes / n_eval:.1f} flashes, "
          f"{1e3 * wall / n_eval:.2f} ms")
    print(f"  end: {get['vessel.pressure'] / 1e5:.2f} bar a, "
          f"{get['vessel.temperature'] - 273.15:.1f} degC; two-phase from "
          f"{first_two if first_two is None else round(first_two, 1)} s; lowest "
          f"{T_min - 273.15:.1f} degC; largest liquid share {100 * lf_max:.3f} % of the volume")
    if a.accuracy:
        tight = integrate(Model(network(a.equation, a.method, a.end, a.stop_bar, a.rtol / 100,
                                        a.record)))
        t_min = min(r[cols.index("vessel.temperature")] for r in tight.rows + tight.fine_rows)
        print(f"  at rtol/100: stop at {tight.t_final:.4f} s (here {raw.t_final:.4f} s), "
              f"lowest {t_min - 273.15:.3f} degC (here {T_min - 273.15:.3f} degC)")
    if prof:
        pstats.Stats(prof).sort_stats("cumulative").print_stats(25)


if __name__ == "__main__":
    main()
