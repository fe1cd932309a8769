"""Fitted parameters of a whole study: the rate expression each channel is exported in, NASA
polynomials per species.

This is the step between tstrate's own numbers and the files kinetics software
loads (see :mod:`tstrate.output.mechanism`).

Channels
--------
For every channel the canonical TST rate constant (with the channel's own tunnelling model,
``none`` included) at the study's temperatures is fitted to the two-parameter Arrhenius form
(Arrhenius, Z. Phys. Chem. 4, 226 (1889)) and to the modified, three-parameter form
k = A (T/T0)^n exp(-Ea/RT) (Kooij, Z. Phys. Chem. 12, 155 (1893)) with
:func:`tstrate.expressions.arrhenius.fit_arrhenius`; both go to fits.json. ``split=True``
(automatic break) or ``split=<break in K>`` adds a two-range fit, in fits.json only, since a
single elementary reaction cannot hold two ranges.

What the mechanism holds is chosen per channel (:mod:`tstrate.expressions.choice`): each
candidate is measured against the computed rates on the whole grid *and between grid points*
(temperatures midway in 1/T, pressures midway in ln P, where the rates are computed too), and
with ``mechanism_form="auto"`` (the default) the simplest that meets ``max_deviation`` is
exported:

- k(T) channels: Arrhenius, modified Arrhenius, then Chebyshev expansions of log10 k over the
  reduced inverse temperature (Venkatesh, Chang, Dean, Cohen and Carr, AIChE J. 43, 1331
  (1997); :func:`tstrate.expressions.chebyshev.fit_chebyshev`) with 1, 2, ... terms;
- falloff channels with a computed k(T, P) (``falloff_grid``): the Troe expression
  (:class:`~tstrate.expressions.troe.TroeFit` with k0 and k_inf as Arrhenius expressions; Troe,
  Ber. Bunsenges. Phys. Chem. 87, 161 (1983)) measured with the limit expressions written, a
  per-pressure table of modified Arrhenius expressions, then two-dimensional Chebyshev bases
  (1/T x log P) by growing number of coefficients. A channel whose k/k_inf exceeds 0.99 at
  every grid point has no falloff to describe and is exported as its high-pressure k(T)
  expression, with a statement saying so.

When no form meets the tolerance the best one is exported and the miss is stated; a form the
study asks for (``mechanism_form`` other than "auto") is honoured and flagged when it misses,
with the simplest form that would meet it. Chebyshev term counts given explicitly are used as
given. The deviation reported for the exported expression is the one measured this way
(:attr:`ChannelFit.export`), and :mod:`tstrate.output.mechanism_check` measures it again from
the numbers written. Deep tunnelling makes ln k curve in 1/T more than (T/T0)^n can follow,
which is why the demo's channels need Chebyshev expansions of 3 to 5 terms in 1/T.

Species
-------
Reactants, products and pre-reactive complexes of the channels get two-range
NASA 7-coefficient polynomials (McBride, Gordon and Reno, NASA TM-4513, 1993)
fitted by :func:`tstrate.expressions.nasa7.fit_nasa7` to tstrate's own ideal-gas
thermochemistry (same low-mode treatment as the rates) on a grid from 200 K
to 3000 K with the common temperature at 1000 K. When the study's
temperatures go below 200 K (cold atmospheres: 100-150 K) the low range is
extended down to the lowest study temperature (rounded down to 10 K); when
they go above 3000 K the high range is extended up. When the fit at 1000 K
errs by more than 0.1 % (polyatomics whose low modes make Cp rise steeply
between 200 and 700 K, and any wide low range) the common temperature is
moved to the value among 400-1200 K (50 K steps) that gives the smallest
largest error; Cantera reads a separate common temperature per species.
The fit errors (max relative error of Cp and S, of H measured against
max(|H|, RT), and the absolute H error) over the whole range and at the
study temperatures are stored with each species and written to the JSON.
Typical largest errors over 200-3000 K: 0.06 % (H2O), 0.1-0.2 % (O2, CO2),
0.2-0.3 % (H2CO3; Cp at the low end or at the common temperature), with H
and S within 0.05 %; down to 100 K a six-atom molecule reaches about 1 % in
Cp, since two quartic ranges cannot follow Cp from 100 to 3000 K (give
``nasa_range_K=(100, 1000)`` when only cold temperatures matter).
Transition states are not species of a mechanism and get no polynomial.

Enthalpy zero
-------------
Quantum-chemistry energies are huge (H2CO3 near -264 hartree, about
-6.9e8 J/mol, at ab initio levels; about -15.4 hartree with GFN2-xTB) and their zero depends on the method. Exported enthalpies are
therefore shifted by per-element offsets: species i with atom counts n_ij
gets

    H_export,i(T) = E_i + ZPE_i + [H_i(T) - H_i(0)] - sum_j n_ij c_j,

with c_j (J/mol per atom of element j) the least-squares solution of
sum_j n_ij c_j ~ E_i + ZPE_i over the exported study species (minimum-norm
when the atom counts are linearly dependent). Because every channel balances
atoms, the shift cancels in every reaction enthalpy, Gibbs energy and
equilibrium constant, while the exported enthalpies become small (of the
size of the reaction energies). They are *not* enthalpies of formation. The
offsets are stored in :attr:`StudyFits.element_offsets_J_per_mol` and written
into the JSON and mechanism files. Each channel's ln Kc from the polynomials
is compared with tstrate's ``ln_kc`` at the fitted temperatures
(:attr:`ChannelFit.max_abs_ln_kc_error`).

A bath-gas species needed by a falloff reaction but not part of the study
(N2, CO2, O2, ... shipped in :mod:`tstrate.io.reference`, or a noble-gas atom) has its
own enthalpy zero H(0) = 0: it only serves as a collision partner (a
warning says so when it shares elements with the study's species). A bath
gas listed among the study's species but in no channel is exported on the
study's scale; elements only it holds get offsets that make its H(0) = 0.

Units: SI inside (rate constants per molecule, J/mol, K); the JSON from
:func:`fits_to_json` carries the unit in every key.
"""

from __future__ import annotations

import datetime as _dt
import math
from dataclasses import dataclass, field
from typing import Mapping

import numpy as np

