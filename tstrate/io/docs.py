"""The user pages of the input formats, generated from the readers' own key tables.

    python -m tstrate.io.docs --write docs/    # writes docs/species-file.md and docs/study-file.md
    python -m tstrate.io.docs --check docs/    # exit status 1 when the pages are not what --write gives

The tables are the :class:`~tstrate.io.keys.Keys` the readers refuse unknown keys with
(:data:`SPECIES_FILE`, :data:`STUDY_FILE`), so a page lists exactly what a reader accepts; the
worked examples are the bundled demo files under ``molecules/carbonic_acid`` (a source checkout
is needed). ``tests/io/test_docs.py`` fails when the committed pages drift from the tables.
"""

from __future__ import annotations

import argparse
import re
import sys
from pathlib import Path
from typing import Callable, Iterable

from tstrate.errors import InputError
from tstrate.io import species, study
from tstrate.io.keys import Key, Keys, toml_value
from tstrate.io.sections import association, comparison, fits, isotopes, pressure, references
from tstrate.io.sections import uncertainty as uncertainty_section
from tstrate.io.tables import Table
from tstrate.physics.vibrations import HESSIAN_UNITS_J_PER_M2
from tstrate.units import ENERGY_UNITS_J_PER_MOL, PRESSURE_UNITS_PA, RATE_UNITS

#: every table of a species file, in page order
SPECIES_FILE: tuple[Keys, ...] = species.SPECIES_FILE
#: every table of a study file, in page order
STUDY_FILE: tuple[Keys, ...] = (
    study.STUDY_KEYS, study.SPECIES_MAP_KEYS, study.CONDITIONS_KEYS, study.RATE_UNITS_KEYS, study.CHANNEL_KEYS,
    comparison.COMPARISON_KEYS, pressure.FALLOFF_KEYS, pressure.FALLOFF_CHANNELS_KEYS,
    pressure.FALLOFF_CHANNEL_KEYS, pressure.EXCITATION_KEYS, pressure.EXCITATION_ENERGY_KEYS, fits.KEYS,
    isotopes.KEYS, isotopes.SUBSTITUTION_KEYS, isotopes.ATOMS_KEYS, isotopes.POOL_KEYS, isotopes.POOL_MEMBER_KEYS,
    uncertainty_section.KEYS, uncertainty_section.SPECIES_TABLE_KEYS, uncertainty_section.SPECIES_KEYS,
    uncertainty_section.ENERGY_KEYS, references.KEYS, association.KEYS)

#: the checkout this module sits in, and its demo
ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "molecules" / "carbonic_acid"
COMMAND = "python -m tstrate.io.docs --write docs/"

_TABLE_TYPES = {"table": (), "array of tables": ("[]",)}


# ---- checks of the tables themselves ----------------------------------------------------------------

def check_tables(tables: Iterable[Keys]) -> None:
    """Every key holding a table has its own table in ``tables``, and every table but the top
    level hangs from such a key; ValueError otherwise (a table that no page would reach)."""
    tables = tuple(tables)
    paths = {t.path for t in tables}
    if len(paths) != len(tables):
        raise ValueError("two tables share a path")
    reached = {()}
    for t in tables:
        for k in t.keys + ((t.any_key,) if t.any_key else ()):
            if k.type in _TABLE_TYPES:
                child = t.path + (k.name if k is not t.any_key else "*",) + _TABLE_TYPES[k.type]
                if child not in paths:
                    raise ValueError(f"{t.title}: key {k.name!r} holds a table that no key table documents")
                reached.add(child)
    lost = [t.title for t in tables if t.path not in reached]
    if lost:
        raise ValueError(f"no key leads to {lost[0]}")


# ---- markdown ---------------------------------------------------------------------------------------

def _md(text: str) -> str:
    """Text for a table cell: <, >, * and | escaped outside `code` (| inside code too)."""
    parts = text.split("`")
    for i, part in enumerate(parts):
        if i % 2 == 0:
            part = part.replace("<", "&lt;").replace(">", "&gt;").replace("*", r"\*")
        parts[i] = part.replace("|", r"\|")
    return "`".join(parts)


def _code(text: str) -> str:
    return f"`{text}`"


def _heading(t: Keys) -> str:
    return _code(t.title) if t.title.startswith("[") or "=" in t.title else t.title.capitalize()


def _meaning(k: Key) -> str:
    text = k.meaning
    if k.choices:
        text += "; allowed: " + ", ".join(_code(toml_value(c)) for c in k.choices)
        if k.choices_note:
            text += ", " + k.choices_note
    elif k.choices_note:
        text += "; " + k.choices_note
    return _md(text)


def _key_row(k: Key) -> str:
    cells = (_code(k.name), k.type, _md(k.required_text), _md(k.default_shown) if k.default_shown in
             ("-", "none") or k.default_text is not None else _code(k.default_shown), _md(k.unit), _meaning(k))
    return "| " + " | ".join(cells) + " |"


