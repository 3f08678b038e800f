"""Schedule tables read from the text layer with explicit edges (the unruled method).

How a table is found on a page:

1. **Heading row.** A text line (or a block of up to three tight lines with no values in them)
   whose cells include at least three schedule headings. The words of the block are clustered
   by horizontal overlap into one heading cell per column; a word over two or more words of the
   line below (``Cap size (mm)`` over ``L``, ``W``, ``D``) is a spanning heading and prefixes each
   column under it.
2. **Body.** The lines below the heading, until a line that cannot be a row: a notes, revision or
   title text, a line whose text runs across two or more column gaps, text outside the columns, a
   vertical gap of more than about three rows (one or two blank spacer rows are allowed), or a
   line below the table's bottom rule.
3. **Columns.** One column per heading cell. The edge between two columns lies in the gap
   between their heading cells (headings sit inside their columns): at a vertical rule if there
   is one there, otherwise in the whitespace left by the body's words (the words' x-extents, blanks
   kept). Where a right-aligned value touches the left-aligned text of the next column with no
   whitespace, the two come out as one word; it is split at the glyph boundary on the next
   column's heading edge when the other rows show that column's text starting there.
4. **Rows.** A new row starts at each line with text in the first (mark) column and at each
   horizontal rule; a line without a mark continues the row above (a wrapped cell), or opens the
   row below when it sits tight on that row's mark line.

Every row has one cell per heading column; text that runs across a column edge, or lies outside
the columns, is reported in the notes rather than dropped silently. So are the lines below the end
of the body, up to the next heading row, that still look like rows of the table (``_passed_over``):
the reader names what it stopped at and the rows it did not read.
"""

from __future__ import annotations

import bisect
import math
import re
from dataclasses import dataclass, field
from typing import Callable, Sequence

from checker.ingest.pdf_model import Layout, PageTable
from checker.ingest.pdf_text import (
    STRUCK_SHARE,
    Line,
    Word,
    _median,
    is_stop_text,
    looks_like_value,
    min_cells,
    quote_lines,
)

HRule = tuple[float, float, float]      # x0, x1, y   (in the reading frame)
VRule = tuple[float, float, float]      # x, top, bottom


@dataclass
class HCell:
    x0: float
    x1: float
    text: str
    prefix: list[str] = field(default_factory=list)
    members: list[tuple[int, Word]] = field(default_factory=list)   # (heading line, word)
    spans: list[tuple[int, Word]] = field(default_factory=list)     # spanning words (block-wide)

    @property
    def full_text(self) -> str:
        return " ".join(self.prefix + [self.text]).strip()


def _overlap(a0: float, a1: float, b0: float, b1: float) -> float:
    return min(a1, b1) - max(a0, b0)


# --------------------------------------------------------------------------------------------
# Heading row
# --------------------------------------------------------------------------------------------


def heading_cells(block: Sequence[Line]) -> list[HCell] | None:
    """Cluster the words of one to three heading lines into one cell per column."""
    items: list[tuple[int, Word]] = [(li, w) for li, ln in enumerate(block) for w in ln.words]
    spanning: set[int] = set()
    for idx, (li, w) in enumerate(items):
        for lj in range(li + 1, len(block)):
            under = [w2 for w2 in block[lj].words if _overlap(w.x0, w.x1, w2.x0, w2.x1) > 0.5]
            if len(under) >= 2:
                spanning.add(idx)
                # a lone line-wide word above the heading is a title, not a heading line
                if len(block[li].words) == 1 and len(under) > 0.5 * len(block[lj].words):
                    return None
                break
    if len(block) > 1 and len(block[0].words) == 1 and 0 not in spanning:
        return None     # one word alone above the heading, over one column: a title
    # union-find over the other words: words on different lines that overlap share a column
    base = [k for k in range(len(items)) if k not in spanning]
    parent = {k: k for k in base}

    def find(k: int) -> int:
        while parent[k] != k:
            parent[k] = parent[parent[k]]
            k = parent[k]
        return k

    for a_i, a in enumerate(base):
        la, wa = items[a]
        for b in base[a_i + 1:]:
            lb, wb = items[b]
            if la != lb and _overlap(wa.x0, wa.x1, wb.x0, wb.x1) > 0:
                parent[find(a)] = find(b)
    groups: dict[int, list[int]] = {}
    for k in base:
        groups.setdefault(find(k), []).append(k)
    cells: list[HCell] = []
    for members in groups.values():
        members.sort(key=lambda k: (items[k][0], items[k][1].x0))
        ws = [items[k][1] for k in members]
        cells.append(HCell(min(w.x0 for w in ws), max(w.x1 for w in ws),
                           " ".join(w.text for w in ws), members=[items[k] for k in members]))
    cells.sort(key=lambda c: c.x0)
    spans = [items[k] for k in sorted(spanning, key=lambda k: (items[k][0], items[k][1].x0))]
    for _, s in spans:
        for c in cells:
            if _overlap(s.x0, s.x1, c.x0, c.x1) > 0:
                c.prefix.append(s.text)
    for c in cells:
        c.spans = spans
    # cells that still overlap each other (odd layouts) are one column
    merged: list[HCell] = []
    for c in cells:
        if merged and c.x0 < merged[-1].x1 - 0.5:
            m = merged[-1]
            m.x1 = max(m.x1, c.x1)
            m.text = f"{m.text} {c.text}"
            m.prefix = m.prefix or c.prefix
            m.members = m.members + c.members
        else:
            merged.append(c)
    return merged


