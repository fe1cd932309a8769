"""Uncertainty of computed numbers: quasi-Monte Carlo samples, percentiles, uncertainty factors,
and the pieces of transition-state theory evaluated for many samples at once.

Sampling
--------
:func:`standard_normal_samples` draws ``n`` points of a ``d``-dimensional standard normal
distribution from a scrambled Sobol sequence (I. M. Sobol', USSR Comput. Math. Math. Phys. 7, 86
(1967); scrambling after A. B. Owen, 1995) or a Latin hypercube (M. D. McKay, R. J. Beckman and
W. J. Conover, Technometrics 21, 239 (1979)), both from :mod:`scipy.stats.qmc`, mapped through the
inverse normal distribution function. A seed makes the draw reproducible.

Summaries
---------
- :data:`PERCENTILES`: 2.5, 16, 50, 84 and 97.5 %, i.e. the median with the central 68 % and
  95 % ranges (one and two standard deviations of a normal distribution).
- :func:`uncertainty_factor`: f = exp((q84 - q16) / 2) of ln x, the factor of the evaluations'
  convention that k/f to k f is (about) the one-standard-deviation range.
- :func:`fit_evaluation_pair` / :func:`evaluation_factor`: the temperature dependence of f used
  by the NASA/JPL evaluation (JPL Publication 19-5, section on uncertainty estimates):
  f(T) = f(298 K) exp|g (1/T - 1/298 K)|, with g in K.

Sampled rate pieces (all vectorised over samples; rows are samples, columns temperatures)
-------------------------------------------------------------------------------------
- :func:`vibrational_ln_q_scaled`: ln q of harmonic modes whose wavenumbers are multiplied by a
  per-sample factor, with the same low-mode treatments as :mod:`tstrate.physics.thermo`.
- :func:`log_kappa_samples`: ln kappa of the tunnelling models with per-sample imaginary frequency,
  barriers and floor; the Eckart thermal average uses the same quadrature as
  :func:`tstrate.physics.tunnelling.eckart_log`, row by row, so a sample gives the value of the
  deterministic function to rounding.

Units: temperatures K, molar energies J/mol, wavenumbers cm^-1; ln of dimensionless numbers.
"""

from __future__ import annotations

import math
import warnings

import numpy as np

from tstrate.model.uncertainty import SAMPLING_METHODS
from tstrate.physics import thermo as _thermo
from tstrate.physics import tunnelling as _tun
from tstrate.units import CM1_J, N_A, R

#: the percentiles every sampled result reports [%]
PERCENTILES = (2.5, 16.0, 50.0, 84.0, 97.5)
#: reference temperature of the evaluation form f(T) = f(298) exp|g (1/T - 1/298)| [K]
EVALUATION_REFERENCE_T_K = 298.0
#: a uniform sample is kept this far from 0 and 1 before the inverse normal (|z| < 8.2)
_U_EDGE = 1e-16


def standard_normal_samples(n: int, d: int, *, seed: int = 0, method: str = "sobol") -> np.ndarray:
    """(n, d) standard normal samples from a scrambled Sobol sequence or a Latin hypercube.

    n: number of samples (>= 2); d: dimension (>= 1); seed: any integer (the same seed gives the
    same samples); method: "sobol" (the first n points of a sequence of 2^ceil(log2 n), so that n
    need not be a power of two) or "latin-hypercube".
    """
    from scipy.stats import norm, qmc

    if isinstance(n, bool) or not isinstance(n, (int, np.integer)) or n < 2:
        raise ValueError(f"n: need at least 2 samples, got {n!r}")
    if isinstance(d, bool) or not isinstance(d, (int, np.integer)) or d < 1:
        raise ValueError(f"d: the dimension must be at least 1, got {d!r}")
    if method == "sobol":
        engine = qmc.Sobol(d, scramble=True, rng=np.random.default_rng(seed))
        m = int(math.ceil(math.log2(n)))
        u = engine.random_base2(m)[:n]
    elif method == "latin-hypercube":
        u = qmc.LatinHypercube(d, rng=np.random.default_rng(seed)).random(n)
    else:
        raise ValueError(f"method: unknown sampling {method!r}; use " + " or ".join(SAMPLING_METHODS))
    return norm.ppf(np.clip(u, _U_EDGE, 1.0 - _U_EDGE))


def percentiles(values, axis: int = 0) -> np.ndarray:
    """The :data:`PERCENTILES` of ``values`` along ``axis`` (first axis of the result), NaN ignored."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)  # all-NaN columns stay NaN
        return np.nanpercentile(np.asarray(values, dtype=float), PERCENTILES, axis=axis)


def uncertainty_factor(ln_values, axis: int = 0) -> np.ndarray:
    """f = exp((q84 - q16) / 2) of ln x along ``axis`` (dimensionless, >= 1): k/f .. k f holds
    the central 68 % of the samples (for a log-normal x, f = exp(sigma of ln x))."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        q16, q84 = np.nanpercentile(np.asarray(ln_values, dtype=float), [16.0, 84.0], axis=axis)
    return np.exp(0.5 * (q84 - q16))


