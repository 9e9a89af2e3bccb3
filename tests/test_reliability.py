"""Hangs, runaway memory, orphaned workers and odd text (issue items 4-6 and 8-12):
each one gives a bounded run or one clear message, never a traceback."""
import json
import os
import signal
import subprocess
import sys
import textwrap
import time

import numpy as np
import pytest

from cvsim import solve
from cvsim.cli import main
from cvsim.limits import REACHED_RTOL, first_time_at_or_below
from cvsim.scenario import load_scenario_text
from cvsim.scenario import tree
from conftest import SMALL



def no_traceback(text: str) -> bool:
    return "Traceback" not in text and "Error:" not in text.replace("OutputError", "")


# ------------------------------------------------------------------ item 4

def test_recording_interval_is_coarsened_to_a_round_value_within_the_bound():
    used, note = solve.recording_interval(1e9, 1.0)
    assert used == 5000.0  # 1e9 / 2e5 = 5000: already a 1-2-5 value
    assert 1e9 / used <= solve.MAX_RECORDED_POINTS
    assert "run.record_every" in note and "run.end" in note
    used, _ = solve.recording_interval(3e7, 1.0)  # needs 150 s: next 1-2-5 value is 200 s
    assert used == 200.0
    assert solve.recording_interval(3600.0, 0.1) == (0.1, "")


def test_a_very_long_run_records_a_bounded_history_and_says_so(small, tmp_path, monkeypatch,
                                                                capsys):
    monkeypatch.setattr(solve, "MAX_RECORDED_POINTS", 500)
    out = tmp_path / "out"
    code = main(["run", str(small), "--out", str(out), "--quiet", "--no-plots",
                 "--set", "run.end=1e6 s"])
    assert code == 0
    assert "recorded every 2000 s instead" in capsys.readouterr().err
    rows = [ln for ln in (out / "history.csv").read_text().splitlines()
            if ln and not ln.startswith("#")]
    assert len(rows) - 1 <= 500 + 5  # the grid plus the first and last points
    summary = json.loads((out / "summary.json").read_text())
    assert any("recorded every 2000 s" in w for w in summary["warnings"])


def test_check_warns_about_a_run_that_would_record_too_many_points(small, capsys):
    assert main(["check", str(small), "--set", "run.end=1e9 s"]) == 0
    text = capsys.readouterr().out
    assert "1 warning" in text and "recorded every 5000 s instead" in text


def test_a_run_past_its_time_limit_fails_with_the_reason():
    scenario = load_scenario_text(SMALL, overrides={"run.end": "1e9 s"})
    from cvsim.api import run_network
    started = time.monotonic()
    with solve.time_limit(0.5):
        result = run_network(scenario.network, scenario)
    assert time.monotonic() - started < 10
    assert result.status == "failed"
    assert "time limit of 0.5 s" in result.message and "--case-time-limit" in result.message
    assert result.time[-1] > 0  # what was computed is kept, up to the last step


def test_a_sweep_case_past_its_time_limit_fails_alone(small):
    from cvsim.study.sweep import sweep
    result = sweep(small, {"run.end": "5 s, 1e9 s"}, workers=2, progress=False,
                   case_time_limit=1.0)
    quick, endless = result.rows
    assert quick["status"] == "completed"
    assert endless["status"] == "failed" and "time limit of 1 s" in endless["error"]


def test_case_time_limit_option_reads_times_and_none(small, capsys):
    from cvsim.study.options import read_time_limit as _time_limit
    assert _time_limit("2 min") == 120.0
    assert _time_limit("none") is None
    assert main(["sweep", str(small), "--vary", "links.vent.diameter=2 mm, 3 mm",
                 "--case-time-limit", "0 s"]) == 2
    assert "--case-time-limit" in capsys.readouterr().err


# ------------------------------------------------------------------ item 5

def alias_bomb(levels: int, leaf: str) -> str:
    """Anchors that multiply by ten at each level (the classic expansion bomb)."""
    lines = [f"  a0: &a0 {leaf}"]
    for i in range(1, levels):
        lines.append(f"  a{i}: &a{i} [" + ", ".join([f"*a{i - 1}"] * 10) + "]")
    return "anchors:\n" + "\n".join(lines) + "\n"


