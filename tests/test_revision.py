"""The revision cycle (issue 5, item 4 and 5): match by key, carry responses and statuses, close
what is fixed, keep what still fails, add what is new, reopen what got worse, supersede removed
caps, and never drop a response a person typed."""

from __future__ import annotations

import copy
import tempfile
from pathlib import Path

import openpyxl
import pytest
from conftest_report import CAPS, META, base_findings, make_review, set_result, without_cap
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from checker.ingest.errors import IngestError
from checker.report import write_outputs
from checker.revision import (
    PreviousSheetError,
    carry_over,
    next_revision,
    read_previous_sheet,
)

# --------------------------------------------------------------------------------------------
# helpers: write a sheet, edit it as a person would, run the next revision

def write_sheet(folder: Path, rv, *, previous=None, meta=META, name="comments.xlsx") -> Path:
    (path,) = write_outputs(rv, [folder / name], meta=meta, previous=previous)
    return path


def heads(ws) -> dict[str, int]:
    """The 1-based column of each heading of the Comments sheet (tests find columns by heading)."""
    return {c.value: c.column for c in ws[2] if c.value}


def edit(path: Path, typed: dict[str, tuple[str | None, str | None]]) -> None:
    """Type responses and statuses into the Comments sheet by key, with openpyxl, and save."""
    wb = openpyxl.load_workbook(path)
    ws = wb["Comments"]
    head = {c.value: c.column for c in ws[2] if c.value}
    for r in range(3, ws.max_row + 1):
        key = ws.cell(row=r, column=head["Key"]).value
        if key in typed:
            response, status = typed[key]
            if response is not None:
                ws.cell(row=r, column=head["Designer response"]).value = response
            if status is not None:
                ws.cell(row=r, column=head["Checker status"]).value = status
    wb.save(path)


def sheet_rows(path: Path) -> dict[str, dict]:
    wb = openpyxl.load_workbook(path)
    ws = wb["Comments"]
    head = [c.value for c in ws[2]]
    out = {}
    for row in ws.iter_rows(min_row=3, values_only=True):
        if all(v is None for v in row):
            continue
        rec = dict(zip(head, row))
        out[rec["Key"] or f"(no key) {rec['No.']}"] = rec
    wb.close()
    return out


def responses_in(path: Path) -> list[str]:
    wb = openpyxl.load_workbook(path)
    ws = wb["Comments"]
    col = next(c.column for c in ws[2] if c.value == "Designer response")
    vals = [ws.cell(row=r, column=col).value for r in range(3, ws.max_row + 1)]
    wb.close()
    return [v for v in vals if v not in (None, "")]


def next_round(folder: Path, old_sheet: Path, rv_new, **kw):
    prev = read_previous_sheet(old_sheet)
    res = carry_over(rv_new, prev)
    return res, write_sheet(folder, rv_new, previous=res, **kw)


# --------------------------------------------------------------------------------------------

def test_read_back_our_own_sheet(tmp_path):
    rv = make_review()
    path = write_sheet(tmp_path, rv)
    prev = read_previous_sheet(path)
    assert prev.revision == 1
    assert prev.project == META["project"]
    assert len(prev.comments) == 9 and prev.extra == [] and prev.warnings == []
    c = prev.comments["PC1/edge-distance"]
    assert (c.no, c.status, c.severity, c.response) == (3, "open", "non-compliant", "")
    assert c.utilisation == pytest.approx(1.5)
    assert c.message == "pile face 100 mm from the cap edge"
    assert c.cap == "PC1" and c.rule == "edge-distance"
    assert prev.comments["PC3/pile-embedment"].utilisation is None


def test_unchanged_resubmission_keeps_everything_open(tmp_path):
    rv = make_review()
    res, sheet2 = next_round(tmp_path, write_sheet(tmp_path, rv), make_review())
    assert sheet2.name == "comments-rev2.xlsx"
    assert res.revision == 2
    assert res.counts["still_open"] == 9
    assert sum(v for k, v in res.counts.items() if k != "still_open") == 0
    rows = sheet_rows(sheet2)
    assert all(r["Checker status"] == "open" for r in rows.values())


