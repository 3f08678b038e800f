"""Column headings as a consultant writes them -> canonical fields and unit factors.

A heading is reduced to a set of words (case, spacing, punctuation and word order do not matter;
common spellings are unified: 'diameter'/'Ø' -> 'dia', 'reinforcement'/'steel' -> 'bars', 'MEd,x' ->
'moment ed x' ...) and a unit, taken from brackets (``(mm)``, ``[MN]``) or a trailing unit word.
The word set is looked up in order in:

1. the user's mapping file (TOML ``[headings]`` table: ``"Heading as written" = "field"`` or
   ``"field [unit]"``; ``"ignore"`` marks a heading as deliberately unused);
2. the known headings (:data:`ALIASES`, which include the canonical names themselves);
3. word rules (:data:`WORD_RULES`): the required words, plus only words from an allowed list.

Anything else is reported as unmapped, never guessed. Headings that look like serviceability loads
('SLS', 'service', 'characteristic', 'working') are never taken for a ULS force.

Units: lengths mm unless the heading says ``m`` or ``cm``; forces kN unless ``MN`` (or ``N``); moments
kNm unless ``MNm``; the factor converts to internal units (N, mm, N·mm, MPa, mm²).
"""

from __future__ import annotations

import functools
import re
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Iterable, Mapping, Sequence

from checker.ingest import limits
from checker.ingest.errors import IngestError
from checker.ingest.notation import DEFAULT_SCALE, UNIT_NAMES, UNITS, clean_text, normalise_unit
from checker.model import HEADING_FIELDS

# --------------------------------------------------------------------------------------------
# What a heading can map to
# --------------------------------------------------------------------------------------------

#: ingest field -> kind: the fields of the model read from a heading of their own
#: (:data:`checker.model.HEADING_FIELDS`), plus the combined forms that the frame builder splits --
#: ``size`` (L x W x D), ``plan`` (L x W) and ``column`` (600x400, D600) -- and the load case fields
#: (issue 11: the case of a row, its limit state, SLS loads, a working pile capacity) that go to
#: ``Schedule.cases``.
SCHEDULE_FIELDS: dict[str, str] = {
    **HEADING_FIELDS,
    "size": "length", "plan": "length", "column": "length",
    "case": "text", "case_kind": "text", "n_sls": "force", "mx_sls": "moment", "my_sls": "moment",
    "pile_capacity_working": "force",
}

#: the fields of a loads table (``--loads FILE`` or a workbook sheet): one row per cap and case
LOAD_FIELDS: dict[str, str] = {f: SCHEDULE_FIELDS[f] for f in (
    "mark", "case", "case_kind", "n_ed", "mx_ed", "my_ed", "n_sls", "mx_sls", "my_sls")}

#: the pile coordinates table of an explicit group: mark, x, y [mm from the column centre]
COORD_FIELDS: dict[str, str] = {"mark": "text", "x": "length", "y": "length", "pile": "text"}

VOCABULARIES: dict[str, dict[str, str]] = {"schedule": SCHEDULE_FIELDS, "coords": COORD_FIELDS,
                                           "loads": LOAD_FIELDS}

IGNORE = "ignore"

# --------------------------------------------------------------------------------------------
# Normalising a heading
# --------------------------------------------------------------------------------------------

