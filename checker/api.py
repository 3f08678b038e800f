"""Python API: ``checker.review(path_or_frame, profile=...)`` -> :class:`Review`.

Writers (checker/report) and the revision cycle read a Review and never re-compute.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Iterator, Mapping

import numpy as np
import pandas as pd

from checker.findings import WorkingLine  # the trace line type is the findings model's (re-exported)
from checker.records import RejectedRow, SkippedRow, TableProblem


@dataclass
class Review:
    findings: pd.DataFrame                 # FINDING_COLUMNS, sorted (checker.findings.sort_findings)
    caps: pd.DataFrame                     # canonical schedule frame of the caps checked
    rejected: list[RejectedRow]            # source, mark, errors (to_dict(): the JSON form)
    rows_read: int
    profile_name: str
    profile_params: dict[str, Any]         # resolved parameter values
    profile_sources: dict[str, str]        # parameter -> clause / provenance text
    rules: list[Any]                       # loaded rule objects: .id .title .clause .severity
    submission: str                        # display name of the submission (file name)
    rules_dir: str = ""
    pile_xy: Mapping[str, np.ndarray] = field(default_factory=dict)   # mark -> (m, 2) pile centres, mm
    quantities: dict[str, np.ndarray] = field(default_factory=dict)  # derived arrays, index = caps row
    notes: list[str] = field(default_factory=list)
    cases: pd.DataFrame | None = None      # one row per (cap, load case) read, or None (one ULS case per cap)
    case_rows: int = 0                     # rows read that only add a load case to a cap counted earlier
    skipped: list[SkippedRow] = field(default_factory=list)    # source, reason, text
    table_problems: list[TableProblem] = field(default_factory=list)  # source (heading row), errors
    unused_headings: list[str] = field(default_factory=list)       # headings of the schedule not read
    remedy: Any = None                     # checker.remedy.RemedyResult: what would pass (issue 16), or None
    variants: dict[str, Any] = field(default_factory=dict)  # rule id -> ruleset.evaluate.VariantOutcome
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

        out = {
            "rows_read": self.rows_read,
            "caps_checked": len(self.caps),
            "rows_rejected": len(self.rejected),
            "rows_skipped": len(self.skipped),
            "findings": count_by_severity(self.findings),
        }
        out.update(self.case_summary())
        return out

    def case_summary(self) -> dict[str, int]:
        """With load cases: ``load_cases`` (cases checked, all caps) and ``case_rows`` (rows read that
        only add a load case to a cap: rows_read == caps_checked + rows_rejected + case_rows)."""
        if self.cases is None:
            return {}
        return {"load_cases": int(len(self.cases)), "case_rows": int(self.case_rows)}


def check_schedule(schedule, ruleset, submission: str, *, messages: str = "all", remedy: bool = False) -> Review:
    """Derive every quantity once, evaluate every rule, and wrap it all in a Review.

    ``messages="issues"`` renders the message text of results that are not ``ok`` only (passed
    checks keep an empty message): the fast path for very large schedules on the terminal.
    ``remedy=True`` also searches, for every cap with an unsafe or non-compliant result, the least
    change that would meet the listed checks (``checker.remedy``; ``Review.remedy``)."""
    rv = _check_schedule(schedule, ruleset, submission, messages=messages)
    if remedy:
        from checker.remedy import search

        rv.remedy = search(rv.caps, rv.findings, ruleset, rv.profile_params,
                           coords=getattr(schedule, "coords", None), cases=getattr(schedule, "cases", None))
    return rv


def _check_schedule(schedule, ruleset, submission: str, *, messages: str = "all") -> Review:
    from checker.ruleset.derive import derive
    from checker.ruleset.evaluate import evaluate, numeric_params, working_lines

    caps = schedule.caps.reset_index(drop=True)
    params = dict(ruleset.profile.params)
    if getattr(schedule, "cases", None) is not None:
        return _check_cases(schedule, ruleset, submission, caps, params, messages)
    with np.errstate(all="ignore"):  # NaN/inf mark "not applicable" in the arrays; no warnings for users
        derived = derive(caps, schedule.coords, params)
        env: dict[str, Any] = dict(derived.q)
        env.update(numeric_params(params))
        outcomes: dict[str, Any] = {}
        findings = evaluate(ruleset, env, caps, render=True if messages == "all" else "issues", outcomes=outcomes)

    marks = caps["mark"].astype(str).to_numpy() if len(caps) else np.array([], dtype=object)
    pile_xy = PileCentres(marks, derived.X, derived.Y, derived.mask)

    applied = list(getattr(schedule, "applied", []) or [])
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
        lines = working_lines(ruleset, env, i, findings_of(mark))
        given = applied[i] if i < len(applied) else []
        if not given:
            return lines
        out, current = [], None
        for line in lines:                  # each check's working names the project-file values
            out.append(line)
            if line.rule != current:
                current = line.rule
                out.extend(WorkingLine(line.rule, f"  input: {t}") for t in given)
        return out

    many = _many_working(ruleset, env, findings, marks, applied, row_of)

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
        variants=outcomes,
        notes=list(getattr(schedule, "notes", []) or []),
        skipped=list(getattr(schedule, "skipped", []) or []),
        table_problems=list(getattr(schedule, "problems", []) or []),
        unused_headings=list(getattr(schedule, "unmapped", []) or []),
        _working=working,
        _working_many=many,
    )


class PileCentres(Mapping[str, np.ndarray]):
    """Each cap's pile centres by mark, an (m, 2) array [mm from the column centre], made when asked:
    the writers draw a few caps, and making every cap's array up front was a per-cap loop (half a
    second at 100,000 caps). ``rows``: the row of the pile arrays of each cap (its first load case)."""

    def __init__(self, marks: np.ndarray, X: np.ndarray, Y: np.ndarray, mask: np.ndarray,
                 rows: np.ndarray | None = None) -> None:
        self._row = dict(zip(marks.tolist(), (np.arange(len(marks)) if rows is None else rows).tolist()))
        self._X, self._Y, self._mask = X, Y, mask

    def __getitem__(self, mark: str) -> np.ndarray:
        r = self._row[mark]
        sel = self._mask[r]
        return np.column_stack([self._X[r][sel], self._Y[r][sel]])

    def __iter__(self) -> Iterator[str]:
        return iter(self._row)

    def __len__(self) -> int:
        return len(self._row)


def _many_working(ruleset, env: dict[str, Any], findings: pd.DataFrame, marks: np.ndarray,
                  applied: list, row_of: dict[str, int]):
    """Review.working_many for one checked schedule: every check's working of the wanted caps at once."""
    from checker.ruleset.evaluate import working_many

    def many(wanted: list[str]) -> dict[str, dict[str, list[str]]]:
        rows = [row_of[m] for m in dict.fromkeys(str(m) for m in wanted) if m in row_of]
        cols = working_many(ruleset, env, np.array(rows, dtype=np.int64))
        out = {marks[i]: {rid: [t.strip() for t in per_cap[k]] for rid, per_cap in cols.items()}
               for k, i in enumerate(rows)}
        for i in rows:                      # the project-file values under each check's heading
            given = applied[i] if i < len(applied) else []
            if given:
                for lines in out[marks[i]].values():
                    lines[1:1] = [f"input: {t}" for t in given]
        f = findings
        fmarks = f["cap"].astype(str).tolist()
        for m, r, sev, msg in zip(fmarks, f["rule"].tolist(), f["severity"].tolist(), f["message"].tolist()):
            cap_lines = out.get(m, {}).get(r)
            if cap_lines is not None:
                cap_lines.append(f"  -> {sev}: {msg}".strip())
        return out

    return many


