"""Results as plain records: numbers with unit-bearing keys, ready for JSON and CSV.

Every converter here is the single place where a result's internal SI values
meet the units users see. The conventions of every output file (molar energies
in kJ/mol, deviations in percent, pressures in bar, the unit in every numeric
key's name or in a ``*_unit`` sibling) are written down in
:mod:`tstrate.output.schema`, which lists every key.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from tstrate.units import (DEFAULT_RATE_UNIT, P_STANDARD, rate_from_SI, standard_pressure_name,
                           standard_pressure_tag)


def conventions_record(standard_pressure_Pa: float = P_STANDARD) -> dict:
    """The conventions behind every number of a run, stated once per output document: the
    standard pressure, the atomic masses, the symmetry tolerance and how chiral structures,
    rotational symmetry and low modes are counted. They explain most differences from the
    thermochemistry a quantum-chemistry program prints."""
    from tstrate.physics.symmetry import DEFAULT_TOLERANCE_A

    return {
        "standard_pressure": standard_pressure_name(standard_pressure_Pa),
        "standard_pressure_bar": standard_pressure_Pa / 1e5,
        "masses": ("isotopic: the most common isotope of each element (RDKit's periodic table), or the "
                   "isotopes a species file names; not average atomic weights"),
        "symmetry_tolerance_A": DEFAULT_TOLERANCE_A,
        "rotational_symmetry": ("symmetry number from the rotations of the geometry within the tolerance, "
                                "unless a species file gives it"),
        "optical_isomers": ("a chiral structure (no improper rotation within the tolerance) counts as two "
                            "optical isomers, unless a species file gives the number"),
        "vibrations": "harmonic, with each species file's frequency_scale; low modes as the run states",
        "rate_constants": "per molecule; they do not depend on the standard pressure",
    }


def rate_unit(order: int, rate_units: dict | None = None) -> str:
    """The output unit for a rate constant of ``order`` (study override or the trade default).

    Orders above 3 (only reverse rate constants of channels with four or more
    products) have no entry in the unit tables; they are given per molecule in
    cm^(3(n-1)) molecule^-(n-1) s^-1.
    """
    if order not in DEFAULT_RATE_UNIT:
        return f"cm{3 * (order - 1)} molecule-{order - 1} s-1"
    return (rate_units or {}).get(order, DEFAULT_RATE_UNIT[order])


def _rate_in(k_SI, order: int, unit: str):
    """Rate constant from SI per molecule to ``unit`` (from :func:`rate_unit`)."""
    if order not in DEFAULT_RATE_UNIT:
        import numpy as np

        return np.asarray(k_SI, dtype=float) * 1e6 ** (order - 1)  # m^3 -> cm^3 per extra molecule
    return rate_from_SI(k_SI, order, unit)


def channel_rates_record(cr, rate_units: dict | None = None) -> dict:
    """One channel's TST results with units in the keys."""
    unit = rate_unit(cr.order, rate_units)
    runit = rate_unit(cr.reverse_order, rate_units)
    kj = 1e-3
    return {
        "name": cr.channel,
        "order": cr.order,
        "temperature_K": cr.temperature_K,
        "rate_constant": rate_from_SI(cr.k, cr.order, unit),
        "rate_constant_no_tunnelling": rate_from_SI(cr.k_classical, cr.order, unit),
        "rate_constant_unit": unit,
        "kappa": cr.kappa,
        "tunnelling": cr.tunnelling,
        "reverse_rate_constant": _rate_in(cr.k_reverse, cr.reverse_order, runit),
        "reverse_rate_constant_unit": runit,
        "ln_Kc": _ln_kc_cm3(cr),
        "Kc_unit": f"(molecule cm-3)^{cr.reverse_order - cr.order}",
        "Kc": _exp(_ln_kc_cm3(cr)),
        f"Kp_{standard_pressure_tag(cr.standard_pressure_Pa)}": _exp(cr.ln_kp),
        "barrier_classical_kJ_per_mol": cr.barrier_classical_J_per_mol * kj,
        "barrier_zpe_kJ_per_mol": cr.barrier_zpe_J_per_mol * kj,
        "barrier_from_complex_classical_kJ_per_mol": _opt(cr.barrier_from_complex_classical_J_per_mol, kj),
        "barrier_from_complex_zpe_kJ_per_mol": _opt(cr.barrier_from_complex_zpe_J_per_mol, kj),
        "reaction_energy_zpe_kJ_per_mol": cr.reaction_energy_zpe_J_per_mol * kj,
        "imaginary_frequency_cm1": cr.imaginary_frequency_cm1,
        "tunnelling_forward_barrier_kJ_per_mol": cr.eckart_V1_J_per_mol * kj,
        "tunnelling_reverse_barrier_kJ_per_mol": cr.eckart_V2_J_per_mol * kj,
        "tunnelling_energy_floor_kJ_per_mol": cr.energy_floor_J_per_mol * kj,
        "tunnelling_product_complex": cr.product_complex,
        "tunnelling_floor": cr.tunnelling_floor,
        "other_tunnelling_floor": (None if cr.kappa_other_floor is None else
                                   "complex" if cr.tunnelling_floor == "reactants" else "reactants"),
        "other_tunnelling_energy_floor_kJ_per_mol": _opt(cr.other_energy_floor_J_per_mol, kj),
        "kappa_other_floor": cr.kappa_other_floor,
        "delta_H_activation_kJ_per_mol": cr.delta_H_J_per_mol * kj,
        "delta_S_activation_J_per_mol_K": cr.delta_S_J_per_mol_K,
        "delta_G_activation_kJ_per_mol": cr.delta_G_J_per_mol * kj,
        "reaction_path_degeneracy": cr.degeneracy,
        "transition_state_conformer_shares": _ts_shares(cr),
        "tunnelling_well_conformer": getattr(cr, "tunnelling_well_conformer", None),
        "standard_pressure_bar": cr.standard_pressure_Pa / 1e5,
        "standard_state": (f"{standard_pressure_name(cr.standard_pressure_Pa)} (activation quantities, Kp); "
                           "rate constants per molecule"),
    }


