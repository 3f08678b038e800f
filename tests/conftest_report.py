"""The Review the report and revision tests read: the real engine's, on invented caps (no real project).

The invented caps (``CAPS``) are written as a schedule file (a CSV, or a workbook when the submission
name ends in ``.xlsx``: a title line, the heading row, one row per cap at the row its tuple names, a
blank row and one row the engine rejects) and checked with :func:`checker.review`. Everything that
describes the schedule and the rules comes from that run: the canonical caps frame, the pile centres
(``checker.geometry`` standard layouts), the profile's name, parameters and sources, the rules, the
rows read, the rejected row, the derived quantities and the working.

- :func:`engine_review` is that Review unmodified (the engine's own findings and remedy).
- :func:`make_review` puts a controlled list of findings rows (:func:`base_findings`, changed with
  :func:`set_result`) in place of the engine's findings, so that the writer and revision tests choose
  the severity of each comment, revision after revision. Each check's verdict line in the working
  follows those rows; the remedy and the method variants, which are results of the engine's own
  findings, are left out.
"""

from __future__ import annotations

import contextlib
import copy
import csv
import dataclasses
import functools
import math
import re
import tempfile
from pathlib import Path
from typing import Any

import pandas as pd

import checker
from checker.api import Review, WorkingLine
from checker.findings import FINDING_COLUMNS, Severity, sort_findings

# mark, piles, pile_dia, spacing, L, W, h, column (x, y, round), n_ed kN, bars_x, bars_y, row
CAPS = [
    ("PC1", 4, 600, 1800, 2600, 2600, 1200, (600, 600, False), 5200, "10H25", "10H25", 3),
    ("PC2", 2, 750, 1800, 3300, 1500, 900, (500, 400, False), 3100, "6H32", "H16@200", 4),
    ("PC3", 3, 450, 1350, 2100, 2400, 900, (450, 450, True), 2400, "8H20", "8H20", 5),
    ("PC4", 1, 900, 0, 1500, 1500, 1000, (500, 500, False), 1800, "H16@150", "H16@150", 6),
    ("PC5", 6, 600, 1800, 4500, 2100, 1400, (900, 500, False), 8600, "18H25", "12H20", 7),
]

SUBMISSION = "ashgrove-caps-rev1.csv"
TITLE = "Ashgrove Lane pumping station: pile cap schedule (invented)"
HEADINGS = ["Cap ref", "No. of piles", "Pile dia (mm)", "Pile centres (mm)", "Cap size L x W x D (mm)",
            "Column (mm)", "NEd (kN)", "Concrete", "Cover (mm)", "Bottom bars X", "Bottom bars Y"]
#: a row the engine rejects (a pile diameter in words, a cap size without its depth), after a blank row
REJECTED_ROW = ("PC9", 4, "six hundred", 1800, "2600 x 2600", "600x600", 5200, "C32/40", 75, "10H25", "10H25")
REJECTED_AT = 9


def _cells(cap) -> list[Any]:
    mark, n, d, s, L, W, h, (cx, cy, rnd), ned, bx, by, _row = cap
    column = f"{cx} dia" if rnd else f"{cx}x{cy}"
    return [mark, n, d, s if n > 1 else "", f"{L} x {W} x {h}", column, ned, "C32/40", 75, bx, by]


def schedule_rows(caps=CAPS, *, rejected_row: bool = True) -> list[list[Any]]:
    """The schedule as a person would type it: row 1 a title, row 2 the headings, each cap in the row
    its tuple names, then (``rejected_row``) a blank row and a row the engine rejects at row 9."""
    rows: list[list[Any]] = [[TITLE], list(HEADINGS)]
    for cap in sorted(caps, key=lambda c: c[-1]):
        while len(rows) < cap[-1] - 1:
            rows.append([])
        rows.append(_cells(cap))
    if rejected_row:
        while len(rows) < REJECTED_AT - 1:
            rows.append([])
        rows.append(list(REJECTED_ROW))
    return rows


def _write_schedule(path: Path, rows: list[list[Any]]) -> None:
    if path.suffix.lower() == ".xlsx":
        import openpyxl

        wb = openpyxl.Workbook()
        ws = wb.active
        ws.title = "Caps"
        for r, vals in enumerate(rows, start=1):
            for c, v in enumerate(vals, start=1):
                ws.cell(row=r, column=c).value = v
        wb.save(path)
    else:
        with open(path, "w", encoding="utf-8", newline="") as fh:
            csv.writer(fh).writerows(rows)


