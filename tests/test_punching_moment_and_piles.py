"""Punching with moment transfer and edge/corner piles punching up (issue 15, items 2 and 4).

Sources, evaluated by hand beside each check:
* EN 1992-1-1:2004 6.4.3(3): β = 1 + k (MEd/VEd) u1/W1, Eq. (6.39); W1 = c1²/2 + c1c2 + 4c2d + 16d²
  + 2πdc1, Eq. (6.41); β = 1 + 0.6π e/(D + 4d) round, Eq. (6.42); β = 1 + 1.8√((ex/bx)² + (ey/by)²),
  Eq. (6.43); k of Table 6.1 (0.45, 0.60, 0.70, 0.80 at c1/c2 = 0.5, 1, 2, 3: from memory).
* 6.4.4(2), Eq. (6.51): vEd = VEd,red/(u d) + k MEd/(W d) on a column-base perimeter (from memory).
* 6.4.3(6): β = 1.15 for an internal column (simplified; from memory), a method accepted only where
  the profile sets punching_beta_simplified = 1.
* 6.4.2(4), Figure 6.15: perimeter of a loaded area near a free edge (from memory), here round a pile;
  6.2.2(1) vRd,c and vmin (reference §15 O2: vRd,c = 0.3422 MPa at d = 900, ρ = 0.202 %, vmin governs).
* Plane geometry for the circle, lens and segment areas.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from profile_params import derive

from checker import geometry as geo
from checker.calcs import punching as pun
from checker.calcs import reactions as rea
from checker.ruleset.loader import RuleFileError, load_ruleset

# ---- Table 6.1, W, β ------------------------------------------------------------------------

def test_table_6_1_k_interpolated(tol):
    # Table 6.1 (from memory): c1/c2 <= 0.5: 0.45, 1.0: 0.60, 2.0: 0.70, >= 3.0: 0.80
    tol.same(pun.k_moment([250, 500, 1000, 1000, 1500, 1800], [1000, 500, 500, 333.3333333333333,
                                                               1000, 400]),
             [0.45, 0.60, 0.70, 0.80, 0.65, 0.80])
    # interpolated: c1/c2 = 1.5 -> (0.60 + 0.70)/2 = 0.65; 4.5 -> 0.80 (capped)


def test_w_at_2d_is_eq_6_41_and_the_circle_is_eq_6_42(tol):
    # Eq. (6.41), 500 (c1, along x) x 400, d = 800: 125000 + 200000 + 1280000 + 10240000
    # + 2π x 800 x 500 = 14,358,274.1 mm²
    wx, wy = pun.perimeter_w(1600.0, 500.0, 400.0, False, 1e9, 1e9)
    tol.printed(wx, "14358274.1")
    # the other way, c1 = 400: 80000 + 200000 + 1600000 + 10240000 + 2π x 800 x 400 = 14,130,619.3
    tol.printed(wy, "14130619.3")
    # round D600 at a = 2d = 1600: ρ = 1900, W = 4ρ² = 14,440,000; u/W = 2πρ/4ρ² = π/(2ρ), so
    # 1 + 0.6 e u/W = 1 + 0.6π e/(D + 4d) (Eq. (6.42))
    wr, _ = pun.perimeter_w(1600.0, 600.0, 600.0, True, 1e9, 1e9)
    tol.same(wr, 4 * 1900.0 ** 2)


def test_w_truncated_by_the_cap_edges(tol):
    # Column 500 x 500 in a two-pile cap 2700 x 900, a = 300 (hand, plane geometry): the sides
    # across x (x = ±550, length 500) are inside (a <= 1100): 2 x 500 x 550 = 550,000 to W_x and
    # 2 x 250² = 125,000 to W_y; the sides across y (y = ±550) are outside (a > 200); each quarter
    # arc keeps 0 <= θ <= asin(200/300) = 0.7297277: 4[300 x 250 x 0.7297277 + 300² x 2/3] = 458,918.3
    # to W_x and 4[300 x 250 x 0.7297277 + 300² (1 − √5/3)] = 310,590.1 to W_y
    wx, wy = pun.perimeter_w(300.0, 500.0, 500.0, False, 2700.0, 900.0)
    tol.printed(wx, "1008918.3")
    tol.printed(wy, "435590.1")


def test_beta_at_the_basic_perimeter(tol):
    # O5 cap (column 500, d = 900), N = 4000 kN, My = 400 kNm: e = 100 mm, k = 0.60,
    # u1 = 2000 + 3600π = 13309.73, W1 = 125000 + 250000 + 1800000 + 12960000 + 2π x 900 x 500
    # = 17,962,433.4; β = 1 + 0.6 x 100 x 13309.73/17962433.4 = 1.044459 (Eq. (6.39))
    b, src = pun.beta_column(4000e3, 0.0, 400e6, 500.0, 500.0, False, 900.0)
    tol.printed(b, "1.044459")
    assert src == 1
    # round D600, d = 800, e = 100: 1 + 0.6π x 100/(600 + 3200) = 1.049604 (Eq. (6.42))
    b, src = pun.beta_column(4000e3, 400e6, 0.0, 600.0, 600.0, True, 800.0)
    tol.printed(b, "1.049604")
    assert src == 2
    # both moments, 500 x 500, d = 900, ex = ey = 100: Eq. (6.43) 1 + 1.8√2 x 100/4100 = 1.062087,
    # more than Eq. (6.39) alone (1.044459)
    b, src = pun.beta_column(4000e3, 400e6, 400e6, 500.0, 500.0, False, 900.0)
    tol.printed(b, "1.062087")
    assert src == 3
    # elongated 1000 x 300, d = 600, ex = 100 and a small ey = 1: Eq. (6.39) for My alone, k = 0.80
    # (c1/c2 = 3.3), u1 = 2600 + 2400π = 10139.82, W1 = 500000 + 300000 + 720000 + 5760000
    # + 2π x 600 x 1000 = 11,049,911.2: 1 + 0.8 x 100 x 10139.82/11049911.2 = 1.073411; Eq. (6.43)
    # gives only 1 + 1.8√((100/3400)² + (1/2700)²) = 1.05295, so (6.39) governs (source 1)
    b, src = pun.beta_column(1000e3, 1e6, 100e6, 1000.0, 300.0, False, 600.0)
    tol.printed(b, "1.073411")
    assert src == 1
    # no moment: β = 1.0
    b, src = pun.beta_column(4000e3, 0.0, 0.0, 500.0, 500.0, False, 900.0)
    assert b == 1.0 and src == 0


# ---- through derive and the rules ------------------------------------------------------------

def _o5(**kw):
    """Reference §15 O5's four-pile cap in schedule units (kN, kNm): d = (912.5 + 887.5)/2 = 900."""
    row = dict(mark="M1", piles=4, pile_dia=600, pile_spacing=1800, cap_length=2700, cap_width=2700,
               cap_depth=1000, column="500", n_ed=4000, mx_ed=0, my_ed=0, concrete="C30/37", fyk=500,
               cover=75, bars_x="10H25", bars_y="10H25", embedment=75, pile_capacity=5000,
               bar_ends="bent")
    row.update(kw)
    return row


