"""Evaluation forms and reference overlays through a whole study (tstrate run's outputs).

The study is the invented falloff test study of tests/data/falloff (not physical data) without its
excitations, with two invented reference expressions (labelled so): an Arrhenius one and an IUPAC-
form one. The checks evaluate the written parameters back, independently of tstrate's own
evaluators, with the published formulas (JPL Publication 19-5 section 2; IUPAC, Atkinson et al.
2004), and compare the ratios with an evaluation of the references written out here.
"""

from __future__ import annotations

import csv
import json
import math
import shutil
from dataclasses import replace
from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pytest

from tstrate.errors import InputError
from tstrate.io.study import read_study
from tstrate.units import K_B

DATA = Path(__file__).resolve().parents[1] / "data" / "falloff"
REFERENCES = """
[[reference_rate]]
channel = "bare"
source = "invented Arrhenius reference for the test"
label = "invented A, E/R"
form = "arrhenius"
A = 5e13
E_over_R_K = 20000
temperature_range_K = [250, 500]

[[reference_rate]]
channel = "bare"
source = "invented IUPAC-form reference for the test"
label = "invented IUPAC"
kind = "measured"
form = "iupac_falloff"
k0_300K = 2.55e-3
n = 4.8
k0_E_over_R_K = 20600
kinf_300K = 2.9e13
m = -0.56
kinf_E_over_R_K = 19900
Fc = 0.74
temperature_range_K = [200, 500]
pressure_range_bar = [1e-5, 1]
"""


def _study(folder: Path, extra: str = REFERENCES) -> Path:
    shutil.copytree(DATA, folder)
    path = folder / "study.toml"
    text = path.read_text()
    text = text[:text.index("[[excitation]]")]
    path.write_text(text + extra)
    return path


@pytest.fixture(scope="module")
def run(tmp_path_factory):
    from tstrate.output.folder import write_outputs
    from tstrate.study.run import compute_study

    base = tmp_path_factory.mktemp("evalrefs")
    result = compute_study(read_study(_study(base / "study")))
    write_outputs(result, base / "out")
    return result, base / "out"


def _iupac_by_hand(T, M_cm3, k0, n, E0, kinf, m, Einf, Fc):
    """The IUPAC falloff expression written out (k0 includes [M])."""
    k0M = k0 * (T / 300.0) ** (-n) * math.exp(-E0 / T) * M_cm3
    ki = kinf * (T / 300.0) ** (-m) * math.exp(-Einf / T)
    N = 0.75 - 1.27 * math.log10(Fc)
    return k0M * ki / (k0M + ki) * Fc ** (1.0 / (1.0 + (math.log10(k0M / ki) / N) ** 2))


def _jpl_by_hand(T, M_cm3, k0, n, kinf, m):
    k0M = k0 * (T / 300.0) ** (-n) * M_cm3
    ki = kinf * (T / 300.0) ** (-m)
    return k0M / (1.0 + k0M / ki) * 0.6 ** (1.0 / (1.0 + math.log10(k0M / ki) ** 2))


def test_written_forms_reproduce_the_computed_rates_within_their_stated_deviation(run):
    result, out = run
    doc = json.loads((out / "evaluation_forms.json").read_text())
    rows = {(r["channel"], r["form"]): r for r in doc["rows"]}
    assert set(rows) == {("bare", "arrhenius"), ("bare", "jpl_falloff"), ("bare", "iupac_falloff"),
                         ("bare_eckart", "arrhenius"), ("bare_eckart", "jpl_falloff"),
                         ("bare_eckart", "iupac_falloff"), ("back", "arrhenius")}
    for r in result.rates:
        row = rows[(r.channel, "arrhenius")]
        factor = 1.0 if r.order == 1 else 1e6          # s-1, cm3 molecule-1 s-1
        k_form = row["A"] * np.exp(-row["E_over_R_K"] / r.temperature_K) / factor
        dev = np.max(np.abs(k_form / r.k - 1.0))
        assert dev <= row["max_deviation_percent"] / 100 * (1 + 1e-9)
    for cf in result.falloff.channels:
        j, i = rows[(cf.name, "jpl_falloff")], rows[(cf.name, "iupac_falloff")]
        assert j["Fc"] == 0.6 and j["k0_unit"] == "cm3 molecule-1 s-1" and j["kinf_unit"] == "s-1"
        for a, t in enumerate(cf.temperature_K):
            for b, m in enumerate(cf.number_density_m3[a]):
                k = cf.rate_constant_per_s[a, b]
                kj = _jpl_by_hand(t, m * 1e-6, j["k0_300K"], j["n"], j["kinf_300K"], j["m"])
                ki = _iupac_by_hand(t, m * 1e-6, i["k0_300K"], i["n"], i["k0_E_over_R_K"], i["kinf_300K"], i["m"],
                                    i["kinf_E_over_R_K"], i["Fc"])
                assert abs(kj / k - 1) <= j["max_deviation_percent"] / 100 * (1 + 1e-6)
                assert abs(ki / k - 1) <= i["max_deviation_percent"] / 100 * (1 + 1e-6)
        assert i["pressure_range_bar"] == [1e-6, 1.0] and i["bath_gas"] == "CO2"
        assert i["n_check_points"] > 0
    # the IUPAC form with Arrhenius factors follows this decomposition far better than JPL's power laws
    assert rows[("bare", "iupac_falloff")]["max_deviation_percent"] < 0.1 * rows[("bare", "jpl_falloff")][
        "max_deviation_percent"]
    with open(out / "tables" / "evaluation_forms.csv", newline="") as f:
        assert len(list(csv.DictReader(f))) == len(rows)


