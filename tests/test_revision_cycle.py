"""The revision cycle loses nothing and shows what changed (issue 13): a person's own columns and
the checker's replies are carried, statuses follow the declared transitions under the closing
policy, the schedule inputs changed between revisions are listed, sheets of the earlier version
are still read, and the options are checked before any work starts."""

from __future__ import annotations

import datetime
import json
import shutil
from pathlib import Path

import openpyxl
import pytest
from conftest_report import (
    CAPS,
    META,
    base_findings,
    make_review,
    set_result,
    without_cap,
)

from checker.cli import EXIT_UNREADABLE, main
from checker.report import write_outputs
from checker.report.comments import COMMENT_HEADINGS
from checker.revision import (
    EVIDENCE,
    MET,
    STATUSES,
    TRANSITIONS,
    PreviousComment,
    PreviousSheet,
    carry_over,
    read_previous_sheet,
    transition,
)

ROOT = Path(__file__).resolve().parent.parent
SAMPLES = ROOT / "sample_submissions"
LEGACY = Path(__file__).parent / "data" / "revision" / "sheet-d6b7519.xlsx"
REMEDY_LAST = Path(__file__).parent / "data" / "revision" / "sheet-4687e0b.xlsx"


def write(folder: Path, rv, *, previous=None, name="comments.xlsx", meta=META) -> Path:
    (path,) = write_outputs(rv, [folder / name], meta=meta, previous=previous)
    return path


def next_round(folder, sheet, rv, *, policy="auto", name=None):
    res = carry_over(rv, read_previous_sheet(sheet), policy=policy)
    return res, write(folder, rv, previous=res, name=name or f"comments-{res.revision}.xlsx")


def heads(ws) -> dict[str, int]:
    return {c.value: c.column for c in ws[2] if c.value}


def rows_by_key(path: Path) -> dict[str, dict]:
    wb = openpyxl.load_workbook(path)
    ws = wb["Comments"]
    head = [c.value for c in ws[2]]
    out = {}
    for row in ws.iter_rows(min_row=3, values_only=True):
        if all(v is None for v in row):
            continue
        rec = dict(zip(head, row))
        out[rec["Key"] or f"(no key) {rec['No.']}"] = rec
    return out


def all_cells(path: Path) -> list[str]:
    wb = openpyxl.load_workbook(path)
    ws = wb["Comments"]
    return [str(c.value) for row in ws.iter_rows(min_row=3) for c in row if c.value not in (None, "")]


def type_by_key(path: Path, typed: dict[str, dict[str, object]]) -> None:
    wb = openpyxl.load_workbook(path)
    ws = wb["Comments"]
    h = heads(ws)
    for r in range(3, ws.max_row + 1):
        key = ws.cell(row=r, column=h["Key"]).value
        for heading, value in typed.get(key, {}).items():
            ws.cell(row=r, column=h[heading]).value = value
    wb.save(path)


# --------------------------------------------------------------------------------------------
# the declared transitions, one test per row

def _prev_sheet(status: str, *, cap="PC1", rule="edge-distance") -> PreviousSheet:
    key = f"{cap}/{rule}"
    p = PreviousComment(key=key, no=1, cap=cap, rule=rule, status=status, severity="non-compliant",
                        tool_severity="non-compliant", tool_utilisation=1.5, basis_severity="non-compliant",
                        basis_utilisation=1.5, response="typed", reply="replied", extras={"Ref": "D-12"})
    return PreviousSheet(path="prev.xlsx", revision=1, comments={key: p}, inputs=None)


def _review_for(evidence: str):
    f = base_findings()
    if evidence == "reported":
        pass
    elif evidence == "worse":
        set_result(f, "PC1", "edge-distance", severity="unsafe", utilisation=3.0)
    elif evidence == "met":
        set_result(f, "PC1", "edge-distance", severity="ok", value=150.0, utilisation=1.0)
    elif evidence == "no-result":
        f = [r for r in f if not (r["cap"] == "PC1" and r["rule"] == "edge-distance")]
    elif evidence == "cap-removed":
        return make_review([r for r in f if r["cap"] != "PC1"], without_cap(CAPS, "PC1"))
    return make_review(f)


