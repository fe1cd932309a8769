"""Conformer search by GFN2-xTB: the distinct minima of a SMILES, as a conformer ensemble.

RDKit embeds ``n_conformers`` conformers with ETKDG version 3 (S. Wang, J. Witek, G. A. Landrum,
S. Riniker, J. Chem. Inf. Model. 60, 2044 (2020)) and a fixed seed; each is minimised with GFN2-xTB
(tblite through ASE). Duplicates are removed by energy and structure, lowest first: a minimum is a
duplicate of one already kept when their energies agree within ``energy_tolerance_J_per_mol`` and

- their Kabsch RMSD (same atom order, best proper rotation; :func:`tstrate.geometry.kabsch_rmsd`) is
  within ``rmsd_A``, or
- their sorted interatomic distances agree within
  :data:`tstrate.physics.conformers.SAME_STRUCTURE_TOLERANCE_A` (independent of the atom order and
  of mirror images: permuted hydrogens of a methyl group and the two mirror images of a chiral
  conformer are one structure; the optical isomers of the species file count the mirror image).

Defaults, common practice for such searches rather than published values: RMSD 0.125 Angstrom,
energies within 0.2 kJ/mol, and minima more than 20 kJ/mol above the lowest dropped (a population
below 4e-4 at 300 K). Each kept minimum is characterised by its Hessian (pushed off leftover
imaginary modes, as :func:`tstrate.compute.minima.relax_minimum`), and duplicates are removed again
among the characterised minima. The species, lowest first, are the members of a conformer ensemble
(:func:`tstrate.physics.ensembles.build_ensemble`; in a study, a ``[species]`` table label -> file).
"""

from __future__ import annotations

import logging
from dataclasses import dataclass

import numpy as np

from tstrate.compute.cache import Cache, cache_key
from tstrate.compute.engine import Settings, minimise, progress_bar, provenance, with_calculator
from tstrate.compute.minima import conformers_from_smiles, relax_minimum
from tstrate.compute.stationary import species_from_record, species_record
from tstrate.errors import InputError
from tstrate.geometry import kabsch_rmsd
from tstrate.physics.conformers import SAME_STRUCTURE_TOLERANCE_A, structure_difference_A

log = logging.getLogger(__name__)

#: duplicate thresholds and energy window of the search (common practice, see the module text)
RMSD_A = 0.125
ENERGY_TOLERANCE_J_PER_MOL = 200.0
ENERGY_WINDOW_J_PER_MOL = 20.0e3


def unique_structures(symbols, geometries_A, energies_J_per_mol, *, rmsd_A: float = RMSD_A,
                      energy_tolerance_J_per_mol: float = ENERGY_TOLERANCE_J_PER_MOL) -> list[int]:
    """Indices of the distinct structures, lowest energy first (see the module text for the rule).

    geometries_A: (n, N, 3) positions [Angstrom] of the same atoms in the same order;
    energies_J_per_mol: (n,) energies [J/mol].
    """
    x = [np.asarray(g, dtype=float) for g in geometries_A]
    e = np.asarray(energies_J_per_mol, dtype=float)
    if len(x) != e.size:
        raise ValueError(f"{len(x)} geometries but {e.size} energies")
    keep: list[int] = []
    for i in np.argsort(e, kind="stable"):
        def same(k):
            if abs(e[i] - e[k]) > energy_tolerance_J_per_mol:
                return False
            if kabsch_rmsd(x[i], x[k]) <= rmsd_A:
                return True
            return structure_difference_A(symbols, x[i], symbols, x[k]) <= SAME_STRUCTURE_TOLERANCE_A
        if not any(same(k) for k in keep):
            keep.append(int(i))
    return keep


@dataclass(frozen=True)
class ConformerSearch:
    """The result of :func:`search_conformers`.

    conformers: (label, Species) of each distinct minimum, lowest first (labels c1, c2, ...), each
        with its Hessian and energy [J/mol].
    minimised_energies_J_per_mol: energy of each embedded conformer after minimisation, above the lowest.
    duplicates: minima removed as duplicates; above_window: minima dropped above the energy window.
    from_cache: whether the result came from the cache.
    """

    conformers: tuple
    minimised_energies_J_per_mol: tuple[float, ...]
    duplicates: int
    above_window: int
    from_cache: bool = False


