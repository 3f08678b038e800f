"""The review report: one self-contained HTML file (inline CSS and inline SVG, no script, no
network), printable on A4 with one cap per page.

Contents: the caution, the submission facts, summary counts, the legend of severity colours, a
table of caps with their worst severity, and per cap a plan sketch to scale (see
:mod:`checker.report.svg`), that cap's results (comments first, with their comment numbers and
statuses, then the passed checks) and the working lines of ``review.working(mark)``; finally the
rows read but not checked: the table problems (a required field that no column of a table gives,
at the table's heading row), the rejected rows with every reason, and the rows skipped with their
reason and the headings not used, each section only when it has something to show.
"""

from __future__ import annotations

import re
from html import escape
from pathlib import Path
from typing import TYPE_CHECKING, Any, Sequence

from checker.caution import CAUTION
from checker.findings import (
    SEVERITY_ORDER,
    SEVERITY_RANK,
    Severity,
    comment_key,
    count_by_severity,
    describe_source,
    records,
    sort_findings,
    source_of,
    worst_by_cap,
)
from checker.report.comments import (
    HEADER_FILL,
    NOT_A_SAFETY_CLAIM,
    SHORT_CAUTION,
    STATUSES,
    Comment,
    check_text,
    count_by_status,
    format_number,
    found_text,
)
from checker.report.svg import geometry_from_row, plan_svg, targets_of
from checker.report.writefile import write_atomic
from checker.units import TO_INTERNAL

if TYPE_CHECKING:  # pragma: no cover
    from checker.api import Review
    from checker.revision import RevisionResult


# A report is read and printed cap by cap; beyond this many caps only the worst get a page each.
HTML_MAX_CAP_SECTIONS = 1000


