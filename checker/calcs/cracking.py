"""Crack control of the bottom steel: EN 1992-1-1:2004 7.3 (7.3.1 wmax, 7.3.2(3) hc,ef, 7.3.3
control without direct calculation, 7.3.4 calculation of crack widths).

Tables 7.1N, 7.2N and 7.3N are from memory [M] (engineering reference §12); the UK NA values
(Table NA.4: wmax 0.3 mm for X0/XC1 too; k3 = 3.4, k4 = 0.425) likewise. structuralcodes 0.7.2
(``ec2_2004._section_7_3_crack_control``) holds the same tables and equations and is the oracle of
the tests.

The tables are read for reinforced concrete with the steel stress under the quasi-permanent
combination: linear interpolation in the steel stress (rows 160 ... 450 MPa) and in wk between the
columns 0.2, 0.3 and 0.4 mm. A stress below the first row is read at the first row (160 MPa); a
stress beyond the last row of a column has no value (the table is not met).
"""

from __future__ import annotations

import re
from typing import cast

import numpy as np
from numpy.typing import ArrayLike, NDArray

from checker.calcs._typing import Floats, Real

#: rows of Tables 7.2N and 7.3N, steel stress [MPa]
TABLE_STRESS = np.array([160.0, 200.0, 240.0, 280.0, 320.0, 360.0, 400.0, 450.0])
#: columns of Tables 7.2N and 7.3N, wk [mm]
TABLE_WK = np.array([0.2, 0.3, 0.4])
#: Table 7.2N, maximum bar diameter phi*_s [mm]; columns wk = 0.2, 0.3, 0.4 (from memory [M])
TABLE_7_2N = np.array([
    [25.0, 32.0, 40.0],
    [16.0, 25.0, 32.0],
    [12.0, 16.0, 20.0],
    [8.0, 12.0, 16.0],
    [6.0, 10.0, 12.0],
    [5.0, 8.0, 10.0],
    [4.0, 6.0, 8.0],
    [np.nan, 5.0, 6.0],
])
#: Table 7.3N, maximum bar spacing [mm]; columns wk = 0.2, 0.3, 0.4 (from memory [M]); no entry above 360 MPa
TABLE_7_3N = np.array([
    [200.0, 300.0, 300.0],
    [150.0, 250.0, 300.0],
    [100.0, 200.0, 250.0],
    [50.0, 150.0, 200.0],
    [np.nan, 100.0, 150.0],
    [np.nan, 50.0, 100.0],
    [np.nan, np.nan, np.nan],
    [np.nan, np.nan, np.nan],
])
_EXPOSURE_RE = re.compile(r"X0|X[CDSFA]\d")


def _column(table: np.ndarray, wmax: Real) -> np.ndarray:
    """The table's column for each wmax, interpolated linearly between the printed columns:
    shape (n, 8). A wmax outside 0.2 ... 0.4 is read at the nearest column."""
    w = np.clip(np.atleast_1d(np.asarray(wmax, dtype=float)), TABLE_WK[0], TABLE_WK[-1])
    j = np.clip(np.searchsorted(TABLE_WK, w, side="right") - 1, 0, TABLE_WK.size - 2)
    t = (w - TABLE_WK[j]) / (TABLE_WK[j + 1] - TABLE_WK[j])
    col = table[:, j].T * (1.0 - t)[:, None] + table[:, j + 1].T * t[:, None]
    # a printed column (t = 0 or 1) keeps its own entries where the neighbour has none
    col = np.where(t[:, None] == 0.0, table[:, j].T, col)
    col = np.where(t[:, None] == 1.0, table[:, j + 1].T, col)
    return np.where(np.isnan(w)[:, None], np.nan, col)


