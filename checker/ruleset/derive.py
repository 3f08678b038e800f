"""Every derived quantity over the whole schedule, once, vectorised (no per-cap Python loops).

``derive(caps, coords, params)`` turns the canonical schedule frame (DEVELOPERS.md) into a dict of
float arrays, one value per cap, in internal units (N, mm, MPa, degrees). The rule files refer to
these quantities by name; NaN means "not applicable or not computable" for that cap.

Conventions used here (all stated in the working by the report writers):
* Missing moments are zero; a missing ``fyk`` is 500 MPa (brief); a missing ``column_y`` equals
  ``column_x``; missing text fields are ''.
* Pile reactions include the design cap self-weight γG·ρ·L·W·h, applied at the column centre
  (i.e. shared as N/n), and are used for ties, nodes, shear and the bending alternative. The
  punching checks use the column load alone and its share of the reactions.
* Tie forces use the truss of the brief (top node at the column centre unless
  ``tie_node="column-width"``), lever arm = d of the tie's layer.
* ``tie_x``, ``as_req_x``, ``as_tie_x`` and ``util_tie_x`` all belong to the governing tie row
  (the largest T_row/(fyd As_row)); ``av_x`` is taken as at least 0.5d (``av_geom_x`` is the
  distance itself).

Beyond the names the rule files rely on, the working can use: ``n_total`` (N + self-weight),
``table_class``, ``fctk_005``, ``n_bars_x/y`` (bars counted, from the count or the centres),
``as_max_x/y`` (0.04 W h, 0.04 L h; ``as_max`` is the smaller), ``tie_total_x/y`` (sum of the
row forces), ``tie_cut_x/y`` (tension across the column centreline), ``tie_side_3`` and
``as_req_side_3`` (3-pile triangle side ties), ``pile_dia_design``, ``k_x/y``,
``util_shear_x/y``, ``b_enh_x/y``, ``av_geom_x/y``, ``ved_red``, ``rho_punch``, ``fbd_x/y``,
``lb_rqd_x/y``, ``m_face_y``, ``as_bend_y``, ``column_round``. Per-pile arrays are in
``Derived.piles`` and ``stated_diff_what`` (the figure that differs most) in ``Derived.text``.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Mapping, TypeAlias, cast

import numpy as np
import pandas as pd
from numpy.typing import NDArray

from checker import geometry as geo
from checker.calcs import anchorage as anc
from checker.calcs import cracking as crk
from checker.calcs import detailing as det
from checker.calcs import materials as mat
from checker.calcs import punching as pun
from checker.calcs import reactions as rea
from checker.calcs import shear as shr
from checker.calcs import splitting as spl
from checker.calcs import strut_tie as st
from checker.calcs._typing import Floats, Real
from checker.model import FYK_DEFAULT, INPUT_QUANTITIES

Quantities: TypeAlias = dict[str, Floats]
"""Quantity name -> (n,) float array (or, for the per-pile arrays, (n, m))."""
Params: TypeAlias = Mapping[str, float | str]
"""The resolved profile parameters: a number, or one of the parameter's declared words."""

#: The designer's figures compared by ``stated_diff``, in the order of ``stated_diff_what``.
STATED_ITEMS: tuple[str, ...] = (
    "stated_pile_load", "stated_tie_x", "stated_tie_y", "stated_as_x", "stated_as_y", "stated_d",
)


@dataclass
class Derived:
    """Derived quantities of a schedule.

    ``q``: quantity name -> (n,) float array. ``X, Y, mask``: pile arrays (n, m).
    ``piles``: per-pile (n, m) arrays for the working (``R`` reactions [N], ``Hx``, ``Hy`` node
    forces [N], ``theta`` strut angles [deg], ``r`` radial distances [mm], ``face_dist`` column
    face to pile centre [mm]). ``text``: per-cap strings (``stated_diff_what``).
    """

    q: Quantities
    X: np.ndarray
    Y: np.ndarray
    mask: np.ndarray
    piles: Quantities = field(default_factory=dict)
    text: dict[str, np.ndarray] = field(default_factory=dict)

    def frame(self) -> pd.DataFrame:
        """The quantities as a DataFrame (one row per cap)."""
        return pd.DataFrame(self.q)


def _num(caps: pd.DataFrame, name: str, n: int) -> np.ndarray:
    if name not in caps.columns:
        return np.full(n, np.nan)
    return cast(Floats, pd.to_numeric(caps[name], errors="coerce").to_numpy(dtype=float, na_value=np.nan))


def _text(caps: pd.DataFrame, name: str, n: int) -> pd.Series:
    """Lower-cased, stripped text of a column ('' where blank); worked on the distinct values."""
    if name not in caps.columns:
        return pd.Series([""] * n, dtype=object)
    codes, uniq = pd.factorize(caps[name], use_na_sentinel=True)
    clean = np.array([str(u).strip().lower() for u in uniq] + [""], dtype=object)
    return pd.Series(clean[codes], dtype=object)  # code −1 (missing) picks the trailing ''


def _contains(s: pd.Series, *words: str) -> NDArray[np.bool_]:
    codes, uniq = pd.factorize(s)
    hit = np.array([any(w in str(u) for w in words) for u in uniq] + [False], dtype=bool)
    return cast(NDArray[np.bool_], hit[codes])


def _flag(b: Real) -> Floats:
    return np.asarray(b, dtype=bool).astype(float)


class MissingParameter(KeyError):
    """A profile parameter derive needs is not in ``params`` (the profile files are the only source
    of parameter values; there are no defaults here)."""


def _pget(params: Params, name: str) -> float | str:
    try:
        return params[name]
    except KeyError:
        raise MissingParameter(f"derive: the profile parameter '{name}' is missing; pass the resolved profile's "
                               "params (checker.ruleset.loader.load_ruleset(...).profile.params)") from None


