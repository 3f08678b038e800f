"""The ``capcheck`` command: argument parsing, wiring and exit codes; no engineering logic here."""

from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path

from rich.console import Console
from rich.text import Text

from checker.findings import SEVERITY_ORDER, as_severity
from checker.ingest.limits import MAX_PDF_PAGES, MAX_ROWS
from checker.report.palette import LIST_ALL_UP_TO, WORST_CAPS

EXIT_OK = 0            # nothing at or above --fail-on
EXIT_FINDINGS = 1      # something at or above --fail-on
EXIT_UNREADABLE = 2    # the input (schedule, rule file, option) cannot be read at all
EXIT_INTERNAL = 3      # a fault in capcheck itself; the message says how to report it



def sample_dir() -> Path:
    """The bundled sample submission: the top-level folder in a source checkout, else the package's copy."""
    from checker.resources import data_dir

    return data_dir("sample_submissions")


def _count(text: str) -> int:
    try:
        n = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a whole number, not '{text}'") from None
    if n < 0:
        raise argparse.ArgumentTypeError(f"expected 0 or more, not {n}")
    return n


def _kv(text: str) -> tuple[str, str]:
    if "=" not in text:
        raise argparse.ArgumentTypeError(f"--set needs name=value, not '{text}'")
    k, v = text.split("=", 1)
    return k.strip(), v.strip()


def _common(p: argparse.ArgumentParser) -> None:
    p.add_argument("--profile", default="uk-na", help="parameter profile: uk-na (default), ec2, or a .toml file")
    p.add_argument("--rules", dest="rules_dir", metavar="DIR",
                   help="folder of extra or replacement rule files and profiles")
    p.add_argument("--set", dest="overrides", action="append", type=_kv, default=[], metavar="NAME=VALUE",
                   help="override a profile parameter, e.g. --set pile_tolerance=100 (repeatable)")
    p.add_argument("--drop-variant", dest="drop_variants", action="append", default=[], metavar="NAME",
                   help="do not accept this method variant, e.g. --drop-variant column-width (repeatable)")


def _input(p: argparse.ArgumentParser) -> None:
    p.add_argument("file", help="the schedule: .csv, .xlsx or .pdf")
    p.add_argument("--mapping", metavar="FILE", help="TOML file mapping headings as written to capcheck fields")
    p.add_argument("--coords", metavar="FILE", help="CSV of explicit pile coordinates: mark, x, y (mm)")
    p.add_argument("--loads", metavar="FILE", help="CSV or XLSX of load cases: mark, case, n_ed, mx_ed, my_ed, "
                                                   "kind (ULS or SLS)")
    p.add_argument("--sheet", metavar="NAME", help="read only this sheet of a workbook (default: every sheet "
                   "with schedule headings)")
    p.add_argument("--project", metavar="FILE", help="TOML project file: project, submission, revision, checker, "
                   "and a [defaults] table for values the schedule leaves blank")
    p.add_argument("--pdf-strategy", choices=("auto", "lines", "text"), default="auto",
                   help="force the PDF table strategy (default: chosen per page)")
    p.add_argument("--max-pages", type=int, default=MAX_PDF_PAGES,
                   help=f"refuse PDFs with more pages than this (default {MAX_PDF_PAGES})")
    p.add_argument("--max-rows", type=int, default=MAX_ROWS,
                   help=f"refuse schedules with more rows than this (default {MAX_ROWS:,})")
    p.add_argument("-q", "--quiet", action="store_true", help="no progress bar")
    p.add_argument("--no-remedy", dest="remedy", action="store_false",
                   help="do not search the least change that would meet the listed checks for failing caps")


def _version() -> str:
    from checker.resources import version

    return version()


