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


def perimeter_applies(face_dist, mask, pile_dia, d_mean):
    """Common practice: the 2d perimeter is checked only where a pile reaches beyond it

    Where every pile lies within 2d of the column face, the column-face check and the beam
    shear check are enough (reference §10 [CP; V: S15, S16]). A pile reaches beyond 2d when its
    far face, at (distance from the column face to its centre) + φ/2, exceeds 2d.

    Args:
        face_dist: column face to pile centre distances (n, m) [mm]
        mask: real piles (n, m) [-]
        pile_dia: pile diameter (n,) [mm]
        d_mean: mean effective depth (n,) [mm]

    Returns:
        1.0 where the perimeter check applies, else 0.0 (n,) [-]
    """
    reach = face_dist + 0.5 * np.asarray(pile_dia, dtype=float)[:, None]
    beyond = mask & (reach > 2.0 * np.asarray(d_mean, dtype=float)[:, None])
    return beyond.any(axis=1).astype(float)


def reduced_punching_force(v_ed, reaction, face_dist, mask, a):
    """EN 1992-1-1:2004 6.4.4(2), Eq. (6.48)

    Net punching force VEd,red = VEd − ΔVEd, ΔVEd = the pile reactions whose centres lie within
    the perimeter at distance a from the column face [M; V: S6].

    Args:
        v_ed: column load [N]
        reaction: pile reactions from the column load (n, m) [N]
        face_dist: column face to pile centre distances (n, m) [mm]
        mask: real piles (n, m) [-]
        a: distance of the perimeter from the column face (n,) [mm]

    Returns:
        VEd,red [N]
    """
    inside = mask & (face_dist <= np.asarray(a, dtype=float)[:, None])
    return np.asarray(v_ed, dtype=float) - np.sum(np.where(inside, reaction, 0.0), axis=1)


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
