"""Evaluate the rules over the derived table: one result per (cap, rule), columnar and vectorised.

Per rule and cap the outcome is one of, in this order of precedence:
not applicable (``applies`` false: ``ok`` with the reason), not met (the rule's severity, or an
override's), cannot be verified (an input the check needs is missing: ``query``), met (``ok``).
Where a rule has several checks, the governing one is the failing check with the highest
utilisation, else the highest utilisation of those that could be evaluated.
"""

from __future__ import annotations

import operator
import re
from dataclasses import dataclass
from typing import Any, Mapping, NamedTuple, Sequence, TypeAlias, cast

import numpy as np
import pandas as pd
from numpy.typing import NDArray

from checker.calcs._typing import Floats, Real
from checker.findings import SEVERITY_ORDER, SEVERITY_RANK, WorkingLine, empty_findings, severity_from_ranks
from checker.ruleset.catalogue import OUTPUT_SCALE, plain_words
from checker.ruleset.expr import Env
from checker.ruleset.loader import CompiledVariant, Rule, RuleSet

_RANK = SEVERITY_RANK
_SEV_OBJ = np.array(SEVERITY_ORDER, dtype=object)
_CMP = {">=": operator.ge, ">": operator.gt, "<=": operator.le, "<": operator.lt}
REL_TOL = 1e-9  # a value equal to its limit to this relative tolerance meets a >= or <= rule

Bools: TypeAlias = NDArray[np.bool_]
Combo: TypeAlias = tuple[CompiledVariant, ...]
"""One accepted method of each family of a rule's variants (the defaults first)."""
Variants: TypeAlias = dict[str, np.ndarray]
"""The spread of a result over the accepted methods: one array per cap for each of VARIANT_COLUMNS."""


def _as_array(x: Real, n: int) -> Floats:
    a = np.asarray(x, dtype=float)
    if a.ndim == 0:
        return np.full(n, float(a))
    return a


def _as_bool(x: Real, n: int) -> Bools:
    a = np.asarray(x)
    if a.dtype != bool:
        a = np.nan_to_num(a.astype(float), nan=0.0) != 0.0
    if a.ndim == 0:
        return np.full(n, bool(a))
    return a


def utilisation(value: np.ndarray, limit: np.ndarray, compare: str) -> Floats:
    """Demand over capacity: value/limit for a maximum (<=), limit/value for a minimum (>=)."""
    with np.errstate(all="ignore"):
        if compare in ("<=", "<"):
            u = np.where(limit != 0, value / limit, np.where(value > 0, np.inf, 0.0))
        else:
            u = np.where(value != 0, limit / value, np.where(limit > 0, np.inf, 0.0))
    return np.where(np.isnan(value) | np.isnan(limit), np.nan, u)


def meets(value: np.ndarray, limit: np.ndarray, compare: str) -> Bools:
    with np.errstate(all="ignore"):
        slack = REL_TOL * np.maximum(np.abs(limit), 1e-12)
        if compare == ">=":
            return cast(Bools, value >= limit - slack)
        if compare == "<=":
            return cast(Bools, value <= limit + slack)
        return cast(Bools, _CMP[compare](value, limit))


@dataclass
class RuleResult:
    rule: Rule
    severity: np.ndarray   # object array of severity strings
    value: np.ndarray      # output units
    limit: np.ndarray
    util: np.ndarray
    message: np.ndarray    # object array of str
    action: np.ndarray     # object array of str
    variants: Variants | None  # the spread over the accepted methods (VARIANT_COLUMNS arrays), or None
    code: np.ndarray       # severity rank per cap (index into SEVERITY_ORDER)
    case: np.ndarray | None = None  # the governing load case per cap (object: str or None), issue 11
    outcome: VariantOutcome | None = None  # each accepted method's figures (rules with variants)


VARIANT_VERDICTS = ("met", "not met", "cannot be verified")


