"""Rules whose result is a condition, not a quantity (``kind = "condition"``, issue 14 item 6).

A condition (a one- or two-pile cap needs its restraint shown; the tie steel lies in bands over the
piles) is met or not met: no output shows a value, a limit or a utilisation for it. The comparison
in the rule file still decides the verdict.
"""

from __future__ import annotations

import csv
import json
import textwrap
from pathlib import Path

import numpy as np
import openpyxl
import pytest
from rich.console import Console

from checker.api import review
from checker.cli import main
from checker.report import write_outputs
from checker.report.comments import ALL_CHECKS_SHEET, COMMENTS_SHEET
from checker.ruleset.catalogue import QUANTITIES
from checker.ruleset.evaluate import evaluate_rule
from checker.ruleset.loader import RuleFileError, load_rule_file, load_ruleset

SAMPLE = Path(__file__).resolve().parent.parent / "sample_submissions" / "harbourside-rev-A.csv"
CONDITIONS = {"restraint", "tie-distribution"}
KNOWN = set(QUANTITIES)

RULE = """
[[rule]]
id = "two-pile-restraint"
title = "Restraint"
clause = "common practice"
severity = "query"
unit = "count"
kind = "condition"
value = "n_piles"
compare = ">="
limit = "3"
message = "A {n_piles:.0f}-pile cap needs restraint."
ok_message = "Stable group."
action = "Show the restraint."
"""


def _load(tmp_path, text):
    p = tmp_path / "r.toml"
    p.write_text(textwrap.dedent(text), encoding="utf-8")
    return load_rule_file(p, KNOWN)


def test_a_condition_rule_loads_and_reports_no_figures(tmp_path):
    (rule,) = _load(tmp_path, RULE)
    assert rule.kind == "condition" and rule.is_condition and rule.output_unit == ""
    res = evaluate_rule(rule, {"n_piles": np.array([2.0, 4.0, np.nan])}, 3)
    assert list(res.severity) == ["query", "ok", "query"]   # the comparison still decides
    assert np.isnan(res.value).all() and np.isnan(res.limit).all() and np.isnan(res.util).all()
    assert res.message[0] == "A 2-pile cap needs restraint." and res.action[0] == "Show the restraint."
    assert res.message[1] == "Stable group."
    # the missing input named in plain words, never by its internal name
    assert res.message[2].startswith("Cannot be verified: the number of piles is not given")
    fast = evaluate_rule(rule, {"n_piles": np.array([2.0])}, 1, render=False)
    assert np.isnan(fast.value).all() and np.isnan(fast.util).all()


def test_quantity_is_the_default_kind(tmp_path):
    (rule,) = _load(tmp_path, RULE.replace('kind = "condition"\n', ""))
    assert rule.kind == "quantity" and rule.output_unit == "count"
    res = evaluate_rule(rule, {"n_piles": np.array([2.0])}, 1)
    assert res.value[0] == 2.0 and res.limit[0] == 3.0 and res.util[0] == pytest.approx(1.5)


@pytest.mark.parametrize("change, reason", [
    (('kind = "condition"', 'kind = "state"'), r"'two-pile-restraint'.*kind"),
    (("{n_piles:.0f}-pile", "{value:.0f}-pile"), r"'two-pile-restraint'.*message.*no value"),
    (('action = "Show the restraint."', 'action = "Show it ({utilisation:.2f})."'),
     r"'two-pile-restraint'.*action.*no utilisation"),
    (('ok_message = "Stable group."', 'ok_message = "{limit:.0f} piles."'), r"ok_message.*no limit"),
    (('action = "Show the restraint."',
      'action = "Show the restraint."\n[[rule.variant]]\nfamily = "f"\nname = "a"\nsource = "s"'),
     r"'two-pile-restraint'.*condition rule cannot have method variants"),
])
def test_condition_rules_are_validated_at_load(tmp_path, change, reason):
    old, new = change
    assert old in RULE
    with pytest.raises(RuleFileError, match=reason):
        _load(tmp_path, RULE.replace(old, new))


