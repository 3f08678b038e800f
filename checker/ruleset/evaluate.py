"""Evaluate the rules over the derived table: one result per (cap, rule), columnar and vectorised.

Per rule and cap the outcome is one of, in this order of precedence:
not applicable (``applies`` false: ``ok`` with the reason), not met (the rule's severity, or an
override's), cannot be verified (an input the check needs is missing: ``query``), met (``ok``).
Where a rule has several checks, the governing one is the failing check with the highest
utilisation, else the highest utilisation of those that could be evaluated.
"""

from __future__ import annotations

import operator
from dataclasses import dataclass

import numpy as np
import pandas as pd

from checker.findings import FINDING_COLUMNS, sort_findings
from checker.ruleset.catalogue import OUTPUT_SCALE
from checker.ruleset.loader import Rule, RuleSet

_CMP = {">=": operator.ge, ">": operator.gt, "<=": operator.le, "<": operator.lt}
REL_TOL = 1e-9  # a value equal to its limit to this relative tolerance meets a >= or <= rule


def _as_array(x, n: int) -> np.ndarray:
    a = np.asarray(x, dtype=float)
    if a.ndim == 0:
        return np.full(n, float(a))
    return a


def _as_bool(x, n: int) -> np.ndarray:
    a = np.asarray(x)
    if a.dtype != bool:
        a = np.nan_to_num(a.astype(float), nan=0.0) != 0.0
    if a.ndim == 0:
        return np.full(n, bool(a))
    return a


def utilisation(value: np.ndarray, limit: np.ndarray, compare: str) -> np.ndarray:
    """Demand over capacity: value/limit for a maximum (<=), limit/value for a minimum (>=)."""
    with np.errstate(all="ignore"):
        if compare in ("<=", "<"):
            u = np.where(limit != 0, value / limit, np.where(value > 0, np.inf, 0.0))
        else:
            u = np.where(value != 0, limit / value, np.where(limit > 0, np.inf, 0.0))
    return np.where(np.isnan(value) | np.isnan(limit), np.nan, u)


def meets(value: np.ndarray, limit: np.ndarray, compare: str) -> np.ndarray:
    with np.errstate(all="ignore"):
        slack = REL_TOL * np.maximum(np.abs(limit), 1e-12)
        if compare == ">=":
            return value >= limit - slack
        if compare == "<=":
            return value <= limit + slack
        return _CMP[compare](value, limit)


@dataclass
class RuleResult:
    rule: Rule
    severity: np.ndarray   # object array of severity strings
    value: np.ndarray      # output units
    limit: np.ndarray
    util: np.ndarray
    message: list[str]
    action: list[str]


def evaluate_rule(rule: Rule, env: dict, n: int, *, render: bool = True) -> RuleResult:
    """One rule over all caps. ``render=False`` skips the message text (the benchmark's core)."""
    applies = _as_bool(rule.applies(env), n) if rule.applies is not None else np.ones(n, bool)
    k = len(rule.checks)
    V = np.empty((k, n))
    L = np.empty((k, n))
    U = np.empty((k, n))
    OKc = np.empty((k, n), bool)
    USE = np.empty((k, n), bool)
    for j, c in enumerate(rule.checks):
        v = _as_array(c.value(env), n)
        lim = _as_array(c.limit(env), n)
        use = applies & (_as_bool(c.applies(env), n) if c.applies is not None else True)
        V[j], L[j], USE[j] = v, lim, use
        U[j] = utilisation(v, lim, c.compare)
        OKc[j] = meets(v, lim, c.compare)
    missing = USE & (np.isnan(V) | np.isnan(L))
    failing = USE & ~missing & ~OKc
    # governing check: failing first (by utilisation), then missing, then the highest utilisation
    cat = np.where(failing, 3, np.where(missing, 2, np.where(USE, 1, 0)))
    best = cat.max(axis=0)
    score = np.where(cat == best, np.nan_to_num(U, nan=0.0, posinf=1e300, neginf=-1e300), -np.inf)
    g = np.argmax(score, axis=0)
    cols = np.arange(n)
    any_use = USE.any(axis=0)
    gv, gl, gu = V[g, cols], L[g, cols], U[g, cols]
    g_fail = failing[g, cols]
    g_missing = missing[g, cols]

    sev = np.full(n, "ok", dtype=object)
    sev[g_fail] = rule.severity
    notes = np.full(n, "", dtype=object)
    for o in rule.overrides:
        hit = g_fail & _as_bool(o.when(env), n)
        sev[hit] = o.severity
        notes[hit] = o.note
    sev[g_missing] = "query"
    not_app = ~applies | ~any_use

    scale = OUTPUT_SCALE.get(rule.unit, 1.0)
    out_v = gv * scale
    out_l = gl * scale
    out_v[not_app] = np.nan
    out_l[not_app] = np.nan
    gu = np.where(not_app, np.nan, gu)

    # messages, one template per check; rendered per group of rows that share a template
    message = [""] * n
    action = [""] * n
    if not render:
        return RuleResult(rule, sev, out_v, out_l, gu, message, action)
    menv = dict(env)
    menv["value"] = out_v
    menv["limit"] = out_l
    menv["utilisation"] = gu
    menv["unit"] = rule.unit
    for j, c in enumerate(rule.checks):
        rows = np.flatnonzero((g == j) & ~not_app & ~g_missing)
        if rows.size == 0:
            continue
        menv["label"] = c.label
        ok_rows = rows[~g_fail[rows]]
        bad_rows = rows[g_fail[rows]]
        mt = c.message or rule.message
        okt = c.message or rule.ok_message or rule.message
        for idx, text in zip(bad_rows.tolist(), mt.render_many(menv, bad_rows)):
            message[idx] = text
        for idx, text in zip(ok_rows.tolist(), okt.render_many(menv, ok_rows)):
            message[idx] = text
        at = c.action or rule.action
        for idx, text in zip(bad_rows.tolist(), at.render_many(menv, bad_rows)):
            action[idx] = text
    for idx in np.flatnonzero(not_app).tolist():
        message[idx] = f"Not applicable: {rule.not_applicable}."
    miss_rows = np.flatnonzero(g_missing & ~not_app)
    if miss_rows.size:
        names = sorted(rule.names | {n_ for c in rule.checks if c.applies for n_ in c.applies.names})
        arrays = {nm: np.asarray(env[nm]) for nm in names if isinstance(env.get(nm), np.ndarray)}
        for idx in miss_rows.tolist():
            gaps = [nm for nm, a in arrays.items() if a.dtype.kind == "f" and np.isnan(a[idx])]
            what = ", ".join(gaps) if gaps else "an input"
            message[idx] = f"Cannot be verified: {what} not given or not computable."
            action[idx] = f"Provide {what} so that the check can be made."
    for idx in np.flatnonzero(notes != "").tolist():
        message[idx] = f"{message[idx]} {notes[idx]}".strip()
    return RuleResult(rule, sev, out_v, out_l, gu, message, action)


