"""Target seeking: the smallest (or largest) value of one scenario key that meets
stated requirements, found by whole simulations.

Requirements (:func:`parse_requirement`) are written in plain text::

    limits                                   every design limit the scenario states
    limits:temperature                       ... only those on a temperature (pressure, time)
    separator.limits                         ... only those of one vessel
    separator.limit.depressure               one limit check, by its key
    separator.min_temperature >= -46 degC    an outcome (cvsim.study.outcomes) against a value
    end_time <= 15 min                       (>=, <=, >, <; the value with its unit)

The search (:func:`seek`) first runs a coarse scan of the range in parallel,
then closes in on the first crossing from 'not met' to 'met' (from the small
end when looking for the smallest value, from the large end for the largest)
with a bracketing root finder on the margin: false position with the Illinois
change, a point on either side of its estimate when more than one worker is
free, and plain even splits where a margin is missing (a failed run, a target
not reached: both count as not met). The answer is always a value that was
simulated and met every requirement; the bracket's other end was simulated and
did not.
"""
from __future__ import annotations

import math
import re
import time
from dataclasses import dataclass, field
from pathlib import Path

from ..errors import StudyError
from ..result import CAUTION

#: default relative tolerance on the value found (width of the final bracket)
TOLERANCE = 1e-3
#: default cap on simulations (scan and refinement together)
MAX_RUNS = 40
#: points of the coarse scan when the range gives no count: at least this many,
#: rounded up to a whole number of rounds of the workers
SCAN_POINTS = 6
#: at most this many points per refinement round
ROUND_POINTS = 4

_COMPARE = re.compile(r"^\s*(?P<name>[^<>=≤≥]+?)\s*(?P<op>>=|<=|=>|=<|≥|≤|>|<)\s*(?P<value>.+?)\s*$")
_LIMITS = re.compile(r"^\s*(?:(?P<vessel>[\w-]+)\.)?limits(?:\s*:\s*(?P<quantity>\w+))?\s*$")
_OPS = {"=>": ">=", "=<": "<=", "≥": ">=", "≤": "<="}
_QUANTITIES = ("pressure", "temperature", "time")
_QUANTITY_UNIT = {"pressure": "Pa", "temperature": "K", "time": "s"}


# ----------------------------------------------------------- requirements

@dataclass(frozen=True)
class Requirement:
    """One requirement as written and as understood.

    kind      ``limits`` (a set of limit checks), ``limit`` (one check by key)
              or ``compare`` (an outcome against a value)
    vessel, quantity   filters of ``limits`` (``None``: any)
    name      ``limit``: the check's base name (``separator.limit.depressure``);
              ``compare``: the outcome
    op, value, unit    ``compare``: ``>=``/``<=``/``>``/``<``, the value [SI], its SI unit
    """

    text: str
    kind: str
    vessel: str | None = None
    quantity: str | None = None
    name: str = ""
    op: str = ""
    value: float = math.nan
    unit: str = ""

    def check(self, figures: dict, units: dict) -> list[tuple[str, bool, float, str]]:
        """(label, met, margin [SI], unit) for each check this requirement
        makes on a run's figures (name -> SI value; ``units``: name -> SI unit)."""
        if self.kind == "compare":
            v = figures.get(self.name, math.nan)
            if v is None or not math.isfinite(v):
                return [(self.text, False, math.nan, self.unit)]
            margin = v - self.value if self.op in (">=", ">") else self.value - v
            met = margin > 0 if self.op in (">", "<") else margin >= 0
            return [(self.text, bool(met), margin, self.unit)]
        out = []
        for name in sorted(n for n in figures if n.endswith(".met")):
            base = name[:-len(".met")]
            if not self._selects(base, units.get(base + ".margin", "")):
                continue
            margin = figures.get(base + ".margin", math.nan)
            met = figures[name] == 1.0
            out.append((base, bool(met), margin if margin is not None else math.nan,
                        units.get(base + ".margin", "")))
        return out

    def _selects(self, base: str, unit: str) -> bool:
        if self.kind == "limit":
            return base == self.name or base.startswith(self.name + ".")
        vessel, _, _ = base.partition(".limit.")
        if self.vessel is not None and vessel != self.vessel:
            return False
        return self.quantity is None or unit == _QUANTITY_UNIT[self.quantity]


