"""The evaluation-forms table of the reduced GFN2-xTB demo run (session fixture ``demo_run``), which runs
the uncertainty step: every row carries the uncertainty pair f(298 K) and g of results.json, and the
written parameters, evaluated with the published formulas written out here (NASA/JPL Publication 19-5,
section 2; IUPAC, Atkinson et al. 2004), reproduce the computed rate constants of results.json within
the deviation written beside them."""

from __future__ import annotations

import csv
import json
import math

import numpy as np


def _limit(a, x, e, T):
    return a * (T / 300.0) ** (-x) * math.exp(-e / T)


def _falloff_by_hand(row, T, M_cm3):
    k0M = _limit(row["k0_300K"], row["n"], row.get("k0_E_over_R_K", 0.0), T) * M_cm3
    ki = _limit(row["kinf_300K"], row["m"], row.get("kinf_E_over_R_K", 0.0), T)
    x = k0M / ki
    N = 1.0 if row["form"] == "jpl_falloff" else 0.75 - 1.27 * math.log10(row["Fc"])
    return k0M / (1.0 + x) * row["Fc"] ** (1.0 / (1.0 + (math.log10(x) / N) ** 2))


def test_demo_evaluation_forms_carry_the_uncertainty_pair_and_reproduce_the_rates(demo_run):
    _, out, _ = demo_run
    doc = json.loads((out / "evaluation_forms.json").read_text())
    res = json.loads((out / "results.json").read_text())
    unc = {c["name"]: c for c in res["uncertainty"]["channels"]}
    unc_falloff = {f["name"]: f for f in res["uncertainty"]["falloff"]}
    channels = {c["name"]: c for c in res["channels"]}
    for row in doc["rows"]:
        name = row["channel"]
        if row["form"] == "arrhenius":
            assert (row["f298"], row["g_K"]) == (unc[name]["f298"], unc[name]["g_K"])
            ch = channels[name]
            T, k = np.asarray(ch["temperature_K"]), np.asarray(ch["rate_constant"])
            assert row["A_unit"] == ch["rate_constant_unit"]
            dev = np.max(np.abs(row["A"] * np.exp(-row["E_over_R_K"] / T) / k - 1.0))
            assert dev <= row["max_deviation_percent"] / 100 * (1 + 1e-9)
        else:
            f = unc_falloff[name]
            j = int(np.argmin(np.abs(np.log(np.asarray(f["pressure_bar"])))))
            assert (row["f298"], row["g_K"], row["uncertainty_pressure_bar"]) == (f["f298"][j], f["g_K"][j],
                                                                                  f["pressure_bar"][j])
            cf = next(c for c in res["falloff"]["channels"] if c["name"] == name)
            T, M, k = (np.asarray(cf[key]) for key in ("temperature_K", "number_density_per_cm3", "rate_constant"))
            worst = max(abs(_falloff_by_hand(row, T[a], M[a, b]) / k[a, b] - 1.0)
                        for a in range(T.size) for b in range(M.shape[1]))
            assert worst <= row["max_deviation_percent"] / 100 * (1 + 1e-6)
    forms = {(r["channel"], r["form"]) for r in doc["rows"]}
    assert {("bare", "jpl_falloff"), ("bare", "iupac_falloff"), ("one-water", "arrhenius")} <= forms
    with open(out / "tables" / "evaluation_forms.csv", newline="") as fh:
        rows = list(csv.DictReader(fh))
    assert len(rows) == len(doc["rows"]) and all(r["f298 [1]"] for r in rows)
    assert "## Evaluation forms" in (out / "report.md").read_text()