def test_an_alias_bomb_under_stop_conditions_is_refused_at_once(small, tmp_path, capsys):
    text = alias_bomb(9, "[{vessel: tank, pressure_below: 1 barg}]") + SMALL.replace(
        "run: {end: 10 s, record_every: 1 s}",
        "run: {end: 10 s, record_every: 1 s, stop_when: *a8}")
    path = tmp_path / "bomb.yaml"
    path.write_text(text)
    started = time.monotonic()
    assert main(["check", str(path)]) == 2
    assert time.monotonic() - started < 5
    err = capsys.readouterr().err
    assert "expands to more than" in err and len(err) < 2000 and no_traceback(err)


def test_an_alias_bomb_under_a_pressure_table_gives_a_short_message(tmp_path, capsys):
    text = alias_bomb(9, "[[1 s, 1 bara], [2 s, 1 bara]]") + SMALL.replace(
        "air: {pressure: 1 atm,", "air: {pressure: {table: *a8},")
    path = tmp_path / "bomb.yaml"
    path.write_text(text)
    assert main(["run", str(path), "--out", str(tmp_path / "out")]) == 2
    err = capsys.readouterr().err
    assert "expands to more than" in err and len(err) < 2000


def test_smaller_expansions_still_give_short_messages(tmp_path):
    # four levels (2e4 values) pass the size bound; the message quoting them is cut
    text = alias_bomb(4, "[[1 s, 1 bara], [2 s, 1 bara]]") + SMALL.replace(
        "air: {pressure: 1 atm,", "air: {pressure: {table: *a3},")
    with pytest.raises(Exception) as info:
        load_scenario_text(text)
    from cvsim.scenario.spec import MESSAGE_CHARS
    assert "more characters" in str(info.value)
    assert all(len(p.message) < MESSAGE_CHARS + 100 for p in info.value.problems)


@pytest.mark.parametrize("text, words", [
    ("a: &a [1, *a]\n", "contains itself"),
    ("a: " + "[" * 200 + "]" * 200 + "\n", "levels deep"),
])
def test_self_referring_and_deeply_nested_documents_are_refused(text, words):
    root, problems = tree.parse(text)
    assert root is None and words in problems[0].message


# ------------------------------------------------------------------ item 6

WORKERS = textwrap.dedent("""
    import sys, time
    from cvsim.study.parallel import Workers
    pool = Workers(2, start_method=sys.argv[1]).start()
    print("started", flush=True)
    for _ in pool.map(time.sleep, [60, 60]):
        pass
""")


def children(pid: int) -> list[int]:
    out = subprocess.run(["ps", "-o", "pid=", "--ppid", str(pid)], capture_output=True,
                         text=True).stdout
    return [int(x) for x in out.split()]


def descendants(pid: int) -> list[int]:
    found, todo = [], [pid]
    while todo:
        kids = children(todo.pop())
        found += kids
        todo += kids
    return found


def alive(pid: int) -> bool:
    try:
        with open(f"/proc/{pid}/stat") as fh:
            return fh.read().rsplit(") ", 1)[1][0] != "Z"
    except OSError:
        return False


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="reads /proc")
@pytest.mark.parametrize("method", ["fork", "forkserver"])
def test_workers_end_when_their_parent_is_killed(method):
    # SIGKILL: the parent has no say (SIGTERM and Ctrl-C: see the sweep tests below)
    parent = subprocess.Popen([sys.executable, "-c", WORKERS, method], stdout=subprocess.PIPE,
                              text=True)
    try:
        assert parent.stdout.readline().strip() == "started"
        workers = descendants(parent.pid)  # the workers (and a fork server's processes)
        assert len(workers) >= 2
        os.kill(parent.pid, signal.SIGKILL)
        parent.wait(timeout=10)
        deadline = time.monotonic() + 5
        while any(alive(w) for w in workers) and time.monotonic() < deadline:
            time.sleep(0.1)
        assert not [w for w in workers if alive(w)]
    finally:
        parent.kill()
        parent.wait()


@pytest.mark.skipif(os.name != "posix", reason="signals")
def test_ctrl_c_keeps_the_finished_rows_as_a_partial_table(small, tmp_path):
    from cvsim.study.sweep import Interrupted, sweep

    def ctrl_c(signum, frame):  # as the terminal's SIGINT does in the main thread
        raise KeyboardInterrupt

    old = signal.signal(signal.SIGALRM, ctrl_c)
    started = time.monotonic()
    signal.setitimer(signal.ITIMER_REAL, 6.0)
    try:
        with pytest.raises(Interrupted) as info:
            sweep(small, {"run.end": "2 s, 1e9 s, 3 s, 4 s"}, workers=2, progress=False,
                  case_time_limit=None)
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0.0)
        signal.signal(signal.SIGALRM, old)
    assert time.monotonic() - started < 15  # the endless case was not waited for
    result = info.value.result
    status = [r["status"] for r in result.rows]
    assert status[1] == "not run" and status.count("completed") == 3
    assert result.partial.startswith("PARTIAL") and "3 of 4" in result.partial
    out = tmp_path / "out"
    result.write(out, plots=False)
    head = (out / "sweep.csv").read_text().splitlines()[:3]
    assert any("PARTIAL" in line for line in head)
    assert json.loads((out / "sweep.json").read_text())["complete"] is False
    assert "not run" in (out / "sweep.txt").read_text()


