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
from checker.model import FIELDS
from checker.units import TO_INTERNAL

if TYPE_CHECKING:  # pragma: no cover
    from checker.api import Review

# The comment workbook's layout, owned here because this module reads back what the sheet writer
# (checker.report.sheet) writes: the writers import these names, never the other way round.
MET = "met, for checker to close"   # closing policy "checker": the check is met, a person closes it
STATUSES: tuple[str, ...] = ("open", MET, "closed", "superseded")
CLOSE_POLICIES: tuple[str, ...] = ("auto", "checker")
COVER_SHEET = "Cover"
COMMENTS_SHEET = "Comments"
ALL_CHECKS_SHEET = "All checks"
REJECTED_SHEET = "Rejected rows"        # the table problems first, then the rows that could not be read
SKIPPED_SHEET = "Skipped rows"          # rows not read as caps, each with its reason
DATA_SHEET = "capcheck-data"          # hidden: the tool's own figures per key, for the next revision
DATA_MARKER = "capcheck.sheet/1"
COLUMNS_SHEET = "capcheck-columns"   # hidden: the Comments sheet's columns as written (heading, field)
COLUMNS_MARKER = "capcheck.columns/1"
INPUTS_SHEET = "capcheck-inputs"     # hidden: the schedule inputs of every cap, for the next revision
INPUTS_MARKER = "capcheck.inputs/1"
LISTS_SHEET = "capcheck-lists"       # hidden: the statuses of the drop-down (one contains a comma)
CHANGES_SHEET = "Changes"
#: Schedule fields (a heading of their own) not compared between revisions: the mark is the key; fck
#: follows the concrete class (a change shows there).
_NOT_COMPARED = frozenset({"mark", "fck"})
#: Compared since the sheet has recorded which fields it compares (``INPUTS_COMPARED`` in the hidden
#: inputs sheet): a sheet without that record was written before, without these values, so they are
#: not compared against it (else every cap would show them as added).
_COMPARED_SINCE_RECORDED = frozenset({"capacity_basis", "stated_d"})
INPUTS_COMPARED = "compared"   # B1 of the hidden inputs sheet; C1... the fields compared


def _input_fields() -> tuple[tuple[str, str, float], ...]:
    """The fields of the catalogue (``model.FIELDS``) read from a heading of their own, in its order, but
    :data:`_NOT_COMPARED`; the column's size is one input, ``column`` (from column_x, _y and _round)."""
    out: list[tuple[str, str, float]] = []
    for name, spec in FIELDS.items():
        if spec.heading is None or name in _NOT_COMPARED or name == "column_y":
            continue
        unit = "" if spec.show_unit == "count" else spec.show_unit
        out.append(("column" if name == "column_x" else name, unit, TO_INTERNAL.get(unit, 1.0)))
    return tuple(out)


# The schedule inputs compared between revisions: field, unit shown, divisor from the internal unit.
INPUT_FIELDS: tuple[tuple[str, str, float], ...] = _input_fields()
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
    reply: str = ""                  # the checker's reply to the designer's response
    extras: dict[str, Any] = field(default_factory=dict)   # columns a person added: heading -> cell

    @property
    def pair(self) -> tuple[str, str]:
        """The comment key as a pair (cap mark, rule id): a mark may itself contain '/'."""
        return (self.cap, self.rule)


@dataclass
class PreviousSheet:
    path: str
    revision: Label
    comments: dict[str, PreviousComment]
    extra: list[PreviousComment] = field(default_factory=list)   # typed rows without a key
    warnings: list[str] = field(default_factory=list)
    project: str = ""
    submission: str = ""
    # the Comments sheet's columns in order, as (heading, field); field "extra" for a person's own
    columns: list[tuple[str, str]] = field(default_factory=list)
    # the schedule inputs per cap as recorded when the sheet was written (None: not recorded)
    inputs: dict[str, dict[str, tuple[Any, str]]] | None = None
    #: the fields its inputs were recorded for (only these are compared with the new revision)
    input_fields: frozenset[str] | None = None


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
    reply: str = ""
    extras: dict[str, Any] = field(default_factory=dict)
    second_look: bool = False   # closed, but the cap's inputs changed since: worth a second look


COUNT_NAMES: tuple[str, ...] = (
    "closed",
    "still_open",
    "new",
    "reopened",
    "superseded",
    "stays_closed",
    "stays_superseded",
    "not_rechecked",
    "met",              # policy "checker": check now met, waiting for a person to close it
    "stays_met",
    "second_look",      # closed comments on caps whose inputs changed (counted besides the outcome)
)


