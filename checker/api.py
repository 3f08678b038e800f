"""Python API: ``checker.review(path_or_frame, profile=...)`` -> :class:`Review`.

Writers (checker/report) and the revision cycle read a Review and never re-compute.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from checker.findings import WorkingLine  # the trace line type is the findings model's (re-exported)


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
    _working_many: Any = None              # callable(marks) -> {mark: {rule: working lines}}

    def working(self, mark: str) -> list[WorkingLine]:
        if self._working is None:
            return []
        return self._working(mark)

    def working_by_rule(self, marks: list[str]) -> dict[str, dict[str, list[str]]] | None:
        """``{mark: {rule id: working lines}}`` for many caps at once, each rule's lines as in
        :meth:`working` (heading, formula lines, verdict), stripped of their indent; None when
        this Review cannot do it in one pass (then ask :meth:`working` cap by cap)."""
        if self._working_many is None:
            return None
        return self._working_many(marks)

    def quantity(self, mark: str, name: str) -> float:
        idx = np.flatnonzero(self.caps["mark"].astype(str).to_numpy() == str(mark))
        if idx.size == 0 or name not in self.quantities:
            return float("nan")
        return float(self.quantities[name][idx[0]])

    def summary(self) -> dict[str, Any]:
        from checker.findings import count_by_severity

        return {
            "rows_read": self.rows_read,
            "caps_checked": len(self.caps),
            "rows_rejected": len(self.rejected),
            "findings": count_by_severity(self.findings),
        }


def _numeric_params(params: dict[str, Any]) -> dict[str, float]:
    return {k: float(v) for k, v in params.items() if not isinstance(v, str)}


def check_schedule(schedule, ruleset, submission: str, *, messages: str = "all") -> Review:
    """Derive every quantity once, evaluate every rule, and wrap it all in a Review.

    ``messages="issues"`` renders the message text of results that are not ``ok`` only (passed
    checks keep an empty message): the fast path for very large schedules on the terminal."""
    from checker.ruleset.derive import derive
    from checker.ruleset.evaluate import evaluate, working_lines, working_many

    caps = schedule.caps.reset_index(drop=True)
    params = dict(ruleset.profile.params)
    with np.errstate(all="ignore"):  # NaN/inf mark "not applicable" in the arrays; no warnings for users
        derived = derive(caps, schedule.coords, params)
        env: dict[str, Any] = dict(derived.q)
        env.update(_numeric_params(params))
        findings = evaluate(ruleset, env, caps, render=True if messages == "all" else "issues")

    marks = caps["mark"].astype(str).to_numpy() if len(caps) else np.array([], dtype=object)
    pile_xy: dict[str, np.ndarray] = {}
    if len(caps):
        X, Y, mask = derived.X, derived.Y, derived.mask
        for i, m in enumerate(marks.tolist()):
            sel = mask[i]
            pile_xy[m] = np.column_stack([X[i][sel], Y[i][sel]])

    row_of = {m: i for i, m in reversed(list(enumerate(marks.tolist())))}
    by_cap: dict[str, np.ndarray] = {}   # findings rows of each cap, grouped once on first use

    def findings_of(mark: str) -> pd.DataFrame:
        if not by_cap and len(findings):
            by_cap.update(findings.groupby(findings["cap"].astype(str), sort=False).indices)
        return findings.iloc[by_cap.get(str(mark), np.array([], dtype=np.int64))]

    def working(mark: str):
        i = row_of.get(str(mark))
        if i is None:
            return []
        return working_lines(ruleset, env, i, findings_of(mark))

    def many(wanted: list[str]) -> dict[str, dict[str, list[str]]]:
        rows = [row_of[m] for m in dict.fromkeys(str(m) for m in wanted) if m in row_of]
        cols = working_many(ruleset, env, np.array(rows, dtype=np.int64))
        out = {marks[i]: {rid: [t.strip() for t in per_cap[k]] for rid, per_cap in cols.items()}
               for k, i in enumerate(rows)}
        f = findings
        fmarks = f["cap"].astype(str).tolist()
        for m, r, sev, msg in zip(fmarks, f["rule"].tolist(), f["severity"].tolist(), f["message"].tolist()):
            lines = out.get(m, {}).get(r)
            if lines is not None:
                lines.append(f"  -> {sev}: {msg}".strip())
        return out

    return Review(
        findings=findings,
        caps=caps,
        rejected=list(schedule.rejected),
        rows_read=int(schedule.rows_read),
        profile_name=ruleset.profile.name,
        profile_params=params,
        profile_sources=dict(ruleset.profile.sources),
        rules=list(ruleset.rules),
        submission=submission,
        rules_dir=", ".join(ruleset.folders),
        pile_xy=pile_xy,
        quantities=dict(derived.q),
        notes=list(getattr(schedule, "notes", []) or []),
        _working=working,
        _working_many=many,
    )


def review(source, profile: str = "uk-na", *, rules_dir: str | Path | None = None,
           overrides: dict[str, str] | None = None, mapping: str | Path | None = None,
           coords: str | Path | None = None, pdf_strategy: str = "auto",
           max_pages: int | None = None, progress=None, drop_variants=(),
           messages: str = "all", max_rows: int | None = None) -> Review:
    """Check a schedule given as a path (CSV, XLSX, PDF) or a pandas DataFrame.

    Returns a :class:`Review`; ``.findings`` is a DataFrame with one row per cap and rule.
    Raises ``checker.ingest.errors.IngestError`` when nothing can be read, and
    ``checker.ruleset.loader.RuleFileError`` when a rule or profile file is refused.
    """
    from checker.ingest.schedule import read_schedule, schedule_from_frame
    from checker.ruleset.loader import load_ruleset

    ruleset = load_ruleset(profile, rules_dir, overrides, drop_variants)
    if isinstance(source, pd.DataFrame):
        sched = schedule_from_frame(source, mapping=mapping, **({"max_rows": max_rows} if max_rows else {}))
        name = "<dataframe>"
    else:
        kwargs: dict[str, Any] = {"mapping": mapping, "coords": coords}
        if max_rows:
            kwargs["max_rows"] = max_rows
        if str(source).lower().endswith(".pdf"):
            kwargs.update(pdf_strategy=pdf_strategy, max_pages=max_pages)
            if progress is not None:
                kwargs["progress"] = progress
        sched = read_schedule(source, **kwargs)
        name = Path(source).name
    return check_schedule(sched, ruleset, name, messages=messages)
