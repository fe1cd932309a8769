"""A unimolecular channel's RRKM k(E) from its species, and its falloff k(T, [M]) on a grid.

This module joins the pure functions of :mod:`tstrate.physics.states`,
:mod:`~tstrate.physics.rrkm`, :mod:`~tstrate.physics.falloff` and
:mod:`~tstrate.physics.collisions` to a channel's species and falloff settings
(:mod:`tstrate.study.falloff` walks a study's channels, bath gas and pressures). For every
channel with one reactant (order 1) it builds

* the reactant's density of states and the transition state's sum of states
  (scaled harmonic wavenumbers, electronic levels, the active K-rotor and any declared
  free internal rotors, each a classical 1-D rotor with its symmetry number in place of
  the mode it replaces) on one grain, counted from each species' zero-point level
  (Beyer-Swinehart);
* E0, the zero-point-corrected barrier (:func:`tstrate.physics.tst.zpe_level_J_per_mol`);
* k(E) = L * (I_TS/I_R) * N_TS(E - E0) / (h rho_R(E)) (RRKM; Marcus 1952), with an
  Eckart-corrected sum of states when the channel's tunnelling is "eckart";
* k(T, [M]) in the strong-collision picture scaled by beta_c (Troe 1977) and its
  limits k_inf(T) and k_0(T) (the study step fits Troe's form to them:
  :mod:`tstrate.study.falloff`, :mod:`tstrate.expressions.troe`).

Reaction-path degeneracy and external symmetry
----------------------------------------------
Canonical TST (:mod:`tstrate.physics.tst`) keeps the path degeneracy inside the
rotational partition functions: q_rot carries 1/sigma and q the number of
optical isomers n, so k_TST = (k_B T/h) (q_TS/q_R) exp(-E0/RT) already contains
L_sym = sigma_R n_TS / (sigma_TS n_R) (or the channel's ``degeneracy`` when it
overrides that count). Here the K-rotors are counted with symmetry number 1 and
the whole degeneracy goes into k(E) as the path degeneracy L = L_sym (or the
override). Both routes put the same factor in front, so k_inf = sum_E f(E) k(E)
reproduces k_TST up to the grain error.

Overall rotation ("lite", :class:`~tstrate.physics.rrkm.ExternalRotation`)
-------------------------------------------------------------------------
With rotational constants A >= B >= C of the reactant, Ray's asymmetry
kappa = (2B - A - C)/(A - C) picks the unique axis: A (near-prolate, kappa <= 0)
or C (near-oblate). The 2-D rotor about the other two axes is adiabatic and
enters as I_TS/I_R = B2d_R / B2d_TS with B2d = sqrt(B C) (or sqrt(A B)); the
transition state uses the same axis labels. The active K-rotor gets the constant
of the unique axis itself (A or C), not A - B2d: in a classical rigid rotor the
K energy at fixed J is (A - B)K^2, and the sum over J >= |K| adds exp(-B K^2/kT),
so the thermal K distribution is that of a free 1-D rotor with constant A. With
that choice the product of the classical 1-D and 2-D partition functions,
sqrt(pi kT/A) * kT/sqrt(BC), is exactly the rigid-rotor partition function
sqrt(pi) (kT)^(3/2)/sqrt(ABC) of canonical TST, which k_inf must reproduce. A
linear species has the 2-D rotor only.

Grain
-----
The requested grain (``grain_cm1``) is refined to a third of the lowest real
wavenumber of reactant and transition state when it is coarser (with a warning
in the results), and then lowered slightly so that E0 is a whole number of
grains: the barrier is then not rounded, and what is left of the grain error is
the rounding of each wavenumber to the grain and the second-order term
(grain/kT)^2/12 of the grain-averaged sum of states.

Units: energies J/mol, temperatures K, pressures Pa, number densities m^-3, k(T,[M]) and
k_inf s^-1, k_0 m^3 s^-1 (per molecule), wavenumbers and grains cm^-1.
"""

from __future__ import annotations

import logging
import math
from dataclasses import dataclass, field
from typing import Mapping

import numpy as np

from tstrate.arrays import temperatures_K
from tstrate.errors import InputError
from tstrate.model import Channel, Species
from tstrate.model.settings import FalloffSettings
from tstrate.physics import collisions as coll
from tstrate.physics.falloff import strong_collision_falloff, thermal_distribution
from tstrate.physics.rotors import rotor_model
from tstrate.physics.rrkm import ExternalRotation, MicrocanonicalRate, microcanonical_rate
from tstrate.physics.states import (CM1_J_PER_MOL, GRAIN_FRACTION_OF_LOWEST, Rotor, StateCounts,
                                    count_states)
from tstrate.units import C, H, K_B, R
from tstrate.units import number_density_m3 as ideal_gas_number_density_m3

log = logging.getLogger(__name__)

#: above this fraction of reactant grains without a state (above the barrier, over the thermal
#: range) the 2-D external rotor is counted as active (common practice for small molecules)
SPARSE_GRAIN_FRACTION = 0.01

#: The energy grid reaches at least this far above the barrier [cm^-1] ...
MIN_SPAN_CM1 = 20000.0
#: ... and at least this many k_B T (highest temperature) above it.
SPAN_IN_KT = 80.0