def _check(rows, **kw):
    from checker.api import check_schedule
    from checker.ingest.schedule import schedule_from_frame

    sched = schedule_from_frame(pd.DataFrame(rows))
    rv = check_schedule(sched, load_ruleset("uk-na", **kw), "moment")
    return rv.findings.set_index(["cap", "rule"])


def test_column_face_with_moment_pass_fail_borderline():
    # vEd,0 = β N/(u0 d), u0 d = 2000 x 900 = 1.8e6 mm²; vRd,max = 0.5 ν fcd = 5.280 MPa (O3, C30);
    # N = 9000 kN: concentric 5.000 MPa (passes); My = 1800 kNm (e = 200): β = 1 + 4.44594e-4 x 200
    # = 1.088919 -> 5.4446 MPa (fails); borderline e = 0.056/4.44594e-4 = 125.957 mm gives 5.280:
    # My = 9000 x 0.1259 (just under) passes and 9000 x 0.1261 (just over) fails
    f = _check([_o5(mark="C0", n_ed=9000), _o5(mark="C1", n_ed=9000, my_ed=1800),
                _o5(mark="C2", n_ed=9000, my_ed=9000 * 0.1259), _o5(mark="C3", n_ed=9000, my_ed=9000 * 0.1261)])
    r = {m: f.loc[(m, "punching-column")] for m in ("C0", "C1", "C2", "C3")}
    assert r["C0"]["severity"] == "ok" and abs(r["C0"]["value"] - 5.0) < 1e-9
    assert r["C1"]["severity"] == "unsafe" and abs(r["C1"]["value"] - 5.0 * 1.088919) < 1e-5
    assert "beta = 1.089" in r["C1"]["message"]
    assert r["C2"]["severity"] == "ok" and 0.999 < r["C2"]["utilisation"] <= 1.0
    assert r["C3"]["severity"] == "unsafe" and 1.0 < r["C3"]["utilisation"] < 1.001


