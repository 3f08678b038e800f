"""Text-layer primitives for PDF ingest: glyphs -> text lines -> words, and the small tests that
decide whether a piece of text looks like a schedule heading, a value, or the start of a notes block.

Everything here works on plain tuples and small classes so that a 50-page schedule stays cheap;
pdfplumber is only used by the callers (``pdf.py``, ``pdf_ruled.py``, ``pdf_unruled.py``).
"""

from __future__ import annotations

import bisect
import math
import re
from dataclasses import dataclass, field
from typing import Callable, Iterable, Sequence, cast

from checker.ingest.headings import match_heading

# --------------------------------------------------------------------------------------------
# Glyphs, words and lines
# --------------------------------------------------------------------------------------------


@dataclass(slots=True)
class Glyph:
    text: str
    x0: float
    x1: float
    top: float
    bottom: float
    size: float
    struck: bool = False         # a strike-through line crosses it (see ``mark_struck``)

    @property
    def mid_y(self) -> float:
        return (self.top + self.bottom) / 2.0


@dataclass(slots=True)
class Word:
    """A run of glyphs on one line with no gap wider than the word tolerance.

    With the blank characters kept, one word is normally one cell's text as the generator drew it
    ("Pile dia (mm)", "H16@150 B1"); two cells whose text touches come out as one word and are
    split later at a glyph boundary (see pdf_unruled).
    """

    glyphs: list[Glyph]          # the non-blank glyphs, in x order
    text: str                    # the text, blanks kept (inner runs of blanks collapsed to one)
    x0: float
    x1: float
    top: float
    bottom: float
    size: float
    spaces_after: list[bool] = field(default_factory=list)  # per glyph: a blank follows it

    def boundaries(self) -> list[tuple[float, int]]:
        """Inner glyph boundaries where the word could be split without cutting a glyph and
        without falling on a blank: (x position, index of the first glyph on the right)."""
        out = []
        g = self.glyphs
        for i in range(1, len(g)):
            if self.spaces_after[i - 1]:
                continue
            out.append(((g[i - 1].x1 + g[i].x0) / 2.0, i))
        return out

    def split_at(self, i: int) -> tuple["Word", "Word"]:
        return _word_from(self.glyphs[:i], self.spaces_after[:i]), _word_from(
            self.glyphs[i:], self.spaces_after[i:])


def _word_from(glyphs: list[Glyph], spaces_after: list[bool]) -> Word:
    parts = []
    top = bottom = None
    x1 = size = 0.0
    for g, sp in zip(glyphs, spaces_after):
        parts.append(g.text)
        if sp:
            parts.append(" ")
        if top is None or g.top < top:
            top = g.top
        if bottom is None or g.bottom > bottom:
            bottom = g.bottom
        if g.x1 > x1:
            x1 = g.x1
        if g.size > size:
            size = g.size
    return Word(glyphs, "".join(parts).strip(), glyphs[0].x0, x1, cast(float, top), cast(float, bottom), size,
                list(spaces_after))


@dataclass(slots=True)
class Line:
    words: list[Word]
    top: float
    bottom: float
    size: float

    @property
    def mid_y(self) -> float:
        return (self.top + self.bottom) / 2.0

    @property
    def x0(self) -> float:
        return self.words[0].x0

    @property
    def x1(self) -> float:
        return max(w.x1 for w in self.words)

    @property
    def text(self) -> str:
        return "  ".join(w.text for w in self.words)


@dataclass
class PageContent:
    """What a page holds, read straight from pdfminer's layout objects (which pdfplumber parses
    once per page and caches): the glyphs, the straight rules, and how many pictures.

    Going past pdfplumber's object dicts saves about a third of the time of reading a page from
    its text layer; coordinates are pdfplumber's (points, origin top left, rotation applied).
    """

    ltchars: list                 # pdfminer LTChar objects
    hsegs: list[tuple[float, float, float]]    # horizontal rules (x0, x1, y)
    vsegs: list[tuple[float, float, float]]    # vertical rules (x, top, bottom)
    images: int
    drawings: int
    width: float
    height: float
    mb_x0: float = 0.0
    off: float = 0.0

    @property
    def chars(self) -> list[tuple]:
        """(text, x0, x1, top, bottom, size, upright, matrix) per glyph, pdfplumber's frame
        (built only when the text layer is read: a ruled page does not need them)."""
        mb_x0, off = self.mb_x0, self.off
        return [(c.get_text(), c.x0 + mb_x0, c.x1 + mb_x0, off - c.y1, off - c.y0, c.size,
                 c.upright, c.matrix) for c in self.ltchars]