def derive(caps: pd.DataFrame, coords: pd.DataFrame | None = None,
           params: dict[str, float | str] | None = None) -> Derived:
    """Compute every quantity for every cap of a canonical schedule frame.

    Args:
        caps: canonical schedule frame (DEVELOPERS.md), one row per cap, internal units
        coords: explicit pile coordinates ``mark, x, y`` [mm], or None
        params: resolved profile parameters (every one derive reads must be there: a missing one
            raises :class:`MissingParameter`; the values live in the profile files only)

    Returns:
        :class:`Derived`
    """
    caps = caps.reset_index(drop=True)
    X, Y, mask = geo.pile_arrays(caps, coords)
    return derive_arrays(caps, X, Y, mask, dict(params or {}))


@dataclass
class Inputs:
    """The schedule's inputs as derive reads them (after the fills of the module docstring).

    ``caps``: the canonical frame; ``n``: its rows; ``f``: input name -> (n,) float array (the
    names of :data:`INPUT_QUANTITIES`); ``rnd``: circular column; ``uncased``: uncased pile;
    ``bent``: bent or hooked bar ends; ``ends_known``: bar ends stated (all (n,) bool).
    """

    caps: pd.DataFrame
    n: int
    f: dict[str, np.ndarray]
    rnd: np.ndarray
    uncased: np.ndarray
    bent: np.ndarray
    ends_known: np.ndarray


def derive_arrays(caps: pd.DataFrame, X: np.ndarray, Y: np.ndarray, mask: np.ndarray,
                  p: Params) -> Derived:
    """derive() with the pile arrays already built (F-ordered (n, m) arrays).

    Each section below reads the inputs, the pile group, the profile parameters and the
    quantities of the sections before it (by name in ``q``), and adds its own to ``q``; per-pile
    arrays go to ``piles``. The order of the sections is the order of the quantities in ``q``.
    """
    inp = _inputs(caps)
    g = geo.PileGroup.of(X, Y, mask)
    q: Quantities = {}
    piles: Quantities = {}
    _geometry(q, piles, inp, g)
    _materials(q, inp, p)
    _reactions(q, piles, inp, g, p)
    _reinforcement(q, inp, p)
    _ties(q, piles, inp, g, p)
    _three_pile_side_ties(q, piles, g)
    _nodes(q, piles, inp, g, p)
    _beam_shear(q, piles, inp, g, p)
    _punching(q, piles, inp, g, p)
    _pile_punching(q, piles, inp, g, p)
    _anchorage(q, inp, g, p)
    _bending(q, piles, inp, g, p)
    _single_pile(q, piles, inp, g)
    # crack control of the bottom steel (EN 1992-1-1 7.3), crack-x / crack-y: steel stress T/As
    # counted of the tie check's truss under the SLS case (self-weight unfactored); on a ULS row
    # qp_ratio x the ULS stress (NaN unless the profile sets the ratio). Two accepted methods, each
    # as the largest steel stress it allows: Tables 7.2N (with Eq. (7.6N)) or 7.3N, either met
    # (7.3.3(2)); and the calculated wk of 7.3.4 against wmax
    q.update(_crack_quantities(inp.caps, q, inp.f, p, inp.n))
    what = _stated_figures(q, inp)
    # inputs as quantities
    for name in INPUT_QUANTITIES:
        q[name] = inp.f[name]
    q["column_round"] = _flag(inp.rnd)
    return Derived(q=q, X=X, Y=Y, mask=mask,
                   piles={k: piles[k] for k in ("R", "R_col", "Hx", "Hy", "theta", "r", "face_dist")},
                   text={"stated_diff_what": what})


def _inputs(caps: pd.DataFrame) -> Inputs:
    """The inputs and their fills: missing moments 0, fyk 500 MPa, column_y = column_x."""
    n = len(caps)
    f = {name: _num(caps, name, n) for name in INPUT_QUANTITIES}
    f["mx_ed"] = np.nan_to_num(f["mx_ed"], nan=0.0)
    f["my_ed"] = np.nan_to_num(f["my_ed"], nan=0.0)
    f["fyk"] = np.where(np.isnan(f["fyk"]), FYK_DEFAULT, f["fyk"])
    f["column_y"] = np.where(np.isnan(f["column_y"]), f["column_x"], f["column_y"])
    if "column_round" in caps.columns:
        rnd = caps["column_round"].fillna(False).astype(bool).to_numpy()
    else:
        rnd = np.zeros(n, dtype=bool)
    ends = _text(caps, "bar_ends", n)
    return Inputs(caps=caps, n=n, f=f, rnd=rnd, uncased=_contains(_text(caps, "pile_type", n), "uncased"),
                  bent=_contains(ends, "bent", "hook"), ends_known=(ends != "").to_numpy(dtype=bool))


def _geometry(q: Quantities, piles: Quantities, inp: Inputs, g: geo.PileGroup) -> None:
    """Pile count, effective depths, spacing, edge distances, radial and column-face distances."""
    f, X, Y, mask = inp.f, g.X, g.Y, g.mask
    L, W, phi_p = f["cap_length"], f["cap_width"], f["pile_dia"]
    d_x = geo.effective_depth_x(f["cap_depth"], f["cover"], f["phi_x"])
    d_y = geo.effective_depth_y(f["cap_depth"], f["cover"], f["phi_x"], f["phi_y"])
    s_min = geo.spacing_min(X, Y, mask)
    r = geo.radial_distances(X, Y, mask)
    piles["r"] = r
    piles["face_dist"] = geo.column_face_distances(X, Y, mask, f["column_x"], f["column_y"], inp.rnd)
    q.update(
        n_piles=geo.n_piles(mask), d_x=d_x, d_y=d_y, d_mean=0.5 * (d_x + d_y), spacing_min=s_min,
        edge_min=geo.edge_min(X, Y, mask, L, W, phi_p),
        plan_overhang=geo.plan_overhang(X, Y, mask, L, W, phi_p),
        r_max=geo.row_max(r, mask), spacing_le_3phi=st.piles_within_three_diameters(s_min, phi_p),
        is_uncased=_flag(inp.uncased), bar_ends_known=_flag(inp.ends_known), bar_bent=_flag(inp.bent),
    )