_SYNONYMS: dict[str, tuple[str, ...]] = {
    **dict.fromkeys(("diameter", "diam", "ø", "phi", "φ", "⌀"), ("dia",)),
    **dict.fromkeys(("centers", "centre", "center", "crs", "ctrs", "cts"), ("centres",)),
    **dict.fromkeys(("reinforcement", "reinft", "reinf", "rft", "steel", "rebar", "rebars", "bar"), ("bars",)),
    **dict.fromkeys(("btm", "bot", "bottom", "soffit"), ("bottom",)),
    **dict.fromkeys(("nr", "no", "num", "number", "qty", "quantity", "nos", "count"), ("no",)),
    **dict.fromkeys(("reqd", "required", "req", "requirement", "rqd"), ("req",)),
    **dict.fromkeys(("dimension", "dimensions", "dims", "dim"), ("size",)),
    **dict.fromkeys(("col", "columns"), ("column",)),
    **dict.fromkeys(("thickness", "thk"), ("depth",)),
    **dict.fromkeys(("reference",), ("ref",)),
    **dict.fromkeys(("med",), ("moment", "ed")),
    **dict.fromkeys(("mx", "mxx", "mex"), ("moment", "x")),
    **dict.fromkeys(("my", "myy", "mey"), ("moment", "y")),
    **dict.fromkeys(("medx", "mxed"), ("moment", "ed", "x")),
    **dict.fromkeys(("medy", "myed"), ("moment", "ed", "y")),
    **dict.fromkeys(("moments",), ("moment",)),
    **dict.fromkeys(("ned",), ("n", "ed")),
    **dict.fromkeys(("tx",), ("tie", "x")),
    **dict.fromkeys(("ty",), ("tie", "y")),
    **dict.fromkeys(("tension", "ties"), ("tie",)),
    **dict.fromkeys(("asx",), ("as", "x")),
    **dict.fromkeys(("asy",), ("as", "y")),
    **dict.fromkeys(("cx",), ("column", "x")),
    **dict.fromkeys(("cy",), ("column", "y")),
    **dict.fromkeys(("ult", "ultimate"), ("uls",)),
    **dict.fromkeys(("resistance", "capy", "capcty", "cpcty"), ("capacity",)),   # Cap'y, Capcty
    **dict.fromkeys(("reaction", "reactions", "loads"), ("load",)),
    **dict.fromkeys(("sls", "service", "serviceability", "characteristic", "char", "unfactored", "working"),
                    ("sls",)),
    **dict.fromkeys(("swl", "allowable", "permissible"), ("swl",)),
    **dict.fromkeys(("combination", "combinations", "comb", "combo", "lc", "cases"), ("case",)),
    **dict.fromkeys(("nk", "n_k"), ("n", "sls")),
    **dict.fromkeys(("mxk",), ("moment", "x", "sls")),
    **dict.fromkeys(("myk",), ("moment", "y", "sls")),
    **dict.fromkeys(("embed", "embedded", "embedment", "embedded"), ("embedment",)),
    **dict.fromkeys(("nom", "nominal"), ("nominal",)),
    **dict.fromkeys(("cnom",), ("cover", "nominal")),
    **dict.fromkeys(("xx", "x-x"), ("x",)),
    **dict.fromkeys(("yy", "y-y"), ("y",)),
    **dict.fromkeys(("end",), ("ends",)),
    **dict.fromkeys(("spacings",), ("spacing",)),
    **dict.fromkeys(("pile",), ("pile",)),
}
_STOP = frozenset({"of", "the", "in", "along", "direction", "dir", "to", "for", "at", "per", "into", "about",
                   "and", "a"})
# trailing words read as a unit when not bracketed (single letters and counts are too ambiguous)
_TRAILING_UNITS = frozenset({"mm", "cm", "kn", "mn", "knm", "mnm", "mpa", "mm2", "cm2", "m2", "n/mm2"})
_BRACKET_RE = re.compile(r"[\(\[\{]([^\)\]\}]*)[\)\]\}]?")
_SPLIT_RE = re.compile(r"[^0-9a-zø⌀φ]+")


@functools.lru_cache(maxsize=8192)
def heading_key(text: str) -> tuple[frozenset[str], str | None]:
    """``'Pile dia (mm)'`` -> (``{'pile', 'dia'}``, ``'mm'``); ``'N_Ed [MN]'`` -> (``{'n', 'ed'}``, ``'mn'``)."""
    s = clean_text(text).lower().replace("\u00d7", " x ")
    s = re.sub(r"n\s*/\s*mm\s*(?:2|²|\^2)", " mpa ", s)
    s = s.replace("²", "2").replace("'", "").replace("\u2019", "")
    s = re.sub(r"\bc\s*/\s*c\b", " centres ", s)
    unit: str | None = None
    words: list[str] = []

    def bracket(m: re.Match) -> str:
        nonlocal unit
        u = normalise_unit(m.group(1))
        if u is not None and unit is None:
            unit = u
            return " "
        return f" {m.group(1)} "

    s = _BRACKET_RE.sub(bracket, s)
    raw = [w for w in _SPLIT_RE.split(s) if w]
    for i, w in enumerate(raw):
        if unit is None and i == len(raw) - 1 and i > 0 and w in _TRAILING_UNITS:
            unit = w
            continue
        for t in _SYNONYMS.get(w, (w,)):
            if t not in _STOP:
                words.append(t)
    return frozenset(words), unit