def test_reference_ratios_against_the_expressions_written_out(run):
    result, out = run
    with open(out / "tables" / "reference_ratios.csv", newline="") as f:
        rows = list(csv.DictReader(f))
    arr = [r for r in rows if r["reference"] == "invented A, E/R"]
    assert sorted(float(r["T [K]"]) for r in arr) == [300.0, 500.0]       # 200 K is outside 250-500 K
    bare = next(r for r in result.rates if r.channel == "bare")
    for r in arr:
        T = float(r["T [K]"])
        assert float(r["k reference"]) == pytest.approx(5e13 * math.exp(-20000.0 / T), rel=1e-12)
        assert float(r["k computed"]) == pytest.approx(float(bare.k[list(bare.temperature_K).index(T)]), rel=1e-12)
    tp = [r for r in rows if r["quantity"] == "k(T, p)"]
    assert tp and all(1e-5 <= float(r["p [bar]"]) <= 1.0 for r in tp)     # the reference's pressure range
    for r in tp:
        T, M = float(r["T [K]"]), float(r["number density [molecule cm-3]"])
        ref = _iupac_by_hand(T, M, 2.55e-3, 4.8, 20600.0, 2.9e13, -0.56, 19900.0, 0.74)
        assert float(r["k reference"]) == pytest.approx(ref, rel=1e-10)
        assert float(r["computed / reference [1]"]) == pytest.approx(float(r["k computed"]) / ref, rel=1e-10)
    report = (out / "report.md").read_text()
    assert "## Reference expressions" in report and "## Evaluation forms" in report
    assert json.loads((out / "results.json").read_text())["references"][1]["kind"] == "measured"
    for name in ("arrhenius.png", "falloff_bare.png"):
        assert (out / "plots" / name).stat().st_size > 1000


def test_uncertainty_pair_joins_the_rows(run):
    from tstrate.output.evaluation_records import evaluation_forms_record

    result, _ = run
    unc = SimpleNamespace(channels=[SimpleNamespace(name="bare", f298=1.4, g_K=120.0)],
                          falloff=[SimpleNamespace(name="bare", f298=np.array([2.0, 1.9, 1.8, 1.7]),
                                                   g_K=np.array([50.0, 60.0, 70.0, 80.0]),
                                                   pressure_Pa=np.array([0.1, 10.0, 1e3, 1e5]))])
    doc = evaluation_forms_record(replace(result, uncertainty=unc))
    rows = {(r["channel"], r["form"]): r for r in doc["rows"]}
    assert (rows[("bare", "arrhenius")]["f298"], rows[("bare", "arrhenius")]["g_K"]) == (1.4, 120.0)
    # falloff forms: the pair at the study pressure nearest 1 bar
    j = rows[("bare", "jpl_falloff")]
    assert (j["f298"], j["g_K"], j["uncertainty_pressure_bar"]) == (1.7, 80.0, 1.0)
    assert rows[("back", "arrhenius")]["f298"] is None


@pytest.mark.parametrize("extra, key, match", [
    ('[[reference_rate]]\nchannel = "nope"\nsource = "x"\nform = "arrhenius"\nA = 1\n'
     'temperature_range_K = [200, 300]\n', "reference_rate[0].channel", "unknown channel"),
    ('[[reference_rate]]\nchannel = "bare"\nsource = "x"\nform = "arrhenius"\nA = 1\nFc = 0.5\n'
     'temperature_range_K = [200, 300]\n', "reference_rate[0].Fc", "not a key of form"),
    ('[[reference_rate]]\nchannel = "bare"\nsource = "x"\nform = "jpl_falloff"\nk0_300K = 1e-30\n'
     'kinf_300K = 1e10\ntemperature_range_K = [300, 200]\n', "reference_rate[0].temperature_range_K", "lowest"),
    ('[[reference_rate]]\nchannel = "bare"\nsource = "x"\nform = "arrhenius"\nA = 1\nunit = "cm3 molecule-1 s-1"\n'
     'temperature_range_K = [200, 300]\n', "reference_rate[0].unit", "does not fit order 1"),
])
def test_bad_references_name_file_and_key(tmp_path, extra, key, match):
    path = _study(tmp_path / "s", extra)
    with pytest.raises(InputError, match=match) as err:
        read_study(path)
    assert err.value.field == key and str(path) in str(err.value)


