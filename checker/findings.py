"""Findings: the one result model every writer reads.

A finding is one rule evaluated for one cap. The engine produces them as a columnar pandas frame
(fast over 100,000 caps); writers read its columns (:func:`records`).

The frame's ``severity`` column is an ordered categorical of :data:`SEVERITY_DTYPE`: its categories
are :class:`Severity` in order, worst first, so ``unsafe`` is the *minimum* and ``ok`` the maximum.
Its codes are the ranks of :data:`SEVERITY_RANK` (0 = worst); ``column.min()`` is the worst severity,
an ascending sort puts the worst first, and ``column <= "query"`` reads "query or worse". ``==``
against a string works as on text, and ``tolist()`` gives the plain strings the writers put out.
Every builder of a findings frame makes the column through :func:`as_severity` (from text) or
:func:`severity_from_ranks` (from the engine's ranks), or starts from :func:`empty_findings`;
:func:`severity_ranks` gives a column's ranks as integers. A single string is ranked with
:func:`severity_rank` or :data:`SEVERITY_RANK`.
"""

from __future__ import annotations

from dataclasses import dataclass
from enum import Enum
from typing import Any, Sequence

import numpy as np
import pandas as pd


class Severity(str, Enum):
    """The ordered severities of the brief, worst first: the one definition of their order, rank,
    label, colours and meaning. The findings frame holds them as the ordered categorical
    :data:`SEVERITY_DTYPE` (categories ``Severity.X.value``, worst first); the rank of a single
    string is :data:`SEVERITY_RANK`, built from this enum, and the rank of a column its codes."""

    label: str          # the terminal badge text
    style: str          # the terminal (rich) style
    fill: str           # fill colour (hex RGB) in the sheet, the HTML report and the sketches
    text_colour: str    # text colour (hex RGB) on the fill
    meaning: str        # what the severity means, in the words of this project (legends)

    def __new__(cls, value: str, *look: str) -> "Severity":
        """A member from its row below (``Severity(text)`` itself looks a member up by its value)."""
        member = str.__new__(cls, value)
        member._value_ = value
        member.label, member.style, member.fill, member.text_colour, member.meaning = look
        return member

    # value, label, terminal style, fill, text colour, meaning. The colours are this project's own: a
    # warm scale from brick red (strength check not met) to pale green (met), readable printed in greyscale.
    UNSAFE = ("unsafe", "UNSAFE", "bold white on red3", "B3261E", "FFFFFF", "a strength check is not met")
    NON_COMPLIANT = ("non-compliant", "NON-COMPLIANT", "bold dark_orange", "F4A259", "1F1F1F",
                     "a detailing rule is breached")
    QUERY = ("query", "QUERY", "bold magenta", "F6D55C", "1F1F1F",
             "cannot be verified from the submission, or the designer's figure disagrees with the re-check")
    ADVISORY = ("advisory", "ADVISORY", "cyan", "A8D5E2", "1F1F1F", "good practice, for the designer's consideration")
    OK = ("ok", "ok", "green", "C5E1A5", "1F1F1F", "the listed check was met on the figures submitted")

    @property
    def rank(self) -> int:
        """0 for the worst."""
        return SEVERITY_RANK[self.value]

    @classmethod
    def parse(cls, text: str) -> "Severity":
        try:
            return cls(str(text).strip().lower())
        except ValueError:
            raise ValueError(
                f"unknown severity {text!r}; expected one of {', '.join(SEVERITY_ORDER)}"
            ) from None


SEVERITY_ORDER: tuple[str, ...] = tuple(s.value for s in Severity)
#: severity text -> rank (0 = worst); the one rank map
SEVERITY_RANK: dict[str, int] = {s: i for i, s in enumerate(SEVERITY_ORDER)}
COMMENT_SEVERITIES: tuple[str, ...] = tuple(s.value for s in Severity if s is not Severity.OK)
#: the dtype of the findings frame's ``severity`` column: ordered, worst first (``unsafe`` is the
#: minimum), so its codes are the ranks of SEVERITY_RANK
SEVERITY_DTYPE = pd.CategoricalDtype(list(SEVERITY_ORDER), ordered=True)


def as_severity(values: pd.Series | Sequence[str | None]) -> pd.Series:
    """``values`` as a findings ``severity`` column (:data:`SEVERITY_DTYPE`); a column that already
    is one comes back as it is. Missing values stay missing; any other text raises ValueError."""
    s = values if isinstance(values, pd.Series) else pd.Series(values, dtype=object)
    if s.dtype == SEVERITY_DTYPE:
        return s
    unknown = s.notna() & ~s.isin(SEVERITY_ORDER)
    if unknown.any():
        raise ValueError(
            f"unknown severity {s[unknown].iloc[0]!r}; expected one of {', '.join(SEVERITY_ORDER)}"
        )
    return s.astype(SEVERITY_DTYPE)


def severity_from_ranks(ranks: np.ndarray) -> pd.Categorical:
    """A findings ``severity`` column (:data:`SEVERITY_DTYPE`) from ranks (0 = worst): the ranks are
    its codes, so nothing is looked up."""
    return pd.Categorical.from_codes(ranks, dtype=SEVERITY_DTYPE)