@pytest.mark.parametrize("row", sorted(TRANSITIONS, key=str), ids=lambda r: "|".join(map(str, r)))
def test_transition_row(row):
    status, evidence, policy = row
    want_status, want_outcome, _ = TRANSITIONS[row]
    for pol in ([policy] if policy else ["auto", "checker"]):
        if policy is None and (status, evidence, pol) in TRANSITIONS:
            continue   # this policy has a row of its own
        res = carry_over(_review_for(evidence), _prev_sheet(status), policy=pol)
        e = res.entries["PC1/edge-distance"]
        assert (e.status, e.outcome) == (want_status, want_outcome), (row, pol)
        # whatever the transition, what a person typed is carried
        assert (e.response, e.reply, e.extras) == ("typed", "replied", {"Ref": "D-12"})


def test_the_table_covers_every_status_and_evidence():
    for status in STATUSES:
        for evidence in EVIDENCE:
            for policy in ("auto", "checker"):
                new_status, outcome, _ = transition(status, evidence, policy)
                assert new_status in STATUSES and outcome
    with pytest.raises(ValueError):
        transition("open", "met", "sometimes")


# --------------------------------------------------------------------------------------------
# a sheet edited as a person would

def test_every_typed_cell_survives_a_person_s_edits(tmp_path):
    """New columns (one between ours, one at the end), re-sorted rows, a reply merged over two
    rows, a deleted comment row, a renamed heading of ours: every typed cell is on the next sheet."""
    s1 = write(tmp_path, make_review())
    wb = openpyxl.load_workbook(s1)
    ws = wb["Comments"]
    h = heads(ws)
    ws.insert_cols(h["Designer response"])                 # a column of the person's own, in between
    ws.cell(row=2, column=h["Designer response"]).value = "Drawing ref"
    h = heads(ws)
    last = ws.max_column + 1
    ws.cell(row=2, column=last).value = "Due date"          # and one at the end
    data = [[c.value for c in row] for row in ws.iter_rows(min_row=3, max_row=11)]
    data.reverse()                                          # re-sorted
    for i, vals in enumerate(data, start=3):
        for j, v in enumerate(vals, start=1):
            ws.cell(row=i, column=j).value = v
    typed: list[str] = []
    keys = []
    for r in range(3, 12):
        key = ws.cell(row=r, column=h["Key"]).value
        keys.append(key)
        for heading, text in (("Drawing ref", f"DWG-{r}"), ("Designer response", f"response {r}"),
                              ("Due date", f"2027-01-{r:02d}")):
            col = h.get(heading, last)
            ws.cell(row=r, column=col).value = text
            typed.append(text)
    # a reply merged over two rows (the value lives in the top-left cell)
    ws.cell(row=3, column=h["Checker reply"]).value = "reply over two rows"
    ws.merge_cells(start_row=3, start_column=h["Checker reply"], end_row=4, end_column=h["Checker reply"])
    typed.append("reply over two rows")
    # a deleted comment row (the last one): its typed cells are gone with it, the comment is not
    deleted = ws.cell(row=11, column=h["Key"]).value
    for text in ("DWG-11", "response 11", "2027-01-11"):
        typed.remove(text)
    ws.delete_rows(11)
    # a heading of ours renamed
    ws.cell(row=2, column=h["Checker status"]).value = "Status (checker)"
    ws.cell(row=2, column=h["Designer response"]).value = "Reply from the designer"
    wb.save(s1)

    prev = read_previous_sheet(s1)
    assert prev.comments[keys[0]].response == "response 3"
    assert any("deleted" in w and deleted in w for w in prev.warnings)
    assert [h for h, f in prev.columns if f == "extra"] == ["Drawing ref", "Due date"]
    _res, s2 = next_round(tmp_path, s1, make_review())
    cells = all_cells(s2)
    for text in typed:
        assert text in cells, text
    rows = rows_by_key(s2)
    assert rows[keys[0]]["Checker reply"] == "reply over two rows"
    assert rows[keys[0]]["Drawing ref"] == "DWG-3" and rows[keys[0]]["Due date"] == "2027-01-03"
    assert deleted in rows and rows[deleted]["Checker status"] == "open"
    # the added columns kept in place: "Drawing ref" before the response, "Due date" after our last
    order = [c.value for c in openpyxl.load_workbook(s2)["Comments"][2]]
    assert order.index("Drawing ref") == order.index("Designer response") - 1
    assert order[-1] == "Due date"
    # and the hidden record names them, so the next round still reads them
    _res3, s3 = next_round(tmp_path, s2, make_review())
    for text in typed:
        assert text in all_cells(s3), text


