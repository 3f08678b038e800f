"""The method variants of one cap's strength checks: the small table ``capcheck explain`` prints.

For every rule of the cap that declares method variants (``[[rule.variant]]`` in the rule files),
one row per accepted combination of variants (one per family): the governing check's value,
limit, utilisation and whether it is met under that method. The figures come from the Review
alone: the rule is re-evaluated for that cap's row with the engine's own ``_governing`` over the
derived quantities, each variant's quantities swapped in through ``_Overlay``, so no formula is
written twice. Where the schedule states the method, only the stated variant was graded and only
its rows are shown (the findings row's ``variants_accepted`` says which).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from rich import box
from rich.table import Table
from rich.text import Text

from checker.report.palette import severity_text
from checker.ruleset.catalogue import OUTPUT_SCALE
from checker.ruleset.evaluate import _combo_name, _governing, _Overlay, variant_combos

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


def _cap_env(review, i: int) -> dict:
    """The evaluation environment of ``check_schedule`` (derived quantities, then the numeric
    profile parameters) cut down to one cap's row."""
    env: dict = {}
    for k, v in review.quantities.items():
        env[k] = v[i:i + 1] if isinstance(v, np.ndarray) and v.ndim == 1 else v
    env.update({k: float(v) for k, v in review.profile_params.items() if not isinstance(v, str)})
    return env


def variant_rows(review, mark: str) -> list[VariantRow]:
    """Every accepted method combination of every variant-bearing rule of cap ``mark``.

    Rules that do not apply to the cap (e.g. y ties of a two-pile cap) are left out."""
    if not review.quantities or not len(review.caps):
        return []
    idx = np.flatnonzero(review.caps["mark"].astype(str).to_numpy() == str(mark))
    if idx.size == 0:
        return []
    env = _cap_env(review, int(idx[0]))
    f = review.findings
    accepted_by_rule: dict[str, set[str]] = {}
    no_figures: set[str] = set()
    if len(f) and "variants_accepted" in f:
        mine = f[f["cap"].astype(str) == str(mark)]
        for rid, acc in zip(mine["rule"].astype(str), mine["variants_accepted"]):
            if isinstance(acc, str) and acc:
                accepted_by_rule[rid] = set(acc.split("; "))
        blank = mine["value"].astype(float).isna() & mine["limit"].astype(float).isna()
        no_figures = set(mine.loc[blank, "rule"].astype(str))
    out: list[VariantRow] = []
    for rule in review.rules:
        combos = variant_combos(rule) if getattr(rule, "variants", ()) else []
        if len(combos) <= 1:
            continue
        if getattr(rule, "cases", None) == "sls" and rule.id in no_figures:
            continue  # a serviceability check without service loads (a query asking for them): no figures
        accepted = accepted_by_rule.get(rule.id)
        scale = OUTPUT_SCALE.get(rule.unit, 1.0)
        rows: list[VariantRow] = []
        applies = False
        for ci, c in enumerate(combos):
            name = _combo_name(c)
            if accepted is not None and name not in accepted:
                continue
            o = _governing(rule, _Overlay(env, [(a, b) for v in c for a, b in v.use]), 1)
            if not (bool(o.applies[0]) and bool(o.any_use[0])):
                continue
            applies = True
            verdict = ("cannot be verified" if bool(o.missing[0])
                       else "not met" if bool(o.fail[0]) else "met")
            rows.append(VariantRow(rule.id, name, rule.checks[int(o.g[0])].label,
                                   float(o.value[0]) * scale, float(o.limit[0]) * scale, rule.unit,
                                   float(o.util[0]), verdict, ci == 0))
        if applies:
            out.extend(rows)
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
