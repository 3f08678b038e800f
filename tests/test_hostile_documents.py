"""Hostile and broken documents (issue 6): schedules and rule files written to hurt.

Every document here is generated in the test (tmp_path), small on disk, and refused or read
within a bounded time and memory with a message that names the file and the limit. The XML
bombs follow the published "billion laughs" construction and the external-entity (XXE) pattern
of the OWASP XML External Entity Prevention Cheat Sheet; the ZIP bombs use a member that
expands far beyond the limit, both genuinely (deflated blanks) and by a forged size.
Invented data only.
"""

from __future__ import annotations

import contextlib
import io
import os
import re
import signal
import socket
import struct
import subprocess
import sys
import textwrap
import time
import tracemalloc
import zipfile
from pathlib import Path

import openpyxl
import pytest

from checker.ingest import limits
from checker.ingest.errors import IngestError
from checker.ingest.headings import load_mapping
from checker.ingest.schedule import read_schedule
from checker.ingest.tabular import HEADING_SCAN
from checker.ruleset.catalogue import QUANTITIES
from checker.ruleset.loader import RuleFileError, load_rule_file, load_ruleset

ROOT = Path(__file__).resolve().parents[1]
SAMPLE = ROOT / "sample_submissions" / "harbourside-rev-A.csv"
KNOWN = set(QUANTITIES) | {"spacing_factor"}

HEAD = ["Mark", "Piles", "Pile dia", "Spacing", "L", "W", "Depth", "Column", "NEd", "Concrete", "Cover",
        "Bars X", "Bars Y"]
ROW = ["PC{}", 4, 600, 1800, 2700, 2700, 1200, "600x600", 4500, "C32/40", 75, "12H25", "12H25"]


def row(i: int) -> list[object]:
    return [ROW[0].format(i)] + ROW[1:]


def refusal(path, **kw) -> str:
    """read_schedule(path) must raise IngestError naming the file; the message is returned."""
    with pytest.raises(IngestError) as info:
        read_schedule(path, **kw)
    msg = str(info.value)
    assert str(path) in msg, msg
    assert "Traceback" not in msg
    return msg


@contextlib.contextmanager
def bounded(seconds: float = 2.0, mib: float | None = None):
    """Assert the block takes less than ``seconds`` (and allocates less than ``mib`` at its peak)."""
    if mib is not None:
        tracemalloc.start()
    t = time.perf_counter()
    try:
        yield
    finally:
        elapsed = time.perf_counter() - t
        peak = None
        if mib is not None:
            _, peak = tracemalloc.get_traced_memory()
            tracemalloc.stop()
    assert elapsed < seconds, f"took {elapsed:.2f} s (bound {seconds} s)"
    if mib is not None:
        assert peak < mib * 2 ** 20, f"peak allocation {peak / 2 ** 20:.0f} MiB (bound {mib} MiB)"


@contextlib.contextmanager
def deadline(seconds: float):
    """Interrupt the block with TimeoutError after ``seconds`` (a pure-Python loop or a blocking
    open is interrupted; used where the code under test is known not to bound itself)."""
    def on_alarm(signum, frame):
        raise TimeoutError(f"still running after {seconds} s")

    old = signal.signal(signal.SIGALRM, on_alarm)
    signal.setitimer(signal.ITIMER_REAL, seconds)
    try:
        yield
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, old)


def in_subprocess(code: str, *, mib: int = 1024, timeout: float = 60) -> subprocess.CompletedProcess:
    """Run ``code`` in a fresh interpreter limited to ``mib`` of address space (Linux)."""
    prog = f"import resource\nresource.setrlimit(resource.RLIMIT_AS, ({mib} * 2**20, {mib} * 2**20))\n" + \
        textwrap.dedent(code)
    return subprocess.run([sys.executable, "-c", prog], capture_output=True, text=True, timeout=timeout,
                          cwd=ROOT)


# ---------------------------------------------------------------------------------------------
# XLSX: XML bombs, external entities, ZIP bombs, dimension claims, sheets
# ---------------------------------------------------------------------------------------------


def workbook(path: Path, n_rows: int = 3, sheets: int = 1) -> Path:
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Caps"
    ws.append(HEAD)
    for i in range(n_rows):
        ws.append(row(i + 1))
    for k in range(1, sheets):
        wb.create_sheet(f"Sheet {k + 1}").append(["note"])
    wb.save(path)
    return path


SST_NS = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
SST = (f'<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
       f'<sst xmlns="{SST_NS}" count="1" uniqueCount="1"><si><t>Mark</t></si></sst>')


