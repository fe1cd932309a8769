"""Mechanism export checked with Cantera (test-only dependency) as the independent reader.

Cantera's units: forward_rate_constants in kmol, m^3, s (k_SI per molecule times
(N_A * 1000 per kmol)^(order - 1)); equilibrium_constants in (kmol m^-3)^dn
(tstrate's ln Kc is in (molecule m^-3)^dn); species cp, h, s per kmol.
"""

from __future__ import annotations

import dataclasses
import os
import shutil
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from tstrate.errors import InputError
from tstrate.io.study import read_study
from tstrate.expressions.troe import TroeFit
from tstrate.study.fits import arrhenius_expression, fit_study
from tstrate.output.mechanism import UNITS_LINE, cantera_names, mechanism_yaml, write_mechanism
from tstrate.physics.thermo import thermochemistry
from tstrate.study.rates import study_rates
from tstrate.units import K_B, N_A, R

ct = pytest.importorskip("cantera")

ROOT = Path(__file__).resolve().parents[2]
TOY = ROOT / "tests" / "data" / "toy" / "study.toml"
CARBONIC = Path(__file__).resolve().parent / "data" / "carbonic" / "study.toml"
PER_KMOL = N_A * 1e3        # molecules per kmol


def _load(fits, tmp_path, name="mech.yaml"):
    path = write_mechanism(fits, tmp_path / name)
    return ct.Solution(str(path)), path


def _kc_tstrate_in_cantera_units(cr):
    dn = cr.reverse_order - cr.order
    return np.exp(cr.ln_kc - dn * np.log(PER_KMOL))   # (molecule m^-3)^dn -> (kmol m^-3)^dn


def _exported_h(fit, species, T):
    th = thermochemistry(species, T)
    return fit.h0_exported_J_per_mol + th.enthalpy_increment_J_per_mol


# ----------------------------------------------------------------------------- rate constants

def test_carbonic_mechanism_reproduces_tstrate_within_1_percent(carbonic, carbonic_fits, tmp_path):
    """k(T), Kc(T) and k_reverse(T) from Cantera against tstrate at the study temperatures.

    The exported expressions of this study (the simplest meeting the 5 % tolerance) deviate by
    < 5 % (asserted) on the grid and between grid points, so that holds for Cantera's k; Kc
    comes from the polynomials (errors < 0.1 % in ln Kc); k_reverse = k / Kc adds both.
    """
    gas, _ = _load(carbonic_fits, tmp_path)
    rates = {cr.channel: cr for cr in study_rates(carbonic)}
    for i, c in enumerate(carbonic_fits.channels):
        dev = c.export.deviation.max_rel
        assert c.export.meets_tolerance and dev < 0.05
        cr = rates[c.name]
        for j, T in enumerate(cr.temperature_K):
            gas.TPX = T, 1e5, "CO2:1"
            k_ct = gas.forward_rate_constants[i] / PER_KMOL ** (cr.order - 1)
            assert k_ct == pytest.approx(c.expression.rate(T), rel=1e-9)     # exact conversion
            assert k_ct == pytest.approx(cr.k[j], rel=dev * (1 + 1e-6))
            kc_ct = gas.equilibrium_constants[i]
            assert kc_ct == pytest.approx(_kc_tstrate_in_cantera_units(cr)[j], rel=0.01)
            kr_ct = gas.reverse_rate_constants[i] / PER_KMOL ** (cr.reverse_order - 1)
            assert kr_ct == pytest.approx(cr.k_reverse[j], rel=dev + 0.01)


def test_toy_mechanism_reproduces_fit_and_tstrate_within_fit_error(tmp_path):
    """Toy study: the fits themselves are poor (Eckart kappa 1e11 at 150 K), so Cantera must
    reproduce the fitted expression exactly and tstrate within the fit's stated deviation."""
    study = read_study(TOY)
    fits = fit_study(study)
    gas, path = _load(fits, tmp_path)
    rates = {cr.channel: cr for cr in study_rates(study)}
    for i, c in enumerate(fits.channels):
        cr = rates[c.name]
        dev = c.expression.max_rel_deviation
        for j, T in enumerate(cr.temperature_K):
            gas.TPX = T, 1e5, "H2O:1"
            k_ct = gas.forward_rate_constants[i] / PER_KMOL ** (cr.order - 1)
            assert k_ct == pytest.approx(c.expression.rate(T), rel=1e-9)
            assert abs(k_ct / cr.k[j] - 1) <= dev * (1 + 1e-9) + 1e-12
            # identity reactions (same species on both sides): Kc = 1 exactly
            assert gas.equilibrium_constants[i] == pytest.approx(1.0, rel=1e-12)
    assert "deviates" in path.read_text()        # the fit warnings are in the header