# --------------------------------------------------------------------------------------------
# Known headings and word rules
# --------------------------------------------------------------------------------------------

_ALIAS_TEXT: dict[str, tuple[str, ...]] = {
    "mark": ("mark", "cap mark", "cap ref", "ref", "pile cap", "pile cap ref", "pile cap mark", "type",
             "cap type", "pile cap type", "cap", "id", "cap id", "name", "cap name", "cap no", "mark no"),
    "piles": ("piles", "no of piles", "number of piles", "nr piles", "n piles", "pile count", "piles no",
              "no piles", "total piles"),
    "pile_dia": ("pile dia", "pile diameter", "Ø pile", "pile size", "pile Ø", "pile d", "d pile", "dp",
                 "nominal pile dia", "pile dia d"),
    "pile_spacing": ("spacing", "pile spacing", "pile centres", "centres", "pile centres s", "spacing s", "s",
                     "c/c", "pile c/c", "c/c spacing", "pile spacing s", "centre spacing", "pile centre spacing"),
    "cap_length": ("length", "length l", "l", "cap length", "cap l", "length x", "lx", "plan length",
                   "cap length l", "length l x", "cap size l", "size l", "cap dimensions l"),
    "cap_width": ("width", "width b", "width w", "b", "w", "cap width", "cap b", "cap w", "breadth", "width y",
                  "ly", "cap width b", "cap width w", "plan width", "cap size w", "cap size b", "size w",
                  "size b", "cap dimensions w"),
    "cap_depth": ("depth", "cap depth", "cap depth h", "h", "depth h", "thickness",
                  "cap thickness", "overall depth", "cap h", "cap d", "overall depth h", "cap size d",
                  "cap size h", "size d", "size h", "cap dimensions d"),
    "size": ("size", "cap size", "l x w x d", "size l x w x d", "l x b x h", "l x b x d", "l x w x h",
             "dimensions", "cap dimensions", "size l x b x h", "size l x b x d", "cap size l x w x d"),
    "plan": ("l x w", "l x b", "plan size", "plan", "plan dimensions", "size l x w", "plan l x w",
             "plan l x b", "size l x b"),
    "column": ("column", "col size", "column size", "column dims", "column section", "column cx x cy",
               "column size cx x cy", "column size x x y"),
    "column_x": ("column x", "cx", "column cx", "column size x", "column dim x"),
    "column_y": ("column y", "cy", "column cy", "column size y", "column dim y"),
    "n_ed": ("ned", "n ed", "n", "axial load uls", "uls axial load", "axial load", "uls load", "design load",
             "column load uls", "uls column load", "axial force", "column load", "n uls", "uls axial", "axial load ned",
             "vertical load uls", "axial ned", "design axial load", "ned uls"),
    "mx_ed": ("mx", "med x", "mx ed", "moment x", "mx uls", "moment about x", "uls moment x", "design moment x"),
    "my_ed": ("my", "med y", "my ed", "moment y", "my uls", "moment about y", "uls moment y", "design moment y"),
    "concrete": ("concrete", "concrete class", "concrete grade", "grade", "class", "strength class",
                 "concrete strength", "conc", "conc grade", "concrete strength class", "conc class"),
    "fck": ("fck", "f ck"),
    "fyk": ("fyk", "f yk", "steel grade", "reinforcement grade", "yield strength", "fy", "steel fyk"),
    "cover": ("cover", "nominal cover", "cnom", "c nom", "bottom cover", "cover bottom", "cover to bottom bars",
              "c", "cover c", "nominal cover bottom"),
    "exposure": ("exposure", "exposure class", "exposure classes", "exp class", "exposure condition"),
    "bars_x": ("bars x", "bottom bars x", "x bars", "b1 bars", "b1", "bottom reinforcement x", "bottom steel x",
               "reinforcement x", "main bars x", "bottom x", "bottom layer 1", "tie bars x", "bars b1"),
    "bars_y": ("bars y", "bottom bars y", "y bars", "b2 bars", "b2", "bottom reinforcement y", "bottom steel y",
               "reinforcement y", "main bars y", "bottom y", "bottom layer 2", "tie bars y", "bars b2"),
    "embedment": ("embedment", "pile embedment", "embedment length", "pile head embedment", "pile embedment length"),
    "pile_capacity": ("pile capacity", "pile capacity uls", "uls pile capacity", "pile resistance", "capacity",
                      "rc d", "rcd", "design pile capacity", "pile design resistance"),
    "stated_pile_load": ("pile load", "max pile load", "pile reaction", "max pile reaction", "pile load uls",
                         "uls pile load", "pile force", "design pile load", "maximum pile load"),
    "stated_tie_x": ("tie force x", "tie x", "tension x", "tie tension x", "tie force uls x"),
    "stated_tie_y": ("tie force y", "tie y", "tension y", "tie tension y", "tie force uls y"),
    "stated_as_x": ("as req x", "as required x", "as reqd x", "area req x", "steel area req x", "as x req",
                    "asx req", "area of steel req x"),
    "stated_as_y": ("as req y", "as required y", "as reqd y", "area req y", "steel area req y", "as y req",
                    "asy req", "area of steel req y"),
    "stated_d": ("d", "effective depth", "eff depth", "effective depth d", "d eff", "deff", "d effective",
                 "design effective depth", "depth d eff"),
    "pile_type": ("pile type", "type of pile", "piling type"),
    "bar_ends": ("bar ends", "bar end", "end detail", "bar end detail", "ends", "bar anchorage", "end anchorage"),
    "method": ("method", "design method", "analysis method"),
    "case": ("case", "load case", "load combination", "case name", "load case name", "combination name",
             "design case", "action combination"),
    "case_kind": ("kind", "case kind", "limit state", "case type", "load case type", "uls sls", "uls or sls"),
    "n_sls": ("sls", "n sls", "sls n", "n k", "service load", "sls load", "sls axial load", "axial load sls",
              "characteristic load", "working load", "column load sls", "sls column load", "axial sls",
              "sls axial", "unfactored load", "n sls load"),
    "mx_sls": ("mx sls", "sls mx", "moment x sls", "sls moment x", "mk x", "m x k"),
    "my_sls": ("my sls", "sls my", "moment y sls", "sls moment y", "mk y", "m y k"),
    "pile_capacity_working": ("swl", "pile swl", "safe working load", "pile safe working load",
                              "allowable pile load", "allowable load", "allowable pile capacity",
                              "working pile capacity", "pile working capacity", "pile capacity sls",
                              "sls pile capacity", "pile capacity working", "swl pile capacity",
                              "pile capacity swl", "service pile capacity", "characteristic pile capacity",
                              "pile capacity characteristic", "pile capacity service", "allowable capacity"),
    "capacity_basis": ("capacity basis", "pile capacity basis", "basis of capacity", "capacity type",
                       "pile capacity type"),
}

