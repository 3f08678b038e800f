"""Pydantic models of a rule file and a profile file (the declarative part of capcheck).

Rule file (``rules/*.toml``)::

    [[rule]]
    id = "pile-spacing"               # stable id, part of the JSON contract
    title = "Pile spacing"
    clause = "common practice"        # or e.g. "EN 1992-1-1:2004 9.2.1.1(1), Eq. (9.1N)"
    severity = "non-compliant"        # severity when the check is not met
    unit = "mm"                       # output unit of value and limit (kN / kNm convert from N / N·mm)
    applies = "piles >= 2"            # optional; where false the result is ok, "not applicable"
    not_applicable = "single pile"    # the reason printed then
    value = "spacing_min"             # what the cap has or what acts
    compare = ">="                    # one of >=, >, <=, <
    limit = "spacing_factor * pile_dia"
    message = "Closest pile centres {value:.0f} mm; at least {limit:.0f} mm required"
    action = "Increase the pile spacing to at least {limit:.0f} mm"
    working = ["s_min = {spacing_min:.0f} mm"]

A rule whose result is a condition, not a quantity (a one- or two-pile cap needs its restraint
shown; the tie steel lies in bands over the piles), declares ``kind = "condition"``: its results
carry no value, limit or utilisation in any output (the comparison still decides met or not met),
its message and action may not use ``{value}``, ``{limit}`` or ``{utilisation}``, and it has no
method variants (they are graded by utilisation). ``kind = "quantity"`` is the default.

A rule may instead hold several ``[[rule.check]]`` entries (each with label, value, compare, limit,
optional applies and message); the governing check (highest utilisation) gives the result, so each
rule still yields exactly one result per cap. ``[[rule.override]]`` entries (``when``, ``severity``,
``note``) change the severity of a failing result where their condition holds, e.g. a failing
anchorage becomes a query when the bar shape was not stated.
"""

from __future__ import annotations

import re
from typing import Annotated, Literal

from pydantic import AfterValidator, BaseModel, ConfigDict, Field, field_validator

from checker.findings import COMMENT_SEVERITIES

RULE_ID = re.compile(r"^[a-z][a-z0-9]*(-[a-z0-9]+)*$")
Compare = Literal[">=", ">", "<=", "<"]
Kind = Literal["quantity", "condition"]
UNITS = ("mm", "mm²", "kN", "kNm", "MPa", "degrees", "%", "count", "")


def _known_severity(v: str) -> str:
    if v not in COMMENT_SEVERITIES:
        raise ValueError(f"severity must be one of {', '.join(COMMENT_SEVERITIES)}")
    return v


#: the severity of a rule or an override: any but ``ok``
RuleSeverity = Annotated[str, AfterValidator(_known_severity)]


class _Strict(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True)


class CheckSpec(_Strict):
    label: str = ""
    value: str
    compare: Compare
    limit: str
    applies: str | None = None
    message: str | None = None
    action: str | None = None


class OverrideSpec(_Strict):
    when: str
    severity: RuleSeverity
    note: str = ""


class VariantSpec(_Strict):
    """An accepted method for a strength check: a name, its source, and the quantities it uses in
    place of the default method's (``use = { tie_x = "tie_x_cw" }``). The first variant of each
    family is the default."""

    family: str = Field(min_length=1, max_length=40)
    name: str = Field(min_length=1, max_length=40)
    source: str = Field(min_length=1, max_length=300)
    use: dict[str, str] = Field(default_factory=dict, max_length=12)
    #: a profile parameter that must be non-zero for this method to be accepted (a National Annex or
    #: project choice, e.g. ``punching_beta_simplified``); the method is left out where it is zero
    requires: str | None = Field(default=None, max_length=60)

    @field_validator("family", "name")
    @classmethod
    def _slug(cls, v: str) -> str:
        if not re.match(r"^[a-z0-9][a-z0-9.\-]*$", v):
            raise ValueError("variant families and names are lower-case words joined by '-'")
        return v


class RuleSpec(_Strict):
    id: str
    title: str = Field(min_length=1, max_length=120)
    clause: str = Field(min_length=1, max_length=200)
    severity: RuleSeverity
    unit: str = ""
    kind: Kind = "quantity"
    group: str = ""
    applies: str | None = None
    not_applicable: str = "does not apply to this cap"
    value: str | None = None
    compare: Compare | None = None
    limit: str | None = None
    message: str = Field(default="{value} against {limit}", max_length=600)
    ok_message: str | None = Field(default=None, max_length=600)
    action: str = Field(default="", max_length=600)
    working: list[str] = Field(default_factory=list, max_length=40)
    check: list[CheckSpec] = Field(default_factory=list, max_length=12)
    override: list[OverrideSpec] = Field(default_factory=list, max_length=8)
    variant: list[VariantSpec] = Field(default_factory=list, max_length=12)
    #: over the load cases of a cap (issue 11): "uls" (default for a rule that names a load-dependent
    #: quantity) every ULS case, the governing one reported; "capacity-basis" the cases of the pile
    #: capacity's basis (ULS or SLS); "envelope" the largest of each quantity over the ULS cases;
    #: "sls" every SLS case (a serviceability check), or, for a cap with no SLS case, its ULS cases
    #: where the profile sets qp_ratio (the quasi-permanent over the ULS load), else a query
    cases: Literal["uls", "capacity-basis", "envelope", "sls"] | None = None

    @field_validator("id")
    @classmethod
    def _id(cls, v: str) -> str:
        if not RULE_ID.match(v) or len(v) > 40:
            raise ValueError("a rule id is lower-case words joined by '-', e.g. 'pile-spacing'")
        return v

    @field_validator("unit")
    @classmethod
    def _unit(cls, v: str) -> str:
        if v not in UNITS:
            allowed = ", ".join(u or "(none)" for u in UNITS)
            raise ValueError(f"unit must be one of {allowed}")
        return v

    def checks(self) -> list[CheckSpec]:
        """The rule's checks: the list, or the single check written at the top level."""
        if self.check:
            return list(self.check)
        return [CheckSpec(value=self.value, compare=self.compare, limit=self.limit)]  # type: ignore[arg-type]


class RuleFile(_Strict):
    rule: list[RuleSpec] = Field(default_factory=list, max_length=200)


class ParamSpec(_Strict):
    """One profile parameter: a number, or one of a closed set of words (``choices``, declared where
    the parameter is introduced and inherited by the profiles that extend it)."""

    value: float | str
    choices: list[str] | None = Field(default=None, min_length=1, max_length=20)
    clause: str = ""
    note: str = ""


class ProfileFile(_Strict):
    name: str
    title: str = ""
    extends: str | None = None
    params: dict[str, ParamSpec] = Field(default_factory=dict)
    severity: dict[str, str] = Field(default_factory=dict)
    disable: list[str] = Field(default_factory=list)
    drop_variants: list[str] = Field(default_factory=list)