def _css() -> str:
    sev_rules = "\n".join(
        f".sev-{s} {{ background: #{Severity(s).fill}; color: #{Severity(s).text_colour}; }}"
        for s in SEVERITY_ORDER
    )
    return f"""
:root {{ --ink: #1F2A30; --muted: #5F6B72; --rule: #C9CFD2; --head: #{HEADER_FILL}; }}
* {{ box-sizing: border-box; }}
body {{ font: 10.5pt/1.4 Helvetica, Arial, sans-serif; color: var(--ink); margin: 0 auto;
        max-width: 1040px; padding: 18px 24px; background: #FFFFFF; }}
h1 {{ font-size: 20pt; margin: 0 0 4px; color: var(--head); }}
h2 {{ font-size: 14pt; margin: 18px 0 8px; color: var(--head); border-bottom: 2px solid var(--head);
      padding-bottom: 2px; }}
h3 {{ font-size: 11pt; margin: 14px 0 6px; color: var(--head); }}
.caution {{ background: #FFF4E0; border-left: 5px solid #C98A1B; padding: 8px 12px; margin: 10px 0;
            font-size: 9.5pt; }}
.caution.small {{ font-size: 8pt; padding: 4px 8px; margin-top: 12px; }}
dl.meta {{ display: grid; grid-template-columns: max-content 1fr max-content 1fr; gap: 2px 14px;
           margin: 8px 0; font-size: 10pt; }}
dl.meta dt {{ font-weight: bold; }}
dl.meta dd {{ margin: 0; }}
.chips {{ display: flex; flex-wrap: wrap; gap: 8px; margin: 6px 0; }}
.chip {{ border-radius: 4px; padding: 6px 10px; min-width: 110px; border: 1px solid rgba(0,0,0,.15); }}
.chip b {{ display: block; font-size: 16pt; line-height: 1.1; }}
.chip.plain {{ background: #F2F4F5; }}
table {{ border-collapse: collapse; width: 100%; margin: 6px 0; font-size: 9.5pt; }}
th, td {{ border: 1px solid var(--rule); padding: 3px 6px; text-align: left; vertical-align: top; }}
th {{ background: var(--head); color: #FFFFFF; font-weight: bold; }}
td.num {{ text-align: right; white-space: nowrap; }}
td.sev, span.sev {{ font-weight: bold; white-space: nowrap; }}
span.sev {{ padding: 1px 6px; border-radius: 3px; font-size: 9pt; }}
{sev_rules}
tr.passed td {{ color: var(--muted); }}
tr.passed td.sev {{ color: #1F1F1F; }}
tr.closed td, tr.superseded td {{ color: var(--muted); font-style: italic; }}
.legend td:first-child {{ width: 130px; }}
section.cap {{ margin-top: 26px; }}
.cap-body {{ display: grid; grid-template-columns: minmax(300px, 480px) 1fr; gap: 16px; align-items: start; }}
figure.sketch {{ margin: 0; border: 1px solid var(--rule); padding: 6px; background: #FFFFFF; }}
figure.sketch svg {{ display: block; width: 100%; height: auto; }}
figure.sketch figcaption {{ font-size: 8.5pt; color: var(--muted); margin-top: 4px; }}
.facts {{ font-size: 9.5pt; }}
.facts table td:first-child {{ font-weight: bold; width: 40%; }}
pre.work {{ font: 8.5pt/1.35 "DejaVu Sans Mono", Menlo, Consolas, monospace; background: #F6F7F8;
            border: 1px solid var(--rule); padding: 6px 8px; white-space: pre-wrap; margin: 2px 0 8px; }}
.work-rule {{ font-weight: bold; font-size: 9pt; margin-top: 6px; }}
a {{ color: #1F5F8B; }}
nav.toc a {{ text-decoration: none; }}
@page {{ size: A4 portrait; margin: 13mm 12mm 14mm 12mm; }}
@media print {{
  body {{ max-width: none; padding: 0; font-size: 9.5pt; }}
  * {{ -webkit-print-color-adjust: exact; print-color-adjust: exact; }}
  section.cap, section.table-problems, section.rejected, section.skipped {{ break-before: page;
    page-break-before: always; margin-top: 0; }}
  section.table-problems + section.rejected, section.rejected + section.skipped,
  section.table-problems + section.skipped {{ break-before: auto; page-break-before: auto; margin-top: 26px; }}
  h2, h3 {{ break-after: avoid; page-break-after: avoid; }}
  figure.sketch, tr, pre.work {{ break-inside: avoid; page-break-inside: avoid; }}
  thead {{ display: table-header-group; }}
  a {{ color: inherit; text-decoration: none; }}
  .cap-body {{ grid-template-columns: 88mm 1fr; }}
}}
"""


def _sev(sev: str) -> str:
    s = escape(str(sev))
    return f'<span class="sev sev-{s}">{s}</span>'


class _Anchors:
    """One HTML id per mark, unique (a mark that cleans to a taken id gets ``-2``, ``-3`` ...)."""

    def __init__(self) -> None:
        self.by_mark: dict[str, str] = {}
        self.taken: set[str] = set()

    def __call__(self, mark: str) -> str:
        a = self.by_mark.get(mark)
        if a is not None:
            return a
        base = "cap-" + (re.sub(r"[^A-Za-z0-9_-]", "_", mark) or "x")
        a, i = base, 2
        while a in self.taken:
            a, i = f"{base}-{i}", i + 1
        self.by_mark[mark] = a
        self.taken.add(a)
        return a


def _cap_order(review: "Review") -> list[str]:
    """Marks in schedule order, then any mark that only the findings name."""
    marks: list[str] = []
    seen: set[str] = set()
    sources = []
    if review.caps is not None and "mark" in getattr(review.caps, "columns", ()):
        sources.append(review.caps["mark"].astype(str))
    if len(review.findings):
        sources.append(review.findings["cap"].astype(str).drop_duplicates())
    for col in sources:
        for m in col:
            if m not in seen:
                seen.add(m)
                marks.append(m)
    return marks


