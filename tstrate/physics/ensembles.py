"""Conformer ensembles: one species that stands for several conformers in equilibrium.

A species with ``conformers`` (:class:`tstrate.model.Species`) is the representative of an ensemble
whose members are itself and its conformers. Each member i has its own partition function q_i
(own geometry, frequencies, symmetry number sigma_i and optical isomers n_i) and its own
ZPE-inclusive energy E0_i. The ensemble's partition function, measured from the representative's
zero-point level E0_ref, is

    q_ens(T) = sum_i q_i(T) exp(-(E0_i - E0_ref) / k_B T),

the sum over the wells of the potential-energy surface that interconvert fast against the reaction
(the multi-structure partition function of conventional thermochemistry). The population of member i
is x_i = q_i exp(-(E0_i - E0_ref)/k_B T) / q_ens; the ensemble's thermochemistry follows exactly from
its members' (below). Transition-state ensembles are summed the same way by
:func:`tstrate.physics.tst.channel_rates` (multi-conformer TST, each TS conformer with its own
tunnelling factor).

**Counting each well once.** q_ens sums distinct wells. Two rules keep it from counting a
structure twice:

- members related by the symmetry operations already in sigma_i and n_i (mirror images, permuted
  identical atoms) are one member: sigma and the optical isomers count them;
- members related by a torsion that the species treats as a hindered internal rotor are one member:
  the rotor's levels already span all of its wells (a 1-D hindered rotor's partition function
  includes every minimum along its torsion), so the ensemble keeps one representative per well of
  the torsions that are *not* rotors. A member with a hindered or free rotor must therefore not be
  accompanied by a conformer that differs from it only along that rotor's torsion; the conformer
  search of the compute route (``tstrate compute conformers``) removes duplicates by RMSD and
  energy, but whether two distinct minima lie on one rotor's torsion is the user's call.

Energies in J/mol, temperatures in K.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from tstrate.physics.thermo import (HARMONIC, LowModes, Thermo, thermochemistry,
                                    zero_point_energy_J_per_mol)
from tstrate.units import P_STANDARD, R


def conformer_members(species) -> tuple:
    """The members of a species' ensemble: the representative (without its conformers) first, then
    its conformers; a species without conformers is its own one member."""
    if not species.conformers:
        return (species,)
    return (species.with_changes(conformers=()), *species.conformers)


def conformer_labels(species) -> tuple[str, ...]:
    """The labels of the members, in the order of :func:`conformer_members`."""
    return tuple(m.conformer_label or m.name for m in conformer_members(species))


def zpe_level_of(species) -> float:
    """Electronic energy plus harmonic ZPE of one structure [J/mol] (ValueError without an energy)."""
    if species.energy_J_per_mol is None:
        raise ValueError(f"species {species.name!r} has no electronic energy")
    return species.energy_J_per_mol + zero_point_energy_J_per_mol(species)


def relative_zpe_levels_J_per_mol(species) -> np.ndarray:
    """E0_i - E0_ref of every member [J/mol] (the representative's is 0)."""
    members = conformer_members(species)
    if len(members) == 1:
        return np.zeros(1)
    e0 = np.array([zpe_level_of(m) for m in members])
    return e0 - e0[0]


def build_ensemble(name: str, members) -> "Species":
    """A conformer ensemble from ``members``, (label, Species) pairs of one species' conformers.

    The member of lowest ZPE-inclusive energy becomes the representative, named ``name``; the
    others become its ``conformers``, named ``name/label``. Each keeps its own geometry, frequencies,
    energy, symmetry number and optical isomers. One member gives that member alone (named ``name``).
    ValueError for no members or repeated labels; the Species checks (same atoms, charge,
    multiplicity and kind; energies) raise the user-error type.
    """
    members = [(str(lb), sp) for lb, sp in members]
    if not members:
        raise ValueError("an ensemble needs at least one conformer")
    labels = [lb for lb, _ in members]
    if len(set(labels)) != len(labels):
        raise ValueError(f"conformer labels repeat: {labels}")
    if len(members) == 1:
        return members[0][1].with_changes(name=name, conformer_label=None, conformers=())
    e0 = [zpe_level_of(sp) for _, sp in members]
    order = sorted(range(len(members)), key=lambda i: e0[i])
    (lb0, rep), others = members[order[0]], [members[i] for i in order[1:]]
    confs = tuple(sp.with_changes(name=f"{name}/{lb}", conformer_label=lb, conformers=())
                  for lb, sp in others)
    return rep.with_changes(name=name, conformer_label=lb0, conformers=confs)


@dataclass(frozen=True)
class EnsembleParts:
    """Member thermochemistry and Boltzmann weights of one ensemble on a temperature grid.

    labels: (n,) member labels; relative_zpe_J_per_mol: (n,) E0_i - E0_ref [J/mol].
    members: (n,) :class:`~tstrate.physics.thermo.Thermo` of each member alone.
    populations: (n, T) fractions x_i(T), summing to 1 over members.
    ln_q_shift: (T,) ln(q_ens / q_ref) (the ensemble's partition function over the representative's).
    """

    labels: tuple[str, ...]
    relative_zpe_J_per_mol: np.ndarray
    members: tuple[Thermo, ...]
    populations: np.ndarray
    ln_q_shift: np.ndarray


def ensemble_parts(species, temperature_K, *, low_modes: LowModes = HARMONIC,
                   pressure_Pa: float = P_STANDARD) -> EnsembleParts:
    """Each member's thermochemistry and population x_i(T) (see the module text)."""
    members = conformer_members(species)
    de = relative_zpe_levels_J_per_mol(species)
    ths = tuple(thermochemistry(m, temperature_K, low_modes=low_modes, pressure_Pa=pressure_Pa)
                for m in members)
    T = ths[0].temperature_K
    a = np.array([th.ln_q_total - d / (R * T) for th, d in zip(ths, de)])  # (n, T)
    top = a.max(axis=0)
    ln_sum = top + np.log(np.exp(a - top).sum(axis=0))
    x = np.exp(a - ln_sum)
    return EnsembleParts(labels=conformer_labels(species), relative_zpe_J_per_mol=de, members=ths,
                         populations=x, ln_q_shift=ln_sum - a[0])


def conformer_populations(species, temperature_K, *, low_modes: LowModes = HARMONIC) -> np.ndarray:
    """(n_members, T) Boltzmann populations x_i(T) of an ensemble's members (one row of ones
    for a species without conformers)."""
    return ensemble_parts(species, temperature_K, low_modes=low_modes).populations


def ensemble_thermochemistry(species, temperature_K, *, low_modes: LowModes = HARMONIC,
                             pressure_Pa: float = P_STANDARD) -> Thermo:
    """Thermochemistry of a conformer ensemble, from the representative's zero-point level.

    With H'_i = H_i(T) - H_i(0) + (E0_i - E0_ref) and the populations x_i:

    - H(T) - H(0) = sum_i x_i H'_i;
    - S = sum_i x_i S_i - R sum_i x_i ln x_i (the conformational mixing term);
    - Cp = sum_i x_i Cp_i + (<H'^2> - <H'>^2) / (R T^2) (the populations shifting with T);
    - ln q gains the part ``"conformers"`` = ln(q_ens / q_ref); the other parts are the
      representative's, so that the total is ln q_ens.

    These follow from q_ens by differentiation; the test checks them against finite differences.
    """
    parts = ensemble_parts(species, temperature_K, low_modes=low_modes, pressure_Pa=pressure_Pa)
    ref = parts.members[0]
    if len(parts.members) == 1:
        return ref
    T = ref.temperature_K
    x = parts.populations
    h = np.array([th.enthalpy_increment_J_per_mol + d for th, d in
                  zip(parts.members, parts.relative_zpe_J_per_mol)])
    s = np.array([th.entropy_J_per_mol_K for th in parts.members])
    cp = np.array([th.heat_capacity_J_per_mol_K for th in parts.members])
    h_mean = (x * h).sum(axis=0)
    with np.errstate(divide="ignore", invalid="ignore"):
        mixing = -np.where(x > 0, x * np.log(x), 0.0).sum(axis=0)
    ln_q = dict(ref.ln_q)
    ln_q["conformers"] = parts.ln_q_shift
    return Thermo(species=species.name, temperature_K=T, pressure_Pa=ref.pressure_Pa,
                  zpe_J_per_mol=ref.zpe_J_per_mol, energy_J_per_mol=ref.energy_J_per_mol,
                  enthalpy_increment_J_per_mol=h_mean,
                  entropy_J_per_mol_K=(x * s).sum(axis=0) + R * mixing,
                  heat_capacity_J_per_mol_K=(x * cp).sum(axis=0)
                  + ((x * h**2).sum(axis=0) - h_mean**2) / (R * T**2),
                  ln_q=ln_q)


__all__ = ["EnsembleParts", "build_ensemble", "conformer_labels", "conformer_members", "conformer_populations",
           "ensemble_parts", "ensemble_thermochemistry", "relative_zpe_levels_J_per_mol"]
