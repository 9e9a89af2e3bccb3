"""What a mixture run hands out (issue 11): the phases plot, the report with the
composition echoed, and a sweep of a mixture scenario. The separator demo holds two
phases from the start (a little condensate), so 40 s of it has everything to draw."""
from pathlib import Path

import pytest

from cvsim.api import run
from cvsim.cli import main
from cvsim.plot import plot_names
from cvsim.scenario import load_scenario

from test_report import Tree, embedded_pngs, words

ROOT = Path(__file__).resolve().parents[1]
SEPARATOR = ROOT / "scenarios" / "natural-gas-separator-depressuring.yaml"
#: the demo's mole fractions, as the report prints them (4 significant figures)
COMPOSITION = ("Methane 0.822, Ethane 0.07, Propane 0.04, IsoButane 0.008, n-Butane 0.012, "
               "Isopentane 0.004, n-Pentane 0.004, n-Hexane 0.004, n-Heptane 0.004, "
               "n-Octane 0.002, Nitrogen 0.01, CarbonDioxide 0.02")


@pytest.fixture(scope="module")
def separator(tmp_path_factory):
    """`cvsim run --report` on the separator demo, shortened to 40 s."""
    out = tmp_path_factory.mktemp("mixture") / "separator"
    assert main(["run", str(SEPARATOR), "--set", "run.end=40 s", "--out", str(out),
                 "--report", "--quiet"]) == 0
    return out


def test_a_two_phase_mixture_run_draws_its_phases(separator):
    result = run(load_scenario(SEPARATOR, overrides={"run.end": "40 s"}))
    names = plot_names(result)
    # the separator holds vapour and condensate: its phases and its level are drawn
    assert "phases" in names and "level" in names
    for n in names:
        data = (separator / f"{n}.png").read_bytes()
        assert data[:8] == b"\x89PNG\r\n\x1a\n", n


def test_the_report_of_a_mixture_run_echoes_the_composition(separator):
    tree = Tree((separator / "report.html").read_text(encoding="utf-8"))
    model = words(tree.by_id("model").text())
    assert f"mixture of mole fractions {COMPOSITION}; Peng-Robinson equation of state " \
           "of thermopack" in model
    used = words(tree.by_id("inputs-used").text())
    assert f"mole fractions {COMPOSITION}" in used
    assert "fluid.components.Methane0.8220.822" in used.replace(" ", "")
    assert "normalised" not in used          # the demo's fractions sum to 1
    # the phases plot is in the report, as a picture
    assert len(embedded_pngs(tree)) >= len(tree.by_id("plot-phases").find("img")) == 1


def test_a_sweep_of_a_mixture_scenario():
    import cvsim
    table = cvsim.sweep(SEPARATOR, vary={"links.blowdown_valve.diameter": "20 mm:30 mm:3"},
                        overrides={"run.end": "20 s"}, workers=1, progress=False)
    assert len(table.rows) == 3
    assert [r["status"] for r in table.rows] == ["completed"] * 3, \
        [r.get("error") for r in table.rows]
    d = table.values("links.blowdown_valve.diameter")
    assert d == ["20 mm", "25 mm", "30 mm"]      # the values as given
    passed = table.values("blowdown_valve.mass_passed")
    t_min = table.values("separator.min_temperature")
    # a wider orifice passes more gas in the same 20 s and cools the contents more
    # (the first law of an expanding gas; no source needed)
    assert passed[0] < passed[1] < passed[2]
    assert t_min[0] > t_min[1] > t_min[2]
