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
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

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


def _temperatures(temperature_K) -> np.ndarray:
    t = np.atleast_1d(np.asarray(temperature_K, dtype=float))
    if t.ndim != 1 or np.any(~np.isfinite(t)) or np.any(t <= 0):
        raise InputError(f"temperatures must be positive numbers in K, got {temperature_K!r}", field="temperature")
    return t


# ---------------------------------------------------------------- strong collisions
def thermal_distribution(states: StateCounts, temperature_K) -> np.ndarray:
    """f(E_i; T) = counts_i exp(-E_i/RT) / Q, shape (n_T, n_grains), each row summing to 1.

    Built in logarithms, so low temperatures and long grids do not overflow.
    """
    t = _temperatures(temperature_K)
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
    t = _temperatures(temperature_K)
    f = thermal_distribution(rate.reactant, t)
    above = f[:, rate.barrier_index:].sum(axis=1)
    return _per_T(collision_efficiency, t, "collision_efficiency") * \
        _per_T(collision_rate_m3_s, t, "collision_rate_m3_s") * above


def _per_T(value, t: np.ndarray, name: str) -> np.ndarray:
    v = np.asarray(value, dtype=float)
    if v.ndim == 0:
        v = np.full(t.shape, float(v))
    if v.shape != t.shape:
        raise InputError(f"{name} must be one number or one per temperature ({t.size}), got shape {v.shape}",
                         field=name)
    if np.any(~np.isfinite(v)) or np.any(v < 0):
        raise InputError(f"{name} must be non-negative", field=name)
    return v


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


