"""Falloff of a study's unimolecular channels: the study's species, [falloff] settings, bath gas and
pressures, given to :mod:`tstrate.physics.unimolecular` (k(E) of a channel and its falloff curves
on a grid), and Troe's form fitted to those curves (:mod:`tstrate.expressions.troe`), with its
limits as Arrhenius expressions for mechanisms. Errors of the physics about a channel are placed
in the study file here.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, fields, replace
from typing import Callable, Iterable

import numpy as np

from tstrate.arrays import temperatures_K
from tstrate.errors import InputError
from tstrate.model import Channel, Study
from tstrate.model.settings import FalloffSection, FalloffSettings
from tstrate.physics import collisions as coll
from tstrate.physics.tst import channel_rates
from tstrate.expressions.arrhenius import ArrheniusFit, fit_arrhenius
from tstrate.expressions.troe import TroeFit, fit_troe, fit_troe_effective_k0, troe_bound_notes
from tstrate.physics.falloff import lindemann_hinshelwood, troe_rate
from tstrate.physics.unimolecular import (ChannelFalloffCurves, UnimolecularModel, falloff_on_grid,
                                          unimolecular_model)
from tstrate.units import rate_from_SI
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





@dataclass(frozen=True, kw_only=True)
class ChannelFalloff(ChannelFalloffCurves):
    """Falloff of one unimolecular channel: the curves of the physics plus the Troe fit.

    troe: the :class:`~tstrate.expressions.troe.TroeFit`, with k0 and kinf as Arrhenius
    expressions of troe_k0_m3_per_s and k_high_pressure_per_s (:func:`limit_expression`; None
    with fewer than two temperatures) and the study's bath gas;
    troe_k0_m3_per_s (n_T) [m^3 s^-1]: the k_0 inside the Troe form - the low-pressure limit
    itself, or for Eckart channels an effective k_0 fitted with the Troe parameters
    (:func:`~tstrate.expressions.troe.fit_troe_effective_k0`);
    lindemann_per_s and troe_per_s (n_T, n_P) [s^-1]: k_inf k0[M] / (k_inf + k0[M]) and the Troe
    form, both with that k_0 and the tabulated k_inf (so troe / lindemann is Troe's broadening F);
    troe_Fcent (n_T). The warnings add one sentence per Troe parameter at a bound.
    """

    troe: TroeFit
    troe_k0_m3_per_s: np.ndarray = field(repr=False)
    troe_per_s: np.ndarray = field(repr=False)
    troe_Fcent: np.ndarray = field(repr=False)
    lindemann_per_s: np.ndarray = field(repr=False)


def limit_expression(temperature_K, k_SI, *, order: int) -> ArrheniusFit:
    """An Arrhenius expression of a falloff limit k(T) [SI per molecule] for mechanisms.

    The modified form with three or more temperatures; when that form is unrepresentable in a
    mechanism (A (1 K / T0)^n beyond the float range, as happens for an effective k0 over a
    short temperature range), the two-parameter form is used instead and its larger deviation
    is reported.
    """
    if len(temperature_K) >= 3:
        fit = fit_arrhenius(temperature_K, k_SI, order=order, modified=True)
        ln_a = math.log(float(rate_from_SI(fit.A, order))) - fit.n * math.log(fit.T0_K)
        if abs(ln_a) < 600:
            return fit
    return fit_arrhenius(temperature_K, k_SI, order=order)


def fit_falloff(curves: ChannelFalloffCurves, *, bath_gas: str | None = None) -> ChannelFalloff:
    """Troe's form fitted to a channel's falloff curves (on their common [M] grid), with the
    effective k_0 for Eckart channels, its limits as Arrhenius expressions and ``bath_gas``."""
    t, m = curves.temperature_K, curves.number_density_m3
    k0, k_inf = curves.k_low_pressure_m3_per_s, curves.k_high_pressure_per_s
    m_fit, fit_T2 = curves.troe_fit_number_density_m3, curves.settings.fit_T2
    if curves.model.tunnelling == "eckart":
        troe, k0_troe = fit_troe_effective_k0(t, m_fit, curves.troe_fit_rate_per_s, k0, k_inf, fit_T2=fit_T2)
    else:
        troe, k0_troe = fit_troe(t, m_fit, curves.troe_fit_rate_per_s, k0, k_inf, fit_T2=fit_T2), k0
    warnings = list(curves.warnings) + [f"channel {curves.name!r}: {note}" for note in troe_bound_notes(troe)]
    troe_k = troe_rate(k0_troe[:, None], k_inf[:, None], m, t[:, None], troe.a, troe.T3_K, troe.T1_K, troe.T2_K)
    lind = lindemann_hinshelwood(k0_troe[:, None], k_inf[:, None], m)
    if np.unique(t).size >= 2:
        troe = troe.with_limits(limit_expression(t, k0_troe, order=curves.model.channel.order + 1),
                                limit_expression(t, k_inf, order=curves.model.channel.order), bath_gas=bath_gas)
    elif bath_gas is not None:
        troe = replace(troe, bath_gas=bath_gas)
    base = {f.name: getattr(curves, f.name) for f in fields(ChannelFalloffCurves)}
    base["warnings"] = tuple(warnings)
    return ChannelFalloff(**base, troe=troe, troe_k0_m3_per_s=k0_troe, troe_per_s=troe_k,
                          troe_Fcent=troe.fcent(t), lindemann_per_s=lind)


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
    curves = falloff_on_grid(model, settings, bath, t, m, pressures,
                             canonical_tst_per_s=canonical_tst(study, channel, t, model.tunnelling))
    return fit_falloff(curves, bath_gas=study.conditions.bath_gas)


def falloff_rates_at(study: Study, channel: Channel, temperature_K, pressure_Pa, *,
                     settings: FalloffSettings | None = None, bath: coll.LennardJones | None = None) -> np.ndarray:
    """k(T, P) [s^-1] (n_T, n_P) of one unimolecular channel at the temperatures [K] and pressures [Pa]
    given (e.g. between the study's grid points, where exported expressions are checked), computed
    as on the study's grid."""
    settings = settings or falloff_section(study).for_channel(channel.name)
    t = temperatures_K(temperature_K, ndim=1)
    p = np.asarray(pressure_Pa, dtype=float)
    bath = bath or bath_parameters(study)
    model = channel_model(study, channel, settings, max_temperature_K=float(t.max()))
    curves = falloff_on_grid(model, settings, bath, t, number_density_m3(p[None, :], t[:, None]), p)
    return np.asarray(curves.rate_constant_per_s, dtype=float)


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
