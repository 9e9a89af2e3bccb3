"""Benchmark: the mixture property engine (cvsim.mixture) on a 5-component natural gas.

Run by hand:  python benchmarks/bench_mixture.py
Prints, for Peng-Robinson (and GERG-2008 single calls): the cost of one (rho, u) state
cold and warm-started, one phase and two phases; then a plausible blowdown path: the
vessel contents of 1 m3 from 100 bar a and 15 degC expanding along their isentrope
(adiabatic, equilibrium, fixed overall composition) into the two-phase region, with
the solver's pattern of calls per right-hand side (the state, two perturbed states for
the finite-difference Jacobian) and a choked HEM nozzle flux per state; flashes per
call and the projected solver time for 300 right-hand sides.
"""
from __future__ import annotations

import statistics
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from cvsim.flow.nozzle import NozzleHint, real_gas_mass_flux  # noqa: E402
from cvsim.mixture import make_mixture  # noqa: E402

GAS = {"Methane": 0.80, "Ethane": 0.08, "Propane": 0.06, "n-Butane": 0.04, "Nitrogen": 0.02}


def per_call(fn, n):
    t = time.perf_counter()
    for i in range(n):
        fn(i)
    return (time.perf_counter() - t) / n


def single_calls(equation: str, n: int) -> None:
    f = make_mixture(GAS, equation)
    f.envelope()       # computed once per composition; excluded from the timings
    gas = f.state_pt(100e5, 288.15)
    two = f.state_pt(30e5, 215.0)
    for label, st in (("one phase", gas), ("two phases", two)):
        t_cold = []
        for i in range(max(2, n // 20)):
            g = make_mixture(GAS, equation)       # a fresh fluid: no hint, no Jacobian
            g._envelope = f._envelope
            t = time.perf_counter()
            g.state_du(st.rho, st.u * (1 + 1e-9 * i), st.T + 15.0)
            t_cold.append(time.perf_counter() - t)
        t_cold = statistics.median(t_cold)
        g = make_mixture(GAS, equation)
        g._envelope = f._envelope
        g.state_du(st.rho, st.u, st.T)
        fl0 = g.flashes
        t_warm = per_call(lambda i: g.state_du(st.rho * (1 + 1e-5 * i), st.u * (1 - 1e-6 * i),
                                                 None), n)
        fl_warm = (g.flashes - fl0) / n
        print(f"  {equation:13s} {label:10s} (rho, u): cold {t_cold * 1e3:7.2f} ms, "
              f"warm {t_warm * 1e3:7.3f} ms, {fl_warm:.1f} (T, p) flashes per warm call")


def blowdown_path(n_states: int = 60) -> None:
    f = make_mixture(GAS, "Peng-Robinson")
    f.envelope()
    up0 = f.state_pt(100e5, 288.15)
    rho0, s0 = up0.rho, up0.s
    print(f"  start: {up0.p / 1e5:.1f} bar a, {up0.T - 273.15:.1f} degC, rho {rho0:.1f} kg/m3; "
          f"cricondentherm {f.envelope()[0] - 273.15:.1f} degC, "
          f"cricondenbar {f.envelope()[1] / 1e5:.1f} bar a")
    # the path: states on the isentrope at densities falling to 1/15
    path = []
    T = up0.T
    for k in range(n_states):
        rho = rho0 * (1.0 / 15.0) ** (k / (n_states - 1))
        st = f.isentrope_at(rho, s0, T)
        T = st.T
        path.append((rho, st.u))
    f2 = make_mixture(GAS, "Peng-Robinson")
    f2._envelope = f._envelope
    hint = NozzleHint()
    t_state, t_nozzle, fl_state, fl_nozzle, two = [], [], [], [], 0
    T = None
    for rho, u in path:
        a = f2.flashes
        t = time.perf_counter()
        st = f2.state_du(rho, u, T)
        f2.state_du(rho * (1 + 1.5e-8), u, st.T)       # Jacobian column: mass
        f2.state_du(rho, u * (1 + 1.5e-8), st.T)       # Jacobian column: energy
        t_state.append(time.perf_counter() - t)
        fl_state.append(f2.flashes - a)
        T = st.T
        two += st.two_phase
        a = f2.flashes
        t = time.perf_counter()
        real_gas_mass_flux(f2, st, 1.01325e5, hint)
        t_nozzle.append(time.perf_counter() - t)
        fl_nozzle.append(f2.flashes - a)
    last = f2.state_du(*path[-1], T)
    print(f"  end: {last.p / 1e5:.2f} bar a, {last.T - 273.15:.1f} degC, vapour mass share "
          f"{last.quality:.3f}, liquid volume share {last.liquid_fraction:.4f}; "
          f"{two} of {len(path)} states two-phase")
    ms = 1e3
    print(f"  per right-hand side, vessel states (3 solves): median "
          f"{statistics.median(t_state) * ms:.2f} ms, max {max(t_state) * ms:.1f} ms, "
          f"{statistics.mean(fl_state):.1f} flashes")
    print(f"  per right-hand side, choked HEM nozzle: median "
          f"{statistics.median(t_nozzle) * ms:.1f} ms, max {max(t_nozzle) * ms:.1f} ms, "
          f"{statistics.mean(fl_nozzle):.1f} flashes")
    per_rhs = statistics.mean(t_state) / 3 + statistics.mean(t_nozzle)
    print(f"  projected: 300 right-hand sides (+ 2 Jacobian states each 30th) "
          f"~ {300 * per_rhs:.1f} s")


def main() -> None:
    print("single (rho, u) states, 5-component gas (C1 0.80, C2 0.08, C3 0.06, nC4 0.04, N2 0.02)")
    single_calls("Peng-Robinson", 200)
    single_calls("SRK", 200)
    single_calls("GERG-2008", 4)
    print("blowdown path, Peng-Robinson, isentropic expansion from 100 bar a, 15 degC")
    blowdown_path()


if __name__ == "__main__":
    main()
