"""A study: species, channels, conditions and the typed settings of its optional sections.

Units are SI (temperatures K, pressures Pa, number densities m^-3).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from tstrate.model.species import Channel
from tstrate.units import P_STANDARD


@dataclass(frozen=True)
class Conditions:
    """Conditions a study asks for.

    temperature_K: (T,) temperatures [K].
    pressure_Pa: (P,) total pressures [Pa] for falloff, may be empty.
    number_density_m3: (P,) bath-gas number densities [m^-3], when the study gives [M]
        instead of pressures (then pressure_Pa is empty).
    bath_gas: name of the bath gas for collisions (built-in or a species), or None.
    rate_units: molecularity -> output unit of rate constants (e.g. {2: "cm3 molecule-1 s-1"}).
    standard_pressure_Pa: the standard state of S, G, Kp and activation quantities [Pa]:
        1 bar (default) or 1 atm. Rate constants do not depend on it.
    """

    temperature_K: np.ndarray
    pressure_Pa: np.ndarray = field(default_factory=lambda: np.zeros(0))
    number_density_m3: np.ndarray = field(default_factory=lambda: np.zeros(0))
    bath_gas: str | None = None
    rate_units: dict = field(default_factory=dict)
    standard_pressure_Pa: float = P_STANDARD

    def __post_init__(self):
        from tstrate.units import standard_pressure_name

        standard_pressure_name(self.standard_pressure_Pa)  # 1 bar or 1 atm, else ValueError


@dataclass(frozen=True)
class Study:
    """Everything a study file asks for, validated.

    file: the study file's path (None when built in Python).
    title: free text.
    species: name -> Species.
    channels: the channels, in file order.
    conditions: temperatures, pressures, bath gas, output units.
    sections: further validated parts added by later readers (comparisons,
        falloff settings, excitations, fits), keyed by section name.
    species_files: name -> path of the species file (for reports and hashes).
    reference_species: name -> Species of reference data the study uses but does not list
        (a bath gas exported to the mechanism); the study reader fills it.
    """

    file: str | None
    title: str
    species: dict
    channels: tuple[Channel, ...]
    conditions: Conditions
    sections: dict = field(default_factory=dict)
    species_files: dict = field(default_factory=dict)
    reference_species: dict = field(default_factory=dict)

    def channel(self, name: str) -> Channel:
        for ch in self.channels:
            if ch.name == name:
                return ch
        raise KeyError(name)
