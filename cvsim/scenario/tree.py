"""Scenario text -> a tree of mappings and lists that remembers line numbers.

The scenario reader needs the line of every key so that each problem it finds
can point at the file. :class:`LineLoader` is a ``yaml.SafeLoader`` whose
mappings are :class:`Mapping` (a ``dict`` with the line of each key) and whose
sequences are :class:`Sequence` (a ``list`` with the line of each item).
Overrides (``links.vent.diameter = "12 mm"``) are applied to this tree before
it is validated, so any key can be varied the same way.
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


class LineLoader(yaml.SafeLoader):
    """SafeLoader building :class:`Mapping` and :class:`Sequence` with line numbers."""


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
    found it.
    """
    loader = LineLoader(text)
    try:
        tree = loader.get_single_data()
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        line = mark.line + 1 if mark is not None else None
        what = exc.problem or exc.context or "cannot read the file"
        where = f" (column {mark.column + 1})" if mark is not None else ""
        context = f", {exc.context}" if exc.context and exc.problem else ""
        return None, [Problem("", f"YAML syntax: {what}{context}{where}; check the "
                                  "indentation and the quoting on this line and the "
                                  "one before", line)]
    except yaml.YAMLError as exc:
        return None, [Problem("", f"YAML syntax: {exc}")]
    finally:
        loader.dispose()
    return tree, []


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


def override_value(value):
    """An override as given -> a tree value.

    Text is read as YAML so that a mapping (``{ua: 50 W/K, ambient: 15 degC}``)
    or a table can be given; text that YAML reads as a yes/no word or nothing
    is kept as the text.
    """
    if isinstance(value, str):
        tree, problems = parse(value)
        if problems or tree is None or isinstance(tree, bool):
            return value
        return strip_lines(tree)
    return strip_lines(value)


def apply_overrides(tree: Mapping, overrides: dict | None) -> tuple[set[str], list[Problem]]:
    """Set each ``dotted.key.path`` of ``overrides`` in ``tree`` (in place).

    Every step of a path except the last must exist; the last key is replaced
    or added (an added key that the format does not know is reported by the
    validator like any unknown key). Returns (paths applied, problems).
    """
    applied: set[str] = set()
    problems: list[Problem] = []
    for path, value in (overrides or {}).items():
        parts = split_path(str(path))
        if not parts:
            problems.append(Problem(str(path), "override: empty key path"))
            continue
        node = tree
        for depth, part in enumerate(parts[:-1]):
            here = key_path(parts[:depth]) or "the top level"
            found, message = _step(node, part, here)
            if message:
                problems.append(Problem(str(path), f"override: {message}"))
                node = None
                break
            node = found
        if node is None:
            continue
        last = parts[-1]
        if isinstance(node, dict) and not isinstance(last, int):
            node[last] = override_value(value)
            node.key_lines[last] = None
        elif isinstance(node, list) and isinstance(last, int) and last < len(node):
            node[last] = override_value(value)
            node.item_lines[last] = None
        else:
            where = key_path(parts[:-1]) or "the top level"
            problems.append(Problem(str(path), f"override: cannot set {last!r} in {where}"))
            continue
        applied.add(key_path(parts))
    return applied, problems


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
