"""The schedule model: one pile cap in internal units, and the same constraints over a whole frame.

:class:`CapRecord` is the pydantic record of one cap (canonical field names of DEVELOPERS.md, internal
units N, mm, MPa, N·mm). Its field metadata is the one source of truth for the bounds:
:func:`validate_frame` reads the ``Gt/Ge/Lt/Le`` constraints, the whole-number types, the allowed
values (:class:`OneOf`) and the required flags from ``CapRecord.model_fields`` and applies them to a
DataFrame column by column with numpy. The cross-field checks are data too (:data:`CROSS_CHECKS`):
the record's ``model_validator`` and :func:`validate_frame` run the same vectorised functions.
"""

from __future__ import annotations

import types
import typing
from dataclasses import dataclass
from typing import Any, Callable, Mapping, cast

import annotated_types as at
import numpy as np
import pandas as pd
from pydantic import BaseModel, ConfigDict, Field, model_validator
from pydantic_core import core_schema

from checker.records import FieldError
from checker.units import FROM_INTERNAL, KIND_OF_UNIT

# --------------------------------------------------------------------------------------------
# Catalogues
# --------------------------------------------------------------------------------------------

#: Bar diameters [mm] of BS 8666 (preferred 8 to 40, with 6 and 50 as the non-preferred sizes;
#: from memory of BS 8666:2005 Table 1 - confirm against a licensed copy).
STANDARD_BAR_SIZES: tuple[int, ...] = (6, 8, 10, 12, 16, 20, 25, 32, 40, 50)

#: Concrete strength classes: name -> (fck [MPa], fck,cube [MPa]), the two figures of the name C{fck}/{fck,cube}.
#: EN 1992-1-1:2004 Table 3.1 (C12/15 ... C90/105) plus the UK classes C28/35 and C32/40 of
#: BS 8500-1 (see reference/ec2-pile-caps.md, section 3).
CONCRETE_CLASSES: dict[str, tuple[float, float]] = {
    name: (int(name[1:].partition("/")[0]), int(name.partition("/")[2])) for name in (
        "C12/15", "C16/20", "C20/25", "C25/30", "C28/35", "C30/37", "C32/40", "C35/45", "C40/50", "C45/55",
        "C50/60", "C55/67", "C60/75", "C70/85", "C80/95", "C90/105",
    )
}

BAR_ENDS: tuple[str, ...] = ("", "straight", "bent", "hooked")
CAPACITY_BASES: tuple[str, ...] = ("", "ULS", "SLS")


@dataclass(frozen=True)
class OneOf:
    """Field constraint: the value must be one of ``values`` (read by :func:`validate_frame` too)."""

    values: tuple

    def __get_pydantic_core_schema__(self, source: Any, handler: Any) -> Any:
        allowed = self.values

        def check(v: Any) -> Any:
            if v not in allowed:
                raise ValueError(f"must be one of {_list_values(allowed)}")
            return v

        return core_schema.no_info_after_validator_function(check, handler(source))


def _list_values(values: tuple) -> str:
    shown = [_fmt(v) if not isinstance(v, str) else (v or "''") for v in values]
    return ", ".join(shown)


_AUTO = "auto"


def _f(default: Any = ..., *, unit: str = "", show: tuple[str, float] | None = None, doc: str = "",
       meaning: str = "", heading: str | None = _AUTO, **constraints: Any) -> Any:
    """A model field with its internal unit, its display unit (name, factor from internal), doc, its
    meaning as a rule quantity (default: the doc) and the kind of schedule heading that gives it
    (default: the kind of its unit, 'text' for text; None: not read from a heading of its own)."""
    extra: dict[str, Any] = {"unit": unit, "show_unit": (show or (unit, 1.0))[0],
                             "show_scale": (show or (unit, 1.0))[1], "meaning": meaning or doc, "heading": heading}
    return Field(default, description=doc, json_schema_extra=extra, **constraints)


_KN = ("kN", FROM_INTERNAL["kN"])
_KNM = ("kNm", FROM_INTERNAL["kNm"])

#: reinforcement characteristic yield strength [MPa] where the schedule gives none (the brief)
FYK_DEFAULT: float = 500.0

