"""Species files (TOML, tstrate's own format): read, validate, build, write.

Every key a species file may hold is listed, with its type, default, unit and meaning, in the
:class:`~tstrate.io.keys.Keys` tables of this module (:data:`SPECIES_FILE`); the user page
``docs/species-file.md`` is generated from them (``python -m tstrate.io.docs --write docs/``).

Free rotors: each ``replaces_cm1`` must lie within :data:`tstrate.model.species.ROTOR_MATCH_CM1` (1 cm^-1) of
exactly one real mode (tolerated small imaginary modes of a minimum count by their
magnitude; the imaginary mode of a transition state cannot be replaced), and no mode may be
replaced twice. The matched mode leaves the harmonic set everywhere (partition function,
zero-point energy, RRKM state counts); a classical 1-D free rotor takes its place and has
no zero-point energy (see :mod:`tstrate.physics.thermo`). ``replaces_cm1`` is stored as the
matched mode's wavenumber.
"""

from __future__ import annotations

import json
import logging
from dataclasses import dataclass
import math
import re
from pathlib import Path

import numpy as np

from tstrate.arrays import finite_or_nan
from tstrate.errors import InputError
from tstrate.geometry import DEFAULT_TOLERANCE_A, is_linear
from tstrate.io.keys import Key, Keys
from tstrate.io.tables import Table, energy_keys, load_toml
from tstrate.model.species import (KINDS, ROTOR_MATCH_CM1, ElectronicLevel, FreeRotor, HinderedRotor,
                                   Species, check_geometry)
from tstrate.physics import symmetry as sym
from tstrate.physics.vibrations import (HESSIAN_UNITS_J_PER_M2, default_masses_amu,
                                        isotope_mass_amu, vibrational_analysis)
from tstrate.units import CM1_J, HARTREE_J, N_A, energy_to_J_per_mol

log = logging.getLogger(__name__)

_BARE_KEY = re.compile(r"[A-Za-z0-9_-]+")

# ---- the keys of a species file --------------------------------------------------

SPECIES_KEYS = Keys((), "top level", "One species: a minimum or a transition state.", (
    Key("name", "string", "label of the species; a study's `[species]` name replaces it", required=True),
    Key("charge", "integer", "total charge", required=True, unit="e"),
    Key("multiplicity", "integer", "spin multiplicity 2S+1", required=True, unit="1"),
    Key("kind", "string", "`\"transition_state\"` for a saddle point (exactly one imaginary frequency)",
        default=KINDS[0], choices=KINDS),
    Key("geometry", "string", "Cartesian coordinates: inline lines `Symbol x y z`, or the path (relative to "
        "this file) of any geometry file ASE reads", required=True, unit="Angstrom"),
    Key("frequencies_cm1", "list of numbers", "harmonic wavenumbers, 3N-6 (3N-5 linear), unscaled; imaginary "
        "ones as negative numbers. With a `[hessian]` they are computed from it and a list given here is "
        "only checked for its length", required="one of `frequencies_cm1` / `[hessian]`", unit="cm-1"),
    Key("frequency_scale", "number", "factor applied to every wavenumber before use", default=1.0, unit="1"),
    Key("energy", "table", "electronic energy at the geometry's level, `{ value = ..., unit = \"...\" }` "
        "(table `energy` below); needed for barriers and reaction energies"),
    Key("single_point", "table", "a higher-level energy `{ value, unit, method }` (table `single_point` "
        "below) that replaces `energy` for barriers and reaction energies"),
    Key("symmetry_number", "integer", "external rotational symmetry number (an override: files written by "
        "tstrate hold it only when it was given)", default_text="detected from the geometry and masses (the "
        f"order of the rotation group found within {DEFAULT_TOLERANCE_A:g} Angstrom)", unit="1"),
    Key("optical_isomers", "integer", "number of optical isomers (2 for a chiral structure)",
        default_text="detected from the geometry", unit="1"),
    Key("linear", "true or false", "whether the species is linear", default_text="detected from the geometry"),
    Key("symmetry_confirmed_with_isotopes", "true or false", "keep a `symmetry_number` or `optical_isomers` "
        "given together with `isotopes`; without it that combination is an error, since substitution often "
        "lowers the symmetry (HDO, CH3D) and a value copied from the parent would be stale", default=False),
    Key("allow_imaginary_below_cm1", "number", "a minimum may have imaginary modes smaller than this; they "
        "are treated as real (with a warning). 0: any imaginary mode of a minimum is an error",
        default=0.0, unit="cm-1"),
    Key("accept_unusual_wavenumbers", "true or false", "accept harmonic wavenumbers outside 5 to 5000 cm-1 "
        "(imaginary 5i to 5000i), which are otherwise refused as a sign of a wrong or unfinished file",
        default=False),
    Key("isotopes", "table", "isotopes of single atoms, `{ 3 = 2 }` (table `isotopes` below); needs a "
        "`[hessian]`, from which the frequencies are recomputed"),
    Key("masses_amu", "list of numbers", "every atom's mass, in the order of `geometry`",
        default_text="the most common isotope of each element", unit="u"),
    Key("lennard_jones", "table", "collision parameters for falloff, `{ sigma_A = ..., epsilon_K = ... }` "
        "(table `lennard_jones` below)"),
    Key("electronic_levels", "array of tables", "the electronic levels, ground level included "
        "(`[[electronic_levels]]` below)",
        default_text="one level of degeneracy `multiplicity`"),
    Key("free_rotors", "array of tables", "free internal rotors in place of harmonic modes "
        "(`[[free_rotors]]` below)"),
    Key("hindered_rotors", "array of tables", "one-dimensional hindered internal rotors in place of harmonic "
        "modes (`[[hindered_rotors]]` below)"),
    Key("hessian", "table", "Cartesian Hessian (`[hessian]` below)", required="one of `frequencies_cm1` / "
        "`[hessian]`"),
    Key("provenance", "table", "free-form notes on where the data come from (`[provenance]` below)"),
))

ENERGY_KEYS = energy_keys(("energy",), "energy = { value, unit }",
                          "The electronic energy at the level of the geometry.")
SINGLE_POINT_KEYS = energy_keys(
    ("single_point",), "single_point = { value, unit, method }",
    "A higher-level single-point energy at the same geometry; barriers and reaction energies use it "
    "instead of `energy`.",
    Key("method", "string", "the level of theory, kept in the provenance as `single_point_method`"))
