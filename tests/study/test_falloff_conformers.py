"""Falloff with a conformer-ensemble reactant (tstrate.physics.unimolecular._ensemble_counts): the
energised molecule's density is the sum of its conformers' densities, each shifted by its E0 and
weighted by n_i/sigma_i. The check: k_inf from k(E) against canonical TST of the same ensemble
(tstrate.physics.tst, an independent route through the partition functions): the ensemble's
k_inf / k_TST stays that of the one-structure channel, whose ratio the grain alone sets
(test_falloff_study.py)."""

import dataclasses
from pathlib import Path

import numpy as np
import pytest
from scipy.constants import N_A, c as c_light, h

from tstrate.io.study import read_study
from tstrate.physics.ensembles import build_ensemble
from tstrate.study.falloff import study_falloff

pytestmark = pytest.mark.fitting

DATA = Path(__file__).resolve().parents[1] / "data" / "falloff"


def _k_ratio(study):
    cf = next(c for c in study_falloff(study).channels if c.name == "bare")
    return cf.k_high_pressure_per_s / cf.canonical_tst_per_s, cf


@pytest.mark.parametrize("shift_kJ, symmetry", [(2.3, 1), (0.0, 2), (7.77, 1)])
def test_ensemble_k_inf_follows_the_ensemble_tst(shift_kJ, symmetry):
    study = read_study(DATA / "study.toml")
    h2co3 = study.species["H2CO3"]
    # a second conformer: softer modes (kept on the 10 cm-1 grid, as the test study's, so that the
    # grain error of k_inf is that of the one-structure channel), another symmetry number, and E0
    # shift_kJ above the first (off the grid: the shift is split between two grains)
    freqs = np.round(np.array(h2co3.frequencies_cm1) * 0.93 / 10) * 10
    zpe_drop = 0.5 * (np.sum(h2co3.frequencies_cm1) - np.sum(freqs)) * 100 * h * c_light * N_A
    other = h2co3.with_changes(frequencies_cm1=freqs, symmetry_number=symmetry,
                               energy_J_per_mol=h2co3.energy_J_per_mol + zpe_drop + shift_kJ * 1e3)
    ens = build_ensemble("H2CO3", [("a", h2co3), ("b", other)])
    assert ens.conformer_label == "a" and ens.conformers  # both members kept
    species = dict(study.species, H2CO3=ens)
    ens_study = dataclasses.replace(study, species=species)
    single, _ = _k_ratio(study)
    ratio, cf = _k_ratio(ens_study)
    # the conformer moves canonical TST by tens of per cent ...
    base = next(c for c in study_falloff(study).channels if c.name == "bare").canonical_tst_per_s
    assert np.max(np.abs(cf.canonical_tst_per_s / base - 1)) > 0.1
    # ... and k_inf follows it: the split shift errs at second order in grain/kT, f(1-f)/2 (hc 10 cm-1
    # / kT)^2 <= 6.5e-4 of the second conformer's weight at 200 K
    np.testing.assert_allclose(ratio, single, rtol=3e-4)


def test_a_transition_state_ensemble_in_k_of_e_follows_multi_conformer_tst():
    """The same for a TS ensemble (no tunnelling): two TS conformers, the second 1.7 kJ/mol higher
    with softer modes on the grid and two optical isomers."""
    study = read_study(DATA / "study.toml")
    ts = study.species["TS_bare"]
    f = np.array(ts.frequencies_cm1)
    f[f > 0] = np.round(f[f > 0] * 0.95 / 10) * 10
    zpe_drop = 0.5 * (np.sum(ts.frequencies_cm1[ts.frequencies_cm1 > 0]) - np.sum(f[f > 0])) * 100 * h * c_light * N_A
    other = ts.with_changes(frequencies_cm1=f, optical_isomers=2, hessian_J_per_m2=None,
                            energy_J_per_mol=ts.energy_J_per_mol + zpe_drop + 1.7e3)
    ens = build_ensemble("TS_bare", [("a", ts), ("b", other)])
    ens_study = dataclasses.replace(study, species=dict(study.species, TS_bare=ens))
    single, base = _k_ratio(study)
    ratio, cf = _k_ratio(ens_study)
    assert np.max(cf.canonical_tst_per_s / base.canonical_tst_per_s) > 1.5
    np.testing.assert_allclose(ratio, single, rtol=3e-4)