@dataclass
class RevisionResult:
    revision: Label                        # revision label of the new sheet
    previous: PreviousSheet
    entries: dict[str, CarriedComment]     # every key of the new sheet, in comment-number order
    extra: list[PreviousComment]           # typed rows without a key, carried as they were
    counts: dict[str, int]
    warnings: list[str] = field(default_factory=list)
    policy: str = "auto"
    changes: list[dict[str, Any]] = field(default_factory=list)   # schedule inputs changed, per cap
    inputs_recorded: bool = True

    @property
    def columns(self) -> list[tuple[str, str]]:
        return self.previous.columns

    def changed_caps(self) -> list[str]:
        return list(dict.fromkeys(c["cap"] for c in self.changes))

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
        if c["met"] or c["stays_met"]:
            parts.append(f"{c['met'] + c['stays_met']} met, for the checker to close")
        if c["second_look"]:
            parts.append(f"{c['second_look']} closed on caps whose inputs changed (second look)")
        if self.inputs_recorded:
            n = len(self.changed_caps())
            parts.append(f"inputs changed on {n} cap{'s' if n != 1 else ''} ({len(self.changes)} "
                         f"change{'s' if len(self.changes) != 1 else ''})")
        else:
            parts.append("inputs of the previous revision not recorded")
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
    "reply": ("checker reply", "checker's reply", "reply"),
    "remedy": ("would pass with",),
}


def _norm(text: Any) -> str:
    return re.sub(r"\s+", " ", str(text or "")).strip().lower()


def _words(text: Any) -> set[str]:
    return set(re.findall(r"[a-z]+", _norm(text))) - {"the", "of", "a", "from", "by", "to"}


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
        if "key" in m and ("status" in m or "response" in m or "reply" in m):
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
        first: tuple[Any, ...] = next(wb[DATA_SHEET].iter_rows(min_row=1, max_row=1, values_only=True), ())
        if len(first) >= 3 and first[0] == DATA_MARKER:
            return _label(first[2])
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


def _marked_rows(wb, sheet: str, marker: str) -> list[tuple] | None:
    """Rows 3.. of a hidden sheet whose A1 is ``marker`` (None when the sheet is absent)."""
    if sheet not in wb.sheetnames:
        return None
    rows = list(wb[sheet].iter_rows(values_only=True))
    if not rows or not rows[0] or rows[0][0] != marker:
        return None
    return [r for r in rows[2:] if r and any(v not in (None, "") for v in r)]


def _read_columns(wb) -> list[tuple[str, str]]:
    rows = _marked_rows(wb, COLUMNS_SHEET, COLUMNS_MARKER) or []
    return [(_text(r[1]), _text(r[2]) or "extra") for r in rows if len(r) >= 3]


def _read_input_fields(wb) -> frozenset[str]:
    """The fields the previous sheet's inputs were recorded for (B1 ``compared``, C1...); a sheet written
    before that record: every compared field but :data:`_COMPARED_SINCE_RECORDED`."""
    if INPUTS_SHEET in wb.sheetnames:
        first: tuple[Any, ...] = next(wb[INPUTS_SHEET].iter_rows(min_row=1, max_row=1, values_only=True), ())
        if len(first) > 1 and first[1] == INPUTS_COMPARED:
            return frozenset(_text(v) for v in first[2:] if _text(v))
    return frozenset(name for name, _u, _d in INPUT_FIELDS) - _COMPARED_SINCE_RECORDED


def _read_inputs(wb) -> dict[str, dict[str, tuple[Any, str]]] | None:
    rows = _marked_rows(wb, INPUTS_SHEET, INPUTS_MARKER)
    if rows is None:
        return None
    out: dict[str, dict[str, tuple[Any, str]]] = {}
    for r in rows:
        r = tuple(r) + (None,) * 4
        cap, fld, value, unit = _text(r[0]), _text(r[1]), r[2], _text(r[3])
        if cap:
            fields = out.setdefault(cap, {})
            if fld:
                fields[fld] = (value, unit)
    return out


