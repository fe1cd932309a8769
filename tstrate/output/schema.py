"""The schema of every file tstrate writes: each key (or column) with its unit and meaning.

This table is the one source of the pages under ``docs/outputs/``; they are
made from it by::

    python -m tstrate.output.schema --write docs/outputs

and the tests compare the committed pages with what this writes now, check
that every key of a real run and of every command's ``--json`` output is
listed here, and that every entry here appears in some real output.

Paths
-----
A key is named by its dotted path from the top of the document: ``a.b`` is
key ``b`` of the object under ``a``; ``a[]`` is an item of the list ``a``
(``channels[].name``); ``<name>`` stands for a key chosen by the data (a
channel, species, element or tunnelling-model name), as in
``fits_at_each_pressure.<channel>[]``. Objects used in several places are
written once as a *record* and named where they appear.

Units
-----
``UNIT`` of an entry is the unit of its number(s): ``K``, ``kJ mol-1``,
``J mol-1 K-1``, ``cm-1``, ``bar``, ``%``, ``s-1``, ``molecule cm-3``, ...;
``1`` for a dimensionless number (ratio, exponent, fraction, count);
``@key`` when the unit is written in the sibling ``key`` of the same object
(``@../key``: of the enclosing object), for quantities whose unit follows the
reaction order or the study's ``rate_units``; ``text``, ``true/false``,
``object`` and ``list`` for what is not a number. In CSV tables the unit
stands in brackets after the column name; ``<...>`` there is filled in from
the data (the rate-constant unit of the channel's order).
"""

from __future__ import annotations

import argparse
import re
import sys
from dataclasses import dataclass
from pathlib import Path

from tstrate.model.species import TUNNELLING_MODELS
from tstrate.physics.thermo import LOW_MODE_METHODS

TEXT, FLAG, ONE, OBJ, LIST = "text", "true/false", "1", "object", "list"
KJ, JK, CM1, K, BAR, PCT = "kJ mol-1", "J mol-1 K-1", "cm-1", "K", "bar", "%"
PER_S, PER_CM3 = "s-1", "molecule cm-3"


@dataclass(frozen=True)
class Key:
    """One key: its path (relative to the record or document), unit and meaning.

    ``record``: the value is an object with the keys of that record (or null);
    a path of ``""`` with a record merges the record's keys at this level.
    """

    path: str
    unit: str
    meaning: str
    record: str | None = None


@dataclass(frozen=True)
class Record:
    name: str
    title: str
    keys: tuple[Key, ...]
    about: str = ""


@dataclass(frozen=True)
class Document:
    """One output file or command output. ``kind``: json, csv or yaml."""

    name: str
    page: str
    about: str
    keys: tuple[Key, ...]
    kind: str = "json"


def _keys(*rows) -> tuple[Key, ...]:
    return tuple(Key(*r) for r in rows)


# =====================================================================================
# the conventions (written at the top of docs/outputs/README.md)
# =====================================================================================

CONVENTIONS = """\
One convention holds in every file tstrate writes (results.json, fits.json, fits.csv,
inputs.json, tables/*.csv, the mechanism file's notes, the report and every command's
`--json` output). Inside the program every quantity is SI; the conversion to the units below
happens in one place, `tstrate/output/`.

- **Units in the names.** Every numeric key carries its unit at the end of its name:
  `_K`, `_kJ_per_mol`, `_J_per_mol_K`, `_cm1` (wavenumbers), `_bar`, `_percent`, `_per_s`,
  `_per_cm3` (number densities, molecule cm-3), `_per_bar`, `_km`, `_A` (angstrom),
  `_amu_A2`, `_s` (seconds of wall time). Where the unit follows the reaction order or the study's `rate_units` (rate
  constants, pre-exponential factors, equilibrium constants, Chebyshev coefficients), the
  unit is written in a sibling key ending in `_unit` (`rate_constant` with
  `rate_constant_unit`, `A` with `A_unit`, `Kc` with `Kc_unit`); a few keys share one such
  unit key (`rate_constant_no_tunnelling` is in `rate_constant_unit`). CSV columns carry the
  unit in brackets, `T [K]`, `k [cm3 molecule-1 s-1]`; a column whose unit changes from row
  to row has a neighbour column `<name> unit`.
- **Dimensionless numbers keep plain names**: Troe `a`, the temperature exponent `n`,
  `kappa`, ratios (`ratio_to_bare`, `k_high_pressure_over_canonical_tst`), fractions
  (`fraction_stern_volmer`, `free_substrate_fraction`, 0 to 1), collision efficiencies,
  symmetry numbers, reaction orders, degeneracies, counts (`n_points`), equilibrium constants
  at the standard pressure (`Kp_1bar`, or `Kp_1atm` when a study asks for 1 atm) and logarithms (`ln_Kc`, of Kc in `Kc_unit`). In CSV
  tables their unit is `[1]`.
- **Molar energies in kJ/mol** (`_kJ_per_mol`): barriers, reaction energies, activation
  enthalpies and Gibbs energies, zero-point and electronic energies, enthalpy offsets, fit
  errors of enthalpies. Entropies and heat capacities in J mol-1 K-1. Quantities the trade
  gives as wavenumbers (frequencies, rotational constants, energy grains, energy transfer
  <dE>) are in cm-1; an energy may be given in both (`barrier_zpe_kJ_per_mol` and
  `barrier_zpe_cm1`).
- **Pressures in bar** (`_bar`). The mechanism file is the exception: it follows Cantera's
  format, with the unit written next to each pressure (`Pa`).
- **Deviations and errors of fits in percent** (`_percent`), under one spelling:
  `max_deviation_percent` and `rms_deviation_percent` for every fitted expression (Arrhenius,
  Chebyshev, Troe), `max_deviation_cp_percent` etc. for the NASA polynomials.
- **Rate constants per molecule**: s-1, cm3 molecule-1 s-1, cm6 molecule-2 s-1 unless the
  study's `rate_units` asks otherwise; number densities in molecule cm-3. Arrays run over
  the temperatures of the record (`temperature_K`), then over pressures.
- **Missing numbers are null** (JSON) or empty cells (CSV): values that do not apply, and
  numbers that are not finite.
"""


# =====================================================================================
# records
# =====================================================================================

RECORDS: dict[str, Record] = {}


def _record(name, title, rows, about=""):
    RECORDS[name] = Record(name, title, _keys(*rows), about)


_record("low_modes", "Low-mode treatment", [
    ("method", TEXT, "treatment of low real modes: " + " or ".join(LOW_MODE_METHODS)),
    ("cutoff_cm1", CM1, "cut-off wavenumber of the low-mode treatment"),
])

_record("conventions", "Conventions of the numbers", [
    ("standard_pressure", TEXT, "the standard state of S, G, Kp and activation quantities: 1 bar or 1 atm"),
    ("standard_pressure_bar", BAR, "the same as a number"),
    ("masses", TEXT, "which atomic masses were used (isotopic, most common isotope, unless a file names others)"),
    ("symmetry_tolerance_A", "Å", "default tolerance of the symmetry-number detection"),
    ("rotational_symmetry", TEXT, "how symmetry numbers were found"),
    ("optical_isomers", TEXT, "how chiral structures were counted"),
    ("vibrations", TEXT, "the vibrational model"),
    ("rate_constants", TEXT, "the basis of rate constants"),
], "Stated once per document; they explain most differences from the thermochemistry a "
   "quantum-chemistry program prints (1 atm, average masses, other symmetry or low-mode conventions).")

_record("thermo", "Thermochemistry of one species", [
    ("name", TEXT, "species name"),
    ("formula", TEXT, "chemical formula"),
    ("kind", TEXT, "minimum or transition_state"),
    ("symmetry_number", ONE, "rotational symmetry number in effect"),
    ("optical_isomers", ONE, "number of optical isomers"),
    ("linear", FLAG, "whether the species is linear"),
    ("symmetry_given", FLAG, "whether the symmetry number was given (an override) rather than detected"),
    ("rotation_group", TEXT, "rotation group detected from the geometry (C1, C2, D3, T, O, I, C∞, D∞, ...; "
     "its order is the symmetry number), or null when the symmetry number was given"),
    ("frequencies_cm1", CM1, "scaled harmonic wavenumbers; imaginary ones negative"),
    ("free_rotors", LIST, "free internal rotors that replace harmonic modes (may be empty)"),
    ("free_rotors[].replaces_cm1", CM1, "the (unscaled) wavenumber of the mode the rotor replaces"),
    ("free_rotors[].symmetry_number", ONE, "symmetry number of the rotor"),
    ("free_rotors[].reduced_moment_amu_A2", "amu Å2", "reduced moment of inertia of the rotor"),
    ("hindered_rotors", LIST, "one-dimensional hindered rotors that replace harmonic modes (may be empty)"),
    ("hindered_rotors[].bond", TEXT, "the bond, e.g. C1-O3 (1-based atoms, the top beyond the second)"),
    ("hindered_rotors[].bond_atoms", ONE, "the bond's atoms, 1-based: [frame atom, top atom]"),
    ("hindered_rotors[].top_atoms", ONE, "the atoms of the top, 1-based"),
    ("hindered_rotors[].symmetry_number", ONE, "symmetry number of the rotor (each level counts 1/sigma)"),
    ("hindered_rotors[].reduced_moment_amu_A2", "amu Å2", "reduced moment of inertia of the rotor"),
    ("hindered_rotors[].moment_definition", TEXT, "the reduced-moment definition (Pitzer 1946, or given)"),
    ("hindered_rotors[].replaces_cm1", CM1, "the (unscaled) wavenumber of the mode the rotor replaces"),
    ("hindered_rotors[].mode_assignment", TEXT, "how that mode was chosen: projection or wavenumber"),
    ("hindered_rotors[].mode_overlap", ONE, "squared overlap of the torsion with that mode (0-1), or null "
     "without a Hessian"),
    ("hindered_rotors[].potential_source", TEXT, "points, barriers, terms, or the scan that made the points"),
    ("hindered_rotors[].barrier_kJ_per_mol", KJ, "highest minus lowest value of the potential"),
    ("hindered_rotors[].potential_minimum_kJ_per_mol", KJ, "lowest value of the potential, V(0) = 0 at the "
     "geometry (negative: the geometry is not the lowest well)"),
    ("hindered_rotors[].cos_terms_cm1", CM1, "a_k of V(phi) = sum_k a_k cos k phi + b_k sin k phi + c"),
    ("hindered_rotors[].sin_terms_cm1", CM1, "b_k of the same series"),
    ("hindered_rotors[].fit_rms_kJ_per_mol", KJ, "RMS error of the Fourier fit to the points, or null"),
    ("hindered_rotors[].fit_max_kJ_per_mol", KJ, "largest error of the fit, or null"),
    ("hindered_rotors[].points_deg", "degree", "angles of the points fitted (empty: given as coefficients)"),
    ("hindered_rotors[].points_kJ_per_mol", KJ, "energies of the points, on the fit's scale"),
    ("hindered_rotors[].zpe_cm1", CM1, "ground level of the rotor above V(0)"),
    ("hindered_rotors[].harmonic_wavenumber_cm1", CM1, "sqrt(V''(0) / I) / (2 pi c): the rotor's small-"
     "vibration wavenumber at the geometry"),
    ("hindered_rotors[].levels_cm1", CM1, "the lowest levels (up to 40) from the ground level, each counting "
     "1/symmetry_number"),
    ("zpe_kJ_per_mol", KJ, "zero-point energy: harmonic (free rotors have none) plus the hindered rotors' "
     "ground levels"),
    ("temperature_K", K, "temperatures of the arrays below"),
    ("entropy_J_per_mol_K", JK, "standard entropy S at the standard pressure (1 bar unless stated), per temperature"),
    ("heat_capacity_J_per_mol_K", JK, "heat capacity Cp, per temperature"),
    ("enthalpy_increment_kJ_per_mol", KJ, "H(T) - H(0), per temperature"),
    ("gibbs_increment_kJ_per_mol", KJ, "G(T) - H(0) at the standard pressure, per temperature"),
], "Ideal gas, rigid rotor, harmonic oscillator (with the low-mode treatment), free and hindered "
   "internal rotors, electronic levels; 1 bar standard state unless the document's conventions say 1 atm.")

_record("channel_rates", "Rate constants of one channel (transition-state theory)", [
    ("name", TEXT, "channel name"),
    ("order", ONE, "reaction order of the forward direction (number of reactant molecules)"),
    ("temperature_K", K, "temperatures of the arrays below"),
    ("rate_constant", "@rate_constant_unit", "forward rate constant k(T), tunnelling included"),
    ("rate_constant_no_tunnelling", "@rate_constant_unit", "forward rate constant without tunnelling"),
    ("rate_constant_unit", TEXT, "unit of the forward rate constants (follows the order and the "
                                 "study's rate_units)"),
    ("kappa", ONE, "tunnelling factor, per temperature"),
    ("tunnelling", TEXT, "tunnelling model: " + " or ".join(TUNNELLING_MODELS)),
    ("reverse_rate_constant", "@reverse_rate_constant_unit", "reverse rate constant by detailed balance"),
    ("reverse_rate_constant_unit", TEXT, "unit of the reverse rate constant (order of the products)"),
    ("ln_Kc", ONE, "natural logarithm of Kc expressed in Kc_unit (finite where Kc overflows)"),
    ("Kc_unit", TEXT, "unit of Kc, (molecule cm-3)^dn with dn = products - reactants"),
    ("Kc", "@Kc_unit", "equilibrium constant in concentration units, per temperature"),
    ("Kp_1bar", ONE, "dimensionless equilibrium constant, 1 bar standard state (absent at 1 atm)"),
    ("Kp_1atm", ONE, "dimensionless equilibrium constant, 1 atm standard state (only when the study asks "
                     "for 1 atm; then instead of Kp_1bar)"),
    ("standard_pressure_bar", BAR, "standard pressure of Kp and of the activation quantities"),
    ("barrier_classical_kJ_per_mol", KJ, "electronic energy of the transition state above the separated reactants"),
    ("barrier_zpe_kJ_per_mol", KJ, "the same with zero-point energies"),
    ("barrier_from_complex_classical_kJ_per_mol", KJ, "transition state above the pre-reactive complex, "
                                                      "classical (null without a complex)"),
    ("barrier_from_complex_zpe_kJ_per_mol", KJ, "the same with zero-point energies (null without a complex)"),
    ("reaction_energy_zpe_kJ_per_mol", KJ, "products minus reactants, zero-point energies included"),
    ("imaginary_frequency_cm1", CM1, "magnitude of the imaginary wavenumber of the transition state"),
    ("tunnelling_forward_barrier_kJ_per_mol", KJ, "forward barrier height the tunnelling model used (from the "
                                                  "complex when there is one)"),
    ("tunnelling_reverse_barrier_kJ_per_mol", KJ, "reverse barrier height the tunnelling model used"),
    ("tunnelling_energy_floor_kJ_per_mol", KJ, "lowest energy of the tunnelling integral, above the forward side"),
    ("tunnelling_product_complex", TEXT, "the product complex the reverse barrier is measured from (null: "
                                         "from the separated products)"),
    ("tunnelling_floor", TEXT, "floor in effect for a channel through a complex: reactants or complex (null "
                               "without a complex)"),
    ("other_tunnelling_floor", TEXT, "the other floor choice, with which kappa_other_floor is computed (null "
                                     "without a complex or for models without a floor)"),
    ("other_tunnelling_energy_floor_kJ_per_mol", KJ, "lowest energy of the tunnelling integral with the other "
                                                     "floor, above the forward side (or null)"),
    ("kappa_other_floor", ONE, "tunnelling factor with the other floor, per temperature (or null); neither "
                               "floor is right at every pressure, k scales with kappa"),
    ("delta_H_activation_kJ_per_mol", KJ, "activation enthalpy, per temperature"),
    ("delta_S_activation_J_per_mol_K", JK, "activation entropy at 1 bar, per temperature"),
    ("delta_G_activation_kJ_per_mol", KJ, "activation Gibbs energy at 1 bar, per temperature"),
    ("reaction_path_degeneracy", ONE, "reaction-path degeneracy in effect"),
    ("transition_state_conformer_shares", LIST, "for a transition state that is a conformer ensemble, one entry "
     "per TS conformer (null otherwise)"),
    ("transition_state_conformer_shares[].label", TEXT, "the TS conformer's label"),
    ("transition_state_conformer_shares[].share", ONE, "its share k_j / k of the rate constant, tunnelling "
     "included, per temperature"),
    ("tunnelling_well_conformer", TEXT, "for a reactant-side well (complex, or the one reactant) that is a "
     "conformer ensemble: the conformer the TS connects to, from which the tunnelling forward barrier and floor "
     "are measured (null: from the lowest conformer, or no ensemble)"),
    ("standard_state", TEXT, "the standard states used"),
], "Canonical transition-state theory with the channel's tunnelling model; arrays run over temperature_K.")