# ---------------------------------------------------------------- rotors
def rotational_constants_cm1(species: Species) -> np.ndarray:
    """Rotational constants [cm^-1], descending (A >= B >= C; one value for a linear species)."""
    moments = np.sort(np.asarray(species.moments_of_inertia_kg_m2(), dtype=float))
    if species.linear:
        moments = moments[-1:]
    if np.any(moments <= 0):
        raise InputError(f"species {species.name!r} has a zero moment of inertia", file=species.source,
                         field="geometry")
    return H / (8.0 * math.pi**2 * C * moments) / 100.0


def free_rotor_states(species: Species) -> tuple:
    """The species' declared internal rotors for state counts: free rotors as classical 1-D
    :class:`Rotor` s, hindered rotors by their exact levels (each 1/sigma, from its ground level)."""
    return tuple(Rotor.from_moment_of_inertia(r.reduced_moment_amu_A2, r.symmetry_number, 1, False)
                 for r in species.free_rotors) + tuple(rotor_model(r) for r in species.hindered_rotors)


@dataclass(frozen=True)
class RotorSplit:
    """One species' overall rotation split into the adiabatic 2-D rotor and the active K-rotor [cm^-1]."""

    B2d_cm1: float
    K_cm1: float | None      # None for a linear species
    axis: str                # "A", "C" or "linear"


def split_rotation(species: Species, axis: str | None = None) -> RotorSplit:
    """2-D and K-rotor constants of ``species``; ``axis`` "A" or "C" forces the unique axis."""
    abc = rotational_constants_cm1(species)
    if abc.size == 1:
        return RotorSplit(float(abc[0]), None, "linear")
    a, b, c = abc
    if axis is None:
        kappa = (2 * b - a - c) / (a - c) if a > c else -1.0
        axis = "A" if kappa <= 0 else "C"
    if axis == "A":
        return RotorSplit(float(math.sqrt(b * c)), float(a), "A")
    return RotorSplit(float(math.sqrt(a * b)), float(c), "C")


# ---------------------------------------------------------------- k(E) of a channel
@dataclass(frozen=True)
class UnimolecularModel:
    """k(E) of one unimolecular channel and how it was built.

    rate: k(E) on the reactant's grid (energies J/mol from the reactant's zero-point level).
    grain_cm1: grain used [cm^-1]. barrier_J_per_mol: E0 [J/mol] (a whole number of grains).
    path_degeneracy: L in k(E). reactant_rotors, ts_rotors: the :class:`RotorSplit` used.
    external: the ExternalRotation passed to RRKM (None when one species is linear).
    tunnelling: "eckart" (Eckart-corrected N_TS) or "none" as used in k(E).
    imaginary_frequency_cm1, eckart_V1_J_per_mol, eckart_V2_J_per_mol: Eckart inputs.
    warnings: plain sentences for the user.
    grain_note: why the grain was refined (None when the requested one was used); the study
        step says it with the file and key of the grain.
    external_rotation: "adiabatic" (the 2-D rotor enters k(E) as I_TS/I_R) or "active" (counted
        in the densities of reactant and TS, for reactants too sparse in states; see
        :data:`SPARSE_GRAIN_FRACTION`).
    """

    channel: Channel
    reactant: Species
    transition_state: Species
    rate: MicrocanonicalRate
    grain_cm1: float
    requested_grain_cm1: float
    barrier_J_per_mol: float
    path_degeneracy: float
    reactant_rotors: RotorSplit
    ts_rotors: RotorSplit
    external: ExternalRotation | None
    tunnelling: str
    imaginary_frequency_cm1: float
    eckart_V1_J_per_mol: float | None
    eckart_V2_J_per_mol: float | None
    warnings: tuple[str, ...] = ()
    grain_note: str | None = None
    external_rotation: str = "adiabatic"


def _counts(species: Species, freqs: np.ndarray, e_max: float, grain_cm1: float,
            rotors: tuple[Rotor, ...]) -> StateCounts:
    """Vibrational, rotor and electronic-level counts of ``species`` on the grain (the levels as
    shifted copies in the starting array of the Beyer-Swinehart pass)."""
    levels = [(level.energy_cm1 * CM1_J_PER_MOL, level.degeneracy) for level in species.levels]
    return count_states(freqs, e_max, grain_cm1=grain_cm1, rotors=rotors, levels=levels, refine=False)


