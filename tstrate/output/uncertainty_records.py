"""The uncertainty step in users' units: results.json and fits.json records, CSV tables, the bands
drawn on the figures, and the report section.

Percentile arrays run over :data:`~tstrate.physics.uncertainty.PERCENTILES` first (2.5, 16, 50,
84, 97.5 %), then over the grid of the record. The uncertainty factor f is exp((q84 - q16)/2)
of ln x (k/f .. k f: the central 68 %); f298 and g are the evaluation form
f(T) = f(298 K) exp|g (1/T - 1/298 K)| fitted to f(T).
"""

from __future__ import annotations

import numpy as np

from tstrate.output.records import _rate_in, rate_unit, to_jsonable
from tstrate.physics.uncertainty import PERCENTILES

#: the report's sentence on what the bands mean
BANDS_MEAN = ("Bands: the darker band holds the central 68 % of the samples (16 to 84 %), the lighter one "
              "the central 95 % (2.5 to 97.5 %); the line is the deterministic value.")


def _ranking(band) -> list[dict]:
    return [{"factor": r.factor, "contribution": r.contribution, "share_percent": 100 * r.share}
            for r in band.ranking]


def _sens(band, space) -> list[dict]:
    out = []
    for i, x in enumerate(space.inputs):
        s = band.sensitivity[i]
        if x.kind == "energy":
            out.append({"input": x.name, "sensitivity": s * 1e3, "sensitivity_unit": "mol kJ-1"})
        else:
            out.append({"input": x.name, "sensitivity": s, "sensitivity_unit": "1"})
    return out


def uncertainty_record(unc, rate_units=None) -> dict:
    """results.json ``uncertainty``."""
    space = unc.space
    doc = {
        "samples": unc.samples, "seed": unc.settings.seed, "sampling": unc.settings.sampling,
        "percentiles_percent": list(PERCENTILES),
        "inputs": [{"name": x.name, "kind": x.kind, "target": x.target,
                    "sigma_kJ_per_mol": x.sigma / 1e3 if x.kind == "energy" else None,
                    "sigma_ln": None if x.kind == "energy" else x.sigma, "source": x.source} for x in space.inputs],
        "factors": list(space.factors),
        "channels": [], "comparisons": [], "falloff": [], "excitations": [],
        "warnings": list(unc.warnings),
    }
    for c in unc.channels:
        unit = rate_unit(c.order, rate_units)
        arr = {}
        if c.arrhenius:
            arr = {"A": _rate_in(c.arrhenius["A"], c.order, unit), "A_unit": unit, "n": c.arrhenius["n"],
                   "Ea_kJ_per_mol": c.arrhenius["Ea_J_per_mol"] / 1e3, "T0_K": c.T0_K}
        doc["channels"].append({
            "name": c.name, "temperature_K": c.temperature_K, "rate_constant_unit": unit,
            "rate_constant": _rate_in(c.k.nominal, c.order, unit),
            "rate_constant_percentiles": _rate_in(c.k.percentiles, c.order, unit),
            "uncertainty_factor": c.k.factor, "f298": c.f298, "g_K": c.g_K,
            "evaluation_max_deviation_percent": 100 * c.evaluation_max_deviation,
            "valid_samples_percent": 100 * c.k.valid_fraction,
            "Kc_uncertainty_factor": c.ln_kc.factor,
            "modified_arrhenius_percentiles": arr,
            "reference_temperature_K": c.k.reference_temperature_K,
            "ranking": _ranking(c.k), "sensitivities": _sens(c.k, space),
        })
    for cu in unc.comparisons:
        routes = []
        for r in cu.routes:
            rec = {"channel": r.channel, "kind": r.kind,
                   "ratio_to_bare": r.ratio.nominal, "ratio_percentiles": r.ratio.percentiles,
                   "ratio_uncertainty_factor": r.ratio.factor,
                   "reference_temperature_K": r.ratio.reference_temperature_K,
                   "ratio_ranking": _ranking(r.ratio), "crossover": None}
            if r.crossover_m3 is not None:
                cb = r.crossover_m3
                rec["crossover"] = {"catalyst_per_cm3": cb.nominal * 1e-6,
                                    "catalyst_percentiles_per_cm3": cb.percentiles * 1e-6,
                                    "uncertainty_factor": cb.factor, "ranking": _ranking(cb)}
            routes.append(rec)
        doc["comparisons"].append({"name": cu.name, "temperature_K": cu.temperature_K,
                                   "abundance_labels": list(cu.abundance_labels), "routes": routes})
    for f in unc.falloff:
        doc["falloff"].append({
            "name": f.name, "temperature_K": f.temperature_K,
            "pressure_bar": None if f.pressure_Pa is None else f.pressure_Pa / 1e5,
            "rate_constant_per_s": f.k.nominal, "rate_constant_percentiles_per_s": f.k.percentiles,
            "uncertainty_factor": f.k.factor, "f298": f.f298, "g_K": f.g_K, "method": f.k.method,
            "reference_temperature_K": f.k.reference_temperature_K, "ranking": _ranking(f.k)})
    for e in unc.excitations:
        rec = {"name": e.name, "method": "first order in logit(fraction)"}
        for key, band in (("pressure_stern_volmer", e.pressure_stern_volmer),
                          ("pressure_stepwise", e.pressure_stepwise),
                          ("profile_stern_volmer", e.profile_stern_volmer),
                          ("profile_stepwise", e.profile_stepwise)):
            rec[key] = None if band is None else {"fraction": band.nominal, "fraction_percentiles": band.percentiles,
                                                  "ranking": _ranking(band)}
        rec["altitude_km"] = None if e.altitude_m is None else e.altitude_m / 1e3
        doc["excitations"].append(rec)
    return to_jsonable(doc)