def with_shared_strings(src: Path, dst: Path, sst: str = SST) -> Path:
    """The workbook with its first heading moved into a shared-strings part, as a spreadsheet
    program saves it (openpyxl writes inline strings)."""
    with zipfile.ZipFile(src) as z:
        sheet = z.read("xl/worksheets/sheet1.xml").decode()
        rels = z.read("xl/_rels/workbook.xml.rels").decode()
        types = z.read("[Content_Types].xml").decode()
    cell = '<c r="A1" t="inlineStr"><is><t>Mark</t></is></c>'
    assert cell in sheet
    sheet = sheet.replace(cell, '<c r="A1" t="s"><v>0</v></c>')
    rels = rels.replace("</Relationships>", '<Relationship Id="rIdSst" Type="http://schemas.openxmlformats.org/'
                        'officeDocument/2006/relationships/sharedStrings" Target="sharedStrings.xml"/>'
                        "</Relationships>")
    types = types.replace("</Types>", '<Override PartName="/xl/sharedStrings.xml" ContentType="application/'
                          'vnd.openxmlformats-officedocument.spreadsheetml.sharedStrings+xml"/></Types>')
    return rezip(src, dst, {"xl/worksheets/sheet1.xml": sheet.encode(), "xl/_rels/workbook.xml.rels": rels.encode(),
                            "[Content_Types].xml": types.encode()}, add={"xl/sharedStrings.xml": sst.encode()})


def rezip(src: Path, dst: Path, replace: dict[str, bytes], add: dict[str, bytes] | None = None) -> Path:
    """A copy of the archive with some members' bytes replaced (deflated as usual)."""
    with zipfile.ZipFile(src) as zin, zipfile.ZipFile(dst, "w", zipfile.ZIP_DEFLATED) as zout:
        for info in zin.infolist():
            zout.writestr(info.filename, replace.get(info.filename, zin.read(info.filename)))
        for name, data in (add or {}).items():
            zout.writestr(name, data)
    return dst


def test_shared_strings_workbook_reads(tmp_path):
    """The helper's workbook is a good one: the bombs below differ from it only by the bomb."""
    book = with_shared_strings(workbook(tmp_path / "plain.xlsx"), tmp_path / "sst.xlsx")
    s = read_schedule(book)
    assert len(s.caps) == 3 and s.rejected == []


LOL = ('<!DOCTYPE lolz [\n <!ENTITY lol "lol">\n'
       + "".join(f' <!ENTITY lol{k} "{("&lol" + (str(k - 1) if k > 1 else "") + ";") * 10}">\n'
                 for k in range(1, 10))
       + "]>\n")


def with_doctype(xml: bytes, doctype: str, entity_ref: str, padding: int = 0) -> bytes:
    """Insert a document type declaration after the XML declaration and use ``entity_ref`` in the
    first text node; ``padding`` puts a comment of that many bytes before the declaration."""
    text = xml.decode("utf-8")
    decl_end = text.index("?>") + 2 if text.startswith("<?xml") else 0
    pad = f"<!--{'x' * padding}-->" if padding else ""
    body = text[decl_end:]
    body = re.sub(r"<t>[^<]*</t>", f"<t>{entity_ref}</t>", body, count=1)
    body = re.sub(r"(<c r=\"A2\"[^>]*>)<v>[^<]*</v>", rf"\1<v>{entity_ref}</v>", body, count=1)
    return (text[:decl_end] + pad + doctype + body).encode("utf-8")


@pytest.mark.parametrize("part", ["xl/sharedStrings.xml", "xl/worksheets/sheet1.xml"])
def test_billion_laughs_is_refused_without_expansion(tmp_path, part):
    good = with_shared_strings(workbook(tmp_path / "plain.xlsx"), tmp_path / "good.xlsx")
    with zipfile.ZipFile(good) as z:
        xml = z.read(part)
    bomb = rezip(good, tmp_path / "bomb.xlsx", {part: with_doctype(xml, LOL, "&lol9;")})
    with bounded(2.0, mib=50):
        msg = refusal(bomb)
    assert "refused" in msg and "entities" in msg and part in msg
    assert "lollol" not in msg


def test_billion_laughs_behind_a_long_prolog_is_refused_by_defusedxml(tmp_path):
    """The pre-scan reads the first 64 KiB of each part; a declaration behind a 70 kB comment is
    caught by the second line, openpyxl parsing through defusedxml."""
    import openpyxl.xml

    assert openpyxl.xml.DEFUSEDXML, "defusedxml is a dependency: openpyxl must parse through it"
    good = with_shared_strings(workbook(tmp_path / "plain.xlsx"), tmp_path / "good.xlsx")
    part = "xl/sharedStrings.xml"
    with zipfile.ZipFile(good) as z:
        xml = z.read(part)
    bomb = rezip(good, tmp_path / "bomb.xlsx", {part: with_doctype(xml, LOL, "&lol9;", padding=70_000)})
    with bounded(2.0, mib=50):
        msg = refusal(bomb)
    assert "refused" in msg and "entities" in msg