def test_fixed_finding_is_closed_and_kept(tmp_path):
    s1 = write_sheet(tmp_path, make_review())
    edit(s1, {"PC1/edge-distance": ("Cap enlarged to 2700 x 2700, see drawing 12 rev B", None)})
    new = set_result(base_findings(), "PC1", "edge-distance", severity="ok", value=150.0, utilisation=1.0,
                     message="pile face 150 mm from the cap edge")
    res, s2 = next_round(tmp_path, s1, make_review(new))
    e = res.entries["PC1/edge-distance"]
    assert (e.status, e.outcome, e.no) == ("closed", "closed", 3)
    assert e.note == "closed in revision 2: check now met"
    assert res.counts["closed"] == 1
    row = sheet_rows(s2)["PC1/edge-distance"]
    assert row["Checker status"] == "closed" and row["No."] == 3
    assert row["Designer response"] == "Cap enlarged to 2700 x 2700, see drawing 12 rev B"
    assert row["Found"].startswith("[closed in revision 2: check now met]")
    assert "now value 150 mm" in row["Found"] and "revision 1:" in row["Found"]


def test_still_failing_stays_open_with_new_figures(tmp_path):
    s1 = write_sheet(tmp_path, make_review())
    edit(s1, {"PC2/pile-spacing": ("Spacing increased", None)})
    new = set_result(base_findings(), "PC2", "pile-spacing", value=1900.0, utilisation=2250 / 1900,
                     message="s = 1900 mm < 3φ = 2250 mm", src_row=14)
    res, s2 = next_round(tmp_path, s1, make_review(new))
    e = res.entries["PC2/pile-spacing"]
    assert (e.status, e.outcome, e.no) == ("open", "still-open", 4)
    row = sheet_rows(s2)["PC2/pile-spacing"]
    assert "value 1900 mm" in row["Found"] and "utilisation 1.18" in row["Found"]
    assert row["Source"] == "row 14"
    assert row["Designer response"] == "Spacing increased"


def test_new_finding_is_new_and_numbered_after_the_last(tmp_path):
    s1 = write_sheet(tmp_path, make_review())
    new = set_result(base_findings(), "PC4", "pile-embedment", severity="non-compliant", value=50.0,
                     limit=75.0, unit="mm", utilisation=1.5, message="embedment 50 mm")
    res, s2 = next_round(tmp_path, s1, make_review(new))
    e = res.entries["PC4/pile-embedment"]
    assert (e.status, e.outcome, e.no) == ("open", "new", 10)
    assert e.note == "new in revision 2"
    assert res.counts["new"] == 1
    rows = sheet_rows(s2)
    assert rows["PC4/pile-embedment"]["No."] == 10
    assert [r["No."] for r in rows.values()] == sorted(r["No."] for r in rows.values())


def test_closed_by_hand_stays_closed_unless_worse(tmp_path):
    s1 = write_sheet(tmp_path, make_review())
    edit(s1, {"PC2/strut-angle": ("Strut-and-tie check attached, angle acceptable", "closed"),
              "PC3/stated-vs-checked": ("Load from the latest run", "closed"),
              "PC5/bar-spacing": ("Noted", "closed")})
    new = base_findings()
    # same figures -> stays closed
    # higher utilisation at the same severity -> reopened
    set_result(new, "PC3", "stated-vs-checked", value=950.0, utilisation=1.16)
    # worse severity -> reopened
    set_result(new, "PC5", "bar-spacing", severity="non-compliant")
    res, s2 = next_round(tmp_path, s1, make_review(new))
    same = res.entries["PC2/strut-angle"]
    assert (same.status, same.outcome) == ("closed", "stays-closed")
    up = res.entries["PC3/stated-vs-checked"]
    assert (up.status, up.outcome) == ("open", "reopened")
    assert "worse than when closed" in up.note and "1.10" in up.note and "1.16" in up.note
    sev = res.entries["PC5/bar-spacing"]
    assert (sev.status, sev.outcome) == ("open", "reopened")
    assert res.counts["reopened"] == 2 and res.counts["stays_closed"] == 1
    rows = sheet_rows(s2)
    assert rows["PC2/strut-angle"]["Checker status"] == "closed"
    assert rows["PC3/stated-vs-checked"]["Checker status"] == "open"
    assert rows["PC3/stated-vs-checked"]["Designer response"] == "Load from the latest run"