@functools.lru_cache(maxsize=64)
def _engine(caps: tuple, submission: str, rejected_row: bool) -> Review:
    """``checker.review`` of the invented caps written as the file ``submission`` (read under that bare
    name, as a user in its folder would give it, so the sources name the file and not a temporary
    folder). Cached: the tests share one run per schedule and only ever get copies (:func:`_copy`)."""
    with tempfile.TemporaryDirectory() as folder:
        _write_schedule(Path(folder) / submission, schedule_rows(list(caps), rejected_row=rejected_row))
        with contextlib.chdir(folder):
            rv = checker.review(submission)
    got = dict(zip(rv.caps["mark"].astype(str), rv.caps["src_row"]))
    assert got == {str(c[0]): c[-1] for c in caps}, f"the engine read other caps or rows: {got}"
    return rv


def _copy(rv: Review, **changes: Any) -> Review:
    """A Review a test may change without touching the cached run."""
    fresh: dict[str, Any] = dict(
        findings=rv.findings.copy(), caps=rv.caps.copy(), rejected=list(rv.rejected),
        profile_params=dict(rv.profile_params), profile_sources=dict(rv.profile_sources),
        rules=list(rv.rules), pile_xy={k: v.copy() for k, v in rv.pile_xy.items()},
        quantities=dict(rv.quantities), notes=list(rv.notes), skipped=list(rv.skipped),
        table_problems=list(rv.table_problems), unused_headings=list(rv.unused_headings),
        variants=dict(rv.variants),
    )
    fresh.update(changes)
    return dataclasses.replace(rv, **fresh)


def engine_review(caps=CAPS, *, submission: str = SUBMISSION, rejected_row: bool = True) -> Review:
    """The engine's own Review of the invented caps, findings and remedy included, unmodified."""
    return _copy(_engine(tuple(caps), submission, rejected_row))


@functools.lru_cache(maxsize=1)
def _rule_texts() -> dict[str, tuple[str, str]]:
    """rule id -> (title, clause), from the rules the engine applied."""
    return {r.id: (r.title, r.clause) for r in _engine(tuple(CAPS), SUBMISSION, True).rules}


def _f(cap, rule, severity, value, limit, unit, util, message, *, action="", row=None):
    title, clause = _rule_texts()[rule]   # a KeyError here: not a rule id of the rule files
    return dict(
        cap=cap, rule=rule, title=title, severity=severity, clause=clause, value=value, limit=limit,
        unit=unit, utilisation=util, message=message, action=action,
        src_file=SUBMISSION, src_sheet=None, src_page=None, src_row=row,
    )


def base_findings() -> list[dict[str, Any]]:
    """Invented results on real rule ids: some ok, some comments of every severity."""
    F = []
    # PC1: edge distance short on all four corner piles
    F += [
        _f("PC1", "pile-spacing", "ok", 1800.0, 1800.0, "mm", 1.0, "s = 1800 mm, 3φ = 1800 mm", row=3),
        _f("PC1", "edge-distance", "non-compliant", 100.0, 150.0, "mm", 1.5,
           "pile face 100 mm from the cap edge", action="Increase the cap to 2700 x 2700 mm or move the piles",
           row=3),
        _f("PC1", "strut-angle", "ok", 50.6, 45.0, "degrees", 0.89, "flattest strut 50.6°", row=3),
        _f("PC1", "tie-steel-x", "ok", 4909.0, 4210.0, "mm²", 0.86, "As,prov 4909 mm² >= As,req 4210 mm²", row=3),
    ]
    # PC2: short spacing, tie steel not enough (unsafe), flat strut
    F += [
        _f("PC2", "pile-spacing", "non-compliant", 1800.0, 2250.0, "mm", 1.25,
           "s = 1800 mm < 3φ = 2250 mm", action="Space the piles at 2250 mm or more", row=4),
        _f("PC2", "edge-distance", "ok", 375.0, 150.0, "mm", 0.4, "pile face 375 mm from the edge", row=4),
        _f("PC2", "strut-angle", "non-compliant", 41.2, 45.0, "degrees", 1.09,
           "flattest strut 41.2° from the horizontal", action="Deepen the cap", row=4),
        _f("PC2", "tie-steel-x", "unsafe", 4825.0, 5560.0, "mm²", 1.15,
           "As,prov 4825 mm² < As,req 5560 mm² for T = 2418 kN",
           action="Provide at least 5560 mm² along x (e.g. 7H32)", row=4),
    ]
    # PC3: the designer's pile load disagrees with the re-check; embedment not given
    F += [
        _f("PC3", "pile-spacing", "ok", 1350.0, 1350.0, "mm", 1.0, "s = 3φ", row=5),
        _f("PC3", "pile-embedment", "query", None, 75.0, "mm", None,
           "embedment not stated | cannot be verified", action="State the pile embedment", row=5),
        _f("PC3", "stated-vs-checked", "query", 905.0, 820.0, "kN", 1.10,
           "stated max pile load 820 kN, re-check gives 905 kN", action="Explain the difference", row=5),
    ]
    # PC4: everything met
    F += [
        _f("PC4", "edge-distance", "ok", 300.0, 150.0, "mm", 0.5, "pile face 300 mm from the edge", row=6),
        _f("PC4", "punching-column", "ok", 4.1, 5.3, "MPa", 0.77, "v_Ed 4.1 MPa <= v_Rd,max 5.3 MPa", row=6),
    ]
    # PC5: piles overhang the long sides; bar spacing advisory
    F += [
        _f("PC5", "pile-spacing", "ok", 1800.0, 1800.0, "mm", 1.0, "s = 3φ", row=7),
        _f("PC5", "edge-distance", "non-compliant", -150.0, 150.0, "mm", math.inf,
           "pile face 150 mm outside the cap edge", action="Widen the cap to 2700 mm", row=7),
        _f("PC5", "pile-in-plan", "unsafe", -150.0, 0.0, "mm", None,
           "piles P1-P6 stand partly outside the cap outline", action="Widen the cap", row=7),
        _f("PC5", "bar-spacing", "advisory", 95.0, 100.0, "mm", 1.05,
           "clear spacing 95 mm, 100 mm preferred for concreting", row=7),
    ]
    return F


