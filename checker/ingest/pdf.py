"""PDF -> RawTable(s), with pdfplumber.

``read_pdf_tables`` reads every schedule table in a PDF. Per page it chooses how to read it from
what the page holds (``strategy="auto"``):

* a ruled grid (vertical and horizontal rules) -> pdfplumber's lines strategy (``pdf_ruled``);
* otherwise the text layer with explicit edges (``pdf_unruled``): column edges in the whitespace
  between the words' x-extents (or on vertical rules), row edges at the first-column marks and
  at horizontal rules, so a table with horizontal rules only is read as text across and rules
  down;
* text that reads up or down the page (a landscape table drawn sideways) is turned upright first
  and read from the text layer. Pages with a /Rotate entry are turned by pdfplumber already.

``strategy="lines"`` or ``"text"`` forces one method on every page.

A table is recognised by its heading row (at least three cells that look like schedule
headings); a page without a heading row continues the table before it when its rows fit that
table's columns. Provenance: ``RawTable.pages`` is the 1-based page of each row and
``row_numbers`` its row within that page's table, data rows counted from 1 (spacer rows, wrapped
continuation lines, title and notes rows are not counted). Empty cells are ``""``.

Bad documents raise :class:`IngestError` with a message for the user (file not found, not a PDF,
encrypted with a password, damaged, no text layer, no schedule table, more pages than
``max_pages``). A truncated file is salvaged as far as it goes (cut after its last complete
object, given a trailer) and its surviving pages are read, with a note. A page that cannot be
read becomes a note and the others are still read.
"""

from __future__ import annotations

import contextlib
import io
import logging
import os
import re
from dataclasses import dataclass, field, replace
from typing import Callable, Sequence

from checker.ingest.errors import IngestError
from checker.ingest.pdf_model import Layout, PageTable
from checker.ingest.pdf_text import (
    build_lines,
    glyphs_from_chars,
    heading_matcher,
    mark_struck,
    normalise_cell,
    page_content,
    quote_lines,
    text_direction,
)
from checker.ingest.raw import RawTable

STRATEGIES = ("auto", "lines", "text")

_NO_TEXT = ("{name} has no text to read: its pages are images (a scan or a picture of the "
            "schedule). Reading scanned documents (OCR) is out of scope; ask for the PDF as "
            "exported from the spreadsheet or drawing program, or for the schedule as CSV/XLSX.")


def read_pdf_tables(path, *, strategy: str = "auto", max_pages: int | None = None,
                    progress=None) -> tuple[list[RawTable], list[str]]:
    """Read the schedule tables of a PDF.

    Returns the tables found (one RawTable per table; a table running over several pages is one
    RawTable whose ``pages`` and ``row_numbers`` say where each row is, rows counted from 1 within
    the table on each page) and notes for the user (pages skipped, rows read with doubts).

    ``progress(pages_done, pages_total)`` is called after each page.
    Raises :class:`IngestError` when nothing can be read (no file, not a PDF, encrypted, damaged,
    no text layer, no schedule table, more pages than ``max_pages``).
    """
    name = os.fspath(path) if not isinstance(path, str) else path
    if strategy not in STRATEGIES:
        raise IngestError(f"unknown PDF reading strategy '{strategy}': use one of "
                          + ", ".join(STRATEGIES))
    _check_file(name)
    with _quiet_pdfminer():
        return _read(name, strategy, max_pages, progress)


@contextlib.contextmanager
def _quiet_pdfminer():
    """pdfminer logs warnings about every quirk of a PDF; the user gets our notes instead."""
    log = logging.getLogger("pdfminer")
    level = log.level
    log.setLevel(logging.ERROR)
    try:
        yield
    finally:
        log.setLevel(level)


