"""The quantities a rule file may name: schedule fields and derived quantities (internal units).

``checker.ruleset.derive.derive`` computes every one of them over the whole schedule; a meta-test
checks that it does. Rule files are validated against this catalogue when they load, so a typo in
a rule file is refused with the rule id before any schedule is read.
"""

from __future__ import annotations

from checker.model import FIELDS as MODEL_FIELDS
from checker.units import FROM_INTERNAL

DERIVED: dict[str, tuple[str, str]] = {
    "n_piles": ("count", "number of piles in the group (layout or explicit coordinates)"),
    "d_x": ("mm", "effective depth of the x layer, h - c - phi_x/2"),
    "d_y": ("mm", "effective depth of the y layer, h - c - phi_x - phi_y/2"),
    "d_mean": ("mm", "mean effective depth"),
    "spacing_min": ("mm", "closest pile centres"),
    "edge_min": ("mm", "least distance from a pile face to the cap edge"),
    "plan_overhang": ("mm", "how far a pile lies outside the cap outline"),
    "r_max": ("mm", "largest distance from the column centre to a pile centre"),
    "strut_angle_min": ("degrees", "flattest strut from the column node to a pile node"),
    "cot_theta_max": ("", "cot of the flattest strut angle"),
    "phi_bar_min": ("mm", "smallest bar diameter of the bottom layers"),
    "as_x": ("mm²", "area of the bars along x"),
    "as_y": ("mm²", "area of the bars along y"),
    "centres_x": ("mm", "centres of the bars along x"),
    "centres_y": ("mm", "centres of the bars along y"),
    "clear_x": ("mm", "clear spacing of the bars along x"),
    "clear_y": ("mm", "clear spacing of the bars along y"),
    "clear_min_req": ("mm", "least clear spacing required, 8.2(2)"),
    "as_min_x": ("mm²", "minimum steel along x, 9.2.1.1(1)"),
    "as_min_y": ("mm²", "minimum steel along y, 9.2.1.1(1)"),
    "as_max": ("mm²", "maximum steel, 0.04 Ac"),
    "cover_req": ("mm", "least nominal cover required"),
    "cmin_dur": ("mm", "minimum cover for durability of the exposure class"),
    "fck": ("MPa", "characteristic cylinder strength"),
    "fcd": ("MPa", "design compressive strength (alpha_cc_flex)"),
    "fcd_shear": ("MPa", "design compressive strength (alpha_cc_shear)"),
    "fctm": ("MPa", "mean tensile strength"),
    "fctd": ("MPa", "design tensile strength"),
    "fyd": ("MPa", "design yield strength of the bars"),
    "nu_prime": ("", "nu' = 1 - fck/250"),
    "nu": ("", "nu = 0.6 (1 - fck/250)"),
    "self_weight": ("N", "factored self-weight of the cap"),
    "gamma_g_sw": ("", "partial factor on the cap self-weight of the load case (gamma_G ULS, 1.0 SLS)"),
    "r_nom_max": ("N", "largest pile reaction, nominal positions, self-weight included"),
    "r_nom_min": ("N", "smallest pile reaction, nominal positions, self-weight included"),
    "r_tol_max": ("N", "largest pile reaction with the piles displaced by the tolerance"),
    "r_tol_min": ("N", "smallest pile reaction with the piles displaced by the tolerance"),
    "r_tol_max_axes": ("N", "largest pile reaction with the group shifted by the tolerance along both axes"),
    "r_tol_min_axes": ("N", "smallest pile reaction with the group shifted by the tolerance along both axes"),
    "tol_direction": ("degrees", "direction of the group shift that loads the worst pile most"),
    "tie_x": ("N", "governing tie force along x"),
    "tie_y": ("N", "governing tie force along y"),
    "as_req_x": ("mm²", "steel required for the governing x tie"),
    "as_req_y": ("mm²", "steel required for the governing y tie"),
    "as_tie_x": ("mm²", "steel counted for the governing x tie"),
    "as_tie_y": ("mm²", "steel counted for the governing y tie"),
    "util_tie_x": ("", "utilisation of the governing x tie"),
    "util_tie_y": ("", "utilisation of the governing y tie"),
    "tie_rows_x": ("count", "number of x tie rows"),
    "tie_rows_y": ("count", "number of y tie rows"),
    "sigma_col": ("MPa", "column node bearing stress"),
    "sigma_col_strut": ("MPa", "column node stress on the flattest strut face"),
    "sigma_pile": ("MPa", "governing pile node stress on the strut face"),
    "sigma_pile_bearing": ("MPa", "pile node bearing stress"),
    "k_pile_node": ("", "node factor of the pile node (k2 CCT or k3 CTT)"),
    "node_col_limit": ("MPa", "column node limit k1 nu' fcd"),
    "node_pile_limit": ("MPa", "pile node limit k nu' fcd"),
    "ved_x": ("N", "shear on the governing x section"),
    "vrd_x": ("N", "shear resistance of the governing x section"),
    "ved_max_x": ("N", "unreduced shear on the governing x section"),
    "vrd_max_x": ("N", "0.5 b d nu fcd on the x section"),
    "av_x": ("mm", "shear span of the governing x section"),
    "beta_x": ("", "beta = av/2d of the governing x section"),
    "vrdc_x": ("MPa", "vRd,c of the x sections"),
    "rho_x": ("", "rho_l of the x sections"),
    "ved_y": ("N", "shear on the governing y section"),
    "vrd_y": ("N", "shear resistance of the governing y section"),
    "ved_max_y": ("N", "unreduced shear on the governing y section"),
    "vrd_max_y": ("N", "0.5 b d nu fcd on the y section"),
    "av_y": ("mm", "shear span of the governing y section"),
    "beta_y": ("", "beta = av/2d of the governing y section"),
    "vrdc_y": ("MPa", "vRd,c of the y sections"),
    "rho_y": ("", "rho_l of the y sections"),
    "u0": ("mm", "column perimeter"),
    "ved0": ("MPa", "shear stress at the column perimeter"),
    "vrd_max_punch": ("MPa", "vRd,max at the column perimeter"),
    "punch_applies": ("", "1 where a pile face lies outside the column face (a pile not entirely under it)"),
    "u1": ("mm", "governing control perimeter within 2d (truncated by the cap edges)"),
    "ved1": ("MPa", "shear stress on the governing control perimeter"),
    "vrd1": ("MPa", "resistance on the governing control perimeter, vRd,c 2d/a"),
    "a_punch": ("mm", "distance of the governing control perimeter from the column face"),
    "a_punch_d": ("", "a/d of the governing control perimeter"),
    "ved_red": ("N", "VEd,red on the governing control perimeter"),
    "dved0": ("N", "pile reactions deducted inside the column perimeter (area share under the column)"),
    "ved_red0": ("N", "column load less the reactions deducted inside the column perimeter"),
    "vrdc_punch": ("MPa", "vRd,c with the two-way rho (at least vmin)"),
    "rho_punch": ("", "two-way rho_l = sqrt(rho_x rho_y) <= 0.02"),
    "beta0": ("", "beta at the column face and the basic perimeter, 6.4.3(3) (1.0 without moments)"),
    "beta0_src": ("", "where beta0 comes from: 0 no moment, 1 Eq. (6.39), 2 Eq. (6.42), 3 Eq. (6.43)"),
    "punch_ex": ("mm", "eccentricity of the column load along x, |My|/VEd"),
    "punch_ey": ("mm", "eccentricity of the column load along y, |Mx|/VEd"),
    "k_punch_x": ("", "k of Table 6.1 for an eccentricity along x (c1 = cx)"),
    "k_punch_y": ("", "k of Table 6.1 for an eccentricity along y (c1 = cy)"),
    "ved0_simpl": ("MPa", "shear stress at the column perimeter with the simplified beta of 6.4.3(6)"),
    "beta1": ("", "beta on the governing control perimeter, vEd u d/VEd,red (Eq. (6.51))"),
    "u1_simpl": ("mm", "governing control perimeter, simplified beta (concentric scan)"),
    "a_punch_simpl": ("mm", "distance of the governing control perimeter, simplified beta"),
    "a_punch_d_simpl": ("", "a/d of the governing control perimeter, simplified beta"),
    "ved_red_simpl": ("N", "VEd,red on the governing control perimeter, simplified beta"),
    "ved1_simpl": ("MPa", "shear stress on the governing control perimeter, simplified beta of 6.4.3(6)"),
    "vrd1_simpl": ("MPa", "resistance on the governing control perimeter, simplified beta"),
    "pile_punch_applies": ("", "1 where a pile face lies within 2d of a cap edge (2 or more piles)"),
    "ved_pile": ("MPa", "shear stress on the perimeter at 2d round the governing edge or corner pile"),
    "vrd_pile": ("MPa", "vRd,c on the perimeter round the pile (two-way rho, a = 2d)"),
    "ved_pile_force": ("N", "net upward force inside the perimeter round the governing pile"),
    "r_pile_punch": ("N", "worst reaction of the governing pile with the positional tolerance"),
    "dv_pile_col": ("N", "column load inside the perimeter round the governing pile"),
    "dv_pile_sw": ("N", "cap self-weight inside the perimeter round the governing pile"),
    "dv_pile_piles": ("N", "neighbouring piles' reactions inside the perimeter round the governing pile"),
    "u_pile": ("mm", "perimeter at 2d round the governing pile, cut by the cap edges (Figure 6.15)"),
    "u_pile_circle": ("mm", "circle at 2d round the governing pile, truncated by the cap edges"),
    "rho_pile": ("mm", "radius of the perimeter round the pile, phi/2 + 2d"),
    "pile_punch_edges": ("count", "cap edges within 2d of the governing pile's face"),
    "pile_punch_legs": ("count", "straight legs of the perimeter to the cap edges (mm of u per mm of overhang)"),
    "x_pile_punch": ("mm", "x of the governing pile centre"),
    "y_pile_punch": ("mm", "y of the governing pile centre"),
    "fbd": ("MPa", "design bond strength"),
    "lbd_x": ("mm", "design anchorage length of the x bars"),
    "lb_avail_x": ("mm", "anchorage length available to the x bars"),
    "lbd_y": ("mm", "design anchorage length of the y bars"),
    "lb_avail_y": ("mm", "anchorage length available to the y bars"),
    "sigma_sd_x": ("MPa", "bar stress at the start of the x anchorage"),
    "sigma_sd_y": ("MPa", "bar stress at the start of the y anchorage"),
    "bar_ends_known": ("", "1 where the bar end shape is stated"),
    "bar_bent": ("", "1 where the bar ends are bent up or hooked"),
    "spacing_le_3phi": ("", "1 where the pile spacing is at most 3 pile diameters"),
    "stated_diff": ("", "largest relative difference of a stated figure from the re-check"),
    "is_uncased": ("", "1 for uncased cast-in-place piles (2.3.4.2(2))"),
    "m_face_x": ("N·mm", "bending moment at the bending section along x (bending theory)"),
    "as_bend_x": ("mm²", "x steel required by bending theory"),
    "m_face_y": ("N·mm", "bending moment at the bending section along y (bending theory)"),
    "as_bend_y": ("mm²", "y steel required by bending theory"),
    "z_bend_x": ("mm", "lever arm of the x bars by bending theory (3.1.7(3), at most 0.95 d)"),
    "z_bend_y": ("mm", "lever arm of the y bars by bending theory (3.1.7(3), at most 0.95 d)"),
    "tie_x_bend": ("N", "x bar force M/z by bending theory"),
    "tie_y_bend": ("N", "y bar force M/z by bending theory"),
    "as_req_x_bend": ("mm²", "x steel required by bending theory"),
    "as_req_y_bend": ("mm²", "y steel required by bending theory"),
    "as_tie_x_bend": ("mm²", "x steel counted by bending theory (over the tie rows)"),
    "as_tie_y_bend": ("mm²", "y steel counted by bending theory (over the tie rows)"),
    "as_layer_counted_x": ("mm²", "x steel lying over the tie rows (the whole layer where shared)"),
    "as_layer_counted_y": ("mm²", "y steel lying over the tie rows (the whole layer where shared)"),
    "tie_side_3": ("N", "three-pile caps: the largest tie along a side of the triangle (working only)"),
    "as_req_side_3": ("mm²", "three-pile caps: steel for the side tie (working only)"),
    "tie_cut_x": ("N", "total tension across the column centreline, x layer"),
    "tie_cut_y": ("N", "total tension across the column centreline, y layer"),
    "as_req_cut_x": ("mm²", "x steel needed for the tension across the column centreline"),
    "as_req_cut_y": ("mm²", "y steel needed for the tension across the column centreline"),
    "util_rows_x": ("", "utilisation of the governing x tie row"),
    "util_rows_y": ("", "utilisation of the governing y tie row"),
    "util_cut_x": ("", "utilisation of the whole x layer by the tension across the column centreline"),
    "util_cut_y": ("", "utilisation of the whole y layer by the tension across the column centreline"),
    "tie_by_layer_x": ("", "1 where the whole-layer condition governs the x tie"),
    "tie_by_layer_y": ("", "1 where the whole-layer condition governs the y tie"),
    "tie_shared_x": ("", "1 where the x tie rows are at most 3 pile diameters apart (layer shared)"),
    "tie_shared_y": ("", "1 where the y tie rows are at most 3 pile diameters apart (layer shared)"),
    "tie_full_x": ("", "1 where every x tie row counts the whole x layer"),
    "tie_full_y": ("", "1 where every y tie row counts the whole y layer"),
    "tie_full_width": ("", "1 where every tie row of both directions counts its whole layer"),
    "tie_x_cw": ("N", "x tie force with the column-width allowance"),
    "tie_y_cw": ("N", "y tie force with the column-width allowance"),
    "as_req_x_cw": ("mm²", "x tie steel required with the column-width allowance"),
    "as_req_y_cw": ("mm²", "y tie steel required with the column-width allowance"),
    "as_tie_x_cw": ("mm²", "x tie steel counted (column-width allowance)"),
    "as_tie_y_cw": ("mm²", "y tie steel counted (column-width allowance)"),
    "node_pile_limit_cct": ("MPa", "pile node limit as a CCT node, k2 nu' fcd"),
    "node_pile_limit_ctt": ("MPa", "pile node limit as a CTT node, k3 nu' fcd"),
    "ved_x_inside": ("N", "shear on the x section, av to 0.2 phi inside the pile face"),
    "vrd_x_inside": ("N", "resistance of the x section, av to 0.2 phi inside the pile face"),
    "ved_x_clear": ("N", "shear on the x section, av = clear distance to the pile face"),
    "vrd_x_clear": ("N", "resistance of the x section, av = clear distance to the pile face"),
    "ved_y_inside": ("N", "shear on the y section, av to 0.2 phi inside the pile face"),
    "vrd_y_inside": ("N", "resistance of the y section, av to 0.2 phi inside the pile face"),
    "ved_y_clear": ("N", "shear on the y section, av = clear distance to the pile face"),
    "vrd_y_clear": ("N", "resistance of the y section, av = clear distance to the pile face"),
    "lbd_x_table": ("mm", "lbd of the x bars with Table 3.1 values"),
    "lbd_x_formula": ("mm", "lbd of the x bars with the Table 3.1 formulas"),
    "lbd_y_table": ("mm", "lbd of the y bars with Table 3.1 values"),
    "lbd_y_formula": ("mm", "lbd of the y bars with the Table 3.1 formulas"),
    "pile_dia_design": ("mm", "pile diameter used for the node area (2.3.4.2(2) for uncased piles)"),
    "cmin_b": ("mm", "minimum cover for bond, the lowest bar (and c >= phi_y - phi_x for the second layer)"),
    "as_min_y_dist": ("mm²", "minimum y steel as distribution steel, 20 % of the x steel for two-pile caps"),
    "sigma_pile_geom": ("MPa", "governing pile node strut stress sized with the tie zone, Fig. 6.27"),
    "b_pile_node": ("mm", "side of the square of the pile head area (node width a1 = b)"),
    "u_tie": ("mm", "height of the tie zone, 2 (c + phi_x/2)"),
    "a2_pile_node": ("mm", "strut face width a1 sin theta + u cos theta at the governing pile"),
    "pla_ratio": ("", "sqrt(Ac1/Ac0) of the column on the cap, 6.7"),
    "node_col_limit_pla": ("MPa", "column bearing limit on a partially loaded area, fcd sqrt(Ac1/Ac0) <= 3 fcd"),
    "fck_shear": ("MPa", "fck used in vRd,c and vmin (UK NA: at most C50/60)"),
    "fck_bond": ("MPa", "fck at which fctd is taken for bond (at most C60/75, 8.4.2(2))"),
    "fctd_bond": ("MPa", "design tensile strength used for bond"),
    # crack control of the bottom steel (EN 1992-1-1:2004 7.3), crack-x / crack-y: the layer terms below
    "wmax": ("mm", "limiting crack width of the exposure class, Table 7.1N (UK NA Table NA.4)"),
    "alpha_e": ("", "modular ratio Es/Ecm, 7.3.4(2)"),
    "fct_eff": ("MPa", "tensile strength when cracking is expected, fctm, 7.3.2(2)"),
}


