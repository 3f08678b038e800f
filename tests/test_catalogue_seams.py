"""One field catalogue (checker/model.py, CapRecord -> model.FIELDS): the other lists are generated
from it (issue 12, item 1). These tests pin what the generation must keep: the lists the modules use
are the model's, and the one scale table gives the factors the code used to restate."""

import conftest

from checker import units
from checker.ingest import notation, plausible
from checker.ingest.frame import CASE_FIELDS
from checker.ingest.headings import LOAD_FIELDS, SCHEDULE_FIELDS
from checker.model import FIELDS, FRAME_COLUMNS, FYK_DEFAULT, HEADING_FIELDS, INPUT_QUANTITIES, CapRecord
from checker.report.preview import PREVIEW_FIELDS
from checker.revision import INPUT_FIELDS
from checker.ruleset import catalogue, derive, templates

#: ingest fields that are not frame columns: combined forms the frame builder splits
COMBINED = {"size", "plan", "column"}


def test_derive_takes_its_inputs_from_the_model():
    assert derive.INPUT_QUANTITIES is INPUT_QUANTITIES
    assert INPUT_QUANTITIES == tuple(n for n, s in FIELDS.items() if s.kind in ("float", "int"))


def test_rule_fields_are_the_models_numeric_fields_with_its_unit_and_meaning():
    numeric = {n for n, s in FIELDS.items() if s.kind in ("float", "int")}
    assert set(catalogue.FIELDS) == numeric - set(catalogue.DERIVED) == numeric - {"fck"}
    for name, (unit, meaning) in catalogue.FIELDS.items():
        assert (unit, meaning) == (FIELDS[name].unit, FIELDS[name].meaning), name
    for name in INPUT_QUANTITIES:
        assert catalogue.QUANTITIES[name][0].replace("count", "") == FIELDS[name].unit.replace("count", ""), name


def test_heading_vocabulary_is_the_model_plus_combined_and_case_fields():
    assert {k: SCHEDULE_FIELDS[k] for k in HEADING_FIELDS} == HEADING_FIELDS
    for name in SCHEDULE_FIELDS:
        assert name in FIELDS or name in COMBINED or name in CASE_FIELDS or name.endswith("_working"), name
    for name in LOAD_FIELDS:
        assert name in SCHEDULE_FIELDS
    # the ones read through another field's notation are not headings of their own
    for name in ("nx", "phi_x", "sx", "ny", "phi_y", "sy", "n_links", "phi_links", "s_links", "column_round"):
        assert name not in SCHEDULE_FIELDS


def test_preview_units_are_the_catalogues():
    for name, unit, scale in PREVIEW_FIELDS:
        spec = FIELDS[name]
        assert (unit, scale) == (spec.show_unit if spec.show_unit != "count" else "", spec.show_scale), name


def test_revision_inputs_are_the_catalogues_heading_fields_with_its_units():
    # the fields compared between revisions, in the catalogue's order; the capacity basis and the stated
    # effective depth are compared since the sheet records which fields it compares
    assert [name for name, _, _ in INPUT_FIELDS] == [
        "piles", "pile_dia", "pile_spacing", "cap_length", "cap_width", "cap_depth", "column", "n_ed", "mx_ed",
        "my_ed", "concrete", "fyk", "cover", "exposure", "bars_x", "bars_y", "links", "embedment", "pile_capacity",
        "capacity_basis", "stated_pile_load", "stated_tie_x", "stated_tie_y", "stated_as_x", "stated_as_y",
        "stated_d", "pile_type", "bar_ends", "method"]
    for name, unit, div in INPUT_FIELDS:
        spec = FIELDS["column_x" if name == "column" else name]
        assert unit == (spec.show_unit if spec.show_unit != "count" else ""), name
        assert div == units.TO_INTERNAL.get(unit, 1.0) and div * spec.show_scale == 1.0, name


def test_test_helpers_use_the_frame_columns():
    assert set(conftest.CANONICAL_COLUMNS) <= set(FRAME_COLUMNS)
    assert list(conftest.CANONICAL_COLUMNS) == [c for c in FRAME_COLUMNS if c in conftest.CANONICAL_COLUMNS]


def test_one_scale_table():
    assert units.FROM_INTERNAL["kN"] == 1e-3 and units.FROM_INTERNAL["kNm"] == 1e-6
    assert units.FROM_INTERNAL["MN"] == 1e-6 and units.FROM_INTERNAL["m"] == 1e-3
    assert units.TO_INTERNAL["kN"] == 1e3 and units.TO_INTERNAL["MNm"] == 1e9 and units.TO_INTERNAL["m²"] == 1e6
    assert templates.UNIT_SCALE == {"kN": 1e-3, "kNm": 1e-6, "MN": 1e-6, "m": 1e-3, "%": 100.0, "": 1.0}
    assert catalogue.OUTPUT_SCALE == {"kN": 1e-3, "kNm": 1e-6, "%": 100.0}
    assert notation.UNITS["kn"] == ("force", 1e3) and notation.UNITS["n/mm2"] == ("stress", 1.0)
    assert notation.UNITS["nos"] == ("count", 1.0) and notation.UNITS["cm2"] == ("area", 100.0)
    assert notation.DEFAULT_SCALE == {"length": 1.0, "force": 1e3, "moment": 1e6, "stress": 1.0, "area": 1.0,
                                      "count": 1.0}
    assert plausible._UNITS_OF["moment"] == (("kNm", 1e6), ("MNm", 1e9))
    for name, spec in FIELDS.items():
        if spec.unit not in ("", "count"):
            kind = units.KIND_OF_UNIT[spec.unit]
            assert units.UNITS[spec.unit] == (kind, 1.0), name
            assert spec.show_scale == units.FROM_INTERNAL[spec.show_unit], name


def test_one_fyk_default():
    assert CapRecord.model_fields["fyk"].default == FYK_DEFAULT == FIELDS["fyk"].default == 500.0