def _materials(q: Quantities, inp: Inputs, p: Params) -> None:
    """Design strengths of concrete and steel (EN 1992-1-1 3.1, 3.2)."""
    fck = inp.f["fck"]
    gamma_c = float(_pget(p, "gamma_c"))
    values = str(_pget(p, "material_values"))
    fctk = mat.fctk_005(fck, values=values)
    q.update(
        # UK NA 3.1.2(2)P: shear strength of classes above C50/60 taken as C50/60 (vRd,c, vmin)
        fck_shear=mat.fck_for_shear(fck, fck_max=float(_pget(p, "fck_shear_max"))),
        fcd=mat.fcd(fck, alpha_cc=float(_pget(p, "alpha_cc_flex")), gamma_c=gamma_c),
        fcd_shear=mat.fcd(fck, alpha_cc=float(_pget(p, "alpha_cc_shear")), gamma_c=gamma_c),
        fctm=mat.fctm(fck, values=values), fctk_005=fctk,
        fctd=mat.fctd(fctk, alpha_ct=float(_pget(p, "alpha_ct")), gamma_c=gamma_c),
        fyd=mat.fyd(inp.f["fyk"], gamma_s=float(_pget(p, "gamma_s"))),
        nu_prime=mat.nu_prime(fck), nu=mat.nu(fck), table_class=mat.table_listed(fck),
    )


def _reactions(q: Quantities, piles: Quantities, inp: Inputs, g: geo.PileGroup, p: Params) -> None:
    """Self-weight and pile reactions, nominal and with the positional tolerance."""
    f, X, Y, mask = inp.f, g.X, g.Y, g.mask
    N, mx, my = f["n_ed"], f["mx_ed"], f["my_ed"]
    sls = np.zeros(inp.n, dtype=bool)
    if "case_kind" in inp.caps.columns:
        sls = inp.caps["case_kind"].to_numpy(dtype=object) == "SLS"
    gamma_sw = rea.self_weight_factor(sls, gamma_g=np.full(inp.n, float(_pget(p, "gamma_g"))))
    sw = rea.self_weight(f["cap_length"], f["cap_width"], f["cap_depth"], gamma_g=gamma_sw,
                         density=float(_pget(p, "concrete_density")))
    n_tot = N + sw
    R = rea.pile_reactions(X, Y, mask, n_tot, mx, my, _terms=g.terms)
    piles["R"] = R
    piles["R_col"] = rea.pile_reactions(X, Y, mask, N, mx, my, _terms=g.terms)
    e_tol = float(_pget(p, "pile_tolerance"))
    r_tol_max, r_tol_min = rea.tolerance_reactions(X, Y, mask, n_tot, mx, my, tolerance=e_tol)
    # method variant: the shift of e along both axes at once (±e, ±e) (reference decision 10)
    q["r_tol_max_axes"], q["r_tol_min_axes"] = rea.tolerance_reactions(
        X, Y, mask, n_tot, mx, my, tolerance=e_tol, per_axis=True)
    q["tol_direction"] = rea.tolerance_direction(X, Y, mask, n_tot, mx, my, tolerance=e_tol)
    q.update(self_weight=sw, gamma_g_sw=gamma_sw, n_total=n_tot, r_nom_max=geo.row_max(R, mask),
             r_nom_min=geo.row_min(R, mask), r_tol_max=r_tol_max, r_tol_min=r_tol_min)


def _reinforcement(q: Quantities, inp: Inputs, p: Params) -> None:
    """Bars, areas, centres and clear spacings, minimum and maximum steel, cover."""
    f, n = inp.f, inp.n
    L, W, h, cover = f["cap_length"], f["cap_width"], f["cap_depth"], f["cover"]
    phx, phy = f["phi_x"], f["phi_y"]
    nbx = np.where(np.isnan(f["nx"]), det.bar_count_from_centres(W, cover, phx, f["sx"]), f["nx"])
    nby = np.where(np.isnan(f["ny"]), det.bar_count_from_centres(L, cover, phy, f["sy"]), f["ny"])
    as_x = det.bar_area(nbx, phx)
    centres_x = np.where(np.isnan(f["sx"]), det.layer_centres(W, cover, phx, nbx), f["sx"])
    centres_y = np.where(np.isnan(f["sy"]), det.layer_centres(L, cover, phy, nby), f["sy"])
    exp_codes, exp_uniq = pd.factorize(_text(inp.caps, "exposure", n))
    c_dur = det.cmin_dur(np.asarray(exp_uniq, dtype=str))[exp_codes] if n else np.zeros(0)
    q.update(
        n_bars_x=nbx, n_bars_y=nby, phi_bar_min=np.fmin(phx, phy), as_x=as_x, as_y=det.bar_area(nby, phy),
        centres_x=centres_x, centres_y=centres_y,
        clear_x=det.clear_spacing(centres_x, phx), clear_y=det.clear_spacing(centres_y, phy),
        clear_min_req=det.min_clear_spacing(np.fmax(phx, phy), dg=float(_pget(p, "dg"))),
        as_min_x=det.as_min(q["fctm"], f["fyk"], W, q["d_x"]), as_min_y=det.as_min(q["fctm"], f["fyk"], L, q["d_y"]),
        as_max_x=det.as_max(W * h), as_max_y=det.as_max(L * h),
        as_max=det.as_max(np.fmin(W, L) * h),
        cmin_dur=c_dur,
        cmin_b=det.cmin_bond(phx, phy),
        cover_req=det.nominal_cover_required(c_dur, det.cmin_bond(phx, phy),
                                             delta_c_dev=float(_pget(p, "delta_c_dev")),
                                             k1=float(_pget(p, "cover_k1"))),
    )
    # method variant of min-steel-y: across a two-pile cap (no tie along y) the distribution steel,
    # 20 % of the main steel (EN 1992-1-1:2004 9.3.1.1(2), from memory); other caps keep 9.2.1.1(1)
    q["as_min_y_dist"] = np.where(q["n_piles"] == 2, det.distribution_steel(as_x), q["as_min_y"])


def _axis_terms(k: str, result: Mapping[str, object], terms: tuple[tuple[str, str], ...]) -> Quantities:
    """The quantities ``{name}_{k}`` of one direction ``k``, from ``result`` by the (name, key) pairs of ``terms``."""
    return {f"{name}_{k}": cast(Floats, result[key]) for name, key in terms}