ISOTOPES_KEYS = Keys(("isotopes",), "isotopes = { ... }",
                     "Atoms made another isotope, by their 1-based number in `geometry`; the masses come "
                     "from RDKit's periodic table and the frequencies are recomputed from the `[hessian]`.",
                     any_key=Key("<atom number>", "integer", "mass number of that atom (`2` for deuterium "
                                 "on a hydrogen)", unit="1"))
LENNARD_JONES_KEYS = Keys(("lennard_jones",), "lennard_jones = { sigma_A, epsilon_K }",
                          "Lennard-Jones 12-6 parameters of the species, for collision rates in falloff.", (
                              Key("sigma_A", "number", "collision diameter sigma", required=True,
                                  unit="Angstrom"),
                              Key("epsilon_K", "number", "well depth epsilon / k_B", required=True, unit="K"),
                          ))
ELECTRONIC_LEVELS_KEYS = Keys(("electronic_levels", "[]"), "[[electronic_levels]]",
                              "One table per electronic level; the lowest must be at 0 cm-1.", (
                                  Key("energy_cm1", "number", "energy of the level above the ground level",
                                      required=True, unit="cm-1"),
                                  Key("degeneracy", "integer", "degeneracy of the level", required=True,
                                      unit="1"),
                              ))
FREE_ROTORS_KEYS = Keys(
    ("free_rotors", "[]"), "[[free_rotors]]",
    f"One table per free internal rotor. Each `replaces_cm1` must lie within {ROTOR_MATCH_CM1:g} cm-1 of "
    "exactly one real mode (tolerated small imaginary modes of a minimum count by their magnitude; the "
    "imaginary mode of a transition state cannot be replaced), and no mode may be replaced twice. The "
    "mode leaves the harmonic set everywhere (partition function, zero-point energy, RRKM state counts); "
    "a classical 1-D free rotor, without zero-point energy, takes its place.", (
        Key("replaces_cm1", "number", "the harmonic mode the rotor replaces, unscaled, as listed in "
            "`frequencies_cm1` or computed from the `[hessian]`", required=True, unit="cm-1"),
        Key("symmetry_number", "integer", "symmetry number of the rotor, at least 1 (3 for a methyl group)",
            required=True, unit="1"),
        Key("reduced_moment_amu_A2", "number", "reduced moment of inertia of the rotor",
            required="one of `reduced_moment_amu_A2` / `rotational_constant_cm1`", unit="u Angstrom^2"),
        Key("rotational_constant_cm1", "number", "rotational constant B = h / (8 pi^2 c I) of the rotor",
            required="one of `reduced_moment_amu_A2` / `rotational_constant_cm1`", unit="cm-1"),
    ))
#: energy units of hindered-rotor potential keys, by key suffix: J/mol per unit
ROTOR_ENERGY_SUFFIXES = {"kJ_per_mol": 1e3, "cm1": CM1_J * N_A, "hartree": HARTREE_J * N_A}
_ONE_POTENTIAL = ("one potential form: `angles_deg` with `energies_*`, or `barriers_*`, or `cos_terms_*` "
                  "(with optional `sin_terms_*`)")
HINDERED_ROTORS_KEYS = Keys(
    ("hindered_rotors", "[]"), "[[hindered_rotors]]",
    "One table per one-dimensional hindered rotor: the top (the atoms bonded beyond `bond_atoms[1]`, found "
    "from the connectivity) turns about the bond against the rest of the molecule. The torsion angle phi "
    "is 0 at the file's geometry and grows right-handed about the direction from the first atom to the "
    "second; the potential is a Fourier series, V(0) = 0, given by its coefficients or fitted to points "
    "(the fit's RMS and largest error are reported). The rotor's levels are the exact eigenvalues of the "
    "1-D Schrodinger equation in a free-rotor basis; they enter the partition function, the zero-point "
    "energy and RRKM / master-equation state counts, and each counts 1/symmetry_number. The rotor "
    "replaces one harmonic mode: the mode of largest overlap with the torsion among the normal modes "
    "of the `[hessian]` (projection), or the mode within "
    f"{ROTOR_MATCH_CM1:g} cm-1 of `replaces_cm1` (wavenumber match). Scans are written by `tstrate compute "
    "rotors`.", (
        Key("bond_atoms", "list of numbers", "the bond, `[frame atom, top atom]`, 1-based atom numbers of "
            "`geometry`", required=True, unit="1"),
        Key("symmetry_number", "integer", "symmetry number of the rotor",
            default_text="detected: the least common multiple of the folds of the top and of the rest of "
            "the molecule about the bond (the largest n of 6, 4, 3, 2 for which a turn by 360/n degrees maps "
            "the side onto itself, else 1): 3 for a methyl group or for methanol", unit="1"),
        Key("reduced_moment_amu_A2", "number", "reduced moment of inertia of the rotor",
            default_text="Pitzer's reduced moment from the geometry (zero overall linear and angular "
            "momentum)", unit="u Angstrom^2"),
        Key("replaces_cm1", "number", "the harmonic mode the rotor replaces, unscaled (wavenumber match)",
            default_text="by projection of the torsion onto the normal modes of the `[hessian]`", unit="cm-1"),
        Key("angles_deg", "list of numbers", "torsion angles of potential points, from the geometry",
            required=_ONE_POTENTIAL, unit="degree"),
        Key("energies_kJ_per_mol", "list of numbers", "energies of the points (any common zero)",
            required="with `angles_deg`: one of `energies_kJ_per_mol` / `energies_cm1` / `energies_hartree`",
            unit="kJ/mol"),
        Key("energies_cm1", "list of numbers", "energies of the points (any common zero)",
            required="with `angles_deg`: one of the `energies_*`", unit="cm-1"),
        Key("energies_hartree", "list of numbers", "energies of the points (any common zero)",
            required="with `angles_deg`: one of the `energies_*`", unit="hartree"),
        Key("fourier_terms", "integer", "harmonics fitted to the points (multiples of the symmetry number)",
            default_text="as many as the points allow, at most 6", unit="1"),
        Key("barriers_cm1", "list of numbers", "V_1, V_2, ... of V(phi) = sum_k (V_k / 2) (1 - cos k phi) "
            "(the tabulated form: `[0, 0, 1024]` is a threefold barrier of 1024 cm-1)",
            required=_ONE_POTENTIAL, unit="cm-1"),
        Key("barriers_kJ_per_mol", "list of numbers", "as `barriers_cm1`", required=_ONE_POTENTIAL,
            unit="kJ/mol"),
        Key("cos_terms_cm1", "list of numbers", "a_1, a_2, ... of V(phi) = sum_k [a_k cos k phi + b_k sin k "
            "phi] + constant", required=_ONE_POTENTIAL, unit="cm-1"),
        Key("sin_terms_cm1", "list of numbers", "b_1, b_2, ... of the same series", default_text="zeros",
            unit="cm-1"),
        Key("cos_terms_kJ_per_mol", "list of numbers", "as `cos_terms_cm1`", required=_ONE_POTENTIAL,
            unit="kJ/mol"),
        Key("sin_terms_kJ_per_mol", "list of numbers", "as `sin_terms_cm1`", default_text="zeros",
            unit="kJ/mol"),
    ))
