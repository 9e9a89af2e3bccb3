"""Uncertainty studies: how sure is the answer, and which input drives it.

The inputs a scenario is unsure of (its ``uncertainty:`` section, read by
:mod:`cvsim.scenario.uncertainty`, or given here) are drawn many times
(:mod:`cvsim.study.sampling`); every draw is one case run on the sweep
machinery (:func:`cvsim.study.sweep.run_cases`: local worker processes or Dask,
per-case time limits, failed cases kept as rows, a partial table after an
interrupt). From the cases come, for every outcome of the sweep table
(:mod:`cvsim.study.outcomes`), its percentiles with confidence intervals and,
for every design limit, the probability that it is crossed
(:mod:`cvsim.study.statistics`), and which inputs drive each outcome
(:mod:`cvsim.study.sensitivity`).

>>> import cvsim                                                     # doctest: +SKIP
>>> study = cvsim.uncertainty("scenarios/nitrogen-blowdown.yaml",
...     inputs={"links.vent.discharge_coefficient":
...             "{distribution: normal, standard_deviation: 0.03, highest: 1}"},
...     cases=100, seed=1)                                           # doctest: +SKIP
>>> study.percentile("receiver.min_temperature", 5)                  # doctest: +SKIP

Which cases enter the statistics: those that ran to their end or stop
condition. Failed cases are rows of the table with their error and are
counted, never silently dropped: a probability is also given as if every
failed case had crossed the limit. With variance-based sensitivity the
percentiles and probabilities come from the rows of A and B only (2N
independent draws); the A_B^(i) rows serve the indices.
"""
from __future__ import annotations

import copy
import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..errors import ScenarioError, StudyError
from ..result import CAUTION
from .sweep import CASE_TIME_LIMIT, Interrupted, Parameter, Source, run_table
from .table import SweepResult
from .uncertainty_terms import ANY_LIMIT, UNCERTAINTY_CAUTION  # noqa: F401  (re-exported)

#: an input's distribution is checked against the scenario reader at these
#: points of its CDF (the truncation ends where it has them)
TAIL = 1e-6
#: kinds of sweep-table column whose spread is reported
SPREAD_KINDS = ("figure", "limit-actual", "limit-margin")


# ----------------------------------------------------------------- set-up

def _file_section(source: Source) -> dict:
    """The file's ``uncertainty:`` mapping (without lines), or an empty one."""
    from ..scenario.tree import Mapping, parse, strip_lines
    root, _ = parse(source.data.decode("utf-8-sig", errors="replace"))
    section = root.get("uncertainty") if isinstance(root, dict) else None
    return strip_lines(section) if isinstance(section, dict) else Mapping()


def study_overrides(source: Source, inputs=None, correlations=None, **options) -> dict:
    """The override of the ``uncertainty:`` section that adds ``inputs``
    (key path -> distribution as a mapping or YAML text), ``correlations``
    ((key, key, rank correlation) triples) and the options given (``cases``,
    ``sampling``, ``seed``, ``percentiles`` (added to those of the file),
    ``confidence``, ``sensitivity``) to the file's section; ``{}`` if nothing
    is given."""
    from ..scenario.tree import Mapping, override_value, strip_lines
    from ..scenario.uncertainty import normal_key
    given = {k: v for k, v in options.items() if v is not None}
    for k in ("cases", "seed"):  # numpy integers read as whole numbers too
        if k in given and not isinstance(given[k], (bool, str)):
            try:
                given[k] = int(given[k]) if int(given[k]) == given[k] else given[k]
            except (TypeError, ValueError, OverflowError):
                pass
    if not inputs and not correlations and not given:
        return {}
    section = copy.deepcopy(_file_section(source))
    if inputs:
        merged = Mapping()
        old = section.get("inputs")
        new = {normal_key(k): v for k, v in inputs.items()}
        for k, v in (old.items() if isinstance(old, dict) else ()):
            if normal_key(k) not in new:
                merged[k] = v
        for k, v in new.items():
            merged[k] = override_value(v) if isinstance(v, str) else strip_lines(v)
        section["inputs"] = merged
    if correlations:
        pairs = list(section.get("rank_correlations") or [])
        if isinstance(section.get("rank_correlations"), dict):
            pairs = [section["rank_correlations"]]
        for item in correlations:
            if isinstance(item, dict):
                pairs.append(strip_lines(item))
                continue
            try:
                a, b, rho = item
            except (TypeError, ValueError):
                raise StudyError(f"a correlation is (key, key, value), e.g. ('vessels.tank."
                                 f"initial.temperature', 'reservoirs.air.temperature', 0.8); "
                                 f"got {item!r} (--correlate)") from None
            pairs.append({"inputs": [a, b], "value": rho})
        section["rank_correlations"] = pairs
    if "percentiles" in given:
        asked = given["percentiles"]
        asked = [asked] if isinstance(asked, (int, float, str)) else list(asked)
        stated = section.get("percentiles", [5, 50, 95])
        stated = stated if isinstance(stated, list) else [stated]
        given["percentiles"] = stated + [p for p in asked if p not in stated]
    for k, v in given.items():
        section[k] = v
    return {"uncertainty": section}


