"""Test PDFs of pile cap schedules, from two independent generators.

* reportlab (always available in the test environment): ruled grid, unruled, horizontal rules
  only, several pages with or without the heading repeated, headings on two lines or spanning,
  a combined ``L x W x D`` cell, touching cells, blank spacer rows, title block / notes /
  revision box, landscape (wide media box, /Rotate, and a table drawn sideways), rows or cells
  struck through (a line through each cell's text, or one line through the row) and underlined;
* LibreOffice headless: an XLSX written with openpyxl and converted with
  ``soffice --headless --convert-to pdf``, with and without cell borders, rows struck through.

Every generator returns an :class:`Expected`: the headings as the reader should join them and
the rows as strings, with the page and the row number within that page's table of each row, so
tests can compare what was read field by field.

The schedule data is an invented scenario (fictitious project and firm).
"""

from __future__ import annotations

import os
import random
import shutil
import subprocess
import tempfile
from dataclasses import dataclass, replace
from pathlib import Path

# --------------------------------------------------------------------------------------------
# Source data
# --------------------------------------------------------------------------------------------

PROJECT = "Harrowgate Lane Depot, Phase 2 (fictitious)"
FIRM = "Example Structures LLP (fictitious)"


@dataclass
class Column:
    lines: list[str]          # heading as drawn, one entry per heading line
    key: str                  # field key into the row dicts
    align: str = "l"          # "l" or "r"

    @property
    def heading(self) -> str:
        return " ".join(x for x in self.lines if x)


def _cap_rows(n: int, seed: int = 7) -> list[dict[str, str]]:
    rng = random.Random(seed)
    rows = []
    for i in range(n):
        piles = rng.choice([1, 2, 3, 4, 4, 5, 6])
        dia = rng.choice([450, 600, 750, 900])
        s = 3 * dia
        edge = 150 + dia // 2
        if piles == 1:
            L = W = dia + 2 * 150
        elif piles == 2:
            L, W = s + 2 * edge, dia + 2 * 150
        elif piles == 3:
            L, W = s + 2 * edge, int(s * 0.866) + 2 * edge
        elif piles == 6:
            L, W = 2 * s + 2 * edge, s + 2 * edge
        else:
            L = W = s + 2 * edge
        depth = rng.choice([900, 1050, 1200, 1500, 1800, 2100])
        col = rng.choice(["600x400", "500x500", "D600", "450", "750x600"])
        ned = rng.randint(8, 120) * 50
        phi = rng.choice([16, 20, 25, 32])
        if rng.random() < 0.5:
            bx = f"{rng.randint(6, 24)}H{phi}"
            by = f"{rng.randint(6, 24)}H{phi}"
        else:
            bx = f"H{phi}@{rng.choice([125, 150, 200])} B1"
            by = f"H{phi}@{rng.choice([125, 150, 200])} B2"
        rows.append({
            "mark": f"PC{i + 1}" + ("A" if i % 17 == 16 else ""),
            "piles": str(piles),
            "pile_dia": str(dia),
            "spacing": str(s),
            "L": str(L),
            "W": str(W),
            "D": str(depth),
            "LWD": f"{L} x {W} x {depth}",
            "column": col,
            "ned": str(ned),
            "concrete": rng.choice(["C32/40", "C40/50", "C30/37"]),
            "cover": str(rng.choice([50, 60, 75])),
            "bars_x": bx,
            "bars_y": by,
            "embed": str(rng.choice([75, 100, 150])),
            "colour": rng.choice(["red", "blue", "green"]),
        })
    return rows


