"""CSV and Markdown of the check comments (the same columns as the comment sheet) plus the caution.

CSV layout: the first line is a single cell ``Caution: ...``; the second line holds the column
headings; one comment per line after that (read it with ``pandas.read_csv(path, skiprows=1)``).
The file is UTF-8 with a byte-order mark so that spreadsheet programs show ``mm²`` and ``°``
correctly.
"""

from __future__ import annotations

import csv
import io
from pathlib import Path
from typing import Any

from checker.caution import CAUTION
from checker.report.comments import COMMENT_HEADINGS, NOT_A_SAFETY_CLAIM, Comment
from checker.report.writefile import write_atomic


def _cell_text(v: Any) -> str:
    return "" if v is None else str(v)


def _csv_safe(v: Any) -> str:
    """Text that a spreadsheet will not run as a formula: a cell starting with = + - @ (or a tab or
    carriage return) gets a leading apostrophe (OWASP, CSV injection). Numbers are left as they are."""
    text = _cell_text(v)
    if text and text[0] in "=+-@\t\r" and not _is_number(text):
        return "'" + text
    return text


def _is_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


def comments_csv(comments: list[Comment]) -> str:
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\r\n")
    w.writerow([f"Caution: {CAUTION}"])
    w.writerow(COMMENT_HEADINGS)
    for c in comments:
        w.writerow([_csv_safe(v) for v in c.cells()])
    return buf.getvalue()


#: Markdown escapes, in the order applied (the backslash first: the others add backslashes)
_MD_ESCAPES: tuple[tuple[str, str], ...] = (
    ("\\", "\\\\"), ("|", "\\|"), ("&", "&amp;"), ("<", "&lt;"), (">", "&gt;"), ("\r\n", "\n"), ("\n", "<br>"),
)


def _md_escape(v: Any) -> str:
    """A cell's text for a Markdown table: backslash and pipe escaped, ``& < >`` as entities, line breaks as
    ``<br>``. Each character is looked for before it is replaced (a scan is cheap; most are absent)."""
    text = _cell_text(v)
    for old, new in _MD_ESCAPES:
        if old in text:
            text = text.replace(old, new)
    return text


def comments_markdown(comments: list[Comment], meta: dict[str, Any] | None = None,
                      summary: str | None = None) -> str:
    meta = meta or {}
    lines = ["# Check comments", ""]
    facts = [
        ("Project", meta.get("project")),
        ("Submission", meta.get("submission")),
        ("Revision", meta.get("revision")),
        ("Date", meta.get("date")),
        ("Checker", meta.get("checker")),
        ("Profile", meta.get("profile")),
        ("Rule set", meta.get("rule_set")),
    ]
    for label, value in facts:
        if value not in (None, ""):
            lines.append(f"- **{label}:** {_md_escape(value)}")
    if summary:
        lines.append(f"- **Revision summary:** {_md_escape(summary)}")
    lines += ["", f"> **Caution.** {CAUTION}", ">", f"> {NOT_A_SAFETY_CLAIM}", ""]
    if not comments:
        lines.append("No comments: every listed check was met on the figures submitted.")
        lines.append("")
        return "\n".join(lines)
    lines.append("| " + " | ".join(COMMENT_HEADINGS) + " |")
    lines.append("|" + "|".join("---:" if h == "No." else "---" for h in COMMENT_HEADINGS) + "|")
    lines.append(_md_table_body([c.cells() for c in comments]))
    lines.append("")
    return "\n".join(lines)


_CELL, _ROW = "\x00", "\x01"   # separators while the body is escaped in one pass
_NO_SEPARATORS = str.maketrans("", "", _CELL + _ROW)


def _md_table_body(rows: list[list[Any]]) -> str:
    """The table rows, each cell escaped as :func:`_md_escape` escapes it, but the whole body at once:
    the cells are joined with NUL and the rows with SOH, the body escaped with a handful of
    ``str.replace`` calls, then the separators become ``" | "`` and line breaks (a cell's own line
    breaks are ``<br>`` by then). A cell that itself holds NUL or SOH loses them (they are not text)."""
    body = _ROW.join(_CELL.join(map(_cell_text, cells)) for cells in rows)
    expected = sum(len(cells) - 1 for cells in rows) + max(len(rows) - 1, 0)
    if body.count(_CELL) + body.count(_ROW) != expected:   # a control character typed in a cell
        body = _ROW.join(_CELL.join(_cell_text(v).translate(_NO_SEPARATORS) for v in cells) for cells in rows)
    return "| " + _md_escape(body).replace(_CELL, " | ").replace(_ROW, " |\n| ") + " |"


def write_csv(path: str | Path, comments: list[Comment], *, force: bool = False) -> Path:
    return write_atomic(path, comments_csv(comments), force=force, encoding="utf-8-sig")


def write_markdown(path: str | Path, comments: list[Comment], meta: dict[str, Any] | None = None,
                   *, summary: str | None = None, force: bool = False) -> Path:
    return write_atomic(path, comments_markdown(comments, meta, summary), force=force)