def strong_collision_falloff(rate: MicrocanonicalRate, temperature_K, number_density_m3, *,
                             collision_rate_m3_s, collision_efficiency=1.0) -> FalloffResult:
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
    """
    t = _temperatures(temperature_K)
    m = np.atleast_1d(np.asarray(number_density_m3, dtype=float))
    if m.ndim == 1:
        m = np.broadcast_to(m, (t.size, m.size))
    if m.ndim != 2 or m.shape[0] != t.size or np.any(~np.isfinite(m)) or np.any(m < 0):
        raise InputError("number densities must be non-negative numbers in m^-3, shape (n_M,) or (n_T, n_M)",
                         field="number_density_m3")
    z = _per_T(collision_rate_m3_s, t, "collision_rate_m3_s")
    beta = _per_T(collision_efficiency, t, "collision_efficiency")
    f = thermal_distribution(rate.reactant, t)
    k_e = rate.rate_per_s
    active = np.flatnonzero(k_e > 0)
    start = int(active[0]) if active.size else k_e.size
    k_e = k_e[start:]
    f_act = f[:, start:]
    out = np.empty(m.shape)
    for i in range(t.size):
        omega = (beta[i] * z[i] * m[i])[:, None]
        fk = f_act[i] * k_e
        # grains whose share of k_inf is below 1e-30 are dropped: at most ~1e-26 relative
        # error, and it keeps subnormal numbers (very slow arithmetic) out of the sum
        keep = fk > 1e-30 * fk.max() if fk.size and fk.max() > 0 else np.zeros(fk.size, bool)
        k_keep = k_e[keep]
        with np.errstate(invalid="ignore"):
            out[i] = (omega / (omega + k_keep[None, :])) @ fk[keep]
    k_inf = f_act @ k_e
    k0 = beta * z * f[:, rate.barrier_index:].sum(axis=1)
    return FalloffResult(t, np.array(m), out, k_inf, k0)


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


# ---------------------------------------------------------------- fitting
#: Bounds of every Troe fit (:func:`fit_troe` and the effective-k0 fit of
#: :func:`tstrate.physics.unimolecular.fit_troe_effective_k0`): a in [0, 1]; T***, T* and T** in
#: [1 K, 1e8 K] (fitted as ln T).
TROE_A_BOUNDS = (0.0, 1.0)
TROE_T_BOUNDS_K = (1.0, 1e8)
#: A fitted parameter this close to a bound sits at it: 1e-6 in a (a weight that changes
#: F_cent by at most 1e-6), 1e-6 in ln T for a temperature.
TROE_BOUND_TOLERANCE = 1e-6
#: T*** and T* closer than this in ln T make one decaying term: a is then not determined
#: (a change of a by 1 moves F_cent by less than 1e-4 T/T*** exp(-T/T***)), and merging the
#: two terms into one changes F_cent by at most about 0.02 (1e-4 T/T***)^2 relative.
TROE_MERGE_TOLERANCE = 1e-4
#: At the temperatures of a fit, a term of F_cent that changes it by less than this (relative)
#: everywhere is not determined by the data, and the fit is written without it (see
#: :func:`canonical_troe`). Troe fits of computed falloff curves deviate by 1e-3 to 1e-1.
TROE_NEGLIGIBLE_TERM = 1e-4

_TROE_LABELS = {"a": "a", "T3_K": "T***", "T1_K": "T*", "T2_K": "T**"}


def _fcent_terms(t, a, T3, T1, T2):
    with np.errstate(over="ignore", under="ignore", divide="ignore"):
        return ((1.0 - a) * np.exp(-t / T3), a * np.exp(-t / T1),
                np.exp(-T2 / t) if T2 is not None else np.zeros_like(t))


def canonical_troe(a, T3, T1, T2=None, *, temperature_K=None) -> tuple[float, float, float, float | None]:
    """The one representative (a, T***, T*, T**) of Troe parameters that give the same F_cent.

    F_cent = (1-a) exp(-T/T***) + a exp(-T/T*) (+ exp(-T**/T)) does not change when
    a -> 1-a and T*** <-> T* are swapped together, so every F_cent(T) has two exact labels
    (twins) and a least-squares fit may land on either; and where a term hardly counts, its
    parameters are not determined at all. The canonical labels are:

    1. one decaying term - a within :data:`TROE_BOUND_TOLERANCE` of 0 or 1, T*** and T*
       within :data:`TROE_MERGE_TOLERANCE` in ln T, or (with ``temperature_K``) a single
       term exp(-T/T_1) giving F_cent within :data:`TROE_NEGLIGIBLE_TERM` at every one of
       those temperatures - is written a = 0, T*** = T* = T_1, with 1/T_1 = (1-a)/T*** + a/T*
       or, with temperatures, whichever of that, T*** and T* is closest;
    2. otherwise the twin with T*** < T* (the term that dies first with rising T comes
       first, as Troe parameters are usually quoted): a -> 1-a and T*** <-> T* when T*** > T*;
       with ``temperature_K``, a decaying term below :data:`TROE_NEGLIGIBLE_TERM` of F_cent
       at every temperature is put first with T*** at its lower bound (1 K, where it vanishes);
    3. with ``temperature_K``, T** with exp(-T**/T) below :data:`TROE_NEGLIGIBLE_TERM` of
       F_cent everywhere is written at its upper bound (1e8 K, where the term vanishes).

    Rules that use ``temperature_K`` change F_cent there by less than
    :data:`TROE_NEGLIGIBLE_TERM` (relative). a and 1 - a are both in [0, 1] or both
    outside, so a fitted a stays in its bounds [0, 1]; an a given outside [0, 1] (F_cent may
    still be a valid broadening) is mapped by the same rules.
    """
    a, T3, T1 = float(a), float(T3), float(T1)
    T2 = None if T2 is None else float(T2)
    t = None if temperature_K is None else np.atleast_1d(np.asarray(temperature_K, dtype=float))
    if abs(1.0 - a) < abs(a):                      # the twin with the smaller |a|
        a, T3, T1 = 1.0 - a, T1, T3
    if abs(a) <= TROE_BOUND_TOLERANCE:
        return 0.0, T3, T3, _canonical_T2(t, 0.0, T3, T3, T2)
    single = 1.0 / ((1.0 - a) / T3 + a / T1) if (1.0 - a) / T3 + a / T1 > 0 else None
    if abs(math.log(T1 / T3)) <= TROE_MERGE_TOLERANCE and single is not None:
        return 0.0, single, single, _canonical_T2(t, 0.0, single, single, T2)
    if t is not None:
        e3, e1, e2 = _fcent_terms(t, a, T3, T1, T2)
        fc = e3 + e1 + e2
        if np.all(fc > 0):
            best = None
            for cand in ([single] if single is not None else []) + [T3, T1]:
                err = float(np.max(np.abs(np.exp(-t / cand) + e2 - fc) / fc))
                if best is None or err < best[0]:
                    best = (err, cand)
            if best[0] <= TROE_NEGLIGIBLE_TERM:
                return 0.0, best[1], best[1], _canonical_T2(t, 0.0, best[1], best[1], T2)
            dead3, dead1 = (np.all(np.abs(e) <= TROE_NEGLIGIBLE_TERM * fc) for e in (e3, e1))
            if dead1 and not dead3:                # put the dead term first
                a, T3, T1 = 1.0 - a, T1, T3
                dead3, dead1 = True, False
            if dead3 and not dead1:
                return a, TROE_T_BOUNDS_K[0], T1, _canonical_T2(t, a, TROE_T_BOUNDS_K[0], T1, T2)
    if T3 > T1:
        a, T3, T1 = 1.0 - a, T1, T3
    return a, T3, T1, _canonical_T2(t, a, T3, T1, T2)


def _canonical_T2(t, a, T3, T1, T2):
    if T2 is None or t is None:
        return T2
    e3, e1, e2 = _fcent_terms(t, a, T3, T1, T2)
    fc = e3 + e1 + e2
    if np.all(fc > 0) and np.all(e2 <= TROE_NEGLIGIBLE_TERM * fc):
        return TROE_T_BOUNDS_K[1]
    return T2


def troe_parameters_at_bound(a, T3, T1, T2=None) -> tuple[tuple[str, float], ...]:
    """(parameter, bound) for each Troe parameter that sits at a bound of the fit.

    Parameters are named as the fields of :class:`TroeFit` ("a", "T3_K", "T1_K", "T2_K");
    bounds are :data:`TROE_A_BOUNDS` and :data:`TROE_T_BOUNDS_K` [K], within
    :data:`TROE_BOUND_TOLERANCE`.
    """
    out = []
    for bound in TROE_A_BOUNDS:
        if abs(a - bound) <= TROE_BOUND_TOLERANCE:
            out.append(("a", float(bound)))
    for name, value in (("T3_K", T3), ("T1_K", T1), ("T2_K", T2)):
        if value is None:
            continue
        for bound in TROE_T_BOUNDS_K:
            if abs(math.log(value / bound)) <= TROE_BOUND_TOLERANCE:
                out.append((name, float(bound)))
    return tuple(out)


@dataclass(frozen=True)
class TroeFit:
    """Troe parameters fitted to k(T, [M]) and the quality of the fit.

    a (dimensionless), T3_K (T***), T1_K (T*), T2_K (T**, None when not fitted) [K], in the
    canonical order of :func:`canonical_troe`; max_relative_deviation and
    rms_relative_deviation of k_fit/k - 1 over the grid; at_bound: (parameter, bound) for
    each parameter that sits at a bound of the fit (:func:`troe_parameters_at_bound`; the
    data do not determine such a value, see :func:`troe_bound_notes`).
    """

    a: float
    T3_K: float
    T1_K: float
    T2_K: float | None
    max_relative_deviation: float
    rms_relative_deviation: float
    at_bound: tuple[tuple[str, float], ...] = ()


def troe_fit_result(a, T3, T1, T2, relative_deviation, temperature_K) -> TroeFit:
    """The :class:`TroeFit` of fitted parameters: canonical labels, deviations, bounds reached.

    ``relative_deviation(a, T3, T1, T2)`` gives k_fit/k - 1 on the fitted grid, whose
    temperatures are ``temperature_K`` [K]; it is evaluated with the canonical parameters
    (:func:`canonical_troe` at those temperatures), so the deviations are those of the labels
    reported.
    """
    a, T3, T1, T2 = canonical_troe(a, T3, T1, T2, temperature_K=temperature_K)
    dev = np.asarray(relative_deviation(a, T3, T1, T2), dtype=float)
    return TroeFit(a, T3, T1, T2, float(np.max(np.abs(dev))), float(np.sqrt(np.mean(dev**2))),
                   troe_parameters_at_bound(a, T3, T1, T2))


def troe_bound_notes(fit: TroeFit) -> tuple[str, ...]:
    """One sentence per parameter of ``fit`` at a bound, saying what its value means (nothing)."""
    notes = []
    for name, bound in fit.at_bound:
        if name == "a":
            live, dead, value = (("T***", "T*", fit.T3_K) if bound == TROE_A_BOUNDS[0]
                                 else ("T*", "T***", fit.T1_K))
            notes.append(f"Troe fit: F_cent has a single decaying term exp(-T/{live}) with {live} = "
                         f"{value:.4g} K (a at its bound {bound:g}); {dead} carries no information")
            continue
        label = _TROE_LABELS[name]
        low = bound == TROE_T_BOUNDS_K[0]
        term = "exp(-T**/T)" if name == "T2_K" else f"exp(-T/{label})"
        # exp(-T/T3) -> 0 as T3 -> 0 and -> 1 as T3 -> infinity; exp(-T2/T) the other way round
        vanishes = low != (name == "T2_K")
        notes.append(f"Troe fit: {label} sits at its {'lower' if low else 'upper'} bound {bound:g} K: "
                     f"{term} is {'practically 0' if vanishes else 'practically 1'} at every fitted "
                     f"temperature, so the data only say that {label} is far "
                     f"{'below' if low else 'above'} them")
    return tuple(notes)


def fit_troe(temperature_K, number_density_m3, rate, k0, k_inf, *, fit_T2: bool = False,
             starts=None) -> TroeFit:
    """Least-squares fit of Troe parameters (a, T***, T*, optional T**) on log k.

    The result has the canonical labels of :func:`canonical_troe` at the fitted temperatures,
    whichever twin the optimiser reaches, and names the parameters that sit at a bound of the
    fit (``at_bound``).

    Parameters
    ----------
    temperature_K:
        (n_T,) temperatures [K].
    number_density_m3:
        (n_M,) bath-gas number densities [m^-3].
    rate:
        (n_T, n_M) rate constants to fit (same units as k_inf).
    k0, k_inf:
        (n_T,) limits (e.g. from :func:`strong_collision_falloff`).
    fit_T2:
        Also fit T** (else the exp(-T**/T) term is left out).
    starts:
        Starting points (a, T*** [K], T* [K][, T** [K] with ``fit_T2``]) to try instead of the
        fixed grid of 12 (24 with T**) starts; clipped into the bounds. Among the results the
        lowest sum of squares wins, and of results equal to 1e-9 of it (round-off), the first
        start in order, so the choice does not hang on the last bits of the arithmetic.
    """
    from scipy.optimize import least_squares

    t = _temperatures(temperature_K)
    m = np.atleast_1d(np.asarray(number_density_m3, dtype=float))
    k = np.asarray(rate, dtype=float)
    if k.shape != (t.size, m.size):
        raise InputError(f"rate grid must have shape ({t.size}, {m.size}), got {k.shape}", field="rate")
    if np.any(~np.isfinite(k)) or np.any(k <= 0):
        raise InputError("rate constants to fit must be positive numbers", field="rate")
    k0 = _per_T(k0, t, "k0")[:, None]
    kinf = _per_T(k_inf, t, "k_inf")[:, None]
    tt = t[:, None]
    log_k = np.log(k)
    n_p = 4 if fit_T2 else 3

    def model(a, t3, t1, t2):
        return troe_rate(k0, kinf, m[None, :], tt, a, t3, t1, t2)

    def residual(p):
        with np.errstate(all="ignore"):
            r = np.log(model(p[0], math.exp(p[1]), math.exp(p[2]), math.exp(p[3]) if fit_T2 else None)) - log_k
        return np.where(np.isfinite(r), r, 1e3).ravel()

    ln_lo, ln_hi = math.log(TROE_T_BOUNDS_K[0]), math.log(TROE_T_BOUNDS_K[1])
    lo = np.array([TROE_A_BOUNDS[0]] + [ln_lo] * (n_p - 1))
    hi = np.array([TROE_A_BOUNDS[1]] + [ln_hi] * (n_p - 1))
    if starts is None:
        starts = [(a0, t30, t10) + ((t20,) if fit_T2 else ())
                  for a0 in (0.2, 0.5, 0.8) for t30 in (100.0, 1000.0) for t10 in (1000.0, 1e5)
                  for t20 in ((1000.0, 1e4) if fit_T2 else (None,))]
    x0s = []
    for s in starts:
        s = [float(v) for v in s]
        if len(s) != n_p or not all(math.isfinite(v) for v in s) or min(s[1:]) <= 0:
            raise InputError(f"a Troe starting point needs {n_p} finite numbers (a, positive temperatures "
                             f"in K), got {tuple(s)!r}", field="starts")
        x0s.append(np.clip([s[0]] + [math.log(v) for v in s[1:]], lo, hi))
    if not x0s:
        raise InputError("no Troe starting point given", field="starts")
    best = None
    for x0 in x0s:
        sol = least_squares(residual, x0, bounds=(lo, hi), x_scale="jac",
                            xtol=1e-14, ftol=1e-14, gtol=1e-14, max_nfev=2000)
        if best is None or sol.cost < best.cost - (1e-9 * best.cost + 1e-30):
            best = sol
    p = best.x
    return troe_fit_result(p[0], math.exp(p[1]), math.exp(p[2]), math.exp(p[3]) if fit_T2 else None,
                           lambda a, t3, t1, t2: model(a, t3, t1, t2) / k - 1.0, t)