def value_text(x: float, dimension: str) -> str:
    """An SI value as text the scenario reader reads back exactly (``repr``)."""
    from ..units import DIMENSIONS
    si = DIMENSIONS[dimension].si
    return f"{float(x)!r} {si}".strip()


def check_ranges(source: Source, spec) -> None:
    """Refuse a distribution that reaches values the scenario refuses at that
    key (a discharge coefficient above 1): the reader is asked at the
    distribution's ends (its 1e-6 and 1 - 1e-6 points, or its truncation)."""
    from ..scenario import load_scenario_bytes
    for inp in spec.inputs:
        ends = inp.distribution.ppf(np.array([TAIL, 1.0 - TAIL])) \
            if inp.distribution.kind in ("normal", "log-normal") \
            else np.array([inp.distribution.lowest, inp.distribution.highest])
        for end in ends:
            try:
                load_scenario_bytes(source.data, source.name,
                                    {**source.overrides, inp.key: value_text(end, inp.dimension)})
            except ScenarioError as exc:
                mine = [p for p in exc.problems if p.key == inp.key]
                if mine:
                    message = mine[0].message.replace(" (set by override)", "")
                    raise StudyError(
                        f"{inp.key}: its distribution ({inp.distribution.describe()}) reaches "
                        f"{float(end):.6g} {inp.distribution.unit}".rstrip()
                        + f", which the scenario does not accept ({message}); truncate it "
                        "with 'lowest' or 'highest', or narrow it") from None


# ----------------------------------------------------------------- result

