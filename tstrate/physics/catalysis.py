"""Catalysed versus bare routes: which one removes the substrate faster?

A catalyst molecule X (one or two waters, an acid, ammonia, an amine) can open
a route with a much lower barrier than the bare unimolecular reaction
S -> products, but that route needs X at the reacting site. With the
stationary points of each route this module compares the routes on an equal
footing, per free substrate molecule, at given temperatures and catalyst
abundances. All quantities are SI: temperatures in K, number densities in
m^-3, molar energies in J/mol, rate constants per molecule (s^-1, m^3 s^-1,
m^6 s^-1).

Routes and their pseudo-first-order loss rates of the substrate
---------------------------------------------------------------
- bare, S -> TS0 -> P:                 k'_0 = k_uni                 [s^-1]
- one catalyst, S + X -> TS1:          k'_1 = k_2 [X]               (k_2 in m^3 s^-1)
- two catalysts, S + 2 X -> TS2:       k'_2 = k_3 [X]^2             (k_3 in m^6 s^-1)
- through the dimer, S + X2 -> TS2:    k'_d = k_2' [X2] = k_2' K_d [X]^2

with [X2] = K_d [X]^2 from the equilibrium 2 X <=> X2 (K_d = Kc in m^3 per
molecule from the species' partition functions), [X] the number density of
the catalyst monomer. Each route is therefore k' = A(T) [X]^m with m = 0, 1
or 2 catalyst molecules: ``ln_prefactor_SI`` is ln A and ``catalyst_power``
is m.

The rate constants come from :func:`tstrate.physics.tst.channel_rates`
(canonical TST with the channel's tunnelling model) in the high-pressure
limit: a route through a pre-reactive complex C (S + n X <=> C -> TS) then
has k = K_C k_uni with K_C = Kc(S + n X <=> C) and k_uni the TST rate
constant of C -> TS; the complex's partition function cancels and k equals
the direct expression from the separated reactants. Both factors are
reported (:attr:`RouteResult.complex_equilibrium`,
:attr:`RouteResult.k_unimolecular_from_complex_per_s`) so the identity can be
checked.

Derived comparisons
-------------------
- ratio to the bare route, k'_route / k'_0, for each abundance and T;
- crossover abundance, the catalyst number density at which a route equals
  the bare one: [X]* = (k_uni / A)^(1/m) (closed form, per temperature);
- temperature ranges where a route is faster than the bare one at a given
  abundance: from the sign changes of ln(k'_route / k'_0) on the temperature
  grid, each crossing refined by linear interpolation in 1/T (ln ratios of
  activated processes are close to linear in 1/T);
- the fraction of the substrate that is free rather than held in the
  complexes, 1 / (1 + sum_C [C]/[S]), with [C]/[S] = K_C prod [other
  reactants]. The pseudo-first-order rates here are per *free* substrate
  molecule; per total substrate every route is multiplied by the same
  fraction, so the ratios are unchanged.

Background for catalysis of this kind by water: e.g. T. Loerting, C.
Tautermann, R. T. Kroemer, I. Kohl, A. Hallbrucker, E. Mayer and K. R. Liedl,
Angew. Chem. Int. Ed. 39, 891 (2000) (H2CO3 -> CO2 + H2O with one and two
waters); for water-dimer abundances, R. J. Curtiss, D. J. Frurip and M.
Blander, J. Chem. Phys. 71, 2703 (1979).
"""

from __future__ import annotations

import logging
from collections import Counter
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field

import numpy as np

from tstrate.arrays import temperatures_K
from tstrate.errors import InputError
from tstrate.model import Channel, Species
from tstrate.physics.humidity import Abundance, saturation_pressure_Pa
from tstrate.physics.thermo import HARMONIC, LowModes, ln_partition_function_per_volume
from tstrate.physics.tst import (ChannelRates, channel_rates, kp_from_kc, ln_equilibrium_constant,
                                 ln_eyring_factor, zpe_level_J_per_mol)
from tstrate.units import K_B, R

log = logging.getLogger(__name__)

#: Route kinds: the bare reaction, one or two catalyst molecules, or the catalyst dimer.
ROUTE_KINDS = ("bare", "one_catalyst", "two_catalysts", "dimer")

