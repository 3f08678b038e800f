"""The limits on what capcheck reads, one named constant and one check per limit.

A document beyond a limit is refused with an :class:`~checker.ingest.errors.IngestError` that names
the file, the limit and what to do; it is never half-read into memory first. The checks run before
the expensive step they protect (the file size before the file is read, the sizes a ZIP archive
declares before any member is decompressed, the row count while rows are read).

| limit | value | where |
|---|---|---|
| :data:`MAX_FILE_BYTES` | 100 MiB | any schedule file, before it is read |
| :data:`MAX_ROWS` | 100,000 | filled rows of one schedule (CSV, XLSX, PDF, DataFrame) |
| :data:`MAX_COLUMNS` | 200 | filled columns of a row |
| :data:`MAX_CELL_CHARS` | 32,767 | characters in one cell that capcheck reads |
| :data:`MAX_XLSX_UNCOMPRESSED_BYTES` | 200 MiB | the members of an XLSX archive, as declared |
| :data:`MAX_COMPRESSION_RATIO` | 100 | any XLSX member over :data:`RATIO_FLOOR_BYTES` |
| :data:`MAX_SHARED_STRINGS_BYTES` | 32 MiB | the shared-strings part (held in memory whole) |
| :data:`MAX_SHEETS` | 50 | worksheets of one workbook |
| :data:`MAX_PDF_PAGES` | 200 | pages of a PDF (``--max-pages`` changes it) |
| :data:`MAX_MAPPING_BYTES` | 256 KiB | a heading mapping file (TOML) |
| :data:`MAX_TOML_LINE_CHARS` | 10,000 | one line of a mapping file |

Only regular files are read: a device, pipe or socket (``/dev/zero`` behind a link named
``schedule.csv``) would never end.

Python's :mod:`zipfile` never returns more bytes from a member than its declared ``file_size``
(the reader stops there and then fails the CRC check), so checking the declared sizes bounds what
decompression can produce even when the header lies.
"""

from __future__ import annotations

import os
import stat
import zipfile
from typing import Iterable

from checker.ingest.errors import IngestError

MiB = 1024 * 1024

#: Any schedule file (CSV, XLSX, PDF). A schedule of 100,000 rows as CSV is about 10 MB.
MAX_FILE_BYTES = 100 * MiB

#: Filled (non-blank) rows of one schedule, headings and notes included in the count as they are
#: read; blank rows are not counted. The engine is benchmarked on 100,000 caps.
MAX_ROWS = 100_000

#: Filled columns of one row (trailing blank cells do not count).
MAX_COLUMNS = 200

#: Characters in one cell that capcheck parses; the largest a spreadsheet cell holds (the
#: published limit of Microsoft Excel's specification, 32,767 characters; from memory).
MAX_CELL_CHARS = 32_767

#: The sum of the uncompressed sizes an XLSX archive declares for its members. A 100,000-row
#: schedule of 13 columns written by openpyxl is about 56 MB of sheet XML (measured).
MAX_XLSX_UNCOMPRESSED_BYTES = 200 * MiB

#: Uncompressed over compressed size of one member. Spreadsheet XML deflates about 13:1
#: (measured on openpyxl output); a ZIP bomb is near the deflate maximum of about 1000:1.
MAX_COMPRESSION_RATIO = 100

#: The shared-strings part of a workbook, which openpyxl holds in memory whole (as one Python
#: string per entry: 32 MiB of tiny entries is about 150 MB). A 100,000-row schedule with a
#: different mark on every row needs a few MB.
MAX_SHARED_STRINGS_BYTES = 32 * MiB

#: Members smaller than this are not ratio-checked (a small, very regular part is harmless).
RATIO_FLOOR_BYTES = 1 * MiB

#: Worksheets of one workbook (each is opened and sized when the workbook loads).
MAX_SHEETS = 50

#: Pages of a PDF schedule (the default of ``capcheck check --max-pages``).
MAX_PDF_PAGES = 200


#: A heading mapping file (a few dozen lines in practice).
MAX_MAPPING_BYTES = 256 * 1024

#: One line of a TOML file that capcheck reads. tomllib takes time growing with the square of the
#: depth of a dotted key (``[a.a.a ...]``: 40,000 levels take about 2 s, measured), and every such
#: key is on one line, so a line limit bounds the time.
MAX_TOML_LINE_CHARS = 10_000


def _n(v: int) -> str:
    return f"{v:,}"


def _mib(v: int) -> str:
    return f"{v / MiB:.0f} MiB" if v >= MiB else f"{_n(v)} bytes"


def check_file_size(path: str | os.PathLike, name: str | None = None, limit: int | None = None, *,
                    what: str = "a schedule",
                    advice: str = "split the schedule into smaller files, or for a PDF send the schedule "
                                  "pages only") -> int:
    """The file's size in bytes; IngestError when it is not a regular file or is larger than
    ``limit`` (default :data:`MAX_FILE_BYTES`)."""
    limit = MAX_FILE_BYTES if limit is None else limit
    shown = name if name is not None else os.fspath(path)
    try:
        st = os.stat(path)
    except FileNotFoundError:
        raise IngestError(f"{shown}: file not found") from None
    except OSError as exc:
        raise IngestError(f"{shown}: cannot read the file ({exc.strerror or exc})") from None
    if stat.S_ISDIR(st.st_mode):
        raise IngestError(f"{shown}: is a folder, not a file")
    if not stat.S_ISREG(st.st_mode):
        raise IngestError(f"{shown}: is not a regular file (a device, pipe or socket); capcheck reads files only")
    size = st.st_size
    if size > limit:
        raise IngestError(f"{shown}: the file is {_mib(size)}, larger than the limit of {_mib(limit)} "
                          f"for {what}; {advice}")
    return size