def _units_line(ln: Line) -> bool:
    from checker.ingest.notation import normalise_unit

    return all(normalise_unit(w.text.strip("()[] ")) is not None for w in ln.words)


_TOUCH = re.compile(r"[a-z][A-Z]")


def split_touching(lines: Sequence[Line], tol: float = 1.0) -> None:
    """Split words where the text of two cells touches: a spreadsheet program clips a cell's text
    at the next filled cell, so ``No. of piles`` and ``Pile dia`` print as ``No. of pilesPile dia``.
    A word is split where a small letter meets a capital with no blank, at the place where a word of
    another line starts (the next column's left edge)."""
    cands = [(li, wi) for li, ln in enumerate(lines) for wi, w in enumerate(ln.words)
             if _TOUCH.search(w.text)]
    if not cands:
        return
    starts = sorted((w.x0, li) for li, ln in enumerate(lines) for w in ln.words)
    xs = [x for x, _ in starts]
    for li, wi in reversed(cands):
        w = lines[li].words[wi]
        cut = []
        for pos, gi in w.boundaries():
            g = w.glyphs
            run = 0                     # letters of the clipped word before the cut
            while run < gi and not w.spaces_after[gi - run - 1] and g[gi - run - 1].text.isalpha():
                run += 1
            after = g[gi + 1].text if gi + 1 < len(g) else ""
            if not (g[gi - 1].text.islower() and g[gi].text.isupper() and after.islower() and run >= 3):
                continue                # 'kN', 'NEd', 'mPa' are not two cells
            x = w.glyphs[gi].x0
            k = bisect.bisect_left(xs, x - tol)
            if any(starts[m][1] != li for m in range(k, bisect.bisect_right(xs, x + tol))):
                cut.append(gi)
        if not cut:
            continue
        pieces, rest, offset = [], w, 0
        for gi in cut:
            part, rest = rest.split_at(gi - offset)
            offset = gi
            part.x1 = min(part.x1, rest.x0)     # the clipped text ends where the next cell starts
            pieces.append(part)
        pieces.append(rest)
        lines[li].words[wi:wi + 1] = pieces


def heading_block(lines: Sequence[Line], i: int,
                  is_heading: Callable[[str], bool]) -> tuple[int, list[HCell]] | None:
    """If a heading row starts at line ``i``: (number of heading lines, heading cells)."""
    first = lines[i]
    if len(first.words) < 1 or any(looks_like_value(w.text) for w in first.words):
        return None
    if is_stop_text(first.words[0].text) and len(first.words) < 3:
        return None
    block = [first]
    j = i + 1
    while j < len(lines) and len(block) < 3:
        ln = lines[j]
        prev = block[-1]
        if ln.top - prev.top > 1.6 * max(prev.size, ln.size):
            break
        if abs(ln.size - first.size) > 0.3 * first.size:
            break
        if any(looks_like_value(w.text) for w in ln.words) or is_stop_text(ln.words[0].text):
            break
        if len(block) > 1 and _units_line(prev):
            break                   # a units row ends the heading (a section label may follow)
        block.append(ln)
        j += 1
    for k in range(len(block), 0, -1):
        cells = heading_cells(block[:k])
        if not cells or len(cells) < 3:
            continue
        if sum(1 for c in cells if is_heading(c.full_text)) >= 3:
            return k, cells
    return None


# --------------------------------------------------------------------------------------------
# Body
# --------------------------------------------------------------------------------------------


def _regions(cells: Sequence[HCell]) -> list[tuple[float, float]]:
    regs = []
    for a, b in zip(cells, cells[1:]):
        lo, hi = a.x1, b.x0
        if lo > hi:
            lo = hi = (lo + hi) / 2.0
        regs.append((lo, hi))
    return regs


def _crossings(w: Word, regs: Sequence[tuple[float, float]], eps: float = 0.5) -> int:
    return sum(1 for lo, hi in regs if w.x0 < lo - eps and w.x1 > hi + eps)


@dataclass
class _Geometry:
    cells: list[HCell]
    regs: list[tuple[float, float]]
    span0: float
    span1: float
    out_lo: float
    out_hi: float
    col0_lim: float

    @classmethod
    def of(cls, cells: list[HCell]) -> "_Geometry":
        regs = _regions(cells)
        span0, span1 = cells[0].x0, cells[-1].x1
        pitch = _median([b.x0 - a.x0 for a, b in zip(cells, cells[1:])]) or 50.0
        col0 = (regs[0][0] + regs[0][1]) / 2.0 if regs else span1
        return cls(cells, regs, span0, span1, span0 - 1.5 * pitch, span1 + 1.5 * pitch, col0)

    def inside(self, w: Word) -> bool:
        return w.x1 > self.out_lo and w.x0 < self.out_hi


