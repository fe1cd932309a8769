"""Ideal-gas partition functions and thermodynamic functions, vectorised over T.

Model: ideal-gas translation, classical rigid rotor (atom, linear, nonlinear)
with the external symmetry number and optical isomers, harmonic oscillators
(partition function referenced to the zero-point level, ZPE reported apart),
and discrete electronic levels. Quasi-harmonic options for low modes
(:class:`LowModes`, cut-off nu0, 100 cm^-1 by default):

- ``"rotor-entropy-blend"``: the entropy of each real mode is blended from its
  harmonic-oscillator value towards that of a free rotor of the same
  wavenumber, S = w S_HO + (1 - w) S_free-rotor with w = 1/(1 + (nu0/nu)^4)
  (S. Grimme, Chem. Eur. J. 18, 9955 (2012)); enthalpy and heat capacity stay
  harmonic.
- ``"frequency-floor"``: every real mode below the cut-off is raised to the
  cut-off (R. F. Ribeiro, A. V. Marenich, C. J. Cramer, D. G. Truhlar,
  J. Phys. Chem. B 115, 14556 (2011)); applies to all functions except the
  ZPE, which keeps the true wavenumbers.

Imaginary modes are never part of the vibrational partition function (the
reaction coordinate of a transition state is left out).

Free internal rotors (``[[free_rotors]]`` of a species file, :class:`tstrate.model.FreeRotor`):
the mode a rotor replaces leaves the harmonic set, and a classical 1-D free rotor of reduced
moment I and symmetry number sigma takes its place,

    q = (8 pi^3 I k_B T)^(1/2) / (sigma h),  U = RT/2,  S = R (ln q + 1/2),  Cv = R/2

(D. A. McQuarrie, *Statistical Mechanics*, Harper & Row 1976; the free-rotor limit of
K. S. Pitzer and W. D. Gwinn, J. Chem. Phys. 10, 428 (1942)). Its energy zero is the m = 0
level, so a free rotor has no zero-point energy: the ZPE sums only the remaining harmonic
modes (:attr:`tstrate.model.Species.harmonic_frequencies_cm1`). The low-mode treatments
apply to the remaining harmonic modes only.

Hindered internal rotors (``[[hindered_rotors]]``, :class:`tstrate.model.HinderedRotor`) also
replace one harmonic mode each; their ln q, U, S and Cv come from the exact 1-D levels of
:mod:`tstrate.physics.rotors` (q from the rotor's ground level) and join the free rotors in the
"internal_rotation" part; their ground level above V(0) joins the zero-point energy.

Conventions: molar quantities per mole of molecules; standard state 1 bar
for translation unless a pressure is given; ``ln_q_per_volume`` gives the
translational partition function per unit volume [m^-3] for concentration
standard states and rate constants.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np

from tstrate.arrays import temperatures_K
from tstrate.errors import InputError
from tstrate.model import Species
from tstrate.physics.rotors import rotor_model
from tstrate.units import CM1_J, H, K_B, N_A, P_STANDARD, R

#: average moment of inertia that bounds the free rotor of the entropy blend [kg m^2] (Grimme 2012)
FREE_ROTOR_AVERAGE_MOMENT_KG_M2 = 1e-44

#: the low-mode treatments (values of :attr:`LowModes.method`, the CLI's --low-modes and the
#: "low_modes" entries of JSON output)
LOW_MODES_HARMONIC = "harmonic"
LOW_MODES_ROTOR_ENTROPY_BLEND = "rotor-entropy-blend"
LOW_MODES_FREQUENCY_FLOOR = "frequency-floor"
LOW_MODE_METHODS = (LOW_MODES_HARMONIC, LOW_MODES_ROTOR_ENTROPY_BLEND, LOW_MODES_FREQUENCY_FLOOR)
#: what each treatment does, with its source (report and help texts)
LOW_MODE_DESCRIPTIONS = {
    LOW_MODES_HARMONIC: "every real mode a harmonic oscillator",
    LOW_MODES_ROTOR_ENTROPY_BLEND: "the entropy of each real mode blended from its harmonic value towards "
                                   "that of a free rotor, weight 1/(1 + (nu0/nu)^4) (Grimme 2012); "
                                   "enthalpy and heat capacity harmonic",
    LOW_MODES_FREQUENCY_FLOOR: "real modes below nu0 raised to nu0 in every function except the "
                               "zero-point energy (Ribeiro, Marenich, Cramer and Truhlar 2011)",
}
#: default cut-off nu0 [cm^-1], the value both papers use
DEFAULT_LOW_MODE_CUTOFF_CM1 = 100.0


@dataclass(frozen=True)
class LowModes:
    """How low real vibrational modes are treated.

    method: "harmonic" (none), "rotor-entropy-blend" (entropy blended towards a free rotor,
        Grimme 2012) or "frequency-floor" (modes raised to the cut-off, Ribeiro et al. 2011).
    cutoff_cm1: nu0 of the blend's weight 1/(1 + (nu0/nu)^4), or the floor [cm^-1].
    """

    method: Literal["harmonic", "rotor-entropy-blend", "frequency-floor"] = LOW_MODES_HARMONIC
    cutoff_cm1: float = DEFAULT_LOW_MODE_CUTOFF_CM1

    def __post_init__(self):
        if self.method not in LOW_MODE_METHODS:
            raise InputError(f"unknown low-mode treatment {self.method!r}", field="low_modes",
                             hint=low_mode_choices_text())
        if not self.cutoff_cm1 > 0:
            raise InputError("low-mode cut-off must be positive", field="low_modes.cutoff_cm1")

    @property
    def label(self) -> str:
        """The treatment's name, with the cut-off unless harmonic: ``frequency-floor, nu0 = 100 cm-1``."""
        if self.method == LOW_MODES_HARMONIC:
            return self.method
        return f"{self.method}, nu0 = {self.cutoff_cm1:g} cm-1"

    @property
    def description(self) -> str:
        """One sentence: the treatment's name, what it does and its source, with the cut-off."""
        text = f"{self.method}: {LOW_MODE_DESCRIPTIONS[self.method]}"
        if self.method != LOW_MODES_HARMONIC:
            text += f"; nu0 = {self.cutoff_cm1:g} cm-1"
        return text


