"""Isotopologue results in users' units: the ``isotopes`` record of results.json and of
``tstrate isotopes --json``, the CSV tables and the report section.

Beta factors and fractionation are given as 1000 ln beta and epsilon = (alpha - 1) x 1000 in
permil; KIEs and their factors are plain ratios k_light / k_heavy.
"""

from __future__ import annotations

import numpy as np

from tstrate.physics.isotopes import KIE_FACTORS, MASS_DEPENDENCE_STATEMENT, isotope_label


def _refs(r) -> dict:
    return {"m1_amu": r.m1_amu, "m2_amu": r.m2_amu, "m3_amu": r.m3_amu,
            "equilibrium_high_temperature_limit": r.equilibrium_high_T,
            "equilibrium_low_temperature_limit": r.equilibrium_low_T,
            "kinetic_classical_limit": r.kinetic_classical}


def isotopes_record(res) -> dict:
    """The ``isotopes`` record (units in the keys)."""
    subs = []
    for s in res.substitutions:
        sub = s.substitution
        subs.append({
            "label": sub.label, "isotope": isotope_label(sub.element, sub.mass_number), "element": sub.element,
            "mode": sub.mode, "mass_light_amu": s.mass_light_amu, "mass_heavy_amu": s.mass_heavy_amu,
            "atoms": {k: [i + 1 for i in v] for k, v in sub.atoms.items()},
            "beta": [{"species": b.species, "thousand_ln_beta_permil": 1000 * b.ln_beta,
                      "beta": np.exp(b.ln_beta),
                      "equivalent_positions": [[i + 1 for i in c] for c in b.positions],
                      "thousand_ln_f_by_position_permil": [1000 * x for x in b.ln_f_by_position]}
                     for b in s.betas],
            "kie": [{"channel": k.channel, "kie": k.kie, "kie_no_tunnelling": k.kie_no_tunnelling,
                     "kinetic_epsilon_permil": 1000 * (1 / k.kie - 1),
                     "factors": {n: k.factors[n] for n in KIE_FACTORS},
                     "imaginary_frequency_ratio": k.imaginary_frequency_ratio} for k in s.kie],
        })
    return {
        "temperature_K": res.temperature_K,
        "substitutions": subs,
        "fractionation": [{"isotope": f.label, "species_a": f.species_a, "species_b": f.species_b,
                           "alpha": f.alpha, "epsilon_permil": 1000 * (f.alpha - 1)} for f in res.fractionation],
        "three_isotope": [{"element": t.element, "isotopes": list(t.labels), "kind": t.kind, "name": t.name,
                           "theta": t.theta, "references": _refs(t.references)} for t in res.three_isotope],
        "route_mix": [{"isotope": m.label, "comparison": m.comparison, "abundance": m.abundance,
                       "temperature_K": m.temperature_K, "kie": m.kie,
                       "kinetic_epsilon_permil": 1000 * (1 / m.kie - 1),
                       "loss_share": [{"channel": c, "share": w} for c, w in m.weights.items()]}
                      for m in res.route_mix],
        "positions": [_position_record(p) for p in getattr(res, "positions", ())],
        "mass_dependence": res.statement,
    }


def _position_record(p) -> dict:
    return {"label": p.label, "channel": p.channel, "species": p.species, "atoms": [i + 1 for i in p.atoms],
            "kie": p.kie, "kie_no_tunnelling": p.kie_no_tunnelling,
            "kinetic_epsilon_permil": 1000 * (1 / p.kie - 1),
            "paths": [{"transition_state_atom": t + 1, "kie": f.kie, "kie_no_tunnelling": f.kie_no_tunnelling,
                       "factors": {n: f.factors[n] for n in KIE_FACTORS},
                       "imaginary_frequency_ratio": f.imaginary_frequency_ratio} for t, f in p.paths]}


def position_label(p, ts_atom=None) -> str:
    """``18O: H2CO3 atom 1/3`` (a position), with `` via TS0 atom 2`` for one of its paths."""
    text = f"{p.label}: {p.species} atom {'/'.join(str(i + 1) for i in p.atoms)}"
    return text if ts_atom is None else f"{text} via TS atom {ts_atom + 1}"


