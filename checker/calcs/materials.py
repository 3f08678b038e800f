"""Material properties: EN 1992-1-1:2004 3.1 (concrete), 3.2 (reinforcement), 6.5.2 / 6.2.2 (ν).

Table 3.1 convention (engineering reference, decision 3): the printed (rounded) values are used
for the classes Table 3.1 lists; the formulae for any other class (the UK classes C28/35 and
C32/40 of BS 8500). ``values="formula"`` uses the formulae throughout.
"""

from __future__ import annotations

from typing import cast

import numpy as np

from checker.calcs._typing import Floats, Real

# EN 1992-1-1:2004 Table 3.1, printed values. C20/25 to C50/60 verified in a retrieved
# transcription [V: S11]; C12/15, C16/20 and C55/67 to C90/105 from memory [M].
_TABLE_FCK = np.array([12, 16, 20, 25, 30, 35, 40, 45, 50, 55, 60, 70, 80, 90], dtype=float)
_TABLE_FCTM = np.array([1.6, 1.9, 2.2, 2.6, 2.9, 3.2, 3.5, 3.8, 4.1, 4.2, 4.4, 4.6, 4.8, 5.0])
_TABLE_FCTK005 = np.array([1.1, 1.3, 1.5, 1.8, 2.0, 2.2, 2.5, 2.7, 2.9, 3.0, 3.1, 3.2, 3.4, 3.5])
_TABLE_ECM_GPA = np.array([27, 29, 30, 31, 33, 34, 35, 36, 37, 38, 39, 41, 42, 44], dtype=float)


def _table_lookup(fck: Real, table: np.ndarray) -> Floats:
    """Printed Table 3.1 value for each fck, NaN where the class is not listed."""
    fck = np.asarray(fck, dtype=float)
    idx = np.clip(np.searchsorted(_TABLE_FCK, fck), 0, _TABLE_FCK.size - 1)
    listed = np.abs(_TABLE_FCK[idx] - fck) < 1e-9
    return np.where(listed, table[idx], np.nan)


def table_listed(fck: Real) -> Floats:
    """EN 1992-1-1:2004 3.1.2, Table 3.1

    Whether Table 3.1 lists the strength class (1.0 listed, 0.0 not).

    Args:
        fck: characteristic cylinder strength [MPa]

    Returns:
        1.0 where the class is a Table 3.1 class, else 0.0 [-]
    """
    return np.isfinite(_table_lookup(fck, _TABLE_FCTM)).astype(float)


def fcm(fck: Real, delta_f: Real = 8.0) -> Floats:
    """EN 1992-1-1:2004 3.1.2, Table 3.1

    Mean cylinder compressive strength fcm = fck + 8 [V: S11].

    Args:
        fck: characteristic cylinder strength [MPa]
        delta_f: margin of the mean over the characteristic strength, 8 in Table 3.1 [MPa]

    Returns:
        fcm [MPa]
    """
    return np.asarray(fck, dtype=float) + delta_f


def fctm_formula(fck: Real) -> Floats:
    """EN 1992-1-1:2004 3.1.2, Table 3.1

    Mean axial tensile strength by the Table 3.1 formulae [V: S11, S24]:
    0.30 fck^(2/3) up to C50/60, 2.12 ln(1 + fcm/10) above.

    Args:
        fck: characteristic cylinder strength [MPa]

    Returns:
        fctm [MPa]
    """
    fck = np.asarray(fck, dtype=float)
    low = 0.30 * np.cbrt(fck) ** 2
    high = 2.12 * np.log1p(fcm(fck) / 10.0)
    return np.where(fck <= 50.0, low, high)


def fctm(fck: Real, values: str = "table") -> Floats:
    """EN 1992-1-1:2004 3.1.2, Table 3.1

    Mean axial tensile strength: printed Table 3.1 value where the class is listed and
    ``values="table"`` (decision 3), otherwise :func:`fctm_formula`.

    Args:
        fck: characteristic cylinder strength [MPa]
        values: "table" (printed values where listed) or "formula" [-]

    Returns:
        fctm [MPa]
    """
    formula = fctm_formula(fck)
    if values == "formula":  # a switch on the convention, not on a value
        return formula
    tab = _table_lookup(fck, _TABLE_FCTM)
    return np.where(np.isfinite(tab), tab, formula)


def fctk_005(fck: Real, values: str = "table") -> Floats:
    """EN 1992-1-1:2004 3.1.2, Table 3.1

    5 % fractile of the axial tensile strength, fctk,0.05 = 0.7 fctm [V: S11]; printed value
    where the class is listed and ``values="table"``.

    Args:
        fck: characteristic cylinder strength [MPa]
        values: "table" or "formula" [-]

    Returns:
        fctk,0.05 [MPa]
    """
    formula = 0.7 * fctm_formula(fck)
    if values == "formula":
        return formula
    tab = _table_lookup(fck, _TABLE_FCTK005)
    return np.where(np.isfinite(tab), tab, formula)