def columns(kind: str = "standard") -> list[Column]:
    """Column sets: "standard" (one-line headings), "two" (a unit on a second line), "span"
    (``Cap size (mm)`` spanning L, W, D), "lwd" (one combined L x W x D cell), "touch" (a
    right-aligned number column immediately followed by a left-aligned text column), "wide"
    (all fields, for landscape pages), "unknown" (one heading no mapper knows)."""
    if kind == "standard":
        return [Column(["Mark"], "mark"), Column(["Piles"], "piles", "r"),
                Column(["Pile dia"], "pile_dia", "r"), Column(["Spacing"], "spacing", "r"),
                Column(["L"], "L", "r"), Column(["W"], "W", "r"), Column(["Depth"], "D", "r"),
                Column(["Column"], "column"), Column(["NEd kN"], "ned", "r"),
                Column(["Concrete"], "concrete"), Column(["Cover"], "cover", "r"),
                Column(["Bars X"], "bars_x"), Column(["Bars Y"], "bars_y")]
    if kind == "two":
        return [Column(["Mark", ""], "mark"), Column(["No. of", "piles"], "piles", "r"),
                Column(["Pile dia", "(mm)"], "pile_dia", "r"),
                Column(["Spacing", "(mm)"], "spacing", "r"),
                Column(["Length", "(mm)"], "L", "r"), Column(["Width", "(mm)"], "W", "r"),
                Column(["Depth", "(mm)"], "D", "r"), Column(["Column", "(mm)"], "column"),
                Column(["NEd", "(kN)"], "ned", "r"), Column(["Concrete", "class"], "concrete"),
                Column(["Cover", "(mm)"], "cover", "r"), Column(["Bottom bars", "X"], "bars_x"),
                Column(["Bottom bars", "Y"], "bars_y")]
    if kind == "span":
        cs = columns("standard")
        out = []
        for c in cs:
            if c.key in ("L", "W", "D"):
                out.append(Column(["Cap size (mm)", {"L": "L", "W": "W", "D": "D"}[c.key]],
                                  c.key, "r"))
            else:
                out.append(Column([c.lines[0], ""], c.key, c.align))
        return out
    if kind == "lwd":
        cs = [c for c in columns("standard") if c.key not in ("L", "W", "D")]
        cs.insert(4, Column(["L x W x D (mm)"], "LWD"))
        return cs
    if kind == "touch":
        return [Column(["Mark"], "mark"), Column(["Piles"], "piles", "r"),
                Column(["Pile dia"], "pile_dia", "r"), Column(["Depth"], "D", "r"),
                Column(["Column"], "column"), Column(["NEd kN"], "ned", "r"),
                Column(["Concrete"], "concrete"), Column(["Bars X"], "bars_x"),
                Column(["Cover"], "cover", "r")]
    if kind == "wide":
        cs = columns("standard")
        cs.insert(9, Column(["Embedment"], "embed", "r"))
        return cs
    if kind == "unknown":
        cs = columns("standard")
        cs.insert(8, Column(["Colour"], "colour"))
        return cs
    raise ValueError(kind)


@dataclass
class Expected:
    headings: list[str]
    rows: list[list[str]]
    pages: list[int]
    row_numbers: list[int]
    path: Path | None = None


# --------------------------------------------------------------------------------------------
# reportlab generator
# --------------------------------------------------------------------------------------------


@dataclass
class Spec:
    """How to draw a schedule with reportlab."""

    cols: str = "standard"
    n_rows: int = 12
    style: str = "grid"             # grid | none | hrules (top/mid/bottom) | rowrules |
                                    # gridbody (a grid round the data rows, heading outside)
    head_valign: str = "top"        # top | middle | bottom: headings with fewer lines
    head_rule: bool = False         # grid: a rule between heading lines 1 and 2 (two grid rows)
    cell_valign: str = "top"        # top | middle | bottom: cells beside a wrapped cell
    font_size: float = 7.0
    rows_per_page: int | None = None
    repeat_heading: bool = True
    head_align: str = "left"        # left | data (same alignment as the column's values)
    spacer_every: int = 0           # a blank spacer row after every k rows
    wrap: bool = False              # draw "H16@150 B1" over two lines in its cell
    title: bool = False             # title block above the table
    title_box: bool = False         # a ruled title box (label row + value row) above the table
    notes: bool = False             # notes below the table
    revision: str = ""              # "" | "ruled" | "plain": a revision box below
    page: str = "portrait"          # portrait | landscape | rotate (/Rotate 90) | sideways
    touch: bool = False             # the number / text pair of the "touch" set have no padding
    seed: int = 7
    overflow: bool = False          # draw the rows that do not fit past the page's bottom edge
                                    # (see _paginate) instead of breaking the page
    # struck rows: (row index, column indices or None for every cell); each cell's text gets a line
    # through the middle of its figures, as a spreadsheet program prints a struck-through font
    # (``Expected`` still lists every row: what the reader should skip is for the test to say)
    strike: tuple[tuple[int, tuple[int, ...] | None], ...] = ()
    strike_across: bool = False     # one line through the whole row instead (drawn by hand)
    underline: tuple[int, ...] = () # rows whose cells are underlined (no strike)


