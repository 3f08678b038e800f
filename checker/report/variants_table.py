"""The method variants of one cap's strength checks: the small table ``capcheck explain`` prints.

For every rule of the cap that declares method variants (``[[rule.variant]]`` in the rule files),
one row per accepted combination of variants (one per family): the governing check's value,
limit, utilisation and whether it is met under that method. The figures are read from the
Review's ``variants`` (one :class:`checker.ruleset.evaluate.VariantOutcome` per rule with
variants), which the engine keeps as it grades the findings (in the load-case path, on the
governing case the findings report): nothing is evaluated here. Where the schedule states the
method, only the stated variant was graded and only its rows are shown.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np
from rich import box
from rich.table import Table
from rich.text import Text

from checker.report.palette import severity_text

VERDICT_STYLE = {"met": "green", "not met": "bold red", "cannot be verified": "magenta"}


@dataclass(frozen=True)
class VariantRow:
    """One accepted method combination of one rule, for one cap (output units)."""

    rule: str
    variant: str          # the combination, e.g. "strut-face + cct"
    check: str            # label of the governing check under that combination
    value: float
    limit: float
    unit: str
    utilisation: float
    verdict: str          # "met", "not met" or "cannot be verified"
    default: bool         # the first variant of every family (the default method)


def variant_rows(review: Any, mark: str) -> list[VariantRow]:
    """Every accepted method combination of every variant-bearing rule of cap ``mark``.

    Rules that do not apply to the cap (e.g. y ties of a two-pile cap) are left out."""
    outcomes = review.variants
    if not outcomes or not len(review.caps):
        return []
    idx = np.flatnonzero(review.caps["mark"].astype(str).to_numpy() == str(mark))
    if idx.size == 0:
        return []
    i = int(idx[0])
    out: list[VariantRow] = []
    for rule in review.rules:
        oc = outcomes.get(rule.id)
        if oc is None:
            continue
        out.extend(VariantRow(rule.id, v.name, v.check, v.value, v.limit, rule.unit, v.utilisation, v.verdict,
                              v.combination == 0) for v in oc.at(i))
    return out


def _num(v: float, unit: str) -> str:
    if v is None or math.isnan(v):
        return ""
    if math.isinf(v):
        return "∞"
    a = abs(v)
    s = f"{v:.2f}" if unit == "MPa" or a < 10 else f"{v:.1f}" if a < 100 else f"{v:,.0f}"
    return f"{s} {unit}".strip()


def _util(u: float) -> str:
    if u is None or math.isnan(u):
        return ""
    return "∞" if math.isinf(u) else f"{u:.2f}"


def variants_table(review, mark: str) -> Table | None:
    """The variants table of cap ``mark``; None when none of its applicable rules has variants."""
    rows = variant_rows(review, mark)
    if not rows:
        return None
    f = review.findings
    sev: dict[str, str] = {}
    if len(f):
        mine = f[f["cap"].astype(str) == str(mark)]
        sev = dict(zip(mine["rule"].astype(str), mine["severity"]))
    t = Table(title=f"Accepted methods for cap {mark}", header_style="bold", title_justify="left",
              box=box.SIMPLE_HEAD, pad_edge=False,
              caption="A check is unsafe only where every accepted method fails it; where the methods "
                      "disagree it is a query.", caption_justify="left")
    t.add_column("check", no_wrap=True)
    t.add_column("method", min_width=16, overflow="fold")
    t.add_column("value", justify="right", no_wrap=True)
    t.add_column("limit", justify="right", no_wrap=True)
    t.add_column("util", justify="right", no_wrap=True)
    t.add_column("verdict", no_wrap=True)
    # the rule's first check is its main one; name the check only where another one governs
    main = {r.id: r.checks[0].label for r in review.rules if getattr(r, "checks", ())}
    current = None
    for r in rows:
        first = r.rule != current
        if first and current is not None:
            t.add_section()
        current = r.rule
        method = Text(r.variant)
        if r.default:
            method.append("\n(default)", style="dim")
        if r.check != main.get(r.rule, r.check):
            method.append(f"\ngoverned by: {r.check}", style="dim")
        check = Text("")
        if first:
            check = Text(r.rule, style="bold")
            if r.rule in sev:
                check.append("\n").append_text(severity_text(sev[r.rule]))
        t.add_row(check, method, _num(r.value, r.unit), _num(r.limit, r.unit), _util(r.utilisation),
                  Text(r.verdict, style=VERDICT_STYLE[r.verdict]))
    return t
