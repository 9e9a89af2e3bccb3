"""Which input drives an outcome: rank correlations and variance-based indices.

Pure functions on arrays (inputs in columns, one outcome), no I/O.

* Spearman rank correlation: the correlation of the ranks of an input and of
  the outcome (ties share their mean rank). Monotone relations give values
  near +1 or -1, whatever their shape. C. Spearman, "The proof and measurement
  of association between two things", Amer. J. Psychol. 15 (1904) 72-101.

* Partial rank correlation (PRCC): the correlation of the ranks of input i
  and of the outcome once the linear effect of the ranks of the other inputs
  has been taken out of both (residuals of least-squares fits with a
  constant). It tells an input's own effect when inputs are correlated or
  several act at once. J. C. Helton & F. J. Davis, "Latin hypercube sampling and
  the propagation of uncertainty in analyses of complex systems", Reliability
  Engineering and System Safety 81 (2003) 23-69, sec. 6.4; S. Marino,
  I. B. Hogue, C. J. Ray, D. E. Kirschner, "A methodology for performing global
  uncertainty and sensitivity analysis in systems biology", J. Theor. Biol.
  254 (2008) 178-196, sec. 2.4.

* Sobol' indices (independent inputs only). With f_A, f_B and f_ABi the
  outcome at the rows of A, B and A_B^(i) (:mod:`cvsim.study.sampling`) and V
  the variance of the outcome over A and B together:

      first order  S_i  = (1/N) sum_j f_B,j (f_ABi,j - f_A,j) / V
                   (Saltelli et al. 2010, Table 2, estimator (b); the outcomes
                   centred on their mean over A and B first, which leaves the
                   expectation as it is and lowers the error)
      total        ST_i = (1/2N) sum_j (f_A,j - f_ABi,j)^2 / V
                   (Jansen 1999; Saltelli et al. 2010, Table 2, estimator (f))

  S_i is the share of the variance input i explains alone; ST_i the share it
  has a hand in, interactions included (I. M. Sobol', "Global sensitivity
  indices for nonlinear mathematical models and their Monte Carlo estimates",
  Math. Comput. Simul. 55 (2001) 271-280; M. J. W. Jansen, "Analysis of variance
  designs for model output", Comput. Phys. Commun. 117 (1999) 35-43;
  A. Saltelli et al., Comput. Phys. Commun. 181 (2010) 259-270). Their
  confidence intervals come from a bootstrap over the base points j (percentile
  interval, B. Efron & R. J. Tibshirani, *An Introduction to the Bootstrap*,
  Chapman & Hall 1993, ch. 13), with a fixed seed so that they repeat.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

#: bootstrap resamples of the Sobol' indices' intervals
BOOTSTRAP = 1000
#: seed of the bootstrap (the intervals repeat exactly)
BOOTSTRAP_SEED = 20_100_259


def _ranks(x: np.ndarray) -> np.ndarray:
    from scipy.stats import rankdata
    return rankdata(x, axis=0)


def spearman(x, y) -> float:
    """Spearman's rank correlation of two samples (``nan`` if one is constant)."""
    rx, ry = _ranks(np.asarray(x, dtype=float)), _ranks(np.asarray(y, dtype=float))
    return _pearson(rx, ry)


def _pearson(a: np.ndarray, b: np.ndarray) -> float:
    a = a - a.mean()
    b = b - b.mean()
    den = math.sqrt(float(a @ a) * float(b @ b))
    return float(a @ b) / den if den > 0.0 else math.nan


def rank_correlations(inputs, outcome) -> np.ndarray:
    """Spearman correlation of each input column with the outcome."""
    x = np.asarray(inputs, dtype=float)
    return np.array([spearman(x[:, i], outcome) for i in range(x.shape[1])])


def partial_rank_correlations(inputs, outcome) -> np.ndarray:
    """PRCC of each input column with the outcome (see the module notes);
    ``nan`` where too few cases (n <= d + 1) or a constant column."""
    x = _ranks(np.asarray(inputs, dtype=float))
    y = _ranks(np.asarray(outcome, dtype=float))
    n, d = x.shape
    out = np.full(d, math.nan)
    if n <= d + 1:
        return out
    for i in range(d):
        others = np.column_stack([np.ones(n), np.delete(x, i, axis=1)])
        rx = x[:, i] - others @ np.linalg.lstsq(others, x[:, i], rcond=None)[0]
        ry = y - others @ np.linalg.lstsq(others, y, rcond=None)[0]
        out[i] = _pearson(rx, ry)
    return out


@dataclass(frozen=True)
class SobolIndices:
    """First-order and total indices of each input, with bootstrap intervals.

    first, total            arrays (d,)
    first_low, first_high, total_low, total_high   interval ends (d,)
    base                    base points used (rows with every value present)
    variance                variance of the outcome over A and B
    """

    first: np.ndarray
    total: np.ndarray
    first_low: np.ndarray
    first_high: np.ndarray
    total_low: np.ndarray
    total_high: np.ndarray
    base: int
    variance: float


def _estimate(fa, fb, fab):
    """(S, ST) arrays from f_A (N,), f_B (N,), f_AB (d, N)."""
    both = np.concatenate([fa, fb])
    v = np.var(both)
    if not v > 0.0:
        nan = np.full(fab.shape[0], math.nan)
        return nan, nan
    m = both.mean()  # centred: the same expectation, a smaller error
    fa, fb, fab = fa - m, fb - m, fab - m
    first = np.mean(fb * (fab - fa), axis=1) / v
    total = 0.5 * np.mean((fa - fab) ** 2, axis=1) / v
    return first, total


def sobol_indices(fa, fb, fab, confidence: float = 0.95,
                  resamples: int = BOOTSTRAP) -> SobolIndices:
    """Sobol' first-order and total indices from the outcomes of a Saltelli
    design: ``fa``, ``fb`` (N,) and ``fab`` (d, N); base points with a missing
    value (NaN or inf) in any of their d + 2 cases are left out."""
    fa, fb = np.asarray(fa, dtype=float), np.asarray(fb, dtype=float)
    fab = np.atleast_2d(np.asarray(fab, dtype=float))
    keep = np.isfinite(fa) & np.isfinite(fb) & np.all(np.isfinite(fab), axis=0)
    fa, fb, fab = fa[keep], fb[keep], fab[:, keep]
    n = fa.size
    first, total = _estimate(fa, fb, fab)
    d = fab.shape[0]
    if n < 2 or not np.all(np.isfinite(first)):
        nan = np.full(d, math.nan)
        return SobolIndices(first, total, nan, nan, nan, nan, n, math.nan)
    rng = np.random.default_rng(BOOTSTRAP_SEED)
    pick = rng.integers(0, n, size=(resamples, n))
    boot_first = np.empty((resamples, d))
    boot_total = np.empty((resamples, d))
    for k, idx in enumerate(pick):
        boot_first[k], boot_total[k] = _estimate(fa[idx], fb[idx], fab[:, idx])
    a = 100.0 * (1.0 - confidence) / 2.0
    fl, fh = np.nanpercentile(boot_first, [a, 100.0 - a], axis=0)
    tl, th = np.nanpercentile(boot_total, [a, 100.0 - a], axis=0)
    return SobolIndices(first, total, fl, fh, tl, th, n,
                        float(np.var(np.concatenate([fa, fb]))))


__all__ = ["SobolIndices", "partial_rank_correlations", "rank_correlations", "sobol_indices",
           "spearman"]
