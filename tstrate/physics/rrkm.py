"""Microcanonical RRKM rate constants k(E) on an energy grain.

k(E) = sigma_path * N_TS(E - E0) / (h rho_R(E))

(R. A. Marcus, J. Chem. Phys. 20, 359 (1952); Robinson and Holbrook,
*Unimolecular Reactions*, Wiley 1972; Gilbert and Smith, *Theory of
Unimolecular and Recombination Reactions*, Blackwell 1990), with
sigma_path the reaction-path degeneracy, N_TS the sum of states of the
transition state's real modes counted from its zero-point level, rho_R the
density of states of the reactant from its zero-point level, and E0 the
zero-point-corrected barrier [J/mol].

Grain conventions (see :mod:`tstrate.physics.states`): the reactant and the
transition state share one grain; E0 is rounded to a whole number of grains;
N_TS is the grain-averaged sum of states (states in lower grains plus half of
the current grain), which makes the Boltzmann average of k(E) reproduce
canonical transition-state theory to second order in grain / kT.

Overall rotation, "lite" treatment (:class:`ExternalRotation`)
--------------------------------------------------------------
* The K-rotor (rotation about the top axis) is active: a 1-D rotor with
  constant A - B is convolved into both the reactant density and the
  transition-state sum.
* The 2-D (J) rotor is adiabatic. Its effect is kept as the centrifugal
  factor I_TS / I_R = B_R / B_TS (ratio of 2-D moments of inertia) that
  multiplies k(E) at every E. This choice equals the ratio of classical 2-D
  rotational partition functions, so the high-pressure limit keeps the
  overall-rotation factor of canonical TST, and it keeps k(E) independent of
  temperature. The alternative, a shift of the barrier to E0(J) at a thermal
  J, is given by :func:`centrifugal_barrier_shift_J_per_mol` for comparison
  (Waage and Rabinovitch, Chem. Rev. 70, 377 (1970); Troe, J. Chem. Phys. 66,
  4758 (1977)); it depends on T and is not applied here.

Tunnelling
----------
With a transmission probability P(E) (energy measured from the top of the
barrier, J/mol, negative below it) the transition-state sum becomes
N_TS^tunnel(E) = sum over TS levels j of P(E - E0 - eps_j), so k(E) is
non-zero below E0. Any callable will do, e.g.
``lambda e: eckart_transmission(e + V1, imag_freq_cm1, V1, V2)`` when the
Eckart function measures energy from the reactant side.
"""

from __future__ import annotations

import logging
import math
from dataclasses import dataclass, field
from typing import Callable, Sequence

import numpy as np

from tstrate.arrays import positive, positive_array
from tstrate.errors import InputError
from tstrate.physics.states import (CM1_J_PER_MOL, Rotor, StateCounts,
                                    check_grain, count_states)
from tstrate.units import H, N_A, R

log = logging.getLogger(__name__)

#: Planck constant per mole [J s / mol]: k(E) = N / (H_MOLAR * rho[1/(J/mol)]).
H_MOLAR = H * N_A


