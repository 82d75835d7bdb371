"""Atomic file replacement: write a temporary file in the target folder, flush,
fsync, rename over the target, fsync the folder.

A reader (or a crash at any moment) sees either the old complete file or the
new complete file, never a partial one; on an error the temporary file is
removed and the old file is untouched.
"""
from __future__ import annotations

import contextlib
import os
import secrets
from pathlib import Path

TMP_MARK = ".tmp-"


def fsync_file(path: Path) -> None:
    fd = os.open(path, os.O_RDONLY)
    try:
        os.fsync(fd)
    finally:
        os.close(fd)


def fsync_dir(folder: Path) -> None:
    """Make a rename or unlink in ``folder`` durable (no-op where unsupported)."""
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


def temp_name(path: Path) -> Path:
    """A hidden temporary name next to ``path`` (same folder, same file system)."""
    return path.with_name(f".{path.name}{TMP_MARK}{os.getpid()}-{secrets.token_hex(4)}")


@contextlib.contextmanager
def atomic_path(path):
    """Yield a temporary path to write; on success it replaces ``path`` atomically.

    The caller must have closed the file when the block ends.
    """
    path = Path(path)
    if not path.parent.is_dir():
        raise FileNotFoundError(f"{path}: the folder {path.parent} does not exist")
    tmp = temp_name(path)
    try:
        yield tmp
        fsync_file(tmp)
        os.replace(tmp, path)
    except BaseException:
        with contextlib.suppress(OSError):
            os.unlink(tmp)
        raise
    fsync_dir(path.parent)


def write_text_atomic(path, text: str) -> Path:
    """Replace ``path`` with ``text`` (UTF-8) atomically."""
    path = Path(path)
    with atomic_path(path) as tmp:
        with open(tmp, "w", encoding="utf-8", newline="\n") as fh:
            fh.write(text)
            fh.flush()
            os.fsync(fh.fileno())
    return path
