"""CSV / XLSX / DataFrame ingest -> canonical frame and rejected rows (invented schedules only)."""

from __future__ import annotations

import csv
import io
import sys
import types
import zipfile
from pathlib import Path

import numpy as np
import openpyxl
import pandas as pd
import pytest

from checker.ingest.errors import IngestError
from checker.ingest.raw import RawTable
from checker.ingest.schedule import Schedule, read_schedule, schedule_from_frame
from checker.ingest.tabular import read_csv, read_xlsx
from checker.model import FRAME_COLUMNS

DATA = Path(__file__).parent / "data" / "ingest"
SCHEDULE_A = DATA / "schedule_a.csv"
PROVENANCE = ["src_file", "src_sheet", "src_page", "src_row"]


def check_counts(s: Schedule) -> None:
    assert s.rows_read == len(s.caps) + len(s.rejected) + len(s.skipped)
    assert list(s.caps.columns) == list(FRAME_COLUMNS)
    assert list(s.caps.index) == list(range(len(s.caps)))


def csv_rows(path: Path = SCHEDULE_A) -> list[list[str]]:
    with open(path, newline="", encoding="utf-8") as fh:
        return list(csv.reader(fh))


def as_cell(text: str):
    """A CSV cell as a spreadsheet would hold it: numbers as numbers, empty as None."""
    if text == "":
        return None
    for conv in (int, float):
        try:
            return conv(text)
        except ValueError:
            pass
    return text


def write_xlsx(path: Path, rows, *, title: str = "Caps", before: dict | None = None, after: dict | None = None):
    wb = openpyxl.Workbook()
    first = wb.active
    sheets = list((before or {}).items()) + [(title, rows)] + list((after or {}).items())
    for k, (name, content) in enumerate(sheets):
        ws = first if k == 0 else wb.create_sheet()
        ws.title = name
        for r in content:
            ws.append([as_cell(c) if isinstance(c, str) else c for c in r])
    wb.save(path)
    return path


# ---------------------------------------------------------------------------------------------
# The reference schedule
# ---------------------------------------------------------------------------------------------


def test_csv_schedule_with_title_units_spacers_and_notes():
    s = read_schedule(SCHEDULE_A)
    check_counts(s)
    assert s.rows_read == 6
    assert list(s.caps["mark"]) == ["PC1", "PC2", "PC5"]
    assert list(s.caps["src_row"]) == [5, 6, 10]                    # spreadsheet row numbers
    pc1 = s.caps.iloc[0]
    assert (pc1.cap_length, pc1.cap_width, pc1.cap_depth) == (2700, 2700, 1200)
    assert pc1.n_ed == 4.5e6 and pc1.mx_ed == 120e6 and pc1.fck == 32 and pc1.fyk == 500
    assert (pc1.nx, pc1.phi_x) == (12, 25) and np.isnan(pc1.sx)
    # H25@200 across L = 2700 with 75 cover: floor((2700 - 150 - 25)/200) + 1 = 13
    assert (pc1.ny, pc1.phi_y, pc1.sy) == (13, 25, 200)
    pc2 = s.caps.iloc[1]
    assert pc2.column_round and pc2.column_x == pc2.column_y == 600 and pc2.exposure == "XC2"
    assert np.isnan(pc2.mx_ed)
    pc5 = s.caps.iloc[2]
    assert pc5.mx_ed == 1.5e6                                       # "1,5" kNm: a decimal comma
    assert pc5.concrete == "C28/35" and (pc5.column_x, pc5.column_y) == (500, 500)
    assert "Remarks" in s.unmapped


def test_broken_rows_are_rejected_with_every_reason_and_their_row():
    s = read_schedule(SCHEDULE_A)
    by_row = {r.source["row"]: r for r in s.rejected}
    assert sorted(by_row) == [7, 9, 11]
    assert by_row[7].source == {"file": str(SCHEDULE_A), "sheet": None, "page": None, "row": 7}
    (e7,) = by_row[7].errors
    assert e7.startswith("bars_x (column 'Bottom bars X'): '2 layers 8H20'") and "out of scope" in e7
    e9 = by_row[9].errors
    assert any(e.startswith("concrete (column 'Concrete'): 'C33/41'") for e in e9)
    assert any(e.startswith("bars_y (column 'Bottom bars Y'): '8H11'") for e in e9)
    assert len(e9) == 2
    e11 = by_row[11].errors
    assert any("'PC1' repeats the mark of row 5" in e for e in e11)
    assert any(e == "n_ed (column 'NEd (kN)'): -4500 kN must be greater than 0" for e in e11)


