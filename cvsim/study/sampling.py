"""Points of an uncertainty study: a design in the unit cube, correlations, values.

Three designs, each seeded so that a study is repeated exactly by giving the
same seed (the seed is recorded in every output; scipy's version is in the
provenance, since a design is reproduced by the same scipy):

* ``latin-hypercube``: each input's range is cut into n strata of equal
  probability and every stratum is sampled once (McKay, Beckman & Conover,
  "A comparison of three methods for selecting values of input variables in the
  analysis of output from a computer code", Technometrics 21 (1979) 239-245);
  ``scipy.stats.qmc.LatinHypercube`` with points scattered within the strata.
* ``sobol``: scrambled Sobol' points (Sobol', "On the distribution of points in
  a cube and the approximate evaluation of integrals", USSR Comput. Math. Math.
  Phys. 7 (1967) 86-112; Owen scrambling), ``scipy.stats.qmc.Sobol``; they
  balance best when the number of points is a power of 2.
* ``random``: independent uniform points (plain Monte Carlo).

Rank correlations between pairs of inputs are induced through a Gaussian
copula: the uniform coordinates become standard normal ``z = Phi^-1(u)``, are
mixed by the Cholesky factor L of the normal correlation matrix
(``R_ij = 2 sin(pi rho_S,ij / 6)``, :func:`cvsim.distributions.normal_correlation`),
and go back through ``u = Phi(L z)`` (R. B. Nelsen, *An Introduction to
Copulas*, 2nd ed., Springer 2006, sec. 2.9 and 5.1; the same construction as
the NORTA method of Cario & Nelson 1997). The marginal distributions are kept
exactly; the stratification of a Latin hypercube is kept for the inputs that
are not correlated.

Variance-based sensitivity needs the design of Saltelli et al. (2010): two
independent matrices A and B of N points each (the first and last d columns
of one 2d-dimensional design) and, for every input i, the matrix A_B^(i): A with
its column i taken from B. The N (d + 2) cases are interleaved (A_j, B_j,
A_B^(1)_j, ... A_B^(d)_j for j = 1..N) so that a study stopped early keeps whole
groups. A. Saltelli, P. Annoni, I. Azzini, F. Campolongo, M. Ratto, S.
Tarantola, "Variance based sensitivity analysis of model output. Design and
estimator for the total sensitivity index", Computer Physics Communications
181 (2010) 259-270, sec. 2 and 3.
"""
from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field

import numpy as np

from ..errors import StudyError

#: fewest base points N of a variance-based design (Saltelli 2010 use N >= 2^4;
#: below 8 the indices are noise)
MIN_BASE = 8
#: seeds drawn when none is given are below this (short enough to type again)
SEED_RANGE = 10 ** 9


@dataclass(frozen=True)
class Design:
    """The cases of a study as values.

    method    ``latin-hypercube``, ``sobol`` or ``random``
    seed      the seed used
    keys      the inputs' key paths, in column order
    values    [SI] array (cases, inputs)
    groups    per case: ``A``, ``B`` or ``AB<i>`` (variance designs), else ``""``
    sample    per case: the index j of its base point (variance designs), else the case index
    base      N of a variance design (0 otherwise)
    notes     what the design did that a reader should know
    """

    method: str
    seed: int
    keys: tuple
    values: np.ndarray
    groups: tuple = ()
    sample: tuple = ()
    base: int = 0
    notes: tuple = field(default_factory=tuple)

    @property
    def cases(self) -> int:
        return int(self.values.shape[0])


def new_seed() -> int:
    """A fresh seed (from the operating system's entropy)."""
    import secrets
    return secrets.randbelow(SEED_RANGE)


def unit_points(method: str, n: int, d: int, seed: int) -> np.ndarray:
    """n points in the unit cube [0, 1)^d of the given design, seeded."""
    from scipy.stats import qmc
    if method == "random":
        return np.random.default_rng(seed).random((n, d))
    maker = {"latin-hypercube": qmc.LatinHypercube, "sobol": qmc.Sobol}[method]
    try:
        engine = maker(d, scramble=True, rng=np.random.default_rng(seed))
    except TypeError:  # scipy before 1.15 names it seed
        engine = maker(d, scramble=True, seed=np.random.default_rng(seed))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UserWarning)  # Sobol' at n not a power of 2: noted
        return engine.random(n)