def _cap_rows(review: "Review") -> dict[str, dict[str, Any]]:
    """Schedule row per mark (the first, if a mark repeats), built once."""
    caps = review.caps
    if caps is None or "mark" not in getattr(caps, "columns", ()) or len(caps) == 0:
        return {}
    out: dict[str, dict[str, Any]] = {}
    for rec in records(caps):
        out.setdefault(str(rec["mark"]), rec)
    return out


def _fmt(v: Any, unit: str = "") -> str:
    try:
        f = float(v)
    except (TypeError, ValueError):
        return escape(str(v)) if v not in (None, "") else "–"
    if f != f:
        return "–"
    return escape(format_number(f) + (f" {unit}" if unit else ""))


def _column_text(row: dict[str, Any]) -> str:
    cx: Any = row.get("column_x")   # float() below sorts out None and text
    cy: Any = row.get("column_y")
    try:
        cx, cy = float(cx), float(cy)
    except (TypeError, ValueError):
        return "–"
    if cx != cx:
        return "–"
    if row.get("column_round") is True:
        return f"D{format_number(cx)}"
    return f"{format_number(cx)} x {format_number(cy)}"


def _highlight_caption(rows: list[dict[str, Any]]) -> str:
    names = {
        "edge": "the pile nearest the edge and the edge distance",
        "spacing": "the closest pair of piles and their spacing",
        "struts": "the struts from the column to the piles",
        "column": "the column",
        "piles": "the piles",
        "outside": "the pile(s) outside the cap",
    }
    parts = []
    for r in rows:
        if str(r["severity"]) == "ok":
            continue
        for t in targets_of(str(r["rule"])):
            parts.append(f"{names[t]} ({escape(str(r['rule']))}, {escape(str(r['severity']))})")
    if not parts:
        return "Nothing highlighted: no finding on this cap points at a drawn element."
    return "Highlighted: " + "; ".join(dict.fromkeys(parts)) + "."


def _cap_section(review: "Review", mark: str, anchor: str, worst: str, rows: list[dict[str, Any]],
                 info: dict[str, Any], by_key: dict[str, Comment], carried: list[Comment],
                 changes: list[dict[str, Any]] | None = None) -> str:
    out = [f'<section class="cap" id="{anchor}" data-cap="{escape(mark, quote=True)}">']
    out.append(f"<h2>Cap {escape(mark)} {_sev(worst) if worst else ''}</h2>")
    out.append('<div class="cap-body">')
    out.extend(_cap_sketch(review, mark, info, rows))
    out.extend(_cap_facts(info))
    out.append("<h3>Results</h3>")
    out.extend(_cap_results(mark, rows, by_key))
    from checker.remedy import remedy_line

    if remedy_line(review, mark):
        out.append(f'<p class="remedy"><strong>Would pass with:</strong> {escape(remedy_line(review, mark))}</p>')
    if changes:
        from checker.revision import change_text

        out.append("<h3>Inputs changed since the previous revision</h3><ul class=\"changes\">")
        for ch in changes:
            out.append(f"<li>{escape(change_text(ch))}</li>")
        out.append("</ul>")
    out.extend(_cap_carried(carried))
    out.append("<h3>Working</h3>")
    out.extend(_cap_working(review, mark, rows))
    caution = SHORT_CAUTION.replace(" Full caution on the Cover sheet.", " Full caution at the top of this report.")
    out.append(f'<p class="caution small">{escape(caution)}</p>')
    out.append("</section>")
    return "\n".join(out)


def _cap_sketch(review: "Review", mark: str, info: dict[str, Any], rows: list[dict[str, Any]]) -> list[str]:
    """The plan sketch of one cap with its caption."""
    xy = review.pile_xy.get(mark) if review.pile_xy else None
    return [
        '<figure class="sketch">',
        plan_svg(geometry_from_row(mark, info, xy), rows),
        "<figcaption>Plan, drawn to scale from the submitted geometry; dimensions in mm; x along L, "
        f"y along W. {_highlight_caption(rows)}</figcaption>",
        "</figure>",
    ]