def test_a_cap_mark_with_a_slash(tmp_path):
    caps = [("B/2",) + CAPS[0][1:]] + CAPS[1:]
    f = base_findings()
    for r in f:
        if r["cap"] == "PC1":
            r["cap"] = "B/2"
    s1 = write(tmp_path, make_review(f, caps))
    type_by_key(s1, {"B/2/edge-distance": {"Designer response": "cap enlarged"}})
    prev = read_previous_sheet(s1)
    c = prev.comments["B/2/edge-distance"]
    assert c.pair == ("B/2", "edge-distance")
    set_result(f, "B/2", "edge-distance", severity="ok", value=150.0, utilisation=1.0)
    res, _s2 = next_round(tmp_path, s1, make_review(f, caps))
    e = res.entries["B/2/edge-distance"]
    assert (e.status, e.response) == ("closed", "cap enlarged")
    # with the Cap column cleared and no hidden record, the key still splits at the last '/'
    from checker.revision import split_key

    assert split_key("B/2/edge-distance") == ("B/2", "edge-distance")


# --------------------------------------------------------------------------------------------
# the closing policy

def test_policy_checker_leaves_closing_to_a_person(tmp_path):
    s1 = write(tmp_path, make_review())
    fixed = set_result(base_findings(), "PC1", "edge-distance", severity="ok", value=150.0, utilisation=1.0)
    res, s2 = next_round(tmp_path, s1, make_review(fixed), policy="checker")
    e = res.entries["PC1/edge-distance"]
    assert (e.status, e.outcome) == (MET, "met")
    assert res.counts["met"] == 1 and "met, for the checker to close" in res.summary()
    wb = openpyxl.load_workbook(s2)
    assert rows_by_key(s2)["PC1/edge-distance"]["Checker status"] == MET
    labels = {r[0]: r[1] for r in wb["Cover"].iter_rows(min_col=1, max_col=2, values_only=True) if r[0]}
    assert labels[MET] == 1
    # still met next time: it waits; a person closes it: it stays closed
    res3, s3 = next_round(tmp_path, s2, make_review(fixed), policy="checker")
    assert res3.entries["PC1/edge-distance"].status == MET
    type_by_key(s3, {"PC1/edge-distance": {"Checker status": "closed"}})
    res4, _ = next_round(tmp_path, s3, make_review(fixed), policy="checker")
    assert res4.entries["PC1/edge-distance"].status == "closed"


# --------------------------------------------------------------------------------------------
# three revisions, A -> B -> C

