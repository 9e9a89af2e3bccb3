"""PNG plots of a run: the files written, that they hold a picture, and the odd cases
(a run stopped or failed, a network without links, columns added by later features)."""
import dataclasses
import math
import os
import subprocess
import sys

from pathlib import Path

import numpy as np
import pytest

from cvsim import network as nw
from cvsim.model import Model
from cvsim.plot import _View, flow_unit, plot_run, time_unit
from cvsim.result import build_result
from cvsim.signals import Constant
from cvsim.solve import integrate

ROOT = Path(__file__).resolve().parents[1]

# any warning while plotting (a collapsed layout, a NaN reduction) is a failure here
pytestmark = pytest.mark.filterwarnings("error")

QUANTITIES = ["overview.png", "pressure.png", "temperature.png", "mass.png", "flow.png"]

# nitrogen as a perfect gas (M and cp given, so no property library is loaded: fast)
NITROGEN = nw.FluidSpec("Nitrogen", model="ideal-gas", molar_mass=0.0280134, cp=1040.0)


def run(net):
    model = Model(net)
    return build_result(model, integrate(model))


def vent():
    """Nitrogen receiver vented through an orifice until a stop condition ends it."""
    return run(nw.Network(
        title="Nitrogen receiver depressured through a 10 mm restriction orifice",
        fluid=NITROGEN,
        vessels=(nw.Vessel("receiver", nw.Geometry(1.0),
                           nw.InitialState(150e5 + 101325, 288.15)),),
        reservoirs=(nw.Reservoir("atmosphere", Constant(101325.0), Constant(288.15)),),
        links=(nw.Link("vent", "receiver", "atmosphere",
                       nw.Orifice(math.pi * 0.01 ** 2 / 4, 0.84)),),
        run=nw.RunSettings(end_time=1000.0, record_every=1.0,
                           stop=(nw.StopCondition("receiver", "pressure", "below", 10e5),))))


def with_column(result, name, unit, kind, values):
    """A copy of ``result`` with one more recorded column (as later features add)."""
    fine = result.fine_data
    if fine.size:
        fine = np.column_stack([fine, np.full(len(fine), np.nan)])
    return dataclasses.replace(result, columns=result.columns + [(name, unit, kind)],
                               data=np.column_stack([result.data, values]), fine_data=fine)


def assert_pictures(paths, names) -> dict:
    """Check the files are the expected PNGs, not blank; return their (width, height) [px]."""
    import matplotlib.image as mpimg

    assert [p.name for p in paths] == names
    sizes = {}
    for p in paths:
        assert p.is_file()
        assert p.stat().st_size > 20_000, p.name
        pixels = mpimg.imread(p)
        assert float(np.var(pixels[..., :3])) > 0.0, f"{p.name} is blank"
        sizes[p.name] = (pixels.shape[1], pixels.shape[0])
    return sizes


# -------------------------------------------------------------------- units

@pytest.mark.parametrize("t_end, unit", [(0.0, "s"), (172.0, "s"), (600.0, "s"),
                                         (601.0, "min"), (3 * 3600.0, "min"),
                                         (4 * 3600.0, "h")])
def test_time_unit_follows_run_length(t_end, unit):
    assert time_unit(t_end)[0] == unit


@pytest.mark.parametrize("peak, unit, size", [(25.0, "kg/s", 1.0), (1.0, "kg/s", 1.0),
                                              (0.1, "g/s", 1e-3), (1e-3, "g/s", 1e-3),
                                              (2e-4, "kg/h", 1 / 3600), (0.0, "kg/h", 1 / 3600)])
def test_flow_unit_follows_peak_flow(peak, unit, size):
    assert flow_unit(peak) == (unit, pytest.approx(size))


# -------------------------------------------------------------------- files