@pytest.fixture()
def listener():
    """A TCP socket on localhost that counts connection attempts (none may arrive)."""
    srv = socket.socket(socket.AF_INET, socket.SOCK_STREAM)
    srv.bind(("127.0.0.1", 0))
    srv.listen(8)
    srv.setblocking(False)
    yield srv

    def attempts() -> int:
        k = 0
        while True:
            try:
                conn, _ = srv.accept()
            except BlockingIOError:
                return k
            conn.close()
            k += 1

    assert attempts() == 0, "an external entity was fetched"
    srv.close()


@pytest.mark.parametrize("padding", [0, 70_000])
def test_external_entities_are_refused_and_never_fetched(tmp_path, listener, padding):
    secret = tmp_path / "secret.txt"
    secret.write_text("SENTINEL-not-for-the-report")
    port = listener.getsockname()[1]
    doctype = (f'<!DOCTYPE sst [<!ENTITY net SYSTEM "http://127.0.0.1:{port}/x">'
               f'<!ENTITY loc SYSTEM "{secret.as_uri()}">]>')
    good = with_shared_strings(workbook(tmp_path / "plain.xlsx"), tmp_path / "good.xlsx")
    part = "xl/sharedStrings.xml"
    with zipfile.ZipFile(good) as z:
        xml = z.read(part)
    evil = rezip(good, tmp_path / "xxe.xlsx", {part: with_doctype(xml, doctype, "&net;&loc;", padding)})
    with bounded(2.0):
        msg = refusal(evil)
    assert "refused" in msg and "SENTINEL" not in msg


def test_zip_bomb_member_is_refused_by_its_ratio_before_decompression(tmp_path, monkeypatch):
    good = workbook(tmp_path / "good.xlsx")
    part = "xl/worksheets/sheet1.xml"
    with zipfile.ZipFile(good) as z:
        xml = z.read(part).decode()
    filler = xml.replace("<sheetData>", "<sheetData>" + " " * 40_000_000, 1).encode()
    bomb = rezip(good, tmp_path / "bomb.xlsx", {part: filler})
    assert bomb.stat().st_size < 200_000
    opened: list[str] = []
    real_open = zipfile.ZipFile.open
    monkeypatch.setattr(zipfile.ZipFile, "open", lambda self, name, *a, **k: opened.append(str(name)) or
                        real_open(self, name, *a, **k))
    monkeypatch.setattr(openpyxl, "load_workbook", lambda *a, **k: pytest.fail("openpyxl was reached"))
    with bounded(2.0, mib=20):
        msg = refusal(bomb)
    assert part in msg and f"limit of {limits.MAX_COMPRESSION_RATIO}:1" in msg and "ZIP bomb" in msg
    assert opened == [], f"members were decompressed before the refusal: {opened}"


def _forge_sizes(path: Path, member: str, size: int) -> None:
    """Rewrite the uncompressed size of ``member`` in its local header and central directory entry."""
    data = bytearray(path.read_bytes())
    name = member.encode()
    for sig, off in ((b"PK\x03\x04", 22), (b"PK\x01\x02", 24)):
        start = 0
        while (k := data.find(sig, start)) >= 0:
            name_len_at = 26 if sig == b"PK\x03\x04" else 28
            nlen = struct.unpack_from("<H", data, k + name_len_at)[0]
            hdr = 30 if sig == b"PK\x03\x04" else 46
            if bytes(data[k + hdr:k + hdr + nlen]) == name:
                struct.pack_into("<I", data, k + off, size)
            start = k + 4
    path.write_bytes(bytes(data))


def test_zip_member_claiming_gigabytes_is_refused_by_size_before_decompression(tmp_path, monkeypatch):
    bomb = workbook(tmp_path / "claim.xlsx")
    _forge_sizes(bomb, "xl/worksheets/sheet1.xml", 3 * 2 ** 30)
    with zipfile.ZipFile(bomb) as z:
        assert z.getinfo("xl/worksheets/sheet1.xml").file_size == 3 * 2 ** 30
    monkeypatch.setattr(zipfile.ZipFile, "open", lambda *a, **k: pytest.fail("a member was decompressed"))
    with bounded(1.0):
        msg = refusal(bomb)
    assert "refused" in msg and ("200 MiB" in msg or ":1" in msg)


def test_shared_strings_beyond_their_limit_are_refused_unread(tmp_path, monkeypatch):
    good = with_shared_strings(workbook(tmp_path / "plain.xlsx"), tmp_path / "good.xlsx")
    _forge_sizes(good, "xl/sharedStrings.xml", limits.MAX_SHARED_STRINGS_BYTES + 1)
    monkeypatch.setattr(zipfile.ZipFile, "open", lambda *a, **k: pytest.fail("a member was decompressed"))
    msg = refusal(good)
    assert "shared strings" in msg and "limit of 32 MiB" in msg


def test_total_expansion_beyond_the_limit_is_refused(tmp_path, monkeypatch):
    good = workbook(tmp_path / "good.xlsx")
    monkeypatch.setattr(limits, "MAX_XLSX_UNCOMPRESSED_BYTES", 5_000)
    msg = refusal(good)
    assert "would expand to more than" in msg and "the limit" in msg


