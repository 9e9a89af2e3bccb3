"""Scenario text -> a tree of mappings and lists that remembers line numbers.

The scenario reader needs the line of every key so that each problem it finds
can point at the file. :class:`LineLoader` is a ``yaml.SafeLoader`` whose
mappings are :class:`Mapping` (a ``dict`` with the line of each key) and whose
sequences are :class:`Sequence` (a ``list`` with the line of each item).
Overrides (``links.vent.diameter = "12 mm"``) are applied to this tree before
it is validated, so any key can be varied the same way.

Text that would hang or flood the reader is refused first, each with one
problem saying where and what to do: more than :data:`MAX_CHARS` characters,
a non-printable character (NUL, ESC of pasted colour codes, DEL), a document
that anchors and aliases (``&a`` ... ``*a``) expand to more than
:data:`MAX_NODES` values or nest deeper than :data:`MAX_DEPTH`, a value that
contains itself. The file is composed by libyaml where PyYAML has it (about
five times faster), else by PyYAML's own parser.
"""
from __future__ import annotations

import difflib
import re

import yaml

from ..errors import Problem


class Mapping(dict):
    """A YAML mapping; ``line`` is where it starts, ``key_lines[key]`` where each key is.

    ``duplicates`` lists (key, line) of keys given more than once (YAML keeps the
    last); the validator reports them with their full key path.
    """

    def __init__(self, *args, line: int | None = None, **kwargs):
        super().__init__(*args, **kwargs)
        self.line = line
        self.key_lines: dict = {}
        self.duplicates: list[tuple[object, int]] = []


class Sequence(list):
    """A YAML sequence; ``line`` is where it starts, ``item_lines[i]`` where each item is."""

    def __init__(self, *args, line: int | None = None):
        super().__init__(*args)
        self.line = line
        self.item_lines: list[int | None] = []


#: most characters of a scenario (about 40 000 table points; a scenario without
#: tables is a few thousand)
MAX_CHARS = 1_000_000
#: most values (mappings, lists and scalars) a document may expand to, counting
#: every repetition of an alias
MAX_NODES = 200_000
#: deepest nesting of mappings and lists (scenarios use about six levels)
MAX_DEPTH = 64
#: YAML's longest plain key
YAML_KEY_CHARS = 1024

_BASE = yaml.CSafeLoader if getattr(yaml, "__with_libyaml__", False) else yaml.SafeLoader
#: characters YAML does not accept (YAML 1.1 section 5.1, the printable set)
_NON_PRINTABLE = re.compile("[^\x09\x0A\x0D\x20-\x7E\x85\xA0-\uD7FF\uE000-\uFFFD"
                            "\U00010000-\U0010FFFF]")
_CONTROL_NAMES = {0x00: "NUL", 0x07: "BEL", 0x08: "backspace", 0x0B: "vertical tab",
                  0x0C: "form feed", 0x1B: "ESC", 0x7F: "DEL"}


class LineLoader(_BASE):
    """A safe loader building :class:`Mapping` and :class:`Sequence` with line numbers."""


def _construct_mapping(loader: LineLoader, node: yaml.MappingNode) -> Mapping:
    loader.flatten_mapping(node)
    result = Mapping(line=node.start_mark.line + 1)
    for key_node, value_node in node.value:
        key = loader.construct_object(key_node, deep=True)
        if isinstance(key, (list, dict)):
            raise yaml.constructor.ConstructorError(
                "while reading a mapping", node.start_mark,
                "a key must be a plain word, not a list or mapping", key_node.start_mark)
        line = key_node.start_mark.line + 1
        if key in result:
            result.duplicates.append((key, line))
        result[key] = loader.construct_object(value_node, deep=True)
        result.key_lines[key] = line
    return result


def _construct_sequence(loader: LineLoader, node: yaml.SequenceNode) -> Sequence:
    result = Sequence(line=node.start_mark.line + 1)
    for item in node.value:
        result.append(loader.construct_object(item, deep=True))
        result.item_lines.append(item.start_mark.line + 1)
    return result


