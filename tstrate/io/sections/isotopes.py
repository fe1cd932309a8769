"""The optional ``[isotopes]`` section of a study file: isotopologues of the whole study.

    [isotopes]
    temperature_K = [200, 250, 300]          # optional; default the study's temperatures
    fractionation = [["CO2", "H2O"]]         # equilibrium fractionation alpha = beta_A / beta_B

    [[isotopes.substitution]]
    isotope = "D"                            # D, 13C, 15N, 17O, 18O, 33S, 34S, 36S, ... (masses from
                                             # the periodic-table library)
    mode = "all"                             # every atom of the element in every species of a channel

    [[isotopes.substitution]]
    isotope = "18O"
    mode = "atoms"
    atoms = { H2CO3 = [1], TS0 = [2], CO2 = [], H2O = [1] }   # 1-based, per species of the channel
    channels = ["bare"]

    [[isotopes.substitution]]
    isotope = "D"
    mode = "each"                            # one KIE per set of equivalent positions of each reactant;
                                             # the atom is found in the TS and products by their bonds

Beta factors (trace, a single substitution at each set of equivalent positions) are computed for
every minimum holding the element, whatever the mode. Every species the substitutions touch must
carry a ``[hessian]``.
"""

from __future__ import annotations

from tstrate.io.keys import Key, Keys
from tstrate.physics.isotopes import isotope_label, parse_isotope
from tstrate.study.isotopes import MODES, IsotopeSettings, Substitution

KEYS = Keys(("isotopes",), "[isotopes]", "Isotopologues of the study: beta factors of every species, kinetic "
            "isotope effects of the channels, equilibrium fractionation and three-isotope exponents "
            "(harmonic, mass-dependent by construction).", (
                Key("temperature_K", "list of numbers", "temperatures of the isotope tables",
                    default_text="the study's temperatures", unit="K"),
                Key("fractionation", "list of strings", "pairs `[\"A\", \"B\"]` of species (a list of two-name "
                    "lists): alpha = beta_A / beta_B for every isotope both hold"),
                Key("pools", "table", "named pools of species in exchange equilibrium, each with the mole "
                    "fractions of its members (`pools = { water = { H2O = 0.99, \"(H2O)2\" = 0.01 } }`); a "
                    "fractionation pair may name a pool: its beta is the atom-weighted mean of its members'"),
                Key("substitution", "array of tables", "the isotopes (`[[isotopes.substitution]]` below)",
                    required=True),
            ))
POOL_KEYS = Keys(("isotopes", "pools"), "pools = { ... }", "Pools of species for fractionation.",
                 any_key=Key("<pool name>", "table", "species name -> mole fraction in the pool (positive; "
                             "normalised to 1)"))
POOL_MEMBER_KEYS = Keys(("isotopes", "pools", "*"), "pools.<pool name> = { ... }",
                        "The members of one pool.",
                        any_key=Key("<species name>", "number", "mole fraction of the species in the pool "
                                    "(positive; the fractions are normalised to 1)", unit="1"))
SUBSTITUTION_KEYS = Keys(("isotopes", "substitution", "[]"), "[[isotopes.substitution]]",
                         "One isotope. Two substitutions of one element with the same placement (e.g. 17O "
                         "and 18O) also give the three-isotope exponents.", (
                             Key("isotope", "string", "mass number and element, `13C`, `18O`, `34S`, or `D`; "
                                 "any isotope RDKit's periodic table knows", required=True),
                             Key("label", "string", "name in the tables", default_text="the isotope"),
                             Key("mode", "string", "`all`: every atom of the element in every species of a "
                                 "channel; `atoms`: the atoms listed in `atoms`; `each`: a single substitution at "
                                 "each set of equivalent positions of each reactant, one KIE per position, the "
                                 "atom followed into the other stationary points by their bonds", default="all", choices=MODES),
                             Key("atoms", "table", "species name -> list of 1-based atom numbers to substitute "
                                 "(mode `atoms`); give the corresponding atom in every species of the channel "
                                 "(the heavy atoms must balance)"),
                             Key("channels", "list of strings", "channels whose KIE is computed",
                                 default_text="every channel"),
                         ))

