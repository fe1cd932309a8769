"""Per-pressure tables of (modified) Arrhenius expressions: k(T, P) as mechanism codes tabulate it.

At each tabulated pressure P_i a (modified) Arrhenius expression
k_i(T) = A_i (T/T0)^n_i exp(-Ea_i/RT) (:mod:`tstrate.expressions.arrhenius`) is fitted to
k(T, P_i). Between two tabulated pressures ln k is interpolated linearly in ln P::

    ln k(T, P) = ln k_i(T) + [ln k_i+1(T) - ln k_i(T)] (ln P - ln P_i) / (ln P_i+1 - ln P_i),
    P_i <= P <= P_i+1,

and outside the tabulated range the expression of the nearest tabulated pressure is used, as
kinetics codes read such a table (Cantera's ``pressure-dependent-Arrhenius`` reaction; the
tests check this against Cantera). A table computed at bath-gas number densities instead of
pressures (``pressure_Pa`` None) is kept for the record but cannot be evaluated at a pressure
or written to a mechanism.

Units: temperatures K, pressures Pa, number densities m^-3, k in SI per molecule for the order.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from tstrate.errors import InputError
from tstrate.expressions.arrhenius import ArrheniusFit, fit_arrhenius
from tstrate.expressions.mechanism_text import yaml_number
from tstrate.model.settings import MAX_DEVIATION_DEFAULT, T0_DEFAULT_K


@dataclass(frozen=True)
class PressureTableFit:
    """(Modified) Arrhenius expressions of k(T) at tabulated pressures (see the module docstring).

    Attributes
    ----------
    pressure_Pa:
        The tabulated pressures [Pa] (n_P,), in the order of ``fits``, or None when the table
        was computed at number densities.
    number_density_m3:
        Bath-gas number density [M] [m^-3] of each entry at the highest fitted temperature
        (n_P,).
    fits:
        One :class:`~tstrate.expressions.arrhenius.ArrheniusFit` per entry, all of one order.
    """

    pressure_Pa: np.ndarray | None = field(repr=False)
    number_density_m3: np.ndarray = field(repr=False)
    fits: tuple[ArrheniusFit, ...]

    def __post_init__(self):
        n = len(self.fits)
        if n == 0:
            raise InputError("a pressure table needs at least one entry", field="fits")
        if len({f.order for f in self.fits}) != 1:
            raise InputError("the expressions of a pressure table must share one reaction order",
                             field="fits")
        m = np.asarray(self.number_density_m3, dtype=float).reshape(-1)
        if m.size != n:
            raise InputError(f"{m.size} number densities for {n} expressions", field="number_density_m3")
        m.setflags(write=False)
        object.__setattr__(self, "number_density_m3", m)
        if self.pressure_Pa is not None:
            p = np.asarray(self.pressure_Pa, dtype=float).reshape(-1)
            if p.size != n:
                raise InputError(f"{p.size} pressures for {n} expressions", field="pressure_Pa")
            if not np.all(np.isfinite(p)) or np.any(p <= 0) or np.unique(p).size != n:
                raise InputError("tabulated pressures must be positive, finite and distinct",
                                 field="pressure_Pa")
            p.setflags(write=False)
            object.__setattr__(self, "pressure_Pa", p)

    @property
    def order(self) -> int:
        """Reaction order of every expression (fixes the unit of k)."""
        return self.fits[0].order

    @property
    def max_rel_deviation(self) -> float:
        """The largest max |k_fit/k - 1| of the entries (fraction)."""
        return max(f.max_rel_deviation for f in self.fits)

    def rows(self) -> tuple[tuple[float | None, float, ArrheniusFit], ...]:
        """(pressure [Pa] or None, [M] at the highest temperature [m^-3], expression) per entry,
        in the tabulated order."""
        p = [None] * len(self.fits) if self.pressure_Pa is None else [float(x) for x in self.pressure_Pa]
        return tuple(zip(p, (float(x) for x in self.number_density_m3), self.fits))

    def _sorted(self, what: str):
        if self.pressure_Pa is None:
            raise InputError(f"this table was computed at number densities, not pressures: it cannot {what}",
                             field="pressure_Pa", hint="give the study's conditions as pressures")
        idx = np.argsort(self.pressure_Pa)
        return self.pressure_Pa[idx], [self.fits[i] for i in idx]

    def ln_rate(self, temperature_K, pressure_Pa):
        """ln k [SI per molecule] at temperature(s) [K] and pressure(s) [Pa] (broadcast)."""
        p_tab, fits = self._sorted("be evaluated at a pressure")
        T, P = np.broadcast_arrays(np.asarray(temperature_K, dtype=float), np.asarray(pressure_Pa, dtype=float))
        if np.any(~np.isfinite(P)) or np.any(P <= 0):
            raise InputError("pressures must be positive and finite", field="pressure_Pa")
        ln_k = np.stack([np.broadcast_to(f.ln_rate(T), T.shape) for f in fits], axis=-1)
        if len(fits) == 1:
            out = ln_k[..., 0]
        else:
            ln_p = np.log(p_tab)
            x = np.clip(np.log(P), ln_p[0], ln_p[-1])
            j = np.clip(np.searchsorted(ln_p, x, side="right") - 1, 0, ln_p.size - 2)
            w = (x - ln_p[j]) / (ln_p[j + 1] - ln_p[j])
            lo = np.take_along_axis(ln_k, j[..., None], axis=-1)[..., 0]
            hi = np.take_along_axis(ln_k, (j + 1)[..., None], axis=-1)[..., 0]
            out = lo + w * (hi - lo)
        return float(out) if np.ndim(out) == 0 else out

    def rate(self, temperature_K, pressure_Pa):
        """k [SI per molecule] at temperature(s) [K] and pressure(s) [Pa]; see the module docstring."""
        out = np.exp(self.ln_rate(temperature_K, pressure_Pa))
        return float(out) if np.ndim(out) == 0 else out

    def to_record(self) -> dict:
        """A plain dict in SI (expressions as :meth:`ArrheniusFit.to_record` dicts);
        :meth:`from_record` gives the same table back."""
        return {"form": "pressure table of Arrhenius expressions, ln k linear in ln P between pressures",
                "order": int(self.order),
                "pressure_Pa": None if self.pressure_Pa is None else [float(p) for p in self.pressure_Pa],
                "number_density_at_highest_T_m3": [float(m) for m in self.number_density_m3],
                "expressions": [f.to_record() for f in self.fits]}

    @classmethod
    def from_record(cls, record) -> "PressureTableFit":
        """The table of a :meth:`to_record` dict."""
        p = record.get("pressure_Pa")
        return cls(pressure_Pa=None if p is None else np.array(p, dtype=float),
                   number_density_m3=np.array(record["number_density_at_highest_T_m3"], dtype=float),
                   fits=tuple(ArrheniusFit.from_record(r) for r in record["expressions"]))

    def mechanism_block(self, indent: str = "  ") -> list[str]:
        """The type and rate lines of a Cantera ``pressure-dependent-Arrhenius`` reaction: one
        rate mapping per tabulated pressure (ascending, P in Pa), in the mechanism units."""
        p_tab, fits = self._sorted("be written to a mechanism")
        return ([f"{indent}type: pressure-dependent-Arrhenius", f"{indent}rate-constants:"]
                + [f"{indent}- {{P: {yaml_number(p)} Pa, " + f.cantera_rate()[1:] for p, f in zip(p_tab, fits)])


def fit_pressure_table(temperature_K, k_SI, *, order: int, pressure_Pa=None, number_density_m3=None,
                       modified: bool = True, T0_K: float = T0_DEFAULT_K,
                       max_deviation: float = MAX_DEVIATION_DEFAULT) -> PressureTableFit:
    """Fit a (modified) Arrhenius expression to each column of ``k_SI``.

    temperature_K (n_T,) [K]; k_SI (n_T, n_P) [SI per molecule]; pressure_Pa (n_P,) [Pa] of the
    columns, or None when they are number densities; number_density_m3 (n_P,) [m^-3], [M] of
    each column at the highest temperature (default NaN: unknown); modified, T0_K and
    max_deviation as in :func:`~tstrate.expressions.arrhenius.fit_arrhenius`.
    """
    k = np.asarray(k_SI, dtype=float)
    T = np.asarray(temperature_K, dtype=float).reshape(-1)
    if k.ndim != 2 or k.shape[0] != T.size:
        raise InputError(f"rate constants of shape {k.shape} for {T.size} temperatures", field="k_SI")
    m = (np.full(k.shape[1], math.nan) if number_density_m3 is None
         else np.asarray(number_density_m3, dtype=float))
    fits = tuple(fit_arrhenius(T, k[:, j], order=order, modified=modified, T0_K=T0_K,
                               max_deviation=max_deviation) for j in range(k.shape[1]))
    return PressureTableFit(pressure_Pa=None if pressure_Pa is None else np.asarray(pressure_Pa, dtype=float),
                            number_density_m3=m, fits=fits)