LineLoader.add_constructor("tag:yaml.org,2002:map", _construct_mapping)
LineLoader.add_constructor("tag:yaml.org,2002:seq", _construct_sequence)


def parse(text: str) -> tuple[object, list[Problem]]:
    """Parse scenario text; returns (tree or ``None``, problems).

    A syntax error becomes one problem with the line (and column) where YAML
    found it; so do the limits of the module notes.
    """
    problem = check_text(text)
    if problem is not None:
        return None, [problem]
    loader = None
    try:
        loader = LineLoader(text)
        node = loader.get_single_node()
        if node is None:
            return None, []
        problem = _check_size(node)
        if problem is not None:
            return None, [problem]
        tree = loader.construct_document(node)
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        line = mark.line + 1 if mark is not None else None
        what = exc.problem or exc.context or "cannot read the file"
        where = f" (column {mark.column + 1})" if mark is not None else ""
        context = f", {exc.context}" if exc.context and exc.problem else ""
        long_key = _long_key(text, mark)
        if long_key:
            return None, [Problem("", f"a key of {long_key} characters; YAML reads keys of "
                                      f"at most {YAML_KEY_CHARS} characters: use a shorter "
                                      "name", line)]
        return None, [Problem("", f"YAML syntax: {what}{context}{where}; check the "
                                  "indentation and the quoting on this line and the "
                                  "one before", line)]
    except yaml.YAMLError as exc:
        return None, [Problem("", f"YAML syntax: {shorten(str(exc))}")]
    except RecursionError:
        return None, [Problem("", f"the file nests lists and mappings more than "
                                  f"{MAX_DEPTH} levels deep; a scenario needs about six")]
    finally:
        if loader is not None:
            loader.dispose()
    return tree, []


def check_text(text: str, what: str = "the file") -> Problem | None:
    """A problem for text the reader must not try: too long, or holding a
    character YAML does not accept (with its line and column); else ``None``."""
    if len(text) > MAX_CHARS:
        return Problem("", f"{what} has {len(text)} characters, more than the "
                           f"{MAX_CHARS} a scenario may have; thin long tables (a point "
                           "where the value bends is enough)")
    m = _NON_PRINTABLE.search(text)
    if m is None:
        return None
    i = m.start()
    line = text.count("\n", 0, i) + 1
    column = i - (text.rfind("\n", 0, i) + 1) + 1
    count = len(_NON_PRINTABLE.findall(text))
    more = f" ({count} such characters in all)" if count > 1 else ""
    return Problem("", f"a non-printable character ({character_name(m.group())}) at column "
                       f"{column}{more}; delete it - such characters come from pasted "
                       "terminal colour codes or binary data, and a scenario is plain text",
                   line if what == "the file" else None)


def character_name(ch: str) -> str:
    """``'\\x1b'`` -> ``'ESC, U+001B'``."""
    code = ord(ch)
    name = _CONTROL_NAMES.get(code, "control character" if code < 0x20 or 0x7F <= code < 0xA0
                             else "character")
    return f"{name}, U+{code:04X}"


def printable(text: str) -> str:
    """``text`` with characters YAML does not accept written as escapes (for messages)."""
    return _NON_PRINTABLE.sub(lambda m: f"\\x{ord(m.group()):02x}"
                              if ord(m.group()) < 0x100 else f"\\u{ord(m.group()):04x}", text)


#: longest text of a value shown in a message
SHOWN_CHARS = 300


def shorten(text: str, limit: int = SHOWN_CHARS) -> str:
    """``text`` cut to ``limit`` characters with how much was left out."""
    if len(text) <= limit:
        return text
    return f"{text[:limit]}... ({len(text) - limit} more characters)"