def build_parser() -> argparse.ArgumentParser:
    ap = argparse.ArgumentParser(
        prog="capcheck",
        description="Independent check of reinforced-concrete pile cap schedules to EN 1992-1-1. "
                    "An aid to a competent checking engineer, never a statement that a design is safe.",
    )
    ap.add_argument("--version", action="version", version=f"capcheck {_version()}")
    sub = ap.add_subparsers(dest="command", metavar="COMMAND")

    c = sub.add_parser("check", help="check a schedule and list the findings")
    _input(c)
    _common(c)
    c.add_argument("--format", choices=("text", "json"), default="text", help="stdout format")
    c.add_argument("-o", "--output", action="append", default=[], metavar="FILE",
                   help="write a file; the format follows the extension: .json .xlsx .html .csv .md (repeatable)")
    c.add_argument("--fail-on", choices=SEVERITY_ORDER[:-1], default="unsafe",
                   help="exit 1 when a finding at or above this severity exists (default unsafe)")
    c.add_argument("--all", action="store_true", help="list passed checks too")
    c.add_argument("--full", action="store_true",
                   help="list every cap's findings on the terminal, however many caps (beyond "
                        f"{LIST_ALL_UP_TO} caps the terminal shows a summary and the worst caps; "
                        "output to a file or a pipe is always the full list)")
    c.add_argument("--worst", type=_count, default=WORST_CAPS, metavar="N",
                   help=f"caps listed in full under the summary view (default {WORST_CAPS})")
    c.add_argument("--working", action="store_true", help="include the working in the JSON")
    c.add_argument("--force", action="store_true", help="overwrite existing output files")
    c.add_argument("--previous", metavar="SHEET",
                   help="the previous revision's comment sheet (.xlsx) to carry responses from")
    c.add_argument("--revision", help="revision label for the comment sheet")
    c.add_argument("--checker", dest="checker_name", help="checker's name for the comment sheet")
    c.add_argument("--close", metavar="auto|checker",
                   help="closing policy with --previous, over the project file's close: auto (capcheck "
                        "closes a comment whose check is now met; the default) or checker (it becomes "
                        "'met, for checker to close')")

    e = sub.add_parser("explain", help="print the working of every check for one cap")
    _input(e)
    _common(e)
    e.add_argument("--cap", required=True, metavar="MARK", help="the cap mark")

    r = sub.add_parser("rules", help="list the loaded rules and their limits in the active profile")
    _common(r)
    r.add_argument("--format", choices=("text", "json"), default="text",
                   help="stdout format: text (default) or json (every rule, its checks and parameter values)")

    k = sub.add_parser("columns", help="preview how a schedule's headings and rows are read")
    _input(k)
    k.add_argument("--rows", type=int, default=5, help="how many rows to show (default 5)")

    d = sub.add_parser("demo", help="check the bundled sample submission and write its outputs")
    d.add_argument("--out", metavar="DIR", help="output folder (default: a new capcheck-demo folder here)")
    d.add_argument("--close", metavar="auto|checker",
                   help="closing policy of the revision B round (default auto; see check --close)")
    _common(d)

    sub.add_parser("schema", help="print the JSON Schema of the --format json output (capcheck.findings/1)")
    return ap


def _progress(args, console_err: Console):
    if getattr(args, "quiet", False) or not sys.stdout.isatty() or not str(args.file).lower().endswith(".pdf"):
        return None, None
    from rich.progress import BarColumn, Progress, TaskID, TextColumn

    prog = Progress(TextColumn("reading PDF"), BarColumn(), TextColumn("{task.completed}/{task.total} pages"),
                    console=console_err, transient=True)
    task: TaskID | None = None

    def cb(done: int, total: int) -> None:
        nonlocal task
        if total <= 3:
            return
        if task is None:
            prog.start()
            task = prog.add_task("pdf", total=total)
        prog.update(task, completed=done)

    return cb, prog


def _review(args, console_err: Console, messages: str = "all"):
    from checker.api import review

    cb, prog = _progress(args, console_err)
    try:
        return review(args.file, profile=args.profile, rules_dir=args.rules_dir,
                      overrides=dict(args.overrides), mapping=args.mapping, coords=args.coords,
                      loads=getattr(args, "loads", None),
                      pdf_strategy=args.pdf_strategy, max_pages=args.max_pages, progress=cb,
                      drop_variants=args.drop_variants, messages=messages, max_rows=args.max_rows,
                      sheet=getattr(args, "sheet", None), defaults=_project_defaults(args),
                      remedy=getattr(args, "remedy", True))
    finally:
        if prog is not None:
            prog.stop()


def _exit_for(review, fail_on: str) -> int:
    if len(review.caps) == 0:
        return EXIT_UNREADABLE
    at_or_above = as_severity(review.findings["severity"]) <= fail_on    # worst first: "at or worse than"
    return EXIT_FINDINGS if at_or_above.any() else EXIT_OK