#: Unit of ``CatalystAbundance.value`` by abundance kind.
ABUNDANCE_UNITS = {
    "number_density_m3": "m-3",
    "partial_pressure_Pa": "Pa",
    "mixing_ratio": "mol/mol",
    "relative_humidity_percent": "%",
}


# ----------------------------------------------------------------------------
# inputs
# ----------------------------------------------------------------------------

@dataclass(frozen=True)
class CatalystAbundance:
    """One catalyst abundance as the user gave it.

    abundance: the value and its kind (:class:`tstrate.physics.humidity.Abundance`);
        ``abundance.value`` is in the unit named by ``abundance.kind`` (m^-3, Pa,
        mol/mol or % relative humidity over ``abundance.phase``).
    total_pressure_Pa: total pressure [Pa], needed for a mixing ratio only.
    label: optional name of the scenario (e.g. "dry upper atmosphere").
    """

    abundance: Abundance
    total_pressure_Pa: float | None = None
    label: str = ""

    def __post_init__(self):
        if self.abundance.kind == "mixing_ratio":
            if self.total_pressure_Pa is None:
                raise InputError("a mixing ratio needs the total pressure", field="total_pressure_Pa")
            if not (np.isfinite(self.total_pressure_Pa) and self.total_pressure_Pa > 0):
                raise InputError("total pressure must be positive", field="total_pressure_Pa")

    @property
    def kind(self) -> str:
        return self.abundance.kind

    @property
    def value(self) -> float:
        """The abundance in the unit :attr:`unit`."""
        return self.abundance.value

    @property
    def unit(self) -> str:
        return ABUNDANCE_UNITS[self.abundance.kind]

    def number_density_m3(self, temperature_K) -> np.ndarray:
        """Catalyst (monomer) number density [m^-3] at each temperature [K], shape of T."""
        T = np.atleast_1d(np.asarray(temperature_K, dtype=float))
        n = self.abundance.number_density_m3(T, self.total_pressure_Pa)
        return np.broadcast_to(np.asarray(n, dtype=float), T.shape).copy()

    def from_number_density_m3(self, number_density_m3, temperature_K) -> np.ndarray:
        """Express number densities [m^-3] at temperatures [K] in this abundance's unit.

        The inverse of :meth:`number_density_m3` (used to state crossover abundances in the
        user's own terms: a partial pressure [Pa], a mixing ratio [mol/mol] at the same total
        pressure, or a relative humidity [%] over the same phase).
        """
        n = np.asarray(number_density_m3, dtype=float)
        T = np.asarray(temperature_K, dtype=float)
        kind = self.abundance.kind
        if kind == "number_density_m3":
            return n * np.ones_like(T)
        if kind == "partial_pressure_Pa":
            return n * K_B * T
        if kind == "mixing_ratio":
            return n * K_B * T / self.total_pressure_Pa
        return 100.0 * n * K_B * T / np.asarray(saturation_pressure_Pa(T, self.abundance.phase))

    def describe(self) -> str:
        """A short human-readable statement of the abundance."""
        a = self.abundance
        if a.kind == "number_density_m3":
            text = f"[{a.species}] = {a.value * 1e-6:.3g} molecule cm-3"
        elif a.kind == "partial_pressure_Pa":
            text = f"p({a.species}) = {a.value:.3g} Pa"
        elif a.kind == "mixing_ratio":
            text = (f"x({a.species}) = {a.value:.3g} mol/mol at "
                    f"{self.total_pressure_Pa / 1e5:.3g} bar")
        else:
            text = f"RH = {a.value:.3g} % over {a.phase}"
        return f"{self.label}: {text}" if self.label else text


@dataclass(frozen=True)
class AssistedRoute:
    """An assisted channel of a comparison.

    channel: channel name.
    catalyst_count: catalyst molecules in the transition state (1 or 2; 2 for the dimer).
    via_dimer: whether the channel's reactants hold the catalyst dimer (S + X2).
    """

    channel: str
    catalyst_count: int
    via_dimer: bool = False

    @property
    def kind(self) -> str:
        if self.via_dimer:
            return "dimer"
        return "one_catalyst" if self.catalyst_count == 1 else "two_catalysts"


