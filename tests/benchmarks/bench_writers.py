"""Benchmark: every output writer on a generated schedule, each against its own floor, in one run.

Run: ``python tests/benchmarks/bench_writers.py [--caps 10000]``; prints one JSON object.

The schedule is invented (``bench_engine.synthetic_schedule``: 25 results a cap, about one in five
not met), written to a CSV and checked with ``checker.review``. Then, in this process:

* ``json_stdout``: ``capcheck check --format json`` (``json_out.write_document``, no working) to a
  file, against the floor ``json.dumps`` (the standard library's C encoder, no indent) of the same
  document already built as dicts, written to a file. Target ratio <= 2.
* ``json_file``: ``-o findings.json`` (with the working of every check) against ``json.dumps`` of
  the same document with the working already in it. Reported; the working's rendering is the extra.
* ``comments_model``: ``build_comments`` (the numbered comments every comment writer reads, made
  once per run).
* ``sheet``: ``-o comments.xlsx`` (``write_sheet`` from the comments) against the floor: xlsxwriter
  in constant-memory mode writing the same cell values (prepared beforehand as lists), with the same
  formats per cell and the same row heights, on the same three table sheets. Target ratio <= 1.5.
  ``openpyxl_write_only_s`` writes the same prepared rows with openpyxl's write-only mode, the
  other candidate writer (the reason for the choice; ``--skip-openpyxl`` leaves it out).
* ``html``: ``-o report.html`` against the floor: the same findings of the same caps as plain
  escaped ``<tr><td>`` rows and their working as escaped text (no sketch, no layout). Target <= 3.
* ``csv`` / ``markdown``: the writers from the comments, against ``csv.writer`` of the same cells
  and the same cells joined with ``|`` unescaped. Target <= 2.
* ``terminal_list`` (every cap, as written when stdout is not a terminal) and ``terminal_summary``
  (the view of a large schedule on a terminal): target < 2 s each.
* ``all_outputs_cli``: ``capcheck check FILE -o .json -o .xlsx -o .html -o .csv -o .md`` in a child
  process (the terminal list to a file as well): wall time and peak resident memory; target < 1 GB.

Every floor writes through the same atomic writer as the outputs (temporary file, fsync, rename), so
a ratio compares the work of making the text or the workbook. Each figure is the best of
``--repeat`` runs; ``ratio`` is of the CPU times of this process (steadier on a shared machine,
where wall-clock times move with whatever else runs), ``ratio_wall`` of the wall-clock times.
"""

from __future__ import annotations

import argparse
import csv
import html
import io
import json
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve()
sys.path.insert(0, str(HERE.parent))
sys.path.insert(0, str(HERE.parents[2]))

from bench_engine import synthetic_schedule  # noqa: E402


def best(fn, repeat: int):
    """(wall-clock s, CPU s of this process, result): the best of ``repeat`` runs each."""
    wall, cpu, out = float("inf"), float("inf"), None
    for _ in range(repeat):
        t0, c0 = time.perf_counter(), time.process_time()
        out = fn()
        wall = min(wall, time.perf_counter() - t0)
        cpu = min(cpu, time.process_time() - c0)
    return wall, cpu, out


def entry(ours: tuple, floor: tuple | None, target: float | None, **extra) -> dict:
    """``ours`` and ``floor`` are (wall s, CPU s); the ratio is of CPU times (steadier on a shared
    machine than wall-clock), the wall-clock ratio beside it."""
    d = {"ours_s": round(ours[0], 3), "ours_cpu_s": round(ours[1], 3)}
    if floor is not None:
        d["floor_s"] = round(floor[0], 3)
        d["floor_cpu_s"] = round(floor[1], 3)
        d["ratio"] = round(ours[1] / floor[1], 2) if floor[1] > 0 else None
        d["ratio_wall"] = round(ours[0] / floor[0], 2) if floor[0] > 0 else None
    if target is not None:
        d["target_ratio" if floor is not None else "target_s"] = target
    d.update(extra)
    return d


