"""One field catalogue (checker/model.py, CapRecord -> model.FIELDS): the lists restated elsewhere
must agree with it; this test fails when one drifts (issue 12)."""

import conftest

from checker.ingest.frame import CASE_FIELDS
from checker.ingest.headings import LOAD_FIELDS, SCHEDULE_FIELDS
from checker.model import FIELDS, FRAME_COLUMNS
from checker.report.preview import PREVIEW_FIELDS
from checker.ruleset import catalogue
from checker.ruleset.derive import INPUT_QUANTITIES

#: ingest fields that are not frame columns: combined forms the frame builder splits, and the load
#: case fields that live in Schedule.cases
COMBINED = {"size", "plan", "column"}


def test_derive_inputs_are_numeric_fields_with_the_catalogue_unit():
    for name in INPUT_QUANTITIES:
        assert name in FIELDS and FIELDS[name].kind in ("float", "int"), name
        unit = catalogue.FIELDS[name][0] if name in catalogue.FIELDS else catalogue.QUANTITIES[name][0]
        assert unit.replace("count", "") == FIELDS[name].unit.replace("count", ""), name


def test_every_numeric_frame_field_is_a_quantity():
    skip = {"n_links", "phi_links", "s_links"}       # the single-pile fields, named in catalogue.FIELDS
    for name, spec in FIELDS.items():
        if spec.kind == "float" and name not in skip:
            assert name in catalogue.FIELDS or name in catalogue.QUANTITIES or name in INPUT_QUANTITIES, name


def test_heading_vocabulary_names_only_catalogue_fields():
    for name in SCHEDULE_FIELDS:
        assert name in FIELDS or name in COMBINED or name in CASE_FIELDS or name.endswith("_working"), name
    for name in LOAD_FIELDS:
        assert name in SCHEDULE_FIELDS


def test_preview_units_agree_with_the_catalogue():
    for name, unit, scale in PREVIEW_FIELDS:
        spec = FIELDS[name]
        if spec.show_unit and spec.show_unit != "count":      # the preview leaves counts unlabelled
            assert (unit, scale) == (spec.show_unit, spec.show_scale), name


def test_test_helpers_use_the_frame_columns():
    assert set(conftest.CANONICAL_COLUMNS) <= set(FRAME_COLUMNS)
