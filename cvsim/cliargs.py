"""Command-line values shared by every command (``cvsim.cli`` and ``cvsim.study.cli``):
kept apart so that the two command modules import it and not each other."""
from __future__ import annotations


def parse_overrides(items: list[str]) -> dict:
    """``--set KEY=VALUE`` items -> {key path: value as given}; a wrong item is a
    :class:`~cvsim.errors.ScenarioError` naming it."""
    from .errors import Problem, ScenarioError
    out = {}
    problems = []
    for item in items:
        if "=" not in item:
            problems.append(Problem(item, "write --set KEY=VALUE, e.g. "
                                    "--set links.vent.diameter='12 mm'"))
            continue
        k, v = item.split("=", 1)
        out[k.strip()] = v.strip()
    if problems:
        raise ScenarioError(problems, "--set")
    return out


__all__ = ["parse_overrides"]
