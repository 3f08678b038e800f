"""Module ownership: no import cycle between capcheck's modules, and every module imports on its own.

Every import statement of every module under ``checker/`` counts, wherever it stands: at the top,
inside a function (a deferred import only hides a cycle) or under ``TYPE_CHECKING`` (a cycle of
types is still two modules that each need the other). A shared constant or type lives in the module
that owns it (see "Module ownership" in DEVELOPERS.md), so these edges form no cycle.
"""

from __future__ import annotations

import ast
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
PACKAGE = ROOT / "checker"


def _module_name(path: Path) -> str:
    parts = list(path.relative_to(ROOT).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def checker_modules() -> dict[str, Path]:
    return {_module_name(p): p for p in sorted(PACKAGE.rglob("*.py"))}


def _resolve(name: str, modules: dict[str, Path]) -> str | None:
    """The checker module an imported name belongs to (``checker.report.comments.X`` -> the module)."""
    while name:
        if name in modules:
            return name
        name = name.rpartition(".")[0]
    return None


def import_edges(modules: dict[str, Path] | None = None) -> dict[str, set[str]]:
    """module -> the checker modules it imports (anywhere in its source)."""
    modules = modules or checker_modules()
    edges: dict[str, set[str]] = {m: set() for m in modules}
    for mod, path in modules.items():
        is_pkg = path.name == "__init__.py"
        tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
        for node in ast.walk(tree):
            targets: list[str] = []
            if isinstance(node, ast.Import):
                targets = [a.name for a in node.names]
            elif isinstance(node, ast.ImportFrom):
                if node.level:
                    base = mod.split(".") if is_pkg else mod.split(".")[:-1]
                    base = base[: len(base) - (node.level - 1)]
                    stem = ".".join(base + ([node.module] if node.module else []))
                else:
                    stem = node.module or ""
                # `from pkg import sub` imports the submodule when there is one
                targets = [f"{stem}.{a.name}" for a in node.names] or [stem]
            for t in targets:
                if not t.startswith("checker"):
                    continue
                target = _resolve(t, modules)
                # a module's own parent packages are always initialised before it, so reading a
                # name from one (``from checker import __version__``) cannot close a circle
                if target is not None and target != mod and not mod.startswith(target + "."):
                    edges[mod].add(target)
    return edges


def find_cycles(edges: dict[str, set[str]]) -> list[list[str]]:
    """The strongly connected components with more than one module (Tarjan)."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    out: list[list[str]] = []
    counter = [0]

    def visit(v: str) -> None:
        index[v] = low[v] = counter[0]
        counter[0] += 1
        stack.append(v)
        on_stack.add(v)
        for w in sorted(edges.get(v, ())):
            if w not in index:
                visit(w)
                low[v] = min(low[v], low[w])
            elif w in on_stack:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            comp = []
            while True:
                w = stack.pop()
                on_stack.discard(w)
                comp.append(w)
                if w == v:
                    break
            if len(comp) > 1:
                out.append(sorted(comp))

    for v in sorted(edges):
        if v not in index:
            visit(v)
    return out


def test_the_cycle_finder_finds_a_cycle():
    edges = {"a": {"b"}, "b": {"c"}, "c": {"a"}, "d": {"a"}}
    assert find_cycles(edges) == [["a", "b", "c"]]
    assert find_cycles({"a": {"b"}, "b": set()}) == []


def test_edges_are_read_from_every_kind_of_import():
    edges = import_edges()
    # a top-level import, a deferred one inside a function, and one under TYPE_CHECKING
    assert "checker.findings" in edges["checker.report.terminal"]
    assert "checker.api" in edges["checker.cli"]
    assert "checker.api" in edges["checker.report.sheet"]


def test_no_import_cycle_between_checker_modules():
    cycles = find_cycles(import_edges())
    assert cycles == [], "import cycles between checker modules: " + "; ".join(
        " <-> ".join(c) for c in cycles)


def test_every_module_imports_in_a_fresh_interpreter():
    """Each module imported first, with no other capcheck module loaded before it (one child
    interpreter; capcheck's modules are dropped from sys.modules before each import).
    ``checker.__main__`` is left out: importing it runs the command."""
    names = sorted(m for m in checker_modules() if m != "checker.__main__")
    code = (
        "import importlib, sys\n"
        f"names = {names!r}\n"
        "failed = []\n"
        "for n in names:\n"
        "    for m in [m for m in sys.modules if m == 'checker' or m.startswith('checker.')]:\n"
        "        del sys.modules[m]\n"
        "    try:\n"
        "        importlib.import_module(n)\n"
        "    except Exception as exc:\n"
        "        failed.append(f'{n}: {type(exc).__name__}: {exc}')\n"
        "print('\\n'.join(failed))\n"
        "sys.exit(1 if failed else 0)\n"
    )
    res = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True,
                         env={**__import__("os").environ, "PYTHONPATH": str(ROOT)}, timeout=300)
    assert res.returncode == 0, res.stdout + res.stderr