def test_species_thermo_in_cantera_matches_tstrate(carbonic, carbonic_fits, tmp_path):
    """cp, h, s per species and the reaction enthalpy from Cantera against tstrate, 200-3000 K."""
    gas, _ = _load(carbonic_fits, tmp_path)
    T = np.linspace(200.0, 3000.0, 57)
    names = cantera_names([f.name for f in carbonic_fits.species])
    for f in carbonic_fits.species:
        sp = carbonic.species[f.name]
        th = thermochemistry(sp, T)
        thermo = gas.species(names[f.name]).thermo
        cp = np.array([thermo.cp(t) for t in T]) / 1e3
        s = np.array([thermo.s(t) for t in T]) / 1e3
        h = np.array([thermo.h(t) for t in T]) / 1e3
        # 0.3 % for Cp (stated fit error of H2CO3/CO2, see test_fits), 1 % required
        np.testing.assert_allclose(cp, th.heat_capacity_J_per_mol_K, rtol=3e-3)
        np.testing.assert_allclose(s, th.entropy_J_per_mol_K, rtol=1e-3)
        h_ts = _exported_h(f, sp, T)
        assert np.max(np.abs(h - h_ts) / np.maximum(np.abs(h_ts), R * T)) < 1e-3
    # reaction enthalpy of the bare channel, 1 % of max(|dH|, RT)
    dh_ts = sum(_exported_h(carbonic_fits.species_fit(n), carbonic.species[n], T)
                for n in ("CO2", "H2O")) - _exported_h(carbonic_fits.species_fit("H2CO3"),
                                                        carbonic.species["H2CO3"], T)
    for t, ref in zip(T, dh_ts):
        gas.TP = t, 1e5
        dh = gas.delta_standard_enthalpy[0] / 1e3
        assert abs(dh - ref) < 0.01 * max(abs(ref), R * t)
    # the reference pressure is tstrate's 1 bar, not Cantera's default 1 atm
    assert gas.species(0).thermo.reference_pressure == pytest.approx(1e5)


# ----------------------------------------------------------------------------- falloff

def _troe_formula(k0, kinf, M, T, a, T3, T1, T2):
    """Troe (Ber. Bunsenges. Phys. Chem. 87, 161 (1983)), written out independently:
    F_cent = (1-a) e^(-T/T3) + a e^(-T/T1) + e^(-T2/T); c = -0.4 - 0.67 log Fc,
    N = 0.75 - 1.27 log Fc, log F = log Fc / (1 + ((log Pr + c) / (N - 0.14 (log Pr + c)))^2)."""
    pr = k0 * M / kinf
    fc = (1 - a) * np.exp(-T / T3) + a * np.exp(-T / T1) + (np.exp(-T2 / T) if T2 else 0.0)
    lfc = np.log10(fc)
    c = -0.4 - 0.67 * lfc
    n = 0.75 - 1.27 * lfc
    x = np.log10(pr) + c
    return kinf * pr / (1 + pr) * 10 ** (lfc / (1 + (x / (n - 0.14 * x)) ** 2))


@pytest.mark.parametrize("T2", [None, 5000.0], ids=["no-T2", "T2-5000K"])
@pytest.mark.parametrize("bath", ["CO2", "N2"])
def test_falloff_reaction_matches_troe_formula(carbonic, carbonic_fits, tmp_path, T2, bath):
    kinf = carbonic_fits.channel_fit("bare").modified
    k0 = arrhenius_expression(1e-16, -3.0, 150e3, order=2)     # invented, SI m^3 s^-1
    troe = TroeFit(k0=k0, kinf=kinf, a=0.6, T3_K=300.0, T1_K=3000.0, T2_K=T2, bath_gas="CO2")
    from tstrate.io.reference import reference_species

    fits = fit_study(carbonic, troe={"bare": troe}, bath_gas=bath,
                     bath_species=None if bath in carbonic.species else reference_species(bath))
    gas, path = _load(fits, tmp_path)
    assert bath in gas.species_names
    text = path.read_text()
    assert "(+M)" in text and "type: falloff" in text
    i = 0                                          # the bare channel is the first reaction
    assert gas.reaction(i).reaction_type.startswith("falloff")
    for T in (200.0, 260.0, 330.0, 400.0):
        for P in (1.0, 1e2, 1e4, 1e6):             # Pa; across the falloff region
            gas.TPX = T, P, f"{bath}:1"
            M = P / (K_B * T)                      # [m^-3]
            ref = _troe_formula(k0.rate(T), kinf.rate(T), M, T, 0.6, 300.0, 3000.0, T2)
            assert gas.forward_rate_constants[i] == pytest.approx(ref, rel=1e-6)


@pytest.mark.parametrize("T2", [None, 5000.0], ids=["no-T2", "T2-5000K"])
def test_troe_formula_here_matches_falloff_module(T2):
    """tstrate's falloff module evaluates the same Troe expression as the formula written here."""
    from tstrate.physics import falloff

    for T, M in ((200.0, 1e20), (300.0, 1e22), (400.0, 1e25)):
        k0, kinf = 1e-28 * (T / 300.0) ** -3, 1e-2 * np.exp(-500.0 / T)
        assert falloff.troe_rate(k0, kinf, M, T, 0.6, 300.0, 3000.0, T2) == pytest.approx(
            _troe_formula(k0, kinf, M, T, 0.6, 300.0, 3000.0, T2), rel=1e-12)


# ----------------------------------------------------------------------------- file content

