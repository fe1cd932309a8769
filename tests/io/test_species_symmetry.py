"""Symmetry values in species files: detected unless given, written back only when given, and a
given value together with isotopes refused unless confirmed (an isotopologue's symmetry differs).

Check values: H2CO3 (cis-cis, C2v) has sigma 2 and singly deuterated H2CO3 (Cs) sigma 1; the
order of the rotational subgroup of C2v is 2 and of Cs is 1 (group-theory tables, e.g. F. A.
Cotton, Chemical Applications of Group Theory, 3rd ed., 1990; the point groups from memory).
The H2CO3 file is the shipped GFN2-xTB minimum, whose geometry is symmetric only to about
0.01 Angstrom, as real optimised geometries are.
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pytest

from tstrate.cli.main import main
from tstrate.errors import InputError
from tstrate.io.species import build_species, read_species, species_to_toml
from tstrate.physics import symmetry as sym

ROOT = Path(__file__).resolve().parents[2]
H2CO3 = ROOT / "molecules" / "carbonic_acid" / "h2co3.toml"


def _without_symmetry_keys(text: str) -> str:
    return "".join(line for line in text.splitlines(keepends=True)
                   if not re.match(r"(symmetry_number|optical_isomers|linear) =", line))


def _with_top_level(text: str, *lines: str) -> str:
    head, sep, tail = text.partition("\n[")
    return head.rstrip("\n") + "\n" + "".join(f"{x}\n" for x in lines) + sep + tail


#: the symmetry lines the compute route wrote into species files before detected values stayed out
OLD_OVERRIDES = ("symmetry_number = 2", "optical_isomers = 1", "linear = false")


@pytest.fixture
def h2co3_text():
    """The shipped H2CO3 file as the old compute route wrote it: detected values as overrides."""
    text = _without_symmetry_keys(H2CO3.read_text())
    return _with_top_level(text, *OLD_OVERRIDES)


def test_the_shipped_parent_file_has_no_overrides_and_detection_gives_2():
    text = H2CO3.read_text()
    assert not re.search(r"^(symmetry_number|optical_isomers|linear) =", text, re.M)
    sp = read_species(H2CO3)
    assert sp.symmetry_number == 2 and sp.symmetry_given == ()   # C2v: rotation group C2 (Cotton 1990)
    assert sp.rotation_group == "C2"


def test_old_overrides_are_given_values(tmp_path, h2co3_text):
    (tmp_path / "h2co3.toml").write_text(h2co3_text)
    sp = read_species(tmp_path / "h2co3.toml")
    assert sp.symmetry_number == 2 and sp.symmetry_given == ("symmetry_number", "optical_isomers", "linear")
    assert sp.rotation_group is None  # given, so not the detected group's name


def test_a_stale_override_with_isotopes_is_an_error_naming_file_and_key(tmp_path, h2co3_text):
    path = tmp_path / "hdco3.toml"
    path.write_text(_with_top_level(h2co3_text, "isotopes = { 5 = 2 }"))
    with pytest.raises(InputError) as info:
        read_species(path)
    assert info.value.file == str(path) and info.value.field == "symmetry_number"
    assert "symmetry_number = 2 is given together with isotopes" in str(info.value)
    assert "give 1" in str(info.value)  # the singly deuterated acid is Cs
    assert "symmetry_confirmed_with_isotopes" in str(info.value)


def test_the_cli_error_is_one_line(tmp_path, h2co3_text, capsys):
    path = tmp_path / "hdco3.toml"
    path.write_text(_with_top_level(h2co3_text, "isotopes = { 5 = 2 }"))
    assert main(["thermo", str(path)]) == 2
    err = capsys.readouterr().err.strip()
    assert "\n" not in err and "hdco3.toml" in err and "symmetry_number" in err


def test_detected_symmetry_of_the_isotopologue(tmp_path, h2co3_text):
    bare = _without_symmetry_keys(h2co3_text)
    (tmp_path / "h2co3.toml").write_text(bare)
    (tmp_path / "hdco3.toml").write_text(_with_top_level(bare, "isotopes = { 5 = 2 }"))
    (tmp_path / "d2co3.toml").write_text(_with_top_level(bare, "isotopes = { 5 = 2, 6 = 2 }"))
    parent, hd, dd = (read_species(tmp_path / f"{n}.toml") for n in ("h2co3", "hdco3", "d2co3"))
    assert (parent.symmetry_number, parent.rotation_group) == (2, "C2")
    assert (hd.symmetry_number, hd.rotation_group) == (1, "C1")
    assert (dd.symmetry_number, dd.rotation_group) == (2, "C2")
    assert parent.symmetry_given == hd.symmetry_given == ()


def test_a_confirmed_override_with_isotopes_is_kept(tmp_path, h2co3_text):
    path = tmp_path / "hdco3.toml"
    path.write_text(_with_top_level(h2co3_text, "isotopes = { 5 = 2 }",
                                    "symmetry_confirmed_with_isotopes = true"))
    sp = read_species(path)
    assert sp.symmetry_number == 2 and "symmetry_number" in sp.symmetry_given
    # the disagreement with the geometry is reported, not silently kept
    assert any("symmetry_number = 2 is given; the geometry gives 1" in w for w in sp.warnings)


def test_an_optical_isomers_override_with_isotopes_needs_confirmation(tmp_path, h2co3_text):
    text = _with_top_level(_without_symmetry_keys(h2co3_text), "isotopes = { 5 = 2 }", "optical_isomers = 1")
    path = tmp_path / "hdco3.toml"
    path.write_text(text)
    with pytest.raises(InputError) as info:
        read_species(path)
    assert info.value.field == "optical_isomers"


def test_species_to_toml_writes_only_given_values_and_round_trips(tmp_path, h2co3_text):
    detected = tmp_path / "detected.toml"
    detected.write_text(_without_symmetry_keys(h2co3_text))
    sp = read_species(detected)
    text = species_to_toml(sp)
    assert not re.search(r"^(symmetry_number|optical_isomers|linear) =", text, flags=re.M)
    (tmp_path / "again.toml").write_text(text)
    again = read_species(tmp_path / "again.toml")
    assert (again.symmetry_number, again.optical_isomers, again.linear) == (2, 1, False)
    assert again.symmetry_given == ()
    # the written parent plus isotopes: detected afresh, no stale value
    (tmp_path / "hd.toml").write_text(_with_top_level(text, "isotopes = { 5 = 2 }"))
    assert read_species(tmp_path / "hd.toml").symmetry_number == 1

    (tmp_path / "given.toml").write_text(h2co3_text)
    given = read_species(tmp_path / "given.toml")  # all three given
    text = species_to_toml(given)
    for line in ("symmetry_number = 2", "optical_isomers = 1", "linear = false"):
        assert re.search(rf"^{line}$", text, flags=re.M)
    (tmp_path / "given.toml").write_text(text)
    assert read_species(tmp_path / "given.toml").symmetry_given == given.symmetry_given

    # a value changed in Python counts as given and is written
    changed = sp.with_changes(symmetry_number=4)
    assert changed.symmetry_given == ("symmetry_number",) and changed.rotation_group is None
    assert "symmetry_number = 4" in species_to_toml(changed)


def test_build_species_from_python_records_what_was_given():
    rng = np.random.default_rng(1)
    from ase.build import molecule

    atoms = molecule("CH4")
    x = atoms.positions + rng.normal(scale=0.003, size=atoms.positions.shape)
    common = dict(frequencies_cm1=np.linspace(1300.0, 3100.0, 9))
    sp = build_species("CH4", atoms.get_chemical_symbols(), x, **common)
    assert (sp.symmetry_number, sp.rotation_group, sp.symmetry_given) == (12, "T", ())
    assert sp.symmetry_number == sym.symmetry_number(atoms.get_chemical_symbols(), x, sp.masses_amu)
    sp = build_species("CH4", atoms.get_chemical_symbols(), x, symmetry_number=12, **common)
    assert sp.symmetry_given == ("symmetry_number",) and sp.warnings == ()
