"""The JSON contract of the brief: ``capcheck.findings/1``."""

from __future__ import annotations

import json
import math
from pathlib import Path
from typing import Any

from checker.caution import CAUTION
from checker.findings import count_by_severity, source_of
from checker.ruleset.evaluate import variants_record

SCHEMA = "capcheck.findings/1"


def _num(v: Any) -> float | None:
    if v is None:
        return None
    try:
        f = float(v)
    except (TypeError, ValueError):
        return None
    if math.isnan(f):
        return None
    if math.isinf(f):
        return None
    return round(f, 6)


def to_document(review, *, working: bool = False) -> dict[str, Any]:
    f = review.findings
    results = []
    work_by_cap: dict[str, dict[str, list[str]]] = {}
    for row in f.to_dict("records"):
        item = {
            "cap": str(row["cap"]),
            "rule": row["rule"],
            "severity": row["severity"],
            "clause": row["clause"],
            "value": _num(row["value"]),
            "limit": _num(row["limit"]),
            "unit": row["unit"],
            "utilisation": _num(row["utilisation"]),
            "message": row["message"],
            "source": source_of(row),
            "case": row.get("case") if isinstance(row.get("case"), str) else None,
        }
        if row.get("action"):
            item["action"] = row["action"]
        var = variants_record(row)
        if var is not None:
            item["variants"] = var
        if working:
            cap = item["cap"]
            if cap not in work_by_cap:
                per_rule: dict[str, list[str]] = {}
                for line in review.working(cap):
                    per_rule.setdefault(line.rule, []).append(line.text.strip())
                work_by_cap[cap] = per_rule
            item["working"] = work_by_cap[cap].get(item["rule"], [])
        results.append(item)
    doc = {
        "schema": SCHEMA,
        "submission": review.submission,
        "profile": review.profile_name,
        "caution": CAUTION,
        "summary": {
            "rows_read": int(review.rows_read),
            "caps_checked": int(len(review.caps)),
            "rows_rejected": int(len(review.rejected)),
            "rows_skipped": int(len(getattr(review, "skipped", None) or [])),
            "findings": count_by_severity(f) if len(f) else {
                "unsafe": 0, "non-compliant": 0, "query": 0, "advisory": 0},
            **(review.case_summary() if hasattr(review, "case_summary") else {}),
        },
        "results": results,
        "rejected": [
            {"source": r["source"], **({"mark": r["mark"]} if r.get("mark") else {}), "errors": list(r["errors"])}
            for r in review.rejected
        ],
        "skipped": [dict(r) for r in getattr(review, "skipped", None) or []],
        "table_problems": [{"source": p["source"], "errors": list(p["errors"])}
                           for p in getattr(review, "table_problems", None) or []],
        "unused_headings": list(getattr(review, "unused_headings", None) or []),
        "notes": list(review.notes or []),
    }
    from checker.remedy import remedies_json

    rem = remedies_json(review)
    if rem is not None:
        doc["remedies"] = rem
    return doc


def dumps(review, *, working: bool = False) -> str:
    return json.dumps(to_document(review, working=working), indent=2, ensure_ascii=False)


def write_json(review, path: Path, *, working: bool = True) -> None:
    """Write the JSON document to ``path`` (the caller handles atomic replacement)."""
    Path(path).write_text(dumps(review, working=working) + "\n", encoding="utf-8")
