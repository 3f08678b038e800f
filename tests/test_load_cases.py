"""Load cases and the basis of the pile capacity (issue 11, items 1 and 2).

Hand-worked figures, with their sources beside them:

* self-weight γG ρ L W h with ρ = 25 kN/m³ (EN 1991-1-1:2002 Annex A, Table A.1, reinforced concrete,
  from memory) and γG = 1.35 at ULS (EN 1990:2002 Table A1.2(B), from memory), 1.0 for an SLS case
  (characteristic combination, EN 1990:2002 6.5.3(2)a, from memory);
* rigid-cap pile reactions R_i = N/n + Mx y_i/Σy² + My x_i/Σx² (statics of a rigid cap on a pile group;
  reference/ec2-pile-caps.md, DEVELOPERS.md "Pile reactions"); the pile positional tolerance is set to 0
  here so that the reactions are the nominal ones;
* JSON figures are rounded to 6 decimals, hence abs=1e-6;
* three-pile cap (side s): apex (0, s/√3), base (±s/2, −s/(2√3)), Σy² = s²/2; the x bars carry the base
  tie x_i R_i / d_x over the base piles (reference decision 11, statics about the top node).

Invented data only.
"""

from __future__ import annotations

import json
import math
from collections import Counter
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from checker.api import check_schedule, review
from checker.cli import main
from checker.ingest.schedule import read_schedule, schedule_from_frame
from checker.report.json_out import to_document
from checker.ruleset.catalogue import LOAD_INDEPENDENT
from checker.ruleset.loader import load_ruleset

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = ROOT / "sample_submissions"
NO_TOL = {"pile_tolerance": "0"}

HEAD = ("Mark,Load case,Piles,Pile dia (mm),Pile centres (mm),Cap size L x W x D (mm),Column (mm),NEd (kN),"
        "MEd x (kNm),Concrete,Cover (mm),Bottom bars X,Bottom bars Y,Bar ends,Pile embedment (mm),Pile capacity (kN)\n")


def write(tmp_path: Path, name: str, text: str) -> Path:
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


def result(doc_or_frame, cap: str, rule: str) -> dict:
    if isinstance(doc_or_frame, pd.DataFrame):
        rows = doc_or_frame[(doc_or_frame["cap"] == cap) & (doc_or_frame["rule"] == rule)].to_dict("records")
    else:
        rows = [r for r in doc_or_frame["results"] if r["cap"] == cap and r["rule"] == rule]
    assert len(rows) == 1
    return rows[0]


def assert_counts(rv) -> dict:
    """One result per cap and rule; rows_read == caps_checked + rows_rejected + case_rows."""
    doc = to_document(rv)
    s = doc["summary"]
    assert s["rows_read"] == s["caps_checked"] + s["rows_rejected"] + s.get("case_rows", 0)
    pairs = Counter((r["cap"], r["rule"]) for r in doc["results"])
    assert set(pairs.values()) == {1}
    assert len(pairs) == s["caps_checked"] * len(rv.rules)
    return doc


# ---------------------------------------------------------------------------------------------
# 1. The governing case differs between checks
# ---------------------------------------------------------------------------------------------

THREE_PILE = HEAD + (
    "T3,ULS max N,3,600,1800,2700 x 3000 x 1100,500x500,3000,,C32/40,75,11H25,11H25,bent,75,1400\n"
    "T3,ULS max M,,,,,,2400,600,,,,,,,\n")


