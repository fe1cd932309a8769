"""tstrate: rate constants from the stationary points of a reaction.

Units inside the package are SI (J/mol for molar energies, K, Pa, m, kg, s),
except vibrational wavenumbers, which carry their unit in the name
(``*_cm1``). Conversion happens only at the edges (file readers, CLI, export).
"""

__version__ = "0.1.0"

from tstrate.errors import InputError  # noqa: F401
