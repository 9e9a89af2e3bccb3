"""Sweeps: values as text, grids, cases in worker processes (local or Dask), the table,
its files and plot, and failed cases reported in their rows."""
import json
import math
import os

import pytest

import cvsim
from cvsim.cli import main
from cvsim.errors import ClusterError, ScenarioError, StudyError
from cvsim.study.outcomes import outcome_values
from cvsim.study.parallel import Workers
from cvsim.study.sweep import grid, parse_values, parse_vary

NITROGEN = """
title: Nitrogen bottle vented through a small orifice
fluid: Nitrogen
vessels:
  bottle:
    volume: 50 L
    initial: {pressure: 200 barg, temperature: 15 degC}
    limits:
      min_metal_temperature: -40 degC
      depressure: {to: 20 barg, within: 2 min}
reservoirs:
  air: {pressure: 1 atm, temperature: 15 degC}
links:
  vent: {from: bottle, to: air, device: orifice, diameter: 3 mm, discharge_coefficient: 0.84}
run:
  end: 5 min
  record_every: 2 s
  stop_when:
    - {vessel: bottle, pressure_below: 20 barg}
"""

# a cold bottle vented to near vacuum: a large orifice drives the gas out of the
# equation of state's range and the run fails part-way
COLD = """
title: Cold nitrogen bottle vented to vacuum
fluid: Nitrogen
vessels:
  bottle:
    volume: 50 L
    initial: {pressure: 200 barg, temperature: -140 degC}
reservoirs:
  vacuum: {pressure: 0.01 bara, temperature: 15 degC}
links:
  vent: {from: bottle, to: vacuum, device: orifice, diameter: 1 mm, discharge_coefficient: 0.84}
run: {end: 60 s, record_every: 2 s}
"""


@pytest.fixture
def nitrogen(tmp_path):
    path = tmp_path / "nitrogen.yaml"
    path.write_text(NITROGEN)
    return path


def same(a, b) -> bool:
    """Equal, bit for bit, with NaN equal to NaN."""
    if isinstance(a, float) and isinstance(b, float):
        return a == b or (math.isnan(a) and math.isnan(b))
    return a == b


# ------------------------------------------------------------ values

def test_lists_ranges_and_log_ranges_stay_text_with_their_units():
    p = parse_values("links.vent.diameter", "6 mm, 8 mm,10 mm")
    assert p.values == ("6 mm", "8 mm", "10 mm") and p.unit == "mm"
    assert p.numbers == (6.0, 8.0, 10.0)
    p = parse_values("links.vent.diameter", "5 mm:25 mm:9")
    assert p.kind == "linear" and len(p.values) == 9
    assert p.values[:3] == ("5 mm", "7.5 mm", "10 mm") and p.values[-1] == "25 mm"
    p = parse_values("links.vent.diameter", "log:1 mm:100 mm:5")
    assert p.kind == "log"
    assert p.values == ("1 mm", "3.16227766017 mm", "10 mm", "31.6227766017 mm", "100 mm")
    p = parse_values("vessels.tank.initial.pressure", "10 barg:30 barg:3, 50 barg")
    assert p.values == ("10 barg", "20 barg", "30 barg", "50 barg") and p.kind == "list"
    p = parse_values("links.vent.discharge_coefficient", "0.6:0.9:4")
    assert p.values == ("0.6", "0.7", "0.8", "0.9") and p.unit == ""


def test_values_with_commas_and_colons_of_their_own_are_kept_whole():
    p = parse_values("vessels.tank.heat.to_ambient",
                     "{ua: 50 W/K, ambient: 15 degC}, {ua: 80 W/K, ambient: 15 degC}")
    assert p.values == ("{ua: 50 W/K, ambient: 15 degC}", "{ua: 80 W/K, ambient: 15 degC}")
    p = parse_values("vessels.tank.shape.heads", "2:1-ellipsoidal, hemispherical")
    assert p.values == ("2:1-ellipsoidal", "hemispherical")
    p = parse_values("run.solver.method", ["LSODA", "BDF"])
    assert p.values == ("LSODA", "BDF") and p.numbers == ()
    assert parse_vary("stop_when.0.pressure_below=5 barg, 6 barg").key == "stop_when[0].pressure_below"


def test_several_keys_form_a_grid_first_key_slowest():
    a = parse_values("a", "1 mm, 2 mm")
    b = parse_values("b", "x, y, z")
    cases = grid([a, b])
    assert len(cases) == 6
    assert cases[0] == {"a": "1 mm", "b": "x"} and cases[3] == {"a": "2 mm", "b": "x"}


