"""Probability distributions of uncertain inputs (SI values), and their inverse CDF.

An uncertainty study (:mod:`cvsim.study.uncertainty`) draws points in the unit
cube and turns each coordinate into a value of one scenario key through the
inverse cumulative distribution function (the quantile function) of that key's
distribution: ``x = F^-1(u)``. These definitions are frozen and in SI, like
those of :mod:`cvsim.network`; the scenario reader (:mod:`cvsim.scenario.uncertainty`)
makes them from text with units.

Kinds (parameters in the key's SI unit):

    normal      mean m, standard deviation s           f(x) ~ exp(-(x - m)^2 / (2 s^2))
    uniform     lowest a, highest b                    f(x) = 1 / (b - a) on [a, b]
    triangular  lowest a, most likely c, highest b     f rises linearly from a to c, falls to b
    log-normal  median M, factor k: 95 % of values lie between M/k and M*k
                ln x ~ normal(ln M, ln k / 1.959964)

A normal or log-normal distribution may be truncated to ``[lowest, highest]``
(a discharge coefficient cannot exceed 1): the CDF of the truncated
distribution is ``(F(x) - F(a)) / (F(b) - F(a))`` on ``[a, b]``, so that
``x = F^-1(F(a) + u (F(b) - F(a)))`` (Johnson, Kotz & Balakrishnan,
*Continuous Univariate Distributions*, vol. 1, 2nd ed., Wiley 1994, sec. 10.1
for the truncated normal). scipy.stats computes these functions.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

#: z of the two-sided 95 % interval of the standard normal: Phi^-1(0.975)
Z95 = 1.959963984540054
#: kinds of distribution, as written in a scenario
KINDS = ("normal", "uniform", "triangular", "log-normal")
#: points of the unit interval are kept this far from 0 and 1 before the
#: inverse CDF of an unbounded distribution (u = 0 or 1 would give infinity)
U_EDGE = 1e-12


@dataclass(frozen=True)
class Distribution:
    """One input's distribution, in SI.

    kind      one of :data:`KINDS`
    centre    normal: mean; log-normal: median; triangular: most likely value;
              uniform: not used (``nan``)
    spread    normal: standard deviation; log-normal: the 95 % factor k (> 1);
              otherwise ``nan``
    lowest, highest   the ends (uniform, triangular) or the truncation of a
              normal or log-normal (``-inf``/``inf``: none)
    unit      SI unit of the values (for words only)
    """

    kind: str
    centre: float = math.nan
    spread: float = math.nan
    lowest: float = -math.inf
    highest: float = math.inf
    unit: str = ""

    def __post_init__(self):
        if self.kind not in KINDS:
            raise ValueError(f"unknown distribution {self.kind!r}; one of {', '.join(KINDS)}")

    # ----------------------------------------------------------- scipy form
    def frozen(self):
        """The scipy.stats frozen distribution (truncation included)."""
        from scipy import stats
        a, b = self.lowest, self.highest
        if self.kind == "uniform":
            return stats.uniform(loc=a, scale=b - a)
        if self.kind == "triangular":
            return stats.triang(c=(self.centre - a) / (b - a), loc=a, scale=b - a)
        if self.kind == "normal":
            m, s = self.centre, self.spread
            if math.isinf(a) and math.isinf(b):
                return stats.norm(loc=m, scale=s)
            return stats.truncnorm((a - m) / s, (b - m) / s, loc=m, scale=s)
        # log-normal: ln x is normal(ln M, sigma)
        sigma = self.log_sd
        if math.isinf(a) and math.isinf(b) or (a <= 0.0 and math.isinf(b)):
            return stats.lognorm(s=sigma, scale=self.centre)
        return _TruncatedLogNormal(self.centre, sigma, max(a, 0.0), b)

    @property
    def log_sd(self) -> float:
        """Log-normal: standard deviation of ln x, sigma = ln k / 1.959964."""
        return math.log(self.spread) / Z95

    def ppf(self, u):
        """Values at the points ``u`` (0..1) of the cumulative distribution
        (array in, array out; SI)."""
        import numpy as np
        u = np.asarray(u, dtype=float)
        if not (self.kind in ("uniform", "triangular")):
            u = np.clip(u, U_EDGE, 1.0 - U_EDGE)
        return np.asarray(self.frozen().ppf(u), dtype=float)

    def cdf(self, x):
        import numpy as np
        return np.asarray(self.frozen().cdf(np.asarray(x, dtype=float)), dtype=float)

    def mean(self) -> float:
        return float(self.frozen().mean())

    def std(self) -> float:
        return float(self.frozen().std())

    # --------------------------------------------------------------- words
    def describe(self, show=None) -> str:
        """In words, e.g. ``normal: mean 0.84, standard deviation 0.03, at most 1``;
        ``show(x, difference)`` formats a value (default: 6 digits with the SI unit)."""
        if show is None:
            def show(x, difference=False):
                return f"{x:.6g} {self.unit}".strip() if self.unit not in ("", "-") \
                    else f"{x:.6g}"
        if self.kind == "uniform":
            text = f"uniform from {show(self.lowest)} to {show(self.highest)}"
            return text
        if self.kind == "triangular":
            return (f"triangular from {show(self.lowest)} to {show(self.highest)}, most likely "
                    f"{show(self.centre)}")
        if self.kind == "normal":
            text = (f"normal: mean {show(self.centre)}, standard deviation "
                    f"{show(self.spread, True)}")
        else:
            text = (f"log-normal: median {show(self.centre)}, 95 % within a factor "
                    f"{self.spread:.4g}")
        bounds = []
        if math.isfinite(self.lowest):
            bounds.append(f"at least {show(self.lowest)}")
        if math.isfinite(self.highest):
            bounds.append(f"at most {show(self.highest)}")
        if bounds:
            text += ", truncated: " + " and ".join(bounds)
        return text


class _TruncatedLogNormal:
    """A log-normal truncated to [a, b] (a >= 0): the truncated normal of ln x."""

    def __init__(self, median: float, sigma: float, a: float, b: float):
        from scipy import stats
        mu = math.log(median)
        la = (math.log(a) - mu) / sigma if a > 0.0 else -math.inf
        lb = (math.log(b) - mu) / sigma if math.isfinite(b) else math.inf
        self._log = stats.truncnorm(la, lb, loc=mu, scale=sigma)

    def ppf(self, u):
        import numpy as np
        return np.exp(self._log.ppf(u))

    def cdf(self, x):
        import numpy as np
        x = np.asarray(x, dtype=float)
        with np.errstate(divide="ignore"):
            return self._log.cdf(np.log(np.where(x > 0, x, 0.0)))

    def mean(self) -> float:
        from scipy import integrate
        return float(integrate.quad(lambda u: float(self.ppf(u)), 0.0, 1.0, limit=200)[0])

    def std(self) -> float:
        from scipy import integrate
        m = self.mean()
        v = integrate.quad(lambda u: (float(self.ppf(u)) - m) ** 2, 0.0, 1.0, limit=200)[0]
        return math.sqrt(max(v, 0.0))


@dataclass(frozen=True)
class UncertainInput:
    """One uncertain scenario key.

    key           its key path (``links.vent.discharge_coefficient``)
    distribution  its :class:`Distribution` (SI)
    dimension     its kind of quantity (a :data:`cvsim.units.DIMENSIONS` key)
    nominal       [SI] the value the file states
    given         that value as written
    """

    key: str
    distribution: Distribution
    dimension: str
    nominal: float
    given: str = ""


@dataclass(frozen=True)
class UncertaintySpec:
    """An uncertainty study as the scenario states it (read by
    :mod:`cvsim.scenario.uncertainty`).

    inputs        the uncertain keys (:class:`UncertainInput`)
    correlations  (key, key, rank correlation) pairs; other pairs are independent
    cases         number of simulations asked for
    sampling      ``latin-hypercube``, ``sobol`` or ``random``
    seed          seed of the random numbers (``None``: draw one and record it)
    percentiles   percentiles reported, e.g. (5, 50, 95)
    confidence    level of the confidence intervals, e.g. 0.95
    sensitivity   ``ranks`` or ``variance``
    """

    inputs: tuple
    correlations: tuple = ()
    cases: int = 200
    sampling: str = "latin-hypercube"
    seed: int | None = None
    percentiles: tuple = (5.0, 50.0, 95.0)
    confidence: float = 0.95
    sensitivity: str = "ranks"

    @property
    def keys(self) -> list[str]:
        return [i.key for i in self.inputs]


def normal_correlation(rank: float) -> float:
    """The correlation of a bivariate normal whose rank (Spearman) correlation is ``rank``.

    rho = 2 sin(pi rho_S / 6)

    Used to induce a rank correlation between two inputs through a Gaussian
    copula. Parameters: rank [-] in (-1, 1). Valid for the bivariate normal,
    hence for any pair of continuous marginals joined by a Gaussian copula
    (ranks do not change under the monotone marginal transforms).
    Reference: K. Pearson, *On further methods of determining correlation*,
    Drapers' Company Research Memoirs, Biometric Series IV, 1907; W. Kruskal,
    "Ordinal measures of association", J. Amer. Statist. Assoc. 53 (1958) 814-861,
    eq. for the normal case.

    >>> round(normal_correlation(0.5), 6)
    0.517638
    """
    return 2.0 * math.sin(math.pi * rank / 6.0)


__all__ = ["Distribution", "KINDS", "UncertainInput", "UncertaintySpec", "Z95",
           "normal_correlation"]