@dataclass(frozen=True)
class Comparison:
    """A validated ``[[comparison]]``: a bare channel against catalysed ones.

    name: label.
    reference: the bare channel's name (unimolecular, reactant = ``substrate``).
    assisted: the assisted channels, in file order.
    substrate: species name of the substrate S.
    catalyst: species name of the catalyst monomer X.
    abundances: one or more catalyst abundances.
    catalyst_dimer: species name of X2 (its abundance from 2 X <=> X2), or None.
    temperature_K: temperatures [K] of this comparison, or None for the study's.
    description: free text.
    """

    name: str
    reference: str
    assisted: tuple[AssistedRoute, ...]
    substrate: str
    catalyst: str
    abundances: tuple[CatalystAbundance, ...]
    catalyst_dimer: str | None = None
    temperature_K: tuple[float, ...] | None = None
    description: str = ""


def classify_route(channel: Channel, substrate: str, catalyst: str,
                   dimer: str | None = None) -> AssistedRoute:
    """The kind of an assisted channel from its reactants, or an InputError.

    Accepted reactants (any order): S + X, S + X + X, or S + X2 when ``dimer`` names X2.
    """
    reac = Counter(channel.reactants)
    if reac[substrate] != 1:
        raise InputError(f"assisted channel {channel.name!r} has reactants "
                         f"{' + '.join(channel.reactants)}; it must contain the substrate "
                         f"{substrate!r} once", hint="reactants must be the substrate plus "
                         "one or two catalyst molecules (or the catalyst dimer)")
    rest = reac - Counter({substrate: 1})
    if dimer is not None and rest == Counter({dimer: 1}):
        return AssistedRoute(channel.name, 2, via_dimer=True)
    if set(rest) == {catalyst} and rest[catalyst] in (1, 2):
        return AssistedRoute(channel.name, rest[catalyst])
    allowed = f"{substrate} + {catalyst} or {substrate} + {catalyst} + {catalyst}"
    if dimer is not None:
        allowed += f" or {substrate} + {dimer}"
    raise InputError(f"assisted channel {channel.name!r} has reactants "
                     f"{' + '.join(channel.reactants)}, expected {allowed}")


# ----------------------------------------------------------------------------
# results
# ----------------------------------------------------------------------------

@dataclass(frozen=True)
class ComplexEquilibrium:
    """The equilibrium reactants <=> product (a pre-reactive complex or the catalyst dimer).

    product: species name of the complex (or dimer).
    reactants: species names on the left.
    temperature_K: (T,) [K].
    ln_Kc: (T,) ln Kc with Kc = [product] / prod [reactants] in (m^3)^(n-1) (n reactants,
        number densities in m^-3).
    ln_Kp: (T,) ln Kp with pressures in bar (1 bar standard state), Kp in bar^-(n-1).
    delta_n: change in the number of molecules (1 - n).
    delta_E0_J_per_mol: ZPE-corrected energy of the product minus the reactants [J/mol].
    """

    product: str
    reactants: tuple[str, ...]
    temperature_K: np.ndarray
    ln_Kc: np.ndarray
    ln_Kp: np.ndarray
    delta_n: int
    delta_E0_J_per_mol: float

    @property
    def delta_G_standard_J_per_mol(self) -> np.ndarray:
        """Standard Gibbs energy of formation from the reactants, -RT ln Kp (1 bar) [J/mol]."""
        return -R * self.temperature_K * self.ln_Kp


def complex_equilibrium(reactants: Iterable[str], product: str, species: Mapping[str, Species],
                        temperature_K, *, low_modes: LowModes = HARMONIC) -> ComplexEquilibrium:
    """Kc and Kp of reactants <=> product from the species' partition functions."""
    T = np.atleast_1d(np.asarray(temperature_K, dtype=float))
    reac = [species[n] for n in reactants]
    prod = species[product]
    ln_kc = ln_equilibrium_constant(reac, [prod], T, low_modes)
    dn = 1 - len(reac)
    d_e0 = zpe_level_J_per_mol(prod) - sum(zpe_level_J_per_mol(s) for s in reac)
    return ComplexEquilibrium(product=product, reactants=tuple(reactants), temperature_K=T,
                              ln_Kc=ln_kc, ln_Kp=kp_from_kc(ln_kc, dn, T), delta_n=dn,
                              delta_E0_J_per_mol=float(d_e0))