@pytest.mark.skipif(os.name != "posix", reason="signals")
def test_sigterm_stops_a_sweep_writes_a_partial_table_and_leaves_no_worker(small, tmp_path):
    out = tmp_path / "out"
    proc = subprocess.Popen([sys.executable, "-m", "cvsim.cli", "sweep", str(small), "--vary",
                             "run.end=1e9 s, 2e9 s", "--workers", "2", "--out", str(out),
                             "--no-plots", "--quiet"], stderr=subprocess.PIPE, text=True)
    deadline = time.monotonic() + 60
    while len(children(proc.pid)) < 2 and time.monotonic() < deadline:
        time.sleep(0.1)
    workers = children(proc.pid)
    time.sleep(0.5)
    proc.terminate()
    err = proc.communicate(timeout=30)[1]
    assert proc.returncode == 143, err
    assert "Partial table written" in err and "Traceback" not in err
    assert "PARTIAL" in (out / "sweep.txt").read_text()
    time.sleep(0.5)
    assert not any(alive(w) for w in workers)
    assert not [p for p in tmp_path.iterdir() if ".partial-" in p.name]


# ------------------------------------------------------------------ item 8

@pytest.mark.parametrize("char, name", [("\x00", "NUL"), ("\x1b", "ESC"), ("\x7f", "DEL")])
def test_a_non_printable_character_in_the_file_gives_line_and_column(char, name, tmp_path,
                                                                     capsys):
    path = tmp_path / "odd.yaml"
    path.write_text(SMALL.replace("vented bottle", f"vented {char}[31mbottle"))
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert f"({name}, U+{ord(char):04X}) at column 21" in err and "(line 1)" in err
    assert "delete it" in err and no_traceback(err)


def test_a_non_printable_character_in_a_set_value_is_one_clear_message(small, capsys):
    assert main(["check", str(small), "--set", "title=\x1b[1mbold"]) == 2
    err = capsys.readouterr().err
    assert "title" in err and "ESC, U+001B" in err and no_traceback(err)
    assert "\x1b" not in err  # the message itself stays printable


# ------------------------------------------------------------------ item 9

def test_a_very_long_title_is_shortened_in_plots_and_the_run_is_kept(tmp_path, capsys):
    title = "Very long title " * 200  # 3200 characters
    path = tmp_path / "long.yaml"
    path.write_text(SMALL.replace("title: small vented bottle", f"title: {title}")
                    .replace("end: 10 s", "end: 3 s"))
    out = tmp_path / "out"
    assert main(["run", str(path), "--out", str(out), "--quiet"]) == 0
    assert (out / "overview.png").stat().st_size > 0
    from cvsim.plot import TITLE_LINES, _wrap
    lines = _wrap(title, 11.0, 12.0, bold=True, max_lines=TITLE_LINES)
    assert len(lines) == TITLE_LINES and lines[-1].endswith("\u2026")


def test_a_plot_that_fails_never_loses_the_results(small, tmp_path, monkeypatch, capsys):
    import cvsim.plot

    def broken(result, folder):  # the first plot is drawn, the second breaks half-way
        from matplotlib.figure import Figure
        Figure().savefig(folder / "overview.png")
        (folder / "pressure.png").write_bytes(b"\x89PNG\r\n\x1a\nhalf")
        raise RuntimeError("layout constraint could not be satisfied")

    monkeypatch.setattr(cvsim.plot, "plot_run", broken)
    out = tmp_path / "out"
    assert main(["run", str(small), "--out", str(out), "--quiet"]) == 0
    assert {"history.csv", "summary.json", "summary.txt"} <= {p.name for p in out.iterdir()}
    assert (out / "overview.png").exists()  # drawn whole: kept
    assert not (out / "pressure.png").exists()  # no half-drawn plot
    warnings = json.loads((out / "summary.json").read_text())["warnings"]
    assert any("'pressure.png' could not be drawn" in w for w in warnings)


