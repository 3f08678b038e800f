"""CSV and XLSX files -> :class:`RawTable` (headings as written, cells as read, spreadsheet row numbers).

Finding the table in a sheet:

* the heading row is the first row (of the first :data:`HEADING_SCAN` rows) in which at least
  :data:`MIN_KNOWN` cells map to known fields; title and note rows above it are skipped;
* a second heading row directly under it is joined onto it when it holds no figures and is either a
  unit row (``(mm)``, ``kN``) or labels that make more headings map (``Bottom bars`` over ``X | Y``,
  the group heading spread over the blank cells of a merged heading);
* blank rows inside the table are spacers and skipped; a blank row followed by something that is not
  a data row (a row with fewer than :data:`MIN_KNOWN` filled cells under mapped headings: notes, a
  key, a signature block) ends the table, as does a row that starts with 'Notes' and has at most two
  filled cells; a repeat of the heading row is skipped.

Row numbers are the spreadsheet's (1-based, the heading row counted) so that a user finds the row.
"""

from __future__ import annotations

import csv
import io
import os
import re
import zipfile
from pathlib import Path
from typing import Any, Iterator, Sequence

from checker.ingest.errors import IngestError
from checker.ingest.headings import HeadingMap, count_known, match_headings, resolve_mapping
from checker.ingest.notation import clean_text, normalise_unit, parse_quantity
from checker.ingest.raw import RawTable

CSV_EXTENSIONS = (".csv", ".txt", ".tsv")
XLSX_EXTENSIONS = (".xlsx", ".xlsm")
HEADING_SCAN = 50
MIN_KNOWN = 3
DELIMITERS = (",", ";", "\t", "|")
_SNIFF_LINES = 60
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


def _join_headings(head: Sequence[Any], below: Sequence[Any], vocabulary: str,
                   mapping: HeadingMap | None) -> list[str] | None:
    """The two rows joined into one heading row, or None when ``below`` is not part of the heading."""
    filled = _filled(below)
    if not filled or any(_is_figure(below[i]) for i in filled):
        return None
    n = max(len(head), len(below))
    h = [_text(head[i]) if i < len(head) else "" for i in range(n)]
    b = [_text(below[i]) if i < len(below) else "" for i in range(n)]
    units_only = all(_is_unit_cell(b[i]) for i in filled)
    # a group heading over blank (merged) cells spreads right over the labels below it
    spread = list(h)
    for i in range(1, n):
        if not spread[i] and b[i] and not h[i] and spread[i - 1] and b[i - 1]:
            spread[i] = spread[i - 1]
    joined = [" ".join(x for x in (spread[i], b[i]) if x) for i in range(n)]
    if units_only:
        return [" ".join(x for x in (h[i], f"({b[i]})" if b[i] and not b[i].startswith(("(", "[")) else b[i])
                         if x) for i in range(n)]
    before = match_headings(h, mapping, vocabulary)
    after = match_headings(joined, mapping, vocabulary)
    if len(after.matches) > len(before.matches):
        return joined
    return None


def locate_table(rows: Sequence[Sequence[Any]], row_numbers: Sequence[int], *, file: str,
                 sheet: str | None = None, vocabulary: str = "schedule",
                 mapping: HeadingMap | None = None, head_index: int | None = None
                 ) -> tuple[RawTable | None, list[str]]:
    """(the table in a grid of cells, notes) - see the module docstring; (None, []) without a heading row."""
    notes: list[str] = []
    if head_index is None:
        head_index = find_heading_row(rows, vocabulary, mapping)
    if head_index is None:
        return None, notes
    head = list(rows[head_index])
    start = head_index + 1
    joined = _join_headings(head, rows[start], vocabulary, mapping) if start < len(rows) else None
    if joined is not None:
        headings = joined
        start += 1
    else:
        headings = [_text(v) for v in head]
    report = match_headings(headings, mapping, vocabulary)
    mapped_cols = {m.column for m in report.matches}
    head_raw = list(head)
    data: list[list[Any]] = []
    numbers: list[int] = []
    i = start
    n_rows = len(rows)
    while i < n_rows:
        row = rows[i]
        if _blank_row(row):
            j = i + 1
            while j < n_rows and _blank_row(rows[j]):
                j += 1
            if j >= n_rows:
                break
            nxt = rows[j]
            if sum(1 for c in _filled(nxt) if c in mapped_cols) < MIN_KNOWN or _notes_row(nxt):
                _note_rows_after(rows, row_numbers, j, mapped_cols, notes, file, sheet)
                break
            i = j
            continue
        if _notes_row(row):
            _note_rows_after(rows, row_numbers, i, mapped_cols, notes, file, sheet)
            break
        if row == head_raw:
            i += 1                                   # the heading row repeated
            continue
        data.append(row if isinstance(row, list) else list(row))
        numbers.append(int(row_numbers[i]))
        i += 1
    # the table's width: the last column with a heading or a filled cell
    width = max([len(headings)] + list(map(len, data)))
    while width and not (width <= len(headings) and headings[width - 1]) and \
            all(len(r) < width or _is_blank_cell(r[width - 1]) for r in data):
        width -= 1
    headings = (headings + [""] * width)[:width]
    data = [r if len(r) == width else (r + [None] * (width - len(r)))[:width] for r in data]
    table = RawTable(file=file, sheet=sheet, headings=headings, rows=data, pages=[None] * len(data),
                     row_numbers=numbers)
    return table, notes