# --------------------------------------------------------------------------------------------
# Cross-field checks (one definition, used by the record and by the frame)
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class CrossCheck:
    """A check over several fields.

    ``needs``: fields that must be present and individually valid for the check to apply.
    ``ok(cols)``: vectorised, True where the check is met (``cols``: field -> float/object array).
    ``message(cols)``: the messages for the rows passed in (all failing).
    ``field``: the field the message names first.
    """

    name: str
    field: str
    needs: tuple[str, ...]
    uses: tuple[str, ...]
    ok: Callable[[Mapping[str, np.ndarray]], np.ndarray]
    message: Callable[[Mapping[str, np.ndarray]], list[str]]


def _spacing_given(c: Mapping[str, np.ndarray]) -> np.ndarray:
    return (c["piles"] < 2) | ~np.isnan(c["pile_spacing"])


def _spacing_vs_dia(c: Mapping[str, np.ndarray]) -> np.ndarray:
    s, d = c["pile_spacing"], c["pile_dia"]
    return (c["piles"] < 2) | np.isnan(s) | (s >= d)


def _class_fck(names: np.ndarray) -> np.ndarray:
    lookup = {k: v[0] for k, v in CONCRETE_CLASSES.items()}
    return pd.Series(names, dtype=object).map(lookup).to_numpy(dtype=float, na_value=np.nan)


def _fck_matches(c: Mapping[str, np.ndarray]) -> np.ndarray:
    return np.isclose(c["fck"], _class_fck(c["concrete"]))


def _depth_fits(c: Mapping[str, np.ndarray]) -> np.ndarray:
    return c["cover"] + c["phi_x"] + c["phi_y"] < c["cap_depth"]


def _round_square(c: Mapping[str, np.ndarray]) -> np.ndarray:
    return ~c["column_round"].astype(bool) | (c["column_x"] == c["column_y"])


CROSS_CHECKS: tuple[CrossCheck, ...] = (
    CrossCheck(
        "spacing-given", "pile_spacing", ("piles",), ("piles", "pile_spacing"), _spacing_given,
        lambda c: [f"pile_spacing: missing; required for {_fmt(p)} piles" for p in c["piles"]],
    ),
    CrossCheck(
        "spacing-vs-diameter", "pile_spacing", ("piles", "pile_dia"), ("piles", "pile_dia", "pile_spacing"),
        _spacing_vs_dia,
        lambda c: [f"pile_spacing: {_fmt(s)} mm must be at least pile_dia {_fmt(d)} mm (the piles would overlap)"
                   for s, d in zip(c["pile_spacing"], c["pile_dia"])],
    ),
    CrossCheck(
        "fck-vs-class", "fck", ("fck", "concrete"), ("fck", "concrete"), _fck_matches,
        lambda c: [f"fck: {_fmt(f)} MPa does not match concrete {k} (fck {_fmt(g)} MPa)"
                   for f, k, g in zip(c["fck"], c["concrete"], _class_fck(c["concrete"]))],
    ),
    CrossCheck(
        "depth-fits", "cover", ("cover", "phi_x", "phi_y", "cap_depth"), ("cover", "phi_x", "phi_y", "cap_depth"),
        _depth_fits,
        lambda c: [f"cover: {_fmt(a)} mm + phi_x {_fmt(b)} mm + phi_y {_fmt(e)} mm must be less than "
                   f"cap_depth {_fmt(h)} mm" for a, b, e, h in
                   zip(c["cover"], c["phi_x"], c["phi_y"], c["cap_depth"])],
    ),
    CrossCheck(
        "round-column", "column_y", ("column_round", "column_x", "column_y"),
        ("column_round", "column_x", "column_y"), _round_square,
        lambda c: [f"column_y: {_fmt(y)} mm must equal column_x {_fmt(x)} mm for a circular column"
                   for x, y in zip(c["column_x"], c["column_y"])],
    ),
)

# --------------------------------------------------------------------------------------------
# The record
# --------------------------------------------------------------------------------------------

_OptF = typing.Optional[float]
#: a diameter of the standard bar sizes
_BarSize = typing.Annotated[float, OneOf(tuple(float(d) for d in STANDARD_BAR_SIZES))]


