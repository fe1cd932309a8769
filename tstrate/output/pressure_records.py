"""Falloff and energised-molecule results as plain records (unit-bearing keys), ready for JSON.

The one place where the SI values of :mod:`tstrate.physics.unimolecular` and
:mod:`tstrate.physics.activation` meet the units users see: pressures in bar,
number densities in molecule cm^-3, energies in kJ/mol and cm^-1, rate
constants in the study's units (s^-1 for k(T, [M]) and k_inf; the bimolecular
unit, cm3 molecule-1 s-1 by default, for k_0 and collision rate constants).
"""

from __future__ import annotations

import numpy as np

from tstrate.output.records import rate_unit
from tstrate.physics.states import CM1_J_PER_MOL
from tstrate.units import K_B, rate_from_SI as _rate_in

_BAR = 1e5
_CM3 = 1e-6   # m^-3 -> cm^-3


def _opt(x, factor=1.0):
    return None if x is None else np.asarray(x, dtype=float) * factor


def model_record(model) -> dict:
    """How k(E) of a channel was built."""
    r, t = model.reactant_rotors, model.ts_rotors
    return {
        "reactant": model.reactant.name,
        "transition_state": model.transition_state.name,
        "tunnelling_in_k_of_E": model.tunnelling,
        "barrier_zpe_kJ_per_mol": model.barrier_J_per_mol * 1e-3,
        "barrier_zpe_cm1": model.barrier_J_per_mol / CM1_J_PER_MOL,
        "grain_cm1": model.grain_cm1,
        "requested_grain_cm1": model.requested_grain_cm1,
        "energy_grid_top_cm1": float(model.rate.energies_J_per_mol[-1] / CM1_J_PER_MOL),
        "reaction_path_degeneracy": model.path_degeneracy,
        "centrifugal_factor": model.rate.centrifugal_factor,
        "external_rotation": model.external_rotation,
        "rotors": {"unique_axis": r.axis, "reactant_B2d_cm1": r.B2d_cm1, "reactant_K_cm1": r.K_cm1,
                   "ts_B2d_cm1": t.B2d_cm1, "ts_K_cm1": t.K_cm1},
    }


def _master_equation_record(info) -> dict:
    return {
        "grain_cm1": info.grain_cm1, "energy_ceiling_cm1": info.top_cm1, "grains_solved": info.n_grains,
        "kernel": info.kernel, "reservoir_below_cm1": info.reservoir_cm1,
        "min_eigenvalue_separation": info.min_separation,
        "check": {"temperature_K": info.check_temperature_K,
                  "number_density_per_cm3": info.check_number_density_m3 * _CM3,
                  "grain_cm1": info.check_grain_cm1,
                  "grain_change_percent": 100.0 * info.grain_change,
                  "ceiling_change_percent": 100.0 * info.ceiling_change,
                  "reservoir_change_percent": 100.0 * info.reservoir_change},
    }


def falloff_channel_record(cf, rate_units: dict | None = None) -> dict:
    """One channel's falloff with units in the keys (see ``tstrate falloff --help`` for the list)."""
    u1 = rate_unit(1, rate_units)
    u2 = rate_unit(2, rate_units)
    eff = cf.efficiency
    de = eff.delta_E_J_per_mol
    fit = cf.troe
    m_fit = cf.troe_fit_number_density_m3
    troe_dev = cf.troe_per_s / cf.rate_constant_per_s - 1.0
    rec = {
        "name": cf.name,
        "order": 1,
        "falloff_computed": True,
        "temperature_K": cf.temperature_K,
        "pressure_bar": (_opt(cf.pressure_Pa, 1 / _BAR) if cf.pressure_Pa is not None
                         else cf.number_density_m3 * K_B * cf.temperature_K[:, None] / _BAR),
        "number_density_per_cm3": cf.number_density_m3 * _CM3,
        "rate_constant": _rate_in(cf.rate_constant_per_s, 1, u1),
        "rate_constant_unit": u1,
        "k_high_pressure": _rate_in(cf.k_high_pressure_per_s, 1, u1),
        "k_high_pressure_unit": u1,
        "k_low_pressure": _rate_in(cf.k_low_pressure_m3_per_s, 2, u2),
        "k_low_pressure_unit": u2,
        "lindemann_rate_constant": _rate_in(cf.lindemann_per_s, 1, u1),
        "lindemann_k_low_pressure": "the k0 of the Troe form (troe.k_low_pressure)",
        "canonical_tst_rate_constant": _rate_in(cf.canonical_tst_per_s, 1, u1),
        "k_high_pressure_over_canonical_tst": cf.k_high_pressure_per_s / cf.canonical_tst_per_s,
        "troe": {
            "a": fit.a, "T3_K": fit.T3_K, "T1_K": fit.T1_K, "T2_K": fit.T2_K,
            "parameters_at_bound": [name for name, _ in fit.at_bound],
            "Fcent": cf.troe_Fcent,
            "k_low_pressure": _rate_in(cf.troe_k0_m3_per_s, 2, u2),
            "k_low_pressure_unit": u2,
            "k_low_pressure_kind": ("fitted effective k0 (Eckart tunnelling)" if cf.model.tunnelling == "eckart"
                                    else "master-equation low-pressure limit" if cf.master_equation is not None
                                    else "strong-collision low-pressure limit"),
            "k_high_pressure_kind": ("master-equation high-pressure limit" if cf.master_equation is not None
                                     else "strong-collision high-pressure limit"),
            "max_deviation_percent": 100.0 * fit.max_rel_deviation,
            "rms_deviation_percent": 100.0 * fit.rms_rel_deviation,
            "fitted_on": {"min_number_density_per_cm3": float(m_fit.min() * _CM3),
                          "max_number_density_per_cm3": float(m_fit.max() * _CM3),
                          "points_per_temperature": int(m_fit.size)},
            "rate_constant": _rate_in(cf.troe_per_s, 1, u1),
            "max_deviation_on_study_grid_percent": 100.0 * float(np.max(np.abs(troe_dev))),
        },
        "bath_gas": cf.bath.name,
        "collision_efficiency": eff.beta,
        "collisions": {
            "bath_gas": cf.bath.name,
            "reactant_lennard_jones": {"sigma_A": cf.model.reactant.lennard_jones[0],
                                       "epsilon_K": cf.model.reactant.lennard_jones[1]},
            "bath_lennard_jones": {"sigma_A": cf.bath.sigma_A, "epsilon_K": cf.bath.epsilon_K,
                                   "source": cf.bath.source},
            "collision_integral": cf.settings.collision_integral,
            "collision_rate_constant": _rate_in(cf.collision_rate_m3_per_s, 2, u2),
            "collision_rate_constant_unit": u2,
            "energy_transfer": eff.kind,
            "delta_E_down_cm1": (_opt(de, 1 / CM1_J_PER_MOL) if eff.kind == "down" else None),
            "delta_E_all_cm1": (_opt(de, 1 / CM1_J_PER_MOL) if eff.kind == "all" else None),
            "energy_factor_FE": eff.energy_factor,
            "collision_efficiency": eff.beta,
        },
        "pressure_method": cf.pressure_method,
        "master_equation": None if cf.master_equation is None else _master_equation_record(cf.master_equation),
        "warnings": list(cf.warnings),
    }
    rec.update(model_record(cf.model))
    return rec