def _stops(ln: Line, geo: _Geometry) -> str | None:
    """Why ``ln`` cannot be a row of the table (None when it can): no text inside the columns, a
    notes, revision or title text, or text running across two or more column gaps."""
    inside = [w for w in ln.words if geo.inside(w)]
    if not inside:
        return "text outside the table's columns"
    if is_stop_text(ln.words[0].text):
        return "notes, revision or title text"
    if any(_crossings(w, geo.regs) >= 2 for w in inside):
        return "text running across the columns"
    return None


def _row_like(ln: Line, geo: _Geometry) -> bool:
    """``ln`` looks like a row of the table by itself: text in the mark column, at least
    ``min_cells`` words inside the columns (and not many more than the columns), none across
    two column gaps."""
    if _stops(ln, geo) is not None:
        return False
    inside = [w for w in ln.words if geo.inside(w)]
    return inside[0].x0 < geo.col0_lim and min_cells(len(geo.cells)) <= len(inside) <= len(geo.cells) + 2


def _lead_lines(lines: Sequence[Line], idx: int, geo: _Geometry) -> list[Line]:
    """Wrapped text of the row at ``lines[idx]`` sitting tight above its mark line (at most three
    lines, none with a mark or across a column gap)."""
    lead: list[Line] = []
    k = idx - 1
    while k >= 0 and len(lead) < 3:
        up, below = lines[k], (lead[0] if lead else lines[idx])
        fits = [w for w in up.words if geo.inside(w)]
        if (below.top - up.top > 1.3 * up.size or not fits
                or fits[0].x0 < geo.col0_lim or is_stop_text(up.words[0].text)
                or any(_crossings(w, geo.regs) >= 1 for w in fits)):
            break
        lead.insert(0, up)
        k -= 1
    return lead


#: the row pitch, in text sizes, assumed until the table shows its own: one line of text with the
#: padding a spreadsheet or drawing program puts above and below it
DEFAULT_PITCH = 1.8

#: the body ends at a vertical gap of more than this many row pitches below the last line taken
#: (one or two blank spacer rows are kept in the table; a wider space separates it from what follows)
GAP_ROWS = 3.4


def _rows_above(lines: Sequence[Line], idx: int, geo: _Geometry, pitch: float) -> list[Line]:
    """The lines above ``lines[idx]``, the first line on a continuation page that looks like a row
    by itself (``_row_like``), that belong to the table too: rows with few cells filled (a mark and
    a value or two) sitting at the table's row pitch above it, each within ``GAP_ROWS`` pitches of
    the line below, inside the columns and not across two of them, with the wrapped text tight
    above the topmost mark. A title, notes or revision text ends them (``_stops``)."""
    chain: list[Line] = []
    below = lines[idx]
    for k in range(idx - 1, -1, -1):
        up = lines[k]
        if (below.top - up.top > GAP_ROWS * pitch or _stops(up, geo) is not None
                or not all(geo.inside(w) for w in up.words)):
            break
        chain.insert(0, up)
        below = up
    marks = [j for j, ln in enumerate(chain) if ln.words[0].x0 < geo.col0_lim]
    if not marks:
        return _lead_lines(lines, idx, geo)
    top = idx - len(chain) + marks[0]          # index in ``lines`` of the topmost mark line
    return _lead_lines(lines, top, geo) + chain[marks[0]:]


def _collect(lines: Sequence[Line], start: int, geo: _Geometry, table_rules: list[float], *,
             heading_top: float | None, continuation: bool,
             pitch: float | None = None) -> tuple[list[Line], int, str | None]:
    """The body lines of a table, from ``lines[start]``; returns (lines, index after the body, why
    the body ended there: None at the end of the lines).
    ``pitch``: the line pitch of the same table on the page before, if known."""
    accepted: list[Line] = []
    diffs: list[float] = [pitch] if pitch else []
    idx = start
    n = len(lines)
    while idx < n:
        ln = lines[idx]
        ref_top = accepted[-1].top if accepted else heading_top
        if ref_top is not None:
            # the row pitch: steps between rows, not the tight steps of wrapped lines in a row
            steps = [d for d in diffs if d > 1.3 * ln.size]
            est = _median(steps) if steps else DEFAULT_PITCH * max(ln.size, 1.0)
            limit = (GAP_ROWS if accepted else 4.5) * max(est, 1.0 * ln.size)
            if ln.top - ref_top > limit:
                return accepted, idx, "a gap of more than three rows"
        if (table_rules and accepted and ln.top > table_rules[-1]
                and accepted[0].top < table_rules[-1]):
            return accepted, idx, "the table's bottom rule"
        if continuation and not accepted:
            # on a page without a heading: skip what is above the first line that fits
            if _row_like(ln, geo):
                est = pitch or DEFAULT_PITCH * max(ln.size, 1.0)
                accepted.extend(_rows_above(lines, idx, geo, est) + [ln])
            idx += 1
            continue
        why = _stops(ln, geo)
        if why is not None:
            return accepted, idx, why
        inside = [w for w in ln.words if geo.inside(w)]
        if inside[0].x0 >= geo.col0_lim and len(inside) < 2:    # no mark, one word
            tight_prev = bool(accepted) and ln.top - accepted[-1].top <= 1.3 * ln.size
            nxt = lines[idx + 1] if idx + 1 < n else None
            tight_next = (nxt is not None and nxt.top - ln.top <= 1.3 * ln.size
                          and nxt.words[0].x0 < geo.col0_lim)
            if not (tight_prev or tight_next):
                return accepted, idx, "a line that is not a row"
        if accepted:
            diffs.append(ln.top - accepted[-1].top)
        elif heading_top is not None:
            diffs.append(ln.top - heading_top)     # the first row's pitch below the heading
        accepted.append(ln)
        idx += 1
    return accepted, idx, None


