"""The package's layers: data flows one way, so no two modules import each other (at
the top of a file or inside a function), and the output modules share their number
formatting through cvsim.display rather than through each other's private helpers."""
import ast
from pathlib import Path

import cvsim

PACKAGE = Path(cvsim.__file__).resolve().parent


def _modules() -> dict[str, Path]:
    out = {}
    for path in PACKAGE.rglob("*.py"):
        parts = path.relative_to(PACKAGE.parent).with_suffix("").parts
        if parts[-1] == "__init__":
            parts = parts[:-1]
        out[".".join(parts)] = path
    return out


def _imports(name: str, path: Path, modules: dict) -> set[str]:
    """The cvsim modules ``name`` imports anywhere in its file. ``from pkg import x``
    counts as importing ``pkg.x`` when that is a module, else ``pkg``; a package's own
    ``__init__`` importing its submodules is how packages re-export, and a submodule
    importing a sibling through ``from . import sibling`` imports the sibling only."""
    package = name if path.name == "__init__.py" else name.rsplit(".", 1)[0]
    found = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")[:len(package.split(".")) - node.level + 1]
                target = ".".join(base + ([node.module] if node.module else []))
            else:
                target = node.module or ""
            subs = [f"{target}.{a.name}" for a in node.names if f"{target}.{a.name}" in modules]
            if subs:
                found.update(subs)
            if len(subs) < len(node.names) and target in modules:
                found.add(target)
        elif isinstance(node, ast.Import):
            found.update(a.name for a in node.names if a.name in modules)
    found.discard(name)
    return found


def _cycles(edges: dict[str, set[str]]) -> list[list[str]]:
    """Strongly connected groups of more than one module (Tarjan's algorithm)."""
    index, low, stack, on, groups = {}, {}, [], set(), []

    def visit(v):
        index[v] = low[v] = len(index)
        stack.append(v)
        on.add(v)
        for w in edges[v]:
            if w not in index:
                visit(w)
                low[v] = min(low[v], low[w])
            elif w in on:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            group = []
            while True:
                w = stack.pop()
                on.discard(w)
                group.append(w)
                if w == v:
                    break
            if len(group) > 1:
                groups.append(sorted(group))

    for v in edges:
        if v not in index:
            visit(v)
    return groups


def test_the_cycle_finder_finds_a_made_up_cycle():
    edges = {"a": {"b"}, "b": {"c"}, "c": {"a"}, "d": {"a"}}
    assert _cycles(edges) == [["a", "b", "c"]]


def test_no_two_modules_import_each_other():
    modules = _modules()
    edges = {m: {t for t in _imports(m, p, modules) if t in modules}
             for m, p in modules.items()}
    # a package's __init__ re-exports its submodules; its submodules never import it back
    for m in list(edges):
        if modules[m].name == "__init__.py":
            edges[m] = {t for t in edges[m] if not t.startswith(m + ".")}
    assert _cycles(edges) == []


def test_output_modules_use_no_private_helper_of_another_module():
    """No ``from .x import _name`` across modules (the report once borrowed the
    summary's ``_bar`` and ``_degc``; the command lines each other's ``_overrides``)."""
    bad = []
    for name, path in _modules().items():
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.ImportFrom) and (node.level or (node.module or "")
                                                     .startswith("cvsim")):
                bad += [f"{name}: {a.name} from {node.module}" for a in node.names
                        if a.name.startswith("_") and not a.name.startswith("__")]
    assert bad == []


def test_install_hints_refer_to_the_checkout_not_the_package_index():
    """'cvsim' on the package index is unrelated software: the distribution is named
    cvsim-vessels, and no hint tells a user to install 'cvsim[...]' from the index."""
    import tomllib
    root = PACKAGE.parent
    project = tomllib.loads((root / "pyproject.toml").read_text())["project"]
    assert project["name"] == "cvsim-vessels"
    assert project["scripts"] == {"cvsim": "cvsim.cli:command"}
    offenders = []
    for path in [*PACKAGE.rglob("*.py"), *root.glob("*.md"), *(root / "docs").glob("*.md")]:
        text = path.read_text(encoding="utf-8")
        if "cvsim[" in text or "install cvsim" in text:
            offenders.append(path.name)
    assert offenders == []
