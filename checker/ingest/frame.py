"""RawTable(s) -> the canonical schedule frame (DEVELOPERS.md) and the rejected rows.

Column by column: headings are mapped (:mod:`checker.ingest.headings`), numeric columns are
converted with pandas (only the cells pandas cannot read go through the parsers, each distinct text
once), notation columns map their distinct values through :mod:`checker.ingest.notation`. A
combined ``L x W x D`` column is split, spacing forms of bar notation get their bar count
(:func:`~checker.ingest.notation.bars_from_spacing`), defaults are applied (fyk 500), units are
converted to internal units, provenance columns are attached and the frame goes through
:func:`checker.model.validate_frame`.

A row with bad cells is rejected with all its reasons; the other rows go on. Each reason names the
field, the heading as written and the cell value. A repeated mark rejects the later row.
"""

from __future__ import annotations

import math
import re
import warnings
from dataclasses import dataclass, field
from typing import Any, Callable, Iterable, Sequence

import numpy as np
import pandas as pd

from checker.ingest.headings import (
    SCHEDULE_FIELDS,
    HeadingMap,
    HeadingMatch,
    HeadingReport,
    match_headings,
    resolve_mapping,
)
from checker.ingest.limits import MAX_CELL_CHARS, cell_text_problem
from checker.ingest.notation import (
    NotationError,
    bars_from_spacing,
    clean_text,
    concrete_from_fck,
    is_blank,
    is_real_number,
    parse_bars,
    parse_column,
    parse_concrete,
    parse_links,
    parse_number,
    parse_size,
    parse_steel_grade,
)
from checker.ingest.plausible import MIN_CLEAR_BARS, PLAUSIBLE
from checker.ingest.plausible import inside as plausible_inside
from checker.ingest.plausible import problem as plausible_problem
from checker.ingest.raw import FormulaCell, RawTable
from checker.model import FIELDS, FRAME_COLUMNS, FYK_DEFAULT, validate_frame
from checker.records import FieldError, RejectedRow, TableProblem
from checker.units import TO_INTERNAL

#: fields a schedule must give (pile_spacing only for 2 or more piles; the model checks that)
REQUIRED_SOURCES: tuple[str, ...] = (
    "mark", "piles", "pile_dia", "cap_length", "cap_width", "cap_depth", "column", "n_ed", "concrete",
    "cover", "bars_x", "bars_y",
)

#: model field -> the ingest fields it is derived from (its errors are not repeated when they fail)
DERIVED_FROM: dict[str, tuple[str, ...]] = {
    "nx": ("bars_x", "cap_width", "cover"), "phi_x": ("bars_x",), "sx": ("bars_x",),
    "ny": ("bars_y", "cap_length", "cover"), "phi_y": ("bars_y",), "sy": ("bars_y",),
    "column_x": ("column",), "column_y": ("column",), "column_round": ("column",),
    "fck": ("concrete",), "concrete": ("fck",),
    "cap_length": ("size", "plan"), "cap_width": ("size", "plan"), "cap_depth": ("size",),
}

# single-pile caps (issue 15, item 3): the link notation gives the link fields
DERIVED_FROM.update({"n_links": ("links",), "phi_links": ("links",), "s_links": ("links",)})

_TEXT_FIELDS = ("mark", "exposure", "pile_type", "method", "case")
#: per-row load fields of a schedule with load cases (every other field describes the cap)
CASE_FIELDS: tuple[str, ...] = ("n_ed", "mx_ed", "my_ed", "n_sls", "mx_sls", "my_sls", "case", "case_kind")
_CASE_KINDS = {**dict.fromkeys(("uls", "ultimate", "design", "str", "uls str", "str/geo", "uls str/geo"), "ULS"),
               **dict.fromkeys(("sls", "service", "serviceability", "characteristic", "char", "working",
                                "unfactored", "sls characteristic", "sls char", "quasi-permanent", "frequent"),
                               "SLS")}
_BASES = {**dict.fromkeys(("uls", "ultimate", "design", "design resistance", "rcd", "rc,d", "uls resistance"), "ULS"),
          **dict.fromkeys(("sls", "service", "serviceability", "characteristic", "working", "swl",
                           "safe working load", "allowable", "working load", "permissible"), "SLS")}
_MAX_COORD_PILES = 64           # positions of one cap read from a coordinates table
_NUMERIC_KINDS = ("length", "force", "moment", "stress", "area", "count")
_BAR_ENDS = {
    **dict.fromkeys(("straight", "str", "straight bars"), "straight"),
    **dict.fromkeys(("bent", "bent up", "bent-up", "bend", "bends", "l", "l-bar", "l-bars", "l bars", "u",
                     "u-bar", "u-bars", "u bars", "bob", "bobbed"), "bent"),
    **dict.fromkeys(("hooked", "hook", "hooks", "hooked bars"), "hooked"),
}


@dataclass
class _Errors:
    """Row problems collected column-wise, one :class:`~checker.records.FieldError` per field and check."""

    items: list[FieldError] = field(default_factory=list)

    def add(self, fld: str, rows: Iterable[int] | np.ndarray, msgs: Sequence[str]) -> None:
        err = FieldError.of(fld, rows, msgs)
        if err.rows.size:
            self.items.append(err)


@dataclass
class FrameResult:
    caps: pd.DataFrame                  # canonical frame, index 0..n-1
    rejected: list[RejectedRow]         # source, mark (when read), errors
    reports: list[HeadingReport]        # heading matches, one per table
    notes: list[str]
    rows_read: int
    #: one row per (cap, load case): ``cap`` (position in ``caps``), ``case``, ``kind`` ('ULS'/'SLS'),
    #: ``n_ed``, ``mx_ed``, ``my_ed`` [N, N·mm] and the row it was read from; None when the schedule
    #: has no case column, no SLS loads and no working pile capacity (one ULS case per cap, as read)
    cases: pd.DataFrame | None = None
    #: rows read that only add a load case to a cap counted on an earlier row (or in a loads table)
    case_rows: int = 0
    #: marks of the rejected rows (a loads table naming one is told so)
    rejected_marks: frozenset[str] = frozenset()
    problems: list[TableProblem] = field(default_factory=list)   # of a whole table, at its heading row
    applied: list[list[str]] = field(default_factory=list)  # per cap: the project-file values applied


# --------------------------------------------------------------------------------------------
# Project defaults
# --------------------------------------------------------------------------------------------

#: keys of a project file's [defaults] table -> the schedule field they fill
DEFAULT_KEYS: dict[str, str] = {
    "exposure": "exposure", "exposure_class": "exposure", "concrete": "concrete", "concrete_class": "concrete",
    "fyk": "fyk", "steel_grade": "fyk", "cover": "cover", "nominal_cover": "cover", "pile_type": "pile_type",
    "bar_ends": "bar_ends", "method": "method", "methods": "method", "accepted_methods": "method",
}


@dataclass
class Defaults:
    """The values a project file gives for blank cells (or missing columns), parsed, and the words
    that name each one in notes and in the working ('exposure XC2 from the project file')."""

    values: dict[str, Any]
    texts: dict[str, str]
    source: str = "the project file"


def read_defaults(table: Any, source: str = "the project file") -> Defaults:
    """A project file's ``[defaults]`` table -> :class:`Defaults`; IngestError naming the file and key."""
    from checker.ingest.errors import IngestError

    if not isinstance(table, dict):
        raise IngestError(f"{source}: [defaults] must be a table of key = value")
    values: dict[str, Any] = {}
    texts: dict[str, str] = {}
    where = "from the project file"
    for key, raw in table.items():
        k = str(key).strip().lower().replace(" ", "_").replace("-", "_")
        fld = DEFAULT_KEYS.get(k)
        if fld is None:
            raise IngestError(f"{source}: [defaults] {key!r} is not a value capcheck takes from a project file; "
                              f"known: {', '.join(sorted(set(DEFAULT_KEYS.values())))}")
        try:
            if fld == "method":
                items = raw if isinstance(raw, list) else [raw]
                if not all(isinstance(x, str) and x.strip() for x in items):
                    raise NotationError("expected a method name or a list of them")
                values[fld] = " ".join(x.strip() for x in items)
                texts[fld] = f"accepted methods {', '.join(x.strip() for x in items)} {where}"
            elif fld == "concrete":
                c = parse_concrete(str(raw))
                values[fld] = (c.name, c.fck)
                texts[fld] = f"concrete {c.name} {where}"
            elif fld == "fyk":
                values[fld] = parse_steel_grade(raw if not isinstance(raw, bool) else str(raw))
                texts[fld] = f"fyk {_fmtn(values[fld])} MPa {where}"
            elif fld == "cover":
                v = parse_number(raw if not isinstance(raw, bool) else str(raw), "length", 1.0)
                if not plausible_inside("cover", v):
                    raise NotationError(f"{v:g} mm is outside the plausible range of a cover")
                values[fld] = v
                texts[fld] = f"cover {_fmtn(v)} mm {where}"
            elif fld == "bar_ends":
                values[fld] = _bar_ends(str(raw))
                texts[fld] = f"bar ends {values[fld]} {where}"
            else:
                if not isinstance(raw, str) or not raw.strip():
                    raise NotationError("expected text")
                text = clean_text(raw)
                values[fld] = text.upper() if fld == "exposure" else text
                texts[fld] = f"{fld.replace('_', ' ')} {values[fld]} {where}"
        except NotationError as exc:
            raise IngestError(f"{source}: [defaults] {key} = {raw!r}: {exc}") from None
    return Defaults(values, texts, source)


_THOUSANDS_RE = re.compile(r"^[+-]?[1-9][0-9]{0,2}(?:,[0-9]{3})+(?:\.[0-9]+)?$")


