"""The table of a sweep: one row per case, its columns described, its files.

:class:`SweepResult` is what :func:`cvsim.sweep` returns and what a report
renders: the varied parameters, the columns (name, SI unit, kind, words), the
rows (plain dicts, SI values), where and how long it ran, and - once written -
the files (``sweep.csv``, ``sweep.json``, ``sweep.txt``, ``sweep.png``).

Row keys (and columns, in this order): ``case``; per varied key its value as
given (``links.vent.diameter``) and in SI (``links.vent.diameter.si``);
``status`` (``completed``, ``stopped``, ``failed``, or ``not run`` in a sweep
that was stopped: :attr:`SweepResult.partial` then says so in every file);
``error`` (the message of a failed case); then the outcomes of :mod:`cvsim.study.outcomes` (SI; blank for a
failed case, whose figures up to the failure would mislead), with limit
checks' ``.met`` as True/False.
"""
from __future__ import annotations

import hashlib
import json
import math
from dataclasses import asdict, dataclass, field
from pathlib import Path

from ..result import CAUTION

#: shown units of differences (margins): a margin in K is not a temperature in degC
DIFFERENCE_DISPLAY = {"Pa": ("bar", lambda v: v / 1e5)}
#: an outcome whose cases differ by less than this fraction of its size does not
#: change (solver round-off), and is left out of the default plot
VARIES = 1e-6
#: the text table shows at most this many characters of a failed case's error
ERROR_CHARS = 160
#: status of a case a stopped sweep did not finish (as :mod:`cvsim.study.sweep` writes)
NOT_RUN = "not run"


@dataclass(frozen=True)
class Column:
    """One column of the sweep table.

    name        row key (``receiver.min_temperature``)
    unit        SI unit of the values in :attr:`SweepResult.rows` (``""``: none)
    kind        ``case``, ``parameter``, ``parameter-si``, ``status``, ``error``,
                ``figure``, ``limit-met``, ``limit-value``, ``limit-actual``, ``limit-margin``
    text        what it is, in words
    difference  a difference (margin): shown in K or bar
    """

    name: str
    unit: str = ""
    kind: str = "figure"
    text: str = ""
    difference: bool = False

    def shown(self) -> tuple[str, object]:
        """(unit shown in files, converter from SI)."""
        from ..display import display
        if self.kind == "parameter-si":  # the value as the scenario used it: SI
            return self.unit, (lambda v: v)
        if self.difference and self.unit in DIFFERENCE_DISPLAY:
            return DIFFERENCE_DISPLAY[self.unit]
        if self.difference:
            return self.unit, (lambda v: v)
        return display(self.unit)

    def header(self) -> str:
        unit = self.shown()[0]
        return f"{self.name} [{unit}]" if unit else self.name


@dataclass(frozen=True)
class _Scaled(Column):
    """A column shown in another unit than its SI values (times in min, flows in g/s)."""

    unit_shown: str = ""
    size: float = 1.0

    def shown(self) -> tuple[str, object]:
        return self.unit_shown, (lambda v: v / self.size)


