"""Comparison results as plain records (units in the keys) and report blocks.

Shared by ``tstrate compare`` and ``tstrate run``.
"""

from __future__ import annotations


#: abundance kind of the physics -> (kind written, unit written, factor from the internal value)
_ABUNDANCE_OUT = {
    "number_density_m3": ("number_density", "molecule cm-3", 1e-6),
    "partial_pressure_Pa": ("partial_pressure", "bar", 1e-5),
    "mixing_ratio": ("mixing_ratio", "mol mol-1", 1.0),
    "relative_humidity_percent": ("relative_humidity", "%", 1.0),
}


def abundance_in_output_units(kind: str, value):
    """(kind, value, unit) of an abundance as written: number densities in molecule cm-3,
    partial pressures in bar, mixing ratios in mol/mol, relative humidities in %."""
    import numpy as np

    out_kind, unit, factor = _ABUNDANCE_OUT[kind]
    v = np.asarray(value, dtype=float) * factor
    return out_kind, (float(v) if v.ndim == 0 else v), unit


def _kc_unit(delta_n: int) -> str:
    n = -delta_n
    return "cm3 molecule-1" if n == 1 else f"cm{3 * n} molecule-{n}"


def scenario_records(result, rate_units=None) -> list[dict]:
    """One plain record per abundance of a comparison result (units in the keys)."""
    import numpy as np

    from tstrate.output.records import rate_unit
    from tstrate.units import rate_from_SI

    comp = result.comparison
    T = result.temperature_K
    kj = 1e-3
    barriers = []
    for b in result.barriers:
        barriers.append({
            "channel": b.channel, "kind": b.kind,
            "barrier_classical_kJ_per_mol": b.classical_from_reactants_J_per_mol * kj,
            "barrier_zpe_kJ_per_mol": b.zpe_from_reactants_J_per_mol * kj,
            "barrier_from_complex_classical_kJ_per_mol": _opt(b.classical_from_complex_J_per_mol, kj),
            "barrier_from_complex_zpe_kJ_per_mol": _opt(b.zpe_from_complex_J_per_mol, kj),
            "complex_binding_zpe_kJ_per_mol": _opt(b.complex_binding_zpe_J_per_mol, kj),
            "reaction_energy_zpe_kJ_per_mol": b.reaction_energy_zpe_J_per_mol * kj,
            "delta_G_activation_kJ_per_mol": b.delta_G_activation_J_per_mol * kj,
            "delta_G_activation_from_complex_kJ_per_mol": _opt(b.delta_G_activation_from_complex_J_per_mol, kj),
        })
    out = []
    for a, ab in enumerate(comp.abundances):
        routes = []
        for r in result.routes:
            unit = rate_unit(r.order, rate_units)
            ceq = r.complex_equilibrium
            rec = {
                "channel": r.channel, "kind": r.kind, "catalyst_power": r.catalyst_power,
                "order": r.order,
                "rate_constant": rate_from_SI(r.rates.k, r.order, unit),
                "rate_constant_unit": unit,
                "complex": r.complex,
                "complex_Kc": None if ceq is None else np.exp(ceq.ln_Kc - ceq.delta_n * np.log(1e6)),
                "complex_Kc_unit": None if ceq is None else _kc_unit(ceq.delta_n),
                "complex_Kp": None if ceq is None else np.exp(ceq.ln_Kp),
                "complex_Kp_unit": None if ceq is None else f"bar^{ceq.delta_n} (1 bar standard state)",
                "k_unimolecular_from_complex_per_s": r.k_unimolecular_from_complex_per_s,
                "complex_per_free_substrate": (None if r.complex_per_free_substrate is None
                                               else r.complex_per_free_substrate[a]),
                "pseudo_first_order_per_s": r.pseudo_first_order_per_s[a],
                "ratio_to_bare": r.ratio_to_bare[a],
            }
            if r.catalyst_power:
                rec["crossover_number_density_per_cm3"] = r.crossover_catalyst_m3 * 1e-6
                _, given, unit_given = abundance_in_output_units(ab.kind, result.crossover_in_given_unit(r, a))
                rec["crossover_abundance"] = given
                rec["crossover_abundance_unit"] = unit_given
                rec["faster_than_bare_K"] = [
                    {"low_K": x.low_K, "high_K": x.high_K, "low_at_grid_edge": x.low_at_grid_edge,
                     "high_at_grid_edge": x.high_at_grid_edge} for x in r.faster_ranges[a]]
            routes.append(rec)
        kind, value, unit = abundance_in_output_units(ab.kind, ab.value)
        out.append({
            "name": comp.name,
            "description": comp.description,
            "abundance": {"kind": kind, "value": value, "unit": unit, "label": ab.label,
                          "phase": ab.abundance.phase if ab.kind == "relative_humidity_percent" else None,
                          "total_pressure_bar": None if ab.total_pressure_Pa is None
                          else ab.total_pressure_Pa / 1e5, "text": ab.describe()},
            "reference": comp.reference, "substrate": comp.substrate, "catalyst": comp.catalyst,
            "catalyst_dimer": comp.catalyst_dimer,
            "temperature_K": T,
            "catalyst_number_density_per_cm3": result.catalyst_m3[a] * 1e-6,
            "dimer_number_density_per_cm3": None if result.dimer_m3 is None else result.dimer_m3[a] * 1e-6,
            "dimer_Kp_per_bar": (None if result.dimer_equilibrium is None
                                 else np.exp(result.dimer_equilibrium.ln_Kp)),
            "free_substrate_fraction": result.free_substrate_fraction[a],
            "routes": routes,
            "barriers": barriers,
            "rate_model": "canonical TST, high-pressure limit; pseudo-first-order rates per free substrate",
        })
    return out


