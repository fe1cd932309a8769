"""fits.json: the fitted expressions of a study as plain records in users' units.

Every key is listed, with its unit, in :mod:`tstrate.output.schema` (docs/outputs/fits-json.md).
"""

from __future__ import annotations

import math
from typing import Mapping

from tstrate.expressions.arrhenius import ArrheniusFit
from tstrate.expressions.chebyshev import ChebyshevFit
from tstrate.expressions.nasa7 import Nasa7Fit
from tstrate.expressions.choice import KIND_LABELS
from tstrate.expressions.pressure_table import PressureTableFit
from tstrate.expressions.troe import TroeFit, troe_bound_notes
from tstrate.output.records import to_jsonable
from tstrate.study.fits import StudyFits
from tstrate.units import P_STANDARD, rate_from_SI

_KJ = 1e-3   # J/mol -> kJ/mol
_BAR = 1e5   # Pa per bar

def _pct(x):
    return None if x is None or not math.isfinite(x) else 100.0 * float(x)


def arrhenius_record(fit: ArrheniusFit, unit: str | None = None) -> dict:
    """One Arrhenius expression with units in the keys.

    ``A`` is given in ``A_unit`` (default: the trade's unit for the order,
    e.g. cm3 molecule-1 s-1) and in SI per molecule (``A_SI``).
    """
    a_unit = unit or {1: "s-1", 2: "cm3 molecule-1 s-1", 3: "cm6 molecule-2 s-1"}[fit.order]
    return {
        "form": "modified Arrhenius k = A (T/T0)^n exp(-Ea/RT)" if fit.modified
        else "Arrhenius k = A exp(-Ea/RT)",
        "A": float(rate_from_SI(fit.A, fit.order, a_unit)),
        "A_unit": a_unit,
        "A_SI": fit.A,
        "A_SI_unit": {1: "s-1", 2: "m3 molecule-1 s-1", 3: "m6 molecule-2 s-1"}[fit.order],
        "n": fit.n,
        "T0_K": fit.T0_K,
        "Ea_kJ_per_mol": fit.Ea_J_per_mol * _KJ,
        "Ea_over_R_K": fit.Ea_over_R_K,
        "order": fit.order,
        "Tmin_K": fit.Tmin_K,
        "Tmax_K": fit.Tmax_K,
        "n_points": fit.n_points,
        "max_deviation_percent": _pct(fit.max_rel_deviation),
        "rms_deviation_percent": _pct(fit.rms_rel_deviation),
        "warning": fit.warning,
    }


def chebyshev_record(fit: ChebyshevFit, unit: str | None = None) -> dict:
    """One Chebyshev expression with units in the keys.

    Coefficients are given for log10 of k in ``k_unit`` (default: the trade's
    unit for the order) and in SI per molecule; they differ only in a_00.
    """
    k_unit = unit or {1: "s-1", 2: "cm3 molecule-1 s-1", 3: "cm6 molecule-2 s-1"}[fit.order]
    return {
        "form": "log10 k = sum_t sum_p a[t][p] T_t(x) T_p(y), T_n Chebyshev polynomials of the "
                "first kind, x = (2/T - 1/Tmin - 1/Tmax) / (1/Tmax - 1/Tmin), "
                "y = (2 ln P - ln Pmin - ln Pmax) / (ln Pmax - ln Pmin) (y = 0 without a "
                "pressure range); Venkatesh et al., AIChE J. 43, 1331 (1997)",
        "coefficients_log10_k": fit.coefficients_in(k_unit).tolist(),
        "k_unit": k_unit,
        "coefficients_log10_k_SI": fit.coefficients.tolist(),
        "k_SI_unit": {1: "s-1", 2: "m3 molecule-1 s-1", 3: "m6 molecule-2 s-1"}[fit.order],
        "coefficient_layout": "rows: 1/T terms (degree 0 first); columns: log P terms",
        "n_temperature_terms": fit.n_temperature,
        "n_pressure_terms": fit.n_pressure,
        "order": fit.order,
        "Tmin_K": fit.Tmin_K,
        "Tmax_K": fit.Tmax_K,
        "pressure_dependent": fit.pressure_dependent,
        "Pmin_bar": None if fit.Pmin_Pa is None else fit.Pmin_Pa / _BAR,
        "Pmax_bar": None if fit.Pmax_Pa is None else fit.Pmax_Pa / _BAR,
        "n_points": fit.n_points,
        "max_deviation_percent": _pct(fit.max_rel_deviation),
        "rms_deviation_percent": _pct(fit.rms_rel_deviation),
        "warning": fit.warning,
    }