def _project(args) -> dict:
    """The project file's tables (empty without --project); a clear message when it cannot be read."""
    if not getattr(args, "project", None):
        return {}
    import tomllib

    from checker.ingest import limits

    try:
        raw = limits.read_bytes(Path(args.project), str(args.project), limits.MAX_MAPPING_BYTES,
                                what="a project file", advice="a project file is a few lines of TOML")
        return tomllib.loads(raw.decode("utf-8-sig"))
    except (UnicodeDecodeError, tomllib.TOMLDecodeError, RecursionError) as exc:
        raise _UsageError(f"--project {args.project}: cannot be read ({exc})") from None


def _project_defaults(args):
    data = _project(args)
    if "defaults" not in data:
        return None
    from checker.ingest.frame import read_defaults

    return read_defaults(data["defaults"], f"--project {args.project}")


def _close_policy(args, review=None) -> str:
    """The closing policy: ``--close`` if given, else the project file's ``close`` ("auto", the
    default, or "checker"). A bad value of either is a usage error (exit 2)."""
    from checker.revision import CLOSE_POLICIES

    given = getattr(args, "close", None)
    if given is not None:
        v = str(given).strip().lower()
        if v not in CLOSE_POLICIES:
            raise _UsageError(f"--close {given}: use one of {', '.join(CLOSE_POLICIES)}")
        return v
    data = _project(args)
    section = data.get("revision")
    value = data.get("close", (section if isinstance(section, dict) else {}).get("close"))
    if value is None:
        return "auto"
    v = str(value).strip().lower()
    if v not in CLOSE_POLICIES:
        raise _UsageError(f"--project {args.project}: close = {value!r}; use one of "
                          f"{', '.join(repr(p) for p in CLOSE_POLICIES)}")
    return v


def _meta(args) -> dict:
    meta: dict = {}
    if getattr(args, "project", None):
        meta.update({k: v for k, v in _project(args).items() if k != "defaults" and not isinstance(v, dict)})
    if getattr(args, "revision", None):
        meta["revision"] = args.revision
    if getattr(args, "checker_name", None):
        meta["checker"] = args.checker_name
    return meta


class _UsageError(Exception):
    pass


def preflight(args, outputs: list[str]):
    """Check the options that name files before any work starts (exit 2 on a refusal, nothing
    written): each ``-o`` extension is a known format; no output resolves to an input (the
    schedule, --previous, --mapping, --coords, --loads, --project), whatever ``--force`` says;
    ``--previous`` is a comment sheet capcheck wrote. Returns the previous sheet read (or None)."""
    from checker.report import FORMATS

    for o in outputs:
        if Path(o).suffix.lower() not in FORMATS:
            raise _UsageError(f"-o {o}: cannot tell the output format from the extension "
                              f"'{Path(o).suffix or '(none)'}'; use one of {', '.join(sorted(FORMATS))}")
    inputs = {"the schedule": getattr(args, "file", None), "--previous": getattr(args, "previous", None),
              "--mapping": getattr(args, "mapping", None), "--coords": getattr(args, "coords", None),
              "--loads": getattr(args, "loads", None), "--project": getattr(args, "project", None)}
    resolved = {name: Path(v).resolve() for name, v in inputs.items() if v}
    for o in outputs:
        target = Path(o).resolve()
        for name, path in resolved.items():
            if target == path:
                raise _UsageError(f"-o {o}: that is {name} ({inputs[name]}); an output never replaces an "
                                  f"input, with or without --force; choose another name")
    seen: dict[Path, str] = {}
    for o in outputs:
        t = Path(o).resolve()
        if t in seen:
            raise _UsageError(f"-o {o}: named twice (also as -o {seen[t]})")
        seen[t] = o
    _close_policy(args)   # a bad --close or project close is refused before the work starts
    prev_path = getattr(args, "previous", None)
    if not prev_path:
        return None
    from checker.revision import read_previous_sheet

    return read_previous_sheet(prev_path)   # PreviousSheetError (exit 2) when it is not one


