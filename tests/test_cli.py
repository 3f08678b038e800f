"""End-to-end: the capcheck command on the bundled sample submission, as a user runs it."""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import openpyxl
import pandas as pd
import pytest

import checker
from checker.cli import EXIT_FINDINGS, EXIT_OK, EXIT_UNREADABLE, main

ROOT = Path(__file__).resolve().parent.parent
SAMPLES = ROOT / "sample_submissions"
REV_A = SAMPLES / "harbourside-rev-A.csv"
GOLDEN = Path(__file__).parent / "data" / "golden"


@pytest.fixture
def run_json(capsys, findings_json):
    """``run_json(*args)``: ``capcheck check ARGS --format json`` -> (exit code, the document), the
    document validated against the published JSON Schema (checker/schema/findings-1.json)."""

    def run(*args) -> tuple[int, dict]:
        code = main(["check", *map(str, args), "--format", "json"])
        out = capsys.readouterr().out
        return code, findings_json(json.loads(out))

    return run


def strip_source(doc: dict) -> list[dict]:
    return [{k: v for k, v in r.items() if k != "source"} for r in doc["results"]]


def test_json_contract_on_the_sample(run_json):
    code, doc = run_json(REV_A)
    assert code == EXIT_FINDINGS  # the sample holds unsafe caps on purpose (sample_submissions/README.md)
    assert doc["schema"] == "capcheck.findings/1"
    assert doc["profile"] == "uk-na"
    assert "caution" in doc
    s = doc["summary"]
    assert s["rows_read"] == s["caps_checked"] + s["rows_rejected"] == 17
    assert s["rows_rejected"] == 1
    rej = doc["rejected"][0]
    assert rej["source"]["row"] == 17 and "2 layers 8H20" in rej["errors"][0]
    counts = {k: sum(r["severity"] == k for r in doc["results"]) for k in s["findings"]}
    assert counts == s["findings"]
    for r in doc["results"]:
        assert set(r) >= {"cap", "rule", "severity", "clause", "value", "limit", "unit", "utilisation",
                          "message", "source"}
        assert r["source"]["file"].endswith("harbourside-rev-A.csv")
    # one result per rule per cap
    pairs = [(r["cap"], r["rule"]) for r in doc["results"]]
    assert len(pairs) == len(set(pairs))
    from checker.ruleset.loader import load_ruleset
    assert len(pairs) == s["caps_checked"] * len(load_ruleset("uk-na").rules)


@pytest.mark.parametrize("other", ["harbourside-rev-A.xlsx", "harbourside-rev-A.pdf"])
def test_same_results_from_csv_xlsx_and_pdf(run_json, other):
    _, a = run_json(REV_A)
    _, b = run_json(SAMPLES / other)
    assert strip_source(a) == strip_source(b)
    assert a["summary"] == b["summary"]


