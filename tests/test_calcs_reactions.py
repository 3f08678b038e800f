"""Pile reactions of a rigid cap, self-weight and positional tolerance.

Sources: engineering reference §5 (P_i = N/n ± Mx·y_i/Σy² ± My·x_i/Σx²) and §15 O7 (4-pile moment
case, 2-pile tolerance cases, 4-pile ex = ey = 75 mm); §5 note (S15 self-weight reconstruction
2800 + 1.35 × 20 kN/m² × 1.35² m² = 2849 kN, which is 1.35 × 25 kN/m³ × 0.8 m × 1.35² m²).
Statics properties by hypothesis: ΣR = N, ΣR·y = Mx, ΣR·x = My where the group can resist them.
"""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from checker import geometry as geo
from checker.calcs import reactions as rea


def _layout(piles, s):
    X, Y = geo.standard_layout([piles], [s])
    return X, Y, np.isfinite(X)


def test_o7_four_piles_with_moment(tol):
    # O7: piles at (±0.9, ±0.9) m, N = 4000 kN, Mx = 300 kNm: Σy² = 3.24 m² → 1083.33 / 916.67 kN
    X, Y, m = _layout(4, 1800)
    R = rea.pile_reactions(X, Y, m, [4000e3], [300e6], [0.0])
    tol.printed(np.nanmax(R) / 1e3, "1083.33")
    tol.printed(np.nanmin(R) / 1e3, "916.67")
    tol.same(np.sort(R[m]), 1000e3 + np.array([-1, -1, 1, 1]) * 300e6 * 900.0 / 3.24e6)
    assert np.all(R[0][Y[0] > 0] > R[0][Y[0] < 0])  # positive Mx raises the +y piles


def test_o7_two_piles_tolerance(tol):
    # O7: s = 1800, N = 2000 kN, 75 mm along the cap → 1083.33 kN; s = 1350 → 1111.11 kN
    for s, printed in ((1800, "1083.33"), (1350, "1111.11")):
        X, Y, m = _layout(2, s)
        hi, lo = rea.tolerance_reactions(X, Y, m, [2000e3], [0.0], [0.0], tolerance=75.0)
        tol.printed(hi / 1e3, printed)
        tol.same(hi + lo, [2000e3])  # the other pile unloads by the same amount


def test_o7_two_piles_transverse_moment(tol):
    # O7: 75 mm transverse deviation on a 2-pile cap = 2000 kN × 0.075 m = 150 kNm to the ground
    # beams: the pile line cannot resist it, so the reactions stay N/2 (the term is dropped).
    tol.printed(2000e3 * 75.0 / 1e6, "150")
    X, Y, m = _layout(2, 1800)
    R = rea.pile_reactions(X, Y, m, [2000e3], [2000e3 * 75.0], [0.0])
    tol.same(R[m], [1000e3, 1000e3])


def test_o7_four_piles_biaxial_tolerance(tol):
    # O7: 4 piles with ex = ey = 75 mm: elastic Pmax = 1166.67 kN (not the bilinear 1173.61)
    X, Y, m = _layout(4, 1800)
    hi, lo = rea.tolerance_reactions(X, Y, m, [4000e3], [0.0], [0.0], tolerance=75.0, per_axis=True)
    tol.printed(hi / 1e3, "1166.67")
    tol.printed(lo / 1e3, "833.33")


def test_four_piles_tolerance_in_any_direction(tol):
    # 75 mm in any direction (reference decision 10): the worst shift is along the diagonal to the
    # corner pile, 75 mm there = 53.03 mm along each axis: R = N/4 + N e/(4·s/sqrt2)... by hand:
    # R = N/4 + N·e·sqrt(r_x² + r_y²), r_x = r_y = (s/2)/(4 (s/2)²) = 1/(2 s) = 2.7778e-4 /mm
    # -> 1000 + 4000 × 75 × sqrt(2) × 2.7778e-4 = 1117.85 kN (against 1166.67 for (75, 75))
    X, Y, m = _layout(4, 1800)
    hi, lo = rea.tolerance_reactions(X, Y, m, [4000e3], [0.0], [0.0], tolerance=75.0)
    r = 1.0 / (2 * 1800.0)
    tol.same(hi, [1000e3 + 4000e3 * 75.0 * np.sqrt(2) * r])
    tol.printed(hi / 1e3, "1117.85")
    tol.same(lo, [1000e3 - 4000e3 * 75.0 * np.sqrt(2) * r])
    # the worst shift points away from the most loaded pile: towards (-1, -1) for a (+, +) corner
    # or an equivalent corner; its angle is a multiple of 45 degrees off the axes
    ang = rea.tolerance_direction(X, Y, m, [4000e3], [0.0], [0.0], tolerance=75.0)
    assert np.isclose(abs(ang[0]) % 90.0, 45.0)