def _children(node):
    if isinstance(node, yaml.MappingNode):
        return [n for pair in node.value for n in pair]
    if isinstance(node, yaml.SequenceNode):
        return node.value
    return ()


class _TooBig(Exception):
    pass


def _check_size(root) -> Problem | None:
    """A problem when the node graph (aliases shared) expands to more than
    :data:`MAX_NODES` values, nests deeper than :data:`MAX_DEPTH` or contains
    itself; counted once per distinct node, without expanding anything."""
    sizes: dict[int, int] = {}
    on_path: set[int] = set()
    stack = [(root, 0, False)]
    while stack:
        node, depth, done = stack.pop()
        key = id(node)
        if done:
            on_path.discard(key)
            size = 1 + sum(sizes[id(c)] for c in _children(node))
            if size > MAX_NODES:
                line = node.start_mark.line + 1
                return Problem("", f"the document expands to more than {MAX_NODES} values "
                                   "(aliases such as *name repeat all that their anchor "
                                   "&name holds, and aliases inside it multiply); write the "
                                   "values out or use fewer aliases", line)
            sizes[key] = size
            continue
        if key in sizes:
            continue
        if key in on_path:
            return Problem("", "a value contains itself (an alias *name inside the value "
                               "its anchor &name marks); remove the alias",
                           node.start_mark.line + 1)
        if depth > MAX_DEPTH:
            return Problem("", f"the file nests lists and mappings more than {MAX_DEPTH} "
                               "levels deep; a scenario needs about six",
                           node.start_mark.line + 1)
        on_path.add(key)
        stack.append((node, depth, True))
        stack += [(c, depth + 1, False) for c in _children(node) if id(c) not in sizes]
    return None


def _long_key(text: str, mark) -> int:
    """Length of a plain key longer than YAML allows on the line of ``mark`` (0: none)."""
    if mark is None:
        return 0
    lines = text.splitlines()
    if not 0 <= mark.line < len(lines):
        return 0
    head = lines[mark.line][:mark.column].strip().lstrip("-{[, ").strip()
    return len(head) if len(head) > YAML_KEY_CHARS else 0


def strip_lines(node):
    """Copy of a tree with all line numbers removed (values coming from overrides)."""
    if isinstance(node, dict):
        out = Mapping()
        for k, v in node.items():
            out[k] = strip_lines(v)
        return out
    if isinstance(node, list):
        out = Sequence(strip_lines(v) for v in node)
        out.item_lines = [None] * len(out)
        return out
    return node


def key_path(parts) -> str:
    """``['run', 'stop_when', 0, 'vessel']`` -> ``run.stop_when[0].vessel``."""
    text = ""
    for part in parts:
        if isinstance(part, int):
            text += f"[{part}]"
        else:
            text += ("." if text else "") + str(part)
    return text


_PART = re.compile(r"([^.\[\]]+)|\[(\d+)\]")


def split_path(path: str) -> list:
    """``links.vent.diameter`` -> ``['links', 'vent', 'diameter']``.

    List items are written ``stop_when[1]`` or ``stop_when.1``.
    """
    parts = []
    for m in _PART.finditer(path):
        if m.group(2) is not None:
            parts.append(int(m.group(2)))
        elif m.group(1).isdigit():
            parts.append(int(m.group(1)))
        else:
            parts.append(m.group(1).strip())
    return parts


#: override values that remove the key (its default applies again)
REMOVE = ("null", "~", "none")


def override_value(value):
    """An override as given -> a tree value.

    Text is read as YAML so that a mapping (``{ua: 50 W/K, ambient: 15 degC}``)
    or a table can be given; text that YAML reads as a yes/no word or nothing
    is kept as the text. ``null``, ``~`` and ``none`` (and Python's ``None``) mean
    "remove the key": :func:`apply_overrides` deletes it.
    """
    if value is None or (isinstance(value, str) and value.strip().lower() in REMOVE):
        return _REMOVED
    if isinstance(value, str):
        tree, problems = parse(value)
        if problems or tree is None or isinstance(tree, bool):
            return value
        return strip_lines(tree)
    return strip_lines(value)


