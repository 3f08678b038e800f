"""CSV and XLSX files -> :class:`RawTable` (headings as written, cells as read, spreadsheet row numbers).

Finding the table in a sheet:

* the heading row is the first row (of the first :data:`HEADING_SCAN` rows) in which at least
  :data:`MIN_KNOWN` cells map to known fields; title and project rows above it are skipped;
* a group row directly above it, and up to two rows under it (labels under merged group headings,
  then a units row such as ``(mm)``, ``kN``), are joined onto it when more headings map
  (:func:`_heading_block`);
* the table runs to the end of the sheet: blank rows and section labels (one or two text cells, no
  figures: ``GRID D-F``) between caps are skipped and noted; a repeated heading row, a row hidden in
  the workbook or struck through is skipped with its reason (``RawTable.skipped``); the table ends at
  a notes row, a totals row or a revision box, or, after a blank row, at a row that fills fewer than
  :data:`MIN_KNOWN` mapped columns. A further heading row below starts another table.

Row numbers are the spreadsheet's (1-based, the heading row counted) so that a user finds the row.
"""

from __future__ import annotations

import csv
import io
import os
import re
import zipfile
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Iterator, Sequence

from checker.ingest import limits
from checker.ingest.errors import IngestError
from checker.ingest.headings import HeadingMap, count_known, match_heading, match_headings, resolve_mapping
from checker.ingest.notation import clean_text, normalise_unit, parse_quantity
from checker.ingest.raw import FormulaCell, RawTable
from checker.records import SkippedRawRow

CSV_EXTENSIONS = (".csv", ".txt", ".tsv")
XLSX_EXTENSIONS = (".xlsx", ".xlsm")
HEADING_SCAN = 50
MIN_KNOWN = 3
DELIMITERS = (",", ";", "\t", "|")
_SNIFF_LINES = 60
_SNIFF_CHARS = 256 * 1024
_NOTES_RE = re.compile(r"^\s*(?:\d+\s*[.)]\s*)?(?:general\s+)?(?:notes?|n\.?b\.?|key|legend|remarks?)\b|^\s*\*",
                       re.IGNORECASE)


def _name(path: str | os.PathLike) -> str:
    return str(path)


def _is_blank_cell(v: Any) -> bool:
    return v is None or (isinstance(v, str) and not v.strip())


def _n_empty(row: list[Any]) -> int:
    """Cells that are None or '' (list.count runs in C; whitespace-only cells are checked apart)."""
    return row.count(None) + row.count("")


def _blank_row(row: Sequence[Any]) -> bool:
    for v in row:                      # a data row returns at its first cell
        if not _is_blank_cell(v):
            return False
    return True


def _filled(row: Sequence[Any]) -> list[int]:
    return [i for i, v in enumerate(row) if not _is_blank_cell(v)]


def _is_figure(v: Any) -> bool:
    if isinstance(v, bool):
        return False
    if isinstance(v, (int, float)):
        return True
    if isinstance(v, str):
        try:
            parse_quantity(v)
            return True
        except ValueError:
            return False
    return False


def _is_unit_cell(v: Any) -> bool:
    if _is_blank_cell(v):
        return True
    s = clean_text(v)
    return s in ("-", "") or normalise_unit(s) is not None


def _text(v: Any) -> str:
    return "" if v is None else clean_text(v)


# --------------------------------------------------------------------------------------------
# Locating a table in a grid of cells
# --------------------------------------------------------------------------------------------


def find_heading_row(rows: Sequence[Sequence[Any]], vocabulary: str = "schedule",
                     mapping: HeadingMap | None = None, limit: int = HEADING_SCAN) -> int | None:
    """Index of the first row with at least :data:`MIN_KNOWN` cells mapping to known fields."""
    for i, row in enumerate(rows[:limit]):
        if count_known(row, vocabulary, mapping) >= MIN_KNOWN:
            return i
    return None


def _singular(text: str) -> str:
    """'PILES' -> 'PILE' (a group heading read as the element it names), else the text."""
    t = text.rstrip()
    return t[:-1] if len(t) > 3 and t[-1:] in "sS" and t[-2:-1] not in "sS" else text


def _join_headings(head: Sequence[Any], below: Sequence[Any], vocabulary: str,
                   mapping: HeadingMap | None, above: bool = False) -> list[str] | None:
    """The two rows joined into one heading row, or None when ``below`` is not part of the heading.

    ``below`` is a units row (its units are appended in brackets), or labels under a group heading:
    the group heading spreads right over the blank (merged) cells, and each column takes the first
    of 'group label', 'group (singular) label', 'label alone' that maps to a field (so 'PILES' over
    'Dia' is 'PILE Dia', 'ULS DESIGN ACTIONS' over 'NEd' is 'NEd'). Accepted only when more
    headings map than before."""
    filled = _filled(below)
    if not filled or any(_is_figure(below[i]) for i in filled):
        return None
    n = max(len(head), len(below))
    h = [_text(head[i]) if i < len(head) else "" for i in range(n)]
    b = [_text(below[i]) if i < len(below) else "" for i in range(n)]
    units_only = all(_is_unit_cell(b[i]) for i in filled)
    if units_only:
        return [" ".join(x for x in (h[i], f"({b[i]})" if b[i] and not b[i].startswith(("(", "[")) else b[i])
                         if x) for i in range(n)]
    # a group heading over blank (merged) cells spreads right over the labels below it
    spread = list(h)
    for i in range(1, n):
        if not spread[i] and b[i] and not h[i] and spread[i - 1] and b[i - 1]:
            spread[i] = spread[i - 1]
    joined = []
    for i in range(n):
        if not b[i] or not spread[i]:
            joined.append(spread[i] or b[i])
            continue
        candidates = [f"{spread[i]} {b[i]}", f"{_singular(spread[i])} {b[i]}", b[i]]
        pick = next((c for c in candidates if match_heading(c, vocabulary, mapping)[0] is not None),
                    candidates[0] if match_heading(b[i], vocabulary, mapping)[0] is None and
                    match_heading(spread[i], vocabulary, mapping)[0] is not None else b[i])
        joined.append(pick)
    before = match_headings(h if not above else b, mapping, vocabulary)
    after = match_headings(joined, mapping, vocabulary)
    if len(after.matches) > len(before.matches):
        return joined
    return None


