"""Schedules as they really arrive (issue 11, items 3-8 and 11): every form a consultant's schedule
takes, and a regression test over a workbook made the way a consultant makes one (title block,
merged group headings, a units row, section labels, notes and a revision box, a hidden column and
rows, a struck-through row, two schedule sheets). Nothing is dropped without a named reason:
``rows_read == caps_checked + rows_rejected + rows_skipped`` and every mark written is accounted for.

Invented project, firm and marks only.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import openpyxl
import pandas as pd
import pytest
from openpyxl.styles import Font

import checker
from checker.cli import main
from checker.ingest.errors import IngestError
from checker.ingest.frame import read_defaults
from checker.ingest.headings import match_heading
from checker.ingest.notation import parse_bars
from checker.ingest.plausible import problem as plausible_problem
from checker.ingest.schedule import read_schedule, schedule_from_frame
from checker.report.json_out import to_document

HEAD = ["Mark", "Piles", "Pile dia", "Spacing", "L", "W", "Depth", "Column", "NEd", "Concrete", "Cover",
        "Bars X", "Bars Y"]
ROW = ["PX1", 4, 600, 1800, 2700, 2700, 1200, "600", 4500, "C32/40", 75, "12H25", "12H25"]


def frame(*rows, head=HEAD) -> pd.DataFrame:
    return pd.DataFrame([list(r) for r in rows], columns=head, dtype=object)


def row(**over) -> list:
    r = dict(zip(HEAD, ROW))
    r.update(over)
    return [r[h] for h in HEAD]


def accounted(s) -> None:
    assert s.rows_read == len(s.caps) + len(s.rejected) + len(s.skipped)


# ---------------------------------------------------------------------------------------------
# 3. Single-pile caps
# ---------------------------------------------------------------------------------------------

@pytest.mark.parametrize("spacing", [0, "0", None, "-", "\u2013", "n/a"])
def test_one_pile_takes_a_spacing_of_0_blank_or_a_dash(spacing):
    s = schedule_from_frame(frame(row(Piles=1, **{"Pile dia": 900, "Spacing": spacing, "L": 1500, "W": 1500,
                                                  "Bars X": "8H20", "Bars Y": "8H20"})))
    assert s.rejected == [] and np.isnan(s.caps["pile_spacing"].iat[0])


@pytest.mark.parametrize("piles", [2, 4])
def test_a_spacing_of_0_is_still_refused_for_two_or_more_piles(piles):
    s = schedule_from_frame(frame(row(Piles=piles, Spacing=0)))
    assert len(s.rejected) == 1
    assert any(e.startswith("pile_spacing (column 'Spacing'): 0 mm must be greater than 0")
               for e in s.rejected[0].errors)


# ---------------------------------------------------------------------------------------------
# 4. Rejected rows carry their mark
# ---------------------------------------------------------------------------------------------

def test_a_rejected_row_carries_its_mark_everywhere(findings_json):
    df = frame(row(), row(Mark="PX2", **{"Pile dia": "six hundred"}), row(Mark=None, Depth="abc"))
    rv = checker.review(df)
    assert [r.mark for r in rv.rejected] == ["PX2", ""]
    doc = findings_json(json.loads(json.dumps(to_document(rv))))
    assert doc["rejected"][0]["mark"] == "PX2" and "mark" not in doc["rejected"][1]
    assert doc["summary"]["rows_read"] == doc["summary"]["caps_checked"] + doc["summary"]["rows_rejected"] \
        + doc["summary"]["rows_skipped"]


def test_the_terminal_shows_the_mark_of_a_rejected_row(tmp_path, capsys):
    p = tmp_path / "s.csv"
    p.write_text(",".join(HEAD) + "\n" + ",".join(map(str, ROW)) + "\n"
                 + ",".join(map(str, row(Mark="PX2", Depth="abc"))) + "\n", encoding="utf-8")
    main(["check", str(p)])
    out = " ".join(capsys.readouterr().out.split())     # the console wraps long lines
    assert "row 3 PX2:" in out and "cap_depth (column 'Depth'): 'abc' is not a number" in out


# ---------------------------------------------------------------------------------------------
# 5. Problems of the whole table, once
# ---------------------------------------------------------------------------------------------

def test_a_column_missing_from_the_whole_table_is_reported_once_with_the_hint(tmp_path, capsys):
    head = [h if h != "Cover" else "Cvr to btm" for h in HEAD]
    p = tmp_path / "s.csv"
    p.write_text(",".join(head) + "\n" + "\n".join(",".join(map(str, row(Mark=f"PX{i}"))) for i in range(1, 6))
                 + "\n", encoding="utf-8")
    s = read_schedule(p)
    (prob,) = s.problems
    assert prob.source == {"file": str(p), "sheet": None, "page": None, "row": 1}
    assert "no column maps to cover" in prob.errors[0]
    assert '"Cvr to btm" = "cover"' in prob.errors[0]
    # each row says only that its table has no such column (a row-level reason stays per row)
    assert all(r.errors == ("cover: not given (the table has no column for it; see the table's problem)",)
               for r in s.rejected)
    main(["check", str(p)])
    out = capsys.readouterr().out
    assert out.count("no column maps to cover") == 1


# ---------------------------------------------------------------------------------------------
# 6. Headings and notations
# ---------------------------------------------------------------------------------------------

@pytest.mark.parametrize("heading, field", [
    ("Cap concrete grade", "concrete"), ("Cap Bars X", "bars_x"), ("Cap cover (mm)", "cover"),
    ("Pile cap L x W x D (mm)", "size"), ("Cap L x W x D", "size"), ("Cap dims (L x W x D)", "size"),
    ("Pile cap depth", "cap_depth"), ("Pile nominal dia", "pile_dia"), ("Pile c/c", "pile_spacing"),
    ("Cap NEd (kN)", "n_ed"),
])
def test_a_heading_that_names_the_element_first(heading, field):
    assert match_heading(heading)[0] == field


@pytest.mark.parametrize("heading", ["Pile depth", "Pile length", "Pile cover"])
def test_a_pile_heading_never_maps_to_a_field_of_the_cap(heading):
    assert match_heading(heading)[0] not in ("cap_depth", "cap_length", "cover", "mark")


@pytest.mark.parametrize("heading", ["d", "d (mm)", "Effective depth", "Effective depth d (mm)", "d eff"])
def test_d_is_the_designers_effective_depth_never_the_cap_depth(heading):
    assert match_heading(heading)[0] == "stated_d"


def test_y_is_a_high_yield_bar_prefix():
    assert parse_bars("14Y12") == parse_bars("14H12") and parse_bars("Y16@200").centres == 200


def test_units_row_and_title_rows(tmp_path):
    p = tmp_path / "s.csv"
    p.write_text("Harrowfield Business Park (fictitious)\nPile cap schedule, revision C\n\n"
                 + ",".join(HEAD) + "\n,,mm,mm,mm,mm,m,mm,MN,,mm,,\n"
                 + ",".join(map(str, row(Depth="1.2", NEd="4.5"))) + "\n", encoding="utf-8")
    s = read_schedule(p)
    assert s.rejected == [] and s.caps["cap_depth"].iat[0] == 1200 and s.caps["n_ed"].iat[0] == 4.5e6


def test_thousands_separators_in_a_consistent_load_column():
    s = schedule_from_frame(frame(row(NEd="4,500"), row(Mark="PX2", NEd="1,850"), row(Mark="PX3", NEd="950")))
    assert s.rejected == [] and list(s.caps["n_ed"]) == [4.5e6, 1.85e6, 0.95e6]
    assert any("thousands separator in 2 cell(s)" in n for n in s.notes)


@pytest.mark.parametrize("cells", [
    ("4,500", "1,5"),          # one comma followed by one digit: a decimal comma column
    ("4,500", "12,500"),       # 12.5 kN would be a plausible decimal
    ("4,50", "1,850"),         # a comma followed by two digits
])
def test_an_inconsistent_load_column_keeps_the_clear_refusal(cells):
    s = schedule_from_frame(frame(row(NEd=cells[0]), row(Mark="PX2", NEd=cells[1])))
    msgs = [e for r in s.rejected for e in r.errors]
    assert any("ambiguous" in e for e in msgs) or len(s.caps) < 2
    assert not any("thousands separator" in n for n in s.notes)


# ---------------------------------------------------------------------------------------------
# 7. Nothing dropped without an error (CSV forms; the workbook forms are in the regression test)
# ---------------------------------------------------------------------------------------------

def test_section_labels_and_blank_rows_inside_the_table(tmp_path):
    lines = [",".join(HEAD), "GRID A-C", ",".join(map(str, row())), "", "GRID D-F",
             ",".join(map(str, row(Mark="PX2"))), "", "", ",".join(map(str, row(Mark="PX3"))),
             "TOTAL,12", "Notes: loads are ULS"]
    p = tmp_path / "s.csv"
    p.write_text("\n".join(lines) + "\n", encoding="utf-8")
    s = read_schedule(p)
    accounted(s)
    assert list(s.caps["mark"]) == ["PX1", "PX2", "PX3"]
    assert [(k.source["row"], k.text) for k in s.skipped] == [(2, "GRID A-C"), (5, "GRID D-F")]
    assert any("blank row(s) inside the table skipped (row 4, 7)" in n for n in s.notes)


def test_a_formula_without_a_saved_value_is_named(tmp_path):
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.append(HEAD)
    ws.append(row())
    ws.append(row(Mark="PX2"))
    ws["G3"] = "=G2*1"                       # openpyxl saves no calculated value
    wb.save(tmp_path / "f.xlsx")
    s = read_schedule(tmp_path / "f.xlsx")
    (rej,) = s.rejected
    assert rej.mark == "PX2" and rej.errors == (
        "cap_depth (column 'Depth'): '=G2*1' is a formula saved without its calculated value (the workbook "
        "was written by a program that does not calculate); open it in a spreadsheet program, save it and "
        "read it again",)


def test_the_designers_d_is_compared_with_the_re_checked_d():
    head = HEAD + ["d (mm)"]
    # d_x = 1200 - 75 - 12.5 = 1112.5, d_y = 1200 - 75 - 25 - 12.5 = 1087.5 (README truss geometry): mean 1100
    rv = checker.review(frame(row() + [1100], row(Mark="PX2") + [900], head=head))
    assert list(rv.caps["cap_depth"]) == [1200, 1200]
    svc = rv.findings[rv.findings["rule"] == "stated-vs-checked"].set_index("cap")
    assert svc.loc["PX1", "severity"] == "ok"
    assert svc.loc["PX2", "severity"] == "query" and "effective depth d 900 mm against 1100 mm" in \
        svc.loc["PX2", "message"]


# ---------------------------------------------------------------------------------------------
# 8. Plausible ranges
# ---------------------------------------------------------------------------------------------

def test_a_unit_slip_is_refused_with_the_range_and_the_hint():
    s = schedule_from_frame(frame(row(), head=[h if h != "Depth" else "Depth (m)" for h in HEAD]))
    assert s.rejected[0].errors == (
        "cap_depth (column 'Depth (m)'): 1,200 m is outside the plausible range 200 to 5,000 mm; did you mean mm?",)
    assert plausible_problem("cap_depth", "length", 1100e3, "m", 1000.0) == \
        "1,100 m is outside the plausible range 200 to 5,000 mm; did you mean mm?"
    assert plausible_problem("n_ed", "force", 4.5e3, "kN", 1e3).endswith("did you mean MN?")
    assert plausible_problem("cap_depth", "length", 1200, "mm", 1.0) is None


def test_the_column_within_the_cap_and_bars_that_fit():
    s = schedule_from_frame(frame(row(Column="3000x600"), row(Mark="PX2", **{"Bars X": "140H12"})))
    by = {r.mark: r.errors for r in s.rejected}
    assert by["PX1"] == ("column (column 'Column'): 3000 x 600 mm does not fit within the cap plan 2700 x 2700 mm "
                         "(L x W)",)
    assert by["PX2"] == ("bars_x (column 'Bars X'): 140 bars of 12 mm do not fit across the cap width of 2700 mm "
                         "inside 75 mm covers at the least clear spacing of 20 mm (4460 mm needed, 2550 mm available)",)


# ---------------------------------------------------------------------------------------------
# 11. Project defaults
# ---------------------------------------------------------------------------------------------

def test_project_defaults_fill_blank_cells_and_missing_columns(tmp_path, capsys, findings_json):
    head = [h for h in HEAD if h != "Cover"] + ["Exposure"]
    p = tmp_path / "s.csv"
    cells = [row(), row(Mark="PX2")]
    p.write_text(",".join(head) + "\n" + "\n".join(
        ",".join(str(v) for h, v in zip(HEAD, r) if h != "Cover") + ("," if r[0] == "PX1" else ",XS1")
        for r in cells) + "\n", encoding="utf-8")
    proj = tmp_path / "project.toml"
    proj.write_text('project = "Harrowfield (fictitious)"\n[defaults]\nexposure = "XC2"\ncover = 75\n'
                    'concrete = "C32/40"\nfyk = 500\npile_type = "CFA"\nbar_ends = "bent"\n'
                    'methods = ["column-width"]\n', encoding="utf-8")
    assert main(["check", str(p), "--format", "json", "--project", str(proj)]) in (0, 1)
    doc = findings_json(json.loads(capsys.readouterr().out))
    assert doc["summary"]["caps_checked"] == 2 and doc["rejected"] == []
    assert any(n.startswith("exposure XC2 from the project file, for 1 cap(s)") and "(PX1)" in n for n in doc["notes"])
    assert any(n.startswith("cover 75 mm from the project file, for 2 cap(s)") for n in doc["notes"])
    main(["explain", str(p), "--cap", "PX1", "--project", str(proj)])
    out = capsys.readouterr().out
    assert "input: exposure XC2 from the project file" in out and "input: cover 75 mm from the project file" in out


def test_a_bad_default_names_the_file_and_the_key():
    with pytest.raises(IngestError, match=r"proj.toml: \[defaults\] concrete = 'C33/41'"):
        read_defaults({"concrete": "C33/41"}, "proj.toml")
    with pytest.raises(IngestError, match=r"'colour' is not a value"):
        read_defaults({"colour": "red"}, "proj.toml")


# ---------------------------------------------------------------------------------------------
# The regression workbook: made the way a consultant makes one
# ---------------------------------------------------------------------------------------------

STRIKE = Font(strike=True)


def consultant_workbook(path: Path) -> Path:
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Caps GL A-C"
    ws["A1"] = "Harrowfield Business Park, Unit 4 (fictitious)"
    ws["A2"] = "PILE CAP SCHEDULE - Rev B - Example Engineers (fictitious)"
    group = {"A4": "Mark", "B4": "PILES", "E4": "CAP", "H4": "Column", "I4": "ULS DESIGN ACTIONS",
             "M4": "Concrete", "N4": "Cover", "O4": "BOTTOM BARS", "Q4": "d", "R4": "Remarks"}
    for ref, v in group.items():
        ws[ref] = v
    for rng in ("A4:A5", "B4:D4", "E4:G4", "H4:H5", "I4:L4", "M4:M5", "N4:N5", "O4:P4", "Q4:Q5", "R4:R5"):
        ws.merge_cells(rng)
    sub = {"B5": "No.", "C5": "Dia", "D5": "Spacing", "E5": "L", "F5": "W", "G5": "D", "I5": "NEd", "J5": "NEd",
           "K5": "Mx", "L5": "My", "O5": "X", "P5": "Y"}
    for ref, v in sub.items():
        ws[ref] = v
    units = {"C6": "mm", "D6": "mm", "E6": "mm", "F6": "mm", "G6": "mm", "H6": "mm", "I6": "kN", "J6": "kN",
             "K6": "kNm", "L6": "kNm", "N6": "mm", "Q6": "mm"}
    for ref, v in units.items():
        ws[ref] = v
    ws.column_dimensions["I"].hidden = True           # the superseded loads, kept hidden

    def cap(r, mark, piles, dia, s, L, W, h, col, old, ned, conc, bx, by, d, remark=None):
        ws.append([]) if False else None
        for c, v in zip("ABCDEFGHIJKLMNOPQR", [mark, piles, dia, s, L, W, h, col, old, ned, 0, 0, conc, 75, bx, by,
                                                 d, remark]):
            ws[f"{c}{r}"] = v

    ws["A7"] = "GRID A"
    ws.merge_cells("A7:R7")
    cap(8, "PC1", 4, 600, 1800, 2700, 2700, 1200, "600x600", 4000, 4500, "C32/40", "12H25", "12H25", 1100)
    cap(9, "PC2", 1, 900, 0, 1500, 1500, 1200, "600", 1500, 1800, "C32/40", "8H20", "8Y20", None)
    ws["A11"] = "GRID B"
    cap(12, "PC3", 2, 600, 1800, 2700, 900, 1000, "D600", 2400, 2500, "C32/40", "6H25", "H16@200", None)
    cap(13, "PC4", 4, 600, 1800, 2700, 2700, 1200, "600", 4000, 4000, "C32/40", "12H25", "12H25", None, "superseded")
    ws.row_dimensions[13].hidden = True
    cap(14, "PC5", 3, 600, 1800, 2800, 2600, 1100, "600", 3800, 3800, "C32/40", "10H20", "10H20", None, "deleted")
    for c in "ABCDEFGHIJKLMNOPQR":
        ws[f"{c}14"].font = STRIKE
    cap(15, "PC6", 4, 600, 1800, 2700, 2700, 1200, "600", 4000, 4200, "C32/40", "12H25", "12H25", None)
    ws["Q15"] = "=G15-100"                             # saved without a calculated value
    cap(16, "PC7", 4, 600, 1800, 2700, 2700, 1.2, "600", 4000, 4200, "C32/40", "12H25", "12H25", None)
    ws["A17"] = "TOTAL PILES"
    ws["B17"] = 18
    ws["A19"] = "Notes:"
    ws["A20"] = "1. All loads are ULS."
    ws["A22"] = "Rev"
    ws["B22"] = "Date"
    ws["C22"] = "Description"
    ws["A23"] = "B"
    ws["B23"] = "2024-05-01"
    ws["C23"] = "Grid B revised"

    ws2 = wb.create_sheet("Caps GL D-F")
    ws2.append(["Harrowfield Business Park, Unit 4 (fictitious)"])
    ws2.append([])
    ws2.append(["Cap ref", "No. of piles", "Pile dia", "Pile spacing", "Pile cap L x W x D", "Cap column",
                "ULS axial load", "Cap concrete grade", "Cap cover", "Bottom bars X", "Bottom bars Y"])
    ws2.append([None, None, "mm", "mm", "mm", "mm", "kN", None, "mm", None, None])
    ws2.append(["GRID D-F"])
    ws2.append(["PC10", 4, 600, 1800, "2700 x 2700 x 1200", "600", "4,500", "C32/40", 75, "14Y12", "14Y12"])
    ws2.append(["PC11", 2, 600, 0, "2700 x 900 x 1000", "600", "1,850", "C32/40", 75, "6H25", "H16@200"])
    ws2.append([])
    ws2.append(["PC12", 1, 900, "-", "1500 x 1500 x 1200", "600", "1,200", "C32/40", 75, "8H20", "8H20"])
    ws3 = wb.create_sheet("Notes")
    ws3.append(["General notes"])
    ws3.append(["All dimensions in mm unless stated."])
    wb.save(path)
    return path


WRITTEN = {"PC1", "PC2", "PC3", "PC4", "PC5", "PC6", "PC7", "PC10", "PC11", "PC12"}


def test_regression_workbook_nothing_dropped_without_a_named_reason(tmp_path):
    s = read_schedule(consultant_workbook(tmp_path / "consultant.xlsx"))
    accounted(s)
    caps = set(s.caps["mark"])
    rejected = {r.mark for r in s.rejected}
    skipped_caps = {k.text for k in s.skipped if k.text.startswith("PC")}
    # every cap written is checked, rejected with its mark, or skipped with its reason; none twice
    assert caps | rejected | skipped_caps == WRITTEN
    assert not (caps & rejected) and not (caps & skipped_caps) and not (rejected & skipped_caps)
    assert caps == {"PC1", "PC2", "PC3", "PC10", "PC12"}
    # both schedule sheets read, each cap naming its sheet
    assert dict(zip(s.caps["mark"], s.caps["src_sheet"]))["PC10"] == "Caps GL D-F"
    assert dict(zip(s.caps["mark"], s.caps["src_sheet"]))["PC1"] == "Caps GL A-C"
    assert 'sheet "Notes" skipped: no schedule headings' in s.notes
    # merged group headings as prefixes, the sub-heading alone, the units row, the hidden duplicate
    pc1 = s.caps.set_index("mark").loc["PC1"]
    assert (pc1.piles, pc1.pile_dia, pc1.pile_spacing, pc1.cap_length, pc1.cap_depth) == (4, 600, 1800, 2700, 1200)
    assert pc1.n_ed == 4.5e6 and pc1.stated_d == 1100 and pc1.nx == 12
    assert any("hidden column I 'NEd (kN)' not used: a visible column has the same heading" in n for n in s.notes)
    # forms: one pile with 0 or '-', Y bars, thousands separators, element-first headings
    pc10 = s.caps.set_index("mark").loc["PC10"]
    assert pc10.n_ed == 4.5e6 and pc10.phi_x == 12 and pc10.cap_depth == 1200
    assert np.isnan(s.caps.set_index("mark").loc["PC2"].pile_spacing)
    # the reasons
    reasons = {k.text: k.reason for k in s.skipped}
    assert reasons["GRID A"].startswith("a section label") and reasons["GRID D-F"].startswith("a section label")
    assert reasons["PC4"] == "hidden in the workbook" and reasons["PC5"] == "struck through (read as deleted)"
    by = {r.mark: r for r in s.rejected}
    assert "'=G15-100' is a formula saved without its calculated value" in by["PC6"].errors[0]
    assert by["PC7"].errors == ("cap_depth (column 'CAP D (mm)'): 1.2 mm is outside the plausible range "
                                   "200 to 5,000 mm; did you mean m?",)
    assert by["PC11"].errors[0].startswith("pile_spacing (column 'Pile spacing (mm)'): 0 mm must be greater")
    assert by["PC7"].source == {"file": str(tmp_path / "consultant.xlsx"), "sheet": "Caps GL A-C", "page": None,
                                   "row": 16}
    # the table ended at the totals row: notes and the revision box are not caps
    assert not any(k.source["row"] >= 17 for k in s.skipped if k.source["sheet"] == "Caps GL A-C")
    assert "Remarks" in s.unmapped


def test_regression_workbook_through_the_command(tmp_path, capsys, findings_json):
    book = consultant_workbook(tmp_path / "consultant.xlsx")
    main(["check", str(book), "--format", "json"])
    doc = findings_json(json.loads(capsys.readouterr().out))
    sm = doc["summary"]
    assert sm["rows_read"] == sm["caps_checked"] + sm["rows_rejected"] + sm["rows_skipped"] == 13
    assert {r["mark"] for r in doc["rejected"]} == {"PC6", "PC7", "PC11"}
    assert "Remarks" in doc["unused_headings"]
    assert any("row 7 skipped: a section label" in n for n in doc["notes"])
    # --sheet chooses one sheet; a sheet that is not there is a clear message, never a traceback
    main(["check", str(book), "--format", "json", "--sheet", "Caps GL D-F"])
    doc = findings_json(json.loads(capsys.readouterr().out))
    assert {r["source"]["sheet"] for r in doc["results"]} == {"Caps GL D-F"}
    assert main(["check", str(book), "--sheet", "Caps GL X"]) == 2
    err = capsys.readouterr().err
    assert "no sheet named 'Caps GL X'" in err and "'Caps GL A-C'" in err and "Traceback" not in err


def test_the_comment_sheet_and_html_list_the_marks_of_rejected_rows(tmp_path):
    book = consultant_workbook(tmp_path / "consultant.xlsx")
    rv = checker.review(book)
    from checker.report import write_outputs

    xlsx, html = write_outputs(rv, [tmp_path / "c.xlsx", tmp_path / "r.html"], meta={"project": "fictitious"})
    ws = openpyxl.load_workbook(xlsx)["Rejected rows"]
    marks = [r[4] for r in ws.iter_rows(min_row=3, values_only=True)]
    assert set(marks) == {"PC6", "PC7", "PC11"}
    assert "<td>PC7</td>" in Path(html).read_text(encoding="utf-8")


def test_a_pdf_schedule_split_over_pages_gives_each_record_its_own_page_and_row():
    """The sample PDF continues its table over pages: one table, and no two records (caps checked,
    rows rejected, rows skipped) share a page and row number."""
    pdf = Path(__file__).resolve().parents[1] / "sample_submissions" / "harbourside-rev-A.pdf"
    s = read_schedule(pdf)
    accounted(s)
    where = [(c.src_page, c.src_row) for c in s.caps.itertuples()] + \
        [(r.source["page"], r.source["row"]) for r in s.rejected + s.skipped]
    assert len(where) == len(set(where)) == s.rows_read
