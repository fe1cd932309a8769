"""Tests for tstrate.expressions.arrhenius and tstrate.expressions.nasa7."""

from __future__ import annotations

import math

import numpy as np
import pytest

from tstrate.errors import InputError
from tstrate.expressions.arrhenius import ArrheniusFit, fit_arrhenius, fit_arrhenius_split
from tstrate.expressions.nasa7 import (Nasa7Fit, fit_nasa7, nasa7_cp_J_per_mol_K, nasa7_g_J_per_mol,
                                       nasa7_h_J_per_mol, nasa7_s_J_per_mol_K)
from tstrate.units import CM1_J, K_B, R

pytestmark = pytest.mark.fitting     # rerun by .ci/run with 1 and 2 BLAS threads

# Exact synthetic data are recovered to round-off; ln k spans ~20 units, so the least-squares
# solution carries ~1e-13 relative error. 1e-9 leaves a wide margin without hiding a real bug.
EXACT_RTOL = 1e-9


# ============================================================================ Arrhenius

@pytest.mark.parametrize("order, A, Ea_over_R", [
    (1, 3.0e13, 12000.0),     # unimolecular, s^-1
    (2, 4.0e-17, 1500.0),     # bimolecular, m^3 s^-1
    (2, 1.0e-18, -400.0),     # negative activation energy
    (3, 2.0e-45, -1000.0),    # termolecular, m^6 s^-1
])
def test_arrhenius_recovers_exact_parameters(order, A, Ea_over_R):
    T = np.linspace(150.0, 400.0, 26)
    k = A * np.exp(-Ea_over_R / T)
    fit = fit_arrhenius(T, k, order=order)
    assert isinstance(fit, ArrheniusFit)
    assert fit.A == pytest.approx(A, rel=EXACT_RTOL)
    assert fit.Ea_over_R_K == pytest.approx(Ea_over_R, rel=EXACT_RTOL)
    assert fit.Ea_J_per_mol == pytest.approx(Ea_over_R * R, rel=EXACT_RTOL)
    assert fit.n == 0.0 and not fit.modified and fit.order == order
    assert (fit.Tmin_K, fit.Tmax_K, fit.n_points) == (150.0, 400.0, 26)
    assert fit.max_rel_deviation < 1e-10 and fit.rms_rel_deviation < 1e-10
    assert fit.warning is None
    np.testing.assert_allclose(fit.rate(T), k, rtol=1e-10)  # atol 0: most k here lie far below 1e-8


@pytest.mark.parametrize("T0_K", [298.15, 300.0, 1.0])
@pytest.mark.parametrize("A, n, Ea_over_R", [(2.0e-18, 2.5, 800.0), (5.0e-17, -1.3, -250.0)])
def test_modified_arrhenius_recovers_exact_parameters(T0_K, A, n, Ea_over_R):
    T = np.linspace(120.0, 600.0, 40)
    k = A * (T / T0_K) ** n * np.exp(-Ea_over_R / T)
    fit = fit_arrhenius(T, k, order=2, modified=True, T0_K=T0_K)
    assert fit.T0_K == T0_K and fit.modified
    assert fit.A == pytest.approx(A, rel=1e-8)
    assert fit.n == pytest.approx(n, rel=1e-9)
    assert fit.Ea_over_R_K == pytest.approx(Ea_over_R, rel=1e-9)
    assert fit.max_rel_deviation < 1e-9


def test_refit_jpl_oh_ch4():
    # OH + CH4 -> CH3 + H2O, k = 2.45e-12 exp(-1775/T) cm3 molecule-1 s-1 (JPL Publication 19-5,
    # Burkholder et al. 2019; value as given in the brief / from memory: the search tool found
    # the same expression in several public atmospheric-model rate files, not the JPL text).
    # Values generated at 200-300 K and refitted must give the expression back.
    T = np.arange(200.0, 301.0, 10.0)
    k_SI = 2.45e-12 * np.exp(-1775.0 / T) * 1e-6           # cm3 -> m3
    fit = fit_arrhenius(T, k_SI, order=2)
    assert fit.A_in("cm3 molecule-1 s-1") == pytest.approx(2.45e-12, rel=EXACT_RTOL)
    assert fit.A_in() == pytest.approx(2.45e-12, rel=EXACT_RTOL)     # default unit for order 2
    assert fit.Ea_over_R_K == pytest.approx(1775.0, rel=EXACT_RTOL)
    assert fit.rate(298.0) * 1e6 == pytest.approx(2.45e-12 * math.exp(-1775.0 / 298.0),
                                                  rel=1e-10)