def test_worse_is_judged_against_the_figures_it_was_closed_on(tmp_path):
    """Closed by hand at 1.09; a dip to 1.05 and a rise to 1.08 do not reopen it, 1.12 does."""
    s1 = write_sheet(tmp_path, make_review())
    edit(s1, {"PC2/strut-angle": ("accepted", "closed")})
    sheet = s1
    for util, expect in ((1.05, "closed"), (1.08, "closed"), (1.12, "open")):
        new = set_result(base_findings(), "PC2", "strut-angle", utilisation=util)
        res, sheet = next_round(tmp_path, sheet, make_review(new))
        assert res.entries["PC2/strut-angle"].status == expect, util


def test_open_comment_that_got_worse_stays_open(tmp_path):
    s1 = write_sheet(tmp_path, make_review())
    new = set_result(base_findings(), "PC1", "edge-distance", severity="unsafe", value=50.0, utilisation=3.0)
    res, _ = next_round(tmp_path, s1, make_review(new))
    e = res.entries["PC1/edge-distance"]
    assert (e.status, e.outcome) == ("open", "still-open") and "worse" in e.note


def test_removed_cap_is_superseded_and_keeps_its_responses(tmp_path):
    s1 = write_sheet(tmp_path, make_review())
    edit(s1, {"PC3/pile-embedment": ("Embedment 100 mm, see note 4", None),
              "PC3/stated-vs-checked": ("Pile load from the revised model", "closed")})
    new = [r for r in base_findings() if r["cap"] != "PC3"]
    res, s2 = next_round(tmp_path, s1, make_review(new, without_cap(CAPS, "PC3")))
    a, b = res.entries["PC3/pile-embedment"], res.entries["PC3/stated-vs-checked"]
    assert (a.status, a.outcome) == ("superseded", "superseded")
    assert "no longer in the schedule" in a.note
    assert (b.status, b.outcome) == ("closed", "stays-closed")   # closed stays closed
    assert res.counts["superseded"] == 1
    rows = sheet_rows(s2)
    assert rows["PC3/pile-embedment"]["Checker status"] == "superseded"
    assert rows["PC3/pile-embedment"]["Designer response"] == "Embedment 100 mm, see note 4"
    assert rows["PC3/stated-vs-checked"]["Designer response"] == "Pile load from the revised model"
    # and when the cap comes back still failing, the superseded comment is reopened
    res3, _ = next_round(tmp_path, s2, make_review())
    assert res3.entries["PC3/pile-embedment"].outcome == "reopened"


def test_renamed_column_in_the_new_schedule_does_not_matter(tmp_path):
    """Keys are cap mark + rule id: a schedule whose headings were renamed (and whose rows moved,
    so every source row differs) matches exactly as before."""
    s1 = write_sheet(tmp_path, make_review())
    typed = {k: (f"response to {k}", None) for k in read_previous_sheet(s1).comments}
    edit(s1, typed)
    new = base_findings()
    for r in new:
        r["src_file"], r["src_sheet"], r["src_row"] = "Ashgrove caps issue B.xlsx", "Caps (renamed)", r["src_row"] + 10
    rv_new = make_review(new, submission="Ashgrove caps issue B.xlsx")
    rv_new.caps = rv_new.caps.rename(columns={"pile_dia": "pile_dia"})  # canonical names after mapping
    res, s2 = next_round(tmp_path, s1, rv_new)
    assert res.counts["still_open"] == 9 and res.counts["new"] == 0 and res.counts["closed"] == 0
    rows = sheet_rows(s2)
    for k, (resp, _) in typed.items():
        assert rows[k]["Designer response"] == resp
        assert rows[k]["Source"].startswith("sheet Caps (renamed), row ")


