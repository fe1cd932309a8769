"""Energised molecules of a study (tstrate.study.excitations, on tstrate.physics.activation) on the invented carbonic-acid test study.

Stern-Volmer and stepwise formulas are tested in test_activation.py; here: that a study
excitation gets the right energy (excitation + mean thermal energy of the active degrees of
freedom: the vibrations, written out independently, plus RT/2 for the classical active K-rotor), [M] = p / kT, the channel's k(E), and that the fraction along the U.S.
Standard Atmosphere 1976 behaves as it must (more reaction higher up, where [M] is smaller).
"""

import dataclasses
import math
from pathlib import Path

import numpy as np
import pytest
from scipy.constants import N_A, c as c_light, h, k as kB

from tstrate.errors import InputError
from tstrate.io.study import read_study
from tstrate.model.settings import US_STANDARD_1976, ExcitationSpec
from tstrate.study.excitations import excitation_yield, study_excitations

DATA = Path(__file__).resolve().parents[1] / "data" / "falloff"
CM1_J_PER_MOL = h * c_light * 100 * N_A     # one cm-1 as J/mol (CODATA constants)
E0_CM1 = 13780.0                            # ZPE-corrected barrier of the test study (see its README)


@pytest.fixture(scope="module")
def study():
    return read_study(DATA / "study.toml")


@pytest.fixture(scope="module")
def results(study):
    return {r.spec.name: r for r in study_excitations(study)}


def mean_vib_energy_J_per_mol(freqs_cm1, t):
    """sum_i N_A h c nu_i / (exp(h c nu_i / kT) - 1), written out independently."""
    return sum(N_A * h * c_light * 100 * nu / math.expm1(h * c_light * 100 * nu / (kB * t)) for nu in freqs_cm1)


def spec(**kw):
    base = dict(name="x", channel="bare", energy_J_per_mol=15500 * CM1_J_PER_MOL, description="test")
    base.update(kw)
    return ExcitationSpec(**base)


def test_below_threshold_gives_zero_and_says_so(results):
    r = results["OH overtone 2v"]          # 7200 cm-1 + thermal energy, far below E0 = 13780 cm-1
    assert r.below_threshold
    assert np.all(r.pressure.stern_volmer == 0) and np.all(r.pressure.stepwise == 0)
    assert np.all(r.pressure.below_threshold)
    assert np.all(np.isnan(r.pressure.half_number_density_m3))
    assert any("below the barrier" in w and "fraction reacting is 0" in w for w in r.warnings)


def test_energy_density_and_stern_volmer_on_the_study_grid(results, study):
    r = results["near-UV"]                 # 400 nm
    g = r.pressure
    freqs = study.species["H2CO3"].real_frequencies_cm1
    photon = h * c_light / 400e-9 * N_A
    for i, t in enumerate(g.temperature_K):
        # vibrations (independent sum) + RT/2 for the active K-rotor (equipartition, one classical
        # degree of freedom), within one grain of the discrete thermal average
        expected = photon + mean_vib_energy_J_per_mol(freqs, t) + 0.5 * N_A * kB * t
        assert g.energy_J_per_mol[i] == pytest.approx(expected, abs=r.model.grain_cm1 * CM1_J_PER_MOL)
    np.testing.assert_allclose(g.number_density_m3, study.conditions.pressure_Pa[None, :]
                               / (kB * g.temperature_K[:, None]), rtol=1e-12)
    k = r.model.rate.rate_at(g.energy_J_per_mol)
    np.testing.assert_allclose(g.rate_per_s, k, rtol=1e-12)
    omega = (g.collision_efficiency * g.collision_rate_m3_per_s)[:, None] * g.number_density_m3
    np.testing.assert_allclose(g.stern_volmer, k[:, None] / (k[:, None] + omega), rtol=1e-12)
    np.testing.assert_allclose(g.collision_frequency_per_s, g.collision_rate_m3_per_s[:, None] * g.number_density_m3)
    # half of the molecules react where beta_c Z [M] = k(E)
    np.testing.assert_allclose(g.half_number_density_m3, k / (g.collision_efficiency * g.collision_rate_m3_per_s))
    assert not r.below_threshold


def test_same_k_of_e_as_the_falloff(results):
    r = results["near-UV"]
    assert r.model.path_degeneracy == 4.0 and r.model.grain_cm1 == pytest.approx(10.0)
    assert r.model.barrier_J_per_mol / CM1_J_PER_MOL == pytest.approx(E0_CM1, rel=1e-9)
    assert r.model.rate.energies_J_per_mol[-1] > r.pressure.energy_J_per_mol.max()


