"""Anchorage of the bottom ties: EN 1992-1-1:2004 8.4 with the pile-cap practice of reference §11.

The anchorage starts at the inner face of the pile node (6.5.4(7)) [M]; the length available
runs from there to the bar end at the cap face, plus the vertical leg where the bars are bent up.
α3, α4, α5 are taken as 1.0 (no transverse steel credited, no transverse pressure credited).
"""

from __future__ import annotations

from typing import cast

import numpy as np

from checker.calcs._typing import Floats, Real


def eta2(phi: Real) -> Floats:
    """EN 1992-1-1:2004 8.4.2(2)

    Bar-size coefficient η2 = 1.0 for φ ≤ 32, (132 − φ)/100 above [V: S8].

    Args:
        phi: bar diameter [mm]

    Returns:
        η2 [-]
    """
    phi = np.asarray(phi, dtype=float)
    return np.where(phi <= 32.0, 1.0, (132.0 - phi) / 100.0)


def bond_strength(fctd: Real, phi: Real, eta1: Real = 1.0) -> Floats:
    """EN 1992-1-1:2004 8.4.2(2), Eq. (8.2)

    Ultimate bond stress fbd = 2.25 η1 η2 fctd [V: S8]. η1 = 1.0 for good bond (bottom bars of a
    cap), 0.7 otherwise.

    Args:
        fctd: design tensile strength [MPa]
        phi: bar diameter [mm]
        eta1: bond-condition coefficient [-]

    Returns:
        fbd [MPa]
    """
    return cast(Floats, 2.25 * eta1 * eta2(phi) * np.asarray(fctd, dtype=float))


def fck_for_bond(fck: Real, fck_max: Real = 60.0) -> Floats:
    """EN 1992-1-1:2004 8.4.2(2)

    Cylinder strength at which fctd is taken in the bond strength: fctk,0.05 is limited to the
    value of C60/75 because of the greater brittleness of higher-strength concrete, unless a
    higher average bond strength is verified [M], i.e. fctd at min(fck, 60).

    Args:
        fck: characteristic cylinder strength [MPa]
        fck_max: class whose tensile strength bounds the bond strength, 60 (C60/75) [MPa]

    Returns:
        fck for fctd in Eq. (8.2) [MPa]
    """
    return cast(Floats, np.minimum(np.asarray(fck, dtype=float), fck_max))


def bar_stress(tie_force: Real, as_prov: Real, fyd: Real) -> Floats:
    """EN 1992-1-1:2004 8.4.3(2)

    Design stress of the bar where the anchorage starts, σsd = T/As,prov ≤ fyd [V: S7; CP for
    the tie force].

    Args:
        tie_force: tie force T [N]
        as_prov: steel provided for the tie [mm²]
        fyd: design yield strength [MPa]

    Returns:
        σsd [MPa]
    """
    return np.minimum(np.asarray(tie_force, dtype=float) / as_prov, fyd)


def basic_anchorage_length(phi: Real, sigma_sd: Real, fbd: Real) -> Floats:
    """EN 1992-1-1:2004 8.4.3(2), Eq. (8.3)

    Basic required anchorage length lb,rqd = (φ/4)(σsd/fbd) [V: S7].

    Args:
        phi: bar diameter [mm]
        sigma_sd: bar stress at the start of the anchorage [MPa]
        fbd: bond strength [MPa]

    Returns:
        lb,rqd [mm]
    """
    return 0.25 * np.asarray(phi, dtype=float) * sigma_sd / fbd


def cd_straight(cover: Real, clear_spacing: Real) -> Floats:
    """EN 1992-1-1:2004 8.4.4(1), Table 8.2

    Cover dimension cd = min(a/2, c) for the bottom bars, a = clear spacing, c = cover (the
    side cover c1 is taken equal to the cover) [M].

    Args:
        cover: cover [mm]
        clear_spacing: clear spacing of the bars [mm]

    Returns:
        cd [mm]
    """
    return cast(Floats, np.minimum(np.asarray(cover, dtype=float), 0.5 * np.asarray(clear_spacing, dtype=float)))