def search_conformers(*, name: str, smiles: str, settings: Settings = Settings(n_conformers=20),
                      rmsd_A: float = RMSD_A, energy_tolerance_J_per_mol: float = ENERGY_TOLERANCE_J_PER_MOL,
                      energy_window_J_per_mol: float = ENERGY_WINDOW_J_PER_MOL, charge: int | None = None,
                      multiplicity: int | None = None, cache: Cache | None = None, progress: bool = False,
                      work_dir=None, command: str | None = None) -> ConformerSearch:
    """The distinct GFN2-xTB minima of ``smiles`` within ``energy_window_J_per_mol`` of the lowest."""
    from ase import Atoms

    from tstrate.units import energy_to_J_per_mol

    for value, key in ((rmsd_A, "rmsd_A"), (energy_tolerance_J_per_mol, "energy_tolerance"),
                       (energy_window_J_per_mol, "energy_window")):
        if not value >= 0:
            raise InputError(f"must be zero or more, got {value!r}", field=key)
    cache = cache or Cache(enabled=False)
    symbols, confs, q, mult = conformers_from_smiles(smiles, settings.n_conformers, settings.seed)
    charge = q if charge is None else int(charge)
    multiplicity = mult if multiplicity is None else int(multiplicity)
    inputs = {"smiles": smiles, "charge": charge, "multiplicity": multiplicity, "settings": settings.as_dict(),
              "rmsd_A": rmsd_A, "energy_tolerance_J_per_mol": energy_tolerance_J_per_mol,
              "energy_window_J_per_mol": energy_window_J_per_mol}
    key = cache_key("conformers", inputs)
    hit = cache.load("conformers", key)
    if hit is not None:
        members = tuple((lb, species_from_record(rec, f"{name}_{lb}", command=command))
                        for lb, rec in hit["records"])
        return ConformerSearch(members, tuple(hit["minimised"]), hit["duplicates"], hit["above_window"], True)

    minimised, energies = [], []
    with progress_bar(len(confs), f"conformers {name}", progress and len(confs) > 1) as bar:
        for k, pos in enumerate(confs):
            trial = with_calculator(Atoms(symbols, positions=pos), settings, charge, multiplicity)
            minimise(trial, settings, label=f"{name}-conformer{k + 1}", work_dir=work_dir)
            energies.append(float(energy_to_J_per_mol(trial.get_potential_energy(), "eV")))
            minimised.append(trial)
            bar.update(1)
    e = np.array(energies)
    rel = tuple(float(v) for v in e - e.min())
    first = unique_structures(symbols, [a.positions for a in minimised], e, rmsd_A=rmsd_A,
                              energy_tolerance_J_per_mol=energy_tolerance_J_per_mol)
    inside = [i for i in first if e[i] - e.min() <= energy_window_J_per_mol]
    above = len(first) - len(inside)
    characterised = [relax_minimum(minimised[i], settings, label=f"{name}-conformer{i + 1}", charge=charge,
                                   multiplicity=multiplicity, progress=progress, work_dir=work_dir)
                     for i in inside]
    # relaxing off a saddle may bring two minima together: the same rule once more
    e2 = np.array([c.energy_J_per_mol for c in characterised])
    final = unique_structures(symbols, [c.atoms.positions for c in characterised], e2, rmsd_A=rmsd_A,
                              energy_tolerance_J_per_mol=energy_tolerance_J_per_mol)
    duplicates = len(confs) - len(first) + len(inside) - len(final)
    records = []
    for n, i in enumerate(final, start=1):
        extra = {"origin": f"SMILES {smiles}; conformer {n} of {len(final)} distinct GFN2-xTB minima of "
                           f"{len(confs)} ETKDGv3 embeddings (seed {settings.seed}), "
                           f"{(e2[i] - e2[final[0]]) / 1e3:.3f} kJ/mol above the lowest",
                 "optimiser": "ASE BFGS"}
        records.append((f"c{n}", species_record(characterised[i], kind="minimum", charge=charge,
                                                multiplicity=multiplicity,
                                                provenance=provenance(settings, command=command, extra=extra),
                                                allow_imaginary_below_cm1=settings.tolerated_imaginary_cm1)))
    cache.store("conformers", key, {"records": records, "minimised": list(rel), "duplicates": duplicates,
                                    "above_window": above})
    members = tuple((lb, species_from_record(rec, f"{name}_{lb}")) for lb, rec in records)
    log.info("%s: %d distinct conformers of %d embedded (%d duplicates, %d above the window)", name,
             len(members), len(confs), duplicates, above)
    return ConformerSearch(members, rel, duplicates, above, False)