def low_mode_choices_text() -> str:
    """``use harmonic, rotor-entropy-blend (Grimme 2012) or frequency-floor (...)``: the names to use."""
    return (f"use {LOW_MODES_HARMONIC}, {LOW_MODES_ROTOR_ENTROPY_BLEND} (entropy blended towards a free "
            f"rotor, Grimme 2012) or {LOW_MODES_FREQUENCY_FLOOR} (low modes raised to the cut-off, "
            "Ribeiro, Marenich, Cramer and Truhlar 2011)")


HARMONIC = LowModes()


def _temperatures(temperature_K) -> np.ndarray:
    return np.atleast_1d(temperatures_K(temperature_K))


# ---- per-degree-of-freedom pieces (all dimensionless, shape (T,)) -------------

def translational(mass_kg: float, T: np.ndarray, pressure_Pa: float | None = P_STANDARD):
    """ln q, U/RT, S/R, Cv/R of translation.

    With ``pressure_Pa`` the partition function is that of the volume kT/p
    (molar standard state at that pressure; S includes the 1/N! term).
    With ``pressure_Pa=None``, ln q is per unit volume [ln(m^-3)] and S is not defined (NaN).
    """
    ln_qv = 1.5 * np.log(2 * np.pi * mass_kg * K_B * T / H**2)
    if pressure_Pa is None:
        return ln_qv, np.full_like(T, 1.5), np.full_like(T, np.nan), np.full_like(T, 1.5)
    ln_q = ln_qv + np.log(K_B * T / pressure_Pa)
    return ln_q, np.full_like(T, 1.5), ln_q + 2.5, np.full_like(T, 1.5)


