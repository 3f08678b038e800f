"""CSV and Markdown of the comments (issue 5, item 2): same columns as the sheet, plus the caution."""

from __future__ import annotations

import csv

import pandas as pd
from conftest_report import META, base_findings, engine_review, make_review

from checker.caution import CAUTION
from checker.report import write_outputs
from checker.report.comments import COMMENT_HEADINGS, build_comments


def test_csv(tmp_path):
    rv = make_review()
    (path,) = write_outputs(rv, [tmp_path / "c.csv"], meta=META)
    raw = path.read_bytes()
    assert raw.startswith(b"\xef\xbb\xbf")   # BOM so that spreadsheet programs read UTF-8
    with open(path, encoding="utf-8-sig", newline="") as fh:
        rows = list(csv.reader(fh))
    assert rows[0] == [f"Caution: {CAUTION}"]
    assert tuple(rows[1]) == COMMENT_HEADINGS
    comments = build_comments(rv)
    assert len(rows) - 2 == len(comments) == 9
    first = dict(zip(rows[1], rows[2]))
    assert first["No."] == "1" and first["Key"] == "PC2/tie-steel-x"
    # the remedy beside the action, as on the comment sheet (issue 16)
    assert rows[1].index("Would pass with") == rows[1].index("Action required") + 1
    frame = pd.read_csv(path, skiprows=1, encoding="utf-8-sig")
    assert list(frame.columns) == list(COMMENT_HEADINGS)
    assert frame["Key"].is_unique
    assert "mm²" in " ".join(frame["Found"])


def test_engine_review_csv_and_markdown_have_one_row_a_comment(tmp_path):
    """On the engine's own Review of the invented caps: one row per result that is not ok, keyed uniquely."""
    rv = engine_review()
    n_issues = int((rv.findings["severity"] != "ok").sum())
    csv_path, md_path = write_outputs(rv, [tmp_path / "c.csv", tmp_path / "c.md"], meta=META)
    frame = pd.read_csv(csv_path, skiprows=1, encoding="utf-8-sig")
    assert len(frame) == n_issues == len(build_comments(rv))
    assert frame["Key"].is_unique
    assert set(frame["Key"]) == {f"{c}/{r}" for c, r, s in zip(rv.findings["cap"], rv.findings["rule"],
                                                               rv.findings["severity"]) if s != "ok"}
    text = md_path.read_text(encoding="utf-8")
    table = [ln for ln in text.splitlines() if ln.startswith("| ") and not ln.startswith("| No.")]
    assert len(table) == n_issues


def test_markdown(tmp_path):
    rows = base_findings()
    rows[1]["message"] = "line one\nline two | with a pipe"
    rv = make_review(rows)
    (path,) = write_outputs(rv, [tmp_path / "c.md"], meta=META)
    text = path.read_text(encoding="utf-8")
    assert CAUTION in text
    assert "never claims that a design is safe" in text
    assert "| " + " | ".join(COMMENT_HEADINGS) + " |" in text
    table = [ln for ln in text.splitlines() if ln.startswith("| ") and not ln.startswith("| No.")]
    assert len(table) == 9
    # every row keeps the column count: pipes inside cells are escaped, newlines become <br>
    for ln in table:
        cells = [c for c in ln.replace("\\|", "").split("|")][1:-1]
        assert len(cells) == len(COMMENT_HEADINGS)
    assert "line one<br>line two \\| with a pipe" in text
    assert f"**Project:** {META['project']}" in text


def test_markdown_without_comments(tmp_path):
    rv = make_review([r for r in base_findings() if r["severity"] == "ok"])
    (path,) = write_outputs(rv, [tmp_path / "c.md"], meta=META)
    text = path.read_text(encoding="utf-8")
    assert "No comments" in text and CAUTION in text


def test_markdown_body_escaped_in_one_pass_matches_cell_by_cell():
    """The body is escaped at once (writer speed, issue 14); each cell must come out as escaping it alone
    would, and a control character typed in a cell must not shift the columns."""
    from checker.report.tables import _md_escape, _md_table_body
    rows = [["1", "PC1", "a|b", "x\r\ny", None, "<&>", "back\\slash"],
            ["2", "PC2", "nul\x00here", "soh\x01here", "", "plain", "z"]]
    lines = _md_table_body(rows).split("\n")
    assert len(lines) == 2
    assert lines[0] == "| " + " | ".join(_md_escape(v) for v in rows[0]) + " |"
    cells = lines[1].replace("\\|", "").split(" | ")
    assert len(cells) == 7 and "nulhere" in lines[1] and "sohhere" in lines[1]
