"""The colour-coded findings list on the terminal (rich): grouped by cap, worst cap first."""

from __future__ import annotations

import math

from rich.console import Console, Group
from rich.padding import Padding
from rich.panel import Panel
from rich.table import Table
from rich.text import Text

from checker.caution import CAUTION
from checker.findings import SEVERITY_ORDER, count_by_severity, describe_source, source_of
from checker.report.palette import LABEL, STYLE, severity_text  # noqa: F401  (the one palette)



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


def _finding_block(row: dict) -> Padding:
    """One finding: badge, rule, figures on the first line; message, action and clause beneath."""
    sev = row["severity"]
    head = Text.assemble(severity_text(sev), " ", (row["rule"], "bold"))
    v, lim = _fmt(row["value"], row["unit"]), _fmt(row["limit"], row["unit"])
    if v or lim:
        head.append(f"   {v} {_CMP_WORD[sev]} {lim}" if lim else f"   {v}")
    ut = _util_text(row["utilisation"])
    if ut:
        head.append(f"   {ut}", style="bold" if sev != "ok" else "")
    body = Text(row["message"])
    if row.get("action") and sev != "ok":
        body.append("\n→ " + row["action"], style="italic")
    body.append("\n" + row["clause"], style="dim")
    return Padding(Group(head, Padding(body, (0, 0, 0, 4))), (0, 0, 0, 2))


def print_caution(console: Console) -> None:
    console.print(Panel(Text(CAUTION, style="italic"), title="Engineering caution", border_style="yellow"))


def print_findings(review, console: Console, *, show_ok: bool = False) -> None:
    f = review.findings
    console.print(
        Text.assemble(
            ("capcheck ", "bold"),
            (f"{review.submission}", "bold cyan"),
            (f"  profile {review.profile_name}  ", "dim"),
            (f"{len(review.caps)} caps checked, {len(review.rejected)} rows rejected of {review.rows_read} read", ""),
        )
    )
    print_caution(console)
    if len(f):
        rank = {s: i for i, s in enumerate(SEVERITY_ORDER)}
        worst = f.assign(_r=f["severity"].map(rank)).groupby("cap", sort=False)["_r"].min()
        order = worst.sort_values(kind="stable").index.tolist()
        by_cap = {cap: g for cap, g in f.groupby("cap", sort=False)}
        for cap in order:
            g = by_cap[cap]
            wsev = SEVERITY_ORDER[int(worst[cap])]
            src = describe_source(source_of(g.iloc[0]))
            n_ok = int((g["severity"] == "ok").sum())
            head = Text.assemble(("\n"), (f"{cap}", "bold"), "  ", severity_text(wsev),
                                 (f"  {src}" if src else "", "dim"),
                                 (f"  {n_ok} of {len(g)} checks met", "dim"))
            console.print(head)
            shown = g if show_ok else g[g["severity"] != "ok"]
            for row in shown.to_dict("records"):
                console.print(_finding_block(row))
    if review.rejected:
        console.print(Text("\nRows not checked", style="bold red"))
        for r in review.rejected:
            where = describe_source(r["source"]) or "?"
            console.print(Text(f"  {r['source'].get('file') or ''} {where}: ", style="bold") +
                          Text("; ".join(r["errors"])))
    for note in review.notes:
        console.print(Text(f"note: {note}", style="dim"))
    print_summary(review, console)


def print_summary(review, console: Console) -> None:
    counts = count_by_severity(review.findings) if len(review.findings) else dict.fromkeys(
        ("unsafe", "non-compliant", "query", "advisory"), 0)
    parts = [Text("\nSummary: ", style="bold")]
    for s in ("unsafe", "non-compliant", "query", "advisory"):
        parts.append(Text(f"{counts[s]} {s}", style=STYLE[s] if counts[s] else "dim"))
        parts.append(Text("  "))
    n_ok_caps = 0
    if len(review.findings):
        worst = review.findings.groupby("cap")["severity"].agg(lambda s: all(v == "ok" for v in s))
        n_ok_caps = int(worst.sum())
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


def print_working(review, mark: str, console: Console) -> None:
    lines = review.working(mark)
    console.print(Text(f"Working for cap {mark}  ({review.submission}, profile {review.profile_name})", style="bold"))
    print_caution(console)
    rows = review.findings[review.findings["cap"] == mark]
    sev = dict(zip(rows["rule"], rows["severity"]))
    current = None
    for line in lines:
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