def page_content(page) -> PageContent:
    from pdfminer.layout import LTChar, LTContainer, LTCurve, LTImage, LTLine, LTRect

    height = float(page.height)
    width = float(page.width)
    mb_x0, mb_top = float(page.mediabox[0]), float(page.mediabox[1])
    off = height + mb_top
    chars: list[LTChar] = []
    hsegs: list[tuple[float, float, float]] = []
    vsegs: list[tuple[float, float, float]] = []
    images = drawings = 0
    stack = list(page.layout._objs)
    while stack:
        obj = stack.pop()
        if isinstance(obj, LTChar):
            chars.append(obj)
        elif isinstance(obj, (LTLine, LTRect, LTCurve)):
            drawings += 1
            x0, x1, y0, y1 = obj.x0 + mb_x0, obj.x1 + mb_x0, off - obj.y1, off - obj.y0
            w, h = x1 - x0, y1 - y0
            if h < 2.0 and w >= 2.0:
                hsegs.append((x0, x1, (y0 + y1) / 2.0))
            elif w < 2.0 and h >= 2.0:
                vsegs.append(((x0 + x1) / 2.0, y0, y1))
            elif isinstance(obj, LTRect) and w >= 2.0 and h >= 2.0:
                hsegs.append((x0, x1, y0))
                hsegs.append((x0, x1, y1))
                vsegs.append((x0, y0, y1))
                vsegs.append((x1, y0, y1))
        elif isinstance(obj, LTImage):
            images += 1
        elif isinstance(obj, LTContainer):
            stack.extend(obj._objs)
    return PageContent(chars, hsegs, vsegs, images, drawings, width, height, mb_x0, off)


def glyphs_from_chars(chars: Iterable[tuple], rotation: int = 0, page_w: float = 0.0,
                      page_h: float = 0.0) -> list[Glyph]:
    """PageContent chars -> Glyphs, in an upright reading frame.

    ``rotation`` is the direction of the text on the page when it is not upright (90: the text
    reads up the page, 270: down the page); the glyphs are turned so that the text reads left to
    right in the returned coordinates.
    """
    if rotation == 0:
        return [Glyph(c[0], c[1], c[2], c[3], c[4], c[5]) for c in chars]
    if rotation == 90:        # reads bottom to top: turn the page clockwise
        return [Glyph(c[0], page_h - c[4], page_h - c[3], c[1], c[2], c[5]) for c in chars]
    # 270: reads top to bottom: turn the page anticlockwise
    return [Glyph(c[0], c[3], c[4], page_w - c[2], page_w - c[1], c[5]) for c in chars]


def text_direction(ltchars: Sequence) -> int:
    """0 when most glyphs (pdfminer LTChars) are upright, else 90 (text reads up the page) or
    270 (down)."""
    upright = up = down = 0
    for c in ltchars:
        if c.upright:
            upright += 1
            continue
        m = c.matrix or (1, 0, 0, 1, 0, 0)
        # matrix (a, b, c, d): the text's x direction in PDF space is (a, b); PDF y points up
        if m[1] > 0:
            up += 1
        else:
            down += 1
    if upright >= up + down:
        return 0
    return 90 if up >= down else 270


