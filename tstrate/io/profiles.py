"""Altitude profiles from CSV files (altitude, temperature and pressure columns, units in the names).

The built-in U.S. Standard Atmosphere 1976 is computed by :mod:`tstrate.physics.atmosphere`;
this module reads a user's own profile into the same :class:`AtmosphereProfile`.
"""

from __future__ import annotations

import csv
import math
from pathlib import Path

import numpy as np

from tstrate.errors import InputError
from tstrate.model.settings import US_STANDARD_1976
from tstrate.physics.atmosphere import AtmosphereProfile
from tstrate.units import PRESSURE_UNITS_PA

#: a profile file larger than this is refused before it is read [bytes]
MAX_PROFILE_BYTES = 16 * 2**20


def resolve_profile(value: str, base: str | Path | None) -> str:
    """``us-standard-1976`` as it is; a CSV path relative to ``base`` (the study file's folder)."""
    if value.lower() in (US_STANDARD_1976, "us-1976", "us-standard-atmosphere-1976"):
        return US_STANDARD_1976
    p = Path(value)
    if not p.is_absolute() and base is not None:
        p = Path(base) / p
    return str(p)



def read_profile_csv(path) -> AtmosphereProfile:
    """Read an altitude profile from a CSV file with a header row.

    Columns (names carry the unit): ``altitude_km`` or ``altitude_m``;
    ``temperature_K``; ``pressure_<unit>`` with a unit of
    :data:`tstrate.units.PRESSURE_UNITS_PA` (``pressure_Pa``, ``pressure_bar``,
    ``pressure_hPa``, ``pressure_Torr`` ...). Blank lines and lines starting
    with ``#`` are skipped; altitudes must increase strictly. Bad rows raise
    InputError naming the file and line.
    """
    from tstrate.io.files import checked_input_file

    path = checked_input_file(path, max_bytes=MAX_PROFILE_BYTES, what="profile file (CSV)")
    try:
        text = path.read_text(encoding="utf-8")
    except OSError as exc:
        raise InputError(f"cannot read profile: {exc.strerror or exc}", file=str(path)) from None
    except UnicodeDecodeError:
        raise InputError("not a text file (CSV expected)", file=str(path)) from None
    rows = [(i + 1, line) for i, line in enumerate(text.splitlines())
            if line.strip() and not line.lstrip().startswith("#")]
    if not rows:
        raise InputError("profile file is empty", file=str(path))
    header_line, header = rows[0][0], [c.strip() for c in next(csv.reader([rows[0][1]]))]
    alt_col, alt_scale = _find_column(header, {"altitude_km": 1e3, "altitude_m": 1.0}, path, header_line)
    t_col, _ = _find_column(header, {"temperature_K": 1.0}, path, header_line)
    p_col, p_scale = _find_column(header, {f"pressure_{u}": f for u, f in PRESSURE_UNITS_PA.items()},
                                  path, header_line)
    alt, temp, pres = [], [], []
    for line_no, line in rows[1:]:
        cells = [c.strip() for c in next(csv.reader([line]))]
        if len(cells) != len(header):
            raise InputError(f"expected {len(header)} columns, found {len(cells)}", file=str(path),
                             field=f"line {line_no}")
        values = []
        for col, name in ((alt_col, header[alt_col]), (t_col, "temperature_K"), (p_col, header[p_col])):
            try:
                v = float(cells[col])
            except ValueError:
                raise InputError(f"{name} is not a number: {cells[col]!r}", file=str(path),
                                 field=f"line {line_no}") from None
            if not math.isfinite(v):
                raise InputError(f"{name} is not finite", file=str(path), field=f"line {line_no}")
            values.append(v)
        z, t, p = values
        if t <= 0 or p <= 0:
            raise InputError("temperature and pressure must be positive", file=str(path), field=f"line {line_no}")
        if alt and z * alt_scale <= alt[-1]:
            raise InputError("altitudes must increase from one row to the next", file=str(path),
                             field=f"line {line_no}")
        alt.append(z * alt_scale)
        temp.append(t)
        pres.append(p * p_scale)
    if not alt:
        raise InputError("profile has a header but no data rows", file=str(path))
    return AtmosphereProfile(np.array(alt), np.array(temp), np.array(pres), str(path))


def _find_column(header, names: dict, path: Path, line_no: int):
    found = [(i, names[h]) for i, h in enumerate(header) if h in names]
    if len(found) != 1:
        what = "no" if not found else "more than one"
        raise InputError(f"{what} column among {', '.join(names)}", file=str(path), field=f"line {line_no}",
                         hint="header names carry units, e.g. altitude_km,temperature_K,pressure_Pa")
    return found[0]
