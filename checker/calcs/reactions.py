"""Pile reactions of a rigid cap, cap self-weight and the effect of pile positional tolerance.

EN 1992-1-1 has no clause for the distribution of load between piles; the rigid-cap linear
distribution is common practice (engineering reference §5): rigid cap, piles pinned and loaded
axially only, reaction proportional to axial shortening.
"""

from __future__ import annotations

import numpy as np


def self_weight(cap_length, cap_width, cap_depth, gamma_g=1.35, density=25.0):
    """EN 1991-1-1:2002 Annex A, Table A.1

    Design self-weight of a rectangular cap, γG ρ L W h. Reinforced concrete 25 kN/m³ [M];
    γG = 1.35 is the EN 1990 Table A1.2(B) factor for unfavourable permanent actions [M].

    Args:
        cap_length: plan L [mm]
        cap_width: plan W [mm]
        cap_depth: overall depth h [mm]
        gamma_g: partial factor on the permanent action [-]
        density: unit weight of reinforced concrete [kN/m³]

    Returns:
        design self-weight [N]
    """
    vol = np.asarray(cap_length, dtype=float) * cap_width * cap_depth  # mm³
    return gamma_g * density * 1e-6 * vol  # kN/m³ = 1e-6 N/mm³


def _group_terms(X, Y, mask):
    """Centroid offsets and second moments of the pile group (per cap)."""
    m = mask.astype(float)
    n = m.sum(axis=1)
    ns = np.where(n > 0, n, np.nan)
    x0 = np.where(mask, X, 0.0)
    y0 = np.where(mask, Y, 0.0)
    xc = x0.sum(axis=1) / ns
    yc = y0.sum(axis=1) / ns
    u = np.where(mask, X - xc[:, None], 0.0)
    v = np.where(mask, Y - yc[:, None], 0.0)
    suu = (u * u).sum(axis=1)
    svv = (v * v).sum(axis=1)
    suv = (u * v).sum(axis=1)
    return ns, xc, yc, u, v, suu, svv, suv


def pile_reactions(X, Y, mask, n_ed, mx_ed=0.0, my_ed=0.0, _terms=None):
    """Common practice: rigid-cap pile group, R_i = N/n + Mx·y_i/Σy² + My·x_i/Σx²

    Rigid-cap linear distribution (engineering reference §5) [CP]. Coordinates are taken from
    the pile-group centroid, so a column off the centroid (explicit coordinates) adds N·e; where
    the group has a product of inertia Σxy ≠ 0 the two moment equations are solved together
    (this reduces to the formula above for every standard layout). A moment term is dropped where
    the group cannot resist it (Σy² = 0 or Σx² = 0: piles in one line, or a single pile); such
    moments must go to ground beams or the column (§13). Positive Mx raises the reactions at
    +y, positive My those at +x.

    Args:
        X, Y: pile centres relative to the column centre, (n, m) NaN-padded [mm]
        mask: real piles (n, m) [-]
        n_ed: vertical load at the column centre, compression positive (n,) [N]
        mx_ed: moment about the x axis (n,) [N·mm]
        my_ed: moment about the y axis (n,) [N·mm]
        _terms: the group's centroid and second moments when already computed (internal) [mm²]

    Returns:
        reactions R_i, (n, m), NaN for missing piles [N]
    """
    ns, xc, yc, u, v, suu, svv, suv = _terms if _terms is not None else _group_terms(X, Y, mask)
    N = np.asarray(n_ed, dtype=float)
    mx = np.asarray(mx_ed, dtype=float) - N * yc
    my = np.asarray(my_ed, dtype=float) - N * xc
    scale = suu + svv
    tiny = 1e-12 * scale + 1e-9
    has_u = suu > tiny
    has_v = svv > tiny
    det = suu * svv - suv * suv
    full = has_u & has_v & (det > 1e-9 * scale * scale)
    det_s = np.where(full, det, 1.0)
    a_full = (my * svv - mx * suv) / det_s
    b_full = (mx * suu - my * suv) / det_s
    a_simple = np.where(has_u, my / np.where(has_u, suu, 1.0), 0.0)
    b_simple = np.where(has_v, mx / np.where(has_v, svv, 1.0), 0.0)
    a = np.where(full, a_full, a_simple)
    b = np.where(full, b_full, b_simple)
    R = (N / ns)[:, None] + a[:, None] * u + b[:, None] * v
    return np.where(mask, R, np.nan)


def tolerance_reactions(X, Y, mask, n_ed, mx_ed=0.0, my_ed=0.0, tolerance=75.0):
    """Common practice: pile positional tolerance as a group shift of (±e, ±e)

    Worst reactions when the whole group is displaced by e in x and in y from its nominal
    position relative to the column (engineering reference §13, G14: 75 mm is the usual
    piling-specification value [V: S20]) [CP]. The shift is equivalent to the extra moments
    N·e about each axis; the extreme reactions over the four sign combinations are returned. As in :func:`pile_reactions`, a moment the group cannot resist is dropped.

    Args:
        X, Y: pile centres (n, m) [mm]
        mask: real piles (n, m) [-]
        n_ed: vertical load at the column centre (n,) [N]
        mx_ed, my_ed: applied moments (n,) [N·mm]
        tolerance: positional tolerance e (same in x and y) [mm]

    Returns:
        (R_max, R_min): extreme reactions over the piles and the four shifts, (n,) each [N]
    """
    N = np.asarray(n_ed, dtype=float)
    terms = _group_terms(X, Y, mask)
    zero = np.zeros_like(N)
    R0 = pile_reactions(X, Y, mask, N, mx_ed, my_ed, _terms=terms)
    # R is linear in the moments: the shifts add ±N·e times the unit-moment responses, and the
    # worst of the four sign cases at each pile is R0 ± N·e (|r_x| + |r_y|)
    rx = pile_reactions(X, Y, mask, zero, np.ones_like(N), zero, _terms=terms)
    ry = pile_reactions(X, Y, mask, zero, zero, np.ones_like(N), _terms=terms)
    swing = (N * tolerance)[:, None] * (np.abs(rx) + np.abs(ry))
    hi = np.max(np.where(mask, R0 + swing, -np.inf), axis=1)
    lo = np.min(np.where(mask, R0 - swing, np.inf), axis=1)
    return np.where(np.isfinite(hi), hi, np.nan), np.where(np.isfinite(lo), lo, np.nan)
