"""Energised molecules of a study: the fraction that reacts before collisions deactivate it.

An excitation (a photon or an overtone, given as a wavelength, a wavenumber or
an energy) lifts the reactant of a unimolecular channel to
E = E_exc + <E>(T), with <E>(T) the mean thermal energy of the reactant's
active degrees of freedom - the vibrations and the active K-rotor counted in
the RRKM density of states - averaged over its thermal distribution on the
grain (about RT/2 more than the vibrational energy alone). The channel's
RRKM k(E) comes from :func:`tstrate.physics.pressure.unimolecular_model` (same
grain, rotors, degeneracy and tunnelling choices as the falloff). Then

* Stern-Volmer: phi = k(E) / (k(E) + beta_c Z [M]) (strong collisions scaled by
  beta_c, the channel's collision efficiency from ``[falloff]`` unless the
  excitation gives its own);
* stepwise: every collision (Z [M]) removes <dE>down until E falls below E0
  (cascade model, Robinson and Holbrook 1972, ch. 8), when a <dE>down is known;

at the study's pressures (``[conditions]``) and temperatures, and along an
altitude profile (the U.S. Standard Atmosphere 1976 or a CSV file), where the
local temperature sets the parent's thermal energy, Z and [M] = p / k_B T.

An excitation whose total energy lies below E0 gives fraction 0 (no tunnelling
is counted for an energised molecule below its barrier); it is flagged in the
results and said in a warning.

Units: energies J/mol, temperatures K, pressures Pa, number densities m^-3,
k(E) s^-1, Z m^3 s^-1, collision frequencies s^-1, altitudes m.
"""

from __future__ import annotations

import logging
import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from tstrate.errors import InputError
from tstrate.model import Study
from tstrate.physics.activation import (mean_vibrational_energy_J_per_mol, stepwise_yield,
                                        stern_volmer_yield)
from tstrate.physics.atmosphere import AtmosphereProfile, read_profile_csv, us_standard_atmosphere_1976
from tstrate.physics.pressure import (FalloffSettings, UnimolecularModel, bath_parameters, collision_efficiency,
                                      collision_rate, falloff_section, study_number_densities,
                                      unimolecular_model)
from tstrate.physics.states import CM1_J_PER_MOL
from tstrate.units import K_B, R

log = logging.getLogger(__name__)

#: Name of the built-in altitude profile.
US_STANDARD_1976 = "us-standard-1976"
#: Default altitude range [km] of the built-in profile (its whole range).
US_STANDARD_RANGE_KM = (0.0, 86.0)


