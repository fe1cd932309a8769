"""Minima by GFN2-xTB: from a SMILES (conformer search) or a geometry file.

From a SMILES: RDKit adds hydrogens and embeds ``n_conformers`` conformers
with ETKDG version 3 (S. Wang, J. Witek, G. A. Landrum, S. Riniker, J. Chem.
Inf. Model. 60, 2044 (2020)) and a fixed random seed; each is minimised with
GFN2-xTB and the lowest is kept. From a geometry file (anything ASE reads;
the last frame of a trajectory): that geometry is minimised.

The minimum is then characterised by a finite-difference Hessian. Should it
show imaginary modes larger than ``Settings.tolerated_imaginary_cm1`` the
geometry is pushed along them and minimised again (at most
``MAX_MODE_RETRIES`` times); failing that, or failing to converge, raises
InputError and no species is made.
"""

from __future__ import annotations

import logging
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from tstrate.compute.cache import Cache, cache_key
from tstrate.compute.engine import Settings, minimise, progress_bar, provenance, with_calculator
from tstrate.compute.stationary import (Characterised, cartesian_mode, characterise,
                                        species_from_record, species_record)
from tstrate.errors import InputError
from tstrate.model import Species

log = logging.getLogger(__name__)

#: re-minimisations along leftover imaginary modes before giving up
MAX_MODE_RETRIES = 3


@dataclass(frozen=True)
class MinimumResult:
    """species: the minimum (Hessian kept, energy [J/mol]);
    conformer_energies_J_per_mol: energy of each minimised conformer relative to the lowest [J/mol];
    gradient_calls_hessian: calculator calls of the Hessian (6N);
    from_cache: whether the result came from the cache."""

    species: Species
    conformer_energies_J_per_mol: tuple[float, ...] = ()
    gradient_calls_hessian: int = 0
    from_cache: bool = False
    details: dict = field(default_factory=dict)


def conformers_from_smiles(smiles: str, n_conformers: int, seed: int):
    """Embed conformers of ``smiles``: (symbols, [positions_A ...], charge, multiplicity)."""
    from rdkit import Chem, RDLogger
    from rdkit.Chem import AllChem

    RDLogger.DisableLog("rdApp.*")
    try:
        mol = Chem.MolFromSmiles(smiles)
    finally:
        RDLogger.EnableLog("rdApp.*")
    if mol is None:
        raise InputError(f"RDKit cannot parse the SMILES {smiles!r}", field="smiles",
                         hint="check brackets, ring closures and valences")
    if mol.GetNumAtoms() == 0:
        raise InputError("the SMILES is empty", field="smiles", hint="give a molecule, e.g. 'O' for water")
    mol = Chem.AddHs(mol)
    params = AllChem.ETKDGv3()
    params.randomSeed = int(seed) % 2**31
    ids = list(AllChem.EmbedMultipleConfs(mol, numConfs=int(n_conformers), params=params))
    if not ids:
        params.useRandomCoords = True
        ids = list(AllChem.EmbedMultipleConfs(mol, numConfs=int(n_conformers), params=params))
    if not ids:
        raise InputError(f"RDKit could not embed 3D coordinates for {smiles!r}", field="smiles")
    symbols = [a.GetSymbol() for a in mol.GetAtoms()]
    charge = sum(a.GetFormalCharge() for a in mol.GetAtoms())
    multiplicity = sum(a.GetNumRadicalElectrons() for a in mol.GetAtoms()) + 1
    return symbols, [mol.GetConformer(i).GetPositions() for i in ids], charge, multiplicity


def read_geometry_file(path: str | Path):
    """The last geometry of any file ASE reads, as ASE Atoms (InputError if it cannot)."""
    import ase.io

    path = Path(path)
    if not path.exists():
        raise InputError("geometry file does not exist", file=str(path))
    try:
        atoms = ase.io.read(str(path), index=-1)
    except Exception as exc:  # ASE raises many kinds for unreadable files
        raise InputError(f"ASE cannot read this geometry: {exc}"[:300], file=str(path)) from None
    if len(atoms) == 0:
        raise InputError("no atoms in the geometry file", file=str(path))
    atoms.calc = None
    return atoms