#: One direction's tie-check quantities, in the order of q: (name without the _x/_y, key of the
#: :class:`~checker.calcs.strut_tie.TieLayer`, or as_req_cut: the steel for the tension across the centreline).
_TIE_TERMS: tuple[tuple[str, str], ...] = (
    ("util_tie", "util"), ("tie_rows", "rows"), ("tie_total", "t_total"), ("tie_cut", "cut"),
    ("as_req_cut", "as_req_cut"), ("tie_by_layer", "by_layer"), ("util_rows", "util_rows"),
    ("util_cut", "util_cut"), ("tie_shared", "shared"), ("tie_full", "full"), ("as_layer_counted", "as_layer_counted"),
)


def _ties(q: Quantities, piles: Quantities, inp: Inputs, g: geo.PileGroup, p: Params) -> None:
    """Strut-and-tie: the tie rows and the tension across the column centreline, each direction.

    Each direction: its tie rows against the steel counted for them, and the tension across the
    column centreline against the whole layer (statics about the top node, reference decisions 11
    and 12); bars of one direction are never credited to the other. Both the default truss and the
    column-width allowance ((3l² − a²) forms, reference §6) are computed.
    """
    f, X, Y, mask, R = inp.f, g.X, g.Y, g.mask, piles["R"]
    column_width = str(_pget(p, "tie_node")) == "column-width"
    e_x = st.column_second_moment(f["column_x"], inp.rnd)
    e_y = st.column_second_moment(f["column_y"], inp.rnd)
    fyd, phi_p, cover = q["fyd"], f["pile_dia"], f["cover"]
    for sfx, ex, ey in (("", e_x * column_width, e_y * column_width), ("_cw", e_x, e_y)):
        hx = st.pile_node_force(X, R, mask, f["n_ed"], q["d_x"], ex)
        hy = st.pile_node_force(Y, R, mask, f["n_ed"], q["d_y"], ey)
        if not sfx:
            piles["Hx"], piles["Hy"] = hx, hy
        tx = st.tie_layer_check(hx, X, Y, mask, q["as_x"], fyd, phi_p, f["cap_width"], cover)
        ty = st.tie_layer_check(hy, Y, X, mask, q["as_y"], fyd, phi_p, f["cap_length"], cover)
        for k, t in (("x", tx), ("y", ty)):
            q[f"tie_{k}{sfx}"] = t["T"]
            q[f"as_req_{k}{sfx}"] = t["as_req"]
            q[f"as_tie_{k}{sfx}"] = t["as_prov"]
            if sfx:
                continue
            q.update(_axis_terms(k, {**t, "as_req_cut": st.tie_steel_required(t["cut"], fyd)}, _TIE_TERMS))
    q["tie_full_width"] = np.where(np.isnan(q["tie_full_x"]) & np.isnan(q["tie_full_y"]), np.nan,
                                   np.fmin(q["tie_full_x"], q["tie_full_y"]))


def _three_pile_side_ties(q: Quantities, piles: Quantities, g: geo.PileGroup) -> None:
    """Three-pile caps: the ties along the triangle's sides, for the working only (a detail with
    bars along the sides); the orthogonal mesh is checked on its own two directions."""
    q["tie_side_3"] = st.three_pile_side_tie(g.X, g.Y, piles["Hx"], piles["Hy"], g.mask, q["n_piles"])
    q["as_req_side_3"] = st.tie_steel_required(q["tie_side_3"], q["fyd"])


def _nodes(q: Quantities, piles: Quantities, inp: Inputs, g: geo.PileGroup, p: Params) -> None:
    """Strut angles and the stresses and limits of the column and pile nodes (6.5.4)."""
    f, mask, R, npile = inp.f, g.mask, piles["R"], q["n_piles"]
    cx, cy, h, fcd, nu_p = f["column_x"], f["column_y"], f["cap_depth"], q["fcd"], q["nu_prime"]
    theta = st.strut_angle(piles["r"], st.strut_lever_arm(npile, q["d_x"], q["d_y"])[:, None])
    piles["theta"] = theta
    th_min = st.min_inclined_strut_angle(theta, piles["r"], mask)
    q.update(strut_angle_min=th_min, cot_theta_max=st.cot_theta(th_min))
    a_col = st.column_area(cx, cy, inp.rnd)
    dp = st.pile_design_diameter(f["pile_dia"], inp.uncased)
    a_pile = np.pi * dp * dp / 4.0
    k1 = float(_pget(p, "k1_node"))
    k_pile = st.pile_node_factor(npile, k1=k1, k2=float(_pget(p, "k2_node")), k3=float(_pget(p, "k3_node")))
    node_factor = float(_pget(p, "node_factor"))
    # strut face sized with the tie zone (Fig. 6.27): a1 = b = side of the equivalent square of the
    # pile head, u = 2(c + phi_x/2) of the lowest layer
    b_pile = st.equivalent_square_side(a_pile)
    u_tie = st.tie_zone_height(f["cover"], f["phi_x"])
    sig_geom = st.strut_stress_node_geometry(R, b_pile[:, None], b_pile[:, None], u_tie[:, None], theta)
    th_gov = st.governing_strut_angle(sig_geom, theta, mask)
    pla = st.partially_loaded_area_ratio(cx, cy, h, f["cap_length"], f["cap_width"])
    q.update(
        b_pile_node=b_pile, u_tie=u_tie,
        a2_pile_node=np.where(npile >= 2, st.strut_face_width(b_pile, u_tie, th_gov), np.nan),
        sigma_pile_geom=geo.row_max(sig_geom, mask),
        pla_ratio=pla,
        node_col_limit_pla=st.partially_loaded_limit(fcd, pla),
    )
    q.update(
        pile_dia_design=dp,
        sigma_col=st.bearing_stress(f["n_ed"], a_col),
        sigma_col_strut=st.strut_face_stress(f["n_ed"], a_col, st.column_strut_angle(th_min, npile)),
        sigma_pile_bearing=st.bearing_stress(geo.row_max(R, mask), a_pile),
        sigma_pile=geo.row_max(st.strut_face_stress(R, a_pile[:, None], theta), mask),
        k_pile_node=k_pile,
        node_col_limit=node_factor * st.node_limit(k1, nu_p, fcd),
        node_pile_limit=node_factor * st.node_limit(k_pile, nu_p, fcd),
        node_pile_limit_cct=node_factor * st.node_limit(float(_pget(p, "k2_node")), nu_p, fcd),
        node_pile_limit_ctt=node_factor * st.node_limit(float(_pget(p, "k3_node")), nu_p, fcd),
    )