def _troe_record(t: TroeFit, rate_units) -> dict:
    return {
        "form": "Troe falloff k = k_inf [Pr/(1 + Pr)] F, Pr = k0 [M] / k_inf",
        "k0_low_pressure": arrhenius_record(t.k0, (rate_units or {}).get(t.k0.order)),
        "kinf_high_pressure": arrhenius_record(t.kinf, (rate_units or {}).get(t.kinf.order)),
        "a": t.a,
        "T3_K": t.T3_K,
        "T1_K": t.T1_K,
        "T2_K": t.T2_K,
        "Fcent_formula": "(1-a) exp(-T/T3) + a exp(-T/T1) + exp(-T2/T) (last term only with T2)",
        "fit_max_deviation_tabulated_limits_percent": _pct(t.max_rel_deviation),
        "fit_rms_deviation_tabulated_limits_percent": _pct(t.rms_rel_deviation),
        "parameters_at_bound": [name for name, _ in t.at_bound],
        "parameters_at_bound_notes": list(troe_bound_notes(t)),
        "bath_gas": t.bath_gas,
        "source": t.source,
    }


def _nasa_record(n: Nasa7Fit) -> dict:
    return {
        "form": "Cp/R = a1 + a2 T + a3 T^2 + a4 T^3 + a5 T^4; H/RT = a1 + a2 T/2 + a3 T^2/3 "
                "+ a4 T^3/4 + a5 T^4/5 + a6/T; S/R = a1 ln T + a2 T + a3 T^2/2 + a4 T^3/3 "
                "+ a5 T^4/4 + a7 (T in K)",
        "Tmin_K": n.Tmin_K,
        "Tmid_K": n.Tmid_K,
        "Tmax_K": n.Tmax_K,
        "low_range_coefficients": list(n.low),
        "high_range_coefficients": list(n.high),
        "reference_pressure_bar": P_STANDARD / _BAR,
        "max_deviation_cp_percent": _pct(n.max_rel_error_cp),
        "max_deviation_h_percent": _pct(n.max_rel_error_h),
        "max_abs_deviation_h_kJ_per_mol": n.max_abs_error_h_J_per_mol * _KJ,
        "max_deviation_s_percent": _pct(n.max_rel_error_s),
        "n_points": n.n_points,
    }


def pressure_table_record(table: PressureTableFit, unit: str | None = None) -> dict:
    """A per-pressure table of Arrhenius expressions with units in the keys."""
    return {"form": "modified Arrhenius expressions at tabulated pressures, ln k linear in ln P between "
                    "them, the nearest pressure's expression outside the table",
            "order": table.order,
            "entries": [{"pressure_bar": None if p is None else p / _BAR, **arrhenius_record(f, unit)}
                        for p, _, f in table.rows()]}


def expression_record(kind: str, expression, rate_units: Mapping[int, str] | None = None) -> dict:
    """The record of an expression of ``kind`` (a key of
    :data:`~tstrate.expressions.choice.KIND_LABELS`)."""
    from tstrate.output.records import rate_unit

    if kind == "troe":
        return _troe_record(expression, rate_units)
    unit = rate_unit(expression.order, rate_units)
    if kind in ("chebyshev", "chebyshev_falloff"):
        return chebyshev_record(expression, unit)
    if kind == "pressure_table":
        return pressure_table_record(expression, unit)
    return arrhenius_record(expression, unit)


def export_record(cf, rate_units: Mapping[int, str] | None = None) -> dict:
    """What the mechanism file holds for one channel and how far it is from the computed rates."""
    e = cf.export
    rec = {"kind": e.kind, "form": KIND_LABELS[e.kind], "label": e.label,
           "requested_form": e.requested, "tolerance_percent": 100.0 * e.tolerance,
           "meets_tolerance": bool(e.meets_tolerance),
           "deviation_measured_at": "the computed grid and the points between grid points (temperatures midway "
                                    "in 1/T, pressures midway in ln P), from the numbers written",
           **e.deviation.to_record(),
           "forms_tried": [{"label": label, "max_deviation_percent": _pct(d)} for label, d in e.tried],
           "notes": list(e.notes), "warnings": list(e.warnings),
           "expression": expression_record(e.kind, e.expression, rate_units)}
    if e.kind.startswith("chebyshev"):
        rec["chebyshev_basis"] = [e.expression.n_temperature, e.expression.n_pressure]
    if e.kind == "troe":
        rec["troe_fit_max_deviation_tabulated_limits_percent"] = _pct(e.expression.max_rel_deviation)
    return rec


def mechanism_fit_record(cf, rate_units: Mapping[int, str] | None = None) -> dict:
    """The expression the mechanism file holds for one channel (``cf`` a channel of
    :class:`tstrate.study.fits.StudyFits`), whatever its form, with its measured deviation."""
    return export_record(cf, rate_units)


