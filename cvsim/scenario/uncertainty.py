"""The ``uncertainty:`` section: uncertain inputs, their correlations, how to sample.

A run (``cvsim run``) uses the values the file states and only checks this
section; an uncertainty study (``cvsim uncertainty``, :mod:`cvsim.study.uncertainty`)
draws many cases from it. Each entry of ``inputs`` names a numeric key of the
same file by its key path and gives it a distribution whose values are written
in that key's kind of quantity, with units::

    uncertainty:
      inputs:
        links.vent.discharge_coefficient: {distribution: normal, standard_deviation: 0.03,
                                           highest: 1}
        vessels.receiver.initial.temperature: {distribution: uniform, lowest: -20 degC,
                                               highest: 40 degC}
      rank_correlations:
        - {inputs: [vessels.receiver.initial.temperature, reservoirs.atmosphere.temperature],
           value: 0.8}
      cases: 200
      seed: 7

The section is read last, so that every other value of the file is known: the
key's kind of quantity (from its echo row) decides how the distribution's
values are read, and a centre not given (``mean``, ``median``, ``most_likely``)
is the value the file states. The result is a frozen
:class:`~cvsim.distributions.UncertaintySpec` in SI on ``Scenario.uncertainty``.
"""
from __future__ import annotations

import difflib
import math
from dataclasses import replace

from .. import units
from ..distributions import KINDS, Distribution, UncertainInput, UncertaintySpec
from .spec import BAD, At, Choice, Field, Kind, OneOrMore, Quantity, Section, read_section
from .tree import Mapping, key_path, split_path

#: sampling designs (cvsim.study.sampling)
SAMPLINGS = ("latin-hypercube", "sobol", "random")
#: sensitivity measures: rank correlations from the cases; variance-based indices
SENSITIVITIES = ("ranks", "variance")
#: most cases one study may ask for
MAX_CASES = 100_000
#: which keys of a distribution each kind takes (required ones first)
KIND_KEYS = {
    "normal": ({"standard_deviation"}, {"mean", "lowest", "highest"}),
    "log-normal": ({"factor"}, {"median", "lowest", "highest"}),
    "uniform": ({"lowest", "highest"}, set()),
    "triangular": ({"lowest", "highest"}, {"most_likely"}),
}


class KeyValue(Kind):
    """A value written in the kind of quantity of the uncertain key (docs only)."""

    def __init__(self, difference: bool = False):
        self.difference = difference

    def read(self, raw, at, ctx):  # pragma: no cover - the reader uses Quantity kinds
        raise NotImplementedError

    def describe(self) -> str:
        return ("a difference in the key's kind of quantity (e.g. `3 K`, `2 bar`, `0.03`)"
                if self.difference else "a value of the key's kind of quantity, with its "
                "unit (e.g. `15 degC`, `0.84`)")


class Difference(Quantity):
    """A spread (standard deviation): a difference, never a gauge pressure, above 0."""

    def convert(self, raw, ctx) -> units.Reading:
        dimension = "temperature_difference" if self.dimension == "temperature" \
            else self.dimension
        reading = units.read_quantity(raw, dimension, atmosphere=0.0)
        if reading.reference == "gauge":
            raise units.UnitsError(f"'{raw}' is a spread, a difference of pressures: write it "
                                   "without the gauge mark, e.g. '2 bar'")
        return replace(reading, note="a difference")


class Count(Kind):
    """A whole number in a range."""

    def __init__(self, least: int, most: int):
        self.least, self.most = least, most

    def read(self, raw, at, ctx):
        text = str(raw).strip() if isinstance(raw, (int, str)) and not isinstance(raw, bool) \
            else ""
        if not text.isdigit() or not self.least <= int(text) <= self.most:
            ctx.problem(at, f"expected a whole number from {self.least} to {self.most}, "
                        f"got {raw!r}")
            return BAD
        ctx.record(at, raw, float(int(text)))
        return int(text)

    def describe(self) -> str:
        return f"whole number, {self.least} to {self.most}"


