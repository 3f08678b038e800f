"""Schedule tables drawn as a ruled grid, read with pdfplumber's lines strategy.

pdfplumber recovers ruled cells exactly (libraries.md); what is added here is finding the
schedule among the page's grids (title blocks and revision boxes are grids too), joining a
heading over two or three grid rows (spanned cells come back as ``None``), dropping spacer and
notes rows, reading a grid without a heading row as the continuation of the table before it, and
reading a row whose cells under a group of columns are drawn as one cell over divided ones (grid
rows inside the band of one row) as one row (see ``_divided_row``).

A row or cell struck through (a line through the middle of its text) is found as the unruled reader
finds it (``pdf_text.strike_lines``), and one line drawn through a whole row too. The strike lines are
taken out of the page before pdfplumber looks for the grid, so that a strike is never a grid rule
splitting its row; each row says how many of its filled cells are struck (``PageTable.struck``), and
``pdf._sort_rows`` skips a row struck in every filled cell as deleted.
"""

from __future__ import annotations

import bisect
from dataclasses import dataclass, field
from typing import Callable

from checker.ingest.pdf_model import Layout, PageTable
from checker.ingest.pdf_text import (
    STRUCK_SHARE,
    Glyph,
    PageContent,
    build_lines,
    glyphs_from_chars,
    is_stop_text,
    looks_like_value,
    min_cells,
    normalise_cell,
    quote_texts,
    strike_lines,
)

_MAX_HEADING_SEARCH = 6     # a heading row is looked for among a grid's first rows only

#: a strike line lies inside a grid row, away from its top and bottom rules: a horizontal segment
#: closer than this to another rule over the same columns is part of that rule (a doubled or thick
#: border; pdfplumber's table finder joins segments this close, its snap tolerance), not a strike
STRIKE_BORDER_GAP = 3.0
#: a horizontal segment whose end meets another at the same height (within this distance) continues
#: it: a rule drawn cell by cell (a spreadsheet program draws each cell's border), not a strike, which
#: runs through a cell's text and stops short of the next cell's (the cells' padding lies between)
STRIKE_JOIN = 1.0
#: segments of the page and of pdfplumber's objects are the same line when their ends and heights
#: agree this closely (both come from the same pdfminer object; this absorbs rounding only)
_SAME_SEG = 0.5


@dataclass
class _Strikes:
    """The strike lines of a page and its glyphs (struck ones marked), sorted by their middles."""
    segs: list[tuple[float, float, float]] = field(default_factory=list)
    glyphs: list[Glyph] = field(default_factory=list)
    mids: list[float] = field(default_factory=list)


def _page_strikes(content: PageContent | None) -> _Strikes | None:
    """The strike lines through the page's text (None when there are none): found as in unruled
    tables, plus one line through a whole row; never a rule within ``STRIKE_BORDER_GAP`` of another
    rule (a border drawn twice) or continuing another segment (``STRIKE_JOIN``: a cell border)."""
    if content is None or not _may_strike(content):
        return None
    glyphs = glyphs_from_chars(content.chars)
    lines, _ = build_lines(glyphs)
    strikes, kept = strike_lines(lines, content.hsegs, across=True)
    out = _Strikes()
    for seg, hit in strikes:
        x0, x1, y = seg
        if any(abs(k[2] - y) < STRIKE_BORDER_GAP and k[0] < x1 and k[1] > x0 for k in kept) \
                or _continued(seg, content.hsegs):
            continue
        out.segs.append(seg)
        for g in hit:
            g.struck = True
    if not out.segs:
        return None
    out.glyphs = sorted((g for g in glyphs if g.text.strip()), key=lambda g: g.mid_y)
    out.mids = [g.mid_y for g in out.glyphs]
    return out


def _continued(seg: tuple[float, float, float], hsegs: list[tuple[float, float, float]]) -> bool:
    """Whether another horizontal segment at the same height meets an end of ``seg``."""
    x0, x1, y = seg
    return any(abs(o[2] - y) < _SAME_SEG and o is not seg
               and (abs(o[1] - x0) <= STRIKE_JOIN or abs(o[0] - x1) <= STRIKE_JOIN) for o in hsegs)


def _may_strike(content: PageContent) -> bool:
    """Whether a horizontal rule of the page passes through a glyph's box at all (a grid's rules run
    between the rows): a cheap test before the page's text lines are built to look for strikes."""
    if not content.hsegs or not content.ltchars:
        return False
    off, mb_x0 = content.off, content.mb_x0
    boxes = sorted((off - c.y1, off - c.y0, c.x0 + mb_x0, c.x1 + mb_x0) for c in content.ltchars)
    tops = [b[0] for b in boxes]
    tallest = max(b[1] - b[0] for b in boxes)
    for x0, x1, y in content.hsegs:
        k = bisect.bisect_left(tops, y - tallest)
        while k < len(boxes) and boxes[k][0] < y:
            top, bottom, gx0, gx1 = boxes[k]
            k += 1
            if y < bottom and gx1 > x0 and gx0 < x1:
                return True
    return False