def build_lines(glyphs: list[Glyph]) -> tuple[list[Line], bool]:
    """Group glyphs into text lines (by vertical middle) and words (by horizontal gaps).

    Returns the lines sorted top to bottom and whether the page draws its blanks as characters.
    When it does, a word is a run of glyphs with (almost) no gap, blanks included: that is one
    cell's text; otherwise gaps up to about a blank's width are read as blanks.
    """
    if not glyphs:
        return [], True
    explicit_blanks = any(g.text == " " for g in glyphs)
    ordered = sorted(glyphs, key=lambda g: (g.top + g.bottom))
    groups: list[list[Glyph]] = []
    ref = None
    tol = 0.0
    cur: list[Glyph] = []
    for g in ordered:
        m = (g.top + g.bottom) / 2.0
        if ref is None or m - ref > tol:
            if cur:
                groups.append(cur)
            cur = [g]
            ref = m
            tol = 0.45 * max(g.size, 1.0)
        else:
            cur.append(g)
    if cur:
        groups.append(cur)

    lines: list[Line] = []
    for grp in groups:
        grp.sort(key=lambda g: g.x0)
        words = _words_of(grp, explicit_blanks)
        if not words:
            continue
        lines.append(Line(words=words, top=min(w.top for w in words),
                          bottom=max(w.bottom for w in words),
                          size=_median([w.size for w in words])))
    lines.sort(key=lambda ln: ln.top)
    return lines, explicit_blanks


def _words_of(grp: list[Glyph], explicit_blanks: bool) -> list[Word]:
    words: list[Word] = []
    glyphs: list[Glyph] = []
    spaces: list[bool] = []
    last_x1 = 0.0
    pending_blank = False
    for g in grp:
        if not g.text or g.text.isspace():
            if glyphs:              # a blank inside or after a word: it bridges the gap it fills
                pending_blank = True
                if g.x1 > last_x1:
                    last_x1 = g.x1
            continue
        if glyphs:
            p = glyphs[-1]
            if p.text == g.text and abs(p.x0 - g.x0) < 0.5 and abs(p.top - g.top) < 0.5:
                continue                # the same glyph printed twice (simulated bold)
            size = g.size if g.size > 1.0 else 1.0
            gap = g.x0 - last_x1
            if explicit_blanks:
                new_word = gap > min(1.5, max(0.6, 0.12 * size))
                blank = pending_blank
            else:
                new_word = gap > 0.45 * size
                blank = pending_blank or gap > 0.12 * size
            if new_word:
                words.append(_word_from(glyphs, spaces[:-1] + [False]))
                glyphs, spaces = [], []
            elif blank:
                spaces[-1] = True
        glyphs.append(g)
        spaces.append(False)
        pending_blank = False
        if len(glyphs) == 1 or g.x1 > last_x1:
            last_x1 = g.x1
    if glyphs:
        words.append(_word_from(glyphs, spaces[:-1] + [False]))
    return words


#: where a strike-through line crosses a glyph's box, as fractions of the box height from its top.
#: A program draws the line through the middle of the small letters and figures, about a quarter of
#: an em above the baseline; the box pdfminer gives a glyph runs from the font's ascent to its descent
#: (or to the baseline when the font declares no descent), so the line falls between about 45 % and
#: 75 % of the box. An underline lies at or below the baseline (beyond 85 %); a table rule lies between
#: the rows, outside the boxes.
STRIKE_BAND = (0.30, 0.85)


#: a cell (or a line of text the strike crosses, see ``strike_lines``) is struck through when strike
#: lines cross at least this share of its glyphs: a spreadsheet program strikes every word of a struck
#: cell, so nearly all its glyphs are crossed; a stray segment crossing a glyph or two is no strike
STRUCK_SHARE = 0.6


def mark_struck(lines: Sequence[Line], hrules: Sequence[tuple[float, float, float]]
                ) -> list[tuple[float, float, float]]:
    """Mark the glyphs that a strike-through line crosses (``Glyph.struck``) and return the
    horizontal rules that are not strike lines (the table's rules); see ``strike_lines``."""
    strikes, kept = strike_lines(lines, hrules)
    for _, hit in strikes:
        for g in hit:
            g.struck = True
    return kept