def test_comment_sheet_rearranged_by_a_person(tmp_path):
    """A person sorts the rows, inserts a column of their own and renames a heading."""
    s1 = write_sheet(tmp_path, make_review())
    wb = openpyxl.load_workbook(s1)
    ws = wb["Comments"]
    response = heads(ws)["Designer response"]
    ws.insert_cols(response)               # a column of the person's own before the response
    ws.cell(row=2, column=response).value = "Checker notes"
    ws.cell(row=2, column=response + 1).value = "Response"      # renamed heading (was "Designer response")
    h = heads(ws)
    data = [[c.value for c in row] for row in ws.iter_rows(min_row=3, max_row=11)]
    data.reverse()                         # re-sorted
    for i, vals in enumerate(data, start=3):
        for j, v in enumerate(vals, start=1):
            ws.cell(row=i, column=j).value = v
    ws.cell(row=3, column=h["Response"]).value = "typed after re-sorting"
    key_of_row3 = ws.cell(row=3, column=h["Key"]).value
    wb.save(s1)
    prev = read_previous_sheet(s1)
    assert prev.comments[key_of_row3].response == "typed after re-sorting"
    assert len(prev.comments) == 9


def test_every_typed_response_survives(tmp_path):
    """The sheet is edited the way a person would: responses on every row (one of them starting
    with '=' and one on several lines), statuses changed, a row added by hand without a key, the
    same key pasted twice. Two revisions later every typed response is still on the sheet."""
    s1 = write_sheet(tmp_path, make_review())
    keys = list(read_previous_sheet(s1).comments)
    typed = {k: (f"Response {i}: see calc sheet {i}/B. Ø25 → Ø32", None) for i, k in enumerate(keys)}
    typed[keys[0]] = ("=agreed, steel increased", "closed")
    typed[keys[1]] = ("First line\nsecond line\n  indented third", "closed")
    typed["PC1/edge-distance"] = ("Cap enlarged", None)
    typed["PC3/pile-embedment"] = ("Embedment now stated as 100 mm", "superseded")
    edit(s1, typed)
    wb = openpyxl.load_workbook(s1)
    ws = wb["Comments"]
    h = heads(ws)
    r = ws.max_row + 1
    ws.cell(row=r, column=h["Cap"]).value = "general"
    ws.cell(row=r, column=h["Found"]).value = "Designer asks: does the check cover the pile heads?"
    ws.cell(row=r, column=h["Designer response"]).value = "General comment added by hand, keep me"
    ws.cell(row=r + 1, column=h["Designer response"]).value = "=a formula typed as a reply"  # no cached value
    ws.cell(row=r + 1, column=h["Key"]).value = "PC5/bar-spacing"
    ws.cell(row=r + 1, column=h["No."]).value = 9                              # a pasted copy of row 9
    wb.save(s1)
    all_typed = [v[0] for v in typed.values()] + ["General comment added by hand, keep me",
                                                  "=a formula typed as a reply"]

    new = set_result(base_findings(), "PC1", "edge-distance", severity="ok", value=150.0, utilisation=1.0)
    new = [r for r in new if r["cap"] != "PC3"]
    set_result(new, "PC4", "punching-column", severity="unsafe", value=5.9, limit=5.3, utilisation=1.11)
    res, s2 = next_round(tmp_path, s1, make_review(new, without_cap(CAPS, "PC3")))
    got2 = "\n".join(responses_in(s2))
    for text in all_typed:
        assert text in got2, text
    # the '=...' reply is still text, not a formula
    wb2 = openpyxl.load_workbook(s2)
    response = openpyxl.utils.get_column_letter(heads(wb2["Comments"])["Designer response"])
    cells = [c for c in wb2["Comments"][response] if c.value == "=agreed, steel increased"]
    assert cells and cells[0].data_type == "s"
    # a third revision with no edits in between keeps them all again
    res3, s3 = next_round(tmp_path, s2, make_review(new, without_cap(CAPS, "PC3")))
    got3 = "\n".join(responses_in(s3))
    for text in all_typed:
        assert text in got3, text
    assert any("appears again" in w for w in res.warnings)