def fits_uncertainty_record(unc) -> dict:
    """fits.json ``uncertainty``: the evaluation pair of every channel (and falloff pressure)."""
    return to_jsonable({
        "samples": unc.samples, "seed": unc.settings.seed,
        "form": "f(T) = f298 exp|g (1/T - 1/298 K)| (JPL Publication 19-5), f the one-sigma factor",
        "channels": [{"name": c.name, "f298": c.f298, "g_K": c.g_K,
                      "max_deviation_percent": 100 * c.evaluation_max_deviation,
                      "uncertainty_factor": c.k.factor, "temperature_K": c.temperature_K} for c in unc.channels],
        "falloff": [{"name": f.name, "pressure_bar": None if f.pressure_Pa is None else f.pressure_Pa / 1e5,
                     "f298": f.f298, "g_K": f.g_K} for f in unc.falloff],
    })


def uncertainty_table(unc, rate_units=None):
    """(header, rows) of tables/uncertainty.csv: k(T) percentiles and f(T) of every channel."""
    header = ["channel", "T [K]", "k", "k unit", *[f"k {p:g} %" for p in PERCENTILES], "f [1]", "f298 [1]", "g [K]"]
    rows = []
    for c in unc.channels:
        unit = rate_unit(c.order, rate_units)
        k = _rate_in(c.k.nominal, c.order, unit)
        pct = _rate_in(c.k.percentiles, c.order, unit)
        for i, t in enumerate(c.temperature_K):
            rows.append([c.name, float(t), float(k[i]), unit, *[float(pct[j, i]) for j in range(len(PERCENTILES))],
                         float(c.k.factor[i]), c.f298, c.g_K])
    return header, rows


def sensitivity_table(unc):
    """(header, rows) of tables/uncertainty_ranking.csv: what matters most, per channel and comparison."""
    header = ["result", "T [K]", "rank [1]", "factor", "contribution [1]", "share [%]"]
    rows = []

    def add(label, band):
        for i, r in enumerate(band.ranking, start=1):
            rows.append([label, band.reference_temperature_K, i, r.factor, r.contribution, 100 * r.share])

    for c in unc.channels:
        add(f"k({c.name})", c.k)
    for cu in unc.comparisons:
        for r in cu.routes:
            add(f"{cu.name}: ratio {r.channel}/bare", r.ratio)
            if r.crossover_m3 is not None:
                add(f"{cu.name}: crossover abundance {r.channel}", r.crossover_m3)
    for f in unc.falloff:
        add(f"k({f.name}, P)", f.k)
    return header, rows


# ---------------------------------------------------------------- bands for the figures
def arrhenius_bands(unc, records) -> dict:
    """channel -> (4, T) k at 2.5, 16, 84, 97.5 % in the unit of its results.json record."""
    out = {}
    by = {r["name"]: r for r in records}
    for c in unc.channels:
        r = by.get(c.name)
        if r is None:
            continue
        pct = _rate_in(c.k.percentiles, c.order, r["rate_constant_unit"])
        out[c.name] = pct[[0, 1, 3, 4]]
    return out


def ratio_bands(unc, comparison_name) -> dict:
    """channel -> (4, A, T) ratio to the bare route at 2.5, 16, 84, 97.5 %."""
    for cu in unc.comparisons:
        if cu.name == comparison_name:
            return {r.channel: r.ratio.percentiles[[0, 1, 3, 4]] for r in cu.routes}
    return {}


