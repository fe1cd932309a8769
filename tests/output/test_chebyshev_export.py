"""Chebyshev expressions in fits (tstrate.study.fits, tstrate.output.fit_records), fits.json/fits.csv and the Cantera mechanism.

Cantera (reference library, test-only) is the independent reader of the mechanism: it evaluates
the written ``type: Chebyshev`` reactions from the coefficients, the reduced variables of
Venkatesh, Chang, Dean, Cohen and Carr, AIChE J. 43, 1331 (1997), and the file's molecule-cm-s
units. Cantera's units: forward_rate_constants in kmol, m^3, s (k_SI per molecule times
(N_A * 1000 per kmol)^(order - 1)); equilibrium_constants in (kmol m^-3)^dn.

For the demo study Cantera reproduces tstrate's k(T) (bare and water-assisted channels) and the
falloff channel's k(T, P) within the deviation each reaction states (at most the study's 5 %).
"""

from __future__ import annotations

import csv
import io
import json
from pathlib import Path

import numpy as np
import pytest

from tstrate.errors import InputError
from tstrate.io.study import read_study
from tstrate.output.fit_records import fits_to_json
from tstrate.expressions.troe import TroeFit
from tstrate.study.fits import arrhenius_expression, fit_study
from tstrate.output.mechanism import mechanism_yaml, write_mechanism
from tstrate.output.tables import fits_csv_text
from tstrate.units import N_A

pytestmark = pytest.mark.fitting     # rerun by .ci/run with 1 and 2 BLAS threads

ct = pytest.importorskip("cantera")

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "molecules" / "carbonic_acid" / "study.toml"
PER_KMOL = N_A * 1e3        # molecules per kmol


def _k_per_molecule(gas, i, order):
    return gas.forward_rate_constants[i] / PER_KMOL ** (order - 1)


def _invented_grid(rates, name):
    """A smooth invented k(T, P) for a channel: k_inf (1 + (P/1 kPa)^-0.2 (T/300 K)^2)^-1 [SI]."""
    cr = next(r for r in rates if r.channel == name)
    P = np.logspace(0, 6, 9)                                       # 1 Pa - 10 bar
    k = cr.k[:, None] / (1 + (P[None, :] / 1e3) ** -0.2 * (cr.temperature_K[:, None] / 300) ** 2)
    return P, k


# ----------------------------------------------------------------------------- fits

def test_chebyshev_fits_per_channel(carbonic, rates):
    fits = fit_study(carbonic, mechanism_form="chebyshev")
    for c, cr in zip(fits.channels, rates):
        assert c.chebyshev is not None and c.chebyshev_falloff is None
        assert c.mechanism_kind == "chebyshev" and not c.chebyshev.pressure_dependent
        # the basis is the smallest that meets the 5 % tolerance on the grid and between grid points
        n = c.chebyshev.n_temperature
        assert [label for label, _ in c.export.tried] == [f"Chebyshev {i} x 1" for i in range(1, n + 1)]
        assert all(d > 0.05 for _, d in c.export.tried[:-1]) and c.export.deviation.max_rel <= 0.05
        np.testing.assert_allclose(c.chebyshev.rate(cr.temperature_K), cr.k,
                                   rtol=1.01 * c.chebyshev.max_rel_deviation + 1e-12)
        assert c.expression is c.chebyshev
        assert c.modified.n_points == cr.temperature_K.size       # Arrhenius fits stay
    # with the modified form no Chebyshev fit is made
    assert all(c.chebyshev is None for c in fit_study(carbonic).channels)


def test_term_counts_are_lowered_to_the_points_or_checked(carbonic):
    fits = fit_study(carbonic, mechanism_form="chebyshev", chebyshev_temperature_terms=3)
    assert fits.channels[0].chebyshev.n_temperature == 3
    with pytest.raises(InputError, match="9 temperature.s. cannot fit 12 Chebyshev") as info:
        fit_study(carbonic, mechanism_form="chebyshev", chebyshev_temperature_terms=12)
    assert info.value.field == "fits.chebyshev_temperature_terms"
    assert info.value.file == carbonic.file and "at most 9" in info.value.hint