def relax_minimum(atoms, settings: Settings, *, label: str, charge: int = 0, multiplicity: int = 1,
                  progress: bool = False, work_dir=None) -> Characterised:
    """Minimise and characterise ``atoms`` (a copy is made); pushes off leftover imaginary modes."""
    work = with_calculator(atoms, settings, charge, multiplicity)
    minimise(work, settings, label=label, work_dir=work_dir)
    ch = characterise(work, settings, progress=progress, desc=f"Hessian {label}")
    for attempt in range(MAX_MODE_RETRIES):
        bad = np.nonzero(ch.frequencies_cm1 < -settings.tolerated_imaginary_cm1)[0]
        if not len(bad):
            return ch
        log.info("%s: imaginary modes %s cm-1; displacing and minimising again (%d)", label,
                 np.round(ch.frequencies_cm1[bad], 1), attempt + 1)
        for k in bad:
            work.positions = work.positions + cartesian_mode(ch.modes, k, work.get_masses())
        minimise(work, settings, label=label, work_dir=work_dir)
        ch = characterise(work, settings, progress=progress, desc=f"Hessian {label}")
    bad = ch.frequencies_cm1[ch.frequencies_cm1 < -settings.tolerated_imaginary_cm1]
    if len(bad):
        raise InputError(f"{label}: after {MAX_MODE_RETRIES} re-minimisations the geometry still "
                         f"has imaginary modes {np.round(bad, 1).tolist()} cm-1",
                         hint="start from another geometry or conformer")
    return ch


def compute_minimum(*, name: str, smiles: str | None = None, atoms=None, charge: int | None = None,
                    multiplicity: int | None = None, settings: Settings = Settings(),
                    cache: Cache | None = None, progress: bool = False, work_dir=None,
                    command: str | None = None, source: str | None = None) -> MinimumResult:
    """The GFN2-xTB minimum of a SMILES or of ASE ``atoms``, as a species with its Hessian.

    ``charge``/``multiplicity`` default to the SMILES' formal charges and radicals
    (0 and 1 for a geometry). ``command`` is recorded in the provenance.
    """
    if (smiles is None) == (atoms is None):
        raise InputError("give a SMILES or a geometry, not both or neither", field="smiles")
    cache = cache or Cache(enabled=False)
    if smiles is not None:
        symbols, confs, q, mult = conformers_from_smiles(smiles, settings.n_conformers, settings.seed)
        inputs = {"smiles": smiles}
    else:
        symbols, confs, q, mult = list(atoms.get_chemical_symbols()), [atoms.positions.copy()], 0, 1
        inputs = {"symbols": symbols, "positions_A": atoms.positions}
    charge = q if charge is None else int(charge)
    multiplicity = mult if multiplicity is None else int(multiplicity)
    if multiplicity < 1:
        raise InputError("multiplicity must be 1 or more", field="multiplicity")
    inputs.update(charge=charge, multiplicity=multiplicity, settings=settings.as_dict())
    key = cache_key("minimum", inputs)
    hit = cache.load("minimum", key)
    if hit is not None:
        species = species_from_record(hit["record"], name, command=command)
        return MinimumResult(species, tuple(hit["conformer_energies_J_per_mol"]),
                             hit["record"]["gradient_calls"], True, {"cache_key": key})

    from ase import Atoms

    best, energies = None, []
    with progress_bar(len(confs), f"conformers {name}", progress and len(confs) > 1) as bar:
        for k, pos in enumerate(confs):
            trial = with_calculator(Atoms(symbols, positions=pos), settings, charge, multiplicity)
            minimise(trial, settings, label=f"{name}-conformer{k + 1}", work_dir=work_dir)
            e = trial.get_potential_energy()
            energies.append(e)
            if best is None or e < best.get_potential_energy():
                best = trial
            bar.update(1)
    from tstrate.units import energy_to_J_per_mol

    rel = tuple(float(energy_to_J_per_mol(e - min(energies), "eV")) for e in energies)
    ch = relax_minimum(best, settings, label=name, charge=charge, multiplicity=multiplicity,
                       progress=progress, work_dir=work_dir)
    extra = {"origin": f"SMILES {smiles}; lowest of {len(confs)} ETKDGv3 conformers "
                       f"(seed {settings.seed})" if smiles is not None
             else f"geometry {source or 'given'}",
             "optimiser": "ASE BFGS"}
    record = species_record(ch, kind="minimum", charge=charge, multiplicity=multiplicity,
                            provenance=provenance(settings, command=command, extra=extra),
                            allow_imaginary_below_cm1=settings.tolerated_imaginary_cm1)
    species = species_from_record(record, name)
    cache.store("minimum", key, {"record": record, "conformer_energies_J_per_mol": list(rel)})
    return MinimumResult(species, rel, ch.hessian.gradient_calls, False, {"cache_key": key})