@dataclass(frozen=True)
class ExcitationSpec:
    """One excitation to follow.

    name: label. channel: a unimolecular channel of the study.
    energy_J_per_mol: excitation energy added to the thermal energy [J/mol].
    description: how it was given (e.g. "wavenumber 7200 cm-1"), for output.
    temperature_K: parent temperatures [K] of the pressure scan (None: the study's).
    delta_E_down_cm1: <dE>down [cm^-1] for the stepwise model (None: the channel's [falloff]
        delta_E_down_cm1, with its temperature exponent, if any).
    collision_efficiency: beta_c of the Stern-Volmer model (None: from [falloff]).
    pressure_scan: use the study's pressures (None: when the study gives any).
    profile: None, "us-standard-1976" or the path of a CSV profile.
    altitude_range_km: (lowest, highest) altitude [km] along the profile (None: all of it).
    altitude_step_km: altitude step [km] of the built-in profile.
    file, field: where it came from (for error messages).
    """

    name: str
    channel: str
    energy_J_per_mol: float
    description: str
    temperature_K: tuple[float, ...] | None = None
    delta_E_down_cm1: float | None = None
    collision_efficiency: float | None = None
    pressure_scan: bool | None = None
    profile: str | None = None
    altitude_range_km: tuple[float, float] | None = None
    altitude_step_km: float = 1.0
    file: str | None = None
    field: str = "excitation"

    def __post_init__(self):
        def bad(key, problem, hint=None):
            return InputError(problem, file=self.file, field=f"{self.field}.{key}", hint=hint)

        if not (math.isfinite(self.energy_J_per_mol) and self.energy_J_per_mol > 0):
            raise bad("energy", f"excitation energy must be positive, got {self.energy_J_per_mol!r} J/mol")
        if self.temperature_K is not None:
            if not self.temperature_K or any(not (math.isfinite(x) and x > 0) for x in self.temperature_K):
                raise bad("temperature_K", "temperatures must be positive (kelvin)")
        if self.delta_E_down_cm1 is not None and not (math.isfinite(self.delta_E_down_cm1)
                                                      and self.delta_E_down_cm1 > 0):
            raise bad("delta_E_down_cm1", f"<dE>down must be positive, got {self.delta_E_down_cm1!r}")
        if self.collision_efficiency is not None and not 0 < self.collision_efficiency <= 1:
            raise bad("collision_efficiency", f"beta_c must lie in (0, 1], got {self.collision_efficiency!r}")
        if self.altitude_range_km is not None:
            lo, hi = self.altitude_range_km
            if not (math.isfinite(lo) and math.isfinite(hi) and 0 <= lo <= hi):
                raise bad("altitude_km", f"altitude range must be [lowest, highest] in km with 0 <= lowest <= "
                                         f"highest, got {list(self.altitude_range_km)}")
            if self.profile == US_STANDARD_1976 and hi > US_STANDARD_RANGE_KM[1]:
                raise bad("altitude_km", f"the 1976 standard atmosphere ends at {US_STANDARD_RANGE_KM[1]:g} km")
        if not (math.isfinite(self.altitude_step_km) and self.altitude_step_km > 0):
            raise bad("altitude_step_km", f"altitude step must be positive, got {self.altitude_step_km!r}")


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
    (NaN below threshold); delta_E_down_J_per_mol: <dE>down used per temperature, or None.
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


@dataclass(frozen=True)
class ExcitationResult:
    """What happens to one excitation: k(E), the fractions against pressure and along altitude.

    altitude_m: altitudes [m] of the profile (None without one); profile_source: its name.
    pressure_curve: the pressure scan on a dense grid (8 points per decade, from 1/100 of the
    lowest study pressure to 100 times the highest, and past the half-quenching pressure), for plots.
    """

    spec: ExcitationSpec
    model: UnimolecularModel = field(repr=False)
    pressure: YieldGrid | None
    profile: YieldGrid | None
    altitude_m: np.ndarray | None = field(repr=False, default=None)
    profile_source: str | None = None
    pressure_curve: YieldGrid | None = field(repr=False, default=None)
    warnings: tuple[str, ...] = ()

    @property
    def barrier_J_per_mol(self) -> float:
        return self.model.barrier_J_per_mol

    @property
    def below_threshold(self) -> bool:
        """True when the excitation is below the barrier everywhere it was evaluated."""
        flags = [g.below_threshold for g in (self.pressure, self.profile) if g is not None]
        return bool(all(np.all(f) for f in flags))


# ---------------------------------------------------------------- computation
def mean_active_energy_J_per_mol(model: UnimolecularModel, temperature_K) -> np.ndarray:
    """Mean thermal energy [J/mol] of the states counted in the reactant's RRKM density
    (vibrations and the active K-rotor), from its thermal distribution on the grain."""
    from tstrate.physics.falloff import thermal_distribution

    states = model.rate.reactant
    return thermal_distribution(states, temperature_K) @ states.energies_J_per_mol


def _delta_e_down(spec: ExcitationSpec, settings: FalloffSettings, t: np.ndarray) -> np.ndarray | None:
    if spec.delta_E_down_cm1 is not None:
        return np.full(t.shape, spec.delta_E_down_cm1 * CM1_J_PER_MOL)
    if settings.delta_E_down_cm1 is not None:
        return settings.delta_E_J_per_mol(t)
    return None


def _yields(model: UnimolecularModel, spec: ExcitationSpec, settings: FalloffSettings, bath, t: np.ndarray,
            m: np.ndarray, pressures: np.ndarray | None) -> YieldGrid:
    """Fractions at temperatures ``t`` (n,) and number densities ``m`` (n, n_P)."""
    e_thermal = mean_active_energy_J_per_mol(model, t)
    energy = spec.energy_J_per_mol + e_thermal
    z = collision_rate(model.reactant, bath, t, settings)
    beta = (np.full(t.shape, spec.collision_efficiency) if spec.collision_efficiency is not None
            else collision_efficiency(model, settings, t).beta)
    de_down = _delta_e_down(spec, settings, t)
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
    return YieldGrid(t, pressures, m, e_thermal, energy, k, below, z, beta, z[:, None] * m, sv, step, half, de_down)