def test_csv_and_xlsx_give_identical_frames(tmp_path):
    rows = csv_rows()
    book = write_xlsx(tmp_path / "schedule_a.xlsx", rows, before={"Notes": [["General notes"], ["none"]]})
    a = read_schedule(SCHEDULE_A)
    b = read_schedule(book)
    check_counts(b)
    assert 'sheet "Notes" skipped: no schedule headings' in b.notes
    pd.testing.assert_frame_equal(a.caps.drop(columns=PROVENANCE), b.caps.drop(columns=PROVENANCE))
    assert list(b.caps["src_sheet"]) == ["Caps"] * 3 and list(b.caps["src_row"]) == [5, 6, 10]
    assert [r.source["row"] for r in b.rejected] == [7, 9, 11]
    # the same reasons; the workbook names the sheet where the repeated mark first appears
    assert [r.errors for r in a.rejected] == [
        tuple(e.replace('sheet "Caps", ', "") for e in r.errors) for r in b.rejected]


def test_schedule_from_frame_matches_the_file():
    rows = csv_rows()
    head = [f"{h} {u}".strip() for h, u in zip(rows[2], rows[3])]
    data = [r for r in rows[4:11] if any(r)]
    df = pd.DataFrame([[as_cell(c) for c in r] for r in data], columns=head)
    s = schedule_from_frame(df, source="frame")
    check_counts(s)
    a = read_schedule(SCHEDULE_A)
    pd.testing.assert_frame_equal(a.caps.drop(columns=PROVENANCE), s.caps.drop(columns=PROVENANCE))
    assert list(s.caps["src_row"]) == [2, 3, 6]                     # headings in row 1
    assert s.caps["src_file"].iat[0] == "frame"


def test_canonical_names_map_too():
    df = pd.DataFrame([{"mark": "PC1", "piles": 1, "pile_dia": 900, "cap_length": 1500, "cap_width": 1500,
                        "cap_depth": 1200, "column": "600", "n_ed": 1800, "concrete": "C32/40", "cover": 75,
                        "bars_x": "8H20", "bars_y": "8H20"}])
    s = schedule_from_frame(df)
    assert s.rejected == [] and s.caps["n_ed"].iat[0] == 1.8e6      # n_ed read in kN, as written


# ---------------------------------------------------------------------------------------------
# CSV dialects and encodings
# ---------------------------------------------------------------------------------------------


@pytest.mark.parametrize("delimiter", [",", ";", "\t", "|"])
def test_delimiters_are_sniffed(tmp_path, delimiter):
    p = tmp_path / "s.csv"
    with open(p, "w", newline="", encoding="utf-8") as fh:
        csv.writer(fh, delimiter=delimiter).writerows(csv_rows())
    s = read_schedule(p)
    assert list(s.caps["mark"]) == ["PC1", "PC2", "PC5"] and s.caps["mx_ed"].iat[2] == 1.5e6


def test_bom_and_mixed_line_endings(tmp_path):
    text = SCHEDULE_A.read_text(encoding="utf-8")
    lines = text.split("\n")
    mixed = "".join(line + ("\r\n" if i % 3 == 0 else "\r" if i % 3 == 1 else "\n") for i, line in enumerate(lines))
    p = tmp_path / "bom.csv"
    p.write_bytes(b"\xef\xbb\xbf" + mixed.encode("utf-8"))
    s = read_schedule(p)
    assert list(s.caps["mark"]) == ["PC1", "PC2", "PC5"] and list(s.caps["src_row"]) == [5, 6, 10]
    assert not any("cp1252" in n for n in s.notes)


def test_cp1252_fallback_is_noted(tmp_path):
    text = "Mark,Ø pile (mm),Piles,Spacing,L x W x D,Column,NEd,Concrete,Cover,Bars X,Bars Y\n" \
           "PC1,600,4,1800,2700 x 2700 x 1200,600×600,4500,C32/40,75,12Ø25,12Ø25\n"
    p = tmp_path / "win.csv"
    p.write_bytes(text.encode("cp1252"))
    s = read_schedule(p)
    assert s.rejected == [] and s.caps["phi_x"].iat[0] == 25 and s.caps["pile_dia"].iat[0] == 600
    assert any("cp1252" in n for n in s.notes)