@dataclass
class UncertaintyResult:
    """An uncertainty study: the cases (a :class:`~cvsim.study.table.SweepResult`),
    the design, and what follows from them.

    spec        the study as stated (:class:`~cvsim.distributions.UncertaintySpec`, SI)
    design      the cases as values (:class:`~cvsim.study.sampling.Design`)
    table       one row per case: inputs as given and in SI, status, outcomes
    spreads     outcome name -> :class:`~cvsim.study.statistics.Spread`
    chances     one :class:`~cvsim.study.statistics.Chance` per design limit, and
                one for any limit
    ranks       outcome -> list of (input key, Spearman, partial rank correlation)
    sobol       outcome -> :class:`~cvsim.study.sensitivity.SobolIndices` (variance only)
    main        the outcomes shown in the text and the plots (those that vary)
    used        indices of the rows the statistics use
    notes       what the reader should know about how the numbers were made
    """

    title: str
    spec: object
    design: object
    table: SweepResult
    spreads: dict = field(default_factory=dict)
    chances: list = field(default_factory=list)
    ranks: dict = field(default_factory=dict)
    sobol: dict = field(default_factory=dict)
    main: list = field(default_factory=list)
    used: list = field(default_factory=list)
    notes: list = field(default_factory=list)
    warnings: list = field(default_factory=list)
    partial: str = ""
    files: dict = field(default_factory=dict)

    # ------------------------------------------------------------ build
    @classmethod
    def build(cls, table: SweepResult, spec, design, notes=()) -> "UncertaintyResult":
        result = cls(title=table.title, spec=spec, design=design, table=table,
                     notes=list(notes))
        result._compute()
        return result

    def _compute(self) -> None:
        from .sensitivity import partial_rank_correlations, rank_correlations
        from .statistics import chance, spread
        rows = self.table.rows
        if self.design.base:
            pool = [i for i, g in enumerate(self.design.groups) if g in ("A", "B")]
        else:
            pool = list(range(len(rows)))
        ok = [i for i in pool if rows[i]["status"] in ("completed", "stopped")]
        failed = sum(1 for i in pool if rows[i]["status"] == "failed")
        self.used = ok
        conf = self.spec.confidence
        for col in self.table.columns:
            if col.kind not in SPREAD_KINDS or col.name == "limits_crossed":
                continue
            values = [self.case_value(col, rows[i]) for i in ok]
            self.spreads[col.name] = spread(col.name, col.unit, col.text, values,
                                            self.spec.percentiles, conf,
                                            difference=col.difference)
        for col in self.table.columns:
            if col.kind != "limit-met":
                continue
            verdicts = [rows[i].get(col.name) for i in ok]
            verdicts = [v for v in verdicts if v is not None]
            self.chances.append(chance(col.name.removesuffix(".met"), col.text.split(":")[0],
                                       sum(1 for v in verdicts if v is False), len(verdicts),
                                       conf, failed))
        if self.chances:
            crossed = sum(1 for i in ok if (rows[i].get("limits_crossed") or 0) > 0)
            self.chances.append(chance(ANY_LIMIT, "at least one design limit crossed",
                                       crossed, len(ok), conf, failed))
        self.main = [n for n in self.table.outcome_defaults if n in self.spreads
                     and self._varies(n)]
        if not self.main:
            self.main = [n for n in self.spreads if self._varies(n)][:4]
        x = self.design.values
        for name, s in self.spreads.items():
            if not self._varies(name):
                continue
            y = np.array([self.case_value(self.table.column(name), rows[i]) for i in ok])
            keep = ~np.isnan(y)
            if keep.sum() < 3:
                continue
            xs = x[np.array(ok)[keep]]
            self.ranks[name] = list(zip(self.design.keys, rank_correlations(xs, y[keep]),
                                        partial_rank_correlations(xs, y[keep])))
        if self.design.base:
            self._sobol()

    def _sobol(self) -> None:
        from .sensitivity import sobol_indices
        d, n = len(self.design.keys), self.design.base
        rows = self.table.rows
        for name in self.spreads:
            if not self._varies(name):
                continue
            col = self.table.column(name)
            f = np.full((d + 2, n), math.nan)
            for i, (g, j) in enumerate(zip(self.design.groups, self.design.sample)):
                if rows[i]["status"] not in ("completed", "stopped"):
                    continue
                k = 0 if g == "A" else 1 if g == "B" else 2 + int(g[2:])
                f[k, j] = self.case_value(col, rows[i])
            self.sobol[name] = sobol_indices(f[0], f[1], f[2:], self.spec.confidence)

    @staticmethod
    def case_value(col, row) -> float:
        """An outcome of a completed case (SI): a time to a target the run did
        not reach is +inf (its margin -inf); another missing value NaN."""
        v = row.get(col.name)
        if v is None or (isinstance(v, float) and math.isnan(v)):
            if col.unit == "s" and col.kind == "limit-actual":
                return math.inf
            if col.unit == "s" and col.kind == "limit-margin":
                return -math.inf
            return math.nan
        return float(v)

    def _varies(self, name: str) -> bool:
        s = self.spreads[name]
        if s.count < 2:
            return False
        if s.not_reached and s.not_reached < s.count:
            return True
        return math.isfinite(s.sd) and s.sd > 1e-9 * max(abs(s.mean), 1e-300)

    # ----------------------------------------------------------- access
    def percentile(self, outcome: str, p: float) -> float:
        """The p-th percentile of an outcome [SI]."""
        return self._spread(outcome).at(p)[0]

    def interval(self, outcome: str, p: float) -> tuple:
        """(low, high) of the confidence interval of the p-th percentile [SI]."""
        return tuple(self._spread(outcome).at(p)[1:3])

    def _spread(self, outcome: str):
        if outcome not in self.spreads:
            from .outcomes import Outcome, find_outcome
            find_outcome(outcome, [Outcome(n, s.unit, "", s.text)
                                   for n, s in self.spreads.items()], "outcome")
        return self.spreads[outcome]

    def chance_of(self, limit: str):
        """The :class:`~cvsim.study.statistics.Chance` of a limit check by name."""
        for c in self.chances:
            if c.name == limit or c.name == limit.removesuffix(".met"):
                return c
        names = ", ".join(c.name for c in self.chances) or "none stated"
        raise StudyError(f"no design limit '{limit}' in this study; limits: {names}")

    @property
    def counts(self) -> dict:
        return self.table.counts()

    def record(self) -> dict:
        """How the cases were drawn: enough to draw them again."""
        d = self.design
        out = {"sampling": d.method, "seed": d.seed, "inputs": len(d.keys),
               "cases_asked": self.spec.cases, "cases": d.cases,
               "sensitivity": self.spec.sensitivity, "confidence": self.spec.confidence,
               "percentiles": list(self.spec.percentiles)}
        if d.base:
            out["base_points"] = d.base
        return out

    # ------------------------------------------------------------ frames
    def to_dataframe(self):
        """The percentiles as a pandas DataFrame, one row per outcome (SI), with
        ``df.attrs`` caution, title, provenance and units."""
        try:
            import pandas as pd
        except ImportError:
            raise StudyError("to_dataframe() needs pandas: pip install -e '.[dataframe]' in "
                             "the cvsim checkout"
                             ) from None
        records = []
        for name, s in self.spreads.items():
            rec = {"outcome": name, "unit": s.unit, "cases": s.count, "no value": s.missing,
                   "not reached": s.not_reached, "mean": s.mean,
                   "standard deviation": s.sd, "lowest": s.lowest, "highest": s.highest}
            for p, v, lo, hi, _ in s.percentiles:
                rec[f"P{p:g}"] = v
                rec[f"P{p:g} low"] = lo if lo is not None else math.nan
                rec[f"P{p:g} high"] = hi if hi is not None else math.nan
            records.append(rec)
        df = pd.DataFrame.from_records(records).set_index("outcome")
        df.attrs.update({"caution": f"{UNCERTAINTY_CAUTION} {CAUTION}", "title": self.title,
                         "provenance": dict(self.table.provenance), "record": self.record(),
                         "units": {n: s.unit for n, s in self.spreads.items()}})
        return df

    def cases_dataframe(self):
        """Every case (inputs, status, outcomes) as a DataFrame (SI)."""
        return self.table.to_dataframe()

    def as_dict(self) -> dict:
        """Everything but the cases (those are in :attr:`table`), as plain data."""
        def none(x):
            return None if x is None or (isinstance(x, float) and not math.isfinite(x)) else x
        out = {
            "title": self.title, "scenario": self.table.scenario, "record": self.record(),
            "complete": not self.partial, "partial": self.partial,
            "counts": self.counts, "cases_in_statistics": len(self.used),
            "ran_on": self.table.ran_on, "wall_time_s": self.table.wall_time,
            "inputs": [{"key": i.key, "distribution": i.distribution.kind,
                        "centre": none(i.distribution.centre),
                        "spread": none(i.distribution.spread),
                        "lowest": none(i.distribution.lowest),
                        "highest": none(i.distribution.highest),
                        "unit": i.distribution.unit, "nominal": i.nominal,
                        "described": i.distribution.describe()} for i in self.spec.inputs],
            "rank_correlations": [list(c) for c in self.spec.correlations],
            "outcomes": {n: {"unit": s.unit, "cases": s.count, "no_value": s.missing,
                             "not_reached": s.not_reached, "mean": none(s.mean),
                             "sd": none(s.sd), "lowest": none(s.lowest),
                             "highest": none(s.highest),
                             "percentiles": [{"p": p, "value": _json_number(v),
                                              "low": _json_number(lo),
                                              "high": _json_number(hi), "coverage": cov}
                                             for p, v, lo, hi, cov in s.percentiles]}
                         for n, s in self.spreads.items()},
            "limits": [{"name": c.name, "text": c.text, "crossed": c.crossed,
                        "cases": c.cases, "probability": none(c.probability),
                        "low": c.low, "high": c.high, "failed": c.failed,
                        "if_failed_crossed": none(c.if_failed_crossed)}
                       for c in self.chances],
            "rank_sensitivity": {n: [{"input": k, "spearman": none(float(a)),
                                      "partial": none(float(b))} for k, a, b in v]
                                 for n, v in self.ranks.items()},
            "variance_sensitivity": {
                n: [{"input": k, "first": none(float(s.first[i])),
                     "first_low": none(float(s.first_low[i])),
                     "first_high": none(float(s.first_high[i])),
                     "total": none(float(s.total[i])),
                     "total_low": none(float(s.total_low[i])),
                     "total_high": none(float(s.total_high[i]))}
                    for i, k in enumerate(self.design.keys)] + [{"base_points": s.base}]
                for n, s in self.sobol.items()},
            "main_outcomes": list(self.main), "notes": list(self.notes),
            "warnings": list(self.warnings), "files": {k: Path(v).name
                                                     for k, v in self.files.items()},
            "provenance": self.table.provenance,
            "caution": f"{UNCERTAINTY_CAUTION} {CAUTION}",
        }
        return out

    # ------------------------------------------------------------- files
    def write(self, folder, plots: bool = True) -> dict:
        """Write the study's files into ``folder`` (atomically): cases.csv/.json/.txt
        (every case), percentiles.csv, limits.csv, sensitivity.csv,
        uncertainty.json, uncertainty.txt and, unless ``plots=False``,
        convergence.png, sensitivity.png and spread.png. Returns {name: path}."""
        from ..outputs import atomic_folder
        folder = Path(folder)
        with atomic_folder(folder) as tmp:
            self.write_files(tmp, plots=plots)
        self.files = {k: folder / Path(v).name for k, v in self.files.items()}
        return dict(self.files)

    def write_files(self, folder: Path, plots: bool = True) -> None:
        from . import uncertainty_files as uf
        folder = Path(folder)
        self.table.write_files(folder, plots=False, stem="cases")
        files = {"cases": folder / "cases.csv", "cases_json": folder / "cases.json",
                 "cases_text": folder / "cases.txt"}
        if plots and not self.used:
            self.warnings.append("no plots: no case ran to its end or stop condition")
        elif plots:
            from . import uncertainty_plot as up
            for key, draw in (("convergence", up.plot_convergence),
                              ("sensitivity", up.plot_sensitivity), ("spread", up.plot_spread)):
                path = folder / f"{key}.png"
                try:
                    files[key] = draw(self, path)
                except Exception as exc:  # a plot must never cost the tables
                    path.unlink(missing_ok=True)
                    what = " ".join(f"{type(exc).__name__}: {exc}".split())[:200]
                    self.warnings.append(f"plot left out: '{key}.png' could not be drawn "
                                         f"({what}); the tables are complete")
        files["percentiles"] = uf.write_percentiles_csv(self, folder / "percentiles.csv")
        files["limits"] = uf.write_limits_csv(self, folder / "limits.csv")
        files["sensitivity_table"] = uf.write_sensitivity_csv(self, folder / "sensitivity.csv")
        files["text"] = folder / "uncertainty.txt"
        files["json"] = folder / "uncertainty.json"
        self.files = files
        files["text"].write_text(self.text(), encoding="utf-8")
        uf.write_json(self, files["json"])

    def text(self) -> str:
        """A readable summary (uncertainty.txt)."""
        from .uncertainty_files import summary_text
        return summary_text(self)