def parse_requirement(text: str, outcomes: list, network) -> Requirement:
    """Read one requirement (see the module notes) against the outcomes of a
    network (:func:`cvsim.study.outcomes.outcome_list`); a :class:`StudyError` names
    what is wrong and what to write."""
    from .outcomes import find_outcome
    if not isinstance(text, str) or not text.strip():
        raise StudyError("--meet: give a requirement, e.g. --meet limits or "
                         "--meet 'separator.min_temperature >= -46 degC'")
    text = text.strip()
    m = _LIMITS.match(text)
    if m:
        vessel, quantity = m.group("vessel"), m.group("quantity")
        vessels = [v.name for v in network.vessels]
        if vessel is not None and vessel not in vessels:
            raise StudyError(f"--meet {text}: no vessel '{vessel}'; vessels: "
                             f"{', '.join(vessels)}")
        if quantity is not None and quantity not in _QUANTITIES:
            raise StudyError(f"--meet {text}: '{quantity}' is not one of "
                             f"{', '.join(_QUANTITIES)}")
        req = Requirement(text, "limits", vessel, quantity)
        stated = [o for o in outcomes if o.kind == "limit-margin"
                  and req._selects(o.name.removesuffix(".margin"), o.unit)]
        if not stated:
            raise StudyError(f"--meet {text}: the scenario states no such design limit; add a "
                             "'limits:' section to a vessel (docs/scenario-format.md) or write "
                             "a comparison such as 'separator.min_temperature >= -46 degC'")
        return req
    m = _COMPARE.match(text)
    if m:
        op = _OPS.get(m.group("op"), m.group("op"))
        outcome = find_outcome(m.group("name").strip(), outcomes)
        value = _value(m.group("value"), outcome, network.atmosphere, text)
        return Requirement(text, "compare", name=outcome.name, op=op, value=value,
                           unit=outcome.unit)
    bases = sorted({o.name.removesuffix(".met") for o in outcomes if o.kind == "limit-met"})
    if text in bases:
        return Requirement(text, "limit", name=text)
    import difflib
    close = difflib.get_close_matches(text, bases, n=2, cutoff=0.6)
    hint = f" Did you mean {' or '.join(repr(c) for c in close)}?" if close else ""
    raise StudyError(f"--meet '{text}': cannot read this requirement.{hint} Write 'limits' (all "
                     "design limits stated), a limit such as "
                     f"'{bases[0] if bases else 'separator.limit.depressure'}', or a comparison "
                     "such as 'separator.min_temperature >= -46 degC' or 'end_time <= 15 min'")


def _value(text: str, outcome, atmosphere: float, requirement: str) -> float:
    from ..units import UnitsError, read_quantity
    try:
        if outcome.dimension == "dimensionless":
            return float(text)
        # a margin is a difference: no gauge reference to add
        atm = 0.0 if outcome.difference else atmosphere
        return read_quantity(text, outcome.dimension, atmosphere=atm).value
    except (UnitsError, ValueError) as exc:
        raise StudyError(f"--meet '{requirement}': {exc}") from None


# ------------------------------------------------------------------ search

@dataclass
class _Point:
    x: float           # in the unit the range was written in
    text: str          # as given to the scenario
    row: dict          # raw row of the case
    met: bool = False
    checks: list = field(default_factory=list)
    f: float = math.nan  # combined margin, scaled (negative: not met)