def _without_strikes(page, strikes: _Strikes):
    """The page without its strike lines (a pdfplumber FilteredPage), for the table finder."""
    segs = strikes.segs

    def keep(obj) -> bool:
        if obj.get("object_type") not in ("line", "rect", "curve"):
            return True
        mid = (obj["top"] + obj["bottom"]) / 2.0
        return not any(abs(obj["x0"] - x0) < _SAME_SEG and abs(obj["x1"] - x1) < _SAME_SEG
                       and abs(mid - y) < _SAME_SEG for x0, x1, y in segs)

    return page.filter(keep)


def _row_struck(grid_rows, r: int, subs: list[int], raw: list, cols: list[tuple[float, float]],
                strikes: _Strikes) -> tuple[int, int]:
    """(cells struck through, cells filled) of the row read from grid row ``r`` (and the grid rows
    ``subs`` taken into it). A filled cell is one with text of its own in this row (a cell merged
    down from the row above is not); it is struck when strike lines cross ``STRUCK_SHARE`` of its
    glyphs, as in unruled tables."""
    top = grid_rows[r].bbox[1]
    bottom = max(grid_rows[k].bbox[3] for k in [r, *subs])
    cells = grid_rows[r].cells
    lo, hi = bisect.bisect_left(strikes.mids, top), bisect.bisect_right(strikes.mids, bottom)
    band = strikes.glyphs[lo:hi]
    n_struck = n_filled = 0
    for c, value in enumerate(raw):
        if value is None or not normalise_cell(value):
            continue
        n_filled += 1
        bb = cells[c] if c < len(cells) and not subs else None
        x0, x1 = (bb[0], bb[2]) if bb is not None else cols[c]
        inside = [g for g in band if x0 <= (g.x0 + g.x1) / 2.0 < x1]
        if inside and sum(1 for g in inside if g.struck) >= STRUCK_SHARE * len(inside):
            n_struck += 1
    return n_struck, n_filled


def _columns(table) -> list[tuple[float, float]]:
    """x-extent of each grid column."""
    rows = table.rows
    ncols = max((len(r.cells) for r in rows), default=0)
    x0s: list[float | None] = [None] * ncols
    for r in rows:
        for c, bb in enumerate(r.cells):
            if bb is not None and x0s[c] is None:
                x0s[c] = bb[0]
    right = table.bbox[2]
    out: list[tuple[float, float]] = []
    for c in range(ncols):
        xc = x0s[c]
        x0 = xc if xc is not None else (out[-1][1] if out else table.bbox[0])
        nxt = next((x for x in x0s[c + 1:] if x is not None), right)
        out.append((x0, nxt))
    return out


def _is_heading_row(texts: list[str], is_heading: Callable[[str], bool]) -> bool:
    filled = [t for t in texts if t]
    if len(filled) < 3 or any(looks_like_value(t) for t in filled):
        return False
    return sum(1 for t in filled if is_heading(t)) >= 3


def _spanned_from_left(table, data, r: int, c: int, cols) -> str | None:
    """Text of the cell in row r that spans over column c from the left, if any."""
    cells = table.rows[r].cells
    mid = (cols[c][0] + cols[c][1]) / 2.0
    for cc in range(c - 1, -1, -1):
        bb = cells[cc] if cc < len(cells) else None
        if bb is not None:
            return data[r][cc] if bb[2] > mid else None
    return None


def _spanned_from_above(table, data, r: int, c: int) -> str | None:
    """Text of the cell that spans down over row r in column c, if any."""
    top = table.rows[r].bbox[1]
    bottom = table.rows[r].bbox[3]
    mid = (top + bottom) / 2.0
    for rr in range(r - 1, -1, -1):
        cells = table.rows[rr].cells
        bb = cells[c] if c < len(cells) else None
        if bb is not None:
            return data[rr][c] if bb[3] > mid else None
    return None


