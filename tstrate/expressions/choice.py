"""Which rate expression a channel is exported in, and how far it is from the computed rates.

Every expression a mechanism or fits.json holds is measured against the computed rate
constants at *check points*: the whole computed grid (temperatures, and pressures for
pressure-dependent channels) and the points between grid points (temperatures midway in
1/T, pressures midway in ln P, and both), where the rates were computed as well. A fit that
passes through its grid points but swings between them (a polynomial with as many terms as
points, a three-point modified Arrhenius limit inside a Troe expression) is caught there.

The deviation of an expression is max |k_expr / k - 1| over the check points, with the
smallest and largest ratio k_expr / k (:class:`Deviation`).

:func:`choose_expression` takes candidate expressions, simplest first (for k(T): Arrhenius,
modified Arrhenius, Chebyshev with 1, 2, ... terms in 1/T; for k(T, P): Troe, a per-pressure
table of modified Arrhenius expressions, Chebyshev bases of growing size), and keeps the first
that meets the tolerance, or, when none does, the one with the smallest deviation.

Units: temperatures K, pressures Pa, number densities m^-3, k in SI per molecule for the order.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Callable, Iterable

import numpy as np

from tstrate.errors import InputError
from tstrate.units import K_B

#: How the kinds of exported expressions are named in notes and reports.
KIND_LABELS = {"arrhenius": "Arrhenius", "modified_arrhenius": "modified Arrhenius",
               "troe": "Troe falloff", "pressure_table": "per-pressure Arrhenius table",
               "chebyshev": "Chebyshev k(T)", "chebyshev_falloff": "Chebyshev k(T, P)"}
#: Above this |n| an Arrhenius expression reproduces k only inside its fitted range (common practice).
LARGE_TEMPERATURE_EXPONENT = 10.0


def between_temperatures(temperature_K) -> np.ndarray:
    """Temperatures [K] midway in 1/T between neighbouring distinct temperatures (n - 1 values)."""
    t = np.unique(np.asarray(temperature_K, dtype=float))
    return 2.0 / (1.0 / t[:-1] + 1.0 / t[1:])


def between_pressures(pressure_Pa) -> np.ndarray:
    """Pressures [Pa] midway in ln P between neighbouring distinct pressures (n - 1 values)."""
    p = np.unique(np.asarray(pressure_Pa, dtype=float))
    return np.sqrt(p[:-1] * p[1:])


@dataclass(frozen=True)
class CheckPoints:
    """Computed rate constants at which exported expressions are measured.

    temperature_K, k_SI: (n,) [K], [SI per molecule]; pressure_Pa: (n,) [Pa] or None for
    k(T); number_density_m3: (n,) [m^-3] (bath gas) or None: set for falloff channels
    computed at number densities instead of pressures; on_grid: (n,) True at the computed grid,
    False between grid points.
    """

    temperature_K: np.ndarray
    k_SI: np.ndarray
    on_grid: np.ndarray
    pressure_Pa: np.ndarray | None = None
    number_density_m3: np.ndarray | None = None

    @property
    def n_grid(self) -> int:
        return int(np.count_nonzero(self.on_grid))

    @property
    def n_between(self) -> int:
        return int(self.on_grid.size - self.n_grid)


def _on(values, grid):
    grid = np.unique(np.asarray(grid, dtype=float))
    return np.isclose(values[:, None], grid[None, :], rtol=1e-12, atol=0).any(axis=1)


def temperature_points(temperature_K, k_SI, between_K=(), k_between_SI=()) -> CheckPoints:
    """Check points of a k(T) channel: the grid and (optionally) rates between its temperatures."""
    T = np.concatenate([np.asarray(temperature_K, dtype=float).ravel(), np.asarray(between_K, dtype=float).ravel()])
    k = np.concatenate([np.asarray(k_SI, dtype=float).ravel(), np.asarray(k_between_SI, dtype=float).ravel()])
    grid = np.zeros(T.size, dtype=bool)
    grid[:np.asarray(temperature_K).size] = True
    return CheckPoints(T, k, grid)


def grid_points(temperature_K, pressure_Pa, k_SI, *, grid_temperature_K=None, grid_pressure_Pa=None,
                number_density_m3=None) -> CheckPoints:
    """Check points of a k(T, P) grid (n_T, n_P); points whose temperature and pressure are both
    in ``grid_temperature_K`` and ``grid_pressure_Pa`` (default: all) count as grid points.

    With ``pressure_Pa`` None the columns are at the number densities ``number_density_m3``
    (n_T, n_P) [m^-3] instead.
    """
    T = np.asarray(temperature_K, dtype=float)
    k = np.asarray(k_SI, dtype=float)
    if pressure_Pa is None:
        M = np.asarray(number_density_m3, dtype=float)
        TT = np.broadcast_to(T[:, None], k.shape).ravel()
        return CheckPoints(TT, k.ravel(), np.ones(k.size, dtype=bool), None, M.ravel())
    P = np.asarray(pressure_Pa, dtype=float)
    TT, PP = (a.ravel() for a in np.broadcast_arrays(T[:, None], P[None, :]))
    on = np.ones(TT.size, dtype=bool)
    if grid_temperature_K is not None:
        on &= _on(TT, grid_temperature_K)
    if grid_pressure_Pa is not None:
        on &= _on(PP, grid_pressure_Pa)
    return CheckPoints(TT, k.ravel(), on, PP, None)


def rate_at(expression, temperature_K, pressure_Pa=None, number_density_m3=None):
    """k [SI per molecule] of any rate form of :mod:`tstrate.expressions` at T [K] and P [Pa]
    (Troe: at [M] = P / k_B T, or at ``number_density_m3`` [m^-3] when given)."""
    from tstrate.expressions.troe import TroeFit

    T = np.asarray(temperature_K, dtype=float)
    if isinstance(expression, TroeFit):
        M = (np.asarray(number_density_m3, dtype=float) if number_density_m3 is not None
             else np.asarray(pressure_Pa, dtype=float) / (K_B * T))
        return np.asarray(expression.rate(T, M), dtype=float)
    if pressure_Pa is None:
        if getattr(expression, "pressure_dependent", False) or hasattr(expression, "fits"):
            raise InputError("a pressure-dependent expression needs pressures to be checked", field="pressure_Pa")
        return np.asarray(expression.rate(T), dtype=float)
    return np.asarray(expression.rate(T, np.asarray(pressure_Pa, dtype=float)), dtype=float)


@dataclass(frozen=True)
class Deviation:
    """How far an expression is from the computed rates at check points.

    max_rel: max |k_expr/k - 1| over all points; max_rel_grid, max_rel_between: over the grid
    and between grid points (NaN with none); ratio_min, ratio_max: smallest and largest
    k_expr/k; n_grid, n_between: numbers of points.
    """

    max_rel: float
    max_rel_grid: float
    max_rel_between: float
    ratio_min: float
    ratio_max: float
    n_grid: int
    n_between: int

    def to_record(self) -> dict:
        pct = (lambda x: None if not math.isfinite(x) else 100.0 * x)
        return {"max_deviation_percent": pct(self.max_rel),
                "max_deviation_on_grid_percent": pct(self.max_rel_grid),
                "max_deviation_between_grid_points_percent": pct(self.max_rel_between),
                "ratio_to_computed_min": self.ratio_min, "ratio_to_computed_max": self.ratio_max,
                "n_grid_points": self.n_grid, "n_points_between": self.n_between}


def measure(expression, points: CheckPoints) -> Deviation:
    """The :class:`Deviation` of ``expression`` (any rate form) at ``points``."""
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        k = rate_at(expression, points.temperature_K, points.pressure_Pa, points.number_density_m3)
        ratio = np.asarray(k, dtype=float).ravel() / points.k_SI
    dev = np.where(np.isfinite(ratio), np.abs(ratio - 1.0), np.inf)

    def worst(mask):
        return float(np.max(dev[mask])) if np.any(mask) else math.nan

    fin = ratio[np.isfinite(ratio)]
    return Deviation(max_rel=float(np.max(dev)), max_rel_grid=worst(points.on_grid),
                     max_rel_between=worst(~points.on_grid),
                     ratio_min=float(fin.min()) if fin.size else math.nan,
                     ratio_max=float(fin.max()) if fin.size else math.nan,
                     n_grid=points.n_grid, n_between=points.n_between)


@dataclass(frozen=True)
class Candidate:
    """One expression tried: its kind (a key of :data:`KIND_LABELS`), the expression, a label
    (e.g. "Chebyshev 4 x 3") and its deviation."""

    kind: str
    expression: object
    label: str
    deviation: Deviation


@dataclass(frozen=True)
class ExportChoice:
    """The expression a channel is exported in.

    kind, expression, label, deviation: the chosen :class:`Candidate`'s; tolerance: the
    max_deviation (fraction) it was chosen against; requested: "auto" or the user's
    mechanism form; meets_tolerance: deviation.max_rel <= tolerance; tried: (label, max_rel)
    of every candidate measured, in order; notes: plain statements about the exported
    expression (how it was chosen, bounds, the Troe fit behind it), each a sentence; warnings:
    those of them that say it misses the tolerance or must not be extrapolated.
    """

    kind: str
    expression: object
    label: str
    deviation: Deviation
    tolerance: float
    requested: str
    meets_tolerance: bool
    tried: tuple[tuple[str, float], ...] = ()
    notes: tuple[str, ...] = field(default=())
    warnings: tuple[str, ...] = field(default=())

    @property
    def kind_label(self) -> str:
        return KIND_LABELS[self.kind]


def _representable(expression) -> bool:
    try:
        expression.mechanism_block()
    except InputError:
        return False
    return True


def choose_expression(candidates: Iterable[tuple[str, str, Callable[[], object]]], points: CheckPoints,
                      tolerance: float, *, stop_at_first: bool = True) -> tuple[Candidate | None, list[Candidate]]:
    """The first candidate (kind, label, build) whose expression meets ``tolerance`` at
    ``points``, else the one with the smallest deviation, and every candidate measured.

    ``build()`` returns the expression, or raises InputError when the form cannot be fitted;
    expressions a mechanism file cannot hold (A beyond the float range) are skipped.
    """
    tried: list[Candidate] = []
    for kind, label, build in candidates:
        try:
            expr = build()
        except InputError:
            continue
        if expr is None or not _representable(expr):
            continue
        cand = Candidate(kind, expr, label, measure(expr, points))
        tried.append(cand)
        if stop_at_first and cand.deviation.max_rel <= tolerance:
            return cand, tried
    if not tried:
        return None, tried
    return min(tried, key=lambda c: c.deviation.max_rel), tried


def chebyshev_bases(n_temperature: int, n_pressure: int = 1) -> list[tuple[int, int]]:
    """Chebyshev bases (terms in 1/T, terms in log P), smallest first: by the number of
    coefficients, then by the number of temperature terms."""
    return sorted(((t, p) for t in range(1, n_temperature + 1) for p in range(1, n_pressure + 1)),
                  key=lambda b: (b[0] * b[1], b[0], b[1]))


def large_exponent_notes(kind: str, expression) -> list[str]:
    """A caution for each Arrhenius part of ``expression`` with |n| above
    :data:`LARGE_TEMPERATURE_EXPONENT` (the limits of a Troe form, the rows of a pressure table)."""
    parts = []
    if kind in ("arrhenius", "modified_arrhenius"):
        parts = [("", expression)]
    elif kind == "troe":
        parts = [("low-pressure limit k0 ", expression.k0), ("high-pressure limit k_inf ", expression.kinf)]
    elif kind == "pressure_table":
        parts = [(f"entry at {p / 1e5:.3g} bar " if p is not None else "entry ", f) for p, _, f in expression.rows()]
    out = []
    for what, f in parts:
        if f is not None and abs(f.n) > LARGE_TEMPERATURE_EXPONENT:
            out.append(f"{'its ' + what if what else 'it '}has n = {f.n:.3g} (|n| > {LARGE_TEMPERATURE_EXPONENT:g}): "
                       f"it reproduces k only inside {f.Tmin_K:g}-{f.Tmax_K:g} K and must not be extrapolated")
    return out


__all__ = ["CheckPoints", "Deviation", "Candidate", "ExportChoice", "KIND_LABELS", "LARGE_TEMPERATURE_EXPONENT",
           "between_temperatures", "between_pressures", "temperature_points", "grid_points", "rate_at", "measure",
           "choose_expression", "chebyshev_bases", "large_exponent_notes"]
