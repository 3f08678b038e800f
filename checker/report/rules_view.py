"""``capcheck rules``: the loaded rules and their limits in the active profile.

Two views of one record per rule (:func:`rule_record`): a listing that reads at 80 columns (one block
per rule: the severity, id and title on one line, then clause, where it applies, each check with the
profile's values of the parameters it uses, overrides and method variants, every field wrapped, never
cut), and a JSON document (``--format json``, ``capcheck.rules/1``) for scripts and reviews.
"""

from __future__ import annotations

import json
from typing import Any

from rich.console import Console, Group
from rich.padding import Padding
from rich.table import Table
from rich.text import Text

from checker.caution import CAUTION
from checker.report.terminal import print_caution, severity_text

RULES_SCHEMA = "capcheck.rules/1"
_GROUP_TITLES = {"detailing": "Detailing rules", "strength": "Strength rules", "serviceability": "Serviceability rules",
                 "": "Other rules"}


def _params_of(names, profile) -> dict[str, dict[str, Any]]:
    """The profile parameters among ``names``, in name order, with their resolved value and source."""
    out = {}
    for n in sorted(names):
        if n in profile.params:
            out[n] = {"value": profile.params[n], "source": profile.sources.get(n, "")}
    return out


def rule_record(rule, profile) -> dict[str, Any]:
    """One rule as plain data: what `capcheck rules --format json` prints for it."""
    checks = []
    for c in rule.checks:
        names = set(c.value.names) | set(c.limit.names) | (set(c.applies.names) if c.applies else set())
        checks.append({
            "label": c.label,
            "value": c.value.text,
            "compare": c.compare,
            "limit": c.limit.text,
            "applies": c.applies.text if c.applies else None,
            "parameters": _params_of(names, profile),
        })
    return {
        "id": rule.id,
        "title": rule.title,
        "clause": rule.clause,
        "severity": rule.severity,
        "group": rule.group,
        "unit": rule.output_unit,
        "kind": rule.kind,
        "applies": rule.applies.text if rule.applies else None,
        "applies_parameters": _params_of(rule.applies.names, profile) if rule.applies else {},
        "not_applicable": rule.not_applicable,
        "checks": checks,
        "overrides": [{"when": o.when.text, "severity": o.severity, "note": o.note} for o in rule.overrides],
        "variants": [{"family": v.family, "name": v.name, "default": i == _first_of(rule, v.family),
                      "source": v.source, "use": dict(v.use)}
                     for i, v in enumerate(rule.variants)],
        "file": rule.file,
    }


def _first_of(rule, family: str) -> int:
    return next(i for i, v in enumerate(rule.variants) if v.family == family)


def rules_document(ruleset) -> dict[str, Any]:
    prof = ruleset.profile
    return {
        "schema": RULES_SCHEMA,
        "profile": {"name": prof.name, "title": prof.title, "files": list(prof.files),
                    "disabled": list(prof.disable), "dropped_variants": list(prof.drop_variants)},
        "folders": list(ruleset.folders),
        "caution": CAUTION,
        "rules": [rule_record(r, prof) for r in ruleset.rules],
    }


def rules_json(ruleset) -> str:
    return json.dumps(rules_document(ruleset), indent=2, ensure_ascii=False)


# ---- the listing -------------------------------------------------------------------------------

def _fmt_param(v) -> str:
    return f"{v:g}" if isinstance(v, (int, float)) and not isinstance(v, bool) else str(v)


def _check_text(c: dict, n_checks: int) -> Text:
    t = Text()
    if n_checks > 1 and c["label"]:
        t.append(c["label"].rstrip(":") + ":", style="italic")
        t.append("\n")
    t.append(f"{c['value']} {c['compare']} {c['limit']}", style="bold")
    if c["applies"]:
        t.append(f"\nonly where {c['applies']}")
    if c["parameters"]:
        t.append("\n" + "; ".join(f"{n} = {_fmt_param(p['value'])}" for n, p in c["parameters"].items()),
                 style="cyan")
    return t


def _rule_block(rec: dict) -> Group:
    head = Text.assemble(severity_text(rec["severity"]), " ", (rec["id"], "bold"), "  ", rec["title"])
    grid = Table.grid(padding=(0, 1), expand=True)
    grid.add_column("field", style="dim", no_wrap=True, width=9)
    grid.add_column("text", overflow="fold", ratio=1)
    grid.add_row("clause", Text(rec["clause"]))
    if rec["applies"]:
        applies = Text(rec["applies"])
        if rec["applies_parameters"]:
            applies.append(" (" + "; ".join(f"{n} = {_fmt_param(p['value'])}"
                                            for n, p in rec["applies_parameters"].items()) + ")", style="cyan")
        grid.add_row("applies", applies)
        grid.add_row("otherwise", Text(f"not applicable: {rec['not_applicable']}"))
    for i, c in enumerate(rec["checks"]):
        grid.add_row("check" if i == 0 else "", _check_text(c, len(rec["checks"])))
    kind = "condition (met or not met; no value, limit or utilisation)" if rec["kind"] == "condition" \
        else (rec["unit"] or "(no unit)")
    grid.add_row("reports", Text(kind))
    for o in rec["overrides"]:
        grid.add_row("override", Text(f"{o['severity']} where {o['when']}" + (f": {o['note']}" if o["note"] else "")))
    families: dict[str, list[str]] = {}
    for v in rec["variants"]:
        families.setdefault(v["family"], []).append(v["name"] + (" (default)" if v["default"] else ""))
    for fam, names in families.items():
        grid.add_row("methods", Text(f"{fam}: {', '.join(names)}"))
    return Group(head, Padding(grid, (0, 0, 0, 2)))


def print_rules(ruleset, console: Console) -> None:
    """The rules, grouped (detailing, strength), one block per rule; readable at 80 columns."""
    doc = rules_document(ruleset)
    prof = doc["profile"]
    console.print(Text.assemble(("Rules loaded", "bold"), f" ({len(doc['rules'])}), profile ",
                                (prof["name"], "bold cyan"), f": {prof['title']}" if prof["title"] else ""))
    console.print(Text("Limits are expressions in capcheck's internal units (mm, N, N·mm, MPa); the profile's "
                       "values of their parameters are shown beneath them.", style="dim"))
    groups: dict[str, list[dict]] = {}
    for rec in doc["rules"]:
        groups.setdefault(rec["group"], []).append(rec)
    for g, recs in groups.items():
        console.print(Text("\n" + _GROUP_TITLES.get(g, f"{g.capitalize()} rules"), style="bold underline"))
        for rec in recs:
            console.print()
            console.print(_rule_block(rec))
    if prof["disabled"]:
        console.print(Text(f"\nDisabled by the profile: {', '.join(prof['disabled'])}", style="dim"))
    console.print()
    print_caution(console)
