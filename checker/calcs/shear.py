"""Beam shear across the cap: EN 1992-1-1:2004 6.2.2 with the UK pile-cap practice.

Resistance without shear reinforcement (6.2.2(1)) with σcp = 0; short-shear-span enhancement
(6.2.2(6)) in the UK form vRd,c·2d/av compared with the unreduced vEd; critical sections 0.2φ
inside the inner pile faces, enhancement over the full width where the piles are at ≤ 3φ, else
over 3φ strips (reference §9 and decision 7) [CP]. The EC2-literal av (clear distance from the
column face to the pile face) is the option ``av_mode="clear"``.

The UK NA allowance to limit the shear strength of classes above C50/60 to that of C50/60 is
not applied here.
"""

from __future__ import annotations

from typing import TypedDict, cast

import numpy as np
from numpy.typing import NDArray

from checker.calcs._typing import Floats, Real


class BeamShear(TypedDict):
    """The governing section of :func:`beam_shear`, (n,) each."""

    ved: Floats
    vrd: Floats
    util: Floats
    av: Floats
    av_geom: Floats
    beta: Floats
    b_enh: Floats
    ved_max: Floats


def k_size(d: Real) -> Floats:
    """EN 1992-1-1:2004 6.2.2(1), Eq. (6.2.a)

    Size factor k = 1 + √(200/d) ≤ 2.0 [V: S2].

    Args:
        d: effective depth [mm]

    Returns:
        k [-]
    """
    return np.minimum(1.0 + np.sqrt(200.0 / np.asarray(d, dtype=float)), 2.0)


def rho_l(as_l: Real, b: Real, d: Real) -> Floats:
    """EN 1992-1-1:2004 6.2.2(1), Eq. (6.2.a)

    Longitudinal reinforcement ratio ρl = Asl/(bw d) ≤ 0.02 [V: S2]. Asl should be the steel
    anchored ≥ lbd + d beyond the section; in pile caps that is normally met by bars bent up
    or carried past the piles [CP].

    Args:
        as_l: tension steel area Asl [mm²]
        b: width bw [mm]
        d: effective depth [mm]

    Returns:
        ρl [-]
    """
    return np.minimum(np.asarray(as_l, dtype=float) / (b * np.asarray(d, dtype=float)), 0.02)


def v_min(k: Real, fck: Real) -> Floats:
    """EN 1992-1-1:2004 6.2.2(1), Eq. (6.3N)

    Minimum shear strength vmin = 0.035 k^1.5 fck^0.5 (recommended value) [V: S1].

    Args:
        k: size factor [-]
        fck: characteristic cylinder strength [MPa]

    Returns:
        vmin [MPa]
    """
    k = np.asarray(k, dtype=float)
    return cast(Floats, 0.035 * k * np.sqrt(k) * np.sqrt(np.asarray(fck, dtype=float)))


def v_rdc_calc(fck: Real, d: Real, rho: Real, gamma_c: Real = 1.5, crd_c_factor: Real = 0.18) -> Floats:
    """EN 1992-1-1:2004 6.2.2(1), Eq. (6.2.a)

    The calculated part of the shear stress resistance, σcp = 0: CRd,c k (100 ρl fck)^(1/3) with
    CRd,c = 0.18/γc (recommended; the UK NA value is the same [M], and reproduces S13 Table 6)
    [V: S1].

    Args:
        fck: characteristic cylinder strength [MPa]
        d: effective depth [mm]
        rho: ρl ≤ 0.02 [-]
        gamma_c: partial factor for concrete, recommended 1.5 [-]
        crd_c_factor: the 0.18 in CRd,c = 0.18/γc (recommended) [-]

    Returns:
        CRd,c k (100 ρl fck)^(1/3) [MPa]
    """
    fck = np.asarray(fck, dtype=float)
    return crd_c_factor / gamma_c * k_size(d) * np.cbrt(100.0 * np.asarray(rho, dtype=float) * fck)


def v_rdc(fck: Real, d: Real, rho: Real, gamma_c: Real = 1.5, crd_c_factor: Real = 0.18) -> Floats:
    """EN 1992-1-1:2004 6.2.2(1), Eq. (6.2.b)

    Design shear stress resistance without shear reinforcement, σcp = 0:
    vRd,c = max(CRd,c k (100 ρl fck)^(1/3), vmin) (Eq. 6.2.a with the floor of Eq. 6.2.b)
    [V: S1].

    Args:
        fck, d, rho, gamma_c, crd_c_factor: as in :func:`v_rdc_calc`
            (fck [MPa]; d [mm]; rho, gamma_c, crd_c_factor [-])

    Returns:
        vRd,c [MPa]
    """
    calc = v_rdc_calc(fck, d, rho, gamma_c=gamma_c, crd_c_factor=crd_c_factor)
    return np.maximum(calc, v_min(k_size(d), fck))


