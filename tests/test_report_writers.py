"""The fast writers carry what the row-by-row writers carried (issue 14, item 4): the JSON results,
the working of every cap in one pass, and the comment model, checked against plain row-by-row
reconstructions on the sample submission and on generated caps."""

from __future__ import annotations

import json
import math
from pathlib import Path

import pytest
from bench_engine import synthetic_schedule  # invented caps
from conftest_report import META, engine_review, make_review

import checker
from checker.findings import comment_records, records, sort_findings, source_of
from checker.report import write_outputs
from checker.report.json_out import (
    dumps,
    to_document,
    variants_record,
)

SAMPLE = Path(__file__).resolve().parents[1] / "sample_submissions" / "harbourside-rev-A.csv"


@pytest.fixture(scope="module", params=["sample", "generated", "controlled"])
def review(request):
    if request.param == "sample":
        return checker.review(SAMPLE)
    if request.param == "controlled":   # the report tests' Review: the engine's, with controlled findings
        return make_review()
    return checker.review(synthetic_schedule(120, seed=11))


def _num(v):
    if v is None:
        return None
    f = float(v)
    return None if math.isnan(f) or math.isinf(f) else round(f, 6)


def _expected_results(rv, working: bool):
    """The results as the row-by-row writer made them (pandas rows, one cap's trace at a time)."""
    out = []
    work = {}
    for row in rv.findings.to_dict("records"):
        item = {"cap": str(row["cap"]), "rule": row["rule"], "severity": row["severity"],
                "clause": row["clause"], "value": _num(row["value"]), "limit": _num(row["limit"]),
                "unit": row["unit"], "utilisation": _num(row["utilisation"]), "message": row["message"],
                "source": source_of(row),
                "case": row.get("case") if isinstance(row.get("case"), str) else None}
        if row.get("action"):
            item["action"] = row["action"]
        var = variants_record(row)
        if var is not None:
            item["variants"] = var
        if working:
            cap = item["cap"]
            if cap not in work:
                per_rule = {}
                for line in rv.working(cap):
                    per_rule.setdefault(line.rule, []).append(line.text.strip())
                work[cap] = per_rule
            item["working"] = work[cap].get(item["rule"], [])
        out.append(item)
    return json.loads(json.dumps(out))


@pytest.mark.parametrize("working", [False, True])
def test_json_results_are_the_row_by_row_results(review, working):
    doc = json.loads(dumps(review, working=working))
    assert doc["results"] == _expected_results(review, working)
    assert doc == to_document(review, working=working)
    assert doc["summary"]["caps_checked"] == len(review.caps)


def test_json_text_is_one_result_a_line(review):
    text = dumps(review)
    lines = text.splitlines()
    start = lines.index('  "results": [')
    items = lines[start + 1:start + 1 + len(review.findings)]
    assert all(ln.startswith("    {") for ln in items)
    assert [json.loads(ln.rstrip(",")) for ln in items[:3]] == json.loads(text)["results"][:3]
    assert text.endswith("}\n")


def test_working_of_every_cap_in_one_pass_equals_cap_by_cap(review):
    marks = review.caps["mark"].astype(str).tolist()
    many = review.working_by_rule(marks)
    assert set(many) == set(marks)
    for mark in marks:
        one: dict[str, list[str]] = {}
        for line in review.working(mark):
            one.setdefault(line.rule, []).append(line.text.strip())
        assert many[mark] == one, mark


def test_records_and_comment_records_match_pandas(review):
    f = review.findings
    assert json.dumps(records(f), default=str) == json.dumps(f.to_dict("records"), default=str)
    expected = [r for r in sort_findings(f).to_dict("records") if r["severity"] != "ok"]
    assert json.dumps(comment_records(f), default=str) == json.dumps(expected, default=str)


def test_engine_review_json_conforms_to_the_schema(tmp_path, findings_json):
    """On the engine's own Review of the invented caps: the JSON written (with the working) conforms
    to the published schema and carries every result, every cap, the rejected row and the remedies."""
    rv = engine_review()
    (path,) = write_outputs(rv, [tmp_path / "findings.json"], meta=META)
    doc = findings_json(json.loads(path.read_text(encoding="utf-8")))
    assert len(doc["results"]) == len(rv.findings)
    assert [r["cap"] for r in doc["results"]] == rv.findings["cap"].astype(str).tolist()
    assert {r["cap"] for r in doc["results"]} == set(rv.caps["mark"].astype(str))
    assert all(r["working"] for r in doc["results"])
    assert [r["mark"] for r in doc["rejected"]] == ["PC9"]
    assert doc["summary"]["caps_checked"] == len(rv.caps) and doc["summary"]["rows_rejected"] == 1
    assert doc["remedies"]