from tstrate.errors import InputError
from tstrate.expressions.arrhenius import (MAX_DEVIATION_DEFAULT, T0_DEFAULT_K, ArrheniusFit,
                                           SplitArrheniusFit, fit_arrhenius, fit_arrhenius_split)
from tstrate.expressions.chebyshev import ChebyshevFit, fit_chebyshev
from tstrate.expressions.choice import (Candidate, CheckPoints, Deviation, ExportChoice, between_temperatures,
                                        chebyshev_bases, choose_expression, grid_points, large_exponent_notes,
                                        temperature_points)
from tstrate.expressions.nasa7 import Nasa7Fit, fit_nasa7
from tstrate.expressions.pressure_table import PressureTableFit, fit_pressure_table
from tstrate.expressions.troe import TroeFit, troe_bound_notes
from tstrate.model.settings import MECHANISM_FORMS
from tstrate.physics.thermo import HARMONIC, LowModes, thermochemistry
from tstrate.units import K_B, P_STANDARD, R

#: Default NASA fit range [K] and common temperature [K].
NASA_RANGE_DEFAULT_K = (200.0, 3000.0)
NASA_T_MID_DEFAULT_K = 1000.0
#: Grid points per NASA range (plus the study temperatures inside the range).
_NASA_POINTS_PER_RANGE = 120
#: Above these fit errors a species gets a warning (fractions).
NASA_WARN_REL_ERROR = 1e-3
#: Above this |ln Kc(NASA) - ln Kc(tstrate)| a channel gets a warning.
KC_WARN_LN_ERROR = 0.01
#: Element order for formulas and element lists (the rest follows alphabetically).
_ELEMENT_FIRST = ("C", "H")


def element_order(elements) -> list[str]:
    """Elements in Hill order (C, H, then alphabetical)."""
    els = set(elements)
    return [e for e in _ELEMENT_FIRST if e in els] + sorted(els - set(_ELEMENT_FIRST))


# ============================================================================
# records
# ============================================================================

def arrhenius_expression(A_SI: float, n: float, Ea_J_per_mol: float, *, order: int,
                         T0_K: float = T0_DEFAULT_K) -> ArrheniusFit:
    """An Arrhenius expression k = A (T/T0)^n exp(-Ea/RT) given directly (not fitted).

    A_SI in SI per molecule for ``order`` (s^-1, m^3 s^-1, m^6 s^-1), Ea in
    J/mol, T0 in K. Range and deviations are NaN (unknown).
    """
    if order not in (1, 2, 3):
        raise InputError(f"reaction order must be 1, 2 or 3, got {order!r}", field="order")
    if not (math.isfinite(A_SI) and A_SI > 0):
        raise InputError(f"pre-exponential factor must be positive, got {A_SI!r}", field="A")
    if not (math.isfinite(n) and math.isfinite(Ea_J_per_mol)):
        raise InputError("n and Ea must be finite", field="Ea_J_per_mol")
    nan = float("nan")
    return ArrheniusFit(A=float(A_SI), n=float(n), Ea_J_per_mol=float(Ea_J_per_mol),
                        T0_K=float(T0_K), order=int(order), modified=n != 0.0, Tmin_K=nan,
                        Tmax_K=nan, max_rel_deviation=nan, rms_rel_deviation=nan, n_points=0)


@dataclass(frozen=True)
class SpeciesFit:
    """NASA polynomial of one exported species and its enthalpy zero.

    name: the study's species name; formula, composition (element -> count).
    role: "reactant/product", "complex" or "bath gas".
    source: species file, or a description for built-in species.
    nasa7: the two-range fit (enthalpy on the exported scale, J/mol; 1 bar).
    energy_J_per_mol: electronic energy on the study's scale [J/mol].
    zpe_J_per_mol: harmonic zero-point energy [J/mol].
    enthalpy_offset_J_per_mol: sum_j n_j c_j subtracted from E + ZPE [J/mol].
    h0_exported_J_per_mol: E + ZPE - offset, the exported H(0 K) [J/mol].
    note: a remark (e.g. the bath gas's own zero), or None.
    errors_at_extra: max relative errors {"cp", "h", "s"} of the polynomials at the
        study temperatures (H against max(|H|, RT)), or None.
    """

    name: str
    formula: str
    composition: dict
    role: str
    source: str | None
    nasa7: Nasa7Fit
    energy_J_per_mol: float
    zpe_J_per_mol: float
    enthalpy_offset_J_per_mol: float
    h0_exported_J_per_mol: float
    note: str | None = None
    errors_at_extra: dict | None = None


@dataclass(frozen=True)
class ChannelFit:
    """Fitted expressions of one channel, and the one exported to mechanisms.

    temperature_K, k_SI: the k(T) data fitted (canonical TST, with the channel's tunnelling, SI
        per molecule).
    arrhenius, modified: two- and three-parameter fits over all temperatures.
    split: two-range fit when asked, else None (fits.json only).
    mechanism_form: the form asked for ("auto" or one of :data:`MECHANISM_FORMS`).
    max_abs_ln_kc_error: max |ln Kc from the NASA polynomials - tstrate's ln Kc|
        over the fitted temperatures (dimensionless).
    troe: falloff parameters given for the channel, or None.
    warnings: sentences about the exported expression (misses, cautions) and Kc.
    chebyshev: the Chebyshev fit of k(T) when it is exported (or, with the chebyshev form, the
        best one tried), else None.
    chebyshev_falloff: the Chebyshev fit of k(T, P) [SI, T in K, P in Pa] when it is exported.
    pressure_table: modified Arrhenius expressions at each pressure of a falloff grid, or None.
    export: the :class:`~tstrate.expressions.choice.ExportChoice` - what the mechanism holds and
        its deviation measured on the grid and between grid points.
    check_points: the computed rates it was measured at.
    tunnelling: the channel's tunnelling model ("none", "wigner", "skodje-truhlar", "eckart").
    method: how the exported rates were computed, in words.
    """

    name: str
    reactants: tuple[str, ...]
    products: tuple[str, ...]
    order: int
    reverse_order: int
    temperature_K: np.ndarray
    k_SI: np.ndarray
    arrhenius: ArrheniusFit
    modified: ArrheniusFit
    split: SplitArrheniusFit | None
    mechanism_form: str
    max_abs_ln_kc_error: float
    troe: TroeFit | None = None
    warnings: tuple[str, ...] = ()
    chebyshev: ChebyshevFit | None = None
    chebyshev_falloff: ChebyshevFit | None = None
    pressure_table: PressureTableFit | None = None
    export: ExportChoice | None = None
    check_points: CheckPoints | None = None
    tunnelling: str = "none"
    method: str = ""

    @property
    def expression(self):
        """The exported expression (:attr:`export`): an ArrheniusFit, TroeFit,
        PressureTableFit or ChebyshevFit."""
        return self.export.expression

    @property
    def mechanism_kind(self) -> str:
        """What the mechanism file holds for this channel: "arrhenius", "modified_arrhenius",
        "troe", "pressure_table", "chebyshev" (k(T)) or "chebyshev_falloff" (k(T, P))."""
        return self.export.kind

    @property
    def includes_tunnelling(self) -> bool:
        return self.tunnelling != "none"

    @property
    def equation(self) -> str:
        """Human-readable equation with tstrate's species names."""
        return f"{' + '.join(self.reactants)} <=> {' + '.join(self.products)}"


