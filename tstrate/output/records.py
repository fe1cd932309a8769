"""Results as plain records: numbers with unit-bearing keys, ready for JSON and CSV.

Every converter here is the single place where a result's internal SI values
meet the units users see.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from tstrate.units import DEFAULT_RATE_UNIT, rate_from_SI


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
        "ln_Kc": cr.ln_kc,
        "Kc_unit": f"(molecule cm-3)^{cr.reverse_order - cr.order}",
        "Kc": _kc_cm3(cr),
        "Kp_1bar": _exp(cr.ln_kp),
        "barrier_classical_kJ_per_mol": cr.barrier_classical_J_per_mol * kj,
        "barrier_zpe_kJ_per_mol": cr.barrier_zpe_J_per_mol * kj,
        "barrier_from_complex_classical_kJ_per_mol": _opt(cr.barrier_from_complex_classical_J_per_mol, kj),
        "barrier_from_complex_zpe_kJ_per_mol": _opt(cr.barrier_from_complex_zpe_J_per_mol, kj),
        "reaction_energy_zpe_kJ_per_mol": cr.reaction_energy_zpe_J_per_mol * kj,
        "imaginary_frequency_cm1": cr.imaginary_frequency_cm1,
        "eckart_forward_barrier_kJ_per_mol": cr.eckart_V1_J_per_mol * kj,
        "eckart_reverse_barrier_kJ_per_mol": cr.eckart_V2_J_per_mol * kj,
        "tunnelling_energy_floor_kJ_per_mol": cr.energy_floor_J_per_mol * kj,
        "delta_H_activation_kJ_per_mol": cr.delta_H_J_per_mol * kj,
        "delta_S_activation_J_per_mol_K": cr.delta_S_J_per_mol_K,
        "delta_G_activation_kJ_per_mol": cr.delta_G_J_per_mol * kj,
        "reaction_path_degeneracy": cr.degeneracy,
        "standard_state": "1 bar (activation quantities, Kp); rate constants per molecule",
    }


def _exp(x):
    import numpy as np

    return np.exp(x)


def _kc_cm3(cr):
    import numpy as np

    dn = cr.reverse_order - cr.order
    return np.exp(cr.ln_kc - dn * np.log(1e6))  # (m^-3)^dn -> (cm^-3)^dn


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
