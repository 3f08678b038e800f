"""Load and check rule files and parameter profiles.

Layering, lowest first: the packaged rule files and the profile (which may extend another), a
``--rules DIR`` folder (its rule files replace packaged rules of the same id and add new ones; its
profiles are found before the packaged ones), and ``--set name=value`` on the command line.
Everything is checked when it loads: a refused file names the file, the rule id and the reason.
"""

from __future__ import annotations

import os
import re
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from pydantic import ValidationError

from checker.findings import COMMENT_SEVERITIES
from checker.ruleset.catalogue import QUANTITIES
from checker.ruleset.expr import ExprError, Expression, compile_expression
from checker.ruleset.schema import ProfileFile, RuleFile, RuleSpec
from checker.ruleset.templates import Template, TemplateError, parse_template

MAX_RULE_FILE_BYTES = 512 * 1024
RESULT_NAMES = {"value", "limit", "utilisation", "unit", "label", "severity"}
FIGURE_NAMES = {"value", "limit", "utilisation"}  # not in the texts of a condition rule


class RuleFileError(ValueError):
    """A rule or profile file was refused; the message names the file, the rule and the reason."""


def packaged_rules_dir() -> Path:
    """The packaged rule files and profiles (``CAPCHECK_RULES`` overrides): the top-level ``rules/``
    folder in a source checkout, the copy inside the installed package otherwise (checker/resources.py)."""
    env = os.environ.get("CAPCHECK_RULES")
    if env:
        return Path(env)
    from checker.resources import data_dir

    return data_dir("rules")


@dataclass(frozen=True)
class CompiledCheck:
    label: str
    value: Expression
    compare: str
    limit: Expression
    applies: Expression | None
    message: Template | None
    action: Template | None


@dataclass(frozen=True)
class CompiledOverride:
    when: Expression
    severity: str
    note: str


@dataclass(frozen=True)
class CompiledVariant:
    family: str
    name: str
    source: str
    use: tuple[tuple[str, str], ...]
    requires: str | None = None


@dataclass(frozen=True)
class Rule:
    id: str
    title: str
    clause: str
    severity: str
    unit: str
    group: str
    applies: Expression | None
    not_applicable: str
    checks: tuple[CompiledCheck, ...]
    message: Template
    ok_message: Template | None
    action: Template
    working: tuple[Template, ...]
    overrides: tuple[CompiledOverride, ...]
    file: str
    variants: tuple[CompiledVariant, ...] = ()
    kind: str = "quantity"   # "condition": met or not met, no value, limit or utilisation shown

    @property
    def is_condition(self) -> bool:
        return self.kind == "condition"

    @property
    def output_unit(self) -> str:
        """The unit the results carry: none for a condition."""
        return "" if self.is_condition else self.unit
    cases: str | None = None            # see schema.RuleSpec.cases; None: decided by the names it uses

    @property
    def families(self) -> list[str]:
        out: list[str] = []
        for v in self.variants:
            if v.family not in out:
                out.append(v.family)
        return out

    @property
    def names(self) -> set[str]:
        out: set[str] = set()
        for c in self.checks:
            out |= c.value.names | c.limit.names
        return out


@dataclass(frozen=True)
class Profile:
    name: str
    title: str
    params: dict[str, float | str]
    sources: dict[str, str]
    severity: dict[str, str] = field(default_factory=dict)
    disable: tuple[str, ...] = ()
    files: tuple[str, ...] = ()
    drop_variants: tuple[str, ...] = ()
    #: the allowed words of each text-valued parameter (a parameter not named here is a number)
    choices: dict[str, tuple[str, ...]] = field(default_factory=dict)

_QUOTED = re.compile(r'"(?:[^"\\\n]|\\.)*"' + r"|'[^'\n]*'")
MAX_KEY = 1_000  # characters of a key or table header; tomllib's time grows with the square of a dotted key's depth