#: the first cell of a row that ends the table: totals, a revision box, a title block's signature lines
_END_RE = re.compile(r"^\s*(?:(?:sub-?\s*)?totals?\b|grand\s+total\b|rev(?:ision)?s?\.?\s*(?:no\.?)?\s*:?\s*$|"
                     r"revision\s+(?:history|box|table)\b|amendments?\s*:?\s*$|(?:drawn|checked|approved|"
                     r"designed)(?:\s+by)?\s*:?\s*$|(?:drawn|checked|approved|designed)\s+by\b)",
                     re.IGNORECASE)


def _heading_block(rows: Sequence[Sequence[Any]], head_index: int, vocabulary: str,
                   mapping: HeadingMap | None) -> tuple[list[str], list[int]]:
    """(the headings, the indices of the rows they were read from): the heading row, a group
    heading row directly above it when it makes more headings map, and up to two rows under it
    (labels under a group heading, then a units row)."""
    used = [head_index]
    headings = [_text(v) for v in rows[head_index]]
    above = head_index - 1
    if above >= 0 and not _blank_row(rows[above]) and not _notes_row(list(rows[above])):
        joined = _join_headings(rows[above], rows[head_index], vocabulary, mapping, above=True)
        if joined is not None and not all(_is_unit_cell(c) for c in rows[head_index]):
            headings = joined
            used.insert(0, above)
    j = head_index + 1
    while j < len(rows) and j <= head_index + 2:
        if _blank_row(rows[j]):
            break
        joined = _join_headings(headings, rows[j], vocabulary, mapping)
        if joined is None:
            break
        headings = joined
        used.append(j)
        units = all(_is_unit_cell(c) for c in rows[j])
        j += 1
        if units:
            break
    return headings, used


def _first_text(row: Sequence[Any]) -> str:
    filled = _filled(row)
    return _text(row[filled[0]])[:80] if filled else ""


def locate_tables(rows: Sequence[Sequence[Any]], row_numbers: Sequence[int], *, file: str,
                  sheet: str | None = None, vocabulary: str = "schedule",
                  mapping: HeadingMap | None = None, head_index: int | None = None,
                  skip_rows: dict[int, str] | None = None, hidden_columns: set[int] | None = None,
                  ) -> tuple[list[RawTable], list[str]]:
    """(the tables in a grid of cells, notes) - see the module docstring; ([], []) without a heading row.

    ``skip_rows``: row number -> reason for rows not to read as caps (hidden, struck through);
    ``hidden_columns``: 0-based positions of hidden columns (a hidden column whose heading maps to
    the same field as a visible one is not used)."""
    notes: list[str] = []
    tables: list[RawTable] = []
    skip_rows = skip_rows or {}
    where = f'sheet "{sheet}", ' if sheet else ""
    if head_index is None:
        head_index = find_heading_row(rows, vocabulary, mapping)
    base = 0
    while head_index is not None:
        table, end = _one_table(rows, row_numbers, file=file, sheet=sheet, vocabulary=vocabulary,
                                mapping=mapping, head_index=head_index, skip_rows=skip_rows,
                                hidden_columns=hidden_columns or set(), notes=notes)
        tables.append(table)
        if end is None or end >= len(rows):
            break
        nxt = find_heading_row(rows[end:], vocabulary, mapping, limit=len(rows))
        if nxt is None:
            _note_rows_after(rows, row_numbers, end, _mapped(table, mapping, vocabulary), notes, file, sheet)
            break
        notes.append(f"{file}: {where}a second table starts at row {int(row_numbers[end + nxt])}; read as well")
        head_index = end + nxt
        base += 1
    return tables, notes


def _mapped(table: RawTable, mapping: HeadingMap | None, vocabulary: str) -> set[int]:
    return {m.column for m in match_headings(table.headings, mapping, vocabulary).matches}


