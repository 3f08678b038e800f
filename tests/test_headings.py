"""Heading text -> canonical field and unit factor; user mapping files; unknown headings reported."""

from __future__ import annotations

import re

import pytest

from checker.ingest.errors import IngestError
from checker.ingest.headings import (
    ALIASES,
    SCHEDULE_FIELDS,
    heading_key,
    load_mapping,
    mapping_from_dict,
    match_heading,
    match_headings,
)

# heading as a consultant writes it -> (field, factor to internal units)
VARIANTS = [
    ("Pile dia (mm)", "pile_dia", 1.0),
    ("Ø pile", "pile_dia", 1.0),
    ("pile diameter", "pile_dia", 1.0),
    ("Pile Size", "pile_dia", 1.0),
    ("PILE Ø [mm]", "pile_dia", 1.0),
    ("Pile dia (m)", "pile_dia", 1000.0),
    ("NEd (kN)", "n_ed", 1e3),
    ("N_Ed [MN]", "n_ed", 1e6),
    ("NEd, kN", "n_ed", 1e3),
    ("NEd", "n_ed", 1e3),
    ("Axial load ULS (kN)", "n_ed", 1e3),
    ("ULS axial load", "n_ed", 1e3),
    ("Cap depth h (mm)", "cap_depth", 1.0),
    ("Depth", "cap_depth", 1.0),
    ("Depth (m)", "cap_depth", 1000.0),
    ("Thickness", "cap_depth", 1.0),
    ("No. of piles", "piles", 1.0),
    ("Number of piles", "piles", 1.0),
    ("Piles", "piles", 1.0),
    ("Piles (no.)", "piles", 1.0),
    ("Cap ref", "mark", 1.0),
    ("Mark", "mark", 1.0),
    ("Pile cap", "mark", 1.0),
    ("Type", "mark", 1.0),
    ("Spacing", "pile_spacing", 1.0),
    ("Pile centres", "pile_spacing", 1.0),
    ("Pile c/c (mm)", "pile_spacing", 1.0),
    ("Length L", "cap_length", 1.0),
    ("Width B", "cap_width", 1.0),
    ("L x W x D", "size", 1.0),
    ("Size (L x W x D)", "size", 1.0),
    ("L×W×D (mm)", "size", 1.0),
    ("Column", "column", 1.0),
    ("Col size", "column", 1.0),
    ("Column (cx x cy)", "column", 1.0),
    ("Concrete", "concrete", 1.0),
    ("Grade", "concrete", 1.0),
    ("Concrete class", "concrete", 1.0),
    ("fyk", "fyk", 1.0),
    ("fyk (N/mm²)", "fyk", 1.0),
    ("Cover", "cover", 1.0),
    ("Nominal cover (mm)", "cover", 1.0),
    ("Bottom bars X", "bars_x", 1.0),
    ("Bars X", "bars_x", 1.0),
    ("B1 bars", "bars_x", 1.0),
    ("Bottom reinforcement (x)", "bars_x", 1.0),
    ("X bars", "bars_x", 1.0),
    ("Bars in Y direction", "bars_y", 1.0),
    ("B2 bars", "bars_y", 1.0),
    ("Mx", "mx_ed", 1e6),
    ("MEd,x (kNm)", "mx_ed", 1e6),
    ("Mx (MNm)", "mx_ed", 1e9),
    ("My (kNm)", "my_ed", 1e6),
    ("Exposure", "exposure", 1.0),
    ("Exposure class", "exposure", 1.0),
    ("Embedment", "embedment", 1.0),
    ("Pile embedment (mm)", "embedment", 1.0),
    ("Pile capacity", "pile_capacity", 1e3),
    ("Pile capacity ULS (kN)", "pile_capacity", 1e3),
    ("Pile load", "stated_pile_load", 1e3),
    ("Max. pile reaction (kN)", "stated_pile_load", 1e3),
    ("Tie force X", "stated_tie_x", 1e3),
    ("Tension Y (kN)", "stated_tie_y", 1e3),
    ("As req X", "stated_as_x", 1.0),
    ("As,req Y (mm²)", "stated_as_y", 1.0),
    ("Pile type", "pile_type", 1.0),
    ("Bar ends", "bar_ends", 1.0),
    ("Design method", "method", 1.0),
    ("cap_depth", "cap_depth", 1.0),       # canonical names map too
    ("stated_tie_x", "stated_tie_x", 1e3),
]


