"""Study-level fits: Arrhenius forms per channel, NASA polynomials per species, enthalpy zero.

The fitting maths itself is tested in tests/physics/test_fitting.py; here the
wiring of whole studies is checked: which k(T) is fitted, the units written,
warnings, split fits, NASA ranges and errors, the element offsets (checked
against Kc), the experimental H2O reference against NIST-JANAF, and bad input.
"""

from __future__ import annotations

import dataclasses
import math
import shutil
from pathlib import Path

import numpy as np
import pytest

from tstrate.errors import InputError
from tstrate.io.species import read_species
from tstrate.io.study import read_study
from tstrate.study import fits as fits_mod
from tstrate.output.fit_records import fits_to_json
from tstrate.expressions.troe import TroeFit
from tstrate.study.fits import arrhenius_expression, fit_species_nasa, fit_study
from tstrate.expressions.arrhenius import fit_arrhenius
from tstrate.physics.thermo import thermochemistry
from tstrate.study.rates import study_rates
from tstrate.units import R

pytestmark = pytest.mark.fitting     # rerun by .ci/run with 1 and 2 BLAS threads

ROOT = Path(__file__).resolve().parents[2]
TOY = ROOT / "tests" / "data" / "toy" / "study.toml"
CARBONIC = Path(__file__).resolve().parent / "data" / "carbonic" / "study.toml"
REFERENCE = ROOT / "tstrate" / "io" / "reference"


@pytest.fixture(scope="module")
def toy():
    return read_study(TOY)


# ----------------------------------------------------------------------------- channels

def test_channel_fit_uses_k_with_tunnelling(toy):
    """The fitted data are tstrate's TST k(T) with tunnelling (kappa != 1 in the toy study)."""
    fits = fit_study(toy)
    rates = {cr.channel: cr for cr in study_rates(toy)}
    for c in fits.channels:
        cr = rates[c.name]
        assert np.any(cr.kappa > 1.1)          # tunnelling matters here, so the test can fail
        np.testing.assert_array_equal(c.k_SI, cr.k)
        direct = fit_arrhenius(cr.temperature_K, cr.k, order=cr.order, modified=True)
        assert c.modified.A == pytest.approx(direct.A, rel=1e-12)
        assert c.modified.Ea_J_per_mol == pytest.approx(direct.Ea_J_per_mol, rel=1e-12)


@pytest.mark.parametrize("order,A_SI,n,Ea,unit,factor", [
    # exact synthetic k = A (T/298.15)^n exp(-Ea/RT); unit factors from the SI definitions
    (1, 3.0e12, 1.7, 85e3, "s-1", 1.0),
    (2, 2.5e-17, -0.8, 12e3, "cm3 molecule-1 s-1", 1e6),     # 1 m^3 = 1e6 cm^3
    (3, 4.0e-44, -2.2, -3e3, "cm6 molecule-2 s-1", 1e12),    # 1 m^6 = 1e12 cm^6
])
def test_fits_recover_synthetic_parameters(carbonic, monkeypatch, order, A_SI, n, Ea, unit, factor):
    """Exact synthetic k(T) through fit_study: the parameters and their JSON units come back."""
    real = study_rates(carbonic)

    def fake_rates(study, *, low_modes=None, temperature_K=None):
        out = []
        for cr in real:
            T = cr.temperature_K
            k = A_SI * (T / 298.15) ** n * np.exp(-Ea / (R * T))
            out.append(dataclasses.replace(cr, k=k, order=order))
        return out

    monkeypatch.setattr("tstrate.study.rates.study_rates", fake_rates)
    fits = fit_study(carbonic)
    c = fits.channels[0]
    assert c.modified.A == pytest.approx(A_SI, rel=1e-8)
    assert c.modified.n == pytest.approx(n, abs=1e-8)
    assert c.modified.Ea_J_per_mol == pytest.approx(Ea, rel=1e-8, abs=1e-6)
    assert c.modified.max_rel_deviation < 1e-10
    assert c.modified.warning is None
    rec = fits_to_json(fits)["channels"][0]["modified_arrhenius"]
    assert rec["A_unit"] == unit
    assert rec["A"] == pytest.approx(A_SI * factor, rel=1e-8)
    assert rec["Ea_kJ_per_mol"] == pytest.approx(Ea / 1e3, rel=1e-8, abs=1e-9)
    assert rec["Ea_over_R_K"] == pytest.approx(Ea / R, rel=1e-8, abs=1e-6)
    assert rec["Tmin_K"] == 200.0 and rec["Tmax_K"] == 400.0
    assert rec["max_deviation_percent"] < 1e-8