def _fit_font(spec: Spec, cols: list[Column], rows: list[dict], avail: float):
    from reportlab.pdfbase.pdfmetrics import stringWidth

    fs = spec.font_size
    while True:
        pad = 0.6 * fs
        widths = []
        for c in cols:
            w = max(stringWidth(x, "Helvetica", fs) for x in c.lines)
            for r in rows:
                v = r[c.key]
                parts = v.split(" ") if (spec.wrap and c.key.startswith("bars") and " " in v) \
                    else [v]
                w = max(w, max(stringWidth(p, "Helvetica", fs) for p in parts))
            widths.append(w + 2 * pad)
        if sum(widths) <= avail or fs <= 4:
            return fs, pad, widths
        fs -= 0.25


def _paginate(spec: Spec, heights: list[float], room: float, above: float, head_h: float,
              spacer_h: float, trailer: float) -> list[list[int]]:
    """Row indices per page, as a program that prints a table breaks it: a page takes rows while
    they fit in ``room`` (the page's height inside its margins) below the title block (``above``)
    and the heading and above the notes and revision box (``trailer``, drawn on every page), at most
    ``spec.rows_per_page``. Spacer rows (``spacer_h``) sit between the rows of a page only.

    With ``spec.overflow`` pages break at ``rows_per_page`` alone, so a long table is drawn past the
    page's bottom edge: the text is in the file but a viewer or printer does not show it (a drawing
    whose table runs off the sheet). The reader reads what is printed and names the rest in a note;
    ``Expected`` still lists every row (the tests of that case say what is printed). Before pages
    were broken here, that was what every long table without ``rows_per_page`` got: a limitation
    of this generator, which the property test of tests/test_pdf_ingest.py took for rows lost by
    the reader (it was the reader's fault only that it said nothing about them)."""
    n = len(heights)
    cap = spec.rows_per_page or max(n, 1)
    if spec.overflow:
        return [list(range(i, min(i + cap, n))) for i in range(0, n, cap)]
    pages: list[list[int]] = []
    cur: list[int] = []
    used = 0.0
    for i, h in enumerate(heights):
        spacer = spacer_h if cur and spec.spacer_every and len(cur) % spec.spacer_every == 0 else 0.0
        need = used + spacer + h + trailer
        if cur and (len(cur) >= cap or need > room):
            pages.append(cur)
            cur, spacer = [], 0.0
        if not cur:
            used = above + (head_h if not pages or spec.repeat_heading else 0.0)
        cur.append(i)
        used += spacer + h
    if cur:
        pages.append(cur)
    return pages