@dataclass
class _Assembly:
    """The tables of a PDF as they are put together page by page: a page without a heading row goes
    on with the table before it, and a strip printed to the right joins the rows it continues."""
    name: str
    tables: list[RawTable] = field(default_factory=list)
    prev: Layout | None = None      # layout of the table read last, for a continuation
    left: PageTable | None = None   # the table that started on the page before (its strips)
    left_at: int = 0                # index of its first row in ``current.rows``
    current: RawTable | None = None
    started: dict[int, int] = field(default_factory=dict)   # id(RawTable) -> page of its heading row
    struck: dict[int, list[tuple[int, int]]] = field(default_factory=dict)  # id -> per row (struck, filled)

    def add(self, page_tables: list[PageTable], page_no: int, notes: list[str]) -> None:
        """The tables read on one page: each starts a table, or goes on with the current one."""
        current = self.current
        taken = 0                       # rows of this page already numbered (two tables on a page)
        for pt in page_tables:
            notes.extend(pt.notes)
            if pt.row_numbers and taken and min(pt.row_numbers) <= taken:
                pt.row_numbers = [r + taken for r in pt.row_numbers]   # no two records share page and row
            taken = max([taken, *pt.row_numbers])
            if pt.headings is None:
                notes.append(f"page {page_no}: no heading row; read as a continuation of "
                             f"the table from page {self.started[id(current)]}")
            elif (current is None or len(current.headings) != len(pt.headings)
                  or not _same_headings(current.headings, pt.headings)):
                current = RawTable(file=self.name, sheet=None, headings=list(pt.headings),
                                   rows=[], pages=[], row_numbers=[])
                self.current = current
                self.tables.append(current)
                self.started[id(current)] = page_no
                self.struck[id(current)] = []
            # a page without a heading row is read only after a table (``prev``): ``current`` is set
            assert current is not None
            width = len(current.headings)
            if pt.headings is not None and pt.head_tops and pt.rows:
                self.left, self.left_at = pt, len(current.rows)
            else:
                self.left = None
            current.rows.extend(_padded(r, width) for r in pt.rows)
            current.pages.extend([page_no] * len(pt.rows))
            current.row_numbers.extend(pt.row_numbers)
            self.struck[id(current)].extend(pt.struck if len(pt.struck) == len(pt.rows)
                                            else [(0, 0)] * len(pt.rows))
            self.prev = pt.layout


def _read(name: str, strategy: str, max_pages: int | None,
          progress) -> tuple[list[RawTable], list[str]]:
    pdf, salvaged = _open(name)
    notes: list[str] = []
    if salvaged:
        notes.append(f"{name} is damaged or truncated ({salvaged}); read what could be "
                     f"recovered; pages may be missing")
    asm = _Assembly(name)
    try:
        try:
            pages = pdf.pages
            total = len(pages)
        except Exception as exc:
            raise IngestError(_damaged(name, exc)) from None
        if total == 0:
            raise IngestError(f"{name}: the PDF has no pages (damaged or truncated?)")
        if max_pages is not None and total > max_pages:
            raise IngestError(
                f"{name} has {total} pages, more than the limit of {max_pages} pages for a PDF "
                f"schedule; raise the limit (--max-pages {total}) if this really is the schedule")
        is_heading = heading_matcher()
        pages_with_text = 0
        kinds: dict[str, int] = {}      # what the pages without text hold: image / drawing / blank
        failed: list[int] = []
        for page_no, page in enumerate(pages, start=1):
            page_tables, has_text, page_note = _read_one_page(page, page_no, total, strategy, is_heading,
                                                              asm, failed, notes, progress)
            pages_with_text += has_text is True
            if isinstance(has_text, str):
                kinds[has_text] = kinds.get(has_text, 0) + 1
            if page_note:
                notes.append(page_note)
            if page_tables and page_tables[0].side and asm.current is not None and asm.left is not None:
                _add_strip(asm.current, page_tables[0], asm.left_at, page_no, notes, asm.struck[id(asm.current)])
                continue
            asm.left = None
            if not page_tables:
                asm.prev = None             # a continuation must follow its table directly
                if has_text is True and not page_note:
                    notes.append(f"page {page_no}: no schedule table, skipped")
                elif salvaged and has_text == "blank" and page_no not in failed:
                    notes[-1] = (f"page {page_no}: nothing to read (its content was lost in the "
                                 f"damaged file), skipped")
                continue
            asm.add(page_tables, page_no, notes)
    finally:
        try:
            pdf.close()
        except Exception:
            pass

    tables = asm.tables
    if not tables:
        raise _no_table(name, pages_with_text, failed, kinds, notes)
    for t in tables:
        _sort_rows(t, notes, asm.struck[id(t)])
        if not t.rows and not t.skipped:
            notes.append(f"page {asm.started[id(t)]}: the table headed "
                         f"{', '.join(repr(h) for h in t.headings[:3])} ... has no rows")
    return tables, notes


