"""Energised molecules: the fraction that reacts before collisions take the energy away.

A molecule receives an excitation energy (a photon, or the energy released
by forming it) on top of its mean thermal vibrational energy. It then
reacts with k(E) or is deactivated by collisions:

* Stern-Volmer competition (strong collisions scaled by beta_c):
  phi = k(E) / (k(E) + beta_c Z [M]);
* stepwise deactivation: each collision removes <dE>_down, and
  phi = 1 - prod_i (1 - k(E_i) / (k(E_i) + Z [M])) over E_i = E - i <dE>_down
  while E_i >= E0 (Robinson and Holbrook, *Unimolecular Reactions*, Wiley
  1972, ch. 8, cascade model).

Energies in J/mol from the zero-point level of the parent, rates s^-1,
Z in m^3 s^-1, [M] in m^-3. Results are vectorised over [M].
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from tstrate.arrays import positive_array
from tstrate.errors import InputError
from tstrate.model.settings import ExcitationSpec, FalloffSettings
from tstrate.physics.rrkm import MicrocanonicalRate
from tstrate.physics.unimolecular import UnimolecularModel, collision_efficiency, collision_rate
from tstrate.physics.states import CM1_J_PER_MOL, MODE_HINT
from tstrate.units import C, H, N_A, R, energy_to_J_per_mol


def photon_energy_J_per_mol(*, wavelength_nm: float | None = None, wavenumber_cm1: float | None = None,
                            energy: float | None = None, unit: str | None = None) -> float:
    """Molar energy [J/mol] of one excitation, from exactly one of a wavelength [nm], a wavenumber
    [cm^-1] or an energy with its unit (any unit of :data:`tstrate.units.ENERGY_UNITS_J_PER_MOL`)."""
    given = [x is not None for x in (wavelength_nm, wavenumber_cm1, energy)]
    if sum(given) != 1:
        raise InputError("give exactly one of wavelength_nm, wavenumber_cm1 or energy (with unit)",
                         field="excitation")
    if wavelength_nm is not None:
        if not wavelength_nm > 0:
            raise InputError(f"wavelength must be positive, got {wavelength_nm!r}", field="wavelength_nm")
        return H * C / (wavelength_nm * 1e-9) * N_A
    if wavenumber_cm1 is not None:
        if not wavenumber_cm1 > 0:
            raise InputError(f"wavenumber must be positive, got {wavenumber_cm1!r}", field="wavenumber_cm1")
        return wavenumber_cm1 * CM1_J_PER_MOL
    if unit is None:
        raise InputError("an energy needs its unit", field="unit")
    value = energy_to_J_per_mol(energy, unit, field="energy")
    if not value > 0:
        raise InputError(f"excitation energy must be positive, got {energy!r} {unit}", field="energy")
    return float(value)


def mean_vibrational_energy_J_per_mol(frequencies_cm1, temperature_K):
    """Mean thermal vibrational energy above the zero-point level [J/mol] of harmonic oscillators:
    sum_i N_A h c nu_i / (exp(h c nu_i / kT) - 1); vectorised over temperature."""
    from tstrate.physics.thermo import harmonic_oscillators

    nu = positive_array(frequencies_cm1, "frequencies_cm1", hint=MODE_HINT)
    t = np.asarray(temperature_K, dtype=float)
    _, u_over_rt, _, _ = harmonic_oscillators(nu, np.atleast_1d(t))   # thermal U/RT per mode
    energy = R * np.atleast_1d(t) * u_over_rt.sum(axis=1)
    return energy.reshape(t.shape)


@dataclass(frozen=True)
class ActivationYield:
    """Fraction of energised molecules that react.

    energy_J_per_mol: total energy from the parent's zero-point level [J/mol];
    rate_per_s: k(E) there [s^-1]; number_density_m3 (n_M) [m^-3];
    fraction (n_M) dimensionless; below_threshold: True when the energy is under
    the barrier (fraction 0 by definition, no tunnelling counted).
    """

    energy_J_per_mol: float
    rate_per_s: float
    number_density_m3: np.ndarray = field(repr=False)
    fraction: np.ndarray = field(repr=False)
    below_threshold: bool


def _densities(number_density_m3) -> np.ndarray:
    m = np.atleast_1d(np.asarray(number_density_m3, dtype=float))
    if m.ndim != 1 or np.any(~np.isfinite(m)) or np.any(m < 0):
        raise InputError("number densities must be non-negative numbers in m^-3", field="number_density_m3")
    return m


def _rate_at(rate: MicrocanonicalRate, energy: float) -> float:
    e = rate.energies_J_per_mol
    if energy > e[-1]:
        raise InputError(f"energy {energy:.6g} J/mol lies beyond the k(E) grid (ends at {e[-1]:.6g} J/mol)",
                         field="energy", hint="extend the grid above the barrier")
    return float(np.interp(energy, e, rate.rate_per_s))


def stern_volmer_yield(rate: MicrocanonicalRate, energy_J_per_mol: float, number_density_m3, *,
                       collision_rate_m3_s: float, collision_efficiency: float = 1.0) -> ActivationYield:
    """phi = k(E) / (k(E) + beta_c Z [M]) at one energy (k(E) interpolated linearly on the grain)."""
    m = _densities(number_density_m3)
    energy = float(energy_J_per_mol)
    if energy < rate.barrier_J_per_mol:
        return ActivationYield(energy, 0.0, m, np.zeros_like(m), True)
    k = _rate_at(rate, energy)
    omega = collision_efficiency * collision_rate_m3_s * m
    return ActivationYield(energy, k, m, k / (k + omega), False)


def stepwise_yield(rate: MicrocanonicalRate, energy_J_per_mol: float, number_density_m3, *,
                   collision_rate_m3_s: float, energy_down_J_per_mol: float) -> ActivationYield:
    """phi = 1 - prod_i (1 - k(E_i)/(k(E_i) + Z[M])), E_i = E - i <dE>_down, while E_i >= E0.

    Every collision (rate Z[M], no efficiency factor: the step size carries
    the inefficiency) removes ``energy_down_J_per_mol`` [J/mol].
    """
    m = _densities(number_density_m3)
    energy = float(energy_J_per_mol)
    step = float(energy_down_J_per_mol)
    if not (math.isfinite(step) and step > 0):
        raise InputError(f"<dE>down must be positive, got {energy_down_J_per_mol!r}", field="energy_down")
    e0 = rate.barrier_J_per_mol
    if energy < e0:
        return ActivationYield(energy, 0.0, m, np.zeros_like(m), True)
    n_steps = int(math.floor((energy - e0) / step + 1e-9)) + 1   # E_i = E0 within rounding counts
    levels = energy - step * np.arange(n_steps)
    k = np.array([_rate_at(rate, e) for e in levels])
    omega = collision_rate_m3_s * m
    with np.errstate(divide="ignore", invalid="ignore"):
        log_survive = np.where(omega[:, None] > 0,
                               np.log(omega[:, None]) - np.log(omega[:, None] + k[None, :]), 0.0)
    survive = np.exp(log_survive.sum(axis=1))
    survive = np.where(omega > 0, survive, 0.0 if k[0] > 0 else 1.0)
    return ActivationYield(energy, float(k[0]), m, 1.0 - survive, False)


def excitation_energy_J_per_mol(frequencies_cm1, temperature_K: float, **excitation) -> float:
    """Energy of the energised parent [J/mol]: the excitation (keywords of
    :func:`photon_energy_J_per_mol`) plus the parent's mean thermal vibrational energy at T."""
    return photon_energy_J_per_mol(**excitation) + float(
        mean_vibrational_energy_J_per_mol(frequencies_cm1, float(temperature_K)))


