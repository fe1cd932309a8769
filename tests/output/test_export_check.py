"""What is exported is what was computed: the expression each channel is exported in, its deviation
measured from the file's own numbers on the grid and between grid points, and Cantera (reference
library, test-only) as the independent reader that must reproduce the computed rates within the
deviation stated.

Studies: the demo (molecules/carbonic_acid/study.toml) and two small studies built here from the
invented test species of tests/data/falloff and tests/data/tst (numbers labelled invented there):

- a falloff channel with Eckart tunnelling whose Troe form misfits (H2CO3 -> CO2 + H2O,
  200-500 K, 1e-6 to 1 bar in CO2);
- a strongly curved bimolecular channel (H2CO3 + H2O through a complex, Eckart, 150-1000 K),
  whose modified Arrhenius fit has n = 11 and misses by 94 % between grid points.

Cantera's units: forward_rate_constants in kmol, m^3, s (k_SI per molecule times
(N_A * 1000 per kmol)^(order - 1)).
"""

from __future__ import annotations

import dataclasses
import json
import shutil
from pathlib import Path

import numpy as np
import pytest

from tests.output.cantera_check import assert_within_stated
from tstrate.expressions.arrhenius import fit_arrhenius_split
from tstrate.expressions.choice import between_temperatures, measure
from tstrate.io.study import read_study
from tstrate.output.fit_records import fits_to_json
from tstrate.output.mechanism import mechanism_yaml, write_mechanism
from tstrate.output.mechanism_check import check_written
from tstrate.study.fits import ChannelGrid, fit_study

pytestmark = pytest.mark.fitting     # rerun by .ci/run with 1 and 2 BLAS threads

ct = pytest.importorskip("cantera")

ROOT = Path(__file__).resolve().parents[2]
DATA = ROOT / "tests" / "data"
DEMO = ROOT / "molecules" / "carbonic_acid" / "study.toml"

FALLOFF_STUDY = """
title = "invented falloff channel whose Troe form misfits (test)"
[species]
H2CO3 = "h2co3.toml"
TS_bare = "ts_bare.toml"
CO2 = "co2.toml"
H2O = "h2o.toml"
[conditions]
temperature_K = [200, 250, 300, 400, 500]
pressure_bar = [1e-6, 1e-5, 1e-4, 1e-3, 1e-2, 0.1, 1.0]
bath_gas = "CO2"
[[channel]]
name = "bare_eckart"
reactants = ["H2CO3"]
transition_state = "TS_bare"
products = ["CO2", "H2O"]
tunnelling = "eckart"
[[channel]]
name = "back"
reactants = ["CO2", "H2O"]
transition_state = "TS_bare"
products = ["H2CO3"]
tunnelling = "none"
[falloff]
grain_cm1 = 10
delta_E_down_cm1 = 300
"""

CURVED_STUDY = """
title = "invented strongly curved bimolecular channel (test)"
[species]
H2CO3 = "h2co3.toml"
H2O = "h2o.toml"
CO2 = "co2.toml"
H2CO3_H2O = "h2co3_h2o.toml"
TS_w = "ts_w.toml"
[conditions]
temperature_K = [150, 175, 200, 225, 250, 275, 300, 350, 400, 500, 700, 1000]
[[channel]]
name = "water"
reactants = ["H2CO3", "H2O"]
complex = "H2CO3_H2O"
transition_state = "TS_w"
products = ["CO2", "H2O", "H2O"]
tunnelling = "eckart"
"""


def _study(tmp, text, source, extra=""):
    tmp.mkdir(parents=True, exist_ok=True)
    for f in source.glob("*.toml"):
        if f.name != "study.toml":
            shutil.copy(f, tmp / f.name)
    path = tmp / "study.toml"
    path.write_text(text + extra)
    return read_study(path)


def _compute(study):
    """compute_study without the steps the fits do not use."""
    from tstrate.study.run import compute_study

    secs = {k: v for k, v in study.sections.items()
            if k not in ("uncertainty", "isotopes", "excitation", "comparison")}
    return compute_study(dataclasses.replace(study, sections=secs))


