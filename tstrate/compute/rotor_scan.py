"""Torsional scans by the semi-empirical route (GFN2-xTB through tblite and ASE), for hindered rotors.

For each rotatable bond of a species (:func:`tstrate.physics.torsions.find_torsions`, or the bonds
asked for) the top is turned about the bond over one period, 360/sigma degrees, in equal steps:

- **rigid** scan: the top is turned as a rigid body (Rodrigues' rotation); one single point per angle;
- **relaxed** scan (minima only: a transition state would be minimised off its saddle): at each angle the dihedral (a frame neighbour, the bond, a top atom) is held by
  ASE's ``FixInternals`` and every other coordinate is minimised with BFGS, each angle starting
  from the relaxed geometry of the previous one.

The points go into the species as ``[[hindered_rotors]]`` with the potential fitted as a Fourier
series (its error reported), the reduced moment by Pitzer's definition from the geometry, and the
harmonic mode replaced found by projection onto the normal modes of the species' Hessian. A
relaxed scan that falls below the starting energy by more than a few tenths of a kJ/mol means the
species' geometry is not the lowest conformer along that torsion; the species file keeps the
warning. Scans are not cached (a scan of a small molecule takes seconds).
"""

from __future__ import annotations

import logging
from dataclasses import dataclass

import numpy as np

from tstrate.compute.engine import Settings, energy_J_per_mol, with_calculator
from tstrate.errors import InputError
from tstrate.model import Species
from tstrate.physics import torsions

log = logging.getLogger(__name__)

#: default scan step [degree] (common practice: 10-30 degree steps for torsional scans)
DEFAULT_STEP_DEG = 15.0
#: force criterion of the constrained minimisations of a relaxed scan [eV/Angstrom]
RELAXED_FMAX_EV_PER_A = 0.01
#: step limit of each constrained minimisation
RELAXED_MAX_STEPS = 300


@dataclass(frozen=True)
class TorsionScan:
    """One scan: the bond (frame, top atom, 0-based), its top and symmetry number, the angles
    [degree] from the starting geometry, the energies [J/mol] and geometries [Angstrom] at them,
    and how it was made."""

    torsion: torsions.Torsion
    angles_deg: np.ndarray
    energies_J_per_mol: np.ndarray
    relaxed: bool
    method: str
    geometries_A: np.ndarray


def _dihedral_atoms(symbols, positions_A, torsion: torsions.Torsion):
    from tstrate.geometry import bonds

    nb = torsions.neighbours(len(symbols), bonds(symbols, positions_A))
    x = np.asarray(positions_A)
    u = x[torsion.top_atom] - x[torsion.frame_atom]
    u = u / np.linalg.norm(u)

    def off_axis(a, centre):
        r = x[a] - x[centre]
        return np.linalg.norm(r - (r @ u) * u)

    a = max((b for b in nb[torsion.frame_atom] if b != torsion.top_atom), key=lambda b: off_axis(b, torsion.frame_atom))
    d = max((b for b in nb[torsion.top_atom] if b != torsion.frame_atom), key=lambda b: off_axis(b, torsion.top_atom))
    return [a, torsion.frame_atom, torsion.top_atom, d]


def scan_torsion(species: Species, torsion: torsions.Torsion, settings: Settings = Settings(), *,
                 step_deg: float = DEFAULT_STEP_DEG, relaxed: bool = False) -> TorsionScan:
    """Energies of the species along one torsion over 360/sigma degrees, by GFN2-xTB."""
    if not 0 < step_deg <= 60:
        raise InputError(f"the scan step must lie in (0, 60] degrees, got {step_deg:g}", field="step_deg")
    from ase import Atoms

    period = 360.0 / torsion.symmetry_number
    n = max(3, int(round(period / step_deg)))
    angles = np.arange(n) * (period / n)
    x0 = np.asarray(species.positions_A, dtype=float)
    energies, geometries = [], []
    atoms = with_calculator(Atoms(list(species.symbols), positions=x0, masses=species.masses_amu), settings,
                            species.charge, species.multiplicity)
    if relaxed:
        from ase.constraints import FixInternals
        from ase.optimize import BFGS

        quad = _dihedral_atoms(species.symbols, x0, torsion)
        start = atoms.get_dihedral(*quad)
    for angle in angles:
        if not relaxed:
            atoms.positions = torsions.rotate_top(x0, torsion.frame_atom, torsion.top_atom, torsion.top,
                                                  np.deg2rad(angle))
        else:
            atoms.set_constraint()
            previous = atoms.positions.copy() if angle > 0 else x0
            turn = np.deg2rad(angle - (angles[list(angles).index(angle) - 1] if angle > 0 else 0.0))
            atoms.positions = torsions.rotate_top(previous, torsion.frame_atom, torsion.top_atom, torsion.top, turn)
            atoms.set_constraint(FixInternals(dihedrals_deg=[[(start + angle) % 360.0, quad]]))
            BFGS(atoms, logfile=None, maxstep=0.1).run(fmax=RELAXED_FMAX_EV_PER_A, steps=RELAXED_MAX_STEPS)
        energies.append(energy_J_per_mol(atoms))
        geometries.append(atoms.positions.copy())
    atoms.set_constraint()
    return TorsionScan(torsion, angles, np.array(energies), relaxed,
                       f"{'relaxed' if relaxed else 'rigid'} scan, {settings.method}", np.array(geometries))