def fits_to_json(fits: StudyFits, rate_units: Mapping[int, str] | None = None) -> dict:
    """A JSON-ready dict of everything in ``fits`` (units in every key).

    ``rate_units`` maps order -> unit of A (default the trade's units,
    s-1 / cm3 molecule-1 s-1 / cm6 molecule-2 s-1); A is also given in SI.
    """
    units = dict(rate_units or {})
    channels = []
    for c in fits.channels:
        u = units.get(c.order)
        entry = {
            "name": c.name,
            "equation": c.equation,
            "reactants": list(c.reactants),
            "products": list(c.products),
            "order": c.order,
            "reverse_order": c.reverse_order,
            "fitted_temperature_range_K": [float(c.temperature_K.min()), float(c.temperature_K.max())],
            "fitted_temperatures_K": c.temperature_K,
            "rate_constant_data_SI": c.k_SI,
            "rate_constant_data_SI_unit": {1: "s-1", 2: "m3 molecule-1 s-1",
                                           3: "m6 molecule-2 s-1"}[c.order],
            "includes_tunnelling": c.includes_tunnelling,
            "tunnelling": c.tunnelling,
            "method": c.method,
            "arrhenius": arrhenius_record(c.arrhenius, u),
            "modified_arrhenius": arrhenius_record(c.modified, u),
            "split": None if c.split is None else {
                "break_K": c.split.break_K,
                "jump_at_break_percent": _pct(c.split.jump_at_break),
                "max_deviation_percent": _pct(c.split.max_rel_deviation),
                "low": arrhenius_record(c.split.low, u),
                "high": arrhenius_record(c.split.high, u),
            },
            "chebyshev": None if c.chebyshev is None else chebyshev_record(c.chebyshev, u),
            "chebyshev_falloff": None if c.chebyshev_falloff is None
            else chebyshev_record(c.chebyshev_falloff, u),
            "pressure_table": None if c.pressure_table is None
            else pressure_table_record(c.pressure_table, u),
            # what the mechanism holds (its kind, record and measured deviation)
            "mechanism_expression": c.mechanism_kind,
            "mechanism": export_record(c, units),
            "Kc_check_max_abs_ln_difference": c.max_abs_ln_kc_error,
            "falloff_troe": None if c.troe is None else _troe_record(c.troe, units),
            "warnings": list(c.warnings),
        }
        channels.append(entry)
    species = []
    for s in fits.species:
        species.append({
            "name": s.name,
            "formula": s.formula,
            "composition": s.composition,
            "role": s.role,
            "source": s.source,
            "electronic_energy_kJ_per_mol": s.energy_J_per_mol * _KJ,
            "zpe_kJ_per_mol": s.zpe_J_per_mol * _KJ,
            "enthalpy_offset_kJ_per_mol": s.enthalpy_offset_J_per_mol * _KJ,
            "H0K_exported_kJ_per_mol": s.h0_exported_J_per_mol * _KJ,
            "H298_exported_kJ_per_mol": float(s.nasa7.h_J_per_mol(298.15)) * _KJ
            if s.nasa7.Tmin_K <= 298.15 <= s.nasa7.Tmax_K else None,
            "nasa7": _nasa_record(s.nasa7),
            "nasa7_deviations_at_fitted_temperatures": None if s.errors_at_extra is None
            else {"max_deviation_cp_percent": _pct(s.errors_at_extra["cp"]),
                  "max_deviation_h_percent": _pct(s.errors_at_extra["h"]),
                  "max_deviation_s_percent": _pct(s.errors_at_extra["s"])},
            "note": s.note,
        })
    out = {
        "study": fits.study_file,
        "title": fits.title,
        "created_utc": fits.created,
        "tstrate_version": fits.version,
        "caution": "estimates from transition-state theory on computed stationary points; "
                   "check them against measurements before relying on them",
        "low_modes": {"method": fits.low_modes.method, "cutoff_cm1": fits.low_modes.cutoff_cm1},
        "fitted_temperatures_K": fits.temperature_K,
        "enthalpy_zero": {
            "description": "H_export = E + ZPE + [H(T) - H(0)] - sum_j n_j c_j with per-element "
                           "offsets c_j (least squares over the exported study species); "
                           "reaction energies and Kc are unchanged; values are not enthalpies "
                           "of formation",
            "element_offsets_kJ_per_mol": {e: c * _KJ for e, c in fits.element_offsets_J_per_mol.items()},
        },
        "standard_state": "1 bar (NASA polynomials); rate constants per molecule",
        "bath_gas": fits.bath_gas,
        "species": species,
        "channels": channels,
        "tolerance_percent": 100.0 * fits.channels[0].export.tolerance if fits.channels else None,
        "tolerance_missed": [c.name for c in fits.channels
                             if not c.export.meets_tolerance and math.isfinite(c.export.deviation.max_rel)],
        "warnings": list(fits.warnings) + [w for c in fits.channels for w in c.warnings],
    }
    return to_jsonable(out)


__all__ = ["arrhenius_record", "chebyshev_record", "fits_to_json", "mechanism_fit_record", "export_record",
           "expression_record", "pressure_table_record"]