_record("conformer_ensemble", "One conformer ensemble", [
    ("species", TEXT, "the study's name of the ensemble"),
    ("kind", TEXT, "minimum or transition_state"),
    ("temperature_K", K, "temperatures of the populations"),
    ("conformers", LIST, "one entry per conformer, the reference (lowest E0) first"),
    ("conformers[].label", TEXT, "the conformer's label ([species] table key, or file name)"),
    ("conformers[].file", TEXT, "its species file"),
    ("conformers[].relative_zpe_energy_kJ_per_mol", KJ, "E0 (electronic energy plus ZPE) above the reference"),
    ("conformers[].relative_electronic_energy_kJ_per_mol", KJ, "electronic energy above the reference's"),
    ("conformers[].symmetry_number", ONE, "its own rotational symmetry number"),
    ("conformers[].optical_isomers", ONE, "its own number of optical isomers"),
    ("conformers[].population", ONE, "Boltzmann population x_i(T), 0 to 1, per temperature"),
], "q_ens = sum_i q_i exp(-(E0_i - E0_ref)/kT); x_i = q_i exp(-(E0_i - E0_ref)/kT) / q_ens.")

_record("scenario", "One comparison scenario (a comparison at one catalyst abundance)", [
    ("name", TEXT, "name of the [[comparison]]"),
    ("description", TEXT, "its description"),
    ("abundance", OBJ, "the catalyst abundance as the study gave it"),
    ("abundance.kind", TEXT, "number_density, partial_pressure, mixing_ratio or relative_humidity"),
    ("abundance.value", "@unit", "the abundance"),
    ("abundance.unit", TEXT, "its unit: molecule cm-3, bar, mol mol-1 or %"),
    ("abundance.label", TEXT, "the study's name for the abundance (may be empty)"),
    ("abundance.phase", TEXT, "liquid or ice for a relative humidity, else null"),
    ("abundance.total_pressure_bar", BAR, "total pressure of a mixing ratio, else null"),
    ("abundance.text", TEXT, "the abundance in words"),
    ("reference", TEXT, "the bare (reference) channel"),
    ("substrate", TEXT, "the species the routes consume"),
    ("catalyst", TEXT, "the catalyst species"),
    ("catalyst_dimer", TEXT, "the catalyst dimer species, or null"),
    ("temperature_K", K, "temperatures of the arrays of this scenario"),
    ("catalyst_number_density_per_cm3", PER_CM3, "free catalyst (monomer) number density, per temperature"),
    ("dimer_number_density_per_cm3", PER_CM3, "dimer number density, per temperature (null without a dimer)"),
    ("dimer_Kp_per_bar", "bar-1", "Kp of 2 X <=> X2 (1 bar standard state), per temperature"),
    ("free_substrate_fraction", ONE, "fraction of the substrate not held in complexes, per temperature"),
    ("routes", LIST, "one entry per route, the bare route first"),
    ("routes[].channel", TEXT, "channel of the route"),
    ("routes[].kind", TEXT, "bare, one_catalyst, two_catalysts or dimer"),
    ("routes[].catalyst_power", ONE, "power of the catalyst abundance in the route's rate"),
    ("routes[].order", ONE, "reaction order of the channel"),
    ("routes[].rate_constant", "@rate_constant_unit", "rate constant of the channel, per temperature"),
    ("routes[].rate_constant_unit", TEXT, "its unit"),
    ("routes[].complex", TEXT, "pre-reactive complex of the channel, or null"),
    ("routes[].complex_Kc", "@complex_Kc_unit", "formation constant of the complex in concentration units"),
    ("routes[].complex_Kc_unit", TEXT, "its unit"),
    ("routes[].complex_Kp", "@complex_Kp_unit", "formation constant of the complex, 1 bar standard state"),
    ("routes[].complex_Kp_unit", TEXT, "its unit"),
    ("routes[].k_unimolecular_from_complex_per_s", PER_S, "first-order rate constant of the complex "
                                                          "(null without a complex)"),
    ("routes[].complex_per_free_substrate", ONE, "complexes per free substrate molecule (null without a complex)"),
    ("routes[].pseudo_first_order_per_s", PER_S, "pseudo-first-order loss rate of the substrate by this route"),
    ("routes[].ratio_to_bare", ONE, "pseudo-first-order rate over that of the bare route"),
    ("routes[].crossover_number_density_per_cm3", PER_CM3, "catalyst number density at which the route is "
                                                          "as fast as the bare one (assisted routes only)"),
    ("routes[].crossover_abundance", "@crossover_abundance_unit", "the same crossover in the kind of the given "
                                                                  "abundance (assisted routes only)"),
    ("routes[].crossover_abundance_unit", TEXT, "its unit (that of abundance.unit)"),
    ("routes[].faster_than_bare_K", LIST, "temperature ranges where the route beats the bare one"),
    ("routes[].faster_than_bare_K[].low_K", K, "lower end of the range"),
    ("routes[].faster_than_bare_K[].high_K", K, "upper end of the range"),
    ("routes[].faster_than_bare_K[].low_at_grid_edge", FLAG, "whether the range starts at the grid's start"),
    ("routes[].faster_than_bare_K[].high_at_grid_edge", FLAG, "whether the range ends at the grid's end"),
    ("barriers", LIST, "barriers of every channel of the comparison"),
    ("barriers[].channel", TEXT, "channel name"),
    ("barriers[].kind", TEXT, "route kind, as routes[].kind"),
    ("barriers[].barrier_classical_kJ_per_mol", KJ, "transition state above the separated reactants "
                                                    "(catalysts included), classical"),
    ("barriers[].barrier_zpe_kJ_per_mol", KJ, "the same with zero-point energies"),
    ("barriers[].barrier_from_complex_classical_kJ_per_mol", KJ, "above the pre-reactive complex (or null)"),
    ("barriers[].barrier_from_complex_zpe_kJ_per_mol", KJ, "the same with zero-point energies (or null)"),
    ("barriers[].complex_binding_zpe_kJ_per_mol", KJ, "complex relative to its separated parts, "
                                                      "zero-point energies included (or null)"),
    ("barriers[].reaction_energy_zpe_kJ_per_mol", KJ, "products minus reactants with zero-point energies"),
    ("barriers[].delta_G_activation_kJ_per_mol", KJ, "activation Gibbs energy from the separated reactants, "
                                                     "1 bar, per temperature"),
    ("barriers[].delta_G_activation_from_complex_kJ_per_mol", KJ, "the same from the complex (or null)"),
    ("rate_model", TEXT, "the rate model of the comparison"),
], "Bare against catalysed routes at one abundance; arrays run over temperature_K.")

_record("k_of_E_model", "How k(E) of a unimolecular channel was built", [
    ("reactant", TEXT, "the reactant species"),
    ("transition_state", TEXT, "the transition state"),
    ("tunnelling_in_k_of_E", TEXT, "tunnelling in the sum of states: none or eckart"),
    ("barrier_zpe_kJ_per_mol", KJ, "threshold E0, zero-point corrected"),
    ("barrier_zpe_cm1", CM1, "the same as a wavenumber"),
    ("grain_cm1", CM1, "energy grain actually used"),
    ("requested_grain_cm1", CM1, "energy grain asked for"),
    ("energy_grid_top_cm1", CM1, "top of the energy grid"),
    ("reaction_path_degeneracy", ONE, "reaction-path degeneracy"),
    ("centrifugal_factor", ONE, "ratio of the external rotational partition functions (TS over reactant)"),
    ("external_rotation", TEXT, "adiabatic (the 2-D rotor enters k(E) through the centrifugal factor) or "
                                "active (counted in both densities because the reactant has too few states "
                                "per grain; the centrifugal factor is then 1)"),
    ("rotors", OBJ, "the rotational constants used"),
    ("rotors.unique_axis", TEXT, "the symmetric-top axis: A, C or linear"),
    ("rotors.reactant_B2d_cm1", CM1, "two-dimensional rotor constant of the reactant"),
    ("rotors.reactant_K_cm1", CM1, "K-rotor constant of the reactant"),
    ("rotors.ts_B2d_cm1", CM1, "two-dimensional rotor constant of the transition state"),
    ("rotors.ts_K_cm1", CM1, "K-rotor constant of the transition state"),
])

_record("falloff_channel", "Falloff of one unimolecular channel", [
    ("name", TEXT, "channel name"),
    ("order", ONE, "1"),
    ("falloff_computed", FLAG, "true"),
    ("temperature_K", K, "temperatures (first index of the arrays)"),
    ("pressure_bar", BAR, "pressures (second index): a list, or per temperature a list when the study gives "
                          "number densities"),
    ("number_density_per_cm3", PER_CM3, "bath-gas number density [T][p]"),
    ("rate_constant", "@rate_constant_unit", "k(T, p) [T][p]"),
    ("rate_constant_unit", TEXT, "unit of the unimolecular rate constants"),
    ("k_high_pressure", "@k_high_pressure_unit", "high-pressure limit k_inf(T)"),
    ("k_high_pressure_unit", TEXT, "its unit"),
    ("k_low_pressure", "@k_low_pressure_unit", "strong-collision low-pressure limit k_0(T) times beta_c"),
    ("k_low_pressure_unit", TEXT, "its unit (bimolecular)"),
    ("lindemann_rate_constant", "@rate_constant_unit", "Lindemann-Hinshelwood k(T, p) [T][p]"),
    ("lindemann_k_low_pressure", TEXT, "which k_0 the Lindemann curve uses"),
    ("canonical_tst_rate_constant", "@rate_constant_unit", "canonical TST k(T) of the channel"),
    ("k_high_pressure_over_canonical_tst", ONE, "k_inf over canonical TST (a check, near 1)"),
    ("troe", OBJ, "Troe form fitted to k(T, p)"),
    ("troe.a", ONE, "Troe a"),
    ("troe.T3_K", K, "Troe T***"),
    ("troe.T1_K", K, "Troe T*"),
    ("troe.T2_K", K, "Troe T** (or null)"),
    ("troe.parameters_at_bound", TEXT, "names of the Troe parameters at a bound of the fit (list); their values "
                                       "are the bounds and the data do not determine them"),
    ("troe.Fcent", ONE, "broadening factor at the centre, per temperature"),
    ("troe.k_low_pressure", "@k_low_pressure_unit", "k_0 of the Troe form, per temperature"),
    ("troe.k_low_pressure_unit", TEXT, "its unit"),
    ("troe.k_low_pressure_kind", TEXT, "fitted effective k_0 or the strong-collision limit"),
    ("troe.k_high_pressure_kind", TEXT, "what k_inf of the Troe form is"),
    ("troe.max_deviation_percent", PCT, "largest deviation of the Troe form from k(T, p) on the fitting grid"),
    ("troe.rms_deviation_percent", PCT, "rms deviation on the fitting grid"),
    ("troe.fitted_on", OBJ, "the fitting grid"),
    ("troe.fitted_on.min_number_density_per_cm3", PER_CM3, "lowest bath-gas number density"),
    ("troe.fitted_on.max_number_density_per_cm3", PER_CM3, "highest bath-gas number density"),
    ("troe.fitted_on.points_per_temperature", ONE, "number densities per temperature"),
    ("troe.rate_constant", "@../rate_constant_unit", "the Troe form at the study's T and p [T][p]"),
    ("troe.max_deviation_on_study_grid_percent", PCT, "largest deviation of the Troe form at the study's T and p"),
    ("bath_gas", TEXT, "bath gas"),
    ("collision_efficiency", ONE, "collision efficiency beta_c, per temperature"),
    ("collisions", OBJ, "collisions with the bath gas"),
    ("collisions.bath_gas", TEXT, "bath gas"),
    ("collisions.reactant_lennard_jones", OBJ, "Lennard-Jones parameters of the reactant"),
    ("collisions.reactant_lennard_jones.sigma_A", "Å", "collision diameter"),
    ("collisions.reactant_lennard_jones.epsilon_K", K, "well depth over k_B"),
    ("collisions.bath_lennard_jones", OBJ, "Lennard-Jones parameters of the bath gas"),
    ("collisions.bath_lennard_jones.sigma_A", "Å", "collision diameter"),
    ("collisions.bath_lennard_jones.epsilon_K", K, "well depth over k_B"),
    ("collisions.bath_lennard_jones.source", TEXT, "where the parameters come from"),
    ("collisions.collision_integral", TEXT, "collision-integral approximation used"),
    ("collisions.collision_rate_constant", "@collision_rate_constant_unit", "Lennard-Jones collision rate constant, "
                                                                             "per temperature"),
    ("collisions.collision_rate_constant_unit", TEXT, "its unit (bimolecular)"),
    ("collisions.energy_transfer", TEXT, "how beta_c was set: strong, efficiency, down or all"),
    ("collisions.delta_E_down_cm1", CM1, "<dE>down per temperature (null unless energy_transfer is down)"),
    ("collisions.delta_E_all_cm1", CM1, "<dE> of all collisions per temperature (null unless energy_transfer is all)"),
    ("collisions.energy_factor_FE", ONE, "Troe's energy factor F_E per temperature (null without <dE>)"),
    ("collisions.collision_efficiency", ONE, "beta_c, per temperature"),
    ("pressure_method", TEXT, "strong_collision or master_equation ([falloff] pressure_method)"),
    ("master_equation", OBJ, "how the master equation was solved (null for strong collisions)"),
    ("master_equation.grain_cm1", CM1, "grain of the master equation at the check temperature"),
    ("master_equation.energy_ceiling_cm1", CM1, "highest energy solved, above the reactant's zero-point level"),
    ("master_equation.grains_solved", ONE, "states solved (grains plus the reservoir)"),
    ("master_equation.kernel", TEXT, "exponential (exponential-down) or strong (strong collider)"),
    ("master_equation.reservoir_below_cm1", CM1, "grains below this energy form one thermal reservoir state "
                                                 "(NaN: none)"),
    ("master_equation.min_eigenvalue_separation", ONE, "smallest ratio of the slowest relaxation eigenvalue to "
                                                       "the chemical one over the grid"),
    ("master_equation.check", OBJ, "the answer recomputed at one point (highest T, lowest p)"),
    ("master_equation.check.temperature_K", K, "temperature of the check"),
    ("master_equation.check.number_density_per_cm3", PER_CM3, "number density of the check"),
    ("master_equation.check.grain_cm1", CM1, "the other grain (half, or twice at the finest grain)"),
    ("master_equation.check.grain_change_percent", PCT, "change of k with that grain"),
    ("master_equation.check.ceiling_change_percent", PCT, "change of k with the ceiling raised by "
                                                          "10 <dE>down + 10 RT"),
    ("master_equation.check.reservoir_change_percent", PCT, "change of k with the reservoir started one "
                                                            "reservoir depth lower"),
    ("warnings", TEXT, "warnings of this channel (list)"),
    ("", "", "", "k_of_E_model"),
], "RRKM k(E), strong collisions scaled by beta_c or the energy-grained master equation, Troe fit. Arrays run over temperature_K, then pressure.")

