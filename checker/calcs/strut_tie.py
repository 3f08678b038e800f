"""Strut-and-tie model of a pile cap: tie forces, strut angles, node stresses and limits.

Truss (product brief, reference decision 5): top node at the column centre, lever arm z = the
effective depth d of the tie's layer, pile nodes at the pile centres, an orthogonal mesh of ties
along x and y. The column-width allowance (the load spread over the column area, giving the
(3l² − a²) forms) is an option, never the default.

General method [D] (reference §6 derivation): split the column load into elements dN at (u, v)
over the column area; each goes to the piles by the rigid-cap shares 1/n + u·x_i/Σx² (+ v·y_i/Σy²),
and each element-to-pile strut has the horizontal run (x_i − u). Integrating over a column
symmetric about its centre gives the horizontal force at pile i

    H_x,i = x_i · (R_i − N·E[u²]/Σx²) / d_x,       H_y,i = y_i · (R_i − N·E[v²]/Σy²) / d_y,

with E[u²] = 0 for the point node, a²/12 over a rectangle of side a, D²/16 over a circle.
This reproduces the closed forms (tests): 2 piles N(3l² − a²)/(12 l d); 4 piles per side
N(3l² − a²)/(24 l d); 3 piles per side of the triangle N(2l² − a²)/(18 l d) [D only, not
published]; and with a = 0: N l/(4d), N l/(8d), N l/(9d).
"""

from __future__ import annotations

from typing import TypedDict, cast

import numpy as np
from numpy.typing import NDArray

from checker.calcs._typing import Floats, Real


class TieRowLines(TypedDict):
    """:func:`tie_row_lines`: (n, m) at each pile, then (n,) ``rows`` and ``gap``."""

    t_row: Floats
    first: NDArray[np.bool_]
    active: NDArray[np.bool_]
    two_sided: NDArray[np.bool_]
    rows: Floats
    gap: Floats


class TieRows(TypedDict):
    """:func:`tie_rows_check`, (n,) each."""

    T: Floats
    as_req: Floats
    as_prov: Floats
    util: Floats
    rows: Floats
    t_total: Floats
    shared: Floats
    full: Floats
    as_layer_counted: Floats


class TieLayer(TieRows):
    """:func:`tie_layer_check`: :class:`TieRows` of the governing condition and the layer's own."""

    cut: Floats
    util_rows: Floats
    util_cut: Floats
    by_layer: Floats


def column_second_moment(size: Real, column_round: Real = False) -> Floats:
    """Derived: mean square offset E[u²] of a column load spread uniformly over the column

    Rectangle of side a along the axis: a²/12; circle of diameter D: D²/16 [D].

    Args:
        size: column dimension along the axis considered (circle: D) [mm]
        column_round: True for a circular column [-]

    Returns:
        E[u²] [mm²]
    """
    a = np.asarray(size, dtype=float)
    return cast(Floats, np.where(np.asarray(column_round, dtype=bool), a * a / 16.0, a * a / 12.0))


def pile_node_force(
    coord: Floats, reaction: Floats, mask: NDArray[np.bool_], n_ed: Real, lever_arm: Real, spread_u2: Real = 0.0,
) -> Floats:
    """Derived: horizontal strut force at each pile node, H_i = c_i (R_i − N·E[u²]/Σc²)/z

    See the module docstring for the derivation [D]. ``coord`` is the pile coordinate along
    the tie direction measured from the column centre (x for x-ties, y for y-ties). The
    spread term is dropped where Σc² = 0 (every pile on the other axis: c_i = 0 anyway).

    Args:
        coord: pile coordinates along the tie direction (n, m) [mm]
        reaction: pile reactions R_i (n, m) [N]
        mask: real piles (n, m) [-]
        n_ed: column load that is spread over the column (n,) [N]
        lever_arm: z = effective depth of the tie layer (n,) [mm]
        spread_u2: E[u²] of the column load, 0 for the point node (n,) [mm²]

    Returns:
        H_i, positive outward (same sign as c_i), (n, m) [N]
    """
    c = np.where(mask, coord, 0.0)
    scc = (c * c).sum(axis=1)
    spread = np.where(scc > 0, np.asarray(n_ed, dtype=float) * spread_u2 / np.where(scc > 0, scc, 1.0), 0.0)
    H = coord * (reaction - spread[:, None]) / np.asarray(lever_arm, dtype=float)[:, None]
    return np.where(mask, H, np.nan)