class Percentiles(Kind):
    """A list of percentiles, each above 0 and below 100 (``[5, 50, 95]``)."""

    def read(self, raw, at, ctx):
        items = raw if isinstance(raw, list) else [raw]
        out = []
        for item in items:
            try:
                p = float(str(item).strip().lstrip("Pp"))
            except ValueError:
                p = math.nan
            if isinstance(item, bool) or not 0.0 < p < 100.0:
                ctx.problem(at, f"a percentile is a number above 0 and below 100 (e.g. "
                            f"[5, 50, 95]), not {item!r}")
                return BAD
            out.append(p)
        ctx.record(at, raw, ", ".join(f"{p:g}" for p in sorted(set(out))))
        return tuple(sorted(set(out)))

    def describe(self) -> str:
        return "list of numbers above 0 and below 100"


class KeyPair(Kind):
    """Two key paths of uncertain inputs."""

    def read(self, raw, at, ctx):
        if not (isinstance(raw, list) and len(raw) == 2 and all(isinstance(k, str) for k in raw)):
            ctx.problem(at, "expected two key paths of uncertain inputs, e.g. "
                        "[vessels.tank.initial.temperature, reservoirs.air.temperature]")
            return BAD
        keys = tuple(normal_key(k) for k in raw)
        ctx.record(at, raw, f"{keys[0]}, {keys[1]}")
        return keys

    def describe(self) -> str:
        return "list of two key paths (entries of `inputs`)"


def distribution_section(dimension: str | None) -> Section:
    """The keys of one uncertain input, read in ``dimension`` (``None``: for the docs)."""
    def value(**limits):
        return KeyValue() if dimension is None else Quantity(dimension, **limits)
    spread = KeyValue(True) if dimension is None else Difference(dimension, above=0.0)
    return Section(
        "uncertain input",
        "The distribution of one numeric key of the file (the entry's name is the key's "
        "path, as for `--set`). Values are written in that key's kind of quantity, with "
        "units; a centre not given is the value the file states. Which keys each "
        "distribution takes: `normal`: `standard_deviation`, optional `mean`, `lowest`, "
        "`highest`; `log-normal`: `factor`, optional `median`, `lowest`, `highest`; "
        "`uniform`: `lowest`, `highest`; `triangular`: `lowest`, `highest`, optional "
        "`most_likely`. `lowest` and `highest` truncate a normal or log-normal (a discharge "
        "coefficient at most 1).",
        fields=(
            Field("distribution", Choice(KINDS), "Kind of distribution.", required=True),
            Field("mean", value(), "Normal: the mean (default: the file's value)."),
            Field("standard_deviation", spread, "Normal: the standard deviation."),
            Field("median", value(above=0.0), "Log-normal: the median (default: the file's "
                  "value)."),
            Field("factor", Quantity("dimensionless", above=1.0),
                  "Log-normal: 95 % of the values lie between median/factor and "
                  "median x factor (2: 'known to a factor of two')."),
            Field("most_likely", value(), "Triangular: the most likely value (default: the "
                  "file's value)."),
            Field("lowest", value(), "Uniform, triangular: the lowest value; normal, "
                  "log-normal: truncation below (none if not given)."),
            Field("highest", value(), "Uniform, triangular: the highest value; normal, "
                  "log-normal: truncation above (none if not given)."),
        ),
    )


CORRELATION = Section(
    "rank_correlations",
    "A rank (Spearman) correlation between two uncertain inputs, induced through a "
    "Gaussian copula (docs/studies.md), e.g. `{inputs: [vessels.tank.initial.temperature, "
    "reservoirs.air.temperature], value: 0.8}`.",
    fields=(
        Field("inputs", KeyPair(), "The two inputs (entries of `inputs`).", required=True),
        Field("value", Quantity("dimensionless", at_least=-0.99, at_most=0.99),
              "Rank correlation, from -0.99 to 0.99.", required=True),
    ),
)