def test_each_check_names_its_own_governing_case(tmp_path, findings_json):
    rv = review(write(tmp_path, "t3.csv", THREE_PILE), overrides=NO_TOL)
    doc = findings_json(assert_counts(rv))
    s, L, W, h = 1.8, 2.7, 3.0, 1.1                     # m
    sw = 1.35 * 25 * L * W * h                          # 300.71 kN (EN 1991-1-1 Table A.1, EN 1990 A1.2(B))
    # case "ULS max N": N = 3000 kN, no moment: R = (N + sw)/3 on every pile
    r_n = (3000 + sw) / 3                               # 1100.24 kN
    # case "ULS max M": N = 2400 kN, Mx = 600 kNm: R_apex = N/3 + Mx (s/√3)/(s²/2), R_base = N/3 - Mx/(√3 s)
    r_apex = (2400 + sw) / 3 + 600 * (s / math.sqrt(3)) / (s * s / 2)    # 1285.14 kN
    r_base = (2400 + sw) / 3 - 600 / (math.sqrt(3) * s)                   # 707.79 kN
    pile = result(doc, "T3", "pile-reaction")
    assert pile["case"] == "ULS max M"                   # the moment loads the apex pile most
    assert pile["value"] == pytest.approx(r_apex, abs=1e-6)  # JSON: 6 decimals
    assert pile["utilisation"] == pytest.approx(r_apex / 1400, abs=1e-6)  # JSON: 6 decimals
    assert pile["message"].startswith("Load case ULS max M: ")
    # base tie T = (s/2) R_base / d_x, d_x = h - c - φ/2 = 1012.5 mm; As,req = T/fyd, fyd = 500/1.15
    d_x = 1100 - 75 - 25 / 2
    t_n = 900 * r_n * 1e3 / d_x                          # 977,989 N under "ULS max N"
    t_m = 900 * r_base * 1e3 / d_x                       # 629,144 N under "ULS max M": the moment unloads the base
    assert t_n > t_m
    tie = result(doc, "T3", "tie-steel-x")
    assert tie["case"] == "ULS max N"
    assert tie["limit"] == pytest.approx(t_n / (500 / 1.15), abs=1e-6)    # 2249.4 mm²
    assert tie["message"].startswith("Load case ULS max N: Tie along x: T = 978 kN")
    # load-independent checks name no case and read the same as a single-case schedule
    assert result(doc, "T3", "pile-spacing")["case"] is None
    assert result(doc, "T3", "min-steel-x")["case"] is None
    assert doc["summary"]["load_cases"] == 2 and doc["summary"]["case_rows"] == 1
    # the comment sheet's comment text is the message: the case is named there too
    assert "Load case ULS max M" in rv.findings.set_index(["cap", "rule"]).loc[("T3", "pile-reaction"), "message"]


def test_single_case_schedule_has_null_case_and_unchanged_results(findings_json):
    path = SAMPLES / "harbourside-rev-A.csv"
    doc = findings_json(to_document(review(path)))
    assert all(r["case"] is None for r in doc["results"])
    assert "load_cases" not in doc["summary"]


def test_explain_shows_every_case_of_the_load_dependent_checks(tmp_path, capsys):
    path = write(tmp_path, "t3.csv", THREE_PILE)
    assert main(["explain", str(path), "--cap", "T3", "--set", "pile_tolerance=0"]) == 0
    out = capsys.readouterr().out
    assert "load case ULS max N (ULS):" in out and "load case ULS max M (ULS):" in out
    assert "T = 978 kN" in out and "T = 629 kN" in out          # the base tie of each case (above)
    # a load-independent check is shown once
    spacing = out.split("pile-spacing")[1].split("\n\n")[0]
    assert "load case" not in spacing


def test_expanded_and_reduced_equals_checking_each_case_alone(tmp_path):
    """Identity: the governing result of a two-case cap is the worse of the two single-case schedules."""
    rs = load_ruleset("uk-na", overrides=NO_TOL)
    both = check_schedule(read_schedule(write(tmp_path, "t3.csv", THREE_PILE)), rs, "t3").findings
    lines = THREE_PILE.splitlines()
    row_m = lines[1].split(",")
    row_m[7], row_m[8] = "2400", "600"
    singles = [check_schedule(read_schedule(write(tmp_path, f"s{k}.csv", "\n".join([lines[0], row]) + "\n")),
                              rs, "s").findings for k, row in enumerate((lines[1], ",".join(row_m)))]
    for rule in ("pile-reaction", "tie-steel-x", "tie-steel-y", "node-pile", "shear-x", "node-column"):
        got = result(both, "T3", rule)
        cands = [result(f, "T3", rule) for f in singles]
        best = min(cands, key=lambda r: (["unsafe", "non-compliant", "query", "advisory", "ok"].index(r["severity"]),
                                         -(r["utilisation"] if r["utilisation"] == r["utilisation"] else -1)))
        assert got["utilisation"] == pytest.approx(best["utilisation"], rel=1e-12), rule
        assert got["severity"] == best["severity"]


