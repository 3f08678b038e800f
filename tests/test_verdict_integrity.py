"""Verdict integrity (issue 6): nothing read is lost and nothing is counted twice.

Over the sample submission (in each of its three formats and both profiles) and over
hypothesis-generated schedules (valid ones, and mutated ones with rejected rows):

* the caps in the output are exactly the caps read (none lost, none added, none twice);
* every rule gives exactly one result per cap;
* rows_read == caps_checked + rows_rejected, in the Review and in the JSON document;
* the summary counts of the JSON (``checker.report.json_out.to_document``) equal the counts of its
  results, which are the findings one for one;
* every result points back at the row its cap was read from, and no rejected row has a result.

Invented data only.
"""

from __future__ import annotations

from collections import Counter
from pathlib import Path

import numpy as np
import pytest
from fuzz.schedules import any_cell, frame_of, valid_rows
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from checker.api import check_schedule, review
from checker.findings import COMMENT_SEVERITIES, SEVERITY_ORDER
from checker.ingest.schedule import read_schedule, schedule_from_frame
from checker.report.json_out import SCHEMA, to_document
from checker.ruleset.loader import load_ruleset

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = ROOT / "sample_submissions"

SLOW = settings(max_examples=25, deadline=None,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])


@pytest.fixture(scope="module")
def rulesets():
    return {p: load_ruleset(p) for p in ("uk-na", "ec2")}


def assert_integrity(rv, sched) -> dict:
    """All the invariants of the module docstring; returns the JSON document."""
    f = rv.findings
    marks = [str(m) for m in sched.caps["mark"]]
    rule_ids = [r.id for r in rv.rules]
    # the caps checked are the caps read, each once
    assert len(set(marks)) == len(marks)
    assert list(rv.caps["mark"].astype(str)) == marks
    assert set(f["cap"]) == set(marks)
    # exactly one result per (cap, rule)
    assert len(rule_ids) == len(set(rule_ids))
    assert len(f) == len(marks) * len(rule_ids)
    pairs = Counter(zip(f["cap"], f["rule"]))
    assert set(pairs.values()) <= {1}
    assert set(pairs) == {(m, r) for m in marks for r in rule_ids}
    assert set(f["severity"]) <= set(SEVERITY_ORDER)
    # rows
    assert rv.rows_read == sched.rows_read == len(rv.caps) + len(rv.rejected)
    # the JSON document
    doc = to_document(rv)
    assert doc["schema"] == SCHEMA
    s = doc["summary"]
    assert s["rows_read"] == s["caps_checked"] + s["rows_rejected"] == sched.rows_read
    assert s["caps_checked"] == len(marks) and s["rows_rejected"] == len(doc["rejected"]) == len(sched.rejected)
    assert len(doc["results"]) == len(f)
    counts = Counter(r["severity"] for r in doc["results"])
    assert set(s["findings"]) == set(COMMENT_SEVERITIES)
    for sev in COMMENT_SEVERITIES:
        assert s["findings"][sev] == counts.get(sev, 0), sev
    assert sum(counts.values()) == len(doc["results"])
    assert Counter((r["cap"], r["rule"]) for r in doc["results"]) == pairs
    assert Counter(r["severity"] for r in doc["results"]) == Counter(f["severity"])
    # provenance: each result names its cap's row; no result for a rejected row
    row_of = {str(m): (file, row) for m, file, row in zip(sched.caps["mark"], sched.caps["src_file"],
                                                          sched.caps["src_row"])}
    for r in doc["results"]:
        assert (r["source"]["file"], r["source"]["row"]) == (row_of[r["cap"]][0], int(row_of[r["cap"]][1]))
    checked_rows = {(file, int(row)) for file, row in row_of.values()}
    for rej in doc["rejected"]:
        assert (rej["source"]["file"], rej["source"]["row"]) not in checked_rows
        assert rej["errors"]
    # numbers in the JSON are finite or null
    for r in doc["results"]:
        for k in ("value", "limit", "utilisation"):
            assert r[k] is None or np.isfinite(r[k])
    return doc


@pytest.mark.parametrize("ext", ["csv", "xlsx", "pdf"])
@pytest.mark.parametrize("profile", ["uk-na", "ec2"])
def test_sample_submission(ext, profile, rulesets):
    path = SAMPLES / f"harbourside-rev-A.{ext}"
    sched = read_schedule(path)
    rv = check_schedule(sched, rulesets[profile], path.name)
    doc = assert_integrity(rv, sched)
    # the sample (sample_submissions/README.md): 17 rows, PC15 rejected for two layers in a cell
    assert doc["summary"]["rows_read"] == 17 and doc["summary"]["rows_rejected"] == 1
    assert "PC15" not in set(rv.findings["cap"])


def test_the_three_formats_of_the_sample_give_the_same_verdicts(rulesets):
    got = {}
    for ext in ("csv", "xlsx", "pdf"):
        rv = check_schedule(read_schedule(SAMPLES / f"harbourside-rev-A.{ext}"), rulesets["uk-na"], ext)
        f = rv.findings.sort_values(["cap", "rule"]).reset_index(drop=True)
        got[ext] = f[["cap", "rule", "severity", "value", "limit", "utilisation", "message"]]
    assert got["csv"].equals(got["xlsx"])
    assert got["csv"].equals(got["pdf"])


def test_the_api_review_agrees(rulesets):
    rv = review(SAMPLES / "harbourside-rev-A.csv")
    sched = read_schedule(SAMPLES / "harbourside-rev-A.csv")
    assert_integrity(rv, sched)
    assert rv.summary() == to_document(rv)["summary"]


@SLOW
@given(rows=valid_rows(1, 8), profile=st.sampled_from(["uk-na", "ec2"]))
def test_valid_random_schedules(rows, profile, rulesets):
    sched = schedule_from_frame(frame_of(rows))
    assert sched.rejected == [], sched.rejected            # every generated row is valid
    rv = check_schedule(sched, rulesets[profile], "random")
    assert_integrity(rv, sched)


@SLOW
@given(rows=valid_rows(2, 8), data=st.data())
def test_schedules_with_broken_rows(rows, data, rulesets):
    """Some rows broken (a cell replaced by anything): the counts still add up."""
    k = data.draw(st.integers(1, len(rows) - 1))
    broken = data.draw(st.lists(st.integers(0, len(rows) - 1), min_size=1, max_size=k, unique=True))
    for i in broken:
        fld = data.draw(st.sampled_from(["piles", "pile_dia", "cap_depth", "column", "n_ed", "concrete",
                                         "cover", "bars_x", "bars_y", "embedment", "mark"]))
        rows[i][fld] = data.draw(any_cell())
    sched = schedule_from_frame(frame_of(rows))
    assert len(sched.caps) >= len(rows) - len(broken)
    rv = check_schedule(sched, rulesets["uk-na"], "broken")
    assert_integrity(rv, sched)


def test_a_schedule_with_every_row_rejected(rulesets):
    rows = [{"mark": f"PC{i}", "piles": "many", "pile_dia": 600, "cap_length": 2000, "cap_width": 2000,
             "cap_depth": 1000, "column": "500", "n_ed": 2000, "concrete": "C32/40", "cover": 75,
             "bars_x": "10H20", "bars_y": "10H20"} for i in range(3)]
    sched = schedule_from_frame(frame_of(rows))
    assert len(sched.caps) == 0 and len(sched.rejected) == 3
    rv = check_schedule(sched, rulesets["uk-na"], "all-rejected")
    doc = assert_integrity(rv, sched)
    assert doc["results"] == [] and doc["summary"]["findings"] == dict.fromkeys(COMMENT_SEVERITIES, 0)
