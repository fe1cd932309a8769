"""Tunnelling corrections to transition-state-theory rate constants.

The correction ``kappa(T)`` multiplies a canonical TST rate constant. Three
one-dimensional models are provided, all vectorised over temperature arrays:

* :func:`wigner` -- the leading quantum correction for a parabolic barrier
  top (E. Wigner, Z. Phys. Chem. B 19, 203 (1932)).
* :func:`skodje_truhlar` -- a truncated parabolic barrier (R. T. Skodje and
  D. G. Truhlar, J. Phys. Chem. 85, 624 (1981)), its exact thermal average; their
  closed form, valid only for a barrier large against h c nu / 2 pi above the
  floor, is :func:`skodje_truhlar_closed_form`.
* :func:`eckart` -- the unsymmetrical Eckart barrier (C. Eckart, Phys. Rev. 35,
  1303 (1930)), fitted to the imaginary frequency and the forward and reverse
  barriers as in H. S. Johnston and J. Heicklen, J. Phys. Chem. 66, 532 (1962),
  with the thermal average done numerically.

Units and conventions
---------------------
Temperatures in K; molar energies in J/mol; the imaginary frequency of the
transition state is given as its magnitude, a positive wavenumber in cm^-1.
``V1`` is the forward barrier and ``V2`` the reverse barrier (both measured
from the transition state down to the reactant and product asymptotes, and
normally zero-point corrected). Energies ``E`` of the transmission probability
are measured from the reactant asymptote, so the product asymptote lies at
``V1 - V2``.

The Eckart barrier
------------------
The potential along the reaction coordinate ``x`` [m] is

    V(x) = A y/(1+y) + B y/(1+y)^2,     y = exp(2 pi x / L),

with ``A = V1 - V2`` and ``B = (sqrt(V1) + sqrt(V2))^2`` so that the maximum
is ``V1`` above the reactants and ``V2`` above the products; the length ``L``
(for a given effective mass) is fixed by the curvature at the top, i.e. by the
imaginary frequency. With ``alpha_i = 2 pi V_i / (h c nu)`` and ``nu`` the
imaginary wavenumber, the exact transmission probability is

    P(E) = [cosh(p + q) - cosh(p - q)] / [cosh(p + q) + cosh(w)]
         = 2 sinh(p) sinh(q) / [cosh(p + q) + cosh(w)],

    p = 2 alpha_1 sqrt(E/V1) / (1 + sqrt(alpha_1/alpha_2))     (= 2 pi a),
    q = 2 alpha_1 sqrt((E - V1 + V2)/V1) / (1 + sqrt(alpha_1/alpha_2))  (= 2 pi b),
    w = 2 sqrt(alpha_1 alpha_2 - pi^2/4)                       (= 2 pi d).

When ``4 alpha_1 alpha_2 / pi^2 < 1`` (a small barrier for its curvature)
``w`` is imaginary and ``cosh(w)`` becomes ``cos(|w|)``; the denominator is
then evaluated as ``2 sinh^2((p+q)/2) + 2 cos^2(|w|/2)``, a sum of
non-negative terms. Everything is done with log-sinh/log-cosh so that nothing
overflows for the large arguments that broad, high barriers produce.

Below the higher of the two asymptotes one side of the barrier is closed
(``p`` or ``q`` is imaginary) and nothing is transmitted: ``P(E) = 0`` for
``E < max(0, V1 - V2)``, so energies below that make no contribution.

The thermal tunnelling factor is

    kappa(T) = exp(V1/RT)/(RT) * integral_{E0}^{inf} P(E) exp(-E/RT) dE.

The lower limit ``E0`` (the energy floor) is by default ``max(0, V1 - V2)``,
the higher asymptote measured from the reactants: tunnelling is counted only at
energies where both sides are open. A caller may raise the floor, for example
for a bimolecular channel that passes through a pre-reactive complex: then
``V1`` and ``V2`` are measured from the complex and the product side of the
barrier, and the floor is the energy of the separated reactants above the
complex, since only energies the reactants can bring in count. A floor below
``max(0, V1 - V2)`` changes nothing (``P`` is zero there). With a floor above
the default, kappa may be below 1 (less than the classical flux is counted).

Kappa is not always above 1. Above-barrier reflection lowers it where the
barrier is small for its curvature (``alpha_1`` or ``alpha_2`` below about 5)
or where ``kT`` exceeds ``h c nu`` and the barrier is strongly asymmetric;
in our scans of the Eckart form kappa stayed >= 1 whenever both
``alpha_i >= 5`` and ``T <= h c nu / k`` (with the default floor). With the
default floor kappa is the same for the forward and the reverse direction
(microscopic reversibility: ``P`` is the same from both sides).

The integral is evaluated for all temperatures at once, in numpy, after the
substitution ``E = E0 + s^2`` that removes the square-root behaviour at threshold.
:func:`eckart_log` computes P(E) once per barrier, on one grid of Gauss-Legendre
panels shared by all the temperatures of the call (panels no wider than a few of
the smallest RT and, near the top, than h c nu / 2 pi; wider above the top where
only hotter temperatures count); each temperature is then a weighted log-sum-exp
over that grid. :func:`log_thermal_quadrature` (for rows that each have their own
barrier, as the uncertainty samples do) finds each row's window with two levels
of uniform search grids and a third for the peak, splits it at the peak and at the
barrier top, and gives each piece composite Gauss-Legendre panels that halve in
width towards both ends. Both are tuned to agree with adaptive quadrature
(``scipy.integrate.quad``) to 1e-8 relative, the accuracy the tests pin (see
tests/physics/test_tunnelling.py and benchmarks/bench_tunnelling.py).
"""