def _cap_facts(info: dict[str, Any]) -> list[str]:
    """The table of the cap's submitted figures beside the sketch; closes the cap body."""
    facts = [
        ("Piles", _fmt(info.get("piles"))
         + (f" × Ø{_fmt(info.get('pile_dia'))}" if info.get("pile_dia") is not None else "")),
        ("Spacing s", _fmt(info.get("pile_spacing"), "mm")
         if _is_num(info.get("piles")) and float(info["piles"]) > 1 else "–"),
        ("Cap L × W × h", " × ".join(_fmt(info.get(k)) for k in ("cap_length", "cap_width", "cap_depth")) + " mm"),
        ("Column", escape(_column_text(info))),
        ("N_Ed", _fmt(float(info["n_ed"]) / TO_INTERNAL["kN"], "kN") if _is_num(info.get("n_ed")) else "–"),
        ("Concrete", escape(str(info.get("concrete") or "–"))),
        ("Bars x / y", escape(f"{info.get('bars_x') or '–'} / {info.get('bars_y') or '–'}")),
        ("Cover", _fmt(info.get("cover"), "mm")),
    ]
    src = describe_source(source_of(info)) if info else ""
    if src:
        facts.append(("Schedule", escape(src)))
    out = ['<div class="facts"><table>']
    for k, v in facts:
        out.append(f"<tr><td>{escape(k)}</td><td>{v}</td></tr>")
    out.append("</table></div></div>")
    return out


def _cap_results(mark: str, rows: list[dict[str, Any]], by_key: dict[str, Comment]) -> list[str]:
    """The table of one cap's results, each with its comment's number and status."""
    if not rows:
        return ["<p>No results for this cap.</p>"]
    out = ['<table class="findings"><thead><tr><th>No.</th><th>Check</th><th>Severity</th>'
           "<th>Found</th><th>Clause</th><th>Action required</th><th>Status</th></tr></thead><tbody>"]
    for r in rows:
        out.append(_result_row(r, by_key.get(comment_key(mark, str(r["rule"])))))
    out.append("</tbody></table>")
    return out


def _result_row(r: dict[str, Any], cm: Comment | None) -> str:
    """One row of the results table."""
    sev = str(r["severity"])
    cls = "passed" if sev == "ok" else (cm.status if cm else "")
    found = found_text(str(r.get("message") or ""), r.get("value"), r.get("limit"),
                       str(r.get("unit") or ""), r.get("utilisation"))
    action = str(r.get("action") or "")
    action = "" if action == "nan" else action
    status = escape(cm.status) if cm else ""
    if cm and cm.note:
        status += f'<br><small>{escape(cm.note)}</small>'
    if cm and cm.response:
        status += f'<br><small class="response"><b>Designer:</b> {escape(cm.response)}</small>'
    if cm and cm.reply:
        status += f'<br><small class="reply"><b>Checker:</b> {escape(cm.reply)}</small>'
    return (
        f'<tr class="{cls}" data-rule="{escape(str(r["rule"]), quote=True)}">'
        f'<td class="num">{cm.no if cm else ""}</td>'
        f"<td>{escape(check_text(str(r['rule']), str(r.get('title') or '')))}</td>"
        f'<td class="sev sev-{escape(sev)}">{escape(sev)}</td>'
        f"<td>{escape(found)}</td><td>{escape(str(r.get('clause') or ''))}</td>"
        f"<td>{escape(action)}</td><td>{status}</td></tr>"
    )