@dataclass
class SweepResult:
    """Rows of a sweep (see the module notes); build with :meth:`build`."""

    title: str
    scenario: str
    parameters: list
    columns: list
    rows: list
    atmosphere: float
    provenance: dict = field(default_factory=dict)
    ran_on: str = ""
    wall_time: float = 0.0
    outcome_defaults: list = field(default_factory=list)
    files: dict = field(default_factory=dict)
    partial: str = ""      # the sweep was stopped: what is missing ("" when complete)
    decimal_comma: bool = False  # CSV for decimal-comma spreadsheets: ';' and 1,5
    warnings: list = field(default_factory=list)  # e.g. a plot that could not be drawn

    # ------------------------------------------------------------- build
    @classmethod
    def build(cls, source, parameters, cases, raw_rows, reference, ran_on="",
              wall_time=0.0) -> "SweepResult":
        from ..api import provenance as versions
        from .outcomes import outcome_list
        columns = [Column("case", "", "case", "case number")]
        for p in parameters:
            si_unit = next((r["si"][p.key][1] for r in raw_rows if p.key in r["si"]), "")
            columns.append(Column(p.key, "", "parameter", f"{p.key} as given"))
            columns.append(Column(f"{p.key}.si", si_unit, "parameter-si",
                                  f"{p.key} as used (SI)"))
        columns += [Column("status", "", "status", "completed, stopped or failed"),
                    Column("error", "", "error", "why a case failed")]
        outcomes = list(outcome_list(reference.network)) if reference is not None else []
        known = {o.name for o in outcomes}
        for r in raw_rows:
            for o in r["outcomes"]:
                if o.name not in known:
                    outcomes.append(o)
                    known.add(o.name)
        # a limit's words as the run states them ("depressured to 6.9 bar g within 15 min")
        said = {o.name: o.text for r in raw_rows for o in r["outcomes"]
                if o.kind.startswith("limit")}
        columns += [Column(o.name, o.unit, o.kind, said.get(o.name, o.text), o.difference)
                    for o in outcomes]
        rows = []
        for case, r in zip(cases, raw_rows):
            row = {"case": r["case"]}
            for p in parameters:
                row[p.key] = value_text(case[p.key])
                si = r["si"].get(p.key)
                row[f"{p.key}.si"] = si[0] if si else None
            row["status"] = r["status"]
            row["error"] = r["error"]
            for o in outcomes:
                v = r["figures"].get(o.name)
                if v is not None and o.kind == "limit-met":
                    v = bool(v)
                row[o.name] = v
            rows.append(row)
        prov = versions(None)
        prov["scenario"] = source.name
        prov["scenario_sha256"] = hashlib.sha256(source.data).hexdigest()
        if source.overrides:
            prov["overrides"] = {k: str(v) for k, v in source.overrides.items()}
        if reference is not None:
            title, atm = reference.network.title, reference.network.atmosphere
        else:
            from ..units import ATMOSPHERE
            title, atm = Path(source.name).stem, ATMOSPHERE
        result = cls(title=title, scenario=source.name, parameters=list(parameters),
                     columns=columns, rows=rows, atmosphere=atm, provenance=prov,
                     ran_on=ran_on, wall_time=wall_time)
        result.outcome_defaults = default_outcomes(result, reference)
        return result

    # ------------------------------------------------------------ access
    def column(self, name: str) -> Column:
        for c in self.columns:
            if c.name == name:
                return c
        from .outcomes import Outcome, find_outcome
        find_outcome(name, [Outcome(c.name, c.unit, "", c.text) for c in self.columns
                            if c.kind not in ("case", "status", "error")], "column")
        raise AssertionError("unreachable")  # pragma: no cover

    def values(self, name: str) -> list:
        """One column's values, case by case (SI)."""
        self.column(name)
        return [r.get(name) for r in self.rows]

    def outcome_names(self) -> list[str]:
        return [c.name for c in self.columns if c.kind not in
                ("case", "parameter", "parameter-si", "status", "error")]

    @property
    def failed(self) -> list[dict]:
        return [r for r in self.rows if r["status"] == "failed"]

    def counts(self) -> dict:
        out = {"completed": 0, "stopped": 0, "failed": 0}
        for r in self.rows:
            out[r["status"]] = out.get(r["status"], 0) + 1
        return out

    def to_dataframe(self):
        """The rows as a pandas DataFrame (SI values; needs pandas:
        ``pip install -e '.[dataframe]'`` in the cvsim checkout), with ``df.attrs``: ``caution``, ``title``,
        ``provenance`` and ``units`` (column name -> SI unit)."""
        try:
            import pandas as pd
        except ImportError:
            from ..errors import StudyError
            raise StudyError("to_dataframe() needs pandas: pip install -e '.[dataframe]' in "
                             "the cvsim checkout"
                             ) from None
        names = [c.name for c in self.columns]
        df = pd.DataFrame([[r.get(n) for n in names] for r in self.rows], columns=names)
        # every output a person could act on carries the caution (pandas keeps attrs
        # through most operations; to_csv does not write them)
        df.attrs.update({"caution": CAUTION, "title": self.title,
                         "provenance": dict(self.provenance),
                         "units": {c.name: c.unit for c in self.columns}})
        return df

    def as_dict(self) -> dict:
        """Everything, as plain data (what sweep.json holds)."""
        return {
            "title": self.title, "scenario": self.scenario,
            "parameters": [{"key": p.key, "values": p.spec, "kind": p.kind,
                            "count": len(p.values)} for p in self.parameters],
            "cases": len(self.rows), "counts": self.counts(),
            "complete": not self.partial, "partial": self.partial,
            "warnings": list(self.warnings),
            "ran_on": self.ran_on, "wall_time_s": self.wall_time,
            "atmosphere_Pa": self.atmosphere,
            "columns": [asdict(c) for c in self.columns],
            "rows": self.rows,
            "plot_outcomes": self.outcome_defaults,
            "files": {k: str(Path(v).name) for k, v in self.files.items()},
            "provenance": self.provenance, "caution": CAUTION,
        }

    # ------------------------------------------------------------- files
    def write(self, folder, plots: bool = True, outcomes: list[str] | None = None) -> dict:
        """Write sweep.csv, sweep.json, sweep.txt and (unless ``plots=False``)
        sweep.png into ``folder``, atomically; returns {name: path}."""
        from ..outfolder import atomic_folder
        folder = Path(folder)
        names = self._plot_outcomes(outcomes)
        with atomic_folder(folder) as tmp:
            self.write_files(tmp, plots=plots, outcomes=names)
        self.files = {k: folder / Path(v).name for k, v in self.files.items()}
        return dict(self.files)

    def write_files(self, folder: Path, plots: bool = True,
                    outcomes: list[str] | None = None, stem: str = "sweep") -> None:
        """The files of :meth:`write`, into an existing folder."""
        folder = Path(folder)
        files = {"csv": folder / f"{stem}.csv", "json": folder / f"{stem}.json",
                 "text": folder / f"{stem}.txt"}
        if plots:
            try:
                files["plot"] = self.plot(folder / f"{stem}.png", outcomes)
            except Exception as exc:  # a plot must never cost the table
                (folder / f"{stem}.png").unlink(missing_ok=True)
                what = " ".join(f"{type(exc).__name__}: {exc}".split())[:200]
                self.warnings.append(f"plot left out: '{stem}.png' could not be drawn "
                                     f"({what}); the table is complete")
        self.files = files
        write_table_csv(self, files["csv"])
        files["text"].write_text(self.text(outcomes), encoding="utf-8")
        from ..display import jsonable as _jsonable
        with open(files["json"], "w", encoding="utf-8") as fh:
            json.dump(_jsonable(self.as_dict()), fh, indent=1)
            fh.write("\n")

    def plot(self, path, outcomes: list[str] | None = None) -> Path:
        """Draw the chosen outcomes (default: :attr:`outcome_defaults`) against
        the first varied value into the PNG file ``path``."""
        from .plot import plot_sweep
        subtitle = None
        if self.partial:
            c = self.counts()
            subtitle = (f"{self.partial}. {c['completed']} completed, {c['stopped']} stopped, "
                        f"{c['failed']} failed.")
        return plot_sweep(self, Path(path), self._plot_outcomes(outcomes), subtitle=subtitle)

    def _plot_outcomes(self, outcomes) -> list[str]:
        if outcomes is None:
            return list(self.outcome_defaults)
        if isinstance(outcomes, str):
            outcomes = [outcomes]
        for name in outcomes:
            self.column(name)
        return list(outcomes)

    # ------------------------------------------------------------- units
    def units(self):
        """The study's time and mass-flow units (:class:`cvsim.display.RunUnits`): the
        rule of a run's outputs (:meth:`RunUnits.of`) applied to the longest time and
        the largest mass flow in any case. Every file of the study (table, text, plot,
        report) shows its times and flows in these units."""
        from ..display import RunUnits
        longest = _largest(self, "s")
        return RunUnits.of(longest, _largest(self, "kg/s"))

    def shown_column(self, col: Column) -> Column:
        """``col`` as every file of the study shows it: times and mass flows in the
        study's :meth:`units` (the parameters' SI values stay SI)."""
        if col.kind == "parameter-si" or col.unit not in ("s", "kg/s"):
            return col
        u = self.units()
        unit, size = (u.time, u.time_size) if col.unit == "s" else (u.flow, u.flow_size)
        return _Scaled(col.name, col.unit, col.kind, col.text, col.difference, unit, size)

    def text(self, outcomes: list[str] | None = None) -> str:
        """A readable summary: what was varied, a table of the chosen outcomes,
        the failed cases with their errors, the caution."""
        from ..display import duration as _t
        names = self._plot_outcomes(outcomes)
        c = self.counts()
        n = len(self.rows)
        what = "; ".join(f"{p.key} = {p.spec}" for p in self.parameters)
        L = [self.title, "=" * min(len(self.title), 78)]
        if self.partial:
            L += [self.partial + ".", ""]
        L += [f"Sweep of {n} case{'s' if n != 1 else ''} over {what}",
              f"{c['completed']} completed, {c['stopped']} stopped, {c['failed']} failed"
              + (f", {c[NOT_RUN]} {NOT_RUN}" if c.get(NOT_RUN) else "")
              + f"; ran on {self.ran_on or '-'} in {_t(self.wall_time)}", ""]
        if self.warnings:
            L += ["Warnings:"] + [f"  ! {w}" for w in self.warnings] + [""]
        cols = [self.column(p.key) for p in self.parameters]
        cols += [self.column("status")] + [self.shown_column(self.column(x)) for x in names]
        limit_cols = [x for x in self.columns if x.kind == "limit-met"]
        head = ["case"] + [x.header() for x in cols] + (["limits"] if limit_cols else [])
        body = []
        for r in self.rows:
            line = [str(r["case"])] + [cell_text(x, r.get(x.name)) for x in cols]
            if limit_cols:
                flags = [r.get(x.name) for x in limit_cols]
                crossed = [x.name.removesuffix(".met").split(".limit.", 1)[-1]
                           for x, f in zip(limit_cols, flags) if f is False]
                line.append("-" if all(f is None for f in flags) else
                            ("all met" if not crossed else "CROSSED " + ", ".join(crossed)))
            body.append(line)
        widths = [max(len(row[i]) for row in [head] + body) for i in range(len(head))]
        for row in [head] + body:
            L.append("  ".join(cell.rjust(w) if k else cell.ljust(w)
                               for k, (cell, w) in enumerate(zip(row, widths))).rstrip())
        if limit_cols:
            L += ["", "Limits checked: " + ", ".join(
                x.name.removesuffix(".met") for x in limit_cols)]
        if self.failed:
            L += ["", "Failed cases:"]
            for r in self.failed:
                given = ", ".join(f"{p.key} = {r[p.key]}" for p in self.parameters)
                err = r["error"]
                err = err if len(err) <= ERROR_CHARS else err[:ERROR_CHARS - 1] + "…"
                L.append(f"  case {r['case']} ({given}): {err}")
        u = self.units()
        L += ["", "Units: pressures absolute (bar a), gauge = absolute - "
              f"{self.atmosphere / 1e5:.5g} bar; times in {u.time}, mass flows in {u.flow} "
              "(in every file of the study); all columns in sweep.csv.",
              "", "CAUTION: " + CAUTION]
        return "\n".join(L) + "\n"