def _read(table: np.ndarray, sigma_s: Real, wmax: Real) -> Floats:
    """Forward reading of a table at a steel stress (vectorised over caps)."""
    s, w = np.broadcast_arrays(np.asarray(sigma_s, dtype=float), np.asarray(wmax, dtype=float))
    shape = s.shape
    s, w = s.ravel(), w.ravel()
    col = _column(table, w)                                     # (n, 8)
    sc = np.maximum(s, TABLE_STRESS[0])                         # below 160 MPa: the 160 MPa row
    i = np.clip(np.searchsorted(TABLE_STRESS, sc, side="right") - 1, 0, TABLE_STRESS.size - 2)
    rows = np.arange(s.size)
    lo, hi = col[rows, i], col[rows, i + 1]
    t = (sc - TABLE_STRESS[i]) / (TABLE_STRESS[i + 1] - TABLE_STRESS[i])
    val = np.where(t == 0.0, lo, lo + (hi - lo) * t)
    val = np.where(sc > TABLE_STRESS[-1], np.nan, val)
    return np.where(np.isnan(s), np.nan, val).reshape(shape)


def _invert(table: np.ndarray, q: Real, wmax: Real) -> Floats:
    """The largest tabulated steel stress at which the table's entry is at least q; 0 where no row
    of the table allows q (not met at any stress of the table)."""
    q, w = np.broadcast_arrays(np.asarray(q, dtype=float), np.asarray(wmax, dtype=float))
    shape = q.shape
    q, w = q.ravel(), w.ravel()
    col = _column(table, w)                                     # (n, 8), non-increasing with stress
    s0, s1 = TABLE_STRESS[:-1], TABLE_STRESS[1:]
    v0, v1 = col[:, :-1], col[:, 1:]
    qq = q[:, None]
    with np.errstate(invalid="ignore", divide="ignore"):
        whole = v1 >= qq                                        # the whole segment meets q
        part = (v0 >= qq) & ~whole & np.isfinite(v1)            # q is reached inside the segment
        cut = s0 + (v0 - qq) / (v0 - v1) * (s1 - s0)
    cand = np.where(whole, s1, np.where(part, cut, np.where(v0 >= qq, s0, -np.inf)))
    best = np.max(cand, axis=1)
    best = np.where(np.isneginf(best), 0.0, best)
    return np.where(np.isnan(q) | np.isnan(w), np.nan, best).reshape(shape)


def wmax_exposure(exposure: Real, wmax_x0: Real = 0.4, wmax_other: Real = 0.3) -> Floats:
    """EN 1992-1-1:2004 7.3.1(5), Table 7.1N

    Recommended wmax for reinforced members under the quasi-permanent combination (from memory
    [M]): 0.4 mm for X0 and XC1 (appearance only; the Note allows it to be relaxed), 0.3 mm for
    XC2-XC4, XD1-XD3 and XS1-XS3. The UK NA (Table NA.4, from memory) gives 0.3 mm for all of them
    (``wmax_x0=0.3``). Where the text names several classes the smallest wmax is taken; a blank or
    unrecognised text gives the smaller of the two values, so a pass holds whatever the class.

    Args:
        exposure: exposure class text per cap, e.g. "XC2" or "XC2, XS1" [-]
        wmax_x0: wmax for X0 and XC1 [mm]
        wmax_other: wmax for the other classes [mm]

    Returns:
        wmax [mm]
    """
    text = np.char.upper(np.asarray(exposure, dtype=str))
    uniq, inv = np.unique(text.ravel(), return_inverse=True)
    least = min(float(wmax_x0), float(wmax_other))

    def one(u: str) -> float:
        found = _EXPOSURE_RE.findall(u)
        if not found:
            return least
        return min(float(wmax_x0) if c in ("X0", "XC1") else float(wmax_other) for c in found)

    vals = np.array([one(u) for u in uniq], dtype=float)  # over the distinct class texts only
    return vals[inv].reshape(text.shape)


