"""Figures of docs/walls-demo.md from the demo scenarios (run by hand).

    python docs/figures/make_wall_figures.py

Writes blowdown-walls-vs-adiabatic.png (gas and wall temperatures and pressure of the
thick-walled methane vessel with and without its walls), type4-fill.png and
pool-fire.png into this folder, and prints the figures quoted in the page.
"""
from __future__ import annotations

import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parents[1]
sys.path.insert(0, str(ROOT))

from cvsim import run  # noqa: E402
from cvsim.result import CAUTION  # noqa: E402

C = 273.15


def figure(size=(10.0, 5.6)):
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=size, dpi=110, layout="constrained")
    FigureCanvasAgg(fig)
    return fig


def footer(fig):
    fig.get_layout_engine().set(rect=(0.0, 0.04, 1.0, 0.96))  # room for the footer
    fig.text(0.01, 0.005, "Demo scenarios (invented data). " + CAUTION, fontsize=6,
             color="0.35", ha="left", va="bottom", wrap=True)


def blowdown():
    walls = run(ROOT / "scenarios" / "steel-vessel-blowdown-walls.yaml")
    bare = run(ROOT / "scenarios" / "steel-vessel-blowdown-adiabatic.yaml")
    fig = figure()
    ax_T, ax_p = fig.subplots(1, 2, gridspec_kw={"width_ratios": [1.6, 1]})
    for res, label, colour in ((bare, "adiabatic", "#D55E00"), (walls, "with walls", "#0072B2")):
        t = res.time / 60
        ax_T.plot(t, res["vessel.temperature"] - C, color=colour, lw=1.8, label=f"gas, {label}")
        ax_p.plot(t, res["vessel.pressure"] / 1e5, color=colour, lw=1.8, label=label)
    t = walls.time / 60
    ax_T.plot(t, walls["vessel.wall.inner_temperature"] - C, color="#0072B2", ls="--",
              lw=1.2, label="wall inside surface")
    ax_T.plot(t, walls["vessel.wall.outer_temperature"] - C, color="#0072B2", ls=":",
              lw=1.2, label="wall outside surface")
    ax_T.set(xlabel="Time [min]", ylabel="Temperature [°C]",
             title="Gas and wall temperatures")
    ax_p.set(xlabel="Time [min]", ylabel="Pressure [bar a]", title="Pressure")
    for ax in (ax_T, ax_p):
        ax.grid(True, color="0.85")
        ax.legend(fontsize=8)
    fig.suptitle("Methane vessel (1.5 m x 3 m, 75 mm carbon steel) depressured from 150 barg "
                 "through a 15 mm orifice", fontsize=10)
    footer(fig)
    fig.savefig(HERE / "blowdown-walls-vs-adiabatic.png")
    for res, label in ((bare, "adiabatic"), (walls, "with walls")):
        s = res.summary()["vessels"]["vessel"]
        print(f"blowdown {label}: min gas {s['min_temperature_K'] - C:.1f} degC at "
              f"{s['min_temperature_time_s']:.0f} s, end {res.time[-1]:.0f} s, "
              f"min wall {s.get('min_wall_temperature_K', float('nan')) - C:.1f} degC")


def type4():
    res = run(ROOT / "scenarios" / "hydrogen-type4-fast-fill.yaml")
    fig = figure((10.0, 5.0))
    ax = fig.subplots()
    t = res.time
    ax.plot(t, res["cylinder.temperature"] - C, color="#0072B2", lw=1.8, label="gas")
    nodes = [n for n in res.names() if n.startswith("cylinder.wall.node")]
    from matplotlib import colormaps
    cmap = colormaps["viridis"]
    for i, n in enumerate(nodes):
        label = ("liner inside surface" if i == 0 else "liner / composite joint" if i == 4
                 else "outside surface" if i == len(nodes) - 1 else None)
        ax.plot(t, res[n] - C, color=cmap(0.85 * i / (len(nodes) - 1)), lw=1.0,
                label=label)
    ax.set(xlabel="Time [s]", ylabel="Temperature [°C]",
           title="Type IV cylinder fast fill to 700 barg: gas and temperatures through the wall")
    ax.grid(True, color="0.85")
    ax.legend(fontsize=8)
    footer(fig)
    fig.savefig(HERE / "type4-fill.png")
    s = res.summary()["vessels"]["cylinder"]
    print(f"type IV: peak gas {s['max_temperature_K'] - C:.1f} degC, peak liner "
          f"{s['max_wall_temperature_K'] - C:.1f} degC at {s['max_wall_temperature_time_s']:.0f} s,"
          f" fill {res.time[-1]:.0f} s")


def fire():
    res = run(ROOT / "scenarios" / "gas-vessel-pool-fire.yaml")
    fig = figure((10.0, 5.0))
    ax_T, ax_p = fig.subplots(1, 2)
    t = res.time / 60
    ax_T.plot(t, res["vessel.temperature"] - C, color="#0072B2", lw=1.8, label="gas")
    ax_T.plot(t, res["vessel.wall.outer_temperature"] - C, color="#D55E00", lw=1.4,
              label="wall outside surface")
    ax_T.plot(t, res["vessel.wall.inner_temperature"] - C, color="#D55E00", ls="--", lw=1.2,
              label="wall inside surface")
    ax_p.plot(t, res["vessel.pressure"] / 1e5, color="#0072B2", lw=1.8)
    ax_T.set(xlabel="Time [min]", ylabel="Temperature [°C]", title="Temperatures")
    ax_p.set(xlabel="Time [min]", ylabel="Pressure [bar a]",
             title="Pressure (depressuring orifice opens at 5 min)")
    for ax in (ax_T, ax_p):
        ax.grid(True, color="0.85")
    ax_T.legend(fontsize=8)
    fig.suptitle("Methane vessel in an API 521 pool fire (no drainage, F = 1)", fontsize=10)
    footer(fig)
    fig.savefig(HERE / "pool-fire.png")
    s = res.summary()["vessels"]["vessel"]
    print(f"fire: peak pressure {s['max_pressure_Pa'] / 1e5:.2f} bar a at "
          f"{s['max_pressure_time_s']:.0f} s, wall {s['max_wall_temperature_K'] - C:.0f} degC "
          f"at {s['max_wall_temperature_time_s']:.0f} s")


if __name__ == "__main__":
    blowdown()
    type4()
    fire()