def test_keyless_row_is_carried_whole(tmp_path):
    s1 = write_sheet(tmp_path, make_review())
    wb = openpyxl.load_workbook(s1)
    ws = wb["Comments"]
    h = heads(ws)
    r = ws.max_row + 1
    ws.cell(row=r, column=h["No."]).value = 42
    ws.cell(row=r, column=h["Found"]).value = "raised at the review meeting"
    ws.cell(row=r, column=h["Designer response"]).value = "answered in the meeting notes"
    ws.cell(row=r, column=h["Checker status"]).value = "open"
    wb.save(s1)
    res, s2 = next_round(tmp_path, s1, make_review())
    rows = sheet_rows(s2)
    manual = rows["(no key) 42"]
    assert manual["Designer response"] == "answered in the meeting notes"
    assert manual["Found"] == "raised at the review meeting"
    # the numbers of new comments never collide with the hand-added one
    new = set_result(base_findings(), "PC4", "pile-embedment", severity="query")
    res, _ = next_round(tmp_path, s1, make_review(new))
    assert res.entries["PC4/pile-embedment"].no == 43


def test_closed_by_the_tool_then_failing_again_is_reopened(tmp_path):
    s1 = write_sheet(tmp_path, make_review())
    fixed = set_result(base_findings(), "PC1", "edge-distance", severity="ok", value=150.0, utilisation=1.0)
    res2, s2 = next_round(tmp_path, s1, make_review(fixed))
    assert res2.entries["PC1/edge-distance"].status == "closed"
    res3, s3 = next_round(tmp_path, s2, make_review())
    e = res3.entries["PC1/edge-distance"]
    assert (e.status, e.outcome) == ("open", "reopened")
    # still closed if it stays met
    res3b, _ = next_round(tmp_path, s2, make_review(fixed))
    assert res3b.entries["PC1/edge-distance"].outcome == "stays-closed"


def test_rule_not_run_is_not_closed_on_no_evidence(tmp_path):
    s1 = write_sheet(tmp_path, make_review())
    new = [r for r in base_findings() if not (r["cap"] == "PC2" and r["rule"] == "strut-angle")]
    res, _ = next_round(tmp_path, s1, make_review(new))
    e = res.entries["PC2/strut-angle"]
    assert (e.status, e.outcome) == ("open", "not-rechecked")
    assert "not re-checked" in e.note
    assert "not re-checked" in res.summary()


def test_unknown_status_is_read_as_open_with_a_warning(tmp_path):
    s1 = write_sheet(tmp_path, make_review())
    edit(s1, {"PC1/edge-distance": (None, "Accepted?"), "PC2/strut-angle": (None, "  CLOSED ")})
    prev = read_previous_sheet(s1)
    assert prev.comments["PC1/edge-distance"].status == "open"
    assert prev.comments["PC2/strut-angle"].status == "closed"
    assert any("Accepted?" in w and "row" in w for w in prev.warnings)


def test_counts_and_summary(tmp_path):
    s1 = write_sheet(tmp_path, make_review())
    edit(s1, {"PC5/bar-spacing": (None, "closed")})
    new = set_result(base_findings(), "PC1", "edge-distance", severity="ok", utilisation=1.0)
    new = [r for r in new if r["cap"] != "PC3"]
    set_result(new, "PC4", "punching-column", severity="unsafe", utilisation=1.1)
    set_result(new, "PC5", "bar-spacing", utilisation=1.3)
    res, s2 = next_round(tmp_path, s1, make_review(new, without_cap(CAPS, "PC3")))
    assert res.counts == {"closed": 1, "still_open": 5, "new": 1, "reopened": 1, "superseded": 2,
                          "stays_closed": 0, "stays_superseded": 0, "not_rechecked": 0,
                          "met": 0, "stays_met": 0, "second_look": 0}
    text = res.summary()
    assert text.startswith("revision 2 against revision 1: 1 closed, 5 still open, 1 new, 1 reopened")
    wb = openpyxl.load_workbook(s2)
    labels = {r[0]: r[1] for r in wb["Cover"].iter_rows(min_col=1, max_col=2, values_only=True) if r[0]}
    assert labels["Revision"] == 2
    assert labels["Revision summary"] == text
    assert labels["Previous sheet"] == "comments.xlsx"
    assert labels["closed"] == 1 and labels["superseded"] == 2 and labels["open"] == 7