@dataclass(frozen=True)
class VariantFigures:
    """One method combination of one rule for one cap, as the engine graded it (output units)."""

    combination: int      # index into VariantOutcome.names; 0 is the default (first of each family)
    name: str             # e.g. "strut-face + cct"
    check: str            # label of the governing check under that combination
    value: float
    limit: float
    utilisation: float
    verdict: str          # one of VARIANT_VERDICTS


@dataclass
class VariantOutcome:
    """Every method combination of one rule with variants, per cap, made once with its findings:
    what ``capcheck explain`` shows under "Accepted methods". Arrays are (combinations, caps),
    indexed by the row of the Review's caps (in the load-case path the cap's governing case)."""

    rule: str
    names: tuple[str, ...]      # combination names, the defaults first
    labels: tuple[str, ...]     # the rule's check labels (``check`` indexes them)
    check: np.ndarray           # int8: the governing check under each combination
    value: np.ndarray           # float64, output units
    limit: np.ndarray
    util: np.ndarray
    verdict: np.ndarray         # int8 index into VARIANT_VERDICTS
    applies: np.ndarray         # bool: the rule and one of its checks apply under the combination
    accepted: np.ndarray        # bool: graded for the cap (only the stated method where one is stated)
    shown: np.ndarray           # bool per cap: False where the result has no figures to split by method
                                # (a serviceability rule without service loads)

    def at(self, i: int) -> list[VariantFigures]:
        """The accepted, applicable combinations of cap row ``i``."""
        if not bool(self.shown[i]):
            return []
        return [VariantFigures(c, self.names[c], self.labels[int(self.check[c, i])], float(self.value[c, i]),
                               float(self.limit[c, i]), float(self.util[c, i]),
                               VARIANT_VERDICTS[int(self.verdict[c, i])])
                for c in range(len(self.names)) if self.applies[c, i] and self.accepted[c, i]]

    def ungraded(self, idx: np.ndarray, *, hide: bool) -> None:
        """Caps whose result the load-case path turns into a query (no usable case): every
        combination counts as accepted (the findings name none); ``hide`` where no figures remain."""
        self.accepted[:, idx] = True
        if hide:
            self.shown[idx] = False


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
    mixed: np.ndarray | None = None   # some accepted methods fail, others pass (a query)


class _Grading(NamedTuple):
    """A rule with several accepted method combinations, as :func:`_graded` graded it: per
    combination (rows) and cap (columns) whether it fails, was evaluated and is allowed by the
    schedule's stated method; per cap the counts, whether a method is stated, and the combination
    reported."""

    combos: list[Combo]
    outs: list[_Outcome]
    fails: Bools
    evaluated: Bools
    n_fail: np.ndarray
    n_eval: np.ndarray
    stated_any: Bools
    allowed: Bools
    reported: np.ndarray


def _governing(rule: Rule, env: Env, n: int) -> _Outcome:
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
                    missing[g, cols], cast(np.ndarray, USE.any(axis=0)))


class _Layer(dict[str, Any]):
    """Values set here on top of a base environment, which is read through, never copied."""

    def __init__(self, base: Env):
        super().__init__()
        self._base = base

    def __getitem__(self, k: str) -> Any:
        if dict.__contains__(self, k):
            return dict.__getitem__(self, k)
        return self._base[k]

    def __contains__(self, k: object) -> bool:
        return dict.__contains__(self, k) or k in self._base

    def get(self, k: str, default: Any = None) -> Any:
        if dict.__contains__(self, k):
            return dict.__getitem__(self, k)
        return self._base.get(k, default)


class _Overlay(dict[str, Any]):
    """The environment with some quantities replaced by a variant's own (no copy of the arrays)."""

    def __init__(self, base: Env, use: Sequence[tuple[str, str]]):
        super().__init__()
        self._base = base
        self._use = dict(use)

    def __getitem__(self, k: str) -> Any:
        return self._base[self._use.get(k, k)]

    def __contains__(self, k: object) -> bool:
        return (self._use.get(k, k) if isinstance(k, str) else k) in self._base

    def get(self, k: str, default: Any = None) -> Any:
        return self._base.get(self._use.get(k, k), default)


