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
    variants: list | None = None   # per cap: None, or the grading over the accepted methods (dict)


@dataclass
class _Outcome:
    """The governing check of one rule under one set of quantities (one method variant)."""

    applies: np.ndarray
    g: np.ndarray
    value: np.ndarray
    limit: np.ndarray
    util: np.ndarray
    fail: np.ndarray
    missing: np.ndarray
    any_use: np.ndarray


def _governing(rule: Rule, env, n: int) -> _Outcome:
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
    return _Outcome(applies, g, V[g, cols], L[g, cols], U[g, cols], failing[g, cols],
                    missing[g, cols], USE.any(axis=0))


class _Overlay(dict):
    """The environment with some quantities replaced by a variant's own (no copy of the arrays)."""

    def __init__(self, base, use):
        super().__init__()
        self._base = base
        self._use = dict(use)

    def __getitem__(self, k):
        return self._base[self._use.get(k, k)]

    def __contains__(self, k):
        return self._use.get(k, k) in self._base

    def get(self, k, default=None):
        return self._base.get(self._use.get(k, k), default)


def variant_combos(rule: Rule) -> list[tuple]:
    """Every combination of one variant per family, the defaults (first of each family) first."""
    from itertools import product

    fams = rule.families
    per = [[v for v in rule.variants if v.family == f] for f in fams]
    return list(product(*per)) if per else []


def stated_methods(text_values, rule: Rule) -> dict[str, np.ndarray]:
    """Per family, the variant name the schedule's ``method`` text states ('' if none)."""
    texts = np.asarray(text_values, dtype=object)
    out: dict[str, np.ndarray] = {}
    uniq = {t for t in texts.tolist() if isinstance(t, str) and t.strip()}
    for fam in rule.families:
        names = [v.name for v in rule.variants if v.family == fam]
        lookup = {}
        for t in uniq:
            norm = " " + " ".join(t.lower().replace("_", "-").replace("/", " ").split()) + " "
            hits = [nm for nm in names if f" {nm} " in norm or f"-{nm} " in norm or f" {nm}-" in norm
                    or nm.replace("-", " ") in norm]
            lookup[t] = hits[0] if len(hits) == 1 else ""
        out[fam] = np.array([lookup.get(t, "") if isinstance(t, str) else "" for t in texts.tolist()],
                            dtype=object)
    return out


def evaluate_rule(rule: Rule, env: dict, n: int, *, render: bool = True, methods=None) -> RuleResult:
    """One rule over all caps, graded over its accepted method variants.

    ``render=False`` skips the message text (the benchmark's core). ``methods``: the schedule's
    stated-method texts per cap (the ``method`` column), or None.
    """
    combos = variant_combos(rule)
    grading = None
    if len(combos) <= 1:
        use = [(a, b) for v in (combos[0] if combos else ()) for a, b in v.use]
        out = _governing(rule, _Overlay(env, use) if use else env, n)
    else:
        outs = [_governing(rule, _Overlay(env, [(a, b) for v in c for a, b in v.use]), n) for c in combos]
        allowed = np.ones((len(combos), n), bool)
        stated_any = np.zeros(n, bool)
        if methods is not None:
            stated = stated_methods(methods, rule)
            for fam, names in stated.items():
                has = names != ""
                stated_any |= has
                fi = rule.families.index(fam)
                for ci, c in enumerate(combos):
                    allowed[ci] &= ~has | (names == c[fi].name)
        first_allowed = np.argmax(allowed, axis=0)
        pick = np.stack([o.value for o in outs])  # shape (combos, n)
        cols = np.arange(n)
        sel = lambda attr: np.stack([getattr(o, attr) for o in outs])[first_allowed, cols]  # noqa: E731
        out = _Outcome(outs[0].applies, sel("g"), pick[first_allowed, cols], sel("limit"), sel("util"),
                       sel("fail"), sel("missing"), outs[0].any_use)
        fails = np.stack([o.fail for o in outs]) & allowed
        evaluated = np.stack([~o.missing for o in outs]) & allowed
        n_fail = fails.sum(axis=0)
        n_eval = evaluated.sum(axis=0)
        grading = (combos, outs, fails, evaluated, n_fail, n_eval, stated_any, allowed)
        # some but not all accepted methods fail: a query, not a verdict
        mixed = (n_fail > 0) & (n_fail < n_eval)
        all_fail = (n_fail > 0) & (n_fail == n_eval)
        out.fail = all_fail | (out.fail & ~mixed & (n_fail > 0))
        out.mixed = mixed
    g, gv, gl, gu = out.g, out.value, out.limit, out.util
    g_fail, g_missing, applies, any_use = out.fail, out.missing, out.applies, out.any_use

    sev = np.full(n, "ok", dtype=object)
    sev[g_fail] = rule.severity
    notes = np.full(n, "", dtype=object)
    for o in rule.overrides:
        hit = g_fail & _as_bool(o.when(env), n)
        sev[hit] = o.severity
        notes[hit] = o.note
    mixed = getattr(out, "mixed", None)
    if mixed is not None:
        sev[mixed & ~g_missing] = "query"
    sev[g_missing & ~g_fail] = "query"
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
    variants = None
    if grading is not None:
        variants = _grade_notes(rule, grading, not_app, message, action, scale, render)
    return RuleResult(rule, sev, out_v, out_l, gu, message, action, variants)


