"""Plan sketch of one pile cap as inline SVG, drawn to scale.

The sketch shows the cap outline (L along x, W along y, centred on the column), the piles at the
review's pile centres, the column, the overall dimensions, the smallest pile spacing and the
smallest edge distance, a scale bar and the x/y axes. The elements behind each finding that is not
``ok`` are drawn in that finding's severity colour:

* ``edge-distance``: the pile(s) nearest the edge and the edge dimension;
* ``pile-spacing``: the closest pair of piles and the spacing dimension;
* ``strut-angle``: the struts (in plan) from the column to the piles;
* ``node-column``, ``punching-column``, ``punching-perimeter``: the column;
* ``node-pile``, ``pile-reaction``, ``pile-embedment``, ``group-size``: the piles;
* any rule about a pile outside the plan (``pile-in-plan``, ``plan-overhang`` ...): the pile(s)
  outside the outline (a pile outside the outline is always marked, finding or not).

Dimension figures are the submitted geometry; a highlighted dimension is labelled with the
finding's own value (the sketch never re-checks anything). Each pile circle has ``class="pile"``
and the ``<svg>`` element ``data-cap="MARK"``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from html import escape
from typing import TYPE_CHECKING, Any, Iterable

import numpy as np

from checker.findings import SEVERITY_RANK, Severity, severity_rank
from checker.report.comments import format_number

if TYPE_CHECKING:  # pragma: no cover
    from checker.api import Review

INK = "#2F3E46"
FAINT = "#9AA5AB"
CAP_FILL = "#F3F1EC"
PILE_FILL = "#FFFFFF"
COLUMN_FILL = "#D9D4C7"

HIGHLIGHT_TARGETS: dict[str, tuple[str, ...]] = {
    "edge-distance": ("edge",),
    "pile-spacing": ("spacing",),
    "strut-angle": ("struts",),
    "node-column": ("column",),
    "punching-column": ("column",),
    "punching-perimeter": ("column",),
    "node-pile": ("piles",),
    "pile-reaction": ("piles",),
    "pile-embedment": ("piles",),
    "group-size": ("piles",),
}


def targets_of(rule: str) -> tuple[str, ...]:
    if rule in HIGHLIGHT_TARGETS:
        return HIGHLIGHT_TARGETS[rule]
    r = rule.lower()
    if "plan" in r or "overhang" in r or "outside" in r:
        return ("outside",)
    return ()


@dataclass
class CapGeometry:
    mark: str
    length: float = float("nan")
    width: float = float("nan")
    depth: float = float("nan")
    pile_dia: float = float("nan")
    column_x: float = float("nan")
    column_y: float = float("nan")
    column_round: bool = False
    n_piles: float = float("nan")        # the schedule's pile count (for a note when no centres)
    piles: np.ndarray = field(default_factory=lambda: np.zeros((0, 2)))


def _f(v: Any) -> float:
    try:
        f = float(v)
    except (TypeError, ValueError):
        return float("nan")
    return f


def geometry_from_row(mark: str, row: dict[str, Any] | None, xy: Any = None) -> CapGeometry:
    """CapGeometry from one canonical schedule row (a dict) and that cap's pile centres."""
    g = CapGeometry(mark=mark)
    if row:
        g.length = _f(row.get("cap_length"))
        g.width = _f(row.get("cap_width"))
        g.depth = _f(row.get("cap_depth"))
        g.pile_dia = _f(row.get("pile_dia"))
        g.n_piles = _f(row.get("piles"))
        g.column_x = _f(row.get("column_x"))
        g.column_y = _f(row.get("column_y"))
        rnd = row.get("column_round")
        g.column_round = bool(rnd) if rnd is not None and not (isinstance(rnd, float) and math.isnan(rnd)) else False
    if xy is not None:
        arr = np.asarray(xy, dtype=float).reshape(-1, 2)
        g.piles = arr[np.isfinite(arr).all(axis=1)]
    return g


def cap_geometry(review: "Review", mark: str) -> CapGeometry:
    row = None
    caps = review.caps
    if caps is not None and "mark" in getattr(caps, "columns", ()):
        sel = caps[caps["mark"].astype(str) == str(mark)]
        if len(sel):
            row = sel.iloc[0].to_dict()
    xy = review.pile_xy.get(mark) if review.pile_xy else None
    return geometry_from_row(mark, row, xy)


