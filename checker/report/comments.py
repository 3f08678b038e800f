"""Findings -> numbered check comments: the one model every comment writer (XLSX, CSV, Markdown,
HTML) reads, so that the sheet, the tables and the report can never disagree.

A comment is a finding whose severity is not ``ok``. Without a previous sheet the comments are
numbered 1..n in the findings order (severity, cap, rule). With a :class:`checker.revision.RevisionResult`
every carried comment keeps its number, status and the designer's response; comments whose finding
has gone stay on the sheet (closed or superseded) with a note; new comments are numbered after the
highest number used so far.

Nothing here re-computes a check: the figures are the findings' own ``value``, ``limit``, ``unit``
and ``utilisation``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import pandas as pd

from checker.findings import (  # noqa: F401  (severity_rank re-exported for the writers)
    SEVERITY_ORDER,
    Severity,
    comment_key,
    comment_records,
    describe_source,
    none_if_nan,
    records,
    severity_rank,
    sort_findings,
    source_of,
)

# The workbook layout (sheet names, the hidden data sheet, the statuses) belongs to the revision
# reader, which reads back what the sheet writer writes; re-exported here for the writers.
from checker.revision import (  # noqa: F401
    ALL_CHECKS_SHEET,
    COMMENTS_SHEET,
    COVER_SHEET,
    DATA_COLUMNS,
    DATA_MARKER,
    DATA_SHEET,
    MET,
    REJECTED_SHEET,
    SKIPPED_SHEET,
    STATUSES,
    CarriedComment,
    PreviousComment,
    RevisionResult,
    split_key,
)

if TYPE_CHECKING:  # pragma: no cover
    from checker.api import Review

COMMENT_HEADINGS: tuple[str, ...] = (
    "No.",
    "Cap",
    "Check",
    "Clause",
    "Found",
    "Severity",
    "Action required",
    "Would pass with",   # issue 16: the least change that would meet the listed checks (checker.remedy),
                         # beside the action; read back by heading, so a sheet with it after "Key" still reads
    "Source",
    "Designer response",
    "Checker status",
    "Key",
    "Checker reply",     # issue 13: the checker's answer to the designer's response, carried over
)
# the field each heading is read back as (checker.revision._HEADING_ALIASES)
COMMENT_FIELDS: tuple[str, ...] = ("no", "cap", "check", "clause", "found", "severity", "action", "remedy",
                                   "source", "response", "status", "key", "reply")


def comment_layout(revision: "RevisionResult | None" = None) -> list[tuple[str, str]]:
    """The Comments sheet's columns as (heading, field): ours in order, and every column a person
    added to the previous sheet (field "extra"), kept after the column it followed there."""
    base = list(zip(COMMENT_HEADINGS, COMMENT_FIELDS))
    if revision is None or not revision.previous.columns:
        return base
    after: dict[str, list[str]] = {}
    last = ""
    for heading, fld in revision.previous.columns:
        if fld == "extra":
            after.setdefault(last, []).append(heading)
        else:
            last = fld
    own = {f for _, f in base}
    out = [(h, "extra") for h in after.get("", [])]
    placed = set(after.get("", []))
    for h, f in base:
        out.append((h, f))
        for x in after.get(f, []):
            out.append((x, "extra"))
            placed.add(x)
    for anchor, xs in after.items():     # after a column of ours that no longer exists: at the end
        if anchor and anchor not in own:
            out += [(x, "extra") for x in xs if x not in placed]
    return out

# What each severity means (cover sheet legend, report legend): the enum's own words.
SEVERITY_MEANING: dict[str, str] = {s.value: s.meaning for s in Severity}

# Short statement printed beside the caution wherever the results are summarised.
NOT_A_SAFETY_CLAIM = (
    "capcheck never claims that a design is safe; it reports only whether each listed check was met "
    "on the figures submitted."
)


# ---- presentation shared by the writers (this project's own palette and short texts) ----
# Severity colours (fill, text): the enum's own (this project's palette, see findings.Severity).
SEVERITY_FILL: dict[str, str] = {s.value: s.fill for s in Severity}
SEVERITY_TEXT: dict[str, str] = {s.value: s.text_colour for s in Severity}
STATUS_MUTED = "7F7F7F"     # text colour of closed / superseded comments
HEADER_FILL = "2F3E46"      # table heading rows
HEADER_TEXT = "FFFFFF"
CAUTION_FILL = "FFF4E0"

# A shortened caution for printed headers and footers (Excel limits them to 255 characters).
SHORT_CAUTION = (
    "An aid to an independent check only: it does not replace the judgement of a competent, "
    "qualified engineer and never claims a design is safe. Full caution on the Cover sheet."
)


_nan_to_none = none_if_nan


def _float_or_none(v: Any) -> float | None:
    v = _nan_to_none(v)
    if v is None or v == "":
        return None
    try:
        return float(v)
    except (TypeError, ValueError):
        return None


def format_number(v: float | None) -> str:
    """Figures as a checker writes them: 1800, 42.5, 0.35."""
    if v is None:
        return ""
    if not math.isfinite(v):
        return "n/a"
    a = abs(v)
    if a >= 100 or float(v).is_integer():
        return f"{v:.0f}"
    if a >= 10:
        return f"{v:.1f}"
    return f"{v:.2f}"


def format_unit(unit: str) -> str:
    unit = (unit or "").strip()
    if unit.lower() in ("degrees", "degree", "deg"):
        return "°"
    if unit.lower() in ("count", "number", "-"):
        return ""
    return unit


def _with_unit(v: float, unit: str) -> str:
    u = format_unit(unit)
    if not u:
        return format_number(v)
    return f"{format_number(v)}{u}" if u in ("°", "%") else f"{format_number(v)} {u}"


def format_utilisation(u: float | None) -> str:
    if u is None:
        return ""
    if not math.isfinite(u):
        return "n/a"
    return f"{u:.2f}"


def figures_text(value: Any, limit: Any, unit: str, utilisation: Any) -> str:
    """'value 120 mm; limit 150 mm; utilisation 1.25' (parts that are not given are left out)."""
    value, limit, utilisation = (_float_or_none(x) for x in (value, limit, utilisation))
    parts = []
    if value is not None:
        parts.append(f"value {_with_unit(value, unit)}")
    if limit is not None:
        parts.append(f"limit {_with_unit(limit, unit)}")
    if utilisation is not None:
        parts.append(f"utilisation {format_utilisation(utilisation)}")
    return "; ".join(parts)


def found_text(message: str, value: Any, limit: Any, unit: str, utilisation: Any) -> str:
    message = (message or "").strip()
    figs = figures_text(value, limit, unit, utilisation)
    if message and figs:
        return f"{message} ({figs})"
    return message or figs


def check_text(rule: str, title: str) -> str:
    title = (title or "").strip()
    return f"{rule}: {title}" if title else rule


@dataclass
class Comment:
    """One numbered comment on the sheet (one finding, or one carried row of a previous sheet)."""

    no: int
    key: str
    cap: str
    rule: str
    check: str
    clause: str
    found: str
    severity: str
    action: str
    source: str
    response: str = ""
    status: str = "open"
    note: str = ""                 # revision note ("new in revision 2", "closed in revision 2: ...")
    outcome: str = "new"           # new / still-open / closed / reopened / superseded / stays-closed ...
    value: float | None = None
    limit: float | None = None
    unit: str = ""
    utilisation: float | None = None
    message: str = ""
    state: str = "present"         # present / gone / cap-removed / not-rechecked / manual
    tool_severity: str = ""        # what the tool reports for the key in this review ("ok" once met)
    tool_utilisation: float | None = None
    basis_severity: str = ""       # figures a hand-closed comment was closed on (to judge "worse")
    basis_utilisation: float | None = None
    remedy: str = ""               # what would meet the listed checks for the cap (checker.remedy), issue 16
    reply: str = ""                # the checker's reply (typed on the sheet, carried over)
    extras: dict[str, Any] = field(default_factory=dict)   # cells of columns a person added
    second_look: bool = False      # closed, but the cap's inputs changed since

    def value_of(self, fld: str, heading: str = "") -> Any:
        """The cell for a column of :func:`comment_layout`."""
        if fld == "extra":
            return self.extras.get(heading)
        return dict(zip(COMMENT_FIELDS, self.cells()))[fld]

    @property
    def found_cell(self) -> str:
        """The Found text with the revision note in front of it."""
        if self.note:
            return f"[{self.note}] {self.found}".strip()
        return self.found

    def cells(self) -> list[Any]:
        """Values in :data:`COMMENT_HEADINGS` order."""
        return [
            self.no,
            self.cap,
            self.check,
            self.clause,
            self.found_cell,
            self.severity,
            self.action,
            self.remedy,
            self.source,
            self.response,
            self.status,
            self.key,
            self.reply,
        ]


def _records(frame: pd.DataFrame) -> list[dict[str, Any]]:
    if frame is None or len(frame) == 0:
        return []
    return records(sort_findings(frame))


def _comment_from_finding(row: dict[str, Any], no: int) -> Comment:
    cap, rule = str(row["cap"]), str(row["rule"])
    value, limit = _float_or_none(row.get("value")), _float_or_none(row.get("limit"))
    util = _float_or_none(row.get("utilisation"))
    unit = str(_nan_to_none(row.get("unit")) or "")
    message = str(_nan_to_none(row.get("message")) or "")
    return Comment(
        no=no,
        key=comment_key(cap, rule),
        cap=cap,
        rule=rule,
        check=check_text(rule, str(_nan_to_none(row.get("title")) or "")),
        clause=str(_nan_to_none(row.get("clause")) or ""),
        found=found_text(message, value, limit, unit, util),
        severity=str(row["severity"]),
        action=str(_nan_to_none(row.get("action")) or ""),
        source=describe_source(source_of(row)),
        value=value,
        limit=limit,
        unit=unit,
        utilisation=util,
        message=message,
        state="present",
        tool_severity=str(row["severity"]),
        tool_utilisation=util,
    )


def comment_findings(review: "Review") -> list[dict[str, Any]]:
    """The findings rows that become comments (severity != ok), in the one sort order."""
    return comment_records(review.findings)


def build_comments(review: "Review", revision: "RevisionResult | None" = None) -> list[Comment]:
    """Turn a Review's findings into numbered comments, carrying a previous revision if given.

    Returns the comments in comment-number order.
    """
    from checker.remedy import attach_remedies

    return attach_remedies(review, _build_comments(review, revision))


#: The fields a comment keeps, as they were, from its row on the previous sheet.
_KEPT_FIELDS: tuple[str, ...] = ("cap", "rule", "check", "clause", "found", "severity", "action", "source",
                                 "utilisation", "message")


def _kept(prev: PreviousComment) -> dict[str, Any]:
    return {f: getattr(prev, f) for f in _KEPT_FIELDS}


def _comment_without_finding(key: str, entry: CarriedComment) -> Comment:
    """A carried comment whose finding this review does not report: its previous row as it was (a key
    with no previous row: the cap and rule of the key)."""
    prev = entry.previous
    if prev is None:
        cap, rule = split_key(key)
        return Comment(no=entry.no, key=key, cap=cap, rule=rule, check=key, clause="", found="", severity="",
                       action="", source="", state=entry.state)
    return Comment(no=entry.no, key=key, state=entry.state, tool_severity=prev.tool_severity,
                   tool_utilisation=prev.tool_utilisation, **_kept(prev))


def _build_comments(review: "Review", revision: "RevisionResult | None" = None) -> list[Comment]:
    rows = comment_findings(review)
    if revision is None:
        return [_comment_from_finding(r, i) for i, r in enumerate(rows, start=1)]

    current = {comment_key(str(r["cap"]), str(r["rule"])): r for r in rows}
    all_results = {comment_key(str(r["cap"]), str(r["rule"])): r for r in _records(review.findings)}
    out: list[Comment] = []
    for key, entry in revision.entries.items():
        if key in current:
            c = _comment_from_finding(current[key], entry.no)
        else:
            c = _comment_without_finding(key, entry)
            met = all_results.get(key)
            if entry.state == "gone" and met is not None:
                c.tool_severity = str(met["severity"])
                c.tool_utilisation = _float_or_none(met.get("utilisation"))
                figs = figures_text(met.get("value"), met.get("limit"), str(met.get("unit") or ""),
                                    met.get("utilisation"))
                was = f"revision {revision.previous.revision}: {c.found}" if c.found else ""
                c.found = "; ".join(p for p in (f"now {figs}" if figs else "", was) if p)
            elif entry.state == "cap-removed":
                c.tool_severity, c.tool_utilisation = "", None
        c.status = entry.status
        c.response = entry.response
        c.note = entry.note
        c.outcome = entry.outcome
        c.basis_severity = entry.basis_severity
        c.basis_utilisation = entry.basis_utilisation
        c.reply = entry.reply
        c.extras = dict(entry.extras)
        c.second_look = entry.second_look
        out.append(c)
    for prev in revision.extra:
        out.append(
            Comment(no=prev.no if prev.no is not None else 0, key="", response=prev.response,
                    status=prev.status or "open", note="", outcome="manual", state="manual", reply=prev.reply,
                    extras=dict(prev.extras), **_kept(prev))
        )
    out.sort(key=lambda c: (c.no if c.no else 10**9))
    return out


def count_by_status(comments: list[Comment]) -> dict[str, int]:
    counts = {s: 0 for s in STATUSES}
    for c in comments:
        counts[c.status] = counts.get(c.status, 0) + 1
    return counts