def beta_rows(res):
    header = ["isotope", "species", "T [K]", "1000 ln beta [permil]", "beta [1]"]
    rows = [[s.substitution.label, b.species, float(t), 1000 * float(lb), float(np.exp(lb))]
            for s in res.substitutions for b in s.betas for t, lb in zip(res.temperature_K, b.ln_beta)]
    return header, rows


def kie_rows(res):
    header = (["isotope", "channel", "T [K]", "KIE [1]", "KIE no tunnelling [1]", "kinetic epsilon [permil]"]
              + [f"{n} [1]" for n in KIE_FACTORS])
    rows = []
    for s in res.substitutions:
        for k in s.kie:
            for i, t in enumerate(res.temperature_K):
                rows.append([s.substitution.label, k.channel, float(t), float(k.kie[i]),
                             float(k.kie_no_tunnelling[i]), 1000 * (1 / float(k.kie[i]) - 1)]
                            + [float(k.factors[n][i]) for n in KIE_FACTORS])
    for p in getattr(res, "positions", ()):
        for i, t in enumerate(res.temperature_K):
            rows.append([position_label(p), p.channel, float(t), float(p.kie[i]), float(p.kie_no_tunnelling[i]),
                         1000 * (1 / float(p.kie[i]) - 1)] + [None] * len(KIE_FACTORS))
            if len(p.paths) > 1:
                for ts_atom, f in p.paths:
                    rows.append([position_label(p, ts_atom), p.channel, float(t), float(f.kie[i]),
                                 float(f.kie_no_tunnelling[i]), 1000 * (1 / float(f.kie[i]) - 1)]
                                + [float(f.factors[n][i]) for n in KIE_FACTORS])
            else:
                rows[-1][6:] = [float(p.paths[0][1].factors[n][i]) for n in KIE_FACTORS]
    return header, rows


def fractionation_rows(res):
    header = ["isotope", "species A", "species B", "T [K]", "alpha [1]", "epsilon [permil]"]
    rows = [[f.label, f.species_a, f.species_b, float(t), float(a), 1000 * (float(a) - 1)]
            for f in res.fractionation for t, a in zip(res.temperature_K, f.alpha)]
    return header, rows


def theta_rows(res):
    header = ["element", "isotopes", "kind", "of", "T [K]", "theta [1]", "high-T limit [1]", "low-T limit [1]",
              "kinetic classical limit [1]"]
    rows = [[t.element, "/".join(t.labels), t.kind, t.name, float(T), float(th), t.references.equilibrium_high_T,
             t.references.equilibrium_low_T, t.references.kinetic_classical]
            for t in res.three_isotope for T, th in zip(res.temperature_K, t.theta)]
    return header, rows


#: the CSV tables of tstrate run: file name -> row builder
CSV_TABLES = {"isotopes_beta.csv": beta_rows, "isotopes_kie.csv": kie_rows,
              "isotopes_fractionation.csv": fractionation_rows, "isotopes_theta.csv": theta_rows}


def _pick(T, most=5):
    if len(T) <= most:
        return list(range(len(T)))
    return sorted(set(np.linspace(0, len(T) - 1, most).round().astype(int).tolist()))


_MODE_TEXT = {"all": "every atom of the element in every species", "atoms": "the listed atoms",
              "each": "one atom at a time, at each set of equivalent positions of each reactant, followed into "
                      "the transition state by its bonds; equivalent positions that become inequivalent there "
                      "are separate reaction paths, summed"}


