"""Pile reactions of a rigid cap, cap self-weight and the effect of pile positional tolerance.

EN 1992-1-1 has no clause for the distribution of load between piles; the rigid-cap linear
distribution is common practice (engineering reference §5): rigid cap, piles pinned and loaded
axially only, reaction proportional to axial shortening.
"""

from __future__ import annotations

from typing import TypeAlias, cast

import numpy as np
from numpy.typing import NDArray

from checker.calcs._typing import Floats, Real

# group_terms: (ns, xc, yc, u, v, suu, svv, suv)
GroupTerms: TypeAlias = tuple[Floats, Floats, Floats, Floats, Floats, Floats, Floats, Floats]


def self_weight(
    cap_length: Real, cap_width: Real, cap_depth: Real, gamma_g: Real = 1.35, density: Real = 25.0
) -> Floats:
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
    return cast(Floats, gamma_g * density * 1e-6 * vol)  # kN/m³ = 1e-6 N/mm³


def self_weight_factor(is_sls: Real, gamma_g: Real = 1.35) -> Floats:
    """Derived: partial factor on the cap self-weight, γG for a ULS case and 1.0 for an SLS case

    The self-weight of a serviceability combination is unfactored (EN 1990:2002 6.5.3, the
    characteristic and quasi-permanent combinations with γG = 1.0) [M]; an ultimate case takes γG
    of EN 1990 Table A1.2(B) [M].

    Args:
        is_sls: the load case is a serviceability case (n,) [-]
        gamma_g: partial factor on the permanent action at ULS [-]

    Returns:
        the factor applied to the self-weight (n,) [-]
    """
    return np.where(np.asarray(is_sls, dtype=bool), 1.0, np.asarray(gamma_g, dtype=float))


def group_terms(X: Floats, Y: Floats, mask: NDArray[np.bool_]) -> GroupTerms:
    """Derived: centroid and second moments of a pile group about its centroid

    Per cap: ns the number of piles, (xc, yc) the centroid, (u, v) the pile centres relative to
    it (zero for missing piles), Σu², Σv², Σuv [D].

    Args:
        X, Y: pile centres relative to the column centre, (n, m) NaN-padded [mm]
        mask: real piles (n, m) [-]

    Returns:
        (ns [-], xc [mm], yc [mm], u [mm], v [mm], suu [mm²], svv [mm²], suv [mm²])
    """
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


def pile_reactions(
    X: Floats, Y: Floats, mask: NDArray[np.bool_], n_ed: Real, mx_ed: Real = 0.0, my_ed: Real = 0.0,
    _terms: GroupTerms | None = None,
) -> Floats:
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
    ns, xc, yc, u, v, suu, svv, suv = _terms if _terms is not None else group_terms(X, Y, mask)
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


def tolerance_swing(
    X: Floats, Y: Floats, mask: NDArray[np.bool_], n_ed: Real, mx_ed: Real, my_ed: Real, tolerance: Real,
    per_axis: bool, terms: GroupTerms | None = None,
) -> tuple[Floats, Floats, Floats, Floats]:
    """Common practice: pile reactions and their largest change under a group shift of e

    R0 the nominal reactions and the largest change of each pile's reaction when the group is
    displaced by e (any direction, or (±e, ±e) where ``per_axis``); r_x, r_y the unit-moment
    responses (see :func:`tolerance_reactions`) [CP].

    Args:
        X, Y, mask, n_ed, mx_ed, my_ed: the pile group and its loads, as in :func:`pile_reactions`
            (X, Y [mm]; mask [-]; n_ed [N]; mx_ed, my_ed [N·mm])
        tolerance: positional tolerance e [mm]
        per_axis: True for the (±e, ±e) shift [-]
        terms: :func:`group_terms` of the group when already computed [mm²]

    Returns:
        (R0 [N], swing [N], r_x [1/mm], r_y [1/mm]), each (n, m)
    """
    N = np.asarray(n_ed, dtype=float)
    terms = terms if terms is not None else group_terms(X, Y, mask)
    zero = np.zeros_like(N)
    R0 = pile_reactions(X, Y, mask, N, mx_ed, my_ed, _terms=terms)
    # R is linear in the moments: a shift (ex, ey) of the group adds the moments −N·ey about x
    # and −N·ex about y, i.e. −N (ey r_x + ex r_y) at each pile, r_x and r_y the unit-moment
    # responses
    rx = pile_reactions(X, Y, mask, zero, np.ones_like(N), zero, _terms=terms)
    ry = pile_reactions(X, Y, mask, zero, zero, np.ones_like(N), _terms=terms)
    if per_axis:
        reach = np.abs(rx) + np.abs(ry)          # the worst of the four (±e, ±e) shifts
    else:
        reach = np.hypot(rx, ry)                 # max over the direction of |cos·r_y + sin·r_x|
    return R0, (N * tolerance)[:, None] * reach, rx, ry