def split_key(key: str, data: dict[str, dict[str, Any]] | None = None) -> tuple[str, str]:
    """The (cap, rule) pair of a key text: from the hidden data sheet's two cells when recorded,
    else split at the last '/' (rule ids never contain one; a cap mark may)."""
    rec = (data or {}).get(key)
    if rec and _text(rec.get("cap")) and _text(rec.get("rule")):
        return _text(rec.get("cap")), _text(rec.get("rule"))
    if "/" in key:
        cap, rule = key.rsplit("/", 1)
        return cap, rule
    return "", key


def _normalise_status(raw: Any, where: str, warnings: list[str]) -> str:
    t = _norm(raw)
    if t == "":
        return "open"
    if t in STATUSES:
        return t
    if t in ("met", "met for checker to close", "met - for checker to close"):
        return MET
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
        recorded = _read_columns(wb)
        headings = [_text(v).strip() for v in next(
            ws.iter_rows(min_row=header_row, max_row=header_row, values_only=True), ())]
        cols = _match_renamed_columns(dict(cols), headings, recorded, f"{path}, sheet '{ws.title}'", warnings)
        rows = list(ws.iter_rows(min_row=header_row + 1, values_only=True))
        extra_idx, layout = _sheet_layout(headings, rows, {i: name for name, i in cols.items()}, recorded)
        if any(isinstance(v, str) and v.startswith("=") for row in rows for v in row):
            rows = _with_saved_values(path, ws.title, header_row, rows)
        comments: dict[str, PreviousComment] = {}
        extra: list[PreviousComment] = []
        for r_idx, row in enumerate(rows, start=header_row + 1):
            if not any(v not in (None, "") for v in row):
                continue
            where = f"{path}, sheet '{ws.title}', row {r_idx}"
            p = _row_comment(row, r_idx, cols, extra_idx, where, warnings)
            if not p.key:
                # A row a person added by hand (or whose key was cleared): keep it whole.
                if any(_text(v).strip() for v in row):
                    extra.append(p)
                continue
            cap_k, rule_k = split_key(p.key, data)
            p.cap = p.cap or cap_k
            p.rule = rule_k
            _fill_from_data(p, data.get(p.key, {}), p.found)
            if p.key in comments:
                first = comments[p.key]
                warnings.append(
                    f"{where}: key {p.key} appears again (first on row {first.row}); responses merged"
                )
                _merge_duplicate(first, p)
                continue
            comments[p.key] = p
        _carry_deleted_rows(data, comments, path, warnings)
        return PreviousSheet(
            path=str(path),
            revision=revision,
            comments=comments,
            extra=extra,
            warnings=warnings,
            project=_read_cover_value(wb, "project"),
            submission=_read_cover_value(wb, "submission"),
            columns=layout,
            inputs=_read_inputs(wb),
            input_fields=_read_input_fields(wb),
        )
    finally:
        wb.close()


def _match_renamed_columns(cols: dict[str, int], headings: list[str], recorded: list[tuple[str, str]],
                           where: str, warnings: list[str]) -> dict[str, int]:
    """A heading of ours that a person renamed: found between the neighbours it was written
    between (the hidden record of the columns), by the words it shares with its old heading."""
    known_idx = set(cols.values())
    extra_headings = {_norm(h) for h, f in recorded if f == "extra"}
    free = [i for i, h in enumerate(headings)
            if i not in known_idx and h and _norm(h) not in extra_headings]
    rec_fields = [f for _, f in recorded if f != "extra"]
    rec_heading = {f: h for h, f in recorded if f != "extra"}
    for k, fld in enumerate(rec_fields):
        if fld in cols or not free:
            continue
        left = next((cols[g] for g in reversed(rec_fields[:k]) if g in cols), -1)
        right = next((cols[g] for g in rec_fields[k + 1:] if g in cols), 10**6)
        cands = [i for i in free if left < i < right]
        scored = sorted(((len(_words(headings[i]) & _words(rec_heading[fld])), -i) for i in cands),
                        reverse=True)
        pick = (-scored[0][1] if scored and scored[0][0] > 0
                else (cands[0] if len(cands) == 1 else None))
        if pick is None:
            continue
        cols[fld] = pick
        known_idx.add(pick)
        free.remove(pick)
        warnings.append(f"{where}: column '{headings[pick]}' read as "
                        f"'{rec_heading[fld]}' (the heading it was written with)")
    return cols