def test_two_dimensional_fit_from_a_falloff_grid(carbonic, rates):
    P, k = _invented_grid(rates, "bare")
    fits = fit_study(carbonic, mechanism_form="chebyshev", falloff_grid={"bare": (P, k)},
                     chebyshev_pressure_terms=5)
    c = fits.channel_fit("bare")
    f = c.chebyshev_falloff
    assert c.mechanism_kind == "chebyshev_falloff"
    # the pressure terms asked for; the temperature terms the fewest that meet the tolerance
    assert (f.n_pressure, f.Pmin_Pa, f.Pmax_Pa) == (5, 1.0, 1e6)
    assert c.export.tried[-1][0] == f"Chebyshev {f.n_temperature} x 5"
    assert all(d > 0.05 for _, d in c.export.tried[:-1])
    np.testing.assert_allclose(f.rate(c.temperature_K[:, None], P[None, :]), k,
                               rtol=1.01 * f.max_rel_deviation + 1e-12)
    assert f.max_rel_deviation <= 0.05
    assert fits.channel_fit("water").chebyshev_falloff is None
    with pytest.raises(InputError, match="falloff grid given for unknown channel 'nope'"):
        fit_study(carbonic, mechanism_form="chebyshev", falloff_grid={"nope": (P, k)})
    with pytest.raises(InputError, match=r"falloff grid of shape \(8, 9\) does not match the 9"):
        fit_study(carbonic, mechanism_form="chebyshev", falloff_grid={"bare": (P, k[:8])})
    with pytest.raises(InputError, match="9 pressure.s. cannot fit 10") as info:
        fit_study(carbonic, mechanism_form="chebyshev", falloff_grid={"bare": (P, k)},
                  chebyshev_pressure_terms=10)
    assert info.value.field == "fits.chebyshev_pressure_terms"


def test_troe_channel_without_grid_keeps_troe(carbonic, carbonic_troe):
    fits = fit_study(carbonic, mechanism_form="chebyshev", troe={"bare": carbonic_troe})
    c = fits.channel_fit("bare")
    # without computed k(T, P) there is nothing to measure the Troe expression against: it is written, and said
    assert c.mechanism_kind == "troe"
    assert any("its deviation is not measured" in n for n in c.export.notes)
    text = mechanism_yaml(fits)
    assert "type: falloff" in text and text.count("type: Chebyshev") == 1   # the water channel


@pytest.fixture(scope="module")
def carbonic_troe(carbonic):
    kinf = fit_study(carbonic).channel_fit("bare").modified
    k0 = arrhenius_expression(1e-16, -3.0, 150e3, order=2)      # invented, SI m^3 s^-1
    return TroeFit(k0=k0, kinf=kinf, a=0.6, T3_K=300.0, T1_K=3000.0, bath_gas="CO2")


# ----------------------------------------------------------------------------- JSON and CSV

def test_json_and_csv_records(carbonic, rates):
    P, k = _invented_grid(rates, "bare")
    fits = fit_study(carbonic, mechanism_form="chebyshev", falloff_grid={"bare": (P, k)})
    doc = json.loads(json.dumps(fits_to_json(fits)))           # JSON-ready
    bare, water = doc["channels"]
    assert bare["mechanism_expression"] == "chebyshev_falloff"
    assert water["mechanism_expression"] == "chebyshev"
    rec = water["chebyshev"]
    assert rec["k_unit"] == "cm3 molecule-1 s-1" and rec["k_SI_unit"] == "m3 molecule-1 s-1"
    # 1 m3 = 1e6 cm3: only a_00 differs between the two coefficient sets
    a, a_si = np.array(rec["coefficients_log10_k"]), np.array(rec["coefficients_log10_k_SI"])
    assert a[0, 0] - a_si[0, 0] == pytest.approx(6.0, abs=1e-12)
    np.testing.assert_array_equal(a[1:], a_si[1:])
    assert rec["Pmin_bar"] is None and rec["pressure_dependent"] is False
    assert bare["chebyshev_falloff"]["Pmax_bar"] == pytest.approx(10.0, rel=1e-12)   # 1e6 Pa
    assert bare["chebyshev_falloff"]["max_deviation_percent"] <= 5.0
    assert bare["modified_arrhenius"]["A_unit"] == "s-1"       # Arrhenius fits still there
    rows = list(csv.reader(io.StringIO(fits_csv_text(fits))))
    header, rows = rows[0], rows[1:]
    col = header.index("Chebyshev coefficients [1]")
    cheb = {(r[0], r[1]): r for r in rows if r[1].startswith("chebyshev")}
    # the falloff channel's k(T, P) is exported, so no k(T) expansion is made for it
    assert set(cheb) == {("bare", "chebyshev_falloff"), ("water", "chebyshev")}
    assert json.loads(cheb[("water", "chebyshev")][col]) == rec["coefficients_log10_k"]
    assert float(cheb[("bare", "chebyshev_falloff")][header.index("Pmax [bar]")]) == pytest.approx(10.0, rel=1e-12)