def _divided_row(table, rows, data, r: int, cols) -> tuple[list[str | None], list[int]] | None:
    """Row r read together with the grid rows inside its band that divide its cells spanning
    several columns: (raw cells of the row, the grid rows taken into it), or None.

    Where rules cross a row only part of its height (the rule under a spanned group heading
    and the rules between the group's sub-columns, drawn again on a continuation page that has
    no heading, so that they fall inside its first row), pdfplumber returns the row as two
    grid rows: above, one cell spanning the group's columns; below, the group's columns
    divided, with the row's other cells spanning down over it. Both are the same row: the text
    of the spanning cell is cut at the column edges that the grid row below shows, and each
    column's pieces are joined top to bottom. None when row r has no such grid rows below it,
    when one of them holds a cell outside a spanning cell of row r (a separate row under a cell
    merged down), or when a glyph of the spanning cell straddles a column edge (text that runs
    across the columns: a merged cell indeed). ``rows`` is ``table.rows`` (pdfplumber works it
    out anew on every access).
    """
    if r + 1 >= len(rows):
        return None
    cells = rows[r].cells
    ncols = len(cols)
    bottom = rows[r].bbox[3]
    subs: list[int] = []
    for rr in range(r + 1, len(rows)):
        if rows[rr].bbox[1] >= bottom - 0.5:
            break
        subs.append(rr)
    if not subs:
        return None
    groups: list[tuple[int, int]] = []          # (first, last column) of each spanning cell
    for c0 in range(min(ncols, len(cells))):
        bb = cells[c0]
        if bb is None:
            continue
        c1 = c0
        while (c1 + 1 < ncols and (c1 + 1 >= len(cells) or cells[c1 + 1] is None)
               and (cols[c1 + 1][0] + cols[c1 + 1][1]) / 2.0 < bb[2]):
            c1 += 1
        if c1 > c0:
            groups.append((c0, c1))
    group_of = {c: g for g in groups for c in range(g[0], g[1] + 1)}
    for rr in subs:
        for c, bb in enumerate(rows[rr].cells[:ncols]):
            if bb is None:
                continue
            if c not in group_of or bb[1] < cells[group_of[c][0]][3] - 0.5:
                return None
    raw: list[str | None] = list(data[r])
    page_chars = None
    for c0, c1 in groups:
        cuts = [c for c in range(c0 + 1, c1 + 1)
                if any(c < len(rows[rr].cells) and rows[rr].cells[c] is not None for rr in subs)]
        pieces: dict[int, list[str]] = {c: [] for c in [c0, *cuts]}
        if cuts and normalise_cell(data[r][c0]):
            bb = cells[c0]
            if page_chars is None:
                page_chars = table.page.chars
            chars = [ch for ch in page_chars         # as pdfplumber's Table.extract takes them
                     if bb[0] <= (ch["x0"] + ch["x1"]) / 2.0 < bb[2]
                     and bb[1] <= (ch["top"] + ch["bottom"]) / 2.0 < bb[3]]
            edges = [cols[c][0] for c in cuts]
            if any(ch["x0"] < e - 0.5 and ch["x1"] > e + 0.5 and ch["text"].strip()
                   for ch in chars for e in edges):
                return None
            from pdfplumber.utils import extract_text

            bounds = [bb[0], *edges, bb[2]]
            for k, c in enumerate([c0, *cuts]):
                part = [ch for ch in chars if bounds[k] <= (ch["x0"] + ch["x1"]) / 2.0
                        < bounds[k + 1]]
                if part:
                    pieces[c].append(extract_text(part))
        elif data[r][c0]:
            pieces[c0].append(data[r][c0])
        for rr in subs:
            for c in pieces:
                if data[rr][c]:
                    pieces[c].append(data[rr][c])
        for c in range(c0, c1 + 1):
            raw[c] = " ".join(pieces[c]) if c in pieces else None
    return raw, subs


def _passed_over(texts: list[list[str]], r: int, page_no: int, notes: list[str]) -> None:
    """A note for the grid rows below row ``r`` (a notes or revision text inside the grid, where
    the table ends) that still look like rows of the table (``min_cells`` of them filled)."""
    ncols = len(texts[r])
    below = [row for row in texts[r + 1:] if sum(1 for x in row if x) >= min_cells(ncols)]
    if below:
        quoted = quote_texts(["  ".join(x for x in row if x) for row in below], "row")
        notes.append(f"page {page_no}: the table ends at {next(x for x in texts[r] if x)!r} (notes "
                     f"or revision text inside the grid); {len(below)} row(s) below it that fit its "
                     f"columns were not read: {quoted}")