def _crack_layer(a: str, layer: str) -> dict[str, tuple[str, str]]:
    """The crack-control quantities of one bottom layer: ``a`` its axis, ``layer`` which layer it is."""
    bars = f"{a} bars ({layer})"
    terms = [
        ("sigma_sls", "MPa", f"stress in the {bars} under the case's loads, T/As counted (tie check's truss)"),
        ("sigma_qp", "MPa", f"stress in the {bars} under the quasi-permanent load (SLS case, or qp_ratio x ULS)"),
        ("crack_phi_factor", "", f"phi_s/phi*_s of Eq. (7.6N), (fct,eff/2.9) kc hcr/(2(h - d)), {bars}"),
        ("crack_phi_star", "mm", f"bar diameter read against Table 7.2N, phi/(phi_s/phi*_s), {bars}"),
        ("crack_sigma_phi", "MPa", f"largest steel stress at which the {bars} meet Table 7.2N"),
        ("crack_sigma_s", "MPa", f"largest steel stress at which the centres of the {bars} meet Table 7.3N"),
        ("crack_limit", "MPa", f"largest steel stress at which Table 7.2N or Table 7.3N is met, {bars}"),
        ("x_cr", "mm", f"neutral axis depth of the cracked section, {bars}"),
        ("hc_ef", "mm", f"hc,ef = min(2.5(h - d), (h - x)/3, h/2), 7.3.2(3), {bars}"),
        ("rho_p_eff", "", f"rho_p,eff = As/(b hc,ef), Eq. (7.10), {bars}"),
        ("crack_c", "mm", f"cover to the {bars}"),
        ("crack_close", "mm", f"5(c + phi/2): the largest centres for Eq. (7.11), {bars}"),
        ("sr_max", "mm", f"maximum crack spacing, Eq. (7.11) or (7.14), {bars}"),
        ("crack_limit_calc", "MPa", f"largest steel stress at which the calculated wk meets wmax, {bars}"),
        ("eps_crack", "", f"eps_sm - eps_cm at the quasi-permanent stress, Eq. (7.9), {bars}"),
        ("wk", "mm", f"calculated crack width at the quasi-permanent stress, Eq. (7.8), {bars}"),
    ]
    return {f"{name}_{a}": (unit, meaning) for name, unit, meaning in terms}