def _note_rows_after(rows: Sequence[Sequence[Any]], row_numbers: Sequence[int], stop: int, mapped_cols: set[int],
                     notes: list[str], file: str, sheet: str | None) -> None:
    """The table ended at ``stop``; say so if rows further down look like schedule rows."""
    later = [int(row_numbers[k]) for k in range(stop + 1, len(rows))
             if sum(1 for c in _filled(rows[k]) if c in mapped_cols) >= MIN_KNOWN]
    if later:
        where = f'sheet "{sheet}", ' if sheet else ""
        notes.append(f"{file}: {where}the table ends at row {int(row_numbers[stop])} (notes or a blank row); "
                     f"{len(later)} row(s) below that look like schedule rows were not read "
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


def decode_text(data: bytes, name: str) -> tuple[str, list[str]]:
    """Bytes -> text: UTF-8 (with or without BOM), UTF-16 with BOM, else Windows-1252 (noted)."""
    notes: list[str] = []
    if data.startswith(b"\xef\xbb\xbf"):
        return data[3:].decode("utf-8", errors="replace"), notes
    if data.startswith((b"\xff\xfe", b"\xfe\xff")):
        return data.decode("utf-16", errors="replace"), notes
    if b"\x00" in data[:4096]:
        raise IngestError(f"{name}: binary data (NUL bytes); not a text CSV file")
    try:
        return data.decode("utf-8"), notes
    except UnicodeDecodeError:
        notes.append(f"{name}: not UTF-8; read as Windows-1252 (cp1252) - check characters such as Ø and ²")
        return data.decode("cp1252", errors="replace"), notes


def _parse_csv(text: str, delimiter: str, name: str, limit: int | None = None) -> list[list[str]]:
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter)
    out: list[list[str]] = []
    try:
        for row in reader:
            out.append(row)
            if limit is not None and len(out) >= limit:
                break
    except csv.Error as exc:
        raise IngestError(f"{name}: cannot read the CSV near row {reader.line_num}: {exc}") from None
    return out


def sniff_delimiter(text: str, name: str = "<csv>", mapping: HeadingMap | None = None,
                    vocabulary: str = "schedule") -> str:
    """The delimiter among ``, ; TAB |`` that gives a heading row with the most known headings
    (ties: the most columns in that row; then the order above)."""
    best, best_score = ",", (-1, -1)
    sample = "\n".join(text.splitlines()[:_SNIFF_LINES])
    for d in DELIMITERS:
        try:
            rows = _parse_csv(sample, d, name)
        except IngestError:
            continue
        score = (-1, -1)
        for row in rows[:HEADING_SCAN]:
            k = count_known(row, vocabulary, mapping)
            score = max(score, (k, len(row)))
        if score > best_score:
            best, best_score = d, score
    return best


def read_csv(path: str | os.PathLike, *, mapping: Any = None, vocabulary: str = "schedule"
             ) -> tuple[list[RawTable], list[str]]:
    """A CSV (or delimited .txt) file -> ([table], notes). IngestError when it cannot be read."""
    name = _name(path)
    hmap = resolve_mapping(mapping)
    try:
        data = Path(path).read_bytes()
    except FileNotFoundError:
        raise IngestError(f"{name}: file not found") from None
    except OSError as exc:
        raise IngestError(f"{name}: cannot read the file ({exc.strerror or exc})") from None
    _sniff_kind(data, name)
    text, notes = decode_text(data, name)
    if not text.strip():
        raise IngestError(f"{name}: the file is empty")
    delimiter = sniff_delimiter(text, name, hmap, vocabulary)
    rows = _parse_csv(text, delimiter, name)                # blank cells stay '' (read as empty)
    table, more = locate_table(rows, range(1, len(rows) + 1), file=name, vocabulary=vocabulary, mapping=hmap)
    if table is None:
        raise IngestError(_no_heading_message(name, rows, vocabulary))
    return [table], notes + more


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


