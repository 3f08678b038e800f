"""The JSON contract of the brief: ``capcheck.findings/1``.

Built column by column (one ``tolist()`` per column of the findings frame, never a pandas row per
result) and written as it is encoded: the document's head and tail are indented, each result is
one line of compact JSON inside ``"results"``, encoded by the standard library's C encoder. A
schedule of 10,000 caps (250,000 results) is written in about the time ``json.dumps`` takes for
the same records (see ``tests/benchmarks/bench_writers.py``), without holding the whole text.
"""

from __future__ import annotations

import functools
import io
import itertools
import json
from pathlib import Path
from typing import Any, Callable, Iterator

import numpy as np

from checker.caution import CAUTION
from checker.findings import count_by_severity

SCHEMA = "capcheck.findings/1"
CHUNK = 5000          # results encoded and written per piece

try:  # the C encoder, built once (json.dumps builds one per call)
    from json.encoder import c_make_encoder as _c_make_encoder  # type: ignore[attr-defined]  # not in the stubs
    from json.encoder import encode_basestring as _encode_basestring
except ImportError:  # pragma: no cover - CPython always has it
    _c_make_encoder = None


def _encoder() -> Callable[[Any], str]:
    if _c_make_encoder is not None:
        enc = _c_make_encoder(None, None, _encode_basestring, None, ": ", ", ", False, False, True)
        return lambda obj: "".join(enc(obj, 0))
    plain = json.JSONEncoder(ensure_ascii=False)
    return plain.encode


def _col(f, name: str, n: int) -> list:
    return f[name].tolist() if name in f.columns else [None] * n


def _nan_none(values: list) -> list:
    """None for NaN, pd.NA and None; everything else as it is (text columns)."""
    return [None if v is None or v != v or v is _NA else v for v in values]


try:
    from pandas import NA as _NA
except ImportError:  # pragma: no cover
    _NA = object()


def _int_none(values: list) -> list:
    out: list[int | None] = []
    for v in values:
        if v is None or v is _NA:
            out.append(None)
            continue
        try:
            out.append(None if v != v else int(v))
        except (TypeError, ValueError):
            out.append(None)
    return out


def _texts(values: list, encode: Callable[[str], str]) -> list[str]:
    """Each value as JSON text: strings encoded (once per distinct value), anything missing null."""
    cache: dict[Any, str] = {}
    out = []
    for v in values:
        t = cache.get(v)
        if t is None:
            t = cache[v] = "null" if (v is None or v is _NA or v != v) else encode(str(v))
        out.append(t)
    return out


def _number_texts(values) -> list[str]:
    """``round(v, 6)`` as JSON (Python's correctly rounded decimal rounding, as ``float.__repr__``
    writes it, like ``json.dumps``), null for NaN and inf."""
    out = list(map(repr, map(round, values.tolist(), itertools.repeat(6))))
    for i in np.flatnonzero(~np.isfinite(values)).tolist():
        out[i] = "null"
    return out


def variants_record(row: dict) -> dict | None:
    """The ``variants`` object of the JSON contract from a findings row (None for single-method rules):
    the engine's variant columns as they are, the passing methods the accepted ones not failing."""
    acc = row.get("variants_accepted")
    if not isinstance(acc, str):
        return None
    failing = row.get("variants_failing") or ""
    accepted, failed, passing = _variant_lists(acc, failing if isinstance(failing, str) else "")
    return {
        "accepted": list(accepted),
        "failing": list(failed),
        "passing": list(passing),
        "lowest": {"variant": row.get("variant_lo"), "utilisation": _r(row.get("util_lo"))},
        "highest": {"variant": row.get("variant_hi"), "utilisation": _r(row.get("util_hi"))},
    }


@functools.lru_cache(maxsize=4096)
def _variant_lists(accepted_text: str, failing_text: str) -> tuple[tuple[str, ...], ...]:
    """(accepted, failing, passing) from the ``; ``-joined texts of a findings row (few distinct
    pairs over a whole schedule, hence the cache)."""
    accepted = tuple(a for a in accepted_text.split("; ") if a)
    failing = tuple(a for a in failing_text.split("; ") if a)
    return accepted, failing, tuple(a for a in accepted if a not in failing)