def rotational(moments_kg_m2, symmetry_number: int, linear: bool, T: np.ndarray):
    """ln q, U/RT, S/R, Cv/R of a classical rigid rotor (zero for an atom)."""
    zero = np.zeros_like(T)
    if linear:
        i = float(np.max(moments_kg_m2))
        ln_q = np.log(8 * np.pi**2 * i * K_B * T / (symmetry_number * H**2))
        return ln_q, zero + 1.0, ln_q + 1.0, zero + 1.0
    moments = np.asarray(moments_kg_m2, dtype=float)
    if np.all(moments == 0):
        return zero, zero, zero, zero
    ln_q = (0.5 * np.log(np.pi) - np.log(symmetry_number)
            + 1.5 * np.log(8 * np.pi**2 * K_B * T / H**2) + 0.5 * np.sum(np.log(moments)))
    return ln_q, zero + 1.5, ln_q + 1.5, zero + 1.5


def harmonic_oscillators(freqs_cm1, T: np.ndarray):
    """ln q (from the zero-point level), U/RT (thermal part), S/R, Cv/R of harmonic modes.

    Returns arrays of shape (T, M) so callers can combine per mode.
    """
    nu = np.asarray(freqs_cm1, dtype=float)[None, :]
    x = nu * CM1_J / (K_B * T[:, None])
    em = -np.expm1(-x)  # 1 - exp(-x), accurate for small x
    ln_q = -np.log(em)
    u = x * np.exp(-x) / em  # x / (e^x - 1) without overflow
    s = u + ln_q
    cv = x**2 * np.exp(-x) / em**2
    return ln_q, u, s, cv


def free_rotor_entropy(freqs_cm1, T: np.ndarray, b_av_kg_m2: float = FREE_ROTOR_AVERAGE_MOMENT_KG_M2):
    """S/R of the free rotor that stands in for a mode of the given wavenumber in the entropy
    blend, its moment bounded by ``b_av_kg_m2`` (Grimme 2012), shape (T, M)."""
    nu_hz = np.asarray(freqs_cm1, dtype=float)[None, :] * CM1_J / H
    mu = H / (8 * np.pi**2 * nu_hz)
    mu_eff = mu * b_av_kg_m2 / (mu + b_av_kg_m2)
    return 0.5 + np.log(np.sqrt(8 * np.pi**3 * mu_eff * K_B * T[:, None] / H**2))


def internal_free_rotor(moment_kg_m2: float, symmetry_number: int, T: np.ndarray):
    """ln q, U/RT, S/R, Cv/R of a classical 1-D free internal rotor, shape (T,).

    q = (8 pi^3 I k_B T)^(1/2) / (sigma h) with I the reduced moment [kg m^2] and sigma the
    symmetry number; U/RT = Cv/R = 1/2, S/R = ln q + 1/2 (McQuarrie 1976; Pitzer and Gwinn,
    J. Chem. Phys. 10, 428 (1942), free-rotor limit). The classical limit needs k_B T >> B.
    """
    ln_q = 0.5 * np.log(8 * np.pi**3 * moment_kg_m2 * K_B * T) - np.log(symmetry_number * H)
    half = np.full_like(T, 0.5)
    return ln_q, half, ln_q + 0.5, half


def _free_rotor_parts(species: Species, T: np.ndarray):
    """Free and hindered internal rotors together (the "internal_rotation" part)."""
    z = np.zeros_like(T)
    parts = [internal_free_rotor(r.moment_kg_m2, r.symmetry_number, T) for r in species.free_rotors]
    parts += [rotor_model(r).thermo_parts(T) for r in species.hindered_rotors]
    return tuple(sum((p[k] for p in parts), z) for k in range(4))


def hindered_rotor_zpe_J_per_mol(species: Species) -> float:
    """Sum of the hindered rotors' ground levels above the energy of the geometry [J/mol]."""
    return float(sum(rotor_model(r).zpe_J_per_mol for r in species.hindered_rotors))


def electronic(levels, T: np.ndarray):
    """ln q, U/RT, S/R, Cv/R of discrete electronic levels (energies from the ground level)."""
    e = np.array([lv.energy_cm1 for lv in levels], dtype=float)[None, :] * CM1_J
    g = np.array([lv.degeneracy for lv in levels], dtype=float)[None, :]
    x = e / (K_B * T[:, None])
    w = g * np.exp(-(x - x.min(axis=1, keepdims=True)))
    z = w.sum(axis=1)
    ln_q = np.log(z) - x.min(axis=1)
    p = w / z[:, None]
    u = (p * x).sum(axis=1)
    cv = (p * x**2).sum(axis=1) - u**2
    return ln_q, u, ln_q + u, cv


