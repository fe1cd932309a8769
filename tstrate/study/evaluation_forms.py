"""The study's rate constants in the forms data evaluations publish (:mod:`tstrate.expressions.evaluation_forms`).

Per channel: A and E/R fitted to the TST k(T) (with its tunnelling), checked on the study's
temperatures and half-way between them; per falloff channel also the NASA/JPL termolecular form
(F_c = 0.6) and the IUPAC form (k0, k_inf, F_c), fitted to the computed k(T, [M]) on the study's
grid with its low- and high-pressure limits, and checked on the dense falloff curve between the
grid pressures.

    from tstrate.study.evaluation_forms import study_evaluation_forms
    forms = study_evaluation_forms(study, rates, falloff)
    forms.channel("bare").jpl.expression.rate(298.0, 2.46e25)    # SI
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from tstrate.errors import InputError
from tstrate.expressions.evaluation_forms import (EvaluationFit, fit_evaluation_arrhenius, fit_iupac_falloff,
                                                  fit_jpl_falloff)
from tstrate.model.settings import MAX_DEVIATION_DEFAULT


@dataclass(frozen=True)
class ChannelEvaluationForms:
    """The evaluation forms of one channel: ``arrhenius`` (always, of the TST k(T)), ``jpl`` and
    ``iupac`` (falloff channels only, else None); ``notes``: plain sentences (a form not fitted, why)."""

    name: str
    order: int
    arrhenius: EvaluationFit | None
    jpl: EvaluationFit | None = None
    iupac: EvaluationFit | None = None
    bath_gas: str | None = None
    notes: tuple[str, ...] = ()

    def fits(self):
        """(form name, EvaluationFit) of the forms present."""
        return [(k, f) for k, f in (("arrhenius", self.arrhenius), ("jpl_falloff", self.jpl),
                                    ("iupac_falloff", self.iupac)) if f is not None]


@dataclass(frozen=True)
class StudyEvaluationForms:
    channels: tuple[ChannelEvaluationForms, ...]
    max_deviation: float = MAX_DEVIATION_DEFAULT

    def channel(self, name: str) -> ChannelEvaluationForms:
        for c in self.channels:
            if c.name == name:
                return c
        raise KeyError(name)

    def warnings(self) -> list[str]:
        """One sentence per form that misses the tolerance."""
        out = []
        for c in self.channels:
            for label, f in c.fits():
                if f.max_rel_deviation > self.max_deviation:
                    out.append(f"channel {c.name}: the {_LABELS[label]} evaluation form deviates by up to "
                               f"{100 * f.max_rel_deviation:.3g} % from the computed rate constants (tolerance "
                               f"{100 * self.max_deviation:.3g} %); use it only beside evaluated data")
        return out


_LABELS = {"arrhenius": "Arrhenius (A, E/R)", "jpl_falloff": "NASA/JPL termolecular (F_c = 0.6)",
           "iupac_falloff": "IUPAC (k0, k_inf, F_c)"}


def midpoints(T: np.ndarray) -> np.ndarray:
    """Temperatures half-way (in 1/T) between neighbouring grid temperatures [K]."""
    t = np.unique(np.asarray(T, dtype=float))
    if t.size < 2:
        return np.zeros(0)
    inv = 1.0 / t
    return 1.0 / (0.5 * (inv[1:] + inv[:-1]))


def _between_pressures(cf):
    """(T, [M], k) of the dense falloff curve strictly inside the grid's [M] range at each
    temperature and off the grid points: check points between the grid pressures."""
    T, M, K = [], [], []
    for i, t in enumerate(cf.temperature_K):
        grid = cf.number_density_m3[i]
        mc, kc = cf.curve_number_density_m3[i], cf.curve_rate_per_s[i]
        inside = (mc > grid.min()) & (mc < grid.max())
        off = np.min(np.abs(np.log(mc[:, None] / grid[None, :])), axis=1) > 1e-6
        keep = inside & off & np.isfinite(kc) & (kc > 0)
        T.append(np.full(int(keep.sum()), t))
        M.append(mc[keep])
        K.append(kc[keep])
    return np.concatenate(T), np.concatenate(M), np.concatenate(K)


def channel_falloff_forms(cf, *, order: int = 1, max_deviation: float = MAX_DEVIATION_DEFAULT):
    """(jpl, iupac, notes) fitted to one :class:`~tstrate.study.falloff.ChannelFalloff`."""
    T = np.asarray(cf.temperature_K, dtype=float)
    if np.unique(T).size < 2:
        return None, None, ("the falloff evaluation forms need two or more temperatures",)
    k, M = np.asarray(cf.rate_constant_per_s), np.asarray(cf.number_density_m3)
    # the k0 of the mechanism's Troe expression: the low-pressure limit, or for Eckart channels the
    # effective k0 fitted with the Troe parameters (the strong-collision limit with deep tunnelling
    # is no limit of these closed forms over the study's pressures)
    k0, kinf = np.asarray(cf.troe_k0_m3_per_s), np.asarray(cf.k_high_pressure_per_s)
    good = (np.all(np.isfinite(k) & (k > 0), axis=1) & np.isfinite(k0) & (k0 > 0) & np.isfinite(kinf)
            & (kinf > 0))
    notes = []
    if cf.model.tunnelling == "eckart":
        notes.append("k0 of the falloff forms fitted to the effective k0 of the Troe fit (Eckart tunnelling), "
                     "not to the strong-collision low-pressure limit")
    if not good.all():
        notes.append(f"{int((~good).sum())} temperature(s) without a positive finite k left out of the falloff forms")
    if good.sum() < 2:
        return None, None, tuple(notes + ["too few temperatures with positive rate constants for the falloff forms"])
    check = _between_pressures(cf)
    keep_check = np.isin(check[0], T[good])
    check = tuple(a[keep_check] for a in check)
    args = (T[good], M[good], k[good], k0[good], kinf[good])
    try:
        with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
            jpl = fit_jpl_falloff(*args, order=order, check=check)
            iupac = fit_iupac_falloff(*args, order=order, max_deviation=max_deviation, check=check)
    except (InputError, ValueError, FloatingPointError, OverflowError) as exc:  # a fit that cannot be made: said, not fatal
        return None, None, tuple(notes + [f"falloff evaluation forms not fitted: {exc}"])
    if order == 1 and jpl.max_rel_deviation > max_deviation:
        from dataclasses import replace

        jpl = replace(jpl, notes=jpl.notes + ("the NASA/JPL form is written for association reactions: its power "
                                              "laws cannot follow the exp(-E/RT) of this channel's barrier",))
    return jpl, iupac, tuple(notes)


def study_evaluation_forms(study, rates, falloff=None, *, low_modes=None,
                           max_deviation: float | None = None) -> StudyEvaluationForms:
    """The evaluation forms of every channel of ``study`` from its TST ``rates`` (the list of
    :class:`~tstrate.physics.tst.ChannelRates`) and, for falloff channels, ``falloff`` (a
    :class:`~tstrate.study.falloff.StudyFalloff` or None). The Arrhenius check points between the
    study temperatures are computed here by TST (cheap)."""
    from tstrate.physics.thermo import HARMONIC
    from tstrate.study.rates import study_rates

    limit = MAX_DEVIATION_DEFAULT if max_deviation is None else max_deviation
    T = np.asarray(study.conditions.temperature_K, dtype=float)
    mids = midpoints(T)
    between = {}
    if mids.size:
        between = {r.channel: r for r in study_rates(study, low_modes=low_modes or HARMONIC, temperature_K=mids)}
    by_falloff = {cf.name: cf for cf in (falloff.channels if falloff is not None else ())}
    out = []
    for r in rates:
        notes = []
        arr = None
        k = np.asarray(r.k, dtype=float)
        ok = np.isfinite(k) & (k > 0)
        if np.unique(r.temperature_K[ok]).size >= 2:
            mid = between.get(r.channel)
            tc = kc = None
            if mid is not None:
                good = np.isfinite(mid.k) & (mid.k > 0)
                tc, kc = mid.temperature_K[good], mid.k[good]
            arr = fit_evaluation_arrhenius(r.temperature_K[ok], k[ok], order=r.order, check_temperature_K=tc,
                                           check_k_SI=kc)
        else:
            notes.append("the Arrhenius form needs positive rate constants at two or more temperatures")
        jpl = iupac = None
        cf = by_falloff.get(r.channel)
        if cf is not None:
            jpl, iupac, more = channel_falloff_forms(cf, order=r.order, max_deviation=limit)
            notes += list(more)
        out.append(ChannelEvaluationForms(r.channel, r.order, arr, jpl, iupac,
                                          bath_gas=study.conditions.bath_gas if cf is not None else None,
                                          notes=tuple(notes)))
    return StudyEvaluationForms(tuple(out), limit)