def evaluate(ruleset: RuleSet, env: dict, caps: pd.DataFrame) -> pd.DataFrame:
    """All rules over all caps -> the findings frame (FINDING_COLUMNS), sorted."""
    n = len(caps)
    if n == 0:
        return pd.DataFrame({c: pd.Series(dtype=object) for c in FINDING_COLUMNS})
    results = [evaluate_rule(r, env, n) for r in ruleset.rules]
    return assemble(results, caps)


def assemble(results: list[RuleResult], caps: pd.DataFrame) -> pd.DataFrame:
    n = len(caps)
    k = len(results)
    rep = lambda col: np.tile(caps[col].to_numpy(dtype=object), k) if col in caps else np.full(n * k, None)  # noqa: E731
    frame = pd.DataFrame(
        {
            "cap": np.tile(caps["mark"].astype(str).to_numpy(dtype=object), k),
            "rule": np.repeat(np.array([r.rule.id for r in results], dtype=object), n),
            "title": np.repeat(np.array([r.rule.title for r in results], dtype=object), n),
            "severity": np.concatenate([r.severity for r in results]),
            "clause": np.repeat(np.array([r.rule.clause for r in results], dtype=object), n),
            "value": np.concatenate([r.value for r in results]),
            "limit": np.concatenate([r.limit for r in results]),
            "unit": np.repeat(np.array([r.rule.unit for r in results], dtype=object), n),
            "utilisation": np.concatenate([r.util for r in results]),
            "message": [m for r in results for m in r.message],
            "action": [a for r in results for a in r.action],
            "src_file": rep("src_file"),
            "src_sheet": rep("src_sheet"),
            "src_page": rep("src_page"),
            "src_row": rep("src_row"),
        }
    )
    return sort_findings(frame)


def working_lines(ruleset: RuleSet, env: dict, i: int, findings_for_cap: pd.DataFrame | None = None):
    """The calculation trace of cap row ``i``: per rule its clause, the formula lines with the
    values substituted, and the verdict."""
    from checker.api import WorkingLine

    scalar_env = {}
    for k, v in env.items():
        if isinstance(v, np.ndarray) and v.ndim == 1:
            scalar_env[k] = v[i]
        else:
            scalar_env[k] = v
    verdicts = {}
    if findings_for_cap is not None:
        for row in findings_for_cap.to_dict("records"):
            verdicts[row["rule"]] = row
    lines = []
    for rule in ruleset.rules:
        lines.append(WorkingLine(rule.id, f"{rule.title} [{rule.clause}]"))
        for t in rule.working:
            lines.append(WorkingLine(rule.id, "  " + t.render_one(scalar_env)))
        row = verdicts.get(rule.id)
        if row is not None:
            lines.append(WorkingLine(rule.id, f"  -> {row['severity']}: {row['message']}"))
    return lines