def reportlab_pdf(path, spec: Spec = Spec(), **canvas_kw) -> Expected:
    """Draw the schedule described by ``spec`` to ``path``; return what should be read.

    ``canvas_kw`` go to reportlab's Canvas (e.g. ``encrypt=``)."""
    from reportlab.lib.pagesizes import A4, landscape
    from reportlab.pdfgen import canvas

    path = Path(path)
    cols = columns(spec.cols)
    data = _cap_rows(spec.n_rows, spec.seed)
    portrait_w, portrait_h = A4
    if spec.page == "portrait":
        pagesize = A4
        W, H = A4
    elif spec.page == "landscape":
        pagesize = landscape(A4)
        W, H = pagesize
    else:                                       # rotate / sideways: portrait media box
        pagesize = A4
        W, H = portrait_h, portrait_w           # drawing area as seen upright (landscape)
    margin = 28.0
    fs, pad, widths = _fit_font(spec, cols, data, W - 2 * margin)
    if spec.touch:
        # the Depth (right-aligned) and Column (left-aligned) values meet on one line, no gap
        k = [c.key for c in cols].index("D")
    lead = 1.2 * fs
    nlines_head = max(len(c.lines) for c in cols)
    head_h = nlines_head * lead + 2 * pad
    xs = [margin]
    for w in widths:
        xs.append(xs[-1] + w)

    c = canvas.Canvas(str(path), pagesize=pagesize, **canvas_kw)
    c.setTitle("Pile cap schedule (test)")
    c.setAuthor(FIRM)

    def begin_page():
        if spec.page in ("rotate", "sideways"):
            if spec.page == "rotate":
                c.setPageRotation(90)
            c.transform(0, 1, -1, 0, portrait_w, 0)

    def text(x, y, s, align="l", size=None):
        c.setFont("Helvetica", size or fs)
        if align == "r":
            c.drawRightString(x, y, s)
        else:
            c.drawString(x, y, s)

    def cell_lines(col: Column, value: str) -> list[str]:
        if spec.wrap and col.key.startswith("bars") and " " in value:
            return value.split(" ")
        return [value]

    def draw_title(y):
        text(margin, y - 14, "PILE CAP SCHEDULE", size=13)
        text(margin, y - 30, PROJECT, size=9)
        text(margin, y - 42, f"Drawing S-201   Revision C   Scale NTS   {FIRM}", size=8)
        return y - 62

    def draw_title_box(y):
        labels = [["Job no", "Drawing no", "Sheet no", "Scale", "Revision"],
                  ["J-0417", "S-201", f"{pno} of {len(chunks)}", "NTS", "C"],
                  ["Project", PROJECT, "", "Client", "Fictitious Holdings"]]
        bw = [70, 150, 70, 70, 120]
        bx = [margin]
        for w in bw:
            bx.append(bx[-1] + w)
        rh = 13.0
        for r, vals in enumerate(labels):
            for k2, v in enumerate(vals):
                text(bx[k2] + 3, y - r * rh - 9.5, v, size=7.5)
        c.setLineWidth(0.5)
        for r in range(len(labels) + 1):
            c.line(bx[0], y - r * rh, bx[-1], y - r * rh)
        for x in bx:
            c.line(x, y, x, y - len(labels) * rh)
        return y - len(labels) * rh - 16

    def draw_notes(y):
        y -= 2 * lead
        text(margin, y, "NOTES", size=fs + 1)
        y -= lead * 1.3
        for s in ["1. All dimensions are in millimetres unless noted otherwise; loads are ULS.",
                  "2. Cover is measured to the lowest bars. Bars to BS 8666. See the general "
                  "arrangement for cap positions."]:
            text(margin, y, s)
            y -= lead * 1.3
        return y

    def draw_revision(y):
        y -= 2 * lead
        rw = [28, 60, 170, 30]
        rx = [margin]
        for w in rw:
            rx.append(rx[-1] + w)
        rows_rev = [["Rev", "Date", "Description", "By"], ["A", "2025-01-10", "First issue", "QX"],
                    ["B", "2025-02-21", "Caps PC4 to PC6 revised", "QX"]]
        rh = lead + 2 * pad
        top = y
        for r, vals in enumerate(rows_rev):
            for k2, v in enumerate(vals):
                text(rx[k2] + pad, top - r * rh - pad - 0.8 * fs, v)
        if spec.revision == "ruled":
            c.setLineWidth(0.5)
            for r in range(len(rows_rev) + 1):
                c.line(rx[0], top - r * rh, rx[-1], top - r * rh)
            for x in rx:
                c.line(x, top, x, top - len(rows_rev) * rh)
        return top - len(rows_rev) * rh

    def shift(n_lines: int, n_max: int, how: str) -> float:
        free = (n_max - n_lines) * lead
        return {"top": 0.0, "middle": free / 2.0, "bottom": free}[how]

    def draw_heading(top):
        span_keys = [cc.key for cc in cols if cc.lines[0].startswith("Cap size")]
        for k2, col in enumerate(cols):
            filled = [x for x in col.lines if x]
            off = 0.0 if len(filled) != 1 or span_keys else shift(1, nlines_head,
                                                                   spec.head_valign)
            for li, s in enumerate(col.lines):
                if not s:
                    continue
                y = top - pad - 0.8 * fs - li * lead - off
                if li == 0 and s.startswith("Cap size"):
                    if col.key != span_keys[0]:
                        continue
                    # one heading centred over the columns it spans, as a merged cell shows it
                    j1 = k2 + len(span_keys)
                    c.setFont("Helvetica", fs)
                    c.drawCentredString((xs[k2] + xs[j1]) / 2.0, y, s)
                    continue
                if spec.head_align == "data" and col.align == "r":
                    text(xs[k2 + 1] - pad, y, s, "r")
                elif spec.touch and k2 == k + 1:
                    text(xs[k2], y, s)
                else:
                    text(xs[k2] + pad, y, s)
        return top - head_h

    struck = dict(spec.strike)

    def mark_line(x0, x1, y, row_no, k2):
        """A strike line through the figures, or an underline, under the text drawn at y."""
        if row_no in struck and not spec.strike_across and \
                (struck[row_no] is None or k2 in (struck[row_no] or ())):
            c.setLineWidth(0.5)
            c.line(x0, y + 0.28 * fs, x1, y + 0.28 * fs)
        if row_no in spec.underline:
            c.setLineWidth(0.5)
            c.line(x0, y - 0.12 * fs, x1, y - 0.12 * fs)

    def draw_row(top, values, nl, row_no=-1):
        from reportlab.pdfbase.pdfmetrics import stringWidth

        for k2, col in enumerate(cols):
            parts = cell_lines(col, values[col.key])
            off = shift(len(parts), nl, spec.cell_valign)
            for li, s in enumerate(parts):
                y = top - pad - 0.8 * fs - li * lead - off
                w = stringWidth(s, "Helvetica", fs)
                if spec.touch and k2 == k:
                    text(xs[k2 + 1], y, s, "r")
                    x0 = xs[k2 + 1] - w
                elif spec.touch and k2 == k + 1:
                    text(xs[k2], y, s)
                    x0 = xs[k2]
                elif col.align == "r":
                    text(xs[k2 + 1] - pad, y, s, "r")
                    x0 = xs[k2 + 1] - pad - w
                else:
                    text(xs[k2] + pad, y, s)
                    x0 = xs[k2] + pad
                mark_line(x0, x0 + w, y, row_no, k2)
        if row_no in struck and spec.strike_across:
            c.setLineWidth(0.5)
            y = top - pad - 0.8 * fs + 0.28 * fs
            c.line(xs[0], y, xs[-1], y)         # from border to border
        return top - (nl * lead + 2 * pad)

    def rules(top, bottoms, head_bottom, table_bottom):
        c.setLineWidth(0.5)
        if spec.style == "grid":
            span = [k2 for k2, cc in enumerate(cols) if cc.lines[0].startswith("Cap size")]
            for k2, x in enumerate(xs):
                inner_span = span and span[0] < k2 <= span[-1]
                if inner_span:      # no rule between the spanned columns in heading line 1
                    c.line(x, top - pad - lead - 0.2 * pad, x, table_bottom)
                else:
                    c.line(x, top, x, table_bottom)
            c.line(xs[0], top, xs[-1], top)
            if spec.head_rule:      # the unit line of the heading as a grid row of its own
                c.line(xs[0], top - pad - lead - 0.2 * pad, xs[-1], top - pad - lead - 0.2 * pad)
            if span:                # rule under the spanning heading only
                c.line(xs[span[0]], top - pad - lead - 0.2 * pad,
                       xs[span[-1] + 1], top - pad - lead - 0.2 * pad)
            for y in bottoms:
                c.line(xs[0], y, xs[-1], y)
        elif spec.style == "gridbody":
            for x in xs:
                c.line(x, head_bottom, x, table_bottom)
            for y in bottoms:
                c.line(xs[0], y, xs[-1], y)
        elif spec.style in ("hrules", "rowrules"):
            c.line(xs[0], top, xs[-1], top)
            c.line(xs[0], head_bottom, xs[-1], head_bottom)
            if spec.style == "rowrules":
                for y in bottoms:
                    c.line(xs[0], y, xs[-1], y)
            else:
                c.line(xs[0], table_bottom, xs[-1], table_bottom)

    # split rows over pages (spacer rows are drawn, not counted)
    heights = [max(len(cell_lines(cc, row[cc.key])) for cc in cols) * lead + 2 * pad
               for row in data]
    trailer = ((2 + 3 * 1.3) * lead if spec.notes else 0.0) + \
        ((2 * lead + 3 * (lead + 2 * pad)) if spec.revision else 0.0)
    above = (62.0 if spec.title else 0.0) + (3 * 13.0 + 16.0 if spec.title_box else 0.0)
    chunks = [[data[i] for i in page] for page in
              _paginate(spec, heights, H - 2 * margin, above, head_h, lead + 2 * pad, trailer)]
    exp_rows, exp_pages, exp_nums = [], [], []
    for pno, chunk in enumerate(chunks, start=1):
        begin_page()
        y = H - margin
        if spec.title:
            y = draw_title(y)
        if spec.title_box:
            y = draw_title_box(y)
        top = y
        if pno == 1 or spec.repeat_heading:
            y = draw_heading(y)
        head_bottom = y
        bottoms = [y]
        for i, row in enumerate(chunk):
            nl = max(len(cell_lines(cc, row[cc.key])) for cc in cols)
            y = draw_row(y, row, nl, len(exp_rows))
            bottoms.append(y)
            exp_rows.append([row[cc.key] for cc in cols])
            exp_pages.append(pno)
            exp_nums.append(i + 1)
            if spec.spacer_every and (i + 1) % spec.spacer_every == 0 and i + 1 < len(chunk):
                y -= lead + 2 * pad
                bottoms.append(y)
        rules(top, bottoms, head_bottom, y)
        if spec.notes:
            y = draw_notes(y)
        if spec.revision:
            y = draw_revision(y)
        c.showPage()
    c.save()
    return Expected(headings=[cc.heading for cc in cols], rows=exp_rows, pages=exp_pages,
                    row_numbers=exp_nums, path=path)


