"""Sums and densities of states: Beyer-Swinehart against brute-force enumeration,
Whitten-Rabinovitch, rotors against their analytic counts, grain checks."""

import itertools
import logging
import math

import numpy as np
import pytest

from tstrate.errors import InputError
from tstrate.physics.states import (CM1_J_PER_MOL, Rotor, check_grain, count_states, rotational_constant_cm1,
                                    whitten_rabinovitch)
from tstrate.units import AMU, C, H


def brute_force_counts(frequencies_cm1, grain_cm1, n_grains):
    """Independent method: enumerate every vibrational quantum-number vector and bin its energy."""
    counts = np.zeros(n_grains)
    e_max = (n_grains - 0.5) * grain_cm1
    ranges = [range(int(e_max // nu) + 1) for nu in frequencies_cm1]
    for quanta in itertools.product(*ranges):
        e = sum(v * nu for v, nu in zip(quanta, frequencies_cm1))
        i = int(round(e / grain_cm1))
        if i < n_grains:
            counts[i] += 1
    return counts


# Frequencies that are whole multiples of the grain: the direct count must be exact.
@pytest.mark.parametrize("freqs, grain", [
    ([100.0, 200.0, 300.0], 10.0),                 # id: multiples of the grain
    ([150.0, 150.0, 420.0, 990.0], 30.0),           # degenerate pair
    ([1595.0, 3657.0, 3756.0], 1.0),                # H2O fundamentals (cm-1) on a 1 cm-1 grain
])
def test_beyer_swinehart_is_exact_for_multiples_of_the_grain(freqs, grain):
    e_max = 6000.0 * CM1_J_PER_MOL
    sc = count_states(freqs, e_max, grain_cm1=grain)
    ref = brute_force_counts(freqs, grain, sc.n_grains)
    np.testing.assert_array_equal(sc.counts, ref)
    np.testing.assert_array_equal(sc.sum_of_states, np.cumsum(ref))


def test_beyer_swinehart_rounds_other_frequencies_to_the_grain():
    # 104 and 207 cm-1 on a 10 cm-1 grain are counted as 100 and 210 (round to nearest grain):
    # compare with brute force on the rounded set.
    sc = count_states([104.0, 207.0], 3000 * CM1_J_PER_MOL, grain_cm1=10.0)
    np.testing.assert_array_equal(sc.counts, brute_force_counts([100.0, 210.0], 10.0, sc.n_grains))


def test_whitten_rabinovitch_within_a_few_percent_at_high_energy():
    # CH4-like set of 9 modes (cm-1; textbook fundamentals of methane, degeneracies written out).
    freqs = [2917.0, 1534.0, 1534.0, 3019.0, 3019.0, 3019.0, 1306.0, 1306.0, 1306.0]
    sc = count_states(freqs, 60000 * CM1_J_PER_MOL, grain_cm1=1.0, refine=False)
    half = 500                                   # average the exact count over +-500 cm-1 windows
    for e_cm1 in (20000, 30000, 40000, 55000):   # E / E_z from 2.2 to 6 (E_z = 8980 cm-1)
        window = slice(e_cm1 - half, e_cm1 + half)
        e = sc.energies_J_per_mol[window]
        n_wr, rho_wr = whitten_rabinovitch(freqs, e)
        # WR's stated accuracy is ~1 % for E > E_z; allow 2 % against the exact count.
        assert n_wr.mean() == pytest.approx(sc.sum_of_states[window].mean(), rel=0.02)
        assert rho_wr.mean() == pytest.approx(sc.density_per_J_per_mol[window].mean(), rel=0.02)


def test_rotational_constant_of_a_moment_of_inertia():
    # B = h / (8 pi^2 c I): 1 amu A^2 gives 16.8576 cm-1 (the usual conversion factor, from memory)
    assert rotational_constant_cm1(1.0) == pytest.approx(16.8576, rel=1e-4)
    i = 10.0 * AMU * 1e-20
    assert rotational_constant_cm1(10.0) == pytest.approx(H / (8 * math.pi**2 * C * i) / 100)


@pytest.mark.parametrize("dimension", [1, 2])
def test_classical_rotor_counts_follow_the_analytic_sum(dimension):
    b, sigma, grain = 2.5, 3, 5.0
    rotor = Rotor(b, sigma, dimension, quantum=False)
    sc = count_states([], 10000 * CM1_J_PER_MOL, grain_cm1=grain, rotors=[rotor])
    e_edge = (np.arange(sc.n_grains) + 0.5) * grain       # upper edge of each grain, cm-1
    analytic = (2 / sigma) * np.sqrt(e_edge / b) if dimension == 1 else e_edge / (sigma * b)
    np.testing.assert_allclose(sc.sum_of_states, analytic, rtol=1e-12)


def test_quantum_rotor_levels_against_enumeration():
    # 2-D rotor of CO2-like B = 0.39 cm-1 (levels B J(J+1), degeneracy 2J+1), sigma = 2
    b, grain = 0.39, 1.0
    sc = count_states([], 2000 * CM1_J_PER_MOL, grain_cm1=grain, rotors=[Rotor(b, 2, 2, quantum=True)])
    ref = np.zeros(sc.n_grains)
    for j in range(200):
        i = int(round(b * j * (j + 1) / grain))
        if i < sc.n_grains:
            ref[i] += (2 * j + 1) / 2
    np.testing.assert_allclose(sc.counts, ref)
    # classical limit N(E) = E / (sigma B): the level count exceeds it by the boundary term
    # ~ sqrt(E/B)/sigma (1.4 % at 2000 cm-1), so allow 2 %
    assert sc.sum_of_states[-1] == pytest.approx(2000 / (2 * b), rel=0.02)


def test_free_rotor_convolved_with_oscillator_matches_enumeration():
    # one oscillator of 300 cm-1 and a quantum 1-D free rotor B = 1 cm-1, sigma = 3 (a methyl-like top)
    b, sigma, nu, grain = 1.0, 3, 300.0, 1.0
    sc = count_states([nu], 3000 * CM1_J_PER_MOL, grain_cm1=grain,
                      rotors=[Rotor(b, sigma, 1, quantum=True)])
    ref = np.zeros(sc.n_grains)
    for v in range(11):
        for m in range(-60, 61):
            i = int(round((v * nu + b * m * m) / grain))
            if i < sc.n_grains:
                ref[i] += 1 / sigma
    np.testing.assert_allclose(sc.counts, ref, atol=1e-12)


def test_partition_function_of_counts_is_the_harmonic_one():
    freqs = [500.0, 1000.0, 1500.0]
    sc = count_states(freqs, 40000 * CM1_J_PER_MOL, grain_cm1=10.0)
    t = np.array([300.0, 1000.0])
    from scipy.constants import physical_constants
    hc_k = physical_constants["second radiation constant"][0] * 100   # c2 = hc/k [cm K], CODATA
    ln_q = sum(-np.log1p(-np.exp(-hc_k * nu / t)) for nu in freqs)
    np.testing.assert_allclose(sc.log_partition_function(t), ln_q, rtol=1e-10)


def test_coarse_grain_is_refined_with_a_warning(caplog):
    with caplog.at_level(logging.WARNING, logger="tstrate.physics.states"):
        g = check_grain(50.0, [90.0, 1200.0])
    assert g == pytest.approx(30.0)
    assert "refined" in caplog.text
    sc = count_states([90.0, 1200.0], 5000 * CM1_J_PER_MOL, grain_cm1=50.0)
    assert sc.grain_cm1 == pytest.approx(30.0)


def test_fine_grain_is_kept_silently(caplog):
    with caplog.at_level(logging.WARNING):
        assert check_grain(10.0, [90.0, 1200.0]) == 10.0
    assert caplog.text == ""


@pytest.mark.parametrize("freqs, grain, match", [
    ([100.0, -50.0], 10.0, "must all be positive"),
    ([100.0, 0.0], 10.0, "must all be positive"),
    ([100.0], 0.0, "grain_cm1 must be positive"),
    ([100.0], -5.0, "grain_cm1 must be positive"),
    ([100.0, float("nan")], 10.0, "finite"),
])
def test_bad_input_raises(freqs, grain, match):
    with pytest.raises(InputError, match=match):
        count_states(freqs, 1000.0, grain_cm1=grain)


def test_rotor_validation():
    with pytest.raises(InputError, match="symmetry number"):
        Rotor(1.0, 0)
    with pytest.raises(InputError, match="dimension"):
        Rotor(1.0, 1, 3)
    with pytest.raises(InputError, match="rotational_constant_cm1 must be positive"):
        Rotor(-1.0)