def _thousands(col: pd.Series, fld: str, scale: float, label: str) -> tuple[pd.Series, str | None]:
    """Commas read as thousands separators in a load column when the column reads consistently:
    every comma is followed by exactly three digits and no such cell, read with a decimal comma,
    would be a plausible value of the field. Otherwise the column is unchanged (and '1,500' stays
    refused as ambiguous)."""
    if col.dtype.kind != "O":
        return col, None
    mask = col.map(lambda v: isinstance(v, str) and "," in v).to_numpy(dtype=bool)
    if not mask.any():
        return col, None
    texts: dict[Any, str] = {}
    for v in pd.unique(col[mask]):
        t = clean_text(v).replace(" ", "")
        if not _THOUSANDS_RE.match(t):
            return col, None
        if t.count(",") == 1 and "." not in t and plausible_inside(fld, float(t.replace(",", ".")) * scale):
            return col, None
        texts[v] = t.replace(",", "")
    col = col.copy()
    col[mask] = col[mask].map(texts)
    return col, (f"{label}: ',' read as a thousands separator in {int(mask.sum())} cell(s) (every comma is "
                 "followed by three digits and none reads as a plausible decimal)")


# --------------------------------------------------------------------------------------------
# Column converters (each distinct value parsed once)
# --------------------------------------------------------------------------------------------


_NO_BOOLS = ("string", "integer", "floating", "mixed-integer-float", "empty", "decimal", "bytes",
             "datetime", "datetime64", "date", "time", "timedelta", "timedelta64", "period", "complex")


def _factorize(col: pd.Series) -> tuple[np.ndarray, np.ndarray]:
    """Codes and distinct values of a column. True == 1 in Python (and in pandas' hash tables), so
    bool cells are compared as their text: a column holding 1 and True has two distinct values."""
    obj = col.astype(object)
    if pd.api.types.infer_dtype(obj, skipna=True) not in _NO_BOOLS:
        obj = obj.map(lambda v: str(v) if isinstance(v, (bool, np.bool_)) else v)
    try:
        return pd.factorize(obj, use_na_sentinel=True)
    except TypeError:                                   # unhashable cells: compare as text
        return pd.factorize(obj.map(lambda v: v if v is None else str(v)), use_na_sentinel=True)


@dataclass
class _Unique:
    """A column's distinct values mapped through a parser: per distinct value (plus one slot at the
    end for empty cells) the outputs, a blank flag and an error text; ``codes`` index them per row."""

    codes: np.ndarray
    uniq: np.ndarray
    outs: list[np.ndarray]
    blank_u: np.ndarray
    errs: list[str | None]

    @property
    def blank(self) -> np.ndarray:
        return self.blank_u[self.codes]

    def floats(self, k: int) -> np.ndarray:
        return _floats(self.outs[k])[self.codes]

    def texts(self, k: int) -> np.ndarray:
        return _texts(self.outs[k])[self.codes]

    def error_rows(self) -> tuple[np.ndarray, list[str]]:
        bad_u = np.fromiter((e is not None for e in self.errs), bool, len(self.errs))
        rows = np.flatnonzero(bad_u[self.codes])
        return rows, [self.errs[c] for c in self.codes[rows]]


def _map_unique(col: pd.Series, fn: Callable[[Any], Any], width: int) -> _Unique:
    """Apply ``fn`` (returning a tuple of ``width`` values) to each distinct non-blank cell."""
    codes, uniq = _factorize(col)
    m = len(uniq)
    codes = np.where(codes < 0, m, codes)
    outs = [np.full(m + 1, None, dtype=object) for _ in range(width)]
    errs: list[str | None] = [None] * (m + 1)
    blank_u = np.zeros(m + 1, dtype=bool)
    blank_u[m] = True
    for k, u in enumerate(uniq):
        if is_blank(u):
            blank_u[k] = True
            continue
        too_long = cell_text_problem(u)
        if too_long is not None:
            errs[k] = too_long
            continue
        try:
            res = fn(u)
        except NotationError as exc:
            errs[k] = str(exc)
            continue
        for o, v in zip(outs, res):
            o[k] = v
    return _Unique(codes, uniq, outs, blank_u, errs)


def _figure_type(v: Any) -> bool:
    """A cell that may hold a figure: text or a real number (int, float, Decimal, Fraction, numpy's;
    not a bool, date, complex number, bytes ...)."""
    return isinstance(v, str) or is_real_number(v)


def _to_float_array(col: pd.Series) -> np.ndarray | None:
    """pandas' own conversion (fast), or None where it fails (integers beyond the float range).
    Complex cells come back as their real part here; the caller refuses them as not figures."""
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", np.exceptions.ComplexWarning)
            return pd.to_numeric(col, errors="coerce").to_numpy(dtype=float)
    except (OverflowError, TypeError, ValueError):
        return None


def _with_infinite(col: pd.Series, num: np.ndarray, rows: np.ndarray, msgs: list[str]
                   ) -> tuple[np.ndarray, np.ndarray, list[str]]:
    """Cells that are infinite, or too large for the unit conversion, as errors quoting the cell."""
    inf = np.isinf(num)
    if not inf.any():
        return num, rows, msgs
    have = set(rows.tolist())
    extra = [r for r in np.flatnonzero(inf).tolist() if r not in have]
    if not extra:
        return num, rows, msgs
    texts = []
    for r in extra:
        cell = col.iloc[r]
        if isinstance(cell, str):
            cell_inf = clean_text(cell).lower().lstrip("+-") in ("inf", "infinity")
        else:
            try:
                cell_inf = math.isinf(float(cell))
            except (TypeError, ValueError, OverflowError):
                cell_inf = False
        texts.append(f"{_quote_cell(cell)} is not a finite number" if cell_inf
                     else f"{_quote_cell(cell)} is too large a number")
    order = np.argsort(np.concatenate([rows, np.asarray(extra, np.int64)]), kind="stable")
    allrows = np.concatenate([rows, np.asarray(extra, np.int64)])[order]
    allmsgs = [(list(msgs) + texts)[i] for i in order.tolist()]
    return num, allrows, allmsgs


def _numeric(col: pd.Series, kind: str, scale: float) -> tuple[np.ndarray, np.ndarray, list[str]]:
    """A numeric column -> (values in internal units, error row positions, error texts).

    Numbers beyond the float range become infinite here and are refused by the model as not
    finite; cells that are not text or a real number (bools, dates, complex numbers ...) are errors."""
    none = np.empty(0, np.int64)
    with np.errstate(over="ignore", invalid="ignore"):
        if col.dtype.kind in "fiu":
            return _with_infinite(col, col.to_numpy(dtype=float) * scale, none, [])
        inferred = pd.api.types.infer_dtype(col, skipna=True)
        if inferred in ("integer", "floating", "mixed-integer-float", "empty"):
            fast = _to_float_array(col)
            if fast is not None:
                return _with_infinite(col, fast * scale, none, [])
        obj = col.astype(object)
        num = _to_float_array(obj)
        if num is None:
            num = np.full(len(obj), np.nan)
        num = num * scale
    left = np.isnan(num) & obj.notna().to_numpy()
    if inferred not in ("string",):                      # bools, dates, complex ... are not figures
        odd = obj.map(lambda v: v is not None and not _figure_type(v) and not is_blank(v)).to_numpy(dtype=bool)
        left |= odd
        num[odd] = np.nan
    if not left.any():
        return _with_infinite(obj, num, none, [])
    idx = np.flatnonzero(left)

    def one(v: Any) -> tuple[float]:
        if not _figure_type(v):
            raise NotationError(f"{_quote_cell(v)} is not a number")
        return (parse_number(v, kind, scale),)

    u = _map_unique(obj.iloc[idx], one, 1)
    num[idx] = np.where(u.blank, np.nan, u.floats(0))
    erows, emsgs = u.error_rows()
    return _with_infinite(obj, num, idx[erows], emsgs)


def _quote_cell(v: Any) -> str:
    s = str(v)
    return repr(s if len(s) <= 60 else s[:57] + "...")


def _text(v: Any) -> str:
    if isinstance(v, (float, np.floating)):
        f = float(v)
        if math.isfinite(f) and f == int(f) and abs(f) < 1e15:
            return str(int(f))
    if isinstance(v, str):
        if v.isascii() and v.isprintable() and "  " not in v:     # no tabs, line breaks or controls
            return v.strip()
        return clean_text(v)
    return clean_text(v)


def _text_column(col: pd.Series, transform: Callable[[str], str] | None = None
                 ) -> tuple[np.ndarray, np.ndarray, list[str]]:
    """A text column -> (cleaned text, '' when blank; error rows; error texts)."""
    codes, uniq = _factorize(col)
    if transform is None and pd.api.types.infer_dtype(uniq, skipna=False) in ("string", "empty"):
        # many distinct texts (marks): tight loops over the distinct values, no parser calls
        texts = [_text(v) for v in uniq] + [""]
        shown = np.array([("" if len(t) <= 6 and is_blank(t) else t) for t in texts], dtype=object)
        codes = np.where(codes < 0, len(uniq), codes)
        long_u = [k for k, t in enumerate(texts) if len(t) > MAX_CELL_CHARS]
        if not long_u:
            return shown[codes], np.empty(0, np.int64), []
        bad = np.zeros(len(texts), bool)
        bad[long_u] = True
        rows = np.flatnonzero(bad[codes])
        return shown[codes], rows, [cell_text_problem(texts[c]) or "" for c in codes[rows]]

    def one(v: Any) -> tuple[str]:
        t = _text(v)
        return ((transform(t) if transform else t),)

    u = _map_unique(col, one, 1)
    vals = np.where(u.blank, "", u.texts(0))
    erows, emsgs = u.error_rows()
    return vals.astype(object), erows, emsgs


def _case_kind(text: str) -> str:
    key = " ".join(text.lower().replace("_", " ").split())
    if key in _CASE_KINDS:
        return _CASE_KINDS[key]
    raise NotationError(f"{text!r} is not a limit state; expected ULS or SLS")