# ---------------------------------------------------------------- an excitation of a channel
@dataclass(frozen=True)
class YieldGrid:
    """Fractions reacting on a set of conditions.

    Pressure scan: arrays (n_T,) or (n_T, n_P); along a profile: (n_Z,) for everything
    (each altitude has its own temperature and pressure; "n_P" is then 1 per point).

    temperature_K; pressure_Pa ((n_P,) for a scan, (n_Z,) along a profile, None when the
    study gives number densities); number_density_m3; thermal_energy_J_per_mol and
    energy_J_per_mol (total) per temperature; rate_per_s: k(E); below_threshold (bool);
    collision_rate_m3_per_s: Z; collision_efficiency: beta_c; collision_frequency_per_s: Z [M];
    stern_volmer and stepwise (None without <dE>down): fractions reacting (dimensionless);
    half_number_density_m3: [M] where the Stern-Volmer fraction is 1/2, k(E)/(beta_c Z)
    (NaN below threshold); delta_E_down_J_per_mol: <dE>down used per temperature, or None;
    master_equation: fraction reacting before stabilisation by the energy-grained master equation
    (:func:`master_equation_yield`; the channel's ``pressure_method = "master_equation"``), or None.
    """

    temperature_K: np.ndarray = field(repr=False)
    pressure_Pa: np.ndarray | None = field(repr=False)
    number_density_m3: np.ndarray = field(repr=False)
    thermal_energy_J_per_mol: np.ndarray = field(repr=False)
    energy_J_per_mol: np.ndarray = field(repr=False)
    rate_per_s: np.ndarray = field(repr=False)
    below_threshold: np.ndarray = field(repr=False)
    collision_rate_m3_per_s: np.ndarray = field(repr=False)
    collision_efficiency: np.ndarray = field(repr=False)
    collision_frequency_per_s: np.ndarray = field(repr=False)
    stern_volmer: np.ndarray = field(repr=False)
    stepwise: np.ndarray | None = field(repr=False)
    half_number_density_m3: np.ndarray = field(repr=False)
    delta_E_down_J_per_mol: np.ndarray | None = field(repr=False)
    master_equation: np.ndarray | None = field(repr=False, default=None)