HESSIAN_KEYS = Keys(("hessian",), "[hessian]",
                    "The Cartesian Hessian at the geometry; the frequencies are computed from it (mass "
                    "weighting, translations and rotations projected out).", (
                        Key("unit", "string", "the unit of `values`", required=True,
                            choices=tuple(HESSIAN_UNITS_J_PER_M2)),
                        Key("values", "list of numbers", "the 3N x 3N matrix, as a list of rows or one flat "
                            "list, in the order of `geometry` (x, y, z of each atom)", required=True,
                            unit="`unit`"),
                    ))
PROVENANCE_KEYS = Keys(("provenance",), "[provenance]",
                       "Free-form notes, kept with the species (the report lists `method`).",
                       any_key=Key("<any name>", "string", "a note: method, program, source, command, ..."))

#: every table of a species file, in the order the documentation lists them
SPECIES_FILE = (SPECIES_KEYS, ENERGY_KEYS, SINGLE_POINT_KEYS, ISOTOPES_KEYS, LENNARD_JONES_KEYS,
                ELECTRONIC_LEVELS_KEYS, FREE_ROTORS_KEYS, HINDERED_ROTORS_KEYS, HESSIAN_KEYS, PROVENANCE_KEYS)


# ---- geometry ---------------------------------------------------------------------

def parse_xyz_body(text: str, *, file=None, field="geometry") -> tuple[list[str], np.ndarray]:
    """Parse lines ``Symbol x y z`` [Angstrom]; blank lines are skipped."""
    symbols, coords = [], []
    for lineno, line in enumerate(text.strip().splitlines(), 1):
        parts = line.split()
        if not parts:
            continue
        if len(parts) != 4:
            raise InputError(f"line {lineno}: expected 'Symbol x y z', got {line.strip()!r}"[:200],
                             file=file, field=field)
        try:
            xyz = [float(p) for p in parts[1:]]
        except ValueError:
            raise InputError(f"line {lineno}: coordinates are not numbers: {line.strip()!r}"[:200],
                             file=file, field=field) from None
        symbols.append(parts[0])
        coords.append(xyz)
    if not symbols:
        raise InputError("no atoms", file=file, field=field)
    return symbols, np.array(coords, dtype=float)


def read_geometry(value: str, base: Path | None, *, file=None, field="geometry"):
    """Inline XYZ body (contains a line break) or a path to a file ASE reads."""
    if not value.strip():
        raise InputError("the geometry is empty", file=file, field=field,
                         hint="give lines 'Symbol x y z' in Angstrom or a geometry file")
    if "\n" in value.strip() or len(value.split()) == 4:
        return parse_xyz_body(value, file=file, field=field)
    path = Path(value)
    if base is not None and not path.is_absolute():
        path = base / path
    if not path.exists():
        raise InputError(f"geometry file {str(path)!r} does not exist", file=file, field=field)
    if path.is_dir():
        raise InputError(f"geometry {str(path)!r} is a folder, not a file", file=file, field=field)
    import ase.io

    try:
        atoms = ase.io.read(str(path))
    except Exception as exc:  # ASE raises many kinds for unreadable files
        raise InputError(f"ASE cannot read geometry file {str(path)!r}: {exc}"[:300],
                         file=file, field=field) from None
    return list(atoms.get_chemical_symbols()), np.array(atoms.positions, dtype=float)


# ---- building a species -----------------------------------------------------------

#: accepted harmonic wavenumbers [cm^-1]: real modes from the low to the high bound, imaginary ones
#: up to the third number (as magnitude); outside, a file is refused unless the user opts in
#: (``accept_unusual_wavenumbers``). Real molecules stay inside: the highest harmonic
#: wavenumber of any molecule is H2's 4401 cm-1; modes below 5 cm-1 are numerical noise or
#: translations and rotations left in the list.
WAVENUMBER_BOUNDS_CM1 = (5.0, 5000.0, 5000.0)


def check_wavenumber_bounds(freqs, allow_imaginary_below_cm1: float = 0.0, *, file=None,
                            field="frequencies_cm1") -> None:
    """Refuse wavenumbers [cm^-1] outside :data:`WAVENUMBER_BOUNDS_CM1` (imaginary ones negative);
    imaginary modes smaller than ``allow_imaginary_below_cm1`` (tolerated as real) are exempt."""
    lo, hi, imag_hi = WAVENUMBER_BOUNDS_CM1
    f = np.asarray(freqs, dtype=float)
    tolerated = (f < 0) & (-f <= allow_imaginary_below_cm1)
    real_bad = f[(f >= 0) & ((f < lo) | (f > hi))]
    imag_bad = f[(f < 0) & ~tolerated & ((-f > imag_hi) | (-f < lo))]
    if real_bad.size or imag_bad.size:
        shown = ", ".join(f"{abs(v):.4g}{'i' if v < 0 else ''}" for v in np.concatenate([real_bad, imag_bad])[:4])
        raise InputError(f"wavenumber(s) {shown} cm-1 outside the accepted {lo:g} to {hi:g} cm-1 "
                         f"(imaginary {lo:g}i to {imag_hi:g}i)", file=file, field=field,
                         hint="a mode of 0 cm-1 means a truncated or unfinished job; if the values are "
                              "right, set accept_unusual_wavenumbers = true (--accept-unusual-wavenumbers)")


