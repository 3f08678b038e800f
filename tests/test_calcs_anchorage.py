"""Anchorage: EN 1992-1-1:2004 8.4.2(2) Eq. 8.2, 8.4.3(2) Eq. 8.3, 8.4.4(1) Eq. 8.4/8.6, Table 8.2.

Sources: engineering reference §15 O8 (H25 bottom ties, C30/37, good bond, σsd = fyd) and O1
("Other C30/37 values": fbd 3.000 / 3.041, lb,rqd 905.8 / 893.5 mm); reference §11 (η2, α2 [V: S8],
α1 for bent bars [M]).
"""

from __future__ import annotations

import numpy as np
import pytest

from checker.calcs import anchorage as anc
from checker.calcs import materials as mat

FYD = mat.fyd(500.0)


def _fbd(values):
    return anc.bond_strength(mat.fctd(mat.fctk_005(30, values=values)), 25.0, eta1=1.0)


def test_o8_bond_and_basic_length(tol):
    # O8 / O1: fbd = 2.25 × 2.0/1.5 = 3.000 MPa (table) / 3.041 (formula);
    # lb,rqd = (25/4)(434.78/3.0) = 905.8 mm (36.2φ) / 893.5 mm
    tol.printed(_fbd("table"), "3.000")
    tol.printed(_fbd("formula"), "3.041")
    lb = anc.basic_anchorage_length(25.0, FYD, _fbd("table"))
    tol.printed(lb, "905.8")
    tol.printed(lb / 25.0, "36.2")
    tol.printed(anc.basic_anchorage_length(25.0, FYD, _fbd("formula")), "893.5")
    # lb,min = max(0.3 × 905.8 = 271.7; 10φ = 250; 100) = 271.7
    tol.printed(anc.min_anchorage_length(lb, 25.0), "271.7")


@pytest.mark.parametrize("cd, a2, lbd", [(75.0, "0.700", "634.1"), (50.0, "0.850", "769.9"),
                                         (37.5, "0.925", "837.9")])
def test_o8_design_length_straight(cd, a2, lbd, tol):
    lb = anc.basic_anchorage_length(25.0, FYD, _fbd("table"))
    alpha2 = anc.alpha2(cd, 25.0, bent=False)
    tol.printed(alpha2, a2)
    alpha1 = anc.alpha1(cd, 25.0, bent=False)
    assert alpha1 == 1.0
    tol.printed(anc.design_anchorage_length(lb, 25.0, alpha1, alpha2), lbd)


def test_o8_o4_cap_length_available(tol):
    # O8: O4 cap (L = 2700, piles φ600 at ±900, end cover 75): 600 + 150 − 75 = 675 mm available
    avail = anc.available_length(1350.0, 75.0, 900.0, 600.0)
    tol.printed(avail, "675")
    lb = anc.basic_anchorage_length(25.0, FYD, _fbd("table"))
    assert avail >= anc.design_anchorage_length(lb, 25.0, 1.0, anc.alpha2(75.0, 25.0))  # OK
    assert avail < anc.design_anchorage_length(lb, 25.0, 1.0, anc.alpha2(50.0, 25.0))   # FAIL
    # bent-up ends add the vertical leg h − 2·cover − φ
    tol.same(anc.available_length(1350.0, 75.0, 900.0, 600.0, h=1000.0, phi=25.0, bent=True),
             675.0 + 1000.0 - 150.0 - 25.0)


def test_o8_stress_below_yield_scales_length(tol):
    # O8: with σsd = T/As,prov instead of fyd, lb,rqd scales down proportionally
    s = anc.bar_stress(1000e3, 2945.2, FYD)
    tol.same(s, 1000e3 / 2945.2)
    tol.same(anc.basic_anchorage_length(25, s, 3.0) / anc.basic_anchorage_length(25, FYD, 3.0),
             s / FYD)
    assert anc.bar_stress(2000e3, 2945.2, FYD) == FYD  # capped at fyd


def test_eta2_and_alpha_factors(tol):
    # 8.4.2(2): η2 = 1.0 for φ ≤ 32, (132 − φ)/100 above [V: S8]
    tol.same(anc.eta2([25, 32, 40]), [1.0, 1.0, 0.92])
    # Table 8.2: α1 = 0.7 for bent bars with cd > 3φ [M]; α2 bent form uses cd − 3φ [M]
    assert anc.alpha1(80.0, 25.0, True) == 0.7 and anc.alpha1(75.0, 25.0, True) == 1.0
    tol.same(anc.alpha2(100.0, 25.0, bent=True), 1 - 0.15 * (100 - 75) / 25)
    tol.same(anc.alpha2([10.0, 500.0], 25.0), [1.0, 0.7])  # within 0.7..1.0


def test_array_equals_elements(tol):
    phi = np.array([12.0, 16.0, 25.0, 40.0])
    cd = np.array([40.0, 50.0, 75.0, 100.0])
    lb = anc.basic_anchorage_length(phi, FYD, 3.0)
    a2 = anc.alpha2(cd, phi)
    arr = anc.design_anchorage_length(lb, phi, 1.0, a2)
    for i in range(4):
        tol.same(arr[i], anc.design_anchorage_length(lb[i], phi[i], 1.0, anc.alpha2(cd[i], phi[i])))


def test_bond_strength_limited_at_c60_75(tol):
    # EN 1992-1-1:2004 8.4.2(2) [M]: fctk,0.05 taken at C60/75 for higher classes. Table 3.1 values
    # (from memory for C60/75 and C70/85): fctk,0.05 = 3.1 (C60/75), 3.2 (C70/85).
    # fbd = 2.25·1.0·1.0·3.1/1.5 = 4.650 MPa for both C60/75 and C70/85 (not 4.800 at C70/85).
    fck_b = anc.fck_for_bond(np.array([30.0, 60.0, 70.0, 90.0]))
    tol.same(fck_b, [30.0, 60.0, 60.0, 60.0])
    fbd = anc.bond_strength(mat.fctd(mat.fctk_005(fck_b)), 25.0)
    tol.printed(fbd[1], "4.650")
    tol.printed(fbd[2], "4.650")
    tol.printed(anc.bond_strength(mat.fctd(mat.fctk_005(70.0)), 25.0), "4.800")
