"""Sweeps: run a scenario for many values of one or more of its keys, in parallel.

Any scenario value can be varied by its key path, with the values written as
text with their units, exactly as in the file; the scenario reader converts
each case (so each case's echo shows what was used)::

    links.vent.diameter = 6 mm, 8 mm, 10 mm        a list
    links.vent.diameter = 5 mm:25 mm:9             9 values evenly spaced
    links.vent.diameter = log:1 mm:100 mm:5        5 values evenly spaced in log
    run.solver.method   = LSODA, BDF               words, mappings ({...}) too

Several varied keys form a grid (every combination). Every case runs in its
own worker process (:mod:`cvsim.study.parallel`: local processes by default, a Dask
cluster on request) and gives one row of a :class:`~cvsim.study.table.SweepResult`:
the values, the status, the error of a failed case, and its outcomes
(:mod:`cvsim.study.outcomes`). A case that fails - an impossible value the reader
rejects, a run the solver cannot finish, even a crash of its worker - is a
row with its error; the sweep always goes on. A case that runs longer than its
time limit (:data:`CASE_TIME_LIMIT` unless told otherwise) is stopped and fails
with that reason. When the sweep itself is stopped (Ctrl-C, SIGTERM) the cases
that finished are kept: :class:`Interrupted` carries them as a table marked
partial.

>>> from cvsim import sweep                                           # doctest: +SKIP
>>> result = sweep("scenarios/nitrogen-blowdown.yaml",
...                vary={"links.vent.diameter": "6 mm:20 mm:8"})     # doctest: +SKIP
>>> result.write("results/orifice-sweep")                          # doctest: +SKIP
"""
from __future__ import annotations

import itertools
import math
import re
import time
from dataclasses import dataclass, field
from pathlib import Path

from ..errors import CvsimError, ScenarioError, StudyError
from .table import NOT_RUN, SweepResult, value_text  # noqa: F401  (value_text re-exported)

#: largest number of values a range may ask for, and of cases in one sweep
MAX_VALUES = 10_000
MAX_CASES = 1_000_000
#: [s] default wall-clock limit of one case (``--case-time-limit``): long enough for
#: any demo scenario many times over, short enough that one case that cannot
#: finish (a very long run, a solver crawling) does not hold a sweep for hours
CASE_TIME_LIMIT = 600.0


class Interrupted(KeyboardInterrupt):
    """A sweep stopped by Ctrl-C or SIGTERM. ``rows``: the raw rows in case
    order (``None`` for a case not finished); ``result``: the
    :class:`~cvsim.study.table.SweepResult` of the finished cases, marked
    partial (set by :func:`sweep`); ``cause``: the interrupt itself."""

    def __init__(self, rows=None, cause: BaseException | None = None):
        super().__init__("interrupted")
        self.rows = rows
        self.cause = cause
        self.result = None


# ------------------------------------------------------------- parameters

@dataclass(frozen=True)
class Parameter:
    """One varied scenario key and its values, as text.

    key     dotted key path (``links.vent.diameter``)
    spec    the values as the user wrote them (``5 mm:25 mm:9``)
    values  each value as given to the scenario reader (text, or a number or
            mapping from the Python API)
    kind    ``list``, ``linear`` or ``log``
    unit    the unit all values are written in (``""``: none or mixed)
    numbers the values as numbers in ``unit`` (empty unless all share a unit)
    """

    key: str
    spec: str
    values: tuple
    kind: str = "list"
    unit: str = ""
    numbers: tuple = ()

    def texts(self) -> list[str]:
        return [value_text(v) for v in self.values]


def number_text(x: float) -> str:
    """A generated number as text, without binary noise (``7.5``, ``31.6227766017``)."""
    text = f"{x:.12g}"
    return "0" if text == "-0" else text