def steel_stress_service(tie: Real, as_counted: Real) -> Floats:
    """Derived: steel stress of a tie under service loads, sigma_s = T/As (the truss of the tie check)

    Args:
        tie: tie force of the governing condition under the service load case [N]
        as_counted: steel counted for that tie [mm²]

    Returns:
        sigma_s [MPa]
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        return cast(Floats, np.asarray(tie, dtype=float) / np.asarray(as_counted, dtype=float))


def phi_max_table(sigma_s: Real, wmax: Real) -> Floats:
    """EN 1992-1-1:2004 7.3.3(2), Table 7.2N

    Maximum bar diameter phi*_s for crack control (from memory [M]); linear in the steel stress and
    in wk between the printed columns; below 160 MPa the 160 MPa row; NaN beyond 450 MPa.

    Args:
        sigma_s: steel stress under the quasi-permanent load [MPa]
        wmax: limiting crack width [mm]

    Returns:
        phi*_s [mm]
    """
    return _read(TABLE_7_2N, sigma_s, wmax)


def spacing_max_table(sigma_s: Real, wmax: Real) -> Floats:
    """EN 1992-1-1:2004 7.3.3(2), Table 7.3N

    Maximum bar spacing for crack control (from memory [M]); linear in the steel stress and in wk
    between the printed columns; below 160 MPa the 160 MPa row; NaN where the table has no entry.

    Args:
        sigma_s: steel stress under the quasi-permanent load [MPa]
        wmax: limiting crack width [mm]

    Returns:
        maximum bar centres [mm]
    """
    return _read(TABLE_7_3N, sigma_s, wmax)


def phi_factor_bending(fct_eff: Real, h: Real, d: Real, kc: Real = 0.4, hcr: Real | None = None) -> Floats:
    """EN 1992-1-1:2004 7.3.3(2), Eq. (7.6N)

    Modification of the Table 7.2N diameter for bending: phi_s = phi*_s (fct,eff/2.9) kc hcr/(2(h - d));
    this function gives the factor phi_s/phi*_s. For a rectangular section in bending kc = 0.4
    (Eq. (7.2) with sigma_c = 0) and hcr = h/2 (from memory [M]).

    Args:
        fct_eff: tensile strength when cracking is expected, fctm [MPa]
        h: overall depth [mm]
        d: effective depth of the layer [mm]
        kc: stress distribution coefficient, 0.4 in bending [-]
        hcr: depth of the tensile zone just before cracking, default h/2 [mm]

    Returns:
        phi_s/phi*_s [-]
    """
    h = np.asarray(h, dtype=float)
    hcr = 0.5 * h if hcr is None else np.asarray(hcr, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return (np.asarray(fct_eff, dtype=float) / 2.9) * kc * hcr / (2.0 * (h - d))


def stress_limit_phi(phi: Real, wmax: Real, factor: Real) -> Floats:
    """EN 1992-1-1:2004 7.3.3(2), Table 7.2N

    The largest steel stress at which the bars meet Table 7.2N as modified by Eq. (7.6N): phi <=
    factor x phi*_s(sigma_s), read as phi/factor against the table (linear interpolation); 0 where
    phi/factor exceeds phi*_s at 160 MPa (the table is met at no stress it lists).

    Args:
        phi: bar diameter [mm]
        wmax: limiting crack width [mm]
        factor: phi_s/phi*_s of Eq. (7.6N) [-]

    Returns:
        steel stress limit [MPa]
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        return _invert(TABLE_7_2N, np.asarray(phi, dtype=float) / factor, wmax)


def stress_limit_spacing(spacing: Real, wmax: Real) -> Floats:
    """EN 1992-1-1:2004 7.3.3(2), Table 7.3N

    The largest steel stress at which the bar centres meet Table 7.3N (linear interpolation); 0
    where the centres exceed the table's spacing at 160 MPa.

    Args:
        spacing: bar centres [mm]
        wmax: limiting crack width [mm]

    Returns:
        steel stress limit [MPa]
    """
    return _invert(TABLE_7_3N, spacing, wmax)