@dataclass
class SeekResult:
    """What target seeking found.

    status      ``found``; ``at range end`` (the end of the range already meets:
                widen it); ``not found`` (no value in the range meets)
    value       the value found as text (``17.53 mm``), simulated and met; ``None``
                when not found
    number, unit   the same as a number in the range's unit
    value_si    the value as the scenario used it (SI), with ``si_unit``
    bracket     (not met, met) as texts: the crossing lies between them
    margins     at the value: (requirement check, met, margin [SI], unit)
    binding     the check with the smallest margin at the value
    simulations how many runs were made; ``rounds`` of them in parallel
    cases       every run, as a :class:`~cvsim.study.table.SweepResult`
    """

    key: str
    goal: str
    requirements: list
    status: str
    value: str | None
    number: float
    unit: str
    value_si: float | None
    si_unit: str
    bracket: tuple
    margins: list
    binding: str
    simulations: int
    rounds: int
    tolerance: float
    cases: object
    message: str = ""
    ran_on: str = ""
    wall_time: float = 0.0
    files: dict = field(default_factory=dict)
    source: object = field(default=None, repr=False)        # the Source searched
    parsed: list = field(default_factory=list, repr=False)  # the Requirements

    @property
    def overrides(self) -> dict:
        """{key: value} to run the answer: ``cvsim.run(path, overrides=r.overrides)``."""
        return {self.key: self.value} if self.value is not None else {}

    def as_dict(self) -> dict:
        return {
            "key": self.key, "goal": self.goal, "requirements": self.requirements,
            "status": self.status, "value": self.value, "number": self.number,
            "unit": self.unit, "value_si": self.value_si, "si_unit": self.si_unit,
            "bracket": list(self.bracket),
            "margins": [{"check": c, "met": m, "margin": g, "unit": u}
                        for c, m, g, u in self.margins],
            "binding": self.binding, "simulations": self.simulations, "rounds": self.rounds,
            "tolerance_relative": self.tolerance, "message": self.message,
            "ran_on": self.ran_on, "wall_time_s": self.wall_time,
            "scenario": self.cases.scenario, "provenance": self.cases.provenance,
            "files": {k: Path(v).name for k, v in self.files.items()}, "caution": CAUTION,
        }

    def text(self) -> str:
        from ..display import duration as _t
        from .table import Column, cell_text
        word = "smallest" if self.goal == "smallest" else "largest"
        L = [self.cases.title, "=" * min(len(self.cases.title), 78),
             f"The {word} {self.key} that meets: " + "; ".join(self.requirements), ""]
        if self.value is not None:
            L.append(f"  {self.key} = {self.value}"
                     + (f"  ({self.value_si:.6g} {self.si_unit} as used)"
                        if self.value_si is not None else ""))
        L.append(f"  {self.message}")
        if self.bracket[0] is not None:
            L.append(f"  bracket: not met at {self.bracket[0]}, met at {self.bracket[1]}")
        L.append(f"  {self.simulations} simulations in {self.rounds} parallel rounds on "
                 f"{self.ran_on}, {_t(self.wall_time)}")
        if self.margins:
            L += ["", "Margins at the value found (positive: met):"]
            for check, met, margin, unit in self.margins:
                col = Column(check, unit, "limit-margin", difference=True)
                shown = col.shown()[0]
                flag = "met    " if met else "NOT MET"
                L.append(f"  [{flag}] {check}: {cell_text(col, margin)} {shown}".rstrip()
                         + ("   <- binding" if check == self.binding else ""))
        L += ["", "Every simulation is listed in cases.csv (case numbers in the order run).",
              "", "CAUTION: " + CAUTION]
        return "\n".join(L) + "\n"

    def write(self, folder, plots: bool = True, run: bool = True,
              decimal_comma: bool = False) -> dict:
        """Write seek.txt, seek.json, cases.csv/.json/.txt, cases.png and, with
        ``run``, the full outputs of one more run at the value found (``run/``),
        atomically."""
        from ..outputs import atomic_folder, write_run_files
        from ..display import jsonable as _jsonable
        import json
        folder = Path(folder)
        with atomic_folder(folder) as tmp:
            mark = None
            if self.value is not None:
                mark = (self.number, f"{self.goal} meeting: {self.value}")
            outcomes = self.plot_outcomes()
            self.cases.write_files(tmp, plots=False, stem="cases")
            files = dict(self.cases.files)
            if plots:
                from .plot import plot_sweep
                answer = (f"{self.key} = {self.value}" if self.value is not None
                          else f"none found ({self.status})")
                subtitle = (f"Search for the {self.goal} {self.key} that meets: "
                            f"{'; '.join(self.requirements)}. {self.simulations} simulations; "
                            f"answer: {answer}")
                required = [(r.name, r.value, r.op) for r in self.parsed
                            if r.kind == "compare"]
                files["plot"] = plot_sweep(self.cases, tmp / "cases.png", outcomes, mark,
                                           subtitle, required)
            if run and self.value is not None:
                from ..api import run as run_scenario
                from ..scenario import load_scenario_bytes
                source = self.source
                scenario = load_scenario_bytes(source.data, source.name,
                                               {**source.overrides, **self.overrides})
                result = run_scenario(scenario)
                (tmp / "run").mkdir()
                write_run_files(result, tmp / "run", plots=plots, echo=scenario.echo,
                                decimal_comma=decimal_comma)
                files["run"] = tmp / "run"
            files["text"] = tmp / "seek.txt"
            files["json"] = tmp / "seek.json"
            self.files = files
            files["text"].write_text(self.text(), encoding="utf-8")
            with open(files["json"], "w", encoding="utf-8") as fh:
                json.dump(_jsonable(self.as_dict()), fh, indent=1)
                fh.write("\n")
        self.files = {k: folder / Path(v).name for k, v in files.items()}
        return dict(self.files)

    def plot_outcomes(self) -> list[str]:
        """Outcomes the requirements speak of, then the sweep defaults."""
        names = [r.name for r in self.parsed if r.kind == "compare"]
        names += [n for n in self.cases.outcome_defaults if n not in names]
        return names



