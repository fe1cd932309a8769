"""Study-level falloff (tstrate.study.falloff, on tstrate.physics.unimolecular) on the invented carbonic-acid test study.

The pure physics (state counts, RRKM, strong-collision sums, Troe forms) is tested in
test_states.py, test_rrkm.py and test_falloff.py; here: that a study channel is turned into
the right k(E) (barrier, degeneracy, rotors, tunnelling) and the right grid, checked against
canonical TST (tstrate.physics.tst.channel_rates) and the strong-collision limits.
"""

import dataclasses
import math
from pathlib import Path

import numpy as np
import pytest
from scipy.constants import N_A, c as c_light, h, k as kB, physical_constants

from tstrate.errors import InputError
from tstrate.io.study import read_study
from tstrate.model.settings import FalloffSettings
from tstrate.physics.unimolecular import rotational_constants_cm1, split_rotation, unimolecular_model
from tstrate.study.falloff import bath_parameters, channel_falloff, channel_model, study_falloff

pytestmark = pytest.mark.fitting     # rerun by .ci/run with 1 and 2 BLAS threads

DATA = Path(__file__).resolve().parents[1] / "data" / "falloff"
C2_CM_K = physical_constants["second radiation constant"][0] * 100   # hc/k [cm K] (CODATA)
CM1_J_PER_MOL = h * c_light * 100 * N_A                                 # one cm-1 as J/mol


@pytest.fixture(scope="module")
def study():
    return read_study(DATA / "study.toml")


@pytest.fixture(scope="module")
def result(study):
    return study_falloff(study)


def _channel(result, name):
    return next(c for c in result.channels if c.name == name)


def with_conditions(study, **changes):
    return dataclasses.replace(study, conditions=dataclasses.replace(study.conditions, **changes))


# ---------------------------------------------------------------- k_inf against canonical TST
def test_k_inf_equals_canonical_tst_without_tunnelling(result):
    cf = _channel(result, "bare")
    assert cf.model.grain_cm1 == pytest.approx(10.0, rel=1e-12)   # E0 = 13780 cm-1 is a whole number of grains
    x = cf.model.grain_cm1 * C2_CM_K / cf.temperature_K
    # With every wavenumber a multiple of the grain and E0 on the grid, the grain-averaged sum of
    # states turns kT into (grain/2) coth(grain/2kT): k_inf/k_TST = (x/2) coth(x/2) = 1 + x^2/12 + ...
    # exactly (derivation in tstrate/physics/rrkm.py); the classical K-rotor count has the same
    # relative grain error for reactant and TS (it does not depend on the rotor constant), so it
    # cancels. 1e-9 leaves room for the Boltzmann sums only.
    expected = (x / 2) / np.tanh(x / 2)
    np.testing.assert_allclose(cf.k_high_pressure_per_s / cf.canonical_tst_per_s, expected, rtol=1e-9)
    # and so within the grain error x^2/12 (4.3e-4 at 200 K for a 10 cm-1 grain)
    np.testing.assert_allclose(cf.k_high_pressure_per_s, cf.canonical_tst_per_s, rtol=1.01 * x.max() ** 2 / 12)


def test_k_inf_equals_canonical_tst_with_eckart_tunnelling(result):
    cf = _channel(result, "bare_eckart")
    assert cf.model.tunnelling == "eckart"
    # The Eckart-corrected N_TS is a grain sum of a smooth P(E) exp(-E/kT): its error against the
    # quadrature of tst.py falls faster than any power of grain / (h c nu_imag / 2 pi) = 10/263;
    # observed 1e-12. 1e-6 is the stated bound here.
    np.testing.assert_allclose(cf.k_high_pressure_per_s, cf.canonical_tst_per_s, rtol=1e-6)
    # tunnelling must matter at 200 K for this to be a test of it
    classical = _channel(result, "bare").k_high_pressure_per_s
    assert cf.k_high_pressure_per_s[0] > 1e3 * classical[0]


