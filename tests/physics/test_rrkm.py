"""RRKM k(E): the Boltzmann average of k(E) must equal canonical TST computed independently
from harmonic (and classical rotor) partition functions; tunnelling sums against enumeration."""

import itertools
import math

import numpy as np
import pytest
from scipy.constants import h, k as kB, physical_constants

from tstrate.errors import InputError
from tstrate.physics.falloff import high_pressure_limit
from tstrate.physics.rrkm import (ExternalRotation, centrifugal_barrier_shift_J_per_mol, microcanonical_rate,
                                  rrkm_rate, tunnelling_sum_of_states)
from tstrate.physics.states import CM1_J_PER_MOL, count_states

C2_CM_K = physical_constants["second radiation constant"][0] * 100   # hc/k [cm K]

# Invented demo wavenumbers (cm-1) for carbonic acid (6 atoms: 12 modes) and its four-centre
# decomposition transition state to CO2 + H2O (11 real modes), rounded to multiples of 10 cm-1
# so that the grain introduces no rounding of the frequencies. Not computed values.
H2CO3_CM1 = [3640, 3630, 1830, 1450, 1380, 1180, 1010, 790, 670, 580, 550, 220]
TS_CM1 = [3700, 2600, 1900, 1400, 1150, 940, 800, 650, 560, 480, 300]
BARRIER_CM1 = 15000          # demo barrier, a whole number of grains
GRAIN_CM1 = 10.0


def ln_q_harmonic(freqs_cm1, t):
    """ln of the harmonic vibrational partition function from the zero-point level."""
    return sum(-math.log1p(-math.exp(-C2_CM_K * nu / t)) for nu in freqs_cm1)


def canonical_tst(t, freqs_r, freqs_ts, barrier_cm1, degeneracy=1.0):
    """(kT/h) (Q_TS/Q_R) exp(-E0/kT), harmonic partition functions, written out independently."""
    return degeneracy * kB * t / h * math.exp(ln_q_harmonic(freqs_ts, t) - ln_q_harmonic(freqs_r, t)
                                              - C2_CM_K * barrier_cm1 / t)


@pytest.fixture(scope="module")
def rate():
    return rrkm_rate(H2CO3_CM1, TS_CM1, BARRIER_CM1 * CM1_J_PER_MOL, grain_cm1=GRAIN_CM1,
                     energy_above_barrier_J_per_mol=40000 * CM1_J_PER_MOL)


@pytest.mark.parametrize("t", [150.0, 200.0, 300.0, 1000.0])
def test_k_infinity_equals_canonical_tst(rate, t):
    k_inf = high_pressure_limit(rate, t)[0]
    k_tst = canonical_tst(t, H2CO3_CM1, TS_CM1, BARRIER_CM1)
    # Grain error: with the grain-averaged N_TS the discrete Boltzmann sum replaces kT by
    # (d/2) coth(d/2kT), a relative excess of (d/kT)^2/12 = 8.6e-4 at 150 K (d = 10 cm-1),
    # 1.9e-4 at 300 K; frequencies and barrier are exact multiples of the grain.
    x = GRAIN_CM1 * C2_CM_K / t
    assert k_inf == pytest.approx(k_tst * (x / 2) / math.tanh(x / 2), rel=1e-9)
    assert k_inf == pytest.approx(k_tst, rel=1.2 * x**2 / 12)


def test_path_degeneracy_scales_k(rate):
    k2 = rrkm_rate(H2CO3_CM1, TS_CM1, BARRIER_CM1 * CM1_J_PER_MOL, grain_cm1=GRAIN_CM1,
                   energy_above_barrier_J_per_mol=40000 * CM1_J_PER_MOL, path_degeneracy=2)
    np.testing.assert_allclose(k2.rate_per_s, 2 * rate.rate_per_s)
    assert np.all(rate.rate_per_s[: rate.barrier_index] == 0)
    assert np.all(rate.rate_per_s[rate.barrier_index:] > 0)
    # k(E) rises with E (not grain by grain: the count of reactant states is lumpy)
    i0 = rate.barrier_index
    assert rate.rate_per_s[i0 + 100] < rate.rate_per_s[i0 + 1000] < rate.rate_per_s[i0 + 3000]


def test_k_of_e_is_the_rrkm_ratio(rate):
    i = rate.barrier_index + 2000
    n_ts = count_states(TS_CM1, 60000 * CM1_J_PER_MOL, grain_cm1=GRAIN_CM1)
    rho = rate.reactant.density_per_J_per_mol[i]
    n = n_ts.sum_of_states[2000] - 0.5 * n_ts.counts[2000]
    assert rate.rate_per_s[i] == pytest.approx(n / (h * 6.02214076e23 * rho), rel=1e-9)  # N_A (SI 2019, exact)