# --------------------------------------------------------------------------------------------
# LibreOffice generator
# --------------------------------------------------------------------------------------------


def soffice() -> str | None:
    """Path of the LibreOffice binary, or None."""
    return shutil.which("soffice") or shutil.which("libreoffice")


@dataclass
class XlsxSpec:
    cols: str = "standard"
    n_rows: int = 14
    borders: bool = True
    title: bool = True
    notes: bool = True
    two_line_heading: bool = False    # heading cells wrapped over two lines (Alt+Enter)
    repeat_heading: bool = True       # print titles: heading row repeated on every page
    seed: int = 11
    strike_rows: tuple[int, ...] = () # rows (indices into the caps) whose font is struck through


def write_xlsx(path, spec: XlsxSpec) -> Expected:
    """The schedule as an XLSX laid out for printing; returns what its PDF should read as."""
    import openpyxl
    from openpyxl.styles import Alignment, Border, Font, Side
    from openpyxl.utils import get_column_letter

    cols = columns("two" if spec.two_line_heading else spec.cols)
    data = _cap_rows(spec.n_rows, spec.seed)
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Schedule"
    r = 1
    if spec.title:
        ws.cell(r, 1, "PILE CAP SCHEDULE").font = Font(size=14, bold=True)
        r += 1
        ws.cell(r, 1, PROJECT)
        r += 2
    head_row = r
    thin = Side(style="thin")
    border = Border(left=thin, right=thin, top=thin, bottom=thin)
    for k, col in enumerate(cols, start=1):
        cell = ws.cell(r, k, "\n".join(x for x in col.lines if x) if spec.two_line_heading
                       else col.heading)
        cell.alignment = Alignment(wrap_text=True, vertical="top")
        cell.font = Font(bold=True)
        if spec.borders:
            cell.border = border
    if spec.two_line_heading:
        ws.row_dimensions[r].height = 30
    r += 1
    for i, row in enumerate(data):
        for k, col in enumerate(cols, start=1):
            v = row[col.key]
            cell = ws.cell(r, k, int(v) if col.align == "r" else v)
            if spec.borders:
                cell.border = border
            if i in spec.strike_rows:
                cell.font = Font(strike=True)
        r += 1
    if spec.notes:
        r += 1
        ws.cell(r, 1, "Notes: all dimensions in millimetres; loads are ULS; "
                      "cover to the lowest bars.")
    for k, col in enumerate(cols, start=1):
        longest = max([len(x) for x in col.lines] + [len(rw[col.key]) for rw in data])
        ws.column_dimensions[get_column_letter(k)].width = max(5.0, longest * 1.25 + 2)
    ws.page_setup.orientation = "landscape"
    ws.page_setup.paperSize = ws.PAPERSIZE_A4
    ws.sheet_properties.pageSetUpPr.fitToPage = True
    ws.page_setup.fitToWidth = 1
    ws.page_setup.fitToHeight = 0
    if spec.repeat_heading:
        ws.print_title_rows = f"{head_row}:{head_row}"
    wb.save(path)
    return Expected(headings=[c.heading for c in cols],
                    rows=[[rw[c.key] for c in cols] for rw in data], pages=[], row_numbers=[],
                    path=Path(path))