def test_utf16_with_bom(tmp_path):
    buf = io.StringIO()
    csv.writer(buf, delimiter="\t").writerows(csv_rows())
    p = tmp_path / "u16.txt"
    p.write_bytes(buf.getvalue().encode("utf-16"))
    assert len(read_schedule(p).caps) == 3


# ---------------------------------------------------------------------------------------------
# Headings over two rows, sheets, coordinates
# ---------------------------------------------------------------------------------------------


def test_group_heading_over_two_rows_xlsx(tmp_path):
    rows = [
        ["Schedule of pile caps"],
        [],
        ["Mark", "Piles", "Pile dia", "Spacing", "Length", "Width", "Depth", "Column", "NEd", "Concrete",
         "Cover", "Bottom bars", None],
        [None, None, "(mm)", "(mm)", "(mm)", "(mm)", "(mm)", None, "(kN)", None, "(mm)", "X", "Y"],
        ["PC7", 2, 750, 2250, 3300, 1200, 1300, "650 x 650", 3000, "C35/45", 75, "7H25", "H16@200"],
    ]
    s = read_schedule(write_xlsx(tmp_path / "g.xlsx", rows))
    assert s.rejected == [], s.rejected
    fields = {m.heading: m.field for m in s.matches}
    assert fields["Bottom bars X"] == "bars_x" and fields["Bottom bars Y"] == "bars_y"
    assert s.caps["src_row"].iat[0] == 5 and s.caps["ny"].iat[0] == 16   # floor((3300-150-16)/200)+1


def test_xlsx_sheets_hidden_and_coordinates(tmp_path):
    rows = csv_rows()[2:5] + [["PC9", None, 600, None, "3000 x 3600 x 1200", "600", 5000, None, "C32/40", 75,
                              "12H25", "12H25", "XC2", ""]]
    book = tmp_path / "c.xlsx"
    write_xlsx(book, rows, before={"Old": rows}, after={"Pile positions": csv_rows(DATA / "coords_a.csv")})
    wb = openpyxl.load_workbook(book)
    wb["Old"].sheet_state = "hidden"
    wb.save(book)
    s = read_schedule(book)
    check_counts(s)
    assert 'sheet "Old" skipped: hidden' in s.notes
    assert list(s.coords["mark"]) == ["PC9"] * 4
    pc9 = s.caps.set_index("mark").loc["PC9"]
    assert pc9.piles == 4                                           # the count of positions
    assert pc9.pile_spacing == pytest.approx(np.hypot(1200, 1500))  # least centres, noted
    assert any("PC9: pile_spacing taken as the least pile centres" in n for n in s.notes)


def test_coordinates_file_and_a_piles_mismatch(tmp_path):
    p = tmp_path / "s.csv"
    p.write_text("Mark,Piles,Pile dia,Size,Column,NEd,Concrete,Cover,Bars X,Bars Y\n"
                 "PC9,3,600,3000 x 3600 x 1200,600,5000,C32/40,75,12H25,12H25\n", encoding="utf-8")
    s = read_schedule(p, coords=DATA / "coords_a.csv")
    assert s.caps.empty
    (err,) = s.rejected[0].errors
    assert err == "piles (column 'Piles'): 3 but the pile coordinates give 4 positions for 'PC9'"


def test_bad_coordinate_rows_reject_their_cap(tmp_path):
    c = tmp_path / "xy.csv"
    c.write_text("mark,x,y\nPC9,0,0\nPC9,1200,abc\n", encoding="utf-8")
    p = tmp_path / "s.csv"
    p.write_text("Mark,Piles,Pile dia,Size,Column,NEd,Concrete,Cover,Bars X,Bars Y\n"
                 "PC9,,600,3000 x 3600 x 1200,600,5000,C32/40,75,12H25,12H25\n", encoding="utf-8")
    s = read_schedule(p, coords=c)
    assert s.caps.empty and "row 3: y (column 'y'): 'abc' is not a number" in s.rejected[0].errors[0]


# ---------------------------------------------------------------------------------------------
# Row problems
# ---------------------------------------------------------------------------------------------

HEAD = "Mark,Piles,Pile dia,Spacing,L,W,Depth,Size,Column,NEd,Concrete,Cover,Bars X,Bars Y,fyk\n"