def fctk_095(fck: Real) -> Floats:
    """EN 1992-1-1:2004 3.1.2, Table 3.1

    95 % fractile of the axial tensile strength, fctk,0.95 = 1.3 fctm (formula) [V: S11].

    Args:
        fck: characteristic cylinder strength [MPa]

    Returns:
        fctk,0.95 [MPa]
    """
    return 1.3 * fctm_formula(fck)


def ecm(fck: Real, values: str = "table") -> Floats:
    """EN 1992-1-1:2004 3.1.3, Table 3.1

    Secant modulus of elasticity Ecm = 22 (fcm/10)^0.3 GPa [V: S11]; printed value where the
    class is listed and ``values="table"``. Returned in MPa.

    Args:
        fck: characteristic cylinder strength [MPa]
        values: "table" or "formula" [-]

    Returns:
        Ecm [MPa]
    """
    formula = 22000.0 * (fcm(fck) / 10.0) ** 0.3
    if values == "formula":
        return formula
    tab = _table_lookup(fck, _TABLE_ECM_GPA) * 1000.0
    return np.where(np.isfinite(tab), tab, formula)


def fcd(fck: Real, alpha_cc: Real = 1.0, gamma_c: Real = 1.5) -> Floats:
    """EN 1992-1-1:2004 3.1.6(1)P, Eq. (3.15)

    Design compressive strength fcd = αcc fck/γc.

    Args:
        fck: characteristic cylinder strength [MPa]
        alpha_cc: long-term / loading-effect coefficient; recommended 1.0, UK NA 0.85 for
            flexure and axial load [S12] (capcheck uses two values, decision 2) [-]
        gamma_c: partial factor for concrete, recommended 1.5 (2.4.2.4) [M] [-]

    Returns:
        fcd [MPa]
    """
    return alpha_cc * np.asarray(fck, dtype=float) / gamma_c


def fctd(fctk005: Real, alpha_ct: Real = 1.0, gamma_c: Real = 1.5) -> Floats:
    """EN 1992-1-1:2004 3.1.6(2)P, Eq. (3.16)

    Design tensile strength fctd = αct fctk,0.05/γc.

    Args:
        fctk005: 5 % fractile tensile strength [MPa]
        alpha_ct: recommended 1.0, UK NA 1.0 [M] [-]
        gamma_c: partial factor for concrete, recommended 1.5 [-]

    Returns:
        fctd [MPa]
    """
    return alpha_ct * np.asarray(fctk005, dtype=float) / gamma_c


def fyd(fyk: Real, gamma_s: Real = 1.15) -> Floats:
    """EN 1992-1-1:2004 3.2.7(2), Figure 3.8

    Design yield strength of reinforcement fyd = fyk/γs.

    Args:
        fyk: characteristic yield strength [MPa]
        gamma_s: partial factor for reinforcement, recommended 1.15 (2.4.2.4) [M] [-]

    Returns:
        fyd [MPa]
    """
    return np.asarray(fyk, dtype=float) / gamma_s


def nu_prime(fck: Real) -> Floats:
    """EN 1992-1-1:2004 6.5.2(2), Eq. (6.57N)

    Strength reduction for struts and nodes ν' = 1 − fck/250 (recommended value) [V: S4].

    Args:
        fck: characteristic cylinder strength [MPa]

    Returns:
        ν' [-]
    """
    return 1.0 - np.asarray(fck, dtype=float) / 250.0


def nu(fck: Real) -> Floats:
    """EN 1992-1-1:2004 6.2.2(6), Eq. (6.6N)

    Strength reduction for concrete cracked in shear ν = 0.6 (1 − fck/250) [V: S3, S24].

    Args:
        fck: characteristic cylinder strength [MPa]

    Returns:
        ν [-]
    """
    return 0.6 * (1.0 - np.asarray(fck, dtype=float) / 250.0)


def fck_for_shear(fck: Real, fck_max: Real = np.inf) -> Floats:
    """EN 1992-1-1:2004 3.1.2(2)P

    With the UK NA to BS EN 1992-1-1 (3.1.2(2)P): cylinder strength used in the shear resistance (vRd,c and vmin of
    6.2.2(1), and the
    punching resistance that uses them): the UK NA takes the shear strength of classes above
    C50/60 as that of C50/60 unless verified by tests (from memory; S12 of the engineering
    reference states the same), i.e. min(fck, 50). The recommended values set no such limit
    (``fck_max`` = inf).

    Args:
        fck: characteristic cylinder strength [MPa]
        fck_max: largest fck credited in shear, uk-na 50, ec2 inf [MPa]

    Returns:
        fck used in shear [MPa]
    """
    return cast(Floats, np.minimum(np.asarray(fck, dtype=float), fck_max))