def test_a_sheet_claiming_the_whole_grid_reads_in_bounded_memory(tmp_path):
    """<dimension ref="A1:XFD1048576"/> on a sheet of 4 rows and one cell in the last row of the
    grid: openpyxl pads every row, the million empty ones between too, to the claimed 16,384 cells
    (about 128 GB as lists); capcheck drops the claim and keeps one blank row of a run."""
    good = workbook(tmp_path / "good.xlsx")
    part = "xl/worksheets/sheet1.xml"
    with zipfile.ZipFile(good) as z:
        xml = z.read(part).decode()
    xml = re.sub(r"<dimension ref=\"[^\"]*\"\s*/>", "", xml)
    xml = xml.replace("<sheetViews>", '<dimension ref="A1:XFD1048576"/><sheetViews>', 1)
    xml = xml.replace("</sheetData>", '<row r="1048576"><c r="B1048576" t="inlineStr"><is><t>end</t></is></c>'
                      "</row></sheetData>", 1)
    assert 'ref="A1:XFD1048576"' in xml
    claim = rezip(good, tmp_path / "claim.xlsx", {part: xml.encode()})
    res = in_subprocess(f"""
        from checker.ingest.schedule import read_schedule
        s = read_schedule({str(claim)!r})
        print(len(s.caps), len(s.rejected))
    """, mib=1536, timeout=60)
    assert res.returncode == 0, res.stderr[-2000:]
    assert res.stdout.split() == ["3", "0"]


def test_too_many_sheets(tmp_path):
    book = workbook(tmp_path / "many.xlsx", sheets=limits.MAX_SHEETS + 1)
    msg = refusal(book)
    assert f"{limits.MAX_SHEETS + 1} worksheets" in msg and f"limit of {limits.MAX_SHEETS}" in msg


def test_two_sheets_reading_one_part_are_refused(tmp_path):
    good = workbook(tmp_path / "two.xlsx", sheets=2)
    rels = "xl/_rels/workbook.xml.rels"
    with zipfile.ZipFile(good) as z:
        text = z.read(rels).decode()
    assert "sheet2.xml" in text
    evil = rezip(good, tmp_path / "shared.xlsx", {rels: text.replace("sheet2.xml", "sheet1.xml").encode()})
    assert "same part" in refusal(evil)


def test_a_filled_cell_beyond_the_column_limit(tmp_path):
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.append(HEAD)
    ws.append(row(1))
    ws.cell(row=2, column=limits.MAX_COLUMNS + 50, value="stray note")
    ws.cell(row=1, column=limits.MAX_COLUMNS + 80, value=None)
    path = tmp_path / "wide.xlsx"
    wb.save(path)
    msg = refusal(path)
    assert f"column {limits.MAX_COLUMNS + 50}" in msg and f"limit of {limits.MAX_COLUMNS} columns" in msg
    assert "row 2" in msg


def test_wide_blank_rows_are_trimmed_not_refused(tmp_path):
    p = tmp_path / "wide.csv"
    p.write_text(",".join(HEAD) + "," * 5000 + "\n" + ",".join(map(str, row(1))) + "," * 5000 + "\n")
    s = read_schedule(p)
    assert len(s.caps) == 1 and s.rejected == []


# ---------------------------------------------------------------------------------------------
# CSV dialects and encodings: all read as the plain UTF-8 file does, or refused clearly
# ---------------------------------------------------------------------------------------------


def _sample_text(delimiter: str = ",") -> str:
    import csv

    with open(SAMPLE, newline="", encoding="utf-8") as fh:
        rows = list(csv.reader(fh))
    rows[0][2] = "Pile Ø (mm)"          # a character that differs between the encodings
    out = io.StringIO()
    csv.writer(out, delimiter=delimiter, lineterminator="\n").writerows(rows)
    return out.getvalue()


@pytest.fixture(scope="module")
def reference(tmp_path_factory):
    p = tmp_path_factory.mktemp("ref") / "ref.csv"
    p.write_text(_sample_text(), encoding="utf-8")
    s = read_schedule(p)
    return s


DIALECTS = {
    "bom": lambda t: b"\xef\xbb\xbf" + t.encode(),
    "crlf": lambda t: t.replace("\n", "\r\n").encode(),
    "cr-only": lambda t: t.replace("\n", "\r").encode(),
    "mixed-line-endings": lambda t: "".join(line + ("\r\n" if k % 3 == 0 else "\r" if k % 3 == 1 else "\n")
                                            for k, line in enumerate(t.splitlines())).encode(),
    "semicolon": lambda t: _sample_text(";").encode(),
    "tab": lambda t: _sample_text("\t").encode(),
    "pipe": lambda t: _sample_text("|").encode(),
    "cp1252": lambda t: t.encode("cp1252"),
    "utf-16-bom": lambda t: t.encode("utf-16"),
    "utf-16-be-bom": lambda t: b"\xfe\xff" + t.encode("utf-16-be"),
    "utf-16-le-no-bom": lambda t: t.encode("utf-16-le"),
    "utf-32-bom": lambda t: t.encode("utf-32"),
    "trailing-blank-lines": lambda t: (t + "\n" * 2_000_000).encode(),
}


