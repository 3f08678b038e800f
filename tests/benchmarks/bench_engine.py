"""Benchmark: the rule engine over a synthetic schedule of 100,000 caps against bare numpy.

Run: ``python tests/benchmarks/bench_engine.py [--caps N]``; prints one JSON object.

* ``baseline_numpy_s``: the same formulas (the calcs functions, called through derive) and, for every
  rule, the bare numpy comparison of its value with its limit, written out by hand.
* ``engine_core_s``: derive plus the rule engine (rule files, expressions, governing checks,
  severities, utilisation), without message text: the like-for-like figure; target <= 3 x baseline.
* ``engine_core_default_method_only_s``: the same with every non-default method variant dropped;
  ``ratio_grading_to_default_only`` is the cost of grading over the accepted methods (target <= 2).
* ``engine_full_s``: the same plus the findings frame with the message text of every result that is
  not ``ok`` (``review(..., messages="issues")``, what the terminal list needs).
* ``engine_every_message_s``: the same with the text of every passed check too (what a JSON or
  sheet output needs); reported, no target.
* ``total_s``: ingest of the in-memory DataFrame plus ``engine_full_s``; target < 10 s.
* ``peak_rss_mb``: peak resident memory of the process; target < 2048.
* ``load_cases``: the same caps with three load cases each (issue 11: the schedule's own ULS case
  plus two more from a loads table, one of them SLS) against the single-case run of the same caps,
  both through ``check_schedule(..., messages="issues")`` in this run: ``ratio_three_cases_to_one``
  (target <= 3), with and without ingest, and the peak resident memory after the three-case run.
  ``--cases-only`` runs this part alone (its peak memory is then its own).
"""

from __future__ import annotations

import argparse
import json
import resource
import sys
import time

import numpy as np
import pandas as pd


def synthetic_schedule(n: int, seed: int = 7) -> pd.DataFrame:
    """Invented caps spread over the standard layouts and a realistic range of sizes."""
    rng = np.random.default_rng(seed)
    piles = rng.integers(1, 7, n)
    dia = rng.choice([450, 600, 750], n)
    s = np.round(dia * rng.uniform(2.6, 3.4, n), -1)
    s = np.maximum(s, dia + 50)
    ext = dia / 2 + rng.choice([100, 150, 200], n)
    ext = np.where(piles == 1, np.maximum(ext, 450.0), ext)   # the largest column (700) fits the cap
    half_x = np.select([piles == 1, piles == 2, piles == 3, piles == 4, piles == 5, piles == 6],
                       [0 * s, s / 2, s / 2, s / 2, s / np.sqrt(2), s], 0)
    half_y = np.select([piles == 1, piles == 2, piles == 3, piles == 4, piles == 5, piles == 6],
                       [0 * s, 0 * s, s / np.sqrt(3), s / 2, s / np.sqrt(2), s / 2], 0)
    L = np.round(2 * (half_x + ext), -1)
    W = np.round(2 * (half_y + ext), -1)
    h = np.round(rng.uniform(0.5, 0.8, n) * s + 300, -1)
    h = np.where(piles == 1, np.round(dia * 1.5, -1), h)
    col = rng.choice(["450x450", "500x500", "600x400", "600", "D500", "700x500"], n)
    nd = np.round(piles * rng.uniform(500, 1300, n), 0)
    bars = rng.choice(["10H25", "12H25", "8H20", "14H25", "16H32", "H20@200", "H25@150", "H16@200"], n)
    bars_y = rng.choice(["10H25", "12H20", "H16@200", "H20@150"], n)
    conc = rng.choice(["C30/37", "C32/40", "C35/45", "C40/50"], n)
    # a counted layer that does not fit the cap at 20 mm clear (ingest refuses it as implausible)
    # is drawn as bars at centres instead
    for arr, width in ((bars, W), (bars_y, L)):
        parts = pd.Series(arr).str.extract(r"^(\d+)H(\d+)$").astype(float)
        need = parts[0] * parts[1] + (parts[0] - 1) * 20.0
        arr[(need > width - 2 * 75).to_numpy()] = "H20@200"
    return pd.DataFrame({
        "mark": [f"PC{i}" for i in range(n)],
        "piles": piles, "pile_dia": dia, "pile_spacing": np.where(piles == 1, np.nan, s),
        "cap_length": L, "cap_width": W, "cap_depth": h, "column": col, "n_ed": nd,
        "concrete": conc, "cover": 75, "exposure": "XC2", "bars_x": bars, "bars_y": bars_y,
        "embedment": 75, "pile_capacity": np.round(nd / piles * 1.3, 0), "bar_ends": "bent",
    })


