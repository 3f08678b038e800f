"""Pile-group geometry, vectorised over caps.

Pile coordinates are held as two float arrays ``X, Y`` of shape (n_caps, m) in mm relative to
the column centre, padded with NaN, plus a boolean ``mask`` of the real piles; m is at least 6.
Every function here works row-wise on those arrays without Python loops over caps.

Standard layouts (product brief), spacing s:
1: (0, 0) · 2: (±s/2, 0) · 3: equilateral triangle of side s, (0, s/√3), (±s/2, −s/(2√3)) ·
4: (±s/2, ±s/2) · 5: (±s/√2, ±s/√2) and (0, 0) · 6: x ∈ {−s, 0, s}, y = ±s/2.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd
from numpy.typing import NDArray

from checker.calcs import reactions as rea
from checker.calcs._typing import Floats, Real

Mask = NDArray[np.bool_]     # real piles (n, m)

MIN_WIDTH = 6

_R3 = np.sqrt(3.0)
_R2 = np.sqrt(2.0)
_NAN = np.nan

# Unit layouts (coordinates / s); row k = layout of k piles, row 0 = no valid layout.
_UNIT_X = np.full((7, MIN_WIDTH), _NAN)
_UNIT_Y = np.full((7, MIN_WIDTH), _NAN)
_UNIT_X[1, :1], _UNIT_Y[1, :1] = [0.0], [0.0]
_UNIT_X[2, :2], _UNIT_Y[2, :2] = [-0.5, 0.5], [0.0, 0.0]
_UNIT_X[3, :3], _UNIT_Y[3, :3] = [0.0, -0.5, 0.5], [1 / _R3, -0.5 / _R3, -0.5 / _R3]
_UNIT_X[4, :4], _UNIT_Y[4, :4] = [-0.5, 0.5, -0.5, 0.5], [-0.5, -0.5, 0.5, 0.5]
_UNIT_X[5, :5] = [-1 / _R2, 1 / _R2, -1 / _R2, 1 / _R2, 0.0]
_UNIT_Y[5, :5] = [-1 / _R2, -1 / _R2, 1 / _R2, 1 / _R2, 0.0]
_UNIT_X[6, :6], _UNIT_Y[6, :6] = [-1.0, 0.0, 1.0, -1.0, 0.0, 1.0], [-0.5, -0.5, -0.5, 0.5, 0.5, 0.5]


@dataclass(frozen=True)
class PileGroup:
    """The pile arrays of a schedule, travelling together.

    ``X, Y``: pile centres relative to the column centre, (n, m) NaN-padded [mm]; ``mask``: real
    piles (n, m); ``terms``: the group's centroid and second moments
    (:func:`checker.calcs.reactions.group_terms`), computed once.
    """

    X: np.ndarray
    Y: np.ndarray
    mask: np.ndarray
    terms: rea.GroupTerms

    @classmethod
    def of(cls, X: np.ndarray, Y: np.ndarray, mask: np.ndarray) -> PileGroup:
        """The group of pile arrays ``X, Y, mask`` with its terms."""
        return cls(X, Y, mask, rea.group_terms(X, Y, mask))


def standard_layout(piles: Real, spacing: Real) -> tuple[Floats, Floats]:
    """Pile centres of the standard layouts 1 to 6 (product brief), vectorised over caps.

    Args:
        piles: number of piles per cap; anything other than 1..6 gives an all-NaN row [count]
        spacing: centre-to-centre spacing s of the layout [mm]

    Returns:
        (X, Y): arrays of shape (n, 6), pile centres relative to the column centre, NaN-padded [mm]
    """
    piles = np.atleast_1d(np.asarray(piles, dtype=float))
    spacing = np.broadcast_to(np.asarray(spacing, dtype=float), piles.shape)
    single = piles == 1  # a single pile sits at the column centre whatever the spacing
    valid = (np.isfinite(piles) & (piles >= 1) & (piles <= 6) & (np.round(piles) == piles)
             & (np.isfinite(spacing) | single))
    k = np.where(valid, np.nan_to_num(piles), 0).astype(int)
    s = np.where(single, 0.0, spacing)[:, None]
    # column-major: the per-pile columns are contiguous, which keeps the (n, 1) broadcasts and
    # the reductions over piles fast for 100,000 caps
    return np.asfortranarray(_UNIT_X[k] * s), np.asfortranarray(_UNIT_Y[k] * s)


def pile_arrays(caps: pd.DataFrame, coords: pd.DataFrame | None = None) -> tuple[Floats, Floats, Mask]:
    """Pile coordinate arrays for a schedule: standard layouts, or explicit coordinates.

    Caps whose mark appears in ``coords`` (columns ``mark, x, y`` in mm relative to the column
    centre) take those piles, in the order given; all others take the standard layout of their
    ``piles`` and ``pile_spacing``.

    Args:
        caps: canonical schedule frame (needs ``mark``, ``piles``, ``pile_spacing``)
        coords: explicit pile coordinates, or None [mm]

    Returns:
        (X, Y, mask): X, Y of shape (n, m) with m = max(6, most explicit piles) [mm]; mask
        (n, m) bool, True for a real pile
    """
    n = len(caps)
    piles = _col(caps, "piles", n)
    spacing = _col(caps, "pile_spacing", n)
    X6, Y6 = standard_layout(piles, spacing) if n else (np.empty((0, 6)), np.empty((0, 6)))
    if coords is None or len(coords) == 0 or n == 0:
        X, Y = X6, Y6
    else:
        c = coords[["mark", "x", "y"]].copy()
        c["x"] = pd.to_numeric(c["x"], errors="coerce")
        c["y"] = pd.to_numeric(c["y"], errors="coerce")
        c = c[np.isfinite(c["x"].to_numpy(float)) & np.isfinite(c["y"].to_numpy(float))]
        c["slot"] = c.groupby("mark", sort=False).cumcount()
        rows = pd.DataFrame({"mark": caps["mark"].to_numpy(), "row": np.arange(n)})
        hit = rows.merge(c, on="mark", how="inner")
        m = max(MIN_WIDTH, int(hit["slot"].max()) + 1 if len(hit) else MIN_WIDTH)
        X = np.full((n, m), np.nan)
        Y = np.full((n, m), np.nan)
        X[:, :6], Y[:, :6] = X6, Y6
        explicit = np.zeros(n, dtype=bool)
        explicit[hit["row"].to_numpy()] = True
        X[explicit] = np.nan
        Y[explicit] = np.nan
        r, sl = hit["row"].to_numpy(), hit["slot"].to_numpy()
        X[r, sl] = hit["x"].to_numpy(float)
        Y[r, sl] = hit["y"].to_numpy(float)
    X, Y = np.asfortranarray(X), np.asfortranarray(Y)
    mask = np.isfinite(X) & np.isfinite(Y)
    return X, Y, mask


def _col(df: pd.DataFrame, name: str, n: int) -> np.ndarray:
    if name not in df.columns:
        return np.full(n, np.nan)
    return np.asarray(pd.to_numeric(df[name], errors="coerce"), dtype=float)


def n_piles(mask: Mask) -> Floats:
    """Number of real piles per cap [count] (NaN where there are none)."""
    k = mask.sum(axis=1).astype(float)
    return np.where(k > 0, k, np.nan)


def effective_depth_x(h: Real, cover: Real, phi_x: Real) -> Floats:
    """Effective depth of the lowest layer (bars along x): d_x = h − cover − φx/2 (brief).

    Args:
        h: overall cap depth [mm]
        cover: nominal cover from the soffit to the lowest bars [mm]
        phi_x: diameter of the bars along x (lowest layer) [mm]

    Returns:
        d_x [mm]
    """
    return np.asarray(h, dtype=float) - cover - 0.5 * np.asarray(phi_x, dtype=float)


def effective_depth_y(h: Real, cover: Real, phi_x: Real, phi_y: Real) -> Floats:
    """Effective depth of the second layer (bars along y): d_y = h − cover − φx − φy/2 (brief).

    Args:
        h: overall cap depth [mm]
        cover: nominal cover to the lowest bars [mm]
        phi_x: diameter of the lowest layer [mm]
        phi_y: diameter of the second layer [mm]

    Returns:
        d_y [mm]
    """
    return np.asarray(h, dtype=float) - cover - phi_x - 0.5 * np.asarray(phi_y, dtype=float)


def _nan_if_inf(a: Real) -> Floats:
    return np.where(np.isfinite(a), a, np.nan)


def pair_distances(X: Floats, Y: Floats, mask: Mask) -> Floats:
    """Centre-to-centre distances of all pile pairs i < j, shape (n, m(m−1)/2); NaN where either
    pile is missing [mm]."""
    i, j = np.triu_indices(X.shape[1], 1)
    d = np.hypot(X[:, i] - X[:, j], Y[:, i] - Y[:, j])
    return np.where(mask[:, i] & mask[:, j], d, np.nan)


def spacing_min(X: Floats, Y: Floats, mask: Mask) -> Floats:
    """Least centre-to-centre spacing over all pile pairs [mm] (NaN for a single pile)."""
    i, j = np.triu_indices(X.shape[1], 1)
    dx = X[:, i] - X[:, j]
    dy = Y[:, i] - Y[:, j]
    d2 = np.where(mask[:, i] & mask[:, j], dx * dx + dy * dy, np.inf)
    return np.sqrt(_nan_if_inf(np.min(d2, axis=1, initial=np.inf)))


def edge_distances(X: Floats, Y: Floats, mask: Mask, cap_length: Real, cap_width: Real, pile_dia: Real) -> Floats:
    """Clear distance from each pile face to the nearest edge of a rectangular cap L × W centred
    on the column: min(L/2 − |x|, W/2 − |y|) − φ/2, negative where the pile sticks out [mm].

    Args:
        X, Y: pile centres (n, m) [mm]
        mask: real piles (n, m)
        cap_length: L along x (n,) [mm]
        cap_width: W along y (n,) [mm]
        pile_dia: pile diameter (n,) [mm]

    Returns:
        (n, m) distances, NaN for missing piles [mm]
    """
    L = np.asarray(cap_length, dtype=float)[:, None]
    W = np.asarray(cap_width, dtype=float)[:, None]
    phi = np.asarray(pile_dia, dtype=float)[:, None]
    e = np.minimum(0.5 * L - np.abs(X), 0.5 * W - np.abs(Y)) - 0.5 * phi
    return np.where(mask, e, np.nan)


def edge_min(X: Floats, Y: Floats, mask: Mask, cap_length: Real, cap_width: Real, pile_dia: Real) -> Floats:
    """Least clear distance from a pile face to the cap edge over the piles [mm]."""
    e = edge_distances(X, Y, mask, cap_length, cap_width, pile_dia)
    return _nan_if_inf(np.min(np.where(np.isnan(e), np.inf, e), axis=1))


def plan_overhang(X: Floats, Y: Floats, mask: Mask, cap_length: Real, cap_width: Real, pile_dia: Real) -> Floats:
    """How far any part of a pile lies outside the cap outline in plan, ≥ 0 [mm].

    The pile's outer face is measured (a pile whose centre is inside but whose face is outside
    overhangs by the difference)."""
    e = edge_min(X, Y, mask, cap_length, cap_width, pile_dia)
    return np.where(np.isnan(e), np.nan, np.maximum(-e, 0.0))


def radial_distances(X: Floats, Y: Floats, mask: Mask) -> Floats:
    """Distance from the column centre to each pile centre, (n, m), NaN for missing piles [mm]."""
    return np.where(mask, np.hypot(X, Y), np.nan)


def column_face_distances(X: Floats, Y: Floats, mask: Mask, column_x: Real, column_y: Real,
                          column_round: Real = False) -> Floats:
    """Distance from the column face to each pile centre, 0 for a centre under the column [mm].

    Rectangle cx × cy (centred): the Euclidean distance to the rectangle, which is the distance
    that defines a control perimeter with rounded corners (EN 1992-1-1 6.4.2(1)). Circle D:
    max(r − D/2, 0).

    Args:
        X, Y: pile centres (n, m) [mm]
        mask: real piles (n, m)
        column_x, column_y: column size along x and y (circle: both = D) (n,) [mm]
        column_round: True for a circular column (n,) [-]

    Returns:
        (n, m) distances, NaN for missing piles [mm]
    """
    cx = np.asarray(column_x, dtype=float)[:, None]
    cy = np.asarray(column_y, dtype=float)[:, None]
    rnd = np.broadcast_to(np.asarray(column_round, dtype=bool), cx.shape[:1])[:, None]
    rect = np.hypot(np.maximum(np.abs(X) - 0.5 * cx, 0.0), np.maximum(np.abs(Y) - 0.5 * cy, 0.0))
    circ = np.maximum(np.hypot(X, Y) - 0.5 * cx, 0.0)
    return np.where(mask, np.where(rnd, circ, rect), np.nan)


def row_max(a: Floats, mask: Mask) -> Floats:
    """Row-wise maximum over real piles, NaN where a cap has none."""
    return _nan_if_inf(np.max(np.where(mask & ~np.isnan(a), a, -np.inf), axis=1))


def row_min(a: Floats, mask: Mask) -> Floats:
    """Row-wise minimum over real piles, NaN where a cap has none."""
    return _nan_if_inf(np.min(np.where(mask & ~np.isnan(a), a, np.inf), axis=1))
