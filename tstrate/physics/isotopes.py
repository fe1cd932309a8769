"""Isotopologues: substituted species, reduced partition-function ratios (beta factors),
fractionation factors, kinetic isotope effects split into factors, three-isotope exponents.

Everything here is harmonic TST / rigid-rotor harmonic-oscillator (RRHO) physics on the one
Born-Oppenheimer surface: an isotopologue has the parent's geometry, electronic energy and
Cartesian Hessian, and new masses. Its frequencies are recomputed from the Hessian
(:func:`substituted_species`); a species without a Hessian is refused, since the
frequencies of a substituted species cannot be guessed.

Reduced partition-function ratio (Bigeleisen and Mayer, J. Chem. Phys. 15, 261 (1947);
Urey, J. Chem. Soc. 1947, 562), heavy (') over light, harmonic:

    f = prod_i (u'_i / u_i) exp(-u'_i / 2) (1 - exp(-u_i)) / [exp(-u_i / 2) (1 - exp(-u'_i))],

u = h c nu / k_B T, over the real vibrational modes (the Teller-Redlich product rule has
removed translation and rotation; it holds exactly for frequencies projected from one
Hessian). The symmetry-number ratio s/s' is left out of f (for one substituted atom it only
counts equivalent positions, which cancels in isotope ratios). The beta factor of one
position is f of the singly substituted molecule; that of a species is the mean over its
atoms of the element (trace isotope, statistical distribution). High-temperature limit
(Bigeleisen and Mayer 1947, eq. 11a):

    ln f -> (1/24) (h / 2 pi k_B T)^2 sum_atoms (1/m - 1/m') sum_xyz d^2U/dx^2.

Three-isotope exponent theta = ln alpha(2) / ln alpha(3) for isotopes m1 < m2 < m3 of one
element. Mass-dependent references: the equilibrium high-temperature limit
(1/m1 - 1/m2)/(1/m1 - 1/m3) (the Bigeleisen-Mayer term), the low-temperature (zero-point)
limit (1/sqrt(m1) - 1/sqrt(m2))/(1/sqrt(m1) - 1/sqrt(m3)), and the classical kinetic limit
ln(m1/m2)/ln(m1/m3) (e.g. Young, Galy and Nagahara, Geochim. Cosmochim. Acta 66, 1095 (2002);
Matsuhisa, Goldsmith and Clayton, GCA 42, 173 (1978)).

Harmonic TST and RRHO give strictly mass-dependent fractionation: every factor is a smooth
function of the masses on one surface. A mass-independent signature needs physics outside
this model: nuclear-volume (field-shift) effects, magnetic isotope effects (nuclear spin of
17O, 33S), symmetry-dependent effects of the kind seen in ozone formation, or photochemical
(self-shielding, isotope-selective absorption) effects. None of them is modelled here.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from tstrate.arrays import temperatures_K
from tstrate.errors import InputError
from tstrate.model import Species
from tstrate.units import CM1_J, H, K_B

#: the text the report and the command print about mass dependence (module docstring, last paragraph)
MASS_DEPENDENCE_STATEMENT = (
    "Harmonic transition-state theory and the rigid-rotor harmonic-oscillator model give strictly "
    "mass-dependent fractionation: every factor is a smooth function of the nuclear masses on one "
    "Born-Oppenheimer surface, so the three-isotope exponents stay between their mass-dependent limits. "
    "A mass-independent signature (a capital-Delta far from zero) needs other physics: nuclear-volume "
    "(field-shift) effects, magnetic isotope effects (nuclear spin of 17O, 33S), symmetry-dependent effects "
    "such as those of ozone formation, or photochemical effects (self-shielding, isotope-selective "
    "absorption). None of these is modelled here.")

#: isotope names accepted besides mass-number-and-symbol ("13C"): the hydrogen isotopes
_NAMED = {"D": ("H", 2), "T": ("H", 3)}


# ---- isotopes -------------------------------------------------------------------------

def parse_isotope(name: str) -> tuple[str, int]:
    """``"13C"`` -> ("C", 13), ``"D"`` -> ("H", 2), ``"C13"`` also accepted; the isotope must be
    known to the periodic-table library (:func:`tstrate.physics.vibrations.isotope_mass_amu`)."""
    from tstrate.physics.vibrations import isotope_mass_amu

    text = str(name).strip()
    if text in _NAMED:
        symbol, a = _NAMED[text]
    else:
        import re

        m = re.fullmatch(r"(\d+)([A-Z][a-z]?)", text) or re.fullmatch(r"([A-Z][a-z]?)-?(\d+)", text)
        if not m:
            raise InputError(f"cannot read isotope {name!r}", field="isotope",
                             hint="write the mass number then the element, e.g. 13C, 18O, 34S, or D")
        a_text, symbol = (m.group(1), m.group(2)) if m.group(1).isdigit() else (m.group(2), m.group(1))
        a = int(a_text)
    try:
        isotope_mass_amu(symbol, a)
    except InputError as exc:
        raise InputError(exc.problem, field="isotope") from None
    return symbol, a


def isotope_label(symbol: str, mass_number: int) -> str:
    """("H", 2) -> "D"; ("C", 13) -> "13C"."""
    for k, v in _NAMED.items():
        if v == (symbol, mass_number):
            return k
    return f"{mass_number}{symbol}"


# ---- substituted species ------------------------------------------------------------------

def substituted_species(parent: Species, isotopes: dict[int, int], *, name: str | None = None,
                        tolerance_A: float | None = None) -> Species:
    """The isotopologue of ``parent`` with atoms ``isotopes`` (0-based index -> mass number).

    Frequencies come from the parent's Hessian with the new masses (the parent's scale factor
    kept); symmetry number and optical isomers are detected from the geometry with the new
    masses. Refused: a parent without a Hessian, with free rotors (their reduced moments change
    with the masses), or whose symmetry number is an override the geometry does not give.
    """
    from tstrate.geometry import DEFAULT_TOLERANCE_A
    from tstrate.physics import symmetry as sym
    from tstrate.physics.vibrations import isotope_mass_amu, vibrational_analysis

    if parent.conformers:
        # a conformer ensemble: the same atoms substituted in every conformer. Atom numbers refer to
        # the representative; they carry over to a conformer that lists its atoms in the same order,
        # or, when every atom of each substituted element is substituted, element by element
        rep = substituted_species(parent.with_changes(conformers=()), isotopes, name=name, tolerance_A=tolerance_A)
        confs = []
        for c in parent.conformers:
            mapped = dict(isotopes)
            if c.symbols != parent.symbols:
                elements = {parent.symbols[i] for i in isotopes if 0 <= i < parent.natoms}
                whole = all(sorted(i for i in isotopes if parent.symbols[i] == e)
                            == [i for i, s in enumerate(parent.symbols) if s == e]
                            and len({isotopes[i] for i in isotopes if parent.symbols[i] == e}) == 1
                            for e in elements)
                if whole:
                    mass_number = {parent.symbols[i]: a for i, a in isotopes.items()}
                    mapped = {i: mass_number[s] for i, s in enumerate(c.symbols) if s in mass_number}
                else:
                    # the same molecule in another atom order: the atoms are matched by their bonds
                    from tstrate.physics.atom_map import corresponding_atoms

                    try:
                        to_c = corresponding_atoms([(parent.symbols, parent.positions_A)], c.symbols,
                                                   c.positions_A)
                    except ValueError as exc:
                        raise InputError(f"conformer {c.name!r} lists its atoms in another order than "
                                         f"{parent.name!r}, and they cannot be matched ({exc})", file=c.source,
                                         field="geometry", hint="give the conformers' atoms in one order") from None
                    mapped = {to_c[i]: a for i, a in isotopes.items()}
            confs.append(substituted_species(c, mapped, name=f"{rep.name}/{c.conformer_label}",
                                             tolerance_A=tolerance_A))
        return rep.with_changes(conformers=tuple(confs), symmetry_given=rep.symmetry_given)
    tol = DEFAULT_TOLERANCE_A if tolerance_A is None else tolerance_A
    where = dict(file=parent.source, field="hessian")
    if parent.hessian_J_per_m2 is None:
        raise InputError(f"species {parent.name!r} has no Hessian; the frequencies of its isotopologues cannot "
                         "be computed (and are never guessed)", hint="add a [hessian] table to its species file",
                         **where)
    if parent.free_rotors:
        raise InputError(f"species {parent.name!r} has free rotors; their reduced moments would change with the "
                         "masses, and isotopologues of such species are not supported", file=parent.source,
                         field="free_rotors")
    if parent.hindered_rotors:
        raise InputError(f"species {parent.name!r} has hindered rotors; their reduced moments would change with "
                         "the masses, and isotopologues of such species are not supported", file=parent.source,
                         field="hindered_rotors")
    masses = np.array(parent.masses_amu, dtype=float)
    for idx, a in isotopes.items():
        if not 0 <= idx < parent.natoms:
            raise InputError(f"species {parent.name!r} has no atom {idx + 1}", field="atoms")
        masses[idx] = isotope_mass_amu(parent.symbols[idx], a)
    if "symmetry_number" in parent.symmetry_given:
        found = sym.rotational_symmetry(parent.symbols, parent.positions_A, parent.masses_amu, tol).symmetry_number
        if found != parent.symmetry_number:
            raise InputError(f"species {parent.name!r} gives symmetry_number = {parent.symmetry_number} as an "
                             f"override, but its geometry gives {found}; the isotopologue's symmetry number "
                             "cannot be derived from an override", file=parent.source, field="symmetry_number",
                             hint="remove the override, or fix the geometry")
    nm = vibrational_analysis(parent.hessian_J_per_m2, parent.positions_A, masses, parent.linear)
    parent_nm = vibrational_analysis(parent.hessian_J_per_m2, parent.positions_A, parent.masses_amu,
                                     parent.linear)
    freqs = np.sort(nm.frequencies_cm1)
    if parent.kind == "minimum" and parent_nm.imaginary_count:
        freqs = np.sort(np.abs(freqs))  # small imaginary modes tolerated in the parent, treated alike
    found = sym.rotational_symmetry(parent.symbols, parent.positions_A, masses, tol)
    isomers = sym.optical_isomers(parent.symbols, parent.positions_A, masses, tol)
    label = name or (parent.name + "[" + ",".join(
        f"{i + 1}:{isotope_label(parent.symbols[i], a)}" for i, a in sorted(isotopes.items())) + "]")
    return parent.with_changes(name=label, masses_amu=masses, frequencies_cm1=freqs,
                               symmetry_number=found.symmetry_number, optical_isomers=isomers,
                               symmetry_given=tuple(g for g in parent.symmetry_given if g == "linear"),
                               rotation_group=found.group, warnings=tuple(found.warnings))


def equivalent_atom_classes(species: Species, element: str, tolerance_A: float | None = None
                            ) -> list[tuple[int, ...]]:
    """The atoms of ``element`` grouped into classes mapped onto each other by a proper or improper
    symmetry operation of the geometry (same elements and masses), each class sorted, 0-based.

    Substituting any atom of a class gives the same isotopologue (or its mirror image, with the
    same energy levels)."""
    from tstrate.geometry import DEFAULT_TOLERANCE_A, centre_of_mass_frame, is_linear
    from tstrate.physics.symmetry import _labels, _operations

    tol = DEFAULT_TOLERANCE_A if tolerance_A is None else tolerance_A
    idx = [i for i, s in enumerate(species.symbols) if s == element]
    if not idx:
        return []
    n = species.natoms
    x = centre_of_mass_frame(species.positions_A, species.masses_amu)
    labels = _labels(species.symbols, species.masses_amu)
    perms = [tuple(range(n))]
    if n > 1 and is_linear(species.positions_A, species.masses_amu, tol):
        same = labels[:, None] == labels[None, :]
        d = np.linalg.norm(-x[:, None, :] - x[None, :, :], axis=2)
        d = np.where(same, d, np.inf)
        j = d.argmin(axis=1)
        if len(set(j.tolist())) == n and d[np.arange(n), j].max() < tol:
            perms.append(tuple(j.tolist()))
    elif n > 2:
        perms += list(_operations(x, x, labels, tol))
        perms += list(_operations(x * np.array([-1.0, 1.0, 1.0]), x, labels, tol))
    parent = {i: i for i in idx}

    def root(i):
        while parent[i] != i:
            i = parent[i]
        return i

    for p in perms:
        for i in idx:
            a, b = root(i), root(p[i])
            if a != b:
                parent[max(a, b)] = min(a, b)
    classes: dict[int, list[int]] = {}
    for i in idx:
        classes.setdefault(root(i), []).append(i)
    return [tuple(sorted(c)) for c in sorted(classes.values())]


# ---- reduced partition-function ratios ----------------------------------------------------

def _u(freqs_cm1, T) -> np.ndarray:
    nu = np.asarray(freqs_cm1, dtype=float)
    return nu[None, :] * CM1_J / (K_B * np.asarray(T, dtype=float)[:, None])


def ln_reduced_partition_function_ratio(light_cm1, heavy_cm1, temperature_K) -> np.ndarray:
    """ln f, heavy over light (module text), from the real harmonic wavenumbers [cm^-1] of the two
    isotopologues (same count), per temperature [K]."""
    light = np.asarray(light_cm1, dtype=float).ravel()
    heavy = np.asarray(heavy_cm1, dtype=float).ravel()
    if light.shape != heavy.shape:
        raise ValueError(f"light_cm1 and heavy_cm1 differ in length ({light.size} vs {heavy.size})")
    if np.any(light <= 0) or np.any(heavy <= 0):
        raise ValueError("light_cm1 and heavy_cm1 must be real (positive) wavenumbers")
    T = np.atleast_1d(temperatures_K(temperature_K))
    ul, uh = _u(light, T), _u(heavy, T)

    def ln_q_bottom(u):  # ln of exp(-u/2) / (1 - exp(-u)), harmonic oscillator from the bottom
        return -0.5 * u - np.log(-np.expm1(-u))

    return np.sum(np.log(uh / ul) + ln_q_bottom(uh) - ln_q_bottom(ul), axis=1)


def bigeleisen_mayer_ln_f(hessian_J_per_m2, light_masses_amu, heavy_masses_amu, temperature_K) -> np.ndarray:
    """The high-temperature limit of ln f from the Cartesian force constants of the substituted
    atoms (Bigeleisen and Mayer 1947, eq. 11a; module text), per temperature [K].

    Exact as T -> infinity for a Hessian free of translations and rotations (a stationary point)."""
    from tstrate.units import AMU

    h = np.asarray(hessian_J_per_m2, dtype=float)
    ml = np.asarray(light_masses_amu, dtype=float) * AMU
    mh = np.asarray(heavy_masses_amu, dtype=float) * AMU
    diag = np.diag(h).reshape(-1, 3).sum(axis=1)  # sum_xyz d2U/dx2 per atom [J/m^2]
    T = np.atleast_1d(temperatures_K(temperature_K))
    return (H / (2 * np.pi * K_B * T)) ** 2 / 24.0 * float(np.sum((1 / ml - 1 / mh) * diag))


def ln_f_species(light: Species, heavy: Species, temperature_K) -> np.ndarray:
    """ln f of two isotopologues of one species (their real harmonic wavenumbers, scaled)."""
    return ln_reduced_partition_function_ratio(light.real_frequencies_cm1, heavy.real_frequencies_cm1,
                                               temperature_K)


def trace_ln_beta(species: Species, element: str, mass_number: int, temperature_K):
    """ln beta of a trace heavy isotope in ``species``: ln of the mean of f over its atoms of
    ``element`` (one singly substituted isotopologue per class of equivalent atoms, weighted by the
    class size). Returns (ln beta per temperature, the classes (0-based), ln f per class).

    For a conformer ensemble, beta is that of its representative conformer (the conformers'
    populations barely change with one heavy atom; their own beta factors are not averaged in).
    """
    if species.conformers:
        species = species.with_changes(conformers=())
    T = np.atleast_1d(temperatures_K(temperature_K))
    classes = equivalent_atom_classes(species, element)
    if not classes:
        raise ValueError(f"species {species.name!r} holds no {element} atom")
    ln_fs, weights = [], []
    for c in classes:
        heavy = substituted_species(species, {c[0]: mass_number})
        ln_fs.append(ln_f_species(species, heavy, T))
        weights.append(len(c))
    w = np.array(weights, dtype=float)
    ln = np.array(ln_fs)
    top = ln.max(axis=0)
    ln_beta = top + np.log(np.sum(w[:, None] * np.exp(ln - top), axis=0) / w.sum())
    return ln_beta, tuple(classes), tuple(ln_fs)


# ---- fractionation ------------------------------------------------------------------

def epsilon_permil(alpha) -> np.ndarray:
    """epsilon = (alpha - 1) x 1000 [permil]."""
    return (np.asarray(alpha, dtype=float) - 1.0) * 1000.0


def theta(ln_alpha_2, ln_alpha_3) -> np.ndarray:
    """Three-isotope exponent ln alpha(2) / ln alpha(3) (NaN where ln alpha(3) is 0)."""
    a2 = np.asarray(ln_alpha_2, dtype=float)
    a3 = np.asarray(ln_alpha_3, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(a3 != 0, a2 / np.where(a3 != 0, a3, 1.0), np.nan)


@dataclass(frozen=True)
class ThetaReferences:
    """Mass-dependent reference values of theta for isotope masses m1 < m2 < m3 [u].

    equilibrium_high_T: (1/m1 - 1/m2)/(1/m1 - 1/m3), the Bigeleisen-Mayer limit.
    equilibrium_low_T: (1/sqrt(m1) - 1/sqrt(m2))/(1/sqrt(m1) - 1/sqrt(m3)), the zero-point limit.
    kinetic_classical: ln(m1/m2)/ln(m1/m3), the classical (mass-only) kinetic limit.
    """

    m1_amu: float
    m2_amu: float
    m3_amu: float
    equilibrium_high_T: float
    equilibrium_low_T: float
    kinetic_classical: float


def theta_references(m1_amu: float, m2_amu: float, m3_amu: float) -> ThetaReferences:
    """The mass-dependent theta references (module text) for masses m1 < m2 < m3 [u]."""
    if not 0 < m1_amu < m2_amu < m3_amu:
        raise ValueError("theta references need masses 0 < m1 < m2 < m3")
    hi = (1 / m1_amu - 1 / m2_amu) / (1 / m1_amu - 1 / m3_amu)
    lo = (m1_amu ** -0.5 - m2_amu ** -0.5) / (m1_amu ** -0.5 - m3_amu ** -0.5)
    kin = math.log(m1_amu / m2_amu) / math.log(m1_amu / m3_amu)
    return ThetaReferences(m1_amu, m2_amu, m3_amu, hi, lo, kin)


def capital_delta_permil(delta_2_permil, delta_3_permil, theta_ref: float) -> np.ndarray:
    """Capital-Delta = delta2 - 1000 [(1 + delta3/1000)^theta_ref - 1] [permil], e.g. Delta33S
    from delta33S and delta34S."""
    d2 = np.asarray(delta_2_permil, dtype=float)
    d3 = np.asarray(delta_3_permil, dtype=float)
    return d2 - 1000.0 * ((1.0 + d3 / 1000.0) ** theta_ref - 1.0)


# ---- kinetic isotope effects ----------------------------------------------------------

#: the factors of ln KIE, in the order the tables list them
KIE_FACTORS = ("translational", "rotational", "symmetry", "vibrational_zpe", "vibrational_excited",
               "conformers", "tunnelling")


@dataclass(frozen=True)
class KIEFactors:
    """k_light / k_heavy of one channel, split exactly into factors (each per temperature).

    translational, rotational: ratios of the translational and (symmetry-free) rotational
        partition functions, TS over reactants, light over heavy.
    symmetry: the ratio of the path degeneracies (symmetry numbers and optical isomers) light
        over heavy.
    vibrational_zpe: exp(-(dE0_light - dE0_heavy)/RT), the zero-point part of the barrier.
    vibrational_excited: ratio of the harmonic partition functions from the zero-point levels
        (the excited-state part); imaginary modes left out.
    conformers: the ratio of the conformer-ensemble terms q_ens/q_representative, TS over reactants,
        light over heavy (1 without ensembles; the other factors are the representatives').
    tunnelling: kappa_light / kappa_heavy.
    kie, kie_no_tunnelling: k_light/k_heavy with and without tunnelling (the product of the factors).
    imaginary_frequency_ratio: nu_light / nu_heavy of the imaginary mode (the classical limit of
        kie_no_tunnelling as T -> infinity, by the Teller-Redlich rule).
    """

    channel: str
    temperature_K: np.ndarray
    kie: np.ndarray
    kie_no_tunnelling: np.ndarray
    factors: dict
    imaginary_frequency_ratio: float


def _ln_parts(sp: Species, T):
    from tstrate.physics.thermo import harmonic_oscillators, rotational, translational

    trans = translational(sp.mass_kg, T, None)[0]
    if sp.is_atom:
        rot = np.zeros_like(T)
    else:
        rot = rotational(sp.moments_of_inertia_kg_m2(), 1, sp.linear, T)[0]
    f = sp.harmonic_frequencies_cm1
    vib = harmonic_oscillators(f, T)[0].sum(axis=1) if f.size else np.zeros_like(T)
    return trans, rot, vib


def _ln_conformers(sp: Species, T) -> np.ndarray:
    """ln(q_ens / q_representative) of a conformer ensemble (0 for one structure)."""
    if not sp.conformers:
        return np.zeros_like(T)
    from tstrate.physics.thermo import thermochemistry

    return thermochemistry(sp, T).ln_q["conformers"]


def kie_factors(light_rates, heavy_rates, light_species: dict, heavy_species: dict, channel) -> KIEFactors:
    """Split k_light/k_heavy of ``channel`` (the ChannelRates of the two isotopologue systems and
    their species maps) into the factors of :class:`KIEFactors`; their product equals the ratio of
    the two rate constants."""
    from tstrate.physics.tst import symmetry_degeneracy, zpe_level_J_per_mol
    from tstrate.units import R

    T = np.asarray(light_rates.temperature_K, dtype=float)
    parts = {}
    for tag, sp_map in (("light", light_species), ("heavy", heavy_species)):
        ts = sp_map[channel.transition_state]
        reac = [sp_map[n] for n in channel.reactants]
        ts_p = _ln_parts(ts, T)
        r_p = [_ln_parts(s, T) for s in reac]
        parts[tag] = dict(
            translational=ts_p[0] - sum(p[0] for p in r_p),
            rotational=ts_p[1] - sum(p[1] for p in r_p),
            vibrational_excited=ts_p[2] - sum(p[2] for p in r_p),
            conformers=_ln_conformers(ts, T) - sum(_ln_conformers(s, T) for s in reac),
            e0=zpe_level_J_per_mol(ts) - sum(zpe_level_J_per_mol(s) for s in reac),
            ln_deg=math.log(symmetry_degeneracy(reac, ts) if channel.degeneracy is None else channel.degeneracy),
            imag=ts.imaginary_frequency_cm1)
    L, Hv = parts["light"], parts["heavy"]
    ln = {k: L[k] - Hv[k] for k in ("translational", "rotational", "vibrational_excited", "conformers")}
    ln["symmetry"] = np.full_like(T, L["ln_deg"] - Hv["ln_deg"])
    ln["vibrational_zpe"] = -(L["e0"] - Hv["e0"]) / (R * T)
    ln["tunnelling"] = np.log(light_rates.kappa) - np.log(heavy_rates.kappa)
    factors = {k: np.exp(ln[k]) for k in KIE_FACTORS}
    return KIEFactors(channel=channel.name, temperature_K=T, kie=light_rates.k / heavy_rates.k,
                      kie_no_tunnelling=light_rates.k_classical / heavy_rates.k_classical, factors=factors,
                      imaginary_frequency_ratio=L["imag"] / Hv["imag"])


def teller_redlich_ln_ratio(light: Species, heavy: Species) -> float:
    """ln prod_i (nu_heavy,i / nu_light,i) over all vibrational modes (imaginary ones by magnitude)
    from masses and moments of inertia alone (Teller-Redlich product rule):

        prod (nu'/nu) = prod_atoms (m/m')^(3/2) (M'/M)^(3/2) (I'_A I'_B I'_C / I_A I_B I_C)^(1/2)

    (one moment for a linear molecule, (I'/I)^1)."""
    ml, mh = np.asarray(light.masses_amu), np.asarray(heavy.masses_amu)
    out = 1.5 * float(np.sum(np.log(ml / mh))) + 1.5 * math.log(mh.sum() / ml.sum())
    il, ih = light.moments_of_inertia_kg_m2(), heavy.moments_of_inertia_kg_m2()
    if light.linear:
        out += math.log(float(np.max(ih)) / float(np.max(il)))
    else:
        out += 0.5 * float(np.sum(np.log(ih / il)))
    return out

