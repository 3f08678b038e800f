"""Review.pile_xy: each cap's pile centres, made when asked (no per-cap loop over the schedule)."""

from __future__ import annotations

from pathlib import Path

import numpy as np

import checker
from checker.api import PileCentres
from checker.geometry import standard_layout

SAMPLES = Path(__file__).resolve().parent.parent / "sample_submissions"


def _check(rv) -> None:
    assert isinstance(rv.pile_xy, PileCentres)
    assert list(rv.pile_xy) == rv.caps["mark"].astype(str).tolist()
    X, Y = standard_layout(rv.caps["piles"].to_numpy(float), rv.caps["pile_spacing"].fillna(0).to_numpy(float))
    for i, mark in enumerate(rv.caps["mark"].astype(str)):
        xy = rv.pile_xy[mark]
        want = np.column_stack([X[i][np.isfinite(X[i])], Y[i][np.isfinite(Y[i])]])
        np.testing.assert_allclose(xy, want, err_msg=mark)    # the engine's layout, its pile order


def test_pile_centres_are_the_standard_layouts_of_the_sample():
    _check(checker.review(SAMPLES / "harbourside-rev-A.csv"))


def test_pile_centres_with_load_cases_come_from_each_caps_first_case_row():
    _check(checker.review(SAMPLES / "harbourside-rev-C-cases.csv"))
