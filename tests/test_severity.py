"""Severity is the one ordered enum: rank, label, colours and meaning live on it (issue 12)."""

from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from checker.api import review
from checker.findings import (
    COMMENT_SEVERITIES,
    FINDING_COLUMNS,
    SEVERITY_DTYPE,
    SEVERITY_ORDER,
    SEVERITY_RANK,
    Severity,
    as_severity,
    empty_findings,
    severity_from_ranks,
    severity_rank,
    severity_ranks,
    sort_findings,
    worst_by_cap,
)
from checker.report import comments, palette

SAMPLES = Path(__file__).resolve().parent.parent / "sample_submissions"


def test_order_rank_and_parse_come_from_the_enum():
    assert SEVERITY_ORDER == ("unsafe", "non-compliant", "query", "advisory", "ok")
    assert [s.rank for s in Severity] == [0, 1, 2, 3, 4]
    assert SEVERITY_RANK == {s.value: s.rank for s in Severity}
    assert COMMENT_SEVERITIES == SEVERITY_ORDER[:-1]
    assert Severity.parse(" Query ") is Severity.QUERY
    assert severity_rank("bogus") == len(SEVERITY_ORDER)


def test_presentation_is_read_from_the_enum():
    assert palette.LABEL == {s.value: s.label for s in Severity}
    assert palette.STYLE == {s.value: s.style for s in Severity}
    # comments.py still holds its own dicts (owned by the revision-cycle work); they must not drift
    assert comments.SEVERITY_FILL == {s.value: s.fill for s in Severity}
    assert comments.SEVERITY_TEXT == {s.value: s.text_colour for s in Severity}
    assert comments.SEVERITY_MEANING == {s.value: s.meaning for s in Severity}


def test_sort_order_ranks_by_the_enum():
    f = pd.DataFrame({"severity": ["ok", "unsafe", "query"], "cap": ["A", "B", "C"], "rule": ["r"] * 3})
    assert sort_findings(f)["severity"].tolist() == ["unsafe", "query", "ok"]


def test_the_severity_dtype_is_ordered_worst_first():
    """unsafe is the minimum: codes are the ranks, min() is the worst, an ascending sort puts it first."""
    assert SEVERITY_DTYPE.ordered and tuple(SEVERITY_DTYPE.categories) == SEVERITY_ORDER
    s = as_severity(["ok", "query", "unsafe", None])
    assert s.dtype == SEVERITY_DTYPE
    assert s.cat.codes.tolist() == [SEVERITY_RANK["ok"], SEVERITY_RANK["query"], SEVERITY_RANK["unsafe"], -1]
    assert s.min() == "unsafe" and s.max() == "ok"
    assert (s <= "query").tolist() == [False, True, True, False]      # "query or worse"
    assert (s == "ok").tolist() == [True, False, False, False]
    assert s.tolist()[:3] == ["ok", "query", "unsafe"] and all(type(v) is str for v in s.tolist()[:3])
    assert severity_ranks(s).tolist() == [4, 2, 0, len(SEVERITY_ORDER)]   # missing ranks after ok
    assert as_severity(s) is s
    assert severity_from_ranks(np.array([0, 4], np.int8)).tolist() == ["unsafe", "ok"]
    with pytest.raises(ValueError, match="unknown severity 'critical'"):
        as_severity(["ok", "critical"])


def test_sort_and_worst_per_cap_use_the_categorical_order():
    f = pd.DataFrame({"severity": ["ok", "advisory", "unsafe", "ok"], "cap": ["B", "A", "B", "C"],
                      "rule": ["r1", "r2", "r3", "r4"]})
    out = sort_findings(f)
    assert out["severity"].dtype == SEVERITY_DTYPE
    assert out[["severity", "cap"]].astype(str).values.tolist() == [["unsafe", "B"], ["advisory", "A"],
                                                                    ["ok", "B"], ["ok", "C"]]
    worst = worst_by_cap(f)
    assert worst.to_dict() == {"B": "unsafe", "A": "advisory", "C": "ok"}
    assert list(worst.index) == ["B", "A", "C"]                      # caps in the order first seen


def test_the_engine_builds_the_one_dtype_and_concat_keeps_it():
    empty = empty_findings()
    assert list(empty.columns) == list(FINDING_COLUMNS) and empty["severity"].dtype == SEVERITY_DTYPE
    rv = review(pd.read_csv(SAMPLES / "harbourside-rev-A.csv"), remedy=False)
    f = rv.findings
    assert f["severity"].dtype == SEVERITY_DTYPE
    assert pd.concat([f, empty], ignore_index=True)["severity"].dtype == SEVERITY_DTYPE
    ranks = severity_ranks(f["severity"])
    assert (np.diff(ranks) >= 0).all()                               # sorted worst first
    assert f["severity"].min() == SEVERITY_ORDER[int(ranks.min())]
    cases = review(SAMPLES / "harbourside-rev-C-cases.csv", remedy=False).findings
    assert cases["severity"].dtype == SEVERITY_DTYPE