DERIVED.update(_crack_layer("x", "the lowest layer"))
DERIVED.update(_crack_layer("y", "the second layer"))

# single-pile caps (issue 15, item 3): the splitting tie under the column and the pile-head bearing
DERIVED.update({
    "links_stated": ("", "1 where the schedule states horizontal links"),
    "a_burst_pile": ("mm", "loaded width of the pile head for the splitting tie (circle: equivalent square)"),
    "a_burst_col_x": ("mm", "loaded width of the column along x for the splitting tie (circle: equivalent square)"),
    "a_burst_col_y": ("mm", "loaded width of the column along y for the splitting tie (circle: equivalent square)"),
    "burst_full_x": ("", "1 where the splitting along x is a full discontinuity (b = L > H/2, Eq. 6.59), 0 partial"),
    "burst_full_y": ("", "1 where the splitting along y is a full discontinuity (b = W > H/2, Eq. 6.59), 0 partial"),
    "tie_burst_col_x": ("N", "splitting tie along x from the column end, F = N"),
    "tie_burst_col_y": ("N", "splitting tie along y from the column end, F = N"),
    "tie_burst_pile_x": ("N", "splitting tie along x from the pile end, F = R"),
    "tie_burst_pile_y": ("N", "splitting tie along y from the pile end, F = R"),
    "tie_burst_x": ("N", "governing splitting tie across the plane normal to x, 6.5.3(3)"),
    "tie_burst_y": ("N", "governing splitting tie across the plane normal to y, 6.5.3(3)"),
    "as_req_burst_x": ("mm²", "link steel required across the plane normal to x, T/fyd"),
    "as_req_burst_y": ("mm²", "link steel required across the plane normal to y, T/fyd"),
    "zone_burst_x": ("mm", "depth of the splitting zone whose links count, along x"),
    "zone_burst_y": ("mm", "depth of the splitting zone whose links count, along y"),
    "link_sets_x": ("count", "link sets counted within the splitting zone, along x"),
    "link_sets_y": ("count", "link sets counted within the splitting zone, along y"),
    "as_links_x": ("mm²", "link steel crossing the plane normal to x (2 legs per set; 0 where none stated)"),
    "as_links_y": ("mm²", "link steel crossing the plane normal to y (2 legs per set; 0 where none stated)"),
    "h_above_pile": ("mm", "depth above the pile head, h less the embedment (none given: h)"),
    "pla_ratio_pile": ("", "sqrt(Ac1/Ac0) of the pile head on the cap underside, 6.7"),
    "pile_bearing_limit": ("MPa", "pile-head bearing limit on the cap, fcd sqrt(Ac1/Ac0) <= 3 fcd"),
})