def write_files(review, paths: list[str], *, force: bool, meta: dict, previous_path: str | None,
                console_err: Console, revision=None) -> list[Path]:
    """Write the outputs; ``revision`` is the carried-over RevisionResult when the caller already
    made it (its summary is then printed by the caller)."""
    if not paths:
        return []
    from checker.report import write_outputs

    previous = revision
    if previous is None and previous_path:
        from checker.revision import carry_over, read_previous_sheet

        previous = carry_over(review, read_previous_sheet(previous_path))
        _print_revision(previous, console_err)
    written = write_outputs(review, paths, force=force, meta=meta, previous=previous)
    for asked, got in zip(paths, written):
        if Path(asked) != Path(got):
            console_err.print(Text(f"note: {asked} exists; written as {got} instead (use --force to replace it)",
                                   style="yellow"))
    return written


def _print_revision(previous, console_err: Console) -> None:
    console_err.print(Text.assemble(("Revision: ", "bold"), previous.summary()))
    for w in previous.warnings:
        console_err.print(Text(f"note: {w}", style="dim"))


def cmd_check(args, out: Console, err: Console) -> int:
    prev_sheet = preflight(args, args.output)
    brief = args.format == "text" and not args.all and not args.output and prev_sheet is None
    rv = _review(args, err, messages="issues" if brief else "all")
    meta = _meta(args)
    revision = None
    if prev_sheet is not None:
        from checker.report import resolve_meta
        from checker.revision import carry_over

        revision = carry_over(rv, prev_sheet, policy=_close_policy(args, rv))
        label = resolve_meta(rv, meta, revision)["revision"]
        if str(label) != str(revision.revision):
            revision = revision.relabel(label)
        _print_revision(revision, err)
    if args.format == "json":
        from checker.report.json_out import write_document

        write_document(rv, sys.stdout.write, working=args.working, revision=revision)
    else:
        from checker.report.terminal import print_findings

        print_findings(rv, out, show_ok=args.all, listing="full" if args.full else "auto",
                       worst=args.worst)
    written = write_files(rv, args.output, force=args.force, meta=meta, previous_path=None,
                          console_err=err, revision=revision)
    for p in written:
        err.print(f"wrote {p}")
    return _exit_for(rv, args.fail_on)


def cmd_explain(args, out: Console, err: Console) -> int:
    from checker.records import same_mark
    from checker.report.terminal import print_working

    rv = _review(args, err)
    marks = rv.caps["mark"].astype(str).tolist()
    asked = args.cap

    cap = asked if asked in marks else next((m for m in marks if same_mark(m, asked)), None)
    if cap is None:
        # the mark itself (case and spaces ignored), never a search of the error text: PC1 is not PC10
        rejected = [r for r in rv.rejected if r.is_mark(asked)]
        if rejected:
            from checker.findings import describe_source

            out.print(Text(f"Cap '{asked}' was rejected and not checked:", style="bold"))
            for r in rejected:
                where = describe_source(r.source or {})
                out.print(Text(f"  {where}: " if where else "  ", style="dim"))
                for e in r.errors:
                    out.print(Text(f"    - {e}"))
            return EXIT_UNREADABLE
        err.print(Text(f"capcheck: cap '{asked}' is not in {rv.submission}. "
                       f"Caps checked: {', '.join(marks[:30])}", style="red"))
        return EXIT_UNREADABLE
    if cap != asked:
        err.print(Text(f"note: '{asked}' read as cap '{cap}' (marks are matched ignoring case and "
                       f"spaces)", style="yellow"))
    print_working(rv, cap, out)
    from checker.remedy import explain_lines, remedy_line

    if remedy_line(rv, cap):   # only for a cap with an unsafe or non-compliant result
        out.print(Text("\nWhat would pass: the least change searched", style="bold"))
        for line in explain_lines(rv, cap):
            out.print(Text(line))
    return EXIT_OK


def cmd_rules(args, out: Console, err: Console) -> int:
    from checker.report.rules_view import print_rules, rules_json
    from checker.ruleset.loader import load_ruleset

    rs = load_ruleset(args.profile, args.rules_dir, dict(args.overrides), args.drop_variants)
    if args.format == "json":
        sys.stdout.write(rules_json(rs) + "\n")
    else:
        print_rules(rs, out)
    return EXIT_OK


def cmd_columns(args, out: Console, err: Console) -> int:
    from checker.report.preview import print_preview

    return EXIT_OK if print_preview(args, out, err, defaults=_project_defaults(args)) else EXIT_UNREADABLE


def _demo_dir(base: Path) -> Path:
    if not base.exists():
        return base
    for i in range(2, 1000):
        cand = base.with_name(f"{base.name}-{i}")
        if not cand.exists():
            return cand
    raise _UsageError(f"{base}: too many demo folders here; remove some or use --out")