_record("falloff_study", "Falloff of a study", [
    ("study", TEXT, "the study file"),
    ("title", TEXT, "the study's title"),
    ("bath_gas", TEXT, "bath gas"),
    ("bath_gas_lennard_jones", OBJ, "its Lennard-Jones parameters"),
    ("bath_gas_lennard_jones.sigma_A", "Å", "collision diameter"),
    ("bath_gas_lennard_jones.epsilon_K", K, "well depth over k_B"),
    ("bath_gas_lennard_jones.source", TEXT, "where the parameters come from"),
    ("channels", LIST, "the unimolecular channels"),
    ("channels[]", OBJ, "one channel", "falloff_channel"),
    ("not_computed", LIST, "channels without a falloff treatment"),
    ("not_computed[].name", TEXT, "channel name"),
    ("not_computed[].order", ONE, "its order"),
    ("not_computed[].falloff_computed", FLAG, "false"),
    ("not_computed[].reason", TEXT, "why"),
    ("warnings", TEXT, "warnings (list)"),
])

_record("excitation_grid", "Energised molecules on a grid of conditions", [
    ("temperature_K", K, "parent temperatures (one per row)"),
    ("pressure_bar", BAR, "pressures of the columns (null where the study gives number densities)"),
    ("number_density_per_cm3", PER_CM3, "bath-gas number densities"),
    ("thermal_energy_kJ_per_mol", KJ, "mean thermal vibrational energy of the parent, per temperature"),
    ("energy_kJ_per_mol", KJ, "total energy (excitation plus thermal), per temperature"),
    ("energy_cm1", CM1, "the same as a wavenumber"),
    ("rate_constant_per_s", PER_S, "k(E) at that energy, per temperature"),
    ("below_threshold", FLAG, "whether the energy lies below the barrier, per temperature"),
    ("collision_rate_constant", "@collision_rate_constant_unit", "Lennard-Jones collision rate constant, "
                                                                   "per temperature"),
    ("collision_rate_constant_unit", TEXT, "its unit (bimolecular)"),
    ("collision_efficiency", ONE, "beta_c, per temperature"),
    ("collision_frequency_per_s", PER_S, "collision frequency Z [M]"),
    ("fraction_stern_volmer", ONE, "fraction reacting before deactivation, k(E) / (k(E) + beta_c Z [M])"),
    ("fraction_stepwise", ONE, "fraction reacting with stepwise deactivation by <dE>down (null without <dE>down)"),
    ("fraction_master_equation", ONE, "fraction reacting before stabilisation by the energy-grained master "
                                      "equation, tunnelling below E0 included (null unless the channel's "
                                      "pressure_method is master_equation)"),
    ("delta_E_down_cm1", CM1, "<dE>down per temperature (or null)"),
    ("half_quenching_number_density_per_cm3", PER_CM3, "number density where half react (Stern-Volmer; pressure "
                                                       "scan only)"),
    ("half_quenching_pressure_bar", BAR, "the same as a pressure (pressure scan only)"),
    ("source", TEXT, "the altitude profile: us-standard-1976 or a CSV file (altitude profile only)"),
    ("altitude_km", "km", "altitudes (altitude profile only)"),
], "A pressure scan runs over [temperature][pressure]; an altitude profile over altitude_km.")

_record("excitation", "One excitation of energised molecules", [
    ("name", TEXT, "name of the excitation"),
    ("channel", TEXT, "the unimolecular channel"),
    ("excitation", TEXT, "the excitation in words"),
    ("excitation_energy_kJ_per_mol", KJ, "energy put in by the excitation"),
    ("excitation_energy_cm1", CM1, "the same as a wavenumber"),
    ("below_threshold", FLAG, "whether the molecule stays below the barrier everywhere"),
    ("pressure_scan", OBJ, "at the study's pressures (or null)", "excitation_grid"),
    ("altitude_profile", OBJ, "along an altitude profile (or null)", "excitation_grid"),
    ("k_of_E", OBJ, "k(E) sampled from the barrier to the top of the grid"),
    ("k_of_E.energy_kJ_per_mol", KJ, "energies from the reactant's zero-point level"),
    ("k_of_E.energy_cm1", CM1, "the same as wavenumbers"),
    ("k_of_E.rate_constant_per_s", PER_S, "k(E)"),
    ("k_of_E.note", TEXT, "what the sample covers"),
    ("warnings", TEXT, "warnings (list)"),
    ("", "", "", "k_of_E_model"),
])

_ARRHENIUS_ROWS = [
    ("form", TEXT, "the expression: k = A (T/T0)^n exp(-Ea/RT), or with n = 0"),
    ("A", "@A_unit", "pre-exponential factor"),
    ("A_unit", TEXT, "its unit (the study's rate unit of the order)"),
    ("A_SI", "@A_SI_unit", "the same factor in SI per molecule"),
    ("A_SI_unit", TEXT, "its unit"),
    ("n", ONE, "temperature exponent (0 for the two-parameter form)"),
    ("T0_K", K, "reference temperature T0"),
    ("Ea_kJ_per_mol", KJ, "activation energy"),
    ("Ea_over_R_K", K, "Ea / R"),
    ("order", ONE, "reaction order"),
    ("Tmin_K", K, "lowest fitted temperature"),
    ("Tmax_K", K, "highest fitted temperature"),
    ("n_points", ONE, "points fitted"),
    ("max_deviation_percent", PCT, "largest deviation of the expression from the fitted k"),
    ("rms_deviation_percent", PCT, "rms deviation"),
    ("warning", TEXT, "a warning about the fit, or null"),
]
_record("arrhenius", "Arrhenius expression", _ARRHENIUS_ROWS, "Fitted by least squares on ln k.")

_record("chebyshev", "Chebyshev expression", [
    ("form", TEXT, "the expression (log10 k as a double Chebyshev series in reduced 1/T and ln P)"),
    ("coefficients_log10_k", "@k_unit", "coefficient matrix a[t][p] of log10 k with k in k_unit"),
    ("k_unit", TEXT, "unit of k the coefficients are for"),
    ("coefficients_log10_k_SI", "@k_SI_unit", "the same for k in SI per molecule (only a[0][0] differs)"),
    ("k_SI_unit", TEXT, "its unit"),
    ("coefficient_layout", TEXT, "rows: 1/T terms, columns: log P terms"),
    ("n_temperature_terms", ONE, "rows"),
    ("n_pressure_terms", ONE, "columns"),
    ("order", ONE, "reaction order"),
    ("Tmin_K", K, "lower end of the temperature range"),
    ("Tmax_K", K, "upper end of the temperature range"),
    ("pressure_dependent", FLAG, "whether k depends on pressure"),
    ("Pmin_bar", BAR, "lower end of the pressure range (null when k does not depend on pressure)"),
    ("Pmax_bar", BAR, "upper end of the pressure range (or null)"),
    ("n_points", ONE, "points fitted"),
    ("max_deviation_percent", PCT, "largest deviation from the fitted k"),
    ("rms_deviation_percent", PCT, "rms deviation"),
    ("warning", TEXT, "a warning about the fit, or null"),
])

_record("troe_fit", "Troe falloff expression (fits.json)", [
    ("form", TEXT, "the expression: Troe falloff k = k_inf [Pr/(1 + Pr)] F, Pr = k0 [M] / k_inf"),
    ("k0_low_pressure", OBJ, "low-pressure limit", "arrhenius"),
    ("kinf_high_pressure", OBJ, "high-pressure limit", "arrhenius"),
    ("a", ONE, "Troe a"),
    ("T3_K", K, "Troe T***"),
    ("T1_K", K, "Troe T*"),
    ("T2_K", K, "Troe T** (or null)"),
    ("parameters_at_bound", TEXT, "names of the Troe parameters at a bound of the fit (list); their values "
                                  "are the bounds and the data do not determine them"),
    ("parameters_at_bound_notes", TEXT, "what each parameter at a bound means, in words (list)"),
    ("Fcent_formula", TEXT, "Fcent in terms of the parameters"),
    ("fit_max_deviation_tabulated_limits_percent", PCT, "largest deviation of the Troe fit from the computed "
     "falloff with the tabulated limits (an effective k0 for tunnelling channels), or null; the deviation of "
     "the expression with its Arrhenius limits is in the channel's mechanism record"),
    ("fit_rms_deviation_tabulated_limits_percent", PCT, "rms deviation of the same (or null)"),
    ("bath_gas", TEXT, "bath gas the falloff was computed for"),
    ("source", TEXT, "where the parameters come from (or null)"),
])

_record("pressure_table", "Per-pressure table of Arrhenius expressions", [
    ("form", TEXT, "the expression: one modified Arrhenius expression per pressure, ln k linear in ln p between"),
    ("order", ONE, "reaction order"),
    ("entries", LIST, "one expression per pressure"),
    ("entries[]", OBJ, "the expression at one pressure", "arrhenius"),
    ("entries[].pressure_bar", BAR, "its pressure"),
])

_record("exported", "What mechanism.yaml holds for a channel", [
    ("kind", TEXT, "arrhenius, modified_arrhenius, troe, pressure_table, chebyshev or chebyshev_falloff"),
    ("form", TEXT, "the kind in words"),
    ("label", TEXT, "the form with its basis (e.g. Chebyshev 5 x 2)"),
    ("requested_form", TEXT, "auto or the study's mechanism_form"),
    ("tolerance_percent", PCT, "the study's max_deviation_percent"),
    ("meets_tolerance", FLAG, "whether the deviation is within the tolerance"),
    ("deviation_measured_at", TEXT, "where the deviation is measured"),
    ("max_deviation_percent", PCT, "largest deviation of the written expression from the computed rates, on "
                                   "the grid and between grid points (null when not measured)"),
    ("max_deviation_on_grid_percent", PCT, "the same on the computed grid"),
    ("max_deviation_between_grid_points_percent", PCT, "the same between grid points (null without any)"),
    ("ratio_to_computed_min", ONE, "smallest k_expression / k_computed"),
    ("ratio_to_computed_max", ONE, "largest k_expression / k_computed"),
    ("n_grid_points", ONE, "grid points measured"),
    ("n_points_between", ONE, "points between grid points measured"),
    ("forms_tried", LIST, "every form measured, simplest first"),
    ("forms_tried[].label", TEXT, "the form"),
    ("forms_tried[].max_deviation_percent", PCT, "its largest deviation"),
    ("notes", TEXT, "plain statements about the exported expression (list)"),
    ("warnings", TEXT, "those that say it misses the tolerance or must not be extrapolated (list)"),
    ("expression", OBJ, "the expression", "arrhenius|troe_fit|pressure_table|chebyshev"),
    ("chebyshev_basis", ONE, "terms in 1/T and in log p (Chebyshev kinds only)"),
    ("troe_fit_max_deviation_tabulated_limits_percent", PCT, "deviation of the Troe fit with tabulated limits "
                                                             "(Troe only, or null)"),
    ("checked_from_mechanism_yaml_max_deviation_percent", PCT, "the largest deviation measured again from the "
                                                              "numbers read back from mechanism.yaml (fits.json "
                                                              "of tstrate run only)"),
])

_record("nasa7", "NASA 7-coefficient polynomials", [
    ("form", TEXT, "Cp/R, H/RT and S/R in terms of the coefficients a1..a7 (T in K)"),
    ("Tmin_K", K, "lower end of the low range"),
    ("Tmid_K", K, "common temperature of the two ranges"),
    ("Tmax_K", K, "upper end of the high range"),
    ("low_range_coefficients", ONE, "a1..a7 of the low range (powers of T in K)"),
    ("high_range_coefficients", ONE, "a1..a7 of the high range"),
    ("reference_pressure_bar", BAR, "standard pressure of S and G"),
    ("max_deviation_cp_percent", PCT, "largest relative deviation of Cp over the fitting grid"),
    ("max_deviation_h_percent", PCT, "largest deviation of H relative to max(|H|, RT)"),
    ("max_abs_deviation_h_kJ_per_mol", KJ, "largest absolute deviation of H"),
    ("max_deviation_s_percent", PCT, "largest relative deviation of S"),
    ("n_points", ONE, "temperatures fitted"),
])

_record("species_summary", "A species file in brief", [
    ("name", TEXT, "species name"),
    ("formula", TEXT, "chemical formula"),
    ("kind", TEXT, "minimum or transition_state"),
    ("electronic_energy_kJ_per_mol", KJ, "electronic energy (or null)"),
    ("frequencies_cm1", CM1, "harmonic wavenumbers, imaginary negative (rounded to 0.01)"),
    ("symmetry_number", ONE, "rotational symmetry number"),
    ("linear", FLAG, "whether the species is linear"),
    ("has_hessian", FLAG, "whether the file holds the Hessian"),
])

_record("saddle", "A verified saddle point", [
    ("ts", TEXT, "name of the transition state"),
    ("reactant", TEXT, "name of the reactant-side minimum"),
    ("product", TEXT, "name of the product-side minimum"),
    ("imaginary_frequency_cm1", CM1, "magnitude of the imaginary wavenumber"),
    ("barrier_classical_kJ_per_mol", KJ, "TS above the reactant side, electronic energies"),
    ("barrier_zpe_kJ_per_mol", KJ, "the same with zero-point energies"),
    ("reverse_barrier_classical_kJ_per_mol", KJ, "TS above the product side, electronic energies"),
    ("reverse_barrier_zpe_kJ_per_mol", KJ, "the same with zero-point energies"),
    ("bond_changes", TEXT, "bonds formed and broken from reactant to product"),
    ("retries", ONE, "re-searches needed to remove extra imaginary modes"),
    ("gradient_calls_hessian", ONE, "calculator calls of the TS Hessian"),
    ("from_cache", FLAG, "whether the result came from the cache"),
])


# =====================================================================================
# documents
# =====================================================================================

_record("capture_limit", "Capture limit of a bimolecular channel", [
    ("channel", TEXT, "channel name"),
    ("model", TEXT, "the capture model: Lennard-Jones collisions when both reactants have Lennard-Jones "
                    "parameters, else gas-kinetic hard spheres"),
    ("temperature_K", K, "the temperatures"),
    ("rate_constant_unit", TEXT, "unit of the rate constants below"),
    ("tst_rate_constant", "@rate_constant_unit", "canonical TST rate constant (uncapped), per temperature"),
    ("capture_rate_constant", "@rate_constant_unit", "capture (collision) rate constant of the reactants, "
                                                      "per temperature"),
    ("capped_rate_constant", "@rate_constant_unit", "(1/k_TST + 1/k_capture)^-1, the two bottlenecks in "
                                                     "series, per temperature"),
    ("tst_over_capture", ONE, "k_TST / k_capture, per temperature"),
    ("exceeds_capture", FLAG, "whether k_TST exceeds the capture limit, per temperature"),
], "A rate constant cannot exceed the rate at which its reactants meet; a TST value above it "
   "means the TST bottleneck is not rate-limiting (e.g. a submerged barrier).")