def _one_table(rows: Sequence[Sequence[Any]], row_numbers: Sequence[int], *, file: str, sheet: str | None,
               vocabulary: str, mapping: HeadingMap | None, head_index: int, skip_rows: dict[int, str],
               hidden_columns: set[int], notes: list[str]) -> tuple[RawTable, int | None]:
    """One table from its heading row; (the table, the index of the row that ended it or None)."""
    where = f'sheet "{sheet}", ' if sheet else ""
    headings, used = _heading_block(rows, head_index, vocabulary, mapping)
    headings = _hide_duplicate_columns(headings, hidden_columns, vocabulary, mapping, notes, file, where)
    head_rows = [list(rows[k]) for k in used]
    start = used[-1] + 1
    report = match_headings(headings, mapping, vocabulary)
    mapped_cols = {m.column for m in report.matches}
    data, numbers, skipped, blanks, end, _ = sort_rows(rows, row_numbers, start=start, mapped_cols=mapped_cols,
                                                       head_rows=head_rows, skip_rows=skip_rows)
    last = numbers[-1] if numbers else -1
    inside = [b for b in blanks if b < last]
    if inside:
        shown = ", ".join(map(str, inside[:8])) + (" ..." if len(inside) > 8 else "")
        notes.append(f"{file}: {where}blank row(s) inside the table skipped (row {shown})")
    for k in skipped:
        notes.append(f"{file}: {where}row {k.row} skipped: {k.reason}" + (f" ({k.text!r})" if k.text else ""))
    # the table's width: the last column with a heading or a filled cell
    width = max([len(headings)] + list(map(len, data)))
    while width and not (width <= len(headings) and headings[width - 1]) and \
            all(len(r) < width or _is_blank_cell(r[width - 1]) for r in data):
        width -= 1
    headings = (headings + [""] * width)[:width]
    data = [r if len(r) == width else (r + [None] * (width - len(r)))[:width] for r in data]
    table = RawTable(file=file, sheet=sheet, headings=headings, rows=data, pages=[None] * len(data),
                     row_numbers=numbers, skipped=skipped, heading_row=int(row_numbers[used[-1]]))
    return table, end


def sort_rows(rows: Sequence[Sequence[Any]], row_numbers: Sequence[int], *, start: int = 0,
              mapped_cols: set[int], head_rows: Sequence[list[Any]] = (), skip_rows: dict[int, str] | None = None,
              pages: Sequence[int | None] | None = None
              ) -> tuple[list[list[Any]], list[int], list[SkippedRawRow], list[int], int | None, list[int]]:
    """The rows under a heading, from ``rows[start]``, sorted into caps and rows that are not caps (the
    CSV/XLSX reader and the PDF reader share it): (data rows, their numbers, skipped rows (page, number,
    reason, first text), blank row numbers, index of the row that ended the table or None, indices of the
    data rows).

    Blank rows are spacers; a section label (one or two text cells, no figures), a repeated heading row
    or a row in ``skip_rows`` (row number -> reason: hidden, struck through) is skipped with its reason;
    a notes row, a totals row or a revision box ends the table, and so does, after a blank row, a row
    that fills fewer than :data:`MIN_KNOWN` mapped columns. Section labels after the last cap are the
    notes under the table and are not listed. ``pages``: the page of each row (PDF), else None."""
    skip_rows = skip_rows or {}
    data: list[list[Any]] = []
    numbers: list[int] = []
    skipped: list[SkippedRawRow] = []
    skipped_at: list[int] = []
    kept: list[int] = []
    blanks: list[int] = []
    end: int | None = None
    i = start
    n_rows = len(rows)
    after_blank = False
    while i < n_rows:
        row = rows[i]
        number = int(row_numbers[i])
        page = pages[i] if pages is not None else None
        n_skipped = len(skipped)
        if _blank_row(row):
            after_blank = True
            if data:
                blanks.append(number)
            i += 1
            continue
        if not isinstance(row, list):
            row = list(row)
        first = _first_text(row)
        if _notes_row(row) or _END_RE.match(first):
            end = i
            break
        reason = skip_rows.get(number)
        if reason is not None:
            skipped.append(SkippedRawRow(page, number, reason, first))
        elif row in head_rows:
            skipped.append(SkippedRawRow(page, number, "the heading row repeated", first))
        elif len(row) - _n_empty(row) <= 2 and not any(_is_figure(row[c]) for c in _filled(row)) and \
                sum(1 for c in _filled(row) if c in mapped_cols) < 2:   # mark + case: a load-case row
            skipped.append(SkippedRawRow(page, number, "a section label or note (one or two text cells, no figures)",
                                         first))
        elif after_blank and sum(1 for c in _filled(row) if c in mapped_cols) < MIN_KNOWN:
            end = i                                   # after a blank row, something that is not a cap
            break
        else:
            data.append(row)
            numbers.append(number)
            kept.append(i)
        if len(skipped) > n_skipped:
            skipped_at.append(i)
        after_blank = False
        i += 1
    # text rows after the last cap are the notes under the table, not section labels
    last = kept[-1] if kept else -1
    skipped = [k for k, at in zip(skipped, skipped_at) if at < last or not k.reason.startswith("a section label")]
    return data, numbers, skipped, blanks, end, kept


def join_heading_rows(rows: Sequence[Sequence[Any]], vocabulary: str = "schedule",
                      mapping: HeadingMap | None = None) -> list[str] | None:
    """Headings written over several rows (a group heading over labels, a units row) joined into one
    heading row the way a sheet's heading block is (:func:`_heading_block`); None when no row of them
    is a heading row. The PDF reader gives the lines of a heading block as rows of cells."""
    head = find_heading_row(rows, vocabulary, mapping, limit=len(rows))
    if head is None:
        return None
    return _heading_block(rows, head, vocabulary, mapping)[0]


