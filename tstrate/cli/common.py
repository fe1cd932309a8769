"""Small helpers shared by the subcommands (printing, JSON, atomic writes)."""

from __future__ import annotations

import json
import math
import sys
from pathlib import Path

import numpy as np

from tstrate.io.files import atomic_write_bytes, atomic_write_text  # noqa: F401 (re-export)


def to_jsonable(obj):
    """Turn numpy arrays/scalars and nested containers into plain JSON values.

    Non-finite floats become ``null`` so the output stays valid JSON.
    """
    if isinstance(obj, dict):
        return {str(k): to_jsonable(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [to_jsonable(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return to_jsonable(obj.tolist())
    if isinstance(obj, (np.floating, float)):
        f = float(obj)
        return f if math.isfinite(f) else None
    if isinstance(obj, (np.integer,)):
        return int(obj)
    if isinstance(obj, (np.bool_,)):
        return bool(obj)
    if isinstance(obj, Path):
        return str(obj)
    return obj


def print_json(obj) -> None:
    json.dump(to_jsonable(obj), sys.stdout, indent=2)
    sys.stdout.write("\n")


def format_table(header: list[str], rows: list[list], floatfmt: str = "{:.5g}") -> str:
    """A plain aligned text table."""
    cells = [[h for h in header]] + [
        [floatfmt.format(v) if isinstance(v, (float, np.floating)) else str(v) for v in row]
        for row in rows
    ]
    widths = [max(len(r[i]) for r in cells) for i in range(len(header))]
    lines = ["  ".join(c.rjust(w) for c, w in zip(r, widths)) for r in cells]
    lines.insert(1, "  ".join("-" * w for w in widths))
    return "\n".join(lines)