def test_three_revision_cycle(tmp_path):
    meta = dict(META, revision="A")
    a = write(tmp_path, make_review(), name="A.xlsx", meta=meta)
    # revision A answered: responses, replies, a column of the person's own, a hand-closed comment
    wb = openpyxl.load_workbook(a)
    ws = wb["Comments"]
    col = ws.max_column + 1
    ws.cell(row=2, column=col).value = "Meeting"
    wb.save(a)
    typed = {
        "PC1/edge-distance": {"Designer response": "cap enlarged to 2700", "Meeting": "M1"},
        "PC2/strut-angle": {"Designer response": "STM check attached", "Checker status": "closed",
                            "Checker reply": "accepted on the calc"},
        "PC2/pile-spacing": {"Designer response": "will review", "Checker reply": "please confirm by rev C"},
        "PC3/stated-vs-checked": {"Designer response": "load from the latest run"},
    }
    type_by_key(a, typed)
    texts = [v for d in typed.values() for k, v in d.items() if k != "Checker status"]

    # revision B: PC1 fixed (cap enlarged), PC2 deepened (strut now worse? no: spacing unchanged),
    # PC3 removed; PC2's inputs changed while its strut comment is closed
    caps_b = [c if c[0] != "PC1" else ("PC1", 4, 600, 1800, 2700, 2700) + c[6:] for c in CAPS]
    caps_b = [c if c[0] != "PC2" else c[:6] + (1000,) + c[7:] for c in caps_b]
    caps_b = without_cap(caps_b, "PC3")
    fb = [r for r in base_findings() if r["cap"] != "PC3"]
    set_result(fb, "PC1", "edge-distance", severity="ok", value=150.0, utilisation=1.0)
    res_b = carry_over(make_review(fb, caps_b), read_previous_sheet(a), policy="checker")
    b = write(tmp_path, make_review(fb, caps_b), previous=res_b, name="B.xlsx", meta=dict(META, revision="B"))
    assert res_b.revision == "B"
    assert res_b.entries["PC1/edge-distance"].status == MET
    assert res_b.entries["PC2/strut-angle"].status == "closed" and res_b.entries["PC2/strut-angle"].second_look
    assert res_b.entries["PC3/stated-vs-checked"].status == "superseded"
    changes = {(c["cap"], c["field"]): c for c in res_b.changes}
    assert changes[("PC1", "cap_length")]["old"] == 2600 and changes[("PC1", "cap_length")]["new"] == 2700
    assert changes[("PC1", "cap_length")]["unit"] == "mm"
    assert changes[("PC2", "cap_depth")]["new"] == 1000
    assert changes[("PC3", "cap")]["new"] == "removed"
    wb_b = openpyxl.load_workbook(b)
    listed = [tuple(r[:4]) for r in wb_b["Changes"].iter_rows(min_row=3, values_only=True)]
    assert ("PC1", "cap_length", 2600, 2700) in listed
    assert "second look" in rows_by_key(b)["PC2/strut-angle"]["Found"]

    # revision B answered: the checker closes PC1 by hand, a reply on PC2
    type_by_key(b, {"PC1/edge-distance": {"Checker status": "closed", "Checker reply": "closed, thanks"},
                    "PC2/pile-spacing": {"Designer response": "will review\nspacing now 2250"}})
    texts += ["closed, thanks"]
    texts = [t for t in texts if t != "will review"] + ["will review\nspacing now 2250"]

    # revision C: PC2's strut got worse than when closed -> reopened; PC1 still met -> stays closed
    fc = [dict(r) for r in fb]
    set_result(fc, "PC2", "strut-angle", utilisation=1.3)
    res_c = carry_over(make_review(fc, caps_b), read_previous_sheet(b), policy="checker")
    c = write(tmp_path, make_review(fc, caps_b), previous=res_c, name="C.xlsx", meta=dict(META, revision="C"))
    assert res_c.revision == "C"
    assert res_c.entries["PC2/strut-angle"].outcome == "reopened"
    assert res_c.entries["PC1/edge-distance"].status == "closed"
    assert res_c.entries["PC3/stated-vs-checked"].status == "superseded"
    assert res_c.changes == []
    cells = all_cells(c)
    for t in texts:
        assert t in cells, t
    assert rows_by_key(c)["PC1/edge-distance"]["Meeting"] == "M1"


