"""Conformer ensembles (tstrate.physics.ensembles) and multi-conformer TST (tstrate.physics.tst).

References outside the ensemble code:
- the rate of an ensemble channel against the explicit sum over separate conformer channels, each
  computed as an ordinary one-structure channel, with the populations written out here from the
  Boltzmann distribution (x_i = q_i exp(-E0_i/RT) / sum_j q_j exp(-E0_j/RT));
- H, S and Cp of an ensemble against finite differences of ln q_ens (H = R T^2 d ln q/dT at constant
  pressure, S - S_ref = R ln(q/q_ref) + (H - H_ref)/T, Cp = dH/dT), an independent numerical route;
- the textbook limit of two identical, equally populated wells: q doubles, S gains R ln 2
  (the entropy of mixing of two equally likely states), Cp is unchanged.
"""

from pathlib import Path

import numpy as np
import pytest

from tstrate.errors import InputError
from tstrate.io.species import read_species
from tstrate.model import Channel
from tstrate.physics.ensembles import (build_ensemble, conformer_populations, ensemble_parts,
                                       relative_zpe_levels_J_per_mol)
from tstrate.physics.thermo import ln_partition_function_per_volume, thermochemistry
from tstrate.physics.tst import channel_rates, zpe_level_J_per_mol
from tstrate.units import R

REFINED = Path(__file__).resolve().parents[2] / "molecules" / "carbonic_acid" / "refined"
T = np.array([150.0, 200.0, 250.0, 300.0, 600.0])


@pytest.fixture(scope="module")
def demo():
    sp = {n: read_species(REFINED / f) for n, f in
          (("cc", "h2co3.toml"), ("ct", "h2co3_cis_trans.toml"), ("ts", "ts_bare.toml"), ("co2", "co2.toml"),
           ("h2o", "h2o.toml"), ("pcx", "co2_h2o_complex.toml"))}
    # a second, made-up TS conformer: 3 kJ/mol higher, softer, another imaginary frequency, and chiral
    # (two optical isomers), so that its own energy, modes and symmetry count must all enter
    ts = sp["ts"]
    f = np.array(ts.frequencies_cm1)
    f[f > 0] *= 0.97
    f[f < 0] *= 0.9
    sp["ts2"] = ts.with_changes(energy_J_per_mol=ts.energy_J_per_mol + 3.0e3, frequencies_cm1=f,
                                optical_isomers=2, hessian_J_per_m2=None)
    return sp


def _explicit_population(members, i):
    """x_i from the members' own partition functions and ZPE-inclusive energies."""
    a = np.array([ln_partition_function_per_volume(m, T) - zpe_level_J_per_mol(m) / (R * T) for m in members])
    return np.exp(a[i] - np.logaddexp.reduce(a, axis=0))


@pytest.mark.parametrize("tunnelling", ["none", "wigner", "eckart"])
def test_an_ensemble_channel_is_the_sum_over_its_conformer_channels(demo, tunnelling):
    species = dict(demo)
    species["H2CO3"] = build_ensemble("H2CO3", [("cis_cis", demo["cc"]), ("cis_trans", demo["ct"])])
    species["TS"] = build_ensemble("TS", [("a", demo["ts"]), ("b", demo["ts2"])])
    assert species["H2CO3"].conformer_label == "cis_cis"  # the lower one is the reference
    ens = channel_rates(Channel("ens", ("H2CO3",), "TS", ("co2", "h2o"), tunnelling=tunnelling,
                                product_complex="pcx"), species, T)

    def one(reactant, ts):
        return channel_rates(Channel("one", (reactant,), ts, ("co2", "h2o"), tunnelling=tunnelling,
                                     product_complex="pcx"), demo, T)

    # pool rate: -d[pool]/dt = sum_j k(ct -> TS_j) [ct], [ct] = x_ct [pool], each TS counted from the
    # conformer it connects to (the bare TS falls into cis-trans H2CO3, its [provenance] says; the
    # made-up second TS keeps that provenance): the Eckart V1 rises from that well
    x_ct = _explicit_population([demo["cc"], demo["ct"]], 1)
    explicit = x_ct * (one("ct", "ts").k + one("ct", "ts2").k)
    np.testing.assert_allclose(ens.k, explicit, rtol=1e-6)
    assert ens.tunnelling_well_conformer == "cis_trans"
    x_cc = _explicit_population([demo["cc"], demo["ct"]], 0)
    if tunnelling != "eckart":
        # without a barrier-dependent tunnelling factor, each conformer gives the same pool rate
        np.testing.assert_allclose(ens.k, x_cc * (one("cc", "ts").k + one("cc", "ts2").k), rtol=1e-6)
    else:
        # with Eckart, counting from cis-cis would tunnel from below the well the TS rises from: more
        # deep tunnelling at atmospheric temperatures (T <= 300 K here)
        from_cc = x_cc * (one("cc", "ts").k + one("cc", "ts2").k)
        assert np.all(from_cc[T <= 300] > 1.01 * ens.k[T <= 300])
    shares = ens.ts_conformer_shares
    np.testing.assert_allclose(shares["b"], x_ct * one("ct", "ts2").k / ens.k, rtol=1e-6)
    np.testing.assert_allclose(shares["a"] + shares["b"], 1.0, rtol=1e-12)
    # equilibrium constant and the reverse rate by detailed balance
    np.testing.assert_allclose(np.exp(ens.ln_kc), x_cc * np.exp(one("cc", "ts").ln_kc), rtol=1e-6)
    # the reverse rate (from the products) knows nothing of the reactant's conformers: the sum over TSs
    np.testing.assert_allclose(ens.k_reverse, one("ct", "ts").k_reverse + one("ct", "ts2").k_reverse, rtol=1e-6)