def _ts_shares(cr):
    from tstrate.output.conformer_records import ts_shares_record

    return ts_shares_record(cr)


#: levels of each hindered rotor listed in JSON output (from its ground level)
ROTOR_LEVELS_LISTED = 40


def hindered_rotor_records(sp) -> list[dict]:
    """The hindered rotors of species ``sp``, units in the keys (1-based atoms)."""
    from tstrate.physics.rotors import rotor_model
    from tstrate.units import CM1_J, N_A

    cm1 = CM1_J * N_A
    out = []
    for r in sp.hindered_rotors:
        model = rotor_model(r)
        pot = model.potential
        levels = model.levels_J_per_mol(max(pot.barrier_J_per_mol * 3.0, 4e4))[:ROTOR_LEVELS_LISTED]
        out.append({
            "bond": f"{sp.symbols[r.bond_atoms[0]]}{r.bond_atoms[0] + 1}-{sp.symbols[r.bond_atoms[1]]}"
                    f"{r.bond_atoms[1] + 1}",
            "bond_atoms": [a + 1 for a in r.bond_atoms], "top_atoms": [a + 1 for a in r.top_atoms],
            "symmetry_number": r.symmetry_number, "reduced_moment_amu_A2": r.reduced_moment_amu_A2,
            "moment_definition": r.moment_definition, "replaces_cm1": r.replaces_cm1,
            "mode_assignment": r.mode_assignment, "mode_overlap": r.mode_overlap,
            "potential_source": r.potential_source,
            "barrier_kJ_per_mol": pot.barrier_J_per_mol / 1e3,
            "potential_minimum_kJ_per_mol": pot.minimum_J_per_mol / 1e3,
            "cos_terms_cm1": [a / cm1 for a in r.cos_terms_J_per_mol],
            "sin_terms_cm1": [b / cm1 for b in r.sin_terms_J_per_mol],
            "fit_rms_kJ_per_mol": None if r.fit_rms_J_per_mol is None else r.fit_rms_J_per_mol / 1e3,
            "fit_max_kJ_per_mol": None if r.fit_max_J_per_mol is None else r.fit_max_J_per_mol / 1e3,
            "points_deg": list(r.points_deg), "points_kJ_per_mol": [e / 1e3 for e in r.points_J_per_mol],
            "zpe_cm1": model.zpe_J_per_mol / cm1,
            "harmonic_wavenumber_cm1": model.harmonic_wavenumber_cm1(),
            "levels_cm1": (levels / cm1).tolist(),
        })
    return out