def test_stopped_run_without_links_gives_overview_and_one_picture_per_quantity(tmp_path):
    # a closed bottle warmed until a stop condition ends the run after some hours
    res = run(nw.Network(
        title="Closed nitrogen bottle warmed by a heat load until its pressure reaches 210 bar a",
        fluid=NITROGEN,
        vessels=(nw.Vessel("bottle", nw.Geometry(0.05), nw.InitialState(200e5, 280.0),
                           heat=(nw.HeatLoad("sun", Constant(5.0)),)),),
        run=nw.RunSettings(end_time=8 * 3600.0, record_every=60.0,
                           stop=(nw.StopCondition("bottle", "pressure", "above", 210e5),))))
    assert res.status == "stopped" and res.link_names() == []
    view = _View(res)
    assert view.time_name == "h" and "STOPPED" in view.subtitle()
    paths = plot_run(res, tmp_path / "plots")  # the folder is created
    sizes = assert_pictures(paths, QUANTITIES)
    assert not (tmp_path / "plots" / "opening.png").exists()
    assert sizes["overview.png"] == (1650, 1200)  # 11 x 8 in at 150 dpi
    assert sizes["pressure.png"] == (1500, 900)   # 10 x 6 in at 150 dpi


def test_failed_run_with_wall_temperatures_and_openings(tmp_path):
    full = vent()
    n = len(full.time) // 2
    t = full.time[:n]
    cut = dataclasses.replace(full, data=full.data[:n], status="failed",
                              message="the solver could not proceed (test)",
                              events=[(float(t[-1]), "run failed: test")])
    res = with_column(cut, "receiver.wall.inner", "K", "wall", 288.15 - 0.1 * t)
    res = with_column(res, "vent.opening", "-", "link", np.clip(t / 20.0, 0.0, 1.0))
    view = _View(res)
    assert view.extra_temperatures == {"receiver": ["receiver.wall.inner"]}
    assert view.openings == ["vent"]
    assert "FAILED" in view.subtitle()
    assert_pictures(plot_run(res, tmp_path), QUANTITIES + ["opening.png"])


def test_run_failed_before_first_record_still_gives_pictures(tmp_path):
    res = run(nw.Network(
        title="Impossible initial state", fluid=NITROGEN,
        vessels=(nw.Vessel("v", nw.Geometry(1.0), nw.InitialState(-5.0, 300.0)),),
        run=nw.RunSettings(end_time=10.0, record_every=1.0)))
    assert res.status == "failed" and len(res.data) == 0
    assert_pictures(plot_run(res, tmp_path), QUANTITIES)


def test_importing_plot_module_does_not_import_matplotlib():
    code = "import sys, cvsim.plot; print('matplotlib' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True)
    assert out.stdout.strip() == "False"


# ------------------------------------------------------------- limits on the plots

ATM = 101325.0


def limited_vent(design_g=160e5, mdmt=273.15 - 29.0, to_g=6.9e5, within=60.0):
    """The vent of :func:`vent` with design limits stated: 160 bar g design pressure, an
    MDMT the gas crosses (a perfect gas expanding from 15 degC gets far colder), a
    depressuring target it cannot reach in time, and a relief valve set at 155 bar g."""
    limits = nw.VesselLimits(design_pressure=ATM + design_g, accumulation=0.10,
                             accumulation_case="single-device", min_metal_temperature=mdmt,
                             depressure_to=ATM + to_g, depressure_within=within,
                             depressure_basis="stated")
    psv = nw.ReliefValve(set_pressure=ATM + 155e5, area=1e-4, kd=0.975,
                         reseat_pressure=ATM + 145e5)
    return run(nw.Network(
        title="Limited vent", fluid=NITROGEN,
        vessels=(nw.Vessel("receiver", nw.Geometry(1.0), nw.InitialState(150e5 + ATM, 288.15),
                           limits=limits),),
        reservoirs=(nw.Reservoir("atmosphere", Constant(ATM), Constant(288.15)),),
        links=(nw.Link("vent", "receiver", "atmosphere",
                       nw.Orifice(math.pi * 0.01 ** 2 / 4, 0.84)),
               nw.Link("psv", "receiver", "atmosphere", psv)),
        run=nw.RunSettings(end_time=300.0, record_every=1.0)))


def drawn(draw, res):
    """The lines and texts ``draw`` puts on one panel: {label: line}, [texts]."""
    from cvsim.plot import figure
    view = _View(res)
    with figure((10.0, 6.0), "t", "s") as fig:
        ax = fig.subplots()
        draw(ax, view, overview=False)
        lines = {ln.get_label(): ln for ln in ax.get_lines()}
        texts = [t.get_text() for t in ax.texts]
        return ({k: (np.asarray(v.get_xdata(), float), np.asarray(v.get_ydata(), float))
                 for k, v in lines.items()}, texts, ax.get_ylim())