def key_table(t: Keys) -> str:
    """The section of a page for one table: heading, summary and one row per key."""
    lines = [f"### {_heading(t)}", "", _md(t.summary), "",
             "| key | type | required | default | unit | meaning |", "| --- | --- | --- | --- | --- | --- |"]
    lines += [_key_row(k) for k in t.keys]
    if t.any_key is not None:
        lines.append(_key_row(t.any_key))
    return "\n".join(lines) + "\n"


def _toml_block(text: str) -> str:
    return "```toml\n" + text.rstrip("\n") + "\n```\n"


def _demo(name: str) -> str:
    path = DEMO / name
    if not path.is_file():
        raise SystemExit(f"{path} not found: the pages are generated in a source checkout of tstrate")
    return path.read_text(encoding="utf-8")


def _unknown_key_line(tables: tuple[Keys, ...], file: str, key: str) -> str:
    """The line a reader gives for an undocumented top-level key (made by the reader's own check)."""
    try:
        Table({key: 1}, file).reject_unknown(tables[0])
    except InputError as exc:
        return str(exc)
    raise AssertionError("the top-level table accepted an undocumented key")


_LEGEND = ("Columns: *type* as the value is written in TOML; *required*: yes, no, or when; *default*: "
           "what is used when the key is left out (none: nothing, the key is simply unset; -: the key is "
           "required); *unit* of the number (1: a pure number).")
_HEADER = (f"<!-- Generated by `{COMMAND}` from the key tables of tstrate's readers; edit those tables, "
           "not this page. tests/io/test_docs.py fails when the two disagree. -->")


def _keys_part(tables: tuple[Keys, ...]) -> list[str]:
    check_tables(tables)
    return ["## Keys", "", _LEGEND, ""] + [key_table(t) for t in tables]


def _top_of(text: str, before: str) -> str:
    """``text`` up to the line that starts with ``before`` (the rest left out)."""
    match = re.search(rf"^{re.escape(before)}", text, flags=re.M)
    return text[:match.start()].rstrip("\n") + "\n" if match else text


# ---- the pages --------------------------------------------------------------------------------------

def species_page() -> str:
    """docs/species-file.md"""
    water = _demo("h2o.toml")
    ts_top = _top_of(_demo("ts_bare.toml"), "[provenance]")
    lines = [
        _HEADER, "", "# Species files", "",
        "A species file describes one stationary point, a minimum (reactant, product, complex) or a "
        "transition state, in TOML (a format of tstrate's own): its geometry, charge and multiplicity, its "
        "harmonic frequencies or Cartesian Hessian, and its energies. A study file "
        "([study-file.md](study-file.md)) names the species files it uses. `tstrate compute` writes species "
        "files from GFN2-xTB calculations (`minimum`, `saddle`, `relay`) or from quantum-chemistry output "
        "files (`read`); they can as well be written by hand.", "",
        "Every number carries its unit: in the key's name (`_cm1` wavenumbers in cm-1, `_K` kelvin, `_A` "
        "Angstrom, `_amu` atomic mass units) or in a `unit` key beside its value. Energies take "
        + ", ".join(_code(u) for u in ENERGY_UNITS_J_PER_MOL) + "; Hessians "
        + ", ".join(_code(u) for u in HESSIAN_UNITS_J_PER_M2) + ". Inside the program every quantity is SI "
        "(J/mol, K, Pa, m^-3), converted once when the file is read (`tstrate/units.py`; see "
        "[How tstrate is built](architecture.md)).", "",
        "A key that the tables below do not list is refused, in one line that names the file and the key "
        "(exit status 2), for example:", "",
        "```", _unknown_key_line(SPECIES_FILE, "h2o.toml", "frequency_scal"), "```", "",
        "## Example", "",
        "Water from the bundled demo (`molecules/carbonic_acid/h2o.toml`, made by `tstrate compute "
        "minimum` with GFN2-xTB), complete: the frequencies are listed and computed again from the "
        "`[hessian]`, which also lets isotopologues be made with `isotopes`.", "",
        _toml_block(water),
        "A transition state has `kind = \"transition_state\"` and exactly one imaginary frequency, written "
        "as a negative number; the top of `molecules/carbonic_acid/ts_bare.toml` (its `[provenance]` and "
        "`[hessian]` left out):", "",
        _toml_block(ts_top),
        "Free internal rotors, electronic levels, isotopes, Lennard-Jones parameters for falloff and a "
        "higher-level single point are added with the keys below, e.g. "
        "`single_point = { value = -264.12, unit = \"hartree\", method = \"CCSD(T)/CBS\" }`.", "",
        *_keys_part(SPECIES_FILE),
    ]
    return "\n".join(lines).rstrip("\n") + "\n"


