"""Energised molecules of a study: the fraction that reacts before collisions deactivate it.

This step places each ``[[excitation]]`` in its channel, [falloff] settings, pressures and
altitude profile; the physics of one excitation is :mod:`tstrate.physics.activation`.

An excitation (a photon or an overtone, given as a wavelength, a wavenumber or
an energy) lifts the reactant of a unimolecular channel to
E = E_exc + <E>(T), with <E>(T) the mean thermal energy of the reactant's
active degrees of freedom - the vibrations and the active K-rotor counted in
the RRKM density of states - averaged over its thermal distribution on the
grain (about RT/2 more than the vibrational energy alone). The channel's
RRKM k(E) comes from :func:`tstrate.physics.unimolecular.unimolecular_model` (same
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

import numpy as np

from tstrate.errors import InputError
from tstrate.model import Study
from tstrate.model.settings import US_STANDARD_1976, US_STANDARD_RANGE_KM, ExcitationSpec
from tstrate.physics.activation import (ExcitationResult, YieldGrid, delta_e_down_J_per_mol,
                                        master_equation_populations, mean_vibrational_energy_J_per_mol,
                                        yields_at)
from tstrate.physics.atmosphere import AtmosphereProfile, us_standard_atmosphere_1976
from tstrate.study.falloff import bath_parameters, channel_model, falloff_section, study_number_densities
from tstrate.units import K_B, R

log = logging.getLogger(__name__)



def _profile(study: Study, spec: ExcitationSpec) -> AtmosphereProfile:
    if spec.profile == US_STANDARD_1976:
        lo, hi = spec.altitude_range_km or US_STANDARD_RANGE_KM
        n = int(math.floor((hi - lo) / spec.altitude_step_km + 1e-9))
        z_km = lo + spec.altitude_step_km * np.arange(n + 1)
        if z_km[-1] < hi - 1e-9:
            z_km = np.append(z_km, hi)
        return us_standard_atmosphere_1976(z_km * 1e3)
    prof = spec.profile_table
    if prof is None:
        raise InputError(f"the profile {spec.profile!r} has not been read", field="profile",
                         hint="read it with tstrate.io.profiles.read_profile_csv into profile_table")
    if spec.altitude_range_km is None:
        return prof
    lo, hi = spec.altitude_range_km
    keep = (prof.altitude_m >= lo * 1e3 - 1e-6) & (prof.altitude_m <= hi * 1e3 + 1e-6)
    if not np.any(keep):
        raise InputError(f"no altitude of the profile lies in {lo:g} .. {hi:g} km",
                         field="altitude_km", hint=f"the profile is {spec.profile}")
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
        raise InputError(f"unknown channel {spec.channel!r}", field="channel",
                         hint="use one of " + ", ".join(c.name for c in study.channels)) from None
    if channel.order != 1:
        raise InputError(f"channel {channel.name!r} has {channel.order} reactants; an energised molecule needs "
                         "a unimolecular channel", field="channel")
    settings = falloff_section(study).for_channel(channel.name)
    has_pressures = bool(study.conditions.pressure_Pa.size or study.conditions.number_density_m3.size)
    scan = has_pressures if spec.pressure_scan is None else spec.pressure_scan
    if scan and not has_pressures:
        raise InputError("a pressure scan needs pressures in [conditions], and the study gives none",
                         field="pressures",
                         hint="add pressure_bar = [...] to [conditions], or give a profile")
    if not scan and spec.profile is None:
        raise InputError("nothing to evaluate: no pressures in [conditions] and no altitude profile",
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
    # and RT/2 for each free internal rotor, RT for each hindered one (its harmonic limit)
    reactant = study.species[channel.reactants[0]]
    e_top = spec.energy_J_per_mol + float(np.max(mean_vibrational_energy_J_per_mol(
        reactant.harmonic_frequencies_cm1, t_all) + (1.0 + 0.5 * len(reactant.free_rotors) + len(reactant.hindered_rotors)) * R * t_all))
    model = channel_model(study, channel, settings, max_temperature_K=float(t_all.max()),
                               min_top_energy_J_per_mol=e_top)
    warnings = list(model.warnings)

    grid = curve = None
    if scan:
        pressures, m = study_number_densities(study, t_scan)
        grid = yields_at(model, spec, settings, bath, t_scan, m, pressures)
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
        curve = yields_at(model, spec, settings, bath, t_scan, m_curve, p_curve)
    along = None
    if prof is not None:
        along = yields_at(model, spec, settings, bath, prof.temperature_K, prof.number_density_m3[:, None],
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
    if delta_e_down_J_per_mol(spec, settings, np.array([300.0])) is None:
        warnings.append(f"excitation {spec.name!r}: no delta_E_down_cm1 (excitation or [falloff]); the stepwise "
                        "model is not computed")
    if spec.collision_efficiency is None and settings.energy_transfer == "strong":
        warnings.append(f"excitation {spec.name!r}: no collision efficiency in [falloff]; Stern-Volmer uses "
                        "beta_c = 1 (every collision deactivates)")
    populations = None
    if grid is not None and grid.master_equation is not None:
        # the energised molecule at the first temperature and the middle study pressure
        j = grid.number_density_m3.shape[1] // 2
        de = None if grid.delta_E_down_J_per_mol is None else float(grid.delta_E_down_J_per_mol[0])
        omega = float(grid.collision_frequency_per_s[0, j])
        populations = (float(t_scan[0]), float(grid.number_density_m3[0, j]), omega,
                       master_equation_populations(model, spec.energy_J_per_mol, float(t_scan[0]), omega, de))
    return ExcitationResult(spec, model, grid, along, None if prof is None else prof.altitude_m,
                            None if prof is None else prof.source, curve, tuple(warnings), populations)


def study_excitations(study: Study, specs=None, *, progress=None) -> list[ExcitationResult]:
    """Results for ``specs`` (default: the study's ``[[excitation]]`` entries).

    Errors about one of the study's own excitations name its table (``excitation[i].key``) in the
    study file; errors about ``specs`` given by the caller name only the key, for the caller to place.
    """
    own = specs is None
    specs = list(study.sections.get("excitation", ()) if own else specs)
    if not specs:
        raise InputError("no excitation to follow", file=study.file, field="excitation",
                         hint="add an [[excitation]] table to the study or give --wavelength, --wavenumber "
                              "or --energy")
    out = []
    for i, spec in enumerate(progress(specs) if progress else specs):
        try:
            out.append(excitation_yield(study, spec))
        except InputError as exc:
            if not own:
                raise
            raise exc.within(file=study.file, prefix=f"excitation[{i}]") from None
    return out


__all__ = ["excitation_yield", "study_excitations"]
