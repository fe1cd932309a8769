"""Small immutable records: species (a stationary point) and its parts.

Units are SI except where the field name says otherwise (``_A`` for
Angstrom, ``_amu`` for unified atomic mass units, ``_cm1`` for wavenumbers).
Molar energies are in J/mol.
"""

from __future__ import annotations

from collections import Counter
from dataclasses import dataclass, field, replace
from typing import Literal

import numpy as np

from tstrate.units import AMU, C, H

Kind = Literal["minimum", "transition_state"]


@dataclass(frozen=True)
class ElectronicLevel:
    """One electronic level: energy above the ground level [cm^-1] and degeneracy."""

    energy_cm1: float
    degeneracy: int


@dataclass(frozen=True)
class FreeRotor:
    """A 1-D free internal rotor that replaces one harmonic mode of a species.

    replaces_cm1: the unscaled harmonic wavenumber [cm^-1] of the real mode it replaces,
        as listed in ``frequencies_cm1`` or computed from the Hessian.
    symmetry_number: symmetry number sigma of the internal rotation (3 for a methyl group).
    reduced_moment_amu_A2: reduced moment of inertia of the rotation [u Angstrom^2].

    The mode leaves the harmonic set (partition function, zero-point energy, state counts)
    and a classical 1-D free rotor takes its place (see :mod:`tstrate.physics.thermo`).
    """

    replaces_cm1: float
    symmetry_number: int
    reduced_moment_amu_A2: float

    @property
    def moment_kg_m2(self) -> float:
        """Reduced moment of inertia [kg m^2]."""
        return self.reduced_moment_amu_A2 * AMU * 1e-20

    @property
    def rotational_constant_cm1(self) -> float:
        """B = h / (8 pi^2 c I) [cm^-1]."""
        return H / (8 * np.pi**2 * C * self.moment_kg_m2) / 100.0

    @classmethod
    def from_rotational_constant(cls, replaces_cm1: float, symmetry_number: int,
                                 rotational_constant_cm1: float) -> "FreeRotor":
        """A rotor from its rotational constant B [cm^-1] instead of its moment: I = h / (8 pi^2 c B)."""
        moment_kg_m2 = H / (8 * np.pi**2 * C * rotational_constant_cm1 * 100.0)
        return cls(replaces_cm1, symmetry_number, moment_kg_m2 / (AMU * 1e-20))