def evaluation_factor(temperature_K, f298: float, g_K: float) -> np.ndarray:
    """f(T) = f(298) exp|g (1/T - 1/298)| (JPL Publication 19-5); T [K], g [K]."""
    t = np.asarray(temperature_K, dtype=float)
    return f298 * np.exp(np.abs(g_K * (1.0 / t - 1.0 / EVALUATION_REFERENCE_T_K)))


def fit_evaluation_pair(temperature_K, factor) -> tuple[float, float, float]:
    """(f298, g [K], max relative deviation of f) of the evaluation form fitted to f(T).

    Least squares in ln f: ln f(T) = ln f298 + g |1/T - 1/298 K| with g >= 0 (the form cannot
    describe a spread that shrinks away from 298 K; then g = 0 and f298 is the geometric mean).
    Needs at least two temperatures, f >= 1 and finite.
    """
    t = np.asarray(temperature_K, dtype=float).ravel()
    f = np.asarray(factor, dtype=float).ravel()
    if t.size != f.size or t.size < 2:
        raise ValueError("temperature_K, factor: need at least two temperatures, one factor each")
    if not (np.all(np.isfinite(f)) and np.all(f >= 1.0 - 1e-12) and np.all(t > 0)):
        raise ValueError("factor: uncertainty factors must be finite and at least 1")
    x = np.abs(1.0 / t - 1.0 / EVALUATION_REFERENCE_T_K)
    y = np.log(np.maximum(f, 1.0))
    if np.ptp(x) > 0:
        g, c = np.polyfit(x, y, 1)
    else:
        g, c = 0.0, float(np.mean(y))
    if g < 0:
        g, c = 0.0, float(np.mean(y))
    f298 = float(np.exp(c))
    dev = float(np.max(np.abs(evaluation_factor(t, f298, g) / f - 1.0)))
    return f298, float(g), dev


# ---------------------------------------------------------------- sampled partition functions
def vibrational_ln_q_scaled(frequencies_cm1, temperature_K, scale, low_modes=_thermo.HARMONIC) -> np.ndarray:
    """(S, T) ln q_vib (from the zero-point level) of harmonic modes scaled by ``scale`` (S,).

    The same treatment as :func:`tstrate.physics.thermo.thermochemistry` gives for a species whose
    harmonic wavenumbers are ``frequencies_cm1 * scale[s]`` (the low-mode cut-off stays fixed).
    """
    nu = np.asarray(frequencies_cm1, dtype=float)
    t = np.atleast_1d(np.asarray(temperature_K, dtype=float))
    s = np.atleast_1d(np.asarray(scale, dtype=float))
    if nu.size == 0:
        return np.zeros((s.size, t.size))
    f = (s[:, None] * nu[None, :]).ravel()                     # (S*M,)
    if low_modes.method == _thermo.LOW_MODES_FREQUENCY_FLOOR:
        f = np.maximum(f, low_modes.cutoff_cm1)
    ln_q, u, ent, _ = _thermo.harmonic_oscillators(f, t)        # (T, S*M)
    if low_modes.method == _thermo.LOW_MODES_ROTOR_ENTROPY_BLEND:
        w = 1.0 / (1.0 + (low_modes.cutoff_cm1 / f[None, :]) ** 4)
        ent = w * ent + (1 - w) * _thermo.free_rotor_entropy(f, t)
        ln_q = ent - u
    return ln_q.reshape(t.size, s.size, nu.size).sum(axis=2).T


# ---------------------------------------------------------------- sampled tunnelling
def _eckart_log_p_rows(E, E_minus_A, V1, V2, barrier_energy):
    """log P(E) of the Eckart barrier with per-row parameters (columns of shape (rows, 1)).

    The expression of :func:`tstrate.physics.tunnelling._eckart_log_p`, row-wise."""
    c = 2.0 * np.pi / barrier_energy
    k = 2.0 * c / (1.0 / np.sqrt(V1) + 1.0 / np.sqrt(V2))
    open_ = (E > 0.0) & (E_minus_A > 0.0)
    p = k * np.sqrt(np.where(open_, E, 1.0))
    q = k * np.sqrt(np.where(open_, E_minus_A, 1.0))
    u = p + q
    log_num = math.log(2.0) + _tun._log_sinh(p) + _tun._log_sinh(q)
    w2 = 4.0 * c * c * V1 * V2 - np.pi ** 2
    w = np.sqrt(np.maximum(w2, 0.0))
    log_den_cosh = math.log(2.0) + _tun._log_cosh(0.5 * (u + w)) + _tun._log_cosh(0.5 * (u - w))
    y = np.sqrt(np.maximum(-w2, 0.0))
    cos_half = np.cos(0.5 * y)
    with np.errstate(divide="ignore"):
        log_cos2 = np.where(cos_half != 0.0, 2.0 * np.log(np.abs(np.where(cos_half != 0.0, cos_half, 1.0))),
                            -np.inf)
    log_den_cos = math.log(2.0) + np.logaddexp(2.0 * _tun._log_sinh(0.5 * u), log_cos2)
    log_den = np.where(w2 >= 0.0, log_den_cosh, log_den_cos)
    log_p = np.minimum(log_num - log_den, 0.0)
    return np.where(open_, log_p, -np.inf)