def beta_av(av: Real, d: Real) -> Floats:
    """EN 1992-1-1:2004 6.2.2(6)

    Reduction of the contribution of a load near a support, β = av/(2d) with av taken as 0.5d
    where smaller, and β ≤ 1 (no enhancement beyond 2d) [M for the wording].

    Args:
        av: distance from the support face to the load [mm]
        d: effective depth [mm]

    Returns:
        β [-]
    """
    d = np.asarray(d, dtype=float)
    return cast(Floats, np.minimum(np.maximum(np.asarray(av, dtype=float), 0.5 * d) / (2.0 * d), 1.0))


def v_ed_max(b: Real, d: Real, nu: Real, fcd: Real) -> Floats:
    """EN 1992-1-1:2004 6.2.2(6), Eq. (6.5)

    Upper limit of the unreduced shear force, VEd ≤ 0.5 bw d ν fcd [V: S3].

    Args:
        b: width bw [mm]
        d: effective depth [mm]
        nu: ν = 0.6 (1 − fck/250) [-]
        fcd: design compressive strength (αcc = alpha_cc_shear) [MPa]

    Returns:
        VEd,max [N]
    """
    return 0.5 * np.asarray(b, dtype=float) * d * nu * fcd


def critical_section_offset(pile_dia: Real) -> Floats:
    """Common practice: beam-shear section 0.2φ inside the inner pile face (BS 8110 3.11.4.3)

    The section lies 0.3φ from the pile centre towards the column (reference §9, decision 7;
    [V: S15, S16, S21]) [CP].

    Args:
        pile_dia: pile diameter φ [mm]

    Returns:
        offset from the pile centre towards the column [mm]
    """
    return 0.3 * np.asarray(pile_dia, dtype=float)


def enhanced_resistance(vrdc: Real, beta: Real, b_enh: Real, width: Real, d: Real) -> Floats:
    """Common practice: VRd = [b_enh·vRd,c/β + (W − b_enh)·vRd,c]·d (reference §9)

    The UK form of 6.2.2(6): the enhanced stress vRd,c·2d/av = vRd,c/β over the enhanced width,
    the plain vRd,c elsewhere [CP; V: S16 (garbled), M for the exact form].

    Args:
        vrdc: vRd,c [MPa]
        beta: av/(2d), 0.25 ≤ β ≤ 1 [-]
        b_enh: width over which the enhancement applies [mm]
        width: full section width [mm]
        d: effective depth [mm]

    Returns:
        VRd [N]
    """
    return cast(Floats, (b_enh * vrdc / beta + (width - b_enh) * vrdc) * d)


def beam_shear(coord: Floats, across: Floats, reaction: Floats, mask: NDArray[np.bool_], column_size: Real,
               pile_dia: Real, d: Real, width: Real, vrdc: Real, av_mode: str = "inside-pile",
               tol: float = 1.0) -> BeamShear:
    """Common practice: beam shear on the critical sections of one direction (reference §9)

    For each pile i off the column centre the section parallel to the other axis lies at
    |c_i| − 0.3φ; it is considered where it lies outside the column face. VEd is the sum of
    the reactions of the piles on that side at or beyond pile i; av is the distance from the
    column face to the section (``av_mode="clear"``: to the pile's inner face), β = av/2d
    within 0.25..1 (:func:`beta_av`); the enhanced width is the whole width W where the piles on
    the section's line are at most 3φ apart (each has a neighbour on the line within 3φ), else
    the 3φ strips (clipped to W) of the piles on that line; a line holding a single pile has its
    strip. The decision is made on the spacing of the piles along the section, not on the least
    pile spacing of the group (reference decision 12: the corner rows of a 5-pile cap are s√2
    apart).
    The governing section has the largest VEd/VRd over both sides [CP].

    Args:
        coord: pile coordinates along the span (x for shear-x), from the column centre (n, m) [mm]
        across: pile coordinates across the section (y for shear-x) (n, m) [mm]
        reaction: pile reactions (n, m) [N]
        mask: real piles (n, m) [-]
        column_size: column dimension along the span (circle: D) (n,) [mm]
        pile_dia: pile diameter (n,) [mm]
        d: effective depth of the bars crossing the section (n,) [mm]
        width: section width (W for shear-x) (n,) [mm]
        vrdc: vRd,c of the section (n,) [MPa]
        av_mode: "inside-pile" (UK practice, default) or "clear" (EC2-literal) [-]
        tol: tolerance for "same side / same line" comparisons [mm]

    Returns:
        dict of (n,) arrays for the governing section: ``ved`` [N], ``vrd`` [N], ``util`` [-],
        ``av`` (taken as at least 0.5d) [mm], ``av_geom`` (the distance itself) [mm],
        ``beta`` [-], ``b_enh`` [mm]; ``ved_max`` the
        largest VEd over the sections [N]; NaN where no section lies outside the column face
    """
    n = coord.shape[0]

    def col(v: Real) -> Floats:  # a per-cap input as an (n, 1) column
        return np.broadcast_to(np.asarray(v, dtype=float), (n,))[:, None]

    phi, dd, W = col(pile_dia), col(d), col(width)
    face = 0.5 * col(column_size)
    a = np.abs(coord)
    sec = a - critical_section_offset(phi)
    valid = mask & (a > tol) & (sec > face)
    av = np.where(av_mode == "clear", a - 0.5 * phi - face, sec - face)
    beta = beta_av(av, dd)

    ved = _ved_beyond(coord, reaction, mask, a, tol)
    b_enh = enhanced_width(coord, across, mask, phi, W, tol)
    vrd = enhanced_resistance(col(vrdc), beta, b_enh, W, dd)
    util = ved / vrd

    key = np.where(valid, np.where(np.isnan(util), np.inf, util), -np.inf)
    g = np.argmax(key, axis=1)[:, None]
    has = valid.any(axis=1)

    def pick(arr: Floats) -> Floats:
        return np.where(has, np.take_along_axis(arr, g, axis=1)[:, 0], np.nan)

    ved_max = np.max(np.where(valid, ved, -np.inf), axis=1)
    return {"ved": pick(ved), "vrd": pick(vrd), "util": pick(util),
            "av": pick(np.maximum(av, 0.5 * dd)), "av_geom": pick(av),
            "beta": pick(beta), "b_enh": pick(b_enh),
            "ved_max": np.where(has, ved_max, np.nan)}


