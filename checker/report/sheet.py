"""The check-comment sheet (XLSX, written with xlsxwriter in its constant-memory mode; read back
with openpyxl by :mod:`checker.revision`).

Sheets, in order:

* ``Cover``: project, submission, revision, date, checker, profile and rule set, counts by severity
  and by status, the severity colour legend, the revision summary, the caution;
* ``Comments``: one numbered row per comment (never per passed check), the designer-response
  column left for the designer and a drop-down checker status;
* ``All checks``: every result including the passed ones, for the record;
* ``Rejected rows``: only when the schedule had rows that could not be read or a table problem (a
  required field that no column of a table gives): the table problems first, labelled ``Table
  problem`` in the Mark column and placed at the table's heading row, then the rows with every reason;
* ``Skipped rows``: only when rows were not read as caps (section labels, repeated headings, notes,
  hidden or struck-through rows), each with its reason;
* ``capcheck-data`` (hidden): the tool's own figures per key, read back by the next revision.

Every visible sheet carries the caution: in its first row (repeated on every printed page) and in
the printed footer.
"""

from __future__ import annotations

import datetime as _dt
import math
import re
from pathlib import Path
from typing import TYPE_CHECKING, Any, Iterable

import xlsxwriter

from checker.caution import CAUTION
from checker.findings import SEVERITY_ORDER, count_by_severity, describe_source, sort_findings
from checker.records import RejectedRow, SkippedRow, TableProblem
from checker.report.comments import (
    ALL_CHECKS_SHEET,
    CAUTION_FILL,
    COMMENT_FIELDS,
    COMMENTS_SHEET,
    COVER_SHEET,
    DATA_COLUMNS,
    DATA_MARKER,
    DATA_SHEET,
    HEADER_FILL,
    HEADER_TEXT,
    MET,
    NOT_A_SAFETY_CLAIM,
    REJECTED_SHEET,
    SEVERITY_FILL,
    SEVERITY_MEANING,
    SEVERITY_TEXT,
    SHORT_CAUTION,
    SKIPPED_SHEET,
    STATUS_MUTED,
    STATUSES,
    Comment,
    check_text,
    comment_layout,
    count_by_status,
)
from checker.report.writefile import write_atomic
from checker.revision import (
    CHANGES_SHEET,
    COLUMNS_MARKER,
    COLUMNS_SHEET,
    INPUT_FIELDS,
    INPUTS_COMPARED,
    INPUTS_MARKER,
    INPUTS_SHEET,
    LISTS_SHEET,
    cap_inputs,
)

if TYPE_CHECKING:  # pragma: no cover
    from checker.api import Review
    from checker.revision import RevisionResult

COMMENT_WIDTHS: dict[str, float] = {
    "No.": 5,
    "Cap": 8,
    "Check": 22,
    "Clause": 15,
    "Found": 46,
    "Severity": 13,
    "Action required": 32,
    "Would pass with": 32,
    "Source": 11,
    "Designer response": 36,
    "Checker status": 11,
    "Key": 9,
    "Checker reply": 36,
}
EXTRA_WIDTH = 20          # a column a person added (its width is not read back)

ALL_CHECKS_HEADINGS: tuple[str, ...] = (
    "Cap", "Rule", "Check", "Severity", "Clause", "Value", "Limit", "Unit", "Utilisation",
    "Message", "Action required", "Source", "Key",
)
ALL_CHECKS_WIDTHS = (10, 18, 26, 14, 16, 10, 10, 7, 11, 48, 36, 14, 10)

REJECTED_HEADINGS = ("File", "Sheet", "Page", "Row", "Mark", "Reasons")
REJECTED_WIDTHS = (30, 14, 7, 7, 12, 80)
TABLE_PROBLEM_LABEL = "Table problem"   # the Mark cell of a table problem's row (Row: its heading row)

SKIPPED_HEADINGS = ("File", "Sheet", "Page", "Row", "Text", "Reason")
SKIPPED_WIDTHS = (30, 14, 7, 7, 24, 68)

ALL_CHECKS_MAX_ROWS = 100_000   # beyond this the sheet keeps the worst results and says so (XLSX
                                # holds 1,048,576 rows; a sheet this long is a record, not a read)