def test_two_piles_tolerance_same_both_ways(tol):
    # two piles: the transverse shift is taken by the restraint (dropped), so the any-direction
    # and the per-axis readings coincide (O7: 1083.33 kN)
    X, Y, m = _layout(2, 1800)
    a = rea.tolerance_reactions(X, Y, m, [2000e3], [0.0], [0.0], tolerance=75.0)
    b = rea.tolerance_reactions(X, Y, m, [2000e3], [0.0], [0.0], tolerance=75.0, per_axis=True)
    tol.same(a, b)
    tol.printed(a[0] / 1e3, "1083.33")


def test_self_weight_s15_reconstruction(tol):
    # reference §5: 2800 kN + 1.35 × 20 kN/m² × 1.35² m² = 2849 kN (20 kN/m² = 25 kN/m³ × 0.8 m)
    sw = rea.self_weight(1350.0, 1350.0, 800.0, gamma_g=1.35, density=25.0)
    tol.printed((2800e3 + sw) / 1e3, "2849", units=2)


def test_single_pile_takes_everything(tol):
    X, Y, m = _layout(1, 1000)
    R = rea.pile_reactions(X, Y, m, [1500e3], [50e6], [70e6])
    tol.same(R[m], [1500e3])


def test_explicit_group_off_centroid(tol):
    # a column off the group centroid adds N·e: three piles in a line at x = 0, 1000, 2000, the
    # column at x = 0 → e = −1000 from the centroid; lever rule gives 5/6, 2/6, −1/6 of N
    X = np.array([[0.0, 1000.0, 2000.0]])
    Y = np.zeros_like(X)
    m = np.ones_like(X, dtype=bool)
    R = rea.pile_reactions(X, Y, m, [600e3])
    tol.same(R[0], [500e3, 200e3, -100e3])


# ---- hypothesis statics ------------------------------------------------------------------------

layouts = st.integers(min_value=1, max_value=6)
spacing = st.floats(min_value=600.0, max_value=5000.0)
loads = st.floats(min_value=1e4, max_value=5e7)
moments = st.floats(min_value=-5e9, max_value=5e9)


@settings(max_examples=200, deadline=None)
@given(layouts, spacing, loads, moments, moments)
def test_statics_standard_layouts(piles, s, N, mx, my):
    X, Y, m = _layout(piles, s)
    R = rea.pile_reactions(X, Y, m, [N], [mx], [my])
    r = R[m]
    assert np.isclose(r.sum(), N, rtol=1e-9)
    sy2 = (Y[m] ** 2).sum()
    sx2 = (X[m] ** 2).sum()
    if sy2 > 0:  # the layout can resist Mx
        assert np.isclose((r * Y[m]).sum(), mx, rtol=1e-9, atol=1e-6 * N * s)
    if sx2 > 0:
        assert np.isclose((r * X[m]).sum(), my, rtol=1e-9, atol=1e-6 * N * s)


coords = st.lists(st.tuples(st.floats(-3000, 3000), st.floats(-3000, 3000)), min_size=3, max_size=8)