def test_intended_findings_of_the_sample(run_json):
    """The faults the sample's README says each cap carries are found (and compliant caps pass)."""
    _, doc = run_json(REV_A)
    bad = {}
    for r in doc["results"]:
        if r["severity"] != "ok":
            bad.setdefault(r["cap"], {})[r["rule"]] = r["severity"]
    # revision A gives no SLS loads: the crack checks (EN 1992-1-1:2004 7.3) ask for them on every cap
    # with a tie in that direction, and say nothing else
    asked = {(r["cap"], r["rule"]) for r in doc["results"] if r["rule"] in ("crack-x", "crack-y")
             and r["severity"] == "query" and r["message"].startswith("No SLS (service) load case")}
    assert {(c, rid) for c, rules in bad.items() for rid in rules if rid.startswith("crack-")} == asked
    assert ("PC4", "crack-x") in asked and ("PC4", "crack-y") in asked and ("PC2", "crack-y") not in asked
    bad = {c: {rid: s for rid, s in rules.items() if not rid.startswith("crack-")} for c, rules in bad.items()}
    bad = {c: rules for c, rules in bad.items() if rules}
    assert bad["PC8"]["pile-spacing"] == "non-compliant"
    assert bad["PC9"]["edge-distance"] == "non-compliant"
    assert bad["PC10"]["strut-angle"] == "non-compliant"
    # x: fails the truss, passes bending theory at 0.997 (an accepted method): a query naming both
    assert bad["PC10"]["tie-steel-x"] == "query"
    assert bad["PC10"]["tie-steel-y"] == "unsafe"
    # every perimeter within 2d (EN 1992-1-1:2004 6.4.4(2)): the 650 mm cap fails at a = 765 mm
    # (vEd 0.906 against vRd 0.656 MPa); the old "piles beyond 2d only" rule passed it with vEd = 0
    assert bad["PC10"]["punching-perimeter"] == "unsafe"
    assert bad["PC11"]["bar-diameter"] == "non-compliant"
    assert bad["PC12"]["min-steel-x"] == "non-compliant"
    assert bad["PC13"]["pile-embedment"] == "non-compliant"
    assert bad["PC13"]["pile-reaction"] == "unsafe"
    assert bad["PC13"]["stated-vs-checked"] == "query"
    assert bad["PC6"] == {"group-size": "advisory"}
    for cap in ("PC2", "PC7"):
        assert bad[cap] == {"restraint": "query"}
    # the single-pile cap states no horizontal links in revision A: the splitting tie of
    # EN 1992-1-1:2004 6.5.3(3) cannot be verified (a query, never ok); revision B states H12@150
    assert bad["PC1"] == {"restraint": "query", "bursting": "query"}
    # x bars spread beyond the bands over the piles (reference decision 12): advisory only
    for cap in ("PC3", "PC5"):
        assert bad[cap] == {"tie-distribution": "advisory"}
    for cap in ("PC4", "PC4A", "PC16"):
        assert cap not in bad, bad.get(cap)


def test_fail_on_and_exit_codes(capsys, tmp_path):
    assert main(["check", str(SAMPLES / "harbourside-rev-B.csv"), "--fail-on", "unsafe"]) == EXIT_FINDINGS
    clean = tmp_path / "clean.csv"
    lines = REV_A.read_text(encoding="utf-8").splitlines()
    clean.write_text("\n".join([lines[0]] + [l for l in lines if l.startswith("PC4,")]) + "\n", encoding="utf-8")
    assert main(["check", str(clean)]) == EXIT_OK
    # no SLS loads: the crack checks are queries asking for them (EN 1992-1-1:2004 7.3)
    assert main(["check", str(clean), "--fail-on", "advisory"]) == EXIT_FINDINGS
    # with the quasi-permanent load taken as 0.4 x ULS and the tables of 7.3.3(2) as the method: clean
    assert main(["check", str(clean), "--fail-on", "advisory", "--set", "qp_ratio=0.4",
                 "--drop-variant", "calculated"]) == EXIT_OK
    assert main(["check", str(tmp_path / "missing.csv")]) == EXIT_UNREADABLE
    err = capsys.readouterr().err
    assert "missing.csv" in err


def test_bad_files_give_a_message_not_a_traceback(tmp_path):
    junk = tmp_path / "schedule.xlsx"
    junk.write_bytes(b"this is not a workbook")
    env = dict(os.environ)
    env.pop("CAPCHECK_DEBUG", None)
    r = subprocess.run([sys.executable, "-m", "checker.cli", "check", str(junk)], capture_output=True,
                       text=True, env=env, cwd=tmp_path)
    assert r.returncode == EXIT_UNREADABLE
    assert "Traceback" not in r.stderr + r.stdout
    assert "schedule.xlsx" in r.stderr
    bad_rules = tmp_path / "rules"
    bad_rules.mkdir()
    (bad_rules / "evil.toml").write_text('[[rule]]\nid = "evil"\ntitle = "t"\nclause = "common practice"\n'
                                         'severity = "advisory"\nvalue = "__import__(\'os\')"\n'
                                         'compare = "<="\nlimit = "1"\n', encoding="utf-8")
    r = subprocess.run([sys.executable, "-m", "checker.cli", "check", str(REV_A), "--rules", str(bad_rules)],
                       capture_output=True, text=True, env=env, cwd=tmp_path)
    assert r.returncode == EXIT_UNREADABLE
    assert "evil.toml" in r.stderr and "'evil'" in r.stderr and "Traceback" not in r.stderr


