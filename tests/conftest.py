"""Shared test fixtures and the project's one tolerance policy.

Tolerance policy (stated once, used by every numeric test through the ``tol`` fixture):

1. **Printed figures** (a standard's table, a handbook or worked example, the oracle tables of the
   engineering reference): the computed value matches when it rounds to the printed figure, i.e.
   |computed − printed| ≤ half a unit in the printed figure's last digit (plus 1e-9 relative for
   binary floating point). Write the figure exactly as printed: ``tol.printed(x, "1058.82")``.
   Where the source's own arithmetic carries rounded intermediate values (for example a rounded
   ρ), the test says so and widens the band to k half-units: ``tol.printed(x, text, units=k)``.
2. **Independent implementations** of the same formula (structuralcodes, the registry's EC2
   library): relative 1e-9 (``tol.lib``).
3. **Identities** (statics, symmetry, array vs element-by-element, closed form vs general
   method): relative 1e-9 with an absolute floor of 1e-6 in internal units (N, mm, MPa)
   (``tol.same``).
"""

from __future__ import annotations

import os

import numpy as np
import pandas as pd
import pytest
from hypothesis import settings

from checker.model import FRAME_COLUMNS

# In CI the property tests draw the same examples every run (a red CI then means a change broke
# something, not that a new random example turned up); locally they explore new examples each run.
settings.register_profile("ci", derandomize=True, deadline=None)
if os.environ.get("CI"):
    settings.load_profile("ci")


class Tolerance:
    LIB_REL = 1e-9
    SAME_REL = 1e-9
    SAME_ABS = 1e-6

    @staticmethod
    def half_unit(text: str) -> float:
        t = text.strip().replace(",", ".")
        decimals = len(t.split(".")[1]) if "." in t else 0
        return 0.5 * 10.0 ** (-decimals)

    def printed(self, value, text: str, units: float = 1.0) -> None:
        """Assert that ``value`` rounds to the printed figure ``text`` (policy 1)."""
        target = float(text.replace(",", "."))
        allow = units * self.half_unit(text)
        v = np.asarray(value, dtype=float)
        ok = np.abs(v - target) <= allow + 1e-9 * abs(target)
        assert np.all(ok), f"{v} does not round to the printed {text} (allowed ±{allow:g})"

    def lib(self, a, b) -> None:
        """Assert agreement with an independent implementation (policy 2)."""
        np.testing.assert_allclose(a, b, rtol=self.LIB_REL, atol=0.0)

    def same(self, a, b) -> None:
        """Assert an identity (policy 3)."""
        np.testing.assert_allclose(a, b, rtol=self.SAME_REL, atol=self.SAME_ABS, equal_nan=True)


@pytest.fixture(scope="session")
def tol() -> Tolerance:
    return Tolerance()


# ---- canonical schedule frames built by hand (DEVELOPERS.md columns) ------------------------

#: the frame columns a hand-built row gives (the model's, less the load case and single-pile fields)
CANONICAL_COLUMNS = tuple(c for c in FRAME_COLUMNS if c not in (
    "capacity_basis", "stated_d", "links", "n_links", "phi_links", "s_links"))

def cap_row(**overrides) -> dict:
    """One canonical schedule row in internal units (N, N·mm, mm, MPa); a 2-pile C30/37 cap."""
    row = dict(
        mark="PC1", piles=2.0, pile_dia=600.0, pile_spacing=1800.0,
        cap_length=2700.0, cap_width=900.0, cap_depth=937.5,
        column_x=500.0, column_y=500.0, column_round=False,
        n_ed=2000e3, mx_ed=np.nan, my_ed=np.nan, concrete="C30/37", fck=30.0, fyk=500.0,
        cover=75.0, exposure="XC2", bars_x="6H25", bars_y="6H16",
        nx=6.0, phi_x=25.0, sx=np.nan, ny=6.0, phi_y=16.0, sy=np.nan,
        embedment=75.0, pile_capacity=np.nan, stated_pile_load=np.nan, stated_tie_x=np.nan,
        stated_tie_y=np.nan, stated_as_x=np.nan, stated_as_y=np.nan,
        pile_type="", bar_ends="", method="",
        src_file="hand-built", src_sheet=None, src_page=None, src_row=1,
    )
    row.update(overrides)
    return row


def caps_frame(*rows: dict) -> pd.DataFrame:
    """A canonical frame from rows made by :func:`cap_row`."""
    return pd.DataFrame(list(rows), columns=list(CANONICAL_COLUMNS))


@pytest.fixture(scope="session")
def make_caps():
    """Factory fixture: ``make_caps(dict(...), dict(...))`` -> canonical frame."""
    def _make(*overrides: dict) -> pd.DataFrame:
        return caps_frame(*[cap_row(**o) for o in overrides])
    return _make


# ---- the JSON contract: every JSON document a test reads can be checked against the published schema ----

_FINDINGS_VALIDATOR = None


def validate_findings_json(doc: dict) -> dict:
    """Validate a ``capcheck.findings/1`` document against the JSON Schema shipped in the package
    (checker/schema/findings-1.json); raise ``jsonschema.ValidationError`` if it does not conform,
    else return the document. jsonschema (test extra) is imported only when a test needs it."""
    global _FINDINGS_VALIDATOR
    if _FINDINGS_VALIDATOR is None:
        import json

        import jsonschema

        from checker.resources import findings_schema_text

        schema = json.loads(findings_schema_text())
        jsonschema.Draft202012Validator.check_schema(schema)
        _FINDINGS_VALIDATOR = jsonschema.Draft202012Validator(schema)
    _FINDINGS_VALIDATOR.validate(doc)
    return doc


@pytest.fixture(scope="session")
def findings_json():
    """``findings_json(doc)`` validates a findings document against the published schema."""
    return validate_findings_json
