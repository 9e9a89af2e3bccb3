"""PNG plots of a run: the files written, that they hold a picture, and the odd cases
(a run stopped or failed, a network without links, columns added by later features)."""
import dataclasses
import math
import subprocess
import sys

import numpy as np
import pytest

from cvsim import network as nw
from cvsim.model import Model
from cvsim.plot import _View, flow_unit, plot_run, time_unit
from cvsim.result import build_result
from cvsim.signals import Constant
from cvsim.solve import integrate

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
