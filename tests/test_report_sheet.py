"""The check-comment sheet read back with openpyxl (issue 5, item 1)."""

from __future__ import annotations

from pathlib import Path

import openpyxl
import pytest
from conftest_report import META, base_findings, engine_review, make_review

from checker.caution import CAUTION
from checker.findings import count_by_severity
from checker.report import load_project_file, resolve_meta, write_outputs
from checker.report.comments import (
    COMMENT_HEADINGS,
    DATA_MARKER,
    NOT_A_SAFETY_CLAIM,
    SEVERITY_FILL,
    build_comments,
)

DATA = Path(__file__).parent / "data" / "report"


@pytest.fixture()
def sheet(tmp_path):
    rv = make_review()
    (path,) = write_outputs(rv, [tmp_path / "comments.xlsx"], meta=META)
    wb = openpyxl.load_workbook(path)
    yield rv, wb
    wb.close()


def _rgb(cell) -> str:
    return (cell.fill.fgColor.rgb or "")[-6:].upper()


def _headings(ws, row=2):
    return [c.value for c in ws[row] if c.value is not None]


def _col(ws, heading: str) -> int:
    """The 1-based column of a heading of the Comments sheet (tests find columns by heading)."""
    return _headings(ws).index(heading) + 1


def _letter(ws, heading: str) -> str:
    return openpyxl.utils.get_column_letter(_col(ws, heading))


def _comment_rows(ws) -> list[dict]:
    head = _headings(ws)
    return [dict(zip(head, r)) for r in ws.iter_rows(min_row=3, values_only=True) if r[0] is not None]


def test_sheets_in_order(sheet):
    _, wb = sheet
    assert wb.sheetnames == ["Cover", "Comments", "All checks", "Rejected rows", "capcheck-data",
                             "capcheck-columns", "capcheck-inputs", "capcheck-lists"]
    for hidden in ("capcheck-data", "capcheck-columns", "capcheck-inputs", "capcheck-lists"):
        assert wb[hidden].sheet_state == "hidden"
    assert wb["capcheck-data"]["A1"].value == DATA_MARKER
    assert wb.active.title == "Comments"


def test_comment_columns_and_rows(sheet):
    rv, wb = sheet
    ws = wb["Comments"]
    assert tuple(_headings(ws)) == COMMENT_HEADINGS
    # the remedy beside the action (issue 16), the columns people type in after it
    assert COMMENT_HEADINGS.index("Would pass with") == COMMENT_HEADINGS.index("Action required") + 1
    rows = _comment_rows(ws)
    n_comments = int((rv.findings["severity"] != "ok").sum())
    assert len(rows) == n_comments == 9
    assert [r["No."] for r in rows] == list(range(1, n_comments + 1))
    # worst first, then cap, then rule (the one sort order)
    assert [r["Severity"] for r in rows[:2]] == ["unsafe", "unsafe"]
    keys = [r["Key"] for r in rows]
    assert keys[0] == "PC2/tie-steel-x" and len(set(keys)) == len(keys)
    assert all(r["Checker status"] == "open" for r in rows)
    assert all(r["Designer response"] is None for r in rows)   # designer response left empty
    # no passed check becomes a comment
    ok_keys = {f"{r['cap']}/{r['rule']}" for r in base_findings() if r["severity"] == "ok"}
    assert not ok_keys & set(keys)


def test_found_text_carries_the_figures(sheet):
    _, wb = sheet
    ws = wb["Comments"]
    rows = {r["Key"]: r for r in _comment_rows(ws)}
    row = rows["PC1/edge-distance"]
    found = row["Found"]
    assert "value 100 mm" in found and "limit 150 mm" in found and "utilisation 1.50" in found
    assert row["Check"] == "edge-distance: Cap edge beyond the pile face"
    assert row["Clause"] == "common practice"
    assert row["Action required"].startswith("Increase the cap")
    assert row["Source"] == "row 3"
    strut = rows["PC2/strut-angle"]
    assert "value 41.2°" in strut["Found"] and "limit 45°" in strut["Found"]


def test_severity_fills(sheet):
    _, wb = sheet
    ws = wb["Comments"]
    seen = set()
    col = _col(ws, "Severity")
    for r in range(3, ws.max_row + 1):
        sev = ws.cell(row=r, column=col).value
        if sev is None:
            continue
        assert _rgb(ws.cell(row=r, column=col)) == SEVERITY_FILL[sev]
        seen.add(sev)
    assert seen == {"unsafe", "non-compliant", "query", "advisory"}
    # the palette is distinct per severity
    assert len(set(SEVERITY_FILL.values())) == len(SEVERITY_FILL)


