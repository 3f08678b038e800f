"""Single-pile caps: the splitting (bursting) tie under the concentrated loads, and the links that carry it.

A single-pile cap passes the column load straight down into the pile: the compression spreads out
from the column and gathers again into the pile head, and the spread needs a transverse tie
(EN 1992-1-1:2004 6.5.3(3), Figure 6.25) [M]. Across one vertical plane through the column centre
(checked in each plan direction): a = the loaded width in that direction (the column side at the
top, the pile diameter at the bottom; a circle as its equivalent square), b = the width the load
can spread to (the cap's plan dimension in that direction), H = the cap depth.

* b ≤ H/2, partial discontinuity (Fig. 6.25 a): T = ¼ (b − a)/b F, Eq. (6.58);
* b > H/2, full discontinuity (Fig. 6.25 b): T = ¼ (1 − 0.7 a/h) F with h = H/2, Eq. (6.59);
  the figure draws it for a ≤ h, so capcheck takes a no wider than h there (a wider loaded width
  would lower T, and below a = h/0.7 make it negative) [M: h = H/2 and a ≤ h are recalled from the
  figure].

The splitting tension is carried by closed horizontal links: each closed link crosses the plane
with two legs. The links counted are those within the zone where the transverse tension acts,
from 0.2 l to l from each loaded face, l = min(b, H/2) the depth over which the load spreads
(from memory: the transverse tension under a concentrated load changes sign at about a fifth of
the spread depth from the loaded face and dies out at about the spread depth). For a full
discontinuity (l = H/2) the two loaded faces' zones meet: 0.1 H to 0.9 H, one tie. For a partial
one each end has a zone of 0.8 b and its own tie T.
"""

from __future__ import annotations

from typing import cast

import numpy as np

from checker.calcs._typing import Floats, Real


def splitting_tie_partial(force: Real, a: Real, b: Real) -> Floats:
    """EN 1992-1-1:2004 6.5.3(3), Eq. (6.58)

    Transverse tie of a partial discontinuity (b ≤ H/2, Figure 6.25 a), T = ¼ (b − a)/b F; zero
    where the load covers the whole width (a ≥ b) [M].

    Args:
        force: concentrated force F [N]
        a: loaded width in the plane considered [mm]
        b: width over which the force spreads [mm]

    Returns:
        T [N]
    """
    a = np.asarray(a, dtype=float)
    b = np.asarray(b, dtype=float)
    return cast(Floats, 0.25 * np.maximum(b - a, 0.0) / b * np.asarray(force, dtype=float))


def splitting_tie_full(force: Real, a: Real, h: Real) -> Floats:
    """EN 1992-1-1:2004 6.5.3(3), Eq. (6.59)

    Transverse tie of a full discontinuity (b > H/2, Figure 6.25 b), T = ¼ (1 − 0.7 a/h) F with
    h = H/2 [M]. The figure is drawn for a ≤ h; a wider loaded width is taken as h (T at least
    0.075 F), which never gives less tension than the formula within its range.

    Args:
        force: concentrated force F [N]
        a: loaded width in the plane considered [mm]
        h: half the depth of the member between the loaded faces, H/2 [mm]

    Returns:
        T [N]
    """
    a = np.minimum(np.asarray(a, dtype=float), np.asarray(h, dtype=float))
    return 0.25 * (1.0 - 0.7 * a / h) * np.asarray(force, dtype=float)


def full_discontinuity(b: Real, depth: Real) -> Floats:
    """EN 1992-1-1:2004 6.5.3(3), Figure 6.25

    Which of the two cases applies: full discontinuity where the width b exceeds half the depth H
    between the loaded faces (b > H/2, Eq. (6.59)), partial where b ≤ H/2 (Eq. (6.58)) [M].

    Args:
        b: width over which the force spreads (the cap's plan dimension) [mm]
        depth: depth H between the loaded faces (the cap depth) [mm]

    Returns:
        1.0 for a full discontinuity, 0.0 for a partial one, NaN where an input is NaN [-]
    """
    b = np.asarray(b, dtype=float)
    depth = np.asarray(depth, dtype=float)
    return np.where(np.isnan(b) | np.isnan(depth), np.nan, (b > 0.5 * depth).astype(float))