def test_simplified_beta_is_a_method_only_where_the_profile_accepts_it():
    # N = 8800 kN, no moment: β = 1.0 -> 4.8889 MPa (passes 5.280); 6.4.3(6) β = 1.15 -> 5.6222 (fails)
    rows = [_o5(mark="S1", n_ed=8800)]
    f = _check(rows)                                        # uk-na: punching_beta_simplified = 0
    assert f.loc[("S1", "punching-column"), "severity"] == "ok"
    f1 = _check(rows, overrides={"punching_beta_simplified": "1"})
    row = f1.loc[("S1", "punching-column")]
    assert row["severity"] == "query"                       # the accepted methods disagree
    assert "simplified-6.4.3-6" in row["message"]
    # and where both methods fail it is unsafe: N = 9600 -> 5.333 and 6.133 MPa
    f2 = _check([_o5(mark="S2", n_ed=9600)], overrides={"punching_beta_simplified": "1"})
    assert f2.loc[("S2", "punching-column"), "severity"] == "unsafe"


def test_requires_gates_the_variant_and_is_validated(tmp_path):
    rs = load_ruleset("uk-na")
    assert [v.name for v in rs.get("punching-column").variants] == ["eq-6.39"]
    rs1 = load_ruleset("ec2", overrides={"punching_beta_simplified": "1"})
    assert [v.name for v in rs1.get("punching-perimeter").variants] == ["eq-6.39", "simplified-6.4.3-6"]
    bad = tmp_path / "x.toml"
    bad.write_text('[[rule]]\nid = "x-rule"\ntitle = "X"\nclause = "c"\nseverity = "unsafe"\n'
                   'value = "ved0"\ncompare = "<="\nlimit = "vrd_max_punch"\n'
                   '[[rule.variant]]\nfamily = "f"\nname = "a"\nsource = "s"\n'
                   '[[rule.variant]]\nfamily = "f"\nname = "b"\nsource = "s"\nrequires = "no_such_parameter"\n',
                   encoding="utf-8")
    with pytest.raises(RuleFileError, match="no_such_parameter"):
        load_ruleset("uk-na", rules_dir=tmp_path)


def _wide(**kw):
    # four piles φ600 at s = 3600, column 500, d = 900, cap 4500 square: the pile faces are
    # hypot(1550, 1550) − 300 = 1892 > 2d = 1800 from the column corner, and the cap edges 2000 > 2d
    # from the column faces, so the governing perimeter is the basic one at a = 2d, uncut
    return _o5(pile_spacing=3600, cap_length=4500, cap_width=4500, bars_x="12H25", bars_y="12H25", **kw)