def _passed_over(lines: Sequence[Line], geo: _Geometry, page_no: int, why: str | None,
                 body: Sequence[Line]) -> str | None:
    """A note for the lines below the end of a table (``lines``: from where its body ended to the
    next heading row or the end of the page) when some of them still look like rows of it: the
    reader stopped at ``why`` and did not read them. None when none of them does."""
    rows = [ln for ln in lines if _row_like(ln, geo)]
    if not rows or why is None:
        return None
    last = body[-1].text if body else None
    after = f"after {last!r}" if last is not None else "below the heading"
    return (f"page {page_no}: the table ends {after} at {why} ({lines[0].text!r}); "
            f"{len(rows)} line(s) below that fit its columns were not read: {quote_lines(rows)}")


def _group_rows(body: list[Line], geo: _Geometry, table_rules: list[float]) -> list[list[Line]]:
    """Body lines -> rows. A line with a mark opens a row; a line without one belongs to the row
    whose mark line it sits tight against (wrapped text above or below the mark, with the other
    cells top-, middle- or bottom-aligned), never across a rule; otherwise it opens a row."""

    def marked(ln: Line) -> bool:
        first = next((w for w in ln.words if geo.inside(w)), ln.words[0])
        return first.x0 < geo.col0_lim

    def rule_between(a: Line, b: Line) -> bool:
        return any(a.mid_y < y < b.mid_y for y in table_rules)

    n = len(body)
    marks = [marked(ln) for ln in body]
    # leads[k]: line k sits tight above a mark line (directly or through more such lines)
    leads = [False] * n
    for k in range(n - 2, -1, -1):
        a, b = body[k], body[k + 1]
        if b.top - a.top <= 1.3 * a.size and not rule_between(a, b):
            leads[k] = marks[k + 1] or leads[k + 1]
    rows: list[list[Line]] = []
    pending: list[Line] = []
    for k, ln in enumerate(body):
        if marks[k]:
            rows.append(pending + [ln])
            pending = []
            continue
        prev = body[k - 1] if k else None
        nxt = body[k + 1] if k + 1 < len(body) else None
        tight = 1.3 * ln.size
        gap_prev = ln.top - prev.top if prev is not None else math.inf
        gap_next = nxt.top - ln.top if nxt is not None else math.inf
        can_prev = (prev is not None and gap_prev <= tight and not rule_between(prev, ln)
                    and (rows or pending))
        can_next = leads[k]
        if can_next and (not can_prev or gap_next < gap_prev - 0.1):
            pending.append(ln)                   # wrapped text above the mark of the next row
        elif can_prev:
            if pending:
                pending.append(ln)
            else:
                rows[-1].append(ln)              # wrapped text under the row's mark line
        else:
            rows.append(pending + [ln])          # a row without a mark: kept, frame rejects it
            pending = []
    if pending:
        rows.append(pending)
    return rows


# --------------------------------------------------------------------------------------------
# Column edges
# --------------------------------------------------------------------------------------------


def _free_intervals(lo: float, hi: float, cover: list[tuple[float, float]]) -> list[tuple[float, float]]:
    if hi - lo < 1e-6:
        return [] if any(a < lo < b for a, b in cover) else [(lo, lo)]
    out = []
    x = lo
    for a, b in sorted(cover):
        if b <= x:
            continue
        if a > x:
            out.append((x, min(a, hi)))
        x = max(x, b)
        if x >= hi:
            break
    if x < hi:
        out.append((x, hi))
    return [(a, b) for a, b in out if b >= a]


def _nearest_boundary(w: Word, e: float, tol: float = 0.75) -> int | None:
    best = None
    best_d = tol
    for pos, gi in w.boundaries():
        d = abs(pos - e)
        if d <= best_d:
            best, best_d = gi, d
    return best


def _clipped(w: Word, gi: int) -> bool:
    """The glyph before ``gi`` runs under glyph ``gi``: the text on the left was clipped there (a
    spreadsheet program prints a cell's text only up to the next filled cell, and the glyph it cut
    keeps its full width in the text layer)."""
    g = w.glyphs
    return g[gi - 1].x1 > g[gi].x0 + 0.5


def _cut_at(w: Word, gi: int) -> float:
    """Where the word is cut before glyph ``gi``: between the glyphs, or where glyph ``gi`` starts
    when the glyph before runs under it."""
    g = w.glyphs
    return g[gi].x0 if _clipped(w, gi) else (g[gi - 1].x1 + g[gi].x0) / 2.0


