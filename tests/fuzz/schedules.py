"""Invented pile cap schedules for the property tests (hypothesis strategies) and hostile cell values.

``valid_rows(n)`` draws schedule rows (headings as a consultant writes them, values in the input
units of the brief) that every reader must accept: pile groups of 1 to 6, BS 8666 bar sizes, EN
1992-1-1 Table 3.1 classes, cover and bars that fit in the depth. ``HOSTILE_CELLS`` and
``any_cell`` are what a hostile or careless document can put in a cell.

Not collected by pytest (no ``test_`` prefix); imported as ``fuzz.schedules``.
"""

from __future__ import annotations

import datetime as dt
import decimal
import fractions
import math

import numpy as np
import pandas as pd
from hypothesis import strategies as st

from checker.model import CONCRETE_CLASSES, STANDARD_BAR_SIZES

#: field -> the heading the generated schedules use for it
HEADINGS: dict[str, str] = {
    "mark": "Mark", "piles": "Piles", "pile_dia": "Pile dia (mm)", "pile_spacing": "Spacing (mm)",
    "cap_length": "L (mm)", "cap_width": "W (mm)", "cap_depth": "Depth (mm)", "column": "Column",
    "n_ed": "NEd (kN)", "mx_ed": "Mx (kNm)", "my_ed": "My (kNm)", "concrete": "Concrete",
    "fyk": "fyk (MPa)", "cover": "Cover (mm)", "exposure": "Exposure", "bars_x": "Bars X",
    "bars_y": "Bars Y", "embedment": "Embedment (mm)", "pile_capacity": "Pile capacity (kN)",
    "bar_ends": "Bar ends", "stated_pile_load": "Stated pile load (kN)",
    "stated_tie_x": "Stated tie X (kN)", "stated_tie_y": "Stated tie Y (kN)",
    "stated_as_x": "As req X (mm2)", "stated_as_y": "As req Y (mm2)", "pile_type": "Pile type",
}

REQUIRED = ("mark", "piles", "pile_dia", "cap_length", "cap_width", "cap_depth", "column", "n_ed",
            "concrete", "cover", "bars_x", "bars_y")

#: optional fields without a documented default (fyk defaults to 500 MPa, moments to 0)
OPTIONAL_NO_DEFAULT = ("embedment", "pile_capacity", "exposure", "bar_ends", "stated_pile_load",
                       "stated_tie_x", "stated_tie_y", "stated_as_x", "stated_as_y")

EXPOSURES = ("XC1", "XC2", "XC3", "XC4", "XD1", "XS1", "XS2", "XS3")
_BAR_SIZES = [d for d in STANDARD_BAR_SIZES if d >= 10]


def _num(draw, value: float):
    """A figure as a spreadsheet or a CSV might hold it: int, float, or text (maybe with a unit)."""
    form = draw(st.sampled_from(("int", "float", "str", "str_unit")))
    if form == "int" and float(value).is_integer():
        return int(value)
    if form in ("int", "float"):
        return float(value)
    text = f"{value:g}" if not float(value).is_integer() else str(int(value))
    return text if form == "str" else f" {text} "


