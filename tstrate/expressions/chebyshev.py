"""Chebyshev rate expressions k(T) and k(T, P), fitted to a grid.

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

from tstrate.errors import InputError
from tstrate.units import rate_from_SI

from tstrate.expressions.arrhenius import _SI_RATE_UNIT, MAX_DEVIATION_DEFAULT, _check_order
from tstrate.expressions.mechanism_text import yaml_number

#: Pressure range [Pa] written for Chebyshev reactions that do not depend on pressure (one
#: pressure column: T_0(P~) = 1, so any range gives the same k; Cantera 3.2 does not clip P).
CHEBYSHEV_ANY_PRESSURE_PA = (1e-30, 1e30)


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

    def to_record(self) -> dict:
        """A plain dict in SI (coefficients of log10 k with k in SI per molecule, pressures in Pa,
        deviations as fractions); :meth:`from_record` gives the same expression back."""
        return {"form": "Chebyshev", "coefficients_log10_k_SI": self.coefficients.tolist(),
                "k_SI_unit": _SI_RATE_UNIT[self.order], "order": int(self.order),
                "Tmin_K": float(self.Tmin_K), "Tmax_K": float(self.Tmax_K),
                "Pmin_Pa": None if self.Pmin_Pa is None else float(self.Pmin_Pa),
                "Pmax_Pa": None if self.Pmax_Pa is None else float(self.Pmax_Pa),
                "max_rel_deviation": float(self.max_rel_deviation),
                "rms_rel_deviation": float(self.rms_rel_deviation),
                "n_points": int(self.n_points), "warning": self.warning}

    @classmethod
    def from_record(cls, record) -> "ChebyshevFit":
        """The expression of a :meth:`to_record` dict."""
        c = np.array(record["coefficients_log10_k_SI"], dtype=float)
        if c.ndim != 2 or c.size == 0:
            raise InputError("Chebyshev coefficients must be a non-empty matrix (rows: 1/T terms)",
                             field="coefficients_log10_k_SI")
        c.setflags(write=False)
        pmin, pmax = record.get("Pmin_Pa"), record.get("Pmax_Pa")
        return cls(coefficients=c, order=_check_order(record["order"]), Tmin_K=float(record["Tmin_K"]),
                   Tmax_K=float(record["Tmax_K"]), Pmin_Pa=None if pmin is None else float(pmin),
                   Pmax_Pa=None if pmax is None else float(pmax),
                   max_rel_deviation=float(record["max_rel_deviation"]),
                   rms_rel_deviation=float(record["rms_rel_deviation"]), n_points=int(record["n_points"]),
                   warning=record.get("warning"))

    def mechanism_block(self, indent: str = "  ") -> list[str]:
        """The type and rate lines of a Cantera ``Chebyshev`` reaction: temperature-range [K],
        pressure-range with its unit (Pa; :data:`CHEBYSHEV_ANY_PRESSURE_PA` without pressure
        dependence) and data, log10 k with k in the mechanism's molecule-cm-s units (rows: 1/T
        terms, columns: log P terms)."""
        coeffs = self.coefficients_in(None)
        lo, hi = ((self.Pmin_Pa, self.Pmax_Pa) if self.pressure_dependent else CHEBYSHEV_ANY_PRESSURE_PA)
        return ([f"{indent}type: Chebyshev",
                 f"{indent}temperature-range: [{yaml_number(self.Tmin_K)}, {yaml_number(self.Tmax_K)}]",
                 f"{indent}pressure-range: [{yaml_number(lo)} Pa, {yaml_number(hi)} Pa]",
                 f"{indent}data:"]
                + [f"{indent}- [" + ", ".join(yaml_number(a) for a in row) + "]" for row in coeffs])


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
