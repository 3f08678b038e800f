"""RawTable: a table as read from a document, before headings are mapped (see DEVELOPERS.md)."""

from __future__ import annotations

from dataclasses import dataclass, field

from checker.records import SkippedRawRow


class FormulaCell(str):
    """A spreadsheet cell holding a formula whose value was never calculated and saved (a workbook
    written by a program that does not calculate). The text is the formula, ``=SUM(B4:B6)``; the
    frame builder names it as such instead of reading it as text or as a blank."""


@dataclass
class RawTable:
    file: str
    sheet: str | None
    headings: list[str]
    rows: list[list[object]]
    pages: list[int | None] = field(default_factory=list)
    row_numbers: list[int] = field(default_factory=list)
    #: rows of the table that were not read as caps, each with its reason (page or None, row number as
    #: the user sees it, reason, text of the row's first cell)
    skipped: list[SkippedRawRow] = field(default_factory=list)
    #: the row number of the (last) heading row, for problems of the whole table
    heading_row: int | None = None

    def __post_init__(self) -> None:
        if not self.pages:
            self.pages = [None] * len(self.rows)
        if not self.row_numbers:
            self.row_numbers = list(range(1, len(self.rows) + 1))