#: the verdict line the engine ends each check's working with (checker.ruleset.evaluate.working_lines)
_VERDICT = re.compile(r"^\s*-> (?:%s): " % "|".join(re.escape(s.value) for s in Severity))


def _with_verdicts(rv: Review, findings: pd.DataFrame) -> tuple[Any, Any]:
    """The engine's working of each cap with each check's verdict line taken from ``findings``."""
    verdict = {(str(c), str(r)): f"  -> {s}: {m}" for c, r, s, m in zip(
        findings["cap"], findings["rule"], findings["severity"], findings["message"])}

    def working(mark: str) -> list[WorkingLine]:
        by_rule: dict[str, list[WorkingLine]] = {}
        for line in rv.working(mark):
            if not _VERDICT.match(line.text):
                by_rule.setdefault(line.rule, []).append(line)
        out = []
        for rule, lines in by_rule.items():
            out += lines
            if (str(mark), rule) in verdict:
                out.append(WorkingLine(rule, verdict[str(mark), rule]))
        return out

    def working_many(marks: list[str]) -> dict[str, dict[str, list[str]]] | None:
        many = rv.working_by_rule(marks)
        if many is None:
            return None
        return {m: {rule: [t for t in lines if not _VERDICT.match(t)]
                    + ([verdict[m, rule].strip()] if (m, rule) in verdict else [])
                    for rule, lines in per_rule.items()} for m, per_rule in many.items()}

    return working, working_many


def make_review(findings: list[dict[str, Any]] | None = None, caps=CAPS, *, rejected_row: bool = True,
                submission: str = SUBMISSION) -> Review:
    """The engine's Review of ``caps`` (written as the file ``submission``; ``rejected_row``: with the
    row it rejects) with ``findings`` (default :func:`base_findings`) in place of its findings."""
    engine = _engine(tuple(caps), submission, rejected_row)
    rows = copy.deepcopy(findings if findings is not None else base_findings())
    frame = pd.DataFrame(rows, columns=list(FINDING_COLUMNS))
    frame = sort_findings(frame) if len(frame) else frame
    working, working_many = _with_verdicts(engine, frame)
    return _copy(engine, findings=frame, remedy=None, variants={}, _working=working, _working_many=working_many)


def set_result(findings: list[dict[str, Any]], cap: str, rule: str, **changes) -> list[dict[str, Any]]:
    """Change (or add) one result in a findings list, returning the same list."""
    for r in findings:
        if r["cap"] == cap and r["rule"] == rule:
            r.update(changes)
            return findings
    base = _f(cap, rule, changes.pop("severity", "ok"), changes.pop("value", None),
              changes.pop("limit", None), changes.pop("unit", ""), changes.pop("utilisation", None),
              changes.pop("message", ""))
    base.update(changes)
    findings.append(base)
    return findings


def without_cap(caps, mark):
    return [c for c in caps if c[0] != mark]


META = {"project": "Ashgrove Lane pumping station (invented)", "checker": "R. Example",
        "submission": "Pile cap schedule, issue A", "date": "2026-12-02"}