def _ensemble_counts(reac: Species, freqs: np.ndarray, e_max: float, grain_cm1: float,
                     rotors: tuple[Rotor, ...]) -> StateCounts:
    """State counts of a reactant or transition state; for a conformer ensemble the sum of its
    conformers' counts, each shifted up by its E0_i - E0_ref (split between the two nearest grains) and weighted by its optical isomers over its
    symmetry number relative to the representative's (whose symmetry enters the path degeneracy):

        rho_ens(E) = sum_i (n_i / sigma_i) / (n_ref / sigma_ref) rho_i(E - (E0_i - E0_ref)).

    Each conformer counts its own harmonic modes, free rotors and electronic levels; the external
    rotation (K-rotor, and the 2-D rotor when it is active) is the representative's for all.
    Its Boltzmann sum is the ensemble partition function of canonical TST, so k_inf from k(E)
    follows the ensemble's TST rate (for a TS ensemble without tunnelling; with Eckart tunnelling
    every TS conformer's states get the representative's transmission)."""
    sc = _counts(reac, freqs, e_max, grain_cm1, rotors)
    if not reac.conformers:
        return sc
    from tstrate.physics.ensembles import conformer_members, relative_zpe_levels_J_per_mol

    own = free_rotor_states(reac)
    external = tuple(r for r in rotors if r not in own)  # the rotors of the overall rotation
    total = np.array(sc.counts)
    g = sc.grain_J_per_mol
    ref_weight = reac.optical_isomers / reac.symmetry_number
    for m, d in zip(conformer_members(reac)[1:], relative_zpe_levels_J_per_mol(reac)[1:]):
        # the shift E0_i - E0_ref split between the two grains around it (linear in the fraction), so
        # that the weight is kept and the Boltzmann factor errs at second order in grain / kT only
        if d < 0:
            raise ValueError(f"conformer {m.name!r} lies {-d:.6g} J/mol below the representative of "
                             f"{reac.name!r}; the representative must be the lowest conformer")
        low = int(math.floor(d / g))
        frac = d / g - low
        if low >= total.size:
            continue
        c = _counts(m, m.harmonic_frequencies_cm1, e_max - low * g, grain_cm1, external + free_rotor_states(m))
        w = (m.optical_isomers / m.symmetry_number) / ref_weight * c.counts
        for shift, part in ((low, 1.0 - frac), (low + 1, frac)):
            n = min(total.size - shift, w.size)
            if n > 0 and part > 0:
                total[shift:shift + n] += part * w[:n]
    return StateCounts(g, total)


