"""The ``[[comparison]]`` section of a study file: bare against catalysed routes.

Example (H2CO3 -> CO2 + H2O, bare and with one or two waters)::

    [[comparison]]
    name = "upper atmosphere, dry"
    reference = "bare"                     # the bare (unimolecular) channel
    assisted = ["one_water", "two_water", "via_dimer"]
    catalyst = "H2O"                       # species name of the catalyst monomer
    catalyst_dimer = "H2O_dimer"           # optional: its abundance from 2 X <=> X2
    substrate = "H2CO3"                    # optional: default the reference's reactant
    mixing_ratio = [2e-6, 5e-6]            # the catalyst abundance, exactly one of:
    total_pressure_bar = 0.01              #   number_density_per_cm3
                                           #   partial_pressure_Pa / partial_pressure_bar
                                           #   mixing_ratio (with total_pressure_bar or _Pa)
                                           #   relative_humidity_percent (with over = "liquid"|"ice")
    temperature_K = [150, 160, 170, 180, 190, 200]   # optional: overrides [conditions]
    abundance_labels = ["2 ppmv", "5 ppmv"]           # optional: one name per abundance
    description = "free text"                          # optional

Each abundance key takes a number or a list (several scenarios); with a mixing
ratio, ``total_pressure_*`` is a number or a list of the same length. Every key is
listed in :data:`COMPARISON_KEYS` (from which ``docs/study-file.md`` is generated).

Checks (each failure is a one-line InputError naming the file and key):
unknown channels or species; a reference that is not the unimolecular
reaction of the substrate; assisted channels whose reactants are not the
substrate plus one or two catalyst molecules (or the dimer) or whose atoms do
not balance with the substrate plus the catalysts; a dimer that is not two
catalysts; negative abundances; relative humidity below 0 (above 100 % is
accepted with a logged warning: supersaturation) or for a catalyst that is
not water.
"""

from __future__ import annotations

import logging
from collections import Counter

from tstrate.errors import InputError
from tstrate.io.keys import Key, Keys
from tstrate.io.study import check_balance
from tstrate.io.tables import Table
from tstrate.physics.catalysis import CatalystAbundance, Comparison, classify_route
from tstrate.physics.humidity import PHASES, Abundance
from tstrate.units import PRESSURE_UNITS_PA

log = logging.getLogger(__name__)

#: keys that give the catalyst abundance (exactly one per comparison)
ABUNDANCE_KEYS = ("number_density_per_cm3", "partial_pressure_Pa", "partial_pressure_bar",
                  "mixing_ratio", "relative_humidity_percent")
_ONE_ABUNDANCE = "exactly one of the five abundance keys"
_TOTAL = "with `mixing_ratio`: one of `total_pressure_bar` / `total_pressure_Pa`"
COMPARISON_KEYS = Keys(
    ("comparison", "[]"), "[[comparison]]",
    "One table per comparison of a bare route with routes assisted by one or two catalyst molecules "
    "(usually water) or the catalyst dimer, at given catalyst abundances. The reference must be the "
    "unimolecular channel of the substrate; each assisted channel's reactants must be the substrate "
    "plus one or two catalysts (or the dimer) and balance with them. Each abundance key takes a number "
    "or a list (several scenarios); a relative humidity above 100 % is accepted with a warning "
    "(supersaturation).", (
        Key("name", "string", "label of the comparison (unique)", required=True),
        Key("description", "string", "free text for the report", default=""),
        Key("reference", "string", "the bare channel: the substrate's unimolecular reaction", required=True),
        Key("assisted", "list of strings", "the catalysed channels (each listed once)", required=True),
        Key("catalyst", "string", "species name of the catalyst monomer (a minimum)", required=True),
        Key("catalyst_dimer", "string", "species name of the catalyst dimer; its abundance follows from the "
            "equilibrium 2 X <=> X2"),
        Key("substrate", "string", "species name of the substrate", default_text="the reference "
            "channel's reactant"),
        Key("number_density_per_cm3", "number or list of numbers", "catalyst number density",
            required=_ONE_ABUNDANCE, unit="cm-3"),
        Key("partial_pressure_Pa", "number or list of numbers", "catalyst partial pressure",
            required=_ONE_ABUNDANCE, unit="Pa"),
        Key("partial_pressure_bar", "number or list of numbers", "catalyst partial pressure",
            required=_ONE_ABUNDANCE, unit="bar"),
        Key("mixing_ratio", "number or list of numbers", "catalyst mole fraction (5e-6 for 5 ppmv), with a "
            "total pressure", required=_ONE_ABUNDANCE, unit="mol/mol"),
        Key("relative_humidity_percent", "number or list of numbers", "relative humidity (water only), with "
            "`over`", required=_ONE_ABUNDANCE, unit="%"),
        Key("total_pressure_bar", "number or list of numbers", "total pressure for `mixing_ratio`: one value "
            "or one per mixing ratio", required=_TOTAL, unit="bar"),
        Key("total_pressure_Pa", "number or list of numbers", "the same in pascal", required=_TOTAL, unit="Pa"),
        Key("over", "string", "the phase the saturation pressure refers to (Murphy and Koop 2005)",
            required="with `relative_humidity_percent`", choices=PHASES),
        Key("temperature_K", "number or list of numbers", "temperatures of this comparison",
            default_text="`[conditions] temperature_K`", unit="K"),
        Key("abundance_labels", "list of strings", "one name per abundance, for tables and plots"),
    ))


