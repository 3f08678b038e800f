"""PDF ingest (issue 4): bad documents give a clear message and never a traceback; whatever rows
can be read are still returned.

Every failure is an IngestError whose message names the file and says what to do.
"""

from __future__ import annotations

import random

import pdfgen
import pytest

from checker.ingest.errors import IngestError
from checker.ingest.pdf import read_pdf_tables


@pytest.fixture(scope="module")
def bad_dir(tmp_path_factory):
    return tmp_path_factory.mktemp("pdf_bad")


def _error(path, **kw) -> str:
    with pytest.raises(IngestError) as info:
        read_pdf_tables(path, **kw)
    msg = str(info.value)
    assert str(path) in msg, f"the message should name the file: {msg}"
    assert "Traceback" not in msg
    return msg


def test_scan_with_no_text_layer(bad_dir):
    path = pdfgen.image_only_pdf(bad_dir / "scan.pdf")
    msg = _error(path)
    assert "no text to read" in msg and "OCR" in msg and "out of scope" in msg


def test_image_page_among_text_pages_is_skipped_and_reported(bad_dir):
    exp = pdfgen.mixed_pages_pdf(bad_dir / "mixed.pdf")
    tables, notes = read_pdf_tables(exp.path)
    assert len(tables) == 1
    assert tables[0].rows == exp.rows and tables[0].pages == [2] * len(exp.rows)
    assert "page 1: no schedule table, skipped" in notes
    assert any(n.startswith("page 3: no text layer") and "OCR" in n for n in notes)


def test_encrypted_with_a_password(bad_dir):
    path = pdfgen.encrypted_pdf(bad_dir / "locked.pdf")
    msg = _error(path)
    assert "encrypted" in msg and "password" in msg


def test_encrypted_with_an_owner_password_only_reads_normally(bad_dir):
    exp = pdfgen.owner_only_encrypted_pdf(bad_dir / "owner.pdf")
    tables, notes = read_pdf_tables(exp.path)
    assert tables[0].headings == exp.headings and tables[0].rows == exp.rows
    assert notes == []


def test_truncated_file_returns_the_pages_that_survived(bad_dir):
    path = pdfgen.truncated_pdf(bad_dir / "cut.pdf", 0.5)
    full = pdfgen.reportlab_pdf(bad_dir / "full.pdf", pdfgen.Spec(n_rows=30, rows_per_page=10))
    tables, notes = read_pdf_tables(path)
    t = tables[0]
    assert t.rows, "the first page survived the cut and must be read"
    assert t.rows == full.rows[: len(t.rows)]
    assert t.pages == full.pages[: len(t.rows)]
    assert any("damaged or truncated" in n for n in notes)
    assert any("content was lost" in n for n in notes)


def test_truncated_before_any_page_is_a_clear_error(bad_dir):
    data = pdfgen.truncated_pdf(bad_dir / "cut2.pdf", 1.0).read_bytes()
    path = bad_dir / "stub.pdf"
    path.write_bytes(data[:40])
    msg = _error(path)
    assert "damaged or truncated" in msg


@pytest.mark.parametrize("content, phrase", [
    (b"", "empty"),
    (b"Mark,Piles,Depth\nPC1,4,1200\n", "not a PDF"),
    (b"%PDF-1.4\n% nothing else of any use\n", "damaged or truncated"),
])
def test_not_a_pdf(bad_dir, content, phrase):
    path = bad_dir / f"fake-{len(content)}.pdf"
    path.write_bytes(content)
    assert phrase in _error(path)


def test_missing_file_and_folder(bad_dir):
    assert "file not found" in _error(bad_dir / "nowhere.pdf")
    assert "is a folder" in _error(bad_dir)


def test_pdf_without_a_table_names_the_file(bad_dir):
    path = pdfgen.no_table_pdf(bad_dir / "letter.pdf")
    msg = _error(path)
    assert msg.startswith(f"no schedule table found in {path}")


def test_table_whose_headings_mean_nothing_is_not_taken_for_a_schedule(bad_dir):
    path = pdfgen.unrecognised_headings_pdf(bad_dir / "order.pdf")
    assert "no schedule table found" in _error(path)