@dataclass(frozen=True)
class TemperatureRange:
    """A temperature interval [K] in which an assisted route is faster than the bare one.

    low_K, high_K: ends; an end where the ratio crosses 1 between two grid points is found by
        linear interpolation of ln(ratio) in 1/T.
    low_at_grid_edge, high_at_grid_edge: True when that end is the end of the temperature grid
        (the route may stay faster beyond it).
    """

    low_K: float
    high_K: float
    low_at_grid_edge: bool
    high_at_grid_edge: bool


def faster_temperature_ranges(temperature_K, ln_ratio) -> tuple[TemperatureRange, ...]:
    """Temperature intervals where ``ln_ratio`` > 0, ends refined by interpolation in 1/T.

    Parameters: temperature_K, (T,) grid [K] (any order, no duplicates); ln_ratio, (T,) the log
    of the ratio of an assisted route to the bare one. Returns the intervals in ascending T.
    """
    T = np.asarray(temperature_K, dtype=float).ravel()
    y = np.asarray(ln_ratio, dtype=float).ravel()
    if T.shape != y.shape:
        raise ValueError("temperature and ratio arrays differ in length")
    order = np.argsort(T)
    T, y = T[order], y[order]
    pos = y > 0
    out: list[TemperatureRange] = []

    def crossing(i: int, j: int) -> float:
        """Zero of ln ratio between grid points i and j, linear in 1/T."""
        yi, yj = y[i], y[j]
        if not (np.isfinite(yi) and np.isfinite(yj)):
            return float(T[i] if np.isfinite(yi) else T[j])
        xi, xj = 1.0 / T[i], 1.0 / T[j]
        x = xi + (0.0 - yi) * (xj - xi) / (yj - yi)
        return float(1.0 / x)

    i = 0
    n = len(T)
    while i < n:
        if not pos[i]:
            i += 1
            continue
        j = i
        while j + 1 < n and pos[j + 1]:
            j += 1
        low = float(T[0]) if i == 0 else crossing(i - 1, i)
        high = float(T[-1]) if j == n - 1 else crossing(j, j + 1)
        out.append(TemperatureRange(low, high, i == 0, j == n - 1))
        i = j + 1
    return tuple(out)


@dataclass(frozen=True)
class RouteResult:
    """One route of a comparison on the temperature grid, for each abundance.

    channel, kind (one of ROUTE_KINDS), catalyst_power m (k' = A [X]^m), order (reactants).
    rates: the channel's TST results (SI per molecule).
    ln_prefactor_SI: (T,) ln A, A in s^-1 (m^3)^m, including K_d for the dimer route.
    complex: the channel's pre-reactive complex, or None.
    complex_equilibrium: reactants <=> complex, or None.
    k_unimolecular_from_complex_per_s: (T,) TST rate constant of complex -> products with the
        channel's tunnelling factor and path degeneracy [s^-1], or None.
    complex_per_free_substrate: (A, T) [C]/[S] at each abundance, or None.
    pseudo_first_order_per_s: (A, T) loss rate of the free substrate by this route [s^-1].
    ln_ratio_to_bare: (A, T) ln(k'_route / k'_bare) (zero for the bare route).
    crossover_catalyst_m3: (T,) catalyst number density [m^-3] at which this route equals the
        bare one (NaN for the bare route).
    faster_ranges: per abundance, the temperature ranges where this route beats the bare one.
    """

    channel: str
    kind: str
    catalyst_power: int
    order: int
    rates: ChannelRates
    ln_prefactor_SI: np.ndarray
    complex: str | None
    complex_equilibrium: ComplexEquilibrium | None
    k_unimolecular_from_complex_per_s: np.ndarray | None
    complex_per_free_substrate: np.ndarray | None
    pseudo_first_order_per_s: np.ndarray
    ln_ratio_to_bare: np.ndarray
    crossover_catalyst_m3: np.ndarray
    faster_ranges: tuple[tuple[TemperatureRange, ...], ...]

    @property
    def ratio_to_bare(self) -> np.ndarray:
        """(A, T) k'_route / k'_bare."""
        return np.exp(self.ln_ratio_to_bare)

    def pseudo_first_order_at(self, catalyst_m3) -> np.ndarray:
        """k' [s^-1] at catalyst number densities [m^-3] (broadcast against the T grid)."""
        n = np.asarray(catalyst_m3, dtype=float)
        if self.catalyst_power == 0:
            return np.exp(self.ln_prefactor_SI) * np.ones_like(n)
        with np.errstate(divide="ignore"):
            return np.exp(self.ln_prefactor_SI + self.catalyst_power * np.log(n))