@pytest.mark.parametrize("item, words", [
    ("links.vent.diameter", "write KEY=VALUES"),
    ("links.vent.diameter=", "give the values"),
    ("links.vent.diameter=5 mm:25 mm", "give the number of values"),
    ("links.vent.diameter=5 mm:25 in:3", "same unit"),
    ("links.vent.diameter=5 mm:5 mm:3", "empty"),
    ("links.vent.diameter=5 mm:25 mm:1", "whole number from 2"),
    ("links.vent.diameter=5 mm:25 mm:2.5", "whole number from 2"),
    ("links.vent.diameter=log:0 mm:25 mm:3", "above zero"),
    ("links.vent.diameter=log:1 mm:25 mm", "START:END:COUNT"),
    ("links.vent.diameter=5 mm,,6 mm", "empty value"),
])
def test_unreadable_values_give_one_message_naming_the_option(item, words):
    with pytest.raises(StudyError) as err:
        parse_vary(item)
    assert words in str(err.value)
    if "=" in item:
        assert "--vary links.vent.diameter" in str(err.value)


def test_a_key_the_scenario_does_not_have_stops_before_any_case_runs(nitrogen):
    with pytest.raises(StudyError, match="--vary links.vent.diamter: unknown key 'diamter'.*"
                                         "did you mean 'diameter'"):
        cvsim.sweep(nitrogen, {"links.vent.diamter": "2 mm, 3 mm"}, progress=False)
    with pytest.raises(StudyError, match="no key 'vnt' in links; did you mean 'vent'"):
        cvsim.sweep(nitrogen, {"links.vnt.diameter": "2 mm, 3 mm"}, progress=False)
    with pytest.raises(StudyError, match="unknown outcome for --plot 'bottle.min_temp'"):
        cvsim.sweep(nitrogen, {"links.vent.diameter": "2 mm"}, plot=["bottle.min_temp"],
                    progress=False)
    with pytest.raises(ScenarioError, match="cannot read the file"):
        cvsim.sweep(nitrogen.parent / "missing.yaml", {"links.vent.diameter": "2 mm"})
    with pytest.raises(ClusterError, match="not both"):
        cvsim.sweep(nitrogen, {"links.vent.diameter": "2 mm"}, workers=2, cluster="tcp://x:1")
    with pytest.raises(ClusterError, match="whole number of 1 or more"):
        Workers(workers=0)


def test_a_broken_scenario_is_reported_once_not_in_every_row(tmp_path):
    path = tmp_path / "broken.yaml"
    path.write_text(NITROGEN.replace("volume: 50 L", "volume: -50 L"))
    with pytest.raises(ScenarioError, match="bottle.volume"):
        cvsim.sweep(path, {"links.vent.diameter": "2 mm, 3 mm"}, progress=False)


# ------------------------------------------------------------- cases

def test_sweep_reproduces_single_runs_bit_for_bit(nitrogen):
    # each case is a whole run in a worker process from the file's bytes; the same
    # numbers must come out as from a run in this process
    diameters = ["2.5 mm", "3 mm", "4 mm"]
    result = cvsim.sweep(nitrogen, {"links.vent.diameter": ", ".join(diameters)},
                         workers=2, progress=False)
    assert [r["links.vent.diameter"] for r in result.rows] == diameters
    assert [r["links.vent.diameter.si"] for r in result.rows] == [0.0025, 0.003, 0.004]
    for row, d in zip(result.rows, diameters):
        single = cvsim.run(nitrogen, overrides={"links.vent.diameter": d})
        _, figures = outcome_values(single)
        assert row["status"] == single.status
        for name, value in figures.items():
            expected = bool(value) if name.endswith(".met") else value
            assert same(row[name], expected), (d, name, row[name], value)
        assert row["bottle.limit.depressure.actual"] == single.limits[1].actual
    # the depressuring time falls as the orifice grows (choked flow: mass flow ~ area)
    times = result.values("bottle.limit.depressure.actual")
    assert times[0] > times[1] > times[2]


def test_failed_cases_are_rows_with_their_error_and_the_sweep_goes_on(tmp_path):
    path = tmp_path / "cold.yaml"
    path.write_text(COLD)
    result = cvsim.sweep(path, {"links.vent.diameter": "-3 mm, 1 mm, 40 mm"}, progress=False)
    bad_value, good, bad_run = result.rows
    assert bad_value["status"] == "failed"
    assert "links.vent.diameter" in bad_value["error"] and "greater than 0" in bad_value["error"]
    assert bad_value["links.vent.diameter.si"] is None
    assert good["status"] == "completed" and good["error"] == ""
    assert good["vent.mass_passed"] > 0 and good["bottle.min_pressure"] < good["bottle.max_pressure"]
    # the bottle itself cools to nitrogen's triple point (63.15 K): diagnosed as such
    assert bad_run["status"] == "failed" and "triple point" in bad_run["error"]
    # a failed case has no figures (those up to the failure would mislead)
    assert bad_run["bottle.min_temperature"] is None
    assert result.counts() == {"completed": 1, "stopped": 0, "failed": 2}
    text = result.text()
    assert "Failed cases:" in text and "case 3 (links.vent.diameter = 40 mm)" in text


