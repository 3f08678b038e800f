"""The revision cycle: a previous comment sheet -> carried numbers, responses and statuses.

``read_previous_sheet(path)`` reads a comment sheet that capcheck wrote (and a person then edited:
designer responses typed in, checker statuses changed with the drop-down, rows re-sorted or
filtered, a column added). ``carry_over(review, previous)`` matches its comments to the new
review by key (cap mark + rule id, so renamed schedule headings or moved rows do not matter) and
decides, per key, the status and response for the new sheet:

* finding still reported, comment open -> ``open`` with the new figures;
* finding gone (the rule now passes for that cap), comment open -> ``closed``, noted
  "closed in revision N: check now met";
* comment closed (by hand or by the tool) -> stays ``closed`` unless the finding got worse than the
  figures it was closed on (a worse severity, or the same severity at a higher utilisation), in
  which case it is ``reopened`` (status ``open``);
* cap no longer in the schedule, comment open -> ``superseded``;
* new finding -> ``open``, marked new, numbered after the highest number used so far;
* a rule that produced no result at all for a cap still in the schedule: status left as it was
  ("not re-checked"), never closed on no evidence.

Every typed response is kept, including responses on rows whose finding is gone, rows whose cap
was removed, and rows a person added without a key.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Any

from checker.findings import comment_key, comment_records, records, severity_rank
from checker.ingest.errors import IngestError

if TYPE_CHECKING:  # pragma: no cover
    from checker.api import Review

# The comment workbook's layout, owned here because this module reads back what the sheet writer
# (checker.report.sheet) writes: the writers import these names, never the other way round.
STATUSES: tuple[str, ...] = ("open", "closed", "superseded")
COVER_SHEET = "Cover"
COMMENTS_SHEET = "Comments"
ALL_CHECKS_SHEET = "All checks"
REJECTED_SHEET = "Rejected rows"
DATA_SHEET = "capcheck-data"          # hidden: the tool's own figures per key, for the next revision
DATA_MARKER = "capcheck.sheet/1"
DATA_COLUMNS: tuple[str, ...] = (
    "key",
    "no",
    "cap",
    "rule",
    "severity",
    "tool_severity",
    "tool_utilisation",
    "value",
    "limit",
    "unit",
    "message",
    "state",
    "status_written",
    "basis_severity",
    "basis_utilisation",
)

# Utilisation increases smaller than this are not treated as "worse" (figures are shown to 2 d.p.).
WORSE_UTILISATION_TOLERANCE = 1e-3


class PreviousSheetError(IngestError, ValueError):
    """The file given as the previous sheet is not a capcheck comment sheet (message names it)."""


Label = int | str


def next_revision(label: Label) -> Label:
    """The label after ``label``: 1 -> 2, "03" -> "04", "P01" -> "P02", "A" -> "B", "Rev Z" -> "Rev AA"."""
    if isinstance(label, int) and not isinstance(label, bool):
        return label + 1
    text = str(label).strip()
    m = re.match(r"^(.*?)(\d+)$", text)
    if m:
        head, digits = m.groups()
        return f"{head}{int(digits) + 1:0{len(digits)}d}"
    m = re.match(r"^(.*?[^A-Za-z]|)([A-Za-z]{1,2})$", text)
    if m:
        head, letters = m.groups()
        upper = letters.isupper() or not letters.islower()
        n = 0
        for ch in letters.upper():
            n = n * 26 + (ord(ch) - 64)
        n += 1
        out = ""
        while n:
            n, r = divmod(n - 1, 26)
            out = chr(65 + r) + out
        return head + (out if upper else out.lower())
    return f"{text}+1" if text else 2


@dataclass
class PreviousComment:
    key: str
    no: int | None
    cap: str = ""
    rule: str = ""
    check: str = ""
    clause: str = ""
    found: str = ""
    severity: str = ""
    action: str = ""
    source: str = ""
    response: str = ""
    status: str = "open"
    utilisation: float | None = None
    message: str = ""
    tool_severity: str = ""          # what the tool reported for the key on that sheet ("ok" once met)
    tool_utilisation: float | None = None
    state: str = "present"
    basis_severity: str = ""         # figures a closed comment was closed on
    basis_utilisation: float | None = None
    row: int = 0                     # row on the previous Comments sheet


@dataclass
class PreviousSheet:
    path: str
    revision: Label
    comments: dict[str, PreviousComment]
    extra: list[PreviousComment] = field(default_factory=list)   # typed rows without a key
    warnings: list[str] = field(default_factory=list)
    project: str = ""
    submission: str = ""


@dataclass
class CarriedComment:
    key: str
    no: int
    status: str
    response: str
    outcome: str          # new / still-open / closed / reopened / superseded / stays-closed /
                          # stays-superseded / not-rechecked
    note: str
    state: str            # present / gone / cap-removed / not-rechecked
    previous: PreviousComment | None = None
    basis_severity: str = ""
    basis_utilisation: float | None = None
    note_fmt: str = ""    # the note with {rev} / {prev} placeholders (see RevisionResult.relabel)


COUNT_NAMES: tuple[str, ...] = (
    "closed",
    "still_open",
    "new",
    "reopened",
    "superseded",
    "stays_closed",
    "stays_superseded",
    "not_rechecked",
)


@dataclass
class RevisionResult:
    revision: Label                        # revision label of the new sheet
    previous: PreviousSheet
    entries: dict[str, CarriedComment]     # every key of the new sheet, in comment-number order
    extra: list[PreviousComment]           # typed rows without a key, carried as they were
    counts: dict[str, int]
    warnings: list[str] = field(default_factory=list)

    def relabel(self, revision: Label) -> "RevisionResult":
        """A copy for a new sheet labelled ``revision`` (when the user names the revision)."""
        import copy

        out = copy.deepcopy(self)
        out.revision = revision
        for e in out.entries.values():
            e.note = _render_note(e.note_fmt, revision, out.previous.revision)
        return out

    def summary(self) -> str:
        c = self.counts
        parts = [
            f"{c['closed']} closed",
            f"{c['still_open']} still open",
            f"{c['new']} new",
            f"{c['reopened']} reopened (worse)",
            f"{c['superseded']} superseded (cap removed)",
        ]
        if c["stays_closed"]:
            parts.append(f"{c['stays_closed']} stay closed")
        if c["stays_superseded"]:
            parts.append(f"{c['stays_superseded']} stay superseded")
        if c["not_rechecked"]:
            parts.append(f"{c['not_rechecked']} not re-checked (status left as it was)")
        return (f"revision {self.revision} against revision {self.previous.revision}: "
                + ", ".join(parts))


# --------------------------------------------------------------------------------------------
# reading a previous sheet

_HEADING_ALIASES: dict[str, tuple[str, ...]] = {
    "no": ("no", "no.", "comment no", "comment no.", "number", "#"),
    "cap": ("cap", "cap mark", "mark"),
    "check": ("check",),
    "clause": ("clause",),
    "found": ("found", "what was found"),
    "severity": ("severity",),
    "action": ("action required", "action"),
    "source": ("source",),
    "response": ("designer response", "designer's response", "response"),
    "status": ("checker status", "checker's status", "status"),
    "key": ("key", "comment key"),
}


def _norm(text: Any) -> str:
    return re.sub(r"\s+", " ", str(text or "")).strip().lower()


def _header_map(cells: list[Any]) -> dict[str, int]:
    found: dict[str, int] = {}
    for idx, cell in enumerate(cells):
        t = _norm(cell)
        for name, aliases in _HEADING_ALIASES.items():
            if t in aliases and name not in found:
                found[name] = idx
    return found


def _text(v: Any) -> str:
    if v is None:
        return ""
    if isinstance(v, float) and v.is_integer():
        return str(int(v))
    return str(v)


def _int_or_none(v: Any) -> int | None:
    if v is None or v == "":
        return None
    try:
        f = float(str(v).strip())
    except ValueError:
        return None
    if not math.isfinite(f) or not f.is_integer() or f <= 0:
        return None
    return int(f)


def _float_or_none(v: Any) -> float | None:
    if v is None or v == "":
        return None
    try:
        f = float(v)
    except (TypeError, ValueError):
        return None
    return f if not math.isnan(f) else None


_UTIL_RE = re.compile(r"utilisation\s+(\d+(?:\.\d+)?)", re.IGNORECASE)


def _parse_utilisation(found: str) -> float | None:
    m = _UTIL_RE.search(found or "")
    return float(m.group(1)) if m else None


def _find_comments_sheet(wb, path: Path):
    if COMMENTS_SHEET in wb.sheetnames:
        ws = wb[COMMENTS_SHEET]
        hdr = _locate_header(ws)
        if hdr is not None:
            return ws, hdr
        raise PreviousSheetError(
            f"{path}, sheet '{COMMENTS_SHEET}': not a capcheck comment sheet (no heading row with "
            f"the columns 'Key' and 'Checker status' in the first 15 rows)"
        )
    for ws in wb.worksheets:
        hdr = _locate_header(ws)
        if hdr is not None:
            return ws, hdr
    raise PreviousSheetError(
        f"{path}: not a capcheck comment sheet (no sheet '{COMMENTS_SHEET}' and no sheet with the "
        f"columns 'Key' and 'Checker status'; sheets present: {', '.join(wb.sheetnames) or 'none'})"
    )


def _locate_header(ws) -> tuple[int, dict[str, int]] | None:
    for r_idx, row in enumerate(ws.iter_rows(min_row=1, max_row=15, values_only=True), start=1):
        m = _header_map(list(row))
        if "key" in m and ("status" in m or "response" in m):
            return r_idx, m
    return None


def _label(v: Any) -> Label | None:
    if v is None or (isinstance(v, str) and not v.strip()):
        return None
    if isinstance(v, bool):
        return None
    if isinstance(v, (int, float)):
        return int(v) if float(v).is_integer() else str(v)
    text = str(v).strip()
    return int(text) if text.isdigit() and not text.startswith("0") else text


def _read_revision(wb) -> Label | None:
    if COVER_SHEET in wb.sheetnames:
        for row in wb[COVER_SHEET].iter_rows(min_row=1, max_row=60, max_col=2, values_only=True):
            if _norm(row[0]) == "revision":
                n = _label(row[1] if len(row) > 1 else None)
                if n is not None:
                    return n
    if DATA_SHEET in wb.sheetnames:
        row = next(wb[DATA_SHEET].iter_rows(min_row=1, max_row=1, values_only=True), ())
        if len(row) >= 3 and row[0] == DATA_MARKER:
            return _label(row[2])
    return None


def _read_cover_value(wb, label: str) -> str:
    if COVER_SHEET not in wb.sheetnames:
        return ""
    for row in wb[COVER_SHEET].iter_rows(min_row=1, max_row=60, max_col=2, values_only=True):
        if _norm(row[0]) == label:
            return _text(row[1] if len(row) > 1 else None)
    return ""


def _read_data_sheet(wb) -> dict[str, dict[str, Any]]:
    if DATA_SHEET not in wb.sheetnames:
        return {}
    rows = list(wb[DATA_SHEET].iter_rows(values_only=True))
    if not rows or not rows[0] or rows[0][0] != DATA_MARKER or len(rows) < 2:
        return {}
    cols = [str(c) if c is not None else "" for c in rows[1]]
    out: dict[str, dict[str, Any]] = {}
    for row in rows[2:]:
        rec = {c: (row[i] if i < len(row) else None) for i, c in enumerate(cols) if c in DATA_COLUMNS}
        key = _text(rec.get("key")).strip()
        if key:
            out[key] = rec
    return out


def _normalise_status(raw: Any, where: str, warnings: list[str]) -> str:
    t = _norm(raw)
    if t == "":
        return "open"
    if t in STATUSES:
        return t
    warnings.append(
        f"{where}: checker status {raw!r} is not one of {'/'.join(STATUSES)}; read as 'open'"
    )
    return "open"


def read_previous_sheet(path: str | Path) -> PreviousSheet:
    """Read a capcheck comment sheet (as edited by people) into comments keyed by comment key."""
    import openpyxl  # local: keep `import checker.revision` light

    path = Path(path)
    if not path.exists():
        raise PreviousSheetError(f"previous comment sheet {path} not found")
    try:
        # read-only: only the sheets read here are parsed (not the long "All checks" record)
        wb = openpyxl.load_workbook(path, data_only=False, read_only=True)
    except Exception as exc:  # zipfile.BadZipFile, KeyError, InvalidFileException ...
        raise PreviousSheetError(
            f"{path}: cannot be read as an XLSX workbook, so it is not a capcheck comment sheet "
            f"({type(exc).__name__}: {exc})"
        ) from exc
    try:
        ws, (header_row, cols) = _find_comments_sheet(wb, path)
        warnings: list[str] = []
        revision = _read_revision(wb)
        if revision is None:
            warnings.append(f"{path}: no revision number found on the cover; taken as revision 1")
            revision = 1
        data = _read_data_sheet(wb)
        if not data:
            warnings.append(
                f"{path}: hidden sheet '{DATA_SHEET}' missing or empty; figures taken from the "
                f"visible '{ws.title}' sheet"
            )

        def cell(row: tuple, name: str) -> Any:
            i = cols.get(name)
            return row[i] if i is not None and i < len(row) else None

        comments: dict[str, PreviousComment] = {}
        extra: list[PreviousComment] = []
        rows = list(ws.iter_rows(min_row=header_row + 1, values_only=True))
        if any(isinstance(v, str) and v.startswith("=") for row in rows for v in row):
            # Something a person typed may be a formula: take the value a spreadsheet program
            # saved with it, and where none was saved (openpyxl, some tools) keep the formula text
            # rather than lose it.
            wb_values = openpyxl.load_workbook(path, data_only=True, read_only=True)
            try:
                values = list(wb_values[ws.title].iter_rows(min_row=header_row + 1, values_only=True))
            finally:
                wb_values.close()
            rows = [
                tuple(v if (i >= len(rv) or rv[i] is None) else rv[i] for i, v in enumerate(row))
                for row, rv in zip(rows, values)
            ]
        for r_idx, row in enumerate(rows, start=header_row + 1):
            if not any(v not in (None, "") for v in row):
                continue
            where = f"{path}, sheet '{ws.title}', row {r_idx}"
            key = _text(cell(row, "key")).strip()
            found = _text(cell(row, "found"))
            status_raw = cell(row, "status")
            status = _normalise_status(status_raw, where, warnings)
            p = PreviousComment(
                key=key,
                no=_int_or_none(cell(row, "no")),
                cap=_text(cell(row, "cap")).strip(),
                check=_text(cell(row, "check")),
                clause=_text(cell(row, "clause")),
                found=found,
                severity=_norm(cell(row, "severity")),
                action=_text(cell(row, "action")),
                source=_text(cell(row, "source")),
                response=_text(cell(row, "response")),
                status=status,
                row=r_idx,
            )
            if not key:
                # A row a person added by hand (or whose key was cleared): keep it whole.
                if any(_text(v).strip() for v in row):
                    extra.append(p)
                continue
            if "/" in key:
                cap_k, rule_k = key.split("/", 1)
            else:
                cap_k, rule_k = p.cap, key
            p.cap = p.cap or cap_k
            p.rule = rule_k
            d = data.get(key, {})
            p.message = _text(d.get("message")) if d.get("message") is not None else found
            p.utilisation = (_float_or_none(d.get("tool_utilisation")) if d
                             else _parse_utilisation(found))
            p.tool_severity = _norm(d.get("tool_severity")) if d else p.severity
            p.tool_utilisation = p.utilisation
            p.state = _norm(d.get("state")) or "present"
            status_written = _norm(d.get("status_written"))
            if p.status == "closed" and status_written == "closed" and _norm(d.get("basis_severity")):
                p.basis_severity = _norm(d.get("basis_severity"))
                p.basis_utilisation = _float_or_none(d.get("basis_utilisation"))
            else:
                p.basis_severity = p.tool_severity
                p.basis_utilisation = p.tool_utilisation
            if key in comments:
                first = comments[key]
                warnings.append(
                    f"{where}: key {key} appears again (first on row {first.row}); responses merged"
                )
                if p.response.strip() and p.response not in first.response:
                    first.response = (first.response + "\n" + p.response).strip("\n")
                continue
            comments[key] = p
        return PreviousSheet(
            path=str(path),
            revision=revision,
            comments=comments,
            extra=extra,
            warnings=warnings,
            project=_read_cover_value(wb, "project"),
            submission=_read_cover_value(wb, "submission"),
        )
    finally:
        wb.close()


# --------------------------------------------------------------------------------------------
# carrying over

def _is_worse(severity: str, utilisation: float | None, basis_severity: str,
              basis_utilisation: float | None) -> bool:
    new_rank, old_rank = severity_rank(severity), severity_rank(basis_severity)
    if new_rank != old_rank:
        return new_rank < old_rank
    if utilisation is None or basis_utilisation is None:
        return False
    if math.isinf(utilisation) and not math.isinf(basis_utilisation):
        return True
    return utilisation > basis_utilisation + WORSE_UTILISATION_TOLERANCE


_REV_TOKEN = "\x00rev\x00"
_PREV_TOKEN = "\x00prev\x00"


def _render_note(fmt: str, revision: Label, previous: Label) -> str:
    return fmt.replace(_REV_TOKEN, str(revision)).replace(_PREV_TOKEN, str(previous))


def _fmt_u(u: float | None) -> str:
    return "" if u is None else (f" at utilisation {u:.2f}" if math.isfinite(u) else "")


def carry_over(review: "Review", previous: PreviousSheet) -> RevisionResult:
    """Match the previous sheet's comments to ``review`` by key and decide each new status."""
    label = next_revision(previous.revision)
    n = _REV_TOKEN          # notes are written with placeholders, then rendered (see relabel)
    frame = review.findings
    rows = comment_records(frame)
    current = {comment_key(str(r["cap"]), str(r["rule"])): r for r in rows}
    all_results: dict[str, dict[str, Any]] = {}
    if frame is not None and len(frame):
        for r in records(frame):
            all_results[comment_key(str(r["cap"]), str(r["rule"]))] = r
    caps_now: set[str] = set()
    if review.caps is not None and "mark" in getattr(review.caps, "columns", ()):
        caps_now |= {str(m) for m in review.caps["mark"]}
    if frame is not None and len(frame):
        caps_now |= {str(m) for m in frame["cap"]}

    warnings = list(previous.warnings)
    counts = {k: 0 for k in COUNT_NAMES}
    entries: list[CarriedComment] = []
    used: set[int] = set()
    for p in previous.extra:
        if p.no is not None:
            used.add(p.no)
    pending_numbers: list[CarriedComment] = []

    def util_of(r: dict[str, Any] | None) -> float | None:
        return _float_or_none(r.get("utilisation")) if r else None

    ordered_prev = sorted(previous.comments.values(), key=lambda p: (p.no or 10**9, p.row))
    for p in ordered_prev:
        key = p.key
        cap = p.cap or key.split("/", 1)[0]
        e = CarriedComment(key=key, no=0, status=p.status, response=p.response, outcome="",
                           note="", state="present", previous=p)
        if key in current:
            f = current[key]
            sev, util = str(f["severity"]), util_of(f)
            if p.status == "open":
                e.status, e.outcome = "open", "still-open"
                if _is_worse(sev, util, p.tool_severity, p.tool_utilisation):
                    e.note = f"still open in revision {n}; worse than revision {_PREV_TOKEN}"
                # plainly still open: no note, the status says it
            elif p.status == "superseded":
                e.status, e.outcome = "open", "reopened"
                e.note = f"reopened in revision {n}: cap {cap} is back in the schedule and the check fails"
            elif _is_worse(sev, util, p.basis_severity, p.basis_utilisation):
                e.status, e.outcome = "open", "reopened"
                e.note = (f"reopened in revision {n}: finding worse than when closed "
                          f"(was {p.basis_severity or 'not reported'}{_fmt_u(p.basis_utilisation)}, "
                          f"now {sev}{_fmt_u(util)})")
            else:
                e.status, e.outcome = "closed", "stays-closed"
                e.basis_severity, e.basis_utilisation = p.basis_severity, p.basis_utilisation
                e.note = f"closed by the checker; still reported in revision {n}, not worse"
        elif cap in caps_now and key in all_results:
            met = all_results[key]
            e.state = "gone"
            e.basis_severity, e.basis_utilisation = str(met["severity"]), util_of(met)
            if p.status == "closed":
                e.status, e.outcome = "closed", "stays-closed"
                e.note = f"closed; check met in revision {n}"
            else:
                e.status, e.outcome = "closed", "closed"
                e.note = f"closed in revision {n}: check now met"
        elif cap in caps_now:
            e.state = "not-rechecked"
            e.status, e.outcome = p.status, "not-rechecked"
            e.basis_severity, e.basis_utilisation = p.basis_severity, p.basis_utilisation
            e.note = (f"not re-checked in revision {n} (no result for {p.rule or key} on cap {cap}); "
                      f"status left as it was")
        else:
            e.state = "cap-removed"
            if p.status == "closed":
                e.status, e.outcome = "closed", "stays-closed"
                e.basis_severity, e.basis_utilisation = p.basis_severity, p.basis_utilisation
                e.note = f"closed; cap {cap} no longer in the schedule in revision {n}"
            elif p.status == "superseded":
                e.status, e.outcome = "superseded", "stays-superseded"
                e.note = f"superseded; cap {cap} not in the schedule in revision {n}"
            else:
                e.status, e.outcome = "superseded", "superseded"
                e.note = f"superseded in revision {n}: cap {cap} no longer in the schedule"
        if p.no is not None and p.no not in used:
            e.no = p.no
            used.add(p.no)
        else:
            if p.no is not None:
                warnings.append(f"{previous.path}: comment number {p.no} used twice; key {key} renumbered")
            pending_numbers.append(e)
        entries.append(e)

    for key, f in current.items():
        if key in previous.comments:
            continue
        e = CarriedComment(key=key, no=0, status="open", response="", outcome="new",
                           note=f"new in revision {n}", state="present")
        pending_numbers.append(e)
        entries.append(e)

    next_no = max(used, default=0) + 1
    for e in pending_numbers:
        e.no = next_no
        next_no += 1

    for e in entries:
        counts[e.outcome.replace("-", "_")] += 1
        e.note_fmt = e.note
        e.note = _render_note(e.note_fmt, label, previous.revision)
    entries.sort(key=lambda e: e.no)
    return RevisionResult(
        revision=label,
        previous=previous,
        entries={e.key: e for e in entries},
        extra=list(previous.extra),
        counts=counts,
        warnings=warnings,
    )