def _numbers(t: Table, key: str) -> list[float]:
    """A number or a non-empty list of numbers."""
    value = t.data.get(key)
    if isinstance(value, list):
        return t.number_list(key, min_length=1)
    return [t.get(key, float)]


def _is_water(sp) -> bool:
    return sp.atom_counts == Counter({"H": 2, "O": 1}) and sp.charge == 0


def _abundances(t: Table, catalyst_name: str, catalyst) -> tuple[CatalystAbundance, ...]:
    given = [k for k in ABUNDANCE_KEYS if k in t]
    if not given:
        raise t.error(None, "no catalyst abundance given",
                      hint="give one of " + ", ".join(ABUNDANCE_KEYS))
    if len(given) > 1:
        raise t.error(given[1], f"give the catalyst abundance one way only (also found {given[0]})")
    key = given[0]
    values = _numbers(t, key)
    for i, v in enumerate(values):
        if v < 0:
            raise t.error(key, f"abundance must not be negative, got {v:g}")
    for extra in ("total_pressure_bar", "total_pressure_Pa"):
        if extra in t and key != "mixing_ratio":
            raise t.error(extra, "a total pressure is only used with mixing_ratio")
    if "over" in t and key != "relative_humidity_percent":
        raise t.error("over", "'over' is only used with relative_humidity_percent")

    totals: list[float | None] = [None] * len(values)
    phase = "liquid"
    if key == "number_density_per_cm3":
        abund = [Abundance.from_number_density_cm3(v, species=catalyst_name) for v in values]
    elif key in ("partial_pressure_Pa", "partial_pressure_bar"):
        factor = PRESSURE_UNITS_PA[key.rsplit("_", 1)[1]]
        abund = [Abundance.from_partial_pressure_Pa(v * factor, species=catalyst_name) for v in values]
    elif key == "mixing_ratio":
        for i, v in enumerate(values):
            if v > 1:
                raise t.error(key, f"mixing ratio must not exceed 1 mol/mol, got {v:g}",
                              hint="give a mole fraction, e.g. 5e-6 for 5 ppmv")
        pkeys = [k for k in ("total_pressure_bar", "total_pressure_Pa") if k in t]
        if not pkeys:
            raise t.error(key, "a mixing ratio needs total_pressure_bar (or total_pressure_Pa)")
        if len(pkeys) > 1:
            raise t.error(pkeys[1], "give the total pressure one way only")
        pkey = pkeys[0]
        p = [x * PRESSURE_UNITS_PA[pkey.rsplit("_", 1)[1]] for x in _numbers(t, pkey)]
        if any(x <= 0 for x in p):
            raise t.error(pkey, "total pressure must be positive")
        if len(p) == 1:
            p = p * len(values)
        elif len(values) == 1:
            values = values * len(p)
        elif len(p) != len(values):
            raise t.error(pkey, f"{len(p)} total pressures for {len(values)} mixing ratios",
                          hint="give one total pressure or one per mixing ratio")
        totals = list(p)
        abund = [Abundance.from_mixing_ratio(v, species=catalyst_name) for v in values]
    else:  # relative humidity
        if not _is_water(catalyst):
            raise t.error(key, f"relative humidity is defined for water; catalyst {catalyst_name!r} "
                               f"is {catalyst.formula}", hint="give a partial pressure or mixing ratio")
        if "over" not in t:
            raise t.error("over", "relative humidity needs over = \"liquid\" or \"ice\"")
        phase = t.get("over", str)
        if phase not in PHASES:
            raise t.error("over", f"unknown phase {phase!r}", hint="use \"liquid\" or \"ice\"")
        for v in values:
            if v > 100:
                log.warning("%s [%s]: relative humidity %g %% over %s is supersaturated",
                            t.file, t.key(key), v, phase)
        abund = [Abundance.from_relative_humidity(v, phase=phase) for v in values]

    labels = [""] * len(abund)
    if "abundance_labels" in t:
        labels = t.string_list("abundance_labels")
        if len(labels) != len(abund):
            raise t.error("abundance_labels", f"{len(labels)} labels for {len(abund)} abundances")
    try:
        return tuple(CatalystAbundance(a, total, lab) for a, total, lab in zip(abund, totals, labels))
    except InputError as exc:
        raise exc.located(file=t.file, field=t.key(key)) from None