def _hide_duplicate_columns(headings: list[str], hidden: set[int], vocabulary: str, mapping: HeadingMap | None,
                            notes: list[str], file: str, where: str) -> list[str]:
    """A hidden column whose heading maps to the same field as a visible column is not used (the
    visible one is); a hidden column that is the only one for its field is read, with a note."""
    if not hidden:
        return headings
    from openpyxl.utils import get_column_letter

    fields: dict[int, str | None] = {i: match_heading(h, vocabulary, mapping)[0] if h else None
                                     for i, h in enumerate(headings)}
    visible = {f for i, f in fields.items() if f and i not in hidden}
    out = list(headings)
    for i in sorted(hidden):
        if i >= len(headings) or not headings[i]:
            continue
        letter = get_column_letter(i + 1)
        if fields.get(i) and fields[i] in visible:
            notes.append(f"{file}: {where}hidden column {letter} {headings[i]!r} not used: a visible column "
                         f"has the same heading ({fields[i]})")
            out[i] = f"{headings[i]} [hidden column, not used]"
        else:
            notes.append(f"{file}: {where}column {letter} {headings[i]!r} is hidden in the workbook; read")
    return out


def _note_rows_after(rows: Sequence[Sequence[Any]], row_numbers: Sequence[int], stop: int, mapped_cols: set[int],
                     notes: list[str], file: str, sheet: str | None) -> None:
    """The table ended at ``stop``; say so if rows further down look like schedule rows."""
    later = []
    for k in range(stop + 1, len(rows)):
        first = _first_text(rows[k])
        if _END_RE.match(first) and not re.match(r"\s*(?:sub-?\s*)?totals?\b|\s*grand", first, re.IGNORECASE):
            break                           # a revision box or signature block: the sheet's end matter
        if sum(1 for c in _filled(rows[k]) if c in mapped_cols) >= MIN_KNOWN:
            later.append(int(row_numbers[k]))
    if later:
        where = f'sheet "{sheet}", ' if sheet else ""
        notes.append(f"{file}: {where}the table ends at row {int(row_numbers[stop])} (notes, totals or a "
                     f"revision box); {len(later)} row(s) below that look like schedule rows were not read "
                     f"(rows {later[0]} to {later[-1]})")


def _notes_row(row: list[Any]) -> bool:
    if len(row) - _n_empty(row) > 2:
        return False
    filled = _filled(row)
    return bool(filled) and len(filled) <= 2 and isinstance(row[filled[0]], str) and \
        bool(_NOTES_RE.match(row[filled[0]]))


# --------------------------------------------------------------------------------------------
# CSV
# --------------------------------------------------------------------------------------------


def _sniff_kind(data: bytes, name: str) -> None:
    head = data[:8]
    if head.startswith(b"PK\x03\x04"):
        raise IngestError(f"{name}: this is a zip archive (an XLSX workbook?), not a CSV file; "
                          "give it the .xlsx extension")
    if head.startswith(b"%PDF"):
        raise IngestError(f"{name}: this is a PDF, not a CSV file; give it the .pdf extension")
    if head.startswith(b"\xd0\xcf\x11\xe0"):
        raise IngestError(f"{name}: this is an old-format (.xls) or password-protected workbook, not a CSV; "
                          "save it as .xlsx or .csv")


def _utf16_without_bom(data: bytes) -> str | None:
    """'utf-16-le' / 'utf-16-be' when the bytes look like UTF-16 text without a byte-order mark
    (mostly ASCII: a NUL in every second byte), else None."""
    head = data[:4096]
    if len(head) < 4 or len(head) % 2:
        head = head[: len(head) - (len(head) % 2)]
    if len(head) < 4:
        return None
    even, odd = head[0::2], head[1::2]
    if odd.count(0) >= 0.9 * len(odd) and even.count(0) == 0:
        return "utf-16-le"
    if even.count(0) >= 0.9 * len(even) and odd.count(0) == 0:
        return "utf-16-be"
    return None


def decode_text(data: bytes, name: str) -> tuple[str, list[str]]:
    """Bytes -> text: UTF-8 (with or without BOM), UTF-32 or UTF-16 with BOM, UTF-16 without BOM
    (recognised by its NUL bytes, noted), else Windows-1252 (noted)."""
    notes: list[str] = []
    if data.startswith(b"\xef\xbb\xbf"):
        return data[3:].decode("utf-8", errors="replace"), notes
    if data.startswith((b"\xff\xfe\x00\x00", b"\x00\x00\xfe\xff")):     # before UTF-16: same first bytes
        return data.decode("utf-32", errors="replace"), notes
    if data.startswith((b"\xff\xfe", b"\xfe\xff")):
        return data.decode("utf-16", errors="replace"), notes
    if b"\x00" in data[:4096]:
        enc = _utf16_without_bom(data)
        if enc is None:
            raise IngestError(f"{name}: binary data (NUL bytes); not a text CSV file")
        notes.append(f"{name}: read as {enc.upper()} text without a byte-order mark")
        return data.decode(enc, errors="replace"), notes
    try:
        return data.decode("utf-8"), notes
    except UnicodeDecodeError:
        notes.append(f"{name}: not UTF-8; read as Windows-1252 (cp1252) - check characters such as Ø and ²")
        return data.decode("cp1252", errors="replace"), notes


def _trim_blank_tail(row: list[Any]) -> list[Any]:
    end = len(row)
    while end and _is_blank_cell(row[end - 1]):
        end -= 1
    return row[:end]