# ---- whole species ------------------------------------------------------------

@dataclass(frozen=True)
class Thermo:
    """Thermochemistry of one species on a temperature grid.

    All arrays have the shape of ``temperature_K``. Molar quantities, standard
    pressure ``pressure_Pa`` (1 bar unless stated).

    temperature_K: temperatures [K].
    zpe_J_per_mol: zero-point energy [J/mol]: harmonic (real modes not replaced by rotors) plus the
        hindered rotors' ground levels.
    energy_J_per_mol: electronic energy of the species [J/mol], or None when unknown.
    enthalpy_increment_J_per_mol: H(T) - H(0) [J/mol].
    entropy_J_per_mol_K: S(T) [J/(mol K)].
    heat_capacity_J_per_mol_K: Cp(T) [J/(mol K)].
    ln_q: dict of ln partition functions by part ("translational", "rotational",
        "vibrational", "internal_rotation", "electronic"), the vibrational one from the
        zero-point level; "internal_rotation" is the free and hindered rotors' (zero without any),
        the hindered ones from their ground levels; a conformer ensemble adds "conformers",
        ln(q_ens / q_representative).
    """

    species: str
    temperature_K: np.ndarray
    pressure_Pa: float
    zpe_J_per_mol: float
    energy_J_per_mol: float | None
    enthalpy_increment_J_per_mol: np.ndarray
    entropy_J_per_mol_K: np.ndarray
    heat_capacity_J_per_mol_K: np.ndarray
    ln_q: dict

    @property
    def gibbs_increment_J_per_mol(self) -> np.ndarray:
        """G(T) - H(0) = [H(T) - H(0)] - T S(T) [J/mol]."""
        return self.enthalpy_increment_J_per_mol - self.temperature_K * self.entropy_J_per_mol_K

    @property
    def enthalpy_J_per_mol(self) -> np.ndarray:
        """H(T) = E + ZPE + [H(T) - H(0)] [J/mol] (needs the electronic energy)."""
        return self._base() + self.enthalpy_increment_J_per_mol

    @property
    def gibbs_J_per_mol(self) -> np.ndarray:
        """G(T) = E + ZPE + [G(T) - H(0)] [J/mol] (needs the electronic energy)."""
        return self._base() + self.gibbs_increment_J_per_mol

    def _base(self) -> float:
        if self.energy_J_per_mol is None:
            raise InputError(f"species {self.species} has no electronic energy", field="energy")
        return self.energy_J_per_mol + self.zpe_J_per_mol

    @property
    def ln_q_total(self) -> np.ndarray:
        """ln of the total partition function (translation in the standard volume kT/p)."""
        return sum(self.ln_q.values())


def zero_point_energy_J_per_mol(species: Species) -> float:
    """Zero-point energy [J/mol]: harmonic ZPE of the real (scaled) modes not replaced by rotors,
    plus each hindered rotor's ground level above V(0) (a free rotor has no zero-point energy)."""
    return float(0.5 * np.sum(species.harmonic_frequencies_cm1) * CM1_J * N_A) + hindered_rotor_zpe_J_per_mol(species)


def _vibrational_parts(freqs: np.ndarray, T: np.ndarray, low_modes: LowModes):
    if freqs.size == 0:
        z = np.zeros_like(T)
        return z, z, z, z
    if low_modes.method == LOW_MODES_FREQUENCY_FLOOR:
        freqs = np.maximum(freqs, low_modes.cutoff_cm1)
    ln_q, u, s, cv = harmonic_oscillators(freqs, T)
    if low_modes.method == LOW_MODES_ROTOR_ENTROPY_BLEND:
        w = 1.0 / (1.0 + (low_modes.cutoff_cm1 / freqs[None, :]) ** 4)
        s = w * s + (1 - w) * free_rotor_entropy(freqs, T)
        ln_q = s - u  # keeps G = H - TS consistent with the interpolated entropy
    return ln_q.sum(axis=1), u.sum(axis=1), s.sum(axis=1), cv.sum(axis=1)