def test_degeneracy_override_agrees_with_tst(study):
    ch = dataclasses.replace(study.channel("bare"), degeneracy=1.0)
    st = dataclasses.replace(study, channels=(ch,))
    cf = channel_falloff(st, ch, temperature_K=[300.0])
    assert cf.model.path_degeneracy == 1.0
    x = 10.0 * C2_CM_K / 300.0
    assert cf.k_high_pressure_per_s[0] / cf.canonical_tst_per_s[0] == pytest.approx((x / 2) / math.tanh(x / 2),
                                                                                     rel=1e-9)
    # symmetry count of the default: sigma_R n_TS / (sigma_TS n_R) = 2 * 2 / (1 * 1) = 4
    default = channel_falloff(study, study.channel("bare"), temperature_K=[300.0])
    assert default.model.path_degeneracy == 4.0
    assert default.k_high_pressure_per_s[0] == pytest.approx(4 * cf.k_high_pressure_per_s[0], rel=1e-12)


def test_k_rotor_and_2d_rotor_reproduce_the_rigid_rotor(study):
    # classical Q_K Q_2D = sqrt(pi kT / K) kT / B2d must equal sqrt(pi) (kT)^1.5 / sqrt(ABC)
    for name in ("H2CO3", "TS_bare"):
        sp = study.species[name]
        a, b, c = rotational_constants_cm1(sp)
        split = split_rotation(sp)
        assert split.K_cm1 * split.B2d_cm1**2 == pytest.approx(a * b * c, rel=1e-12)
        # A = h / (8 pi^2 c I_A), written out from the smallest principal moment
        i_a = np.sort(sp.moments_of_inertia_kg_m2())[0]
        assert a == pytest.approx(h / (8 * math.pi**2 * c_light * 100 * i_a), rel=1e-12)
    # planar H2CO3 is a near-oblate top: the unique axis is C (kappa > 0)
    assert split_rotation(study.species["H2CO3"]).axis == "C"


# ---------------------------------------------------------------- the falloff grid
def test_grid_shapes_and_pressures(result, study):
    cf = _channel(result, "bare")
    n_t, n_p = study.conditions.temperature_K.size, study.conditions.pressure_Pa.size
    assert cf.rate_constant_per_s.shape == (n_t, n_p)
    # [M] = p / kT at every temperature
    np.testing.assert_allclose(cf.number_density_m3, study.conditions.pressure_Pa[None, :]
                               / (kB * study.conditions.temperature_K[:, None]), rtol=1e-12)


def test_strong_collision_bounds_and_monotonicity(result):
    cf = _channel(result, "bare")
    k = cf.rate_constant_per_s
    # sum f k w/(w+k) <= sum f k and <= w sum_{E>=E0} f (no tunnelling): k <= min(k_inf, k0 [M])
    assert np.all(k <= cf.k_high_pressure_per_s[:, None] * (1 + 1e-12))
    assert np.all(k <= cf.k_low_pressure_m3_per_s[:, None] * cf.number_density_m3 * (1 + 1e-12))
    assert np.all(np.diff(k, axis=1) > 0)
    # Lindemann-Hinshelwood lies above the strong-collision curve (its falloff is the narrowest)
    assert np.all(cf.lindemann_per_s >= k * (1 - 1e-12))


def test_falloff_limits_on_a_study_channel(study):
    # far below and far above the study's pressures the computed k reaches its two limits
    st = with_conditions(study, pressure_Pa=np.array([1e-7, 1e11]), temperature_K=np.array([250.0]))
    cf = channel_falloff(st, st.channel("bare"))
    k_low, k_high = cf.rate_constant_per_s[0]
    # 1e-12 bar: beta Z [M] ~ 4e-3 s-1 against k(E) >= 1e5 s-1 just above E0 -> within 1e-6
    assert k_low == pytest.approx(cf.k_low_pressure_m3_per_s[0] * cf.number_density_m3[0, 0], rel=1e-6)
    # 1e6 bar: beta Z [M] ~ 1e15 s-1 against k(E) <= 1e10 s-1 where f(E) k(E) matters -> within 1e-4
    assert k_high == pytest.approx(cf.k_high_pressure_per_s[0], rel=1e-4)