def test_a_sheet_of_the_earlier_version_is_still_read(tmp_path):
    """tests/data/revision/sheet-d6b7519.xlsx was written by capcheck at d6b7519 (before this
    change: no Checker reply, no recorded columns or inputs) and edited by hand."""
    sheet = tmp_path / "old.xlsx"
    shutil.copy(LEGACY, sheet)
    prev = read_previous_sheet(sheet)
    assert prev.inputs is None
    assert prev.comments["PC2/strut-angle"].status == "closed"
    res, s2 = next_round(tmp_path, sheet, make_review())
    assert not res.inputs_recorded and "inputs of the previous revision not recorded" in res.summary()
    assert res.changes == []
    rows = rows_by_key(s2)
    assert rows["PC1/edge-distance"]["Designer response"] == "Cap enlarged, see drawing 12 rev B"
    assert rows["PC2/strut-angle"]["Checker status"] == "closed"
    wb = openpyxl.load_workbook(s2)
    assert "not recorded" in str(wb["Changes"]["A3"].value)
    # and the sheet written now records them for the next round
    assert read_previous_sheet(s2).inputs


def test_a_sheet_with_the_remedy_column_last_is_still_read(tmp_path):
    """tests/data/revision/sheet-4687e0b.xlsx was written by capcheck at 4687e0b from
    harbourside-rev-A.csv ("Would pass with" after "Key", before "Checker reply") and edited with
    openpyxl: "Drawing ref" inserted after "Would pass with", "Due date" (a date) and "Hours"
    (numbers) added at the end, responses, statuses and replies typed, a row added without a key."""
    sheet = tmp_path / "a.xlsx"
    shutil.copy(REMEDY_LAST, sheet)
    prev = read_previous_sheet(sheet)
    assert [h for h, f in prev.columns if f == "extra"] == ["Drawing ref", "Due date", "Hours"]
    assert not any("read as" in w for w in prev.warnings)
    assert prev.comments["PC8/pile-spacing"].status == "closed"
    out = tmp_path / "b.xlsx"
    assert main(["check", str(REV_B), "--previous", str(sheet), "-o", str(out), "-q"]) in (0, 1)
    rows = rows_by_key(out)
    node = rows["PC10/node-pile"]
    assert node["Designer response"] == "Cap deepened to 1100 mm, see drawing 31 rev B"
    # a date typed by a person comes back as a date cell, not as text
    assert node["Drawing ref"] == "DWG-31 B" and node["Due date"] == datetime.datetime(2027, 1, 15)
    assert node["Hours"] == 3.5
    spacing = rows["PC8/pile-spacing"]
    assert spacing["Checker status"] == "closed" and spacing["Checker reply"] == "Letter GD-7 seen; accepted"
    restraint = rows["PC1/restraint"]
    assert restraint["Designer response"] == "Tie beams TB1 and TB2"
    assert restraint["Checker reply"] == "Send the tie beam calcs" and restraint["Drawing ref"] == "DWG-40"
    assert restraint["Hours"] == 2 and isinstance(restraint["Hours"], (int, float))
    hand = [r for k, r in rows.items() if k.startswith("(no key)")]
    assert [r["Designer response"] for r in hand] == ["General: is the cover to the pile heads checked?"]
    # the remedy still written on the failing comments, the person's column still beside it
    failing = [r for r in rows.values() if r["Severity"] == "unsafe" and r["Checker status"] == "open"]
    assert failing and all(r["Would pass with"] for r in failing)
    order = [c.value for c in openpyxl.load_workbook(out)["Comments"][2]]
    assert order[order.index("Would pass with") + 1] == "Drawing ref"
    assert order[-2:] == ["Due date", "Hours"]
    # written in today's order: the remedy beside the action (issue 16), the rest as before
    assert [h for h in order if h not in ("Drawing ref", "Due date", "Hours")] == list(COMMENT_HEADINGS)
    assert order.index("Would pass with") == order.index("Action required") + 1
    # and the sheet written now is read back the same way
    again = read_previous_sheet(out)
    assert again.comments["PC1/restraint"].extras == {"Drawing ref": "DWG-40", "Hours": 2}
    assert again.comments["PC1/restraint"].reply == "Send the tie beam calcs"


# --------------------------------------------------------------------------------------------
# the command: options checked before any work, the JSON and the terminal