def unimolecular_model(channel: Channel, species: Mapping[str, Species], settings: FalloffSettings, *,
                       max_temperature_K: float, min_top_energy_J_per_mol: float = 0.0) -> UnimolecularModel:
    """Build k(E) for a channel with one reactant (see the module docstring for every choice).

    ``max_temperature_K`` sets the automatic grid length; ``min_top_energy_J_per_mol`` makes
    the grid reach at least that energy above the reactant's zero-point level (excitations).
    """
    from tstrate.physics.tst import symmetry_degeneracy, zpe_level_J_per_mol
    from tstrate.physics.tunnelling import eckart_transmission

    if channel.order != 1:
        raise InputError(f"channel {channel.name!r} has {channel.order} reactants; falloff is computed for "
                         "unimolecular channels only", field="reactants")
    reac = species[channel.reactants[0]]
    ts = species[channel.transition_state]
    warnings: list[str] = []
    if len(ts.imaginary_frequencies_cm1) != 1:
        raise InputError(f"transition state {ts.name!r} has {len(ts.imaginary_frequencies_cm1)} imaginary "
                         "frequencies; exactly one is needed", file=ts.source, field="frequencies_cm1")
    if ts.conformers and channel.tunnelling == "eckart":
        warnings.append(f"channel {channel.name!r}: k(E) sums the states of every conformer of the transition "
                        f"state {ts.name!r} but gives them all the Eckart transmission of its representative "
                        f"{ts.conformer_label!r} (canonical TST gives each conformer its own)")
    if channel.complex:
        warnings.append(f"channel {channel.name!r}: the complex {channel.complex!r} is not used by the falloff "
                        f"treatment; the energised molecule is the reactant {reac.name!r}")
    e0 = zpe_level_J_per_mol(ts) - zpe_level_J_per_mol(reac)
    if not e0 > 0:
        raise InputError(f"channel {channel.name!r}: the ZPE-corrected barrier is {e0 / 1e3:.2f} kJ/mol; "
                         "falloff needs a barrier above the reactant", field="transition_state",
                         hint="barrierless and submerged barriers are not treated")

    # grain: refine for the softest mode, then make E0 a whole number of grains
    rf, tf = reac.harmonic_frequencies_cm1, ts.harmonic_frequencies_cm1
    lowest = float(np.min(np.concatenate([rf, tf]))) if rf.size + tf.size else math.inf
    grain = settings.grain_cm1
    grain_note = None
    limit = GRAIN_FRACTION_OF_LOWEST * lowest
    if grain > limit * (1 + 1e-12):
        grain_note = (f"grain {grain:g} cm-1 is coarser than a third of the lowest wavenumber of "
                      f"{reac.name}/{ts.name} ({lowest:.4g} cm-1); refined to {limit:.4g} cm-1")
        grain = limit
    e0_cm1 = e0 / CM1_J_PER_MOL
    grain = e0_cm1 / math.ceil(e0_cm1 / grain - 1e-9)

    if settings.energy_above_barrier_cm1 is not None:
        span_cm1 = settings.energy_above_barrier_cm1
    else:
        span_cm1 = max(MIN_SPAN_CM1, SPAN_IN_KT * K_B * max_temperature_K / (H * C * 100.0))
    e_top = max(e0 + span_cm1 * CM1_J_PER_MOL, min_top_energy_J_per_mol + 50 * grain * CM1_J_PER_MOL)

    # overall rotation
    r_rot = split_rotation(reac)
    t_rot = split_rotation(ts, None if r_rot.axis == "linear" else r_rot.axis)
    r_extra: tuple[Rotor, ...] = ()
    t_extra: tuple[Rotor, ...] = ()
    if r_rot.K_cm1 is not None and t_rot.K_cm1 is not None:
        external = ExternalRotation(r_rot.B2d_cm1, t_rot.B2d_cm1, r_rot.K_cm1, t_rot.K_cm1, symmetry_number=1)
        r_extra, t_extra = external.k_rotors()
    else:
        external = ExternalRotation(r_rot.B2d_cm1, t_rot.B2d_cm1)
        if r_rot.K_cm1 is not None:
            r_extra = (Rotor(r_rot.K_cm1, 1, 1, False),)
        if t_rot.K_cm1 is not None:
            t_extra = (Rotor(t_rot.K_cm1, 1, 1, False),)

    # declared free internal rotors: classical 1-D rotors with their own symmetry numbers (the
    # modes they replace are not in rf, tf), as in the partition functions of canonical TST
    both_k_rotors = bool(r_extra and t_extra)
    r_extra = r_extra + free_rotor_states(reac)
    t_extra = t_extra + free_rotor_states(ts)

    degeneracy = (symmetry_degeneracy([reac], ts) if channel.degeneracy is None else float(channel.degeneracy))

    transmission = None
    v1 = v2 = None
    if channel.tunnelling == "eckart":
        # as in canonical TST: V1 from the conformer of an ensemble reactant that the TS connects to
        from tstrate.physics.tst import connected_conformer_shift

        v1 = e0 - connected_conformer_shift(ts, reac)[0]
        # the reverse barrier from the product complex when the channel names one, as in canonical TST
        product_side = ([zpe_level_J_per_mol(species[channel.product_complex])] if channel.product_complex
                        else [zpe_level_J_per_mol(species[p]) for p in channel.products])
        v2 = zpe_level_J_per_mol(ts) - sum(product_side)
        if not v2 > 0:
            raise InputError(f"channel {channel.name!r}: reverse ZPE-corrected barrier is {v2 / 1e3:.2f} kJ/mol; "
                             "eckart needs V1 > 0 and V2 > 0", field="tunnelling",
                             hint="use tunnelling = \"none\" for this channel")
        imag = ts.imaginary_frequency_cm1

        def transmission(e_from_top, _v1=v1, _v2=v2, _nu=imag):
            return eckart_transmission(np.asarray(e_from_top) + _v1, _nu, _v1, _v2)
        used = "eckart"
    else:
        used = "none"
        if channel.tunnelling != "none":
            warnings.append(f"channel {channel.name!r}: tunnelling {channel.tunnelling!r} has no microcanonical "
                            "form here; k(E) and the falloff curves are without tunnelling (use \"eckart\")")

    def build(r_rotors, t_rotors, factor):
        r_counts = _ensemble_counts(reac, rf, e_top, grain, r_rotors)
        k_of_e = microcanonical_rate(r_counts, _ensemble_counts(ts, tf, e_top, grain, t_rotors), e0,
                                     path_degeneracy=degeneracy, centrifugal_factor=factor,
                                     transmission=transmission)
        # grains without a reactant state above the barrier, up to where the thermal population ends
        g_j = grain * CM1_J_PER_MOL
        hi = e0 + max(20 * R * max_temperature_K, min_top_energy_J_per_mol - e0 + 1000 * CM1_J_PER_MOL)
        window = r_counts.counts[k_of_e.barrier_index:min(r_counts.n_grains, int(hi / g_j) + 1)]
        return k_of_e, float(np.mean(window <= 0)) if window.size else 0.0

    rate, empty = build(r_extra, t_extra, external.centrifugal_factor)
    rotation = "adiabatic"
    if empty > SPARSE_GRAIN_FRACTION:
        # Too few reactant states per grain (small molecules): k(E) would be zero in the empty grains
        # and k_inf would miss canonical TST by a factor of several. Count the 2-D external rotor as
        # active in reactant and TS instead (its states fill every grain); k_inf then reproduces
        # canonical TST, at the price of not conserving angular momentum in k(E).
        sparse = empty
        rate, empty = build(r_extra + (Rotor(r_rot.B2d_cm1, 1, 2, False),),
                            t_extra + (Rotor(t_rot.B2d_cm1, 1, 2, False),), 1.0)
        rotation = "active"
        warnings.append(f"channel {channel.name!r}: {reac.name} has no vibrational state in {100 * sparse:.0f} % of "
                        "the grains above the barrier; the 2-D external rotor is counted as active in "
                        "reactant and transition state (angular momentum not conserved in k(E)) so that "
                        "k_inf reproduces canonical TST")
    if empty > SPARSE_GRAIN_FRACTION:
        warnings.append(f"channel {channel.name!r}: {reac.name} has no state in {100 * empty:.0f} % of the grains "
                        "above the barrier (too few atoms or no active rotor for this grain); k(E) is zero there "
                        "and the falloff and excitation results are lumpy - compare k_inf with canonical TST")
    for w in warnings:
        log.debug(w)
    return UnimolecularModel(channel, reac, ts, rate, grain, settings.grain_cm1, rate.barrier_J_per_mol,
                             degeneracy, r_rot, t_rot,
                             external if both_k_rotors and rotation == "adiabatic" else None, used,
                             ts.imaginary_frequency_cm1, v1, v2, tuple(warnings), grain_note, rotation)