def _profile(study: Study, spec: ExcitationSpec) -> AtmosphereProfile:
    if spec.profile == US_STANDARD_1976:
        lo, hi = spec.altitude_range_km or US_STANDARD_RANGE_KM
        n = int(math.floor((hi - lo) / spec.altitude_step_km + 1e-9))
        z_km = lo + spec.altitude_step_km * np.arange(n + 1)
        if z_km[-1] < hi - 1e-9:
            z_km = np.append(z_km, hi)
        return us_standard_atmosphere_1976(z_km * 1e3)
    prof = read_profile_csv(spec.profile)
    if spec.altitude_range_km is None:
        return prof
    lo, hi = spec.altitude_range_km
    keep = (prof.altitude_m >= lo * 1e3 - 1e-6) & (prof.altitude_m <= hi * 1e3 + 1e-6)
    if not np.any(keep):
        raise InputError(f"no altitude of the profile lies in {lo:g} .. {hi:g} km", file=spec.file,
                         field=f"{spec.field}.altitude_km", hint=f"the profile is {spec.profile}")
    z = prof.altitude_m[keep] / 1e3
    if z.min() > lo + 1e-6 or z.max() < hi - 1e-6:
        log.warning("%s: the profile %s covers only %g .. %g km of the asked %g .. %g km", spec.name,
                    spec.profile, z.min(), z.max(), lo, hi)
    return AtmosphereProfile(prof.altitude_m[keep], prof.temperature_K[keep], prof.pressure_Pa[keep], prof.source)


