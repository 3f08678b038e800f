"""The published JSON Schema of ``capcheck.findings/1`` (checker/schema/findings-1.json): the JSON of
``--format json`` and of ``-o FILE.json`` conforms to it, and malformed documents are refused."""

from __future__ import annotations

import copy
import json
from pathlib import Path

import jsonschema
import pytest

from checker.cli import EXIT_FINDINGS, EXIT_OK, main
from checker.resources import findings_schema_text

ROOT = Path(__file__).resolve().parent.parent
REV_A = ROOT / "sample_submissions" / "harbourside-rev-A.csv"


@pytest.fixture(scope="module")
def sample_doc() -> dict:
    from checker.api import review
    from checker.report.json_out import to_document

    return to_document(review(REV_A), working=True)


def test_the_schema_is_a_valid_draft_2020_12_schema():
    schema = json.loads(findings_schema_text())
    jsonschema.Draft202012Validator.check_schema(schema)
    assert schema["properties"]["schema"]["const"] == "capcheck.findings/1"
    from checker.findings import SEVERITY_ORDER

    assert schema["$defs"]["severity"]["enum"] == list(SEVERITY_ORDER)


def test_schema_command_prints_the_packaged_schema(capsys):
    assert main(["schema"]) == EXIT_OK
    out = capsys.readouterr().out
    assert json.loads(out) == json.loads(findings_schema_text())


def test_stdout_json_of_the_sample_csv_conforms(capsys, findings_json):
    assert main(["check", str(REV_A), "--format", "json", "--working"]) == EXIT_FINDINGS
    doc = findings_json(json.loads(capsys.readouterr().out))
    assert doc["results"] and doc["rejected"]  # both parts of the contract are exercised
    assert any("variants" in r for r in doc["results"]) and any("action" in r for r in doc["results"])


def test_json_written_with_o_conforms(tmp_path, capsys, findings_json):
    target = tmp_path / "findings.json"
    assert main(["check", str(REV_A), "-o", str(target)]) == EXIT_FINDINGS
    doc = findings_json(json.loads(target.read_text(encoding="utf-8")))
    assert all("working" in r for r in doc["results"])  # files carry the working


def _broken(doc: dict, how: str) -> dict:
    bad = copy.deepcopy(doc)
    if how == "no-summary":
        del bad["summary"]
    elif how == "bad-severity":
        bad["results"][0]["severity"] = "critical"
    elif how == "no-rule":
        del bad["results"][0]["rule"]
    elif how == "value-as-text":
        bad["results"][0]["value"] = "1800 mm"
    elif how == "wrong-schema":
        bad["schema"] = "capcheck.findings/2"
    elif how == "count-missing":
        del bad["summary"]["findings"]["unsafe"]
    elif how == "negative-count":
        bad["summary"]["rows_read"] = -1
    elif how == "rejected-without-errors":
        bad["rejected"][0]["errors"] = []
    elif how == "source-row-as-text":
        bad["results"][0]["source"]["row"] = "3"
    elif how == "unknown-top-level-field":
        bad["extra"] = 1
    return bad


@pytest.mark.parametrize("how", ["no-summary", "bad-severity", "no-rule", "value-as-text", "wrong-schema",
                                 "count-missing", "negative-count", "rejected-without-errors",
                                 "source-row-as-text", "unknown-top-level-field"])
def test_malformed_documents_are_refused(sample_doc, findings_json, how):
    findings_json(sample_doc)  # the unbroken document conforms
    with pytest.raises(jsonschema.ValidationError):
        findings_json(_broken(sample_doc, how))


def test_a_result_may_carry_further_fields(sample_doc, findings_json):
    """Fields added to a result later (within version 1) do not break the contract."""
    doc = copy.deepcopy(sample_doc)
    doc["results"][0]["note"] = "a field added later"
    findings_json(doc)