def _read_one_page(page, page_no: int, total: int, strategy: str, is_heading: Callable[[str], bool],
                   asm: _Assembly, failed: list[int], notes: list[str], progress
                   ) -> tuple[list[PageTable], bool | str, str | None]:
    """Read one page; a damaged page is noted and read as empty. The page is closed after."""
    try:
        return _read_page(page, page_no, strategy, is_heading, asm.prev, asm.left)
    except IngestError:
        raise
    except Exception as exc:   # a damaged page: say so and read the others
        failed.append(page_no)
        notes.append(f"page {page_no}: could not be read ({_reason(exc)}); skipped")
        asm.prev = None
        return [], False, None
    finally:
        try:
            page.close()
        except Exception:
            pass
        if progress is not None:
            try:
                progress(page_no, total)
            except Exception:
                pass


def _no_table(name: str, pages_with_text: int, failed: list[int], kinds: dict[str, int],
              notes: list[str]) -> IngestError:
    """Why no schedule table was found: pages without text (scanned, drawing, blank), damage, or none."""
    if pages_with_text == 0 and not failed:
        if kinds.get("image"):
            return IngestError(_NO_TEXT.format(name=name))
        if kinds.get("drawing"):
            return IngestError(
                f"{name} has no text to read: its pages hold only drawing (text converted to "
                f"outlines?). Reading such PDFs (OCR) is out of scope; ask for the PDF as "
                f"exported from the spreadsheet, or for the schedule as CSV/XLSX.")
        return IngestError(
            f"{name} has no text to read: its pages are blank, or their content could not "
            f"be decoded (a damaged file?). Ask for the file again, or for the schedule as "
            f"CSV/XLSX.")
    if failed and pages_with_text == 0:
        return IngestError(f"{name}: no page could be read (the PDF looks damaged); "
                           + "; ".join(notes[:3]))
    return IngestError(
        f"no schedule table found in {name}: no page has a heading row with at least three "
        f"schedule headings (such as mark, piles, pile diameter, cap size or depth, column, "
        f"load, concrete, bars, cover). Check that this is the schedule, force a reading "
        f"method (--pdf-strategy lines or text), or give the schedule as CSV/XLSX."
        + (" Notes: " + "; ".join(notes[:5]) if notes else ""))


def _padded(row: Sequence[object], width: int) -> list[object]:
    """``row`` with blank cells added up to ``width``."""
    return [*row, *[""] * (width - len(row))]


def _add_strip(table: RawTable, strip: PageTable, at: int, page_no: int, notes: list[str],
               struck: list[tuple[int, int]]) -> None:
    """The columns of ``strip`` (a page printed to the right of the table's first page) joined onto
    the rows they share heights with (and their struck-through cells counted with the row's)."""
    first_page = table.pages[at] if at < len(table.pages) else page_no
    headings = strip.headings
    assert headings is not None         # a strip printed to the right is read with its heading row
    table.headings.extend(headings)
    width = len(table.headings)
    for k, row in enumerate(table.rows):
        if len(row) < width:
            row.extend([""] * (width - len(row)))
    for k, cells in enumerate(strip.rows):
        if at + k < len(table.rows):
            table.rows[at + k][width - len(cells):] = cells
            if k < len(strip.struck) and at + k < len(struck):
                a, b = struck[at + k]
                c, d = strip.struck[k]
                struck[at + k] = (a + c, b + d)
    notes.extend(strip.notes)
    notes.append(f"page {page_no}: the columns {', '.join(repr(h) for h in headings[:4])}"
                 f"{' ...' if len(headings) > 4 else ''} printed to the right of page "
                 f"{first_page}; read with its rows (same heights)")


STRUCK = "struck through (read as deleted)"     # the spreadsheet reader's reason (tabular.py)


