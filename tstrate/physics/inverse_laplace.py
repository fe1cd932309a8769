"""k(E) of a barrierless channel by inverse Laplace transform of its high-pressure k_inf(T).

Method
------
The inverse-Laplace-transform (ILT) method of Davies, Green and Pilling (Chem. Phys. Lett. 126,
373 (1986)), resting on the Laplace relation between the canonical and the microcanonical rate
constant given by Robinson and Holbrook (*Unimolecular Reactions*, Wiley 1972, ch. 3; see also
Forst, *Unimolecular Reactions*, Cambridge 2003, ch. 8):

    k_inf(T) Q(T) = int_0^inf k(E) rho(E) exp(-E / RT) dE,

so k(E) rho(E) is the inverse Laplace transform, in beta = 1/RT, of k_inf(T) Q(T). With the
modified Arrhenius form k_inf = A (T/T0)^n exp(-Ea/RT) and the rule
L^-1[beta^-p F(beta)](E) = I^p[f](E) (Riemann-Liouville integral of order p,
I^p[f](E) = int_0^E f(x) (E - x)^(p-1) / Gamma(p) dx) the transform is closed:

* unimolecular k_inf (:func:`unimolecular_ilt`): k(E) rho(E) = A (R T0)^-n I^n[rho](E - Ea);
  for n = 0 this is k(E) = A rho(E - Ea) / rho(E) (Forst 2003, eq. 8.9);
* association A + B -> AB with k_inf of the association (:func:`association_ilt`): by detailed
  balance k_diss,inf = k_assoc,inf / Kc and Kc = Q_AB / (Q_A Q_B) exp(D0 / RT) (per volume), so
  k_diss(E) rho_AB(E) = L^-1[k_assoc Q_A Q_B / Q_AB,spectator](E - D0). The relative translation
  and every classical rotor (external rotation of the fragments, free internal rotors) have
  partition functions C (RT)^(d/2); their powers join the T^n of k_inf, so
  k_diss(E) rho_AB(E) = A (R T0)^-n C I^p[rho_vib,el(A+B)](E - D0 - Ea),
  p = n + 3/2 + (sum of the fragments' rotor dimensions)/2 - (the adduct's spectator
  rotor dimensions)/2.

On the grain the fragment states sit at grain centres; I^p is applied with the grain-averaged
kernel w_m = [G((m + 1/2) g - offset) - G((m - 1/2) g - offset)] / g, G(y) = y^p / Gamma(p + 1)
(0 for y <= 0), so the thermal average of the resulting k(E) reproduces k_inf(T) to second
order in grain / RT and the offset D0 + Ea need not be a whole number of grains.

Limitations (documented, not hidden)
------------------------------------
* No angular momentum: k(E) is an average over J. The adduct's overall rotation is counted as
  active (convolved into rho_AB: all its rotational energy is available for dissociation, which
  overstates the rotational factor of the low-pressure limit), left as a spectator (its partition
  function divides out: no rotational energy is available, which understates it), or, in between,
  "k_active": the K-rotor about the unique axis active and the 2-D rotor a spectator (the usual
  choice of RRKM with J conserved). The centrifugal barriers of a barrierless channel are not
  modelled.
* k(E) is only as good as k_inf(T): its shape near threshold follows the temperature exponent n,
  and an n fitted over a narrow range of T is extrapolated to all E. It is sensitive to n: near
  threshold k rho grows as (E - D0 - Ea)^(p-1), so a change of n by dn scales k(E) there by about
  ((E - D0 - Ea) / R T0)^dn (times a ratio of Gamma functions).
* The modified Arrhenius form must hold at all T for the transform to exist; in practice the
  result is meant for the temperatures k_inf was fitted over.
* Unimolecular k_inf with n < 0 needs a fractional derivative (-1 < n < 0 only); it can be
  negative just above threshold and is set to zero there (the share is reported).
* Rotors are classical (the partition functions of :mod:`tstrate.physics.thermo` are too).

A variational treatment of the loose transition state can replace this later.

Units: energies J/mol (grid from the adduct's or reactant's zero-point level), wavenumbers cm^-1,
A in s^-1 (unimolecular) or m^3 molecule^-1 s^-1 (association), k(E) s^-1.
"""

