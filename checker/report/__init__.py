"""Writers of the documents a checker issues: the comment sheet (.xlsx), the review report (.html),
the comments as .csv and .md, and (through the spine's writer) the findings as .json.

One model, several writers: :func:`checker.report.comments.build_comments` turns a Review's
findings into numbered comments once; every writer reads those comments and the findings and
none re-computes a check.

Files are written atomically and never overwrite an existing file unless ``force=True``; without
force an existing name is replaced by the next free ``-revN`` name (see
:mod:`checker.report.writefile`) and the name actually used is returned.
"""

from __future__ import annotations

import datetime as _dt
import io
import tomllib
from pathlib import Path
from typing import TYPE_CHECKING, Any, Sequence

from checker.report.writefile import next_free_name, write_atomic

if TYPE_CHECKING:  # pragma: no cover
    from checker.api import Review
    from checker.revision import RevisionResult

FORMATS: dict[str, str] = {
    ".xlsx": "sheet",
    ".html": "html",
    ".htm": "html",
    ".csv": "csv",
    ".md": "markdown",
    ".json": "json",
}

META_KEYS: tuple[str, ...] = ("project", "submission", "revision", "date", "checker", "profile", "rule_set")
_META_ALIASES = {"rule set": "rule_set", "rules": "rule_set", "ruleset": "rule_set", "rule-set": "rule_set"}


class ProjectFileError(ValueError):
    """The project file could not be read (message names the file)."""


def _norm_key(k: str) -> str:
    k = str(k).strip().lower()
    k = _META_ALIASES.get(k, k)
    return k.replace(" ", "_").replace("-", "_")


def load_project_file(path: str | Path) -> dict[str, Any]:
    """Read a small TOML project file into meta values.

    Either top-level keys or a ``[project]`` table (``name`` is taken as the project name)::

        [project]
        name = "Harbour Road depot"
        checker = "A. N. Checker"
        submission = "Pile cap schedule, issue C"
        rule_set = "capcheck default rules"
    """
    path = Path(path)
    try:
        data = tomllib.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise ProjectFileError(f"project file {path} not found") from None
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise ProjectFileError(f"{path}: not a valid TOML project file ({exc})") from None
    return flatten_meta(data)


def flatten_meta(data: dict[str, Any]) -> dict[str, Any]:
    """Meta values from a flat dict or one with a ``[project]`` table (``name`` = project name).

    Keys are normalised (``"rule set"``, ``rules``, ``rule-set`` -> ``rule_set``); keys that are
    not meta values are dropped.
    """
    out: dict[str, Any] = {}
    table = data.get("project") if isinstance(data.get("project"), dict) else None
    for source in (data, table or {}):
        for k, v in source.items():
            if isinstance(v, dict):
                continue
            nk = _norm_key(k)
            if nk == "name" and source is table:
                nk = "project"
            if nk in META_KEYS:
                out[nk] = v
    return out


def resolve_meta(review: "Review", meta: dict | None = None,
                 previous: "RevisionResult | None" = None) -> dict[str, Any]:
    """Meta values with defaults filled in from the review and the revision cycle."""
    given = {k: v for k, v in flatten_meta(dict(meta or {})).items() if v is not None}
    out: dict[str, Any] = {
        "project": "",
        "submission": review.submission or "",
        "revision": previous.revision if previous is not None else 1,
        "date": _dt.date.today().isoformat(),
        "checker": "",
        "profile": review.profile_name or "",
        "rule_set": applied_rules_text(review),
    }
    if previous is not None and not given.get("project") and previous.previous.project:
        out["project"] = previous.previous.project
    for k, v in given.items():
        if k in META_KEYS and v != "":
            out[k] = v
    if isinstance(out["date"], (_dt.date, _dt.datetime)):
        out["date"] = out["date"].isoformat()[:10]
    rev = out["revision"]
    if isinstance(rev, float) and rev.is_integer():
        out["revision"] = int(rev)
    elif isinstance(rev, str) and rev.strip().isdigit() and not rev.strip().startswith("0"):
        out["revision"] = int(rev.strip())
    return {k: out[k] for k in META_KEYS}


