"""Canonical transition-state theory (Eyring) with tunnelling, detailed balance
and activation quantities.

For a channel with n reactants, in SI per molecule,

    k(T) = kappa(T) L (k_B T / h) (q_TS/V) / prod_i (q_i/V) exp(-dE0 / k_B T)

with q/V the partition functions per unit volume (vibrations from their zero-
point levels, the imaginary mode left out), dE0 the zero-point-corrected
barrier from the separated reactants, and L = 1 unless the user overrides the
reaction-path degeneracy (the default count is already inside the rotational
symmetry numbers and optical isomers: L_sym = prod sigma_R n_TS / (sigma_TS
prod n_R), reported for information). Everything is combined as logarithms,
so 50 K and 3000 K work alike. Units: s^-1 (n = 1), m^3 s^-1 (n = 2), m^6 s^-1
(n = 3).

Channels through a pre-reactive complex C (reactants <=> C -> TS): in the
high-pressure limit the complex is in equilibrium with the reactants and
k_eff = K_c k_uni = the expression above (the complex cancels) times a
tunnelling factor computed for the unimolecular step: the Eckart forward
barrier is measured from the complex (V1 = E0_TS - E0_C) and the reverse one
from the products (V2 = E0_TS - E0_P); the energy floor of the tunnelling
integral is the separated reactants by default (no tunnelling below the
entrance asymptote, since a weakly bound complex at low pressure is not
stabilised) but never above the barrier top (a submerged transition state,
below the separated reactants, keeps all of its over-the-barrier flux: the
floor then sits at the top and only the tunnelling below it is dropped), or
the complex itself when the channel says ``tunnelling_floor = "complex"``. Neither floor
is right at every pressure (the thermalised complex exists only where collisions stabilise it;
a master equation would say how much), so for channels through a complex the tunnelling factor
with the other floor is computed too (``kappa_other_floor``) and reported beside the rate.

A channel may also name a product complex P* (TS -> P* -> products): the reverse barrier of the
tunnelling model is then measured from it (V2 = E0_TS - E0_P*) instead of from the separated
products, whose asymptote lies far above a deep product well. Rate constants, equilibrium
constants and reverse rates still refer to the separated products.

Identical reactants (H2CO3 + H2O + H2O) get no 1/2 factor: k is defined by
-d[first reactant]/dt = k prod_i [reactant_i], and the symmetry numbers carry
the counting. Wigner needs only the frequency;
Skodje-Truhlar uses the same V1 and V2.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from tstrate.arrays import temperatures_K
from tstrate.errors import InputError
from tstrate.model import TUNNELLING_FLOORS, Channel, Species
from tstrate.physics import tunnelling
from tstrate.physics.thermo import HARMONIC, LowModes, ln_partition_function_per_volume, thermochemistry
from tstrate.units import H, K_B, N_A, P_STANDARD, R


def zpe_level_J_per_mol(species: Species) -> float:
    """Electronic energy plus harmonic ZPE [J/mol]."""
    from tstrate.physics.thermo import zero_point_energy_J_per_mol

    if species.energy_J_per_mol is None:
        raise InputError(f"species {species.name!r} has no electronic energy", file=species.source,
                         field="energy")
    return species.energy_J_per_mol + zero_point_energy_J_per_mol(species)


def _sum_ln_qv(species_list, T, low_modes) -> np.ndarray:
    return sum(ln_partition_function_per_volume(s, T, low_modes=low_modes) for s in species_list)


def symmetry_degeneracy(reactants, ts: Species) -> float:
    """Reaction-path degeneracy implied by the symmetry numbers and optical isomers."""
    num = np.prod([s.symmetry_number for s in reactants]) * ts.optical_isomers
    den = ts.symmetry_number * np.prod([s.optical_isomers for s in reactants])
    return float(num / den)


def ln_equilibrium_constant(reactants, products, T, low_modes: LowModes = HARMONIC) -> np.ndarray:
    """ln Kc of reactants <=> products, Kc in (m^-3)^(n_P - n_R) per molecule."""
    d_e0 = sum(zpe_level_J_per_mol(s) for s in products) - sum(zpe_level_J_per_mol(s) for s in reactants)
    return (_sum_ln_qv(products, T, low_modes) - _sum_ln_qv(reactants, T, low_modes)
            - d_e0 / (R * T))


def kp_from_kc(ln_kc: np.ndarray, delta_n: int, T: np.ndarray,
               standard_pressure_Pa: float = P_STANDARD) -> np.ndarray:
    """ln Kp (dimensionless; standard pressure ``standard_pressure_Pa`` [Pa], 1 bar by default)
    from ln Kc (molecule m^-3 units)."""
    return ln_kc + delta_n * np.log(K_B * T / standard_pressure_Pa)


@dataclass(frozen=True)
class ChannelRates:
    """TST results of one channel on a temperature grid (SI per molecule).

    order: number of reactants; rate constants in s^-1, m^3 s^-1 or m^6 s^-1.
    k: rate constant with tunnelling; k_classical: without (kappa = 1).
    kappa: tunnelling factor.
    k_reverse: reverse rate constant by detailed balance, SI for the products' count.
    ln_kc: ln of the equilibrium constant reactants <=> products (molecule m^-3 units).
    ln_kp: ln of the dimensionless Kp at the standard pressure.
    barrier_classical_J_per_mol, barrier_zpe_J_per_mol: TS above the separated reactants.
    barrier_from_complex_*: TS above the complex (None without a complex).
    reaction_energy_zpe_J_per_mol: products minus reactants, ZPE-corrected.
    eckart_V1_J_per_mol, eckart_V2_J_per_mol, energy_floor_J_per_mol: the barrier
        heights and floor the tunnelling model used (V1 from the complex when there is one, V2
        from the product complex when there is one).
    product_complex: the minimum V2 is measured from (None: the separated products).
    tunnelling_floor: the floor in effect for a channel through a complex ("reactants" or
        "complex"; None without a complex).
    kappa_other_floor, other_energy_floor_J_per_mol: the tunnelling factor and floor with the
        other choice, for channels through a complex whose model has a floor (Skodje-Truhlar,
        Eckart); None otherwise. k scales with kappa, so k_other = k kappa_other_floor / kappa.
    ts_conformer_shares: TS conformer label -> (T,) share k_j / k of the rate through it, for a
        transition-state ensemble (multi-conformer TST); None for one TS structure.
    tunnelling_well_conformer: the conformer of the reactant-side well (the complex, or the one
        reactant) that V1 and the energy floor are measured from, when that well is an ensemble and the
        (representative) TS connects to one of its conformers (:func:`connected_conformer_shift`);
        None: from the well's lowest conformer.
    delta_H/S/G: activation enthalpy [J/mol], entropy [J/(mol K)], Gibbs energy [J/mol]
        at the standard pressure.
    standard_pressure_Pa: the standard state of ln_kp and the activation quantities [Pa].
    degeneracy: the reaction-path degeneracy in effect (the user's override, else the
        symmetry-number count).
    symmetry_degeneracy: the degeneracy the symmetry numbers imply.
    """

    channel: str
    order: int
    temperature_K: np.ndarray
    k: np.ndarray
    k_classical: np.ndarray
    kappa: np.ndarray
    k_reverse: np.ndarray
    reverse_order: int
    ln_kc: np.ndarray
    ln_kp: np.ndarray
    barrier_classical_J_per_mol: float
    barrier_zpe_J_per_mol: float
    barrier_from_complex_classical_J_per_mol: float | None
    barrier_from_complex_zpe_J_per_mol: float | None
    reaction_energy_zpe_J_per_mol: float
    imaginary_frequency_cm1: float
    tunnelling: str
    eckart_V1_J_per_mol: float
    eckart_V2_J_per_mol: float
    energy_floor_J_per_mol: float
    delta_H_J_per_mol: np.ndarray
    delta_S_J_per_mol_K: np.ndarray
    delta_G_J_per_mol: np.ndarray
    degeneracy: float
    symmetry_degeneracy: float
    product_complex: str | None = None
    tunnelling_floor: str | None = None
    kappa_other_floor: np.ndarray | None = None
    other_energy_floor_J_per_mol: float | None = None
    standard_pressure_Pa: float = P_STANDARD
    ts_conformer_shares: dict | None = None
    tunnelling_well_conformer: str | None = None


def channel_rates(channel: Channel, species: dict, temperature_K, *,
                  low_modes: LowModes = HARMONIC,
                  standard_pressure_Pa: float = P_STANDARD) -> ChannelRates:
    """Canonical TST k(T) of one channel, with tunnelling, reverse rate and activation quantities.

    ``standard_pressure_Pa`` [Pa] is the standard state of Kp and of the activation quantities
    (1 bar by default; 1 atm is the other choice); the rate constants do not depend on it.

    Any species of the channel may be a conformer ensemble (:mod:`tstrate.physics.ensembles`):
    reactants, complexes and products enter through their ensemble partition functions, measured
    from their representatives' zero-point levels (the lowest conformer as the study reader builds
    them). A transition-state ensemble gives multi-conformer TST: k = sum_j k_j, where k_j is the
    rate through TS conformer j alone, with its own partition function, barrier E0_j - E0_ref(reactants),
    imaginary frequency and tunnelling factor; ``kappa`` is then the effective sum_j k_j / sum_j
    k_classical_j and ``ts_conformer_shares`` gives k_j / k. Barriers, Eckart heights and the
    imaginary frequency reported are those of the representative TS conformer.

    The tunnelling model's reactant-side well (the complex, or the one reactant) is, for an ensemble,
    the conformer the TS connects to (its [provenance] ``reactant_side_geometry``, compared by sorted
    interatomic distances): V1 = E0_TS - E0_connected and the energy floor are measured from it, since
    the 1-D barrier along the reaction path rises from that well. The equilibrium pool of conformers
    feeds it; the rate is not otherwise changed (in equilibrium, k does not depend on which conformer
    is counted as the reactant). Without a recorded connection, the lowest conformer.
    """
    ts = species[channel.transition_state]
    whole = _one_ts_rates(channel, species, temperature_K, low_modes=low_modes,
                           standard_pressure_Pa=standard_pressure_Pa)
    if not ts.conformers:
        return whole
    from dataclasses import replace

    from tstrate.physics.ensembles import conformer_labels, conformer_members

    parts = [_one_ts_rates(channel, {**species, channel.transition_state: m}, temperature_K,
                           low_modes=low_modes, standard_pressure_Pa=standard_pressure_Pa)
             for m in conformer_members(ts)]
    k = sum(p.k for p in parts)
    k_cl = sum(p.k_classical for p in parts)
    kappa_other = None
    if whole.kappa_other_floor is not None:
        kappa_other = sum(p.k_classical * p.kappa_other_floor for p in parts) / k_cl
    ln_k = np.log(k)
    return replace(whole, k=k, k_classical=k_cl, kappa=k / k_cl, k_reverse=np.exp(ln_k - whole.ln_kc),
                   kappa_other_floor=kappa_other,
                   ts_conformer_shares={lb: p.k / k for lb, p in zip(conformer_labels(ts), parts)})


def _one_ts_rates(channel: Channel, species: dict, temperature_K, *,
                  low_modes: LowModes = HARMONIC,
                  standard_pressure_Pa: float = P_STANDARD) -> ChannelRates:
    """:func:`channel_rates` with the tunnelling factor of the (representative) TS only."""
    T = np.atleast_1d(temperatures_K(temperature_K))
    reac = [species[n] for n in channel.reactants]
    prod = [species[n] for n in channel.products]
    ts = species[channel.transition_state]
    cx = species[channel.complex] if channel.complex else None
    if len(ts.imaginary_frequencies_cm1) != 1:
        raise InputError(f"transition state {ts.name!r} has {len(ts.imaginary_frequencies_cm1)} "
                         "imaginary frequencies; exactly one is needed", file=ts.source,
                         field="frequencies_cm1")

    e0_r = sum(zpe_level_J_per_mol(s) for s in reac)
    e0_p = sum(zpe_level_J_per_mol(s) for s in prod)
    e0_ts = zpe_level_J_per_mol(ts)
    el_r = sum(s.energy_J_per_mol for s in reac)
    barrier_zpe = e0_ts - e0_r
    barrier_cl = ts.energy_J_per_mol - el_r

    # tunnelling barrier heights, measured from the lower well on each side
    pcx = species[channel.product_complex] if channel.product_complex else None
    # the reactant-side well of the tunnelling model: the complex, or the one reactant; of an
    # ensemble, the conformer the TS connects to when its provenance records it, else the lowest
    well = cx if cx is not None else (reac[0] if len(reac) == 1 else None)
    shift, connected = connected_conformer_shift(ts, well)
    if cx is not None:
        e0_c = zpe_level_J_per_mol(cx)
        e0_well = e0_c + shift
        v1 = e0_ts - e0_well

        def floor_of(choice):
            # never above the barrier top: a submerged TS keeps its over-the-barrier flux
            return min(max(0.0, e0_r - e0_well), v1) if choice == "reactants" else 0.0

        floor = floor_of(channel.tunnelling_floor)
        b_cx_zpe, b_cx_cl = e0_ts - e0_c, ts.energy_J_per_mol - cx.energy_J_per_mol
    else:
        v1 = barrier_zpe - shift
        floor = 0.0
        b_cx_zpe = b_cx_cl = None
    v2 = e0_ts - (e0_p if pcx is None else zpe_level_J_per_mol(pcx))
    imag = ts.imaginary_frequency_cm1
    kappa_other = other_floor = None
    if channel.tunnelling == "none":
        ln_kappa = np.zeros_like(T)
    else:
        # Eckart needs both barriers positive; Skodje-Truhlar accepts V2 = 0
        v2_bad = (v2 <= 0) if channel.tunnelling == "eckart" else (v2 < 0)
        if channel.tunnelling in ("eckart", "skodje-truhlar") and (v1 <= 0 or v2_bad):
            side = "forward" if v1 <= 0 else "reverse"
            need = "V1 > 0 and V2 > 0" if channel.tunnelling == "eckart" else "V1 > 0 and V2 >= 0"
            raise InputError(
                f"channel {channel.name!r}: {side} ZPE-corrected barrier is "
                f"{(v1 if v1 <= 0 else v2) / 1e3:.2f} kJ/mol"
                + (f" (from the product complex {pcx.name!r})" if side == "reverse" and pcx else "")
                + f"; {channel.tunnelling} needs {need}",
                field="tunnelling", hint="add the pre-reactive complex, or use wigner or none")

        def ln_kappa_at(energy_floor):
            try:
                return tunnelling.log_kappa(channel.tunnelling, T, imag, v1, v2,
                                            energy_floor=max(energy_floor, max(0.0, v1 - v2)))
            except InputError as exc:
                # the tunnelling module names its own arguments; the user's key is the channel's tunnelling
                raise InputError(f"channel {channel.name!r}: {exc.problem}", field="tunnelling",
                                 hint=exc.hint) from None

        ln_kappa = ln_kappa_at(floor)
        if cx is not None and channel.tunnelling in ("eckart", "skodje-truhlar"):
            other = next(f for f in TUNNELLING_FLOORS if f != channel.tunnelling_floor)
            other_floor = floor_of(other)
            kappa_other = np.exp(ln_kappa_at(other_floor))

    ln_q_ratio = (ln_partition_function_per_volume(ts, T, low_modes=low_modes)
                  - _sum_ln_qv(reac, T, low_modes))
    sym_deg = symmetry_degeneracy(reac, ts)
    degeneracy = 1.0 if channel.degeneracy is None else channel.degeneracy / sym_deg
    ln_k_cl = np.log(K_B * T / H) + ln_q_ratio - barrier_zpe / (R * T) + np.log(degeneracy)
    ln_k = ln_k_cl + ln_kappa

    ln_kc = ln_equilibrium_constant(reac, prod, T, low_modes)
    ln_kp = kp_from_kc(ln_kc, len(prod) - len(reac), T, standard_pressure_Pa)

    # activation quantities at the standard pressure p0: k = (kT/h) (c0)^(1-n) exp(-dG/RT), c0 = p0/kT
    th_ts = thermochemistry(ts, T, low_modes=low_modes)
    th_r = [thermochemistry(s, T, low_modes=low_modes) for s in reac]
    d_h = (e0_ts + th_ts.enthalpy_increment_J_per_mol
           - sum(e + t.enthalpy_increment_J_per_mol for e, t in
                 zip([zpe_level_J_per_mol(s) for s in reac], th_r)))
    n = len(reac)
    ln_c0 = np.log(standard_pressure_Pa / (K_B * T))
    d_g = -R * T * (ln_k_cl - np.log(K_B * T / H) + (n - 1) * ln_c0)
    d_s = (d_h - d_g) / T

    return ChannelRates(
        channel=channel.name, order=n, temperature_K=T,
        k=np.exp(ln_k), k_classical=np.exp(ln_k_cl), kappa=np.exp(ln_kappa),
        k_reverse=np.exp(ln_k - ln_kc), reverse_order=len(prod),
        ln_kc=ln_kc, ln_kp=ln_kp,
        barrier_classical_J_per_mol=float(barrier_cl), barrier_zpe_J_per_mol=float(barrier_zpe),
        barrier_from_complex_classical_J_per_mol=None if b_cx_cl is None else float(b_cx_cl),
        barrier_from_complex_zpe_J_per_mol=None if b_cx_zpe is None else float(b_cx_zpe),
        reaction_energy_zpe_J_per_mol=float(e0_p - e0_r), imaginary_frequency_cm1=float(imag),
        tunnelling=channel.tunnelling, eckart_V1_J_per_mol=float(v1), eckart_V2_J_per_mol=float(v2),
        energy_floor_J_per_mol=float(floor),
        delta_H_J_per_mol=d_h, delta_S_J_per_mol_K=d_s, delta_G_J_per_mol=d_g,
        degeneracy=sym_deg if channel.degeneracy is None else float(channel.degeneracy),
        symmetry_degeneracy=sym_deg,
        product_complex=None if pcx is None else channel.product_complex,
        tunnelling_floor=channel.tunnelling_floor if cx is not None else None,
        kappa_other_floor=kappa_other,
        other_energy_floor_J_per_mol=None if other_floor is None else float(other_floor),
        standard_pressure_Pa=float(standard_pressure_Pa),
        tunnelling_well_conformer=connected,
    )


def connected_conformer_shift(ts: Species, well: Species | None) -> tuple[float, str | None]:
    """(E0_i - E0_ref [J/mol], label) of the conformer i of the ensemble ``well`` that the TS
    connects to, by the minimum its [provenance] ``reactant_side_geometry`` records (sorted
    interatomic distances within :data:`tstrate.physics.conformers.SAME_STRUCTURE_TOLERANCE_A`,
    the closest if several); (0, None) when ``well`` is no ensemble, or the TS records no such
    minimum, or none of the conformers is it."""
    if well is None or not well.conformers:
        return 0.0, None
    from tstrate.physics.conformers import SAME_STRUCTURE_TOLERANCE_A, parse_xyz_lines, structure_difference_A
    from tstrate.physics.ensembles import conformer_labels, conformer_members, relative_zpe_levels_J_per_mol

    text = ts.provenance.get("reactant_side_geometry")
    if not text:
        return 0.0, None
    try:
        symbols, positions = parse_xyz_lines(text)
    except ValueError:
        return 0.0, None
    diffs = [structure_difference_A(symbols, positions, m.symbols, m.positions_A) for m in conformer_members(well)]
    found = [(d, i) for i, d in enumerate(diffs) if d is not None and d <= SAME_STRUCTURE_TOLERANCE_A]
    if not found:
        return 0.0, None
    i = min(found)[1]
    return float(relative_zpe_levels_J_per_mol(well)[i]), conformer_labels(well)[i]


def ln_eyring_factor(T) -> np.ndarray:
    """ln(k_B T / h) [ln s^-1]."""
    return np.log(K_B * np.asarray(T, dtype=float) / H)


__all__ = ["ChannelRates", "channel_rates", "ln_equilibrium_constant", "kp_from_kc",
           "symmetry_degeneracy", "zpe_level_J_per_mol", "ln_eyring_factor", "N_A"]
