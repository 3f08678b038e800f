"""The texts the shipped rules generate read as written sentences.

Every message, ok message and action template of the shipped rules (both profiles), each rendered
the way the engine renders it (per check, with that check's label, the rule's template where the
check has none; the rule-level templates also with every label, since a check may fall back on them),
plus the engine's own sentences (not applicable, override notes), rendered with example values.
Each text must have no doubled word ("the the"), no bracketed fragment that should have been a
sentence ("(Centres of the x bars, at most 300 mm)"), no unrendered placeholder, no "nan", "inf",
"n/a" or "∞", and end with a full stop, question mark or exclamation mark.
"""

from __future__ import annotations

import re

import numpy as np
import pytest

from checker.ruleset.catalogue import QUANTITIES
from checker.ruleset.loader import load_ruleset

# example values per internal unit (a plausible cap: 600 mm piles, 1250 kN reactions)
EXAMPLE = {"mm": 450.0, "mm²": 2513.0, "N": 1.25e6, "N·mm": 2.0e8, "MPa": 3.2, "count": 4.0,
           "degrees": 45.0, "": 0.85}

DOUBLED = re.compile(r"\b([A-Za-z]+)\s+\1\b", re.IGNORECASE)
BRACKETED_FRAGMENT = re.compile(r"\(\s*[A-Z][a-z]+\b")   # "(Centres of ...": a capitalised phrase in brackets
PLACEHOLDER = re.compile(r"[{}]")
NOT_A_NUMBER = re.compile(r"\b(nan|inf|infinity|n/a)\b|∞", re.IGNORECASE)


def _env(ruleset, rule) -> dict:
    env: dict = {name: np.array([EXAMPLE[unit]]) for name, (unit, _meaning) in QUANTITIES.items()}
    env.update({k: v for k, v in ruleset.profile.params.items() if not isinstance(v, str)})
    env.update({"value": np.array([412.0]), "limit": np.array([450.0]), "utilisation": np.array([1.09]),
                "unit": rule.unit, "severity": rule.severity})
    return env


def _texts(ruleset):
    """(where, text) for every text a shipped rule can put in a message or an action."""
    for rule in ruleset.rules:
        env = _env(ruleset, rule)
        labels = [c.label for c in rule.checks]
        for c in rule.checks:
            env["label"] = c.label
            where = f"{rule.id} [{c.label}]"
            for what, t in (("message", c.message or rule.message),
                            ("ok message", c.message or rule.ok_message or rule.message),
                            ("action", c.action or rule.action)):
                text = t.render_one(env)
                if what == "action" and not text:
                    continue
                yield f"{where} {what}", text
                for o in rule.overrides:
                    if what == "message" and o.note:
                        yield f"{where} message with override note", f"{text} {o.note}"
        for label in labels:  # the rule-level templates any check may fall back on
            env["label"] = label
            for what, t in (("message", rule.message), ("ok message", rule.ok_message),
                            ("action", rule.action)):
                if t is not None and t.text:
                    yield f"{rule.id} rule-level {what} [{label}]", t.render_one(env)
        yield f"{rule.id} not applicable", f"Not applicable: {rule.not_applicable}."


def _problems(text: str) -> list[str]:
    out = []
    if m := DOUBLED.search(text):
        out.append(f"doubled word {m.group(0)!r}")
    if m := BRACKETED_FRAGMENT.search(text):
        out.append(f"bracketed fragment {m.group(0)!r}...")
    if text.count("(") != text.count(")"):
        out.append("unbalanced brackets")
    if PLACEHOLDER.search(text):
        out.append("unrendered placeholder")
    if m := NOT_A_NUMBER.search(text):
        out.append(f"{m.group(0)!r} in the text")
    if not text.rstrip().endswith((".", "?", "!")):
        out.append("no final punctuation")
    return out


@pytest.mark.parametrize("profile", ["uk-na", "ec2"])
def test_every_shipped_message_and_action_reads_as_a_sentence(profile):
    rs = load_ruleset(profile)
    texts = list(_texts(rs))
    assert len(texts) > 3 * len(rs.rules)
    bad = [f"{where}: {', '.join(p)}: {text}" for where, text in texts if (p := _problems(text))]
    assert not bad, "\n".join(bad)


@pytest.mark.parametrize("text, problem", [
    ("Re-space the bars (Centres of the x bars, at most 300 mm).", "bracketed fragment"),
    ("Increase the the cover.", "doubled word"),
    ("Cover {value} mm.", "placeholder"),
    ("Cover nan mm.", "'nan'"),
    ("Utilisation ∞.", "'∞'"),
    ("Cover 40 mm against 45 mm", "final punctuation"),
    ("Cover 40 mm (bond.", "unbalanced"),
])
def test_the_checks_catch_what_they_are_meant_to(text, problem):
    assert any(problem in p for p in _problems(text)), _problems(text)


def test_plain_sentences_pass():
    for text in ("Nominal cover 40 mm; 45 mm required (durability, 4.4.1.2(5)).",
                 "Extend the cap (allows for the 75 mm tolerance, 9.8.1(1)).",
                 "Column node bearing stress 12.50 MPa against k1 nu' fcd = 17.00 MPa."):
        assert _problems(text) == []


@pytest.mark.parametrize("profile", ["uk-na", "ec2"])
def test_every_text_of_the_sample_review_reads_as_a_sentence(profile):
    """The same checks on the texts the engine actually produced for the sample submission (its
    generated sentences too: cannot be verified, method notes)."""
    from pathlib import Path

    from checker.api import review

    samples = Path(__file__).resolve().parent.parent / "sample_submissions"
    bad = []
    for name in ("harbourside-rev-A.csv", "harbourside-rev-B.csv"):
        f = review(samples / name, profile=profile).findings
        for row in f[["cap", "rule", "message", "action"]].to_dict("records"):
            for what in ("message", "action"):
                text = str(row[what] or "")
                if text and (p := _problems(text)):
                    bad.append(f"{name} {row['cap']} {row['rule']} {what}: {', '.join(p)}: {text}")
    assert not bad, "\n".join(bad[:20])