from __future__ import annotations

import functools
import math

import numpy as np
from scipy.special import logsumexp

from tstrate.arrays import temperatures_K
from tstrate.errors import InputError
from tstrate.model.species import TUNNELLING_MODELS
from tstrate.units import CM1_J, N_A, R

#: Names accepted by :func:`kappa` and :func:`log_kappa`.
MODELS: tuple[str, ...] = TUNNELLING_MODELS

# Quadrature layout of the Eckart thermal average (see module docstring).
# Tuned to about 5e-9 against adaptive quadrature (worst of 60 random barriers, 100-2000 K) for a
# 1e-8 target (tests/physics/test_tunnelling.py); it was 6e-12 with 675 evaluations per temperature.
_SEARCH_POINTS = 33      # points per search level
_SEARCH_LEVELS = 2       # refinements of the window
_WINDOW_LOG_DROP = 50.0  # window = where log-integrand > peak - this
_UPPER_RT = 60.0         # integrate up to max(V1, E0) + this * RT
_GRADING_LEVELS = 7      # panels halve this many times towards each end of a sub-interval
_GL_NODES = 6            # Gauss-Legendre nodes per panel


# --------------------------------------------------------------------------
# validation
# --------------------------------------------------------------------------

def _temperatures(temperature_K) -> np.ndarray:
    return temperatures_K(temperature_K)


def _imag_freq(imag_freq_cm1) -> float:
    if np.ndim(imag_freq_cm1) != 0:
        raise InputError("the imaginary frequency must be a single number",
                         field="imaginary_frequency_cm1")
    nu = float(imag_freq_cm1)
    if not math.isfinite(nu) or nu <= 0.0:
        raise InputError(f"imaginary frequency must be a positive wavenumber, got {nu} cm^-1",
                         field="imaginary_frequency_cm1",
                         hint="give the magnitude of the imaginary frequency, e.g. 1500 for 1500i")
    return nu


def _barrier(value, field: str, *, strictly_positive: bool) -> float:
    if np.ndim(value) != 0:
        raise InputError("the barrier must be a single number", field=field)
    v = float(value)
    if not math.isfinite(v):
        raise InputError(f"barrier must be finite, got {v}", field=field)
    if strictly_positive and v <= 0.0:
        raise InputError(f"barrier must be positive for an Eckart barrier, got {v / 1e3:.6g} kJ/mol",
                         field=field,
                         hint="the Eckart shape needs a barrier above both asymptotes")
    if v < 0.0:
        raise InputError(f"barrier must not be negative, got {v / 1e3:.6g} kJ/mol", field=field)
    return v


def _floor(energy_floor, V1: float, V2: float) -> float:
    """Effective lower limit of the thermal average [J/mol] (see module docstring)."""
    threshold = max(0.0, V1 - V2)
    if energy_floor is None:
        return threshold
    if np.ndim(energy_floor) != 0 or not math.isfinite(float(energy_floor)):
        raise InputError("energy floor must be a single finite number",
                         field="energy_floor")
    return max(float(energy_floor), threshold)


def _barrier_energy(imag_freq_cm1: float) -> float:
    """h c nu of the imaginary mode [J/mol]."""
    return imag_freq_cm1 * CM1_J * N_A


# --------------------------------------------------------------------------
# Wigner
# --------------------------------------------------------------------------

def wigner(temperature_K, imag_freq_cm1) -> np.ndarray:
    """Wigner tunnelling factor, ``1 + (h c nu / k T)^2 / 24`` (dimensionless).

    Wigner, Z. Phys. Chem. B 19, 203 (1932). ``temperature_K`` [K] may be an
    array; ``imag_freq_cm1`` is the magnitude of the imaginary wavenumber
    [cm^-1]. Returns an array of the shape of ``temperature_K``.
    """
    T = _temperatures(temperature_K)
    nu = _imag_freq(imag_freq_cm1)
    u = _barrier_energy(nu) / (R * T)
    return 1.0 + u * u / 24.0


# --------------------------------------------------------------------------
# Skodje-Truhlar
# --------------------------------------------------------------------------

def _pi_over_sin_minus_inv(x: np.ndarray, eps: np.ndarray) -> np.ndarray:
    """``pi/sin(pi x) - 1/eps`` with ``eps = 1 - x`` in (0, 1], accurate as eps -> 0.

    ``sin(pi x) = sin(pi eps)``; for small ``eps`` the difference is formed
    from the Taylor series of ``z/sin z - 1`` at ``z = pi eps`` to avoid
    cancellation, otherwise directly (with ``sin(pi x)``, which is exact
    also for small ``x``).
    """
    z = np.pi * eps
    small = z < 0.1
    zs = np.where(small, z, 0.0)
    # z/sin z - 1 = z^2/6 + 7 z^4/360 + 31 z^6/15120 + 127 z^8/604800 + O(z^10)
    # (Taylor series of z/sin z, from memory; checked against the direct form in the tests)
    z2 = zs * zs
    series = z2 * (1 / 6 + z2 * (7 / 360 + z2 * (31 / 15120 + z2 * (127 / 604800))))
    with np.errstate(divide="ignore", invalid="ignore"):
        out_small = series / np.where(small, eps, 1.0)
        out_big = np.pi / np.sin(np.pi * np.where(small, 0.5, x)) - 1.0 / np.where(small, 1.0, eps)
    return np.where(small, out_small, out_big)