def _capacity_basis(text: str) -> str:
    key = " ".join(text.lower().replace("_", " ").split())
    if key in _BASES:
        return _BASES[key]
    raise NotationError(f"{text!r} is not a basis of the pile capacity; expected ULS (design resistance) "
                        "or SLS (working capacity, SWL)")


def _bar_ends(text: str) -> str:
    key = " ".join(text.lower().replace("_", " ").split())
    if key in _BAR_ENDS:
        return _BAR_ENDS[key]
    raise NotationError(f"{text!r} is not a bar end detail; expected straight, bent or hooked")


# --------------------------------------------------------------------------------------------
# One table
# --------------------------------------------------------------------------------------------


@dataclass
class _Parsed:
    values: dict[str, np.ndarray]       # canonical field (and '_text_*' helpers) -> array
    given: dict[str, np.ndarray]        # ingest field -> cell not blank
    errors: _Errors
    labels: dict[str, str]              # ingest/model field -> label for messages
    n: int
    units: dict[str, tuple[str, str, float]] = field(default_factory=dict)  # field -> (kind, unit, factor)
    notes: list[str] = field(default_factory=list)
    applied: list[tuple[np.ndarray, str]] = field(default_factory=list)    # (rows, 'exposure XC2 from ...')


def _label(fld: str, heading: str | None) -> str:
    return f"{fld} (column {heading!r})" if heading else fld


_SHOWN_DEFAULT = {"length": "mm", "force": "kN", "moment": "kNm", "area": "mm²", "stress": "MPa", "count": ""}


def _formula_cells(col: pd.Series) -> np.ndarray:
    """Row positions of the cells that are formulas saved without a calculated value."""
    if col.dtype.kind != "O":
        return np.empty(0, np.int64)
    return np.flatnonzero(col.map(lambda v: isinstance(v, FormulaCell)).to_numpy(dtype=bool))


@dataclass
class _ParseState:
    """What parsing one table builds up: the parsed columns, their labels and units, the errors."""
    n: int
    errors: _Errors = field(default_factory=_Errors)
    values: dict[str, np.ndarray] = field(default_factory=dict)
    given: dict[str, np.ndarray] = field(default_factory=dict)
    labels: dict[str, str] = field(default_factory=dict)
    units: dict[str, tuple[str, str, float]] = field(default_factory=dict)
    notes: list[str] = field(default_factory=list)
    applied: list[tuple[np.ndarray, str]] = field(default_factory=list)
    bad_rows: dict[str, set[int]] = field(default_factory=dict)
    nan: np.ndarray = field(default_factory=lambda: np.empty(0))

    def err(self, fld: str, rows: np.ndarray, msgs: Sequence[str]) -> None:
        self.errors.add(fld, rows, [f"{self.labels[fld]}: {m}" for m in msgs])

    def note_bad_rows(self) -> None:
        """Remember the cells that could not be read: a project-file default does not replace them."""
        for fe in self.errors.items:
            self.bad_rows.setdefault(fe.field, set()).update(fe.rows.tolist())

    def blank_of(self, f: str, arr: np.ndarray) -> np.ndarray:
        mask = np.isnan(arr) if arr.dtype.kind == "f" else (arr == "")
        if self.bad_rows.get(f):
            mask[list(self.bad_rows[f])] = False
        return mask

    def apply_default(self, f: str, arr: np.ndarray, value: Any, text: str) -> np.ndarray:
        mask = self.blank_of(f, arr)
        if not mask.any():
            return arr
        arr = arr.copy()
        arr[mask] = value
        self.given[f] = self.given.get(f, np.zeros(self.n, bool)) | mask
        self.labels.setdefault(f, f"{f} (project file)")
        self.applied.append((np.flatnonzero(mask), text))
        return arr


def _parse_cells(cells: pd.DataFrame, report: HeadingReport, *, formulas: bool = False,
                 defaults: Defaults | None = None) -> _Parsed:
    """Parse the mapped columns of one table. ``cells`` columns are positions 0..k-1.
    ``formulas``: the table may hold :class:`FormulaCell` cells; ``defaults``: the project file's
    values for blank cells and missing columns."""
    n = len(cells)
    st = _ParseState(n, nan=np.full(n, np.nan))
    no_value: dict[str, np.ndarray] = {}
    for m in report.matches:
        _parse_column(st, m, cells.iloc[:, m.column], formulas, no_value)
    for fld, frows in no_value.items():                 # named above; not also 'missing'
        if fld in st.given:
            st.given[fld][frows] = True
    out = _combine_fields(st, defaults)
    return _Parsed(out, st.given, st.errors, st.labels, n, st.units, st.notes, st.applied)


def _parse_column(st: _ParseState, m: HeadingMatch, col: pd.Series, formulas: bool,
                  no_value: dict[str, np.ndarray]) -> None:
    """One mapped column: its label and unit, formulas without a value, thousands, then its cells."""
    fld, kind = m.field, SCHEDULE_FIELDS[m.field]
    st.labels[fld] = _label(fld, m.heading)
    st.units[fld] = (kind, m.unit or _SHOWN_DEFAULT.get(kind, ""), m.scale)
    if formulas:
        frows = _formula_cells(col)
        if frows.size:
            st.err(fld, frows, [f"{str(col.iat[r])[:60]!r} is a formula saved without its calculated value "
                                "(the workbook was written by a program that does not calculate); open it in "
                                "a spreadsheet program, save it and read it again" for r in frows.tolist()])
            col = col.copy()
            col.iloc[frows] = None
            no_value[fld] = frows
    if kind in ("force", "moment") and fld in PLAUSIBLE:
        col, note = _thousands(col, fld, m.scale, st.labels[fld])
        if note:
            st.notes.append(note)
    _read_column(st, fld, kind, col, m.scale)


def _read_column(st: _ParseState, fld: str, kind: str, col: pd.Series, scale: float) -> None:
    """Parse the cells of one column into ``st.values`` (and helper arrays), ``st.given`` and errors."""
    values, given = st.values, st.given
    if kind in _NUMERIC_KINDS and fld not in ("column", "size", "plan"):
        v, rows, msgs = _steel(col) if fld == "fyk" else _numeric(col, kind, scale)
        values[fld] = v
        given[fld] = ~np.isnan(v)
        given[fld][rows] = True
        st.err(fld, rows, msgs)
    elif fld in _TEXT_FIELDS or fld in ("bar_ends", "case_kind", "capacity_basis"):
        transform = {"exposure": str.upper, "bar_ends": _bar_ends, "case_kind": _case_kind,
                     "capacity_basis": _capacity_basis}.get(fld)
        v, rows, msgs = _text_column(col, transform)
        values[fld] = v
        given[fld] = v != ""
        given[fld][rows] = True
        st.err(fld, rows, msgs)
    elif fld == "concrete":
        u = _map_unique(col, lambda v: tuple(parse_concrete(v)[:2]), 2)
        values["concrete"] = u.texts(0)
        values["_fck_class"] = u.floats(1)
        given[fld] = ~u.blank
        st.err(fld, *u.error_rows())
    elif fld in ("bars_x", "bars_y"):
        suffix = fld[-1]

        def bar(u: Any) -> tuple:
            spec = parse_bars(u)
            return (_text(u), spec.count, spec.dia, spec.centres)

        u = _map_unique(col, bar, 4)
        values[fld] = u.texts(0)
        values[f"_text_{fld}"] = _as_text(u)
        values[f"_count_{suffix}"] = u.floats(1)
        values[f"phi_{suffix}"] = u.floats(2)
        values[f"s{suffix}"] = u.floats(3)
        given[fld] = ~u.blank
        st.err(fld, *u.error_rows())
    elif fld == "links":
        # single-pile caps (issue 15, item 3): closed link sets (count form) or their centres
        def link(u: Any) -> tuple:
            spec = parse_links(u)
            return (_text(u), spec.count, spec.dia, spec.centres)

        u = _map_unique(col, link, 4)
        values["links"] = u.texts(0)
        values["_text_links"] = _as_text(u)
        values["n_links"], values["phi_links"], values["s_links"] = u.floats(1), u.floats(2), u.floats(3)
        given[fld] = ~u.blank
        st.err(fld, *u.error_rows())
    elif fld == "column":
        u = _map_unique(col, lambda v: tuple(parse_column(v, scale)), 3)
        values["_col_x"], values["_col_y"] = u.floats(0), u.floats(1)
        values["_col_round"] = pd.Series(u.outs[2], dtype=object).eq(True).to_numpy(dtype=bool)[u.codes]
        values["_text_column"] = _as_text(u)
        given[fld] = ~u.blank
        st.err(fld, *u.error_rows())
    elif fld in ("size", "plan"):
        parts = 3 if fld == "size" else 2
        u = _map_unique(col, lambda v: parse_size(v, scale, parts), parts)
        for k, name in enumerate(("cap_length", "cap_width", "cap_depth")[:parts]):
            values[f"_{fld}_{name}"] = u.floats(k)
        given[fld] = ~u.blank
        st.err(fld, *u.error_rows())


