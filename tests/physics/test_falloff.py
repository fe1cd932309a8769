"""Falloff: strong-collision limits, Troe against Cantera, JPL termolecular form, Troe fit."""

import math

import numpy as np
import pytest
from scipy.constants import k as kB, physical_constants

from tstrate.errors import InputError
from tstrate.physics.collisions import bath_gas, pair_collision_rate_m3_s, LennardJones
from tstrate.expressions.troe import TROE_T_BOUNDS_K, canonical_troe, fit_troe, troe_bound_notes
from tstrate.physics.falloff import (high_pressure_limit, jpl_termolecular_rate, lindemann_hinshelwood,
                                     low_pressure_limit, number_density_from, strong_collision_falloff,
                                     thermal_distribution, troe_center_broadening, troe_rate)
from tstrate.physics.rrkm import rrkm_rate
from tstrate.physics.states import CM1_J_PER_MOL
from tstrate.units import RATE_UNITS

pytestmark = pytest.mark.fitting     # rerun by .ci/run with 1 and 2 BLAS threads

# Invented demo wavenumbers (cm-1) and barrier for carbonic acid -> CO2 + H2O (see test_rrkm.py).
H2CO3_CM1 = [3640, 3630, 1830, 1450, 1380, 1180, 1010, 790, 670, 580, 550, 220]
TS_CM1 = [3700, 2600, 1900, 1400, 1150, 940, 800, 650, 560, 480, 300]
BARRIER_J_PER_MOL = 15000 * CM1_J_PER_MOL


@pytest.fixture(scope="module")
def rate():
    return rrkm_rate(H2CO3_CM1, TS_CM1, BARRIER_J_PER_MOL, grain_cm1=10.0,
                     energy_above_barrier_J_per_mol=30000 * CM1_J_PER_MOL)


@pytest.fixture(scope="module")
def z_co2():
    # demo LJ parameters for H2CO3 (invented, labelled): 4.4 Angstrom, 400 K; CO2 bath (GRI-Mech 3.0)
    molecule = LennardJones("H2CO3", 4.4, 400.0, "invented demo values", formula="H2CO3")
    return lambda t: pair_collision_rate_m3_s(t, molecule, bath_gas("CO2"))


def test_strong_collision_limits_and_monotonicity(rate, z_co2):
    t = np.array([200.0, 300.0, 600.0])
    m = np.logspace(10, 34, 49)                               # m^-3, far below to far above falloff
    res = strong_collision_falloff(rate, t, m, collision_rate_m3_s=z_co2(t), collision_efficiency=0.3)
    k = res.rate_per_s
    np.testing.assert_allclose(res.high_pressure_per_s, high_pressure_limit(rate, t), rtol=1e-12)
    np.testing.assert_allclose(res.low_pressure_m3_s, low_pressure_limit(rate, t, z_co2(t), 0.3), rtol=1e-12)
    # high-pressure end: omega >> k(E) over the populated grains
    np.testing.assert_allclose(k[:, -1], res.high_pressure_per_s, rtol=1e-3)
    # low-pressure end: k -> k0 [M]
    np.testing.assert_allclose(k[:, 0], res.low_pressure_m3_s * m[0], rtol=1e-3)
    # monotone in [M] and below both limits (the strong-collision curve lies under Lindemann's)
    assert np.all(np.diff(k, axis=1) > 0)
    lh = lindemann_hinshelwood(res.low_pressure_m3_s[:, None], res.high_pressure_per_s[:, None], m[None, :])
    assert np.all(k <= lh * (1 + 1e-12))


def test_thermal_distribution_is_normalised_and_safe_at_low_t(rate):
    f = thermal_distribution(rate.reactant, [50.0, 300.0, 3000.0])
    np.testing.assert_allclose(f.sum(axis=1), 1.0)
    assert np.all(np.isfinite(f))


def test_lindemann_form():
    assert lindemann_hinshelwood(2.0, 6.0, 1.0) == pytest.approx(1.5)   # 6*2/(6+2)


