"""The Python API as docs/api.md shows it."""
import math

import numpy as np
import pytest

from conftest import COLD_BLOWDOWN

from cvsim import load_scenario, run
from cvsim.errors import ScenarioError, SolverError

from pathlib import Path

DEMO = Path(__file__).resolve().parents[1] / "scenarios" / "nitrogen-blowdown.yaml"


def test_load_change_run_and_read_results():
    sc = load_scenario(DEMO, overrides={"links.vent.diameter": "8 mm", "run.end": "5 min"})
    assert sc.network.links[0].device.area == pytest.approx(math.pi * 0.008 ** 2 / 4)
    res = run(sc)
    assert res.ok
    assert res.time[-1] == pytest.approx(300.0)
    p = res["receiver.pressure"]
    assert np.all(np.diff(p) <= 0)
    T_min, t_at = res.extreme("receiver.temperature", "min")
    assert t_at == pytest.approx(300.0)
    s = res.summary()
    assert s["vessels"]["receiver"]["min_temperature_K"] == T_min
    assert res.unit("vent.mass_flow") == "kg/s"
    df = res.to_dataframe()
    assert len(df) == len(res.time)
    assert "Screening estimate" in df.attrs["caution"]  # the caution travels with it


def test_overrides_with_problems_are_reported_together():
    with pytest.raises(ScenarioError) as err:
        load_scenario(DEMO, overrides={"links.vent.diameter": "-8 mm",
                                       "links.vent.diametre": "8 mm"})
    keys = [p.key for p in err.value.problems]
    assert "links.vent.diameter" in keys and "links.vent.diametre" in keys


def test_check_true_raises_on_failed_run(tmp_path):
    bad = tmp_path / "cold.yaml"
    bad.write_text(COLD_BLOWDOWN)
    res = run(bad)
    assert res.status == "failed" and res.message
    with pytest.raises(SolverError):
        run(bad, check=True)