def _clip_boundary(w: Word, e: float, tol: float = 0.75) -> int | None:
    """The glyph of ``w`` that starts the next column's text at the column's left edge ``e`` when the
    text on the left was clipped there (its last glyph runs under the first glyph of the next cell):
    the glyphs before it start left of the edge, those from it on start at or right of it, and no
    blank separates them (a blank would be a space inside one cell's text)."""
    g = w.glyphs
    for i in range(1, len(g)):
        if abs(g[i].x0 - e) > tol:
            continue
        if w.spaces_after[i - 1] or not _clipped(w, i):
            return None
        if (g[i - 1].x0 + g[i - 1].x1) / 2.0 >= e or any(h.x0 < e - tol for h in g[i:]):
            return None
        return i
    return None


def _edges(body: list[Line], geo: _Geometry, vrule_xs: list[float]):
    """Column edges: the default per boundary, and per line the words split where cells touch.

    Returns (edges, splits) where ``edges[j]`` is the default edge between column j and j+1 and
    ``splits[(line index, word index)]`` lists (boundary j, glyph index, clipped) to split that word
    at, ``clipped`` when the text on the left was cut there (see ``_clipped``).
    """
    cells, regs = geo.cells, geo.regs
    nb = len(regs)
    edges: list[float] = [0.0] * nb
    line_edges: list[list[float | None]] = [[None] * nb for _ in body]
    splits: dict[tuple[int, int], list[tuple[int, int, bool]]] = {}
    for j, (lo, hi) in enumerate(regs):
        mid = (lo + hi) / 2.0
        vr = [x for x in vrule_xs if lo - 2.0 <= x <= hi + 2.0]
        if vr:
            edges[j] = min(vr, key=lambda x: abs(x - mid))
            continue
        merged: dict[int, tuple[int, int]] = {}
        merge_e = None
        for e, side in ((cells[j + 1].x0, "left"), (cells[j].x1, "right")):
            cand = _touching_words(body, cells, j, e, side, edges, line_edges)
            if cand and _aligned_elsewhere(body, cells, j, e, side, lo, hi, cand):
                merged, merge_e = cand, e
                break
        edges[j] = _default_edge(body, lo, hi, merged, merge_e)
        for li, (wi, gi) in merged.items():
            w = body[li].words[wi]
            line_edges[li][j] = _cut_at(w, gi)
            splits.setdefault((li, wi), []).append((j, gi, _clipped(w, gi)))
    return edges, line_edges, splits


def _touching_words(body: list[Line], cells: list, j: int, e: float, side: str, edges: list[float],
                    line_edges: list[list[float | None]]) -> dict[int, tuple[int, int]]:
    """Per line, the (word, glyph) where a word running over edge ``e`` of boundary ``j`` can be split:
    alone in its column on ``side`` ('left': the column after the edge starts; 'right': the one before
    it ends)."""
    cand: dict[int, tuple[int, int]] = {}
    for li, ln in enumerate(body):
        for wi, w in enumerate(ln.words):
            if not (w.x0 < e - 0.5 and w.x1 > e + 0.5):
                continue
            gi = _nearest_boundary(w, e)
            if gi is None and side == "left":
                gi = _clip_boundary(w, e)
            if gi is None:
                continue
            if side == "left":
                prev_edge = -math.inf
                if j > 0:
                    pe = line_edges[li][j - 1]
                    prev_edge = edges[j - 1] if pe is None else pe
                alone = not any(o is not w and o.x1 <= w.x0 + 0.1 and o.x0 >= prev_edge
                                for o in ln.words)
            else:
                lim = cells[j + 2].x0 if j + 2 < len(cells) else math.inf
                alone = not any(o is not w and o.x0 >= w.x1 - 0.1 and o.x1 <= lim
                                for o in ln.words)
            if alone:
                cand[li] = (wi, gi)
    return cand


def _aligned_elsewhere(body: list[Line], cells: list, j: int, e: float, side: str, lo: float, hi: float,
                       cand: dict[int, tuple[int, int]]) -> bool:
    """Evidence from the other rows that this column's text is aligned on the edge; with no other
    row to learn from, two rows agreeing, or one split exactly there."""
    others = []
    for li, ln in enumerate(body):
        if li in cand:
            continue
        for w in ln.words:
            if side == "left" and w.x1 > e and w.x0 < cells[j + 1].x1 and w.x0 > lo - 0.5:
                others.append(abs(w.x0 - e) <= 1.0)
            elif side == "right" and w.x0 < e and w.x1 > cells[j].x0 and w.x1 < hi + 0.5:
                others.append(abs(w.x1 - e) <= 1.0)
    if others:
        return sum(others) >= 0.5 * len(others)
    return len(cand) >= 2 or all(
        abs(_cut_at(body[li].words[wi], gi) - e) <= 0.35 for li, (wi, gi) in cand.items())


def _default_edge(body: list[Line], lo: float, hi: float, merged: dict[int, tuple[int, int]],
                  merge_e: float | None) -> float:
    """The default edge in the gap (lo, hi): the middle of a free interval (the one at the split
    edge when words are split, else the last), or the middle of the gap when none is free."""
    cover = []
    for li, ln in enumerate(body):
        m = merged.get(li)
        for wi, w in enumerate(ln.words):
            if m is not None and m[0] == wi:
                continue
            if w.x1 <= lo or w.x0 >= hi:
                if not (hi - lo < 1e-6 and w.x0 < lo < w.x1):
                    continue
            cover.append((w.x0, w.x1))
    free = _free_intervals(lo, hi, cover)
    if free:
        if merge_e is not None:
            pick = min(free, key=lambda ab: 0.0 if ab[0] <= merge_e <= ab[1]
                       else min(abs(ab[0] - merge_e), abs(ab[1] - merge_e)))
        else:
            pick = free[-1]
        return (pick[0] + pick[1]) / 2.0
    return (lo + hi) / 2.0


