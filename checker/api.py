"""Python API: ``checker.review(path_or_frame, profile=...)`` -> :class:`Review`.

Filled in by the spine; writers (checker/report) and the revision cycle read a Review and never
re-compute.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd


@dataclass(frozen=True)
class WorkingLine:
    """One line of the calculation trace for one cap."""

    rule: str
    text: str


@dataclass
class Review:
    findings: pd.DataFrame                 # FINDING_COLUMNS, sorted (checker.findings.sort_findings)
    caps: pd.DataFrame                     # canonical schedule frame of the caps checked
    rejected: list[dict[str, Any]]         # [{"source": {...}, "errors": [...]}]
    rows_read: int
    profile_name: str
    profile_params: dict[str, Any]         # resolved parameter values
    profile_sources: dict[str, str]        # parameter -> clause / provenance text
    rules: list[Any]                       # loaded rule objects: .id .title .clause .severity
    submission: str                        # display name of the submission (file name)
    rules_dir: str = ""
    pile_xy: dict[str, np.ndarray] = field(default_factory=dict)   # mark -> (m, 2) pile centres, mm
    quantities: dict[str, np.ndarray] = field(default_factory=dict)  # derived arrays, index = caps row
    notes: list[str] = field(default_factory=list)
    _working: Any = None                   # callable(mark) -> list[WorkingLine]

    def working(self, mark: str) -> list[WorkingLine]:
        if self._working is None:
            return []
        return self._working(mark)

    def quantity(self, mark: str, name: str) -> float:
        idx = np.flatnonzero(self.caps["mark"].to_numpy() == mark)
        if idx.size == 0 or name not in self.quantities:
            return float("nan")
        return float(self.quantities[name][idx[0]])