def test_a_sweep_plot_that_fails_never_loses_the_table(small, tmp_path, monkeypatch):
    from cvsim.study.sweep import sweep
    import cvsim.study.plot
    result = sweep(small, {"links.vent.diameter": "2 mm, 3 mm"}, workers=1, progress=False)

    def broken(*args, **kwargs):
        raise RuntimeError("no room for the title")

    monkeypatch.setattr(cvsim.study.plot, "plot_sweep", broken)
    result.write(tmp_path / "out")
    text = (tmp_path / "out" / "sweep.txt").read_text()
    assert "'sweep.png' could not be drawn" in text
    assert not (tmp_path / "out" / "sweep.png").exists()


# ------------------------------------------------------------------ item 10

@pytest.mark.parametrize("key, value, words", [
    ("vessels.tank.initial.pressure", "1e6 bar", "above the highest pressure"),
    ("vessels.tank.initial.temperature", "0.001 K", "outside the temperature range"),
    ("reservoirs.air.temperature", "0.001 K", "outside the temperature range"),
])
def test_check_refuses_states_outside_the_equation_of_state(key, value, words, small, capsys):
    assert main(["check", str(small), "--set", f"{key}={value}"]) == 2
    err = capsys.readouterr().err
    assert key in err and words in err and no_traceback(err)


def test_check_warns_of_a_relief_valve_set_below_the_initial_pressure(small, capsys):
    psv = ("{from: tank, to: air, device: relief-valve, set_pressure: 5 barg, "
           "orifice_letter: D, blowdown: 7 %}")
    assert main(["check", str(small), "--set", f"links.psv={psv}"]) == 0
    out = capsys.readouterr().out
    assert "links.psv.set_pressure: the set pressure (5 bar g) is at or below the initial " \
           "pressure of vessel 'tank' (20 bar g)" in out


def test_check_warns_of_an_opening_wider_than_its_vessel(small, capsys):
    assert main(["check", str(small), "--set", "links.vent.diameter=1 m"]) == 0
    out = capsys.readouterr().out
    # a 0.01 m3 sphere is 267.3 mm across: (6 V / pi)^(1/3)
    assert "wider than vessel 'tank'" in out and "267.3 mm" in out


def test_a_run_prints_the_reader_warnings_and_keeps_them_in_the_summary(small, tmp_path,
                                                                        capsys):
    out = tmp_path / "out"
    assert main(["run", str(small), "--out", str(out), "--quiet", "--no-plots", "--set",
                 "links.vent.diameter=300 mm", "--set", "run.end=0.1 s",
                 "--set", "run.record_every=0.01 s"]) == 0
    assert "cvsim: warning: links.vent:" in capsys.readouterr().err
    warnings = json.loads((out / "summary.json").read_text())["warnings"]
    assert any("wider than vessel 'tank'" in w for w in warnings)


# ------------------------------------------------------------------ item 11

def test_a_stop_on_a_target_counts_as_reaching_it_everywhere(tmp_path, capsys):
    text = SMALL.replace("tank: {volume: 0.01 m3, initial: {pressure: 20 barg, "
                         "temperature: 15 degC}}",
                         "tank: {volume: 1e-12 m3, initial: {pressure: 150 barg, "
                         "temperature: 15 degC},\n         limits: {design_pressure: 165 barg, "
                         "depressure: guideline}}").replace(
        "run: {end: 10 s, record_every: 1 s}",
        "run: {end: 30 min, stop_when: {vessel: tank, pressure_below: 6.9 barg}}")
    path = tmp_path / "tiny.yaml"
    path.write_text(text)
    out = tmp_path / "out"
    assert main(["run", str(path), "--out", str(out), "--quiet", "--no-plots"]) == 0
    s = json.loads((out / "summary.json").read_text())
    assert s["status"] == "stopped"
    assert s["targets"][0]["time_s"] == pytest.approx(s["end_time_s"])
    (depressure,) = [c for c in s["limits"] if c["key"] == "depressure"]
    assert depressure["met"] is True


def test_reached_within_the_one_tolerance_and_not_beyond():
    t = np.array([0.0, 1.0, 2.0])
    target = 7.91325e5
    near = target * (1 + 0.5 * REACHED_RTOL)  # how a located stop may land
    assert first_time_at_or_below(t, [10e5, 9e5, near], target) == 2.0
    assert np.isnan(first_time_at_or_below(t, [10e5, 9e5, target * (1 + 2 * REACHED_RTOL)],
                                           target))


# ------------------------------------------------------------------ item 12