def thermo_record(th, sp) -> dict:
    """One species' thermochemistry (``th`` from :func:`tstrate.physics.thermo.thermochemistry`
    of the species ``sp``) with units in the keys; arrays run over ``temperature_K``."""
    kj = 1e-3
    return {
        "name": th.species, "formula": sp.formula, "kind": sp.kind,
        "symmetry_number": sp.symmetry_number, "optical_isomers": sp.optical_isomers,
        "linear": sp.linear, "symmetry_given": "symmetry_number" in sp.symmetry_given,
        "rotation_group": sp.rotation_group,
        "frequencies_cm1": sp.scaled_frequencies_cm1, "zpe_kJ_per_mol": th.zpe_J_per_mol * kj,
        "free_rotors": [{"replaces_cm1": r.replaces_cm1, "symmetry_number": r.symmetry_number,
                         "reduced_moment_amu_A2": r.reduced_moment_amu_A2} for r in sp.free_rotors],
        "hindered_rotors": hindered_rotor_records(sp),
        "temperature_K": th.temperature_K, "entropy_J_per_mol_K": th.entropy_J_per_mol_K,
        "heat_capacity_J_per_mol_K": th.heat_capacity_J_per_mol_K,
        "enthalpy_increment_kJ_per_mol": th.enthalpy_increment_J_per_mol * kj,
        "gibbs_increment_kJ_per_mol": th.gibbs_increment_J_per_mol * kj,
    }


def low_modes_record(low_modes) -> dict:
    """The "low_modes" entry of JSON output: {"method", "cutoff_cm1"}."""
    return {"method": low_modes.method, "cutoff_cm1": low_modes.cutoff_cm1}


def capture_limit_record(lim, rate_units: dict | None = None) -> dict:
    """One bimolecular channel's TST rate constant against the capture ceiling of its reactants."""
    unit = rate_unit(2, rate_units)
    return {
        "channel": lim.channel,
        "model": lim.model,
        "temperature_K": lim.temperature_K,
        "rate_constant_unit": unit,
        "tst_rate_constant": _rate_in(lim.k_tst_m3_per_s, 2, unit),
        "capture_rate_constant": _rate_in(lim.k_capture_m3_per_s, 2, unit),
        "capped_rate_constant": _rate_in(lim.k_series_m3_per_s, 2, unit),
        "tst_over_capture": lim.ratio,
        "exceeds_capture": lim.exceeded,
    }


def thermo_document(records: list[dict], low_modes, standard_pressure_Pa: float | None = None) -> dict:
    """The ``tstrate thermo --json`` document: one :func:`thermo_record` per species file
    (each with its ``file``), the standard pressure and the low-mode treatment."""
    from tstrate.units import P_STANDARD

    p0 = P_STANDARD if standard_pressure_Pa is None else standard_pressure_Pa
    return {"standard_pressure_bar": p0 / 1e5, "conventions": conventions_record(p0),
            "low_modes": low_modes_record(low_modes),
            "species": records}


def rates_document(study, records: list[dict], low_modes, plots=()) -> dict:
    """The ``tstrate rates --json`` document: :func:`channel_rates_record` of every channel, the
    low-mode treatment and the plot files written."""
    return {"study": study.file, "title": study.title, "low_modes": low_modes_record(low_modes),
            "temperature_K": records[0]["temperature_K"] if records else [],
            "channels": records, "plots": [str(p) for p in plots]}


def tunnelling_record(imaginary_frequency_cm1: float, V1_J_per_mol: float, V2_J_per_mol: float,
                      energy_floor_J_per_mol: float, temperature_K, kappas: dict, model: str) -> dict:
    """The ``tstrate tunnel --json`` document: kappa of one model (a list) or, for ``model``
    "all", an object keyed by model; the barrier heights and energy floor in kJ/mol."""
    kj = 1e-3
    return {
        "model": model,
        "imaginary_frequency_cm1": imaginary_frequency_cm1,
        "tunnelling_forward_barrier_kJ_per_mol": V1_J_per_mol * kj,
        "tunnelling_reverse_barrier_kJ_per_mol": V2_J_per_mol * kj,
        "tunnelling_energy_floor_kJ_per_mol": energy_floor_J_per_mol * kj,
        "temperature_K": temperature_K,
        "kappa": kappas if model == "all" else kappas[model],
    }


def _exp(x):
    import numpy as np

    return np.exp(x)


def _ln_kc_cm3(cr):
    """ln of Kc in (molecule cm-3)^dn (from molecule m-3 units)."""
    dn = cr.reverse_order - cr.order
    return np.asarray(cr.ln_kc, dtype=float) - dn * np.log(1e6)


def _opt(v, factor):
    return None if v is None else v * factor


def to_jsonable(obj):
    """Turn numpy arrays/scalars and nested containers into plain JSON values.

    Non-finite floats become ``null`` so the output stays valid JSON.
    """
    if isinstance(obj, dict):
        return {str(k): to_jsonable(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [to_jsonable(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return to_jsonable(obj.tolist())
    if isinstance(obj, (np.floating, float)):
        f = float(obj)
        return f if math.isfinite(f) else None
    if isinstance(obj, (np.integer,)):
        return int(obj)
    if isinstance(obj, (np.bool_,)):
        return bool(obj)
    if isinstance(obj, Path):
        return str(obj)
    return obj
