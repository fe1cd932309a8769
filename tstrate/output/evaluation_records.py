"""The evaluation forms and the reference comparisons in users' units: evaluation_forms.json,
tables/evaluation_forms.csv, tables/reference_ratios.csv, the results.json ``references`` record,
the overlays drawn on the Arrhenius and falloff plots, and the report's sections.

Rate parameters are in the study's ``rate_units`` by order (k0 one order above the channel);
E/R in K; pressures in bar; number densities in molecule cm-3; deviations in percent. The
uncertainty pair f(298 K) and g (JPL Publication 19-5's f(T) = f(298) exp|g (1/T - 1/298)|) of the
uncertainty step is joined to each row when the study runs it: of k(T) for the Arrhenius form, of
k(T, p) at the study pressure nearest 1 bar for the falloff forms.
"""

from __future__ import annotations

import numpy as np

from tstrate.output.records import rate_unit

FORM_TITLES = {"arrhenius": "Arrhenius A, E/R", "jpl_falloff": "NASA/JPL termolecular (F_c = 0.6)",
               "iupac_falloff": "IUPAC k0, k_inf, F_c"}
_BAR = 1e5


def _in(value_SI, order, units):
    unit = rate_unit(order, units)
    from tstrate.units import RATE_UNITS

    factor = RATE_UNITS[unit][1] if unit in RATE_UNITS else 10.0 ** (6 * (order - 1))
    return float(value_SI) * factor, unit


def _uncertainty_pair(result, channel: str, form: str):
    """(f298, g_K, pressure_bar or None) of the uncertainty step for a row, or (None, None, None)."""
    unc = getattr(result, "uncertainty", None)
    if unc is None:
        return None, None, None
    if form == "arrhenius":
        for c in unc.channels:
            if c.name == channel:
                return float(c.f298), float(c.g_K), None
        return None, None, None
    for f in unc.falloff:
        if f.name == channel:
            f298, g = np.asarray(f.f298, dtype=float), np.asarray(f.g_K, dtype=float)
            ok = np.isfinite(f298) & np.isfinite(g)
            if not ok.any():
                return None, None, None
            if f.pressure_Pa is not None:
                d = np.where(ok, np.abs(np.log(np.asarray(f.pressure_Pa) / _BAR)), np.inf)
                j = int(np.argmin(d))
                return float(f298[j]), float(g[j]), float(f.pressure_Pa[j]) / _BAR
            j = int(np.flatnonzero(ok)[-1])
            return float(f298[j]), float(g[j]), None
    return None, None, None


def _pressure_range_bar(result, channel):
    if result.falloff is None:
        return None
    for cf in result.falloff.channels:
        if cf.name == channel and cf.pressure_Pa is not None:
            return [float(np.min(cf.pressure_Pa)) / _BAR, float(np.max(cf.pressure_Pa)) / _BAR]
    return None


def form_parameters(expr, units) -> dict:
    """The parameters of an evaluation form in users' units (keys with their units)."""
    order = expr.order
    if expr.form == "arrhenius":
        A, unit = _in(expr.A, order, units)
        return {"A": A, "A_unit": unit, "E_over_R_K": float(expr.E_over_R_K),
                "temperature_exponent": float(expr.n), "T0_K": float(expr.T0_K)}
    k0, k0_unit = _in(expr.k0_300, order + 1, units)
    kinf, kinf_unit = _in(expr.kinf_300, order, units)
    out = {"k0_300K": k0, "k0_unit": k0_unit, "n": float(expr.n), "kinf_300K": kinf, "kinf_unit": kinf_unit,
           "m": float(expr.m), "Fc": float(expr.Fc)}
    if expr.form == "iupac_falloff":
        out.update({"N": float(expr.width), "k0_E_over_R_K": float(expr.k0_E_over_R_K),
                    "kinf_E_over_R_K": float(expr.kinf_E_over_R_K)})
    return out


def _pct(x):
    return None if x is None else 100.0 * float(x)