# ----------------------------------------------------------------------------- Cantera

def test_cantera_reads_synthetic_chebyshev_mechanism(carbonic, rates, tmp_path):
    P, k = _invented_grid(rates, "bare")
    fits = fit_study(carbonic, mechanism_form="chebyshev", falloff_grid={"bare": (P, k)})
    gas = ct.Solution(str(write_mechanism(fits, tmp_path / "m.yaml")))
    # Cantera 3.2 reads "H2CO3 + H2O <=> CO2 + 2 H2O" as H2CO3 (+ H2O as a named third body)
    assert gas.reaction(0).reaction_type == "Chebyshev"
    assert gas.reaction(1).reaction_type in ("Chebyshev", "three-body-Chebyshev")
    # ... which gives the same mass-action rate of progress k [H2CO3] [H2O] (both directions)
    gas.TPX = 250.0, 1e4, "H2CO3:0.5, H2O:0.3, CO2:0.2"
    c = dict(zip(gas.species_names, gas.concentrations))
    assert gas.forward_rates_of_progress[1] == pytest.approx(
        gas.forward_rate_constants[1] * c["H2CO3"] * c["H2O"], rel=1e-12)
    assert gas.reverse_rates_of_progress[1] == pytest.approx(
        gas.reverse_rate_constants[1] * c["CO2"] * c["H2O"] ** 2, rel=1e-12)
    for ci, c in enumerate(fits.channels):
        for T in c.temperature_K:
            # a pressure-independent channel gives the same k at any pressure (one column)
            for p in (P if ci == 0 else (1e-2, 1e5, 1e8)):
                gas.TP = T, p
                fit = c.chebyshev_falloff if ci == 0 else c.chebyshev
                assert _k_per_molecule(gas, ci, c.order) == pytest.approx(fit.rate(T, p), rel=1e-8)


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    """The demo study computed as `tstrate run` does (falloff included), with its mechanism."""
    from tstrate.study.run import compute_study

    study = read_study(DEMO)
    assert study.sections["fits"].mechanism_form == "chebyshev"      # the demo uses it
    result = compute_study(study)
    path = write_mechanism(result.fits, tmp_path_factory.mktemp("demo") / "mechanism.yaml")
    return result, ct.Solution(str(path))


@pytest.mark.slow
def test_demo_mechanism_reproduces_tstrate_k_of_T(demo):
    result, gas = demo
    names = [c.name for c in result.fits.channels]
    assert names == ["bare", "one-water", "two-water"]
    for i, cr in enumerate(result.rates):
        worst = 0.0
        for T, k, ln_kc in zip(cr.temperature_K, cr.k, cr.ln_kc):
            # one-water and two-water have no pressure dependence; the bare channel at 1 bar is
            # within 0.3 % of its high-pressure limit in the falloff table
            for p in ((1e5,) if cr.channel == "bare" else (1.0, 1e5)):
                gas.TP = T, p
                worst = max(worst, abs(_k_per_molecule(gas, i, cr.order) / k - 1))
            dn = cr.reverse_order - cr.order
            kc_tstrate = np.exp(ln_kc - dn * np.log(PER_KMOL))   # -> (kmol m^-3)^dn
            assert np.log(gas.equilibrium_constants[i]) == pytest.approx(np.log(kc_tstrate),
                                                                         abs=0.02)
        assert worst <= result.fits.channels[i].export.deviation.max_rel * (1 + 1e-6), (cr.channel, worst)


@pytest.mark.slow
def test_demo_mechanism_reproduces_the_falloff_table(demo):
    result, gas = demo
    (cf,) = result.falloff.channels
    assert result.fits.channel_fit(cf.name).mechanism_kind == "chebyshev_falloff"
    i = [c.name for c in result.fits.channels].index(cf.name)
    ratio = np.empty_like(cf.rate_constant_per_s)
    for a, T in enumerate(cf.temperature_K):
        for b, p in enumerate(cf.pressure_Pa):
            gas.TP = T, p
            ratio[a, b] = gas.forward_rate_constants[i] / cf.rate_constant_per_s[a, b]
    # within the deviation stated for the file (measured on the grid and between grid points)
    assert np.max(np.abs(ratio - 1)) <= result.fits.channel_fit(cf.name).export.deviation.max_rel * (1 + 1e-6)
    # on the grid alone it is the grid deviation stated (same numbers, 1e-8 rounding)
    assert np.max(np.abs(ratio - 1)) == pytest.approx(
        result.fits.channel_fit(cf.name).export.deviation.max_rel_grid, rel=1e-6)