def test_warning_above_threshold_suggests_split_and_is_configurable(toy):
    """Toy inversion: Eckart kappa ~1e11 at 150 K, no single Arrhenius form fits (222 % off)."""
    fits = fit_study(toy)
    c = fits.channel_fit("inversion")
    assert c.modified.max_rel_deviation > 0.05
    # no form meets 5 % on the grid and between grid points: the best is exported and the miss said
    assert not c.export.meets_tolerance
    assert any("no supported form meets the 5 % tolerance" in w and "inversion" in w for w in c.warnings)
    loose = fit_study(toy, max_deviation=1e3)       # 100000 %: nothing to warn about
    assert loose.channel_fit("inversion").warnings == ()
    assert fits_to_json(loose)["channels"][0]["modified_arrhenius"]["warning"] is None


def test_split_fit_when_asked(toy):
    T = np.geomspace(150.0, 1000.0, 12)
    fits = fit_study(toy, temperature_K=T, split=True)
    c = fits.channel_fit("exchange")
    assert c.split is not None
    assert c.split.max_rel_deviation < c.modified.max_rel_deviation
    given = fit_study(toy, temperature_K=T, split=300.0).channel_fit("exchange").split
    assert given.break_K == 300.0
    rec = fits_to_json(fits)["channels"][1]["split"]
    assert rec["break_K"] == c.split.break_K
    assert rec["low"]["Tmax_K"] == c.split.break_K == rec["high"]["Tmin_K"]
    assert fit_study(toy).channel_fit("exchange").split is None
    with pytest.raises(InputError, match="too few temperatures to split"):
        fit_study(toy, split=True)          # 5 temperatures: 4 per side needed


def test_split_outside_the_data_names_the_fits_key(toy):
    # `split = 500` in [fits] with data to 300 K: the error names [fits.split], not the
    # API argument break_K (the study file has no such key)
    with pytest.raises(InputError, match="break temperature 5000 K is not inside") as info:
        fit_study(toy, split=5000.0)
    assert info.value.field == "fits.split" and info.value.file == toy.file


def test_mechanism_form_choice(toy):
    fits = fit_study(toy, mechanism_form="arrhenius")
    assert all(c.expression is c.arrhenius for c in fits.channels)
    with pytest.raises(InputError, match="unknown mechanism form"):
        fit_study(toy, mechanism_form="polynomial")


# ----------------------------------------------------------------------------- NASA

@pytest.mark.parametrize("path", [
    "tests/data/toy/h2o.toml", "tests/data/toy/o2.toml", "tstrate/io/reference/n2.toml",
    "tstrate/io/reference/o2.toml",
])
def test_nasa_reproduces_tstrate_within_0p1_percent_default_range(path):
    """Default 200-3000 K: Cp, H and S of tstrate within 0.1 % for diatomics and H2O.

    Checked on 997 temperatures that are not the fit grid. H is compared with
    max(|H|, RT) as the scale because its zero is a convention (E + ZPE here).
    The midpoint stays at 1000 K except for N2, whose fit at 1000 K errs by
    0.15 % in Cp and which moves to 850 K (0.05 %).
    """
    sp = read_species(ROOT / path)
    f = fit_species_nasa(sp, (200.0, 3000.0), 1000.0, offset_J_per_mol=sp.energy_J_per_mol)
    T = np.linspace(200.5, 2999.5, 997)
    th = thermochemistry(sp, T)
    h = f.h0_exported_J_per_mol + th.enthalpy_increment_J_per_mol
    n = f.nasa7
    assert n.Tmin_K == 200.0 and n.Tmax_K == 3000.0 and 400.0 <= n.Tmid_K <= 1200.0
    assert np.max(np.abs(n.cp_J_per_mol_K(T) / th.heat_capacity_J_per_mol_K - 1)) < 1e-3
    assert np.max(np.abs(n.s_J_per_mol_K(T) / th.entropy_J_per_mol_K - 1)) < 1e-3
    assert np.max(np.abs(n.h_J_per_mol(T) - h) / np.maximum(np.abs(h), R * T)) < 1e-3


