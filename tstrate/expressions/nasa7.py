"""NASA 7-coefficient polynomials of a species' thermochemistry.

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
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.linalg import null_space

from tstrate.arrays import temperatures_K
from tstrate.errors import InputError
from tstrate.expressions.mechanism_text import yaml_number
from tstrate.units import P_STANDARD, R

#: Temperature scale used internally by the NASA fit [K].
_NASA_T_SCALE_K = 1000.0


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

    def to_record(self) -> dict:
        """A plain dict (coefficients for T in K, errors as fractions, J/mol);
        :meth:`from_record` gives the same polynomials back."""
        return {"form": "NASA7", "low_range_coefficients": [float(a) for a in self.low],
                "high_range_coefficients": [float(a) for a in self.high],
                "Tmin_K": float(self.Tmin_K), "Tmid_K": float(self.Tmid_K), "Tmax_K": float(self.Tmax_K),
                "max_rel_error_cp": float(self.max_rel_error_cp),
                "max_rel_error_h": float(self.max_rel_error_h),
                "max_rel_error_s": float(self.max_rel_error_s),
                "max_abs_error_h_J_per_mol": float(self.max_abs_error_h_J_per_mol),
                "n_points": int(self.n_points)}

    @classmethod
    def from_record(cls, record) -> "Nasa7Fit":
        """The polynomials of a :meth:`to_record` dict."""
        low = tuple(float(a) for a in _nasa_coeffs(record["low_range_coefficients"]))
        high = tuple(float(a) for a in _nasa_coeffs(record["high_range_coefficients"]))
        return cls(low=low, high=high, Tmin_K=float(record["Tmin_K"]), Tmid_K=float(record["Tmid_K"]),
                   Tmax_K=float(record["Tmax_K"]), max_rel_error_cp=float(record["max_rel_error_cp"]),
                   max_rel_error_h=float(record["max_rel_error_h"]),
                   max_rel_error_s=float(record["max_rel_error_s"]),
                   max_abs_error_h_J_per_mol=float(record["max_abs_error_h_J_per_mol"]),
                   n_points=int(record["n_points"]))

    def mechanism_block(self, reference_pressure_Pa: float = P_STANDARD, indent: str = "  ") -> list[str]:
        """The ``thermo`` lines of a Cantera species with these polynomials (``model: NASA7``;
        ``reference_pressure_Pa``: the standard pressure of the fitted data [Pa], 1 bar by default)."""
        return [f"{indent}thermo:",
                f"{indent}  model: NASA7",
                f"{indent}  reference-pressure: {yaml_number(reference_pressure_Pa)}",
                f"{indent}  temperature-ranges: [{yaml_number(self.Tmin_K)}, {yaml_number(self.Tmid_K)}, "
                f"{yaml_number(self.Tmax_K)}]",
                f"{indent}  data:",
                f"{indent}  - [" + ", ".join(yaml_number(a) for a in self.low) + "]",
                f"{indent}  - [" + ", ".join(yaml_number(a) for a in self.high) + "]"]


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
    temperatures_K(T)
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
