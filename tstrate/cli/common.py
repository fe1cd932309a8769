"""Small helpers shared by the subcommands: the parser, shared options, printing, JSON, atomic writes.

This module is imported while the parser is built (``tstrate --help``), so it imports
nothing heavy at the top; numpy and the library come in inside the functions.
"""

from __future__ import annotations

import argparse
import json
import math
import sys
from pathlib import Path

from tstrate.io.files import atomic_write_bytes, atomic_write_text  # noqa: F401 (re-export)


class OneLineParser(argparse.ArgumentParser):
    """An ArgumentParser whose usage errors are one line on stderr with exit status 2.

    ``prog: error: message``, e.g. ``tstrate rates: error: argument --plot: expected one
    argument``, instead of argparse's usage block. Subparsers made by ``add_subparsers`` are of
    the same class (argparse's default), so every command and the actions of ``tstrate compute``
    behave alike. ``--help`` is untouched. Each parser records its ``prog`` as the default
    ``_prog``, so that arguments nobody recognised are reported by the deepest command given.
    """

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        self.set_defaults(_prog=self.prog)

    def error(self, message: str):
        self.exit_with(self.prog, message)

    def exit_with(self, prog: str, message: str):
        text = " ".join(str(message).split())
        sys.stderr.write(f"{prog}: error: {text}\n")
        sys.exit(2)

    def parse_args(self, args=None, namespace=None):
        parsed, extras = self.parse_known_args(args, namespace)
        if extras:
            self.exit_with(getattr(parsed, "_prog", self.prog),
                           "unrecognized arguments: " + " ".join(extras))
        return parsed


def to_jsonable(obj):
    """Turn numpy arrays/scalars and nested containers into plain JSON values.

    Non-finite floats become ``null`` so the output stays valid JSON.
    """
    import numpy as np

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
    import numpy as np

    cells = [[h for h in header]] + [
        [floatfmt.format(v) if isinstance(v, (float, np.floating)) else str(v) for v in row]
        for row in rows
    ]
    widths = [max(len(r[i]) for r in cells) for i in range(len(header))]
    lines = ["  ".join(c.rjust(w) for c, w in zip(r, widths)) for r in cells]
    lines.insert(1, "  ".join("-" * w for w in widths))
    return "\n".join(lines)
