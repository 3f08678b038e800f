"""RawTable: a table as read from a document, before headings are mapped (see DEVELOPERS.md)."""

from __future__ import annotations

from dataclasses import dataclass, field


@dataclass
class RawTable:
    file: str
    sheet: str | None
    headings: list[str]
    rows: list[list[object]]
    pages: list[int | None] = field(default_factory=list)
    row_numbers: list[int] = field(default_factory=list)

    def __post_init__(self) -> None:
        if not self.pages:
            self.pages = [None] * len(self.rows)
        if not self.row_numbers:
            self.row_numbers = list(range(1, len(self.rows) + 1))