def variant_combos(rule: Rule) -> list[Combo]:
    """Every combination of one variant per family, the defaults (first of each family) first."""
    from itertools import product

    fams = rule.families
    per = [[v for v in rule.variants if v.family == f] for f in fams]
    return list(product(*per)) if per else []


def stated_methods(text_values: Sequence[object] | np.ndarray, rule: Rule) -> dict[str, np.ndarray]:
    """Per family, the variant name the schedule's ``method`` text states ('' if none)."""
    texts = np.asarray(text_values, dtype=object)
    out: dict[str, np.ndarray] = {}
    uniq = {t for t in texts.tolist() if isinstance(t, str) and t.strip()}
    for fam in rule.families:
        names = [v.name for v in rule.variants if v.family == fam]
        lookup: dict[str, str] = {}
        for t in uniq:
            # whole words only ("end-bearing piles" does not state the bearing node method);
            # "column width" written with a space reads as "column-width"
            words = re.split(r"[\s,;/()]+", t.lower().replace("_", "-"))
            words = [w for w in words if w]
            grams = set(words) | {f"{a}-{b}" for a, b in zip(words, words[1:])}
            hits = [nm for nm in names if nm in grams]
            lookup[t] = hits[0] if len(hits) == 1 else ""
        out[fam] = np.array([lookup.get(t, "") if isinstance(t, str) else "" for t in texts.tolist()],
                            dtype=object)
    return out


def numeric_params(params: dict[str, Any]) -> dict[str, float]:
    """The profile's numeric parameters as expression names (the text ones are options, not numbers)."""
    return {k: float(v) for k, v in params.items() if not isinstance(v, str)}


def evaluate_rule(rule: Rule, env: Env, n: int, *, render: bool | str = True,
                  methods: np.ndarray | None = None) -> RuleResult:
    """One rule over all caps, graded over its accepted method variants.

    ``render``: True renders every message; "issues" only those of results that are not ``ok``
    (passed checks get an empty message); False none (the benchmark's core). ``methods``: the
    schedule's stated-method texts per cap (the ``method`` column), or None.
    """
    combos = variant_combos(rule)
    grading: _Grading | None = None
    if len(combos) <= 1:
        use = [(a, b) for v in (combos[0] if combos else ()) for a, b in v.use]
        out = _governing(rule, _Overlay(env, use) if use else env, n)
    else:
        out, grading = _graded(rule, env, n, combos, methods)
    g, gv, gl, gu = out.g, out.value, out.limit, out.util
    g_fail, g_missing, applies, any_use = out.fail, out.missing, out.applies, out.any_use

    code = np.full(n, _RANK["ok"], dtype=np.int8)
    code[g_fail] = _RANK[rule.severity]
    notes = np.full(n, "", dtype=object)
    for o in rule.overrides:
        hit = g_fail & _as_bool(o.when(env), n)
        code[hit] = _RANK[o.severity]
        notes[hit] = o.note
    mixed = out.mixed
    if mixed is not None:
        code[mixed & ~g_missing] = _RANK["query"]
    code[g_missing & ~g_fail] = _RANK["query"]
    sev = _SEV_OBJ[code]
    not_app = ~applies | ~any_use

    scale = OUTPUT_SCALE.get(rule.unit, 1.0)
    out_v = gv * scale
    out_l = gl * scale
    out_v[not_app] = np.nan
    out_l[not_app] = np.nan
    gu = np.where(not_app, np.nan, gu)

    # messages, one template per check; rendered per group of rows that share a template
    message = np.full(n, "", dtype=object)
    action = np.full(n, "", dtype=object)
    if not render:
        return RuleResult(rule, sev, *_figures(rule, out_v, out_l, gu), message, action, None, code)
    _render_groups(rule, env, n, combos, grading, out_v, out_l, gu,
                   (g, g_fail, g_missing, not_app, sev), render, message, action)
    message[not_app] = f"Not applicable: {rule.not_applicable}."
    _missing_messages(rule, env, np.flatnonzero(g_missing & ~not_app), message, action)
    noted = np.flatnonzero(notes != "")
    if noted.size:
        _put(message, noted, [f"{m} {t}".strip() for m, t in zip(message[noted].tolist(), notes[noted].tolist())])
    variants: Variants | None = None
    outcome: VariantOutcome | None = None
    if grading is not None:
        variants = _grade_notes(rule, grading, not_app, message, action, scale, render)
        outcome = _variant_outcome(rule, grading, variants, scale)
    res = RuleResult(rule, sev, *_figures(rule, out_v, out_l, gu), message, action, variants, code,
                     outcome=outcome)
    if outcome is not None and rule.cases == "sls":
        # a serviceability result without figures (not applicable, or its inputs missing) is not split
        outcome.shown &= ~(np.isnan(res.value) & np.isnan(res.limit))
    return res


