"""The Python entry points: load a scenario, run it, get a Result.

>>> from cvsim import load_scenario, run            # doctest: +SKIP
>>> result = run("scenarios/nitrogen-blowdown.yaml") # doctest: +SKIP
>>> result["receiver.pressure"][-1]                  # doctest: +SKIP
"""
from __future__ import annotations

import platform
from pathlib import Path

from . import __version__
from .errors import SolverError
from .model import Model
from .network import Network
from .result import Result, build_result
from .solve import integrate


def provenance(scenario=None) -> dict:
    """Versions and the scenario's identity, carried by every output."""
    from .fluid import coolprop_version
    import numpy
    import scipy
    out = {"cvsim": __version__, "coolprop": coolprop_version(), "scipy": scipy.__version__,
           "numpy": numpy.__version__, "python": platform.python_version()}
    if scenario is not None:
        out["scenario"] = scenario.source_name
        out["scenario_sha256"] = scenario.sha256
        if scenario.overrides:
            out["overrides"] = {k: str(v) for k, v in scenario.overrides.items()}
    return out


def run_network(network: Network, scenario=None, progress=None) -> Result:
    """Integrate a network; a run that fails part-way returns status 'failed'."""
    from datetime import datetime
    started = datetime.now().astimezone().isoformat(timespec="seconds")
    model = Model(network)
    raw = integrate(model, progress=progress)
    prov = {**provenance(scenario), "run_started": started}
    if network.fluid.model == "mixture":
        from importlib.metadata import version
        prov["thermopack"] = version("thermopack")
    return build_result(model, raw, prov)


def verify(result: Result, scenario=None) -> Result:
    """Rerun ``result``'s network with tolerances 100 times tighter and add the
    comparison of their key figures to ``result.checks`` (a warning if it fails).
    Returns ``result``."""
    import dataclasses

    from .checks import VERIFY_FACTOR, rerun_check
    net = result.network
    tight_run = dataclasses.replace(net.run, rtol=net.run.rtol / VERIFY_FACTOR,
                                    atol_scale=net.run.atol_scale / VERIFY_FACTOR)
    tight = run_network(dataclasses.replace(net, run=tight_run), scenario)
    check = rerun_check(result, tight)
    result.checks.append(check)
    if not check.passed:
        result.warnings.append(f"SELF-CHECK FAILED - do not use these results: {check.text()}")
    return result


def run(scenario, overrides: dict | None = None, progress=None, check: bool = False,
        verify_tolerance: bool = False) -> Result:
    """Run a scenario given as a file path, a loaded Scenario or a Network.

    ``overrides`` maps dotted key paths to values (e.g. ``{"links.vent.diameter":
    "12 mm"}``). With ``check=True`` a failed run raises :class:`SolverError`
    instead of returning a result with status 'failed'. With
    ``verify_tolerance=True`` the run is repeated at tolerances 100 times tighter
    and the largest difference of its key figures becomes one of its self-checks
    (:func:`verify`).
    """
    from .scenario import Scenario, load_scenario
    if isinstance(scenario, (str, Path)):
        scenario = load_scenario(scenario, overrides=overrides)
    elif overrides:
        raise TypeError("overrides apply to scenario files; change a Network with "
                        "dataclasses.replace instead")
    if isinstance(scenario, Scenario):
        result = run_network(scenario.network, scenario, progress)
    elif isinstance(scenario, Network):
        result = run_network(scenario, None, progress)
    else:
        raise TypeError(f"cannot run a {type(scenario).__name__}: give a path, a Scenario "
                        "or a Network")
    if verify_tolerance and result.ok:
        verify(result, scenario if isinstance(scenario, Scenario) else None)
    if check and not result.ok:
        raise SolverError(result.message)
    return result
