"""A small synthetic Review for the report and revision tests (invented data, no real project).

The real engine is being written at the same time; these tests build the Review by hand so that
the writers can be checked on their own. Standard layouts follow the brief's table (pile centres
relative to the column centre, spacing s).
"""

from __future__ import annotations

import copy
import math
from typing import Any

import numpy as np
import pandas as pd

from checker.api import Review, WorkingLine
from checker.findings import FINDING_COLUMNS, sort_findings
from checker.records import RejectedRow


def layout(n: int, s: float) -> np.ndarray:
    if n == 1:
        pts = [(0.0, 0.0)]
    elif n == 2:
        pts = [(-s / 2, 0.0), (s / 2, 0.0)]
    elif n == 3:
        pts = [(0.0, s / math.sqrt(3)), (-s / 2, -s / (2 * math.sqrt(3))), (s / 2, -s / (2 * math.sqrt(3)))]
    elif n == 4:
        pts = [(-s / 2, s / 2), (s / 2, s / 2), (-s / 2, -s / 2), (s / 2, -s / 2)]
    elif n == 5:
        a = s / math.sqrt(2)
        pts = [(-a, a), (a, a), (0.0, 0.0), (-a, -a), (a, -a)]
    elif n == 6:
        pts = [(x, y) for y in (s / 2, -s / 2) for x in (-s, 0.0, s)]
    else:
        raise ValueError(n)
    return np.array(pts, dtype=float)


# mark, piles, pile_dia, spacing, L, W, h, column (x, y, round), n_ed kN, bars_x, bars_y, row
CAPS = [
    ("PC1", 4, 600, 1800, 2600, 2600, 1200, (600, 600, False), 5200, "10H25", "10H25", 3),
    ("PC2", 2, 750, 1800, 3300, 1500, 900, (500, 400, False), 3100, "6H32", "H16@200", 4),
    ("PC3", 3, 450, 1350, 2100, 2400, 900, (450, 450, True), 2400, "8H20", "8H20", 5),
    ("PC4", 1, 900, 0, 1500, 1500, 1000, (500, 500, False), 1800, "H16@150", "H16@150", 6),
    ("PC5", 6, 600, 1800, 4500, 2100, 1400, (900, 500, False), 8600, "18H25", "12H20", 7),
]


def caps_frame(caps=CAPS, src_file: str = "ashgrove-caps-rev1.csv") -> pd.DataFrame:
    rows = []
    for mark, n, d, s, L, W, h, (cx, cy, rnd), ned, bx, by, row in caps:
        rows.append(dict(
            mark=mark, piles=float(n), pile_dia=float(d), pile_spacing=float(s),
            cap_length=float(L), cap_width=float(W), cap_depth=float(h),
            column_x=float(cx), column_y=float(cy), column_round=rnd, n_ed=ned * 1000.0,
            concrete="C32/40", fck=32.0, fyk=500.0, cover=75.0, bars_x=bx, bars_y=by,
            src_file=src_file, src_sheet=None, src_page=None, src_row=row,
        ))
    return pd.DataFrame(rows)


def _f(cap, rule, severity, value, limit, unit, util, message, *, title=None, clause=None,
       action="", row=None):
    return dict(
        cap=cap, rule=rule, title=title or RULE_TITLES.get(rule, rule), severity=severity,
        clause=clause or RULE_CLAUSES.get(rule, ""), value=value, limit=limit, unit=unit,
        utilisation=util, message=message, action=action,
        src_file="ashgrove-caps-rev1.csv", src_sheet=None, src_page=None, src_row=row,
    )


RULE_TITLES = {
    "pile-spacing": "Pile spacing at least 3 pile diameters",
    "edge-distance": "Cap edge beyond the pile face",
    "pile-embedment": "Pile head embedded in the cap",
    "strut-angle": "Strut inclination",
    "tie-steel-x": "Tie steel along x",
    "punching-column": "Compression at the column face",
    "stated-vs-checked": "Designer's figures against the re-check",
    "bar-spacing": "Clear spacing of the bottom bars",
    "pile-in-plan": "Pile inside the cap outline",
}
RULE_CLAUSES = {
    "pile-spacing": "common practice",
    "edge-distance": "common practice",
    "pile-embedment": "common practice",
    "strut-angle": "EN 1992-1-1 6.5",
    "tie-steel-x": "EN 1992-1-1 6.5.3",
    "punching-column": "EN 1992-1-1 6.4.5 (3)",
    "stated-vs-checked": "re-check",
    "bar-spacing": "EN 1992-1-1 8.2",
    "pile-in-plan": "common practice",
}


def base_findings() -> list[dict[str, Any]]:
    """Invented results: some ok, some comments of every severity."""
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


def working_lines(mark: str) -> list[WorkingLine]:
    return [
        WorkingLine("geometry", f"{mark}: pile centres from the standard layout"),
        WorkingLine("tie-steel-x", "T = N_Ed * l / (n * z)   (invented trace line)"),
        WorkingLine("tie-steel-x", "As,req = T / (fyk / 1.15)"),
    ]


def make_review(findings: list[dict[str, Any]] | None = None, caps=CAPS, *,
                rejected: list[RejectedRow] | None = None,
                submission: str = "ashgrove-caps-rev1.csv") -> Review:
    rows = copy.deepcopy(findings if findings is not None else base_findings())
    frame = pd.DataFrame(rows, columns=list(FINDING_COLUMNS))
    frame = sort_findings(frame) if len(frame) else frame
    caps_df = caps_frame(caps, src_file=submission)
    pile_xy = {c[0]: layout(c[1], c[3]) for c in caps}
    if rejected is None:
        rejected = [RejectedRow({"file": submission, "sheet": None, "page": None, "row": 9},
                                ("pile_dia: 'six hundred' is not a number", "cap_depth missing"), "PC9")]
    return Review(
        findings=frame,
        caps=caps_df,
        rejected=rejected,
        rows_read=len(caps) + len(rejected),
        profile_name="uk-na",
        profile_params={},
        profile_sources={},
        rules=[],
        submission=submission,
        rules_dir="rules/",
        pile_xy=pile_xy,
        _working=working_lines,
    )


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