def test_rules_and_columns_commands(capsys):
    assert main(["rules"]) == EXIT_OK
    out = capsys.readouterr().out
    for rid in ("pile-spacing", "tie-steel-x", "punching-perimeter", "stated-vs-checked"):
        assert rid in out
    assert main(["columns", str(SAMPLES / "harbourside-rev-A.xlsx")]) == EXIT_OK
    out = capsys.readouterr().out
    assert "Pile dia (mm)" in out and "pile_dia" in out
    flat = " ".join(out.split())
    assert "cannot be read" in flat and "2 layers 8H20" in flat and "row 21" in flat


def test_outputs_are_not_overwritten_without_force(tmp_path, capsys, findings_json):
    target = tmp_path / "findings.json"
    assert main(["check", str(REV_A), "-o", str(target)]) == EXIT_FINDINGS
    first = target.read_text(encoding="utf-8")
    assert findings_json(json.loads(first))["schema"] == "capcheck.findings/1"
    main(["check", str(REV_A), "-o", str(target)])
    assert target.read_text(encoding="utf-8") == first  # the first file is left as it was
    siblings = sorted(p.name for p in tmp_path.iterdir())
    assert len(siblings) == 2


def test_demo_writes_every_output_and_closes_comments(tmp_path, monkeypatch, capsys, findings_json):
    monkeypatch.chdir(tmp_path)
    assert main(["demo"]) == EXIT_OK
    out = capsys.readouterr().out
    folder = tmp_path / "capcheck-demo"
    names = {p.name for p in folder.iterdir()}
    for rev in ("A", "B"):
        for ext in ("json", "xlsx", "html", "csv", "md"):
            assert f"harbourside-rev-{rev}.{ext}" in names
    assert "closed" in out
    for rev in ("A", "B"):
        findings_json(json.loads((folder / f"harbourside-rev-{rev}.json").read_text(encoding="utf-8")))
    wb = openpyxl.load_workbook(folder / "harbourside-rev-B.xlsx")
    assert any("omment" in ws.title for ws in wb.worksheets)


def test_python_api_on_a_dataframe():
    df = pd.read_csv(REV_A)
    rv = checker.review(df, profile="ec2")
    assert rv.profile_name == "ec2"
    assert rv.rows_read == 17 and len(rv.caps) == 16
    assert set(rv.findings["cap"]) == set(rv.caps["mark"])
    assert rv.working("PC4")


def test_explain_golden(capsys):
    """The working of one sample cap, as a checker would staple it to the sheet. Regenerate on
    purpose only: CAPCHECK_REGEN_GOLDEN=1 pytest tests/test_cli.py -k golden."""
    from rich.console import Console

    from checker.report.terminal import print_working

    rv = checker.review(REV_A)
    con = Console(record=True, width=110, color_system=None, force_terminal=False)
    print_working(rv, "PC4", con)
    text = con.export_text()
    golden = GOLDEN / "explain-PC4.txt"
    if os.environ.get("CAPCHECK_REGEN_GOLDEN") == "1":
        golden.write_text(text, encoding="utf-8")
    assert golden.exists(), (f"{golden} is missing; it is regenerated only on purpose: "
                             "CAPCHECK_REGEN_GOLDEN=1 pytest tests/test_cli.py -k golden")
    assert text == golden.read_text(encoding="utf-8")


def test_explain_matches_a_checked_cap_as_it_matches_a_rejected_one(capsys):
    """One mark comparison for both (case and every space ignored): ' p c 14' finds the checked PC14,
    as ' pc15 ' finds the rejected PC15; PC1 never finds PC14 or PC10."""
    from checker.records import same_mark
    assert main(["explain", str(REV_A), "--cap", " p c 14"]) == EXIT_OK
    captured = capsys.readouterr()
    assert "read as cap 'PC14'" in captured.err and "PC14" in captured.out
    assert same_mark("pc 1", "PC1") and not same_mark("PC1", "PC10") and not same_mark("", "")