# single-pile caps (issue 15, item 3): the horizontal links that carry the splitting tie
_ALIAS_TEXT["links"] = ("links", "horizontal links", "bursting links", "bursting steel", "bursting bars",
                        "bursting reinforcement", "splitting links", "splitting steel", "splitting reinforcement",
                        "closed links", "horizontal closed links", "link", "links horizontal", "cap links",
                        "side links", "bursting", "bursting links horizontal")

_COORD_ALIAS_TEXT: dict[str, tuple[str, ...]] = {
    "mark": _ALIAS_TEXT["mark"],
    "x": ("x", "x coord", "x coordinate", "pile x", "x offset", "dx"),
    "y": ("y", "y coord", "y coordinate", "pile y", "y offset", "dy"),
    "pile": ("pile", "pile no", "pile ref", "pile mark"),
}


@dataclass(frozen=True)
class WordRule:
    """Maps a heading whose words include all of ``needs`` and otherwise only words of ``may``."""

    field: str
    needs: frozenset[str]
    may: frozenset[str]

    def matches(self, words: frozenset[str]) -> bool:
        return self.needs <= words and words <= self.needs | self.may


def _rule(field_: str, needs: str, may: str = "") -> WordRule:
    return WordRule(field_, frozenset(needs.split()), frozenset(may.split()))