def _bars(a: str, layer: str) -> Any:
    """The field of the bottom bars spanning along ``a``, as written."""
    return _f(doc=f"bottom bars spanning along {a} ({layer}), as written", heading="bars", min_length=1)


def _of_bars(a: str, what: str, default: Any = ..., *, meaning: str = "", **kw: Any) -> Any:
    """A field of a figure of the bars along ``a``, read through their notation (no heading of its own)."""
    return _f(default, doc=f"{what} of bars_{a}", meaning=meaning or f"{what} of the bars along {a}", heading=None,
              **kw)


class CapRecord(BaseModel):
    """One pile cap, internal units (mm, mm², N, N·mm, MPa). Field order = canonical frame order."""

    model_config = ConfigDict(allow_inf_nan=False, str_strip_whitespace=True, extra="ignore", frozen=True)

    mark: str = _f(doc="cap reference as on the drawings", min_length=1)
    piles: int = _f(unit="count", doc="number of piles (standard layouts 1 to 6)", meaning="number of piles",
                    ge=1, le=6)
    pile_dia: float = _f(unit="mm", doc="pile diameter", meaning="pile diameter as scheduled", gt=0)
    pile_spacing: _OptF = _f(None, unit="mm", doc="centre-to-centre spacing s of the layout", gt=0)
    cap_length: float = _f(unit="mm", doc="plan L along x", meaning="cap plan length L (along x)", gt=0)
    cap_width: float = _f(unit="mm", doc="plan W along y", meaning="cap plan width W (along y)", gt=0)
    cap_depth: float = _f(unit="mm", doc="overall depth h", meaning="overall cap depth h", gt=0)
    column_x: float = _f(unit="mm", doc="column size along x (circular: D)", meaning="column size along x", gt=0)
    column_y: float = _f(unit="mm", doc="column size along y (circular: D)", meaning="column size along y", gt=0)
    column_round: bool = _f(False, doc="True for a circular column", heading=None)
    n_ed: _OptF = _f(None, unit="N", show=_KN, doc="ULS axial load, compression positive (of the cap's first "
                     "load case; a cap given only SLS loads or loads in a loads table may leave it blank)",
                     meaning="ULS axial load", gt=0)
    mx_ed: _OptF = _f(None, unit="N·mm", show=_KNM, doc="ULS moment about x")
    my_ed: _OptF = _f(None, unit="N·mm", show=_KNM, doc="ULS moment about y")
    concrete: typing.Annotated[str, OneOf(tuple(CONCRETE_CLASSES))] = _f(doc="strength class, C32/40")
    fck: float = _f(unit="MPa", doc="characteristic cylinder strength, from the class", ge=12, le=90)
    fyk: float = _f(FYK_DEFAULT, unit="MPa", doc="reinforcement characteristic yield strength", ge=400, le=600)
    cover: float = _f(unit="mm", doc="nominal cover, soffit to the lowest bars (also side cover)",
                      meaning="nominal cover to the lowest bars", gt=0)
    exposure: str = _f("", doc="exposure class, e.g. XC2")
    bars_x: str = _bars("x", "lowest layer")
    nx: int = _of_bars("x", "number", unit="count", meaning="number of bars along x", ge=1)
    phi_x: _BarSize = _of_bars("x", "diameter", unit="mm")
    sx: _OptF = _of_bars("x", "stated centres", None, unit="mm", gt=0)
    bars_y: str = _bars("y", "second layer")
    ny: int = _of_bars("y", "number", unit="count", meaning="number of bars along y", ge=1)
    phi_y: _BarSize = _of_bars("y", "diameter", unit="mm")
    sy: _OptF = _of_bars("y", "stated centres", None, unit="mm", gt=0)
    # single-pile caps (issue 15, item 3): closed horizontal links carrying the splitting tie
    links: str = _f("", doc="horizontal links (splitting steel) of a single-pile cap, as written; '' if not stated",
                    heading="bars")
    n_links: typing.Optional[int] = _f(None, unit="count", doc="number of closed link sets (count form)",
                                       meaning="number of closed horizontal link sets stated (count form)",
                                       heading=None, ge=1)
    phi_links: typing.Annotated[_OptF, OneOf(tuple(float(d) for d in STANDARD_BAR_SIZES))] = _f(
        None, unit="mm", doc="diameter of the links", meaning="diameter of the horizontal links", heading=None)
    s_links: _OptF = _f(None, unit="mm", doc="stated vertical centres of the link sets (spacing form)",
                        meaning="stated vertical centres of the horizontal links (spacing form)", heading=None, gt=0)
    embedment: _OptF = _f(None, unit="mm", doc="length of pile head inside the cap",
                          meaning="pile head embedment into the cap", ge=0)
    pile_capacity: _OptF = _f(None, unit="N", show=_KN, doc="pile resistance (ULS) or working capacity (SLS)",
                              meaning="ULS pile resistance", gt=0)
    capacity_basis: typing.Annotated[str, OneOf(CAPACITY_BASES)] = _f(
        "", doc="basis of pile_capacity: ULS design resistance or SLS working capacity; '' (none given) is ULS")
    stated_pile_load: _OptF = _f(None, unit="N", show=_KN, doc="designer's maximum pile load", ge=0)
    stated_tie_x: _OptF = _f(None, unit="N", show=_KN, doc="designer's tie force along x", ge=0)
    stated_tie_y: _OptF = _f(None, unit="N", show=_KN, doc="designer's tie force along y", ge=0)
    stated_as_x: _OptF = _f(None, unit="mm²", doc="designer's steel area required, bars_x",
                            meaning="designer's steel required along x", ge=0)
    stated_as_y: _OptF = _f(None, unit="mm²", doc="designer's steel area required, bars_y",
                            meaning="designer's steel required along y", ge=0)
    stated_d: _OptF = _f(None, unit="mm", doc="designer's effective depth d", meaning="designer's effective depth",
                         ge=0)
    pile_type: str = _f("", doc="e.g. uncased bored")
    bar_ends: typing.Annotated[str, OneOf(BAR_ENDS)] = _f("", doc="straight, bent or hooked; '' if not stated")
    method: str = _f("", doc="the designer's stated method")

    @model_validator(mode="after")
    def _cross_checks(self) -> "CapRecord":
        cols = {name: _scalar_array(getattr(self, name)) for name in CapRecord.model_fields}
        order = list(CapRecord.model_fields)
        failed: list[tuple[int, list[str]]] = []
        for chk in CROSS_CHECKS:
            if any(getattr(self, n) is None for n in chk.needs):
                continue
            with np.errstate(invalid="ignore", over="ignore"):
                met = bool(chk.ok(cols)[0])
            if not met:
                failed.append((order.index(chk.field), chk.message(cols)))
        # in the order of the fields they name, as validate_frame reports them
        problems = [m for _, msgs in sorted(failed, key=lambda t: t[0]) for m in msgs]
        if problems:
            raise ValueError("; ".join(problems))
        return self

    @classmethod
    def from_row(cls, row: Mapping[str, Any]) -> "CapRecord":
        """Validate one row of a canonical frame. NaN/None mean 'not given': the field's default applies
        (fyk 500, exposure '' ...), and a required field is reported missing."""
        data = {}
        for k, v in row.items():
            info = cls.model_fields.get(k)
            if info is None:
                continue
            v = _none_if_missing(v)
            if v is None and not info.is_required():
                continue
            data[k] = v
        return cls.model_validate(data)