#: The schedule fields a rule may name: the numeric fields of the model (:data:`checker.model.FIELDS`,
#: name: (internal unit, meaning)) that are not derived (``fck`` comes from the concrete class).
FIELDS: dict[str, tuple[str, str]] = {
    name: (spec.unit, spec.meaning) for name, spec in MODEL_FIELDS.items()
    if spec.kind in ("float", "int") and name not in DERIVED
}

QUANTITIES: dict[str, tuple[str, str]] = {**FIELDS, **DERIVED}

#: Quantities that do not depend on the loads of a load case (geometry, materials, detailing). A rule
#: that names only these (and profile parameters) gives the same result in every case and is evaluated
#: once per cap; a rule naming anything else is evaluated for every load case (issue 11). A quantity
#: missing here is treated as load-dependent, the safe side; a meta-test probes derive to keep the list
#: honest (tests/test_load_cases.py).
LOAD_INDEPENDENT: frozenset[str] = frozenset({
    "piles", "pile_dia", "pile_spacing", "cap_length", "cap_width", "cap_depth", "column_x", "column_y",
    "fyk", "cover", "embedment", "pile_capacity", "nx", "phi_x", "sx", "ny", "phi_y", "sy",
    "stated_pile_load", "stated_tie_x", "stated_tie_y", "stated_as_x", "stated_as_y",
    "n_piles", "d_x", "d_y", "d_mean", "spacing_min", "edge_min", "plan_overhang", "r_max", "strut_angle_min",
    "cot_theta_max", "phi_bar_min", "as_x", "as_y", "centres_x", "centres_y", "clear_x", "clear_y",
    "clear_min_req", "as_min_x", "as_min_y", "as_min_y_dist", "as_max", "as_max_x", "as_max_y", "cover_req",
    "cmin_dur", "cmin_b", "fck", "fcd", "fcd_shear", "fck_shear", "fctm", "fctk_005", "fctd", "fyd", "nu_prime",
    "nu", "table_class", "k_pile_node", "node_col_limit", "node_col_limit_pla", "node_pile_limit",
    "node_pile_limit_cct", "node_pile_limit_ctt", "pla_ratio", "b_pile_node", "u_tie", "pile_dia_design",
    "vrdc_x", "vrdc_y", "rho_x", "rho_y", "k_x", "k_y", "av_geom_x", "av_geom_y", "u0", "vrd_max_punch",
    "punch_applies", "rho_punch", "fbd", "fbd_x", "fbd_y", "fck_bond", "fctd_bond", "lb_avail_x",
    "lb_avail_y", "bar_ends_known", "bar_bent", "spacing_le_3phi", "is_uncased", "column_round",
    # crack control (7.3): the limits and section properties; the stresses and wk depend on the loads
    "wmax", "alpha_e", "fct_eff",
    "crack_phi_factor_x", "crack_phi_star_x", "crack_sigma_phi_x", "crack_sigma_s_x", "crack_limit_x", "x_cr_x",
    "hc_ef_x", "rho_p_eff_x", "crack_c_x", "crack_close_x", "sr_max_x", "crack_limit_calc_x",
    "crack_phi_factor_y", "crack_phi_star_y", "crack_sigma_phi_y", "crack_sigma_s_y", "crack_limit_y", "x_cr_y",
    "hc_ef_y", "rho_p_eff_y", "crack_c_y", "crack_close_y", "sr_max_y", "crack_limit_calc_y",
})

