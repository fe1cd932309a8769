"""The main job end to end: compute everything a study asks for, then write it out.

Python use (the same as ``tstrate run``)::

    from tstrate.io.study import read_study
    from tstrate.study.run import compute_study
    from tstrate.output.folder import write_outputs

    study = read_study("molecules/carbonic_acid/study.toml")
    result = compute_study(study)            # thermochemistry, rates, comparisons, falloff, fits
    result.rates[0].k                        # SI arrays over study.conditions.temperature_K
    write_outputs(result, "out")             # mechanism.yaml, fits.json, tables, plots, report

Steps run only when the study asks for them: comparisons need ``[[comparison]]``,
falloff needs pressures in ``[conditions]``, energised-molecule yields need
``[[excitation]]``.
"""

from __future__ import annotations

import logging
from dataclasses import dataclass, field
from typing import Callable

import numpy as np

from tstrate.model import Study
from tstrate.physics.thermo import HARMONIC, LowModes, Thermo, electronic_level_warning, thermochemistry

log = logging.getLogger(__name__)

#: the temperatures of the thermochemistry table besides the study's [K]
THERMO_EXTRA_TEMPERATURES_K = (298.15,)


@dataclass(frozen=True)
class StudyResult:
    """Everything computed for one study (each part None when the study does not ask for it).

    thermo: one Thermo per species, at the study temperatures plus 298.15 K.
    rates: tst.ChannelRates per channel.
    comparisons: catalysis.ComparisonResult per [[comparison]], or None.
    falloff: pressure.StudyFalloff, or None.
    excitations: energised-molecule results per [[excitation]], or None.
    fits: study.fits.StudyFits.
    pressure_fits: channel -> :class:`~tstrate.expressions.pressure_table.PressureTableFit`, the
        modified Arrhenius fits of k(T) at each pressure of a falloff channel (its rows: pressure
        [Pa] or None, [M] [m^-3] at the highest temperature, fit).
    warnings: sentences for the report.
    capture: physics.capture.CaptureLimit per bimolecular channel (TST against the capture ceiling).
    isotopes: study.isotopes.IsotopeResult when the study has an [isotopes] section, else None.
    uncertainty: study.uncertainty.StudyUncertainty when the study's [uncertainty] asks for it, else None.
    evaluation_forms: study.evaluation_forms.StudyEvaluationForms (A and E/R per channel, the NASA/JPL
        and IUPAC falloff forms per falloff channel), or None.
    references: study.references.ReferenceComparison per [[reference_rate]] (empty without).
    conformers: species name -> :class:`~tstrate.physics.ensembles.EnsembleParts` (members, relative
        energies, populations against the study temperatures) of each conformer ensemble.
    conformer_effects: per channel that uses an ensemble, k and Kc with the ensembles over k and Kc
        with their representative conformers alone (:func:`tstrate.study.rates.conformer_effects`).
    associations: study.associations.AssociationResult per [[association]] (barrierless), or None.
    """

    study: Study
    low_modes: LowModes
    thermo: tuple[Thermo, ...]
    rates: tuple
    comparisons: tuple | None
    falloff: object | None
    excitations: tuple | None
    fits: object
    pressure_fits: dict = field(default_factory=dict)
    warnings: tuple[str, ...] = field(default=())
    capture: tuple = field(default=())
    isotopes: object | None = None
    uncertainty: object | None = None
    evaluation_forms: object | None = None
    references: tuple = ()
    conformers: dict = field(default_factory=dict)
    conformer_effects: tuple = ()
    associations: tuple | None = None


def steps(study: Study) -> list[str]:
    steps = ["thermochemistry", "rate constants"]
    if study.sections.get("comparison"):
        steps.append("catalysed routes")
    if (study.conditions.pressure_Pa.size or study.conditions.number_density_m3.size) and study.channels:
        steps.append("falloff")
    if study.sections.get("association"):
        steps.append("barrierless associations")
    if study.sections.get("excitation"):
        steps.append("energised molecules")
    if study.sections.get("isotopes"):
        steps.append("isotopologues")
    steps.append("fits")
    if wants_uncertainty(study):
        steps.append("uncertainty")
    return steps


def wants_uncertainty(study: Study) -> bool:
    """Whether ``tstrate run`` computes the uncertainty step (an [uncertainty] section with run = true)."""
    unc = study.sections.get("uncertainty")
    return unc is not None and unc.run