def strike_lines(lines: Sequence[Line], hrules: Sequence[tuple[float, float, float]], *,
                 across: bool = False
                 ) -> tuple[list[tuple[tuple[float, float, float], list[Glyph]]],
                            list[tuple[float, float, float]]]:
    """(strike lines with the glyphs each crosses, the other horizontal rules), marking nothing.

    A horizontal segment (x0, x1, y) is a strike line when it crosses the glyphs of one text line
    inside :data:`STRIKE_BAND` of their height and runs mostly through text: the glyphs it crosses
    cover at least half its length (a spreadsheet program draws one short segment per word or cell
    text; a rule runs the width of the table, between the rows). With ``across`` (a ruled grid,
    where one line may be drawn through a whole row, over the gaps between its cells) a segment
    that crosses at least :data:`STRUCK_SHARE` of the glyphs of the text line under it is one too.
    ``lines`` sorted by top, as ``build_lines`` returns them."""
    if not hrules or not lines:
        return [], list(hrules)
    tops = [ln.top for ln in lines]
    tallest = max(ln.bottom - ln.top for ln in lines)
    strikes: list[tuple[tuple[float, float, float], list[Glyph]]] = []
    kept: list[tuple[float, float, float]] = []
    for seg in hrules:
        x0, x1, y = seg
        hit: list[Glyph] = []
        under = 0                       # glyphs of the lines crossed, within the segment's extent
        if x1 - x0 > 0.5:
            k = bisect.bisect_left(tops, y - tallest)
            while k < len(lines) and lines[k].top <= y:
                ln = lines[k]
                k += 1
                if ln.top < y < ln.bottom and ln.x1 >= x0 and ln.x0 <= x1:
                    under += _crossed(ln, seg, hit)
        covered = sum(min(g.x1, x1) - max(g.x0, x0) for g in hit)
        if hit and (covered >= 0.5 * (x1 - x0)
                    or (across and len(hit) >= 2 and len(hit) >= STRUCK_SHARE * under)):
            strikes.append((seg, hit))
        else:
            kept.append(seg)
    return strikes, kept


def _crossed(ln: Line, seg: tuple[float, float, float], hit: list[Glyph]) -> int:
    """Add to ``hit`` the glyphs of ``ln`` that the segment crosses inside :data:`STRIKE_BAND`;
    return how many of the line's glyphs lie within the segment's extent."""
    x0, x1, y = seg
    lo_f, hi_f = STRIKE_BAND
    under = 0
    for w in ln.words:
        if w.x1 < x0 or w.x0 > x1:
            continue
        for g in w.glyphs:
            h = g.bottom - g.top
            mid = (g.x0 + g.x1) / 2.0
            if x0 - 0.5 <= mid <= x1 + 0.5:
                under += 1
                if h > 0 and g.top + lo_f * h <= y <= g.top + hi_f * h:
                    hit.append(g)
    return under