@pytest.mark.parametrize("profile", ["uk-na", "ec2"])
def test_the_shipped_conditions_are_declared(profile):
    rs = load_ruleset(profile)
    assert {r.id for r in rs.rules if r.is_condition} == CONDITIONS


@pytest.fixture(scope="module")
def sample():
    return review(SAMPLE)


def _condition_rows(frame):
    return frame[frame["rule"].astype(str).isin(CONDITIONS)]


def test_findings_carry_no_figures_for_conditions(sample):
    rows = _condition_rows(sample.findings)
    assert set(rows["severity"]) >= {"query", "advisory"}  # the sample has both kinds failing
    assert rows["value"].isna().all() and rows["limit"].isna().all() and rows["utilisation"].isna().all()
    assert (rows["unit"].astype(str) == "").all()
    others = sample.findings[~sample.findings["rule"].astype(str).isin(CONDITIONS)
                             & (sample.findings["severity"] != "ok")]
    assert others["value"].notna().any()  # quantities keep theirs


def test_json_has_null_figures_for_conditions(capsys, findings_json):
    main(["check", str(SAMPLE), "--format", "json"])
    doc = findings_json(json.loads(capsys.readouterr().out))  # valid against checker/schema/findings-1.json
    cond = [r for r in doc["results"] if r["rule"] in CONDITIONS]
    assert cond and all(r["value"] is None and r["limit"] is None and r["utilisation"] is None for r in cond)
    assert any(r["severity"] != "ok" for r in cond)


def test_terminal_shows_no_figures_for_conditions(sample):
    from checker.report.terminal import print_findings

    con = Console(width=200, record=True, color_system=None)
    print_findings(sample, con, show_ok=True)
    text = con.export_text()
    heads = [ln.split() for ln in text.splitlines() if len(ln.split()) >= 2 and ln.split()[1] in CONDITIONS]
    assert heads, "no condition finding printed"
    for words in heads:  # "QUERY restraint": nothing after the rule id, no figures, no utilisation
        assert words[-1] in CONDITIONS, " ".join(words)
    assert "count against" not in con.export_text()


def test_files_show_no_figures_for_conditions(sample, tmp_path):
    paths = [tmp_path / f"out{e}" for e in (".xlsx", ".csv", ".md", ".html")]
    write_outputs(sample, paths)
    wb = openpyxl.load_workbook(tmp_path / "out.xlsx")
    ws = wb[COMMENTS_SHEET]
    found_col = check_col = None
    seen_comment = False
    for row in ws.iter_rows(values_only=True):
        if row and "Found" in row:
            found_col, check_col = row.index("Found"), row.index("Check")
            continue
        if found_col is not None and row[check_col] and str(row[check_col]).split(":")[0] in CONDITIONS:
            seen_comment = True
            assert "utilisation" not in str(row[found_col]) and "(value" not in str(row[found_col])
    assert seen_comment, "no condition comment on the sheet"
    ws = wb[ALL_CHECKS_SHEET]
    head = None
    seen = 0
    for row in ws.iter_rows(values_only=True):
        if row and "Utilisation" in row:
            head = row
            continue
        if head and row[head.index("Rule")] in CONDITIONS:
            seen += 1
            for h in ("Value", "Limit", "Unit", "Utilisation"):
                assert row[head.index(h)] in (None, ""), (h, row)
    assert seen
    with (tmp_path / "out.csv").open(encoding="utf-8-sig", newline="") as fh:
        rows = list(csv.reader(fh))[1:]
    hdr = rows[0]
    cond = [r for r in rows[1:] if r[hdr.index("Check")].split(":")[0] in CONDITIONS]
    assert cond and all("utilisation" not in r[hdr.index("Found")] for r in cond)
    for name in ("out.md", "out.html"):
        text = (tmp_path / name).read_text(encoding="utf-8")
        for line in text.splitlines():
            if "restraint" in line and "unstable" in line:
                assert "utilisation" not in line and "value 2" not in line, line


def test_is_worse_ignores_missing_utilisation_of_conditions():
    """A carried comment on a condition is judged on its severity alone (revision.py)."""
    from checker.revision import _is_worse

    assert not _is_worse("query", None, "query", None)
    assert _is_worse("unsafe", None, "query", None)
