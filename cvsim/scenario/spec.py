"""A small declarative schema: fields, sections, value kinds and the reader.

A :class:`Section` lists its :class:`Field` s (name, kind of value, required or
default, meaning). A *kind* knows how to read one value from the YAML tree and
how to describe itself in the reference docs. Reading a section checks for
unknown and missing keys, reads every field, applies defaults and runs the
section's own checks; every problem is collected in the :class:`Context`
rather than raised, so that a file's problems are all reported at once.

Extension points are tables, not if-chains: a section may pick a *variant*
(``device: orifice``) from a registry of :class:`Variant` s, and may take
extra fields from a registry (the heat terms of a vessel).
"""
from __future__ import annotations

import difflib
import math
import re
from dataclasses import dataclass, replace
from typing import Callable

from .. import units
from ..errors import Problem
from ..signals import Constant, Table
from .tree import Mapping, printable, shorten


class _Bad:
    """Marks a value that could not be read (its problem is already recorded)."""

    def __repr__(self) -> str:
        return "BAD"


BAD = _Bad()


@dataclass(frozen=True)
class At:
    """Where a value is: dotted key path, line (``None``: unknown) and whether it is a default."""

    key: str
    line: int | None = None
    default: bool = False

    def child(self, name, line: int | None) -> "At":
        key = f"{self.key}.{name}" if self.key else str(name)
        return At(key, line if line is not None else self.line, self.default)

    def item(self, index: int, line: int | None) -> "At":
        return At(f"{self.key}[{index}]", line if line is not None else self.line, self.default)

    @property
    def name(self) -> str:
        return re.split(r"[.\[]", self.key)[-1] if self.key else ""


@dataclass(frozen=True)
class EchoRow:
    """One line of the input echo: what was given and what is used.

    key    dotted key path
    given  the value as written in the file (or the default, as text)
    value  the value used: SI number, word, or ``None``
    unit   SI unit of ``value`` (``""`` for words and plain numbers)
    note   what was assumed or computed (gauge reference, default, source)
    kind   what kind of quantity ``value`` is, where its unit does not tell: a name of
           :data:`cvsim.units.DIMENSIONS` (``stress``, ``pressure``) or
           ``pressure_difference``; ``""`` when not known. A stress and a pressure share
           the unit Pa but are shown differently (MPa against bar a and bar g).
    """

    key: str
    given: str
    value: float | str | None
    unit: str = ""
    note: str = ""
    kind: str = ""

    @property
    def used(self) -> str:
        if isinstance(self.value, float):
            text = f"{self.value:.6g}"
        else:
            text = "" if self.value is None else str(self.value)
        return f"{text} {self.unit}".strip() if self.unit not in ("", "-") else text


#: longest problem message (values quoted in it are cut)
MESSAGE_CHARS = 1000
#: longest key path shown in a message
KEY_CHARS = 200


class Context:
    """Collects problems and echo rows while a scenario is read and built."""

    def __init__(self, atmosphere: float = units.ATMOSPHERE):
        self.problems: list[Problem] = []
        self.echo: list[EchoRow] = []
        self.atmosphere = atmosphere
        self.overridden: set[str] = set()
        self.names: dict[str, list[str]] = {}  # role ("vessel", ...) -> names in the file
        self.fluid = None  # FluidSpec once known

    def problem(self, at: At, message: str) -> None:
        message = printable(shorten(message, MESSAGE_CHARS))  # a value echoed may be huge
        if at.default:
            message += " (this is the default; give the key explicitly)"
        if self.is_overridden(at.key):
            message += " (set by override)"
        self.problems.append(Problem(printable(shorten(at.key, KEY_CHARS)), message, at.line))

    def is_overridden(self, key: str) -> bool:
        """True if ``key`` or a key above it was set by an override."""
        return any(key == p or key.startswith((p + ".", p + "[")) for p in self.overridden)

    def record(self, at: At, given, value, unit: str = "", note: str = "",
               kind: str = "") -> None:
        notes = [note] if note else []
        if at.default:
            notes.insert(0, "default")
        if self.is_overridden(at.key):
            notes.insert(0, "set by override")
        self.echo.append(EchoRow(at.key, shorten(as_text(given)), value, unit,
                                 "; ".join(notes), kind))


def as_text(given) -> str:
    if isinstance(given, list):
        return "[" + ", ".join(as_text(g) for g in given) + "]"
    if isinstance(given, dict):
        return "{" + ", ".join(f"{k}: {as_text(v)}" for k, v in given.items()) + "}"
    return str(given)


