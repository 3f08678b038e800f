"""Parsers for what a schedule cell says: bar notation, column size, concrete class, combined sizes
and plain numbers with units.

Every parser is pure: it returns a value or raises :class:`NotationError` (a ``ValueError``) whose
message quotes the cell and says what was expected. Results (and errors) are memoised per distinct
text, so mapping a column of repeated values costs one parse per distinct value.
"""

from __future__ import annotations

import decimal
import functools
import math
import numbers
import re
import unicodedata
from dataclasses import dataclass
from typing import Any, Callable, NamedTuple, TypeVar, cast

import numpy as np
import pandas as pd

from checker.model import CONCRETE_CLASSES, STANDARD_BAR_SIZES
from checker.units import DEFAULT_UNIT, TO_INTERNAL
from checker.units import UNITS as SCALE_TABLE


class NotationError(ValueError):
    """A cell that cannot be read; the message quotes the cell and says what is expected."""


T = TypeVar("T")

_MEMO_LIMIT = 50_000
_PLAIN_KEYS = (str, int, float)


def _memo(fn: Callable[..., T]) -> Callable[..., T]:
    """Memoise results and NotationErrors per argument tuple (bounded; cleared when full)."""
    cache: dict[tuple, tuple[bool, Any]] = {}

    @functools.wraps(fn)
    def wrapper(*args: Any) -> T:
        # True == 1 == 1.0 == Decimal(1) and they hash alike: only str, int and float (read alike
        # by every parser) share memo slots; any other type is keyed with its type
        key = tuple(a if type(a) in _PLAIN_KEYS else (type(a), a) for a in args)
        try:
            hit = cache.get(key)
        except TypeError:                       # unhashable argument: no memo
            return fn(*args)
        if hit is None:
            try:
                hit = (True, fn(*args))
            except NotationError as exc:
                hit = (False, str(exc))
            if len(cache) >= _MEMO_LIMIT:
                cache.clear()
            cache[key] = hit
        if hit[0]:
            return cast(T, hit[1])
        raise NotationError(hit[1])

    wrapper.cache_clear = cache.clear  # type: ignore[attr-defined]
    return wrapper


# --------------------------------------------------------------------------------------------
# Text clean-up shared by the parsers
# --------------------------------------------------------------------------------------------

_SPACES = dict.fromkeys(map(ord, "\u00a0\u2007\u202f\u2009\u200a\u2002\u2003\u3000\t\r\n"), " ")
_ZERO_WIDTH = dict.fromkeys(map(ord, "\u200b\u200c\u200d\ufeff"), None)
_MINUS = dict.fromkeys(map(ord, "\u2212\u2013\u2012\u2014\u2015\ufe63\uff0d\u2010\u2011"), "-")
_DIAMETER = dict.fromkeys(map(ord, "\u00d8\u00f8\u2300\u03a6\u03c6\u03d5\u2205"), "\u00d8")
_TIMES = dict.fromkeys(map(ord, "\u00d7\u2715\u2716\u2a2f"), "X")


# control characters (C0 but tab and line breaks, DEL, C1) and the bidirectional controls that
# can make a cell display other than it reads (Unicode Standard Annex #9)
_CONTROLS = dict.fromkeys([*range(0x00, 0x09), 0x0b, 0x0c, *range(0x0e, 0x20), *range(0x7f, 0xa0),
                           0x061c, 0x200e, 0x200f, *range(0x202a, 0x202f), *range(0x2066, 0x206a)], None)


def clean_text(text: Any) -> str:
    """Unicode spaces to ' ', minus signs and dashes to '-', diameter signs to 'Ø', control and
    bidirectional-control characters removed; collapsed, stripped."""
    s = str(text).translate(_SPACES).translate(_CONTROLS).translate(_ZERO_WIDTH).translate(_MINUS) \
        .translate(_DIAMETER)
    return " ".join(s.split())


def _quote(text: Any) -> str:
    s = str(text)
    return repr(s if len(s) <= 60 else s[:57] + "...")