def seek(scenario, vary: dict, meet="limits", goal: str = "smallest",
         workers: int | None = None, cluster: str | None = None,
         tolerance: float = TOLERANCE, max_runs: int = MAX_RUNS, progress: bool = True,
         overrides: dict | None = None, start_method: str | None = None) -> SeekResult:
    """Find the smallest (``goal='smallest'``) or largest value of one scenario
    key that meets the requirements.

    Parameters
    ----------
    scenario : path of a scenario file, or a loaded Scenario
    vary : dict
        one key path -> the range to search, ``"2 mm:30 mm"`` (scanned at a few
        points first), ``"2 mm:30 mm:8"`` (scanned at 8), ``"log:1 mm:100 mm"``,
        or a list of numbers in one unit to scan.
    meet : str or list of str
        requirements (module notes); all must hold. Default: every stated limit.
    goal : ``smallest`` or ``largest``
    tolerance : float
        relative width of the final bracket [-] (default 1e-3).
    max_runs : int
        most simulations to make, scan included.

    Returns
    -------
    SeekResult
    """
    from .outcomes import outcome_list
    from .parallel import Workers
    from .sweep import Source, parse_values
    started = time.time()
    if goal not in ("smallest", "largest"):
        raise StudyError(f"goal must be 'smallest' or 'largest', not {goal!r}")
    if not isinstance(vary, dict) or len(vary) != 1:
        raise StudyError("target seeking varies exactly one key, e.g. "
                         "--vary links.orifice.diameter='10 mm:30 mm'")
    if not (isinstance(tolerance, (int, float)) and 0 < tolerance < 0.5):
        raise StudyError(f"the tolerance must be a fraction between 0 and 0.5, not "
                         f"{tolerance!r} (--tolerance)")
    if not isinstance(max_runs, int) or max_runs < 3:
        raise StudyError(f"allow at least 3 simulations, not {max_runs!r} (--max-runs)")
    (key, spec), = vary.items()
    param = parse_values(key, spec, need_count=False)
    if not param.numbers:
        raise StudyError(f"--vary {param.key}: target seeking needs numbers in one unit, a range "
                         "such as '10 mm:30 mm' or a list such as '10 mm, 20 mm, 30 mm'")
    source = Source.of(scenario, overrides)
    meet = [meet] if isinstance(meet, str) else list(meet)
    if not meet:
        raise StudyError("--meet: give at least one requirement (e.g. --meet limits)")
    log = param.kind == "log"
    reference = source.reference([param], {param.key: param.values[0]})
    if reference is None:
        reference = _any_reference(source, param)
    outcomes = outcome_list(reference.network)
    requirements = [parse_requirement(m, outcomes, reference.network) for m in meet]

    state = _Search(param, requirements, goal, tolerance, log)
    with Workers(workers, cluster, start_method) as pool:
        slots = pool.slots
        ran_on = pool.describe()
        scan = _scan_points(param, slots, log)
        if param.kind not in ("linear", "log") or len(param.numbers) <= 2:
            scan = sorted({state.rounded(x) for x in scan})
        state.run(source, pool, scan, progress)
        state.bracket_from_scan()
        while state.status == "searching" and state.runs < max_runs:
            points = state.fresh(state.propose(min(slots, ROUND_POINTS, max_runs - state.runs)))
            if not points:  # rounding left nothing new to try: as close as the digits go
                state.status = "found"
                break
            state.run(source, pool, points, progress)
            state.update()
    return state.result(source, reference, ran_on, time.time() - started, max_runs)