CANTERA_YAML = """
units: {length: m, time: s, quantity: molec, activation-energy: K}
phases:
- name: gas
  thermo: ideal-gas
  elements: [C, H, O, N]
  species: [H2CO3, CO2, H2O, N2]
  kinetics: gas
  reactions: all
  state: {T: 300.0, P: 1 atm}
species:
- name: H2CO3
  composition: {C: 1, H: 2, O: 3}
  thermo: {model: constant-cp, T0: 298.15 K, h0: -600 kJ/mol, s0: 280 J/mol/K, cp0: 80 J/mol/K}
- name: CO2
  composition: {C: 1, O: 2}
  thermo: {model: constant-cp, T0: 298.15 K, h0: -393.5 kJ/mol, s0: 213.8 J/mol/K, cp0: 37 J/mol/K}
- name: H2O
  composition: {H: 2, O: 1}
  thermo: {model: constant-cp, T0: 298.15 K, h0: -241.8 kJ/mol, s0: 188.8 J/mol/K, cp0: 33.6 J/mol/K}
- name: N2
  composition: {N: 2}
  thermo: {model: constant-cp, T0: 298.15 K, h0: 0 kJ/mol, s0: 191.6 J/mol/K, cp0: 29.1 J/mol/K}
reactions:
- equation: H2CO3 (+M) => CO2 + H2O (+M)
  type: falloff
  low-P-rate-constant: {A: 1.0e-7, b: -3.0, Ea: 13000.0}
  high-P-rate-constant: {A: 1.0e13, b: 0.0, Ea: 15000.0}
  Troe: {A: 0.35, T3: 250.0, T1: 1800.0%s}
"""


@pytest.mark.parametrize("with_t2", [False, True], ids=["Troe-3", "Troe-4"])
def test_troe_against_cantera(with_t2):
    ct = pytest.importorskip("cantera")
    t2 = 3500.0 if with_t2 else None
    gas = ct.Solution(yaml=CANTERA_YAML % (", T2: 3500.0" if with_t2 else ""))
    for t in (200.0, 300.0, 600.0, 1000.0):
        for p in (1.0, 1e2, 1e4, 1e6, 1e8):                    # Pa; P_r crosses 1 at each T
            gas.TPX = t, p, "N2:1"
            m = p / (kB * t)
            k0 = 1.0e-7 * t**-3.0 * math.exp(-13000.0 / t)     # m^3 molecule^-1 s^-1
            kinf = 1.0e13 * math.exp(-15000.0 / t)             # s^-1
            ours = troe_rate(k0, kinf, m, t, 0.35, 250.0, 1800.0, t2)
            assert ours == pytest.approx(gas.forward_rate_constants[0], rel=1e-6)


def test_jpl_oh_so2_at_298_k_and_1_atm():
    # OH + SO2 + M -> HOSO2: JPL Publication 19-5 (Burkholder et al. 2019), Table 2-1 entry I4:
    # k0(300) = 2.9e-31 cm6 molecule-2 s-1, n = 4.1; kinf(300) = 1.7e-12 cm3 molecule-1 s-1, m = -0.2;
    # Fc = 0.6. Checked with the search tool against a note quoting Table 2-1 I4 and mechanism codes
    # that use these numbers with the 300 K reference (k0 ~ (T/300)^-4.1, kinf ~ (T/300)^+0.2).
    # By hand at 298 K, 1 atm: [M] = 101325/(1.380649e-23*298) = 2.4627e25 m-3 = 2.4627e19 cm-3;
    # k0 = 2.9e-31*(298/300)^-4.1 = 2.9806e-31; k0[M] = 7.3405e-12 s-1;
    # kinf = 1.7e-12*(298/300)^0.2 = 1.6977e-12; ratio = 4.3237, log10 = 0.63586,
    # exponent 1/(1+0.63586^2) = 0.71209; 0.6^0.71209 = 0.69506;
    # k = 7.3405e-12/(1+4.3237) * 0.69506 = 1.37883e-12 * 0.69506 = 9.58e-13 cm3 molecule-1 s-1.
    cm6 = RATE_UNITS["cm6 molecule-2 s-1"][1]
    cm3 = RATE_UNITS["cm3 molecule-1 s-1"][1]
    m = number_density_from(1.0, "atm", 298.0)
    k = jpl_termolecular_rate(298.0, m, 2.9e-31 / cm6, 4.1, 1.7e-12 / cm3, -0.2, Fc=0.6)
    assert float(k) * cm3 == pytest.approx(9.58e-13, rel=5e-4)