@dataclass(frozen=True)
class Species:
    """One stationary point with everything thermochemistry and rates need.

    Fields
    ------
    name: label used in studies.
    symbols: element symbols, one per atom.
    positions_A: (N, 3) Cartesian coordinates [Angstrom].
    masses_amu: (N,) atomic masses [u] (isotopes already applied).
    charge: total charge [e].
    multiplicity: spin multiplicity 2S+1.
    energy_J_per_mol: electronic energy used for barriers and reaction energies
        [J/mol]: the high-level single point when given, else the geometry-level
        energy; None when the file gives none (thermochemistry still works).
    frequencies_cm1: (3N-6 or 3N-5,) unscaled harmonic wavenumbers [cm^-1];
        imaginary ones are negative.
    frequency_scale: factor applied to all wavenumbers before use (1.0 = none).
    kind: "minimum" or "transition_state".
    symmetry_number: external rotational symmetry number sigma.
    optical_isomers: number of optical isomers (2 for a chiral structure).
    linear: whether the geometry is linear.
    electronic_levels: levels including the ground level at 0 cm^-1.
    hessian_J_per_m2: (3N, 3N) Cartesian Hessian [J/m^2] if known.
    geometry_energy_J_per_mol: energy at the geometry's own level [J/mol] if known.
    provenance: free-form strings (method, source, program, ...).
    source: the file the species was read from, if any.
    lennard_jones: collision parameters (sigma [Angstrom], epsilon/k_B [K]) for falloff, if given.
    free_rotors: :class:`FreeRotor` s, each replacing one real harmonic mode (default none).
    """

    name: str
    symbols: tuple[str, ...]
    positions_A: np.ndarray
    masses_amu: np.ndarray
    charge: int
    multiplicity: int
    energy_J_per_mol: float | None
    frequencies_cm1: np.ndarray
    frequency_scale: float = 1.0
    kind: Kind = "minimum"
    symmetry_number: int = 1
    optical_isomers: int = 1
    linear: bool = False
    electronic_levels: tuple[ElectronicLevel, ...] = ()
    hessian_J_per_m2: np.ndarray | None = None
    geometry_energy_J_per_mol: float | None = None
    provenance: dict = field(default_factory=dict)
    source: str | None = None
    lennard_jones: tuple[float, float] | None = None  # (sigma [Angstrom], epsilon/k_B [K])
    free_rotors: tuple[FreeRotor, ...] = ()

    # ---- derived quantities -------------------------------------------------
    @property
    def natoms(self) -> int:
        return len(self.symbols)

    @property
    def is_atom(self) -> bool:
        return self.natoms == 1

    @property
    def mass_kg(self) -> float:
        """Total mass [kg]."""
        return float(np.sum(self.masses_amu)) * AMU

    @property
    def atom_counts(self) -> Counter:
        """Element symbol -> count (used for balance checks)."""
        return Counter(self.symbols)

    @property
    def formula(self) -> str:
        """Hill-order formula, e.g. CH2O3."""
        c = self.atom_counts
        order = (["C", "H"] + sorted(k for k in c if k not in ("C", "H"))) if "C" in c else sorted(c)
        return "".join(f"{el}{c[el] if c[el] > 1 else ''}" for el in order if el in c)

    @property
    def scaled_frequencies_cm1(self) -> np.ndarray:
        """All wavenumbers times ``frequency_scale`` [cm^-1] (imaginary stay negative)."""
        return np.asarray(self.frequencies_cm1, dtype=float) * self.frequency_scale

    @property
    def real_frequencies_cm1(self) -> np.ndarray:
        """Scaled real (positive) wavenumbers [cm^-1], including any replaced by free rotors
        (:attr:`harmonic_frequencies_cm1` leaves those out)."""
        f = self.scaled_frequencies_cm1
        return f[f > 0]

    def replaced_mode_indices(self) -> tuple[int, ...]:
        """Indices into ``frequencies_cm1`` of the real modes the free rotors replace.

        Each rotor takes the real mode (unscaled wavenumber) nearest to its ``replaces_cm1``
        that no earlier rotor took (build_species has checked that the match is within 1 cm^-1
        and unique).
        """
        f = np.asarray(self.frequencies_cm1, dtype=float)
        free = [i for i in range(f.size) if f[i] > 0]
        taken = []
        for rotor in self.free_rotors:
            if not free:
                raise ValueError(f"{self.name}: more free rotors than real modes")
            j = min(free, key=lambda i: abs(f[i] - rotor.replaces_cm1))
            free.remove(j)
            taken.append(j)
        return tuple(taken)

    @property
    def harmonic_frequencies_cm1(self) -> np.ndarray:
        """Scaled real wavenumbers [cm^-1] treated as harmonic oscillators: the real modes minus
        those replaced by free rotors. These enter Q_vib, the ZPE, state counts and thermal energies."""
        if not self.free_rotors:
            return self.real_frequencies_cm1
        f = self.scaled_frequencies_cm1
        keep = f > 0
        keep[list(self.replaced_mode_indices())] = False
        return f[keep]

    @property
    def imaginary_frequencies_cm1(self) -> np.ndarray:
        """Magnitudes of the scaled imaginary wavenumbers [cm^-1]."""
        f = self.scaled_frequencies_cm1
        return -f[f < 0]

    @property
    def imaginary_frequency_cm1(self) -> float:
        """The magnitude of the one imaginary wavenumber of a transition state [cm^-1]."""
        imag = self.imaginary_frequencies_cm1
        if len(imag) != 1:
            raise ValueError(f"{self.name} has {len(imag)} imaginary frequencies, not 1")
        return float(imag[0])

    @property
    def levels(self) -> tuple[ElectronicLevel, ...]:
        """Electronic levels, defaulting to one level of degeneracy = multiplicity."""
        return self.electronic_levels or (ElectronicLevel(0.0, self.multiplicity),)

    def moments_of_inertia_kg_m2(self) -> np.ndarray:
        """Principal moments of inertia [kg m^2], ascending."""
        from tstrate.physics.symmetry import principal_moments

        return principal_moments(self.positions_A, self.masses_amu)

    def with_changes(self, **changes) -> "Species":
        """A copy with some fields replaced (records are immutable)."""
        return replace(self, **changes)


TUNNELLING_MODELS = ("none", "wigner", "skodje-truhlar", "eckart")


@dataclass(frozen=True)
class Channel:
    """One elementary channel: reactants -> [complex] -> TS -> products.

    name: label.
    reactants, products: species names (repeats allowed, e.g. two waters).
    transition_state: species name of the saddle point.
    complex: optional pre-reactive complex (a minimum between reactants and TS).
    tunnelling: one of TUNNELLING_MODELS.
    degeneracy: reaction-path degeneracy override; None = from symmetry numbers
        (already inside the rotational partition functions).
    tunnelling_floor: "reactants" (no tunnelling below the separated reactants, the
        default) or "complex" (down to the thermalised complex) for channels with a complex.
    """

    name: str
    reactants: tuple[str, ...]
    transition_state: str
    products: tuple[str, ...]
    complex: str | None = None
    tunnelling: str = "none"
    degeneracy: float | None = None
    tunnelling_floor: str = "reactants"

    @property
    def order(self) -> int:
        """Molecularity of the overall channel (number of reactants)."""
        return len(self.reactants)


@dataclass(frozen=True)
class Conditions:
    """Conditions a study asks for.

    temperature_K: (T,) temperatures [K].
    pressure_Pa: (P,) total pressures [Pa] for falloff, may be empty.
    number_density_m3: (P,) bath-gas number densities [m^-3], when the study gives [M]
        instead of pressures (then pressure_Pa is empty).
    bath_gas: name of the bath gas for collisions (built-in or a species), or None.
    rate_units: molecularity -> output unit of rate constants (e.g. {2: "cm3 molecule-1 s-1"}).
    """

    temperature_K: np.ndarray
    pressure_Pa: np.ndarray = field(default_factory=lambda: np.zeros(0))
    number_density_m3: np.ndarray = field(default_factory=lambda: np.zeros(0))
    bath_gas: str | None = None
    rate_units: dict = field(default_factory=dict)


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
    """

    file: str | None
    title: str
    species: dict
    channels: tuple[Channel, ...]
    conditions: Conditions
    sections: dict = field(default_factory=dict)
    species_files: dict = field(default_factory=dict)

    def channel(self, name: str) -> Channel:
        for ch in self.channels:
            if ch.name == name:
                return ch
        raise KeyError(name)