def _r(x):
    if x is None:
        return None
    x = float(x)
    return None if (x != x or x in (float("inf"), float("-inf"))) else round(x, 4)


def iter_result_texts(review, *, working: bool = False, chunk: int = CHUNK,
                      comments: dict[tuple[str, str], dict[str, Any]] | None = None) -> Iterator[list[str]]:
    """The ``results`` of the document as JSON texts, one per result, in the findings' order,
    ``chunk`` at a time. Text is made column by column: every distinct string is encoded once
    (rule ids, clauses, units and sources repeat over thousands of rows), numbers through
    ``float.__repr__`` as ``json`` does; only the small ``variants`` and ``working`` values go
    through the encoder per result."""
    f = review.findings
    n = len(f)
    if n == 0:
        return
    enc = _encode_basestring if _c_make_encoder is not None else (lambda t: json.dumps(t, ensure_ascii=False))
    encode = _encoder()
    work: dict[str, dict[str, list[str]]] | None = None
    if working:
        caps_all = list(dict.fromkeys(f["cap"].astype(str).tolist()))
        work = review.working_by_rule(caps_all)
        if work is None:   # a Review without the one-pass trace: cap by cap, each cap once
            work = {}
            for cap in caps_all:
                per_rule: dict[str, list[str]] = {}
                for line in review.working(cap):
                    per_rule.setdefault(line.rule, []).append(line.text.strip())
                work[cap] = per_rule
    # per-rule text columns are categorical: encode the categories once
    for start in range(0, n, chunk):
        part = f.iloc[start:start + chunk]
        m = len(part)
        caps = [str(c) for c in part["cap"].tolist()]
        cap_t = list(map(enc, caps))
        rules = part["rule"].tolist()
        rule_t, sev_t, clause_t, unit_t = (_texts(part[c].tolist(), enc)
                                           for c in ("rule", "severity", "clause", "unit"))
        msg_t = _texts(part["message"].tolist(), enc) if m else []
        action = _col(part, "action", m)
        case_t = [enc(c) if isinstance(c, str) else "null" for c in _col(part, "case", m)]
        value_t, limit_t, util_t = (_number_texts(part[c].to_numpy(dtype=float, na_value=np.nan))
                                    for c in ("value", "limit", "utilisation"))
        files, sheets = _nan_none(_col(part, "src_file", m)), _nan_none(_col(part, "src_sheet", m))
        pages, rows = _int_none(_col(part, "src_page", m)), _int_none(_col(part, "src_row", m))
        acc = _col(part, "variants_accepted", m)
        has_var = [isinstance(a, str) for a in acc]
        if any(has_var):
            vnames = ("variants_accepted", "variants_failing", "variant_lo", "util_lo", "variant_hi", "util_hi")
            vcols = [_col(part, c, m) for c in vnames]
        sources: dict[tuple, str] = {}
        out = []
        for k in range(m):
            key = (files[k], sheets[k], pages[k], rows[k])
            src = sources.get(key)
            if src is None:
                src = sources[key] = encode({"file": key[0], "sheet": key[1], "page": key[2], "row": key[3]})
            tail = ""
            a = action[k]
            if a and a == a:
                tail = ', "action": ' + enc(a)
            if has_var[k]:
                tail += ', "variants": ' + encode(variants_record(dict(zip(vnames, (c[k] for c in vcols)))))
            if work is not None:
                tail += ', "working": ' + encode(work.get(caps[k], {}).get(rules[k], []))
            if comments:
                cm = comments.get((caps[k], str(rules[k])))
                if cm is not None:
                    tail += ', "comment": ' + encode(cm)
            out.append(
                f'{{"cap": {cap_t[k]}, "rule": {rule_t[k]}, "severity": {sev_t[k]}, "clause": {clause_t[k]}, '
                f'"value": {value_t[k]}, "limit": {limit_t[k]}, "unit": {unit_t[k]}, '
                f'"utilisation": {util_t[k]}, "message": {msg_t[k]}, "source": {src}, "case": {case_t[k]}{tail}}}'
            )
        yield out