@pytest.mark.parametrize("dialect", sorted(DIALECTS))
def test_csv_dialects_read_as_the_utf8_file(tmp_path, reference, dialect):
    p = tmp_path / f"{dialect}.csv"
    p.write_bytes(DIALECTS[dialect](_sample_text()))
    with bounded(5.0):
        s = read_schedule(p)
    assert [m.heading for m in s.matches] == [m.heading for m in reference.matches]
    cols = [c for c in reference.caps.columns if c != "src_file"]
    assert s.caps[cols].equals(reference.caps[cols]), dialect
    assert [r.errors for r in s.rejected] == [r.errors for r in reference.rejected]
    if dialect in ("cp1252", "utf-16-le-no-bom"):
        assert any(("cp1252" in n) or ("UTF-16-LE" in n) for n in s.notes), s.notes


@pytest.mark.parametrize("content, phrase", [
    (b"\x00\x01\x02\x03binary" * 100, "binary data"),
    (b"PK\x03\x04" + b"\x00" * 100, "zip archive"),
    (b"%PDF-1.7\n", "PDF"),
    (b"\xd0\xcf\x11\xe0" + b"\x00" * 100, ".xls"),
    (b"", "empty"),
    (b"\n\n\n   \n", "empty"),
])
def test_files_that_are_not_csv_text(tmp_path, content, phrase):
    p = tmp_path / "x.csv"
    p.write_bytes(content)
    assert phrase in refusal(p)


def _huge_csv(path: Path, n_data_rows: int) -> Path:
    """Written lazily, a block of rows at a time (a few MB on disk)."""
    line = ",".join(map(str, ROW[1:]))
    with open(path, "w", encoding="utf-8") as fh:
        fh.write(",".join(HEAD) + "\n")
        done = 0
        while done < n_data_rows:
            k = min(10_000, n_data_rows - done)
            fh.write("".join(f"PC{done + i},{line}\n" for i in range(k)))
            done += k
    return path


def test_csv_beyond_the_row_limit_is_refused_with_the_limit(tmp_path):
    p = _huge_csv(tmp_path / "huge.csv", limits.MAX_ROWS + HEADING_SCAN + 5)
    with bounded(5.0):
        msg = refusal(p)
    assert f"{limits.MAX_ROWS:,}" in msg and "rows" in msg and "split the schedule" in msg


def test_row_limit_boundary_and_its_option(tmp_path):
    p = _huge_csv(tmp_path / "small.csv", 30)
    assert len(read_schedule(p, max_rows=30).caps) == 30
    msg = refusal(p, max_rows=29)
    assert "more than 29 filled rows" in msg


def test_file_beyond_the_size_limit_is_refused_before_reading(tmp_path, monkeypatch):
    for ext in (".csv", ".xlsx", ".pdf"):
        p = tmp_path / f"big{ext}"
        with open(p, "wb") as fh:                 # sparse: no disk used, nothing to read
            fh.truncate(limits.MAX_FILE_BYTES + 1)
        monkeypatch.setattr(Path, "read_bytes", lambda self: pytest.fail("the file was read"))
        with bounded(0.5):
            msg = refusal(p)
        assert "larger than the limit of 100 MiB" in msg


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="named pipes need a POSIX system")
def test_a_pipe_or_device_behind_a_schedule_name_is_refused(tmp_path):
    fifo = tmp_path / "schedule.csv"
    os.mkfifo(fifo)
    with bounded(1.0):
        assert "not a regular file" in refusal(fifo)
    link = tmp_path / "zero.csv"
    link.symlink_to("/dev/zero")
    with bounded(1.0):
        assert "not a regular file" in refusal(link)


def test_coordinates_with_thousands_of_positions_for_one_cap(tmp_path):
    """The least pile centres come from pairwise distances; 20,000 positions would be 3 GB of them."""
    sched = tmp_path / "s.csv"
    sched.write_text(",".join(HEAD) + "\n" + ",".join(map(str, row(1))) + "\n" + ",".join(map(str, row(2))) + "\n")
    coords = tmp_path / "xy.csv"
    with open(coords, "w") as fh:
        fh.write("mark,x,y\n")
        fh.writelines(f"PC1,{i},{i % 7}\n" for i in range(20_000))
        fh.write("PC2,-900,-900\nPC2,900,-900\nPC2,-900,900\nPC2,900,900\n")
    with bounded(5.0, mib=200):
        s = read_schedule(sched, coords=coords)
    assert list(s.caps["mark"]) == ["PC2"]
    (err,) = s.rejected[0].errors
    assert err.startswith("piles") and "20,000 positions" in err