def _eckart_log_kappa_rows(beta, barrier_energy, V1, V2, E0):
    """log kappa for rows with their own beta, h c nu, V1, V2 and floor E0 (all 1-D, same length);
    the algorithm of :func:`tstrate.physics.tunnelling._eckart_log_kappa` row by row."""
    A = V1 - V2
    b = beta[:, None]
    log_b = np.log(b)
    be, v1, v2, e0 = (x[:, None] for x in (barrier_energy, V1, V2, E0))

    def log_integrand(s):
        s2 = s * s
        E = e0 + s2
        log_p = _eckart_log_p_rows(E, (e0 - A[:, None]) + s2, v1, v2, be)
        with np.errstate(divide="ignore"):
            log_2s = np.log(2.0 * s)
        return log_p + log_b - b * (E - v1) + log_2s

    return _tun.log_thermal_quadrature(log_integrand, beta, np.maximum(V1, E0), V1, E0)


def log_kappa_samples(model: str, temperature_K, imag_freq_cm1, V1, V2, energy_floor=None, *,
                      chunk_rows: int = 4096) -> np.ndarray:
    """(S, T) ln kappa of tunnelling ``model`` with per-sample parameters (each (S,)).

    imag_freq_cm1: magnitudes [cm^-1] (> 0); V1, V2: forward and reverse barriers [J/mol] (Eckart:
    > 0); energy_floor: lower limit of the thermal average [J/mol] (raised to max(0, V1 - V2) as in
    :mod:`tstrate.physics.tunnelling`), None for that threshold. Samples whose parameters the model
    refuses give NaN rows. ``chunk_rows`` bounds the memory of the Eckart quadrature.
    """
    t = np.atleast_1d(np.asarray(temperature_K, dtype=float))
    nu = np.atleast_1d(np.asarray(imag_freq_cm1, dtype=float))
    S = nu.size
    v1 = np.broadcast_to(np.asarray(V1, dtype=float), (S,))
    v2 = np.broadcast_to(np.asarray(V2, dtype=float), (S,))
    if model == "none":
        return np.zeros((S, t.size))
    be = nu * CM1_J * N_A
    if model == "wigner":
        u = be[:, None] / (R * t[None, :])
        out = np.log1p(u * u / 24.0)
        out[~(nu > 0)] = np.nan
        return out
    threshold = np.maximum(0.0, v1 - v2)
    floor = threshold if energy_floor is None else np.maximum(
        np.broadcast_to(np.asarray(energy_floor, dtype=float), (S,)), threshold)
    out = np.full((S, t.size), np.nan)
    if model == "skodje-truhlar":
        ok = np.flatnonzero((nu > 0) & (v1 > 0) & (v2 >= 0))
        for i in ok:  # a closed form plus a short series per sample
            out[i] = _tun.skodje_truhlar_log(t, nu[i], v1[i], v2[i], floor[i])
        return out
    if model != "eckart":
        raise ValueError(f"model: unknown tunnelling model {model!r}")
    ok = np.flatnonzero((nu > 0) & (v1 > 0) & (v2 > 0) & np.isfinite(v1) & np.isfinite(v2))
    rows_per = max(1, chunk_rows // t.size)
    beta_t = 1.0 / (R * t)
    for start in range(0, ok.size, rows_per):
        idx = ok[start:start + rows_per]
        rep = lambda x: np.repeat(x[idx], t.size)  # noqa: E731
        beta = np.tile(beta_t, idx.size)
        out[idx] = _eckart_log_kappa_rows(beta, rep(be), rep(v1), rep(v2), rep(floor)).reshape(idx.size, t.size)
    return out


__all__ = ["PERCENTILES", "SAMPLING_METHODS", "EVALUATION_REFERENCE_T_K", "standard_normal_samples",
           "percentiles", "uncertainty_factor", "evaluation_factor", "fit_evaluation_pair",
           "vibrational_ln_q_scaled", "log_kappa_samples"]
