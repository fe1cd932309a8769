"""Troe falloff expressions k(T, [M]): the parameters, their limits, fitting and evaluation.

Troe's form (Troe, Ber. Bunsenges. Phys. Chem. 87, 161 (1983); Gilbert, Luther and Troe,
Ber. Bunsenges. Phys. Chem. 87, 169 (1983))::

    k(T, [M]) = k_inf(T) [P_r / (1 + P_r)] F(T, P_r),    P_r = k_0(T) [M] / k_inf(T)
    log10 F = log10 F_cent / (1 + [(log10 P_r + c) / (n - 0.14 (log10 P_r + c))]^2)
    c = -0.4 - 0.67 log10 F_cent,  n = 0.75 - 1.27 log10 F_cent
    F_cent = (1 - a) exp(-T/T***) + a exp(-T/T*) + exp(-T**/T)     (last term optional)

evaluated by the formula functions of :mod:`tstrate.physics.falloff`, which the falloff
physics uses as well. :class:`TroeFit` is the one Troe expression of tstrate: the
parameters a, T***, T*, T** with the quality of their fit, and the limits k_0 and k_inf as
Arrhenius expressions (:class:`~tstrate.expressions.arrhenius.ArrheniusFit`), whether fitted
here (:func:`fit_troe`, :func:`fit_troe_effective_k0`, then :meth:`TroeFit.with_limits`) or
given. The fits work on tabulated limits k_0(T), k_inf(T) (arrays); a fit result carries no
limit expressions until the study joins them to it.

Units: temperatures K, bath-gas number densities [M] m^-3; k_inf in SI per molecule of the
reaction's order (s^-1 for a unimolecular reaction), k_0 one order higher (m^3 s^-1), so that
k_0 [M] has the units of k_inf.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from tstrate.errors import InputError
from tstrate.expressions.arrhenius import ArrheniusFit
from tstrate.expressions.mechanism_text import yaml_number
# the grid checks of the falloff physics, so that fits name their parameters the same way
from tstrate.arrays import per_temperature, temperatures_K
from tstrate.physics.falloff import troe_center_broadening, troe_rate


@dataclass(frozen=True)
class TroeFit:
    """A Troe expression: parameters, the quality of their fit, and the limits k_0 and k_inf.

    Attributes
    ----------
    a:
        Troe's a (dimensionless).
    T3_K, T1_K, T2_K:
        T***, T* and T** [K] (T2_K None: the exp(-T**/T) term is left out); fitted values come
        in the canonical order of :func:`canonical_troe`.
    k0:
        Low-pressure limit as an Arrhenius expression in SI per molecule with ``order`` one
        more than the reaction's (m^3 s^-1 for a unimolecular reaction: k = k_0 [M] at low
        pressure, [M] in m^-3), or None while the parameters are not joined to limits
        (:meth:`with_limits`).
    kinf:
        High-pressure limit, SI per molecule of the reaction's order, or None with ``k0``.
    max_rel_deviation, rms_rel_deviation:
        Max and root-mean-square of |k_fit/k - 1| over the fitted grid (fractions), if known.
    at_bound:
        (parameter, bound) for each of a, T3_K, T1_K, T2_K that sits at a bound of the fit (the
        data do not determine its value; :func:`troe_parameters_at_bound`), if known.
    bath_gas:
        The collision partner the parameters were computed for, if known.
    source:
        Free text (e.g. "RRKM strong-collision falloff, tstrate"), if any.
    """

    a: float
    T3_K: float
    T1_K: float
    T2_K: float | None = None
    k0: ArrheniusFit | None = None
    kinf: ArrheniusFit | None = None
    max_rel_deviation: float | None = None
    rms_rel_deviation: float | None = None
    at_bound: tuple[tuple[str, float], ...] = ()
    bath_gas: str | None = None
    source: str | None = None

    def __post_init__(self):
        if (self.k0 is None) != (self.kinf is None):
            raise InputError("Troe k0 and kinf are given together or not at all", field="troe.k0")
        if self.k0 is not None:
            for name in ("k0", "kinf"):
                if not isinstance(getattr(self, name), ArrheniusFit):
                    raise InputError(f"Troe {name} must be an Arrhenius expression", field=f"troe.{name}",
                                     hint="use arrhenius_expression(A_SI, n, Ea_J_per_mol, order=...)")
            if self.k0.order != self.kinf.order + 1:
                raise InputError(f"Troe k0 has order {self.k0.order} but k_inf has order "
                                 f"{self.kinf.order}; k0 needs one order more", field="troe.k0")
        if not math.isfinite(self.a):
            raise InputError("Troe a must be finite", field="troe.a")
        for name in ("T3_K", "T1_K") + (("T2_K",) if self.T2_K is not None else ()):
            v = getattr(self, name)
            if not (math.isfinite(v) and v > 0):
                raise InputError(f"Troe {name} must be positive, got {v!r}", field=f"troe.{name}")

    def with_limits(self, k0: ArrheniusFit, kinf: ArrheniusFit, *, bath_gas: str | None = None,
                    source: str | None = None) -> "TroeFit":
        """The same parameters joined to the limits k_0 and k_inf (Arrhenius expressions, SI);
        ``bath_gas`` and ``source`` replace the current ones when given."""
        return replace(self, k0=k0, kinf=kinf, bath_gas=self.bath_gas if bath_gas is None else bath_gas,
                       source=self.source if source is None else source)

    def fcent(self, temperature_K):
        """F_cent(T) (dimensionless) at temperature(s) [K]."""
        out = troe_center_broadening(np.asarray(temperature_K, dtype=float), self.a, self.T3_K, self.T1_K,
                                     self.T2_K)
        return float(out) if np.ndim(out) == 0 else out

    def rate(self, temperature_K, number_density_m3):
        """k(T, [M]) [SI per molecule of the reaction's order] at temperature(s) [K] and bath-gas
        number density(ies) [M] [m^-3] (broadcast; an ideal gas at pressure P and temperature T
        has [M] = P / (k_B T)), from the limit expressions (InputError without them)."""
        if self.k0 is None:
            raise InputError("this Troe expression has no limit expressions k0 and kinf to evaluate",
                             field="troe.k0", hint="join them with with_limits(k0, kinf)")
        T = np.asarray(temperature_K, dtype=float)
        M = np.asarray(number_density_m3, dtype=float)
        out = troe_rate(self.k0.rate(T), self.kinf.rate(T), M, T, self.a, self.T3_K, self.T1_K, self.T2_K)
        return float(out) if np.ndim(out) == 0 else out

    def to_record(self) -> dict:
        """A plain dict in SI (limits as :meth:`ArrheniusFit.to_record` dicts, deviations as
        fractions); :meth:`from_record` gives the same expression back."""
        return {"form": "Troe", "a": float(self.a), "T3_K": float(self.T3_K), "T1_K": float(self.T1_K),
                "T2_K": None if self.T2_K is None else float(self.T2_K),
                "k0_low_pressure": None if self.k0 is None else self.k0.to_record(),
                "kinf_high_pressure": None if self.kinf is None else self.kinf.to_record(),
                "max_rel_deviation": self.max_rel_deviation, "rms_rel_deviation": self.rms_rel_deviation,
                "at_bound": [[name, float(bound)] for name, bound in self.at_bound],
                "bath_gas": self.bath_gas, "source": self.source}

    @classmethod
    def from_record(cls, record) -> "TroeFit":
        """The expression of a :meth:`to_record` dict (missing optional keys: None or empty)."""
        def opt(key, conv=float):
            v = record.get(key)
            return None if v is None else conv(v)

        return cls(a=float(record["a"]), T3_K=float(record["T3_K"]), T1_K=float(record["T1_K"]),
                   T2_K=opt("T2_K"), k0=opt("k0_low_pressure", ArrheniusFit.from_record),
                   kinf=opt("kinf_high_pressure", ArrheniusFit.from_record),
                   max_rel_deviation=opt("max_rel_deviation"), rms_rel_deviation=opt("rms_rel_deviation"),
                   at_bound=tuple((str(n), float(b)) for n, b in record.get("at_bound") or ()),
                   bath_gas=record.get("bath_gas"), source=record.get("source"))

    def mechanism_block(self, indent: str = "  ") -> list[str]:
        """The type and rate lines of a Cantera ``falloff`` reaction (the equation carries
        ``(+M)``): low- and high-pressure limits in the mechanism units and the Troe parameters."""
        if self.k0 is None:
            raise InputError("a Troe expression without limit expressions cannot be written to a "
                             "mechanism", field="troe.k0", hint="join them with with_limits(k0, kinf)")
        troe = f"A: {yaml_number(self.a)}, T3: {yaml_number(self.T3_K)}, T1: {yaml_number(self.T1_K)}"
        if self.T2_K is not None:
            troe += f", T2: {yaml_number(self.T2_K)}"
        return [f"{indent}type: falloff",
                f"{indent}low-P-rate-constant: {self.k0.cantera_rate()}",
                f"{indent}high-P-rate-constant: {self.kinf.cantera_rate()}",
                f"{indent}Troe: {{{troe}}}"]


# ---------------------------------------------------------------- fitting
#: Bounds of every Troe fit (:func:`fit_troe` and :func:`fit_troe_effective_k0`): a in [0, 1]; T***, T* and T** in
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


def troe_fit_result(a, T3, T1, T2, relative_deviation, temperature_K) -> TroeFit:
    """The :class:`TroeFit` of fitted parameters: canonical labels, deviations, bounds reached.

    ``relative_deviation(a, T3, T1, T2)`` gives k_fit/k - 1 on the fitted grid, whose
    temperatures are ``temperature_K`` [K]; it is evaluated with the canonical parameters
    (:func:`canonical_troe` at those temperatures), so the deviations are those of the labels
    reported.
    """
    a, T3, T1, T2 = canonical_troe(a, T3, T1, T2, temperature_K=temperature_K)
    dev = np.asarray(relative_deviation(a, T3, T1, T2), dtype=float)
    return TroeFit(a=a, T3_K=T3, T1_K=T1, T2_K=T2, max_rel_deviation=float(np.max(np.abs(dev))),
                   rms_rel_deviation=float(np.sqrt(np.mean(dev**2))),
                   at_bound=troe_parameters_at_bound(a, T3, T1, T2))


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

    t = temperatures_K(temperature_K, ndim=1)
    m = np.atleast_1d(np.asarray(number_density_m3, dtype=float))
    k = np.asarray(rate, dtype=float)
    if k.shape != (t.size, m.size):
        raise InputError(f"rate grid must have shape ({t.size}, {m.size}), got {k.shape}", field="rate")
    if np.any(~np.isfinite(k)) or np.any(k <= 0):
        raise InputError("rate constants to fit must be positive numbers", field="rate")
    k0 = per_temperature(k0, t, "k0")[:, None]
    kinf = per_temperature(k_inf, t, "k_inf")[:, None]
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


#: Convergence of :func:`fit_troe_effective_k0`: its deviations are reported to three figures and
#: its parameters to four, so the fit stops when a step changes the sum of squares by less than
#: this fraction, or every parameter by less than :data:`TROE_VP_XTOL` (relative, in a, ln T and
#: ln k_0).
TROE_VP_FTOL = 1e-10
TROE_VP_XTOL = 1e-9
#: most Levenberg-Marquardt steps of one start of :func:`fit_troe_effective_k0`
TROE_LM_MAX_STEPS = 400
#: how many of the ranked starts :func:`fit_troe_effective_k0` refines
TROE_EFFECTIVE_K0_STARTS = 3
_LN10 = math.log(10.0)


def _troe_log_rate(x, log_kinf, log_m, t, a, t3, t1, t2):
    """ln k of Troe's form and d ln k / d ln k_0, for ln k_0 = ``x`` (n_T, 1) against ln [M]
    (1, n_M); the same expression as :func:`tstrate.physics.falloff.troe_rate`, in logarithms."""
    fc = troe_center_broadening(t, a, t3, t1, t2)
    with np.errstate(all="ignore"):
        log10_fc = np.log10(fc)
        ln_pr = np.maximum(x + log_m - log_kinf, math.log(1e-300))
        c = -0.4 - 0.67 * log10_fc
        n = 0.75 - 1.27 * log10_fc
        u = ln_pr / _LN10 + c
        den = n - 0.14 * u
        f1 = u / den
        q = 1.0 + f1 * f1
        log10_f = log10_fc / q
        ln_k = log_kinf + ln_pr - np.logaddexp(0.0, ln_pr) + _LN10 * log10_f
        # d ln k / d ln k0 = 1/(1 + P_r) + d log10 F / d log10 P_r
        dln = 1.0 / (1.0 + np.exp(ln_pr)) - log10_fc * 2.0 * f1 / (q * q) * n / (den * den)
    return ln_k, dln


def _arrow_levenberg_marquardt(fun_jac, theta0, x0, lo, hi, x_lo, x_hi):
    """Minimise 0.5 |r|^2 over the Troe parameters ``theta`` (in the box [lo, hi]) and one ln k_0
    per temperature ``x`` (in [x_lo, x_hi]), where each ln k_0 touches only the residuals of its
    own temperature: Levenberg-Marquardt on the normal equations, whose matrix is an arrowhead
    (a dense block for theta, a diagonal for x), solved through the Schur complement of the
    diagonal. ``fun_jac(theta, x)`` returns r (n_T, n_M), dr/dtheta (n_T, n_M, p) and dr/dx
    (n_T, n_M). All sums are elementwise numpy reductions (np.einsum without BLAS) and the one
    linear system has p <= 4 unknowns, so the path is the same for any number of BLAS threads.
    Parameters held at a bound while the gradient pushes them out are frozen for the step.
    Returns (theta, x, cost)."""
    theta = np.clip(np.asarray(theta0, dtype=float), lo, hi)
    x = np.clip(np.asarray(x0, dtype=float), x_lo, x_hi)
    r, jt, jx = fun_jac(theta, x)
    cost = 0.5 * float(np.sum(r * r))
    lam = 1e-3
    history = [cost]
    for _ in range(TROE_LM_MAX_STEPS):
        g_t = np.einsum("tmp,tm->p", jt, r)
        g_x = np.einsum("tm,tm->t", jx, r)
        a_tt = np.einsum("tmp,tmq->pq", jt, jt)
        b = np.einsum("tmp,tm->pt", jt, jx)
        a_xx = np.einsum("tm,tm->t", jx, jx)
        free_t = ~(((theta <= lo) & (g_t > 0)) | ((theta >= hi) & (g_t < 0)))
        free_x = ~(((x <= x_lo) & (g_x > 0)) | ((x >= x_hi) & (g_x < 0))) & (a_xx > 0)
        accepted = False
        for _ in range(60):
            d_xx = np.where(free_x, a_xx * (1.0 + lam), 1.0)
            idx = np.flatnonzero(free_t)
            bx = b[idx][:, free_x] if idx.size else np.zeros((0, int(free_x.sum())))
            gx = g_x[free_x]
            dx_diag = d_xx[free_x]
            sub = a_tt[np.ix_(idx, idx)]
            s_mat = sub + lam * np.diag(np.maximum(np.diag(sub), 1e-30)) - np.einsum("pt,qt,t->pq", bx, bx,
                                                                                     1.0 / dx_diag)
            rhs = -g_t[idx] + np.einsum("pt,t->p", bx, gx / dx_diag)
            try:
                d_t = np.linalg.solve(s_mat, rhs) if idx.size else np.zeros(0)
            except np.linalg.LinAlgError:
                lam *= 10.0
                continue
            d_x = (-gx - np.einsum("pt,p->t", bx, d_t)) / dx_diag
            t_new = theta.copy()
            t_new[idx] += d_t
            t_new = np.clip(t_new, lo, hi)
            x_new = x.copy()
            x_new[free_x] += d_x
            x_new = np.clip(x_new, x_lo, x_hi)
            r_n = fun_jac(t_new, x_new, jacobian=False)[0]       # the Jacobian only for accepted steps
            c_n = 0.5 * float(np.sum(r_n * r_n))
            if np.isfinite(c_n) and c_n <= cost:
                small = (np.all(np.abs(t_new - theta) <= TROE_VP_XTOL * (1.0 + np.abs(theta)))
                         and np.all(np.abs(x_new - x) <= TROE_VP_XTOL * (1.0 + np.abs(x))))
                drop = cost - c_n
                # a heavily damped step is short and gains little without being at the minimum:
                # stop on such steps only when the last 20 of them together gained nothing
                near_gn = lam <= 1e-2
                theta, x, cost = t_new, x_new, c_n
                r, jt, jx = fun_jac(theta, x)
                history.append(cost)
                accepted = True
                lam = max(lam / 3.0, 1e-12)
                stalled = len(history) > 20 and history[-21] - cost <= 20 * TROE_VP_FTOL * max(cost, 1e-300)
                if stalled or (near_gn and (small or drop <= TROE_VP_FTOL * max(cost, 1e-300))):
                    return theta, x, cost
                break
            lam *= 4.0
            if lam > 1e16:
                break
        if not accepted:
            break
    return theta, x, cost


def fit_troe_effective_k0(temperature_K, number_density_m3, rate, k0, k_inf, *,
                          fit_T2: bool = False) -> tuple[TroeFit, np.ndarray]:
    """Troe fit with k_inf fixed and k_0(T) fitted as well, one value per temperature.

    With Eckart tunnelling, grains below the barrier react with small k(E): at pressures
    where their k(E) is far below the collision frequency they contribute k(E) f(E)
    whatever the pressure, and the true low-pressure limit (every grain with k(E) > 0)
    is reached only at pressures far below any of interest. The classical-threshold k_0
    then does not describe the curve, so an effective k_0(T) is fitted together with
    a, T***, T* (and T**) on log k (least squares), the usual practice when a limit is not
    reached in the fitted range. Starts from :func:`fit_troe` with
    k_0 = max(k_0 classical, k([M]_min)/[M]_min) and from fit_troe's grid of starts, ranked after
    a few Gauss-Newton steps in k_0 alone; the best :data:`TROE_EFFECTIVE_K0_STARTS` are refined.
    It returns fit_troe's fit (with that k_0) when the joint fit does not improve on it.

    Each k_0(T) touches the rates of its own temperature only, so the Jacobian is sparse: the
    k_0 columns are analytic and block-diagonal, the Troe columns central differences, and the
    Levenberg-Marquardt step is solved through the Schur complement of that structure
    (:func:`_arrow_levenberg_marquardt`). Every operation is elementwise numpy or a linear
    system of at most four unknowns, so the result is the same for any number of BLAS threads
    (as far as :func:`fit_troe`'s is). It stops at :data:`TROE_VP_FTOL` / :data:`TROE_VP_XTOL`,
    tolerances set by what is reported. The Troe parameters have the bounds of ``fit_troe``
    (k_0 within a factor e^40 of the start) and come back as its canonical twin
    (:func:`canonical_troe`), with the parameters at a bound named in ``at_bound`` (k_0 does not
    take part in the swap). Returns (fit, k_0 effective [m^3 s^-1]).
    """
    t = np.atleast_1d(np.asarray(temperature_K, dtype=float))
    m = np.atleast_1d(np.asarray(number_density_m3, dtype=float))
    k = np.asarray(rate, dtype=float)
    kinf = np.asarray(k_inf, dtype=float)
    if k.shape != (t.size, m.size):
        raise InputError(f"rate grid must have shape ({t.size}, {m.size}), got {k.shape}", field="rate")
    if np.any(~np.isfinite(k)) or np.any(k <= 0):
        raise InputError("rate constants to fit must be positive numbers", field="rate")
    i_min = int(np.argmin(m))
    guess = np.maximum(np.asarray(k0, dtype=float), k[:, i_min] / m[i_min])
    first = fit_troe(t, m, k, guess, kinf, fit_T2=fit_T2)
    n_p = 4 if fit_T2 else 3
    tt = t[:, None]
    log_k = np.log(k)
    log_kinf = np.log(kinf)[:, None]
    log_m = np.log(m)[None, :]
    x0 = np.log(guess)

    def unpack(p):
        return p[0], math.exp(p[1]), math.exp(p[2]), math.exp(p[3]) if fit_T2 else None

    def fun_jac(theta, x, jacobian=True):
        xc = x[:, None]
        ln_k, d = _troe_log_rate(xc, log_kinf, log_m, tt, *unpack(theta))
        r = ln_k - log_k
        bad = ~np.isfinite(r)
        if not jacobian:
            return np.where(bad, 1e3, r), None, np.where(bad, 0.0, d)
        cols = []
        for j in range(n_p):                      # d r / d theta_j, central differences
            h = 1e-6 * max(1.0, abs(theta[j]))
            up, dn = theta.copy(), theta.copy()
            up[j] += h
            dn[j] -= h
            r_up = _troe_log_rate(xc, log_kinf, log_m, tt, *unpack(up))[0]
            r_dn = _troe_log_rate(xc, log_kinf, log_m, tt, *unpack(dn))[0]
            ok = np.isfinite(r_up) & np.isfinite(r_dn) & ~bad
            cols.append(np.where(ok, (r_up - r_dn) / (2 * h), 0.0))
        return np.where(bad, 1e3, r), np.stack(cols, axis=2), np.where(bad, 0.0, d)

    ln_lo, ln_hi = math.log(TROE_T_BOUNDS_K[0]), math.log(TROE_T_BOUNDS_K[1])
    lo = np.array([TROE_A_BOUNDS[0]] + [ln_lo] * (n_p - 1))
    hi = np.array([TROE_A_BOUNDS[1]] + [ln_hi] * (n_p - 1))
    theta0 = np.clip([first.a, math.log(first.T3_K), math.log(first.T1_K)]
                     + ([math.log(first.T2_K)] if fit_T2 else []), lo, hi)
    r0 = fun_jac(theta0, x0)[0]
    cost0 = 0.5 * float(np.sum(r0 * r0))
    # starts: fit_troe's result and its grid of starts, each with k_0(T) moved by a few
    # Gauss-Newton steps of its own; the best few by sum of squares are refined (ties within 1e-9
    # go to the earlier start, so the choice does not hang on the last bits of the arithmetic)
    grid = [(a0, t30, t10) + ((t20,) if fit_T2 else ())
            for a0 in (0.2, 0.5, 0.8) for t30 in (100.0, 1000.0) for t10 in (1000.0, 1e5)
            for t20 in ((1000.0, 1e4) if fit_T2 else (None,))]
    candidates = [theta0] + [np.clip([g[0]] + [math.log(v) for v in g[1:]], lo, hi) for g in grid]
    ranked = []
    for i, c in enumerate(candidates):
        x = x0.copy()
        for _ in range(4):
            r, _, d = fun_jac(c, x, jacobian=False)
            hess = np.sum(d * d, axis=1)
            x = np.clip(x - np.clip(np.sum(r * d, axis=1) / np.where(hess > 0, hess, 1.0), -3.0, 3.0),
                        x0 - 40.0, x0 + 40.0)
        r = fun_jac(c, x, jacobian=False)[0]
        ranked.append((0.5 * float(np.sum(r * r)), i, x))
    ranked.sort(key=lambda item: (item[0], item[1]))
    best = None
    for _, i, x_start in ranked[:TROE_EFFECTIVE_K0_STARTS]:
        theta, x, cost = _arrow_levenberg_marquardt(fun_jac, candidates[i], x_start, lo, hi, x0 - 40.0, x0 + 40.0)
        tie = 1e-9 * (best[2] if best else 0.0) + 1e-30
        if best is None or cost < best[2] - tie or (cost <= best[2] + tie and i < best[3]):
            best = (theta, x, cost, i)
    theta, x, cost = best[:3]
    if cost0 <= cost:
        return first, guess
    k0e = np.exp(x)
    a, t3, t1, t2 = unpack(theta)

    def deviation(a, t3, t1, t2):
        return troe_rate(k0e[:, None], kinf[:, None], m[None, :], tt, a, t3, t1, t2) / k - 1.0

    return troe_fit_result(a, t3, t1, t2, deviation, t), k0e