def _quantity(text: str, key: str, what: str) -> tuple[float, str]:
    from ..units import split_quantity
    split = split_quantity(text)
    if split is None or not math.isfinite(split[0]):
        raise StudyError(f"--vary {key}: cannot read '{text}' as the {what} of a range; "
                         "write a number and its unit, e.g. '5 mm:25 mm:9'")
    return split


def _count(text: str, key: str) -> int:
    try:
        n = int(text.strip())
    except ValueError:
        n = 0
    if not 2 <= n <= MAX_VALUES or str(n) != text.strip():
        raise StudyError(f"--vary {key}: the number of values of a range must be a whole "
                         f"number from 2 to {MAX_VALUES}, not '{text.strip()}' (e.g. "
                         "'5 mm:25 mm:9')")
    return n


def range_values(key: str, start: str, stop: str, count: int | None, log: bool
                 ) -> tuple[list[float], str]:
    """Numbers of a range written ``start:stop[:count]`` (same unit at both
    ends); ``count=None`` gives the two ends (target seeking scans them itself)."""
    a, unit_a = _quantity(start, key, "start")
    b, unit_b = _quantity(stop, key, "end")
    if unit_a != unit_b:
        raise StudyError(f"--vary {key}: write both ends of a range in the same unit "
                         f"('{start}' and '{stop}' differ); e.g. '5 mm:25 mm:9'")
    if a == b:
        raise StudyError(f"--vary {key}: the range {start}:{stop} is empty; give two "
                         "different ends")
    if log and (a <= 0 or b <= 0):
        raise StudyError(f"--vary {key}: a log range needs both ends above zero "
                         f"(got {start} and {stop})")
    if count is None:
        return [a, b], unit_a
    if log:
        la, lb = math.log10(a), math.log10(b)
        numbers = [10 ** (la + (lb - la) * i / (count - 1)) for i in range(count)]
        numbers[0], numbers[-1] = a, b
    else:
        numbers = [a + (b - a) * i / (count - 1) for i in range(count)]
        numbers[-1] = b
    return numbers, unit_a


def split_top(text: str, sep: str) -> list[str]:
    """Split at ``sep`` outside brackets, braces and quotes."""
    parts, depth, quote, start = [], 0, "", 0
    for i, ch in enumerate(text):
        if quote:
            quote = "" if ch == quote else quote
        elif ch in "'\"":
            quote = ch
        elif ch in "[{(":
            depth += 1
        elif ch in "]})":
            depth -= 1
        elif ch == sep and depth == 0:
            parts.append(text[start:i])
            start = i + 1
    parts.append(text[start:])
    return [p.strip() for p in parts]


_LOG = re.compile(r"\s*log\s*:", re.I)
_UNIT = re.compile(r"(|[A-Za-z°%µ].*)")


def _looks_like_quantity(text: str) -> bool:
    from ..units import split_quantity
    split = split_quantity(text)
    return split is not None and bool(_UNIT.fullmatch(split[1]))


def _range_item(item: str) -> tuple[bool, list[str]]:
    """(is a range, its parts) for one comma-separated item."""
    log = bool(_LOG.match(item))
    body = _LOG.sub("", item, count=1) if log else item
    parts = [p.strip() for p in body.split(":")]
    if log:
        return True, parts
    if "{" in body or "[" in body or len(parts) not in (2, 3):
        return False, parts
    return _looks_like_quantity(parts[0]) and _looks_like_quantity(parts[1]), parts