#: One direction's beam-shear quantities, in the order of q: (name without the _x/_y, key of the
#: :class:`~checker.calcs.shear.BeamShear` of the governing section).
_SHEAR_TERMS: tuple[tuple[str, str], ...] = (
    ("ved", "ved"), ("vrd", "vrd"), ("util_shear", "util"), ("av", "av"), ("av_geom", "av_geom"),
    ("beta", "beta"), ("b_enh", "b_enh"), ("ved_max", "ved_max"),
)


def _beam_shear(q: Quantities, piles: Quantities, inp: Inputs, g: geo.PileGroup, p: Params) -> None:
    """Beam shear at the critical sections of each direction (6.2.2), with both av definitions."""
    f, R, mask = inp.f, piles["R"], g.mask
    av_mode = str(_pget(p, "shear_av"))
    crd = float(_pget(p, "crd_c_factor"))
    gamma_c = float(_pget(p, "gamma_c"))
    phi_p = f["pile_dia"]
    for k, coord, across, col, width in (("x", g.X, g.Y, f["column_x"], f["cap_width"]),
                                         ("y", g.Y, g.X, f["column_y"], f["cap_length"])):
        d = q[f"d_{k}"]
        rho = shr.rho_l(q[f"as_{k}"], width, d)
        vrdc = shr.v_rdc(q["fck_shear"], d, rho, gamma_c=gamma_c, crd_c_factor=crd)
        s = shr.beam_shear(coord, across, R, mask, col, phi_p, d, width, vrdc, av_mode=av_mode)
        vmax = shr.v_ed_max(width, d, q["nu"], q["fcd_shear"])
        q[f"rho_{k}"] = rho
        q[f"k_{k}"] = shr.k_size(d)
        q[f"vrdc_{k}"] = vrdc
        q.update(_axis_terms(k, s, _SHEAR_TERMS))
        q[f"vrd_max_{k}"] = np.where(np.isnan(s["ved_max"]), np.nan, vmax)
        # method variant: the other definition of av (reference decision 7)
        other = "clear" if av_mode != "clear" else "inside-pile"
        s2 = shr.beam_shear(coord, across, R, mask, col, phi_p, d, width, vrdc, av_mode=other)
        alt_sfx, own_sfx = ("clear", "inside") if other == "clear" else ("inside", "clear")
        q[f"ved_{k}_{alt_sfx}"], q[f"vrd_{k}_{alt_sfx}"] = s2["ved"], s2["vrd"]
        q[f"ved_{k}_{own_sfx}"], q[f"vrd_{k}_{own_sfx}"] = s["ved"], s["vrd"]


def _punching_scan(inp: Inputs, g: geo.PileGroup, R_col: np.ndarray, d_mean: np.ndarray,
                   vrdc2: np.ndarray) -> tuple[dict[str, Floats], dict[str, Floats]]:
    """The governing control perimeter within 2d, concentric (beta = 1) and with the moments.

    Returns (scan, scan_c): with the moment transfer of Eq. (6.51) on caps with a moment, and the
    concentric scan (the simplified method scales it by beta = 1.15).
    """
    f, X, Y, mask, rnd = inp.f, g.X, g.Y, g.mask, inp.rnd
    N, mx, my, phi_p = f["n_ed"], f["mx_ed"], f["my_ed"], f["pile_dia"]
    cx, cy, L, W = f["column_x"], f["column_y"], f["cap_length"], f["cap_width"]
    scan = pun.governing_perimeter(N, R_col, X, Y, mask, phi_p, cx, cy, rnd, L, W, d_mean, vrdc2)
    moment = (mx != 0) | (my != 0)
    scan_c = scan
    if moment.any():
        mi = np.flatnonzero(moment)
        sm = pun.governing_perimeter(N[mi], R_col[mi], X[mi], Y[mi], mask[mi], phi_p[mi], cx[mi],
                                     cy[mi], rnd[mi], L[mi], W[mi], d_mean[mi], vrdc2[mi],
                                     mx_ed=mx[mi], my_ed=my[mi])
        scan = {k: v.copy() for k, v in scan_c.items()}
        for k in scan:
            scan[k][mi] = sm[k]
    return scan, scan_c