class Inputs(Kind):
    """The mapping of key paths to distributions (see :func:`distribution_section`)."""

    def read(self, raw, at, ctx):
        if not isinstance(raw, dict) or not raw:
            ctx.problem(at, "expected key paths, each with its distribution, e.g. "
                        "'links.vent.discharge_coefficient: {distribution: normal, "
                        "standard_deviation: 0.03, highest: 1}'")
            return BAD
        lines = raw.key_lines if isinstance(raw, Mapping) else {}
        echo = {r.key: r for r in ctx.echo if not r.key.startswith("uncertainty")}
        out, seen = [], set()
        for name, entry in raw.items():
            here = at.child(name, lines.get(name))
            key = normal_key(str(name))
            if key in seen:
                ctx.problem(here, f"'{key}' is given twice; keep one distribution")
                continue
            seen.add(key)
            item = self._one(key, entry, here, echo, ctx)
            if item is not BAD:
                out.append(item)
        return tuple(out) if len(out) == len(raw) else BAD

    def _one(self, key, entry, at: At, echo: dict, ctx):
        row = echo.get(key)
        if row is None:
            numeric = [k for k, r in echo.items() if isinstance(r.value, float)]
            close = difflib.get_close_matches(key, numeric, n=2, cutoff=0.6)
            hint = f" Did you mean {' or '.join(repr(c) for c in close)}?" if close else ""
            ctx.problem(at, f"the scenario has no value at '{key}'.{hint} An uncertain input "
                        "is a number the file states (or a default its echo shows: "
                        "cvsim check)")
            return BAD
        if not isinstance(row.value, float) or row.note.startswith("computed") \
                or row.given.startswith("("):
            what = ("is computed from other keys; make those uncertain instead"
                    if isinstance(row.value, float) else
                    f"is not a single number ('{row.given}')")
            ctx.problem(at, f"'{key}' {what}")
            return BAD
        dimension = key_dimension(row)
        values = read_section(entry, distribution_section(dimension), at, ctx)
        if values is BAD or not values.ok(*values):
            return BAD
        kind = values["distribution"]
        needed, optional = KIND_KEYS[kind]
        given = {k for k, v in values.items() if v is not None and k != "distribution"}
        for k in sorted(given - needed - optional):
            ctx.problem(values.where[k], f"a {kind} distribution takes no '{k}' (it takes "
                        f"{', '.join(sorted(needed | optional))})")
        for k in sorted(needed - given):
            ctx.problem(at, f"a {kind} distribution needs '{k}'")
        if given - needed - optional or needed - given:
            return BAD
        nominal = row.value
        lo = values["lowest"] if values["lowest"] is not None else -math.inf
        hi = values["highest"] if values["highest"] is not None else math.inf
        if not lo < hi:
            ctx.problem(values.where["highest"], f"'highest' must be above 'lowest' "
                        f"({hi:g} and {lo:g} {row.unit} in SI)")
            return BAD
        unit = "" if row.unit == "-" else row.unit
        centre_key = {"normal": "mean", "log-normal": "median",
                      "triangular": "most_likely"}.get(kind)
        centre = math.nan
        if centre_key:
            centre = values[centre_key] if values[centre_key] is not None else nominal
            if not lo <= centre <= hi:
                said = "the file's value" if values[centre_key] is None else f"'{centre_key}'"
                ctx.problem(values.where[centre_key], f"{said} ({centre:g} {unit}".rstrip()
                            + ") lies outside 'lowest' to 'highest'")
                return BAD
        if kind == "log-normal" and not (centre > 0.0 and lo < hi and hi > 0.0):
            ctx.problem(at, "a log-normal distribution needs a median above 0 (its values "
                        "are all above 0)")
            return BAD
        spread = {"normal": values["standard_deviation"],
                  "log-normal": values["factor"]}.get(kind, math.nan)
        dist = Distribution(kind, centre, spread, lo, hi, unit)
        ctx.record(at, entry, dist.describe(), "", f"uncertain input; the file states "
                   f"{row.used}")
        return UncertainInput(key, dist, dimension, nominal, row.given)

    def describe(self) -> str:
        return ("mapping of key paths, each see [uncertain input](#uncertain-input)")

    def sections(self):
        return (distribution_section(None),)


def key_dimension(row) -> str:
    """The kind of quantity of an echo row: its ``kind`` where the reader stated it
    (a stress), otherwise from its SI unit; for kelvin, a temperature unless the value
    was read as a difference (a deadband)."""
    if row.unit in ("", "-"):
        return "fraction"
    if getattr(row, "kind", "") in units.DIMENSIONS and row.kind != "temperature":
        return row.kind    # a stress is in Pa, like a pressure
    names = [d.name for d in units.DIMENSIONS.values() if d.symbol == row.unit]
    if "temperature" in names:
        try:
            absolute = units.read_quantity(row.given, "temperature").value
        except units.UnitsError:
            return "temperature_difference"
        return "temperature" if math.isclose(absolute, row.value, rel_tol=1e-12) \
            else "temperature_difference"
    return names[0] if names else "dimensionless"


def normal_key(key: str) -> str:
    """A key path as the reader writes it (``stop_when.0`` -> ``stop_when[0]``)."""
    return key_path(split_path(str(key)))


