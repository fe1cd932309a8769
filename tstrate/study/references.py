"""Reference rate expressions of a study (evaluated or measured) against the computed rate constants.

A study's ``[[reference_rate]]`` entries (read by :mod:`tstrate.io.sections.references`) each give
one expression in an evaluation form (:mod:`tstrate.expressions.evaluation_forms`) for one channel,
with its source and its range of validity. :func:`compare_references` evaluates each over the
part of the study's grid inside that range and gives the ratio computed / reference:

- an Arrhenius reference against the channel's TST k(T) (high-pressure limit, with tunnelling);
- a falloff reference against the computed k(T, p) of a falloff channel at the grid points in
  range, and its k_inf against the TST k(T) (for channels without falloff, only k_inf).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from tstrate.units import K_B

#: kinds of reference
REFERENCE_KINDS = ("evaluated", "measured")


@dataclass(frozen=True)
class ReferenceRate:
    """One reference expression for one channel.

    expression: an evaluation form (SI per molecule); Tmin_K, Tmax_K: its range of validity [K];
    pressure_min_Pa, pressure_max_Pa: its pressure range (falloff forms; None: any);
    source: where it comes from; kind: evaluated or measured; label: its name in plots and tables;
    bath_gas: the collision partner it was measured or evaluated for (text, if given).
    """

    channel: str
    label: str
    source: str
    kind: str
    expression: object
    Tmin_K: float
    Tmax_K: float
    pressure_min_Pa: float | None = None
    pressure_max_Pa: float | None = None
    bath_gas: str | None = None

    @property
    def is_falloff(self) -> bool:
        return hasattr(self.expression, "kinf")


@dataclass(frozen=True)
class RatioRow:
    """computed / reference at one point: quantity "k" (Arrhenius), "k_inf" or "k(T, p)"."""

    quantity: str
    temperature_K: float
    pressure_Pa: float | None
    number_density_m3: float | None
    k_computed: float
    k_reference: float

    @property
    def ratio(self) -> float:
        return self.k_computed / self.k_reference


@dataclass(frozen=True)
class ReferenceComparison:
    reference: ReferenceRate
    order: int
    rows: tuple[RatioRow, ...]
    note: str | None = None

    def ratio_range(self, quantity: str | None = None) -> tuple[float, float] | None:
        r = [row.ratio for row in self.rows if quantity is None or row.quantity == quantity]
        return (float(min(r)), float(max(r))) if r else None


def compare_references(study, rates, falloff=None) -> tuple[ReferenceComparison, ...]:
    """Ratios computed / reference over the overlap of each reference's range with the study's grid."""
    refs = study.sections.get("reference_rate") or ()
    by_rate = {r.channel: r for r in rates}
    by_falloff = {cf.name: cf for cf in (falloff.channels if falloff is not None else ())}
    out = []
    for ref in refs:
        r = by_rate[ref.channel]
        T = np.asarray(r.temperature_K, dtype=float)
        inside = (T >= ref.Tmin_K * (1 - 1e-12)) & (T <= ref.Tmax_K * (1 + 1e-12))
        rows = []
        e = ref.expression
        kind = "k_inf" if ref.is_falloff else "k"
        for t, k in zip(T[inside], np.asarray(r.k)[inside]):
            rows.append(RatioRow(kind, float(t), None, None, float(k), float(e.high_pressure_rate(t))))
        cf = by_falloff.get(ref.channel)
        if ref.is_falloff and cf is not None:
            for i, t in enumerate(cf.temperature_K):
                if not (ref.Tmin_K * (1 - 1e-12) <= t <= ref.Tmax_K * (1 + 1e-12)):
                    continue
                for j in range(cf.number_density_m3.shape[1]):
                    m = float(cf.number_density_m3[i, j])
                    p = None if cf.pressure_Pa is None else float(cf.pressure_Pa[j])
                    p_here = m * K_B * t if p is None else p
                    if ref.pressure_min_Pa is not None and p_here < ref.pressure_min_Pa * (1 - 1e-12):
                        continue
                    if ref.pressure_max_Pa is not None and p_here > ref.pressure_max_Pa * (1 + 1e-12):
                        continue
                    rows.append(RatioRow("k(T, p)", float(t), p, m, float(cf.rate_constant_per_s[i, j]),
                                         float(e.rate(t, m))))
        note = None
        if not rows:
            note = (f"no study temperature inside the reference's range {ref.Tmin_K:g}-{ref.Tmax_K:g} K "
                    f"(the study spans {T.min():g}-{T.max():g} K)")
        elif ref.is_falloff and cf is None:
            note = "the channel has no falloff computed here: only k_inf is compared"
        out.append(ReferenceComparison(ref, r.order, tuple(rows), note))
    return tuple(out)