def _sort_rows(table: RawTable, notes: list[str], struck: list[tuple[int, int]] | None = None) -> None:
    """Section labels, repeated headings, totals and notes rows sorted out of the caps as the
    spreadsheet reader does it (``tabular.sort_rows``): skipped with a named reason, or ending the
    table. ``struck``: per row (cells struck through, cells filled); a row whose filled cells are all
    struck through is skipped as deleted, one with some struck cells is read as written, with a note
    (as the spreadsheet reader does with a struck-through font)."""
    try:
        from checker.ingest.headings import match_headings
        from checker.ingest.tabular import sort_rows
    except ImportError:         # without the heading mapper the rows are left to the frame builder
        return
    if not table.rows:
        return
    mapped = {m.column for m in match_headings(table.headings).matches}
    # sort_rows knows a row by its number; a PDF's rows are numbered per page, so they are given
    # their index in the table here and their numbers back afterwards
    index = list(range(len(table.rows)))
    skip: dict[int, str] = {}
    if struck is not None and len(struck) == len(table.rows):
        skip = {k: STRUCK for k, (n, filled) in enumerate(struck) if n and n == filled}
    data, at, skipped, _, end, kept = sort_rows(
        table.rows, index, mapped_cols=mapped, pages=table.pages,
        head_rows=[list(table.headings)], skip_rows=skip)
    numbers = [table.row_numbers[k] for k in at]
    skipped = [replace(k, row=table.row_numbers[k.row]) for k in skipped]
    pages = [table.pages[k] for k in kept]
    if struck is not None and len(struck) == len(table.rows):
        for k in kept:
            n = struck[k][0]
            if n:
                notes.append(f"page {table.pages[k]}, row {table.row_numbers[k]}: {n} cell(s) struck "
                             f"through; read as written")
    for sk in skipped:
        notes.append(f"page {sk.page}, row {sk.row} skipped: {sk.reason}" + (f" ({sk.text!r})" if sk.text else ""))
    if end is not None:
        rest = len(table.rows) - end - 1
        first = next((str(c) for c in table.rows[end] if str(c).strip()), "")
        notes.append(f"page {table.pages[end]}, row {table.row_numbers[end]}: the table ends at "
                     f"{first!r} (notes, totals or a revision box)"
                     + (f"; {rest} row(s) below it not read" if rest > 0 else ""))
    table.rows, table.row_numbers, table.pages = data, numbers, pages
    table.skipped = list(table.skipped) + skipped


# --------------------------------------------------------------------------------------------


def _read_page(page, page_no: int, strategy: str, is_heading: Callable[[str], bool],
               prev: Layout | None, left: PageTable | None = None
               ) -> tuple[list[PageTable], bool | str, str | None]:
    """(tables, True when the page has text else what it holds instead, note).

    ``left``: the table that starts on the page before (unruled), whose further columns this page
    may hold (a sheet printed in strips across pages)."""
    content = page_content(page)
    if not content.ltchars:
        if content.images:
            return [], "image", (f"page {page_no}: no text layer (a scanned image?); reading "
                                 f"scans (OCR) is out of scope, skipped")
        if content.drawings:
            return [], "drawing", (f"page {page_no}: no text to read (drawing only, or text "
                                   f"drawn as outlines), skipped")
        return [], "blank", f"page {page_no}: blank, skipped"
    rotation = text_direction(content.ltchars)
    ruled = len(content.hsegs) >= 2 and len(content.vsegs) >= 2
    if strategy in ("auto", "lines") and rotation == 0 and ruled:
        from checker.ingest.pdf_ruled import find_ruled_tables

        grids = find_ruled_tables(page, page_no, is_heading, prev, content)
        if grids or strategy == "lines":
            return grids, True, None
    if strategy == "lines":
        return [], True, f"page {page_no}: no ruled schedule table (strategy 'lines'), skipped"

    from checker.ingest.pdf_unruled import find_text_tables

    w, h = content.width, content.height
    chars, off_page = _printed(content.chars, w, h)
    glyphs = glyphs_from_chars(chars, rotation, w, h)
    lines, _ = build_lines(glyphs)
    # strike-through lines (a row or cell struck through: read as deleted) are no table rules
    hrules, vrules = _rules(content, rotation)
    hrules = mark_struck(lines, hrules)
    if strategy != "auto":
        hrules, vrules = [], []
    found: list[PageTable] = []
    if left is not None and rotation == 0 and strategy != "lines":
        from checker.ingest.pdf_unruled import side_table

        side = side_table(lines, page_no, left, is_mark=_is_mark)
        if side is not None:
            found = [side]
    if not found:
        if prev is not None and prev.rotation != rotation:
            prev = None
        found = find_text_tables(lines, page_no, is_heading, hrules=hrules, vrules=vrules,
                                 prev=prev, rotation=rotation)
    off_note = _off_page_note(off_page, rotation, w, h,
                              _texts_read(found, left if found and found[0].side else None))
    if off_note is None:
        return found, True, None
    if not found:
        return found, True, f"page {page_no}: no schedule table, skipped; {off_note}"
    found[0].notes.insert(0, f"page {page_no}: {off_note}")
    return found, True, None


