"""Where capcheck's data files are: the rule files and profiles, the sample submission, the JSON Schema.

The repository's top-level ``rules/`` and ``sample_submissions/`` folders are the only copies kept in
version control. A build (``setup.py``) copies them into the package as ``checker/_data/rules`` and
``checker/_data/sample_submissions``, so a wheel, a regular ``pip install .`` or ``pipx install`` carries
them. In a source checkout or an editable install those copies do not exist and the top-level folders
are read directly, so an edit to ``rules/*.toml`` takes effect at once. The JSON Schema lives inside the
package (``checker/schema/findings-1.json``) in both cases.
"""

from __future__ import annotations

import atexit
import shutil
import tempfile
from functools import cache
from importlib import resources
from importlib.abc import Traversable
from pathlib import Path

# the project folder when this module is imported from a source checkout (or an editable install)
SOURCE_ROOT = Path(__file__).resolve().parent.parent
FINDINGS_SCHEMA = "findings-1.json"


def _in_source_checkout(name: str) -> Path | None:
    folder = SOURCE_ROOT / name
    if (SOURCE_ROOT / "pyproject.toml").is_file() and folder.is_dir():
        return folder
    return None


def _extract(res: Traversable, dest: Path) -> None:
    """Copy a resource tree that is not on the file system (a zip import) to ``dest``."""
    if res.is_dir():
        dest.mkdir(parents=True, exist_ok=True)
        for child in res.iterdir():
            _extract(child, dest / child.name)
    else:
        dest.write_bytes(res.read_bytes())


@cache
def _as_path(res: Traversable) -> Path:
    if isinstance(res, Path):
        return res
    tmp = Path(tempfile.mkdtemp(prefix="capcheck-"))
    atexit.register(shutil.rmtree, tmp, ignore_errors=True)
    _extract(res, tmp / res.name)
    return tmp / res.name


def data_dir(name: str) -> Path:
    """The folder ``rules`` or ``sample_submissions``: the top-level one in a source checkout, else the
    copy shipped in the installed package (``checker/_data/<name>``, found through importlib.resources).
    The path returned may not exist in a broken installation; callers say what is missing."""
    src = _in_source_checkout(name)
    if src is not None:
        return src
    res = resources.files("checker") / "_data" / name
    if isinstance(res, Path) or not res.is_dir():
        return Path(str(res))
    return _as_path(res)  # type: ignore[arg-type]  # @cache wants Hashable; a Traversable hashes by identity


def findings_schema_text() -> str:
    """The JSON Schema of ``capcheck.findings/1`` as shipped in the package."""
    return (resources.files("checker") / "schema" / FINDINGS_SCHEMA).read_text(encoding="utf-8")


def version() -> str:
    """The installed distribution's version (importlib.metadata); the package's own when not installed."""
    from importlib.metadata import PackageNotFoundError
    from importlib.metadata import version as _dist_version

    try:
        return _dist_version("capcheck")
    except PackageNotFoundError:
        from checker import __version__

        return __version__