def _median(values: list[float]) -> float:
    if not values:
        return 0.0
    s = sorted(values)
    n = len(s)
    return s[n // 2] if n % 2 else (s[n // 2 - 1] + s[n // 2]) / 2.0


#: a line (or grid row) is taken for a row of a table by itself, without the table's heading or body
#: around it (the first row on a page without a heading, a row passed over below the table), when at
#: least this share of the columns is filled: a schedule row fills most of its cells, a line of a
#: title block or revision box fewer
ROW_FILL = 0.5


def min_cells(ncols: int) -> int:
    """Filled cells a line needs to be taken for a row of an ``ncols``-column table by itself."""
    return max(2, math.ceil(ROW_FILL * ncols))


#: a note naming text that was not read quotes this many lines and this many characters of each:
#: enough to recognise the rows (a row's mark comes first); the note gives the count of the rest
QUOTE_LINES = 6
QUOTE_CHARS = 60


def quote_lines(lines: Sequence[Line]) -> str:
    """Text lines quoted for a note: ``'PC21  1  750 ...', 'PC22  3  600 ...' and 2 more line(s)``."""
    return quote_texts([ln.text for ln in lines], "line")


def quote_texts(texts: Sequence[str], what: str = "line") -> str:
    """Texts quoted for a note, at most ``QUOTE_LINES`` of them, each cut at ``QUOTE_CHARS``."""
    quoted = [repr(t if len(t) <= QUOTE_CHARS else t[:QUOTE_CHARS - 3].rstrip() + "...")
              for t in texts[:QUOTE_LINES]]
    rest = len(texts) - len(quoted)
    return ", ".join(quoted) + (f" and {rest} more {what}(s)" if rest > 0 else "")


def normalise_cell(text: object) -> str:
    """Cell text as one line: runs of whitespace (line breaks of a wrapped cell) -> one blank."""
    if text is None:
        return ""
    return " ".join(str(text).split())


# --------------------------------------------------------------------------------------------
# What a piece of text looks like
# --------------------------------------------------------------------------------------------

# Words that schedule headings are made of. Only used to recognise a heading row (at least three
# cells); mapping a heading to a field is the heading mapper's job (checker.ingest.headings).
HEADING_WORDS = frozenset("""
mark marks cap caps pile piles pilecap dia diameter spacing centres centers crs length width
depth thickness column col columns load loads axial ned n_ed nsd moment moments mx my mxed myed
med uls concrete conc fck fcu fyk fy steel bars bar reinforcement reinft rebar tie ties cover
exposure embedment embed capacity resistance reaction reactions asx asy
""".split())
# Deliberately absent: words a drawing's title block or revision box uses as labels too
# ("no", "ref", "type", "size", "date", "scale", "as" ...): three of them must not make a heading.

_HEADING_PATTERNS = re.compile(
    r"(l\s*[x×]\s*w\s*[x×]\s*[dh]|n\s*_?\s*ed|m\s*[xy]\s*,?\s*_?\s*ed|\bas\s*[,_]?\s*[xy]\b|"
    r"^\s*[lwdhbs]\s*(\(.*\))?\s*$|ø|⌀|φ|\bphi\b)",
    re.IGNORECASE)
_TOKEN = re.compile(r"[a-z_]+", re.IGNORECASE)
_UNITS = re.compile(
    r"\(?\s*\b(?:mm|mm2|mm²|m|m2|m²|kn|knm|kn\.?m|kn·m|mpa|n/mm2|n/mm²|kn/m2|kn/m²|no\.?|nr|deg)"
    r"\b\s*\)?", re.IGNORECASE)


def _keyword_heading(text: str) -> bool:
    t = text.strip()
    if not t or len(t) > 60:
        return False
    for tok in _TOKEN.findall(t.lower()):
        if tok in HEADING_WORDS:
            return True
    return bool(_HEADING_PATTERNS.search(t))


def heading_matcher() -> Callable[[str], bool]:
    """``text -> bool``: does this cell look like a schedule heading? A short keyword list of our own,
    then :func:`checker.ingest.headings.match_heading` (a cell that maps to a schedule field)."""

    def is_heading(text: str) -> bool:
        t = normalise_cell(text)
        if not t or len(t) > 60 or looks_like_value(t):
            return False
        return _keyword_heading(t) or match_heading(t)[0] is not None

    return is_heading


_VALUE = re.compile(r"\d\d|^\s*[+-]?\d+(?:[.,]\d+)?\s*$")


def looks_like_value(text: str) -> bool:
    """A data value rather than heading text: two digits in a row, or a bare number.

    Units such as ``mm2`` or ``N/mm²`` do not count. Marks such as ``PC1`` do not either (they are
    recognised by their position in the first column, not here).
    """
    t = _UNITS.sub(" ", text)
    return bool(_VALUE.search(t))


_STOP = re.compile(
    r"^\s*(?:general\s+)?(?:notes?|rev(?:ision)?s?|key(?:\s+plan)?|legend|drawn|checked|approved|"
    r"project|client|drawing|dwg|title|scale|sheet|status|job|issue|date|continued|contd)\b",
    re.IGNORECASE)


def is_stop_text(text: str) -> bool:
    """Text that opens a notes block, revision box or title block below a table."""
    return bool(_STOP.match(text))