def test_pressure_panel_draws_mawp_allowed_pressure_set_pressure_and_target():
    from cvsim.plot import _pressure
    res = limited_vent()
    lines, _, (lo, hi) = drawn(_pressure, res)
    bar_a = {label.split(" ")[0]: ys[0] for label, (xs, ys) in lines.items()}
    # MAWP 160 bar g; allowed = MAWP + 10 % of the gauge design pressure
    # source: ASME BPVC VIII-1 UG-125(c), 10 % accumulation for a single device
    assert bar_a["MAWP"] == pytest.approx((ATM + 160e5) / 1e5)
    assert bar_a["allowed"] == pytest.approx((ATM + 176e5) / 1e5)
    assert bar_a["psv"] == pytest.approx((ATM + 155e5) / 1e5)
    assert bar_a["depressure"] == pytest.approx((ATM + 6.9e5) / 1e5)
    assert lo <= (ATM + 6.9e5) / 1e5 and hi >= (ATM + 176e5) / 1e5  # every limit in view
    # the target is reached after the 60 s allowed: marked where it is crossed, at the
    # deadline, on the pressure curve
    (check,) = [c for c in res.limits if c.key == "depressure"]
    assert check.crossed and check.time > 60.0
    crossed = [k for k in lines if k.startswith("CROSSED")]
    assert crossed == ["CROSSED: depressuring target reached late"]
    (t,), (p,) = lines[crossed[0]]
    assert t == pytest.approx(60.0)
    assert p == pytest.approx(np.interp(60.0, res.time, res["receiver.pressure"]) / 1e5)


def test_temperature_panel_draws_the_mdmt_and_marks_the_crossing():
    from cvsim.plot import _temperature
    res = limited_vent()
    lines, _, _ = drawn(_temperature, res)
    assert lines["MDMT -29.0 °C"][1][0] == pytest.approx(-29.0)
    gas = res["receiver.temperature"]
    assert gas.min() < 273.15 - 29.0  # the gas does cross it
    (label,) = [k for k in lines if k.startswith("CROSSED")]
    (t,), (y,) = lines[label]
    T, when = res.extreme("receiver.temperature", "min")
    assert (t, y) == (pytest.approx(when), pytest.approx(T - 273.15))


def test_a_met_limit_has_no_crossing_mark():
    from cvsim.plot import _temperature
    res = limited_vent(mdmt=273.15 - 200.0)
    lines, _, _ = drawn(_temperature, res)
    assert "MDMT -200.0 °C" in lines
    assert not [k for k in lines if k.startswith("CROSSED")]


def filled(max_c=60.0, design_g=50e5):
    """A receiver filled from a 200 bar g supply: the gas heats up past ``max_c`` and the
    pressure passes the allowed pressure (``design_g`` + 10 %); a bursting disc rated
    at 150 bar g (above the pressure reached, so it stays shut) protects it."""
    limits = nw.VesselLimits(design_pressure=ATM + design_g, accumulation=0.10,
                             accumulation_case="single-device",
                             max_temperature=273.15 + max_c)
    return run(nw.Network(
        title="Filled receiver", fluid=NITROGEN,
        vessels=(nw.Vessel("receiver", nw.Geometry(1.0), nw.InitialState(ATM + 20e5, 288.15),
                           limits=limits),),
        reservoirs=(nw.Reservoir("supply", Constant(ATM + 200e5), Constant(288.15)),
                    nw.Reservoir("atmosphere", Constant(ATM), Constant(288.15))),
        links=(nw.Link("fill", "supply", "receiver",
                       nw.Orifice(math.pi * 0.01 ** 2 / 4, 0.84)),
               nw.Link("disc", "receiver", "atmosphere",
                       nw.BurstingDisc(area=1e-4, discharge_coefficient=0.62,
                                       burst_pressure=ATM + 150e5))),
        run=nw.RunSettings(end_time=60.0, record_every=1.0)))