def _pi_over_sin_minus_inv_signed(eps: np.ndarray, sin_pi_eps: np.ndarray) -> np.ndarray:
    """``P(eps) = pi/sin(pi eps) - 1/eps`` for ``eps`` in [-1/2, 1] (odd in eps, 0 at 0).

    ``sin_pi_eps`` is ``sin(pi eps)`` computed by the caller in the most accurate way; for
    ``|pi eps| < 0.1`` the Taylor series of ``z/sin z - 1`` avoids the cancellation.
    """
    z = np.pi * eps
    small = np.abs(z) < 0.1
    zs = np.where(small, z, 0.0)
    z2 = zs * zs
    # z/sin z - 1 = z^2/6 + 7 z^4/360 + 31 z^6/15120 + 127 z^8/604800 + O(z^10)
    # divided by eps = z / pi: pi z (1/6 + 7 z^2/360 + ...)
    out_small = np.pi * zs * (1 / 6 + z2 * (7 / 360 + z2 * (31 / 15120 + z2 * (127 / 604800))))
    with np.errstate(divide="ignore", invalid="ignore"):
        out_big = np.pi / np.where(small, 1.0, sin_pi_eps) - 1.0 / np.where(small, 1.0, eps)
    return np.where(small, out_small, out_big)


def _log_a_exprel(z: np.ndarray, a: float) -> np.ndarray:
    """``log(a (exp(z) - 1)/z)`` (``log a`` at z = 0) without overflow."""
    from scipy.special import exprel

    mid = np.abs(z) <= 1.0
    zb = np.where(mid, 1.0, z)
    with np.errstate(divide="ignore", invalid="ignore"):
        big = np.where(zb > 0, zb + np.log(-np.expm1(-np.abs(zb))), np.log(-np.expm1(-np.abs(zb)))) \
            - np.log(np.abs(zb))
        return math.log(a) + np.where(mid, np.log(exprel(np.where(mid, z, 0.0))), big)


#: terms k = 1.._SERIES_TERMS of the series (a >= _SERIES_MIN_DEPTH: they fall as exp(-a k))
_SERIES_TERMS = 40
#: below this depth alpha (V0 - V) the series converges slowly and the average is done by quadrature
_SERIES_MIN_DEPTH = 2.0
_PARABOLA_GL_NODES = 16


def _parabola_over_top_log(x: np.ndarray) -> np.ndarray:
    """log of ``beta int_0^inf exp(-beta y) P(y) dy``, the parabola's flux above its top.

    With ``x = beta/alpha`` and ``P = 1/(1 + exp(-alpha y))``:
    ``sum_k (-1)^k x/(x + k) = (x/2) [psi((1+x)/2) - psi(x/2)]``, between 1/2 and 1.
    """
    from scipy.special import digamma

    # for large x the digamma difference (~1/x) cancels; there the alternating sum's
    # Euler-Boole expansion 1/2 + 1/(4x) - 1/(8x^3) + 1/(4x^5) - 17/(16x^7) is exact to ~x^-9
    big = x > 100.0
    y = 1.0 / np.where(big, x, 1.0)
    y2 = y * y
    asym = 0.5 + y * (0.25 + y2 * (-0.125 + y2 * (0.25 - y2 * 17.0 / 16.0)))
    xs = np.where(big, 1.0, x)
    direct = 0.5 * xs * (digamma(0.5 * (1.0 + xs)) - digamma(0.5 * xs))
    return np.log(np.where(big, asym, direct))


def _truncated_parabola_series_log(x: np.ndarray, a: float) -> np.ndarray:
    """log kappa of the truncated parabola from the exact series (for depths ``a >= 2``).

    kappa = pi x / sin(pi x) + x sum_{k>=1} (-1)^(k+1) exp((x - k) a) / (x - k); the pole of
    pi x / sin(pi x) at the integer m nearest x cancels that of the k = m term, so those two
    are taken together as (-1)^(m+1) x [P(m - x) + (1 - exp(-(m - x) a))/(m - x)].
    """
    m = np.maximum(1.0, np.rint(x))
    eps = m - x
    # sin(pi eps) = (-1)^(m+1) sin(pi x); m - x is exact for x >= 1/2, sin(pi x) is better below
    sin_pi_eps = np.where(x < 0.5, np.sin(np.pi * x), np.sin(np.pi * eps))
    p = _pi_over_sin_minus_inv_signed(eps, sin_pi_eps)
    log_e = _log_a_exprel(-eps * a, a)
    log_pole = np.log(x) + log_e + np.log1p(p * np.exp(-log_e))
    sign_pole = np.where(np.mod(m, 2.0) == 1.0, 1.0, -1.0)
    k = np.arange(1, _SERIES_TERMS + 1, dtype=float)[None, :]
    xk = x[:, None] - k
    with np.errstate(divide="ignore"):
        log_terms = np.log(x)[:, None] + xk * a - np.log(np.abs(xk))
    log_terms = np.where(k == m[:, None], -np.inf, log_terms)
    signs = np.where(np.mod(k, 2.0) == 1.0, 1.0, -1.0) * np.sign(xk)
    signs = np.where(signs == 0.0, 1.0, signs)
    out, sign = logsumexp(np.concatenate([log_pole[:, None], log_terms], axis=1),
                          b=np.concatenate([sign_pole[:, None], signs], axis=1),
                          axis=1, return_sign=True)
    return np.where(sign > 0, out, np.nan)