def _head(review) -> dict[str, Any]:
    f = review.findings
    return {
        "schema": SCHEMA,
        "submission": review.submission,
        "profile": review.profile_name,
        "caution": CAUTION,
        "summary": {
            "rows_read": int(review.rows_read),
            "caps_checked": int(len(review.caps)),
            "rows_rejected": int(len(review.rejected)),
            "rows_skipped": len(review.skipped),
            "findings": count_by_severity(f) if len(f) else {
                "unsafe": 0, "non-compliant": 0, "query": 0, "advisory": 0},
            **(review.case_summary() if hasattr(review, "case_summary") else {}),
        },
    }


def comment_records_by_pair(review, revision) -> dict[tuple[str, str], dict[str, Any]]:
    """The carried comment of every (cap, rule) as the JSON gives it (with --previous)."""
    from checker.report.comments import build_comments

    out: dict[tuple[str, str], dict[str, Any]] = {}
    for c in build_comments(review, revision):
        if not c.key:
            continue
        rec: dict[str, Any] = {"no": int(c.no), "status": c.status, "outcome": c.outcome, "note": c.note,
                               "response": c.response, "reply": c.reply}
        if c.second_look:
            rec["second_look"] = True
        out[(c.cap, c.rule)] = rec
    return out


def _revision_doc(revision) -> dict[str, Any]:
    return {
        "revision": {
            "label": revision.revision,
            "previous": revision.previous.revision,
            "previous_sheet": Path(revision.previous.path).name,
            "policy": revision.policy,
            "summary": revision.summary(),
            "counts": dict(revision.counts),
            "inputs_recorded": revision.inputs_recorded,
        },
        "changes": [dict(c) for c in revision.changes],
    }


def _tail(review, revision=None) -> dict[str, Any]:
    """What follows the results: the rows not checked and why, the notes, and the remedies."""
    doc: dict[str, Any] = {
        "rejected": [r.to_dict() for r in review.rejected],
        "skipped": [r.to_dict() for r in review.skipped],
        "table_problems": [p.to_dict() for p in review.table_problems],
        "unused_headings": list(review.unused_headings),
        "notes": list(review.notes or []),
    }
    from checker.remedy import remedies_json

    rem = remedies_json(review)
    if rem is not None:
        doc["remedies"] = rem
    if revision is not None:
        doc.update(_revision_doc(revision))
    return doc


def to_document(review, *, working: bool = False, revision=None) -> dict[str, Any]:
    """The whole document as one dict (for callers that want the objects, not the text): the
    text of :func:`write_document` read back, so there is one writer."""
    return json.loads(dumps(review, working=working, revision=revision))


def write_document(review, write: Callable[[str], Any], *, working: bool = False, revision=None) -> None:
    """Write the document as text through ``write`` (e.g. ``sys.stdout.write``), piece by piece;
    the text ends with a newline. With ``revision`` (a :class:`checker.revision.RevisionResult`)
    each result carries its ``comment`` and the tail the ``revision`` summary and the ``changes``."""
    head = json.dumps(_head(review), indent=2, ensure_ascii=False)
    write(head[: head.rindex("\n}")] + ',\n  "results": [')
    first = True
    comments = comment_records_by_pair(review, revision) if revision is not None else None
    for part in iter_result_texts(review, working=working, comments=comments):
        text = ",\n    ".join(part)
        write(("\n    " if first else ",\n    ") + text)
        first = False
    write("]," if first else "\n  ],")
    tail = json.dumps(_tail(review, revision), indent=2, ensure_ascii=False, default=str)
    write("\n" + tail[tail.index("\n") + 1:] + "\n")


def dumps(review, *, working: bool = False, revision=None) -> str:
    buf = io.StringIO()
    write_document(review, buf.write, working=working, revision=revision)
    return buf.getvalue()