def _printed(chars: list[tuple], w: float, h: float) -> tuple[list[tuple], list[tuple]]:
    """The page's glyphs (``PageContent.chars``) split into those on the page and those placed
    wholly outside its edges, which a viewer or printer does not show: a spreadsheet program puts
    there the text of a cell merged across a page break, and a table drawn longer than its sheet
    has its last rows there. Only what is printed is read; the rest is named in a note."""
    on: list[tuple] = []
    off: list[tuple] = []
    for c in chars:
        (on if c[2] > 0.0 and c[1] < w and c[4] > 0.0 and c[3] < h else off).append(c)
    return on, off


def _off_page_note(off: list[tuple], rotation: int, w: float, h: float, known: set[str]) -> str | None:
    """What lies outside the page's edges, by edge, for a note (None when nothing does). A line
    whose text is in ``known`` (see ``_texts_read``) is left out: it repeats what was read."""
    if not off:
        return None
    sides: dict[str, list[tuple]] = {}
    for c in off:
        side = ("below its bottom edge" if c[3] >= h else "above its top edge" if c[4] <= 0.0
                else "left of its left edge" if c[2] <= 0.0 else "right of its right edge")
        sides.setdefault(side, []).append(c)
    parts = []
    for side, cs in sides.items():
        lines, _ = build_lines(glyphs_from_chars(cs, rotation, w, h))
        lines = [ln for ln in lines if normalise_cell(ln.text) not in known]
        if lines:
            parts.append(f"{len(lines)} line(s) {side}: {quote_lines(lines)}")
    if not parts:
        return None
    return "text placed outside the page (not printed) was not read: " + "; ".join(parts)


def _texts_read(found: list[PageTable], left: PageTable | None) -> set[str]:
    """Texts that a line outside the page may repeat without a note: the cells of the rows read on
    the page and, on a page holding further columns of the table before (a sheet printed in strips),
    the cells of that table's rows, its section labels (reported as skipped) among them. A
    spreadsheet program prints a cell merged across the columns of a page break on each page of the
    strip, the part that belongs to the other page placed outside this one ('GRID A' left of a
    strip's left edge)."""
    tables = [*found, left] if left is not None else found
    known = {normalise_cell(x) for t in tables for r in t.rows for x in r}
    known.discard("")
    return known


def _is_mark(text: str) -> bool:
    try:
        from checker.ingest.headings import match_heading
    except ImportError:         # without the heading mapper: by its usual words
        return text.strip().lower() in ("mark", "cap mark", "cap ref", "ref", "cap", "pile cap")
    return match_heading(text)[0] == "mark"


def _rules(content, rotation: int):
    """The page's rules -> (horizontal rules (x0, x1, y), vertical rules (x, top, bottom)) in
    the reading frame of the text."""
    if rotation == 0:
        return list(content.hsegs), list(content.vsegs)
    w, h = content.width, content.height
    if rotation == 90:          # frame x = h - top, frame y = x
        return ([(h - b, h - t, x) for x, t, b in content.vsegs],
                [(h - y, x0, x1) for x0, x1, y in content.hsegs])
    # 270: frame x = top, frame y = w - x
    return ([(t, b, w - x) for x, t, b in content.vsegs],
            [(y, w - x1, w - x0) for x0, x1, y in content.hsegs])


def _same_headings(a: list[str], b: list[str]) -> bool:
    norm = lambda xs: [" ".join(x.lower().split()) for x in xs]  # noqa: E731
    return norm(a) == norm(b)