@dataclass(frozen=True)
class BarrierRow:
    """Barriers of one route [J/mol] and activation Gibbs energies on the T grid.

    classical_*: electronic energies only; zpe_*: zero-point corrected.
    *_from_reactants: TS above the separated reactants (catalysts included).
    *_from_complex: TS above the pre-reactive complex (None without one).
    delta_G_activation_J_per_mol: (T,) from the separated reactants, 1 bar standard state.
    delta_G_activation_from_complex_J_per_mol: (T,) of complex -> TS (unimolecular, no standard
        state needed), or None.
    complex_binding_zpe_J_per_mol: complex minus separated reactants, ZPE-corrected, or None.
    reaction_energy_zpe_J_per_mol: products minus reactants, ZPE-corrected.
    """

    channel: str
    kind: str
    classical_from_reactants_J_per_mol: float
    zpe_from_reactants_J_per_mol: float
    classical_from_complex_J_per_mol: float | None
    zpe_from_complex_J_per_mol: float | None
    delta_G_activation_J_per_mol: np.ndarray
    delta_G_activation_from_complex_J_per_mol: np.ndarray | None
    complex_binding_zpe_J_per_mol: float | None
    reaction_energy_zpe_J_per_mol: float


@dataclass(frozen=True)
class ProfileLevel:
    """A stationary point on an energy profile.

    role: "reactants", "complex", "ts" or "products".
    label: species names (joined with " + ").
    energy_J_per_mol: ZPE-corrected energy [J/mol] relative to the profile's zero (by default the
        route's separated reactants; in a comparison, the substrate with its catalyst monomers at
        infinity).
    """

    role: str
    label: str
    energy_J_per_mol: float


@dataclass(frozen=True)
class RouteProfile:
    """The stationary points of one route, in order along the path."""

    channel: str
    kind: str
    levels: tuple[ProfileLevel, ...]


def route_profile(channel: Channel, species: Mapping[str, Species], kind: str = "",
                  zero_J_per_mol: float | None = None) -> RouteProfile:
    """ZPE-corrected energies of reactants, complex, TS and products along one route [J/mol].

    ``zero_J_per_mol`` is the ZPE-corrected energy taken as zero; default the channel's separated
    reactants. :func:`compare_routes` uses the substrate plus the route's catalyst *monomers* at
    infinity, so that every route of a comparison shares one zero (a dimer route then starts at
    the dimer's binding energy).
    """
    e0_r = sum(zpe_level_J_per_mol(species[n]) for n in channel.reactants)
    if zero_J_per_mol is None:
        zero_J_per_mol = e0_r
    levels = [ProfileLevel("reactants", " + ".join(channel.reactants), e0_r - zero_J_per_mol)]
    e0_r = zero_J_per_mol
    if channel.complex:
        levels.append(ProfileLevel("complex", channel.complex,
                                   zpe_level_J_per_mol(species[channel.complex]) - e0_r))
    levels.append(ProfileLevel("ts", channel.transition_state,
                               zpe_level_J_per_mol(species[channel.transition_state]) - e0_r))
    e0_p = sum(zpe_level_J_per_mol(species[n]) for n in channel.products)
    levels.append(ProfileLevel("products", " + ".join(channel.products), e0_p - e0_r))
    return RouteProfile(channel.name, kind, tuple(levels))