def _ved_beyond(coord: Floats, reaction: Floats, mask: NDArray[np.bool_], a: Floats, tol: float) -> Floats:
    """VEd at each pile's section: the reactions of the piles on its side at or beyond it [N]."""
    side = np.sign(np.where(mask, coord, 0.0))
    c0 = np.where(mask, coord, 0.0)
    R = np.where(mask, reaction, 0.0)
    a_lo = a - tol
    ved = np.zeros_like(a)
    near = np.empty_like(a, dtype=bool)
    buf = np.empty_like(a)
    for j in range(coord.shape[1]):  # over pile slots (at most a few), never over caps
        # pile j lies on pile i's side at or beyond it: side_i · c_j ≥ |c_i| − tol
        np.multiply(side, c0[:, j:j + 1], out=buf)
        np.greater_equal(buf, a_lo, out=near)
        np.multiply(near, R[:, j:j + 1], out=buf)
        ved += buf
    return ved


def enhanced_width(coord: Floats, across: Floats, mask: NDArray[np.bool_], pile_dia: Real, width: Real,
                   tol: float = 1.0) -> Floats:
    """Common practice: width of a beam-shear section with enhancement near the piles (reference §9)

    The whole width where the piles on the section's line are at most 3φ apart (each has a
    neighbour on the line within 3φ), else the 3φ strips (clipped to W) of the piles on that line;
    a line holding a single pile has its strip (reference decision 12) [CP].

    Args:
        coord: pile coordinates along the span (n, m) [mm]
        across: pile coordinates across the section (n, m) [mm]
        mask: real piles (n, m) [-]
        pile_dia: pile diameter, (n, 1) or broadcastable [mm]
        width: section width, (n, 1) or broadcastable [mm]
        tol: tolerance for "same line" comparisons [mm]

    Returns:
        enhanced width at each pile's section (n, m) [mm]
    """
    phi, W = pile_dia, width
    a = np.abs(coord)
    hW = 0.5 * W
    strip = np.where(mask, np.clip(across + 1.5 * phi, -hW, hW) - np.clip(across - 1.5 * phi, -hW, hW),
                     0.0)
    strips = np.zeros_like(a)
    nearest = np.full(a.shape, np.inf)  # nearest other pile on the same line [mm]
    cm = np.where(mask, coord, np.nan)
    am = np.where(mask, across, np.nan)
    for j in range(coord.shape[1]):  # over pile slots
        on_line = np.abs(cm[:, j:j + 1] - cm) <= tol  # pile j on pile i's line (NaN: False)
        strips += strip[:, j:j + 1] * on_line
        dist = np.abs(am[:, j:j + 1] - am)
        np.minimum(nearest, np.where(on_line & (dist > tol), dist, np.inf), out=nearest)
    close = nearest <= 3.0 * phi * (1 + 1e-9)
    line_close = np.ones_like(close)
    for j in range(coord.shape[1]):  # every pile of the line has a neighbour within 3φ
        on_line = np.abs(cm[:, j:j + 1] - cm) <= tol
        line_close &= ~on_line | close[:, j:j + 1]
    return np.where(line_close, np.broadcast_to(W, a.shape), np.minimum(strips, W))
