"""Pressure dependence of a barrierless association A + B (+ M) -> AB (+ M).

The adduct's k_diss(E) comes from the inverse Laplace transform of the association's k_inf(T)
(:mod:`tstrate.physics.inverse_laplace`). The association rate constant follows from the
dissociation by detailed balance at every [M] (the adduct is thermalised at each pressure;
Troe, J. Chem. Phys. 66, 4745 (1977)):

    k_assoc(T, [M]) = Kc(T) k_diss(T, [M]),   Kc = [AB] / ([A][B]) from the partition functions,

so k_assoc -> k_inf(T) (the input) at high pressure, and k_assoc -> k0 [M] at low pressure with
k0 = Kc k0_diss [m^6 molecule^-2 s^-1].

Methods for k_diss(T, [M]):
* "strong_collision": the strong-collision sum scaled by Troe's weak-collision efficiency beta_c
  (:func:`tstrate.physics.falloff.strong_collision_falloff`), beta_c from <Delta E>down and F_E
  (:func:`tstrate.physics.collisions.collision_efficiency`). A stepping stone: it has both limits
  right but not the shape between them.
* "master_equation": the energy-grained master equation of the adduct (one well, the
  dissociation as its loss; exponential-down collisions with <Delta E>down;
  :mod:`tstrate.physics.master_equation`), k_diss(T, [M]) its chemically significant eigenvalue
  (Bartis and Widom 1974). k0 is read off at a number density low enough for the linear regime
  (:data:`LOW_PRESSURE_NUMBER_DENSITY_M3`), where the precise (non-subtracting) solver keeps it.

Units: K, m^-3, m^3 s^-1 (k_assoc, k_inf), m^6 s^-1 (k0), s^-1 (k_diss), J/mol.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from tstrate.arrays import per_temperature, temperatures_K
from tstrate.errors import InputError
from tstrate.physics import collisions as coll
from tstrate.physics.falloff import strong_collision_falloff
from tstrate.physics.inverse_laplace import AssociationModel

#: pressure methods for a barrierless association
ASSOCIATION_METHODS = ("strong_collision", "master_equation")

#: [M] [m^-3] at which the master equation's k_diss / [M] is taken as the low-pressure limit
#: (about 4e-6 bar at 300 K; k_diss is linear in [M] there to well under 1 % for a 5-atom adduct)
LOW_PRESSURE_NUMBER_DENSITY_M3 = 1e20


@dataclass(frozen=True)
class AssociationFalloff:
    """k_assoc(T, [M]) of a barrierless association and its limits (arrays over T and [M]).

    temperature_K (n_T); number_density_m3 (n_T, n_M) [m^-3]; rate_m3_per_s (n_T, n_M);
    k_inf_m3_per_s (n_T): high-pressure limit on the grain (reproduces the input k_inf);
    k0_m6_per_s (n_T): low-pressure limit; collision_rate_m3_per_s (n_T): Z_LJ of the adduct in the
    bath; efficiency (n_T): beta_c; energy_factor (n_T): F_E; ln_kc_m3 (n_T): ln Kc [ln m^3];
    method: how k_diss(T, [M]) was found.
    """

    model: AssociationModel = field(repr=False)
    temperature_K: np.ndarray = field(repr=False)
    number_density_m3: np.ndarray = field(repr=False)
    rate_m3_per_s: np.ndarray = field(repr=False)
    k_inf_m3_per_s: np.ndarray = field(repr=False)
    k0_m6_per_s: np.ndarray = field(repr=False)
    collision_rate_m3_per_s: np.ndarray = field(repr=False)
    efficiency: np.ndarray = field(repr=False)
    energy_factor: np.ndarray = field(repr=False)
    ln_kc_m3: np.ndarray = field(repr=False)
    method: str = "strong_collision"


def _smoothed_density(model: AssociationModel) -> np.ndarray:
    rho = model.rate.reactant.density_per_J_per_mol
    freqs = model.adduct.harmonic_frequencies_cm1
    width = max(1, int(round(float(freqs.min()) / model.grain_cm1))) if freqs.size else 1
    return np.convolve(rho, np.ones(width) / width, mode="same") if width > 1 else rho


def weak_collision_efficiency(model: AssociationModel, temperature_K, delta_E_down_J_per_mol):
    """(beta_c, F_E) per temperature from <Delta E>down [J/mol] (Troe 1977) at the threshold D0."""
    t = temperatures_K(temperature_K, ndim=1)
    de = per_temperature(delta_E_down_J_per_mol, t, "delta_E_down_J_per_mol")
    fe = coll.energy_dependence_factor(model.rate.energies_J_per_mol, _smoothed_density(model),
                                       model.rate.barrier_J_per_mol, t)
    fe = np.maximum(fe, 1.0)
    beta = np.array([float(coll.collision_efficiency(d, ti, kind="down", energy_factor=f))
                     for d, ti, f in zip(de, t, fe)])
    return beta, fe


def association_falloff(model: AssociationModel, temperature_K, number_density_m3, *,
                        collision_rate_m3_s, delta_E_down_J_per_mol=None, collision_efficiency=None,
                        method: str = "strong_collision") -> AssociationFalloff:
    """k_assoc(T, [M]) [m^3 s^-1] on a T x [M] grid.

    Parameters
    ----------
    model: the adduct's k_diss(E) (:func:`tstrate.physics.inverse_laplace.association_ilt`).
    temperature_K: (n_T,) [K]. number_density_m3: (n_M,) or (n_T, n_M) [m^-3].
    collision_rate_m3_s: Z_LJ of the adduct in the bath [m^3 s^-1], one or one per T.
    delta_E_down_J_per_mol: <Delta E>down [J/mol] (one or per T) for Troe's beta_c; or
    collision_efficiency: beta_c given directly; neither: strong collisions (beta_c = 1).
    method: one of :data:`ASSOCIATION_METHODS`.
    """
    if method not in ASSOCIATION_METHODS:
        raise InputError(f"unknown pressure method {method!r} for a barrierless association", field="method",
                         hint="use one of " + ", ".join(ASSOCIATION_METHODS))
    t = temperatures_K(temperature_K, ndim=1)
    z = per_temperature(collision_rate_m3_s, t, "collision_rate_m3_s")
    if delta_E_down_J_per_mol is not None and collision_efficiency is not None:
        raise InputError("give <Delta E>down or a collision efficiency, not both", field="delta_E_down")
    if method == "master_equation":
        if delta_E_down_J_per_mol is None:
            raise InputError("the master equation needs <Delta E>down", field="delta_E_down")
        return _master_equation_falloff(model, t, number_density_m3, z,
                                        per_temperature(delta_E_down_J_per_mol, t, "delta_E_down_J_per_mol"))
    if delta_E_down_J_per_mol is not None:
        beta, fe = weak_collision_efficiency(model, t, delta_E_down_J_per_mol)
    else:
        beta = per_temperature(1.0 if collision_efficiency is None else collision_efficiency, t,
                               "collision_efficiency")
        fe = np.full(t.size, np.nan)
    fo = strong_collision_falloff(model.rate, t, number_density_m3, collision_rate_m3_s=z,
                                  collision_efficiency=beta)
    ln_kc = model.ln_equilibrium_constant_m3(t)
    kc = np.exp(ln_kc)
    return AssociationFalloff(model, t, fo.number_density_m3, kc[:, None] * fo.rate_per_s,
                              kc * fo.high_pressure_per_s, kc * fo.low_pressure_m3_s, z, beta, fe, ln_kc,
                              method)


def master_equation_dissociation(model: AssociationModel, temperature_K: float, number_density_m3,
                                 collision_rate_m3_s: float, delta_E_down_J_per_mol: float) -> np.ndarray:
    """k_diss(T, [M]) [s^-1] of the adduct from the master equation, one value per [M] [m^-3]."""
    from tstrate.physics import master_equation as me

    counts = model.rate.reactant.counts
    out = []
    for m in np.atleast_1d(np.asarray(number_density_m3, dtype=float)):
        well = me.Well(model.adduct.name, counts, collision_frequency_per_s=float(collision_rate_m3_s * m),
                       delta_E_down_J_per_mol=float(delta_E_down_J_per_mol))
        loss = me.Reaction(f"{model.adduct.name} -> {model.fragments[0].name} + {model.fragments[1].name}",
                           model.adduct.name, None, np.asarray(model.rate.rate_per_s))
        system = me.MasterEquation(model.rate.grain_J_per_mol, (well,), (loss,))
        out.append(float(me.rate_coefficients(system, float(temperature_K)).product_per_s[0, 0]))
    return np.array(out)


def _master_equation_falloff(model: AssociationModel, t: np.ndarray, number_density_m3, z: np.ndarray,
                             de: np.ndarray) -> AssociationFalloff:
    m = np.atleast_1d(np.asarray(number_density_m3, dtype=float))
    if m.ndim == 1:
        m = np.broadcast_to(m, (t.size, m.size))
    ln_kc = model.ln_equilibrium_constant_m3(t)
    kc = np.exp(ln_kc)
    k_inf = kc * model.high_pressure_dissociation_per_s(t)
    rate = np.empty(m.shape)
    k0 = np.empty(t.size)
    for i, ti in enumerate(t):
        rate[i] = kc[i] * master_equation_dissociation(model, ti, m[i], z[i], de[i])
        low = LOW_PRESSURE_NUMBER_DENSITY_M3
        k0[i] = kc[i] * master_equation_dissociation(model, ti, [low], z[i], de[i])[0] / low
    return AssociationFalloff(model, t, np.array(m), rate, k_inf, k0, z, np.full(t.size, np.nan),
                              np.full(t.size, np.nan), ln_kc, "master_equation")


@dataclass(frozen=True)
class ChemicalActivation:
    """What becomes of adducts formed hot from A + B at one (T, [M]).

    temperature_K, number_density_m3; channels: names of the loss channels (the way back to A + B
    first, then any product channels); prompt_fraction (n_channels,): share of the entry flux
    that leaves by each channel before the adduct is thermalised; stabilised_fraction: the share
    left in the thermalised adduct (they sum to one); entry (n_grains,): the entry distribution.
    """

    temperature_K: float
    number_density_m3: float
    channels: tuple[str, ...]
    prompt_fraction: np.ndarray
    stabilised_fraction: float
    entry: np.ndarray = field(repr=False)


def chemical_activation(model: AssociationModel, temperature_K: float, number_density_m3: float, *,
                        collision_rate_m3_s: float, delta_E_down_J_per_mol: float,
                        product_rates_per_s: dict | None = None) -> ChemicalActivation:
    """Chemically activated entry A + B -> AB* through the master equation, then AB* -> A + B (back),
    -> products (``product_rates_per_s``: name -> k(E) [s^-1] on the adduct's grid) or stabilised.

    The entry distribution is k_diss(E) rho(E) exp(-E/RT) (:meth:`AssociationModel.activation_distribution`);
    the split into prompt reaction and stabilisation is the Bartis-Widom one of
    :func:`tstrate.physics.master_equation.prompt_yields`. Without product channels the stabilised
    fraction is k_assoc(T, [M]) / k_inf(T).
    """
    from tstrate.physics import master_equation as me

    counts = model.rate.reactant.counts
    name = model.adduct.name
    well = me.Well(name, counts, collision_frequency_per_s=float(collision_rate_m3_s * number_density_m3),
                   delta_E_down_J_per_mol=float(delta_E_down_J_per_mol))
    back = f"{name} -> {model.fragments[0].name} + {model.fragments[1].name}"
    reactions = [me.Reaction(back, name, None, np.asarray(model.rate.rate_per_s))]
    for pname, k in (product_rates_per_s or {}).items():
        k = np.asarray(k, dtype=float)
        if k.shape != counts.shape:
            raise InputError(f"product channel {pname!r}: k(E) needs one value per grain of the adduct "
                             f"({counts.size}), got shape {k.shape}", field="product_rates_per_s")
        reactions.append(me.Reaction(pname, name, None, k))
    system = me.MasterEquation(model.rate.grain_J_per_mol, (well,), tuple(reactions))
    rm = me.rate_matrix(system, float(temperature_K))
    entry = model.activation_distribution([temperature_K])[0]
    initial = me.initial_vector(system, rm, name, entry)
    prompt, stabilised = me.prompt_yields(system, rm, initial)
    return ChemicalActivation(float(temperature_K), float(number_density_m3), tuple(r.name for r in reactions),
                              np.asarray(prompt), float(np.sum(stabilised)), entry)