from __future__ import annotations

import logging
import math
from dataclasses import dataclass, field

import numpy as np
from scipy.special import gammaln

from tstrate.arrays import positive, temperatures_K
from tstrate.errors import InputError
from tstrate.model import Species
from tstrate.physics.rrkm import H_MOLAR, MicrocanonicalRate
from tstrate.physics.states import CM1_J_PER_MOL, GRAIN_FRACTION_OF_LOWEST, StateCounts, convolve_counts, count_states
from tstrate.units import C, H, K_B, N_A, R

log = logging.getLogger(__name__)

#: how the adduct's overall rotation enters its density of states
ROTATION_TREATMENTS = ("active", "k_active", "spectator")


# ---------------------------------------------------------------- the rate form
@dataclass(frozen=True)
class ModifiedArrhenius:
    """k_inf(T) = A (T / T0)^n exp(-Ea / RT).

    A_SI: pre-exponential factor in SI per molecule (s^-1 or m^3 s^-1); n: temperature exponent
    (dimensionless); activation_energy_J_per_mol: Ea [J/mol] (>= 0); reference_temperature_K: T0 [K].
    """

    A_SI: float
    n: float = 0.0
    activation_energy_J_per_mol: float = 0.0
    reference_temperature_K: float = 300.0

    def __post_init__(self):
        positive(self.A_SI, "A")
        positive(self.reference_temperature_K, "reference_temperature_K")
        if not (math.isfinite(self.n) and abs(self.n) <= 10):
            raise InputError(f"temperature exponent must be a number within +-10, got {self.n!r}",
                             field="temperature_exponent")
        ea = self.activation_energy_J_per_mol
        if not (math.isfinite(ea) and ea >= 0):
            raise InputError(f"activation energy must be a non-negative energy, got {ea!r}",
                             field="activation_energy")

    def rate(self, temperature_K) -> np.ndarray:
        """k_inf(T) [SI] on a temperature array."""
        t = temperatures_K(temperature_K)
        return (self.A_SI * (t / self.reference_temperature_K) ** self.n
                * np.exp(-self.activation_energy_J_per_mol / (R * t)))


# ---------------------------------------------------------------- the transform on a grain
def averaged_power_weights(n_grains: int, grain_J_per_mol: float, order: float) -> np.ndarray:
    """Grain-averaged kernel of I^order from grain 0: w_m [(J/mol)^(order-1)], order > 0.

    w_m = [G((m + 1/2) g) - G((m - 1/2) g)] / g with G(y) = y^p / Gamma(p + 1) for y > 0 and
    0 otherwise (the first cell runs from 0). ``g * C * w`` are the states per grain of classical
    rotors whose partition function is C (RT)^p (order 1 gives the classical 2-D rotor counts of
    :class:`tstrate.physics.states.Rotor`).
    """
    p = positive(order, "order")
    g = positive(grain_J_per_mol, "grain_J_per_mol")
    edges = np.arange(n_grains + 1) - 0.5
    edges[0] = 0.0
    cum = np.exp(p * np.log(np.where(edges > 0, edges, 1.0)) - gammaln(p + 1.0))
    cum[0] = 0.0
    return np.diff(cum) * g ** (p - 1.0)