def _sheet_layout(headings: list[str], rows: list[tuple], field_at: dict[int, str],
                  recorded: list[tuple[str, str]]) -> tuple[dict[int, str], list[tuple[str, str]]]:
    """The columns of the sheet as found: (index -> heading of each column of a person's own,
    [(heading, field or "extra")] in sheet order)."""
    width = max([len(headings)] + [len(r) for r in rows])
    extra_idx: dict[int, str] = {}
    layout: list[tuple[str, str]] = []
    for i in range(width):
        h = headings[i] if i < len(headings) else ""
        if i in field_at:
            layout.append((h, field_at[i]))
            continue
        if not h and not any(i < len(r) and r[i] not in (None, "") for r in rows):
            continue
        if not h:
            from openpyxl.utils import get_column_letter

            h = (recorded[i][0] if i < len(recorded) and recorded[i][1] == "extra" and recorded[i][0]
                 else f"(column {get_column_letter(i + 1)})")
        while h in extra_idx.values() or any(h == lh for lh, _ in layout):
            h += " (2)"
        extra_idx[i] = h
        layout.append((h, "extra"))
    return extra_idx, layout


def _with_saved_values(path: Path, title: str, header_row: int, rows: list[tuple]) -> list[tuple]:
    """Something a person typed may be a formula: take the value a spreadsheet program
    saved with it, and where none was saved (openpyxl, some tools) keep the formula text
    rather than lose it."""
    import openpyxl

    wb_values = openpyxl.load_workbook(path, data_only=True, read_only=True)
    try:
        values = list(wb_values[title].iter_rows(min_row=header_row + 1, values_only=True))
    finally:
        wb_values.close()
    return [
        tuple(v if (i >= len(rv) or rv[i] is None) else rv[i] for i, v in enumerate(row))
        for row, rv in zip(rows, values)
    ]


def _row_comment(row: tuple, r_idx: int, cols: dict[str, int], extra_idx: dict[int, str], where: str,
                 warnings: list[str]) -> PreviousComment:
    """One row of the comments sheet as it reads, before the hidden record fills it in."""
    def cell(name: str) -> Any:
        i = cols.get(name)
        return row[i] if i is not None and i < len(row) else None

    return PreviousComment(
        key=_text(cell("key")).strip(),
        no=_int_or_none(cell("no")),
        cap=_text(cell("cap")).strip(),
        check=_text(cell("check")),
        clause=_text(cell("clause")),
        found=_text(cell("found")),
        severity=_norm(cell("severity")),
        action=_text(cell("action")),
        source=_text(cell("source")),
        response=_text(cell("response")),
        status=_normalise_status(cell("status"), where, warnings),
        row=r_idx,
        reply=_text(cell("reply")),
        extras={h: row[i] for i, h in extra_idx.items() if i < len(row) and row[i] not in (None, "")},
    )


def _merge_duplicate(first: PreviousComment, p: PreviousComment) -> None:
    """A key that appears again: its response, reply and own columns merged into the first row's."""
    if p.response.strip() and p.response not in first.response:
        first.response = (first.response + "\n" + p.response).strip("\n")
    if p.reply.strip() and p.reply not in first.reply:
        first.reply = (first.reply + "\n" + p.reply).strip("\n")
    for h, v in p.extras.items():
        if h not in first.extras:
            first.extras[h] = v
        elif _text(v) not in _text(first.extras[h]):
            first.extras[h] = f"{_text(first.extras[h])}\n{_text(v)}"


def _carry_deleted_rows(data: dict[str, dict[str, Any]], comments: dict[str, PreviousComment], path: Path,
                        warnings: list[str]) -> None:
    """A comment row a person deleted: carried from the hidden record, with a note."""
    for key, d in data.items():
        if key in comments:
            continue
        cap_k, rule_k = split_key(key, data)
        p = PreviousComment(key=key, no=_int_or_none(d.get("no")), cap=cap_k, rule=rule_k,
                            check=rule_k, severity=_norm(d.get("severity")),
                            status=_norm(d.get("status_written")) or "open", row=10**9)
        if p.status not in STATUSES:
            p.status = "open"
        _fill_from_data(p, d, "")
        p.found = p.message
        warnings.append(f"{path}: the row of comment {p.no or ''} ({key}) was deleted from the sheet; "
                        f"carried from the hidden record with status '{p.status}'")
        comments[key] = p


def _fill_from_data(p: PreviousComment, d: dict[str, Any], found: str) -> None:
    """The tool's own figures for a comment, from its hidden record (or the visible text)."""
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