def bare_numpy(q: dict, p: dict) -> dict:
    """Each rule's comparison, written directly in numpy over the derived arrays."""
    ok = {}
    ok["pile-spacing"] = q["spacing_min"] >= p["spacing_factor"] * q["pile_dia"]
    ok["pile-in-plan"] = q["plan_overhang"] <= 0
    ok["edge-distance"] = q["edge_min"] >= p["edge_clear_min"]
    ok["pile-embedment"] = q["embedment"] >= p["embed_min"]
    ok["strut-angle"] = q["strut_angle_min"] >= np.degrees(np.arctan(1 / p["cot_theta_limit"]))
    ok["bar-diameter"] = q["phi_bar_min"] >= p["phi_min"]
    ok["min-steel-x"] = q["as_x"] >= q["as_min_x"]
    ok["min-steel-y"] = q["as_y"] >= q["as_min_y"]
    ok["cover"] = (q["cover"] >= np.maximum(q["phi_bar_min"] + p["delta_c_dev"], p["cover_k1"])) & (
        q["cover"] >= q["cmin_dur"] + p["delta_c_dev"])
    ok["bar-spacing"] = ((q["clear_x"] >= q["clear_min_req"]) & (q["clear_y"] >= q["clear_min_req"])
                         & (q["centres_x"] <= p["bar_centres_max"]) & (q["centres_y"] <= p["bar_centres_max"]))
    ok["restraint"] = q["n_piles"] >= 3
    ok["group-size"] = q["n_piles"] <= p["max_piles_rigid"]
    ok["tie-distribution"] = q["spacing_le_3phi"] >= 1
    ok["pile-reaction"] = (q["r_tol_max"] <= q["pile_capacity"]) & (q["r_tol_min"] >= 0)
    ok["tie-steel-x"] = q["as_tie_x"] >= q["as_req_x"]
    ok["tie-steel-y"] = q["as_tie_y"] >= q["as_req_y"]
    ok["node-column"] = q["sigma_col"] <= q["node_col_limit"]
    ok["node-pile"] = q["sigma_pile"] <= q["node_pile_limit"]
    ok["shear-x"] = (q["ved_x"] <= q["vrd_x"]) & (q["ved_max_x"] <= q["vrd_max_x"])
    ok["shear-y"] = (q["ved_y"] <= q["vrd_y"]) & (q["ved_max_y"] <= q["vrd_max_y"])
    ok["punching-column"] = q["ved0"] <= q["vrd_max_punch"]
    ok["punching-perimeter"] = q["ved1"] <= q["vrd1"]
    ok["anchorage-x"] = q["lb_avail_x"] >= q["lbd_x"]
    ok["anchorage-y"] = q["lb_avail_y"] >= q["lbd_y"]
    ok["stated-vs-checked"] = ~(q["stated_diff"] > p["stated_tolerance"])
    ok["crack-x"] = q["sigma_qp_x"] <= q["crack_limit_x"]
    ok["crack-y"] = q["sigma_qp_y"] <= q["crack_limit_y"]
    return ok


def timed(fn, repeat: int = 3):
    best = float("inf")
    out = None
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t0)
    return best, out


def synthetic_loads(df: pd.DataFrame, seed: int = 11) -> pd.DataFrame:
    """Two more load cases per cap: a moment case (ULS) and a service case (SLS)."""
    rng = np.random.default_rng(seed)
    n = len(df)
    nd = df["n_ed"].to_numpy(float)
    m = np.concatenate([df["mark"].to_numpy(object)] * 2)
    return pd.DataFrame({
        "mark": m,
        "case": np.repeat(np.array(["ULS max M", "SLS"], dtype=object), n),
        "n_ed": np.concatenate([np.round(nd * 0.8, 0), np.round(nd / 1.4, 0)]),
        "mx_ed": np.concatenate([np.round(rng.uniform(0, 0.1, n) * nd, 0), np.zeros(n)]),
        "my_ed": np.concatenate([np.round(rng.uniform(0, 0.1, n) * nd, 0), np.zeros(n)]),
        "kind": np.repeat(np.array(["ULS", "SLS"], dtype=object), n),
    })