def tie_steel_required(tie_force: Real, fyd: Real) -> Floats:
    """EN 1992-1-1:2004 6.5.3(1)

    Tie reinforcement required, As,req = T/fyd (design strength of the tie) [M].

    Args:
        tie_force: T [N]
        fyd: design yield strength [MPa]

    Returns:
        As,req [mm²]
    """
    return np.asarray(tie_force, dtype=float) / fyd


def tie_band_steel(row_coord: Floats, as_total: Real, pile_dia: Real, width: Real, cover: Real) -> Floats:
    """Common practice: steel of a layer counted in the band over a tie row (BS 8110-1 3.11.4.2)

    Where the tie rows are more than 3φ apart (or there is a single row) only the bars within
    1.5φ each side of the pile line count (reference §4 G5, §6, decision 12; 9.8.1(3) [M])
    [CP; band width from memory]. Uniformly spaced bars are assumed: the band's share is
    As_total × (band width inside the bar spread) / (bar spread W − 2·cover).

    Args:
        row_coord: coordinate of the row's pile line across the bars (n, m) [mm]
        as_total: area of the whole layer (n,) [mm²]
        pile_dia: pile diameter φ (n,) [mm]
        width: cap dimension across the bars (W for x bars) (n,) [mm]
        cover: side cover to the bar ends (n,) [mm]

    Returns:
        steel counted for the row of each pile, (n, m) [mm²]
    """
    as_total = np.asarray(as_total, dtype=float)
    half = (0.5 * np.asarray(width, dtype=float) - np.asarray(cover, dtype=float))[:, None]
    b = (1.5 * np.asarray(pile_dia, dtype=float))[:, None]
    band = np.clip(row_coord + b, -half, half) - np.clip(row_coord - b, -half, half)
    return cast(Floats, as_total[:, None] * band / (2.0 * half))


def tie_row_lines(H: Floats, row_coord: Floats, mask: NDArray[np.bool_], tol: float = 1.0) -> TieRowLines:
    """Derived: the tie rows of one direction, the distinct pile lines carrying H ≠ 0

    A row is a line of piles (coordinate across the bars, merged within ``tol``) whose node
    forces along the bars are not zero. Its force is the largest |H| at its piles. A row is
    *two-sided* when it holds node forces of both signs (a tie between two pile nodes, e.g. the
    rows of 2-, 4-, 5- and 6-pile caps); a one-sided row (each y line of a 3-pile cap) pulls
    only against the rest of the layer [D].

    Args:
        H: horizontal node forces along the tie direction (n, m) [N]
        row_coord: pile coordinates across the bars (n, m) [mm]
        mask: real piles (n, m) [-]
        tol: merge tolerance for pile lines [mm]

    Returns:
        dict of (n, m) arrays at each pile: ``t_row`` its row's force [N], ``first`` True at one
        representative pile per row, ``active`` [-], ``two_sided`` [-]; and (n,) ``rows``
        [count], ``gap`` the least distance between two row lines (inf with one row) [mm]
    """
    absH = np.abs(H)
    active = mask & np.isfinite(absH) & (absH > 0.0)
    rc = np.where(active, row_coord, np.nan)
    aH = np.where(active, absH, 0.0)
    pos = np.where(active & (H > 0), 1.0, 0.0)
    neg = np.where(active & (H < 0), 1.0, 0.0)
    t_row = np.zeros_like(aH)  # the row force seen at pile i: max |H| over its row
    has_pos = np.zeros_like(aH)
    has_neg = np.zeros_like(aH)
    first = active.copy()       # one representative pile per row (the first slot of the line)
    gap = np.full(aH.shape, np.inf)
    buf = np.empty_like(aH)
    same = np.empty_like(aH, dtype=bool)
    for j in range(H.shape[1]):  # over pile slots (at most a few), never over caps
        np.subtract(rc[:, j:j + 1], rc, out=buf)
        np.abs(buf, out=buf)
        np.less_equal(buf, tol, out=same)
        np.maximum(t_row, aH[:, j:j + 1] * same, out=t_row)  # |H| ≥ 0, so ×same masks it
        np.maximum(has_pos, pos[:, j:j + 1] * same, out=has_pos)
        np.maximum(has_neg, neg[:, j:j + 1] * same, out=has_neg)
        other = np.where(np.isnan(buf) | (buf <= tol), np.inf, buf)
        np.minimum(gap, other, out=gap)
        first[:, j + 1:] &= ~same[:, j + 1:]
    return {"t_row": t_row, "first": first, "active": active,
            "two_sided": active & (has_pos > 0) & (has_neg > 0),
            "rows": first.sum(axis=1).astype(float), "gap": np.min(gap, axis=1)}