def correlate(u: np.ndarray, keys, correlations) -> np.ndarray:
    """Induce the rank correlations ``(key, key, rho_S)`` among the columns of
    ``u`` (uniform points) through a Gaussian copula (see the module notes)."""
    from scipy.special import ndtr, ndtri

    from ..distributions import normal_correlation
    if not correlations:
        return u
    index = {k: i for i, k in enumerate(keys)}
    cols = sorted({index[a] for a, _, _ in correlations} | {index[b] for _, b, _ in correlations})
    where = {c: j for j, c in enumerate(cols)}
    r = np.eye(len(cols))
    for a, b, rho in correlations:
        i, j = where[index[a]], where[index[b]]
        r[i, j] = r[j, i] = normal_correlation(rho)
    lower = np.linalg.cholesky(r)
    z = ndtri(np.clip(u[:, cols], 1e-16, 1.0 - 1e-16))
    out = u.copy()
    out[:, cols] = ndtr(z @ lower.T)
    return out


def to_values(u: np.ndarray, inputs) -> np.ndarray:
    """Uniform points -> SI values through each input's inverse CDF."""
    return np.column_stack([inp.distribution.ppf(u[:, i]) for i, inp in enumerate(inputs)])


def variance_base(cases: int, d: int) -> int:
    """The largest power of 2, N, with N (d + 2) <= cases."""
    n = cases // (d + 2)
    return 0 if n < 1 else 2 ** int(math.floor(math.log2(n)))


def make_design(spec, seed: int | None = None, cases: int | None = None) -> Design:
    """The cases of ``spec`` (:class:`~cvsim.distributions.UncertaintySpec`)."""
    seed = spec.seed if seed is None else seed
    seed = new_seed() if seed is None else int(seed)
    n = spec.cases if cases is None else int(cases)
    keys = tuple(spec.keys)
    d = len(keys)
    notes = []
    if spec.sensitivity != "variance":
        if spec.sampling == "sobol" and n & (n - 1):
            notes.append(f"{n} Sobol' points: they balance best at a power of 2 "
                         f"({2 ** int(math.log2(n))} or {2 ** int(math.ceil(math.log2(n)))})")
        u = correlate(unit_points(spec.sampling, n, d, seed), keys, spec.correlations)
        return Design(spec.sampling, seed, keys, to_values(u, spec.inputs), ("",) * n,
                      tuple(range(n)), 0, tuple(notes))
    base = variance_base(n, d)
    if base < MIN_BASE:
        raise StudyError(f"variance-based indices of {d} input{'s' if d != 1 else ''} need at "
                         f"least {MIN_BASE * (d + 2)} cases ({MIN_BASE} x (d + 2)); "
                         f"{n} asked (cases)")
    if base * (d + 2) != n:
        notes.append(f"{base * (d + 2)} cases run of the {n} asked: N (d + 2) with N = {base}, "
                     f"a power of 2, and d = {d} inputs")
    ab = unit_points(spec.sampling, base, 2 * d, seed)
    a, b = ab[:, :d], ab[:, d:]
    rows, groups, sample = [], [], []
    for j in range(base):
        rows += [a[j], b[j]]
        groups += ["A", "B"]
        for i in range(d):
            mixed = a[j].copy()
            mixed[i] = b[j, i]
            rows.append(mixed)
            groups.append(f"AB{i}")
        sample += [j] * (d + 2)
    u = np.array(rows)
    return Design(spec.sampling, seed, keys, to_values(u, spec.inputs), tuple(groups),
                  tuple(sample), base, tuple(notes))


__all__ = ["Design", "MIN_BASE", "correlate", "make_design", "new_seed", "to_values",
           "unit_points", "variance_base"]
