"""Shared steps of the semi-empirical route: characterise a stationary point and build its species.

A stationary point is characterised by its finite-difference Hessian and
tstrate's projected vibrational analysis (translations and rotations removed
exactly, :func:`tstrate.physics.vibrations.vibrational_analysis`); ASE's own
unprojected frequency list is never used.
"""

from __future__ import annotations

import logging
from dataclasses import dataclass

import numpy as np

from tstrate.compute.engine import HessianResult, Settings, energy_J_per_mol, finite_difference_hessian
from tstrate.model import Species

log = logging.getLogger(__name__)


@dataclass(frozen=True)
class Characterised:
    """A geometry with its energy [J/mol], Hessian and projected normal modes."""

    atoms: object
    energy_J_per_mol: float
    hessian: HessianResult
    modes: object  # tstrate.physics.vibrations.NormalModes

    @property
    def frequencies_cm1(self) -> np.ndarray:
        return self.modes.frequencies_cm1


def characterise(atoms, settings: Settings, *, progress: bool = False, desc: str = "Hessian"
                 ) -> Characterised:
    """Energy, finite-difference Hessian and projected frequencies of ``atoms`` (with calculator)."""
    from tstrate.physics.vibrations import vibrational_analysis

    e = energy_J_per_mol(atoms)
    hess = finite_difference_hessian(atoms, settings.hessian_step_A, progress=progress, desc=desc)
    modes = vibrational_analysis(hess.hessian_J_per_m2, atoms.positions, atoms.get_masses())
    return Characterised(atoms.copy(), e, hess, modes)


def cartesian_mode(modes, index: int, masses_amu, max_displacement_A: float = 0.1) -> np.ndarray:
    """Cartesian displacement (N, 3) [Angstrom] along normal mode ``index``.

    The mass-weighted eigenvector is divided by sqrt(m) and scaled so the atom
    that moves most moves ``max_displacement_A``.
    """
    d = modes.modes[index] / np.sqrt(np.asarray(masses_amu, dtype=float))[:, None]
    return d * (max_displacement_A / np.max(np.linalg.norm(d, axis=1)))


# ---- species records for files and the cache ---------------------------------------

def species_record(ch: Characterised, *, kind: str, charge: int, multiplicity: int,
                   provenance: dict, allow_imaginary_below_cm1: float = 0.0) -> dict:
    """Everything :func:`species_from_record` needs, as plain JSON values."""
    return {
        "symbols": list(ch.atoms.get_chemical_symbols()),
        "positions_A": ch.atoms.positions.tolist(),
        "energy_J_per_mol": ch.energy_J_per_mol,
        "hessian_J_per_m2": ch.hessian.hessian_J_per_m2.tolist(),
        "gradient_calls": ch.hessian.gradient_calls,
        "kind": kind,
        "charge": int(charge),
        "multiplicity": int(multiplicity),
        "allow_imaginary_below_cm1": float(allow_imaginary_below_cm1),
        "provenance": dict(provenance),
    }


def species_from_record(record: dict, name: str, *, command: str | None = None) -> Species:
    """Build the species of a record (frequencies recomputed from its Hessian by build_species)."""
    from tstrate.io.species import build_species

    prov = dict(record["provenance"])
    if command is not None:
        prov["command"] = command
    return build_species(
        name, record["symbols"], np.array(record["positions_A"]), kind=record["kind"],
        charge=record["charge"], multiplicity=record["multiplicity"],
        hessian_J_per_m2=np.array(record["hessian_J_per_m2"]),
        energy_J_per_mol=record["energy_J_per_mol"],
        geometry_energy_J_per_mol=record["energy_J_per_mol"],
        allow_imaginary_below_cm1=record.get("allow_imaginary_below_cm1", 0.0),
        provenance=prov,
    )