def _truncated_parabola_quadrature_log(x: np.ndarray, a: float) -> np.ndarray:
    """log kappa of the truncated parabola for depths ``a < 2``, by Gauss-Legendre quadrature.

    kappa = over-the-top part + x int_0^a exp(x s) / (1 + exp(s)) ds (s = alpha (V0 - E)).
    The log-integrand ``x s - log(1 + e^s)`` is concave; panels halve in width towards
    ``s = a``, down to ``1/x``, where a steep exponential (cold, x large) has its weight.
    """
    levels = int(min(60, max(2, math.ceil(math.log2(float(np.max(x)) * a + 2.0)) + 1)))
    dist = a * (2.0 ** np.arange(levels + 1) - 1.0) / (2.0 ** levels - 1.0)   # from s = a
    lo, hi = a - dist[1:], a - dist[:-1]
    t, w = np.polynomial.legendre.leggauss(_PARABOLA_GL_NODES)
    half = 0.5 * (hi - lo)
    s = (0.5 * (hi + lo)[:, None] + half[:, None] * t[None, :]).ravel()
    log_w = np.log((half[:, None] * w[None, :]).ravel())
    log_f = x[:, None] * s[None, :] - np.logaddexp(0.0, s)[None, :] + log_w[None, :]
    log_finite = np.log(x) + logsumexp(log_f, axis=1)
    return np.logaddexp(_parabola_over_top_log(x), log_finite)


def _skodje_truhlar_log(beta: np.ndarray, alpha: float, D: float) -> np.ndarray:
    """log kappa of the truncated parabola, ``beta = 1/RT`` [mol/J], ``alpha`` [mol/J], depth ``D`` [J/mol].

    The exact thermal average of P(E) = 1/(1 + exp(-alpha (E - V0))) for E >= V0 - D (see
    :func:`skodje_truhlar`); continuous in T and in D.
    """
    x = beta / alpha
    a = alpha * D
    if a <= 0.0:
        return _parabola_over_top_log(x)
    if a < _SERIES_MIN_DEPTH:
        return _truncated_parabola_quadrature_log(x, a)
    return _truncated_parabola_series_log(x, a)


def _skodje_truhlar_closed_form_log(beta: np.ndarray, alpha: float, D: float) -> np.ndarray:
    """log of the published closed form (leading terms for ``alpha D >> 1``); reference only."""
    out = np.empty_like(beta)
    low = beta < alpha          # high temperature branch
    high = beta > alpha         # low temperature (deep tunnelling) branch
    equal = ~(low | high)
    if np.any(low):
        x = beta[low] / alpha
        eps = 1.0 - x
        # kappa = (pi x)/sin(pi x) - x/(1-x) exp(-(alpha-beta) D)
        #       = x [pi/sin(pi eps) - 1/eps] + x/eps * (1 - exp(-alpha eps D))
        first = x * _pi_over_sin_minus_inv(x, eps)
        second = x / eps * -np.expm1(-alpha * eps * D)
        with np.errstate(divide="ignore"):
            out[low] = np.log(first + second)
    if np.any(high):
        b = beta[high]
        z = (b - alpha) * D
        # kappa = beta/(beta-alpha) (exp(z) - 1), in logs: z + log(1 - exp(-z))
        with np.errstate(divide="ignore"):
            log_expm1 = np.where(z > 30.0, z + np.log1p(-np.exp(-np.minimum(z, 700.0))),
                                 np.log(np.expm1(np.minimum(z, 30.0))))
            out[high] = np.log(b) - np.log(b - alpha) + log_expm1
    if np.any(equal):
        # common limit of both branches at beta == alpha: kappa = alpha D
        with np.errstate(divide="ignore"):
            out[equal] = np.log(alpha * D)
    return out


def _skodje_truhlar_args(temperature_K, imag_freq_cm1, V1, V2, energy_floor):
    """Validated ``(T, beta [mol/J], alpha [mol/J], depth V0 - V [J/mol])``."""
    T = _temperatures(temperature_K)
    nu = _imag_freq(imag_freq_cm1)
    V1 = _barrier(V1, "forward_barrier", strictly_positive=False)
    V2 = _barrier(V2, "reverse_barrier", strictly_positive=False)
    floor = _floor(energy_floor, V1, V2)
    if floor > V1:
        raise InputError(f"energy floor {floor / 1e3:.6g} kJ/mol lies above the barrier top {V1 / 1e3:.6g} kJ/mol",
                         field="energy_floor",
                         hint="the Skodje-Truhlar form needs a floor at or below the barrier")
    return T, 1.0 / (R * T.ravel()), 2.0 * np.pi / _barrier_energy(nu), V1 - floor


def skodje_truhlar_log(temperature_K, imag_freq_cm1, forward_barrier_J_per_mol,
                       reverse_barrier_J_per_mol, energy_floor_J_per_mol=None) -> np.ndarray:
    """Natural log of :func:`skodje_truhlar` (never overflows)."""
    T, beta, alpha, D = _skodje_truhlar_args(temperature_K, imag_freq_cm1, forward_barrier_J_per_mol,
                                             reverse_barrier_J_per_mol, energy_floor_J_per_mol)
    return _skodje_truhlar_log(beta, alpha, D).reshape(T.shape)