def test_number_density_conversions():
    # Loschmidt constant n0 (273.15 K, 101.325 kPa), CODATA via scipy
    n0 = physical_constants["Loschmidt constant (273.15 K, 101.325 kPa)"][0]
    assert number_density_from(1.0, "atm", 273.15) == pytest.approx(n0, rel=1e-9)
    assert number_density_from(760.0, "Torr", 273.15) == pytest.approx(n0, rel=1e-9)
    assert number_density_from(1.01325, "bar", 273.15) == pytest.approx(n0, rel=1e-9)
    assert number_density_from(2.5e19, "molecule cm-3") == pytest.approx(2.5e25)
    with pytest.raises(InputError, match="temperature is needed"):
        number_density_from(1.0, "bar")
    with pytest.raises(InputError, match="unknown pressure unit"):
        number_density_from(1.0, "psi", 300.0)


# Troe fits. F_cent = (1-a) exp(-T/T***) + a exp(-T/T*) (+ exp(-T**/T)) has two exact labels
# (a, T***, T*) and (1-a, T*, T***); what a fit determines is the curve, so the fits are checked on
# F_cent(T) and k(T, [M]). The canonical labels themselves are checked separately below.
SYNTHETIC_T = np.linspace(200.0, 1500.0, 12)
SYNTHETIC_M = np.logspace(20, 28, 15)
TWINS = [(0.6, 200.0, 1500.0, 4000.0), (0.4, 1500.0, 200.0, 4000.0)]   # the same F_cent(T)


def _synthetic_limits(t):
    return 1e-16 * (t / 300.0) ** -3, 1e5 * np.exp(-1000.0 / t)      # k0 [m^3 s^-1], k_inf [s^-1]


def _synthetic_troe(params, t=SYNTHETIC_T, m=SYNTHETIC_M):
    k0, kinf = _synthetic_limits(t)
    return troe_rate(k0[:, None], kinf[:, None], m[None, :], t[:, None], *params)


def _fit_synthetic(params, **kwargs):
    k0, kinf = _synthetic_limits(SYNTHETIC_T)
    return fit_troe(SYNTHETIC_T, SYNTHETIC_M, _synthetic_troe(params), k0, kinf,
                    fit_T2=params[3] is not None, **kwargs)


def _labels(fit):
    return fit.a, fit.T3_K, fit.T1_K, fit.T2_K


def _same_labels(got, expected, rel):
    """(a, T***, T*, T**) equal within rel; T** may be None in both."""
    assert got[:3] == pytest.approx(expected[:3], rel=rel)
    assert (got[3] is None) == (expected[3] is None)
    if expected[3] is not None:
        assert got[3] == pytest.approx(expected[3], rel=rel)


@pytest.mark.parametrize("params", [(0.4, 400.0, 2500.0, None)] + TWINS,
                         ids=["3-parameter", "4-parameter", "4-parameter-twin"])
