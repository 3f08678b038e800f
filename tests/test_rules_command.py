"""``capcheck rules``: readable at 80 columns, and ``--format json`` (issue 14 item 7)."""

from __future__ import annotations

import json

import pytest
from rich.console import Console

from checker.cli import EXIT_OK, EXIT_UNREADABLE, main
from checker.report.rules_view import RULES_SCHEMA, print_rules
from checker.ruleset.loader import load_ruleset


def _flat(text: str) -> str:
    return " ".join(text.split())


def _listing(ruleset, width: int = 80) -> str:
    con = Console(width=width, record=True, color_system=None)
    print_rules(ruleset, con)
    return con.export_text()


@pytest.mark.parametrize("profile", ["uk-na", "ec2"])
def test_listing_at_80_columns_cuts_nothing(profile):
    rs = load_ruleset(profile)
    text = _listing(rs)
    assert "…" not in text and "..." not in text          # no cell cut short with an ellipsis
    assert max(len(ln.rstrip()) for ln in text.splitlines()) <= 80
    flat = _flat(text)
    params = rs.profile.params
    for r in rs.rules:
        for whole in (r.id, r.title, r.clause, r.not_applicable if r.applies else r.id):
            assert _flat(whole) in flat, whole            # wrapped across lines perhaps, never cut
        for c in r.checks:
            assert _flat(f"{c.value.text} {c.compare} {c.limit.text}") in flat
            for n in c.limit.names & set(params):
                assert f"{n} = {params[n]:g}" in flat
        for v in r.variants:
            assert v.name in flat
    assert "Engineering caution" in text


def test_listing_marks_conditions_and_overrides():
    flat = _flat(_listing(load_ruleset("uk-na")))
    restraint = flat[flat.index("restraint Restraint of one- and two-pile caps"):]
    assert restraint.index("condition (met or not met") < restraint.index("group-size")
    assert "query where bar_ends_known < 0.5" in flat
    assert "tie-method: centre-node (default), column-width, bending" in flat


def test_rules_command_at_80_columns(capsys, monkeypatch):
    monkeypatch.setenv("COLUMNS", "80")
    assert main(["rules"]) == EXIT_OK
    out = capsys.readouterr().out
    assert "…" not in out and max(len(ln.rstrip()) for ln in out.splitlines()) <= 80
    for rid in ("pile-spacing", "tie-steel-x", "punching-perimeter", "stated-vs-checked"):
        assert rid in out


def _rules_json(capsys, *args) -> dict:
    assert main(["rules", "--format", "json", *args]) == EXIT_OK
    return json.loads(capsys.readouterr().out)


def test_rules_json_lists_every_rule_with_its_checks_and_parameters(capsys):
    doc = _rules_json(capsys)
    rs = load_ruleset("uk-na")
    assert doc["schema"] == RULES_SCHEMA and doc["profile"]["name"] == "uk-na" and doc["caution"]
    assert [r["id"] for r in doc["rules"]] == [r.id for r in rs.rules]
    keys = {"id", "title", "clause", "severity", "group", "unit", "kind", "applies", "not_applicable",
            "checks", "overrides", "variants"}
    for rec, rule in zip(doc["rules"], rs.rules):
        assert keys <= set(rec)
        assert (rec["title"], rec["clause"], rec["severity"], rec["group"]) == \
            (rule.title, rule.clause, rule.severity, rule.group)
        assert rec["kind"] in ("quantity", "condition")
        assert len(rec["checks"]) == len(rule.checks)
        for c, spec in zip(rec["checks"], rule.checks):
            assert (c["value"], c["compare"], c["limit"]) == (spec.value.text, spec.compare, spec.limit.text)
    by_id = {r["id"]: r for r in doc["rules"]}
    ps = by_id["pile-spacing"]
    assert ps["unit"] == "mm" and ps["kind"] == "quantity" and ps["applies"] == "n_piles >= 2"
    (check,) = ps["checks"]
    assert check["limit"] == "spacing_factor * pile_dia"
    assert check["parameters"]["spacing_factor"]["value"] == 3.0   # common practice: 3 pile diameters
    assert "common practice" in check["parameters"]["spacing_factor"]["source"]
    assert by_id["restraint"]["kind"] == "condition" and by_id["restraint"]["unit"] == ""
    assert by_id["tie-distribution"]["kind"] == "condition"
    tie = by_id["tie-steel-x"]["variants"]
    assert [(v["family"], v["name"], v["default"]) for v in tie] == [
        ("tie-method", "centre-node", True), ("tie-method", "column-width", False),
        ("tie-method", "bending", False)]
    assert tie[1]["use"]["tie_x"] == "tie_x_cw" and tie[1]["source"]
    anch = by_id["anchorage-x"]["overrides"]
    assert anch[0]["severity"] == "query" and anch[0]["when"] == "bar_ends_known < 0.5"
    stated = by_id["stated-vs-checked"]["checks"][0]
    assert stated["applies"] == "not isnan(stated_pile_load)"


def test_rules_json_follows_the_profile_set_and_dropped_variants(capsys, tmp_path):
    doc = _rules_json(capsys, "--profile", "ec2", "--set", "spacing_factor=2.5", "--drop-variant", "column-width")
    by_id = {r["id"]: r for r in doc["rules"]}
    p = by_id["pile-spacing"]["checks"][0]["parameters"]["spacing_factor"]
    assert p == {"value": 2.5, "source": "set on the command line"}
    assert [v["name"] for v in by_id["tie-steel-x"]["variants"]] == ["centre-node", "bending"]
    prof = tmp_path / "project.toml"
    prof.write_text('name = "project"\nextends = "uk-na"\ndisable = ["group-size"]\n'
                    '[severity]\npile-spacing = "advisory"\n', encoding="utf-8")
    doc = _rules_json(capsys, "--profile", str(prof))
    by_id = {r["id"]: r for r in doc["rules"]}
    assert by_id["pile-spacing"]["severity"] == "advisory" and "group-size" not in by_id
    assert doc["profile"]["disabled"] == ["group-size"]


def test_rules_json_refuses_a_bad_rule_file_like_the_listing(capsys, tmp_path):
    (tmp_path / "bad.toml").write_text('[[rule]]\nid = "bad"\ntitle = "t"\nclause = "c"\n'
                                       'severity = "advisory"\nkind = "maybe"\nvalue = "piles"\n'
                                       'compare = "<="\nlimit = "1"\n', encoding="utf-8")
    assert main(["rules", "--format", "json", "--rules", str(tmp_path)]) == EXIT_UNREADABLE
    err = capsys.readouterr().err
    assert "bad.toml" in err and "'bad'" in err and "kind" in err