def test_nasa_errors_reported_truthfully(carbonic_fits, carbonic):
    """The stored errors are the real ones (checked off-grid), and they stay below the bounds
    stated in the module docstring: Cp 0.3 %, H and S 0.05 % over 200-3000 K for H2CO3, CO2,
    H2O (the midpoint moves away from 1000 K where that helps)."""
    T = np.linspace(200.3, 2999.7, 1301)
    for f in carbonic_fits.species:
        sp = carbonic.species[f.name]
        th = thermochemistry(sp, T)
        h = f.h0_exported_J_per_mol + th.enthalpy_increment_J_per_mol
        n = f.nasa7
        cp_err = np.max(np.abs(n.cp_J_per_mol_K(T) / th.heat_capacity_J_per_mol_K - 1))
        s_err = np.max(np.abs(n.s_J_per_mol_K(T) / th.entropy_J_per_mol_K - 1))
        h_err = np.max(np.abs(n.h_J_per_mol(T) - h) / np.maximum(np.abs(h), R * T))
        # off-grid errors can exceed the on-grid ones only by the grid spacing's share
        assert cp_err <= n.max_rel_error_cp * 1.05 + 1e-6
        assert s_err <= n.max_rel_error_s * 1.05 + 1e-6
        assert h_err <= n.max_rel_error_h * 1.05 + 1e-6
        assert n.max_rel_error_cp < 3e-3 and n.max_rel_error_h < 5e-4 and n.max_rel_error_s < 5e-4
    h2co3 = carbonic_fits.species_fit("H2CO3").nasa7
    assert h2co3.Tmid_K != 1000.0          # 1000 K would give 0.8 % in Cp for this molecule
    assert carbonic_fits.species_fit("H2O").nasa7.Tmid_K == 1000.0


def test_cold_study_extends_low_range(carbonic):
    """Study down to 100 K: the NASA range starts at 100 K, ends at 3000 K, midpoint 400-1200 K."""
    T = [100.0, 125.0, 150.0, 200.0, 250.0]
    fits = fit_study(carbonic, temperature_K=T)
    for f in fits.species:
        assert f.nasa7.Tmin_K == 100.0 and f.nasa7.Tmax_K == 3000.0
        assert 400.0 <= f.nasa7.Tmid_K <= 1200.0
        assert f.errors_at_extra is not None and f.errors_at_extra["cp"] < 0.01
    # a study below the default range with an odd minimum: rounded down to 10 K
    assert fits_mod.nasa_range([137.0, 300.0]) == (130.0, 3000.0)
    assert fits_mod.nasa_range([300.0, 3456.0]) == (200.0, 3500.0)
    rec = fits_to_json(fits)["species"][0]
    assert rec["nasa7"]["Tmin_K"] == 100.0
    assert set(rec["nasa7_deviations_at_fitted_temperatures"]) == {
        "max_deviation_cp_percent", "max_deviation_h_percent", "max_deviation_s_percent"}


# H2O (g) from NIST-JANAF (Chase 1998, 4th ed., table for H2O ideal gas), 1 bar, FROM MEMORY;
# the same numbers follow from the NIST Webbook Shomate fit for water vapour (also from memory)
# and are cross-checked against Cantera's gri30.yaml below.
# T [K]: (Cp [J/mol/K], S [J/mol/K], H - H(298.15) [kJ/mol])
JANAF_H2O = {
    300.0: (33.596, 189.042, 0.062),
    500.0: (35.226, 206.534, 6.925),
    1000.0: (41.268, 232.738, 26.000),
    1500.0: (47.073, 250.620, 48.151),
}
# Allowed deviation of the rigid-rotor/harmonic-oscillator model (experimental fundamentals,
# tstrate/io/reference/h2o.toml) from JANAF, growing with T: anharmonicity, rotation-vibration
# coupling and centrifugal distortion add to Cp roughly in proportion to T; at 300 K the
# residual (0.3 % in Cp, 0.1 % in S) is the quantum correction to the classical rotor of a
# light molecule (A = 27.9 cm-1) plus the harmonic bend. The NASA fit adds < 0.06 %.
# T: (Cp rel, S rel, H-H298: rel, or absolute kJ/mol at 300 K where H-H298 is only 62 J/mol)
HO_TOLERANCE = {
    300.0: (0.005, 0.002, 0.005),    # measured: -0.30 %, -0.10 %, -0.000 kJ/mol
    500.0: (0.006, 0.002, 0.005),    # measured: -0.35 %, -0.12 %, -0.32 %
    1000.0: (0.010, 0.0025, 0.006),  # measured: -0.61 %, -0.15 %, -0.37 %
    1500.0: (0.020, 0.0035, 0.010),  # measured: -1.27 %, -0.20 %, -0.62 %
}


