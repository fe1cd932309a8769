"""How sure is each number: uncertainty and sensitivity of every result of a study.

Python use::

    from tstrate.io.study import read_study
    from tstrate.model.uncertainty import SpeciesUncertainty, UncertaintySettings
    from tstrate.study.run import compute_study
    from tstrate.study.uncertainty import study_uncertainty

    study = read_study("molecules/carbonic_acid/study.toml")
    result = compute_study(study)
    settings = UncertaintySettings(samples=1000, seed=7,
                                   species={"TS0": SpeciesUncertainty(energy_J_per_mol=4e3)})
    unc = study_uncertainty(result, settings)
    unc.channel("bare").factor                  # f(T) of k(T)
    unc.channel("bare").percentiles             # (5, T) k at 2.5, 16, 50, 84, 97.5 %
    unc.channel("bare").ranking                 # what matters most

Inputs (coordinates ``u``, each with its one-sigma ``sigma``): species energies [J/mol], ln of
the frequency scale factor of each species, ln of the imaginary frequency of each transition
state, ln <Delta E>down, ln of the Lennard-Jones sigma and epsilon of the energised molecules,
ln of the catalyst abundance of each comparison. They are driven by independent standard normal
factors ``z`` through a matrix ``L`` (u - u0 = L z): one factor per species energy, one per
method for the shared part of the energies (``energy_correlation``), one per method for its
frequency scale, one per imaginary frequency and one per study parameter.

Propagation (quasi-Monte Carlo, :func:`tstrate.physics.uncertainty.standard_normal_samples`):

- **exact, all samples at once**: rate constants with tunnelling (partition functions of the
  scaled harmonic modes, zero-point energies, barriers, Eckart/Wigner/Skodje-Truhlar factors with
  each sample's barriers and imaginary frequency), equilibrium constants, route comparisons
  (ratios to the bare route at each abundance, crossover abundances), and the modified Arrhenius
  parameters fitted to each sample's k(T) (linear least squares in ln k);
- **first order in the falloff factor**: k(T, P) = k_inf(T) F(T, P). k_inf follows the sampled
  TST rate constant exactly (ratio to the nominal one); ln F is taken to first order in the
  inputs, from central differences of the full falloff calculation (one pair of runs per input
  that matters for the channel), and kept <= 0;
- **first order in logit phi** for energised-molecule fractions (Stern-Volmer and stepwise, along
  the pressure scan and the altitude profile), from central differences of the full calculation.

Sensitivities: d ln k / d u of every result, by central differences of the same evaluation at
u0 +- h (h = ``sensitivity_step`` sigma); per kJ/mol for energies, dimensionless (d ln k / d ln x)
for the others. The ranked table ("what matters most") splits the first-order variance of ln k
at a reference temperature among the factors z: share_j = c_j^2 / sum c^2, c = (d ln k / d u) L.

The deterministic results stay as they are; this step only adds bands to them.
"""

from __future__ import annotations

import logging
import math
from dataclasses import dataclass, field, replace
from typing import Callable

import numpy as np

from tstrate.errors import InputError
from tstrate.model.uncertainty import SpeciesUncertainty, UncertaintySettings, method_default
from tstrate.physics import uncertainty as pu
from tstrate.physics.thermo import hindered_rotor_zpe_J_per_mol, zero_point_energy_J_per_mol
from tstrate.physics.tst import zpe_level_J_per_mol
from tstrate.units import R

log = logging.getLogger(__name__)

#: input kinds (the ``kind`` of :class:`UncertainInput`)
INPUT_KINDS = ("energy", "frequency_scale", "imaginary_frequency", "delta_E_down", "lennard_jones_sigma",
               "lennard_jones_epsilon", "catalyst_abundance")
#: steps used for sensitivities of inputs whose sigma is 0 (J/mol for energies, ln units otherwise)
_NOMINAL_STEP = {"energy": 100.0}
_NOMINAL_LOG_STEP = 0.01


# ---------------------------------------------------------------- the input space
@dataclass(frozen=True)
class UncertainInput:
    """One coordinate u of the input space.

    name: for people ("energy of TS0"). kind: one of :data:`INPUT_KINDS`. target: species or
    comparison name (None for study parameters). sigma: one-sigma in u (J/mol for energies, ln
    units for the others). source: where sigma came from (the study file, a method default).
    """

    name: str
    kind: str
    target: str | None
    sigma: float
    source: str

    @property
    def unit(self) -> str:
        """Unit of u: "J/mol" for energies, "ln" (a relative change) otherwise."""
        return "J/mol" if self.kind == "energy" else "ln"

    @property
    def step(self) -> float:
        """Half-step of the central differences for sensitivities (in u)."""
        if self.sigma > 0:
            return self.sigma
        return _NOMINAL_STEP.get(self.kind, _NOMINAL_LOG_STEP)


@dataclass(frozen=True)
class InputSpace:
    """The inputs u, the independent factors z and u - u0 = L z.

    inputs: the coordinates; factors: a label per column of ``L``; L: (n_u, n_z);
    notes: sentences about defaults applied and species without any uncertainty.
    """

    inputs: tuple[UncertainInput, ...]
    factors: tuple[str, ...]
    L: np.ndarray = field(repr=False)
    notes: tuple[str, ...] = ()

    def index(self, kind: str, target: str | None = None) -> int | None:
        for i, x in enumerate(self.inputs):
            if x.kind == kind and x.target == target:
                return i
        return None


def _method_of(sp) -> str:
    return str(sp.provenance.get("method", "") or "")


