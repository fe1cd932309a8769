"""``tstrate compute --json`` documents: species made or read, saddle points and water relays,
as plain records with units in the keys (energies in kJ/mol, wavenumbers in cm-1).

The results come from :mod:`tstrate.compute` (a layer above this one); they are read here by
their attributes only.
"""

from __future__ import annotations

_KJ = 1e-3  # J/mol -> kJ/mol


def species_summary_record(sp) -> dict:
    """A species file's content in brief (``sp`` a :class:`tstrate.model.Species`)."""
    return {"name": sp.name, "formula": sp.formula, "kind": sp.kind,
            "electronic_energy_kJ_per_mol": None if sp.energy_J_per_mol is None
            else sp.energy_J_per_mol * _KJ,
            "frequencies_cm1": [round(float(f), 2) for f in sp.frequencies_cm1],
            "symmetry_number": sp.symmetry_number, "linear": sp.linear,
            "has_hessian": sp.hessian_J_per_m2 is not None}


def minimum_document(res, output) -> dict:
    """``tstrate compute minimum --json`` (``res`` a :class:`tstrate.compute.minima.MinimumResult`)."""
    return {"species": species_summary_record(res.species), "output": output,
            "conformer_energies_kJ_per_mol": [e * _KJ for e in res.conformer_energies_J_per_mol],
            "gradient_calls_hessian": res.gradient_calls_hessian,
            "from_cache": res.from_cache}


def conformers_document(res, name: str, outputs) -> dict:
    """``tstrate compute conformers --json`` (``res`` a :class:`tstrate.compute.conformers.ConformerSearch`;
    ``outputs`` the file written for each conformer, or None)."""
    e0 = res.conformers[0][1].energy_J_per_mol
    entries = ", ".join(f'{lb} = "{p}"' for (lb, _), p in zip(res.conformers, outputs) if p is not None)
    return {
        "conformers": [{"label": lb, "output": None if p is None else str(p),
                        "relative_energy_kJ_per_mol": (sp.energy_J_per_mol - e0) * _KJ,
                        "species": species_summary_record(sp)} for (lb, sp), p in zip(res.conformers, outputs)],
        "minimised_energies_kJ_per_mol": [e * _KJ for e in res.minimised_energies_J_per_mol],
        "duplicates_removed": res.duplicates, "above_energy_window": res.above_window,
        "study_species_line": f"{name} = {{ {entries} }}" if entries else None,
        "from_cache": res.from_cache,
    }


def read_document(sp, output) -> dict:
    """``tstrate compute read --json``: the species read from a quantum-chemistry output."""
    return {"species": species_summary_record(sp), "output": output}


def saddle_record(res) -> dict:
    """A verified saddle point (``res`` a :class:`tstrate.compute.saddle.SaddleResult`):
    barriers from the reactant and the product side, classical and with zero-point energies."""
    return {
        "ts": res.ts.name, "reactant": res.reactant.name, "product": res.product.name,
        "imaginary_frequency_cm1": res.imaginary_frequency_cm1,
        "barrier_classical_kJ_per_mol": res.barrier_J_per_mol * _KJ,
        "barrier_zpe_kJ_per_mol": res.barrier_zpe_J_per_mol * _KJ,
        "reverse_barrier_classical_kJ_per_mol": res.reverse_barrier_J_per_mol * _KJ,
        "reverse_barrier_zpe_kJ_per_mol": res.reverse_barrier_zpe_J_per_mol * _KJ,
        "bond_changes": res.bond_changes, "retries": res.retries,
        "gradient_calls_hessian": res.gradient_calls_hessian, "from_cache": res.from_cache,
    }


def saddle_document(res, outputs) -> dict:
    """``tstrate compute saddle --json``: :func:`saddle_record`, the files written (TS,
    reactant side, product side; null where not asked for) and the three species in brief."""
    return saddle_record(res) | {
        "outputs": list(outputs),
        "species": [species_summary_record(s) for s in (res.ts, res.reactant, res.product)]}


def relay_document(res, outputs) -> dict:
    """``tstrate compute relay --json`` (``res`` a :class:`tstrate.compute.relay.RelayResult`):
    the saddle record plus the pre-reactive complex and the barrier measured from it."""
    return saddle_record(res.saddle) | {
        "complex": res.complex.species.name,
        "barrier_from_complex_classical_kJ_per_mol": res.barrier_J_per_mol * _KJ,
        "barrier_from_complex_zpe_kJ_per_mol": res.barrier_zpe_J_per_mol * _KJ,
        "outputs": list(outputs)}
