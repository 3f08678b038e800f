"""Load cases (issue 11): every load-dependent check over every case of a cap, the governing case reported.

The canonical frame is expanded to one row per (cap, load case) (:func:`expand`), derived once over the
whole expanded frame, and each rule is evaluated according to what it reads (:func:`evaluate_cases`):

* a rule that names only load-independent quantities (``catalogue.LOAD_INDEPENDENT``) and profile
  parameters gives the same result in every case: it is evaluated once per cap, on the cap's first row,
  and its result names no case;
* ``cases = "uls"`` (the default for any other rule): evaluated over every row at once without message
  text, reduced per cap to the governing ULS case (worst severity first, then the highest utilisation)
  with one ``np.lexsort``, then evaluated again on the governing rows only, with its messages; a cap
  without a ULS case is a ``query`` saying so;
* ``cases = "capacity-basis"`` (pile-reaction): as "uls" over the cases of the pile capacity's basis,
  ULS reactions against a ULS resistance, SLS reactions (self-weight unfactored) against a working
  capacity; a cap with no case of that basis is a ``query`` that shows what the other basis implies;
* ``cases = "envelope"`` (the designer's figures): the largest value of each load-dependent quantity
  over the ULS cases of the cap, as a designer's maximum pile load or tie force is.

No loop runs over caps or cases; the group operations are ``reduceat`` and ``lexsort`` over the
contiguous rows of each cap.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, cast

import numpy as np
import pandas as pd

from checker.findings import SEVERITY_ORDER, SEVERITY_RANK, WorkingLine, empty_findings
from checker.ruleset.catalogue import LOAD_INDEPENDENT, QUANTITIES
from checker.ruleset.evaluate import (
    SLS_MISSING_ACTION,
    SLS_MISSING_MESSAGE,
    Bools,
    RuleResult,
    VariantOutcome,
    _put,
    assemble,
    evaluate_rule,
    sls_on_uls,
)
from checker.ruleset.expr import Env
from checker.ruleset.loader import Rule, RuleSet
from checker.units import FROM_INTERNAL, TO_INTERNAL

_RANK = SEVERITY_RANK
_SEV = np.array(SEVERITY_ORDER, dtype=object)
LOAD_COLUMNS = ("n_ed", "mx_ed", "my_ed")


@dataclass
class Expanded:
    """The expanded frame and where its rows come from."""

    frame: pd.DataFrame        # caps repeated, one row per (cap, case), loads of the case, column case_kind
    cap: np.ndarray            # (N,) the cap (row of caps) of each row, non-decreasing
    starts: np.ndarray         # (n,) first row of each cap
    counts: np.ndarray         # (n,) rows of each cap
    name: np.ndarray           # (N,) object: the case name shown ('' for a cap's only unnamed case)
    kind: np.ndarray           # (N,) object: 'ULS', 'SLS' or '' (a cap given no loads)
    basis: np.ndarray          # (N,) object: the basis of the cap's pile capacity, 'ULS' or 'SLS'


def expand(caps: pd.DataFrame, cases: pd.DataFrame) -> Expanded:
    """One row per (cap, case); a cap with no case keeps one row without loads (kind '')."""
    n = len(caps)
    ccap = cases["cap"].to_numpy(dtype=np.int64)
    counts = np.bincount(ccap, minlength=n) if n else np.zeros(0, np.int64)
    lone = np.flatnonzero(counts == 0)
    cap = np.concatenate([ccap, lone])
    src = np.concatenate([np.arange(len(cases)), np.full(lone.size, -1)])
    order = np.argsort(cap, kind="stable")
    cap, src = cap[order], src[order]
    counts = np.maximum(counts, 1)
    starts = np.concatenate([[0], np.cumsum(counts)[:-1]]).astype(np.int64) if n else np.zeros(0, np.int64)
    has = src >= 0
    frame = caps.iloc[cap].reset_index(drop=True)
    for c in LOAD_COLUMNS:
        vals = np.full(cap.size, np.nan)
        vals[has] = cases[c].to_numpy(dtype=float)[src[has]]
        frame[c] = vals
    kind = np.full(cap.size, "", dtype=object)
    kind[has] = cases["kind"].to_numpy(dtype=object)[src[has]]
    name = np.full(cap.size, "", dtype=object)
    name[has] = cases["case"].to_numpy(dtype=object)[src[has]]
    # an unnamed case is shown by its limit state where its cap has several cases
    several = (counts > 1)[cap]
    name = np.where((name == "") & several, kind, name).astype(object)
    frame["case_kind"] = kind
    basis = np.where(caps["capacity_basis"].to_numpy(dtype=object) == "SLS", "SLS", "ULS")[cap] \
        if "capacity_basis" in caps else np.full(cap.size, "ULS", dtype=object)
    return Expanded(frame, cap, starts, counts, name, kind, basis.astype(object))


class _Rows(dict[str, Any]):
    """The environment of the expanded frame restricted to some rows (one per cap), sliced lazily."""

    def __init__(self, base: Env, idx: np.ndarray, n_base: int):
        super().__init__()
        self._base, self._idx, self._n = base, idx, n_base

    def _take(self, k: str, v: Any) -> Any:
        if isinstance(v, np.ndarray) and v.ndim == 1 and v.shape[0] == self._n:
            return v[self._idx]
        return v

    def __getitem__(self, k: str) -> Any:
        if dict.__contains__(self, k):
            return dict.__getitem__(self, k)
        v = self._take(k, self._base[k])
        dict.__setitem__(self, k, v)
        return v

    def __contains__(self, k: object) -> bool:
        return dict.__contains__(self, k) or k in self._base

    def get(self, k: str, default: Any = None) -> Any:
        try:
            return self[k]
        except KeyError:
            return default


class _Envelope(_Rows):
    """Per cap, the largest value of each load-dependent quantity over its ULS cases."""

    def __init__(self, base: Env, ex: Expanded):
        super().__init__(base, ex.starts, ex.cap.size)
        self._uls = ex.kind == "ULS"
        self._starts = ex.starts

    def _take(self, k: str, v: Any) -> Any:
        if k in LOAD_INDEPENDENT or k not in QUANTITIES or not (
                isinstance(v, np.ndarray) and v.ndim == 1 and v.shape[0] == self._n and v.dtype.kind == "f"):
            return super()._take(k, v)
        if self._starts.size == 0:
            return v[:0]
        return np.fmax.reduceat(np.where(self._uls, v, np.nan), self._starts)


def rule_names(rule: Rule) -> set[str]:
    names = set(rule.names)
    if rule.applies is not None:
        names |= rule.applies.names
    for c in rule.checks:
        if c.applies is not None:
            names |= c.applies.names
    for o in rule.overrides:
        names |= o.when.names
    for v in rule.variants:
        names |= {b for _a, b in v.use}
    return names


def case_mode(rule: Rule) -> str | None:
    """How a rule runs over the load cases: None (load-independent), 'uls', 'capacity-basis', 'envelope'."""
    if rule.cases is not None:
        return rule.cases
    dependent = {n for n in rule_names(rule) if n in QUANTITIES and n not in LOAD_INDEPENDENT}
    return "uls" if dependent else None


def _eligible(mode: str, ex: Expanded, env: Env) -> Bools:
    """The rows (cases) a rule of this mode is checked on."""
    if mode == "uls":
        return cast(Bools, ex.kind == "ULS")
    if mode == "sls":
        # a cap's SLS cases; where it has none, its ULS cases if the profile sets qp_ratio
        has_sls = np.logical_or.reduceat(ex.kind == "SLS", ex.starts)[ex.cap] if ex.cap.size else np.zeros(0, bool)
        ratio = float(env.get("qp_ratio", np.nan))
        return cast(Bools, (ex.kind == "SLS") | ((ex.kind == "ULS") & ~has_sls & np.isfinite(ratio)))
    return cast(Bools, ex.kind == ex.basis)


def _kn(x: float) -> str:
    return f"{x / TO_INTERNAL['kN']:.0f}"


def evaluate_cases(ruleset: RuleSet, env: Env, ex: Expanded, caps: pd.DataFrame, *,
                   render: bool | str = True, outcomes: dict[str, VariantOutcome] | None = None,
                   ) -> tuple[pd.DataFrame, dict[str, np.ndarray]]:
    """Every rule over the expanded frame -> (findings, rule id -> governing row of each cap).
    ``outcomes``, if given, receives each rule with variants' :class:`VariantOutcome` per cap, made
    with its findings (for a load-dependent rule, on the governing case the findings report)."""
    n = len(caps)
    N = ex.cap.size
    if n == 0:
        return empty_findings(), {}
    methods_ex = ex.frame["method"].to_numpy(dtype=object) if "method" in ex.frame else None
    methods = caps["method"].to_numpy(dtype=object) if "method" in caps else None
    first = _Rows(env, ex.starts, N)
    multi = (ex.counts > 1) | (ex.name[ex.starts] != "")
    results: list[RuleResult] = []
    governing: dict[str, np.ndarray] = {}
    for rule in ruleset.rules:
        mode = case_mode(rule)
        if mode is None or mode == "envelope":
            res = evaluate_rule(rule, first if mode is None else _Envelope(env, ex), n, methods=methods,
                                render=render)
            results.append(res)
            if outcomes is not None and res.outcome is not None:
                outcomes[rule.id] = res.outcome
            continue
        core = evaluate_rule(rule, env, N, methods=methods_ex, render=False)
        eligible = _eligible(mode, ex, env)
        code = np.where(eligible, core.code.astype(np.int64), 99)
        util = np.where(eligible, np.nan_to_num(core.util, nan=-np.inf, posinf=1e300), -np.inf)
        order = np.lexsort((-util, code, ex.cap))
        gov = order[ex.starts]
        none = ~np.logical_or.reduceat(eligible, ex.starts)
        res = evaluate_rule(rule, _Rows(env, gov, N), n, methods=methods, render=render)
        case = cast(np.ndarray, np.where(multi, ex.name[gov], None)).astype(object)  # the stubs: a tuple, given None
        case[case == ""] = None
        # a check that does not apply to the cap (no tie along y of a two-pile cap ...) names no case
        case[np.isnan(res.value) & np.isnan(res.limit) & (res.code == _RANK["ok"])] = None
        if mode == "sls":
            # no SLS case: the ULS cases with qp_ratio (eligible above), else a query; a rule that
            # does not apply to the cap stays not applicable (unless the cap has no loads at all)
            on_uls = ~np.logical_or.reduceat(ex.kind == "SLS", ex.starts)
            loads = ex.kind[gov] != ""
            whats: dict[int, str] = {}
            for c in np.flatnonzero(on_uls).tolist():
                given = sorted(set(ex.kind[ex.starts[c]:ex.starts[c] + ex.counts[c]].tolist()) - {""})
                whats[c] = f" (only {' and '.join(given)} loads are given)" if given else " (no loads are given)"
            asked = sls_on_uls(rule, res, _Rows(env, gov, N), on_uls & loads, render, whats)
            case[asked] = None
            if (none & ~loads).any():
                _no_case(rule, mode, res, none & ~loads, ex, env, case, render)
        elif none.any():
            _no_case(rule, mode, res, none, ex, env, case, render)
        if render:
            named = np.flatnonzero(np.not_equal(case, None) & ~none)  # type: ignore[call-overload]  # the stubs refuse None
            if named.size:
                pre = np.array([f"Load case {c}: " for c in case[named].tolist()], dtype=object)
                _put(res.message, named, (pre + res.message[named].astype(object)).tolist())
        res.case = case
        results.append(res)
        governing[rule.id] = gov
        if outcomes is not None and res.outcome is not None:
            outcomes[rule.id] = res.outcome
    return assemble(results, caps), governing


def _no_case(rule: Rule, mode: str, res: RuleResult, none: Bools, ex: Expanded, env: Env,
             case: np.ndarray, render: bool | str) -> None:
    """Caps with no case the rule can use: a query that says why (and, for the pile capacity, what
    the loads given imply on the other basis)."""
    idx = np.flatnonzero(none)
    res.code[idx] = _RANK["query"]
    res.severity[idx] = "query"
    res.value[idx] = np.nan
    res.limit[idx] = np.nan
    res.util[idx] = np.nan
    case[idx] = None
    if res.variants is not None:
        for k, v in res.variants.items():
            v[idx] = np.nan if k.startswith("util") else None
    if res.outcome is not None:
        res.outcome.ungraded(idx, hide=mode == "sls")
    kinds_of = {int(c): sorted(set(ex.kind[ex.starts[c]:ex.starts[c] + ex.counts[c]].tolist()) - {""})
                for c in idx.tolist()}
    if mode == "capacity-basis":
        r = np.asarray(env["r_tol_max"], dtype=float)
        cap_v = np.asarray(env["pile_capacity"], dtype=float)
        other = ex.kind != ex.basis
        worst = np.where(other & (ex.kind != ""), r, -np.inf)
        order = np.lexsort((-worst, ex.cap))
        g = order[ex.starts]
        gamma_g = float(env.get("gamma_g", 1.35))
        gamma_q = float(env.get("gamma_q", 1.5))
        for c in idx.tolist():
            row = int(g[c])
            basis = ex.basis[row]
            if not kinds_of[c]:
                msg = "No loads are given for this cap: the pile reactions cannot be checked."
                act = "Give the loads of this cap (ULS, or SLS for a working pile capacity)."
                _set(res, c, msg, act, render)
                continue
            R, C = r[row], cap_v[row]
            res.value[c] = R * FROM_INTERNAL["kN"]
            res.limit[c] = C * FROM_INTERNAL["kN"] if np.isfinite(C) else np.nan
            nm = ex.name[row] or ex.kind[row]
            if basis == "SLS":
                lo, hi = R / gamma_q, R / gamma_g
                msg = (f"The pile capacity {_kn(C)} kN is a working (SLS) value and no SLS loads are given, so "
                       f"the reactions cannot be compared like with like. The worst ULS reaction, {_kn(R)} kN "
                       f"(load case {nm}), implies a service reaction of about {_kn(lo)} to {_kn(hi)} kN "
                       f"(divided by gamma_Q = {gamma_q:g} to gamma_G = {gamma_g:g}, EN 1990 Table A1.2(B)), "
                       f"{lo / C:.2f} to {hi / C:.2f} of the working capacity: not a verdict.")
                act = "Give the SLS (service) loads of this cap, or state the pile capacity as a ULS design resistance."
            else:
                lo, hi = R * gamma_g, R * gamma_q
                msg = (f"The pile capacity {_kn(C)} kN is a ULS design resistance and only SLS loads are given, so "
                       f"the reactions cannot be compared like with like. The worst SLS reaction, {_kn(R)} kN "
                       f"(load case {nm}), implies a ULS reaction of about {_kn(lo)} to {_kn(hi)} kN "
                       f"(times gamma_G = {gamma_g:g} to gamma_Q = {gamma_q:g}, EN 1990 Table A1.2(B)), "
                       f"{lo / C:.2f} to {hi / C:.2f} of the resistance: not a verdict.")
                act = "Give the ULS loads of this cap, or state the pile capacity as a working (SLS) value."
            if not np.isfinite(C):
                msg = (f"No {'SLS' if basis == 'SLS' else 'ULS'} load case is given for this cap and no pile "
                       f"capacity is stated: the worst reaction is {_kn(R)} kN (load case {nm}, {ex.kind[row]}).")
                act = "Give the pile capacity and loads on the same basis."
            _set(res, c, msg, act, render)
        return
    for c in idx.tolist():
        given = kinds_of[c]
        what = f" (only {' and '.join(given)} loads are given)" if given else " (no loads are given)"
        if mode == "sls":
            _set(res, c, SLS_MISSING_MESSAGE.format(what=what), SLS_MISSING_ACTION, render)
            continue
        _set(res, c, f"No ULS load case is given for this cap{what}: the check needs ULS loads.",
             "Give the ULS loads of this cap.", render)


def _set(res: RuleResult, c: int, msg: str, act: str, render: bool | str) -> None:
    if render:
        res.message[c] = msg
        res.action[c] = act


def case_working(ruleset: RuleSet, env: Env, ex: Expanded, ci: int,
                 findings_for_cap: pd.DataFrame) -> list[WorkingLine]:
    """The working of one cap (row ``ci`` of caps): each load-independent rule once, each
    load-dependent rule for every load case with its figures and verdict, then the governing verdict."""
    start, count = int(ex.starts[ci]), int(ex.counts[ci])
    rows = np.arange(start, start + count)
    N = ex.cap.size
    verdicts = {row["rule"]: row for row in findings_for_cap.to_dict("records")}

    def scalar(i: int) -> dict[str, Any]:
        return {k: (v[i] if isinstance(v, np.ndarray) and v.ndim == 1 and v.shape[0] == N else v)
                for k, v in env.items()}

    first = scalar(start)
    per_case = [scalar(int(i)) for i in rows]
    lines: list[WorkingLine] = []
    for rule in ruleset.rules:
        mode = case_mode(rule)
        lines.append(WorkingLine(rule.id, f"{rule.title} [{rule.clause}]"))
        if mode is None or mode == "envelope" or count == 1 and not ex.name[start]:
            env_one: Env = first if mode != "envelope" else _Envelope(env, ex)
            if mode == "envelope":
                env_one = {k: (env_one[k][ci] if isinstance(env_one.get(k), np.ndarray) and
                               np.ndim(cast(np.ndarray, env_one.get(k))) == 1 else env_one.get(k))
                           for k in rule_names(rule)}
                env_one = {**first, **env_one}
                lines.append(WorkingLine(rule.id, "  against the largest re-checked figures over the ULS load cases"))
            for t in rule.working:
                lines.append(WorkingLine(rule.id, "  " + t.render_one(env_one)))
        else:
            eligible = _eligible(mode, ex, env)
            sub = _Rows(env, rows, N)
            res = evaluate_rule(rule, sub, count, render=True)
            for k, i in enumerate(rows.tolist()):
                kind = ex.kind[i] or "no loads"
                nm = ex.name[i] or kind
                use = bool(eligible[i])
                note = "" if use else (f" (not compared: an {kind} case against a {ex.basis[i]} pile capacity)"
                                       if mode == "capacity-basis" else f" (not checked: an {kind} case)")
                if use and mode == "sls" and kind == "ULS":
                    note = f" (no SLS case: qp_ratio = {float(env.get('qp_ratio', np.nan)):g} times the ULS figures)"
                lines.append(WorkingLine(rule.id, f"  load case {nm} ({kind}){note}:"))
                for t in rule.working:
                    lines.append(WorkingLine(rule.id, "    " + t.render_one(per_case[k])))
                if use:
                    u = res.util[k]
                    ut = f", utilisation {u:.2f}" if np.isfinite(u) else ""
                    lines.append(WorkingLine(rule.id, f"    case verdict: {res.severity[k]}{ut}: {res.message[k]}"))
        row = verdicts.get(rule.id)
        if row is not None:
            lines.append(WorkingLine(rule.id, f"  -> {row['severity']}: {row['message']}"))
    return lines
