"""Reinforcement quantities and detailing limits: EN 1992-1-1:2004 4.4.1, 8.2, 9.2.1.1, and the
bending-theory alternative of reference §8 (for the working only).
"""

from __future__ import annotations

import re
from typing import cast

import numpy as np

from checker.calcs._typing import Floats, Real

# EN 1992-1-1:2004 Table 4.4N, cmin,dur for reinforcing steel, structural class S4 (recommended
# values), from memory [M]. The UK NA refers to BS 8500-1 instead; these are the EN values.
CMIN_DUR_S4 = {
    "X0": 10.0,
    "XC1": 15.0, "XC2": 25.0, "XC3": 25.0, "XC4": 30.0,
    "XD1": 35.0, "XS1": 35.0,
    "XD2": 40.0, "XS2": 40.0,
    "XD3": 45.0, "XS3": 45.0,
}
_EXPOSURE_RE = re.compile(r"X0|X[CDS]\d")


def bar_area(n: Real, phi: Real) -> Floats:
    """Derived: area of n bars of diameter φ, n·πφ²/4

    Args:
        n: number of bars [count]
        phi: bar diameter [mm]

    Returns:
        area [mm²]
    """
    phi = np.asarray(phi, dtype=float)
    return np.asarray(n, dtype=float) * np.pi * phi * phi / 4.0


def layer_centres(width: Real, cover: Real, phi: Real, n: Real) -> Floats:
    """Derived: centres of n bars spread across a width, (width − 2·cover − φ)/(n − 1)

    Args:
        width: dimension across the bars [mm]
        cover: side cover to the outer bars [mm]
        phi: bar diameter [mm]
        n: number of bars, NaN or < 2 gives NaN [count]

    Returns:
        bar centres [mm]
    """
    n = np.asarray(n, dtype=float)
    gaps = np.where(n >= 2.0, n - 1.0, np.nan)
    return (np.asarray(width, dtype=float) - 2.0 * cover - phi) / gaps


def bar_count_from_centres(width: Real, cover: Real, phi: Real, centres: Real) -> Floats:
    """Derived: bars of a layer given at stated centres, floor((width − 2·cover − φ)/s) + 1

    Args:
        width: dimension across the bars [mm]
        cover: side cover [mm]
        phi: bar diameter [mm]
        centres: stated centres s [mm]

    Returns:
        number of bars [count]
    """
    return np.floor((np.asarray(width, dtype=float) - 2.0 * cover - phi) / centres + 1e-9) + 1.0


def clear_spacing(centres: Real, phi: Real) -> Floats:
    """Derived: clear distance between adjacent parallel bars, centres − φ

    Args:
        centres: bar centres [mm]
        phi: bar diameter [mm]

    Returns:
        clear spacing [mm]
    """
    return np.asarray(centres, dtype=float) - phi


def min_clear_spacing(phi: Real, dg: Real = 20.0, k1: Real = 1.0, k2: Real = 5.0) -> Floats:
    """EN 1992-1-1:2004 8.2(2)

    Minimum clear spacing of bars max(k1 φ, dg + k2, 20 mm); recommended k1 = 1, k2 = 5 mm
    [V: S14].

    Args:
        phi: bar diameter [mm]
        dg: maximum aggregate size [mm]
        k1: recommended 1 [-]
        k2: recommended 5 [mm]

    Returns:
        minimum clear spacing [mm]
    """
    return np.maximum(np.maximum(k1 * np.asarray(phi, dtype=float), dg + k2), 20.0)


def as_min(fctm: Real, fyk: Real, bt: Real, d: Real) -> Floats:
    """EN 1992-1-1:2004 9.2.1.1(1), Eq. (9.1N)

    Minimum tension reinforcement As,min = max(0.26 fctm/fyk, 0.0013) bt d [V: S5, S14].

    Args:
        fctm: mean tensile strength [MPa]
        fyk: characteristic yield strength [MPa]
        bt: mean width of the tension zone [mm]
        d: effective depth [mm]

    Returns:
        As,min [mm²]
    """
    ratio = np.maximum(0.26 * np.asarray(fctm, dtype=float) / fyk, 0.0013)
    return cast(Floats, ratio * bt * np.asarray(d, dtype=float))