def input_space(study, settings: UncertaintySettings) -> InputSpace:
    """The input space of ``study`` under ``settings`` (see the module docstring)."""
    inputs: list[UncertainInput] = []
    columns: list[tuple[str, dict]] = []   # factor label, {input index: coefficient}
    notes: list[str] = []
    rho = settings.energy_correlation
    unknown = sorted(set(settings.species) - set(study.species))
    if unknown:
        raise InputError(f"species {unknown[0]!r} is not a species of the study", field="uncertainty.species",
                         hint="use the names of [species]")
    groups_energy: dict[str, list[tuple[int, float]]] = {}
    groups_scale: dict[str, list[tuple[int, float]]] = {}
    no_unc = []
    for name, sp in study.species.items():
        given = settings.species.get(name, SpeciesUncertainty())
        d = method_default(_method_of(sp)) if settings.method_defaults else None
        src_d = f"default for {d.label}, {d.basis}" if d else None

        def pick(value, default_value):
            if value is not None:
                return value, "study file"
            if d is not None:
                return default_value, src_d
            return 0.0, "none given"

        e, e_src = pick(given.energy_J_per_mol, d.barrier_J_per_mol / math.sqrt(2.0) if d else 0.0)
        fs, fs_src = pick(given.frequency_scale_fraction, d.frequency_scale_fraction if d else 0.0)
        im, im_src = pick(given.imaginary_frequency_fraction, d.imaginary_frequency_fraction if d else 0.0)
        group = _method_of(sp) or f"(no method: {name})"
        if e > 0:
            inputs.append(UncertainInput(f"energy of {name}", "energy", name, float(e), e_src))
            i = len(inputs) - 1
            if rho < 1.0:
                columns.append((f"energy of {name} (own part)", {i: e * math.sqrt(1.0 - rho)}))
            if rho > 0.0:
                groups_energy.setdefault(group, []).append((i, e * math.sqrt(rho)))
        if fs > 0:
            inputs.append(UncertainInput(f"frequency scale of {name}", "frequency_scale", name,
                                         math.log1p(fs), fs_src))
            groups_scale.setdefault(group, []).append((len(inputs) - 1, math.log1p(fs)))
        if sp.kind == "transition_state" and im > 0:
            inputs.append(UncertainInput(f"imaginary frequency of {name}", "imaginary_frequency", name,
                                         math.log1p(im), im_src))
            columns.append((f"imaginary frequency of {name}", {len(inputs) - 1: math.log1p(im)}))
        if e == 0 and fs == 0 and not (sp.kind == "transition_state" and im > 0):
            no_unc.append(name)
    for group, members in groups_energy.items():
        columns.append((f"energies from {group} (shared part)", dict(members)))
    for group, members in groups_scale.items():
        columns.append((f"frequency scale of {group}", dict(members)))
    if no_unc:
        notes.append("no uncertainty for " + ", ".join(no_unc) + " (no value in [uncertainty.species] and no "
                     "method default for their [provenance] method)")
    used_defaults = sorted({x.source for x in inputs if x.source.startswith("default")})
    for s in used_defaults:
        notes.append(f"some species use the {s}")

    def study_input(label, kind, sigma, target=None):
        if sigma and sigma > 0:
            inputs.append(UncertainInput(label, kind, target, float(sigma), "study file"))
            columns.append((label, {len(inputs) - 1: float(sigma)}))

    if settings.delta_E_down_factor:
        study_input("<Delta E>down", "delta_E_down", math.log(settings.delta_E_down_factor))
    if settings.lennard_jones_sigma_fraction:
        study_input("Lennard-Jones sigma of the energised molecules", "lennard_jones_sigma",
                    math.log1p(settings.lennard_jones_sigma_fraction))
    if settings.lennard_jones_epsilon_fraction:
        study_input("Lennard-Jones epsilon of the energised molecules", "lennard_jones_epsilon",
                    math.log1p(settings.lennard_jones_epsilon_fraction))
    if settings.catalyst_abundance_factor:
        for comp in study.sections.get("comparison", ()):
            study_input(f"catalyst abundance of {comp.name}", "catalyst_abundance",
                        math.log(settings.catalyst_abundance_factor), comp.name)
    L = np.zeros((len(inputs), len(columns)))
    for j, (_, coef) in enumerate(columns):
        for i, c in coef.items():
            L[i, j] = c
    return InputSpace(tuple(inputs), tuple(c[0] for c in columns), L, tuple(notes))


# ---------------------------------------------------------------- sampled species and channels
class _Species:
    """Per-sample shifts of one species: dE0 (S,) [J/mol], scale (S,), d ln q/V on a grid (S, T)."""

    def __init__(self, sp, space: InputSpace, U: np.ndarray, low_modes):
        self.sp = sp
        S = U.shape[0]
        ie = space.index("energy", sp.name)
        ifs = space.index("frequency_scale", sp.name)
        iim = space.index("imaginary_frequency", sp.name)
        self.scale = np.exp(U[:, ifs]) if ifs is not None else np.ones(S)
        # the sampled frequency scale moves the harmonic ZPE only, not the hindered rotors' ground levels
        zpe = zero_point_energy_J_per_mol(sp) - hindered_rotor_zpe_J_per_mol(sp)
        self.dE0 = (U[:, ie] if ie is not None else np.zeros(S)) + zpe * (self.scale - 1.0)
        self.E0 = zpe_level_J_per_mol(sp) + self.dE0
        self.imag_factor = self.scale * (np.exp(U[:, iim]) if iim is not None else 1.0)
        self.freqs = sp.harmonic_frequencies_cm1
        self.low_modes = low_modes
        self._cache: dict = {}

    def delta(self, T: np.ndarray) -> np.ndarray:
        """(S, T) change of ln q/V - E0/RT."""
        key = T.tobytes()
        if key not in self._cache and self.sp.conformers:
            self._cache[key] = self._ensemble_delta(T)
        if key not in self._cache:
            if np.all(self.scale == 1.0) or self.freqs.size == 0:
                dq = 0.0
            else:
                dq = (pu.vibrational_ln_q_scaled(self.freqs, T, self.scale, self.low_modes)
                      - pu.vibrational_ln_q_scaled(self.freqs, T, [1.0], self.low_modes))
            self._cache[key] = dq - self.dE0[:, None] / (R * T[None, :])
        return self._cache[key]


    def _ensemble_delta(self, T: np.ndarray) -> np.ndarray:
        """delta for a conformer ensemble: ln q_ens/V - E0_ref/RT = ln sum_i q_i/V exp(-E0_i/RT), each
        conformer's modes scaled alike and its ZPE with them, every energy moved by the same shift."""
        from tstrate.physics.ensembles import conformer_members
        from tstrate.physics.thermo import ln_partition_function_per_volume

        def ln_terms(scale):
            out = []
            for m in conformer_members(self.sp):
                f = m.harmonic_frequencies_cm1
                dq = (pu.vibrational_ln_q_scaled(f, T, scale, self.low_modes)
                      - pu.vibrational_ln_q_scaled(f, T, [1.0], self.low_modes)) if f.size else 0.0
                e0 = zpe_level_J_per_mol(m) + zero_point_energy_J_per_mol(m) * (np.asarray(scale) - 1.0)
                out.append(ln_partition_function_per_volume(m, T, low_modes=self.low_modes)[None, :] + dq
                           - np.atleast_1d(e0)[:, None] / (R * T[None, :]))
            return np.logaddexp.reduce(np.broadcast_arrays(*out), axis=0)

        ie_shift = self.dE0 - zero_point_energy_J_per_mol(self.sp) * (self.scale - 1.0)  # the energy input
        return ln_terms(self.scale) - ln_terms([1.0]) - ie_shift[:, None] / (R * T[None, :])

    def conformer_shift(self, label) -> np.ndarray:
        """(S,) change of E0_label - E0_ref with the samples' frequency scale [J/mol] (0 for the reference)."""
        from tstrate.physics.ensembles import conformer_labels, conformer_members

        members = dict(zip(conformer_labels(self.sp), conformer_members(self.sp)))
        dz = zero_point_energy_J_per_mol(members[label]) - zero_point_energy_J_per_mol(self.sp.with_changes(conformers=()))
        return dz * (self.scale - 1.0)