# ---------------------------------------------------------------- collisions
def reactant_parameters(species: Species) -> coll.LennardJones:
    """Lennard-Jones parameters of a species from its file; InputError naming the file when missing."""
    if species.lennard_jones is None:
        raise InputError(f"species {species.name!r} has no Lennard-Jones parameters, needed for collision "
                         "rates", file=species.source, field="lennard_jones",
                         hint="add lennard_jones = { sigma_A = ..., epsilon_K = ... } to the species file")
    sigma, eps = species.lennard_jones
    return coll.LennardJones(species.name, float(sigma), float(eps), f"species file {species.source}",
                             mass_amu=float(np.sum(species.masses_amu)))


def collision_rate(species: Species, bath: coll.LennardJones, temperature_K,
                   settings: FalloffSettings) -> np.ndarray:
    """Z_LJ(T) [m^3 s^-1] of ``species`` in ``bath``."""
    return np.atleast_1d(coll.pair_collision_rate_m3_s(temperature_K, reactant_parameters(species), bath,
                                                       omega=settings.collision_integral))


def _smoothed_density(model: UnimolecularModel) -> np.ndarray:
    """Reactant density of states averaged over one quantum of its lowest mode (for F_E only)."""
    rho = model.rate.reactant.density_per_J_per_mol
    freqs = model.reactant.harmonic_frequencies_cm1
    width = max(1, int(round((float(freqs.min()) if freqs.size else model.grain_cm1) / model.grain_cm1)))
    if width == 1:
        return rho
    kernel = np.ones(width) / width
    return np.convolve(rho, kernel, mode="same")


@dataclass(frozen=True)
class Efficiency:
    """beta_c(T) and what it came from (arrays over temperature)."""

    beta: np.ndarray
    energy_factor: np.ndarray | None        # F_E (Troe 1977), when <dE> was used
    delta_E_J_per_mol: np.ndarray | None    # <dE>down (> 0) or <dE> (< 0) at each T
    kind: str                               # "efficiency", "down", "all", "strong"


def collision_efficiency(model: UnimolecularModel, settings: FalloffSettings, temperature_K) -> Efficiency:
    """beta_c(T): given, from <dE>down or <dE> by Troe's relation, or 1 (strong collisions)."""
    t = np.atleast_1d(np.asarray(temperature_K, dtype=float))
    kind = settings.energy_transfer
    if kind == "strong":
        return Efficiency(np.ones_like(t), None, None, kind)
    if kind == "efficiency":
        return Efficiency(np.full_like(t, settings.collision_efficiency), None, None, kind)
    fe = coll.energy_dependence_factor(model.rate.energies_J_per_mol, _smoothed_density(model),
                                       model.barrier_J_per_mol, t)
    fe = np.maximum(fe, 1.0)
    de = settings.delta_E_J_per_mol(t)
    beta = np.array([float(coll.collision_efficiency(d, ti, kind=kind, energy_factor=f))
                     for d, ti, f in zip(de, t, fe)])
    return Efficiency(beta, fe, de, kind)


# ---------------------------------------------------------------- results
@dataclass(frozen=True)
class ChannelFalloffCurves:
    """Falloff curves of one unimolecular channel on the study's temperature x pressure grid.

    Arrays: temperature_K (n_T); pressure_Pa (n_P) when the study gives pressures, else None;
    number_density_m3 (n_T, n_P) [m^-3]; rate_constant_per_s (n_T, n_P) [s^-1];
    k_high_pressure_per_s (n_T) [s^-1]; k_low_pressure_m3_per_s (n_T) [m^3 s^-1];
    canonical_tst_per_s (n_T) [s^-1]: tst.channel_rates with the same tunnelling treatment
    (Eckart or none), for comparison with k_high_pressure_per_s;
    collision_rate_m3_per_s, collision_efficiency (n_T); energy_factor_FE and
    delta_E_J_per_mol (n_T) or None;
    troe_fit_number_density_m3 (n_F) [m^-3] with troe_fit_rate_per_s (n_T, n_F) [s^-1]: k(T, [M])
    on a common [M] grid spanning the study's number densities, where closed forms are fitted
    (the Troe fit of :mod:`tstrate.study.falloff`);
    curve_pressure_Pa (n_C) with curve_number_density_m3 and curve_rate_per_s (n_T, n_C):
    a dense curve two decades beyond the study's pressures on both sides, for plots;
    pressure_method: "strong_collision" or "master_equation"; master_equation: how the master
    equation was solved (:class:`MasterEquationInfo`), None for strong collisions.
    """

    model: UnimolecularModel = field(repr=False)
    settings: FalloffSettings = field(repr=False)
    bath: coll.LennardJones
    temperature_K: np.ndarray = field(repr=False)
    pressure_Pa: np.ndarray | None = field(repr=False)
    number_density_m3: np.ndarray = field(repr=False)
    rate_constant_per_s: np.ndarray = field(repr=False)
    k_high_pressure_per_s: np.ndarray = field(repr=False)
    k_low_pressure_m3_per_s: np.ndarray = field(repr=False)
    troe_fit_number_density_m3: np.ndarray = field(repr=False)
    troe_fit_rate_per_s: np.ndarray = field(repr=False)
    canonical_tst_per_s: np.ndarray = field(repr=False)
    collision_rate_m3_per_s: np.ndarray = field(repr=False)
    efficiency: Efficiency = field(repr=False)
    curve_pressure_Pa: np.ndarray = field(repr=False)
    curve_number_density_m3: np.ndarray = field(repr=False)
    curve_rate_per_s: np.ndarray = field(repr=False)
    warnings: tuple[str, ...] = ()
    pressure_method: str = "strong_collision"
    master_equation: "MasterEquationInfo | None" = None

    @property
    def name(self) -> str:
        return self.model.channel.name

    @property
    def collision_efficiency(self) -> np.ndarray:
        return self.efficiency.beta


