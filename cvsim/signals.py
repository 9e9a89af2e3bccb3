"""Quantities that are constant or follow a table in time.

A :class:`Signal` is called with the time [s] and returns an SI value. Its
``breakpoints`` are the times where the value or its slope jumps; the solver
integrates piecewise between them so that no step straddles a jump.

Tables are piecewise linear between their points and hold their end values
outside. A step is written as two points at the same time: the value before
and the value after, e.g. ``[(0, 1.0), (60, 1.0), (60, 0.0)]``.
"""
from __future__ import annotations

import bisect
from dataclasses import dataclass


@dataclass(frozen=True)
class Constant:
    """A value that does not change with time."""

    value: float

    def __call__(self, t: float) -> float:
        return self.value

    @property
    def breakpoints(self) -> tuple[float, ...]:
        return ()

    def linear_on(self, t0: float, t1: float) -> tuple[float, float]:
        """(value at t0, slope) of the piece that covers the segment [t0, t1]."""
        return (self.value, 0.0)

    @property
    def is_constant(self) -> bool:
        return True

    def extremes(self) -> tuple[float, float]:
        return (self.value, self.value)


@dataclass(frozen=True)
class Table:
    """Piecewise-linear table ``value(t)``; two points at one time make a step.

    ``times`` must be non-decreasing; at most two points may share a time. At a
    step time the value *after* the step applies (right-continuous), which is
    what an integration segment starting at that time needs.
    """

    times: tuple[float, ...]
    values: tuple[float, ...]

    def __post_init__(self):
        if len(self.times) != len(self.values) or not self.times:
            raise ValueError("a table needs the same, non-zero number of times and values")
        for a, b in zip(self.times, self.times[1:]):
            if b < a:
                raise ValueError("table times must not decrease")
        for a, b, c in zip(self.times, self.times[1:], self.times[2:]):
            if a == b == c:
                raise ValueError("at most two table points may share a time (a step)")

    def __call__(self, t: float) -> float:
        ts = self.times
        if t <= ts[0]:
            # before the table (or at its first time): first value, but take the
            # value after a step placed exactly at the first time
            i = bisect.bisect_right(ts, t) - 1
            return self.values[max(i, 0)]
        if t >= ts[-1]:
            return self.values[-1]
        i = bisect.bisect_right(ts, t) - 1  # ts[i] <= t < ts[i+1]
        t0, t1 = ts[i], ts[i + 1]
        v0, v1 = self.values[i], self.values[i + 1]
        return v0 + (v1 - v0) * (t - t0) / (t1 - t0)

    def linear_on(self, t0: float, t1: float) -> tuple[float, float]:
        """(value at t0, slope) of the one linear piece that covers the segment
        [t0, t1], which must lie between two consecutive breakpoints. Used by
        the solver so that the last point of a segment that ends at a step takes
        the value before the step."""
        mid = 0.5 * (t0 + t1) if t1 < float("inf") else t0 + 1.0
        ts, vs = self.times, self.values
        i = bisect.bisect_right(ts, mid) - 1
        if i < 0:
            return (vs[0], 0.0)
        if i >= len(ts) - 1:
            return (vs[-1], 0.0)
        slope = (vs[i + 1] - vs[i]) / (ts[i + 1] - ts[i])
        return (vs[i] + slope * (t0 - ts[i]), slope)

    @property
    def breakpoints(self) -> tuple[float, ...]:
        return tuple(sorted(set(self.times)))

    @property
    def is_constant(self) -> bool:
        return min(self.values) == max(self.values)

    def extremes(self) -> tuple[float, float]:
        return (min(self.values), max(self.values))


Signal = Constant | Table