def read_bytes(path: str | os.PathLike, name: str | None = None, limit: int | None = None, *,
               what: str = "a schedule", advice: str = "split the schedule into smaller files") -> bytes:
    """The file's bytes, checked with :func:`check_file_size` and read no further than ``limit`` (a
    file that grows while it is read is refused too)."""
    limit = MAX_FILE_BYTES if limit is None else limit
    shown = name if name is not None else os.fspath(path)
    check_file_size(path, shown, limit, what=what, advice=advice)
    try:
        with open(path, "rb") as fh:
            data = fh.read(limit + 1)
    except FileNotFoundError:
        raise IngestError(f"{shown}: file not found") from None
    except OSError as exc:
        raise IngestError(f"{shown}: cannot read the file ({exc.strerror or exc})") from None
    if len(data) > limit:
        raise IngestError(f"{shown}: the file is larger than the limit of {_mib(limit)} for {what}; {advice}")
    return data


def toml_text_problem(text: str, limit: int | None = None) -> str | None:
    """Why a TOML text is refused before it is parsed (a line longer than ``limit``, default
    :data:`MAX_TOML_LINE_CHARS`), or None."""
    limit = MAX_TOML_LINE_CHARS if limit is None else limit
    longest = max(map(len, text.splitlines()), default=0)
    if longest > limit:
        return (f"a line of {_n(longest)} characters, more than the limit of {_n(limit)} (deeply nested "
                "keys take the TOML reader a very long time)")
    return None


def check_rows(count: int, name: str, limit: int | None = None, where: str = "") -> None:
    """IngestError when ``count`` filled rows exceed ``limit`` (default :data:`MAX_ROWS`)."""
    limit = MAX_ROWS if limit is None else limit
    if count > limit:
        raise IngestError(f"{name}{where}: more than {_n(limit)} filled rows, the limit for one schedule; "
                          f"split the schedule into files of at most {_n(limit)} rows, or raise the "
                          "limit with --max-rows N")


def check_columns(count: int, name: str, row: int | None = None, limit: int | None = None,
                  where: str = "") -> None:
    """IngestError when a row has more than ``limit`` (default :data:`MAX_COLUMNS`) filled columns."""
    limit = MAX_COLUMNS if limit is None else limit
    if count > limit:
        at = f" row {row}" if row is not None else ""
        raise IngestError(f"{name}{where}:{at} has a filled cell in column {_n(count)}, beyond the limit of "
                          f"{_n(limit)} columns; remove the cells far to the right of the schedule")


def cell_text_problem(value: object, limit: int | None = None) -> str | None:
    """The message for a cell too long (without a place), or None when it fits."""
    limit = MAX_CELL_CHARS if limit is None else limit
    if isinstance(value, str) and len(value) > limit:
        return f"the cell holds {_n(len(value))} characters, more than the limit of {_n(limit)} for one cell"
    return None


def check_sheets(count: int, name: str, limit: int | None = None) -> None:
    """IngestError when a workbook has more than ``limit`` (default :data:`MAX_SHEETS`) worksheets."""
    limit = MAX_SHEETS if limit is None else limit
    if count > limit:
        raise IngestError(f"{name}: the workbook has {_n(count)} worksheets, more than the limit of "
                          f"{_n(limit)}; save the schedule sheet on its own as .xlsx or .csv")


def check_archive(members: Iterable[zipfile.ZipInfo], name: str, max_total: int | None = None,
                  max_ratio: float | None = None, floor: int | None = None) -> int:
    """Check the sizes a ZIP archive declares, before anything is decompressed.

    IngestError when the declared uncompressed total exceeds ``max_total`` or a member larger than
    ``floor`` is compressed more than ``max_ratio`` : 1 (the mark of a ZIP bomb). Returns the total. Defaults:
    :data:`MAX_XLSX_UNCOMPRESSED_BYTES`,
    :data:`MAX_COMPRESSION_RATIO`, :data:`RATIO_FLOOR_BYTES`.
    """
    max_total = MAX_XLSX_UNCOMPRESSED_BYTES if max_total is None else max_total
    max_ratio = MAX_COMPRESSION_RATIO if max_ratio is None else max_ratio
    floor = RATIO_FLOOR_BYTES if floor is None else floor
    total = 0
    for info in members:
        size = int(info.file_size)
        total += size
        if info.filename.lower().endswith("sharedstrings.xml") and size > MAX_SHARED_STRINGS_BYTES:
            raise IngestError(
                f"{name}: refused: the shared strings of the workbook would expand to {_mib(size)}, more than "
                f"the limit of {_mib(MAX_SHARED_STRINGS_BYTES)}; save the schedule sheet on its own, or as CSV")
        if size > floor:
            ratio = size / max(int(info.compress_size), 1)
            if ratio > max_ratio:
                raise IngestError(
                    f"{name}: refused: the workbook part {info.filename!r} would expand from "
                    f"{_mib(int(info.compress_size))} to {_mib(size)} ({ratio:,.0f}:1, more than the limit "
                    f"of {max_ratio:g}:1); this is how a ZIP bomb looks, and no workbook needs it; "
                    "ask for the schedule as exported by the spreadsheet program, or as CSV")
        if total > max_total:
            raise IngestError(
                f"{name}: refused: the workbook would expand to more than {_mib(max_total)} (the limit for "
                "an XLSX schedule); save the schedule sheet on its own, or as CSV")
    return total