def _check_cases(schedule, ruleset, submission: str, caps: pd.DataFrame, params: dict, messages: str) -> Review:
    """check_schedule over the load cases (checker/ruleset/cases.py)."""
    from checker.ruleset.cases import case_working, evaluate_cases, expand
    from checker.ruleset.derive import derive
    from checker.ruleset.evaluate import numeric_params

    ex = expand(caps, schedule.cases)
    with np.errstate(all="ignore"):
        derived = derive(ex.frame, schedule.coords, params)
        env: dict[str, Any] = dict(derived.q)
        env.update(numeric_params(params))
        outcomes: dict[str, Any] = {}
        findings, _gov = evaluate_cases(ruleset, env, ex, caps,
                                        render=True if messages == "all" else "issues", outcomes=outcomes)
    marks = caps["mark"].astype(str).to_numpy() if len(caps) else np.array([], dtype=object)
    pile_xy = PileCentres(marks, derived.X, derived.Y, derived.mask, rows=ex.starts)

    def working(mark: str):
        idx = np.flatnonzero(marks == str(mark))
        if idx.size == 0:
            return []
        with np.errstate(all="ignore"):
            return case_working(ruleset, env, ex, int(idx[0]), findings[findings["cap"] == str(mark)])

    # quantities per cap: its first load case (the working shows every case); a quantity named only by
    # serviceability rules (cases = "sls": the crack checks' stresses and wk) at their governing case
    quantities = {k: v[ex.starts] for k, v in derived.q.items()
                  if isinstance(v, np.ndarray) and v.ndim == 1 and v.shape[0] == ex.cap.size}
    quantities.update(_sls_quantities(ruleset, derived.q, _gov, ex.cap.size))
    return Review(
        findings=findings, caps=caps, rejected=list(schedule.rejected), rows_read=int(schedule.rows_read),
        profile_name=ruleset.profile.name, profile_params=params,
        profile_sources=dict(ruleset.profile.sources), rules=list(ruleset.rules), submission=submission,
        rules_dir=", ".join(ruleset.folders), pile_xy=pile_xy, quantities=quantities, variants=outcomes,
        notes=list(getattr(schedule, "notes", []) or []), cases=schedule.cases,
        case_rows=int(schedule.case_rows), _working=working,
    )


