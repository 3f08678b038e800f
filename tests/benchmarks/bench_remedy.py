"""Benchmark: the cost of the remedy search (issue 16) against the check alone.

Run: ``python tests/benchmarks/bench_remedy.py [--caps 1000] [--failing 0.2]``; prints one JSON object.

* ``sample``: the bundled sample (rev A): ``check_s`` (check_schedule without the search) and
  ``check_with_remedy_s`` (with it), the failing caps searched and the candidates evaluated.
* ``generated``: ``--caps`` invented caps of which about ``--failing`` fail a check: caps drawn from the
  engine benchmark's generator, those that pass everything kept, and a share of them made to fail
  (fewer bars, a shallower cap, a smaller plan or an overloaded pile), in the same way each run (seed 5).
* ``all_passing``: the passing caps alone, with and without the search (the search must cost nothing).
Each time is the best of ``--repeat`` runs (default 2) in this process.
"""

from __future__ import annotations

import argparse
import json
import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
ROOT = HERE.parent.parent


def _best(fn, repeat):
    best, out = float("inf"), None
    for _ in range(repeat):
        t = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t)
    return best, out


def generated(n: int, failing: float, rs) -> tuple[pd.DataFrame, pd.DataFrame]:
    from bench_engine import synthetic_schedule

    from checker.api import check_schedule
    from checker.ingest.schedule import schedule_from_frame

    pool = synthetic_schedule(max(20 * n, 2000), seed=5)
    rv = check_schedule(schedule_from_frame(pool), rs, "pool", messages="issues")
    f = rv.findings
    bad = set(f.loc[f["severity"].isin(["unsafe", "non-compliant"]), "cap"])
    good = pool[~pool["mark"].isin(bad)].reset_index(drop=True)
    if len(good) < n:
        raise SystemExit(f"only {len(good)} passing caps in the pool; lower --caps")
    caps = good.iloc[:n].copy().reset_index(drop=True)
    rng = np.random.default_rng(5)
    k = int(round(failing * n))
    hit = rng.choice(n, k, replace=False)
    kind = rng.integers(0, 4, k)
    for i, kd in zip(hit.tolist(), kind.tolist()):
        if kd == 0:
            caps.loc[i, "cap_depth"] = round(caps.loc[i, "cap_depth"] * 0.55, -1)
        elif kd == 1:
            caps.loc[i, "bars_x"] = "3H12"
        elif kd == 2:
            caps.loc[i, "cap_length"] = caps.loc[i, "cap_length"] - 300
        else:
            caps.loc[i, "pile_capacity"] = round(caps.loc[i, "pile_capacity"] * 0.5)
    return caps, good.iloc[:n].reset_index(drop=True)


def main(argv=None) -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--caps", type=int, default=1000)
    ap.add_argument("--failing", type=float, default=0.26)  # some changes still pass: about 20 % fail
    ap.add_argument("--repeat", type=int, default=2)
    a = ap.parse_args(argv)
    from checker.api import check_schedule
    from checker.ingest.schedule import read_schedule, schedule_from_frame
    from checker.ruleset.loader import load_ruleset

    rs = load_ruleset("uk-na")
    out = {}
    s = read_schedule(str(ROOT / "sample_submissions" / "harbourside-rev-A.csv"))
    t0, _ = _best(lambda: check_schedule(s, rs, "sample"), a.repeat)
    t1, rv = _best(lambda: check_schedule(s, rs, "sample", remedy=True), a.repeat)
    out["sample"] = {"caps": len(s.caps), "failing_caps": len(rv.remedy.caps), "candidates": rv.remedy.candidates,
                     "check_s": round(t0, 3), "check_with_remedy_s": round(t1, 3),
                     "remedy_s": round(t1 - t0, 3)}
    caps, good = generated(a.caps, a.failing, rs)
    sg = schedule_from_frame(caps)
    t0, rv0 = _best(lambda: check_schedule(sg, rs, "gen", messages="issues"), a.repeat)
    t1, rv = _best(lambda: check_schedule(sg, rs, "gen", messages="issues", remedy=True), a.repeat)
    with_opt = sum(1 for c in rv.remedy.caps.values() if c.options)
    out["generated"] = {"caps": len(caps), "failing_caps": len(rv.remedy.caps), "with_an_option": with_opt,
                        "blocked": len(rv.remedy.caps) - with_opt, "candidates": rv.remedy.candidates,
                        "check_s": round(t0, 3), "check_with_remedy_s": round(t1, 3),
                        "remedy_s": round(t1 - t0, 3),
                        "per_failing_cap_ms": round(1e3 * (t1 - t0) / max(1, len(rv.remedy.caps)), 2)}
    sp = schedule_from_frame(good)
    t0, _ = _best(lambda: check_schedule(sp, rs, "ok", messages="issues"), a.repeat)
    t1, rvp = _best(lambda: check_schedule(sp, rs, "ok", messages="issues", remedy=True), a.repeat)
    out["all_passing"] = {"caps": len(good), "failing_caps": len(rvp.remedy.caps), "check_s": round(t0, 3),
                          "check_with_remedy_s": round(t1, 3)}
    print(json.dumps(out, indent=2))


if __name__ == "__main__":
    main()