def _opt(v, factor):
    return None if v is None else v * factor


def comparison_records(results, rate_units=None) -> list[dict]:
    """Scenario records of every comparison result (one per comparison and abundance)."""
    return [rec for res in results for rec in scenario_records(res, rate_units)]


def comparison_document(study, records: list[dict], low_modes, plots=()) -> dict:
    """The ``tstrate compare --json`` document (``records`` from :func:`comparison_records`), with the
    low-mode treatment and the plot files written."""
    from tstrate.output.records import low_modes_record

    return {"study": study.file, "title": study.title, "low_modes": low_modes_record(low_modes),
            "comparisons": records, "plots": [str(p) for p in plots]}


def comparison_report_blocks(results, records) -> list:
    """Report blocks: per scenario, a table of route ratios and where each route wins."""
    import numpy as np

    from tstrate.output import report as rp

    blocks = []
    for rec in records:
        routes = rec["routes"]
        T = np.asarray(rec["temperature_K"])
        idx = sorted(set(np.linspace(0, len(T) - 1, min(6, len(T))).round().astype(int).tolist()))
        header = ("T / K", f"[{rec['catalyst']}] / cm-3") + tuple(
            f"k'({r['channel']}) / s-1" for r in routes) + tuple(
            f"{r['channel']} / bare" for r in routes[1:])
        rows = tuple((f"{T[i]:g}", f"{rec['catalyst_number_density_per_cm3'][i]:.3g}")
                     + tuple(f"{r['pseudo_first_order_per_s'][i]:.3g}" for r in routes)
                     + tuple(f"{r['ratio_to_bare'][i]:.3g}" for r in routes[1:]) for i in idx)
        blocks.append(rp.Table(header, rows, f"{rec['name']}: {rec['abundance']['text']}; "
                               "pseudo-first-order loss of the substrate by each route."))
        lines = []
        for r in routes[1:]:
            ranges = r["faster_than_bare_K"]
            if not ranges:
                lines.append(f"{r['channel']}: never faster than the bare route on this grid")
            else:
                spans = ", ".join(f"{x['low_K']:.0f}-{x['high_K']:.0f} K" for x in ranges)
                lines.append(f"{r['channel']}: faster than the bare route at {spans}")
        blocks.append(rp.Bullets(tuple(lines)))
    if records:
        rec = records[0]
        rows = tuple((b["channel"], _fmt(b["barrier_classical_kJ_per_mol"]), _fmt(b["barrier_zpe_kJ_per_mol"]),
                      _fmt(b["barrier_from_complex_classical_kJ_per_mol"]),
                      _fmt(b["barrier_from_complex_zpe_kJ_per_mol"]), _fmt(b["complex_binding_zpe_kJ_per_mol"]))
                     for b in rec["barriers"])
        blocks.append(rp.Table(("channel", "barrier classical / kJ mol-1", "barrier ZPE / kJ mol-1",
                                "from complex, classical / kJ mol-1", "from complex, ZPE / kJ mol-1",
                                "complex binding ZPE / kJ mol-1"), rows,
                               "Barriers relative to the separated reactants (catalysts included) and to "
                               "the pre-reactive complex."))
    return blocks


def _fmt(v) -> str:
    return "-" if v is None else f"{v:.1f}"