def test_a_ten_thousand_character_name_is_one_clear_message(small, tmp_path, capsys):
    path = tmp_path / "long-name.yaml"
    path.write_text(SMALL.replace("  tank:", "  " + "t" * 10_000 + ":", 1))
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "a key of 10000 characters" in err and "mapping values" not in err


def test_a_long_but_readable_name_is_refused_with_the_limit(small, capsys):
    name = "v" * 100
    assert main(["check", str(small), "--set", f"vessels.{name}="
                 "{volume: 1 m3, initial: {pressure: 1 barg, temperature: 15 degC}}"]) == 2
    assert "a name of 100 characters; use at most 64" in capsys.readouterr().err


def test_a_400000_row_table_is_refused_at_once(tmp_path, capsys):
    rows = ", ".join(f"[{i} s, 1.{i % 7} bara]" for i in range(400_000))
    path = tmp_path / "big.yaml"
    path.write_text(SMALL.replace("air: {pressure: 1 atm,", f"air: {{pressure: {{table: [{rows}]}},"))
    started = time.monotonic()
    assert main(["check", str(path)]) == 2
    assert time.monotonic() - started < 5
    assert "more than the 1000000 a scenario may have" in capsys.readouterr().err


def test_a_table_of_too_many_points_is_refused_before_reading_them(tmp_path, capsys):
    rows = ", ".join(f"[{i} s, 1.{i % 7} bara]" for i in range(12_000))
    path = tmp_path / "long-table.yaml"
    path.write_text(SMALL.replace("air: {pressure: 1 atm,", f"air: {{pressure: {{table: [{rows}]}},"))
    started = time.monotonic()
    assert main(["check", str(path)]) == 2
    assert time.monotonic() - started < 20
    assert "a table of 12000 points; use at most 10000" in capsys.readouterr().err


# ---------------------------------------------- scipy's solver raising on a step's values

NAN_MESSAGE = "array must not contain infs or NaNs"  # scipy.linalg.lu_factor, check_finite


def failing_solver(base, after: float, where: str = "step"):
    """``base`` (a scipy solver class) that raises scipy's ValueError on every step
    past ``after`` [s] (or, ``where="start"``, when made past it), as an implicit
    method does when the Jacobian it factorises holds a NaN."""
    class Failing(base):
        def __init__(self, fun, t0, *args, **kw):
            if where == "start" and t0 > after:
                raise ValueError(NAN_MESSAGE)
            super().__init__(fun, t0, *args, **kw)

        def _step_impl(self):
            if where == "step" and self.t > after:
                raise ValueError(NAN_MESSAGE)
            return super()._step_impl()
    return Failing


@pytest.mark.parametrize("method, where", [("LSODA", "step"), ("BDF", "step"),
                                           ("BDF", "start")])
def test_scipy_raising_on_a_step_ends_the_run_as_failed_naming_run_solver(method, where,
                                                                          monkeypatch):
    from cvsim.api import run_network
    monkeypatch.setitem(solve.METHODS, method, failing_solver(solve.METHODS[method], 3.0,
                                                              where))
    # a table point at 5 s starts a new segment (and a new solver) there
    text = SMALL.replace("run: {end: 10 s, record_every: 1 s}",
                         f"run: {{end: 10 s, record_every: 1 s, solver: {{method: {method}}}}}")
    scenario = load_scenario_text(text, overrides={
        "reservoirs.air.pressure": "{table: [[0 s, 1 atm], [5 s, 1 atm], [10 s, 1 atm]]}"})
    result = run_network(scenario.network, scenario)
    assert result.status == "failed"
    assert NAN_MESSAGE in result.message
    assert f"run.solver.method {method}" in result.message
    assert "Last good state" in result.message
    assert 3.0 <= result.time[-1] <= 5.0 + 1e-9  # what was computed is kept


def test_scipy_raising_is_one_clear_message_on_the_command_line(small, tmp_path, monkeypatch,
                                                                capsys):
    monkeypatch.setitem(solve.METHODS, "BDF", failing_solver(solve.METHODS["BDF"], 2.0))
    code = main(["run", str(small), "--set", "run.solver={method: BDF}", "--out",
                 str(tmp_path / "out"), "--no-plots"])
    err = capsys.readouterr().err
    assert code != 0
    assert "the run failed" in err and "run.solver.method BDF" in err and NAN_MESSAGE in err
    assert no_traceback(err.replace("ValueError: " + NAN_MESSAGE, ""))
    assert not (tmp_path / "out").exists()