@settings(max_examples=200, deadline=None)
@given(coords, loads, moments, moments)
def test_statics_explicit_groups(pts, N, mx, my):
    X = np.array([[p[0] for p in pts]])
    Y = np.array([[p[1] for p in pts]])
    m = np.ones_like(X, dtype=bool)
    u, v = X - X.mean(), Y - Y.mean()
    suu, svv, suv = (u * u).sum(), (v * v).sum(), (u * v).sum()
    if suu * svv - suv * suv <= 1e-3 * (suu + svv) ** 2 or suu + svv < 1e4:  # collinear: skip
        return
    R = rea.pile_reactions(X, Y, m, [N], [mx], [my])
    scale = N * 3000.0
    assert np.isclose(R.sum(), N, rtol=1e-9)
    assert np.isclose((R * Y).sum(), mx, rtol=1e-7, atol=1e-7 * scale)
    assert np.isclose((R * X).sum(), my, rtol=1e-7, atol=1e-7 * scale)


@settings(max_examples=100, deadline=None)
@given(st.integers(2, 6), spacing, loads, st.floats(0.0, 150.0))
def test_tolerance_equals_extra_moments(piles, s, N, e):
    X, Y, m = _layout(piles, s)
    hi, lo = rea.tolerance_reactions(X, Y, m, [N], [0.0], [0.0], tolerance=e, per_axis=True)
    best_hi, best_lo = -np.inf, np.inf
    for sx in (-1, 1):
        for sy in (-1, 1):
            R = rea.pile_reactions(X, Y, m, [N], [sy * N * e], [sx * N * e])
            best_hi, best_lo = max(best_hi, np.nanmax(R)), min(best_lo, np.nanmin(R))
    assert np.isclose(hi[0], best_hi) and np.isclose(lo[0], best_lo)
    assert hi[0] >= N / piles * (1 - 1e-12)


@settings(max_examples=40, deadline=None)
@given(st.integers(2, 6), spacing, loads, st.floats(0.0, 150.0))
def test_tolerance_any_direction_is_the_sweep_over_directions(piles, s, N, e):
    # a shift of e at angle phi adds the moments -N e sin(phi) about x and -N e cos(phi) about y;
    # a fine sweep of phi can only approach the closed form from below, and never exceed it
    X, Y, m = _layout(piles, s)
    hi, lo = rea.tolerance_reactions(X, Y, m, [N], [0.0], [0.0], tolerance=e)
    phi = np.radians(np.arange(0.0, 360.0, 0.5))
    best_hi, best_lo = -np.inf, np.inf
    for p_ in phi:
        R = rea.pile_reactions(X, Y, m, [N], [-N * e * np.sin(p_)], [-N * e * np.cos(p_)])
        best_hi, best_lo = max(best_hi, np.nanmax(R)), min(best_lo, np.nanmin(R))
    slack = 1e-9 * abs(N) + 1e-6
    assert best_hi <= hi[0] + slack and best_lo >= lo[0] - slack
    # 0.5 degree steps: within 1 - cos(0.25 degrees) = 1e-5 of the swing
    assert np.isclose(best_hi, hi[0], rtol=1e-5) and np.isclose(best_lo, lo[0], rtol=1e-5)
    hi_ax, _ = rea.tolerance_reactions(X, Y, m, [N], [0.0], [0.0], tolerance=e, per_axis=True)
    assert hi[0] <= hi_ax[0] + slack


def test_array_equals_element_by_element(tol):
    rng = np.random.default_rng(7)
    n = 50
    piles = rng.integers(1, 7, n).astype(float)
    s = rng.uniform(900, 3000, n)
    X, Y = geo.standard_layout(piles, s)
    m = np.isfinite(X)
    N, mx, my = rng.uniform(1e5, 1e7, n), rng.uniform(-1e9, 1e9, n), rng.uniform(-1e9, 1e9, n)
    R = rea.pile_reactions(X, Y, m, N, mx, my)
    hi, lo = rea.tolerance_reactions(X, Y, m, N, mx, my)
    for i in range(n):
        Ri = rea.pile_reactions(X[i:i + 1], Y[i:i + 1], m[i:i + 1], N[i:i + 1], mx[i:i + 1], my[i:i + 1])
        tol.same(R[i], Ri[0])
        h, l_ = rea.tolerance_reactions(X[i:i + 1], Y[i:i + 1], m[i:i + 1], N[i:i + 1], mx[i:i + 1], my[i:i + 1])
        tol.same([hi[i], lo[i]], [h[0], l_[0]])
