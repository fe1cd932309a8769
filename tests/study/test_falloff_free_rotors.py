"""RRKM k(E) with declared free internal rotors: k_inf from k(E) against canonical TST.

The study is the invented carbonic-acid falloff study of tests/data/falloff (made-up
wavenumbers, all multiples of the 10 cm-1 grain). The reactant's 220 cm-1 mode (and in one
case the transition state's 300 cm-1 mode) is declared a free rotor with an invented reduced
moment. Canonical TST (tstrate.physics.tst, through the thermochemistry of the free rotor,
tested against its levels in test_thermo_free_rotors.py) is the reference.

Grain error of a classical 1-D rotor count (states.py counts N(E) = (2/sigma) sqrt(E/B),
Robinson and Holbrook 1972, differenced at the grain edges): its relative error in the
Boltzmann sum depends only on x = grain/kT, not on B or sigma. It is O(x^(3/2)), from the
1/sqrt(E) density at E = 0: the first grain alone counts (2/(3 sqrt(pi))) (x/2)^(3/2) too many
states relative to q (its states at E = 0 instead of spread over [0, grain/2]).
"""

import dataclasses
import math
from pathlib import Path

import numpy as np
import pytest
from scipy.constants import N_A, c as c_light, h, k as kB, physical_constants

from tstrate.io.study import read_study
from tstrate.model import FreeRotor
from tstrate.model.settings import FalloffSettings
from tstrate.physics.unimolecular import unimolecular_model
from tstrate.study.falloff import channel_falloff

pytestmark = pytest.mark.fitting     # rerun by .ci/run with 1 and 2 BLAS threads

DATA = Path(__file__).resolve().parents[1] / "data" / "falloff"
C2_CM_K = physical_constants["second radiation constant"][0] * 100   # hc/k [cm K] (CODATA)
CM1_J_PER_MOL = h * c_light * 100 * N_A                                 # one cm-1 as J/mol
TEMPS = np.array([200.0, 300.0, 500.0])


@pytest.fixture(scope="module")
def study():
    return read_study(DATA / "study.toml")


def with_rotors(study, **rotors):
    species = dict(study.species)
    for name, rotor in rotors.items():
        species[name] = species[name].with_changes(free_rotors=(rotor,))
    return dataclasses.replace(study, species=species)


def rotor_grain_sum_over_exact(x: float) -> float:
    """Boltzmann sum of the grain-binned classical 1-D rotor count over its exact integral (B = sigma = 1,
    energies in grains): states between the edges 0, 1/2, 3/2, ... placed at 0, 1, 2, ..."""
    n = int(400 / x) + 2
    edges = np.concatenate([[0.0], np.arange(n) + 0.5])
    counts = np.diff(2 * np.sqrt(edges))
    return float(np.sum(counts * np.exp(-x * np.arange(n))) / math.sqrt(math.pi / x))


def test_k_inf_equals_tst_with_a_free_rotor_in_the_reactant(study):
    st = with_rotors(study, H2CO3=FreeRotor(220.0, 1, 0.85))
    cf = channel_falloff(st, st.channel("bare"), temperature_K=TEMPS)
    model = cf.model
    # the rotor is in the count and its mode is not; E0 rises by half its quantum (13780 + 110 cm-1)
    assert 220.0 not in model.reactant.harmonic_frequencies_cm1
    assert model.barrier_J_per_mol == pytest.approx(13890 * CM1_J_PER_MOL, rel=1e-12)
    assert model.grain_cm1 == pytest.approx(10.0, rel=1e-12)
    x = model.grain_cm1 * C2_CM_K / TEMPS
    ratio = cf.k_high_pressure_per_s / cf.canonical_tst_per_s
    # harmonic modes on the grid give (x/2) coth(x/2) (see test_pressure.py); the K-rotors of reactant
    # and TS cancel; the reactant's extra rotor divides k_inf by its grain-sum error
    expected = (x / 2) / np.tanh(x / 2) / np.array([rotor_grain_sum_over_exact(xi) for xi in x])
    np.testing.assert_allclose(ratio, expected, rtol=1e-9)
    # so k_inf agrees with TST within the grain error: x^2/12 + the first-grain estimate above
    # (1.1e-3 at 200 K for a 10 cm-1 grain)
    bound = x**2 / 12 + 2 / (3 * math.sqrt(math.pi)) * (x / 2) ** 1.5
    assert np.all(np.abs(ratio - 1) <= bound)
    # and the rotor matters: without it k_inf is 8x larger at 200 K
    plain = channel_falloff(study, study.channel("bare"), temperature_K=TEMPS)
    assert plain.k_high_pressure_per_s[0] > 5 * cf.k_high_pressure_per_s[0]


def test_k_inf_equals_tst_with_free_rotors_in_reactant_and_transition_state(study):
    # one classical 1-D rotor on each side: their grain errors cancel as the K-rotors' do, whatever
    # their constants and symmetry numbers, leaving exactly (x/2) coth(x/2)
    st = with_rotors(study, H2CO3=FreeRotor(220.0, 1, 0.85), TS_bare=FreeRotor(300.0, 2, 1.7))
    cf = channel_falloff(st, st.channel("bare"), temperature_K=TEMPS)
    # E0 = 13780 + 110 - 150 cm-1
    assert cf.model.barrier_J_per_mol == pytest.approx(13740 * CM1_J_PER_MOL, rel=1e-12)
    x = cf.model.grain_cm1 * C2_CM_K / TEMPS
    np.testing.assert_allclose(cf.k_high_pressure_per_s / cf.canonical_tst_per_s, (x / 2) / np.tanh(x / 2),
                               rtol=1e-9)


def test_rotor_counts_carry_their_symmetry_number(study):
    # sigma = 3 divides the reactant's state counts (and its q) by 3: k(E) triples at every energy
    one = unimolecular_model(study.channel("bare"), with_rotors(study, H2CO3=FreeRotor(220.0, 1, 0.85)).species,
                             FalloffSettings(grain_cm1=10.0), max_temperature_K=300.0)
    three = unimolecular_model(study.channel("bare"), with_rotors(study, H2CO3=FreeRotor(220.0, 3, 0.85)).species,
                               FalloffSettings(grain_cm1=10.0), max_temperature_K=300.0)
    has = one.rate.rate_per_s > 0
    np.testing.assert_allclose(three.rate.rate_per_s[has], 3 * one.rate.rate_per_s[has], rtol=1e-12)
