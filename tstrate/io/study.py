"""Study files (TOML, tstrate's own format): species, channels, conditions.

Every key a study file may hold is listed, with its type, default, unit and meaning, in the
:class:`~tstrate.io.keys.Keys` tables of this module and of :mod:`tstrate.io.sections`; the user
page ``docs/study-file.md`` is generated from them (``python -m tstrate.io.docs --write docs/``).

Further sections (``[[comparison]]``, falloff and excitation settings, fits)
are read by the modules listed in :data:`SECTION_READERS`; each gets the whole
parsed file and the species and returns a validated object stored in
``Study.sections``.
"""

from __future__ import annotations

import importlib
from collections import Counter
from pathlib import Path

import numpy as np

from tstrate.errors import InputError
from tstrate.io.keys import Key, Keys, field_default
from tstrate.io.species import read_species
from tstrate.io.tables import Table, load_toml
from tstrate.model import TUNNELLING_FLOORS, TUNNELLING_MODELS, Channel, Conditions, Study
from tstrate.physics.collisions import BATH_GASES
from tstrate.units import DEFAULT_RATE_UNIT, PRESSURE_UNITS_PA, RATE_UNITS

#: top-level section -> "module:function" that reads it (called with (table, study) -> object)
SECTION_READERS: dict[str, str] = {"comparison": "tstrate.io.sections.comparison:read_comparisons",
                                  "falloff": "tstrate.io.sections.pressure:read_falloff",
                                  "excitation": "tstrate.io.sections.pressure:read_excitations",
                                  "fits": "tstrate.io.sections.fits:read_fit_options",
                                  "isotopes": "tstrate.io.sections.isotopes:read_isotopes",
                                  "uncertainty": "tstrate.io.sections.uncertainty:read_uncertainty",
                                  "reference_rate": "tstrate.io.sections.references:read_reference_rates",
                                  "association": "tstrate.io.sections.association:read_associations"}

_ORDER_NAMES = {"unimolecular": 1, "bimolecular": 2, "termolecular": 3}
#: the keys that give the pressures of [conditions] (at most one)
PRESSURE_KEYS = ("pressure_bar", "pressure_Pa", "pressure_Torr", "number_density_per_cm3")

# ---- the keys of a study file ---------------------------------------------------------

STUDY_KEYS = Keys((), "top level", "A study names its species files and links them by channels; the "
                  "other sections are optional.", (
                      Key("title", "string", "title of the study (report, output folder)",
                          default_text="the file name without `.toml`"),
                      Key("species", "table", "species name -> species file (`[species]` below)", required=True),
                      Key("conditions", "table", "temperatures, pressures, bath gas, output units "
                          "(`[conditions]` below)", required=True),
                      Key("channel", "array of tables", "the elementary channels (`[[channel]]` below)"),
                      Key("comparison", "array of tables", "bare against catalysed routes "
                          "(`[[comparison]]` below)"),
                      Key("falloff", "table", "pressure dependence of unimolecular channels "
                          "(`[falloff]` below)"),
                      Key("excitation", "array of tables", "energised molecules (`[[excitation]]` below)"),
                      Key("association", "array of tables", "barrierless associations A + B (+ M) -> AB, "
                          "from a given k_inf(T) (`[[association]]` below)"),
                      Key("fits", "table", "how rate constants are fitted and exported (`[fits]` below)"),
                      Key("isotopes", "table", "isotopologues: beta factors, kinetic isotope effects, "
                          "fractionation (`[isotopes]` below)"),
                      Key("uncertainty", "table", "how sure each number is: input uncertainties and "
                          "sampling (`[uncertainty]` below)"),
                      Key("reference_rate", "array of tables", "evaluated or measured rate expressions to "
                          "compare with (`[[reference_rate]]` below)"),
                  ))
SPECIES_MAP_KEYS = Keys(("species",), "[species]",
                        "One line per species: the name the study uses (quote names with dots or "
                        "parentheses, `\"H2CO3.H2O\" = ...`) and its [species file](species-file.md).",
                        any_key=Key("<species name>", "string, list of strings or table",
                                    "path of the species file, relative to the study file; or a conformer "
                                    "ensemble: a list of species files, one per conformer (labelled by "
                                    "their file names without `.toml`), or a table label -> species file "
                                    "(`H2CO3 = { cis_cis = \"h2co3.toml\", cis_trans = \"h2co3_ct.toml\" "
                                    "}`). The conformers are Boltzmann-weighted, each with its own energy, "
                                    "symmetry number and optical isomers; the lowest (ZPE-inclusive) is the "
                                    "reference. Count each well once: no conformer that differs from "
                                    "another only along a torsion treated as a hindered or free rotor",
                                    required="at least one species"))
