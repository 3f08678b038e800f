"""Plausible ranges of the schedule's figures, and the hint when a unit slip would explain a value.

A figure outside its range is almost always a unit slip (a depth of 1100 in a column headed ``(m)``,
a load in MN under a kN heading) or a typing error; such a row is rejected with the value, the range
and, where a unit factor of 10, 1,000 or 10^6 brings the value inside it, the unit that was probably
meant ("1100 m: did you mean mm?"). The ranges are wide on purpose: they bound what a pile cap of
1 to 6 piles can be, not what good practice is (the rules judge that). They are listed in the
README beside the limits; each is common practice, chosen for this purpose.
"""

from __future__ import annotations

import math

from checker.units import DEFAULT_UNIT, TO_INTERNAL

#: field -> (least, greatest) in internal units (mm, N, N·mm, mm²); moments are judged by magnitude
PLAUSIBLE: dict[str, tuple[float, float]] = {
    "pile_dia": (150.0, 3000.0),
    "pile_spacing": (300.0, 15000.0),
    "cap_length": (300.0, 30000.0),
    "cap_width": (300.0, 30000.0),
    "cap_depth": (200.0, 5000.0),
    "column_x": (100.0, 5000.0),
    "column_y": (100.0, 5000.0),
    "cover": (15.0, 300.0),
    "embedment": (0.0, 2000.0),
    "n_ed": (10e3, 500e6),                  # 10 kN to 500,000 kN
    "mx_ed": (0.0, 500e9),                  # |M| up to 500,000 kNm
    "my_ed": (0.0, 500e9),
    "pile_capacity": (10e3, 100e6),         # 10 kN to 100,000 kN
    "stated_pile_load": (0.0, 100e6),
    "stated_tie_x": (0.0, 200e6),
    "stated_tie_y": (0.0, 200e6),
    "stated_as_x": (0.0, 500e3),            # mm²
    "stated_as_y": (0.0, 500e3),
    "stated_d": (100.0, 5000.0),
}

#: least clear spacing between bars used for "the bar count fits the width" [mm]: the 20 mm floor
#: of EN 1992-1-1:2004 8.2(2) (the rule bar-spacing judges the full max(k1 φ, dg + k2, 20 mm))
MIN_CLEAR_BARS = 20.0

#: kind -> (unit display name, factor to internal units), the units a hint may name
_UNITS_OF: dict[str, tuple[tuple[str, float], ...]] = {
    kind: tuple((u, TO_INTERNAL[u]) for u in names) for kind, names in {
        "length": ("mm", "cm", "m"), "force": ("N", "kN", "MN"), "moment": ("kNm", "MNm"),
        "area": ("mm²", "cm²", "m²")}.items()
}
_FACTORS = (10.0, 1e3, 1e6)


def inside(field: str, value: float) -> bool:
    lo, hi = PLAUSIBLE[field]
    v = abs(value) if field in ("mx_ed", "my_ed") else value
    return lo <= v <= hi


def _fmt(v: float) -> str:
    if v == int(v) and abs(v) < 1e15:
        return f"{int(v):,}"
    return f"{v:,.6g}"


def range_text(field: str, kind: str, unit: str, factor: float) -> str:
    """'200 to 5,000 mm' in the unit of the column."""
    lo, hi = PLAUSIBLE[field]
    show = {k: (DEFAULT_UNIT[k], TO_INTERNAL[DEFAULT_UNIT[k]]) for k in ("length", "force", "moment", "area")}
    name, f = show.get(kind, (unit, factor))
    return f"{_fmt(lo / f)} to {_fmt(hi / f)} {name}".rstrip()


def unit_hint(field: str, kind: str, internal: float, unit: str, factor: float) -> str:
    """'did you mean mm?' when reading the figure as written in another unit of its kind (a factor
    of 10, 1,000 or 10^6 from the column's unit) brings it inside the range, else ''."""
    if not math.isfinite(internal) or factor == 0:
        return ""
    written = internal / factor
    for name, f in _UNITS_OF.get(kind, ()):
        ratio = f / factor
        if name == unit or not any(math.isclose(ratio, k) or math.isclose(ratio, 1 / k) for k in _FACTORS):
            continue
        if inside(field, written * f):
            return f"did you mean {name}?"
    return ""


def problem(field: str, kind: str, internal: float, unit: str, factor: float) -> str | None:
    """None when ``internal`` is plausible for ``field``, else the message after the field's label:
    '1100 m is outside the plausible range 200 to 5,000 mm; did you mean mm?'."""
    if field not in PLAUSIBLE or not math.isfinite(internal) or inside(field, internal):
        return None
    written = internal / factor if factor else internal
    shown = f"{_fmt(written)} {unit}".rstrip()
    hint = unit_hint(field, kind, internal, unit, factor)
    return (f"{shown} is outside the plausible range {range_text(field, kind, unit, factor)}"
            + (f"; {hint}" if hint else ""))