REV_A = SAMPLES / "harbourside-rev-A.csv"
REV_B = SAMPLES / "harbourside-rev-B.csv"


@pytest.fixture(scope="module")
def sheet_a(tmp_path_factory):
    folder = tmp_path_factory.mktemp("rev-a")
    assert main(["check", str(REV_A), "-o", str(folder / "a.xlsx"), "-q"]) in (0, 1)
    return folder / "a.xlsx"


def _listing(folder: Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in folder.iterdir()}


@pytest.mark.parametrize("case", ["pdf", "no-ext", "same-as-schedule", "same-as-previous",
                                  "previous-not-a-sheet", "previous-missing", "previous-text",
                                  "bad-close", "bad-close-option"])
def test_refusals_exit_2_and_write_nothing(tmp_path, capsys, sheet_a, case):
    sched = tmp_path / "schedule.csv"
    shutil.copy(REV_B, sched)
    prev = tmp_path / "prev.xlsx"
    shutil.copy(sheet_a, prev)
    args = ["check", str(sched), "-q"]
    if case == "pdf":
        args += ["-o", str(tmp_path / "report.pdf"), "-o", str(tmp_path / "ok.json")]
    elif case == "no-ext":
        args += ["-o", str(tmp_path / "report")]
    elif case == "same-as-schedule":
        args += ["-o", str(sched), "--force"]
    elif case == "same-as-previous":
        args += ["--previous", str(prev), "-o", str(tmp_path / "." / "prev.xlsx"), "--force"]
    elif case == "previous-not-a-sheet":
        bogus = tmp_path / "bogus.xlsx"
        shutil.copy(SAMPLES / "harbourside-rev-A.xlsx", bogus)
        args += ["--previous", str(bogus)]          # also without -o
    elif case == "previous-missing":
        args += ["--previous", str(tmp_path / "nowhere.xlsx"), "-o", str(tmp_path / "x.xlsx")]
    elif case == "previous-text":
        txt = tmp_path / "notes.xlsx"
        txt.write_text("not a workbook")
        args += ["--previous", str(txt), "-o", str(tmp_path / "x.xlsx")]
    elif case == "bad-close":
        proj = tmp_path / "project.toml"
        proj.write_text('close = "sometimes"\n')
        args += ["--project", str(proj), "--previous", str(prev), "-o", str(tmp_path / "x.xlsx")]
    elif case == "bad-close-option":
        args += ["--close", "sometimes", "--previous", str(prev), "-o", str(tmp_path / "x.xlsx")]
    before = _listing(tmp_path)
    assert main(args) == EXIT_UNREADABLE
    captured = capsys.readouterr()
    assert captured.out == ""                        # nothing checked, nothing printed
    assert "capcheck:" in captured.err
    assert _listing(tmp_path) == before              # nothing written, nothing overwritten


def test_previous_without_output_prints_the_revision_and_json_carries_it(tmp_path, capsys, sheet_a,
                                                                         findings_json):
    code = main(["check", str(REV_B), "--previous", str(sheet_a), "--format", "json", "-q"])
    captured = capsys.readouterr()
    doc = findings_json(json.loads(captured.out))
    assert "Revision:" in captured.err and "inputs changed on" in captured.err
    assert doc["revision"]["previous"] == 1 and doc["revision"]["policy"] == "auto"
    assert any(c["cap"] == "PC10" and c["field"] == "cap_depth" and c["old"] == 650 and c["new"] == 1300
               and c["unit"] == "mm" for c in doc["changes"])
    commented = [r for r in doc["results"] if "comment" in r]
    assert commented and all(r["comment"]["no"] >= 1 for r in commented)
    assert all(r["comment"]["status"] in STATUSES for r in commented)
    assert code in (0, 1)