def _combo_name(c) -> str:
    return " + ".join(v.name for v in c)


def _grade_notes(rule, grading, not_app, message, action, scale, render):
    """Per cap: the spread over the accepted methods, and the sentence the comment carries."""
    combos, outs, fails, evaluated, n_fail, n_eval, stated_any, allowed = grading
    U = np.stack([o.util for o in outs])
    Uv = np.where(evaluated, U, np.nan)
    with np.errstate(all="ignore"):
        lo_i = np.nanargmin(np.where(np.isnan(Uv), np.inf, Uv), axis=0)
        hi_i = np.nanargmax(np.where(np.isnan(Uv), -np.inf, Uv), axis=0)
    names = [_combo_name(c) for c in combos]
    n = U.shape[1]
    result: list = [None] * n
    rows = np.flatnonzero(~not_app & (n_eval > 0))
    if not render:
        return result
    for i in rows.tolist():
        failing = [names[c] for c in range(len(combos)) if fails[c, i]]
        passing = [names[c] for c in range(len(combos)) if evaluated[c, i] and not fails[c, i]]
        result[i] = {
            "accepted": [names[c] for c in range(len(combos)) if allowed[c, i]],
            "failing": failing,
            "passing": passing,
            "lowest": {"variant": names[lo_i[i]], "utilisation": _r(U[lo_i[i], i])},
            "highest": {"variant": names[hi_i[i]], "utilisation": _r(U[hi_i[i], i])},
            "stated_method": bool(stated_any[i]),
        }
        if failing and passing:
            f_txt, p_txt = _split_by_family(rule, combos, fails[:, i], evaluated[:, i])
            message[i] += f" Fails under {f_txt}; passes under {p_txt}: state the method used."
            action[i] = (action[i] + " " if action[i] else "") + \
                "State the method used, or meet the check under every accepted method."
        elif failing and len(failing) > 1:
            message[i] += " Fails under all accepted methods."
        if stated_any[i]:
            message[i] += f" Graded against the method stated in the schedule ({', '.join(result[i]['accepted'])})."
    return result


def _split_by_family(rule, combos, fail_col, eval_col) -> tuple[str, str]:
    """Name the methods a verdict turns on: the family whose variant alone decides it, if one does
    ("fails under strut-face; passes under bearing"), else every combination."""
    fam = rule.families
    for fi, f in enumerate(fam):
        F = {c[fi].name for c, x, e in zip(combos, fail_col, eval_col) if x and e}
        P = {c[fi].name for c, x, e in zip(combos, fail_col, eval_col) if e and not x}
        if F and P and not (F & P):
            other = [g for g in fam if g != f]
            suffix = f" (whatever the {', '.join(other)} method)" if other else ""
            return ", ".join(sorted(F)) + suffix, ", ".join(sorted(P))
    failing = [_combo_name(c) for c, x, e in zip(combos, fail_col, eval_col) if x and e]
    passing = [_combo_name(c) for c, x, e in zip(combos, fail_col, eval_col) if e and not x]
    return ", ".join(failing), ", ".join(passing)


def _r(x):
    x = float(x)
    return None if (x != x or x in (float("inf"), float("-inf"))) else round(x, 4)


def evaluate(ruleset: RuleSet, env: dict, caps: pd.DataFrame) -> pd.DataFrame:
    """All rules over all caps -> the findings frame (FINDING_COLUMNS), sorted."""
    n = len(caps)
    if n == 0:
        return pd.DataFrame({c: pd.Series(dtype=object) for c in FINDING_COLUMNS})
    methods = caps["method"].to_numpy(dtype=object) if "method" in caps else None
    results = [evaluate_rule(r, env, n, methods=methods) for r in ruleset.rules]
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
            "variants": [v for r in results for v in (r.variants if r.variants is not None else [None] * n)],
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
