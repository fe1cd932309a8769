"""Chebyshev rate expressions (tstrate.expressions.chebyshev.fit_chebyshev / ChebyshevFit).

References outside the project:
- the definition of the Chebyshev polynomials of the first kind, T_n(cos t) = cos(n t)
  (Abramowitz and Stegun, Handbook of Mathematical Functions, 1964, eq. 22.3.15), written
  out here independently of numpy's implementation;
- the reduced variables of Venkatesh, Chang, Dean, Cohen and Carr, AIChE J. 43, 1331 (1997),
  as documented for Cantera's Chebyshev reaction rate;
- Cantera (reference library, test-only) evaluating the same coefficients.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from tstrate.errors import InputError
from tstrate.expressions.chebyshev import ChebyshevFit, fit_chebyshev

pytestmark = pytest.mark.fitting     # rerun by .ci/run with 1 and 2 BLAS threads

T_GRID = np.arange(150.0, 301.0, 10.0)                 # the demo study's temperatures [K]
P_GRID = np.array([0.1, 0.3, 1, 3, 10, 30, 100, 300, 1e3, 3e3, 1e4, 3e4, 1e5])  # [Pa]


def _cheb_T(n, x):
    """T_n(x) = cos(n arccos x) for |x| <= 1 (Abramowitz and Stegun 22.3.15)."""
    return np.cos(n * np.arccos(np.clip(x, -1.0, 1.0)))


def _reduced(value, lo, hi):
    return (2 * value - lo - hi) / (hi - lo)


def _log10k_by_definition(coeffs, T, P=None):
    """Venkatesh et al. (1997): log10 k = sum a_tp T_t(T~) T_p(P~), T~ from 1/T, P~ from log P."""
    coeffs = np.asarray(coeffs, float)
    x = _reduced(1 / np.asarray(T, float), 1 / T.min(), 1 / T.max())
    if P is None:
        return sum(coeffs[t, 0] * _cheb_T(t, x) for t in range(coeffs.shape[0]))
    y = _reduced(np.log(P), math.log(P.min()), math.log(P.max()))
    X, Y = np.meshgrid(x, y, indexing="ij")
    return sum(coeffs[t, p] * _cheb_T(t, X) * _cheb_T(p, Y)
               for t in range(coeffs.shape[0]) for p in range(coeffs.shape[1]))


# invented coefficients of log10 k in SI (a unimolecular k near 1e-16 s-1 at mid range)
A_1D = np.array([[-16.5], [4.2], [0.75], [0.12], [0.018], [0.001]])
A_2D = np.array([[-16.5, 0.3, -0.05], [4.2, 0.1, -0.02], [0.75, 0.04, 0.01], [0.12, -0.01, 0.003]])


def test_recovers_a_known_temperature_polynomial_exactly():
    k = 10 ** _log10k_by_definition(A_1D, T_GRID)
    fit = fit_chebyshev(T_GRID, k, order=1, n_temperature=6)
    # exact data, least squares on a well-conditioned Chebyshev basis: rounding only
    np.testing.assert_allclose(fit.coefficients, A_1D, atol=1e-10)
    assert fit.max_rel_deviation < 1e-10 and fit.rms_rel_deviation < 1e-10
    assert (fit.Tmin_K, fit.Tmax_K, fit.n_points) == (150.0, 300.0, 16)
    assert fit.Pmin_Pa is None and not fit.pressure_dependent and fit.n_pressure == 1
    # evaluation: pressure is ignored; values between the grid points follow the definition
    T_mid = np.array([155.0, 234.5, 299.0])
    T_all = np.concatenate([[150.0], T_mid, [300.0]])
    expected = _log10k_by_definition(A_1D, T_all)[1:-1]
    np.testing.assert_allclose(fit.log10_rate(T_mid), expected, atol=1e-10)
    assert fit.rate(200.0, 1e5) == pytest.approx(fit.rate(200.0), rel=1e-14)


def test_recovers_a_known_temperature_pressure_polynomial_exactly():
    k = 10 ** _log10k_by_definition(A_2D, T_GRID, P_GRID)
    fit = fit_chebyshev(T_GRID, k, order=1, n_temperature=4, pressure_Pa=P_GRID, n_pressure=3)
    np.testing.assert_allclose(fit.coefficients, A_2D, atol=1e-10)
    assert fit.max_rel_deviation < 1e-10
    assert (fit.Pmin_Pa, fit.Pmax_Pa, fit.n_points) == (0.1, 1e5, 16 * 13)
    # ends of the ranges map to -1 and +1 (the reduced-variable definitions)
    assert fit.reduced_temperature(150.0) == pytest.approx(-1.0)
    assert fit.reduced_temperature(300.0) == pytest.approx(1.0)
    assert fit.reduced_pressure(0.1) == pytest.approx(-1.0)
    assert fit.reduced_pressure(1e5) == pytest.approx(1.0)
    np.testing.assert_allclose(fit.rate(T_GRID[:, None], P_GRID[None, :]), k, rtol=1e-9)
    with pytest.raises(InputError, match="depends on pressure"):
        fit.rate(200.0)


def test_more_terms_than_the_data_shape_need_still_fit_exactly():
    # a degree-3 polynomial fitted with 6 terms: the extra coefficients come out zero
    k = 10 ** _log10k_by_definition(A_1D[:4], T_GRID)
    fit = fit_chebyshev(T_GRID, k, order=1, n_temperature=6)
    np.testing.assert_allclose(fit.coefficients[:4], A_1D[:4], atol=1e-9)
    np.testing.assert_allclose(fit.coefficients[4:], 0.0, atol=1e-9)


@pytest.mark.parametrize("order, unit, shift", [
    (1, "s-1", 0.0),                                 # same unit
    (2, "cm3 molecule-1 s-1", 6.0),                  # 1 m3 = 1e6 cm3
    (3, "cm6 molecule-2 s-1", 12.0),                 # 1 m6 = 1e12 cm6
    (2, "m3 mol-1 s-1", math.log10(6.02214076e23)),  # N_A (CODATA 2018, exact)
])
def test_a_unit_change_shifts_only_the_first_coefficient(order, unit, shift):
    k = 10 ** _log10k_by_definition(A_2D, T_GRID, P_GRID)
    fit = fit_chebyshev(T_GRID, k, order=order, n_temperature=4, pressure_Pa=P_GRID, n_pressure=3)
    c = fit.coefficients_in(unit)
    assert c[0, 0] == pytest.approx(fit.coefficients[0, 0] + shift, abs=1e-12)
    np.testing.assert_array_equal(c.ravel()[1:], fit.coefficients.ravel()[1:])


def test_evaluation_agrees_with_cantera():
    """Cantera's ChebyshevRate with the same coefficients (no unit conversion when built
    directly) gives the same k to 1e-8 relative, inside and outside the fitted ranges."""
    ct = pytest.importorskip("cantera")
    rng = np.random.default_rng(1)
    k = 10 ** (_log10k_by_definition(A_2D, T_GRID, P_GRID) + 0.01 * rng.standard_normal((16, 13)))
    fit = fit_chebyshev(T_GRID, k, order=1, n_temperature=4, pressure_Pa=P_GRID, n_pressure=3)
    rate = ct.ChebyshevRate(temperature_range=(fit.Tmin_K, fit.Tmax_K),
                            pressure_range=(fit.Pmin_Pa, fit.Pmax_Pa), data=fit.coefficients)
    for T in (150.0, 173.3, 222.0, 300.0):
        for P in (0.1, 7.0, 2.5e3, 1e5):
            assert fit.rate(T, P) == pytest.approx(rate(T, P), rel=1e-8), (T, P)
    # one pressure column: Cantera's value does not depend on the pressure either
    fit1 = fit_chebyshev(T_GRID, k[:, 0], order=1, n_temperature=5)
    rate1 = ct.ChebyshevRate(temperature_range=(150.0, 300.0), pressure_range=(1e-30, 1e30),
                             data=fit1.coefficients)
    for T in (150.0, 211.0, 300.0):
        for P in (1e-3, 1e5, 1e9):
            assert fit1.rate(T) == pytest.approx(rate1(T, P), rel=1e-8), (T, P)


def test_noisy_data_gives_the_least_squares_deviation():
    rng = np.random.default_rng(7)
    noise = 0.002 * rng.standard_normal(T_GRID.size)        # +-0.5 % in k
    k = 10 ** (_log10k_by_definition(A_1D, T_GRID) + noise)
    fit = fit_chebyshev(T_GRID, k, order=1, n_temperature=6)
    rel = fit.rate(T_GRID) / k - 1
    assert fit.max_rel_deviation == pytest.approx(np.max(np.abs(rel)), rel=1e-9)
    assert fit.rms_rel_deviation == pytest.approx(np.sqrt(np.mean(rel**2)), rel=1e-9)
    assert fit.warning is None
    strict = fit_chebyshev(T_GRID, k, order=1, n_temperature=6, max_deviation=1e-5)
    assert "Chebyshev fit (6 x 1 terms) deviates" in strict.warning


@pytest.mark.parametrize("kwargs, message", [
    (dict(temperature_K=T_GRID[:4], k_SI=np.ones(4), n_temperature=6),
     "4 temperature.s. cannot fit 6 Chebyshev temperature terms"),
    (dict(temperature_K=T_GRID, k_SI=np.ones((16, 2)), pressure_Pa=[1e3, 1e4], n_pressure=4),
     "2 pressure.s. cannot fit 4 Chebyshev pressure terms"),
    (dict(temperature_K=T_GRID, k_SI=-np.ones(16)), "must be positive and finite"),
    (dict(temperature_K=T_GRID, k_SI=np.r_[np.ones(15), np.nan]), "must be positive and finite"),
    (dict(temperature_K=[200.0], k_SI=[1.0], n_temperature=1), "zero width"),
    (dict(temperature_K=T_GRID, k_SI=np.ones((16, 1)), pressure_Pa=[1e5], n_pressure=1),
     "zero width"),
    (dict(temperature_K=[200.0, 200.0, 250.0], k_SI=np.ones(3), n_temperature=2), "repeated"),
    (dict(temperature_K=T_GRID, k_SI=np.ones(15)), "16 temperatures but rate constants of shape"),
    (dict(temperature_K=T_GRID, k_SI=np.ones((13, 16)), pressure_Pa=P_GRID),
     "shape .13, 16. for 16 temperatures x 13 pressures"),
    (dict(temperature_K=T_GRID, k_SI=np.ones(16), n_temperature=0), "positive whole number"),
    (dict(temperature_K=T_GRID, k_SI=np.ones(16), order=4), "reaction order must be 1, 2 or 3"),
])
def test_bad_input_is_a_one_line_input_error(kwargs, message):
    kwargs = {"order": 1, **kwargs}
    with pytest.raises(InputError, match=message) as info:
        fit_chebyshev(**kwargs)
    assert "\n" not in str(info.value)


def test_too_few_points_suggests_fewer_terms():
    with pytest.raises(InputError) as info:
        fit_chebyshev(T_GRID[:4], np.ones(4), order=1, n_temperature=6)
    assert "at most 4 temperature terms" in info.value.hint


def test_result_is_read_only():
    fit = fit_chebyshev(T_GRID, 10 ** _log10k_by_definition(A_1D, T_GRID), order=1)
    assert isinstance(fit, ChebyshevFit)
    with pytest.raises(ValueError):
        fit.coefficients[0, 0] = 0.0