@dataclass(frozen=True)
class ComparisonResult:
    """Everything computed for one comparison.

    comparison: the input.
    temperature_K: (T,) [K].
    catalyst_m3: (A, T) catalyst monomer number density [m^-3] per abundance and T.
    dimer_equilibrium: 2 X <=> X2, or None without a dimer.
    dimer_m3: (A, T) dimer number density [m^-3], or None.
    routes: the bare route first, then the assisted ones in file order.
    free_substrate_fraction: (A, T) fraction of the substrate not held in the complexes.
    barriers: one row per route, same order.
    profiles: one energy profile per route, same order, all relative to the substrate plus the
        catalyst monomers at infinity.
    warnings: plain sentences for the user (e.g. a water abundance above saturation).
    """

    comparison: Comparison
    temperature_K: np.ndarray
    catalyst_m3: np.ndarray
    dimer_equilibrium: ComplexEquilibrium | None
    dimer_m3: np.ndarray | None
    routes: tuple[RouteResult, ...]
    free_substrate_fraction: np.ndarray
    barriers: tuple[BarrierRow, ...]
    profiles: tuple[RouteProfile, ...] = field(default=())
    warnings: tuple[str, ...] = ()

    @property
    def bare(self) -> RouteResult:
        return self.routes[0]

    @property
    def assisted(self) -> tuple[RouteResult, ...]:
        return self.routes[1:]

    def route(self, channel: str) -> RouteResult:
        for r in self.routes:
            if r.channel == channel:
                return r
        raise KeyError(channel)

    def crossover_in_given_unit(self, route: RouteResult, index: int = 0) -> np.ndarray:
        """(T,) the crossover abundance of ``route`` in the unit of abundance ``index``."""
        return self.comparison.abundances[index].from_number_density_m3(route.crossover_catalyst_m3,
                                                                         self.temperature_K)


# ----------------------------------------------------------------------------
# the computation
# ----------------------------------------------------------------------------

def k_unimolecular_from_complex(rates: ChannelRates, channel: Channel, species: Mapping[str, Species],
                                temperature_K, *, low_modes: LowModes = HARMONIC,
                                tunnelling: bool = True) -> np.ndarray:
    """TST rate constant [s^-1] of the complex -> TS step of a channel with a complex.

    k_uni = kappa L (k_B T/h) (q_TS / q_C) exp(-(E0_TS - E0_C) / RT), with the channel's own
    tunnelling factor kappa (omitted with ``tunnelling=False``) and path-degeneracy factor L,
    so that K_C k_uni equals the channel's rate constant from the separated reactants.
    """
    T = np.atleast_1d(np.asarray(temperature_K, dtype=float))
    ts = species[channel.transition_state]
    cx = species[channel.complex]
    ln_k = (ln_eyring_factor(T)
            + ln_partition_function_per_volume(ts, T, low_modes=low_modes)
            - ln_partition_function_per_volume(cx, T, low_modes=low_modes)
            - (zpe_level_J_per_mol(ts) - zpe_level_J_per_mol(cx)) / (R * T)
            + np.log(rates.degeneracy / rates.symmetry_degeneracy))
    if tunnelling:
        ln_k = ln_k + np.log(rates.kappa)
    return np.exp(ln_k)


def _channels_by_name(channels) -> dict[str, Channel]:
    if isinstance(channels, Mapping):
        return dict(channels)
    return {c.name: c for c in channels}


def _check_reference(ch: Channel, substrate: str) -> None:
    if tuple(ch.reactants) != (substrate,):
        raise InputError(f"reference channel {ch.name!r} has reactants {' + '.join(ch.reactants)}; "
                         f"the bare route must be the unimolecular reaction of {substrate!r}",
                         field="reference")


def _barrier_row(route: RouteResult, channel: Channel, species, T, low_modes) -> BarrierRow:
    cr = route.rates
    dg_cx = None
    bind = None
    if channel.complex:
        k_cl = k_unimolecular_from_complex(cr, channel, species, T, low_modes=low_modes,
                                           tunnelling=False)
        dg_cx = -R * T * (np.log(k_cl) - ln_eyring_factor(T))
        bind = route.complex_equilibrium.delta_E0_J_per_mol
    return BarrierRow(
        channel=route.channel, kind=route.kind,
        classical_from_reactants_J_per_mol=cr.barrier_classical_J_per_mol,
        zpe_from_reactants_J_per_mol=cr.barrier_zpe_J_per_mol,
        classical_from_complex_J_per_mol=cr.barrier_from_complex_classical_J_per_mol,
        zpe_from_complex_J_per_mol=cr.barrier_from_complex_zpe_J_per_mol,
        delta_G_activation_J_per_mol=cr.delta_G_J_per_mol,
        delta_G_activation_from_complex_J_per_mol=dg_cx,
        complex_binding_zpe_J_per_mol=bind,
        reaction_energy_zpe_J_per_mol=cr.reaction_energy_zpe_J_per_mol,
    )


