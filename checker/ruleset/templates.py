"""Message and working templates: ``{name:fmt}`` placeholders, with an optional output unit
``{name|kN:.0f}`` converting from the internal unit (N -> kN, N·mm -> kNm, m for mm -> m).

Templates are parsed once when the rule file loads; every placeholder name is checked then.
Rendering works over whole columns (one list comprehension per placeholder), so a schedule of
100,000 caps does not pay a Python call per cap and placeholder.
"""

from __future__ import annotations

import string
from dataclasses import dataclass
from typing import Any, cast

import numpy as np

from checker.ruleset.expr import Env
from checker.units import FROM_INTERNAL

#: the output units a template may name -> multiplier from the internal unit
UNIT_SCALE = {u: FROM_INTERNAL[u] for u in ("kN", "kNm", "MN", "m", "%", "")}
_FORMATTER = string.Formatter()
_SPEC = __import__("re").compile(r"^[<>^]?[+\- ]?\d{0,2},?(\.\d{1,2})?[fgde%]?$")


class TemplateError(ValueError):
    pass


@dataclass(frozen=True)
class Field:
    """A placeholder ``{name|unit:spec}``: the quantity's name, the multiplier from its internal unit
    to the unit named (1.0 where none is named) and the format spec ('' renders as ``g``)."""

    name: str
    scale: float
    spec: str


@dataclass(frozen=True)
class Template:
    """A parsed template: its text and its parts in order, literal text and :class:`Field` placeholders."""

    text: str
    parts: tuple[str | Field, ...]

    @property
    def names(self) -> set[str]:
        return {p.name for p in self.parts if isinstance(p, Field)}

    def render_one(self, env: Env) -> str:
        out = []
        for p in self.parts:
            if isinstance(p, str):
                out.append(p)
            else:
                out.append(_fmt(env.get(p.name), p))
        return "".join(out)

    def render_many(self, env: Env, index: np.ndarray) -> list[str]:
        """Render for the rows ``index`` of the column arrays in ``env``."""
        n = len(index)
        if n == 0:
            return []
        if not self.parts:
            return [""] * n
        cols: list[list[str]] = []
        for p in self.parts:
            if isinstance(p, str):
                cols.append([p] * n)
                continue
            v = env.get(p.name)
            if isinstance(v, np.ndarray) and v.ndim == 1:
                vals = v[index]
                if vals.dtype.kind in "fiu":
                    vals = vals.astype(float) * p.scale
                    spec = p.spec or "g"
                    finite = np.isfinite(vals)
                    if finite.all():
                        cols.append([format(x, spec) for x in vals.tolist()])
                    else:
                        cols.append([format(x, spec) if ok else _fmt_num(x, spec)
                                     for x, ok in zip(vals.tolist(), finite.tolist())])
                else:
                    cols.append([str(x) for x in vals.tolist()])
            else:
                s = _fmt(v, p)
                cols.append([s] * n)
        return ["".join(t) for t in zip(*cols)]


def _fmt_num(x: float, spec: str) -> str:
    if x != x:  # NaN
        return "n/a"
    if x in (float("inf"), float("-inf")):
        return "∞" if x > 0 else "-∞"
    try:
        return format(x, spec) if spec else f"{x:g}"
    except ValueError:
        return f"{x:g}"


def _fmt(v: Any, p: Field) -> str:
    if v is None:
        return "n/a"
    if isinstance(v, np.ndarray):
        v = v.item() if v.size == 1 else v
    if isinstance(v, (int, float, np.floating, np.integer)) and not isinstance(v, bool):
        return _fmt_num(float(v) * p.scale, p.spec)
    return str(v)


def parse_template(text: str, known: set[str]) -> Template:
    """Parse and check a template; unknown placeholders or units raise TemplateError."""
    parts: list[str | Field] = []
    try:
        parsed = list(_FORMATTER.parse(text))
    except ValueError as exc:
        raise TemplateError(f"template {text!r}: {exc}") from None
    for literal, field_name, spec, conv in parsed:
        if literal:
            parts.append(literal)
        if field_name is None:
            continue
        spec = cast(str, spec)  # a str wherever field_name is one
        if conv:
            raise TemplateError(f"template {text!r}: conversions like !r are not allowed")
        name, _, unit = field_name.partition("|")
        name = name.strip()
        unit = unit.strip()
        if not name.isidentifier() or name.startswith("_"):
            raise TemplateError(f"template {text!r}: placeholder {{{field_name}}} is not a plain name")
        if name not in known:
            raise TemplateError(f"template {text!r}: unknown placeholder {{{name}}}")
        if unit not in UNIT_SCALE:
            raise TemplateError(
                f"template {text!r}: unknown unit '{unit}' (allowed: {', '.join(u for u in UNIT_SCALE if u)})"
            )
        if spec and not _SPEC.match(spec):
            raise TemplateError(f"template {text!r}: format '{spec}' is not allowed "
                                "(e.g. '.0f', '.2f', ',.0f', 'g'; width and precision at most two digits)")
        try:
            format(1.0, spec)
        except ValueError:
            raise TemplateError(f"template {text!r}: '{spec}' is not a number format") from None
        parts.append(Field(name, UNIT_SCALE[unit], spec))
    return Template(text, tuple(parts))