# ----------------------------------------------------------------- kinds


class Kind:
    """How one value is read and described. Subclasses define both methods."""

    def read(self, raw, at: At, ctx: Context):
        """Return the value read from ``raw`` or :data:`BAD` (after ``ctx.problem``)."""
        raise NotImplementedError

    def describe(self) -> str:
        """Text for the 'value' column of the reference (markdown)."""
        raise NotImplementedError

    def sections(self) -> tuple["Section", ...]:
        """Sections nested in this kind, for the reference."""
        return ()


def _shown(raw) -> str:
    return f'"{raw}"' if isinstance(raw, str) else as_text(raw)


@dataclass(frozen=True)
class Quantity(Kind):
    """A quantity with a unit, e.g. ``150 barg``; optionally a table in time.

    ``above``, ``at_least``, ``at_most`` are limits in SI. Pressures must be
    above vacuum and temperatures above absolute zero whatever the limits.
    ``table``: the value may be ``{table: [[time, value], ...]}``; the result
    is then always a :class:`~cvsim.signals.Signal`.
    """

    dimension: str
    table: bool = False
    above: float | None = None
    at_least: float | None = None
    at_most: float | None = None

    def read(self, raw, at, ctx):
        if self.table and isinstance(raw, dict):
            return self._read_table(raw, at, ctx)
        value = self.read_one(raw, at, ctx)
        if value is BAD or not self.table:
            return value
        return Constant(value)

    def read_one(self, raw, at: At, ctx: Context):
        """Read one value (not a table); returns the SI float or :data:`BAD`."""
        dim = units.DIMENSIONS[self.dimension]
        if isinstance(raw, dict) and not self.table:
            ctx.problem(at, f"expected {dim.noun} such as \"10 {dim.example}\", not a mapping"
                        if dim.example else f"expected {dim.noun}, not a mapping")
            return BAD
        try:
            reading = self.convert(raw, ctx)
        except units.UnitsError as exc:
            ctx.problem(at, str(exc))
            return BAD
        message = _magnitude_problem(reading.value, raw) or self._limit_problem(
            reading.value, raw, dim)
        if message:
            ctx.problem(at, message)
            return BAD
        ctx.record(at, raw, reading.value, dim.symbol, reading.note, kind=self.echo_kind)
        return reading.value

    @property
    def echo_kind(self) -> str:
        """The kind of quantity its echo rows state (:attr:`EchoRow.kind`)."""
        return self.dimension

    def convert(self, raw, ctx) -> units.Reading:
        """Text -> SI reading; subclasses may read other notations."""
        return units.read_quantity(raw, self.dimension, atmosphere=ctx.atmosphere)

    def _limit_problem(self, value: float, raw, dim) -> str:
        name = dim.symbol if dim.symbol != "-" else ""
        if self.dimension == "pressure" and value <= 0.0:
            return (f"{_shown(raw)} is {value:.6g} Pa absolute, at or below vacuum; "
                    "an absolute pressure must be above 0 (check gauge vs absolute)")
        if self.dimension == "temperature" and value <= 0.0:
            return f"{_shown(raw)} is {value:.6g} K, at or below absolute zero"
        if self.above is not None and not value > self.above:
            return f"must be greater than {self.above:g} {name}".rstrip() + f"; got {_shown(raw)}"
        if self.at_least is not None and not value >= self.at_least:
            return f"must be at least {self.at_least:g} {name}".rstrip() + f"; got {_shown(raw)}"
        if self.at_most is not None and not value <= self.at_most:
            return f"must be at most {self.at_most:g} {name}".rstrip() + f"; got {_shown(raw)}"
        return ""

    def _read_table(self, raw, at, ctx):
        extra = [k for k in raw if k != "table"]
        if extra or "table" not in raw:
            ctx.problem(at, "a table is written {table: [[time, value], ...]}"
                        + (f"; unknown key '{extra[0]}'" if extra else ""))
            return BAD
        rows = raw["table"]
        at = at.child("table", getattr(raw, "key_lines", {}).get("table"))
        if not isinstance(rows, list) or not rows:
            ctx.problem(at, "expected a list of [time, value] points, e.g. "
                        "[[0 s, 10 bara], [60 s, 20 bara]]")
            return BAD
        if len(rows) > TABLE_POINTS:
            ctx.problem(at, f"a table of {len(rows)} points; use at most {TABLE_POINTS} "
                        "(values are linear between points: keep those where the value "
                        "bends)")
            return BAD
        times, values, ok = [], [], True
        time_kind = Quantity("time")
        item_lines = getattr(rows, "item_lines", [])
        for i, row in enumerate(rows):
            here = at.item(i, item_lines[i] if i < len(item_lines) else None)
            if not isinstance(row, list) or len(row) != 2:
                ctx.problem(here, f"each point is [time, value]; got {as_text(row)}")
                ok = False
                continue
            t = time_kind.read_one(row[0], here, _Quiet(ctx))
            v = self.read_one(row[1], here, _Quiet(ctx))
            if t is BAD or v is BAD:
                ok = False
                continue
            ctx.record(here, row, v, units.DIMENSIONS[self.dimension].symbol, f"at t = {t:g} s",
                       kind=self.echo_kind)
            times.append(t)
            values.append(v)
        if not ok:
            return BAD
        for i in range(1, len(times)):
            if times[i] < times[i - 1] or (i >= 2 and times[i] == times[i - 1] == times[i - 2]):
                ctx.problem(at.item(i, item_lines[i] if i < len(item_lines) else None),
                            "table times must increase (a step is two points at the same "
                            "time, no more)")
                return BAD
        return Table(tuple(times), tuple(values))

    def describe(self) -> str:
        dim = units.DIMENSIONS[self.dimension]
        text = dim.noun.split(" ", 1)[1] if dim.noun.startswith(("a ", "an ")) else dim.noun
        if dim.symbol != "-":
            text += f" [{dim.symbol}]"
        limits = []
        if self.above is not None:
            limits.append(f"> {self.above:g}")
        if self.at_least is not None:
            limits.append(f">= {self.at_least:g}")
        if self.at_most is not None:
            limits.append(f"<= {self.at_most:g}")
        if limits:
            text += ", " + " and ".join(limits)
        if self.table:
            text += "; or a table in time"
        return text