def _ok(v: float) -> bool:
    return v is not None and math.isfinite(v) and v > 0


def _attrs(**kw: Any) -> str:
    parts = []
    for k, v in kw.items():
        if v is None:
            continue
        name = k.rstrip("_").replace("_", "-")
        if isinstance(v, float):
            v = f"{v:.2f}".rstrip("0").rstrip(".")
        parts.append(f'{name}="{escape(str(v), quote=True)}"')
    return " ".join(parts)


def _mm(v: float) -> str:
    """A dimension in whole millimetres."""
    return f"{v:.0f}" if math.isfinite(v) else "n/a"


def _nice_length(target: float) -> float:
    for step in (50, 100, 200, 250, 500, 1000, 2000, 2500, 5000, 10000):
        if step >= target:
            return float(step)
    return 10000.0


class _Canvas:
    def __init__(self, extent: float):
        self.items: list[str] = []
        self.fs = extent * 0.042            # text height, mm of the drawing
        self.sw = extent * 0.0045           # ordinary line weight
        self.hw = extent * 0.012            # highlight line weight

    def add(self, s: str) -> None:
        self.items.append(s)

    def text(self, x: float, y: float, s: str, *, anchor: str = "middle", cls: str = "dim-text",
             colour: str = INK, size: float | None = None, rotate: float | None = None,
             bold: bool = False) -> None:
        tr = f' transform="rotate({rotate:.1f} {x:.1f} {y:.1f})"' if rotate else ""
        weight = ' font-weight="bold"' if bold else ""
        # a white halo keeps figures legible where they cross a line
        halo = (f' stroke="#FFFFFF" stroke-width="{(size or self.fs) * 0.22:.1f}" paint-order="stroke"'
                f' stroke-linejoin="round"')
        self.add(
            f'<text {_attrs(x=x, y=y, class_=cls, fill=colour, font_size=size or self.fs)}'
            f' text-anchor="{anchor}" dominant-baseline="middle"{weight}{halo}{tr}>{escape(s)}</text>'
        )

    def dim(self, p: tuple[float, float], q: tuple[float, float], label: str, *, colour: str = INK,
            width: float | None = None, cls: str = "dim", data: str | None = None,
            label_side: float = 1.0, label_at: tuple[float, float, str] | None = None) -> None:
        """Dimension line p-q (svg coords) with end ticks and a label beside its middle."""
        (x1, y1), (x2, y2) = p, q
        dx, dy = x2 - x1, y2 - y1
        length = math.hypot(dx, dy) or 1.0
        ux, uy = dx / length, dy / length
        nx, ny = -uy, ux
        t = self.fs * 0.45
        w = width or self.sw
        extra = f' data-rule="{escape(data)}"' if data else ""
        g = [f'<g class="{cls}"{extra}>']
        g.append(f'<line {_attrs(x1=x1, y1=y1, x2=x2, y2=y2, stroke=colour, stroke_width=w)}/>')
        for (x, y) in (p, q):
            g.append(
                f'<line {_attrs(x1=x - (ux + nx) * t * 0.7, y1=y - (uy + ny) * t * 0.7, x2=x + (ux + nx) * t * 0.7, y2=y + (uy + ny) * t * 0.7, stroke=colour, stroke_width=w)}/>'
            )
        g.append("</g>")
        self.add("".join(g))
        mx, my = (x1 + x2) / 2, (y1 + y2) / 2
        off = self.fs * 0.9 * label_side
        ang = math.degrees(math.atan2(dy, dx))
        if ang >= 89.5:
            ang -= 180
        elif ang < -90.5:
            ang += 180
        if label_at is not None:
            lx, ly, anchor = label_at
            self.text(lx, ly, label, colour=colour, anchor=anchor, bold=colour != INK)
            return
        self.text(mx + nx * off, my + ny * off, label, colour=colour,
                  rotate=ang if abs(ang) > 0.5 else None, bold=colour != INK)


