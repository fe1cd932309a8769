"""Fitted parameters for mechanisms: Arrhenius forms and NASA 7-coefficient polynomials.

Arrhenius fits
--------------
Two-parameter Arrhenius, k = A exp(-Ea / R T) (Arrhenius 1889), and the
modified (three-parameter) form k = A (T/T0)^n exp(-Ea / R T) (Kooij 1893),
are fitted by weighted linear least squares on ln k::

    ln k = ln A + n ln(T/T0) - (Ea/R) (1/T)

The deviation is reported on k itself (|k_fit/k - 1|). Rate constants are SI
per molecule (s^-1, m^3 s^-1, m^6 s^-1 for orders 1, 2, 3); the result
carries the order so that :func:`tstrate.units.rate_from_SI` can convert A.

NASA polynomials
----------------
The 7-coefficient NASA form (McBride, Gordon and Reno, NASA TM-4513, 1993;
McBride, Zehe and Gordon, NASA/TP-2002-211556)::

    Cp/R  = a1 + a2 T + a3 T^2 + a4 T^3 + a5 T^4
    H/RT  = a1 + a2 T/2 + a3 T^2/3 + a4 T^3/4 + a5 T^4/5 + a6/T
    S/R   = a1 ln T + a2 T + a3 T^2/2 + a4 T^3/3 + a5 T^4/4 + a7

in two temperature ranges that meet at T_mid, fitted by equality-constrained
linear least squares (Cp, H and S continuous at T_mid; the constraints are
eliminated through a null-space basis). Internally T is scaled by 1000 K to
keep the normal equations well conditioned. Coefficients are returned for T
in K as usual.

Chebyshev expressions
---------------------
The bivariate Chebyshev form of Venkatesh, Chang, Dean, Cohen and Carr
(AIChE J. 43, 1331 (1997)), as read by kinetics codes (Cantera's
``type: Chebyshev`` reaction)::

    log10 k(T, P) = sum_{t=0}^{N_T-1} sum_{p=0}^{N_P-1} a_tp phi_t(T~) phi_p(P~)

    T~ = (2/T - 1/Tmin - 1/Tmax) / (1/Tmax - 1/Tmin)
    P~ = (2 log P - log Pmin - log Pmax) / (log Pmax - log Pmin)

with phi_n the Chebyshev polynomial of the first kind of degree n; T~ and
P~ map the fitted ranges onto [-1, 1] (T = Tmin gives T~ = -1). No
coefficient is halved (Cantera's convention, checked against Cantera in the
tests). The a_tp are fitted by linear least squares on log10 k over a grid of
temperatures and pressures; with one pressure term (N_P = 1) k depends on T
only. Because phi_0 = 1, changing the unit of k by a factor f only adds
log10 f to a_00.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.linalg import null_space

from tstrate.errors import InputError
from tstrate.units import R, rate_from_SI

#: Default reference temperature of the modified Arrhenius form [K].
T0_DEFAULT_K = 298.15
#: Default threshold of the max relative deviation of k that triggers a warning.
MAX_DEVIATION_DEFAULT = 0.05
#: Temperature scale used internally by the NASA fit [K].
_NASA_T_SCALE_K = 1000.0
#: Temperature scale of the 1/T column in the Arrhenius design matrix [K].
_ARRHENIUS_T_SCALE_K = 1000.0


# ============================================================================
# Arrhenius
# ============================================================================

@dataclass(frozen=True)
class ArrheniusFit:
    """Result of an Arrhenius fit over one temperature range.

    Attributes
    ----------
    A:
        Pre-exponential factor in SI per molecule for a reaction of ``order``
        (s^-1, m^3 s^-1 or m^6 s^-1); use :meth:`A_in` for other units.
    n:
        Temperature exponent of the modified form (0.0 for the
        two-parameter form).
    Ea_J_per_mol:
        Activation energy [J/mol].
    T0_K:
        Reference temperature of (T/T0)^n [K].
    order:
        Reaction order (1, 2 or 3) that fixes the unit of A.
    modified:
        True for the three-parameter form.
    Tmin_K, Tmax_K:
        Temperature range of the data fitted [K].
    max_rel_deviation, rms_rel_deviation:
        Max and root-mean-square of |k_fit/k - 1| over all points (fractions,
        not percent; unweighted).
    n_points:
        Number of points fitted.
    warning:
        None, or a sentence when the max deviation exceeds the threshold.
    """

    A: float
    n: float
    Ea_J_per_mol: float
    T0_K: float
    order: int
    modified: bool
    Tmin_K: float
    Tmax_K: float
    max_rel_deviation: float
    rms_rel_deviation: float
    n_points: int
    warning: str | None = None

    @property
    def Ea_over_R_K(self) -> float:
        """Ea / R [K] (the 'E/R' of evaluated kinetics tables)."""
        return self.Ea_J_per_mol / R

    def A_in(self, unit: str | None = None) -> float:
        """A converted to ``unit`` (default: the trade's unit for the order)."""
        return float(rate_from_SI(self.A, self.order, unit))

    def ln_rate(self, temperature_K):
        """ln of k [SI per molecule] at temperature(s) [K]."""
        T = np.asarray(temperature_K, dtype=float)
        ln_k = math.log(self.A) + self.n * np.log(T / self.T0_K) - self.Ea_J_per_mol / (R * T)
        return float(ln_k) if np.ndim(ln_k) == 0 else ln_k

    def rate(self, temperature_K):
        """k [SI per molecule] at temperature(s) [K]."""
        k = np.exp(self.ln_rate(temperature_K))
        return float(k) if np.ndim(k) == 0 else k


@dataclass(frozen=True)
class SplitArrheniusFit:
    """Two Arrhenius fits that meet at ``break_K``.

    ``low`` covers T <= break_K and ``high`` T >= break_K (a data point at
    the break belongs to both). ``max_rel_deviation`` is the larger of the
    two; ``jump_at_break`` is high.rate(break)/low.rate(break) - 1, the
    relative discontinuity at the break.
    """

    break_K: float
    low: ArrheniusFit
    high: ArrheniusFit
    max_rel_deviation: float
    jump_at_break: float

    def rate(self, temperature_K):
        """k [SI per molecule] at temperature(s) [K], from the range that holds each T."""
        T = np.asarray(temperature_K, dtype=float)
        k = np.where(T <= self.break_K, self.low.rate(T), self.high.rate(T))
        return float(k) if np.ndim(k) == 0 else k


def _check_order(order) -> int:
    if order not in (1, 2, 3):
        raise InputError(f"reaction order must be 1, 2 or 3, got {order!r}", field="order")
    return int(order)


def _arrhenius_inputs(temperature_K, k_SI, weights, n_params):
    T = np.asarray(temperature_K, dtype=float).ravel()
    k = np.asarray(k_SI, dtype=float).ravel()
    if T.shape != k.shape:
        raise InputError(f"{T.size} temperatures but {k.size} rate constants", field="k_SI")
    if not np.all(np.isfinite(T)) or np.any(T <= 0.0):
        raise InputError("temperatures must be positive and finite", field="temperature_K")
    if not np.all(np.isfinite(k)) or np.any(k <= 0.0):
        raise InputError("rate constants must be positive and finite to fit ln k", field="k_SI",
                         hint="drop points where the rate constant under- or overflowed")
    if weights is None:
        w = np.ones_like(T)
    else:
        w = np.asarray(weights, dtype=float).ravel()
        if w.shape != T.shape:
            raise InputError(f"{w.size} weights for {T.size} points", field="weights")
        if not np.all(np.isfinite(w)) or np.any(w < 0.0):
            raise InputError("weights must be finite and not negative", field="weights")
    used = w > 0.0
    if np.count_nonzero(used) < n_params:
        raise InputError(f"need at least {n_params} points (with non-zero weight) to fit "
                         f"{n_params} parameters, got {np.count_nonzero(used)}", field="k_SI")
    if np.unique(T[used]).size < n_params:
        raise InputError(f"need at least {n_params} distinct temperatures to fit {n_params} "
                         f"parameters, got {np.unique(T[used]).size}", field="temperature_K")
    return T, k, w


def _largest_curvature_K(T: np.ndarray, ln_k: np.ndarray) -> float | None:
    """Temperature [K] where |d2 ln k / d(1/T)^2| is largest (discrete, interior points)."""
    x, idx = np.unique(1.0 / T, return_index=True)
    y = ln_k[idx]
    if x.size < 3:
        return None
    h1 = x[1:-1] - x[:-2]
    h2 = x[2:] - x[1:-1]
    second = 2.0 * (y[2:] * h1 - y[1:-1] * (h1 + h2) + y[:-2] * h2) / (h1 * h2 * (h1 + h2))
    return float(1.0 / x[1:-1][np.argmax(np.abs(second))])


def fit_arrhenius(temperature_K, k_SI, *, order: int, modified: bool = False,
                  T0_K: float = T0_DEFAULT_K, weights=None,
                  max_deviation: float = MAX_DEVIATION_DEFAULT) -> ArrheniusFit:
    """Fit k(T) to the Arrhenius or modified Arrhenius form.

    Parameters
    ----------
    temperature_K:
        Temperatures [K].
    k_SI:
        Rate constants [SI per molecule] at those temperatures (all > 0).
    order:
        Reaction order (1, 2 or 3), stored for unit conversion of A.
    modified:
        False: k = A exp(-Ea/RT). True: k = A (T/T0)^n exp(-Ea/RT).
    T0_K:
        Reference temperature of the modified form [K] (default 298.15 K).
    weights:
        Optional non-negative weights of the squared residuals of ln k
        (default: all equal). A zero weight leaves a point out of the fit
        but not out of the reported deviations.
    max_deviation:
        Threshold (fraction, default 0.05 = 5 %) of max |k_fit/k - 1| above
        which the result carries a ``warning``.

    Raises InputError for fewer points than parameters, non-positive or
    non-finite k or T, or mismatched lengths.
    """
    order = _check_order(order)
    if not (np.isfinite(T0_K) and T0_K > 0.0):
        raise InputError(f"reference temperature must be positive, got {T0_K!r}", field="T0_K")
    n_params = 3 if modified else 2
    T, k, w = _arrhenius_inputs(temperature_K, k_SI, weights, n_params)
    ln_k = np.log(k)

    columns = [np.ones_like(T), -_ARRHENIUS_T_SCALE_K / T]
    if modified:
        columns.append(np.log(T / T0_K))
    design = np.column_stack(columns)
    sw = np.sqrt(w)
    coef, *_ = np.linalg.lstsq(design * sw[:, None], ln_k * sw, rcond=None)
    ln_A = float(coef[0])
    Ea_over_R = float(coef[1]) * _ARRHENIUS_T_SCALE_K
    n = float(coef[2]) if modified else 0.0

    rel = np.expm1(design @ coef - ln_k)
    max_dev = float(np.max(np.abs(rel)))
    rms_dev = float(np.sqrt(np.mean(rel**2)))

    warning = None
    if max_dev > max_deviation:
        T_curv = _largest_curvature_K(T, ln_k)
        form = "modified Arrhenius" if modified else "Arrhenius"
        warning = (f"{form} fit deviates by up to {100 * max_dev:.1f} % "
                   f"(threshold {100 * max_deviation:.1f} %) over {T.min():g}-{T.max():g} K")
        if T_curv is not None:
            warning += (f"; ln k is most curved in 1/T near {T_curv:.0f} K (low-temperature "
                        f"tunnelling often does this): consider fitting split ranges at about "
                        f"{T_curv:.0f} K")
            if not modified:
                warning += " or the modified form"

    return ArrheniusFit(A=math.exp(ln_A), n=n, Ea_J_per_mol=Ea_over_R * R, T0_K=float(T0_K),
                        order=order, modified=bool(modified), Tmin_K=float(T.min()),
                        Tmax_K=float(T.max()), max_rel_deviation=max_dev,
                        rms_rel_deviation=rms_dev, n_points=int(T.size), warning=warning)


def fit_arrhenius_split(temperature_K, k_SI, *, order: int, break_K: float | None = None,
                        modified: bool = False, T0_K: float = T0_DEFAULT_K, weights=None,
                        max_deviation: float = MAX_DEVIATION_DEFAULT) -> SplitArrheniusFit:
    """Fit two Arrhenius (or modified Arrhenius) expressions over T <= break and T >= break.

    With ``break_K`` given [K], each side needs at least as many points as
    parameters (InputError otherwise). With ``break_K=None`` the break is
    searched among the data temperatures (the point at the break is shared
    by both sides, and each side keeps at least one point more than it has
    parameters) to minimise the larger of the two max relative deviations of
    k. Other arguments as in :func:`fit_arrhenius`.
    """
    order = _check_order(order)
    n_params = 3 if modified else 2
    T, k, w = _arrhenius_inputs(temperature_K, k_SI, weights, n_params)

    def fit_side(mask):
        return fit_arrhenius(T[mask], k[mask], order=order, modified=modified, T0_K=T0_K,
                             weights=w[mask], max_deviation=max_deviation)

    def combine(b, low, high):
        jump = float(high.rate(b) / low.rate(b) - 1.0)
        return SplitArrheniusFit(break_K=float(b), low=low, high=high,
                                 max_rel_deviation=max(low.max_rel_deviation,
                                                       high.max_rel_deviation),
                                 jump_at_break=jump)

    if break_K is not None:
        b = float(break_K)
        if not (T.min() < b < T.max()):
            raise InputError(f"break temperature {b:g} K is not inside the data range "
                             f"{T.min():g}-{T.max():g} K", field="break_K")
        low_mask, high_mask = T <= b, T >= b
        for side, mask in (("below", low_mask), ("above", high_mask)):
            count = np.count_nonzero(mask & (w > 0.0))
            if count < n_params:
                raise InputError(f"only {count} point(s) {side} the break at {b:g} K, need at "
                                 f"least {n_params}", field="break_K")
        return combine(b, fit_side(low_mask), fit_side(high_mask))

    best = None
    need = n_params + 1
    for b in np.unique(T):
        low_mask, high_mask = T <= b, T >= b
        if (np.unique(T[low_mask & (w > 0)]).size < need
                or np.unique(T[high_mask & (w > 0)]).size < need):
            continue
        candidate = combine(b, fit_side(low_mask), fit_side(high_mask))
        if best is None or candidate.max_rel_deviation < best.max_rel_deviation:
            best = candidate
    if best is None:
        raise InputError(f"too few temperatures to split: each side needs at least {need} "
                         f"distinct temperatures", field="temperature_K",
                         hint="give more points or a break temperature")
    return best


# ============================================================================
# Chebyshev
# ============================================================================

@dataclass(frozen=True)
class ChebyshevFit:
    """A Chebyshev expression of log10 k over 1/T (and log P) (see the module docstring).

    Attributes
    ----------
    coefficients:
        a_tp, shape (n_temperature, n_pressure), for log10 of k in SI per
        molecule (s^-1, m^3 s^-1, m^6 s^-1 for ``order`` 1, 2, 3); use
        :meth:`coefficients_in` for another rate unit.
    order:
        Reaction order (1, 2 or 3) that fixes the unit of k.
    Tmin_K, Tmax_K:
        Temperature range of the reduced temperature [K].
    Pmin_Pa, Pmax_Pa:
        Pressure range of the reduced pressure [Pa], or None for a
        temperature-only fit (one pressure term: k independent of P).
    max_rel_deviation, rms_rel_deviation:
        Max and root-mean-square of |k_fit/k - 1| over all points (fractions).
    n_points:
        Number of (T, P) points fitted.
    warning:
        None, or a sentence when the max deviation exceeds the threshold.
    """

    coefficients: np.ndarray
    order: int
    Tmin_K: float
    Tmax_K: float
    Pmin_Pa: float | None
    Pmax_Pa: float | None
    max_rel_deviation: float
    rms_rel_deviation: float
    n_points: int
    warning: str | None = None

    @property
    def n_temperature(self) -> int:
        """Number of temperature terms N_T (degree N_T - 1 in T~)."""
        return int(self.coefficients.shape[0])

    @property
    def n_pressure(self) -> int:
        """Number of pressure terms N_P (1: pressure-independent)."""
        return int(self.coefficients.shape[1])

    @property
    def pressure_dependent(self) -> bool:
        return self.Pmin_Pa is not None

    def coefficients_in(self, unit: str | None = None) -> np.ndarray:
        """Coefficients for log10 of k in ``unit`` (default: the trade's unit for the order).

        Only a_00 changes: it gains log10 of the conversion factor from SI.
        """
        c = np.array(self.coefficients, dtype=float)
        c[0, 0] += math.log10(float(rate_from_SI(1.0, self.order, unit)))
        return c

    def reduced_temperature(self, temperature_K):
        """T~ of the module docstring (-1 at Tmin, +1 at Tmax)."""
        T = np.asarray(temperature_K, dtype=float)
        return _reduce(1.0 / T, 1.0 / self.Tmin_K, 1.0 / self.Tmax_K)

    def reduced_pressure(self, pressure_Pa):
        """P~ of the module docstring (-1 at Pmin, +1 at Pmax); 0 without a pressure range."""
        if self.Pmin_Pa is None:
            return np.zeros_like(np.asarray(pressure_Pa, dtype=float))
        P = np.asarray(pressure_Pa, dtype=float)
        return _reduce(np.log(P), math.log(self.Pmin_Pa), math.log(self.Pmax_Pa))

    def log10_rate(self, temperature_K, pressure_Pa=None):
        """log10 of k [SI per molecule] at temperature(s) [K] and pressure(s) [Pa] (broadcast).

        ``pressure_Pa`` is required for a pressure-dependent fit and ignored
        otherwise. Outside the fitted ranges the polynomial is extrapolated.
        """
        from numpy.polynomial import chebyshev as C

        T = np.asarray(temperature_K, dtype=float)
        if self.pressure_dependent:
            if pressure_Pa is None:
                raise InputError("this Chebyshev fit depends on pressure: give pressure_Pa",
                                 field="pressure_Pa")
            x, y = np.broadcast_arrays(self.reduced_temperature(T),
                                       self.reduced_pressure(pressure_Pa))
            out = C.chebval2d(x, y, self.coefficients)
        else:
            out = C.chebval(self.reduced_temperature(T), self.coefficients[:, 0])
            if pressure_Pa is not None:
                out = np.broadcast_arrays(out, np.asarray(pressure_Pa, dtype=float))[0].copy()
        return float(out) if np.ndim(out) == 0 else out

    def rate(self, temperature_K, pressure_Pa=None):
        """k [SI per molecule] at temperature(s) [K] (and pressure(s) [Pa]); see :meth:`log10_rate`."""
        out = 10.0 ** np.asarray(self.log10_rate(temperature_K, pressure_Pa))
        return float(out) if np.ndim(out) == 0 else out


def _reduce(x, x_low, x_high):
    """Map x from [x_low, x_high] (either order) onto [-1, 1] with x_low -> -1."""
    return (2.0 * x - x_low - x_high) / (x_high - x_low)


def _axis(values, name, field, unit):
    v = np.asarray(values, dtype=float)
    if v.ndim != 1 or v.size == 0:
        raise InputError(f"{name} must be a non-empty list", field=field)
    if not np.all(np.isfinite(v)) or np.any(v <= 0.0):
        raise InputError(f"{name} must be positive and finite", field=field)
    if np.unique(v).size != v.size:
        raise InputError(f"{name} are repeated", field=field)
    if v.size > 1 and v.min() == v.max():
        raise InputError(f"the {name} range has zero width ({v.min():g} {unit})", field=field)
    return v


def fit_chebyshev(temperature_K, k_SI, *, order: int, n_temperature: int = 6,
                  pressure_Pa=None, n_pressure: int = 4,
                  max_deviation: float = MAX_DEVIATION_DEFAULT) -> ChebyshevFit:
    """Fit log10 k to a Chebyshev expression in 1/T, or in 1/T and log P.

    Parameters
    ----------
    temperature_K:
        Temperatures [K] (distinct, at least ``n_temperature`` of them).
    k_SI:
        Rate constants [SI per molecule] (all > 0): shape (n_T,) for a
        temperature-only fit, or (n_T, n_P) on the grid temperature x pressure.
    order:
        Reaction order (1, 2 or 3), stored for unit conversion.
    n_temperature:
        Number of temperature terms N_T (polynomial degree N_T - 1).
    pressure_Pa:
        Pressures [Pa] of the columns of ``k_SI`` (distinct, at least
        ``n_pressure``), or None for a temperature-only fit (one pressure
        term; a (n_T, 1) ``k_SI`` is accepted too).
    n_pressure:
        Number of pressure terms N_P (ignored without pressures).
    max_deviation:
        Threshold (fraction) of max |k_fit/k - 1| above which the result
        carries a ``warning``.

    The temperature (and pressure) range of the result is that of the data.
    Raises InputError for too few points for the requested terms, non-positive
    or non-finite k, T or P, ranges of zero width and mismatched shapes.
    """
    from numpy.polynomial import chebyshev as C

    order = _check_order(order)
    for name, n in (("n_temperature", n_temperature), ("n_pressure", n_pressure)):
        if isinstance(n, bool) or not isinstance(n, (int, np.integer)) or n < 1:
            raise InputError(f"{name} must be a positive whole number, got {n!r}", field=name)
    T = _axis(temperature_K, "temperatures", "temperature_K", "K")
    k = np.asarray(k_SI, dtype=float)
    if pressure_Pa is None:
        if k.ndim == 2 and k.shape[1] == 1:
            k = k[:, 0]
        if k.shape != T.shape:
            raise InputError(f"{T.size} temperatures but rate constants of shape {k.shape}",
                             field="k_SI")
        P = None
        n_pressure = 1
    else:
        P = _axis(pressure_Pa, "pressures", "pressure_Pa", "Pa")
        if k.shape != (T.size, P.size):
            raise InputError(f"rate constants of shape {k.shape} for {T.size} temperatures x "
                             f"{P.size} pressures", field="k_SI")
    if not np.all(np.isfinite(k)) or np.any(k <= 0.0):
        raise InputError("rate constants must be positive and finite to fit log10 k", field="k_SI",
                         hint="drop points where the rate constant under- or overflowed")
    if T.size < n_temperature:
        raise InputError(f"{T.size} temperature(s) cannot fit {n_temperature} Chebyshev "
                         "temperature terms", field="temperature_K",
                         hint=f"ask for at most {T.size} temperature terms or give more temperatures")
    if P is not None and P.size < n_pressure:
        raise InputError(f"{P.size} pressure(s) cannot fit {n_pressure} Chebyshev pressure terms",
                         field="pressure_Pa",
                         hint=f"ask for at most {P.size} pressure terms or give more pressures")
    if T.size == 1:
        raise InputError(f"one temperature ({T[0]:g} K) gives a temperature range of zero width",
                         field="temperature_K", hint="give at least two temperatures")
    Tmin, Tmax = float(T.min()), float(T.max())
    x = _reduce(1.0 / T, 1.0 / Tmin, 1.0 / Tmax)
    VT = C.chebvander(x, n_temperature - 1)                      # (n_T, N_T)
    if P is None:
        design = VT
        target = np.log10(k)
        Pmin = Pmax = None
    else:
        if P.size == 1:
            raise InputError(f"one pressure ({P[0]:g} Pa) gives a pressure range of zero width",
                             field="pressure_Pa", hint="fit k(T) alone (pressure_Pa=None)")
        Pmin, Pmax = float(P.min()), float(P.max())
        y = _reduce(np.log(P), math.log(Pmin), math.log(Pmax))
        VP = C.chebvander(y, n_pressure - 1)                     # (n_P, N_P)
        design = np.einsum("it,jp->ijtp", VT, VP).reshape(T.size * P.size, -1)
        target = np.log10(k).ravel()
    coef, *_ = np.linalg.lstsq(design, target, rcond=None)
    coefficients = coef.reshape(n_temperature, n_pressure)
    rel = np.expm1((design @ coef - target) * math.log(10.0))
    max_dev = float(np.max(np.abs(rel)))
    rms_dev = float(np.sqrt(np.mean(rel**2)))
    warning = None
    if max_dev > max_deviation:
        warning = (f"Chebyshev fit ({n_temperature} x {n_pressure} terms) deviates by up to "
                   f"{100 * max_dev:.1f} % (threshold {100 * max_deviation:.1f} %) over "
                   f"{Tmin:g}-{Tmax:g} K" + ("" if P is None else f", {Pmin:g}-{Pmax:g} Pa")
                   + "; more terms may help")
    coefficients.setflags(write=False)
    return ChebyshevFit(coefficients=coefficients, order=order, Tmin_K=Tmin, Tmax_K=Tmax,
                        Pmin_Pa=Pmin, Pmax_Pa=Pmax, max_rel_deviation=max_dev,
                        rms_rel_deviation=rms_dev, n_points=int(k.size), warning=warning)


# ============================================================================
# NASA 7-coefficient polynomials
# ============================================================================

def _nasa_coeffs(coeffs) -> np.ndarray:
    a = np.asarray(coeffs, dtype=float)
    if a.shape != (7,):
        raise InputError(f"a NASA polynomial has 7 coefficients, got shape {a.shape}",
                         field="coefficients")
    return a


def nasa7_cp_J_per_mol_K(coeffs, temperature_K):
    """Cp [J/(mol K)] from one set of 7 NASA coefficients (T in K)."""
    a = _nasa_coeffs(coeffs)
    T = np.asarray(temperature_K, dtype=float)
    cp_R = a[0] + T * (a[1] + T * (a[2] + T * (a[3] + T * a[4])))
    out = R * cp_R
    return float(out) if np.ndim(out) == 0 else out


def nasa7_h_J_per_mol(coeffs, temperature_K):
    """H [J/mol] from one set of 7 NASA coefficients (T in K); reference as in the fit data."""
    a = _nasa_coeffs(coeffs)
    T = np.asarray(temperature_K, dtype=float)
    h_RT = (a[0] + T * (a[1] / 2 + T * (a[2] / 3 + T * (a[3] / 4 + T * a[4] / 5)))
            + a[5] / T)
    out = R * T * h_RT
    return float(out) if np.ndim(out) == 0 else out


def nasa7_s_J_per_mol_K(coeffs, temperature_K):
    """S [J/(mol K)] from one set of 7 NASA coefficients (T in K).

    At the standard pressure of the fitted data.
    """
    a = _nasa_coeffs(coeffs)
    T = np.asarray(temperature_K, dtype=float)
    s_R = (a[0] * np.log(T) + T * (a[1] + T * (a[2] / 2 + T * (a[3] / 3 + T * a[4] / 4)))
           + a[6])
    out = R * s_R
    return float(out) if np.ndim(out) == 0 else out


def nasa7_g_J_per_mol(coeffs, temperature_K):
    """G = H - T S [J/mol] from one set of 7 NASA coefficients (T in K)."""
    T = np.asarray(temperature_K, dtype=float)
    out = (np.asarray(nasa7_h_J_per_mol(coeffs, T))
           - T * np.asarray(nasa7_s_J_per_mol_K(coeffs, T)))
    return float(out) if np.ndim(out) == 0 else out


@dataclass(frozen=True)
class Nasa7Fit:
    """Two-range NASA 7-coefficient polynomial.

    Attributes
    ----------
    low, high:
        Coefficients a1..a7 for Tmin_K <= T <= Tmid_K and Tmid_K <= T <= Tmax_K
        (T in K; Cp/R, H/RT, S/R as in the module docstring).
    Tmin_K, Tmid_K, Tmax_K:
        Range of the data and the common temperature [K].
    max_rel_error_cp, max_rel_error_s:
        Max |fit/data - 1| of Cp and of S over the data (the S denominator is
        floored at R).
    max_rel_error_h:
        Max |H_fit - H| / max(|H|, R T) over the data (the R T floor keeps the
        measure finite where H crosses zero).
    max_abs_error_h_J_per_mol:
        Max |H_fit - H| [J/mol].
    n_points:
        Number of temperatures fitted.
    """

    low: tuple[float, ...]
    high: tuple[float, ...]
    Tmin_K: float
    Tmid_K: float
    Tmax_K: float
    max_rel_error_cp: float
    max_rel_error_h: float
    max_rel_error_s: float
    max_abs_error_h_J_per_mol: float
    n_points: int

    def _piecewise(self, func, temperature_K):
        T = np.asarray(temperature_K, dtype=float)
        out = np.where(T <= self.Tmid_K, func(self.low, T), func(self.high, T))
        return float(out) if np.ndim(out) == 0 else out

    def cp_J_per_mol_K(self, temperature_K):
        """Cp [J/(mol K)] at temperature(s) [K]."""
        return self._piecewise(nasa7_cp_J_per_mol_K, temperature_K)

    def h_J_per_mol(self, temperature_K):
        """H [J/mol] at temperature(s) [K] (same reference as the fitted data)."""
        return self._piecewise(nasa7_h_J_per_mol, temperature_K)

    def s_J_per_mol_K(self, temperature_K):
        """S [J/(mol K)] at temperature(s) [K]."""
        return self._piecewise(nasa7_s_J_per_mol_K, temperature_K)

    def g_J_per_mol(self, temperature_K):
        """G = H - T S [J/mol] at temperature(s) [K]."""
        return self._piecewise(nasa7_g_J_per_mol, temperature_K)


def _nasa_rows(tau: np.ndarray):
    """Design blocks in the scaled variable tau = T / 1000 K for b1..b7.

    Cp/R = b1 + b2 tau + b3 tau^2 + b4 tau^3 + b5 tau^4
    H/RT = b1 + b2 tau/2 + b3 tau^2/3 + b4 tau^3/4 + b5 tau^4/5 + b6/tau
    S/R  = b1 ln tau + b2 tau + b3 tau^2/2 + b4 tau^3/3 + b5 tau^4/4 + b7
    """
    z = np.zeros_like(tau)
    one = np.ones_like(tau)
    cp = np.column_stack([one, tau, tau**2, tau**3, tau**4, z, z])
    h = np.column_stack([one, tau / 2, tau**2 / 3, tau**3 / 4, tau**4 / 5, 1.0 / tau, z])
    s = np.column_stack([np.log(tau), tau, tau**2 / 2, tau**3 / 3, tau**4 / 4, z, one])
    return cp, h, s


def _unscale(b: np.ndarray) -> tuple[float, ...]:
    """Coefficients for T in K from those for tau = T / 1000 K."""
    s = _NASA_T_SCALE_K
    a = np.array([b[0], b[1] / s, b[2] / s**2, b[3] / s**3, b[4] / s**4,
                  b[5] * s, b[6] - b[0] * math.log(s)])
    return tuple(float(x) for x in a)


def fit_nasa7(temperature_K, cp_J_per_mol_K, h_J_per_mol, s_J_per_mol_K, *,
              T_mid_K: float = 1000.0, quantity_weights=(1.0, 1.0, 1.0)) -> Nasa7Fit:
    """Fit two-range NASA 7-coefficient polynomials to Cp(T), H(T) and S(T).

    Parameters
    ----------
    temperature_K:
        Temperatures [K] spanning the range to fit (e.g. 200-3000 K); Tmin
        and Tmax of the result are the smallest and largest of them.
    cp_J_per_mol_K, h_J_per_mol, s_J_per_mol_K:
        Heat capacity [J/(mol K)], enthalpy [J/mol] and entropy [J/(mol K)]
        at those temperatures. The enthalpy reference is the caller's choice
        (e.g. H(T) - H(0) plus a formation or electronic offset); a6 absorbs
        it.
    T_mid_K:
        Common temperature of the two ranges [K] (default 1000 K); it must
        lie strictly inside the data range, with at least 5 distinct
        temperatures on each side (a point at T_mid counts for both).
    quantity_weights:
        Weights of the squared residuals of Cp/R, H/RT and S/R (default equal).

    The residuals of the dimensionless Cp/R, H/RT and S/R are minimised in
    least squares subject to Cp, H and S being equal at T_mid in both
    ranges; the three linear constraints are eliminated with a null-space
    basis (SVD), so the reduced problem is an ordinary least-squares problem.
    """
    T = np.asarray(temperature_K, dtype=float).ravel()
    data = {}
    for name, values in (("cp_J_per_mol_K", cp_J_per_mol_K), ("h_J_per_mol", h_J_per_mol),
                         ("s_J_per_mol_K", s_J_per_mol_K)):
        arr = np.asarray(values, dtype=float).ravel()
        if arr.shape != T.shape:
            raise InputError(f"{arr.size} values for {T.size} temperatures", field=name)
        if not np.all(np.isfinite(arr)):
            raise InputError("values must be finite", field=name)
        data[name] = arr
    if not np.all(np.isfinite(T)) or np.any(T <= 0.0):
        raise InputError("temperatures must be positive and finite", field="temperature_K")
    if np.any(data["cp_J_per_mol_K"] <= 0.0):
        raise InputError("heat capacities must be positive", field="cp_J_per_mol_K")
    weights = np.asarray(quantity_weights, dtype=float)
    if weights.shape != (3,) or not np.all(np.isfinite(weights)) or np.any(weights <= 0.0):
        raise InputError("quantity_weights must be three positive numbers (Cp, H, S)",
                         field="quantity_weights")
    Tmid = float(T_mid_K)
    Tmin, Tmax = float(T.min()), float(T.max())
    if not (Tmin < Tmid < Tmax):
        raise InputError(f"the common temperature {Tmid:g} K is not inside the data range "
                         f"{Tmin:g}-{Tmax:g} K", field="T_mid_K",
                         hint="give T_mid_K inside the range or data on both sides of it")
    low_mask, high_mask = T <= Tmid, T >= Tmid
    for side, mask in (("below", low_mask), ("above", high_mask)):
        count = np.unique(T[mask]).size
        if count < 5:
            raise InputError(f"only {count} distinct temperature(s) {side} T_mid = {Tmid:g} K, "
                             f"need at least 5", field="temperature_K")

    tau = T / _NASA_T_SCALE_K
    cp_rows, h_rows, s_rows = _nasa_rows(tau)
    target_cp = data["cp_J_per_mol_K"] / R
    target_h = data["h_J_per_mol"] / (R * T)
    target_s = data["s_J_per_mol_K"] / R

    # Block design for x = (b_low[7], b_high[7]); a point at T_mid enters both blocks.
    blocks, targets = [], []
    for rows, target, wq in ((cp_rows, target_cp, weights[0]), (h_rows, target_h, weights[1]),
                             (s_rows, target_s, weights[2])):
        sw = math.sqrt(wq)
        zeros = np.zeros_like(rows)
        blocks.append(sw * np.hstack([rows * low_mask[:, None], zeros]))
        blocks.append(sw * np.hstack([zeros, rows * high_mask[:, None]]))
        targets.append(sw * target * low_mask)
        targets.append(sw * target * high_mask)
    design = np.vstack(blocks)
    rhs = np.concatenate(targets)
    keep = np.any(design != 0.0, axis=1)
    design, rhs = design[keep], rhs[keep]

    # Continuity of Cp/R, H/RT, S/R at T_mid: C x = 0.
    mid_cp, mid_h, mid_s = _nasa_rows(np.array([Tmid / _NASA_T_SCALE_K]))
    constraints = np.vstack([np.hstack([m, -m]) for m in (mid_cp, mid_h, mid_s)])
    basis = null_space(constraints)                     # 14 x 11, orthonormal columns
    y, *_ = np.linalg.lstsq(design @ basis, rhs, rcond=None)
    x = basis @ y
    low, high = _unscale(x[:7]), _unscale(x[7:])

    fit = Nasa7Fit(low=low, high=high, Tmin_K=Tmin, Tmid_K=Tmid, Tmax_K=Tmax,
                   max_rel_error_cp=0.0, max_rel_error_h=0.0, max_rel_error_s=0.0,
                   max_abs_error_h_J_per_mol=0.0, n_points=int(T.size))
    cp_fit = np.asarray(fit.cp_J_per_mol_K(T))
    h_fit = np.asarray(fit.h_J_per_mol(T))
    s_fit = np.asarray(fit.s_J_per_mol_K(T))
    h_err = np.abs(h_fit - data["h_J_per_mol"])
    return Nasa7Fit(
        low=low, high=high, Tmin_K=Tmin, Tmid_K=Tmid, Tmax_K=Tmax,
        max_rel_error_cp=float(np.max(np.abs(cp_fit / data["cp_J_per_mol_K"] - 1.0))),
        max_rel_error_h=float(np.max(h_err / np.maximum(np.abs(data["h_J_per_mol"]), R * T))),
        max_rel_error_s=float(np.max(np.abs(s_fit - data["s_J_per_mol_K"])
                                     / np.abs(data["s_J_per_mol_K"]).clip(min=R))),
        max_abs_error_h_J_per_mol=float(np.max(h_err)),
        n_points=int(T.size),
    )