@dataclass(frozen=True)
class MasterEquationInfo:
    """How a channel's master equation was solved, and how stable its answer is.

    grain_cm1: grain of the master equation [cm^-1] at the check temperature (the grain follows
    <dE>down(T)); top_cm1: energy ceiling above the reactant's
    zero-point level [cm^-1]; n_grains: populated grains solved; kernel: "exponential" or "strong";
    min_separation: smallest ratio of the slowest relaxation to the chemical eigenvalue over the
    grid (NaN when unknown); check_temperature_K, check_number_density_m3: the point (highest
    temperature, lowest [M]) where the
    answer was recomputed with half the grain (or twice, at the finest grain) and a ceiling raised by
    10 <dE>down + 10 RT; grain_change and ceiling_change: the relative changes of k there;
    reservoir_cm1: grains below this energy [cm^-1] are one thermal reservoir state (NaN: none);
    reservoir_change: the relative change of k when the reservoir starts one reservoir depth lower.
    The low-pressure limit k0 is k / [M] at a hundredth of the lowest [M] solved.
    """

    grain_cm1: float
    top_cm1: float
    n_grains: int
    kernel: str
    min_separation: float
    check_temperature_K: float
    check_number_density_m3: float
    check_grain_cm1: float
    grain_change: float
    ceiling_change: float
    reservoir_cm1: float = math.nan
    reservoir_change: float = 0.0


#: the master-equation grain is at most this fraction of <dE>down (common practice: several grains
#: per mean downward step)
ME_GRAIN_FRACTION_OF_DELTA_E = 1.0 / 6.0
#: the master equation's energy ceiling: this many RT (highest temperature) above the barrier ...
ME_TOP_IN_RT = 30.0
#: ... plus this many <dE>down
ME_TOP_IN_DELTA_E = 5.0
#: grains this many RT (highest temperature) ...
ME_RESERVOIR_DEPTH_IN_RT = 10.0
#: ... plus this many <dE>down below the barrier form the reservoir (when k(E) there is negligible)
ME_RESERVOIR_DEPTH_IN_DELTA_E = 10.0


def _interp_log(x_new, x, y):
    """PCHIP interpolation of log y against log x (y > 0)."""
    from scipy.interpolate import PchipInterpolator

    order = np.argsort(x)
    xs, ys = np.log(x[order]), np.log(np.maximum(y[order], 1e-300))
    keep = np.concatenate([[True], np.diff(xs) > 1e-12])
    return np.exp(PchipInterpolator(xs[keep], ys[keep], extrapolate=True)(np.log(x_new)))