def applied_digest(review: "Review") -> str:
    """A short digest (12 hex digits of SHA-256) of the rule files and the profile actually applied:
    the bytes of every rule file loaded, the profile's name and its parameter values after any
    --set. Two reports with the same digest were checked against the same rules and limits."""
    import hashlib
    import json

    h = hashlib.sha256()
    files = sorted({str(getattr(r, "file", "") or "") for r in review.rules})
    for f in files:
        try:
            data = Path(f).read_bytes() if f else b""
        except OSError:
            data = f.encode()
        h.update(hashlib.sha256(data).digest())
    h.update(str(review.profile_name or "").encode())
    params = review.profile_params or {}
    h.update(json.dumps({str(k): str(v) for k, v in params.items()}, sort_keys=True).encode())
    return h.hexdigest()[:12]


def applied_rules_text(review: "Review") -> str:
    """'capcheck 0.9.0, rules and profile a1b2c3d4e5f6' (names no folder of the local install)."""
    from checker.resources import version

    return f"capcheck {version()}, rules and profile {applied_digest(review)}"


def _target(path: Path, force: bool) -> Path:
    return path if force else next_free_name(path)


def write_outputs(review: "Review", paths: Sequence[str | Path], *, force: bool = False,
                  meta: dict | None = None, previous: "RevisionResult | None" = None) -> list[Path]:
    """Write each requested output (format from the extension) and return the paths written.

    ``meta``: project, submission, revision, date, checker, profile, rule_set (missing ones get
    defaults). ``previous``: a :class:`checker.revision.RevisionResult` to carry numbers,
    responses and statuses into the new documents. Without ``force`` a name already taken is
    replaced by the next free ``-revN`` name; with ``force`` the file is replaced atomically.
    A ``.json`` path gets the JSON contract of ``checker.report.json_out`` with the working.
    """
    from checker.report.comments import build_comments

    requested = [Path(p) for p in paths]
    for p in requested:
        if p.suffix.lower() not in FORMATS:
            raise ValueError(
                f"cannot tell the output format of {p}: use one of {', '.join(sorted(FORMATS))}"
            )
    meta_r = resolve_meta(review, meta, previous)
    if previous is not None and str(meta_r["revision"]) != str(previous.revision):
        previous = previous.relabel(meta_r["revision"])
    comments = build_comments(review, previous)
    summary = previous.summary() if previous is not None else None
    written: list[Path] = []
    for p in requested:
        kind = FORMATS[p.suffix.lower()]
        if kind == "json":
            written.append(_write_json(review, p, force=force, meta=meta_r, revision=previous))
            continue
        target = _target(p, force)
        if kind == "sheet":
            from checker.report.sheet import write_sheet

            written.append(write_sheet(review, target, comments, meta_r, revision=previous, force=force))
        elif kind == "html":
            from checker.report.html import write_html

            written.append(write_html(review, target, comments, meta_r, revision=previous, force=force))
        elif kind == "csv":
            from checker.report.tables import write_csv

            written.append(write_csv(target, comments, force=force))
        elif kind == "markdown":
            from checker.report.tables import write_markdown

            written.append(write_markdown(target, comments, meta_r, summary=summary, force=force))
    return written


def _write_json(review: "Review", path: Path, *, force: bool, meta: dict[str, Any], revision=None) -> Path:
    """The JSON contract (with the working), streamed into the atomic write as it is encoded."""
    from checker.report.json_out import write_document

    def fill(fh) -> None:
        text = io.TextIOWrapper(fh, encoding="utf-8", newline="")
        write_document(review, text.write, working=True, revision=revision)
        text.flush()
        text.detach()   # the binary file stays open for write_atomic to sync and close

    return write_atomic(_target(path, force), fill, force=force)


__all__ = [
    "FORMATS",
    "flatten_meta",
    "ProjectFileError",
    "load_project_file",
    "next_free_name",
    "resolve_meta",
    "write_atomic",
    "write_outputs",
]