def test_taken_name_falls_back_to_rev_n_and_says_so(tmp_path, capsys):
    out = tmp_path / "c.xlsx"
    out.write_bytes(b"keep me")
    main(["check", str(REV_A), "-o", str(out), "-q"])
    err = capsys.readouterr().err
    assert out.read_bytes() == b"keep me"
    assert (tmp_path / "c-rev2.xlsx").exists()
    assert "exists; written as" in err and "c-rev2.xlsx" in err


def test_project_close_checker(tmp_path, capsys, sheet_a):
    proj = tmp_path / "project.toml"
    proj.write_text('project = "Invented works"\nclose = "checker"\n')
    out = tmp_path / "b.xlsx"
    main(["check", str(REV_B), "--project", str(proj), "--previous", str(sheet_a), "-o", str(out), "-q"])
    statuses = {r["Checker status"] for r in rows_by_key(out).values()}
    assert MET in statuses and "closed" not in statuses


@pytest.mark.parametrize("project_close, option, want", [
    (None, "checker", "checker"),          # the option alone
    ("checker", "auto", "auto"),           # the option over the project file, both ways
    ("auto", " Checker ", "checker"),      # written as in the project file: case and spaces ignored
    ("sometimes", "auto", "auto"),         # the project file's value is not used, so not refused
])
def test_close_option_overrides_the_project_file(tmp_path, capsys, sheet_a, project_close, option, want):
    args = ["check", str(REV_B), "--previous", str(sheet_a), "--close", option, "--format", "json", "-q",
            "-o", str(tmp_path / "b.xlsx")]
    if project_close is not None:
        proj = tmp_path / "project.toml"
        proj.write_text(f'project = "Invented works"\nclose = "{project_close}"\n')
        args += ["--project", str(proj)]
    assert main(args) in (0, 1)
    doc = json.loads(capsys.readouterr().out)
    assert doc["revision"]["policy"] == want
    statuses = {r["Checker status"] for r in rows_by_key(tmp_path / "b.xlsx").values()}
    assert (MET in statuses) == (want == "checker")
    assert ("closed" in statuses) == (want == "auto")


def test_demo_close_option(tmp_path, capsys):
    assert main(["demo", "--out", str(tmp_path / "bad"), "--close", "never"]) == EXIT_UNREADABLE
    captured = capsys.readouterr()
    assert "--close never" in captured.err and captured.out == ""
    assert not (tmp_path / "bad").exists()                   # refused before any work
    assert main(["demo", "--out", str(tmp_path / "demo"), "--close", "checker"]) == 0
    statuses = {r["Checker status"] for r in rows_by_key(tmp_path / "demo" / "harbourside-rev-B.xlsx").values()}
    assert MET in statuses and "closed" not in statuses


def test_html_shows_responses_replies_and_changes(tmp_path, sheet_a):
    s = tmp_path / "a.xlsx"
    shutil.copy(sheet_a, s)
    wb = openpyxl.load_workbook(s)
    ws = wb["Comments"]
    h = heads(ws)
    ws.cell(row=3, column=h["Designer response"]).value = "see revised calc 7"
    ws.cell(row=3, column=h["Checker reply"]).value = "calc 7 agreed"
    wb.save(s)
    out = tmp_path / "b.html"
    main(["check", str(REV_B), "--previous", str(s), "-o", str(out), "-q"])
    html = out.read_text(encoding="utf-8")
    assert "see revised calc 7" in html and "calc 7 agreed" in html
    assert "Inputs changed since the previous revision" in html and "cap depth 650 → 1300 mm" in html


# --------------------------------------------------------------------------------------------
# explain, the rule digest, the working of a check that does not apply

def test_explain_a_rejected_cap_says_why(capsys):
    assert main(["explain", str(REV_A), "--cap", " pc15 "]) == EXIT_UNREADABLE
    out = capsys.readouterr().out
    assert "Cap ' pc15 ' was rejected and not checked" in out and "2 layers 8H20" in out and "row 17" in out


