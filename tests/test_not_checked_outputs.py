"""Every row read is accounted for in the HTML report and the comment sheet, not only on the terminal
and in the JSON: the table problems (a required field that no column of a table gives, said once at
the table's heading row), the rejected rows, the rows skipped with their reason and the headings not
used."""

from __future__ import annotations

import re
from html import unescape
from pathlib import Path

import openpyxl
import pytest

import checker
from checker.caution import CAUTION
from checker.report import write_outputs

SAMPLE = Path(__file__).resolve().parents[1] / "sample_submissions" / "harbourside-rev-A.csv"
SECTION_LABEL = "GRID D-F"
META = {"project": "fictitious", "date": "2026-12-02"}


def _schedule(path: Path, *, rename_cover: bool, repeat_heading: bool = False) -> Path:
    """The sample schedule with a section label row after its third cap; ``rename_cover``: its cover
    heading renamed to one that maps to nothing (a table problem); ``repeat_heading``: the heading row
    repeated further down (a skipped row of another kind)."""
    lines = SAMPLE.read_text(encoding="utf-8").splitlines()
    if rename_cover:
        assert "Cover (mm)" in lines[0]
        lines[0] = lines[0].replace("Cover (mm)", "Cvr")
    lines.insert(4, SECTION_LABEL + "," * lines[0].count(","))
    if repeat_heading:
        lines.insert(9, lines[0])
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def _text(html: str) -> str:
    """The report's visible text, tags dropped and entities read."""
    return re.sub(r"\s+", " ", unescape(re.sub(r"<[^>]+>", " ", html)))


def _rows(ws) -> list[tuple]:
    return [r for r in ws.iter_rows(min_row=3, values_only=True) if any(v is not None for v in r)]


def _cover(wb) -> dict:
    return {r[0]: r[1] for r in wb["Cover"].iter_rows(min_col=1, max_col=2, values_only=True) if r[0]}


@pytest.fixture(scope="module")
def no_cover_column(tmp_path_factory):
    """A schedule whose cover column is named so that nothing maps it: no row can be checked."""
    tmp = tmp_path_factory.mktemp("tprob")
    rv = checker.review(_schedule(tmp / "renamed-cover.csv", rename_cover=True))
    assert len(rv.table_problems) == 1 and len(rv.caps) == 0
    xlsx, html = write_outputs(rv, [tmp / "c.xlsx", tmp / "r.html"], meta=META)
    return rv, openpyxl.load_workbook(xlsx), Path(html).read_text(encoding="utf-8")


def test_the_report_shows_the_table_problem_before_the_rejected_rows(no_cover_column):
    rv, _, html = no_cover_column
    (problem,) = rv.table_problems
    assert problem.source["row"] == 1
    assert "no column maps to cover" in problem.errors[0]
    assert '<section class="table-problems"><h2>Table problems</h2>' in html
    section = html[html.index('<section class="table-problems">'):html.index('<section class="rejected">')]
    text = _text(section)
    assert problem.errors[0] in text                               # the whole message, escaped and read back
    assert f" {problem.source['file']} " in text                    # its source: the file ...
    assert re.search(r"<td>1</td><td>no column maps to cover", section)   # ... and the heading row
    # the rejected rows that point at it come after it
    assert html.index("Table problems") < html.index("<h2>Rejected rows</h2>")
    assert "see the table's problem" in _text(html[html.index('<section class="rejected">'):])
    assert re.search(r'<b>1</b>table problems', html)              # and the summary counts it


def test_the_report_lists_the_skipped_row_and_the_heading_not_used(no_cover_column):
    rv, _, html = no_cover_column
    (skipped,) = rv.skipped
    assert skipped.text == SECTION_LABEL
    section = _text(html[html.index('<section class="skipped">'):html.index("<footer>")])
    assert "Skipped rows and headings not used" in section
    assert f"{skipped.source['row']} {SECTION_LABEL} {skipped.reason}" in section
    assert "Headings not used: 'Cvr'" in section
    assert re.search(r'<b>1</b>rows skipped', html)
    assert CAUTION.split(".")[0] in _text(html[html.index("<footer>"):])   # the caution stays last