def test_status_drop_down(sheet):
    _, wb = sheet
    ws = wb["Comments"]
    dvs = ws.data_validations.dataValidation
    assert len(dvs) == 1
    dv = dvs[0]
    assert dv.type == "list"
    # the list is on a hidden sheet: one status holds a comma, which a literal list would split
    assert dv.formula1 == "'capcheck-lists'!$A$1:$A$4"
    assert [wb["capcheck-lists"].cell(row=i, column=1).value for i in range(1, 5)] == [
        "open", "met, for checker to close", "closed", "superseded"]
    status = _letter(ws, "Checker status")
    ranges = str(dv.sqref)
    assert ranges.startswith(f"{status}3:{status}")
    assert int(ranges.split(f":{status}")[1]) >= 3 + 9  # covers every comment and spare rows below


def test_freeze_filter_widths_wrap(sheet):
    _, wb = sheet
    ws = wb["Comments"]
    assert ws.freeze_panes == "A3"
    assert ws.auto_filter.ref.startswith(f"A2:{_letter(ws, COMMENT_HEADINGS[-1])}")  # every column of ours
    widths = {h: ws.column_dimensions[_letter(ws, h)].width for h in _headings(ws)}
    assert widths["Key"] < widths["Found"] and widths["Key"] <= 12
    assert widths["No."] < widths["Check"]
    for heading in ("Found", "Designer response", "Would pass with"):
        assert ws[f"{_letter(ws, heading)}3"].alignment.wrap_text is True


def test_print_setup_on_every_table_sheet(sheet):
    _, wb = sheet
    for name in ("Comments", "All checks", "Rejected rows"):
        ws = wb[name]
        assert ws.page_setup.orientation == "landscape", name
        assert int(ws.page_setup.paperSize) == int(ws.PAPERSIZE_A4) == 9, name
        assert ws.print_title_rows.replace("$", "") == "1:2", name
        assert ws.sheet_properties.pageSetUpPr.fitToPage is True
    assert int(wb["Cover"].page_setup.paperSize) == 9


def test_caution_on_every_visible_sheet(sheet):
    _, wb = sheet
    assert CAUTION in wb["Cover"]["A2"].value
    for name in ("Comments", "All checks", "Rejected rows"):
        ws = wb[name]
        assert CAUTION in ws["A1"].value, name
        assert "never claims a design is safe" in ws.oddFooter.left.text, name
        assert len(ws.oddFooter.left.text) < 255
    assert "never claims a design is safe" in wb["Cover"].oddFooter.left.text


def test_cover(sheet):
    rv, wb = sheet
    ws = wb["Cover"]
    labels = {r[0]: r[1] for r in ws.iter_rows(min_col=1, max_col=2, values_only=True) if r[0]}
    assert labels["Project"] == META["project"]
    assert labels["Submission"] == META["submission"]
    assert labels["Revision"] == 1
    assert labels["Date"] == "2026-12-02"
    assert labels["Checker"] == META["checker"]
    assert labels["Profile"] == "uk-na"
    # the version and a digest of the rules and profile applied, never the install folder
    assert labels["Rule set"].startswith("capcheck ") and "rules and profile " in labels["Rule set"]
    assert "rules/" not in labels["Rule set"]
    assert labels["Caps checked"] == 5
    assert labels["Rows rejected"] == 1
    counts = count_by_severity(rv.findings)
    legend = {}
    for r in range(1, ws.max_row + 1):
        v = ws.cell(row=r, column=1).value
        if v in SEVERITY_FILL:
            legend[v] = (ws.cell(row=r, column=2).value, _rgb(ws.cell(row=r, column=1)))
    assert set(legend) == set(SEVERITY_FILL)
    for sev, n in counts.items():
        assert legend[sev] == (n, SEVERITY_FILL[sev])
    assert legend["ok"][0] == int((rv.findings["severity"] == "ok").sum())
    texts = " ".join(str(c.value) for row in ws.iter_rows() for c in row if c.value is not None)
    assert NOT_A_SAFETY_CLAIM in texts
    assert "open" in labels and labels["open"] == 9


def test_all_checks_has_every_result(sheet):
    rv, wb = sheet
    ws = wb["All checks"]
    assert _headings(ws)[:4] == ["Cap", "Rule", "Check", "Severity"]
    rows = [r for r in ws.iter_rows(min_row=3, values_only=True) if r[0] is not None]
    assert len(rows) == len(rv.findings)
    assert sum(1 for r in rows if r[3] == "ok") == int((rv.findings["severity"] == "ok").sum())
    pc4 = [r for r in rows if r[0] == "PC4"]
    assert {r[3] for r in pc4} == {"ok"}
    assert ws.freeze_panes == "A3"
    edge = next(r for r in rows if r[0] == "PC1" and r[1] == "edge-distance")
    assert edge[5] == 100.0 and edge[6] == 150.0 and edge[8] == 1.5   # numbers stay numbers
    inf_row = next(r for r in rows if r[0] == "PC5" and r[1] == "edge-distance")
    assert inf_row[8] == "n/a"