def test_long_cells(tmp_path):
    p = tmp_path / "long.csv"
    long_mark = "P" * (limits.MAX_CELL_CHARS + 10)
    p.write_text(",".join(HEAD) + "\n" + ",".join(map(str, row(1))) + "\n" +
                 ",".join([long_mark] + list(map(str, ROW[1:]))) + "\n")
    s = read_schedule(p)
    assert len(s.caps) == 1 and len(s.rejected) == 1
    (err,) = s.rejected[0].errors
    assert err.startswith("mark (column 'Mark')") and f"limit of {limits.MAX_CELL_CHARS:,}" in err
    assert s.rejected[0].source["row"] == 3
    p.write_text(",".join(HEAD) + "\n" + ",".join(["x" * 200_000] + list(map(str, ROW[1:]))) + "\n")
    assert "holds more than" in refusal(p)


# ---------------------------------------------------------------------------------------------
# PDF: more pages than the limit, and a page count that lies (the reader is tested in its own
# files; here only through read_schedule)
# ---------------------------------------------------------------------------------------------


def _blank_pages_pdf(path: Path, pages: int) -> Path:
    from reportlab.pdfgen import canvas

    c = canvas.Canvas(str(path))
    for k in range(pages):
        c.drawString(72, 720, f"Invented schedule notes, page {k + 1}")
        c.showPage()
    c.save()
    return path


def test_pdf_with_more_pages_than_max_pages(tmp_path):
    p = _blank_pages_pdf(tmp_path / "five.pdf", 5)
    msg = refusal(p, max_pages=3)
    assert "5 pages" in msg and "limit of 3" in msg and "--max-pages" in msg


def test_pdf_page_limit_applies_by_default(tmp_path):
    p = _blank_pages_pdf(tmp_path / "long.pdf", limits.MAX_PDF_PAGES + 1)
    with bounded(10.0):
        msg = refusal(p)
    assert f"{limits.MAX_PDF_PAGES + 1} pages" in msg and f"limit of {limits.MAX_PDF_PAGES}" in msg


def test_pdf_claiming_a_huge_page_count_is_read_or_refused_in_bounded_time(tmp_path):
    p = _blank_pages_pdf(tmp_path / "one.pdf", 1)
    data = p.read_bytes()
    assert b"/Count 1" in data
    p.write_bytes(data.replace(b"/Count 1", b"/Count 2000000000", 1))
    with bounded(10.0):
        try:
            read_schedule(p)
        except IngestError as exc:
            assert str(p) in str(exc)


# ---------------------------------------------------------------------------------------------
# Rule files, profiles and mapping files: refused with file, rule id and reason, in bounded time,
# and never running anything
# ---------------------------------------------------------------------------------------------

_WATCH: dict[str, object] = {"on": False, "events": []}
_SUSPECT = ("exec", "os.system", "subprocess.Popen", "os.exec", "os.posix_spawn", "os.spawn", "os.fork",
            "ctypes.dlopen", "socket.connect", "urllib.Request", "builtins.input", "os.remove")


def _audit(event: str, args: tuple) -> None:
    if not _WATCH["on"]:
        return
    if event == "exec":
        # importing a module from a file (a codec, say) executes that file's code: not a payload;
        # code compiled from text (eval, exec of a string) has a file name like '<string>'
        code = args[0] if args else None
        if str(getattr(code, "co_filename", "<?>")).startswith("<"):
            _WATCH["events"].append((event, str(args)[:120]))  # type: ignore[union-attr]
    elif event in _SUSPECT or (event == "open" and "SENTINEL" in str(args[0] if args else "")):
        _WATCH["events"].append((event, str(args)[:120]))  # type: ignore[union-attr]


_HOOKED: list[bool] = []


@contextlib.contextmanager
def nothing_runs(tmp_path: Path):
    """No code runs while the block loads a file: no exec of a code object, no process, no socket,
    no file opened by the payloads (audit hooks, PEP 578), and the payloads' sentinel file never
    appears."""
    if not _HOOKED:
        sys.addaudithook(_audit)
        _HOOKED.append(True)
    sentinel = tmp_path / "SENTINEL"
    _WATCH["events"] = []
    _WATCH["on"] = True
    try:
        yield sentinel
    finally:
        _WATCH["on"] = False
    assert _WATCH["events"] == [], _WATCH["events"]
    assert not sentinel.exists()


def rule_text(rid: str = "evil", **fields: str) -> str:
    body = {"id": f'"{rid}"', "title": '"t"', "clause": '"common practice"', "severity": '"advisory"',
            "value": '"piles"', "compare": '"<="', "limit": '"1"'}
    body.update(fields)
    return "[[rule]]\n" + "".join(f"{k} = {v}\n" for k, v in body.items())