def _read_toml(path: Path) -> dict[str, Any]:
    """Read a rule or profile file: a regular file, at most MAX_RULE_FILE_BYTES, no key or table name
    longer than MAX_KEY, valid UTF-8 TOML. Anything else is refused with the file and the reason."""
    import stat

    try:
        st = path.stat()
    except OSError as exc:
        raise RuleFileError(f"{path}: cannot be read ({exc.strerror})") from None
    if not stat.S_ISREG(st.st_mode):
        raise RuleFileError(f"{path}: not a regular file (rule files are plain TOML files)")
    if st.st_size > MAX_RULE_FILE_BYTES:
        raise RuleFileError(f"{path}: {st.st_size} bytes is larger than the {MAX_RULE_FILE_BYTES} bytes allowed")
    try:
        with path.open("rb") as fh:
            raw = fh.read(MAX_RULE_FILE_BYTES + 1)
    except OSError as exc:
        raise RuleFileError(f"{path}: cannot be read ({exc.strerror})") from None
    if len(raw) > MAX_RULE_FILE_BYTES:
        raise RuleFileError(f"{path}: larger than the {MAX_RULE_FILE_BYTES} bytes allowed")
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError:
        raise RuleFileError(f"{path}: is not UTF-8 text") from None
    for no, line in enumerate(text.splitlines(), start=1):
        # outside its quoted strings (where expressions live, refused later with their rule id), no
        # line may be long: keys, table names and inline tables stay short
        bare = _QUOTED.sub('""', line) if len(line) > MAX_KEY else line
        if len(bare) > MAX_KEY:
            raise RuleFileError(f"{path}: line {no}: {len(bare)} characters outside quoted text, more than "
                                f"the {MAX_KEY} allowed for keys, table names and inline tables")
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise RuleFileError(f"{path}: not valid TOML ({exc})") from None
    except RecursionError:
        raise RuleFileError(f"{path}: nested too deeply") from None


def _pydantic_reason(exc: ValidationError) -> str:
    parts = []
    for err in exc.errors()[:5]:
        loc = ".".join(str(x) for x in err["loc"])
        parts.append(f"{loc}: {err['msg']}")
    return "; ".join(parts)


def _rule_id_at(raw: dict[str, Any], loc: tuple[int | str, ...]) -> str:
    try:
        if loc and loc[0] == "rule" and isinstance(loc[1], int):
            rid = raw["rule"][loc[1]].get("id")
            return str(rid) if rid is not None else f"rule #{loc[1] + 1}"
    except (KeyError, IndexError, TypeError, AttributeError):
        pass
    return "?"


def _compile_rule(spec: RuleSpec, known: set[str], file: str) -> Rule:
    where = f"{file}: rule '{spec.id}'"

    def expr(text: str | None, what: str) -> Expression:
        if text is None:
            raise RuleFileError(f"{where}: {what} is missing")
        try:
            return compile_expression(text, known)
        except ExprError as exc:
            raise RuleFileError(f"{where}: {what} '{text[:80]}' refused: {exc}") from None

    def tmpl(text: str, what: str, extra: set[str] = RESULT_NAMES) -> Template:
        try:
            t = parse_template(text, known | extra)
        except TemplateError as exc:
            raise RuleFileError(f"{where}: {what}: {exc}") from None
        figures = sorted(t.names & FIGURE_NAMES - known)
        if spec.kind == "condition" and figures:
            raise RuleFileError(f"{where}: {what}: a condition rule has no {', '.join(figures)} to show "
                                "(name the quantity itself, e.g. {n_piles:.0f})")
        return t

    if spec.check and (spec.value or spec.limit or spec.compare):
        raise RuleFileError(f"{where}: give either value/compare/limit or [[rule.check]] entries, not both")
    if not spec.check and not (spec.value and spec.limit and spec.compare):
        raise RuleFileError(f"{where}: value, compare and limit are all needed")
    if spec.kind == "condition" and spec.variant:
        raise RuleFileError(f"{where}: a condition rule cannot have method variants "
                            "(they are graded by utilisation, which a condition does not have)")
    checks = []
    for i, c in enumerate(spec.checks()):
        label = c.label or spec.title
        checks.append(
            CompiledCheck(
                label=label,
                value=expr(c.value, f"check {i + 1} value"),
                compare=c.compare,
                limit=expr(c.limit, f"check {i + 1} limit"),
                applies=expr(c.applies, f"check {i + 1} applies") if c.applies else None,
                message=tmpl(c.message, f"check {i + 1} message") if c.message else None,
                action=tmpl(c.action, f"check {i + 1} action") if c.action else None,
            )
        )
    overrides = tuple(
        CompiledOverride(expr(o.when, "override when"), o.severity, o.note) for o in spec.override
    )
    variants = []
    seen_v: set[tuple[str, str]] = set()
    for v in spec.variant:
        if (v.family, v.name) in seen_v:
            raise RuleFileError(f"{where}: variant '{v.name}' of '{v.family}' is declared twice")
        seen_v.add((v.family, v.name))
        for a, b in v.use.items():
            for nm in (a, b):
                if nm not in known:
                    raise RuleFileError(f"{where}: variant '{v.name}': unknown quantity '{nm}'")
        if v.requires is not None and v.requires not in known:
            raise RuleFileError(f"{where}: variant '{v.name}': unknown profile parameter '{v.requires}'")
        variants.append(CompiledVariant(v.family, v.name, v.source, tuple(v.use.items()), v.requires))
    return Rule(
        id=spec.id,
        title=spec.title,
        clause=spec.clause,
        severity=spec.severity,
        unit=spec.unit,
        group=spec.group,
        applies=expr(spec.applies, "applies") if spec.applies else None,
        not_applicable=spec.not_applicable,
        checks=tuple(checks),
        message=tmpl(spec.message, "message"),
        ok_message=tmpl(spec.ok_message, "ok_message") if spec.ok_message else None,
        action=tmpl(spec.action, "action"),
        working=tuple(tmpl(w, f"working line {i + 1}", set()) for i, w in enumerate(spec.working)),
        overrides=overrides,
        file=file,
        variants=tuple(variants),
        kind=spec.kind,
        cases=spec.cases,
    )