@pytest.mark.parametrize("modified", [False, True])
def test_weighted_fit_matches_scipy_curve_fit(modified):
    # Independent method: scipy's nonlinear least squares on the same weighted ln k objective.
    from scipy.optimize import curve_fit

    rng = np.random.default_rng(7)
    T = np.linspace(180.0, 450.0, 30)
    k = 3e-18 * (T / 298.15) ** 1.2 * np.exp(-900.0 / T) * np.exp(rng.normal(0.0, 0.05, T.size))
    w = rng.uniform(0.2, 3.0, T.size)
    fit = fit_arrhenius(T, k, order=2, modified=modified, weights=w)

    if modified:
        def model(t, lnA, n, e):
            return lnA + n * np.log(t / 298.15) - e / t
        p0 = [math.log(3e-18), 1.0, 900.0]
    else:
        def model(t, lnA, e):
            return lnA - e / t
        p0 = [math.log(3e-18), 900.0]
    popt, _ = curve_fit(model, T, np.log(k), p0=p0, sigma=1.0 / np.sqrt(w), xtol=1e-14,
                        ftol=1e-14, gtol=1e-14, maxfev=20000)
    # curve_fit converges iteratively; 1e-6 is well above its tolerance and far below the noise.
    assert math.log(fit.A) == pytest.approx(popt[0], rel=1e-6)
    assert fit.Ea_over_R_K == pytest.approx(popt[-1], rel=1e-6)
    if modified:
        assert fit.n == pytest.approx(popt[1], rel=1e-6)


def test_zero_weight_leaves_outlier_out_of_the_fit():
    T = np.linspace(200.0, 300.0, 11)
    k = 1e-17 * np.exp(-1000.0 / T)
    k_bad = k.copy()
    k_bad[4] *= 3.0
    w = np.ones_like(T)
    w[4] = 0.0
    fit = fit_arrhenius(T, k_bad, order=2, weights=w)
    assert fit.A == pytest.approx(1e-17, rel=EXACT_RTOL)
    assert fit.Ea_over_R_K == pytest.approx(1000.0, rel=EXACT_RTOL)
    # deviations are reported over all points: the outlier is off by a factor 3 -> |1/3 - 1|
    assert fit.max_rel_deviation == pytest.approx(2.0 / 3.0, rel=1e-9)
    assert fit.warning is not None


def _two_channel(T, A1=1e-17, th1=3000.0, A2=1e-21, th2=300.0):
    """Sum of two Arrhenius terms: strongly curved in 1/T (like tunnelling at low T)."""
    return A1 * np.exp(-th1 / T) + A2 * np.exp(-th2 / T)


def test_warning_on_curvature_points_at_crossover():
    T = np.arange(150.0, 401.0, 5.0)
    fit = fit_arrhenius(T, _two_channel(T), order=2)
    assert fit.max_rel_deviation > 0.05
    # the warning names where ln k curves most (a fact of the data); the split break is the split fit's own
    assert fit.warning is not None and "most curved in 1/T near" in fit.warning and "split" not in fit.warning
    # For ln(A1 e^{-th1 x} + A2 e^{-th2 x}) with x = 1/T the second derivative is
    # (th1 - th2)^2 p (1 - p), p the share of one term: largest where both terms are equal,
    # T_x = (th1 - th2) / ln(A1/A2) = 2700 / ln(1e4) = 293.2 K. The discrete estimate sits on
    # the 5 K grid, so allow one grid step.
    T_x = 2700.0 / math.log(1e4)
    T_named = float(fit.warning.split("near ")[1].split(" K")[0])
    assert abs(T_named - T_x) <= 5.0
    # a looser threshold silences it
    assert fit_arrhenius(T, _two_channel(T), order=2, max_deviation=0.99).warning is None


def test_no_warning_on_mild_noise():
    rng = np.random.default_rng(3)
    T = np.linspace(200.0, 300.0, 21)
    k = 1e-17 * np.exp(-1000.0 / T) * (1.0 + rng.uniform(-0.01, 0.01, T.size))
    assert fit_arrhenius(T, k, order=2).warning is None


def _piecewise_data():
    """Continuous piecewise Arrhenius: E/R = 500 K below 250 K, 2000 K above."""
    T = np.arange(150.0, 401.0, 10.0)
    A_low, A_high = 1e-17, 1e-17 * math.exp(2000.0 / 250.0 - 500.0 / 250.0)
    k = np.where(T <= 250.0, A_low * np.exp(-500.0 / T), A_high * np.exp(-2000.0 / T))
    return T, k, A_low, A_high