def study_page() -> str:
    """docs/study-file.md"""
    demo = _demo("study.toml")
    pressures = ", ".join(_code(k) for k in study.PRESSURE_KEYS)
    bimolecular = ", ".join(_code(u) for u, (order, _) in RATE_UNITS.items() if order == 2)
    lines = [
        _HEADER, "", "# Study files", "",
        "A study file names the species files of a reaction system ([species-file.md](species-file.md)) "
        "and links them by channels, reactants -> [complex] -> transition state -> products, on a grid of "
        "temperatures (and pressures). Optional sections ask for comparisons of bare and catalysed routes "
        "(`[[comparison]]`), pressure dependence (`[falloff]`), energised molecules (`[[excitation]]`) "
        "and the fitted expressions written to the mechanism (`[fits]`). `tstrate run STUDY` computes "
        "everything a study asks for; `tstrate rates`, `compare`, `falloff` and `excite` do one part each. "
        "It is TOML, a format of tstrate's own.", "",
        "Every number carries its unit in the key's name (`temperature_K`, `pressure_bar`, `grain_cm1`, "
        "`mixing_ratio` in mol/mol) or in a `unit` key beside its value (energies: "
        + ", ".join(_code(u) for u in ENERGY_UNITS_J_PER_MOL) + "). Pressures of `[conditions]` are given by "
        "one of " + pressures + "; a CSV altitude profile names its pressure column `pressure_<unit>` with "
        "a unit among " + ", ".join(_code(u) for u in PRESSURE_UNITS_PA) + ". Rate constants are written in "
        "the units of `[conditions.rate_units]` (bimolecular: " + bimolecular + "). Inside the program every "
        "quantity is SI (J/mol, K, Pa, m^-3, rate constants per molecule), converted once at the edges "
        "(`tstrate/units.py`; see [How tstrate is built](architecture.md)).", "",
        "Atoms and charge must balance along every channel, species names must exist, and a key that the "
        "tables below do not list is refused: in one line that names the file and the key (exit status 2), "
        "for example:", "",
        "```", _unknown_key_line(STUDY_FILE, "study.toml", "condition"), "```", "",
        "## Conformer ensembles", "",
        "A species may stand for several conformers in equilibrium: give `[species]` a table label -> "
        "species file (`H2CO3 = { cis_cis = \"h2co3.toml\", cis_trans = \"h2co3_cis_trans.toml\" }`) or a "
        "list of files (labelled by their names without `.toml`). Its partition function is "
        "q = sum_i q_i exp(-(E0_i - E0_ref)/kT), each conformer with its own geometry, frequencies, "
        "energy, symmetry number and optical isomers (E0: electronic energy plus ZPE; the lowest conformer "
        "is the reference, and it stands for the ensemble where one structure is needed). Thermochemistry, "
        "equilibrium constants and rates use the sum; a transition-state ensemble gives multi-conformer TST, "
        "the sum of the rates through each TS conformer with its own tunnelling factor; the falloff's k(E) "
        "counts the states of every conformer of the reactant and of the transition state. `tables/conformers.csv`, `results.json` "
        "(`conformers`, `conformer_effects`, `transition_state_conformer_shares`) and the report give each "
        "conformer's population against T and how much the ensembles change each k and Kc. "
        "`tstrate compute conformers` writes the conformer files from a SMILES. **Count each well once**: "
        "mirror images and permuted identical atoms are counted by the symmetry number and optical isomers, "
        "not as extra conformers; and conformers that differ only along a torsion that a species treats as a "
        "hindered or free internal rotor are one well of that rotor (its levels already span all its "
        "minima), so the ensemble keeps one conformer per well of the torsions that are not rotors.", "",
        "## Example", "",
        "The bundled demo (`molecules/carbonic_acid/study.toml`): carbonic acid decomposing to CO2 + H2O, "
        "bare and assisted by one or two water molecules, in a cold, dry, CO2-rich upper atmosphere and a "
        "humid lower one. It uses every section; `tstrate run molecules/carbonic_acid/study.toml` runs it.",
        "", _toml_block(demo),
        *_keys_part(STUDY_FILE),
    ]
    return "\n".join(lines).rstrip("\n") + "\n"


#: page file name -> function that writes it
PAGES: dict[str, Callable[[], str]] = {"species-file.md": species_page, "study-file.md": study_page}


def render() -> dict[str, str]:
    """Every page: file name -> text."""
    return {name: page() for name, page in PAGES.items()}


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(prog="python -m tstrate.io.docs",
                                     description="Write (or check) the pages of the species-file and "
                                                 "study-file formats from the readers' key tables.")
    mode = parser.add_mutually_exclusive_group(required=True)
    mode.add_argument("--write", metavar="DIR", type=Path, help="write the pages into DIR (e.g. docs/)")
    mode.add_argument("--check", metavar="DIR", type=Path,
                      help="exit with status 1 when the pages in DIR differ from what --write would write")
    args = parser.parse_args(argv)
    pages = render()
    if args.write is not None:
        from tstrate.io.files import atomic_write_text

        args.write.mkdir(parents=True, exist_ok=True)
        for name, text in pages.items():
            atomic_write_text(args.write / name, text)
            print(args.write / name)
        return 0
    stale = [name for name, text in pages.items()
             if not (args.check / name).is_file() or (args.check / name).read_text(encoding="utf-8") != text]
    for name in stale:
        print(f"{args.check / name} is out of date; regenerate it with `{COMMAND}`", file=sys.stderr)
    return 1 if stale else 0


if __name__ == "__main__":
    sys.exit(main())