def bounded_rows(rows: Iterator[Sequence[Any]], name: str, *, where: str = "",
                 max_rows: int | None = None) -> Iterator[tuple[int, list[Any]]]:
    """(row number, cells) for the rows of a sheet or CSV, within the limits.

    Row numbers count every row from 1, as the spreadsheet does. A run of blank rows is passed on
    as its first row only (blank rows end a table or are spacers either way), so a file of empty
    lines costs no memory. A row wider than :data:`~checker.ingest.limits.MAX_COLUMNS` loses its
    trailing blank cells, and is refused when it is still wider; more than ``max_rows`` filled rows
    (plus :data:`HEADING_SCAN` for titles and headings) are refused while reading.
    """
    cap = (limits.MAX_ROWS if max_rows is None else max_rows) + HEADING_SCAN
    filled = 0
    prev_blank = False
    for number, row in enumerate(rows, start=1):
        if _blank_row(row):                 # passed on as [] (its cells say nothing)
            if prev_blank:
                continue
            prev_blank = True
            yield number, []
            continue
        if not isinstance(row, list):
            row = list(row)
        if len(row) > limits.MAX_COLUMNS:
            row = _trim_blank_tail(row)
            limits.check_columns(len(row), name, number, where=where)
        prev_blank = False
        filled += 1
        if filled > cap:
            limits.check_rows(filled, name, cap - HEADING_SCAN, where)
        yield number, row


def _parse_csv(text: str, delimiter: str, name: str, limit: int | None = None,
               max_rows: int | None = None) -> tuple[list[list[str]], list[int]]:
    """(rows, their row numbers); ``limit`` stops after that many rows are kept (for sniffing)."""
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter)
    out: list[list[str]] = []
    numbers: list[int] = []
    try:
        for number, row in bounded_rows(reader, name, max_rows=max_rows):
            out.append(row)
            numbers.append(number)
            if limit is not None and len(out) >= limit:
                break
    except csv.Error as exc:
        if "field larger than field limit" in str(exc):
            raise IngestError(f"{name}: a cell near row {reader.line_num} holds more than "
                              f"{csv.field_size_limit():,} characters; that is not a schedule cell") from None
        raise IngestError(f"{name}: cannot read the CSV near row {reader.line_num}: {exc}") from None
    return out, numbers


def sniff_delimiter(text: str, name: str = "<csv>", mapping: HeadingMap | None = None,
                    vocabulary: str = "schedule") -> str:
    """The delimiter among ``, ; TAB |`` that gives a heading row with the most known headings
    (ties: the most columns in that row; then the order above)."""
    best, best_score = ",", (-1, -1)
    sample = "\n".join(text[:_SNIFF_CHARS].splitlines()[:_SNIFF_LINES])
    for d in DELIMITERS:
        try:
            rows, _ = _parse_csv(sample, d, name)
        except IngestError:
            continue
        score = (-1, -1)
        for row in rows[:HEADING_SCAN]:
            k = count_known(row, vocabulary, mapping)
            score = max(score, (k, len(row)))
        if score > best_score:
            best, best_score = d, score
    return best


def read_csv(path: str | os.PathLike, *, mapping: Any = None, vocabulary: str = "schedule",
             max_rows: int | None = None) -> tuple[list[RawTable], list[str]]:
    """A CSV (or delimited .txt) file -> ([table], notes). IngestError when it cannot be read or is
    beyond the limits (:mod:`checker.ingest.limits`)."""
    name = _name(path)
    hmap = resolve_mapping(mapping)
    data = limits.read_bytes(path, name)
    _sniff_kind(data, name)
    text, notes = decode_text(data, name)
    del data
    if not text.strip():
        raise IngestError(f"{name}: the file is empty")
    delimiter = sniff_delimiter(text, name, hmap, vocabulary)
    rows, numbers = _parse_csv(text, delimiter, name, max_rows=max_rows)   # blank cells stay ''
    del text
    tables, more = locate_tables(rows, numbers, file=name, vocabulary=vocabulary, mapping=hmap)
    if not tables:
        raise IngestError(_no_heading_message(name, rows, vocabulary))
    return tables, notes + more


def _no_heading_message(name: str, rows: Sequence[Sequence[Any]], vocabulary: str,
                        where: str = "") -> str:
    first = next((r for r in rows if not _blank_row(r)), [])
    shown = ", ".join(repr(_text(c)) for c in first if not _is_blank_cell(c))[:160]
    what = ("Mark, Piles, Pile dia, Cap depth, Column, NEd, Concrete, Cover, Bars X"
            if vocabulary == "schedule" else "Mark, x, y")
    return (f"{name}{where}: no recognisable heading row (a row with at least {MIN_KNOWN} headings such as "
            f"{what}) in the first {HEADING_SCAN} rows" + (f"; the first row reads {shown}" if shown else "")
            + "; map unusual headings with a mapping file")


# --------------------------------------------------------------------------------------------
# XLSX
# --------------------------------------------------------------------------------------------


_DTD_MARKS = tuple(m.encode(enc) for m in ("<!DOCTYPE", "<!ENTITY") for enc in ("ascii", "utf-16-le", "utf-16-be"))
_XML_HEAD = 64 * 1024
_WORKBOOK_HEAD = 4 * 1024 * 1024
_SHEET_TAG_RE = re.compile(rb"<(?:[A-Za-z_][\w.-]*:)?sheet\b")
_REL_RE = re.compile(rb"<(?:[A-Za-z_][\w.-]*:)?Relationship\b[^>]*>")
_ATTR_RE = re.compile(rb"""\b(Type|Target)\s*=\s*["']([^"']*)["']""")


