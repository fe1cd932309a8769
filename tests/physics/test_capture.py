"""The capture (collision) ceiling of bimolecular rate constants (tstrate.physics.capture, tstrate.study.rates)."""

import dataclasses
import math
from pathlib import Path

import numpy as np
import pytest
from scipy import constants as sc

from tstrate.io.species import build_species
from tstrate.io.study import read_study
from tstrate.physics.capture import (HARD_SPHERE_MODEL, LENNARD_JONES_MODEL, capture_limit, capture_rate_m3_s,
                                     hard_sphere_diameter_A)
from tstrate.study.rates import capture_limits, study_rates

DATA = Path(__file__).resolve().parents[1] / "data"
AMU = sc.physical_constants["atomic mass constant"][0]


def argon(**kw):
    return build_species("Ar", ["Ar"], [[0.0, 0.0, 0.0]], frequencies_cm1=[], energy_J_per_mol=0.0, **kw)


def test_hard_spheres_give_the_gas_kinetic_formula():
    """Ar + Ar: d = 2 r_vdW(Ar) with Bondi's 1.88 Angstrom (Bondi, J. Phys. Chem. 68, 441 (1964); value
    from memory, as ASE tabulates it); k = pi d^2 sqrt(8 k_B T / (pi mu)), written out here."""
    ar = argon()
    assert hard_sphere_diameter_A(ar) == pytest.approx(2 * 1.88, rel=1e-12)
    T = np.array([100.0, 300.0, 1000.0])
    mu = 0.5 * ar.masses_amu[0] * AMU
    expected = math.pi * (3.76e-10) ** 2 * np.sqrt(8 * sc.k * T / (math.pi * mu))
    k, model = capture_rate_m3_s(ar, ar, T)
    np.testing.assert_allclose(k, expected, rtol=1e-12)
    assert model == HARD_SPHERE_MODEL
    assert 1e-10 < k[1] * 1e6 < 1e-9          # the gas-kinetic magnitude, cm3 molecule-1 s-1


def test_lennard_jones_parameters_are_used_when_both_reactants_have_them():
    """Ar-Ar with sigma 3.33 A, eps/k 136.5 K (GRI-Mech 3.0 transport data, as shipped with Cantera):
    above the well (T >> eps/k) the rate approaches the hard-sphere value of sigma, within Omega(2,2)*."""
    lj = argon(lennard_jones=(3.33, 136.5))
    k, model = capture_rate_m3_s(lj, lj, [3000.0])
    mu = 0.5 * lj.masses_amu[0] * AMU
    hard = math.pi * (3.33e-10) ** 2 * math.sqrt(8 * sc.k * 3000.0 / (math.pi * mu))
    assert model == LENNARD_JONES_MODEL
    assert 0.7 < k[0] / hard < 1.0             # Omega(2,2)* at T* = 22 is about 0.8 (Neufeld et al. 1972)


def test_series_combination_and_flags():
    ar = argon()
    T = np.array([200.0, 300.0])
    cap, _ = capture_rate_m3_s(ar, ar, T)
    lim = capture_limit("x", ar, ar, T, [cap[0] * 1e-3, cap[1] * 1e3])
    np.testing.assert_array_equal(lim.exceeded, [False, True])
    np.testing.assert_allclose(lim.k_series_m3_per_s, 1 / (1 / lim.k_tst_m3_per_s + 1 / cap), rtol=1e-14)
    assert lim.k_series_m3_per_s[1] < cap[1]  # never above the ceiling


def test_a_submerged_barrier_is_said_and_capped():
    """Lowering the bimolecular toy channel's TS far below its reactants makes TST exceed any collision
    rate; the study step says so and gives the capped value."""
    study = read_study(DATA / "toy" / "study.toml")
    ch = next(c for c in study.channels if c.order == 2)
    ts = study.species[ch.transition_state]
    from tstrate.physics.tst import zpe_level_J_per_mol

    sp = dict(study.species)
    # the zero-point level of the TS 20 kJ/mol below the separated reactants
    shift = sum(zpe_level_J_per_mol(sp[n]) for n in ch.reactants) - 20e3 - zpe_level_J_per_mol(ts)
    sp[ch.transition_state] = dataclasses.replace(ts, energy_J_per_mol=ts.energy_J_per_mol + shift)
    low = dataclasses.replace(study, species=sp)
    rates = study_rates(low, temperature_K=[50.0, 300.0])
    (lim,), warnings = capture_limits(low, rates)
    assert lim.exceeded.all() and any("exceeds the capture limit" in w for w in warnings)
    assert np.all(lim.k_series_m3_per_s <= lim.k_capture_m3_per_s)
    normal = capture_limits(study, study_rates(study, temperature_K=[300.0]))
    assert normal[1] == [] and not normal[0][0].exceeded.any()
