"""derive(): every quantity over a schedule frame, once, vectorised.

Sources: engineering reference §15 O4 (2-pile cap), O5 (4-pile cap, column node fails the UK
strict limit), O7 (pile loads and tolerance), O8 (anchorage length available), and the product
brief (quantity names, effective depths, self-weight as N/n). The frames are built by hand with
the DEVELOPERS.md canonical columns (tests/conftest.py), not through the ingest module.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from profile_params import derive

from checker.ruleset.derive import INPUT_QUANTITIES

REQUIRED = """n_piles d_x d_y d_mean spacing_min edge_min plan_overhang r_max strut_angle_min
cot_theta_max phi_bar_min as_x as_y centres_x centres_y clear_x clear_y clear_min_req as_min_x
as_min_y as_max cover_req cmin_dur fck fcd fcd_shear fctm fctd fyd nu_prime nu self_weight
r_nom_max r_nom_min r_tol_max r_tol_min tie_x tie_y as_req_x as_req_y as_tie_x as_tie_y util_tie_x
util_tie_y tie_rows_x tie_rows_y sigma_col sigma_col_strut sigma_pile sigma_pile_bearing
k_pile_node node_col_limit node_pile_limit ved_x vrd_x ved_max_x vrd_max_x av_x beta_x vrdc_x
rho_x ved_y vrd_y ved_max_y vrd_max_y av_y beta_y vrdc_y rho_y u0 ved0 vrd_max_punch
punch_applies u1 ved1 vrd1 fbd lbd_x lb_avail_x lbd_y lb_avail_y sigma_sd_x sigma_sd_y
bar_ends_known bar_bent spacing_le_3phi stated_diff is_uncased m_face_x as_bend_x""".split()

NO_SW = {"gamma_g": 0.0}  # the oracles' N already includes the cap weight

O4 = dict(mark="O4")  # conftest default row: d_x = 937.5 − 75 − 12.5 = 850
O5 = dict(mark="O5", piles=4.0, cap_width=2700.0, cap_depth=987.5, n_ed=4000e3, nx=10.0,
          ny=10.0, phi_y=25.0, bars_x="10H25", bars_y="10H25")  # d_x = 900


def test_every_required_quantity_present(make_caps):
    caps = make_caps(O4, O5, dict(mark="P1", piles=1.0), dict(mark="P6", piles=6.0,
                                                              cap_width=2700, cap_length=4500))
    d = derive(caps, None, {})
    missing = [k for k in REQUIRED + list(INPUT_QUANTITIES) if k not in d.q]
    assert not missing, missing
    for k, v in d.q.items():
        assert isinstance(v, np.ndarray) and v.shape == (4,) and v.dtype == float, k
    assert d.X.shape == d.Y.shape == d.mask.shape == (4, 6)
    assert "stated_diff_what" not in d.q


def test_catalogue_quantities_all_derived(make_caps):
    # the rule engine's catalogue (another module) names the quantities rule files may use
    catalogue = pytest.importorskip("checker.ruleset.catalogue")
    d = derive(make_caps(O4), None, {})
    missing = [k for k in catalogue.QUANTITIES if k not in d.q]
    assert not missing, missing


def test_o4_two_pile_cap(make_caps, tol):
    q = derive(make_caps(O4), None, NO_SW).q
    tol.same(q["d_x"], [850.0])
    tol.printed(q["tie_x"] / 1e3, "1058.82")          # O4 T = N l/(4d)
    tol.printed(q["as_req_x"], "2435.3")
    assert q["tie_rows_x"][0] == 1 and q["tie_rows_y"][0] == 0 and np.isnan(q["tie_y"][0])
    tol.printed(q["as_x"], "2945.2")
    tol.same(q["as_tie_x"], q["as_x"])                # one row, spacing = 3φ: the whole layer
    tol.printed(q["sigma_pile_bearing"], "3.537")     # O4 pile node
    tol.printed(q["sigma_col"], "8.000")              # O4 column node
    tol.printed(q["node_pile_limit"], "12.716")       # CCT, UK αcc 0.85
    tol.printed(q["node_col_limit"], "14.960")
    tol.printed(q["ved_x"] / 1e3, "1000")
    tol.printed(q["av_x"], "470")
    tol.printed(q["beta_x"], "0.2765")
    tol.printed(q["vrdc_x"], "0.4028")
    tol.printed(q["vrd_x"] / (900 * 850), "1.4570")
    tol.printed(q["vrd_max_x"] / 1e3, "4039.2")       # αcc,shear = 1.0
    tol.printed(q["as_min_x"], "1153.6")
    tol.printed(q["m_face_x"] / 1e6, "650.0")         # bending alternative
    tol.printed(q["as_bend_x"], "1851.4")
    tol.printed(q["lb_avail_x"], "675")               # O8
    tol.printed(q["edge_min"], "150")
    assert q["spacing_le_3phi"][0] == 1.0 and np.isnan(q["ved_y"][0])
    # punching (decision 13, issue 10 item 2): the pile faces lie outside the column face, so the
    # perimeters within 2d are checked; W = 900 cuts them (6.4.2(1), as Figure 6.15):
    # u(a) = 2 x 500 + 4a asin(200/a) at the governing a; it passes (vEd/vRd about 0.90)
    assert q["punch_applies"][0] == 1.0
    a = q["a_punch"][0]
    tol.same(q["u1"], 1000.0 + 4.0 * a * np.arcsin(200.0 / a))
    assert 350.0 < a < 2 * q["d_mean"][0]             # beyond the inner pile face (900 − 300 − 250)
    tol.same(q["ved1"], q["ved_red"] / (q["u1"] * q["d_mean"]))
    tol.same(q["vrd1"], q["vrdc_punch"] * 2 * q["d_mean"] / q["a_punch"])
    assert 0.85 < q["ved1"][0] / q["vrd1"][0] < 0.95
    # strut of a two-pile cap: z = d_x = 850 over the run l/2 = 900 -> 43.363 degrees (reference O4)
    tol.printed(q["strut_angle_min"], "43.363")


def test_o4_options(make_caps, tol):
    caps = make_caps(O4, dict(O4, mark="O4u", pile_type="Uncased bored"))
    q = derive(caps, None, dict(NO_SW, tie_node="column-width", shear_av="clear")).q
    tol.printed(q["tie_x"] / 1e3, "1031.59")          # O4 with the column a = 500
    tol.printed(q["as_req_x"], "2372.7")
    tol.printed(q["sigma_pile_bearing"][1], "3.919")  # 2.3.4.2(2): 0.95 × 600 = 570
    assert q["is_uncased"].tolist() == [0.0, 1.0]
    tol.printed(q["av_geom_x"], "350")                # EC2-literal av 350 → 0.5d = 425
    tol.printed(q["av_x"], "425")
    tol.printed(q["beta_x"], "0.25")
    tol.printed(q["vrd_x"] / (900 * 850), "1.6113")


def test_o5_four_pile_cap_and_profiles(make_caps, tol):
    caps = make_caps(O5)
    q = derive(caps, None, NO_SW).q
    tol.printed(q["tie_x"] / 1e3, "1000.00")
    tol.printed(q["as_req_x"], "2300.0")
    tol.same(q["as_tie_x"], q["as_x"] / 2)            # 3φ: shared by the two x-ties
    tol.printed(q["sigma_col"], "16.000")
    assert q["sigma_col"][0] > q["node_col_limit"][0]  # O5: fails the UK strict limit
    tol.printed(q["node_pile_limit"], "11.220")       # CTT
    tol.printed(q["ved_x"] / 1e3, "2000")
    tol.printed(q["vrdc_x"], "0.3422")
    tol.printed(q["as_min_x"], "3664.4")
    # the piles lie within 2d but outside the column face: the perimeters within 2d are checked
    # (decision 13; the old "only beyond 2d" practice was unconservative, issue 10 item 2)
    assert q["punch_applies"][0] == 1.0
    assert q["ved1"][0] <= q["vrd1"][0]
    tol.same(q["ved0"], 4000e3 / (2000 * q["d_mean"]))
    tol.printed(q["r_max"], "1272.8")
    # +10 % (6.5.4(5)) option and the EN profile both pass (O5)
    q10 = derive(caps, None, dict(NO_SW, node_factor=1.1)).q
    tol.printed(q10["node_col_limit"], "16.456")
    assert q10["sigma_col"][0] <= q10["node_col_limit"][0]
    qen = derive(caps, None, dict(NO_SW, alpha_cc_flex=1.0, vrdmax_coeff=0.4)).q
    tol.printed(qen["node_col_limit"], "17.600")
    tol.printed(qen["vrd_max_punch"], "4.224")


def test_o7_reactions_and_self_weight(make_caps, tol):
    caps = make_caps(dict(O5, mx_ed=300e6))
    q = derive(caps, None, NO_SW).q
    tol.printed(q["r_nom_max"] / 1e3, "1083.33")
    tol.printed(q["r_nom_min"] / 1e3, "916.67")
    q2 = derive(make_caps(O4), None, NO_SW).q
    tol.printed(q2["r_tol_max"] / 1e3, "1083.33")     # 2 piles, 75 mm along the cap
    # self-weight γG × 25 kN/m³ × L W h shared as N/n
    q3 = derive(make_caps(O4), None, {"gamma_g": 1.35}).q
    sw = 1.35 * 25e-6 * 2700 * 900 * 937.5
    tol.same(q3["self_weight"], [sw])
    tol.same(q3["r_nom_max"], [(2000e3 + sw) / 2])


def test_nan_semantics_and_fills(make_caps):
    caps = make_caps(dict(mark="P1", piles=1.0, pile_spacing=np.nan), O4,
                     dict(mark="bad", piles=np.nan, n_ed=np.nan))
    q = derive(caps, None, {}).q
    assert np.isnan(q["tie_x"][0]) and np.isnan(q["ved_x"][0]) and np.isnan(q["strut_angle_min"][0])
    assert np.isnan(q["spacing_min"][0]) and q["n_piles"][0] == 1
    assert q["mx_ed"][1] == 0.0 and q["my_ed"][1] == 0.0
    assert np.isnan(q["n_piles"][2]) and np.isnan(q["r_nom_max"][2])
    assert np.isnan(q["pile_capacity"]).all()
    assert np.isnan(q["stated_diff"]).all()


def test_stated_diff(make_caps, tol):
    caps = make_caps(dict(O4, stated_tie_x=1.1 * 1058.8235e3, stated_pile_load=1000e3))
    d = derive(caps, None, NO_SW)
    tol.printed(d.q["stated_diff"], "0.100", units=2)
    assert d.text["stated_diff_what"][0] == "stated_tie_x"


def test_bars_at_stated_centres_and_flags(make_caps, tol):
    caps = make_caps(dict(O4, nx=np.nan, sx=145.0, bars_x="H25@145", bar_ends="Bent up",
                          exposure="XS3"))
    q = derive(caps, None, {}).q
    tol.same(q["as_x"], [6 * np.pi * 25 ** 2 / 4])   # floor((900 − 150 − 25)/145) + 1 = 6
    tol.same(q["centres_x"], [145.0])
    assert q["bar_bent"][0] == 1.0 and q["bar_ends_known"][0] == 1.0
    tol.same(q["cmin_dur"], [45.0])
    tol.same(q["cover_req"], [55.0])
    # bent-up bars: the vertical leg h − 2·cover − φ is added
    tol.same(q["lb_avail_x"], [675.0 + 937.5 - 150.0 - 25.0])


def test_explicit_coordinates(make_caps, tol):
    caps = make_caps(dict(mark="E1", piles=np.nan, cap_length=4200, cap_width=900), O4)
    coords = pd.DataFrame({"mark": ["E1"] * 3, "x": [-1500.0, 0.0, 1500.0], "y": [0.0, 0.0, 0.0]})
    d = derive(caps, coords, NO_SW)
    assert d.q["n_piles"].tolist() == [3.0, 2.0]
    tol.same(d.q["spacing_min"], [1500.0, 1800.0])
    tol.same(d.q["r_nom_max"][0], 2000e3 / 3)


def _random_frame(make_caps, n, seed=3):
    rng = np.random.default_rng(seed)
    rows = []
    for i in range(n):
        piles = float(rng.integers(1, 7))
        s = float(rng.choice([1350.0, 1800.0, 2400.0]))
        phi = float(rng.choice([450.0, 600.0]))
        L = 2 * s + phi + 300 if piles in (2, 6) else s + phi + 300 + (s if piles == 5 else 0)
        W = (s + phi + 300) if piles in (3, 4, 5, 6) else phi + 300
        rows.append(dict(
            mark=f"C{i}", piles=piles, pile_spacing=s, pile_dia=phi, cap_length=L, cap_width=W,
            cap_depth=float(rng.uniform(700, 1600)), n_ed=float(rng.uniform(5e5, 8e6)),
            mx_ed=float(rng.choice([np.nan, rng.uniform(-5e8, 5e8)])),
            my_ed=float(rng.uniform(-5e8, 5e8)), fck=float(rng.choice([25.0, 30.0, 32.0, 40.0])),
            nx=float(rng.integers(4, 20)), ny=float(rng.integers(4, 20)),
            phi_x=float(rng.choice([16.0, 20.0, 25.0, 32.0])), phi_y=float(rng.choice([16.0, 20.0])),
            column_round=bool(rng.random() < 0.2), exposure=str(rng.choice(["XC2", "", "XS1"])),
            bar_ends=str(rng.choice(["", "straight", "bent"])),
            pile_type=str(rng.choice(["", "uncased bored"])),
            stated_tie_x=float(rng.choice([np.nan, 1e6]))))
    return make_caps(*rows)


def test_array_equals_element_by_element(make_caps, tol):
    caps = _random_frame(make_caps, 40)
    whole = derive(caps, None, {}).q
    for i in range(len(caps)):
        one = derive(caps.iloc[[i]].reset_index(drop=True), None, {}).q
        for k, v in one.items():
            tol.same(whole[k][i], v[0])


def test_rotating_a_group_90_degrees(make_caps, tol):
    # explicit 5-pile group and its +90° rotation (x' = −y, y' = x), L ↔ W, column sides swapped,
    # moments rotated (Mx' = My, My' = −Mx): geometry and reactions are the same, and the tie
    # forces swap directions (force × lever arm, because the lower layer stays along x)
    pts = [(-1200.0, -600.0), (1200.0, -600.0), (-1200.0, 600.0), (1200.0, 600.0), (0.0, 0.0)]
    a = dict(mark="A", piles=np.nan, cap_length=3600.0, cap_width=2400.0, column_x=600.0,
             column_y=400.0, mx_ed=200e6, my_ed=-150e6, n_ed=3000e3)
    b = dict(a, mark="B", cap_length=2400.0, cap_width=3600.0, column_x=400.0, column_y=600.0,
             mx_ed=-150e6, my_ed=-200e6)
    coords = pd.DataFrame({"mark": ["A"] * 5 + ["B"] * 5,
                           "x": [p[0] for p in pts] + [-p[1] for p in pts],
                           "y": [p[1] for p in pts] + [p[0] for p in pts]})
    q = derive(make_caps(a, b), coords, {}).q
    for k in ("n_piles", "spacing_min", "edge_min", "plan_overhang", "r_max", "r_nom_max",
              "r_nom_min", "r_tol_max", "r_tol_min", "self_weight", "sigma_col", "u0"):
        tol.same(q[k][0], q[k][1])
    tol.same(q["tie_x"][0] * q["d_x"][0], q["tie_y"][1] * q["d_y"][1])
    tol.same(q["tie_y"][0] * q["d_y"][0], q["tie_x"][1] * q["d_x"][1])
    tol.same(q["m_face_x"][0], q["m_face_y"][1])
    tol.same(q["tie_rows_x"][0], q["tie_rows_y"][1])


def test_symmetric_cap_symmetric_ties(make_caps, tol):
    q = derive(make_caps(dict(O5, phi_y=25.0)), None, dict(NO_SW)).q
    tol.same(q["tie_x"] * q["d_x"], q["tie_y"] * q["d_y"])
    tol.same(q["ved_x"], q["ved_y"])


def test_shallow_cap_pile_node_stress_rises(make_caps):
    depths = [1600.0, 1200.0, 900.0, 700.0, 550.0]
    caps = make_caps(*[dict(O5, mark=f"h{h:.0f}", cap_depth=h) for h in depths])
    q = derive(caps, None, NO_SW).q
    assert np.all(np.diff(q["strut_angle_min"]) < 0)
    assert np.all(np.diff(q["sigma_pile"]) > 0)
    assert np.allclose(q["sigma_pile_bearing"], q["sigma_pile_bearing"][0])


def test_derive_100k_caps_whole_schedule(make_caps):
    """100,000 caps in one vectorised pass give the same result as the 200 distinct caps alone
    (timing is the benchmark's job: tests/benchmarks/bench_engine.py)."""
    base = _random_frame(make_caps, 200, seed=11)
    big = pd.concat([base] * 500, ignore_index=True)
    big["mark"] = [f"M{i}" for i in range(len(big))]
    assert len(big) == 100_000
    d = derive(big, None, {})
    small = derive(base, None, {})
    assert d.q["tie_x"].shape == (100_000,)
    np.testing.assert_allclose(d.q["tie_x"][-200:], small.q["tie_x"], equal_nan=True)
    np.testing.assert_allclose(d.q["vrd_x"][:200], small.q["vrd_x"], equal_nan=True)
