"""The contract every flow device keeps.

A device sits on a link between a *source* node and a *target* node (the names
the user wrote as ``from`` and ``to``). Given the states that would leave each
node (for a vessel: its gas, or its vapour when two phases are present; for a
reservoir: its imposed state), the time and the segment it is evaluated in,
the device returns a :class:`Flow`:

* ``mdot`` [kg/s], positive from source to target, negative for reverse flow;
* ``h_from`` [J/kg], the specific stagnation enthalpy the stream carries out of
  the node it leaves (the source when ``mdot > 0``, the target otherwise);
* ``h_to`` [J/kg], the specific stagnation enthalpy it brings into the node it
  enters. It differs from ``h_from`` only for devices that add or remove
  energy (a compressor with an aftercooler delivering at a stated temperature).

Devices are smooth within an integration segment. Anything that jumps (a valve
opening at a time, a flow that stops at a pressure) is either a breakpoint in
time (:meth:`Device.breakpoints`) or a discrete switch handled by solver events
(:meth:`Device.switches`), so that no step straddles a jump.

A device that moves (a valve with a travel, a relief valve's lift, a disc or
check valve open or shut) sets ``has_opening`` and returns its opening, 0..1,
from :meth:`Device.opening`; the histories then hold a ``<link>.opening``
column. :meth:`Device.report` turns the device's switches of a whole run into
summary figures and warnings (a relief valve counts its cycles).
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, NamedTuple


class Flow(NamedTuple):
    mdot: float
    h_from: float
    h_to: float
    choked: bool = False


NO_FLOW = Flow(0.0, 0.0, 0.0, False)


@dataclass(frozen=True)
class Switch:
    """A discrete change watched by a solver event.

    ``key`` names the discrete state it changes; ``function(t, snapshot)``
    crosses zero where the change happens; ``direction`` is that of scipy's
    events (-1: falling through zero, +1: rising); ``new_value`` is the value
    of the discrete state after the crossing, or a function ``(t, y, segment)
    -> (value, text)`` that decides it from the state at the event (the text is
    appended to the log entry); ``describe`` says what happened, in words, for
    the event log.
    """

    key: str
    function: Callable
    direction: int
    new_value: object
    describe: str


class Device:
    """Base class of flow-device run-time objects (see the module docstring).

    Built once per run from the link's frozen definition; ``index`` is the
    link's position in the network, ``source``/``target`` the node indices.
    """

    #: kind name shown in outputs
    kind = "device"
    #: True if the device has an opening worth recording (``<link>.opening``)
    has_opening = False

    def __init__(self, definition, fluid, index: int, source: int, target: int):
        self.d = definition
        self.fluid = fluid
        self.index = index
        self.source = source
        self.target = target

    def key(self, name: str) -> str:
        """Name of one of this device's discrete states in the run's discrete map."""
        return f"link{self.index}.{name}"

    def breakpoints(self) -> tuple[float, ...]:
        return ()

    def schedule(self) -> list[tuple[float, str]]:
        """Scheduled changes, (time [s], what happens), for the event log."""
        return []

    def initial_discrete(self, snapshot) -> dict:
        """Discrete states this device keeps (name -> initial value) at the start."""
        return {}

    def switches(self, discrete: dict) -> list[Switch]:
        """Events that may change this device's discrete states from ``discrete``."""
        return []

    def opening(self, t: float, snapshot, segment) -> float:
        """Opening of the device, 0 (shut) to 1 (fully open), at ``t``."""
        return 1.0

    def report(self, initial: dict, switches: list, t_end: float) -> tuple[dict, list[str]]:
        """Summary figures (plain data; ``notes``: sentences for the text summary)
        and warnings, from this device's discrete states at the start
        (``initial``, name -> value) and its switches over the whole run, each
        ``(time [s], key, new value)``."""
        return {}, []

    def bind(self, model) -> None:
        """Called once by the model after every device is built (a device that needs
        to know the nodes it joins, e.g. their volumes, reads them here)."""

    def review(self, result, name: str) -> tuple[dict, list[str]]:
        """Summary figures and warnings from the recorded histories of the whole run
        (``result``: the :class:`cvsim.result.Result`; ``name``: the link's name)."""
        return {}, []

    @classmethod
    def assumptions(cls, definitions: list) -> list[str]:
        """Model choices of this device kind in words, for the assumption register."""
        return []

    def flow(self, t: float, a, b, segment) -> Flow:  # pragma: no cover - abstract
        raise NotImplementedError