def species_with_scanned_rotors(species: Species, settings: Settings = Settings(), *, bonds=None,
                                step_deg: float = DEFAULT_STEP_DEG, relaxed: bool = False,
                                fourier_terms: int | None = None) -> tuple[Species, tuple[TorsionScan, ...]]:
    """The species with a hindered rotor for every rotatable bond (or for ``bonds``: (frame, top)
    pairs, 0-based), each from a GFN2-xTB scan; rotors it already has on those bonds are replaced.
    Needs the species' Hessian (the replaced modes are found by projection)."""
    from tstrate.io.species import HinderedRotorInput, resolve_hindered_rotor
    from tstrate.physics.vibrations import vibrational_analysis

    if relaxed and species.kind == "transition_state":
        raise InputError(f"{species.name!r} is a transition state: a relaxed scan minimises every other "
                         "coordinate and leaves the saddle point", file=species.source, field="relaxed",
                         hint="scan transition states rigidly (leave out --relaxed)")
    if species.hessian_J_per_m2 is None:
        raise InputError(f"species {species.name!r} has no Hessian; the modes the rotors replace are found by "
                         "projection onto its normal modes", file=species.source, field="hessian")
    found = torsions.find_torsions(species.symbols, species.positions_A, species.masses_amu)
    if bonds is not None:
        wanted = []
        for frame, top in bonds:
            match = [t for t in found if {t.frame_atom, t.top_atom} == {frame, top}]
            if not match:
                raise InputError(f"atoms {frame + 1} and {top + 1} are no rotatable bond of {species.name!r}",
                                 field="bond", hint="rotatable: " + ", ".join(
                                     f"{t.frame_atom + 1}-{t.top_atom + 1}" for t in found) or "none")
            wanted.append(match[0])
        found = tuple(wanted)
    nm = vibrational_analysis(species.hessian_J_per_m2, species.positions_A, species.masses_amu, species.linear)
    scans, rotors, warnings = [], [], list(species.warnings)
    keep = [r for r in species.hindered_rotors
            if not any({r.bond_atoms[0], r.bond_atoms[1]} == {t.frame_atom, t.top_atom} for t in found)]
    avoid = [r.replaces_cm1 for r in species.free_rotors] + [r.replaces_cm1 for r in keep]
    for i, tor in enumerate(found):
        scan = scan_torsion(species, tor, settings, step_deg=step_deg, relaxed=relaxed)
        scans.append(scan)
        spec = HinderedRotorInput((tor.frame_atom, tor.top_atom),
                                  ("points", np.deg2rad(scan.angles_deg), scan.energies_J_per_mol, fourier_terms),
                                  symmetry_number=tor.symmetry_number, potential_source=scan.method,
                                  key=f"hindered_rotors[{len(keep) + i}]")
        rotor = resolve_hindered_rotor(spec, species.symbols, species.positions_A, species.masses_amu, nm,
                                       file=species.source, avoid_cm1=avoid, warnings=warnings,
                                       allow_imaginary=species.kind == "minimum")
        avoid.append(rotor.replaces_cm1)
        rotors.append(rotor)
    provenance = dict(species.provenance)
    provenance["hindered_rotors"] = (f"{len(rotors)} torsions by {'relaxed' if relaxed else 'rigid'} "
                                     f"{settings.method} scans, {step_deg:g} degree steps")
    new = species.with_changes(hindered_rotors=tuple(keep) + tuple(rotors), provenance=provenance,
                               warnings=tuple(dict.fromkeys(warnings)))
    return new, tuple(scans)