_record("isotopes", "Isotopologues of a study", [
    ("temperature_K", K, "temperatures of the arrays below"),
    ("substitutions", LIST, "one entry per isotope substitution"),
    ("substitutions[].label", TEXT, "name of the substitution in the tables"),
    ("substitutions[].isotope", TEXT, "the isotope (D, 13C, 18O, ...)"),
    ("substitutions[].element", TEXT, "its element"),
    ("substitutions[].mode", TEXT, "all (every atom of the element in every species of a channel), atoms, or "
     "each (one position at a time: see positions)"),
    ("substitutions[].mass_light_amu", "u", "mass of the most common isotope of the element"),
    ("substitutions[].mass_heavy_amu", "u", "mass of the isotope"),
    ("substitutions[].atoms", OBJ, "the atoms substituted per species (mode atoms; empty otherwise)"),
    ("substitutions[].atoms.<species>", ONE, "1-based atom numbers (list)"),
    ("substitutions[].beta", LIST, "beta factors of the minima holding the element (single substitution, trace)"),
    ("substitutions[].beta[].species", TEXT, "species name"),
    ("substitutions[].beta[].thousand_ln_beta_permil", "permil", "1000 ln beta, per temperature"),
    ("substitutions[].beta[].beta", ONE, "the reduced partition-function ratio beta, per temperature"),
    ("substitutions[].beta[].equivalent_positions", ONE, "classes of symmetry-equivalent atoms, 1-based (lists)"),
    ("substitutions[].beta[].thousand_ln_f_by_position_permil", "permil", "1000 ln f of a single substitution "
     "in each class, per temperature (lists)"),
    ("substitutions[].kie", LIST, "one entry per channel the substitution touches"),
    ("substitutions[].kie[].channel", TEXT, "channel name"),
    ("substitutions[].kie[].kie", ONE, "k_light / k_heavy with tunnelling, per temperature"),
    ("substitutions[].kie[].kie_no_tunnelling", ONE, "k_light / k_heavy without tunnelling, per temperature"),
    ("substitutions[].kie[].kinetic_epsilon_permil", "permil", "kinetic fractionation (1/KIE - 1) x 1000"),
    ("substitutions[].kie[].factors", OBJ, "the KIE split into factors whose product is the KIE"),
    ("substitutions[].kie[].factors.translational", ONE, "translational mass term, per temperature"),
    ("substitutions[].kie[].factors.rotational", ONE, "rotational mass (moment) term, per temperature"),
    ("substitutions[].kie[].factors.symmetry", ONE, "ratio of the path degeneracies, per temperature"),
    ("substitutions[].kie[].factors.vibrational_zpe", ONE, "zero-point term exp(-(dE0_light - dE0_heavy)/RT)"),
    ("substitutions[].kie[].factors.vibrational_excited", ONE, "excited-state vibrational term"),
    ("substitutions[].kie[].factors.conformers", ONE, "conformer-ensemble term q_ens/q_lowest, TS over "
     "reactants, light over heavy (1 without ensembles)"),
    ("substitutions[].kie[].factors.tunnelling", ONE, "kappa_light / kappa_heavy"),
    ("substitutions[].kie[].imaginary_frequency_ratio", ONE, "nu_light / nu_heavy of the imaginary mode: the "
     "classical limit of the KIE without tunnelling"),
    ("positions", LIST, "KIEs of single substitutions at each set of equivalent positions (mode each)"),
    ("positions[].label", TEXT, "substitution label"),
    ("positions[].channel", TEXT, "channel name"),
    ("positions[].species", TEXT, "the reactant holding the position"),
    ("positions[].atoms", ONE, "its equivalent atoms, 1-based (list); one carries the isotope"),
    ("positions[].kie", ONE, "k_light / sum of k_heavy over the paths, with tunnelling, per temperature"),
    ("positions[].kie_no_tunnelling", ONE, "the same without tunnelling, per temperature"),
    ("positions[].kinetic_epsilon_permil", "permil", "(1/KIE - 1) x 1000, per temperature"),
    ("positions[].paths", LIST, "one entry per distinct transition-state position of the substituted atom"),
    ("positions[].paths[].transition_state_atom", ONE, "the atom of the transition state, 1-based"),
    ("positions[].paths[].kie", ONE, "k_light / k_heavy of this path alone, per temperature"),
    ("positions[].paths[].kie_no_tunnelling", ONE, "the same without tunnelling"),
    ("positions[].paths[].factors", OBJ, "the path's KIE split into factors (as substitutions[].kie[].factors)"),
    ("positions[].paths[].factors.translational", ONE, "translational mass term"),
    ("positions[].paths[].factors.rotational", ONE, "rotational mass term"),
    ("positions[].paths[].factors.symmetry", ONE, "path-degeneracy term"),
    ("positions[].paths[].factors.vibrational_zpe", ONE, "zero-point term"),
    ("positions[].paths[].factors.vibrational_excited", ONE, "excited-state vibrational term"),
    ("positions[].paths[].factors.tunnelling", ONE, "tunnelling term"),
    ("positions[].paths[].factors.conformers", ONE, "conformer-ensemble term (1 without ensembles)"),
    ("positions[].paths[].imaginary_frequency_ratio", ONE, "nu_light / nu_heavy of the imaginary mode"),
    ("fractionation", LIST, "equilibrium fractionation of the study's species pairs"),
    ("fractionation[].isotope", TEXT, "substitution label"),
    ("fractionation[].species_a", TEXT, "species A"),
    ("fractionation[].species_b", TEXT, "species B"),
    ("fractionation[].alpha", ONE, "alpha = beta_A / beta_B, per temperature"),
    ("fractionation[].epsilon_permil", "permil", "(alpha - 1) x 1000, per temperature"),
    ("three_isotope", LIST, "three-isotope exponents of pairs of substitutions of one element"),
    ("three_isotope[].element", TEXT, "the element"),
    ("three_isotope[].isotopes", TEXT, "the lighter and the heavier substitution (list)"),
    ("three_isotope[].kind", TEXT, "equilibrium (beta or fractionation pair) or kinetic (channel)"),
    ("three_isotope[].name", TEXT, "species, pair A/B or channel"),
    ("three_isotope[].theta", ONE, "ln alpha(lighter) / ln alpha(heavier), per temperature"),
    ("three_isotope[].references", OBJ, "mass-dependent reference values of theta"),
    ("three_isotope[].references.m1_amu", "u", "mass of the reference (light) isotope"),
    ("three_isotope[].references.m2_amu", "u", "mass of the lighter substituted isotope"),
    ("three_isotope[].references.m3_amu", "u", "mass of the heavier substituted isotope"),
    ("three_isotope[].references.equilibrium_high_temperature_limit", ONE, "(1/m1-1/m2)/(1/m1-1/m3)"),
    ("three_isotope[].references.equilibrium_low_temperature_limit", ONE,
     "(1/sqrt m1-1/sqrt m2)/(1/sqrt m1-1/sqrt m3)"),
    ("three_isotope[].references.kinetic_classical_limit", ONE, "ln(m1/m2)/ln(m1/m3)"),
    ("route_mix", LIST, "effective KIE of each comparison's route mix, per isotope and abundance (with "
     "[[comparison]] in a tstrate run)"),
    ("route_mix[].isotope", TEXT, "substitution label"),
    ("route_mix[].comparison", TEXT, "name of the [[comparison]]"),
    ("route_mix[].abundance", TEXT, "the catalyst abundance in words"),
    ("route_mix[].temperature_K", K, "the comparison's temperatures"),
    ("route_mix[].kie", ONE, "1 / sum_r (w_r / KIE_r), per temperature"),
    ("route_mix[].kinetic_epsilon_permil", "permil", "(1/KIE - 1) x 1000 of the mix"),
    ("route_mix[].loss_share", LIST, "share w_r of each route in the loss of the substrate"),
    ("route_mix[].loss_share[].channel", TEXT, "channel of the route"),
    ("route_mix[].loss_share[].share", ONE, "its share, per temperature"),
    ("mass_dependence", TEXT, "the statement on mass dependence of harmonic TST/RRHO and what it leaves out"),
], "Harmonic TST and RRHO on one Born-Oppenheimer surface; isotopologue frequencies from the Hessians.")
_record("uncertainty_ranking", "One row of a \"what matters most\" table", [
    ("factor", TEXT, "an independent uncertain factor (one sigma)"),
    ("contribution", ONE, "d ln(result) / d factor at the reference temperature: its first-order one-sigma "
                          "effect on ln(result)"),
    ("share_percent", PCT, "its share of the first-order variance of ln(result)"),
], "Rows are ranked by share, largest first.")

_record("uncertainty_fraction", "Band of an energised-molecule fraction", [
    ("fraction", ONE, "the deterministic fraction reacting (on the grid of the excitation record)"),
    ("fraction_percentiles", ONE, "the fraction at each of percentiles_percent, then over the grid"),
    ("ranking", LIST, "what matters most, at the grid point of the largest fraction (or the middle temperature)"),
    ("ranking[]", OBJ, "one factor", "uncertainty_ranking"),
])

_record("uncertainty_results", "Uncertainty and sensitivity of the results", [
    ("samples", ONE, "number of quasi-Monte Carlo samples"),
    ("seed", ONE, "seed of the sampling"),
    ("sampling", TEXT, "sobol or latin-hypercube"),
    ("percentiles_percent", PCT, "the percentiles of every *_percentiles array (its first index)"),
    ("inputs", LIST, "the uncertain inputs"),
    ("inputs[].name", TEXT, "the input"),
    ("inputs[].kind", TEXT, "energy, frequency_scale, imaginary_frequency, delta_E_down, lennard_jones_sigma, "
                            "lennard_jones_epsilon or catalyst_abundance"),
    ("inputs[].target", TEXT, "species or comparison it belongs to (null for study parameters)"),
    ("inputs[].sigma_kJ_per_mol", KJ, "one sigma of an energy (null for the others)"),
    ("inputs[].sigma_ln", ONE, "one sigma of ln of the input (null for energies)"),
    ("inputs[].source", TEXT, "where the sigma comes from (study file, or a method default: common practice)"),
    ("factors", TEXT, "the independent factors the inputs are built from (list)"),
    ("channels", LIST, "one entry per channel"),
    ("channels[].name", TEXT, "channel name"),
    ("channels[].temperature_K", K, "the temperatures"),
    ("channels[].rate_constant_unit", TEXT, "unit of the rate constants of the entry"),
    ("channels[].rate_constant", "@rate_constant_unit", "the deterministic k(T)"),
    ("channels[].rate_constant_percentiles", "@rate_constant_unit", "k at each of percentiles_percent, then per T"),
    ("channels[].uncertainty_factor", ONE, "f(T) = exp((q84 - q16)/2) of ln k: k/f .. k f holds 68 % of the samples"),
    ("channels[].f298", ONE, "f(298 K) of the evaluation form f(T) = f298 exp|g (1/T - 1/298 K)| fitted to f(T)"),
    ("channels[].g_K", K, "g of the evaluation form"),
    ("channels[].evaluation_max_deviation_percent", PCT, "largest deviation of the evaluation form from f(T)"),
    ("channels[].valid_samples_percent", PCT, "share of the samples whose barriers the tunnelling model accepts"),
    ("channels[].Kc_uncertainty_factor", ONE, "f(T) of the equilibrium constant"),
    ("channels[].modified_arrhenius_percentiles", OBJ, "A (T/T0)^n exp(-Ea/RT) fitted to each sample, "
                                                       "percentiles of each parameter"),
    ("channels[].modified_arrhenius_percentiles.A", "@A_unit", "pre-exponential factor"),
    ("channels[].modified_arrhenius_percentiles.A_unit", TEXT, "its unit"),
    ("channels[].modified_arrhenius_percentiles.n", ONE, "temperature exponent"),
    ("channels[].modified_arrhenius_percentiles.Ea_kJ_per_mol", KJ, "activation energy"),
    ("channels[].modified_arrhenius_percentiles.T0_K", K, "reference temperature"),
    ("channels[].reference_temperature_K", K, "temperature of the ranking (middle of the grid in 1/T)"),
    ("channels[].ranking", LIST, "what matters most for k"),
    ("channels[].ranking[]", OBJ, "one factor", "uncertainty_ranking"),
    ("channels[].sensitivities", LIST, "local sensitivities, one per input"),
    ("channels[].sensitivities[].input", TEXT, "the input"),
    ("channels[].sensitivities[].sensitivity", "@sensitivity_unit", "d ln k / d input per temperature (per kJ/mol "
                                                                    "for energies, d ln k / d ln x otherwise)"),
    ("channels[].sensitivities[].sensitivity_unit", TEXT, "mol kJ-1 or 1"),
    ("comparisons", LIST, "one entry per comparison"),
    ("comparisons[].name", TEXT, "comparison name"),
    ("comparisons[].temperature_K", K, "its temperatures"),
    ("comparisons[].abundance_labels", TEXT, "its abundances (list)"),
    ("comparisons[].routes", LIST, "one entry per assisted route"),
    ("comparisons[].routes[].channel", TEXT, "the route's channel"),
    ("comparisons[].routes[].kind", TEXT, "route kind"),
    ("comparisons[].routes[].ratio_to_bare", ONE, "deterministic k'(route)/k'(bare), per abundance then T"),
    ("comparisons[].routes[].ratio_percentiles", ONE, "the ratio at each of percentiles_percent, per abundance "
                                                      "then T"),
    ("comparisons[].routes[].ratio_uncertainty_factor", ONE, "f of the ratio, per abundance then T"),
    ("comparisons[].routes[].reference_temperature_K", K, "temperature of the rankings"),
    ("comparisons[].routes[].ratio_ranking", LIST, "what matters most for the ratio (first abundance)"),
    ("comparisons[].routes[].ratio_ranking[]", OBJ, "one factor", "uncertainty_ranking"),
    ("comparisons[].routes[].crossover", OBJ, "the crossover abundance (null for routes without catalyst)"),
    ("comparisons[].routes[].crossover.catalyst_per_cm3", PER_CM3, "deterministic crossover abundance per T"),
    ("comparisons[].routes[].crossover.catalyst_percentiles_per_cm3", PER_CM3, "at each of percentiles_percent"),
    ("comparisons[].routes[].crossover.uncertainty_factor", ONE, "f of the crossover abundance per T"),
    ("comparisons[].routes[].crossover.ranking", LIST, "what matters most for it"),
    ("comparisons[].routes[].crossover.ranking[]", OBJ, "one factor", "uncertainty_ranking"),
    ("falloff", LIST, "one entry per falloff channel"),
    ("falloff[].name", TEXT, "channel name"),
    ("falloff[].temperature_K", K, "the temperatures"),
    ("falloff[].pressure_bar", BAR, "the pressures (null with number densities)"),
    ("falloff[].rate_constant_per_s", PER_S, "deterministic k(T, p)"),
    ("falloff[].rate_constant_percentiles_per_s", PER_S, "k(T, p) at each of percentiles_percent"),
    ("falloff[].uncertainty_factor", ONE, "f of k(T, p)"),
    ("falloff[].f298", ONE, "f298 of the evaluation form at each pressure"),
    ("falloff[].g_K", K, "g of the evaluation form at each pressure"),
    ("falloff[].method", TEXT, "how the falloff was propagated"),
    ("falloff[].reference_temperature_K", K, "temperature of the ranking"),
    ("falloff[].ranking", LIST, "what matters most for k(T, p) at the lowest pressure"),
    ("falloff[].ranking[]", OBJ, "one factor", "uncertainty_ranking"),
    ("excitations", LIST, "one entry per excitation"),
    ("excitations[].name", TEXT, "excitation name"),
    ("excitations[].method", TEXT, "how the fractions were propagated"),
    ("excitations[].pressure_stern_volmer", OBJ, "Stern-Volmer fraction on the pressure scan (or null)",
     "uncertainty_fraction"),
    ("excitations[].pressure_stepwise", OBJ, "stepwise fraction on the pressure scan (or null)",
     "uncertainty_fraction"),
    ("excitations[].profile_stern_volmer", OBJ, "Stern-Volmer fraction along the profile (or null)",
     "uncertainty_fraction"),
    ("excitations[].profile_stepwise", OBJ, "stepwise fraction along the profile (or null)", "uncertainty_fraction"),
    ("excitations[].altitude_km", "km", "altitudes of the profile (or null)"),
    ("warnings", TEXT, "warnings of the uncertainty step (list)"),
], "Only when the study has an [uncertainty] section (and `run` is not false). The deterministic numbers "
   "elsewhere in the file are unchanged.")

_record("evaluation_parameters", "Parameters of an evaluation form", [
    ("A", "@A_unit", "A of k = A (T/T0)^n exp(-(E/R)/T) (arrhenius)"),
    ("A_unit", TEXT, "unit of A (the channel's order)"),
    ("E_over_R_K", K, "E/R (arrhenius)"),
    ("temperature_exponent", ONE, "n of (T/T0)^n (arrhenius; 0 for the fitted form)"),
    ("T0_K", K, "T0 of (T/T0)^n (arrhenius)"),
    ("k0_300K", "@k0_unit", "prefactor of k0 = k0_300K (T/300)^-n exp(-k0_E_over_R_K/T), without [M] (falloff "
                            "forms): k0 at 300 K when k0_E_over_R_K = 0"),
    ("k0_unit", TEXT, "unit of k0 (one order above the channel)"),
    ("n", ONE, "k0 ~ (T/300)^-n (falloff forms)"),
    ("kinf_300K", "@kinf_unit", "prefactor of k_inf = kinf_300K (T/300)^-m exp(-kinf_E_over_R_K/T) (falloff "
                                "forms): k_inf at 300 K when kinf_E_over_R_K = 0"),
    ("kinf_unit", TEXT, "unit of k_inf"),
    ("m", ONE, "k_inf ~ (T/300)^-m (falloff forms)"),
    ("Fc", ONE, "broadening factor F_c (0.6 for jpl_falloff)"),
    ("N", ONE, "width N of the IUPAC form (0.75 - 1.27 log10 F_c unless given)"),
    ("k0_E_over_R_K", K, "E/R of exp(-E/RT) in k0 (iupac_falloff)"),
    ("kinf_E_over_R_K", K, "E/R of exp(-E/RT) in k_inf (iupac_falloff)"),
], "Keys by form: arrhenius A, A_unit, E_over_R_K, temperature_exponent, T0_K; jpl_falloff k0_300K, k0_unit, n, "
   "kinf_300K, kinf_unit, m, Fc; iupac_falloff those and N, k0_E_over_R_K, kinf_E_over_R_K.")

