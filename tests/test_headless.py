"""The import contract, checked on every module found by walking the packages (no hand-kept list):

- the engine (``wordkin.index``) imports neither ``wordkin.console`` nor textual nor rich, at any depth (imports
  inside functions count: they are where cycles hide);
- there is no import cycle among wordkin's modules;
- importing the whole engine in a fresh interpreter loads no textual or rich module;
- the warm ``near`` path imports nothing heavy it does not need.
"""

from __future__ import annotations

import ast
import importlib.util
import json
import pkgutil
import subprocess
import sys
from pathlib import Path

import wordkin.console
import wordkin.index

from .conftest import ROOT, gensim_data, run_cli

FORBIDDEN_IN_ENGINE = ("wordkin.console", "textual", "rich")


def _modules(package) -> dict[str, Path]:
    out = {package.__name__: Path(package.__file__)}
    for info in pkgutil.walk_packages(package.__path__, package.__name__ + "."):
        spec = importlib.util.find_spec(info.name)
        assert spec is not None and spec.origin is not None, info.name
        out[info.name] = Path(spec.origin)
    return out


def _is_type_checking(node: ast.If) -> bool:
    t = node.test
    return (isinstance(t, ast.Name) and t.id == "TYPE_CHECKING") or (
        isinstance(t, ast.Attribute) and t.attr == "TYPE_CHECKING"
    )


def imports_of(module: str, path: Path) -> set[str]:
    """Every module ``module`` imports, at any depth of its code (``if TYPE_CHECKING:`` blocks aside)."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    package = module if path.name == "__init__.py" else module.rsplit(".", 1)[0]
    found: set[str] = set()

    def visit(node: ast.AST) -> None:
        if isinstance(node, ast.If) and _is_type_checking(node):
            for child in node.orelse:
                visit(child)
            return
        if isinstance(node, ast.Import):
            found.update(a.name for a in node.names)
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.rsplit(".", node.level - 1)[0] if node.level > 1 else package
                target = f"{base}.{node.module}" if node.module else base
            else:
                target = node.module or ""
            found.add(target)
            # ``from . import cache`` imports the submodule ``<base>.cache``.
            found.update(f"{target}.{a.name}" for a in node.names)
        for child in ast.iter_child_nodes(node):
            visit(child)

    visit(tree)
    return found


def graph(modules: dict[str, Path]) -> dict[str, set[str]]:
    return {m: {i for i in imports_of(m, p) if i in modules and i != m} for m, p in modules.items()}


def cycles(g: dict[str, set[str]]) -> list[list[str]]:
    """Strongly connected components of more than one module (Tarjan's algorithm)."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on: set[str] = set()
    out: list[list[str]] = []
    counter = [0]

    def strong(v: str) -> None:
        index[v] = low[v] = counter[0]
        counter[0] += 1
        stack.append(v)
        on.add(v)
        for w in sorted(g[v]):
            if w not in index:
                strong(w)
                low[v] = min(low[v], low[w])
            elif w in on:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            comp = []
            while True:
                w = stack.pop()
                on.discard(w)
                comp.append(w)
                if w == v:
                    break
            if len(comp) > 1:
                out.append(sorted(comp))

    sys.setrecursionlimit(10_000)
    for v in sorted(g):
        if v not in index:
            strong(v)
    return out


def engine_violations(modules: dict[str, Path]) -> dict[str, list[str]]:
    bad: dict[str, list[str]] = {}
    for m, p in modules.items():
        hits = [i for i in imports_of(m, p) if any(i == f or i.startswith(f + ".") for f in FORBIDDEN_IN_ENGINE)]
        if hits:
            bad[m] = sorted(hits)
    return bad


def test_engine_imports_no_console_textual_or_rich():
    engine = _modules(wordkin.index)
    assert len(engine) > 20  # the walk found the engine's modules
    assert engine_violations(engine) == {}


def test_no_import_cycles():
    modules = _modules(wordkin.index) | _modules(wordkin.console)
    assert cycles(graph(modules)) == []


def test_the_contract_test_catches_a_violation(tmp_path):
    # A module of the engine that imports textual, and two modules that import each other inside functions.
    (tmp_path / "bad.py").write_text("def f():\n    from textual.app import App\n    return App\n")
    (tmp_path / "a.py").write_text("def f():\n    from . import b\n")
    (tmp_path / "b.py").write_text("from .a import f\n")
    modules = {"wordkin.index.bad": tmp_path / "bad.py"}
    assert "textual.app" in engine_violations(modules)["wordkin.index.bad"]
    pair = {"pkg.a": tmp_path / "a.py", "pkg.b": tmp_path / "b.py"}
    assert cycles(graph(pair)) == [["pkg.a", "pkg.b"]]


def _loaded_after(code: str) -> set[str]:
    out = (
        subprocess.run(
            [sys.executable, "-c", code + "\nimport sys, json; print(json.dumps(sorted(sys.modules)))"],
            capture_output=True,
            text=True,
            cwd=ROOT,
            check=True,
        )
        .stdout.strip()
        .splitlines()[-1]
    )
    return {m.split(".")[0] for m in json.loads(out)}


def test_index_imports_no_ui():
    code = "\n".join(f"import {m}" for m in _modules(wordkin.index) if not m.endswith("ann.child"))
    loaded = _loaded_after(code)
    assert "textual" not in loaded and "rich" not in loaded


def test_warm_near_imports_no_gensim_scipy_textual_pyarrow(tmp_path):
    path = str(gensim_data("lee_fasttext.vec"))
    cache = str(tmp_path / "c")
    assert run_cli("info", path, "--cache", cache).returncode == 0  # the first open fills the cache
    code = (
        "import sys\nfrom wordkin.console.cli import main\n"
        f"rc = main(['near', {path!r}, 'government', '--cache', {cache!r}, '--json'])\nassert rc == 0"
    )
    loaded = _loaded_after(code)
    for heavy in ("gensim", "scipy", "textual", "pyarrow", "rapidfuzz", "smart_open"):
        assert heavy not in loaded, heavy
