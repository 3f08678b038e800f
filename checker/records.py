"""Typed records at the seams between ingest, the review and the writers (issue 12, item 3).

:class:`FieldError` is one field's problem over some rows of a table (collected column-wise while a
frame is built); :class:`RejectedRow` a schedule or loads row that was not checked, with all its
reasons; :class:`SkippedRow` a row not read as a cap (a repeated heading, a note, a hidden row), and
:class:`SkippedRawRow` the same row as the table reader keeps it (``RawTable.skipped``: page and row
number only; the table knows its file and sheet);
:class:`TableProblem` a problem of a whole table (a required field that no column gives), said once at
its heading row.
They are frozen and read by attribute (``row.errors``, ``row.mark``); ``to_dict()`` gives the
dictionaries of the JSON output and the sheets, unchanged.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np


def _compact(text: Any) -> str:
    """A mark as compared: case and spaces ignored (``'pc 1'`` is ``'PC1'``)."""
    return "".join(str(text or "").split()).casefold()


def same_mark(a: Any, b: Any) -> bool:
    """True when two cap marks are the same but for case and spaces (``' pc 1'`` is ``'PC1'``, never
    ``'PC10'``): how a mark asked for on the command line is found among checked and rejected caps."""
    return bool(_compact(a)) and _compact(a) == _compact(b)


@dataclass(frozen=True)
class FieldError:
    """One field's problem over rows of a table: the row positions and one message per row."""

    field: str
    rows: np.ndarray            # positions (int64)
    messages: tuple[str, ...]

    @classmethod
    def of(cls, field: str, rows: Any, messages: Any) -> "FieldError":
        arr = np.asarray(list(rows) if not isinstance(rows, np.ndarray) else rows, dtype=np.int64)
        return cls(field, arr, tuple(messages))


@dataclass(frozen=True)
class RejectedRow:
    """A row not checked: where it is (file, sheet, page, row), its mark when read, every reason."""

    source: dict[str, Any]
    errors: tuple[str, ...]
    mark: str = ""

    def to_dict(self) -> dict[str, Any]:
        return {"source": self.source, **({"mark": self.mark} if self.mark else {}), "errors": list(self.errors)}

    def is_mark(self, asked: str) -> bool:
        """True when this row's mark is ``asked``, exactly but for case and spaces (``PC1`` is not ``PC10``)."""
        return same_mark(self.mark, asked)


@dataclass(frozen=True)
class SkippedRow:
    """A row not read as a cap, with the reason and its first cell text ('' when none)."""

    source: dict[str, Any]
    reason: str
    text: str = ""

    def to_dict(self) -> dict[str, Any]:
        return {"source": self.source, "reason": self.reason, **({"text": self.text} if self.text else {})}


@dataclass(frozen=True)
class SkippedRawRow:
    """A row of a table as read, not taken as a cap: its page (PDF, else None), its number as the user
    sees it, the reason and the text of its first cell ('' when none)."""

    page: int | None
    row: int
    reason: str
    text: str = ""

    def located(self, file: str, sheet: str | None) -> SkippedRow:
        """The row as the review reports it, in the table's file and sheet."""
        return SkippedRow({"file": file, "sheet": sheet, "page": self.page, "row": self.row}, self.reason, self.text)


@dataclass(frozen=True)
class TableProblem:
    """A problem of a whole table, at its heading row (file, sheet, page, row), with every reason."""

    source: dict[str, Any]
    errors: tuple[str, ...]

    def to_dict(self) -> dict[str, Any]:
        return {"source": self.source, "errors": list(self.errors)}