def cmd_demo(args, out: Console, err: Console) -> int:
    from checker.api import review
    from checker.report.terminal import print_findings, print_summary

    policy = _close_policy(args)   # before any work: a bad --close is refused (exit 2)
    samples = sample_dir()
    sample = samples / "harbourside-rev-A.csv"
    if not sample.exists():
        raise _UsageError(f"the sample submission {sample} is missing from this installation")
    folder = Path(args.out) if args.out else _demo_dir(Path.cwd() / "capcheck-demo")
    folder.mkdir(parents=True, exist_ok=True)
    rv = review(sample, profile=args.profile, rules_dir=args.rules_dir, overrides=dict(args.overrides),
                drop_variants=args.drop_variants)
    print_findings(rv, out)
    stem = folder / "harbourside-rev-A"
    exts = [".json", ".xlsx", ".html", ".csv", ".md"]
    meta = {"project": "Harbourside Logistics Hub (fictitious)", "revision": "A",
            "submission": sample.name, "checker": "demo"}
    written = write_files(rv, [str(stem) + e for e in exts], force=True, meta=meta, previous_path=None,
                          console_err=err)
    sample_b = samples / "harbourside-rev-B.csv"
    sheet_a = stem.with_suffix(".xlsx")
    if sample_b.exists() and sheet_a.exists():
        rv_b = review(sample_b, profile=args.profile, rules_dir=args.rules_dir, overrides=dict(args.overrides),
                      drop_variants=args.drop_variants)
        stem_b = folder / "harbourside-rev-B"
        meta_b = dict(meta, revision="B", submission=sample_b.name)
        out.print("\n[bold]Revision B of the sample (partly fixed), against revision A's comment sheet:[/bold]")
        from checker.revision import carry_over, change_text, read_previous_sheet

        rev_b = carry_over(rv_b, read_previous_sheet(sheet_a), policy=policy).relabel("B")
        _print_revision(rev_b, out)
        out.print(f"[bold]Inputs changed between revisions A and B ({len(rev_b.changes)}):[/bold]")
        for ch in rev_b.changes:
            out.print(Text(f"  {ch['cap']}: {change_text(ch)}"))
        written += write_files(rv_b, [str(stem_b) + e for e in exts], force=True, meta=meta_b,
                               previous_path=None, console_err=out, revision=rev_b)
        print_summary(rv_b, out)
    out.print(f"\n[bold]Demo outputs written to {folder}[/bold]")
    for p in written:
        out.print(f"  {p}")
    return EXIT_OK


def cmd_schema(args, out: Console, err: Console) -> int:
    from checker.resources import findings_schema_text

    text = findings_schema_text()
    sys.stdout.write(text if text.endswith("\n") else text + "\n")
    return EXIT_OK


COMMANDS = {"check": cmd_check, "explain": cmd_explain, "rules": cmd_rules, "columns": cmd_columns,
            "demo": cmd_demo, "schema": cmd_schema}


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if not args.command:
        parser.print_help()
        return EXIT_UNREADABLE
    out = Console(highlight=False)
    err = Console(stderr=True, highlight=False)
    from checker.ingest.errors import IngestError
    from checker.ruleset.loader import RuleFileError

    try:
        return COMMANDS[args.command](args, out, err)
    except (IngestError, RuleFileError, _UsageError) as exc:
        err.print(Text.assemble(("capcheck: ", "bold red"), str(exc)))
        return EXIT_UNREADABLE
    except KeyboardInterrupt:
        err.print("capcheck: interrupted")
        return EXIT_UNREADABLE
    except OSError as exc:
        err.print(Text.assemble(("capcheck: ", "bold red"), f"{exc.filename or ''}: {exc.strerror or exc}"))
        return EXIT_UNREADABLE
    except Exception as exc:  # never a traceback for the user; CAPCHECK_DEBUG=1 shows it
        if os.environ.get("CAPCHECK_DEBUG"):
            raise
        err.print(Text.assemble(("capcheck: internal error ", "bold red"),
                                f"({type(exc).__name__}: {exc}). Nothing was written. "
                                "Re-run with CAPCHECK_DEBUG=1 and report the output."))
        return EXIT_INTERNAL


if __name__ == "__main__":
    sys.exit(main())
