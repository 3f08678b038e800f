"""The findings on the terminal: a colour-coded list grouped by cap, worst cap first, and for large
schedules a summary (by severity, by rule, the worst caps) with the list of the worst caps only.

Which view: the whole list for a schedule of up to :data:`LIST_ALL_UP_TO` caps, for ``--full``, and
whenever the output is not a terminal (``capcheck check ... > findings.txt`` loses nothing); the
summary view for a larger schedule on a terminal. Both start with the engineering caution.

The list is written as lines made here (wrapped to the console's width, coloured with the escape
codes of the console's own styles, worked out once per style), not as one rich renderable per
finding: rich measures and wraps every segment, which took half a minute for 10,000 caps.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
import pandas as pd
from rich import box
from rich.console import Console
from rich.panel import Panel
from rich.table import Table
from rich.text import Text

from checker.caution import CAUTION
from checker.findings import (
    COMMENT_SEVERITIES,
    SEVERITY_ORDER,
    Severity,
    count_by_severity,
    describe_source,
    severity_ranks,
)
from checker.report.palette import LABEL, LIST_ALL_UP_TO, STYLE, WORST_CAPS, severity_text  # noqa: F401

REJECTED_SHOWN = 20      # rejected rows listed under the summary view


def _fmt(v, unit: str) -> str:
    if v is None or (isinstance(v, float) and (math.isnan(v))):
        return ""
    if isinstance(v, float) and math.isinf(v):
        return "∞"
    a = abs(v)
    if unit == "MPa" or a < 10:
        s = f"{v:.2f}"
    elif a < 100:
        s = f"{v:.1f}"
    else:
        s = f"{v:,.0f}"
    return f"{s} {unit}".strip()


_CMP_WORD = {"unsafe": "against", "non-compliant": "against", "query": "against", "advisory": "against",
             "ok": "within"}


def _util_text(u) -> str:
    if u is None or (isinstance(u, float) and math.isnan(u)):
        return ""
    return "util ∞" if math.isinf(u) else f"util {u:.2f}"


def print_caution(console: Console) -> None:
    console.print(Panel(Text(CAUTION, style="italic"), title="Engineering caution", border_style="yellow"))


# ---- the list, as lines ------------------------------------------------------------------------

class _Painter:
    """Escape codes of the console's own rendering of each style, worked out once per style
    (nothing at all when the console has no colour)."""

    def __init__(self, console: Console) -> None:
        self.console = console
        self.plain = console.color_system is None or console.no_color
        self._codes: dict[str, tuple[str, str]] = {}

    def __call__(self, style: str, text: str) -> str:
        if self.plain or not style or not text:
            return text
        codes = self._codes.get(style)
        if codes is None:
            with self.console.capture() as cap:
                self.console.print(Text("X", style=style), end="", soft_wrap=True)
            before, _, after = cap.get().partition("X")
            codes = self._codes[style] = (before, after)
        return f"{codes[0]}{text}{codes[1]}"


def _wrap(text: str, width: int) -> list[str]:
    """Greedy word wrap (breaking a word only when it is longer than the line), keeping the
    text's own line breaks, as rich wraps a message."""
    width = max(width, 10)
    out: list[str] = []
    for para in text.split("\n"):
        if len(para) <= width:
            out.append(para)
            continue
        line = ""
        for word in para.split(" "):
            while len(word) > width:
                if line:
                    out.append(line)
                    line = ""
                out.append(word[:width])
                word = word[width:]
            if not line:
                line = word
            elif len(line) + 1 + len(word) <= width:
                line += " " + word
            else:
                out.append(line)
                line = word
        out.append(line)
    return out