_REMOVED = object()


def apply_overrides(tree: Mapping, overrides: dict | None) -> tuple[set[str], list[Problem]]:
    """Set each ``dotted.key.path`` of ``overrides`` in ``tree`` (in place).

    The last key is replaced or added (an added key that the format does not know is
    reported by the validator like any unknown key); a value ``null`` removes it, so
    that its default applies, and a key to remove that is not there is a problem (a
    misspelt key would otherwise be ignored), with the name meant when one is close. A
    mapping missing on the way is created (``run.solver.method`` without a ``solver:``
    section) unless its name is close to one that exists, which is reported as a likely
    typo with the name meant. Returns (paths applied, problems).
    """
    applied: set[str] = set()
    problems: list[Problem] = []
    for path, value in (overrides or {}).items():
        bad = [check_text(t, "the override") for t in (str(path), value)
               if isinstance(t, str)]
        bad = [b for b in bad if b is not None]
        if bad:
            problems.append(Problem(printable(shorten(str(path))), "override: "
                                    + bad[0].message.replace("a scenario may", "a value may")))
            continue
        parts = split_path(str(path))
        if not parts:
            problems.append(Problem(str(path), "override: empty key path"))
            continue
        new = override_value(value)
        removing = new is _REMOVED
        node = tree
        for depth, part in enumerate(parts[:-1]):
            here = key_path(parts[:depth]) or "the top level"
            found, message = _step(node, part, here)
            if message and removing:  # nothing there to remove: create nothing
                message = f"nothing to remove: {message}"
            elif message and _creatable(node, part):
                node[part] = Mapping()
                node.key_lines[part] = None
                found, message = node[part], None
            if message:
                problems.append(Problem(str(path), f"override: {message}"))
                node = None
                break
            node = found
        if node is None:
            continue
        last = parts[-1]
        if removing:
            if isinstance(node, dict) and not isinstance(last, int):
                if last not in node:
                    where = key_path(parts[:-1]) or "the top level"
                    _, message = _step(node, last, where)
                    problems.append(Problem(str(path), f"override: nothing to remove: "
                                            f"{message}"))
                    continue
                node.pop(last)
                node.key_lines.pop(last, None)
            else:
                where = key_path(parts[:-1]) or "the top level"
                problems.append(Problem(str(path), f"override: only a key of a mapping can be "
                                        f"removed with null, not {last!r} in {where}"))
                continue
        elif isinstance(node, dict) and not isinstance(last, int):
            node[last] = new
            node.key_lines[last] = None
        elif isinstance(node, list) and isinstance(last, int) and last < len(node):
            node[last] = new
            node.item_lines[last] = None
        else:
            where = key_path(parts[:-1]) or "the top level"
            problems.append(Problem(str(path), f"override: cannot set {last!r} in {where}"))
            continue
        applied.add(key_path(parts))
    return applied, problems


def _creatable(node, part) -> bool:
    """A missing key on an override's path may be created as a new mapping: a key of a
    mapping, not close to a key it has (that would be a typo)."""
    return (isinstance(node, dict) and not isinstance(part, int) and part not in node
            and not difflib.get_close_matches(part, [str(k) for k in node], n=1))


def _step(node, part, here: str):
    """One step down a tree; returns (child, None) or (None, message)."""
    if isinstance(node, dict) and not isinstance(part, int):
        if part in node:
            return node[part], None
        close = difflib.get_close_matches(part, [str(k) for k in node], n=1)
        hint = f"; did you mean '{close[0]}'?" if close else ""
        return None, f"no key '{part}' in {here}{hint}"
    if isinstance(node, list) and isinstance(part, int):
        if part < len(node):
            return node[part], None
        return None, f"{here} has {len(node)} items; no item [{part}]"
    return None, f"{here} has no part {part!r}"