def _combine_fields(st: _ParseState, defaults: Defaults | None) -> dict[str, np.ndarray]:
    """The parsed columns -> the canonical fields: combined columns, derived fields, project defaults."""
    values, n, nan = st.values, st.n, st.nan
    out: dict[str, np.ndarray] = {}
    for f in ("piles", "pile_dia", "pile_spacing", "n_ed", "mx_ed", "my_ed", "cover", "embedment",
              "pile_capacity", "stated_pile_load", "stated_tie_x", "stated_tie_y", "stated_as_x", "stated_as_y",
              "n_sls", "mx_sls", "my_sls", "stated_d"):
        out[f] = values.get(f, nan).copy()
    _capacity_fields(st, out)
    st.note_bad_rows()
    if defaults is not None and "cover" in defaults.values:
        out["cover"] = st.apply_default("cover", out["cover"], defaults.values["cover"], defaults.texts["cover"])
    _cap_dimensions(st, out)
    _column_fields(st, out)
    _concrete_fields(st, out, defaults)
    fyk = values.get("fyk", nan)
    if defaults is not None and "fyk" in defaults.values:
        fyk = st.apply_default("fyk", fyk, defaults.values["fyk"], defaults.texts["fyk"])
    out["fyk"] = np.where(np.isnan(fyk), FYK_DEFAULT, fyk)
    for f in ("exposure", "pile_type", "method", "bar_ends", "mark", "case", "case_kind"):
        out[f] = values.get(f, np.full(n, "", dtype=object))
        if defaults is not None and f in defaults.values:
            out[f] = st.apply_default(f, np.asarray(out[f], dtype=object), defaults.values[f], defaults.texts[f])
    _reinforcement_fields(st, out)
    none = np.zeros(n, dtype=bool)
    for f, combos in (("cap_length", ("size", "plan")), ("cap_width", ("size", "plan")), ("cap_depth", ("size",))):
        sources = [f, *combos]
        if any(s in st.given for s in sources):       # a value, or a cell that could not be read
            st.given[f] = ~np.isnan(out[f]) | np.logical_or.reduce([st.given.get(s, none) for s in sources])
    return out


def _capacity_fields(st: _ParseState, out: dict[str, np.ndarray]) -> None:
    """The pile capacity's basis: a working (SLS) heading, or a capacity_basis column; ULS otherwise."""
    basis = st.values.get("capacity_basis", np.full(st.n, "", dtype=object)).astype(object)
    working = st.values.get("pile_capacity_working")
    if working is not None:
        use_w = np.isnan(out["pile_capacity"]) & ~np.isnan(working)
        out["pile_capacity"] = np.where(use_w, working, out["pile_capacity"])
        basis = np.where(use_w & (basis == ""), "SLS", basis).astype(object)
        st.given["pile_capacity"] = st.given.get("pile_capacity", np.zeros(st.n, bool)) | \
            st.given["pile_capacity_working"]
        st.labels.setdefault("pile_capacity", st.labels["pile_capacity_working"])
    out["capacity_basis"] = basis


def _cap_dimensions(st: _ParseState, out: dict[str, np.ndarray]) -> None:
    """Cap length, width and depth from their own columns or a size/plan column; disagreements are errors."""
    for f in ("cap_length", "cap_width", "cap_depth"):
        v = st.values.get(f, st.nan).copy()
        for combo in ("size", "plan"):
            alt = st.values.get(f"_{combo}_{f}")
            if alt is None:
                continue
            both = ~np.isnan(v) & ~np.isnan(alt) & ~np.isclose(v, alt)
            if both.any():
                rows = np.flatnonzero(both)
                st.err(f, rows, [f"{_fmtn(v[r])} mm disagrees with {_fmtn(alt[r])} mm in {st.labels[combo]}"
                                 for r in rows])
            v = np.where(np.isnan(v), alt, v)
            st.labels.setdefault(f, st.labels[combo])
            st.units.setdefault(f, st.units[combo])
        out[f] = v


def _column_fields(st: _ParseState, out: dict[str, np.ndarray]) -> None:
    """The column's size and shape from a 'column' cell, or from separate column_x/column_y columns."""
    values, labels = st.values, st.labels
    if "_col_x" in values:
        out["column_x"], out["column_y"] = values["_col_x"], values["_col_y"]
        for f in ("column_x", "column_y"):
            if f in values:
                out[f] = np.where(np.isnan(out[f]), values[f], out[f])
        out["column_round"] = values["_col_round"]
        out["_text_column"] = values["_text_column"]
    else:
        out["column_x"] = values.get("column_x", st.nan)
        out["column_y"] = values.get("column_y", st.nan)
        out["column_round"] = np.zeros(st.n, dtype=bool)
        if "column_x" in values or "column_y" in values:
            st.given["column"] = ~np.isnan(out["column_x"]) | ~np.isnan(out["column_y"])
            labels["column"] = labels.get("column_x") or labels["column_y"]
    for f in ("column_x", "column_y", "column_round"):
        if "column" in labels:
            labels.setdefault(f, f"{f} (column {_heading_of(labels['column'])!r})")
            if "column" in st.units:
                st.units.setdefault(f, st.units["column"])


def _concrete_fields(st: _ParseState, out: dict[str, np.ndarray], defaults: Defaults | None) -> None:
    """Concrete and fck: the class gives fck; a bare fck column gives the class."""
    fck_col = st.values.get("fck")
    if "concrete" in st.values:
        out["concrete"] = st.values["concrete"]
        cls_fck = st.values["_fck_class"]
        out["fck"] = cls_fck if fck_col is None else np.where(np.isnan(fck_col), cls_fck, fck_col)
    elif fck_col is not None:
        lookup: dict[float, str] = {}
        for u in pd.unique(fck_col[~np.isnan(fck_col)]):
            try:
                lookup[u] = concrete_from_fck(u).name
            except NotationError as exc:
                rows = np.flatnonzero(fck_col == u)
                st.err("fck", rows, [str(exc)] * rows.size)
        out["concrete"] = _texts(pd.Series(fck_col).map(lookup).to_numpy(dtype=object))
        out["fck"] = fck_col
        st.given["concrete"] = ~np.isnan(fck_col)
        st.labels["concrete"] = st.labels["fck"]
    else:
        out["concrete"], out["fck"] = np.full(st.n, "", dtype=object), st.nan
    if defaults is not None and "concrete" in defaults.values:
        name, fck = defaults.values["concrete"]
        before = st.blank_of("concrete", np.asarray(out["concrete"], dtype=object))
        out["concrete"] = st.apply_default("concrete", np.asarray(out["concrete"], dtype=object), name,
                                           defaults.texts["concrete"])
        out["fck"] = np.where(before, fck, out["fck"])


def _reinforcement_fields(st: _ParseState, out: dict[str, np.ndarray]) -> None:
    """Bars each way (count from the spacing when not written) and, for single-pile caps, the links."""
    values, n, nan = st.values, st.n, st.nan
    for s, width_field in (("x", "cap_width"), ("y", "cap_length")):
        bars = f"bars_{s}"
        out[bars] = values.get(bars, np.full(n, "", dtype=object))
        if bars in values:
            out[f"_text_{bars}"] = values[f"_text_{bars}"]
        count = values.get(f"_count_{s}", nan)
        phi = values.get(f"phi_{s}", nan)
        cen = values.get(f"s{s}", nan)
        derived = bars_from_spacing(out[width_field], out["cover"], phi, cen)
        out[f"n{s}"] = np.where(np.isnan(count), derived, count)
        out[f"phi_{s}"], out[f"s{s}"] = phi, cen
    # single-pile caps (issue 15, item 3): links as written and as parsed ('' and NaN when not given)
    out["links"] = values.get("links", np.full(n, "", dtype=object))
    for f in ("n_links", "phi_links", "s_links"):
        out[f] = values.get(f, nan)
    if "_text_links" in values:
        out["_text_links"] = values["_text_links"]


def _required_missing(f: str, have: np.ndarray, has_col: np.ndarray, labels: dict[str, str],
                      errors: _Errors, offset: int = 0) -> None:
    """Blank required cells, or no column for a required field, as row errors."""
    blank = np.flatnonzero(~have & has_col) + offset
    nocol = np.flatnonzero(~have & ~has_col) + offset
    lab = labels.get(f, f)
    if f in ("cap_length", "cap_width", "cap_depth") and lab.startswith(("size ", "plan ")):
        fld, msg = lab.split(" ", 1)[0], f"{lab}: missing"
    else:
        fld, msg = f, f"{lab}: missing"
    errors.add(fld, blank, [msg] * blank.size)
    errors.add(f, nocol, [f"{f}: not given (the table has no column for it; see the table's problem)"]
               * nocol.size)


def _as_text(u: _Unique) -> np.ndarray:
    """The cells as written (text) for messages, each distinct value converted once."""
    shown = np.array([_text(v) for v in u.uniq] + [""], dtype=object)
    shown[u.blank_u] = ""
    return shown[u.codes]


def _texts(arr: np.ndarray) -> np.ndarray:
    return pd.Series(arr, dtype=object).fillna("").to_numpy(dtype=object)


def _heading_of(label: str) -> str:
    m = re.search(r"\(column '(.*)'\)$", label)
    return m.group(1) if m else label


def _floats(arr: np.ndarray) -> np.ndarray:
    return pd.to_numeric(pd.Series(arr, dtype=object), errors="coerce").to_numpy(dtype=float)


def _fmtn(v: float) -> str:
    return str(int(v)) if math.isfinite(v) and v == int(v) else f"{v:g}"


def _steel(col: pd.Series) -> tuple[np.ndarray, np.ndarray, list[str]]:
    if col.dtype.kind in "fiu":
        return col.to_numpy(dtype=float), np.empty(0, np.int64), []
    u = _map_unique(col, lambda v: (parse_steel_grade(v),), 1)
    rows, msgs = u.error_rows()
    return np.where(u.blank, np.nan, u.floats(0)), rows, msgs


# --------------------------------------------------------------------------------------------
# Coordinates of explicit pile groups
# --------------------------------------------------------------------------------------------