def test_temperature_panel_draws_the_highest_allowed_temperature_and_marks_the_crossing():
    from cvsim.plot import _temperature
    res = filled()
    lines, _, (lo, hi) = drawn(_temperature, res)
    assert lines["highest allowed 60.0 °C"][1][0] == pytest.approx(60.0)
    assert lo <= 60.0 <= hi
    T, when = res.extreme("receiver.temperature", "max")
    assert T > 273.15 + 60.0  # the gas does cross it
    (label,) = [k for k in lines if k.startswith("CROSSED")]
    assert label == f"CROSSED: highest allowed (gas highest {T - 273.15:.1f} °C)"
    (t,), (y,) = lines[label]
    assert (t, y) == (pytest.approx(when), pytest.approx(T - 273.15))


def test_pressure_panel_draws_the_bursting_disc_and_marks_the_allowed_pressure_crossed():
    from cvsim.plot import _pressure
    res = filled()
    lines, _, (_, hi) = drawn(_pressure, res)
    disc = lines["disc bursts at 150 bar g"][1]
    assert disc[0] == disc[-1] == pytest.approx((ATM + 150e5) / 1e5)
    assert hi >= (ATM + 150e5) / 1e5  # in view, though the pressure stays below it
    (check,) = [c for c in res.limits if c.key == "design_pressure"]
    # allowed = MAWP + 10 % of the gauge design pressure, 55 bar g
    # source: ASME BPVC VIII-1 UG-125(c), 10 % accumulation for a single device
    assert check.limit == pytest.approx(ATM + 55e5) and check.crossed
    (label,) = [k for k in lines if k.startswith("CROSSED")]
    assert label == "CROSSED: allowed pressure"
    (t,), (p,) = lines[label]
    P, when = res.extreme("receiver.pressure", "max")
    assert (t, p) == (pytest.approx(when), pytest.approx(P / 1e5))


def test_pressure_panel_draws_the_depressuring_deadline_as_a_vertical_line():
    from cvsim.plot import LIMIT_COLOUR, _pressure, figure
    res = limited_vent(within=60.0)
    view = _View(res)
    with figure((10.0, 6.0), "t", "s") as fig:
        ax = fig.subplots()
        _pressure(ax, view, overview=False)
        upright = [ln for ln in ax.get_lines() if ln.get_color() == LIMIT_COLOUR
                   and list(ln.get_ydata()) == [0, 1]]
        assert [list(ln.get_xdata()) for ln in upright] == [[60.0, 60.0]]
        # the target line ends at the deadline
        target = next(ln for ln in ax.get_lines() if ln.get_label().startswith("depressure"))
        assert max(target.get_xdata()) == pytest.approx(60.0)


def test_a_deadline_past_the_end_of_the_run_has_no_vertical_line():
    from cvsim.plot import LIMIT_COLOUR, _pressure, figure
    res = limited_vent(within=3600.0)
    with figure((10.0, 6.0), "t", "s") as fig:
        ax = fig.subplots()
        _pressure(ax, _View(res), overview=False)
        assert not [ln for ln in ax.get_lines() if ln.get_color() == LIMIT_COLOUR
                    and list(ln.get_ydata()) == [0, 1]]


def pens(ax) -> list:
    """(colour, dash pattern) of every drawn line of a panel (markers alone left out)."""
    from matplotlib.colors import to_hex
    return [(to_hex(ln.get_color()), repr(ln._unscaled_dash_pattern)) for ln in ax.get_lines()
            if ln.get_linestyle() not in ("None", "none", "")]


#: the temperatures a vessel with separated zones and a wetted and an unwetted wall
#: records (besides its gas): each made distinct, so that none joins another's label
ZONED = ["wall.wetted.inner_temperature", "wall.wetted.outer_temperature",
         "wall.unwetted.inner_temperature", "wall.unwetted.outer_temperature",
         "liquid_temperature", "interface_temperature"]