def parse_values(key: str, spec, need_count: bool = True) -> Parameter:
    """The values of one varied key from text or from a Python list.

    Text is a comma-separated list whose items are values or ranges:
    ``6 mm, 8 mm``; ``5 mm:25 mm:9`` (9 values evenly spaced, ends included);
    ``log:1 mm:100 mm:5`` (evenly spaced in log); ``2 mm, 5 mm:25 mm:5``.
    Commas and colons inside ``{...}`` or ``[...]`` belong to the value.
    ``need_count=False`` allows one range without a count (``2 mm:30 mm``), as
    target seeking takes it.
    """
    key = normal_key(key)
    if isinstance(spec, (list, tuple)):
        if not spec:
            raise StudyError(f"vary {key}: give at least one value")
        values = tuple(spec)
        numbers, unit = _numbers(values)
        return Parameter(key, ", ".join(value_text(v) for v in values), values, "list",
                         unit, numbers)
    if not isinstance(spec, str) or not spec.strip():
        raise StudyError(f"--vary {key}: give the values after '=', e.g. "
                         f"{key}=6 mm,8 mm,10 mm or {key}=5 mm:25 mm:9")
    spec = spec.strip()
    items = split_top(spec, ",")
    if any(not v for v in items):
        raise StudyError(f"--vary {key}: an empty value in '{spec}'; separate values "
                         "with single commas, e.g. '6 mm, 8 mm, 10 mm'")
    values: list = []
    kind = "list"
    for item in items:
        is_range, parts = _range_item(item)
        if not is_range:
            values.append(item)
            continue
        log = bool(_LOG.match(item))
        if len(parts) not in (2, 3) or (log and len(parts) != 3 and need_count):
            raise StudyError(f"--vary {key}: write a range as 'START:END:COUNT' "
                             "(e.g. '5 mm:25 mm:9') or 'log:START:END:COUNT' "
                             f"(e.g. 'log:1 mm:100 mm:5'), not '{item}'")
        count = _count(parts[2], key) if len(parts) == 3 else None
        if count is None and (need_count or len(items) > 1):
            raise StudyError(f"--vary {key}: give the number of values of the range after "
                             f"a second ':', e.g. '{parts[0]}:{parts[1]}:9'")
        numbers, unit = range_values(key, parts[0], parts[1], count, log)
        values += [f"{number_text(x)} {unit}".strip() for x in numbers]
        kind = ("log" if log else "linear") if len(items) == 1 else "list"
    numbers, unit = _numbers(values)
    return Parameter(key, spec, tuple(values), kind, unit, numbers)


def _numbers(values) -> tuple[tuple, str]:
    """(numbers, unit) of values that all share a unit (or are plain numbers);
    ``((), "")`` otherwise."""
    from ..units import split_quantity
    out, units_ = [], set()
    for v in values:
        if isinstance(v, (int, float)) and not isinstance(v, bool):
            out.append(float(v))
            units_.add("")
            continue
        split = split_quantity(v) if isinstance(v, str) else None
        if split is None or not _UNIT.fullmatch(split[1]):
            return (), ""
        out.append(split[0])
        units_.add(split[1])
    return (tuple(out), units_.pop()) if len(units_) == 1 else ((), "")


def parse_vary(item: str, need_count: bool = True) -> Parameter:
    """``KEY=VALUES`` (the command line's ``--vary``) -> :class:`Parameter`."""
    if "=" not in item:
        raise StudyError(f"--vary '{item}': write KEY=VALUES, e.g. "
                         "--vary links.vent.diameter='6 mm,8 mm,10 mm'")
    key, spec = item.split("=", 1)
    if not key.strip():
        raise StudyError(f"--vary '{item}': the key path before '=' is missing")
    return parse_values(key.strip(), spec, need_count)


def normal_key(key: str) -> str:
    """A key path as the scenario reader writes it (``stop_when.0`` -> ``stop_when[0]``)."""
    from ..scenario.tree import key_path, split_path
    text = key_path(split_path(str(key)))
    if not text:
        raise StudyError(f"vary: '{key}' is not a key path (write e.g. links.vent.diameter)")
    return text


def grid(parameters: list[Parameter]) -> list[dict]:
    """Every combination of the values (the first key varies slowest)."""
    n = math.prod(len(p.values) for p in parameters)
    if n > MAX_CASES:
        raise StudyError(f"the grid has {n} cases, more than {MAX_CASES}; vary fewer keys "
                         "or fewer values")
    return [dict(zip((p.key for p in parameters), combo))
            for combo in itertools.product(*(p.values for p in parameters))]