def _cap_carried(carried: list[Comment]) -> list[str]:
    """Comments carried from a previous revision whose finding is no longer reported."""
    if not carried:
        return []
    out = ["<h3>Comments carried from the previous revision</h3>",
           '<table class="carried"><thead><tr><th>No.</th><th>Check</th><th>Status</th>'
           "<th>Note</th><th>Designer response</th><th>Checker reply</th></tr></thead><tbody>"]
    for c in sorted(carried, key=lambda c: c.no):
        out.append(f'<tr class="{escape(c.status)}"><td class="num">{c.no}</td><td>{escape(c.check)}</td>'
                   f"<td>{escape(c.status)}</td><td>{escape(c.note)}</td>"
                   f"<td>{escape(c.response)}</td><td>{escape(c.reply)}</td></tr>")
    out.append("</tbody></table>")
    return out


def _cap_working(review: "Review", mark: str, rows: list[dict[str, Any]]) -> list[str]:
    """The working of one cap grouped by check; a failure to produce it is shown, not hidden."""
    try:
        lines = list(review.working(mark))
    except Exception as exc:  # the report is still written; the failure is shown, not hidden
        return [f"<p>Working not available for this cap ({escape(type(exc).__name__)}: {escape(str(exc))}).</p>"]
    out = []
    if not lines:
        out.append("<p>No working lines recorded for this cap.</p>")
    from checker.report.terminal import not_applicable

    na = {str(r["rule"]) for r in rows if not_applicable(r.get("message"))}
    groups: dict[str, list[str]] = {}
    for ln in lines:
        rule = str(getattr(ln, "rule", "") or "")
        text = str(getattr(ln, "text", ln))
        if rule in na and rule in groups and not text.lstrip().startswith("->"):
            continue   # a check that does not apply: one line giving the reason
        groups.setdefault(rule, []).append(text)
    for rule, texts in groups.items():
        if rule:
            out.append(f'<div class="work-rule">{escape(rule)}</div>')
        out.append(f'<pre class="work">{escape(chr(10).join(texts))}</pre>')
    return out


def _is_num(v: Any) -> bool:
    try:
        f = float(v)
    except (TypeError, ValueError):
        return False
    return f == f


def render_html(review: "Review", comments: list[Comment], meta: dict[str, Any],
                revision: "RevisionResult | None" = None) -> str:
    f = review.findings
    worst = worst_by_cap(f.assign(cap=f["cap"].astype(str))).to_dict() if len(f) else {}
    marks = _cap_order(review)
    by_key = {c.key: c for c in comments if c.key}
    infos = _cap_rows(review)
    rows_by_cap: dict[str, list[dict[str, Any]]] = {}
    if len(f):
        for rec in records(sort_findings(f)):
            rows_by_cap.setdefault(str(rec["cap"]), []).append(rec)
    changes_by_cap: dict[str, list[dict[str, Any]]] = {}
    for ch in (revision.changes if revision is not None else []):
        changes_by_cap.setdefault(str(ch["cap"]), []).append(ch)
    carried_by_cap: dict[str, list[Comment]] = {}
    for c in comments:
        if c.key and c.state != "present":
            carried_by_cap.setdefault(c.cap, []).append(c)
    detailed = _detailed_marks(marks, worst)
    anchors = _Anchors()
    title = f"Pile cap check report: {meta.get('submission', '')}"

    h = ["<!DOCTYPE html>", '<html lang="en"><head><meta charset="utf-8">',
         '<meta name="viewport" content="width=device-width, initial-scale=1">',
         f"<title>{escape(title)}</title>", f"<style>{_css()}</style></head><body>"]
    h.extend(_report_head(meta))
    h.extend(_summary_section(review, comments, revision, len(marks)))
    h.extend(_caps_table(marks, detailed, anchors, infos, rows_by_cap, worst))
    for m in detailed:
        h.append(_cap_section(review, m, anchors(m), worst.get(m, ""), rows_by_cap.get(m, []),
                              infos.get(m, {}), by_key, carried_by_cap.get(m, []), changes_by_cap.get(m)))
    h.extend(_untied_comments(comments, set(marks)))
    h.extend(_table_problems(review))
    h.extend(_rejected_rows(review))
    h.extend(_skipped_rows(review))
    h.append(f'<footer><p class="caution"><strong>Caution.</strong> {escape(CAUTION)}</p></footer>')
    h.append("</body></html>")
    return "\n".join(h)