def test_every_temperature_line_of_a_zoned_vessel_has_a_pen_of_its_own():
    from cvsim.plot import _temperature, figure
    res = limited_vent()
    res = dataclasses.replace(res, network=dataclasses.replace(
        res.network, vessels=tuple(dataclasses.replace(v, limits=dataclasses.replace(
            v.limits, max_temperature=273.15 + 60.0)) for v in res.network.vessels)))
    for k, column in enumerate(ZONED):
        res = with_column(res, f"receiver.{column}", "K", "wall", res["receiver.temperature"]
                          + 5.0 * (k + 1))
    view = _View(res)
    assert len(view.extra_temperatures["receiver"]) == len(ZONED)
    with figure((10.0, 6.0), "t", "s") as fig:
        ax = fig.subplots()
        _temperature(ax, view, overview=False)
        drawn_pens = pens(ax)
        by_label = dict(zip([ln.get_label() for ln in ax.get_lines()
                             if ln.get_linestyle() not in ("None",)], drawn_pens))
    assert len(drawn_pens) == 1 + len(ZONED) + 2  # gas, the six, MDMT and highest allowed
    assert len(set(drawn_pens)) == len(drawn_pens)
    # one vessel: a wall part's two surfaces share a colour, the styles tell them apart
    inner = by_label["receiver wall wetted, inside surface"]
    outer = by_label["receiver wall wetted, outside surface"]
    assert inner[0] == outer[0] and inner[1] != outer[1]
    assert by_label["receiver, liquid"][0] != by_label["receiver, interface"][0]


def test_temperature_lines_of_several_vessels_keep_their_vessel_colour_and_differ():
    from cvsim.plot import _temperature, figure
    res = run(nw.Network(
        title="Two vessels", fluid=NITROGEN,
        vessels=(nw.Vessel("bank", nw.Geometry(1.0), nw.InitialState(200e5, 288.15)),
                 nw.Vessel("cylinder", nw.Geometry(0.5), nw.InitialState(20e5, 288.15))),
        links=(nw.Link("fill", "bank", "cylinder", nw.Orifice(math.pi * 0.002 ** 2 / 4,
                                                               0.84)),),
        run=nw.RunSettings(end_time=10.0, record_every=1.0)))
    for v in ("bank", "cylinder"):
        for k, column in enumerate(ZONED):
            res = with_column(res, f"{v}.{column}", "K", "wall",
                              res[f"{v}.temperature"] + 3.0 * (k + 1))
    view = _View(res)
    with figure((10.0, 6.0), "t", "s") as fig:
        ax = fig.subplots()
        _temperature(ax, view, overview=False)
        drawn_pens = pens(ax)
        colours = {ln.get_label().split(" ")[0].rstrip(","): ln.get_color()
                   for ln in ax.get_lines()}
    assert len(drawn_pens) == 2 * (1 + len(ZONED))
    assert len(set(drawn_pens)) == len(drawn_pens)
    assert colours["bank"] == view.colour["bank"]
    assert colours["cylinder"] == view.colour["cylinder"]


def test_the_overview_with_valve_openings_shows_the_time_under_each_column():
    """With a row of openings across the foot of the page, the lower quantity panels
    keep their time ticks and label (sharex would hide them), so the panels above them
    - in the same column, with the same x extent - can be read too."""
    from cvsim import plot
    full = vent()
    res = with_column(full, "vent.opening", "-", "link", np.clip(full.time / 20.0, 0.0, 1.0))
    view = _View(res)
    assert view.openings == ["vent"]
    with plot.figure(plot.OVERVIEW_SIZE, "t", "s") as fig:
        panels = [(name, getattr(plot, f"_{name}"))
                  for name in ("pressure", "temperature", "mass", "flow", "opening")]
        axes = plot._overview_panels(fig, view, panels)
        fig.canvas.draw()
        shown = {ax.get_title(loc="left"): [t.get_text() for t in ax.get_xticklabels()
                                            if t.get_visible() and t.get_text()]
                 for ax in axes}
        labels = {ax.get_title(loc="left"): ax.get_xlabel() for ax in axes}
        where = {ax.get_title(loc="left"): ax.get_position() for ax in axes}
    titles = list(shown)
    pressure, temperature, mass, flow, opening = titles
    for below in (mass, flow, opening):
        assert len(shown[below]) >= 3, below
        assert labels[below] == "Time [s]"
    for above, below in ((pressure, mass), (temperature, flow)):
        assert where[above].x0 == pytest.approx(where[below].x0, abs=1e-3)
        assert where[above].x1 == pytest.approx(where[below].x1, abs=1e-3)
        assert where[above].y0 > where[below].y1