def _closest_pair(piles: np.ndarray) -> tuple[int, int, float] | None:
    """The closest pair of piles; among equally close pairs (within 1 mm) the one whose dimension
    can sit above the plan, else on the left, else inside, so it keeps clear of L and W."""
    m = len(piles)
    if m < 2:
        return None
    pairs = []
    for i in range(m):
        for j in range(i + 1, m):
            pairs.append((float(np.hypot(*(piles[i] - piles[j]))), i, j))
    dmin = min(p[0] for p in pairs)

    def place(p: tuple[float, int, int]) -> tuple[int, float]:
        _, i, j = p
        (x1, y1), (x2, y2) = piles[i], piles[j]
        mx, my = (x1 + x2) / 2, (y1 + y2) / 2      # plan coordinates (y up)
        if abs(y1 - y2) < 1e-6:                     # horizontal pair: above if on or above the axis
            return (0, -my) if my >= -1e-6 else (4, my)
        if abs(x1 - x2) < 1e-6:                     # vertical pair: left if on or left of the axis
            return (1, mx) if mx <= 1e-6 else (3, -mx)
        return (2, 0.0)

    best = min((p for p in pairs if p[0] <= dmin + 1.0), key=lambda p: (place(p), p[1], p[2]))
    return best[1], best[2], best[0]


def _spacing_layout(P: list[tuple[float, float]], pair: tuple[int, int, float], g: CapGeometry,
                    pile_r: float, fs: float, have_outline: bool):
    """Where the spacing dimension goes: outward normal, offset, and the side of the plan it
    takes when it is drawn outside the outline (svg coordinates)."""
    i, j, _ = pair
    (x1, y1), (x2, y2) = P[i], P[j]
    dx, dy = x2 - x1, y2 - y1
    ln = math.hypot(dx, dy) or 1.0
    nx, ny = -dy / ln, dx / ln
    mx, my = (x1 + x2) / 2, (y1 + y2) / 2
    flipped = False
    at_centre = abs(mx) < 1e-6 and abs(my) < 1e-6
    if (not at_centre and nx * mx + ny * my < 0) or (at_centre and (ny > 1e-9 or (abs(ny) <= 1e-9 and nx > 0))):
        nx, ny, flipped = -nx, -ny, True
    off = max(pile_r, fs * 0.5) + fs * 0.9
    axis = abs(nx) < 1e-6 or abs(ny) < 1e-6
    side = ""
    if axis and have_outline:
        # distance from the pair's line to the outline along the outward normal, plus a gap
        to_edge = (g.width / 2 - abs(my)) if abs(nx) < 1e-6 else (g.length / 2 - abs(mx))
        off = max(to_edge, pile_r) + fs * 1.3
        side = ("below" if ny > 0 else "above") if abs(nx) < 1e-6 else ("right" if nx > 0 else "left")
    return side, (nx, ny, flipped, axis, off)


def _edge_distances(g: CapGeometry) -> list[tuple[float, float, int, str]]:
    """(face distance, centre distance, pile index, side) for every pile and side."""
    out: list[tuple[float, float, int, str]] = []
    if not (_ok(g.length) and _ok(g.width)) or len(g.piles) == 0:
        return out
    r = g.pile_dia / 2 if _ok(g.pile_dia) else 0.0
    hl, hw = g.length / 2, g.width / 2
    for i, (x, y) in enumerate(g.piles):
        for side, ctr in (("left", hl + x), ("right", hl - x), ("bottom", hw + y), ("top", hw - y)):
            out.append((ctr - r, ctr, i, side))
    return out


def _worst(rows: Iterable[dict[str, Any]]) -> dict[str, Any] | None:
    best = None
    for r in rows:
        if best is None or severity_rank(r["severity"]) < severity_rank(best["severity"]):
            best = r
    return best


def _num(v: Any) -> float | None:
    try:
        f = float(v)
    except (TypeError, ValueError):
        return None
    return f if math.isfinite(f) else None


class _Targets:
    """Which findings point at which drawn elements, and the colour each element is drawn in."""

    def __init__(self, findings: list[dict[str, Any]]) -> None:
        self.by_target: dict[str, list[dict[str, Any]]] = {}
        for r in findings:
            if str(r["severity"]) == "ok":
                continue
            for t in targets_of(str(r["rule"])):
                self.by_target.setdefault(t, []).append(r)

    def worst(self, target: str) -> dict[str, Any] | None:
        return _worst(self.by_target.get(target, []))

    def colour_of(self, target: str) -> str | None:
        w = self.worst(target)
        return "#" + Severity(str(w["severity"])).fill if w and str(w["severity"]) in SEVERITY_RANK else None

    def rules_of(self, target: str) -> str:
        return " ".join(sorted({str(r["rule"]) for r in self.by_target.get(target, [])}))


