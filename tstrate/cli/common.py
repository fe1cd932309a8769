"""Small helpers shared by the subcommands (printing, JSON, atomic writes)."""

from __future__ import annotations

import json
import sys

import numpy as np

from tstrate.output.records import to_jsonable


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