def test_split_fit_finds_the_break():
    T, k, A_low, A_high = _piecewise_data()
    single = fit_arrhenius(T, k, order=2)
    assert single.warning is not None
    split = fit_arrhenius_split(T, k, order=2)
    assert split.break_K == 250.0
    assert split.max_rel_deviation < 1e-10
    assert abs(split.jump_at_break) < 1e-10
    assert split.low.Ea_over_R_K == pytest.approx(500.0, rel=EXACT_RTOL)
    assert split.high.Ea_over_R_K == pytest.approx(2000.0, rel=EXACT_RTOL)
    assert split.low.A == pytest.approx(A_low, rel=EXACT_RTOL)
    assert split.high.A == pytest.approx(A_high, rel=EXACT_RTOL)
    assert (split.low.Tmin_K, split.low.Tmax_K, split.high.Tmin_K, split.high.Tmax_K) == \
        (150.0, 250.0, 250.0, 400.0)
    np.testing.assert_allclose(split.rate(T), k, rtol=1e-10)  # atol 0: k is 4e-19 to 3e-18 here


def test_split_fit_with_given_break_and_improves_curved_data():
    T = np.arange(150.0, 401.0, 5.0)
    k = _two_channel(T)
    single = fit_arrhenius(T, k, order=2)
    given = fit_arrhenius_split(T, k, order=2, break_K=290.0)
    auto = fit_arrhenius_split(T, k, order=2)
    assert given.break_K == 290.0
    assert given.max_rel_deviation < single.max_rel_deviation
    assert auto.max_rel_deviation <= given.max_rel_deviation + 1e-15


@pytest.mark.parametrize("kwargs, match", [
    (dict(break_K=100.0), "not inside the data range"),
    (dict(break_K=165.0), "only 2 point"),          # 150, 160 K: modified form needs 3
    (dict(break_K=None, modified=False, temperature_K=[200, 210, 220, 230],
          k_SI=[1e-18, 2e-18, 3e-18, 4e-18]), "too few temperatures to split"),  # 3 a side
])
def test_split_errors(kwargs, match):
    T, k, *_ = _piecewise_data()
    args = dict(temperature_K=T, k_SI=k, order=2, modified=True)
    args.update(kwargs)
    with pytest.raises(InputError, match=match):
        fit_arrhenius_split(**args)


@pytest.mark.parametrize("T, k, kwargs, match", [
    ([200.0, 300.0], [1e-18, 2e-18], dict(modified=True), "need at least 3 points"),
    ([200.0], [1e-18], {}, "need at least 2 points"),
    ([200.0, 250.0, 300.0], [1e-18, 0.0, 2e-18], {}, "must be positive and finite"),
    ([200.0, 250.0, 300.0], [1e-18, -1e-18, 2e-18], {}, "must be positive and finite"),
    ([200.0, 250.0, 300.0], [1e-18, np.nan, 2e-18], {}, "must be positive and finite"),
    ([200.0, 250.0, 300.0], [1e-18, np.inf, 2e-18], {}, "must be positive and finite"),
    ([-200.0, 250.0, 300.0], [1e-18, 1e-18, 2e-18], {}, "temperatures must be positive"),
    ([0.0, 250.0, 300.0], [1e-18, 1e-18, 2e-18], {}, "temperatures must be positive"),
    ([200.0, 250.0], [1e-18, 1e-18, 2e-18], {}, "2 temperatures but 3 rate constants"),
    ([250.0, 250.0, 250.0], [1e-18, 1e-18, 2e-18], {}, "distinct temperatures"),
    ([200.0, 250.0, 300.0], [1e-18, 1e-18, 2e-18], dict(order=4), "order must be 1, 2 or 3"),
    ([200.0, 250.0, 300.0], [1e-18, 1e-18, 2e-18], dict(weights=[1, -1, 1]), "weights must be"),
    ([200.0, 250.0, 300.0], [1e-18, 1e-18, 2e-18], dict(weights=[1, 1]), "2 weights for 3"),
    ([200.0, 250.0, 300.0], [1e-18, 1e-18, 2e-18], dict(weights=[1, 0, 0]), "non-zero weight"),
    ([200.0, 250.0, 300.0], [1e-18, 1e-18, 2e-18], dict(T0_K=0.0), "reference temperature"),
])
def test_arrhenius_errors(T, k, kwargs, match):
    args = dict(order=2)
    args.update(kwargs)
    with pytest.raises(InputError, match=match):
        fit_arrhenius(T, k, **args)


# ============================================================================ NASA 7

def _cantera_species(name):
    ct = pytest.importorskip("cantera")
    gas = ct.Solution("gri30.yaml")     # GRI-Mech 3.0 thermo data bundled with Cantera
    return gas.species(name).thermo