@dataclass(frozen=True)
class StudyFits:
    """Everything fitted for one study, ready for export.

    study_file, title: where the numbers come from.
    temperature_K: the temperatures the rate constants were fitted over [K].
    low_modes: low-mode treatment used for rates and thermochemistry.
    species: exported species (reactants, products, complexes, bath gas).
    channels: one ChannelFit per channel, in study order.
    element_offsets_J_per_mol: element -> c_j [J/mol per atom] (see module docstring).
    bath_gas: name of the bath-gas species in ``species`` used by falloff reactions, or None.
    warnings: study-level warnings (channel warnings are kept with the channels).
    created: UTC time stamp (ISO 8601); version: tstrate version.
    """

    study_file: str | None
    title: str
    temperature_K: np.ndarray
    low_modes: LowModes
    species: tuple[SpeciesFit, ...]
    channels: tuple[ChannelFit, ...]
    element_offsets_J_per_mol: dict
    bath_gas: str | None = None
    warnings: tuple[str, ...] = ()
    created: str = ""
    version: str = ""
    input_files: tuple[str, ...] = field(default=())

    def species_fit(self, name: str) -> SpeciesFit:
        for s in self.species:
            if s.name == name:
                return s
        raise KeyError(name)

    def channel_fit(self, name: str) -> ChannelFit:
        for c in self.channels:
            if c.name == name:
                return c
        raise KeyError(name)

    @property
    def elements(self) -> list[str]:
        """All elements of the exported species (Hill order)."""
        return element_order({e for s in self.species for e in s.composition})


# ============================================================================
# NASA polynomials and the enthalpy zero
# ============================================================================

def nasa_range(study_temperature_K=None, *, range_K=NASA_RANGE_DEFAULT_K) -> tuple[float, float]:
    """NASA fit range [K]: ``range_K`` widened to cover the study temperatures.

    The low end is rounded down to 10 K, the high end up to 100 K.
    """
    try:
        lo, hi = (float(x) for x in range_K)
    except (TypeError, ValueError):
        raise InputError(f"NASA range must be two temperatures, got {range_K!r}",
                         field="nasa_range_K") from None
    if not (0 < lo < hi and math.isfinite(hi)):
        raise InputError(f"NASA range must be two increasing positive temperatures, got {range_K!r}",
                         field="nasa_range_K")
    T_study = np.array([]) if study_temperature_K is None else np.atleast_1d(
        np.asarray(study_temperature_K, dtype=float))
    if T_study.size:
        lo = min(lo, math.floor(T_study.min() / 10.0) * 10.0 or float(T_study.min()))
        hi = max(hi, math.ceil(T_study.max() / 100.0) * 100.0)
    return lo, hi


def nasa_grid(lo_K: float, hi_K: float, T_mid_K: float, extra_K=()) -> np.ndarray:
    """Fit grid [K]: evenly spaced points in each range plus ``extra_K`` inside [lo, hi]."""
    extra = np.atleast_1d(np.asarray(extra_K, dtype=float))
    extra = extra[(extra >= lo_K) & (extra <= hi_K)]
    return np.unique(np.concatenate([np.linspace(lo_K, T_mid_K, _NASA_POINTS_PER_RANGE),
                                     np.linspace(T_mid_K, hi_K, _NASA_POINTS_PER_RANGE), extra]))


def midpoint_candidates(lo_K: float, hi_K: float) -> list[float]:
    """Common temperatures [K] tried when the fit chooses the midpoint: 400-1200 K in 50 K
    steps, kept at least 100 K inside the range (else the geometric middle)."""
    cands = [float(t) for t in np.arange(400.0, 1200.0 + 1.0, 50.0)
             if lo_K + 100.0 <= t <= hi_K - 100.0]
    return cands or [float(round(math.sqrt(lo_K * hi_K), -1))]


def element_offsets(species_list) -> dict[str, float]:
    """Per-element offsets c_j [J/mol] with sum_j n_ij c_j ~ E_i + ZPE_i in least squares.

    ``species_list`` holds Species with electronic energies. The minimum-norm
    solution is taken when the atom counts are linearly dependent; any
    solution leaves every atom-balanced reaction energy unchanged.
    """
    from tstrate.physics.tst import zpe_level_J_per_mol

    species_list = list(species_list)
    if not species_list:
        return {}
    elements = element_order({e for s in species_list for e in s.atom_counts})
    counts = np.array([[s.atom_counts.get(e, 0) for e in elements] for s in species_list], dtype=float)
    e0 = np.array([zpe_level_J_per_mol(s) for s in species_list])
    # scale the target to order one for the solver; the result is scaled back
    scale = max(1.0, float(np.max(np.abs(e0))))
    coef, *_ = np.linalg.lstsq(counts, e0 / scale, rcond=None)
    return {e: float(c * scale) for e, c in zip(elements, coef)}


def _offset(species, offsets: Mapping[str, float]) -> float:
    return float(sum(n * offsets[e] for e, n in species.atom_counts.items()))