# --------------------------------------------------------------------------------------------
# Putting it together
# --------------------------------------------------------------------------------------------


def _span_headings(geo: _Geometry, edges: list[float]) -> None:
    """Spread a heading written over several columns (a merged heading cell, drawn centred)
    to every column it covers, now that the columns' edges are known from the data."""
    cells = geo.cells
    if not cells or not (cells[0].spans or any(len({li for li, _ in c.members}) > 1
                                               for c in cells)):
        return
    last_line = max([li for c in cells for li, _ in c.members + c.spans] or [0])
    bounds = []
    for j, c in enumerate(cells):
        left = edges[j - 1] if j > 0 else c.x0
        right = edges[j] if j < len(edges) else c.x1
        bounds.append((left, right))
    upper: list[tuple[int, Word, int | None]] = [(li, w, None) for li, w in cells[0].spans]
    for j, c in enumerate(cells):
        upper.extend((li, w, j) for li, w in c.members if li < last_line)
    for li, w, home in upper:
        covered = [j for j, (a, b) in enumerate(bounds)
                   if _overlap(w.x0, w.x1, a, b) > 0.4 * min(b - a, w.x1 - w.x0)]
        if len(covered) < 2 and home is not None:
            continue
        for j in covered:
            c = cells[j]
            if j == home or w.text in c.prefix:
                continue
            if any(lk == li for lk, _ in c.members):
                continue                    # the column has its own text on that line
            c.prefix.append(w.text)
    # a group heading narrower than one column ("Cap size (mm)" centred over L, W, D) sits over
    # one of its sub-columns only: carry it to the neighbours that have nothing on its line and
    # only a short sub-heading of their own (L, W, D, X, Y, Mx ...)
    def short(c: HCell) -> bool:
        return len(c.text.replace(" ", "")) <= 3 and not any(lk < last_line for lk, _ in c.members)

    for j, c in enumerate(cells):
        ups = [w for li, w in c.members if li < last_line]
        lows = [w for li, w in c.members if li == last_line]
        if not ups or not lows or len(" ".join(w.text for w in lows).replace(" ", "")) > 3:
            continue
        group = " ".join(w.text for w in ups)
        for step in (-1, 1):
            k = j + step
            while 0 <= k < len(cells) and short(cells[k]):
                if group not in cells[k].prefix:
                    cells[k].prefix.append(group)
                k += step


def _joined_headings(geo: _Geometry, edges: list[float]) -> list[str] | None:
    """The heading lines as rows of cells, joined the way a spreadsheet's heading block is
    (``tabular.join_heading_rows``: a group heading spreads right over the labels under it, a units
    row is appended); None for a one-line heading or when that maps no more headings than the
    heading cells read here."""
    cells = geo.cells
    lines = sorted({li for c in cells for li, _ in c.members + c.spans})
    if len(lines) < 2:
        return None
    try:
        from checker.ingest.headings import match_headings
        from checker.ingest.tabular import join_heading_rows
    except ImportError:         # read without the heading mapper: the heading cells as they are
        return None

    at = {li: k for k, li in enumerate(lines)}
    grid = [[""] * len(cells) for _ in lines]

    def put(li: int, j: int, text: str) -> None:
        row = grid[at[li]]
        row[j] = f"{row[j]} {text}".strip()

    for j, c in enumerate(cells):
        for li, w in sorted(c.members, key=lambda t: (t[0], t[1].x0)):
            put(li, j, w.text)
    for li, w in cells[0].spans:       # a spanning heading starts in its (merged) cell's first column
        put(li, bisect.bisect_left(edges, w.x0 + 0.5), w.text)
    joined = join_heading_rows(grid)
    if joined is None or len(joined) != len(cells):
        return None
    current = [c.full_text for c in cells]
    if len(match_headings(joined).matches) > len(match_headings(current).matches):
        return joined
    return None