#: sizes of SI values the physics is written for: beyond them squares and cubes
#: (areas, volumes) overflow or vanish; no scenario value comes near
MAGNITUDE = (1e-20, 1e20)


def _magnitude_problem(value: float, raw) -> str:
    """A problem for a value far outside anything cvsim computes with (``""``: none)."""
    small, large = MAGNITUDE
    if not math.isfinite(value) or abs(value) > large or (value != 0.0 and abs(value) < small):
        return (f"{_shown(raw)} is {value:.3g} in SI units, outside the {small:g} to {large:g} "
                "cvsim computes with; check the number and its unit")
    return ""


class _Quiet:
    """A context that passes problems through but drops echo rows (table cells)."""

    def __init__(self, ctx: Context):
        self._ctx = ctx
        self.atmosphere = ctx.atmosphere

    def problem(self, at, message):
        self._ctx.problem(at, message)

    def record(self, *args, **kwargs):
        pass


@dataclass(frozen=True)
class Text(Kind):
    """A word or sentence."""

    def read(self, raw, at, ctx):
        if isinstance(raw, (dict, list)) or raw is None or str(raw).strip() == "":
            ctx.problem(at, "expected text")
            return BAD
        ctx.record(at, raw, str(raw))
        return str(raw)

    def describe(self) -> str:
        return "text"


@dataclass(frozen=True)
class Choice(Kind):
    """One word out of a fixed list (or out of a registry's keys, read when used)."""

    options: tuple[str, ...] | dict = ()

    def read(self, raw, at, ctx):
        options = list(self.options)
        if not isinstance(raw, str) or raw not in options:
            close = difflib.get_close_matches(str(raw), options, n=1)
            hint = f"; did you mean '{close[0]}'?" if close else ""
            ctx.problem(at, f"'{raw}' is not one of: {', '.join(options)}{hint}")
            return BAD
        ctx.record(at, raw, raw)
        return raw

    def describe(self) -> str:
        return " \\| ".join(f"`{o}`" for o in self.options)


@dataclass(frozen=True)
class Node(Kind):
    """The name of a node of the given roles (``vessel``, ``reservoir``)."""

    roles: tuple[str, ...] = ("vessel", "reservoir")

    def read(self, raw, at, ctx):
        wanted = [n for r in self.roles for n in ctx.names.get(r, [])]
        if isinstance(raw, str) and raw in wanted:
            ctx.record(at, raw, raw)
            return raw
        others = [(r, n) for r, names in ctx.names.items() if r not in self.roles for n in names]
        for role, name in others:
            if name == raw:
                ctx.problem(at, f"'{raw}' is a {role}; expected a {' or '.join(self.roles)}")
                return BAD
        close = difflib.get_close_matches(str(raw), wanted, n=1)
        hint = f"; did you mean '{close[0]}'?" if close else ""
        listed = ", ".join(dict.fromkeys(wanted)) if wanted else "none defined"
        ctx.problem(at, f"unknown {' or '.join(self.roles)} '{raw}'{hint} "
                    f"({' and '.join(r + 's' for r in self.roles)}: {listed})")
        return BAD

    def describe(self) -> str:
        return "name of a " + " or ".join(self.roles)


