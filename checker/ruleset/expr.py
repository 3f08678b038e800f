"""The whitelisted expression language of the rule files.

An expression is parsed with :mod:`ast` (parsing only, never ``eval``/``exec``) and every node is
checked against a short whitelist: numbers, names, ``+ - * / **``, unary minus, comparisons,
``and``/``or``/``not``, and calls of a fixed set of functions. Anything else (attribute access,
subscripts, lambdas, comprehensions, strings, keywords arguments ...) is refused with a reason.
The checked tree is compiled once into nested closures that evaluate over numpy arrays, so a rule
costs a handful of vectorised operations however many caps the schedule has.
"""

from __future__ import annotations

import ast
import operator
import warnings
from dataclasses import dataclass
from typing import Any, Callable, Mapping, Sequence, TypeAlias, cast

import numpy as np
from numpy.typing import NDArray

from checker.calcs._typing import Real

MAX_LENGTH = 400          # characters
MAX_DEPTH = 24            # nesting of the syntax tree
MAX_NODES = 200
MAX_CONST_EXPONENT = 16.0  # a constant exponent larger than this is refused (e.g. 9**9**9)


Env: TypeAlias = Mapping[str, Any]
"""What an expression reads its names from: quantities (arrays per cap), parameters (numbers) and,
for the templates, a few texts."""
Compiled: TypeAlias = Callable[[Env], Real]
"""A compiled node: a function of the environment giving a number or an array per cap."""


class ExprError(ValueError):
    """An expression is not allowed or not well formed; the message says why."""


def _num(x: Real | np.bool_) -> Real:
    """Truth values as 1.0 / 0.0, so that arithmetic on a comparison is defined (``-(a < b)``)."""
    return np.asarray(x, dtype=float) if np.ndim(x) else float(x)


def _where(cond: Real, a: Real, b: Real) -> NDArray[Any]:
    return np.where(np.asarray(cond, dtype=bool), a, b)


FUNCTIONS: dict[str, tuple[Callable[..., Real], int, int]] = {
    # name: (implementation, min args, max args)
    "min": (lambda *a: _reduce(np.fmin, a), 1, 8),
    "max": (lambda *a: _reduce(np.fmax, a), 1, 8),
    "abs": (np.abs, 1, 1),
    "sqrt": (np.sqrt, 1, 1),
    "sin": (lambda x: np.sin(np.radians(x)), 1, 1),
    "cos": (lambda x: np.cos(np.radians(x)), 1, 1),
    "tan": (lambda x: np.tan(np.radians(x)), 1, 1),
    "atan": (lambda x: np.degrees(np.arctan(x)), 1, 1),
    "where": (_where, 3, 3),
    "isnan": (lambda x: _num(np.isnan(x)), 1, 1),
}
"""Trigonometric functions work in degrees, the unit of angles in the rule files."""


def _reduce(fn: Callable[[Real, Real], Real], args: Sequence[Real]) -> Real:
    out = args[0]
    for a in args[1:]:
        out = fn(out, a)
    return out


_BINOPS: dict[type[ast.operator], Callable[[Any, Any], Any]] = {
    ast.Add: operator.add,
    ast.Sub: operator.sub,
    ast.Mult: operator.mul,
    ast.Div: np.true_divide,
    ast.Pow: np.power,
}
_CMPOPS = {
    ast.Lt: np.less,
    ast.LtE: np.less_equal,
    ast.Gt: np.greater,
    ast.GtE: np.greater_equal,
    ast.Eq: np.equal,
    ast.NotEq: np.not_equal,
}


@dataclass(frozen=True)
class Expression:
    """A checked, compiled expression. ``names`` are the quantities and parameters it reads."""

    text: str
    names: frozenset[str]
    _fn: Compiled

    def __call__(self, env: Env) -> Real:
        with np.errstate(all="ignore"):
            return self._fn(env)


def compile_expression(text: str, known: set[str] | frozenset[str] | None = None) -> Expression:
    """Check ``text`` against the whitelist and compile it.

    ``known``, when given, is the set of names the expression may read; an unknown name is refused
    here, when the rule file loads, rather than when a schedule is checked.
    """
    if not isinstance(text, str):
        raise ExprError(f"an expression must be text, not {type(text).__name__}")
    src = text.strip()
    if not src:
        raise ExprError("the expression is empty")
    if len(src) > MAX_LENGTH:
        raise ExprError(f"the expression is {len(src)} characters long; at most {MAX_LENGTH} are allowed")
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("error", SyntaxWarning)  # e.g. '1and b': refused, not warned about
            tree = ast.parse(src, mode="eval")
    except SyntaxWarning as exc:
        raise ExprError(f"not a valid expression ({exc})") from None
    except SyntaxError as exc:
        raise ExprError(f"not a valid expression ({exc.msg})") from None
    except (ValueError, RecursionError, MemoryError):
        raise ExprError("not a valid expression") from None
    names: set[str] = set()
    count = [0]
    fn = _compile(tree.body, names, count, 0)
    if known is not None:
        unknown = sorted(names - set(known))
        if unknown:
            raise ExprError(f"unknown name(s): {', '.join(unknown)}")
    return Expression(src, frozenset(names), fn)