def _payloads(sentinel: Path) -> dict[str, tuple[dict[str, str], str]]:
    s = str(sentinel)
    return {
        "open-sentinel": ({"value": f"\"open('{s}', 'w')\""}, "not allowed"),
        "system": ({"value": f"\"__import__('os').system('touch {s}')\""}, "attribute access"),
        "deep-nesting": ({"value": '"' + "abs(" * 60 + "piles" + ")" * 60 + '"'}, "nested deeper"),
        "deep-arithmetic": ({"limit": '"' + "(1 + " * 40 + "piles" + ")" * 40 + '"'}, "nested deeper"),
        "very-long": ({"value": '"' + " + ".join(["piles"] * 3000) + '"'}, "characters long"),
        "huge-exponent-chain": ({"value": '"9**9**9**9"'}, "exponent"),
        "huge-exponent-float": ({"limit": '"piles ** 1e300"'}, "larger than"),
        "negative-huge-exponent": ({"limit": '"piles ** -400"'}, "exponent"),
        "exponent-expression": ({"limit": '"piles ** (2 * 200)"'}, "plain number"),
        "unknown-name": ({"value": '"pile_diameter"'}, "unknown name"),
        "unknown-field": ({"evil": '"x"'}, "Extra inputs are not permitted"),
        "unknown-check-field": ({"check": '[{value = "piles", compare = "<=", limit = "1", run = "x"}]',
                                 "value": '""', "limit": '""'}, "Extra inputs"),
        "wrong-type-severity": ({"severity": "3"}, "severity"),
        "wrong-type-title": ({"title": '["a", "b"]'}, "title"),
        "wrong-type-working": ({"working": '"not a list"'}, "working"),
        "wrong-type-value": ({"value": "1.5"}, "value"),
        "bad-compare": ({"compare": '"=="'}, "compare"),
        "placeholder-attribute": ({"message": '"{value.__class__.__mro__}"'}, "placeholder"),
        "placeholder-index": ({"message": '"{value[0]}"'}, "placeholder"),
        "placeholder-conversion": ({"message": '"{value!r}"'}, "conversions"),
        "dunder-name": ({"value": '"__builtins__"'}, "'_'"),
        "lambda": ({"value": '"(lambda: 0)()"'}, "not allowed"),
        "generator": ({"value": '"sum(x for x in piles)"'}, "not allowed"),
        "walrus": ({"value": '"(p := piles)"'}, "assignment"),
        "starred": ({"value": '"max(*piles)"'}, "starred"),
        "string-constant": ({"value": "\"'x' * 10**9\""}, "numbers"),
    }


def test_hostile_rule_corpus_is_refused_with_file_rule_and_reason(tmp_path):
    with nothing_runs(tmp_path) as sentinel:
        for case, (fields, reason) in _payloads(sentinel).items():
            p = tmp_path / f"{case}.toml"
            p.write_text(rule_text(f"evil-{case}", **fields), encoding="utf-8")
            t = time.perf_counter()
            with pytest.raises(RuleFileError) as info:
                load_rule_file(p, KNOWN)
            assert time.perf_counter() - t < 2.0, case
            msg = str(info.value)
            assert str(p) in msg and f"evil-{case}" in msg and reason in msg, (case, msg)


def test_duplicate_ids_across_two_files_of_a_rules_folder(tmp_path):
    folder = tmp_path / "rules"
    folder.mkdir()
    (folder / "a.toml").write_text(rule_text("site-extra"))
    (folder / "b.toml").write_text(rule_text("site-extra"))
    with nothing_runs(tmp_path), bounded(2.0):
        with pytest.raises(RuleFileError) as info:
            load_ruleset(rules_dir=folder)
    msg = str(info.value)
    assert "b.toml" in msg and "a.toml" in msg and "'site-extra'" in msg and "already defined" in msg


def test_a_hostile_file_in_a_rules_folder_stops_the_load(tmp_path):
    folder = tmp_path / "rules"
    folder.mkdir()
    (folder / "site.toml").write_text(rule_text("site-x", value='"__import__(\'os\')"'))
    with nothing_runs(tmp_path), bounded(2.0):
        with pytest.raises(RuleFileError, match=r"site\.toml: rule 'site-x'"):
            load_ruleset(rules_dir=folder)


def test_a_10_mb_rule_file_is_refused_by_its_size(tmp_path, monkeypatch):
    p = tmp_path / "big.toml"
    with open(p, "w") as fh:
        fh.write(rule_text("big"))
        for _ in range(10 * 1024):
            fh.write("#" * 1023 + "\n")
    assert p.stat().st_size > 10 * 2 ** 20
    with nothing_runs(tmp_path), bounded(2.0):
        with pytest.raises(RuleFileError) as info:
            load_rule_file(p, KNOWN)
    assert str(p) in str(info.value) and "larger than" in str(info.value)