def _punching(q: Quantities, piles: Quantities, inp: Inputs, g: geo.PileGroup, p: Params) -> None:
    """Punching at the column face and the control perimeters within 2d (6.4).

    Every perimeter within 2d (6.4.4(2), reference decision 13): the pile reactions deducted in
    proportion to the pile head area inside each perimeter (common practice), the same share at the
    column perimeter (a = 0) for the column-face check (6.4.5(3)). Moment transfer (issue 15, item
    2): beta of 6.4.3(3) at the column face, Eq. (6.51) with u and W of each perimeter (the moments
    of the load case; MEd reduced by the reactions inside), the simplified beta of 6.4.3(6) as the
    method `simplified-6.4.3-6` (accepted where punching_beta_simplified = 1).
    """
    f, rnd, d_mean = inp.f, inp.rnd, q["d_mean"]
    N, mx, my, cx, cy = f["n_ed"], f["mx_ed"], f["my_ed"], f["column_x"], f["column_y"]
    u0 = pun.column_perimeter(cx, cy, rnd)
    applies = pun.perimeter_applies(g.X, g.Y, g.mask, f["pile_dia"], cx, cy, rnd)
    applies = np.where(np.isnan(d_mean) | np.isnan(q["n_piles"]), np.nan, applies)
    rho2 = pun.rho_two_way(q["rho_x"], q["rho_y"])
    vrdc2 = shr.v_rdc(q["fck_shear"], d_mean, rho2, gamma_c=float(_pget(p, "gamma_c")),
                      crd_c_factor=float(_pget(p, "crd_c_factor")))
    scan, scan_c = _punching_scan(inp, g, piles["R_col"], d_mean, vrdc2)
    dved0 = np.nan_to_num(scan["dv0"], nan=0.0)  # piles unknown: nothing deducted (conservative)
    on = applies == 1.0
    beta0, beta0_src = pun.beta_column(N, mx, my, cx, cy, rnd, d_mean)
    beta_s = float(_pget(p, "beta_simplified"))
    q.update(
        u0=u0, dved0=dved0, ved_red0=N - dved0,
        beta0=beta0, beta0_src=beta0_src,
        punch_ex=pun.load_eccentricity(my, N), punch_ey=pun.load_eccentricity(mx, N),
        k_punch_x=pun.k_moment_column(cx, cy, rnd), k_punch_y=pun.k_moment_column(cy, cx, rnd),
        ved0=pun.shear_stress_column_face(N - dved0, u0, d_mean, beta=beta0),
        ved0_simpl=pun.shear_stress_column_face(N - dved0, u0, d_mean, beta=beta_s),
        vrd_max_punch=pun.v_rd_max(q["nu"], q["fcd_shear"], coeff=float(_pget(p, "vrdmax_coeff"))),
        punch_applies=applies,
        u1=np.where(on, scan["u"], np.nan), a_punch=np.where(on, scan["a"], np.nan),
        a_punch_d=np.where(on, scan["a"] / d_mean, np.nan),
        ved_red=np.where(on, scan["ved_red"], np.nan),
        ved1=np.where(on, scan["ved"], np.nan), vrd1=np.where(on, scan["vrd"], np.nan),
        beta1=np.where(on, scan["beta"], np.nan),
        u1_simpl=np.where(on, scan_c["u"], np.nan), a_punch_simpl=np.where(on, scan_c["a"], np.nan),
        a_punch_d_simpl=np.where(on, scan_c["a"] / d_mean, np.nan),
        ved_red_simpl=np.where(on, scan_c["ved_red"], np.nan),
        ved1_simpl=np.where(on, beta_s * scan_c["ved"], np.nan), vrd1_simpl=np.where(on, scan_c["vrd"], np.nan),
        rho_punch=rho2, vrdc_punch=vrdc2,
    )


def _pile_punching(q: Quantities, piles: Quantities, inp: Inputs, g: geo.PileGroup, p: Params) -> None:
    """Piles near the cap edge punching upward (issue 15, item 4).

    The perimeter at 2d round each pile whose face is within 2d of a cap edge, Figure 6.15 form
    (6.4.2(4)); VEd = the pile's worst reaction with the positional tolerance (as pile-reaction,
    self-weight share included) plus the neighbours' reactions inside, less the column load inside;
    against vRd,c (two-way rho, a = 2d).
    """
    f, X, Y, mask = inp.f, g.X, g.Y, g.mask
    npile, d_mean, vrdc2 = q["n_piles"], q["d_mean"], q["vrdc_punch"]
    r0_tol, swing_tol, _, _ = rea.tolerance_swing(X, Y, mask, q["n_total"], f["mx_ed"], f["my_ed"],
                                                  float(_pget(p, "pile_tolerance")), False, terms=g.terms)
    pp = pun.pile_punching(np.where(mask, r0_tol + swing_tol, np.nan), piles["R"], X, Y, mask, f["pile_dia"],
                           f["column_x"], f["column_y"], inp.rnd, f["n_ed"], q["self_weight"], d_mean,
                           f["cap_length"], f["cap_width"], vrdc2)
    pp_on = (pp["applies"] == 1.0) & (npile >= 2)
    q["pile_punch_applies"] = np.where(np.isnan(d_mean) | np.isnan(npile), np.nan, pp_on.astype(float))
    q.update(
        ved_pile=np.where(pp_on, pp["ved"], np.nan), vrd_pile=np.where(pp_on, vrdc2, np.nan),
        ved_pile_force=np.where(pp_on, pp["ved_force"], np.nan),
        r_pile_punch=np.where(pp_on, pp["reaction"], np.nan),
        dv_pile_col=np.where(pp_on, pp["dv_col"], np.nan), dv_pile_sw=np.where(pp_on, pp["dv_sw"], np.nan),
        dv_pile_piles=np.where(pp_on, pp["dv_piles"], np.nan),
        u_pile=np.where(pp_on, pp["u"], np.nan), u_pile_circle=np.where(pp_on, pp["u_circle"], np.nan),
        rho_pile=np.where(pp_on, pp["rho"], np.nan), pile_punch_edges=np.where(pp_on, pp["near"], np.nan),
        pile_punch_legs=np.where(pp_on, pp["legs"], np.nan),
        x_pile_punch=np.where(pp_on, pp["x"], np.nan), y_pile_punch=np.where(pp_on, pp["y"], np.nan),
    )


def _anchorage(q: Quantities, inp: Inputs, g: geo.PileGroup, p: Params) -> None:
    """Bond strength and the required and available anchorage lengths of the ties (8.4)."""
    f = inp.f
    eta1, alpha_ct = float(_pget(p, "eta1")), float(_pget(p, "alpha_ct"))
    gamma_c, values = float(_pget(p, "gamma_c")), str(_pget(p, "material_values"))
    fck_b = anc.fck_for_bond(f["fck"])  # 8.4.2(2): fctd for bond at no more than C60/75
    fctd_b = mat.fctd(mat.fctk_005(fck_b, values=values), alpha_ct=alpha_ct, gamma_c=gamma_c)
    fbd_x = anc.bond_strength(fctd_b, f["phi_x"], eta1=eta1)
    fbd_y = anc.bond_strength(fctd_b, f["phi_y"], eta1=eta1)
    q.update(fck_bond=fck_b, fctd_bond=fctd_b, fbd=np.fmin(fbd_x, fbd_y), fbd_x=fbd_x, fbd_y=fbd_y)
    cover, h, phi_p = f["cover"], f["cap_depth"], f["pile_dia"]
    for k, phi, fbd_k, half, coord in (("x", f["phi_x"], fbd_x, 0.5 * f["cap_length"], g.X),
                                       ("y", f["phi_y"], fbd_y, 0.5 * f["cap_width"], g.Y)):
        outer = geo.row_max(np.abs(coord), g.mask)
        sig = anc.bar_stress(q[f"tie_{k}"], q[f"as_tie_{k}"], q["fyd"])
        lb_rqd = anc.basic_anchorage_length(phi, sig, fbd_k)
        cd = anc.cd_straight(cover, q[f"clear_{k}"])
        a1 = anc.alpha1(cd, phi, inp.bent)
        a2 = anc.alpha2(cd, phi, inp.bent)
        q[f"sigma_sd_{k}"] = sig
        q[f"lb_rqd_{k}"] = lb_rqd
        q[f"lbd_{k}"] = anc.design_anchorage_length(lb_rqd, phi, a1, a2)
        q[f"lb_avail_{k}"] = anc.available_length(half, cover, outer, phi_p, h, phi, inp.bent)
        # method variant: the other material-value convention (Table 3.1 values or formulas)
        alt = "formula" if values != "formula" else "table"
        fctd_alt = mat.fctd(mat.fctk_005(fck_b, values=alt), alpha_ct=alpha_ct, gamma_c=gamma_c)
        lb_alt = anc.basic_anchorage_length(phi, sig, anc.bond_strength(fctd_alt, phi, eta1=eta1))
        q[f"lbd_{k}_{alt}"] = anc.design_anchorage_length(lb_alt, phi, a1, a2)
        q[f"lbd_{k}_{'formula' if values == 'formula' else 'table'}"] = q[f"lbd_{k}"]