def sheet_floor(path: Path, comments, review, repeat: int):
    """xlsxwriter, constant memory, the same prepared cells, formats and row heights."""
    import xlsxwriter

    from checker.report import sheet as S
    from checker.report.comments import COMMENT_HEADINGS, DATA_COLUMNS

    def prepared():
        c_rows = [cm.cells() for cm in comments]
        c_sev = [cm.severity for cm in comments]
        frame = S.sort_findings(review.findings).iloc[:S.ALL_CHECKS_MAX_ROWS]
        cols = [frame[c].tolist() for c in ("cap", "rule", "title", "severity", "clause", "value", "limit",
                                            "unit", "utilisation", "message", "action")]
        a_rows = [[c, r, f"{r}: {t}", s, cl, S._num(v), S._num(lim), u, S._num(ut), m, a or "", "row 1", f"{c}/{r}"]
                  for c, r, t, s, cl, v, lim, u, ut, m, a in zip(*cols)]
        d_rows = [[cm.key, cm.no, cm.cap, cm.rule, cm.severity, cm.tool_severity, S._num(cm.tool_utilisation),
                   S._num(cm.value), S._num(cm.limit), cm.unit, cm.message, cm.state, cm.status, "", None]
                  for cm in comments]
        return c_rows, c_sev, a_rows, d_rows

    c_rows, c_sev, a_rows, d_rows = prepared()
    c_widths = [S.COMMENT_WIDTHS[h] for h in COMMENT_HEADINGS]
    c_height = [12.0 * min(max(max(S._estimate_lines(v, w) for v, w in zip(r, c_widths)), 1), 30) + 3 for r in c_rows]
    a_height = [13.0 * min(max(max(S._estimate_lines(v, w) for v, w in zip(r, S.ALL_CHECKS_WIDTHS)), 1), 30) + 3
                for r in a_rows]

    def write(fh):
        wb = xlsxwriter.Workbook(fh, {"constant_memory": True})
        body = wb.add_format(dict(S._BODY))
        key = wb.add_format({**S._BODY, "font_size": 7, "font_color": "#595959"})
        f1 = wb.add_format({**S._BODY, "num_format": "0.0"})
        f2 = wb.add_format({**S._BODY, "num_format": "0.00"})
        sev = {s: wb.add_format(S._Formats._props(f"body:sev={s}")) for s in S.SEVERITY_ORDER}

        def put(ws, r, c, v, fmt):
            if v is None or v == "":
                ws.write_blank(r, c, None, fmt)
            elif isinstance(v, str):
                ws.write_string(r, c, v, fmt)
            else:
                ws.write_number(r, c, v, fmt)

        ws = wb.add_worksheet("Comments")
        fmts = [body] * 11
        fmts[10] = key
        for i, (row, h) in enumerate(zip(c_rows, c_height), start=2):
            fmts[5] = sev[c_sev[i - 2]]
            for c, (v, f) in enumerate(zip(row, fmts)):
                put(ws, i, c, v, f)
            ws.set_row(i, h)
        ws = wb.add_worksheet("All checks")
        fmts = [body] * 13
        fmts[5] = fmts[6] = f1
        fmts[8] = f2
        fmts[12] = key
        for i, (row, h) in enumerate(zip(a_rows, a_height), start=2):
            fmts[3] = sev[row[3]]
            for c, (v, f) in enumerate(zip(row, fmts)):
                put(ws, i, c, v, f)
            ws.set_row(i, h)
        ws = wb.add_worksheet("capcheck-data")
        ws.write_row(1, 0, DATA_COLUMNS)
        for i, row in enumerate(d_rows, start=2):
            for c, v in enumerate(row):
                if v is not None:
                    put(ws, i, c, v, None)
        wb.close()

    from checker.report.writefile import write_atomic

    wall, cpu, _ = best(lambda: write_atomic(path, write, force=True), repeat)
    return (wall, cpu), (c_rows, c_sev, a_rows, d_rows)