def value_text(value) -> str:
    """A value as shown in tables (text as given)."""
    from ..scenario.spec import as_text
    return value if isinstance(value, str) else as_text(value)



def cell_text(column: Column, value, digits: int = 6) -> str:
    """One value as written in the text table (``digits`` significant digits)
    and, with ``digits=10``, in the CSV: engineering units, SI for the
    parameters' ``.si`` columns, ``met``/``crossed`` for limit checks."""
    if value is None:
        return ""
    if column.kind == "limit-met":
        return "met" if value else "crossed"
    if isinstance(value, str):
        return value
    if isinstance(value, (bool, int)):
        return str(value)
    v = float(value) if column.kind == "parameter-si" else column.shown()[1](float(value))
    return f"{v:.{digits}g}" if math.isfinite(v) else ""


def write_table_csv(result: SweepResult, path: Path) -> Path:
    """The table as CSV in engineering units, ``#`` lines first (title,
    provenance, counts, gauge reference, caution), as history.csv."""
    import csv
    from ..outputs import header_lines
    c = result.counts()
    what = "; ".join(f"{p.key} = {p.spec}" for p in result.parameters)
    status = (f"sweep of {len(result.rows)} cases over {what}: {c['completed']} completed, "
              f"{c['stopped']} stopped, {c['failed']} failed")
    if result.partial:
        status = f"{result.partial}; {status}"
    with open(path, "w", newline="", encoding="utf-8") as fh:
        for line in header_lines(result.title, result.provenance, status, result.atmosphere):
            fh.write(f"# {line}\n")
        u = result.units()
        fh.write(f"# times in {u.time}, mass flows in {u.flow} (the study's units: from its "
                 "longest time and largest flow, as a run chooses them)\n")
        comma = getattr(result, "decimal_comma", False)
        if comma:
            fh.write("# fields separated by ';', decimal comma\n")
        w = csv.writer(fh, delimiter=";" if comma else ",")
        columns = [result.shown_column(col) for col in result.columns]
        w.writerow([col.header() for col in columns])
        for r in result.rows:
            cells = [cell_text(col, r.get(col.name), 10) for col in columns]
            w.writerow([_comma(c) for c in cells] if comma else cells)
    return path