#: the longest cell text a notation parser reads (a bar notation, size or figure is far shorter)
MAX_NOTATION_CHARS = 120


def fold_digits(s: str) -> str:
    """Fullwidth forms (U+FF01..U+FF5E, e.g. '１２Ｈ２５') to ASCII and every Unicode decimal digit
    (category Nd, e.g. Arabic-Indic '١٢٠٠') to its ASCII digit. Superscripts, fractions and
    circled or Roman numerals are not decimal digits and are left alone (so '10²' is never 102)."""
    if s.isascii():
        return s
    out = []
    for ch in s:
        o = ord(ch)
        if 0xFF01 <= o <= 0xFF5E:
            out.append(chr(o - 0xFEE0))
            continue
        if o > 127:
            d = unicodedata.decimal(ch, None)
            if d is not None:
                out.append(str(d))
                continue
        out.append(ch)
    return "".join(out)


def _cell_text(text: Any, what: str) -> str:
    """The cell as the parsers read it: :func:`clean_text`, then :func:`fold_digits`; too long is refused."""
    s = str(text)
    if len(s) > 4 * MAX_NOTATION_CHARS:
        raise NotationError(f"{_quote(text)} is too long ({len(s):,} characters) for {what}")
    s = fold_digits(clean_text(s))
    if len(s) > MAX_NOTATION_CHARS:
        raise NotationError(f"{_quote(text)} is too long ({len(s):,} characters) for {what}")
    return s


_FAMILIAR = frozenset("Ø×²³·°µ")


def _lookalike_hint(text: Any) -> str:
    """' (the cell holds 'Н', U+041D CYRILLIC CAPITAL LETTER EN, ...)' for the first character that is
    neither ASCII nor one the parsers know, else ''."""
    if not isinstance(text, str) or text.isascii():
        return ""
    try:
        s = fold_digits(clean_text(text[: 4 * MAX_NOTATION_CHARS]))
    except Exception:                    # pragma: no cover - clean_text takes any text
        return ""
    for ch in s:
        if ord(ch) > 127 and ch not in _FAMILIAR:
            name = unicodedata.name(ch, "an unnamed character")
            return (f" (the cell holds {ch!r}, U+{ord(ch):04X} {name}, where a plain letter, digit "
                    "or sign is expected: retype it)")
    return ""


def _hinted(fn: Callable[..., T]) -> Callable[..., T]:
    """Add :func:`_lookalike_hint` to the parser's NotationError."""

    @functools.wraps(fn)
    def wrapper(text: Any, *args: Any) -> T:
        try:
            return fn(text, *args)
        except NotationError as exc:
            hint = _lookalike_hint(text)
            if hint and hint not in str(exc):
                raise NotationError(f"{exc}{hint}") from None
            raise

    return wrapper


#: cell types read as numbers: every real number type (int, float, Fraction, numpy's), and Decimal;
#: never a bool
REAL_TYPES = (numbers.Real, decimal.Decimal)


def is_real_number(v: Any) -> bool:
    return isinstance(v, REAL_TYPES) and not isinstance(v, (bool, np.bool_))


def _finite(v: float, original: Any) -> float:
    if not math.isfinite(v):
        raise NotationError(f"{_quote(original)} is too large a number")
    return v


def _number_cell(cell: Any) -> float:
    """A cell read as a number (:func:`is_real_number`) as a float; refused: too large, or NaN (empty)."""
    try:
        v = float(cell)
    except (OverflowError, ValueError):
        raise NotationError(f"{_quote(cell)} is too large a number") from None
    if math.isnan(v):
        raise NotationError("empty cell")
    return v


# --------------------------------------------------------------------------------------------
# Units and numbers
# --------------------------------------------------------------------------------------------

#: display spelling of the normalised unit keys (the units of :data:`checker.units.UNITS` and their
#: other spellings)
UNIT_NAMES: dict[str, str] = {
    "mm": "mm", "m": "m", "cm": "cm", "n": "N", "kn": "kN", "mn": "MN", "nmm": "Nmm", "knm": "kNm",
    "mnm": "MNm", "mpa": "MPa", "n/mm2": "N/mm²", "mm2": "mm²", "cm2": "cm²", "m2": "m²", "no": "no.",
    "nr": "nr", "nos": "nos", "piles": "piles",
}