def test_rejected_rows_sheet(sheet):
    rv, wb = sheet
    ws = wb["Rejected rows"]
    assert _headings(ws) == ["File", "Sheet", "Page", "Row", "Mark", "Reasons"]
    row = next(ws.iter_rows(min_row=3, max_row=3, values_only=True))
    assert row[0] == "ashgrove-caps-rev1.csv" and row[3] == 9
    assert row[4] == "PC9"                                           # the mark, when it was read
    # both of the engine's reasons: the pile diameter in words, the cap size without its depth
    (rejected,) = rv.rejected
    assert row[5] == "\n".join(rejected.errors)
    assert "six hundred" in row[5] and "2 figures; expected 3" in row[5]


def test_no_rejected_sheet_when_none(tmp_path):
    rv = make_review(rejected_row=False)
    (path,) = write_outputs(rv, [tmp_path / "c.xlsx"], meta=META)
    wb = openpyxl.load_workbook(path)
    assert "Rejected rows" not in wb.sheetnames


def test_no_comments_still_a_valid_sheet(tmp_path):
    rows = [r for r in base_findings() if r["severity"] == "ok"]
    rv = make_review(rows)
    (path,) = write_outputs(rv, [tmp_path / "c.xlsx"], meta=META)
    wb = openpyxl.load_workbook(path)
    ws = wb["Comments"]
    assert [c.value for c in ws[3]][:1] == [None]
    assert wb["Comments"].data_validations.dataValidation[0].sqref is not None


def test_text_that_looks_like_a_formula_stays_text(tmp_path):
    rows = base_findings()
    rows[1]["message"] = "=SUM(A1:A3) is what the designer wrote"
    rows[1]["action"] = "provide\x07 more"   # control character XLSX cannot hold
    rv = make_review(rows)
    (path,) = write_outputs(rv, [tmp_path / "c.xlsx"], meta=META)
    wb = openpyxl.load_workbook(path)
    cell = next(c for c in wb["Comments"][_letter(wb["Comments"], "Found")] if c.value and "SUM" in str(c.value))
    assert cell.data_type == "s"


def test_comment_model_matches_sheet(sheet):
    rv, wb = sheet
    comments = build_comments(rv)
    ws = wb["Comments"]
    for cm, row in zip(comments, ws.iter_rows(min_row=3, values_only=True)):
        assert list(row) == [v if v != "" else None for v in cm.cells()]


def test_project_file_meta():
    meta = load_project_file(DATA / "project.toml")
    assert meta["project"].startswith("Ashgrove Lane")
    assert meta["rule_set"] == "capcheck rules, uk-na profile"
    assert meta["revision"] == "B"
    rv = make_review()
    m = resolve_meta(rv, meta)
    assert m["date"] == "2026-12-09" and m["checker"] == "R. Example" and m["profile"] == "uk-na"
    # the spine passes the TOML as it reads it: a [project] table must work too
    m2 = resolve_meta(rv, {"project": {"name": "X"}, "revision": "C"})
    assert m2["project"] == "X" and m2["revision"] == "C"


def test_all_checks_cap_says_what_it_left_out(tmp_path, monkeypatch):
    import checker.report.sheet as sheet_mod

    monkeypatch.setattr(sheet_mod, "ALL_CHECKS_MAX_ROWS", 5)
    rv = make_review()
    (path,) = write_outputs(rv, [tmp_path / "c.xlsx"], meta=META)
    wb = openpyxl.load_workbook(path)
    ws = wb["All checks"]
    rows = [r for r in ws.iter_rows(min_row=3, values_only=True) if r[0] is not None]
    assert len(rows) == 5 and all(r[3] != "ok" for r in rows)   # worst first
    assert f"first 5 of {len(rv.findings)} results" in ws["A1"].value and CAUTION in ws["A1"].value
    assert len([r for r in wb["Comments"].iter_rows(min_row=3, values_only=True) if r[0]]) == 9


def test_engine_review_every_issue_is_one_comment(tmp_path):
    """On the engine's own Review of the invented caps (its findings, not a controlled list): every
    result that is not ok becomes exactly one comment, and the sheet's comment rows are exactly those."""
    rv = engine_review()
    issues = rv.findings[rv.findings["severity"] != "ok"]
    assert set(issues["severity"]) == {"unsafe", "non-compliant", "query", "advisory"}
    comments = build_comments(rv)
    assert len(comments) == len(issues)
    assert sorted(c.key for c in comments) == sorted(f"{c}/{r}" for c, r in zip(issues["cap"], issues["rule"]))
    (path,) = write_outputs(rv, [tmp_path / "comments.xlsx"], meta=META)
    wb = openpyxl.load_workbook(path)
    rows = _comment_rows(wb["Comments"])
    keys = [r["Key"] for r in rows]
    assert len(rows) == len(issues) and len(set(keys)) == len(keys)
    assert keys == [c.key for c in comments]
    assert [r["No."] for r in rows] == list(range(1, len(issues) + 1))
    # the engine's remedy beside a comment it can clear
    assert "cap length 2600 -> 2700 mm" in {r["Key"]: r for r in rows}["PC1/edge-distance"]["Would pass with"]
    wb.close()