def _scalar_array(v: Any) -> np.ndarray:
    if v is None:
        return np.array([np.nan])
    if isinstance(v, str):
        return np.array([v], dtype=object)
    return np.array([v], dtype=float) if not isinstance(v, bool) else np.array([v])


def _none_if_missing(v: Any) -> Any:
    if v is None:
        return None
    if isinstance(v, float) and np.isnan(v):
        return None
    return v


# --------------------------------------------------------------------------------------------
# Field catalogue, read from the model (one source of truth)
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class FieldSpec:
    name: str
    kind: str                       # 'float', 'int', 'str', 'bool'
    required: bool
    default: Any
    unit: str
    show_unit: str
    show_scale: float
    doc: str
    bounds: tuple[tuple[str, float], ...]   # ('gt', 0), ('le', 6) ...
    one_of: tuple | None
    min_length: int
    meaning: str = ""                       # as a rule quantity (catalogue.QUANTITIES)
    heading: str | None = None              # kind of schedule heading giving it (headings.SCHEDULE_FIELDS)


def _base_kind(annotation: Any) -> str:
    args = typing.get_args(annotation)
    origin = typing.get_origin(annotation)
    if origin is typing.Annotated:
        return _base_kind(args[0])
    if origin in (typing.Union, types.UnionType):
        kinds = [_base_kind(a) for a in args if a is not type(None)]
        return kinds[0]
    return {float: "float", int: "int", str: "str", bool: "bool"}[annotation]