def load_rule_file(path: Path, known: set[str]) -> list[Rule]:
    raw = _read_toml(path)
    try:
        spec = RuleFile.model_validate(raw)
    except ValidationError as exc:
        first = exc.errors()[0]
        rid = _rule_id_at(raw, tuple(first["loc"]))
        raise RuleFileError(f"{path}: rule '{rid}': {_pydantic_reason(exc)}") from None
    seen: set[str] = set()
    rules = []
    for r in spec.rule:
        if r.id in seen:
            raise RuleFileError(f"{path}: rule '{r.id}': the id is used twice in this file")
        seen.add(r.id)
        rules.append(_compile_rule(r, known, str(path)))
    return rules


def _profile_paths(name_or_path: str, search: list[Path]) -> Path:
    p = Path(name_or_path)
    if p.suffix == ".toml" and p.exists():
        return p
    for folder in search:
        cand = folder / "profiles" / f"{name_or_path}.toml"
        if cand.exists():
            return cand
    names = sorted({f.stem for folder in search for f in (folder / "profiles").glob("*.toml")})
    raise RuleFileError(f"profile '{name_or_path}' not found; available: {', '.join(names) or 'none'}")


def load_profile(name_or_path: str, search: list[Path], overrides: dict[str, str] | None = None,
                 _depth: int = 0) -> Profile:
    if _depth > 5:
        raise RuleFileError(f"profile '{name_or_path}': 'extends' goes more than 5 levels deep")
    path = _profile_paths(name_or_path, search)
    raw = _read_toml(path)
    try:
        spec = ProfileFile.model_validate(raw)
    except ValidationError as exc:
        raise RuleFileError(f"{path}: {_pydantic_reason(exc)}") from None
    params: dict[str, float | str] = {}
    sources: dict[str, str] = {}
    severity: dict[str, str] = {}
    disable: list[str] = []
    files: list[str] = []
    drops: list[str] = []
    choices: dict[str, tuple[str, ...]] = {}
    if spec.extends:
        base = load_profile(spec.extends, search, None, _depth + 1)
        params.update(base.params)
        sources.update(base.sources)
        severity.update(base.severity)
        disable.extend(base.disable)
        files.extend(base.files)
        drops.extend(base.drop_variants)
        choices.update(base.choices)
    for k, p in spec.params.items():
        if not k.isidentifier() or k.startswith("_"):
            raise RuleFileError(f"{path}: parameter '{k}' is not a plain name")
        if k in QUANTITIES:
            raise RuleFileError(f"{path}: parameter '{k}' has the name of a schedule quantity")
        _check_param(path, k, p.value, p.choices, params.get(k), choices)
        params[k] = p.value
        sources[k] = "; ".join(x for x in (p.clause, p.note) if x)
    for rid, sev in spec.severity.items():
        if sev not in COMMENT_SEVERITIES:
            raise RuleFileError(f"{path}: severity for '{rid}' must be one of {', '.join(COMMENT_SEVERITIES)}")
        severity[rid] = sev
    disable.extend(spec.disable)
    drops.extend(spec.drop_variants)
    files.append(str(path))
    for k, text in (overrides or {}).items():
        if k not in params:
            raise RuleFileError(f"--set {k}: no such parameter in profile '{spec.name}'")
        old = params[k]
        if isinstance(old, str):
            if text not in choices[k]:
                raise RuleFileError(f"--set {k}={text}: '{text}' is not an allowed value of {k}; "
                                    f"one of: {', '.join(choices[k])}")
            params[k] = text
        else:
            try:
                params[k] = float(text)
            except ValueError:
                raise RuleFileError(f"--set {k}={text}: a number is needed") from None
        sources[k] = "set on the command line"
    return Profile(spec.name, spec.title, params, sources, severity, tuple(disable), tuple(files),
                   tuple(dict.fromkeys(drops)), choices)