def as_max(ac: Real) -> Floats:
    """EN 1992-1-1:2004 9.2.1.1(3)

    Maximum tension reinforcement outside laps As,max = 0.04 Ac (recommended) [V: S14; M EN].

    Args:
        ac: concrete cross-section area [mm²]

    Returns:
        As,max [mm²]
    """
    return 0.04 * np.asarray(ac, dtype=float)


def cmin_dur(exposure: Real) -> Floats:
    """EN 1992-1-1:2004 4.4.1.2(5), Table 4.4N

    Minimum cover for durability cmin,dur, reinforcing steel, structural class S4 [M]: X0 10,
    XC1 15, XC2/XC3 25, XC4 30, XD1/XS1 35, XD2/XS2 40, XD3/XS3 45 mm (from memory). Where the
    text names several classes the largest value is taken; unknown or blank gives NaN. The UK
    NA takes cmin,dur from BS 8500-1 instead.

    Args:
        exposure: exposure class text per cap, e.g. "XC2" or "XC2, XS1" [-]

    Returns:
        cmin,dur [mm]
    """
    text = np.char.upper(np.asarray(exposure, dtype=str))  # None / NaN become harmless text
    uniq, inv = np.unique(text.ravel(), return_inverse=True)
    vals = np.array([max([CMIN_DUR_S4.get(c, np.nan) for c in _EXPOSURE_RE.findall(u)] or [np.nan])
                     for u in uniq], dtype=float)  # over the distinct class texts only
    return vals[inv].reshape(text.shape)


def distribution_steel(as_main: Real, proportion: Real = 0.2) -> Floats:
    """EN 1992-1-1:2004 9.3.1.1(2)

    Secondary (distribution) reinforcement of a one-way slab, at least 20 % of the principal
    reinforcement (from memory) [M]; capcheck applies it to the bars across a two-pile cap,
    which carry no tie, as an accepted alternative to 9.2.1.1(1) over the cap length.

    Args:
        as_main: principal (main tie) steel provided [mm²]
        proportion: 0.2 [-]

    Returns:
        As,min of the distribution steel [mm²]
    """
    return proportion * np.asarray(as_main, dtype=float)


def cmin_bond(phi_lowest: Real, phi_second: Real = 0.0) -> Floats:
    """EN 1992-1-1:2004 4.4.1.2(3), Table 4.2

    Minimum cover for bond cmin,b = the bar diameter (separated bars), for the bars nearest the
    face: the lowest layer (φx, the cover is measured to it). The second layer sits at c + φx
    from the soffit, so its own cmin,b = φy asks c ≥ φy − φx; the larger governs [M].

    Args:
        phi_lowest: diameter of the lowest layer (the x bars) [mm]
        phi_second: diameter of the second layer (the y bars), 0 if none [mm]

    Returns:
        cmin,b to be met by the stated cover [mm]
    """
    lo = np.asarray(phi_lowest, dtype=float)
    return cast(Floats, np.fmax(lo, np.asarray(phi_second, dtype=float) - lo))


def nominal_cover_required(cmin_dur: Real, cmin_b: Real, delta_c_dev: Real = 10.0, k1: Real = 40.0) -> Floats:
    """EN 1992-1-1:2004 4.4.1.1(2), Eq. (4.1)

    Cover required (with 4.4.1.2(2), Eq. (4.2), and 4.4.1.3(4)): cnom = cmin + Δcdev, cmin = max(cmin,b, cmin,dur, 10
    mm) (Eq. 4.2), and
    for concrete cast on prepared ground including blinding the minimum k1 (40 mm, UK NA and
    recommended, from memory), to which Δcdev is added as to every minimum (4.4.1.3(4);
    reference O9: 40 + 10 = 50 mm) [M]. A missing cmin,dur (no exposure class) drops that term.

    Args:
        cmin_dur: durability minimum, NaN if not known [mm]
        cmin_b: minimum cover for bond (:func:`cmin_bond`) [mm]
        delta_c_dev: allowance for deviation, recommended 10 [mm]
        k1: minimum cover on blinding [mm]

    Returns:
        cnom required [mm]
    """
    cmin = np.fmax(np.maximum(np.asarray(cmin_b, dtype=float), 10.0), cmin_dur)
    return cast(Floats, np.maximum(cmin, k1) + delta_c_dev)