def master_equation_on_grid(model: UnimolecularModel, settings: FalloffSettings, temperature_K, z,
                            grids: tuple[np.ndarray, ...]):
    """k(T, [M]) of a channel's master equation on several [M] grids (each (n_T, n_i)); returns
    (rates per grid, k_inf, k0, :class:`MasterEquationInfo`, warnings). The master equation is
    solved at the first grid's points and on a log grid of three points per decade spanning all
    of them; the other grids are interpolated (PCHIP in log k, log [M]) from those."""
    from tstrate.physics import master_equation as me

    t = np.atleast_1d(np.asarray(temperature_K, dtype=float))
    rate = model.rate
    g = rate.grain_J_per_mol
    alpha = settings.delta_E_J_per_mol(t) if settings.energy_transfer == "down" else None
    kernel = "strong" if alpha is None else "exponential"
    if settings.master_equation_grain_cm1 is not None:
        target = np.full(t.size, settings.master_equation_grain_cm1 * CM1_J_PER_MOL)
    elif alpha is not None:
        target = ME_GRAIN_FRACTION_OF_DELTA_E * alpha
    else:
        target = np.full(t.size, 2 * g)     # strong collider: two fine grains (the k average is nonlinear in k0)
    merge = np.maximum(1, np.floor(target / g + 1e-9).astype(int))
    span = ME_TOP_IN_RT * R * float(t.max()) + (0.0 if alpha is None else ME_TOP_IN_DELTA_E * float(alpha.max()))
    top = rate.barrier_J_per_mol + span

    all_m = np.concatenate([np.asarray(x, dtype=float).reshape(t.size, -1) for x in grids], axis=1)
    lo, hi = math.log10(float(all_m.min())), math.log10(float(all_m.max()))
    n_log = max(2, int(math.ceil((hi - lo) * 3)) + 1)
    m_log = np.broadcast_to(np.logspace(lo, hi, n_log), (t.size, n_log))
    first = np.asarray(grids[0], dtype=float).reshape(t.size, -1)
    m_eval = np.concatenate([first, m_log], axis=1)
    # the reservoir: grains at least 10 <dE>down + 10 RT below the barrier whose k(E) stays below
    # 1e-3 of the lowest collision frequency of the grids are lumped into one thermal state
    omega_min = float(np.min(z) * m_eval.min())
    depth = ME_RESERVOIR_DEPTH_IN_RT * R * float(t.max()) + \
        (0.0 if alpha is None else ME_RESERVOIR_DEPTH_IN_DELTA_E * float(alpha.max()))
    e_fine = rate.energies_J_per_mol
    fast = np.flatnonzero(rate.rate_per_s > 1e-3 * omega_min)
    reservoir = min(rate.barrier_J_per_mol - depth, float(e_fine[fast[0]]) if fast.size else math.inf)
    reservoir = reservoir if reservoir > 0 else None
    m_low = np.full(t.size, float(m_eval.min()) * 1e-2)
    i0 = int(np.argmax(t))         # the check point (below): highest temperature ...
    kw = dict(top_J_per_mol=top, reservoir_J_per_mol=reservoir)

    def solve(tt, mm, zz, aa, **over):
        args = {**kw, "merge": merge if np.size(tt) == t.size else merge[i0], **over}
        return me.single_well_falloff(rate.reactant.counts, rate.rate_per_s, g, rate.barrier_index, tt, mm, zz, aa,
                                      low_pressure_number_density_m3=m_low[:np.size(tt)], **args)

    res = solve(t, m_eval, z, alpha)
    k_eval = res.rate_per_s
    out = [k_eval[:, :first.shape[1]]]
    for grid in grids[1:]:
        grid = np.asarray(grid, dtype=float).reshape(t.size, -1)
        out.append(np.array([_interp_log(grid[i], m_eval[i], k_eval[i]) for i in range(t.size)]))
    warnings = []
    sep = res.separation[np.isfinite(res.separation)]
    min_sep = float(sep.min()) if sep.size else math.nan
    if sep.size and min_sep < me.MIN_SEPARATION:
        warnings.append(f"channel {model.channel.name!r}: the master equation's chemical eigenvalue is not well "
                        f"separated from relaxation (ratio {min_sep:.3g} < {me.MIN_SEPARATION:g}); k(T, P) is "
                        "not a well-defined rate constant at the highest temperatures")
    # stability against the grain, the ceiling and the reservoir at the point of most falloff:
    # highest temperature, lowest [M] of the study
    j0 = int(np.argmin(first[i0]))   # ... and lowest [M] of the study
    mc = np.array([[first[i0, j0]]])
    check_merge = int(merge[i0]) // 2 if merge[i0] >= 2 else 2
    a0 = None if alpha is None else alpha[i0:i0 + 1]
    k_ref = float(k_eval[i0, j0])
    k_grain = solve(t[i0:i0 + 1], mc, z[i0:i0 + 1], a0, merge=check_merge).rate_per_s[0, 0]
    extra = 10 * R * float(t.max()) + (0.0 if alpha is None else 10 * float(alpha.max()))
    k_top = solve(t[i0:i0 + 1], mc, z[i0:i0 + 1], a0, top_J_per_mol=top + extra).rate_per_s[0, 0]
    k_res = (solve(t[i0:i0 + 1], mc, z[i0:i0 + 1], a0, reservoir_J_per_mol=max(0.0, reservoir - depth)).rate_per_s[0, 0]
             if reservoir is not None else k_ref)
    if top + extra > (rate.reactant.n_grains - 1) * g:
        warnings.append(f"channel {model.channel.name!r}: the state counts end below the master equation's "
                        "raised ceiling; the ceiling check is incomplete (raise energy_above_barrier_cm1)")
    info = MasterEquationInfo(g * float(merge[i0]) / CM1_J_PER_MOL, res.top_J_per_mol / CM1_J_PER_MOL, res.n_grains,
                              kernel, min_sep, float(t[i0]), float(mc[0, 0]), g * check_merge / CM1_J_PER_MOL,
                              float(k_grain / k_ref - 1.0), float(k_top / k_ref - 1.0),
                              math.nan if reservoir is None else reservoir / CM1_J_PER_MOL,
                              float(k_res / k_ref - 1.0))
    return out, res.high_pressure_per_s, res.low_pressure_m3_s, info, warnings


# ---------------------------------------------------------------- grid and computation
def _log_grid(lo: float, hi: float, per_decade: int, minimum: int) -> np.ndarray:
    lo, hi = math.log10(lo), math.log10(hi)
    if hi - lo < 1e-9:
        lo, hi = lo - 1.0, hi + 1.0
    n = max(minimum, int(math.ceil((hi - lo) * per_decade)) + 1)
    return np.logspace(lo, hi, n)