@pytest.mark.parametrize("heading,field,scale", VARIANTS)
def test_heading_variants(heading, field, scale):
    got, _unit, got_scale, how, _note = match_heading(heading)
    assert (got, got_scale) == (field, scale), how
    assert how


@pytest.mark.parametrize("heading", ["Remarks", "Drawing no.", "Rev", "SLS pile load (kN)",
                                     "Pile working load (kN)", "Load", "", "Bars", "Dia"])
def test_unknown_headings_are_not_guessed(heading):
    assert match_heading(heading)[0] is None


def test_heading_key_ignores_case_spacing_punctuation_order():
    assert heading_key("Pile  DIA.")[0] == heading_key("dia, pile")[0] == heading_key("Ø pile")[0]
    assert heading_key("Pile dia (mm)")[1] == "mm"
    assert heading_key("N_Ed [MN]") == (frozenset({"n", "ed"}), "mn")


def test_unit_must_fit_the_field():
    field, _unit, _scale, _how, note = match_heading("Cap depth (kN)")
    assert field is None and "does not fit" in note


def test_service_loads_are_read_as_sls_cases_never_as_uls():
    """Issue 11: a service load heading is an SLS load case of its own (n_sls), never n_ed."""
    report = match_headings(["Mark", "Axial load SLS (kN)", "Column load (kN)"])
    assert [m.field for m in report.matches] == ["mark", "n_sls", "n_ed"]
    assert any("SLS loads are checked as load cases of their own" in n for n in report.notes)
    assert any("read as the ULS value n_ed" in n for n in report.notes)   # 'Column load' has no ULS word


@pytest.mark.parametrize("heading,field", [
    ("Load case", "case"), ("Case", "case"), ("Combination", "case"), ("Comb.", "case"), ("Kind", "case_kind"),
    ("SLS N (kN)", "n_sls"), ("Service load (kN)", "n_sls"), ("N_k (kN)", "n_sls"),
    ("Characteristic load (kN)", "n_sls"), ("Working load (kN)", "n_sls"), ("Mx SLS (kNm)", "mx_sls"),
    ("Pile SWL (kN)", "pile_capacity_working"), ("Safe working load (kN)", "pile_capacity_working"),
    ("Allowable pile load (kN)", "pile_capacity_working"), ("Working pile capacity (kN)", "pile_capacity_working"),
    ("Pile capacity SLS (kN)", "pile_capacity_working"), ("Pile capacity (kN)", "pile_capacity"),
    ("Capacity basis", "capacity_basis"),
])
def test_load_case_and_capacity_basis_headings(heading, field):
    assert match_heading(heading)[0] == field


def test_match_headings_report():
    report = match_headings(["Mark", "Piles", "Remarks", "Depth", "Cap depth h (mm)", None, ""])
    assert [(m.heading, m.field, m.column) for m in report.matches] == [
        ("Mark", "mark", 0), ("Piles", "piles", 1), ("Depth", "cap_depth", 3)]
    assert report.unmapped == ["Remarks", "Cap depth h (mm)"]          # the second depth is not used
    assert any("already read from 'Depth'" in n for n in report.notes)


def test_alias_table_has_no_conflicts_and_covers_every_field():
    # building the table raises on a conflict; every field is reachable by its own name
    for f in SCHEDULE_FIELDS:
        assert ALIASES["schedule"][heading_key(f.replace("_", " "))[0]] == f


def test_coordinates_vocabulary():
    report = match_headings(["Mark", "x (m)", "y (m)"], vocabulary="coords")
    assert [(m.field, m.scale) for m in report.matches] == [("mark", 1.0), ("x", 1000.0), ("y", 1000.0)]


# ---------------------------------------------------------------------------------------------
# Mapping files
# ---------------------------------------------------------------------------------------------


def _write(tmp_path, text):
    p = tmp_path / "headings.toml"
    p.write_text(text, encoding="utf-8")
    return p