def _channel_ln_k(ch, rates, sp: dict) -> tuple[np.ndarray, np.ndarray]:
    """(ln k, ln kappa), each (S, T), of a channel for the samples, on the grid of ``rates``
    (its deterministic :class:`~tstrate.physics.tst.ChannelRates`)."""
    T = rates.temperature_K
    ts = sp[ch.transition_state]
    reac = [sp[n] for n in ch.reactants]
    delta = ts.delta(T) - sum(r.delta(T) for r in reac)
    e0_r = sum(r.E0 for r in reac)
    e0_ts = ts.E0
    prod = sp[ch.product_complex] if ch.product_complex else None
    e0_p = prod.E0 if prod is not None else sum(sp[n].E0 for n in ch.products)

    def tunnelling_inputs(e0_ts, e0_r, e0_c, e0_p, shift):
        # the reactant-side well as the deterministic rate has it: for an ensemble, the conformer the
        # TS connects to (its shift above the lowest conformer kept fixed)
        if ch.complex:
            e0_c = e0_c + shift
            v1 = e0_ts - e0_c
            floor = np.minimum(np.maximum(0.0, e0_r - e0_c), v1) if ch.tunnelling_floor == "reactants" else 0.0 * v1
        else:
            v1 = e0_ts - e0_r - shift
            floor = 0.0 * v1
        return v1, e0_ts - e0_p, floor

    nominal = (zpe_level_J_per_mol(ts.sp), sum(zpe_level_J_per_mol(r.sp) for r in reac),
               zpe_level_J_per_mol(sp[ch.complex].sp) if ch.complex else 0.0,
               zpe_level_J_per_mol(prod.sp) if prod is not None else sum(zpe_level_J_per_mol(sp[n].sp)
                                                                          for n in ch.products))
    shift0 = tunnelling_inputs(*nominal, 0.0)[0] - rates.eckart_V1_J_per_mol
    shift = shift0
    label = getattr(rates, "tunnelling_well_conformer", None)
    if label is not None:  # the connected conformer's shift moves with the samples' frequency scale
        well = sp[ch.complex] if ch.complex else reac[0]
        shift = shift0 + well.conformer_shift(label)
    v1, v2, floor = tunnelling_inputs(e0_ts, e0_r, sp[ch.complex].E0 if ch.complex else 0.0 * e0_r, e0_p, shift)
    nu = ts.sp.imaginary_frequency_cm1 * ts.imag_factor
    ln_kap = pu.log_kappa_samples(ch.tunnelling, T, nu, v1, v2, floor)
    # the same formula at the nominal inputs (the deterministic kappa of one TS structure; for a TS
    # ensemble, that of its representative): samples move k by their change of kappa
    if ts.sp.conformers:
        v1n, v2n, floor_n = tunnelling_inputs(*nominal, shift0)
        ln_kap0 = pu.log_kappa_samples(ch.tunnelling, T, [ts.sp.imaginary_frequency_cm1], v1n, v2n,
                                       np.atleast_1d(floor_n))
        ln_kap = ln_kap - ln_kap0 + np.log(rates.kappa)[None, :]
    ln_kap0 = np.log(rates.kappa)[None, :]
    ln_k = np.log(rates.k)[None, :] + delta + (ln_kap - ln_kap0)
    return ln_k, ln_kap


# ---------------------------------------------------------------- results
@dataclass(frozen=True)
class RankedFactor:
    """One row of a "what matters most" table: a factor z and its first-order share of the variance
    of ln(result) at the table's temperature. contribution: d ln(result) / d z (one sigma of z)."""

    factor: str
    contribution: float
    share: float


@dataclass(frozen=True)
class Band:
    """Percentiles and uncertainty factor of one sampled result on its grid.

    name: what it is. nominal: the deterministic value (grid shape). percentiles: (5, *grid) at
    :data:`~tstrate.physics.uncertainty.PERCENTILES`. factor: f on the grid. unit: SI unit of the
    values. sensitivity: (n_u, *grid) d ln(value) / d u. ranking: factors by share at
    ``reference_temperature_K``. valid_fraction: share of the samples the model accepted.
    """

    name: str
    unit: str
    nominal: np.ndarray = field(repr=False)
    percentiles: np.ndarray = field(repr=False)
    factor: np.ndarray = field(repr=False)
    sensitivity: np.ndarray = field(repr=False)
    ranking: tuple[RankedFactor, ...] = ()
    reference_temperature_K: float | None = None
    valid_fraction: float = 1.0
    method: str = "exact"