def test_lite_external_rotation_gives_tst_with_rotational_partition_functions():
    # Demo rotational constants (cm-1): 2-D rotor sqrt(BC) and K-rotor A - sqrt(BC); TS a little looser.
    ext = ExternalRotation(reactant_B2d_cm1=0.18, ts_B2d_cm1=0.16, reactant_K_cm1=0.20, ts_K_cm1=0.17)
    rate = rrkm_rate(H2CO3_CM1, TS_CM1, BARRIER_CM1 * CM1_J_PER_MOL, grain_cm1=GRAIN_CM1,
                     energy_above_barrier_J_per_mol=40000 * CM1_J_PER_MOL, external=ext)
    assert rate.centrifugal_factor == pytest.approx(0.18 / 0.16)
    for t in (200.0, 300.0):
        k_inf = high_pressure_limit(rate, t)[0]
        # classical Q_2D = kT/B and Q_1D = sqrt(pi kT / B), written out independently
        kt_cm1 = t / C2_CM_K
        q_ratio = (kt_cm1 / 0.16) / (kt_cm1 / 0.18) * math.sqrt(math.pi * kt_cm1 / 0.17) / math.sqrt(
            math.pi * kt_cm1 / 0.20)
        expected = canonical_tst(t, H2CO3_CM1, TS_CM1, BARRIER_CM1) * q_ratio
        # grain error of the classical K-rotor count (first grain holds the E^-1/2 singularity): < 0.5 %
        assert k_inf == pytest.approx(expected, rel=5e-3)


def test_centrifugal_barrier_shift_sign():
    # a looser TS (smaller B) lowers the effective barrier at thermal J
    assert centrifugal_barrier_shift_J_per_mol(0.18, 0.16, 300.0) < 0
    assert centrifugal_barrier_shift_J_per_mol(0.18, 0.18, 300.0) == 0


def bell_parabolic(e, nu_imag_cm1=1500.0):
    """Transmission of a parabolic barrier, P = 1/(1 + exp(-2 pi E / h nu)) (Bell 1959)."""
    return 1.0 / (1.0 + np.exp(-2 * np.pi * e / (nu_imag_cm1 * CM1_J_PER_MOL)))


def test_tunnelling_sum_against_enumeration_of_ts_levels():
    ts_freqs = [700.0, 1300.0]                       # small demo TS, multiples of the grain
    grain, e0_cm1, n = 10.0, 3000.0, 800
    ts = count_states(ts_freqs, n * grain * CM1_J_PER_MOL, grain_cm1=grain)
    got = tunnelling_sum_of_states(ts, int(e0_cm1 / grain), n, bell_parabolic)
    e = np.arange(n) * grain                         # cm-1 above the reactant zero-point level
    ref = np.zeros(n)
    for v1, v2 in itertools.product(range(12), range(7)):
        level = v1 * 700 + v2 * 1300
        reach = e >= level                           # a TS level needs at least its own energy
        ref += np.where(reach, bell_parabolic((e - e0_cm1 - level) * CM1_J_PER_MOL), 0.0)
    np.testing.assert_allclose(got, ref, rtol=1e-12, atol=1e-300)


def test_step_transmission_reproduces_the_classical_sum(rate):
    def step(e):
        return np.where(e > 0, 1.0, np.where(e == 0, 0.5, 0.0))
    reactant = rate.reactant
    ts = count_states(TS_CM1, reactant.n_grains * reactant.grain_J_per_mol, grain_cm1=GRAIN_CM1)
    tun = microcanonical_rate(reactant, ts, BARRIER_CM1 * CM1_J_PER_MOL, transmission=step)
    np.testing.assert_allclose(tun.rate_per_s, rate.rate_per_s, rtol=1e-12)
    bell = microcanonical_rate(reactant, ts, BARRIER_CM1 * CM1_J_PER_MOL, transmission=bell_parabolic)
    assert np.all(bell.rate_per_s[rate.barrier_index - 100: rate.barrier_index] > 0)   # below E0


def test_errors():
    a = count_states([100.0], 1e5, grain_cm1=10.0)
    b = count_states([100.0], 1e5, grain_cm1=20.0)
    with pytest.raises(InputError, match="share one grain"):
        microcanonical_rate(a, b, 1000.0)
    with pytest.raises(InputError, match="non-negative"):
        microcanonical_rate(a, a, -5.0)
    with pytest.raises(InputError, match="ends below the barrier"):
        microcanonical_rate(a, a, 2e5)
    with pytest.raises(InputError, match="one probability"):
        microcanonical_rate(a, a, 1000.0, transmission=lambda e: 2.0 + 0 * e)
    with pytest.raises(InputError, match="must all be positive"):
        rrkm_rate([100.0, 200.0], [-1500.0, 300.0], 1e4)
