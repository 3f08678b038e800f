"""Punching at the column: EN 1992-1-1:2004 6.4.5(3) at the column face and 6.4.4(2) on the basic
control perimeter for a column base, with the pile-cap practice of reference §10.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import TypedDict, cast

import numpy as np
from numpy.typing import NDArray

from checker.calcs._typing import Floats, Real


class PileEdgePerimeter(TypedDict):
    """:func:`pile_edge_perimeter`, each of the broadcast shape of the pile centres and ρ."""

    u: Floats
    u_fig: Floats
    u_circle: Floats
    near: Floats
    legs: Floats
    rho: Floats


class PilePunching(TypedDict):
    """:func:`pile_punching`: the governing pile of each cap, (n,) each."""

    applies: Floats
    ved: Floats
    ved_force: Floats
    reaction: Floats
    dv_col: Floats
    dv_sw: Floats
    dv_piles: Floats
    u: Floats
    u_circle: Floats
    rho: Floats
    near: Floats
    legs: Floats
    util: Floats
    x: Floats
    y: Floats


def column_perimeter(column_x: Real, column_y: Real, column_round: Real = False) -> Floats:
    """EN 1992-1-1:2004 6.4.5(3)

    Perimeter u0 of an internal column: 2(cx + cy) for a rectangle, πD for a circle [M].

    Args:
        column_x, column_y: column dimensions (circle: both D) [mm]
        column_round: True for a circular column [-]

    Returns:
        u0 [mm]
    """
    cx = np.asarray(column_x, dtype=float)
    cy = np.asarray(column_y, dtype=float)
    return np.where(np.asarray(column_round, dtype=bool), np.pi * cx, 2.0 * (cx + cy))


def shear_stress_column_face(v_ed: Real, u0: Real, d_mean: Real, beta: Real = 1.0) -> Floats:
    """EN 1992-1-1:2004 6.4.5(3), Eq. (6.53)

    Shear stress at the column face vEd,0 = β VEd/(u0 d). β = 1.0 for a concentrically loaded
    column base (reference §10, [M; V: S13 procedure]); eccentric loading needs 6.4.3(3).

    Args:
        v_ed: column load [N]
        u0: column perimeter [mm]
        d_mean: mean effective depth (d_x + d_y)/2 [mm]
        beta: eccentricity factor, 1.0 here [-]

    Returns:
        vEd,0 [MPa]
    """
    return beta * np.asarray(v_ed, dtype=float) / (u0 * np.asarray(d_mean, dtype=float))


def v_rd_max(nu: Real, fcd: Real, coeff: Real = 0.5) -> Floats:
    """EN 1992-1-1:2004 6.4.5(3)

    Maximum punching shear stress at the column face vRd,max = coeff·ν·fcd: 0.5 in the 2004
    text and the UK NA, recommended 0.4 after A1:2014 (reference decision 1) [M].

    Args:
        nu: ν = 0.6 (1 − fck/250) [-]
        fcd: design compressive strength (αcc = alpha_cc_shear) [MPa]
        coeff: 0.5 (uk-na) or 0.4 (ec2 after A1:2014) [-]

    Returns:
        vRd,max [MPa]
    """
    return coeff * np.asarray(nu, dtype=float) * fcd


def basic_control_perimeter(column_x: Real, column_y: Real, d: Real, column_round: Real = False) -> Floats:
    """EN 1992-1-1:2004 6.4.2(1)

    Basic control perimeter at 2d from the column face: u1 = 2(cx + cy) + 4πd, or π(D + 4d)
    for a circular column [M].

    Args:
        column_x, column_y: column dimensions (circle: both D) [mm]
        d: mean effective depth [mm]
        column_round: True for a circular column [-]

    Returns:
        u1 [mm]
    """
    cx = np.asarray(column_x, dtype=float)
    cy = np.asarray(column_y, dtype=float)
    d = np.asarray(d, dtype=float)
    return np.where(np.asarray(column_round, dtype=bool), np.pi * (cx + 4.0 * d),
                    2.0 * (cx + cy) + 4.0 * np.pi * d)


def pile_under_column(
    X: Real, Y: Real, pile_dia: Real, column_x: Real, column_y: Real, column_round: Real = False,
) -> NDArray[np.bool_]:
    """Derived: a pile head lies entirely under the column (its whole disc inside the column face)

    Rectangle cx × cy (centred): |X| + φ/2 ≤ cx/2 and |Y| + φ/2 ≤ cy/2; circle D: r + φ/2 ≤ D/2.

    Args:
        X, Y: pile centres relative to the column centre (n, m) [mm]
        pile_dia: pile diameter (n,) [mm]
        column_x, column_y: column size (circle: both D) (n,) [mm]
        column_round: True for a circular column (n,) [-]

    Returns:
        True where the pile head is entirely under the column (n, m) [-]
    """
    X = np.asarray(X, dtype=float)
    Y = np.asarray(Y, dtype=float)
    r = 0.5 * np.asarray(pile_dia, dtype=float)
    cx = np.asarray(column_x, dtype=float)
    cy = np.asarray(column_y, dtype=float)
    rnd = np.asarray(column_round, dtype=bool)
    if X.ndim == 2:
        r, cx, cy = r[..., None], cx[..., None], cy[..., None]
        rnd = np.broadcast_to(rnd, cx.shape[:1])[:, None]
    rect = (np.abs(X) + r <= 0.5 * cx) & (np.abs(Y) + r <= 0.5 * cy)
    circ = np.hypot(X, Y) + r <= 0.5 * cx
    return np.where(rnd, circ, rect)


def perimeter_applies(
    X: Real, Y: Real, mask: NDArray[np.bool_], pile_dia: Real, column_x: Real, column_y: Real,
    column_round: Real = False,
) -> Floats:
    """EN 1992-1-1:2004 6.4.4(2)

    The control perimeters within 2d are checked wherever a pile face lies outside the column
    face, i.e. wherever some pile is not entirely under the column (the load then crosses the
    perimeters between the column and that pile). Where every pile lies entirely under the column
    the load passes straight into the piles and no perimeter is crossed.

    Args:
        X, Y: pile centres (n, m) [mm]
        mask: real piles (n, m) [-]
        pile_dia: pile diameter (n,) [mm]
        column_x, column_y: column size (circle: both D) (n,) [mm]
        column_round: True for a circular column (n,) [-]

    Returns:
        1.0 where the perimeter checks apply, else 0.0 (n,) [-]
    """
    under = pile_under_column(np.where(mask, X, 0.0), np.where(mask, Y, 0.0), pile_dia,
                              column_x, column_y, column_round)
    return (mask & ~under).any(axis=1).astype(float)


def signed_distance_to_column(
    x: Real, y: Real, column_x: Real, column_y: Real, column_round: Real = False,
) -> Floats:
    """EN 1992-1-1:2004 6.4.2(1)

    Signed distance from a point to the column face, negative under the column. The control
    perimeter at a from the column face (straight sides with rounded corners of radius a,
    Figure 6.13 [M]; a circle of radius D/2 + a for a round column) is the line where this
    distance equals a; a point is inside that perimeter where its distance is at most a.

    Args:
        x, y: point coordinates relative to the column centre [mm]
        column_x, column_y: column size (circle: both D) [mm]
        column_round: True for a circular column [-]

    Returns:
        signed distance to the column face [mm]
    """
    x = np.asarray(x)
    y = np.asarray(y)
    rnd = np.asarray(column_round, dtype=bool)
    # a round column is a point column (cx = cy = 0) less its radius
    hx = np.where(rnd, 0.0, 0.5 * np.asarray(column_x)).astype(x.dtype, copy=False)
    hy = np.where(rnd, 0.0, 0.5 * np.asarray(column_y)).astype(x.dtype, copy=False)
    rad = np.where(rnd, 0.5 * np.asarray(column_x), 0.0).astype(x.dtype, copy=False)
    qx = np.abs(x) - hx
    qy = np.abs(y) - hy
    out = np.hypot(np.maximum(qx, 0), np.maximum(qy, 0))
    out += np.minimum(np.maximum(qx, qy), 0)
    out -= rad
    return cast(Floats, out)


class _PerimeterArcs(TypedDict):
    """:func:`_perimeter_arcs`: the inputs as arrays and the quarter arcs of the control perimeter."""

    a: Floats
    cx: Floats
    cy: Floats
    rnd: NDArray[np.bool_]
    hx: Floats
    hy: Floats
    ex: Floats
    ey: Floats
    rho: Floats
    t1: Floats
    t2: Floats


def _perimeter_arcs(
    a: Real, column_x: Real, column_y: Real, column_round: Real, cap_length: Real, cap_width: Real,
) -> _PerimeterArcs:
    """The quarter arcs of the control perimeter at a from the column face, cut by the cap plan.

    Arc centre (hx, hy): the column corner (rectangle) or the column centre (circle, (0, 0)); ex, ey
    its distances to the cap edges; ρ the radius; a quarter arc is kept over t1 ≤ θ ≤ t2 (θ from
    the x axis; t2 = t1 where none of it lies inside the cap). Shared by
    :func:`control_perimeter_length` and :func:`perimeter_w`; arguments as there.
    """
    a = np.asarray(a, dtype=float)
    cx = np.asarray(column_x, dtype=float)
    cy = np.asarray(column_y, dtype=float)
    rnd = np.asarray(column_round, dtype=bool)
    hx = np.where(rnd, 0.0, 0.5 * cx)
    hy = np.where(rnd, 0.0, 0.5 * cy)
    ex = 0.5 * np.asarray(cap_length, dtype=float) - hx
    ey = 0.5 * np.asarray(cap_width, dtype=float) - hy
    rho = np.where(rnd, 0.5 * cx + a, a)
    safe = np.where(rho > 0, rho, 1.0)
    with np.errstate(invalid="ignore"):
        t1 = np.arccos(np.clip(ex / safe, -1.0, 1.0))
        t2 = np.arcsin(np.clip(ey / safe, -1.0, 1.0))
    return _PerimeterArcs(a=a, cx=cx, cy=cy, rnd=rnd, hx=hx, hy=hy, ex=ex, ey=ey, rho=rho, t1=t1,
                          t2=np.maximum(t2, t1))


def control_perimeter_length(
    a: Real, column_x: Real, column_y: Real, column_round: Real, cap_length: Real, cap_width: Real,
) -> Floats:
    """EN 1992-1-1:2004 6.4.2(1)

    Length of the control perimeter at a from the column face, u(a) = 2(cx + cy) + 2πa for a
    rectangle, π(D + 2a) for a circle [M], less the parts lying outside the cap plan L × W
    (centred on the column): a perimeter that reaches a free edge stops there (as in Figure
    6.15 [M]). Each quarter arc of radius ρ about its centre counts only over the angles where
    it stays inside the cap: ρ[arcsin(min(ey/ρ, 1)) − arccos(min(ex/ρ, 1))]⁺, ex and ey the
    distances from the arc centre to the cap edges; a straight side counts while a ≤ its edge
    distance.

    Args:
        a: distance of the perimeter from the column face [mm]
        column_x, column_y: column size (circle: both D) [mm]
        column_round: True for a circular column [-]
        cap_length, cap_width: cap plan L (along x) and W (along y) [mm]

    Returns:
        u(a) [mm]
    """
    g = _perimeter_arcs(a, column_x, column_y, column_round, cap_length, cap_width)
    a, cx, cy, rnd, ex, ey = g["a"], g["cx"], g["cy"], g["rnd"], g["ex"], g["ey"]
    arcs = 4.0 * g["rho"] * (g["t2"] - g["t1"])
    sides = np.where(rnd, 0.0, 2.0 * cx * (a <= ey) + 2.0 * cy * (a <= ex))
    return cast(Floats, sides + arcs)


def unit_disc_points(n_points: int = 192) -> tuple[Floats, Floats]:
    """Derived: equal-area quadrature points over the unit disc (Vogel's sunflower spiral)

    Point j at radius √((j + ½)/P) and angle j·π(3 − √5): every point stands for the same
    area π/P of the unit disc, spread evenly in every direction, so the share of points on
    one side of a line approximates the share of the disc's area (to about 0.5 % of the area
    with 192 points and the smoothed count of :func:`area_fraction_inside`).

    Args:
        n_points: number of points P [count]

    Returns:
        (ux, uy): point coordinates on the unit disc, each of shape (P,) [-]
    """
    j = np.arange(int(n_points), dtype=float)
    rad = np.sqrt((j + 0.5) / n_points)
    ang = j * np.pi * (3.0 - np.sqrt(5.0))
    return rad * np.cos(ang), rad * np.sin(ang)


def area_fraction_inside(sd: Real, width: Real, a0: Real, step: Real, n_steps: int) -> Floats:
    """Derived: share of a pile head's area inside the control perimeters a0 + k·step (k = 0..K)

    Each quadrature point of the pile head stands for a cell of the head's area; the cell is
    counted as a strip of width w across the perimeter lines (the signed distance rises at unit
    rate across them), i.e. point j contributes clip((a − sd_j)/w + ½, 0, 1) rather than a
    0/1 step: a smoothed count, several times more accurate than the bare count for the same
    points. The sums over the points of the ramps are formed from histograms of the strip ends
    over the grid (two ``np.bincount`` each), so the cost does not grow with the number of
    perimeters: Σ_j (a_k − e_j)⁺ = k·C_k − S_k in grid units, with C_k and S_k the count and the
    sum of the ends e_j ≤ a_k.

    Args:
        sd: signed distances of the quadrature points to the column face, (p, P) [mm]
        width: strip width w of a point's cell, about φ/2·√(π/P) (p,) [mm]
        a0: first perimeter of the grid (p,) [mm]
        step: grid step (p,) [mm]
        n_steps: number of steps K [count]

    Returns:
        (p, K + 1) shares of the area inside the perimeters a0 + k·step [-]
    """
    sd = np.asarray(sd)
    p, npts = sd.shape
    K = int(n_steps)
    dt = sd.dtype
    step = np.asarray(step).astype(dt, copy=False)
    t = (sd - np.asarray(a0).astype(dt, copy=False)[:, None]) / step[:, None]
    half = (0.5 * np.asarray(width) / np.asarray(step)).astype(dt, copy=False)[:, None]
    base = (np.arange(p, dtype=np.intp) * (K + 2))[:, None]
    k = np.arange(K + 1, dtype=float)
    relu = []
    for end in (t - half, t + half):
        b = np.ceil(end)
        np.clip(b, 0, K + 1, out=b)
        idx = b.astype(np.intp)
        idx += base
        idx = idx.ravel()
        cnt = np.bincount(idx, minlength=p * (K + 2)).reshape(p, K + 2)[:, :K + 1]
        tot = np.bincount(idx, weights=end.ravel(), minlength=p * (K + 2)).reshape(p, K + 2)[:, :K + 1]
        relu.append(k * np.cumsum(cnt, axis=1) - np.cumsum(tot, axis=1))
    frac = np.clip((relu[0] - relu[1]) / (2.0 * half.astype(float) * npts), 0.0, 1.0)
    # single-precision coordinates leave ~1e-5 on a head wholly inside or outside: snap it, or a
    # perimeter cut down to a sliver at a cap corner would divide that residue by a tiny u
    return np.where(frac > 1.0 - 1e-4, 1.0, np.where(frac < 1e-4, 0.0, frac))


def governing_perimeter(v_ed: Real, reaction: Real, X: Real, Y: Real, mask: Real, pile_dia: Real,
                        column_x: Real, column_y: Real, column_round: Real, cap_length: Real, cap_width: Real,
                        d: Real, vrdc: Real, mx_ed: Real | None = None, my_ed: Real | None = None,
                        n_coarse: int = 64, n_fine: int = 16, n_points: int = 192,
                        chunk_points: int = 2 ** 21) -> dict[str, Floats]:
    """EN 1992-1-1:2004 6.4.4(2)

    Every control perimeter within 2d of the column face, the lowest resistance governing:
    for each trial a, VEd,red = VEd − Σ R_i f_i(a) (Eq. (6.48); f_i the share of pile i's head
    area inside the perimeter, common practice for pile caps), vEd = VEd,red/(u(a) d) (Eq.
    (6.49), β = 1.0) against vRd = vRd,c·2d/a (Eq. (6.50), vRd,c ≥ vmin), u(a) truncated by the
    cap edges (:func:`control_perimeter_length`). The governing a has the highest vEd/vRd.

    With moments (column bases with eccentric loading, Eq. (6.51) [M]):
    vEd = VEd,red/(u d) [1 + k MEd u/(VEd,red W)] = VEd,red/(u d) + k MEd/(W d), with u and W
    of the perimeter considered (:func:`perimeter_w`, truncated by the cap) and k of Table 6.1
    (:func:`k_moment`). For a pile cap the moment is reduced, like the force, by the pile
    reactions inside the perimeter: MEd,red = MEd − Σ R_i f_i c_i (c_i the pile centre's lever
    about the axis) [D], so a perimeter enclosing every pile carries neither force nor moment.
    Both moments: the two terms combined as √(t_x² + t_y²), the combination of Eq. (6.43) [D].

    Trial perimeters: a = k·2d/64 (k = 1..64, steps of d/32), then 16 steps of d/256 over the
    two coarse steps either side of the worst. Why this is fine enough: on a step a_k < a <
    a_k+1, VEd,red does not rise and u(a) does not fall (short of a cap edge), so vEd/vRd(a) ≤
    vEd/vRd(a_k)·a_k+1/a_k; the worst is a smooth peak where the perimeter reaches the pile
    faces, and the fine steps bound the loss there to 1 + 1/(256 a/d) (0.4 % at a = d). Over
    7,000 random 1- to 6-pile caps (moments, round columns, perimeters cut by the cap) the
    governing vEd/vRd was never more than 0.4 % below a scan in steps of d/2048 (the tests
    hold it to 1 %). Pile areas by quadrature over ``n_points`` points per pile head
    (:func:`unit_disc_points`, :func:`area_fraction_inside`, about 0.5 % of a head's area),
    worked over chunks of about ``chunk_points`` points (bounded memory for any schedule);
    piles of one cap at mirror positions share one quadrature (the perimeters are symmetric
    about both column axes).

    Length: over 80 lines, left whole on purpose: the body (about 110 lines) is one chunked scan
    whose coarse and fine trials share the chunk's quadrature and fractions through two closures;
    split, each part would take a dozen arrays of the chunk and the scan would be harder to follow.

    Args:
        v_ed: column load (n,) [N]
        reaction: pile reactions from the column load (n, m) [N]
        X, Y: pile centres relative to the column centre (n, m) [mm]
        mask: real piles (n, m) [-]
        pile_dia: pile diameter (n,) [mm]
        column_x, column_y: column size (circle: both D) (n,) [mm]
        column_round: True for a circular column (n,) [-]
        cap_length, cap_width: cap plan L and W (n,) [mm]
        d: mean effective depth (n,) [mm]
        vrdc: vRd,c with the two-way ρ, at least vmin (n,) [MPa]
        mx_ed, my_ed: moments about x and about y (n,), None for none [N·mm]
        n_coarse: coarse steps over (0, 2d] [count]
        n_fine: fine steps over the two coarse steps round the worst [count]
        n_points: quadrature points per pile head [count]
        chunk_points: points worked at once [count]

    Returns:
        dict of (n,) arrays: ``a`` governing distance from the column face [mm], ``u`` its
        perimeter [mm], ``ved_red`` VEd,red [N], ``ved`` vEd [MPa], ``vrd`` vRd [MPa],
        ``util`` vEd/vRd [-], ``beta`` vEd u d/VEd,red (1.0 without moments) [-], ``dv0`` the
        reactions deducted inside the column perimeter (a = 0, for 6.4.5(3)) [N]; NaN where the
        inputs are missing
    """
    X = np.asarray(X, dtype=float)
    Y = np.asarray(Y, dtype=float)
    mask = np.asarray(mask, dtype=bool)
    n, m = X.shape
    v = np.broadcast_to(np.asarray(v_ed, dtype=float), (n,))
    R = np.where(mask, np.nan_to_num(np.asarray(reaction, dtype=float)), 0.0)
    r = np.broadcast_to(0.5 * np.asarray(pile_dia, dtype=float), (n,))
    cx = np.broadcast_to(np.asarray(column_x, dtype=float), (n,))
    cy = np.broadcast_to(np.asarray(column_y, dtype=float), (n,))
    rnd = np.broadcast_to(np.asarray(column_round, dtype=bool), (n,))
    L = np.broadcast_to(np.asarray(cap_length, dtype=float), (n,))
    W = np.broadcast_to(np.asarray(cap_width, dtype=float), (n,))
    d = np.broadcast_to(np.asarray(d, dtype=float), (n,))
    vrdc = np.broadcast_to(np.asarray(vrdc, dtype=float), (n,))
    K, F = int(n_coarse), int(n_fine)
    P = int(n_points)
    moments = mx_ed is not None or my_ed is not None
    if moments:
        mx = np.broadcast_to(np.nan_to_num(np.asarray(0.0 if mx_ed is None else mx_ed, dtype=float)), (n,))
        my = np.broadcast_to(np.nan_to_num(np.asarray(0.0 if my_ed is None else my_ed, dtype=float)), (n,))
        kx = k_moment_column(cx, cy, rnd)   # eccentricity along x (My): c1 = cx
        ky = k_moment_column(cy, cx, rnd)   # eccentricity along y (Mx): c1 = cy
    ux, uy = (u.astype(np.float32) for u in unit_disc_points(P))

    valid = (np.isfinite(v) & np.isfinite(r) & (r > 0) & np.isfinite(cx) & np.isfinite(cy)
             & np.isfinite(d) & (d > 0) & np.isfinite(L) & np.isfinite(W) & np.isfinite(vrdc)
             & mask.any(axis=1))
    Xs, Ys = np.where(mask, X, 0.0), np.where(mask, Y, 0.0)
    under = mask & pile_under_column(Xs, Ys, 2 * r, cx, cy, rnd)
    cell = r * np.sqrt(np.pi / P)
    sd_c = signed_distance_to_column(Xs, Ys, cx[:, None], cy[:, None], rnd[:, None])
    # piles wholly beyond 2d (and their strips) deduct nothing at any trial: not sampled
    sample = mask & valid[:, None] & ~under & (sd_c - r[:, None] - cell[:, None] <= 2.0 * d[:, None])
    hc = 2.0 * d / K

    out = {k: np.full(n, np.nan) for k in ("a", "u", "ved_red", "ved", "vrd", "util", "beta", "dv0")}
    per_chunk = max(1, int(chunk_points) // (m * P))
    for c0 in range(0, n, per_chunk):
        sl = slice(c0, min(n, c0 + per_chunk))
        nc = sl.stop - sl.start
        rows, cols = np.nonzero(sample[sl])
        # mirror positions of one cap share one quadrature
        ax = np.round(np.abs(Xs[sl][rows, cols]), 3)
        ay = np.round(np.abs(Ys[sl][rows, cols]), 3)
        order = np.lexsort((ay, ax, rows))
        new = np.ones(len(order), dtype=bool)
        new[1:] = ((rows[order][1:] != rows[order][:-1]) | (ax[order][1:] != ax[order][:-1])
                   | (ay[order][1:] != ay[order][:-1]))
        inv = np.empty(len(order), dtype=np.intp)
        inv[order] = np.cumsum(new) - 1
        first = order[new]
        ur = rows[first]
        g = sl.start + ur
        rr = r[g].astype(np.float32)[:, None]
        px = ax[first].astype(np.float32)[:, None] + rr * ux
        py = ay[first].astype(np.float32)[:, None] + rr * uy
        sd = signed_distance_to_column(px, py, cx[g][:, None], cy[g][:, None], rnd[g][:, None])
        del px, py
        base = under[sl].astype(float)
        Rc = R[sl]

        def fractions(fu: Floats, nodes: int) -> Floats:
            f = np.repeat(base[:, :, None], nodes, axis=2)
            if len(rows):
                f[rows, cols] = fu[inv]
            return f

        def trial(a: Floats, f: Floats) -> tuple[Floats, Floats, Floats, Floats, Floats]:
            dd = d[sl][:, None]
            u = control_perimeter_length(a, cx[sl][:, None], cy[sl][:, None], rnd[sl][:, None],
                                         L[sl][:, None], W[sl][:, None])
            red = reduced_punching_force(v[sl], Rc, f)
            with np.errstate(divide="ignore", invalid="ignore"):
                ved = red / (u * dd)
                if moments:
                    # MEd,red: the moment less that of the reactions inside the perimeter [D]
                    m_ex = my[sl][:, None] - np.einsum("cm,cmk->ck", Rc * Xs[sl], f)
                    m_ey = mx[sl][:, None] - np.einsum("cm,cmk->ck", Rc * Ys[sl], f)
                    wx, wy = perimeter_w(a, cx[sl][:, None], cy[sl][:, None], rnd[sl][:, None],
                                         L[sl][:, None], W[sl][:, None])
                    tx = np.where(wx > 0, kx[sl][:, None] * np.abs(m_ex) / np.where(wx > 0, wx, 1.0), 0.0)
                    ty = np.where(wy > 0, ky[sl][:, None] * np.abs(m_ey) / np.where(wy > 0, wy, 1.0), 0.0)
                    ved = ved + np.hypot(tx, ty) / dd
                vrd = vrdc[sl][:, None] * 2.0 * dd / a
                util = np.where((a > 0) & (u > 0), ved / vrd, -np.inf)
            return u, red, ved, vrd, util

        a_c = hc[sl][:, None] * np.arange(K + 1)
        fu = area_fraction_inside(sd, cell[g], np.zeros(len(g)), hc[g], K) if len(g) else np.zeros((0, K + 1))
        f_c = fractions(fu, K + 1)
        _, red_c, _, _, util_c = trial(a_c, f_c)
        kbest = np.argmax(util_c, axis=1)
        k0 = np.clip(kbest - 1, 0, K - 2)
        a0 = k0 * hc[sl]
        hf = 2.0 * hc[sl] / F
        a_f = a0[:, None] + hf[:, None] * np.arange(F + 1)
        fu_f = (area_fraction_inside(sd, cell[g], a0[ur], hf[ur], F) if len(g)
                else np.zeros((0, F + 1)))
        u, red, ved, vrd, util = trial(a_f, fractions(fu_f, F + 1))
        j = np.argmax(util, axis=1)
        pick = np.arange(nc), j
        ok = valid[sl] & np.isfinite(util[pick])
        with np.errstate(divide="ignore", invalid="ignore"):
            beta = np.where(red > 0, ved * u * d[sl][:, None] / red, np.nan)
        for key, arr in (("a", a_f), ("u", u), ("ved_red", red), ("ved", ved), ("vrd", vrd),
                         ("util", util), ("beta", beta)):
            out[key][sl] = np.where(ok, arr[pick], np.nan)
        out["dv0"][sl] = np.where(valid[sl], v[sl] - red_c[:, 0], np.nan)
    return out


def reduced_punching_force(v_ed: Real, reaction: Real, fraction: Real) -> Floats:
    """EN 1992-1-1:2004 6.4.4(2), Eq. (6.48)

    Net punching force VEd,red = VEd − ΔVEd on a control perimeter, ΔVEd = Σ R_i f_i with f_i
    the share of pile i's head area inside the perimeter (common practice for pile caps: a pile
    straddling the perimeter relieves it in proportion to its area inside) [M; V: S6].

    Args:
        v_ed: column load (n,) [N]
        reaction: pile reactions from the column load (n, m), 0 for missing piles [N]
        fraction: share of each pile head inside the perimeter(s), (n, m) or (n, m, k) [-]

    Returns:
        VEd,red, (n,) or (n, k) [N]
    """
    R = np.nan_to_num(np.asarray(reaction, dtype=float))
    f = np.asarray(fraction, dtype=float)
    v = np.asarray(v_ed, dtype=float)
    if f.ndim == 3:
        return cast(Floats, v[:, None] - np.einsum("cm,cmk->ck", R, f))
    return cast(Floats, v - np.sum(R * f, axis=-1))


def shear_stress_perimeter(v_ed_red: Real, u: Real, d: Real) -> Floats:
    """EN 1992-1-1:2004 6.4.4(2), Eq. (6.49)

    Punching shear stress on a control perimeter of a column base, vEd = VEd,red/(u d) (β = 1.0,
    concentric) [M; V: S6].

    Args:
        v_ed_red: net punching force [N]
        u: perimeter length [mm]
        d: mean effective depth [mm]

    Returns:
        vEd [MPa]
    """
    return np.asarray(v_ed_red, dtype=float) / (u * np.asarray(d, dtype=float))


def v_rd_column_base(vrdc: Real, d: Real, a: Real) -> Floats:
    """EN 1992-1-1:2004 6.4.4(2), Eq. (6.50)

    Punching resistance of a column base on a perimeter at a from the column face,
    vRd = vRd,c·2d/a (vRd,c from 6.2.2(1) with ρ = √(ρx ρy) ≤ 0.02, ≥ vmin·2d/a) [V: S6, S13].

    Args:
        vrdc: vRd,c with the two-way ρ [MPa]
        d: mean effective depth [mm]
        a: distance of the perimeter from the column face [mm]

    Returns:
        vRd [MPa]
    """
    return cast(Floats, np.asarray(vrdc, dtype=float) * 2.0 * np.asarray(d, dtype=float) / a)


def rho_two_way(rho_x: Real, rho_y: Real) -> Floats:
    """EN 1992-1-1:2004 6.4.4(1), Eq. (6.47)

    Two-way reinforcement ratio ρl = √(ρlx ρly) ≤ 0.02 [M].

    Args:
        rho_x, rho_y: ratios of the two layers [-]

    Returns:
        ρl [-]
    """
    return np.minimum(np.sqrt(np.asarray(rho_x, dtype=float) * rho_y), 0.02)


# ---- punching with moment transfer (issue 15, item 2) ---------------------------------------

def k_moment(c1: Real, c2: Real) -> Floats:
    """EN 1992-1-1:2004 6.4.3(3), Table 6.1

    Share k of the unbalanced moment transferred by shear, for a rectangular column: c1/c2 ≤ 0.5:
    0.45; 1.0: 0.60; 2.0: 0.70; ≥ 3.0: 0.80, linearly interpolated between (values from memory
    [M]). c1 is the column side parallel to the eccentricity (along the moment's lever), c2 the
    side across it. A circular column takes c1/c2 = 1 (k = 0.60, as in Eq. (6.42)).

    Args:
        c1: column side parallel to the eccentricity [mm]
        c2: column side perpendicular to it [mm]

    Returns:
        k [-]
    """
    ratio = np.asarray(c1, dtype=float) / np.asarray(c2, dtype=float)
    return cast(Floats, np.interp(ratio, [0.5, 1.0, 2.0, 3.0], [0.45, 0.60, 0.70, 0.80]))


def perimeter_w(
    a: Real, column_x: Real, column_y: Real, column_round: Real, cap_length: Real, cap_width: Real
) -> tuple[Floats, Floats]:
    """EN 1992-1-1:2004 6.4.3(3), Eq. (6.41)

    W = ∫|e| dl over the control perimeter at a from the column face (the definition of W1 in
    6.4.3(3), e the distance of dl from the axis about which the moment acts), in closed form for
    the rounded rectangle at any a [D]: for the eccentricity along x (c1 = cx, c2 = cy)
    W_x(a) = c1²/2 + c1 c2 + 2 a c2 + π a c1 + 4a², which is Eq. (6.41) at a = 2d
    (c1²/2 + c1c2 + 4c2d + 16d² + 2πdc1); a circle of radius ρ = D/2 + a gives 4ρ², so that
    u/W = π/(2ρ) and 1 + 0.6 e u/W is Eq. (6.42) at a = 2d. Parts of the perimeter outside the
    cap plan do not count (as in :func:`control_perimeter_length`): a quarter arc of radius ρ
    about (hx, hy) kept over θ1 ≤ θ ≤ θ2 adds ρ hx (θ2 − θ1) + ρ² (sin θ2 − sin θ1) to W_x and
    ρ hy (θ2 − θ1) + ρ² (cos θ1 − cos θ2) to W_y; a straight side counts while it is inside.

    Args:
        a, column_x, column_y, column_round, cap_length, cap_width: as in :func:`control_perimeter_length`
            (a, column_x, column_y, cap_length, cap_width [mm]; column_round [-])

    Returns:
        (W_x, W_y): W for an eccentricity along x (moment My) and along y (moment Mx) [mm²]
    """
    g = _perimeter_arcs(a, column_x, column_y, column_round, cap_length, cap_width)
    a, cx, cy, rnd, ex, ey = g["a"], g["cx"], g["cy"], g["rnd"], g["ex"], g["ey"]
    hx, hy, rho, t1, t2 = g["hx"], g["hy"], g["rho"], g["t1"], g["t2"]
    span = t2 - t1
    arc_x = 4.0 * (rho * hx * span + rho * rho * (np.sin(t2) - np.sin(t1)))
    arc_y = 4.0 * (rho * hy * span + rho * rho * (np.cos(t1) - np.cos(t2)))
    side_x_on = (a <= ex) & ~rnd      # the two sides across x, at x = ±(cx/2 + a), length cy
    side_y_on = (a <= ey) & ~rnd      # the two sides across y, at y = ±(cy/2 + a), length cx
    wx = arc_x + side_x_on * 2.0 * cy * (hx + a) + side_y_on * 2.0 * (hx * hx)
    wy = arc_y + side_y_on * 2.0 * cx * (hy + a) + side_x_on * 2.0 * (hy * hy)
    return wx, wy


def beta_column(
    n_ed: Real, mx_ed: Real, my_ed: Real, column_x: Real, column_y: Real, column_round: Real, d: Real
) -> tuple[Floats, Floats]:
    """EN 1992-1-1:2004 6.4.3(3), Eq. (6.39)

    β for an internal column transferring a moment, on the basic control perimeter (used for the
    column face too, 6.4.5(3)): one moment on a rectangular column, β = 1 + k (MEd/VEd) u1/W1
    (Eq. (6.39), k from Table 6.1, W1 from Eq. (6.41)); a circular column, β = 1 + 0.6π e/(D + 4d)
    (Eq. (6.42)) with e = √(ex² + ey²) (the circle is the same in every direction); both moments
    on a rectangular column, β = 1 + 1.8 √((ex/bx)² + (ey/by)²) (Eq. (6.43), bx = cx + 4d and
    by = cy + 4d the sides of the basic control perimeter, each eccentricity over the perimeter's
    side along it), not less than Eq. (6.39) gives for either moment alone (a second moment cannot
    lower β; for an elongated column Eq. (6.43) can fall below Eq. (6.39)) [M; combination D].
    ex = |My|/VEd, ey = |Mx|/VEd. β = 1 without moments.

    Args:
        n_ed: column load VEd [N]
        mx_ed, my_ed: moments about x and about y [N·mm]
        column_x, column_y: column size (circle: both D) [mm]
        column_round: True for a circular column [-]
        d: mean effective depth [mm]

    Returns:
        (β [-], source: 0 none, 1 Eq. (6.39), 2 Eq. (6.42), 3 Eq. (6.43) [-])
    """
    v = np.asarray(n_ed, dtype=float)
    mx = np.abs(np.nan_to_num(np.asarray(mx_ed, dtype=float)))
    my = np.abs(np.nan_to_num(np.asarray(my_ed, dtype=float)))
    cx = np.asarray(column_x, dtype=float)
    cy = np.asarray(column_y, dtype=float)
    rnd = np.asarray(column_round, dtype=bool)
    d = np.asarray(d, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        ex = my / v
        ey = mx / v
        u1 = 2.0 * (cx + cy) + 4.0 * np.pi * d
        w1x = 0.5 * cx * cx + cx * cy + 4.0 * cy * d + 16.0 * d * d + 2.0 * np.pi * d * cx
        w1y = 0.5 * cy * cy + cy * cx + 4.0 * cx * d + 16.0 * d * d + 2.0 * np.pi * d * cy
        b_x = 1.0 + k_moment(cx, cy) * ex * u1 / w1x
        b_y = 1.0 + k_moment(cy, cx) * ey * u1 / w1y
        b_43 = 1.0 + 1.8 * np.sqrt((ex / (cx + 4.0 * d)) ** 2 + (ey / (cy + 4.0 * d)) ** 2)
        b_42 = 1.0 + 0.6 * np.pi * np.hypot(ex, ey) / (cx + 4.0 * d)
    both = (mx > 0) & (my > 0)
    rect = np.where(both, np.maximum(b_43, np.maximum(b_x, b_y)), np.maximum(b_x, b_y))
    beta = np.where(rnd, b_42, rect)
    none = (mx == 0) & (my == 0)
    beta = np.where(none, 1.0, beta)
    src = np.where(none, 0.0, np.where(rnd, 2.0, np.where(both & (b_43 >= np.maximum(b_x, b_y)), 3.0, 1.0)))
    return np.where(np.isnan(v), np.nan, beta), src


# ---- piles near the cap edge punching upward (issue 15, item 4) -----------------------------

def disc_overlap_area(dist: Real, radius_a: Real, radius_b: Real) -> Floats:
    """Derived: area common to two discs of radii ρa and ρb whose centres are dist apart

    Plane geometry (the lens): ρa² acos((D² + ρa² − ρb²)/(2Dρa)) + ρb² acos((D² + ρb² − ρa²)/(2Dρb))
    − ½√((−D + ρa + ρb)(D + ρa − ρb)(D − ρa + ρb)(D + ρa + ρb)); π min(ρa, ρb)² where one disc
    lies inside the other; 0 where they are apart.

    Args:
        dist: distance D between the centres [mm]
        radius_a, radius_b: radii ρa, ρb [mm]

    Returns:
        common area [mm²]
    """
    D = np.asarray(dist, dtype=float)
    ra = np.asarray(radius_a, dtype=float)
    rb = np.asarray(radius_b, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        ca = np.clip((D * D + ra * ra - rb * rb) / (2.0 * D * ra), -1.0, 1.0)
        cb = np.clip((D * D + rb * rb - ra * ra) / (2.0 * D * rb), -1.0, 1.0)
        k = (-D + ra + rb) * (D + ra - rb) * (D - ra + rb) * (D + ra + rb)
        lens = ra * ra * np.arccos(ca) + rb * rb * np.arccos(cb) - 0.5 * np.sqrt(np.maximum(k, 0.0))
    small = np.pi * np.minimum(ra, rb) ** 2
    out = np.where(D >= ra + rb, 0.0, np.where(D <= np.abs(ra - rb), small, lens))
    return np.where(np.isnan(D) | np.isnan(ra) | np.isnan(rb), np.nan, out)


def _disc_quadrant(a: Real, b: Real, rho: Real) -> Floats:
    """Area of the disc of radius ρ about the origin where u ≥ a and v ≥ b (closed form) [mm²]."""
    def prim(u: Real) -> Floats:  # ∫ √(ρ² − u²) du
        s = np.sqrt(np.maximum(rho * rho - u * u, 0.0))
        with np.errstate(divide="ignore", invalid="ignore"):
            ang = np.arcsin(np.clip(np.where(rho > 0, u / np.where(rho > 0, rho, 1.0), 0.0), -1.0, 1.0))
        return cast(Floats, 0.5 * (u * s + rho * rho * ang))

    ub = np.sqrt(np.maximum(rho * rho - b * b, 0.0))
    lo = np.minimum(np.maximum(np.clip(a, -rho, rho), -ub), ub)
    span = ub - lo
    chord = prim(ub) - prim(lo)
    a2 = np.clip(a, -rho, rho)
    upper = chord - b * span                                    # b ≥ 0: the cap above v = b
    lower = 2.0 * (prim(rho) - prim(a2)) - (chord + b * span)   # b < 0: all but the cap below
    return cast(Floats, np.maximum(np.where(b >= 0, upper, lower), 0.0))


def disc_rectangle_area(x0: Real, x1: Real, y0: Real, y1: Real, rho: Real) -> Floats:
    """Derived: area of the disc of radius ρ about the origin inside the rectangle [x0, x1] × [y0, y1]

    Inclusion-exclusion over four quadrant areas Q(a, b) = area of the disc where u ≥ a and v ≥ b,
    each in closed form from ∫√(ρ² − u²) du = ½(u√(ρ² − u²) + ρ² asin(u/ρ)) (plane geometry):
    A = Q(x0, y0) − Q(x1, y0) − Q(x0, y1) + Q(x1, y1).

    Args:
        x0, x1: rectangle limits along x, x0 ≤ x1 [mm]
        y0, y1: rectangle limits along y, y0 ≤ y1 [mm]
        rho: disc radius [mm]

    Returns:
        common area [mm²]
    """
    x0, x1, y0, y1, rho = (np.asarray(t, dtype=float) for t in (x0, x1, y0, y1, rho))
    q = (_disc_quadrant(x0, y0, rho) - _disc_quadrant(x1, y0, rho)
         - _disc_quadrant(x0, y1, rho) + _disc_quadrant(x1, y1, rho))
    return np.maximum(q, 0.0)


def pile_edge_perimeter(
    X: Real, Y: Real, pile_dia: Real, d: Real, cap_length: Real, cap_width: Real
) -> PileEdgePerimeter:
    """EN 1992-1-1:2004 6.4.2(4), Figure 6.15

    Control perimeter at 2d round a pile head near the cap edges (the loaded area pushing up into
    the cap), radius ρ = φ/2 + 2d about the pile centre. An edge on the pile's side of the column
    (the +x edge for a pile at x ≥ 0, both x edges for a pile on x = 0) is near where the pile face
    is within 2d of it (centre-to-edge distance e < ρ). Figure 6.15 [M]: the perimeter runs round
    the inner side of the pile at 2d and then straight, perpendicular to each near free edge, out
    to it; read as the boundary of the 2d-offset of the pile head extended to every near edge [D]:
    each near edge takes away the half of the circle facing it, every quarter of the circle whose
    two neighbouring edges are not near remains (cut, like the circle, where an edge beyond the
    column comes within ρ), and each near edge adds its two legs of length e at ±ρ beside the pile
    where they lie inside the cap. So an edge pile has u = πρ + 2e, a corner pile πρ/2 + ex + ey,
    and the end pile of a narrow two-pile cap the cap width. 6.4.2(4) takes this where it is shorter
    than the circle truncated by the cap edges (the perimeter of 6.4.2(1), parts outside the cap
    left out); the shorter of the two is returned.

    Args:
        X, Y: pile centres relative to the column centre (n, m) [mm]
        pile_dia: pile diameter (n,) [mm]
        d: mean effective depth (n,) [mm]
        cap_length, cap_width: cap plan L (along x) and W (along y) (n,) [mm]

    Returns:
        dict of (n, m) arrays: ``u`` the perimeter [mm], ``u_fig`` the Figure 6.15 form [mm],
        ``u_circle`` the truncated circle [mm], ``near`` number of near edges [count], ``legs``
        straight legs counted (mm of perimeter gained per mm of added overhang) [count], ``rho``
        [mm]
    """
    X = np.asarray(X, dtype=float)
    Y = np.asarray(Y, dtype=float)
    col: Callable[[Real], Floats] = lambda v: np.asarray(v, dtype=float)[:, None]  # noqa: E731
    rho = 0.5 * col(pile_dia) + 2.0 * col(d)
    hl, hw = 0.5 * col(cap_length), 0.5 * col(cap_width)
    e = {"+x": hl - X, "-x": hl + X, "+y": hw - Y, "-y": hw + Y}
    own = {"+x": X > -1e-6, "-x": X < 1e-6, "+y": Y > -1e-6, "-y": Y < 1e-6}
    near = {k: (v < rho) & own[k] for k, v in e.items()}
    safe = np.where(rho > 0, rho, 1.0)
    # quarters of the circle, each between an x edge and a y edge
    quarters = (("+x", "+y"), ("-x", "+y"), ("-x", "-y"), ("+x", "-y"))
    shape = np.broadcast_shapes(X.shape, rho.shape)
    u_circ = np.zeros(shape)
    arcs = np.zeros(shape)
    for p, q in quarters:  # the arc kept while inside both edges
        with np.errstate(invalid="ignore"):
            ang = (np.arcsin(np.clip(e[q] / safe, -1.0, 1.0)) - np.arccos(np.clip(e[p] / safe, -1.0, 1.0)))
        arc = rho * np.maximum(ang, 0.0)
        u_circ = u_circ + arc
        arcs = arcs + np.where(~near[p] & ~near[q], arc, 0.0)
    perp = {"+x": ("+y", "-y"), "-x": ("+y", "-y"), "+y": ("+x", "-x"), "-y": ("+x", "-x")}
    legs = np.zeros(shape)
    leg_len = np.zeros(shape)
    for k, sides in perp.items():
        for side in sides:  # the leg at ±ρ beside the pile lies inside the cap where that edge is beyond ρ
            on = near[k] & (e[side] >= rho)
            legs = legs + on
            leg_len = leg_len + np.where(on, e[k], 0.0)
    u_fig = arcs + leg_len
    n_near = cast(Floats, sum(near[k].astype(float) for k in e))
    return {"u": np.minimum(u_fig, u_circ), "u_fig": u_fig, "u_circle": u_circ, "near": n_near,
            "legs": legs, "rho": np.broadcast_to(rho, shape)}


def pile_punching(reaction: Real, reactions: Real, X: Real, Y: Real, mask: Real, pile_dia: Real, column_x: Real,
                  column_y: Real, column_round: Real, n_ed: Real, self_weight: Real, d: Real, cap_length: Real,
                  cap_width: Real, vrdc: Real) -> PilePunching:
    """EN 1992-1-1:2004 6.4.4(1), Eq. (6.47)

    Piles near the cap edge punching upward: on the perimeter at 2d round each pile whose face is
    within 2d of a cap edge (:func:`pile_edge_perimeter`, 6.4.2(4), Figure 6.15),
    vEd = VEd/(u d) ≤ vRd,c (two-way ρ; at a = 2d the factor 2d/a of Eq. (6.50) is 1). VEd is the
    net upward force inside the perimeter, taken over the circle of radius φ/2 + 2d [D]: the pile's
    own reaction (``reaction``, the worst with the positional tolerance), plus the reactions of
    neighbouring piles by the share of their heads inside (:func:`disc_overlap_area`), less the
    column load by the share of the column's area inside (:func:`disc_rectangle_area`, or the
    lens for a round column) and the cap's self-weight by the share of the cap's plan inside; where
    the column lies within 2d of the pile face its load inside the perimeter does not cross it (a
    two-pile cap's end pile has the column inside and little to punch). The governing pile has the highest vEd/vRd,c.
    Piles under the column and perimeters
    wholly outside the cap are left out. (Over 80 lines with this docstring; the body is about 70.)

    Args:
        reaction: each pile's own worst reaction (n, m) [N]
        reactions: nominal pile reactions (n, m), for the neighbours [N]
        X, Y: pile centres relative to the column centre (n, m) [mm]
        mask: real piles (n, m) [-]
        pile_dia: pile diameter (n,) [mm]
        column_x, column_y: column size (circle: both D) (n,) [mm]
        column_round: True for a circular column (n,) [-]
        n_ed: column load (n,) [N]
        self_weight: cap self-weight included in the reactions (n,) [N]
        d: mean effective depth (n,) [mm]
        cap_length, cap_width: cap plan (n,) [mm]
        vrdc: vRd,c with the two-way ρ (n,) [MPa]

    Returns:
        dict of (n,) arrays for the governing pile: ``applies`` 1 where some pile is near an edge
        [-], ``ved`` vEd [MPa], ``ved_force`` VEd [N], ``reaction`` its reaction [N], ``dv_col``
        column load inside [N], ``dv_sw`` self-weight inside [N], ``dv_piles`` neighbours'
        reactions inside [N], ``u`` [mm],
        ``u_circle`` [mm], ``rho`` [mm], ``near`` near edges [count], ``legs`` [count], ``util``
        vEd/vRd,c [-], ``x``, ``y`` its centre [mm]
    """
    X = np.asarray(X, dtype=float)
    Y = np.asarray(Y, dtype=float)
    mask = np.asarray(mask, dtype=bool)
    n, m = X.shape
    b: Callable[[Real], Floats] = lambda v: np.broadcast_to(np.asarray(v, dtype=float), (n,))  # noqa: E731
    r = 0.5 * b(pile_dia)
    cx, cy = b(column_x), b(column_y)
    rnd = np.broadcast_to(np.asarray(column_round, dtype=bool), (n,))
    N, dd, vr = b(n_ed), b(d), b(vrdc)
    Xs, Ys = np.where(mask, X, 0.0), np.where(mask, Y, 0.0)
    per = pile_edge_perimeter(Xs, Ys, 2 * r, dd, cap_length, cap_width)
    rho = per["rho"]
    under = pile_under_column(Xs, Ys, 2 * r, cx, cy, rnd)
    cand = mask & (per["near"] > 0) & ~under & (per["u"] > 0)
    # the shares inside the circle, worked on the candidate piles only (flat arrays)
    ri, ci = np.nonzero(cand)
    px, py, rh = Xs[ri, ci], Ys[ri, ci], rho[ri, ci]
    # the column's share: whole or nothing where the circle clears it, the closed form elsewhere
    hx, hy = 0.5 * cx[ri], 0.5 * cy[ri]
    rc = rnd[ri]
    near_c = np.where(rc, np.maximum(np.hypot(px, py) - hx, 0.0),
                      np.hypot(np.maximum(np.abs(px) - hx, 0.0), np.maximum(np.abs(py) - hy, 0.0)))
    far_c = np.where(rc, np.hypot(px, py) + hx, np.hypot(np.abs(px) + hx, np.abs(py) + hy))
    f_col = np.where(far_c <= rh, 1.0, 0.0)
    part = (near_c < rh) & (far_c > rh)
    if part.any():
        k = np.flatnonzero(part)
        a_rect = disc_rectangle_area(-hx[k] - px[k], hx[k] - px[k], -hy[k] - py[k], hy[k] - py[k], rh[k])
        a_circ = disc_overlap_area(np.hypot(px[k], py[k]), rh[k], hx[k])
        area = np.where(rc[k], np.pi * hx[k] * hx[k], 4.0 * hx[k] * hy[k])
        f_col[k] = np.minimum(np.where(rc[k], a_circ, a_rect) / area, 1.0)
    dv_col = np.zeros((n, m))
    dv_col[ri, ci] = np.nan_to_num(N[ri]) * f_col
    # the cap's self-weight by the share of its plan inside
    hl = 0.5 * b(cap_length)[ri]
    hw = 0.5 * b(cap_width)[ri]
    a_cap = disc_rectangle_area(-hl - px, hl - px, -hw - py, hw - py, rh)
    dv_sw = np.zeros((n, m))
    dv_sw[ri, ci] = np.nan_to_num(b(self_weight)[ri]) * np.minimum(a_cap / (4.0 * hl * hw), 1.0)
    # the neighbours' reactions by the share of their heads inside (lens where they straddle)
    Rn = np.where(mask, np.nan_to_num(np.asarray(reactions, dtype=float)), 0.0)
    dv_p = np.zeros((n, m))
    if ri.size and m > 1:
        rr = r[ri][:, None]
        dist = np.hypot(Xs[ri] - px[:, None], Ys[ri] - py[:, None])       # (k, m)
        share = np.where(dist + rr <= rh[:, None], 1.0, 0.0)
        cut = (dist + rr > rh[:, None]) & (dist < rh[:, None] + rr)
        if cut.any():
            kk, jj = np.nonzero(cut)
            share[kk, jj] = np.minimum(disc_overlap_area(dist[kk, jj], rh[kk], r[ri][kk])
                                       / (np.pi * r[ri][kk] ** 2), 1.0)
        share = np.where(mask[ri], share, 0.0)
        share[np.arange(ri.size), ci] = 0.0
        dv_p[ri, ci] = np.sum(share * Rn[ri], axis=1)
    R_own = np.nan_to_num(np.asarray(reaction, dtype=float))
    force = R_own + dv_p - dv_col - dv_sw
    u = per["u"]
    with np.errstate(divide="ignore", invalid="ignore"):
        ved = np.where(force > 0, force / (u * dd[:, None]), 0.0)
        util = ved / vr[:, None]
    ok = cand & (u > 0)
    key = np.where(ok, np.nan_to_num(util, nan=-np.inf, posinf=1e300), -np.inf)
    g = np.argmax(key, axis=1) if m else np.zeros(n, dtype=int)
    rows = np.arange(n)
    has = ok.any(axis=1) & np.isfinite(dd) & np.isfinite(N) & np.isfinite(vr)
    pick: Callable[[Real], Floats] = lambda arr: np.where(has, np.asarray(arr)[rows, g], np.nan)  # noqa: E731
    return {"applies": ok.any(axis=1).astype(float), "ved": pick(ved), "ved_force": pick(force),
            "reaction": pick(R_own), "dv_col": pick(dv_col), "dv_sw": pick(dv_sw), "dv_piles": pick(dv_p), "u": pick(u),
            "u_circle": pick(per["u_circle"]), "rho": pick(rho), "near": pick(per["near"]),
            "legs": pick(per["legs"]), "util": pick(util), "x": pick(X), "y": pick(Y)}


def k_moment_column(c1: Real, c2: Real, column_round: Real) -> Floats:
    """EN 1992-1-1:2004 6.4.3(3), Table 6.1

    k of :func:`k_moment` for a rectangular column, 0.6 for a circular one (Eq. (6.42)) [M].

    Args:
        c1: column side parallel to the eccentricity [mm]
        c2: column side perpendicular to it [mm]
        column_round: circular column [-]

    Returns:
        k [-]
    """
    return np.where(column_round, 0.6, k_moment(c1, c2))


def load_eccentricity(m_ed: Real, v_ed: Real) -> Floats:
    """EN 1992-1-1:2004 6.4.3(3)

    Eccentricity of the column load, e = |MEd|/VEd (inf or NaN where VEd = 0).

    Args:
        m_ed: moment [N·mm]
        v_ed: column load [N]

    Returns:
        e [mm]
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.abs(m_ed) / v_ed
