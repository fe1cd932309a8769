"""Isotopologues of a whole study (tstrate.study.isotopes, the [isotopes] reader, tstrate isotopes)."""

from __future__ import annotations

import re
import shutil

import pathlib

import numpy as np
import pytest

from tests.conftest import DEMO, run_cli_json
from tstrate.errors import InputError
from tstrate.io.species import read_species
from tstrate.io.study import read_study
from tstrate.physics.tst import channel_rates
from tstrate.study.isotopes import study_isotopes

T = [200.0, 250.0, 300.0]


@pytest.fixture(scope="module")
def demo():
    study = read_study(DEMO / "study.toml")
    return study, study_isotopes(study, temperature_K=T)


def _sub(res, label):
    return next(s for s in res.substitutions if s.substitution.label == label)


def _heavy_file(tmp_path, source, atoms: dict):
    """A copy of a demo species file with `isotopes = {...}` (the species file's own route)."""
    source = pathlib.Path(source)
    name = source.name
    text = source.read_text()
    table = "isotopes = { " + ", ".join(f"{k} = {v}" for k, v in atoms.items()) + " }\n"
    text = text.replace("\n[provenance]", "\n" + table + "\n[provenance]", 1)
    path = tmp_path / name
    path.write_text(text)
    return path


def test_study_kie_equals_the_ratio_of_two_independent_runs(demo, tmp_path):
    # the light and the heavy channel computed apart, from species files carrying `isotopes = {...}`
    study, res = demo
    ch = study.channel("bare")
    # the files the demo study names (its refined level), each with one 13C
    files = {"H2CO3": 2, "TS0": 1, "CO2": 2, "CO2.H2O": 1}
    heavy = dict(study.species)
    for name, atom in files.items():
        heavy[name] = read_species(_heavy_file(tmp_path, study.species_files[name], {atom: 13}), name=name)
    light = {n: read_species(p, name=n) for n, p in study.species_files.items() if "/" not in n}
    # the demo's H2CO3 is the cis-cis + cis-trans ensemble: both conformers get their one C heavy
    from tstrate.physics.ensembles import build_ensemble

    ct_file = study.species_files["H2CO3/cis_trans"]
    ct_carbon = read_species(ct_file).symbols.index("C") + 1
    (tmp_path / "ct").mkdir()
    for which, cis_trans in ((light, read_species(ct_file)),
                             (heavy, read_species(_heavy_file(tmp_path / "ct", ct_file, {ct_carbon: 13})))):
        which["H2CO3"] = build_ensemble("H2CO3", [("cis_cis", which["H2CO3"]), ("cis_trans", cis_trans)])
    k_light = channel_rates(ch, light, T).k
    k_heavy = channel_rates(ch, heavy, T).k
    for label in ("13C (bare, by atom)", "13C"):
        kie = next(k for k in _sub(res, label).kie if k.channel == "bare")
        np.testing.assert_allclose(kie.kie, k_light / k_heavy, rtol=1e-10)
        np.testing.assert_allclose(np.prod(list(kie.factors.values()), axis=0), kie.kie, rtol=1e-10)


def test_substituted_symmetry_and_beta(demo):
    study, res = demo
    # H2O (C2v, sigma 2): the two H are one class; the trace beta is the single-substitution f
    b = next(x for x in _sub(res, "D").betas if x.species == "H2O")
    assert len(b.positions) == 1 and len(b.positions[0]) == 2
    np.testing.assert_allclose(b.ln_beta, b.ln_f_by_position[0], rtol=1e-12)
    # CO2 18O: one class of two O; fractionation CO2/H2O = beta ratio, positive in 18O
    frac = next(f for f in res.fractionation if f.label == "18O" and f.species_a == "CO2")
    assert np.all(frac.alpha > 1)
    # three-isotope exponents of oxygen lie between the mass-dependent limits for the equilibrium ones
    for t in res.three_isotope:
        if t.kind == "equilibrium" and "/" not in t.name:
            lo = min(t.references.equilibrium_low_T, t.references.equilibrium_high_T) - 5e-3
            assert np.all((t.theta > lo) & (t.theta <= t.references.equilibrium_high_T + 1e-6))


def test_species_without_hessian_are_refused(tmp_path):
    folder = tmp_path / "cat"
    shutil.copytree(DEMO.parents[1] / "tests" / "data" / "catalysis", folder)
    shutil.copytree(DEMO.parents[1] / "tests" / "data" / "water_dimer", tmp_path / "water_dimer")
    path = folder / "study.toml"
    path.write_text(path.read_text() + '\n[isotopes]\n[[isotopes.substitution]]\nisotope = "D"\n')
    study = read_study(path)
    with pytest.raises(InputError, match="has no Hessian.*never guessed") as exc:
        study_isotopes(study)
    assert exc.value.field == "hessian"


