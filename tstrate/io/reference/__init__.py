"""Reference species shipped inside the package (experimental data, not quantum chemistry).

The species files of this folder (CO2, H2O, N2, O2, SO2: NIST CCCBDB geometries and
fundamentals, named in each file) are found through :mod:`importlib.resources`, so an
installed tstrate has them as a checkout does. Noble-gas atoms need no file. They serve as
bath gases (collision partners) of falloff reactions in a mechanism when the study does not
hold the bath gas itself.
"""

from __future__ import annotations

from importlib import resources

#: Noble gases that can be built as bath-gas atoms without a species file.
NOBLE_GASES = ("He", "Ne", "Ar", "Kr", "Xe")


def reference_file(name: str):
    """The shipped species file of ``name`` (case-insensitive), or None. A Traversable path."""
    path = resources.files(__name__) / f"{name.lower()}.toml"
    return path if path.is_file() else None


def reference_names() -> list[str]:
    """Stems of the shipped species files (lower case)."""
    return sorted(p.name[:-5] for p in resources.files(__name__).iterdir() if p.name.endswith(".toml"))


def reference_species(name: str):
    """A :class:`~tstrate.model.Species` for ``name`` from the shipped files or a noble-gas atom;
    None when there is none."""
    from tstrate.io.species import build_species, read_species

    path = reference_file(name)
    if path is not None:
        with resources.as_file(path) as real:
            return read_species(real, name=name)
    for gas in NOBLE_GASES:
        if name.lower() == gas.lower():
            return build_species(gas, [gas], [[0.0, 0.0, 0.0]], frequencies_cm1=[], energy_J_per_mol=0.0,
                                 source=f"built-in {gas} atom (ideal-gas translation only)",
                                 provenance={"method": "ideal-gas atom"})
    return None
