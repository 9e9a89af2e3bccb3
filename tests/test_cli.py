"""The command line as a user meets it: demos run end to end, broken inputs give one
clear message and no traceback, nothing half-written is left behind."""
import json
import os
from pathlib import Path

import pytest

from conftest import COLD_BLOWDOWN, IDEAL_VENT

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



def readme_examples(option: str) -> list[str]:
    """The ``cvsim`` command lines of README.md's shell blocks that use ``option`` (lines
    joined at a trailing backslash, comments left out)."""
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    blocks = text.split("```sh")[1:]
    lines = []
    for block in blocks:
        body = block.split("```")[0].replace("\\\n", " ")
        lines += [ln.strip() for ln in body.splitlines() if ln.strip().startswith("cvsim ")]
    return [ln for ln in lines if option in ln]


SET_EXAMPLES = readme_examples("--set")


def test_the_readme_shows_set_examples_to_run():
    assert len(SET_EXAMPLES) >= 4
    assert any("=null" in ln for ln in SET_EXAMPLES)  # the one that removes a key


@pytest.mark.parametrize("line", SET_EXAMPLES)
def test_every_set_example_in_the_readme_runs(line, tmp_path, capsys, monkeypatch):
    """Each ``cvsim ... --set`` line of the README, as printed (its scenario path is
    relative to the checkout), into a folder of the test's own, without plots."""
    import shlex
    args = shlex.split(line, comments=True)
    assert args[0] == "cvsim"
    monkeypatch.chdir(ROOT)
    out = ["--out", str(tmp_path / "out")]
    extra = {"check": [], "relief": out}.get(args[1], out + ["--no-plots", "--quiet"])
    code = main(args[1:] + extra)
    assert code == 0, capsys.readouterr().err

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


def test_relief_sizing_json_carries_the_caution(tmp_path, capsys):
    # every output a person could act on carries cvsim.result.CAUTION (DEVELOPERS.md)
    from cvsim.result import CAUTION
    scenario = Path(__file__).resolve().parents[1] / "scenarios" / "relief-blocked-outlet.yaml"
    out = tmp_path / "psv"
    code = main(["relief", str(scenario), "--valve", "psv", "--load", "8 t/h", "--out",
                 str(out)])
    capsys.readouterr()
    assert code in (0, 3)
    record = json.loads((out / "relief-sizing.json").read_text())
    assert record["caution"] == CAUTION


VENT = IDEAL_VENT.replace("run: {end: 20 s}", "run: {end: 5 s}")


def test_decimal_comma_csv_reads_back_in_a_decimal_comma_locale(tmp_path):
    """--decimal-comma: ';' between fields, a decimal comma in numbers; read back as a
    spreadsheet in such a locale would (csv with ';', then ',' -> '.'), the numbers equal
    those of the ordinary file."""
    import csv
    scenario = tmp_path / "vent.yaml"
    scenario.write_text(VENT)
    assert main(["run", str(scenario), "--out", str(tmp_path / "dot"), "--no-plots",
                 "--quiet"]) == 0
    assert main(["run", str(scenario), "--out", str(tmp_path / "comma"), "--no-plots",
                 "--quiet", "--decimal-comma"]) == 0

    def rows(path, sep):
        lines = [ln for ln in path.read_text().splitlines() if not ln.startswith("#")]
        return list(csv.reader(lines, delimiter=sep))
    dot = rows(tmp_path / "dot" / "history.csv", ",")
    comma = rows(tmp_path / "comma" / "history.csv", ";")
    assert dot[0] == comma[0]  # the same headers
    assert any("," in cell for cell in comma[1])
    for a, b in zip(dot[1:], comma[1:]):
        assert [float(x) for x in a if x] == [float(x.replace(",", ".")) for x in b if x]