def _open_workbook(path: str | os.PathLike, name: str) -> Any:
    import openpyxl
    from openpyxl.utils.exceptions import InvalidFileException

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
    try:
        return openpyxl.load_workbook(path, read_only=True, data_only=True)
    except zipfile.BadZipFile as exc:
        raise IngestError(f"{name}: corrupt XLSX workbook ({exc})") from None
    except (InvalidFileException, KeyError) as exc:
        raise IngestError(f"{name}: not a readable XLSX workbook ({exc})") from None
    except Exception as exc:  # openpyxl raises many kinds on damaged parts
        raise IngestError(f"{name}: cannot read the workbook ({type(exc).__name__}: {exc})") from None


def _sheet_rows(ws: Any) -> Iterator[tuple[Any, ...]]:
    yield from ws.iter_rows(min_row=1, values_only=True)


def read_xlsx(path: str | os.PathLike, *, mapping: Any = None) -> tuple[list[RawTable], list[str]]:
    """An XLSX/XLSM workbook -> (tables, notes).

    The schedule is the first visible sheet with a schedule heading row; the first sheet whose
    headings are ``mark, x, y`` (pile coordinates of explicit groups) is returned after it as the
    coordinates table. Other sheets are skipped with a note.
    """
    name = _name(path)
    hmap = resolve_mapping(mapping)
    wb = _open_workbook(path, name)
    notes: list[str] = []
    schedule: RawTable | None = None
    coords: RawTable | None = None
    first_rows: list[list[Any]] = []
    try:
        sheets = list(wb.worksheets)
        if not sheets:
            raise IngestError(f"{name}: the workbook has no worksheets")
        for ws in sheets:
            title = ws.title
            if getattr(ws, "sheet_state", "visible") != "visible":
                notes.append(f'sheet "{title}" skipped: hidden')
                continue
            try:
                it = _sheet_rows(ws)
                rows: list[list[Any]] = []
                for row in it:
                    rows.append(list(row))
                    if len(rows) >= HEADING_SCAN:
                        break
                if not first_rows:
                    first_rows = rows
                kind, idx = None, find_heading_row(rows, "schedule", hmap)
                if idx is not None:
                    kind = "schedule"
                else:
                    idx = find_heading_row(rows, "coords", hmap)
                    kind = "coords" if idx is not None else None
                if kind is None:
                    notes.append(f'sheet "{title}" skipped: no schedule headings')
                    continue
                if (kind == "schedule" and schedule is not None) or (kind == "coords" and coords is not None):
                    notes.append(f'sheet "{title}" skipped: the {kind} was read from an earlier sheet')
                    continue
                rows.extend(list(r) for r in it)
            except IngestError:
                raise
            except Exception as exc:
                raise IngestError(f'{name}: sheet "{title}" cannot be read ({type(exc).__name__}: {exc})') from None
            table, more = locate_table(rows, range(1, len(rows) + 1), file=name, sheet=title,
                                       vocabulary=kind, mapping=hmap, head_index=idx)
            notes.extend(more)
            if kind == "schedule":
                schedule = table
            else:
                coords = table
    finally:
        wb.close()
    if schedule is None:
        raise IngestError(_no_heading_message(name, first_rows, "schedule", " (any sheet)"))
    return [t for t in (schedule, coords) if t is not None], notes


def read_tabular(path: str | os.PathLike, *, mapping: Any = None) -> tuple[list[RawTable], list[str]]:
    """Dispatch on the extension: ``.csv``/``.txt`` -> :func:`read_csv`, ``.xlsx``/``.xlsm`` -> :func:`read_xlsx`."""
    ext = Path(path).suffix.lower()
    if ext in CSV_EXTENSIONS:
        return read_csv(path, mapping=mapping)
    if ext in XLSX_EXTENSIONS:
        return read_xlsx(path, mapping=mapping)
    raise IngestError(f"{_name(path)}: unknown file type {ext or '(none)'!r}; capcheck reads .csv, .xlsx, "
                      ".xlsm and .pdf")