def tolerance_reactions(
    X: Floats, Y: Floats, mask: NDArray[np.bool_], n_ed: Real, mx_ed: Real = 0.0, my_ed: Real = 0.0,
    tolerance: Real = 75.0, per_axis: bool = False,
) -> tuple[Floats, Floats]:
    """Common practice: pile positional tolerance as a group shift of e in the worst direction

    Worst reactions when the whole group is displaced from its nominal position relative to the
    column by e in any direction (the usual piling-specification wording, 75 mm; engineering
    reference §13, decision 10, G14 [V: S20]) [CP]. The shift is equivalent to the extra moments
    N·e; each pile's reaction is linear in them, so its extreme over the direction is
    R0 ± N e √(r_x² + r_y²) with r_x, r_y its unit-moment responses. ``per_axis=True`` gives the
    more severe reading, a shift of e along each axis at once, (±e, ±e) (a deviation of e√2 on
    the diagonal): R0 ± N e (|r_x| + |r_y|). As in :func:`pile_reactions`, a moment the group
    cannot resist is dropped.

    Args:
        X, Y, mask, n_ed, mx_ed, my_ed, tolerance, per_axis: as in :func:`tolerance_swing`
            (X, Y [mm]; mask [-]; n_ed [N]; mx_ed, my_ed [N·mm]; tolerance [mm]; per_axis [-])

    Returns:
        (R_max, R_min): extreme reactions over the piles and the shifts, (n,) each [N]
    """
    R0, swing, _, _ = tolerance_swing(X, Y, mask, n_ed, mx_ed, my_ed, tolerance, per_axis)
    hi = np.max(np.where(mask, R0 + swing, -np.inf), axis=1)
    lo = np.min(np.where(mask, R0 - swing, np.inf), axis=1)
    return np.where(np.isfinite(hi), hi, np.nan), np.where(np.isfinite(lo), lo, np.nan)


def tolerance_direction(
    X: Floats, Y: Floats, mask: NDArray[np.bool_], n_ed: Real, mx_ed: Real = 0.0, my_ed: Real = 0.0,
    tolerance: Real = 75.0,
) -> Floats:
    """Derived: direction of the group shift that gives the largest pile reaction

    The shift (ex, ey) = −e (r_y, r_x)/√(r_x² + r_y²) of the most loaded pile (see
    :func:`tolerance_reactions`) [D]; 0 where the reaction does not depend on the shift.

    Args:
        X, Y, mask, n_ed, mx_ed, my_ed, tolerance: as in :func:`tolerance_swing`
            (X, Y [mm]; mask [-]; n_ed [N]; mx_ed, my_ed [N·mm]; tolerance [mm])

    Returns:
        angle of the shift from the x axis, anticlockwise (n,) [degrees]
    """
    R0, swing, rx, ry = tolerance_swing(X, Y, mask, n_ed, mx_ed, my_ed, tolerance, False)
    key = np.where(mask, R0 + swing, -np.inf)
    n = key.shape[0]
    if key.shape[1] == 0:
        return np.full(n, np.nan)
    g = np.argmax(key, axis=1)
    rows = np.arange(n)
    gx, gy = rx[rows, g], ry[rows, g]
    ang = np.degrees(np.arctan2(-gx, -gy))
    return np.where((np.abs(gx) + np.abs(gy)) > 0, ang, 0.0)