def _comma(cell: str) -> str:
    """A number written with a decimal comma; other text as it is."""
    try:
        float(cell)
    except ValueError:
        return cell
    return cell.replace(".", ",")


def default_outcomes(result: SweepResult, reference) -> list[str]:
    """Outcomes drawn when none are chosen: for every vessel the lowest and
    highest gas temperature and the highest pressure, every stated limit's
    value reached (a depressuring target's time; the metal temperature only
    where a wall is modelled, else it is the gas temperature; not the gas
    temperature shown for information beside the metal), and the end time
    unless a depressuring time is drawn - leaving out those that do not change
    from case to case (a flat line tells nothing), but keeping at least one."""
    if reference is None:
        names = [c.name for c in result.columns if c.kind == "figure"][:1]
        return names or ["end_time"]
    wanted = []
    for v in reference.network.vessels:
        wanted += [f"{v.name}.min_temperature", f"{v.name}.max_temperature",
                   f"{v.name}.max_pressure"]
    wanted += [c.name for c in result.columns if c.kind == "limit-actual"
               and not c.name.endswith(".design_pressure.actual")
               and not c.name.endswith(".min_metal_temperature.gas.actual")  # information
               and not c.name.startswith(tuple(f"{v.name}.limit.min_metal_temperature"
                                                for v in reference.network.vessels
                                                if not _has_walls(result, v.name)))]
    if not any(c.name.endswith(".limit.depressure.actual") for c in result.columns):
        wanted.append("end_time")
    present = {c.name for c in result.columns}
    wanted = [w for w in wanted if w in present]
    varying = [w for w in wanted if _varies(result, w)]
    return _distinct(result, varying) or wanted[:1]


