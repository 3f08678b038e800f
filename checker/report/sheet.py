"""The check-comment sheet (XLSX, openpyxl).

Sheets, in order:

* ``Cover``: project, submission, revision, date, checker, profile and rule set, counts by severity
  and by status, the severity colour legend, the revision summary, the caution;
* ``Comments``: one numbered row per comment (never per passed check), the designer-response
  column left for the designer and a drop-down checker status;
* ``All checks``: every result including the passed ones, for the record;
* ``Rejected rows``: only when the schedule had rows that could not be read;
* ``capcheck-data`` (hidden): the tool's own figures per key, read back by the next revision.

Every visible sheet carries the caution: in its first row (repeated on every printed page) and in
the printed footer.
"""

from __future__ import annotations

import datetime as _dt
import math
from copy import copy
from pathlib import Path
from typing import TYPE_CHECKING, Any, Iterable

from openpyxl import Workbook
from openpyxl.cell.cell import ILLEGAL_CHARACTERS_RE
from openpyxl.formatting.rule import FormulaRule
from openpyxl.styles import Alignment, Border, Font, PatternFill, Side
from openpyxl.utils import get_column_letter
from openpyxl.worksheet.datavalidation import DataValidation
from openpyxl.worksheet.worksheet import Worksheet

from checker.caution import CAUTION
from checker.findings import (
    SEVERITY_ORDER,
    comment_key,
    count_by_severity,
    describe_source,
    sort_findings,
    source_of,
)
from checker.report.comments import (
    ALL_CHECKS_SHEET,
    COMMENT_HEADINGS,
    COMMENTS_SHEET,
    COVER_SHEET,
    DATA_COLUMNS,
    DATA_MARKER,
    DATA_SHEET,
    NOT_A_SAFETY_CLAIM,
    REJECTED_SHEET,
    SEVERITY_MEANING,
    STATUSES,
    Comment,
    check_text,
    count_by_status,
    CAUTION_FILL,
    HEADER_FILL,
    HEADER_TEXT,
    SEVERITY_FILL,
    SEVERITY_TEXT,
    SHORT_CAUTION,
    STATUS_MUTED,
)
from checker.report.writefile import write_atomic

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
}

ALL_CHECKS_HEADINGS: tuple[str, ...] = (
    "Cap", "Rule", "Check", "Severity", "Clause", "Value", "Limit", "Unit", "Utilisation",
    "Message", "Action required", "Source", "Key",
)
ALL_CHECKS_WIDTHS = (10, 18, 26, 14, 16, 10, 10, 7, 11, 48, 36, 14, 10)

REJECTED_HEADINGS = ("File", "Sheet", "Page", "Row", "Mark", "Reasons")
REJECTED_WIDTHS = (30, 14, 7, 7, 12, 80)

ALL_CHECKS_MAX_ROWS = 100_000   # beyond this the sheet keeps the worst results and says so (XLSX
                                # holds 1,048,576 rows; a sheet this long is a record, not a read)
EXCEL_MAX_ROWS = 1_048_576
SPARE_ROWS = 200          # drop-down and greying also cover rows a person adds below the comments
HEADER_ROW = 2            # row 1 carries the caution on every table sheet
FIRST_DATA_ROW = HEADER_ROW + 1

_THIN = Side(style="thin", color="BFBFBF")
_BORDER = Border(left=_THIN, right=_THIN, top=_THIN, bottom=_THIN)
_WRAP_TOP = Alignment(wrap_text=True, vertical="top")
_BODY_FONT = Font(size=9)
_HEAD_FONT = Font(bold=True, color=HEADER_TEXT)
_HEAD_FILL = PatternFill("solid", fgColor=HEADER_FILL)


def severity_fill(severity: str) -> PatternFill | None:
    colour = SEVERITY_FILL.get(str(severity))
    return PatternFill("solid", fgColor=colour) if colour else None


def severity_font(severity: str, **kw: Any) -> Font:
    kw.setdefault("size", 9)
    return Font(color=SEVERITY_TEXT.get(str(severity), "1F1F1F"), bold=severity == "unsafe", **kw)


def _put(ws: Worksheet, row: int, column: int, value: Any):
    """Write a cell; text is always stored as text (a response starting with '=' stays words,
    never becomes a formula) and characters XLSX cannot hold are dropped."""
    if isinstance(value, str):
        value = ILLEGAL_CHARACTERS_RE.sub("", value)
        if value == "":
            value = None
    c = ws.cell(row=row, column=column, value=value)
    if isinstance(value, str) and value.startswith("="):
        c.data_type = "s"
    return c


