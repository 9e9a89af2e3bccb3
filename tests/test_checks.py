"""Self-checks must pass on sound runs and fail on an injected defect.

Defects injected here, each a real mistake a model can make:
* a stream that carries u instead of h out of a vessel (issue 8 item 2: it moved
  the nitrogen demo's minimum temperature from 119.5 K to 249.1 K while the
  bookkeeping still "closed");
* a state solve that returns the warm-start guess (the old two-phase defect);
* a flow that runs from low to high pressure through an orifice;
* heat that flows from the cold contents into warmer surroundings;
* a device whose flow depends on the steps the solver takes.

Sources of the laws the checks rest on: first law for a control volume and
entropy generation (Clausius inequality, Gibbs relation for throttling): Cengel &
Boles, *Thermodynamics: An Engineering Approach*, 9th ed., ch. 5 and 7.
"""
from __future__ import annotations

import dataclasses

import pytest

import cvsim
from cvsim.api import run_network
from cvsim.checks import VERIFY_TOLERANCE
from cvsim.flow.base import Flow
from cvsim.flow.orifice import OrificeDevice
from cvsim.fluid import RealFluid
from cvsim.heat import loads
from cvsim.scenario import load_scenario

DEMO = "scenarios/nitrogen-blowdown.yaml"


def failed(res, name_part: str) -> bool:
    return any(name_part in c.name for c in res.checks_failed)


@pytest.mark.parametrize("scenario", ["nitrogen-blowdown", "two-vessels-equalising",
                                      "steel-vessel-blowdown-walls", "air-receiver-charge-draw",
                                      "relief-blocked-outlet"])
def test_sound_runs_pass_every_self_check(scenario):
    res = cvsim.run(f"scenarios/{scenario}.yaml")
    assert res.ok and res.checks
    assert not res.checks_failed, [c.text() for c in res.checks_failed]
    names = " ".join(c.name for c in res.checks)
    assert "state of vessel" in names and "first law of vessel" in names


def test_a_stream_carrying_u_instead_of_h_fails_the_first_law_check(monkeypatch):
    good = cvsim.run(DEMO)
    original = OrificeDevice.flow

    def carries_u(self, t, a, b, segment):
        f = original(self, t, a, b, segment)
        up = a if f.mdot > 0 else b
        return Flow(f.mdot, up.u, up.u, f.choked)

    monkeypatch.setattr(OrificeDevice, "flow", carries_u)
    bad = cvsim.run(DEMO)
    # the defect (issue 8): the gas stays far warmer, and the bookkeeping still closes
    assert bad.summary()["vessels"]["receiver"]["min_temperature_K"] > \
        good.summary()["vessels"]["receiver"]["min_temperature_K"] + 100.0
    assert bad.balance["energy_closure_relative"] < 1e-12
    assert failed(bad, "first law of vessel 'receiver'")
    assert any("SELF-CHECK FAILED" in w for w in bad.warnings)
    assert not failed(good, "first law")


def test_a_state_solve_that_returns_its_guess_fails_the_state_check(monkeypatch):
    def stalled(self, rho, u, T_guess=None):
        return self.state_dt(rho, T_guess if T_guess else 300.0)

    net = dataclasses.replace(load_scenario(DEMO).network)
    monkeypatch.setattr(RealFluid, "state_du", stalled)
    res = run_network(net)
    assert failed(res, "state of vessel 'receiver'")


def test_flow_from_low_to_high_pressure_fails_the_link_entropy_check(monkeypatch):
    original = OrificeDevice.flow

    def backwards(self, t, a, b, segment):
        f = original(self, t, a, b, segment)
        # the same size of flow, the wrong way (as a sign slip would give): the
        # atmosphere's air pushed into the receiver at 150 bar
        return Flow(-f.mdot, b.h, b.h, f.choked)

    monkeypatch.setattr(OrificeDevice, "flow", backwards)
    res = cvsim.run(DEMO, overrides={"run.end": "5 s"})
    assert failed(res, "entropy produced by link 'vent'")


def test_heat_from_cold_to_hot_fails_the_heat_entropy_check(monkeypatch):
    monkeypatch.setattr(loads, "ambient_exchange", lambda ua, T_amb, T_gas: ua * (T_gas - T_amb))
    res = cvsim.run("scenarios/air-receiver-charge-draw.yaml", overrides={"run.end": "10 min"})
    assert failed(res, "entropy produced by heat term")


def test_the_rerun_check_passes_on_a_sound_run_and_fails_on_a_step_dependent_model(monkeypatch):
    good = cvsim.run(DEMO, verify_tolerance=True)
    rerun = good.checks[-1]
    assert rerun.name == "rerun at tight tolerance" and rerun.passed
    assert rerun.value < VERIFY_TOLERANCE / 10

    original = OrificeDevice.flow

    def lagging(self, t, a, b, segment):
        # a defect whose answer depends on the solver's steps: the flow is scaled by
        # the upstream pressure of the previous call (a stale cache)
        f = original(self, t, a, b, segment)
        last = getattr(self, "_last_p", a.p)
        self._last_p = a.p
        return Flow(f.mdot * last / a.p, f.h_from, f.h_to, f.choked)

    monkeypatch.setattr(OrificeDevice, "flow", lagging)
    bad = cvsim.run(DEMO, overrides={"run.end": "20 s"}, verify_tolerance=True)
    assert not bad.checks[-1].passed


def test_the_verify_flag_of_the_command_line_adds_the_rerun_check(monkeypatch, tmp_path):
    import json

    from cvsim.cli import main

    def checks(out):
        return {c["name"]: c for c in json.loads((out / "summary.json").read_text())
                ["self_checks"]}
    plain, good = tmp_path / "plain", tmp_path / "good"
    for out, flags in ((plain, []), (good, ["--verify"])):
        assert main(["run", DEMO, "--no-plots", "--quiet", "--set", "run.end=60 s",
                     "--out", str(out), *flags]) == 0
    assert "rerun at tight tolerance" not in checks(plain)
    rerun = checks(good)["rerun at tight tolerance"]
    assert rerun["passed"] and rerun["value"] < VERIFY_TOLERANCE / 10
    assert "rerun at tight tolerance: passed" in (good / "summary.txt").read_text()

    original = OrificeDevice.flow

    def lagging(self, t, a, b, segment):   # the step-dependent defect of the test above
        f = original(self, t, a, b, segment)
        last = getattr(self, "_last_p", a.p)
        self._last_p = a.p
        return Flow(f.mdot * last / a.p, f.h_from, f.h_to, f.choked)

    monkeypatch.setattr(OrificeDevice, "flow", lagging)
    bad = tmp_path / "bad"
    main(["run", DEMO, "--no-plots", "--quiet", "--set", "run.end=20 s", "--verify",
          "--out", str(bad)])
    rerun = checks(bad)["rerun at tight tolerance"]
    assert not rerun["passed"] and rerun["value"] > rerun["tolerance"]
    summary = json.loads((bad / "summary.json").read_text())
    assert summary["self_checks_failed"] >= 1
    assert any("SELF-CHECK FAILED" in w and "rerun" in w for w in summary["warnings"])