def _bending(q: Quantities, piles: Quantities, inp: Inputs, g: geo.PileGroup, p: Params) -> None:
    """Bending theory, an accepted method of the tie-steel checks (tie-method = bending).

    The cap as a wide beam at the column face (or bending_section_inset × the column width inside
    it), rectangular stress block (3.1.7(3)), against the steel lying over the tie rows.
    """
    f, R, mask = inp.f, piles["R"], g.mask
    fcd, fck, fyd = q["fcd"], f["fck"], q["fyd"]
    inset = float(_pget(p, "bending_section_inset"))
    for k, coord, col, width in (("x", g.X, f["column_x"], f["cap_width"]),
                                 ("y", g.Y, f["column_y"], f["cap_length"])):
        d = q[f"d_{k}"]
        m = det.moment_at_column_face(coord, R, mask, col, inset=inset)
        m = np.where(np.isnan(q["n_piles"]), np.nan, m)
        z = det.lever_arm(m, width, d, fcd, fck)
        has = (m > 0) & np.isfinite(q[f"tie_{k}"])
        q[f"m_face_{k}"] = m
        q[f"z_bend_{k}"] = np.where(has, z, np.nan)
        q[f"as_bend_{k}"] = np.where(has, det.bending_steel(m, width, d, fcd, fck, fyd), np.nan)
        q[f"tie_{k}_bend"] = np.where(has, m / z, np.nan)      # the bar force M/z [N]
        q[f"as_req_{k}_bend"] = q[f"as_bend_{k}"]
        q[f"as_tie_{k}_bend"] = np.where(has, q[f"as_layer_counted_{k}"], np.nan)


def _single_pile(q: Quantities, piles: Quantities, inp: Inputs, g: geo.PileGroup) -> None:
    """Single-pile caps: splitting tie and pile-head bearing (issue 15, item 3).

    EN 1992-1-1:2004 6.5.3(3), Figure 6.25, Eq. (6.58)/(6.59): the column load spreads out from the
    column and gathers into the pile head; in each plan direction a = the loaded width (the column
    side, the pile's design diameter; circles as their equivalent square), b = the cap's plan
    dimension, H = the cap depth; the end with the larger tie governs (column end F = N, pile end
    F = R with the cap self-weight). The tie is carried by closed horizontal links, two legs per set
    across the plane, counted within the splitting zone (checker/calcs/splitting.py). The pile head
    bears on the cap as a partially loaded area (6.7, Eq. (6.63)): Ac0 = the pile head, Ac1 spread
    over the depth above the pile head (h less the embedment) and within the plan.
    """
    f, n, fyd, dp = inp.f, inp.n, q["fyd"], q["pile_dia_design"]
    L, W, h, N = f["cap_length"], f["cap_width"], f["cap_depth"], f["n_ed"]
    single = q["n_piles"] == 1
    n_links, phi_links, s_links = (_num(inp.caps, k, n) for k in ("n_links", "phi_links", "s_links"))
    links_stated = ~np.isnan(phi_links) & ~(np.isnan(n_links) & np.isnan(s_links))
    a_col = st.column_area(f["column_x"], f["column_y"], inp.rnd)
    a_pile_burst = st.equivalent_square_side(np.pi * dp * dp / 4.0)
    r_single = geo.row_max(piles["R"], g.mask)
    q["links_stated"] = _flag(links_stated)
    q["n_links"], q["phi_links"], q["s_links"] = n_links, phi_links, s_links
    q["a_burst_pile"] = np.where(single, a_pile_burst, np.nan)
    for k, col, b in (("x", f["column_x"], L), ("y", f["column_y"], W)):
        a_col_k = st.column_loaded_width(col, a_col, inp.rnd)
        t_col = spl.splitting_tie(N, a_col_k, b, h)
        t_pile = spl.splitting_tie(r_single, a_pile_burst, b, h)
        t = spl.governing_splitting_tie(t_col, t_pile)
        zone = spl.splitting_zone_depth(b, h)
        sets = spl.link_sets_in_zone(zone, n_links, s_links)
        as_links = np.where(links_stated, spl.link_area_across_plane(sets, phi_links), 0.0)
        q[f"burst_full_{k}"] = np.where(single, spl.full_discontinuity(b, h), np.nan)
        q[f"a_burst_col_{k}"] = np.where(single, a_col_k, np.nan)
        q[f"tie_burst_col_{k}"] = np.where(single, t_col, np.nan)
        q[f"tie_burst_pile_{k}"] = np.where(single, t_pile, np.nan)
        q[f"tie_burst_{k}"] = np.where(single, t, np.nan)
        q[f"as_req_burst_{k}"] = np.where(single, st.tie_steel_required(t, fyd), np.nan)
        q[f"zone_burst_{k}"] = np.where(single, zone, np.nan)
        q[f"link_sets_{k}"] = np.where(single & links_stated, sets, np.nan)
        q[f"as_links_{k}"] = np.where(single, as_links, np.nan)
    h_above = h - f["embedment"]          # no embedment given: a query, never an ok on h alone
    pla_pile = st.partially_loaded_area_ratio(dp, dp, h_above, L, W)
    q["h_above_pile"] = np.where(single, h_above, np.nan)
    q["pla_ratio_pile"] = np.where(single, pla_pile, np.nan)
    q["pile_bearing_limit"] = np.where(single, st.partially_loaded_limit(q["fcd"], pla_pile), np.nan)