def find_ruled_tables(page, page_no: int, is_heading: Callable[[str], bool],
                      prev: Layout | None, content: PageContent | None = None) -> list[PageTable]:
    """Every schedule table among the page's ruled grids (and grids continuing ``prev``).
    ``content``: the page's ``pdf_text.page_content``, to find strike lines (none looked for without)."""
    strikes = _page_strikes(content)
    if strikes is not None:
        page = _without_strikes(page, strikes)
    found = sorted(page.find_tables(), key=lambda t: (round(t.bbox[1]), t.bbox[0]))
    out: list[PageTable] = []
    for t in found:
        data = t.extract()
        if not data:
            continue
        cols = _columns(t)
        ncols = len(cols)
        if ncols < 3:
            continue
        data = [list(r) + [None] * (ncols - len(r)) for r in data]
        texts = [[normalise_cell(x) for x in r] for r in data]
        hr = next((r for r in range(min(len(data), _MAX_HEADING_SEARCH))
                   if _is_heading_row(texts[r], is_heading)), None)
        layout = Layout(cells=cols, headings=[], ruled=True)
        notes: list[str] = []
        headings: list[str] | None
        if hr is None:
            if prev is None or not prev.matches(layout):
                continue
            headings = None
            layout.headings = list(prev.headings)
            first = 0
        else:
            headings, first = _grid_headings(t, data, texts, hr, cols)
            layout.headings = headings
        rows, numbers, struck = _grid_rows(t, data, texts, first, hr if headings is not None else None,
                                           layout, page_no, is_heading, notes, strikes)
        out.append(PageTable(page=page_no, headings=headings, layout=layout, rows=rows,
                             row_numbers=numbers, method="lines", notes=notes, struck=struck))
        prev = layout
    return out


def _grid_headings(t, data: list[list], texts: list[list[str]], hr: int, cols: list
                   ) -> tuple[list[str], int]:
    """The headings of a grid whose heading row is ``hr`` (up to two more rows of heading text below
    it; cells merged across or down), and the index of its first data row."""
    last = hr
    while (last + 1 < len(data) and last - hr < 2
           and any(texts[last + 1])
           and not any(looks_like_value(x) for x in texts[last + 1] if x)
           and not is_stop_text(next(x for x in texts[last + 1] if x))):
        last += 1
    headings = []
    for c in range(len(cols)):
        parts = []
        for r in range(hr, last + 1):
            if data[r][c] is None:
                if r == hr or _spanned_from_above(t, data, r, c) is None:
                    span = _spanned_from_left(t, data, r, c, cols)
                    if span:
                        parts.append(normalise_cell(span))
                continue
            if texts[r][c]:
                parts.append(texts[r][c])
        headings.append(" ".join(parts))
    return headings, last + 1


def _grid_rows(t, data: list[list], texts: list[list[str]], first: int, hr: int | None, layout: Layout,
               page_no: int, is_heading: Callable[[str], bool], notes: list[str],
               strikes: _Strikes | None = None
               ) -> tuple[list[list[str]], list[int], list[tuple[int, int]]]:
    """The data rows of a grid from ``first``: spacer rows, repeated headings and rows running across
    the table are left out; cells merged down are read in every row, cells merged across as empty.
    ``hr``: the heading row when the grid has one. Also per row (cells struck, cells filled) when
    the page has ``strikes`` (else empty)."""
    cols = layout.cells
    ncols = len(cols)
    rows: list[list[str]] = []
    numbers: list[int] = []
    struck: list[tuple[int, int]] = []
    taken: set[int] = set()          # grid rows read as part of the row above them
    grid_rows = t.rows
    for r in range(first, len(data)):
        if r in taken:
            continue
        raw = data[r]
        cells = texts[r]
        subs: list[int] = []
        divided = _divided_row(t, grid_rows, data, r, cols)
        if divided is not None:
            raw, subs = divided
            taken.update(subs)
            cells = [normalise_cell(x) for x in raw]
        filled = [x for x in cells if x]
        if not filled:
            continue                                    # spacer row
        if is_stop_text(filled[0]):                     # notes inside the grid
            _passed_over(texts, r, page_no, notes)
            break
        if hr is not None and _is_heading_row(cells, is_heading) and \
                [h.lower() for h in cells] == [h.lower() for h in texts[hr]]:
            continue                                    # heading repeated inside the grid
        missing = [c for c in range(ncols) if raw[c] is None]
        if missing:
            row_text = list(cells)
            horizontal = []
            for c in missing:
                above = _spanned_from_above(t, data, r, c)
                if above is not None:
                    row_text[c] = normalise_cell(above)   # a cell merged down over rows
                else:
                    horizontal.append(c)
            if horizontal and len(filled) == 1 and len(horizontal) >= ncols - 2:
                notes.append(f"page {page_no}: '{filled[0]}' runs across the table; "
                             f"not read as a cap")
                continue
            cells = row_text
            if horizontal:
                names = (layout.headings or [""] * ncols)
                notes.append(
                    f"page {page_no}, row {len(rows) + 1}: merged cells under "
                    + ", ".join(f"'{names[c]}'" for c in horizontal)
                    + " (read as empty)")
        rows.append(cells)
        numbers.append(len(rows))
        if strikes is not None:
            struck.append(_row_struck(grid_rows, r, subs, raw, cols, strikes))
    return rows, numbers, struck
