"""Atomic file writes: a temporary file in the same folder, then a rename.

An interrupted run leaves either the old file or the new one, never half of it.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from tstrate.errors import InputError


def atomic_write_bytes(path: str | os.PathLike, data: bytes) -> None:
    """Write ``data`` to ``path`` through a temporary file and a rename."""
    path = Path(path)
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.", suffix=".part")
    except OSError as exc:
        raise InputError(f"cannot write here: {exc.strerror}", file=str(path)) from None
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
        os.chmod(tmp, 0o666 & ~current_umask())  # mkstemp makes 0600; give the usual permissions
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise


def atomic_write_text(path, text: str) -> None:
    atomic_write_bytes(path, text.encode("utf-8"))


def current_umask() -> int:
    """The process's file-creation mask (read without changing it for good)."""
    mask = os.umask(0)
    os.umask(mask)
    return mask


def file_sha256(path) -> str:
    """SHA-256 of a file's bytes, as hex (read in 64 KiB chunks)."""
    import hashlib

    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for chunk in iter(lambda: fh.read(1 << 16), b""):
            h.update(chunk)
    return h.hexdigest()
