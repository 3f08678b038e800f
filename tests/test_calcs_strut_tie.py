"""Strut-and-tie: tie forces by the general method against the closed forms, strut angles, nodes.

Sources (engineering reference):
* §6 closed forms: 2 piles N l/(4d) [V: S28, S15] and N(3l² − a²)/(12 l d) [V partial: S16; D];
  4 piles per side N l/(8d) [V: S15] and N(3l² − a²)/(24 l d) [V: S17; D]; 3 piles per side
  N l/(9d) [M; D] and N(2l² − a²)/(18 l d) [D only, not published].
* §15 O4 (2 piles), O5 (4 piles), O6 (3 piles), O10 (S15 and S17 regressions, T/N table).
* §15 O1 node limits; O4/O5 node stresses; S25 for the uncased pile design diameter (2.3.4.2(2)).
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as hst

from checker import geometry as geo
from checker.calcs import materials as mat
from checker.calcs import reactions as rea
from checker.calcs import strut_tie as st


def truss(piles, l, d, N, a=0.0, column_round=False):
    """General method for a standard layout: (X, Y, mask, Hx, Hy)."""
    X, Y = geo.standard_layout([piles], [l])
    m = np.isfinite(X)
    R = rea.pile_reactions(X, Y, m, [N])
    u2 = st.column_second_moment([a], [column_round])
    Hx = st.pile_node_force(X, R, m, [N], [d], u2)
    Hy = st.pile_node_force(Y, R, m, [N], [d], u2)
    return X, Y, m, Hx, Hy


def tie_2(N, l, d, a=0.0):
    return N * (3 * l * l - a * a) / (12 * l * d)


def tie_4(N, l, d, a=0.0):
    return N * (3 * l * l - a * a) / (24 * l * d)


def tie_3(N, l, d, a=0.0):
    return N * (2 * l * l - a * a) / (18 * l * d)


# ---- the six closed forms against the reference's numbers -----------------------------------

def test_two_piles_point_node_o4(tol):
    # O4: T = 2000 × 1800/(4 × 850) = 1058.82 kN → As,req = 2435.3 mm²
    X, Y, m, Hx, Hy = truss(2, 1800, 850, 2000e3)
    T = np.nanmax(np.abs(Hx))
    tol.same(T, 2000e3 * 1800 / (4 * 850))
    tol.printed(T / 1e3, "1058.82")
    tol.printed(st.tie_steel_required(T, mat.fyd(500)), "2435.3")
    tol.same(np.nanmax(np.abs(Hy)), 0.0)


def test_two_piles_column_width_o4(tol):
    # O4: T = 2000(3·1800² − 500²)/(12·1800·850) = 1031.59 kN → 2372.7 mm²; O10: T/N = 0.515795
    X, Y, m, Hx, Hy = truss(2, 1800, 850, 2000e3, a=500)
    T = np.nanmax(np.abs(Hx))
    tol.same(T, tie_2(2000e3, 1800, 850, 500))
    tol.printed(T / 1e3, "1031.59")
    tol.printed(T / 2000e3, "0.515795")
    tol.printed(st.tie_steel_required(T, mat.fyd(500)), "2372.7")


def test_four_piles_point_node_o5_and_s15(tol):
    # O5: per side T = 4000 × 1800/(8 × 900) = 1000.00 kN → 2300.0 mm²; total 2000 kN / 4600 mm²
    X, Y, m, Hx, Hy = truss(4, 1800, 900, 4000e3)
    T = np.nanmax(np.abs(Hx))
    tol.printed(T / 1e3, "1000.00")
    tol.printed(st.tie_steel_required(T, mat.fyd(500)), "2300.0")
    tol.same(np.abs(Hx[m]), np.full(4, T))
    tol.same(np.abs(Hy[m]), np.full(4, T))
    # S15 (O10): total per direction WSd·L/(4d) = 2850 × 1350/(4 × 675) = 1425.0 kN, fyd = 400
    X, Y, m, Hx, Hy = truss(4, 1350, 675, 2850e3)
    total = 2 * np.nanmax(np.abs(Hx))  # two x-ties
    tol.printed(total / 1e3, "1425.0")
    tol.printed(st.tie_steel_required(total, 400.0), "3562.5")


def test_four_piles_column_width_o5_and_s17(tol):
    # O5: N(3l² − a²)/(24 l d) = 974.28 kN per side → 2240.8 mm²; O10: T/N = 0.243570
    X, Y, m, Hx, Hy = truss(4, 1800, 900, 4000e3, a=500)
    T = np.nanmax(np.abs(Hx))
    tol.same(T, tie_4(4000e3, 1800, 900, 500))
    tol.printed(T / 1e3, "974.28")
    tol.printed(T / 4000e3, "0.243570")
    tol.printed(st.tie_steel_required(T, mat.fyd(500)), "2240.8")
    # S17 / §14.3 / O10: 35000 kN, l = 4500, d = 2500, a = 1200 → 7688.33 kN, T/N = 0.219667;
    # As = 7688.33e3/(0.87 × 460) = 19211 mm²
    X, Y, m, Hx, Hy = truss(4, 4500, 2500, 35000e3, a=1200)
    T = np.nanmax(np.abs(Hx))
    tol.printed(T / 1e3, "7688.33")
    tol.printed(T / 35000e3, "0.219667")
    tol.printed(st.tie_steel_required(T, 0.87 * 460), "19211")


def test_three_piles_point_node_o6(tol):
    # O6: R = l/√3 = 1039.2; radial force (N/3)(R/d) = 1154.70 kN = 2T cos 30°;
    # T per side = 3000 × 1800/(9 × 900) = 666.67 kN → 1533.3 mm²
    X, Y, m, Hx, Hy = truss(3, 1800, 900, 3000e3)
    radial = np.hypot(Hx, Hy)[m]
    tol.printed(radial / 1e3, "1154.70")
    sides = st.triangle_side_ties(X[:, :3], Y[:, :3], Hx[:, :3], Hy[:, :3])
    tol.same(sides[0], np.full(3, 3000e3 * 1800 / (9 * 900)))
    tol.printed(sides / 1e3, "666.67")
    tol.same(sides[0], radial / np.sqrt(3.0))  # T = F/√3 for the equilateral triangle
    tol.printed(st.tie_steel_required(sides.max(), mat.fyd(500)), "1533.3")


def test_three_piles_column_width_o6(tol):
    # O6 (derived formula, not published): 3000(2·1800² − 500²)/(18·1800·900) = 640.95 kN →
    # 1474.2 mm²; O10: T/N = 0.213649
    X, Y, m, Hx, Hy = truss(3, 1800, 900, 3000e3, a=500)
    sides = st.triangle_side_ties(X[:, :3], Y[:, :3], Hx[:, :3], Hy[:, :3])
    tol.same(sides[0], np.full(3, tie_3(3000e3, 1800, 900, 500)))
    tol.printed(sides / 1e3, "640.95")
    tol.printed(sides / 3000e3, "0.213649")
    tol.printed(st.tie_steel_required(sides.max(), mat.fyd(500)), "1474.2")


@settings(max_examples=100, deadline=None)
@given(hst.floats(900, 6000), hst.floats(300, 3000), hst.floats(0, 0.5), hst.floats(1e5, 5e7))
def test_general_method_equals_closed_forms(l, d, a_frac, N):
    # §6 derivation [D]: the general method reproduces all closed forms for any l, d, a < l
    a = a_frac * l
    _, _, _, Hx2, _ = truss(2, l, d, N, a)
    _, _, _, Hx4, Hy4 = truss(4, l, d, N, a)
    X3, Y3, _, Hx3, Hy3 = truss(3, l, d, N, a)
    sides = st.triangle_side_ties(X3[:, :3], Y3[:, :3], Hx3[:, :3], Hy3[:, :3])
    assert np.isclose(np.nanmax(np.abs(Hx2)), tie_2(N, l, d, a), rtol=1e-9)
    assert np.isclose(np.nanmax(np.abs(Hx4)), tie_4(N, l, d, a), rtol=1e-9)
    assert np.isclose(np.nanmax(np.abs(Hy4)), tie_4(N, l, d, a), rtol=1e-9)
    assert np.allclose(sides, tie_3(N, l, d, a), rtol=1e-9)


def test_circular_column_spread():
    # a circle of diameter D spreads the load with E[u²] = D²/16 (a square of side a: a²/12)
    assert np.isclose(st.column_second_moment(600.0, True), 600.0 ** 2 / 16)
    assert np.isclose(st.column_second_moment(600.0, False), 600.0 ** 2 / 12)


def test_resolve_onto_ties_equilateral(tol):
    # 2 T cos 30° = F: ties at ±30° from the inward direction
    F = 1000.0
    u1 = (-np.cos(np.radians(30)), np.sin(np.radians(30)))
    u2 = (-np.cos(np.radians(30)), -np.sin(np.radians(30)))
    t1, t2 = st.resolve_onto_ties(F, 0.0, *u1, *u2)
    tol.same([t1, t2], [F / np.sqrt(3), F / np.sqrt(3)])


# ---- tie rows and the steel counted (reference G5) ---------------------------------------------

def _rows(piles, l, phi, W, as_total, cover=75.0, N=4000e3, d=900.0):
    X, Y, m, Hx, Hy = truss(piles, l, d, N)
    return st.tie_rows_check(Hx, Y, m, [as_total], mat.fyd([500.0]), [phi], [W], [cover])


def test_rows_spacing_3phi_share_whole_layer_o5(tol):
    # O5: spacing = 3φ → the whole layer is shared by the two x-ties: 4908.7/2 per tie
    out = _rows(4, 1800, 600, 2700, 4908.7)
    assert out["rows"][0] == 2
    tol.same(out["as_prov"], [4908.7 / 2])
    tol.printed(out["T"] / 1e3, "1000.00")
    tol.same(out["util"], out["T"] / (mat.fyd(500) * 4908.7 / 2))
    tol.same(out["t_total"], 2 * out["T"])


def test_rows_spacing_over_3phi_count_band_only(tol):
    # spacing 1800 = 4φ for φ450: only the bars within 1.5φ = 675 mm of the pile line count;
    # cap W = 1800 + 450 + 300 = 2550, bar spread W − 2·75 = 2400; pile line y = ±900 → band
    # [225, 1575] clipped to [−1200, 1200] → 975 mm → 975/2400 of the layer
    out = _rows(4, 1800, 450, 2550, 4800.0)
    tol.same(out["as_prov"], [4800.0 * 975.0 / 2400.0])
    # a wider cap keeps the whole 3φ band: W = 4000 → band 1350 of 3850
    out = _rows(4, 1800, 450, 4000, 4800.0)
    tol.same(out["as_prov"], [4800.0 * 1350.0 / 3850.0])


def test_rows_counts_by_layout():
    # rows = distinct pile y-coordinates carrying H_x ≠ 0 (x-ties)
    for piles, rows_x in ((1, 0), (2, 1), (3, 1), (4, 2), (5, 2), (6, 2)):
        out = _rows(piles, 1800, 600, 5000, 5000.0)
        assert out["rows"][0] == rows_x, piles
        if rows_x == 0:
            assert np.isnan(out["T"][0])


# ---- strut angles ----------------------------------------------------------------------------

def test_strut_angles_reference(tol):
    # O4: 43.363° (cot 1.0588) to the column centre, 47.643° to the quarter point (run 900 − 125)
    tol.printed(st.strut_angle(900.0, 850.0), "43.363")
    tol.printed(st.cot_theta(st.strut_angle(900.0, 850.0)), "1.0588")
    tol.printed(st.strut_angle(775.0, 850.0), "47.643")
    # O4: strut force (N/2)/sin θ = 1456.40 kN
    tol.printed(1000.0 / np.sin(np.radians(st.strut_angle(900.0, 850.0))), "1456.40")
    # O5: 35.264° (cot 1.4142); O6: R = 1039.2, 40.893°
    tol.printed(st.strut_angle(np.hypot(900, 900), 900.0), "35.264")
    tol.printed(st.cot_theta(st.strut_angle(np.hypot(900, 900), 900.0)), "1.4142")
    tol.printed(1800 / np.sqrt(3), "1039.2")
    tol.printed(st.strut_angle(1800 / np.sqrt(3), 900.0), "40.893")
    # O10: cot θ = 2.5 ↔ 21.801°, cot θ = 2.0 ↔ 26.565°
    tol.printed(st.strut_angle(2.5, 1.0), "21.801")
    tol.printed(st.strut_angle(2.0, 1.0), "26.565")


# ---- nodes -----------------------------------------------------------------------------------

@pytest.mark.parametrize("a_cc, ccc, cct, ctt", [(0.85, "14.960", "12.716", "11.220"),
                                                  (1.0, "17.600", "14.960", "13.200")])
def test_node_limits_o1(a_cc, ccc, cct, ctt, tol):
    # O1: k ν' fcd for C30/37, UK (αcc 0.85) and EN (αcc 1.0)
    fcd = mat.fcd(30, alpha_cc=a_cc)
    nup = mat.nu_prime(30)
    tol.printed(st.node_limit(1.0, nup, fcd), ccc)
    tol.printed(st.node_limit(0.85, nup, fcd), cct)
    tol.printed(st.node_limit(0.75, nup, fcd), ctt)
    # O1: cracked strut 0.6 ν' fcd
    tol.printed(st.node_limit(0.6, nup, fcd), "8.976" if a_cc == 0.85 else "10.560")


def test_pile_node_factor_decision_6():
    k = st.pile_node_factor([1, 2, 3, 4, 5, 6, np.nan])
    assert k[:6].tolist() == [1.0, 0.85, 0.75, 0.75, 0.75, 0.75] and np.isnan(k[6])


def test_node_stresses_o4_o5(tol):
    # O4: pile node 1000 kN/(π·300²) = 3.537 MPa; uncased 0.95 × 600 = 570 → 3.919 MPa;
    # column node 2000 kN/250 000 mm² = 8.000 MPa
    a_p = np.pi * 300.0 ** 2
    tol.printed(st.bearing_stress(1000e3, a_p), "3.537")
    dp = st.pile_design_diameter(600.0, True)
    tol.printed(dp, "570")
    tol.printed(st.bearing_stress(1000e3, np.pi * dp ** 2 / 4), "3.919")
    a_col = st.column_area(500.0, 500.0, False)
    tol.printed(st.bearing_stress(2000e3, a_col), "8.000")
    # O5: column node 4000 kN/250 000 = 16.000 MPa > 14.960 (UK strict) but ≤ 1.1 × 14.96 =
    # 16.456 and ≤ EN 17.600
    s = st.bearing_stress(4000e3, a_col)
    tol.printed(s, "16.000")
    lim_uk = st.node_limit(1.0, mat.nu_prime(30), mat.fcd(30, alpha_cc=0.85))
    assert s > lim_uk
    tol.printed(1.1 * lim_uk, "16.456")
    assert s <= 1.1 * lim_uk
    assert s <= st.node_limit(1.0, mat.nu_prime(30), mat.fcd(30, alpha_cc=1.0))
    tol.same(st.column_area(600.0, 600.0, True), np.pi * 300.0 ** 2)


def test_strut_face_with_the_tie_zone_fig_6_27(tol):
    """EN 1992-1-1:2004 Fig. 6.27 [M]: a2 = a1 sinθ + u cosθ; σ = C/(a2 b), C = R/sinθ. O5-like
    node: R = 1000 kN on a φ600 pile head, θ with sin²θ = 1/3 (four piles, run l/√2 = d√2),
    cover 75 and H25: u = 2(75 + 12.5) = 175 mm (capcheck's choice: the tie zone centred on the
    lowest layer), a1 = b = √(π·300²) = 531.74 mm (equivalent square of the pile head, capcheck's
    convention). a2 = 531.74·0.57735 + 175·0.81650 = 306.99 + 142.89 = 449.88 mm;
    σ = (1000e3/0.57735)/(449.88·531.74) = 7.240 MPa against R/(A sin²θ) = 10.610 MPa."""
    R, A = 1000e3, np.pi * 300.0 ** 2
    b = st.equivalent_square_side(A)
    tol.printed(b, "531.74")
    u = st.tie_zone_height(75.0, 25.0)
    tol.same(u, 175.0)
    theta = np.degrees(np.arcsin(np.sqrt(1 / 3)))
    a2 = st.strut_face_width(b, u, theta)
    tol.printed(a2, "449.88")
    sig = st.strut_stress_node_geometry(R, b, b, u, theta)
    tol.printed(sig, "7.240")
    tol.printed(st.strut_face_stress(R, A, theta), "10.610")
    # with no tie zone the geometry gives the simple sizing back (identity)
    tol.same(st.strut_stress_node_geometry(R, b, b, 0.0, theta), st.strut_face_stress(R, A, theta))
    # vertical strut: the bearing stress
    tol.same(st.strut_stress_node_geometry(R, b, b, u, 90.0), st.bearing_stress(R, A))
    # vectorised over caps and piles
    got = st.strut_stress_node_geometry(np.full((2, 3), R), np.full((2, 1), b), np.full((2, 1), b),
                                        np.full((2, 1), u), np.full((2, 3), theta))
    tol.same(got, np.full((2, 3), sig))


def test_partially_loaded_area_6_7(tol):
    """EN 1992-1-1:2004 6.7(2), (3), Eq. (6.63), Fig. 6.29 [M]: FRdu/Ac0 = fcd √(Ac1/Ac0) ≤ 3 fcd,
    Ac1 similar to Ac0, b2 − b1 ≤ h, d2 − d1 ≤ h, within the member."""
    # 400 × 400 on h = 1200 in a 2700 cap: b2 = 1600 -> ratio 4.0, capped at 3.0 (issue 10, item 7)
    r = st.partially_loaded_area_ratio(400.0, 400.0, 1200.0, 2700.0, 2700.0)
    tol.same(r, 4.0)
    fcd = mat.fcd(32.0, alpha_cc=0.85)                     # 18.133 MPa
    tol.printed(st.partially_loaded_limit(fcd, r), "54.40")
    # 600 × 400 on h = 300: the longer side limits, b2 − b1 ≤ h -> λ = 1 + 300/600 = 1.5
    # (d2 = 600, d2 − d1 = 200 ≤ 300): Ac1/Ac0 = 2.25
    tol.same(st.partially_loaded_area_ratio(600.0, 400.0, 300.0, 3000.0, 3000.0), 1.5)
    # the plan governs: 600 square in a 1350 cap, h = 1500: λ = min(3.5, 2.25) = 2.25
    tol.same(st.partially_loaded_area_ratio(600.0, 600.0, 1500.0, 1350.0, 1350.0), 2.25)
    # vectorised
    tol.same(st.partially_loaded_area_ratio(np.array([400.0, 600.0]), np.array([400.0, 600.0]),
                                            np.array([1200.0, 1500.0]), np.array([2700.0, 1350.0]),
                                            np.array([2700.0, 1350.0])), [4.0, 2.25])


@pytest.mark.parametrize("d_nom, d_design", [(350, 330), (399, 379), (400, 380), (600, 570),
                                             (1000, 950), (1200, 1150)])
def test_pile_design_diameter_s25(d_nom, d_design, tol):
    # EN 1992-1-1 2.3.4.2(2) (reference S25): < 400 → −20; 400..1000 → 0.95; > 1000 → −50
    tol.same(st.pile_design_diameter(d_nom, True), d_design)
    tol.same(st.pile_design_diameter(d_nom, False), d_nom)


def test_shallow_cap_pile_node_stress_rises_as_strut_flattens():
    # decision 6: σ = R/(A sin²θ) on the strut face; shallower cap → flatter strut → higher stress
    R, a_p, run = 1000e3, np.pi * 300.0 ** 2, 1272.8
    depths = np.array([1500.0, 1200.0, 900.0, 700.0, 500.0, 350.0])
    theta = st.strut_angle(run, depths)
    sigma = st.strut_face_stress(R, a_p, theta)
    assert np.all(np.diff(theta) < 0) and np.all(np.diff(sigma) > 0)
    assert np.all(sigma > st.bearing_stress(R, a_p))
    # θ = 90° (pile under the column) gives the bearing stress itself
    assert np.isclose(st.strut_face_stress(R, a_p, 90.0), st.bearing_stress(R, a_p))


# ---- symmetry --------------------------------------------------------------------------------

@settings(max_examples=60, deadline=None)
@given(hst.sampled_from([2, 4, 5, 6]), hst.floats(900, 4000), hst.floats(400, 2500),
       hst.floats(1e5, 3e7), hst.floats(0, 0.4))
def test_symmetric_layouts_give_symmetric_ties(piles, l, d, N, a_frac):
    X, Y, m, Hx, Hy = truss(piles, l, d, N, a_frac * l)
    for i in np.flatnonzero(m[0]):
        # the mirror pile in x (−x_i, y_i) carries the opposite horizontal force
        j = np.flatnonzero(m[0] & np.isclose(X[0], -X[0, i], atol=1e-6) & np.isclose(Y[0], Y[0, i], atol=1e-6))
        assert j.size == 1
        assert np.isclose(Hx[0, j[0]], -Hx[0, i], rtol=1e-9, atol=1e-6)
        assert np.isclose(Hy[0, j[0]], Hy[0, i], rtol=1e-9, atol=1e-6)


@settings(max_examples=60, deadline=None)
@given(hst.integers(1, 6), hst.floats(900, 4000), hst.floats(400, 2500), hst.floats(1e5, 3e7),
       hst.floats(-2e9, 2e9), hst.floats(-2e9, 2e9))
def test_rotating_90_swaps_x_and_y(piles, l, d, N, mx, my):
    # rotate the group and its loading by +90° (x' = −y, y' = x); with R = N/n + Mx·y/Σy² +
    # My·x/Σx² the moments become Mx' = My, My' = −Mx, and the x and y node forces swap roles
    X, Y = geo.standard_layout([piles], [l])
    m = np.isfinite(X)
    R = rea.pile_reactions(X, Y, m, [N], [mx], [my])
    Xr, Yr = -Y, X
    Rr = rea.pile_reactions(Xr, Yr, m, [N], [my], [-mx])
    assert np.allclose(R[m], Rr[m], rtol=1e-9, atol=1e-6 * N)
    Hx = st.pile_node_force(X, R, m, [N], [d])
    Hy = st.pile_node_force(Y, R, m, [N], [d])
    Hxr = st.pile_node_force(Xr, Rr, m, [N], [d])
    Hyr = st.pile_node_force(Yr, Rr, m, [N], [d])
    assert np.allclose(Hxr[m], -Hy[m], rtol=1e-9, atol=1e-6 * N)
    assert np.allclose(Hyr[m], Hx[m], rtol=1e-9, atol=1e-6 * N)


def test_tension_across_centreline(tol):
    # 4 piles: both x-ties cross x = 0 → 2T (O5: 2000 kN per direction); 3 piles, y: the top
    # pile's N l/(3√3 d) is the whole tension across y = 0 (the two bottom piles balance it)
    X, Y, m, Hx, Hy = truss(4, 1800, 900, 4000e3)
    tol.printed(st.tension_across_centreline(Hx, X, m) / 1e3, "2000.00")
    X, Y, m, Hx, Hy = truss(3, 1800, 900, 3000e3)
    tol.same(st.tension_across_centreline(Hy, Y, m), [3000e3 * 1800 / (3 * np.sqrt(3) * 900)])
    tol.same(st.tension_across_centreline(Hx, X, m), [3000e3 * 1800 / (6 * 900)])
    X, Y, m, Hx, Hy = truss(1, 1800, 900, 3000e3)
    assert np.isnan(st.tension_across_centreline(Hx, X, m)[0])