def plan_svg(g: CapGeometry, findings: list[dict[str, Any]], *, width_px: int = 460) -> str:
    """The sketch for one cap. ``findings`` are that cap's findings rows (any severity)."""
    mark = g.mark
    piles = g.piles
    have_outline = _ok(g.length) and _ok(g.width)
    pile_r = g.pile_dia / 2 if _ok(g.pile_dia) else 0.0
    if not have_outline and len(piles) == 0:
        return (
            f'<svg xmlns="http://www.w3.org/2000/svg" class="plan" data-cap="{escape(mark, quote=True)}" '
            f'viewBox="0 0 400 60" width="{width_px}" role="img" '
            f'aria-label="No plan geometry for cap {escape(mark, quote=True)}">'
            f'<text x="200" y="30" text-anchor="middle" font-size="14" fill="{INK}">'
            f"No plan geometry given for cap {escape(mark)}</text></svg>"
        )

    half_l = g.length / 2 if have_outline else 0.0
    half_w = g.width / 2 if have_outline else 0.0
    if len(piles):
        half_l = max(half_l, float(np.abs(piles[:, 0]).max()) + pile_r)
        half_w = max(half_w, float(np.abs(piles[:, 1]).max()) + pile_r)
    extent = max(2 * half_l, 2 * half_w, 1.0)
    cv = _Canvas(extent)
    fs = cv.fs
    # svg y = -plan y
    P = [(float(x), -float(y)) for x, y in piles]
    pair = _closest_pair(piles)
    spacing_side, sp_layout = "", None
    if pair:
        spacing_side, sp_layout = _spacing_layout(P, pair, g, pile_r, fs, have_outline)
    margin_l, margin_r = fs * 5.0, fs * 3.2 + (fs * 2.4 if spacing_side == "right" else 0.0)
    margin_t, margin_b = fs * 3.6, fs * 6.2 + (fs * 2.4 if spacing_side == "below" else 0.0)
    vb = (-half_l - margin_l, -half_w - margin_t, 2 * half_l + margin_l + margin_r,
          2 * half_w + margin_t + margin_b)
    tg = _Targets(findings)

    # --- cap outline
    if have_outline:
        cv.add(f'<rect {_attrs(class_="cap-outline", x=-g.length / 2, y=-g.width / 2, width=g.length, height=g.width, fill=CAP_FILL, stroke=INK, stroke_width=cv.sw * 1.6)}/>')
    _draw_struts(cv, P, tg)
    _draw_column(cv, g, tg)

    # --- edge and spacing geometry
    edge_hl_piles, outside, edge_dim = _edge_layout(g, tg)
    spacing_hl: set[int] = set(pair[:2]) if (pair and tg.colour_of("spacing")) else set()
    _draw_piles(cv, P, pile_r, extent, tg, outside, edge_hl_piles, spacing_hl)
    if pair:
        _draw_spacing_dim(cv, P, pair, sp_layout, g, pile_r, have_outline, tg)
    if edge_dim:
        _draw_edge_dim(cv, P, g, pile_r, edge_dim, tg)

    # --- overall dimensions (moved out when the spacing dimension took that side)
    if have_outline:
        _draw_overall_dims(cv, g, half_l, half_w, spacing_side)

    if len(piles) == 0 and _ok(g.n_piles):
        cv.text(0.0, -half_w * 0.55 if have_outline else 0.0,
                f"{format_number(g.n_piles)} pile(s): positions not available", cls="note",
                colour="#" + Severity.UNSAFE.fill, size=fs * 0.9)
    _draw_scale_and_axes(cv, extent, half_l, half_w, spacing_side)

    n = len(piles)
    desc = (f"Plan of cap {mark}: "
            + (f"{format_number(g.length)} x {format_number(g.width)} mm, " if have_outline else "cap size not given, ")
            + f"{n} pile{'s' if n != 1 else ''}"
            + (f" of diameter {format_number(g.pile_dia)} mm" if _ok(g.pile_dia) else "")
            + ". Drawn to scale; dimensions in mm.")
    height_px = width_px * vb[3] / vb[2]
    return (
        f'<svg xmlns="http://www.w3.org/2000/svg" class="plan" data-cap="{escape(mark, quote=True)}" '
        f'data-piles="{n}" viewBox="{vb[0]:.1f} {vb[1]:.1f} {vb[2]:.1f} {vb[3]:.1f}" '
        f'width="{width_px}" height="{height_px:.0f}" role="img" aria-label="{escape(desc, quote=True)}" '
        f'font-family="Helvetica, Arial, sans-serif">'
        f"<title>{escape(desc)}</title>"
        + "".join(cv.items)
        + "</svg>"
    )