def test_control_perimeter_with_moment_pass_fail_borderline():
    # a = 2d: VEd,red = N, vEd = N/(u1 d) + k M/(W1 d) = β N/(u1 d) with β of Eq. (6.39) (Eq. (6.51));
    # N = 4000 kN: N/(u1 d) = 4000e3/(13309.73 x 900) = 0.333924 MPa; vRd = vRd,c = vmin = 0.3422
    # (ρ = √(5890.5/(4500 x 912.5) x 5890.5/(4500 x 887.5)) = 0.146 %, 0.12k(100ρfck)^(1/3) = 0.2886 <
    # vmin = 0.035 x 1.4714^1.5 x √30 = 0.34215); My = 400 kNm: 0.333924 x 1.044459 = 0.348770 (fails);
    # borderline β = 0.34215/0.333924 = 1.024634 -> e = 0.024634/4.44594e-4 = 55.41 mm
    f = _check([_wide(mark="P0"), _wide(mark="P1", my_ed=400), _wide(mark="P2", my_ed=4000 * 0.0553),
                _wide(mark="P3", my_ed=4000 * 0.0555)])
    r = {m: f.loc[(m, "punching-perimeter")] for m in ("P0", "P1", "P2", "P3")}
    assert r["P0"]["severity"] == "ok" and abs(r["P0"]["value"] - 0.333924) < 5e-6
    assert abs(r["P0"]["limit"] - 0.34215) < 5e-5
    assert r["P1"]["severity"] == "unsafe" and abs(r["P1"]["value"] - 0.348770) < 5e-6
    assert "a = 1800 mm" in r["P1"]["message"] and "beta = 1.044" in r["P1"]["message"]
    assert r["P2"]["severity"] == "ok" and 0.998 < r["P2"]["utilisation"] <= 1.0
    assert r["P3"]["severity"] == "unsafe" and 1.0 < r["P3"]["utilisation"] < 1.002


def test_perimeter_simplified_beta_graded(make_caps):
    # the wide cap without moment: β = 1 passes (0.3339), 1.15 x 0.333924 = 0.384013 fails: a query
    f = _check([_wide(mark="Q1")], overrides={"punching_beta_simplified": "1"})
    row = f.loc[("Q1", "punching-perimeter")]
    assert row["severity"] == "query" and "simplified-6.4.3-6" in row["message"]


def test_moment_reduced_by_the_piles_inside_the_perimeter(tol):
    # Statics: the reactions of the column load carry the moment, Σ R_i x_i = My, so a perimeter
    # that encloses every pile carries neither force nor moment (MEd,red = 0, Eq. (6.51) [D])
    X, Y = geo.standard_layout([4], [1800.0])
    m = np.isfinite(X)
    R = rea.pile_reactions(X, Y, m, [4000e3], [300e6], [500e6])
    tol.same(np.nansum(R * X), 500e6)
    tol.same(np.nansum(R * Y), 300e6)
    # a deep compact cap (d = 1400, every pile face within 2d): with a moment the governing
    # vEd stays finite and not below the concentric one
    args = ([4000e3], R, X, Y, m, [600.0], [500.0], [500.0], [False], [2700.0], [2700.0], [1400.0], [0.34])
    c = pun.governing_perimeter(*args)
    g = pun.governing_perimeter(*args, mx_ed=[300e6], my_ed=[500e6])
    assert np.isfinite(g["util"][0]) and g["util"][0] >= 0.99 * c["util"][0]
    assert g["beta"][0] >= 1.0


def test_property_moment_never_lowers_the_perimeter_check():
    rng = np.random.default_rng(5)
    n = 200
    piles = rng.integers(2, 7, n)
    dia = rng.choice([450.0, 600.0, 900.0], n)
    s = dia * rng.uniform(2.5, 3.5, n)
    X, Y = geo.standard_layout(piles, s)
    m = np.isfinite(X)
    col = rng.uniform(300, 900, n)
    rnd = rng.random(n) < 0.3
    L = 2 * (np.nanmax(np.abs(X), axis=1) + 0.5 * dia + 150)
    W = 2 * (np.nanmax(np.abs(Y), axis=1) + 0.5 * dia + 150)
    d = rng.uniform(0.3, 0.8, n) * s
    N = rng.uniform(1000e3, 8000e3, n)
    mx, my = N * rng.uniform(0, 300, n), N * rng.uniform(0, 300, n)
    R = rea.pile_reactions(X, Y, m, N, mx, my)
    args = (N, R, X, Y, m, dia, col, col, rnd, L, W, d, np.full(n, 0.45))
    c = pun.governing_perimeter(*args)
    g = pun.governing_perimeter(*args, mx_ed=mx, my_ed=my)
    ok = np.isfinite(c["util"])
    assert np.all(np.isfinite(g["util"][ok]))
    assert np.all(g["util"][ok] >= 0.99 * c["util"][ok])