# ---------------------------------------------------------------------------------------------
# 2. The basis of the pile capacity
# ---------------------------------------------------------------------------------------------

BASIS = ("Mark,Piles,Pile dia (mm),Pile centres (mm),Cap size L x W x D (mm),Column (mm),NEd (kN),SLS N (kN),"
         "Concrete,Cover (mm),Bottom bars X,Bottom bars Y,Bar ends,Pile embedment (mm),Pile capacity (kN),"
         "Pile SWL (kN)\n"
         "PU,4,600,1800,2700 x 2700 x 1200,600x600,4000,,C32/40,75,12H25,12H25,bent,75,1400,\n"
         "PW,4,600,1800,2700 x 2700 x 1200,600x600,4000,2800,C32/40,75,12H25,12H25,bent,75,,1000\n"
         "PW2,4,600,1800,2700 x 2700 x 1200,600x600,5300,3900,C32/40,75,12H25,12H25,bent,75,,1000\n"
         "PX,4,600,1800,2700 x 2700 x 1200,600x600,4000,,C32/40,75,12H25,12H25,bent,75,,1000\n")


def test_the_pile_check_compares_like_with_like(tmp_path, findings_json):
    rv = review(write(tmp_path, "basis.csv", BASIS), overrides=NO_TOL)
    doc = findings_json(assert_counts(rv))
    vol = 2.7 * 2.7 * 1.2                                  # m³
    # PU: ULS reactions against a ULS resistance: R = (N + 1.35 x 25 x V)/4
    pu = result(doc, "PU", "pile-reaction")
    assert pu["severity"] == "ok" and pu["case"] is None
    assert pu["value"] == pytest.approx((4000 + 1.35 * 25 * vol) / 4, abs=1e-6)       # 1073.8 kN
    # PW: SLS reactions, self-weight unfactored (γG = 1.0), against the working capacity
    pw = result(doc, "PW", "pile-reaction")
    assert pw["case"] == "SLS" and pw["severity"] == "ok"
    assert pw["value"] == pytest.approx((2800 + 25 * vol) / 4, abs=1e-6)              # 754.7 kN
    assert pw["utilisation"] == pytest.approx((2800 + 25 * vol) / 4 / 1000, abs=1e-6)
    # ...while its ties use the ULS case
    assert result(doc, "PW", "tie-steel-x")["case"] == "ULS"
    # PW2: SLS reaction (3900 + 218.7)/4 = 1029.7 kN > 1000 kN working capacity: unsafe, like with like
    pw2 = result(doc, "PW2", "pile-reaction")
    assert pw2["severity"] == "unsafe" and pw2["case"] == "SLS"
    assert pw2["value"] == pytest.approx((3900 + 25 * vol) / 4, abs=1e-6)
    # PX: a working capacity and no SLS loads: a query, never ok and never unsafe on a mixed basis
    px = result(doc, "PX", "pile-reaction")
    assert px["severity"] == "query" and px["utilisation"] is None
    r_uls = (4000 + 1.35 * 25 * vol) / 4                   # 1073.8 kN: above 1000, but on another basis
    assert px["value"] == pytest.approx(r_uls, abs=1e-6)  # JSON: 6 decimals and px["limit"] == pytest.approx(1000)
    assert "working (SLS) value and no SLS loads are given" in px["message"]
    # what the ULS reaction implies: divided by γQ = 1.5 to γG = 1.35 (EN 1990 Table A1.2(B))
    assert f"about {r_uls / 1.5:.0f} to {r_uls / 1.35:.0f} kN" in px["message"]        # 716 to 795 kN
    assert "Give the SLS (service) loads" in px["action"]
    # the ULS checks of PX are unaffected by the basis of its pile capacity
    assert result(doc, "PX", "tie-steel-x")["severity"] == "ok"