@dataclass(frozen=True)
class ExcitationResult:
    """What happens to one excitation: k(E), the fractions against pressure and along altitude.

    altitude_m: altitudes [m] of the profile (None without one); profile_source: its name.
    pressure_curve: the pressure scan on a dense grid (8 points per decade, from 1/100 of the
    lowest study pressure to 100 times the highest, and past the half-quenching pressure), for plots.
    populations: (temperature [K], [M] [m^-3], collision frequency [s^-1], Populations) of the
    energised molecule by the master equation (:func:`master_equation_populations`), or None.
    """

    spec: ExcitationSpec
    model: UnimolecularModel = field(repr=False)
    pressure: YieldGrid | None
    profile: YieldGrid | None
    altitude_m: np.ndarray | None = field(repr=False, default=None)
    profile_source: str | None = None
    pressure_curve: YieldGrid | None = field(repr=False, default=None)
    warnings: tuple[str, ...] = ()
    populations: tuple | None = field(repr=False, default=None)

    @property
    def barrier_J_per_mol(self) -> float:
        return self.model.barrier_J_per_mol

    @property
    def below_threshold(self) -> bool:
        """True when the excitation is below the barrier everywhere it was evaluated."""
        flags = [g.below_threshold for g in (self.pressure, self.profile) if g is not None]
        return bool(all(np.all(f) for f in flags))


def mean_active_energy_J_per_mol(model: UnimolecularModel, temperature_K) -> np.ndarray:
    """Mean thermal energy [J/mol] of the states counted in the reactant's RRKM density
    (vibrations and the active K-rotor), from its thermal distribution on the grain."""
    from tstrate.physics.falloff import thermal_distribution

    states = model.rate.reactant
    return thermal_distribution(states, temperature_K) @ states.energies_J_per_mol


def delta_e_down_J_per_mol(spec: ExcitationSpec, settings: FalloffSettings, t: np.ndarray) -> np.ndarray | None:
    """<dE>down [J/mol] at temperatures ``t`` for the stepwise model: the excitation's own value, else
    the channel's falloff setting (with its temperature dependence), else None."""
    if spec.delta_E_down_cm1 is not None:
        return np.full(t.shape, spec.delta_E_down_cm1 * CM1_J_PER_MOL)
    if settings.delta_E_down_cm1 is not None:
        return settings.delta_E_J_per_mol(t)
    return None


def yields_at(model: UnimolecularModel, spec: ExcitationSpec, settings: FalloffSettings, bath, t: np.ndarray,
            m: np.ndarray, pressures: np.ndarray | None) -> YieldGrid:
    """Fractions reacting at temperatures ``t`` (n,) [K] and number densities ``m`` (n, n_P) [m^-3]
    (``pressures`` [Pa] only recorded), for an excitation ``spec`` of the channel of ``model``."""
    e_thermal = mean_active_energy_J_per_mol(model, t)
    energy = spec.energy_J_per_mol + e_thermal
    z = collision_rate(model.reactant, bath, t, settings)
    beta = (np.full(t.shape, spec.collision_efficiency) if spec.collision_efficiency is not None
            else collision_efficiency(model, settings, t).beta)
    de_down = delta_e_down_J_per_mol(spec, settings, t)
    sv = np.zeros(m.shape)
    step = np.zeros(m.shape) if de_down is not None else None
    k = np.zeros(t.shape)
    below = np.zeros(t.shape, dtype=bool)
    for i in range(t.size):
        y = stern_volmer_yield(model.rate, float(energy[i]), m[i], collision_rate_m3_s=float(z[i]),
                               collision_efficiency=float(beta[i]))
        sv[i], k[i], below[i] = y.fraction, y.rate_per_s, y.below_threshold
        if de_down is not None:
            step[i] = stepwise_yield(model.rate, float(energy[i]), m[i], collision_rate_m3_s=float(z[i]),
                                     energy_down_J_per_mol=float(de_down[i])).fraction
    with np.errstate(divide="ignore", invalid="ignore"):
        half = np.where(below, np.nan, k / (beta * z))
    me_frac = None
    if settings.pressure_method == "master_equation":
        me_frac = np.array([master_equation_yield(model, spec.energy_J_per_mol, float(t[i]), z[i] * m[i],
                                                  None if de_down is None else float(de_down[i]))
                            for i in range(t.size)])
    return YieldGrid(t, pressures, m, e_thermal, energy, k, below, z, beta, z[:, None] * m, sv, step, half, de_down,
                     me_frac)


