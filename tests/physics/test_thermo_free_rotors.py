"""Free internal rotors in thermochemistry and canonical TST.

Sources of the check values:
- the classical 1-D free rotor, q = (8 pi^3 I k T)^(1/2) / (sigma h), U = RT/2, S = R (ln q + 1/2),
  Cv = R/2 (McQuarrie, Statistical Mechanics, 1976; Pitzer and Gwinn, J. Chem. Phys. 10, 428
  (1942), free-rotor limit), written out below with CODATA constants from scipy.constants;
- an independent brute-force sum over the rotor's levels E_m = B m^2, m = -inf..inf, divided by
  sigma. Its difference from the classical limit follows from the Poisson summation formula
  (Jacobi's theta transformation): sum_m exp(-a m^2) = sqrt(pi/a) (1 + 2 sum_k exp(-pi^2 k^2/a)),
  a = B/kT, so the relative error of q is 2 exp(-pi^2 kT/B) (plus smaller terms);
- the harmonic oscillator from the bottom of the well, q = 1/(2 sinh(x/2)), x = h c nu / kT,
  and its S, U, Cv (any statistical-mechanics text), written out below.
The species is the invented H2CO3 of tests/data/falloff (made-up wavenumbers), its 220 cm-1
mode declared a free OH torsion with an invented reduced moment of 0.85 u Angstrom^2.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from scipy.constants import N_A, R, c as c_light, h, k as kB, physical_constants

from tstrate.io.species import read_species
from tstrate.io.study import read_study
from tstrate.model import FreeRotor
from tstrate.physics.thermo import (LowModes, internal_free_rotor, ln_partition_function_per_volume,
                                    thermochemistry)
from tstrate.physics.tst import channel_rates

DATA = Path(__file__).resolve().parents[1] / "data" / "falloff"
AMU_A2 = physical_constants["atomic mass constant"][0] * 1e-20   # 1 u Angstrom^2 in kg m^2 (CODATA)
TEMPS = np.array([150.0, 200.0, 298.15, 500.0, 1000.0])
MODE_CM1 = 220.0
ROTOR = FreeRotor(MODE_CM1, 1, 0.85)


def by_hand_q(moment_amu_A2, sigma, T):
    """(8 pi^3 I k T)^(1/2) / (sigma h) (McQuarrie 1976)."""
    return np.sqrt(8 * math.pi**3 * moment_amu_A2 * AMU_A2 * kB * T) / (sigma * h)


def level_sum(moment_amu_A2, sigma, T):
    """ln q, U/RT, S/R, Cv/R from the levels E_m = B m^2, m = -M..M, divided by sigma."""
    b_J = h**2 / (8 * math.pi**2 * moment_amu_A2 * AMU_A2)
    out = []
    for t in np.atleast_1d(T):
        m_max = int(math.sqrt(1000 * kB * t / b_J)) + 2          # exp(-1000) is far below 1e-16
        m = np.arange(-m_max, m_max + 1, dtype=float)
        y = b_J * m**2 / (kB * t)
        w = np.exp(-y)
        z = w.sum()
        u = (w * y).sum() / z
        cv = (w * y**2).sum() / z - u**2
        ln_q = math.log(z / sigma)
        out.append((ln_q, u, ln_q + u, cv))
    return tuple(np.array(col) for col in zip(*out))


# ---- the rotor alone ------------------------------------------------------------------------

@pytest.mark.parametrize("moment,sigma", [(0.85, 1), (3.2, 3), (1.6, 2)],
                         ids=["OH-torsion-like-0.85uA2", "methyl-like-3.2uA2-sigma3", "invented-1.6uA2-sigma2"])
def test_free_rotor_against_the_formula_by_hand(moment, sigma):
    ln_q, u, s, cv = internal_free_rotor(moment * AMU_A2, sigma, TEMPS)
    q = by_hand_q(moment, sigma, TEMPS)
    np.testing.assert_allclose(ln_q, np.log(q), rtol=1e-13)
    np.testing.assert_allclose(u, 0.5, rtol=1e-15)
    np.testing.assert_allclose(cv, 0.5, rtol=1e-15)
    np.testing.assert_allclose(s, np.log(q) + 0.5, rtol=1e-13)


@pytest.mark.parametrize("moment,sigma", [(0.85, 1), (3.2, 3)],
                         ids=["OH-torsion-like-0.85uA2", "methyl-like-3.2uA2-sigma3"])
def test_free_rotor_against_a_sum_over_its_levels(moment, sigma):
    # Classical limit check where it holds: kT/B >= 7 here (B = 19.8 cm-1 at 200 K is the worst case),
    # so the Poisson-summation error 2 exp(-pi^2 kT/B) is below 1e-29 in ln q; the derivatives of
    # that term bound the error of U and Cv by (pi^2 kT/B)^2 * 2 exp(-pi^2 kT/B) < 1e-25. What is left
    # is the floating-point error of the sums (1e-13); 1e-11 is the tolerance.
    T = np.array([200.0, 298.15, 500.0, 1000.0])
    ref = level_sum(moment, sigma, T)
    got = internal_free_rotor(moment * AMU_A2, sigma, T)
    for g, r in zip(got, ref):
        np.testing.assert_allclose(g, r, rtol=1e-11, atol=1e-11)


def test_free_rotor_level_sum_at_low_temperature_is_within_the_poisson_bound():
    # At 40 K the OH-torsion-like rotor has kT/B = 1.40: the classical limit is no longer exact, and the
    # difference in ln q must be the Poisson term 2 exp(-pi^2 kT/B) (8e-7) to leading order.
    T = np.array([40.0])
    moment = 0.85
    b_J = h**2 / (8 * math.pi**2 * moment * AMU_A2)
    a = b_J / (kB * T)
    diff = level_sum(moment, 1, T)[0] - internal_free_rotor(moment * AMU_A2, 1, T)[0]
    np.testing.assert_allclose(diff, np.log1p(2 * np.exp(-math.pi**2 / a)), rtol=1e-6)


# ---- a species with a declared rotor ---------------------------------------------------------

@pytest.fixture(scope="module")
def pair():
    plain = read_species(DATA / "h2co3.toml")
    return plain, plain.with_changes(free_rotors=(ROTOR,))


def harmonic_by_hand(nu_cm1, T):
    """ln q (from the zero-point level), U/RT, S/R, Cv/R of one harmonic oscillator."""
    x = h * c_light * 100 * nu_cm1 / (kB * T)
    ln_q = -np.log(1 - np.exp(-x))
    u = x / np.expm1(x)
    return ln_q, u, ln_q + u, x**2 * np.exp(x) / np.expm1(x) ** 2


def test_species_with_a_rotor_differs_by_exactly_that_mode(pair):
    plain, rotor = pair
    a, b = thermochemistry(plain, TEMPS), thermochemistry(rotor, TEMPS)
    ln_q_ho, u_ho, s_ho, cv_ho = harmonic_by_hand(MODE_CM1, TEMPS)
    q_fr = by_hand_q(ROTOR.reduced_moment_amu_A2, 1, TEMPS)
    # S(rotor) - S(all harmonic) = S_free-rotor - S_HO of the replaced mode
    np.testing.assert_allclose(b.entropy_J_per_mol_K - a.entropy_J_per_mol_K,
                               R * (np.log(q_fr) + 0.5) - R * s_ho, rtol=1e-10)
    np.testing.assert_allclose(b.enthalpy_increment_J_per_mol - a.enthalpy_increment_J_per_mol,
                               R * TEMPS * (0.5 - u_ho), rtol=1e-10)
    np.testing.assert_allclose(b.heat_capacity_J_per_mol_K - a.heat_capacity_J_per_mol_K,
                               R * (0.5 - cv_ho), rtol=1e-10)
    # the free rotor has no zero-point energy: the ZPE loses half a quantum of the mode
    assert a.zpe_J_per_mol - b.zpe_J_per_mol == pytest.approx(0.5 * h * c_light * 100 * MODE_CM1 * N_A,
                                                              rel=1e-12)
    np.testing.assert_allclose(ln_partition_function_per_volume(rotor, TEMPS)
                               - ln_partition_function_per_volume(plain, TEMPS),
                               np.log(q_fr) - ln_q_ho, rtol=1e-10)
    assert np.all(a.ln_q["internal_rotation"] == 0)
    np.testing.assert_allclose(b.ln_q["internal_rotation"], np.log(q_fr), rtol=1e-13)


def test_low_mode_treatments_leave_the_rotor_alone(pair):
    # the frequency floor raises modes below 300 cm-1: the species' lowest harmonic mode is 550 cm-1 once
    # the 220 cm-1 mode is a rotor, so nothing is raised and the result equals the harmonic one
    _, rotor = pair
    a = thermochemistry(rotor, TEMPS)
    b = thermochemistry(rotor, TEMPS, low_modes=LowModes("frequency-floor", 300.0))
    np.testing.assert_allclose(b.entropy_J_per_mol_K, a.entropy_J_per_mol_K, rtol=1e-14)


def test_tst_rate_changes_by_the_rotor_over_the_well_bottom_oscillator(pair):
    # The reactant's ZPE loses h c nu / 2 (barrier up by as much) and its q_vib (from the zero-point
    # level) 1/(1 - e^-x) gives way to q_fr: k(rotor)/k(harmonic) = 1 / (2 sinh(x/2) q_fr)
    plain, rotor = pair
    study = read_study(DATA / "study.toml")
    ch = study.channel("bare")
    k_plain = channel_rates(ch, study.species, TEMPS).k
    species = dict(study.species, H2CO3=rotor)
    k_rotor = channel_rates(ch, species, TEMPS).k
    x = h * c_light * 100 * MODE_CM1 / (kB * TEMPS)
    q_fr = by_hand_q(ROTOR.reduced_moment_amu_A2, 1, TEMPS)
    np.testing.assert_allclose(k_rotor / k_plain, 1 / (2 * np.sinh(x / 2) * q_fr), rtol=1e-10)
    # the reverse rate (detailed balance through the same partition functions) is unchanged
    np.testing.assert_allclose(channel_rates(ch, species, TEMPS).k_reverse,
                               channel_rates(ch, study.species, TEMPS).k_reverse, rtol=1e-10)
