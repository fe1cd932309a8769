"""Single substitutions at each set of equivalent positions (``mode = "each"``): the atoms are
followed from the reactants into the transition state by their bonds (tstrate.physics.atom_map),
and each position's KIE is checked against explicitly placed substitutions."""

import shutil
from pathlib import Path

import numpy as np
import pytest

from tstrate.io.study import read_study
from tstrate.physics import isotopes as iso
from tstrate.physics.atom_map import corresponding_atoms
from tstrate.physics.tst import channel_rates
from tstrate.study.isotopes import study_isotopes

DEMO = Path(__file__).resolve().parents[2] / "molecules" / "carbonic_acid"
EACH = '''
[[isotopes.substitution]]
isotope = "13C"
label = "13C each"
mode = "each"
channels = ["bare"]

[[isotopes.substitution]]
isotope = "18O"
label = "18O each"
mode = "each"
channels = ["bare"]
'''


@pytest.fixture(scope="module")
def study(tmp_path_factory):
    d = tmp_path_factory.mktemp("each") / "demo"
    shutil.copytree(DEMO, d)
    text = (d / "study.toml").read_text()
    text = text.replace("# ---- fits", EACH + "\n# ---- fits", 1)
    (d / "study.toml").write_text(text)
    return read_study(d / "study.toml")


@pytest.fixture(scope="module")
def result(study):
    return study_isotopes(study, temperature_K=[200.0, 300.0, 1000.0])


def _dist(sp, i, j):
    return float(np.linalg.norm(sp.positions_A[i] - sp.positions_A[j]))


def test_products_map_onto_the_transition_state_by_their_bonds(study):
    ts = study.species["TS0"]
    co2, h2o = study.species["CO2"], study.species["H2O"]
    m = corresponding_atoms([(co2.symbols, co2.positions_A), (h2o.symbols, h2o.positions_A)],
                            ts.symbols, ts.positions_A)
    src = list(co2.symbols) + list(h2o.symbols)
    assert sorted(m) == list(range(ts.natoms))
    assert all(ts.symbols[m[i]] == s for i, s in enumerate(src))
    # the two C=O bonds of CO2 are C-O bonds of the TS (shorter than 1.4 Angstrom)
    c = m[src.index("C")]
    assert all(_dist(ts, c, m[i]) < 1.4 for i in (0, 2) if src[i] == "O")
    # water's O-H bonds: at least one is a full bond of the TS (the other H is in transfer)
    o = m[3]
    assert min(_dist(ts, o, m[4]), _dist(ts, o, m[5])) < 1.1


def test_a_unique_atom_gives_the_explicitly_placed_substitution(result):
    # the demo's own "13C (bare, by atom)" places 13C by hand in every species of the channel
    explicit = next(s for s in result.substitutions if s.substitution.label == "13C (bare, by atom)").kie[0]
    pos = [p for p in result.positions if p.label == "13C each"]
    assert len(pos) == 1 and len(pos[0].paths) == 1
    np.testing.assert_allclose(pos[0].kie, explicit.kie, rtol=1e-12)


def test_the_carbonyl_oxygen_against_a_substitution_placed_by_geometry(study, result):
    # independent of the bond matching: the carbonyl O of H2CO3 is the O with no H within 1.2 A;
    # in the TS it is the O farthest from every H
    r, ts = study.species["H2CO3"], study.species["TS0"]
    h_r = [i for i, s in enumerate(r.symbols) if s == "H"]
    carbonyl = next(i for i, s in enumerate(r.symbols)
                    if s == "O" and min(_dist(r, i, h) for h in h_r) > 1.2)
    h_t = [i for i, s in enumerate(ts.symbols) if s == "H"]
    o_t = max((i for i, s in enumerate(ts.symbols) if s == "O"), key=lambda i: min(_dist(ts, i, h) for h in h_t))
    T = result.temperature_K
    ch = study.channel("bare")
    heavy = dict(study.species)
    heavy["H2CO3"] = iso.substituted_species(r, {carbonyl: 18}, name="H2CO3")
    heavy["TS0"] = iso.substituted_species(ts, {o_t: 18}, name="TS0")
    kie_classical = channel_rates(ch, study.species, T).k_classical / channel_rates(ch, heavy, T).k_classical
    pos = next(p for p in result.positions if p.label == "18O each" and carbonyl in p.atoms)
    assert len(pos.paths) == 1 and pos.paths[0][0] == o_t
    np.testing.assert_allclose(pos.kie_no_tunnelling, kie_classical, rtol=1e-12)