def test_troe_fit_is_reported_with_its_error(result):
    from tstrate.physics.falloff import strong_collision_falloff, troe_rate

    for cf in result.channels:
        fit = cf.troe
        m = cf.troe_fit_number_density_m3
        assert m.min() <= cf.number_density_m3.min() * (1 + 1e-12)
        assert m.max() >= cf.number_density_m3.max() * (1 - 1e-12)
        k = strong_collision_falloff(cf.model.rate, cf.temperature_K, m,
                                     collision_rate_m3_s=cf.collision_rate_m3_per_s,
                                     collision_efficiency=cf.collision_efficiency,
                                     threshold_shift=1 - 1 / cf.model.rate.centrifugal_factor).rate_per_s
        kt = troe_rate(cf.troe_k0_m3_per_s[:, None], cf.k_high_pressure_per_s[:, None], m[None, :],
                       cf.temperature_K[:, None], fit.a, fit.T3_K, fit.T1_K, fit.T2_K)
        assert np.max(np.abs(kt / k - 1)) == pytest.approx(fit.max_rel_deviation, rel=1e-9)
        assert 0 < fit.rms_rel_deviation <= fit.max_rel_deviation
        assert np.all((cf.troe_Fcent > 0) & (cf.troe_Fcent <= 1 + 1e-12))
    # without tunnelling the Troe k0 is the strong-collision low-pressure limit itself
    bare = _channel(result, "bare")
    np.testing.assert_array_equal(bare.troe_k0_m3_per_s, bare.k_low_pressure_m3_per_s)
    assert bare.troe.max_rel_deviation < 0.2
    # the per-channel override asked for T** on the Eckart channel
    assert _channel(result, "bare_eckart").troe.T2_K is not None


def test_troe_parameters_at_a_bound_reach_the_warnings(result):
    # the test study's bare channel (strong collisions, no tunnelling) fits best with one decaying
    # term: a at its bound 0, T* = T***; every parameter at a bound gets one warning sentence
    assert _channel(result, "bare").troe.at_bound == (("a", 0.0),)
    for cf in result.channels:
        notes = [w for w in cf.warnings if "Troe fit:" in w]
        assert len(notes) == len(cf.troe.at_bound)
        assert all(w.startswith(f"channel {cf.name!r}: Troe fit: ") for w in notes)
        assert all(w in result.warnings for w in notes)
    assert any("single decaying term exp(-T/T***)" in w for w in result.warnings)


@pytest.mark.parametrize("twin", [(0.6, 200.0, 1500.0), (0.4, 1500.0, 200.0)], ids=["canonical", "swapped"])
def test_effective_k0_troe_fit_gives_the_curve_in_canonical_order(twin):
    from tstrate.physics.falloff import troe_center_broadening, troe_rate
    from tstrate.expressions.troe import fit_troe_effective_k0

    # exact Troe data whose k0 is 5 times the classical one handed to the fit (as for Eckart
    # channels); both twins give the same data, and the fit must give back the curve with
    # T*** < T*
    t = np.linspace(150.0, 300.0, 7)
    m = np.logspace(18, 26, 17)
    kinf = 1e3 * np.exp(-2000.0 / t)
    k0_true = 5e-17 * (t / 300.0) ** -4
    k = troe_rate(k0_true[:, None], kinf[:, None], m[None, :], t[:, None], *twin)
    fit, k0e = fit_troe_effective_k0(t, m, k, k0_true / 5, kinf)
    # exact data, least squares to 1e-12 on ln k; 1e-6 is round-off headroom
    assert fit.max_rel_deviation < 1e-6
    k_fit = troe_rate(k0e[:, None], kinf[:, None], m[None, :], t[:, None], fit.a, fit.T3_K, fit.T1_K, fit.T2_K)
    np.testing.assert_allclose(k_fit, k, rtol=1e-6)
    np.testing.assert_allclose(troe_center_broadening(t, fit.a, fit.T3_K, fit.T1_K),
                               troe_center_broadening(t, *twin), rtol=1e-6)
    assert fit.T3_K < fit.T1_K and fit.at_bound == ()


