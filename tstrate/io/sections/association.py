"""The ``[[association]]`` tables of a study file: barrierless associations A + B (+ M) -> AB (+ M).

A barrierless channel has no transition state: its high-pressure rate constant is given in
modified Arrhenius form and turned into the adduct's k(E) by inverse Laplace transform
(:mod:`tstrate.physics.inverse_laplace`); its pressure dependence comes from the master equation
(or strong collisions scaled by Troe's efficiency) and detailed balance
(:mod:`tstrate.physics.association`). Pressures and the bath gas come from ``[conditions]``; the
adduct's species file needs ``lennard_jones``::

    [[association]]
    name = "OH + SO2"
    reactants = ["OH", "SO2"]
    adduct = "HOSO2"
    k_inf_cm3_per_molecule_s = 1.7e-12        # k_inf = A (T / T0)^n exp(-Ea / RT): A
    k_inf_temperature_exponent = 0.2          # n
    k_inf_reference_temperature_K = 300       # T0
    k_inf_activation_energy_kJ_per_mol = 0    # Ea
    pressure_method = "master_equation"       # or "strong_collision"
    adduct_rotation = "active"                # or "spectator"
    delta_E_down_cm1 = 250
    reference_k0_cm6_per_molecule2_s = 2.9e-31    # an evaluated k0 (T / 300 K)^m to compare with
    reference_k0_temperature_exponent = -4.1
    reference = "JPL 19-5"
"""

from __future__ import annotations

from tstrate.errors import InputError
from tstrate.io.keys import Key, Keys, field_default
from tstrate.model import Study
from tstrate.model.settings import ADDUCT_ROTATIONS, ASSOCIATION_PRESSURE_METHODS, AssociationSpec

#: record field -> file key, where the file key carries another unit
_FILE_KEY = {"k_inf_A_m3_per_s": "k_inf_cm3_per_molecule_s",
             "k_inf_activation_energy_J_per_mol": "k_inf_activation_energy_kJ_per_mol",
             "reference_k0_m6_per_s": "reference_k0_cm6_per_molecule2_s"}


def _default(name):
    return field_default(AssociationSpec, name)


KEYS = Keys(("association", "[]"), "[[association]]",
            "One table per barrierless association A + B (+ M) -> AB (+ M): no transition state; the "
            "high-pressure k_inf(T) is given and turned into the adduct's k(E) by inverse Laplace "
            "transform (Davies, Green and Pilling 1986). The adduct's species file needs "
            "`lennard_jones`; pressures and the bath gas come from `[conditions]`.", (
                Key("name", "string", "label of the association (unique)", required=True),
                Key("reactants", "list of strings", "the two fragments (species names)", required=True),
                Key("adduct", "string", "the well they form (species name), bound below the fragments",
                    required=True),
                Key("k_inf_cm3_per_molecule_s", "number", "A of the high-pressure limit "
                    "k_inf = A (T/T0)^n exp(-Ea/RT)", required=True, unit="cm3 molecule-1 s-1"),
                Key("k_inf_temperature_exponent", "number", "n of k_inf (above -2.5); k(E) near threshold "
                    "follows it", default=_default("k_inf_temperature_exponent"), unit="1"),
                Key("k_inf_reference_temperature_K", "number", "T0 of k_inf",
                    default=_default("k_inf_reference_temperature_K"), unit="K"),
                Key("k_inf_activation_energy_kJ_per_mol", "number", "Ea of k_inf (>= 0)", default=0.0,
                    unit="kJ/mol"),
                Key("pressure_method", "string", "how k(T, P) is found: the energy-grained master equation "
                    "of the adduct, or strong collisions scaled by Troe's weak-collision efficiency",
                    default=_default("pressure_method"), choices=ASSOCIATION_PRESSURE_METHODS),
                Key("adduct_rotation", "string", "the adduct's overall rotation in its density of states: "
                    "active (all rotational energy available to dissociation), k_active (the K-rotor about "
                    "the unique axis only) or spectator (none); active and spectator bracket the "
                    "low-pressure limit",
                    default=_default("adduct_rotation"), choices=ADDUCT_ROTATIONS),
                Key("delta_E_down_cm1", "number", "<dE>down at 300 K, the mean energy removed in downward "
                    "collisions", required="with the master equation", default_text="strong collisions "
                    "(strong-collision method only)", unit="cm-1"),
                Key("delta_E_temperature_exponent", "number", "n in <dE>down (T / 300 K)^n",
                    default=_default("delta_E_temperature_exponent"), unit="1"),
                Key("grain_cm1", "number", "energy grain (refined to a third of the adduct's lowest "
                    "wavenumber, then lowered so that the well depth is a whole number of grains)",
                    default=_default("grain_cm1"), unit="cm-1"),
                Key("energy_above_threshold_cm1", "number", "how far the grid reaches above the well depth",
                    default=_default("energy_above_threshold_cm1"), unit="cm-1"),
                Key("temperature_K", "list of numbers", "temperatures of this association",
                    default_text="`[conditions] temperature_K`", unit="K"),
                Key("reference_k0_cm6_per_molecule2_s", "number", "an evaluated low-pressure limit "
                    "k0 = k0_ref (T / 300 K)^m to compare with (with its exponent)", unit="cm6 molecule-2 s-1"),
                Key("reference_k0_temperature_exponent", "number", "m of the evaluated k0", unit="1"),
                Key("reference", "string", "where the evaluated k0 comes from"),
            ))