def convert_with_soffice(xlsx_paths: list[Path], outdir: Path, timeout: float = 120) -> None:
    """Convert XLSX files to PDF in one LibreOffice run with a private user profile (so that
    parallel runs do not share one)."""
    exe = soffice()
    if exe is None:
        raise RuntimeError("LibreOffice (soffice) is not on PATH")
    profile = Path(tempfile.mkdtemp(prefix="capcheck-lo-"))
    try:
        cmd = [exe, f"-env:UserInstallation={profile.as_uri()}", "--headless", "--norestore",
               "--convert-to", "pdf", "--outdir", str(outdir), *map(str, xlsx_paths)]
        subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                       timeout=timeout, env={**os.environ, "HOME": str(profile)})
    finally:
        shutil.rmtree(profile, ignore_errors=True)


# --------------------------------------------------------------------------------------------
# Bad documents
# --------------------------------------------------------------------------------------------


def image_only_pdf(path) -> Path:
    """A 'scan': one page holding only a picture of a table, no text layer."""
    from PIL import Image, ImageDraw
    from reportlab.lib.pagesizes import A4
    from reportlab.lib.utils import ImageReader
    from reportlab.pdfgen import canvas

    img = Image.new("L", (800, 400), 255)
    d = ImageDraw.Draw(img)
    for y in range(20, 400, 40):
        d.line([(20, y), (780, y)], fill=0, width=2)
    for x in range(20, 800, 95):
        d.line([(x, 20), (x, 380)], fill=0, width=2)
    for y in range(30, 380, 40):           # "text" as dots, as a scan would show it
        for x in range(30, 780, 95):
            d.rectangle([x, y, x + 40, y + 12], fill=90)
    c = canvas.Canvas(str(path), pagesize=A4)
    c.drawImage(ImageReader(img), 40, 400, width=500, height=250)
    c.showPage()
    c.save()
    return Path(path)


