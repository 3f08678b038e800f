"""Test helper: the uk-na profile's parameters with a test's overrides on top.

derive() has no parameter defaults of its own (the profile files are the only source of values), so
a test that calls it with a few parameters gets the rest from the uk-na profile here."""

from __future__ import annotations

from functools import lru_cache
from typing import Any

from checker.ruleset.derive import Derived
from checker.ruleset.derive import derive as _derive
from checker.ruleset.loader import load_ruleset


@lru_cache(maxsize=None)
def _profile(name: str) -> tuple[tuple[str, Any], ...]:
    return tuple(load_ruleset(name).profile.params.items())


def profile_params(overrides: dict | None = None, profile: str = "uk-na") -> dict[str, Any]:
    """The profile's resolved parameters, ``overrides`` replacing some of them."""
    return {**dict(_profile(profile)), **(overrides or {})}


def derive(caps, coords=None, params: dict | None = None) -> Derived:
    """checker.ruleset.derive.derive with the uk-na values for every parameter not given."""
    return _derive(caps, coords, profile_params(params))
