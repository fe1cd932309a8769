"""Arrhenius and modified Arrhenius rate expressions, fitted to k(T).

Two-parameter Arrhenius, k = A exp(-Ea / R T) (Arrhenius 1889), and the
modified (three-parameter) form k = A (T/T0)^n exp(-Ea / R T) (Kooij 1893),
are fitted by weighted linear least squares on ln k::

    ln k = ln A + n ln(T/T0) - (Ea/R) (1/T)

The deviation is reported on k itself (|k_fit/k - 1|). Rate constants are SI
per molecule (s^-1, m^3 s^-1, m^6 s^-1 for orders 1, 2, 3); the result
carries the order so that :func:`tstrate.units.rate_from_SI` can convert A.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from tstrate.arrays import temperatures_K
from tstrate.errors import InputError
from tstrate.expressions.mechanism_text import yaml_number
from tstrate.model.settings import MAX_DEVIATION_DEFAULT, T0_DEFAULT_K  # noqa: F401 (defaults of the fits)
from tstrate.units import R, rate_from_SI

#: Temperature scale of the 1/T column in the Arrhenius design matrix [K].
_ARRHENIUS_T_SCALE_K = 1000.0


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

    def rate(self, temperature_K, pressure_Pa=None):
        """k [SI per molecule] at temperature(s) [K]; ``pressure_Pa`` is accepted for the common
        signature of the rate forms and does not change k (broadcast against T when given)."""
        k = np.exp(self.ln_rate(temperature_K))
        if pressure_Pa is not None:
            k = np.broadcast_arrays(k, np.asarray(pressure_Pa, dtype=float))[0].copy()
        return float(k) if np.ndim(k) == 0 else k

    def to_record(self) -> dict:
        """A plain dict in SI (A in SI per molecule for ``order``; deviations as fractions);
        :meth:`from_record` gives the same expression back."""
        return {"form": "modified Arrhenius" if self.modified else "Arrhenius",
                "A_SI": float(self.A), "A_SI_unit": _SI_RATE_UNIT[self.order],
                "n": float(self.n), "Ea_J_per_mol": float(self.Ea_J_per_mol), "T0_K": float(self.T0_K),
                "order": int(self.order), "modified": bool(self.modified),
                "Tmin_K": float(self.Tmin_K), "Tmax_K": float(self.Tmax_K),
                "max_rel_deviation": float(self.max_rel_deviation),
                "rms_rel_deviation": float(self.rms_rel_deviation),
                "n_points": int(self.n_points), "warning": self.warning}

    @classmethod
    def from_record(cls, record) -> "ArrheniusFit":
        """The expression of a :meth:`to_record` dict."""
        return cls(A=float(record["A_SI"]), n=float(record["n"]), Ea_J_per_mol=float(record["Ea_J_per_mol"]),
                   T0_K=float(record["T0_K"]), order=_check_order(record["order"]),
                   modified=bool(record["modified"]), Tmin_K=float(record["Tmin_K"]),
                   Tmax_K=float(record["Tmax_K"]), max_rel_deviation=float(record["max_rel_deviation"]),
                   rms_rel_deviation=float(record["rms_rel_deviation"]), n_points=int(record["n_points"]),
                   warning=record.get("warning"))

    def cantera_rate(self) -> str:
        """Cantera's rate mapping ``{A: ..., b: ..., Ea: ...}`` in the mechanism units
        (:data:`~tstrate.expressions.mechanism_text.UNITS_LINE`): A in molecule-cm-s units for
        the order, b = n with T in K (A (T/T0)^n = A T0^-n T^n), Ea as Ea/R in K."""
        ln_a = math.log(float(rate_from_SI(self.A, self.order))) - self.n * math.log(self.T0_K)
        if abs(ln_a) > 700:
            raise InputError(f"the fitted expression (n = {self.n:.3g}) gives A = exp({ln_a:.0f}) with "
                             "T0 = 1 K, beyond what a mechanism file can hold", field="mechanism",
                             hint="fit the two-parameter Arrhenius form or a narrower temperature range")
        return (f"{{A: {yaml_number(math.exp(ln_a))}, b: {yaml_number(self.n)}, "
                f"Ea: {yaml_number(self.Ea_over_R_K)}}}")

    def mechanism_block(self, indent: str = "  ") -> list[str]:
        """The type and rate lines of a Cantera ``elementary`` reaction with this rate."""
        return [f"{indent}type: elementary", f"{indent}rate-constant: {self.cantera_rate()}"]


#: Units of rate constants in SI per molecule, by reaction order.
_SI_RATE_UNIT = {1: "s-1", 2: "m3 molecule-1 s-1", 3: "m6 molecule-2 s-1"}


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
    temperatures_K(T)
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
            # a fact about the data only: the break a split fit chooses is fit_arrhenius_split's
            warning += f"; ln k is most curved in 1/T near {T_curv:.0f} K"

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