@dataclass(frozen=True)
class Sub(Kind):
    """A nested mapping read by ``section``."""

    section: "Section"

    def read(self, raw, at, ctx):
        return read_section(raw, self.section, at, ctx)

    def describe(self) -> str:
        return f"mapping, see [{self.section.title}](#{anchor(self.section.title)})"

    def sections(self):
        return (self.section,)


_NAME = re.compile(r"[A-Za-z0-9_][A-Za-z0-9_-]*")
#: most points of a table in time (reading one costs about 0.2 ms)
TABLE_POINTS = 10_000
#: longest name of a vessel, reservoir, link or sequence (it heads columns)
NAME_CHARS = 64


@dataclass(frozen=True)
class Entries(Kind):
    """A mapping of user-chosen names to entries of one section (``vessels``)."""

    section: "Section"
    at_least_one: bool = False

    def read(self, raw, at, ctx):
        if raw is None and not self.at_least_one:
            return {}
        if not isinstance(raw, dict) or (self.at_least_one and not raw):
            noun = self.section.title.rstrip("s")
            ctx.problem(at, f"expected {noun} names, each with its keys (e.g. 'name: {{...}}')"
                        + (f", at least one {noun}" if self.at_least_one else ""))
            return BAD
        for name, line in getattr(raw, "duplicates", ()):
            ctx.problem(at.child(name, line), f"'{name}' is defined more than once in "
                        f"{at.key}; names must be unique")
        out = {}
        for name, entry in raw.items():
            here = at.child(name, raw.key_lines.get(name) if isinstance(raw, Mapping) else None)
            if not isinstance(name, str) or not _NAME.fullmatch(name):
                ctx.problem(here, f"name {name!r}: use letters, digits, '_' and '-' only")
                continue
            if len(name) > NAME_CHARS:
                ctx.problem(here, f"a name of {len(name)} characters; use at most "
                            f"{NAME_CHARS} (names head the columns of the results)")
                continue
            out[name] = read_section(entry, self.section, here, ctx)
        return out

    def describe(self) -> str:
        return f"mapping of names, each see [{self.section.title}](#{anchor(self.section.title)})"

    def sections(self):
        return (self.section,)


@dataclass(frozen=True)
class OneOrMore(Kind):
    """One mapping, or a list of mappings, each read by ``section``."""

    section: "Section"

    def read(self, raw, at, ctx):
        if isinstance(raw, list):
            lines = getattr(raw, "item_lines", [])
            return [read_section(e, self.section,
                                 at.item(i, lines[i] if i < len(lines) else None), ctx)
                    for i, e in enumerate(raw)]
        return [read_section(raw, self.section, at, ctx)]

    def describe(self) -> str:
        return (f"a mapping or a list of mappings, each see "
                f"[{self.section.title}](#{anchor(self.section.title)})")

    def sections(self):
        return (self.section,)


# ------------------------------------------------------------ fields, sections


@dataclass(frozen=True)
class Field:
    """One key of a section.

    name      the key
    kind      how the value is read (a :class:`Kind`)
    doc       meaning, one or two sentences
    required  a missing key is a problem
    default   used when the key is missing, written as in a file (``"0 s"``);
              ``None``: no default (the value is ``None``)
    """

    name: str
    kind: Kind
    doc: str
    required: bool = False
    default: object = None


@dataclass(frozen=True)
class Variant:
    """One choice of a variant section (a device kind, a shape kind).

    ``build(values, ctx)`` turns the section's values into a network object.
    """

    name: str
    doc: str
    section: "Section"
    build: Callable | None = None