def neutral_axis_cracked(d: Real, rho: Real, alpha_e: Real) -> Floats:
    """Derived: neutral axis depth of a cracked rectangular section in bending, elastic, no compression steel

    x = d (sqrt((alpha_e rho)² + 2 alpha_e rho) - alpha_e rho), from the first moment of the
    transformed section about the neutral axis, b x²/2 = alpha_e As (d - x).

    Args:
        d: effective depth [mm]
        rho: As/(b d) [-]
        alpha_e: Es/Ecm [-]

    Returns:
        x [mm]
    """
    ar = np.asarray(alpha_e, dtype=float) * np.asarray(rho, dtype=float)
    return cast(Floats, np.asarray(d, dtype=float) * (np.sqrt(ar * ar + 2.0 * ar) - ar))


def hc_eff(h: Real, d: Real, x: Real) -> Floats:
    """EN 1992-1-1:2004 7.3.2(3)

    Effective depth of the concrete in tension round the bars, hc,ef = min(2.5 (h - d), (h - x)/3,
    h/2) (Figure 7.1, from memory [M]).

    Args:
        h: overall depth [mm]
        d: effective depth of the layer [mm]
        x: neutral axis depth [mm]

    Returns:
        hc,ef [mm]
    """
    h = np.asarray(h, dtype=float)
    return np.minimum(np.minimum(2.5 * (h - d), (h - x) / 3.0), h / 2.0)


def rho_p_eff(as_: Real, ac_eff: Real) -> Floats:
    """EN 1992-1-1:2004 7.3.4(2), Eq. (7.10)

    rho_p,eff = As/Ac,eff for reinforcing steel alone (no bonded tendons).

    Args:
        as_: area of the bars within Ac,eff [mm²]
        ac_eff: effective tension area b hc,ef [mm²]

    Returns:
        rho_p,eff [-]
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        return cast(Floats, np.asarray(as_, dtype=float) / np.asarray(ac_eff, dtype=float))


def strain_difference(sigma_s: Real, alpha_e: Real, rho: Real, fct_eff: Real, kt: Real = 0.4,
                      es: Real = 200000.0) -> Floats:
    """EN 1992-1-1:2004 7.3.4(2), Eq. (7.9)

    eps_sm - eps_cm = [sigma_s - kt fct,eff/rho_p,eff (1 + alpha_e rho_p,eff)]/Es >= 0.6 sigma_s/Es;
    kt = 0.4 for long-term loading (0.6 short term).

    Args:
        sigma_s: steel stress on the cracked section [MPa]
        alpha_e: Es/Ecm [-]
        rho: rho_p,eff [-]
        fct_eff: tensile strength when cracking is expected, fctm [MPa]
        kt: load-duration factor [-]
        es: modulus of the bars, 3.2.7(4) [MPa]

    Returns:
        eps_sm - eps_cm [-]
    """
    s = np.asarray(sigma_s, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        tension = kt * np.asarray(fct_eff, dtype=float) / rho * (1.0 + alpha_e * rho)
    return np.maximum((s - tension) / es, 0.6 * s / es)


def sr_max_close(c: Real, phi: Real, rho: Real, k1: Real = 0.8, k2: Real = 0.5, k3: Real = 3.4,
                 k4: Real = 0.425) -> Floats:
    """EN 1992-1-1:2004 7.3.4(3), Eq. (7.11)

    Maximum crack spacing where the bars are at centres no more than 5(c + phi/2):
    sr,max = k3 c + k1 k2 k4 phi/rho_p,eff; k1 = 0.8 high bond, k2 = 0.5 bending; k3 = 3.4 and
    k4 = 0.425 recommended, the UK NA values too (from memory [M]).

    Args:
        c: cover to the bars of the layer [mm]
        phi: bar diameter [mm]
        rho: rho_p,eff [-]
        k1: bond coefficient [-]
        k2: strain distribution coefficient [-]
        k3: NDP [-]
        k4: NDP [-]

    Returns:
        sr,max [mm]
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        return k3 * np.asarray(c, dtype=float) + k1 * k2 * k4 * np.asarray(phi, dtype=float) / rho


