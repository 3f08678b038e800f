"""CapRecord and validate_frame: the same constraints, one source of truth, vectorised."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from pydantic import ValidationError

from checker.model import (
    CONCRETE_CLASSES,
    CROSS_CHECKS,
    FIELDS,
    FRAME_COLUMNS,
    STANDARD_BAR_SIZES,
    CapRecord,
    validate_frame,
)

BASE = dict(
    mark="PC1", piles=4, pile_dia=600.0, pile_spacing=1800.0, cap_length=2700.0, cap_width=2700.0,
    cap_depth=1200.0, column_x=600.0, column_y=600.0, column_round=False, n_ed=4.5e6, concrete="C32/40",
    fck=32.0, cover=75.0, bars_x="12H25", nx=12, phi_x=25.0, bars_y="12H25", ny=12, phi_y=25.0,
)


def frame(*changes: dict) -> pd.DataFrame:
    return pd.DataFrame([{**BASE, **c} for c in changes])


def test_valid_record_and_defaults():
    rec = CapRecord.model_validate(BASE)
    assert rec.fyk == 500.0 and rec.exposure == "" and rec.pile_spacing == 1800.0
    assert CapRecord.from_row({**BASE, "fyk": np.nan, "mx_ed": np.nan}).fyk == 500.0


def test_catalogue_is_read_from_the_model():
    assert list(FIELDS) == list(CapRecord.model_fields)
    assert FIELDS["piles"].bounds == (("ge", 1.0), ("le", 6.0)) and FIELDS["piles"].kind == "int"
    assert FIELDS["fyk"].bounds == (("ge", 400.0), ("le", 600.0))
    assert FIELDS["cap_depth"].bounds == (("gt", 0.0),)
    assert FIELDS["phi_x"].one_of == tuple(float(d) for d in STANDARD_BAR_SIZES)
    assert set(FIELDS["concrete"].one_of) == set(CONCRETE_CLASSES)
    assert FRAME_COLUMNS[-4:] == ("src_file", "src_sheet", "src_page", "src_row")


@pytest.mark.parametrize("change,message", [
    ({"cap_depth": -900.0}, "cap_depth: -900 mm must be greater than 0"),
    ({"piles": 7}, "piles: 7 must be at most 6"),
    ({"piles": 2.5}, "piles: 2.5 must be a whole number"),
    ({"fyk": 250.0}, "fyk: 250 MPa must be at least 400 MPa"),
    ({"n_ed": -1.5e6}, "n_ed: -1500 kN must be greater than 0"),
    ({"phi_x": 11.0}, "phi_x: 11 mm must be one of 6, 8, 10, 12, 16, 20, 25, 32, 40, 50"),
    ({"concrete": "C33/41"}, "concrete: 'C33/41' must be one of"),
    ({"mark": "  "}, "mark: missing (required)"),
    ({"cover": np.inf}, "cover: inf must be a finite number"),
    ({"pile_spacing": np.nan}, "pile_spacing: missing; required for 4 piles"),
    ({"pile_spacing": 500.0}, "pile_spacing: 500 mm must be at least pile_dia 600 mm"),
    ({"fck": 30.0}, "fck: 30 MPa does not match concrete C32/40 (fck 32 MPa)"),
    ({"cover": 1160.0}, "cover: 1160 mm + phi_x 25 mm + phi_y 25 mm must be less than cap_depth 1200 mm"),
    ({"column_round": True, "column_y": 500.0}, "column_y: 500 mm must equal column_x 600 mm"),
    ({"bar_ends": "wiggly"}, "bar_ends: 'wiggly' must be one of"),
])
def test_messages_name_field_value_and_requirement(change, message):
    valid, errors = validate_frame(frame(change))
    assert valid.empty
    assert any(m.startswith(message) for m in errors[0]), errors[0]
    with pytest.raises(ValidationError):
        CapRecord.from_row({**BASE, **change})


def test_single_pile_needs_no_spacing():
    valid, errors = validate_frame(frame({"piles": 1, "pile_spacing": np.nan}))
    assert len(valid) == 1 and errors == {}
    CapRecord.from_row({**BASE, "piles": 1, "pile_spacing": np.nan})


def test_missing_columns_and_index_kept():
    df = frame({}, {"cap_depth": 0.0}, {}).set_axis([10, 20, 30])
    valid, errors = validate_frame(df)
    assert list(valid.index) == [10, 30] and list(errors) == [20]
    valid, errors = validate_frame(df.drop(columns=["cover"]))
    assert valid.empty and all("cover: missing (required)" in e for e in errors.values())


def test_all_reasons_are_reported():
    _, errors = validate_frame(frame({"cap_depth": -1.0, "fyk": 700.0, "nx": 0}))
    fields = [m.split(":")[0] for m in errors[0]]
    assert fields == ["cap_depth", "fyk", "nx"]


def test_100k_rows_validated_in_one_pass():
    n = 100_000
    df = pd.DataFrame({k: np.repeat(v, n) if not isinstance(v, str) else [v] * n for k, v in BASE.items()})
    df["mark"] = [f"PC{i}" for i in range(n)]
    df.loc[::7, "cap_depth"] = -5.0
    valid, errors = validate_frame(df)  # timing: tests/benchmarks/bench_engine.py
    assert len(errors) == len(range(0, n, 7)) and len(valid) == n - len(errors)


# ---------------------------------------------------------------------------------------------
# Property: validate_frame and CapRecord agree on random rows
# ---------------------------------------------------------------------------------------------

_num = st.one_of(
    st.floats(min_value=-1e4, max_value=1e7, allow_nan=False, allow_infinity=False),
    st.sampled_from([0.0, -1.0, 1.0, 2.5, 6.0, 7.0, 12.0, 25.0, 400.0, 500.0, 600.0, 900.0, 1800.0, np.nan,
                     np.inf]),
)
_count = st.one_of(st.integers(min_value=-2, max_value=20).map(float), st.sampled_from([2.5, np.nan]))
_phi = st.one_of(st.sampled_from([6.0, 11.0, 16.0, 25.0, 32.0, np.nan]), _num)
_text = st.sampled_from(["", " ", "PC1", "x", "12H25"])


def _strategy_for(name: str):
    spec = FIELDS[name]
    if name == "concrete":
        return st.sampled_from(list(CONCRETE_CLASSES) + ["C33/41", "", "c32/40"])
    if name == "fck":
        return st.one_of(st.sampled_from([float(v[0]) for v in CONCRETE_CLASSES.values()]), _num)
    if name in ("phi_x", "phi_y"):
        return _phi
    if name == "bar_ends":
        return st.sampled_from(["", "straight", "bent", "hooked", "wiggly"])
    if name == "column_round":
        return st.booleans()
    if spec.kind == "int":
        return _count
    if spec.kind == "float":
        return _num
    return _text


_row = st.fixed_dictionaries({name: st.one_of(st.just(BASE.get(name, np.nan)), _strategy_for(name))
                              if name in BASE else _strategy_for(name) for name in FIELDS})


def _pydantic_outcome(row):
    try:
        CapRecord.from_row(row)
    except ValidationError as exc:
        locs, cross = set(), []
        for e in exc.errors():
            if e["loc"]:
                locs.add(e["loc"][0])
            else:
                cross.extend(e["msg"].removeprefix("Value error, ").split("; "))
        return False, locs, cross
    return True, set(), []


@settings(max_examples=50, deadline=None, suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])
@given(rows=st.lists(_row, min_size=1, max_size=30))
def test_validate_frame_agrees_with_the_record(rows):
    df = pd.DataFrame(rows)
    valid, errors = validate_frame(df)
    cross_fields = {c.field for c in CROSS_CHECKS}
    for i, row in enumerate(rows):
        ok, locs, cross = _pydantic_outcome(row)
        assert ok == (i not in errors), (row, errors.get(i), locs, cross)
        if ok:
            continue
        msgs = errors[i]
        fields = {m.split(":")[0] for m in msgs}
        if locs:
            assert locs <= fields, (locs, msgs)
            assert fields - locs <= cross_fields, (locs, msgs)
        else:
            assert msgs == cross, (msgs, cross)
    assert len(valid) == len(rows) - len(errors)