def _sls_quantities(ruleset, q: dict, gov: dict, n_rows: int) -> dict:
    """Quantities named only by serviceability rules, taken at those rules' governing case per cap."""
    from checker.ruleset.cases import rule_names
    from checker.ruleset.catalogue import LOAD_INDEPENDENT

    def named(r) -> set[str]:  # in its checks and in its texts (messages, actions, working)
        texts = [r.message, r.ok_message, r.action, *r.working] + [t for c in r.checks for t in (c.message, c.action)]
        return rule_names(r).union(*(t.names for t in texts if t is not None))

    sls = [r for r in ruleset.rules if r.cases == "sls" and r.id in gov]
    others = set().union(*(named(r) for r in ruleset.rules if r.cases != "sls"))
    out = {}
    for r in sls:
        for k in named(r) - others - LOAD_INDEPENDENT:
            v = q.get(k)
            if isinstance(v, np.ndarray) and v.ndim == 1 and v.shape[0] == n_rows:
                out[k] = v[gov[r.id]]
    return out


def review(source, profile: str = "uk-na", *, rules_dir: str | Path | None = None,
           overrides: dict[str, str] | None = None, mapping: str | Path | None = None,
           coords: str | Path | pd.DataFrame | None = None, pdf_strategy: str = "auto",
           max_pages: int | None = None, progress=None, drop_variants=(),
           messages: str = "all", max_rows: int | None = None, loads=None, sheet: str | None = None,
           defaults: Any = None, remedy: bool = True) -> Review:
    """Check a schedule given as a path (CSV, XLSX, PDF) or a pandas DataFrame.

    ``sheet``: the one sheet of a workbook to read (default: every sheet with schedule headings).
    ``defaults``: values for blank cells and missing columns, as a project file's ``[defaults]``
    table (a dict such as ``{"exposure": "XC2", "cover": 75}``) or parsed
    (:class:`checker.ingest.frame.Defaults`); each value applied is named in the notes and the working.
    Returns a :class:`Review`; ``.findings`` is a DataFrame with one row per cap and rule.
    ``remedy``: search the least change that would meet the listed checks for each failing cap
    (``Review.remedy``, see ``checker.remedy``); False skips it.
    Raises ``checker.ingest.errors.IngestError`` when nothing can be read, and
    ``checker.ruleset.loader.RuleFileError`` when a rule or profile file is refused.
    """
    from checker.ingest.frame import Defaults, read_defaults
    from checker.ingest.schedule import read_schedule, schedule_from_frame
    from checker.ruleset.loader import load_ruleset

    ruleset = load_ruleset(profile, rules_dir, overrides, drop_variants)
    if defaults is not None and not isinstance(defaults, Defaults):
        defaults = read_defaults(defaults)
    if isinstance(source, pd.DataFrame):
        sched = schedule_from_frame(source, mapping=mapping, coords=coords, loads=loads, defaults=defaults,
                                    max_rows=max_rows if max_rows else None)  # None: the default limit
        name = "<dataframe>"
    else:
        kwargs: dict[str, Any] = {"mapping": mapping, "coords": coords, "loads": loads, "defaults": defaults}
        if sheet is not None:
            kwargs["sheet"] = sheet
        if max_rows:
            kwargs["max_rows"] = max_rows
        if str(source).lower().endswith(".pdf"):
            kwargs.update(pdf_strategy=pdf_strategy, max_pages=max_pages)
            if progress is not None:
                kwargs["progress"] = progress
        sched = read_schedule(source, **kwargs)
        name = Path(source).name
    return check_schedule(sched, ruleset, name, messages=messages, remedy=remedy)