def _one(tmp_path, line: str, head: str = HEAD) -> Schedule:
    p = tmp_path / "one.csv"
    p.write_text(head + line + "\n", encoding="utf-8")
    s = read_schedule(p)
    check_counts(s)
    return s


def test_all_reasons_of_a_row(tmp_path):
    s = _one(tmp_path, "PC1,four,600,1800,2700,2700,,,6OOx600,4500,C32/40,75,12H25,12H25,")
    errs = s.rejected[0].errors
    assert "piles (column 'Piles'): 'four' is not a number" in errs
    assert any(e.startswith("column (column 'Column'): '6OOx600'") for e in errs)
    assert "cap_depth (column 'Depth'): missing" in errs
    assert len(errs) == 3


def test_required_field_without_a_column(tmp_path):
    s = _one(tmp_path, "PC1,4,600,1800,2700,2700,1200,,600,4500,C32/40,12H25,12H25",
             head="Mark,Piles,Pile dia,Spacing,L,W,Depth,Btm cvr,Column,NEd,Concrete,Bars X,Bars Y\n")
    assert s.rejected[0].errors == ("cover: not given (the table has no column for it; see the table's problem)",)
    (problem,) = s.problems                              # said once, at the table, with the hint
    assert problem.source["row"] == 1 and problem.errors[0].startswith("no column maps to cover")
    assert "'Btm cvr'" in problem.errors[0] and '"Btm cvr" = "cover"' in problem.errors[0]


def test_size_and_separate_dimensions(tmp_path):
    ok = _one(tmp_path, "PC1,4,600,1800,,,,2700 x 2700 x 1200,600,4500,C32/40,75,12H25,12H25,B500B")
    assert ok.rejected == [] and ok.caps["cap_depth"].iat[0] == 1200 and ok.caps["fyk"].iat[0] == 500
    bad = _one(tmp_path, "PC1,4,600,1800,2800,,,2700 x 2700 x 1200,600,4500,C32/40,75,12H25,12H25,")
    assert bad.rejected[0].errors == (
        "cap_length (column 'L'): 2800 mm disagrees with 2700 mm in size (column 'Size')",)


def test_spacing_form_derives_bar_count(tmp_path):
    s = _one(tmp_path, "PC1,4,600,1800,2700,2400,1200,,600,4500,C32/40,75,H25@150,H20-200 B2,460")
    cap = s.caps.iloc[0]
    # floor((2400 - 2*75 - 25)/150) + 1 = 15 across W; floor((2700 - 150 - 20)/200) + 1 = 13 across L
    assert (cap.nx, cap.sx, cap.ny, cap.sy, cap.fyk) == (15, 150, 13, 200, 460)


def test_derived_field_errors_quote_the_cell(tmp_path):
    # a 310 mm wide cap cannot take one H25 inside 150 mm covers: floor((310 - 300 - 25)/150) + 1 = 0
    s = _one(tmp_path, "PC1,4,600,1800,2700,310,1200,,300,4500,C32/40,150,H25@150,12H25,")
    errs = s.rejected[0].errors
    assert "nx (from 'H25@150' in column 'Bars X'): 0 must be at least 1" in errs, errs


def test_spacing_required_for_two_or_more_piles(tmp_path):
    s = _one(tmp_path, "PC1,2,600,,2700,900,1000,,600,2500,C32/40,75,6H25,H16@200,")
    assert s.rejected[0].errors == ("pile_spacing (column 'Spacing'): missing; required for 2 piles",)


def test_placeholders_are_blank(tmp_path):
    s = _one(tmp_path, "PC1,1,900,-,1500,1500,1200,n/a,600,1800,C32/40,75,8H20,8H20,—")
    assert s.rejected == [] and np.isnan(s.caps["pile_spacing"].iat[0]) and s.caps["fyk"].iat[0] == 500


# ---------------------------------------------------------------------------------------------
# Mapping files, PDF dispatch
# ---------------------------------------------------------------------------------------------


def test_mapping_file(tmp_path):
    with pytest.raises(IngestError, match="no recognisable heading row"):
        read_schedule(DATA / "mapped_a.csv")
    s = read_schedule(DATA / "mapped_a.csv", mapping=DATA / "headings_a.toml")
    check_counts(s)
    cap = s.caps.iloc[0]
    assert s.rejected == [] and cap.pile_dia == 600 and cap.n_ed == 4.5e6
    assert s.unmapped == [] and {m.how for m in s.matches} == {"mapping file"}