def _distinct(result: SweepResult, names: list[str]) -> list[str]:
    """``names`` without those whose values equal an earlier one's in every case (the
    lowest gas temperature and the MDMT check on the gas are the same numbers: one
    panel, with the limit drawn on it)."""
    out = []
    for name in names:
        values = [r.get(name) for r in result.rows]
        if not any(values == [r.get(o) for r in result.rows] for o in out):
            out.append(name)
    return out


def _largest(result: SweepResult, unit: str) -> float:
    """The largest magnitude of any case's value in the columns of SI ``unit`` (the
    parameters' own values aside); 0 when there is none."""
    out = 0.0
    for c in result.columns:
        if c.unit != unit or c.kind == "parameter-si":
            continue
        for r in result.rows:
            v = r.get(c.name)
            if isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v):
                out = max(out, abs(float(v)))
    return out


def _has_walls(result: SweepResult, vessel: str) -> bool:
    return any(c.name.startswith(f"{vessel}.limit.min_metal_temperature.gas")
               for c in result.columns)


def _varies(result: SweepResult, name: str) -> bool:
    vals = [r.get(name) for r in result.rows if r["status"] != "failed"]
    vals = [float(v) for v in vals if v is not None and math.isfinite(float(v))]
    if len(vals) < 2:
        return bool(vals)
    lo, hi = min(vals), max(vals)
    return hi - lo > VARIES * max(abs(lo), abs(hi), 1e-300)


__all__ = ["Column", "SweepResult", "cell_text", "default_outcomes", "write_table_csv"]
