"""Public entry points of ingest: a schedule file or a DataFrame -> :class:`Schedule`.

``read_schedule(path)`` reads CSV/TXT, XLSX/XLSM or PDF (the PDF reader is imported only when a PDF
is read); ``schedule_from_frame(df)`` reads a DataFrame whose columns are headings as written.
Both return the canonical schedule frame (DEVELOPERS.md), the rejected rows with their reasons,
and what is needed to explain the reading (heading matches, notes, the raw tables).
"""

from __future__ import annotations

import os
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Sequence

import pandas as pd

from checker.ingest import limits
from checker.ingest.errors import IngestError
from checker.ingest.frame import Defaults, attach_loads, build_frame, cells_of, coords_frame, read_loads
from checker.ingest.headings import (
    LOAD_FIELDS,
    HeadingMatch,
    HeadingReport,
    count_known,
    match_headings,
    resolve_mapping,
)
from checker.ingest.raw import RawTable
from checker.ingest.tabular import CSV_EXTENSIONS, MIN_KNOWN, XLSX_EXTENSIONS, read_csv, read_tabular
from checker.records import RejectedRow, SkippedRow, TableProblem


@dataclass
class Schedule:
    caps: pd.DataFrame                  # canonical frame (DEVELOPERS.md), index 0..n-1
    rejected: list[RejectedRow]         # source {"file","sheet","page","row"}, mark, errors
    rows_read: int                      # == len(caps) + len(rejected) + len(skipped) + case_rows
    matches: list[HeadingMatch]         # heading -> field matches (each distinct heading once)
    unmapped: list[str]                 # headings not used (each once)
    coords: pd.DataFrame | None         # mark, x, y [mm] for explicit pile groups
    notes: list[str]                    # e.g. 'sheet "Notes" skipped: no schedule headings'
    tables: list[RawTable] = field(default_factory=list)
    reports: list[HeadingReport] = field(default_factory=list)   # per schedule table
    #: one row per (cap, load case) (see checker.ingest.frame.FrameResult.cases), or None: one ULS case per
    #: cap, the loads of its row
    cases: pd.DataFrame | None = None
    case_rows: int = 0                  # rows read that only add a load case to a cap read earlier

    skipped: list[SkippedRow] = field(default_factory=list)    # source, reason, text
    problems: list[TableProblem] = field(default_factory=list)   # of a whole table: source, errors
    applied: list[list[str]] = field(default_factory=list)   # per cap: project-file values applied


def _is_loads_table(table: RawTable, hmap: Any) -> bool:
    """A table whose headings are all loads-table fields (mark, case, kind, loads): no cap geometry."""
    fields = {m.field for m in match_headings(table.headings, hmap, "schedule").matches}
    return "mark" in fields and bool(fields & {"n_ed", "n_sls"}) and fields <= set(LOAD_FIELDS)


def _read_loads_file(path: str | os.PathLike, hmap: Any, max_rows: int | None) -> list[RawTable]:
    p = Path(path)
    if not p.exists():
        raise IngestError(f"{path}: loads file not found")
    ext = p.suffix.lower()
    if ext not in CSV_EXTENSIONS + XLSX_EXTENSIONS:
        raise IngestError(f"{path}: a loads table is read from .csv or .xlsx (mark, case, n_ed, mx_ed, my_ed, "
                          f"kind), not {ext or '(no extension)'}")
    limits.check_file_size(p, str(path))
    if ext in CSV_EXTENSIONS:
        tables, _ = read_csv(path, mapping=hmap, vocabulary="loads")
        return tables
    tables, _ = read_tabular(path, mapping=hmap, max_rows=max_rows)
    return [t for t in tables if _is_loads_table(t, hmap)] or tables[:1]


def _is_coords_table(table: RawTable, hmap: Any) -> bool:
    return count_known(table.headings, "schedule", hmap) < MIN_KNOWN and \
        count_known(table.headings, "coords", hmap) >= 3


def _table_label(t: RawTable) -> str:
    if t.pages and t.pages[0] is not None:
        return f"{t.file}, page {t.pages[0]}"
    if t.sheet:
        return f'{t.file}, sheet "{t.sheet}"'
    return t.file


def _read_coords_file(path: str | os.PathLike, hmap: Any) -> RawTable:
    ext = Path(path).suffix.lower()
    if ext not in CSV_EXTENSIONS:
        raise IngestError(f"{path}: pile coordinates are read from a .csv file (mark, x, y), "
                          f"not {ext or '(no extension)'}")
    tables, _ = read_csv(path, mapping=hmap, vocabulary="coords")
    return tables[0]