def _heading_kind(given: Any, unit: str, kind: str) -> str | None:
    """The heading kind of a field: as declared, else 'text' for text, else the kind of its unit."""
    if given != _AUTO:
        return given
    if kind == "str":
        return "text"
    return KIND_OF_UNIT.get(unit)


def _catalogue() -> dict[str, FieldSpec]:
    out: dict[str, FieldSpec] = {}
    for name, info in CapRecord.model_fields.items():
        extra = cast(dict[str, Any], info.json_schema_extra or {})  # a dict on every field (_f)
        bounds: list[tuple[str, float]] = []
        one_of = None
        min_length = 0
        for m in info.metadata:
            if isinstance(m, at.Gt):
                bounds.append(("gt", float(cast(float, m.gt))))
            elif isinstance(m, at.Ge):
                bounds.append(("ge", float(cast(float, m.ge))))
            elif isinstance(m, at.Lt):
                bounds.append(("lt", float(cast(float, m.lt))))
            elif isinstance(m, at.Le):
                bounds.append(("le", float(cast(float, m.le))))
            elif isinstance(m, at.MinLen):
                min_length = int(m.min_length)
            elif isinstance(m, OneOf):
                one_of = m.values
        ann = info.annotation
        for a in typing.get_args(ann):           # OneOf inside Annotated[...] of the annotation
            if isinstance(a, OneOf):
                one_of = a.values
        out[name] = FieldSpec(
            name=name, kind=_base_kind(ann), required=info.is_required(),
            default=None if info.is_required() else info.default,
            unit=str(extra.get("unit", "")), show_unit=str(extra.get("show_unit", "")),
            show_scale=float(extra.get("show_scale", 1.0)), doc=info.description or "",
            bounds=tuple(bounds), one_of=one_of, min_length=min_length,
            meaning=str(extra.get("meaning", "")),
            heading=_heading_kind(extra.get("heading", _AUTO), str(extra.get("unit", "")), _base_kind(ann)),
        )
    return out


#: field name -> :class:`FieldSpec`, in canonical order.
FIELDS: dict[str, FieldSpec] = _catalogue()

#: Provenance columns appended to the canonical frame by ingest.
SOURCE_COLUMNS: tuple[str, ...] = ("src_file", "src_sheet", "src_page", "src_row")

#: Every column of the canonical schedule frame, in order.
FRAME_COLUMNS: tuple[str, ...] = tuple(FIELDS) + SOURCE_COLUMNS

#: The numeric fields, carried through ``derive`` as quantities of the same name.
INPUT_QUANTITIES: tuple[str, ...] = tuple(n for n, s in FIELDS.items() if s.kind in ("float", "int"))

#: Fields read from a schedule heading of their own -> the heading's kind ('length', 'force', 'text',
#: 'bars' ...); the ingest vocabulary (``ingest.headings.SCHEDULE_FIELDS``) adds its combined forms.
HEADING_FIELDS: dict[str, str] = {n: s.heading for n, s in FIELDS.items() if s.heading is not None}

# --------------------------------------------------------------------------------------------
# Frame validation
# --------------------------------------------------------------------------------------------

_OPS = {
    "gt": (np.greater, "must be greater than"),
    "ge": (np.greater_equal, "must be at least"),
    "lt": (np.less, "must be less than"),
    "le": (np.less_equal, "must be at most"),
}


def _fmt(v: Any) -> str:
    """Number for a message: integers without a decimal point, others to 10 significant figures."""
    try:
        f = float(v)
    except (TypeError, ValueError):
        return str(v)
    if np.isfinite(f) and f == int(f) and abs(f) < 1e15:
        return str(int(f))
    return format(f, ".10g")