CONDITIONS_KEYS = Keys(("conditions",), "[conditions]", "The grid every step is computed on.", (
    Key("temperature_K", "list of numbers", "temperatures, each positive", required=True, unit="K"),
    Key("pressure_bar", "list of numbers", "total pressures, for falloff and energised molecules",
        required="at most one of the four pressure keys", unit="bar"),
    Key("pressure_Pa", "list of numbers", "the same in pascal", required="at most one of the four pressure keys",
        unit="Pa"),
    Key("pressure_Torr", "list of numbers", "the same in Torr", required="at most one of the four pressure keys",
        unit="Torr"),
    Key("number_density_per_cm3", "list of numbers", "bath-gas number densities instead of pressures",
        required="at most one of the four pressure keys", unit="cm-3"),
    Key("bath_gas", "string", "the collision partner of falloff; a built-in name (case-insensitive)",
        choices=tuple(BATH_GASES), choices_note="or the name of a species of the study whose file gives "
        "`lennard_jones`"),
    Key("standard_pressure", "string", "standard state of entropies, Gibbs energies, Kp and activation "
        "quantities: \"1 bar\" or \"1 atm\" (rate constants do not depend on it)", default="1 bar"),
    Key("rate_units", "table", "units of the rate constants written out (`[conditions.rate_units]` below)",
        default_text=", ".join(DEFAULT_RATE_UNIT.values()) + " (by molecularity)"),
))
RATE_UNITS_KEYS = Keys(("conditions", "rate_units"), "[conditions.rate_units]",
                       "Output units by molecularity, e.g. `rate_units = { bimolecular = \"L mol-1 s-1\" }`; "
                       "inside, rate constants are SI per molecule.", tuple(
                           Key(word, "string", f"unit of the rate constants of {word} channels",
                               default=DEFAULT_RATE_UNIT[order],
                               choices=[u for u, (o, _) in RATE_UNITS.items() if o == order])
                           for word, order in _ORDER_NAMES.items()))
CHANNEL_KEYS = Keys(("channel", "[]"), "[[channel]]",
                    "One table per elementary channel, reactants -> [complex] -> transition state -> "
                    "products. Atoms and charge must balance across reactants, complex, transition state, "
                    "product complex and products.", (
                        Key("name", "string", "label of the channel (unique)", required=True),
                        Key("reactants", "list of strings", "species names; repeat a name for two molecules "
                            "(1 to 3 reactants)", required=True),
                        Key("transition_state", "string", "species name of the saddle point (`kind = "
                            "\"transition_state\"`)", required=True),
                        Key("products", "list of strings", "species names", required=True),
                        Key("complex", "string", "a pre-reactive complex between reactants and transition "
                            "state (a minimum), in equilibrium with the reactants"),
                        Key("tunnelling", "string", "tunnelling correction",
                            default=field_default(Channel, "tunnelling"), choices=TUNNELLING_MODELS),
                        Key("degeneracy", "number", "reaction-path degeneracy; overrides the count from the "
                            "symmetry numbers", default_text="from the symmetry numbers", unit="1"),
                        Key("tunnelling_floor", "string", "where the tunnelling integral starts in a channel "
                            "with a complex: no tunnelling below the separated reactants, or down to the "
                            "complex", default=field_default(Channel, "tunnelling_floor"),
                            choices=TUNNELLING_FLOORS),
                        Key("product_complex", "string", "a minimum between transition state and products "
                            "(reached downhill from the saddle point); the reverse barrier of the tunnelling "
                            "model is measured from it instead of from the separated products",
                            default_text="none: the reverse barrier from the separated products"),
                        Key("accept_large_energy_differences", "true or false", "accept a barrier, reaction "
                            "or complexation energy beyond +/-2000 kJ/mol, which is otherwise refused as an "
                            "energy on the wrong scale (hartree given as kJ/mol, another molecule's file)",
                            default=False),
                    ))