@dataclass(frozen=True)
class ExternalRotation:
    """Overall rotation of reactant and transition state, treated "lite".

    Attributes
    ----------
    reactant_B2d_cm1, ts_B2d_cm1:
        Rotational constants [cm^-1] of the 2-D (adiabatic) rotor, e.g.
        sqrt(B C) of a near-prolate top. Their ratio gives the centrifugal
        factor I_TS / I_R = reactant_B2d_cm1 / ts_B2d_cm1.
    reactant_K_cm1, ts_K_cm1:
        Constants [cm^-1] of the active K-rotor, A - sqrt(B C); ``None`` leaves
        the K-rotor out (for linear or near-spherical cases).
    symmetry_number:
        External rotational symmetry number, applied to the K-rotor of both
        species (it cancels in k(E) when equal; give the path degeneracy
        separately).
    quantum_K:
        Count K-rotor levels discretely instead of classically.
    """

    reactant_B2d_cm1: float
    ts_B2d_cm1: float
    reactant_K_cm1: float | None = None
    ts_K_cm1: float | None = None
    symmetry_number: int = 1
    quantum_K: bool = False

    def __post_init__(self):
        positive(self.reactant_B2d_cm1, "reactant_B2d_cm1")
        positive(self.ts_B2d_cm1, "ts_B2d_cm1")
        if (self.reactant_K_cm1 is None) != (self.ts_K_cm1 is None):
            raise InputError("give the K-rotor constant for both reactant and transition state, or neither",
                             field="K_cm1")

    @property
    def centrifugal_factor(self) -> float:
        """I_TS / I_R = B_R / B_TS of the adiabatic 2-D rotor (dimensionless)."""
        return self.reactant_B2d_cm1 / self.ts_B2d_cm1

    def k_rotors(self) -> tuple[tuple[Rotor, ...], tuple[Rotor, ...]]:
        """(reactant rotors, TS rotors) to convolve in: the K-rotor of each, if given."""
        if self.reactant_K_cm1 is None:
            return (), ()
        return ((Rotor(self.reactant_K_cm1, self.symmetry_number, 1, self.quantum_K),),
                (Rotor(self.ts_K_cm1, self.symmetry_number, 1, self.quantum_K),))


def centrifugal_barrier_shift_J_per_mol(reactant_B2d_cm1: float, ts_B2d_cm1: float, temperature_K):
    """E0(J) - E0 [J/mol] at the thermal J(J+1) = kT / B_R of the reactant's 2-D rotor.

    E0(J) = E0 + J(J+1) (B_TS - B_R), so the shift is RT (B_TS/B_R - 1) per mole
    (negative when the transition state is looser). Documented alternative to
    the I_TS/I_R factor; not used by :func:`rrkm_rate`.
    """
    b_r = positive(reactant_B2d_cm1, "reactant_B2d_cm1")
    b_ts = positive(ts_B2d_cm1, "ts_B2d_cm1")
    return R * np.asarray(temperature_K, dtype=float) * (b_ts / b_r - 1.0)


@dataclass(frozen=True)
class MicrocanonicalRate:
    """k(E) on the reactant's energy grid.

    Attributes
    ----------
    reactant:
        Reactant state counts (grid, grain and density).
    rate_per_s:
        k(E_i) [s^-1] at each reactant grain; 0 where the reactant has no state.
    ts_sum_of_states:
        N_TS(E_i - E0) as used (grain-averaged, tunnelling-corrected if asked), dimensionless.
    barrier_J_per_mol:
        Barrier E0 as used, a whole number of grains [J/mol].
    path_degeneracy:
        Reaction-path degeneracy sigma_path (dimensionless).
    centrifugal_factor:
        I_TS/I_R factor applied to k(E) (1 without external rotation).
    """

    reactant: StateCounts
    rate_per_s: np.ndarray = field(repr=False)
    ts_sum_of_states: np.ndarray = field(repr=False)
    barrier_J_per_mol: float
    path_degeneracy: float = 1.0
    centrifugal_factor: float = 1.0

    @property
    def energies_J_per_mol(self) -> np.ndarray:
        """Grain centres [J/mol] above the reactant zero-point level."""
        return self.reactant.energies_J_per_mol

    @property
    def grain_J_per_mol(self) -> float:
        return self.reactant.grain_J_per_mol

    @property
    def barrier_index(self) -> int:
        """Grain index of the barrier."""
        return int(round(self.barrier_J_per_mol / self.reactant.grain_J_per_mol))

    def rate_at(self, energy_J_per_mol) -> np.ndarray:
        """k [s^-1] at arbitrary energies [J/mol], linear interpolation between grains, 0 outside."""
        return np.interp(np.asarray(energy_J_per_mol, dtype=float), self.energies_J_per_mol,
                         self.rate_per_s, left=0.0, right=np.nan)