# single-pile caps (issue 15, item 3)
LOAD_INDEPENDENT = LOAD_INDEPENDENT | frozenset({
    "n_links", "phi_links", "s_links", "links_stated", "a_burst_pile", "a_burst_col_x", "a_burst_col_y",
    "burst_full_x", "burst_full_y", "zone_burst_x", "zone_burst_y", "link_sets_x", "link_sets_y",
    "as_links_x", "as_links_y", "h_above_pile", "pla_ratio_pile", "pile_bearing_limit",
})

OUTPUT_SCALE: dict[str, float] = {u: FROM_INTERNAL[u] for u in ("kN", "kNm", "%")}
"""Multipliers from internal units to a rule's output unit (N -> kN, N·mm -> kNm, ratio -> %)."""


#: What a user must give when a quantity is missing, in plain words (never the quantity's name):
#: the schedule input behind it. Quantities not listed here are named by their meaning.
MISSING_AS: dict[str, str] = {
    "piles": "the number of piles", "n_piles": "the number of piles", "pile_dia": "the pile diameter",
    "pile_spacing": "the pile spacing",
    "cap_length": "the cap length", "cap_width": "the cap width", "cap_depth": "the cap depth",
    "column_x": "the column size", "column_y": "the column size", "n_ed": "the ULS axial load",
    "fyk": "the steel grade", "cover": "the nominal cover", "embedment": "the pile embedment",
    "pile_capacity": "the pile capacity", "nx": "the x bars", "phi_x": "the x bars", "ny": "the y bars",
    "phi_y": "the y bars", "sx": "the x bar centres", "sy": "the y bar centres", "fck": "the concrete class",
    "cmin_dur": "the exposure class", "stated_pile_load": "the designer's pile load",
    "stated_tie_x": "the designer's tie force along x", "stated_tie_y": "the designer's tie force along y",
    "stated_as_x": "the designer's steel area along x", "stated_as_y": "the designer's steel area along y",
    "stated_d": "the designer's effective depth",
}


def plain_words(name: str) -> str:
    """A quantity as the user knows it, for 'cannot be verified' texts: the input behind it
    (:data:`MISSING_AS`), else its meaning up to the first comma or bracket, else 'an input'."""
    import re

    if name in MISSING_AS:
        return MISSING_AS[name]
    meaning = QUANTITIES.get(name, ("", ""))[1]
    head = re.split(r"[,(;:]", meaning, maxsplit=1)[0].strip()
    words = set(re.findall(r"[A-Za-z_][A-Za-z0-9_]*", head))
    if not head or any("_" in w for w in words) or words & set(QUANTITIES):
        return "an input of this check"
    return "the " + head if not head.lower().startswith(("the ", "a ", "an ")) else head
