"""The optional ``[uncertainty]`` table of a study file: what is uncertain, by how much, and how to sample.

    [uncertainty]
    samples = 1000                      # quasi-Monte Carlo samples
    seed = 7                            # the same seed gives the same samples
    sampling = "sobol"                  # or "latin-hypercube"
    method_defaults = true              # species not listed below: defaults by [provenance] method
    energy_correlation = 0.5            # share of the energy variance common to one method
    delta_E_down_factor = 2             # one-sigma factor of <Delta E>down
    lennard_jones_sigma_percent = 10    # one sigma of the energised molecule's LJ sigma
    lennard_jones_epsilon_percent = 20
    catalyst_abundance_factor = 1.5     # one-sigma factor of the catalyst abundance

    [uncertainty.species.TS0]
    energy = { value = 4, unit = "kJ/mol" }   # one sigma of the electronic energy
    frequency_scale_percent = 3
    imaginary_frequency_percent = 20

All values are one standard deviation. The defaults by method are listed in
:data:`tstrate.model.uncertainty.METHOD_DEFAULTS` (common practice, no single source).
"""

from __future__ import annotations

from tstrate.io.keys import Key, Keys, field_default
from tstrate.io.tables import energy_keys
from tstrate.model.uncertainty import METHOD_DEFAULTS, SAMPLING_METHODS, SpeciesUncertainty, UncertaintySettings
from tstrate.units import energy_to_J_per_mol

_defaults_text = "; ".join(f"{d.label}: barrier {d.barrier_J_per_mol / 1e3:g} kJ/mol, frequency scale "
                           f"{100 * d.frequency_scale_fraction:g} %, imaginary frequency "
                           f"{100 * d.imaginary_frequency_fraction:g} %" for d in METHOD_DEFAULTS)

#: the keys of [uncertainty] (the documentation is generated from these)
KEYS = Keys(("uncertainty",), "[uncertainty]", "How sure each number is: one-sigma uncertainties of the inputs "
            "and how they are sampled (quasi-Monte Carlo). `tstrate run` computes it when the section is there "
            "(and `run` is not false); `tstrate uncertainty STUDY` computes it alone. Species not listed in "
            "`[uncertainty.species]` take defaults by the `method` of their `[provenance]` (common practice, "
            "no single source; a barrier's sigma, each species getting it divided by sqrt 2): "
            + _defaults_text + ".", (
                Key("samples", "integer", "number of samples", default=field_default(UncertaintySettings, "samples"),
                    unit="1"),
                Key("seed", "integer", "seed of the scrambled sequence (the same seed gives the same samples)",
                    default=field_default(UncertaintySettings, "seed"), unit="1"),
                Key("sampling", "string", "the design: scrambled Sobol sequence or Latin hypercube",
                    default=field_default(UncertaintySettings, "sampling"), choices=SAMPLING_METHODS),
                Key("run", "true or false", "compute the uncertainty within `tstrate run`",
                    default=field_default(UncertaintySettings, "run")),
                Key("method_defaults", "true or false", "give species without their own values the defaults of "
                    "their electronic-structure method", default=field_default(UncertaintySettings,
                                                                               "method_defaults")),
                Key("energy_correlation", "number", "share (0 to 1) of each energy's variance common to all "
                    "species computed with the same method (a systematic error, which cancels in barriers)",
                    default=field_default(UncertaintySettings, "energy_correlation"), unit="1"),
                Key("delta_E_down_factor", "number", "one-sigma factor (>= 1, log-normal) of <Delta E>down of "
                    "[falloff] and of the excitations", default_text="none: certain", unit="1"),
                Key("lennard_jones_sigma_percent", "number", "one-sigma relative uncertainty of the "
                    "Lennard-Jones sigma of the energised molecules (the bath gas's is taken as known)",
                    default_text="none: certain", unit="%"),
                Key("lennard_jones_epsilon_percent", "number", "the same for epsilon",
                    default_text="none: certain", unit="%"),
                Key("catalyst_abundance_factor", "number", "one-sigma factor (>= 1, log-normal) of the catalyst "
                    "abundance of every [[comparison]]", default_text="none: certain", unit="1"),
                Key("sensitivity_step", "number", "half-step of the central differences of the sensitivities, "
                    "in units of each input's sigma", default=field_default(UncertaintySettings,
                                                                          "sensitivity_step"), unit="1"),
                Key("species", "table", "per species values (`[uncertainty.species.<name>]` below)"),
            ))