def coords_frame(cells: pd.DataFrame, headings: Sequence[str], row_numbers: Sequence[int], *, file: str,
                 mapping: HeadingMap | None = None) -> tuple[pd.DataFrame, dict[str, list[str]], list[str]]:
    """A ``mark, x, y`` table -> (frame mark, x, y [mm], problems per mark, notes)."""
    report = match_headings(list(headings), mapping, "coords")
    by = report.by_field
    notes = list(report.notes)
    missing = [f for f in ("mark", "x", "y") if f not in by]
    if missing:
        from checker.ingest.errors import IngestError
        raise IngestError(f"{file}: the pile coordinates table needs columns mark, x and y; "
                          f"missing {', '.join(missing)}")
    marks, _, _ = _text_column(cells.iloc[:, by["mark"].column])
    problems: dict[str, list[str]] = {}
    xy = {}
    bad = np.zeros(len(cells), bool)
    for f in ("x", "y"):
        m = by[f]
        v, rows, msgs = _numeric(cells.iloc[:, m.column], "length", m.scale)
        xy[f] = v
        for r, msg in zip(rows.tolist(), msgs):
            problems.setdefault(str(marks[r]), []).append(
                f"coordinates {file} row {row_numbers[r]}: {f} (column {m.heading!r}): {msg}")
            bad[r] = True
        miss = np.isnan(v) & ~bad
        for r in np.flatnonzero(miss & (marks != "")).tolist():
            problems.setdefault(str(marks[r]), []).append(
                f"coordinates {file} row {row_numbers[r]}: {f} (column {m.heading!r}): missing")
            bad[r] = True
    no_mark = np.flatnonzero(marks == "")
    if no_mark.size:
        notes.append(f"{file}: {no_mark.size} coordinate row(s) without a mark ignored (rows "
                     f"{', '.join(str(row_numbers[r]) for r in no_mark[:5])}{' ...' if no_mark.size > 5 else ''})")
    keep = (marks != "") & ~bad
    df = pd.DataFrame({"mark": marks[keep], "x": xy["x"][keep], "y": xy["y"][keep]})
    return df.reset_index(drop=True), problems, notes


def _apply_coords(out: dict[str, np.ndarray], coords: pd.DataFrame, problems: dict[str, list[str]],
                  errors: _Errors, labels: dict[str, str], notes: list[str], given: dict[str, np.ndarray]) -> None:
    """Explicit groups: piles from the count of positions; pile_spacing (if blank) the least c/c."""
    marks = pd.Series(out["mark"], dtype=object)
    groups = {m: g[["x", "y"]].to_numpy(float) for m, g in coords.groupby("mark", sort=False)}
    pos: dict[Any, list[int]] = {}
    for i, m in enumerate(marks.tolist()):
        if m in groups or m in problems:
            pos.setdefault(m, []).append(i)
    unknown = [m for m in list(groups) + list(problems) if m not in pos]
    if unknown:
        notes.append(f"pile coordinates given for marks not in the schedule: {', '.join(sorted(set(unknown))[:10])}")
    for m, rows in pos.items():
        for r in rows:
            if m in problems:
                errors.add("piles", [r], problems[m])
                continue
            xy = groups[m]
            count = len(xy)
            if count > _MAX_COORD_PILES:
                # the model allows at most 6 piles; the pairwise distances of thousands of positions
                # would take gigabytes, so say so here and go no further with this cap
                errors.add("piles", [r], [f"{labels.get('piles', 'piles')}: the pile coordinates give {count:,} "
                                          f"positions for {m!r}; a cap of more than {_MAX_COORD_PILES} piles "
                                          "is not read"])
                continue
            if count >= 2:
                with np.errstate(over="ignore", invalid="ignore"):
                    d = np.sqrt(((xy[:, None, :] - xy[None, :, :]) ** 2).sum(-1))
                least = float(d[np.triu_indices(count, 1)].min())
                if least <= 0:
                    errors.add("piles", [r], [f"{labels.get('piles', 'piles')}: the pile coordinates for {m!r} "
                                              "put two piles at the same position"])
                    continue
                if np.isnan(out["pile_spacing"][r]):
                    out["pile_spacing"][r] = least
                    notes.append(f"{m}: pile_spacing taken as the least pile centres from the coordinates, "
                                 f"{_fmtn(round(least, 1))} mm")
            stated = out["piles"][r]
            if not np.isnan(stated) and stated != count:
                errors.add("piles", [r], [f"{labels.get('piles', 'piles')}: {_fmtn(stated)} but the pile "
                                          f"coordinates give {count} positions for {m!r}"])
                continue
            out["piles"][r] = count
            given["piles"][r] = True


# --------------------------------------------------------------------------------------------
# Whole schedule
# --------------------------------------------------------------------------------------------


def cells_of(table: RawTable) -> pd.DataFrame:
    """The cells of a RawTable as a DataFrame with positional columns (ragged rows padded)."""
    width = max([len(table.headings)] + [len(r) for r in table.rows]) if table.rows else len(table.headings)
    rows = table.rows
    if any(len(r) != width for r in rows):
        rows = [list(r) + [None] * (width - len(r)) for r in rows]
    df = pd.DataFrame(rows, dtype=object, columns=range(width)) if rows else \
        pd.DataFrame({i: pd.Series([], dtype=object) for i in range(width)})
    return df


@dataclass
class _Joined:
    """The parsed tables of one schedule joined end to end: row r of every array is the same row."""
    parts: list[_Parsed]
    out: dict[str, np.ndarray]
    errors: _Errors
    labels: dict[str, str]
    units: dict[str, tuple[str, str, float]]
    given: dict[str, np.ndarray]
    has_col: dict[str, np.ndarray]
    applied_rows: dict[int, list[str]]
    provenance: pd.DataFrame
    n_total: int

    def __post_init__(self) -> None:
        self.starts = np.cumsum([0] + [p.n for p in self.parts])

    def part_of(self, r: int) -> _Parsed:
        return self.parts[int(np.searchsorted(self.starts, r, side="right")) - 1]

    def labels_at(self, r: int) -> dict[str, str]:
        return {**self.labels, **self.part_of(r).labels}

    def units_at(self, r: int) -> dict[str, tuple[str, str, float]]:
        return self.part_of(r).units


@dataclass
class _CaseRows:
    """Which rows are further load cases of a mark (issue 11), and each row's first row of its mark."""
    marks: pd.Series
    mk: np.ndarray
    pos: np.ndarray
    first_pos: np.ndarray
    case_mode: bool
    cont: np.ndarray
    case_name: np.ndarray


def build_frame(tables: RawTable | Sequence[RawTable], *, mapping: Any = None,
                coords: pd.DataFrame | None = None, coord_problems: dict[str, list[str]] | None = None,
                cells: Sequence[pd.DataFrame] | None = None, load_marks: frozenset[str] = frozenset(),
                defaults: Defaults | None = None) -> FrameResult:
    """RawTable(s) of one schedule -> :class:`FrameResult` (canonical caps, rejected rows, reports).

    ``coords`` (mark, x, y [mm]) gives explicit pile groups: their ``piles`` is the count of positions
    and a blank ``pile_spacing`` becomes the least pile centres. ``coord_problems`` (mark -> messages)
    rejects the caps whose coordinates could not be read. ``cells`` (one DataFrame per table with
    positional columns) saves re-building the cells when the caller has them already.
    """
    if isinstance(tables, RawTable):
        tables = [tables]
    reports, notes, parts, prov = _parse_tables(tables, resolve_mapping(mapping), cells, defaults)
    j = _join(parts, prov)
    if coords is not None or coord_problems:
        _apply_coords(j.out, coords if coords is not None else pd.DataFrame(columns=["mark", "x", "y"]),
                      coord_problems or {}, j.errors, j.labels, notes, j.given)
    rows = _case_rows(j, load_marks)
    problems = _table_problems(tables, parts, j.given, reports)
    _check_rows(j, rows, notes)
    # ---- the model's constraints ---------------------------------------------------------------
    frame = pd.DataFrame({f: j.out[f] for f in FIELDS})
    for c in j.provenance.columns:
        frame[c] = j.provenance[c].to_numpy(dtype=object)
    _, vmsgs = validate_frame(frame)
    per_row = _rejections(j, rows, vmsgs)
    return _frame_result(j, rows, frame, per_row, reports, notes, problems, load_marks, defaults)


def _parse_tables(tables: Sequence[RawTable], hmap: HeadingMap | None, cells: Sequence[pd.DataFrame] | None,
                  defaults: Defaults | None
                  ) -> tuple[list[HeadingReport], list[str], list[_Parsed], list[pd.DataFrame]]:
    """Match the headings of each table and parse its cells; the notes, and each row's provenance."""
    reports: list[HeadingReport] = []
    notes: list[str] = []
    parts: list[_Parsed] = []
    prov: list[pd.DataFrame] = []
    for k, table in enumerate(tables):
        grid = cells[k] if cells is not None else cells_of(table)
        report = match_headings(table.headings, hmap, "schedule")
        reports.append(report)
        for note in report.notes:
            if note not in notes:
                notes.append(note)
        for i, h in enumerate(table.headings):
            if not str(h or "").strip() and i < grid.shape[1] and \
                    not grid.iloc[:, i].map(is_blank, na_action="ignore").fillna(True).all():
                notes.append(f"{table.file}: column {i + 1} has no heading; not read")
        parts.append(_parse_cells(grid, report, formulas=table.sheet is not None, defaults=defaults))
        for note in parts[-1].notes:
            if note not in notes:
                notes.append(note)
        n = len(grid)
        prov.append(pd.DataFrame({
            "src_file": np.full(n, table.file, dtype=object),
            "src_sheet": np.full(n, table.sheet, dtype=object),
            "src_page": np.array(list(table.pages), dtype=object) if len(table.pages) == n
            else np.full(n, None, dtype=object),
            "src_row": np.array(list(table.row_numbers), dtype=object) if len(table.row_numbers) == n
            else np.arange(1, n + 1).astype(object),
        }))
    return reports, notes, parts, prov


def _join_errors(parts: list[_Parsed]) -> tuple[_Errors, dict[str, str]]:
    """The parts' field errors (rows offset to the joined table) and their labels (the first wins)."""
    errors = _Errors()
    labels: dict[str, str] = {}
    offset = 0
    for p in parts:
        for fe in p.errors.items:
            errors.add(fe.field, fe.rows + offset, fe.messages)
        for k, v in p.labels.items():
            labels.setdefault(k, v)
        offset += p.n
    return errors, labels