#: the unit of the one scale table each key is
_SAME_AS: dict[str, str] = {"nmm": "N·mm", "n/mm2": "MPa", "no": "count", "nr": "count", "nos": "count",
                            "piles": "count"}

#: unit text (normalised: lower case, no spaces/dots/middle dots, ² -> 2) -> (kind, factor to internal)
UNITS: dict[str, tuple[str, float]] = {k: SCALE_TABLE[_SAME_AS.get(k, name)] for k, name in UNIT_NAMES.items()}

#: the unit assumed when a heading or cell gives none (the brief: mm, kN, kNm, MPa, mm², count)
DEFAULT_SCALE: dict[str, float] = {kind: TO_INTERNAL[u] for kind, u in DEFAULT_UNIT.items()}


def normalise_unit(text: str) -> str | None:
    """'kN·m' -> 'knm', 'N/mm²' -> 'n/mm2', '(mm)' -> 'mm'; None when it is not a known unit."""
    s = clean_text(text).lower().strip("()[]{} ")
    s = s.replace("²", "2").replace("^2", "2").replace("\u00b7", "").replace("\u22c5", "")
    s = re.sub(r"[\s.*\-]", "", s)
    return s if s in UNITS else None


class Quantity(NamedTuple):
    value: float
    unit: str | None        # a key of UNITS, or None when the cell gives no unit


_NUM = r"[+-]?(?:[0-9]+(?:[.,][0-9]+)?|[.,][0-9]+|[0-9]+\.)(?:[eE][+-]?[0-9]{1,3})?"
_NUMBER_RE = re.compile(rf"^(?P<num>{_NUM})\s*(?P<unit>[^\d\s].*)?$", re.ASCII)
_GROUPED_RE = re.compile(r"^([+-]?[0-9]{1,3}(?: [0-9]{3})+)(?=$|[^0-9])")


def _to_float(num: str, original: Any) -> float:
    """A number as written: '1,5' is a decimal comma (1.5); '1,500' is ambiguous and refused."""
    if "," in num:
        if "." in num:
            raise NotationError(f"{_quote(original)}: both ',' and '.' in one number; write it as 1500 or 1.5")
        head, _, tail = num.partition(",")
        if len(tail.split("e")[0].split("E")[0]) == 3 and head.lstrip("+-") not in ("", "0"):
            raise NotationError(
                f"{_quote(original)} is ambiguous: ',' may be a decimal comma or a thousands separator; "
                "write 1500 or 1.5")
        num = num.replace(",", ".")
    return float(num)


@_memo
@_hinted
def parse_quantity(text: Any) -> Quantity:
    """A number with an optional trailing unit: '900', '900mm', '1,5 m', '−50', '1 500 kN'.

    Accepts Unicode minus signs and non-breaking or thin spaces (also as a thousands separator
    between groups of three digits), a decimal comma ('1,5' = 1.5); refuses '1,500' (ambiguous) and
    unknown unit text.
    """
    if isinstance(text, bool):
        raise NotationError(f"{_quote(text)} is not a number")
    if is_real_number(text):
        return Quantity(_finite(_number_cell(text), text), None)
    s = _cell_text(text, "a number")
    if not s:
        raise NotationError("empty cell")
    s = re.sub(r"^([+-])\s+(?=[0-9.,])", r"\1", s)
    g = _GROUPED_RE.match(s)
    if g:
        s = g.group(1).replace(" ", "") + s[g.end():]
    m = _NUMBER_RE.match(s)
    if not m:
        raise NotationError(f"{_quote(text)} is not a number")
    value = _finite(_to_float(m.group("num"), text), text)
    unit_text = (m.group("unit") or "").strip()
    if unit_text[:1] in (".", ","):
        raise NotationError(f"{_quote(text)} is not a number (more than one decimal or thousands separator)")
    if not unit_text:
        return Quantity(value, None)
    unit = normalise_unit(unit_text)
    if unit is None:
        raise NotationError(f"{_quote(text)}: unknown unit {unit_text!r} after the number")
    return Quantity(value, unit)