_Q = "uls design max maximum ed"
WORD_RULES: tuple[WordRule, ...] = (
    _rule("bars_x", "bars x", "bottom main tie layer b1 lowest mark 1 first"),
    _rule("bars_y", "bars y", "bottom main tie layer b2 second mark 2"),
    _rule("pile_dia", "pile dia", "d nominal size design"),
    _rule("pile_spacing", "pile spacing", "centres s c"),
    _rule("pile_spacing", "pile centres", "s spacing"),
    _rule("stated_pile_load", "pile load", _Q),
    _rule("pile_capacity", "pile capacity", _Q),
    _rule("pile_capacity_working", "pile capacity sls", "safe load"),
    _rule("pile_capacity_working", "pile swl", "capacity safe load"),
    _rule("n_sls", "n sls", "axial load column force max total"),
    _rule("n_sls", "axial sls", "load force column n max compression"),
    _rule("mx_sls", "moment x sls", "column max"),
    _rule("my_sls", "moment y sls", "column max"),
    _rule("piles", "piles", "no total group"),
    _rule("n_ed", "n ed", "axial load uls design column force max"),
    _rule("n_ed", "axial", "load force uls design column n ed max compression"),
    _rule("mx_ed", "moment x", "ed uls design column max"),
    _rule("my_ed", "moment y", "ed uls design column max"),
    _rule("cap_depth", "depth", "cap h overall total"),
    _rule("stated_d", "effective depth", "d eff design"),
    _rule("cap_length", "length", "cap l x plan overall"),
    _rule("cap_width", "width", "cap b w y plan overall"),
    _rule("cover", "cover", "nominal bottom c min bars"),
    _rule("stated_tie_x", "tie x", "force t uls design"),
    _rule("stated_tie_y", "tie y", "force t uls design"),
    _rule("stated_as_x", "as req x", "area bars bottom"),
    _rule("stated_as_y", "as req y", "area bars bottom"),
    _rule("stated_as_x", "area req x", "bars bottom"),
    _rule("stated_as_y", "area req y", "bars bottom"),
    _rule("embedment", "embedment", "pile head length cap"),
    _rule("concrete", "concrete", "class grade strength"),
    _rule("exposure", "exposure", "class classes condition conditions"),
    _rule("mark", "mark", "cap pile ref no"),
    _rule("mark", "ref", "cap pile no"),
    _rule("column", "column", "size section x y"),
    _rule("pile_type", "pile type", ""),
    _rule("bar_ends", "bars ends", "detail anchorage"),
)

# single-pile caps (issue 15, item 3): the horizontal links that carry the splitting tie
WORD_RULES += (
    _rule("links", "links", "horizontal bursting splitting closed cap side bars sets"),
    _rule("links", "bursting", "bars horizontal splitting cap"),
    _rule("links", "splitting", "bars horizontal cap"),
)

_ULS_WORDS = frozenset({"uls", "ed", "design"})
_ULS_QUALIFIED = frozenset({"n_ed", "stated_pile_load", "pile_capacity"})
_SLS_FIELDS = frozenset({"n_sls", "mx_sls", "my_sls", "pile_capacity_working"})


def _alias_table(texts: Mapping[str, Iterable[str]], fields: Mapping[str, str]) -> dict[frozenset[str], str]:
    table: dict[frozenset[str], str] = {}
    for f in fields:
        table.setdefault(heading_key(f.replace("_", " "))[0], f)
    for f, variants in texts.items():
        for v in variants:
            key = heading_key(v)[0]
            old = table.get(key)
            if old is not None and old != f:
                raise AssertionError(f"heading alias {v!r} maps to both {old} and {f}")
            table[key] = f
    return table


#: word set -> field, per vocabulary
ALIASES: dict[str, dict[frozenset[str], str]] = {
    "schedule": _alias_table(_ALIAS_TEXT, SCHEDULE_FIELDS),
    "coords": _alias_table(_COORD_ALIAS_TEXT, COORD_FIELDS),
    "loads": _alias_table({f: _ALIAS_TEXT[f] for f in LOAD_FIELDS}, LOAD_FIELDS),
}

# --------------------------------------------------------------------------------------------
# User mapping files
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class MappingEntry:
    heading: str            # as written in the mapping file
    field: str | None       # None: deliberately ignored
    unit: str | None        # a key of notation.UNITS, or None (use the heading's own unit)


@dataclass
class HeadingMap:
    """A user's heading mapping: word set -> entry (see the module docstring for the file format)."""

    entries: dict[frozenset[str], MappingEntry] = field(default_factory=dict)
    source: str = ""

    def get(self, words: frozenset[str]) -> MappingEntry | None:
        return self.entries.get(words)