def falloff_on_grid(model: UnimolecularModel, settings: FalloffSettings, bath: coll.LennardJones,
                    temperature_K, number_density_m3, pressure_Pa=None,
                    canonical_tst_per_s=None) -> ChannelFalloffCurves:
    """Falloff curves of one unimolecular channel on a temperature x [M] grid (no closed form
    fitted: the study step fits Troe to them, :func:`tstrate.study.falloff.channel_falloff`).

    model: the channel's k(E) (:func:`unimolecular_model`); settings: energy transfer and fit
    choices; bath: the collision partner; temperature_K (n_T,) [K]; number_density_m3
    (n_T, n_P) [m^-3]; pressure_Pa (n_P,) [Pa] or None when [M] is given directly;
    canonical_tst_per_s (n_T,) [s^-1], canonical TST with the same tunnelling for comparison
    (NaN when not given).
    """
    t = temperatures_K(temperature_K, ndim=1)
    m = np.asarray(number_density_m3, dtype=float)
    pressures = None if pressure_Pa is None else np.asarray(pressure_Pa, dtype=float)
    channel = model.channel
    warnings = list(model.warnings)
    z = collision_rate(model.reactant, bath, t, settings)
    eff = collision_efficiency(model, settings, t)
    if eff.kind == "strong":
        warnings.append(f"channel {channel.name!r}: no collision efficiency or <dE>down is set; strong "
                        "collisions (beta_c = 1) give an upper bound of k(T, [M])")

    # grid check: the thermal population in the top tenth of the grid must be negligible
    f_top = thermal_distribution(model.rate.reactant, [t.max()])[0]
    tail = f_top[-max(1, f_top.size // 10):].sum()
    if tail > 1e-10:
        warnings.append(f"channel {channel.name!r}: the energy grid is short for {t.max():g} K "
                        f"(population {tail:.1e} in its top tenth); raise energy_above_barrier_cm1")

    # overall rotation the same way in both limits: J-resolved thresholds of the adiabatic 2-D rotor
    shift = 1.0 - 1.0 / model.rate.centrifugal_factor
    # a common [M] grid spanning the study's number densities, for the Troe fit
    m_fit = _log_grid(float(m.min()), float(m.max()), 4, 9)
    # dense curve for plots, two decades beyond the study's range on each side
    if pressures is not None:
        p_curve = _log_grid(float(pressures.min()) / 100, float(pressures.max()) * 100, 8, 33)
        m_curve = ideal_gas_number_density_m3(p_curve[None, :], t[:, None])
    else:
        m_line = _log_grid(float(m.min()) / 100, float(m.max()) * 100, 8, 33)
        p_curve = np.full(m_line.size, np.nan)
        m_curve = np.broadcast_to(m_line, (t.size, m_line.size)).copy()

    if settings.pressure_method == "master_equation":
        (k_grid, k_fit, k_curve), k_inf, k0, info, me_warnings = master_equation_on_grid(
            model, settings, t, z, (m, np.broadcast_to(m_fit, (t.size, m_fit.size)), m_curve))
        warnings.extend(me_warnings)
        if model.rate.centrifugal_factor != 1.0:
            warnings.append(f"channel {channel.name!r}: the master equation uses the E-resolved k(E) with the "
                            "centrifugal factor I_TS/I_R; unlike the strong-collision sum its low-pressure limit "
                            "has no J-resolved threshold (the rotational factor of k0)")
        return ChannelFalloffCurves(
            model=model, settings=settings, bath=bath, temperature_K=t, pressure_Pa=pressures,
            number_density_m3=m, rate_constant_per_s=k_grid, k_high_pressure_per_s=k_inf,
            k_low_pressure_m3_per_s=k0, troe_fit_number_density_m3=m_fit, troe_fit_rate_per_s=k_fit,
            canonical_tst_per_s=(np.full(t.shape, np.nan) if canonical_tst_per_s is None
                                 else np.asarray(canonical_tst_per_s, dtype=float)),
            collision_rate_m3_per_s=z, efficiency=eff, curve_pressure_Pa=p_curve, curve_number_density_m3=m_curve,
            curve_rate_per_s=k_curve, warnings=tuple(warnings), pressure_method="master_equation",
            master_equation=info)

    # one falloff sum for the study's grid, the fit grid and the curve (k(E, E_r) built once)
    m_all = np.concatenate([np.broadcast_to(m, (t.size, m.shape[-1])),
                            np.broadcast_to(m_fit, (t.size, m_fit.size)), m_curve], axis=1)
    fo = strong_collision_falloff(model.rate, t, m_all, collision_rate_m3_s=z, collision_efficiency=eff.beta,
                                  threshold_shift=shift)
    k_inf, k0 = fo.high_pressure_per_s, fo.low_pressure_m3_s
    n_s, n_f = m.shape[-1], m_fit.size
    rate_study = fo.rate_per_s[:, :n_s]
    rate_fit = fo.rate_per_s[:, n_s:n_s + n_f]
    rate_curve = fo.rate_per_s[:, n_s + n_f:]

    return ChannelFalloffCurves(
        model=model, settings=settings, bath=bath, temperature_K=t, pressure_Pa=pressures,
        number_density_m3=m, rate_constant_per_s=rate_study, k_high_pressure_per_s=k_inf,
        k_low_pressure_m3_per_s=k0, troe_fit_number_density_m3=m_fit, troe_fit_rate_per_s=rate_fit,
        canonical_tst_per_s=(np.full(t.shape, np.nan) if canonical_tst_per_s is None
                             else np.asarray(canonical_tst_per_s, dtype=float)),
        collision_rate_m3_per_s=z, efficiency=eff, curve_pressure_Pa=p_curve, curve_number_density_m3=m_curve,
        curve_rate_per_s=rate_curve, warnings=tuple(warnings))