def tie_rows_check(
    H: Floats, row_coord: Floats, mask: NDArray[np.bool_], as_total: Real, fyd: Real, pile_dia: Real,
    width: Real, cover: Real, tol: float = 1.0,
) -> TieRows:
    """Common practice: tie rows of one direction and the governing row's utilisation

    Rows from :func:`tie_row_lines`. Where the rows are at most 3φ apart the layer is
    distributed uniformly and shared equally by the two-sided rows (the ties between pile
    nodes); one-sided rows are then carried by the layer as a whole (:func:`tie_layer_check`).
    Where the rows are more than 3φ apart, or there is one row, each row counts the bars of
    its band (:func:`tie_band_steel`). The decision is made on the spacing of the tie rows, not
    on the least pile spacing of the group (reference decision 12; BS 8110-1 3.11.4.2, from
    memory) [CP]. Utilisation T_row/(fyd As_row); the governing row has the largest.

    Args:
        H: horizontal node forces along the tie direction (n, m) [N]
        row_coord: pile coordinates across the bars (n, m) [mm]
        mask: real piles (n, m) [-]
        as_total: area of the whole layer (n,) [mm²]
        fyd: design yield strength (n,) [MPa]
        pile_dia, width, cover: as :func:`tie_band_steel` (n,) [mm]
        tol: merge tolerance for pile lines [mm]

    Returns:
        dict of (n,) arrays: ``T`` governing row force [N], ``as_req`` [mm²], ``as_prov`` [mm²],
        ``util`` [-], ``rows`` [count], ``t_total`` sum of the row forces [N], ``shared`` 1.0
        where the layer is shared, ``full`` 1.0 where every row counts the whole layer [-],
        ``as_layer_counted`` the steel lying over some row (bands added, at most the layer) [mm²];
        NaN where the direction has no row that the check covers
    """
    lines = tie_row_lines(H, row_coord, mask, tol)
    t_row, first, rows = lines["t_row"], lines["first"], lines["rows"]
    phi = np.asarray(pile_dia, dtype=float)
    shared = (rows >= 2) & (lines["gap"] <= 3.0 * phi * (1 + 1e-9))
    n_two = np.sum(first & lines["two_sided"], axis=1).astype(float)
    as_total = np.asarray(as_total, dtype=float)
    equal = (as_total / np.where(n_two > 0, n_two, np.nan))[:, None]
    band = tie_band_steel(row_coord, as_total, phi, width, cover)
    as_row = np.where(shared[:, None], equal, band)
    counted = lines["active"] & np.where(shared[:, None], lines["two_sided"], True)
    fyd = np.asarray(fyd, dtype=float)
    util = t_row / (fyd[:, None] * as_row)
    key = np.where(counted, np.where(np.isnan(util), np.inf, util), -np.inf)
    g = np.argmax(key, axis=1)[:, None]
    has = counted.any(axis=1)
    T = np.where(has, np.take_along_axis(t_row, g, axis=1)[:, 0], np.nan)
    as_prov = np.where(has, np.take_along_axis(as_row, g, axis=1)[:, 0], np.nan)
    u = np.where(has, np.take_along_axis(util, g, axis=1)[:, 0], np.nan)
    t_total = np.where(rows > 0, np.sum(np.where(first, t_row, 0.0), axis=1), np.nan)
    band_min = np.min(np.where(lines["active"], band, np.inf), axis=1)
    full = shared | (band_min >= as_total * (1 - 1e-9))
    # the steel of the layer that lies over some row: the whole layer where shared, else the
    # bands added up (overlapping bands counted once at most by the min)
    bands = np.sum(np.where(first, band, 0.0), axis=1)
    counted_layer = np.where(shared, as_total, np.minimum(bands, as_total))
    return {"T": T, "as_req": tie_steel_required(T, fyd), "as_prov": as_prov, "util": u,
            "rows": rows, "t_total": t_total, "shared": shared.astype(float),
            "full": np.where(rows > 0, full.astype(float), np.nan),
            "as_layer_counted": np.where(rows > 0, counted_layer, np.nan)}