def _draw_struts(cv: _Canvas, P: list[tuple[float, float]], tg: _Targets) -> None:
    """The struts in plan projection, column centre to pile centres."""
    fs = cv.fs
    strut_c = tg.colour_of("struts")
    for i, (x, y) in enumerate(P):
        if strut_c:
            cv.add(f'<line {_attrs(class_="strut hl", x1=0.0, y1=0.0, x2=x, y2=y, stroke=strut_c, stroke_width=cv.hw * 0.8)} data-rule="{escape(tg.rules_of("struts"))}"/>')
        else:
            cv.add(f'<line {_attrs(class_="strut", x1=0.0, y1=0.0, x2=x, y2=y, stroke=FAINT, stroke_width=cv.sw * 0.7)} stroke-dasharray="{fs * 0.4:.1f} {fs * 0.3:.1f}"/>')


def _draw_column(cv: _Canvas, g: CapGeometry, tg: _Targets) -> None:
    """The column, round or rectangular (with a hatch cross)."""
    col_c = tg.colour_of("column")
    if not _ok(g.column_x):
        return
    cy = g.column_y if _ok(g.column_y) else g.column_x
    stroke = col_c or INK
    sw = cv.hw if col_c else cv.sw * 1.2
    extra = f' data-rule="{escape(tg.rules_of("column"))}"' if col_c else ""
    cls = "column hl" if col_c else "column"
    if g.column_round:
        cv.add(f'<circle {_attrs(class_=cls, cx=0.0, cy=0.0, r=g.column_x / 2, fill=COLUMN_FILL, stroke=stroke, stroke_width=sw)}{extra}/>')
    else:
        cv.add(f'<rect {_attrs(class_=cls, x=-g.column_x / 2, y=-cy / 2, width=g.column_x, height=cy, fill=COLUMN_FILL, stroke=stroke, stroke_width=sw)}{extra}/>')
        # hatch cross to read as a column in section
        cv.add(f'<path {_attrs(d=f"M{-g.column_x / 2:.1f},{-cy / 2:.1f} L{g.column_x / 2:.1f},{cy / 2:.1f} M{-g.column_x / 2:.1f},{cy / 2:.1f} L{g.column_x / 2:.1f},{-cy / 2:.1f}", stroke=FAINT, stroke_width=cv.sw * 0.6, fill="none")}/>')


def _edge_layout(g: CapGeometry, tg: _Targets):
    """(the piles nearest the edge, the piles outside the cap, the edge dimension to draw or None):
    measured to the pile face, or to its centre when the finding's figure is the centre distance."""
    edges = _edge_distances(g)
    edge_hl_piles: set[int] = set()
    outside: set[int] = {i for (face, _c, i, _s) in edges if face < -1e-6}
    edge_finding = tg.worst("edge")
    edge_dim = None
    if edges:
        use_centre = False
        fv = _num(edge_finding.get("value")) if edge_finding else None
        min_face = min(e[0] for e in edges)
        min_ctr = min(e[1] for e in edges)
        if fv is not None and abs(fv - min_ctr) < abs(fv - min_face):
            use_centre = True
        dist = [e[1] if use_centre else e[0] for e in edges]
        emin = min(dist)
        nearest = [e for e, d in zip(edges, dist) if d <= emin + 1.0]
        edge_hl_piles = {e[2] for e in nearest}
        pref = {"left": 0, "bottom": 1, "top": 2, "right": 3}
        e0 = min(nearest, key=lambda e: (pref[e[3]], e[2]))
        edge_dim = (e0, use_centre, fv)
    return edge_hl_piles, outside, edge_dim


