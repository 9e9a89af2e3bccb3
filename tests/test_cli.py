"""The command line as a user meets it: demos run end to end, broken inputs give one
clear message and no traceback, nothing half-written is left behind."""
import json
from pathlib import Path

import pytest

from conftest import COLD_BLOWDOWN

from cvsim.cli import main

ROOT = Path(__file__).resolve().parents[1]
DEMOS = sorted((ROOT / "scenarios").glob("*.yaml"))


@pytest.mark.parametrize("scenario", DEMOS, ids=lambda p: p.stem)
def test_every_demo_scenario_runs_and_writes_its_files(scenario, tmp_path, capsys):
    out = tmp_path / "out"
    code = main(["run", str(scenario), "--out", str(out), "--quiet"])
    assert code == 0, capsys.readouterr().err
    names = {p.name for p in out.iterdir()}
    assert {"history.csv", "steps.csv", "summary.txt", "summary.json", "inputs.txt",
            "overview.png", "pressure.png", "temperature.png"} <= names
    summary = json.loads((out / "summary.json").read_text())
    assert summary["status"] in ("completed", "stopped")
    assert "Screening estimate" in summary["caution"]
    assert summary["balance"]["mass_closure_relative"] < 1e-9
    assert summary["balance"]["energy_closure_relative"] < 1e-9
    head = (out / "history.csv").read_text().splitlines()
    assert any("Screening estimate" in line for line in head[:8])
    assert not list(tmp_path.glob(".*partial*"))


BROKEN = {
    "missing key": ("""
fluid: Nitrogen
vessels:
  tank: {volume: 1 m3}
run: {end: 10 s}
""", "vessels.tank.initial"),
    "wrong dimension": ("""
fluid: Nitrogen
vessels:
  tank: {volume: 1 m3, initial: {pressure: 10 kg, temperature: 15 degC}}
run: {end: 10 s}
""", "vessels.tank.initial.pressure"),
    "negative volume": ("""
fluid: Nitrogen
vessels:
  tank: {volume: -1 m3, initial: {pressure: 10 barg, temperature: 15 degC}}
run: {end: 10 s}
""", "vessels.tank.volume"),
    "unknown fluid": ("""
fluid: Nitrogn
vessels:
  tank: {volume: 1 m3, initial: {pressure: 10 barg, temperature: 15 degC}}
run: {end: 10 s}
""", "Nitrogen"),
    "unknown node": ("""
fluid: Nitrogen
vessels:
  tank: {volume: 1 m3, initial: {pressure: 10 barg, temperature: 15 degC}}
links:
  vent: {from: tank, to: outside, device: orifice, diameter: 5 mm,
         discharge_coefficient: 0.8}
run: {end: 10 s}
""", "links.vent.to"),
    "bad yaml": ("""
fluid: Nitrogen
vessels:
  tank: {volume: 1 m3, initial: {pressure: 10 barg
run: {end: 10 s}
""", "line"),
}


@pytest.mark.parametrize("case", list(BROKEN), ids=list(BROKEN))
def test_broken_inputs_give_one_clear_message_without_traceback(case, tmp_path, capsys):
    text, expected = BROKEN[case]
    path = tmp_path / "broken.yaml"
    path.write_text(text)
    out = tmp_path / "out"
    code = main(["run", str(path), "--out", str(out)])
    err = capsys.readouterr().err
    assert code == 2
    assert expected in err
    assert "Traceback" not in err
    assert not out.exists()


def test_check_lists_inputs_as_used(capsys):
    code = main(["check", str(ROOT / "scenarios" / "nitrogen-blowdown.yaml")])
    text = capsys.readouterr().out
    assert code == 0
    assert "no problems found" in text
    assert "vessels.receiver.initial.pressure" in text


def test_a_run_that_fails_writes_nothing(tmp_path, capsys):
    # adiabatic nitrogen blowdown into vacuum runs below the triple point: the solver
    # cannot go on, the message names the vessel and the state, no files are written
    path = tmp_path / "cold.yaml"
    path.write_text(COLD_BLOWDOWN)
    out = tmp_path / "out"
    code = main(["run", str(path), "--out", str(out), "--quiet"])
    err = capsys.readouterr().err
    assert code == 1
    assert "triple point" in err and "t = " in err and "Traceback" not in err
    assert not out.exists()


def test_refuses_to_replace_a_folder_it_did_not_write(tmp_path, capsys):
    out = tmp_path / "mine"
    out.mkdir()
    (out / "notes.txt").write_text("keep me")
    code = main(["run", str(ROOT / "scenarios" / "two-vessels-equalising.yaml"), "--out",
                 str(out), "--quiet", "--no-plots"])
    assert code == 2
    assert (out / "notes.txt").read_text() == "keep me"


def test_fluids_lists_coolprop_names(capsys):
    assert main(["fluids", "--search", "nitro"]) == 0
    assert "Nitrogen" in capsys.readouterr().out