def test_troe_fit_recovers_exact_synthetic_curves(params):
    fit = _fit_synthetic(params)
    # Exact Troe data fitted on ln k to 1e-14: the curves come back to round-off (observed
    # max |k_fit/k - 1| ~ 1e-15). Checked on grids 10 and 5 times finer than the fitted one,
    # inside its range; 1e-6 leaves room for round-off only, not for another curve.
    t_fine = np.linspace(200.0, 1500.0, 111)
    m_fine = np.logspace(20, 28, 71)
    np.testing.assert_allclose(troe_center_broadening(t_fine, *_labels(fit)),
                               troe_center_broadening(t_fine, *params), rtol=1e-6)
    np.testing.assert_allclose(_synthetic_troe(_labels(fit), t_fine, m_fine),
                               _synthetic_troe(params, t_fine, m_fine), rtol=1e-6)
    assert fit.max_rel_deviation < 1e-6
    assert fit.rms_rel_deviation <= fit.max_rel_deviation
    assert fit.T3_K < fit.T1_K and fit.at_bound == ()      # canonical order, nothing at a bound


def test_troe_fit_returns_the_canonical_twin_from_either_start():
    # Started on each exact twin, the optimiser stays there (zero residual); the fit must still
    # report one set of labels, the canonical twin T*** < T* (canonical_troe): (0.6, 200, 1500, 4000).
    fits = [_fit_synthetic(TWINS[0], starts=[s]) for s in TWINS]
    for fit in fits:
        assert fit.max_rel_deviation < 1e-6
        _same_labels(_labels(fit), TWINS[0], rel=1e-6)


def test_canonical_troe_maps_every_twin_pair_to_one_representative():
    t = np.linspace(100.0, 3000.0, 59)

    def fc(p):
        return troe_center_broadening(t, *p)

    for p in [(0.6, 200.0, 1500.0, None), (0.4, 1500.0, 200.0, 4000.0), (0.25, 3000.0, 90.0, None),
              (1.3, 900.0, 300.0, None)]:
        twin = (1 - p[0], p[2], p[1], p[3])
        c = canonical_troe(*p)
        _same_labels(canonical_troe(*twin), c, rel=1e-12)
        _same_labels(canonical_troe(*c), c, rel=1e-12)                       # a fixed point
        assert c[1] < c[2] and c[3] == p[3]                                  # T*** < T*, T** untouched
        np.testing.assert_allclose(fc(c), fc(p), rtol=1e-12)                 # the same curve
    _same_labels(canonical_troe(0.4, 1500.0, 200.0), (0.6, 200.0, 1500.0, None), rel=1e-12)
    # a outside [0, 1]: its twin is outside too; the same rule picks T*** < T* (a = -0.3 here)
    _same_labels(canonical_troe(1.3, 900.0, 300.0), (-0.3, 300.0, 900.0, None), rel=1e-12)
    # one decaying term: a at 0 or 1 (the other temperature means nothing) or T*** = T* (a means
    # nothing) are all written a = 0, T*** = T*
    for p in [(1.0, 481.0, 151.7), (0.0, 151.7, 481.0), (1.0 - 1e-9, 3.0, 151.7), (0.7, 151.7, 151.7),
              (0.3, 151.7, 151.7 * (1 + 1e-7))]:
        c = canonical_troe(*p)
        _same_labels(c, (0.0, 151.7, 151.7, None), rel=1e-6)
        np.testing.assert_allclose(fc(c), fc(p + (None,)), rtol=1e-6)


def test_canonical_troe_at_the_fitted_temperatures_drops_terms_that_do_not_count():
    # 150-300 K. Each of these changes F_cent by less than TROE_NEGLIGIBLE_TERM = 1e-4 there, so
    # the data of a fit cannot tell it from the canonical form, which is written instead.
    t = np.linspace(150.0, 300.0, 16)
    cases = [
        # a second decaying term of weight 4e-6: one term, a = 0 (the optimiser's a and T*** vary)
        ((0.999996, 97.96, 100.96, None), (0.0, 100.96, 100.96, None)),
        ((0.999999, 81.57, 100.96, None), (0.0, 100.96, 100.96, None)),
        # T*** = 5 K: its term is below 1e-13 of F_cent; T*** goes to its lower bound 1 K
        ((0.5, 5.0, 400.0, None), (0.5, 1.0, 400.0, None)),
        ((0.5, 400.0, 5.0, None), (0.5, 1.0, 400.0, None)),          # the same, other twin
        # T** = 1e4 K: exp(-T**/T) < 4e-15 here; T** goes to its upper bound 1e8 K
        ((0.6, 200.0, 1500.0, 1e4), (0.6, 200.0, 1500.0, 1e8)),
        ((0.6, 200.0, 1500.0, 4.5e5), (0.6, 200.0, 1500.0, 1e8)),
    ]
    for given, expected in cases:
        c = canonical_troe(*given, temperature_K=t)
        _same_labels(c, expected, rel=1e-4)
        np.testing.assert_allclose(troe_center_broadening(t, *c), troe_center_broadening(t, *given), rtol=1e-4)
    # a second term that counts stays: weight 0.01 on exp(-T/150 K) is 7 % of F_cent at 150 K
    _same_labels(canonical_troe(0.99, 50.0, 150.0, temperature_K=t), (0.99, 50.0, 150.0, None), rel=1e-12)