def _xml_refused(name: str, part: str) -> IngestError:
    return IngestError(
        f"{name}: refused: the workbook part {part!r} declares a document type or XML entities "
        "(the way an XML bomb or an external-entity attack is built); no spreadsheet needs them and "
        "capcheck does not expand them; ask for the schedule as saved by the spreadsheet program, "
        "or as CSV")


def precheck_xlsx(path: str | os.PathLike, name: str) -> None:
    """Checks on the archive before openpyxl sees it (each bounded in time and memory):

    * the sizes the archive declares (:func:`checker.ingest.limits.check_archive`: total and ratio);
    * no XML part declares a DTD or entities: package parts never carry a document type
      declaration (ECMA-376 Part 2, Open Packaging Conventions, XML usage; from memory), so a
      ``<!DOCTYPE`` or ``<!ENTITY`` in the first 64 KiB of a part is an XML bomb or an external
      entity. openpyxl parses through defusedxml as well, which refuses entities wherever they are;
    * the number of worksheets (:data:`checker.ingest.limits.MAX_SHEETS`), and no two sheets read
      from the same part (each sheet is parsed in full when the workbook loads).
    """
    try:
        zf = zipfile.ZipFile(path)
    except zipfile.BadZipFile as exc:
        raise IngestError(f"{name}: corrupt XLSX workbook ({exc})") from None
    except OSError as exc:
        raise IngestError(f"{name}: cannot read the file ({exc.strerror or exc})") from None
    with zf:
        infos = zf.infolist()
        limits.check_archive(infos, name)
        sheets = 0
        targets: list[bytes] = []
        for info in infos:
            low = info.filename.lower()
            if not low.endswith((".xml", ".rels")) or info.is_dir():
                continue
            try:
                with zf.open(info) as fh:
                    head = fh.read(_XML_HEAD if not low.endswith(("workbook.xml", "workbook.xml.rels"))
                                   else _WORKBOOK_HEAD)
            except Exception as exc:       # bad CRC, unsupported compression, encrypted member ...
                raise IngestError(f"{name}: corrupt XLSX workbook (part {info.filename!r}: "
                                  f"{type(exc).__name__}: {exc})") from None
            probe = head[:_XML_HEAD]
            if any(m in probe for m in _DTD_MARKS):
                raise _xml_refused(name, info.filename)
            if low.endswith("workbook.xml"):
                sheets += len(_SHEET_TAG_RE.findall(head))
            elif low.endswith("workbook.xml.rels"):
                for rel in _REL_RE.findall(head):
                    attrs = dict(_ATTR_RE.findall(rel))
                    if attrs.get(b"Type", b"").endswith(b"/worksheet"):
                        targets.append(attrs.get(b"Target", b"").lstrip(b"/").lower())
        limits.check_sheets(sheets, name)
        if len(targets) != len(set(targets)):
            raise IngestError(f"{name}: refused: two worksheets of the workbook read from the same part "
                              "(a damaged or hand-made workbook); save it again from the spreadsheet program")


def _defused_error(exc: BaseException) -> bool:
    """defusedxml refused a part (openpyxl may wrap its error in a ValueError of its own)."""
    try:
        from defusedxml import DefusedXmlException
    except ImportError:                    # pragma: no cover - defusedxml is a dependency
        return False
    seen: set[int] = set()
    cur: BaseException | None = exc
    while cur is not None and id(cur) not in seen:
        if isinstance(cur, DefusedXmlException):
            return True
        seen.add(id(cur))
        cur = cur.__cause__ or cur.__context__
    return False


def _open_workbook(path: str | os.PathLike, name: str) -> Any:
    import openpyxl
    from openpyxl.utils.exceptions import InvalidFileException

    limits.check_file_size(path, name)
    try:
        with open(path, "rb") as fh:
            head = fh.read(8)
    except FileNotFoundError:
        raise IngestError(f"{name}: file not found") from None
    except OSError as exc:
        raise IngestError(f"{name}: cannot read the file ({exc.strerror or exc})") from None
    if not head:
        raise IngestError(f"{name}: the file is empty")
    if head.startswith(b"\xd0\xcf\x11\xe0"):
        raise IngestError(f"{name}: an old-format (.xls) or password-protected workbook; save it as .xlsx")
    if not head.startswith(b"PK"):
        raise IngestError(f"{name}: not an XLSX workbook (it is not a zip archive); if it is a CSV, "
                          "give it the .csv extension")
    precheck_xlsx(path, name)
    try:
        return openpyxl.load_workbook(path, read_only=True, data_only=True, keep_links=False)
    except zipfile.BadZipFile as exc:
        raise IngestError(f"{name}: corrupt XLSX workbook ({exc})") from None
    except (InvalidFileException, KeyError) as exc:
        raise IngestError(f"{name}: not a readable XLSX workbook ({exc})") from None
    except Exception as exc:  # openpyxl raises many kinds on damaged parts
        if _defused_error(exc):
            raise _xml_refused(name, "(a part of the workbook)") from None
        raise IngestError(f"{name}: cannot read the workbook ({type(exc).__name__}: {exc})") from None


