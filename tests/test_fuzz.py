"""A hostile user, in bounded time: every demo scenario is mutated a few times at
random (seeded) and checked and run; no traceback, no hang, no half-written output.

Each run is shortened to 20 s of simulated time. The seed is fixed so that a
failure can be replayed; ``CVSIM_FUZZ_SEED=<number>`` draws another sample
(the seed of a failing case is in the assertion message).
"""
import contextlib
import io
import json
import os
import random
import signal
from pathlib import Path

import pytest
import yaml

from cvsim import outfolder, solve
from cvsim.cli import main

ROOT = Path(__file__).resolve().parents[1]
DEMOS = sorted((ROOT / "scenarios").glob("*.yaml"))
SEED = int(os.environ.get("CVSIM_FUZZ_SEED", "1010"))
#: mutations per demo scenario and run
PER_SCENARIO = 3
#: simulated time of every mutated run
END = "20 s"
#: [s] a run that takes longer than this is stopped by the solver (status failed);
#: one that takes longer than HANG is a hang: the test fails
RUN_LIMIT = 10.0
HANG = 40.0

NUMBERS = [0, -1, 1e-12, 1e12, 1e300, "nan", "inf", "-inf", 3.7]
UNITS = ["kg", "degC", "barg", "bar", "m3", "s", "%", "W", "mm", "K", "furlong", ""]
ODD_VALUES = [None, True, [], {}, [1, [2, [3]]], {"a": {"b": "c"}}, "", "x" * 3000,
              "10 mm\x1b[0m", "\u00e9\u00e8\u2603", -5, 1e308, "1e999 bar"]
ODD_TEXT = ["\x00", "\x1b[31m", "\x7f", "\t", "\ufeff", "\u2028", ": ", "- ", "{", "&a ",
            "*a", "!!python/object:os.system", "'", '"', "\n  ", "#"]


def _paths(node, path=()):
    """Every (path, value) in a tree of dicts and lists."""
    yield path, node
    if isinstance(node, dict):
        for k, v in node.items():
            yield from _paths(v, path + (k,))
    elif isinstance(node, list):
        for i, v in enumerate(node):
            yield from _paths(v, path + (i,))


def _set(tree, path, value):
    node = tree
    for p in path[:-1]:
        node = node[p]
    node[path[-1]] = value


def _drop(tree, path):
    node = tree
    for p in path[:-1]:
        node = node[p]
    del node[path[-1]]


def mutate(text: str, rng: random.Random) -> tuple[str, str]:
    """One random mutation of a scenario (shortened to END); (what, new text)."""
    tree = yaml.safe_load(text)
    tree.setdefault("run", {})["end"] = END
    leaves = [(p, v) for p, v in _paths(tree) if p]
    kind = rng.choice(["number", "unit", "drop", "type", "unknown", "text", "cut"])
    path, value = rng.choice(leaves)
    where = ".".join(map(str, path))
    if kind == "number":
        texts = [(p, v) for p, v in leaves if isinstance(v, str) and v[:1].isdigit()]
        if texts:
            path, value = rng.choice(texts)
            where = ".".join(map(str, path))
            number = rng.choice(NUMBERS)
            rest = value.split(" ", 1)[1] if " " in value else ""
            new = f"{number} {rest}".strip()
            _set(tree, path, new)
            return f"{where}: {value!r} -> {new!r}", yaml.safe_dump(tree, sort_keys=False)
        kind = "type"
    if kind == "unit" and isinstance(value, str) and " " in value:
        new = value.split(" ", 1)[0] + " " + rng.choice(UNITS)
        _set(tree, path, new)
        return f"{where}: {value!r} -> {new!r}", yaml.safe_dump(tree, sort_keys=False)
    if kind == "drop":
        _drop(tree, path)
        return f"{where}: dropped", yaml.safe_dump(tree, sort_keys=False)
    if kind == "unknown" and isinstance(value, dict):
        value["surprise_key"] = rng.choice(ODD_VALUES)
        return f"{where}: unknown key added", yaml.safe_dump(tree, sort_keys=False)
    dumped = yaml.safe_dump(tree, sort_keys=False, allow_unicode=True)
    if kind == "text":
        i = rng.randrange(len(dumped))
        odd = rng.choice(ODD_TEXT)
        return f"text: {odd!r} at {i}", dumped[:i] + odd + dumped[i:]
    if kind == "cut":
        i = rng.randrange(len(dumped))
        return f"text cut at {i}", dumped[:i]
    new = rng.choice(ODD_VALUES)
    _set(tree, path, new)
    return f"{where}: {value!r} -> {new!r}"[:200], yaml.safe_dump(tree, sort_keys=False,
                                                                   allow_unicode=True)


class Hang(Exception):
    pass


@contextlib.contextmanager
def no_hang(seconds: float):
    def alarm(signum, frame):
        raise Hang(f"no answer within {seconds} s")

    old = signal.signal(signal.SIGALRM, alarm)
    signal.setitimer(signal.ITIMER_REAL, seconds)
    try:
        yield
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0.0)
        signal.signal(signal.SIGALRM, old)


def call(argv: list[str]) -> tuple[int, str]:
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err), \
            no_hang(HANG), solve.time_limit(RUN_LIMIT):
        code = main(argv)
    return code, err.getvalue()


@pytest.mark.skipif(os.name != "posix", reason="SIGALRM guards against a hang")
@pytest.mark.parametrize("scenario", DEMOS, ids=lambda p: p.stem)
def test_mutated_demo_scenarios_fail_cleanly_or_run(scenario, tmp_path):
    rng = random.Random(f"{SEED}:{scenario.stem}")
    text = scenario.read_text()
    for k in range(PER_SCENARIO):
        what, mutated = mutate(text, rng)
        label = f"{scenario.stem}, seed {SEED}, mutation {k}: {what}"
        path = tmp_path / f"m{k}.yaml"
        path.write_text(mutated, encoding="utf-8", errors="surrogateescape")
        out = tmp_path / f"out{k}"
        code, err = call(["check", str(path)])
        assert code in (0, 2), label
        assert "Traceback" not in err, label
        code, err = call(["run", str(path), "--out", str(out), "--quiet", "--no-plots"])
        assert code in (0, 1, 2, 3), label
        assert "Traceback" not in err, label
        if code in (0, 3):  # written whole: every file, all of them cvsim's
            names = {p.name for p in out.iterdir()}
            assert {"history.csv", "steps.csv", "summary.txt", "summary.json", "inputs.txt",
                    outfolder.MARKER} <= names, label
            assert outfolder.foreign_files(out) == [], label
            assert json.loads((out / "summary.json").read_text())["status"], label
        else:  # refused or failed: nothing written
            assert not out.exists(), label
            assert err.startswith("cvsim: "), label
        hidden = [p.name for p in tmp_path.iterdir() if ".partial-" in p.name
                  or ".old-" in p.name or p.name.endswith(".lock")]
        assert hidden == [], label