def test_troe_fit_names_parameters_at_a_bound():
    # data with T* = 1e12 K: the best fit pushes T* to the upper bound of the fit (1e8 K), where
    # exp(-T/T*) differs from 1 by T/1e8 <= 1.5e-5, and says so
    params = (0.3, 300.0, 1e12, None)
    fit = _fit_synthetic(params)
    assert fit.at_bound == (("T1_K", TROE_T_BOUNDS_K[1]),)
    (note,) = troe_bound_notes(fit)
    assert "T* sits at its upper bound 1e+08 K" in note
    # the curve is still the data's: F_cent moves by at most 0.3 * 1.5e-5 = 4.5e-6
    np.testing.assert_allclose(_synthetic_troe(_labels(fit)), _synthetic_troe(params), rtol=1e-5)
    # a single decaying term (any a with T*** = T*): a = 0, T*** = T* = 300 K, a named at its bound 0
    fit = _fit_synthetic((0.5, 300.0, 300.0, None))
    assert fit.at_bound == (("a", 0.0),)
    assert (fit.a, fit.T1_K) == (0.0, fit.T3_K)
    assert fit.T3_K == pytest.approx(300.0, rel=1e-6)     # the one temperature is determined
    (note,) = troe_bound_notes(fit)
    assert "single decaying term exp(-T/T***) with T*** = 300 K" in note and "T* carries no" in note


def test_troe_fit_rejects_bad_starting_points():
    with pytest.raises(InputError, match="starting point needs 3 finite numbers"):
        _fit_synthetic((0.4, 400.0, 2500.0, None), starts=[(0.5, 300.0)])
    with pytest.raises(InputError, match="no Troe starting point"):
        _fit_synthetic((0.4, 400.0, 2500.0, None), starts=[])


def test_troe_fit_of_a_computed_falloff_curve(rate, z_co2):
    # the strong-collision curve is not exactly Troe-shaped: the fit reports how far off it is
    t = np.linspace(200.0, 400.0, 5)
    m = np.logspace(18, 30, 13)
    res = strong_collision_falloff(rate, t, m, collision_rate_m3_s=z_co2(t), collision_efficiency=1.0)
    fit = fit_troe(t, m, res.rate_per_s, res.low_pressure_m3_s, res.high_pressure_per_s)
    assert 0 <= fit.a <= 1
    assert fit.max_rel_deviation < 0.1
    # the stated deviation is the one of the labels reported (curve against data)
    k_fit = troe_rate(res.low_pressure_m3_s[:, None], res.high_pressure_per_s[:, None], m[None, :], t[:, None],
                      *_labels(fit))
    assert np.max(np.abs(k_fit / res.rate_per_s - 1)) == pytest.approx(fit.max_rel_deviation, rel=1e-9)
    fc = troe_center_broadening(t, fit.a, fit.T3_K, fit.T1_K)
    assert np.all((fc > 0) & (fc <= 1))


def test_fit_rejects_bad_grid():
    with pytest.raises(InputError, match="shape"):
        fit_troe([300.0], [1e24, 1e25], np.ones((2, 2)), [1.0], [1.0])