SPECIES_TABLE_KEYS = Keys(("uncertainty", "species"), "[uncertainty.species]",
                          "One table per species whose uncertainties differ from the defaults.",
                          any_key=Key("<species name>", "table", "the species' values "
                                      "(`[uncertainty.species.<name>]` below)"))
SPECIES_KEYS = Keys(("uncertainty", "species", "*"), "[uncertainty.species.<name>]",
                    "One-sigma uncertainties of one species; a key left out takes the method default "
                    "(or none).", (
                        Key("energy", "table", "uncertainty of the electronic energy, `{ value = 4, unit = "
                            "\"kJ/mol\" }`"),
                        Key("frequency_scale_percent", "number", "relative uncertainty of the frequency scale "
                            "factor (all wavenumbers together)", unit="%"),
                        Key("imaginary_frequency_percent", "number", "relative uncertainty of the imaginary "
                            "frequency of a transition state", unit="%"),
                    ))
ENERGY_KEYS = energy_keys(("uncertainty", "species", "*", "energy"), "[uncertainty.species.<name>] energy",
                          "One sigma of the electronic energy, with its unit.")


def _percent(t, name):
    v = t.get(name, float, None)
    if v is None:
        return None
    if v < 0 or v > 100:
        raise t.error(name, f"must lie between 0 and 100 %, got {v:g}")
    return v / 100


def read_uncertainty(table, study) -> UncertaintySettings:
    t = table.table("uncertainty")
    species = {}
    sp_tables = t.table("species", None)
    if sp_tables is not None:
        for name in sp_tables.data:
            if name not in study.species:
                raise sp_tables.error(name, f"{name!r} is not a species of the study",
                                      hint="use the names of [species]")
            s = sp_tables.table(name)
            energy = s.quantity("energy", energy_to_J_per_mol, None, keys=ENERGY_KEYS)
            if energy is not None and energy < 0:
                raise s.error("energy", "an uncertainty must not be negative")
            species[name] = s.build(SpeciesUncertainty, energy_J_per_mol=energy,
                                    frequency_scale_fraction=_percent(s, "frequency_scale_percent"),
                                    imaginary_frequency_fraction=_percent(s, "imaginary_frequency_percent"))
            s.reject_unknown(SPECIES_KEYS)
    settings = t.build(
        UncertaintySettings,
        samples=t.get("samples", int, KEYS.default("samples")),
        seed=t.get("seed", int, KEYS.default("seed")),
        sampling=t.get("sampling", str, KEYS.default("sampling")),
        run=t.get("run", bool, KEYS.default("run")),
        method_defaults=t.get("method_defaults", bool, KEYS.default("method_defaults")),
        species=species,
        energy_correlation=t.get("energy_correlation", float, KEYS.default("energy_correlation")),
        delta_E_down_factor=t.get("delta_E_down_factor", float, None),
        lennard_jones_sigma_fraction=_percent(t, "lennard_jones_sigma_percent"),
        lennard_jones_epsilon_fraction=_percent(t, "lennard_jones_epsilon_percent"),
        catalyst_abundance_factor=t.get("catalyst_abundance_factor", float, None),
        sensitivity_step=t.get("sensitivity_step", float, KEYS.default("sensitivity_step")))
    t.reject_unknown(KEYS)
    return settings