_record("reference_comparison", "A reference expression against the computed rate constants", [
    ("channel", TEXT, "the channel"),
    ("label", TEXT, "the reference's name"),
    ("source", TEXT, "where it comes from"),
    ("kind", TEXT, "evaluated or measured"),
    ("form", TEXT, "arrhenius, jpl_falloff or iupac_falloff"),
    ("", OBJ, "its parameters", "evaluation_parameters"),
    ("temperature_range_K", K, "its range of validity [lowest, highest]"),
    ("pressure_range_bar", BAR, "its pressure range (null: any)"),
    ("bath_gas", TEXT, "its collision partner (null when not given)"),
    ("rate_constant_unit", TEXT, "unit of the k columns of the ratios (the channel's order)"),
    ("ratio_min", ONE, "smallest computed / reference over the overlap (null without overlap)"),
    ("ratio_max", ONE, "largest computed / reference"),
    ("ratios", LIST, "one entry per grid point inside the reference's range"),
    ("ratios[].quantity", TEXT, "k (arrhenius reference against TST k), k_inf (falloff reference's limit against "
                                "TST k) or k(T, p) (against the computed falloff)"),
    ("ratios[].temperature_K", K, "temperature"),
    ("ratios[].pressure_bar", BAR, "pressure (k(T, p) rows of pressure studies, else null)"),
    ("ratios[].number_density_per_cm3", PER_CM3, "[M] (k(T, p) rows, else null)"),
    ("ratios[].k_computed", "@../rate_constant_unit", "computed k"),
    ("ratios[].k_reference", "@../rate_constant_unit", "the reference's k"),
    ("ratios[].ratio_computed_to_reference", ONE, "computed / reference"),
    ("note", TEXT, "why there is no or only a partial comparison (null otherwise)"),
])

_EVAL_FORMS = Document("evaluation_forms.json", "results-json.md", """\
The computed rate constants in the forms data evaluations publish: A and E/R of every channel, and
for falloff channels the NASA/JPL termolecular form (F_c = 0.6) and the IUPAC form (k0, k_inf, F_c),
with their fit ranges and the deviations measured on the study grid and between its points; with
[uncertainty], the pair f(298 K) and g of the uncertainty step.""", _keys(
    ("tolerance_percent", PCT, "the study's max_deviation_percent"),
    ("forms", OBJ, "the formula of each form"),
    ("forms.arrhenius", TEXT, "the Arrhenius form"),
    ("forms.jpl_falloff", TEXT, "the NASA/JPL termolecular form"),
    ("forms.iupac_falloff", TEXT, "the IUPAC form"),
    ("rows", LIST, "one entry per channel and form"),
    ("rows[].channel", TEXT, "channel name"),
    ("rows[].form", TEXT, "arrhenius, jpl_falloff or iupac_falloff"),
    ("rows[].order", ONE, "reaction order of the channel"),
    ("rows[]", OBJ, "the parameters", "evaluation_parameters"),
    ("rows[].temperature_range_K", K, "fitted temperatures [lowest, highest]"),
    ("rows[].pressure_range_bar", BAR, "fitted pressures (falloff forms of pressure studies, else null)"),
    ("rows[].number_density_range_per_cm3", PER_CM3, "fitted [M] (falloff forms, else null)"),
    ("rows[].bath_gas", TEXT, "collision partner (falloff forms, else null)"),
    ("rows[].max_deviation_percent", PCT, "largest |k_form/k - 1| on the grid and between its points"),
    ("rows[].rms_deviation_percent", PCT, "root mean square of the same"),
    ("rows[].k0_max_deviation_percent", PCT, "largest deviation of the form's k0 from the computed one (falloff "
                                             "forms; for Eckart channels the effective k0 of the Troe fit)"),
    ("rows[].kinf_max_deviation_percent", PCT, "the same for k_inf"),
    ("rows[].within_tolerance", FLAG, "max_deviation_percent within tolerance_percent"),
    ("rows[].n_points", ONE, "points fitted"),
    ("rows[].n_check_points", ONE, "further points between them in the deviation"),
    ("rows[].f298", ONE, "f(298 K) of the uncertainty step's f(T) = f298 exp|g (1/T - 1/298 K)| (null without "
                         "[uncertainty]; falloff forms: at uncertainty_pressure_bar)"),
    ("rows[].g_K", K, "g of the same pair"),
    ("rows[].uncertainty_pressure_bar", BAR, "the pressure of the falloff pair (nearest 1 bar), else null"),
    ("rows[].notes", TEXT, "plain statements about the fit (list)"),
))

_EVAL_CSV = Document("tables/evaluation_forms.csv", "csv-tables.md", """\
The rows of evaluation_forms.json, one per channel and form; columns that do not apply to a form
are empty.""", _keys(
    ("channel", TEXT, "channel name"),
    ("form", TEXT, "arrhenius, jpl_falloff or iupac_falloff"),
    ("Tmin", K, "lowest fitted temperature"),
    ("Tmax", K, "highest fitted temperature"),
    ("pmin", BAR, "lowest fitted pressure"),
    ("pmax", BAR, "highest fitted pressure"),
    ("bath gas", TEXT, "collision partner"),
    ("A", "@A unit", "A (arrhenius)"),
    ("A unit", TEXT, "unit of A"),
    ("E/R", K, "E/R (arrhenius)"),
    ("k0(300 K)", "@k0 unit", "k0 at 300 K"),
    ("k0 unit", TEXT, "unit of k0"),
    ("n", ONE, "k0 ~ (T/300)^-n"),
    ("kinf(300 K)", "@kinf unit", "k_inf at 300 K"),
    ("kinf unit", TEXT, "unit of k_inf"),
    ("m", ONE, "k_inf ~ (T/300)^-m"),
    ("Fc", ONE, "broadening factor"),
    ("N", ONE, "IUPAC width"),
    ("k0 E/R", K, "E/R in k0 (IUPAC)"),
    ("kinf E/R", K, "E/R in k_inf (IUPAC)"),
    ("max deviation", PCT, "largest deviation"),
    ("rms deviation", PCT, "rms deviation"),
    ("k0 max deviation", PCT, "largest deviation of k0"),
    ("kinf max deviation", PCT, "largest deviation of k_inf"),
    ("points", ONE, "points fitted"),
    ("check points", ONE, "points between them"),
    ("f298", ONE, "f(298 K) of the uncertainty step"),
    ("g", K, "g of the uncertainty step"),
    ("uncertainty pressure", BAR, "pressure of the falloff pair"),
), "csv")

_REF_CSV = Document("tables/reference_ratios.csv", "csv-tables.md", """\
Computed against reference rate expressions ([[reference_rate]]), one row per reference and grid
point inside its range (only with references).""", _keys(
    ("reference", TEXT, "the reference's label"),
    ("channel", TEXT, "channel"),
    ("kind", TEXT, "evaluated or measured"),
    ("quantity", TEXT, "k, k_inf or k(T, p)"),
    ("T", K, "temperature"),
    ("p", BAR, "pressure (k(T, p) rows of pressure studies)"),
    ("number density", PER_CM3, "[M] (k(T, p) rows)"),
    ("k computed", "@k unit", "computed k"),
    ("k reference", "@k unit", "the reference's k"),
    ("k unit", TEXT, "unit of the k columns"),
    ("computed / reference", ONE, "the ratio"),
), "csv")

_RESULTS = Document("results.json", "results-json.md", """\
Every number `tstrate run` computed, in one JSON document. The sections `comparisons`,
`falloff` and `excitations` appear only when the study asks for them.""", _keys(
    ("study", TEXT, "the study file"),
    ("title", TEXT, "the study's title"),
    ("low_modes", OBJ, "treatment of low modes", "low_modes"),
    ("conventions", OBJ, "standard pressure, masses, symmetry tolerance, optical isomers", "conventions"),
    ("thermochemistry", LIST, "one entry per species"),
    ("thermochemistry[]", OBJ, "one species", "thermo"),
    ("channels", LIST, "one entry per [[channel]]"),
    ("channels[]", OBJ, "one channel", "channel_rates"),
    ("capture_limits", LIST, "one entry per bimolecular channel"),
    ("capture_limits[]", OBJ, "one channel", "capture_limit"),
    ("warnings", TEXT, "warnings of the run (list)"),
    ("comparisons", LIST, "one entry per comparison and abundance"),
    ("comparisons[]", OBJ, "one scenario", "scenario"),
    ("falloff", OBJ, "pressure dependence of the unimolecular channels", "falloff_study"),
    ("excitations", LIST, "one entry per [[excitation]]"),
    ("excitations[]", OBJ, "one excitation", "excitation"),
    ("isotopes", OBJ, "isotopologues (only with an [isotopes] section)", "isotopes"),
    ("uncertainty", OBJ, "how sure each number is (only with [uncertainty])", "uncertainty_results"),
    ("references", LIST, "one entry per [[reference_rate]] of the study (only with them)"),
    ("references[]", OBJ, "one reference expression and its ratios", "reference_comparison"),
    ("conformers", LIST, "one entry per conformer ensemble (only when the study has one)"),
    ("conformers[]", OBJ, "one ensemble", "conformer_ensemble"),
    ("conformer_effects", LIST, "one entry per channel that uses a conformer ensemble (only with ensembles)"),
    ("conformer_effects[].channel", TEXT, "channel name"),
    ("conformer_effects[].ensembles", TEXT, "the ensembles the channel uses (list)"),
    ("conformer_effects[].temperature_K", K, "temperatures of the ratios"),
    ("conformer_effects[].rate_constant_ratio", ONE, "k with the ensembles over k with each ensemble's "
     "lowest conformer alone, per temperature"),
    ("conformer_effects[].Kc_ratio", ONE, "the same for the equilibrium constant, per temperature"),
))

_INPUTS = Document("inputs.json", "results-json.md", """\
The input files of the run (the study file and every species file it names), each with the
SHA-256 hash of its content when the run read it.""", _keys(
    ("inputs", LIST, "one entry per input file"),
    ("inputs[].file", TEXT, "path of the file"),
    ("inputs[].sha256", TEXT, "SHA-256 of its bytes, hexadecimal"),
))

_FITS = Document("fits.json", "fits-json.md", """\
The fitted expressions of a run: per channel Arrhenius and modified Arrhenius forms, split
temperature ranges, Chebyshev series, Troe falloff, and per species NASA polynomials, each
with its range and its deviation from what it was fitted to.""", _keys(
    ("study", TEXT, "the study file"),
    ("title", TEXT, "the study's title"),
    ("created_utc", TEXT, "time of writing, ISO 8601, UTC"),
    ("tstrate_version", TEXT, "version of tstrate"),
    ("caution", TEXT, "what the numbers are"),
    ("low_modes", OBJ, "treatment of low modes", "low_modes"),
    ("fitted_temperatures_K", K, "the temperatures the rate constants were computed and fitted at"),
    ("enthalpy_zero", OBJ, "the zero of the exported enthalpies"),
    ("enthalpy_zero.description", TEXT, "how the exported enthalpies are built"),
    ("enthalpy_zero.element_offsets_kJ_per_mol", OBJ, "offset c_j per element"),
    ("enthalpy_zero.element_offsets_kJ_per_mol.<element>", KJ, "offset per atom of the element"),
    ("standard_state", TEXT, "standard states"),
    ("bath_gas", TEXT, "bath gas of the falloff (or null)"),
    ("species", LIST, "one entry per exported species"),
    ("species[].name", TEXT, "species name"),
    ("species[].formula", TEXT, "chemical formula"),
    ("species[].composition", OBJ, "atoms per element"),
    ("species[].composition.<element>", ONE, "number of atoms of the element"),
    ("species[].role", TEXT, "reactant/product, complex or bath gas"),
    ("species[].source", TEXT, "species file or reference data it comes from"),
    ("species[].electronic_energy_kJ_per_mol", KJ, "electronic energy on the study's scale"),
    ("species[].zpe_kJ_per_mol", KJ, "harmonic zero-point energy"),
    ("species[].enthalpy_offset_kJ_per_mol", KJ, "sum_j n_j c_j subtracted from E + ZPE"),
    ("species[].H0K_exported_kJ_per_mol", KJ, "exported H(0 K) = E + ZPE - offset"),
    ("species[].H298_exported_kJ_per_mol", KJ, "exported H(298.15 K) from the polynomials (null outside "
                                              "their range)"),
    ("species[].nasa7", OBJ, "the polynomials", "nasa7"),
    ("species[].nasa7_deviations_at_fitted_temperatures", OBJ, "deviations of the polynomials at "
                                                               "fitted_temperatures_K (or null)"),
    ("species[].nasa7_deviations_at_fitted_temperatures.max_deviation_cp_percent", PCT, "largest relative deviation of Cp"),
    ("species[].nasa7_deviations_at_fitted_temperatures.max_deviation_h_percent", PCT, "largest deviation of H "
                                                                                      "relative to max(|H|, RT)"),
    ("species[].nasa7_deviations_at_fitted_temperatures.max_deviation_s_percent", PCT, "largest relative deviation of S"),
    ("species[].note", TEXT, "a remark, or null"),
    ("channels", LIST, "one entry per channel"),
    ("channels[].name", TEXT, "channel name"),
    ("channels[].equation", TEXT, "the reaction"),
    ("channels[].reactants", TEXT, "reactant species (list)"),
    ("channels[].products", TEXT, "product species (list)"),
    ("channels[].order", ONE, "forward reaction order"),
    ("channels[].reverse_order", ONE, "reverse reaction order"),
    ("channels[].fitted_temperature_range_K", K, "lowest and highest fitted temperature"),
    ("channels[].fitted_temperatures_K", K, "the fitted temperatures"),
    ("channels[].rate_constant_data_SI", "@rate_constant_data_SI_unit", "the rate constants fitted, per temperature"),
    ("channels[].rate_constant_data_SI_unit", TEXT, "their unit (SI per molecule)"),
    ("channels[].includes_tunnelling", FLAG, "whether the channel's rate constants include tunnelling"),
    ("channels[].tunnelling", TEXT, "the channel's tunnelling model"),
    ("channels[].method", TEXT, "how the exported rates were computed"),
    ("channels[].arrhenius", OBJ, "two-parameter Arrhenius fit", "arrhenius"),
    ("channels[].modified_arrhenius", OBJ, "three-parameter (modified) Arrhenius fit", "arrhenius"),
    ("channels[].split", OBJ, "fits over two temperature ranges (or null)"),
    ("channels[].split.break_K", K, "temperature where the ranges meet"),
    ("channels[].split.jump_at_break_percent", PCT, "relative jump of k between the two fits at the break"),
    ("channels[].split.max_deviation_percent", PCT, "largest deviation of the pair"),
    ("channels[].split.low", OBJ, "fit below the break", "arrhenius"),
    ("channels[].split.high", OBJ, "fit above the break", "arrhenius"),
    ("channels[].chebyshev", OBJ, "the exported Chebyshev fit of k(T) (or null)", "chebyshev"),
    ("channels[].chebyshev_falloff", OBJ, "the exported Chebyshev fit of k(T, p) (or null)", "chebyshev"),
    ("channels[].pressure_table", OBJ, "modified Arrhenius expressions at each pressure of a falloff "
                                       "channel (or null)", "pressure_table"),
    ("channels[].mechanism_expression", TEXT, "the kind of expression mechanism.yaml holds (as mechanism.kind)"),
    ("channels[].mechanism", OBJ, "what mechanism.yaml holds and its measured deviation", "exported"),
    ("channels[].Kc_check_max_abs_ln_difference", ONE, "largest |ln Kc(NASA) - ln Kc(tstrate)| over the "
                                                       "fitted temperatures"),
    ("channels[].falloff_troe", OBJ, "Troe falloff (or null)", "troe_fit"),
    ("channels[].warnings", TEXT, "warnings of the channel's fits (list)"),
    ("tolerance_percent", PCT, "the study's max_deviation_percent"),
    ("tolerance_missed", TEXT, "channels whose exported expression misses it (list)"),
    ("warnings", TEXT, "all warnings of the fits (list)"),
    ("fits_at_each_pressure", OBJ, "modified Arrhenius fits of k(T) at each pressure of a falloff channel "
                                   "(only with falloff)"),
    ("fits_at_each_pressure.<channel>[]", OBJ, "one fit per pressure", "arrhenius"),
    ("fits_at_each_pressure.<channel>[].pressure_bar", BAR, "the pressure (null for number densities)"),
    ("fits_at_each_pressure.<channel>[].number_density_at_highest_T_per_cm3", PER_CM3,
     "bath-gas number density at the highest temperature"),
    ("uncertainty", OBJ, "uncertainty factors of the fitted rate constants (only with [uncertainty])"),
    ("uncertainty.samples", ONE, "number of samples"),
    ("uncertainty.seed", ONE, "seed of the sampling"),
    ("uncertainty.form", TEXT, "the evaluation form of f(T)"),
    ("uncertainty.channels", LIST, "one entry per channel"),
    ("uncertainty.channels[].name", TEXT, "channel name"),
    ("uncertainty.channels[].f298", ONE, "f(298 K) of f(T) = f298 exp|g (1/T - 1/298 K)| (JPL Publication 19-5)"),
    ("uncertainty.channels[].g_K", K, "g of the same form"),
    ("uncertainty.channels[].max_deviation_percent", PCT, "largest deviation of the form from the sampled f(T)"),
    ("uncertainty.channels[].uncertainty_factor", ONE, "the sampled one-sigma factor f(T)"),
    ("uncertainty.channels[].temperature_K", K, "its temperatures"),
    ("uncertainty.falloff", LIST, "one entry per falloff channel"),
    ("uncertainty.falloff[].name", TEXT, "channel name"),
    ("uncertainty.falloff[].pressure_bar", BAR, "the pressures (null with number densities)"),
    ("uncertainty.falloff[].f298", ONE, "f298 at each pressure"),
    ("uncertainty.falloff[].g_K", K, "g at each pressure"),
))