def test_capacity_basis_column_and_only_sls_loads(tmp_path, findings_json):
    text = ("Mark,Piles,Pile dia (mm),Pile centres (mm),Cap size L x W x D (mm),Column (mm),Service load (kN),"
            "Concrete,Cover (mm),Bottom bars X,Bottom bars Y,Bar ends,Pile embedment (mm),Pile capacity (kN),"
            "Capacity basis\n"
            "PS,4,600,1800,2700 x 2700 x 1200,600x600,2800,C32/40,75,12H25,12H25,bent,75,1000,SWL\n"
            "PR,4,600,1800,2700 x 2700 x 1200,600x600,2800,C32/40,75,12H25,12H25,bent,75,1400,ULS\n")
    rv = review(write(tmp_path, "sls.csv", text), overrides=NO_TOL)
    doc = findings_json(assert_counts(rv))
    assert result(doc, "PS", "pile-reaction")["severity"] == "ok"
    pr = result(doc, "PR", "pile-reaction")
    assert pr["severity"] == "query" and "ULS design resistance and only SLS loads" in pr["message"]
    # a mark with no ULS case: a query on the load-dependent checks, the others as usual
    tie = result(doc, "PS", "tie-steel-x")
    assert tie["severity"] == "query" and "No ULS load case is given" in tie["message"] and tie["case"] is None
    assert result(doc, "PS", "pile-spacing")["severity"] == "ok"


def test_uplift_is_reported_with_its_case(tmp_path, findings_json):
    # two piles, My = 1500 kNm on N = 1000 kN: R = (N + sw)/2 - My/s = 587 - 833 < 0 (rigid-cap statics)
    text = ("Mark,Case,Piles,Pile dia (mm),Pile centres (mm),Cap size L x W x D (mm),Column (mm),NEd (kN),"
            "MEd y (kNm),Concrete,Cover (mm),Bottom bars X,Bottom bars Y,Bar ends,Pile embedment (mm),"
            "Pile capacity (kN)\n"
            "P2,gravity,2,600,1800,2700 x 900 x 1000,500x500,1900,,C32/40,75,6H25,H20@150,bent,75,1500\n"
            "P2,wind,,,,,,1000,1500,,,,,,,\n")
    doc = findings_json(assert_counts(review(write(tmp_path, "uplift.csv", text), overrides=NO_TOL)))
    r = result(doc, "P2", "pile-reaction")
    sw = 1.35 * 25 * 2.7 * 0.9 * 1.0
    assert r["case"] == "wind" and r["severity"] == "query"
    assert "Load case wind: A pile is in tension" in r["message"]
    assert r["value"] == pytest.approx((1000 + sw) / 2 - 1500 / 1.8, abs=1e-6)


# ---------------------------------------------------------------------------------------------
# 3. Bad input: each a clear message naming file, row and mark; nothing else lost
# ---------------------------------------------------------------------------------------------


def test_bad_load_case_input(tmp_path, findings_json):
    sched = write(tmp_path, "sched.csv", HEAD + (
        "A1,ULS max N,3,600,1800,2700 x 3000 x 1100,500x500,3000,,C32/40,75,11H25,11H25,bent,75,1400\n"
        "A1,ULS max M,3,600,1800,2700 x 3000 x 1200,500x500,2400,600,C32/40,75,11H25,11H25,bent,75,1400\n"
        "B1,ULS,3,600,1800,2700 x 3000 x 1100,500x500,3000,,C32/40,75,11H25,11H25,bent,75,1400\n"
        "C1,ULS,3,600,1800,2700 x 3000 x 1100,500x500,3000,,C32/40,75,11H25,11H25,bent,75,1400\n"))
    loads = write(tmp_path, "loads.csv", (
        "Mark,Case,NEd (kN),Mx (kNm),My (kNm),Kind\n"
        "B1,wind,2500,300,,ULS\n"          # row 2: fine
        "Z9,wind,2500,,,ULS\n"             # row 3: no such mark
        "B1,wind,2600,,,ULS\n"             # row 4: repeats row 2
        "C1,ULS,2000,,,ULS\n"              # row 5: repeats the schedule's case of C1
        "C1,empty,,,,ULS\n"                # row 6: no loads
        "C1,SLS,2100,,,SLS\n"))            # row 7: fine
    rv = review(sched, loads=loads)
    doc = findings_json(assert_counts(rv))
    rej = {(Path(r["source"]["file"]).name, r["source"]["row"]): " ".join(r["errors"]) for r in doc["rejected"]}
    assert set(rej) == {("sched.csv", 3), ("loads.csv", 3), ("loads.csv", 4), ("loads.csv", 5), ("loads.csv", 6)}
    assert "'A1' is a further load case of the cap on row 2 but describes a different cap: cap_depth 1200 mm " \
           "(first row: 1100 mm)" in rej[("sched.csv", 3)]
    assert "'Z9' is not a mark of the schedule" in rej[("loads.csv", 3)]
    assert "case 'wind' of mark 'B1' repeats row 2" in rej[("loads.csv", 4)]
    assert "case 'ULS' of mark 'C1' repeats row 5 of the schedule" in rej[("loads.csv", 5)]
    assert "case 'empty' of mark 'C1' has no loads" in rej[("loads.csv", 6)]
    # nothing else lost: every cap checked, the good cases used
    assert doc["summary"]["caps_checked"] == 3
    assert doc["summary"]["rows_read"] == 4 + 6 and doc["summary"]["case_rows"] == 2
    cases = rv.cases
    assert sorted(cases["case"].tolist()) == ["SLS", "ULS", "ULS", "ULS max N", "wind"]