# ----------------------------------------------------------------- source

@dataclass(frozen=True)
class Source:
    """The scenario every case starts from: the file's bytes (sent to the
    workers, which need not see the file), its name, and fixed overrides."""

    data: bytes
    name: str
    overrides: dict = field(default_factory=dict)

    @classmethod
    def of(cls, scenario, overrides: dict | None = None) -> "Source":
        from ..scenario import Scenario
        fixed = {normal_key(k): v for k, v in (overrides or {}).items()}
        if isinstance(scenario, Scenario):
            return cls(scenario.source_text.encode("utf-8"), scenario.source_name,
                       {**{normal_key(k): v for k, v in scenario.overrides.items()}, **fixed})
        if isinstance(scenario, (str, Path)):
            path = Path(scenario)
            try:
                data = path.read_bytes()
            except OSError as exc:
                from ..errors import Problem
                raise ScenarioError([Problem("", f"cannot read the file: "
                                                 f"{exc.strerror or exc}")], str(path)) from None
            return cls(data, str(path), fixed)
        raise TypeError(f"a sweep starts from a scenario file path or a loaded Scenario, "
                        f"not a {type(scenario).__name__}")

    def load(self, case: dict | None = None):
        from ..scenario import load_scenario_bytes
        return load_scenario_bytes(self.data, self.name, {**self.overrides, **(case or {})})

    def reference(self, parameters: list[Parameter], first: dict):
        """Check the varied keys against the file; return the scenario loaded
        without the varied values (or with the first case's), or ``None``.

        Raises :class:`StudyError` for a key path the scenario does not have, and
        the :class:`ScenarioError` of a file whose problems no varied value explains.
        """
        keys = {p.key for p in parameters}
        loaded = {}
        errors = {}
        for name, case in (("first", first), ("base", None)):
            try:
                loaded[name] = self.load(case)
            except ScenarioError as exc:
                errors[name] = exc
        for p in getattr(errors.get("first"), "problems", ()):
            if normal_key(p.key) in keys and p.message.startswith(("override:", "unknown key")):
                message = p.message.removeprefix("override: ").replace(" (set by override)", "")
                raise StudyError(f"--vary {normal_key(p.key)}: {message}; the key path must "
                                 "name a key of the scenario format (docs/scenario-format.md)")
        if "base" in loaded:  # the file is sound: a case's problems are its own
            return loaded["base"]
        if "first" in loaded:
            return loaded["first"]
        first_error = errors["first"]
        if any(not _under(p.key, keys) for p in first_error.problems):
            raise first_error  # problems no varied value explains: fix the file first
        return None


def _under(key: str, keys: set) -> bool:
    try:
        key = normal_key(key) if key else ""
    except StudyError:
        return False
    return any(key == k or key.startswith((k + ".", k + "[")) for k in keys)


# ------------------------------------------------------------------ cases

def run_case(job: dict) -> dict:
    """Run one case (in a worker process): load with its overrides, run, take
    the outcomes. Never raises: a failure is the row's status and error."""
    from ..api import run_network
    from .outcomes import outcome_values
    from ..solve import time_limit
    row = {"case": job["case"], "si": {}, "status": "failed", "error": "",
           "outcomes": [], "figures": {}}
    try:
        scenario = Source(job["data"], job["name"], job["fixed"]).load(job["values"])
        echo = {r.key: r for r in scenario.echo}
        for key in job["values"]:
            r = echo.get(key)
            if r is not None and isinstance(r.value, (int, float, str)):
                row["si"][key] = (r.value, r.unit)
        with time_limit(job.get("time_limit")):
            result = run_network(scenario.network, scenario)
    except ScenarioError as exc:  # the case's values: name the keys, not the file
        row["error"] = "; ".join(str(p) for p in exc.problems)
        return row
    except CvsimError as exc:
        row["error"] = _one_line(str(exc))
        return row
    except Exception as exc:  # a bug must not stop the sweep; the row says what it was
        row["error"] = f"internal error {type(exc).__name__}: {exc} (please report it)"
        return row
    row["status"] = result.status
    if not result.ok:
        row["error"] = _one_line(result.message)
        return row
    outcomes, values = outcome_values(result)
    row["outcomes"] = outcomes
    row["figures"] = values
    return row