def test_revision_labels(tmp_path):
    assert [next_revision(x) for x in (1, "1", "03", "P01", "A", "b", "Z", "Rev C", "rev-9")] == [
        2, "2", "04", "P02", "B", "c", "AA", "Rev D", "rev-10"]
    s1 = write_sheet(tmp_path, make_review(), meta=dict(META, revision="A"))
    prev = read_previous_sheet(s1)
    assert prev.revision == "A"
    fixed = set_result(base_findings(), "PC1", "edge-distance", severity="ok", utilisation=1.0)
    res = carry_over(make_review(fixed), prev)
    assert res.revision == "B" and res.entries["PC1/edge-distance"].note == "closed in revision B: check now met"
    # the user names the revision: notes follow the name given
    s2 = write_sheet(tmp_path, make_review(fixed), previous=res, meta=dict(META, revision="C"))
    row = sheet_rows(s2)["PC1/edge-distance"]
    assert row["Found"].startswith("[closed in revision C: check now met]")
    assert read_previous_sheet(s2).revision == "C"


@pytest.mark.parametrize("kind", ["not-xlsx", "other-workbook", "wrong-columns", "missing"])
def test_not_one_of_our_sheets(tmp_path, kind):
    path = tmp_path / "previous.xlsx"
    if kind == "not-xlsx":
        path.write_text("mark,piles\nPC1,4\n")
    elif kind == "other-workbook":
        wb = openpyxl.Workbook()
        wb.active.title = "Budget"
        wb.active["A1"] = "Item"
        wb.save(path)
    elif kind == "wrong-columns":
        wb = openpyxl.Workbook()
        wb.active.title = "Comments"
        wb.active.append(["No.", "Comment", "Reply"])
        wb.save(path)
    with pytest.raises(PreviousSheetError) as exc:
        read_previous_sheet(path)
    msg = str(exc.value)
    assert str(path) in msg
    if kind == "wrong-columns":
        assert "sheet 'Comments'" in msg
    if kind == "other-workbook":
        assert "Budget" in msg
    assert isinstance(exc.value, IngestError)   # the CLI reports it as an unreadable input


def test_sheet_without_the_hidden_data_falls_back_to_the_visible_figures(tmp_path):
    s1 = write_sheet(tmp_path, make_review())
    wb = openpyxl.load_workbook(s1)
    del wb["capcheck-data"]
    wb.save(s1)
    prev = read_previous_sheet(s1)
    assert prev.comments["PC1/edge-distance"].utilisation == pytest.approx(1.5)
    assert prev.comments["PC1/edge-distance"].tool_severity == "non-compliant"
    assert any("capcheck-data" in w for w in prev.warnings)


_TEXT = st.text(
    alphabet=st.characters(blacklist_categories=("Cs", "Cc"), blacklist_characters="\x7f"),
    min_size=1, max_size=60,
).filter(lambda s: s.strip() != "")


@settings(max_examples=15, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(typed=st.dictionaries(st.sampled_from(sorted(f"{r['cap']}/{r['rule']}" for r in base_findings()
                                                    if r["severity"] != "ok")),
                             st.tuples(_TEXT, st.sampled_from([None, "open", "closed", "superseded"])),
                             min_size=1),
       drop_cap=st.sampled_from([None, "PC1", "PC2", "PC3", "PC5"]),
       fix=st.booleans())
def test_property_no_typed_response_is_lost(typed, drop_cap, fix):
    with tempfile.TemporaryDirectory() as d:
        folder = Path(d)
        s1 = write_sheet(folder, make_review())
        edit(s1, typed)
        new = copy.deepcopy(base_findings())
        if fix:
            for r in new:
                if r["severity"] in ("non-compliant", "advisory"):
                    r["severity"] = "ok"
        caps = CAPS
        if drop_cap:
            new = [r for r in new if r["cap"] != drop_cap]
            caps = without_cap(CAPS, drop_cap)
        res, s2 = next_round(folder, s1, make_review(new, caps))
        rows = sheet_rows(s2)
        for key, (text, _status) in typed.items():
            assert rows[key]["Designer response"] == text
        assert set(rows) >= set(typed)