def skodje_truhlar(temperature_K, imag_freq_cm1, forward_barrier_J_per_mol,
                   reverse_barrier_J_per_mol, energy_floor_J_per_mol=None) -> np.ndarray:
    """Tunnelling factor of the truncated parabolic barrier of Skodje and Truhlar (dimensionless).

    R. T. Skodje and D. G. Truhlar, J. Phys. Chem. 85, 624 (1981): Bell's transmission of a
    parabolic barrier, ``P(E) = 1/(1 + exp(-alpha (E - V0)))`` (R. P. Bell, Trans. Faraday
    Soc. 55, 1 (1959)), counted from the lower end ``V`` of the energy range upwards, with
    ``alpha = 2 pi / (h c nu)`` and ``beta = 1/RT`` (both per J/mol), ``V0`` the forward
    barrier and ``V`` 0 for an exoergic direction, the endoergicity ``V1 - V2`` for an
    endoergic one, or ``energy_floor_J_per_mol`` if that is higher. With ``x = beta/alpha``
    and the depth ``a = alpha (V0 - V)``, the exact thermal average
    ``kappa = beta exp(beta V0) int_V^inf P(E) exp(-beta E) dE`` is

        kappa = pi x / sin(pi x) + x sum_{k>=1} (-1)^(k+1) exp((x - k) a) / (x - k).

    Skodje and Truhlar keep only the leading terms, valid when ``a >> 1`` (the barrier,
    seen from the floor, large against ``h c nu / 2 pi``):

    * ``beta <= alpha``: ``kappa = (pi x)/sin(pi x) - x/(1 - x) exp[-(1 - x) a]``
    * ``beta > alpha``: ``kappa = x/(x - 1) {exp[(x - 1) a] - 1}``

    (:func:`skodje_truhlar_closed_form`). The first drops terms of order ``exp(-a)``; the
    second also drops an over-the-barrier part of order 1, which is small against the
    tunnelling term only where ``(x - 1) a >> 1``. For small ``a`` the closed form drops
    below 1/2 and, at ``a = 0``, jumps to 0 below the crossover temperature. Here the exact
    average is used at every depth, so kappa is continuous in T and in the floor: from the
    series above for ``a >= 2`` (its terms fall as ``exp(-a k)``; the poles of
    ``pi x / sin(pi x)`` cancel those of the series and are taken together), by Gauss-Legendre
    quadrature of the finite part for ``0 < a < 2``, and as the flux over the top,
    ``(x/2) [psi((1+x)/2) - psi(x/2)]`` (between 1/2 and 1), at ``a = 0`` (a floor at the
    barrier top, a submerged transition state). It agrees with the closed form to
    ``exp(-a)`` away from the crossover temperature.

    Temperatures [K] may be an array; barriers in J/mol (non-negative); the imaginary
    wavenumber [cm^-1] is given as its positive magnitude. Values too large for a float
    come back as ``inf``; use :func:`skodje_truhlar_log` for those.
    """
    log_k = skodje_truhlar_log(temperature_K, imag_freq_cm1, forward_barrier_J_per_mol,
                               reverse_barrier_J_per_mol, energy_floor_J_per_mol)
    with np.errstate(over="ignore"):
        return np.exp(log_k)


def skodje_truhlar_closed_form(temperature_K, imag_freq_cm1, forward_barrier_J_per_mol,
                               reverse_barrier_J_per_mol, energy_floor_J_per_mol=None) -> np.ndarray:
    """The published closed form of Skodje and Truhlar (1981), for comparison only.

    Valid when ``alpha (V0 - V) >> 1`` (see :func:`skodje_truhlar`); rearranged so that it
    stays accurate next to ``beta == alpha``, where both branches give ``alpha (V0 - V)``.
    """
    T, beta, alpha, D = _skodje_truhlar_args(temperature_K, imag_freq_cm1, forward_barrier_J_per_mol,
                                             reverse_barrier_J_per_mol, energy_floor_J_per_mol)
    with np.errstate(over="ignore"):
        return np.exp(_skodje_truhlar_closed_form_log(beta, alpha, D).reshape(T.shape))


# --------------------------------------------------------------------------
# Eckart
# --------------------------------------------------------------------------

def _log_sinh(x: np.ndarray) -> np.ndarray:
    """log(sinh x) for x >= 0 (-inf at 0)."""
    with np.errstate(divide="ignore"):
        return x - math.log(2.0) + np.log(-np.expm1(-2.0 * x))


def _log_cosh(x: np.ndarray) -> np.ndarray:
    ax = np.abs(x)
    return ax - math.log(2.0) + np.log1p(np.exp(-2.0 * ax))