def _cantera_tables(thermo, T):
    # Cantera works per kmol: divide by 1000 for per mol.
    cp = np.array([thermo.cp(t) for t in T]) / 1e3
    h = np.array([thermo.h(t) for t in T]) / 1e3
    s = np.array([thermo.s(t) for t in T]) / 1e3
    return cp, h, s


@pytest.mark.parametrize("species", ["H2O", "CO2", "CH4"])
def test_nasa7_evaluation_matches_cantera(species):
    # Cantera evaluates the same published GRI-Mech 3.0 coefficients with its own code; both use
    # the CODATA 2018 gas constant, so agreement is at round-off (1e-10 relative).
    thermo = _cantera_species(species)
    c = thermo.coeffs                       # [T_mid, high a1..a7, low a1..a7]
    T_mid, high, low = c[0], c[1:8], c[8:15]
    for coeffs, T in ((low, np.array([250.0, 500.0, 900.0])),
                      (high, np.array([1100.0, 2000.0, 3000.0]))):
        cp, h, s = _cantera_tables(thermo, T)
        assert np.allclose(nasa7_cp_J_per_mol_K(coeffs, T), cp, rtol=1e-10)
        assert np.allclose(nasa7_h_J_per_mol(coeffs, T), h, rtol=1e-10)
        assert np.allclose(nasa7_s_J_per_mol_K(coeffs, T), s, rtol=1e-10)
        assert np.allclose(nasa7_g_J_per_mol(coeffs, T), h - T * s, rtol=1e-10)
    assert T_mid == 1000.0


def test_nasa7_fit_reproduces_cantera_h2o():
    # H2O from GRI-Mech 3.0 (Cantera's gri30.yaml), 200-3500 K: data exactly representable by a
    # 2-range NASA polynomial, so the fit must reproduce Cp, H, S far inside 0.1 % and return
    # (nearly) the published coefficients (GRI's sets are continuous at 1000 K only to ~1e-7,
    # which our exact constraints absorb; 1e-4 relative on coefficients allows for that).
    thermo = _cantera_species("H2O")
    T = np.linspace(200.0, 3500.0, 331)
    cp, h, s = _cantera_tables(thermo, T)
    fit = fit_nasa7(T, cp, h, s)
    assert isinstance(fit, Nasa7Fit)
    assert (fit.Tmin_K, fit.Tmid_K, fit.Tmax_K, fit.n_points) == (200.0, 1000.0, 3500.0, 331)
    assert fit.max_rel_error_cp < 1e-3
    assert fit.max_rel_error_h < 1e-3
    assert fit.max_rel_error_s < 1e-3
    T_fine = np.linspace(200.0, 3500.0, 1001)        # between the data points too
    cp_f, h_f, s_f = _cantera_tables(thermo, T_fine)
    assert np.allclose(fit.cp_J_per_mol_K(T_fine), cp_f, rtol=1e-3)
    assert np.allclose(fit.h_J_per_mol(T_fine), h_f, rtol=1e-3)
    assert np.allclose(fit.s_J_per_mol_K(T_fine), s_f, rtol=1e-3)
    c = thermo.coeffs
    # each coefficient on its own (atol=0: np.allclose's default atol of 1e-8 would pass the
    # T^3 and T^4 coefficients, of order 1e-9 and 1e-12, whatever they were); observed <= 5e-7
    np.testing.assert_allclose(fit.low, c[8:15], rtol=1e-4, atol=0)
    np.testing.assert_allclose(fit.high, c[1:8], rtol=1e-4, atol=0)


def _harmonic_tables(T, h_offset=-238.9e3):
    """Ideal gas, rigid nonlinear rotor + harmonic oscillators (Einstein functions).

    Smooth, thermodynamically consistent and not a polynomial. Wavenumbers of H2O's
    fundamentals (1595, 3657, 3756 cm-1, from memory; only the shape matters here).
    """
    theta = np.array([1595.0, 3657.0, 3756.0]) * CM1_J / K_B
    x = theta[None, :] / T[:, None]
    cp = R * (4.0 + np.sum(x**2 * np.exp(x) / np.expm1(x) ** 2, axis=1))
    h = h_offset + R * T * (4.0 + np.sum(x / np.expm1(x), axis=1))
    s = R * (4.0 * np.log(T) - 5.0 + np.sum(x / np.expm1(x) - np.log(-np.expm1(-x)), axis=1))
    return cp, h, s


