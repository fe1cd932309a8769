"""Energised molecules: excitation energies and the fraction reacting before deactivation."""


import numpy as np
import pytest
from scipy.constants import physical_constants

from tstrate.errors import InputError
from tstrate.physics.activation import (excitation_energy_J_per_mol, mean_vibrational_energy_J_per_mol,
                                        photon_energy_J_per_mol, stepwise_yield, stern_volmer_yield)
from tstrate.physics.rrkm import rrkm_rate
from tstrate.physics.states import CM1_J_PER_MOL, count_states
from tstrate.units import R

FARADAY = physical_constants["Faraday constant"][0]                        # J / (mol V), CODATA
HC_EV_NM = physical_constants["inverse meter-electron volt relationship"][0] * 1e9   # eV nm, CODATA
EV_CM1 = physical_constants["electron volt-inverse meter relationship"][0] / 100  # cm-1 per eV

# Invented demo wavenumbers (cm-1) and barrier for carbonic acid -> CO2 + H2O (see test_rrkm.py).
H2CO3_CM1 = [3640, 3630, 1830, 1450, 1380, 1180, 1010, 790, 670, 580, 550, 220]
TS_CM1 = [3700, 2600, 1900, 1400, 1150, 940, 800, 650, 560, 480, 300]


@pytest.fixture(scope="module")
def rate():
    return rrkm_rate(H2CO3_CM1, TS_CM1, 15000 * CM1_J_PER_MOL, grain_cm1=10.0,
                     energy_above_barrier_J_per_mol=30000 * CM1_J_PER_MOL)


@pytest.mark.parametrize("nm", [193.0, 248.0, 532.0])
def test_photon_energy_against_electron_volt_route(nm):
    # E = (hc / lambda) in eV (hc = 1239.84 eV nm), times the Faraday constant -> J/mol
    assert photon_energy_J_per_mol(wavelength_nm=nm) == pytest.approx(HC_EV_NM / nm * FARADAY, rel=1e-9)


def test_wavenumber_and_energy_units():
    assert photon_energy_J_per_mol(wavenumber_cm1=EV_CM1) == pytest.approx(FARADAY, rel=1e-9)   # 1 eV
    assert photon_energy_J_per_mol(energy=1.0, unit="eV") == pytest.approx(FARADAY, rel=1e-9)
    assert photon_energy_J_per_mol(energy=200.0, unit="kJ/mol") == pytest.approx(2e5)
    with pytest.raises(InputError, match="exactly one"):
        photon_energy_J_per_mol(wavelength_nm=248.0, wavenumber_cm1=100.0)
    with pytest.raises(InputError, match="needs its unit"):
        photon_energy_J_per_mol(energy=1.0)
    with pytest.raises(InputError, match="unknown energy unit"):
        photon_energy_J_per_mol(energy=1.0, unit="erg")
    with pytest.raises(InputError, match="positive"):
        photon_energy_J_per_mol(wavelength_nm=-3.0)


@pytest.mark.parametrize("t", [150.0, 300.0, 1000.0])
def test_mean_vibrational_energy_from_the_partition_function(t):
    # independent route: U = R T^2 d ln Q / dT with Q counted on a 1 cm-1 grain, central difference
    sc = count_states(H2CO3_CM1, 40000 * CM1_J_PER_MOL, grain_cm1=1.0)
    dt = 1e-3 * t
    dlnq = (sc.log_partition_function(t + dt)[0] - sc.log_partition_function(t - dt)[0]) / (2 * dt)
    assert mean_vibrational_energy_J_per_mol(H2CO3_CM1, t) == pytest.approx(R * t * t * dlnq, rel=1e-5)


def test_mean_vibrational_energy_classical_limit():
    # T -> infinity: each oscillator holds RT - h nu/2 (equipartition less the zero-point energy)
    t = 1e6
    e = mean_vibrational_energy_J_per_mol(H2CO3_CM1, t)
    assert e == pytest.approx(len(H2CO3_CM1) * R * t - 0.5 * sum(H2CO3_CM1) * CM1_J_PER_MOL, rel=1e-6)