def _join(parts: list[_Parsed], prov: list[pd.DataFrame]) -> _Joined:
    """Concatenate the parsed tables: values, errors (rows offset), labels and units (first wins)."""
    n_total = sum(p.n for p in parts)
    keys = list(dict.fromkeys(list(FIELDS) + list(CASE_FIELDS))) + \
        sorted({k for p in parts for k in p.values if k.startswith("_text_")})
    out: dict[str, np.ndarray] = {}
    for f in keys:
        arrays = []
        for p in parts:
            if f in p.values:
                arrays.append(p.values[f])
            else:
                arrays.append(np.full(p.n, "", dtype=object))
        out[f] = np.concatenate(arrays) if arrays else np.empty(0)
    errors, labels = _join_errors(parts)
    units: dict[str, tuple[str, str, float]] = {}
    given: dict[str, np.ndarray] = {}
    has_col: dict[str, np.ndarray] = {}
    applied_rows: dict[int, list[str]] = {}
    offset = 0
    for p in parts:
        for k, v in p.units.items():
            units.setdefault(k, v)
        for rows, text in p.applied:
            for r in (rows + offset).tolist():
                applied_rows.setdefault(r, []).append(text)
        offset += p.n
    for f in sorted(set(REQUIRED_SOURCES) | {g for p in parts for g in p.given}):
        given[f] = np.concatenate([p.given.get(f, np.zeros(p.n, bool)) for p in parts]) if parts else np.zeros(0, bool)
        has_col[f] = np.concatenate([np.full(p.n, f in p.given) for p in parts]) if parts else np.zeros(0, bool)
    provenance = pd.concat(prov, ignore_index=True) if prov else pd.DataFrame(
        {c: pd.Series([], dtype=object) for c in ("src_file", "src_sheet", "src_page", "src_row")})
    return _Joined(parts, out, errors, labels, units, given, has_col, applied_rows, provenance, n_total)


def _case_rows(j: _Joined, load_marks: frozenset[str]) -> _CaseRows:
    """Load cases: further rows of a mark, SLS loads (issue 11). Marks the rows that must carry loads."""
    out, given, has_col, n_total = j.out, j.given, j.has_col, j.n_total
    marks = pd.Series(out["mark"], dtype=object)
    mk = marks.to_numpy(dtype=object)
    pos = np.arange(n_total)
    first_pos = pd.Series(pos).groupby(mk).transform("first").to_numpy() if n_total else pos
    named = mk != ""
    case_mode = bool(has_col.get("case", np.zeros(0, bool)).any())
    cont = named & (first_pos != pos) if case_mode else np.zeros(n_total, bool)
    if cont.any():
        _continuation_rows(out, given, cont, first_pos, j.provenance, j.labels, j.errors)
    sls_given = given.get("n_sls", np.zeros(n_total, bool))
    own_loads = given.get("n_ed", np.zeros(n_total, bool)) | sls_given
    mark_loads = pd.Series(own_loads).groupby(mk).transform("any").to_numpy() if n_total else own_loads
    in_table = marks.isin(load_marks).to_numpy(dtype=bool) if load_marks else np.zeros(n_total, bool)
    # a row without loads of its own is a cap's geometry when its loads come from other rows or a loads
    # table; a row that names a case, or is a further row of a mark, must carry its loads
    case_name = out["case"].astype(object)
    no_loads = ~own_loads & (cont | ((case_name != "") & ~in_table))
    if no_loads.any():
        rows = np.flatnonzero(no_loads)
        j.errors.add("n_ed", rows, [f"case {_case_label(case_name[r])}of mark {mk[r]!r} has no loads (no "
                                    f"{_heading_of(j.labels.get('n_ed', 'NEd'))!r} or SLS axial load)"
                                    for r in rows])
    given["n_ed"] = own_loads | no_loads | (named & ~cont & (in_table | (case_mode & mark_loads)))
    has_col["n_ed"] = has_col["n_ed"] | has_col.get("n_sls", np.zeros(n_total, bool)) | bool(load_marks)
    return _CaseRows(marks, mk, pos, first_pos, case_mode, cont, case_name)


def _check_rows(j: _Joined, rows: _CaseRows, notes: list[str]) -> None:
    """Required fields, single-pile spacing, plausibility, SLS loads and repeated marks."""
    out, errors, labels, n_total = j.out, j.errors, j.labels, j.n_total
    for f in REQUIRED_SOURCES:
        for k, p in enumerate(j.parts):
            a, b = int(j.starts[k]), int(j.starts[k + 1])
            _required_missing(f, j.given[f][a:b], j.has_col[f][a:b], {**labels, **p.labels}, errors, offset=a)

    # ---- one pile: a spacing of 0 means "not applicable" -------------------------------------
    with np.errstate(invalid="ignore"):
        zero = (out["piles"] == 1) & (out["pile_spacing"] == 0)
    if zero.any():
        out["pile_spacing"][zero] = np.nan
        notes.append(f"{int(zero.sum())} single-pile cap(s): a pile spacing of 0 read as not applicable")
    _plausibility(out, j.labels_at, j.units_at, errors)
    for f in ("n_sls", "mx_sls", "my_sls"):
        bad = ~np.isnan(out[f]) & (out[f] <= 0) if f == "n_sls" else np.zeros(n_total, bool)
        if bad.any():
            bad_at = np.flatnonzero(bad)
            errors.add(f, bad_at, [f"{labels.get(f, f)}: {_fmtn(out[f][r] / TO_INTERNAL['kN'])} kN must be "
                                   "greater than 0" for r in bad_at])
    _repeated_marks(j, rows)


def _repeated_marks(j: _Joined, c: _CaseRows) -> None:
    """Repeated marks: a load case when there is a case column, else the later row is rejected."""
    marks, mk, case_name, provenance = c.marks, c.mk, c.case_name, j.provenance
    if c.case_mode:
        key = pd.Series(list(zip(mk.tolist(), case_name.tolist())), dtype=object)
        dup = (key.duplicated(keep="first") & (marks != "")).to_numpy()
        if dup.any():
            rows = np.flatnonzero(dup)
            first_key = pd.Series(c.pos).groupby(key.to_numpy()).transform("first").to_numpy()
            clab = j.labels.get("case", "case")
            j.errors.add("case", rows, [
                (f"{clab}: case {case_name[r]!r} of mark {mk[r]!r} repeats {_where(provenance, first_key[r])}; "
                 "each load case of a cap needs its own name") if case_name[r] != "" else
                (f"{clab}: missing; mark {mk[r]!r} is given on several rows (first on "
                 f"{_where(provenance, c.first_pos[r])}): each further row needs its own load case name")
                for r in rows])
    else:
        dup = (marks.duplicated(keep="first") & (marks != "")).to_numpy()
        if dup.any():
            rows = np.flatnonzero(dup)
            lab = j.labels.get("mark", "mark")
            j.errors.add("mark", rows, [f"{lab}: {marks.iat[r]!r} repeats the mark of "
                                        f"{_where(provenance, c.first_pos[r])}; each cap needs its own mark (or "
                                        "give a load case column for the rows of further load cases)"
                                        for r in rows])


def _rejections(j: _Joined, c: _CaseRows, vmsgs: dict[Any, list[str]]) -> dict[int, list[tuple[str, str]]]:
    """Row -> (field, message) of every reason to reject it: parse errors, then the model's constraints
    not already explained by them, then a first row of its mark that was rejected."""
    per_row: dict[int, list[tuple[str, str]]] = {}
    for fe in j.errors.items:
        fld, rows, msgs = fe.field, fe.rows, fe.messages
        for r, msg in zip(rows.tolist(), msgs):
            per_row.setdefault(r, []).append((fld, msg))
    for r, vlist in vmsgs.items():
        have = {f for f, _ in per_row.get(r, [])}
        for msg in vlist:
            fld, _, rest = msg.partition(":")
            if fld in have or any(s in have for s in DERIVED_FROM.get(fld, ())):
                continue
            per_row.setdefault(r, []).append((fld, f"{_derived_label(fld, r, j.out, j.labels_at(r))}:{rest}"))
    # the further rows of a mark whose first row was rejected are not checked either
    if c.cont.any():
        lab = j.labels.get("mark", "mark")
        for r in np.flatnonzero(c.cont).tolist():
            fr = int(c.first_pos[r])
            if fr in per_row:
                per_row.setdefault(r, []).append(
                    ("mark", f"{lab}: the first row of mark {c.mk[r]!r} ({_where(j.provenance, fr)}) was "
                             "rejected, so this load case is not checked"))
    return per_row


def _frame_result(j: _Joined, c: _CaseRows, frame: pd.DataFrame, per_row: dict[int, list[tuple[str, str]]],
                  reports: list[HeadingReport], notes: list[str], problems: list[TableProblem],
                  load_marks: frozenset[str], defaults: Defaults | None) -> FrameResult:
    """The kept caps, the rejected rows, the load cases and the notes of the project file's defaults."""
    n_total, has_col, provenance, cont = j.n_total, j.has_col, j.provenance, c.cont
    bad_rows = sorted(per_row)
    keep = np.ones(n_total, dtype=bool)
    keep[np.asarray(bad_rows, dtype=np.int64)] = False
    marks_out = j.out["mark"]
    rejected = [
        RejectedRow(_source(provenance, r), tuple(dict.fromkeys(m for _, m in per_row[r])),
                    marks_out[r] if isinstance(marks_out[r], str) else "")
        for r in bad_rows]
    caps = _canonical(frame.loc[keep & ~cont].reset_index(drop=True))
    applied = [j.applied_rows.get(r, []) for r in np.flatnonzero(keep & ~cont).tolist()]
    if defaults is not None:
        for fld, text in defaults.texts.items():
            caps_with = [caps["mark"].iat[i] for i, a in enumerate(applied) if text in a]
            if caps_with:
                shown = ", ".join(map(str, caps_with[:8])) + (" ..." if len(caps_with) > 8 else "")
                notes.append(f"{text}, for {len(caps_with)} cap(s) whose schedule leaves it blank ({shown})")
    cases = None
    wants_cases = c.case_mode or bool(load_marks) or bool(has_col.get("n_sls", np.zeros(0, bool)).any()) or \
        bool(has_col.get("case_kind", np.zeros(0, bool)).any()) or bool((caps["capacity_basis"] == "SLS").any())
    if wants_cases:
        cap_of = np.full(n_total, -1, dtype=np.int64)
        heads = np.flatnonzero(keep & ~cont)
        cap_of[heads] = np.arange(heads.size)
        rows = np.flatnonzero(keep)
        cases = case_entries(j.out, rows, cap_of[c.first_pos[rows]], provenance)
    rejected_marks = frozenset(str(c.mk[r]) for r in bad_rows if c.mk[r] != "")
    return FrameResult(caps, rejected, reports, notes, n_total, cases=cases, case_rows=int((keep & cont).sum()),
                       rejected_marks=rejected_marks, problems=problems, applied=applied)