def fractional_integral_weights(n_grains: int, grain_J_per_mol: float, order: float,
                                offset_J_per_mol: float = 0.0) -> np.ndarray:
    """Kernel of I^order shifted by ``offset`` on the grain: w_m [(J/mol)^(order-1)], order > -1.

    Grunwald-Letnikov weights omega_m = Gamma(m + p) / (Gamma(p) m!), whose generating function is
    (1 - z)^-p, with z = exp(-g / RT) the Laplace variable of one grain. Since
    (1 - z) = (g / RT) z^(1/2) (1 + O((g/RT)^2)), the weights shifted by s = offset / g + p / 2
    grains, times g^(p-1), have the Laplace transform (RT)^p exp(-offset / RT) to second order in
    g / RT for any order (also 0, a pure shift, and -1 < p < 0, a fractional derivative). The
    fractional part of s is shared between two grains (linear; also second order); weight that
    would fall below grain 0 is put on grain 0 (relative error of order (g/RT)^(1+p)).
    """
    p = float(order)
    if not p > -1.0:
        raise InputError(f"the transform needs an order above -1, got {p:g}", field="temperature_exponent",
                         hint="the temperature exponent n of k_inf is too negative for this inverse Laplace "
                              "transform")
    g = positive(grain_J_per_mol, "grain_J_per_mol")
    m = np.arange(n_grains, dtype=float)
    if p == 0.0:
        omega = np.zeros(n_grains)
        omega[0] = 1.0
    else:
        if p > 0:
            omega = np.exp(gammaln(m + p) - gammaln(p) - gammaln(m + 1.0))
        else:
            # omega_0 = 1, omega_m = prod_{k<m} (k + p) / (k + 1): negative for m >= 1, summing to 0
            omega = np.cumprod(np.concatenate([[1.0], (m[:-1] + p) / (m[:-1] + 1.0)]))
    shift = offset_J_per_mol / g + 0.5 * p
    k = math.floor(shift)
    frac = shift - k
    out = np.zeros(n_grains)
    for lag, weight in ((k, 1.0 - frac), (k + 1, frac)):
        if weight == 0.0:
            continue
        if lag >= 0:
            if lag < n_grains:
                out[lag:] += weight * omega[: n_grains - lag]
        else:
            out[0] += weight * omega[: min(n_grains, -lag + 1)].sum()
            if n_grains + lag > 1:
                out[1: n_grains + lag] += weight * omega[-lag + 1: n_grains]
    return out * g ** (p - 1.0)


def inverse_laplace_flux(counts: np.ndarray, grain_J_per_mol: float, order: float,
                         offset_J_per_mol: float, n_grains: int) -> np.ndarray:
    """I^order[rho](E_i - offset), grain-averaged, for i < n_grains [(J/mol)^(order-1)].

    ``counts``: states per grain (from their own zero-point level) on the same grain.
    """
    w = fractional_integral_weights(n_grains, grain_J_per_mol, order, offset_J_per_mol)
    c = np.zeros(n_grains)
    m = min(n_grains, np.size(counts))
    c[:m] = np.asarray(counts, dtype=float)[:m]
    return np.convolve(c, w)[:n_grains]


def _rate_from_flux(states: StateCounts, flux: np.ndarray, threshold_J_per_mol: float,
                    prefactor: float) -> tuple[MicrocanonicalRate, float, float]:
    """k(E) = prefactor * flux / rho; returns (rate, share of the flux in empty grains, share clipped)."""
    g = states.grain_J_per_mol
    w = prefactor * flux
    clipped = float(-w[w < 0].sum() / max(np.abs(w).sum(), 1e-300))
    w = np.where(w > 0, w, 0.0)
    rho = states.density_per_J_per_mol
    has = rho > 0
    k = np.zeros(states.n_grains)
    k[has] = w[has] / rho[has]
    lost = float(w[~has].sum() / w.sum()) if w.sum() > 0 else 0.0
    k.setflags(write=False)
    n_eff = H_MOLAR * w             # effective sum of states of the loose transition state
    n_eff.setflags(write=False)
    e0 = round(threshold_J_per_mol / g) * g
    return MicrocanonicalRate(states, k, n_eff, e0, 1.0, 1.0), lost, clipped


def unimolecular_ilt(states: StateCounts, k_inf: ModifiedArrhenius) -> MicrocanonicalRate:
    """k(E) [s^-1] of a unimolecular reaction from its k_inf(T) [s^-1] on ``states``' grain.

    k(E) rho(E) = A (R T0)^-n I^n[rho](E - Ea), -1 < n; for n = 0, k(E) = A rho(E - Ea) / rho(E).
    Grains without a state get k = 0; for n < 0 negative values near threshold are set to 0.
    """
    flux = inverse_laplace_flux(states.counts, states.grain_J_per_mol, k_inf.n,
                                k_inf.activation_energy_J_per_mol, states.n_grains)
    prefactor = k_inf.A_SI * (R * k_inf.reference_temperature_K) ** (-k_inf.n)
    rate, lost, clipped = _rate_from_flux(states, flux, k_inf.activation_energy_J_per_mol, prefactor)
    if clipped > 1e-6:
        log.warning("inverse Laplace transform with n = %g: %.2g of |k rho| was negative near threshold and "
                    "is set to zero", k_inf.n, clipped)
    return rate


