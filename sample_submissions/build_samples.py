"""Write the XLSX (and, where the PDF writer is available, the PDF) copies of the sample schedules.

Run from the project folder: ``python sample_submissions/build_samples.py``. The CSV files are the
master copies; the XLSX gets a title block above the table and a notes sheet, as consultants send them.
The project, firm and site are invented.
"""

from __future__ import annotations

import csv
import sys
from pathlib import Path

from openpyxl import Workbook
from openpyxl.styles import Font

HERE = Path(__file__).resolve().parent
TITLE = [
    ["Harbourside Logistics Hub, Unit B (fictitious project)"],
    ["Pile cap schedule - issued for independent check"],
    ["Designer: Kestrel Vale Structures (fictitious firm)"],
    [],
]


def write_xlsx(csv_path: Path, xlsx_path: Path, revision: str) -> None:
    with csv_path.open(newline="", encoding="utf-8") as fh:
        rows = list(csv.reader(fh))
    wb = Workbook()
    ws = wb.active
    ws.title = "Pile cap schedule"
    for r in TITLE:
        ws.append(r)
    ws["A1"].font = Font(bold=True, size=14)
    ws.append(rows[0])
    for c in ws[len(TITLE) + 1]:
        c.font = Font(bold=True)
    for r in rows[1:]:
        out = []
        for v in r:
            try:
                out.append(int(v) if v.strip().lstrip("-").isdigit() else float(v) if v.strip() else None)
            except ValueError:
                out.append(v)
        ws.append(out)
    ws.append([])
    ws.append([f"Revision {revision}. All loads ULS. Bars H = grade B500 (BS 8666)."])
    notes = wb.create_sheet("Notes")
    notes.append(["General notes"])
    notes.append(["1. Concrete to BS 8500; cover to the lowest bars as scheduled."])
    wb.save(xlsx_path)


def main() -> int:
    for rev in ("A", "B"):
        src = HERE / f"harbourside-rev-{rev}.csv"
        if src.exists():
            write_xlsx(src, src.with_suffix(".xlsx"), rev)
            print(f"wrote {src.with_suffix('.xlsx')}")
    maker = HERE / "make_pdf.py"
    if maker.exists():
        import subprocess

        for rev in ("A", "B"):
            src = HERE / f"harbourside-rev-{rev}.csv"
            if src.exists():
                subprocess.run([sys.executable, str(maker), str(src)], check=False)
    return 0


if __name__ == "__main__":
    sys.exit(main())