def read_associations(t, study: Study) -> tuple[AssociationSpec, ...]:
    """Read every ``[[association]]`` table; species names are checked against ``[species]``."""
    out = []
    for at in t.tables("association"):
        name = at.get("name", str)
        reactants = at.string_list("reactants")
        adduct = at.get("adduct", str)
        for key, names in (("reactants", reactants), ("adduct", [adduct])):
            for n in names:
                if n not in study.species:
                    raise at.error(key, f"unknown species {n!r}", hint="list it under [species]")
        ad = study.species[adduct]
        if ad.lennard_jones is None:
            raise InputError(f"the adduct {adduct!r} has no Lennard-Jones parameters, needed for collisions",
                             file=ad.source, field="lennard_jones",
                             hint="add lennard_jones = { sigma_A = ..., epsilon_K = ... } to its species file")
        temps = at.number_list("temperature_K", None, min_length=1)
        ref = at.get("reference_k0_cm6_per_molecule2_s", float, None)
        values = dict(
            name=name, reactants=tuple(reactants), adduct=adduct,
            k_inf_A_m3_per_s=at.get("k_inf_cm3_per_molecule_s", float) * 1e-6,
            k_inf_temperature_exponent=at.get("k_inf_temperature_exponent", float,
                                              _default("k_inf_temperature_exponent")),
            k_inf_reference_temperature_K=at.get("k_inf_reference_temperature_K", float,
                                                 _default("k_inf_reference_temperature_K")),
            k_inf_activation_energy_J_per_mol=at.get("k_inf_activation_energy_kJ_per_mol", float, 0.0) * 1e3,
            pressure_method=at.get("pressure_method", str, _default("pressure_method")),
            adduct_rotation=at.get("adduct_rotation", str, _default("adduct_rotation")),
            delta_E_down_cm1=at.get("delta_E_down_cm1", float, None),
            delta_E_temperature_exponent=at.get("delta_E_temperature_exponent", float,
                                                _default("delta_E_temperature_exponent")),
            grain_cm1=at.get("grain_cm1", float, _default("grain_cm1")),
            energy_above_threshold_cm1=at.get("energy_above_threshold_cm1", float,
                                              _default("energy_above_threshold_cm1")),
            temperature_K=None if temps is None else tuple(temps),
            reference_k0_m6_per_s=None if ref is None else ref * 1e-12,
            reference_k0_temperature_exponent=at.get("reference_k0_temperature_exponent", float, None),
            reference=at.get("reference", str, None))
        try:
            spec = AssociationSpec(**values)
        except InputError as exc:
            raise at.error(_FILE_KEY.get(exc.field, exc.field), exc.problem, exc.hint) from None
        at.reject_unknown(KEYS)
        out.append(spec)
    names = [s.name for s in out]
    dup = sorted({n for n in names if names.count(n) > 1})
    if dup:
        raise t.error("association", f"association name {dup[0]!r} used twice")
    return tuple(out)
