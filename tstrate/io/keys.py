"""The keys of tstrate's input files as data: one :class:`Keys` table per section of a file.

Every reader declares the keys of the tables it reads (``SPECIES_KEYS`` in
:mod:`tstrate.io.species`, ``CHANNEL_KEYS`` in :mod:`tstrate.io.study`, ...) and hands that
table to :meth:`tstrate.io.tables.Table.reject_unknown`, which refuses any key the table does not
list. The user pages ``docs/species-file.md`` and ``docs/study-file.md`` are generated from the
same tables (:mod:`tstrate.io.docs`), so a key cannot be accepted without being documented.

Allowed values (``choices``) are taken from the constants the code checks against
(``TUNNELLING_MODELS``, ``ENERGY_UNITS_J_PER_MOL``, ...), never retyped.
"""

from __future__ import annotations

import dataclasses
import json
from dataclasses import dataclass
from typing import Any, Iterable, Iterator

#: how a value is written in TOML (the words the pages use)
TYPES = ("string", "integer", "number", "true or false", "true or false, or a number", "list of numbers",
         "list of strings", "number or list of numbers", "table", "array of tables",
         "string, list of strings or table")
#: types whose values are numbers: a key of one of these must say its unit ("1" for a pure number)
NUMERIC_TYPES = frozenset({"integer", "number", "true or false, or a number", "list of numbers",
                           "number or list of numbers"})


def toml_value(value: Any) -> str:
    """``value`` as it would be written in a TOML file (for defaults and allowed values)."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, str):
        return json.dumps(value)
    if isinstance(value, float):
        return f"{value:g}"
    if isinstance(value, (list, tuple)):
        return "[" + ", ".join(toml_value(v) for v in value) + "]"
    return str(value)


def field_default(record: type, name: str) -> Any:
    """The default of field ``name`` of the dataclass ``record`` (a setting's default lives there)."""
    for f in dataclasses.fields(record):
        if f.name == name:
            if f.default is dataclasses.MISSING:
                raise LookupError(f"{record.__name__}.{name} has no default")
            return f.default
    raise LookupError(f"{record.__name__} has no field {name!r}")


@dataclass(frozen=True)
class Key:
    """One key of a file section.

    name: the key as written (or, for a table of user-chosen names, a placeholder like ``<species>``).
    type: one of :data:`TYPES`, as the value is written in TOML.
    meaning: what it does, in a sentence or two.
    required: True, False, or a condition in words (``"one of frequencies_cm1 / [hessian]"``).
    default: the value used when the key is left out (None: not set), as the reader uses it.
    default_text: the default in words when it is not a fixed value ("detected from the geometry").
    unit: the unit of a number ("1" for a pure number, "" for values that are not numbers).
    choices: the allowed values, from the constants the code checks against.
    choices_note: what else is allowed besides ``choices`` ("or a CSV file ...").
    """

    name: str
    type: str
    meaning: str
    required: bool | str = False
    default: Any = None
    default_text: str | None = None
    unit: str = ""
    choices: tuple = ()
    choices_note: str = ""

    def __post_init__(self):
        if self.type not in TYPES:
            raise ValueError(f"key {self.name!r}: type {self.type!r} is not one of {TYPES}")
        if self.type in NUMERIC_TYPES and not self.unit:
            raise ValueError(f"key {self.name!r} holds numbers and needs a unit (\"1\" for a pure number)")
        if self.required is True and (self.default is not None or self.default_text is not None):
            raise ValueError(f"key {self.name!r} is required and cannot have a default")
        if not self.meaning.strip():
            raise ValueError(f"key {self.name!r} has no meaning")
        object.__setattr__(self, "choices", tuple(self.choices))

    @property
    def required_text(self) -> str:
        if self.required is True:
            return "yes"
        if self.required is False:
            return "no"
        return str(self.required)

    @property
    def default_shown(self) -> str:
        """The default as the pages show it ("none": left unset, "-": the key is required)."""
        if self.required is True:
            return "-"
        if self.default_text is not None:
            return self.default_text
        if self.default is None:
            return "none"
        return toml_value(self.default)


@dataclass(frozen=True)
class Keys:
    """The keys of one section of a file.

    path: where the section sits in the parsed file: key names, ``"[]"`` for the items of an array
        of tables and ``"*"`` for a user-chosen name (``("falloff", "channels", "*")``).
    title: the section as a user writes it (``"[[channel]]"``, ``"top level"``).
    summary: what the section is for (and rules that involve several keys).
    keys: the fixed keys, in the order the page lists them.
    any_key: for a table whose keys are names the user chooses (species names, atom numbers,
        free-form notes): one :class:`Key` describing each of them.
    """

    path: tuple[str, ...]
    title: str
    summary: str
    keys: tuple[Key, ...] = ()
    any_key: Key | None = None

    def __post_init__(self):
        object.__setattr__(self, "path", tuple(self.path))
        object.__setattr__(self, "keys", tuple(self.keys))
        names = [k.name for k in self.keys]
        dup = sorted({n for n in names if names.count(n) > 1})
        if dup:
            raise ValueError(f"{self.title}: key {dup[0]!r} listed twice")
        if not self.keys and self.any_key is None:
            raise ValueError(f"{self.title}: no keys")

    def __iter__(self) -> Iterator[str]:
        return iter(k.name for k in self.keys)

    def __len__(self) -> int:
        return len(self.keys)

    def __contains__(self, name: object) -> bool:
        return any(k.name == name for k in self.keys)

    def __getitem__(self, name: str) -> Key:
        for k in self.keys:
            if k.name == name:
                return k
        raise KeyError(f"{self.title} documents no key {name!r}")

    def default(self, name: str) -> Any:
        """The default the reader uses for ``name`` (None when the key is unset by default)."""
        return self[name].default

    def accepts(self, name: str) -> bool:
        """Whether a file may hold ``name`` here (a listed key, or any name in a table of names)."""
        return self.any_key is not None or name in self


def _child(path: tuple[str, ...], name: str, table: Keys) -> tuple[str, ...]:
    return path + ((name,) if name in table else ("*",))


def walk(data: dict, tables: Iterable[Keys]) -> Iterator[tuple[str, Keys | None, str]]:
    """Every key of a parsed file: ``(dotted key, the table that documents it or None, name)``.

    The dotted key is written as the readers write it in errors (``channel[0].tunnelling``).
    Tables and arrays of tables are entered when ``tables`` documents them.
    """
    by_path = {t.path: t for t in tables}

    def visit(d: dict, path: tuple[str, ...], prefix: str):
        table = by_path.get(path)
        for name, value in d.items():
            dotted = f"{prefix}.{name}" if prefix else name
            if table is None or not table.accepts(name):
                yield dotted, None, name
                continue
            yield dotted, table, name
            child = _child(path, name, table)
            if isinstance(value, dict) and child in by_path:
                yield from visit(value, child, dotted)
            elif (isinstance(value, list) and value and all(isinstance(v, dict) for v in value)
                  and child + ("[]",) in by_path):
                for i, item in enumerate(value):
                    yield from visit(item, child + ("[]",), f"{dotted}[{i}]")

    yield from visit(data, (), "")


def undocumented(data: dict, tables: Iterable[Keys]) -> list[str]:
    """The dotted keys of a parsed file that no table documents."""
    return [dotted for dotted, table, _ in walk(data, tables) if table is None]