def bench_cases(n: int) -> dict:
    """Three load cases per cap against one, same caps, same run."""
    from checker.api import check_schedule
    from checker.ingest.schedule import schedule_from_frame
    from checker.ruleset.loader import load_ruleset

    df = synthetic_schedule(n)
    loads = synthetic_loads(df)
    rs = load_ruleset("uk-na")
    t_in1, one = timed(lambda: schedule_from_frame(df), repeat=1)
    t_in3, three = timed(lambda: schedule_from_frame(df, loads=loads), repeat=1)
    t1, rv1 = timed(lambda: check_schedule(one, rs, "one", messages="issues"), repeat=2)
    rss1 = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    del rv1
    t3, rv3 = timed(lambda: check_schedule(three, rs, "three", messages="issues"), repeat=2)
    rss3 = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    return {
        "caps": int(len(three.caps)),
        "load_cases": int(len(three.cases)),
        "rows_rejected": len(three.rejected),
        "findings": int(len(rv3.findings)),
        "one_case_s": round(t1, 3),
        "three_cases_s": round(t3, 3),
        "ratio_three_cases_to_one": round(t3 / t1, 2),
        "ingest_one_case_s": round(t_in1, 3),
        "ingest_three_cases_s": round(t_in3, 3),
        "ratio_with_ingest": round((t3 + t_in3) / (t1 + t_in1), 2),
        "peak_rss_after_one_case_mb": round(rss1, 1),
        "peak_rss_after_three_cases_mb": round(rss3, 1),
    }


def main(argv=None) -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--caps", type=int, default=100_000)
    ap.add_argument("--cases-only", action="store_true", help="only the load-case comparison")
    args = ap.parse_args(argv)
    if args.cases_only:
        json.dump({"benchmark": "engine", "caps": args.caps, "load_cases": bench_cases(args.caps)}, sys.stdout,
                  indent=2)
        sys.stdout.write("\n")
        return 0

    from checker.ingest.schedule import schedule_from_frame
    from checker.ruleset.derive import derive
    from checker.ruleset.evaluate import assemble, evaluate_rule
    from checker.ruleset.loader import load_ruleset

    df = synthetic_schedule(args.caps)
    rs = load_ruleset("uk-na")
    params = dict(rs.profile.params)
    num = {k: float(v) for k, v in params.items() if not isinstance(v, str)}

    t_ingest, sched = timed(lambda: schedule_from_frame(df), repeat=1)
    caps = sched.caps

    def baseline():
        d = derive(caps, None, params)
        return bare_numpy(d.q, num)

    def core():
        d = derive(caps, None, params)
        env = {**d.q, **num}
        return [evaluate_rule(r, env, len(caps), render=False) for r in rs.rules]

    def full():
        d = derive(caps, None, params)
        env = {**d.q, **num}
        return assemble([evaluate_rule(r, env, len(caps), render="issues") for r in rs.rules], caps)

    def every_message():
        d = derive(caps, None, params)
        env = {**d.q, **num}
        return assemble([evaluate_rule(r, env, len(caps), render=True) for r in rs.rules], caps)

    # grading over the accepted methods against the default method alone (issue 7: within 2x)
    defaults_only = load_ruleset("uk-na", drop_variants=sorted(
        {v.name for r in rs.rules for v in r.variants} -
        {next(v for v in r.variants if v.family == f).name for r in rs.rules for f in r.families}))

    def core_default_only():
        d = derive(caps, None, params)
        env = {**d.q, **num}
        return [evaluate_rule(r, env, len(caps), render=False) for r in defaults_only.rules]

    t_base, _ = timed(baseline)
    t_core, _ = timed(core)
    t_default, _ = timed(core_default_only)
    t_full, frame = timed(full, repeat=1)
    peak_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    del frame
    t_all, frame = timed(every_message, repeat=1)
    peak_all_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    result = {
        "benchmark": "engine",
        "caps": int(len(caps)),
        "rows_rejected": len(sched.rejected),
        "rules": len(rs.rules),
        "findings": int(len(frame)),
        "ingest_s": round(t_ingest, 3),
        "baseline_numpy_s": round(t_base, 3),
        "engine_core_s": round(t_core, 3),
        "engine_full_s": round(t_full, 3),
        "total_s": round(t_ingest + t_full, 3),
        "ratio_core_to_numpy": round(t_core / t_base, 2),
        "engine_core_default_method_only_s": round(t_default, 3),
        "ratio_grading_to_default_only": round(t_core / t_default, 2),
        "ratio_full_to_numpy": round(t_full / t_base, 2),
        "engine_every_message_s": round(t_all, 3),
        "peak_rss_mb": round(peak_mb, 1),
        "peak_rss_every_message_mb": round(peak_all_mb, 1),
        "load_cases": bench_cases(args.caps),
        "targets": {"ratio_three_cases_to_one": 3.0, "ratio_core_to_numpy": 3.0, "ratio_grading_to_default_only": 2.0,
                    "total_s": 10.0,
                    "peak_rss_mb": 2048},
    }
    json.dump(result, sys.stdout, indent=2)
    sys.stdout.write("\n")
    return 0


if __name__ == "__main__":
    sys.exit(main())
