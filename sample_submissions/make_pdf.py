"""Write a schedule CSV as the PDF a consultant might send (reportlab).

    python sample_submissions/make_pdf.py sample_submissions/harbourside-rev-A.csv
    python sample_submissions/make_pdf.py SCHEDULE.csv --out SCHEDULE.pdf --style plain

The PDF is an A4 landscape drawing sheet: a title block above the table, the table itself (the
CSV's heading row, wrapped over up to three lines, repeated on every page), notes and a revision
box below. ``--style grid`` draws a ruled grid (the default), ``plain`` whitespace-aligned columns
with no rules, ``rules`` horizontal rules only. Every cell is written exactly as in the CSV, so
the PDF reads back to the same values. The title block text is invented (fictitious firm).
"""

from __future__ import annotations

import argparse
import csv
import re
import sys
from pathlib import Path

FIRM = "Kestrel Vale Structures (fictitious)"


def _numeric(values: list[str]) -> bool:
    filled = [v for v in values if v.strip()]
    return bool(filled) and all(re.fullmatch(r"[+-]?\d+(\.\d+)?", v.strip()) for v in filled)


def _wrap(text: str, width: float, font: str, size: float, max_lines: int = 3) -> list[str]:
    from reportlab.pdfbase.pdfmetrics import stringWidth

    words = text.split()
    lines: list[str] = []
    cur = ""
    for w in words:
        trial = f"{cur} {w}".strip()
        if cur and stringWidth(trial, font, size) > width:
            lines.append(cur)
            cur = w
        else:
            cur = trial
    if cur:
        lines.append(cur)
    while len(lines) > max_lines:           # too many lines: join the last two
        lines[-2:] = [f"{lines[-2]} {lines[-1]}"]
    return lines or [""]


def write_pdf(csv_path: Path, out: Path, style: str = "grid", title: str | None = None) -> Path:
    from reportlab.lib.pagesizes import A4, landscape
    from reportlab.pdfbase.pdfmetrics import stringWidth
    from reportlab.pdfgen import canvas

    with open(csv_path, newline="", encoding="utf-8-sig") as fh:
        rows = [r for r in csv.reader(fh)]
    if not rows:
        raise SystemExit(f"{csv_path}: empty CSV")
    headings, data = rows[0], [r + [""] * (len(rows[0]) - len(r)) for r in rows[1:]]
    data = [r for r in data if any(c.strip() for c in r)]
    ncols = len(headings)
    right = [_numeric([r[k] for r in data]) for k in range(ncols)]

    font, bold = "Helvetica", "Helvetica-Bold"
    W, H = landscape(A4)
    margin = 28.0
    avail = W - 2 * margin
    size = 7.0
    while True:
        pad = 0.55 * size
        widths = []
        for k in range(ncols):
            w = max([stringWidth(r[k], font, size) for r in data] + [0.0])
            longest_word = max((stringWidth(x, bold, size) for x in headings[k].split()),
                               default=0.0)
            widths.append(max(w, longest_word, 3 * size) + 2 * pad)
        if sum(widths) <= avail or size <= 4.5:
            break
        size -= 0.25
    spare = (avail - sum(widths)) / ncols
    if spare > 0:
        widths = [w + spare for w in widths]
    head_lines = [_wrap(h, w - 2 * pad, bold, size) for h, w in zip(headings, widths)]
    lead = 1.2 * size
    head_h = max(len(x) for x in head_lines) * lead + 2 * pad
    row_h = lead + 2 * pad
    xs = [margin]
    for w in widths:
        xs.append(xs[-1] + w)
    stem = csv_path.stem
    title = title or stem.replace("-", " ").replace("_", " ")
    rev = re.search(r"rev[-_ ]?([A-Z0-9]+)$", stem, re.IGNORECASE)
    rev = rev.group(1).upper() if rev else "A"

    top_space = 70.0
    bottom_space = 120.0
    per_page = max(1, int((H - 2 * margin - top_space - bottom_space - head_h) // row_h))
    chunks = [data[i:i + per_page] for i in range(0, len(data), per_page)] or [[]]

    c = canvas.Canvas(str(out), pagesize=(W, H))
    c.setTitle(f"Pile cap schedule - {title}")
    c.setAuthor(FIRM)
    for pno, chunk in enumerate(chunks, start=1):
        y = H - margin
        c.setFont(bold, 13)
        c.drawString(margin, y - 14, "PILE CAP SCHEDULE")
        c.setFont(font, 9)
        c.drawString(margin, y - 30, f"{title} - demonstration data, fictitious project")
        c.setFont(font, 8)
        c.drawString(margin, y - 43, f"{FIRM}   Drawing S-301   Revision {rev}   "
                                     f"Sheet {pno} of {len(chunks)}")
        top = y - top_space
        c.setFont(bold, size)
        for k, lines in enumerate(head_lines):
            for li, s in enumerate(lines):
                yy = top - pad - 0.8 * size - li * lead
                if right[k]:
                    c.drawRightString(xs[k + 1] - pad, yy, s)
                else:
                    c.drawString(xs[k] + pad, yy, s)
        y = top - head_h
        bottoms = [y]
        c.setFont(font, size)
        for r in chunk:
            for k, v in enumerate(r[:ncols]):
                yy = y - pad - 0.8 * size
                if right[k]:
                    c.drawRightString(xs[k + 1] - pad, yy, v)
                else:
                    c.drawString(xs[k] + pad, yy, v)
            y -= row_h
            bottoms.append(y)
        c.setLineWidth(0.5)
        if style == "grid":
            for x in xs:
                c.line(x, top, x, y)
            c.line(xs[0], top, xs[-1], top)
            for b in bottoms:
                c.line(xs[0], b, xs[-1], b)
        elif style == "rules":
            for b in (top, bottoms[0], y):
                c.line(xs[0], b, xs[-1], b)
        # notes and revision box
        ny = y - 3 * lead
        c.setFont(bold, 8)
        c.drawString(margin, ny, "NOTES")
        c.setFont(font, 7)
        for s in ["1. All dimensions are in millimetres and loads are ULS unless noted otherwise.",
                  "2. Cover is to the lowest bars. Bar notation to BS 8666.",
                  "3. Demonstration schedule with invented data; not for construction."]:
            ny -= 10
            c.drawString(margin, ny, s)
        rx = [margin, margin + 30, margin + 95, margin + 300, margin + 335]
        ry = ny - 16
        c.setFont(font, 7)
        for i, vals in enumerate([["Rev", "Date", "Description", "By"],
                                  [rev, "2025-03-14", "Issued for checking", "QX"]]):
            for k, v in enumerate(vals):
                c.drawString(rx[k] + 3, ry - i * 11 - 8, v)
        for i in range(3):
            c.line(rx[0], ry - i * 11, rx[-1], ry - i * 11)
        for x in rx:
            c.line(x, ry, x, ry - 22)
        c.showPage()
    c.save()
    return out


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description="Write a pile cap schedule CSV as a PDF drawing sheet.")
    ap.add_argument("csv", type=Path, help="the schedule CSV (heading row first)")
    ap.add_argument("--out", type=Path, default=None, help="PDF to write (default: beside the CSV)")
    ap.add_argument("--style", choices=("grid", "plain", "rules"), default="grid")
    ap.add_argument("--title", default=None, help="project line of the title block")
    args = ap.parse_args(argv)
    if not args.csv.exists():
        print(f"{args.csv}: file not found", file=sys.stderr)
        return 2
    out = args.out or args.csv.with_suffix(".pdf")
    write_pdf(args.csv, out, args.style, args.title)
    print(out)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