def evaluation_forms_record(result) -> dict:
    """evaluation_forms.json."""
    ev = result.evaluation_forms
    units = result.study.conditions.rate_units
    rows = []
    for c in ev.channels:
        for form, fit in c.fits():
            f298, g, p_unc = _uncertainty_pair(result, c.name, form)
            falloff = form != "arrhenius"
            rows.append({
                "channel": c.name, "form": form, "order": c.order,
                **form_parameters(fit.expression, units),
                "temperature_range_K": [fit.Tmin_K, fit.Tmax_K],
                "pressure_range_bar": _pressure_range_bar(result, c.name) if falloff else None,
                "number_density_range_per_cm3": ([fit.number_density_min_m3 * 1e-6, fit.number_density_max_m3 * 1e-6]
                                                 if falloff else None),
                "bath_gas": c.bath_gas if falloff else None,
                "max_deviation_percent": _pct(fit.max_rel_deviation),
                "rms_deviation_percent": _pct(fit.rms_rel_deviation),
                "k0_max_deviation_percent": _pct(fit.k0_max_rel_deviation),
                "kinf_max_deviation_percent": _pct(fit.kinf_max_rel_deviation),
                "within_tolerance": bool(fit.max_rel_deviation <= ev.max_deviation),
                "n_points": fit.n_points, "n_check_points": fit.n_check_points,
                "f298": f298, "g_K": g, "uncertainty_pressure_bar": p_unc,
                "notes": list(fit.notes) + (list(c.notes) if falloff else []),
            })
    return {"tolerance_percent": 100.0 * ev.max_deviation,
            "forms": {k: v for k, v in FORM_DOCS.items()}, "rows": rows}


#: what each form is (written into evaluation_forms.json)
FORM_DOCS = {
    "arrhenius": "k = A exp(-(E/R)/T), fitted to the TST k(T) of the channel (with its tunnelling) on ln k",
    "jpl_falloff": "NASA/JPL Publication 19-5 termolecular form: k0(T) = k0(300 K) (T/300)^-n, k_inf(T) = "
                   "k_inf(300 K) (T/300)^-m, k = k0[M]/(1 + k0[M]/k_inf) 0.6^{[1 + (log10(k0[M]/k_inf))^2]^-1}",
    "iupac_falloff": "IUPAC form: k0 = k0(300 K) (T/300)^-n exp(-k0_E_over_R_K/T) [M], k_inf = k_inf(300 K) "
                     "(T/300)^-m exp(-kinf_E_over_R_K/T), k = k0 k_inf/(k0 + k_inf) F, log10 F = log10 Fc / "
                     "(1 + [log10(k0/k_inf)/N]^2), N = 0.75 - 1.27 log10 Fc",
}

CSV_HEADER = ["channel", "form", "Tmin [K]", "Tmax [K]", "pmin [bar]", "pmax [bar]", "bath gas",
              "A", "A unit", "E/R [K]", "k0(300 K)", "k0 unit", "n [1]", "kinf(300 K)", "kinf unit", "m [1]",
              "Fc [1]", "N [1]", "k0 E/R [K]", "kinf E/R [K]", "max deviation [%]", "rms deviation [%]",
              "k0 max deviation [%]", "kinf max deviation [%]", "points [1]", "check points [1]", "f298 [1]",
              "g [K]", "uncertainty pressure [bar]"]


def evaluation_forms_table(doc: dict):
    """(header, rows) of tables/evaluation_forms.csv from :func:`evaluation_forms_record`."""
    rows = []
    for r in doc["rows"]:
        p = r["pressure_range_bar"] or [None, None]
        rows.append([r["channel"], r["form"], *r["temperature_range_K"], *p, r["bath_gas"],
                     r.get("A"), r.get("A_unit"), r.get("E_over_R_K"), r.get("k0_300K"), r.get("k0_unit"),
                     r.get("n") if r["form"] != "arrhenius" else None, r.get("kinf_300K"), r.get("kinf_unit"),
                     r.get("m"), r.get("Fc"), r.get("N"), r.get("k0_E_over_R_K"), r.get("kinf_E_over_R_K"),
                     r["max_deviation_percent"], r["rms_deviation_percent"], r["k0_max_deviation_percent"],
                     r["kinf_max_deviation_percent"], r["n_points"], r["n_check_points"], r["f298"], r["g_K"],
                     r["uncertainty_pressure_bar"]])
    return CSV_HEADER, rows


# ---- references -----------------------------------------------------------------------------