def _fmt_values(values: np.ndarray, scale: float) -> list[str]:
    """Format numbers for messages, each distinct value once."""
    codes, uniq = pd.factorize(pd.Series(values * scale))
    shown = [_fmt(u) for u in uniq]
    return [shown[c] for c in codes]


_Add = Callable[[str, np.ndarray, list[str]], None]     # (field, rows mask, messages) -> record errors


def _check_columns(df: pd.DataFrame) -> tuple[list[FieldError], dict[str, np.ndarray], dict[str, np.ndarray]]:
    """Field-level checks. Returns (errors, bad mask per field, values per field as arrays)."""
    n = len(df)
    errors: list[FieldError] = []
    bad: dict[str, np.ndarray] = {}
    values: dict[str, np.ndarray] = {}

    def add(field: str, mask: np.ndarray, msgs: list[str]) -> None:
        rows = np.flatnonzero(mask)
        if rows.size:
            errors.append(FieldError.of(field, rows, msgs))
            bad[field] = bad.get(field, np.zeros(n, bool)) | mask

    for spec in FIELDS.values():
        name = spec.name
        if name not in df.columns:
            values[name] = _missing_column(spec, n, add)
        elif spec.kind in ("float", "int"):
            values[name] = _check_numeric(spec, df[name], add)
        elif spec.kind == "bool":
            values[name] = _check_bool(spec, df[name], add)
        else:
            values[name] = _check_text(spec, df[name], add)
    return errors, bad, values


def _missing_column(spec: FieldSpec, n: int, add: _Add) -> np.ndarray:
    """A field with no column: an error when required; its default on every row."""
    name = spec.name
    if spec.required:
        add(name, np.ones(n, bool), [f"{name}: missing (required)"] * n)
    if spec.kind in ("float", "int"):
        default = np.nan if spec.default is None else float(spec.default)
        return np.full(n, default)
    if spec.kind == "bool":
        return np.full(n, bool(spec.default))
    return np.full(n, spec.default if spec.default is not None else "", dtype=object)


def _check_numeric(spec: FieldSpec, col: pd.Series, add: _Add) -> np.ndarray:
    """A float/int column: numbers, required or defaulted, finite, whole (int), bounds, allowed values."""
    name = spec.name
    raw_missing = col.isna().to_numpy()
    if col.dtype.kind in "fiu":
        v = col.to_numpy(dtype=float)
    else:
        v = pd.to_numeric(col, errors="coerce").to_numpy(dtype=float)
        notnum = np.isnan(v) & ~raw_missing
        if notnum.any():
            rows = np.flatnonzero(notnum)
            add(name, notnum, [f"{name}: {col.iloc[r]!r} is not a number" for r in rows])
    missing = raw_missing
    if spec.required:
        add(name, missing, [f"{name}: missing (required)"] * int(missing.sum()))
    elif spec.default is not None:
        v = np.where(missing, float(spec.default), v)
    present = ~np.isnan(v)
    inf = present & ~np.isfinite(v)
    add(name, inf, [f"{name}: {_fmt(x)} must be a finite number" for x in v[inf]])
    fin = present & ~inf
    unit = f" {spec.show_unit}" if spec.show_unit and spec.show_unit != "count" else ""
    if spec.kind == "int":
        frac = fin & (np.floor(np.where(fin, v, 0)) != np.where(fin, v, 0))
        add(name, frac, [f"{name}: {s} must be a whole number" for s in _fmt_values(v[frac], 1.0)])
        fin &= ~frac
    with np.errstate(invalid="ignore"):
        for op, bound in spec.bounds:
            fn, words = _OPS[op]
            fail = fin & ~fn(v, bound)
            if fail.any():
                b = _fmt(bound * spec.show_scale) + (unit if bound != 0 else "")
                shown = _fmt_values(v[fail], spec.show_scale)
                add(name, fail, [f"{name}: {s}{unit} {words} {b}" for s in shown])
                fin &= ~fail
    if spec.one_of is not None:
        fail = fin & ~np.isin(v, np.asarray(spec.one_of, dtype=float))
        add(name, fail, [f"{name}: {s}{unit} must be one of {_list_values(spec.one_of)}"
                         for s in _fmt_values(v[fail], 1.0)])
    return v


