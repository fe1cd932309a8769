"""The degree-of-freedom protocol shared by thermochemistry and state counting.

Any separable degree of freedom (a set of harmonic oscillators, a free rotor, a hindered rotor)
answers the same questions:

- ``thermo_parts(temperature_K)``: ln q (from its own ground level), U/RT, S/R, Cv/R, each an
  array of the temperatures' shape (dimensionless);
- ``zpe_J_per_mol``: its ground level above the energy of the species' geometry [J/mol];
- ``counts(n_grains, grain_J_per_mol)``: its states in each energy grain from its ground level
  (grain i centred on i * grain), for convolution into RRKM and master-equation state counts.

:class:`tstrate.physics.rotors.HinderedRotorModel` (exact levels) and :class:`tstrate.physics.states.Rotor`
(free 1-D and 2-D rotors) implement it; :func:`tstrate.physics.states.count_states` convolves any object
with ``counts`` into its oscillators.
"""

from __future__ import annotations

from typing import Protocol, runtime_checkable

import numpy as np


@runtime_checkable
class DegreeOfFreedom(Protocol):
    """See the module docstring."""

    @property
    def zpe_J_per_mol(self) -> float: ...

    def thermo_parts(self, temperature_K: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]: ...

    def counts(self, n_grains: int, grain_J_per_mol: float) -> np.ndarray: ...