def test_explain_finds_a_rejected_cap_by_its_mark_only(capsys):
    # the mark, case and spaces ignored; never a search of the error text (PC1 would match PC10)
    assert main(["explain", str(REV_A), "--cap", "p c15"]) == EXIT_UNREADABLE
    assert "was rejected and not checked" in capsys.readouterr().out
    for asked in ("8H20", "layers", "PC1 5x"):
        assert main(["explain", str(REV_A), "--cap", asked]) == EXIT_UNREADABLE
        captured = capsys.readouterr()
        assert "was rejected" not in captured.out and "is not in" in captured.err


def test_rejected_and_skipped_rows_are_typed_records_with_the_json_dicts():
    from checker.ingest.schedule import read_schedule
    from checker.records import RejectedRow, SkippedRow

    rej = RejectedRow({"file": "a.csv", "sheet": None, "page": None, "row": 3}, ("e1", "e2"), "PC10")
    assert rej.to_dict() == {"source": {"file": "a.csv", "sheet": None, "page": None, "row": 3}, "mark": "PC10",
                             "errors": ["e1", "e2"]}
    assert rej.is_mark("pc 10") and not rej.is_mark("PC1")
    assert "mark" not in RejectedRow({}, ("e",)).to_dict()
    assert SkippedRow({}, "why").to_dict() == {"source": {}, "reason": "why"}
    s = read_schedule(REV_A)
    assert s.rejected and all(isinstance(r, RejectedRow) for r in s.rejected)
    assert all(isinstance(r, SkippedRow) for r in s.skipped)


def test_table_problems_and_the_readers_skipped_rows_are_typed_records():
    from checker.records import SkippedRawRow, SkippedRow, TableProblem

    src = {"file": "a.csv", "sheet": None, "page": None, "row": 1}
    assert TableProblem(src, ("no column maps to cover",)).to_dict() == {"source": src,
                                                                           "errors": ["no column maps to cover"]}
    raw = SkippedRawRow(2, 7, "the heading row repeated", "Mark")
    assert raw.located("a.pdf", None) == SkippedRow({"file": "a.pdf", "sheet": None, "page": 2, "row": 7},
                                                    "the heading row repeated", "Mark")
    assert SkippedRawRow(None, 3, "a section label").located("a.csv", "S").to_dict() == {
        "source": {"file": "a.csv", "sheet": "S", "page": None, "row": 3}, "reason": "a section label"}


def test_explain_matches_marks_ignoring_case_and_spaces(capsys):
    assert main(["explain", str(REV_A), "--cap", " pc14 "]) == 0
    captured = capsys.readouterr()
    assert "read as cap 'PC14'" in captured.err
    assert "Working for cap PC14" in captured.out
    # a check that does not apply: its heading and one line giving the reason
    block = captured.out.split(" bursting: ")[1].split("\n\n")[0]
    assert "Not applicable" in block and "n/a" not in block


def test_cover_names_version_and_digest_not_the_install_folder(tmp_path):
    from checker.report import applied_digest
    from checker.resources import version

    out = tmp_path / "a.xlsx"
    main(["check", str(REV_A), "-o", str(out), "-q"])
    wb = openpyxl.load_workbook(out)
    labels = {r[0]: r[1] for r in wb["Cover"].iter_rows(min_col=1, max_col=2, values_only=True) if r[0]}
    from checker.api import review

    rv = review(REV_A)
    assert labels["Rule set"] == f"capcheck {version()}, rules and profile {applied_digest(rv)}"
    assert str(ROOT) not in labels["Rule set"]
    # a changed limit changes the digest
    assert applied_digest(review(REV_A, overrides={"pile_tolerance": "100"})) != applied_digest(rv)


def test_demo_prints_the_changes_between_a_and_b(tmp_path, capsys):
    assert main(["demo", "--out", str(tmp_path / "demo")]) == 0
    out = capsys.readouterr().out
    assert "Inputs changed between revisions A and B" in out
    assert "PC10: cap depth 650 → 1300 mm" in out and "PC4A: cap removed" in out
    wb = openpyxl.load_workbook(tmp_path / "demo" / "harbourside-rev-B.xlsx")
    assert "Changes" in wb.sheetnames
