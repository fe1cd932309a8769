"""Conformer ensembles in users' units: the ``conformers`` record of results.json, the table
``tables/conformers.csv`` and the report section.

Populations are Boltzmann fractions (0 to 1) of each conformer in its ensemble; energies are
relative to the ensemble's representative (its lowest conformer), in kJ/mol.
"""

from __future__ import annotations

import numpy as np

from tstrate.physics.ensembles import conformer_members

CONFORMER_COLUMNS = ["species", "conformer", "T [K]", "population [1]", "relative E0 [kJ mol-1]",
                     "relative E_electronic [kJ mol-1]", "symmetry number [1]", "optical isomers [1]"]


def _members(result, name):
    sp = result.study.species[name]
    return sp, conformer_members(sp)


def conformer_records(result) -> list[dict]:
    """One entry per conformer ensemble of the study (an empty list without any)."""
    out = []
    for name, parts in result.conformers.items():
        sp, members = _members(result, name)
        e_ref = sp.energy_J_per_mol
        out.append({
            "species": name, "kind": sp.kind, "temperature_K": parts.members[0].temperature_K,
            "conformers": [{
                "label": lb, "file": m.source,
                "relative_zpe_energy_kJ_per_mol": float(d) / 1e3,
                "relative_electronic_energy_kJ_per_mol": (m.energy_J_per_mol - e_ref) / 1e3,
                "symmetry_number": m.symmetry_number, "optical_isomers": m.optical_isomers,
                "population": x,
            } for lb, m, d, x in zip(parts.labels, members, parts.relative_zpe_J_per_mol, parts.populations)],
        })
    return out


def conformer_effect_records(result) -> list[dict]:
    """Per channel that uses an ensemble: k and Kc over those with the representatives alone."""
    return [{"channel": e["channel"], "ensembles": list(e["ensembles"]), "temperature_K": e["temperature_K"],
             "rate_constant_ratio": e["k_ratio"], "Kc_ratio": e["Kc_ratio"]}
            for e in getattr(result, "conformer_effects", ())]


def conformer_rows(result):
    """(header, rows) of tables/conformers.csv: one row per ensemble, conformer and temperature."""
    rows = []
    for rec in conformer_records(result):
        for c in rec["conformers"]:
            for t, x in zip(rec["temperature_K"], c["population"]):
                rows.append([rec["species"], c["label"], float(t), float(x), c["relative_zpe_energy_kJ_per_mol"],
                             c["relative_electronic_energy_kJ_per_mol"], c["symmetry_number"],
                             c["optical_isomers"]])
    return CONFORMER_COLUMNS, rows


def ts_shares_record(cr) -> list[dict] | None:
    """The ``transition_state_conformer_shares`` of a channel record: the share k_j / k of each TS
    conformer (null for one TS structure)."""
    if getattr(cr, "ts_conformer_shares", None) is None:
        return None
    return [{"label": lb, "share": s} for lb, s in cr.ts_conformer_shares.items()]


ENSEMBLE_NOTE = ("Each ensemble's partition function is q = sum_i q_i exp(-(E0_i - E0_ref)/kT) over its "
                 "conformers, each with its own frequencies, symmetry number and optical isomers (E0: "
                 "electronic energy plus ZPE, relative to the lowest conformer). A transition-state ensemble "
                 "sums the rates through each of its conformers, each with its own tunnelling factor. "
                 "Conformers that differ only along a torsion treated as a hindered or free rotor are one "
                 "well and are not summed twice. The falloff and energised-molecule steps count the states "
                 "of an energised reactant over all its conformers (each density shifted by its E0 and "
                 "weighted by its optical isomers over its symmetry number), and those of a transition-state "
                 "ensemble the same way, with the representative TS conformer's Eckart transmission for all "
                 "(a warning says so). Isotope beta factors of an ensemble are its representative's.")


def conformer_report_blocks(result, doc, pick) -> list:
    """The report's "Conformer ensembles" blocks; ``pick(T)`` chooses the temperature columns."""
    from tstrate.output import report as rp

    recs = doc.get("conformers") or []
    if not recs:
        return []
    B = [rp.Heading("Conformer ensembles"), rp.Paragraph(ENSEMBLE_NOTE)]
    for rec in recs:
        T = np.asarray(rec["temperature_K"])
        idx = pick(T)
        head = ("conformer", "E0 - E0_ref / kJ mol-1", "symmetry number", "optical isomers",
                *(f"population at {T[i]:g} K" for i in idx))
        rows = tuple((c["label"], f"{c['relative_zpe_energy_kJ_per_mol']:.2f}", c["symmetry_number"],
                      c["optical_isomers"], *(f"{c['population'][i]:.3g}" for i in idx))
                     for c in rec["conformers"])
        B.append(rp.Table(head, rows, f"Ensemble {rec['species']} ({rec['kind'].replace('_', ' ')}); "
                                      "full table in tables/conformers.csv."))
    effects = doc.get("conformer_effects") or []
    if effects:
        T = np.asarray(effects[0]["temperature_K"])
        idx = pick(T)
        B.append(rp.Table(("channel", "ensembles", *(f"k ratio at {T[i]:g} K" for i in idx),
                           *(f"Kc ratio at {T[i]:g} K" for i in idx)),
                          tuple((e["channel"], ", ".join(e["ensembles"]),
                                 *(f"{e['rate_constant_ratio'][i]:.3g}" for i in idx),
                                 *(f"{e['Kc_ratio'][i]:.3g}" for i in idx)) for e in effects),
                          "How much the conformer ensembles change each rate constant and equilibrium "
                          "constant: the value with the ensembles over the value with each ensemble's "
                          "lowest conformer alone."))
    for r in doc["channels"]:
        shares = r.get("transition_state_conformer_shares")
        if not shares:
            continue
        T = np.asarray(r["temperature_K"])
        idx = pick(T)
        B.append(rp.Table(("TS conformer", *(f"share of k at {T[i]:g} K" for i in idx)),
                          tuple((s["label"], *(f"{s['share'][i]:.3g}" for i in idx)) for s in shares),
                          f"Channel {r['name']}: the share of the rate through each transition-state "
                          "conformer (tunnelling included)."))
    return B