def tie_layer_check(
    H: Floats, coord: Floats, row_coord: Floats, mask: NDArray[np.bool_], as_total: Real, fyd: Real,
    pile_dia: Real, width: Real, cover: Real, tol: float = 1.0,
) -> TieLayer:
    """EN 1992-1-1:2004 6.5.3

    The tie steel of one direction (with 9.8.1(3)), rows and the whole layer. Two conditions, both to be met, the
    larger utilisation governing:
    * each tie row against the steel counted for it (:func:`tie_rows_check`);
    * the tension across the column centreline (:func:`tension_across_centreline`, statics
      about the top node: Σ c_i R_i / z over one side) against the whole layer, the only
      steel that crosses that line in this direction (reference decision 11) [D].
    Bars of one direction are never credited to the other. For the symmetric 3-pile cap the
    layer condition gives x: N s/(6d) and y: N s/(3√3 d) [D].

    Args:
        coord: pile coordinates along the tie direction (n, m) [mm]
        H, row_coord, mask, as_total, fyd, pile_dia, width, cover, tol: as in :func:`tie_rows_check`
            (H [N]; row_coord, pile_dia, width, cover, tol [mm]; mask [-]; as_total [mm²]; fyd [MPa])

    Returns:
        the :func:`tie_rows_check` dict for the governing condition, with ``cut`` the tension
        across the centreline [N], ``util_rows`` and ``util_cut`` [-], ``by_layer`` 1.0 where
        the layer condition governs [-]
    """
    rows = tie_rows_check(H, row_coord, mask, as_total, fyd, pile_dia, width, cover, tol)
    cut = tension_across_centreline(H, coord, mask, tol)
    as_total = np.asarray(as_total, dtype=float)
    fyd = np.asarray(fyd, dtype=float)
    util_cut = cut / (fyd * as_total)
    key_r = np.where(np.isnan(rows["util"]), -np.inf, rows["util"])
    key_c = np.where(np.isnan(util_cut), -np.inf, util_cut)
    by_layer = (key_c > key_r) | (np.isnan(rows["T"]) & np.isfinite(cut))
    out = TieLayer(**rows, cut=cut, util_rows=rows["util"], util_cut=util_cut,
                   by_layer=by_layer.astype(float))  # the keys in the order of `dict(rows)` then these
    out["T"] = np.where(by_layer, cut, rows["T"])
    out["as_prov"] = np.where(by_layer, as_total, rows["as_prov"])
    out["util"] = np.where(by_layer, util_cut, rows["util"])
    out["as_req"] = tie_steel_required(out["T"], fyd)
    return out


def tension_across_centreline(H: Floats, coord: Floats, mask: NDArray[np.bool_], tol: float = 1.0) -> Floats:
    """Derived: total tie tension across the column centreline of one direction

    The larger of Σ H_i over the piles on the + side and −Σ H_i over those on the − side [D].
    For groups whose rows each hold piles on both sides (2, 4, 5, 6 piles) it equals the sum of
    the row forces; for rows holding a single pile (the y-direction of a 3-pile cap) it is the
    tension the layer as a whole must carry, which the row-by-row check counts more than once.
    With applied moments the node forces measured from the column centre do not sum to zero
    (the difference is M/z); the larger side is taken.

    Args:
        H: horizontal node forces along the direction (n, m) [N]
        coord: pile coordinates along the direction (n, m) [mm]
        mask: real piles (n, m) [-]
        tol: piles within tol of the centreline count on neither side [mm]

    Returns:
        tension across the centreline (n,) [N]; NaN where no pile is off the centreline
    """
    pos = mask & (coord > tol)
    neg = mask & (coord < -tol)
    t = np.maximum(np.sum(np.where(pos, H, 0.0), axis=1), -np.sum(np.where(neg, H, 0.0), axis=1))
    return np.where((pos | neg).any(axis=1), t, np.nan)


def resolve_onto_ties(
    hx: Real, hy: Real, u1x: Real, u1y: Real, u2x: Real, u2y: Real
) -> tuple[Floats, Floats]:
    """Derived: resolve a node's outward horizontal force onto two ties meeting at the node

    Solves T1·u1 + T2·u2 = −H, with u1, u2 unit vectors from the node along the ties (towards
    the neighbouring nodes); tension positive [D]. For an equilateral triangle the two ties
    make 60° and T = F/√3 for an outward radial force F (2 T cos 30° = F).

    Args:
        hx, hy: outward horizontal force at the node [N]
        u1x, u1y: unit vector along tie 1 [-]
        u2x, u2y: unit vector along tie 2 [-]

    Returns:
        (T1, T2) tie forces [N]
    """
    det = u1x * u2y - u1y * u2x
    det = np.where(np.abs(det) > 1e-12, det, np.nan)  # parallel ties cannot resolve a force
    t1 = (-hx * u2y + hy * u2x) / det
    t2 = (-hy * u1x + hx * u1y) / det
    return t1, t2