def _eckart_log_p(E: np.ndarray, E_minus_A: np.ndarray, V1: float, V2: float,
                  barrier_energy: float) -> np.ndarray:
    """log P(E) of the Eckart barrier; ``E`` and ``E - (V1 - V2)`` given separately [J/mol].

    Separate arguments let callers form ``E - (V1 - V2)`` without cancellation.
    Returns -inf where either side is closed.
    """
    c = 2.0 * np.pi / barrier_energy                        # [mol/J]
    k = 2.0 * c / (1.0 / math.sqrt(V1) + 1.0 / math.sqrt(V2))  # [(mol/J)^(1/2)]
    open_ = (E > 0.0) & (E_minus_A > 0.0)
    p = k * np.sqrt(np.where(open_, E, 1.0))
    q = k * np.sqrt(np.where(open_, E_minus_A, 1.0))
    u = p + q
    log_num = math.log(2.0) + _log_sinh(p) + _log_sinh(q)
    w2 = 4.0 * c * c * V1 * V2 - np.pi ** 2                  # (2 pi d)^2
    if w2 >= 0.0:
        w = math.sqrt(w2)
        # cosh u + cosh w = 2 cosh((u+w)/2) cosh((u-w)/2)
        log_den = math.log(2.0) + _log_cosh(0.5 * (u + w)) + _log_cosh(0.5 * (u - w))
    else:
        y = math.sqrt(-w2)
        # cosh u + cos y = 2 sinh^2(u/2) + 2 cos^2(y/2), both terms >= 0
        cos_half = math.cos(0.5 * y)
        log_cos2 = 2.0 * math.log(abs(cos_half)) if cos_half != 0.0 else -np.inf
        log_den = math.log(2.0) + np.logaddexp(2.0 * _log_sinh(0.5 * u), log_cos2)
    log_p = np.minimum(log_num - log_den, 0.0)
    return np.where(open_, log_p, -np.inf)


def eckart_log_transmission(energy_J_per_mol, imag_freq_cm1, V1, V2) -> np.ndarray:
    """Natural log of :func:`eckart_transmission` (-inf where nothing is transmitted)."""
    nu = _imag_freq(imag_freq_cm1)
    V1 = _barrier(V1, "forward_barrier", strictly_positive=True)
    V2 = _barrier(V2, "reverse_barrier", strictly_positive=True)
    E = np.asarray(energy_J_per_mol, dtype=float)
    return _eckart_log_p(E, E - (V1 - V2), V1, V2, _barrier_energy(nu))


def eckart_transmission(energy_J_per_mol, imag_freq_cm1, V1, V2) -> np.ndarray:
    """Transmission probability P(E) through an unsymmetrical Eckart barrier.

    Eckart, Phys. Rev. 35, 1303 (1930); parameters from the imaginary frequency
    and the barriers as in Johnston and Heicklen, J. Phys. Chem. 66, 532 (1962);
    formula in the module docstring.

    Parameters
    ----------
    energy_J_per_mol:
        Energy [J/mol] measured from the reactant asymptote (array allowed).
    imag_freq_cm1:
        Magnitude of the imaginary wavenumber of the transition state [cm^-1].
    V1, V2:
        Forward and reverse barriers [J/mol], both > 0.

    Returns
    -------
    P(E) in [0, 1], zero below the higher asymptote ``max(0, V1 - V2)``.
    """
    return np.exp(eckart_log_transmission(energy_J_per_mol, imag_freq_cm1, V1, V2))


@functools.lru_cache(maxsize=None)
def _graded_gauss_legendre() -> tuple[np.ndarray, np.ndarray]:
    """Composite Gauss-Legendre nodes and weights on [0, 1], panels graded towards both ends.

    Panel edges halve in width towards 0 and 1, so that the smallest panels are
    ``1/(2 (2^M - 1))`` of the interval: features at the ends of a
    sub-interval (the integrand peak, the barrier top) are resolved even when
    they are a thousand times narrower than the interval.
    """
    M = _GRADING_LEVELS
    half = 0.5 * (2.0 ** np.arange(M + 1) - 1.0) / (2.0 ** M - 1.0)
    edges = np.concatenate([half, 1.0 - half[::-1][1:]])
    x, w = np.polynomial.legendre.leggauss(_GL_NODES)
    h = 0.5 * np.diff(edges)
    mid = 0.5 * (edges[:-1] + edges[1:])
    t = (mid[:, None] + h[:, None] * x[None, :]).ravel()
    wt = (h[:, None] * w[None, :]).ravel()
    return t, wt


def _zoom(log_integrand, lo: np.ndarray, hi: np.ndarray, *, window: bool):
    """One search level on a uniform grid between ``lo`` and ``hi`` (per row).

    Returns ``(new_lo, new_hi, s_at_max)``: with ``window`` the new bounds
    enclose the region where the log-integrand is within ``_WINDOW_LOG_DROP``
    of its maximum (widened by one grid step), otherwise the two grid steps
    around the maximum; ``s_at_max`` is the grid point of the maximum.
    """
    n = _SEARCH_POINTS
    rows = np.arange(lo.size)
    grid = np.linspace(0.0, 1.0, n)
    s = lo[:, None] + (hi - lo)[:, None] * grid[None, :]
    g = log_integrand(s)
    if window:
        inside = g > np.max(g, axis=1, keepdims=True) - _WINDOW_LOG_DROP
        first = np.argmax(inside, axis=1)
        last = n - 1 - np.argmax(inside[:, ::-1], axis=1)
    else:
        first = last = np.argmax(g, axis=1)
    return s[rows, np.maximum(first - 1, 0)], s[rows, np.minimum(last + 1, n - 1)], \
        s[rows, np.argmax(g, axis=1)]