EXCEL_MAX_ROWS = 1_048_576
SPARE_ROWS = 200          # drop-down and greying also cover rows a person adds below the comments
HEADER_ROW = 2            # row 1 carries the caution on every table sheet (1-based, as Excel shows)
FIRST_DATA_ROW = HEADER_ROW + 1

# characters an XLSX cell cannot hold (the XML 1.0 control characters)
ILLEGAL_CHARACTERS_RE = re.compile(r"[\000-\010]|[\013-\014]|[\016-\037]")

_BORDER = {"border": 1, "border_color": "#BFBFBF"}
_BODY = {"text_wrap": True, "valign": "top", "font_size": 9, **_BORDER}
_HEAD = {"bold": True, "font_color": f"#{HEADER_TEXT}", "bg_color": f"#{HEADER_FILL}", **_BORDER}


class _Formats:
    """Cell formats by name, made once per workbook."""

    def __init__(self, wb: xlsxwriter.Workbook) -> None:
        self.wb = wb
        self._cache: dict[str, Any] = {}

    def __call__(self, name: str):
        fmt = self._cache.get(name)
        if fmt is None:
            fmt = self._cache[name] = self.wb.add_format(self._props(name))
        return fmt

    @staticmethod
    def _props(name: str) -> dict[str, Any]:
        parts = name.split(":")
        base = parts[0]
        if base == "body":
            props = dict(_BODY)
        elif base == "head":
            props = {**_HEAD, "text_wrap": True, "valign": "vcenter"}
        elif base == "plain":
            props = {}
        else:
            raise KeyError(name)
        for part in parts[1:]:
            if part.startswith("sev="):
                sev = part[4:]
                if sev in SEVERITY_FILL:
                    props.update(bg_color=f"#{SEVERITY_FILL[sev]}", font_color=f"#{SEVERITY_TEXT[sev]}",
                                 bold=sev == "unsafe", pattern=1)
            elif part == "key":
                props.update(font_size=7, font_color="#595959")
            elif part.startswith("fmt="):
                props["num_format"] = part[4:]
            elif part.startswith("size="):
                props["font_size"] = float(part[5:])
            elif part == "bold":
                props["bold"] = True
            elif part == "italic":
                props["italic"] = True
            elif part == "wrap":
                props.update(text_wrap=True)
            elif part == "top":
                props["valign"] = "top"
            elif part == "vcenter":
                props["valign"] = "vcenter"
            elif part == "left":
                props["align"] = "left"
            elif part == "center":
                props["align"] = "center"
            elif part == "border":
                props.update(_BORDER)
            elif part.startswith("color="):
                props["font_color"] = f"#{part[6:]}"
            elif part.startswith("fill="):
                props.update(bg_color=f"#{part[5:]}", pattern=1)
            else:
                raise KeyError(name)
        return props


def _put(ws, row: int, col: int, value: Any, fmt=None) -> None:
    """Write one cell (1-based row and column, as Excel shows them). Text is always stored as
    text (a response starting with '=' stays words, never becomes a formula); characters XLSX
    cannot hold are dropped; an empty cell keeps its format."""
    r, c = row - 1, col - 1
    if value is None:
        if fmt is not None:
            ws.write_blank(r, c, None, fmt)
        return
    if isinstance(value, str):
        if ILLEGAL_CHARACTERS_RE.search(value):
            value = ILLEGAL_CHARACTERS_RE.sub("", value)
        if value == "":
            if fmt is not None:
                ws.write_blank(r, c, None, fmt)
            return
        ws.write_string(r, c, value, fmt)
    elif isinstance(value, bool):
        ws.write_boolean(r, c, value, fmt)
    elif isinstance(value, (int, float)):
        ws.write_number(r, c, value, fmt)
    elif isinstance(value, (_dt.date, _dt.datetime)):
        if fmt is not None and getattr(fmt, "num_format", None):   # a date typed by a person stays a date
            when = value if isinstance(value, _dt.datetime) else _dt.datetime.combine(value, _dt.time())
            ws.write_datetime(r, c, when, fmt)
        else:
            ws.write_string(r, c, value.isoformat(), fmt)
    else:
        ws.write_string(r, c, str(value), fmt)