_FITS_CSV = Document("fits.csv", "csv-tables.md", """\
One row per channel and fitted expression (Arrhenius, modified Arrhenius, split ranges, Troe
limits, Chebyshev k(T) and k(T, p)). Chebyshev rows leave the Arrhenius columns empty.""", _keys(
    ("channel", TEXT, "channel name"),
    ("expression", TEXT, "arrhenius, modified_arrhenius, troe_k0, troe_kinf, chebyshev or chebyshev_falloff"),
    ("range", TEXT, "all, T <= break, T >= break, the Troe limit, or the Chebyshev ranges"),
    ("order", ONE, "reaction order"),
    ("A", "@A unit", "pre-exponential factor"),
    ("A unit", TEXT, "unit of A (for Chebyshev rows: of the k the coefficients are for)"),
    ("n", ONE, "temperature exponent"),
    ("T0", K, "reference temperature"),
    ("Ea", KJ, "activation energy"),
    ("Ea/R", K, "activation energy over R"),
    ("Tmin", K, "lowest fitted temperature"),
    ("Tmax", K, "highest fitted temperature"),
    ("max deviation", PCT, "largest deviation from the fitted k"),
    ("rms deviation", PCT, "rms deviation"),
    ("Pmin", BAR, "lower end of the Chebyshev pressure range"),
    ("Pmax", BAR, "upper end of the Chebyshev pressure range"),
    ("Chebyshev coefficients", ONE, "coefficient matrix of log10 k (k in A unit) as a JSON list of rows; "
                                    "rows 1/T terms, columns log P terms"),
), "csv")

_THERMO_CSV = Document("tables/thermochemistry.csv", "csv-tables.md", """\
One row per species and temperature, 1 bar standard state. H(T) and G(T) include the
electronic energy and the zero-point energy (empty without an electronic energy).""", _keys(
    ("species", TEXT, "species name"),
    ("T", K, "temperature"),
    ("Cp", JK, "heat capacity"),
    ("S", JK, "entropy"),
    ("H(T)-H(0)", KJ, "enthalpy increment"),
    ("G(T)-H(0)", KJ, "Gibbs energy increment"),
    ("ZPE", KJ, "zero-point energy"),
    ("E_electronic", KJ, "electronic energy"),
    ("H(T)", KJ, "enthalpy E + ZPE + H(T) - H(0)"),
    ("G(T)", KJ, "Gibbs energy"),
    ("p_standard", BAR, "standard pressure"),
), "csv")

_RATES_CSV = Document("tables/rates_<channel>.csv", "csv-tables.md", """\
One table per channel, one row per temperature (the numbers of results.json channels[]).""", _keys(
    ("channel", TEXT, "channel name"),
    ("T", K, "temperature"),
    ("k", "<rate-constant unit of the order>", "forward rate constant, tunnelling included"),
    ("k_no_tunnelling", "<rate-constant unit of the order>", "forward rate constant without tunnelling"),
    ("kappa", ONE, "tunnelling factor"),
    ("k_reverse", "<rate-constant unit of the reverse order>", "reverse rate constant"),
    ("Kc", "<(molecule cm-3)^dn>", "equilibrium constant in concentration units"),
    ("Kp(1 bar)", ONE, "dimensionless equilibrium constant, 1 bar standard state"),
    ("dH_activation", KJ, "activation enthalpy"),
    ("dS_activation", JK, "activation entropy, 1 bar"),
    ("dG_activation", KJ, "activation Gibbs energy, 1 bar"),
    ("kappa_other_floor", ONE, "tunnelling factor with the other floor choice, for channels through a complex "
                               "(empty otherwise; see results.json channels[].other_tunnelling_floor)"),
), "csv")

_PFITS_CSV = Document("tables/fits_at_each_pressure.csv", "csv-tables.md", """\
Modified Arrhenius fits of k(T) at each tabulated pressure of the falloff channels (only
with falloff; the same fits as fits.json fits_at_each_pressure).""", _keys(
    ("channel", TEXT, "channel name"),
    ("pressure", BAR, "pressure (empty for number densities)"),
    ("A", PER_S, "pre-exponential factor"),
    ("n", ONE, "temperature exponent"),
    ("T0", K, "reference temperature"),
    ("Ea", KJ, "activation energy"),
    ("Tmin", K, "lowest fitted temperature"),
    ("Tmax", K, "highest fitted temperature"),
    ("max deviation", PCT, "largest deviation from k(T, p)"),
    ("rms deviation", PCT, "rms deviation"),
), "csv")

_CONFORMERS_CSV = Document("tables/conformers.csv", "csv-tables.md", """\
Conformer populations (only when the study has a conformer ensemble): one row per ensemble,
conformer and temperature.""", _keys(
    ("species", TEXT, "the ensemble's name in the study"),
    ("conformer", TEXT, "the conformer's label"),
    ("T", K, "temperature"),
    ("population", ONE, "Boltzmann population in its ensemble, 0 to 1"),
    ("relative E0", KJ, "electronic energy plus ZPE above the ensemble's lowest conformer"),
    ("relative E_electronic", KJ, "electronic energy above the lowest conformer's"),
    ("symmetry number", ONE, "the conformer's rotational symmetry number"),
    ("optical isomers", ONE, "the conformer's number of optical isomers"),
), "csv")

_ASSOC_CSV = Document("tables/association_<name>.csv", "csv-tables.md", """\
One table per barrierless association (only with [[association]]), one row per temperature and
pressure. Rate constants per molecule in fixed units (not `rate_units`).""", _keys(
    ("association", TEXT, "association name"),
    ("T", K, "temperature"),
    ("pressure", BAR, "pressure (empty for number densities)"),
    ("[M]", PER_CM3, "bath-gas number density"),
    ("k", "cm3 molecule-1 s-1", "k(T, p) of A + B -> AB"),
    ("k_inf", "cm3 molecule-1 s-1", "high-pressure limit from the inverse-Laplace k(E) on the grain"),
    ("k0", "cm6 molecule-2 s-1", "low-pressure limit"),
    ("k0_reference", "cm6 molecule-2 s-1", "the evaluated k0 the study gives (empty without one)"),
    ("k0 / k0_reference", ONE, "computed over evaluated k0"),
    ("pressure_method", TEXT, "master_equation or strong_collision"),
    ("adduct_rotation", TEXT, "active, k_active or spectator"),
), "csv")

_ISO_BETA_CSV = Document("tables/isotopes_beta.csv", "csv-tables.md", """\
Beta factors (only with [isotopes]): one row per isotope, species and temperature.""", _keys(
    ("isotope", TEXT, "substitution label"),
    ("species", TEXT, "species name"),
    ("T", K, "temperature"),
    ("1000 ln beta", "permil", "1000 ln of the reduced partition-function ratio"),
    ("beta", ONE, "the reduced partition-function ratio"),
), "csv")

_ISO_KIE_CSV = Document("tables/isotopes_kie.csv", "csv-tables.md", """\
Kinetic isotope effects (only with [isotopes]): one row per isotope, channel and temperature. A
position of mode `each` is one row (`<label>: <species> atom <n>`) and, when equivalent atoms
take different transition-state positions, one row per path (`... via TS atom <n>`, with its
factors; the position's own row has none then).""", _keys(
    ("isotope", TEXT, "substitution label"),
    ("channel", TEXT, "channel name"),
    ("T", K, "temperature"),
    ("KIE", ONE, "k_light / k_heavy with tunnelling"),
    ("KIE no tunnelling", ONE, "k_light / k_heavy without tunnelling"),
    ("kinetic epsilon", "permil", "(1/KIE - 1) x 1000"),
    ("translational", ONE, "translational mass factor"),
    ("rotational", ONE, "rotational mass factor"),
    ("symmetry", ONE, "path-degeneracy factor"),
    ("vibrational_zpe", ONE, "zero-point factor"),
    ("vibrational_excited", ONE, "excited-state vibrational factor"),
    ("conformers", ONE, "conformer-ensemble factor (1 without ensembles)"),
    ("tunnelling", ONE, "tunnelling factor"),
), "csv")

_ISO_FRAC_CSV = Document("tables/isotopes_fractionation.csv", "csv-tables.md", """\
Equilibrium fractionation (only with [isotopes] fractionation pairs).""", _keys(
    ("isotope", TEXT, "substitution label"),
    ("species A", TEXT, "species A"),
    ("species B", TEXT, "species B"),
    ("T", K, "temperature"),
    ("alpha", ONE, "beta_A / beta_B"),
    ("epsilon", "permil", "(alpha - 1) x 1000"),
), "csv")

_ISO_THETA_CSV = Document("tables/isotopes_theta.csv", "csv-tables.md", """\
Three-isotope exponents with their mass-dependent references (only with two substitutions of
one element).""", _keys(
    ("element", TEXT, "the element"),
    ("isotopes", TEXT, "lighter/heavier substitution"),
    ("kind", TEXT, "equilibrium or kinetic"),
    ("of", TEXT, "species, pair or channel"),
    ("T", K, "temperature"),
    ("theta", ONE, "ln alpha(lighter) / ln alpha(heavier)"),
    ("high-T limit", ONE, "(1/m1-1/m2)/(1/m1-1/m3)"),
    ("low-T limit", ONE, "(1/sqrt m1-1/sqrt m2)/(1/sqrt m1-1/sqrt m3)"),
    ("kinetic classical limit", ONE, "ln(m1/m2)/ln(m1/m3)"),
), "csv")

_UNC_CSV = Document("tables/uncertainty.csv", "csv-tables.md", """\
Percentiles and uncertainty factor of k(T), one row per channel and temperature (only with
[uncertainty]; the numbers of results.json uncertainty.channels[]).""", _keys(
    ("channel", TEXT, "channel name"),
    ("T", K, "temperature"),
    ("k", "@k unit", "the deterministic rate constant"),
    ("k unit", TEXT, "unit of the k columns of the row"),
    ("k 2.5 %", "@k unit", "2.5th percentile of k"),
    ("k 16 %", "@k unit", "16th percentile"),
    ("k 50 %", "@k unit", "median"),
    ("k 84 %", "@k unit", "84th percentile"),
    ("k 97.5 %", "@k unit", "97.5th percentile"),
    ("f", ONE, "one-sigma uncertainty factor f(T)"),
    ("f298", ONE, "f(298 K) of the evaluation form fitted to f(T)"),
    ("g", K, "g of the evaluation form"),
), "csv")

_UNC_RANK_CSV = Document("tables/uncertainty_ranking.csv", "csv-tables.md", """\
What matters most: per channel, comparison ratio, crossover abundance and falloff channel, the
independent uncertain factors ranked by their first-order share of the variance of ln(result).""", _keys(
    ("result", TEXT, "the result"),
    ("T", K, "the temperature of the ranking"),
    ("rank", ONE, "1 = matters most"),
    ("factor", TEXT, "the factor"),
    ("contribution", ONE, "d ln(result) / d factor (one sigma of the factor)"),
    ("share", PCT, "share of the first-order variance"),
), "csv")