def test_us_1976_yield_is_monotone_in_altitude(study):
    # 1700 cm-1 above E0: k(E) ~ 1e8 s-1, comparable to beta Z [M] near the ground, so the fraction
    # runs from a few per cent to ~1 over 0-86 km. [M] falls monotonically with altitude in the 1976
    # atmosphere and beats the few-per-cent changes of k(E), Z and beta_c with the local temperature:
    # both fractions must rise (and the quenched fraction fall) with every step up.
    r = excitation_yield(study, spec(energy_J_per_mol=15500 * CM1_J_PER_MOL, profile=US_STANDARD_1976,
                                     pressure_scan=False, altitude_step_km=2.0))
    g = r.profile
    assert r.altitude_m[0] == 0 and r.altitude_m[-1] == pytest.approx(86e3)
    assert np.all(np.diff(g.number_density_m3) < 0)
    assert g.stern_volmer[0] < 0.2 and g.stern_volmer[-1] > 0.99
    assert np.all(np.diff(g.stern_volmer) > 0)
    assert np.all(np.diff(g.stepwise) >= 0)
    # the same excitation below threshold: zero at every altitude
    low = excitation_yield(study, spec(energy_J_per_mol=5000 * CM1_J_PER_MOL, profile=US_STANDARD_1976,
                                       pressure_scan=False, altitude_step_km=10.0))
    assert low.below_threshold and np.all(low.profile.stern_volmer == 0)


def test_csv_profile_and_altitude_range(results):
    r = results["csv"]
    np.testing.assert_allclose(r.altitude_m, [0, 10e3, 20e3, 30e3])   # 40 km row left out by altitude_km
    np.testing.assert_allclose(r.profile.pressure_Pa, [101300, 26500, 5500, 1200])   # hPa -> Pa
    assert r.pressure is None
    assert r.model.tunnelling == "eckart"


def test_dense_pressure_curve_reaches_past_half_quenching(results):
    r = results["near-UV"]
    c = r.pressure_curve
    assert c.number_density_m3.max() >= 10 * np.nanmax(r.pressure.half_number_density_m3) * 0.999
    assert np.all(np.diff(c.stern_volmer, axis=1) <= 0)     # more collisions, less reaction


def test_stepwise_needs_a_step(study):
    st = dataclasses.replace(study, sections={k: v for k, v in study.sections.items() if k != "falloff"})
    r = excitation_yield(st, spec())
    assert r.pressure.stepwise is None
    assert any("stepwise model is not computed" in w for w in r.warnings)
    assert any("beta_c = 1" in w for w in r.warnings)
    assert np.all(r.pressure.collision_efficiency == 1.0)


def test_errors(study):
    with pytest.raises(InputError, match="unknown channel 'nope'"):
        excitation_yield(study, spec(channel="nope"))
    with pytest.raises(InputError, match="channel 'back' has 2 reactants"):
        excitation_yield(study, spec(channel="back"))
    # a record built in Python names its own key; the study reader places it (tests/io/test_section_pressure.py)
    with pytest.raises(InputError, match=r"^\[altitude_km\]: the 1976 standard atmosphere ends at 86"):
        spec(profile=US_STANDARD_1976, altitude_range_km=(0.0, 100.0))
    with pytest.raises(InputError, match=r"^\[energy\]: excitation energy must be positive"):
        spec(energy_J_per_mol=-1.0)
    no_p = dataclasses.replace(study, conditions=dataclasses.replace(study.conditions, pressure_Pa=np.zeros(0)))
    with pytest.raises(InputError, match="no pressures in \\[conditions\\] and no altitude profile"):
        excitation_yield(no_p, spec())
    with pytest.raises(InputError, match="a pressure scan needs pressures"):
        excitation_yield(no_p, spec(pressure_scan=True, profile=US_STANDARD_1976))
    empty = dataclasses.replace(study, sections={})
    with pytest.raises(InputError, match="no excitation to follow"):
        study_excitations(empty)


def test_altitude_range_beyond_the_csv_profile_is_said(study, caplog):
    import logging

    csv = next(s for s in study.sections["excitation"] if s.name == "csv")
    wider = dataclasses.replace(csv, altitude_range_km=(0.0, 60.0))   # the invented profile stops at 40 km
    with caplog.at_level(logging.WARNING, logger="tstrate.study.excitations"):
        r = excitation_yield(study, wider)
    np.testing.assert_allclose(r.altitude_m, [0, 10e3, 20e3, 30e3, 40e3])
    assert any("covers only 0 .. 40 km of the asked 0 .. 60 km" in m for m in caplog.messages)