# The declared transitions: (status on the previous sheet, what the new review shows) -> (new
# status, outcome, note). What the review shows for the comment's key ("evidence"):
#   reported   - the finding is still reported, not worse than the figures it is judged on
#   worse      - still reported and worse (than the previous figures if open; than the figures it was
#                closed on if closed)
#   met        - the cap is checked and the rule now passes
#   no-result  - the cap is checked but the rule gave no result ("not re-checked")
#   cap-removed - the cap is no longer in the schedule
# ``None`` in the policy slot: the same for both closing policies. Notes are formats: {n} the new
# revision, {p} the previous one, {cap}, {rule}, {was}, {now}.
EVIDENCE: tuple[str, ...] = ("reported", "worse", "met", "no-result", "cap-removed")
Transition = tuple[str, str, str]   # (new status, outcome, note format)
# the rows several previous statuses share
_NOW_MET_AUTO: Transition = ("closed", "closed", "closed in revision {n}: check now met")
_NOW_MET_CHECKER: Transition = (MET, "met", "met in revision {n}: for the checker to close")
_FAILS_AGAIN: Transition = ("open", "reopened", "reopened in revision {n}: the check fails again")
_BACK_AND_FAILS: Transition = (
    "open", "reopened", "reopened in revision {n}: cap {cap} is back in the schedule and the check fails")
_CAP_REMOVED: Transition = (
    "superseded", "superseded", "superseded in revision {n}: cap {cap} no longer in the schedule")
_NOT_RECHECKED = "not re-checked in revision {n} (no result for {rule} on cap {cap}); status left as it was"
TRANSITIONS: dict[tuple[str, str, str | None], Transition] = {
    ("open", "reported", None): ("open", "still-open", ""),
    ("open", "worse", None): ("open", "still-open", "still open in revision {n}; worse than revision {p}"),
    ("open", "met", "auto"): _NOW_MET_AUTO,
    ("open", "met", "checker"): _NOW_MET_CHECKER,
    ("open", "cap-removed", None): _CAP_REMOVED,
    (MET, "reported", None): _FAILS_AGAIN,
    (MET, "worse", None): _FAILS_AGAIN,
    (MET, "met", "auto"): ("closed", "closed", "closed in revision {n}: check met"),
    (MET, "met", "checker"): (MET, "stays-met", "met; for the checker to close (still met in revision {n})"),
    (MET, "cap-removed", None): _CAP_REMOVED,
    ("closed", "reported", None): (
        "closed", "stays-closed", "closed by the checker; still reported in revision {n}, not worse"),
    ("closed", "worse", None): (
        "open", "reopened", "reopened in revision {n}: finding worse than when closed (was {was}, now {now})"),
    ("closed", "met", None): ("closed", "stays-closed", "closed; check met in revision {n}"),
    ("closed", "cap-removed", None): (
        "closed", "stays-closed", "closed; cap {cap} no longer in the schedule in revision {n}"),
    ("superseded", "reported", None): _BACK_AND_FAILS,
    ("superseded", "worse", None): _BACK_AND_FAILS,
    ("superseded", "met", "auto"): _NOW_MET_AUTO,
    ("superseded", "met", "checker"): _NOW_MET_CHECKER,
    ("superseded", "cap-removed", None): (
        "superseded", "stays-superseded", "superseded; cap {cap} not in the schedule in revision {n}"),
    # no result for the key: whatever the status was, it is left as it was
    **{(s, "no-result", None): (s, "not-rechecked", _NOT_RECHECKED) for s in ("open", MET, "closed", "superseded")},
}


def transition(status: str, evidence: str, policy: str = "auto") -> Transition:
    """The row of :data:`TRANSITIONS` for a previous status, the new evidence and the policy."""
    if policy not in CLOSE_POLICIES:
        raise ValueError(f"closing policy {policy!r}: use one of {', '.join(CLOSE_POLICIES)}")
    return TRANSITIONS.get((status, evidence, policy)) or TRANSITIONS[(status, evidence, None)]


def _display(v: Any) -> Any:
    if v is None:
        return None
    if isinstance(v, float):
        if math.isnan(v):
            return None
        return int(v) if v.is_integer() else round(v, 3)
    t = str(v).strip()
    return t or None