@dataclass(frozen=True)
class ChannelUncertainty:
    """k(T) of one channel: its band, the evaluation pair and the sampled Arrhenius parameters.

    temperature_K (T,); k: Band of k [SI per molecule]; ln_kc: Band of Kc (molecule m^-3 units);
    f298, g_K, evaluation_max_deviation: f(T) = f298 exp|g (1/T - 1/298)| fitted to k.factor;
    arrhenius: name -> (5,) percentiles of the modified Arrhenius parameters fitted to each sample
    (A [SI], n [1], Ea [J/mol]), with T0_K.
    """

    name: str
    order: int
    temperature_K: np.ndarray = field(repr=False)
    k: Band
    ln_kc: Band
    f298: float
    g_K: float
    evaluation_max_deviation: float
    arrhenius: dict
    T0_K: float


@dataclass(frozen=True)
class RouteUncertainty:
    """One route of a comparison: ratio to the bare route (A, T) and crossover abundance (T)."""

    channel: str
    kind: str
    ratio: Band
    crossover_m3: Band | None


@dataclass(frozen=True)
class ComparisonUncertainty:
    name: str
    temperature_K: np.ndarray = field(repr=False)
    abundance_labels: tuple[str, ...]
    routes: tuple[RouteUncertainty, ...]


@dataclass(frozen=True)
class FalloffUncertainty:
    """k(T, P) of one falloff channel (first order in ln F) and its evaluation pair at each pressure."""

    name: str
    temperature_K: np.ndarray = field(repr=False)
    pressure_Pa: np.ndarray | None = field(repr=False)
    k: Band
    f298: np.ndarray = field(repr=False)
    g_K: np.ndarray = field(repr=False)
    falloff_factor: Band | None = None   # F = k / k_inf of each sample (the shape of the falloff)


@dataclass(frozen=True)
class ExcitationUncertainty:
    """Fractions reacting of one excitation (first order in logit phi): Stern-Volmer and, when
    computed, stepwise, on the pressure scan (T, P) and along the altitude profile (Z,)."""

    name: str
    pressure_stern_volmer: Band | None
    pressure_stepwise: Band | None
    profile_stern_volmer: Band | None
    profile_stepwise: Band | None
    altitude_m: np.ndarray | None = field(repr=False, default=None)


@dataclass(frozen=True)
class StudyUncertainty:
    """Everything the uncertainty step computed for one study."""

    settings: UncertaintySettings
    space: InputSpace
    samples: int
    channels: tuple[ChannelUncertainty, ...]
    comparisons: tuple[ComparisonUncertainty, ...]
    falloff: tuple[FalloffUncertainty, ...]
    excitations: tuple[ExcitationUncertainty, ...]
    warnings: tuple[str, ...] = ()

    def channel(self, name: str) -> ChannelUncertainty:
        for c in self.channels:
            if c.name == name:
                return c
        raise KeyError(name)


# ---------------------------------------------------------------- the evaluation
class _Evaluator:
    """Evaluates the exact (vectorised) part of the study for rows of input deviations U (S, n_u)."""

    def __init__(self, result, space: InputSpace):
        self.result = result
        self.study = result.study
        self.space = space
        self.low_modes = result.low_modes

    def __call__(self, U: np.ndarray) -> dict:
        study, res = self.study, self.result
        sp = {name: _Species(s, self.space, U, self.low_modes) for name, s in study.species.items()}
        out: dict = {}
        for ch, cr in zip(study.channels, res.rates):
            ln_k, ln_kap = _channel_ln_k(ch, cr, sp)
            T = cr.temperature_K
            prod = [sp[n] for n in ch.products]
            reac = [sp[n] for n in ch.reactants]
            ln_kc = cr.ln_kc[None, :] + sum(p.delta(T) for p in prod) - sum(r.delta(T) for r in reac)
            out[("k", ch.name)] = ln_k
            out[("kappa", ch.name)] = ln_kap
            out[("kc", ch.name)] = ln_kc
        chans = {c.name: c for c in study.channels}
        for comp_res in res.comparisons or ():
            comp = comp_res.comparison
            T = comp_res.temperature_K
            ln_cat = np.log(comp_res.catalyst_m3)[None, :, :]          # (1, A, T)
            icat = self.space.index("catalyst_abundance", comp.name)
            if icat is not None:
                ln_cat = ln_cat + U[:, icat][:, None, None]
            ln_kd = None
            if comp_res.dimer_equilibrium is not None:
                x, x2 = sp[comp.catalyst], sp[comp.catalyst_dimer]
                ln_kd = comp_res.dimer_equilibrium.ln_Kc[None, :] + x2.delta(T) - 2 * x.delta(T)
            ln_a = {}
            for r in comp_res.routes:
                ln_k, _ = _channel_ln_k(chans[r.channel], r.rates, sp)
                via_dimer = r.kind == "dimer"
                ln_a[r.channel] = ln_k + (ln_kd if via_dimer and ln_kd is not None else 0.0)
            bare = comp_res.routes[0]
            for r in comp_res.routes[1:]:
                m = r.catalyst_power
                ratio = ln_a[r.channel][:, None, :] + m * ln_cat - ln_a[bare.channel][:, None, :]
                out[("ratio", comp.name, r.channel)] = ratio
                if m:
                    out[("crossover", comp.name, r.channel)] = (ln_a[bare.channel] - ln_a[r.channel]) / m
        return out


def _nominal_ln(result) -> dict:
    out = {}
    for ch, cr in zip(result.study.channels, result.rates):
        out[("k", ch.name)] = np.log(cr.k)
        out[("kc", ch.name)] = cr.ln_kc
    for comp_res in result.comparisons or ():
        for r in comp_res.routes[1:]:
            out[("ratio", comp_res.comparison.name, r.channel)] = r.ln_ratio_to_bare
            if r.catalyst_power:
                out[("crossover", comp_res.comparison.name, r.channel)] = np.log(r.crossover_catalyst_m3)
    return out