#: largest |barrier|, |reaction energy| or |complexation energy| of a channel accepted unless the
#: channel opts in [J/mol]: far above any chemical barrier, far below the mismatch of an energy in
#: the wrong unit or from another molecule (hundreds of thousands of kJ/mol)
MAX_CHANNEL_ENERGY_J_PER_MOL = 2.0e6


def check_energy_scale(t: Table, name: str, reactants, ts, products, cx, pcx, species) -> None:
    """Refuse energies of a channel's species that are on different scales: a barrier, reaction or
    complexation energy beyond :data:`MAX_CHANNEL_ENERGY_J_PER_MOL`. The error names the species
    file whose energy is out of scale (the one whose removal leaves the others consistent)."""
    def total(names):
        values = [species[n].energy_J_per_mol for n in names]
        return None if any(v is None for v in values) else float(sum(values))

    limit = MAX_CHANNEL_ENERGY_J_PER_MOL
    groups = {"reactants": list(reactants), "transition state": [ts], "products": list(products)}
    if cx is not None:
        groups["complex"] = [cx]
    if pcx is not None:
        groups["product complex"] = [pcx]
    energies = {k: total(v) for k, v in groups.items()}
    if any(v is None for v in energies.values()):
        return
    keys = list(energies)
    bad_pairs = [(a, b) for i, a in enumerate(keys) for b in keys[i + 1:]
                 if abs(energies[a] - energies[b]) > limit]
    if not bad_pairs:
        return
    # the group present in every bad pair is the odd one out
    culprit = None
    for k in keys:
        if all(k in pair for pair in bad_pairs):
            culprit = k
            break
    a, b = bad_pairs[0]
    diff = (energies[b] - energies[a]) / 1e3
    if culprit is None:
        raise t.error("accept_large_energy_differences",
                      f"channel {name!r}: the energies of {a} and {b} differ by {diff:.6g} kJ/mol, beyond "
                      f"+/-{limit / 1e3:g} kJ/mol; the species files' energies are on different scales",
                      hint="check every species file's energy value and unit")
    names = groups[culprit]
    other = b if a == culprit else a
    sp = species[names[0]]
    raise InputError(f"channel {name!r}: the energy of {culprit} {', '.join(repr(n) for n in names)} lies "
                     f"{abs(energies[culprit] - energies[other]) / 1e3:.6g} kJ/mol from the {other}, beyond "
                     f"+/-{limit / 1e3:g} kJ/mol: out of scale with the other species (a value in hartree "
                     "given as kJ/mol, or another molecule's energy?)",
                     file=sp.source, field="energy",
                     hint=f"check the energy and its unit; if it is right, set accept_large_energy_differences = "
                          f"true in channel {name!r}")


#: largest total pressure accepted [Pa] (1e4 bar) and bath-gas number density [m^-3] (liquid-like)
MAX_PRESSURE_PA = 1.0e9
MAX_NUMBER_DENSITY_M3 = 1.0e29