#: a rotor's Fourier fit whose RMS error exceeds both of these is reported in the species' warnings
#: (our choice: 0.5 kJ/mol, and 5 % of the span of the points)
FIT_RMS_WARNING_J_PER_MOL = 500.0
FIT_RMS_WARNING_FRACTION = 0.05

#: name of the reduced-moment definition computed from the geometry (HinderedRotor.moment_definition)
PITZER_MOMENT = "Pitzer 1946 (zero overall linear and angular momentum)"


@dataclass(frozen=True)
class HinderedRotorInput:
    """A hindered rotor as a species file (or a caller) gives it, before the geometry, masses and
    normal modes fill in what is left out. 0-based ``bond_atoms``; energies in J/mol; angles in rad.

    potential: ("points", angles_rad, energies_J_per_mol, fourier_terms or None),
        ("barriers", V_k list) or ("terms", cos list, sin list).
    key: where errors point, e.g. ``hindered_rotors[0]``.
    """

    bond_atoms: tuple[int, int]
    potential: tuple
    symmetry_number: int | None = None
    reduced_moment_amu_A2: float | None = None
    replaces_cm1: float | None = None
    potential_source: str | None = None
    key: str = "hindered_rotors"


def resolve_hindered_rotor(spec: HinderedRotorInput, symbols, positions_A, masses_amu, normal_modes=None, *,
                           file=None, avoid_cm1=(), warnings: list | None = None,
                           allow_imaginary: bool = False) -> HinderedRotor:
    """A :class:`HinderedRotor` from ``spec``: the top from the connectivity, the symmetry number and
    Pitzer's reduced moment from the geometry unless given, the potential fitted or converted, and the
    mode it replaces by projection onto ``normal_modes`` (a :class:`~tstrate.physics.vibrations.NormalModes`)
    unless ``replaces_cm1`` is given. ``avoid_cm1``: wavenumbers of modes already replaced;
    ``allow_imaginary``: small imaginary modes of a minimum (tolerated as real) may be chosen."""
    from tstrate.geometry import bonds
    from tstrate.physics import rotors as rot
    from tstrate.physics import torsions

    key = spec.key
    n = len(symbols)

    def bad(sub, problem, hint=None):
        return InputError(problem, file=file, field=f"{key}.{sub}" if sub else key, hint=hint)

    frame, tip = (int(a) for a in spec.bond_atoms)
    if not (0 <= frame < n and 0 <= tip < n):
        raise bad("bond_atoms", f"atoms {frame + 1} and {tip + 1}: the geometry has {n} atoms")
    try:
        top = torsions.top_atoms(n, bonds(symbols, positions_A), frame, tip)
    except ValueError as exc:
        raise bad("bond_atoms", str(exc), hint="name two bonded atoms, frame atom first, on no ring") from None
    if torsions.top_moment_amu_A2(positions_A, masses_amu, frame, tip, top) < torsions.MIN_TOP_MOMENT_AMU_A2:
        raise bad("bond_atoms", f"the top beyond atom {tip + 1} has no moment about the bond (all its atoms "
                  "lie on the axis)")
    sigma = spec.symmetry_number
    if sigma is None:
        sigma = torsions.rotor_symmetry_number(symbols, positions_A, masses_amu, frame, tip, top)
    if spec.reduced_moment_amu_A2 is None:
        moment, definition = torsions.reduced_moment_amu_A2(positions_A, masses_amu, frame, tip, top), PITZER_MOMENT
    else:
        moment, definition = float(spec.reduced_moment_amu_A2), "given"
    form = spec.potential[0]
    points_deg, points_e, rms, worst = (), (), None, None
    try:
        if form == "points":
            _, angles, energies, terms = spec.potential
            fit = rot.fit_potential(angles, energies, symmetry_number=sigma, harmonics=terms)
            pot = fit.potential
            points_deg = tuple(np.rad2deg(fit.angles_rad))
            points_e = tuple(fit.energies_J_per_mol)
            rms, worst = fit.rms_J_per_mol, fit.max_abs_J_per_mol
            span = float(np.ptp(fit.energies_J_per_mol))
            if warnings is not None and rms > max(FIT_RMS_WARNING_J_PER_MOL, FIT_RMS_WARNING_FRACTION * span):
                warnings.append(f"{key}: the Fourier fit misses the points by {rms / 1e3:.3g} kJ/mol RMS (largest "
                                f"{worst / 1e3:.3g} kJ/mol, over a span of {span / 1e3:.3g} kJ/mol); more "
                                "fourier_terms or a smoother scan may be needed")
        elif form == "barriers":
            pot = rot.TorsionPotential.from_barriers(spec.potential[1])
        else:
            pot = rot.TorsionPotential(spec.potential[1], spec.potential[2])
    except ValueError as exc:
        raise bad("angles_deg" if form == "points" else None, str(exc)) from None
    if pot.minimum_J_per_mol < -1.0 and warnings is not None:
        warnings.append(f"{key}: the potential falls {-pot.minimum_J_per_mol / 1e3:.2f} kJ/mol below its value "
                        "at the geometry; the geometry is not at the rotor's lowest well (the rotor's "
                        "zero-point energy is measured from the geometry and comes out lower)")
    overlap = None
    if normal_modes is not None:
        nm_f = np.abs(np.asarray(normal_modes.frequencies_cm1, dtype=float))
        ov = torsions.mode_overlaps(positions_A, masses_amu, frame, tip, top, normal_modes.modes)
        usable = np.array([not any(abs(f - a) <= ROTOR_MATCH_CM1 for a in avoid_cm1) for f in nm_f])
        if not allow_imaginary:  # the reaction coordinate of a transition state is never a rotor
            usable &= np.asarray(normal_modes.frequencies_cm1) > 0
        best = int(np.argmax(np.where(usable, ov, -1.0)))
    if spec.replaces_cm1 is None:
        if normal_modes is None:
            raise bad("replaces_cm1", "the mode the rotor replaces is unknown",
                      hint="give replaces_cm1, or a [hessian] so that it is found by projection")
        replaces, assignment, overlap = float(nm_f[best]), "projection", float(ov[best])
    else:
        replaces, assignment = float(spec.replaces_cm1), "wavenumber"
        if normal_modes is not None:
            j = int(np.argmin(np.abs(nm_f - replaces)))
            overlap = float(ov[j])
            if j != best and warnings is not None:
                warnings.append(f"{key}: replaces_cm1 = {replaces:g} cm-1 names a mode of overlap {ov[j]:.2f} "
                                f"with the torsion; the mode at {nm_f[best]:.1f} cm-1 overlaps most ({ov[best]:.2f})")
    return HinderedRotor(bond_atoms=(frame, tip), top_atoms=top, symmetry_number=int(sigma),
                         reduced_moment_amu_A2=float(moment), cos_terms_J_per_mol=tuple(pot.cos_J_per_mol),
                         sin_terms_J_per_mol=tuple(pot.sin_J_per_mol), replaces_cm1=replaces,
                         mode_assignment=assignment, mode_overlap=overlap,
                         potential_source=spec.potential_source or form, points_deg=points_deg,
                         points_J_per_mol=points_e, fit_rms_J_per_mol=rms, fit_max_J_per_mol=worst,
                         moment_definition=definition)