@pytest.mark.parametrize("block, match", [
    ('isotope = "40C"', "no isotope C-40"),
    ('isotope = "heavy"', "cannot read isotope"),
    ('isotope = "13C"\nmode = "atoms"', "needs atoms"),
    ('isotope = "13C"\nmode = "atoms"\natoms = { nobody = [1] }', "unknown species"),
    ('isotope = "13C"\nchannels = ["nope"]', "unknown channel"),
    ('isotope = "13C"\nmode = "every"', "unknown mode"),
])
def test_reader_errors(tmp_path, block, match):
    folder = tmp_path / "demo"
    shutil.copytree(DEMO, folder, ignore=shutil.ignore_patterns("inputs", "*.sh", "*.md"))
    path = folder / "study.toml"
    text = path.read_text()
    text = text[:text.index("[isotopes]")] + "[isotopes]\n[[isotopes.substitution]]\n" + block + "\n" + \
        text[text.index("# ---- fits"):]
    path.write_text(text)
    with pytest.raises(InputError, match=match):
        read_study(path)


def test_unbalanced_atoms_and_wrong_elements_are_refused(tmp_path):
    folder = tmp_path / "demo"
    shutil.copytree(DEMO, folder, ignore=shutil.ignore_patterns("inputs", "*.sh", "*.md"))
    path = folder / "study.toml"
    text = path.read_text()
    for atoms, match in (('{ H2CO3 = [2], TS0 = [1] }', "do not balance"),
                         ('{ H2CO3 = [1], TS0 = [1], CO2 = [2], "CO2.H2O" = [1] }', "is not a C atom")):
        new = re.sub(r'atoms = \{ H2CO3 = \[2\], TS0 = \[1\], CO2 = \[2\], "CO2.H2O" = \[1\] \}',
                     f"atoms = {atoms}", text)
        path.write_text(new)
        with pytest.raises(InputError, match=match) as exc:
            study_isotopes(read_study(path), temperature_K=[300.0])
        assert exc.value.file == str(path) and exc.value.field.startswith("isotopes.substitution[2]")


def test_command_json_and_isotope_option():
    out = run_cli_json(["isotopes", str(DEMO / "study.toml"), "--isotope", "34S", "D", "-T", "250", "300",
                        "--json"])
    labels = [s["label"] for s in out["isotopes"]["substitutions"]]
    assert labels == ["34S", "D"]
    assert out["isotopes"]["substitutions"][0]["kie"] == []        # no sulfur in the demo
    d = out["isotopes"]["substitutions"][1]
    assert {k["channel"] for k in d["kie"]} == {"bare", "one-water", "two-water"}
    assert "mass-dependent" in out["isotopes"]["mass_dependence"]


def test_command_errors_are_one_line(capsys):
    from tstrate.cli.main import main

    assert main(["isotopes", str(DEMO / "study.toml"), "--isotope", "99C"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "--isotope" in err[0]


def test_route_mix_is_the_loss_weighted_harmonic_mean(demo):
    from tstrate.study.routes import study_comparisons

    study, _ = demo
    comps = study_comparisons(study)
    res = study_isotopes(study, temperature_K=T, comparisons=comps)
    assert res.route_mix
    for m in res.route_mix:
        comp = next(c for c in comps if c.comparison.name == m.comparison)
        k_light = sum(r.pseudo_first_order_per_s for r in comp.routes)
        a = [x.describe() for x in comp.comparison.abundances].index(m.abundance)
        np.testing.assert_allclose(sum(m.weights.values()), 1.0, rtol=1e-12)
        # the same from the heavy pseudo-first-order rates: sum k'_light / sum k'_light / KIE_r
        kie_r = {}
        for r in comp.routes:
            from tstrate.study.isotopes import _heavy_map

            sub = next(s for s in study.sections["isotopes"].substitutions if s.label == m.label)
            heavy = _heavy_map(study, study.channel(r.channel), sub)
            kie_r[r.channel] = (channel_rates(study.channel(r.channel), study.species, comp.temperature_K).k
                                / channel_rates(study.channel(r.channel), heavy, comp.temperature_K).k)
        k_heavy = sum(r.pseudo_first_order_per_s[a] / kie_r[r.channel] for r in comp.routes)
        np.testing.assert_allclose(m.kie, k_light[a] / k_heavy, rtol=1e-10)
        lo = np.min([kie_r[c] for c in kie_r], axis=0)
        hi = np.max([kie_r[c] for c in kie_r], axis=0)
        assert np.all((m.kie >= lo * (1 - 1e-12)) & (m.kie <= hi * (1 + 1e-12)))
