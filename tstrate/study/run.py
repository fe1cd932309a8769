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
from tstrate.physics.thermo import HARMONIC, LowModes, Thermo, thermochemistry

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
    pressure_fits: channel -> list of (pressure [Pa] or None, [M] [m^-3] at the highest
        temperature, modified Arrhenius fit of k(T) at that pressure), for falloff channels.
    warnings: sentences for the report.
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


def steps(study: Study) -> list[str]:
    steps = ["thermochemistry", "rate constants"]
    if study.sections.get("comparison"):
        steps.append("catalysed routes")
    if study.conditions.pressure_Pa.size or study.conditions.number_density_m3.size:
        steps.append("falloff")
    if study.sections.get("excitation"):
        steps.append("energised molecules")
    steps.append("fits")
    return steps


def compute_study(study: Study, *, low_modes: LowModes = HARMONIC,
                  progress: Callable[[str], None] | None = None) -> StudyResult:
    """Compute everything ``study`` asks for. ``progress(step)`` is called before each step."""
    from tstrate.study.rates import study_rates

    def step(name):
        log.info("%s", name)
        if progress:
            progress(name)

    warnings: list[str] = [f"species {name}: {w}" for name, sp in study.species.items() for w in sp.warnings]
    T = study.conditions.temperature_K
    T_thermo = np.unique(np.concatenate([T, THERMO_EXTRA_TEMPERATURES_K]))

    step("thermochemistry")
    thermo = tuple(thermochemistry(sp, T_thermo, low_modes=low_modes) for sp in study.species.values())

    step("rate constants")
    rates = tuple(study_rates(study, low_modes=low_modes))

    comparisons = None
    if study.sections.get("comparison"):
        step("catalysed routes")
        from tstrate.study.routes import study_comparisons

        comparisons = tuple(study_comparisons(study, low_modes=low_modes))

    falloff = None
    troe = {}
    grid = {}
    pressure_fits = {}
    if study.conditions.pressure_Pa.size or study.conditions.number_density_m3.size:
        step("falloff")
        from tstrate.study.falloff import study_falloff

        falloff = study_falloff(study)
        warnings += list(falloff.warnings)
        for cf in falloff.channels:
            troe[cf.name] = troe_data(cf, study)
            if cf.pressure_Pa is not None:  # k(T, P) on the study's grid, for Chebyshev fits
                grid[cf.name] = (cf.pressure_Pa, cf.rate_constant_per_s)
            pressure_fits[cf.name], w = fits_at_each_pressure(cf)
            warnings += w

    excitations = None
    if study.sections.get("excitation"):
        step("energised molecules")
        from tstrate.study.excitations import study_excitations

        excitations = tuple(study_excitations(study))
        for ex in excitations:
            warnings += list(ex.warnings)

    step("fits")
    from tstrate.model.settings import FitOptions
    from tstrate.study.fits import fit_study

    opts = study.sections.get("fits") or FitOptions()
    fits = fit_study(study, low_modes=low_modes, max_deviation=opts.max_deviation, T0_K=opts.T0_K,
                     split=opts.split, mechanism_form=opts.mechanism_form, troe=troe or None,
                     chebyshev_temperature_terms=opts.chebyshev_temperature_terms,
                     chebyshev_pressure_terms=opts.chebyshev_pressure_terms,
                     falloff_grid=grid or None, rates=list(rates))
    warnings += list(fits.warnings)
    for cf in fits.channels:
        warnings += list(cf.warnings)
    return StudyResult(study=study, low_modes=low_modes, thermo=thermo, rates=rates,
                       comparisons=comparisons, falloff=falloff, excitations=excitations, fits=fits,
                       pressure_fits=pressure_fits, warnings=tuple(dict.fromkeys(warnings)))


def troe_data(cf, study):
    """Troe data for the mechanism from one channel's falloff result.

    k0 and k_inf are fitted in the modified Arrhenius form; when that form is
    unrepresentable in a mechanism (A (1 K / T0)^n beyond the float range, as
    happens for an effective k0 over a short temperature range), the
    two-parameter form is used instead and its larger deviation is reported.
    """
    from tstrate.study.fits import TroeData

    k0 = _limit_fit(cf.temperature_K, cf.troe_k0_m3_per_s, order=2)
    kinf = _limit_fit(cf.temperature_K, cf.k_high_pressure_per_s, order=1)
    return TroeData.from_parts(k0, kinf, cf.troe, bath_gas=study.conditions.bath_gas)


def _limit_fit(T, k, order):
    import math

    from tstrate.expressions.arrhenius import fit_arrhenius
    from tstrate.units import rate_from_SI

    if len(T) >= 3:
        fit = fit_arrhenius(T, k, order=order, modified=True)
        ln_a = math.log(float(rate_from_SI(fit.A, order))) - fit.n * math.log(fit.T0_K)
        if abs(ln_a) < 600:
            return fit
    return fit_arrhenius(T, k, order=order)


def fits_at_each_pressure(cf, *, max_deviation: float | None = None):
    """Modified Arrhenius fits of a falloff channel's k(T) at each tabulated pressure.

    Returns ([(pressure_Pa or None, number_density_m3 at the highest T, ArrheniusFit)], warnings).
    """
    from tstrate.expressions.arrhenius import MAX_DEVIATION_DEFAULT, fit_arrhenius

    limit = MAX_DEVIATION_DEFAULT if max_deviation is None else max_deviation
    out, warnings = [], []
    T = cf.temperature_K
    modified = len(T) >= 3
    for j in range(cf.rate_constant_per_s.shape[1]):
        p = None if cf.pressure_Pa is None else float(cf.pressure_Pa[j])
        fit = fit_arrhenius(T, cf.rate_constant_per_s[:, j], order=1, modified=modified,
                            max_deviation=limit)
        out.append((p, float(cf.number_density_m3[-1, j]), fit))
    worst = max((f.max_rel_deviation for _, _, f in out), default=0.0)
    if worst > limit:
        warnings.append(f"channel {cf.name}: modified Arrhenius fits at fixed pressure deviate by up to "
                        f"{100 * worst:.1f} % (split the temperature range for a mechanism)")
    return out, warnings