def triangle_side_ties(X: Floats, Y: Floats, Hx: Floats, Hy: Floats) -> Floats:
    """Derived: tie forces along the three sides of a 3-pile cap from the pile-node forces

    Each pile node's horizontal force (Hx, Hy) is resolved onto the two sides meeting there
    (:func:`resolve_onto_ties`); a side's force is the larger of its two end values [D]. For
    the equilateral layout with the point node this gives N l/(9d) per side; with the column
    allowance N(2l² − a²)/(18 l d) [D only].

    Args:
        X, Y: centres of the three piles (n, 3) [mm]
        Hx, Hy: node forces (n, 3) [N]

    Returns:
        side forces (n, 3), side k joining piles k and k+1 (mod 3) [N]
    """
    ends = []
    for i in range(3):  # the three corners of a triangle, not caps
        j, k = (i + 1) % 3, (i + 2) % 3
        e1x, e1y = X[:, j] - X[:, i], Y[:, j] - Y[:, i]
        e2x, e2y = X[:, k] - X[:, i], Y[:, k] - Y[:, i]
        l1 = np.where(np.hypot(e1x, e1y) > 0, np.hypot(e1x, e1y), np.nan)
        l2 = np.where(np.hypot(e2x, e2y) > 0, np.hypot(e2x, e2y), np.nan)
        t1, t2 = resolve_onto_ties(Hx[:, i], Hy[:, i], e1x / l1, e1y / l1, e2x / l2, e2y / l2)
        ends.append((t1, t2))  # t1 on side (i, j), t2 on side (k, i)
    # side s joins s and s+1: seen from corner s as its t1, from corner s+1 as its t2
    sides = [np.fmax(ends[s][0], ends[(s + 1) % 3][1]) for s in range(3)]
    return np.stack(sides, axis=1)


def strut_angle(radial_distance: Floats, lever_arm: Real) -> Floats:
    """Derived: inclination of the strut from the top node to a pile node, θ = atan(z/r)

    Reference §6: θ = atan(d / horizontal run to the pile centre) [D]; 90° for a pile under
    the column centre.

    Args:
        radial_distance: horizontal run r_i from the column centre to the pile centre [mm]
        lever_arm: z [mm]

    Returns:
        θ [degrees]
    """
    return cast(Floats, np.degrees(np.arctan2(np.asarray(lever_arm, dtype=float), radial_distance)))


def cot_theta(theta_deg: Real) -> Floats:
    """Derived: cot θ of a strut angle (compared with the cot θ ≤ 2.5 practice limit)

    Args:
        theta_deg: strut angle [degrees]

    Returns:
        cot θ [-]
    """
    t = np.radians(np.asarray(theta_deg, dtype=float))
    return cast(Floats, np.cos(t) / np.sin(t))


def column_area(column_x: Real, column_y: Real, column_round: Real = False) -> Floats:
    """Derived: plan area of the column, cx·cy or πD²/4

    Args:
        column_x, column_y: column dimensions (circle: D) [mm]
        column_round: True for a circular column [-]

    Returns:
        A_col [mm²]
    """
    cx = np.asarray(column_x, dtype=float)
    return cast(Floats, np.where(np.asarray(column_round, dtype=bool), np.pi * cx * cx / 4.0,
                                 cx * np.asarray(column_y, dtype=float)))


def pile_design_diameter(d_nom: Real, uncased: Real = False) -> Floats:
    """EN 1992-1-1:2004 2.3.4.2(2)

    Design diameter of cast-in-place piles without permanent casing [V: S25]: d_nom − 20 for
    d_nom < 400; 0.95 d_nom for 400 ≤ d_nom ≤ 1000; d_nom − 50 above. Other piles: d_nom
    (reference decision 8).

    Args:
        d_nom: nominal (stated) pile diameter [mm]
        uncased: True for a cast-in-place pile without permanent casing [-]

    Returns:
        design diameter [mm]
    """
    d = np.asarray(d_nom, dtype=float)
    red = np.where(d < 400.0, d - 20.0, np.where(d <= 1000.0, 0.95 * d, d - 50.0))
    return np.where(np.asarray(uncased, dtype=bool), red, d)


def bearing_stress(force: Real, area: Real) -> Floats:
    """EN 1992-1-1:2004 6.5.4(4)

    Node bearing stress on a loaded face, σ = F/A (the stress compared with σRd,max) [M].

    Args:
        force: force on the face [N]
        area: face area [mm²]

    Returns:
        σ [MPa]
    """
    return np.asarray(force, dtype=float) / area