def test_rate_energy_figure_does_not_join_over_empty_grains():
    from tstrate.output.pressure_plots import rate_energy_figure

    e = np.arange(0.0, 100.0) * 10 * 11.9627       # J/mol of 10 cm-1 grains (1 cm-1 = 11.9627 J/mol)
    k = np.where(np.arange(100) < 40, 0.0, 1e6)
    k[[55, 56, 70]] = 0.0                             # sparse grains above the threshold
    rate = SimpleNamespace(energies_J_per_mol=e, rate_per_s=k, barrier_J_per_mol=e[40])
    res = SimpleNamespace(model=SimpleNamespace(rate=rate, tunnelling="none", reactant=SimpleNamespace(name="X")),
                          pressure=None, profile=None, spec=SimpleNamespace(channel="c"))
    fig = rate_energy_figure(res)
    ax = fig.axes[0]
    line = next(x for x in ax.get_lines() if x.get_label() == "RRKM k(E)")
    y = np.asarray(line.get_ydata(), dtype=float)
    assert np.all(np.isnan(y[[55, 56, 70]])) and np.all(np.isnan(y[:40])) and np.isfinite(y[41])
    labels = [t.get_text() for t in ax.get_legend().get_texts()]
    assert any("k(E) = 0 (3 grains" in t for t in labels) and any("below" in t for t in labels)


def test_every_altitude_curve_is_in_a_legend():
    from tstrate.output.pressure_plots import yield_altitude_figure

    z = np.linspace(0, 20e3, 5)
    prof = SimpleNamespace(stern_volmer=np.linspace(0.1, 0.9, 5), stepwise=np.linspace(0.05, 0.8, 5),
                           pressure_Pa=np.geomspace(1e5, 5e3, 5), temperature_K=np.linspace(288, 217, 5))
    res = SimpleNamespace(profile=prof, altitude_m=z, below_threshold=False, profile_source="a profile",
                          spec=SimpleNamespace(name="x", description="d", channel="c"),
                          model=SimpleNamespace(reactant=SimpleNamespace(name="X")))
    bands = {"stern_volmer": np.vstack([prof.stern_volmer * f for f in (0.8, 0.9, 1.1, 1.2)])}
    fig = yield_altitude_figure(res, bands=bands)
    texts = [t.get_text() for lg in fig.legends + [a.get_legend() for a in fig.axes if a.get_legend()]
             for t in lg.get_texts()]
    for needed in ("Stern-Volmer", "stepwise", "pressure", "temperature", "central 68 %", "central 95 %"):
        assert any(needed in t for t in texts), needed


def test_arrhenius_figure_panels_name_their_unit_and_legend_every_curve():
    from tstrate.output.plots import arrhenius_figure

    T = np.array([200.0, 250.0, 300.0])
    recs = [{"name": f"c{o}", "order": o, "temperature_K": T, "rate_constant": 1e-10 * np.exp(-1000.0 / T),
             "rate_constant_no_tunnelling": 1e-10 * np.exp(-1200.0 / T), "tunnelling": "eckart",
             "rate_constant_unit": unit} for o, unit in ((1, "s-1"), (2, "cm3 molecule-1 s-1"),
                                                          (3, "cm6 molecule-2 s-1"))]
    bands = {"c1": np.vstack([recs[0]["rate_constant"] * f for f in (0.1, 0.5, 2.0, 10.0)])}
    refs = {"c2": [("ref", T, recs[1]["rate_constant"] * 2)]}
    fig = arrhenius_figure(recs, "t", bands=bands, references=refs)
    panels = [a for a in fig.axes if a.get_visible() and a.get_title()]
    assert [a.get_title() for a in panels] == ["unimolecular channels, k in s-1",
                                                "bimolecular channels, k in cm3 molecule-1 s-1",
                                                "termolecular channels, k in cm6 molecule-2 s-1"]
    for a in panels:
        texts = [t.get_text() for t in a.get_legend().get_texts()]
        drawn = [x.get_label() for x in a.get_lines() + a.collections if not x.get_label().startswith("_")]
        assert sorted(texts) == sorted(drawn)
        assert a.xaxis.label.get_fontsize() >= 10
    assert "c1: central 68 %" in [t.get_text() for t in panels[0].get_legend().get_texts()]
    assert "c2: ref" in [t.get_text() for t in panels[1].get_legend().get_texts()]
