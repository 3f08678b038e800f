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
    hi, lo = rea.tolerance_reactions(X, Y, m, [4000e3], [0.0], [0.0], tolerance=75.0)
    tol.printed(hi / 1e3, "1166.67")
    tol.printed(lo / 1e3, "833.33")


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
    hi, lo = rea.tolerance_reactions(X, Y, m, [N], [0.0], [0.0], tolerance=e)
    best_hi, best_lo = -np.inf, np.inf
    for sx in (-1, 1):
        for sy in (-1, 1):
            R = rea.pile_reactions(X, Y, m, [N], [sy * N * e], [sx * N * e])
            best_hi, best_lo = max(best_hi, np.nanmax(R)), min(best_lo, np.nanmin(R))
    assert np.isclose(hi[0], best_hi) and np.isclose(lo[0], best_lo)
    assert hi[0] >= N / piles * (1 - 1e-12)


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