def _check(values, ctx) -> None:
    inputs = values.get("inputs")
    if inputs in (None, BAD):
        return
    keys = [i.key for i in inputs]
    pairs = values.get("rank_correlations") or []
    seen = set()
    for entry in pairs:
        if entry is BAD or entry.get("inputs") in (None, BAD):
            continue
        a, b = entry["inputs"]
        where = entry.where["inputs"]
        for k in (a, b):
            if k not in keys:
                ctx.problem(where, f"'{k}' is not an uncertain input; inputs: "
                            f"{', '.join(keys)}")
        if a == b:
            ctx.problem(where, "a correlation joins two different inputs")
        if frozenset((a, b)) in seen:
            ctx.problem(where, f"the correlation of '{a}' and '{b}' is given twice")
        seen.add(frozenset((a, b)))
    if pairs and values.get("sensitivity") == "variance":
        ctx.problem(values.where["sensitivity"], "variance-based (Sobol') indices assume "
                    "independent inputs; with rank_correlations use 'sensitivity: ranks'")
    if ctx.problems:
        return
    corr = [(e["inputs"][0], e["inputs"][1], e["value"]) for e in pairs
            if e is not BAD and e.get("value") not in (None, BAD)]
    if corr and not positive_definite(keys, corr):
        ctx.problem(values.where["rank_correlations"], "these rank correlations cannot hold "
                    "together (their matrix is not positive definite): make them weaker or "
                    "consistent (if A goes with B and B with C, A goes with C)")


def positive_definite(keys, correlations) -> bool:
    """True if the normal correlation matrix of the copula is positive definite."""
    import numpy as np
    from ..distributions import normal_correlation
    index = {k: i for i, k in enumerate(keys)}
    r = np.eye(len(keys))
    for a, b, rho in correlations:
        r[index[a], index[b]] = r[index[b], index[a]] = normal_correlation(rho)
    try:
        np.linalg.cholesky(r)
    except np.linalg.LinAlgError:
        return False
    return True


UNCERTAINTY = Section(
    "uncertainty",
    "Uncertain inputs for `cvsim uncertainty` (docs/studies.md): the distribution of any "
    "numeric key, correlations and how many cases to draw. A run (`cvsim run`) uses the "
    "values the file states and only checks this section.",
    fields=(
        Field("inputs", Inputs(), "The uncertain keys, by key path.", required=True),
        Field("rank_correlations", OneOrMore(CORRELATION),
              "Rank correlations between pairs of inputs (others are independent)."),
        Field("cases", Count(2, MAX_CASES), "Number of simulations (with `sensitivity: "
              "variance`: rounded down to N (d + 2) with N a power of 2, d inputs).",
              default=200),
        Field("sampling", Choice(SAMPLINGS), "`latin-hypercube`, `sobol` (scrambled Sobol' "
              "points) or `random`.", default="latin-hypercube"),
        Field("seed", Count(0, 2 ** 63 - 1), "Seed of the random numbers; not given: a new "
              "seed is drawn and recorded, so the study can be repeated."),
        Field("percentiles", Percentiles(), "Percentiles reported for every outcome.",
              default=[5, 50, 95]),
        Field("confidence", Quantity("fraction", above=0.5, at_most=0.999),
              "Confidence level of the intervals of percentiles and probabilities.",
              default="95 %"),
        Field("sensitivity", Choice(SENSITIVITIES), "`ranks`: rank and partial rank "
              "correlations from the cases; `variance`: Sobol' indices (Saltelli design, "
              "more cases).", default="ranks"),
    ),
    checks=(_check,),
)


def build(values) -> UncertaintySpec | None:
    """The frozen spec of a read ``uncertainty`` section (``None``: none given)."""
    if values is None or values is BAD:
        return None
    corr = tuple((e["inputs"][0], e["inputs"][1], e["value"])
                 for e in values.get("rank_correlations") or ())
    return UncertaintySpec(inputs=values["inputs"], correlations=corr, cases=values["cases"],
                           sampling=values["sampling"], seed=values["seed"],
                           percentiles=values["percentiles"], confidence=values["confidence"],
                           sensitivity=values["sensitivity"])


__all__ = ["CORRELATION", "SAMPLINGS", "SENSITIVITIES", "UNCERTAINTY", "build",
           "distribution_section", "key_dimension", "positive_definite"]
