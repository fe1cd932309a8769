"""Falloff of a study's unimolecular channels: the study's species, [falloff] settings, bath gas and
pressures, given to :mod:`tstrate.physics.unimolecular` (k(E) of a channel and its falloff on a
grid). Errors of the physics about a channel are placed in the study file here.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Callable, Iterable

import numpy as np

from tstrate.arrays import temperatures_K
from tstrate.errors import InputError
from tstrate.model import Channel, Study
from tstrate.model.settings import FalloffSection, FalloffSettings
from tstrate.physics import collisions as coll
from tstrate.physics.tst import channel_rates
from tstrate.physics.unimolecular import ChannelFalloff, UnimolecularModel, falloff_on_grid, unimolecular_model
from tstrate.units import number_density_m3


def falloff_section(study: Study) -> FalloffSection:
    """The study's ``[falloff]`` section, or the defaults when it has none."""
    section = study.sections.get("falloff")
    return section if section is not None else FalloffSection(FalloffSettings())


def _settings_key(study: Study, channel: str) -> str:
    """Where a channel's falloff settings sit in the study file."""
    return f"falloff.channels.{channel}" if channel in falloff_section(study).channels else "falloff"


def channel_model(study: Study, channel: Channel, settings: FalloffSettings | None = None, *,
                  max_temperature_K: float, min_top_energy_J_per_mol: float = 0.0) -> UnimolecularModel:
    """k(E) of one unimolecular channel of the study; errors name the channel in the study file,
    and a refined grain is said with the file and key of the grain."""
    settings = settings or falloff_section(study).for_channel(channel.name)
    try:
        model = unimolecular_model(channel, study.species, settings, max_temperature_K=max_temperature_K,
                                   min_top_energy_J_per_mol=min_top_energy_J_per_mol)
    except InputError as exc:
        i = study.channels.index(channel) if channel in study.channels else None
        raise exc.within(file=study.file, prefix="channel" if i is None else f"channel[{i}]") from None
    if model.grain_note:
        where = f"{study.file or 'study'} [{_settings_key(study, channel.name)}.grain_cm1]"
        model = replace(model, warnings=(f"{where}: {model.grain_note}",) + model.warnings)
    return model


def bath_parameters(study: Study, name: str | None = None) -> coll.LennardJones:
    """Lennard-Jones parameters of the study's bath gas (``[conditions] bath_gas``, or ``name``).

    A built-in name (:data:`tstrate.physics.collisions.BATH_GASES`, case-insensitive) or a
    species of the study that has ``lennard_jones`` in its file.
    """
    name = study.conditions.bath_gas if name is None else name
    if name is None:
        raise InputError("falloff needs a bath gas", file=study.file, field="conditions.bath_gas",
                         hint="add bath_gas = \"N2\" (or O2, air, CO2, Ar, He, H2O) to [conditions]")
    for key, value in coll.BATH_GASES.items():
        if key.lower() == str(name).lower():
            return value
    sp = study.species.get(name)
    if sp is not None and sp.lennard_jones is not None:
        sigma, eps = sp.lennard_jones
        return coll.LennardJones(name, float(sigma), float(eps), f"species file {sp.source}",
                                 mass_amu=float(np.sum(sp.masses_amu)))
    raise InputError(f"unknown bath gas {name!r}", file=study.file, field="conditions.bath_gas",
                     hint="use one of " + ", ".join(coll.BATH_GASES) + ", or a species of the study with "
                          "lennard_jones in its file")





