"""k(E) by inverse Laplace transform of a modified-Arrhenius k_inf(T).

Independent checks:
* the canonical (Boltzmann) average of k(E) reproduces the k_inf(T) it was made from, for n = 0,
  n > 0, n < 0 and Ea = 0 (Robinson and Holbrook 1972, ch. 3: k_inf Q = L[k rho]);
* for n = 0, k(E) = A rho(E - Ea) / rho(E) (Forst, Unimolecular Reactions 2003, eq. 8.9), with
  rho from the Whitten-Rabinovitch formula (an approximation independent of the direct count);
* the association form against its closed form for two atoms (rho of the pair a delta
  function: k rho = A C (E - D0)^(n + 1/2) / Gamma(n + 3/2));
* the association form against detailed balance, k_diss,inf = k_assoc,inf / Kc, with Kc from the
  canonical partition functions of :mod:`tstrate.physics.thermo` (a separate code path).
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from scipy.special import gamma

from tstrate.errors import InputError
from tstrate.io.species import build_species, read_species
from tstrate.physics.falloff import high_pressure_limit
from tstrate.physics.inverse_laplace import (ModifiedArrhenius, association_ilt, fractional_integral_weights,
                                             unimolecular_ilt)
from tstrate.physics.states import CM1_J_PER_MOL, Rotor, count_states, whitten_rabinovitch
from tstrate.units import H, N_A, R

#: irregular wavenumbers of a 12-mode molecule (no common divisor with the grain; see NOTES)
FREQS = [312.7, 487.1, 813.9, 1096.3, 1417.2, 2987.5, 3102.6, 1633.4, 905.2, 1187.8, 655.3, 1312.9]
T = np.array([200.0, 300.0, 500.0, 1000.0])
OH_SO2 = Path(__file__).resolve().parents[2] / "molecules" / "oh_so2"


def _dense_states(grain_cm1=10.0):
    # a 2-D and a 1-D classical rotor make every grain hold states, as in an energised molecule
    return count_states(FREQS, 60000 * CM1_J_PER_MOL, grain_cm1=grain_cm1,
                        rotors=[Rotor(0.2, 1, 2), Rotor(1.5, 1, 1)])


@pytest.mark.parametrize("n, ea_kJ, tol", [
    (0.0, 0.0, 1e-12),       # k(E) = A exactly
    (0.0, 100.0, 3e-4),      # a shift by Ea (between grains: second order in grain/RT)
    (1.3, 50.0, 6e-4),
    (2.0, 0.0, 6e-4),
    (-0.5, 80.0, 1.2e-3),    # fractional derivative
    (-0.9, 50.0, 1.5e-3),
])
def test_unimolecular_canonical_average_reproduces_k_inf(n, ea_kJ, tol):
    k_inf = ModifiedArrhenius(1e13, n, ea_kJ * 1e3, 300.0)
    rate = unimolecular_ilt(_dense_states(), k_inf)
    assert np.allclose(high_pressure_limit(rate, T) / k_inf.rate(T), 1.0, rtol=tol, atol=0)


def test_negative_exponent_without_barrier_converges_with_the_grain():
    # n < 0 with Ea = 0: the lowest state's share is misplaced by a fraction of a grain, an error of
    # order (grain/RT)^(1+n) (documented); it must shrink as the grain is refined
    k_inf = ModifiedArrhenius(1e13, -0.5, 0.0, 300.0)
    errors = [abs(high_pressure_limit(unimolecular_ilt(_dense_states(g), k_inf), [300.0])[0]
                  / k_inf.rate([300.0])[0] - 1.0) for g in (20.0, 10.0, 5.0)]
    assert errors[0] > errors[1] > errors[2]
    assert errors[2] < 0.04


def test_n_zero_is_a_density_ratio_against_whitten_rabinovitch():
    sc = count_states(FREQS, 60000 * CM1_J_PER_MOL, grain_cm1=10.0)
    ea = 800 * sc.grain_J_per_mol      # a whole number of grains: k(E_i) = A counts[i-800] / counts[i]
    rate = unimolecular_ilt(sc, ModifiedArrhenius(2.5e13, 0.0, ea, 300.0))
    # compare at energies where the grains are dense, averaged over 200 grains (the count is lumpy)
    lo, hi = 2500, 2700
    e = sc.energies_J_per_mol
    k_mean = np.sum(rate.rate_per_s[lo:hi] * sc.counts[lo:hi]) / np.sum(sc.counts[lo:hi])
    _, rho_wr = whitten_rabinovitch(FREQS, e[lo:hi])
    _, rho_wr_low = whitten_rabinovitch(FREQS, e[lo:hi] - ea)
    expected = 2.5e13 * np.sum(rho_wr_low) / np.sum(rho_wr)
    assert k_mean == pytest.approx(expected, rel=0.02)   # Whitten-Rabinovitch: about 1 % (their claim)


def test_weights_generate_the_laplace_transform():
    # sum_m w_m exp(-E_m/RT) g = (RT)^p exp(-offset/RT) to second order in g/RT
    g = 10 * CM1_J_PER_MOL
    for p, off in ((2.5, 0.0), (4.2, 1234.5), (0.0, 3.3 * g), (-0.4, 10.4 * g)):
        w = fractional_integral_weights(20000, g, p, off)
        for t in (200.0, 300.0):
            lhs = np.sum(w * np.exp(-np.arange(w.size) * g / (R * t))) * g
            assert lhs == pytest.approx((R * t) ** p * math.exp(-off / (R * t)), rel=2e-3)


def test_order_below_minus_one_is_refused():
    with pytest.raises(InputError, match="order above -1"):
        unimolecular_ilt(_dense_states(), ModifiedArrhenius(1e13, -1.2, 5e4, 300.0))


def _atom(name, symbol, energy_kJ):
    return build_species(name, [symbol], np.zeros((1, 3)), energy_J_per_mol=energy_kJ * 1e3,
                         multiplicity=1, frequencies_cm1=[])


def _diatomic(name, r_A, freq, energy_kJ):
    return build_species(name, ["Ar", "Ar"], np.array([[0, 0, 0], [0, 0, r_A]]), frequencies_cm1=[freq],
                         energy_J_per_mol=energy_kJ * 1e3)


def test_atom_pair_against_the_closed_form():
    # two structureless atoms (singlets here) -> a diatomic whose rotation is a spectator: order
    # p = n + 3/2 - 1 and k rho = A C (E - D0)^(p-1) / Gamma(p), C = (2 pi mu/(h^2 N_A))^(3/2)
    # (R T0)^-n / C_rot(diatomic)
    cl2 = _diatomic("Ar2*", 1.988, 559.7, -240.0)   # a model diatomic, bound like Cl2
    a, b = _atom("Ar", "Ar", 0.0), _atom("Ar", "Ar", 0.0)
    k_inf = ModifiedArrhenius(3e-17, 0.6, 0.0, 300.0)
    model = association_ilt(cl2, (a, b), k_inf, grain_cm1=5.0, rotation="spectator")
    from tstrate.physics.inverse_laplace import classical_rotor_part

    d, ln_rot = classical_rotor_part(cl2)
    mu = a.mass_kg / 2.0
    c = (2 * math.pi * mu / (H**2 * N_A)) ** 1.5 * math.exp(-ln_rot) * (R * 300.0) ** -0.6
    rate = model.rate
    e = rate.energies_J_per_mol
    d0 = model.well_depth_J_per_mol
    i = np.flatnonzero((e > d0 + 5000) & (rate.reactant.counts > 0))
    flux = rate.rate_per_s[i] * rate.reactant.density_per_J_per_mol[i]
    p = k_inf.n + 1.5 - 1.0
    assert d == 2.0 and model.order == pytest.approx(p)
    expected = 3e-17 * c * (e[i] - d0) ** (p - 1) / gamma(p)
    assert np.allclose(flux, expected, rtol=2e-3)


@pytest.mark.parametrize("rotation", ["active", "k_active", "spectator"])
def test_association_obeys_detailed_balance_with_canonical_kc(rotation):
    adduct = read_species(OH_SO2 / "hoso2.toml")
    oh, so2 = read_species(OH_SO2 / "oh.toml"), read_species(OH_SO2 / "so2.toml")
    # what is left is the rounding of each wavenumber to the grain in the state counts (about 0.7 %
    # at 10 cm-1, 3e-4 at 1 cm-1, the same for every n): the transform itself adds nothing visible
    t = np.array([200.0, 250.0, 300.0, 400.0])
    for n, grain, tol in ((0.2, 10.0, 1e-2), (0.2, 1.0, 5e-4), (-1.0, 1.0, 5e-4)):
        k_inf = ModifiedArrhenius(1.7e-18, n, 0.0, 300.0)
        model = association_ilt(adduct, (oh, so2), k_inf, grain_cm1=grain, rotation=rotation,
                                energy_above_threshold_cm1=10000.0)
        k_diss = model.high_pressure_dissociation_per_s(t)
        kc = np.exp(model.ln_equilibrium_constant_m3(t))
        assert np.allclose(k_diss * kc / k_inf.rate(t), 1.0, rtol=tol), (n, grain, k_diss * kc / k_inf.rate(t))


def test_activation_distribution_starts_at_the_threshold():
    adduct = read_species(OH_SO2 / "hoso2.toml")
    oh, so2 = read_species(OH_SO2 / "oh.toml"), read_species(OH_SO2 / "so2.toml")
    model = association_ilt(adduct, (oh, so2), ModifiedArrhenius(1.7e-18, 0.2), grain_cm1=10.0)
    f = model.activation_distribution([250.0])[0]
    e = model.rate.energies_J_per_mol
    assert f.sum() == pytest.approx(1.0)
    assert f[e < model.well_depth_J_per_mol - 2 * model.rate.grain_J_per_mol].sum() == 0.0
    # mean energy above D0: of order (p + 1) RT for a flux growing like (E - D0)^p ... times Boltzmann
    mean = (f * (e - model.well_depth_J_per_mol)).sum()
    assert 2 * R * 250 < mean < 8 * R * 250


@pytest.mark.parametrize("rotation", ["active", "k_active", "spectator"])
def test_free_internal_rotor_of_the_adduct_stays_active(tmp_path, rotation):
    # the OH torsion of HOSO2 as a free rotor (moment of OH about the S-O axis, about 0.85 u A^2,
    # assumed): detailed balance must still hold, whatever the overall rotation does
    path = tmp_path / "hoso2_rotor.toml"
    path.write_text((OH_SO2 / "hoso2.toml").read_text()
                    + "\n[[free_rotors]]\nreplaces_cm1 = 262.0\nsymmetry_number = 1\nreduced_moment_amu_A2 = 0.85\n")
    adduct = read_species(path)
    oh, so2 = read_species(OH_SO2 / "oh.toml"), read_species(OH_SO2 / "so2.toml")
    k_inf = ModifiedArrhenius(1.7e-18, 0.2, 0.0, 300.0)
    model = association_ilt(adduct, (oh, so2), k_inf, grain_cm1=2.0, rotation=rotation,
                            energy_above_threshold_cm1=6000.0)
    t = np.array([200.0, 300.0])
    kc = np.exp(model.ln_equilibrium_constant_m3(t))
    assert np.allclose(model.high_pressure_dissociation_per_s(t) * kc / k_inf.rate(t), 1.0, rtol=2e-3)
