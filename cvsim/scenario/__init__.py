"""Scenario files: YAML with units as text -> a checked :class:`~cvsim.network.Network` in SI.

>>> from cvsim.scenario import load_scenario
>>> scenario = load_scenario("scenarios/receiver.yaml")        # doctest: +SKIP
>>> scenario.network.vessels[0].initial.pressure                # doctest: +SKIP
15101325.0

Problems in a file are raised together as one
:class:`~cvsim.errors.ScenarioError`. The format is documented in
``docs/scenario-format.md``, rendered from the schema by
:func:`cvsim.scenario.schema.format_reference`.
"""
from .build import (Scenario, build_network, load_scenario, load_scenario_bytes,
                    load_scenario_text)
from .schema import format_reference
from .spec import EchoRow

__all__ = ["EchoRow", "Scenario", "build_network", "format_reference", "load_scenario",
           "load_scenario_bytes", "load_scenario_text"]