def _cells_of(body: list[Line], rows: list[list[Line]], geo: _Geometry, vrule_xs: list[float],
              page_no: int, first_row_number: int = 1
              ) -> tuple[list[list[str]], list[str], list[tuple[int, int]]]:
    """(rows of cell texts, notes, per row (cells struck through, cells filled)). A cell is struck
    through when a strike line crosses most of its glyphs (``Glyph.struck``)."""
    ncols = len(geo.cells)
    edges, line_edges, splits = _edges(body, geo, vrule_xs)
    joined = _joined_headings(geo, edges)
    _span_headings(geo, edges)
    if joined is not None:
        for c, h in zip(geo.cells, joined):
            c.prefix, c.text = [], h
    index = {id(ln): k for k, ln in enumerate(body)}
    headings = [c.full_text for c in geo.cells]
    out_rows: list[list[str]] = []
    notes: list[str] = []
    struck: list[tuple[int, int]] = []
    for r, row_lines in enumerate(rows, start=first_row_number):
        parts: list[list[str]] = [[] for _ in range(ncols)]
        n_glyphs = [0] * ncols
        n_struck = [0] * ncols
        for ln in row_lines:
            li = index[id(ln)]
            le = [edges[j] if line_edges[li][j] is None else line_edges[li][j]
                  for j in range(len(edges))]
            for wi, w in enumerate(ln.words):
                pieces = [w]
                sp = splits.get((li, wi))
                if sp:
                    pieces = []
                    rest, offset = w, 0
                    for j, gi, clipped in sorted(sp, key=lambda t: t[1]):
                        left, rest = rest.split_at(gi - offset)
                        offset = gi
                        if clipped:     # the last glyph drawn under the next cell's text
                            left.x1 = min(left.x1, rest.x0)
                            notes.append(
                                f"page {page_no}, row {r}: '{left.text}' was cut where it meets the "
                                f"'{headings[j + 1]}' column (the program that made the PDF printed "
                                f"the cell's text only up to the next filled cell); the rest of it is "
                                f"not in the PDF")
                        pieces.append(left)
                    pieces.append(rest)
                for p in pieces:
                    if not geo.inside(p):
                        notes.append(f"page {page_no}, row {r}: text outside the table's "
                                     f"columns not read: '{p.text}'")
                        continue
                    col = bisect.bisect_left(le, (p.x0 + p.x1) / 2.0)
                    lo_edge = le[col - 1] if col > 0 else -math.inf
                    hi_edge = le[col] if col < len(le) else math.inf
                    if p.x0 < lo_edge - 1.0 or p.x1 > hi_edge + 1.0:
                        other = col - 1 if p.x0 < lo_edge - 1.0 else col + 1
                        notes.append(
                            f"page {page_no}, row {r}: '{p.text}' runs across the "
                            f"'{headings[min(col, other)]}' and '{headings[max(col, other)]}' "
                            f"columns; read as '{headings[col]}'")
                    parts[col].append(p.text)
                    n_glyphs[col] += len(p.glyphs)
                    n_struck[col] += sum(1 for g in p.glyphs if g.struck)
        out_rows.append([" ".join(x) for x in parts])
        filled = [c for c in range(ncols) if n_glyphs[c]]
        struck.append((sum(1 for c in filled if n_struck[c] >= STRUCK_SHARE * n_glyphs[c]), len(filled)))
    return out_rows, notes, struck


def _table_rules(hrules: Sequence[HRule], geo: _Geometry, below: float) -> list[float]:
    width = geo.span1 - geo.span0
    ys = [y for x0, x1, y in hrules
          if _overlap(x0, x1, geo.span0, geo.span1) >= 0.5 * width and y > below - 1.0]
    return sorted(ys)


def _vrule_xs(vrules: Sequence[VRule], top: float, bottom: float) -> list[float]:
    mid = (top + bottom) / 2.0
    return sorted(x for x, t, b in vrules if t - 0.5 <= mid <= b + 0.5)


def _build(body: list[Line], geo: _Geometry, headings: list[str] | None, layout: Layout,
           page_no: int, hrules: Sequence[HRule], vrules: Sequence[VRule],
           table_rules: list[float], band: tuple[float, float], method: str) -> PageTable:
    rows = _group_rows(body, geo, table_rules)
    size = _median([ln.size for ln in body]) if body else 0.0
    steps = [b.top - a.top for a, b in zip(body, body[1:]) if b.top - a.top > 1.3 * size]
    if steps:
        layout = Layout(cells=layout.cells, headings=list(layout.headings), ruled=layout.ruled,
                        rotation=layout.rotation, pitch=_median(steps))
    vx = _vrule_xs(vrules, *band)
    cells, notes, struck = _cells_of(body, rows, geo, vx, page_no)
    if headings is not None:
        headings = [c.full_text for c in geo.cells]
        layout.headings = headings
    keep, numbers, tops, strikes = [], [], [], []
    for r, row_lines, st in zip(cells, rows, struck):
        if any(c for c in r):
            keep.append(r)
            numbers.append(len(keep))
            tops.append([ln.top for ln in row_lines])
            strikes.append(st)
    if vx or table_rules:
        method = "rules"
    return PageTable(page=page_no, headings=headings, layout=layout, rows=keep,
                     row_numbers=numbers, method=method, notes=notes, row_tops=tops, struck=strikes)