def _check_energy(species) -> None:
    if species.energy_J_per_mol is None:
        raise InputError(f"species {species.name!r} has no electronic energy, so its enthalpy "
                         "cannot be exported", file=species.source, field="energy",
                         hint="add energy = { value = ..., unit = \"hartree\" } to the species file")


def _worst(nasa: Nasa7Fit) -> float:
    return max(nasa.max_rel_error_cp, nasa.max_rel_error_h, nasa.max_rel_error_s)


def fit_species_nasa(species, T_range_K, T_mid_K: float | None = NASA_T_MID_DEFAULT_K, *,
                     adjust_mid: bool = True, extra_K=(), low_modes: LowModes = HARMONIC,
                     offset_J_per_mol: float = 0.0, role: str = "reactant/product",
                     note: str | None = None, h0_J_per_mol: float | None = None) -> SpeciesFit:
    """NASA fit of one species' thermochemistry over ``T_range_K`` = (Tmin, Tmax) [K].

    ``T_mid_K`` is the common temperature [K]. When it is None, not at least
    100 K inside the range, or (with ``adjust_mid``) the fit at it has a
    relative error above :data:`NASA_WARN_REL_ERROR`, the candidates of
    :func:`midpoint_candidates` are tried too and the one with the smallest
    largest relative error of Cp, H and S is kept. ``extra_K`` are
    temperatures [K] added to the grid (e.g. the study's; the errors over
    them are in ``errors_at_extra``). The fitted enthalpy is E + ZPE -
    ``offset_J_per_mol`` + [H(T) - H(0)] [J/mol], or ``h0_J_per_mol`` +
    [H(T) - H(0)] when that is given (bath gas with its own zero).
    """
    _check_energy(species)
    lo, hi = (float(x) for x in T_range_K)

    def fit_at(mid):
        grid = nasa_grid(lo, hi, mid, extra_K)
        th = thermochemistry(species, grid, low_modes=low_modes)
        h0 = (species.energy_J_per_mol + th.zpe_J_per_mol - offset_J_per_mol
              if h0_J_per_mol is None else float(h0_J_per_mol))
        try:
            nasa = fit_nasa7(th.temperature_K, th.heat_capacity_J_per_mol_K,
                             h0 + th.enthalpy_increment_J_per_mol, th.entropy_J_per_mol_K,
                             T_mid_K=mid)
        except InputError as exc:
            raise exc.located(file=species.source, field=f"species {species.name}") from None
        return nasa, h0, th.zpe_J_per_mol

    fixed_ok = T_mid_K is not None and lo + 100.0 <= float(T_mid_K) <= hi - 100.0
    tried = []
    if fixed_ok:
        tried.append(fit_at(float(T_mid_K)))
    if not fixed_ok or (adjust_mid and _worst(tried[0][0]) > NASA_WARN_REL_ERROR):
        tried += [fit_at(m) for m in midpoint_candidates(lo, hi)
                  if not (fixed_ok and m == float(T_mid_K))]
    nasa, h0, zpe = min(tried, key=lambda t: _worst(t[0]))
    if h0_J_per_mol is not None:
        offset_J_per_mol = species.energy_J_per_mol + zpe - h0
    extra = np.atleast_1d(np.asarray(extra_K, dtype=float))
    extra = extra[(extra >= lo) & (extra <= hi)]
    errors_at_extra = _nasa_errors(species, nasa, h0, extra, low_modes) if extra.size else None
    counts = species.atom_counts
    return SpeciesFit(name=species.name, formula=species.formula,
                      composition={e: int(counts[e]) for e in element_order(counts)}, role=role,
                      source=species.source, nasa7=nasa,
                      energy_J_per_mol=float(species.energy_J_per_mol), zpe_J_per_mol=float(zpe),
                      enthalpy_offset_J_per_mol=float(offset_J_per_mol),
                      h0_exported_J_per_mol=float(h0), note=note, errors_at_extra=errors_at_extra)


def _nasa_errors(species, nasa: Nasa7Fit, h0: float, T, low_modes) -> dict:
    """Max relative errors of Cp, H (against max(|H|, RT)) and S at temperatures T [K]."""
    th = thermochemistry(species, T, low_modes=low_modes)
    h = h0 + th.enthalpy_increment_J_per_mol
    return {
        "cp": float(np.max(np.abs(nasa.cp_J_per_mol_K(T) / th.heat_capacity_J_per_mol_K - 1))),
        "h": float(np.max(np.abs(nasa.h_J_per_mol(T) - h) / np.maximum(np.abs(h), R * T))),
        "s": float(np.max(np.abs(nasa.s_J_per_mol_K(T) / th.entropy_J_per_mol_K - 1))),
    }


def ln_kc_from_nasa(reactant_fits, product_fits, temperature_K) -> np.ndarray:
    """ln Kc [molecule m^-3 units] of reactants <=> products from NASA polynomials.

    ln Kc = -dG/RT + dn ln(p0 / k_B T), p0 = 1 bar, dn = n_products - n_reactants.
    """
    T = np.asarray(temperature_K, dtype=float)
    dg = (sum(np.asarray(f.nasa7.g_J_per_mol(T)) for f in product_fits)
          - sum(np.asarray(f.nasa7.g_J_per_mol(T)) for f in reactant_fits))
    dn = len(product_fits) - len(reactant_fits)
    return -dg / (R * T) + dn * np.log(P_STANDARD / (K_B * T))


# ============================================================================
# bath gas
# ============================================================================

# ============================================================================
# the whole study
# ============================================================================

@dataclass(frozen=True)
class ChannelGrid:
    """Computed k(T, P) of a falloff channel, for its pressure-dependent expressions.

    pressure_Pa (n_P,) [Pa] or None when the columns are at number densities; k_SI (n_T, n_P) on
    the fitted temperatures [SI per molecule]; k_inf_SI (n_T,) its high-pressure limit, or None;
    number_density_m3 (n_T, n_P) [m^-3] of the columns (needed without pressures);
    fine_temperature_K (m_T,), fine_pressure_Pa (m_P,), fine_k_SI (m_T, m_P): the rates also
    computed between grid points (on the union of the grid and the midpoints), or None.
    """

    pressure_Pa: np.ndarray | None
    k_SI: np.ndarray
    k_inf_SI: np.ndarray | None = None
    number_density_m3: np.ndarray | None = None
    fine_temperature_K: np.ndarray | None = None
    fine_pressure_Pa: np.ndarray | None = None
    fine_k_SI: np.ndarray | None = None