def to_internal(q: Quantity, kind: str | None, scale: float, original: Any = None) -> float:
    """The quantity in internal units: the cell's own unit if it has one (it must be of ``kind``),
    else the value times ``scale`` (the unit of the heading)."""
    shown = original if original is not None else q.value
    if q.unit is None:
        return _finite(q.value * scale, shown)
    ukind, factor = UNITS[q.unit]
    if kind is not None and ukind != kind:
        raise NotationError(f"{_quote(shown)}: unit {UNIT_NAMES[q.unit]} is not a {kind}")
    return _finite(q.value * factor, shown)


@_memo
def parse_number(text: Any, kind: str | None = None, scale: float = 1.0) -> float:
    """A number in internal units (see :func:`parse_quantity` and :func:`to_internal`).

    ``parse_number('900mm') == 900.0``; ``parse_number('1,5') == 1.5``; ``parse_number('1.5', 'force',
    1e3) == 1500.0`` (a kN heading); ``parse_number('1.5 MN', 'force', 1e3) == 1.5e6``.
    """
    return to_internal(parse_quantity(text), kind, scale, text)


# --------------------------------------------------------------------------------------------
# Bar notation
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class BarSpec:
    """One layer of bars: ``count`` (None for a spacing form), diameter [mm], centres [mm] (or None)."""

    count: int | None
    dia: int
    centres: float | None


_BAR_TYPE = r"(?:H|T|Y|Ø|DIA\.?)"
_COUNT = r"(?P<count>[0-9]{1,4})\s*(?:NO\.?|NOS\.?|NR\.?|N°|X)?\s*"
_CENTRES = (r"\s*(?:@|AT|-|/)\s*(?P<centres>[0-9]{1,4}(?:[.,][0-9]+)?)\s*(?:MM)?\s*"
            r"(?:C/C|CC|CRS\.?|CTRS\.?|CTS\.?|CENTRES|CENTERS)?")
_DIA_MM = r"(?P<dia>[0-9]{1,3})(?:\s*MM)?"
_BAR_FORMS = [
    re.compile(p, re.ASCII) for p in (
        rf"^{_COUNT}{_BAR_TYPE}\s*{_DIA_MM}(?:{_CENTRES})?$",          # 10H25, 10 no. H25, 8H25@150
        rf"^{_COUNT}{_DIA_MM}\s*(?:Ø|DIA\.?)(?:{_CENTRES})?$",         # 10 no. 25 dia
        rf"^{_BAR_TYPE}\s*{_DIA_MM}{_CENTRES}$",                        # H25@150, T20-200, H25 at 150 c/c
        rf"^{_DIA_MM}\s*(?:Ø|DIA\.?){_CENTRES}$",                       # 25 dia @ 150
    )
]
_LAYER_RE = re.compile(r"(?:^|\s)\(?(?:[BT][1-4]|BTM|BOT|BOTTOM)\)?(?=$|\s)", re.ASCII)
_LAYERS_RE = re.compile(r"LAYER|\b[2-9]\s*L\b|\bDOUBLE\b", re.ASCII)
_BUNDLE_RE = re.compile(r"BUNDLE|PAIR|\bGROUPS?\b|\bTWIN", re.ASCII)
_MARK_RE = re.compile(r"(?<![A-Z])(?:H|T|Y|Ø|DIA\.?)\s*[0-9]+", re.ASCII)
_OTHER_TYPE_RE = re.compile(r"(?:^|[0-9\s])([A-GI-SU-XZ])\s*([0-9]{1,3})\b", re.ASCII)
_SIZES_TEXT = ", ".join(map(str, STANDARD_BAR_SIZES))