def _coords_from(source: Any, hmap: Any) -> tuple[pd.DataFrame, dict[str, list[str]], list[str]]:
    if isinstance(source, pd.DataFrame):
        grid = source.set_axis(range(source.shape[1]), axis=1).astype(object)
        return coords_frame(grid, [str(c) for c in source.columns], list(range(2, len(source) + 2)),
                            file="<coordinates>", mapping=hmap)
    table = source if isinstance(source, RawTable) else _read_coords_file(source, hmap)
    return coords_frame(cells_of(table), table.headings, table.row_numbers, file=table.file, mapping=hmap)


def _assemble(tables: list[RawTable], notes: list[str], hmap: Any, coords: Any,
              cells: Sequence[pd.DataFrame] | None = None, max_rows: int | None = None,
              loads: Any = None, defaults: Defaults | None = None) -> Schedule:
    schedule_tables: list[RawTable] = []
    schedule_cells: list[pd.DataFrame] = []
    coord_tables: list[RawTable] = []
    load_tables: list[RawTable] = []
    for k, t in enumerate(tables):
        if _is_coords_table(t, hmap):
            coord_tables.append(t)
        elif _is_loads_table(t, hmap):
            load_tables.append(t)
        elif count_known(t.headings, "schedule", hmap) >= MIN_KNOWN:
            schedule_tables.append(t)
            if cells is not None:
                schedule_cells.append(cells[k])
        else:
            notes.append(f"{_table_label(t)}: table skipped: no schedule headings")
    if not schedule_tables:
        where = tables[0].file if tables else "the document"
        raise IngestError(f"{where}: no schedule table found (a table with at least {MIN_KNOWN} headings "
                          "such as Mark, Piles, Pile dia, Cap depth, Column, NEd, Concrete, Cover, Bars X)")
    limits.check_rows(sum(len(t.row_numbers) for t in schedule_tables), schedule_tables[0].file,
                      limits.MAX_ROWS if max_rows is None else max_rows)
    coord_df: pd.DataFrame | None = None
    problems: dict[str, list[str]] | None = None
    cnotes: list[str] = []
    source = coords if coords is not None else (coord_tables[0] if coord_tables else None)
    if coords is not None and coord_tables:
        notes.append(f"{_table_label(coord_tables[0])}: pile coordinates taken from {coords!s} instead")
    if source is not None:
        coord_df, problems, cnotes = _coords_from(source, hmap)
        notes.extend(cnotes)
    if loads is not None:
        if load_tables:
            notes.append(f"{_table_label(load_tables[0])}: load cases taken from {loads!s} instead")
        load_tables = loads if isinstance(loads, list) else _read_loads_file(loads, hmap, max_rows)
    parsed_loads = read_loads(load_tables, mapping=hmap) if load_tables else None
    res = build_frame(schedule_tables, mapping=hmap, coords=coord_df, coord_problems=problems,
                      cells=schedule_cells if cells is not None else None,
                      load_marks=parsed_loads.marks if parsed_loads is not None else frozenset(),
                      defaults=defaults)
    if parsed_loads is not None:
        attach_loads(res, parsed_loads)
    skipped = [k.located(t.file, t.sheet) for t in schedule_tables for k in t.skipped]
    matches: list[HeadingMatch] = []
    seen: set[tuple] = set()
    unmapped: list[str] = []
    for rep in res.reports:
        for m in rep.matches:
            key = (m.heading, m.field, m.unit, m.how)
            if key not in seen:
                seen.add(key)
                matches.append(m)
        for u in rep.unmapped:
            if u not in unmapped:
                unmapped.append(u)
    notes.extend(n for n in res.notes if n not in notes)
    return Schedule(caps=res.caps, rejected=res.rejected, rows_read=res.rows_read + len(skipped), matches=matches,
                    unmapped=unmapped, coords=coord_df, notes=notes, tables=list(tables), reports=res.reports,
                    cases=res.cases, case_rows=res.case_rows,
                    skipped=skipped, problems=res.problems, applied=res.applied)


