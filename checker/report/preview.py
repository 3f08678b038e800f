"""``capcheck columns FILE``: what was found in a schedule, before anyone trusts the check.

Shows the tables and their pages or sheets, which heading became which field (and how it was
recognised), the headings that were not used, the first rows as read in capcheck's units, and the
rows that could not be read.
"""

from __future__ import annotations

import math

from rich.console import Console
from rich.table import Table
from rich.text import Text

from checker.findings import describe_source
from checker.model import FIELDS
from checker.report.terminal import print_caution

#: the fields of the first rows shown, with their unit and scale from the field catalogue (counts unlabelled)
PREVIEW_FIELDS: tuple[tuple[str, str, float], ...] = tuple(
    (name, FIELDS[name].show_unit if FIELDS[name].show_unit != "count" else "", FIELDS[name].show_scale)
    for name in ("mark", "piles", "pile_dia", "pile_spacing", "cap_length", "cap_width", "cap_depth",
                 "column_x", "column_y", "n_ed", "mx_ed", "my_ed", "concrete", "cover", "nx", "phi_x", "ny",
                 "phi_y", "embedment", "pile_capacity",
                 "links")     # single-pile caps (issue 15, item 3): the horizontal links as written
)

def _cell(v, scale: float) -> str:
    if v is None:
        return ""
    if isinstance(v, float):
        if math.isnan(v):
            return ""
        v = v * scale
        return f"{v:g}" if abs(v) < 1e6 else f"{v:.4g}"
    return str(v)


def print_preview(args, out: Console, err: Console, defaults=None) -> int:
    """Print what was read; return the number of caps that can be checked (the command's exit
    status is the CLI's to decide)."""
    from checker.ingest.schedule import read_schedule

    kwargs = {"mapping": args.mapping, "coords": args.coords, "max_rows": args.max_rows,
              "sheet": getattr(args, "sheet", None), "defaults": defaults}
    if str(args.file).lower().endswith(".pdf"):
        kwargs.update(pdf_strategy=args.pdf_strategy, max_pages=args.max_pages)
    sched = read_schedule(args.file, **kwargs)

    out.print(Text(f"capcheck columns: {args.file}", style="bold"))
    print_caution(out)
    for t in sched.tables:
        pages = sorted({p for p in t.pages if p is not None})
        where = f"pages {pages[0]}-{pages[-1]}" if len(pages) > 1 else (
            f"page {pages[0]}" if pages else (f'sheet "{t.sheet}"' if t.sheet else "table"))
        out.print(Text(f"\nTable: {where}, {len(t.rows)} rows, {len(t.headings)} columns", style="bold cyan"))

    for k, rep in enumerate(sched.reports or []):
        m = Table(title="Heading mapping" + (f" (table {k + 1})" if len(sched.reports) > 1 else ""),
                  header_style="bold")
        m.add_column("heading as written")
        m.add_column("field")
        m.add_column("unit")
        m.add_column("recognised by", style="dim")
        for hm in rep.matches:
            m.add_row(hm.heading, hm.field, hm.unit or "", hm.how)
        out.print(m)
        if rep.unmapped:
            out.print(Text("Headings not used: ", style="bold yellow") + Text(", ".join(rep.unmapped)))
            out.print(Text("  (map them with --mapping FILE: a TOML [headings] table, "
                           "\"Heading as written\" = \"field\")", style="dim"))
        for note in rep.notes:
            out.print(Text(f"note: {note}", style="dim"))

    caps = sched.caps
    n = max(0, int(getattr(args, "rows", 5)))
    if len(caps):
        head = caps.head(n).to_dict("records")
        grid = Table(title=f"First {len(head)} of {len(caps)} caps as read (capcheck units)",
                     header_style="bold")
        grid.add_column("field")
        for row in head:
            grid.add_column(str(row.get("mark")), justify="right")
        grid.add_row("source", *[describe_source({"page": r.get("src_page"), "sheet": r.get("src_sheet"),
                                                  "row": r.get("src_row")}) for r in head], style="dim")
        for f, u, s in PREVIEW_FIELDS:
            if f in caps.columns and f != "mark":
                grid.add_row(f + (f" [{u}]" if u else ""), *[_cell(r.get(f), s) for r in head])
        out.print(grid)
    for p in sched.problems:
        out.print(Text(f"\nTable problem ({describe_source(p.source)}, heading row): ", style="bold red")
                  + Text("; ".join(p.errors)))
    if sched.rejected:
        out.print(Text(f"\n{len(sched.rejected)} row(s) cannot be read:", style="bold red"))
        for r in sched.rejected:
            mark = f" {r.mark}" if r.mark else ""
            out.print(Text(f"  {describe_source(r.source)}{mark}: ", style="bold") + Text("; ".join(r.errors)))
    shown = {note for rep in (sched.reports or []) for note in rep.notes}
    for note in sched.notes:
        if note not in shown:
            out.print(Text(f"note: {note}", style="dim"))
    out.print(Text(f"\n{sched.rows_read} rows read: {len(caps)} caps to check, {len(sched.rejected)} rejected, "
                   f"{len(sched.skipped)} skipped (each named in a note).", style="bold"))
    return len(caps)