def _read_one(t: Table, study) -> Comparison:
    file = t.file
    name = t.get("name", str)
    channels = {c.name: c for c in study.channels}
    species = study.species

    def channel(key: str, value: str):
        if value not in channels:
            raise t.error(key, f"unknown channel {value!r}", hint="add it as a [[channel]]")
        return channels[value]

    def known_species(key: str, value: str):
        if value not in species:
            raise t.error(key, f"unknown species {value!r}", hint="add it to [species]")
        if species[value].kind != "minimum":
            raise t.error(key, f"species {value!r} is a transition state")
        return species[value]

    ref = channel("reference", t.get("reference", str))
    assisted_names = t.string_list("assisted")
    if not assisted_names:
        raise t.error("assisted", "list at least one assisted channel")
    dup = [n for n, k in Counter(assisted_names).items() if k > 1]
    if dup:
        raise t.error("assisted", f"channel {dup[0]!r} listed twice")
    catalyst = t.get("catalyst", str)
    cat_sp = known_species("catalyst", catalyst)
    substrate = t.get("substrate", str, COMPARISON_KEYS.default("substrate"))
    if substrate is None:
        if len(ref.reactants) != 1:
            raise t.error("reference", f"reference channel {ref.name!r} has "
                          f"{len(ref.reactants)} reactants; the bare route must be unimolecular")
        substrate = ref.reactants[0]
    else:
        known_species("substrate", substrate)
    if tuple(ref.reactants) != (substrate,):
        raise t.error("reference", f"reference channel {ref.name!r} has reactants "
                      f"{' + '.join(ref.reactants)}; the bare route must be {substrate} -> products")
    if substrate == catalyst:
        raise t.error("catalyst", "the catalyst and the substrate are the same species")
    dimer = t.get("catalyst_dimer", str, COMPARISON_KEYS.default("catalyst_dimer"))
    if dimer is not None:
        known_species("catalyst_dimer", dimer)
        check_balance(f"catalyst dimer {dimer!r}", [catalyst, catalyst], [dimer], species,
                      file=file, field=t.key("catalyst_dimer"))

    abundances = _abundances(t, catalyst, cat_sp)
    routes = []
    for i, cname in enumerate(assisted_names):
        key = f"assisted[{i}]"
        ch = channel(key, cname)
        if cname == ref.name:
            raise t.error(key, f"channel {cname!r} is the reference itself")
        try:
            route = classify_route(ch, substrate, catalyst, dimer)
        except InputError as exc:
            raise InputError(exc.problem, file=file, field=t.key(key), hint=exc.hint) from None
        expected = [substrate] + [catalyst] * route.catalyst_count
        check_balance(f"assisted channel {cname!r}", list(ch.reactants), expected, species,
                      file=file, field=t.key(key))
        leftover = Counter(ch.products) - Counter({catalyst: route.catalyst_count})
        if Counter(ref.products) != leftover:
            log.warning("%s [%s]: products of %r (%s) are not those of %r plus the catalyst(s)",
                        file, t.key(key), cname, " + ".join(ch.products), ref.name)
        routes.append(route)

    temps = None
    if "temperature_K" in t:
        temps = _numbers(t, "temperature_K")
        if any(x <= 0 for x in temps):
            raise t.error("temperature_K", "temperatures must be positive (kelvin)")
        temps = tuple(temps)
    description = t.get("description", str, COMPARISON_KEYS.default("description"))
    t.reject_unknown(COMPARISON_KEYS)
    return Comparison(name=name, reference=ref.name, assisted=tuple(routes), substrate=substrate,
                      catalyst=catalyst, abundances=abundances, catalyst_dimer=dimer,
                      temperature_K=temps, description=description)


def read_comparisons(table: Table, study) -> tuple[Comparison, ...]:
    """Read and validate every ``[[comparison]]`` of a study file.

    ``table`` is the whole parsed study file, ``study`` the study read so far (species and
    channels). Returns the comparisons in file order (stored in ``Study.sections["comparison"]``).
    """
    out = [_read_one(ct, study) for ct in table.tables("comparison")]
    names = [c.name for c in out]
    dup = [n for n, k in Counter(names).items() if k > 1]
    if dup:
        raise table.error("comparison", f"comparison name {dup[0]!r} used twice")
    return tuple(out)
