"""Study files (TOML, tstrate's own format): species, channels, conditions.

A complete example::

    title = "H2CO3 -> CO2 + H2O"

    [species]                      # name -> species file, relative to this file
    H2CO3 = "carbonic_acid/h2co3.toml"
    TS = "carbonic_acid/ts_bare.toml"
    CO2 = "carbonic_acid/co2.toml"
    H2O = "carbonic_acid/h2o.toml"

    [conditions]
    temperature_K = [150, 200, 250, 300]
    pressure_bar = [1e-5, 1e-3, 0.1, 1.0]            # for falloff (optional)
    bath_gas = "CO2"                                 # for falloff (optional)
    rate_units = { bimolecular = "cm3 molecule-1 s-1" }  # optional output units

    [[channel]]
    name = "bare"
    reactants = ["H2CO3"]
    transition_state = "TS"
    products = ["CO2", "H2O"]
    complex = "H2CO3_H2O"          # optional pre-reactive complex
    tunnelling = "eckart"          # none, wigner, skodje-truhlar, eckart
    degeneracy = 1                 # optional: overrides the symmetry-number count
    tunnelling_floor = "reactants" # or "complex" (channels with a complex)

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
from tstrate.io.species import read_species
from tstrate.io.tables import Table, load_toml
from tstrate.model import Channel, Conditions, Study
from tstrate.units import PRESSURE_UNITS_PA, RATE_UNITS

#: top-level section -> "module:function" that reads it (called with (table, study) -> object)
SECTION_READERS: dict[str, str] = {"comparison": "tstrate.io.sections.comparison:read_comparisons",
                                  "falloff": "tstrate.io.sections.pressure:read_falloff",
                                  "excitation": "tstrate.io.sections.pressure:read_excitations",
                                  "fits": "tstrate.io.sections.fits:read_fit_options"}

CORE_KEYS = {"title", "species", "conditions", "channel"}
CONDITION_KEYS = {"temperature_K", "pressure_bar", "pressure_Pa", "pressure_Torr",
                  "number_density_per_cm3", "bath_gas", "rate_units"}
_ORDER_NAMES = {"unimolecular": 1, "bimolecular": 2, "termolecular": 3}


def _read_conditions(t: Table) -> Conditions:
    temps = np.array(t.number_list("temperature_K", min_length=1))
    if np.any(temps <= 0):
        raise t.error("temperature_K", "temperatures must be positive (kelvin)")
    pressures = np.zeros(0)
    densities = np.zeros(0)
    given = [k for k in ("pressure_bar", "pressure_Pa", "pressure_Torr", "number_density_per_cm3") if k in t]
    if len(given) > 1:
        raise t.error(given[1], f"give pressures one way only (also found {given[0]})")
    if given:
        key = given[0]
        vals = np.array(t.number_list(key, min_length=1))
        if np.any(vals <= 0):
            raise t.error(key, "pressures must be positive")
        if key == "number_density_per_cm3":
            densities = vals * 1e6  # [m^-3]
        else:
            unit = key.split("_", 1)[1]
            pressures = vals * PRESSURE_UNITS_PA[unit]
    bath = t.get("bath_gas", str, None)
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
    t.reject_unknown(CONDITION_KEYS)
    return Conditions(temperature_K=temps, pressure_Pa=pressures, number_density_m3=densities,
                      bath_gas=bath, rate_units=rate_units)


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
    cx = t.get("complex", str, None)
    if cx is not None:
        known("complex", cx)
        if species[cx].kind != "minimum":
            raise t.error("complex", f"species {cx!r} is not a minimum")
    for key, names in (("reactants", reactants), ("products", products)):
        for n in names:
            if species[n].kind != "minimum":
                raise t.error(key, f"species {n!r} is a transition state")
    tunnelling = t.get("tunnelling", str, "none")
    degeneracy = t.get("degeneracy", float, None)
    floor = t.get("tunnelling_floor", str, "reactants")
    t.reject_unknown()
    channel = t.build(Channel, name=name, reactants=tuple(reactants), transition_state=ts,
                      products=tuple(products), complex=cx, tunnelling=tunnelling, degeneracy=degeneracy,
                      tunnelling_floor=floor)
    check_balance(f"channel {name!r}", reactants, [ts], species, file=file, field=t.key("transition_state"))
    check_balance(f"channel {name!r}", reactants, products, species, file=file, field=t.key("products"))
    if cx is not None:
        check_balance(f"channel {name!r}", reactants, [cx], species, file=file, field=t.key("complex"))
    return channel


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
    for name in list(st.data):
        rel = st.get(name, str)
        spath = Path(rel) if Path(rel).is_absolute() else path.parent / rel
        if not spath.exists():
            raise st.error(name, f"species file {rel!r} does not exist")
        species[name] = read_species(spath, name=name)
        species_files[name] = str(spath)
    if not species:
        raise st.error(None, "no species listed")
    conditions = _read_conditions(t.table("conditions"))
    channels = [_read_channel(ct, species, file) for ct in t.tables("channel")]
    names = [c.name for c in channels]
    dup = [n for n, k in Counter(names).items() if k > 1]
    if dup:
        raise t.error("channel", f"channel name {dup[0]!r} used twice")
    t.reject_unknown(CORE_KEYS | set(SECTION_READERS))
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