def _check_bool(spec: FieldSpec, col: pd.Series, add: _Add) -> np.ndarray:
    """A bool column: True or False; a blank is the default."""
    name = spec.name
    if col.dtype == bool:
        return col.to_numpy()
    missing = col.isna().to_numpy()
    okb = col.map(lambda x: isinstance(x, (bool, np.bool_))).to_numpy(dtype=bool)
    fail = ~okb & ~missing
    add(name, fail, [f"{name}: {col.iloc[r]!r} must be True or False" for r in np.flatnonzero(fail)])
    return np.where(okb, col.to_numpy(dtype=object), bool(spec.default)).astype(bool)


def _check_text(spec: FieldSpec, col: pd.Series, add: _Add) -> np.ndarray:
    """A str column, worked on the distinct values only: text, required, allowed values."""
    name = spec.name
    codes, uniq = pd.factorize(col.astype(object), use_na_sentinel=True)
    if pd.api.types.infer_dtype(uniq, skipna=False) in ("string", "empty"):
        u_str = np.ones(len(uniq) + 1, dtype=bool)
        u_val = np.array([u.strip() for u in uniq] + [""], dtype=object)
    else:
        u_str = np.array([isinstance(u, str) for u in uniq] + [False], dtype=bool)
        u_val = np.array([u.strip() if isinstance(u, str) else "" for u in uniq] + [""], dtype=object)
    u_str[-1] = False
    missing = codes < 0
    is_str = u_str[codes]
    s = u_val[codes]
    nonstr = ~is_str & ~missing
    add(name, nonstr, [f"{name}: {x!r} must be text" for x in col.to_numpy(dtype=object)[nonstr]])
    empty = ((s == "") & is_str) | missing
    if spec.required or spec.min_length:
        add(name, empty, [f"{name}: missing (required)"] * int(empty.sum()))
    if spec.one_of is not None:
        u_ok = np.array([v in spec.one_of or (v == "" and spec.required) for v in u_val], dtype=bool)
        fail = is_str & ~u_ok[codes]
        add(name, fail, [f"{name}: {x!r} must be one of {_list_values(spec.one_of)}" for x in s[fail]])
    return s


def validate_frame(df: pd.DataFrame) -> tuple[pd.DataFrame, dict[Any, list[str]]]:
    """Apply the :class:`CapRecord` constraints to every row of a canonical frame, vectorised.

    Returns ``(valid_df, errors)``: ``valid_df`` is ``df`` restricted to the rows that pass (index
    kept), ``errors`` maps a failing row's index label to its messages, each naming the field, the
    value and what is required (``cap_depth: -900 mm must be greater than 0``). NaN means 'not
    given'. Cross-field checks run where the fields they need are present and individually valid
    (the record's own validator runs them only when every field is valid).
    """
    n = len(df)
    errors, bad, values = _check_columns(df)
    any_bad = np.zeros(n, bool)
    for m in bad.values():
        any_bad |= m
    for chk in CROSS_CHECKS:
        applies = np.ones(n, bool)
        for f in chk.needs:
            applies &= ~bad.get(f, np.zeros(n, bool))
            v = values[f]
            if v.dtype.kind == "f":
                applies &= ~np.isnan(v)
        for f in chk.uses:
            applies &= ~bad.get(f, np.zeros(n, bool))
        if not applies.any():
            continue
        sub = {f: values[f][applies] for f in chk.uses}
        with np.errstate(invalid="ignore"):
            ok = np.asarray(chk.ok(sub), dtype=bool)
        if ok.all():
            continue
        rows = np.flatnonzero(applies)[~ok]
        msgs = chk.message({f: values[f][rows] for f in chk.uses})
        errors.append(FieldError.of(chk.field, rows, msgs))
        any_bad[rows] = True

    out: dict[Any, list[str]] = {}
    if errors:
        labels = df.index
        order = {name: i for i, name in enumerate(FIELDS)}
        errors.sort(key=lambda e: order.get(e.field, len(order)))
        for e in errors:
            for r, msg in zip(e.rows.tolist(), e.messages):
                out.setdefault(labels[r], []).append(msg)
        out = {k: out[k] for k in labels[np.flatnonzero(any_bad)]}
    return df.loc[~any_bad], out