def compute_study(study: Study, *, low_modes: LowModes = HARMONIC,
                  progress: Callable[[str], None] | None = None,
                  uncertainty_progress: Callable[[str, int, int], None] | None = None) -> StudyResult:
    """Compute everything ``study`` asks for. ``progress(step)`` is called before each step;
    ``uncertainty_progress(stage, done, total)`` within the uncertainty step."""
    from tstrate.study.rates import (capture_limits, conformer_effects, connection_warnings, study_conformers,
                                     study_rates)

    def step(name):
        log.info("%s", name)
        if progress:
            progress(name)

    warnings: list[str] = [f"species {name}: {w}" for name, sp in study.species.items() for w in sp.warnings]
    T = study.conditions.temperature_K
    T_thermo = np.unique(np.concatenate([T, THERMO_EXTRA_TEMPERATURES_K]))

    step("thermochemistry")
    thermo = tuple(thermochemistry(sp, T_thermo, low_modes=low_modes,
                                   pressure_Pa=study.conditions.standard_pressure_Pa)
                   for sp in study.species.values())
    warnings += [w for w in (electronic_level_warning(sp) for sp in study.species.values()) if w]
    conformers = study_conformers(study, low_modes=low_modes)
    warnings += [f"species {name}: {w}" for name, sp in study.species.items() for c in sp.conformers
                 for w in c.warnings]

    step("rate constants")
    rates = tuple(study_rates(study, low_modes=low_modes))
    effects = tuple(conformer_effects(study, rates, low_modes=low_modes)) if conformers else ()
    capture, w = capture_limits(study, rates)
    warnings += w + connection_warnings(study)

    comparisons = None
    if study.sections.get("comparison"):
        step("catalysed routes")
        from tstrate.study.routes import study_comparisons

        comparisons = tuple(study_comparisons(study, low_modes=low_modes))
        for comp in comparisons:
            warnings += list(comp.warnings)

    falloff = None
    troe = {}
    grid = {}
    pressure_fits = {}
    if (study.conditions.pressure_Pa.size or study.conditions.number_density_m3.size) and study.channels:
        step("falloff")
        from tstrate.study.falloff import study_falloff

        falloff = study_falloff(study)
        warnings += list(falloff.warnings)
        for cf in falloff.channels:
            off = high_pressure_mismatch(cf)
            if off > FALLOFF_EXPORT_MAX_MISMATCH:
                # k(E) does not reproduce its own high-pressure limit: its falloff is not exported
                warnings.append(
                    f"channel {cf.name}: k_inf from the RRKM k(E) differs from canonical TST by up to "
                    f"{100 * off:.0f} % (more than {100 * FALLOFF_EXPORT_MAX_MISMATCH:.0f} %; typically too few "
                    "states per grain in a small molecule), so its falloff is not exported to the mechanism, "
                    "which keeps the high-pressure TST expression; the falloff tables still show it")
                continue
            if cf.troe.k0 is not None:  # the Troe expression with its limits, for the mechanism
                troe[cf.name] = cf.troe
            grid[cf.name] = export_grid(study, cf)   # k(T, P) on the grid and between its points
            pressure_fits[cf.name], w = fits_at_each_pressure(cf)

    associations = None
    if study.sections.get("association"):
        step("barrierless associations")
        from tstrate.study.associations import study_associations

        associations = study_associations(study)
        for a in associations:
            warnings += list(a.warnings)

    excitations = None
    if study.sections.get("excitation"):
        step("energised molecules")
        from tstrate.study.excitations import study_excitations

        excitations = tuple(study_excitations(study))
        for ex in excitations:
            warnings += list(ex.warnings)

    isotopes = None
    if study.sections.get("isotopes"):
        step("isotopologues")
        from tstrate.study.isotopes import study_isotopes

        isotopes = study_isotopes(study, low_modes=low_modes, comparisons=comparisons)

    step("fits")
    from tstrate.model.settings import FitOptions
    from tstrate.study.fits import fit_study

    opts = study.sections.get("fits") or FitOptions()
    fits = fit_study(study, low_modes=low_modes, max_deviation=opts.max_deviation, T0_K=opts.T0_K,
                     split=opts.split, mechanism_form=opts.mechanism_form, troe=troe or None,
                     chebyshev_temperature_terms=opts.chebyshev_temperature_terms,
                     chebyshev_pressure_terms=opts.chebyshev_pressure_terms,
                     falloff_grid=grid or None, rates=list(rates))
    if falloff is not None:
        # the Troe fit's parameters at a bound concern the mechanism only when it holds that Troe form
        # (the report's falloff section states them for its Troe table either way)
        from tstrate.expressions.troe import troe_bound_notes

        kinds = {c.name: c.mechanism_kind for c in fits.channels}
        unused = {f"channel {cf.name!r}: {n}" for cf in falloff.channels if kinds.get(cf.name) != "troe"
                  for n in troe_bound_notes(cf.troe)}
        warnings = [w for w in warnings if w not in unused]
    warnings += list(fits.warnings)
    for cf in fits.channels:
        warnings += list(cf.warnings)
    from tstrate.study.evaluation_forms import study_evaluation_forms
    from tstrate.study.references import compare_references

    evaluation_forms = study_evaluation_forms(study, rates, falloff, low_modes=low_modes,
                                              max_deviation=opts.max_deviation)
    references = compare_references(study, rates, falloff)
    result = StudyResult(study=study, low_modes=low_modes, thermo=thermo, rates=rates,
                         comparisons=comparisons, falloff=falloff, excitations=excitations, fits=fits,
                         pressure_fits=pressure_fits, warnings=tuple(dict.fromkeys(warnings)), capture=capture,
                         isotopes=isotopes, evaluation_forms=evaluation_forms, references=references,
                         conformers=conformers, conformer_effects=effects, associations=associations)
    if wants_uncertainty(study):
        step("uncertainty")
        from dataclasses import replace

        from tstrate.study.uncertainty import study_uncertainty

        unc = study_uncertainty(result, progress=uncertainty_progress)
        result = replace(result, uncertainty=unc,
                         warnings=tuple(dict.fromkeys(result.warnings + tuple(f"uncertainty: {w}" for w in unc.warnings))))
    return result