def report_blocks(res, figures=()) -> list:
    """The report's isotopologue section (after its heading)."""
    from tstrate.output import report as rp

    T = res.temperature_K
    idx = _pick(T)
    temps = [f"{T[i]:g} K" for i in idx]
    B: list = [rp.Paragraph(
        "Isotopologues share the parent's geometry, electronic energy and Hessian; their frequencies are "
        "recomputed from the Hessian with the new masses, and their symmetry numbers (and so the path "
        "degeneracies) are detected with the masses. Substitutions: " + "; ".join(
            f"{s.substitution.label} ({_MODE_TEXT[s.substitution.mode]})"
            for s in res.substitutions) + ". Beta factors are for a single heavy atom (trace), averaged over "
        "the element's positions.")]
    rows = []
    for s in res.substitutions:
        for k in s.kie:
            rows.append((s.substitution.label, k.channel, *[f"{k.kie[i]:.4g}" for i in idx],
                         *[f"{k.kie_no_tunnelling[i]:.4g}" for i in idx[-1:]],
                         f"{k.imaginary_frequency_ratio:.4f}"))
    for p in getattr(res, "positions", ()):
        nu = "/".join(f"{f.imaginary_frequency_ratio:.4f}" for _, f in p.paths)
        rows.append((position_label(p) + (f" ({len(p.paths)} paths)" if len(p.paths) > 1 else ""), p.channel,
                     *[f"{p.kie[i]:.4g}" for i in idx], *[f"{p.kie_no_tunnelling[i]:.4g}" for i in idx[-1:]], nu))
    if rows:
        B.append(rp.Table(("isotope", "channel", *[f"KIE {t}" for t in temps], f"KIE no tunnelling {temps[-1]}",
                           "nu‡ light / heavy"), tuple(rows),
                          "Kinetic isotope effects k_light / k_heavy with the channel's tunnelling model and floor; "
                          "the last column is the classical (high-temperature) limit without tunnelling."))
        i = idx[-1]
        rows = [(s.substitution.label, k.channel, *[f"{k.factors[n][i]:.4g}" for n in KIE_FACTORS])
                for s in res.substitutions for k in s.kie]
        B.append(rp.Table(("isotope", "channel", *[n.replace("_", " ") for n in KIE_FACTORS]), tuple(rows),
                          f"The KIE at {T[i]:g} K split into factors (their product is the KIE): translational "
                          "and rotational mass terms, symmetry (path degeneracy), zero-point and excited-state "
                          "vibrational terms, tunnelling."))
    B += [rp.Figure(p, c) for p, c in figures]
    rows = [(s.substitution.label, b.species, *[f"{1000 * b.ln_beta[i]:.2f}" for i in idx])
            for s in res.substitutions for b in s.betas]
    B.append(rp.Table(("isotope", "species", *[f"1000 ln beta {t}" for t in temps]), tuple(rows),
                      "Reduced partition-function ratios (Bigeleisen-Mayer beta factors), permil."))
    if res.fractionation:
        rows = [(f.label, f"{f.species_a} / {f.species_b}", *[f"{1000 * (f.alpha[i] - 1):.2f}" for i in idx])
                for f in res.fractionation]
        B.append(rp.Table(("isotope", "pair", *[f"epsilon {t} / permil" for t in temps]), tuple(rows),
                          "Equilibrium fractionation epsilon = (alpha - 1) x 1000, alpha = beta_A / beta_B."))
    if res.three_isotope:
        rows = [(t.element, "/".join(t.labels), t.kind, t.name, *[f"{t.theta[i]:.4f}" for i in idx],
                 f"{t.references.equilibrium_high_T:.4f}", f"{t.references.equilibrium_low_T:.4f}",
                 f"{t.references.kinetic_classical:.4f}") for t in res.three_isotope]
        B.append(rp.Table(("element", "isotopes", "kind", "of", *[f"theta {t}" for t in temps],
                           "high-T limit", "low-T limit", "kinetic classical"), tuple(rows),
                          "Three-isotope exponents theta = ln alpha(lighter) / ln alpha(heavier) (kinetic: alpha = "
                          "1/KIE) beside their mass-dependent references: (1/m1-1/m2)/(1/m1-1/m3), "
                          "(1/sqrt m1-1/sqrt m2)/(1/sqrt m1-1/sqrt m3), ln(m1/m2)/ln(m1/m3)."))
    if res.route_mix:
        rows = []
        for m in res.route_mix:
            j = _pick(m.temperature_K, 3)
            rows.append((m.label, m.comparison, m.abundance,
                         ", ".join(f"{m.kie[i]:.4g} ({m.temperature_K[i]:g} K)" for i in j)))
        B.append(rp.Table(("isotope", "comparison", "abundance", "KIE of the route mix"), tuple(rows),
                          "Effective KIE of each comparison's routes weighted by their share of the loss of the "
                          "substrate (the catalyst abundance the same for both isotopologues; mode all "
                          "substitutes the catalyst too)."))
    B.append(rp.Paragraph(MASS_DEPENDENCE_STATEMENT))
    return B
