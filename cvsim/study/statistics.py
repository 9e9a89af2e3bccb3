"""How sure: percentiles with confidence intervals, and probabilities of crossing.

Pure functions on arrays of results (SI), no I/O.

* Percentile estimate: linear interpolation between order statistics, the
  definition 7 of R. J. Hyndman & Y. Fan, "Sample quantiles in statistical
  packages", The American Statistician 50 (1996) 361-365 (numpy's default):
  with the n values sorted, h = (n - 1) p, x_p = x_(floor h) + (h - floor h)
  (x_(floor h + 1) - x_(floor h)) (0-based). A value of +inf (a target not
  reached in the run) sorts last; a percentile that needs it is +inf.

* Confidence interval of a percentile, distribution-free, from order
  statistics: the number Y of values below the true p-quantile is binomial
  (n, p), so [x_(r), x_(s)] (1-based) covers it with probability
  B(s - 1) - B(r - 1), B the binomial CDF. r is the largest with
  B(r - 1) <= alpha/2, s the smallest with B(s - 1) >= 1 - alpha/2
  (W. J. Conover, *Practical Nonparametric Statistics*, 3rd ed., Wiley 1999,
  sec. 3.2, "confidence interval for a quantile"; H. A. David & H. N. Nagaraja,
  *Order Statistics*, 3rd ed., Wiley 2003, sec. 7.1). When r < 1 (or s > n)
  too few cases were run for that end: it is left open (``None``).
  The interval assumes independent cases; for a Latin hypercube or Sobol'
  design, whose estimates vary less than those of independent points, it is
  conservative.

* Probability of crossing a limit, k cases out of n: k/n, with the exact
  (Clopper-Pearson) interval lo = Beta^-1(alpha/2; k, n - k + 1),
  hi = Beta^-1(1 - alpha/2; k + 1, n - k) (C. J. Clopper & E. S. Pearson, "The use
  of confidence or fiducial limits illustrated in the case of the binomial",
  Biometrika 26 (1934) 404-413). With k = 0 the upper end is
  1 - (alpha/2)^(1/n): no crossing in 100 cases still allows 3.6 % at 95 %.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np


def percentile(sorted_values, p: float) -> float:
    """The p-th percentile (p in %, 0..100) of values sorted ascending
    (definition 7 of Hyndman & Fan 1996; +inf allowed at the top)."""
    x = np.asarray(sorted_values, dtype=float)
    n = x.size
    if n == 0:
        return math.nan
    h = (n - 1) * p / 100.0
    lo = int(math.floor(h))
    hi = min(lo + 1, n - 1)
    w = h - lo
    if w == 0.0 or hi == lo:
        return float(x[lo])
    if math.isinf(x[hi]) or math.isinf(x[lo]):
        return float(x[hi]) if math.isinf(x[hi]) else float(x[lo])
    return float(x[lo] + w * (x[hi] - x[lo]))


def order_ranks(n: int, p: float, confidence: float) -> tuple[int, int, float]:
    """(r, s, coverage): the 1-based ranks of the order statistics that bound
    the p-th percentile (p in %) with at least ``confidence`` (see the module
    notes); r = 0 or s = n + 1 where that end cannot be bounded with n values."""
    from scipy.stats import binom
    alpha = 1.0 - confidence
    cdf = binom.cdf(np.arange(n + 1), n, p / 100.0)  # cdf[k] = P(Y <= k)
    below = np.nonzero(cdf <= alpha / 2.0)[0]
    r = int(below[-1]) + 1 if below.size else 0
    above = np.nonzero(cdf >= 1.0 - alpha / 2.0)[0]
    s = int(above[0]) + 1 if above.size else n + 1
    s = min(s, n + 1)
    upper = cdf[s - 1] if s <= n else 1.0
    lower = cdf[r - 1] if r >= 1 else 0.0
    return r, s, float(upper - lower)


def percentile_interval(sorted_values, p: float, confidence: float
                        ) -> tuple[float | None, float | None, float]:
    """(low, high, coverage) of the p-th percentile from order statistics;
    ``None`` for an end that the number of values cannot bound."""
    x = np.asarray(sorted_values, dtype=float)
    n = x.size
    if n == 0:
        return None, None, 0.0
    r, s, coverage = order_ranks(n, p, confidence)
    low = float(x[r - 1]) if r >= 1 else None
    high = float(x[s - 1]) if s <= n else None
    return low, high, coverage


def proportion_interval(k: int, n: int, confidence: float) -> tuple[float, float]:
    """Exact (Clopper-Pearson) interval of a probability from k of n cases."""
    from scipy.stats import beta
    if n <= 0:
        return 0.0, 1.0
    alpha = 1.0 - confidence
    lo = 0.0 if k == 0 else float(beta.ppf(alpha / 2.0, k, n - k + 1))
    hi = 1.0 if k == n else float(beta.ppf(1.0 - alpha / 2.0, k + 1, n - k))
    return lo, hi


@dataclass(frozen=True)
class Spread:
    """How one outcome spreads over the cases (SI).

    name, unit, text  the outcome (as in the sweep table)
    count       cases with a value (+inf counts: a target not reached)
    missing     completed cases without a value
    mean, sd    of the finite values (``nan`` if fewer than 2)
    lowest, highest   the extremes seen
    percentiles (p, value, low, high, coverage) for each percentile asked
    not_reached cases whose value is +inf (a time to a target the run did not reach)
    difference  the outcome is a difference (a margin): shown in K or bar
    """

    name: str
    unit: str
    text: str
    count: int
    missing: int
    mean: float
    sd: float
    lowest: float
    highest: float
    percentiles: tuple
    not_reached: int = 0
    difference: bool = False

    def at(self, p: float) -> tuple:
        """(value, low, high, coverage) of the p-th percentile."""
        for q, *rest in self.percentiles:
            if math.isclose(q, p):
                return tuple(rest)
        raise KeyError(f"percentile {p:g} was not computed; asked: "
                       f"{', '.join(f'{q:g}' for q, *_ in self.percentiles)}")


def spread(name: str, unit: str, text: str, values, percentiles, confidence: float,
           missing: int = 0, difference: bool = False) -> Spread:
    """The :class:`Spread` of ``values`` (NaN left out and counted as missing)."""
    x = np.asarray([v for v in values], dtype=float)
    nan = np.isnan(x)
    missing += int(nan.sum())
    x = np.sort(x[~nan])
    finite = x[np.isfinite(x)]
    pct = []
    for p in percentiles:
        lo, hi, cov = percentile_interval(x, p, confidence)
        pct.append((float(p), percentile(x, p), lo, hi, cov))
    return Spread(name, unit, text, int(x.size), missing,
                  float(finite.mean()) if finite.size else math.nan,
                  float(finite.std(ddof=1)) if finite.size > 1 else math.nan,
                  float(x[0]) if x.size else math.nan, float(x[-1]) if x.size else math.nan,
                  tuple(pct), int(np.isinf(x).sum()), difference)


@dataclass(frozen=True)
class Chance:
    """The probability that a design limit is crossed.

    name      the limit check (``receiver.limit.min_metal_temperature``) or
              ``any design limit``
    text      in words
    crossed   cases that crossed it; ``cases``: cases with a verdict
    probability, low, high   crossed/cases and its exact interval
    failed    failed cases (no verdict); ``if_failed_crossed``: the probability
              if every failed case had crossed it (an upper bound)
    """

    name: str
    text: str
    crossed: int
    cases: int
    probability: float
    low: float
    high: float
    failed: int = 0
    if_failed_crossed: float = math.nan


def chance(name: str, text: str, crossed: int, cases: int, confidence: float,
           failed: int = 0) -> Chance:
    lo, hi = proportion_interval(crossed, cases, confidence)
    p = crossed / cases if cases else math.nan
    worst = (crossed + failed) / (cases + failed) if cases + failed else math.nan
    return Chance(name, text, crossed, cases, p, lo, hi, failed, worst)


def running_percentiles(values, p: float, confidence: float, counts) -> list[tuple]:
    """(n, value, low, high) of the p-th percentile of the first n values, for
    each n in ``counts`` (the convergence plot); NaN values are left out."""
    x = np.asarray(values, dtype=float)
    out = []
    for n in counts:
        head = np.sort(x[:n][~np.isnan(x[:n])])
        if head.size == 0:
            continue
        lo, hi, _ = percentile_interval(head, p, confidence)
        out.append((int(n), percentile(head, p), lo, hi))
    return out


__all__ = ["Chance", "Spread", "chance", "order_ranks", "percentile", "percentile_interval",
           "proportion_interval", "running_percentiles", "spread"]
