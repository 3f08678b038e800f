"""Struck-through rows in ruled PDF tables (a grid, a grid round the body, rules between the rows):
a row whose filled cells are all struck through is read as deleted, skipped with the reason the
workbook and unruled readers give; a row with some struck cells is read as written, with a note;
grid rules, underlines and cell borders are never strikes, and a strike never splits its row.

The PDFs are drawn by tests/pdfgen.py (reportlab), and one by LibreOffice from a workbook whose row
is struck through in its font."""

from __future__ import annotations

from pathlib import Path

import pdfgen
import pytest

from checker.ingest.pdf import read_pdf_tables
from checker.ingest.raw import SkippedRawRow

STRUCK = "struck through (read as deleted)"
RULED = ("grid", "gridbody", "rowrules")


def _read(path: Path, strategy: str = "auto"):
    tables, notes = read_pdf_tables(path, strategy=strategy)
    assert len(tables) == 1, [t.headings for t in tables]
    return tables[0], notes


@pytest.mark.parametrize("across", [False, True], ids=["per_cell", "one_line_across"])
@pytest.mark.parametrize("style", RULED)
def test_struck_row_skipped_partly_struck_row_noted(tmp_path, style, across):
    """PC2 struck in every cell (a line through each cell's text, or one line through the whole row),
    PC4 in its two bar cells only, PC5 underlined: PC2 skipped as deleted, PC4 read as written with a
    note, PC5 read as it is; the other rows are read exactly as drawn (no row split by a strike)."""
    strike: tuple = ((1, None),) if across else ((1, None), (3, (11, 12)))
    exp = pdfgen.reportlab_pdf(tmp_path / f"{style}.pdf", pdfgen.Spec(
        style=style, n_rows=6, strike=strike, strike_across=across, underline=(4,)))
    t, notes = _read(exp.path)
    want = [r for k, r in enumerate(exp.rows) if k != 1]
    assert t.rows == want
    assert t.row_numbers == [1, 3, 4, 5, 6]
    assert t.skipped == [SkippedRawRow(1, 2, STRUCK, "PC2")]
    assert "page 1, row 2 skipped: struck through (read as deleted) ('PC2')" in notes
    partly = [n for n in notes if "read as written" in n]
    assert partly == ([] if across else ["page 1, row 4: 2 cell(s) struck through; read as written"])
    assert not any("row 5" in n and "struck" in n for n in notes)


def test_grid_read_with_the_lines_strategy(tmp_path):
    """The grid is read by the ruled reader (forced): the same rows skipped and noted."""
    exp = pdfgen.reportlab_pdf(tmp_path / "grid.pdf", pdfgen.Spec(
        style="grid", n_rows=6, strike=((1, None), (3, (0,)))))
    t, notes = _read(exp.path, strategy="lines")
    assert [r[0] for r in t.rows] == ["PC1", "PC3", "PC4", "PC5", "PC6"]
    assert t.skipped == [SkippedRawRow(1, 2, STRUCK, "PC2")]
    assert "page 1, row 4: 1 cell(s) struck through; read as written" in notes


@pytest.mark.parametrize("style", RULED)
def test_unstruck_schedule_reads_every_row(tmp_path, style):
    """The same schedule without strikes, two rows underlined: every row read, no strike note."""
    exp = pdfgen.reportlab_pdf(tmp_path / f"{style}.pdf", pdfgen.Spec(
        style=style, n_rows=6, underline=(1, 4)))
    t, notes = _read(exp.path)
    assert t.rows == exp.rows
    assert t.skipped == []
    assert not any("struck" in n for n in notes), notes


def test_struck_row_on_a_continuation_page(tmp_path):
    """A grid over two pages (heading repeated), a row of page 2 struck: skipped with its page."""
    exp = pdfgen.reportlab_pdf(tmp_path / "pages.pdf", pdfgen.Spec(
        style="grid", n_rows=10, rows_per_page=5, strike=((6, None),)))
    t, notes = _read(exp.path)
    assert [r[0] for r in t.rows] == [r[0] for k, r in enumerate(exp.rows) if k != 6]
    assert t.skipped == [SkippedRawRow(2, 2, STRUCK, exp.rows[6][0])]


