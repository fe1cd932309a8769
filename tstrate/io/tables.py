"""Typed access to parsed TOML tables, with errors that name the file and key.

Every reader goes through :class:`Table`, so a wrong type, a missing key or a
key nobody knows is reported the same way everywhere: one line with the file,
the dotted key and what was expected. Which keys a table may hold is said by the
reader's :class:`~tstrate.io.keys.Keys` table, passed to :meth:`Table.reject_unknown`.
"""

from __future__ import annotations

import math
import tomllib
from pathlib import Path
from typing import Any

from tstrate.errors import InputError
from tstrate.io.keys import Key, Keys
from tstrate.units import ENERGY_UNITS_J_PER_MOL

_MISSING = object()

_TYPE_NAMES = {int: "an integer", float: "a number", str: "a string", bool: "true or false",
               list: "a list", dict: "a table"}


#: a species or study file larger than this is refused before it is read [bytes] (a Hessian of
#: 200 atoms written out in full is about 8 MiB)
MAX_TOML_BYTES = 64 * 2**20


def load_toml(path: str | Path) -> dict:
    """Parse a TOML file; a missing, special, oversized or malformed file is an InputError.

    Only regular files are opened (a pipe or a device could block or never end), and a file
    larger than :data:`MAX_TOML_BYTES` is refused before it is read."""
    from tstrate.io.files import checked_input_file

    path = checked_input_file(path, max_bytes=MAX_TOML_BYTES, what="file")
    try:
        with open(path, "rb") as fh:
            return tomllib.load(fh)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"not valid TOML: {exc}", file=str(path)) from None
    except UnicodeDecodeError:
        raise InputError("not a text file (TOML expected)", file=str(path)) from None


class Table:
    """A TOML table with its file and key prefix, for typed lookups."""

    def __init__(self, data: dict, file: str | Path | None, prefix: str = ""):
        if not isinstance(data, dict):
            raise InputError("expected a table", file=str(file) if file else None, field=prefix or None)
        self.data = data
        self.file = str(file) if file is not None else None
        self.prefix = prefix
        self._used: set[str] = set()

    def key(self, name: str) -> str:
        return f"{self.prefix}.{name}" if self.prefix else name

    def error(self, name: str | None, problem: str, hint: str | None = None) -> InputError:
        return InputError(problem, file=self.file, field=self.key(name) if name else (self.prefix or None),
                          hint=hint)

    def build(self, factory, *args, **kwargs):
        """``factory(*args, **kwargs)`` (a record or a physics check); an :class:`InputError` it raises
        about its own parameter comes back placed in this file and table."""
        try:
            return factory(*args, **kwargs)
        except InputError as exc:
            raise exc.within(file=self.file, prefix=self.prefix or None) from None

    def __contains__(self, name: str) -> bool:
        return name in self.data

    def get(self, name: str, kind: type | tuple, default: Any = _MISSING) -> Any:
        """The value of ``name`` checked against ``kind`` (int accepted where float is)."""
        self._used.add(name)
        if name not in self.data:
            if default is _MISSING:
                raise self.error(name, "missing required key")
            return default
        value = self.data[name]
        kinds = kind if isinstance(kind, tuple) else (kind,)
        if float in kinds and isinstance(value, int) and not isinstance(value, bool):
            value = float(value)
        if isinstance(value, bool) and bool not in kinds:
            ok = False
        else:
            ok = isinstance(value, kinds)
        if not ok:
            want = " or ".join(_TYPE_NAMES.get(k, k.__name__) for k in kinds)
            raise self.error(name, f"expected {want}, got {type(value).__name__} {value!r}"[:200])
        if isinstance(value, float) and not math.isfinite(value):
            raise self.error(name, "value is NaN or infinite")
        return value

    def number_list(self, name: str, default: Any = _MISSING, *, min_length: int = 0) -> list[float] | Any:
        """A list of finite numbers."""
        value = self.get(name, list, default)
        if value is default and default is not _MISSING:
            return default
        out = []
        for i, v in enumerate(value):
            if isinstance(v, bool) or not isinstance(v, (int, float)):
                raise self.error(f"{name}[{i}]", f"expected a number, got {v!r}"[:200])
            if not math.isfinite(v):
                raise self.error(f"{name}[{i}]", "value is NaN or infinite")
            out.append(float(v))
        if len(out) < min_length:
            raise self.error(name, f"expected at least {min_length} values, got {len(out)}")
        return out

    def string_list(self, name: str, default: Any = _MISSING) -> list[str] | Any:
        value = self.get(name, list, default)
        if value is default and default is not _MISSING:
            return default
        for i, v in enumerate(value):
            if not isinstance(v, str):
                raise self.error(f"{name}[{i}]", f"expected a string, got {v!r}"[:200])
        return list(value)

    def table(self, name: str, default: Any = _MISSING) -> "Table | Any":
        value = self.get(name, dict, default)
        if value is default and default is not _MISSING:
            return default
        return Table(value, self.file, self.key(name))

    def tables(self, name: str) -> list["Table"]:
        """An array of tables (``[[name]]``); empty when absent."""
        value = self.get(name, list, [])
        out = []
        for i, v in enumerate(value):
            if not isinstance(v, dict):
                raise self.error(f"{name}[{i}]", "expected a table")
            out.append(Table(v, self.file, f"{self.key(name)}[{i}]"))
        return out

    def reject_unknown(self, known: Keys | set[str] | None = None) -> None:
        """Raise on keys the table may not hold (typos should not pass silently).

        With a :class:`~tstrate.io.keys.Keys` table the file may hold only the keys it documents
        (any key, for a table of user-chosen names), and a reader that asked for a key the table
        does not document is a bug. With a set (or nothing), the keys of the set and those the
        reader asked for are accepted.
        """
        if isinstance(known, Keys):
            if known.any_key is not None:
                return
            asked = sorted(self._used - set(known))
            if asked:
                raise AssertionError(f"the reader of {known.title} asked for undocumented key {asked[0]!r}")
            extra = sorted(k for k in self.data if k not in known)
        else:
            known = self._used if known is None else set(known) | self._used
            extra = sorted(set(self.data) - known)
        if extra:
            raise self.error(extra[0], "unknown key", hint="check the spelling against the documentation")

    def quantity(self, name: str, convert, default: Any = _MISSING, *, keys: Keys):
        """A ``{ value = ..., unit = "..." }`` table converted by ``convert(value, unit, file=, field=)``;
        ``keys`` documents the sub-table (e.g. :func:`energy_keys`)."""
        sub = self.table(name, default)
        if sub is default and default is not _MISSING:
            return default
        value = sub.get("value", float)
        unit = sub.get("unit", str)
        sub.reject_unknown(keys)
        return convert(value, unit, file=self.file, field=self.key(name) + ".unit")


def energy_keys(path: tuple[str, ...], title: str, summary: str, *extra: Key) -> Keys:
    """The keys of an energy written as ``{ value = ..., unit = "..." }`` (read by
    :meth:`Table.quantity` with :func:`tstrate.units.energy_to_J_per_mol`), and ``extra`` ones."""
    return Keys(path, title, summary, (
        Key("value", "number", "the energy, in the unit given by `unit`", required=True, unit="`unit`"),
        Key("unit", "string", "the unit of `value`", required=True, choices=tuple(ENERGY_UNITS_J_PER_MOL)),
        *extra))
