"""The cyclic garbage collector during a command's short life.

Loading what a run needs (NumPy, SciPy and the property library in the command; matplotlib
in the plotting helpers) creates a few hundred thousand objects that live as long as the
process, and every full collection walks through all of them again: with the collector
as Python sets it, collections took about 0.1 s of the demo run's 1.6 s, most of it in
the plotting helpers while they draw (benchmarks/bench_outputs.py). So a command pauses
the collector while it loads (:func:`pause`), then puts everything loaded out of the
collector's sight and resumes it (:func:`settle`, with ``gc.freeze``): from there on the
collector looks only at what the run itself makes, as before.

Only a pause taken here is ended here: in a program that calls cvsim's functions the
collector stays as that program has set it. A process forked from a paused one (the
plotting helpers) is paused too, and settles on its own.
"""
from __future__ import annotations

import gc

_paused = False


def pause() -> None:
    """Stop automatic collections until :func:`settle` (when they are on)."""
    global _paused
    if gc.isenabled():
        gc.disable()
        _paused = True


def settle() -> None:
    """After loading: freeze what exists (never collected, never walked again) and turn
    automatic collections back on, when :func:`pause` turned them off; else nothing."""
    global _paused
    if _paused:
        gc.freeze()
        gc.enable()
        _paused = False


def paused() -> bool:
    """Whether a pause taken by :func:`pause` is on."""
    return _paused


__all__ = ["pause", "paused", "settle"]
