"""Cell parsers: bar notation (BS 8666), column sizes, concrete classes (EN 1992-1-1 Table 3.1),
combined sizes and numbers. Every bad cell gives a NotationError that quotes it."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from checker.ingest.notation import (
    BarSpec,
    ColumnSize,
    NotationError,
    bars_from_spacing,
    parse_bars,
    parse_column,
    parse_concrete,
    parse_number,
    parse_quantity,
    parse_size,
    parse_steel_grade,
)
from checker.model import CONCRETE_CLASSES, STANDARD_BAR_SIZES

# ---------------------------------------------------------------------------------------------
# Bar notation
# ---------------------------------------------------------------------------------------------

GOOD_BARS = [
    ("10H25", BarSpec(10, 25, None)),
    ("10 no. H25", BarSpec(10, 25, None)),
    ("10No H25", BarSpec(10, 25, None)),
    ("10 nr H25", BarSpec(10, 25, None)),
    ("10T25", BarSpec(10, 25, None)),
    ("10Ø25", BarSpec(10, 25, None)),
    ("10ø25", BarSpec(10, 25, None)),
    ("10 dia 25", BarSpec(10, 25, None)),
    ("10 no. 25 dia", BarSpec(10, 25, None)),
    ("h25@150", BarSpec(None, 25, 150.0)),
    ("H25@150", BarSpec(None, 25, 150.0)),
    ("H25-150", BarSpec(None, 25, 150.0)),
    ("H25–150", BarSpec(None, 25, 150.0)),           # en dash
    ("H25 at 150 c/c", BarSpec(None, 25, 150.0)),
    ("H25 @ 150 B1", BarSpec(None, 25, 150.0)),
    ("H16@200 B2", BarSpec(None, 16, 200.0)),
    ("B1 H16@200", BarSpec(None, 16, 200.0)),
    ("H25 @ 150 T1", BarSpec(None, 25, 150.0)),
    ("T20-200", BarSpec(None, 20, 200.0)),
    ("H20 @ 175 crs", BarSpec(None, 20, 175.0)),
    ("Ø25@200", BarSpec(None, 25, 200.0)),
    ("8H25@150", BarSpec(8, 25, 150.0)),
    ("6H6", BarSpec(6, 6, None)),                    # parses; the bar-diameter rule flags it later
    ("4H50", BarSpec(4, 50, None)),
    ("\u00a012H32\u00a0", BarSpec(12, 32, None)),
]


@pytest.mark.parametrize("text,expected", GOOD_BARS)
def test_bar_notation_forms(text, expected):
    assert parse_bars(text) == expected


BAD_BARS = [
    ("2 layers 8H20", "out of scope"),
    ("8H20 2 layers", "out of scope"),
    ("4H25+4H20", "out of scope"),
    ("4H25 & 4H20", "out of scope"),
    ("4H25 and 4H20", "out of scope"),
    ("4H25, 4H20", "out of scope"),
    ("2H25 bundled", "bundled"),
    ("8 pairs H25", "bundled"),
    ("10H11", "11 mm is not a standard bar size"),
    ("H14@150", "14 mm is not a standard bar size"),
    ("10B25", "bar type 'B'"),
    ("R12@200", "bar type 'R'"),
    ("0H25", "at least 1"),
    ("H25@0", "greater than 0"),
    ("", "empty"),
    ("   ", "empty"),
    ("H25", "not a bar notation"),
    ("10H25 EW", "not a bar notation"),
    ("ten H25", "not a bar notation"),
]


@pytest.mark.parametrize("text,fragment", BAD_BARS)
def test_bar_notation_refused(text, fragment):
    with pytest.raises(NotationError) as exc:
        parse_bars(text)
    assert fragment in str(exc.value)
    if text.strip():
        assert repr(text) in str(exc.value) or text.strip() in str(exc.value)   # the cell is quoted


@pytest.mark.parametrize("dia", STANDARD_BAR_SIZES)
def test_every_bs8666_size_parses(dia):
    # BS 8666 bar sizes 6 ... 50 mm (from memory; see checker.model.STANDARD_BAR_SIZES)
    assert parse_bars(f"4H{dia}").dia == dia


def test_non_text_bar_cell():
    with pytest.raises(NotationError):
        parse_bars(25)
    with pytest.raises(NotationError, match="empty"):
        parse_bars(float("nan"))


def test_parsers_memoise_repeated_values():
    assert parse_bars("10H25") is parse_bars("10H25")
    assert parse_column("600x400") is parse_column("600x400")
    with pytest.raises(NotationError) as first:
        parse_bars("10H11")
    with pytest.raises(NotationError) as again:
        parse_bars("10H11")
    assert str(first.value) == str(again.value)


# ---------------------------------------------------------------------------------------------
# Bars from a spacing form
# ---------------------------------------------------------------------------------------------


def test_bars_from_spacing_formula():
    # n = floor((W - 2c - phi)/s) + 1: 2700 wide, cover 75, H25 at 150 -> floor(2525/150) + 1 = 17
    assert bars_from_spacing(2700, 75, 25, 150) == 17.0
    # exactly on a multiple: span 3000 - 150 - 50... choose W so that the span is 12 x 200 = 2400
    assert bars_from_spacing(2400 + 150 + 20, 75, 20, 200) == 13.0


def test_bars_from_spacing_vectorised_and_nan():
    w = np.array([2700.0, 900.0, np.nan, 300.0])
    n = bars_from_spacing(w, 75, 25, 150)
    assert n[0] == 17 and n[1] == 5 and np.isnan(n[2]) and n[3] == 1
    elementwise = [bars_from_spacing(x, 75, 25, 150) for x in w]
    np.testing.assert_array_equal(n, np.array(elementwise))


# ---------------------------------------------------------------------------------------------
# Column size
# ---------------------------------------------------------------------------------------------

COLUMNS = [
    ("600x400", ColumnSize(600, 400, False)),
    ("600 x 400", ColumnSize(600, 400, False)),
    ("600×400", ColumnSize(600, 400, False)),
    ("600X400", ColumnSize(600, 400, False)),
    ("600 x 400 mm", ColumnSize(600, 400, False)),
    ("0.6 x 0.4 m", ColumnSize(600, 400, False)),
    ("600", ColumnSize(600, 600, False)),
    ("600 sq", ColumnSize(600, 600, False)),
    ("D600", ColumnSize(600, 600, True)),
    ("Ø600", ColumnSize(600, 600, True)),
    ("600 dia", ColumnSize(600, 600, True)),
    ("600mm dia", ColumnSize(600, 600, True)),
    (600, ColumnSize(600, 600, False)),
]


@pytest.mark.parametrize("text,expected", COLUMNS)
def test_column_forms(text, expected):
    assert parse_column(text) == expected


def test_column_heading_scale():
    assert parse_column("0.6x0.4", 1000.0) == ColumnSize(600, 400, False)


@pytest.mark.parametrize("text", ["", "abc", "600x", "x400", "600x400x300", "-600", "0", "D"])
def test_column_refused(text):
    with pytest.raises(NotationError):
        parse_column(text)


# ---------------------------------------------------------------------------------------------
# Concrete class (EN 1992-1-1:2004 Table 3.1, plus the UK classes C28/35 and C32/40 of BS 8500)
# ---------------------------------------------------------------------------------------------

# EN 1992-1-1:2004 Table 3.1, fck and fck,cube of every class
TABLE_3_1 = ["C12/15", "C16/20", "C20/25", "C25/30", "C30/37", "C35/45", "C40/50", "C45/55", "C50/60",
             "C55/67", "C60/75", "C70/85", "C80/95", "C90/105"]


@pytest.mark.parametrize("name", TABLE_3_1 + ["C28/35", "C32/40"])
def test_every_class_accepted(name):
    cyl, cube = name[1:].split("/")
    got = parse_concrete(name)
    assert got.name == name and got.fck == float(cyl) and got.fck_cube == float(cube)
    assert CONCRETE_CLASSES[name] == (float(cyl), float(cube))


@pytest.mark.parametrize("text", ["C32/40", "c32/40", "C 32/40", "C32 / 40", "C32", "32/40", "RC32/40"])
def test_concrete_spellings(text):
    assert parse_concrete(text) == ("C32/40", 32.0, 40.0)


@pytest.mark.parametrize("text,fragment", [
    ("C33/41", "not a known strength class"),
    ("C32/45", "goes with cube strength 40"),
    ("C100/115", "not a known strength class"),
    ("40", "not a concrete class"),
    ("grade 40", "not a concrete class"),
    ("", "empty"),
])
def test_concrete_refused(text, fragment):
    with pytest.raises(NotationError, match=fragment):
        parse_concrete(text)


# ---------------------------------------------------------------------------------------------
# Combined sizes and numbers
# ---------------------------------------------------------------------------------------------


@pytest.mark.parametrize("text", ["2400 x 1200 x 900", "2400x1200x900", "2400×1200×900", "2400X1200X900",
                                  "2400 x 1200 x 900 mm", "2400mm x 1200mm x 900mm", "2.4 x 1.2 x 0.9 m"])
def test_combined_size(text):
    assert parse_size(text) == (2400.0, 1200.0, 900.0)


def test_plan_size_and_wrong_count():
    assert parse_size("2400 x 1200", 1.0, 2) == (2400.0, 1200.0)
    with pytest.raises(NotationError, match="2 figures; expected 3"):
        parse_size("2400 x 1200")
    with pytest.raises(NotationError):
        parse_size("2400 by 1200 by 900")


NUMBERS = [
    ("900", 900.0), ("900mm", 900.0), ("900 mm", 900.0), ("1,5", 1.5), ("0,500", 0.5),
    ("\u00a0900\u00a0", 900.0), ("\u2212450", -450.0), ("\u2212 450", -450.0), ("1\u00a0500", 1500.0),
    ("1 500", 1500.0), ("1e3", 1000.0), (".5", 0.5), ("0.9 m", 900.0), (75, 75.0), (2.5, 2.5),
]


@pytest.mark.parametrize("text,value", NUMBERS)
def test_numbers(text, value):
    assert parse_number(text, "length") == value


@pytest.mark.parametrize("text,fragment", [
    ("1,500", "ambiguous"), ("1,500,000", "ambiguous"), ("1.500,5", "not a number"), ("abc", "not a number"),
    ("900 kN", "not a length"), ("900 furlongs", "unknown unit"), ("", "empty"),
])
def test_numbers_refused(text, fragment):
    with pytest.raises(NotationError, match=fragment):
        parse_number(text, "length")


def test_number_units_to_internal():
    assert parse_number("1.5", "force", 1e3) == 1500.0            # a kN heading
    assert parse_number("1.5 MN", "force", 1e3) == 1.5e6          # the cell's unit wins
    assert parse_number("250 kNm", "moment", 1e6) == 250e6
    assert parse_quantity("12.5 kN").unit == "kn"


@pytest.mark.parametrize("text,value", [("500", 500.0), ("B500B", 500.0), ("B500", 500.0), ("500B", 500.0),
                                        ("H", 500.0), (460, 460.0), ("460 MPa", 460.0)])
def test_steel_grade(text, value):
    assert parse_steel_grade(text) == value


# ---------------------------------------------------------------------------------------------
# Any text: a value or a NotationError with a message, never another exception
# ---------------------------------------------------------------------------------------------

_alphabet = st.characters(codec="utf-8", exclude_categories=("Cs",))
_notationish = st.text(alphabet="0123456789 HTØxX@-/.,:;+&()BCcmMkNnoda\u00a0\u2212×", max_size=24)
_texts = st.one_of(st.text(alphabet=_alphabet, max_size=30), _notationish)

PARSERS = {
    "bars": parse_bars,
    "column": parse_column,
    "concrete": parse_concrete,
    "size": parse_size,
    "number": parse_number,
    "quantity": parse_quantity,
    "steel": parse_steel_grade,
}


@pytest.mark.parametrize("name", sorted(PARSERS))
@settings(max_examples=150, deadline=None)
@given(text=_texts)
def test_random_text_never_crashes(name, text):
    try:
        result = PARSERS[name](text)
    except ValueError as exc:            # NotationError is a ValueError
        assert isinstance(exc, NotationError)
        assert str(exc).strip()
    else:
        assert result is not None
        if isinstance(result, float):
            assert not math.isnan(result)