def encrypted_pdf(path, user_password: str = "s3cret") -> Path:
    """A schedule PDF that needs a password to open (reportlab's standard encryption, 128 bit)."""
    from reportlab.lib import pdfencrypt

    enc = pdfencrypt.StandardEncryption(user_password, "owner-" + user_password, strength=128)
    reportlab_pdf(path, Spec(n_rows=4), encrypt=enc)
    return Path(path)


def owner_only_encrypted_pdf(path) -> Expected:
    """Encrypted with an owner password only: opens without a password, reads normally."""
    from reportlab.lib import pdfencrypt

    enc = pdfencrypt.StandardEncryption("", "owner-only", canCopy=0, canModify=0)
    return reportlab_pdf(path, Spec(n_rows=5), encrypt=enc)


def truncated_pdf(path, fraction: float = 0.5) -> Path:
    full = Path(path).with_suffix(".full.pdf")
    reportlab_pdf(full, Spec(n_rows=30, rows_per_page=10))
    data = full.read_bytes()
    Path(path).write_bytes(data[: int(len(data) * fraction)])
    full.unlink()
    return Path(path)


def no_table_pdf(path) -> Path:
    """Text only: a covering letter, no table."""
    from reportlab.lib.pagesizes import A4
    from reportlab.pdfgen import canvas

    c = canvas.Canvas(str(path), pagesize=A4)
    y = 780
    for s in [FIRM, PROJECT, "", "Dear checker,",
              "Please find the pile cap schedule attached separately. The caps carry the",
              "column loads given on the general arrangement; concrete is C32/40 throughout.",
              "", "Yours faithfully,", "A. Designer (fictitious)"]:
        c.drawString(60, y, s)
        y -= 16
    c.showPage()
    c.save()
    return Path(path)


def unrecognised_headings_pdf(path) -> Path:
    """A table whose headings mean nothing to a schedule reader."""
    from reportlab.lib.pagesizes import A4
    from reportlab.pdfgen import canvas

    c = canvas.Canvas(str(path), pagesize=A4)
    y = 780
    for row in [["Item", "Quantity", "Supplier", "Price"], ["Bolts", "400", "Acme", "12.50"],
                ["Plates", "32", "Acme", "80.00"]]:
        for k, v in enumerate(row):
            c.drawString(40 + 90 * k, y, v)
        y -= 14
    c.showPage()
    c.save()
    return Path(path)


def mixed_pages_pdf(path) -> Expected:
    """Page 1 a covering note, page 2 the schedule (unruled, with a title block), page 3 a
    scanned image."""
    from reportlab.lib.pagesizes import A4
    from reportlab.pdfgen import canvas as rl

    base = Path(path)
    cover, sched, img = (base.with_suffix(f".{k}.pdf") for k in ("cover", "sched", "img"))
    c = rl.Canvas(str(cover), pagesize=A4)
    c.drawString(60, 780, "Covering note: the schedule follows on the next page.")
    c.showPage()
    c.save()
    exp = reportlab_pdf(sched, Spec(style="none", n_rows=6, title=True))
    image_only_pdf(img)
    _concat([cover, sched, img], base)
    for p in (cover, sched, img):
        p.unlink()
    return replace(exp, pages=[2] * len(exp.rows), path=base)


def _concat(parts: list[Path], out: Path) -> None:
    """Join PDFs page by page (via pypdfium2, which pdfplumber brings along)."""
    import pypdfium2 as pdfium

    dest = pdfium.PdfDocument.new()
    srcs = []
    for p in parts:
        src = pdfium.PdfDocument(str(p))
        dest.import_pages(src)
        srcs.append(src)
    dest.save(str(out))
    for d in srcs:
        d.close()
    dest.close()


# --------------------------------------------------------------------------------------------
# The reportlab cases the tests run
# --------------------------------------------------------------------------------------------