def sr_max_far(h: Real, x: Real) -> Floats:
    """EN 1992-1-1:2004 7.3.4(3), Eq. (7.14)

    Maximum crack spacing where the bars are at centres above 5(c + phi/2): sr,max = 1.3 (h - x).

    Args:
        h: overall depth [mm]
        x: neutral axis depth [mm]

    Returns:
        sr,max [mm]
    """
    return 1.3 * (np.asarray(h, dtype=float) - x)


def close_centres_limit(c: Real, phi: Real) -> Floats:
    """EN 1992-1-1:2004 7.3.4(3)

    The largest centres at which Eq. (7.11) applies, 5(c + phi/2).

    Args:
        c: cover to the bars of the layer [mm]
        phi: bar diameter [mm]

    Returns:
        centres [mm]
    """
    return 5.0 * (np.asarray(c, dtype=float) + 0.5 * np.asarray(phi, dtype=float))


def crack_width(sr_max: Real, strain: Real) -> Floats:
    """EN 1992-1-1:2004 7.3.4(1), Eq. (7.8)

    wk = sr,max (eps_sm - eps_cm).

    Args:
        sr_max: maximum crack spacing [mm]
        strain: eps_sm - eps_cm [-]

    Returns:
        wk [mm]
    """
    return np.asarray(sr_max, dtype=float) * strain


def stress_limit_crack_width(wmax: Real, sr_max: Real, alpha_e: Real, rho: Real, fct_eff: Real, kt: Real = 0.4,
                             es: Real = 200000.0) -> Floats:
    """Derived: the steel stress at which Eq. (7.8) with (7.9) gives wk = wmax

    eps_sm - eps_cm = max((sigma - B)/Es, 0.6 sigma/Es) with B = kt fct,eff/rho (1 + alpha_e rho)
    rises with sigma, so wk <= wmax exactly where sigma <= min(e + B, e/0.6), e = wmax Es/sr,max.

    Args:
        wmax: limiting crack width [mm]
        sr_max: maximum crack spacing [mm]
        alpha_e: Es/Ecm [-]
        rho: rho_p,eff [-]
        fct_eff: tensile strength when cracking is expected, fctm [MPa]
        kt: load-duration factor [-]
        es: modulus of the bars [MPa]

    Returns:
        steel stress limit [MPa]
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        e = np.asarray(wmax, dtype=float) * es / sr_max
        b = kt * np.asarray(fct_eff, dtype=float) / rho * (1.0 + alpha_e * rho)
    return np.minimum(e + b, e / 0.6)


def centres_are_close(centres: Real, c: Real, phi: Real) -> NDArray[np.bool_]:
    """EN 1992-1-1:2004 7.3.4(3)

    True where the bar centres are within :func:`close_centres_limit` (Eq. (7.11) applies), with a
    relative allowance of 1e-9 so that centres of exactly 5(c + phi/2) count as close.

    Args:
        centres: bar centres [mm]
        c: cover to the bars [mm]
        phi: bar diameter [mm]

    Returns:
        close [-]
    """
    return cast(NDArray[np.bool_], np.asarray(centres, dtype=float) <= close_centres_limit(c, phi) * (1 + 1e-9))


def quasi_permanent_stress(sigma: Real, is_sls: ArrayLike, qp_ratio: float) -> Floats:
    """Common practice: steel stress under the quasi-permanent load for the crack checks

    An SLS load case's own stress; on an ULS row the ratio of quasi-permanent to ULS load times
    the ULS stress (NaN unless the profile sets the ratio) [CP].

    Args:
        sigma: steel stress of the row's load case [MPa]
        is_sls: the row is an SLS case [-]
        qp_ratio: quasi-permanent / ULS load ratio [-]

    Returns:
        stress [MPa]
    """
    sig = np.asarray(sigma, dtype=float)
    return cast(Floats, np.where(np.asarray(is_sls, dtype=bool), sig, qp_ratio * sig))