def _check_file(name: str) -> None:
    if not os.path.exists(name):
        raise IngestError(f"{name}: file not found")
    if os.path.isdir(name):
        raise IngestError(f"{name} is a folder, not a PDF file")
    try:
        with open(name, "rb") as fh:
            head = fh.read(1024)
    except OSError as exc:
        raise IngestError(f"{name} cannot be read: {exc.strerror or exc}") from None
    if not head:
        raise IngestError(f"{name} is empty (0 bytes): not a PDF")
    if b"%PDF-" not in head:
        raise IngestError(f"{name} is not a PDF (it does not start with %PDF-); if it is a "
                          f"spreadsheet or CSV, give it with its own extension")


def _open(name: str):
    """(pdfplumber PDF, reason it was salvaged or None)."""
    import pdfplumber

    try:
        return pdfplumber.open(name), None
    except Exception as exc:
        cause = _cause(exc)
        kind = type(cause).__name__
        if kind == "PDFPasswordIncorrect" or "password" in str(cause).lower():
            raise IngestError(
                f"{name} is encrypted and needs a password to open. capcheck does not read "
                f"protected PDFs: ask for an unprotected copy, or save one without the password "
                f"(print to PDF), or give the schedule as CSV/XLSX.") from None
        if "Encryption" in kind or "encrypt" in str(cause).lower():
            raise IngestError(
                f"{name} is encrypted in a way that cannot be read ({cause or kind}); ask for an "
                f"unprotected copy or the schedule as CSV/XLSX.") from None
        salvaged = _salvage(name)
        if salvaged is not None:
            try:
                pdf = pdfplumber.open(salvaged)
                if len(pdf.pages):
                    return pdf, _reason(exc)
                pdf.close()
            except Exception:
                pass
        raise IngestError(_damaged(name, exc)) from None


_OBJ = re.compile(rb"(\d+)\s+(\d+)\s+obj\b")


def _salvage(name: str) -> io.BytesIO | None:
    """A damaged or truncated PDF made readable, as far as it goes: the file is cut after its
    last complete object and given a trailer (and a new page tree when the catalog was lost), so
    the pages whose content survived can still be read."""
    try:
        with open(name, "rb") as fh:
            data = fh.read()
    except OSError:
        return None
    end = data.rfind(b"endobj")
    if end < 0:
        return None
    body = data[: end + len(b"endobj")]
    starts = [(m.start(), int(m.group(1))) for m in _OBJ.finditer(body)]
    if not starts:
        return None
    catalog = None
    page_objs = []
    for k, (pos, num) in enumerate(starts):
        stop = starts[k + 1][0] if k + 1 < len(starts) else len(body)
        head = body[pos: min(stop, pos + 4000)]
        head = head.split(b"stream", 1)[0]
        if re.search(rb"/Type\s*/Catalog\b", head):
            catalog = num
        elif re.search(rb"/Type\s*/Page(?![a-zA-Z])", head):
            page_objs.append(num)
    top = max(n for _, n in starts)
    extra = b""
    if catalog is None:
        if not page_objs:
            return None
        kids = " ".join(f"{n} 0 R" for n in page_objs)
        extra = (f"\n{top + 1} 0 obj\n<< /Type /Pages /Kids [{kids}] /Count {len(page_objs)} >>"
                 f"\nendobj\n{top + 2} 0 obj\n<< /Type /Catalog /Pages {top + 1} 0 R >>\nendobj"
                 ).encode()
        catalog = top + 2
    trailer = f"\ntrailer\n<< /Root {catalog} 0 R /Size {top + 3} >>\n%%EOF\n".encode()
    return io.BytesIO(body + extra + trailer)


def _cause(exc: BaseException) -> BaseException:
    # pdfplumber wraps pdfminer's errors: PdfminerException(original)
    if type(exc).__name__ == "PdfminerException" and exc.args and \
            isinstance(exc.args[0], BaseException):
        return exc.args[0]
    return exc


def _reason(exc: BaseException) -> str:
    cause = _cause(exc)
    text = str(cause).strip()
    return f"{type(cause).__name__}: {text}" if text else type(cause).__name__


def _damaged(name: str, exc: BaseException) -> str:
    return (f"{name} is damaged or truncated and cannot be opened ({_reason(exc)}). Ask for the "
            f"file again, or export it once more from the program that made it.")
