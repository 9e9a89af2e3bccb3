"""Values a command changed after reading the scenario, and the input echo as run.

``cvsim relief`` sizes a valve and runs the scenario again with the API 526 letter it
chose: the run then uses values the file does not hold. Every output of such a run
lists those values as changed (:class:`Change`) and shows the echo of the inputs as
they were simulated (:func:`as_simulated`), so that a report never states a value
that did not run.
"""
from __future__ import annotations

import dataclasses
from dataclasses import dataclass

#: the note every changed echo row starts with
CHANGED = "CHANGED"


@dataclass(frozen=True)
class Change:
    """One value changed by a command.

    key     dotted key path of the scenario (``links.psv.orifice_letter``)
    value   the value simulated: SI number or word
    unit    SI unit of ``value`` (``""`` for words)
    why     who changed it and why, in words (``cvsim relief: the API 526 letter
            that passes the relief load``)
    """

    key: str
    value: object
    unit: str = ""
    why: str = ""

    def used(self) -> str:
        text = f"{self.value:.6g}" if isinstance(self.value, float) else str(self.value)
        return f"{text} {self.unit}".strip() if self.unit else text


def as_simulated(echo, changes) -> list:
    """The echo rows with each changed value put in (its note saying so and what the
    file held); a changed key the echo lacks is added at the end."""
    from .scenario.spec import EchoRow
    by_key = {c.key: c for c in changes}
    out = []
    for row in echo:
        c = by_key.pop(row.key, None)
        if c is None:
            out.append(row)
            continue
        note = f"{CHANGED} by {c.why} (was {row.used or row.given})"
        out.append(dataclasses.replace(row, value=c.value, unit=c.unit, note=note))
    for c in by_key.values():
        out.append(EchoRow(c.key, "(not in the file)", c.value, c.unit,
                           f"{CHANGED} by {c.why}"))
    return out


def changed(row) -> bool:
    """True for an echo row whose value a command changed."""
    return str(getattr(row, "note", "")).startswith(CHANGED)


__all__ = ["CHANGED", "Change", "as_simulated", "changed"]