def test_equivalent_positions_that_split_in_the_transition_state_are_separate_paths(study, result):
    # cis-cis H2CO3 has two equivalent OH oxygens; in the TS one gives its H and the other leaves
    # as water: two paths, and the position's KIE is k_light over their sum
    oh = [p for p in result.positions if p.label == "18O each" and len(p.atoms) == 2]
    assert len(oh) == 1 and len(oh[0].paths) == 2
    ch = study.channel("bare")
    light = channel_rates(ch, study.species, result.temperature_K).k_classical
    k_paths = [light / f.kie_no_tunnelling for _, f in oh[0].paths]
    np.testing.assert_allclose(oh[0].kie_no_tunnelling, light / sum(k_paths), rtol=1e-12)
    # with no isotope effect each path would carry half of the light rate (path degeneracy 2 -> 1):
    # the heavy paths together stay within a few percent of the light rate at 1000 K
    assert 0.9 < oh[0].kie_no_tunnelling[-1] < 1.1


# ---- pools ------------------------------------------------------------------------------------

def test_pool_beta_is_the_atom_weighted_mean_and_a_one_member_pool_is_the_species(study, tmp_path):
    import dataclasses

    from tstrate.study.isotopes import IsotopeSettings, Substitution, pool_ln_beta

    # mass balance by hand: a pool of 1 mol H2O (2 H) and 1 mol H2CO3 (2 H) with beta 1.2 and 1.6
    # holds D in proportion 2 x 1.2 : 2 x 1.6, so its beta is (2.4 + 3.2) / 4 = 1.4
    got = pool_ln_beta({"a": np.log([1.2]), "b": np.log([1.6])}, {"a": 0.5, "b": 0.5}, {"a": 2, "b": 2})
    assert np.exp(got) == pytest.approx([1.4], rel=1e-14)
    # weights follow the atom counts: 1 mol CO2 (2 O) with beta 1.1, 1 mol H2O (1 O) with beta 1.04
    got = pool_ln_beta({"a": np.log([1.1]), "b": np.log([1.04])}, {"a": 0.5, "b": 0.5}, {"a": 2, "b": 1})
    assert np.exp(got) == pytest.approx([(2 * 1.1 + 1.04) / 3], rel=1e-14)
    settings = IsotopeSettings((Substitution("D", "H", 2),), (("waters", "H2CO3"), ("H2O", "H2CO3")),
                               None, {"waters": {"H2O": 1.0}})
    s = dataclasses.replace(study, sections={**study.sections, "isotopes": settings})
    res = study_isotopes(s, temperature_K=[250.0])
    pool, single = res.fractionation
    np.testing.assert_allclose(pool.ln_alpha, single.ln_alpha, rtol=1e-14)


def test_pools_in_a_study_file_and_their_refusals(tmp_path):
    from tstrate.errors import InputError

    d = tmp_path / "demo"
    shutil.copytree(DEMO, d)
    text = (d / "study.toml").read_text()
    for pools, ok in (('pools = { water = { H2O = 3, "(H2O)2" = 1 } }', True),
                      ('pools = { water = { H2O = 0 } }', False),
                      ('pools = { water = { nothing = 1 } }', False)):
        new = text.replace("[isotopes]\n", "[isotopes]\n" + pools + "\n", 1).replace(
            'fractionation = [["CO2", "H2O"]', 'fractionation = [["CO2", "water"], ["CO2", "H2O"]', 1)
        (d / "p.toml").write_text(new)
        if ok:
            st = read_study(d / "p.toml")
            assert st.sections["isotopes"].pools == {"water": {"H2O": 0.75, "(H2O)2": 0.25}}
        else:
            with pytest.raises(InputError, match=r"pools"):
                read_study(d / "p.toml")