def references_record(result) -> list[dict]:
    """results.json ``references``: each reference with its expression and its ratios."""
    units = result.study.conditions.rate_units
    out = []
    for comp in result.references:
        ref = comp.reference
        unit = rate_unit(comp.order, units)
        factor = _in(1.0, comp.order, units)[0]
        rows = [{"quantity": r.quantity, "temperature_K": r.temperature_K,
                 "pressure_bar": None if r.pressure_Pa is None else r.pressure_Pa / _BAR,
                 "number_density_per_cm3": None if r.number_density_m3 is None else r.number_density_m3 * 1e-6,
                 "k_computed": r.k_computed * factor, "k_reference": r.k_reference * factor,
                 "ratio_computed_to_reference": r.ratio} for r in comp.rows]
        rng = comp.ratio_range()
        out.append({"channel": ref.channel, "label": ref.label, "source": ref.source, "kind": ref.kind,
                    "form": ref.expression.form, **form_parameters(ref.expression, units),
                    "temperature_range_K": [ref.Tmin_K, ref.Tmax_K],
                    "pressure_range_bar": (None if ref.pressure_min_Pa is None else
                                           [ref.pressure_min_Pa / _BAR, ref.pressure_max_Pa / _BAR]),
                    "bath_gas": ref.bath_gas, "rate_constant_unit": unit,
                    "ratio_min": None if rng is None else rng[0], "ratio_max": None if rng is None else rng[1],
                    "ratios": rows, "note": comp.note})
    return out


RATIO_CSV_HEADER = ["reference", "channel", "kind", "quantity", "T [K]", "p [bar]", "number density [molecule cm-3]",
                    "k computed", "k reference", "k unit", "computed / reference [1]"]


def reference_ratio_table(records: list[dict]):
    rows = [[r["label"], r["channel"], r["kind"], x["quantity"], x["temperature_K"], x["pressure_bar"],
             x["number_density_per_cm3"], x["k_computed"], x["k_reference"], r["rate_constant_unit"],
             x["ratio_computed_to_reference"]] for r in records for x in r["ratios"]]
    return RATIO_CSV_HEADER, rows


def arrhenius_overlays(result, units=None) -> dict:
    """channel -> [(label, T [K], k or k_inf in the channel's output unit)] for the Arrhenius plot:
    each reference over its own temperature range (falloff references: their k_inf)."""
    units = result.study.conditions.rate_units if units is None else units
    out: dict = {}
    for comp in result.references:
        ref = comp.reference
        T = np.linspace(ref.Tmin_K, ref.Tmax_K, 40)
        k = np.asarray(ref.expression.high_pressure_rate(T), dtype=float) * _in(1.0, comp.order, units)[0]
        label = ref.label + (" (k$_\\infty$)" if ref.is_falloff else "")
        out.setdefault(ref.channel, []).append((label, T, k))
    return out


def falloff_overlays(result, channel: str) -> list:
    """[(label, expression, Tmin_K, Tmax_K, pmin_Pa, pmax_Pa)] of the falloff references of a channel."""
    return [(c.reference.label, c.reference.expression, c.reference.Tmin_K, c.reference.Tmax_K,
             c.reference.pressure_min_Pa, c.reference.pressure_max_Pa)
            for c in result.references if c.reference.channel == channel and c.reference.is_falloff]


# ---- report ---------------------------------------------------------------------------------

def _g(v, fmt=".4g"):
    return "-" if v is None else format(v, fmt)