class _Styles:
    """Cell styles by name, set the slow way once per workbook and then copied as a style array
    (assigning Font/Fill objects to every cell costs a hash per cell and dominates large sheets)."""

    def __init__(self) -> None:
        self._cache: dict[str, Any] = {}

    def apply(self, cell, name: str) -> None:
        arr = self._cache.get(name)
        if arr is not None:
            cell._style = copy(arr)
            return
        body = name.split(":")
        cell.alignment = _WRAP_TOP
        cell.border = _BORDER
        cell.font = _BODY_FONT
        for part in body[1:]:
            if part.startswith("sev="):
                sev = part[4:]
                fill = severity_fill(sev)
                if fill is not None:
                    cell.fill = fill
                    cell.font = severity_font(sev)
            elif part == "key":
                cell.font = Font(size=7, color="595959")
            elif part.startswith("fmt="):
                cell.number_format = part[4:]
        self._cache[name] = copy(cell._style)


def _hf_escape(text: str) -> str:
    return str(text).replace("&", "&&")


def _estimate_lines(text: Any, width: float, per_width: float = 1.2) -> int:
    """Lines a wrapped cell needs (about 1.2 characters of 9-point text per unit of width)."""
    if text is None or text == "":
        return 1
    chars = max(int(width * per_width), 4)
    lines = 0
    for part in str(text).split("\n"):
        lines += max(1, math.ceil(len(part) / chars))
    return lines


def _fit_row_height(ws: Worksheet, row: int, values: Iterable[Any], widths: Iterable[float],
                    line_height: float = 13.0, max_lines: int = 30) -> None:
    lines = max((_estimate_lines(v, w) for v, w in zip(values, widths)), default=1)
    ws.row_dimensions[row].height = line_height * min(max(lines, 1), max_lines) + 3


def _print_setup(ws: Worksheet, meta: dict[str, Any], title_rows: str | None) -> None:
    ws.page_setup.orientation = "landscape"
    ws.page_setup.paperSize = ws.PAPERSIZE_A4
    ws.page_setup.fitToWidth = 1
    ws.page_setup.fitToHeight = 0
    ws.sheet_properties.pageSetUpPr.fitToPage = True
    ws.print_options.gridLines = False
    ws.page_margins.left = ws.page_margins.right = 0.5
    ws.page_margins.top = 0.7
    ws.page_margins.bottom = 0.8
    ws.page_margins.header = 0.3
    ws.page_margins.footer = 0.3
    if title_rows:
        ws.print_title_rows = title_rows
    head = f"{meta.get('project') or ''}".strip()
    ws.oddHeader.left.text = _hf_escape(head)[:80]
    ws.oddHeader.left.size = 8
    ws.oddHeader.center.text = _hf_escape(f"Check comments: {meta.get('submission', '')}")[:90]
    ws.oddHeader.center.size = 8
    ws.oddHeader.right.text = _hf_escape(f"Revision {meta.get('revision', '')}, {meta.get('date', '')}")[:60]
    ws.oddHeader.right.size = 8
    ws.oddFooter.left.text = _hf_escape(SHORT_CAUTION)
    ws.oddFooter.left.size = 7
    ws.oddFooter.right.text = "&[Tab] &P / &N"
    ws.oddFooter.right.size = 7


def _caution_row(ws: Worksheet, ncols: int, widths: Iterable[float]) -> None:
    ws.cell(row=1, column=1, value=f"Caution: {CAUTION}")
    ws.merge_cells(start_row=1, start_column=1, end_row=1, end_column=ncols)
    c = ws.cell(row=1, column=1)
    c.alignment = Alignment(wrap_text=True, vertical="center")
    c.font = Font(italic=True, size=9, color="5A3E00")
    c.fill = PatternFill("solid", fgColor=CAUTION_FILL)
    total = sum(widths)
    ws.row_dimensions[1].height = 12.0 * max(2, math.ceil(len(CAUTION) / (total * 1.15))) + 6


def _table_header(ws: Worksheet, headings: Iterable[str], widths: Iterable[float]) -> None:
    for col, (h, w) in enumerate(zip(headings, widths), start=1):
        c = ws.cell(row=HEADER_ROW, column=col, value=h)
        c.font = _HEAD_FONT
        c.fill = _HEAD_FILL
        c.alignment = Alignment(wrap_text=True, vertical="center")
        c.border = _BORDER
        ws.column_dimensions[get_column_letter(col)].width = w
    ws.row_dimensions[HEADER_ROW].height = 30
    ws.freeze_panes = ws.cell(row=FIRST_DATA_ROW, column=1)


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