# --------------------------------------------------------------------------------------------
# A loads table: mark, case, n_ed, mx_ed, my_ed (kind optional), one row per cap and case
# --------------------------------------------------------------------------------------------


@dataclass
class LoadsTable:
    out: dict[str, np.ndarray]
    provenance: pd.DataFrame
    errors: _Errors
    labels: dict[str, str]
    n: int
    reports: list[HeadingReport]

    @property
    def marks(self) -> frozenset[str]:
        return frozenset(m for m in self.out["mark"].tolist() if m)


def read_loads(tables: Sequence[RawTable], *, mapping: Any = None) -> LoadsTable:
    """Loads table(s) -> the parsed rows (not yet matched to the caps of the schedule)."""
    hmap = resolve_mapping(mapping)
    parts, prov, reports = [], [], []
    for t in tables:
        report = match_headings(t.headings, hmap, "loads")
        by = report.by_field
        missing = [f for f in ("mark",) if f not in by]
        if missing or not ({"n_ed", "n_sls"} & set(by)):
            from checker.ingest.errors import IngestError
            raise IngestError(f"{t.file}: a loads table needs the columns mark, case, n_ed (mx_ed, my_ed and "
                              f"kind optional; or SLS loads); found "
                              f"{', '.join(m.field for m in report.matches) or 'none'}")
        reports.append(report)
        parts.append(_parse_cells(cells_of(t), report))
        n = len(t.row_numbers)
        prov.append(pd.DataFrame({"src_file": np.full(n, t.file, dtype=object),
                                  "src_sheet": np.full(n, t.sheet, dtype=object),
                                  "src_page": np.array(list(t.pages), dtype=object),
                                  "src_row": np.array(list(t.row_numbers), dtype=object)}))
    out = {f: np.concatenate([p.values.get(f, p_out_default(f, p.n)) for p in parts])
           for f in ("mark", "case", "case_kind", "n_ed", "mx_ed", "my_ed", "n_sls", "mx_sls", "my_sls")}
    errors, labels = _join_errors(parts)
    return LoadsTable(out, pd.concat(prov, ignore_index=True), errors, labels, sum(p.n for p in parts), reports)


def p_out_default(f: str, n: int) -> np.ndarray:
    return np.full(n, "", dtype=object) if f in ("mark", "case", "case_kind") else np.full(n, np.nan)


def attach_loads(res: FrameResult, loads: LoadsTable) -> None:
    """Match the rows of a loads table to the caps read (in place): each row is a load case of its cap,
    or is rejected naming its file, row and mark (a mark not in the schedule or rejected there, a case
    that repeats, a case without loads). Nothing else is lost."""
    out, prov, n = loads.out, loads.provenance, loads.n
    mk = out["mark"].astype(object)
    name = out["case"].astype(object)
    cap_marks = pd.Index(res.caps["mark"].astype(str))
    cap = cap_marks.get_indexer(mk) if n else np.zeros(0, np.int64)
    errors = loads.errors
    lab = loads.labels.get("mark", "mark")
    unknown = np.flatnonzero((cap < 0) & (mk != ""))
    errors.add("mark", unknown, [
        f"{lab}: {mk[r]!r} was rejected in the schedule, so its load case {_case_label(name[r])}is not checked"
        if mk[r] in res.rejected_marks else
        f"{lab}: {mk[r]!r} is not a mark of the schedule; this load case {_case_label(name[r])}belongs to no cap"
        for r in unknown])
    blank = np.flatnonzero(mk == "")
    errors.add("mark", blank, [f"{lab}: missing"] * blank.size)
    no_loads = np.flatnonzero(np.isnan(out["n_ed"]) & np.isnan(out["n_sls"]) & (mk != ""))
    errors.add("n_ed", no_loads, [f"case {_case_label(name[r])}of mark {mk[r]!r} has no loads (no "
                                  f"{_heading_of(loads.labels.get('n_ed', 'n_ed'))!r} or SLS axial load)"
                                  for r in no_loads])
    bad_n = np.flatnonzero(~np.isnan(out["n_ed"]) & (out["n_ed"] <= 0))
    kn = TO_INTERNAL["kN"]
    errors.add("n_ed", bad_n, [f"{loads.labels.get('n_ed', 'n_ed')}: {_fmtn(out['n_ed'][r] / kn)} kN must be "
                               "greater than 0" for r in bad_n])
    # repeated cases: against the schedule's own cases of the cap, then within the table
    sched = res.cases if res.cases is not None else pd.DataFrame({"cap": [], "case": []})
    base_case = sched["case"].astype(str).str.replace(r" (ULS|SLS)$", "", regex=True) if len(sched) else sched["case"]
    keys = pd.Series(list(zip(sched["cap"].tolist(), base_case.tolist())) +
                     list(zip(cap.tolist(), name.tolist())), dtype=object)
    dup = keys.duplicated(keep="first").to_numpy()[len(sched):] & (cap >= 0)
    if dup.any():
        rows = np.flatnonzero(dup)
        first = pd.Series(np.arange(len(keys))).groupby(keys.to_numpy()).transform("first").to_numpy()[len(sched):]
        clab = loads.labels.get("case", "case")
        msgs = []
        for r in rows.tolist():
            f = int(first[r])
            where = (_where(prov, f - len(sched)) if f >= len(sched) else
                     f"row {sched['src_row'].iat[f]} of the schedule {sched['src_file'].iat[f]}")
            msgs.append(f"{clab}: case {name[r]!r} of mark {mk[r]!r} repeats {where}; each load case of a cap "
                        "needs its own name" if name[r] else
                        f"{clab}: missing; mark {mk[r]!r} has several load cases (first on {where}): each needs "
                        "its own name")
        errors.add("case", rows, msgs)
    per_row: dict[int, list[str]] = {}
    for fe in errors.items:
        for r, msg in zip(fe.rows.tolist(), fe.messages):
            per_row.setdefault(r, []).append(msg)
    bad = np.zeros(n, bool)
    bad[list(per_row)] = True
    for r in sorted(per_row):
        res.rejected.append(RejectedRow(_source(prov, r), tuple(dict.fromkeys(per_row[r]))))
    rows = np.flatnonzero(~bad)
    added = case_entries(out, rows, cap[rows], prov)
    res.cases = added if res.cases is None else pd.concat([res.cases, added], ignore_index=True).sort_values(
        "cap", kind="stable").reset_index(drop=True)
    res.case_rows += int(rows.size)
    res.rows_read += n


def _case_label(name: Any) -> str:
    return f"{name!r} " if isinstance(name, str) and name else ""


def _continuation_rows(out: dict[str, np.ndarray], given: dict[str, np.ndarray], cont: np.ndarray,
                       first_pos: np.ndarray, provenance: pd.DataFrame, labels: dict[str, str],
                       errors: _Errors) -> None:
    """The further rows of a mark (load cases): blank cap fields are taken from the mark's first row;
    a given one that differs rejects the row, naming both rows and the fields."""
    ci = np.flatnonzero(cont)
    fi = first_pos[ci]
    diff: dict[int, list[str]] = {}
    skip = set(CASE_FIELDS) | {"mark"}
    keys = [k for k in out if k not in skip and (k in FIELDS or k.startswith("_text_"))]
    for k in keys:
        arr = out[k]
        if arr.dtype == bool:
            src = out.get("_text_column")
            blank = (src[ci] == "") if src is not None else np.ones(ci.size, bool)
            v, w = arr[ci], arr[fi]
            differ = ~blank & (v != w)
        elif arr.dtype.kind == "f":
            v, w = arr[ci], arr[fi]
            blank = np.isnan(v)
            if k == "fyk" and "fyk" in given:               # the default 500 is not a given value
                blank = blank | ~given["fyk"][ci]
            with np.errstate(invalid="ignore"):
                differ = ~blank & ~(np.isclose(v, w, rtol=1e-9, atol=1e-9) | (np.isnan(v) & np.isnan(w)))
        else:
            v, w = arr[ci], arr[fi]
            blank = (v == "") | pd.isna(v)
            differ = ~blank & (v != w)
        if k.startswith("_text_") or k in ("bars_x", "bars_y", "links"):   # compared as parsed: nx, phi_x, sx
            differ = np.zeros(ci.size, bool)
        if blank.any():
            arr[ci[blank]] = w[blank]
        for j in np.flatnonzero(differ).tolist():
            spec = FIELDS.get(k)
            scale = spec.show_scale if spec else 1.0
            unit = f" {spec.show_unit}" if spec and spec.show_unit and spec.show_unit != "count" else ""
            shown = (lambda x: f"{_fmtn(x * scale)}{unit}") if arr.dtype.kind == "f" else repr
            diff.setdefault(int(ci[j]), []).append(f"{k} {shown(v[j])} (first row: {shown(w[j])})")
    for f, g in given.items():
        if f not in CASE_FIELDS:
            g[ci] = g[ci] | g[fi]
    for r, items in diff.items():
        fr = int(first_pos[r])
        errors.add("mark", [r], [f"{labels.get('mark', 'mark')}: {out['mark'][r]!r} is a further load case of the cap "
                                 f"on {_where(provenance, fr)} but describes a different cap: {'; '.join(items)}. "
                                 "Leave the geometry and reinforcement blank on the rows of further load cases, "
                                 "or repeat them exactly"])