def test_collision_efficiency_from_delta_e_down(result):
    bare, eck = _channel(result, "bare"), _channel(result, "bare_eckart")
    assert bare.efficiency.kind == "down"
    np.testing.assert_allclose(bare.efficiency.delta_E_J_per_mol / CM1_J_PER_MOL, 200.0)
    # beta_c in (0, 1), falling with temperature at fixed <dE>down (Troe 1977); larger steps, larger beta_c
    assert np.all((bare.collision_efficiency > 0) & (bare.collision_efficiency < 1))
    assert np.all(np.diff(bare.collision_efficiency) < 0)
    assert np.all(eck.collision_efficiency > bare.collision_efficiency)


def test_skipped_channels_are_named(result):
    assert [(s.name, s.order) for s in result.skipped] == [("back", 2)]
    assert "not computed" in result.skipped[0].reason


# ---------------------------------------------------------------- settings and errors
def test_coarse_grain_is_refined_with_a_warning(study):
    ch = study.channel("bare")
    model = channel_model(study, ch, FalloffSettings(grain_cm1=200.0), max_temperature_K=300)
    # lowest real wavenumber 220 cm-1 -> at most 73.3 cm-1, then lowered so E0 is on the grid
    assert model.grain_cm1 <= 220 / 3
    assert model.barrier_J_per_mol / (model.grain_cm1 * CM1_J_PER_MOL) == pytest.approx(
        round(13780 / model.grain_cm1), abs=1e-6)
    # the physics says why; the study step says where the grain is set
    assert "refined" in model.grain_note and "[" not in model.grain_note
    assert any("refined" in w and f"{study.file} [falloff.grain_cm1]" in w for w in model.warnings)


def test_missing_lennard_jones_names_the_species_file(study, tmp_path):
    text = (DATA / "study.toml").read_text().replace('"h2co3.toml"', f'"{DATA / "h2co3_nolj.toml"}"')
    for name in ("ts_bare", "co2", "h2o", "profile"):
        suffix = ".csv" if name == "profile" else ".toml"
        text = text.replace(f'"{name}{suffix}"', f'"{DATA / (name + suffix)}"')
    (tmp_path / "s.toml").write_text(text)
    st = read_study(tmp_path / "s.toml")
    with pytest.raises(InputError, match=r"h2co3_nolj\.toml \[lennard_jones\]: species 'H2CO3' has no Lennard"):
        study_falloff(st)


@pytest.mark.parametrize("bath, match", [(None, r"\[conditions.bath_gas\]: falloff needs a bath gas"),
                                         ("Xe", r"\[conditions.bath_gas\]: unknown bath gas 'Xe'")])
def test_bath_gas_errors(study, bath, match):
    with pytest.raises(InputError, match=match):
        bath_parameters(with_conditions(study, bath_gas=bath))


def test_bath_gas_names(study):
    assert bath_parameters(with_conditions(study, bath_gas="n2")).name == "N2"
    assert bath_parameters(with_conditions(study, bath_gas="air")).name == "air"


def test_no_pressures(study):
    st = with_conditions(study, pressure_Pa=np.zeros(0))
    with pytest.raises(InputError, match=r"study.toml \[conditions.pressure_bar\]: falloff needs pressures"):
        study_falloff(st)


def test_number_densities_instead_of_pressures(study):
    st = with_conditions(study, pressure_Pa=np.zeros(0), number_density_m3=np.array([1e20, 1e24]))
    cf = channel_falloff(st, st.channel("bare"), temperature_K=[250.0, 300.0])
    assert cf.pressure_Pa is None
    np.testing.assert_allclose(cf.number_density_m3, [[1e20, 1e24], [1e20, 1e24]])


def test_settings_validation():
    """The record names its own keys; the study reader places them in [falloff] (tests/io)."""
    with pytest.raises(InputError, match=r"^\[delta_E_down_cm1\]: give one of"):
        FalloffSettings(collision_efficiency=0.3, delta_E_down_cm1=100)
    with pytest.raises(InputError, match=r"^\[delta_E_all_cm1\]: <dE> over all collisions must be negative"):
        FalloffSettings(delta_E_all_cm1=50)
    with pytest.raises(InputError, match=r"^\[collision_efficiency\]"):
        FalloffSettings(collision_efficiency=1.5)
    with pytest.raises(InputError, match=r"^\[grain_cm1\]"):
        FalloffSettings(grain_cm1=0)
    assert FalloffSettings().energy_transfer == "strong"