def test_mapping_file_overrides_and_extends(tmp_path):
    p = _write(tmp_path, """
[headings]
"Diam. (m)" = "pile_dia [m]"
"Qty" = "piles"
"Depth" = "cap_width"
"Remarks" = "ignore"
"Axial SLS" = "n_ed [MN]"
""")
    hmap = load_mapping(p)
    report = match_headings(["Diam. (m)", "Qty", "Depth", "Remarks", "Axial SLS", "Mark"], hmap)
    got = {m.heading: (m.field, m.scale, m.how) for m in report.matches}
    assert got["Diam. (m)"] == ("pile_dia", 1000.0, "mapping file")
    assert got["Qty"] == ("piles", 1.0, "mapping file")
    assert got["Depth"] == ("cap_width", 1.0, "mapping file")        # overrides the built-in reading
    assert got["Axial SLS"] == ("n_ed", 1e6, "mapping file")         # the user says it is ULS
    assert got["Mark"][0] == "mark"
    assert report.ignored == ["Remarks"] and report.unmapped == []


def test_mapping_matches_headings_loosely(tmp_path):
    hmap = mapping_from_dict({"PILE QTY.": "piles"})
    assert match_headings(["Pile qty"], hmap).matches[0].field == "piles"


@pytest.mark.parametrize("text,fragment", [
    ('[headings]\n"A" = "colour"\n', "not a field"),
    ('[headings]\n"A" = "pile_dia [furlong]"\n', "unknown unit"),
    ('[headings]\n"A" = "pile_dia [kN]"\n', "does not fit"),
    ('[headings]\n"A" = 3\n', "expected a field name"),
    ('[other]\n"A" = "mark"\n', "no [headings] table"),
    ('[headings\n', "not a valid TOML"),
])
def test_bad_mapping_files(tmp_path, text, fragment):
    p = _write(tmp_path, text)
    with pytest.raises(IngestError, match=re.escape(fragment)) as exc:
        load_mapping(p)
    assert str(p) in str(exc.value)


def test_missing_mapping_file(tmp_path):
    with pytest.raises(IngestError, match="not found"):
        load_mapping(tmp_path / "nope.toml")


@pytest.mark.parametrize("heading, field", [
    ("Cap size (mm) L", "cap_length"), ("Cap size (mm) W", "cap_width"), ("Cap size (mm) D", "cap_depth"),
    ("Cap size B", "cap_width"), ("Cap size H", "cap_depth"),
])
def test_group_heading_over_short_sub_headings(heading, field):
    """A group heading 'Cap size (mm)' over L / W / D columns, joined as a PDF table gives it."""
    assert match_heading(heading)[0] == field


@pytest.mark.parametrize("heading, field", [
    ("Pile spacin", "pile_spacing"),        # cut where the cell ended
    ("Pile centr", "pile_spacing"),
    ("Pile capac", "pile_capacity"),
    ("Pile embedm", "embedment"),
    ("Exposure cla", "exposure"),
])
def test_a_heading_cut_off_at_its_last_word_is_read_with_a_note(heading, field):
    """A column too narrow for its heading (a workbook printed to PDF) cuts the last word short; the one
    completion that makes a known heading is taken, and the note says so (issue 11, no silent loss)."""
    report = match_headings(["Mark", heading])
    assert report.by_field[field].how == "heading cut off"
    assert any("looks cut off" in n and heading in n for n in report.notes)


@pytest.mark.parametrize("heading", [
    "Bottom bars",            # whole words, x or y not said: never guessed
    "Pile sp (mm)",           # a unit follows: the last word is whole, not cut
    "Pile ca",                # two letters: too short to complete
    "Remar",                  # no completion makes a known heading
])
def test_a_heading_is_not_completed_when_unsure(heading):
    report = match_headings(["Mark", heading])
    assert set(report.by_field) == {"mark"} and report.unmapped == [heading]


def test_cut_off_completion_is_never_used_to_find_the_heading_row():
    """count_known (which row is the heading row) reads cells without completing them: a data cell
    such as 'Pile capac' must not make a row of figures look like headings."""
    assert match_heading("Pile capac")[0] is None
    assert match_heading("Pile capac", cut_off=True)[0] == "pile_capacity"


@pytest.mark.parametrize("heading", ["Pile cap'y (kN)", "Pile capcty", "Cap'y"])
def test_capacity_written_abbreviated_is_read(heading):
    """'Cap'y' is the usual short form of capacity in a schedule's heading (common practice)."""
    assert match_heading(heading)[0] == "pile_capacity"
