"""Immutable, validated records: a species (a stationary point), its parts, and a channel.

Checks run at construction, whoever constructs (a reader, ``with_changes``, a notebook):
a record that exists is one that physics allows. Arrays are read-only copies.

Units are SI except where the field name says otherwise (``_A`` for
Angstrom, ``_amu`` for unified atomic mass units, ``_cm1`` for wavenumbers).
Molar energies are in J/mol.
"""

from __future__ import annotations

import math
from collections import Counter
from dataclasses import dataclass, field, replace
from typing import Literal

import numpy as np

from tstrate.arrays import finite_or_nan, read_only
from tstrate.errors import InputError
from tstrate.geometry import closest_pair, expected_mode_count, principal_moments
from tstrate.units import AMU, C, H

Kind = Literal["minimum", "transition_state"]
KINDS = ("minimum", "transition_state")

#: closest approach of two nuclei accepted in a geometry [Angstrom]
MIN_DISTANCE_A = 0.4
#: largest number of atoms of one species (stationary points of gas-phase kinetics are far smaller;
#: the limit keeps a wrong file from asking for gigabytes of atom-pair arrays)
MAX_ATOMS = 1000
#: largest |coordinate| accepted [Angstrom]
MAX_COORDINATE_A = 1.0e4
#: largest |electronic energy| accepted [J/mol] (1e6 hartree; heavier than any molecule)
MAX_ABS_ENERGY_J_PER_MOL = 2.6e12
#: accepted range of frequency scale factors (published factors lie within 0.8-1.1)
FREQUENCY_SCALE_RANGE = (0.5, 1.5)
#: largest symmetry number (and number of optical isomers) accepted
MAX_SYMMETRY_NUMBER = 60
#: largest reaction-path degeneracy accepted
MAX_PATH_DEGENERACY = 1000
#: largest degeneracy and energy of an electronic level accepted
MAX_LEVEL_DEGENERACY = 100
MAX_LEVEL_ENERGY_CM1 = 2.0e5

#: the fields of a species that symmetry detection fills in unless they are given
SYMMETRY_FIELDS = ("symmetry_number", "optical_isomers", "linear")

#: a free rotor's ``replaces_cm1`` must lie this close to the mode it replaces [cm^-1]
ROTOR_MATCH_CM1 = 1.0


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


#: how the harmonic mode a hindered rotor replaces was chosen (values of HinderedRotor.mode_assignment)
MODE_ASSIGNMENTS = ("projection", "wavenumber")
#: largest symmetry number of an internal rotor accepted
MAX_ROTOR_SYMMETRY_NUMBER = 12
#: largest barrier of a torsional potential accepted [J/mol] (beyond any torsion: 1000 kJ/mol)
MAX_TORSION_BARRIER_J_PER_MOL = 1.0e6