@dataclass
class SheetMarks:
    """What a sheet shows differently from what it holds: hidden rows and columns, rows whose
    filled cells are all struck through (row number -> count), and rows with some struck cells."""

    hidden_rows: set[int] = field(default_factory=set)
    hidden_columns: set[int] = field(default_factory=set)        # 0-based
    struck_rows: set[int] = field(default_factory=set)
    partly_struck: dict[int, int] = field(default_factory=dict)

    def skip_rows(self) -> dict[int, str]:
        out = {r: "struck through (read as deleted)" for r in self.struck_rows}
        out.update({r: "hidden in the workbook" for r in self.hidden_rows})
        return out


def _struck_styles(wb: Any) -> set[int]:
    """Indices of the workbook's cell formats whose font is struck through."""
    try:
        fonts = wb._fonts
        return {i for i, st in enumerate(wb._cell_styles) if getattr(fonts[st.fontId], "strike", False)}
    except Exception:                     # pragma: no cover - a workbook without styles
        return set()


def _sheet_rows(ws: Any, marks: SheetMarks | None = None) -> Iterator[tuple[Any, ...]]:
    """The rows of a sheet from row 1, each as long as its last cell.

    The sheet's XML is parsed with openpyxl's own worksheet parser (as its read-only sheets do), so
    that the rows and columns marked hidden, the cells whose font is struck through and the formulas
    saved without a calculated value (:class:`~checker.ingest.raw.FormulaCell`) are known too. The
    dimensions a sheet declares are not used: a sheet may claim A1:XFD1048576 and hold one cell."""
    try:
        from openpyxl.worksheet._reader import FORMULA_TAG, WorkSheetParser

        wb = ws.parent
        source = ws._get_source()
    except Exception:                     # pragma: no cover - not a read-only worksheet
        if hasattr(ws, "reset_dimensions"):
            ws.reset_dimensions()
        yield from ws.iter_rows(min_row=1, values_only=True)
        return

    class _Parser(WorkSheetParser):
        def parse_cell(self, element: Any) -> dict:
            d = super().parse_cell(element)
            if d["value"] is None:
                f = element.find(FORMULA_TAG)
                if f is not None:
                    d["value"] = FormulaCell("=" + (f.text or ""))
            return d

    marks = marks if marks is not None else SheetMarks()
    struck = _struck_styles(wb)
    with source as src:
        parser = _Parser(src, ws._shared_strings, data_only=True, epoch=wb.epoch,
                         date_formats=wb._date_formats, timedelta_formats=wb._timedelta_formats)
        expected = 1
        cols_done = False
        for idx, cells in parser.parse():
            if not cols_done:
                cols_done = True
                for attrs in parser.column_dimensions.values():
                    if str(attrs.get("hidden", "")).lower() in ("1", "true"):
                        try:
                            lo, hi = int(attrs.get("min", 0)), int(attrs.get("max", 0))
                        except ValueError:
                            continue
                        marks.hidden_columns.update(range(max(lo, 1) - 1, min(hi, limits.MAX_COLUMNS * 4)))
            while expected < idx:
                expected += 1
                yield ()
            dims = parser.row_dimensions.pop(str(idx), None)
            if dims and str(dims.get("hidden", "")).lower() in ("1", "true"):
                marks.hidden_rows.add(idx)
            if not cells:
                yield ()
                expected = idx + 1
                continue
            vals: list[Any] = [None] * cells[-1]["column"]
            n_struck = n_filled = 0
            for c in cells:
                v = c["value"]
                col = c["column"]
                if col > len(vals):
                    vals.extend([None] * (col - len(vals)))
                vals[col - 1] = v
                if struck and v is not None and v != "":
                    n_filled += 1
                    if c["style_id"] in struck:
                        n_struck += 1
            if n_struck:
                if n_struck == n_filled:
                    marks.struck_rows.add(idx)
                else:
                    marks.partly_struck[idx] = n_struck
            expected = idx + 1
            yield tuple(vals)


def _sheet_names(wb: Any) -> list[str]:
    return [ws.title for ws in wb.worksheets]