def test_repeated_marks_without_a_case_column_are_still_rejected(tmp_path):
    text = HEAD.replace("Load case,", "") + (
        "D1,3,600,1800,2700 x 3000 x 1100,500x500,3000,,C32/40,75,11H25,11H25,bent,75,1400\n"
        "D1,3,600,1800,2700 x 3000 x 1100,500x500,2000,,C32/40,75,11H25,11H25,bent,75,1400\n")
    s = read_schedule(write(tmp_path, "dup.csv", text))
    assert len(s.caps) == 1 and s.cases is None
    assert "repeats the mark of row 2" in s.rejected[0].errors[0]


def test_a_case_row_needs_a_name_and_loads(tmp_path):
    s = read_schedule(write(tmp_path, "names.csv", HEAD + (
        "E1,,3,600,1800,2700 x 3000 x 1100,500x500,3000,,C32/40,75,11H25,11H25,bent,75,1400\n"
        "E1,,,,,,,2400,600,,,,,,,\n"
        "E1,third,,,,,,,,,,,,,,\n")))
    errs = {r.source["row"]: " ".join(r.errors) for r in s.rejected}
    assert "each further row needs its own load case name" in errs[3]
    assert "case 'third' of mark 'E1' has no loads" in errs[4]
    assert len(s.caps) == 1 and s.rows_read == len(s.caps) + len(s.rejected) + s.case_rows


def test_loads_sheet_of_a_workbook(tmp_path, findings_json):
    openpyxl = pytest.importorskip("openpyxl")
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Caps"
    lines = [line.split(",") for line in THREE_PILE.splitlines()]
    ws.append([c for k, c in enumerate(lines[0]) if k != 1])
    ws.append([float(c) if c.replace(".", "").isdigit() else (c or None) for k, c in enumerate(lines[1]) if k != 1])
    wl = wb.create_sheet("Loads")
    wl.append(["Mark", "Load case", "NEd (kN)", "Mx (kNm)", "Kind"])
    wl.append(["T3", "ULS max M", 2400, 600, "ULS"])
    path = tmp_path / "wb.xlsx"
    wb.save(path)
    rv = review(path, overrides=NO_TOL)
    doc = findings_json(assert_counts(rv))
    assert result(doc, "T3", "pile-reaction")["case"] == "ULS max M"
    assert result(doc, "T3", "tie-steel-x")["case"] == "ULS"      # the schedule row's own loads, unnamed


# ---------------------------------------------------------------------------------------------
# Meta: the load-independent quantities really are
# ---------------------------------------------------------------------------------------------


def test_load_independent_quantities_do_not_change_with_the_loads():
    from profile_params import derive

    rows = []
    for p, s, L, W in [(1, None, 1350, 1350), (2, 1800, 2700, 900), (3, 1800, 2700, 3000), (4, 1800, 2700, 2700),
                       (5, 1800, 3450, 3450), (6, 1800, 4500, 2700)]:
        for k, (n, mx, my) in enumerate([(4000, 0, 0), (3000, 300, -500), (900, -900, 700)]):
            rows.append(dict(mark=f"P{p}{k}", piles=p, pile_dia=600, pile_spacing=s, cap_length=L, cap_width=W,
                             cap_depth=1200, column="600x600", n_ed=n, mx_ed=mx, my_ed=my, concrete="C32/40",
                             cover=75, bars_x="12H25", bars_y="12H25", pile_capacity=1500))
    caps = schedule_from_frame(pd.DataFrame(rows)).caps
    caps["case_kind"] = ["ULS", "SLS", "ULS"] * 6
    q = derive(caps, None, {}).q
    for name in LOAD_INDEPENDENT & set(q):
        a = np.asarray(q[name], float).reshape(6, 3)
        same = (a == a[:, :1]) | (np.isnan(a) & np.isnan(a[:, :1]))
        assert same.all(), name


