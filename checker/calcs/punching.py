"""Punching at the column: EN 1992-1-1:2004 6.4.5(3) at the column face and 6.4.4(2) on the basic
control perimeter for a column base, with the pile-cap practice of reference §10.
"""

from __future__ import annotations

import numpy as np


def column_perimeter(column_x, column_y, column_round=False):
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


def shear_stress_column_face(v_ed, u0, d_mean, beta=1.0):
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


def v_rd_max(nu, fcd, coeff=0.5):
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


def basic_control_perimeter(column_x, column_y, d, column_round=False):
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


def pile_under_column(X, Y, pile_dia, column_x, column_y, column_round=False):
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


def perimeter_applies(X, Y, mask, pile_dia, column_x, column_y, column_round=False):
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


def signed_distance_to_column(x, y, column_x, column_y, column_round=False):
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
    return out


def control_perimeter_length(a, column_x, column_y, column_round, cap_length, cap_width):
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
    a = np.asarray(a, dtype=float)
    cx = np.asarray(column_x, dtype=float)
    cy = np.asarray(column_y, dtype=float)
    rnd = np.asarray(column_round, dtype=bool)
    hl = 0.5 * np.asarray(cap_length, dtype=float)
    hw = 0.5 * np.asarray(cap_width, dtype=float)
    # arc centre: the column corner (rectangle) or the column centre (circle)
    ex = np.where(rnd, hl, hl - 0.5 * cx)
    ey = np.where(rnd, hw, hw - 0.5 * cy)
    rho = np.where(rnd, 0.5 * cx + a, a)
    safe = np.where(rho > 0, rho, 1.0)
    with np.errstate(invalid="ignore"):
        ang = (np.arcsin(np.clip(ey / safe, -1.0, 1.0))
               - np.arccos(np.clip(ex / safe, -1.0, 1.0)))
    arcs = 4.0 * rho * np.maximum(ang, 0.0)
    sides = np.where(rnd, 0.0, 2.0 * cx * (a <= ey) + 2.0 * cy * (a <= ex))
    return sides + arcs


def unit_disc_points(n_points=192):
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


def area_fraction_inside(sd, width, a0, step, n_steps):
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


def governing_perimeter(v_ed, reaction, X, Y, mask, pile_dia, column_x, column_y, column_round,
                        cap_length, cap_width, d, vrdc, n_coarse=64, n_fine=16, n_points=192,
                        chunk_points=2 ** 21):
    """EN 1992-1-1:2004 6.4.4(2)

    Every control perimeter within 2d of the column face, the lowest resistance governing:
    for each trial a, VEd,red = VEd − Σ R_i f_i(a) (Eq. (6.48); f_i the share of pile i's head
    area inside the perimeter, common practice for pile caps), vEd = VEd,red/(u(a) d) (Eq.
    (6.49), β = 1.0) against vRd = vRd,c·2d/a (Eq. (6.50), vRd,c ≥ vmin), u(a) truncated by the
    cap edges (:func:`control_perimeter_length`). The governing a has the highest vEd/vRd.

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
        n_coarse: coarse steps over (0, 2d] [count]
        n_fine: fine steps over the two coarse steps round the worst [count]
        n_points: quadrature points per pile head [count]
        chunk_points: points worked at once [count]

    Returns:
        dict of (n,) arrays: ``a`` governing distance from the column face [mm], ``u`` its
        perimeter [mm], ``ved_red`` VEd,red [N], ``ved`` vEd [MPa], ``vrd`` vRd [MPa],
        ``util`` vEd/vRd [-], ``dv0`` the reactions deducted inside the column perimeter
        (a = 0, for 6.4.5(3)) [N]; NaN where the inputs are missing
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

    out = {k: np.full(n, np.nan) for k in ("a", "u", "ved_red", "ved", "vrd", "util", "dv0")}
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

        def fractions(fu, nodes):
            f = np.repeat(base[:, :, None], nodes, axis=2)
            if len(rows):
                f[rows, cols] = fu[inv]
            return f

        def trial(a, f):
            dd = d[sl][:, None]
            u = control_perimeter_length(a, cx[sl][:, None], cy[sl][:, None], rnd[sl][:, None],
                                         L[sl][:, None], W[sl][:, None])
            red = reduced_punching_force(v[sl], Rc, f)
            with np.errstate(divide="ignore", invalid="ignore"):
                ved = red / (u * dd)
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
        for key, arr in (("a", a_f), ("u", u), ("ved_red", red), ("ved", ved), ("vrd", vrd),
                         ("util", util)):
            out[key][sl] = np.where(ok, arr[pick], np.nan)
        out["dv0"][sl] = np.where(valid[sl], v[sl] - red_c[:, 0], np.nan)
    return out


def reduced_punching_force(v_ed, reaction, fraction):
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
        return v[:, None] - np.einsum("cm,cmk->ck", R, f)
    return v - np.sum(R * f, axis=-1)


def shear_stress_perimeter(v_ed_red, u, d):
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


def v_rd_column_base(vrdc, d, a):
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
    return np.asarray(vrdc, dtype=float) * 2.0 * np.asarray(d, dtype=float) / a


def rho_two_way(rho_x, rho_y):
    """EN 1992-1-1:2004 6.4.4(1), Eq. (6.47)

    Two-way reinforcement ratio ρl = √(ρlx ρly) ≤ 0.02 [M].

    Args:
        rho_x, rho_y: ratios of the two layers [-]

    Returns:
        ρl [-]
    """
    return np.minimum(np.sqrt(np.asarray(rho_x, dtype=float) * rho_y), 0.02)