def excitation_yield(study: Study, spec: ExcitationSpec) -> ExcitationResult:
    """k(E) and the fraction reacting for one excitation (see the module docstring)."""
    try:
        channel = study.channel(spec.channel)
    except KeyError:
        raise InputError(f"unknown channel {spec.channel!r}", file=spec.file, field=f"{spec.field}.channel",
                         hint="use one of " + ", ".join(c.name for c in study.channels)) from None
    if channel.order != 1:
        raise InputError(f"channel {channel.name!r} has {channel.order} reactants; an energised molecule needs "
                         "a unimolecular channel", file=spec.file, field=f"{spec.field}.channel")
    settings = falloff_section(study).for_channel(channel.name)
    has_pressures = bool(study.conditions.pressure_Pa.size or study.conditions.number_density_m3.size)
    scan = has_pressures if spec.pressure_scan is None else spec.pressure_scan
    if scan and not has_pressures:
        raise InputError("a pressure scan needs pressures in [conditions], and the study gives none",
                         file=spec.file, field=f"{spec.field}.pressures",
                         hint="add pressure_bar = [...] to [conditions], or give a profile")
    if not scan and spec.profile is None:
        raise InputError("nothing to evaluate: no pressures in [conditions] and no altitude profile",
                         file=spec.file, field=spec.field,
                         hint="add pressure_bar = [...] to [conditions] or profile = \"us-standard-1976\"")
    bath = bath_parameters(study)

    t_scan = np.array(spec.temperature_K if spec.temperature_K is not None else study.conditions.temperature_K,
                      dtype=float)
    prof = _profile(study, spec) if spec.profile is not None else None
    temps = [t_scan] if scan else []
    if prof is not None:
        temps.append(prof.temperature_K)
    t_all = np.concatenate(temps)
    # grid top: vibrational energy plus a margin for the K-rotor (its classical share is RT/2)
    # and RT/2 for each free internal rotor
    reactant = study.species[channel.reactants[0]]
    e_top = spec.energy_J_per_mol + float(np.max(mean_vibrational_energy_J_per_mol(
        reactant.harmonic_frequencies_cm1, t_all) + (1.0 + 0.5 * len(reactant.free_rotors)) * R * t_all))
    model = unimolecular_model(study, channel, settings, max_temperature_K=float(t_all.max()),
                               min_top_energy_J_per_mol=e_top)
    warnings = list(model.warnings)

    grid = curve = None
    if scan:
        pressures, m = study_number_densities(study, t_scan)
        grid = _yields(model, spec, settings, bath, t_scan, m, pressures)
        half = grid.half_number_density_m3[np.isfinite(grid.half_number_density_m3)]
        m_hi = max(float(m.max()) * 100, 10 * float(half.max()) if half.size else 0.0)
        m_lo = float(m.min()) / 100
        n = int(math.ceil(8 * math.log10(m_hi / m_lo))) + 1
        if pressures is not None:
            scale = float(m.max() / pressures.max())   # [M]/p at the lowest temperature
            p_curve = np.logspace(math.log10(m_lo / scale), math.log10(m_hi / scale), n)
            m_curve = p_curve[None, :] / (K_B * t_scan[:, None])
        else:
            p_curve = None
            m_curve = np.broadcast_to(np.logspace(math.log10(m_lo), math.log10(m_hi), n), (t_scan.size, n)).copy()
        curve = _yields(model, spec, settings, bath, t_scan, m_curve, p_curve)
    along = None
    if prof is not None:
        along = _yields(model, spec, settings, bath, prof.temperature_K, prof.number_density_m3[:, None],
                        prof.pressure_Pa)
        along = YieldGrid(**{k: (v[:, 0] if isinstance(v, np.ndarray) and v.ndim == 2 else v)
                             for k, v in along.__dict__.items()})

    e0_kj = model.barrier_J_per_mol / 1e3
    for label, g in (("temperature", grid), ("altitude", along)):
        if g is None or not np.any(g.below_threshold):
            continue
        n_below, n = int(np.sum(g.below_threshold)), g.below_threshold.size
        lo = float(np.min(g.energy_J_per_mol)) / 1e3
        what = "everywhere" if n_below == n else f"at {n_below} of {n} {label}s"
        tun = " (no tunnelling is counted below the barrier)" if model.tunnelling == "eckart" else ""
        warnings.append(f"excitation {spec.name!r}: the energised {model.reactant.name} "
                        f"({spec.description} plus thermal energy, from {lo:.1f} kJ/mol) is below the barrier "
                        f"E0 = {e0_kj:.1f} kJ/mol of channel {channel.name!r} {what}: fraction reacting is 0{tun}")
    if _delta_e_down(spec, settings, np.array([300.0])) is None:
        warnings.append(f"excitation {spec.name!r}: no delta_E_down_cm1 (excitation or [falloff]); the stepwise "
                        "model is not computed")
    if spec.collision_efficiency is None and settings.energy_transfer == "strong":
        warnings.append(f"excitation {spec.name!r}: no collision efficiency in [falloff]; Stern-Volmer uses "
                        "beta_c = 1 (every collision deactivates)")
    return ExcitationResult(spec, model, grid, along, None if prof is None else prof.altitude_m,
                            None if prof is None else prof.source, curve, tuple(warnings))


def study_excitations(study: Study, specs=None, *, progress=None) -> list[ExcitationResult]:
    """Results for ``specs`` (default: the study's ``[[excitation]]`` entries)."""
    specs = list(study.sections.get("excitation", ()) if specs is None else specs)
    if not specs:
        raise InputError("no excitation to follow", file=study.file, field="excitation",
                         hint="add an [[excitation]] table to the study or give --wavelength, --wavenumber "
                              "or --energy")
    return [excitation_yield(study, s) for s in (progress(specs) if progress else specs)]


def resolve_profile(value: str, base: str | Path | None) -> str:
    """``us-standard-1976`` as it is; a CSV path relative to ``base`` (the study file's folder)."""
    if value.lower() in (US_STANDARD_1976, "us-1976", "us-standard-atmosphere-1976"):
        return US_STANDARD_1976
    p = Path(value)
    if not p.is_absolute() and base is not None:
        p = Path(base) / p
    return str(p)


__all__ = ["ExcitationSpec", "ExcitationResult", "YieldGrid", "excitation_yield", "study_excitations",
           "resolve_profile", "US_STANDARD_1976"]