def _cover(ws: Worksheet, review: "Review", comments: list[Comment], meta: dict[str, Any],
           revision: "RevisionResult | None") -> None:
    ws.title = COVER_SHEET
    ws.column_dimensions["A"].width = 24
    ws.column_dimensions["B"].width = 16
    ws.column_dimensions["C"].width = 70
    ws["A1"] = "Pile cap check: comment sheet"
    ws["A1"].font = Font(bold=True, size=16, color=HEADER_FILL)
    ws.row_dimensions[1].height = 26
    ws["A2"] = f"Caution: {CAUTION}"
    ws.merge_cells("A2:C2")
    ws["A2"].alignment = Alignment(wrap_text=True, vertical="center")
    ws["A2"].font = Font(italic=True, size=10, color="5A3E00")
    ws["A2"].fill = PatternFill("solid", fgColor=CAUTION_FILL)
    ws.row_dimensions[2].height = 64

    row = 4
    n_caps = int(review.caps["mark"].nunique()) if "mark" in getattr(review.caps, "columns", ()) else (
        int(review.findings["cap"].nunique()) if len(review.findings) else 0)
    fields = [
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
    ]
    if revision is not None:
        fields.append(("Previous sheet", Path(revision.previous.path).name))
        fields.append(("Revision summary", revision.summary()))
    for label, value in fields:
        lab = ws.cell(row=row, column=1, value=label)
        lab.font, lab.alignment = Font(bold=True), Alignment(vertical="top")
        c = _put(ws, row, 2, value)
        c.alignment = Alignment(horizontal="left", vertical="top", wrap_text=True)
        if isinstance(value, str) and len(value) > 14:
            ws.merge_cells(start_row=row, start_column=2, end_row=row, end_column=3)
            _fit_row_height(ws, row, [value], [86])
        row += 1

    row += 1
    ws.cell(row=row, column=1, value="Findings by severity").font = Font(bold=True, size=12)
    row += 1
    for col, h in enumerate(("Severity", "Findings", "Meaning (legend of the colours)"), start=1):
        c = ws.cell(row=row, column=col, value=h)
        c.font, c.fill, c.border = _HEAD_FONT, _HEAD_FILL, _BORDER
    row += 1
    counts = count_by_severity(review.findings) if len(review.findings) else {}
    n_ok = int((review.findings["severity"] == "ok").sum()) if len(review.findings) else 0
    for sev in SEVERITY_ORDER:
        c = ws.cell(row=row, column=1, value=sev)
        c.fill = severity_fill(sev)
        c.font = severity_font(sev, size=10)
        c.border = _BORDER
        c.alignment = Alignment(vertical="top")
        n = counts.get(sev, 0) if sev != "ok" else n_ok
        nc = ws.cell(row=row, column=2, value=n)
        nc.border, nc.alignment = _BORDER, Alignment(horizontal="center", vertical="top")
        m = ws.cell(row=row, column=3, value=SEVERITY_MEANING[sev])
        m.border, m.alignment = _BORDER, _WRAP_TOP
        _fit_row_height(ws, row, [SEVERITY_MEANING[sev]], [70])
        row += 1

    row += 1
    ws.cell(row=row, column=1, value="Comments by status").font = Font(bold=True, size=12)
    row += 1
    for col, h in enumerate(("Status", "Comments"), start=1):
        c = ws.cell(row=row, column=col, value=h)
        c.font, c.fill, c.border = _HEAD_FONT, _HEAD_FILL, _BORDER
    row += 1
    by_status = count_by_status(comments)
    for st in STATUSES:
        ws.cell(row=row, column=1, value=st).border = _BORDER
        nc = ws.cell(row=row, column=2, value=by_status.get(st, 0))
        nc.border, nc.alignment = _BORDER, Alignment(horizontal="center")
        row += 1

    row += 1
    how_to = ("Designer: write a response against each comment in 'Designer response'. Checker: set "
              "'Checker status' from the drop-down (open / closed / superseded). Keep the 'Key' column "
              "as it is: the next revision matches comments by it.")
    texts = [("Statement", NOT_A_SAFETY_CLAIM), ("How to answer", how_to)]
    texts += [("Notes" if i == 0 else "", str(n)) for i, n in enumerate(review.notes or [])]
    for label, text in texts:
        lab = ws.cell(row=row, column=1, value=label or None)
        lab.font, lab.alignment = Font(bold=True), Alignment(vertical="top")
        c = _put(ws, row, 2, text)
        ws.merge_cells(start_row=row, start_column=2, end_row=row, end_column=3)
        c.alignment = _WRAP_TOP
        _fit_row_height(ws, row, [text], [80])
        row += 1
    _print_setup(ws, meta, None)
    ws.page_setup.orientation = "portrait"