def find_text_tables(lines: Sequence[Line], page_no: int, is_heading: Callable[[str], bool], *,
                     hrules: Sequence[HRule] = (), vrules: Sequence[VRule] = (),
                     prev: Layout | None = None, rotation: int = 0) -> list[PageTable]:
    """Every schedule table on the page, read by the unruled (explicit edges) method.

    ``prev`` is the layout of the table read last (on the page before): lines before the first
    heading row on this page that fit its columns continue that table.
    """
    tables: list[PageTable] = []
    split_touching(lines)
    n = len(lines)
    i = 0
    first_heading = None
    while i < n:
        hb = heading_block(lines, i, is_heading)
        if hb is None:
            i += 1
            continue
        k, cells = hb
        if first_heading is None:
            first_heading = i
        geo = _Geometry.of(cells)
        head = lines[i:i + k]
        trules = _table_rules(hrules, geo, head[-1].bottom)
        body, end, why = _collect(lines, i + k, geo, trules, heading_top=head[-1].top,
                                  continuation=False)
        nxt = end                   # the next heading row, or the end of the page
        while nxt < n and heading_block(lines, nxt, is_heading) is None:
            nxt += 1
        headings = [c.full_text for c in cells]
        layout = Layout(cells=[(c.x0, c.x1) for c in cells], headings=headings, ruled=False,
                        rotation=rotation)
        band = (head[0].top, head[-1].bottom)
        tables.append(_build(body, geo, headings, layout, page_no, hrules, vrules, trules,
                             band, "text"))
        tables[-1].head_tops = [ln.top for ln in head]
        passed = _passed_over(lines[end:nxt], geo, page_no, why, body)
        if passed is not None:
            tables[-1].notes.append(passed)
        i = max(nxt, i + k)
    if prev is not None and prev.ncols >= 3:
        limit = first_heading if first_heading is not None else n
        cont = continue_table(lines[:limit], page_no, prev, hrules=hrules, vrules=vrules)
        if cont is not None:
            tables.insert(0, cont)
    return tables


def continue_table(lines: Sequence[Line], page_no: int, prev: Layout, *,
                   hrules: Sequence[HRule] = (), vrules: Sequence[VRule] = ()) -> PageTable | None:
    """Rows on a page without a heading row that fit the columns of the previous table."""
    if not lines:
        return None
    cells = [HCell(x0, x1, h) for (x0, x1), h in zip(prev.cells, prev.headings)]
    geo = _Geometry.of(cells)
    trules = _table_rules(hrules, geo, -math.inf)
    body, end, why = _collect(lines, 0, geo, trules, heading_top=None, continuation=True,
                              pitch=prev.pitch)
    if not body:
        return None             # no line fits the columns: nothing passed over either
    band = (body[0].top, body[0].bottom)
    t = _build(body, geo, None, prev, page_no, hrules, vrules, trules, band, "text")
    passed = _passed_over(lines[end:], geo, page_no, why, body)
    if passed is not None:
        t.notes.append(passed)
    return t if t.rows else None


def _near(y: float, tops: Sequence[float], tol: float = 1.0) -> bool:
    k = bisect.bisect_left(tops, y - tol)
    return k < len(tops) and tops[k] <= y + tol


def side_table(lines: Sequence[Line], page_no: int, left: PageTable, *,
               is_mark: Callable[[str], bool], tol: float = 1.0) -> PageTable | None:
    """The columns of a table printed on the page to the right of ``left`` (a sheet wider than the
    paper is printed in strips: the same rows at the same heights, the next columns, no mark column).

    Every line of the page must sit at the height of a heading line or of a row line of ``left``, at
    least one on the heading's lines and one on the rows'; the lines on the heading's are this strip's
    headings (as few as one: ``Remarks``); none of them may be a mark column (that is a new table)
    or hold a value (the rows of a page without a heading row that happen to sit at the heights
    of the heading and rows of the page before are a continuation).
    Returns a PageTable whose rows correspond one to one with ``left.rows`` (blank where the strip has
    nothing on that row)."""
    if not lines or not left.head_tops or not left.row_tops:
        return None
    split_touching(lines)
    head_tops = sorted(left.head_tops)
    body_tops = sorted(t for ts in left.row_tops for t in ts)
    head = [ln for ln in lines if _near(ln.top, head_tops, tol)]
    body = [ln for ln in lines if not _near(ln.top, head_tops, tol)]
    if not head or not body or not all(_near(ln.top, body_tops, tol) for ln in body):
        return None
    if max(ln.top for ln in head) > min(ln.top for ln in body):
        return None
    if any(looks_like_value(w.text) for ln in head for w in ln.words):
        return None             # values at the heading's height: rows, not a strip's heading
    cells = heading_cells(head)
    if not cells or any(is_mark(c.full_text) for c in cells):
        return None
    geo = _Geometry.of(cells)
    if not all(geo.inside(w) for ln in body for w in ln.words):
        return None
    # one group of lines per row of the left strip
    owner: list[int] = []
    for ln in body:
        k = next((r for r, ts in enumerate(left.row_tops) if any(abs(ln.top - t) <= tol for t in ts)), -1)
        owner.append(k)
    if any(k < 0 for k in owner):
        return None
    groups: list[list[Line]] = [[] for _ in left.row_tops]
    for ln, k in zip(body, owner):
        groups[k].append(ln)
    present = [g for g in groups if g]
    cells_text, notes, struck = _cells_of(body, present, geo, [], page_no)
    it = iter(zip(cells_text, struck))
    got = [next(it) if g else ([""] * len(cells), (0, 0)) for g in groups]
    rows = [r for r, _ in got]
    headings = [c.full_text for c in geo.cells]
    layout = Layout(cells=[(c.x0, c.x1) for c in cells], headings=headings, ruled=False)
    return PageTable(page=page_no, headings=headings, layout=layout, rows=rows,
                     row_numbers=list(left.row_numbers), method="text", notes=notes,
                     row_tops=[list(ts) for ts in left.row_tops], head_tops=list(left.head_tops),
                     side=True, struck=[st for _, st in got])