def test_a_worker_that_dies_fails_its_case_only():
    with Workers(workers=2, start_method="fork") as pool:
        out = dict((i, (ok, v)) for i, ok, v in pool.map(_die_on_three, [1, 2, 3, 4, 5]))
    assert out[0] == (True, 2) and out[1] == (True, 4) and out[4] == (True, 10)
    assert out[2][0] is False and "ended abruptly" in out[2][1]


def _die_on_three(x):
    if x == 3:
        os._exit(13)
    return 2 * x


# ------------------------------------------------------------- files

def test_table_files_plot_and_command_line(nitrogen, tmp_path, capsys):
    out = tmp_path / "sw"
    code = main(["sweep", str(nitrogen), "--vary", "links.vent.diameter=2 mm:4 mm:3",
                 "--vary", "vessels.bottle.initial.temperature=0 degC, 30 degC",
                 "--out", str(out), "--workers", "2"])
    printed = capsys.readouterr()
    assert code == 0, printed.err
    assert "Sweep of 6 cases" in printed.out and "CAUTION" in printed.out
    names = {p.name for p in out.iterdir()}
    assert {"sweep.csv", "sweep.json", "sweep.txt", "sweep.png", ".cvsim-output"} <= names
    lines = (out / "sweep.csv").read_text().splitlines()
    head = [line for line in lines if line.startswith("#")]
    assert any("Screening estimate" in line for line in head)
    assert any("sha256" in line for line in head)
    columns = lines[len(head)].split(",")
    assert columns[:6] == ["case", "links.vent.diameter", "links.vent.diameter.si [m]",
                           "vessels.bottle.initial.temperature",
                           "vessels.bottle.initial.temperature.si [K]", "status"]
    assert "bottle.min_temperature [degC]" in columns
    assert "bottle.limit.min_metal_temperature.margin [K]" in columns
    assert len(lines) == len(head) + 1 + 6
    data = json.loads((out / "sweep.json").read_text())
    assert data["cases"] == 6 and len(data["rows"]) == 6
    assert data["parameters"][0]["key"] == "links.vent.diameter"
    assert "Screening estimate" in data["caution"]
    assert (out / "sweep.png").stat().st_size > 20_000
    assert not list(tmp_path.glob(".*partial*"))


def test_dataframe_has_one_row_per_case_in_si(nitrogen):
    pytest.importorskip("pandas")
    result = cvsim.sweep(nitrogen, {"links.vent.diameter": "3 mm, 4 mm"}, progress=False)
    df = result.to_dataframe()
    assert list(df["case"]) == [1, 2]
    assert df["bottle.min_temperature"].iloc[0] == result.rows[0]["bottle.min_temperature"]
    assert list(df.columns) == [c.name for c in result.columns]
    # every output a person could act on carries the caution (DEVELOPERS.md)
    assert df.attrs["caution"] == cvsim.result.CAUTION
    assert df.attrs["units"]["bottle.min_temperature"] == "K"
    assert df.attrs["provenance"]["cvsim"] == result.provenance["cvsim"]


# -------------------------------------------------------------- Dask

@pytest.mark.slow
def test_a_dask_cluster_and_every_start_method_give_the_same_table(nitrogen, tmp_path):
    distributed = pytest.importorskip("distributed")
    vary = {"links.vent.diameter": "-1 mm, 2.5 mm, 4 mm"}
    local = cvsim.sweep(nitrogen, vary, workers=2, start_method="fork", progress=False)
    served = cvsim.sweep(nitrogen, vary, workers=2, start_method="forkserver",
                         progress=False)
    with distributed.LocalCluster(processes=True, n_workers=2, threads_per_worker=1,
                                  host="127.0.0.1", dashboard_address=None) as cluster:
        remote = cvsim.sweep(nitrogen, vary, cluster=cluster.scheduler_address,
                             progress=False)
    assert remote.ran_on.startswith("Dask cluster at tcp://127.0.0.1:")
    assert "forkserver" in served.ran_on and "fork)" in local.ran_on
    for other in (remote, served):
        assert [c.name for c in other.columns] == [c.name for c in local.columns]
        for a, b in zip(other.rows, local.rows):
            assert a.keys() == b.keys()
            assert all(same(a[k], b[k]) for k in a), a["case"]
    assert remote.rows[0]["status"] == "failed"


def test_asking_for_dask_without_it_installed_says_how_to_install_it(nitrogen, monkeypatch):
    import sys
    monkeypatch.setitem(sys.modules, "distributed", None)  # import distributed fails
    with pytest.raises(ClusterError, match=r"pip install -e '\.\[cluster\]' in the cvsim checkout"):
        cvsim.sweep(nitrogen, {"links.vent.diameter": "3 mm"}, cluster="tcp://127.0.0.1:1",
                    progress=False)


def test_an_unreachable_cluster_is_one_clear_message(nitrogen):
    pytest.importorskip("distributed")
    with pytest.raises(ClusterError, match="not a Dask scheduler address"):
        cvsim.sweep(nitrogen, {"links.vent.diameter": "3 mm"}, cluster="localhost",
                    progress=False)
