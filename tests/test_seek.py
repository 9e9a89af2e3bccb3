"""Target seeking: requirements in plain text, and the smallest or largest value that
meets them, checked against the closed form of a perfect-gas choked blowdown."""
import json
import math

import pytest

import cvsim
from cvsim.cli import main
from cvsim.errors import StudyError
from cvsim.flow.nozzle import critical_flow_function
from cvsim.scenario import load_scenario_text
from cvsim.study.outcomes import outcome_list
from cvsim.study.seek import parse_requirement

from conftest import M_AIR, R_U

K = 1.4                    # heat-capacity ratio of the perfect gas
R = R_U / M_AIR            # [J/(kg K)]
CP = K / (K - 1) * R       # [J/(kg K)] so that cp/cv = 1.4 exactly
V, P0, T0, CD = 0.5, 50e5, 300.0, 0.8
P_TARGET, P_BACK, T_TARGET = 8e5, 1e5, 60.0   # 8 bar a: choked down to 1.9 bar a

IDEAL = f"""
title: Perfect-gas choked blowdown
fluid: Air
properties: ideal-gas
ideal_gas: {{molar_mass: {M_AIR * 1000!r} g/mol, heat_capacity: {CP!r} J/kg/K}}
vessels:
  tank:
    volume: {V} m3
    initial: {{pressure: {P0 / 1e5} bara, temperature: {T0} K}}
    limits:
      depressure: {{to: {P_TARGET / 1e5} bara, within: {T_TARGET} s}}
reservoirs:
  outside: {{pressure: {P_BACK / 1e5} bara, temperature: {T0} K}}
links:
  vent: {{from: tank, to: outside, device: orifice, diameter: 8 mm,
         discharge_coefficient: {CD}, flow_model: ideal-gas}}
run:
  end: 200 s
  record_every: 1 s
  solver: {{relative_tolerance: 1e-8}}
  stop_when:
    - {{vessel: tank, pressure_below: {P_TARGET / 1e5} bara}}
"""


def closed_form_diameter(t: float) -> float:
    """Orifice diameter [m] that takes the tank from P0 to P_TARGET in ``t`` [s].

    source: docs/theory.md, "Choked discharge of a perfect gas" (Bar-Meir,
    Fundamentals of Compressible Fluid Mechanics, ch. 11):
    t(p) = 2 tau/(k-1) ((p/p0)^(-(k-1)/(2k)) - 1), tau = V/(Cd A C* sqrt(R T0)), A = pi d^2/4
    """
    tau = t * (K - 1) / (2 * ((P_TARGET / P0) ** (-(K - 1) / (2 * K)) - 1))
    area = V / (CD * critical_flow_function(K) * math.sqrt(R * T0) * tau)
    return math.sqrt(4 * area / math.pi)


@pytest.fixture
def ideal(tmp_path):
    path = tmp_path / "ideal.yaml"
    path.write_text(IDEAL)
    return path


def test_the_target_pressure_keeps_the_orifice_choked():
    # r* = (2/(k+1))^(k/(k-1)) = 0.528 at k = 1.4 (ISO 9300; Anderson, Modern
    # Compressible Flow, Table A.1): choked while p_back/p <= r*
    assert P_BACK / P_TARGET <= (2 / (K + 1)) ** (K / (K - 1))


def test_smallest_diameter_for_a_depressuring_time_matches_the_closed_form(ideal):
    result = cvsim.seek(ideal, {"links.vent.diameter": "2 mm:40 mm"}, meet="limits",
                        goal="smallest", progress=False)
    expected = closed_form_diameter(T_TARGET)
    assert result.status == "found"
    # source: closed form above (docs/theory.md; Bar-Meir ch. 11), to 0.5 %
    assert result.value_si == pytest.approx(expected, rel=5e-3)
    assert result.unit == "mm" and result.value.endswith(" mm")
    # the answer was simulated and met; the bracket's other end did not
    (check, met, margin, unit), = result.margins
    assert check == "tank.limit.depressure" and met and margin >= 0 and unit == "s"
    not_met, met_at = (float(t.split()[0]) for t in result.bracket)
    assert not_met < result.number == met_at
    assert met_at - not_met <= 1e-3 * met_at
    assert result.simulations == len(result.cases.rows) <= 40
    # cases that do not reach the target in the run count as not met
    assert any(math.isnan(r["tank.limit.depressure.actual"]) for r in result.cases.rows)


def test_an_outcome_inequality_and_the_largest_value(ideal):
    # the largest orifice that still takes at least 60 s to reach 8 bar a is the same
    # crossing, found from the other side (and the run ends at the target: end_time)
    result = cvsim.seek(ideal, {"links.vent.diameter": "log:2 mm:40 mm"},
                        meet="end_time >= 1 min", goal="largest", tolerance=1e-3,
                        progress=False)
    assert result.status == "found"
    # source: closed form (docs/theory.md; Bar-Meir ch. 11), to 0.5 %
    assert result.value_si == pytest.approx(closed_form_diameter(T_TARGET), rel=5e-3)
    (check, met, margin, unit), = result.margins
    assert check == "end_time >= 1 min" and met and margin >= 0


def test_failed_runs_count_as_not_met_and_the_search_goes_on(ideal):
    # negative diameters are rejected by the scenario reader: failed cases, not met
    result = cvsim.seek(ideal, {"links.vent.diameter": "-10 mm:40 mm:6"},
                        meet="tank.limit.depressure", progress=False)
    assert any(r["status"] == "failed" for r in result.cases.rows)
    assert result.value_si == pytest.approx(closed_form_diameter(T_TARGET), rel=5e-3)


