"""A published termolecular association: OH + SO2 + N2 -> HOSO2, against the evaluated k0.

Inputs (sources in molecules/oh_so2/README.md): OH and SO2 experimental constants (NIST CCCBDB),
HOSO2 at B3LYP/def2-SVP (made for this example), D0 = 110.5 kJ/mol (Blitz, Hughes and Pilling
2003; from memory), the evaluated k_inf = 1.7e-12 (T/300)^0.2 cm3 molecule-1 s-1 as the
inverse-Laplace input, <Delta E>down = 250 cm-1 in N2 (common practice, assumed).

Reference: JPL Publication 19-5 (Burkholder et al. 2019), k0 = 2.9e-31 (T/300)^-4.1 cm6
molecule-2 s-1 in N2 (the value the issue quotes). Target: a factor of 3.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from tstrate.io.species import read_species
from tstrate.physics import collisions as coll
from tstrate.physics.association import association_falloff
from tstrate.physics.inverse_laplace import ModifiedArrhenius, association_ilt
from tstrate.physics.states import CM1_J_PER_MOL
from tstrate.physics.unimolecular import reactant_parameters

OH_SO2 = Path(__file__).resolve().parents[2] / "molecules" / "oh_so2"
T = np.array([200.0, 250.0, 300.0])
#: JPL 19-5, OH + SO2 + M -> HOSO2, k0 in N2 [cm6 molecule-2 s-1 -> m6]
JPL_K0_M6 = 2.9e-31 * (T / 300.0) ** -4.1 * 1e-12
#: JPL 19-5 k_inf [cm3 molecule-1 s-1 -> m3]: 1.7e-12 (T/300)^0.2
JPL_KINF = ModifiedArrhenius(1.7e-18, 0.2, 0.0, 300.0)
DELTA_E_DOWN = 250.0 * CM1_J_PER_MOL     # common practice for N2, assumed


@pytest.fixture(scope="module")
def species():
    return tuple(read_species(OH_SO2 / f) for f in ("hoso2.toml", "oh.toml", "so2.toml"))


def _falloff(species, rotation, method="master_equation", m=(1e21,)):
    adduct, oh, so2 = species
    model = association_ilt(adduct, (oh, so2), JPL_KINF, grain_cm1=20.0, rotation=rotation,
                            energy_above_threshold_cm1=8000.0)
    z = coll.pair_collision_rate_m3_s(T, reactant_parameters(adduct), "N2")
    return association_falloff(model, T, list(m), collision_rate_m3_s=z, delta_E_down_J_per_mol=DELTA_E_DOWN,
                               method=method)


@pytest.fixture(scope="module")
def me_results(species):
    return {rot: _falloff(species, rot) for rot in ("active", "k_active", "spectator")}


def test_k0_of_oh_so2_within_a_factor_of_three_of_jpl(me_results):
    # measured ratios (this data set): 0.86, 1.06, 1.23 at 200, 250, 300 K. The computed k0 falls
    # as T^-3.3 against JPL's T^-4.1; no anharmonicity or centrifugal barrier is in the model
    ratio = me_results["k_active"].k0_m6_per_s / JPL_K0_M6
    assert np.all(ratio > 1 / 3) and np.all(ratio < 3), ratio


def test_the_rotation_bounds_bracket_the_evaluation(me_results):
    # all rotational energy available (active) overstates k0, none (spectator) understates it
    assert np.all(me_results["active"].k0_m6_per_s > JPL_K0_M6)
    assert np.all(me_results["spectator"].k0_m6_per_s < JPL_K0_M6)
    assert np.all(me_results["active"].k0_m6_per_s > me_results["k_active"].k0_m6_per_s)
    assert np.all(me_results["k_active"].k0_m6_per_s > me_results["spectator"].k0_m6_per_s)


def test_high_pressure_limit_is_the_input(me_results):
    # the grain-rounded state counts leave k_inf about 1 % low at a 20 cm-1 grain
    for fo in me_results.values():
        assert np.allclose(fo.k_inf_m3_per_s / JPL_KINF.rate(T), 1.0, rtol=0.015)


@pytest.mark.parametrize("rotation", ["k_active", "spectator"])
def test_master_equation_k0_against_troe_weak_collision_efficiency(species, me_results, rotation):
    # Troe (J. Chem. Phys. 66, 4745 (1977)): beta_c from <Delta E>down and F_E times the strong-collision
    # k0; the issue asks for 20 %. (With the adduct's whole rotation active the density rises so
    # steeply at low energy that the exponential-down kernel cannot be normalised there, and the
    # two differ by 20-30 %; that case is not checked here.)
    sc = _falloff(species, rotation, method="strong_collision")
    assert np.allclose(me_results[rotation].k0_m6_per_s / sc.k0_m6_per_s, 1.0, rtol=0.2)


def test_master_equation_rises_to_k_inf_at_high_pressure(species):
    # the near-threshold k(E) of a loose channel is small, so the limit is reached only at very high
    # [M]: at 1e30 m^-3 within 1e-4 (the strong-collision sum, a separate code path, agrees)
    fo = _falloff(species, "k_active", m=(1e22, 1e26, 1e30))
    k = fo.rate_m3_per_s
    assert np.all(np.diff(k, axis=1) > 0)
    assert np.allclose(k[:, 2] / fo.k_inf_m3_per_s, 1.0, rtol=1e-4)


def test_chemical_activation_stabilisation_is_the_falloff_ratio(species):
    # without product channels, the stabilised share of hot adducts formed from A + B is
    # k_assoc(T, [M]) / k_inf(T) (detailed balance between the chemically activated entry and
    # thermal dissociation; e.g. Holbrook, Pilling and Robertson 1996, ch. 9): the prompt/stabilised
    # split of the entry distribution against the thermal rate coefficient
    from tstrate.physics.association import chemical_activation

    adduct, oh, so2 = species
    model = association_ilt(adduct, (oh, so2), JPL_KINF, grain_cm1=20.0, rotation="k_active",
                            energy_above_threshold_cm1=8000.0)
    t = 250.0
    z = float(coll.pair_collision_rate_m3_s([t], reactant_parameters(adduct), "N2")[0])
    for m in (3e23, 3e25):
        ca = chemical_activation(model, t, m, collision_rate_m3_s=z, delta_E_down_J_per_mol=DELTA_E_DOWN)
        fo = association_falloff(model, [t], [m], collision_rate_m3_s=z, delta_E_down_J_per_mol=DELTA_E_DOWN,
                                 method="master_equation")
        assert ca.prompt_fraction.sum() + ca.stabilised_fraction == pytest.approx(1.0, abs=1e-9)
        # measured: equal to 1e-12; the split was also checked by BDF time integration (0.0579 at 3e23)
        assert ca.stabilised_fraction == pytest.approx(fo.rate_m3_per_s[0, 0] / fo.k_inf_m3_per_s[0], rel=1e-6)


def test_chemical_activation_with_a_product_channel_shares_the_prompt_flux(species):
    from tstrate.physics.association import chemical_activation

    adduct, oh, so2 = species
    model = association_ilt(adduct, (oh, so2), JPL_KINF, grain_cm1=20.0, rotation="k_active",
                            energy_above_threshold_cm1=8000.0)
    e = model.rate.energies_J_per_mol
    k_prod = np.where(e > 0.9 * model.well_depth_J_per_mol, 1e9, 0.0)    # a model exit below D0
    z = float(coll.pair_collision_rate_m3_s([250.0], reactant_parameters(adduct), "N2")[0])
    ca = chemical_activation(model, 250.0, 3e24, collision_rate_m3_s=z, delta_E_down_J_per_mol=DELTA_E_DOWN,
                             product_rates_per_s={"HOSO2 -> P": k_prod})
    assert ca.channels[1] == "HOSO2 -> P"
    assert ca.prompt_fraction[1] > 0
    assert ca.prompt_fraction.sum() + ca.stabilised_fraction == pytest.approx(1.0, abs=1e-9)


def test_chemical_activation_split_against_time_integration(species):
    # independent of the eigen-decomposition: integrate dn/dt = M n from the entry distribution with
    # scipy's stiff BDF solver; after relaxation (t = 200 collisions, long before thermal dissociation)
    # what is left in the well is the stabilised fraction
    from scipy.integrate import solve_ivp

    from tstrate.physics import master_equation as me
    from tstrate.physics.association import chemical_activation

    adduct, oh, so2 = species
    model = association_ilt(adduct, (oh, so2), JPL_KINF, grain_cm1=50.0, rotation="k_active",
                            energy_above_threshold_cm1=5000.0)        # a small grid: the dense BDF is O(n^3)
    t, m = 250.0, 3e24
    z = float(coll.pair_collision_rate_m3_s([t], reactant_parameters(adduct), "N2")[0])
    ca = chemical_activation(model, t, m, collision_rate_m3_s=z, delta_E_down_J_per_mol=DELTA_E_DOWN)
    well = me.Well("HOSO2", model.rate.reactant.counts, collision_frequency_per_s=z * m,
                   delta_E_down_J_per_mol=DELTA_E_DOWN)
    system = me.MasterEquation(model.rate.grain_J_per_mol, (well,),
                               (me.Reaction("back", "HOSO2", None, np.asarray(model.rate.rate_per_s)),))
    rm = me.rate_matrix(system, t)
    a = rm.dense()
    a = a if a.sum(axis=0).mean() < 0 else -a          # the generator M (columns sum to minus the loss)
    n0 = me.initial_vector(system, rm, "HOSO2", ca.entry)
    sol = solve_ivp(lambda _, y: a @ y, (0.0, 200.0 / (z * m)), n0, method="BDF", jac=a, rtol=1e-10, atol=1e-14)
    assert sol.y[:, -1].sum() == pytest.approx(ca.stabilised_fraction, rel=1e-4)
