"""Tests of tstrate.physics.tunnelling.

Independent references used here:
* the Eckart transmission probability from a direct numerical solution of the
  1-D Schrodinger equation for the Eckart potential (complex ODE integrated
  with scipy.integrate.solve_ivp, written below, sharing no code with the
  production formula), and kappa from that P(E) with scipy.integrate.quad;
* the Wigner and Skodje-Truhlar closed forms evaluated by hand;
* the thermal average of the truncated parabolic transmission (R. P. Bell, Trans.
  Faraday Soc. 55, 1 (1959); R. T. Skodje and D. G. Truhlar, J. Phys. Chem. 85, 624
  (1981)) by scipy.integrate.quad, written from the definition;
* adaptive quadrature (scipy.integrate.quad) of the Eckart thermal average,
  to check the fixed vectorised quadrature.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import constants as sc
from scipy.integrate import quad, solve_ivp
from scipy.interpolate import CubicSpline
from scipy.optimize import minimize_scalar
from scipy.special import expit

from tstrate.errors import InputError
from tstrate.physics import tunnelling as tn

R = sc.R                      # J/(mol K)
KJ = 1e3                      # J/mol per kJ/mol
#: h c * (1 cm^-1) * N_A [J/mol], i.e. one wavenumber as a molar energy
CM1_J_PER_MOL = sc.h * sc.c * 100.0 * sc.N_A


# ---------------------------------------------------------------------------
# independent references
# ---------------------------------------------------------------------------

def schrodinger_transmission(energy_J_per_mol, imag_freq_cm1, V1, V2, *, mass_amu=1.0,
                             s_edge=40.0, rtol=1e-11):
    """Transmission probability through the Eckart potential by direct integration.

    V(x) = A y/(1+y) + B y/(1+y)^2, y = exp(2 pi x / L), with A = V1 - V2 and
    B = (sqrt V1 + sqrt V2)^2 (maximum V1 above the left asymptote, V2 above the
    right one). The length L follows from the imaginary frequency: the
    curvature at the top is found numerically (maximum by minimize_scalar,
    second derivative by a 5-point finite difference) and set equal to
    m omega^2 for the chosen mass (any mass; only L sqrt(m) matters).

    With s = 2 pi x / L: psi'' = g (V(s) - E) psi, g = 2 m / hbar^2 (L / 2 pi)^2.
    Start on the right (products) with a purely outgoing wave exp(i k2 s),
    integrate to the left, split there into exp(+i k1 s) (incident) and
    exp(-i k1 s) (reflected); P = (k2/k1) / |incident amplitude|^2.
    Integrating from the transmitted side keeps the growing solution under
    the barrier, so deep tunnelling stays accurate. Energies in J/mol from the
    left asymptote; all energies are solved in one vectorised solve_ivp call.
    """
    E = np.atleast_1d(np.asarray(energy_J_per_mol, dtype=float)) / sc.N_A  # J per molecule
    v1, v2 = V1 / sc.N_A, V2 / sc.N_A
    A = v1 - v2
    B = (math.sqrt(v1) + math.sqrt(v2)) ** 2

    def V(s):
        t = expit(s)                     # y/(1+y)
        return A * t + B * t * (1.0 - t)  # y/(1+y)^2 = t (1 - t)

    top = minimize_scalar(lambda s: -V(s), bounds=(-30.0, 30.0), method="bounded",
                          options={"xatol": 1e-12}).x
    h = 1e-2
    d2V_ds2 = (-V(top + 2 * h) + 16 * V(top + h) - 30 * V(top) + 16 * V(top - h)
               - V(top - 2 * h)) / (12 * h * h)
    m = mass_amu * sc.physical_constants["atomic mass constant"][0]
    omega = 2.0 * math.pi * sc.c * 100.0 * imag_freq_cm1
    L = 2.0 * math.pi * math.sqrt(-d2V_ds2 / (m * omega ** 2))
    g = 2.0 * m / sc.hbar ** 2 * (L / (2.0 * math.pi)) ** 2
    k1 = np.sqrt(g * E)
    k2 = np.sqrt(g * (E - A))
    n = E.size

    def rhs(s, y):
        return np.concatenate([y[n:], g * (V(s) - E) * y[:n]])

    s_right, s_left = s_edge, -s_edge
    y0 = np.concatenate([np.exp(1j * k2 * s_right), 1j * k2 * np.exp(1j * k2 * s_right)])
    sol = solve_ivp(rhs, (s_right, s_left), y0, method="DOP853", rtol=rtol, atol=1e-30)
    assert sol.success
    psi, dpsi = sol.y[:n, -1], sol.y[n:, -1]
    incident = (1j * k1 * psi + dpsi) / (2j * k1) * np.exp(-1j * k1 * s_left)
    return (k2 / k1) / np.abs(incident) ** 2


def eckart_reference_quad(temperature_K, imag_freq_cm1, V1, V2, energy_floor=None):
    """Eckart kappa by adaptive quadrature, one temperature at a time.

    Uses the production P(E) (this checks the thermal average only). The
    peak of the integrand is located on a dense grid and passed to quad as
    a break point together with the barrier top; the tail beyond 60 RT above
    the top is added with a second quad call.
    """
    E0 = max(0.0, V1 - V2)
    if energy_floor is not None:
        E0 = max(E0, energy_floor)
    out = []
    for T in np.atleast_1d(temperature_K):
        beta = 1.0 / (R * T)

        def log_f(E):
            return (tn.eckart_log_transmission(E, imag_freq_cm1, V1, V2)
                    - beta * (E - V1) + math.log(beta))

        top = max(V1, E0)
        hi = top + 60.0 / beta
        grid = np.linspace(E0, hi, 4001)[1:]
        lg = log_f(grid)
        peak, log_max = grid[np.argmax(lg)], np.max(lg)

        def f(E):
            return math.exp(log_f(E) - log_max)

        points = sorted({peak} | ({V1} if E0 < V1 < hi else set()))
        main, _ = quad(f, E0, hi, points=points, epsabs=0.0, epsrel=1e-12, limit=500)
        tail, _ = quad(f, hi, np.inf, epsabs=0.0, epsrel=1e-10)
        out.append(math.log(main + tail) + log_max)
    return np.exp(np.array(out))


# ---------------------------------------------------------------------------
# Eckart P(E) against the Schrodinger equation
# ---------------------------------------------------------------------------

# (imaginary wavenumber [cm^-1], V1 [J/mol], V2 [J/mol], energies [J/mol]):
# below, at and above the top; exoergic, endoergic, and a small barrier for
# its curvature (4 alpha1 alpha2 / pi^2 = 0.42 < 1: the cos branch of the d term).
P_CASES = [
    pytest.param(2000.0, 80 * KJ, 100 * KJ, [5e3, 20e3, 40e3, 60e3, 75e3, 80e3, 85e3, 100e3, 150e3],
                 id="exoergic-2000cm1-80-100kJ"),
    pytest.param(1500.0, 60 * KJ, 30 * KJ, [30.5e3, 40e3, 55e3, 60e3, 70e3, 120e3],
                 id="endoergic-1500cm1-60-30kJ"),
    pytest.param(2500.0, 120 * KJ, 120 * KJ, [10e3, 60e3, 100e3, 120e3, 130e3],
                 id="symmetric-2500cm1-120kJ"),
    pytest.param(2000.0, 3 * KJ, 5 * KJ, [0.5e3, 2e3, 3e3, 5e3, 10e3],
                 id="small-barrier-cos-branch-2000cm1-3-5kJ"),
]


@pytest.mark.parametrize("nu, V1, V2, energies", P_CASES)
def test_eckart_transmission_matches_schrodinger_equation(nu, V1, V2, energies):
    P_ode = schrodinger_transmission(energies, nu, V1, V2)
    P = tn.eckart_transmission(energies, nu, V1, V2)
    # Tolerance 1e-6 relative: the ODE is integrated to rtol 1e-11 but the
    # error grows with the number of e-folds under the barrier (P down to
    # 1e-13 here), and the finite-difference curvature carries ~1e-9.
    np.testing.assert_allclose(P, P_ode, rtol=1e-6, atol=0)


def test_cos_branch_case_really_is_below_the_switch():
    # alpha_i = 2 pi V_i / (h c nu); the d term switches at 4 alpha1 alpha2 / pi^2 = 1
    nu, V1, V2 = 2000.0, 3 * KJ, 5 * KJ
    a1, a2 = (2 * math.pi * V / (nu * CM1_J_PER_MOL) for V in (V1, V2))
    assert 4 * a1 * a2 / math.pi ** 2 < 1


def test_schrodinger_reference_does_not_depend_on_the_mass():
    # sanity check of the reference itself: only L sqrt(m) enters
    E = [20e3, 80e3]
    a = schrodinger_transmission(E, 2000.0, 80 * KJ, 100 * KJ, mass_amu=1.0)
    b = schrodinger_transmission(E, 2000.0, 80 * KJ, 100 * KJ, mass_amu=7.0)
    np.testing.assert_allclose(a, b, rtol=1e-7)


def test_transmission_zero_below_higher_asymptote_and_bounded():
    nu, V1, V2 = 1500.0, 60 * KJ, 30 * KJ          # product asymptote at +30 kJ/mol
    E = np.array([-5e3, 0.0, 10e3, 29.9e3, 30e3])
    assert np.all(tn.eckart_transmission(E, nu, V1, V2) == 0.0)
    E = np.linspace(30.001e3, 2e6, 2000)
    P = tn.eckart_transmission(E, nu, V1, V2)
    assert np.all((P > 0) & (P <= 1))
    assert P[-1] == pytest.approx(1.0, abs=1e-12)
    # exoergic direction: nothing below the reactant asymptote
    assert tn.eckart_transmission(-1.0, nu, 30 * KJ, 60 * KJ) == 0.0


def test_transmission_huge_arguments_do_not_overflow():
    # 50 cm^-1 and 200 kJ/mol barriers: cosh arguments of several thousand
    P = tn.eckart_transmission([1e3, 150e3, 199e3, 200e3, 201e3, 1e6], 50.0, 200 * KJ, 200 * KJ)
    assert np.all(np.isfinite(P))
    assert P[0] == 0.0 or P[0] < 1e-300
    assert P[3] == pytest.approx(0.5, abs=0.05)   # about 1/2 at the top of a broad barrier
    assert P[-1] == pytest.approx(1.0, abs=1e-12)


# ---------------------------------------------------------------------------
# Eckart kappa against kappa from the Schrodinger-equation P(E)
# ---------------------------------------------------------------------------

def kappa_from_schrodinger(temperatures_K, nu, V1, V2, n_energies=200):
    """Kappa from P(E) of :func:`schrodinger_transmission`, integrated with quad.

    P is solved on a grid uniform in s = sqrt(E - E0) (E0 = higher asymptote)
    up to V1 + 40 RT at the highest temperature (beyond, the Boltzmann factor
    is below exp(-40) of its value at the top); log(P/s) is smooth in s
    (P ~ s at threshold) and is interpolated with a cubic spline (extrapolated
    over the first grid step down to threshold). For each temperature quad
    integrates 2 s beta exp(beta (V1 - E)) P(E), E = E0 + s^2, over the range
    where the integrand is within exp(-40) of its peak.
    """
    E0 = max(0.0, V1 - V2)
    E_max = max(V1, E0) + 40.0 * R * max(temperatures_K)
    s = np.linspace(0.0, math.sqrt(E_max - E0), n_energies + 1)[1:]
    P = schrodinger_transmission(E0 + s * s, nu, V1, V2, rtol=1e-10)
    spline = CubicSpline(s, np.log(P / s))
    out = []
    for T in temperatures_K:
        beta = 1.0 / (R * T)

        def log_f(x, beta=beta):
            # log of 2 s beta exp(beta (V1 - E)) P(E)
            return spline(x) + 2.0 * np.log(x) - beta * (E0 + x * x - V1) + math.log(2.0 * beta)

        xs = np.linspace(0.0, s[-1], 20001)[1:]
        lg = log_f(xs)
        peak, log_max = xs[np.argmax(lg)], np.max(lg)
        keep = xs[lg > log_max - 40.0]
        lo, hi = max(0.0, keep[0] - xs[0]), min(s[-1], keep[-1] + xs[0])

        def f(x):
            return math.exp(float(log_f(x)) - log_max) if x > 0 else 0.0

        val, _ = quad(f, lo, hi, points=[peak], epsabs=0.0, epsrel=1e-9, limit=200)
        out.append(val * math.exp(log_max))
    return np.array(out)


KAPPA_CASES = [
    # kappa(150 K) ~ 3e6 (deep tunnelling)
    pytest.param(1500.0, 50 * KJ, 50 * KJ, id="symmetric-1500cm1-50kJ"),
    # kappa(150 K) ~ 3e14
    pytest.param(2000.0, 80 * KJ, 100 * KJ, id="exoergic-2000cm1-80-100kJ"),
    # endoergic, kappa(150 K) ~ 1e4..1e5
    pytest.param(2500.0, 70 * KJ, 40 * KJ, id="endoergic-2500cm1-70-40kJ"),
]


@pytest.mark.parametrize("nu, V1, V2", KAPPA_CASES)
def test_eckart_kappa_matches_schrodinger_kappa(nu, V1, V2):
    T = np.array([150.0, 200.0, 300.0, 500.0, 1000.0])
    ref = kappa_from_schrodinger(T, nu, V1, V2)
    k = tn.eckart(T, nu, V1, V2)
    assert k[0] > 1e4                      # the deep-tunnelling regime is really tested
    # Tolerance 1e-5 relative: P from the ODE agrees with the formula to ~1e-7
    # on these grids (ODE rtol 1e-10, finite-difference curvature), the spline
    # of log(P/s) on 200 points adds ~1e-7; observed differences ~1e-7.
    np.testing.assert_allclose(k, ref, rtol=1e-5)


# ---------------------------------------------------------------------------
# fast quadrature against scipy.integrate.quad
# ---------------------------------------------------------------------------

QUAD_CASES = [
    pytest.param(2000.0, 80 * KJ, 100 * KJ, None, id="exoergic-2000cm1-80-100kJ"),
    pytest.param(1500.0, 50 * KJ, 50 * KJ, None, id="symmetric-1500cm1-50kJ"),
    pytest.param(2500.0, 150 * KJ, 60 * KJ, None, id="endoergic-2500cm1-150-60kJ"),
    pytest.param(2500.0, 100 * KJ, 150 * KJ, None, id="exoergic-2500cm1-100-150kJ"),
    pytest.param(300.0, 100 * KJ, 100 * KJ, None, id="broad-300cm1-100kJ-sharp-top"),
    pytest.param(1800.0, 60 * KJ, 80 * KJ, 15 * KJ, id="floor-15kJ-above-complex"),
    pytest.param(1800.0, 60 * KJ, 80 * KJ, 70 * KJ, id="floor-above-barrier-top"),
]


@pytest.mark.parametrize("nu, V1, V2, floor", QUAD_CASES)
def test_fast_quadrature_matches_adaptive_quad(nu, V1, V2, floor):
    T = np.linspace(150.0, 1000.0, 18)
    ref = eckart_reference_quad(T, nu, V1, V2, floor)
    k = tn.eckart(T, nu, V1, V2, floor)
    np.testing.assert_allclose(k, ref, rtol=1e-6)   # required accuracy of the fast path


def test_floor_below_higher_asymptote_changes_nothing_and_higher_floor_lowers_kappa():
    T = np.array([150.0, 250.0, 400.0])
    nu, V1, V2 = 1800.0, 60 * KJ, 40 * KJ        # higher asymptote at +20 kJ/mol
    default = tn.eckart(T, nu, V1, V2)
    np.testing.assert_array_equal(tn.eckart(T, nu, V1, V2, energy_floor_J_per_mol=-1e4), default)
    np.testing.assert_array_equal(tn.eckart(T, nu, V1, V2, energy_floor_J_per_mol=20 * KJ), default)
    raised = tn.eckart(T, nu, V1, V2, energy_floor_J_per_mol=35 * KJ)
    assert np.all(raised < default)


def test_log_and_linear_forms_agree_and_shape_is_kept():
    T = np.array([[150.0, 200.0], [300.0, 600.0]])
    for model in tn.MODELS:
        k = tn.kappa(model, T, 1700.0, 70 * KJ, 90 * KJ)
        assert k.shape == T.shape
        np.testing.assert_allclose(np.log(k), tn.log_kappa(model, T, 1700.0, 70 * KJ, 90 * KJ),
                                   rtol=1e-13, atol=1e-13)
    assert tn.kappa("eckart", 200.0, 1700.0, 70 * KJ, 90 * KJ).shape == ()


def test_log_kappa_stays_finite_where_kappa_overflows():
    # 20 K, 200 kJ/mol: exp(V1/RT) ~ exp(1200) is beyond the float range
    lk = tn.log_kappa("eckart", 20.0, 3000.0, 200 * KJ, 200 * KJ)
    assert np.isfinite(lk) and lk > 709
    assert np.isinf(tn.kappa("eckart", 20.0, 3000.0, 200 * KJ, 200 * KJ))


# ---------------------------------------------------------------------------
# Wigner and Skodje-Truhlar closed forms by hand
# ---------------------------------------------------------------------------

def test_wigner_by_hand():
    # nu = 1000 cm^-1, T = 300 K. h c / k = 1.438776877 cm K (CODATA 2018, exact).
    # u = h c nu / kT = 1438.776877 / 300 = 4.795922925
    # u^2 = 23.00087670; u^2 / 24 = 0.9583698626; kappa = 1.9583698626
    assert tn.wigner(300.0, 1000.0) == pytest.approx(1.9583698626, rel=1e-9)


def test_skodje_truhlar_closed_form_by_hand_high_temperature_branch():
    # nu = 1000 cm^-1, T = 300 K, V1 = 50 kJ/mol, V2 = 60 kJ/mol (exoergic: V = 0)
    # h c nu N_A = 11962.657 J/mol; alpha = 2 pi / 11962.657 = 5.2523328e-4 mol/J
    # beta = 1/(8.3144626 * 300) = 4.0090785e-4 mol/J; beta/alpha = 0.76329484 (< 1)
    # pi beta/alpha = 2.3979615; sin(2.3979615) = 0.67696498; ratio = 3.5422238
    # beta/(alpha - beta) = 3.2246650; (beta - alpha)(V0 - V) = -6.2162713; exp = 1.9966763e-3
    # kappa = 3.5422238 - 3.2246650 * 1.9966763e-3 = 3.5357852
    k = tn.skodje_truhlar_closed_form(300.0, 1000.0, 50 * KJ, 60 * KJ)
    assert k == pytest.approx(3.5357852, rel=1e-7)
    # the exact average differs by terms of order exp(-(2 - x) a) = exp(-32) here
    assert tn.skodje_truhlar(300.0, 1000.0, 50 * KJ, 60 * KJ) == pytest.approx(3.5357852, rel=1e-7)


def test_skodje_truhlar_closed_form_by_hand_low_temperature_branch():
    # nu = 1000 cm^-1, T = 150 K, same barriers; beta = 8.0181570e-4 mol/J > alpha
    # beta/(beta - alpha) = 2.8990118; (beta - alpha) V0 = 13.829121; exp = 1.0137037e6
    # kappa = 2.8990118 * (1.0137037e6 - 1) = 2.9387359e6
    k = tn.skodje_truhlar_closed_form(150.0, 1000.0, 50 * KJ, 60 * KJ)
    assert k == pytest.approx(2.9387359e6, rel=1e-7)
    # the exact average also counts the flux above the top, which this branch drops:
    # x [pi / sin(pi x) + 1/(x - 1)] with x = beta/alpha = 1.5265897, sin(pi x) = -0.99651307:
    # 1.5265897 * (-3.1525855 + 1.8990117) = -1.9136927 (the k = 2 term, x exp((x-2) a)/(x-2) ~ 1.3e-5, is next)
    exact = tn.skodje_truhlar(150.0, 1000.0, 50 * KJ, 60 * KJ)
    assert exact - k == pytest.approx(-1.9136927, rel=2e-5)


def test_skodje_truhlar_endoergic_uses_the_reverse_barrier_depth():
    # endoergic: V = V1 - V2, so V0 - V = V2; same as a 30 kJ/mol exoergic depth
    T = np.array([150.0, 300.0])
    a = tn.skodje_truhlar(T, 1200.0, 50 * KJ, 30 * KJ)
    b = tn.skodje_truhlar(T, 1200.0, 50 * KJ, 60 * KJ, energy_floor_J_per_mol=20 * KJ)
    np.testing.assert_allclose(a, b, rtol=1e-14)


def _skodje_truhlar_naive(T, nu, D):
    alpha = 2 * math.pi / (nu * CM1_J_PER_MOL)
    beta = 1 / (R * T)
    if beta < alpha:
        x = beta / alpha
        return math.pi * x / math.sin(math.pi * x) - beta / (alpha - beta) * math.exp((beta - alpha) * D)
    return beta / (beta - alpha) * (math.exp((beta - alpha) * D) - 1)


@pytest.mark.parametrize("ratio", [0.3, 0.6, 0.9, 0.96, 0.968, 0.97, 0.99, 0.999, 1.001, 1.05, 1.5, 3.0])
def test_skodje_truhlar_rearranged_form_equals_the_published_form(ratio):
    # away from beta == alpha the naive published form is accurate to ~1e-12
    nu, D = 1400.0, 40 * KJ
    T_c = nu * CM1_J_PER_MOL / (2 * math.pi * R)       # beta == alpha here
    T = T_c / ratio
    assert tn.skodje_truhlar_closed_form(T, nu, D, D + 1) == pytest.approx(_skodje_truhlar_naive(T, nu, D),
                                                                            rel=1e-9)


def test_skodje_truhlar_is_continuous_through_beta_equal_alpha():
    # both branches tend to alpha (V0 - V) at beta == alpha (limit of the formulas)
    nu, D = 1400.0, 40 * KJ
    alpha = 2 * math.pi / (nu * CM1_J_PER_MOL)
    T_c = nu * CM1_J_PER_MOL / (2 * math.pi * R)
    T = T_c * (1 + np.array([-1e-6, -1e-9, -1e-13, 0.0, 1e-13, 1e-9, 1e-6]))
    k = tn.skodje_truhlar_closed_form(T, nu, D, D)
    assert np.all(np.isfinite(k))
    np.testing.assert_allclose(k, alpha * D, rtol=2e-4)
    # the exact average is alpha D - log(1 + exp(-alpha D)) at beta == alpha (sum of the series)
    exact = tn.skodje_truhlar(T, nu, D, D)
    np.testing.assert_allclose(exact, alpha * D - math.log1p(math.exp(-alpha * D)), rtol=2e-4)
    assert np.all(np.diff(exact) < 0)


def _parabolic_kappa_above_top_quad(T, nu):
    """beta * int_0^inf exp(-beta y) P(y) dy with the parabolic transmission of the Skodje-Truhlar
    model, P(y) = 1 / (1 + exp(-alpha y)) (y = E - V0), by scipy quad (independent of the module)."""
    alpha = 2 * math.pi / (nu * CM1_J_PER_MOL)
    beta = 1 / (R * T)
    val, _ = quad(lambda y: beta * math.exp(-beta * y) * expit(alpha * y), 0.0, math.inf,
                  epsabs=0.0, epsrel=1e-12, limit=500)
    return val


@pytest.mark.parametrize("T_over_Tc", [0.3, 0.6, 0.9, 1.0, 1.2, 2.0, 5.0])
def test_skodje_truhlar_floor_at_the_barrier_top_keeps_the_over_barrier_flux(T_over_Tc):
    # A floor at the barrier top (a submerged TS, see tst.py) leaves no tunnelling, only the flux
    # over the top; the closed forms (derived for V0 - V >> 1/alpha) give 0 there for T < T_c.
    # Reference: the thermal average of the model's own parabolic transmission above the top by
    # quad; it lies between 1/2 (deep cold, P = 1/2 at the top) and 1 (hot). 1e-8: quad ~1e-12.
    nu, V1, V2 = 900.0, 40 * KJ, 50 * KJ
    T = T_over_Tc * nu * CM1_J_PER_MOL / (2 * math.pi * R)
    k = tn.skodje_truhlar(T, nu, V1, V2, energy_floor_J_per_mol=V1)
    ref = _parabolic_kappa_above_top_quad(T, nu)
    assert 0.5 < ref < 1.0
    assert k == pytest.approx(ref, rel=1e-8)


def _truncated_parabola_kappa_quad(T, nu, V1, floor):
    """Thermal average of Bell's parabolic transmission P(E) = 1/(1 + exp(-alpha (E - V1)))
    (R. P. Bell, Trans. Faraday Soc. 55, 1 (1959)) counted from the floor upwards, the model of
    Skodje and Truhlar (J. Phys. Chem. 85, 624 (1981)):
    kappa = beta exp(beta V1) int_floor^inf P(E) exp(-beta E) dE, by scipy quad in y = E - V1,
    with the part below the top scaled by exp(-beta D) so that deep tunnelling does not overflow.
    Returns log kappa. Written here from the definition, sharing no code with the module."""
    alpha = 2 * math.pi / (nu * CM1_J_PER_MOL)
    beta = 1 / (R * T)
    D = V1 - floor
    above, _ = quad(lambda y: beta * math.exp(-beta * y) * expit(alpha * y), 0.0, math.inf,
                    epsabs=0.0, epsrel=1e-13, limit=500)
    if D <= 0:
        return math.log(above)
    # below the top, u = -y in [0, D]: beta exp(beta u) expit(-alpha u) = exp(beta D) * g(u)
    g = lambda u: beta * math.exp(beta * (u - D)) * expit(-alpha * u)  # noqa: E731
    points = [p for p in (D - 1 / beta, D - 10 / beta, D - 40 / beta, 1 / alpha) if 0 < p < D]
    below, _ = quad(g, 0.0, D, points=points or None, epsabs=0.0, epsrel=1e-13, limit=500)
    return float(np.logaddexp(math.log(above), math.log(below) + beta * D))


# (imaginary wavenumber, T, depth of the floor below the top): shallow, crossover and deep
_ST_GRID = [(nu, T, D) for nu in (100.0, 500.0, 2000.0, 3500.0) for T in (30.0, 50.0, 150.0, 300.0, 1000.0)
            for D in (1.0, 100.0, 1 * KJ, 10 * KJ, 50 * KJ)]


@pytest.mark.parametrize("nu, T, D", _ST_GRID)
def test_skodje_truhlar_is_the_exact_truncated_parabola_average(nu, T, D):
    # Reference: quad of the truncated-parabola thermal average (above); 1e-10 relative.
    V1 = 60 * KJ
    got = tn.skodje_truhlar_log(T, nu, V1, V1 + 5 * KJ, energy_floor_J_per_mol=V1 - D)
    assert got == pytest.approx(_truncated_parabola_kappa_quad(T, nu, V1, V1 - D), rel=1e-10, abs=1e-10)


def test_skodje_truhlar_small_depths_quoted_in_the_issue():
    # 2000i cm^-1, 300 K, barrier 50 kJ/mol: floors at 50, 49.999 and 49.9 kJ/mol. The closed form
    # gives 0.642, 4.0e-4, 0.040 (it jumps); the truncated parabola gives 0.642, 0.642, 0.662.
    V1 = 50 * KJ
    floors = np.array([50.0, 49.999, 49.9]) * KJ
    closed = [float(tn.skodje_truhlar_closed_form(300.0, 2000.0, V1, 60 * KJ, energy_floor_J_per_mol=f))
              for f in floors]
    exact = [float(tn.skodje_truhlar(300.0, 2000.0, V1, 60 * KJ, energy_floor_J_per_mol=f)) for f in floors]
    assert closed[1:] == pytest.approx([4.0e-4, 0.040], rel=0.02)
    for f, k in zip(floors, exact):
        assert math.log(k) == pytest.approx(_truncated_parabola_kappa_quad(300.0, 2000.0, V1, f), abs=1e-10)
    assert exact == pytest.approx([0.642, 0.642, 0.662], abs=1e-3)
    # 500i cm^-1, 50 K, 0.1 kJ/mol from floor to top: closed form 0.258, the average 0.733
    args = (50.0, 500.0, V1, 60 * KJ)
    assert tn.skodje_truhlar_closed_form(*args, energy_floor_J_per_mol=V1 - 100.0) == pytest.approx(0.258, abs=1e-3)
    assert tn.skodje_truhlar(*args, energy_floor_J_per_mol=V1 - 100.0) == pytest.approx(0.733, abs=1e-3)


@pytest.mark.parametrize("nu, T", [(500.0, 50.0), (2000.0, 300.0), (1000.0, 20.0), (3000.0, 1000.0)])
def test_skodje_truhlar_is_continuous_in_the_floor(nu, T):
    # d kappa / d floor = -beta exp(beta D) P(floor): the step between closely spaced floors must be
    # that slope times the spacing (to second order), also across the switch between the series and
    # the quadrature at alpha D = 2, and at D -> 0. No jump anywhere.
    V1 = 50 * KJ
    alpha = 2 * math.pi / (nu * CM1_J_PER_MOL)
    beta = 1 / (R * T)
    D = np.concatenate([[0.0], np.geomspace(1e-3, 40 * KJ, 400), [2 / alpha]])
    D = np.sort(np.concatenate([D, 2 / alpha * (1 + np.array([-1e-9, 1e-9]))]))
    h = 1e-6 * np.maximum(D, 1.0)
    k_lo = np.array([float(tn.skodje_truhlar_log(T, nu, V1, V1, energy_floor_J_per_mol=V1 - d)) for d in D])
    k_hi = np.array([float(tn.skodje_truhlar_log(T, nu, V1, V1, energy_floor_J_per_mol=V1 - d - s))
                     for d, s in zip(D, h)])
    d_log_k = (k_hi - k_lo) / h
    slope = beta * np.exp(beta * (D + h / 2) - k_lo) * expit(-alpha * (D + h / 2))  # d log kappa / dD
    np.testing.assert_allclose(d_log_k, slope, rtol=1e-3, atol=1e-12)
    assert np.all(np.diff(k_lo) >= -1e-14)      # more energy range counted, never less flux


@settings(max_examples=80, deadline=None)
@given(nu=st.floats(50.0, 4000.0), x=st.floats(0.02, 20.0), a=st.floats(0.0, 200.0))
def test_skodje_truhlar_bounds(nu, x, a):
    """Physics of the truncated parabola, x = beta/alpha, a = alpha (V0 - V):

    * at least the flux above the top, which is at least 1/2 (P >= 1/2 there);
    * at most the untruncated parabola, pi x / sin(pi x), for x < 1 (truncation removes flux);
    * at least the classical limit 1 below the crossover temperature (x >= 1) once the range
      below the top holds a >= 2 (there the exact value at x = 1 is a - log(1 + exp(-a)) > 1.87).
    """
    alpha = 2 * math.pi / (nu * CM1_J_PER_MOL)
    T = 1 / (x * alpha * R)
    V1 = 300 * KJ
    floor = V1 - a / alpha
    if floor < 0:
        return
    lk = float(tn.skodje_truhlar_log(T, nu, V1, V1, energy_floor_J_per_mol=floor))
    top = float(tn.skodje_truhlar_log(T, nu, V1, V1, energy_floor_J_per_mol=V1))
    assert top >= math.log(0.5) - 1e-12
    assert lk >= top - 1e-12
    if x < 0.99:
        assert lk <= math.log(math.pi * x / math.sin(math.pi * x)) + 1e-12
    if x >= 1 and a >= 2:
        assert lk >= -1e-12


@pytest.mark.parametrize("model", tn.MODELS)
def test_all_models_tend_to_one_at_high_temperature(model):
    T = np.array([1e4, 1e5, 1e6, 1e7])
    dev = np.abs(tn.kappa(model, T, 2000.0, 80 * KJ, 100 * KJ) - 1.0)
    assert dev[-1] < 1e-5
    assert np.all(np.diff(dev) <= 0)


# ---------------------------------------------------------------------------
# properties
# ---------------------------------------------------------------------------

@settings(max_examples=60, deadline=None)
@given(nu=st.floats(50.0, 4000.0), f_T=st.floats(0.0, 1.0),
       f1=st.floats(0.0, 1.0), f2=st.floats(0.0, 1.0))
def test_eckart_kappa_at_least_one_with_default_floor(nu, f_T, f1, f2):
    """kappa >= 1 where tunnelling dominates above-barrier reflection.

    Eckart kappa falls below 1 for barriers small for their curvature and for
    kT > h c nu with strong asymmetry (above-barrier reflection), so the
    property is checked where alpha_i = 2 pi V_i/(h c nu) >= 5 and
    T <= h c nu / k, inside 50-3000 K and 0.1-200 kJ/mol.
    """
    hv = nu * CM1_J_PER_MOL
    T = 50.0 + f_T * (min(3000.0, hv / R) - 50.0)
    V_min = max(0.1 * KJ, 5.0 * hv / (2 * math.pi))
    V1 = V_min * (200 * KJ / V_min) ** f1
    V2 = V_min * (200 * KJ / V_min) ** f2
    assert tn.eckart(T, nu, V1, V2) >= 1.0 - 1e-12


@settings(max_examples=80, deadline=None)
@given(T=st.floats(50.0, 3000.0), nu=st.floats(50.0, 4000.0),
       V1=st.floats(0.1 * KJ, 200 * KJ), V2=st.floats(0.1 * KJ, 200 * KJ),
       model=st.sampled_from(tn.MODELS))
def test_kappa_finite_and_positive(T, nu, V1, V2, model):
    k = tn.kappa(model, T, nu, V1, V2)
    assert np.isfinite(k) and k > 0


@settings(max_examples=40, deadline=None)
@given(T=st.floats(50.0, 3000.0), nu=st.floats(50.0, 4000.0),
       V1=st.floats(0.1 * KJ, 200 * KJ), V2=st.floats(0.1 * KJ, 200 * KJ))
def test_eckart_forward_and_reverse_kappa_equal(T, nu, V1, V2):
    # microscopic reversibility: P(E) is the same from both sides, and with the
    # default floor (the higher asymptote) the thermal averages coincide
    np.testing.assert_allclose(tn.eckart_log(T, nu, V1, V2), tn.eckart_log(T, nu, V2, V1),
                               rtol=1e-10, atol=1e-10)


# ---------------------------------------------------------------------------
# input errors
# ---------------------------------------------------------------------------

@pytest.mark.parametrize("model", ["wigner", "skodje-truhlar", "eckart", "none"])
def test_non_positive_temperature_rejected(model):
    with pytest.raises(InputError, match=r"temperature_K.*positive"):
        tn.kappa(model, [300.0, 0.0], 1500.0, 50 * KJ, 60 * KJ)
    with pytest.raises(InputError, match="temperature_K"):
        tn.kappa(model, [float("nan")], 1500.0, 50 * KJ, 60 * KJ)


@pytest.mark.parametrize("model", ["wigner", "skodje-truhlar", "eckart"])
@pytest.mark.parametrize("nu", [0.0, -1500.0, float("inf")])
def test_non_positive_imaginary_frequency_rejected(model, nu):
    with pytest.raises(InputError, match=r"imaginary_frequency_cm1.*positive wavenumber"):
        tn.kappa(model, 300.0, nu, 50 * KJ, 60 * KJ)


@pytest.mark.parametrize("model", ["skodje-truhlar", "eckart"])
def test_negative_barriers_rejected(model):
    with pytest.raises(InputError, match=r"reverse_barrier"):
        tn.kappa(model, 300.0, 1500.0, 50 * KJ, -1.0)
    with pytest.raises(InputError, match=r"forward_barrier"):
        tn.kappa(model, 300.0, 1500.0, -1.0, 60 * KJ)


def test_eckart_needs_positive_barriers():
    with pytest.raises(InputError, match=r"reverse_barrier.*positive"):
        tn.eckart(300.0, 1500.0, 50 * KJ, 0.0)
    with pytest.raises(InputError, match=r"forward_barrier.*positive"):
        tn.eckart_transmission(1e3, 1500.0, 0.0, 50 * KJ)


def test_skodje_truhlar_floor_above_barrier_rejected():
    with pytest.raises(InputError, match=r"energy_floor.*above the barrier top"):
        tn.skodje_truhlar(300.0, 1500.0, 50 * KJ, 60 * KJ, energy_floor_J_per_mol=55 * KJ)


def test_unknown_model_rejected():
    with pytest.raises(InputError, match=r"unknown tunnelling model 'bell'"):
        tn.kappa("bell", 300.0, 1500.0, 50 * KJ, 60 * KJ)


# ---------------------------------------------------------------------------
# the accuracy the Eckart quadratures are tuned to
# ---------------------------------------------------------------------------

def _barriers(count: int, seed: int):
    """Barriers drawn over the range met in practice (made up, fixed seed): 200-3000 cm-1,
    V1 2-250 kJ/mol, V2/V1 0.05-3, a third of them with an energy floor between 0 and 1.2 V1."""
    rng = np.random.default_rng(seed)
    out = []
    for _ in range(count):
        nu, V1 = rng.uniform(200, 3000), rng.uniform(2e3, 250e3)
        V2 = V1 * rng.uniform(0.05, 3)
        out.append((nu, V1, V2, None if rng.random() < 0.7 else rng.uniform(0, 1.2 * V1)))
    return out


@pytest.mark.parametrize("nu, V1, V2, floor", _barriers(12, seed=11))
def test_eckart_quadratures_meet_1e8_against_adaptive_quadrature(nu, V1, V2, floor):
    # reference: eckart_reference_quad above (scipy.integrate.quad, epsrel 1e-12); tuned target 1e-8
    T = np.array([100.0, 150.0, 220.0, 300.0, 450.0, 700.0, 1000.0, 2000.0])
    ref = eckart_reference_quad(T, nu, V1, V2, floor)
    shared = np.exp(tn.eckart_log(T, nu, V1, V2, floor))              # one grid for all T
    E0 = tn._floor(floor, V1, V2)
    rows = np.exp(tn.log_thermal_quadrature(                          # per-row windows
        lambda s: _row_integrand(s, 1.0 / (R * T), nu, V1, V2, E0), 1.0 / (R * T), max(V1, E0), V1, E0))
    np.testing.assert_allclose(shared, ref, rtol=1e-8)
    np.testing.assert_allclose(rows, ref, rtol=1e-8)


def _row_integrand(s, beta, nu, V1, V2, E0):
    b = beta[:, None]
    E = E0 + s * s
    log_p = tn.eckart_log_transmission(E, nu, V1, V2)
    with np.errstate(divide="ignore"):
        return log_p + np.log(b) - b * (E - V1) + np.log(2.0 * s)


def test_shared_grid_computes_p_once_for_all_temperatures(monkeypatch):
    calls = []
    real = tn._eckart_log_p

    def counting(E, *args):
        calls.append(np.size(E))
        return real(E, *args)

    monkeypatch.setattr(tn, "_eckart_log_p", counting)
    tn.eckart_log(np.linspace(150.0, 1000.0, 200), 1500.0, 90e3, 85e3)
    assert len(calls) == 1 and calls[0] < 1000      # one evaluation of P on one grid of a few hundred nodes