def test_pdf_is_read_through_the_pdf_module(monkeypatch, tmp_path):
    calls = {}

    def fake_read_pdf_tables(path, *, strategy="auto", max_pages=None, progress=None):
        calls.update(path=path, strategy=strategy, max_pages=max_pages)
        rows = [r[:12] for r in csv_rows()[4:7]]
        head = ["Cap ref", "No. of piles", "Pile dia", "Spacing", "Size (L x W x D)", "Column", "NEd (kN)",
                "Mx (kNm)", "Concrete", "Cover", "Bottom bars X", "Bottom bars Y"]
        return [RawTable(str(path), None, head, rows, pages=[2, 2, 3], row_numbers=[1, 2, 1])], ["page 1 skipped"]

    monkeypatch.setitem(sys.modules, "checker.ingest.pdf",
                        types.SimpleNamespace(read_pdf_tables=fake_read_pdf_tables))
    pdf = tmp_path / "s.pdf"
    pdf.write_bytes(b"%PDF-1.4\n")
    s = read_schedule(pdf, pdf_strategy="ruled", max_pages=5)
    assert calls == {"path": str(pdf), "strategy": "ruled", "max_pages": 5}
    check_counts(s)
    assert list(s.caps["src_page"]) == [2, 2] and list(s.caps["src_row"]) == [1, 2]
    assert s.rejected[0].source == {"file": str(pdf), "sheet": None, "page": 3, "row": 1}
    assert "page 1 skipped" in s.notes


# ---------------------------------------------------------------------------------------------
# Files that cannot be read
# ---------------------------------------------------------------------------------------------


def _corrupt_zip(p: Path) -> None:
    with zipfile.ZipFile(p, "w") as z:
        z.writestr("hello.txt", "not a workbook")


BAD_FILES = [
    ("s.xlsx", b"Mark,Piles\nPC1,4\n", "not an XLSX workbook"),
    ("s.xlsx", b"PK\x03\x04 this is not really a zip", "corrupt"),
    ("s.xlsx", _corrupt_zip, "not a readable XLSX"),
    ("s.xlsx", b"", "empty"),
    ("s.csv", b"", "empty"),
    ("s.csv", b"   \r\n\r\n", "empty"),
    ("s.csv", b"PK\x03\x04\x14\x00", "zip archive"),
    ("s.csv", b"%PDF-1.7 ...", "is a PDF"),
    ("s.csv", b"a\x00b\x00c,d\n", "binary"),
    ("s.csv", b"Drawing register\nDrg no,Title,Rev\n100,GA,C\n", "no recognisable heading row"),
    ("s.xls", b"\xd0\xcf\x11\xe0", "old .xls"),
    ("s.docx", b"whatever", "unknown file type"),
]


@pytest.mark.parametrize("name,content,fragment", BAD_FILES)
def test_bad_files(tmp_path, name, content, fragment):
    p = tmp_path / name
    if callable(content):
        content(p)
    else:
        p.write_bytes(content)
    with pytest.raises(IngestError) as exc:
        read_schedule(p)
    assert fragment in str(exc.value) and str(p) in str(exc.value)


def test_workbook_without_a_schedule_sheet(tmp_path):
    book = write_xlsx(tmp_path / "n.xlsx", [["Notes"], ["nothing here"]], title="Notes")
    with pytest.raises(IngestError, match="no recognisable heading row"):
        read_xlsx(book)


def test_missing_file(tmp_path):
    with pytest.raises(IngestError, match="not found"):
        read_schedule(tmp_path / "nope.csv")


def test_read_csv_returns_a_rawtable():
    (table,), notes = read_csv(SCHEDULE_A)
    assert table.headings[:3] == ["Cap ref", "No. of piles", "Pile dia (mm)"]
    assert table.row_numbers == [5, 6, 7, 9, 10, 11] and table.sheet is None
    assert notes == [f"{SCHEDULE_A}: blank row(s) inside the table skipped (row 8)"]


# ---------------------------------------------------------------------------------------------
# Size
# ---------------------------------------------------------------------------------------------