def strut_face_stress(force: Real, area: Real, theta_deg: Real) -> Floats:
    """Derived: node stress on the face normal to an inclined strut, σ = F/(A sin²θ)

    A strut of force C = F/sinθ reaching a horizontal node face A meets it over A·sinθ
    normal to its axis, so σ = F/(A sin²θ) (reference decision 6) [D]. It rises as the strut
    flattens.

    Args:
        force: vertical force on the node (pile reaction, column load) [N]
        area: horizontal node face (pile head, column) [mm²]
        theta_deg: strut inclination to the horizontal [degrees]

    Returns:
        σ [MPa]
    """
    s = np.sin(np.radians(np.asarray(theta_deg, dtype=float)))
    return cast(Floats, np.asarray(force, dtype=float) / (area * s * s))


def equivalent_square_side(area: Real) -> Floats:
    """Derived: side of the square of the same area as a node face, b = √A

    Used for the width of the pile node normal to the plane of the strut, and for the node
    width a1 in that plane, where the pile head is circular (an equivalent square of the pile
    head area; capcheck's convention, stated in the working) [D].

    Args:
        area: node face area (pile head) [mm²]

    Returns:
        b [mm]
    """
    return cast(Floats, np.sqrt(np.asarray(area, dtype=float)))


def tie_zone_height(cover: Real, phi: Real) -> Floats:
    """EN 1992-1-1:2004 6.5.4, Figure 6.27

    CCT node: height u of the tie zone below the node, taken as twice the depth to the centre of the
    lowest bar layer, u = 2(c + φ/2): the tie is centred in the zone (s0 = c + φ/2 in Fig.
    6.27, one layer) [M for the figure]. The second layer is not credited (conservative:
    the smaller u gives the narrower strut face).

    Args:
        cover: nominal cover to the lowest bars [mm]
        phi: diameter of the lowest bars [mm]

    Returns:
        u [mm]
    """
    return 2.0 * (np.asarray(cover, dtype=float) + 0.5 * np.asarray(phi, dtype=float))


def strut_face_width(a1: Real, u: Real, theta_deg: Real) -> Floats:
    """EN 1992-1-1:2004 6.5.4, Figure 6.27

    CCT node: width of the node face normal to the strut, a2 = a1 sin θ + u cos θ, with a1 the bearing
    width in the plane of the strut and u the height of the tie zone [M].

    Args:
        a1: bearing width of the node in the plane of the strut [mm]
        u: height of the tie zone (:func:`tie_zone_height`) [mm]
        theta_deg: strut inclination to the horizontal [degrees]

    Returns:
        a2 [mm]
    """
    t = np.radians(np.asarray(theta_deg, dtype=float))
    return cast(Floats, np.asarray(a1, dtype=float) * np.sin(t) + np.asarray(u, dtype=float) * np.cos(t))


def strut_stress_node_geometry(force: Real, a1: Real, b: Real, u: Real, theta_deg: Real) -> Floats:
    """EN 1992-1-1:2004 6.5.4(4), Figure 6.27

    Strut stress at a pile node sized with the tie zone: σ = C/(a2 b) with the strut force C = F/sin θ, a2 = a1 sin θ
    + u cos θ (Fig. 6.27) and b the
    node dimension normal to the plane of the strut [M]. For a pile head of area A capcheck uses
    a1 = b = √A (an equivalent square, :func:`equivalent_square_side`). With u = 0 this is the
    simple sizing F/(A sin² θ) of :func:`strut_face_stress`; the tie zone widens the face.

    Args:
        force: vertical force on the node (pile reaction) [N]
        a1: bearing width of the node in the plane of the strut [mm]
        b: node dimension normal to the plane [mm]
        u: height of the tie zone [mm]
        theta_deg: strut inclination to the horizontal [degrees]

    Returns:
        σ on the strut face [MPa]
    """
    s = np.sin(np.radians(np.asarray(theta_deg, dtype=float)))
    c = np.asarray(force, dtype=float) / s
    return cast(Floats, c / (strut_face_width(a1, u, theta_deg) * b))