_MECHANISM = Document("mechanism.yaml", "mechanism.md", """\
A mechanism in Cantera's YAML input format: the species with their fitted NASA polynomials
and one reversible reaction per channel (reverse rate constants follow from the
polynomials). The keys are those of Cantera's format; units follow its `units` block
(molecule, cm, s; activation energies as Ea/R in K), pressures are written with their unit
(Pa). A header comment gives the source study, the caution, the units, the enthalpy zero
(per-element offsets in kJ/mol per atom), renamed species and the fit warnings. Reactions are
`elementary` (fitted Arrhenius form), `falloff` (Troe, with `(+M)`),
`pressure-dependent-Arrhenius` (per-pressure table) or `Chebyshev`: per channel the simplest form
meeting the tolerance, or the study's `mechanism_form`.""", _keys(
    ("generator", TEXT, "tstrate"),
    ("date", TEXT, "time of writing, ISO 8601, UTC"),
    ("units", OBJ, "Cantera's units block"),
    ("units.length", TEXT, "cm"),
    ("units.time", TEXT, "s"),
    ("units.quantity", TEXT, "molec"),
    ("units.activation-energy", TEXT, "K (Ea given as Ea/R)"),
    ("phases", LIST, "one ideal-gas phase"),
    ("phases[].name", TEXT, "phase name (gas)"),
    ("phases[].thermo", TEXT, "ideal-gas"),
    ("phases[].elements", TEXT, "elements (list)"),
    ("phases[].species", TEXT, "species (list)"),
    ("phases[].kinetics", TEXT, "gas"),
    ("phases[].reactions", TEXT, "all"),
    ("phases[].state", OBJ, "initial state"),
    ("phases[].state.T", K, "temperature"),
    ("phases[].state.P", "Pa", "pressure (1 bar)"),
    ("species", LIST, "one entry per exported species"),
    ("species[].name", TEXT, "species name (made safe for Cantera's equations; renamings in the header)"),
    ("species[].composition", OBJ, "atoms per element"),
    ("species[].composition.<element>", ONE, "number of atoms of the element"),
    ("species[].thermo", OBJ, "thermodynamic data"),
    ("species[].thermo.model", TEXT, "NASA7"),
    ("species[].thermo.reference-pressure", "Pa", "standard pressure (1 bar)"),
    ("species[].thermo.temperature-ranges", K, "Tmin, Tmid, Tmax"),
    ("species[].thermo.data", ONE, "coefficients a1..a7 of the low and the high range"),
    ("species[].note", TEXT, "tstrate species, role, source and the largest fit deviations (Cp and S in %, "
                            "H in kJ/mol)"),
    ("reactions", LIST, "one reversible reaction per channel"),
    ("reactions[].equation", TEXT, "the reaction (<=>, with (+M) for falloff)"),
    ("reactions[].type", TEXT, "elementary, falloff, pressure-dependent-Arrhenius or Chebyshev"),
    ("reactions[].rate-constant", OBJ, "Arrhenius parameters of an elementary reaction"),
    ("reactions[].rate-constant.A", "molecule, cm, s (order)", "A of k = A T^b exp(-Ea/RT), T in K"),
    ("reactions[].rate-constant.b", ONE, "temperature exponent"),
    ("reactions[].rate-constant.Ea", K, "Ea / R"),
    ("reactions[].low-P-rate-constant", OBJ, "low-pressure limit of a falloff reaction"),
    ("reactions[].low-P-rate-constant.A", "molecule, cm, s (order + 1)", "A of k0"),
    ("reactions[].low-P-rate-constant.b", ONE, "temperature exponent of k0"),
    ("reactions[].low-P-rate-constant.Ea", K, "Ea / R of k0"),
    ("reactions[].high-P-rate-constant", OBJ, "high-pressure limit of a falloff reaction"),
    ("reactions[].high-P-rate-constant.A", "molecule, cm, s (order)", "A of k_inf"),
    ("reactions[].high-P-rate-constant.b", ONE, "temperature exponent of k_inf"),
    ("reactions[].high-P-rate-constant.Ea", K, "Ea / R of k_inf"),
    ("reactions[].Troe", OBJ, "Troe parameters"),
    ("reactions[].Troe.A", ONE, "Troe a"),
    ("reactions[].Troe.T3", K, "T***"),
    ("reactions[].Troe.T1", K, "T*"),
    ("reactions[].Troe.T2", K, "T** (when given)"),
    ("reactions[].rate-constants", LIST, "per-pressure Arrhenius expressions of a pressure-dependent-Arrhenius "
                                         "reaction"),
    ("reactions[].rate-constants[].P", TEXT, "the pressure with its unit (Pa)"),
    ("reactions[].rate-constants[].A", "molecule, cm, s (order)", "A of k = A T^b exp(-Ea/RT) at that pressure"),
    ("reactions[].rate-constants[].b", ONE, "temperature exponent"),
    ("reactions[].rate-constants[].Ea", K, "Ea / R"),
    ("reactions[].temperature-range", K, "Chebyshev temperature range"),
    ("reactions[].pressure-range", TEXT, "Chebyshev pressure range with its unit (Pa); 1e-30 to 1e30 Pa when "
                                         "k does not depend on pressure"),
    ("reactions[].data", ONE, "Chebyshev coefficients of log10 k (k in the file's units); rows 1/T terms, "
                              "columns log P terms"),
    ("reactions[].duplicate", FLAG, "true for channels with the same stoichiometry and type"),
    ("reactions[].note", TEXT, "channel, how its rates were computed, the form, range and the largest deviation "
                               "in % measured from the file's numbers on the grid and between grid points "
                               "against the tolerance, and plain statements; pressures in bar"),
), "yaml")


def _cmd(name, about, rows) -> Document:
    return Document(f"tstrate {name} --json", "command-json.md", about, _keys(*rows))


_COMMANDS = [
    _cmd("thermo", "Thermochemistry of species files (one entry per file).", [
        ("standard_pressure_bar", BAR, "standard pressure"),
        ("conventions", OBJ, "standard pressure, masses, symmetry tolerance, optical isomers", "conventions"),
        ("low_modes", OBJ, "treatment of low modes", "low_modes"),
        ("species", LIST, "one entry per file"),
        ("species[]", OBJ, "one species", "thermo"),
        ("species[].file", TEXT, "the species file"),
    ]),
    _cmd("rates", "Transition-state-theory rate constants of every channel of a study.", [
        ("study", TEXT, "the study file"),
        ("title", TEXT, "the study's title"),
        ("low_modes", OBJ, "treatment of low modes", "low_modes"),
        ("temperature_K", K, "the temperatures"),
        ("channels", LIST, "one entry per channel"),
        ("channels[]", OBJ, "one channel", "channel_rates"),
        ("plots", TEXT, "plot files written (list)"),
    ]),
    _cmd("tunnel", "Tunnelling factors of one barrier.", [
        ("model", TEXT, "wigner, skodje-truhlar, eckart or all"),
        ("imaginary_frequency_cm1", CM1, "magnitude of the imaginary wavenumber"),
        ("tunnelling_forward_barrier_kJ_per_mol", KJ, "forward barrier (TS above the reactant side)"),
        ("tunnelling_reverse_barrier_kJ_per_mol", KJ, "reverse barrier (TS above the product side)"),
        ("tunnelling_energy_floor_kJ_per_mol", KJ, "start of the energy integral actually used, above the "
                                                   "reactant side"),
        ("temperature_K", K, "the temperatures"),
        ("kappa", ONE, "tunnelling factor per temperature (one model), or an object keyed by model (all)"),
        ("kappa.<model>", ONE, "tunnelling factor of that model per temperature (--model all)"),
    ]),
    _cmd("compare", "Bare against catalysed routes, one entry per comparison and abundance.", [
        ("study", TEXT, "the study file"),
        ("title", TEXT, "the study's title"),
        ("low_modes", OBJ, "treatment of low modes", "low_modes"),
        ("comparisons", LIST, "the scenarios"),
        ("comparisons[]", OBJ, "one scenario", "scenario"),
        ("plots", TEXT, "plot files written (list)"),
    ]),
    _cmd("falloff", "Pressure dependence of a study's unimolecular channels.", [
        ("", "", "", "falloff_study"),
        ("plots", TEXT, "plot files written (list)"),
    ]),
    _cmd("excite", "Energised molecules: k(E) and the fraction reacting before deactivation.", [
        ("study", TEXT, "the study file"),
        ("title", TEXT, "the study's title"),
        ("bath_gas", TEXT, "bath gas"),
        ("excitations", LIST, "one entry per excitation"),
        ("excitations[]", OBJ, "one excitation", "excitation"),
        ("plots", TEXT, "plot files written (list)"),
    ]),
    _cmd("run", "A summary of `tstrate run`: the folder written and what mechanism.yaml holds.", [
        ("study", TEXT, "the study file"),
        ("output_dir", TEXT, "the output folder"),
        ("files", TEXT, "files written (list)"),
        ("channels", LIST, "one entry per channel"),
        ("channels[].name", TEXT, "channel name"),
        ("channels[].mechanism_kind", TEXT, "arrhenius, modified_arrhenius, troe, pressure_table, chebyshev or "
                                            "chebyshev_falloff"),
        ("channels[].method", TEXT, "how the exported rates were computed"),
        ("channels[].tunnelling", TEXT, "the channel's tunnelling model"),
        ("channels[].includes_tunnelling", FLAG, "whether the channel's rate constants include tunnelling"),
        ("channels[].mechanism_fit", OBJ, "the expression in the mechanism and its measured deviation", "exported"),
        ("channels[].warnings", TEXT, "warnings about the channel's exported expression (list)"),
        ("tolerance_missed", TEXT, "channels whose exported expression misses the tolerance (list)"),
        ("warnings", TEXT, "warnings of the run (list)"),
    ]),
    _cmd("isotopes", "Isotopologues of a study: KIEs, beta factors, fractionation, three-isotope exponents.", [
        ("study", TEXT, "the study file"),
        ("title", TEXT, "the study's title"),
        ("low_modes", OBJ, "treatment of low modes", "low_modes"),
        ("isotopes", OBJ, "the isotopologue results", "isotopes"),
        ("plots", TEXT, "plot files written (list)"),
    ]),
    _cmd("compute minimum", "A GFN2-xTB minimum.", [
        ("species", OBJ, "the minimum", "species_summary"),
        ("output", TEXT, "species file written, or null"),
        ("conformer_energies_kJ_per_mol", KJ, "energy of each minimised conformer above the lowest"),
        ("gradient_calls_hessian", ONE, "calculator calls of the Hessian"),
        ("from_cache", FLAG, "whether the result came from the cache"),
    ]),
    _cmd("compute conformers", "The distinct GFN2-xTB conformers of a SMILES (a conformer ensemble).", [
        ("conformers", LIST, "one entry per distinct minimum, lowest first"),
        ("conformers[].label", TEXT, "its label (c1, c2, ...)"),
        ("conformers[].output", TEXT, "species file written, or null"),
        ("conformers[].relative_energy_kJ_per_mol", KJ, "electronic energy above the lowest conformer"),
        ("conformers[].species", OBJ, "the conformer", "species_summary"),
        ("minimised_energies_kJ_per_mol", KJ, "energy of each embedded conformer after minimisation, above "
         "the lowest"),
        ("duplicates_removed", ONE, "minima removed as duplicates (energy and RMSD or distances)"),
        ("above_energy_window", ONE, "distinct minima dropped above the energy window"),
        ("study_species_line", TEXT, "the [species] line of a study for the ensemble (null without "
         "--output-dir)"),
        ("from_cache", FLAG, "whether the result came from the cache"),
    ]),
    _cmd("compute saddle", "A GFN2-xTB saddle point, verified by minimising both ways.", [
        ("", "", "", "saddle"),
        ("outputs", TEXT, "files written: TS, reactant side, product side (null where not asked for)"),
        ("species", LIST, "TS, reactant side, product side"),
        ("species[]", OBJ, "one species", "species_summary"),
    ]),
    _cmd("compute relay", "The water-relay transition state of H2CO3 -> CO2 + H2O.", [
        ("", "", "", "saddle"),
        ("complex", TEXT, "the pre-reactive complex"),
        ("barrier_from_complex_classical_kJ_per_mol", KJ, "TS above the complex, electronic energies"),
        ("barrier_from_complex_zpe_kJ_per_mol", KJ, "the same with zero-point energies"),
        ("outputs", TEXT, "files written: TS, complex, product side (null where not asked for)"),
    ]),
    _cmd("compute read", "A species read from a quantum-chemistry output.", [
        ("species", OBJ, "the species", "species_summary"),
        ("output", TEXT, "species file written, or null"),
    ]),
]

_COMMANDS.append(_cmd("uncertainty", "Uncertainty and sensitivity of every result of a study: the record "
                          "results.json holds under uncertainty, with the study.", [
                              ("study", TEXT, "the study file"),
                              ("title", TEXT, "the study's title"),
                              ("", OBJ, "the uncertainty record", "uncertainty_results"),
                          ]))

# ---- the batch engine (tstrate many): its summary and task records
_record("batch_task", "One task of a batch (tstrate many)", [
    ("name", TEXT, "the task's name: the file stem (a study.toml's folder name), -2, -3 ... when taken"),
    ("kind", TEXT, "run, refine or uncertainty"),
    ("status", TEXT, "done, skipped (found finished with the same input key) or failed"),
    ("source", TEXT, "the study or species file the task starts from"),
    ("output", TEXT, "the folder (run) or file (refine, uncertainty) written"),
    ("input_key_sha256", TEXT, "SHA-256 of the kind, the options, the package versions and the name and "
                               "SHA-256 of every input file (empty when the inputs could not be read)"),
    ("time_s", "s", "wall time of the task on its worker (uncertainty: from its submission to the end of its "
                    "last step; a skipped task: that of the run that made it)"),
    ("error", TEXT, "one line saying why the task failed, else null"),
    ("summary", OBJ, "per kind; empty for a failed task", "batch_task_summary"),
])
_record("batch_task_summary", "The numbers of one task", [
    ("title", TEXT, "the study's title (run, uncertainty)"),
    ("channels", LIST, "one entry per channel (run, uncertainty)"),
    ("channels[].name", TEXT, "the channel"),
    ("channels[].order", ONE, "reaction order (run)"),
    ("channels[].mechanism_kind", TEXT, "the form written to mechanism.yaml (run)"),
    ("channels[].T_min_K", K, "lowest temperature of the channel's grid (run)"),
    ("channels[].T_max_K", K, "highest temperature (run)"),
    ("channels[].rate_constant_at_T_min", "@rate_constant_unit", "k at T_min_K, with tunnelling (run)"),
    ("channels[].rate_constant_at_T_max", "@rate_constant_unit", "k at T_max_K (run)"),
    ("channels[].rate_constant_unit", TEXT, "unit of the two rate constants"),
    ("channels[].f298", ONE, "f(298 K) of the evaluation form fitted to f(T) (uncertainty)"),
    ("channels[].g_K", K, "g of the evaluation form (uncertainty)"),
    ("channels[].matters_most", TEXT, "the uncertain factor with the largest share (uncertainty)"),
    ("n_warnings", ONE, "warnings of the run (run)"),
    ("n_files", ONE, "files written (run)"),
    ("n_samples", ONE, "samples (uncertainty)"),
    ("species", TEXT, "the species refined (refine)"),
    ("level", TEXT, "the level, energy // geometry (refine)"),
    ("energy_kJ_per_mol", KJ, "the refined electronic energy (refine)"),
    ("from_cache", FLAG, "the refinement came from the cache (refine)"),
])
_BATCH_JSON = Document("tstrate many: summary.json", "batch.md", """Every task of a batch, written to its folder (and printed by `tstrate many ... --json`).""", _keys(
    ("tasks_total", ONE, "tasks in the batch"),
    ("tasks_done", ONE, "tasks run now"),
    ("tasks_skipped", ONE, "tasks found finished with the same input key"),
    ("tasks_failed", ONE, "tasks that failed"),
    ("tasks", LIST, "one entry per task, in the order given"),
    ("tasks[]", OBJ, "one task", "batch_task"),
))
_BATCH_TASK = Document("tstrate many: tasks/<name>.json", "batch.md", """The record of one task, written when it ends; a later batch skips a task whose record is done
with the same input key and whose output is still there.""", _keys(
    ("", OBJ, "the task", "batch_task"),
))
_BATCH_CSV = Document("tstrate many: summary.csv", "batch.md", """Every task of a batch: one row per channel of a study (run, uncertainty), one per species
(refine), one for a task without numbers (failed).""", _keys(
    ("task", TEXT, "the task's name"),
    ("kind", TEXT, "run, refine or uncertainty"),
    ("status", TEXT, "done, skipped or failed"),
    ("source", TEXT, "the study or species file"),
    ("output", TEXT, "the folder or file written"),
    ("time", "s", "wall time of the task"),
    ("error", TEXT, "why it failed"),
    ("title", TEXT, "the study's title"),
    ("channel", TEXT, "the channel"),
    ("mechanism form", TEXT, "the form written to mechanism.yaml (run)"),
    ("T min", K, "lowest temperature of the channel's grid (run)"),
    ("T max", K, "highest temperature (run)"),
    ("k at T min", "@k unit", "k at T min, with tunnelling (run)"),
    ("k at T max", "@k unit", "k at T max (run)"),
    ("k unit", TEXT, "unit of the k columns of the row"),
    ("f298", ONE, "f(298 K) of the evaluation form (uncertainty)"),
    ("g", K, "g of the evaluation form (uncertainty)"),
    ("matters most", TEXT, "the uncertain factor with the largest share (uncertainty)"),
    ("species", TEXT, "the species refined (refine)"),
    ("level", TEXT, "the level (refine)"),
    ("energy", KJ, "the refined electronic energy (refine)"),
), "csv")

DOCUMENTS: dict[str, Document] = {d.name: d for d in
                                  [_RESULTS, _INPUTS, _FITS, _FITS_CSV, _THERMO_CSV, _RATES_CSV,
                                   _PFITS_CSV, _CONFORMERS_CSV, _ASSOC_CSV, _ISO_BETA_CSV, _ISO_KIE_CSV, _ISO_FRAC_CSV,
                                   _ISO_THETA_CSV, _UNC_CSV, _UNC_RANK_CSV, _EVAL_FORMS, _EVAL_CSV, _REF_CSV,
                                   _MECHANISM, *_COMMANDS, _BATCH_JSON, _BATCH_TASK, _BATCH_CSV]}