ATOMS_KEYS = Keys(("isotopes", "substitution", "[]", "atoms"), "atoms = { ... }",
                  "The atoms of a substitution with mode `atoms`, per species (quote names with dots).",
                  any_key=Key("<species name>", "list of numbers", "1-based atom numbers in the species' "
                              "`geometry`; an empty list leaves it light", unit="1"))


def read_isotopes(table, study) -> IsotopeSettings:
    import numpy as np

    t = table.table("isotopes")
    temps = t.number_list("temperature_K", None)
    if temps is not None and (not temps or min(temps) <= 0):
        raise t.error("temperature_K", "temperatures must be positive (kelvin)")
    pools = {}
    if "pools" in t:
        pt = t.table("pools")
        for name in list(pt.data):
            if name in study.species:
                raise pt.error(name, f"pool {name!r} has the name of a species", hint="name it differently")
            mt = pt.table(name)
            members = {}
            for sp in list(mt.data):
                if sp not in study.species:
                    raise mt.error(sp, f"unknown species {sp!r}", hint="add it to [species]")
                x = mt.get(sp, float)
                if not (x > 0 and x < float("inf")):
                    raise mt.error(sp, f"mole fraction must be positive, got {x!r}")
                members[sp] = x
            if not members:
                raise pt.error(name, "a pool needs at least one species")
            total = sum(members.values())
            pools[name] = {k: v / total for k, v in members.items()}
            mt.reject_unknown(POOL_MEMBER_KEYS)
        pt.reject_unknown(POOL_KEYS)
    pairs = []
    raw = t.get("fractionation", list, [])
    for i, pair in enumerate(raw):
        if (not isinstance(pair, list) or len(pair) != 2 or not all(isinstance(x, str) for x in pair)):
            raise t.error(f"fractionation[{i}]", "expected a pair of species names, [\"A\", \"B\"]")
        for x in pair:
            if x not in study.species and x not in pools:
                raise t.error(f"fractionation[{i}]", f"unknown species {x!r}", hint="add it to [species]")
        pairs.append((pair[0], pair[1]))
    subs, labels = [], set()
    channels = {c.name for c in study.channels}
    tables = t.tables("substitution")
    if not tables:
        raise t.error("substitution", "give at least one [[isotopes.substitution]]")
    for st in tables:
        name = st.get("isotope", str)
        element, a = st.build(parse_isotope, name)
        label = st.get("label", str, isotope_label(element, a))
        if label in labels:
            raise st.error("label", f"label {label!r} used twice")
        labels.add(label)
        mode = st.get("mode", str, SUBSTITUTION_KEYS.default("mode"))
        atoms = {}
        if "atoms" in st:
            at = st.table("atoms")
            for sp in list(at.data):
                if sp not in study.species:
                    raise at.error(sp, f"unknown species {sp!r}", hint="add it to [species]")
                nums = at.get(sp, list)
                if not all(isinstance(n, int) and not isinstance(n, bool) and n >= 1 for n in nums):
                    raise at.error(sp, "expected a list of 1-based atom numbers")
                atoms[sp] = tuple(n - 1 for n in nums)
            at.reject_unknown(ATOMS_KEYS)
        chans = tuple(st.string_list("channels", []))
        for c in chans:
            if c not in channels:
                raise st.error("channels", f"unknown channel {c!r}")
        st.reject_unknown(SUBSTITUTION_KEYS)
        subs.append(st.build(Substitution, label, element, a, mode, atoms, chans))
    t.reject_unknown(KEYS)
    return IsotopeSettings(tuple(subs), tuple(pairs), None if temps is None else np.array(temps), pools)
