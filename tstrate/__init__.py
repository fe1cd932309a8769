"""tstrate: rate constants from the stationary points of a reaction.

Units inside the package are SI (J/mol for molar energies, K, Pa, m, kg, s),
except vibrational wavenumbers, which carry their unit in the name
(``*_cm1``). Conversion happens only at the edges (file readers, CLI, export).
"""

__version__ = "0.1.0"

from tstrate.errors import InputError  # noqa: F401

#: public API, imported on first use so that ``import tstrate`` (and ``tstrate --help``) stays fast
_LAZY = {
    "read_species": "tstrate.io.species",
    "species_from_atoms": "tstrate.io.species",
    "read_study": "tstrate.io.study",
    "thermochemistry": "tstrate.physics.thermo",
    "channel_rates": "tstrate.physics.tst",
    "study_rates": "tstrate.study.rates",
    "compute_study": "tstrate.study.run",
    "write_outputs": "tstrate.output.folder",
}


def __getattr__(name):
    if name in _LAZY:
        import importlib

        return getattr(importlib.import_module(_LAZY[name]), name)
    raise AttributeError(f"module 'tstrate' has no attribute {name!r}")


def __dir__():
    return sorted(list(globals()) + list(_LAZY))