# ---------------------------------------------------------------------------------------------
# The sample submission's revision with load cases (sample_submissions/README.md)
# ---------------------------------------------------------------------------------------------


def test_sample_revision_with_load_cases(findings_json):
    rv = review(SAMPLES / "harbourside-rev-C-cases.csv")
    doc = findings_json(assert_counts(rv))
    s = doc["summary"]
    assert (s["rows_read"], s["caps_checked"], s["rows_rejected"], s["case_rows"]) == (18, 16, 0, 2)
    # PC3: the moment case governs the piles and is now unsafe (it was lost as a repeated mark before):
    # nominal apex reaction 1285 kN (test_each_check_names_its_own_governing_case) plus the 75 mm tolerance
    pc3 = result(doc, "PC3", "pile-reaction")
    assert (pc3["severity"], pc3["case"]) == ("unsafe", "ULS max M")
    assert result(doc, "PC3", "tie-steel-x")["case"] == "ULS max N"
    # PC4: a safe working load checked against its SLS reactions (self-weight unfactored)
    pc4 = result(doc, "PC4", "pile-reaction")
    assert (pc4["severity"], pc4["case"]) == ("ok", "gravity SLS")
    assert result(doc, "PC4", "tie-steel-x")["case"] == "gravity ULS"
    # PC9: a safe working load and ULS loads only: a query, not a verdict
    pc9 = result(doc, "PC9", "pile-reaction")
    assert pc9["severity"] == "query" and "no SLS loads are given" in pc9["message"]
    # PC2's wind case does not govern anything; a check that does not apply names no case
    assert result(doc, "PC2", "tie-steel-y")["case"] is None
    assert not result(doc, "PC2", "tie-steel-y")["message"].startswith("Load case")


def test_the_loads_option_of_the_command(tmp_path, capsys, findings_json):
    sched = write(tmp_path, "s.csv", THREE_PILE.splitlines()[0] + "\n" + THREE_PILE.splitlines()[1] + "\n")
    loads = write(tmp_path, "l.csv", "Mark,Case,NEd (kN),Mx (kNm),My (kNm)\nT3,ULS max M,2400,600,\n")
    code = main(["check", str(sched), "--loads", str(loads), "--format", "json", "--set", "pile_tolerance=0"])
    doc = findings_json(json.loads(capsys.readouterr().out))
    assert code == 0
    assert result(doc, "T3", "pile-reaction")["case"] == "ULS max M"
    assert doc["summary"]["case_rows"] == 1 and doc["summary"]["rows_read"] == 2


def test_accepted_methods_table_reads_the_governing_case():
    """The explain table's figures are those the engine graded: for a load-dependent rule, its
    governing case (PC3 of revision C: the pile reaction governs under "ULS max M", unsafe under
    both accepted methods), never re-worked on the cap's first case."""
    from checker.report.variants_table import variant_rows

    rv = review(SAMPLES / "harbourside-rev-C-cases.csv")
    f = rv.findings
    rows = variant_rows(rv, "PC3")
    assert rows
    for rid in {r.rule for r in rows}:
        hit = f[(f["cap"] == "PC3") & (f["rule"] == rid)].iloc[0]
        mine = [r for r in rows if r.rule == rid]
        failing = {v for v in (hit["variants_failing"] or "").split("; ") if v}
        assert {r.variant for r in mine if r.verdict == "not met"} == failing, rid
        if not (isinstance(hit["value"], float) and math.isnan(hit["value"])):
            assert mine[0].default
            assert mine[0].value == pytest.approx(hit["value"], rel=1e-12), rid
            assert mine[0].limit == pytest.approx(hit["limit"], rel=1e-12), rid
    pile = {r.variant: r for r in rows if r.rule == "pile-reaction"}
    assert {r.verdict for r in pile.values()} == {"not met"}