def _compile(node: ast.AST, names: set[str], count: list[int], depth: int) -> Compiled:
    """Compile one node of a rule expression to a function of ``env``, refusing anything outside
    the allowed subset as it goes (``names`` collects the names read, ``count`` the nodes seen).

    Longer than 80 lines on purpose (issue 12): it is the single dispatch over the node kinds an
    expression may contain, and each kind's refusals sit beside the closure it compiles to, so
    the whole whitelist of the expression language reads top to bottom in one place. Split per
    node kind it would scatter that whitelist over helpers that each repeat the recursion, with
    no branch shorter to read."""
    count[0] += 1
    if count[0] > MAX_NODES:
        raise ExprError(f"the expression has more than {MAX_NODES} parts")
    if depth > MAX_DEPTH:
        raise ExprError(f"the expression is nested deeper than {MAX_DEPTH} levels")
    d = depth + 1

    if isinstance(node, ast.Constant):
        if isinstance(node.value, bool) or not isinstance(node.value, (int, float)):
            raise ExprError(f"only numbers are allowed as constants, not {node.value!r}")
        value = float(node.value)
        return lambda env: value

    if isinstance(node, ast.Name):
        name = node.id
        if name.startswith("_"):
            raise ExprError(f"names starting with '_' are not allowed ({name})")
        if name in FUNCTIONS:
            raise ExprError(f"'{name}' is a function and must be called")
        names.add(name)

        def load(env: Env, _n: str = name) -> Real:
            try:
                return cast(Real, env[_n])
            except KeyError:
                raise ExprError(f"unknown name: {_n}") from None

        return load

    if isinstance(node, ast.BinOp):
        op = _BINOPS.get(type(node.op))
        if op is None:
            raise ExprError(f"the operator {type(node.op).__name__} is not allowed")
        if isinstance(node.op, ast.Pow):
            exp = node.right
            if not (isinstance(exp, ast.Constant) and isinstance(exp.value, (int, float))
                    and not isinstance(exp.value, bool)):
                raise ExprError("an exponent must be a plain number")
            if abs(float(exp.value)) > MAX_CONST_EXPONENT:
                raise ExprError(f"the exponent {exp.value} is larger than {MAX_CONST_EXPONENT:g}")
        left = _compile(node.left, names, count, d)
        right = _compile(node.right, names, count, d)
        return lambda env: op(left(env), right(env))

    if isinstance(node, ast.UnaryOp):
        operand = _compile(node.operand, names, count, d)
        if isinstance(node.op, ast.USub):
            return lambda env: -operand(env)
        if isinstance(node.op, ast.UAdd):
            return operand
        if isinstance(node.op, ast.Not):
            return lambda env: _num(np.logical_not(operand(env)))
        raise ExprError(f"the operator {type(node.op).__name__} is not allowed")

    if isinstance(node, ast.BoolOp):
        parts = [_compile(v, names, count, d) for v in node.values]
        combine = np.logical_and if isinstance(node.op, ast.And) else np.logical_or

        def boolop(env: Env) -> Real:
            out = parts[0](env)
            for p in parts[1:]:
                out = combine(out, p(env))
            return _num(out)

        return boolop

    if isinstance(node, ast.Compare):
        if len(node.ops) != 1:
            raise ExprError("chained comparisons are not allowed; write 'a < b and b < c'")
        cmp = _CMPOPS.get(type(node.ops[0]))
        if cmp is None:
            raise ExprError(f"the comparison {type(node.ops[0]).__name__} is not allowed")
        left = _compile(node.left, names, count, d)
        right = _compile(node.comparators[0], names, count, d)
        return lambda env: _num(cmp(left(env), right(env)))

    if isinstance(node, ast.Call):
        if not isinstance(node.func, ast.Name):
            raise ExprError("calling anything but the listed functions is not allowed (no attribute access)")
        fname = node.func.id
        if fname not in FUNCTIONS:
            raise ExprError(
                f"the function '{fname}' is not allowed; allowed: {', '.join(sorted(FUNCTIONS))}"
            )
        if node.keywords:
            raise ExprError(f"keyword arguments are not allowed in {fname}()")
        impl, lo, hi = FUNCTIONS[fname]
        if not lo <= len(node.args) <= hi:
            raise ExprError(f"{fname}() takes {lo}..{hi} arguments, {len(node.args)} given")
        if any(isinstance(a, ast.Starred) for a in node.args):
            raise ExprError("starred arguments are not allowed")
        args = [_compile(a, names, count, d) for a in node.args]
        return lambda env: impl(*(a(env) for a in args))

    if isinstance(node, ast.IfExp):
        raise ExprError("'x if c else y' is not allowed; use where(c, x, y)")
    kind = type(node).__name__
    hints = {
        "Attribute": "attribute access is not allowed",
        "Subscript": "indexing is not allowed",
        "Lambda": "lambdas are not allowed",
        "ListComp": "comprehensions are not allowed",
        "GeneratorExp": "comprehensions are not allowed",
        "SetComp": "comprehensions are not allowed",
        "DictComp": "comprehensions are not allowed",
        "NamedExpr": "assignment is not allowed",
        "JoinedStr": "strings are not allowed",
        "Await": "not allowed",
    }
    raise ExprError(hints.get(kind, f"'{kind}' is not allowed in an expression"))