@pytest.mark.parametrize("T", sorted(JANAF_H2O), ids=lambda t: f"JANAF-H2O-{t:g}K")
def test_h2o_reference_nasa_against_janaf(T):
    sp = read_species(REFERENCE / "h2o.toml")
    n = fit_species_nasa(sp, (200.0, 3000.0), 1000.0).nasa7
    cp, s, dh = JANAF_H2O[T]
    tol_cp, tol_s, tol_h = HO_TOLERANCE[T]
    assert n.cp_J_per_mol_K(T) == pytest.approx(cp, rel=tol_cp)
    assert n.s_J_per_mol_K(T) == pytest.approx(s, rel=tol_s)
    dh_fit = (n.h_J_per_mol(T) - n.h_J_per_mol(298.15)) / 1e3
    if T == 300.0:
        assert dh_fit == pytest.approx(dh, abs=tol_h)
    else:
        assert dh_fit == pytest.approx(dh, rel=tol_h)


@pytest.mark.parametrize("T", sorted(JANAF_H2O), ids=lambda t: f"gri30-H2O-{t:g}K")
def test_janaf_values_agree_with_cantera_gri30(T):
    """The from-memory JANAF values against GRI-Mech 3.0's H2O polynomial shipped with Cantera
    (an independent fit to the same kind of data): within 0.5 % (GRI's own fit error)."""
    ct = pytest.importorskip("cantera")
    sp = ct.Solution("gri30.yaml").species("H2O").thermo
    cp, s, dh = JANAF_H2O[T]
    assert sp.cp(T) / 1e3 == pytest.approx(cp, rel=5e-3)
    assert sp.s(T) / 1e3 == pytest.approx(s, rel=5e-3)
    assert (sp.h(T) - sp.h(298.15)) / 1e6 == pytest.approx(dh, rel=5e-3, abs=2e-3)


# ----------------------------------------------------------------------------- enthalpy zero

def test_enthalpy_offsets_make_enthalpies_small_and_keep_kc(carbonic_fits, carbonic):
    """Absolute energies near -7e8 J/mol become a few kJ/mol, and Kc is unchanged."""
    big = max(abs(s.energy_J_per_mol) for s in carbonic.species.values())
    assert big > 1e8
    for f in carbonic_fits.species:
        assert abs(f.h0_exported_J_per_mol) < 20e3
        assert abs(float(f.nasa7.h_J_per_mol(298.15))) < 50e3
    offsets = carbonic_fits.element_offsets_J_per_mol
    for f in carbonic_fits.species:                       # offset is linear in the atom counts
        assert f.enthalpy_offset_J_per_mol == pytest.approx(
            sum(n * offsets[e] for e, n in f.composition.items()), rel=1e-12)
    rates = {cr.channel: cr for cr in study_rates(carbonic)}
    for c in carbonic_fits.channels:
        ln_kc = fits_mod.ln_kc_from_nasa([carbonic_fits.species_fit(n) for n in c.reactants],
                                         [carbonic_fits.species_fit(n) for n in c.products],
                                         rates[c.name].temperature_K)
        # 1e-3 in ln Kc = 0.1 %: the G error of three NASA fits, each < 0.05 % in H and S
        np.testing.assert_allclose(ln_kc, rates[c.name].ln_kc, rtol=0, atol=1e-3)
        assert c.max_abs_ln_kc_error < 1e-3
    js = fits_to_json(carbonic_fits)
    assert js["enthalpy_zero"]["element_offsets_kJ_per_mol"] == pytest.approx(
        {e: c / 1e3 for e, c in offsets.items()}, rel=1e-15)
    assert "not enthalpies of formation" in js["enthalpy_zero"]["description"]


