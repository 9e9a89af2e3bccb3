"""One family of errors for everything a user can cause.

Every error cvsim raises on purpose derives from :class:`CvsimError`. The command
line catches exactly this family and prints its message (no traceback); anything
else is a bug in cvsim and is allowed to show its traceback.

Errors carry plain fields (strings and numbers) so that they pickle and cross
process boundaries in sweeps unchanged.
"""
from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Problem:
    """One problem found in a scenario file.

    ``key`` is the dotted key path (``links.vent.diameter``), ``line`` the
    1-based line in the file where known, ``message`` says what is wrong and
    what to do.
    """

    key: str
    message: str
    line: int | None = None

    def __str__(self) -> str:
        where = f"{self.key}" if self.key else "(file)"
        if self.line is not None:
            where += f" (line {self.line})"
        return f"{where}: {self.message}"


class CvsimError(Exception):
    """Root of the errors a user can cause; the message is meant to be read."""


class ScenarioError(CvsimError, ValueError):
    """A scenario file has one or more problems; all are listed at once."""

    def __init__(self, problems: list[Problem] | tuple[Problem, ...], source: str = ""):
        self.problems = tuple(problems)
        self.source = source
        super().__init__(self.problems, source)

    def __str__(self) -> str:
        head = f"{self.source}: " if self.source else ""
        n = len(self.problems)
        lines = [f"{head}{n} problem{'s' if n != 1 else ''} in the scenario:"]
        lines += [f"  - {p}" for p in self.problems]
        return "\n".join(lines)


class FluidError(CvsimError, ValueError):
    """Unknown fluid name, or a fluid the chosen property model cannot handle."""


class StateError(CvsimError, ValueError):
    """A thermodynamic state outside the range of the equation of state.

    ``where`` names the vessel or link, ``time`` is the simulated time [s] when
    it is known.
    """

    def __init__(self, message: str, where: str = "", time: float | None = None):
        self.where = where
        self.time = time
        self.detail = message
        super().__init__(message, where, time)

    def __str__(self) -> str:
        parts = []
        if self.where:
            parts.append(self.where)
        if self.time is not None:
            parts.append(f"t = {self.time:.6g} s")
        prefix = (", ".join(parts) + ": ") if parts else ""
        return prefix + self.detail


class SolverError(CvsimError, RuntimeError):
    """The integrator could not proceed; the message says where and why."""


class OutputError(CvsimError, OSError):
    """Results could not be written where asked."""


class StudyError(CvsimError, ValueError):
    """A sweep or a target search is set up wrongly (an option such as ``--vary``,
    ``--meet`` or ``--plot``); the message names the option and what to write."""


class ClusterError(CvsimError, RuntimeError):
    """Parallel workers could not be used: Dask not installed, scheduler not
    reachable, or workers running another cvsim version."""


class Terminated(KeyboardInterrupt):
    """SIGTERM, which the command line handles as Ctrl-C: work stops, nothing
    half-written stays (a stopped sweep keeps its finished cases)."""