@dataclass(frozen=True)
class HinderedRotor:
    """A 1-D hindered internal rotor that replaces one harmonic mode of a species.

    bond_atoms: (frame atom, top atom), 0-based; the top turns about the bond axis.
    top_atoms: 0-based atoms of the top (the top atom and all bonded beyond it), sorted.
    symmetry_number: sigma of the rotor (3 for a methyl group).
    reduced_moment_amu_A2: reduced moment of inertia [u Angstrom^2] (Pitzer's, from the geometry,
        unless given).
    cos_terms_J_per_mol, sin_terms_J_per_mol: (K,) Fourier coefficients of V(phi) [J/mol], harmonics
        k = 1 .. K, V(0) = 0 at the species' geometry (see :mod:`tstrate.physics.rotors`).
    replaces_cm1: unscaled wavenumber [cm^-1] of the real mode the rotor replaces.
    mode_assignment: "projection" (the mode of largest overlap with the torsion, from the Hessian)
        or "wavenumber" (the mode nearest a given wavenumber).
    mode_overlap: squared overlap of the torsion with the replaced mode (0-1), when a Hessian is known.
    potential_source: where the potential comes from ("points", "barriers", "terms", "scan ...").
    points_deg, points_J_per_mol: the scan or file points the series was fitted to (angles [deg]
        from the geometry, energies [J/mol] on the fit's scale), empty when given as coefficients.
    fit_rms_J_per_mol, fit_max_J_per_mol: RMS and largest residual of that fit [J/mol].
    moment_definition: the name of the reduced-moment definition used.
    """

    bond_atoms: tuple[int, int]
    top_atoms: tuple[int, ...]
    symmetry_number: int
    reduced_moment_amu_A2: float
    cos_terms_J_per_mol: tuple[float, ...]
    sin_terms_J_per_mol: tuple[float, ...]
    replaces_cm1: float | None = None
    mode_assignment: str = "wavenumber"
    mode_overlap: float | None = None
    potential_source: str = "terms"
    points_deg: tuple[float, ...] = ()
    points_J_per_mol: tuple[float, ...] = ()
    fit_rms_J_per_mol: float | None = None
    fit_max_J_per_mol: float | None = None
    moment_definition: str = "given"

    @property
    def label(self) -> str:
        """``C1-O3`` style: the bond's atoms, 1-based (elements added by the species)."""
        return f"{self.bond_atoms[0] + 1}-{self.bond_atoms[1] + 1}"


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
    hindered_rotors: :class:`HinderedRotor` s, each replacing one real harmonic mode (default none).
    symmetry_given: which of :data:`SYMMETRY_FIELDS` were given (overrides); the others were
        detected from the geometry and masses, and a species file written from this record
        leaves them out, so that they are detected again (with the masses then in effect).
        Default: all given (a record built by hand states its values).
    rotation_group: name of the rotation group detected from the geometry ("C2", "D3", "T",
        "C∞", ...; "atom" for one atom), or None when not detected (symmetry number given).
    warnings: sentences from building the species (symmetry detection), for reports.
    conformers: the other conformers of this species, when it stands for a conformer ensemble
        (:mod:`tstrate.physics.ensembles`): each a Species of the same atoms, charge, multiplicity and
        kind, with an electronic energy and no conformers of its own. This species is the ensemble's
        representative (the study reader makes it the member of lowest ZPE-inclusive energy), and
        partition functions, thermochemistry and TST rates sum over it and its conformers, each with
        its own energy, symmetry number and optical isomers. Default none (one structure).
    conformer_label: the label of this structure among its ensemble's conformers (reports), or None.
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
    hindered_rotors: tuple[HinderedRotor, ...] = ()
    symmetry_given: tuple[str, ...] = SYMMETRY_FIELDS
    rotation_group: str | None = None
    warnings: tuple[str, ...] = ()
    conformers: tuple["Species", ...] = ()
    conformer_label: str | None = None

    def __post_init__(self):
        _validate_species(self)

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
        that no earlier rotor took (construction has checked that the match is within
        :data:`ROTOR_MATCH_CM1` and unique).
        """
        f = np.asarray(self.frequencies_cm1, dtype=float)
        free = [i for i in range(f.size) if f[i] > 0]
        taken = []
        for rotor in self.free_rotors + self.hindered_rotors:
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
        if not (self.free_rotors or self.hindered_rotors):
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
        return principal_moments(self.positions_A, self.masses_amu)

    def with_changes(self, **changes) -> "Species":
        """A copy with some fields replaced (records are immutable). A symmetry field changed
        here counts as given (an override), unless ``symmetry_given`` is changed too."""
        if "symmetry_given" not in changes:
            given = set(self.symmetry_given) | (set(changes) & set(SYMMETRY_FIELDS))
            changes["symmetry_given"] = tuple(f for f in SYMMETRY_FIELDS if f in given)
        if "symmetry_number" in changes and "rotation_group" not in changes:
            changes["rotation_group"] = None  # no longer the detected group's order
        return replace(self, **changes)


def check_geometry(symbols, positions_A, *, file=None, field="geometry"):
    """Known elements, N x 3 finite coordinates [Angstrom], no two nuclei closer than
    :data:`MIN_DISTANCE_A`. Returns (symbols tuple, positions array)."""
    from ase.data import atomic_numbers

    symbols = tuple(str(s) for s in symbols)
    n = len(symbols)
    if n == 0:
        raise InputError("no atoms", file=file, field=field)
    if n > MAX_ATOMS:
        raise InputError(f"{n} atoms; tstrate takes species of at most {MAX_ATOMS} atoms", file=file,
                         field=field)
    for i, s in enumerate(symbols):
        if s not in atomic_numbers or s == "X":
            raise InputError(f"unknown element {s!r} (atom {i + 1})", file=file, field=field)
    try:
        positions = np.array(positions_A, dtype=float).reshape(-1, 3)
    except (TypeError, ValueError):
        raise InputError("coordinates must be N x 3 numbers", file=file, field=field) from None
    if len(positions) != n:
        raise InputError(f"{n} symbols but {len(positions)} positions", file=file, field=field)
    if not np.all(np.isfinite(positions)):
        raise InputError("coordinates hold NaN or infinite values", file=file, field=field)
    if np.max(np.abs(positions)) > MAX_COORDINATE_A:
        raise InputError(f"a coordinate of {np.max(np.abs(positions)):.3g} Angstrom is beyond "
                         f"{MAX_COORDINATE_A:g} Angstrom", file=file, field=field,
                         hint="check the units (Angstrom expected)")
    if n > 1:
        i, j, d = closest_pair(positions)
        if d < MIN_DISTANCE_A:
            raise InputError(f"atoms {i + 1} and {j + 1} overlap ({d:.3f} Angstrom apart)", file=file,
                             field=field, hint="check the units (Angstrom expected)")
    return symbols, positions


#: largest accepted asymmetry of a Hessian, max |H - H^T| relative to max |H| (printed Hessians
#: agree with their transpose to the digits printed; one triangle given alone is off by order 1)
HESSIAN_ASYMMETRY_RTOL = 1.0e-3


def hessian_problem(hess) -> str | None:
    """What makes a square Cartesian Hessian unusable, in words, or None: non-finite values,
    all zeros, or an asymmetry beyond :data:`HESSIAN_ASYMMETRY_RTOL` (which is reported)."""
    h = np.asarray(hess, dtype=float)
    if not np.all(np.isfinite(h)):
        return "Hessian holds NaN or infinite values"
    scale = float(np.max(np.abs(h))) if h.size else 0.0
    if scale == 0.0:
        return "the Hessian is all zeros"
    asym = float(np.max(np.abs(h - h.T))) / scale
    if asym > HESSIAN_ASYMMETRY_RTOL:
        return (f"the Hessian is not symmetric: max |H - H^T| is {asym:.3g} of its largest element "
                f"(at most {HESSIAN_ASYMMETRY_RTOL:g} accepted); was only one triangle given?")
    return None


def _validate_species(sp: Species) -> None:
    """Check a species against what physics allows; store read-only copies of its arrays.

    Errors name the species-file key of the offending value and the file (``source``)."""
    file = sp.source

    def bad(field_name, problem, hint=None):
        return InputError(problem, file=file, field=field_name, hint=hint)

    def store(name, value):
        object.__setattr__(sp, name, value)

    from ase.data import atomic_numbers

    symbols, positions = check_geometry(sp.symbols, sp.positions_A, file=file)
    store("symbols", symbols)
    n = len(symbols)
    store("positions_A", read_only(positions))
    masses = np.array(sp.masses_amu, dtype=float).ravel()
    if masses.size != n or not np.all(np.isfinite(masses)) or np.any(masses <= 0):
        raise bad("masses_amu", f"expected {n} positive masses, got {masses.size}")
    store("masses_amu", read_only(masses))

    if sp.kind not in KINDS:
        raise bad("kind", f"unknown kind {sp.kind!r}", hint="use 'minimum' or 'transition_state'")
    if int(sp.multiplicity) != sp.multiplicity or int(sp.multiplicity) < 1:
        raise bad("multiplicity", "multiplicity must be 1 or more")
    if int(sp.charge) != sp.charge:
        raise bad("charge", f"charge must be an integer, got {sp.charge!r}")
    store("charge", int(sp.charge))
    store("multiplicity", int(sp.multiplicity))
    electrons = sum(atomic_numbers[s] for s in symbols) - sp.charge
    if electrons < 0:
        raise bad("charge", f"charge {sp.charge} leaves {electrons} electrons")
    if sp.multiplicity > electrons + 1:
        raise bad("multiplicity", f"multiplicity {sp.multiplicity} needs {sp.multiplicity - 1} unpaired "
                                  f"electrons, but the species has {electrons} electrons")
    if (electrons + sp.multiplicity) % 2 == 0:  # 2S+1 must be odd for an even electron count
        raise bad("multiplicity", f"multiplicity {sp.multiplicity} is impossible with {electrons} electrons",
                  hint="an even electron count needs an odd multiplicity (1, 3, ...) and vice versa")

    for key in ("energy_J_per_mol", "geometry_energy_J_per_mol"):
        value = getattr(sp, key)
        if value is not None:
            key_name = "energy" if key.startswith("geometry") else "single_point"
            if not math.isfinite(finite_or_nan(value)):
                raise bad(key_name, f"the energy must be a finite number, got {value!r}")
            if abs(value) > MAX_ABS_ENERGY_J_PER_MOL:
                raise bad(key_name, f"an electronic energy of {value / 1e3:.4g} kJ/mol is beyond any molecule's "
                                    f"({MAX_ABS_ENERGY_J_PER_MOL / 1e3:.3g} kJ/mol)",
                          hint="check the energy's value and unit")
            store(key, float(value))
    lo, hi = FREQUENCY_SCALE_RANGE
    if not lo <= finite_or_nan(sp.frequency_scale) <= hi:
        raise bad("frequency_scale", f"frequency scale factor {sp.frequency_scale!r} is outside {lo} to {hi}",
                  hint="published scale factors of harmonic wavenumbers lie between about 0.8 and 1.1")
    store("frequency_scale", float(sp.frequency_scale))

    freqs = np.array(sp.frequencies_cm1, dtype=float).ravel()
    if not np.all(np.isfinite(freqs)):
        raise bad("frequencies_cm1", "frequencies hold NaN or infinite values")
    linear = bool(sp.linear)
    store("linear", linear)
    nmodes = expected_mode_count(n, linear)
    if freqs.size != nmodes:
        shape = "atom" if n == 1 else ("linear" if linear else "nonlinear")
        raise bad("frequencies_cm1", f"{freqs.size} frequencies for a {shape} species of {n} atoms; "
                                     f"expected {nmodes}")
    imag = int(np.sum(freqs < 0))
    if sp.kind == "transition_state" and imag != 1:
        raise bad("frequencies_cm1", f"a transition state needs exactly one imaginary frequency, found {imag}",
                  hint="imaginary frequencies are written as negative numbers")
    if sp.kind == "minimum" and imag:
        raise bad("frequencies_cm1", f"a minimum with imaginary frequency {freqs.min():.1f} cm-1",
                  hint="set allow_imaginary_below_cm1 to tolerate small ones, or kind = 'transition_state'")
    if np.any(freqs == 0.0):
        raise bad("frequencies_cm1", "a vibrational wavenumber of exactly 0 cm-1 is not a vibration")
    store("frequencies_cm1", read_only(freqs))

    for key in ("symmetry_number", "optical_isomers"):
        value = getattr(sp, key)
        v = finite_or_nan(value)
        what = {"symmetry_number": "symmetry number", "optical_isomers": "number of optical isomers"}[key]
        if isinstance(value, bool) or not v >= 1 or v != int(v):
            raise bad(key, f"{what} must be 1 or more (an integer), got {value!r}")
        if v > MAX_SYMMETRY_NUMBER:
            raise bad(key, f"{what} {value!r} is above {MAX_SYMMETRY_NUMBER} (the icosahedral groups "
                           "give 60, the largest symmetry number of any point group)")
        store(key, int(value))

    levels = tuple(sp.electronic_levels)
    for lv in levels:
        if (not isinstance(lv, ElectronicLevel) or not finite_or_nan(lv.degeneracy) >= 1
                or not finite_or_nan(lv.energy_cm1) >= 0):
            raise bad("electronic_levels", "electronic levels need degeneracy >= 1 and energy >= 0")
        if lv.degeneracy > MAX_LEVEL_DEGENERACY or lv.energy_cm1 > MAX_LEVEL_ENERGY_CM1:
            raise bad("electronic_levels", f"an electronic level of degeneracy {lv.degeneracy!r} at "
                                           f"{lv.energy_cm1!r} cm-1 is beyond degeneracy "
                                           f"{MAX_LEVEL_DEGENERACY} or {MAX_LEVEL_ENERGY_CM1:g} cm-1")
    if levels and min(lv.energy_cm1 for lv in levels) != 0.0:
        raise bad("electronic_levels", "the lowest electronic level must be at 0 cm-1")
    store("electronic_levels", levels)

    if sp.hessian_J_per_m2 is not None:
        hess = np.array(sp.hessian_J_per_m2, dtype=float)
        if hess.shape != (3 * n, 3 * n):
            raise bad("hessian", f"the Hessian must be {3 * n} x {3 * n} for {n} atoms, got shape {hess.shape}")
        problem = hessian_problem(hess)
        if problem:
            raise bad("hessian", problem)
        store("hessian_J_per_m2", read_only(hess))

    if sp.lennard_jones is not None:
        lj = tuple(finite_or_nan(x) for x in sp.lennard_jones)
        if len(lj) != 2 or not (lj[0] > 0 and lj[1] > 0):
            raise bad("lennard_jones", "sigma_A and epsilon_K must be positive")
        if lj[0] > 30.0 or lj[1] > 1.0e4:
            raise bad("lennard_jones", f"sigma_A = {lj[0]:g} Angstrom, epsilon_K = {lj[1]:g} K are beyond "
                                       "any gas (sigma up to 30 Angstrom, epsilon/k_B up to 1e4 K accepted)")
        store("lennard_jones", lj)
    store("provenance", dict(sp.provenance or {}))
    given = tuple(sp.symmetry_given)
    unknown = [g for g in given if g not in SYMMETRY_FIELDS]
    if unknown:
        raise bad("symmetry_given", f"unknown fields {unknown}; choose among {list(SYMMETRY_FIELDS)}")
    store("symmetry_given", tuple(f for f in SYMMETRY_FIELDS if f in given))
    if sp.rotation_group is not None and not isinstance(sp.rotation_group, str):
        raise bad("rotation_group", f"the rotation group must be a name or None, got {sp.rotation_group!r}")
    warnings = tuple(sp.warnings)
    if not all(isinstance(w, str) for w in warnings):
        raise bad("warnings", "warnings must be sentences (strings)")
    store("warnings", warnings)
    store("free_rotors", _check_free_rotors(tuple(sp.free_rotors), freqs, bad))
    store("hindered_rotors", _check_hindered_rotors(tuple(sp.hindered_rotors), sp, freqs, bad))
    store("conformers", _check_conformers(sp, tuple(sp.conformers), bad))


def _check_conformers(sp: Species, conformers, bad) -> tuple[Species, ...]:
    """The members of a conformer ensemble must be Species of the same atoms (as a multiset),
    masses, charge, multiplicity and kind, with energies, labels and no ensembles of their own."""
    if not conformers:
        return ()
    if sp.energy_J_per_mol is None:
        raise bad("energy", f"species {sp.name!r} stands for a conformer ensemble and needs an energy")
    labels = [sp.conformer_label]
    for i, c in enumerate(conformers):
        key = f"conformers[{i}]"
        if not isinstance(c, Species):
            raise bad(key, f"expected a Species, got {type(c).__name__}")
        if c.conformers:
            raise bad(key, f"conformer {c.name!r} is itself an ensemble; give the members one level deep")
        where = f"conformer {c.name!r} of {sp.name!r}"
        if c.atom_counts != sp.atom_counts:
            raise bad(key, f"{where} has other atoms ({c.formula} against {sp.formula})")
        if sorted(np.round(c.masses_amu, 6)) != sorted(np.round(sp.masses_amu, 6)):
            raise bad(key, f"{where} has other masses (isotopes) than {sp.name!r}")
        for attr in ("charge", "multiplicity", "kind"):
            if getattr(c, attr) != getattr(sp, attr):
                raise bad(key, f"{where} has {attr} {getattr(c, attr)!r}, not {getattr(sp, attr)!r}")
        if c.energy_J_per_mol is None:
            raise InputError(f"{where} has no electronic energy; an ensemble weighs its conformers by "
                             "their energies", file=c.source, field="energy")
        labels.append(c.conformer_label)
    if any(lb is None for lb in labels) or len(set(labels)) != len(labels):
        raise bad("conformer_label", f"the conformers of {sp.name!r} need distinct labels, got {labels}")
    return conformers


def _check_free_rotors(free_rotors, freqs: np.ndarray, bad) -> tuple[FreeRotor, ...]:
    """Each rotor must match exactly one real mode (unscaled wavenumber) within ROTOR_MATCH_CM1,
    and no mode may be replaced twice; each comes back with ``replaces_cm1`` set to the
    wavenumber of the mode it matched."""
    used, out = {}, []
    real = np.flatnonzero(freqs > 0)
    for i, rotor in enumerate(free_rotors):
        key = f"free_rotors[{i}]"
        if not isinstance(rotor, FreeRotor):
            raise bad(key, f"expected a FreeRotor, got {type(rotor).__name__}")
        nu = finite_or_nan(rotor.replaces_cm1)
        if not nu > 0:
            raise bad(f"{key}.replaces_cm1", f"must be a positive wavenumber, got {rotor.replaces_cm1!r}")
        sigma = rotor.symmetry_number
        if isinstance(sigma, bool) or not finite_or_nan(sigma) >= 1 or int(sigma) != sigma:
            raise bad(f"{key}.symmetry_number", f"must be an integer of 1 or more, got {sigma!r}")
        if not finite_or_nan(rotor.reduced_moment_amu_A2) > 0:
            raise bad(f"{key}.reduced_moment_amu_A2", f"must be positive, got {rotor.reduced_moment_amu_A2!r}")
        dist = np.abs(freqs[real] - nu)
        hits = real[dist <= ROTOR_MATCH_CM1]
        if len(hits) != 1:
            nearest = ", ".join(f"{freqs[j]:.2f}" for j in real[np.argsort(dist)[:3]]) or "none"
            problem = (f"no real mode within {ROTOR_MATCH_CM1:g} cm-1 of {nu:g} cm-1" if not len(hits)
                       else f"{len(hits)} real modes lie within {ROTOR_MATCH_CM1:g} cm-1 of {nu:g} cm-1")
            hint = ("give the unscaled wavenumber of the mode the rotor replaces" if not len(hits) else
                    f"give a value within {ROTOR_MATCH_CM1:g} cm-1 of only the mode the rotor replaces")
            raise bad(f"{key}.replaces_cm1", f"{problem}; nearest modes: {nearest} cm-1", hint=hint)
        j = int(hits[0])
        if j in used:
            raise bad(f"{key}.replaces_cm1", f"the mode at {freqs[j]:.2f} cm-1 is already replaced by "
                      f"free_rotors[{used[j]}]", hint="each mode can be replaced once")
        used[j] = i
        out.append(FreeRotor(float(freqs[j]), int(sigma), float(rotor.reduced_moment_amu_A2)))
    return tuple(out)


def _check_hindered_rotors(rotors, sp: Species, freqs: np.ndarray, bad) -> tuple[HinderedRotor, ...]:
    """Atoms, symmetry number, moment and potential of each hindered rotor; each must replace one
    real mode (by ``replaces_cm1``, within ROTOR_MATCH_CM1) that no free rotor and no other
    hindered rotor replaces."""
    n = len(sp.symbols)
    real = np.flatnonzero(freqs > 0)
    taken = {}
    for i, fr in enumerate(sp.free_rotors):
        taken[int(real[np.argmin(np.abs(freqs[real] - fr.replaces_cm1))])] = f"free_rotors[{i}]"
    out = []
    for i, r in enumerate(rotors):
        key = f"hindered_rotors[{i}]"
        if not isinstance(r, HinderedRotor):
            raise bad(key, f"expected a HinderedRotor, got {type(r).__name__}")
        atoms = tuple(int(a) for a in r.bond_atoms)
        top = tuple(sorted(int(a) for a in r.top_atoms))
        if len(atoms) != 2 or atoms[0] == atoms[1] or not all(0 <= a < n for a in atoms):
            raise bad(f"{key}.bond_atoms", f"two different atoms of the {n} are needed, got "
                      f"{[a + 1 for a in r.bond_atoms]} (1-based)")
        if atoms[1] not in top or atoms[0] in top or not all(0 <= a < n for a in top) \
                or len(set(top)) != len(top):
            raise bad(f"{key}.top_atoms", "the top must hold the bond's second atom and not its first")
        sigma = r.symmetry_number
        if isinstance(sigma, bool) or not 1 <= finite_or_nan(sigma) <= MAX_ROTOR_SYMMETRY_NUMBER \
                or int(sigma) != sigma:
            raise bad(f"{key}.symmetry_number", f"must be an integer from 1 to {MAX_ROTOR_SYMMETRY_NUMBER}, "
                      f"got {sigma!r}")
        if not finite_or_nan(r.reduced_moment_amu_A2) > 0:
            raise bad(f"{key}.reduced_moment_amu_A2", f"must be positive, got {r.reduced_moment_amu_A2!r}")
        a = tuple(float(x) for x in r.cos_terms_J_per_mol)
        b = tuple(float(x) for x in r.sin_terms_J_per_mol) or tuple(0.0 for _ in a)
        if len(a) != len(b) or not all(math.isfinite(x) for x in a + b):
            raise bad(f"{key}.potential", "the Fourier terms must be finite numbers, as many sine as cosine terms")
        if sum(abs(x) for x in a + b) > MAX_TORSION_BARRIER_J_PER_MOL:
            raise bad(f"{key}.potential", f"a torsional potential spanning over "
                      f"{MAX_TORSION_BARRIER_J_PER_MOL / 1e3:g} kJ/mol is beyond any torsion",
                      hint="check the energies' unit")
        if r.mode_assignment not in MODE_ASSIGNMENTS:
            raise bad(f"{key}.mode_assignment", f"unknown {r.mode_assignment!r}; use one of {MODE_ASSIGNMENTS}")
        nu = finite_or_nan(r.replaces_cm1)
        if not nu > 0:
            raise bad(f"{key}.replaces_cm1", "the mode the rotor replaces is unknown",
                      hint="give replaces_cm1, or a [hessian] so that the mode is found by projection")
        dist = np.abs(freqs[real] - nu)
        hits = real[dist <= ROTOR_MATCH_CM1]
        if len(hits) != 1:
            nearest = ", ".join(f"{freqs[j]:.2f}" for j in real[np.argsort(dist)[:3]]) or "none"
            raise bad(f"{key}.replaces_cm1", f"{len(hits)} real modes within {ROTOR_MATCH_CM1:g} cm-1 of "
                      f"{nu:g} cm-1; nearest modes: {nearest} cm-1",
                      hint="give the unscaled wavenumber of exactly one mode")
        j = int(hits[0])
        if j in taken:
            raise bad(f"{key}.replaces_cm1", f"the mode at {freqs[j]:.2f} cm-1 is already replaced by "
                      f"{taken[j]}", hint="each mode can be replaced once")
        taken[j] = key
        out.append(replace(r, bond_atoms=atoms, top_atoms=top, symmetry_number=int(sigma),
                           reduced_moment_amu_A2=float(r.reduced_moment_amu_A2), cos_terms_J_per_mol=a,
                           sin_terms_J_per_mol=b, replaces_cm1=float(freqs[j]),
                           points_deg=tuple(float(x) for x in r.points_deg),
                           points_J_per_mol=tuple(float(x) for x in r.points_J_per_mol)))
    return tuple(out)


#: tunnelling corrections a channel can ask for (the one list; physics.tunnelling uses it)
TUNNELLING_MODELS = ("none", "wigner", "skodje-truhlar", "eckart")
#: where the tunnelling integral of a channel with a complex starts
TUNNELLING_FLOORS = ("reactants", "complex")


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
    product_complex: optional minimum between TS and products (a post-reaction complex); when
        given, the reverse barrier of the tunnelling model is measured from it instead of from
        the separated products. Rates and equilibrium constants still refer to the products.
    """

    name: str
    reactants: tuple[str, ...]
    transition_state: str
    products: tuple[str, ...]
    complex: str | None = None
    tunnelling: str = "none"
    degeneracy: float | None = None
    tunnelling_floor: str = "reactants"
    product_complex: str | None = None

    def __post_init__(self):
        def bad(key, problem, hint=None):
            return InputError(problem, field=key, hint=hint)

        if not isinstance(self.name, str) or not self.name:
            raise bad("name", "a channel needs a name")
        object.__setattr__(self, "reactants", tuple(self.reactants))
        object.__setattr__(self, "products", tuple(self.products))
        if not 1 <= len(self.reactants) <= 3:
            raise bad("reactants", f"{len(self.reactants)} reactants; channels take 1 to 3")
        if not self.products:
            raise bad("products", "a channel needs at least one product")
        if self.tunnelling not in TUNNELLING_MODELS:
            raise bad("tunnelling", f"unknown tunnelling model {self.tunnelling!r}",
                      hint="use one of " + ", ".join(TUNNELLING_MODELS))
        if self.degeneracy is not None:
            if not finite_or_nan(self.degeneracy) > 0:
                raise bad("degeneracy", "reaction-path degeneracy must be positive")
            if self.degeneracy > MAX_PATH_DEGENERACY:
                raise bad("degeneracy", f"reaction-path degeneracy {self.degeneracy:g} is above "
                                        f"{MAX_PATH_DEGENERACY} (equivalent paths of a small molecule)")
            object.__setattr__(self, "degeneracy", float(self.degeneracy))
        if self.tunnelling_floor not in TUNNELLING_FLOORS:
            raise bad("tunnelling_floor", f"unknown floor {self.tunnelling_floor!r}",
                      hint="use " + " or ".join(TUNNELLING_FLOORS))
        if self.product_complex is not None:
            if not isinstance(self.product_complex, str) or not self.product_complex:
                raise bad("product_complex", "the product complex must be a species name")
            if self.product_complex in (self.transition_state, self.complex):
                raise bad("product_complex", f"{self.product_complex!r} is already the channel's "
                          + ("transition state" if self.product_complex == self.transition_state
                             else "pre-reactive complex"),
                          hint="name the minimum reached downhill from the transition state")

    @property
    def order(self) -> int:
        """Molecularity of the overall channel (number of reactants)."""
        return len(self.reactants)
