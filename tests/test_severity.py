"""Severity is the one ordered enum: rank, label, colours and meaning live on it (issue 12)."""

import pandas as pd

from checker.findings import COMMENT_SEVERITIES, SEVERITY_ORDER, SEVERITY_RANK, Severity, severity_rank, sort_findings
from checker.report import comments, palette


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