def alpha1(cd: Real, phi: Real, bent: Real) -> Floats:
    """EN 1992-1-1:2004 8.4.4(1), Table 8.2

    Shape coefficient α1 = 0.7 for bent or hooked bars in tension where cd > 3φ, else 1.0 [M].

    Args:
        cd: cover dimension [mm]
        phi: bar diameter [mm]
        bent: True for bent/hooked bar ends [-]

    Returns:
        α1 [-]
    """
    ok = np.asarray(bent, dtype=bool) & (np.asarray(cd, dtype=float) > 3.0 * np.asarray(phi, dtype=float))
    return np.where(ok, 0.7, 1.0)


def alpha2(cd: Real, phi: Real, bent: bool | Real = False) -> Floats:
    """EN 1992-1-1:2004 8.4.4(1), Table 8.2

    Cover coefficient α2 = 1 − 0.15(cd − φ)/φ for straight bars, 1 − 0.15(cd − 3φ)/φ for
    bent or hooked bars, within 0.7..1.0 [V: S8 for the straight form; M for the bent form].

    Args:
        cd: cover dimension [mm]
        phi: bar diameter [mm]
        bent: True for bent/hooked bar ends [-]

    Returns:
        α2 [-]
    """
    phi = np.asarray(phi, dtype=float)
    k = np.where(np.asarray(bent, dtype=bool), 3.0, 1.0)
    return cast(Floats, np.clip(1.0 - 0.15 * (np.asarray(cd, dtype=float) - k * phi) / phi, 0.7, 1.0))


def min_anchorage_length(lb_rqd: Real, phi: Real) -> Floats:
    """EN 1992-1-1:2004 8.4.4(1), Eq. (8.6)

    Minimum anchorage length in tension lb,min = max(0.3 lb,rqd, 10φ, 100 mm) [V: S7].

    Args:
        lb_rqd: basic required anchorage length [mm]
        phi: bar diameter [mm]

    Returns:
        lb,min [mm]
    """
    return np.maximum(np.maximum(0.3 * np.asarray(lb_rqd, dtype=float), 10.0 * np.asarray(phi, dtype=float)), 100.0)


def design_anchorage_length(lb_rqd: Real, phi: Real, a1: Real = 1.0, a2: Real = 1.0) -> Floats:
    """EN 1992-1-1:2004 8.4.4(1), Eq. (8.4)

    Design anchorage length lbd = α1 α2 α3 α4 α5 lb,rqd ≥ lb,min with α3 = α4 = α5 = 1.0
    [V: S7].

    Args:
        lb_rqd: basic required anchorage length [mm]
        phi: bar diameter [mm]
        a1: α1 [-]
        a2: α2 [-]

    Returns:
        lbd [mm]
    """
    return np.maximum(a1 * a2 * np.asarray(lb_rqd, dtype=float), min_anchorage_length(lb_rqd, phi))


def available_length(half_cap: Real, cover: Real, outer_coord: Real, pile_dia: Real, h: Real = 0.0, phi: Real = 0.0,
                     bent: bool | Real = False) -> Floats:
    """Common practice: bar length from the inner face of the outermost pile to the bar end

    Straight: (L/2 − cover) − (|x|max − φp/2), the anchorage measured from the inner face of
    the pile node (6.5.4(7)) [M; reference O8]; where the bar ends are bent up a vertical leg
    h − 2·cover − φ is added [CP].

    Args:
        half_cap: half the cap dimension along the bars (L/2 for x bars) [mm]
        cover: end cover [mm]
        outer_coord: largest |coordinate| of a pile along the bars [mm]
        pile_dia: pile diameter φp [mm]
        h: overall cap depth (for the leg) [mm]
        phi: bar diameter (for the leg) [mm]
        bent: True where the bar ends are bent up [-]

    Returns:
        length available [mm]
    """
    straight = (np.asarray(half_cap, dtype=float) - cover) - (
        np.asarray(outer_coord, dtype=float) - 0.5 * np.asarray(pile_dia, dtype=float))
    leg = np.asarray(h, dtype=float) - 2.0 * np.asarray(cover, dtype=float) - phi
    return straight + np.where(np.asarray(bent, dtype=bool), leg, 0.0)