def test_the_stop_that_ends_a_run_gets_a_line_but_no_text():
    from cvsim.plot import _pressure
    res = vent()
    assert res.status == "stopped"
    _, texts, _ = drawn(_pressure, res)
    assert not [t for t in texts if "stop" in t]


def test_wall_columns_have_words_in_legends():
    from cvsim.plot import temperature_label
    assert temperature_label("drum", "drum.wall.inner_temperature") == "drum wall, inside surface"
    assert temperature_label("drum", "drum.wall.outer_temperature") == \
        "drum wall, outside surface"
    assert temperature_label("drum", "drum.wall.node3_temperature") == "drum wall, node 3"


def test_vessels_of_very_different_size_get_their_own_mass_axes(tmp_path):
    import matplotlib.image as mpimg  # noqa: F401  (pictures checked below)
    from cvsim.plot import _mass
    res = run(nw.Network(
        title="Small cylinder filled from a large bank", fluid=NITROGEN,
        vessels=(nw.Vessel("bank", nw.Geometry(5.0), nw.InitialState(200e5, 288.15)),
                 nw.Vessel("cylinder", nw.Geometry(0.05), nw.InitialState(20e5, 288.15))),
        links=(nw.Link("fill", "bank", "cylinder", nw.Orifice(math.pi * 0.002 ** 2 / 4,
                                                               0.84)),),
        run=nw.RunSettings(end_time=30.0, record_every=1.0)))
    view = _View(res)
    assert view.mass_apart  # 100 times the volume
    lines, _, _ = drawn(_mass, res)
    # the overview shows the change of each vessel's mass: the cylinder's gain equals
    # the bank's loss (mass balance, no other flow)
    gain = lines["cylinder"][1]
    loss = lines["bank"][1]
    assert gain[0] == 0.0 and loss[0] == 0.0
    assert gain[-1] == pytest.approx(-loss[-1], rel=1e-6)
    assert gain[-1] > 0.1 * res["cylinder.mass"][0]   # visible on the shared axis
    paths = plot_run(res, tmp_path)
    assert "mass.png" in [p.name for p in paths]


def test_units_agree_across_plots_summary_and_csv(tmp_path):
    """A small flow (g/s) over a long run (min): the plot axes, the summary and the CSV
    header all use g/s and min."""
    from cvsim.outputs import summary_text, write_csv
    from cvsim.plot import _flow
    res = run(nw.Network(
        title="Slow vent", fluid=NITROGEN,
        vessels=(nw.Vessel("receiver", nw.Geometry(0.5), nw.InitialState(20e5, 288.15)),),
        reservoirs=(nw.Reservoir("atmosphere", Constant(ATM), Constant(288.15)),),
        links=(nw.Link("vent", "receiver", "atmosphere",
                       nw.Orifice(math.pi * 0.0015 ** 2 / 4, 0.84)),),
        run=nw.RunSettings(end_time=1200.0, record_every=10.0)))
    view = _View(res)
    assert (view.units.flow, view.units.time) == ("g/s", "min")
    assert view.time_label == "Time [min]"
    from cvsim.plot import figure
    with figure((10.0, 6.0), "t", "s") as fig:
        ax = fig.subplots()
        _flow(ax, view, overview=False)
        assert ax.get_ylabel() == "Mass flow [g/s]"
    text = summary_text(res)
    assert "g/s at" in text and "Simulated time: 20 min" in text
    head = [ln for ln in write_csv(res, tmp_path / "h.csv").read_text().splitlines()
            if not ln.startswith("#")][0]
    assert "vent.mass_flow [g/s]" in head and head.startswith("time [s],time [min],")


# ------------------------------------------------------------- plotting helpers

def _helper_pids(painters, wait: float = 60.0) -> list[int]:
    """The first helper's pid and those of the helpers it forked (Linux /proc), once
    they are all there."""
    import time
    first = painters.process.pid
    deadline = time.monotonic() + wait
    while True:
        try:
            with open(f"/proc/{first}/task/{first}/children") as fh:
                children = [int(x) for x in fh.read().split()]
        except OSError:
            children = []
        if len(children) >= len(painters.connections) - 1 or time.monotonic() > deadline:
            return [first] + children
        time.sleep(0.02)