def _sensitivities(evaluate, space: InputSpace, step: float) -> dict:
    """key -> (n_u, *grid) d ln(value) / d u by central differences of ``evaluate``."""
    n = len(space.inputs)
    if n == 0:
        return {}
    h = np.array([x.step * step for x in space.inputs])
    U = np.zeros((2 * n, n))
    U[np.arange(n), np.arange(n)] = h
    U[n + np.arange(n), np.arange(n)] = -h
    vals = evaluate(U)
    out = {}
    for key, v in vals.items():
        shape = (n,) + (1,) * (v.ndim - 1)
        out[key] = (v[:n] - v[n:]) / (2.0 * h.reshape(shape))
    return out


def _reference_index(T: np.ndarray) -> int:
    """The grid point nearest the middle of the grid in 1/T."""
    x = 1.0 / np.asarray(T, dtype=float)
    return int(np.argmin(np.abs(x - 0.5 * (x.min() + x.max()))))


def _ranking(sens_at: np.ndarray, space: InputSpace) -> tuple[RankedFactor, ...]:
    """Factors ranked by their first-order share of the variance; ``sens_at`` (n_u,) d ln x / d u."""
    if not space.factors:
        return ()
    c = np.nan_to_num(sens_at) @ space.L
    total = float(np.sum(c * c))
    order = np.argsort(-np.abs(c))
    return tuple(RankedFactor(space.factors[j], float(c[j]), float(c[j] ** 2 / total) if total > 0 else 0.0)
                 for j in order)


def _band(name, unit, nominal_ln, samples_ln, sens, space, T_ref_index=None, T=None, method="exact",
          pick=None) -> Band:
    """A Band from sampled ln values (S, *grid)."""
    valid = np.all(np.isfinite(samples_ln.reshape(samples_ln.shape[0], -1)), axis=1)
    s = samples_ln[valid] if valid.any() else samples_ln
    pct = np.exp(pu.percentiles(s, axis=0))
    fac = pu.uncertainty_factor(s, axis=0)
    ranking, t_ref = (), None
    if sens is not None and T is not None:
        i = _reference_index(T) if T_ref_index is None else T_ref_index
        t_ref = float(np.asarray(T)[i])
        at = sens[..., i] if pick is None else pick(sens, i)
        while at.ndim > 1:        # (n_u, A) -> the first abundance
            at = at[..., 0]
        ranking = _ranking(at, space)
    return Band(name, unit, np.exp(nominal_ln), pct, fac,
                sens if sens is not None else np.zeros((0,) + np.shape(nominal_ln)), ranking, t_ref,
                float(valid.mean()), method)


def _arrhenius_samples(T, ln_k, T0_K) -> dict:
    """(5,) percentiles of ln A, n and Ea of ln k = ln A + n ln(T/T0) - Ea/RT fitted to each row."""
    X = np.column_stack([np.ones_like(T), np.log(T / T0_K), -1.0 / (R * T)])
    ok = np.all(np.isfinite(ln_k), axis=1)
    coef = np.linalg.lstsq(X, ln_k[ok].T, rcond=None)[0] if ok.any() else np.full((3, 1), np.nan)
    p = pu.percentiles(coef, axis=1)
    return {"A": np.exp(p[:, 0]), "n": p[:, 1], "Ea_J_per_mol": p[:, 2]}


# ---------------------------------------------------------------- first-order steps
def perturbed_study(study, inp: UncertainInput, delta: float):
    """``study`` with input ``inp`` moved by ``delta`` (in u): a deterministic variant for checks
    and for the first-order steps."""
    species = dict(study.species)
    sections = dict(study.sections)

    def each_conformer(sp, change):
        # a conformer ensemble moves as a whole: every conformer by the same delta (their relative
        # energies, and so which one is the lowest, are kept)
        if not sp.conformers:
            return change(sp)
        return change(sp.with_changes(conformers=())).with_changes(
            conformers=tuple(change(c) for c in sp.conformers))

    def imaginary_scaled(sp):
        f = np.array(sp.frequencies_cm1, dtype=float)
        f[f < 0] *= math.exp(delta)
        return sp.with_changes(frequencies_cm1=f)

    if inp.kind == "energy":
        species[inp.target] = each_conformer(
            species[inp.target], lambda sp: sp.with_changes(energy_J_per_mol=sp.energy_J_per_mol + delta))
    elif inp.kind == "frequency_scale":
        species[inp.target] = each_conformer(
            species[inp.target], lambda sp: sp.with_changes(frequency_scale=sp.frequency_scale * math.exp(delta)))
    elif inp.kind == "imaginary_frequency":
        species[inp.target] = each_conformer(species[inp.target], imaginary_scaled)
    elif inp.kind == "delta_E_down":
        fac = math.exp(delta)

        def scaled(s):
            if s.delta_E_down_cm1 is not None:
                return replace(s, delta_E_down_cm1=s.delta_E_down_cm1 * fac)
            if s.delta_E_all_cm1 is not None:
                return replace(s, delta_E_all_cm1=s.delta_E_all_cm1 * fac)
            return s

        fo = sections.get("falloff")
        if fo is not None:
            sections["falloff"] = replace(fo, default=scaled(fo.default),
                                          channels={k: scaled(v) for k, v in fo.channels.items()})
        if sections.get("excitation"):
            sections["excitation"] = tuple(
                replace(e, delta_E_down_cm1=e.delta_E_down_cm1 * fac) if e.delta_E_down_cm1 else e
                for e in sections["excitation"])
    elif inp.kind in ("lennard_jones_sigma", "lennard_jones_epsilon"):
        fac = math.exp(delta)
        bath = study.conditions.bath_gas
        for name, sp in species.items():
            if sp.lennard_jones is None or name == bath:
                continue
            s, e = sp.lennard_jones
            species[name] = sp.with_changes(
                lennard_jones=(s * fac, e) if inp.kind == "lennard_jones_sigma" else (s, e * fac))
    else:
        return study
    return replace(study, species=species, sections=sections)


