"""Rotors, electronic levels and the Eckart sum of states without full-grid convolutions,
checked against the direct convolution (np.convolve over the whole grid, the way they were
counted before: an independent method for the same sums)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from tstrate.physics.rrkm import tunnelling_sum_of_states
from tstrate.physics.states import (CM1_J_PER_MOL, Rotor, StateCounts, add_oscillators, add_shifted_copies,
                                    count_states)
from tstrate.physics.tunnelling import eckart_transmission

# made-up wavenumbers of a 7-atom molecule (cm-1), not multiples of the grain (see NOTES.md)
FREQS = [3611.3, 3402.7, 1803.1, 1455.9, 1297.4, 1103.8, 987.3, 803.2, 702.9, 611.4, 537.7, 455.1,
         401.3, 322.9, 207.1]


def _direct(freqs, e_max, grain_cm1, rotors=(), levels=()):
    """Counts by direct convolution over the whole grid: rotors convolved with a delta, the
    oscillators by Beyer-Swinehart, then the electronic levels convolved in."""
    grain = grain_cm1 * CM1_J_PER_MOL
    n = int(math.ceil(e_max / grain)) + 1
    c = np.zeros(n)
    c[0] = 1.0
    for r in rotors:
        c = np.convolve(c, r.counts(n, grain))[:n]
    c = add_oscillators(c, freqs, grain_cm1)
    if levels:
        elec = np.zeros(n)
        for e, g in levels:
            i = int(round(e / grain))
            if i < n:
                elec[i] += g
        c = np.convolve(c, elec)[:n]
    return c


ROTOR_SETS = {
    "one classical K-rotor": (Rotor(4.1, 1, 1, False),),
    "K-rotor and two free rotors": (Rotor(4.1, 1, 1, False), Rotor(12.3, 3, 1, False), Rotor(0.9, 2, 1, False)),
    "active 2-D and K-rotor": (Rotor(0.35, 1, 2, False), Rotor(4.1, 1, 1, False)),
    "quantum and classical": (Rotor(9.7, 1, 1, True), Rotor(4.1, 1, 1, False), Rotor(2.2, 2, 2, True)),
    "quantum only": (Rotor(9.7, 1, 1, True),),
}
# (energy J/mol, degeneracy): a doublet ground state with a low and a high excited level (made up)
LEVELS = ((0.0, 2.0), (140.0 * CM1_J_PER_MOL, 2.0), (9003.0 * CM1_J_PER_MOL, 4.0))


@pytest.mark.parametrize("name", ROTOR_SETS)
@pytest.mark.parametrize("levels", [(), LEVELS], ids=["ground level", "three levels"])
def test_rotors_and_levels_in_the_starting_array_equal_the_direct_convolution(name, levels):
    e_max, grain = 25000 * CM1_J_PER_MOL, 7.0
    fast = count_states(FREQS, e_max, grain_cm1=grain, rotors=ROTOR_SETS[name], levels=levels).counts
    ref = _direct(FREQS, e_max, grain, ROTOR_SETS[name], levels)
    assert fast.shape == ref.shape
    # the counts span about 20 decades; compare each grain to its own size
    np.testing.assert_allclose(fast, ref, rtol=1e-10, atol=1e-300)


def test_shifted_copies_are_the_convolution_with_the_levels():
    rng = np.random.default_rng(3)
    c = rng.random(500) * 10.0 ** rng.uniform(-10, 10, 500)
    levels = [(0, 1.0), (17, 3.0), (499, 2.0), (640, 5.0)]
    sparse = np.zeros(700)
    for i, g in levels:
        sparse[i] += g
    np.testing.assert_allclose(add_shifted_copies(c, levels), np.convolve(c, sparse)[:500], rtol=1e-14)


@pytest.mark.parametrize("nu, v1_cm1, v2_cm1", [(1800.0, 10000.0, 12000.0), (600.0, 3000.0, 2000.0),
                                                (2500.0, 15000.0, 4000.0)])
def test_windowed_eckart_sum_of_states_equals_the_full_convolution(nu, v1_cm1, v2_cm1):
    grain = 10.0
    e_max = (v1_cm1 + 30000.0) * CM1_J_PER_MOL
    ts = count_states(FREQS[1:], e_max, grain_cm1=grain, rotors=(Rotor(3.3, 1, 1, False),))
    m = int(round(v1_cm1 / grain))
    v1, v2 = v1_cm1 * CM1_J_PER_MOL, v2_cm1 * CM1_J_PER_MOL

    def transmission(e_from_top):
        return eckart_transmission(np.asarray(e_from_top) + v1, nu, v1, v2)

    n = ts.n_grains
    fast = tunnelling_sum_of_states(ts, m, n, transmission)
    p = transmission((np.arange(n) - m) * ts.grain_J_per_mol)
    assert np.any((p > 0) & (p < 1)) and np.any(p == 1.0)       # all three regions present
    ref = np.convolve(ts.counts, p)[:n]
    np.testing.assert_allclose(fast, ref, rtol=1e-12, atol=1e-300)


def test_windowed_sum_handles_a_step_and_a_transmission_without_ones():
    ts = StateCounts(10.0, np.arange(1.0, 301.0))
    step = lambda e: np.where(np.asarray(e) > 0, 1.0, np.where(np.asarray(e) == 0, 0.5, 0.0))  # noqa: E731
    half = lambda e: np.full(np.shape(e), 0.5)  # noqa: E731
    for tr in (step, half):
        p = tr((np.arange(300) - 40) * 10.0)
        np.testing.assert_allclose(tunnelling_sum_of_states(ts, 40, 300, tr), np.convolve(ts.counts, p)[:300],
                                   rtol=1e-14)