def severity_ranks(values: pd.Series | Sequence[str | None]) -> np.ndarray:
    """The ranks of a severity column (0 = worst; int64), from its categorical codes; a missing
    severity ranks after ``ok``, as in :func:`severity_rank`."""
    codes = as_severity(values).cat.codes.to_numpy(dtype=np.int64)
    return np.where(codes < 0, len(SEVERITY_ORDER), codes)


FINDING_COLUMNS: tuple[str, ...] = (
    "cap",
    "rule",
    "title",
    "severity",
    "clause",
    "value",
    "limit",
    "unit",
    "utilisation",
    "message",
    "action",
    "src_file",
    "src_sheet",
    "src_page",
    "src_row",
    # the spread over the accepted methods, for rules with method variants (else empty)
    "variant_lo",
    "util_lo",
    "variant_hi",
    "util_hi",
    "variants_accepted",
    "variants_failing",
    # the governing load case of the result (issue 11): None for a single-case schedule or a check that
    # does not depend on the loads
    "case",
)


def empty_findings() -> pd.DataFrame:
    """A findings frame of no rows: FINDING_COLUMNS, ``severity`` of SEVERITY_DTYPE."""
    return pd.DataFrame({c: pd.Series(dtype=SEVERITY_DTYPE if c == "severity" else object)
                         for c in FINDING_COLUMNS})


@dataclass(frozen=True)
class WorkingLine:
    """One line of the calculation trace of one cap: the rule it belongs to and its text."""

    rule: str
    text: str


def comment_key(cap: str, rule: str) -> str:
    return f"{cap}/{rule}"


def none_if_nan(v: Any) -> Any:
    """None for None, NaN, pd.NA and NaT; the value otherwise."""
    return _none_if_nan(v)


def _none_if_nan(v: Any) -> Any:
    if v is None:
        return None
    t = type(v)
    if t is str or t is int:
        return v
    if t is float:
        return None if v != v else v
    try:
        if pd.isna(v):
            return None
    except (TypeError, ValueError):
        return v
    return v


def source_of(row: pd.Series | dict) -> dict[str, Any]:
    page = _none_if_nan(row.get("src_page"))
    r = _none_if_nan(row.get("src_row"))
    return {
        "file": _none_if_nan(row.get("src_file")),
        "sheet": _none_if_nan(row.get("src_sheet")),
        "page": int(page) if page is not None else None,
        "row": int(r) if r is not None else None,
    }


def describe_source(src: dict[str, Any]) -> str:
    """'page 2, row 7' / 'sheet Caps, row 4' / 'row 4'."""
    parts = []
    if src.get("page") is not None:
        parts.append(f"page {src['page']}")
    elif src.get("sheet"):
        parts.append(f"sheet {src['sheet']}")
    if src.get("row") is not None:
        parts.append(f"row {src['row']}")
    return ", ".join(parts)


def sort_findings(frame: pd.DataFrame) -> pd.DataFrame:
    """The one sort order used everywhere: severity (worst first), cap, rule. The ``severity``
    column comes back as :data:`SEVERITY_DTYPE`, whose order is the sort's."""
    out = frame.assign(severity=as_severity(frame["severity"]))
    return out.sort_values(["severity", "cap", "rule"], kind="stable").reset_index(drop=True)


def severity_rank(severity: str) -> int:
    """0 = worst; unknown or empty severities rank after ``ok``."""
    return SEVERITY_RANK.get(str(severity).strip().lower(), len(SEVERITY_ORDER))


def records(frame: pd.DataFrame, columns: tuple[str, ...] | list[str] | None = None) -> list[dict[str, Any]]:
    """The rows of ``frame`` as dicts, like ``frame.to_dict("records")`` (NaN stays NaN, numpy
    scalars become Python ones) but built column by column: one ``tolist()`` per column instead
    of boxing every cell, several times faster on a findings frame of 250,000 rows."""
    if frame is None or len(frame) == 0:
        return []
    cols = [c for c in (columns or frame.columns) if c in frame.columns]
    values = [frame[c].tolist() for c in cols]
    return [dict(zip(cols, row)) for row in zip(*values)]


def comment_records(frame: pd.DataFrame) -> list[dict[str, Any]]:
    """The findings rows that become comments (severity not ``ok``), in the one sort order."""
    if frame is None or len(frame) == 0:
        return []
    return records(sort_findings(frame[frame["severity"] != "ok"]))


def count_by_severity(frame: pd.DataFrame) -> dict[str, int]:
    counts = frame["severity"].value_counts()
    return {s: int(counts.get(s, 0)) for s in COMMENT_SEVERITIES}


def worst_by_cap(frame: pd.DataFrame) -> pd.Series:
    """Worst severity per cap (index: cap mark, in the order first seen; values of SEVERITY_DTYPE):
    the minimum of the ordered categorical."""
    return as_severity(frame["severity"]).groupby(frame["cap"], sort=False, observed=True).min()