def openpyxl_write_only(path: Path, prepared) -> float:
    """Wall-clock seconds (reported beside the floor, not a ratio)."""
    from openpyxl import Workbook
    from openpyxl.cell import WriteOnlyCell
    from openpyxl.styles import Alignment, Border, Font, PatternFill, Side

    from checker.report.comments import SEVERITY_FILL

    c_rows, c_sev, a_rows, d_rows = prepared
    al = Alignment(wrap_text=True, vertical="top")
    font = Font(size=9)
    side = Side(style="thin", color="BFBFBF")
    border = Border(left=side, right=side, top=side, bottom=side)
    fills = {s: PatternFill("solid", fgColor=c) for s, c in SEVERITY_FILL.items()}
    t0 = time.perf_counter()
    wb = Workbook(write_only=True)
    for name, rows, sev_col in (("Comments", c_rows, 5), ("All checks", a_rows, 3)):
        ws = wb.create_sheet(name)
        for row in rows:
            out = []
            for j, v in enumerate(row):
                cell = WriteOnlyCell(ws, value=v if v != "" else None)
                cell.alignment, cell.font, cell.border = al, font, border
                if j == sev_col:
                    cell.fill = fills.get(row[sev_col]) or fills["ok"]
                out.append(cell)
            ws.append(out)
    ws = wb.create_sheet("capcheck-data")
    for row in d_rows:
        ws.append(row)
    wb.save(str(path))
    return time.perf_counter() - t0