def _stated_figures(q: Quantities, inp: Inputs) -> np.ndarray:
    """The designer's figures against the re-check: ``stated_diff`` and the figure that differs most.

    A schedule's single "d" is compared with the mean of the two layers' effective depths (they
    differ by about one bar diameter, well inside the tolerance, so either layer's d also agrees).
    """
    q["d_mean"] = 0.5 * (q["d_x"] + q["d_y"])
    checks = {
        "stated_pile_load": q["r_nom_max"],
        "stated_tie_x": q["tie_x"],
        "stated_tie_y": q["tie_y"],
        "stated_as_x": q["as_req_x"],
        "stated_as_y": q["as_req_y"],
        "stated_d": q["d_mean"],
    }
    diffs = np.stack([_rel_diff(inp.f[name], checks[name]) for name in STATED_ITEMS], axis=1)
    any_d = ~np.all(np.isnan(diffs), axis=1)
    worst = np.argmax(np.where(np.isnan(diffs), -np.inf, diffs), axis=1)
    q["stated_diff"] = np.where(any_d, np.max(np.where(np.isnan(diffs), -np.inf, diffs), axis=1),
                                np.nan)
    return np.where(any_d, np.asarray(STATED_ITEMS, dtype=object)[worst], "")  # text, not a quantity


def _crack_quantities(caps: pd.DataFrame, q: Quantities, f: Quantities, p: Params, n: int) -> Quantities:
    """Crack control of the bottom steel (EN 1992-1-1:2004 7.3): the quantities of crack-x/crack-y.

    Per layer k (x: the lowest, cover c; y: the second, cover c + phi_x): sigma_sls_k = T/As of the
    tie check (the governing row or the whole layer, whichever it reports), sigma_qp_k the stress the
    check uses (the SLS case's own, or qp_ratio x the ULS stress on a ULS row), the Table 7.2N/7.3N
    limit (either table), the calculated-width limit, and wk at sigma_qp_k.
    """
    out: dict[str, np.ndarray] = {}
    ratio = float(_pget(p, "qp_ratio"))
    sls = np.zeros(n, bool)
    if "case_kind" in caps.columns:
        sls = caps["case_kind"].to_numpy(dtype=object) == "SLS"
    exp_codes, exp_uniq = pd.factorize(_text(caps, "exposure", n))
    wmax_u = crk.wmax_exposure(np.asarray(exp_uniq, dtype=str), wmax_x0=float(_pget(p, "wmax_x0")),
                               wmax_other=float(_pget(p, "wmax_other")))
    wmax = wmax_u[exp_codes] if n else np.zeros(0)
    es = float(_pget(p, "es"))
    kt = float(_pget(p, "crack_kt"))
    ks = {k: float(_pget(p, f"crack_{k}")) for k in ("k1", "k2", "k3", "k4")}
    fct = q["fctm"]
    alpha_e = es / mat.ecm(f["fck"], values=str(_pget(p, "material_values")))
    h = f["cap_depth"]
    out.update(wmax=wmax, alpha_e=alpha_e, fct_eff=fct)
    for k, d, width, as_l, phi, centres, c in (
            ("x", q["d_x"], f["cap_width"], q["as_x"], f["phi_x"], q["centres_x"], f["cover"]),
            ("y", q["d_y"], f["cap_length"], q["as_y"], f["phi_y"], q["centres_y"], f["cover"] + f["phi_x"])):
        sig = crk.steel_stress_service(q[f"tie_{k}"], q[f"as_tie_{k}"])
        sig = np.where(q[f"tie_{k}"] > 0, sig, np.nan)
        factor = crk.phi_factor_bending(fct, h, d)
        lim_phi = crk.stress_limit_phi(phi, wmax, factor)
        lim_s = crk.stress_limit_spacing(centres, wmax)
        x = crk.neutral_axis_cracked(d, as_l / (width * d), alpha_e)
        hce = crk.hc_eff(h, d, x)
        rho = crk.rho_p_eff(as_l, width * hce)
        close = centres <= crk.close_centres_limit(c, phi) * (1 + 1e-9)
        sr = np.where(close, crk.sr_max_close(c, phi, rho, **ks), crk.sr_max_far(h, x))
        sig_qp = np.where(sls, sig, ratio * sig)
        eps = crk.strain_difference(sig_qp, alpha_e, rho, fct, kt=kt, es=es)
        out.update({
            f"sigma_sls_{k}": sig, f"sigma_qp_{k}": sig_qp,
            f"crack_phi_factor_{k}": factor, f"crack_phi_star_{k}": phi / factor,
            f"crack_sigma_phi_{k}": lim_phi, f"crack_sigma_s_{k}": lim_s,
            f"crack_limit_{k}": np.fmax(lim_phi, lim_s),
            f"x_cr_{k}": x, f"hc_ef_{k}": hce, f"rho_p_eff_{k}": rho, f"crack_c_{k}": np.asarray(c, dtype=float),
            f"crack_close_{k}": crk.close_centres_limit(c, phi), f"sr_max_{k}": sr,
            f"crack_limit_calc_{k}": crk.stress_limit_crack_width(wmax, sr, alpha_e, rho, fct, kt=kt, es=es),
            f"eps_crack_{k}": eps, f"wk_{k}": crk.crack_width(sr, eps),
        })
    return out


def _rel_diff(stated: np.ndarray, checked: np.ndarray) -> np.ndarray:
    """|stated − checked|/|checked|; NaN where either is missing or the re-check is zero."""
    ok = np.isfinite(stated) & np.isfinite(checked) & (np.abs(checked) > 0)
    return np.where(ok, np.abs(stated - checked) / np.where(ok, np.abs(checked), 1.0), np.nan)