def partially_loaded_area_ratio(b1: Real, d1: Real, h: Real, length: Real, width: Real) -> Floats:
    """EN 1992-1-1:2004 6.7(3), Figure 6.29

    Partially loaded area (6.7(2), Eq. (6.63)): √(Ac1/Ac0) for a concentric load on Ac0 = b1 × d1 spread to the
    design distribution area
    Ac1 = b2 × d2, geometrically similar to Ac0 with the same centre (6.7(3)) [M]. Ac1 is
    limited by the distribution depth, h ≥ b2 − b1 and h ≥ d2 − d1 (Fig. 6.29), and by the
    member outline, b2 ≤ L and d2 ≤ W: with b2 = λ b1, d2 = λ d1,
    λ = min(1 + h/max(b1, d1), L/b1, W/d1), and √(Ac1/Ac0) = λ (not below 1). A circle of
    diameter D is the case b1 = d1 = D (Ac1 a circle of diameter λD).

    Args:
        b1, d1: loaded area dimensions along x and y (circle: D, D) [mm]
        h: depth available for the distribution (the cap depth) [mm]
        length, width: member plan dimensions along x and y [mm]

    Returns:
        √(Ac1/Ac0) [-] (the cap of 3.0 in Eq. 6.63 is applied by :func:`partially_loaded_limit`)
    """
    b1 = np.asarray(b1, dtype=float)
    d1 = np.asarray(d1, dtype=float)
    lam = np.minimum(1.0 + np.asarray(h, dtype=float) / np.maximum(b1, d1),
                     np.minimum(np.asarray(length, dtype=float) / b1, np.asarray(width, dtype=float) / d1))
    return np.maximum(lam, 1.0)


def partially_loaded_limit(fcd: Real, area_ratio_sqrt: Real, cap: Real = 3.0) -> Floats:
    """EN 1992-1-1:2004 6.7(2), Eq. (6.63)

    Bearing stress on a partially loaded area, FRdu/Ac0 = fcd √(Ac1/Ac0) ≤ 3.0 fcd [M]. The
    transverse (bursting) forces of 6.7(4) must be taken by reinforcement; capcheck checks them
    for single-pile caps only (:mod:`checker.calcs.splitting`, said in the working).

    Args:
        fcd: design compressive strength [MPa]
        area_ratio_sqrt: √(Ac1/Ac0) (:func:`partially_loaded_area_ratio`) [-]
        cap: upper bound of the factor, 3.0 in Eq. (6.63) [-]

    Returns:
        σRdu = FRdu/Ac0 [MPa]
    """
    return cast(Floats, np.asarray(fcd, dtype=float) * np.minimum(np.asarray(area_ratio_sqrt, dtype=float), cap))


def node_limit(k: Real, nu_prime: Real, fcd: Real) -> Floats:
    """EN 1992-1-1:2004 6.5.4(4), Eq. (6.60)

    Design strength of a node, σRd,max = k ν' fcd; k1 = 1.0 (CCC, Eq. 6.60), k2 = 0.85 (CCT,
    Eq. 6.61), k3 = 0.75 (CTT, Eq. 6.62), recommended values [V: S22; M for the NA entry].

    Args:
        k: node factor k1, k2 or k3 [-]
        nu_prime: ν' = 1 − fck/250 [-]
        fcd: design compressive strength (αcc = alpha_cc_flex) [MPa]

    Returns:
        σRd,max [MPa]
    """
    return k * np.asarray(nu_prime, dtype=float) * fcd


def pile_node_factor(n_piles: Real, k1: Real = 1.0, k2: Real = 0.85, k3: Real = 0.75) -> Floats:
    """EN 1992-1-1:2004 6.5.4(4)

    Node factor for the pile node (reference decision 6): CCT (k2) where the ties are anchored
    in one direction (2-pile caps), CTT (k3) where they are anchored in two (3 to 6 piles).
    A 1-pile cap anchors no tie at the pile: CCC (k1) [D].

    Args:
        n_piles: number of piles [count]
        k1, k2, k3: node factors, recommended 1.0 / 0.85 / 0.75 [-]

    Returns:
        k [-] (NaN where n_piles is NaN)
    """
    n = np.asarray(n_piles, dtype=float)
    k = np.where(n <= 1.0, k1, np.where(n <= 2.0, k2, k3))
    return np.where(np.isnan(n), np.nan, k)


def piles_within_three_diameters(spacing_min: Real, pile_dia: Real) -> Floats:
    """Common practice: the truss method of a pile cap applies where the piles are at no more than 3φ

    1.0 where the closest pile centres are at most three pile diameters apart (the strut-and-tie
    idealisation of BS 8110-1:1997 3.11.4.2 and the engineering reference §6) [CP], 0.0 where
    they are further apart, NaN where the spacing is unknown. A relative allowance of 1e-9 keeps
    a spacing of exactly 3φ within.

    Args:
        spacing_min: smallest centre-to-centre pile spacing (n,) [mm]
        pile_dia: pile diameter (n,) [mm]

    Returns:
        1.0 / 0.0 / NaN (n,) [-]
    """
    s = np.asarray(spacing_min, dtype=float)
    within = (s <= 3.0 * np.asarray(pile_dia, dtype=float) * (1 + 1e-9)).astype(float)
    return np.where(np.isnan(s), np.nan, within)