def test_fixed_pressures_give_a_number_density_per_temperature(rate, z_co2):
    t = np.array([200.0, 300.0])
    p = np.array([10.0, 1e3, 1e5])                                  # Pa
    m = number_density_from(p[None, :], "Pa", t[:, None])            # (n_T, n_P)
    grid = strong_collision_falloff(rate, t, m, collision_rate_m3_s=z_co2(t)).rate_per_s
    for i, ti in enumerate(t):
        one = strong_collision_falloff(rate, [ti], p / (kB * ti), collision_rate_m3_s=z_co2(ti)).rate_per_s[0]
        np.testing.assert_allclose(grid[i], one, rtol=1e-12)
    with pytest.raises(InputError, match="shape"):
        strong_collision_falloff(rate, t, np.ones((3, 2)), collision_rate_m3_s=1e-16)


# ---- overall rotation in both limits (J-resolved thresholds of the adiabatic 2-D rotor) -------------

def _rotating_rate(centrifugal_factor):
    from tstrate.physics.rrkm import microcanonical_rate
    from tstrate.physics.states import count_states

    e0 = 12000 * CM1_J_PER_MOL
    reac = count_states([300, 500, 800, 1100, 1400, 1700, 2900, 3000, 3100], e0 + 40000 * CM1_J_PER_MOL, grain_cm1=10.0)
    ts = count_states([250, 450, 700, 1000, 1300, 2900, 3000, 3100], e0 + 40000 * CM1_J_PER_MOL, grain_cm1=10.0)
    return microcanonical_rate(reac, ts, e0, centrifugal_factor=centrifugal_factor)


@pytest.mark.parametrize("c_f", [0.76, 1.3], ids=["tighter-TS", "looser-TS"])
def test_rotation_enters_both_limits_alike(c_f):
    """With delta = 1 - 1/c_f the J-resolved sum keeps k_inf (it carries I_TS/I_R = c_f) and gives
    k0 = beta Z <P(E >= E0 - delta E_r)>, checked here against an independent trapezoid integration
    over E_r of the classical 2-D rotor distribution exp(-E_r/RT)/RT (not the Gauss-Laguerre nodes);
    c_f = 0.76 is the size of CH3NC's factor (a tighter TS raises the threshold, k0 falls)."""
    from scipy.constants import R
    from scipy.integrate import trapezoid

    rate = _rotating_rate(c_f)
    T = np.array([300.0, 600.0])
    z, m = 4e-16, np.array([1e18, 1e22, 1e26])
    plain = strong_collision_falloff(rate, T, m, collision_rate_m3_s=z)
    rot = strong_collision_falloff(rate, T, m, collision_rate_m3_s=z, threshold_shift=1 - 1 / c_f)
    np.testing.assert_allclose(rot.high_pressure_per_s, plain.high_pressure_per_s, rtol=1e-12)
    f = thermal_distribution(rate.reactant, T)
    e, g = rate.energies_J_per_mol, rate.grain_J_per_mol
    delta = 1 - 1 / c_f
    for i, t in enumerate(T):
        x = np.linspace(0.0, 40.0, 8001)                             # E_r / RT
        idx = np.floor((e[None, :] - e[0] + delta * x[:, None] * R * t) / g + 1e-9)
        above = (f[i][None, :] * (idx >= rate.barrier_index)).sum(axis=1)
        expected = z * trapezoid(np.exp(-x) * above, x)
        assert rot.low_pressure_m3_s[i] == pytest.approx(expected, rel=2e-3)
    # the direction of the change: a looser TS (c_f > 1) lowers the threshold of rotating molecules
    assert (rot.low_pressure_m3_s > plain.low_pressure_m3_s).all() == (c_f > 1)
    # the curve runs between its own limits
    assert np.all(rot.rate_per_s <= rot.high_pressure_per_s[:, None] * (1 + 1e-9))
    assert np.all(rot.rate_per_s <= rot.low_pressure_m3_s[:, None] * m[None, :] * (1 + 1e-9))
