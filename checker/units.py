"""Units: the one scale table (issue 12, item 1).

Internal units are mm, mm², N, N·mm and MPa (DEVELOPERS.md, "Internal units"). :data:`UNITS` names
every unit capcheck reads or writes with its kind and its factor to the internal unit; the other
tables are made from it. A factor to internal units multiplies a value read (``kN`` -> N: 1e3); a
factor from internal units (:data:`FROM_INTERNAL`) multiplies a value written (N -> ``kN``: 1e-3).
"""

from __future__ import annotations

#: unit as shown -> (kind, factor to the internal unit)
UNITS: dict[str, tuple[str, float]] = {
    "mm": ("length", 1.0), "cm": ("length", 10.0), "m": ("length", 1000.0),
    "N": ("force", 1.0), "kN": ("force", 1e3), "MN": ("force", 1e6),
    "N·mm": ("moment", 1.0), "kNm": ("moment", 1e6), "MNm": ("moment", 1e9),
    "MPa": ("stress", 1.0),
    "mm²": ("area", 1.0), "cm²": ("area", 100.0), "m²": ("area", 1e6),
    "count": ("count", 1.0),
}

#: unit -> factor to the internal unit (kN -> N: 1e3)
TO_INTERNAL: dict[str, float] = {u: f for u, (_k, f) in UNITS.items()}

#: unit -> multiplier from the internal unit (N -> kN: 1e-3); '%' shows a ratio, '' is unscaled
FROM_INTERNAL: dict[str, float] = {**{u: 1.0 / f for u, f in TO_INTERNAL.items()}, "%": 100.0, "": 1.0}

#: kind -> internal unit
INTERNAL: dict[str, str] = {k: u for u, (k, f) in UNITS.items() if f == 1.0}

#: kind of an internal unit (the ``unit`` of a model field): 'mm' -> 'length'
KIND_OF_UNIT: dict[str, str] = {u: k for k, u in INTERNAL.items()}

#: the unit assumed when a heading or cell gives none (the brief: mm, kN, kNm, MPa, mm², count)
DEFAULT_UNIT: dict[str, str] = {
    "length": "mm", "force": "kN", "moment": "kNm", "stress": "MPa", "area": "mm²", "count": "count",
}