def read_xlsx(path: str | os.PathLike, *, mapping: Any = None,
              max_rows: int | None = None, sheet: str | None = None) -> tuple[list[RawTable], list[str]]:
    """An XLSX/XLSM workbook -> (tables, notes).

    Every visible sheet with a schedule heading row is read (each table names its sheet), unless
    ``sheet`` names the one to read; the first sheet whose headings are ``mark, x, y`` (pile
    coordinates of explicit groups) is returned after them as the coordinates table. Other sheets
    are skipped with a note. Rows hidden in the workbook and rows whose cells are all struck
    through are not read as caps (each is reported with its reason); a hidden column is used only
    where no visible column has its field. The archive is checked before it is opened
    (:func:`precheck_xlsx`) and rows are read within the limits (:func:`bounded_rows`).
    """
    name = _name(path)
    hmap = resolve_mapping(mapping)
    wb = _open_workbook(path, name)
    notes: list[str] = []
    schedules: list[RawTable] = []
    coords: RawTable | None = None
    loads: RawTable | None = None
    first_rows: list[list[Any]] = []
    try:
        sheets = list(wb.worksheets)
        if not sheets:
            raise IngestError(f"{name}: the workbook has no worksheets")
        limits.check_sheets(len(sheets), name)
        if sheet is not None and sheet not in _sheet_names(wb):
            raise IngestError(f"{name}: no sheet named {sheet!r}; the sheets are "
                              + ", ".join(repr(t) for t in _sheet_names(wb)))
        for ws in sheets:
            title = ws.title
            if getattr(ws, "sheet_state", "visible") != "visible" and title != sheet:
                notes.append(f'sheet "{title}" skipped: hidden')
                continue
            marks = SheetMarks()
            try:
                it, rows, numbers = _head_rows(ws, marks, name, max_rows)
                if not first_rows:
                    first_rows = rows
                found = _sheet_kind(rows, hmap, name, title, sheet, notes, coords is not None, loads is not None)
                if found is None:
                    continue
                kind, idx = found
                for number, row in it:
                    rows.append(row)
                    numbers.append(number)
            except IngestError:
                raise
            except Exception as exc:
                if _defused_error(exc):
                    raise _xml_refused(name, f'sheet "{title}"') from None
                raise IngestError(f'{name}: sheet "{title}" cannot be read ({type(exc).__name__}: {exc})') from None
            for r, k in sorted(marks.partly_struck.items()):
                notes.append(f'{name}: sheet "{title}", row {r}: {k} cell(s) struck through; read as written')
            tables, more = locate_tables(rows, numbers, file=name, sheet=title, vocabulary=kind, mapping=hmap,
                                         head_index=idx, skip_rows=marks.skip_rows(),
                                         hidden_columns=marks.hidden_columns)
            notes.extend(more)
            if kind == "schedule":
                schedules.extend(tables)
            elif kind == "loads":
                loads = tables[0]
            else:
                coords = tables[0]
    finally:
        wb.close()
    if not schedules:
        raise IngestError(_no_heading_message(name, first_rows, "schedule", " (any sheet)"))
    if len({t.sheet for t in schedules}) > 1:
        notes.append(f"{name}: schedule read from the sheets " + ", ".join(
            dict.fromkeys(f'"{t.sheet}"' for t in schedules)) + " (choose one with --sheet NAME)")
    return schedules + [t for t in (coords, loads) if t is not None], notes


def _head_rows(ws: Any, marks: SheetMarks, name: str, max_rows: int | None
               ) -> tuple[Iterator[tuple[int, list[Any]]], list[list[Any]], list[int]]:
    """The first rows of a sheet (enough to find its heading row) and the iterator over the rest."""
    it = bounded_rows(_sheet_rows(ws, marks), name, where=f', sheet "{ws.title}"', max_rows=max_rows)
    rows: list[list[Any]] = []
    numbers: list[int] = []
    for number, row in it:
        rows.append(row)
        numbers.append(number)
        if len(rows) >= HEADING_SCAN:
            break
    return it, rows, numbers


def _sheet_kind(rows: list[list[Any]], hmap: Any, name: str, title: str, sheet: str | None, notes: list[str],
                have_coords: bool, have_loads: bool) -> tuple[str, int] | None:
    """What a sheet holds ('schedule', 'coords' or 'loads') and its heading row; None (with a note)
    when the sheet is skipped."""
    kind, idx = None, find_heading_row(rows, "schedule", hmap)
    if idx is not None:
        kind = "schedule"
    else:
        idx = find_heading_row(rows, "coords", hmap)
        kind = "coords" if idx is not None else None
    if kind is None or idx is None:     # both None together
        if sheet is not None and title == sheet:
            raise IngestError(_no_heading_message(name, rows, "schedule", f', sheet "{title}"'))
        notes.append(f'sheet "{title}" skipped: no schedule headings')
        return None
    if kind == "schedule" and _loads_headings(rows[idx], hmap):
        kind = "loads"                  # mark, case and loads only: a loads table (issue 11)
    if kind == "schedule" and sheet is not None and title != sheet:
        notes.append(f'sheet "{title}" skipped: --sheet {sheet} chooses the schedule')
        return None
    if (kind == "coords" and have_coords) or (kind == "loads" and have_loads):
        notes.append(f'sheet "{title}" skipped: the {kind} was read from an earlier sheet')
        return None
    return kind, idx


def _loads_headings(row: Sequence[Any], hmap: Any) -> bool:
    from checker.ingest.headings import LOAD_FIELDS

    fields = {m.field for m in match_headings([_text(v) for v in row], hmap, "schedule").matches}
    return "mark" in fields and bool(fields & {"n_ed", "n_sls"}) and fields <= set(LOAD_FIELDS)


def read_tabular(path: str | os.PathLike, *, mapping: Any = None,
                 max_rows: int | None = None, sheet: str | None = None) -> tuple[list[RawTable], list[str]]:
    """Dispatch on the extension: ``.csv``/``.txt`` -> :func:`read_csv`, ``.xlsx``/``.xlsm`` -> :func:`read_xlsx`."""
    ext = Path(path).suffix.lower()
    if ext in CSV_EXTENSIONS:
        return read_csv(path, mapping=mapping, max_rows=max_rows)
    if ext in XLSX_EXTENSIONS:
        return read_xlsx(path, mapping=mapping, max_rows=max_rows, sheet=sheet)
    raise IngestError(f"{_name(path)}: unknown file type {ext or '(none)'!r}; capcheck reads .csv, .xlsx, "
                      ".xlsm and .pdf")