def test_offsets_are_a_least_squares_fit_of_zero_point_levels():
    """Two species with independent compositions: the offsets reproduce E + ZPE exactly."""
    h2o = read_species(ROOT / "tests/output/data/carbonic/h2o.toml")
    o2 = read_species(ROOT / "tests/data/toy/o2.toml").with_changes(energy_J_per_mol=-4.0e8)
    off = fits_mod.element_offsets([h2o, o2])
    from tstrate.physics.tst import zpe_level_J_per_mol
    assert 2 * off["H"] + off["O"] == pytest.approx(zpe_level_J_per_mol(h2o), rel=1e-12)
    assert 2 * off["O"] == pytest.approx(zpe_level_J_per_mol(o2), rel=1e-12)


# ----------------------------------------------------------------------------- Troe and JSON

def test_troe_data_written_to_json(carbonic, carbonic_fits):
    kinf = carbonic_fits.channel_fit("bare").modified
    k0 = arrhenius_expression(1e-16, -3.0, 150e3, order=2)
    troe = TroeFit(k0=k0, kinf=kinf, a=0.6, T3_K=300.0, T1_K=3000.0, T2_K=None,
                    max_rel_deviation=0.02, bath_gas="CO2")
    fits = fit_study(carbonic, troe={"bare": troe})
    rec = fits_to_json(fits)["channels"][0]["falloff_troe"]
    assert rec["a"] == 0.6 and rec["T3_K"] == 300.0 and rec["T1_K"] == 3000.0 and rec["T2_K"] is None
    assert rec["k0_low_pressure"]["A_unit"] == "cm3 molecule-1 s-1"
    assert rec["k0_low_pressure"]["A"] == pytest.approx(1e-10)      # 1e-16 m^3 = 1e-10 cm^3
    assert rec["kinf_high_pressure"]["A_unit"] == "s-1"
    assert rec["fit_max_deviation_tabulated_limits_percent"] == pytest.approx(2.0)
    assert fits.bath_gas == "CO2"              # a study species already: not added twice
    assert [f.name for f in fits.species].count("CO2") == 1


def test_troe_joined_to_its_limits_or_read_from_a_record():
    """Troe parameters fitted without limits take their Arrhenius limits later, or come from a record."""
    k0 = arrhenius_expression(1e-16, -2.0, 1e5, order=2)
    kinf = arrhenius_expression(1e13, 0.0, 1.2e5, order=1)
    fitted = TroeFit(a=0.4, T3_K=150.0, T1_K=2500.0, T2_K=4000.0, max_rel_deviation=0.01, rms_rel_deviation=0.004)
    t = fitted.with_limits(k0, kinf, bath_gas="N2")
    assert (t.a, t.T3_K, t.T1_K, t.T2_K, t.max_rel_deviation) == (0.4, 150.0, 2500.0, 4000.0, 0.01)
    assert t.bath_gas == "N2" and t.k0 is k0 and t.kinf is kinf
    t2 = TroeFit.from_record({"a": 0.5, "T3_K": 100.0, "T1_K": 1000.0})
    assert t2.T2_K is None and t2.max_rel_deviation is None
    with pytest.raises(InputError, match="one order more"):
        TroeFit(k0=kinf, kinf=kinf, a=0.5, T3_K=100.0, T1_K=1000.0)
    with pytest.raises(InputError, match="T3_K must be positive"):
        TroeFit(k0=k0, kinf=kinf, a=0.5, T3_K=-1.0, T1_K=1000.0)


def test_troe_for_unknown_channel_or_wrong_order(carbonic, carbonic_fits):
    k0 = arrhenius_expression(1e-16, -2.0, 1e5, order=2)
    kinf = arrhenius_expression(1e13, 0.0, 1.2e5, order=1)
    with pytest.raises(InputError, match="unknown channel 'nope'"):
        fit_study(carbonic, troe={"nope": TroeFit(k0=k0, kinf=kinf, a=0.5, T3_K=1e2, T1_K=1e3)})
    with pytest.raises(InputError, match="channel water.*order 1 but the channel has 2"):
        fit_study(carbonic, troe={"water": TroeFit(k0=k0, kinf=kinf, a=0.5, T3_K=1e2, T1_K=1e3)})