def _graded(rule: Rule, env: Env, n: int, combos: list[Combo],
            methods: np.ndarray | None) -> tuple[_Outcome, _Grading]:
    """A rule with several accepted method combinations: each combination's outcome, the one reported
    per cap (the first the schedule's stated method allows), and the grading kept for the notes.
    Some but not all accepted methods failing is a query, not a verdict."""
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

    def sel(attr: str) -> np.ndarray:
        return cast(np.ndarray, np.stack([getattr(o, attr) for o in outs])[first_allowed, cols])

    out = _Outcome(outs[0].applies, sel("g"), pick[first_allowed, cols], sel("limit"), sel("util"),
                   sel("fail"), sel("missing"), outs[0].any_use)
    fails = np.stack([o.fail for o in outs]) & allowed
    evaluated = np.stack([~o.missing for o in outs]) & allowed
    n_fail = fails.sum(axis=0)
    n_eval = evaluated.sum(axis=0)
    grading = _Grading(combos, outs, fails, evaluated, n_fail, n_eval, stated_any, allowed, first_allowed)
    # some but not all accepted methods fail: a query, not a verdict
    mixed = (n_fail > 0) & (n_fail < n_eval)
    all_fail = (n_fail > 0) & (n_fail == n_eval)
    out.fail = all_fail | (out.fail & ~mixed & (n_fail > 0))
    out.mixed = mixed
    return out, grading


def _render_groups(rule: Rule, env: Env, n: int, combos: list[Combo], grading: _Grading | None,
                   out_v: np.ndarray, out_l: np.ndarray, gu: np.ndarray,
                   state: tuple[np.ndarray, Bools, Bools, Bools, np.ndarray], render: bool | str,
                   message: np.ndarray, action: np.ndarray) -> None:
    """Render the messages per group of caps whose value and limit come from the same method: each
    cap's message uses the quantities of that method. ``state``: (g, fail, missing, not_app, sev)."""
    g, g_fail, g_missing, not_app, sev = state
    if grading is not None:
        reported = grading.reported
        groups = [(ci, reported == ci) for ci in np.unique(reported).tolist()]
        uses = [[(a, b) for v in c for a, b in v.use] for c in grading.combos]
    else:
        groups = [(0, np.ones(n, bool))]
        uses = [[(a, b) for v in (combos[0] if combos else ()) for a, b in v.use]]
    for ci, in_group in groups:
        menv = _Layer(env)
        for a, b in uses[ci]:
            menv[a] = env[b]
        menv["value"] = out_v
        menv["limit"] = out_l
        menv["utilisation"] = gu
        menv["unit"] = rule.unit
        _render_group(rule, menv, in_group, g, g_fail, g_missing, not_app, sev, render, message, action)


