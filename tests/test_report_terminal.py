"""The findings on the terminal (issue 14, item 5): the whole list for a small schedule or output
that is not a terminal, the summary view (by severity, by rule, the worst caps) for a large one."""

from __future__ import annotations

import io
import re

import pytest
from bench_engine import synthetic_schedule  # invented caps
from rich.console import Console

import checker
from checker.caution import CAUTION
from checker.cli import main
from checker.report.palette import LIST_ALL_UP_TO
from checker.report.terminal import print_findings

N_CAPS = LIST_ALL_UP_TO + 20


@pytest.fixture(scope="module")
def big():
    return checker.review(synthetic_schedule(N_CAPS, seed=3))


def _render(rv, *, terminal: bool, **kw) -> str:
    buf = io.StringIO()
    con = Console(file=buf, width=100, highlight=False, color_system=None, force_terminal=terminal)
    print_findings(rv, con, **kw)
    return buf.getvalue()


def _flat(text: str) -> str:
    return " ".join(text.replace("│", " ").split())


def _cap_headings(text: str) -> list[str]:
    return re.findall(r"^(PC\d+)  ", text, flags=re.M)


def test_a_large_schedule_on_a_terminal_gets_the_summary_view(big):
    out = _render(big, terminal=True, worst=5)
    flat = _flat(out)
    assert "Findings by severity" in out and "Findings by rule" in out and "The 5 worst caps" in out
    assert len(_cap_headings(out)) == 5                       # only the worst caps listed in full
    assert f"{N_CAPS - 5} more caps not listed here" in flat and "--full" in flat
    assert _flat(CAUTION) in flat                             # the caution on this screen too
    # the per-severity table adds up to every result
    f = big.findings
    for sev, n in f["severity"].value_counts().items():
        assert re.search(rf"{sev.upper() if sev != 'ok' else 'ok'}\s+{int(n):,}\s", out), sev


def test_the_worst_caps_are_the_worst(big):
    out = _render(big, terminal=True, worst=3)
    f = big.findings
    rank = {"unsafe": 0, "non-compliant": 1, "query": 2, "advisory": 3, "ok": 4}
    worst = f.assign(r=f["severity"].map(rank)).groupby("cap")["r"].min()
    listed = _cap_headings(out)
    assert all(worst[c] == worst.min() for c in listed)
    # among caps at the worst severity, the highest utilisation at that severity comes first
    at = f[f["severity"].map(rank) == worst.min()].groupby("cap")["utilisation"].max()
    assert listed == at.sort_values(ascending=False, kind="stable").index[:3].tolist()


def test_full_and_not_a_terminal_list_every_cap(big):
    bad_caps = set(big.findings.loc[big.findings["severity"] != "ok", "cap"])
    for out in (_render(big, terminal=False), _render(big, terminal=True, listing="full")):
        assert "Findings by rule" not in out
        assert set(_cap_headings(out)) == set(big.findings["cap"])
        flat = _flat(out)
        for msg in big.findings.loc[big.findings["severity"] != "ok", "message"]:
            assert _flat(msg) in flat
        assert bad_caps
        assert _flat(CAUTION) in flat


def test_a_small_schedule_is_listed_in_full_on_a_terminal():
    rv = checker.review(synthetic_schedule(LIST_ALL_UP_TO, seed=4))
    out = _render(rv, terminal=True)
    assert "Findings by rule" not in out
    assert len(_cap_headings(out)) == LIST_ALL_UP_TO


def test_lines_fit_the_width_and_colour_codes_are_the_consoles(big):
    out = _render(big, terminal=False)
    assert max(len(line.rstrip()) for line in out.splitlines()) <= 100
    buf = io.StringIO()
    con = Console(file=buf, width=100, highlight=False, color_system="truecolor", force_terminal=True)
    print_findings(big, con, listing="full")
    coloured = buf.getvalue()
    assert "\x1b[" in coloured
    plain = re.sub(r"\x1b\[[0-9;]*m", "", coloured)
    assert _flat(plain) == _flat(out)


def test_cli_piped_to_a_file_loses_nothing(tmp_path, capsys, big):
    src = tmp_path / "caps.csv"
    synthetic_schedule(N_CAPS, seed=3).to_csv(src, index=False)
    main(["check", str(src), "--format", "text"])
    out = capsys.readouterr().out
    assert set(_cap_headings(out)) == set(big.findings["cap"])
    main(["check", str(src), "--full", "--worst", "2"])
    assert len(_cap_headings(capsys.readouterr().out)) == N_CAPS
    with pytest.raises(SystemExit):
        main(["check", str(src), "--worst", "-1"])


def test_a_recording_console_keeps_the_list():
    rv = checker.review(synthetic_schedule(5, seed=5))
    con = Console(record=True, width=100, color_system=None, file=io.StringIO())
    print_findings(rv, con)
    text = con.export_text()
    assert set(_cap_headings(text)) == set(rv.findings["cap"])
    for msg in rv.findings.loc[rv.findings["severity"] != "ok", "message"]:
        assert _flat(msg) in _flat(text)