def _eckart_log_kappa(beta: np.ndarray, barrier_energy: float, V1: float, V2: float,
                      E0: float) -> np.ndarray:
    """log kappa for 1-D ``beta = 1/RT`` [mol/J]; ``E0`` >= max(0, V1 - V2) [J/mol]."""
    A = V1 - V2
    b = beta[:, None]
    log_b = np.log(b)

    def log_integrand(s: np.ndarray) -> np.ndarray:
        # integrand in s, E = E0 + s^2:  2 s beta exp(beta (V1 - E)) P(E)
        s2 = s * s
        E = E0 + s2
        log_p = _eckart_log_p(E, (E0 - A) + s2, V1, V2, barrier_energy)
        with np.errstate(divide="ignore"):
            log_2s = np.log(2.0 * s)
        return log_p + log_b - b * (E - V1) + log_2s

    return log_thermal_quadrature(log_integrand, beta, max(V1, E0), V1, E0)


def log_thermal_quadrature(log_integrand, beta: np.ndarray, top, V1, E0) -> np.ndarray:
    """ln of the thermal integral, over s with E = E0 + s^2, of ``exp(log_integrand(s))`` for each
    row of ``beta = 1/RT`` [mol/J]: the integrand's window is found by zooming, then integrated by
    graded Gauss-Legendre on sub-intervals split at its peak and at the barrier top. ``top``, ``V1``
    and ``E0`` [J/mol] are scalars or one value per row; ``log_integrand`` maps (rows, points)
    values of s to (rows, points) logs."""
    lo = np.zeros_like(beta)
    hi = np.sqrt(top + _UPPER_RT / beta - E0)
    for _ in range(_SEARCH_LEVELS):
        lo, hi, peak = _zoom(log_integrand, lo, hi, window=True)
    peak = _zoom(log_integrand, np.maximum(lo, peak - (hi - lo) / (_SEARCH_POINTS - 1)),
                 np.minimum(hi, peak + (hi - lo) / (_SEARCH_POINTS - 1)), window=False)[2]
    # sub-intervals split at the peak and at the barrier top, graded towards each end
    s_top = np.clip(np.sqrt(np.maximum(V1 - E0, 0.0)), lo, hi)
    cuts = np.stack([lo, np.minimum(peak, s_top), np.maximum(peak, s_top), hi], axis=1)
    t, wt = _graded_gauss_legendre()
    a = cuts[:, :-1, None]
    width = np.diff(cuts, axis=1)[:, :, None]
    s = (a + width * t[None, None, :]).reshape(beta.size, -1)
    with np.errstate(divide="ignore"):
        log_w = np.log(width * wt[None, None, :]).reshape(beta.size, -1)
    return logsumexp(log_integrand(s) + log_w, axis=1)


#: Shared energy grid of :func:`eckart_log` (see :func:`_shared_grid`): Gauss-Legendre nodes per
#: panel, and the widest panel in units of the smallest k_B T of the call and of h c nu / 2 pi.
_SHARED_GL_NODES = 6
_SHARED_PANEL_RT = 5.0
_SHARED_PANEL_TOP = 2.0
#: threshold panels graded towards E0 (the sqrt(E - E0) rise of P at a threshold)
_SHARED_THRESHOLD_LEVELS = 4
#: above the top a temperature counts while E - V1 is within this many of its RT
_SHARED_TAIL_RT = 25.0


@functools.lru_cache(maxsize=None)
def _gauss_legendre(n: int) -> tuple[np.ndarray, np.ndarray]:
    return np.polynomial.legendre.leggauss(n)


def _panel_edges(a: float, b: float, width) -> list[float]:
    """Edges from ``a`` to ``b`` with panels no wider than ``width(E)`` at their lower edge."""
    edges = [a]
    e = a
    while e < b:
        e = min(b, e + max(width(e), 1e-12 * max(abs(b), 1.0)))
        edges.append(e)
    return edges


def _shared_grid(beta: np.ndarray, barrier_energy: float, V1: float, E0: float):
    """Energies [J/mol] (measured from the reactants), s = sqrt(E - E0) and log weights (in s) of one
    Gauss-Legendre grid that serves every temperature of ``beta`` [mol/J].

    Panels in E run from the floor ``E0`` to ``max(V1, E0) + 60 RT_max``: no wider than
    ``_SHARED_PANEL_RT`` times the smallest RT below the top and near it also no wider than
    ``_SHARED_PANEL_TOP`` h c nu / 2 pi (the scale on which P rises at the top); above the top
    they widen with E - V1, since a temperature counts there only while E - V1 is within about
    40 of its RT. The first panel at the floor is split in halves towards it. The nodes are placed
    in s, where the integrand 2 s P(E0 + s^2) exp(-beta E) is smooth at a threshold.
    """
    rt_min = 1.0 / float(np.max(beta))
    rt_max = 1.0 / float(np.min(beta))
    top = max(V1, E0)
    hi = top + _UPPER_RT * rt_max
    d = barrier_energy / (2.0 * math.pi)
    w_low = _SHARED_PANEL_RT * rt_min

    def width(e):
        w = w_low
        near = abs(e - V1) < 20.0 * d
        if near:
            w = min(w, _SHARED_PANEL_TOP * d * max(1.0, abs(e - V1) / (4.0 * d)))
        if e > V1 + 20.0 * d:
            w = max(w, _SHARED_PANEL_RT * (e - V1) / _SHARED_TAIL_RT)
        return w

    edges = _panel_edges(E0, hi, width)
    if len(edges) >= 2 and _SHARED_THRESHOLD_LEVELS:      # grade the first panel towards the floor
        first = edges[1] - edges[0]
        grade = [E0 + first * 0.5 ** k for k in range(_SHARED_THRESHOLD_LEVELS, 0, -1)]
        edges = [E0] + grade + edges[1:]
    s_edges = np.sqrt(np.maximum(np.asarray(edges) - E0, 0.0))
    x, w = _gauss_legendre(_SHARED_GL_NODES)
    h = 0.5 * np.diff(s_edges)
    mid = 0.5 * (s_edges[:-1] + s_edges[1:])
    s = (mid[:, None] + h[:, None] * x[None, :]).ravel()
    wt = (h[:, None] * w[None, :]).ravel()
    return E0 + s * s, s, np.log(wt)