def report_blocks(result, doc: dict) -> list:
    """The report's sections "Evaluation forms" and (with references) "Reference expressions"."""
    from tstrate.output import report as rp

    B = []
    ev = doc
    if ev is not None and ev["rows"]:
        B.append(rp.Heading("Evaluation forms"))
        B.append(rp.Paragraph(
            "The computed rate constants in the forms data evaluations publish, to put beside evaluated data: "
            "k = A exp(-(E/R)/T) fitted to the TST k(T); for falloff channels the NASA/JPL termolecular form "
            "(k0(300 K) (T/300)^-n, k_inf(300 K) (T/300)^-m, F_c = 0.6) and the IUPAC form (k0, k_inf and a "
            "fitted constant F_c; its limits get exp(-E/RT) where the power laws miss), both fitted to k(T, p) "
            "on the study grid together with its limits. Deviations are measured on the grid and between its "
            "points (half-way temperatures; the dense falloff curve between the grid pressures). Also in "
            "evaluation_forms.json and tables/evaluation_forms.csv."
            + (" f298 and g: the uncertainty step's pair (falloff forms: at the pressure given)."
               if getattr(result, "uncertainty", None) is not None else "")))
        rows = []
        for r in ev["rows"]:
            if r["form"] == "arrhenius":
                params = f"A = {r['A']:.3g} {r['A_unit']}, E/R = {r['E_over_R_K']:.4g} K"
            else:
                params = (f"k0 = {_limit_text(r['k0_300K'], r['n'], r.get('k0_E_over_R_K', 0.0))} "
                          f"{r['k0_unit']}; k_inf = {_limit_text(r['kinf_300K'], r['m'], r.get('kinf_E_over_R_K', 0.0))} "
                          f"{r['kinf_unit']}; F_c = {r['Fc']:.3g}")
            p = r["pressure_range_bar"]
            rng = f"{r['temperature_range_K'][0]:g}-{r['temperature_range_K'][1]:g} K" + (
                f", {p[0]:.3g}-{p[1]:.3g} bar" if p else "")
            miss = "" if r["within_tolerance"] else " (above tolerance)"
            unc = "-" if r["f298"] is None else f"{r['f298']:.3g}, {r['g_K']:.4g} K" + (
                f" at {r['uncertainty_pressure_bar']:.3g} bar" if r["uncertainty_pressure_bar"] is not None else "")
            rows.append((r["channel"], FORM_TITLES[r["form"]], params, rng,
                         f"{r['max_deviation_percent']:.3g}{miss}", unc))
        B.append(rp.Table(("channel", "form", "parameters", "range", "max deviation / %", "f298, g"), tuple(rows),
                          f"Tolerance {ev['tolerance_percent']:g} % (the study's max_deviation_percent)."))
        notes = [f"{r['channel']}, {FORM_TITLES[r['form']]}: {n}" for r in ev["rows"] for n in r["notes"]]
        if notes:
            B.append(rp.Bullets(tuple(dict.fromkeys(notes))))
    if getattr(result, "references", ()):
        B.append(rp.Heading("Reference expressions"))
        B.append(rp.Paragraph("Computed against evaluated or measured expressions given in the study "
                              "([[reference_rate]]), over the study's grid points inside each reference's range "
                              "(all points in tables/reference_ratios.csv); they are drawn on the Arrhenius "
                              "and falloff plots."))
        recs = references_record(result)
        rows = []
        for rec in recs:
            if not rec["ratios"]:
                rows.append((rec["label"], rec["channel"], rec["kind"], "-", "-", "-", "-", "-", rec["note"] or ""))
                continue
            for q in ("k", "k_inf", "k(T, p)"):
                pts = [x for x in rec["ratios"] if x["quantity"] == q]
                if not pts:
                    continue
                T = np.array([x["temperature_K"] for x in pts])
                ratio = np.array([x["ratio_computed_to_reference"] for x in pts])
                if q != "k(T, p)":
                    for i in _pick(len(pts)):
                        rows.append((rec["label"], rec["channel"], rec["kind"], q, f"{T[i]:g}", "-",
                                     f"{pts[i]['k_computed']:.3e}", f"{pts[i]['k_reference']:.3e}",
                                     f"{ratio[i]:.3g}"))
                else:
                    p = [x["pressure_bar"] for x in pts if x["pressure_bar"] is not None]
                    prange = f"{min(p):.3g}-{max(p):.3g}" if p else "-"
                    rows.append((rec["label"], rec["channel"], rec["kind"], q, f"{T.min():g}-{T.max():g}", prange,
                                 "-", "-", f"{ratio.min():.3g} .. {ratio.max():.3g}"))
            if rec["note"]:
                rows.append((rec["label"], rec["channel"], rec["kind"], "-", "-", "-", "-", "-", rec["note"]))
        B.append(rp.Table(("reference", "channel", "kind", "quantity", "T / K", "p / bar", "k computed",
                           "k reference", "computed / reference"), tuple(rows),
                          "k in each channel's rate-constant unit; sources: " + "; ".join(
                              dict.fromkeys(f"{r['label']}: {r['source']}" for r in recs)) + "."))
    return B


def _limit_text(a: float, x: float, e_over_r: float) -> str:
    """A (T/300)^-x exp(-E/T) as the evaluations write it (factors equal to 1 left out)."""
    text = f"{a:.3g}"
    if x:
        text += f" (T/300)^{-x:.3g}"
    if e_over_r:
        text += f" exp({-e_over_r:.4g}/T)"
    return text


def _pick(n: int, most: int = 6) -> list[int]:
    if n <= most:
        return list(range(n))
    return sorted({int(round(x)) for x in np.linspace(0, n - 1, most)})