def _alive(pid: int) -> bool:
    """True while ``pid`` runs (a zombie, ended but not yet reaped, counts as ended)."""
    try:
        with open(f"/proc/{pid}/stat") as fh:
            return fh.read().rsplit(")", 1)[1].split()[0] != "Z"
    except OSError:
        return False


def test_helper_processes_draw_the_same_figures_and_end(tmp_path):
    from cvsim.painters import Painters
    from cvsim.plot import plot_names
    res = limited_vent()
    painters = Painters.start()
    if painters is None:
        pytest.skip("no fork on this platform or a single core")
    (tmp_path / "a").mkdir()
    with painters:
        pids = _helper_pids(painters)
        assert len(pids) == 2  # the first helper and the one it forked when warm
        paths = painters.draw(res, tmp_path / "a", plot_names(res))
    assert [p.name for p in paths] == [f"{n}.png" for n in plot_names(res)]
    assert_pictures(paths, [f"{n}.png" for n in plot_names(res)])
    # drawn in this process: the same pictures (same size; the same limits drawn)
    alone = plot_run(res, tmp_path / "b")
    import matplotlib.image as mpimg
    for a, b in zip(paths, alone):
        assert mpimg.imread(a).shape == mpimg.imread(b).shape
    assert not any(_alive(pid) for pid in pids)  # closed with the block


def test_a_failing_helper_leaves_the_drawing_to_the_main_process(tmp_path):
    from cvsim.outputs import _plots
    from cvsim.painters import Painters
    res = vent()
    painters = Painters.start()
    if painters is None:
        pytest.skip("no fork on this platform or a single core")
    with painters:
        import signal
        for pid in _helper_pids(painters):  # helpers that died (killed, out of memory)
            os.kill(pid, signal.SIGKILL)
        painters.process.join()
        paths = _plots(res, tmp_path, painters)
    assert [p.name for p in paths] == QUANTITIES


@pytest.mark.skipif(not os.path.exists("/proc/self/task"), reason="reads Linux /proc")
def test_helpers_end_when_the_command_is_killed():
    """A command killed outright (SIGKILL: no handler runs) leaves no plotting helper
    behind: each sees the end of its pipe and leaves (issue 10: no orphan processes)."""
    import signal
    import time
    code = ("import os, signal, sys, time\n"
            "sys.path[:0] = [sys.argv[1]]\n"
            "from cvsim.painters import Painters\n"
            "p = Painters.start()\n"
            "print(p.process.pid, flush=True)\n"
            "time.sleep(120)\n")
    with subprocess.Popen([sys.executable, "-c", code, str(ROOT)], stdout=subprocess.PIPE,
                          text=True) as proc:
        first = int(proc.stdout.readline())
        deadline = time.monotonic() + 60  # the second helper is forked once the first is warm
        pids = [first]
        while len(pids) < 2 and time.monotonic() < deadline:
            time.sleep(0.05)
            with open(f"/proc/{first}/task/{first}/children") as fh:
                pids = [first] + [int(x) for x in fh.read().split()]
        assert len(pids) == 2
        proc.send_signal(signal.SIGKILL)
        proc.wait()
    deadline = time.monotonic() + 10
    while any(_alive(pid) for pid in pids) and time.monotonic() < deadline:
        time.sleep(0.05)
    assert not any(_alive(pid) for pid in pids)


def test_what_the_helpers_receive_loads_neither_solver_nor_property_library(tmp_path):
    import pickle
    from cvsim.painters import _light
    path = tmp_path / "light.pkl"
    path.write_bytes(pickle.dumps(_light(limited_vent())))
    code = ("import pickle, sys; pickle.loads(open(sys.argv[1], 'rb').read()); "
            "print('scipy' in sys.modules, 'CoolProp' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code, str(path)], capture_output=True,
                         text=True, check=True)
    assert out.stdout.split() == ["False", "False"]


# ---------------------------------------------------------------- fixed panel titles