def compare_routes(comparison: Comparison, species: Mapping[str, Species], channels,
                   temperature_K=None, *, low_modes: LowModes = HARMONIC) -> ComparisonResult:
    """Compare the bare and assisted routes of ``comparison`` on a temperature grid.

    Parameters
    ----------
    comparison: the validated comparison.
    species: name -> Species (all species the channels name).
    channels: the study's channels (a sequence or a name -> Channel mapping).
    temperature_K: temperatures [K]; default the comparison's own ``temperature_K``.
    low_modes: treatment of low real modes in every partition function.
    """
    chans = _channels_by_name(channels)
    if temperature_K is None:
        if comparison.temperature_K is None:
            raise InputError(f"comparison {comparison.name!r} has no temperatures",
                             field="temperature_K")
        temperature_K = comparison.temperature_K
    T = temperatures_K(temperature_K, ndim=1)
    for name in [comparison.reference] + [a.channel for a in comparison.assisted]:
        if name not in chans:
            raise InputError(f"unknown channel {name!r}", field="comparison")
    _check_reference(chans[comparison.reference], comparison.substrate)

    n_cat = np.array([a.number_density_m3(T) for a in comparison.abundances])  # (A, T)
    with np.errstate(divide="ignore"):
        ln_cat = np.log(n_cat)
    dimer_eq = None
    n_dim = None
    if comparison.catalyst_dimer:
        dimer_eq = complex_equilibrium([comparison.catalyst, comparison.catalyst],
                                       comparison.catalyst_dimer, species, T, low_modes=low_modes)
        n_dim = np.exp(dimer_eq.ln_Kc) * n_cat**2

    def one_route(ch: Channel, kind: str, power: int, via_dimer: bool) -> dict:
        cr = channel_rates(ch, species, T, low_modes=low_modes)
        ln_a = np.log(cr.k)
        if via_dimer:
            if dimer_eq is None:
                raise InputError(f"channel {ch.name!r} uses the catalyst dimer but the comparison "
                                 "names no catalyst_dimer", field="catalyst_dimer")
            ln_a = ln_a + dimer_eq.ln_Kc
        ceq = k_uni = per_free = None
        if ch.complex:
            ceq = complex_equilibrium(ch.reactants, ch.complex, species, T, low_modes=low_modes)
            k_uni = k_unimolecular_from_complex(cr, ch, species, T, low_modes=low_modes)
            # [C]/[S] = K_C prod [other reactants]; the dimer enters as K_d [X]^2
            ln_other = power * ln_cat + (dimer_eq.ln_Kc if via_dimer else 0.0)
            with np.errstate(over="ignore"):
                per_free = np.exp(ceq.ln_Kc + ln_other)
        with np.errstate(invalid="ignore"):
            ln_k1 = ln_a[None, :] + (power * ln_cat if power else 0.0)
        return dict(channel=ch.name, kind=kind, catalyst_power=power, order=cr.order, rates=cr,
                    ln_prefactor_SI=ln_a, complex=ch.complex, complex_equilibrium=ceq,
                    k_unimolecular_from_complex_per_s=k_uni, complex_per_free_substrate=per_free,
                    ln_k1=np.broadcast_to(ln_k1, n_cat.shape))

    raw = [one_route(chans[comparison.reference], "bare", 0, False)]
    for a in comparison.assisted:
        raw.append(one_route(chans[a.channel], a.kind, a.catalyst_count, a.via_dimer))

    ln_bare = raw[0]["ln_k1"]
    routes = []
    for r in raw:
        ln_k1 = r.pop("ln_k1")
        with np.errstate(invalid="ignore"):
            ln_ratio = ln_k1 - ln_bare
        if r["catalyst_power"]:
            crossover = np.exp((raw[0]["ln_prefactor_SI"] - r["ln_prefactor_SI"]) / r["catalyst_power"])
            ranges = tuple(faster_temperature_ranges(T, lr) for lr in ln_ratio)
        else:
            crossover = np.full_like(T, np.nan)
            ranges = tuple(() for _ in comparison.abundances)
        routes.append(RouteResult(**r, pseudo_first_order_per_s=np.exp(ln_k1),
                                  ln_ratio_to_bare=ln_ratio, crossover_catalyst_m3=crossover,
                                  faster_ranges=ranges))

    # free substrate: distinct complexes, each counted once
    bound = np.zeros_like(n_cat)
    seen = set()
    for r in routes:
        if r.complex and r.complex not in seen and r.complex_per_free_substrate is not None:
            seen.add(r.complex)
            bound = bound + r.complex_per_free_substrate
    free = 1.0 / (1.0 + bound)

    barriers = tuple(_barrier_row(r, chans[r.channel], species, T, low_modes) for r in routes)
    zero_s = zpe_level_J_per_mol(species[comparison.substrate])
    zero_x = zpe_level_J_per_mol(species[comparison.catalyst])
    profiles = tuple(route_profile(chans[r.channel], species, r.kind,
                                   zero_J_per_mol=zero_s + r.catalyst_power * zero_x) for r in routes)
    for r in routes:
        if r.complex_per_free_substrate is not None and np.nanmax(r.complex_per_free_substrate) > 0.1:
            log.info("comparison %s: complex %s holds up to %.3g substrate per free substrate; "
                     "rates here are per free substrate", comparison.name, r.complex,
                     float(np.nanmax(r.complex_per_free_substrate)))
    warnings = ()
    if species[comparison.catalyst].formula == "H2O":
        warnings = supersaturation_warnings(comparison, n_cat, T)
    return ComparisonResult(comparison=comparison, temperature_K=T, catalyst_m3=n_cat,
                            dimer_equilibrium=dimer_eq, dimer_m3=n_dim, routes=tuple(routes),
                            free_substrate_fraction=free, barriers=barriers, profiles=profiles,
                            warnings=warnings)