def _energised_setup(model, excitation_J_per_mol, temperature_K, delta_E_down_J_per_mol):
    rate = model.rate
    g = rate.grain_J_per_mol
    alpha = 0.0 if delta_E_down_J_per_mol is None else float(delta_E_down_J_per_mol)
    merge = 1 if delta_E_down_J_per_mol is None else max(1, int(alpha / 6 / g))
    depth = 10 * R * temperature_K + 10 * alpha
    start = excitation_J_per_mol + float(mean_active_energy_J_per_mol(model, [temperature_K])[0])
    e0 = rate.barrier_J_per_mol
    return dict(stabilised_below_J_per_mol=max(g, min(e0, start) - depth), merge=merge,
                top_J_per_mol=max(e0, start) + 30 * R * temperature_K + 10 * alpha, boundary=rate.barrier_index)


def master_equation_populations(model: UnimolecularModel, excitation_J_per_mol: float, temperature_K: float,
                                collision_frequency_per_s: float, delta_E_down_J_per_mol: float | None,
                                times_s=None):
    """Populations against time of the energised reactant (as in :func:`master_equation_yield`):
    a :class:`tstrate.physics.master_equation.Populations` with one well (still energised, above
    the stabilisation energy) and two sinks, "reacted" and "stabilised". ``times_s`` default: 60
    points from 1e-3 to 1e3 collision times (1/omega)."""
    from tstrate.physics import master_equation as me

    rate = model.rate
    y = me.energised_yield(rate.reactant.counts, rate.rate_per_s, rate.grain_J_per_mol, temperature_K,
                           excitation_J_per_mol, [collision_frequency_per_s], delta_E_down_J_per_mol,
                           keep_matrix=True, **_energised_setup(model, excitation_J_per_mol, temperature_K,
                                                                delta_E_down_J_per_mol))
    times = (np.logspace(-3, 3, 60) / collision_frequency_per_s) if times_s is None else np.asarray(times_s)
    pops = me.populations(y.matrix, y.start, times)
    # molecules that start below the stabilisation energy are stabilised from the start
    below = 1.0 - float(y.start.sum())
    products = pops.products.copy()
    products[:, 1] += below
    return me.Populations(pops.times_s, pops.states, products, pops.well_populations)


def master_equation_yield(model: UnimolecularModel, excitation_J_per_mol: float, temperature_K: float,
                          collision_frequency_per_s, delta_E_down_J_per_mol: float | None) -> np.ndarray:
    """Fraction of the channel's reactant, energised by ``excitation_J_per_mol`` on top of its thermal
    distribution, that reacts before collisions stabilise it, by the master equation
    (:func:`tstrate.physics.master_equation.energised_yield`): grains of a sixth of <dE>down,
    stabilised 10 <dE>down + 10 RT below the lower of E0 and the mean starting energy, ceiling
    30 RT + 10 <dE>down above the higher, k(E) below E0 (tunnelling) included. Replaces the
    stepwise cascade, which stops at E0; Stern-Volmer stays the quick estimate."""
    from tstrate.physics import master_equation as me

    rate = model.rate
    y = me.energised_yield(rate.reactant.counts, rate.rate_per_s, rate.grain_J_per_mol, temperature_K,
                           excitation_J_per_mol, np.atleast_1d(collision_frequency_per_s), delta_E_down_J_per_mol,
                           **_energised_setup(model, excitation_J_per_mol, temperature_K, delta_E_down_J_per_mol))
    return y.reacted


