"""Intermediate results of PDF ingest: one table as found on one page, and its column layout.

``pdf.py`` joins the page tables into RawTables (a table running over several pages becomes one
RawTable whose rows remember their page).
"""

from __future__ import annotations

from dataclasses import dataclass, field


@dataclass
class Layout:
    """Where the columns of a table are, so a later page without a heading row can be matched.

    ``cells`` holds per column the x-extent of its heading text (unruled) or of its ruled cell.
    ``rotation`` is the reading frame the extents are in (0 for upright text).
    """

    cells: list[tuple[float, float]]
    headings: list[str]
    ruled: bool
    rotation: int = 0
    pitch: float | None = None       # line pitch of the body (unruled), for the next page

    @property
    def ncols(self) -> int:
        return len(self.cells)

    def matches(self, other: "Layout", tol: float = 3.0) -> bool:
        """Same number of columns at about the same places."""
        if other.ncols != self.ncols or other.rotation != self.rotation or self.ncols == 0:
            return False
        for (a0, a1), (b0, b1) in zip(self.cells, other.cells):
            if self.ruled and other.ruled:
                if abs(a0 - b0) > tol or abs(a1 - b1) > tol:
                    return False
                continue
            am, bm = (a0 + a1) / 2, (b0 + b1) / 2
            inside = (b0 - tol <= am <= b1 + tol) or (a0 - tol <= bm <= a1 + tol)
            if not inside or min(a1, b1) - max(a0, b0) < -tol:
                return False
        return True


@dataclass
class PageTable:
    page: int                        # 1-based
    headings: list[str] | None       # None: no heading row on this page (continues the last table)
    layout: Layout
    rows: list[list[str]] = field(default_factory=list)
    row_numbers: list[int] = field(default_factory=list)
    method: str = "text"             # "lines" (ruled grid), "text" (whitespace), "rules" (mixed)
    notes: list[str] = field(default_factory=list)
    #: per row, the tops of its text lines; the tops of the heading lines (unruled tables): a page
    #: printed to the right of this one (a sheet wider than the paper) has its lines at these heights
    row_tops: list[list[float]] = field(default_factory=list)
    head_tops: list[float] = field(default_factory=list)
    side: bool = False               # the columns to the right of the table on the page before
    #: per row, (cells struck through, cells filled); empty when the reader does not look for strikes
    struck: list[tuple[int, int]] = field(default_factory=list)