def test_the_program_leaves_quickly_with_its_output_and_exit_code_whole(tmp_path):
    """`cvsim run` and `check` leave by os._exit (cvsim.cli.command): everything printed
    must still arrive through a pipe, the exit code must be main()'s, and the files
    must be complete."""
    import subprocess
    import sys
    env = {k: v for k, v in os.environ.items() if k != "PYTHONUNBUFFERED"}
    env["PYTHONPATH"] = str(ROOT)  # block-buffered output through a pipe, as usual
    demo = ROOT / "scenarios" / "nitrogen-blowdown.yaml"
    run = subprocess.run([sys.executable, "-m", "cvsim.cli", "run", str(demo), "--out",
                          str(tmp_path / "out"), "--no-plots"], capture_output=True, text=True,
                         env=env, timeout=300)
    assert run.returncode == 0, run.stderr
    assert run.stdout.rstrip().endswith(f"Results written to {tmp_path / 'out'}/")
    assert "Minimum" in run.stdout or "minimum" in run.stdout  # the summary came through
    summary = (tmp_path / "out" / "summary.txt").read_text()
    assert run.stdout.startswith(summary.splitlines()[0])
    check = subprocess.run([sys.executable, "-m", "cvsim.cli", "check", str(demo)],
                           capture_output=True, text=True, env=env, timeout=300)
    assert check.returncode == 0 and "no problems found" in check.stdout
    missing = subprocess.run([sys.executable, "-m", "cvsim.cli", "run",
                              str(tmp_path / "nothing.yaml")], capture_output=True, text=True,
                             env=env, timeout=300)
    assert missing.returncode == 2 and missing.stderr.startswith("cvsim: ")


def test_a_reader_that_leaves_early_gets_no_traceback():
    """`cvsim check FILE | head -1`: the pipe closes under the writer; the program
    ends quietly (cvsim.cli.command)."""
    import subprocess
    import sys
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    demo = ROOT / "scenarios" / "nitrogen-blowdown.yaml"
    proc = subprocess.run(f"'{sys.executable}' -m cvsim.cli check '{demo}' | head -c 20",
                          shell=True, capture_output=True, text=True, env=env, timeout=300)
    assert proc.stdout == f"{demo}"[:20]
    assert "Traceback" not in proc.stderr and "BrokenPipe" not in proc.stderr


def _csv_rows(path, sep):
    import csv
    lines = [ln for ln in path.read_text().splitlines() if not ln.startswith("#")]
    return list(csv.reader(lines, delimiter=sep))


def _same_numbers(dot, comma):
    """The decimal-comma table read back as a spreadsheet in such a locale would (fields
    split at ';', then ',' read as the decimal point) equals the ordinary one: the same
    headers, the same words, the same numbers."""
    assert dot[0] == comma[0]
    assert len(dot) == len(comma) > 1
    assert any("," in cell for row in comma[1:] for cell in row)
    for a, b in zip(dot[1:], comma[1:]):
        assert len(a) == len(b)
        for x, y in zip(a, b):
            try:
                number = float(x)
            except ValueError:
                assert y == x  # words stay as they are
                continue
            assert float(y.replace(",", ".")) == number


def test_decimal_comma_sweep_table_reads_back_in_a_decimal_comma_locale(tmp_path):
    scenario = tmp_path / "vent.yaml"
    scenario.write_text(VENT)
    for name, extra in (("dot", []), ("comma", ["--decimal-comma"])):
        assert main(["sweep", str(scenario), "--vary", "links.vent.diameter=4 mm, 5.5 mm",
                     "--out", str(tmp_path / name), "--no-plots", "--quiet", "--workers", "1",
                     *extra]) == 0
    dot = _csv_rows(tmp_path / "dot" / "sweep.csv", ",")
    comma = _csv_rows(tmp_path / "comma" / "sweep.csv", ";")
    _same_numbers(dot, comma)
    assert [r[1] for r in comma[1:]] == ["4 mm", "5.5 mm"]  # values as given, untouched


def test_decimal_comma_find_table_reads_back_in_a_decimal_comma_locale(tmp_path):
    scenario = tmp_path / "vent.yaml"
    scenario.write_text(VENT)
    for name, extra in (("dot", []), ("comma", ["--decimal-comma"])):
        assert main(["find", str(scenario), "--vary", "links.vent.diameter=2 mm:10 mm",
                     "--smallest", "--meet", "tank.min_pressure <= 9.5 barg", "--tolerance",
                     "2 %", "--out", str(tmp_path / name), "--no-plots", "--no-run",
                     "--quiet", "--workers", "1", *extra]) == 0
    dot = _csv_rows(tmp_path / "dot" / "cases.csv", ",")
    comma = _csv_rows(tmp_path / "comma" / "cases.csv", ";")
    _same_numbers(dot, comma)