def test_100k_rows_from_a_frame_in_under_3_s():
    rng = np.random.default_rng(7)
    n = 100_000
    bars = [f"{k}H{d}" for k in (8, 10, 12, 14) for d in (16, 20, 25, 32)] + \
           [f"H{d}@{s}" for d in (16, 20, 25) for s in (150, 200)]
    piles = rng.integers(1, 7, n)
    df = pd.DataFrame({
        "Cap ref": [f"PC{i}" for i in range(n)],
        "No. of piles": piles,
        "Pile dia (mm)": rng.choice([450, 600, 750], n),
        "Spacing (mm)": np.where(piles > 1, 2400.0, np.nan),
        "Size (L x W x D)": rng.choice(["3300 x 3300 x 1400", "2700 x 900 x 1000", "4800 x 3000 x 1500"], n),
        "Column": rng.choice(["600x600", "D600", "500 x 400", "700"], n),
        "NEd (kN)": rng.uniform(500, 9000, n).round(1),
        "Mx (kNm)": rng.uniform(0, 300, n).round(1),
        "Concrete": rng.choice(["C32/40", "C40/50", "c30/37"], n),
        "Cover (mm)": 75,
        "Bottom bars X": rng.choice(bars, n),
        "Bottom bars Y": rng.choice(bars, n),
    })
    df.loc[::1000, "Bottom bars X"] = "2 layers 8H20"
    s = schedule_from_frame(df)  # timing: tests/benchmarks/bench_engine.py
    check_counts(s)
    assert len(s.rejected) == 100


# ---------------------------------------------------------------------------------------------
# More shapes of a schedule
# ---------------------------------------------------------------------------------------------

BASE_HEAD = "Mark,Piles,Pile dia,Spacing,L,W,Depth,Column,NEd,Concrete,Cover,Bars X,Bars Y"
BASE_ROW = "PC1,4,600,1800,2700,2700,1200,600,4500,C32/40,75,12H25,12H25"


def test_a_bad_dimension_is_reported_once(tmp_path):
    s = _one(tmp_path, BASE_ROW.replace("2700,2700", "abc,2700"), head=BASE_HEAD + "\n")
    assert s.rejected[0].errors == ("cap_length (column 'L'): 'abc' is not a number",)


def test_no_column_for_the_dimensions(tmp_path):
    head = "Mark,Piles,Pile dia,Spacing,Column,NEd,Concrete,Cover,Bars X,Bars Y\n"
    s = _one(tmp_path, "PC1,4,600,1800,600,4500,C32/40,75,12H25,12H25", head=head)
    assert [e.split(":")[0] for e in s.rejected[0].errors] == ["cap_length", "cap_width", "cap_depth"]
    assert all("not given" in e for e in s.rejected[0].errors)


def test_fck_column_instead_of_a_class_and_separate_column_sizes(tmp_path):
    head = "Mark,Piles,Pile dia,Spacing,Size,Col x,Col y,NEd,fck,Cover,Bars X,Bars Y,Bar ends\n"
    s = _one(tmp_path, "PC1,4,600,1800,2700x2700x1200,600,400,4500,32,75,12H25,12H25,bent up", head=head)
    cap = s.caps.iloc[0]
    assert (cap.concrete, cap.fck, cap.column_x, cap.column_y, cap.bar_ends) == ("C32/40", 32, 600, 400, "bent")
    bad = _one(tmp_path, "PC1,4,600,1800,2700x2700x1200,600,400,4500,33,75,12H25,12H25,wiggly", head=head)
    errs = bad.rejected[0].errors
    assert "fck (column 'fck'): 33 MPa is not the cylinder strength of a known class" in errs[1]
    assert errs[0].startswith("bar_ends (column 'Bar ends'): 'wiggly' is not a bar end detail")


def test_repeated_heading_rows_blank_columns_and_rows_after_the_notes(tmp_path):
    p = tmp_path / "r.csv"
    p.write_text("\n".join([
        BASE_HEAD + ",,", BASE_ROW + ",,", BASE_HEAD + ",,", BASE_ROW.replace("PC1", "PC2") + ",,",
        "", "Notes: loads are ULS", BASE_ROW.replace("PC1", "PC3")]) + "\n", encoding="utf-8")
    s = read_schedule(p)
    check_counts(s)
    assert list(s.caps["mark"]) == ["PC1", "PC2"] and list(s.caps["src_row"]) == [2, 4]
    assert len(s.tables[0].headings) == 13                           # trailing blank columns dropped
    assert any("1 row(s) below that look like schedule rows were not read (rows 7 to 7)" in n for n in s.notes)
    assert not any("no heading" in n for n in s.notes)