_TARGET_RE = re.compile(r"^\s*(?P<field>[A-Za-z_][A-Za-z0-9_]*)\s*(?:\[(?P<unit>[^\]]*)\])?\s*$")


def mapping_from_dict(pairs: Mapping[str, str], source: str = "<mapping>") -> HeadingMap:
    """Build a :class:`HeadingMap` from ``{"Heading as written": "field" | "field [unit]" | "ignore"}``."""
    known = set(SCHEDULE_FIELDS) | set(COORD_FIELDS)
    out = HeadingMap(source=source)
    for heading, target in pairs.items():
        if not isinstance(target, str):
            raise IngestError(f"{source}: heading {heading!r}: expected a field name as text, got {target!r}")
        m = _TARGET_RE.match(target)
        if not m:
            raise IngestError(f"{source}: heading {heading!r}: {target!r} is not 'field' or 'field [unit]'")
        name = m.group("field").lower()
        unit = None
        if m.group("unit") is not None:
            unit = normalise_unit(m.group("unit"))
            if unit is None:
                raise IngestError(f"{source}: heading {heading!r}: unknown unit {m.group('unit')!r}; "
                                  f"known: {', '.join(sorted(set(UNIT_NAMES.values())))}")
        if name == IGNORE:
            out.entries[heading_key(heading)[0]] = MappingEntry(heading, None, None)
            continue
        if name not in known:
            raise IngestError(f"{source}: heading {heading!r}: {name!r} is not a field capcheck reads; "
                              f"known: {', '.join(sorted(known))} (or 'ignore')")
        kind = SCHEDULE_FIELDS.get(name) or COORD_FIELDS[name]
        if unit is not None and UNITS[unit][0] != kind and not (kind == "bars" and unit == "mm"):
            raise IngestError(f"{source}: heading {heading!r}: unit {UNIT_NAMES[unit]} does not fit "
                              f"{name} (a {kind})")
        out.entries[heading_key(heading)[0]] = MappingEntry(heading, name, unit)
    return out


def mapping_from_toml(text: str, source: str = "<mapping>") -> HeadingMap:
    """A mapping file's text -> :class:`HeadingMap`; IngestError naming ``source`` when it is refused."""
    problem = limits.toml_text_problem(text)
    if problem:
        raise IngestError(f"{source}: not read as a mapping file: {problem}")
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise IngestError(f"{source}: not a valid TOML mapping file ({exc})") from None
    except RecursionError:
        raise IngestError(f"{source}: not read as a mapping file: nested too deeply") from None
    table = data.get("headings")
    if not isinstance(table, dict):
        raise IngestError(f'{source}: no [headings] table; write e.g. [headings] "Pile Ø (m)" = "pile_dia [m]"')
    return mapping_from_dict(table, source)


def load_mapping(path: str | Path) -> HeadingMap:
    """Read a TOML mapping file: a ``[headings]`` table of ``"Heading as written" = "field [unit]"``
    (at most :data:`checker.ingest.limits.MAX_MAPPING_BYTES`, lines of at most
    :data:`checker.ingest.limits.MAX_TOML_LINE_CHARS` characters)."""
    p = Path(path)
    if not p.exists():
        raise IngestError(f"{p}: mapping file not found")
    raw = limits.read_bytes(p, str(p), limits.MAX_MAPPING_BYTES, what="a mapping file",
                            advice="a mapping file needs one line per heading")
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise IngestError(f"{p}: cannot read the mapping file ({exc})") from None
    return mapping_from_toml(text, str(p))


def resolve_mapping(mapping: Any) -> HeadingMap | None:
    """None, a path, a dict of heading -> target, or a :class:`HeadingMap`."""
    if mapping is None or isinstance(mapping, HeadingMap):
        return mapping
    if isinstance(mapping, Mapping):
        return mapping_from_dict(mapping)
    return load_mapping(mapping)


# --------------------------------------------------------------------------------------------
# Matching
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class HeadingMatch:
    heading: str            # as written
    column: int             # 0-based column position in the table
    field: str              # ingest field (see SCHEDULE_FIELDS / COORD_FIELDS)
    unit: str | None        # unit read from the heading or the mapping file (display spelling)
    scale: float            # factor from the column's unit to internal units (kN -> N: 1e3)
    how: str                # 'mapping file', 'canonical name', 'known heading', 'word rule'


