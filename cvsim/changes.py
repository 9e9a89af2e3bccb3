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
    derived follows from another change of the same command (a letter's area): to
            repeat the run, give only the others with ``--set``
    """

    key: str
    value: object
    unit: str = ""
    why: str = ""
    derived: bool = False

    def used(self) -> str:
        """The value simulated in engineering units (``324.515 mm2``, ``G``)."""
        from .display import engineering
        return engineering(self.value, self.unit)

    def as_set(self) -> str:
        """The value as ``--set`` takes it: a word as it is, a number with its SI unit."""
        text = f"{self.value:.10g}" if isinstance(self.value, float) else str(self.value)
        return f"{text} {self.unit}".strip() if self.unit else text


def before(row) -> str:
    """What an echo row held before a command changed it, in engineering units
    (``70.9676 mm2``, ``D``)."""
    from .display import engineering
    if isinstance(row.value, (int, float)) and not isinstance(row.value, bool):
        return engineering(row.value, row.unit)
    return row.used or row.given


def as_simulated(echo, changes, overrides=None) -> list:
    """The echo rows with each changed value put in (its note saying so and what the
    run would have used without the command, in engineering units; ``overrides``,
    the scenario's ``--set`` values, tell where that came from the command line); a
    changed key the echo lacks is added at the end."""
    from .scenario.spec import EchoRow
    by_key = {c.key: c for c in changes}
    overrides = overrides or {}
    out = []
    for row in echo:
        c = by_key.pop(row.key, None)
        if c is None:
            out.append(row)
            continue
        was = before(row) + (", given with --set" if row.key in overrides else "")
        note = f"{CHANGED} by {c.why} (was {was})"
        out.append(dataclasses.replace(row, value=c.value, unit=c.unit, note=note))
    for c in by_key.values():
        out.append(EchoRow(c.key, "(not in the file)", c.value, c.unit,
                           f"{CHANGED} by {c.why}"))
    return out


def changed(row) -> bool:
    """True for an echo row whose value a command changed."""
    return str(getattr(row, "note", "")).startswith(CHANGED)


__all__ = ["CHANGED", "Change", "as_simulated", "before", "changed"]
