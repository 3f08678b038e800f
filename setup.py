"""Build hook: ship the rule files, profiles and sample submission inside the package.

The repository's top-level ``rules/`` and ``sample_submissions/`` folders are the only copies kept in
version control. When a wheel is built (``python -m build``, ``pip install .``, ``pipx install``), the
files below are copied into ``checker/_data/`` in the build folder, where ``checker/resources.py``
finds them through importlib.resources. An editable install copies nothing: it reads the top-level
folders directly. Everything else about the project is declared in pyproject.toml.
"""

from __future__ import annotations

from pathlib import Path

from setuptools import setup
from setuptools.command.build_py import build_py

HERE = Path(__file__).resolve().parent

# (folder in the repository, folder inside the package, file patterns shipped)
PACKAGED_DATA = (
    ("rules", "checker/_data/rules", ("*.toml", "profiles/*.toml")),
    ("sample_submissions", "checker/_data/sample_submissions", ("*.csv", "*.xlsx", "*.pdf", "README.md")),
)


def _data_files() -> list[tuple[Path, str]]:
    """(source file, destination relative to the build folder) for every packaged data file."""
    pairs = []
    for src, dest, patterns in PACKAGED_DATA:
        found = sorted({f for pat in patterns for f in (HERE / src).glob(pat) if f.is_file()})
        if not found:
            raise SystemExit(f"capcheck build: no files match {patterns} in {HERE / src}")
        pairs += [(f, f"{dest}/{f.relative_to(HERE / src).as_posix()}") for f in found]
    return pairs


class BuildPyWithData(build_py):
    """build_py that also copies the top-level data folders into the package (not in editable mode)."""

    def run(self) -> None:
        super().run()
        if getattr(self, "editable_mode", False):
            return
        for src, rel in _data_files():
            target = Path(self.build_lib) / rel
            self.mkpath(str(target.parent))
            self.copy_file(str(src), str(target), preserve_mode=False)

    def get_outputs(self, include_bytecode: bool = True) -> list[str]:
        outputs = list(super().get_outputs(include_bytecode))
        if not getattr(self, "editable_mode", False):
            outputs += [str(Path(self.build_lib) / rel) for _, rel in _data_files()]
        return outputs


setup(cmdclass={"build_py": BuildPyWithData})