def _check_param(path: Path, name: str, value: float | str, declared: list[str] | None,
                 inherited: float | str | None, choices: dict[str, tuple[str, ...]]) -> None:
    """Refuse a parameter whose value does not fit its declared type: a number where the parameter
    (or the profile it extends) is a number; one of its declared words where it is text. Records the
    words of a text parameter in ``choices``."""
    if declared is not None:
        if name in choices and tuple(declared) != choices[name]:
            raise RuleFileError(f"{path}: parameter '{name}': its words are declared as "
                                f"{', '.join(choices[name])} already; they cannot change in a profile that extends it")
        choices[name] = tuple(declared)
    words = choices.get(name)
    if isinstance(value, str):
        if words is None:
            kind = "a number" if inherited is not None else "a number, or text with its allowed words (choices = [...])"
            raise RuleFileError(f"{path}: parameter '{name}' = {value!r}: {kind} is needed")
        if value not in words:
            raise RuleFileError(f"{path}: parameter '{name}' = {value!r} is not an allowed value; "
                                f"one of: {', '.join(words)}")
    elif words is not None:
        raise RuleFileError(f"{path}: parameter '{name}' = {value!r}: one of {', '.join(words)} is needed, "
                            "not a number")


@dataclass(frozen=True)
class RuleSet:
    rules: tuple[Rule, ...]
    profile: Profile
    folders: tuple[str, ...]

    def get(self, rule_id: str) -> Rule:
        for r in self.rules:
            if r.id == rule_id:
                return r
        raise KeyError(rule_id)


def load_ruleset(profile: str = "uk-na", rules_dir: str | Path | None = None,
                 overrides: dict[str, str] | None = None,
                 drop_variants: list[str] | tuple[str, ...] = ()) -> RuleSet:
    """Load the packaged rules, then ``rules_dir`` on top, and resolve the profile.

    ``drop_variants`` (with the profile's own ``drop_variants``) removes accepted methods a project's
    specification does not accept; a family cannot lose every variant."""
    search = []
    if rules_dir is not None:
        extra = Path(rules_dir)
        if not extra.is_dir():
            raise RuleFileError(f"--rules {extra}: not a folder")
        search.append(extra)
    search.append(packaged_rules_dir())
    prof = load_profile(profile, search, overrides)
    known = set(QUANTITIES) | set(k for k, v in prof.params.items() if not isinstance(v, str))
    by_id: dict[str, Rule] = {}
    for folder in reversed(search):  # packaged first, user folder replaces by id
        for f in sorted(folder.glob("*.toml")):
            for r in load_rule_file(f, known):
                if r.id in by_id and by_id[r.id].file.startswith(str(folder)):
                    raise RuleFileError(f"{f}: rule '{r.id}': the id is already defined in {by_id[r.id].file}")
                by_id[r.id] = r
    if not by_id:
        raise RuleFileError(f"no rule files found in {', '.join(str(s) for s in search)}")
    drops = set(prof.drop_variants) | set(drop_variants)
    all_names = {v.name for r in by_id.values() for v in r.variants}
    unknown = sorted(drops - all_names)
    if unknown:
        raise RuleFileError(f"variant(s) {', '.join(unknown)} not declared by any rule; "
                            f"declared: {', '.join(sorted(all_names)) or 'none'}")
    rules = []
    for r in by_id.values():
        if r.id in prof.disable:
            continue
        if r.id in prof.severity:
            r = Rule(**{**r.__dict__, "severity": prof.severity[r.id]})
        # a method that needs a profile parameter (e.g. a National Annex choice) is accepted only
        # where the profile sets it non-zero
        gated = {v.name for v in r.variants
                 if v.requires is not None and not float(prof.params.get(v.requires, 0.0) or 0.0)}
        if (drops or gated) and r.variants:
            kept = tuple(v for v in r.variants if v.name not in drops and v.name not in gated)
            for fam in r.families:
                if not any(v.family == fam for v in kept):
                    raise RuleFileError(f"rule '{r.id}': every variant of '{fam}' was dropped; keep at least one")
            r = Rule(**{**r.__dict__, "variants": kept})
        rules.append(r)
    return RuleSet(tuple(rules), prof, tuple(str(s) for s in search))