def study_falloff_record(result, rate_units: dict | None = None) -> dict:
    """The whole ``tstrate falloff --json`` document."""
    channels = [falloff_channel_record(c, rate_units) for c in result.channels]
    return {
        "study": result.study_file,
        "title": result.title,
        "bath_gas": result.bath.name,
        "bath_gas_lennard_jones": {"sigma_A": result.bath.sigma_A, "epsilon_K": result.bath.epsilon_K,
                                   "source": result.bath.source},
        "channels": channels,
        "not_computed": [{"name": s.name, "order": s.order, "falloff_computed": False, "reason": s.reason}
                         for s in result.skipped],
        "warnings": list(result.warnings),
    }


def _grid_record(g, profile: bool, rate_units: dict | None = None) -> dict:
    de = g.delta_E_down_J_per_mol
    half = g.half_number_density_m3
    rec = {
        "temperature_K": g.temperature_K,
        "pressure_bar": _opt(g.pressure_Pa, 1 / _BAR),
        "number_density_per_cm3": g.number_density_m3 * _CM3,
        "thermal_energy_kJ_per_mol": g.thermal_energy_J_per_mol * 1e-3,
        "energy_kJ_per_mol": g.energy_J_per_mol * 1e-3,
        "energy_cm1": g.energy_J_per_mol / CM1_J_PER_MOL,
        "rate_constant_per_s": g.rate_per_s,
        "below_threshold": [bool(b) for b in np.atleast_1d(g.below_threshold)],
        "collision_rate_constant": _rate_in(g.collision_rate_m3_per_s, 2, rate_unit(2, rate_units)),
        "collision_rate_constant_unit": rate_unit(2, rate_units),
        "collision_efficiency": g.collision_efficiency,
        "collision_frequency_per_s": g.collision_frequency_per_s,
        "fraction_stern_volmer": g.stern_volmer,
        "fraction_stepwise": g.stepwise,
        "fraction_master_equation": g.master_equation,
        "delta_E_down_cm1": _opt(de, 1 / CM1_J_PER_MOL),
    }
    if not profile:
        rec["half_quenching_number_density_per_cm3"] = half * _CM3
        rec["half_quenching_pressure_bar"] = half * K_B * g.temperature_K / _BAR
    return rec


def excitation_record(res, rate_units: dict | None = None, *, k_of_e_points: int = 200) -> dict:
    """One excitation: k(E) (sampled), fractions against pressure and along altitude."""
    model = res.model
    rate = model.rate
    i0 = rate.barrier_index
    idx = np.unique(np.linspace(i0, rate.energies_J_per_mol.size - 1, k_of_e_points).round().astype(int))
    rec = {
        "name": res.spec.name,
        "channel": res.spec.channel,
        "excitation": res.spec.description,
        "excitation_energy_kJ_per_mol": res.spec.energy_J_per_mol * 1e-3,
        "excitation_energy_cm1": res.spec.energy_J_per_mol / CM1_J_PER_MOL,
        "below_threshold": res.below_threshold,
        "pressure_scan": None if res.pressure is None else _grid_record(res.pressure, False, rate_units),
        "altitude_profile": None,
        "k_of_E": {"energy_kJ_per_mol": rate.energies_J_per_mol[idx] * 1e-3,
                   "energy_cm1": rate.energies_J_per_mol[idx] / CM1_J_PER_MOL,
                   "rate_constant_per_s": rate.rate_per_s[idx],
                   "note": "from the reactant's zero-point level, sampled from the barrier to the top of the grid"},
        "warnings": list(res.warnings),
    }
    if res.profile is not None:
        prof = _grid_record(res.profile, True, rate_units)
        prof = {"source": res.profile_source, "altitude_km": res.altitude_m * 1e-3, **prof}
        rec["altitude_profile"] = prof
    rec.update(model_record(model))
    return rec


def excitation_document(study, records: list[dict], bath_gas: str, plots=()) -> dict:
    """The ``tstrate excite --json`` document (``records`` from :func:`excitation_record`)."""
    return {"study": study.file, "title": study.title, "bath_gas": bath_gas,
            "excitations": records, "plots": [str(p) for p in plots]}