def _detailed_marks(marks: list[str], worst: dict[str, str]) -> list[str]:
    """The caps given a full section: all of them, or the worst HTML_MAX_CAP_SECTIONS in schedule order."""
    if len(marks) <= HTML_MAX_CAP_SECTIONS:
        return marks
    rank = SEVERITY_RANK
    order = sorted(range(len(marks)), key=lambda i: (rank.get(worst.get(marks[i], "ok"), 9), i))
    keep = set(sorted(order[:HTML_MAX_CAP_SECTIONS]))
    return [m for i, m in enumerate(marks) if i in keep]


def _report_head(meta: dict[str, Any]) -> list[str]:
    """The report's header: title, caution and the submission's particulars."""
    h = ['<header class="report-head">', "<h1>Pile cap check report</h1>",
         f'<p class="caution" role="note"><strong>Caution.</strong> {escape(CAUTION)}<br>'
         f"{escape(NOT_A_SAFETY_CLAIM)}</p>", '<dl class="meta">']
    for label, key in (("Project", "project"), ("Submission", "submission"), ("Revision", "revision"),
                       ("Date", "date"), ("Checker", "checker"), ("Profile", "profile"),
                       ("Rule set", "rule_set")):
        h.append(f"<dt>{label}</dt><dd>{escape(str(meta.get(key, '') or '–'))}</dd>")
    h.append("</dl></header>")
    return h


def _summary_section(review: "Review", comments: list[Comment], revision: "RevisionResult | None",
                     n_caps: int) -> list[str]:
    """The summary: counts by severity and by comment status, the revision cycle, notes and legend."""
    f = review.findings
    counts = count_by_severity(f) if len(f) else {s: 0 for s in SEVERITY_ORDER if s != "ok"}
    n_ok = int((f["severity"] == "ok").sum()) if len(f) else 0
    h = ['<section class="summary"><h2>Summary</h2><div class="chips">']
    for s in SEVERITY_ORDER:
        n = counts.get(s, 0) if s != "ok" else n_ok
        h.append(f'<div class="chip sev-{s}" data-severity="{s}"><b>{n}</b>{escape(s)}</div>')
    h.append("</div><div class=\"chips\">")
    for label, n in _row_counts(review, n_caps):
        h.append(f'<div class="chip plain"><b>{n}</b>{label}</div>')
    by_status = count_by_status(comments)
    for st in STATUSES:
        h.append(f'<div class="chip plain"><b>{by_status.get(st, 0)}</b>comments {st}</div>')
    h.append("</div>")
    if revision is not None:
        h.extend(_revision_summary(revision))
    for note in review.notes or []:
        h.append(f"<p class=\"note\">{escape(str(note))}</p>")
    h.append("<h3>Legend</h3><table class=\"legend\"><tbody>")
    for s in SEVERITY_ORDER:
        h.append(f"<tr><td class=\"sev sev-{s}\">{s}</td><td>{escape(Severity(s).meaning)}</td></tr>")
    h.append("</tbody></table></section>")
    return h


def _row_counts(review: "Review", n_caps: int) -> list[tuple[str, int]]:
    """Where every row read went: checked, rejected, skipped (and adding a load case); the table problems."""
    counts = [("rows read", review.rows_read), ("caps checked", n_caps),
              ("rows rejected", len(review.rejected or [])), ("rows skipped", len(review.skipped or []))]
    if review.cases is not None:
        counts.append(("rows adding a load case", review.case_rows))
    if review.table_problems:
        counts.append(("table problems", len(review.table_problems)))
    return counts


