"""Isotopologues of a whole study: beta factors of every species, kinetic isotope effects of
every channel (split into factors), equilibrium fractionation between species, and
three-isotope exponents against their mass-dependent references.

The settings come from the study's ``[isotopes]`` section (:mod:`tstrate.io.sections.isotopes`).
Each substitution names one isotope and how it is placed:

- ``"all"``: every atom of the element in every species of a channel (e.g. all H -> D);
- ``"atoms"``: the atoms listed per species (1-based in the file, 0-based here); species not
  listed stay light; the number of heavy atoms must be the same on every side of a channel;
- beta factors are always computed for a single substitution at each set of equivalent
  positions of each species (trace isotope), whatever the mode.

Physics: :mod:`tstrate.physics.isotopes`; rate constants with the channel's own tunnelling
model and floor (:func:`tstrate.physics.tst.channel_rates`).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from tstrate.errors import InputError
from tstrate.physics import isotopes as iso
from tstrate.physics.thermo import HARMONIC, LowModes

MODES = ("all", "atoms", "each")


@dataclass(frozen=True)
class Substitution:
    """One isotope substitution of a study.

    label: name in tables ("D", "18O", ...; unique).
    element, mass_number: the isotope.
    mode: "all", "atoms" or "each" (a single substitution at each set of equivalent positions of
        the reactants, followed into the other stationary points by their connectivity).
    atoms: species name -> 0-based atom indices (mode "atoms").
    channels: the channels whose KIE is computed (empty: every channel).
    """

    label: str
    element: str
    mass_number: int
    mode: str = "all"
    atoms: dict = field(default_factory=dict)
    channels: tuple[str, ...] = ()

    def __post_init__(self):
        if self.mode not in MODES:
            raise InputError(f"unknown mode {self.mode!r}", field="mode", hint="use " + " or ".join(MODES))
        if self.mode == "atoms" and not self.atoms:
            raise InputError("mode \"atoms\" needs atoms = { species = [atom numbers] }", field="atoms")
        if self.mode != "atoms" and self.atoms:
            raise InputError("atoms are given only with mode = \"atoms\"", field="atoms")


@dataclass(frozen=True)
class IsotopeSettings:
    """The ``[isotopes]`` section: substitutions, fractionation pairs (species or pool names),
    temperatures [K] (None: the study's), pools: name -> {species: mole fraction} (summing to 1)."""

    substitutions: tuple[Substitution, ...]
    fractionation: tuple[tuple[str, str], ...] = ()
    temperature_K: np.ndarray | None = None
    pools: dict = field(default_factory=dict)


@dataclass(frozen=True)
class SpeciesBeta:
    """Beta factor of one species for one isotope (trace, mean over its atoms of the element)."""

    species: str
    ln_beta: np.ndarray
    positions: tuple[tuple[int, ...], ...]     # equivalent-atom classes (0-based)
    ln_f_by_position: tuple[np.ndarray, ...]   # ln f of a single substitution in each class


@dataclass(frozen=True)
class SubstitutionResult:
    substitution: Substitution
    mass_light_amu: float
    mass_heavy_amu: float
    betas: tuple[SpeciesBeta, ...]
    kie: tuple[iso.KIEFactors, ...]


@dataclass(frozen=True)
class Fractionation:
    """alpha = beta_A / beta_B for one isotope, per temperature."""

    label: str
    species_a: str
    species_b: str
    ln_alpha: np.ndarray

    @property
    def alpha(self) -> np.ndarray:
        return np.exp(self.ln_alpha)


@dataclass(frozen=True)
class ThreeIsotope:
    """theta = ln alpha(2) / ln alpha(3) of one quantity, with its mass-dependent references.

    kind: "equilibrium" (a beta factor or a fractionation pair) or "kinetic" (a channel's KIE).
    name: the species, pair or channel.
    """

    element: str
    labels: tuple[str, str]
    kind: str
    name: str
    theta: np.ndarray
    references: iso.ThetaReferences


@dataclass(frozen=True)
class RouteMix:
    """Effective KIE of a comparison's route mix for one isotope and one catalyst abundance:
    KIE_mix = sum_r k'_r / sum_r k'_r,heavy = 1 / sum_r (w_r / KIE_r), w_r the share of route r in
    the loss of the light substrate (pseudo-first-order rates of the comparison), the catalyst
    abundance the same for both isotopologues.

    comparison, abundance: the [[comparison]] and the text of its abundance.
    temperature_K: the comparison's temperatures [K]; weights: channel -> (T,) share of the loss.
    """

    label: str
    comparison: str
    abundance: str
    temperature_K: np.ndarray
    weights: dict
    kie: np.ndarray


@dataclass(frozen=True)
class PositionKIE:
    """KIE of a single substitution at one set of equivalent positions of a reactant (mode
    "each").

    label: the substitution's label; channel; species: the reactant; atoms: its equivalent atoms
        (0-based), one of which carries the isotope.
    paths: (transition-state atom (0-based), KIEFactors) for each distinct transition-state
        position the substituted atom can take: equivalent atoms of the reactant may become
        inequivalent in the transition state (a donor and an acceptor), and each is a reaction
        path of its own (with the path degeneracy of the substituted symmetry numbers).
    kie, kie_no_tunnelling: k_light / sum over paths of k_heavy,path, per temperature.
    """

    label: str
    channel: str
    species: str
    atoms: tuple[int, ...]
    paths: tuple
    kie: np.ndarray
    kie_no_tunnelling: np.ndarray


@dataclass(frozen=True)
class IsotopeResult:
    temperature_K: np.ndarray
    substitutions: tuple[SubstitutionResult, ...]
    fractionation: tuple[Fractionation, ...]
    three_isotope: tuple[ThreeIsotope, ...]
    route_mix: tuple[RouteMix, ...] = ()
    positions: tuple[PositionKIE, ...] = ()
    statement: str = iso.MASS_DEPENDENCE_STATEMENT


def _refuse_without_hessian(study, name):
    sp = study.species[name]
    if sp.hessian_J_per_m2 is None:
        raise InputError(f"species {name!r} has no Hessian; the frequencies of its isotopologues cannot be "
                         "computed (and are never guessed)", file=study.species_files.get(name) or sp.source,
                         field="hessian", hint="add a [hessian] table to its species file")


def species_beta(sp, element: str, mass_number: int, T) -> SpeciesBeta:
    """Trace beta factor of one species (:func:`tstrate.physics.isotopes.trace_ln_beta`)."""
    ln_beta, classes, ln_fs = iso.trace_ln_beta(sp, element, mass_number, T)
    return SpeciesBeta(sp.name, ln_beta, classes, ln_fs)


def _heavy_map(study, ch, sub: Substitution) -> dict:
    names = list(dict.fromkeys([*ch.reactants, ch.transition_state, *ch.products]
                               + [n for n in (ch.complex, ch.product_complex) if n]))
    out = dict(study.species)
    for n in names:
        sp = study.species[n]
        if sub.mode == "all":
            idx = [i for i, s in enumerate(sp.symbols) if s == sub.element]
        else:
            idx = list(sub.atoms.get(n, ()))
            bad = [i for i in idx if not 0 <= i < sp.natoms or sp.symbols[i] != sub.element]
            if bad:
                raise InputError(f"atom {bad[0] + 1} of species {n!r} is not a {sub.element} atom",
                                 field=f"atoms.{n}")
        if idx:
            _refuse_without_hessian(study, n)
            out[n] = iso.substituted_species(sp, {i: sub.mass_number for i in idx}, name=n)
    # the heavy atoms must balance across the channel
    def count(ns):
        return sum(int(np.sum(np.isclose(out[x].masses_amu, study.species[x].masses_amu) == 0)) for x in ns)
    sides = {"reactants": count(ch.reactants), "transition state": count([ch.transition_state]),
             "products": count(ch.products)}
    if ch.complex:
        sides["complex"] = count([ch.complex])
    if ch.product_complex:
        sides["product complex"] = count([ch.product_complex])
    if len(set(sides.values())) > 1:
        raise InputError(f"channel {ch.name!r}: the substituted atoms do not balance ("
                         + ", ".join(f"{k} {v}" for k, v in sides.items()) + ")", field="atoms",
                         hint="list the corresponding atom in every species of the channel")
    return out


def _correspondence(study, names, ts) -> list[tuple[str, int]]:
    """(species name, atom) of each transition-state atom, for the species ``names`` (one side of
    a channel, or one complex), from their connectivity (:mod:`tstrate.physics.atom_map`)."""
    from tstrate.physics.atom_map import corresponding_atoms

    sps = [study.species[n] for n in names]
    try:
        to_ts = corresponding_atoms([(s.symbols, s.positions_A) for s in sps], ts.symbols, ts.positions_A)
    except ValueError as exc:
        raise InputError(f"atoms of {' + '.join(names)} and of {ts.name}: {exc}", field="mode",
                         hint='use mode = "atoms" and list the corresponding atoms') from None
    owner = [(n, k) for n, s in zip(names, sps) for k in range(s.natoms)]
    back = [None] * ts.natoms
    for src, t in enumerate(to_ts):
        back[t] = owner[src]
    return back


def class_isotopologue(sp, atoms, mass_number: int, name: str):
    """The isotopologue of ``sp`` with one heavy atom at one of the equivalent ``atoms`` (0-based).

    For a conformer ensemble this is itself an ensemble: in each conformer, every distinct position
    the class's atoms take (atoms equivalent in the representative may not be in another
    conformer: the two OH oxygens of cis-cis H2CO3 are a cis and a trans one in cis-trans H2CO3)
    is a member of its own, so that the heavy ensemble counts every isotopomer the light one
    interconverts with."""
    from tstrate.physics.atom_map import corresponding_atoms
    from tstrate.physics.ensembles import build_ensemble, conformer_members

    if not sp.conformers:
        return iso.substituted_species(sp, {atoms[0]: mass_number}, name=name)
    members = []
    element = sp.symbols[atoms[0]]
    for c in conformer_members(sp):
        if c.symbols == sp.symbols and np.allclose(c.positions_A, sp.positions_A):
            images = list(atoms)
        else:
            to_c = corresponding_atoms([(sp.symbols, sp.positions_A)], c.symbols, c.positions_A)
            images = [to_c[a] for a in atoms]
        classes = iso.equivalent_atom_classes(c, element)
        seen = set()
        for img in images:
            cls = next(i for i, k in enumerate(classes) if img in k)
            if cls in seen:
                continue
            seen.add(cls)
            label = (c.conformer_label or c.name) + ("" if len(set(images)) == 1 else f" (atom {img + 1})")
            members.append((label, iso.substituted_species(c.with_changes(conformers=()), {img: mass_number},
                                                           name=name)))
    return build_ensemble(name, members)


def position_kies(study, sub: Substitution, T, light_rates: dict, low_modes: LowModes = HARMONIC
                  ) -> list[PositionKIE]:
    """The KIE of a single substitution at each set of equivalent positions of each reactant
    (:class:`PositionKIE`) of the channels ``sub`` covers. Reactants that appear twice in a channel
    are skipped (one copy cannot be told from the other). Separated products that appear twice are
    left light: only the forward rate constant, which does not involve them, is used."""
    from tstrate.physics.tst import channel_rates

    out = []
    for ch in study.channels:
        if sub.channels and ch.name not in sub.channels:
            continue
        ts = study.species[ch.transition_state]
        if sub.element not in ts.symbols:
            continue
        sides = {"reactants": list(ch.reactants), "products": list(ch.products)}
        maps = {key: _correspondence(study, names, ts) for key, names in sides.items()}
        for extra in (ch.complex, ch.product_complex):
            if extra:
                maps[extra] = _correspondence(study, [extra], ts)
        to_ts = {owner: t for t, owner in enumerate(maps["reactants"])}
        ts_classes = iso.equivalent_atom_classes(ts, sub.element)
        ts_class_of = {a: i for i, c in enumerate(ts_classes) for a in c}
        for name in dict.fromkeys(ch.reactants):
            if ch.reactants.count(name) > 1 or sub.element not in study.species[name].symbols:
                continue
            for cls in iso.equivalent_atom_classes(study.species[name], sub.element):
                images = {}
                for a in cls:  # one path per distinct transition-state position
                    t = to_ts[(name, a)]
                    images.setdefault(ts_class_of[t], (a, t))
                paths = []
                for a, t in images.values():
                    atoms = {name: (a,), ch.transition_state: (t,)}
                    for key, m in maps.items():
                        owner, k = m[t]
                        if key == "reactants":
                            continue
                        if key == "products" and ch.products.count(owner) > 1:
                            continue  # left light (module text)
                        atoms[owner] = (k,)
                    heavy = dict(study.species)
                    for n, idx in atoms.items():
                        _refuse_without_hessian(study, n)
                        heavy[n] = (class_isotopologue(study.species[n], cls, sub.mass_number, n) if n == name
                                    else iso.substituted_species(study.species[n], {idx[0]: sub.mass_number}, name=n))
                    if ch.name not in light_rates:
                        light_rates[ch.name] = channel_rates(ch, study.species, T, low_modes=low_modes)
                    hr = channel_rates(ch, heavy, T, low_modes=low_modes)
                    paths.append((t, hr, iso.kie_factors(light_rates[ch.name], hr, study.species, heavy, ch)))
                light = light_rates[ch.name]
                k_heavy = sum(p[1].k for p in paths)
                k_heavy_cl = sum(p[1].k_classical for p in paths)
                out.append(PositionKIE(sub.label, ch.name, name, tuple(cls), tuple((t, f) for t, _, f in paths),
                                       light.k / k_heavy, light.k_classical / k_heavy_cl))
    return out


def pool_ln_beta(ln_betas: dict, fractions: dict, atom_counts: dict) -> np.ndarray:
    """ln beta of a pool of species in exchange equilibrium: the mean of its members' beta factors
    weighted by the number of atoms of the element each holds, sum_i x_i n_i beta_i / sum_i x_i n_i
    (x_i the mole fractions, n_i the atoms per molecule; trace substitution, so the heavy isotope's
    share in each member is proportional to n_i beta_i)."""
    w = {m: fractions[m] * atom_counts[m] for m in fractions}
    total = sum(w.values())
    return np.log(sum(w[m] * np.exp(ln_betas[m]) for m in fractions) / total)


def route_mixes(study, comparisons, low_modes: LowModes = HARMONIC) -> list[RouteMix]:
    """The effective KIE of every comparison's route mix (:class:`RouteMix`), for every substitution
    that touches all of its routes' channels."""
    from tstrate.physics.tst import channel_rates

    settings: IsotopeSettings = study.sections["isotopes"]
    out = []
    for comp in comparisons:
        T = comp.temperature_K
        chans = [r.channel for r in comp.routes]
        for sub in settings.substitutions:
            if sub.mode == "each" or (sub.channels and not set(chans) <= set(sub.channels)):
                continue  # position by position: no single route-mix isotopologue
            kies = {}
            for name in chans:
                ch = study.channel(name)
                heavy = _heavy_map(study, ch, sub)
                if all(heavy[n] is study.species[n] for n in heavy):
                    break
                kies[name] = (channel_rates(ch, study.species, T, low_modes=low_modes).k
                              / channel_rates(ch, heavy, T, low_modes=low_modes).k)
            if len(kies) != len(chans):
                continue
            total = sum(r.pseudo_first_order_per_s for r in comp.routes)  # (A, T)
            for a, abundance in enumerate(comp.comparison.abundances):
                w = {r.channel: r.pseudo_first_order_per_s[a] / total[a] for r in comp.routes}
                inv = sum(w[c] / kies[c] for c in chans)
                out.append(RouteMix(sub.label, comp.comparison.name, abundance.describe(), T, w, 1.0 / inv))
    return out


def study_isotopes(study, *, low_modes: LowModes = HARMONIC, temperature_K=None,
                   comparisons=None) -> IsotopeResult:
    """Everything the study's ``[isotopes]`` section asks for (see the module text); with
    ``comparisons`` (results of the study's [[comparison]]s), the KIE of each route mix too."""
    from tstrate.arrays import temperatures_K
    from tstrate.physics.tst import channel_rates
    from tstrate.physics.vibrations import isotope_mass_amu

    settings: IsotopeSettings = study.sections["isotopes"]
    T = temperatures_K(temperature_K if temperature_K is not None else
                       (settings.temperature_K if settings.temperature_K is not None
                        else study.conditions.temperature_K), ndim=1)
    light_rates = {}
    results = []
    positions: list[PositionKIE] = []
    for i, sub in enumerate(settings.substitutions):
        try:
            betas = []
            for name, sp in study.species.items():
                if sp.kind != "minimum" or sub.element not in sp.symbols:
                    continue
                _refuse_without_hessian(study, name)
                b = species_beta(sp, sub.element, sub.mass_number, T)
                betas.append(SpeciesBeta(name, b.ln_beta, b.positions, b.ln_f_by_position))
            kies = []
            if sub.mode == "each":
                positions += position_kies(study, sub, T, light_rates, low_modes)
            for ch in ([] if sub.mode == "each" else study.channels):
                if sub.channels and ch.name not in sub.channels:
                    continue
                heavy = _heavy_map(study, ch, sub)
                if all(heavy[n] is study.species[n] for n in heavy):
                    continue  # nothing substituted in this channel
                if ch.name not in light_rates:
                    light_rates[ch.name] = channel_rates(ch, study.species, T, low_modes=low_modes)
                hr = channel_rates(ch, heavy, T, low_modes=low_modes)
                kies.append(iso.kie_factors(light_rates[ch.name], hr, study.species, heavy, ch))
        except InputError as exc:
            raise exc.within(file=study.file, prefix=f"isotopes.substitution[{i}]") from None
        results.append(SubstitutionResult(sub, isotope_mass_amu(sub.element), isotope_mass_amu(sub.element,
                                                                                               sub.mass_number),
                                          tuple(betas), tuple(kies)))

    fractionation = []
    for r in results:
        beta = {b.species: b.ln_beta for b in r.betas}
        for pool, members in settings.pools.items():
            if all(m in beta for m in members):
                beta[pool] = pool_ln_beta({m: beta[m] for m in members}, members,
                                          {m: study.species[m].symbols.count(r.substitution.element)
                                           for m in members})
        for a, b in settings.fractionation:
            if a in beta and b in beta:
                fractionation.append(Fractionation(r.substitution.label, a, b, beta[a] - beta[b]))

    three = []
    for j, r2 in enumerate(results):
        for r3 in results[j + 1:]:
            s2, s3 = r2.substitution, r3.substitution
            if (s2.element != s3.element or s2.mode != s3.mode or s2.atoms != s3.atoms
                    or s2.channels != s3.channels or s2.mass_number == s3.mass_number):
                continue
            if s2.mass_number > s3.mass_number:
                r2, r3 = r3, r2
                s2, s3 = s3, s2
            if not r2.mass_light_amu < r2.mass_heavy_amu:
                continue
            refs = iso.theta_references(r2.mass_light_amu, r2.mass_heavy_amu, r3.mass_heavy_amu)
            labels = (s2.label, s3.label)
            b3 = {b.species: b.ln_beta for b in r3.betas}
            for b in r2.betas:
                three.append(ThreeIsotope(s2.element, labels, "equilibrium", b.species,
                                          iso.theta(b.ln_beta, b3[b.species]), refs))
            f3 = {(f.species_a, f.species_b): f.ln_alpha for f in fractionation if f.label == s3.label}
            for f in fractionation:
                if f.label == s2.label and (f.species_a, f.species_b) in f3:
                    three.append(ThreeIsotope(s2.element, labels, "equilibrium", f"{f.species_a}/{f.species_b}",
                                              iso.theta(f.ln_alpha, f3[(f.species_a, f.species_b)]), refs))
            k3 = {k.channel: k for k in r3.kie}
            for k in r2.kie:
                if k.channel in k3:  # kinetic fractionation alpha = k_heavy/k_light = 1/KIE
                    three.append(ThreeIsotope(s2.element, labels, "kinetic", k.channel,
                                              iso.theta(-np.log(k.kie), -np.log(k3[k.channel].kie)), refs))
    mixes = ()
    if comparisons:
        try:
            mixes = tuple(route_mixes(study, comparisons, low_modes))
        except InputError as exc:
            raise exc.within(file=study.file, prefix="isotopes") from None
    return IsotopeResult(T, tuple(results), tuple(fractionation), tuple(three), mixes, tuple(positions))