@_memo
@_hinted
def parse_bars(text: Any) -> BarSpec:
    """One layer of bars in BS 8666 notation (grade letter H; legacy T and Y, high-yield bars as
    older schedules write them, ``14Y12``; also Ø or 'dia').

    Count forms: ``10H25``, ``10 no. H25``, ``10No H25``, ``10T25``, ``10Ø25``, ``10 no. 25 dia``;
    spacing forms: ``H25@150``, ``H25-150``, ``H25 at 150 c/c``, ``T20-200``; both: ``8H25@150``.
    Layer marks (``B1``, ``B2``, ``T1``, ``T2``, ``BTM``) are tolerated and ignored. Two layers in a
    cell, bundles and mixed sizes (``4H25+4H20``) are out of scope and refused. The diameter must be
    a BS 8666 size (:data:`checker.model.STANDARD_BAR_SIZES`): 6 mm parses (a detailing rule flags
    it later), 11 mm does not.
    """
    if not isinstance(text, str):
        if isinstance(text, float) and math.isnan(text):
            raise NotationError("empty cell")
        raise NotationError(f"{_quote(text)} is not a bar notation; expected e.g. 10H25 or H25@150")
    s = _cell_text(text, "a bar notation").upper()
    if not s:
        raise NotationError("empty cell")
    if _LAYERS_RE.search(s):
        raise NotationError(f"{_quote(text)}: more than one layer in a cell is out of scope; "
                            "give one layer per column (bars_x the lowest, bars_y the second)")
    if _BUNDLE_RE.search(s):
        raise NotationError(f"{_quote(text)}: bundled or paired bars are out of scope")
    core = " ".join(_LAYER_RE.sub(" ", s).split())
    if len(_MARK_RE.findall(core)) > 1 or re.search(r"[+&]|\bAND\b", core):
        raise NotationError(f"{_quote(text)}: mixed bar sizes or several bar marks in one cell are "
                            "out of scope; give one bar mark per layer")
    for form in _BAR_FORMS:
        m = form.match(core)
        if m:
            break
    else:
        other = _OTHER_TYPE_RE.search(core)
        if other and not _MARK_RE.search(core):
            raise NotationError(f"{_quote(text)}: bar type {other.group(1)!r} is not recognised; "
                                "use H (BS 8666), T or Y (legacy), Ø or dia")
        raise NotationError(f"{_quote(text)} is not a bar notation; expected e.g. 10H25, 10 no. H25 or H25@150")
    groups = m.groupdict()
    dia = int(groups["dia"])
    if dia not in STANDARD_BAR_SIZES:
        raise NotationError(f"{_quote(text)}: {dia} mm is not a standard bar size (BS 8666: {_SIZES_TEXT} mm)")
    count = int(groups["count"]) if groups.get("count") else None
    if count is not None and count < 1:
        raise NotationError(f"{_quote(text)}: the bar count must be at least 1")
    centres = None
    if groups.get("centres"):
        centres = float(groups["centres"].replace(",", "."))
        if centres <= 0:
            raise NotationError(f"{_quote(text)}: the bar centres must be greater than 0")
    return BarSpec(count, dia, centres)


def bars_from_spacing(width_mm: Any, cover_mm: Any, dia_mm: Any, centres_mm: Any) -> Any:
    """Number of bars [count] of a spacing form laid across a width.

    The bars run from the first bar centre at ``cover + dia/2`` from one side face to the last at
    ``cover + dia/2`` from the other, so the centre-line span is ``width − 2·cover − dia`` and

        n = floor((width − 2·cover − dia) / centres) + 1

    (common practice for scheduling bars at stated centres; the side cover equals the schedule's
    nominal cover, per DEVELOPERS.md). Scalars or numpy arrays [mm]; NaN in, NaN out. A width too
    small for one bar gives n <= 0, which the model refuses.
    """
    w, c, d, s = (np.asarray(a, dtype=float) for a in (width_mm, cover_mm, dia_mm, centres_mm))
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        n = np.floor((w - 2.0 * c - d) / s + 1e-9) + 1.0
    return n if n.ndim else float(n)