def _missing_messages(rule: Rule, env: Env, miss_rows: np.ndarray, message: np.ndarray,
                      action: np.ndarray) -> None:
    """The rows whose inputs are missing: which inputs, in plain words, and what to give."""
    if miss_rows.size:
        inputs = sorted(rule.names | {n_ for c in rule.checks if c.applies for n_ in c.applies.names})
        arrays = {nm: np.asarray(env[nm]) for nm in inputs if isinstance(env.get(nm), np.ndarray)}
        for idx in miss_rows.tolist():
            gaps = [nm for nm, a in arrays.items() if a.dtype.kind == "f" and np.isnan(a[idx])]
            words = list(dict.fromkeys(plain_words(nm) for nm in gaps)) or ["an input of this check"]
            what = words[0] if len(words) == 1 else ", ".join(words[:-1]) + " and " + words[-1]
            # "the x bars" are; "the number of piles" is (the head noun comes before "of")
            head = what.split(" of ")[0]
            plural = len(words) > 1 or (head.endswith("s") and not head.endswith("ss"))
            verb = "are" if plural else "is"
            message[idx] = f"Cannot be verified: {what} {verb} not given (or cannot be worked out from the schedule)."
            action[idx] = f"Give {what} so that the check can be made."


def _variant_outcome(rule: Rule, grading: _Grading, variants: Variants, scale: float) -> VariantOutcome:
    """Each combination's governing figures and verdict per cap, kept as the findings are made."""
    combos, outs, _fails, _evaluated, _nf, _ne, _st, allowed, _rep = grading
    live = np.not_equal(variants["variants_accepted"], None)  # type: ignore[call-overload]  # the stubs refuse None
    verdict = np.stack([np.where(o.missing, 2, np.where(o.fail, 1, 0)) for o in outs]).astype(np.int8)
    return VariantOutcome(
        rule.id, tuple(_combo_name(c) for c in combos), tuple(c.label for c in rule.checks),
        np.stack([o.g for o in outs]).astype(np.int8 if len(rule.checks) < 128 else np.int32),
        np.stack([o.value for o in outs]) * scale, np.stack([o.limit for o in outs]) * scale,
        np.stack([o.util for o in outs]), verdict,
        np.stack([o.applies & o.any_use for o in outs]), allowed | ~live, np.ones(live.size, bool))