def _panel_pixels(y_values, pin: bool, top_ticks: bool = False):
    """A panel as the run plots draw it (offset off, a left title), its title fixed at
    the top (``pin``) or placed by matplotlib; the canvas pixels."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure
    fig = Figure(figsize=(4, 3), dpi=80, layout="constrained")
    FigureCanvasAgg(fig)
    ax = fig.subplots()
    ax.plot([0.0, 1.0], y_values)
    ax.ticklabel_format(axis="y", useOffset=False)
    if top_ticks:
        ax.xaxis.set_ticks_position("top")
    ax.set_title("Pressure", fontsize=10, loc="left", y=1.0 if pin else None)
    fig.canvas.draw()
    return np.asarray(fig.canvas.buffer_rgba()).copy(), ax


def test_title_fixed_where_nothing_is_above_the_panel_same_pixels():
    from cvsim.plot import title_fits_at_top
    auto, ax = _panel_pixels([1.0, 150.0], pin=False)
    assert title_fits_at_top(ax)
    pinned, _ = _panel_pixels([1.0, 150.0], pin=True)
    assert np.array_equal(auto, pinned)


@pytest.mark.parametrize("y_values, top_ticks", [([0.0, 3.0e7], False),   # 1e7 over the axis
                                                  ([0.0, 2.0e-5], False),  # 1e-5 over it
                                                  ([1.0, 150.0], True)])   # ticks on top
def test_title_left_to_matplotlib_where_something_may_be_above(y_values, top_ticks):
    """Where a power of ten or tick labels sit above the panel, matplotlib moves the title
    up; fixing it there would draw the title over them, so it is not fixed."""
    from cvsim.plot import title_fits_at_top
    auto, ax = _panel_pixels(y_values, pin=False, top_ticks=top_ticks)
    assert not title_fits_at_top(ax)
    pinned, _ = _panel_pixels(y_values, pin=True, top_ticks=top_ticks)
    assert not np.array_equal(auto, pinned)  # the guard matters: the pixels would differ


def test_title_not_fixed_over_a_secondary_axis_with_an_offset():
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    from cvsim.plot import title_fits_at_top
    fig = Figure()
    FigureCanvasAgg(fig)
    ax = fig.subplots()
    ax.plot([0.0, 1.0], [1.0, 150.0])
    ax.ticklabel_format(axis="y", useOffset=False)
    gauge = ax.secondary_yaxis("right", functions=(lambda b: b - 1.0, lambda g: g + 1.0))
    assert not title_fits_at_top(ax)  # the gauge's formatter may write an offset
    gauge.ticklabel_format(axis="y", useOffset=False)
    assert title_fits_at_top(ax)


def test_drawing_a_run_loads_neither_the_solver_nor_the_property_library(tmp_path):
    """The plotting helpers draw from a run's histories alone: drawing every plot in a
    fresh process loads no SciPy, no CoolProp and no solver module (each would cost the
    helpers a few tenths of a second of the command's time)."""
    import pickle

    from cvsim.painters import _light
    (tmp_path / "run.pickle").write_bytes(pickle.dumps(_light(limited_vent())))
    script = (
        "import pickle, sys\n"
        "from pathlib import Path\n"
        "from cvsim import plot\n"
        f"folder = Path({str(tmp_path)!r})\n"
        "result = pickle.loads((folder / 'run.pickle').read_bytes())\n"
        "assert plot.plot_run(result, folder / 'plots')\n"
        "print(sorted(m for m in sys.modules if m.split('.')[0] in ('scipy', 'CoolProp')\n"
        "             or m in ('cvsim.result', 'cvsim.solve', 'cvsim.model', 'cvsim.fluid')))\n")
    done = subprocess.run([sys.executable, "-c", script], capture_output=True, text=True,
                          timeout=300)
    assert done.returncode == 0, done.stderr
    assert done.stdout.strip() == "[]"


def test_helpers_run_at_a_lower_priority():
    """The helpers leave the cores to the command while it loads (cvsim.painters.NICE)."""
    from cvsim.painters import NICE, Painters
    painters = Painters.start()
    if painters is None:
        pytest.skip("no plotting helpers on this machine (one core or no fork)")
    with painters:
        pids = _helper_pids(painters)
        assert len(pids) == 2
        mine = os.getpriority(os.PRIO_PROCESS, 0)
        assert [os.getpriority(os.PRIO_PROCESS, pid) for pid in pids] == \
            [min(mine + NICE, 19)] * 2