class _Lister:
    """The findings of some caps as text lines, from the findings columns taken once."""

    def __init__(self, review, console: Console, show_ok: bool) -> None:
        f = review.findings
        self.review = review
        self.show_ok = show_ok
        self.paint = _Painter(console)
        self.width = console.width
        self.cols: dict[str, list[Any]] = {c: (f[c].tolist() if c in f.columns else [None] * len(f))
                     for c in ("rule", "severity", "value", "limit", "unit", "utilisation", "message",
                               "action", "clause", "src_page", "src_sheet", "src_row")}
        self.badges = {s: self.paint(STYLE[s], f" {LABEL[s]} ") for s in SEVERITY_ORDER}

    def source(self, i: int) -> str:
        c = self.cols
        page, sheet, row = c["src_page"][i], c["src_sheet"][i], c["src_row"][i]
        return describe_source({
            "page": None if page is None or page != page else int(page),
            "sheet": None if sheet is None or sheet != sheet else sheet,
            "row": None if row is None or row != row else int(row),
        })

    def finding(self, i: int, out: list[str]) -> None:
        c, paint = self.cols, self.paint
        sev, unit = c["severity"][i], c["unit"][i]
        unit = unit if isinstance(unit, str) else ""
        figures = ""
        v, lim = _fmt(c["value"][i], unit), _fmt(c["limit"][i], unit)
        if v or lim:
            figures = f"   {v} {_CMP_WORD[sev]} {lim}" if lim else f"   {v}"
        ut = _util_text(c["utilisation"][i])
        ut = f"   {ut}" if ut else ""
        rule = str(c["rule"][i])
        plain = f"   {LABEL[sev]}  {rule}{figures}{ut}"
        if len(plain) <= self.width:
            out.append("  " + self.badges[sev] + " " + paint("bold", rule) + figures
                       + paint("bold" if sev != "ok" else "", ut))
        else:   # a long heading wraps like any other line
            out.extend("  " + ln for ln in _wrap(plain[2:], self.width - 2))
        indent = "      "
        w = self.width - len(indent)
        msg = c["message"][i]
        for ln in _wrap(msg if isinstance(msg, str) else "", w):
            out.append(indent + ln)
        act = c["action"][i]
        if sev != "ok" and isinstance(act, str) and act:
            out.extend(indent + paint("italic", ln) for ln in _wrap("→ " + act, w))
        clause = c["clause"][i]
        out.extend(indent + paint("dim", ln) for ln in _wrap(clause if isinstance(clause, str) else "", w))

    def cap(self, mark: str, rows: list[int], worst: str, n_ok: int, out: list[str]) -> None:
        paint = self.paint
        src = self.source(rows[0]) if rows else ""
        out.append("")
        out.append(paint("bold", mark) + "  " + self.badges[worst]
                   + paint("dim", (f"  {src}" if src else "") + f"  {n_ok} of {len(rows)} checks met"))
        sev = self.cols["severity"]
        for i in rows:
            if self.show_ok or sev[i] != "ok":
                self.finding(i, out)
        if getattr(self.review, "remedy", None) is not None:
            from checker.remedy import remedy_line

            text = remedy_line(self.review, mark)
            if text:
                out.extend("  " + self.paint("italic green", ln) for ln in _wrap("⇒ " + text, self.width - 2))


def _emit(console: Console, lines: list[str]) -> None:
    """Write finished lines: straight to the console's file (what rich would write for them);
    through the console when it records or captures, so that nothing is lost."""
    if not lines:
        return
    if console.record or getattr(console, "_buffer_index", None):  # rich's private depth; None (falsy) where absent
        for ln in lines:
            console.out(Text.from_ansi(ln), highlight=False)
        return
    console.file.write("\n".join(lines) + "\n")
    console.file.flush()


class _CapTable:
    """Per cap, in the list's order (worst severity first, then as the findings are sorted): the
    rows of its findings, its worst severity and its count of met checks, by array arithmetic."""

    def __init__(self, f: pd.DataFrame) -> None:
        self.sev_rank = severity_ranks(f["severity"])            # the categorical's codes
        codes, marks = pd.factorize(f["cap"].astype(str))      # caps in the order first seen
        n_caps = len(marks)
        self.codes = np.asarray(codes, dtype=np.int64)
        self.marks = [str(m) for m in marks]
        self.worst = np.full(n_caps, len(SEVERITY_ORDER), dtype=np.int64)
        np.minimum.at(self.worst, self.codes, self.sev_rank)
        self.rows = np.argsort(self.codes, kind="stable")       # rows grouped by cap, order kept
        self.starts = np.searchsorted(self.codes[self.rows], np.arange(n_caps + 1))
        self.order = np.argsort(self.worst, kind="stable").tolist()
        self.n_ok = np.bincount(self.codes[self.sev_rank == Severity.OK.rank], minlength=n_caps)
        self.util = f["utilisation"].to_numpy(dtype=float, na_value=np.nan)

    def cap_rows(self, k: int) -> list[int]:
        return self.rows[self.starts[k]:self.starts[k + 1]].tolist()

    def worst_caps(self, n: int) -> list[int]:
        """The n worst caps: worst severity, then the highest utilisation at that severity."""
        at_worst = self.sev_rank == self.worst[self.codes]
        u = np.where(at_worst & np.isfinite(self.util), self.util, -np.inf)
        top = np.full(len(self.marks), -np.inf)
        np.maximum.at(top, self.codes, u)
        return np.lexsort((-top, self.worst))[:n].tolist()

    def worst_row(self, k: int) -> int:
        """The cap's worst finding: at its worst severity, the highest utilisation (else the first)."""
        rows = [i for i in self.cap_rows(k) if self.sev_rank[i] == self.worst[k]]
        finite = [i for i in rows if math.isfinite(self.util[i])]
        return max(finite, key=lambda i: self.util[i]) if finite else rows[0]