def _one_line(text: str) -> str:
    """A message on one line (the problems of a scenario joined by '; ')."""
    out = ""
    for line in (x.strip().lstrip("- ").strip() for x in text.splitlines()):
        if line:
            out += (" " if not out or out.endswith(":") else "; ") + line
    return out.strip()


def make_jobs(source: Source, cases: list[dict], first: int = 1,
              time_limit: float | None = CASE_TIME_LIMIT) -> list[dict]:
    return [{"case": first + i, "data": source.data, "name": source.name,
             "fixed": source.overrides, "values": case, "time_limit": time_limit}
            for i, case in enumerate(cases)]


def run_cases(source: Source, cases: list[dict], workers, progress: bool,
              desc: str = "cases", first: int = 1,
              time_limit: float | None = CASE_TIME_LIMIT) -> list[dict]:
    """Run the cases on ``workers`` (a :class:`~cvsim.study.parallel.Workers`);
    raw rows in case order. Ctrl-C or SIGTERM raises :class:`Interrupted`
    with the rows finished so far."""
    jobs = make_jobs(source, cases, first, time_limit)
    rows: list = [None] * len(jobs)
    bar = _bar(len(jobs), desc, progress)
    try:
        for i, ok, value in workers.map(run_case, jobs):
            rows[i] = value if ok else {"case": jobs[i]["case"], "si": {}, "status": "failed",
                                        "error": str(value), "outcomes": [], "figures": {}}
            bar.update(1)
    except Interrupted:
        raise
    except KeyboardInterrupt as exc:
        raise Interrupted(rows, exc) from None
    finally:
        bar.close()
    return rows


def not_run_row(case: int) -> dict:
    return {"case": case, "si": {}, "status": NOT_RUN,
            "error": "the sweep was stopped before this case finished", "outcomes": [],
            "figures": {}}


def _bar(total: int | None, desc: str, progress: bool):
    """A progress bar (tqdm) without tqdm's monitor thread: a thread in the
    parent would make forking worker processes unsafe for later sweeps."""
    from tqdm.auto import tqdm

    class Bar(tqdm):
        monitor_interval = 0

    return Bar(total=total, desc=desc, unit="case", disable=not progress, leave=False,
               dynamic_ncols=True)


# -------------------------------------------------------------------- API