def _comments_sheet(ws: Worksheet, comments: list[Comment], meta: dict[str, Any]) -> None:
    ws.title = COMMENTS_SHEET
    if len(comments) + FIRST_DATA_ROW - 1 > EXCEL_MAX_ROWS:
        raise ValueError(
            f"{len(comments):,} comments do not fit on one XLSX sheet ({EXCEL_MAX_ROWS:,} rows); "
            f"write the comments as CSV (-o NAME.csv) or check the schedule in parts"
        )
    widths = [COMMENT_WIDTHS[h] for h in COMMENT_HEADINGS]
    ncols = len(COMMENT_HEADINGS)
    _caution_row(ws, ncols, widths)
    _table_header(ws, COMMENT_HEADINGS, widths)
    sev_col = COMMENT_HEADINGS.index("Severity") + 1
    key_col = COMMENT_HEADINGS.index("Key") + 1
    status_col = COMMENT_HEADINGS.index("Checker status") + 1
    row = FIRST_DATA_ROW
    styles = _Styles()
    names = ["body"] * ncols
    names[key_col - 1] = "body:key"
    for cm in comments:
        values = cm.cells()
        names[sev_col - 1] = f"body:sev={cm.severity}"
        for col, v in enumerate(values, start=1):
            styles.apply(_put(ws, row, col, v), names[col - 1])
        _fit_row_height(ws, row, values, widths, line_height=12.0)
        row += 1
    last = row - 1
    end = max(last, HEADER_ROW) + SPARE_ROWS
    letter = get_column_letter(status_col)
    dv = DataValidation(
        type="list",
        formula1='"' + ",".join(STATUSES) + '"',
        allow_blank=True,
        showErrorMessage=True,
        errorTitle="Checker status",
        error="Choose open, closed or superseded.",
        showInputMessage=True,
        promptTitle="Checker status",
        prompt="open / closed / superseded",
    )
    dv.add(f"{letter}{FIRST_DATA_ROW}:{letter}{end}")
    ws.add_data_validation(dv)
    last_letter = get_column_letter(ncols)
    ws.auto_filter.ref = f"A{HEADER_ROW}:{last_letter}{max(last, HEADER_ROW)}"
    # Grey a comment once it is closed or superseded, also when a person changes the status later.
    ws.conditional_formatting.add(
        f"A{FIRST_DATA_ROW}:{last_letter}{end}",
        FormulaRule(formula=[f'OR(${letter}{FIRST_DATA_ROW}="closed",${letter}{FIRST_DATA_ROW}="superseded")'],
                    font=Font(color=STATUS_MUTED, italic=True)),
    )
    _print_setup(ws, meta, f"1:{HEADER_ROW}")


def _all_checks_sheet(ws: Worksheet, review: "Review", meta: dict[str, Any]) -> None:
    ws.title = ALL_CHECKS_SHEET
    ncols = len(ALL_CHECKS_HEADINGS)
    _caution_row(ws, ncols, ALL_CHECKS_WIDTHS)
    _table_header(ws, ALL_CHECKS_HEADINGS, ALL_CHECKS_WIDTHS)
    row = FIRST_DATA_ROW
    frame = sort_findings(review.findings) if len(review.findings) else review.findings
    sev_col = ALL_CHECKS_HEADINGS.index("Severity") + 1
    styles = _Styles()
    names = ["body"] * ncols
    names[5] = names[6] = "body:fmt=0.0"
    names[8] = "body:fmt=0.00"
    names[ncols - 1] = "body:key"
    total = len(frame)
    if total > ALL_CHECKS_MAX_ROWS:
        frame = frame.iloc[:ALL_CHECKS_MAX_ROWS]
        note = (f"This sheet lists the first {ALL_CHECKS_MAX_ROWS:,} of {total:,} results, worst first "
                f"(every comment is on the Comments sheet); the complete record of every result is in the "
                f"JSON output (-o NAME.json).")
        ws.cell(row=1, column=1).value = f"{note} Caution: {CAUTION}"
    for r in frame.to_dict("records"):
        cap, rule = str(r["cap"]), str(r["rule"])
        values = [
            cap, rule, check_text(rule, str(r.get("title") or "")), str(r["severity"]),
            str(r.get("clause") or ""), _num(r.get("value")), _num(r.get("limit")),
            str(r.get("unit") or ""), _num(r.get("utilisation")), str(r.get("message") or ""),
            str(r.get("action") or "") if str(r.get("action") or "") != "nan" else "",
            describe_source(source_of(r)), comment_key(cap, rule),
        ]
        names[sev_col - 1] = f"body:sev={r['severity']}"
        for col, v in enumerate(values, start=1):
            styles.apply(_put(ws, row, col, v), names[col - 1])
        _fit_row_height(ws, row, values, ALL_CHECKS_WIDTHS)
        row += 1
    ws.auto_filter.ref = f"A{HEADER_ROW}:{get_column_letter(ncols)}{max(row - 1, HEADER_ROW)}"
    _print_setup(ws, meta, f"1:{HEADER_ROW}")