def falloff_bands(unc, channel) -> np.ndarray | None:
    """(4, T, P) k(T, P) / k_inf(T) at 2.5, 16, 84, 97.5 % on the study grid, or None."""
    for f in unc.falloff:
        if f.name == channel and f.falloff_factor is not None:
            return f.falloff_factor.percentiles[[0, 1, 3, 4]]
    return None


def altitude_bands(unc, excitation) -> dict:
    """"stern_volmer"/"stepwise" -> (4, Z) fraction along the profile at 2.5, 16, 84, 97.5 %."""
    for e in unc.excitations:
        if e.name == excitation:
            return {k: b.percentiles[[0, 1, 3, 4]] for k, b in
                    (("stern_volmer", e.profile_stern_volmer), ("stepwise", e.profile_stepwise)) if b is not None}
    return {}


# ---------------------------------------------------------------- report
def report_blocks(result, figures) -> list:
    """The report's section "How sure are these numbers"."""
    from tstrate.output import report as rp

    unc = result.uncertainty
    B = [rp.Heading("How sure are these numbers")]
    B.append(rp.Paragraph(
        f"{unc.samples} quasi-Monte Carlo samples ({unc.settings.sampling}, seed {unc.settings.seed}) of the "
        "uncertain inputs below, propagated through every step: rate constants with tunnelling, equilibria, "
        "route ratios and crossover abundances exactly for each sample; falloff to first order in ln(k/k_inf) "
        "around each sample's k_inf; energised-molecule fractions to first order in logit(fraction). "
        "f is the one-sigma uncertainty factor (k/f to k f holds 68 % of the samples); f298 and g are the "
        "evaluation form f(T) = f(298 K) exp|g (1/T - 1/298 K)| fitted to f(T). " + BANDS_MEAN))
    rows = tuple((x.name, f"{x.sigma / 1e3:.3g} kJ/mol" if x.kind == "energy" else f"{100 * np.expm1(x.sigma):.3g} %"
                  if x.kind in ("frequency_scale", "imaginary_frequency", "lennard_jones_sigma",
                                "lennard_jones_epsilon") else f"factor {np.exp(x.sigma):.3g}", x.source)
                 for x in unc.space.inputs)
    B.append(rp.Table(("input", "one sigma", "source"), rows))
    B.append(rp.Table(("channel", "f at lowest T", "f at highest T", "f298", "g / K", "fit deviation / %",
                       "median Ea / kJ mol-1", "Ea 16-84 % / kJ mol-1"),
                      tuple((c.name, f"{c.k.factor[0]:.3g}", f"{c.k.factor[-1]:.3g}", f"{c.f298:.3g}", f"{c.g_K:.4g}",
                             f"{100 * c.evaluation_max_deviation:.1f}",
                             f"{c.arrhenius['Ea_J_per_mol'][2] / 1e3:.1f}" if c.arrhenius else "-",
                             (f"{c.arrhenius['Ea_J_per_mol'][1] / 1e3:.1f} .. {c.arrhenius['Ea_J_per_mol'][3] / 1e3:.1f}"
                              if c.arrhenius else "-")) for c in unc.channels),
                      "f(T) of k(T) at the ends of the temperature grid and the fitted evaluation pair"))
    for c in unc.channels:
        B.append(rp.Table(("factor", "d ln k / d z", "share of variance / %"),
                          tuple((r.factor, f"{r.contribution:.3g}", f"{100 * r.share:.1f}") for r in c.k.ranking[:6]),
                          f"What matters most for k({c.name}) at {c.k.reference_temperature_K:g} K "
                          "(first-order shares; z: one sigma of each independent factor)"))
    for cu in unc.comparisons:
        for r in cu.routes:
            lo, hi = r.ratio.percentiles[0, 0, 0], r.ratio.percentiles[4, 0, 0]
            B.append(rp.Table(("factor", "d ln ratio / d z", "share of variance / %"),
                              tuple((x.factor, f"{x.contribution:.3g}", f"{100 * x.share:.1f}")
                                    for x in r.ratio.ranking[:6]),
                              f"{cu.name}: what matters most for the ratio {r.channel}/bare at "
                              f"{r.ratio.reference_temperature_K:g} K ({cu.abundance_labels[0]}); 95 % range "
                              f"at {cu.temperature_K[0]:g} K: {lo:.3g} .. {hi:.3g}"))
    for f in unc.falloff:
        B.append(rp.Paragraph(f"Falloff of {f.name}: f from {np.nanmin(f.k.factor):.3g} to "
                              f"{np.nanmax(f.k.factor):.3g} over the grid ({f.k.method})."))
    B += [rp.Figure(p, c) for s, p, c in figures if s == "uncertainty"]
    return B