def build_species(name: str, symbols, positions_A, *, charge: int = 0, multiplicity: int = 1,
                  kind: str = "minimum", frequencies_cm1=None, hessian_J_per_m2=None,
                  energy_J_per_mol: float | None = None, geometry_energy_J_per_mol: float | None = None,
                  frequency_scale: float = 1.0, symmetry_number: int | None = None,
                  optical_isomers: int | None = None, linear: bool | None = None,
                  masses_amu=None, isotopes: dict[int, int] | None = None,
                  electronic_levels=(), allow_imaginary_below_cm1: float = 0.0,
                  lennard_jones=None, provenance: dict | None = None, source: str | None = None,
                  symmetry_tolerance_A: float = DEFAULT_TOLERANCE_A, free_rotors=(), hindered_rotors=(),
                  symmetry_confirmed_with_isotopes: bool = False,
                  accept_unusual_wavenumbers: bool = False) -> Species:
    """Validate inputs and build a :class:`Species` (the one path from files and from Python).

    ``isotopes`` maps 0-based atom indices to mass numbers. When a Hessian is
    given the frequencies are computed from it with the final masses; when both
    are given the listed frequencies are only checked for count. ``free_rotors``
    are :class:`~tstrate.model.FreeRotor` s; each must match one real mode (see the
    module docstring). ``hindered_rotors`` are :class:`~tstrate.model.HinderedRotor` s or
    :class:`HinderedRotorInput` s, resolved here with the final masses and the Hessian's normal modes
    (:func:`resolve_hindered_rotor`).

    ``symmetry_number``, ``optical_isomers`` and ``linear`` left None are detected from the
    geometry and the final masses (:func:`tstrate.physics.symmetry.rotational_symmetry`); the
    species records which were given (``Species.symmetry_given``). A given symmetry number or
    number of optical isomers together with ``isotopes`` is an error unless
    ``symmetry_confirmed_with_isotopes``: substitution often lowers the symmetry (HDO, CH3D),
    and a value copied from the parent's file would be silently stale.
    """
    file = source
    symbols, positions = check_geometry(symbols, positions_A, file=file)
    symbols = list(symbols)
    masses = (default_masses_amu(symbols) if masses_amu is None
              else np.array(masses_amu, dtype=float))
    for idx, mass_number in (isotopes or {}).items():
        if not 0 <= idx < len(symbols):
            raise InputError(f"atom {idx + 1} does not exist ({len(symbols)} atoms)", file=file,
                             field="isotopes")
        try:
            masses[idx] = isotope_mass_amu(symbols[idx], mass_number)
        except InputError as exc:
            raise exc.located(file=file, field="isotopes") from None
    if not (finite_or_nan(allow_imaginary_below_cm1) >= 0):
        raise InputError("allow_imaginary_below_cm1 must be a non-negative wavenumber", file=file,
                         field="allow_imaginary_below_cm1")

    is_lin = is_linear(positions, masses, symmetry_tolerance_A) if linear is None else bool(linear)
    nm = None
    if hessian_J_per_m2 is not None:
        try:
            nm = vibrational_analysis(hessian_J_per_m2, positions, masses, is_lin)
        except InputError as exc:
            raise exc.located(file=file, field="hessian") from None
        computed = nm.frequencies_cm1
        if frequencies_cm1 is not None and len(frequencies_cm1) != len(computed):
            raise InputError(f"{len(frequencies_cm1)} frequencies listed but the Hessian gives "
                             f"{len(computed)}", file=file, field="frequencies_cm1")
        freqs = computed
    elif frequencies_cm1 is not None:
        if isotopes:
            raise InputError("isotopes need a Hessian to recompute the frequencies", file=file,
                             field="isotopes", hint="add a [hessian] table")
        freqs = np.array(frequencies_cm1, dtype=float)
    else:
        raise InputError("give frequencies_cm1 or a [hessian]", file=file, field="frequencies_cm1")
    freqs = np.sort(freqs)

    if not accept_unusual_wavenumbers:
        check_wavenumber_bounds(freqs, allow_imaginary_below_cm1, file=file,
                                field="hessian" if hessian_J_per_m2 is not None else "frequencies_cm1")
    imag = freqs[freqs < 0]
    if kind == "minimum" and len(imag) and np.all(-imag <= allow_imaginary_below_cm1):
        log.warning("%s: %d small imaginary frequencies treated as real", name, len(imag))
        freqs = np.sort(np.abs(freqs))

    given = tuple(k for k, v in (("symmetry_number", symmetry_number), ("optical_isomers", optical_isomers),
                                 ("linear", linear)) if v is not None)
    detected = sym.rotational_symmetry(symbols, positions, masses, symmetry_tolerance_A)
    warnings = list(detected.warnings)
    detected_isomers = (sym.optical_isomers(symbols, positions, masses, symmetry_tolerance_A)
                        if optical_isomers is None or isotopes else None)
    if isotopes and not symmetry_confirmed_with_isotopes:
        for key, value, found in (("symmetry_number", symmetry_number, detected.symmetry_number),
                                  ("optical_isomers", optical_isomers, detected_isomers)):
            if value is not None:
                raise InputError(
                    f"{key} = {value} is given together with isotopes; the isotopologue may have another "
                    f"value (its geometry and masses give {found})", file=file, field=key,
                    hint=f"remove {key} to detect it, or set symmetry_confirmed_with_isotopes = true "
                         "to keep the value given")
    if symmetry_number is None:
        symmetry_number = detected.symmetry_number
    elif symmetry_number != detected.symmetry_number:
        warnings.append(f"symmetry_number = {symmetry_number} is given; the geometry gives "
                        f"{detected.symmetry_number} (rotation group {detected.group} within "
                        f"{detected.tolerance_A:g} Angstrom)")
    if optical_isomers is None:
        optical_isomers = detected_isomers
    resolved = []
    avoid = [r.replaces_cm1 for r in free_rotors]
    for r in hindered_rotors:
        if isinstance(r, HinderedRotorInput):
            r = resolve_hindered_rotor(r, symbols, positions, masses, nm, file=file, avoid_cm1=avoid,
                                       warnings=warnings, allow_imaginary=kind == "minimum")
        avoid.append(r.replaces_cm1)
        resolved.append(r)
    for w in warnings:
        log.warning("%s: %s", name, w)

    # every check of the values themselves runs in Species' construction
    return Species(
        name=name, symbols=tuple(symbols), positions_A=positions, masses_amu=masses,
        charge=charge, multiplicity=multiplicity,
        energy_J_per_mol=energy_J_per_mol, frequencies_cm1=freqs, frequency_scale=frequency_scale,
        kind=kind, symmetry_number=symmetry_number, optical_isomers=optical_isomers,
        linear=is_lin, electronic_levels=tuple(electronic_levels), hessian_J_per_m2=hessian_J_per_m2,
        geometry_energy_J_per_mol=geometry_energy_J_per_mol, provenance=dict(provenance or {}),
        source=source, lennard_jones=lennard_jones, free_rotors=tuple(free_rotors),
        hindered_rotors=tuple(resolved), symmetry_given=given, rotation_group=None if "symmetry_number" in given else detected.group,
        warnings=tuple(warnings),
    )


