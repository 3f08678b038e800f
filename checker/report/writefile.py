"""Atomic, no-clobber file writes for every output capcheck issues.

Every writer hands its bytes (or a callable that writes to a binary file object) to
:func:`write_atomic`. The data goes to a temporary file in the target's own folder, is flushed to
disk, and only then takes the target's name, so a reader never sees half a file and a crash never
leaves a truncated comment sheet behind.

An existing file is never replaced unless ``force=True``. Without force the final step uses a hard
link, which the operating system refuses if the name is taken, so even two runs racing for the same
name cannot overwrite each other. :func:`next_free_name` gives the name a new revision should use
(``checks.xlsx`` -> ``checks-rev2.xlsx`` -> ``checks-rev3.xlsx``).
"""

from __future__ import annotations

import errno
import os
import re
import tempfile
from pathlib import Path
from typing import BinaryIO, Callable, Union

Payload = Union[bytes, str, Callable[[BinaryIO], object]]

_REV_SUFFIX = re.compile(r"^(?P<stem>.*?)-rev(?P<n>\d+)$")


def next_free_name(path: str | Path) -> Path:
    """The path itself if nothing is there, else the first free ``<stem>-revN<suffix>`` (N >= 2).

    A name that already ends in ``-revN`` continues from N + 1, so ``checks-rev2.xlsx`` is followed
    by ``checks-rev3.xlsx`` rather than ``checks-rev2-rev2.xlsx``.
    """
    path = Path(path)
    if not path.exists():
        return path
    suffix = "".join(path.suffixes[-1:])
    stem = path.name[: len(path.name) - len(suffix)] if suffix else path.name
    m = _REV_SUFFIX.match(stem)
    if m:
        base, n = m.group("stem"), int(m.group("n")) + 1
    else:
        base, n = stem, 2
    while True:
        candidate = path.with_name(f"{base}-rev{n}{suffix}")
        if not candidate.exists():
            return candidate
        n += 1


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def write_atomic(path: str | Path, payload: Payload, *, force: bool = False,
                 encoding: str = "utf-8") -> Path:
    """Write ``payload`` to ``path`` atomically and return the path written.

    ``payload`` is bytes, text (encoded with ``encoding``) or a callable that writes to the open
    binary temporary file. Raises :class:`FileExistsError` if ``path`` exists and ``force`` is false;
    the existing file is left untouched in that case and in every failure case.
    """
    path = Path(path)
    folder = path.parent if str(path.parent) else Path(".")
    if not folder.is_dir():
        raise FileNotFoundError(f"cannot write {path}: folder {folder} does not exist")
    if path.exists() and not force:
        raise FileExistsError(
            errno.EEXIST, f"{path} already exists; not overwritten (use force to replace it)", str(path)
        )
    fd, tmp_name = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=folder)
    tmp = Path(tmp_name)
    try:
        with os.fdopen(fd, "wb") as fh:
            if callable(payload):
                payload(fh)
            elif isinstance(payload, str):
                fh.write(payload.encode(encoding))
            else:
                fh.write(payload)
            fh.flush()
            os.fsync(fh.fileno())
        # mkstemp makes the file private (0600); give it the mode an ordinary new file would get.
        os.chmod(tmp, 0o666 & ~_umask())
        if force:
            os.replace(tmp, path)
        else:
            _link_no_clobber(tmp, path)
    except BaseException:
        try:
            tmp.unlink()
        except FileNotFoundError:
            pass
        raise
    _fsync_dir(folder)
    return path


def write_atomic_via_path(path: str | Path, write: Callable[[Path], object], *,
                          force: bool = False) -> Path:
    """Like :func:`write_atomic` for a writer that wants a file name rather than a file object:
    ``write(tmp_path)`` fills a temporary file in the target's folder, which then takes the name."""
    path = Path(path)

    def copy_in(fh: BinaryIO) -> None:
        folder = path.parent if str(path.parent) else Path(".")
        fd, name = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=folder)
        os.close(fd)
        tmp = Path(name)
        try:
            write(tmp)
            with open(tmp, "rb") as src:
                while chunk := src.read(1 << 20):
                    fh.write(chunk)
        finally:
            try:
                tmp.unlink()
            except FileNotFoundError:
                pass

    return write_atomic(path, copy_in, force=force)


def _link_no_clobber(tmp: Path, path: Path) -> None:
    """Give ``tmp`` the name ``path`` only if that name is free, atomically where the OS allows."""
    try:
        os.link(tmp, path)
    except FileExistsError:
        raise FileExistsError(
            errno.EEXIST, f"{path} already exists; not overwritten (use force to replace it)", str(path)
        ) from None
    except OSError:
        # File systems without hard links: fall back to check-then-rename (a small race window).
        if path.exists():
            raise FileExistsError(
                errno.EEXIST, f"{path} already exists; not overwritten (use force to replace it)",
                str(path),
            ) from None
        os.replace(tmp, path)
        return
    tmp.unlink()


def _fsync_dir(folder: Path) -> None:
    try:
        dfd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(dfd)
    except OSError:
        pass
    finally:
        os.close(dfd)