def _draw_piles(cv: _Canvas, P: list[tuple[float, float]], pile_r: float, extent: float, tg: _Targets,
                outside: set[int], edge_hl_piles: set[int], spacing_hl: set[int]) -> None:
    """The piles, each drawn in the colour of the worst finding that points at it, and labelled."""
    fs = cv.fs
    edge_c = tg.colour_of("edge")
    spacing_c = tg.colour_of("spacing")
    pile_c = tg.colour_of("piles")
    outside_c = tg.colour_of("outside") or ("#" + Severity.UNSAFE.fill if outside else None)
    for i, (x, y) in enumerate(P):
        stroke, sw, cls, rule_attr = INK, cv.sw * 1.3, ["pile"], []
        for cond, colour, name, target in (
            (i in outside, outside_c, "outside", "outside"),
            (edge_c is not None and i in edge_hl_piles, edge_c, "edge-hl", "edge"),
            (i in spacing_hl, spacing_c, "spacing-hl", "spacing"),
            (pile_c is not None, pile_c, "pile-hl", "piles"),
        ):
            if cond and colour:
                if stroke == INK:
                    stroke, sw = colour, cv.hw
                cls.append(name)
                rule_attr.append(tg.rules_of(target) or name)
        if len(cls) > 1:
            cls.append("hl")
        r = pile_r if pile_r > 0 else extent * 0.03
        data = f' data-rule="{escape(" ".join(rule_attr))}"' if rule_attr else ""
        cv.add(f'<circle {_attrs(class_=" ".join(cls), cx=x, cy=y, r=r, fill=PILE_FILL, stroke=stroke, stroke_width=sw)} data-pile="P{i + 1}"{data}/>')
        cv.text(x, y, f"P{i + 1}", cls="pile-label", colour=INK, size=fs * 0.85)


def _draw_spacing_dim(cv: _Canvas, P: list[tuple[float, float]], pair, sp_layout, g: CapGeometry,
                      pile_r: float, have_outline: bool, tg: _Targets) -> None:
    """The spacing dimension (closest pair), offset away from the cap centre; a pair parallel to
    an axis is dimensioned outside the outline with extension lines, like the overall sizes."""
    fs = cv.fs
    spacing_c = tg.colour_of("spacing")
    i, j, d = pair
    (x1, y1), (x2, y2) = P[i], P[j]
    nx, ny, flipped, axis, off = sp_layout
    sf = tg.worst("spacing")
    sv = _num(sf.get("value")) if sf else None
    label = f"s = {_mm(sv if sv is not None else d)}"
    a, b = (x1 + nx * off, y1 + ny * off), (x2 + nx * off, y2 + ny * off)
    colour = spacing_c or INK
    if axis and have_outline:
        for (px, py), (qx, qy) in (((x1, y1), a), ((x2, y2), b)):
            cv.add(f'<line {_attrs(class_="ext", x1=px + nx * pile_r, y1=py + ny * pile_r, x2=qx + nx * fs * 0.3, y2=qy + ny * fs * 0.3, stroke=FAINT, stroke_width=cv.sw * 0.6)}/>')
    cv.dim(a, b, label, colour=colour, width=cv.hw * 0.6 if spacing_c else None,
           cls="dim spacing" + (" hl" if spacing_c else ""),
           data=tg.rules_of("spacing") if spacing_c else None, label_side=-1.0 if flipped else 1.0)