def test_header_units_and_phase(carbonic_fits, tmp_path):
    text = mechanism_yaml(carbonic_fits)
    head = text.split("\n\n")[0]
    assert str(CARBONIC) in head or "carbonic/study.toml" in head
    assert carbonic_fits.version in head and carbonic_fits.created in head
    assert "CAUTION" in head and "estimates" in head
    assert "Enthalpy zero" in head and all(e in head for e in ("C:", "H:", "O:"))
    assert UNITS_LINE in text
    assert "thermo: ideal-gas" in text and "reactions: all" in text
    assert "type: elementary" in text and "<=>" in text
    gas = ct.Solution(yaml=text)
    assert gas.thermo_model == "ideal-gas"
    assert set(gas.element_names) == {"C", "H", "O"}
    assert [r.reversible for r in gas.reactions()] == [True, True]
    # H2CO3 + H2O <=> CO2 + 2 H2O stays elementary (not three-body) and second order
    assert gas.reaction(1).reaction_type == "Arrhenius"


def test_unsafe_species_names_are_written_safely(carbonic, tmp_path):
    rename = {"H2CO3": "2 H2CO3 (cis+cis)", "H2O": "M", "CO2": "CO2<=>x"}
    species = {rename.get(n, n): s.with_changes(name=rename.get(n, n))
               for n, s in carbonic.species.items()}
    channels = tuple(dataclasses.replace(
        ch, reactants=tuple(rename.get(n, n) for n in ch.reactants),
        products=tuple(rename.get(n, n) for n in ch.products)) for ch in carbonic.channels)
    study = dataclasses.replace(carbonic, species=species, channels=channels,
                                species_files={rename.get(n, n): f
                                               for n, f in carbonic.species_files.items()})
    fits = fit_study(study)
    gas, path = _load(fits, tmp_path)
    names = cantera_names(rename.values())
    assert set(names.values()) <= set(gas.species_names)
    assert all(n not in gas.species_names for n in rename.values())
    assert "Species renamed for Cantera" in path.read_text()
    gas.TPX = 300.0, 1e5, f"{names['M']}:1"
    assert gas.forward_rate_constants[0] == pytest.approx(fits.channels[0].expression.rate(300.0),
                                                          rel=1e-9)


def test_duplicate_channels_are_marked(tmp_path):
    folder = tmp_path / "carbonic"
    shutil.copytree(CARBONIC.parent, folder)
    study_file = folder / "study.toml"
    study_file.write_text(study_file.read_text() + '''
[[channel]]
name = "bare_again"
reactants = ["H2CO3"]
transition_state = "TS_bare"
products = ["H2O", "CO2"]
tunnelling = "none"
''')
    fits = fit_study(read_study(study_file))
    text = mechanism_yaml(fits)
    assert text.count("duplicate: true") == 2
    gas = ct.Solution(yaml=text)              # Cantera refuses undeclared duplicates
    assert gas.n_reactions == 3


def test_production_code_does_not_import_cantera():
    code = ("import sys; import tstrate.study.fits, tstrate.output.mechanism, "
            "tstrate.output.tables; print('cantera' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True,
                         cwd=ROOT)
    assert out.stdout.strip() == "False"


# ----------------------------------------------------------------------------- writing

def test_never_overwrites_an_input(tmp_path):
    folder = tmp_path / "carbonic"
    shutil.copytree(CARBONIC.parent, folder)
    study = read_study(folder / "study.toml")
    fits = fit_study(study)
    for target in (folder / "study.toml", folder / "h2o.toml"):
        before = target.read_bytes()
        with pytest.raises(InputError, match="refusing to overwrite an input file") as exc:
            write_mechanism(fits, target)
        assert "\n" not in str(exc.value)
        assert target.read_bytes() == before


def test_atomic_write_leaves_old_file_when_writing_fails(carbonic_fits, tmp_path, monkeypatch):
    target = tmp_path / "mech.yaml"
    target.write_text("old content\n")

    def broken_replace(src, dst):
        raise OSError("disk went away")

    monkeypatch.setattr(os, "replace", broken_replace)
    with pytest.raises(OSError, match="disk went away"):
        write_mechanism(carbonic_fits, target)
    assert target.read_text() == "old content\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["mech.yaml"]     # no temporary left


def test_unwritable_folder_is_one_line_input_error(carbonic_fits, tmp_path):
    blocker = tmp_path / "a_file"
    blocker.write_text("x")
    with pytest.raises(InputError, match="cannot write here") as exc:
        write_mechanism(carbonic_fits, blocker / "sub" / "mech.yaml")
    assert "\n" not in str(exc.value)


def test_non_finite_parameter_is_refused(carbonic_fits):
    c0 = carbonic_fits.channels[0]
    bad = dataclasses.replace(c0, export=dataclasses.replace(
        c0.export, expression=dataclasses.replace(c0.modified, n=float("nan")), kind="modified_arrhenius"))
    fits = dataclasses.replace(carbonic_fits, channels=(bad,) + carbonic_fits.channels[1:])
    with pytest.raises(InputError, match="non-finite"):
        mechanism_yaml(fits)