@dataclass
class HeadingReport:
    matches: list[HeadingMatch]
    unmapped: list[str]
    notes: list[str]
    ignored: list[str] = field(default_factory=list)    # ignored on purpose by the mapping file

    @property
    def by_field(self) -> dict[str, HeadingMatch]:
        return {m.field: m for m in self.matches}

    @property
    def fields(self) -> set[str]:
        return {m.field for m in self.matches}


def _classify(words: frozenset[str], vocabulary: str) -> tuple[str | None, str]:
    fields = VOCABULARIES[vocabulary]
    if not words:
        return None, ""
    f = ALIASES[vocabulary].get(words)
    if f is not None:
        canonical = heading_key(f.replace("_", " "))[0] == words
        return f, "canonical name" if canonical else "known heading"
    if vocabulary in ("schedule", "loads"):
        for rule in WORD_RULES:
            if rule.matches(words) and rule.field in fields:
                return rule.field, "word rule"
    return None, ""


_ELEMENT_RE = re.compile(r"^\s*(?P<el>pile\s*cap|cap|pile)\b[\s:.,/\-]*(?P<rest>.+)$", re.IGNORECASE)
#: what a heading that starts with 'Pile' may name (a 'Pile depth' is not the cap's depth)
_PILE_FIELDS = frozenset({"pile_dia", "pile_spacing", "piles", "pile_capacity", "stated_pile_load", "embedment",
                          "pile_type"})


def _element_first(heading: str, unit: str | None) -> tuple[str | None, str, str | None]:
    """A heading that names the element first, 'Cap concrete grade', 'Pile cap L x W x D', 'Pile nominal
    dia': the rest of it mapped alone ('Pile ...' only to a field of the piles)."""
    m = _ELEMENT_RE.match(clean_text(heading))
    if not m:
        return None, "", unit
    rwords, runit = heading_key(m.group("rest"))
    name, _ = _classify(rwords, "schedule")
    if name is None or (m.group("el").lower() == "pile" and name not in _PILE_FIELDS):
        return None, "", unit
    return name, "element named first", unit or runit


#: every word of the known headings, the word rules and the spellings unified (:func:`_cut_off`)
_KNOWN_WORDS: frozenset[str] = frozenset(
    w for texts in (*_ALIAS_TEXT.values(), *_COORD_ALIAS_TEXT.values(), _SYNONYMS)
    for t in texts for w in _SPLIT_RE.split(clean_text(t).lower()) if w
) | frozenset(w for r in WORD_RULES for w in r.needs | r.may)
#: the shortest cut-off word completed (two letters complete too many words)
CUT_OFF_MIN_LETTERS = 3


def _cut_off(heading: str, vocabulary: str) -> tuple[str | None, str]:
    """A heading whose last word was cut off where the cell or the page column ended ('Pile spacin',
    'Pile capac'): the field when exactly one completion of that word from the known vocabulary makes
    a known heading, with the note that says so; else (None, ''). Not tried when the heading has a unit
    (the unit stands after the last word, so that word is whole)."""
    text = clean_text(heading).lower()
    if heading_key(text)[1] is not None:
        return None, ""
    parts = [w for w in _SPLIT_RE.split(text) if w]
    last = parts[-1] if parts else ""
    if len(last) < CUT_OFF_MIN_LETTERS or last in _KNOWN_WORDS or not last.isalpha():
        return None, ""
    head = text[:text.rindex(last)]
    found: dict[str, str] = {}
    for word in sorted(w for w in _KNOWN_WORDS if w.startswith(last)):
        name, _ = _classify(heading_key(head + word)[0], vocabulary)
        if name is not None:
            found.setdefault(name, word)
    if len(found) != 1:
        return None, ""
    ((name, word),) = found.items()
    return name, (f"heading {heading!r} is read as {name}: its last word looks cut off ({last!r} taken as "
                  f"{word!r}); check the column, or map the heading in a mapping file")