def test_unknown_heading_is_kept_in_place_for_the_mapper_to_report(bad_dir):
    exp = pdfgen.reportlab_pdf(bad_dir / "colour.pdf", pdfgen.REPORTLAB_CASES["unknown_heading"])
    tables, notes = read_pdf_tables(exp.path)
    t = tables[0]
    k = t.headings.index("Colour")
    assert t.headings == exp.headings
    assert [r[k] for r in t.rows] == [r[k] for r in exp.rows]
    assert t.rows == exp.rows


def test_a_page_that_fails_to_parse_is_skipped_and_the_rest_are_read(bad_dir, monkeypatch):
    import checker.ingest.pdf as pdf_mod

    exp = pdfgen.reportlab_pdf(bad_dir / "three.pdf", pdfgen.Spec(style="none", n_rows=30,
                                                                  rows_per_page=10))
    real = pdf_mod.page_content

    def flaky(page):
        if page.page_number == 2:
            raise ValueError("bad content stream")
        return real(page)

    monkeypatch.setattr(pdf_mod, "page_content", flaky)
    tables, notes = read_pdf_tables(exp.path)
    assert "page 2: could not be read (ValueError: bad content stream); skipped" in notes
    rows = tables[0].rows
    assert rows == exp.rows[:10] + exp.rows[20:]
    assert tables[0].pages == [1] * 10 + [3] * 10


def test_every_page_failing_is_a_clear_error(bad_dir, monkeypatch):
    import checker.ingest.pdf as pdf_mod

    exp = pdfgen.reportlab_pdf(bad_dir / "two.pdf", pdfgen.Spec(n_rows=4))

    def broken(page):
        raise KeyError("Resources")

    monkeypatch.setattr(pdf_mod, "page_content", broken)
    assert "no page could be read" in _error(exp.path)


def test_more_pages_than_the_limit(bad_dir):
    exp = pdfgen.reportlab_pdf(bad_dir / "long.pdf", pdfgen.Spec(n_rows=30, rows_per_page=5))
    msg = _error(exp.path, max_pages=4)
    assert "6 pages" in msg and "limit of 4" in msg and "--max-pages" in msg


def test_corrupted_bytes_never_end_in_a_traceback(bad_dir):
    """Random damage to a good file: either rows come back or an IngestError explains why."""
    good = pdfgen.reportlab_pdf(bad_dir / "good.pdf", pdfgen.Spec(style="none", n_rows=20,
                                                                  rows_per_page=10))
    data = good.path.read_bytes()
    rng = random.Random(4)
    outcomes = {"read": 0, "error": 0}
    for k in range(25):
        b = bytearray(data)
        for _ in range(rng.randint(1, 40)):
            pos = rng.randrange(len(b))
            b[pos] = rng.randrange(256)
        if k % 5 == 0:
            b = b[: rng.randrange(len(b))]
        path = bad_dir / f"noise-{k}.pdf"
        path.write_bytes(bytes(b))
        try:
            tables, notes = read_pdf_tables(path)
        except IngestError as exc:
            assert str(path) in str(exc)
            outcomes["error"] += 1
        else:
            assert all(len(r) == len(t.headings) for t in tables for r in t.rows)
            outcomes["read"] += 1
    assert outcomes["read"] + outcomes["error"] == 25


def test_drawing_only_pdf(bad_dir):
    """Text converted to outlines (or a drawing with no words) has nothing to read."""
    from reportlab.lib.pagesizes import A4
    from reportlab.pdfgen import canvas

    path = bad_dir / "outlines.pdf"
    c = canvas.Canvas(str(path), pagesize=A4)
    for k in range(12):
        c.line(40, 780 - 14 * k, 540, 780 - 14 * k)
        c.bezier(40 + 30 * k, 600, 50 + 30 * k, 620, 60 + 30 * k, 580, 70 + 30 * k, 600)
    c.showPage()
    c.save()
    msg = _error(path)
    assert "no text to read" in msg and "outlines" in msg
