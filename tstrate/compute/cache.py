"""Results cache keyed by a hash of everything that decides a result.

The key is the SHA-256 of a canonical JSON text holding the kind of
calculation, the input geometry (rounded to 1e-8 Angstrom) or SMILES, the
charge and multiplicity, the numerical settings and the versions of the
packages that compute the numbers. Entries are JSON files written atomically
(``<folder>/<kind>/<key>.json``), so an interrupted run leaves no half entry.

Folder: the ``folder`` argument, else the environment variable
``TSTRATE_CACHE``, else ``~/.cache/tstrate``.
"""

from __future__ import annotations

import hashlib
import json
import logging
import os
from pathlib import Path

import numpy as np

log = logging.getLogger(__name__)

#: environment variable naming the cache folder
CACHE_ENV = "TSTRATE_CACHE"


def cache_folder(folder: str | os.PathLike | None = None) -> Path:
    """The cache folder in force (see the module docstring)."""
    if folder:
        return Path(folder).expanduser()
    env = os.environ.get(CACHE_ENV)
    if env:
        return Path(env).expanduser()
    return Path.home() / ".cache" / "tstrate"


def _canonical(obj):
    if isinstance(obj, dict):
        return {str(k): _canonical(v) for k, v in sorted(obj.items(), key=lambda kv: str(kv[0]))}
    if isinstance(obj, (list, tuple)):
        return [_canonical(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return _canonical(np.round(obj.astype(float), 8).tolist() if obj.dtype.kind == "f"
                          else obj.tolist())
    if isinstance(obj, (float, np.floating)):
        return round(float(obj), 8)
    if isinstance(obj, (np.integer,)):
        return int(obj)
    return obj


def cache_key(kind: str, inputs: dict) -> str:
    """Hex SHA-256 of the canonical JSON of ``kind`` and ``inputs``."""
    from tstrate.compute.engine import package_versions

    payload = {"kind": kind, "inputs": _canonical(inputs), "versions": package_versions()}
    text = json.dumps(payload, sort_keys=True, separators=(",", ":"))
    return hashlib.sha256(text.encode()).hexdigest()


class Cache:
    """A folder of JSON results. ``enabled=False`` makes every lookup miss and stores nothing."""

    def __init__(self, folder: str | os.PathLike | None = None, enabled: bool = True):
        self.folder = cache_folder(folder)
        self.enabled = enabled

    def path(self, kind: str, key: str) -> Path:
        return self.folder / kind / f"{key}.json"

    def load(self, kind: str, key: str) -> dict | None:
        if not self.enabled:
            return None
        path = self.path(kind, key)
        try:
            data = json.loads(path.read_text())
        except FileNotFoundError:
            return None
        except (OSError, ValueError) as exc:
            log.warning("ignoring unreadable cache entry %s: %s", path, exc)
            return None
        log.info("cache hit: %s", path)
        return data

    def store(self, kind: str, key: str, data: dict) -> None:
        if not self.enabled:
            return
        from tstrate.io.files import atomic_write_text

        try:
            atomic_write_text(self.path(kind, key), json.dumps(data))
        except Exception as exc:  # a full disk or a read-only cache must not lose the result
            log.warning("could not store cache entry: %s", exc)