def _revision_summary(revision: "RevisionResult") -> list[str]:
    """The revision cycle's summary line and the table of inputs changed since the previous revision."""
    h = [f"<p><strong>Revision cycle:</strong> {escape(revision.summary())} "
         f"(previous sheet {escape(Path(revision.previous.path).name)}).</p>"]
    from checker.revision import change_text

    if not revision.inputs_recorded:
        h.append('<p class="note">Inputs of the previous revision not recorded: the changes between '
                 "revisions cannot be listed.</p>")
    elif revision.changes:
        h.append('<h3>Inputs changed since the previous revision</h3><table class="changes"><thead><tr>'
                 "<th>Cap</th><th>Change</th></tr></thead><tbody>")
        for ch in revision.changes:
            h.append(f"<tr><td>{escape(str(ch['cap']))}</td><td>{escape(change_text(ch))}</td></tr>")
        h.append("</tbody></table>")
    return h


def _caps_table(marks: list[str], detailed: list[str], anchors: "_Anchors", infos: dict[str, dict[str, Any]],
                rows_by_cap: dict[str, list[dict[str, Any]]], worst: dict[str, str]) -> list[str]:
    """The table of every cap, linking to the caps given a full section."""
    if not marks:
        return ['<section class="caps-table"><h2>Caps</h2><p>No cap was checked: every row read is listed '
                "below as rejected or skipped, with its reasons.</p></section>"]
    h = ['<section class="caps-table"><h2>Caps</h2><nav class="toc"><table><thead><tr><th>Cap</th>'
         "<th>Piles</th><th>L × W × h (mm)</th><th>Worst</th>"
         + "".join(f"<th>{s}</th>" for s in SEVERITY_ORDER if s != "ok")
         + "</tr></thead><tbody>"]
    detailed_set = set(detailed)
    for m in marks:
        a = anchors(m)
        info = infos.get(m, {})
        per: dict[str, int] = {}
        for rec in rows_by_cap.get(m, []):
            per[str(rec["severity"])] = per.get(str(rec["severity"]), 0) + 1
        w = worst.get(m, "")
        link = f'<a href="#{a}">{escape(m)}</a>' if m in detailed_set else escape(m)
        h.append(
            f'<tr data-cap="{escape(m, quote=True)}"><td>{link}</td>'
            f'<td class="num">{_fmt(info.get("piles"))}</td>'
            f'<td>{" × ".join(_fmt(info.get(k)) for k in ("cap_length", "cap_width", "cap_depth"))}</td>'
            f'<td class="sev sev-{escape(w)}">{escape(w) or "–"}</td>'
            + "".join(f'<td class="num">{per.get(s, 0)}</td>'
                      for s in SEVERITY_ORDER if s != "ok")
            + "</tr>"
        )
    h.append("</tbody></table></nav>")
    if len(detailed) < len(marks):
        h.append(f'<p class="note">Sketches, results and working are given below for {len(detailed):,} of '
                 f"{len(marks):,} caps, worst first; every cap is in the table above and every comment "
                 f"is on the comment sheet.</p>")
    h.append("</section>")
    return h


def _untied_comments(comments: list[Comment], mark_set: set[str]) -> list[str]:
    """Comments on caps no longer in the schedule and rows added to the sheet by hand."""
    gone = [c for c in comments if c.key and c.cap not in mark_set]
    manual = [c for c in comments if not c.key]
    if not (gone or manual):
        return []
    h = ['<section class="carried-only"><h2>Comments not tied to a cap in this submission</h2>'
         "<p>Carried from the previous comment sheet: comments on caps no longer in the schedule, "
         "and rows added to the sheet by hand.</p>"
         '<table><thead><tr><th>No.</th><th>Cap</th><th>Check</th><th>Severity</th><th>Status</th>'
         "<th>Note</th><th>Designer response</th><th>Checker reply</th></tr></thead><tbody>"]
    for c in sorted(gone + manual, key=lambda c: c.no):
        sev = escape(c.severity)
        h.append(f'<tr class="{escape(c.status)}"><td class="num">{c.no}</td><td>{escape(c.cap)}</td>'
                 f"<td>{escape(c.check)}</td><td class=\"sev sev-{sev}\">{sev}</td>"
                 f"<td>{escape(c.status)}</td><td>{escape(c.note)}</td><td>{escape(c.response)}</td>"
                 f"<td>{escape(c.reply)}</td></tr>")
    h.append("</tbody></table></section>")
    return h


