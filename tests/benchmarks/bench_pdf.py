"""Benchmark: capcheck's PDF ingest against bare pdfplumber on a 50-page schedule.

    .venv/bin/python tests/benchmarks/bench_pdf.py [--pages 50] [--repeat 3] [--keep DIR]

Generates a 50-page schedule PDF (reportlab: ruled grid, and the same schedule unruled), then
times, in one run and over the same pages:

* ``read_pdf_tables(path)`` (strategy auto: heading detection, continuation, validation), and
* bare pdfplumber: ``page.extract_tables()`` with default settings on every page.

Each timing is the best of ``--repeat`` runs, alternating the two so that neither profits from a
warm file cache. Prints one JSON object: the top-level keys are the ruled case (the like-for-like
comparison: on ruled pages both do the same table finding); ``cases`` holds both. On unruled
pages bare ``extract_tables()`` finds no table at all (it needs rules), so there its time is only
the floor of parsing the pages; ``pdfplumber_text_strategy_s`` adds pdfplumber's own text
strategy for comparison (which splits unruled schedules into wrong columns, see libraries.md).
Target: ratio <= 1.3.

Wall-clock times (``*_s``, ``ratio``) move with whatever else the machine is running; the CPU
times of this process (``cpu_*``) are steadier on a shared machine and are reported beside them.
"""

from __future__ import annotations

import argparse
import json
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve()
sys.path.insert(0, str(HERE.parents[1]))            # tests/ (pdfgen)
sys.path.insert(0, str(HERE.parents[2]))            # project root (checker)

import pdfgen  # noqa: E402

ROWS_PER_PAGE = 40


def _bare(path: Path, **settings) -> int:
    """Bare pdfplumber, default settings unless given: every page's extract_tables()."""
    import pdfplumber

    n = 0
    with pdfplumber.open(path) as pdf:
        for page in pdf.pages:
            n += len(page.extract_tables(settings) if settings else page.extract_tables())
    return n


def _ours(path: Path) -> int:
    from checker.ingest.pdf import read_pdf_tables

    tables, _ = read_pdf_tables(path)
    return sum(len(t.rows) for t in tables)


def _timed(fn, path: Path, **kw) -> tuple[float, float, int]:
    """(wall-clock s, CPU s of this process, result)."""
    w0, c0 = time.perf_counter(), time.process_time()
    out = fn(path, **kw)
    return time.perf_counter() - w0, time.process_time() - c0, out


def run_case(path: Path, pages: int, repeat: int, text_strategy: bool) -> dict:
    inf = float("inf")
    ours, bare, ours_cpu, bare_cpu = inf, inf, inf, inf
    rows = tables = 0
    for _ in range(repeat):              # alternate, best of each
        w, c, tables = _timed(_bare, path)
        bare, bare_cpu = min(bare, w), min(bare_cpu, c)
        w, c, rows = _timed(_ours, path)
        ours, ours_cpu = min(ours, w), min(ours_cpu, c)
    res = {"pages": pages, "capcheck_s": round(ours, 3), "pdfplumber_extract_tables_s":
           round(bare, 3), "ratio": round(ours / bare, 3),
           "cpu_capcheck_s": round(ours_cpu, 3), "cpu_pdfplumber_s": round(bare_cpu, 3),
           "cpu_ratio": round(ours_cpu / bare_cpu, 3), "rows_read": rows,
           "pdfplumber_tables_found": tables}
    if text_strategy:
        w, _, _ = _timed(_bare, path, vertical_strategy="text", horizontal_strategy="text")
        res["pdfplumber_text_strategy_s"] = round(w, 3)
    return res


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--pages", type=int, default=50)
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--keep", type=Path, default=None, help="write the PDFs here and keep them")
    args = ap.parse_args(argv)
    tmp = tempfile.TemporaryDirectory()
    out = args.keep or Path(tmp.name)
    out.mkdir(parents=True, exist_ok=True)
    n_rows = args.pages * ROWS_PER_PAGE
    cases = {}
    for case, style in (("ruled", "grid"), ("unruled", "none")):
        path = out / f"schedule_{args.pages}p_{case}.pdf"
        exp = pdfgen.reportlab_pdf(path, pdfgen.Spec(style=style, n_rows=n_rows,
                                                      rows_per_page=ROWS_PER_PAGE, title=True))
        assert max(exp.pages) == args.pages, max(exp.pages)
        cases[case] = run_case(path, args.pages, args.repeat, text_strategy=case == "unruled")
        if cases[case]["rows_read"] != n_rows:
            cases[case]["error"] = f"read {cases[case]['rows_read']} rows of {n_rows}"
    result = dict(cases["ruled"])
    result["case"] = "ruled"
    result["target_ratio"] = 1.3
    result["cases"] = cases
    print(json.dumps(result))
    tmp.cleanup()
    return 0 if all("error" not in c for c in cases.values()) else 1


if __name__ == "__main__":
    raise SystemExit(main())