#: the batch engine's documents, checked against real outputs in tests/compute/test_batch.py
BATCH_DOCUMENTS = (_BATCH_JSON.name, _BATCH_TASK.name, _BATCH_CSV.name)

PAGES = {
    "results-json.md": ("results.json and inputs.json", """\
The numbers of a `tstrate run`, written to its output folder."""),
    "fits-json.md": ("fits.json", """\
Fitted parameters of a `tstrate run`, written to its output folder."""),
    "csv-tables.md": ("CSV tables", """\
`fits.csv` and `tables/*.csv` of a `tstrate run`. Comma separated, one header line; every
numeric column carries its unit in brackets (`[1]` for dimensionless numbers); empty cells
are values that do not apply. Rate-constant units follow the study's `rate_units`."""),
    "mechanism.md": ("mechanism.yaml", """\
The mechanism file of a `tstrate run`."""),
    "command-json.md": ("--json output of the commands", """\
What each command prints on stdout with `--json`. Records shared with the files of a run
are the same as in results.json and fits.json."""),
    "batch.md": ("tstrate many: summary and task records", """\
What `tstrate many` writes into its folder besides the outputs of its tasks (which are those
of `tstrate run`, `tstrate compute refine` and `tstrate uncertainty --json`); see
docs/batch.md."""),
}


# =====================================================================================
# flattening, checking
# =====================================================================================

def _join(prefix: str, path: str) -> str:
    if not path:
        return prefix
    if not prefix:
        return path
    return f"{prefix}.{path}"


def _expand(keys, prefix="", origin=None, seen_records=()):
    """(full path, Key, origin) for every key, records expanded; origin names the record (or
    None for the document's own keys)."""
    for key in keys:
        full = _join(prefix, key.path)
        if key.path:
            yield full, key, origin
        if key.record:
            for name in key.record.split("|"):
                if name in seen_records:
                    raise ValueError(f"record {name} contains itself")
                yield from _expand(RECORDS[name].keys, full, name, seen_records + (name,))


def flat_keys(doc: Document) -> dict[str, tuple[Key, str | None]]:
    """Full path -> (Key, origin record or None) of a document."""
    out = {}
    for full, key, origin in _expand(doc.keys, ""):
        out.setdefault(full, (key, origin))
    return out


def _segments(path: str) -> list[str]:
    return path.split(".") if path else []


class _Node:
    __slots__ = ("children", "entry")

    def __init__(self):
        self.children: dict[str, _Node] = {}
        self.entry = None


def _tree(doc: Document) -> _Node:
    root = _Node()
    for full, (key, origin) in flat_keys(doc).items():
        node = root
        for seg in _segments(full):
            node = node.children.setdefault(seg, _Node())
        node.entry = (full, key, origin)
    return root


def _lookup(node: _Node, name: str):
    """(node of the key, node of its list items ``name[]``); data-chosen keys match ``<...>``."""
    plain, items = node.children.get(name), node.children.get(name + "[]")
    if plain is None and items is None:
        for seg, child in node.children.items():
            if seg.startswith("<"):
                if seg.endswith("[]"):
                    items = items or child
                else:
                    plain = plain or child
    return plain, items


def _is_number(v) -> bool:
    return isinstance(v, (int, float)) and not isinstance(v, bool)


def _leaf_kinds(v) -> set:
    if isinstance(v, list):
        out = set()
        for x in v:
            out |= _leaf_kinds(x)
        return out
    if v is None:
        return set()
    if isinstance(v, bool):
        return {"bool"}
    if _is_number(v):
        return {"number"}
    if isinstance(v, str):
        return {"text"}
    return {"object"}


#: unit suffix of a key name -> the unit it stands for (longest first)
SUFFIX_UNITS = (
    ("_J_per_mol_K", JK), ("_kJ_per_mol", KJ), ("_amu_A2", "amu Å2"), ("_per_cm3", PER_CM3),
    ("_per_bar", "bar-1"), ("_per_s", PER_S), ("_percent", PCT), ("_cm1", CM1), ("_bar", BAR),
    ("_km", "km"), ("_K", K), ("_A", "Å"), ("_permil", "permil"), ("_amu", "u"), ("_deg", "degree"), ("_s", "s"),
)
#: unit spellings that break the convention wherever they end a key name
FORBIDDEN_SUFFIXES = ("_J_per_mol", "_Pa", "_m3", "_hartree", "_relative_deviation", "_fraction_percent")


def name_problems(name: str, unit: str) -> list[str]:
    """Problems of a JSON key name against its schema unit (the naming convention)."""
    out = []
    for bad in FORBIDDEN_SUFFIXES:
        if name.endswith(bad):
            out.append(f"{name}: the suffix {bad} breaks the convention")
    if "relative_deviation" in name:
        out.append(f"{name}: deviations are spelled *_deviation_percent")
    suffix = next((u for s, u in SUFFIX_UNITS if name.endswith(s)), None)
    numeric = unit not in (TEXT, FLAG, OBJ, LIST, "")
    if suffix is not None and numeric and unit != suffix:
        out.append(f"{name}: the name says {suffix} but the schema says {unit}")
    if suffix is None and numeric and unit != ONE and not unit.startswith("@"):
        out.append(f"{name}: a number in {unit} needs its unit in the name or a *_unit sibling")
    return out


def check_json(doc: Document, data, seen: set | None = None) -> list[str]:
    """Problems of ``data`` (a parsed JSON or YAML document) against ``doc``; the schema
    entries met are added to ``seen`` as (document, path) and (record, path) pairs."""
    problems: list[str] = []
    seen = set() if seen is None else seen
    naming = doc.kind == "json"

    def mark(entry):
        full, key, origin = entry
        seen.add((doc.name, full))
        if origin is not None:
            seen.add(("record:" + origin, key.path))

    def walk(obj, node, path, parents):
        for name, value in obj.items():
            name = str(name)
            where = f"{path}.{name}" if path else name
            plain, items = _lookup(node, name)
            entries = [n.entry for n in (plain, items) if n is not None and n.entry is not None]
            if not entries:
                problems.append(f"{doc.name}: {where} is not in the schema")
                continue
            for entry in entries:
                mark(entry)
            _, key, _ = entries[0]
            kinds = {"object"} if isinstance(value, dict) else _leaf_kinds(value)
            numeric_unit = key.unit not in (TEXT, FLAG, OBJ, LIST)
            if "number" in kinds and not numeric_unit:
                problems.append(f"{doc.name}: {where} holds numbers but the schema says {key.unit}")
            if "text" in kinds and key.unit != TEXT:
                problems.append(f"{doc.name}: {where} holds text but the schema says {key.unit}")
            if key.unit.startswith("@"):
                ref, scope = key.unit[1:], obj
                while ref.startswith("../"):
                    ref, scope = ref[3:], parents[-1] if parents else {}
                if ref not in scope:
                    problems.append(f"{doc.name}: {where} has its unit in {key.unit[1:]}, which is missing")
            literal = name in node.children or f"{name}[]" in node.children
            if naming and literal:   # keys chosen by the data (<element>, <channel>) are not names
                problems.extend(f"{doc.name}: {p}" for p in name_problems(name, key.unit))
            if isinstance(value, dict):
                walk(value, plain if plain is not None else items, where, parents + [obj])
            elif isinstance(value, list) and any(isinstance(v, dict) for v in value):
                if items is None:
                    problems.append(f"{doc.name}: the items of {where} are not in the schema")
                    continue
                for item in value:
                    if isinstance(item, dict):
                        walk(item, items, where + "[]", parents + [obj])

    if not isinstance(data, dict):
        return [f"{doc.name}: not an object"]
    walk(data, _tree(doc), "", [])
    return problems


_HEADER = re.compile(r"(?P<name>.+?) \[(?P<unit>.+)\]")


def check_csv(doc: Document, header: list[str], seen: set | None = None) -> list[str]:
    """Problems of a CSV header against ``doc``: unknown columns and wrong units."""
    seen = set() if seen is None else seen
    keys = {k.path: k for k in doc.keys}
    problems = []
    for col in header:
        m = _HEADER.fullmatch(col)
        name, unit = (m["name"], m["unit"]) if m else (col, None)
        key = keys.get(name)
        if key is None:
            problems.append(f"{doc.name}: column {col!r} is not in the schema")
            continue
        seen.add((doc.name, name))
        numeric = key.unit not in (TEXT, FLAG) and not key.unit.startswith("@")
        if numeric and unit is None:
            problems.append(f"{doc.name}: column {col!r} needs its unit [{key.unit}]")
        elif not numeric and unit is not None:
            problems.append(f"{doc.name}: column {col!r} should have no unit in brackets")
        elif unit is not None and not key.unit.startswith("<") and unit != key.unit:
            problems.append(f"{doc.name}: column {col!r} has unit [{unit}], the schema says [{key.unit}]")
    return problems


def entries_of(document_names) -> set:
    """The schema entries of the named documents: (document, path) for their own keys and
    (record:name, path) for the keys of every record they use - what real outputs of those
    documents should show between them."""
    out = set()
    for name in document_names:
        doc = DOCUMENTS[name]
        out |= {(doc.name, k.path) for k in doc.keys if k.path}
        for rec in _records_used(doc.keys, []):
            out |= {("record:" + rec, k.path) for k in RECORDS[rec].keys if k.path}
    return out


def schema_problems() -> list[str]:
    """Problems of the schema itself: record references, and key names against their units."""
    out = []
    used = _records_used([k for d in DOCUMENTS.values() for k in d.keys], [])
    out += [f"record {name} is used by no document" for name in RECORDS if name not in used]
    for owner, keys, kind in ([(d.name, d.keys, d.kind) for d in DOCUMENTS.values()]
                              + [("record " + r.name, r.keys, "json") for r in RECORDS.values()]):
        paths = [k.path for k in keys if k.path]
        dup = {p for p in paths if paths.count(p) > 1}
        out += [f"{owner}: {p} listed twice" for p in sorted(dup)]
        for k in keys:
            for name in (k.record or "").split("|"):
                if name and name not in RECORDS:
                    out.append(f"{owner}: {k.path}: unknown record {name}")
            if kind == "json" and k.path:
                last = re.sub(r"\[\]$", "", k.path.split(".")[-1])
                if not last.startswith("<"):
                    out += [f"{owner}: {p}" for p in name_problems(last, k.unit)]
    return out


# =====================================================================================
# Markdown
# =====================================================================================

def _unit_text(unit: str, kind: str) -> str:
    if unit.startswith("@"):
        ref = unit[1:]
        up = ref.count("../")
        return f"in `{ref.replace('../', '')}`" + (" of the enclosing object" if up else "")
    return unit or "-"


def _cell(text: str) -> str:
    return text.replace("|", "\\|").replace("\n", " ")


def _anchor(title: str) -> str:
    a = re.sub(r"[^a-z0-9 -]", "", title.lower()).strip().replace(" ", "-")
    return a


def _rows(keys, kind: str) -> list[str]:
    head = "| column | unit | meaning |" if kind == "csv" else "| key | unit | meaning |"
    lines = [head, "|---|---|---|"]
    for k in keys:
        if not k.path:
            names = " and ".join(f"[{RECORDS[r].title}](#{_anchor(RECORDS[r].title)})" for r in k.record.split("|"))
            lines.append(f"| *(the keys of {_cell(names)})* | | |")
            continue
        path = k.path
        if kind == "csv":
            shown = path if _unit_text(k.unit, kind) in (TEXT, FLAG) or k.unit.startswith("@") \
                else f"{path} [{k.unit}]"
            unit = _unit_text(k.unit, kind) if not k.unit.startswith("@") else f"in column `{k.unit[1:]}`"
            lines.append(f"| `{_cell(shown)}` | {_cell(unit)} | {_cell(k.meaning)} |")
            continue
        meaning = k.meaning
        if k.record:
            names = " or ".join(f"[{RECORDS[r].title}](#{_anchor(RECORDS[r].title)})" for r in k.record.split("|"))
            meaning += f"; see {names}"
        lines.append(f"| `{_cell(path)}` | {_cell(_unit_text(k.unit, kind))} | {_cell(meaning)} |")
    return lines


def _records_used(keys, acc: list) -> list:
    for k in keys:
        for name in (k.record or "").split("|"):
            if name and name not in acc:
                acc.append(name)
                _records_used(RECORDS[name].keys, acc)
    return acc


def page_text(page: str) -> str:
    title, intro = PAGES[page]
    docs = [d for d in DOCUMENTS.values() if d.page == page]
    out = [f"# {title}", "",
           "<!-- generated by `python -m tstrate.output.schema --write docs/outputs` from "
           "tstrate/output/schema.py; do not edit by hand -->", "", intro, "",
           "Conventions, paths and units: see [README.md](README.md).", ""]
    used: list = []
    for d in docs:
        out += [f"## {d.name}", "", d.about, ""] + _rows(d.keys, d.kind) + [""]
        _records_used(d.keys, used)
    if used:
        out += ["## Records", "", "Objects that appear in several places above.", ""]
        for name in used:
            r = RECORDS[name]
            out += [f"### {r.title}", ""] + ([r.about, ""] if r.about else []) + _rows(r.keys, "json") + [""]
    return "\n".join(out).rstrip() + "\n"


def readme_text() -> str:
    lines = ["# Output files", "",
             "<!-- generated by `python -m tstrate.output.schema --write docs/outputs` from "
             "tstrate/output/schema.py; do not edit by hand -->", "",
             "`tstrate run` writes one folder: `report.md` and `report.html` (the report, for "
             "reading), `mechanism.yaml`, `fits.json`, `fits.csv`, `results.json`, `inputs.json`, "
             "`tables/*.csv` and `plots/*.png` (and `*.svg` when asked for). Every command also prints its results as JSON "
             "with `--json`. The pages here list every key of every such file with its unit and "
             "meaning:", ""]
    for page, (title, _) in PAGES.items():
        names = ", ".join(f"`{d.name}`" for d in DOCUMENTS.values() if d.page == page)
        lines.append(f"- [{title}]({page}): {names}")
    lines += ["", "## Conventions", "", CONVENTIONS.rstrip(), "", "## Paths and units in these pages", "",
              "A key is named by its dotted path from the top of the document: `a.b` is key `b` of "
              "the object under `a`; `a[]` is an item of the list `a`; `<name>` stands for a key "
              "chosen by the data (a channel, species, element or tunnelling model). The unit `1` "
              "marks a dimensionless number, \"in `x`\" a unit written in the sibling key `x`, and "
              "`text`, `true/false`, `object`, `list` what is not a number. Any value may be null "
              "where it does not apply.", ""]
    return "\n".join(lines).rstrip() + "\n"


def pages() -> dict[str, str]:
    """File name -> text of every page under docs/outputs/."""
    out = {"README.md": readme_text()}
    out.update({p: page_text(p) for p in PAGES})
    return out


def write_pages(folder) -> list[Path]:
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    written = []
    for name, text in pages().items():
        path = folder / name
        path.write_text(text, encoding="utf-8")
        written.append(path)
    return written


def main(argv=None) -> int:
    p = argparse.ArgumentParser(prog="python -m tstrate.output.schema",
                                description="Write the pages of docs/outputs/ from the schema, or "
                                            "check output files against it.")
    p.add_argument("--write", metavar="DIR", help="write the Markdown pages into DIR")
    p.add_argument("--check", nargs="+", metavar="DOCUMENT=FILE",
                   help="check JSON files against a document of the schema, e.g. results.json=out/results.json")
    args = p.parse_args(argv)
    status = 0
    if args.write:
        for path in write_pages(args.write):
            print(path)
    for item in args.check or ():
        import json

        name, _, file = item.partition("=")
        if name not in DOCUMENTS:
            print(f"{item}: unknown document {name!r}; one of: {', '.join(DOCUMENTS)}", file=sys.stderr)
            return 2
        problems = check_json(DOCUMENTS[name], json.loads(Path(file).read_text()))
        for line in problems:
            print(line)
        status = status or (1 if problems else 0)
    problems = schema_problems()
    for line in problems:
        print(line, file=sys.stderr)
    return 1 if problems else status


if __name__ == "__main__":
    sys.exit(main())
