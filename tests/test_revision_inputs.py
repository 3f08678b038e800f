"""Inputs compared between revisions: the designer's effective depth and the pile capacity basis are
compared (a change to either changes the re-check), the sheet records which fields it compared, and a
sheet written before that record is not compared on the fields it could not hold."""

from __future__ import annotations

from pathlib import Path

import openpyxl
import pandas as pd

import checker
from checker.report import write_outputs
from checker.revision import INPUTS_COMPARED, INPUTS_SHEET, carry_over, read_previous_sheet

SAMPLE = Path(__file__).resolve().parent.parent / "sample_submissions" / "harbourside-rev-A.csv"
META = {"project": "Harbourside (invented)", "checker": "A. Checker", "submission": "rev A"}


def _schedule(tmp_path: Path, name: str, d_pc2: float) -> Path:
    """The sample schedule with a designer's effective depth column (invented figures)."""
    frame = pd.read_csv(SAMPLE, dtype=str, keep_default_na=False)
    frame["Effective depth d (mm)"] = ["" if m != "PC2" else str(d_pc2) for m in frame["Cap ref"]]
    path = tmp_path / name
    frame.to_csv(path, index=False)
    return path


def _sheet(tmp_path: Path, schedule: Path, name: str, previous=None) -> Path:
    rv = checker.review(schedule)
    (path,) = write_outputs(rv, [tmp_path / name], meta=META, previous=previous)
    return path


def test_a_change_of_the_stated_effective_depth_is_listed(tmp_path):
    a = _sheet(tmp_path, _schedule(tmp_path, "a.csv", 880), "a.xlsx")
    first = openpyxl.load_workbook(a)[INPUTS_SHEET][1]
    assert first[1].value == INPUTS_COMPARED and "stated_d" in {c.value for c in first[2:]}
    rv_b = checker.review(_schedule(tmp_path, "b.csv", 920))
    res = carry_over(rv_b, read_previous_sheet(a))
    changes = {(c["cap"], c["field"]): c for c in res.changes}
    assert changes[("PC2", "stated_d")]["old"] == 880 and changes[("PC2", "stated_d")]["new"] == 920
    assert [c for c in res.changes if c["field"] != "stated_d"] == []


def test_a_sheet_that_did_not_record_its_fields_is_not_compared_on_the_new_ones(tmp_path):
    a = _sheet(tmp_path, _schedule(tmp_path, "a.csv", 880), "a.xlsx")
    wb = openpyxl.load_workbook(a)
    ws = wb[INPUTS_SHEET]
    for cell in ws[1][1:]:            # as written before the record: only the marker in A1
        cell.value = None
    for row in ws.iter_rows(min_row=3):
        if row[1].value == "stated_d":
            row[1].value = None
            row[2].value = None
    wb.save(a)
    res = carry_over(checker.review(_schedule(tmp_path, "b.csv", 920)), read_previous_sheet(a))
    assert res.inputs_recorded and res.changes == []