def eckart_log(temperature_K, imag_freq_cm1, V1, V2, energy_floor_J_per_mol=None) -> np.ndarray:
    """Natural log of :func:`eckart` (never overflows).

    P(E) is computed once, on one energy grid shared by all the temperatures of the call
    (:func:`_shared_grid`); each temperature is then one weighted log-sum over that grid. The
    result agrees with adaptive quadrature (``scipy.integrate.quad``) to about 1e-9 relative
    (tests/physics/test_tunnelling.py pins 1e-8).
    """
    T = _temperatures(temperature_K)
    nu = _imag_freq(imag_freq_cm1)
    V1 = _barrier(V1, "forward_barrier", strictly_positive=True)
    V2 = _barrier(V2, "reverse_barrier", strictly_positive=True)
    E0 = _floor(energy_floor_J_per_mol, V1, V2)
    beta = 1.0 / (R * T.ravel())
    be = _barrier_energy(nu)
    E, s, log_w = _shared_grid(beta, be, V1, E0)
    A = V1 - V2
    log_p = _eckart_log_p(E, (E0 - A) + s * s, V1, V2, be)
    with np.errstate(divide="ignore"):
        base = log_p + np.log(2.0 * s) + log_w                 # P(E) 2 s w, once per channel
    live = np.isfinite(base)
    base, E = base[live], E[live]
    g = base[None, :] - beta[:, None] * (E[None, :] - V1)
    top = np.max(g, axis=1, keepdims=True)
    out = top[:, 0] + np.log(np.sum(np.exp(g - top), axis=1)) + np.log(beta)
    return out.reshape(T.shape)


def eckart(temperature_K, imag_freq_cm1, V1, V2, energy_floor_J_per_mol=None) -> np.ndarray:
    """Eckart tunnelling factor ``kappa(T)`` (dimensionless).

    ``kappa = exp(V1/RT)/(RT) * integral_{E0}^{inf} P(E) exp(-E/RT) dE`` with
    ``P`` from :func:`eckart_transmission`.

    Parameters
    ----------
    temperature_K:
        Temperature(s) [K], any array shape.
    imag_freq_cm1:
        Magnitude of the imaginary wavenumber [cm^-1].
    V1, V2:
        Forward and reverse barriers [J/mol], zero-point corrected, both > 0.
    energy_floor_J_per_mol:
        Lower limit ``E0`` of the energy integral, measured from the reactant
        asymptote of the barrier [J/mol]. Default (None): ``max(0, V1 - V2)``.
        A lower value is raised to that (nothing is transmitted below it).

    Values too large for a float come back as ``inf``; use :func:`eckart_log`.
    """
    log_k = eckart_log(temperature_K, imag_freq_cm1, V1, V2, energy_floor_J_per_mol)
    with np.errstate(over="ignore"):
        return np.exp(log_k)


# --------------------------------------------------------------------------
# dispatch
# --------------------------------------------------------------------------

def log_kappa(model: str, temperature_K, imag_freq_cm1, V1, V2, energy_floor=None) -> np.ndarray:
    """Natural log of the tunnelling factor of ``model`` (one of :data:`MODELS`).

    ``temperature_K`` [K], ``imag_freq_cm1`` [cm^-1, positive magnitude],
    ``V1``/``V2`` forward/reverse barriers [J/mol], ``energy_floor`` [J/mol]
    (Skodje-Truhlar and Eckart only; see the module docstring).
    """
    if model == "none":
        return np.zeros_like(_temperatures(temperature_K))
    if model == "wigner":
        return np.log(wigner(temperature_K, imag_freq_cm1))
    if model == "skodje-truhlar":
        return skodje_truhlar_log(temperature_K, imag_freq_cm1, V1, V2, energy_floor)
    if model == "eckart":
        return eckart_log(temperature_K, imag_freq_cm1, V1, V2, energy_floor)
    raise InputError(f"unknown tunnelling model {model!r}", field="tunnelling",
                     hint="use one of " + ", ".join(MODELS))


def kappa(model: str, temperature_K, imag_freq_cm1, V1, V2, energy_floor=None) -> np.ndarray:
    """Tunnelling factor of ``model`` in {"none", "wigner", "skodje-truhlar", "eckart"}.

    Arguments and units as in :func:`log_kappa`; returns an array of the shape
    of ``temperature_K`` (``inf`` where the value exceeds the float range).
    """
    log_k = log_kappa(model, temperature_K, imag_freq_cm1, V1, V2, energy_floor)
    with np.errstate(over="ignore"):
        return np.exp(log_k)