def _header(review, console: Console) -> None:
    console.print(
        Text.assemble(
            ("capcheck ", "bold"),
            (f"{review.submission}", "bold cyan"),
            (f"  profile {review.profile_name}  ", "dim"),
            (f"{len(review.caps)} caps checked, {len(review.rejected)} rows rejected"
             + (f", {len(review.skipped)} skipped" if review.skipped else "")
             + f" of {review.rows_read} read", ""),
        )
    )
    print_caution(console)


def list_view(review, console: Console, listing: str = "auto") -> str:
    """"list" or "summary": what :func:`print_findings` shows for ``listing`` auto / full / summary."""
    if listing == "full":
        return "list"
    if listing == "summary":
        return "summary"
    n_caps = len(review.caps) if review.caps is not None else 0
    return "summary" if n_caps > LIST_ALL_UP_TO and console.is_terminal else "list"


def print_findings(review, console: Console, *, show_ok: bool = False, listing: str = "auto",
                   worst: int = WORST_CAPS) -> None:
    """The findings: every cap's (``listing="full"``, or ``auto`` for a small schedule or when the
    output is not a terminal), or the summary view with the ``worst`` worst caps in full."""
    f = review.findings
    view = list_view(review, console, listing)
    _header(review, console)
    table = _CapTable(f) if len(f) else None
    if table is not None:
        lister = _Lister(review, console, show_ok)
        caps = table.order if view == "list" else table.worst_caps(max(0, worst))
        if view == "summary":
            _print_overview(review, console, table, lister, caps)
        lines: list[str] = []
        for k in caps:
            lister.cap(table.marks[k], table.cap_rows(k), SEVERITY_ORDER[int(table.worst[k])],
                       int(table.n_ok[k]), lines)
            if len(lines) > 20_000:
                _emit(console, lines)
                lines = []
        _emit(console, lines)
        if view == "summary" and len(table.marks) > len(caps):
            console.print(Text(f"\n{len(table.marks) - len(caps):,} more caps not listed here: "
                               "--full lists every cap, and so does writing to a file "
                               "(capcheck check ... > findings.txt); -o FILE.xlsx / .html / .csv "
                               "write the comments.", style="bold"))
    for p in review.table_problems:
        where = describe_source(p.source) or "?"
        head = f"\nTable problem, {p.source.get('file') or ''} {where} (heading row): "
        console.print(Text(head, style="bold red")
                      + Text("; ".join(p.errors)))
    if review.rejected:
        console.print(Text("\nRows not checked", style="bold red"))
        shown = review.rejected if view == "list" else review.rejected[:REJECTED_SHOWN]
        for r in shown:
            where = describe_source(r.source) or "?"
            mark = f" {r.mark}" if r.mark else ""
            console.print(Text(f"  {r.source.get('file') or ''} {where}{mark}: ", style="bold") +
                          Text("; ".join(r.errors)))
        if len(shown) < len(review.rejected):
            console.print(Text(f"  ... and {len(review.rejected) - len(shown):,} more rows not checked "
                               "(--full lists them all)", style="bold red"))
    unused = review.unused_headings
    if unused:
        console.print(Text("Headings not used: ", style="yellow") + Text(", ".join(repr(u) for u in unused)))
    for note in review.notes:
        console.print(Text(f"note: {note}", style="dim"))
    print_summary(review, console)
    if view == "summary":
        print_caution(console)