@st.composite
def valid_row(draw, mark: str) -> dict[str, object]:
    piles = draw(st.integers(1, 6))
    dia = draw(st.sampled_from((300, 450, 600, 750, 900)))
    spacing = dia * draw(st.sampled_from((1.0, 2.0, 2.5, 3.0, 3.5)))
    length = draw(st.integers(500, 8000))
    width = draw(st.integers(500, 8000))
    depth = draw(st.integers(400, 2500))
    cover = draw(st.sampled_from((40, 50, 75, 100)))
    phi_x, phi_y = draw(st.sampled_from(_BAR_SIZES)), draw(st.sampled_from(_BAR_SIZES))

    def bars(phi: int, across: int) -> str:
        # a count that fits across the cap at the least clear spacing of 20 mm (a plausible cap:
        # checker.ingest.plausible)
        most = max(2, min(40, (across - 2 * cover + 20) // (phi + 20)))
        if draw(st.booleans()):
            return f"{draw(st.integers(2, most))}H{phi}"
        return f"H{phi}@{draw(st.sampled_from((100, 125, 150, 200, 250, 300)))}"

    col = draw(st.sampled_from(("rect", "square", "round")))
    cx, cy = draw(st.integers(200, min(1200, length))), draw(st.integers(200, min(1200, width)))
    if col != "rect":
        cx = min(cx, width)
    column = {"rect": f"{cx}x{cy}", "square": str(cx), "round": f"D{cx}"}[col]
    row: dict[str, object] = {
        "mark": mark, "piles": piles, "pile_dia": _num(draw, dia),
        "pile_spacing": _num(draw, spacing) if piles >= 2 or draw(st.booleans()) else None,
        "cap_length": _num(draw, length), "cap_width": _num(draw, width), "cap_depth": _num(draw, depth),
        "column": column, "n_ed": _num(draw, draw(st.integers(100, 40_000))),
        "mx_ed": draw(st.one_of(st.none(), st.integers(-800, 800))),
        "my_ed": draw(st.one_of(st.none(), st.integers(-800, 800))),
        "concrete": draw(st.sampled_from(sorted(CONCRETE_CLASSES))),
        "fyk": draw(st.one_of(st.none(), st.sampled_from((400, 450, 500, 550, 600)))),
        "cover": _num(draw, cover), "exposure": draw(st.one_of(st.none(), st.sampled_from(EXPOSURES))),
        "bars_x": bars(phi_x, width), "bars_y": bars(phi_y, length),
        "embedment": draw(st.one_of(st.none(), st.integers(0, 300))),
        "pile_capacity": draw(st.one_of(st.none(), st.integers(100, 12_000))),
        "bar_ends": draw(st.one_of(st.none(), st.sampled_from(("straight", "bent", "hooked")))),
        "stated_pile_load": draw(st.one_of(st.none(), st.integers(0, 12_000))),
        "stated_tie_x": draw(st.one_of(st.none(), st.integers(0, 8_000))),
        "stated_tie_y": draw(st.one_of(st.none(), st.integers(0, 8_000))),
        "stated_as_x": draw(st.one_of(st.none(), st.integers(0, 30_000))),
        "stated_as_y": draw(st.one_of(st.none(), st.integers(0, 30_000))),
        "pile_type": draw(st.one_of(st.none(), st.sampled_from(("uncased bored", "CFA", "driven precast")))),
    }
    return row


@st.composite
def valid_rows(draw, min_size: int = 1, max_size: int = 6) -> list[dict[str, object]]:
    n = draw(st.integers(min_size, max_size))
    return [draw(valid_row(f"PC{i + 1}")) for i in range(n)]


def frame_of(rows: list[dict[str, object]], fields: tuple[str, ...] | None = None):
    """A DataFrame with the schedule headings (object cells, as a sheet would hold them)."""
    fields = tuple(HEADINGS) if fields is None else fields
    return pd.DataFrame({HEADINGS[f]: pd.Series([r.get(f) for r in rows], dtype=object) for f in fields})


# ---- hostile cells -------------------------------------------------------------------------------

HOSTILE_CELLS: tuple[object, ...] = (
    "", " ", "-", "n/a", "\u00a0", "\u200b", "\ufeff1200",
    "\uff11\uff12\uff10\uff10",              # fullwidth 1200
    "\u0661\u0662\u0660\u0660",              # Arabic-Indic 1200
    "\u09e7\u09e8\u09e6\u09e6",              # Bengali 1200
    "1\u00a0200", "1 200", "1,5", "1,500", "1.5e3", "1e999", "-1e999", "9" * 400, "0x1F", "1_000",
    "\u2212600", "600\u00d7400", "600 \u00d7 400", "600\u2715400", "600x400x300", "D\u0036\u0030\u0030",
    "12\u041d25",                            # Cyrillic capital EN for H
    "12H25\u0301", "H25@\uff11\uff15\uff10", "\uff11\uff12H25", "C32\u204440", "C\u0033\u0032/40",
    "nan", "NaN", "inf", "-inf", "Infinity", "None", "True", "1e308", "1e-320", "0", "-0", "+600",
    "600 mm", "0.6 m", "60 cm", "1.5 MN", "600mm\u00b2", "\u00bd", "\u00b2", "\u2167",
    "=1+1", "=HYPERLINK(\"http://example.invalid\")", "@SUM(A1)", "<script>", "\x00", "\x1b[31m",
    "a" * 5000, "\U0001f600",
    0, -1, 1, 10 ** 30, 10 ** 400, -(10 ** 400), 2 ** 63, 2 ** 64 + 1,
    0.0, -0.0, 1e308, 1.7976931348623157e308, 5e-324, float("nan"), float("inf"), float("-inf"),
    np.int64(600), np.float32(600.5), np.float16(600), np.uint8(200), np.nan, None, True, False, np.bool_(True),
    decimal.Decimal("600"), decimal.Decimal("NaN"), decimal.Decimal("-Infinity"), fractions.Fraction(3, 2),
    pd.NA, pd.NaT, pd.Timestamp("2024-01-01"), np.datetime64("2024-01-01"), pd.Timedelta("1D"),
    dt.datetime(2024, 1, 2, 3, 4, 5), dt.date(2024, 1, 2), dt.time(12, 0), dt.timedelta(days=2),
    b"600", bytearray(b"12H25"), complex(1, 2), [600], {"a": 1}, (600, 400),
)

_ALPHABET = st.characters(codec="utf-8", exclude_categories=("Cs",))
NOTATION_ALPHABET = ("0123456789 HTØxX×@-/.,:;+&()BCcmMkNnodaLyer\u00a0\u2212\u2009\uff10\uff11\uff12"
                     "\u0661\u0662\u0660\u041d\u00b2\u202f")


def any_cell() -> st.SearchStrategy:
    """Every kind of cell value a DataFrame or sheet may hold."""
    return st.one_of(
        st.sampled_from(HOSTILE_CELLS),
        st.text(alphabet=_ALPHABET, max_size=40),
        st.text(alphabet=NOTATION_ALPHABET, max_size=24),
        st.integers(min_value=-(10 ** 40), max_value=10 ** 40),
        st.floats(allow_nan=True, allow_infinity=True),
        st.none(), st.booleans(),
        st.datetimes(min_value=dt.datetime(1900, 1, 1), max_value=dt.datetime(2100, 1, 1)),
    )


def mutate_text(draw, text: str) -> str:
    """A valid cell text with one lookalike or separator change (what copy-paste does to a cell)."""
    swaps = {"x": "\u00d7", "X": "\u2715", " ": "\u00a0", ".": ",", "-": "\u2212", "0": "\uff10",
             "1": "\u0661", "H": "\u041d", "C": "\u0421", "/": "\u2044", "@": " at "}
    chars = list(text)
    if not chars:
        return text
    i = draw(st.integers(0, len(chars) - 1))
    chars[i] = swaps.get(chars[i], chars[i] + draw(st.sampled_from(("\u200b", "\u00a0", "", "  "))))
    return "".join(chars)


def is_finite_number(v: object) -> bool:
    try:
        return math.isfinite(float(v))  # type: ignore[arg-type]
    except (TypeError, ValueError, OverflowError):
        return False