# ---- piles near the cap edge punching up -----------------------------------------------------

def test_disc_areas_plane_geometry(tol):
    # a 200 x 200 square inside a disc of radius 1000: 40,000; half a disc: π x 1e6/2; a quarter
    tol.same(pun.disc_rectangle_area(-100.0, 100.0, -100.0, 100.0, 1000.0), 40000.0)
    tol.same(pun.disc_rectangle_area(0.0, 2000.0, -2000.0, 2000.0, 1000.0), np.pi * 1e6 / 2)
    tol.same(pun.disc_rectangle_area(0.0, 5000.0, 0.0, 5000.0, 1000.0), np.pi * 1e6 / 4)
    # segment of depth 100 of a disc of radius 300 (as the area-share test of test_calcs_punching):
    # 90000 x 0.8410687 − 200 x 223.6068 = 75696.18 − 44721.36 = 30974.8 mm²
    tol.printed(pun.disc_rectangle_area(200.0, 400.0, -400.0, 400.0, 300.0), "30974.8")
    # lens ρ = 800, r = 300, D = 1000: 27034.4 mm² (test_calcs_punching, round column)
    tol.printed(pun.disc_overlap_area(1000.0, 800.0, 300.0), "27034.4")
    tol.same(pun.disc_overlap_area(100.0, 800.0, 300.0), np.pi * 300.0 ** 2)
    tol.same(pun.disc_overlap_area(1200.0, 800.0, 300.0), 0.0)


def test_figure_6_15_perimeters(tol):
    # corner pile φ600 at (1500, 1500) in a cap 3900 square, d = 600: ρ = 300 + 1200 = 1500, the
    # edges 450 away: Figure 6.15, πρ/2 + 450 + 450 = 2356.19 + 900 = 3256.19 mm; the circle cut by
    # the edges keeps the inner quarter and ρ asin(450/1500) = 457.039 either side: 3270.27 mm
    p = pun.pile_edge_perimeter([[1500.0]], [[1500.0]], [600.0], [600.0], [3900.0], [3900.0])
    tol.printed(p["u"][0, 0], "3256.19")
    tol.printed(p["u_circle"][0, 0], "3270.27")
    assert p["near"][0, 0] == 2 and p["legs"][0, 0] == 2
    # edge pile at (1500, 0) in a cap 3900 x 6000: πρ + 2 x 450 = 5612.39; circle 2ρ(π − acos(0.3))
    # = 3000 x 1.875489 = 5626.47
    p = pun.pile_edge_perimeter([[1500.0]], [[0.0]], [600.0], [600.0], [3900.0], [6000.0])
    tol.printed(p["u"][0, 0], "5612.39")
    tol.printed(p["u_circle"][0, 0], "5626.47")
    assert p["near"][0, 0] == 1 and p["legs"][0, 0] == 2
    # end pile of the O4 two-pile cap (W = 900, d = 850): ρ = 2000 reaches both long edges and the
    # end: the perimeter is the cap width, 900 mm, across at x = −900 + 2000 = 1100
    p = pun.pile_edge_perimeter([[-900.0]], [[0.0]], [600.0], [850.0], [2700.0], [900.0])
    tol.same(p["u"][0, 0], 900.0)
    assert p["near"][0, 0] == 3


def _corner(**kw):
    # four piles φ600 at s = 3000, column 500, cap 3900 square, h = 700 (d = 600), 16H25 each way
    # (hand: ρ = √(7854/(3900 x 612.5) x 7854/(3900 x 587.5)) = 0.3357 %, k = 1.57735,
    # vRd,c = 0.12 x 1.57735 x (100 x 0.003357 x 30)^(1/3) = 0.40875 MPa > vmin 0.3798);
    # no self-weight, no tolerance: R = N/4; the column corner is hypot(1250, 1250) = 1767.8 from the
    # pile centre, beyond ρ = 1500, and the neighbours 3000 away: VEd = R
    return _o5(**{**dict(pile_spacing=3000, cap_length=3900, cap_width=3900, cap_depth=700,
                         bars_x="16H25", bars_y="16H25"), **kw})


