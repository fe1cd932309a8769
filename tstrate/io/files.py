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


def checked_input_file(path, *, max_bytes: int, what: str = "file", raise_with: str | None = None) -> Path:
    """``path`` as a Path after checks that need no reading: it exists, resolves (no symbolic-link
    loop), is a regular file (a pipe or a device could block or never end) and holds at most
    ``max_bytes`` bytes. ``raise_with`` names the option that raises the size cap."""
    import stat

    path = Path(path)
    file = str(path)
    try:
        info = path.stat()
    except FileNotFoundError:
        raise InputError(f"{what} does not exist", file=file) from None
    except PermissionError:
        raise InputError(f"{what} cannot be read (permission denied)", file=file) from None
    except OSError as exc:  # ELOOP (a symbolic-link loop), ENAMETOOLONG, ...
        raise InputError(f"{what} cannot be opened: {exc.strerror or exc}", file=file) from None
    if stat.S_ISDIR(info.st_mode):
        raise InputError(f"is a folder, not a {what}", file=file)
    if not stat.S_ISREG(info.st_mode):
        raise InputError(f"is not a regular file (a pipe, device or socket); a {what} is expected",
                         file=file)
    if info.st_size > max_bytes:
        raise InputError(f"is larger than {max_bytes / 2**20:.3g} MiB ({info.st_size / 2**20:.4g} MiB), the "
                         f"most accepted for a {what}", file=file,
                         hint=f"raise the limit with {raise_with}" if raise_with else None)
    if not os.access(path, os.R_OK):
        raise InputError(f"{what} cannot be read (permission denied)", file=file)
    return path