def test_strong_collisions_and_wigner_are_said(study):
    ch = dataclasses.replace(study.channel("bare"), tunnelling="wigner")
    st = dataclasses.replace(study, channels=(ch,), sections={})
    cf = channel_falloff(st, ch, temperature_K=[300.0])
    text = " ".join(cf.warnings)
    assert "strong collisions (beta_c = 1)" in text
    assert "'wigner' has no microcanonical form" in text
    assert cf.model.tunnelling == "none"
    assert np.all(cf.collision_efficiency == 1.0)


def test_linear_reactant_with_a_bent_transition_state():
    # Invented HCN -> [bent TS] isomerisation (made-up numbers). The linear reactant has the 2-D rotor
    # only; the TS gets the K-rotor as an extra rotor. The rotational factor the model puts into k_inf,
    # (B_R / B2d_TS) * Q_K,TS, must be the ratio of classical rigid-rotor partition functions that canonical
    # TST uses, (kT/B_R)^-1 * sqrt(pi) (kT)^1.5 / sqrt(ABC), written out here from the rotational constants.
    from tstrate.io.species import build_species
    from tstrate.model import Channel, Conditions, Study

    hcn = build_species("HCN", ["H", "C", "N"], [[0, 0, -1.066], [0, 0, 0], [0, 0, 1.156]],
                        frequencies_cm1=[710, 710, 2100, 3310], energy_J_per_mol=0.0, lennard_jones=(3.6, 570.0))
    ts = build_species("TSi", ["H", "C", "N"], [[1.05, 0, 0.3], [0, 0, 0], [0, 0, 1.18]], kind="transition_state",
                       frequencies_cm1=[-1200, 2000, 2600], energy_J_per_mol=16415 * CM1_J_PER_MOL)
    assert hcn.linear and not ts.linear
    ch = Channel("iso", ("HCN",), "TSi", ("HCN",))
    st = Study(None, "linear test", {"HCN": hcn, "TSi": ts}, (ch,),
               Conditions(np.array([300.0]), pressure_Pa=np.array([1e5]), bath_gas="N2"))
    m = unimolecular_model(ch, st.species, FalloffSettings(), max_temperature_K=300.0)
    assert m.reactant_rotors.axis == "linear" and m.reactant_rotors.K_cm1 is None
    (b_r,) = rotational_constants_cm1(hcn)
    a, b, c = rotational_constants_cm1(ts)
    kt = 300.0 / C2_CM_K                                      # kT in cm-1
    expected = (math.sqrt(math.pi) * kt**1.5 / math.sqrt(a * b * c)) / (kt / b_r)
    # four modes: most grains above the barrier hold no vibrational state, so the 2-D rotor is counted
    # as active in both species (its factor then sits in the densities, not in centrifugal_factor);
    # either way the rotational factor is B_R / B2d_TS times the TS's K-rotor partition function
    assert m.external_rotation == "active" and m.rate.centrifugal_factor == 1.0
    assert any("counted as active" in w for w in m.warnings)
    model_factor = m.reactant_rotors.B2d_cm1 / m.ts_rotors.B2d_cm1 * math.sqrt(math.pi * kt / m.ts_rotors.K_cm1)
    assert model_factor == pytest.approx(expected, rel=1e-12)
    # and the states now fill the grains: k_inf reproduces canonical TST (the outside reference here)
    cf = channel_falloff(st, ch, settings=FalloffSettings())
    np.testing.assert_allclose(cf.k_high_pressure_per_s, cf.canonical_tst_per_s, rtol=0.02)
    assert not any("lumpy" in w for w in m.warnings)


def test_dense_reactant_gets_no_sparse_warning(result):
    assert not any("no state in" in w for w in result.warnings)