def species_from_atoms(atoms, name: str | None = None, **kwargs) -> Species:
    """Build a species from an ASE ``Atoms`` (its masses are kept; other fields as keywords)."""
    kwargs.setdefault("masses_amu", atoms.get_masses())
    return build_species(name or atoms.get_chemical_formula(), atoms.get_chemical_symbols(),
                         atoms.positions, **kwargs)


# ---- reading ----------------------------------------------------------------------

def read_species(path: str | Path, *, name: str | None = None) -> Species:
    """Read and validate one species file. ``name`` overrides the file's ``name``."""
    path = Path(path)
    file = str(path)
    t = Table(load_toml(path), file)
    if not t.data:
        raise InputError("the file holds no keys (empty?)", file=file, hint="a species file needs name, charge, "
                         "multiplicity, geometry and frequencies_cm1 or a [hessian]")
    if "name" not in t and ("species" in t or "channel" in t):
        raise InputError("this is a study file, not a species file", file=file,
                         hint="give the species files it names, or the study to tstrate rates/run")
    fname = t.get("name", str)
    symbols, positions = read_geometry(t.get("geometry", str), path.parent, file=file)

    energy = t.quantity("energy", energy_to_J_per_mol, None, keys=ENERGY_KEYS)
    single = None
    if "single_point" in t:
        sp = t.table("single_point")
        single = energy_to_J_per_mol(sp.get("value", float), sp.get("unit", str), file=file,
                                     field="single_point.unit")
        method = sp.get("method", str, SINGLE_POINT_KEYS.default("method"))
        sp.reject_unknown(SINGLE_POINT_KEYS)
    else:
        method = None

    hess = None
    if "hessian" in t:
        ht = t.table("hessian")
        unit = ht.get("unit", str)
        if unit not in HESSIAN_UNITS_J_PER_M2:
            raise ht.error("unit", f"unknown Hessian unit {unit!r}",
                           hint="use one of " + ", ".join(HESSIAN_UNITS_J_PER_M2))
        raw = ht.get("values", list)
        try:
            arr = np.array(raw, dtype=float)
        except (TypeError, ValueError):
            raise ht.error("values", "Hessian values must be numbers in a flat or nested list") from None
        n3 = 3 * len(symbols)
        if arr.size != n3 * n3:
            raise ht.error("values", f"Hessian has {arr.size} values; {len(symbols)} atoms need "
                           f"{n3} x {n3} = {n3 * n3}")
        if not np.all(np.isfinite(arr)):
            raise ht.error("values", "Hessian holds NaN or infinite values")
        hess = arr.reshape(n3, n3) * HESSIAN_UNITS_J_PER_M2[unit]
        ht.reject_unknown(HESSIAN_KEYS)

    isotopes = {}
    if "isotopes" in t:
        it = t.table("isotopes")
        for key in list(it.data):
            try:
                idx = int(key) - 1
            except ValueError:
                raise it.error(key, "isotope keys are 1-based atom numbers") from None
            isotopes[idx] = it.get(key, int)
        it.reject_unknown(ISOTOPES_KEYS)

    levels = []
    for lt in t.tables("electronic_levels"):
        levels.append(ElectronicLevel(lt.get("energy_cm1", float), lt.get("degeneracy", int)))
        lt.reject_unknown(ELECTRONIC_LEVELS_KEYS)

    rotors = []
    for rt in t.tables("free_rotors"):
        replaces = rt.get("replaces_cm1", float)
        sigma = rt.get("symmetry_number", int)
        given = [k for k in ("reduced_moment_amu_A2", "rotational_constant_cm1") if k in rt]
        if len(given) != 1:
            raise rt.error(given[1] if given else None,
                           "give one of reduced_moment_amu_A2 and rotational_constant_cm1"
                           + (" (not both)" if given else ""))
        value = rt.get(given[0], float)
        if not value > 0:
            raise rt.error(given[0], f"must be positive, got {value!r}")
        rt.reject_unknown(FREE_ROTORS_KEYS)
        rotors.append(FreeRotor(replaces, sigma, value) if given[0] == "reduced_moment_amu_A2"
                      else FreeRotor.from_rotational_constant(replaces, sigma, value))

    hindered = [_hindered_rotor_input(rt, len(symbols)) for rt in t.tables("hindered_rotors")]

    lj = None
    if "lennard_jones" in t:
        lt = t.table("lennard_jones")
        lj = (lt.get("sigma_A", float), lt.get("epsilon_K", float))
        if lj[0] <= 0 or lj[1] <= 0:
            raise lt.error(None, "sigma_A and epsilon_K must be positive")
        lt.reject_unknown(LENNARD_JONES_KEYS)

    provenance = {}
    if "provenance" in t:
        pt = t.table("provenance")
        pt.reject_unknown(PROVENANCE_KEYS)
        provenance = {k: str(v) for k, v in pt.data.items()}
    if method:
        provenance.setdefault("single_point_method", method)

    freqs = t.number_list("frequencies_cm1", None)
    masses = t.number_list("masses_amu", None)
    if masses is not None and (len(masses) != len(symbols) or min(masses) <= 0):
        raise t.error("masses_amu", f"expected {len(symbols)} positive masses, got {len(masses)}")
    linear = t.get("linear", bool, None)
    confirmed = t.get("symmetry_confirmed_with_isotopes", bool,
                      SPECIES_KEYS.default("symmetry_confirmed_with_isotopes"))
    t.reject_unknown(SPECIES_KEYS)
    return build_species(
        name or fname, symbols, positions,
        charge=t.get("charge", int), multiplicity=t.get("multiplicity", int),
        kind=t.get("kind", str, SPECIES_KEYS.default("kind")), frequencies_cm1=freqs, hessian_J_per_m2=hess,
        energy_J_per_mol=single if single is not None else energy,
        geometry_energy_J_per_mol=energy,
        frequency_scale=t.get("frequency_scale", float, SPECIES_KEYS.default("frequency_scale")),
        symmetry_number=t.get("symmetry_number", int, None),
        optical_isomers=t.get("optical_isomers", int, None), linear=linear,
        masses_amu=masses, isotopes=isotopes, electronic_levels=levels,
        allow_imaginary_below_cm1=t.get("allow_imaginary_below_cm1", float,
                                        SPECIES_KEYS.default("allow_imaginary_below_cm1")),
        lennard_jones=lj, provenance=provenance, source=file, free_rotors=rotors, hindered_rotors=hindered,
        symmetry_confirmed_with_isotopes=confirmed,
        accept_unusual_wavenumbers=t.get("accept_unusual_wavenumbers", bool,
                                         SPECIES_KEYS.default("accept_unusual_wavenumbers")),
    )