#: a falloff channel whose k_inf (from k(E)) differs from canonical TST by more than this fraction at
#: any temperature is not exported to the mechanism (its k(E) is not trustworthy there)
FALLOFF_EXPORT_MAX_MISMATCH = 0.10


def high_pressure_mismatch(cf) -> float:
    """max |k_inf / k_TST - 1| over the temperatures of a falloff channel (0 when TST is not known)."""
    ratio = np.asarray(cf.k_high_pressure_per_s, dtype=float) / np.asarray(cf.canonical_tst_per_s, dtype=float)
    ratio = ratio[np.isfinite(ratio)]
    return float(np.max(np.abs(ratio - 1.0))) if ratio.size else 0.0


def export_grid(study: Study, cf):
    """The :class:`~tstrate.study.fits.ChannelGrid` of a falloff channel: k(T, P) on the study's grid, its
    k_inf, and (with pressures) k(T, P) recomputed on the grid joined with the points between grid
    points, where the exported expression is checked."""
    from tstrate.expressions.choice import between_pressures, between_temperatures
    from tstrate.study.falloff import falloff_rates_at
    from tstrate.study.fits import ChannelGrid

    T = np.asarray(cf.temperature_K, dtype=float)
    if cf.pressure_Pa is None:
        return ChannelGrid(None, cf.rate_constant_per_s, cf.k_high_pressure_per_s,
                           number_density_m3=cf.number_density_m3)
    P = np.asarray(cf.pressure_Pa, dtype=float)
    T_f = np.unique(np.concatenate([T, between_temperatures(T)]))
    P_f = np.unique(np.concatenate([P, between_pressures(P)]))
    channel = next(c for c in study.channels if c.name == cf.name)
    k_f = falloff_rates_at(study, channel, T_f, P_f)
    return ChannelGrid(P, cf.rate_constant_per_s, cf.k_high_pressure_per_s, cf.number_density_m3,
                       fine_temperature_K=T_f, fine_pressure_Pa=P_f, fine_k_SI=k_f)


def fits_at_each_pressure(cf, *, max_deviation: float | None = None):
    """Modified Arrhenius fits of a falloff channel's k(T) at each tabulated pressure (number density).

    Returns (:class:`~tstrate.expressions.pressure_table.PressureTableFit`, warnings).
    """
    from tstrate.expressions.arrhenius import MAX_DEVIATION_DEFAULT
    from tstrate.expressions.pressure_table import fit_pressure_table

    limit = MAX_DEVIATION_DEFAULT if max_deviation is None else max_deviation
    warnings = []
    T = cf.temperature_K
    table = fit_pressure_table(T, cf.rate_constant_per_s, order=1, pressure_Pa=cf.pressure_Pa,
                               number_density_m3=cf.number_density_m3[-1, :], modified=len(T) >= 3,
                               max_deviation=limit)
    worst = table.max_rel_deviation
    if worst > limit:
        warnings.append(f"channel {cf.name}: modified Arrhenius fits at fixed pressure deviate by up to "
                        f"{100 * worst:.1f} % (split the temperature range for a mechanism)")
    return table, warnings