def sweep(scenario, vary: dict, workers: int | None = None, cluster: str | None = None,
          progress: bool = True, overrides: dict | None = None,
          start_method: str | None = None, plot: list[str] | None = None,
          case_time_limit: float | None = CASE_TIME_LIMIT) -> SweepResult:
    """Run ``scenario`` for every combination of the values in ``vary``.

    Parameters
    ----------
    scenario : path of a scenario file, or a :class:`~cvsim.scenario.Scenario`
    vary : dict
        key path -> values: text (``"6 mm, 8 mm"``, ``"5 mm:25 mm:9"``,
        ``"log:1 mm:100 mm:5"``) or a Python list (``["6 mm", "8 mm"]``).
    workers : int, optional
        local worker processes (default: one per CPU).
    cluster : str, optional
        a Dask scheduler address (``tcp://host:8786``) to run on instead.
    progress : bool
        show a progress bar (tqdm).
    overrides : dict, optional
        fixed changes for every case (key path -> value), like ``cvsim run --set``.
    start_method : str, optional
        ``fork``, ``forkserver`` or ``spawn`` for local processes (default: see
        :func:`cvsim.study.parallel.default_start_method`).
    plot : list of str, optional
        outcomes the plot draws (default: :func:`~cvsim.study.table.default_outcomes`);
        checked before any case runs.
    case_time_limit : float or None
        [s] wall-clock limit of one case (default :data:`CASE_TIME_LIMIT`); a case
        that takes longer is stopped and fails with that reason. ``None``: no limit.

    Returns
    -------
    SweepResult
        one row per case, in case order; failed cases included.

    Raises
    ------
    StudyError
        a key path the scenario does not have, values that cannot be read.
    ScenarioError
        the scenario has problems that no varied value explains.
    ClusterError
        Dask missing or its scheduler unreachable.
    Interrupted
        Ctrl-C or SIGTERM: its ``result`` holds the finished cases, marked partial.
    """
    if not isinstance(vary, dict) or not vary:
        raise StudyError("give at least one key to vary, e.g. "
                         "vary={'links.vent.diameter': '6 mm, 8 mm, 10 mm'} (--vary)")
    parameters = [parse_values(k, v) for k, v in vary.items()]
    check_distinct(parameters)
    source = Source.of(scenario, overrides)
    cases = grid(parameters)
    reference = source.reference(parameters, cases[0])
    if plot is not None:
        plot = check_outcomes(plot, reference)
    if case_time_limit is not None and not case_time_limit > 0:
        raise StudyError(f"the case time limit must be above zero, not {case_time_limit!r} "
                         "(--case-time-limit; 'none' for no limit)")
    try:
        result = run_table(source, parameters, cases, reference, workers, cluster,
                           start_method, progress, case_time_limit, "sweep", "")
    except Interrupted as stop:
        if plot is not None:
            stop.result.outcome_defaults = plot
        raise
    if plot is not None:
        result.outcome_defaults = plot
    return result


def run_table(source, parameters, cases, reference, workers, cluster, start_method,
              progress, case_time_limit, what: str, left_out: str) -> SweepResult:
    """Run ``cases`` on local workers or a Dask cluster and collect their table.
    Stopped part-way (Ctrl-C, SIGTERM), the finished rows are kept in a table marked
    PARTIAL (the others ``not run``), set on the :class:`Interrupted` as ``result``,
    which is raised again; ``what`` names the study and ``left_out`` says what else
    leaves the unfinished cases out, in that mark."""
    from .parallel import Workers
    started = time.time()
    where = ""
    try:
        with Workers(workers, cluster, start_method) as pool:
            where = pool.describe()
            rows = run_cases(source, cases, pool, progress, time_limit=case_time_limit)
    except Interrupted as stop:
        done = sum(r is not None for r in stop.rows)
        rows = [r if r is not None else not_run_row(i + 1) for i, r in enumerate(stop.rows)]
        table = SweepResult.build(source, parameters, cases, rows, reference,
                                  ran_on=where, wall_time=time.time() - started)
        left = len(rows) - done
        table.partial = (f"PARTIAL: the {what} was stopped after {done} of {len(rows)} "
                         f"cases; the {left} not finished {'is' if left == 1 else 'are'} "
                         f"marked '{NOT_RUN}'{left_out}")
        stop.result = table
        raise
    return SweepResult.build(source, parameters, cases, rows, reference,
                             ran_on=where, wall_time=time.time() - started)


def check_outcomes(names, reference) -> list[str]:
    """Outcome names as given, each checked against the scenario's outcomes."""
    from .outcomes import find_outcome, outcome_list
    names = [names] if isinstance(names, str) else list(names)
    if reference is not None:
        known = outcome_list(reference.network)
        for name in names:
            find_outcome(name, known, "outcome for --plot")
    return names


def check_distinct(parameters: list[Parameter]) -> None:
    seen = set()
    for p in parameters:
        if p.key in seen:
            raise StudyError(f"--vary {p.key} is given twice; put all its values in one "
                             "--vary")
        seen.add(p.key)


__all__ = ["CASE_TIME_LIMIT", "Interrupted", "Parameter", "Source", "check_distinct",
           "check_outcomes", "grid", "parse_values", "parse_vary", "run_case", "sweep"]