def cap_inputs(caps) -> dict[str, dict[str, tuple[Any, str]]]:
    """The compared schedule inputs of every cap, in the units shown (kN, kNm, mm, MPa)."""
    out: dict[str, dict[str, tuple[Any, str]]] = {}
    if caps is None or "mark" not in getattr(caps, "columns", ()) or len(caps) == 0:
        return out
    for rec in records(caps):
        mark = str(rec["mark"])
        if mark in out:
            continue
        fields: dict[str, tuple[Any, str]] = {}
        for name, unit, div in INPUT_FIELDS:
            if name == "column":
                cx, cy = _float_or_none(rec.get("column_x")), _float_or_none(rec.get("column_y"))
                if cx is None:
                    continue
                v = (f"D{_display(cx)}" if rec.get("column_round") is True
                     else f"{_display(cx)}x{_display(cy if cy is not None else cx)}")
            else:
                raw = rec.get(name)
                if isinstance(raw, (int, float)) and not isinstance(raw, bool):
                    v = _display(float(raw) / div)
                else:
                    v = _display(raw)
            if v is not None:
                fields[name] = (v, unit)
        out[mark] = fields
    return out


def _same(a: Any, b: Any) -> bool:
    if isinstance(a, (int, float)) and isinstance(b, (int, float)):
        return abs(float(a) - float(b)) <= 1e-6 * max(1.0, abs(float(a)), abs(float(b)))
    return _norm(a) == _norm(b)


def input_changes(before: dict[str, dict[str, tuple[Any, str]]],
                  after: dict[str, dict[str, tuple[Any, str]]],
                  recorded: frozenset[str] | None = None) -> list[dict[str, Any]]:
    """Every changed input, cap by cap (schedule order of ``after``, removed caps last):
    {cap, field, unit, old, new}; a cap added or removed is one row with field "cap". ``recorded``:
    the fields ``before`` was recorded for (None: all of :data:`INPUT_FIELDS`)."""
    out: list[dict[str, Any]] = []
    compared = [name for name, _u, _d in INPUT_FIELDS if recorded is None or name in recorded]
    for cap, now in after.items():
        was = before.get(cap)
        if was is None:
            out.append({"cap": cap, "field": "cap", "unit": "", "old": None, "new": "added"})
            continue
        for name in compared:
            a, b = was.get(name), now.get(name)
            av, bv = (a[0] if a else None), (b[0] if b else None)
            if av is None and bv is None:
                continue
            if av is not None and bv is not None and _same(av, bv):
                continue
            held = b or a
            assert held is not None             # one of the two has a value (the test above)
            out.append({"cap": cap, "field": name, "unit": held[1], "old": av, "new": bv})
    for cap in before:
        if cap not in after:
            out.append({"cap": cap, "field": "cap", "unit": "", "old": "present", "new": "removed"})
    return out


#: the schedule's fields as a person names them in a list of changes (the JSON keeps the field name)
FIELD_WORDS: dict[str, str] = {
    "piles": "piles", "pile_dia": "pile diameter", "pile_spacing": "pile spacing",
    "cap_length": "cap length", "cap_width": "cap width", "cap_depth": "cap depth", "column": "column",
    "n_ed": "NEd", "mx_ed": "MEd about x", "my_ed": "MEd about y", "concrete": "concrete", "fyk": "fyk",
    "cover": "cover", "exposure": "exposure", "bars_x": "bars x", "bars_y": "bars y", "links": "links",
    "embedment": "pile embedment", "pile_capacity": "pile capacity",
    "stated_pile_load": "designer's pile load", "stated_tie_x": "designer's tie x",
    "stated_tie_y": "designer's tie y", "stated_as_x": "designer's As x", "stated_as_y": "designer's As y",
    "pile_type": "pile type", "bar_ends": "bar ends", "method": "method",
    "capacity_basis": "pile capacity basis", "stated_d": "designer's effective depth",
}


def change_text(c: dict[str, Any]) -> str:
    """'cap depth 900 → 1000 mm' (one change as a person reads it)."""
    if c["field"] == "cap":
        return f"cap {c['new']}"
    unit = f" {c['unit']}" if c.get("unit") else ""
    old = "–" if c["old"] is None else c["old"]
    new = "–" if c["new"] is None else c["new"]
    return f"{FIELD_WORDS.get(c['field'], c['field'])} {old} → {new}{unit}"