# ---------------------------------------------------------------- species pieces
def vibronic_counts(species: Species, max_energy_J_per_mol: float, grain_J_per_mol: float) -> StateCounts:
    """Harmonic-vibration and electronic-level states per grain from the species' zero-point level
    (Beyer-Swinehart; electronic levels convolved in). An atom has its electronic levels only."""
    n = int(math.ceil(max_energy_J_per_mol / grain_J_per_mol)) + 1
    freqs = species.harmonic_frequencies_cm1
    if freqs.size:
        sc = count_states(freqs, max_energy_J_per_mol, grain_J_per_mol=grain_J_per_mol, refine=False)
        counts = sc.counts[:n]
        if counts.size < n:
            counts = np.concatenate([counts, np.zeros(n - counts.size)])
    else:
        counts = np.zeros(n)
        counts[0] = 1.0
    elec = np.zeros(n)
    for level in species.levels:
        i = int(round(level.energy_cm1 * CM1_J_PER_MOL / grain_J_per_mol))
        if i < n:
            elec[i] += level.degeneracy
    return StateCounts(grain_J_per_mol, convolve_counts(counts, elec))


def classical_rotor_part(species: Species) -> tuple[float, float]:
    """(dimension d, ln C) with the rotors' partition function C (RT [J/mol])^(d/2).

    The rotors are the external rigid rotor (classical; symmetry number and optical isomers
    included) and the declared free internal rotors, exactly as in the partition functions of
    :mod:`tstrate.physics.thermo` (which are power laws in T, so C is read off at one T).
    """
    from tstrate.physics.thermo import internal_free_rotor, rotational

    t = np.array([1000.0])
    dim = 0.0
    ln_q = 0.0
    if not species.is_atom:
        dim += 2.0 if species.linear else 3.0
        ln_q += float(rotational(species.moments_of_inertia_kg_m2(), species.symmetry_number,
                                 species.linear, t)[0][0])
    ln_q += math.log(species.optical_isomers)
    for rotor in species.free_rotors:
        dim += 1.0
        ln_q += float(internal_free_rotor(rotor.moment_kg_m2, rotor.symmetry_number, t)[0][0])
    return dim, ln_q - 0.5 * dim * math.log(R * 1000.0)


def internal_rotor_part(species: Species) -> tuple[float, float]:
    """(dimension, ln C) of the declared free internal rotors alone (see :func:`classical_rotor_part`)."""
    from tstrate.physics.thermo import internal_free_rotor

    t = np.array([1000.0])
    dim = float(len(species.free_rotors))
    ln_q = sum(float(internal_free_rotor(r.moment_kg_m2, r.symmetry_number, t)[0][0]) for r in species.free_rotors)
    return dim, ln_q - 0.5 * dim * math.log(R * 1000.0)


def relative_translation_part(first: Species, second: Species) -> float:
    """ln C of the relative translation per volume, (2 pi mu kT / h^2)^(3/2) = C (RT)^(3/2) [m^-3]."""
    mu = first.mass_kg * second.mass_kg / (first.mass_kg + second.mass_kg)
    return 1.5 * math.log(2.0 * math.pi * mu / (H**2 * N_A))


def rotor_counts(dimension: float, ln_constant: float, n_grains: int, grain_J_per_mol: float) -> np.ndarray:
    """States per grain of classical rotors with partition function C (RT)^(d/2): C I^(d/2)[delta]."""
    if dimension == 0:
        out = np.zeros(n_grains)
        out[0] = math.exp(ln_constant)
        return out
    return math.exp(ln_constant) * grain_J_per_mol * averaged_power_weights(
        n_grains, grain_J_per_mol, 0.5 * dimension)