def _rejected_sheet(ws: Worksheet, rejected: list[dict[str, Any]], meta: dict[str, Any]) -> None:
    ws.title = REJECTED_SHEET
    _caution_row(ws, len(REJECTED_HEADINGS), REJECTED_WIDTHS)
    _table_header(ws, REJECTED_HEADINGS, REJECTED_WIDTHS)
    row = FIRST_DATA_ROW
    styles = _Styles()
    for rej in rejected:
        src = rej.get("source") or {}
        errors = rej.get("errors") or []
        values = [src.get("file"), src.get("sheet"), src.get("page"), src.get("row"), rej.get("mark") or "",
                  "\n".join(str(e) for e in errors)]
        for col, v in enumerate(values, start=1):
            styles.apply(_put(ws, row, col, v), "body")
        _fit_row_height(ws, row, values, REJECTED_WIDTHS)
        row += 1
    ws.auto_filter.ref = f"A{HEADER_ROW}:{get_column_letter(len(REJECTED_HEADINGS))}{max(row - 1, HEADER_ROW)}"
    _print_setup(ws, meta, f"1:{HEADER_ROW}")


def _data_sheet(ws: Worksheet, comments: list[Comment], meta: dict[str, Any]) -> None:
    ws.title = DATA_SHEET
    ws.sheet_state = "hidden"
    ws.append([DATA_MARKER, "revision", meta.get("revision", 1)])
    ws.append(list(DATA_COLUMNS))
    r = 3
    for cm in comments:
        if not cm.key:
            continue
        rec = {
            "key": cm.key,
            "no": cm.no,
            "cap": cm.cap,
            "rule": cm.rule,
            "severity": cm.severity,
            "tool_severity": cm.tool_severity,
            "tool_utilisation": _num(cm.tool_utilisation),
            "value": _num(cm.value),
            "limit": _num(cm.limit),
            "unit": cm.unit,
            "message": cm.message,
            "state": cm.state,
            "status_written": cm.status,
            "basis_severity": cm.basis_severity if cm.status == "closed" else "",
            "basis_utilisation": _num(cm.basis_utilisation) if cm.status == "closed" else None,
        }
        for col, name in enumerate(DATA_COLUMNS, start=1):
            _put(ws, r, col, rec[name])
        r += 1


def build_workbook(review: "Review", comments: list[Comment], meta: dict[str, Any],
                   revision: "RevisionResult | None" = None) -> Workbook:
    wb = Workbook()
    _cover(wb.active, review, comments, meta, revision)
    _comments_sheet(wb.create_sheet(), comments, meta)
    _all_checks_sheet(wb.create_sheet(), review, meta)
    if review.rejected:
        _rejected_sheet(wb.create_sheet(), list(review.rejected), meta)
    _data_sheet(wb.create_sheet(), comments, meta)
    wb.active = 1  # open on the comments
    wb.properties.title = f"Check comments: {meta.get('submission', '')}"
    wb.properties.subject = "capcheck comment sheet"
    wb.properties.keywords = DATA_MARKER
    wb.properties.creator = "capcheck"
    created = meta.get("date")
    if isinstance(created, _dt.date):
        wb.properties.created = _dt.datetime.combine(created, _dt.time())
    return wb


def write_sheet(review: "Review", path: str | Path, comments: list[Comment], meta: dict[str, Any],
                *, revision: "RevisionResult | None" = None, force: bool = False) -> Path:
    wb = build_workbook(review, comments, meta, revision)
    return write_atomic(path, lambda fh: wb.save(fh), force=force)