def _border_grid(path: Path) -> Path:
    """A grid drawn cell by cell (each cell's border its own segments, as a spreadsheet program
    draws it) whose text sits on the bottom border of its cells: the border runs through the
    bottom of the glyphs' boxes, but it is a rule between the rows, not a strike."""
    from reportlab.pdfgen import canvas

    size = 10.0
    xs = [50, 110, 170, 240, 310]
    head = ["Mark", "Piles", "Pile dia (mm)", "Cap L (mm)"]
    rows = [head, ["PC1", "4", "600", "2700"], ["PC2", "2", "600", "2700"], ["PC3", "1", "900", "1500"]]
    c = canvas.Canvas(str(path), pagesize=(595, 842))
    c.setFont("Helvetica", size)
    c.setLineWidth(0.5)
    top, h = 780.0, 14.0
    for r, row in enumerate(rows):
        y_top, y_bottom = top - r * h, top - (r + 1) * h
        for k, v in enumerate(row):
            c.drawString(xs[k] + 3, y_bottom, v)          # baseline on the border
            c.line(xs[k], y_top, xs[k + 1], y_top)
            c.line(xs[k], y_bottom, xs[k + 1], y_bottom)
            c.line(xs[k], y_top, xs[k], y_bottom)
            c.line(xs[k + 1], y_top, xs[k + 1], y_bottom)
    c.showPage()
    c.save()
    return path


def test_cell_borders_under_the_text_are_no_strikes(tmp_path):
    t, notes = _read(_border_grid(tmp_path / "borders.pdf"))
    assert [r[0] for r in t.rows] == ["PC1", "PC2", "PC3"]
    assert t.skipped == []
    assert not any("struck" in n for n in notes), notes


def test_review_does_not_check_the_struck_cap(tmp_path):
    """End to end: the struck cap is not checked and is listed among the rows skipped."""
    import checker

    exp = pdfgen.reportlab_pdf(tmp_path / "schedule.pdf", pdfgen.Spec(
        style="grid", n_rows=6, strike=((2, None),)))
    rv = checker.review(str(exp.path))
    gone = exp.rows[2][0]
    assert gone not in set(rv.caps["mark"])
    assert gone not in set(rv.findings["cap"])
    read = set(rv.caps["mark"]) | {r.mark for r in rv.rejected}
    assert read == {r[0] for k, r in enumerate(exp.rows) if k != 2}
    assert [(k.text, k.reason, k.source["page"], k.source["row"]) for k in rv.skipped] == [
        (gone, STRUCK, 1, 3)]
    assert rv.rows_read == len(rv.caps) + len(rv.rejected) + len(rv.skipped)


def test_workbook_struck_row_printed_by_libreoffice(tmp_path):
    """A bordered workbook (a ruled grid once printed) with one row struck through in its font,
    exported to PDF by LibreOffice: the PDF reads like the workbook (same caps, the struck one
    skipped as deleted)."""
    if pdfgen.soffice() is None:
        pytest.skip("LibreOffice (soffice/libreoffice) is not on PATH: the PDF cannot be made; "
                    "install libreoffice-calc-nogui (.ci/system-packages.sh does it in CI)")
    from checker.ingest.schedule import read_schedule

    book = tmp_path / "struck.xlsx"
    exp = pdfgen.write_xlsx(book, pdfgen.XlsxSpec(n_rows=8, borders=True, notes=False,
                                                  strike_rows=(3,)))
    pdfgen.convert_with_soffice([book], tmp_path)
    pdf = tmp_path / "struck.pdf"
    assert pdf.exists(), "LibreOffice did not write struck.pdf"
    x, p = read_schedule(book), read_schedule(pdf)
    gone = exp.rows[3][0]
    assert list(p.caps["mark"]) == list(x.caps["mark"])
    assert [r.mark for r in p.rejected] == [r.mark for r in x.rejected]
    assert list(p.caps["mark"]) + [r.mark for r in p.rejected] == [
        r[0] for k, r in enumerate(exp.rows) if k != 3]
    assert [(k.text, k.reason) for k in p.skipped] == [(k.text, k.reason) for k in x.skipped] == [
        (gone, STRUCK)]
    assert not any("read as written" in n for n in p.notes)