# ---------------------------------------------------------------- association
@dataclass(frozen=True)
class AssociationModel:
    """k(E) of an adduct's barrierless dissociation, from the k_inf of the association.

    rate: k_diss(E) [s^-1] on the adduct's grain (energies from the adduct's zero-point level);
        its ``barrier_J_per_mol`` is the well depth D0 on the grain, its ``ts_sum_of_states`` the
        effective loose-TS sum of states h k rho.
    well_depth_J_per_mol: D0, fragments' zero-point level above the adduct's [J/mol].
    k_inf: the association's k_inf(T) [m^3 s^-1] the transform was made from.
    order: p of the transform. rotation: "active" or "spectator" (see the module docstring).
    grain_cm1: grain used. lost_flux_share: share of k rho that fell on grains without an adduct
        state (k = 0 there), at infinite temperature weight. warnings: sentences for the user.
    """

    adduct: Species
    fragments: tuple[Species, Species]
    rate: MicrocanonicalRate = field(repr=False)
    well_depth_J_per_mol: float
    k_inf: ModifiedArrhenius
    order: float
    rotation: str
    grain_cm1: float
    lost_flux_share: float
    warnings: tuple[str, ...] = ()

    def high_pressure_dissociation_per_s(self, temperature_K) -> np.ndarray:
        """k_diss,inf(T) = sum_E f(E) k(E) [s^-1] on the grain."""
        from tstrate.physics.falloff import high_pressure_limit

        return high_pressure_limit(self.rate, temperature_K)

    def ln_equilibrium_constant_m3(self, temperature_K) -> np.ndarray:
        """ln Kc [ln m^3] of A + B <=> AB from the canonical partition functions (per molecule)."""
        from tstrate.physics.tst import ln_equilibrium_constant

        t = temperatures_K(temperature_K, ndim=1)
        return ln_equilibrium_constant(list(self.fragments), [self.adduct], t)

    def activation_distribution(self, temperature_K) -> np.ndarray:
        """Chemical-activation entry distribution, shape (n_T, n_grains), rows summing to 1.

        Adducts formed from thermal A + B have F(E) proportional to k_diss(E) rho(E) exp(-E/RT)
        (detailed balance of the association flux; e.g. Holbrook, Pilling and Robertson,
        *Unimolecular Reactions*, 2nd ed., Wiley 1996, ch. 9).
        """
        t = temperatures_K(temperature_K, ndim=1)
        flux = self.rate.ts_sum_of_states
        e = self.rate.energies_J_per_mol
        out = np.zeros((t.size, e.size))
        has = flux > 0
        for i, ti in enumerate(t):
            log_w = np.log(flux[has]) - e[has] / (R * ti)
            w = np.exp(log_w - log_w.max())
            out[i, has] = w / w.sum()
        return out


