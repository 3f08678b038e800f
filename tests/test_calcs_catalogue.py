"""Meta-tests over the formula catalogue (checker.calcs): one citation format on the first
docstring line, units in square brackets for every argument and the return value, pure numpy
(no ``math`` module), and every function vectorised (an array in gives an array out).
"""

from __future__ import annotations

import ast
import inspect
import re

import numpy as np
import pytest

from checker import calcs

CITATION = re.compile(
    r"^(EN 199\d-\d-\d:\d{4} "
    r"(\d+(\.\d+)*(\(\d+\)P?)?|Annex [A-Z])"
    r"(, (Eq\. \([\w.]+\)|Table [\w.]+|Figure [\w.]+))?"
    r"|Common practice: .+|Derived: .+)$"
)

FUNCS = [
    (mod.__name__.rsplit(".", 1)[1], name, fn)
    for mod in calcs.MODULES
    for name, fn in inspect.getmembers(mod, inspect.isfunction)
    if not name.startswith("_") and fn.__module__ == mod.__name__
]


def test_catalogue_is_not_empty():
    assert len(FUNCS) > 50


@pytest.mark.parametrize("module, name, fn", FUNCS, ids=[f"{m}.{n}" for m, n, _ in FUNCS])
def test_first_line_is_a_citation(module, name, fn):
    doc = inspect.getdoc(fn)
    assert doc, f"{module}.{name} has no docstring"
    first = doc.splitlines()[0]
    assert CITATION.match(first), f"{module}.{name}: first line {first!r} is not a citation"


def _sections(doc: str) -> dict[str, list[str]]:
    out: dict[str, list[str]] = {}
    cur = None
    for line in doc.splitlines():
        s = line.strip()
        if s in ("Args:", "Returns:"):
            cur = s[:-1]
            out[cur] = []
        elif cur and s:
            out[cur].append(line)
        elif cur and not s:
            cur = None if cur == "Returns" else cur
    return out


@pytest.mark.parametrize("module, name, fn", FUNCS, ids=[f"{m}.{n}" for m, n, _ in FUNCS])
def test_units_for_every_argument_and_the_return(module, name, fn):
    doc = inspect.getdoc(fn)
    sec = _sections(doc)
    params = [p for p in inspect.signature(fn).parameters if p != "tol"]
    assert "Returns" in sec and "[" in " ".join(sec["Returns"]), f"{module}.{name}: Returns unit"
    if not params:
        return
    assert "Args" in sec, f"{module}.{name}: no Args section"
    entries: list[str] = []
    for line in sec["Args"]:
        if re.match(r"^\s{4}[A-Za-z_][\w, ]*:", line):
            entries.append(line)
        elif entries:
            entries[-1] += " " + line.strip()
    documented = {}
    for e in entries:
        names, text = e.split(":", 1)
        for nm in names.split(","):
            documented[nm.strip()] = text
    for p in params:
        assert p in documented, f"{module}.{name}: argument {p} undocumented"
        assert re.search(r"\[[^\]]*\]", documented[p]), f"{module}.{name}: {p} has no [unit]"


@pytest.mark.parametrize("mod", calcs.MODULES, ids=[m.__name__ for m in calcs.MODULES])
def test_no_math_module_and_no_parameter_globals(mod):
    tree = ast.parse(inspect.getsource(mod))
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            assert all(a.name != "math" for a in node.names), mod.__name__
        if isinstance(node, ast.ImportFrom):
            assert node.module != "math", mod.__name__
    # nationally determined parameters are keyword arguments: no module-level float constants
    # named like the profile parameters
    ndp = {"gamma_c", "gamma_s", "alpha_cc", "alpha_ct", "crd_c", "k1", "k2", "k3", "eta1",
           "delta_c_dev", "vrdmax_coeff"}
    for node in tree.body:
        if isinstance(node, ast.Assign):
            for t in node.targets:
                if isinstance(t, ast.Name):
                    assert t.id.lower() not in ndp, f"{mod.__name__}: module global {t.id}"


SCALAR_CALLS = [
    ("materials", "fctm", (np.array([25.0, 28.0, 60.0]),)),
    ("shear", "v_rdc", (np.array([25.0, 30.0]), np.array([500.0, 900.0]), np.array([0.003, 0.01]))),
    ("anchorage", "alpha2", (np.array([30.0, 75.0]), np.array([16.0, 25.0]))),
    ("punching", "column_perimeter", (np.array([500.0, 600.0]), np.array([400.0, 600.0]),
                                      np.array([False, True]))),
    ("strut_tie", "pile_design_diameter", (np.array([350.0, 600.0, 1200.0]),
                                           np.array([True, True, False]))),
    ("detailing", "as_min", (np.array([2.9, 3.5]), 500.0, np.array([900.0, 2700.0]),
                             np.array([850.0, 900.0]))),
]


@pytest.mark.parametrize("module, name, args", SCALAR_CALLS, ids=[f"{m}.{n}" for m, n, _ in SCALAR_CALLS])
def test_array_in_array_out_equals_elementwise(module, name, args, tol):
    fn = getattr(getattr(calcs, module), name)
    arr = fn(*args)
    n = len(args[0])
    assert np.shape(arr) == (n,)
    for i in range(n):
        el = fn(*[a[i] if isinstance(a, np.ndarray) else a for a in args])
        tol.same(arr[i], el)