def match_heading(heading: str, vocabulary: str = "schedule",
                  mapping: HeadingMap | None = None,
                  cut_off: bool = False) -> tuple[str | None, str | None, float, str, str]:
    """One heading -> (field or None, unit display or None, scale, how, problem note or '').
    ``cut_off``: also read a heading whose last word was cut short (:func:`_cut_off`); only for the
    headings of a table already found, never to find the heading row among data cells."""
    fields = VOCABULARIES[vocabulary]
    words, unit = heading_key(str(heading))
    how = ""
    name: str | None = None
    entry = mapping.get(words) if mapping is not None else None
    if entry is not None:
        if entry.field is None:
            return None, None, 1.0, "ignored (mapping file)", ""
        if entry.field in fields:
            name, how = entry.field, "mapping file"
            unit = entry.unit or unit
    if name is None:
        name, how = _classify(words, vocabulary)
    if name is None and vocabulary == "schedule":
        name, how, unit = _element_first(str(heading), unit)
    cut_note = ""
    if name is None and cut_off:
        name, cut_note = _cut_off(str(heading), vocabulary)
        how = "heading cut off" if name is not None else how
    if name is None:
        if "sls" in words:
            return None, None, 1.0, "", (f"heading {heading!r} looks like a serviceability value; capcheck "
                                         "reads ULS values and does not use it")
        return None, None, 1.0, "", ""
    kind = fields[name]
    note = ""
    if name in _SLS_FIELDS and how != "mapping file":
        what = {"pile_capacity_working": "a working (safe working load) pile capacity",
                "n_sls": "the SLS axial load", "mx_sls": "the SLS moment about x",
                "my_sls": "the SLS moment about y"}.get(name, "a service value")
        note = (f"heading {heading!r} is read as {what}: SLS loads are checked as load cases of their own, "
                "a working pile capacity against SLS reactions")
    elif kind == "force" and how not in ("mapping file", "canonical name"):
        if "sls" in words or "swl" in words:
            return None, None, 1.0, "", (f"heading {heading!r} looks like a serviceability load; capcheck "
                                         "reads ULS values (map it in a mapping file if it is ULS)")
        if name in _ULS_QUALIFIED and not words & _ULS_WORDS:
            note = (f"heading {heading!r} is read as the ULS value {name}; if it is a service load, "
                    "say so in a mapping file")
    if unit is None:
        scale = DEFAULT_SCALE.get(kind, 1.0)
        shown = None
    else:
        ukind, factor = UNITS[unit]
        ok = ukind == kind or (kind == "bars" and unit == "mm") or kind == "text"
        if not ok:
            return None, None, 1.0, "", (f"heading {heading!r}: unit {UNIT_NAMES[unit]} does not fit "
                                         f"{name} (a {kind}); not used")
        scale = factor if ukind == kind else 1.0
        shown = UNIT_NAMES[unit]
    return name, shown, scale, how, "; ".join(n for n in (cut_note, note) if n)


def match_headings(headings: Sequence[Any], mapping: Any = None, vocabulary: str = "schedule") -> HeadingReport:
    """Map every heading of a table. A field claimed by two headings keeps the first (noted)."""
    hmap = resolve_mapping(mapping)
    matches: list[HeadingMatch] = []
    unmapped: list[str] = []
    notes: list[str] = []
    ignored: list[str] = []
    taken: dict[str, str] = {}
    for i, h in enumerate(headings):
        text = "" if h is None else str(h)
        if not clean_text(text):
            continue
        name, unit, scale, how, problem = match_heading(text, vocabulary, hmap, cut_off=True)
        if problem:
            notes.append(problem)
        if how.startswith("ignored"):
            ignored.append(text)
            continue
        if name is None:
            unmapped.append(text)
            continue
        if name in taken:
            notes.append(f"heading {text!r} also maps to {name} (already read from {taken[name]!r}); not used")
            unmapped.append(text)
            continue
        taken[name] = text
        matches.append(HeadingMatch(text, i, name, unit, scale, how))
    return HeadingReport(matches, unmapped, notes, ignored)


def count_known(cells: Sequence[Any], vocabulary: str = "schedule", mapping: HeadingMap | None = None) -> int:
    """How many distinct fields the cells of a row map to (used to find the heading row)."""
    found = set()
    for c in cells:
        if c is None or isinstance(c, (int, float)) and not isinstance(c, bool):
            continue
        text = str(c)
        if not text.strip() or len(text) > 80:
            continue
        name = match_heading(text, vocabulary, mapping)[0]
        if name is not None:
            found.add(name)
    return len(found)