def test_the_sheet_lists_the_table_problem_first_on_the_rejected_rows_sheet(no_cover_column):
    rv, wb, _ = no_cover_column
    (problem,) = rv.table_problems
    ws = wb["Rejected rows"]
    assert CAUTION in ws["A1"].value
    assert [c.value for c in ws[2]] == ["File", "Sheet", "Page", "Row", "Mark", "Reasons"]
    rows = _rows(ws)
    first = rows[0]
    assert first[:5] == (problem.source["file"], None, None, 1, "Table problem")
    assert first[5] == problem.errors[0]
    # then every rejected row, each saying that its table has a problem
    assert len(rows) == 1 + len(rv.rejected)
    assert [r[4] for r in rows[1:]] == [r.mark for r in rv.rejected]
    assert all("see the table's problem" in r[5] for r in rows[1:])
    cover = _cover(wb)
    assert cover["Table problems"].startswith("1,") and "Rejected rows" in cover["Table problems"]
    assert cover["Headings not used"] == "'Cvr'"


def test_the_sheet_lists_the_skipped_row(no_cover_column):
    rv, wb, _ = no_cover_column
    (skipped,) = rv.skipped
    assert wb.sheetnames.index("Skipped rows") == wb.sheetnames.index("Rejected rows") + 1
    ws = wb["Skipped rows"]
    assert CAUTION in ws["A1"].value
    assert "never claims a design is safe" in ws.oddFooter.left.text
    assert [c.value for c in ws[2]] == ["File", "Sheet", "Page", "Row", "Text", "Reason"]
    assert _rows(ws) == [(skipped.source["file"], None, None, skipped.source["row"], SECTION_LABEL,
                          skipped.reason)]
    assert _cover(wb)["Rows skipped"] == 1


def test_the_comments_sheet_keeps_its_columns(no_cover_column):
    from checker.report.comments import COMMENT_HEADINGS

    _, wb, _ = no_cover_column
    assert tuple(c.value for c in wb["Comments"][2] if c.value is not None) == COMMENT_HEADINGS


def test_every_row_read_is_on_the_sheet_and_in_the_report(tmp_path):
    """Caps checked, rows rejected and rows skipped (a section label, a repeated heading) add up to the
    rows read, in the sheet's own tables and in the report's."""
    rv = checker.review(_schedule(tmp_path / "s.csv", rename_cover=False, repeat_heading=True))
    assert len(rv.caps) and len(rv.rejected) and len(rv.skipped) == 2 and not rv.table_problems
    xlsx, html = write_outputs(rv, [tmp_path / "c.xlsx", tmp_path / "r.html"], meta=META)
    wb = openpyxl.load_workbook(xlsx)
    checked = {r[0] for r in _rows(wb["All checks"])}
    rejected, skipped = _rows(wb["Rejected rows"]), _rows(wb["Skipped rows"])
    assert "Table problem" not in {r[4] for r in rejected}
    assert len(checked) + len(rejected) + len(skipped) == rv.rows_read == _cover(wb)["Rows read"]
    assert {r[5] for r in skipped} == {k.reason for k in rv.skipped}
    page = Path(html).read_text(encoding="utf-8")
    assert '<section class="table-problems">' not in page
    section = page[page.index('<section class="skipped">'):page.index("<footer>")]
    assert section.count("<tr><td>") == len(rv.skipped)
    for k in rv.skipped:
        assert f"<td>{k.source['row']}</td>" in section


def test_a_report_with_no_cap_checked_says_so_instead_of_an_empty_table(tmp_path):
    import pandas as pd

    from checker.report import write_outputs
    frame = pd.read_csv(SAMPLE, dtype=str, keep_default_na=False).rename(columns={"Cover (mm)": "Cvr"})
    src = tmp_path / "nocover.csv"
    frame.to_csv(src, index=False)
    rv = checker.review(src)
    (html,) = write_outputs(rv, [tmp_path / "r.html"])
    text = html.read_text(encoding="utf-8")
    assert len(rv.caps) == 0 and "No cap was checked" in text