def splitting_tie(force: Real, a: Real, b: Real, depth: Real) -> Floats:
    """EN 1992-1-1:2004 6.5.3(3), Figure 6.25

    Transverse tie under a concentrated force on a member of width b and depth H: Eq. (6.58)
    where b ≤ H/2, Eq. (6.59) with h = H/2 where b > H/2 (:func:`full_discontinuity`) [M].

    Args:
        force: concentrated force F [N]
        a: loaded width in the plane considered [mm]
        b: width over which the force spreads (the cap's plan dimension) [mm]
        depth: depth H between the loaded faces (the cap depth) [mm]

    Returns:
        T [N]
    """
    depth = np.asarray(depth, dtype=float)
    full = full_discontinuity(b, depth)
    t_full = splitting_tie_full(force, a, 0.5 * depth)
    t_part = splitting_tie_partial(force, a, b)
    return np.where(np.isnan(full), np.nan, np.where(full == 1.0, t_full, t_part))


def splitting_zone_depth(b: Real, depth: Real) -> Floats:
    """Common practice: depth of the zone whose links carry the splitting tie (from memory)

    The transverse tension lies from about 0.2 l to l from each loaded face, l = min(b, H/2) the
    depth over which the load spreads (from memory; module docstring). A full discontinuity
    (b > H/2) has one zone from 0.1 H to 0.9 H (0.8 H deep); a partial one a zone 0.8 b deep at
    each loaded face.

    Args:
        b: width over which the force spreads (the cap's plan dimension) [mm]
        depth: cap depth H [mm]

    Returns:
        depth of the zone [mm]
    """
    b = np.asarray(b, dtype=float)
    depth = np.asarray(depth, dtype=float)
    full = full_discontinuity(b, depth)
    return np.where(full == 1.0, 0.8 * depth, np.where(full == 0.0, 0.8 * b, np.nan))


def link_sets_in_zone(zone: Real, count: Real, centres: Real) -> Floats:
    """Common practice: link sets counted within a zone (at stated centres, the fewest any placing gives)

    A count form (``4H16``: four sets) is taken as placed within the zone; a spacing form
    (``H12@150``) gives floor(zone/s) sets, the fewest that links at centres s can put in a zone
    of that depth whatever the level of the first one.

    Args:
        zone: depth of the zone [mm]
        count: number of sets stated (NaN for a spacing form) [count]
        centres: stated centres of the sets (NaN for a count form) [mm]

    Returns:
        sets counted [count] (NaN where neither is given)
    """
    zone = np.asarray(zone, dtype=float)
    count = np.asarray(count, dtype=float)
    centres = np.asarray(centres, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        spaced = np.floor(zone / centres + 1e-9)
    return np.where(np.isnan(count), spaced, count)


def link_area_across_plane(sets: Real, phi: Real, legs: Real = 2.0) -> Floats:
    """Derived: area of closed links crossing a vertical plane, legs × π φ²/4 × sets

    A closed horizontal link round the cap crosses a vertical plane through the column centre
    with two legs (two in each plan direction) [D].

    Args:
        sets: link sets counted (:func:`link_sets_in_zone`) [count]
        phi: link bar diameter [mm]
        legs: legs of one set crossing the plane, 2 for a closed link [count]

    Returns:
        As crossing the plane [mm²]
    """
    phi = np.asarray(phi, dtype=float)
    return legs * np.asarray(sets, dtype=float) * np.pi * phi * phi / 4.0


def governing_splitting_tie(t_column: Real, t_pile: Real) -> Floats:
    """EN 1992-1-1:2004 6.5.3(3), Figure 6.25

    The larger of the splitting ties at the column end and at the pile end; NaN where either is
    unknown.

    Args:
        t_column: tie under the column load [N]
        t_pile: tie over the pile head [N]

    Returns:
        governing tie [N]
    """
    tc = np.asarray(t_column, dtype=float)
    tp = np.asarray(t_pile, dtype=float)
    return cast(Floats, np.where(np.isnan(tc) | np.isnan(tp), np.nan, np.fmax(tc, tp)))