def test_range_end_and_nothing_in_range(ideal):
    above = cvsim.seek(ideal, {"links.vent.diameter": "30 mm:40 mm:3"}, progress=False)
    assert above.status == "at range end" and above.value == "30 mm"
    assert "widen the range downwards" in above.message
    below = cvsim.seek(ideal, {"links.vent.diameter": "1 mm:3 mm:3"}, progress=False)
    assert below.status == "not found" and below.value is None
    assert "no simulated value" in below.message


def test_requirements_are_read_and_wrong_ones_named():
    sc = load_scenario_text(IDEAL)
    outcomes = outcome_list(sc.network)
    r = parse_requirement("tank.min_temperature >= -29 degC", outcomes, sc.network)
    assert (r.kind, r.name, r.op) == ("compare", "tank.min_temperature", ">=")
    assert r.value == pytest.approx(244.15)
    r = parse_requirement("tank.max_pressure <= 60 barg", outcomes, sc.network)
    assert r.value == pytest.approx(60e5 + sc.network.atmosphere)  # gauge: atmosphere added
    assert parse_requirement("end_time≤15 min", outcomes, sc.network).value == 900.0
    assert parse_requirement("limits:time", outcomes, sc.network).quantity == "time"
    assert parse_requirement("tank.limits", outcomes, sc.network).vessel == "tank"
    assert parse_requirement("tank.limit.depressure", outcomes, sc.network).kind == "limit"
    # margins are differences: no gauge reference
    r = parse_requirement("tank.limit.depressure.margin > 5 s", outcomes, sc.network)
    assert r.value == 5.0 and r.op == ">"
    for text, words in [
            ("tank.min_temperature >= -29", "missing unit"),
            ("tank.min_temp >= -29 degC", "Did you mean 'tank.min_temperature'"),
            ("tank.limit.depress", "Did you mean 'tank.limit.depressure'"),
            ("limits:temperature", "states no such design limit"),
            ("drum.limits", "no vessel 'drum'"),
            ("limits:speed", "not one of pressure, temperature, time"),
            ("tank.min_temperature >= 10 bar", "expected a temperature")]:
        with pytest.raises(StudyError, match=words):
            parse_requirement(text, outcomes, sc.network)


def test_requirements_check_margins_with_their_sign():
    sc = load_scenario_text(IDEAL)
    outcomes = outcome_list(sc.network)
    at_least = parse_requirement("end_time >= 1 min", outcomes, sc.network)
    assert at_least.check({"end_time": 75.0}, {}) == [("end_time >= 1 min", True, 15.0, "s")]
    at_most = parse_requirement("end_time < 1 min", outcomes, sc.network)
    assert at_most.check({"end_time": 60.0}, {})[0][1] is False  # strict
    assert at_most.check({"end_time": math.nan}, {})[0][1] is False


@pytest.mark.parametrize("args, words", [
    (["--vary", "links.vent.diameter=2 mm, fast"], "needs numbers in one unit"),
    (["--vary", "links.vent.diameter=2 mm:40 mm", "--tolerance", "1"], "between 0 and 0.5"),
    (["--vary", "links.vent.diameter=2 mm:40 mm", "--max-runs", "2"], "at least 3"),
    (["--vary", "links.vent.diamtr=2 mm:40 mm"], "did you mean 'diameter'"),
    (["--vary", "links.vent.diameter=2 mm:40 mm", "--meet", "tank.min_temp > 0 K"],
     "Did you mean"),
])
def test_command_line_errors_are_one_message(ideal, tmp_path, capsys, args, words):
    code = main(["find", str(ideal), "--smallest", "--out", str(tmp_path / "o"), *args])
    err = capsys.readouterr().err
    assert code == 2 and words in err and "Traceback" not in err
    assert not (tmp_path / "o").exists()


def test_command_line_writes_answer_cases_plot_and_a_run_at_the_answer(ideal, tmp_path,
                                                                       capsys):
    out = tmp_path / "find"
    code = main(["find", str(ideal), "--vary", "links.vent.diameter=2 mm:40 mm",
                 "--smallest", "--meet", "limits", "--tolerance", "0.2 %", "--out", str(out)])
    printed = capsys.readouterr().out
    assert code == 0
    assert "The smallest links.vent.diameter that meets: limits" in printed
    data = json.loads((out / "seek.json").read_text())
    assert data["status"] == "found" and data["simulations"] >= 6
    # source: closed form (docs/theory.md; Bar-Meir ch. 11), within the 0.2 % asked + 0.5 %
    assert data["value_si"] == pytest.approx(closed_form_diameter(T_TARGET), rel=5e-3)
    assert {"seek.txt", "seek.json", "cases.csv", "cases.png", "run"} <= {
        p.name for p in out.iterdir()}
    run = json.loads((out / "run" / "summary.json").read_text())
    assert run["provenance"]["overrides"] == {"links.vent.diameter": data["value"]}
    assert run["limits"][0]["met"] is True


def test_python_examples_in_the_studies_guide_run(tmp_path, monkeypatch, capsys):
    # docs/studies.md promises examples that run: run every python block as written
    import re
    from pathlib import Path
    root = Path(__file__).resolve().parents[1]
    text = (root / "docs" / "studies.md").read_text()
    blocks = re.findall(r"```python\n(.*?)```", text, re.S)
    assert blocks
    (tmp_path / "scenarios").symlink_to(root / "scenarios")
    monkeypatch.chdir(tmp_path)
    for code in blocks:
        exec(compile(code, "docs/studies.md", "exec"), {})
    assert (tmp_path / "results" / "orifice-sweep" / "sweep.csv").exists()
    assert (tmp_path / "results" / "orifice.png").exists()
    assert "17.399 mm" in capsys.readouterr().out