@dataclass(frozen=True)
class Section:
    """A mapping of known keys.

    title     heading in the reference (also the anchor)
    doc       what the section describes
    fields    its keys, in the order they are read and documented
    one_of    groups of keys of which exactly one must be given
    variant   (key, registry): the value of ``key`` picks a :class:`Variant`
              from ``registry`` whose section's fields are added
    extra     registry whose entries' ``.field`` are added (read when used,
              so entries registered later are included)
    checks    ``check(values, ctx)`` functions run after the fields are read
    """

    title: str
    doc: str
    fields: tuple[Field, ...] = ()
    one_of: tuple[tuple[str, ...], ...] = ()
    variant: tuple[str, dict] | None = None
    extra: dict | None = None
    checks: tuple[Callable, ...] = ()

    def all_fields(self) -> tuple[Field, ...]:
        extra = tuple(entry.field for entry in self.extra.values()) if self.extra else ()
        return self.fields + extra

    def with_checks(self, *checks: Callable) -> "Section":
        return replace(self, checks=self.checks + checks)


class Values(dict):
    """Values read from one section; ``at`` is the section, ``where[name]`` each key."""

    def __init__(self, at: At):
        super().__init__()
        self.at = at
        self.where: dict[str, At] = {}
        self.variant: Variant | None = None
        #: the keys written in the file (the others took their default or nothing)
        self.given: set[str] = set()

    def ok(self, *names: str) -> bool:
        """True if each named value was read without a problem."""
        return all(self.get(n) is not BAD for n in names)


def read_section(raw, section: Section, at: At, ctx: Context):
    """Read a mapping against ``section``; returns :class:`Values` or :data:`BAD`."""
    if raw is None:
        raw = Mapping(line=at.line)
    if not isinstance(raw, dict):
        ctx.problem(at, f"expected a mapping of keys (see '{section.title}' in the format "
                    f"reference), got {as_text(raw)!r}")
        return BAD
    lines = raw.key_lines if isinstance(raw, Mapping) else {}
    values = Values(at)
    fields = list(section.all_fields())
    groups = list(section.one_of)
    checks = list(section.checks)

    if section.variant is not None:
        key, registry = section.variant
        choice = raw.get(key)
        variant = registry.get(choice) if isinstance(choice, str) else None
        if variant is not None:
            values.variant = variant
            fields += list(variant.section.all_fields())
            groups += list(variant.section.one_of)
            checks += list(variant.section.checks)

    for key, line in getattr(raw, "duplicates", ()):
        ctx.problem(at.child(key, line), f"key '{key}' is given more than once in "
                    f"{at.key or 'the top level'}; keep one")
    known = {f.name for f in fields}
    for key in raw:
        if key not in known:
            if section.variant is not None and values.variant is None:
                continue  # the variant is unknown or missing: its keys cannot be judged
            close = difflib.get_close_matches(str(key), sorted(known), n=1)
            hint = f"; did you mean '{close[0]}'?" if close else ""
            ctx.problem(at.child(key, lines.get(key)),
                        f"unknown key '{key}' in {at.key or 'the top level'}{hint}")

    in_group = {name for g in groups for name in g}
    for f in fields:
        here = at.child(f.name, lines.get(f.name))
        values.where[f.name] = here
        if f.name in raw:
            values.given.add(f.name)
            values[f.name] = f.kind.read(raw[f.name], here, ctx)
        elif f.required and f.name not in in_group:
            ctx.problem(At(here.key, at.line),
                        f"missing key '{f.name}' in {at.key or 'the top level'}: {f.doc}")
            values[f.name] = BAD
        elif f.default is not None:
            values[f.name] = f.kind.read(f.default, At(here.key, at.line, default=True), ctx)
        else:
            values[f.name] = None

    for group in groups:
        given = [n for n in group if n in raw]
        quoted = [f"'{n}'" for n in group]
        names = ", ".join(quoted[:-1]) + " or " + quoted[-1] if len(quoted) > 1 else quoted[0]
        if not given:
            ctx.problem(at, f"give one of {names} in {at.key or 'the top level'}")
        elif len(given) > 1:
            ctx.problem(at.child(given[1], lines.get(given[1])),
                        f"give only one of {names} in {at.key}")
            for n in given:
                values[n] = BAD

    for check in checks:
        check(values, ctx)
    return values


# ------------------------------------------------------------------- docs


def anchor(title: str) -> str:
    """GitHub-style anchor of a markdown heading."""
    text = re.sub(r"[^\w\- ]", "", title.lower())
    return text.replace(" ", "-")


__all__ = [
    "At", "BAD", "Choice", "Context", "EchoRow", "Entries", "Field", "Kind", "Node",
    "OneOrMore", "Quantity", "Section", "Sub", "Text", "Values", "Variant", "anchor", "as_text",
    "read_section",
]
