"""Atomic, no-clobber writes (issue 5, item 5: nothing lost)."""

from __future__ import annotations

import os
import stat
from pathlib import Path

import pytest
from conftest_report import META, make_review

from checker.report import write_outputs
from checker.report.writefile import next_free_name, write_atomic, write_atomic_via_path


def _leftovers(folder: Path) -> list[str]:
    return sorted(p.name for p in folder.iterdir() if p.name.startswith("."))


def test_writes_new_file(tmp_path):
    p = write_atomic(tmp_path / "a.txt", "hello")
    assert p.read_text() == "hello"
    assert _leftovers(tmp_path) == []


def test_existing_file_not_overwritten_without_force(tmp_path):
    target = tmp_path / "comments.xlsx"
    target.write_bytes(b"the checker's own edits")
    with pytest.raises(FileExistsError, match="not overwritten"):
        write_atomic(target, b"new")
    assert target.read_bytes() == b"the checker's own edits"
    assert _leftovers(tmp_path) == []


def test_force_replaces(tmp_path):
    target = tmp_path / "a.bin"
    target.write_bytes(b"old")
    write_atomic(target, b"new", force=True)
    assert target.read_bytes() == b"new"
    assert _leftovers(tmp_path) == []


def test_failed_writer_leaves_nothing_behind(tmp_path):
    target = tmp_path / "a.bin"
    target.write_bytes(b"old")

    def boom(fh):
        fh.write(b"half a file")
        raise RuntimeError("writer failed")

    with pytest.raises(RuntimeError):
        write_atomic(target, boom, force=True)
    assert target.read_bytes() == b"old"
    assert _leftovers(tmp_path) == []
    with pytest.raises(RuntimeError):
        write_atomic(tmp_path / "b.bin", boom)
    assert not (tmp_path / "b.bin").exists()
    assert _leftovers(tmp_path) == []


def test_mode_is_an_ordinary_file_mode(tmp_path):
    p = write_atomic(tmp_path / "a.txt", "x")
    mask = os.umask(0)
    os.umask(mask)
    assert stat.S_IMODE(p.stat().st_mode) == 0o666 & ~mask


def test_missing_folder_is_named(tmp_path):
    with pytest.raises(FileNotFoundError, match="does not exist"):
        write_atomic(tmp_path / "nope" / "a.txt", "x")


def test_via_path_writer(tmp_path):
    p = write_atomic_via_path(tmp_path / "doc.json", lambda tmp: Path(tmp).write_text("{}"))
    assert p.read_text() == "{}"
    assert _leftovers(tmp_path) == []


def test_next_free_name(tmp_path):
    p = tmp_path / "checks.xlsx"
    assert next_free_name(p) == p
    p.write_bytes(b"1")
    assert next_free_name(p) == tmp_path / "checks-rev2.xlsx"
    (tmp_path / "checks-rev2.xlsx").write_bytes(b"2")
    assert next_free_name(p) == tmp_path / "checks-rev3.xlsx"
    # a name that already carries -revN continues from it
    assert next_free_name(tmp_path / "checks-rev2.xlsx") == tmp_path / "checks-rev3.xlsx"
    # no suffix
    (tmp_path / "notes").write_text("x")
    assert next_free_name(tmp_path / "notes") == tmp_path / "notes-rev2"


def test_write_outputs_never_overwrites_by_default(tmp_path):
    rv = make_review()
    target = tmp_path / "comments.xlsx"
    target.write_bytes(b"a sheet a person has been typing into")
    written = write_outputs(rv, [target, tmp_path / "comments.csv"], meta=META)
    assert written == [tmp_path / "comments-rev2.xlsx", tmp_path / "comments.csv"]
    assert target.read_bytes() == b"a sheet a person has been typing into"
    assert written[0].stat().st_size > 1000
    again = write_outputs(rv, [target], meta=META)
    assert again == [tmp_path / "comments-rev3.xlsx"]


def test_write_outputs_force_replaces(tmp_path):
    rv = make_review()
    target = tmp_path / "comments.md"
    target.write_text("old")
    written = write_outputs(rv, [target], meta=META, force=True)
    assert written == [target]
    assert "Check comments" in target.read_text()
    assert _leftovers(tmp_path) == []


def test_unknown_extension_refused_before_anything_is_written(tmp_path):
    rv = make_review()
    with pytest.raises(ValueError, match="output format"):
        write_outputs(rv, [tmp_path / "a.csv", tmp_path / "a.docx"])
    assert not (tmp_path / "a.csv").exists()