def main(argv=None) -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--caps", type=int, default=10_000)
    ap.add_argument("--repeat", type=int, default=1)
    ap.add_argument("--skip-openpyxl", action="store_true", help="do not time openpyxl's write-only mode")
    args = ap.parse_args(argv)

    from rich.console import Console

    import checker
    from checker.report import _write_json, resolve_meta
    from checker.report.comments import build_comments
    from checker.report.html import write_html
    from checker.report.json_out import to_document, write_document
    from checker.report.sheet import write_sheet
    from checker.report.tables import write_csv, write_markdown
    from checker.report.terminal import print_findings
    from checker.report.writefile import write_atomic

    tmp = Path(tempfile.mkdtemp(prefix="capcheck-bench-"))
    src = tmp / "schedule.csv"
    synthetic_schedule(args.caps).to_csv(src, index=False)
    *t_review, rv = best(lambda: checker.review(src), 1)
    t_review = t_review[0]
    f = rv.findings
    meta = resolve_meta(rv, {"date": "2026-12-02"})
    res: dict = {"benchmark": "writers", "caps": int(len(rv.caps)), "results": int(len(f)),
                 "not_ok": int((f["severity"] != "ok").sum()), "review_s": round(t_review, 3)}

    # JSON: to stdout (no working) and as a file (with the working)
    def ours_json(working):
        def run():
            def fill(fh):
                text = io.TextIOWrapper(fh, encoding="utf-8", newline="")
                write_document(rv, text.write, working=working)
                text.flush()
                text.detach()
            write_atomic(tmp / "ours.json", fill, force=True)
        return run

    doc = to_document(rv)
    doc_w = to_document(rv, working=True)

    def floor_json(d):
        def run():
            write_atomic(tmp / "floor.json", json.dumps(d, ensure_ascii=False), force=True)
        return run

    *t_floor, _ = best(floor_json(doc), args.repeat)
    *t_ours, _ = best(ours_json(False), args.repeat)
    res["json_stdout"] = entry(t_ours, t_floor, 2.0)
    *t_floor_w, _ = best(floor_json(doc_w), args.repeat)
    *t_ours_w, _ = best(lambda: _write_json(rv, tmp / "f.json", force=True, meta=meta), args.repeat)
    res["json_file"] = entry(t_ours_w, t_floor_w, None)
    del doc, doc_w

    # the comment model, then the comment writers
    *t_model, comments = best(lambda: build_comments(rv), args.repeat)
    res["comments_model"] = entry(t_model, None, None, comments=len(comments))

    *t_sheet, _ = best(lambda: write_sheet(rv, tmp / "c.xlsx", comments, meta, force=True), args.repeat)
    t_sheet_floor, prepared = sheet_floor(tmp / "floor.xlsx", comments, rv, args.repeat)
    extra = {"writer": "xlsxwriter (constant memory)"}
    if not args.skip_openpyxl:
        extra["openpyxl_write_only_s"] = round(openpyxl_write_only(tmp / "owo.xlsx", prepared), 3)
    del prepared
    res["sheet"] = entry(t_sheet, t_sheet_floor, 1.5, **extra)

    *t_html, _ = best(lambda: write_html(rv, tmp / "r.html", comments, meta, force=True), args.repeat)

    def html_floor():
        write_atomic(tmp / "floor.html", render_floor_html(rv), force=True)

    def render_floor_html(review):
        from checker.report.html import HTML_MAX_CAP_SECTIONS

        cols = [f[c].astype(str).tolist() for c in ("cap", "rule", "severity", "message", "clause", "action")]
        out = ["<table>"]
        for row in zip(*cols):
            out.append("<tr>" + "".join(f"<td>{html.escape(v)}</td>" for v in row) + "</tr>")
        out.append("</table>")
        marks = review.caps["mark"].astype(str).tolist()[:HTML_MAX_CAP_SECTIONS]
        for m in marks:
            out.append("<pre>" + html.escape("\n".join(ln.text for ln in review.working(m))) + "</pre>")
        return "\n".join(out)

    *t_html_floor, _ = best(html_floor, args.repeat)
    res["html"] = entry(t_html, t_html_floor, 3.0)

    cells = [cm.cells() for cm in comments]

    def csv_floor():
        buf = io.StringIO()
        w = csv.writer(buf, lineterminator="\r\n")
        w.writerows(cells)
        write_atomic(tmp / "floor.csv", buf.getvalue(), force=True, encoding="utf-8-sig")

    def md_floor():
        write_atomic(tmp / "floor.md", "\n".join("| " + " | ".join(str(v) for v in r) + " |" for r in cells),
                     force=True)

    *t_csv, _ = best(lambda: write_csv(tmp / "c.csv", comments, force=True), args.repeat)
    *t_csv_floor, _ = best(csv_floor, args.repeat)
    res["csv"] = entry(t_csv, t_csv_floor, 2.0)
    *t_md, _ = best(lambda: write_markdown(tmp / "c.md", comments, meta, force=True), args.repeat)
    *t_md_floor, _ = best(md_floor, args.repeat)
    res["markdown"] = entry(t_md, t_md_floor, 2.0)

    # the terminal: the full list (as written when stdout is not a terminal) and the summary view
    rv_issues = checker.review(src, messages="issues")

    def term(listing, terminal):
        def run():
            buf = io.StringIO()
            con = Console(file=buf, width=100, highlight=False, force_terminal=terminal,
                          color_system="truecolor" if terminal else None)
            print_findings(rv_issues, con, listing=listing)
            return len(buf.getvalue())
        return run

    *t_list, n_chars = best(term("auto", False), args.repeat)
    res["terminal_list"] = entry(t_list, None, 2.0, characters=n_chars)
    *t_sum, _ = best(term("auto", True), args.repeat)
    res["terminal_summary"] = entry(t_sum, None, 2.0)

    # everything at once, as a user runs it: wall time and peak memory of the child process
    outs = [str(tmp / f"all{ext}") for ext in (".json", ".xlsx", ".html", ".csv", ".md")]
    # the child reports its own high-water mark (VmHWM belongs to the program it runs; the rusage
    # of children would also count this process's pages that the fork shared with it)
    child = ("import sys\nfrom checker.cli import main\nrc = main(sys.argv[1:])\n"
             "hwm = [ln for ln in open('/proc/self/status') if ln.startswith('VmHWM')]\n"
             "sys.stderr.write(hwm[0] if hwm else '')\nsys.exit(rc)\n")
    cmd = [sys.executable, "-c", child, "check", str(src), "--force"]
    for o in outs:
        cmd += ["-o", o]
    env = {**os.environ, "PYTHONPATH": str(HERE.parents[2])}
    t0 = time.perf_counter()
    with open(tmp / "list.txt", "w") as fh:
        done = subprocess.run(cmd, stdout=fh, stderr=subprocess.PIPE, text=True, env=env)
    wall = time.perf_counter() - t0
    hwm = [ln.split()[1] for ln in done.stderr.splitlines() if ln.startswith("VmHWM")]
    peak = int(hwm[-1]) / 1024 if hwm else resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024
    res["all_outputs_cli"] = {"wall_s": round(wall, 3), "exit": done.returncode, "peak_rss_mb": round(peak, 1),
                              "list_bytes": (tmp / "list.txt").stat().st_size, "target_peak_rss_mb": 1024}
    json.dump(res, sys.stdout, indent=2)
    sys.stdout.write("\n")
    for p in tmp.iterdir():
        p.unlink()
    tmp.rmdir()
    return 0


if __name__ == "__main__":
    sys.exit(main())