def read_schedule(path: str | os.PathLike, *, mapping: str | Path | None = None,
                  coords: str | Path | None = None, pdf_strategy: str = "auto",
                  max_pages: int | None = None, progress: Any = None,
                  max_rows: int | None = None, loads: str | Path | None = None, sheet: str | None = None,
                  defaults: Defaults | None = None) -> Schedule:
    """Read a pile cap schedule file.

    ``.csv``/``.txt`` and ``.xlsx``/``.xlsm`` are read by :mod:`checker.ingest.tabular`, ``.pdf`` by
    :func:`checker.ingest.pdf.read_pdf_tables` (``pdf_strategy``, ``max_pages`` and ``progress`` are
    passed on; ``max_pages`` None means :data:`checker.ingest.limits.MAX_PDF_PAGES`).
    ``max_rows``: the most data rows read (None: :data:`checker.ingest.limits.MAX_ROWS`); every
    limit of :mod:`checker.ingest.limits` applies.
    ``loads``: a loads table (.csv or .xlsx: mark, case, n_ed, mx_ed, my_ed, kind optional), one row per
    cap and load case; a workbook's own loads sheet is used when this is not given.
    ``sheet``: the one sheet of a workbook to read (None: every sheet with schedule headings).
    ``defaults``: the project file's values for blank cells (:func:`checker.ingest.frame.read_defaults`).
    ``mapping``: a TOML heading mapping file (see :mod:`checker.ingest.headings`). ``coords``: a CSV
    (or XLSX) of pile positions ``mark, x, y`` [mm from the column centre] for explicit groups; a
    workbook's own coordinates sheet is used when this is not given.

    Raises :class:`IngestError` when the document cannot be read at all; rows that cannot be read are
    in ``Schedule.rejected``.
    """
    name = str(path)
    p = Path(path)
    if not p.exists():
        raise IngestError(f"{name}: file not found")
    if p.is_dir():
        raise IngestError(f"{name}: is a folder, not a schedule file")
    hmap = resolve_mapping(mapping)
    ext = p.suffix.lower()
    if ext in CSV_EXTENSIONS + XLSX_EXTENSIONS + (".pdf",):
        limits.check_file_size(p, name)
    if sheet is not None and ext not in XLSX_EXTENSIONS:
        raise IngestError(f"{name}: --sheet {sheet} chooses a sheet of a workbook (.xlsx, .xlsm); this file has none")
    if ext in CSV_EXTENSIONS + XLSX_EXTENSIONS:
        tables, notes = read_tabular(path, mapping=hmap, max_rows=max_rows, sheet=sheet)
    elif ext == ".pdf":
        from checker.ingest.pdf import read_pdf_tables

        tables, notes = read_pdf_tables(name, strategy=pdf_strategy, progress=progress,
                                        max_pages=limits.MAX_PDF_PAGES if max_pages is None else max_pages)
        notes = list(notes)
    elif ext == ".xls":
        raise IngestError(f"{name}: the old .xls format is not read; save the workbook as .xlsx or .csv")
    else:
        raise IngestError(f"{name}: unknown file type {ext or '(no extension)'!r}; capcheck reads .csv, .txt, "
                          ".xlsx, .xlsm and .pdf")
    return _assemble(list(tables), list(notes), hmap, coords, max_rows=max_rows, loads=loads, defaults=defaults)


def schedule_from_frame(df: pd.DataFrame, *, source: str = "<dataframe>", mapping: Any = None,
                        coords: Any = None, max_rows: int | None = None, loads: Any = None,
                        defaults: Defaults | None = None) -> Schedule:
    """Read a DataFrame whose columns are schedule headings as written (canonical names also map).

    Cells are read like spreadsheet cells, in the input units of the brief unless a heading says
    otherwise (``n_ed`` in kN, moments in kNm, lengths in mm) - so this is not the way to re-read a
    canonical frame, whose forces are already in N. Row numbers are reported as if the frame were a
    sheet with its headings in row 1 (first data row = row 2). At most ``max_rows`` rows (None:
    :data:`checker.ingest.limits.MAX_ROWS`).
    """
    if not isinstance(df, pd.DataFrame):
        raise IngestError(f"{source}: expected a pandas DataFrame, got {type(df).__name__}")
    limits.check_rows(len(df), source, limits.MAX_ROWS if max_rows is None else max_rows)
    hmap = resolve_mapping(mapping)
    headings = ["" if c is None else str(c) for c in df.columns]
    grid = df.set_axis(range(df.shape[1]), axis=1)
    table = _FrameTable(grid, source, headings)
    if isinstance(loads, pd.DataFrame):
        lgrid = loads.set_axis(range(loads.shape[1]), axis=1)
        loads = [_FrameTable(lgrid, "<loads>", ["" if c is None else str(c) for c in loads.columns])]
    return _assemble([table], [], hmap, coords, cells=[grid], max_rows=max_rows, loads=loads, defaults=defaults)


class _FrameTable(RawTable):
    """A RawTable over a DataFrame; its ``rows`` list is built only when read (it is not needed to
    build the frame, and costs about 0.3 s for 100,000 rows)."""

    def __init__(self, grid: pd.DataFrame, file: str, headings: list[str]) -> None:
        self._grid = grid
        self._rows: list[list[object]] | None = None
        n = len(grid)
        super().__init__(file=file, sheet=None, headings=headings, rows=None,  # type: ignore[arg-type]
                         pages=[None] * n, row_numbers=list(range(2, n + 2)))

    @property
    def rows(self) -> list[list[object]]:
        if self._rows is None:
            g = self._grid.astype(object)
            self._rows = g.where(g.notna(), None).to_numpy().tolist()
        return self._rows

    @rows.setter
    def rows(self, value: list[list[object]] | None) -> None:
        self._rows = value