# --------------------------------------------------------------------------------------------
# Column size
# --------------------------------------------------------------------------------------------


class ColumnSize(NamedTuple):
    cx: float            # along x [mm]
    cy: float            # along y [mm]
    round: bool          # circular (cx == cy == D)


_LEN = r"[0-9]+(?:[.,][0-9]+)?"
_UNIT_LEN = r"(?:\s*(?P<u{n}>MM|M|CM))?"
_COLUMN_FORMS = [
    (re.compile(rf"^(?P<a>{_LEN}){_UNIT_LEN.format(n=1)}\s*X\s*(?P<b>{_LEN}){_UNIT_LEN.format(n=2)}$", re.ASCII),
     False),
    (re.compile(rf"^(?:D|Ø|DIA\.?|CIRC(?:ULAR)?)\s*(?P<a>{_LEN}){_UNIT_LEN.format(n=1)}$", re.ASCII), True),
    (re.compile(rf"^(?P<a>{_LEN}){_UNIT_LEN.format(n=1)}\s*(?:Ø|DIA\.?|DIAMETER|CIRC(?:ULAR)?|D)$", re.ASCII),
     True),
    (re.compile(rf"^(?P<a>{_LEN}){_UNIT_LEN.format(n=1)}(?:\s*(?:SQ\.?|SQUARE))?$", re.ASCII), False),
]


def _length(num: str, unit: str | None, scale: float, text: Any) -> float:
    v = _to_float(num, text)
    if unit:
        return _finite(v * UNITS[unit.lower()][1], text)
    return _finite(v * scale, text)


@_memo
@_hinted
def parse_column(text: Any, scale: float = 1.0) -> ColumnSize:
    """Column size: ``600x400`` (along x by along y; also ``600 x 400``, ``600×400``, ``600X400``),
    ``600`` or ``600 sq`` (square), ``D600``, ``Ø600``, ``600 dia`` (circular). Lengths in mm unless
    the cell says ``m``/``cm``, or the heading's unit factor ``scale`` applies."""
    if is_real_number(text):
        v = _number_cell(text)
        if not math.isfinite(v):
            raise NotationError(f"{_quote(text)} is not a finite number")
        if v <= 0:
            raise NotationError(f"{_quote(text)}: a column size must be greater than 0")
        return ColumnSize(_finite(v * scale, text), _finite(v * scale, text), False)
    if not isinstance(text, str):
        raise NotationError(f"{_quote(text)} is not a column size; expected e.g. 600x400, 600 (square) or D600")
    s = _cell_text(text, "a column size").upper().translate(_TIMES)
    if not s:
        raise NotationError("empty cell")
    for form, is_round in _COLUMN_FORMS:
        m = form.match(s)
        if m:
            g = m.groupdict()
            unit = g.get("u2") or g.get("u1")
            a = _length(g["a"], g.get("u1") or unit, scale, text)
            b = _length(g["b"], unit, scale, text) if g.get("b") else a
            if a <= 0 or b <= 0:
                raise NotationError(f"{_quote(text)}: a column size must be greater than 0")
            return ColumnSize(a, b, is_round)
    raise NotationError(f"{_quote(text)} is not a column size; expected e.g. 600x400, 600 (square) or D600")


# --------------------------------------------------------------------------------------------
# Concrete class
# --------------------------------------------------------------------------------------------


class ConcreteClass(NamedTuple):
    name: str           # normalised, 'C32/40'
    fck: float          # cylinder [MPa]
    fck_cube: float     # cube [MPa]


_BY_FCK = {v[0]: k for k, v in CONCRETE_CLASSES.items()}
_CLASS_RE = re.compile(r"^(?:(?:RC|C)(?P<cyl>[0-9]{1,3})(?:/(?P<cube>[0-9]{1,3}))?"
                       r"|(?P<cyl2>[0-9]{1,3})/(?P<cube2>[0-9]{1,3}))$",
                       re.ASCII)
_CLASSES_TEXT = "C12/15 to C90/105 (EN 1992-1-1 Table 3.1), C28/35, C32/40"