def study_number_densities(study: Study, temperature_K) -> tuple[np.ndarray | None, np.ndarray]:
    """(pressures [Pa] or None, [M] (n_T, n_P) [m^-3]) from ``[conditions]``; InputError when there are none."""
    cond = study.conditions
    t = temperatures_K(temperature_K, ndim=1)
    if cond.pressure_Pa.size:
        p = np.asarray(cond.pressure_Pa, dtype=float)
        if np.any(~np.isfinite(p)) or np.any(p <= 0):
            raise InputError("pressures must be positive", file=study.file, field="conditions.pressure_bar")
        return p, number_density_m3(p[None, :], t[:, None])
    if cond.number_density_m3.size:
        m = np.asarray(cond.number_density_m3, dtype=float)
        if np.any(~np.isfinite(m)) or np.any(m <= 0):
            raise InputError("number densities must be positive", file=study.file,
                             field="conditions.number_density_per_cm3")
        return None, np.broadcast_to(m, (t.size, m.size)).copy()
    raise InputError("falloff needs pressures, and the study gives none", file=study.file,
                     field="conditions.pressure_bar",
                     hint="add pressure_bar = [...] (or pressure_Pa, pressure_Torr, number_density_per_cm3) "
                          "to [conditions]")





def channel_falloff(study: Study, channel: Channel, *, settings: FalloffSettings | None = None,
                    temperature_K=None, bath: coll.LennardJones | None = None) -> ChannelFalloff:
    """Falloff of one unimolecular channel at the study's temperatures and pressures (or the ones given)."""
    settings = settings or falloff_section(study).for_channel(channel.name)
    try:
        t = temperatures_K(study.conditions.temperature_K if temperature_K is None else temperature_K, ndim=1)
    except InputError as exc:
        raise exc.within(file=study.file, prefix="conditions") from None
    pressures, m = study_number_densities(study, t)
    bath = bath or bath_parameters(study)
    model = channel_model(study, channel, settings, max_temperature_K=float(t.max()))
    return falloff_on_grid(model, settings, bath, t, m, pressures,
                           canonical_tst_per_s=canonical_tst(study, channel, t, model.tunnelling))


def canonical_tst(study: Study, channel: Channel, temperature_K, tunnelling: str = "none") -> np.ndarray:
    """k_TST(T) [s^-1] of the channel from :func:`tstrate.physics.tst.channel_rates`, with Eckart
    tunnelling when ``tunnelling == "eckart"`` and without tunnelling otherwise."""
    ch = replace(channel, tunnelling="eckart" if tunnelling == "eckart" else "none")
    return channel_rates(ch, study.species, temperature_K).k


@dataclass(frozen=True)
class SkippedChannel:
    """A channel without a falloff treatment, and why."""

    name: str
    order: int
    reason: str


@dataclass(frozen=True)
class StudyFalloff:
    """Falloff of every unimolecular channel of a study."""

    study_file: str | None
    title: str
    bath: coll.LennardJones
    channels: tuple[ChannelFalloff, ...]
    skipped: tuple[SkippedChannel, ...]
    warnings: tuple[str, ...] = ()


def study_falloff(study: Study, *, temperature_K=None,
                  progress: Callable[[Iterable], Iterable] | None = None) -> StudyFalloff:
    """Falloff of every unimolecular channel of ``study``; other channels are listed as skipped.

    ``progress`` may wrap the iterable of channels (e.g. a tqdm progress bar).
    """
    if not study.channels:
        raise InputError("the study has no [[channel]]", file=study.file, field="channel")
    t = study.conditions.temperature_K if temperature_K is None else temperature_K
    study_number_densities(study, temperatures_K(t, ndim=1))  # no pressures: fail first
    bath = bath_parameters(study)
    section = falloff_section(study)
    uni = [c for c in study.channels if c.order == 1]
    skipped = tuple(SkippedChannel(c.name, c.order,
                                   f"falloff is not computed for channels of order {c.order}; "
                                   "only unimolecular channels have a falloff treatment here")
                    for c in study.channels if c.order != 1)
    out = []
    for ch in (progress(uni) if progress else uni):
        out.append(channel_falloff(study, ch, settings=section.for_channel(ch.name), temperature_K=t, bath=bath))
    warnings = tuple(w for r in out for w in r.warnings)
    return StudyFalloff(study.file, study.title, bath, tuple(out), skipped, warnings)