def carry_over(review: "Review", previous: PreviousSheet, *, policy: str = "auto") -> RevisionResult:
    """Match the previous sheet's comments to ``review`` by key and decide each new status from
    :data:`TRANSITIONS` under the closing ``policy`` ("auto": a met check closes the comment;
    "checker": it becomes "met, for checker to close" and only a person closes it)."""
    if policy not in CLOSE_POLICIES:
        raise ValueError(f"closing policy {policy!r}: use one of {', '.join(CLOSE_POLICIES)}")
    label = next_revision(previous.revision)
    n = _REV_TOKEN          # notes are written with placeholders, then rendered (see relabel)
    current, all_results, caps_now = _results_now(review)

    warnings = list(previous.warnings)
    counts = {k: 0 for k in COUNT_NAMES}
    entries: list[CarriedComment] = []
    used: set[int] = set()
    for p in previous.extra:
        if p.no is not None:
            used.add(p.no)
    pending_numbers: list[CarriedComment] = []

    changes: list[dict[str, Any]] = []
    inputs_recorded = previous.inputs is not None
    if inputs_recorded:
        changes = input_changes(previous.inputs or {}, cap_inputs(review.caps), previous.input_fields)
    else:
        warnings.append(f"{previous.path}: inputs of the previous revision not recorded (a sheet written "
                        f"before capcheck recorded them); changes between revisions not listed")
    changed_caps = {c["cap"] for c in changes if c["field"] != "cap"}

    ordered_prev = sorted(previous.comments.values(), key=lambda p: (p.no or 10**9, p.row))
    for p in ordered_prev:
        e = _carry_one(p, current, all_results, caps_now, changed_caps, policy)
        if e.second_look:
            counts["second_look"] += 1
        if p.no is not None and p.no not in used:
            e.no = p.no
            used.add(p.no)
        else:
            if p.no is not None:
                warnings.append(f"{previous.path}: comment number {p.no} used twice; key {p.key} renumbered")
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
        policy=policy,
        changes=changes,
        inputs_recorded=inputs_recorded,
    )


def _results_now(review: "Review") -> tuple[dict[str, dict[str, Any]], dict[str, dict[str, Any]], set[str]]:
    """This revision's results: (the reported findings by comment key, every result by comment key,
    the marks of the caps checked)."""
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
    return current, all_results, caps_now


def _util_of(r: dict[str, Any] | None) -> float | None:
    return _float_or_none(r.get("utilisation")) if r else None


def _carry_one(p: PreviousComment, current: dict[str, dict[str, Any]], all_results: dict[str, dict[str, Any]],
               caps_now: set[str], changed_caps: set[str], policy: str) -> CarriedComment:
    """One previous comment carried to this revision: its new status, note and basis (numbered later)."""
    key = p.key
    cap = p.cap or split_key(key)[0]
    rule = p.rule or split_key(key)[1]
    e = CarriedComment(key=key, no=0, status=p.status, response=p.response, outcome="",
                       note="", state="present", previous=p, reply=p.reply, extras=dict(p.extras))
    was = now = ""
    if key in current:
        f = current[key]
        sev, util = str(f["severity"]), _util_of(f)
        if p.status == "closed":
            worse = _is_worse(sev, util, p.basis_severity, p.basis_utilisation)
            was = f"{p.basis_severity or 'not reported'}{_fmt_u(p.basis_utilisation)}"
            now = f"{sev}{_fmt_u(util)}"
        else:
            worse = _is_worse(sev, util, p.tool_severity, p.tool_utilisation)
        evidence = "worse" if worse else "reported"
    elif cap in caps_now and key in all_results:
        evidence = "met"
        e.state = "gone"
    elif cap in caps_now:
        evidence = "no-result"
        e.state = "not-rechecked"
    else:
        evidence = "cap-removed"
        e.state = "cap-removed"
    e.status, e.outcome, note = transition(p.status, evidence, policy)
    e.note = note.format(n=_REV_TOKEN, p=_PREV_TOKEN, cap=cap, rule=rule, was=was, now=now)
    if e.status in ("closed", MET):
        if evidence == "met":
            met = all_results[key]
            e.basis_severity, e.basis_utilisation = str(met["severity"]), _util_of(met)
        else:
            e.basis_severity, e.basis_utilisation = p.basis_severity, p.basis_utilisation
    elif e.outcome == "not-rechecked":
        e.basis_severity, e.basis_utilisation = p.basis_severity, p.basis_utilisation
    if p.status == "closed" and e.status == "closed" and cap in changed_caps:
        e.second_look = True
        e.note = (f"{e.note}; " if e.note else "") + (
            f"inputs of cap {cap} changed since revision {_PREV_TOKEN} while closed: take a second look")
    return e