@_memo
@_hinted
def parse_concrete(text: Any) -> ConcreteClass:
    """Strength class: ``C32/40``, ``c32/40``, ``C 32/40``, ``C32`` -> ``ConcreteClass('C32/40', 32, 40)``.

    Accepted: the classes of EN 1992-1-1:2004 Table 3.1 (C12/15 ... C90/105) and the UK classes
    C28/35 and C32/40 (BS 8500-1); ``RC32/40`` (a BS 8500 designated concrete) reads as C32/40.
    A cube strength that does not belong to the cylinder strength is refused.
    """
    if not isinstance(text, str):
        if isinstance(text, float) and math.isnan(text):
            raise NotationError("empty cell")
        raise NotationError(f"{_quote(text)} is not a concrete class; expected e.g. C32/40")
    s = _cell_text(text, "a concrete class").upper().replace(" ", "")
    if not s:
        raise NotationError("empty cell")
    m = _CLASS_RE.match(s)
    if not m:
        raise NotationError(f"{_quote(text)} is not a concrete class; expected e.g. C32/40")
    cyl = float(m.group("cyl") or m.group("cyl2"))
    cube_text = m.group("cube") or m.group("cube2")
    name = _BY_FCK.get(cyl)
    if name is None:
        raise NotationError(f"{_quote(text)} is not a known strength class; accepted: {_CLASSES_TEXT}")
    fck, cube = CONCRETE_CLASSES[name]
    if cube_text is not None and float(cube_text) != cube:
        raise NotationError(f"{_quote(text)} is not a known strength class: C{int(cyl)} goes with "
                            f"cube strength {int(cube)} ({name})")
    return ConcreteClass(name, float(fck), float(cube))


def concrete_from_fck(fck: float) -> ConcreteClass:
    """The class with cylinder strength ``fck`` [MPa]; NotationError if there is none."""
    name = _BY_FCK.get(float(fck))
    if name is None:
        raise NotationError(f"{float(fck):g} MPa is not the cylinder strength of a known class ({_CLASSES_TEXT})")
    f, cube = CONCRETE_CLASSES[name]
    return ConcreteClass(name, float(f), float(cube))


# --------------------------------------------------------------------------------------------
# Combined sizes
# --------------------------------------------------------------------------------------------

_SIZE_RE = re.compile(
    rf"^(?P<a>{_LEN})\s*(?P<u1>MM|M|CM)?\s*X\s*(?P<b>{_LEN})\s*(?P<u2>MM|M|CM)?"
    rf"(?:\s*X\s*(?P<c>{_LEN})\s*(?P<u3>MM|M|CM)?)?$", re.ASCII)


@_memo
@_hinted
def parse_size(text: Any, scale: float = 1.0, parts: int = 3) -> tuple[float, ...]:
    """Combined size ``L x W x D`` (``2400 x 1200 x 900``, ``2400×1200×900mm``, ``2.4 X 1.2 X 0.9 m``)
    -> (L, W, D) [mm]; with ``parts=2`` a plan size ``L x W`` -> (L, W). A unit written after the last
    figure applies to all of them; otherwise the heading's unit factor ``scale``."""
    if not isinstance(text, str):
        if isinstance(text, float) and math.isnan(text):
            raise NotationError("empty cell")
        raise NotationError(f"{_quote(text)} is not a size; expected e.g. 2400 x 1200 x 900")
    s = _cell_text(text, "a size").upper().translate(_TIMES)
    expected = "2400 x 1200 x 900 (L x W x D)" if parts == 3 else "2400 x 1200 (L x W)"
    if not s:
        raise NotationError("empty cell")
    m = _SIZE_RE.match(s)
    if not m:
        raise NotationError(f"{_quote(text)} is not a size; expected e.g. {expected}")
    nums = [m.group(k) for k in "abc" if m.group(k) is not None]
    if len(nums) != parts:
        raise NotationError(f"{_quote(text)}: {len(nums)} figures; expected {parts}, e.g. {expected}")
    units = [m.group(f"u{i}") for i in (1, 2, 3)][:parts]
    last = next((u for u in reversed(units) if u), None)
    out = tuple(_length(n, u or last, scale, text) for n, u in zip(nums, units))
    if any(v <= 0 for v in out):
        raise NotationError(f"{_quote(text)}: every dimension must be greater than 0")
    return out