def _any_reference(source, param):
    from ..errors import ScenarioError
    for text in param.values:
        try:
            return source.load({param.key: text})
        except ScenarioError:
            continue
    return source.load({param.key: param.values[0]})  # raises its problems


def _scan_points(param, slots: int, log: bool) -> list[float]:
    if param.kind in ("linear", "log") and len(param.numbers) > 2:
        return list(param.numbers)
    if param.kind == "list" and len(param.numbers) > 2:
        return sorted(param.numbers)
    n = slots * max(1, math.ceil(SCAN_POINTS / slots))
    a, b = min(param.numbers), max(param.numbers)
    return _spread(a, b, n, log, ends=True)


def _spread(a: float, b: float, n: int, log: bool, ends: bool = False) -> list[float]:
    """``n`` points evenly over [a, b] (``ends``) or inside (a, b)."""
    if ends:
        k = [i / (n - 1) for i in range(n)]
    else:
        k = [(i + 1) / (n + 1) for i in range(n)]
    if log and a > 0 and b > 0:
        return [a * (b / a) ** f for f in k]
    return [a + (b - a) * f for f in k]


class _Search:
    """The state of one search: every point run, the bracket, the Illinois memory."""

    def __init__(self, param, requirements, goal, tolerance, log):
        self.param = param
        self.requirements = requirements
        self.goal = goal
        self.tolerance = tolerance
        self.log = log
        self.points: list[_Point] = []
        self.rounds = 0
        self.status = "searching"
        self.scales: dict = {}
        self.a = self.b = None          # not met, met
        self.kept = None                # which end the last round kept: 'a' or 'b'
        self.estimate = None            # last false-position estimate

    @property
    def runs(self) -> int:
        return len(self.points)

    def text(self, x: float) -> str:
        from .sweep import number_text
        return f"{number_text(x)} {self.param.unit}".strip()

    def rounded(self, x: float) -> float:
        """A proposed value rounded to the digits the tolerance needs (and two
        more), so the answer reads as 17.579 mm, not 17.5787131313 mm."""
        digits = max(4, math.ceil(-math.log10(self.tolerance)) + 2)
        return float(f"{x:.{digits}g}")

    def run(self, source, pool, xs: list[float], progress: bool):
        from .sweep import run_cases
        texts = [self.text(x) for x in xs]
        rows = run_cases(source, [{self.param.key: t} for t in texts], pool, progress,
                         desc=f"round {self.rounds + 1}", first=self.runs + 1)
        for x, t, row in zip(xs, texts, rows):
            p = _Point(x, t, row)
            self._judge(p)
            self.points.append(p)
        self.rounds += 1

    def _judge(self, p: _Point):
        row = p.row
        units = {o.name: o.unit for o in row["outcomes"]}
        if row["status"] == "failed":
            p.checks = [(r.text, False, math.nan, "") for r in self.requirements]
        else:
            p.checks = [c for r in self.requirements for c in r.check(row["figures"], units)]
            if not p.checks:  # a requirement found nothing to check in this run
                p.checks = [(r.text, False, math.nan, "") for r in self.requirements]
        p.met = all(c[1] for c in p.checks)

    def _f(self, p: _Point) -> float:
        """Combined margin: the least of the checks' margins, each over its
        scale (its largest size in the scan); NaN when one is missing."""
        vals = []
        for label, met, margin, unit in p.checks:
            if not math.isfinite(margin):
                return math.nan
            vals.append(margin / self.scales.get(label, 1.0))
        return min(vals) if vals else math.nan

    def bracket_from_scan(self):
        for p in self.points:
            for label, _, margin, _ in p.checks:
                if math.isfinite(margin) and abs(margin) > self.scales.get(label, 0.0):
                    self.scales[label] = abs(margin)
        for p in self.points:
            p.f = self._f(p)
        ordered = sorted(self.points, key=lambda p: p.x,
                         reverse=self.goal == "largest")
        first = next((i for i, p in enumerate(ordered) if p.met), None)
        if first is None:
            self.status = "not found"
            return
        if first == 0:
            self.b = ordered[0]
            self.status = "at range end"
            return
        self.a, self.b = ordered[first - 1], ordered[first]
        self._check_done()

    def _width(self) -> float:
        return abs(self.b.x - self.a.x)

    def _check_done(self):
        span = abs(max(self.param.numbers) - min(self.param.numbers))
        if self._width() <= max(self.tolerance * abs(self.b.x), 1e-12 * span):
            self.status = "found"

    def propose(self, n: int) -> list[float]:
        """Points for the next round (``n`` of them, inside the bracket)."""
        a, b = self.a, self.b
        lo, hi = min(a.x, b.x), max(a.x, b.x)
        w = hi - lo
        tol = max(self.tolerance * abs(b.x), 1e-12 * w)
        if not (math.isfinite(a.f) and math.isfinite(b.f)) or a.f == b.f:
            return _spread(lo, hi, n, self.log)
        # Illinois: an end kept for a second round in a row counts half as much,
        # and half again for every further round
        fa = a.f * 0.5 ** max(0, self._stale_a - 1)
        fb = b.f * 0.5 ** max(0, self._stale_b - 1)
        x = a.x - fa * (b.x - a.x) / (fb - fa)
        guard = 0.25 * tol
        x = min(max(x, lo + guard), hi - guard)
        previous, self.estimate = self.estimate, x
        if n == 1:
            return [x]
        # one point each side of the estimate, spaced by its expected error
        err = abs(x - previous) if previous is not None else w / (2 * (n + 1))
        step = min(max(0.5 * err, 0.5 * tol), w / (n + 1))
        offsets = [(i - (n - 1) / 2) for i in range(n)]
        xs = sorted({min(max(x + o * step, lo + guard), hi - guard) for o in offsets})
        return xs

    _stale_a = 0
    _stale_b = 0

    def fresh(self, xs: list[float]) -> list[float]:
        """Proposed points rounded, without those already run."""
        done = {p.x for p in self.points}
        out = []
        for x in xs:
            r = self.rounded(x)
            if r not in done and min(self.a.x, self.b.x) < r < max(self.a.x, self.b.x):
                out.append(r)
                done.add(r)
        return out

    def update(self):
        """New bracket from every point run so far."""
        old_a, old_b = self.a, self.b
        toward = self.goal == "smallest"
        # the met end moves to the met point nearest the not-met side...
        inside = [p for p in self.points if min(old_a.x, old_b.x) < p.x < max(old_a.x, old_b.x)]
        met = [p for p in inside if p.met]
        if met:
            self.b = min(met, key=lambda p: p.x) if toward else max(met, key=lambda p: p.x)
        # ...and the not-met end to the not-met point nearest it
        lo, hi = min(old_a.x, self.b.x), max(old_a.x, self.b.x)
        not_met = [p for p in self.points if lo <= p.x <= hi and not p.met]
        if not_met:
            self.a = max(not_met, key=lambda p: p.x) if toward else min(not_met, key=lambda p: p.x)
        for p in inside:
            p.f = self._f(p)
        if self.a is old_a:
            self._stale_a += 1
            self._stale_b = 0
            self.kept = "a"
        elif self.b is old_b:
            self._stale_b += 1
            self._stale_a = 0
            self.kept = "b"
        else:
            self._stale_a = self._stale_b = 0
            self.kept = None
        self._check_done()

    def result(self, source, reference, ran_on: str, wall: float, max_runs: int) -> SeekResult:
        from .sweep import Parameter
        from .table import SweepResult
        p = self.param
        texts = tuple(pt.text for pt in self.points)
        numbers = tuple(pt.x for pt in self.points)
        kind = "log" if self.log else "linear"
        cases_param = Parameter(p.key, p.spec, texts, kind, p.unit, numbers)
        cases = SweepResult.build(source, [cases_param], [{p.key: t} for t in texts],
                                  [pt.row for pt in self.points], reference, ran_on=ran_on,
                                  wall_time=wall)
        word = "smallest" if self.goal == "smallest" else "largest"
        status = self.status
        b = self.b
        if status == "searching":
            status = "found"
            message = (f"stopped at {max_runs} simulations before the bracket narrowed to the "
                       f"tolerance ({self.tolerance:g} relative); the value is met, the bracket "
                       "shows how close it is")
        elif status == "found":
            message = (f"{word} value meeting every requirement, to a relative tolerance of "
                       f"{self.tolerance:g}")
        elif status == "at range end":
            end = "lower" if self.goal == "smallest" else "upper"
            message = (f"the {end} end of the range already meets every requirement; widen the "
                       f"range {'downwards' if end == 'lower' else 'upwards'} to find the "
                       "crossing")
        else:
            best = max(self.points, key=lambda q: q.f if math.isfinite(q.f) else -math.inf)
            message = (f"no simulated value in {p.spec} meets every requirement (nearest: "
                       f"{best.text}); widen the range or relax the requirement")
        margins, binding, value_si, si_unit = [], "", None, ""
        if b is not None and status != "not found":
            margins = b.checks
            finite = [(m / self.scales.get(c, 1.0), c) for c, _, m, _ in b.checks
                      if math.isfinite(m)]
            binding = min(finite)[1] if finite else ""
            si = b.row["si"].get(p.key)
            if si is not None:
                value_si, si_unit = si
        found = b is not None and status != "not found"
        out = SeekResult(
            key=p.key, goal=self.goal, requirements=[r.text for r in self.requirements],
            status=status, value=b.text if found else None,
            number=b.x if found else math.nan, unit=p.unit, value_si=value_si,
            si_unit=si_unit,
            bracket=(self.a.text if self.a is not None and found else None,
                     b.text if found else None),
            margins=margins, binding=binding, simulations=self.runs, rounds=self.rounds,
            tolerance=self.tolerance, cases=cases, message=message, ran_on=ran_on,
            wall_time=wall, source=source, parsed=list(self.requirements))
        return out


__all__ = ["Requirement", "SeekResult", "parse_requirement", "seek"]