def _draw_edge_dim(cv: _Canvas, P: list[tuple[float, float]], g: CapGeometry, pile_r: float, edge_dim,
                   tg: _Targets) -> None:
    """The edge dimension (nearest pile face, or centre, to the cap edge); its figure is written
    outside the outline so that a short dimension stays legible."""
    fs = cv.fs
    edge_c = tg.colour_of("edge")
    (face, ctr, i, side), use_centre, fv = edge_dim
    x, y = P[i]
    r = 0.0 if use_centre else pile_r
    hl, hw = g.length / 2, g.width / 2
    gap = fs * 0.35
    if side == "left":
        p, q = (-hl, y), (x - r, y)
        at = (min(-hl, x - r) - gap, y, "end")
    elif side == "right":
        p, q = (x + r, y), (hl, y)
        at = (max(hl, x + r) + gap, y - fs * 0.8, "start")
    elif side == "bottom":   # plan bottom = svg +y
        p, q = (x, y + r), (x, hw)
        at = (x, max(hw, y + r) + fs * 0.75, "middle")
    else:
        p, q = (x, -hw), (x, y - r)
        at = (x, min(-hw, y - r) - fs * 0.75, "middle")
    geom = ctr if use_centre else face
    label = f"e = {_mm(fv if (fv is not None and edge_c) else geom)}"
    cv.dim(p, q, label, colour=edge_c or INK, width=cv.hw * 0.6 if edge_c else None,
           cls="dim edge" + (" hl" if edge_c else ""), data=tg.rules_of("edge") if edge_c else None,
           label_at=at)


def _draw_overall_dims(cv: _Canvas, g: CapGeometry, half_l: float, half_w: float, spacing_side: str) -> None:
    """The overall length and width, moved out when the spacing dimension took that side."""
    fs = cv.fs
    yb = half_w + fs * 1.6 + (fs * 2.4 if spacing_side == "below" else 0.0)
    xr = half_l + fs * 1.6 + (fs * 2.4 if spacing_side == "right" else 0.0)
    for (px, py), (qx, qy) in (((-g.length / 2, g.width / 2), (-g.length / 2, yb)),
                               ((g.length / 2, g.width / 2), (g.length / 2, yb)),
                               ((g.length / 2, -g.width / 2), (xr, -g.width / 2)),
                               ((g.length / 2, g.width / 2), (xr, g.width / 2))):
        if abs(qx - px) + abs(qy - py) > fs * 1.7:
            cv.add(f'<line {_attrs(class_="ext", x1=px, y1=py, x2=qx, y2=qy, stroke=FAINT, stroke_width=cv.sw * 0.6)}/>')
    cv.dim((-g.length / 2, yb), (g.length / 2, yb), f"L = {_mm(g.length)}",
           cls="dim overall", label_side=1.0)
    cv.dim((xr, -g.width / 2), (xr, g.width / 2), f"W = {_mm(g.width)}",
           cls="dim overall", label_side=-1.0)


def _draw_scale_and_axes(cv: _Canvas, extent: float, half_l: float, half_w: float, spacing_side: str) -> None:
    """The scale bar and the x, y axes below the plan."""
    fs = cv.fs
    bar = _nice_length(extent / 4)
    x0 = -half_l
    y0 = half_w + fs * 4.3 + (fs * 2.4 if spacing_side == "below" else 0.0)
    cv.add(f'<g class="scale-bar"><rect {_attrs(x=x0, y=y0 - fs * 0.25, width=bar / 2, height=fs * 0.5, fill=INK)}/>'
           f'<rect {_attrs(x=x0 + bar / 2, y=y0 - fs * 0.25, width=bar / 2, height=fs * 0.5, fill="#FFFFFF", stroke=INK, stroke_width=cv.sw)}/></g>')
    cv.text(x0 + bar + fs * 0.4, y0, f"{format_number(bar)} mm", anchor="start", size=fs * 0.85)
    ax = half_l + fs * 0.2
    ay = y0
    a = fs * 1.6
    cv.add(f'<g class="axes"><line {_attrs(x1=ax - a, y1=ay, x2=ax, y2=ay, stroke=INK, stroke_width=cv.sw)}/>'
           f'<line {_attrs(x1=ax - a, y1=ay, x2=ax - a, y2=ay - a, stroke=INK, stroke_width=cv.sw)}/></g>')
    cv.text(ax + fs * 0.5, ay, "x", size=fs * 0.85)
    cv.text(ax - a, ay - a - fs * 0.55, "y", size=fs * 0.85)


def cap_sketch(review: "Review", mark: str, findings: list[dict[str, Any]] | None = None,
               *, width_px: int = 460) -> str:
    """Sketch of ``mark`` from a Review (its caps frame, pile_xy and findings for that cap)."""
    if findings is None:
        f = review.findings
        findings = f[f["cap"].astype(str) == str(mark)].to_dict("records") if len(f) else []
    return plan_svg(cap_geometry(review, mark), findings, width_px=width_px)