def _relevant(space: InputSpace, names: set, kinds=("energy", "frequency_scale", "imaginary_frequency"),
              study_kinds=("delta_E_down", "lennard_jones_sigma", "lennard_jones_epsilon")) -> list[int]:
    out = []
    for i, x in enumerate(space.inputs):
        if x.sigma <= 0:
            continue
        if (x.kind in kinds and x.target in names) or x.kind in study_kinds:
            out.append(i)
    return out


def _channel_species(ch) -> set:
    return set(ch.reactants) | set(ch.products) | {ch.transition_state} | (
        {ch.complex} if ch.complex else set()) | ({ch.product_complex} if ch.product_complex else set())


def _first_order(compute: Callable, study, space: InputSpace, idx: list[int], step: float,
                 tick: Callable[[], None]) -> dict:
    """{i: d value / d u_i} by central differences of ``compute(study) -> array`` (whole runs)."""
    grads = {}
    for i in idx:
        inp = space.inputs[i]
        h = inp.step * step
        plus = compute(perturbed_study(study, inp, h))
        tick()
        minus = compute(perturbed_study(study, inp, -h))
        tick()
        with np.errstate(invalid="ignore"):   # inf - inf where a fraction is 0 or 1
            grads[i] = (plus - minus) / (2.0 * h)
    return grads