_STEEL_RE = re.compile(r"^(?:B\s*)?(?P<f>[0-9]{3})\s*[ABC]?$", re.ASCII)


@_memo
@_hinted
def parse_steel_grade(text: Any) -> float:
    """fyk [MPa] from ``500``, ``500 MPa``, ``B500B``, ``B500``, ``500B``, or ``H`` (BS 8666 grade letter
    H = grades B500A, B500B, B500C, fyk 500 MPa; from memory of BS 8666/BS 4449)."""
    if isinstance(text, str):
        s = _cell_text(text, "a steel grade").upper()
        if s == "H":
            return 500.0
        m = _STEEL_RE.match(s.replace(" ", ""))
        if m:
            return float(m.group("f"))
    try:
        return parse_number(text, "stress", 1.0)
    except NotationError:
        raise NotationError(f"{_quote(text)} is not a steel grade; expected e.g. 500, B500B or H") from None


def is_blank(value: Any) -> bool:
    """An empty cell or one of the usual placeholders ('-', '—', 'n/a', 'none', 'nil')."""
    if value is None:
        return True
    if isinstance(value, float):
        return value != value
    if isinstance(value, str):
        t = value.strip()
        if len(t) > 6:                      # the placeholders are short
            return False
        if t.isascii():
            return t.lower() in BLANK_TEXT
        return _is_blank_text(t)
    try:
        return bool(pd.isna(value))
    except (TypeError, ValueError):
        return False


@functools.lru_cache(maxsize=4096)
def _is_blank_text(value: str) -> bool:
    s = clean_text(value).lower()
    return s in BLANK_TEXT


BLANK_TEXT = frozenset({"", "-", "--", "---", "n/a", "na", "none", "nil", "n.a."})


# --------------------------------------------------------------------------------------------
# Horizontal links of a single-pile cap (the splitting steel)
# --------------------------------------------------------------------------------------------

#: words a link cell may carry around the bar notation; they say what the bars are, not how many
_LINK_WORDS_RE = re.compile(
    r"\b(?:CLOSED|HORIZ(?:ONTAL)?\.?|BURSTING|SPLITTING|LINKS?|LKS?\.?|HOOPS?|SETS?|OF|IN|AS)\b", re.ASCII)
_LEGS_RE = re.compile(r"\bLEGS?\b|\bLEGGED\b", re.ASCII)


@_memo
@_hinted
def parse_links(text: Any) -> BarSpec:
    """Horizontal links round a single-pile cap, in the bar notation of :func:`parse_bars`:
    a count form is a number of closed link sets (``4H16``, ``4 no. H16 links``, ``4 sets H16``),
    a spacing form their vertical centres (``H12@150``, ``H12 links @ 150``, ``H12-150 c/c``).
    Words that only say what the bars are (links, closed, horizontal, bursting, sets, hoops) are
    ignored. A stated number of legs is refused: capcheck counts two legs per closed link in each
    plan direction (DEVELOPERS.md), so a cell that says otherwise is not guessed at.
    """
    if isinstance(text, str):
        s = _cell_text(text, "a link notation").upper()
        if _LEGS_RE.search(s):
            raise NotationError(f"{_quote(text)}: give the links as sets of closed links (e.g. 4H16 or "
                                "H12@150); capcheck counts two legs of each closed link in each direction")
        core = " ".join(_LINK_WORDS_RE.sub(" ", s).split())
        if not core:
            raise NotationError(f"{_quote(text)} is not a link notation; expected e.g. H12@150 or 4H16")
        try:
            return parse_bars(core)
        except NotationError as exc:
            raise NotationError(str(exc).replace(_quote(core), _quote(text), 1)) from None
    return parse_bars(text)