def _read_conditions(t: Table) -> Conditions:
    temps = np.array(t.number_list("temperature_K", min_length=1))
    if np.any(temps <= 0):
        raise t.error("temperature_K", "temperatures must be positive (kelvin)")
    from tstrate.arrays import MAX_TEMPERATURE_K

    if np.max(temps) > MAX_TEMPERATURE_K:
        raise t.error("temperature_K", f"temperature {np.max(temps):g} K is above {MAX_TEMPERATURE_K:g} K, "
                                       "where no molecule survives")
    pressures = np.zeros(0)
    densities = np.zeros(0)
    given = [k for k in PRESSURE_KEYS if k in t]
    if len(given) > 1:
        raise t.error(given[1], f"give pressures one way only (also found {given[0]})")
    if given:
        key = given[0]
        vals = np.array(t.number_list(key, min_length=1))
        if np.any(vals <= 0):
            raise t.error(key, "pressures must be positive")
        if key == "number_density_per_cm3":
            densities = vals * 1e6  # [m^-3]
            if np.max(densities) > MAX_NUMBER_DENSITY_M3:
                raise t.error(key, f"a number density of {np.max(vals):g} cm-3 is beyond a gas "
                                   f"({MAX_NUMBER_DENSITY_M3 / 1e6:g} cm-3 accepted)")
        else:
            unit = key.split("_", 1)[1]
            pressures = vals * PRESSURE_UNITS_PA[unit]
            if np.max(pressures) > MAX_PRESSURE_PA:
                raise t.error(key, f"a pressure of {np.max(vals):g} {unit} is beyond a gas "
                                   f"({MAX_PRESSURE_PA / 1e5:g} bar accepted)")
    bath = t.get("bath_gas", str, CONDITIONS_KEYS.default("bath_gas"))
    rate_units = {}
    if "rate_units" in t:
        rt = t.table("rate_units")
        for key in list(rt.data):
            if key not in _ORDER_NAMES:
                raise rt.error(key, "unknown molecularity", hint="use unimolecular, bimolecular or termolecular")
            unit = rt.get(key, str)
            if unit not in RATE_UNITS or RATE_UNITS[unit][0] != _ORDER_NAMES[key]:
                ok = [u for u, (o, _) in RATE_UNITS.items() if o == _ORDER_NAMES[key]]
                raise rt.error(key, f"unknown {key} rate unit {unit!r}", hint="use one of " + ", ".join(ok))
            rate_units[_ORDER_NAMES[key]] = unit
        rt.reject_unknown(RATE_UNITS_KEYS)
    from tstrate.units import STANDARD_PRESSURES_PA

    p0_name = t.get("standard_pressure", str, CONDITIONS_KEYS.default("standard_pressure"))
    if " ".join(p0_name.split()).lower() not in STANDARD_PRESSURES_PA:
        raise t.error("standard_pressure", f"unknown standard pressure {p0_name!r}",
                      hint='use "1 bar" or "1 atm"')
    t.reject_unknown(CONDITIONS_KEYS)
    return Conditions(temperature_K=temps, pressure_Pa=pressures, number_density_m3=densities,
                      bath_gas=bath, rate_units=rate_units,
                      standard_pressure_Pa=STANDARD_PRESSURES_PA[" ".join(p0_name.split()).lower()])


def _balance(names, species) -> tuple[Counter, int]:
    atoms: Counter = Counter()
    charge = 0
    for n in names:
        atoms += species[n].atom_counts
        charge += species[n].charge
    return atoms, charge


def check_balance(label: str, left: list[str], right: list[str], species, *, file, field) -> None:
    """Atoms and charge of ``left`` and ``right`` species lists must agree."""
    la, lc = _balance(left, species)
    ra, rc = _balance(right, species)
    if la != ra:
        def fmt(c):
            return " ".join(f"{k}{v}" for k, v in sorted(c.items()))
        raise InputError(f"{label}: atoms do not balance ({fmt(la)} vs {fmt(ra)})", file=file, field=field)
    if lc != rc:
        raise InputError(f"{label}: charge does not balance ({lc} vs {rc})", file=file, field=field)


def _read_channel(t: Table, species: dict, file: str) -> Channel:
    name = t.get("name", str)

    def known(key, value):
        if value not in species:
            raise t.error(key, f"unknown species {value!r}", hint="add it to [species]")
        return value

    reactants = [known("reactants", r) for r in t.string_list("reactants")]
    products = [known("products", p) for p in t.string_list("products")]
    ts = known("transition_state", t.get("transition_state", str))
    if species[ts].kind != "transition_state":
        raise t.error("transition_state", f"species {ts!r} is not declared kind = \"transition_state\"")
    cx = t.get("complex", str, CHANNEL_KEYS.default("complex"))
    if cx is not None:
        known("complex", cx)
        if species[cx].kind != "minimum":
            raise t.error("complex", f"species {cx!r} is not a minimum")
    pcx = t.get("product_complex", str, CHANNEL_KEYS.default("product_complex"))
    if pcx is not None:
        known("product_complex", pcx)
        if species[pcx].kind != "minimum":
            raise t.error("product_complex", f"species {pcx!r} is not a minimum")
    for key, names in (("reactants", reactants), ("products", products)):
        for n in names:
            if species[n].kind != "minimum":
                raise t.error(key, f"species {n!r} is a transition state")
    tunnelling = t.get("tunnelling", str, CHANNEL_KEYS.default("tunnelling"))
    degeneracy = t.get("degeneracy", float, CHANNEL_KEYS.default("degeneracy"))
    floor = t.get("tunnelling_floor", str, CHANNEL_KEYS.default("tunnelling_floor"))
    if not t.get("accept_large_energy_differences", bool, CHANNEL_KEYS.default("accept_large_energy_differences")):
        check_energy_scale(t, name, reactants, ts, products, cx, pcx, species)
    t.reject_unknown(CHANNEL_KEYS)
    channel = t.build(Channel, name=name, reactants=tuple(reactants), transition_state=ts,
                      products=tuple(products), complex=cx, tunnelling=tunnelling, degeneracy=degeneracy,
                      tunnelling_floor=floor, product_complex=pcx)
    check_balance(f"channel {name!r}", reactants, [ts], species, file=file, field=t.key("transition_state"))
    check_balance(f"channel {name!r}", reactants, products, species, file=file, field=t.key("products"))
    if cx is not None:
        check_balance(f"channel {name!r}", reactants, [cx], species, file=file, field=t.key("complex"))
    if pcx is not None:
        check_balance(f"channel {name!r}", products, [pcx], species, file=file, field=t.key("product_complex"))
    return channel