def test_excitation_energy_adds_thermal_energy():
    e = excitation_energy_J_per_mol(H2CO3_CM1, 220.0, wavelength_nm=248.0)
    assert e == pytest.approx(photon_energy_J_per_mol(wavelength_nm=248.0)
                              + mean_vibrational_energy_J_per_mol(H2CO3_CM1, 220.0))


def test_stern_volmer_yield(rate):
    z = 4e-16                                                    # m^3 s^-1, demo collision rate constant
    m = np.array([0.0, 1e20, 1e23, 1e25, 1e27])
    e = 25000 * CM1_J_PER_MOL
    y = stern_volmer_yield(rate, e, m, collision_rate_m3_s=z, collision_efficiency=0.5)
    k = float(np.interp(e, rate.energies_J_per_mol, rate.rate_per_s))
    np.testing.assert_allclose(y.fraction, k / (k + 0.5 * z * m))
    assert y.fraction[0] == 1.0 and np.all(np.diff(y.fraction) < 0)
    assert not y.below_threshold and y.rate_per_s == pytest.approx(k)


def test_below_threshold_gives_zero_with_a_flag(rate):
    m = np.array([1e22, 1e25])
    for y in (stern_volmer_yield(rate, 10000 * CM1_J_PER_MOL, m, collision_rate_m3_s=4e-16),
              stepwise_yield(rate, 10000 * CM1_J_PER_MOL, m, collision_rate_m3_s=4e-16,
                             energy_down_J_per_mol=2000.0)):
        assert y.below_threshold
        np.testing.assert_array_equal(y.fraction, 0.0)


def test_stepwise_yield_against_an_explicit_cascade(rate):
    z, down = 4e-16, 300 * CM1_J_PER_MOL
    e = 18050 * CM1_J_PER_MOL          # not a whole number of steps above E0: no tie at the threshold
    m = np.array([0.0, 1e22, 1e24, 1e26])
    y = stepwise_yield(rate, e, m, collision_rate_m3_s=z, energy_down_J_per_mol=down)
    # explicit loop over collisions, written independently
    expected = []
    for mm in m:
        survive, energy = 1.0, e
        while energy >= rate.barrier_J_per_mol:
            k = float(np.interp(energy, rate.energies_J_per_mol, rate.rate_per_s))
            survive *= 1.0 - k / (k + z * mm) if (k + z * mm) > 0 else 1.0
            energy -= down
        expected.append(1.0 - survive)
    np.testing.assert_allclose(y.fraction, expected, rtol=1e-10)
    assert y.fraction[0] == 1.0 and np.all(np.diff(y.fraction) < 0)


def test_one_step_cascade_is_stern_volmer(rate):
    # a single collision takes the molecule below E0: the cascade reduces to k/(k + Z[M])
    z, m = 4e-16, np.array([1e23, 1e25])
    e = 15500 * CM1_J_PER_MOL
    step = stepwise_yield(rate, e, m, collision_rate_m3_s=z, energy_down_J_per_mol=1000 * CM1_J_PER_MOL)
    sv = stern_volmer_yield(rate, e, m, collision_rate_m3_s=z, collision_efficiency=1.0)
    np.testing.assert_allclose(step.fraction, sv.fraction, rtol=1e-12)


def test_energy_past_the_grid_is_refused(rate):
    with pytest.raises(InputError, match="beyond the k\\(E\\) grid"):
        stern_volmer_yield(rate, 1e7, [1e24], collision_rate_m3_s=4e-16)
    with pytest.raises(InputError, match="<dE>down must be positive"):
        stepwise_yield(rate, 2e5, [1e24], collision_rate_m3_s=4e-16, energy_down_J_per_mol=0.0)