def test_corner_pile_pass_fail_borderline():
    # vEd = R/(u d) = R/(3256.19 x 600): N = 4000 -> 1.0e6/1953716 = 0.51184 MPa (fails 0.40875);
    # N = 3000 -> 0.38388 (passes); borderline N = 4 x 0.40875 x 1953716 = 3194.4 kN
    over = {"gamma_g": "0", "pile_tolerance": "0"}
    f = _check([_corner(mark="K1", n_ed=4000), _corner(mark="K2", n_ed=3000),
                _corner(mark="K3", n_ed=3190), _corner(mark="K4", n_ed=3200)], overrides=over)
    r = {m: f.loc[(m, "punching-pile")] for m in ("K1", "K2", "K3", "K4")}
    assert r["K1"]["severity"] == "unsafe"
    assert abs(r["K1"]["value"] - 0.51184) < 5e-5 and abs(r["K1"]["limit"] - 0.40875) < 5e-5
    assert "3256 mm" in r["K1"]["message"] and "adds 2 mm" in r["K1"]["action"]
    assert r["K2"]["severity"] == "ok" and abs(r["K2"]["value"] - 0.38388) < 5e-5
    assert r["K3"]["severity"] == "ok" and 0.997 < r["K3"]["utilisation"] < 1.0
    assert r["K4"]["severity"] == "unsafe" and 1.0 < r["K4"]["utilisation"] < 1.003


def test_corner_pile_a_larger_overhang_lengthens_the_perimeter():
    # the same piles in a cap 4500 square (edges 750 from the pile centres): u = 2356.19 + 1500
    # = 3856.19 mm, vEd = 1.0e6/(3856.19 x 600) = 0.43221 MPa: less than 0.51184 with 450 mm
    over = {"gamma_g": "0", "pile_tolerance": "0"}
    f = _check([_corner(mark="K5", n_ed=4000, cap_length=4500, cap_width=4500, bars_x="18H25",
                        bars_y="18H25")], overrides=over)
    row = f.loc[("K5", "punching-pile")]
    assert "3856 mm" in row["message"] and abs(row["value"] - 0.43221) < 5e-5


def test_compact_caps_have_the_column_inside_the_pile_perimeter():
    # O5 (d = 900, ρ = 2100): the column and the neighbouring piles are inside the circle round a
    # corner pile; the column load inside exceeds the upward force, so nothing punches up (vEd = 0)
    f = _check([_o5(mark="O5")])
    row = f.loc[("O5", "punching-pile")]
    assert row["severity"] == "ok" and row["value"] == 0.0
    # O4 two-pile cap: the end pile's perimeter is the cap width (900 mm); not unsafe
    f = _check([_o5(mark="O4", piles=2, cap_length=2700, cap_width=900, cap_depth=937.5, n_ed=2000,
                    bars_x="6H25", bars_y="6H16")])
    row = f.loc[("O4", "punching-pile")]
    assert row["severity"] == "ok" and "900 mm" in row["message"]
    # a single pile: not applicable
    f = _check([_o5(mark="S1", piles=1, pile_spacing=None, cap_length=900, cap_width=900,
                    cap_depth=900, n_ed=1000, column="500")])
    assert f.loc[("S1", "punching-pile"), "message"].startswith("Not applicable")


def test_working_states_beta_and_its_source():
    from checker.api import check_schedule
    from checker.ingest.schedule import schedule_from_frame

    rv = check_schedule(schedule_from_frame(pd.DataFrame([_wide(mark="W1", my_ed=400)])),
                        load_ruleset("uk-na"), "moment")
    text = "\n".join(str(w) for w in rv.working("W1"))
    assert "beta = 1.044, source 1 of" in text
    assert "Eq. (6.51)" in text and "punching_beta_simplified = 1, now 0" in text
    assert "Figure 6.15" in text


def test_derive_gives_every_new_quantity(make_caps):
    q = derive(make_caps(dict(mark="A", mx_ed=100e6, my_ed=50e6)), None, {}).q
    for k in ("beta0", "beta1", "ved0_simpl", "ved1_simpl", "ved_pile", "u_pile", "pile_punch_applies"):
        assert k in q and q[k].shape == (1,)
    assert q["beta0"][0] > 1.0