def association_ilt(adduct: Species, fragments: tuple[Species, Species], k_inf: ModifiedArrhenius, *,
                    grain_cm1: float = 10.0, max_temperature_K: float = 400.0,
                    energy_above_threshold_cm1: float | None = None,
                    rotation: str = "active") -> AssociationModel:
    """k_diss(E) of ``adduct`` -> ``fragments`` from the association's k_inf(T) [m^3 s^-1].

    Parameters
    ----------
    adduct, fragments:
        The well AB and its two fragments A, B, each with an electronic energy; D0 is the
        difference of their zero-point levels (energy + harmonic ZPE).
    k_inf:
        High-pressure association rate constant (:class:`ModifiedArrhenius`, A in m^3 s^-1).
    grain_cm1:
        Requested grain [cm^-1], refined to a third of the adduct's lowest wavenumber and then
        lowered so that D0 is a whole number of grains.
    max_temperature_K, energy_above_threshold_cm1:
        The grid reaches D0 plus max(20000 cm^-1, 80 k_B T_max) unless the span is given.
    rotation:
        "active" (the adduct's external rotor convolved into its density), "k_active" (only its
        K-rotor) or "spectator".
    """
    from tstrate.physics.tst import zpe_level_J_per_mol

    if rotation not in ROTATION_TREATMENTS:
        raise InputError(f"unknown rotation treatment {rotation!r}", field="rotation",
                         hint="use " + " or ".join(ROTATION_TREATMENTS))
    a, b = fragments
    d0 = zpe_level_J_per_mol(a) + zpe_level_J_per_mol(b) - zpe_level_J_per_mol(adduct)
    if not d0 > 0:
        raise InputError(f"the adduct {adduct.name!r} lies {-d0 / 1e3:.2f} kJ/mol above {a.name} + {b.name} "
                         "(ZPE-corrected); a barrierless association needs a bound adduct",
                         file=adduct.source, field="energy")
    warnings = []
    lowest = float(np.min(adduct.harmonic_frequencies_cm1)) if adduct.harmonic_frequencies_cm1.size else math.inf
    grain = positive(grain_cm1, "grain_cm1")
    if grain > GRAIN_FRACTION_OF_LOWEST * lowest:
        warnings.append(f"grain {grain:g} cm-1 refined to {GRAIN_FRACTION_OF_LOWEST * lowest:.4g} cm-1 "
                        f"(a third of the lowest wavenumber of {adduct.name})")
        grain = GRAIN_FRACTION_OF_LOWEST * lowest
    d0_cm1 = d0 / CM1_J_PER_MOL
    grain = d0_cm1 / math.ceil(d0_cm1 / grain - 1e-9)
    g = grain * CM1_J_PER_MOL
    span_cm1 = (energy_above_threshold_cm1 if energy_above_threshold_cm1 is not None
                else max(20000.0, 80.0 * K_B * max_temperature_K / (H * C * 100.0)))
    e_top = d0 + span_cm1 * CM1_J_PER_MOL + k_inf.activation_energy_J_per_mol
    n = int(math.ceil(e_top / g)) + 1

    # adduct: vibrations and electronic levels, with its rotors when active
    ad = vibronic_counts(adduct, e_top, g)
    d_ad, ln_c_ad = classical_rotor_part(adduct)
    d_int, ln_c_int = internal_rotor_part(adduct)          # free internal rotors: always active
    if rotation == "active":
        d_act, ln_act = d_ad, ln_c_ad
    elif rotation == "k_active" and not adduct.linear and not adduct.is_atom:
        # the K-rotor (unique axis, classical 1-D, constant A or C) active, the 2-D rotor a spectator:
        # Q_K = sqrt(pi RT / B_K), and Q_3D / Q_K is the spectator part (exact for classical rotors)
        from tstrate.physics.unimolecular import split_rotation

        b_k = split_rotation(adduct).K_cm1 * CM1_J_PER_MOL
        ln_c_k = 0.5 * math.log(math.pi / b_k)
        d_act, ln_act = d_int + 1.0, ln_c_int + ln_c_k
    else:
        d_act, ln_act = d_int, ln_c_int
    if d_act > 0:
        ad = StateCounts(g, convolve_counts(ad.counts, rotor_counts(d_act, ln_act, ad.n_grains, g)))
    elif ln_act != 0.0:
        ad = StateCounts(g, ad.counts * math.exp(ln_act))
    d_spect, ln_spect = d_ad - d_act, ln_c_ad - ln_act

    # fragments: vibrations and electronic levels convolved; rotors and translation in the power
    span = e_top - d0 + g
    ca, cb = vibronic_counts(a, span, g), vibronic_counts(b, span, g)
    pair = convolve_counts(ca.counts, cb.counts)
    d_a, ln_a = classical_rotor_part(a)
    d_b, ln_b = classical_rotor_part(b)
    order = k_inf.n + 1.5 + 0.5 * (d_a + d_b - d_spect)
    ln_c = relative_translation_part(a, b) + ln_a + ln_b - ln_spect
    flux = inverse_laplace_flux(pair, g, order, d0 + k_inf.activation_energy_J_per_mol, n)
    prefactor = k_inf.A_SI * (R * k_inf.reference_temperature_K) ** (-k_inf.n) * math.exp(ln_c)
    rate, lost, clipped = _rate_from_flux(ad, flux, d0, prefactor)
    if lost > 1e-3:
        warnings.append(f"{100 * lost:.2g} % of the dissociation flux of {adduct.name} falls on grains without a "
                        "state and is lost (k = 0 there); use a finer grain or rotation = \"active\"")
    return AssociationModel(adduct, (a, b), rate, d0, k_inf, order, rotation, grain, lost, tuple(warnings))