def moment_at_column_face(coord: Real, reaction: Real, mask: Real, column_size: Real, inset: Real = 0.0) -> Floats:
    """Common practice: bending moment at the column face, Σ R_i (|c_i| − c/2) on the worse side

    Bending-theory alternative (reference §8; 9.8.1(2) [M]) [CP]: the cap as a wide beam
    cantilevering from the section, loaded by the reactions of the piles beyond it. The section
    is at the column face, or ``inset`` × the column width inside it (0.15, the section of
    EN 1992-1-1:2004 9.8.2.2(3) Fig. 9.13 for pad footings, is the usual alternative; from
    memory). The cap's own weight on the cantilever is not deducted (conservative).

    Args:
        coord: pile coordinates along the span (n, m) [mm]
        reaction: pile reactions (n, m) [N]
        mask: real piles (n, m) [-]
        column_size: column dimension along the span (n,) [mm]
        inset: section inside the column face as a fraction of the column width [-]

    Returns:
        M at the section [N·mm]
    """
    edge = (0.5 - float(inset)) * np.asarray(column_size, dtype=float)[:, None]
    lever = np.maximum(np.abs(coord) - edge, 0.0)
    m = np.where(mask, reaction * lever, 0.0)
    pos = np.sum(np.where(coord > 0, m, 0.0), axis=1)
    neg = np.sum(np.where(coord < 0, m, 0.0), axis=1)
    return cast(Floats, np.maximum(pos, neg))


def lever_arm(moment: Real, b: Real, d: Real, fcd: Real, fck: Real) -> Floats:
    """EN 1992-1-1:2004 3.1.7(3)

    Lever arm of a singly reinforced rectangular section with the rectangular stress block
    (λ = 0.8, η = 1.0 for fck ≤ 50 MPa; λ = 0.8 − (fck − 50)/400, η = 1.0 − (fck − 50)/200
    above, Eq. (3.19)–(3.22)): with s = λx, M = η fcd b s (d − s/2), so
    z = d [0.5 + √(0.25 − M/(2 η fcd b d²))] ≤ 0.95 d (the 0.95 d cap is common practice) [D].
    With αcc = 0.85 and γc = 1.5 this is the familiar z = d[0.5 + √(0.25 − K/1.134)],
    K = M/(b d² fck). NaN where the section cannot carry M without compression steel.

    Args:
        moment: design moment M [N·mm]
        b: width [mm]
        d: effective depth [mm]
        fcd: design compressive strength (αcc fck/γc) [MPa]
        fck: characteristic cylinder strength [MPa]

    Returns:
        z [mm]
    """
    d = np.asarray(d, dtype=float)
    fck = np.asarray(fck, dtype=float)
    eta = np.where(fck <= 50.0, 1.0, 1.0 - (fck - 50.0) / 200.0)
    disc = 0.25 - np.asarray(moment, dtype=float) / (2.0 * eta * np.asarray(fcd, dtype=float) * b * d * d)
    return np.minimum(d * (0.5 + np.sqrt(np.where(disc >= 0, disc, np.nan))), 0.95 * d)


def bending_steel(moment: Real, b: Real, d: Real, fcd: Real, fck: Real, fyd: Real) -> Floats:
    """Common practice: bending steel of the cap as a wide beam, As = M/(fyd z) (reference §8)

    z from :func:`lever_arm` (EN 1992-1-1:2004 3.1.7(3), z ≤ 0.95 d) [CP]; NaN where compression
    steel would be needed.

    Args:
        moment: design moment [N·mm]
        b: width [mm]
        d: effective depth [mm]
        fcd: design compressive strength [MPa]
        fck: characteristic cylinder strength [MPa]
        fyd: design yield strength [MPa]

    Returns:
        As [mm²]
    """
    return moment / (fyd * lever_arm(moment, b, d, fcd, fck))