def _json_number(x):
    if x is None:
        return None
    if isinstance(x, float) and math.isinf(x):
        return "inf" if x > 0 else "-inf"
    if isinstance(x, float) and math.isnan(x):
        return None
    return x


# -------------------------------------------------------------------- API

def uncertainty(scenario, inputs: dict | None = None, correlations=None,
                cases: int | None = None, sampling: str | None = None,
                seed: int | None = None, percentiles=None, confidence=None,
                sensitivity: str | None = None, workers: int | None = None,
                cluster: str | None = None, progress: bool = True,
                overrides: dict | None = None, start_method: str | None = None,
                case_time_limit: float | None = CASE_TIME_LIMIT) -> UncertaintyResult:
    """Draw the uncertain inputs of ``scenario`` many times, run every case,
    and tell how sure its outcomes are and which input drives them.

    Parameters
    ----------
    scenario : path of a scenario file, or a :class:`~cvsim.scenario.Scenario`
        its ``uncertainty:`` section (docs/studies.md) states the inputs; the
        arguments below add to it or change it.
    inputs : dict, optional
        key path -> distribution, a mapping or its YAML text, e.g.
        ``{"links.vent.discharge_coefficient": "{distribution: normal,
        standard_deviation: 0.03, highest: 1}"}``; replaces the file's entry
        for the same key.
    correlations : list, optional
        ``(key, key, rank correlation)`` triples, added to the file's.
    cases, sampling, seed, confidence, sensitivity
        as the section's keys (``sampling``: ``latin-hypercube``, ``sobol``,
        ``random``; ``sensitivity``: ``ranks`` or ``variance``); ``seed`` not
        given anywhere: a new one is drawn and recorded.
    percentiles : list, optional
        percentiles reported besides the file's (default 5, 50, 95).
    workers, cluster, progress, overrides, start_method, case_time_limit
        as for :func:`cvsim.sweep`.

    Returns
    -------
    UncertaintyResult

    Raises
    ------
    StudyError
        no uncertain input, or a distribution reaching values the scenario
        refuses at its key (truncate it).
    ScenarioError
        problems of the file or of the uncertainty stated (key paths named).
    Interrupted
        Ctrl-C or SIGTERM: its ``result`` holds the study of the cases finished
        (marked partial).
    """
    from ..scenario import load_scenario_bytes
    from .sampling import make_design
    source = Source.of(scenario, overrides)
    extra = study_overrides(source, inputs, correlations, cases=cases, sampling=sampling,
                            seed=seed, percentiles=percentiles, confidence=confidence,
                            sensitivity=sensitivity)
    reference = load_scenario_bytes(source.data, source.name, {**source.overrides, **extra})
    spec = reference.uncertainty
    if spec is None:
        raise StudyError("no uncertain inputs: add an 'uncertainty:' section with 'inputs' to "
                         "the scenario (docs/studies.md) or give them with --uncertain "
                         "KEY='{distribution: normal, ...}' (inputs=... in Python)")
    if case_time_limit is not None and not case_time_limit > 0:
        raise StudyError(f"the case time limit must be above zero, not {case_time_limit!r} "
                         "(--case-time-limit; 'none' for no limit)")
    check_ranges(source, spec)
    design = make_design(spec)
    texts = [[value_text(x, inp.dimension) for x, inp in zip(row, spec.inputs)]
             for row in design.values]
    from ..units import DIMENSIONS
    parameters = [Parameter(inp.key, inp.distribution.describe(),
                            tuple(t[i] for t in texts), "list",
                            DIMENSIONS[inp.dimension].si,
                            tuple(float(v) for v in design.values[:, i]))
                  for i, inp in enumerate(spec.inputs)]
    case_values = [dict(zip(design.keys, t)) for t in texts]
    notes = list(design.notes)
    try:
        table = run_table(source, parameters, case_values, reference, workers, cluster,
                          start_method, progress, case_time_limit, "study",
                          " and left out of the statistics")
    except Interrupted as stop:
        result = UncertaintyResult.build(stop.result, spec, design, notes)
        result.partial = stop.result.partial
        stop.result = result
        raise
    return UncertaintyResult.build(table, spec, design, notes)


__all__ = ["ANY_LIMIT", "UNCERTAINTY_CAUTION", "UncertaintyResult", "check_ranges",
           "study_overrides", "uncertainty", "value_text"]