def _as_grid(value) -> ChannelGrid:
    if isinstance(value, ChannelGrid):
        return value
    P, k = value[:2]
    return ChannelGrid(None if P is None else np.asarray(P, dtype=float), np.asarray(k, dtype=float))


#: A falloff channel whose k(T, P) / k_inf exceeds this at every grid point is exported as its
#: high-pressure expression (no falloff over the grid).
NO_FALLOFF_RATIO = 0.99


def channel_method(tunnelling: str, kind: str | None) -> str:
    """A plain description of how an exported channel's rate constants were computed."""
    tun = {"none": "without tunnelling", "wigner": "with Wigner tunnelling",
           "skodje-truhlar": "with Skodje-Truhlar tunnelling",
           "eckart": "with Eckart tunnelling"}.get(tunnelling, f"with {tunnelling} tunnelling")
    if kind in ("troe", "pressure_table", "chebyshev_falloff"):
        # the falloff's k(E) is Eckart-corrected for Eckart channels, else classical
        tun = "with Eckart tunnelling" if tunnelling == "eckart" else "without tunnelling"
        return f"RRKM falloff k(T, P) on an energy grain {tun} in k(E)"
    return f"canonical TST {tun}"


def _fit_channel(cr, ch, *, max_deviation, T0_K, split, mechanism_form, troe, file,
                 cheb_T_terms=None, cheb_P_terms=None, grid=None, between=None):
    T, k = cr.temperature_K, cr.k
    where = dict(file=file, field=f"channel {ch.name}")
    if np.unique(T).size < 3:
        raise InputError(f"{np.unique(T).size} temperature(s) given; the modified Arrhenius fit "
                         "needs at least 3", hint="add temperatures to [conditions]", **where)
    try:
        arr = fit_arrhenius(T, k, order=cr.order, modified=False, T0_K=T0_K,
                            max_deviation=max_deviation)
        mod = fit_arrhenius(T, k, order=cr.order, modified=True, T0_K=T0_K,
                            max_deviation=max_deviation)
        sp = None
        if split is not False and split is not None:
            try:
                sp = fit_arrhenius_split(T, k, order=cr.order,
                                         modified=mechanism_form != "arrhenius",
                                         T0_K=T0_K, max_deviation=max_deviation,
                                         break_K=None if split is True else float(split))
            except InputError as exc:  # a break temperature of the study's [fits] split
                if exc.field != "break_K":
                    raise
                raise InputError(f"channel {ch.name}: {exc.problem}", file=file, field="fits.split",
                                 hint=exc.hint) from None
    except InputError as exc:
        raise exc.located(**where) from None
    if troe is not None and troe.kinf is None:
        raise InputError("the Troe expression has no limit expressions k0 and kinf", **where,
                         hint="join them with TroeFit.with_limits(k0, kinf)")
    if troe is not None and troe.kinf.order != cr.order:
        raise InputError(f"Troe k_inf has order {troe.kinf.order} but the channel has "
                         f"{cr.order} reactant(s)", **where)
    if grid is not None:
        grid = _as_grid(grid)
        if grid.k_SI.ndim != 2 or grid.k_SI.shape[0] != T.size:
            raise InputError(f"falloff grid of shape {grid.k_SI.shape} does not match the "
                             f"{T.size} fitted temperatures", **where)
    fixed_T = cheb_T_terms is not None
    fixed_P = cheb_P_terms is not None
    if fixed_T and mechanism_form == "chebyshev":
        _chebyshev(T, k, cr.order, int(cheb_T_terms), None, 1, max_deviation, ch.name, file)  # checks the count
    if (fixed_P and mechanism_form == "chebyshev" and grid is not None and grid.pressure_Pa is not None):
        _chebyshev(T, grid.k_SI, cr.order, 1, grid.pressure_Pa, int(cheb_P_terms), max_deviation, ch.name, file)

    # ---- check points: k(T) on the grid and between its temperatures
    kT_points = temperature_points(T, k, *(between if between is not None else ((), ())))
    notes: list[str] = []
    warnings: list[str] = []
    falloff_points = None
    table = None
    if grid is not None and grid.pressure_Pa is not None:
        if grid.fine_k_SI is not None:
            falloff_points = grid_points(grid.fine_temperature_K, grid.fine_pressure_Pa, grid.fine_k_SI,
                                         grid_temperature_K=T, grid_pressure_Pa=grid.pressure_Pa)
        else:
            falloff_points = grid_points(T, grid.pressure_Pa, grid.k_SI)
        table = fit_pressure_table(T, grid.k_SI, order=cr.order, pressure_Pa=grid.pressure_Pa,
                                   modified=True, T0_K=T0_K, max_deviation=max_deviation)
    elif grid is not None and grid.number_density_m3 is not None:
        falloff_points = grid_points(T, None, grid.k_SI, number_density_m3=grid.number_density_m3)

    no_falloff = (grid is not None and grid.k_inf_SI is not None
                  and bool(np.all(grid.k_SI / np.asarray(grid.k_inf_SI)[:, None] > NO_FALLOFF_RATIO)))
    pressure_dependent = (troe is not None or grid is not None) and not no_falloff
    if no_falloff:
        notes.append(f"no falloff over the computed grid (k/k_inf > {NO_FALLOFF_RATIO:g} at every temperature "
                     "and pressure): exported as its high-pressure expression, not as a falloff reaction")

    def cheb_T(n):
        return lambda: fit_chebyshev(T, k, order=cr.order, n_temperature=n, max_deviation=max_deviation)

    def cheb_TP(nt, npr):
        return lambda: fit_chebyshev(T, grid.k_SI, order=cr.order, n_temperature=nt, pressure_Pa=grid.pressure_Pa,
                                     n_pressure=npr, max_deviation=max_deviation)

    n_T = np.unique(T).size

    def kT_ladder(form):
        cands = []
        if form in ("auto", "arrhenius"):
            cands.append(("arrhenius", "Arrhenius", lambda: arr))
        if form in ("auto", "modified", "troe", "pressure_table"):
            cands.append(("modified_arrhenius", "modified Arrhenius", lambda: mod))
        if form in ("auto", "chebyshev"):
            bases = [(int(cheb_T_terms), 1)] if (fixed_T and form == "chebyshev") else chebyshev_bases(n_T)
            cands += [("chebyshev", f"Chebyshev {nt} x 1", cheb_T(nt)) for nt, _ in bases]
        return cands

    def falloff_ladder(form):
        cands = []
        if troe is not None and form in ("auto", "arrhenius", "modified", "troe"):
            cands.append(("troe", "Troe", lambda: troe))
        if table is not None and form in ("auto", "pressure_table") + (("arrhenius", "modified", "troe")
                                                                       if troe is None else ()):
            cands.append(("pressure_table", "per-pressure Arrhenius table", lambda: table))
        if grid is not None and grid.pressure_Pa is not None and form in ("auto", "chebyshev"):
            n_P = np.unique(grid.pressure_Pa).size
            if form == "chebyshev" and (fixed_T or fixed_P):
                bases = [(int(cheb_T_terms) if fixed_T else t, int(cheb_P_terms) if fixed_P else p)
                         for t, p in chebyshev_bases(n_T, n_P)
                         if (not fixed_T or t == int(cheb_T_terms)) and (not fixed_P or p == int(cheb_P_terms))]
                bases = list(dict.fromkeys(bases))
            else:
                bases = chebyshev_bases(n_T, n_P)
            cands += [("chebyshev_falloff", f"Chebyshev {nt} x {npr}", cheb_TP(nt, npr)) for nt, npr in bases]
        return cands

    if pressure_dependent:
        points = falloff_points
        ladder = falloff_ladder
        if troe is not None and falloff_points is None:
            notes.append("no computed k(T, P) was given with the Troe expression, so its deviation is not measured")
    else:
        points = kT_points
        ladder = kT_ladder
    requested = mechanism_form
    if requested in ("troe", "pressure_table") and not pressure_dependent:
        notes.append(f"the requested form {requested!r} is for falloff channels; this channel's k does not "
                     "depend on pressure, so its modified Arrhenius expression is written")
    if points is None:      # a Troe expression alone: nothing to measure against
        nan = float("nan")
        chosen = Candidate("troe", troe, "Troe", Deviation(nan, nan, nan, nan, nan, 0, 0))
        tried = [chosen]
    else:
        chosen, tried = choose_expression(ladder(requested), points, max_deviation)
        if chosen is None and requested != "auto":
            notes.append(f"the requested form {requested!r} cannot be written for this channel; the simplest "
                         "form meeting the tolerance is used instead")
            chosen, tried = choose_expression(ladder("auto"), points, max_deviation)
        if chosen is None:
            raise InputError("no rate expression could be fitted and written for this channel", **where)
    dev = chosen.deviation
    meets = bool(dev.max_rel <= max_deviation)
    pct = 100 * max_deviation

    def where_text(d):
        return ("on the grid and between grid points" if d.n_between else "on the computed grid")

    if points is not None and not meets:
        what = (f"the requested form {requested!r} ({chosen.label})" if requested != "auto"
                else f"no supported form meets the {pct:g} % tolerance; the best, {chosen.label},")
        miss = (f"{what} deviates from the computed rates by up to {100 * dev.max_rel:.3g} % {where_text(dev)} "
                f"(k_expr/k from {dev.ratio_min:.3g} to {dev.ratio_max:.3g})")
        if requested != "auto":
            miss += f", above the {pct:g} % tolerance"
            alt, _ = choose_expression(ladder("auto"), points, max_deviation)
            if alt is not None and alt.deviation.max_rel <= max_deviation:
                miss += f"; {alt.label} would meet it ({100 * alt.deviation.max_rel:.3g} %)"
        warnings.append(miss)
    if chosen.kind in ("arrhenius", "modified_arrhenius") and not meets:
        if sp is not None:
            warnings.append(f"two ranges split at {sp.break_K:g} K deviate by up to {100 * sp.max_rel_deviation:.3g} % "
                            "(fits.json \"split\"); a mechanism reaction holds one expression, so the file keeps "
                            f"the {chosen.label} expression")
        else:
            try:
                hint = fit_arrhenius_split(T, k, order=cr.order, modified=chosen.kind == "modified_arrhenius",
                                           T0_K=T0_K, max_deviation=max_deviation)
                warnings.append(f"two ranges split at {hint.break_K:g} K (the break split = true chooses) would "
                                f"deviate by up to {100 * hint.max_rel_deviation:.3g} %, in fits.json only")
            except InputError:
                pass
    elif sp is not None and chosen.kind in ("arrhenius", "modified_arrhenius"):
        notes.append(f"the split fit (break {sp.break_K:g} K) is in fits.json only: a mechanism reaction holds "
                     "one expression")
    if chosen.kind == "troe":
        t = chosen.expression
        if t.max_rel_deviation is not None and math.isfinite(t.max_rel_deviation):
            notes.append(f"Troe parameters fitted to the computed falloff curves with tabulated limits (an effective "
                         f"k0 fitted with them for tunnelling channels) deviate by up to "
                         f"{100 * t.max_rel_deviation:.3g} %; the file's expression, with Arrhenius limits, by "
                         + ("(not measured)" if points is None else f"{100 * dev.max_rel:.3g} %"))
        notes += list(troe_bound_notes(t))
    if chosen.kind in ("chebyshev", "chebyshev_falloff"):
        f = chosen.expression
        notes.append(f"Chebyshev basis {f.n_temperature} x {f.n_pressure} (terms in 1/T x log P)"
                     + ("" if fixed_T or fixed_P else
                        (", the smallest that meets the tolerance" if meets else ", the best tried")))
    caution = large_exponent_notes(chosen.kind, chosen.expression)
    warnings += caution
    notes = notes + warnings
    choice = ExportChoice(kind=chosen.kind, expression=chosen.expression, label=chosen.label, deviation=dev,
                          tolerance=float(max_deviation), requested=requested, meets_tolerance=meets,
                          tried=tuple((c.label, c.deviation.max_rel) for c in tried), notes=tuple(notes),
                          warnings=tuple(warnings))
    cheb = next((c.expression for c in tried if c.kind == "chebyshev" and c is chosen), None)
    cheb_p = next((c.expression for c in tried if c.kind == "chebyshev_falloff" and c is chosen), None)
    if cheb is None and mechanism_form == "chebyshev" and not pressure_dependent:
        cheb = min((c for c in tried if c.kind == "chebyshev"), key=lambda c: c.deviation.max_rel,
                   default=None)
        cheb = None if cheb is None else cheb.expression
    warnings = [f"channel {ch.name}: {w}" for w in warnings]
    return dict(name=ch.name, reactants=tuple(ch.reactants), products=tuple(ch.products),
                order=cr.order, reverse_order=cr.reverse_order, temperature_K=T, k_SI=k,
                arrhenius=arr, modified=mod, split=sp, mechanism_form=mechanism_form,
                troe=troe, chebyshev=cheb, chebyshev_falloff=cheb_p, pressure_table=table, export=choice,
                check_points=points, tunnelling=cr.tunnelling,
                method=channel_method(cr.tunnelling, chosen.kind)), warnings