def test_json_has_units_in_keys(carbonic_fits):
    js = fits_to_json(carbonic_fits)
    assert js["tstrate_version"] and js["created_utc"] and js["study"].endswith("study.toml")
    ch = js["channels"][1]
    assert ch["order"] == 2 and ch["reverse_order"] == 3
    assert ch["fitted_temperature_range_K"] == [200.0, 400.0]
    for form in ("arrhenius", "modified_arrhenius"):
        keys = set(ch[form])
        assert {"A", "A_unit", "A_SI", "A_SI_unit", "n", "T0_K", "Ea_kJ_per_mol", "Ea_over_R_K",
                "Tmin_K", "Tmax_K", "max_deviation_percent", "rms_deviation_percent",
                "warning"} <= keys
    sp = js["species"][0]["nasa7"]
    assert {"Tmin_K", "Tmid_K", "Tmax_K", "low_range_coefficients", "high_range_coefficients",
            "max_deviation_cp_percent", "max_abs_deviation_h_kJ_per_mol", "max_deviation_s_percent",
            "max_deviation_h_percent"} <= set(sp)
    assert len(sp["low_range_coefficients"]) == 7
    # molar energies in kJ/mol, deviations in percent (the fits hold J/mol and fractions)
    fit, rec = carbonic_fits.species[0], js["species"][0]
    assert rec["electronic_energy_kJ_per_mol"] == pytest.approx(fit.energy_J_per_mol / 1e3, rel=1e-15)
    assert rec["zpe_kJ_per_mol"] == pytest.approx(fit.zpe_J_per_mol / 1e3, rel=1e-15)
    assert rec["H0K_exported_kJ_per_mol"] == pytest.approx(fit.h0_exported_J_per_mol / 1e3, rel=1e-15)
    assert rec["enthalpy_offset_kJ_per_mol"] == pytest.approx(fit.enthalpy_offset_J_per_mol / 1e3, rel=1e-15)
    assert sp["max_abs_deviation_h_kJ_per_mol"] == pytest.approx(fit.nasa7.max_abs_error_h_J_per_mol / 1e3,
                                                                 rel=1e-15)
    assert sp["max_deviation_cp_percent"] == pytest.approx(100 * fit.nasa7.max_rel_error_cp, rel=1e-15)
    units = fits_to_json(carbonic_fits, rate_units={2: "L mol-1 s-1"})
    rec = units["channels"][1]["modified_arrhenius"]
    assert rec["A_unit"] == "L mol-1 s-1"
    assert rec["A"] == pytest.approx(rec["A_SI"] * 1e3 * 6.02214076e23, rel=1e-9)   # CODATA N_A


# ----------------------------------------------------------------------------- bath gas

def test_bath_gas_from_reference_species(carbonic, carbonic_fits):
    troe = TroeFit(k0=arrhenius_expression(1e-16, -3.0, 1.5e5, order=2),
                    kinf=carbonic_fits.channel_fit("bare").modified, a=0.6, T3_K=300.0, T1_K=3000.0)
    # the reference species ship inside the package (tstrate.io.reference); read_study attaches the
    # study's own bath gas, and a caller naming another one passes its species
    from tstrate.io.reference import reference_species

    fits = fit_study(carbonic, troe={"bare": troe}, bath_gas="N2", bath_species=reference_species("N2"))
    n2 = fits.species_fit("N2")
    assert n2.role == "bath gas" and n2.composition == {"N": 2}
    assert n2.h0_exported_J_per_mol == 0.0 and "own" in n2.note
    ar = fit_study(carbonic, troe={"bare": troe}, bath_gas="Ar",
                   bath_species=reference_species("Ar")).species_fit("Ar")
    assert ar.composition == {"Ar": 1}
    # a monatomic ideal gas: Cp = 5/2 R exactly, from the polynomial too
    assert ar.nasa7.cp_J_per_mol_K(250.0) == pytest.approx(2.5 * R, rel=1e-9)
    assert reference_species("XY") is None
    unknown = fit_study(carbonic, troe={"bare": troe}, bath_gas="XY")
    assert unknown.bath_gas is None
    assert any("XY" in w for w in unknown.warnings)


# ----------------------------------------------------------------------------- bad input

def test_too_few_temperatures_is_one_line_input_error(carbonic):
    with pytest.raises(InputError, match="needs at least 3") as exc:
        fit_study(carbonic, temperature_K=[250.0, 300.0])
    assert "\n" not in str(exc.value)
    assert "channel bare" in str(exc.value)