def tunnelling_sum_of_states(ts: StateCounts, barrier_index: int, n_grains: int,
                             transmission: Callable[[np.ndarray], np.ndarray]) -> np.ndarray:
    """N_TS^tunnel(E_i) = sum_j counts_TS[j] P((i - barrier_index - j) * grain) for i < n_grains.

    ``transmission`` receives energies [J/mol] measured from the top of the
    barrier (negative below it) and must return probabilities in [0, 1]. A TS
    level can be reached only by energies above the reactant zero-point
    level, hence the sum runs over j <= i. The transmission is evaluated at
    the grain centres, so a step function with P(0) = 1/2 (1 above, 0 below)
    returns the grain-averaged classical sum of states.

    P is evaluated once, on the grid of offsets. The sum is a convolution with P; it is done
    directly only over the window of offsets where 0 < P < 1: below it P is 0, and above it
    P is exactly 1, where the sum is the TS sum of states (a cumulative sum). The cost is that
    of the window, not of the whole grid.
    """
    offsets = (np.arange(n_grains) - barrier_index) * ts.grain_J_per_mol
    p = np.asarray(transmission(offsets), dtype=float)
    if p.shape != offsets.shape or not np.all(np.isfinite(p)) or np.any(p < -1e-12) or np.any(p > 1 + 1e-9):
        raise InputError("transmission function must return one probability in [0, 1] per energy",
                         field="transmission")
    c = np.zeros(n_grains)
    m = min(n_grains, ts.n_grains)
    c[:m] = ts.counts[:m]
    out = np.zeros(n_grains)
    live = np.flatnonzero(p != 0.0)
    if live.size == 0:
        return out
    lo = int(live[0])
    not_one = np.flatnonzero(p != 1.0)
    top = int(not_one[-1]) + 1 if not_one.size else 0       # p[top:] == 1 exactly
    top = max(top, lo)
    if top > lo:
        out[lo:] += np.convolve(c, p[lo:top])[: n_grains - lo]
    if top < n_grains:
        out[top:] += np.cumsum(c)[: n_grains - top]
    return out


def microcanonical_rate(reactant: StateCounts, ts: StateCounts, barrier_J_per_mol: float, *,
                        path_degeneracy: float = 1.0, centrifugal_factor: float = 1.0,
                        transmission: Callable[[np.ndarray], np.ndarray] | None = None) -> MicrocanonicalRate:
    """k(E) = sigma_path * factor * N_TS(E - E0) / (h rho_R(E)) on the reactant's grid.

    Parameters
    ----------
    reactant, ts:
        State counts on the same grain; the TS counts cover its real modes
        (and rotors) from the TS zero-point level.
    barrier_J_per_mol:
        Zero-point-corrected barrier E0 >= 0 [J/mol]; rounded to the grain.
    path_degeneracy:
        Reaction-path degeneracy (> 0).
    centrifugal_factor:
        I_TS/I_R of the adiabatic 2-D rotor (see :class:`ExternalRotation`).
    transmission:
        Optional tunnelling probability P(E - E0 - eps) (see
        :func:`tunnelling_sum_of_states`); without it the grain-averaged
        classical sum of states is used.
    """
    grain = reactant.grain_J_per_mol
    if not math.isclose(ts.grain_J_per_mol, grain, rel_tol=1e-9):
        raise InputError(f"reactant and transition state must share one grain, got {grain:g} and "
                         f"{ts.grain_J_per_mol:g} J/mol", field="grain")
    e0 = float(barrier_J_per_mol)
    if not math.isfinite(e0) or e0 < 0.0:
        raise InputError(f"barrier must be a non-negative energy in J/mol, got {barrier_J_per_mol!r}",
                         field="barrier_J_per_mol")
    positive(path_degeneracy, "path_degeneracy")
    positive(centrifugal_factor, "centrifugal_factor")
    n = reactant.n_grains
    m = int(round(e0 / grain))
    if m >= n:
        raise InputError("the energy grid ends below the barrier", field="max_energy",
                         hint="extend the grid above the barrier")
    if ts.n_grains < n - m:
        raise InputError(f"transition-state grid too short: {ts.n_grains} grains, need {n - m}",
                         field="ts")
    if abs(m * grain - e0) > 1e-9 * max(e0, grain):
        log.debug("barrier %.6g J/mol rounded to %d grains (%.6g J/mol)", e0, m, m * grain)
    if transmission is None:
        n_ts = np.zeros(n)
        n_ts[m:] = ts.grain_averaged_sum_of_states[: n - m]
    else:
        n_ts = tunnelling_sum_of_states(ts, m, n, transmission)
    rho = reactant.density_per_J_per_mol
    k = np.zeros(n)
    has_states = rho > 0
    k[has_states] = (path_degeneracy * centrifugal_factor * n_ts[has_states]) / (H_MOLAR * rho[has_states])
    k.setflags(write=False)
    n_ts.setflags(write=False)
    return MicrocanonicalRate(reactant, k, n_ts, m * grain, float(path_degeneracy), float(centrifugal_factor))