def _suffixed(rt: Table, stem: str):
    """(values in J/mol, key) of the one ``stem_<unit>`` key given, or (None, None)."""
    given = [f"{stem}_{u}" for u in ROTOR_ENERGY_SUFFIXES if f"{stem}_{u}" in rt and f"{stem}_{u}" in HINDERED_ROTORS_KEYS]
    if len(given) > 1:
        raise rt.error(given[1], f"give one of {', '.join(given)}, not several")
    if not given:
        return None, None
    unit = given[0][len(stem) + 1:]
    return [v * ROTOR_ENERGY_SUFFIXES[unit] for v in rt.number_list(given[0], min_length=1)], given[0]


def _hindered_rotor_input(rt: Table, natoms: int) -> HinderedRotorInput:
    atoms = rt.number_list("bond_atoms")
    if len(atoms) != 2 or any(a != int(a) or not 1 <= a <= natoms for a in atoms) or atoms[0] == atoms[1]:
        raise rt.error("bond_atoms", f"expected two different atom numbers from 1 to {natoms}, got {atoms}")
    sigma = rt.get("symmetry_number", int, None)
    if sigma is not None and not 1 <= sigma <= 12:
        raise rt.error("symmetry_number", f"must be from 1 to 12, got {sigma}")
    moment = rt.get("reduced_moment_amu_A2", float, None)
    if moment is not None and not moment > 0:
        raise rt.error("reduced_moment_amu_A2", f"must be positive, got {moment!r}")
    replaces = rt.get("replaces_cm1", float, None)
    if replaces is not None and not replaces > 0:
        raise rt.error("replaces_cm1", f"must be a positive wavenumber, got {replaces!r}")
    energies, e_key = _suffixed(rt, "energies")
    barriers, b_key = _suffixed(rt, "barriers")
    cos, c_key = _suffixed(rt, "cos_terms")
    sin, s_key = _suffixed(rt, "sin_terms")
    forms = [k for k in (e_key or ("angles_deg" if "angles_deg" in rt else None), b_key, c_key) if k]
    if len(forms) != 1:
        raise rt.error(forms[1] if forms else None, "give " + _ONE_POTENTIAL
                       + (f", not {' and '.join(forms)}" if forms else ""))
    if s_key and not c_key:
        raise rt.error(s_key, f"{s_key} goes with a cos_terms_* key")
    terms = rt.get("fourier_terms", int, None)
    if terms is not None and not e_key:
        raise rt.error("fourier_terms", "fourier_terms goes with points (angles_deg and energies_*)")
    if e_key or "angles_deg" in rt:
        angles = rt.number_list("angles_deg")
        if energies is None:
            raise rt.error("angles_deg", "the points need energies: energies_kJ_per_mol, energies_cm1 or "
                           "energies_hartree")
        if len(angles) != len(energies):
            raise rt.error(e_key, f"{len(energies)} energies for {len(angles)} angles")
        potential = ("points", np.deg2rad(angles), np.asarray(energies), terms)
    elif b_key:
        potential = ("barriers", barriers)
    else:
        sin = sin if sin is not None else [0.0] * len(cos)
        if len(sin) != len(cos):
            raise rt.error(s_key, f"{len(sin)} sine terms for {len(cos)} cosine terms")
        potential = ("terms", cos, sin)
    rt.reject_unknown(HINDERED_ROTORS_KEYS)
    return HinderedRotorInput((int(atoms[0]) - 1, int(atoms[1]) - 1), potential, sigma, moment, replaces,
                              key=rt.prefix)


# ---- writing ----------------------------------------------------------------------

def _toml_str(s: str) -> str:
    # JSON string escapes (\\ \" \n \t \uXXXX for control characters) are valid TOML
    return json.dumps(str(s), ensure_ascii=False)


def _toml_num(x) -> str:
    """A float as TOML (numpy scalars would print as np.float64(...))."""
    return repr(float(x))


def _toml_key(k: str) -> str:
    return k if _BARE_KEY.fullmatch(k) else _toml_str(k)