def _figures(rule: Rule, value: np.ndarray, limit: np.ndarray,
             util: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The value, limit and utilisation a result carries: none for a condition rule (met or not met
    is its whole result; the numbers behind the comparison mean nothing to the reader)."""
    if rule.is_condition:
        blank = np.full(value.shape, np.nan)
        return blank, blank.copy(), blank.copy()
    return value, limit, util


def _render_group(rule: Rule, menv: _Layer, in_group: Bools, g: np.ndarray, g_fail: Bools, g_missing: Bools,
                  not_app: Bools, sev: np.ndarray, render: bool | str, message: np.ndarray,
                  action: np.ndarray) -> None:
    for j, c in enumerate(rule.checks):
        rows = np.flatnonzero(in_group & (g == j) & ~not_app & ~g_missing)
        if rows.size == 0:
            continue
        menv["label"] = c.label
        ok_rows = rows[~g_fail[rows]]
        if render == "issues":  # passed checks keep an empty message (fast path for big schedules)
            ok_rows = ok_rows[sev[ok_rows] != "ok"]
        bad_rows = rows[g_fail[rows]]
        mt = c.message or rule.message
        okt = c.message or rule.ok_message or rule.message
        _put(message, bad_rows, mt.render_many(menv, bad_rows))
        _put(message, ok_rows, okt.render_many(menv, ok_rows))
        at = c.action or rule.action
        _put(action, bad_rows, at.render_many(menv, bad_rows))


def _put(target: np.ndarray, rows: np.ndarray, texts: list[str]) -> None:
    if rows.size:
        vals = np.empty(rows.size, dtype=object)
        vals[:] = texts
        target[rows] = vals


def _combo_name(c: Combo) -> str:
    return " + ".join(v.name for v in c)


VARIANT_COLUMNS = ("variant_lo", "util_lo", "variant_hi", "util_hi", "variants_accepted", "variants_failing")


def _grade_notes(rule: Rule, grading: _Grading, not_app: Bools, message: np.ndarray, action: np.ndarray,
                 scale: float, render: bool | str) -> Variants:
    """Per cap: the spread over the accepted methods (vectorised columns), and, for the few caps
    where some accepted method fails, the sentence the comment carries."""
    combos, outs, fails, evaluated, n_fail, n_eval, stated_any, allowed, _reported = grading
    U = np.stack([o.util for o in outs])
    Uv = np.where(evaluated, U, np.nan)
    lo_i = np.argmin(np.where(np.isnan(Uv), np.inf, Uv), axis=0)
    hi_i = np.argmax(np.where(np.isnan(Uv), -np.inf, Uv), axis=0)
    names = np.array([_combo_name(c) for c in combos], dtype=object)
    n = U.shape[1]
    cols = np.arange(n)
    live = ~not_app & (n_eval > 0)
    # the stubs refuse None as a choice of np.where (an object array of None), or read it as the
    # one-argument form (a tuple)
    out: Variants = {
        "variant_lo": cast(np.ndarray, np.where(live, names[lo_i], None)),
        "util_lo": np.where(live, U[lo_i, cols], np.nan),
        "variant_hi": cast(np.ndarray, np.where(live, names[hi_i], None)),
        "util_hi": np.where(live, U[hi_i, cols], np.nan),
        "variants_accepted": np.where(live, "; ".join(names.tolist()), None).astype(object),  # type: ignore[call-overload]
        "variants_failing": np.where(live, "", None).astype(object),  # type: ignore[call-overload]
    }
    # the few caps where a method fails or the schedule states one: one text per distinct pattern
    special = np.flatnonzero(live & ((n_fail > 0) | stated_any))
    if special.size == 0:
        return out
    weights = (1 << np.arange(len(combos), dtype=np.int64))[:, None]
    f_code = (fails[:, special] * weights).sum(axis=0)
    e_code = (evaluated[:, special] * weights).sum(axis=0)
    a_code = (allowed[:, special] * weights).sum(axis=0)
    patterns = np.stack([f_code, e_code, a_code, stated_any[special].astype(np.int64)], axis=1)
    uniq, inv = np.unique(patterns, axis=0, return_inverse=True)
    texts: list[tuple[str, str, str, str]] = []
    for fc, ec, ac, st in uniq.tolist():
        fl = [bool(fc >> c & 1) for c in range(len(combos))]
        ev = [bool(ec >> c & 1) for c in range(len(combos))]
        failing = [names[c] for c in range(len(combos)) if fl[c]]
        passing = [names[c] for c in range(len(combos)) if ev[c] and not fl[c]]
        accepted = "; ".join(names[c] for c in range(len(combos)) if ac >> c & 1)
        note, act = "", ""
        if failing and passing:
            f_txt, p_txt = _split_by_family(rule, combos, fl, ev)
            note = f" Fails under {f_txt}; passes under {p_txt}: state the method used."
            act = "State the method used, or meet the check under every accepted method."
        elif failing and len(failing) > 1:
            note = " Fails under all accepted methods."
        if st:
            note += f" Graded against the method stated in the schedule ({accepted})."
        texts.append(("; ".join(failing), accepted, note, act))
    for i, u in zip(special.tolist(), inv.ravel().tolist()):
        failing_text, accepted, note, act = texts[u]
        out["variants_failing"][i] = failing_text
        out["variants_accepted"][i] = accepted
        if render and note:
            message[i] += note
            if act:
                action[i] = (action[i] + " " if action[i] else "") + act
    return out


def _split_by_family(rule: Rule, combos: list[Combo], fail_col: Sequence[bool],
                     eval_col: Sequence[bool]) -> tuple[str, str]:
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


def evaluate(ruleset: RuleSet, env: Env, caps: pd.DataFrame, *, render: bool | str = True,
             outcomes: dict[str, VariantOutcome] | None = None) -> pd.DataFrame:
    """All rules over all caps -> the findings frame (FINDING_COLUMNS), sorted. ``outcomes``, if
    given, receives each rule with variants' :class:`VariantOutcome` (rendered runs only)."""
    n = len(caps)
    if n == 0:
        return empty_findings()
    methods = caps["method"].to_numpy(dtype=object) if "method" in caps else None
    results: list[RuleResult] = []
    for r in ruleset.rules:
        res = evaluate_rule(r, env, n, methods=methods, render=render)
        if r.cases == "sls":  # one ULS case per cap here: no SLS case
            sls_on_uls(r, res, env, np.ones(n, bool), render)
        results.append(res)
        if outcomes is not None and res.outcome is not None:
            outcomes[r.id] = res.outcome
    return assemble(results, caps)


SLS_MISSING_MESSAGE = ("No SLS (service) load case is given for this cap{what}: the check needs the "
                       "quasi-permanent loads.")
SLS_MISSING_ACTION = ("Give the SLS (quasi-permanent) loads of this cap, or set the profile parameter qp_ratio "
                      "(quasi-permanent over ULS load).")


def sls_on_uls(rule: Rule, res: RuleResult, env: Env, rows: Bools, render: bool | str,
               whats: Mapping[int, str] | None = None) -> np.ndarray:
    """A serviceability rule (``cases = "sls"``) evaluated on the ULS case of caps that have no SLS
    case (``rows``): where the profile sets ``qp_ratio`` the quantities already carry the ratio, and
    the message says so; otherwise a ``query`` asking for the SLS loads. A rule that does not apply to
    the cap stays not applicable. Returns the caps made a query."""
    n = rows.size
    ratio = float(env.get("qp_ratio", np.nan))
    applies = _as_bool(rule.applies(env), n) if rule.applies is not None else np.ones(n, bool)
    idx = np.flatnonzero(rows & applies)
    if idx.size == 0:
        return idx
    if np.isfinite(ratio):
        if render:
            note = (f" No SLS load case is given: the service figures are qp_ratio = {ratio:g} times those "
                    f"of the ULS case (profile parameter).")
            said = idx[res.message[idx] != ""]
            _put(res.message, said, [m + note for m in res.message[said].tolist()])
        return idx[:0]
    res.code[idx] = _RANK["query"]
    res.severity[idx] = "query"
    res.value[idx] = np.nan
    res.limit[idx] = np.nan
    res.util[idx] = np.nan
    if res.variants is not None:
        for k, v in res.variants.items():
            v[idx] = np.nan if k.startswith("util") else None
    if res.outcome is not None:
        res.outcome.ungraded(idx, hide=True)
    if render:
        what = [""] * idx.size if whats is None else [whats[i] for i in idx.tolist()]
        _put(res.message, idx, [SLS_MISSING_MESSAGE.format(what=w) for w in what])
        _put(res.action, idx, [SLS_MISSING_ACTION] * idx.size)
    return idx


def assemble(results: list[RuleResult], caps: pd.DataFrame) -> pd.DataFrame:
    """Stack the per-rule results into one frame, in the one sort order (severity, cap, rule),
    sorted once with integer keys (np.lexsort) rather than on the text columns."""
    n = len(caps)
    k = len(results)
    marks = caps["mark"].astype(str).to_numpy(dtype=object)
    sev_rank = np.concatenate([r.code for r in results])
    cap_rank = np.empty(n, dtype=np.int64)
    cap_rank[np.argsort(marks, kind="stable")] = np.arange(n)
    ids = [r.rule.id for r in results]
    rule_rank = np.empty(k, dtype=np.int64)
    rule_rank[np.argsort(np.array(ids, dtype=object), kind="stable")] = np.arange(k)
    order = np.lexsort((np.repeat(rule_rank, n), np.tile(cap_rank, k), sev_rank))
    rule_codes = np.repeat(np.arange(k), n)[order]

    def per_rule(values: Sequence[object]) -> pd.Categorical:
        # text that is constant per rule: categorical codes, not 2.5 million string objects
        cats, inv = np.unique(np.array(values, dtype=object), return_inverse=True)
        return pd.Categorical.from_codes(inv[rule_codes], categories=cats)

    def src(col: str) -> np.ndarray | pd.Categorical:
        if col not in caps:
            return np.full(n * k, None, dtype=object)
        vals = caps[col].to_numpy(dtype=object)
        codes, uniq = pd.factorize(vals, use_na_sentinel=True)
        if len(uniq) <= 64 and not pd.api.types.is_numeric_dtype(caps[col]):
            return pd.Categorical.from_codes(np.tile(codes, k)[order], categories=pd.Index(uniq, dtype=object))
        return np.tile(vals, k)[order]

    cols: dict[str, np.ndarray | pd.Categorical] = {
        "cap": np.tile(marks, k)[order],
        "rule": per_rule(ids),
        "title": per_rule([r.rule.title for r in results]),
        "severity": severity_from_ranks(sev_rank[order]),
        "clause": per_rule([r.rule.clause for r in results]),
        "value": np.concatenate([r.value for r in results])[order],
        "limit": np.concatenate([r.limit for r in results])[order],
        "unit": per_rule([r.rule.output_unit for r in results]),
        "utilisation": np.concatenate([r.util for r in results])[order],
        "message": np.concatenate([np.asarray(r.message, dtype=object) for r in results])[order],
        "action": np.concatenate([np.asarray(r.action, dtype=object) for r in results])[order],
        "src_file": src("src_file"),
        "src_sheet": src("src_sheet"),
        "src_page": src("src_page"),
        "src_row": src("src_row"),
        "case": np.concatenate([r.case if r.case is not None else np.full(n, None, dtype=object)
                                for r in results])[order],
    }
    for c in VARIANT_COLUMNS:
        parts = []
        for r in results:
            if r.variants is not None:
                parts.append(np.asarray(r.variants[c], dtype=object if not c.startswith("util") else float))
            else:
                parts.append(np.full(n, np.nan if c.startswith("util") else None,
                                     dtype=float if c.startswith("util") else object))
        cols[c] = np.concatenate(parts)[order]
    return pd.DataFrame(cols)


def working_lines(ruleset: RuleSet, env: Env, i: int,
                  findings_for_cap: pd.DataFrame | None = None) -> list[WorkingLine]:
    """The calculation trace of cap row ``i``: per rule its clause, the formula lines with the
    values substituted, and the verdict."""
    scalar_env: dict[str, Any] = {}
    for k, v in env.items():
        if isinstance(v, np.ndarray) and v.ndim == 1:
            scalar_env[k] = v[i]
        else:
            scalar_env[k] = v
    verdicts: dict[str, dict[str, Any]] = {}
    if findings_for_cap is not None and len(findings_for_cap):
        f = findings_for_cap
        for rid, sev, msg in zip(f["rule"].tolist(), f["severity"].tolist(), f["message"].tolist()):
            verdicts[rid] = {"severity": sev, "message": msg}
    lines: list[WorkingLine] = []
    for rule in ruleset.rules:
        lines.append(WorkingLine(rule.id, f"{rule.title} [{rule.clause}]"))
        for t in rule.working:
            lines.append(WorkingLine(rule.id, "  " + t.render_one(scalar_env)))
        row = verdicts.get(rule.id)
        if row is not None:
            lines.append(WorkingLine(rule.id, f"  -> {row['severity']}: {row['message']}"))
    return lines


def working_many(ruleset: RuleSet, env: Env, index: np.ndarray) -> dict[str, list[list[str]]]:
    """The formula lines of :func:`working_lines` for the cap rows ``index`` at once, per rule:
    ``{rule id: [the heading, then each working template's line, for every row of index]}``
    (without the verdict line, which the caller takes from its findings row). Each template is
    rendered over the whole column (``render_many``), as the messages are, so writing the working
    of 10,000 caps costs one pass per template, not one per cap and template."""
    index = np.asarray(index, dtype=np.int64)
    out: dict[str, list[list[str]]] = {}
    for rule in ruleset.rules:
        head = f"{rule.title} [{rule.clause}]"
        cols = [t.render_many(env, index) for t in rule.working]
        out[rule.id] = [[head, *lines] for lines in zip(*cols)] if cols else [[head] for _ in range(len(index))]
    return out