def _hf_escape(text: str) -> str:
    return str(text).replace("&", "&&")


def _hf_part(code: str, size: int, text: str) -> str:
    """One section of a printed header or footer; a space keeps a leading digit out of the size code."""
    text = _hf_escape(text)
    return f"&{code}&{size}" + (" " if text[:1].isdigit() else "") + text if text else ""


def _estimate_lines(text: Any, width: float, per_width: float = 1.2) -> int:
    """Lines a wrapped cell needs (about 1.2 characters of 9-point text per unit of width)."""
    if text is None or text == "":
        return 1
    if not isinstance(text, str):
        return 1
    chars = max(int(width * per_width), 4)
    if "\n" not in text:
        return max(1, -(-len(text) // chars))
    return sum(max(1, -(-len(part) // chars)) for part in text.split("\n"))


def _fit_row_height(ws, row: int, values: Iterable[Any], widths: Iterable[float],
                    line_height: float = 13.0, max_lines: int = 30) -> None:
    lines = max((_estimate_lines(v, w) for v, w in zip(values, widths)), default=1)
    ws.set_row(row - 1, line_height * min(max(lines, 1), max_lines) + 3)


def _print_setup(ws, meta: dict[str, Any], title_rows: bool, *, landscape: bool = True) -> None:
    if landscape:
        ws.set_landscape()
    else:
        ws.set_portrait()
    ws.set_paper(9)                 # A4
    ws.fit_to_pages(1, 0)           # one page wide, as many tall as needed
    ws.set_margins(left=0.5, right=0.5, top=0.7, bottom=0.8)
    if title_rows:
        ws.repeat_rows(0, HEADER_ROW - 1)
    head = "".join((
        _hf_part("L", 8, f"{meta.get('project') or ''}".strip()[:80]),
        _hf_part("C", 8, f"Check comments: {meta.get('submission', '')}"[:90]),
        _hf_part("R", 8, f"Revision {meta.get('revision', '')}, {meta.get('date', '')}"[:60]),
    ))
    ws.set_header(head[:255], {"margin": 0.3})
    ws.set_footer(_hf_part("L", 7, SHORT_CAUTION) + "&R&7&A &P / &N", {"margin": 0.3})


def _caution_row(ws, fmts: _Formats, ncols: int, widths: Iterable[float], text: str | None = None) -> None:
    text = text or f"Caution: {CAUTION}"
    ws.merge_range(0, 0, 0, ncols - 1, text, fmts("plain:wrap:vcenter:italic:size=9:color=5A3E00:fill=" + CAUTION_FILL))
    total = sum(widths)
    ws.set_row(0, 12.0 * max(2, math.ceil(len(CAUTION) / (total * 1.15))) + 6)


def _table_header(ws, fmts: _Formats, headings: Iterable[str], widths: Iterable[float]) -> None:
    for col, (h, w) in enumerate(zip(headings, widths)):
        ws.set_column(col, col, w)
        ws.write_string(HEADER_ROW - 1, col, h, fmts("head"))
    ws.set_row(HEADER_ROW - 1, 30)
    ws.freeze_panes(FIRST_DATA_ROW - 1, 0)


def _num(v: Any) -> Any:
    if v is None:
        return None
    try:
        f = float(v)
    except (TypeError, ValueError):
        return v
    if math.isnan(f):
        return None
    if math.isinf(f):
        return "n/a"
    return f


# --------------------------------------------------------------------------------------------
# sheets

def _cover(ws, fmts: _Formats, review: "Review", comments: list[Comment], meta: dict[str, Any],
           revision: "RevisionResult | None") -> None:
    ws.set_column(0, 0, 24)
    ws.set_column(1, 1, 16)
    ws.set_column(2, 2, 70)
    ws.write_string(0, 0, "Pile cap check: comment sheet", fmts("plain:bold:size=16:color=" + HEADER_FILL))
    ws.set_row(0, 26)
    ws.merge_range(1, 0, 1, 2, f"Caution: {CAUTION}",
                   fmts("plain:wrap:vcenter:italic:size=10:color=5A3E00:fill=" + CAUTION_FILL))
    ws.set_row(1, 64)

    row = _cover_facts(ws, fmts, _cover_fields(review, meta, revision), 4)

    row += 1
    _put(ws, row, 1, "Findings by severity", fmts("plain:bold:size=12"))
    row += 1
    for col, h in enumerate(("Severity", "Findings", "Meaning (legend of the colours)"), start=1):
        _put(ws, row, col, h, fmts("plain:bold:border:color=" + HEADER_TEXT + ":fill=" + HEADER_FILL))
    row += 1
    counts = count_by_severity(review.findings) if len(review.findings) else {}
    n_ok = int((review.findings["severity"] == "ok").sum()) if len(review.findings) else 0
    for sev in SEVERITY_ORDER:
        _put(ws, row, 1, sev, fmts(f"plain:border:top:size=10:sev={sev}"))
        n = counts.get(sev, 0) if sev != "ok" else n_ok
        _put(ws, row, 2, n, fmts("plain:border:center:top"))
        _put(ws, row, 3, SEVERITY_MEANING[sev], fmts("plain:border:wrap:top"))
        _fit_row_height(ws, row, [SEVERITY_MEANING[sev]], [70])
        row += 1

    row += 1
    _put(ws, row, 1, "Comments by status", fmts("plain:bold:size=12"))
    row += 1
    for col, h in enumerate(("Status", "Comments"), start=1):
        _put(ws, row, col, h, fmts("plain:bold:border:color=" + HEADER_TEXT + ":fill=" + HEADER_FILL))
    row += 1
    by_status = count_by_status(comments)
    for st in STATUSES:
        _put(ws, row, 1, st, fmts("plain:border"))
        _put(ws, row, 2, by_status.get(st, 0), fmts("plain:border:center"))
        row += 1

    row += 1
    how_to = ("Designer: write a response against each comment in 'Designer response'. Checker: set "
              "'Checker status' from the drop-down (" + " / ".join(STATUSES) + ") and answer in "
              "'Checker reply'. Columns you add are carried to the next revision. Keep the 'Key' "
              "column as it is: the next revision matches comments by it.")
    texts = [("Statement", NOT_A_SAFETY_CLAIM), ("How to answer", how_to)]
    texts += [("Notes" if i == 0 else "", str(n)) for i, n in enumerate(review.notes or [])]
    for label, text in texts:
        _put(ws, row, 1, label or None, fmts("plain:bold:top") if label else None)
        ws.merge_range(row - 1, 1, row - 1, 2, ILLEGAL_CHARACTERS_RE.sub("", text), fmts("plain:wrap:top"))
        _fit_row_height(ws, row, [text], [80])
        row += 1
    _print_setup(ws, meta, False, landscape=False)


def _cover_fields(review: "Review", meta: dict[str, Any], revision: "RevisionResult | None") -> list[tuple[str, Any]]:
    """The Cover's facts (label, value): the submission, and where every row read went (checked,
    rejected, skipped, adding a load case), the table problems and the headings not used."""
    n_caps = int(review.caps["mark"].nunique()) if "mark" in getattr(review.caps, "columns", ()) else (
        int(review.findings["cap"].nunique()) if len(review.findings) else 0)
    fields: list[tuple[str, Any]] = [
        ("Project", meta.get("project", "")),
        ("Submission", meta.get("submission", "")),
        ("Revision", meta.get("revision", 1)),
        ("Date", meta.get("date", "")),
        ("Checker", meta.get("checker", "")),
        ("Profile", meta.get("profile", "")),
        ("Rule set", meta.get("rule_set", "")),
        ("Rows read", review.rows_read),
        ("Caps checked", n_caps),
        ("Rows rejected", len(review.rejected or [])),
        ("Rows skipped", len(review.skipped or [])),
    ]
    if review.cases is not None:
        fields.append(("Rows adding a load case", review.case_rows))
    if review.table_problems:
        fields.append(("Table problems", f"{len(review.table_problems)}, listed first on the "
                                         f"'{REJECTED_SHEET}' sheet"))
    if review.unused_headings:
        fields.append(("Headings not used", ", ".join(repr(str(h)) for h in review.unused_headings)))
    if revision is not None:
        fields.append(("Previous sheet", Path(revision.previous.path).name))
        fields.append(("Revision summary", revision.summary()))
    return fields


def _cover_facts(ws, fmts: _Formats, fields: list[tuple[str, Any]], row: int) -> int:
    """Write the Cover's facts from ``row`` (label in A, value in B, a long text over B:C); the next row."""
    value_fmt = fmts("plain:left:top:wrap")
    for label, value in fields:
        _put(ws, row, 1, label, fmts("plain:bold:top"))
        if isinstance(value, str) and len(value) > 14:
            text = ILLEGAL_CHARACTERS_RE.sub("", value)
            ws.merge_range(row - 1, 1, row - 1, 2, text, value_fmt)
            _fit_row_height(ws, row, [value], [86])
        else:
            _put(ws, row, 2, value, value_fmt)
        row += 1
    return row


def _comments_sheet(ws, fmts: _Formats, comments: list[Comment], meta: dict[str, Any],
                    layout: list[tuple[str, str]] | None = None) -> None:
    if len(comments) + FIRST_DATA_ROW - 1 > EXCEL_MAX_ROWS:
        raise ValueError(
            f"{len(comments):,} comments do not fit on one XLSX sheet ({EXCEL_MAX_ROWS:,} rows); "
            f"write the comments as CSV (-o NAME.csv) or check the schedule in parts"
        )
    layout = layout or comment_layout(None)
    headings = [h for h, _ in layout]
    fields = [f for _, f in layout]
    widths = [COMMENT_WIDTHS.get(h, EXTRA_WIDTH) if f != "extra" else EXTRA_WIDTH for h, f in layout]
    ncols = len(layout)
    _caution_row(ws, fmts, ncols, widths)
    _table_header(ws, fmts, headings, widths)
    sev_col = fields.index("severity")
    key_col = fields.index("key")
    status_col = fields.index("status") + 1
    names = [fmts("body")] * ncols
    names[key_col] = fmts("body:key")
    row = FIRST_DATA_ROW
    for cm in comments:
        base = dict(zip(COMMENT_FIELDS, cm.cells()))
        values = [cm.extras.get(h) if f == "extra" else base[f] for h, f in layout]
        names[sev_col] = fmts(f"body:sev={cm.severity}")
        for col, (v, fmt) in enumerate(zip(values, names), start=1):
            if isinstance(v, (_dt.date, _dt.datetime)):        # a person's date, kept as a date
                timed = isinstance(v, _dt.datetime) and v.time() != _dt.time()
                fmt = fmts("body:fmt=yyyy-mm-dd hh:mm" if timed else "body:fmt=yyyy-mm-dd")
            _put(ws, row, col, v, fmt)
        _fit_row_height(ws, row, values, widths, line_height=12.0)
        row += 1
    last = row - 1
    end = max(last, HEADER_ROW) + SPARE_ROWS
    # the list lives on a hidden sheet: one status ("met, for checker to close") holds a comma
    ws.data_validation(FIRST_DATA_ROW - 1, status_col - 1, end - 1, status_col - 1, {
        "validate": "list",
        "source": f"='{LISTS_SHEET}'!$A$1:$A${len(STATUSES)}",
        "ignore_blank": True,
        "show_error": True,
        "error_title": "Checker status",
        "error_message": "Choose one of: " + " / ".join(STATUSES),
        "show_input": True,
        "input_title": "Checker status",
        "input_message": " / ".join(STATUSES)[:255],
    })
    ws.autofilter(HEADER_ROW - 1, 0, max(last, HEADER_ROW) - 1, ncols - 1)
    # Grey a comment once it is closed or superseded, also when a person changes the status later.
    letter = xlsxwriter.utility.xl_col_to_name(status_col - 1)
    ws.conditional_format(FIRST_DATA_ROW - 1, 0, end - 1, ncols - 1, {
        "type": "formula",
        "criteria": f'=OR(${letter}{FIRST_DATA_ROW}="closed",${letter}{FIRST_DATA_ROW}="superseded")',
        "format": fmts.wb.add_format({"font_color": f"#{STATUS_MUTED}", "italic": True}),
    })
    _print_setup(ws, meta, True)


CHANGES_HEADINGS = ("Cap", "Input", "Previous", "Now", "Unit", "Comments on the cap")
CHANGES_WIDTHS = (10, 18, 18, 18, 8, 60)


def _changes_sheet(ws, fmts: _Formats, revision: "RevisionResult", comments: list[Comment],
                   meta: dict[str, Any]) -> None:
    _caution_row(ws, fmts, len(CHANGES_HEADINGS), CHANGES_WIDTHS)
    _table_header(ws, fmts, CHANGES_HEADINGS, CHANGES_WIDTHS)
    body = fmts("body")
    row = FIRST_DATA_ROW
    if not revision.inputs_recorded:
        _put(ws, row, 1, "Inputs of the previous revision not recorded (its sheet was written before "
                         "capcheck recorded them): the changes cannot be listed.", body)
        row += 1
    on_cap: dict[str, list[str]] = {}
    for c in comments:
        if c.key:
            flag = " (closed: second look)" if c.second_look else ""
            on_cap.setdefault(c.cap, []).append(f"{c.no} {c.status}{flag}")
    for ch in revision.changes:
        values = [ch["cap"], ch["field"], ch["old"], ch["new"], ch["unit"], ", ".join(on_cap.get(ch["cap"], []))]
        for col, v in enumerate(values, start=1):
            _put(ws, row, col, v, body)
        row += 1
    ws.autofilter(HEADER_ROW - 1, 0, max(row - 1, HEADER_ROW) - 1, len(CHANGES_HEADINGS) - 1)
    _print_setup(ws, meta, True)


def _all_checks_sheet(ws, fmts: _Formats, review: "Review", meta: dict[str, Any]) -> None:
    ncols = len(ALL_CHECKS_HEADINGS)
    frame = sort_findings(review.findings) if len(review.findings) else review.findings
    total = len(frame)
    caution = None
    if total > ALL_CHECKS_MAX_ROWS:
        frame = frame.iloc[:ALL_CHECKS_MAX_ROWS]
        note = (f"This sheet lists the first {ALL_CHECKS_MAX_ROWS:,} of {total:,} results, worst first "
                f"(every comment is on the Comments sheet); the complete record of every result is in the "
                f"JSON output (-o NAME.json).")
        caution = f"{note} Caution: {CAUTION}"
    _caution_row(ws, fmts, ncols, ALL_CHECKS_WIDTHS, caution)
    _table_header(ws, fmts, ALL_CHECKS_HEADINGS, ALL_CHECKS_WIDTHS)
    row = FIRST_DATA_ROW
    if len(frame):
        _all_checks_rows(ws, fmts, frame, ncols)
        row += len(frame)
    ws.autofilter(HEADER_ROW - 1, 0, max(row - 1, HEADER_ROW) - 1, ncols - 1)
    _print_setup(ws, meta, True)


def _all_checks_rows(ws, fmts: _Formats, frame, ncols: int) -> None:
    """The rows of the All checks sheet, made column by column (no pandas row per result)."""
    n = len(frame)

    def col(name):
        return frame[name].tolist() if name in frame.columns else [None] * n

    def text(values):
        return ["" if v is None or (isinstance(v, float) and v != v) else str(v) for v in values]

    caps = [str(c) for c in col("cap")]
    rules = [str(r) for r in col("rule")]
    titles = text(col("title"))
    checks: dict[tuple[str, str], str] = {}
    sevs = [str(s) for s in col("severity")]
    clauses, units, messages = text(col("clause")), text(col("unit")), text(col("message"))
    actions = [a if a != "nan" else "" for a in text(col("action"))]
    values, limits, utils = ([_num(v) for v in col(c)] for c in ("value", "limit", "utilisation"))
    pages, sheets, rows_ = col("src_page"), col("src_sheet"), col("src_row")
    sources: dict[tuple, str] = {}
    fmt = [fmts("body")] * ncols
    fmt[5] = fmt[6] = fmts("body:fmt=0.0")
    fmt[8] = fmts("body:fmt=0.00")
    fmt[ncols - 1] = fmts("body:key")
    sev_fmt = {s: fmts(f"body:sev={s}") for s in set(sevs)}
    r = FIRST_DATA_ROW
    for i in range(n):
        rule = rules[i]
        ck = checks.get((rule, titles[i]))
        if ck is None:
            ck = checks[(rule, titles[i])] = check_text(rule, titles[i])
        key = (pages[i], sheets[i], rows_[i])
        src = sources.get(key)
        if src is None:
            p, sh, rw = key
            src = sources[key] = describe_source({
                "page": None if p is None or p != p else int(p),
                "sheet": None if sh is None or sh != sh else sh,
                "row": None if rw is None or rw != rw else int(rw),
            })
        cap = caps[i]
        row_values = [cap, rule, ck, sevs[i], clauses[i], values[i], limits[i], units[i], utils[i],
                      messages[i], actions[i], src, f"{cap}/{rule}"]
        fmt[3] = sev_fmt[sevs[i]]
        for c, (v, f) in enumerate(zip(row_values, fmt), start=1):
            _put(ws, r, c, v, f)
        _fit_row_height(ws, r, row_values, ALL_CHECKS_WIDTHS)
        r += 1


def _rejected_sheet(ws, fmts: _Formats, rejected: list[RejectedRow], meta: dict[str, Any],
                    problems: list[TableProblem] | None = None) -> None:
    """The rows not checked: first each table problem (at its heading row, labelled in the Mark column;
    the rows of that table say "see the table's problem"), then every rejected row with its reasons."""
    _caution_row(ws, fmts, len(REJECTED_HEADINGS), REJECTED_WIDTHS)
    _table_header(ws, fmts, REJECTED_HEADINGS, REJECTED_WIDTHS)
    row = FIRST_DATA_ROW
    body = fmts("body")
    label = fmts("body:bold:fill=" + CAUTION_FILL)
    entries = [(p.source, TABLE_PROBLEM_LABEL, p.errors, label) for p in problems or []]
    entries += [(rej.source, rej.mark, rej.errors, body) for rej in rejected]
    for source, mark, errors, mark_fmt in entries:
        src = source or {}
        values = [src.get("file"), src.get("sheet"), src.get("page"), src.get("row"), mark,
                  "\n".join(str(e) for e in errors)]
        for col, v in enumerate(values, start=1):
            _put(ws, row, col, v, mark_fmt if col == 5 else body)
        _fit_row_height(ws, row, values, REJECTED_WIDTHS)
        row += 1
    ws.autofilter(HEADER_ROW - 1, 0, max(row - 1, HEADER_ROW) - 1, len(REJECTED_HEADINGS) - 1)
    _print_setup(ws, meta, True)


def _skipped_sheet(ws, fmts: _Formats, skipped: list[SkippedRow], meta: dict[str, Any]) -> None:
    """The rows not read as caps, each with its reason (rows read = caps + rejected + skipped)."""
    _caution_row(ws, fmts, len(SKIPPED_HEADINGS), SKIPPED_WIDTHS)
    _table_header(ws, fmts, SKIPPED_HEADINGS, SKIPPED_WIDTHS)
    row = FIRST_DATA_ROW
    body = fmts("body")
    for sk in skipped:
        src = sk.source or {}
        values = [src.get("file"), src.get("sheet"), src.get("page"), src.get("row"), sk.text, sk.reason]
        for col, v in enumerate(values, start=1):
            _put(ws, row, col, v, body)
        _fit_row_height(ws, row, values, SKIPPED_WIDTHS)
        row += 1
    ws.autofilter(HEADER_ROW - 1, 0, max(row - 1, HEADER_ROW) - 1, len(SKIPPED_HEADINGS) - 1)
    _print_setup(ws, meta, True)


def _data_sheet(ws, comments: list[Comment], meta: dict[str, Any]) -> None:
    ws.hide()
    for col, v in enumerate([DATA_MARKER, "revision", meta.get("revision", 1)], start=1):
        _put(ws, 1, col, v)
    for col, v in enumerate(DATA_COLUMNS, start=1):
        _put(ws, 2, col, v)
    r = 3
    for cm in comments:
        if not cm.key:
            continue
        closed = cm.status in ("closed", MET)
        rec = (
            cm.key, cm.no, cm.cap, cm.rule, cm.severity, cm.tool_severity, _num(cm.tool_utilisation),
            _num(cm.value), _num(cm.limit), cm.unit, cm.message, cm.state, cm.status,
            cm.basis_severity if closed else "", _num(cm.basis_utilisation) if closed else None,
        )
        for col, v in enumerate(rec, start=1):
            _put(ws, r, col, v)
        r += 1


def _columns_sheet(ws, layout: list[tuple[str, str]]) -> None:
    ws.hide()
    _put(ws, 1, 1, COLUMNS_MARKER)
    for col, v in enumerate(("column", "heading", "field"), start=1):
        _put(ws, 2, col, v)
    for i, (h, f) in enumerate(layout, start=1):
        for col, cell in enumerate((i, h, f), start=1):
            _put(ws, i + 2, col, cell)


def _inputs_sheet(ws, review: "Review") -> None:
    ws.hide()
    _put(ws, 1, 1, INPUTS_MARKER)
    for col, v in enumerate((INPUTS_COMPARED, *(name for name, _u, _d in INPUT_FIELDS)), start=2):
        _put(ws, 1, col, v)
    for col, v in enumerate(("cap", "field", "value", "unit"), start=1):
        _put(ws, 2, col, v)
    r = 3
    for cap, fields in cap_inputs(review.caps).items():
        if not fields:
            _put(ws, r, 1, cap)
            r += 1
        for name, (value, unit) in fields.items():
            for col, v in enumerate((cap, name, value, unit), start=1):
                _put(ws, r, col, v)
            r += 1


def _lists_sheet(ws) -> None:
    ws.hide()
    for i, st in enumerate(STATUSES, start=1):
        _put(ws, i, 1, st)


def write_workbook(target, review: "Review", comments: list[Comment], meta: dict[str, Any],
                   revision: "RevisionResult | None" = None) -> None:
    """Write the comment workbook to ``target`` (a path or a binary file object)."""
    wb = xlsxwriter.Workbook(target, {"constant_memory": True, "strings_to_numbers": False,
                                      "strings_to_formulas": False, "strings_to_urls": False})
    fmts = _Formats(wb)
    layout = comment_layout(revision)
    _cover(wb.add_worksheet(COVER_SHEET), fmts, review, comments, meta, revision)
    comments_ws = wb.add_worksheet(COMMENTS_SHEET)
    _comments_sheet(comments_ws, fmts, comments, meta, layout)
    if revision is not None:
        _changes_sheet(wb.add_worksheet(CHANGES_SHEET), fmts, revision, comments, meta)
    _all_checks_sheet(wb.add_worksheet(ALL_CHECKS_SHEET), fmts, review, meta)
    if review.rejected or review.table_problems:
        _rejected_sheet(wb.add_worksheet(REJECTED_SHEET), fmts, list(review.rejected), meta,
                        list(review.table_problems))
    if review.skipped:
        _skipped_sheet(wb.add_worksheet(SKIPPED_SHEET), fmts, list(review.skipped), meta)
    _data_sheet(wb.add_worksheet(DATA_SHEET), comments, meta)
    _columns_sheet(wb.add_worksheet(COLUMNS_SHEET), layout)
    _inputs_sheet(wb.add_worksheet(INPUTS_SHEET), review)
    _lists_sheet(wb.add_worksheet(LISTS_SHEET))
    comments_ws.activate()  # open on the comments
    props: dict[str, str | _dt.datetime] = {
        "title": f"Check comments: {meta.get('submission', '')}", "subject": "capcheck comment sheet",
        "keywords": DATA_MARKER, "author": "capcheck"}
    created = meta.get("date")
    if isinstance(created, str):
        try:
            created = _dt.date.fromisoformat(created[:10])
        except ValueError:
            created = None
    if isinstance(created, _dt.date):
        props["created"] = _dt.datetime.combine(created, _dt.time())
    wb.set_properties(props)
    wb.close()


def write_sheet(review: "Review", path: str | Path, comments: list[Comment], meta: dict[str, Any],
                *, revision: "RevisionResult | None" = None, force: bool = False) -> Path:
    return write_atomic(path, lambda fh: write_workbook(fh, review, comments, meta, revision), force=force)