def _logit(p):
    p = np.asarray(p, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.log(p) - np.log1p(-p)


# ---------------------------------------------------------------- the step
def count_runs(result, space: InputSpace) -> int:
    """Number of full deterministic runs the first-order steps need (for progress bars)."""
    study = result.study
    n = 0
    for cf in (result.falloff.channels if result.falloff else ()):
        n += 2 * len(_relevant(space, _channel_species(study.channel(cf.name))))
    for ex in result.excitations or ():
        if ex.pressure is None and ex.profile is None:
            continue
        n += 2 * len(_relevant(space, _channel_species(study.channel(ex.spec.channel))))
    return n


#: samples evaluated together (bounded memory, a progress tick each); sample blocks run elsewhere
#: (:func:`sample_block_ranges`) are whole multiples of it, so that they evaluate the same rows
#: together as the serial run and give the same numbers
SAMPLE_BLOCK = 250


def uncertainty_setup(study, settings: UncertaintySettings | None = None) -> tuple[UncertaintySettings,
                                                                                    InputSpace, np.ndarray]:
    """(settings in force, input space, U (S, n_u) deviations of every sample) of ``study``: what
    :func:`study_uncertainty` samples. Needs only the study, not its deterministic result."""
    settings = settings or study.sections.get("uncertainty") or UncertaintySettings()
    try:
        space = input_space(study, settings)
    except InputError as exc:
        raise exc.within(file=study.file, prefix=None) from None
    S = settings.samples
    if space.inputs:
        Z = pu.standard_normal_samples(S, len(space.factors), seed=settings.seed, method=settings.sampling)
        U = Z @ space.L.T
    else:
        U = np.zeros((S, 0))
    return settings, space, U


def sample_block_ranges(samples: int, per_block: int) -> list[tuple[int, int]]:
    """[(start, stop), ...] covering ``samples`` rows in blocks of about ``per_block`` samples,
    rounded up to a whole multiple of :data:`SAMPLE_BLOCK` (the last block takes the rest)."""
    if samples < 0 or per_block < 1:
        raise ValueError(f"samples must be >= 0 and per_block >= 1, got {samples} and {per_block}")
    size = SAMPLE_BLOCK * max(1, math.ceil(per_block / SAMPLE_BLOCK))
    return [(a, min(samples, a + size)) for a in range(0, samples, size)]


def evaluate_sample_block(result, space: InputSpace, U_block: np.ndarray, *,
                          progress: Callable[[int], None] | None = None) -> dict:
    """The sampled results (key -> (rows, *grid) ln values) of the rows ``U_block`` of the
    deviations, evaluated :data:`SAMPLE_BLOCK` rows at a time as :func:`study_uncertainty` does.
    A block that starts at a multiple of SAMPLE_BLOCK gives exactly the serial run's rows.
    ``progress(rows_done)`` after each group of rows."""
    evaluate = _Evaluator(result, space)
    parts: dict = {}
    S = U_block.shape[0]
    for start in range(0, S, SAMPLE_BLOCK):
        vals = evaluate(U_block[start:start + SAMPLE_BLOCK])
        for k, v in vals.items():
            parts.setdefault(k, []).append(v)
        if progress:
            progress(min(S, start + SAMPLE_BLOCK))
    return {k: np.concatenate(v, axis=0) for k, v in parts.items()}


def combine_sample_blocks(blocks) -> dict:
    """The sampled results of consecutive blocks (from :func:`evaluate_sample_block`, in order)."""
    blocks = list(blocks)
    if not blocks:
        return {}
    return {k: np.concatenate([b[k] for b in blocks], axis=0) for k in blocks[0]}


def study_uncertainty(result, settings: UncertaintySettings | None = None, *,
                      progress: Callable[[str, int, int], None] | None = None,
                      sampled: dict | None = None) -> StudyUncertainty:
    """Uncertainty and sensitivity of every result in ``result`` (a
    :class:`~tstrate.study.run.StudyResult`) under ``settings`` (default: the study's
    ``[uncertainty]`` section, else :class:`UncertaintySettings` defaults).

    ``progress(stage, done, total)`` is called as work proceeds (stages "samples", "falloff",
    "energised molecules").

    ``sampled``: the sampled results of every sample when they were evaluated elsewhere, e.g.
    in blocks on a cluster (:func:`uncertainty_setup`, :func:`sample_block_ranges`,
    :func:`evaluate_sample_block`, :func:`combine_sample_blocks`); the result is then the same
    as the serial one.
    """
    study = result.study
    settings, space, U = uncertainty_setup(study, settings)
    warnings: list[str] = list(space.notes)
    n_u = len(space.inputs)
    S = settings.samples
    if not n_u:
        warnings.append("no input has an uncertainty: every band is a line")
    evaluate = _Evaluator(result, space)
    if sampled is None:
        sampled = evaluate_sample_block(result, space, U,
                                        progress=(lambda n: progress("samples", n, S)) if progress else None)
    else:
        bad = [k for k, v in sampled.items() if np.shape(v)[0] != S]
        if bad:
            raise ValueError(f"sampled: {bad[0]} has {np.shape(sampled[bad[0]])[0]} rows, not the {S} samples")
        if progress:
            progress("samples", S, S)
    sens = _sensitivities(evaluate, space, settings.sensitivity_step)
    nominal = _nominal_ln(result)
    opts = study.sections.get("fits")
    T0 = getattr(opts, "T0_K", 298.15)

    channels = []
    for ch, cr in zip(study.channels, result.rates):
        T = cr.temperature_K
        kb = _band(f"k({ch.name})", "SI per molecule", nominal[("k", ch.name)], sampled[("k", ch.name)],
                   sens.get(("k", ch.name)), space, T=T)
        kc = _band(f"Kc({ch.name})", "molecule m^-3 units", nominal[("kc", ch.name)], sampled[("kc", ch.name)],
                   sens.get(("kc", ch.name)), space, T=T)
        if kb.valid_fraction < 1:
            warnings.append(f"channel {ch.name}: {100 * (1 - kb.valid_fraction):.1f} % of the samples give "
                            f"barriers the {ch.tunnelling} model refuses (a barrier at or below zero); the band "
                            "is over the others")
        if T.size >= 2:
            f298, g, dev = pu.fit_evaluation_pair(T, kb.factor)
        else:
            f298, g, dev = float(kb.factor[0]), 0.0, 0.0
        arr = _arrhenius_samples(T, sampled[("k", ch.name)], T0) if T.size >= 3 else {}
        channels.append(ChannelUncertainty(ch.name, ch.order, T, kb, kc, f298, g, dev, arr, T0))

    comparisons = []
    for comp_res in result.comparisons or ():
        comp = comp_res.comparison
        T = comp_res.temperature_K
        routes = []
        for r in comp_res.routes[1:]:
            key = ("ratio", comp.name, r.channel)
            rb = _band(f"k'({r.channel})/k'({comp.reference})", "1", nominal[key], sampled[key], sens.get(key),
                       space, T=T)
            cb = None
            ck = ("crossover", comp.name, r.channel)
            if ck in sampled:
                cb = _band(f"crossover abundance of {r.channel}", "m^-3", nominal[ck], sampled[ck], sens.get(ck),
                           space, T=T)
            routes.append(RouteUncertainty(r.channel, r.kind, rb, cb))
        labels = tuple(a.label or a.describe() for a in comp.abundances)
        comparisons.append(ComparisonUncertainty(comp.name, T, labels, tuple(routes)))

    total_runs = count_runs(result, space)
    done = [0]

    def tick(stage):
        def f():
            done[0] += 1
            if progress:
                progress(stage, done[0], total_runs)
        return f

    falloff = []
    if result.falloff is not None:
        for cf in result.falloff.channels:
            ch = study.channel(cf.name)
            T = cf.temperature_K
            ln_f0 = np.log(cf.rate_constant_per_s) - np.log(cf.k_high_pressure_per_s)[:, None]

            def compute(st, ch=ch, T=T, m=cf.number_density_m3):
                return _ln_falloff_factor(st, ch.name, T, m)

            idx = _relevant(space, _channel_species(ch))
            grads = _first_order(compute, study, space, idx, settings.sensitivity_step, tick("falloff"))
            G = np.zeros((n_u,) + ln_f0.shape)
            for i, g in grads.items():
                G[i] = g
            # k_inf follows canonical TST with the falloff's tunnelling (Eckart or none)
            ln_tst = sampled[("k", ch.name)]
            if ch.tunnelling != "eckart":   # the falloff's k(E) has no tunnelling then
                ln_tst = ln_tst - sampled[("kappa", ch.name)]
            d_inf = ln_tst - np.log(cf.canonical_tst_per_s)[None, :]
            ln_F = np.minimum(ln_f0[None] + np.tensordot(U, G, axes=(1, 0)), 0.0)
            ln_kTP = np.log(cf.k_high_pressure_per_s)[None, :, None] + d_inf[:, :, None] + ln_F
            s_inf = sens.get(("k", ch.name))
            if s_inf is not None and ch.tunnelling != "eckart":
                s_inf = s_inf - sens.get(("kappa", ch.name), 0.0)
            s_tot = G + (s_inf[:, :, None] if s_inf is not None else 0.0)
            band = _band(f"k({ch.name}, P)", "s^-1", np.log(cf.rate_constant_per_s), ln_kTP, s_tot, space, T=T,
                         method="k_inf exact; ln(k/k_inf) to first order", pick=lambda a, i: a[:, i, 0])
            f298 = np.full(ln_f0.shape[1], np.nan)
            g = np.full(ln_f0.shape[1], np.nan)
            if T.size >= 2:
                for j in range(ln_f0.shape[1]):
                    f298[j], g[j], _ = pu.fit_evaluation_pair(T, band.factor[:, j])
            fband = _band(f"k({ch.name}, P) / k_inf", "1", ln_f0, ln_F, G, space, T=T,
                          method="ln(k/k_inf) to first order", pick=lambda a, i: a[:, i, 0])
            falloff.append(FalloffUncertainty(ch.name, T, cf.pressure_Pa, band, f298, g, fband))

    excitations = []
    for ex in result.excitations or ():
        from tstrate.study.excitations import excitation_yield

        if ex.pressure is None and ex.profile is None:
            continue
        ch = study.channel(ex.spec.channel)
        spec = ex.spec

        def pieces(res_ex):
            out = {}
            for where in ("pressure", "profile"):
                g = getattr(res_ex, where)
                if g is None:
                    continue
                out[(where, "stern_volmer")] = np.asarray(g.stern_volmer, dtype=float)
                if g.stepwise is not None:
                    out[(where, "stepwise")] = np.asarray(g.stepwise, dtype=float)
            return out

        base = pieces(ex)
        keys = list(base)

        def compute(st, spec=spec, keys=keys):
            i = list(study.sections["excitation"]).index(spec)
            p = pieces(excitation_yield(st, st.sections["excitation"][i]))
            return np.concatenate([_logit(p[k]).ravel() for k in keys])

        idx = _relevant(space, _channel_species(ch))
        grads = _first_order(compute, study, space, idx, settings.sensitivity_step, tick("energised molecules"))
        bands = {}
        offset = 0
        for k in keys:
            phi0 = base[k]
            size = phi0.size
            G = np.zeros((n_u, size))
            for i, gvec in grads.items():
                G[i] = np.nan_to_num(gvec[offset:offset + size], nan=0.0, posinf=0.0, neginf=0.0)
            offset += size
            lg0 = _logit(phi0).ravel()
            lg = lg0[None, :] + U @ G
            with np.errstate(over="ignore"):
                phi = np.where(np.isfinite(lg0)[None, :], 1.0 / (1.0 + np.exp(-lg)), phi0.ravel()[None, :])
            with np.errstate(divide="ignore"):
                ln_phi = np.log(phi).reshape((S,) + phi0.shape)
                nominal_ln = np.log(phi0)
            sens_phi = (G * (1.0 - phi0.ravel())[None, :]).reshape((n_u,) + phi0.shape)  # d ln phi / d u
            T = (ex.pressure.temperature_K if k[0] == "pressure" else ex.profile.temperature_K)
            b = _band(f"phi {k[1]} ({spec.name}, {k[0]})", "1", nominal_ln, np.nan_to_num(ln_phi, neginf=-745.0),
                      sens_phi, space, T=T if k[0] == "pressure" else None,
                      method="first order in logit(phi)")
            if k[0] == "profile":
                b = replace(b, ranking=_ranking(sens_phi[:, int(np.argmax(phi0))], space),
                            reference_temperature_K=float(T[int(np.argmax(phi0))]))
            bands[k] = b
        excitations.append(ExcitationUncertainty(
            spec.name, bands.get(("pressure", "stern_volmer")), bands.get(("pressure", "stepwise")),
            bands.get(("profile", "stern_volmer")), bands.get(("profile", "stepwise")), ex.altitude_m))

    return StudyUncertainty(settings, space, S, tuple(channels), tuple(comparisons), tuple(falloff),
                            tuple(excitations), tuple(dict.fromkeys(warnings)))


def _ln_falloff_factor(study, channel: str, T, number_density_m3) -> np.ndarray:
    """ln(k / k_inf) (T, P) of one channel on the study grid: the strong-collision step of
    :func:`tstrate.physics.unimolecular.falloff_on_grid` alone (no dense curves, no Troe fit)."""
    from tstrate.physics.falloff import strong_collision_falloff
    from tstrate.physics.unimolecular import collision_efficiency, collision_rate
    from tstrate.study.falloff import bath_parameters, channel_model, falloff_section

    settings = falloff_section(study).for_channel(channel)
    model = channel_model(study, study.channel(channel), settings, max_temperature_K=float(np.max(T)))
    z = collision_rate(model.reactant, bath_parameters(study), T, settings)
    eff = collision_efficiency(model, settings, T)
    fo = strong_collision_falloff(model.rate, T, number_density_m3, collision_rate_m3_s=z,
                                  collision_efficiency=eff.beta,
                                  threshold_shift=1.0 - 1.0 / model.rate.centrifugal_factor)
    return np.log(fo.rate_per_s) - np.log(fo.high_pressure_per_s)[:, None]


def cr_of(result, name):
    """The deterministic ChannelRates of channel ``name`` in ``result``."""
    for ch, cr in zip(result.study.channels, result.rates):
        if ch.name == name:
            return cr
    raise KeyError(name)


def sampled_channel_ln_k(result, settings: UncertaintySettings, channel: str) -> np.ndarray:
    """(S, T) ln k of one channel for every sample of ``settings`` (for checks and notebooks)."""
    space = input_space(result.study, settings)
    Z = pu.standard_normal_samples(settings.samples, max(1, len(space.factors)), seed=settings.seed,
                                   method=settings.sampling)
    U = Z[:, :len(space.factors)] @ space.L.T
    return _Evaluator(result, space)(U)[("k", channel)]


def sample_deviations(study, settings: UncertaintySettings) -> tuple[InputSpace, np.ndarray]:
    """(space, U): the input space and the (S, n_u) deviations of the inputs for every sample."""
    space = input_space(study, settings)
    Z = pu.standard_normal_samples(settings.samples, max(1, len(space.factors)), seed=settings.seed,
                                   method=settings.sampling)
    return space, Z[:, :len(space.factors)] @ space.L.T


__all__ = ["INPUT_KINDS", "UncertainInput", "InputSpace", "input_space", "Band", "RankedFactor",
           "ChannelUncertainty", "RouteUncertainty", "ComparisonUncertainty", "FalloffUncertainty",
           "ExcitationUncertainty", "StudyUncertainty", "study_uncertainty", "perturbed_study",
           "sampled_channel_ln_k", "sample_deviations", "count_runs", "study_at", "SAMPLE_BLOCK",
           "uncertainty_setup", "sample_block_ranges", "evaluate_sample_block", "combine_sample_blocks"]


def study_at(study, space: InputSpace, u_row) -> object:
    """``study`` with every input moved by its deviation in ``u_row`` (n_u,): the deterministic study
    of one sample (for brute-force checks of the vectorised evaluation)."""
    for inp, du in zip(space.inputs, np.asarray(u_row, dtype=float)):
        if du != 0.0:
            study = perturbed_study(study, inp, float(du))
    return study