def test_toml_bomb_of_a_dotted_key_inside_an_inline_table_is_refused_quickly(tmp_path):
    p = tmp_path / "inline-dotted.toml"
    p.write_text(rule_text("inl") + "x = {" + ".".join(["a"] * 100_000) + " = 1}\n")
    with deadline(2.0):
        with pytest.raises(RuleFileError) as info:
            load_rule_file(p, KNOWN)
    assert str(p) in str(info.value)


@pytest.mark.parametrize("kind", ["inline-tables", "arrays", "check-arrays"])
def test_toml_bombs_of_nesting_are_refused(tmp_path, kind):
    depth = 50_000
    text = {
        "inline-tables": "x = " + "{a = " * depth + "1" + "}" * depth + "\n",
        "arrays": "x = " + "[" * depth + "]" * depth + "\n",
        "check-arrays": rule_text("nest", value="[" * depth + "]" * depth),
    }[kind]
    p = tmp_path / f"{kind}.toml"
    p.write_text(text)
    with nothing_runs(tmp_path), bounded(2.0):
        with pytest.raises(RuleFileError) as info:
            load_rule_file(p, KNOWN)
    assert str(p) in str(info.value)


def test_toml_bomb_of_a_deeply_dotted_table_is_refused_quickly(tmp_path):
    p = tmp_path / "dotted.toml"
    p.write_text("[" + ".".join(["rule"] * 60_000) + "]\n")
    with deadline(2.0):
        with pytest.raises(RuleFileError) as info:
            load_rule_file(p, KNOWN)
    assert str(p) in str(info.value)


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="named pipes need a POSIX system")
def test_a_pipe_in_a_rules_folder_is_refused(tmp_path):
    folder = tmp_path / "rules"
    folder.mkdir()
    os.mkfifo(folder / "site.toml")
    with deadline(2.0):
        with pytest.raises(RuleFileError):
            load_ruleset(rules_dir=folder)


def test_a_format_width_bomb_in_a_message_is_refused(tmp_path):
    p = tmp_path / "fmt.toml"
    p.write_text(rule_text("fmt", message='"{value:>9999999999}"'))
    res = in_subprocess(f"""
        from pathlib import Path
        from checker.ruleset.catalogue import QUANTITIES
        from checker.ruleset.loader import RuleFileError, load_rule_file
        try:
            load_rule_file(Path({str(p)!r}), set(QUANTITIES))
        except RuleFileError as exc:
            print("refused:", exc)
        else:
            print("loaded")
    """, mib=768, timeout=60)
    assert res.stdout.startswith("refused:"), (res.returncode, res.stdout, res.stderr[-500:])


def test_hostile_profiles(tmp_path):
    folder = tmp_path / "rules"
    (folder / "profiles").mkdir(parents=True)
    (folder / "profiles" / "loop-a.toml").write_text('name = "loop-a"\nextends = "loop-b"\n')
    (folder / "profiles" / "loop-b.toml").write_text('name = "loop-b"\nextends = "loop-a"\n')
    (folder / "profiles" / "dunder.toml").write_text('name = "dunder"\nextends = "uk-na"\n'
                                                      '[params.__class__]\nvalue = 1\n')
    (folder / "profiles" / "ok-sev.toml").write_text('name = "ok-sev"\nextends = "uk-na"\n'
                                                      '[severity]\n"pile-spacing" = "ok"\n')
    with nothing_runs(tmp_path):
        for name, reason in (("loop-a", "more than 5 levels"), ("dunder", "not a plain name"),
                             ("ok-sev", "severity for 'pile-spacing'")):
            with bounded(2.0), pytest.raises(RuleFileError, match=reason):
                load_ruleset(name, rules_dir=folder)


@pytest.mark.parametrize("kind, phrase", [
    ("dotted", "a line of"),
    ("inline-dotted", "a line of"),
    ("inline", "nested too deeply"),
    ("big", "larger than the limit"),
    ("binary", "cannot read the mapping file"),
])
def test_hostile_mapping_files(tmp_path, kind, phrase):
    p = tmp_path / "map.toml"
    if kind == "dotted":
        p.write_text("[headings." + ".".join(["a"] * 60_000) + "]\n")
    elif kind == "inline-dotted":
        p.write_text("[headings]\nx = {" + ".".join(["a"] * 100_000) + " = 1}\n")
    elif kind == "inline":
        p.write_text("[headings]\nx = " + "{a = " * 1_500 + "1" + "}" * 1_500 + "\n")
    elif kind == "big":
        p.write_text("[headings]\n" + "".join(f'"h{i}" = "mark"\n' for i in range(30_000)))
    else:
        p.write_bytes(b"\xff\xfe\x00\x00garbage")
    with nothing_runs(tmp_path), bounded(2.0):
        with pytest.raises(IngestError) as info:
            load_mapping(p)
    assert str(p) in str(info.value) and phrase in str(info.value)
