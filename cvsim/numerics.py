"""Small numerical tools shared by the physics modules (no physics here).

:func:`root_on_bracket`: the root of a continuous function on a bracket, by false
position with the Illinois modification (Dowell & Jarratt, "A modified regula falsi
method for computing the root of an equation", BIT 11 (1971) 168-174), stopped on
the residual.
"""
from __future__ import annotations


def root_on_bracket(fn, lo: float, hi: float, f_lo: float, f_hi: float, tol: float,
                    max_iter: int = 200) -> float:
    """Root of a continuous function on a bracket [lo, hi] with f_lo <= 0 <= f_hi
    (``f_lo = fn(lo)``, ``f_hi = fn(hi)``), stopped on the residual |fn(x)| <= tol;
    when the bracket shrinks to machine precision first, its last point (the residual
    is then the round-off of fn).

    >>> round(root_on_bracket(lambda x: x * x - 2.0, 1.0, 2.0, -1.0, 2.0, 1e-14), 12)
    1.414213562373
    """
    if abs(f_lo) <= tol:
        return lo
    if abs(f_hi) <= tol:
        return hi
    last = 0
    x = 0.5 * (lo + hi)
    for _ in range(max_iter):
        x = lo - f_lo * (hi - lo) / (f_hi - f_lo)
        if not (lo < x < hi):
            x = 0.5 * (lo + hi)
        f = fn(x)
        if abs(f) <= tol:
            return x
        if f > 0.0:
            hi, f_hi = x, f
            if last == 1:
                f_lo *= 0.5
            last = 1
        else:
            lo, f_lo = x, f
            if last == -1:
                f_hi *= 0.5
            last = -1
        if hi - lo <= 4e-16 * max(abs(hi), abs(lo), 1.0):
            break
    return x


__all__ = ["root_on_bracket"]
