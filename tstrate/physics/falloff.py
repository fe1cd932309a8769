"""Pressure dependence of unimolecular rate constants: strong collisions, Lindemann, Troe, JPL.

Strong-collision master equation scaled by a collision efficiency
(Troe, J. Chem. Phys. 66, 4745 and 4758 (1977); Gilbert and Smith 1990):

    k(T, [M]) = sum_E k(E) f(E) omega / (omega + k(E)),   omega = beta_c Z_LJ [M]

with f(E) = rho(E) exp(-E/RT) / Q the thermal distribution of the reactant on
its grain. Limits: k_inf(T) = sum_E k(E) f(E) and
k_0(T) = beta_c Z_LJ sum_{E >= E0} f(E) (per [M], m^3 s^-1).

Units: temperatures K, number densities [M] m^-3, first-order rate constants
s^-1, k_0 of a unimolecular reaction m^3 s^-1 (molecule^-1). The Troe and
Lindemann forms work for any order as long as k_0 [M] has the units of k_inf.

The Troe formula functions live here because the physics uses them; the Troe expression, its
canonical labels and its fitting are in :mod:`tstrate.expressions.troe`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from tstrate.arrays import per_temperature, temperatures_K
from tstrate.errors import InputError
from tstrate.physics.rrkm import MicrocanonicalRate
from tstrate.physics.states import StateCounts
from tstrate.units import R, number_density_m3, pressure_to_Pa

_LOG10 = math.log(10.0)


# ---------------------------------------------------------------- conditions
def number_density_from(value, unit: str, temperature_K=None) -> np.ndarray:
    """[M] [m^-3] from a pressure or a number density.

    ``unit`` is a pressure unit of :data:`tstrate.units.PRESSURE_UNITS_PA`
    ("Pa", "bar", "Torr", "atm", ...; needs ``temperature_K``, ideal gas) or a
    number-density unit: "molecule cm-3" (also "cm-3") or "m-3".
    """
    v = np.asarray(value, dtype=float)
    if np.any(~np.isfinite(v)) or np.any(v < 0):
        raise InputError(f"pressure or number density must be non-negative, got {value!r}", field="pressure")
    if unit in ("molecule cm-3", "cm-3", "molecules cm-3"):
        return v * 1e6
    if unit in ("m-3", "molecule m-3"):
        return v * 1.0
    pa = pressure_to_Pa(v, unit, field="pressure")
    if temperature_K is None:
        raise InputError(f"a temperature is needed to turn a pressure in {unit} into [M]", field="temperature")
    return number_density_m3(pa, temperature_K)


# ---------------------------------------------------------------- strong collisions
def thermal_distribution(states: StateCounts, temperature_K) -> np.ndarray:
    """f(E_i; T) = counts_i exp(-E_i/RT) / Q, shape (n_T, n_grains), each row summing to 1.

    Built in logarithms, so low temperatures and long grids do not overflow.
    """
    t = temperatures_K(temperature_K, ndim=1)
    occupied = np.flatnonzero(states.counts > 0)
    log_w = np.log(states.counts[occupied])[None, :] - \
        states.energies_J_per_mol[occupied][None, :] / (R * t[:, None])
    w = np.exp(log_w - log_w.max(axis=1, keepdims=True))
    f = np.zeros((t.size, states.n_grains))
    f[:, occupied] = w / w.sum(axis=1, keepdims=True)
    return f


def high_pressure_limit(rate: MicrocanonicalRate, temperature_K) -> np.ndarray:
    """k_inf(T) = sum_E k(E) f(E) [s^-1] (strong collision, infinite pressure)."""
    return thermal_distribution(rate.reactant, temperature_K) @ rate.rate_per_s


def low_pressure_limit(rate: MicrocanonicalRate, temperature_K, collision_rate_m3_s,
                       collision_efficiency=1.0) -> np.ndarray:
    """k_0(T) = beta_c Z_LJ sum_{E >= E0} f(E) [m^3 s^-1], the second-order low-pressure limit.

    Uses the classical threshold E0; with tunnelling, grains below E0 with
    k(E) > 0 reach this limit only at far lower pressures.
    """
    t = temperatures_K(temperature_K, ndim=1)
    f = thermal_distribution(rate.reactant, t)
    above = f[:, rate.barrier_index:].sum(axis=1)
    return per_temperature(collision_efficiency, t, "collision_efficiency") * \
        per_temperature(collision_rate_m3_s, t, "collision_rate_m3_s") * above


@dataclass(frozen=True)
class FalloffResult:
    """k(T, [M]) on a grid, with its limits.

    Attributes: temperature_K (n_T), number_density_m3 (n_T, n_M), rate_per_s
    (n_T, n_M) [s^-1], high_pressure_per_s (n_T) [s^-1], low_pressure_m3_s
    (n_T) [m^3 s^-1].
    """

    temperature_K: np.ndarray = field(repr=False)
    number_density_m3: np.ndarray = field(repr=False)
    rate_per_s: np.ndarray = field(repr=False)
    high_pressure_per_s: np.ndarray = field(repr=False)
    low_pressure_m3_s: np.ndarray = field(repr=False)


#: Gauss-Laguerre nodes over the rotational energy of the adiabatic 2-D rotor (J-resolved thresholds)
ROTOR_QUADRATURE_NODES = 24


def _rotor_quadrature(shift: float, n: int) -> tuple[np.ndarray, np.ndarray]:
    """Nodes x_j = E_r / RT and weights w_j with sum_j w_j g(x_j) = int_0^inf exp(-x) g(x) dx for
    g growing like exp(shift x): Gauss-Laguerre in y = (1 - shift) x, the factor exp(-shift x)
    moved into the weights (shift < 1)."""
    y, w = np.polynomial.laguerre.laggauss(n)
    x = y / (1.0 - shift)
    return x, w * np.exp(-shift * x) / (1.0 - shift)


def strong_collision_falloff(rate: MicrocanonicalRate, temperature_K, number_density_m3, *,
                             collision_rate_m3_s, collision_efficiency=1.0,
                             threshold_shift: float = 0.0) -> FalloffResult:
    """k(T, [M]) = sum_E k(E) f(E) omega/(omega + k(E)), omega = beta_c Z_LJ [M].

    Parameters
    ----------
    rate:
        k(E) of the reactant (:class:`~tstrate.physics.rrkm.MicrocanonicalRate`).
    temperature_K:
        Temperatures [K], shape (n_T,).
    number_density_m3:
        Bath-gas number densities [M] [m^-3], shape (n_M,), or (n_T, n_M) for
        fixed pressures (use :func:`number_density_from` with the temperature column).
    collision_rate_m3_s:
        Z_LJ [m^3 s^-1], one number or one per temperature.
    collision_efficiency:
        beta_c (dimensionless, 0..1), one number or one per temperature.
    threshold_shift:
        delta = 1 - B_TS / B_R of the adiabatic 2-D external rotor (dimensionless, < 1; 0 leaves
        rotation out). With it the sum is J-resolved: a molecule with rotational energy E_r of
        that rotor reaches the TS with E_r (1 - delta) of it, so its threshold is E0 - delta E_r
        and k(E, E_r) = L N_TS(E - E0 + delta E_r) / (h rho(E)); k(T, [M]) is then averaged over
        the classical thermal distribution of E_r (Gauss-Laguerre). Both limits treat rotation
        alike: the average of k(E, E_r) over E_r is the E-resolved k_inf with the factor
        I_TS/I_R = 1/(1 - delta) (which ``rate`` must carry as its centrifugal factor; the sum is
        scaled onto it exactly, a correction of about 1e-3 for the quadrature and the grain), and
        k0 = beta_c Z <P(E >= E0 - delta E_r)> gains the centrifugal change of the threshold
        (the rotational factor of the low-pressure limit; Troe 1977).
    """
    t = temperatures_K(temperature_K, ndim=1)
    m = np.atleast_1d(np.asarray(number_density_m3, dtype=float))
    if m.ndim == 1:
        m = np.broadcast_to(m, (t.size, m.size))
    if m.ndim != 2 or m.shape[0] != t.size or np.any(~np.isfinite(m)) or np.any(m < 0):
        raise InputError("number densities must be non-negative numbers in m^-3, shape (n_M,) or (n_T, n_M)",
                         field="number_density_m3")
    z = per_temperature(collision_rate_m3_s, t, "collision_rate_m3_s")
    beta = per_temperature(collision_efficiency, t, "collision_efficiency")
    if not (np.isfinite(threshold_shift) and threshold_shift < 1.0):
        raise InputError(f"threshold_shift must be a number below 1, got {threshold_shift!r}",
                         field="threshold_shift")
    f = thermal_distribution(rate.reactant, t)
    if threshold_shift == 0.0:
        out = np.empty(m.shape)
        for i in range(t.size):
            out[i] = _falloff_sum(f[i], rate.rate_per_s, beta[i] * z[i] * m[i])
        k_inf = f @ rate.rate_per_s
        k0 = beta * z * f[:, rate.barrier_index:].sum(axis=1)
        return FalloffResult(t, np.array(m), out, k_inf, k0)

    from tstrate.physics.rrkm import H_MOLAR

    e = rate.energies_J_per_mol
    rho = rate.reactant.density_per_J_per_mol
    has = rho > 0
    x, w = _rotor_quadrature(float(threshold_shift), ROTOR_QUADRATURE_NODES)
    g = rate.grain_J_per_mol
    n_ts = rate.ts_sum_of_states
    out = np.zeros(m.shape)
    k_inf = f @ rate.rate_per_s      # the E-resolved limit, which carries I_TS/I_R (see below)
    k0 = np.zeros(t.size)
    for i in range(t.size):
        omega = beta[i] * z[i] * m[i]
        ks, weights = [], []
        for xj, wj in zip(x, w):
            shift = threshold_shift * xj * R * t[i]          # delta E_r [J/mol]
            # N_TS at E + delta E_r, read off the grain that energy falls in (a step, like the
            # grained counts), so that k(E, E_r) > 0 exactly where E + delta E_r reaches the barrier
            idx = np.floor((e - e[0] + shift) / g + 1e-9).astype(int)
            n_shift = np.where(idx < 0, 0.0, n_ts[np.clip(idx, 0, n_ts.size - 1)])
            k_j = np.zeros(e.size)
            k_j[has] = rate.path_degeneracy * n_shift[has] / (H_MOLAR * rho[has])
            ks.append(k_j)
            weights.append(wj)
            k0[i] += wj * f[i][idx >= rate.barrier_index].sum()
        # The quadrature over E_r and the interpolation of the grained N_TS leave k_inf off the
        # E-resolved value by about 1e-3; scaling every k(E, E_r) of this temperature by one factor
        # makes the high-pressure limit exact and leaves k0 (a count above the thresholds) as it is.
        j_inf = sum(wj * (f[i] @ k_j) for wj, k_j in zip(weights, ks))
        scale = k_inf[i] / j_inf if j_inf > 0 else 1.0
        for wj, k_j in zip(weights, ks):
            out[i] += wj * _falloff_sum(f[i], scale * k_j, omega)
    return FalloffResult(t, np.array(m), out, k_inf, beta * z * k0)


def _falloff_sum(f_row: np.ndarray, k_e: np.ndarray, omega: np.ndarray) -> np.ndarray:
    """sum_E f(E) k(E) omega / (omega + k(E)) for each omega (one temperature)."""
    fk = f_row * k_e
    # grains whose share of k_inf is below 1e-30 are dropped: at most ~1e-26 relative error, and it
    # keeps subnormal numbers (very slow arithmetic) out of the sum
    keep = fk > 1e-30 * fk.max() if fk.size and fk.max() > 0 else np.zeros(fk.size, bool)
    k_keep = k_e[keep]
    om = np.asarray(omega, dtype=float)[:, None]
    with np.errstate(invalid="ignore"):
        return (om / (om + k_keep[None, :])) @ fk[keep]


# ---------------------------------------------------------------- closed forms
def lindemann_hinshelwood(k0, k_inf, number_density_m3):
    """k = k_inf k0[M] / (k_inf + k0[M]) (Lindemann 1922, Hinshelwood 1926); broadcasting arrays."""
    k0m = np.asarray(k0, dtype=float) * np.asarray(number_density_m3, dtype=float)
    k_inf = np.asarray(k_inf, dtype=float)
    return k_inf * k0m / (k_inf + k0m)


def troe_center_broadening(temperature_K, a, T3, T1, T2=None):
    """F_cent = (1-a) exp(-T/T***) + a exp(-T/T*) + exp(-T**/T) (dimensionless).

    Troe, Ber. Bunsenges. Phys. Chem. 87, 161 (1983); Gilbert, Luther and Troe,
    Ber. Bunsenges. Phys. Chem. 87, 169 (1983). ``T3`` is T*** [K], ``T1`` is
    T* [K], ``T2`` is T** [K] (omitted term when None).
    """
    t = np.asarray(temperature_K, dtype=float)
    fc = (1.0 - a) * np.exp(-t / T3) + a * np.exp(-t / T1)
    if T2 is not None:
        fc = fc + np.exp(-T2 / t)
    return fc


def troe_broadening(temperature_K, reduced_pressure, a, T3, T1, T2=None):
    """Troe broadening factor F(T, P_r) (dimensionless).

    log F = log F_cent / (1 + [(log P_r + c) / (n - d (log P_r + c))]^2),
    c = -0.4 - 0.67 log F_cent, n = 0.75 - 1.27 log F_cent, d = 0.14, logs base 10
    (Troe 1983; Gilbert, Luther and Troe 1983).
    """
    fc = troe_center_broadening(temperature_K, a, T3, T1, T2)
    log_fc = np.log10(fc)
    pr = np.maximum(np.asarray(reduced_pressure, dtype=float), 1e-300)
    c = -0.4 - 0.67 * log_fc
    n = 0.75 - 1.27 * log_fc
    x = np.log10(pr) + c
    f1 = x / (n - 0.14 * x)
    return 10.0 ** (log_fc / (1.0 + f1**2))


def troe_rate(k0, k_inf, number_density_m3, temperature_K, a, T3, T1, T2=None):
    """k = k_inf [P_r / (1 + P_r)] F(T, P_r), P_r = k0 [M] / k_inf (Troe 1983).

    ``k0`` [m^3 s^-1 for unimolecular, m^6 s^-1 for association] and ``k_inf``
    [s^-1 or m^3 s^-1] broadcast against ``number_density_m3`` [m^-3] and
    ``temperature_K`` [K].
    """
    k_inf = np.asarray(k_inf, dtype=float)
    pr = np.asarray(k0, dtype=float) * np.asarray(number_density_m3, dtype=float) / k_inf
    return k_inf * pr / (1.0 + pr) * troe_broadening(temperature_K, pr, a, T3, T1, T2)


def jpl_termolecular_rate(temperature_K, number_density_m3, k0_300_m6_s, n, kinf_300_m3_s, m, Fc=0.6):
    """Effective second-order k(T, [M]) [m^3 s^-1] of a JPL termolecular association.

    k0(T) = k0_300 (T/300)^-n, k_inf(T) = k_inf_300 (T/300)^-m,
    k = [k0[M] / (1 + k0[M]/k_inf)] Fc^{1 / (1 + [log10(k0[M]/k_inf)]^2)}, Fc = 0.6
    (Burkholder et al., JPL Publication 19-5, 2019, section 2). Give k0_300 in
    m^6 molecule^-2 s^-1 and k_inf_300 in m^3 molecule^-1 s^-1 (JPL tables use
    cm^6 and cm^3: multiply by 1e-12 and 1e-6).
    """
    t = np.asarray(temperature_K, dtype=float)
    k0 = k0_300_m6_s * (t / 300.0) ** (-n)
    kinf = kinf_300_m3_s * (t / 300.0) ** (-m)
    k0m = k0 * np.asarray(number_density_m3, dtype=float)
    ratio = k0m / kinf
    return k0m / (1.0 + ratio) * Fc ** (1.0 / (1.0 + np.log10(ratio) ** 2))