#: below this temperature [K] ice is the stable condensed phase of water (its normal melting point)
ICE_MELTING_K = 273.15
#: a water abundance more than this factor above saturation is said in a warning (1 % above: not
#: round-off of a relative humidity of 100 %)
SUPERSATURATION_WARN_RATIO = 1.01


def supersaturation_warnings(comparison: Comparison, water_m3, temperature_K) -> tuple[str, ...]:
    """Sentences for each abundance of water that exceeds saturation over ice (below 273.15 K,
    where ice is the stable phase) or over liquid water (Murphy and Koop 2005) at some temperature.

    water_m3: (A, T) water number densities [m^-3]; temperature_K: (T,) [K]. Such air would
    condense (or deposit ice) until it is saturated, so the assumed water abundance cannot last;
    a relative humidity given over liquid water below 0 C is supersaturated over ice as well.
    """
    from tstrate.physics.humidity import number_density_from_partial_pressure

    T = np.asarray(temperature_K, dtype=float)
    out = []
    cold = T < ICE_MELTING_K
    p_sat = np.empty_like(T)
    if np.any(cold):
        p_sat[cold] = saturation_pressure_Pa(T[cold], "ice")
    if np.any(~cold):
        p_sat[~cold] = saturation_pressure_Pa(T[~cold], "liquid")
    n_sat = number_density_from_partial_pressure(p_sat, T)
    for abundance, n in zip(comparison.abundances, np.atleast_2d(water_m3)):
        ratio = np.asarray(n, dtype=float) / n_sat
        bad = ratio > SUPERSATURATION_WARN_RATIO
        if not np.any(bad):
            continue
        worst = int(np.nanargmax(np.where(bad, ratio, -np.inf)))
        phase = "ice" if cold[worst] else "liquid water"
        out.append(f"comparison {comparison.name!r}: {abundance.describe()} is above saturation at "
                   f"{int(np.sum(bad))} of {T.size} temperatures, up to {ratio[worst]:.3g} times the "
                   f"saturation vapour pressure over {phase} at {T[worst]:g} K (Murphy and Koop 2005); "
                   "such air would condense or deposit ice, so this water abundance cannot persist there")
    return tuple(out)


__all__ = ["ROUTE_KINDS", "ABUNDANCE_UNITS", "CatalystAbundance", "AssistedRoute", "Comparison",
           "classify_route", "ComplexEquilibrium", "complex_equilibrium", "TemperatureRange",
           "faster_temperature_ranges", "RouteResult", "BarrierRow", "ProfileLevel", "RouteProfile",
           "route_profile", "ComparisonResult", "k_unimolecular_from_complex", "compare_routes",
           "supersaturation_warnings"]