@pytest.mark.parametrize("h_offset", [-238.9e3, 0.0])
def test_nasa7_fit_smooth_synthetic_within_0p1_percent(h_offset):
    T = np.linspace(200.0, 3000.0, 281)
    cp, h, s = _harmonic_tables(T, h_offset)
    fit = fit_nasa7(T, cp, h, s)
    # brief: Cp, H, S within 0.1 % over the fitted range (checked also between the data points)
    T_fine = np.linspace(200.0, 3000.0, 2001)
    cp_f, h_f, s_f = _harmonic_tables(T_fine, h_offset)
    assert np.max(np.abs(fit.cp_J_per_mol_K(T_fine) / cp_f - 1.0)) < 1e-3
    assert np.max(np.abs(fit.h_J_per_mol(T_fine) / h_f - 1.0)) < 1e-3
    assert np.max(np.abs(fit.s_J_per_mol_K(T_fine) / s_f - 1.0)) < 1e-3
    assert max(fit.max_rel_error_cp, fit.max_rel_error_h, fit.max_rel_error_s) < 1e-3
    assert np.allclose(fit.g_J_per_mol(T_fine), h_f - T_fine * s_f, rtol=1e-3, atol=0.0)


def test_nasa7_continuous_at_midpoint():
    T = np.linspace(200.0, 3000.0, 281)
    fit = fit_nasa7(T, *_harmonic_tables(T))
    Tm = fit.Tmid_K
    # the constraints hold to round-off (values ~1e1-1e5: 1e-10 relative)
    for func in (nasa7_cp_J_per_mol_K, nasa7_h_J_per_mol, nasa7_s_J_per_mol_K, nasa7_g_J_per_mol):
        assert func(fit.low, Tm) == pytest.approx(func(fit.high, Tm), rel=1e-10)


def test_nasa7_polynomial_is_thermodynamically_consistent():
    # Independent numerical check of the evaluation formulas: dH/dT = Cp and dS/dT = Cp/T,
    # central differences with step 1e-3 K (truncation ~1e-9 relative).
    T = np.linspace(200.0, 3000.0, 281)
    fit = fit_nasa7(T, *_harmonic_tables(T))
    d = 1e-3
    for Tc in (300.0, 700.0, 1500.0, 2500.0):
        dh = (fit.h_J_per_mol(Tc + d) - fit.h_J_per_mol(Tc - d)) / (2 * d)
        ds = (fit.s_J_per_mol_K(Tc + d) - fit.s_J_per_mol_K(Tc - d)) / (2 * d)
        assert dh == pytest.approx(fit.cp_J_per_mol_K(Tc), rel=1e-6)
        assert ds == pytest.approx(fit.cp_J_per_mol_K(Tc) / Tc, rel=1e-6)


def test_nasa7_cold_range_with_own_midpoint():
    # A cold atmospheric range needs its own common temperature.
    T = np.linspace(100.0, 400.0, 61)
    cp, h, s = _harmonic_tables(T)
    with pytest.raises(InputError, match="not inside the data range"):
        fit_nasa7(T, cp, h, s)
    fit = fit_nasa7(T, cp, h, s, T_mid_K=250.0)
    assert fit.Tmid_K == 250.0
    assert max(fit.max_rel_error_cp, fit.max_rel_error_h, fit.max_rel_error_s) < 1e-3


@pytest.mark.parametrize("mutate, kwargs, match", [
    (lambda T, cp, h, s: (T, cp[:-1], h, s), {}, "values for .* temperatures"),
    (lambda T, cp, h, s: (T, cp, h, np.where(T > 500, np.nan, s)), {}, "must be finite"),
    (lambda T, cp, h, s: (T, -cp, h, s), {}, "heat capacities must be positive"),
    (lambda T, cp, h, s: (np.where(T < 300, -T, T), cp, h, s), {}, "temperatures must be positive"),
    (lambda T, cp, h, s: (T, cp, h, s), dict(T_mid_K=5000.0), "not inside the data range"),
    (lambda T, cp, h, s: (T, cp, h, s), dict(T_mid_K=215.0), "need at least 5"),
    (lambda T, cp, h, s: (T, cp, h, s), dict(quantity_weights=(1, 0, 1)), "quantity_weights"),
])
def test_nasa7_fit_errors(mutate, kwargs, match):
    T = np.linspace(200.0, 3000.0, 281)
    args = mutate(T, *_harmonic_tables(T))
    with pytest.raises(InputError, match=match):
        fit_nasa7(*args, **kwargs)


def test_nasa7_evaluation_rejects_wrong_coefficient_count():
    with pytest.raises(InputError, match="7 coefficients"):
        nasa7_cp_J_per_mol_K([1.0, 2.0, 3.0], 300.0)