def _source_cells(source: dict[str, Any] | None) -> str:
    """The File, Sheet, Page and Row cells of a row of the schedule."""
    src = source or {}
    return "".join(f"<td>{escape(str(src.get(k) or ''))}</td>" for k in ("file", "sheet", "page", "row"))


_SOURCE_HEADS = "<th>File</th><th>Sheet</th><th>Page</th><th>Row</th>"


def _source_table(section: str, title: str, intro: str, heads: str, rows: list[str]) -> list[str]:
    """A section of rows that were not checked: each row's source cells, then ``heads``' cells."""
    return [f'<section class="{section}"><h2>{title}</h2><p>{escape(intro)}</p>'
            f"<table><thead><tr>{_SOURCE_HEADS}{heads}</tr></thead><tbody>", *rows, "</tbody></table></section>"]


def _errors_cell(errors: Sequence[str]) -> str:
    return "<td>" + "<br>".join(escape(str(e)) for e in errors) + "</td>"


def _table_problems(review: "Review") -> list[str]:
    """Problems of a whole table (a required field that no column gives), at the table's heading row."""
    if not review.table_problems:
        return []
    intro = ("No row of a table named here can be checked until its problem is put right: its rows are "
             "listed under Rejected rows, each saying \"see the table's problem\". The row given is the "
             "table's heading row.")
    rows = [f'<tr class="table-problem">{_source_cells(p.source)}{_errors_cell(p.errors)}</tr>'
            for p in review.table_problems]
    return _source_table("table-problems", "Table problems", intro, "<th>Problem</th>", rows)


def _rejected_rows(review: "Review") -> list[str]:
    """The rows of the schedule that could not be read."""
    if not review.rejected:
        return []
    rows = [f"<tr>{_source_cells(rej.source)}<td>{escape(rej.mark)}</td>{_errors_cell(rej.errors)}</tr>"
            for rej in review.rejected]
    return _source_table("rejected", "Rejected rows", "These rows of the schedule could not be read and were "
                         "not checked.", "<th>Mark</th><th>Reasons</th>", rows)


def _skipped_rows(review: "Review") -> list[str]:
    """The rows read but not taken as caps, each with its reason, and the headings not used."""
    skipped, unused = review.skipped or [], review.unused_headings or []
    if not (skipped or unused):
        return []
    title = "Skipped rows" + (" and headings not used" if unused else "") if skipped else "Headings not used"
    h = [f'<section class="skipped"><h2>{title}</h2>']
    if skipped:
        h.append("<p>These rows were read but not taken as caps, each for the reason given.</p>"
                 f"<table><thead><tr>{_SOURCE_HEADS}<th>Text</th><th>Reason</th></tr></thead><tbody>")
        for sk in skipped:
            h.append(f"<tr>{_source_cells(sk.source)}<td>{escape(sk.text)}</td><td>{escape(sk.reason)}</td></tr>")
        h.append("</tbody></table>")
    if unused:
        h.append('<p class="unused-headings"><strong>Headings not used:</strong> '
                 + ", ".join(escape(repr(str(u))) for u in unused)
                 + ". No figure under them was read; a mapping file (--mapping FILE) can map a heading "
                 "that should have been (see capcheck columns).</p>")
    h.append("</section>")
    return h


def write_html(review: "Review", path: str | Path, comments: list[Comment], meta: dict[str, Any],
               *, revision: "RevisionResult | None" = None, force: bool = False) -> Path:
    return write_atomic(path, render_html(review, comments, meta, revision), force=force)
