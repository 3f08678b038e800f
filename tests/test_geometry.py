"""Geometry: the product brief's standard layouts, explicit coordinates, effective depths, edge
distances. Sources: the product brief (layout coordinates, d formulae); engineering reference §15
O4/O5 (cap sizes with 150 mm beyond the pile faces) and O5 (pile centres 1272.8 mm from the column).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from checker import geometry as geo

S = 1800.0
R3 = np.sqrt(3.0)


def _pts(piles, s=S):
    X, Y = geo.standard_layout([piles], [s])
    m = np.isfinite(X[0])
    return sorted(zip(np.round(X[0][m], 6), np.round(Y[0][m], 6)))


@pytest.mark.parametrize("piles, expected", [
    (1, [(0, 0)]),
    (2, [(-S / 2, 0), (S / 2, 0)]),
    (3, [(0, S / R3), (-S / 2, -S / (2 * R3)), (S / 2, -S / (2 * R3))]),
    (4, [(-S / 2, -S / 2), (-S / 2, S / 2), (S / 2, -S / 2), (S / 2, S / 2)]),
    (5, [(x, y) for x in (-S / np.sqrt(2), S / np.sqrt(2)) for y in (-S / np.sqrt(2), S / np.sqrt(2))]
        + [(0, 0)]),
    (6, [(x, y) for x in (-S, 0, S) for y in (-S / 2, S / 2)]),
])
def test_standard_layouts_match_brief(piles, expected, tol):
    # product brief, "Standard layouts, pile centres relative to the column centre"
    got = _pts(piles)
    exp = sorted((round(x, 6), round(y, 6)) for x, y in expected)
    assert len(got) == len(exp)
    tol.same(np.array(got), np.array(exp))


def test_layout_geometry_facts(tol):
    # brief: layout 3 is an equilateral triangle of side s; layout 5 has its centre pile at s
    # from each corner; every layout's spacing_min is s.
    for k in range(2, 7):
        X, Y = geo.standard_layout([k], [S])
        mask = np.isfinite(X)
        tol.same(geo.spacing_min(X, Y, mask), [S])
    X, Y = geo.standard_layout([3], [S])
    d = geo.pair_distances(X, Y, np.isfinite(X))[0]
    tol.same(np.sort(d[np.isfinite(d)]), [S, S, S])
    X, Y = geo.standard_layout([5], [S])
    r = geo.radial_distances(X, Y, np.isfinite(X))[0]
    tol.same(np.sort(r[np.isfinite(r)]), [0, S, S, S, S])


def test_standard_layout_vectorised_and_invalid():
    X, Y = geo.standard_layout([1, 2, 7, np.nan, 2.5, 6], [1000, 1200, 1000, 1000, 1000, 900])
    assert X.shape == (6, 6) and Y.shape == (6, 6)
    assert np.isfinite(X).sum(axis=1).tolist() == [1, 2, 0, 0, 0, 6]
    assert X[1, 1] == 600.0 and X[5, 2] == 900.0


def test_pile_arrays_explicit_coordinates():
    caps = pd.DataFrame({"mark": ["A", "B", "C"], "piles": [2.0, 4.0, np.nan],
                         "pile_spacing": [1800.0, 1500.0, np.nan]})
    coords = pd.DataFrame({"mark": ["C"] * 7 + ["B"] * 3,
                           "x": [0, 1, 2, 3, 4, 5, 6, -700, 700, 0],
                           "y": [0, 0, 0, 0, 0, 0, 0, -400, -400, 800]})
    X, Y, mask = geo.pile_arrays(caps, coords)
    assert X.shape == (3, 7)  # width = max piles, at least 6
    assert mask.sum(axis=1).tolist() == [2, 3, 7]  # B takes its explicit 3 piles, not layout 4
    assert X[1, :3].tolist() == [-700, 700, 0] and Y[1, 2] == 800
    assert X[2, 6] == 6
    X0, Y0, m0 = geo.pile_arrays(caps, None)
    assert X0.shape == (3, 6) and m0.sum(axis=1).tolist() == [2, 4, 0]


def test_effective_depths_brief(tol):
    # brief: d_x = h − cover − φx/2; d_y = h − cover − φx − φy/2
    tol.same(geo.effective_depth_x(1000, 75, 25), 912.5)
    tol.same(geo.effective_depth_y(1000, 75, 25, 20), 890.0)


def test_edge_distance_and_overhang_o4_o5(tol):
    # reference O4: 2-pile cap, φ600 at 1800, b = 600 + 2·150 = 900 → 150 mm beyond the pile faces;
    # O5: B = 1800 + 600 + 300 = 2700 square → 150 mm.
    X, Y = geo.standard_layout([2, 4], [1800, 1800])
    mask = np.isfinite(X)
    L = np.array([2700.0, 2700.0])
    W = np.array([900.0, 2700.0])
    e = geo.edge_min(X, Y, mask, L, W, [600.0, 600.0])
    tol.same(e, [150.0, 150.0])
    tol.same(geo.plan_overhang(X, Y, mask, L, W, [600.0, 600.0]), [0.0, 0.0])
    # a cap 200 mm too narrow: the pile faces stick out 50 mm
    e2 = geo.edge_min(X, Y, mask, L, W - 400.0, [600.0, 600.0])
    tol.same(e2, [-50.0, -50.0])
    tol.same(geo.plan_overhang(X, Y, mask, L, W - 400.0, [600.0, 600.0]), [50.0, 50.0])


def test_column_face_distance_o5(tol):
    # reference O5: pile centres 1272.8 mm from the column centre; 500 square column.
    X, Y = geo.standard_layout([4], [1800])
    mask = np.isfinite(X)
    r = geo.radial_distances(X, Y, mask)
    tol.printed(r[mask], "1272.8")
    f = geo.column_face_distances(X, Y, mask, [500.0], [500.0], [False])
    tol.same(f[mask], np.hypot(650.0, 650.0))  # to the column corner
    fc = geo.column_face_distances(X, Y, mask, [500.0], [500.0], [True])
    tol.same(fc[mask], np.hypot(900, 900) - 250.0)
    X1, Y1 = geo.standard_layout([2], [1800])
    f1 = geo.column_face_distances(X1, Y1, np.isfinite(X1), [500.0], [400.0], [False])
    tol.same(f1[np.isfinite(X1)], [650.0, 650.0])