REPORTLAB_CASES: dict[str, Spec] = {
    "ruled": Spec(style="grid"),
    "unruled": Spec(style="none"),
    "unruled_heading_aligned_with_data": Spec(style="none", head_align="data"),
    "hrules_only": Spec(style="hrules"),
    "rule_under_every_row": Spec(style="rowrules"),
    "multipage_ruled_repeated": Spec(style="grid", n_rows=40, rows_per_page=15),
    "multipage_ruled_not_repeated": Spec(style="grid", n_rows=40, rows_per_page=15,
                                         repeat_heading=False),
    "multipage_unruled_repeated": Spec(style="none", n_rows=40, rows_per_page=15),
    "multipage_unruled_not_repeated": Spec(style="none", n_rows=40, rows_per_page=15,
                                           repeat_heading=False, title=True),
    "two_line_headings_ruled": Spec(style="grid", cols="two"),
    "two_line_headings_unruled": Spec(style="none", cols="two"),
    "two_heading_grid_rows_ruled": Spec(style="grid", cols="two", head_rule=True),
    "spanning_heading_ruled": Spec(style="grid", cols="span"),
    "spanning_heading_unruled": Spec(style="none", cols="span"),
    "combined_lxwxd_ruled": Spec(style="grid", cols="lwd"),
    "combined_lxwxd_unruled": Spec(style="none", cols="lwd"),
    "touching_cells": Spec(style="none", cols="touch", touch=True, n_rows=16),
    "spacer_rows_ruled": Spec(style="grid", spacer_every=3),
    "spacer_rows_unruled": Spec(style="none", spacer_every=3),
    "wrapped_cells_ruled": Spec(style="grid", wrap=True),
    "wrapped_cells_unruled": Spec(style="none", wrap=True),
    "title_notes_revision_unruled": Spec(style="none", title=True, notes=True,
                                         revision="plain"),
    "title_notes_ruled_revision_unruled_table": Spec(style="none", title=True, notes=True,
                                                     revision="ruled"),
    "title_notes_revision_ruled": Spec(style="grid", title=True, notes=True, revision="ruled"),
    "title_notes_hrules": Spec(style="hrules", title=True, notes=True, revision="plain"),
    "title_box_ruled": Spec(style="grid", title_box=True, revision="ruled", n_rows=30,
                            rows_per_page=15, repeat_heading=False),
    "title_box_unruled": Spec(style="none", title_box=True, notes=True, revision="ruled",
                              n_rows=30, rows_per_page=15, repeat_heading=False),
    "landscape_wide": Spec(style="grid", cols="wide", page="landscape", font_size=8),
    "landscape_unruled": Spec(style="none", cols="wide", page="landscape", font_size=8),
    "landscape_rotate_entry": Spec(style="grid", cols="wide", page="rotate", font_size=8),
    "sideways_unruled": Spec(style="none", cols="wide", page="sideways", font_size=8),
    "sideways_ruled": Spec(style="grid", cols="wide", page="sideways", font_size=8),
    "unknown_heading": Spec(style="none", cols="unknown"),
    "grid_round_the_body_only": Spec(style="gridbody", title=True, notes=True),
    "grid_round_the_body_two_line_headings": Spec(style="gridbody", cols="two", n_rows=30,
                                                  rows_per_page=15),
    "headings_middle_aligned_unruled": Spec(style="none", cols="two", head_valign="middle"),
    "headings_bottom_aligned_unruled": Spec(style="none", cols="two", head_valign="bottom"),
    "headings_middle_aligned_ruled": Spec(style="grid", cols="two", head_valign="middle"),
    "wrapped_cells_bottom_aligned_unruled": Spec(style="none", wrap=True, cell_valign="bottom"),
    "wrapped_cells_middle_aligned_unruled": Spec(style="none", wrap=True, cell_valign="middle"),
    "wrapped_cells_bottom_aligned_ruled": Spec(style="grid", wrap=True, cell_valign="bottom"),
}

XLSX_CASES: dict[str, XlsxSpec] = {
    "lo_borders": XlsxSpec(borders=True),
    "lo_no_borders": XlsxSpec(borders=False),
    "lo_two_line_heading_no_borders": XlsxSpec(borders=False, two_line_heading=True),
    "lo_two_line_heading_borders": XlsxSpec(borders=True, two_line_heading=True),
    "lo_multipage_repeated_no_borders": XlsxSpec(borders=False, n_rows=90, title=False,
                                                 notes=False),
    "lo_multipage_not_repeated_borders": XlsxSpec(borders=True, n_rows=90, title=False,
                                                  notes=False, repeat_heading=False),
}