def case_entries(out: dict[str, np.ndarray], rows: np.ndarray, cap: np.ndarray,
                 provenance: pd.DataFrame) -> pd.DataFrame:
    """The load cases of the rows read (positions ``rows``, caps ``cap``): a ULS entry from the
    ``n_ed`` loads (or the kind the row states) and an SLS entry from the SLS loads of a row."""
    parts = []
    name = out["case"][rows].astype(object)
    kind = out["case_kind"][rows].astype(object)
    has_u = ~np.isnan(out["n_ed"][rows])
    has_s = ~np.isnan(out["n_sls"][rows])
    both = has_u & has_s
    for sel, n_, mx, my, k, suffix in (
            (has_u, "n_ed", "mx_ed", "my_ed", np.where(kind == "", "ULS", kind), "ULS"),
            (has_s, "n_sls", "mx_sls", "my_sls", np.full(rows.size, "SLS", dtype=object), "SLS")):
        idx = np.flatnonzero(sel)
        r = rows[idx]
        nm = name[idx]
        nm = np.where(both[idx], np.where(nm == "", suffix, nm + " " + suffix), nm).astype(object)
        parts.append(pd.DataFrame({
            "cap": cap[idx], "case": nm, "kind": k[idx].astype(object),
            "n_ed": out[n_][r], "mx_ed": out[mx][r], "my_ed": out[my][r],
            "src_file": provenance["src_file"].to_numpy(dtype=object)[r],
            "src_sheet": provenance["src_sheet"].to_numpy(dtype=object)[r],
            "src_page": provenance["src_page"].to_numpy(dtype=object)[r],
            "src_row": provenance["src_row"].to_numpy(dtype=object)[r],
            "_order": r * 2 + (0 if suffix == "ULS" else 1),
        }))
    df = pd.concat(parts, ignore_index=True)
    return df.sort_values(["cap", "_order"], kind="stable").drop(columns="_order").reset_index(drop=True)


def _table_problems(tables: Sequence[RawTable], parts: Sequence[_Parsed], given: dict[str, np.ndarray],
                    reports: Sequence[HeadingReport]) -> list[TableProblem]:
    """A required field that no column of a table gives, reported once for the table (with the
    headings left unused, which a mapping file can map); its rows say only that the column is missing."""
    out: list[TableProblem] = []
    offset = 0
    for table, part, report in zip(tables, parts, reports):
        lacking = [f for f in REQUIRED_SOURCES if f not in part.given and not given[f][offset:offset + part.n].all()]
        if lacking and part.n:
            unused = [u for u in report.unmapped]
            hint = (f"headings not used: {', '.join(repr(u) for u in unused[:12])}; map the right one in a "
                    f"mapping file (--mapping FILE, [headings] \"{unused[0]}\" = \"{lacking[0]}\")" if unused else
                    "no heading of the table is left unused; add the column, or map its heading in a mapping file "
                    "(--mapping FILE)")
            page = table.pages[0] if table.pages else None
            out.append(TableProblem({"file": table.file, "sheet": table.sheet, "page": page, "row": table.heading_row},
                                    (f"no column maps to {', '.join(lacking)}, so no row of this table can be checked "
                                     f"({hint}; see capcheck columns)",)))
        offset += part.n
    return out


_BOUND_OK = {"mx_ed", "my_ed", "stated_pile_load", "stated_tie_x", "stated_tie_y", "stated_as_x", "stated_as_y",
             "embedment"}


def _plausible_text(f: str, value: float, unit: tuple[str, str, float]) -> str | None:
    """The plausibility message of ``value`` of field ``f`` read in ``unit`` (kind, spelling, factor)."""
    kind, spelling, factor = unit
    return plausible_problem(f, kind, value, spelling, factor)


def _plausibility(out: dict[str, np.ndarray], labels_at: Callable[[int], dict[str, str]],
                  units_at: Callable[[int], dict[str, tuple[str, str, float]]], errors: _Errors) -> None:
    """Figures outside their plausible range (:mod:`checker.ingest.plausible`), a column larger than
    the cap, and a bar count that does not fit the cap at the least clear spacing, as row errors."""
    have: dict[str, set[int]] = {}
    for fe in errors.items:
        have.setdefault(fe.field, set()).update(fe.rows.tolist())
    for f in PLAUSIBLE:
        v = out.get(f)
        if v is None:
            continue
        v = np.asarray(v, dtype=float)
        with np.errstate(invalid="ignore"):
            lo, hi = PLAUSIBLE[f]
            mag = np.abs(v) if f in ("mx_ed", "my_ed") else v
            # values the model refuses on its own (0 or less) keep the model's message
            fin = np.isfinite(v) & ((v > 0) | (f in _BOUND_OK and v >= 0))
            bad = fin & ((mag < lo) | (mag > hi))
        rows = [r for r in np.flatnonzero(bad).tolist() if r not in have.get(f, ()) and f in units_at(r)]
        if not rows:
            continue
        errors.add(f, rows, [f"{labels_at(r).get(f, f)}: {_plausible_text(f, float(v[r]), units_at(r)[f])}"
                             for r in rows])
        have.setdefault(f, set()).update(rows)
        out[f][rows] = np.nan            # not judged again by the model's cross-field checks
    bad_col = lambda f: have.get(f, set())  # noqa: E731
    cx, cy, L, W = (np.asarray(out[k], dtype=float) for k in ("column_x", "column_y", "cap_length", "cap_width"))
    with np.errstate(invalid="ignore"):
        big = (cx > L) | (cy > W)
    rows = [r for r in np.flatnonzero(big).tolist()
            if not (bad_col("column_x") | bad_col("column_y") | bad_col("cap_length") | bad_col("cap_width")
                    | bad_col("column") | bad_col("size") | bad_col("plan")) & {r}]
    if rows:
        errors.add("column", rows, [f"{labels_at(r).get('column', 'column')}: {_fmtn(cx[r])} x {_fmtn(cy[r])} mm "
                                    "does not fit within the cap plan "
                                    f"{_fmtn(L[r])} x {_fmtn(W[r])} mm (L x W)" for r in rows])
    cover = np.asarray(out["cover"], dtype=float)
    for s_, width_name, width in (("x", "width", W), ("y", "length", L)):
        n_ = np.asarray(out[f"n{s_}"], dtype=float)
        phi = np.asarray(out[f"phi_{s_}"], dtype=float)
        cen = np.asarray(out[f"s{s_}"], dtype=float)
        with np.errstate(invalid="ignore"):
            need = n_ * phi + (n_ - 1) * np.maximum(MIN_CLEAR_BARS, 0)
            room = width - 2 * cover
            bad = np.isnan(cen) & (n_ >= 2) & (need > room) & (room > 0)
        rows = [r for r in np.flatnonzero(bad).tolist() if r not in bad_col(f"bars_{s_}") and r not in bad_col("cover")]
        if rows:
            errors.add(f"bars_{s_}", rows, [
                f"{labels_at(r).get(f'bars_{s_}', f'bars_{s_}')}: {_fmtn(n_[r])} bars of {_fmtn(phi[r])} mm do not "
                f"fit across the cap {width_name} of "
                f"{_fmtn(width[r])} mm inside {_fmtn(cover[r])} mm covers at the least clear spacing of "
                f"{_fmtn(MIN_CLEAR_BARS)} mm ({_fmtn(need[r])} mm needed, {_fmtn(room[r])} mm available)"
                for r in rows])


_FROM_TEXT = {"nx": "bars_x", "phi_x": "bars_x", "sx": "bars_x", "ny": "bars_y", "phi_y": "bars_y",
              "sy": "bars_y", "column_x": "column", "column_y": "column", "column_round": "column"}
_FROM_TEXT.update({"n_links": "links", "phi_links": "links", "s_links": "links"})  # issue 15, item 3


def _derived_label(fld: str, r: int, out: dict[str, np.ndarray], labels: dict[str, str]) -> str:
    """'nx (from 'H25@150' in column 'Bars X')' for fields read out of a notation cell."""
    src = _FROM_TEXT.get(fld)
    text = out.get(f"_text_{src}") if src else None
    if src and text is not None and src in labels and text[r] != "":
        return f"{fld} (from {text[r]!r} in column {_heading_of(labels[src])!r})"
    return labels.get(fld, fld)


def _canonical(df: pd.DataFrame) -> pd.DataFrame:
    """Column order and dtypes of the canonical frame (DEVELOPERS.md)."""
    out = {}
    for c in FRAME_COLUMNS:
        spec = FIELDS.get(c)
        col = df[c]
        if spec is None:
            out[c] = col.astype(object)
        elif spec.kind in ("float", "int"):
            out[c] = col.astype(float)
        elif spec.kind == "bool":
            out[c] = col.astype(bool)
        else:
            out[c] = col.astype(object).fillna("").astype(str)
    return pd.DataFrame(out)


def _source(prov: pd.DataFrame, r: int) -> dict[str, Any]:
    page = prov["src_page"].iat[r]
    row = prov["src_row"].iat[r]
    return {"file": prov["src_file"].iat[r], "sheet": prov["src_sheet"].iat[r],
            "page": None if page is None or page != page else int(page),
            "row": None if row is None or row != row else int(row)}


def _where(prov: pd.DataFrame, r: int) -> str:
    s = _source(prov, r)
    parts = []
    if s["page"] is not None:
        parts.append(f"page {s['page']}")
    elif s["sheet"]:
        parts.append(f'sheet "{s["sheet"]}"')
    parts.append(f"row {s['row']}")
    return ", ".join(parts)


