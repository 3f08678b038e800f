"""Messages and actions speak the user's words: no internal quantity name in any message or action
template of the rule files, in the 'cannot be verified' texts, or in what the sample's check prints
(issue 11, item 11). The working (the calculation trace) may name quantities; messages may not."""

from __future__ import annotations

import re
import tomllib
from pathlib import Path

import pandas as pd
import pytest

import checker
from checker.ruleset.catalogue import QUANTITIES, plain_words

ROOT = Path(__file__).resolve().parents[1]
RULE_FILES = sorted((ROOT / "rules").glob("*.toml"))
TEXT_KEYS = ("message", "action", "not_applicable", "ok_message", "label", "title")
_PLACEHOLDER = re.compile(r"\{[^{}]*\}")
_SNAKE = re.compile(r"\b[A-Za-z][A-Za-z0-9]*_[A-Za-z0-9_]+\b")
INTERNAL = {q for q in QUANTITIES if "_" in q}


def internal_names(text: str) -> list[str]:
    """snake_case words (every internal quantity with an underscore is one) outside the placeholders."""
    return _SNAKE.findall(_PLACEHOLDER.sub("", text))


def _texts(node, where: str):
    if isinstance(node, dict):
        for k, v in node.items():
            if k in TEXT_KEYS and isinstance(v, str):
                yield f"{where}.{k}", v
            elif isinstance(v, (dict, list)):
                yield from _texts(v, f"{where}.{k}")
    elif isinstance(node, list):
        for i, v in enumerate(node):
            yield from _texts(v, f"{where}[{i}]")


@pytest.mark.parametrize("path", RULE_FILES, ids=lambda p: p.name)
def test_no_internal_name_in_a_message_or_action_template(path):
    data = tomllib.loads(path.read_text(encoding="utf-8"))
    found = [(where, text) for where, text in _texts(data, path.name) if internal_names(text)]
    assert found == []


def test_the_missing_input_texts_are_plain_words():
    for name in QUANTITIES:
        words = plain_words(name)
        assert words and not internal_names(words) and words not in QUANTITIES, (name, words)
    assert plain_words("cmin_dur") == "the exposure class"


def _cap(**over):
    row = {"Mark": "PX1", "Piles": 4, "Pile dia": 600, "Spacing": 1800, "L": 2700, "W": 2700, "Depth": 1200,
           "Column": "600", "NEd": 4500, "Concrete": "C32/40", "Cover": 75, "Bars X": "12H25",
           "Bars Y": "12H25"}
    row.update(over)
    return pd.DataFrame([row])


def test_a_missing_exposure_class_is_named_in_plain_words():
    rv = checker.review(_cap())                       # no exposure column: the durability term is missing
    cover = rv.findings[rv.findings["rule"] == "cover"].iloc[0]
    assert cover["severity"] == "query"
    assert "the exposure class is not given" in cover["message"]
    assert cover["action"] == "Give the exposure class so that the check can be made."
    assert "cmin" not in cover["message"] + cover["action"]


def test_no_internal_name_in_what_the_sample_prints():
    for name in ("harbourside-rev-A.csv", "harbourside-rev-B.csv"):
        rv = checker.review(ROOT / "sample_submissions" / name)
        for col in ("message", "action"):
            for text in rv.findings[col].dropna().unique():
                assert not (set(internal_names(text)) & INTERNAL), text