def species_to_toml(species: Species, *, include_hessian: bool = True,
                    energy_unit: str = "hartree") -> str:
    """A species file's text for ``species`` (energies written in ``energy_unit``)."""
    from tstrate.units import energy_from_J_per_mol

    lines = [f"name = {_toml_str(species.name)}", f"charge = {species.charge}",
             f"multiplicity = {species.multiplicity}", f"kind = {_toml_str(species.kind)}",
             "geometry = '''"]
    lines += [f"{s:<2} {x:14.8f} {y:14.8f} {z:14.8f}" for s, (x, y, z) in
              zip(species.symbols, species.positions_A)]
    lines.append("'''")
    lines.append("frequencies_cm1 = [" + ", ".join(_toml_num(f) for f in species.frequencies_cm1)
                 + "]")
    if species.frequency_scale != 1.0:
        lines.append(f"frequency_scale = {_toml_num(species.frequency_scale)}")
    geo_e = species.geometry_energy_J_per_mol
    if geo_e is None:
        geo_e = species.energy_J_per_mol
    if geo_e is not None:
        lines.append(f"energy = {{ value = {_toml_num(energy_from_J_per_mol(geo_e, energy_unit))}, "
                     f"unit = {_toml_str(energy_unit)} }}")
    if (species.energy_J_per_mol is not None and species.geometry_energy_J_per_mol is not None
            and species.energy_J_per_mol != species.geometry_energy_J_per_mol):
        method = species.provenance.get("single_point_method")
        lines.append(f"single_point = {{ value = "
                     f"{_toml_num(energy_from_J_per_mol(species.energy_J_per_mol, energy_unit))}, "
                     f"unit = {_toml_str(energy_unit)}"
                     + (f", method = {_toml_str(method)}" if method else "") + " }")
    if not np.allclose(species.masses_amu, default_masses_amu(species.symbols), rtol=0, atol=1e-6):
        lines.append("masses_amu = [" + ", ".join(_toml_num(m) for m in species.masses_amu) + "]")
    # only values given as overrides: detected ones are detected again when the file is read
    if "symmetry_number" in species.symmetry_given:
        lines.append(f"symmetry_number = {species.symmetry_number}")
    if "optical_isomers" in species.symmetry_given:
        lines.append(f"optical_isomers = {species.optical_isomers}")
    if "linear" in species.symmetry_given:
        lines.append(f"linear = {'true' if species.linear else 'false'}")
    if include_hessian and species.hessian_J_per_m2 is not None and species.kind == "minimum":
        # small imaginary modes tolerated when the species was built come back from the Hessian
        from tstrate.physics.vibrations import vibrational_analysis

        nm = vibrational_analysis(species.hessian_J_per_m2, species.positions_A, species.masses_amu,
                                  species.linear)
        if nm.imaginary_count:
            worst = float(-nm.frequencies_cm1.min())
            lines.append(f"allow_imaginary_below_cm1 = {math.floor(worst * 10) / 10 + 0.1:.1f}")
    try:
        check_wavenumber_bounds(species.frequencies_cm1, float("inf"))
    except InputError:  # the species was built with the bounds lifted: the file says so again
        lines.append("accept_unusual_wavenumbers = true")
    if species.lennard_jones:
        lines.append(f"lennard_jones = {{ sigma_A = {_toml_num(species.lennard_jones[0])}, "
                     f"epsilon_K = {_toml_num(species.lennard_jones[1])} }}")
    for lv in species.electronic_levels:
        lines += ["", "[[electronic_levels]]", f"energy_cm1 = {_toml_num(lv.energy_cm1)}",
                  f"degeneracy = {lv.degeneracy}"]
    for rotor in species.free_rotors:
        lines += ["", "[[free_rotors]]", f"replaces_cm1 = {_toml_num(rotor.replaces_cm1)}",
                  f"symmetry_number = {rotor.symmetry_number}",
                  f"reduced_moment_amu_A2 = {_toml_num(rotor.reduced_moment_amu_A2)}"]
    cm1 = CM1_J * N_A
    with_hessian = include_hessian and species.hessian_J_per_m2 is not None
    for r in species.hindered_rotors:
        lines += ["", "[[hindered_rotors]]", f"bond_atoms = [{r.bond_atoms[0] + 1}, {r.bond_atoms[1] + 1}]",
                  f"symmetry_number = {r.symmetry_number}"]
        if r.moment_definition == "given":
            lines.append(f"reduced_moment_amu_A2 = {_toml_num(r.reduced_moment_amu_A2)}")
        if r.mode_assignment == "wavenumber" or not with_hessian:
            lines.append(f"replaces_cm1 = {_toml_num(r.replaces_cm1)}")
        if r.points_deg:
            lines.append("angles_deg = [" + ", ".join(_toml_num(a) for a in r.points_deg) + "]")
            lines.append("energies_kJ_per_mol = [" + ", ".join(_toml_num(e / 1e3) for e in r.points_J_per_mol)
                         + "]")
            lines.append(f"fourier_terms = {len(r.cos_terms_J_per_mol) // r.symmetry_number}")
        else:
            lines.append("cos_terms_cm1 = [" + ", ".join(_toml_num(a / cm1) for a in r.cos_terms_J_per_mol) + "]")
            lines.append("sin_terms_cm1 = [" + ", ".join(_toml_num(b / cm1) for b in r.sin_terms_J_per_mol) + "]")
    if species.provenance:
        lines += ["", "[provenance]"]
        lines += [f"{_toml_key(k)} = {_toml_str(str(v))}" for k, v in species.provenance.items()]
    if include_hessian and species.hessian_J_per_m2 is not None:
        h = species.hessian_J_per_m2 / HESSIAN_UNITS_J_PER_M2["hartree/bohr2"]
        lines += ["", "[hessian]", 'unit = "hartree/bohr2"', "values = ["]
        lines += ["  [" + ", ".join(f"{v:.10e}" for v in row) + "]," for row in h]
        lines.append("]")
    return "\n".join(lines) + "\n"


def write_species(species: Species, path: str | Path, *, overwrite: bool = False, **kwargs) -> Path:
    """Write a species file atomically; refuses to replace an existing file unless ``overwrite``."""
    from tstrate.io.files import atomic_write_text

    path = Path(path)
    if path.exists() and not overwrite:
        raise InputError("file exists; refusing to overwrite it", file=str(path),
                         hint="choose another name or pass overwrite")
    atomic_write_text(path, species_to_toml(species, **kwargs))
    return path
