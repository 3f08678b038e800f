"""What would pass (issue 16): the least change of a failing cap that meets every listed check.

For each cap with an ``unsafe`` or ``non-compliant`` finding the search changes one thing at a time,
the others held as scheduled, and evaluates every candidate with the whole rule set through the same
engine as the check itself (``derive`` and ``evaluate_rule``, all accepted methods, every load case):

* ``depth``: the cap depth in steps of ``remedy_depth_step`` (50 mm) up to ``remedy_depth_max``
  (+1500 mm) above the scheduled depth;
* ``bars``: the bottom steel, for each of three diameters (the scheduled one of each layer and the
  next two standard sizes of 8, 10, 12, 16, 20, 25, 32, 40 mm) the least bar count of each layer that
  needs a change (a layer none of whose own checks fails stays as scheduled), searched from 2 bars up
  to the most that fit at a clear spacing of max(phi, dg + 5, 20 mm) (the bar-spacing rule decides);
  layer by layer: x with y as scheduled, then y with that x, then x again with that y (and y again),
  so that a check reading both layers (punching) is met by the pair;
* ``plan``: the cap length, the width, or both, in steps of ``remedy_plan_step`` (50 mm) up to
  ``remedy_plan_max`` (+1500 mm), the least added plan area;
* ``concrete``: the next classes of EN 1992-1-1:2004 Table 3.1 up to ``remedy_fck_max`` (C50/60);
* ``depth+bars``: the smallest depth at which some arrangement of bars at the scheduled diameters
  passes (searched only where neither depth nor bars alone passes at the scheduled depth), with its
  least bars.

A candidate *passes* when none of the cap's results is ``unsafe`` or ``non-compliant`` and every
``query`` it has the scheduled cap had on the same rule; ``stated-vs-checked`` (the designer's own
figures, which a changed cap restates) is not held against a candidate. So a change that clears one
check and breaks another is never offered. Where no candidate of any axis passes, the rules that
fail in every candidate are named (``blocked_by``): a pile overload (no change of the cap lowers
the reaction) or pile centres below 3 phi.

Every candidate of a kind is one row of one candidate frame, evaluated in one engine call (in chunks
of ``CHUNK`` rows); the least passing candidate per cap is found with numpy group operations. The
result is advice: the changes "would meet the listed checks", they are not a design (see
``checker.caution``).
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass, field
from typing import Any, cast

import numpy as np
import pandas as pd

from checker.findings import SEVERITY_ORDER, SEVERITY_RANK, severity_ranks

STANDARD_BARS: tuple[int, ...] = (8, 10, 12, 16, 20, 25, 32, 40)
#: strength classes of EN 1992-1-1:2004 Table 3.1 (fck, name)
TABLE_3_1: tuple[tuple[float, str], ...] = (
    (12, "C12/15"), (16, "C16/20"), (20, "C20/25"), (25, "C25/30"), (30, "C30/37"), (35, "C35/45"),
    (40, "C40/50"), (45, "C45/55"), (50, "C50/60"), (55, "C55/67"), (60, "C60/75"), (70, "C70/85"),
    (80, "C80/95"), (90, "C90/105"),
)
#: search settings and their defaults (profile parameters of the same names override them)
SETTINGS: dict[str, float] = {
    "remedy_depth_step": 50.0, "remedy_depth_max": 1500.0,
    "remedy_plan_step": 50.0, "remedy_plan_max": 1500.0,
    "remedy_fck_max": 50.0, "remedy_max_caps": 2000.0,
}
AXES: tuple[str, ...] = ("depth", "bars", "plan", "concrete", "depth+bars")
EXEMPT_RULES = frozenset({"stated-vs-checked"})
CHUNK = 40_000
_RANK = SEVERITY_RANK
_Q = _RANK["query"]
_NC = _RANK["non-compliant"]
ADVICE = ("would meet the listed checks (advice for the designer to confirm, not a design)")


@dataclass
class Option:
    axis: str
    change: str                     # what changes, in words
    value: dict[str, Any]           # the changed schedule fields
    worst_utilisation: float | None


@dataclass
class CapRemedy:
    cap: str
    options: list[Option] = field(default_factory=list)
    blocked: list[dict[str, Any]] = field(default_factory=list)   # [{"axis", "blocked_by": [rules]}]
    blocked_by: list[str] = field(default_factory=list)           # rules failing in every candidate tried

    def text(self) -> str:
        """One line: what would meet the listed checks, or what blocks every change searched."""
        if self.options:
            parts = [f"{o.change}" + (f" (worst utilisation {o.worst_utilisation:.2f})"
                                      if o.worst_utilisation is not None else "") for o in self.options]
            return "Would meet the listed checks with: " + "; or ".join(parts) + "."
        rules = ", ".join(self.blocked_by) if self.blocked_by else ", ".join(
            sorted({r for b in self.blocked for r in b["blocked_by"]}))
        return f"No change of the cap searched clears {rules or 'every failing check'}."

    def record(self) -> dict[str, Any]:
        return {
            "cap": self.cap,
            "options": [{"axis": o.axis, "change": o.change, "value": o.value,
                         "worst_utilisation": _round(o.worst_utilisation)} for o in self.options],
            "blocked": [dict(b) for b in self.blocked],
            "blocked_by": list(self.blocked_by),
            "text": self.text(),
        }


@dataclass
class RemedyResult:
    caps: dict[str, CapRemedy]
    trace: pd.DataFrame            # one row per candidate: cap, axis, label, passes, stop, stop_severity, stop_util
    settings: dict[str, float]
    skipped: list[str] = field(default_factory=list)   # failing caps beyond remedy_max_caps, not searched
    candidates: int = 0
    seconds: float = 0.0

    def for_cap(self, mark: str) -> CapRemedy | None:
        return self.caps.get(str(mark))

    def bounds_text(self) -> str:
        s = self.settings
        return (f"depth +{s['remedy_depth_step']:g} to +{s['remedy_depth_max']:g} mm; bars: the scheduled diameter "
                f"and the next two sizes, 2 bars up to the most that fit; plan +{s['remedy_plan_step']:g} to "
                f"+{s['remedy_plan_max']:g} mm on L, W or both; concrete up to fck {s['remedy_fck_max']:g} MPa "
                f"(Table 3.1)")


def _round(x):
    if x is None:
        return None
    x = float(x)
    return None if not math.isfinite(x) else round(x, 4)


# ---------------------------------------------------------------------------------------------
# the engine over a candidate frame
# ---------------------------------------------------------------------------------------------

class _Engine:
    """The check's own engine over candidate frames: (rows, rules) severity codes and utilisations."""

    def __init__(self, caps: pd.DataFrame, coords, cases, ruleset, params: dict):
        from checker import geometry as geo

        self.caps = caps.reset_index(drop=True)
        self.cases = cases
        self.ruleset = ruleset
        self.params = params
        self.rules = list(ruleset.rules)
        self.ids = [r.id for r in self.rules]
        self.exempt = np.array([i in EXEMPT_RULES for i in self.ids], bool)
        with np.errstate(all="ignore"):
            self.X, self.Y, self.mask = geo.pile_arrays(self.caps, coords)
        self.calls = 0
        self.rows = 0
        if cases is not None and len(cases):
            cc = cases["cap"].to_numpy(np.int64)
            order = np.argsort(cc, kind="stable")
            self._case_order = order
            self._case_counts = np.bincount(cc, minlength=len(self.caps))
            self._case_starts = np.concatenate([[0], np.cumsum(self._case_counts)[:-1]]).astype(np.int64)

    def run(self, frame: pd.DataFrame, parent: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        n = len(frame)
        k = len(self.rules)
        code = np.empty((n, k), np.int8)
        util = np.empty((n, k))
        for a in range(0, n, CHUNK):
            b = min(n, a + CHUNK)
            code[a:b], util[a:b] = self._run(frame.iloc[a:b].reset_index(drop=True), parent[a:b])
        return code, util

    def _run(self, frame: pd.DataFrame, parent: np.ndarray):
        from checker.ruleset.derive import derive_arrays
        from checker.ruleset.evaluate import evaluate_rule, numeric_params

        self.calls += 1
        self.rows += len(frame)
        n, k = len(frame), len(self.rules)
        frame = frame.assign(mark=np.arange(n).astype(str))
        code = np.empty((n, k), np.int8)
        util = np.empty((n, k))
        with np.errstate(all="ignore"):
            if self.cases is None or not len(self.cases):
                X, Y, M = (np.asfortranarray(a[parent]) for a in (self.X, self.Y, self.mask))
                d = derive_arrays(frame, X, Y, M, dict(self.params))
                env: dict[str, Any] = dict(d.q)
                env.update(numeric_params(self.params))
                methods = frame["method"].to_numpy(dtype=object) if "method" in frame else None
                for j, rule in enumerate(self.rules):
                    res = evaluate_rule(rule, env, n, methods=methods, render=False)
                    code[:, j] = res.code
                    util[:, j] = res.util
                return code, util
            return self._run_cases(frame, parent, code, util)

    def _run_cases(self, frame, parent, code, util):
        from checker.ruleset.cases import evaluate_cases, expand
        from checker.ruleset.derive import derive_arrays
        from checker.ruleset.evaluate import numeric_params

        cnt = self._case_counts[parent]
        idx = np.repeat(self._case_starts[parent], cnt) + (np.arange(cnt.sum()) - np.repeat(np.cumsum(cnt) - cnt, cnt))
        cases = self.cases.iloc[self._case_order[idx]].reset_index(drop=True)
        cases["cap"] = np.repeat(np.arange(len(frame)), cnt)
        ex = expand(frame, cases)
        rows = parent[ex.cap]
        X, Y, M = (np.asfortranarray(a[rows]) for a in (self.X, self.Y, self.mask))
        d = derive_arrays(ex.frame, X, Y, M, dict(self.params))
        env = dict(d.q)
        env.update(numeric_params(self.params))
        f, _gov = evaluate_cases(self.ruleset, env, ex, frame, render=False)
        r = pd.Index(self.ids).get_indexer(f["rule"].astype(str))
        c = f["cap"].astype(int).to_numpy()
        code[c, r] = severity_ranks(f["severity"])
        util[c, r] = f["utilisation"].to_numpy(float)
        return code, util


def _verdict(code: np.ndarray, util: np.ndarray, base_code: np.ndarray, exempt: np.ndarray):
    """Per candidate row: passes, the rule that stops it (index, -1 if none), its severity and utilisation,
    and the worst utilisation over the results that carry one."""
    new_query = (code == _Q) & (base_code != _Q) & ~exempt[None, :]
    bad = (code <= _NC) | new_query
    passes = ~bad.any(axis=1)
    u = np.nan_to_num(util, nan=-1.0, posinf=1e9)
    score = np.where(bad, (10 - code.astype(float)) * 1e10 + u, -np.inf)
    stop = np.where(passes, -1, np.argmax(score, axis=1))
    rows = np.arange(len(code))
    sidx = np.maximum(stop, 0)
    stop_sev = np.where(passes, -1, code[rows, sidx])
    stop_util = np.where(passes, np.nan, util[rows, sidx])
    # the worst utilisation of the results met (a query the scheduled cap already had is not one)
    uw = np.where(exempt[None, :] | ~np.isfinite(util) | (code <= _Q), -np.inf, util)
    worst = uw.max(axis=1) if uw.shape[1] else np.full(len(code), -np.inf)
    worst = np.where(np.isfinite(worst), worst, np.nan)
    return passes, bad, stop, stop_sev, stop_util, worst


def _least(group: np.ndarray, order_key: np.ndarray, ok: np.ndarray, n_groups: int) -> np.ndarray:
    """Per group, the row index of the least ``order_key`` among rows where ``ok`` (-1 if none)."""
    out = np.full(n_groups, -1, np.int64)
    rows = np.flatnonzero(ok)
    if rows.size == 0:
        return out
    o = np.lexsort((order_key[rows], group[rows]))
    rows = rows[o]
    g = group[rows]
    first = np.ones(rows.size, bool)
    first[1:] = g[1:] != g[:-1]
    out[g[first]] = rows[first]
    return out


# ---------------------------------------------------------------------------------------------
# the search
# ---------------------------------------------------------------------------------------------

def search(caps: pd.DataFrame, findings: pd.DataFrame, ruleset, params: dict, *, coords=None,
           cases=None) -> RemedyResult:
    """The least change per failing cap along each axis (module docstring)."""
    t0 = time.perf_counter()
    settings = {k: float(params.get(k, v)) for k, v in SETTINGS.items()}
    caps = caps.reset_index(drop=True)
    failing = severity_ranks(findings["severity"]) <= _NC      # unsafe or non-compliant
    failing_marks = set(findings.loc[failing, "cap"].astype(str))
    marks = caps["mark"].astype(str).to_numpy()
    fail_idx = np.flatnonzero(np.isin(marks, list(failing_marks)))
    limit = int(settings["remedy_max_caps"])
    skipped = marks[fail_idx[limit:]].tolist()
    fail_idx = fail_idx[:limit]
    empty = pd.DataFrame(columns=["cap", "axis", "group", "label", "passes", "stop", "stop_severity", "stop_util"])
    if fail_idx.size == 0:
        return RemedyResult({}, empty, settings, skipped, 0, time.perf_counter() - t0)
    eng = _Engine(caps, coords, cases, ruleset, params)
    s = _Search(eng, caps, fail_idx, settings)
    s.run()
    res = s.result(marks)
    res.skipped = skipped
    res.seconds = time.perf_counter() - t0
    return res


def _bar_candidates(cur: dict[str, dict[str, np.ndarray]], cover_g: np.ndarray, G: int, dg: float):
    """The candidate counts of each layer per group, as (group, count, diameter, sort key) sorted by
    group: every count from 2 to the most that fit, after the scheduled arrangement (key -1)."""
    from checker.calcs.detailing import min_clear_spacing

    cands = {}
    for k in ("x", "y"):
        c = cur[k]
        clear = min_clear_spacing(c["phi"], dg=dg)
        nmax = np.floor((c["width"] - 2 * cover_g - c["phi"]) / (c["phi"] + clear) + 1e-9) + 1
        nmax = np.where(np.isfinite(nmax), np.clip(nmax, 2, 400), 2).astype(np.int64)
        cnt = np.where(c["need"], np.where(np.isfinite(c["phi"]), nmax - 1, 0), 1)
        grp = np.repeat(np.arange(G), cnt)
        off = np.arange(cnt.sum()) - np.repeat(np.cumsum(cnt) - cnt, cnt)
        n = np.where(c["need"][grp], 2 + off, c["n0"][grp]).astype(float)
        ph = c["phi"][grp]
        # a layer that needs a change also keeps its scheduled arrangement as the first candidate
        # (the least change: a layer whose own checks it meets stays as scheduled)
        first = np.flatnonzero(c["need"])
        grp = np.concatenate([first, grp])
        n = np.concatenate([c["n0"][first], n])
        ph = np.concatenate([c["phi0"][first], ph])
        key = np.concatenate([np.full(first.size, -1.0), n[first.size:]])
        o = np.argsort(grp, kind="stable")
        cands[k] = (grp[o], n[o], ph[o], key[o])
    return cands


class _Search:
    def __init__(self, eng: _Engine, caps: pd.DataFrame, fail_idx: np.ndarray, settings: dict):
        self.eng = eng
        self.caps = caps
        self.idx = fail_idx                       # rows of caps searched
        self.m = fail_idx.size
        self.st = settings
        self.base = caps.iloc[fail_idx].reset_index(drop=True)
        code, util = eng.run(self.base, fail_idx)
        self.base_code = code                     # (m, k) the scheduled caps, through the same engine
        self.base_util = util
        self.trace: list[pd.DataFrame] = []
        self.best: dict[str, list] = {a: [] for a in AXES}   # axis -> [(local cap, option)]
        self.axis_bad: dict[str, np.ndarray] = {}             # axis -> (m, k) rule bad in every candidate
        self.axis_any: dict[str, np.ndarray] = {}             # axis -> (m,) some candidate tried
        self.axis_minu: dict[str, np.ndarray] = {}            # axis -> (m, k) least utilisation of a rule
        self.ids = np.array(eng.ids, dtype=object)

    # ---- helpers -------------------------------------------------------------------------
    def _eval(self, frame: pd.DataFrame, local: np.ndarray, axis: str, labels, *, trace: bool = True, group=0):
        code, util = self.eng.run(frame, self.idx[local])
        passes, bad, stop, stop_sev, stop_util, worst = _verdict(code, util, self.base_code[local], self.eng.exempt)
        if trace:
            self._note(axis, local, labels, passes, stop, stop_sev, stop_util, bad, group)
            minu = self.axis_minu.setdefault(axis, np.full((self.m, code.shape[1]), np.inf))
            np.fmin.at(minu, local, np.where(np.isnan(util), np.inf, util))
        return passes, bad, worst, code

    def _note(self, axis, local, labels, passes, stop, stop_sev, stop_util, bad, group=0):
        stop_names = np.where(stop >= 0, self.ids[np.maximum(stop, 0)], "")
        self.trace.append(pd.DataFrame({
            "cap": local, "axis": axis, "group": group, "label": np.asarray(labels, dtype=object), "passes": passes,
            "stop": stop_names, "stop_severity": np.where(stop_sev >= 0, np.array(SEVERITY_ORDER, dtype=object)[
                np.maximum(stop_sev, 0)], ""), "stop_util": stop_util}))
        k = bad.shape[1]
        allbad = self.axis_bad.setdefault(axis, np.ones((self.m, k), bool))
        anyc = self.axis_any.setdefault(axis, np.zeros(self.m, bool))
        # rules bad in every candidate of the axis, per cap: AND over the rows of each cap
        notbad = np.zeros((self.m, k), bool)
        np.logical_or.at(notbad, local, ~bad)
        allbad &= ~notbad
        anyc[local] = True

    def _rows(self, local: np.ndarray) -> pd.DataFrame:
        return self.base.iloc[local].reset_index(drop=True)

    # ---- axes ----------------------------------------------------------------------------
    def run(self):
        self.depth_steps = self._depth()
        self._plan()
        self._concrete()
        bars_ok = self._bars_alone()
        self._combined(bars_ok)

    def _steps(self, step_key: str, max_key: str) -> np.ndarray:
        step = self.st[step_key]
        return step * np.arange(1, int(self.st[max_key] // step) + 1)

    def _depth(self):
        steps = self._steps("remedy_depth_step", "remedy_depth_max")
        K = steps.size
        local = np.repeat(np.arange(self.m), K)
        inc = np.tile(steps, self.m)
        fr = self._rows(local)
        h0 = fr["cap_depth"].to_numpy(float)
        fr["cap_depth"] = h0 + inc
        labels = [f"h = {h:.0f} mm (+{i:.0f})" for h, i in zip(fr["cap_depth"].tolist(), inc.tolist())]
        passes, bad, worst, code = self._eval(fr, local, "depth", labels)
        win = _least(local, inc, passes, self.m)
        for c in np.flatnonzero(win >= 0).tolist():
            r = win[c]
            self.best["depth"].append((c, Option("depth", f"cap depth {h0[r]:.0f} -> {fr['cap_depth'].iat[r]:.0f} mm "
                                                          f"(+{inc[r]:.0f} mm)",
                                                 {"cap_depth": float(fr["cap_depth"].iat[r])}, _f(worst[r]))))
        # kept for the combined search: which depth steps pass, which rules each row fails
        self.depth_pass = passes.reshape(self.m, K)
        self.depth_bad = bad.reshape(self.m, K, -1)
        self.depth_inc = steps
        return steps

    def _plan(self):
        steps = self._steps("remedy_plan_step", "remedy_plan_max")
        K = steps.size
        kinds = np.array([0, 1, 2])              # length, width, both
        local = np.repeat(np.arange(self.m), 3 * K)
        kind = np.tile(np.repeat(kinds, K), self.m)
        inc = np.tile(np.tile(steps, 3), self.m)
        fr = self._rows(local)
        L0, W0 = fr["cap_length"].to_numpy(float), fr["cap_width"].to_numpy(float)
        L = L0 + np.where(kind != 1, inc, 0.0)
        W = W0 + np.where(kind != 0, inc, 0.0)
        fr["cap_length"], fr["cap_width"] = L, W
        labels = [f"L x W = {a:.0f} x {b:.0f} mm" for a, b in zip(L.tolist(), W.tolist())]
        passes, bad, worst, _ = self._eval(fr, local, "plan", labels, group=kind)
        win = _least(local, L * W - L0 * W0 + kind * 1e-6, passes, self.m)
        for c in np.flatnonzero(win >= 0).tolist():
            r = win[c]
            parts = []
            if L[r] != L0[r]:
                parts.append(f"length {L0[r]:.0f} -> {L[r]:.0f} mm")
            if W[r] != W0[r]:
                parts.append(f"width {W0[r]:.0f} -> {W[r]:.0f} mm")
            self.best["plan"].append((c, Option("plan", "cap " + " and ".join(parts),
                                                {"cap_length": float(L[r]), "cap_width": float(W[r])}, _f(worst[r]))))

    def _concrete(self):
        fck0 = self.base["fck"].to_numpy(float)
        classes = [(f, nm) for f, nm in TABLE_3_1 if f <= self.st["remedy_fck_max"]]
        if not classes:
            return
        cf = np.array([f for f, _ in classes])
        cn = np.array([nm for _, nm in classes], dtype=object)
        local = np.repeat(np.arange(self.m), cf.size)
        fck = np.tile(cf, self.m)
        name = np.tile(cn, self.m)
        keep = fck > fck0[local]
        local, fck, name = local[keep], fck[keep], name[keep]
        if local.size == 0:
            return
        fr = self._rows(local)
        fr["fck"] = fck
        fr["concrete"] = name
        passes, bad, worst, _ = self._eval(fr, local, "concrete", name.tolist())
        win = _least(local, fck, passes, self.m)
        for c in np.flatnonzero(win >= 0).tolist():
            r = win[c]
            self.best["concrete"].append((c, Option("concrete", f"concrete {self.base['concrete'].iat[c]} -> {name[r]}",
                                                    {"concrete": str(name[r])}, _f(worst[r]))))

    # ---- bars ----------------------------------------------------------------------------
    def _dias(self, phi: np.ndarray, j: int) -> np.ndarray:
        """The j-th diameter option: the scheduled one (j = 0), then the next standard sizes."""
        if j == 0:
            return phi
        std = np.array(STANDARD_BARS, float)
        pos = np.searchsorted(std, phi, side="right") + (j - 1)
        return np.where(pos < std.size, std[np.minimum(pos, std.size - 1)], np.nan)

    def _bars(self, B: pd.DataFrame, blocal: np.ndarray, needs: np.ndarray, js: tuple[int, ...], axis: str,
              prefix: list[str]):
        """The layer-by-layer least-count search over base rows ``B`` (caps ``blocal``). ``needs``: (nB, 2)
        whether each layer needs a change (a layer that does not stays as scheduled at j = 0).
        Returns per (base row, j) None, or (base row, j, [(n, phi, changed) for x, y], worst utilisation)."""
        nB = len(B)
        cover = B["cover"].to_numpy(float)
        G = nB * len(js)
        gb = np.repeat(np.arange(nB), len(js))              # base row of each group (base row, j)
        gj = np.tile(np.array(js), nB)
        cur = self._bar_layers(B, needs, js, gb, gj, cover)
        cands = _bar_candidates(cur, cover[gb], G, float(self.eng.params.get("dg", 20.0)))
        ok = np.zeros(G, bool)
        worst = np.full(G, np.nan)
        own = {k: np.array([i.endswith("-" + k) for i in self.eng.ids]) for k in ("x", "y")}
        for step, (k, full) in enumerate((("x", False), ("y", False), ("x", True), ("y", True))):
            other = "y" if k == "x" else "x"
            grp, n, phc, key = cands[k]
            live = (np.isfinite(cur[other]["n"][grp]) | (step == 0)) & np.isfinite(phc)
            if step < 2 or step == 3:
                live &= cur[k]["need"][grp]           # a layer kept as scheduled needs no search of its own
            if step == 3:
                live &= ~ok[grp]
            grp, n, phc, key = grp[live], n[live], phc[live], key[live]
            if grp.size == 0:
                continue
            fr = B.iloc[gb[grp]].reset_index(drop=True)
            on = {k: (n, phc)}
            on[other] = ((cur[other]["n0"][grp], cur[other]["phi0"][grp]) if step == 0
                         else (cur[other]["n"][grp], cur[other]["phi"][grp]))
            for lk, (nn, ph) in on.items():
                fr[f"n{lk}"] = nn
                fr[f"phi_{lk}"] = ph
                fr[f"s{lk}"] = np.nan
                fr[f"bars_{lk}"] = [_bar_text(a, b) for a, b in zip(nn.tolist(), ph.tolist())]
            pre = np.asarray(prefix, dtype=object)[gb[grp]]
            labels = [f"{p}x {bx}, y {by}" for p, bx, by in zip(pre.tolist(), fr["bars_x"].tolist(),
                                                                 fr["bars_y"].tolist())]
            passes, bad, w, _ = self._eval(fr, blocal[gb[grp]], axis, labels,
                                           group=np.char.add(f"{step}-", grp.astype(str)))
            crit = passes if full else ~(bad & own[k][None, :]).any(axis=1)
            win = _least(grp, key, crit, G)
            got = win >= 0
            wi = np.maximum(win, 0)
            if step < 2:
                cur[k]["n"] = np.where(cur[k]["need"], np.where(got, n[wi], np.nan), cur[k]["n"])
                cur[k]["phi"] = np.where(cur[k]["need"] & got, phc[wi], cur[k]["phi"])
                continue
            cur[k]["n"] = np.where(got & cur[k]["need"], n[wi], cur[k]["n"])
            cur[k]["phi"] = np.where(got & cur[k]["need"], phc[wi], cur[k]["phi"])
            worst = np.where(got & ~ok, w[wi], worst)
            ok |= got
        out = []
        for g in np.flatnonzero(ok).tolist():
            vals = []
            for k in ("x", "y"):
                c = cur[k]
                nn, ph = float(c["n"][g]), float(c["phi"][g])
                vals.append((nn, ph, not (nn == c["n0"][g] and ph == c["phi0"][g])))
            out.append((int(gb[g]), int(gj[g]), vals, _f(worst[g])))
        return out

    def _bar_layers(self, B: pd.DataFrame, needs: np.ndarray, js: tuple[int, ...], gb: np.ndarray,
                    gj: np.ndarray, cover: np.ndarray) -> dict[str, dict[str, np.ndarray]]:
        """Each layer's state per group (base row, j): whether it needs a change, its scheduled count and
        diameter, the width it spans, and the diameter tried (the count found so far: NaN while searched)."""
        from checker.calcs.detailing import bar_count_from_centres

        G = gb.size
        cur = {}
        for k, width_col in (("x", "cap_width"), ("y", "cap_length")):
            width = B[width_col].to_numpy(float)
            phi0 = B[f"phi_{k}"].to_numpy(float)
            n0 = B[f"n{k}"].to_numpy(float)
            n0 = np.where(np.isnan(n0), bar_count_from_centres(width, cover, phi0, B[f"s{k}"].to_numpy(float)), n0)
            dia = np.full(G, np.nan)
            for j in js:
                sel = gj == j
                dia[sel] = self._dias(phi0[gb[sel]], j)
            need = needs[gb, 0 if k == "x" else 1]
            cur[k] = {"need": need, "n0": n0[gb], "phi0": phi0[gb], "width": width[gb],
                      "phi": np.where(need, dia, phi0[gb]), "n": np.where(need, np.nan, n0[gb])}
        return cur

    def _needs(self, bad: np.ndarray) -> np.ndarray:
        """(rows, 2): whether the x / y layer needs a change, from the rules each row fails."""
        ids = self.eng.ids
        own_x = np.array([i.endswith("-x") for i in ids])
        own_y = np.array([i.endswith("-y") for i in ids])
        both = np.array([i in ("bar-spacing", "bar-diameter", "cover", "punching-perimeter", "punching-column",
                               "node-pile", "strut-angle") for i in ids])
        b = bad & both[None, :]
        nx = (bad & own_x[None, :]).any(axis=1) | b.any(axis=1)
        ny = (bad & own_y[None, :]).any(axis=1) | b.any(axis=1)
        return np.stack([nx, ny], axis=1)

    def _bars_alone(self) -> np.ndarray:
        bad0 = (self.base_code <= _NC)
        needs = self._needs(bad0)
        # a cap that fails nothing the bars can change (no layer needs a change) still gets the
        # larger-diameter options searched on both layers
        none = ~needs.any(axis=1)
        needs[none] = True
        res = self._bars(self.base, np.arange(self.m), needs, (0, 1, 2), "bars", [""] * self.m)
        ok = np.zeros(self.m, bool)
        for b, j, vals, worst in res:
            ok[b] = True
            self.best["bars"].append((b, Option("bars", _bars_change(self.base.iloc[b], vals, j),
                                                _bars_value(vals), worst)))
        return ok

    def _unmoved(self) -> np.ndarray:
        """(m,) caps with a rule that fails in every candidate of the depth and of the bars search and
        is never brought below the scheduled cap's utilisation by either (the pile spacing, the edge
        distance, a pile overload): no combination of the two is searched for them."""
        out = np.zeros(self.m, bool)
        if "depth" not in self.axis_bad or "bars" not in self.axis_bad:
            return out
        base = np.where(np.isnan(self.base_util), np.inf, self.base_util)
        stuck = np.ones_like(self.axis_bad["depth"])
        for a in ("depth", "bars"):
            stuck &= self.axis_bad[a] & (self.axis_minu[a] >= base * (1 - 1e-9))
        return cast(np.ndarray, stuck.any(axis=1))

    def _combined(self, bars_ok: np.ndarray):
        """The smallest depth at which some arrangement (scheduled diameters) passes; only for caps
        that no bars alone clear; below the least passing depth of the depth axis."""
        K = self.depth_inc.size
        first = np.where(self.depth_pass.any(axis=1), np.argmax(self.depth_pass, axis=1), K)
        todo = np.flatnonzero(~bars_ok & (first > 0) & ~self._unmoved())
        done = np.zeros(self.m, bool)
        found: dict[Any, tuple[int, int, Any, Any, float]] = {}
        CH = 4
        for a in range(0, K, CH):
            live = todo[~done[todo]]
            if live.size == 0:
                break
            ks = np.arange(a, min(K, a + CH))
            loc = np.repeat(live, ks.size)
            kk = np.tile(ks, live.size)
            keep = kk < first[loc]                       # at the least passing depth, depth alone does
            loc, kk = loc[keep], kk[keep]
            if loc.size == 0:
                break
            B = self._rows(loc)
            B["cap_depth"] = B["cap_depth"].to_numpy(float) + self.depth_inc[kk]
            needs = self._needs(self.depth_bad[loc, kk])
            needs[~needs.any(axis=1)] = True
            prefix = [f"h = {h:.0f} mm: " for h in B["cap_depth"].tolist()]
            res = self._bars(B, loc, needs, (0,), "depth+bars", prefix)
            for b, j, vals, worst in res:
                c = int(loc[b])
                if c not in found or kk[b] < found[c][0]:
                    found[c] = (int(kk[b]), b, vals, worst, float(B["cap_depth"].iat[b]))
            done[list(found)] = True
        for c, (k, b, vals, worst, h) in sorted(found.items()):
            h0 = float(self.base["cap_depth"].iat[c])
            change = f"cap depth {h0:.0f} -> {h:.0f} mm (+{h - h0:.0f} mm) with " + _bars_change(
                self.base.iloc[c], vals, 0, short=True)
            value = {"cap_depth": h, **_bars_value(vals)}
            self.best["depth+bars"].append((c, Option("depth+bars", change, value, worst)))

    # ---- result --------------------------------------------------------------------------
    def result(self, marks: np.ndarray) -> RemedyResult:
        caps: dict[str, CapRemedy] = {}
        local_marks = marks[self.idx]
        for c in range(self.m):
            caps[str(local_marks[c])] = CapRemedy(str(local_marks[c]))
        for axis in AXES:
            for c, opt in self.best[axis]:
                caps[str(local_marks[c])].options.append(opt)
        overall = None
        for axis in AXES:
            if axis not in self.axis_bad:
                continue
            allbad = self.axis_bad[axis]
            anyc = self.axis_any[axis]
            overall = allbad.copy() if overall is None else overall & allbad
            has = {c for c, _ in self.best[axis]}
            if axis == "depth+bars":   # searched only below the least passing depth
                has |= {c for c, _ in self.best["depth"]}
            for c in np.flatnonzero(anyc).tolist():
                if c in has:
                    continue
                rules = self.ids[allbad[c]].tolist()
                if not rules:   # no rule fails in every candidate: name the most frequent stop
                    rules = self._most_frequent_stop(axis, c)
                caps[str(local_marks[c])].blocked.append({"axis": axis, "blocked_by": rules})
        for c in range(self.m):
            cr = caps[str(local_marks[c])]
            if not cr.options and overall is not None:
                cr.blocked_by = self.ids[overall[c]].tolist()
        trace = pd.concat(self.trace, ignore_index=True) if self.trace else pd.DataFrame(
            columns=["cap", "axis", "group", "label", "passes", "stop", "stop_severity", "stop_util"])
        trace["cap"] = local_marks[trace["cap"].to_numpy(np.int64)] if len(trace) else trace["cap"]
        return RemedyResult(caps, trace, self.st, [], int(self.eng.rows))

    def _most_frequent_stop(self, axis: str, c: int) -> list[str]:
        stops = []
        for t in self.trace:
            sel = t[(t["cap"] == c) & (t["axis"] == axis) & (t["stop"] != "")]
            stops.extend(sel["stop"].tolist())
        if not stops:
            return []
        return [pd.Series(stops).value_counts().index[0]]


def _f(x) -> float | None:
    x = float(x)
    return x if math.isfinite(x) else None


def _bar_text(n: float, phi: float) -> str:
    if not (np.isfinite(n) and np.isfinite(phi)):
        return ""
    return f"{int(round(n))}H{int(round(phi))}"


def _bars_value(vals) -> dict[str, str]:
    return {f"bars_{k}": _bar_text(n, p) for k, (n, p, _chg) in zip(("x", "y"), vals)}


def _bars_change(row, vals, j: int, short: bool = False) -> str:
    parts = []
    for k, (n, p, chg) in zip(("x", "y"), vals):
        if chg:
            parts.append(f"bars {k} {row[f'bars_{k}']} -> {_bar_text(n, p)}")
    if not parts:
        return "bars as scheduled"
    what = ["the scheduled diameter", "the next diameter", "the second next diameter"][j]
    return " and ".join(parts) + ("" if short else f" ({what})")


# ---------------------------------------------------------------------------------------------
# for the writers and explain
# ---------------------------------------------------------------------------------------------

def remedy_line(review, mark: str) -> str:
    """The "would pass with" text of a cap ('' where the cap fails nothing or no search was made)."""
    rr = review.remedy
    if rr is None:
        return ""
    cr = rr.for_cap(mark)
    if cr is None:
        if str(mark) in rr.skipped:
            return "Not searched: more failing caps than remedy_max_caps."
        return ""
    return cr.text()


def remedies_json(review) -> list[dict[str, Any]] | None:
    rr = review.remedy
    if rr is None:
        return None
    return [rr.caps[m].record() for m in sorted(rr.caps)]


def explain_lines(review, mark: str) -> list[str]:
    """The search for one cap: each candidate tried and the rule that stopped it, consecutive
    candidates stopped by the same rule shown as one range."""
    rr = review.remedy
    if rr is None:
        return ["No search for a change was made (--no-remedy)."]
    cr = rr.for_cap(mark)
    if cr is None:
        if str(mark) in rr.skipped:
            return ["Not searched: more failing caps than remedy_max_caps."]
        return ["No unsafe or non-compliant result: no change searched."]
    lines = [f"Least change that {ADVICE}. Searched: {rr.bounds_text()}.",
             "A candidate passes when no result is unsafe or non-compliant and every query was already there "
             "(stated-vs-checked excepted)."]
    t = rr.trace[rr.trace["cap"] == str(mark)]
    for axis in AXES:
        ta = t[t["axis"] == axis]
        if not len(ta):
            continue
        lines.append(f"{axis}: {len(ta)} candidates")
        labels = ta["label"].tolist()
        verdicts = [("passes" if p else f"stopped by {s} ({sv}" + (f", util {u:.2f})" if np.isfinite(u) else ")"))
                    for p, s, sv, u in zip(ta["passes"].tolist(), ta["stop"].tolist(),
                                           ta["stop_severity"].tolist(), ta["stop_util"].astype(float).tolist())]
        keys = [(g, "passes" if p else s) for g, p, s in zip(ta["group"].astype(str).tolist(), ta["passes"].tolist(),
                                                             ta["stop"].tolist())]
        i = 0
        while i < len(labels):
            j = i
            while j + 1 < len(labels) and keys[j + 1] == keys[i]:
                j += 1
            span = labels[i] if i == j else f"{labels[i]} ... {labels[j]} ({j - i + 1})"
            said = verdicts[i] if i == j else ('pass' if keys[i][1] == 'passes' else 'stopped by ' + keys[i][1])
            lines.append(f"  {span}: {said}")
            i = j + 1
    lines.append(cr.text())
    return lines


def attach_remedies(review, comments: list) -> list:
    """Fill each unsafe or non-compliant comment's "Would pass with" cell with its cap's line."""
    rr = review.remedy
    if rr is None:
        return comments
    for c in comments:
        if c.severity in ("unsafe", "non-compliant") and c.state == "present":
            c.remedy = remedy_line(review, c.cap)
    return comments