def electronic_level_warning(species: Species) -> str | None:
    """A sentence when an open-shell atom or diatomic carries only its spin multiplicity as
    electronic levels, or None.

    Open-shell atoms and diatomics usually have levels within a few hundred cm^-1 of the ground
    level (spin-orbit components of 2Pi and 3P terms: NO, OH, ClO, O, Cl ...), which add R ln of
    the extra degeneracy to S and a bump to Cp at the temperatures of the atmosphere. With only
    the multiplicity, S of NO at 298 K comes out about 5.5 J/(mol K) low (common practice: give
    the levels from spectroscopic tables).
    """
    if species.electronic_levels or species.multiplicity == 1 or species.natoms > 2:
        return None
    what = "atom" if species.is_atom else "diatomic"
    return (f"species {species.name}: an open-shell {what} (multiplicity {species.multiplicity}) with no "
            "[[electronic_levels]]: only the spin degeneracy is counted; low-lying spin-orbit levels are "
            "common for such species and change S and Cp (give them in its species file)")


def thermochemistry(species: Species, temperature_K, *, low_modes: LowModes = HARMONIC,
                    pressure_Pa: float = P_STANDARD) -> Thermo:
    """Partition functions and H, S, Cp, G of one species on a temperature grid.

    Parameters
    ----------
    species: the stationary point (its imaginary mode, if any, is left out; its free rotors
        replace the modes they name).
    temperature_K: scalar or array of temperatures [K].
    low_modes: quasi-harmonic treatment of low real modes.
    pressure_Pa: standard pressure of the translational part [Pa], 1 bar by default.

    A species with ``conformers`` is a conformer ensemble: its thermochemistry is the
    Boltzmann-weighted one of :func:`tstrate.physics.ensembles.ensemble_thermochemistry`.
    """
    if species.conformers:
        from tstrate.physics.ensembles import ensemble_thermochemistry

        return ensemble_thermochemistry(species, temperature_K, low_modes=low_modes, pressure_Pa=pressure_Pa)
    T = _temperatures(temperature_K)
    parts = {
        "translational": translational(species.mass_kg, T, pressure_Pa),
        "rotational": (rotational(species.moments_of_inertia_kg_m2(), species.symmetry_number,
                                  species.linear, T)
                       if not species.is_atom else tuple(np.zeros_like(T) for _ in range(4))),
        "vibrational": _vibrational_parts(species.harmonic_frequencies_cm1, T, low_modes),
        "internal_rotation": _free_rotor_parts(species, T),
        "electronic": electronic(species.levels, T),
    }
    ln_q = {k: v[0] for k, v in parts.items()}
    if species.optical_isomers > 1:
        ln_q["rotational"] = ln_q["rotational"] + np.log(species.optical_isomers)
    u = sum(v[1] for v in parts.values())
    s = sum(v[2] for v in parts.values()) + np.log(species.optical_isomers)
    cv = sum(v[3] for v in parts.values())
    return Thermo(
        species=species.name,
        temperature_K=T,
        pressure_Pa=float(pressure_Pa),
        zpe_J_per_mol=zero_point_energy_J_per_mol(species),
        energy_J_per_mol=species.energy_J_per_mol,
        enthalpy_increment_J_per_mol=(u + 1.0) * R * T,  # + RT: H = U + pV
        entropy_J_per_mol_K=s * R,
        heat_capacity_J_per_mol_K=(cv + 1.0) * R,  # Cp = Cv + R
        ln_q=ln_q,
    )


def ln_partition_function_per_volume(species: Species, temperature_K, *,
                                     low_modes: LowModes = HARMONIC) -> np.ndarray:
    """ln of the molecular partition function per unit volume [ln(m^-3)].

    Vibrations from the zero-point level; electronic from the ground level.
    This is the q/V that enters equilibrium constants in concentration units
    and transition-state theory.
    """
    T = _temperatures(temperature_K)
    th = thermochemistry(species, T, low_modes=low_modes)
    ln_qv_trans = translational(species.mass_kg, T, None)[0]
    return th.ln_q_total - th.ln_q["translational"] + ln_qv_trans