def _written(result, tmp):
    """Write mechanism.yaml, check it from its own numbers, and load it in Cantera."""
    path = write_mechanism(result.fits, tmp / "mechanism.yaml")
    checked = check_written(result.fits, mechanism_path=path,
                            fits_json=json.loads(json.dumps(fits_to_json(result.fits))))
    return ct.Solution(str(path)), path.read_text(), checked


@pytest.fixture(scope="module")
def falloff_run(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("falloff")
    study = _study(tmp / "study", FALLOFF_STUDY, DATA / "falloff")
    result = _compute(study)
    return (study, result) + _written(result, tmp)


@pytest.fixture(scope="module")
def curved(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("curved")
    return _study(tmp / "study", CURVED_STUDY, DATA / "tst"), tmp


# ----------------------------------------------------------------------------- the falloff misfit

def test_falloff_channel_cantera_within_stated_deviation(falloff_run):
    study, result, gas, text, checked = falloff_run
    ratios = assert_within_stated(gas, result.fits, "CO2")
    c = result.fits.channel_fit("bare_eckart")
    pts = c.check_points
    # the whole 5 x 7 grid and the points between (9 temperatures x 13 pressures in all)
    assert (pts.n_grid, pts.n_between) == (35, 9 * 13 - 35)
    assert ratios["bare_eckart"].size == 9 * 13
    # the deviation read back from both files is the one stated
    assert checked["bare_eckart"]["mechanism_yaml"].max_rel == pytest.approx(c.export.deviation.max_rel, rel=1e-9)
    assert checked["bare_eckart"]["fits_json"].max_rel == pytest.approx(c.export.deviation.max_rel, rel=1e-9)


def test_falloff_misfit_troe_is_not_exported_and_the_miss_is_stated(falloff_run):
    study, result, gas, text, checked = falloff_run
    c = result.fits.channel_fit("bare_eckart")
    tried = dict(c.export.tried)
    # the Troe form with the Arrhenius limits written misfits on this grid (k_expr/k far from 1)
    assert tried["Troe"] > 0.5
    assert c.mechanism_kind != "troe"
    # nothing meets 5 %: the best is written, and the miss is said in the file, fits.json and the summary
    assert not c.export.meets_tolerance
    assert c.export.deviation.max_rel == min(tried.values())
    assert "TOLERANCE MISSED" in text and "bare_eckart" in text.split("TOLERANCE MISSED")[1].split("\n")[0]
    doc = fits_to_json(result.fits)
    assert doc["tolerance_missed"] == ["bare_eckart"]
    assert any("no supported form meets the 5 % tolerance" in w for w in c.warnings)
    # the bimolecular channel of the same study meets it and says so
    back = result.fits.channel_fit("back")
    assert back.export.meets_tolerance and "tolerance_missed" in doc


def test_requested_troe_is_honoured_flagged_and_shows_its_fit_error(falloff_run, tmp_path):
    study, result, *_ = falloff_run
    from tstrate.model.settings import FitOptions

    secs = dict(study.sections, fits=FitOptions(mechanism_form="troe"))
    troe_result = _compute(dataclasses.replace(study, sections=secs))
    c = troe_result.fits.channel_fit("bare_eckart")
    assert c.mechanism_kind == "troe" and not c.export.meets_tolerance
    assert any("the requested form 'troe'" in w and "above the 5 % tolerance" in w for w in c.warnings)
    # the effective-k0 fit error is shown beside the Troe expression, in the file and in fits.json
    gas, text, _ = _written(troe_result, tmp_path)
    note = next(ln for ln in text.splitlines() if "channel bare_eckart;" in ln)
    assert "with tabulated limits" in note and f"{100 * c.troe.max_rel_deviation:.3g} %" in note
    rec = fits_to_json(troe_result.fits)["channels"][0]["mechanism"]
    assert rec["kind"] == "troe"
    assert rec["troe_fit_max_deviation_tabulated_limits_percent"] == pytest.approx(100 * c.troe.max_rel_deviation)
    # Cantera evaluates the written Troe expression exactly as far from the computed rates as stated
    ratios = assert_within_stated(gas, troe_result.fits, "CO2")
    assert np.max(np.abs(ratios["bare_eckart"] - 1)) > 0.5
    # canonical parameter order: a in [0, 1], T*** <= T*
    t = c.expression
    assert 0.0 <= t.a <= 1.0 and t.T3_K <= t.T1_K


def test_metadata_follow_the_channel(falloff_run):
    study, result, gas, text, _ = falloff_run
    doc = fits_to_json(result.fits)
    by = {c["name"]: c for c in doc["channels"]}
    assert by["back"]["includes_tunnelling"] is False and by["back"]["tunnelling"] == "none"
    assert by["bare_eckart"]["includes_tunnelling"] is True
    assert "without tunnelling" in by["back"]["method"] and "Eckart" in by["bare_eckart"]["method"]
    assert "TST with tunnelling" not in text
    note = next(ln for ln in text.splitlines() if "channel back;" in ln)
    assert "canonical TST without tunnelling" in note
    from tstrate.output.run_files import run_summary

    summary = run_summary(result, "out", [])
    for ch in summary["channels"]:
        c = result.fits.channel_fit(ch["name"])
        assert ch["mechanism_kind"] == c.mechanism_kind == ch["mechanism_fit"]["kind"]
        assert ch["mechanism_fit"]["max_deviation_percent"] == pytest.approx(100 * c.export.deviation.max_rel)


# ----------------------------------------------------------------------------- the curved channel

def test_curved_channel_auto_form_is_the_smallest_basis_meeting_tolerance(curved, tmp_path):
    study, _ = curved
    fits = fit_study(study)
    c = fits.channel_fit("water")
    # Arrhenius and modified Arrhenius miss; the smallest Chebyshev basis that meets 5 % is exported
    labels = [label for label, _ in c.export.tried]
    assert labels[:2] == ["Arrhenius", "modified Arrhenius"]
    assert all(d > 0.05 for _, d in c.export.tried[:-1]) and c.export.tried[-1][1] <= 0.05
    assert c.mechanism_kind == "chebyshev" and c.export.meets_tolerance
    assert any(f"Chebyshev basis {c.chebyshev.n_temperature} x 1" in n for n in c.export.notes)
    # no warning about forms that are not exported
    assert c.warnings == () or all("Arrhenius" not in w for w in c.warnings)
    # between grid points too: 12 temperatures and 11 points between them
    assert (c.check_points.n_grid, c.check_points.n_between) == (12, 11)
    path = write_mechanism(fits, tmp_path / "m.yaml")
    check_written(fits, mechanism_path=path)
    assert_within_stated(ct.Solution(str(path)), fits)


def test_curved_channel_requested_modified_form_is_flagged_with_split_and_n_caution(curved, tmp_path):
    study, _ = curved
    fits = fit_study(study, mechanism_form="modified", split=True)
    c = fits.channel_fit("water")
    assert c.mechanism_kind == "modified_arrhenius" and not c.export.meets_tolerance
    w = " | ".join(c.warnings)
    assert "the requested form 'modified'" in w and "would meet it" in w
    # the split stated is the split the program chooses (and writes to fits.json)
    assert f"split at {c.split.break_K:g} K" in w
    best = fit_arrhenius_split(c.temperature_K, c.k_SI, order=2, modified=True)
    assert best.break_K == c.split.break_K
    # |n| > 10: the caution is on the exported expression, in the file's note
    assert abs(c.modified.n) > 10 and "|n| > 10" in w
    text = mechanism_yaml(fits)
    note = next(ln for ln in text.splitlines() if "channel water;" in ln)
    assert "|n| > 10" in note and "MISSED" in note
    # the deviation stated is measured between grid points as well, and Cantera shows it
    dev = c.export.deviation
    assert dev.max_rel == max(dev.max_rel_grid, dev.max_rel_between) and dev.n_between == 11
    path = write_mechanism(fits, tmp_path / "m.yaml")
    assert_within_stated(ct.Solution(str(path)), fits)
    # without split asked, the hint names the break split = true would choose
    hinted = fit_study(study, mechanism_form="modified").channel_fit("water")
    assert any(f"split at {best.break_K:g} K (the break split = true chooses)" in x for x in hinted.warnings)


def test_between_points_catch_what_the_grid_hides(curved):
    """An interpolating Chebyshev (as many terms as temperatures) passes through every grid point;
    measured between them it shows its swing, which the grid alone would hide."""
    study, _ = curved
    fits = fit_study(study, mechanism_form="chebyshev", chebyshev_temperature_terms=12)
    c = fits.channel_fit("water")
    dev = c.export.deviation
    assert dev.max_rel_grid < 1e-8
    assert dev.max_rel_between > 100 * dev.max_rel_grid
    # the between-point reference is tstrate's own TST at those temperatures
    from tstrate.study.rates import study_rates

    (cr,) = study_rates(study, temperature_K=between_temperatures(c.temperature_K))
    np.testing.assert_allclose(c.check_points.k_SI[~c.check_points.on_grid], cr.k, rtol=1e-12)


# ----------------------------------------------------------------------------- no falloff over the grid

def test_channel_without_falloff_is_exported_as_its_high_pressure_expression(tmp_path):
    """k/k_inf > 0.99 everywhere: the high-pressure expression with a plain statement, not a Troe."""
    study = read_study(ROOT / "tests" / "output" / "data" / "carbonic" / "study.toml")
    base = fit_study(study)
    c0 = base.channel_fit("bare")
    P = np.logspace(3, 6, 4)
    k = c0.k_SI[:, None] * (1 - 0.005 * (1e3 / P[None, :]))      # invented: within 0.5 % of k_inf
    fits = fit_study(study, falloff_grid={"bare": ChannelGrid(P, k, k_inf_SI=c0.k_SI)})
    c = fits.channel_fit("bare")
    assert c.mechanism_kind in ("arrhenius", "modified_arrhenius", "chebyshev")
    assert any("no falloff over the computed grid" in n for n in c.export.notes)
    text = mechanism_yaml(fits)
    assert "(+M)" not in text.split("reactions:")[1]
    # with falloff (k/k_inf down to 0.5) it is a pressure-dependent form
    k2 = c0.k_SI[:, None] / (1 + 1e3 / P[None, :])
    fits2 = fit_study(study, falloff_grid={"bare": ChannelGrid(P, k2, k_inf_SI=c0.k_SI)})
    c2 = fits2.channel_fit("bare")
    assert c2.mechanism_kind in ("pressure_table", "chebyshev_falloff")
    assert measure(c2.expression, c2.check_points).max_rel == c2.export.deviation.max_rel
    # the per-pressure table asked for: Cantera's pressure-dependent-Arrhenius reads it as tstrate does
    fits3 = fit_study(study, mechanism_form="pressure_table",
                      falloff_grid={"bare": ChannelGrid(P, k2, k_inf_SI=c0.k_SI)})
    assert fits3.channel_fit("bare").mechanism_kind == "pressure_table"
    assert any("is for falloff channels" in n for n in fits3.channel_fit("water").export.notes)
    path = write_mechanism(fits3, tmp_path / "plog.yaml")
    check_written(fits3, mechanism_path=path, fits_json=json.loads(json.dumps(fits_to_json(fits3))))
    gas = ct.Solution(str(path))
    assert gas.reaction(0).reaction_type == "pressure-dependent-Arrhenius"
    assert_within_stated(gas, fits3)


# ----------------------------------------------------------------------------- the demo

@pytest.fixture(scope="module")
def demo_run(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("demo")
    result = _compute(read_study(DEMO))
    return (result,) + _written(result, tmp)


def test_demo_mechanism_in_cantera_within_stated_deviation(demo_run):
    result, gas, text, _ = demo_run
    assert result.fits.channels[0].export.requested == "chebyshev"     # the demo asks for it
    ratios = assert_within_stated(gas, result.fits, "CO2")
    for c in result.fits.channels:
        assert c.export.meets_tolerance
        assert c.check_points.n_between > 0 and ratios[c.name].size == c.check_points.k_SI.size
    # the falloff channel is checked on its 16 x 13 grid and between (31 x 25 points in all)
    bare = result.fits.channel_fit("bare")
    assert (bare.check_points.n_grid, bare.check_points.k_SI.size) == (16 * 13, 31 * 25)
    # warnings concern only what is exported: none about Arrhenius fits the Chebyshev file does not hold
    assert not any("Arrhenius" in w for c in result.fits.channels for w in c.warnings)
    assert not any("tunnelling often" in w for w in result.warnings)