def test_non_positive_rate_constant_is_input_error(carbonic, monkeypatch):
    real = study_rates(carbonic)

    def zero_rates(study, **kwargs):
        return [dataclasses.replace(cr, k=np.where(cr.temperature_K < 250, 0.0, cr.k)) for cr in real]

    monkeypatch.setattr("tstrate.study.rates.study_rates", zero_rates)
    with pytest.raises(InputError, match="positive") as exc:
        fit_study(carbonic)
    assert "\n" not in str(exc.value)


def test_species_without_energy_cannot_be_exported(tmp_path):
    folder = tmp_path / "carbonic"
    shutil.copytree(CARBONIC.parent, folder)
    h2o = folder / "h2o.toml"
    h2o.write_text("\n".join(line for line in h2o.read_text().splitlines()
                             if not line.startswith("energy")) + "\n")
    study = read_study(folder / "study.toml")
    with pytest.raises(InputError, match=r"h2o\.toml \[energy\]: species 'H2O' has no electronic") as exc:
        fit_study(study)
    assert "\n" not in str(exc.value)


def test_bad_nasa_range(carbonic):
    with pytest.raises(InputError, match="NASA range"):
        fit_study(carbonic, nasa_range_K=(3000.0, 200.0))
    assert math.isfinite(fit_study(carbonic, nasa_range_K=(150.0, 1500.0)).species[0].nasa7.Tmax_K)


# ----------------------------------------------------------------------------- complexes, bath

COMPLEX_TOML = '''# invented numbers for tests: H2CO3...H2O pre-reactive complex
name = "H2CO3_H2O"
charge = 0
multiplicity = 1
geometry = """
C   0.000000   0.000000  0.000000
O   0.000000   1.210000  0.000000
O   1.160000  -0.670000  0.000000
O  -1.160000  -0.670000  0.000000
H   1.857879   0.003695  0.000000
H  -1.857879   0.003695  0.000000
O   3.300000   1.200000  0.000000
H   3.800000   1.700000  0.600000
H   3.700000   0.350000  0.000000
"""
frequencies_cm1 = [60.0, 90.0, 130.0, 170.0, 220.0, 300.0, 530.0, 560.0, 600.0, 680.0, 800.0,
                   990.0, 1200.0, 1350.0, 1490.0, 1600.0, 1850.0, 3600.0, 3700.0, 3795.0, 3800.0]
energy = { value = -340.9100, unit = "hartree" }
'''


def test_complex_and_study_bath_gas_are_exported(tmp_path):
    """A pre-reactive complex gets a NASA fit (role "complex"); a bath gas that is a study
    species outside every channel is exported on the study's scale, its own element (N) set
    so that its H(0 K) = 0."""
    folder = tmp_path / "carbonic"
    shutil.copytree(CARBONIC.parent, folder)
    (folder / "complex.toml").write_text(COMPLEX_TOML)
    shutil.copy(REFERENCE / "n2.toml", folder / "n2.toml")
    text = (folder / "study.toml").read_text()
    text = text.replace('H2O = "h2o.toml"', 'H2O = "h2o.toml"\nH2CO3_H2O = "complex.toml"\nN2 = "n2.toml"')
    text = text.replace('bath_gas = "CO2"', 'bath_gas = "N2"')
    text = text.replace('products = ["CO2", "H2O", "H2O"]',
                        'products = ["CO2", "H2O", "H2O"]\ncomplex = "H2CO3_H2O"')
    (folder / "study.toml").write_text(text)
    study = read_study(folder / "study.toml")
    base = fit_study(study)
    cx = base.species_fit("H2CO3_H2O")
    assert cx.role == "complex" and cx.composition == {"C": 1, "H": 4, "O": 4}
    assert "N2" not in [s.name for s in base.species]        # no falloff: no bath gas needed
    troe = TroeFit(k0=arrhenius_expression(1e-16, -3.0, 1.5e5, order=2),
                    kinf=base.channel_fit("bare").modified, a=0.6, T3_K=300.0, T1_K=3000.0)
    fits = fit_study(study, troe={"bare": troe})
    n2 = fits.species_fit("N2")
    assert n2.role == "bath gas" and fits.bath_gas == "N2"
    assert n2.h0_exported_J_per_mol == pytest.approx(0.0, abs=1e-6)
    assert fits.element_offsets_J_per_mol["N"] != 0.0