def _chebyshev(T, k, order, n_T, P, n_P, max_deviation, channel, file):
    """fit_chebyshev with errors about term counts named after the study's [fits] keys."""
    try:
        return fit_chebyshev(T, k, order=order, n_temperature=n_T, pressure_Pa=P, n_pressure=n_P,
                             max_deviation=max_deviation)
    except InputError as exc:
        key = {"temperature_K": "fits.chebyshev_temperature_terms",
               "pressure_Pa": "fits.chebyshev_pressure_terms",
               "n_temperature": "fits.chebyshev_temperature_terms",
               "n_pressure": "fits.chebyshev_pressure_terms"}.get(exc.field)
        if key is None:
            raise exc.located(file=file, field=f"channel {channel}") from None
        raise InputError(f"channel {channel}: {exc.problem}", file=file, field=key,
                         hint=exc.hint) from None


def fit_study(study, *, temperature_K=None, low_modes: LowModes = HARMONIC,
              max_deviation: float = MAX_DEVIATION_DEFAULT, T0_K: float = T0_DEFAULT_K,
              split: bool | float = False, mechanism_form: str = "auto",
              nasa_range_K=NASA_RANGE_DEFAULT_K, nasa_T_mid_K: float | None = NASA_T_MID_DEFAULT_K,
              nasa_adjust_mid: bool = True,
              troe: Mapping[str, TroeFit] | None = None, bath_gas: str | None = None,
              bath_species=None, chebyshev_temperature_terms: int | None = None,
              chebyshev_pressure_terms: int | None = None,
              falloff_grid: Mapping[str, tuple] | None = None, rates=None,
              rates_between=None) -> StudyFits:
    """Fit every channel's k(T) and every exported species' thermochemistry.

    Parameters
    ----------
    study: a :class:`tstrate.model.Study`.
    temperature_K: temperatures [K] to fit k(T) over (default: the study's).
    low_modes: low-mode treatment for rates and thermochemistry.
    max_deviation: tolerance (fraction) of the exported expressions, measured on the grid and
        between grid points.
    T0_K: reference temperature of the modified Arrhenius form [K].
    split: False (no split fit), True (break searched) or a break temperature [K].
    mechanism_form: "auto" (default: per channel the simplest form meeting ``max_deviation``),
        or "arrhenius", "modified", "troe", "pressure_table", "chebyshev" for every channel
        (see :attr:`ChannelFit.export`; a form that misses is flagged).
    nasa_range_K, nasa_T_mid_K: NASA range and common temperature [K]; the range is
        widened to the study temperatures (:func:`nasa_range`).
    nasa_adjust_mid: let the fit move the common temperature when the fit at
        ``nasa_T_mid_K`` errs by more than 0.1 % (see :func:`fit_species_nasa`).
    troe: channel name -> :class:`~tstrate.expressions.troe.TroeFit` (with k0 and kinf) for falloff
        channels.
    bath_gas: collision partner of falloff reactions (default: the study's
        ``bath_gas``); added as a species when it is not one already.
    bath_species: the :class:`~tstrate.model.Species` of a bath gas that is not a study species
        (default: ``study.reference_species``, which :func:`tstrate.io.study.read_study` fills
        from the reference species shipped in the package).
    chebyshev_temperature_terms, chebyshev_pressure_terms: fixed numbers of Chebyshev terms in 1/T
        and log P for the chebyshev form (default: the smallest basis meeting the tolerance); an
        explicit count above the number of points is an InputError naming the [fits] key.
    falloff_grid: channel name -> :class:`ChannelGrid` (or (pressure_Pa (n_P,), k (n_T, n_P) in
        SI per molecule)) on the fitted temperatures, for the pressure-dependent forms.
    rates: the study's TST results (:func:`tstrate.study.rates.study_rates`) when the caller
        has them already, computed with the same ``low_modes`` and temperatures; else computed here.
    rates_between: the same at :func:`~tstrate.expressions.choice.between_temperatures` of the
        fitted temperatures (computed here when not given), where the k(T) expressions are checked too.
    """
    import tstrate
    from tstrate.study.rates import study_rates

    if mechanism_form not in MECHANISM_FORMS:
        raise InputError(f"unknown mechanism form {mechanism_form!r}", field="mechanism_form",
                         hint="use " + ", ".join(MECHANISM_FORMS))
    if not (isinstance(max_deviation, (int, float)) and max_deviation > 0):
        raise InputError(f"max_deviation must be a positive fraction, got {max_deviation!r}",
                         field="max_deviation")
    troe = dict(troe or {})
    falloff_grid = dict(falloff_grid or {})
    names = {ch.name for ch in study.channels}
    for what, given in (("Troe data", troe), ("a falloff grid", falloff_grid)):
        for key in given:
            if key not in names:
                raise InputError(f"{what} given for unknown channel {key!r}", file=study.file,
                                 field="troe" if given is troe else "falloff_grid",
                                 hint="channels: " + ", ".join(sorted(names)))
    associations = study.sections.get("association") or ()
    if not study.channels and not associations:
        raise InputError("the study has no channels to fit", file=study.file, field="channel")

    # ---- species: reactants/products, then complexes (study order of appearance)
    roles: dict[str, str] = {}
    for ch in study.channels:
        for n in (*ch.reactants, *ch.products):
            roles.setdefault(n, "reactant/product")
    for ch in study.channels:
        if ch.complex:
            roles.setdefault(ch.complex, "complex")
    for spec in associations:       # barrierless associations: their fragments and adduct
        for n in (*spec.reactants, spec.adduct):
            roles.setdefault(n, "reactant/product")
    exported = [study.species[n] for n in roles]
    for sp in exported:
        _check_energy(sp)

    if rates is None:
        rates = study_rates(study, low_modes=low_modes, temperature_K=temperature_K)
    T_fit = (rates[0].temperature_K if rates else
             np.asarray(study.conditions.temperature_K if temperature_K is None else temperature_K, dtype=float))
    lo, hi = nasa_range(T_fit, range_K=nasa_range_K)
    nasa_kw = dict(T_range_K=(lo, hi), T_mid_K=nasa_T_mid_K, adjust_mid=nasa_adjust_mid,
                   extra_K=T_fit, low_modes=low_modes)
    offsets = element_offsets(exported)
    species_fits = [fit_species_nasa(sp, **nasa_kw,
                                     offset_J_per_mol=_offset(sp, offsets), role=roles[sp.name])
                    for sp in exported]

    # ---- bath gas for falloff reactions
    study_warnings: list[str] = []
    bath_name = None
    if troe:
        bath_name = bath_gas or study.conditions.bath_gas or next(
            (t.bath_gas for t in troe.values() if t.bath_gas), None)
        if bath_name is None:
            study_warnings.append("falloff reactions are written with the generic collider M and "
                                  "no bath gas is named; set the mixture composition yourself")
        elif bath_name in roles:
            pass
        elif bath_name in study.species:
            sp = study.species[bath_name]
            _check_energy(sp)
            new = [e for e in element_order(sp.atom_counts) if e not in offsets]
            if new:
                # elements only the bath gas has: their offsets give it H(0 K) = 0
                from tstrate.physics.tst import zpe_level_J_per_mol

                rest = zpe_level_J_per_mol(sp) - _offset(sp, {**offsets, **{e: 0.0 for e in new}})
                offsets.update({e: 0.0 for e in new})
                offsets[new[0]] = rest / sp.atom_counts[new[0]]
            species_fits.append(fit_species_nasa(sp, **nasa_kw,
                                                 offset_J_per_mol=_offset(sp, offsets),
                                                 role="bath gas"))
        else:
            sp = bath_species if bath_species is not None else study.reference_species.get(bath_name)
            if sp is None:
                study_warnings.append(
                    f"bath gas {bath_name!r} is neither a study species nor a reference species; "
                    "falloff reactions use the generic collider M and the mechanism holds no "
                    "bath-gas species (add one to the study to include it)")
                bath_name = None
            else:
                shared = sorted(set(sp.atom_counts) & set(offsets))
                note = ("bath gas from reference data: its enthalpy zero is its own, H(0 K) = 0, "
                        "not the study's scale; it only serves as collision partner")
                if shared:
                    study_warnings.append(
                        f"bath gas {bath_name!r} shares elements ({', '.join(shared)}) with the "
                        "study species but is not on the study's energy scale; do not let it react")
                species_fits.append(fit_species_nasa(sp, **nasa_kw,
                                                     role="bath gas", note=note, h0_J_per_mol=0.0))

    by_name = {f.name: f for f in species_fits}
    for f in species_fits:
        n = f.nasa7
        worst = max(n.max_rel_error_cp, n.max_rel_error_h, n.max_rel_error_s)
        if worst > NASA_WARN_REL_ERROR:
            study_warnings.append(f"species {f.name}: NASA fit error up to {100 * worst:.2f} % "
                                  f"over {n.Tmin_K:g}-{n.Tmax_K:g} K")

    # ---- channels: rates between the fitted temperatures, for the checks
    T_between = between_temperatures(T_fit)
    if rates_between is None and T_between.size:
        rates_between = study_rates(study, low_modes=low_modes, temperature_K=T_between)
    between_of = {r.channel: (T_between, r.k) for r in (rates_between or ())
                  if np.shape(r.temperature_K) == T_between.shape and np.allclose(r.temperature_K, T_between)}
    channel_fits = []
    for cr, ch in zip(rates, study.channels):
        kwargs, warnings = _fit_channel(cr, ch, max_deviation=max_deviation, T0_K=T0_K, split=split,
                                        mechanism_form=mechanism_form, troe=troe.get(ch.name),
                                        file=study.file,
                                        cheb_T_terms=chebyshev_temperature_terms,
                                        cheb_P_terms=chebyshev_pressure_terms,
                                        grid=falloff_grid.get(ch.name),
                                        between=between_of.get(ch.name))
        ln_kc = ln_kc_from_nasa([by_name[n] for n in ch.reactants],
                                [by_name[n] for n in ch.products], cr.temperature_K)
        kc_err = float(np.max(np.abs(ln_kc - cr.ln_kc)))
        if kc_err > KC_WARN_LN_ERROR:
            warnings.append(f"channel {ch.name}: Kc from the NASA polynomials differs from "
                            f"tstrate's by up to {100 * math.expm1(kc_err):.2f} %")
        channel_fits.append(ChannelFit(max_abs_ln_kc_error=kc_err, warnings=tuple(warnings),
                                       **kwargs))

    inputs = tuple(str(p) for p in ([study.file] if study.file else [])
                   + list(study.species_files.values()))
    return StudyFits(
        study_file=study.file, title=study.title, temperature_K=T_fit, low_modes=low_modes,
        species=tuple(species_fits), channels=tuple(channel_fits),
        element_offsets_J_per_mol=offsets, bath_gas=bath_name, warnings=tuple(study_warnings),
        created=_dt.datetime.now(_dt.timezone.utc).replace(microsecond=0).isoformat(),
        version=getattr(tstrate, "__version__", "unknown"), input_files=inputs)


__all__ = ["SpeciesFit", "ChannelFit", "StudyFits", "fit_study", "arrhenius_expression",
           "MECHANISM_FORMS", "element_offsets", "fit_species_nasa", "ln_kc_from_nasa", "nasa_grid", "nasa_range",
           "midpoint_candidates", "element_order", "NASA_RANGE_DEFAULT_K", "NASA_T_MID_DEFAULT_K"]