def test_ensemble_thermochemistry_matches_finite_differences_of_ln_q(demo):
    ens = build_ensemble("H2CO3", [("cis_cis", demo["cc"]), ("cis_trans", demo["ct"])])
    members = [demo["cc"], demo["ct"]]
    e0 = [zpe_level_J_per_mol(m) for m in members]

    def ln_q(t):  # ln q_ens from the reference's zero-point level, total (standard volume)
        t = np.atleast_1d(t)
        return np.logaddexp.reduce([thermochemistry(m, t).ln_q_total - (e - e0[0]) / (R * t)
                                    for m, e in zip(members, e0)], axis=0)

    def h(t):  # H - H(0) = R T^2 d ln q / dT with q at constant pressure (translation in kT/p)
        d = 1e-3 * t
        return R * t**2 * (ln_q(t + d) - ln_q(t - d)) / (2 * d)

    th = thermochemistry(ens, T)
    ref = thermochemistry(demo["cc"], T)
    np.testing.assert_allclose(th.ln_q_total, ln_q(T), rtol=1e-12)
    np.testing.assert_allclose(th.enthalpy_increment_J_per_mol, h(T), rtol=1e-6)
    # S - S_ref = R (ln q - ln q_ref) + (H - H_ref)/T: the convention-dependent constants cancel
    ds = R * (ln_q(T) - ref.ln_q_total) + (h(T) - ref.enthalpy_increment_J_per_mol) / T
    # atol: the finite-difference error of H (about 1e-6 of it) divided by T
    np.testing.assert_allclose(th.entropy_J_per_mol_K - ref.entropy_J_per_mol_K, ds, rtol=1e-5, atol=1e-4)
    d = 1e-2 * T
    np.testing.assert_allclose(th.heat_capacity_J_per_mol_K, (h(T + d) - h(T - d)) / (2 * d), rtol=1e-4)
    # the per-volume q of TST and equilibrium constants is the ensemble's too
    np.testing.assert_allclose(ln_partition_function_per_volume(ens, T) - ln_partition_function_per_volume(
        demo["cc"], T), ln_q(T) - ref.ln_q_total, rtol=1e-12)


def test_two_identical_wells_double_q_and_add_R_ln_2(demo):
    """Textbook limit: two identical, equally populated wells (e.g. the mirror-image gauche pair of a
    chain counted as two conformers instead of through optical_isomers = 2)."""
    cc = demo["cc"]
    ens = build_ensemble("X", [("a", cc), ("b", cc)])
    th, one = thermochemistry(ens, T), thermochemistry(cc, T)
    np.testing.assert_allclose(th.ln_q_total - one.ln_q_total, np.log(2.0), rtol=1e-12)
    np.testing.assert_allclose(th.entropy_J_per_mol_K - one.entropy_J_per_mol_K, R * np.log(2.0), rtol=1e-10)
    np.testing.assert_allclose(th.heat_capacity_J_per_mol_K, one.heat_capacity_J_per_mol_K, rtol=1e-10)
    np.testing.assert_allclose(conformer_populations(ens, T), 0.5, rtol=1e-12)
    # the same as counting the second well through the optical isomers
    two = cc.with_changes(optical_isomers=2)
    np.testing.assert_allclose(th.entropy_J_per_mol_K, thermochemistry(two, T).entropy_J_per_mol_K, rtol=1e-10)


def test_populations_follow_the_energies_and_symmetry_numbers(demo):
    ens = build_ensemble("H2CO3", [("cis_trans", demo["ct"]), ("cis_cis", demo["cc"])])
    parts = ensemble_parts(ens, T)
    assert parts.labels == ("cis_cis", "cis_trans")
    assert relative_zpe_levels_J_per_mol(ens)[1] > 0
    # cis-cis (C2v, sigma 2) against cis-trans (Cs, sigma 1): the explicit Boltzmann ratio
    np.testing.assert_allclose(parts.populations[1], _explicit_population([demo["cc"], demo["ct"]], 1), rtol=1e-10)
    assert np.all(np.diff(parts.populations[1]) > 0)  # the upper conformer gains with T
    np.testing.assert_allclose(parts.populations.sum(axis=0), 1.0, rtol=1e-12)


def test_ensembles_refuse_members_of_other_atoms_or_without_energies(demo):
    with pytest.raises(InputError, match="other atoms"):
        build_ensemble("X", [("a", demo["cc"]), ("b", demo["h2o"])])
    with pytest.raises(InputError, match="kind"):
        build_ensemble("X", [("a", demo["ts"]), ("b", demo["ts"].with_changes(kind="minimum",
                                                                              frequencies_cm1=np.abs(
                                                                                  demo["ts"].frequencies_cm1),
                                                                              hessian_J_per_m2=None))])
    with pytest.raises(ValueError, match="repeat"):
        build_ensemble("X", [("a", demo["cc"]), ("a", demo["ct"])])
    with pytest.raises(ValueError, match="no electronic energy"):
        build_ensemble("X", [("a", demo["cc"]), ("b", demo["ct"].with_changes(energy_J_per_mol=None))])