def _print_overview(review, console: Console, table: _CapTable, lister: _Lister, caps: list[int]) -> None:
    """The summary view's tables: findings by severity, by rule, and the worst caps."""
    f = review.findings
    n_caps = len(table.marks)
    t = Table(title=f"Findings by severity ({n_caps:,} caps)", title_justify="left", header_style="bold",
              box=box.SIMPLE_HEAD)
    t.add_column("severity", no_wrap=True)
    t.add_column("findings", justify="right")
    t.add_column("caps at worst", justify="right")
    counts = f["severity"].value_counts()
    caps_at = np.bincount(table.worst, minlength=len(SEVERITY_ORDER))
    for i, s in enumerate(SEVERITY_ORDER):
        t.add_row(severity_text(s), f"{int(counts.get(s, 0)):,}", f"{int(caps_at[i]):,}")
    console.print(t)

    bad = f[f["severity"] != "ok"]
    if len(bad):
        per = bad.groupby([bad["rule"].astype(str), bad["severity"].astype(str)], observed=True).size()
        per = per.unstack(fill_value=0).reindex(columns=list(COMMENT_SEVERITIES), fill_value=0)
        per = per.sort_values(list(COMMENT_SEVERITIES), ascending=False)
        r = Table(title="Findings by rule (checks not met or not verified)", title_justify="left",
                  header_style="bold", box=box.SIMPLE_HEAD)
        r.add_column("rule", no_wrap=True)
        for s in COMMENT_SEVERITIES:
            r.add_column(s, justify="right", no_wrap=True)
        for rule, row in zip(per.index.tolist(), per.to_numpy().tolist()):
            r.add_row(rule, *[Text(f"{n:,}", style=STYLE[s]) if n else Text("0", style="dim")
                              for n, s in zip(row, COMMENT_SEVERITIES)])
        console.print(r)

    w = Table(title=f"The {len(caps)} worst caps (worst severity, then highest utilisation), listed in full below",
              title_justify="left", header_style="bold", box=box.SIMPLE_HEAD)
    w.add_column("cap", no_wrap=True)
    w.add_column("worst", no_wrap=True)
    w.add_column("not met", justify="right")
    w.add_column("worst finding", overflow="fold")
    c = lister.cols
    for k in caps:
        i = table.worst_row(k)
        n_rows = table.starts[k + 1] - table.starts[k]
        sev = SEVERITY_ORDER[int(table.worst[k])]
        unit = c["unit"][i] if isinstance(c["unit"][i], str) else ""
        figs = ", ".join(x for x in (_fmt(c["value"][i], unit) and f"{_fmt(c['value'][i], unit)} against "
                                     f"{_fmt(c['limit'][i], unit)}", _util_text(c["utilisation"][i])) if x)
        w.add_row(table.marks[k], severity_text(sev), f"{int(n_rows - table.n_ok[k])}",
                  Text.assemble((str(c["rule"][i]), "bold"), f"  {figs}" if figs else ""))
    console.print(w)


def print_summary(review, console: Console) -> None:
    f = review.findings
    counts = count_by_severity(f) if len(f) else dict.fromkeys(
        ("unsafe", "non-compliant", "query", "advisory"), 0)
    parts = [Text("\nSummary: ", style="bold")]
    for s in ("unsafe", "non-compliant", "query", "advisory"):
        parts.append(Text(f"{counts[s]} {s}", style=STYLE[s] if counts[s] else "dim"))
        parts.append(Text("  "))
    n_ok_caps = 0
    if len(f):
        caps = f["cap"].astype(str)
        n_ok_caps = int(caps.nunique() - caps[f["severity"] != "ok"].nunique())
    parts.append(Text(f"| {n_ok_caps} of {len(review.caps)} caps met every listed check "
                      f"(this is not a statement that a design is safe)", style="dim"))
    console.print(Text.assemble(*parts))


def print_rules(ruleset, console: Console) -> None:
    t = Table(title=f"Rules loaded (profile {ruleset.profile.name})", header_style="bold")
    t.add_column("id", no_wrap=True)
    t.add_column("title")
    t.add_column("clause", overflow="fold")
    t.add_column("severity", no_wrap=True)
    t.add_column("limit in this profile", overflow="fold")
    params = ruleset.profile.params
    for r in ruleset.rules:
        limits = []
        for c in r.checks:
            text = c.limit.text
            used = [n for n in sorted(c.limit.names) if n in params]
            if used:
                text += "  (" + ", ".join(f"{n} = {params[n]:g}" for n in used) + ")"
            limits.append(f"{c.value.text} {c.compare} {text}")
        t.add_row(r.id, r.title, r.clause, severity_text(r.severity), "\n".join(limits))
    console.print(t)
    print_caution(console)


def not_applicable(message) -> bool:
    """A result whose check does not apply to the cap (its message gives the reason)."""
    return str(message or "").lstrip().lower().startswith("not applicable")


def print_working(review, mark: str, console: Console) -> None:
    lines = review.working(mark)
    console.print(Text(f"Working for cap {mark}  ({review.submission}, profile {review.profile_name})", style="bold"))
    print_caution(console)
    rows = review.findings[review.findings["cap"] == mark]
    sev = dict(zip(rows["rule"], rows["severity"]))
    msgs = dict(zip(rows["rule"], rows["message"].astype(str))) if "message" in rows.columns else {}
    current = None
    for line in lines:
        if line.rule == current and not_applicable(msgs.get(line.rule)) and \
                not line.text.lstrip().startswith("->"):
            continue   # a check that does not apply: its heading and the one line giving the reason
        if line.rule != current:
            current = line.rule
            s = sev.get(line.rule, "ok")
            console.print(Text("\n") + severity_text(s) + Text(f" {line.rule}: ", style="bold") +
                          Text(line.text))
            continue
        console.print(Text(line.text))
    from checker.report.variants_table import variants_table  # deferred: it loads the rule engine

    table = variants_table(review, mark)
    if table is not None:
        console.print(Text(""))
        console.print(table)
