"""The recorded histories of a run and how to read them.

:class:`Histories` is the part of a :class:`~cvsim.result.Result` that plots and
tables read: the network, the status, the columns and their values at the recorded
points and at every solver step, the events. It needs nothing but numpy, so that a
process that only draws (:mod:`cvsim.painters`) loads neither the solver nor the
property library when it receives one.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .network import Network

#: values within this fraction of a column's extreme count as reaching it (for the time
#: of the extreme): the accuracy a solver event places a switch to, well above round-off
EXTREME_RTOL = 1e-6


@dataclass
class Histories:
    """Recorded histories (SI) of a run; ``result["receiver.pressure"]`` is one column."""

    network: Network
    status: str
    message: str
    columns: list            # (name, SI unit, kind)
    data: np.ndarray         # recorded rows x columns (SI)
    fine_data: np.ndarray    # every accepted step x columns (SI)
    events: list             # (time [s], text)

    @property
    def ok(self) -> bool:
        return self.status != "failed"

    @property
    def time(self) -> np.ndarray:
        return self.data[:, 0]

    def names(self) -> list[str]:
        return [c[0] for c in self.columns]

    def unit(self, name: str) -> str:
        return self.columns[self._col(name)][1]

    def _col(self, name: str) -> int:
        for i, c in enumerate(self.columns):
            if c[0] == name:
                return i
        raise KeyError(f"no column '{name}'; columns are: {', '.join(self.names())}")

    def __getitem__(self, name: str) -> np.ndarray:
        return self.data[:, self._col(name)]

    def fine(self, name: str) -> np.ndarray:
        """History of one column at every accepted solver step (and recorded points)."""
        return self._all()[:, self._col(name)]

    def _all(self) -> np.ndarray:
        if self.fine_data.size == 0:
            return self.data
        both = np.vstack([self.data, self.fine_data])
        return both[np.argsort(both[:, 0], kind="stable")]

    def vessel_names(self) -> list[str]:
        return [v.name for v in self.network.vessels]

    def link_names(self) -> list[str]:
        return [k.name for k in self.network.links]

    def extreme(self, name: str, kind: str) -> tuple[float, float]:
        """(value, time) of the maximum (``kind='max'``) or minimum of a column,
        over recorded points and every solver step. The time is the first the column
        comes within :data:`EXTREME_RTOL` of the extreme: a relief valve that pops at
        the same pressure again and again peaks at its first pop."""
        allrows = self._all()
        col = allrows[:, self._col(name)]
        if np.all(np.isnan(col)):
            return (float("nan"), float("nan"))
        i = int(np.nanargmax(col) if kind == "max" else np.nanargmin(col))
        v = float(col[i])
        tol = EXTREME_RTOL * abs(v)
        near = np.nonzero((col >= v - tol) if kind == "max" else (col <= v + tol))[0]
        return v, float(allrows[int(near[0]) if near.size else i, 0])



__all__ = ["EXTREME_RTOL", "Histories"]