def rrkm_rate(reactant_frequencies_cm1: Sequence[float], ts_frequencies_cm1: Sequence[float],
              barrier_J_per_mol: float, *, grain_cm1: float = 10.0,
              energy_above_barrier_J_per_mol: float = 50_000 * CM1_J_PER_MOL,
              path_degeneracy: float = 1.0, reactant_rotors: Sequence[Rotor] = (),
              ts_rotors: Sequence[Rotor] = (), external: ExternalRotation | None = None,
              transmission: Callable[[np.ndarray], np.ndarray] | None = None,
              refine_grain: bool = True) -> MicrocanonicalRate:
    """RRKM k(E) from harmonic wavenumbers, free rotors and overall rotation.

    Parameters
    ----------
    reactant_frequencies_cm1, ts_frequencies_cm1:
        Real harmonic wavenumbers [cm^-1]; the TS list excludes the imaginary mode.
    barrier_J_per_mol:
        Zero-point-corrected barrier [J/mol] from the reactant's zero-point level.
    grain_cm1:
        Grain [cm^-1], checked against the lowest wavenumber of both species
        (one grain for both).
    energy_above_barrier_J_per_mol:
        How far above the barrier the grid extends [J/mol] (default 50,000 cm^-1).
    path_degeneracy:
        Reaction-path degeneracy.
    reactant_rotors, ts_rotors:
        Internal free rotors (:class:`Rotor`) of each species.
    external:
        Optional :class:`ExternalRotation` ("lite": active K-rotor, adiabatic 2-D rotor).
    transmission:
        Optional tunnelling probability (see :func:`microcanonical_rate`).
    refine_grain:
        Refine a grain that is too coarse (with a logged warning) instead of only warning.
    """
    rf = positive_array(reactant_frequencies_cm1, "reactant_frequencies_cm1")
    tf = np.atleast_1d(np.asarray(ts_frequencies_cm1, dtype=float))
    if tf.size:
        tf = positive_array(tf, "ts_frequencies_cm1")
    grain_cm1 = check_grain(grain_cm1, np.concatenate([rf, tf]), refine=refine_grain)
    e0 = float(barrier_J_per_mol)
    span = positive(energy_above_barrier_J_per_mol, "energy_above_barrier_J_per_mol")
    r_rot, t_rot = tuple(reactant_rotors), tuple(ts_rotors)
    factor = 1.0
    if external is not None:
        kr, kt = external.k_rotors()
        r_rot, t_rot = r_rot + kr, t_rot + kt
        factor = external.centrifugal_factor
    e_max = max(e0, 0.0) + span
    reactant = count_states(rf, e_max, grain_cm1=grain_cm1, rotors=r_rot, refine=False)
    ts = count_states(tf, e_max, grain_cm1=grain_cm1, rotors=t_rot, refine=False)
    return microcanonical_rate(reactant, ts, e0, path_degeneracy=path_degeneracy,
                               centrifugal_factor=factor, transmission=transmission)