def _read_species_entry(st: Table, name: str, path: Path, species_files: dict):
    """One line of [species]: a species file, or a conformer ensemble (list or table of files).
    Records every file read in ``species_files`` (a conformer's under ``name/label``)."""
    raw = st.data[name]
    if isinstance(raw, str):
        entries = [(None, raw)]
    elif isinstance(raw, list) and raw and all(isinstance(r, str) for r in raw):
        entries = [(Path(r).name.removesuffix(".toml"), r) for r in raw]
    elif isinstance(raw, dict) and raw and all(isinstance(r, str) for r in raw.values()):
        entries = list(raw.items())
    else:
        raise st.error(name, "expected a species file, a list of conformer species files or a table "
                             "label -> conformer species file")
    members = []
    for label, rel in entries:
        spath = Path(rel) if Path(rel).is_absolute() else path.parent / rel
        if not spath.exists():
            raise st.error(name, f"species file {rel!r} does not exist")
        members.append((label, read_species(spath, name=name), str(spath)))
    if len(members) == 1:
        species_files[name] = members[0][2]
        return members[0][1]
    from tstrate.physics.ensembles import build_ensemble

    labels = [lb for lb, _, _ in members]
    if len(set(labels)) != len(labels):
        raise st.error(name, f"conformer labels repeat: {labels}", hint="give a table label -> file")
    try:
        ensemble = build_ensemble(name, [(lb, sp) for lb, sp, _ in members])
    except (InputError, ValueError) as exc:
        raise st.error(name, f"conformer ensemble: {getattr(exc, 'problem', exc)}") from None
    files = {lb: f for lb, _, f in members}
    species_files[name] = files[ensemble.conformer_label]
    for c in ensemble.conformers:
        species_files[c.name] = files[c.conformer_label]
    return ensemble


def read_study(path: str | Path) -> Study:
    """Read and validate a study file and every species file it names."""
    path = Path(path)
    file = str(path)
    t = Table(load_toml(path), file)
    if not t.data:
        raise InputError("the file holds no keys (empty?)", file=file, hint="a study names [species] and [[channel]]")
    if "species" not in t and ("geometry" in t or "frequencies_cm1" in t):
        raise InputError("this is a species file, not a study file", file=file,
                         hint="a study names species files under [species] and links them by [[channel]]")
    title = t.get("title", str, path.stem)
    st = t.table("species")
    species, species_files = {}, {}
    st.reject_unknown(SPECIES_MAP_KEYS)
    for name in list(st.data):
        species[name] = _read_species_entry(st, name, path, species_files)
    if not species:
        raise st.error(None, "no species listed")
    conditions = _read_conditions(t.table("conditions"))
    channels = [_read_channel(ct, species, file) for ct in t.tables("channel")]
    names = [c.name for c in channels]
    dup = [n for n, k in Counter(names).items() if k > 1]
    if dup:
        raise t.error("channel", f"channel name {dup[0]!r} used twice")
    t.reject_unknown(STUDY_KEYS)
    reference = {}
    bath = conditions.bath_gas
    if bath is not None and bath not in species:
        from tstrate.io.reference import reference_species

        ref = reference_species(bath)
        if ref is not None:
            reference[bath] = ref
    study = Study(file=file, title=title, species=species, channels=tuple(channels),
                  conditions=conditions, species_files=species_files, reference_species=reference)
    for section, target in SECTION_READERS.items():
        if section in t.data:
            modname, func = target.split(":")
            reader = getattr(importlib.import_module(modname), func)
            study.sections[section] = reader(t, study)
    return study