def strut_lever_arm(n_piles: Real, d_x: Real, d_y: Real) -> Floats:
    """Derived: lever arm of the struts, the x layer's d for a two-pile cap, else the lower layer's

    A two-pile cap has no tie along y, so its struts work with the x layer; other caps take the
    smaller of the two layers' effective depths [D].

    Args:
        n_piles: number of piles (n,) [-]
        d_x, d_y: effective depths of the x and y layers (n,) [mm]

    Returns:
        z (n,) [mm]
    """
    return np.where(np.asarray(n_piles) == 2, d_x, np.fmin(d_x, d_y))


def min_inclined_strut_angle(
    theta: Floats, radial_distance: Floats, mask: NDArray[np.bool_], r_vertical: Real = 0.5,
) -> Floats:
    """Derived: the smallest strut angle of a cap over its inclined struts

    A pile whose centre lies within ``r_vertical`` of the column centre carries its load in a
    vertical strut, which has no inclination to check [D]; NaN where a cap has no inclined strut.

    Args:
        theta: strut angles (n, m) [degrees]
        radial_distance: pile centre to column centre (n, m) [mm]
        mask: real piles (n, m) [-]
        r_vertical: radial distance below which a strut is taken as vertical [mm]

    Returns:
        smallest angle (n,) [degrees]
    """
    inclined = mask & (radial_distance > r_vertical)
    low = np.min(np.where(inclined & ~np.isnan(theta), theta, np.inf), axis=1)
    return np.where(np.isinf(low), np.nan, low)


def column_strut_angle(theta_min: Real, n_piles: Real) -> Floats:
    """Derived: strut angle at the column node, 90° where every strut is vertical

    The smallest inclined strut angle of the cap; a cap with piles but no inclined strut (a single
    pile under the column) loads the column node vertically, θ = 90° [D].

    Args:
        theta_min: smallest inclined strut angle (n,) [degrees]
        n_piles: number of piles (n,) [-]

    Returns:
        θ (n,) [degrees]
    """
    return np.where(np.isnan(theta_min) & (np.asarray(n_piles) >= 1), 90.0, theta_min)


def governing_strut_angle(stress: Floats, theta: Floats, mask: NDArray[np.bool_]) -> Floats:
    """Derived: strut angle at the pile node with the largest strut stress

    The angle of the strut whose node-face stress governs [D] (the first such pile on a tie).

    Args:
        stress: strut stress at each pile node (n, m) [MPa]
        theta: strut angles (n, m) [degrees]
        mask: real piles (n, m) [-]

    Returns:
        θ of the governing pile (n,) [degrees]
    """
    n = np.shape(theta)[0]
    if not n:
        return np.zeros(0)
    gov = np.argmax(np.where(mask, stress, -np.inf), axis=1)
    return cast(Floats, np.asarray(theta)[np.arange(n), gov])


def three_pile_side_tie(
    X: Floats, Y: Floats, Hx: Floats, Hy: Floats, mask: NDArray[np.bool_], n_piles: Real,
) -> Floats:
    """Derived: the largest tie along the sides of a three-pile cap's triangle

    For a cap of exactly three real piles in the first three positions, the largest of the
    :func:`triangle_side_ties`; NaN for every other cap [D].

    Args:
        X, Y: pile centres (n, m) [mm]
        Hx, Hy: horizontal pile-node forces (n, m) [N]
        mask: real piles (n, m) [-]
        n_piles: number of piles (n,) [-]

    Returns:
        side tie force (n,) [N]
    """
    n = np.shape(X)[0]
    if np.shape(X)[1] < 3:  # the array width, not a value of any cap
        return np.full(n, np.nan)
    three = (np.asarray(n_piles) == 3) & mask[:, :3].all(axis=1)
    sides = triangle_side_ties(X[:, :3], Y[:, :3], Hx[:, :3], Hy[:, :3])
    return np.where(three, np.max(sides, axis=1), np.nan)


def column_loaded_width(side: Real, area: Real, column_round: Real) -> Floats:
    """Derived: loaded width of a column in one plan direction

    The column side, or for a circular column the side of the square of equal area [D].

    Args:
        side: column side (diameter if circular) in the direction (n,) [mm]
        area: column area (n,) [mm²]
        column_round: circular column (n,) [-]

    Returns:
        loaded width (n,) [mm]
    """
    return np.where(column_round, equivalent_square_side(area), side)
