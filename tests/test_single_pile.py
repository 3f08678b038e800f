"""Single-pile caps (issue 15, item 3): the splitting tie under the column against the horizontal
links, and the bearing of the pile head on the cap.

Sources, each figure worked by hand beside its test:
* EN 1992-1-1:2004 6.5.3(3), Figure 6.25: Eq. (6.58) T = ¼ (b − a)/b F for a partial discontinuity
  (b ≤ H/2), Eq. (6.59) T = ¼ (1 − 0.7 a/h) F for a full one (b > H/2). That h = H/2 and that the
  figure is drawn for a ≤ h are from memory of the figure.
* The splitting zone, 0.2 l to l from each loaded face with l = min(b, H/2) (0.1 H to 0.9 H for a
  full discontinuity), is from memory; two legs of a closed link cross the plane (derived).
* EN 1992-1-1:2004 6.7(2), (3), Eq. (6.63), Figure 6.29: FRdu = Ac0 fcd √(Ac1/Ac0) ≤ 3.0 fcd Ac0.
* fyd = 500/1.15 (EN 1992-1-1:2004 3.2.7(2), Table 2.1N); fcd = 0.85 × 32/1.5 for C32/40 with the
  UK NA αcc = 0.85 (the uk-na profile); the design self-weight γG·25 kN/m³·L·W·h with γG = 1.35
  (EN 1990:2002 Table A1.2(B), from memory; 25 kN/m³ EN 1991-1-1:2002 Table A.1).
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest

from checker.api import check_schedule
from checker.calcs import splitting as spl
from checker.ingest.headings import match_heading
from checker.ingest.notation import NotationError, parse_links
from checker.ingest.schedule import schedule_from_frame
from checker.ruleset.loader import load_ruleset

FYD = 500.0 / 1.15
FCD = 0.85 * 32.0 / 1.5


def h12_area(n_legs):
    return n_legs * math.pi * 12.0 ** 2 / 4.0


def sw(L, W, h):
    """Design self-weight of an L × W × h mm cap [N]."""
    return 1.35 * 25.0 * (L / 1e3) * (W / 1e3) * (h / 1e3) * 1e3


# ---------------------------------------------------------------------------------------------
# The formula functions
# ---------------------------------------------------------------------------------------------


def test_eq_6_59_full_discontinuity(tol):
    # EN 1992-1-1:2004 Eq. (6.59): F = 1650 kN, a = 450 mm, h = H/2 = 500 mm:
    # T = 0.25 (1 - 0.7 x 450/500) 1650 = 0.25 x 0.37 x 1650 = 152.625 kN
    tol.printed(spl.splitting_tie_full(1650e3, 450.0, 500.0) / 1e3, "152.625")
    # a wider than h is taken as h (the figure is drawn for a <= h, from memory): 0.075 F
    tol.printed(spl.splitting_tie_full(1000e3, 665.0, 500.0) / 1e3, "75")


def test_eq_6_58_partial_discontinuity(tol):
    # EN 1992-1-1:2004 Eq. (6.58): F = 1000 kN, a = 300, b = 600: T = 0.25 x 300/600 x 1000 = 125 kN
    tol.printed(spl.splitting_tie_partial(1000e3, 300.0, 600.0) / 1e3, "125")
    # a load over the whole width spreads nowhere: no tie
    assert spl.splitting_tie_partial(1000e3, 600.0, 600.0) == 0.0


def test_which_discontinuity_borderline():
    # Figure 6.25: partial where b <= H/2, full where b > H/2; at b = H/2 exactly, partial
    assert spl.full_discontinuity(600.0, 1200.0) == 0.0
    assert spl.full_discontinuity(601.0, 1200.0) == 1.0
    assert np.isnan(spl.full_discontinuity(np.nan, 1200.0))
    # the dispatcher picks the equation: at b = H/2 = 600, a = 300, Eq. (6.58) gives 125 kN;
    # at b = 601 Eq. (6.59) with h = 600 gives 0.25 (1 - 0.35) 1000 = 162.5 kN
    assert spl.splitting_tie(1000e3, 300.0, 600.0, 1200.0) == pytest.approx(125e3, rel=1e-12)
    assert spl.splitting_tie(1000e3, 300.0, 601.0, 1200.0) == pytest.approx(162.5e3, rel=1e-12)


def test_splitting_zone_and_link_sets(tol):
    # zone (from memory): full discontinuity 0.1 H to 0.9 H = 0.8 x 1000 = 800 mm;
    # partial 0.8 b at each loaded face = 0.8 x 900 = 720 mm
    tol.same(spl.splitting_zone_depth(1350.0, 1000.0), 800.0)
    tol.same(spl.splitting_zone_depth(900.0, 1800.0), 720.0)
    # a spacing form gives floor(zone/s): 800/150 -> 5; 800/160 = 5 exactly -> 5; a count form as stated
    tol.same(spl.link_sets_in_zone(800.0, np.nan, 150.0), 5.0)
    tol.same(spl.link_sets_in_zone(800.0, np.nan, 160.0), 5.0)
    tol.same(spl.link_sets_in_zone(800.0, 4.0, np.nan), 4.0)
    # two legs of each closed H12 set: 5 sets -> 10 x 113.1 = 1131 mm² (derived)
    tol.printed(spl.link_area_across_plane(5.0, 12.0), "1131")


def test_vectorised_equals_elementwise(tol):
    F = np.array([1650e3, 1000e3, 2000e3])
    a = np.array([450.0, 300.0, 400.0])
    b = np.array([1350.0, 601.0, 900.0])
    H = np.array([1000.0, 1200.0, 1800.0])
    arr = spl.splitting_tie(F, a, b, H)
    for i in range(3):
        tol.same(arr[i], spl.splitting_tie(F[i], a[i], b[i], H[i]))


# ---------------------------------------------------------------------------------------------
# Reading the links: headings and notation
# ---------------------------------------------------------------------------------------------


@pytest.mark.parametrize("heading", [
    "Links", "links", "Bursting steel", "Horizontal links", "Bursting links", "Bursting reinforcement",
    "Horizontal links (bursting)", "Closed links", "Splitting steel", "Bursting steel (mm)", "LINKS",
])
def test_link_headings(heading):
    assert match_heading(heading)[0] == "links"


@pytest.mark.parametrize("heading", ["Shear links", "Links H", "Top links"])
def test_other_link_headings_are_not_taken(heading):
    assert match_heading(heading)[0] is None


@pytest.mark.parametrize("text, count, dia, centres", [
    ("H12@150", None, 12, 150.0),
    ("H12-150", None, 12, 150.0),
    ("H12 at 150 c/c", None, 12, 150.0),
    ("H12 links @ 150", None, 12, 150.0),
    ("Closed links H10@200", None, 10, 200.0),
    ("4H16", 4, 16, None),
    ("4 no. H16 links", 4, 16, None),
    ("4 sets H16", 4, 16, None),
    ("4 sets of H16 closed links", 4, 16, None),
    ("3T12 horizontal links", 3, 12, None),
])
def test_link_notation(text, count, dia, centres):
    spec = parse_links(text)
    assert (spec.count, spec.dia, spec.centres) == (count, dia, centres)


@pytest.mark.parametrize("text, fragment", [
    ("4H16 (2 legs)", "two legs"),
    ("H13@150", "not a standard bar size"),
    ("links", "not a link notation"),
    ("4H16+2H12", "mixed bar sizes"),
])
def test_link_notation_refused(text, fragment):
    with pytest.raises(NotationError, match=fragment):
        parse_links(text)


def test_links_column_read_and_a_bad_cell_rejects_its_row():
    df = pd.DataFrame([_cap_row("A", links="H12@150"), _cap_row("B", links="4H16 closed links"),
                       _cap_row("C", links=""), _cap_row("D", links="H13@150")])
    sched = schedule_from_frame(df.rename(columns={"links": "Bursting links"}))
    caps = sched.caps.set_index("mark")
    assert caps.loc["A", "links"] == "H12@150" and caps.loc["A", "phi_links"] == 12.0
    assert caps.loc["A", "s_links"] == 150.0 and np.isnan(caps.loc["A", "n_links"])
    assert caps.loc["B", "n_links"] == 4.0 and caps.loc["B", "phi_links"] == 16.0
    assert caps.loc["C", "links"] == "" and np.isnan(caps.loc["C", "phi_links"])
    assert len(sched.rejected) == 1
    err = sched.rejected[0].errors[0]
    assert "Bursting links" in err and "H13@150" in err


def test_capcheck_columns_shows_the_links(tmp_path, capsys):
    from checker.cli import main

    f = tmp_path / "s.csv"
    pd.DataFrame([_cap_row("PC1", links="H12@150")]).rename(columns={"links": "Horizontal links"}).to_csv(
        f, index=False)
    main(["columns", str(f)])
    out = capsys.readouterr().out
    assert "Horizontal links" in out and "H12@150" in out


# ---------------------------------------------------------------------------------------------
# The rules: bursting and pile-bearing
# ---------------------------------------------------------------------------------------------

_RULES: dict = {}


def _cap_row(mark, **kw):
    """The sample's single-pile cap PC1: 750 mm pile, 1350 x 1350 x 1000 cap, 450 x 450 column,
    N = 1650 kN, C32/40 (canonical headings, kN and mm)."""
    row = dict(mark=mark, piles=1, pile_dia=750, pile_spacing=None, cap_length=1350, cap_width=1350,
               cap_depth=1000, column="450x450", n_ed=1650, concrete="C32/40", cover=75,
               bars_x="H20@150", bars_y="H20@150", embedment=75, pile_capacity=2100, links="H12@150")
    row.update(kw)
    return row


def check(*rows):
    df = pd.DataFrame(list(rows))
    if "links" in df.columns and df["links"].isna().all():
        df = df.drop(columns="links")
    sched = schedule_from_frame(df)
    assert sched.rejected == [], sched.rejected
    if "uk-na" not in _RULES:
        _RULES["uk-na"] = load_ruleset("uk-na")
    rv = check_schedule(sched, _RULES["uk-na"], "t")
    return {(r["cap"], r["rule"]): r for r in rv.findings.to_dict("records")}


# PC1 by hand: b = 1350 > H/2 = 500, full discontinuity, Eq. (6.59) with h = 500 mm.
# column end: a = 450: T = 0.25 (1 - 0.7 x 0.9) 1650 = 152.625 kN
# pile end: a = sqrt(pi/4) 750 = 664.7 > h, taken as h: T = 0.075 x (1650 + 61.51) = 128.36 kN
# As,req = 152 625 / 434.78 = 351.04 mm²; zone 800 mm, H12@150 -> 5 sets x 2 legs = 1131 mm²
AS_REQ_PC1 = 152.625e3 / FYD


def test_bursting_passes_with_links(tol):
    r = check(_cap_row("PC1"))[("PC1", "bursting")]
    assert r["severity"] == "ok"
    tol.printed(r["limit"], "351.04")
    tol.printed(r["value"], "1131")
    tol.printed(r["utilisation"], "0.310")
    assert "152 kN" in r["message"] or "153 kN" in r["message"]


def test_bursting_fails_with_too_few_links(tol):
    # H8@300: floor(800/300) = 2 sets x 2 legs x 50.27 = 201.1 mm² < 351.04 mm²: unsafe
    r = check(_cap_row("PC1", links="H8@300"))[("PC1", "bursting")]
    assert r["severity"] == "unsafe"
    tol.printed(r["value"], "201.1")
    tol.printed(r["utilisation"], "1.746")


def test_bursting_borderline():
    # 2H10 sets: 2 x 2 x 78.54 = 314.16 mm²; Eq. (6.59) solved for the load that needs exactly that:
    # F = As fyd / (0.25 x 0.37); the pile end (0.075 R) stays smaller
    as_prov = 4 * math.pi * 10.0 ** 2 / 4.0
    n_exact = as_prov * FYD / (0.25 * 0.37) / 1e3          # kN
    at = check(_cap_row("PC1", links="2H10", n_ed=n_exact))[("PC1", "bursting")]
    assert at["severity"] == "ok" and at["utilisation"] == pytest.approx(1.0, abs=1e-9)
    over = check(_cap_row("PC1", links="2H10", n_ed=n_exact * 1.01))[("PC1", "bursting")]
    assert over["severity"] == "unsafe" and over["utilisation"] == pytest.approx(1.01, rel=1e-9)


@pytest.mark.parametrize("links", [None, ""])
def test_bursting_without_links_is_a_query_never_ok(links):
    r = check(_cap_row("PC1", links=links))[("PC1", "bursting")]
    assert r["severity"] == "query"
    assert "No horizontal links are stated" in r["message"]
    assert r["value"] == 0.0
    assert r["limit"] == pytest.approx(AS_REQ_PC1, rel=1e-12)
    assert "351 mm²" in r["action"]


def test_bursting_y_direction_governs(tol):
    # column 450 x 300: along y a = 300: T = 0.25 (1 - 0.7 x 0.6) 1650 = 239.25 kN -> 550.3 mm²
    r = check(_cap_row("PC1", column="450x300", links="H8@300"))[("PC1", "bursting")]
    assert r["severity"] == "unsafe"
    assert "normal to y" in r["message"] and "239 kN" in r["message"]
    tol.printed(r["limit"], "550.3")


def test_bursting_partial_discontinuity(tol):
    # deep narrow cap 900 x 900 x 1800, 600 pile, 400 x 400 column, N = 2000 kN: b = 900 = H/2, so
    # Eq. (6.58): column end 0.25 (900 - 400)/900 x 2000 = 277.78 kN; pile end a = sqrt(pi/4) 600 = 531.7:
    # 0.25 (900 - 531.7)/900 x (2000 + 49.21) = 209.7 kN; As,req = 277 778/434.78 = 638.9 mm²;
    # zone 0.8 x 900 = 720 mm: H12@150 -> 4 sets x 2 legs = 904.8 mm²
    r = check(_cap_row("PC1", pile_dia=600, cap_length=900, cap_width=900, cap_depth=1800, column="400x400",
                       n_ed=2000))[("PC1", "bursting")]
    assert r["severity"] == "ok"
    tol.printed(r["limit"], "638.9")
    tol.printed(r["value"], "904.8")


def test_bursting_applies_only_to_single_pile_caps():
    two = _cap_row("PC2", piles=2, pile_dia=600, pile_spacing=1800, cap_length=2700, cap_width=900,
                   column="500x500", n_ed=1900, bars_x="6H25", links=None)
    res = check(two)
    for rule in ("bursting", "pile-bearing"):
        assert res[("PC2", rule)]["severity"] == "ok"
        assert res[("PC2", rule)]["message"].startswith("Not applicable")
    # the column bearing (node-column) applies to every cap, single-pile caps included
    assert not check(_cap_row("PC1"))[("PC1", "node-column")]["message"].startswith("Not applicable")


def test_pile_bearing_passes(tol):
    # R = 1650 + 1.35 x 25 x 1.35 x 1.35 x 1.0 = 1711.51 kN on pi 750²/4 = 441 786 mm²: 3.874 MPa
    # sqrt(Ac1/Ac0) = min(1 + (1000 - 75)/750, 1350/750) = 1.8 (the plan governs, Fig. 6.29)
    # FRdu/Ac0 = 18.133 x 1.8 = 32.64 MPa (Eq. (6.63))
    r = check(_cap_row("PC1"))[("PC1", "pile-bearing")]
    assert r["severity"] == "ok"
    tol.printed(r["value"], "3.874")
    tol.printed(r["limit"], "32.64")


def test_pile_bearing_fails(tol):
    # 300 mm pile under a 600 x 600 x 700 cap, N = 3000 kN: R = 3000 + 8.51 = 3008.5 kN on 70 686 mm²
    # = 42.56 MPa; sqrt(Ac1/Ac0) = min(1 + 625/300, 600/300) = 2.0: 18.133 x 2 = 36.27 MPa: unsafe
    r = check(_cap_row("PC1", pile_dia=300, cap_length=600, cap_width=600, cap_depth=700, column="300x300",
                       n_ed=3000))[("PC1", "pile-bearing")]
    assert r["severity"] == "unsafe"
    tol.printed(r["value"], "42.56")
    tol.printed(r["limit"], "36.27")


def test_pile_bearing_borderline_and_depth_above_the_pile_head():
    # 600 mm pile, 2000 x 2000 x 700 cap embedded 150: Ac1 over h - 150 = 550 mm (Fig. 6.29):
    # sqrt(Ac1/Ac0) = 1 + 550/600 = 1.9167 (the plan allows 3.33); FRdu/Ac0 = 18.133 x 1.9167 = 34.76 MPa.
    # N that gives exactly that bearing stress: R = 34.756 x pi 600²/4, less the self-weight
    ratio = 1.0 + 550.0 / 600.0
    limit = FCD * ratio
    n_exact = (limit * math.pi * 600.0 ** 2 / 4.0 - sw(2000, 2000, 700)) / 1e3
    base = dict(pile_dia=600, cap_length=2000, cap_width=2000, cap_depth=700, column="600x600", embedment=150)
    at = check(_cap_row("PC1", n_ed=n_exact, **base))[("PC1", "pile-bearing")]
    assert at["severity"] == "ok"
    assert at["limit"] == pytest.approx(limit, rel=1e-12)
    assert at["utilisation"] == pytest.approx(1.0, abs=1e-9)
    over = check(_cap_row("PC1", n_ed=n_exact * 1.01, **base))[("PC1", "pile-bearing")]
    assert over["severity"] == "unsafe"
