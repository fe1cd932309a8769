"""Species files: reading, validation messages, Hessians and isotopes, writing and round trips."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from ase.build import molecule

from tests.conftest import (WATER_POSITIONS_A, WATER_SYMBOLS, valence_hessian_J_per_m2,
                            water_terms)
from tstrate.errors import InputError
from tstrate.io.species import (build_species, read_species, species_from_atoms, species_to_toml,
                                write_species)
from tstrate.model import ElectronicLevel
from tstrate.physics.vibrations import (HESSIAN_UNITS_J_PER_M2, default_masses_amu,
                                        isotope_mass_amu)
from tstrate.units import ENERGY_UNITS_J_PER_MOL

ROOT = Path(__file__).resolve().parents[2]
REFERENCE = ROOT / "tstrate" / "io" / "reference"
DATA = ROOT / "tests" / "data" / "species"


# ---- reading good files -------------------------------------------------------------------

@pytest.mark.parametrize("name,natoms,linear,sigma,nmodes", [
    ("h2o", 3, False, 2, 3), ("co2", 3, True, 2, 4), ("so2", 3, False, 2, 3),
    ("n2", 2, True, 2, 1), ("o2", 2, True, 2, 1)])
def test_reference_species_files(name, natoms, linear, sigma, nmodes):
    sp = read_species(REFERENCE / f"{name}.toml")
    assert sp.natoms == natoms
    assert sp.linear is linear
    assert sp.symmetry_number == sigma
    assert sp.optical_isomers == 1
    assert len(sp.frequencies_cm1) == nmodes
    assert np.all(np.diff(sp.frequencies_cm1) >= 0)  # sorted
    assert sp.masses_amu == pytest.approx(default_masses_amu(sp.symbols), rel=1e-15)
    assert sp.kind == "minimum"
    assert sp.source == str(REFERENCE / f"{name}.toml")
    assert sp.provenance["method"] == "experiment"


def test_o2_electronic_levels():
    sp = read_species(REFERENCE / "o2.toml")
    assert sp.multiplicity == 3
    assert sp.levels == (ElectronicLevel(0.0, 3), ElectronicLevel(7918.1, 2))


def test_geometry_from_an_xyz_file_and_single_point_energy():
    sp = read_species(DATA / "h2o_xyz_geometry.toml")
    assert sp.positions_A == pytest.approx(WATER_POSITIONS_A, abs=1e-12)
    hartree = ENERGY_UNITS_J_PER_MOL["hartree"]
    assert sp.energy_J_per_mol == pytest.approx(-76.43 * hartree, rel=1e-15)  # high level wins
    assert sp.geometry_energy_J_per_mol == pytest.approx(-76.40 * hartree, rel=1e-15)
    assert sp.provenance["single_point_method"] == "test value, not a calculation"


def test_name_override():
    assert read_species(REFERENCE / "n2.toml", name="nitrogen").name == "nitrogen"


def test_d2o_file_with_hessian_and_isotopes():
    sp = read_species(DATA / "d2o_hessian.toml")
    d = isotope_mass_amu("H", 2)
    assert sp.masses_amu[1:] == pytest.approx([d, d], rel=1e-15)
    h = valence_hessian_J_per_m2(WATER_POSITIONS_A, **water_terms())
    from_python = build_species("D2O", WATER_SYMBOLS, WATER_POSITIONS_A, hessian_J_per_m2=h,
                                isotopes={1: 2, 2: 2})
    # the file holds the same Hessian to 13 significant digits
    assert sp.frequencies_cm1 == pytest.approx(from_python.frequencies_cm1, rel=1e-10)
    assert sp.hessian_J_per_m2 == pytest.approx(h, rel=1e-10, abs=1e-10 * np.abs(h).max())


@pytest.mark.parametrize("unit", sorted(HESSIAN_UNITS_J_PER_M2))
@pytest.mark.parametrize("layout", ["nested", "flat"])
def test_hessian_units_and_layouts_give_the_same_frequencies(tmp_path, unit, layout):
    h = valence_hessian_J_per_m2(WATER_POSITIONS_A, **water_terms())
    values = h / HESSIAN_UNITS_J_PER_M2[unit]
    if layout == "nested":
        body = "[" + ",\n".join("[" + ", ".join(repr(float(v)) for v in row) + "]"
                                for row in values) + "]"
    else:
        body = "[" + ", ".join(repr(float(v)) for v in values.ravel()) + "]"
    path = tmp_path / "w.toml"
    path.write_text(_GOOD.replace("frequencies_cm1 = [1594.7, 3657.1, 3755.9]\n", "")
                    + f'\n[hessian]\nunit = "{unit}"\nvalues = {body}\n')
    sp = read_species(path)
    ref = build_species("H2O", WATER_SYMBOLS, WATER_POSITIONS_A, hessian_J_per_m2=h)
    assert sp.frequencies_cm1 == pytest.approx(ref.frequencies_cm1, rel=1e-12)


def test_allow_imaginary_below_cm1_turns_small_imaginary_modes_real(tmp_path, caplog):
    path = tmp_path / "w.toml"
    path.write_text(_GOOD.replace("[1594.7,", "[-30.0,") + "allow_imaginary_below_cm1 = 50.0\n")
    sp = read_species(path)
    assert sp.frequencies_cm1 == pytest.approx([30.0, 3657.1, 3755.9])
    assert "treated as real" in caplog.text


def test_species_from_ase_atoms_keeps_its_masses():
    atoms = molecule("CH4")
    sp = species_from_atoms(atoms, frequencies_cm1=[1306.0] * 3 + [1534.0] * 2 + [2917.0]
                            + [3019.0] * 3)
    assert sp.name == "CH4"
    assert sp.masses_amu == pytest.approx(atoms.get_masses(), rel=1e-15)
    assert sp.symmetry_number == 12


# ---- bad input: one-line InputError naming the file and the key ----------------------------

_GOOD = '''name = "H2O"
charge = 0
multiplicity = 1
geometry = """
O  0.000000  0.000000  0.000000
H  0.000000  0.756950  0.585882
H  0.000000  -0.756950  0.585882
"""
frequencies_cm1 = [1594.7, 3657.1, 3755.9]
energy = { value = -76.4, unit = "hartree" }
'''

_GOOD_GEOMETRY = _GOOD[_GOOD.index('geometry = """'):_GOOD.index("frequencies_cm1")]
_NAN_HESSIAN = '[hessian]\nunit = "hartree/bohr2"\nvalues = [' + ", ".join(["nan"] + ["0.0"] * 80) \
    + "]\n"

# (id, file text, regex the message must match: file name, then [key], then the problem)
BAD = [
    ("missing-key", _GOOD.replace("charge = 0\n", ""), r"\[charge\]: missing required key"),
    ("wrong-type", _GOOD.replace("charge = 0", 'charge = "zero"'),
     r"\[charge\]: expected an integer, got str"),
    ("wrong-type-in-list", _GOOD.replace("1594.7", '"1594.7"'),
     r"\[frequencies_cm1\[0\]\]: expected a number"),
    ("unknown-energy-unit", _GOOD.replace('"hartree"', '"hartrees"'),
     r"\[energy\.unit\]: unknown energy unit 'hartrees'"),
    ("unknown-key-in-energy", _GOOD.replace('unit = "hartree" }', 'unit = "hartree", vlaue = 1 }'),
     r"\[energy\.vlaue\]: unknown key"),
    ("unknown-element", _GOOD.replace("O  0.000000  0.000000  0.000000", "Xq 0.0 0.0 0.0"),
     r"\[geometry\]: unknown element 'Xq' \(atom 1\)"),
    ("hessian-wrong-size", _GOOD + '[hessian]\nunit = "hartree/bohr2"\nvalues = [1.0, 2.0]\n',
     r"\[hessian\.values\]: Hessian has 2 values; 3 atoms need 9 x 9 = 81"),
    ("hessian-unknown-unit", _GOOD + '[hessian]\nunit = "Eh/a0^2"\nvalues = [1.0]\n',
     r"\[hessian\.unit\]: unknown Hessian unit"),
    ("hessian-nan", _GOOD + _NAN_HESSIAN, r"\[hessian\.values\]: Hessian holds NaN"),
    ("nan-frequency", _GOOD.replace("1594.7", "nan"),
     r"\[frequencies_cm1\[0\]\]: value is NaN or infinite"),
    ("nan-energy", _GOOD.replace("-76.4", "nan"), r"\[energy\.value\]: value is NaN or infinite"),
    ("inf-frequency-scale", _GOOD + "frequency_scale = inf\n",
     r"\[frequency_scale\]: value is NaN or infinite"),
    ("overlapping-atoms", _GOOD.replace("H  0.000000  -0.756950  0.585882",
                                        "H  0.000000  0.756950  0.685882"),
     r"\[geometry\]: atoms 2 and 3 overlap"),
    ("geometry-in-bohr-overlaps", _GOOD.replace("0.756950", "0.100000").replace("0.585882", "0.1"),
     r"\[geometry\]: atoms .* overlap .*Angstrom expected"),
    ("wrong-frequency-count", _GOOD.replace("1594.7, ", ""),
     r"\[frequencies_cm1\]: 2 frequencies for a nonlinear species of 3 atoms; expected 3"),
    ("nonexistent-geometry-file", _GOOD.split('geometry = """')[0] + 'geometry = "nothere.xyz"\n'
     + "frequencies_cm1 = [1594.7, 3657.1, 3755.9]\n",
     r"\[geometry\]: geometry file '.*nothere\.xyz' does not exist"),
    ("imaginary-in-minimum", _GOOD.replace("1594.7", "-50.0"),
     r"\[frequencies_cm1\]: a minimum with imaginary frequency -50\.0 cm-1"),
    ("imaginary-beyond-allowance", _GOOD.replace("1594.7", "-50.0")
     + "allow_imaginary_below_cm1 = 20.0\n",
     r"\[frequencies_cm1\]: a minimum with imaginary frequency -50\.0 cm-1"),
    ("ts-without-imaginary", _GOOD + 'kind = "transition_state"\n',
     r"\[frequencies_cm1\]: a transition state needs exactly one imaginary frequency, found 0"),
    ("ts-with-two-imaginary", _GOOD.replace("1594.7, 3657.1", "-1594.7, -3657.1")
     + 'kind = "transition_state"\n',
     r"\[frequencies_cm1\]: a transition state needs exactly one imaginary frequency, found 2"),
    ("unknown-key-typo", _GOOD + "frequency_scal = 0.97\n",
     r"\[frequency_scal\]: unknown key"),
    ("unknown-kind", _GOOD + 'kind = "saddle"\n', r"\[kind\]: unknown kind 'saddle'"),
    ("bad-multiplicity", _GOOD.replace("multiplicity = 1", "multiplicity = 0"),
     r"\[multiplicity\]: multiplicity must be 1 or more"),
    ("isotopes-without-hessian", _GOOD + "isotopes = { 2 = 2 }\n",
     r"\[isotopes\]: isotopes need a Hessian"),
    ("isotope-atom-missing", _GOOD.replace("frequencies_cm1 = [1594.7, 3657.1, 3755.9]\n", "")
     + "isotopes = { 7 = 2 }\n" + _NAN_HESSIAN.replace("nan", "0.0"),
     r"\[isotopes\]: atom 7 does not exist"),
    ("isotope-unknown", _GOOD.replace("frequencies_cm1 = [1594.7, 3657.1, 3755.9]\n", "")
     + "isotopes = { 1 = 40 }\n" + _NAN_HESSIAN.replace("nan", "0.0"),
     r"\[isotopes\]: no isotope O-40"),
    ("masses-wrong-count", _GOOD + "masses_amu = [1.0]\n",
     r"\[masses_amu\]: expected 3 positive masses, got 1"),
    ("symmetry-number-zero", _GOOD + "symmetry_number = 0\n",
     r"\[symmetry_number\]: symmetry number must be 1 or more"),
    ("electronic-levels-no-ground", _GOOD + "[[electronic_levels]]\nenergy_cm1 = 10.0\n"
     "degeneracy = 1\n", r"\[electronic_levels\]: the lowest electronic level must be at 0 cm-1"),
    ("lennard-jones-typo", _GOOD + "lennard_jones = { sigma_A = 1.0, epsilonK = 3.0 }\n",
     r"\[lennard_jones\.epsilon_K\]: missing required key"),
    ("not-toml", _GOOD + "x = = 3\n", r": not valid TOML"),
    ("empty-file", "", r": the file holds no keys"),
    ("comments-only", "# nothing here yet\n", r": the file holds no keys"),
    ("a-study-file", '[species]\nH2O = "h2o.toml"\n\n[[channel]]\nname = "x"\n',
     r": this is a study file, not a species file"),
    ("geometry-empty", _GOOD.replace(_GOOD_GEOMETRY, 'geometry = ""\n'),
     r"\[geometry\]: the geometry is empty"),
    ("geometry-folder", _GOOD.replace(_GOOD_GEOMETRY, 'geometry = "."\n'),
     r"\[geometry\]: geometry '.*' is a folder, not a file"),
    ("geometry-line", _GOOD.replace("O  0.000000  0.000000  0.000000", "O  0.0  0.0"),
     r"\[geometry\]: line 1: expected 'Symbol x y z'"),
]


@pytest.mark.parametrize("text,pattern", [(t, p) for _, t, p in BAD], ids=[i for i, _, _ in BAD])
def test_bad_species_file(tmp_path, text, pattern):
    path = tmp_path / "bad_species.toml"
    path.write_text(text)
    # the message starts with the file, then " [key]" (when there is one), then the problem
    full = r"^\S*bad_species\.toml" + (" " if pattern.startswith(r"\[") else "") + pattern
    with pytest.raises(InputError, match=full) as err:
        read_species(path)
    assert "\n" not in str(err.value)


def test_nonexistent_file():
    with pytest.raises(InputError, match=r"^\S*no_such_species\.toml: file does not exist$"):
        read_species(DATA / "no_such_species.toml")


def test_build_species_errors_name_the_source():
    with pytest.raises(InputError, match=r"^mine\.toml \[frequencies_cm1\]: give frequencies_cm1"):
        build_species("x", WATER_SYMBOLS, WATER_POSITIONS_A, source="mine.toml")
    with pytest.raises(InputError, match=r"\[geometry\]: 3 symbols but 2 positions"):
        build_species("x", WATER_SYMBOLS, WATER_POSITIONS_A[:2], frequencies_cm1=[1.0])


# ---- writing and round trips ------------------------------------------------------------------

def _assert_same_species(a, b):
    assert a.name == b.name
    assert a.symbols == b.symbols
    assert a.positions_A == pytest.approx(b.positions_A, abs=1e-8)  # written with 8 decimals
    assert a.masses_amu == pytest.approx(b.masses_amu, rel=1e-15)
    assert (a.charge, a.multiplicity, a.kind) == (b.charge, b.multiplicity, b.kind)
    # a lone energy is the geometry-level one in the file (energy_J_per_mol documents this)
    geo_a = a.geometry_energy_J_per_mol
    if geo_a is None:
        geo_a = a.energy_J_per_mol
    for x, y in [(a.energy_J_per_mol, b.energy_J_per_mol), (geo_a, b.geometry_energy_J_per_mol)]:
        assert (x is None and y is None) or x == pytest.approx(y, rel=1e-14)
    # from a Hessian the frequencies are recomputed from its 11-digit copy: eigenvalues (w^2)
    # move by ~1e-10 of the largest one
    fa, fb = np.sign(a.frequencies_cm1) * a.frequencies_cm1**2, np.sign(b.frequencies_cm1) * \
        b.frequencies_cm1**2
    assert fb == pytest.approx(fa, rel=1e-15, abs=1e-9 * np.abs(fa).max(initial=0.0))
    assert a.frequency_scale == b.frequency_scale
    assert (a.symmetry_number, a.optical_isomers, a.linear) == (b.symmetry_number,
                                                                b.optical_isomers, b.linear)
    assert a.electronic_levels == b.electronic_levels
    assert a.lennard_jones == b.lennard_jones
    assert a.provenance == b.provenance
    if a.hessian_J_per_m2 is None:
        assert b.hessian_J_per_m2 is None
    else:
        scale = np.abs(a.hessian_J_per_m2).max()
        assert b.hessian_J_per_m2 == pytest.approx(a.hessian_J_per_m2, abs=1e-10 * scale)


def _hdo_everything():
    h = valence_hessian_J_per_m2(WATER_POSITIONS_A, **water_terms())
    return build_species(
        "HDO", WATER_SYMBOLS, WATER_POSITIONS_A, hessian_J_per_m2=h, isotopes={1: 2},
        energy_J_per_mol=-2.0e8, geometry_energy_J_per_mol=-2.001e8, frequency_scale=0.97,
        electronic_levels=(ElectronicLevel(0.0, 1), ElectronicLevel(1000.0, 3)),
        lennard_jones=(2.6, 500.0),
        provenance={"method": "valence model", "two words": 'quote " and \\ backslash\ttab'})


def _round_trip_cases():
    h = valence_hessian_J_per_m2(WATER_POSITIONS_A, **water_terms())
    soft = valence_hessian_J_per_m2(WATER_POSITIONS_A, **water_terms(k_bend=-0.001e-18))
    bent_co2 = np.array([[0.0, 0.0, -1.16], [0.05, 0.0, 0.0], [0.0, 0.0, 1.16]])
    return {
        "HDO-hessian-isotopes-everything": _hdo_everything(),
        "D2O-hessian": build_species("D2O", WATER_SYMBOLS, WATER_POSITIONS_A, hessian_J_per_m2=h,
                                     isotopes={1: 2, 2: 2}, energy_J_per_mol=-1.0),
        "minimum-with-tolerated-imaginary-hessian": build_species(
            "H2O-soft", WATER_SYMBOLS, WATER_POSITIONS_A, hessian_J_per_m2=soft,
            allow_imaginary_below_cm1=100.0),
        "transition-state": build_species("TS", WATER_SYMBOLS, WATER_POSITIONS_A,
                                          kind="transition_state",
                                          frequencies_cm1=[-1234.5678901, 3657.1, 3755.9]),
        "O2-levels": read_species(REFERENCE / "o2.toml"),
        "atom": build_species("Ar", ["Ar"], [[0.0, 0.0, 0.0]], frequencies_cm1=[]),
        "linear-override": build_species("CO2-bent", ["O", "C", "O"], bent_co2, linear=True,
                                         frequencies_cm1=[667.4, 667.4, 1333.0, 2349.1]),
        "ase-masses": species_from_atoms(molecule("H2O"), frequencies_cm1=[1594.7, 3657.1, 3755.9]),
        "no-energy": build_species("H2O", WATER_SYMBOLS, WATER_POSITIONS_A,
                                   frequencies_cm1=[1594.7, 3657.1, 3755.9], symmetry_number=1),
    }


@pytest.mark.parametrize("case", list(_round_trip_cases()))
def test_round_trip(tmp_path, case):
    sp = _round_trip_cases()[case]
    path = write_species(sp, tmp_path / "out.toml")
    back = read_species(path)
    _assert_same_species(sp, back)
    assert back.source == str(path)


def test_round_trip_without_hessian_keeps_frequencies(tmp_path):
    sp = _hdo_everything()
    path = write_species(sp, tmp_path / "nohess.toml", include_hessian=False)
    back = read_species(path)
    assert back.hessian_J_per_m2 is None
    assert back.frequencies_cm1 == pytest.approx(sp.frequencies_cm1, rel=1e-15)


@pytest.mark.parametrize("unit", ["kJ/mol", "eV", "kcal/mol"])
def test_energy_unit_of_the_writer(tmp_path, unit):
    sp = _hdo_everything()
    back = read_species(write_species(sp, tmp_path / "e.toml", energy_unit=unit))
    assert back.energy_J_per_mol == pytest.approx(sp.energy_J_per_mol, rel=1e-14)


def test_written_text_is_plain_toml():
    text = species_to_toml(_hdo_everything())
    assert "np.float64" not in text
    assert '"two words" = ' in text


def test_write_species_refuses_to_overwrite(tmp_path):
    sp = read_species(REFERENCE / "n2.toml")
    path = tmp_path / "n2.toml"
    path.write_text("keep me\n")
    with pytest.raises(InputError, match=r"n2\.toml: file exists; refusing to overwrite it"):
        write_species(sp, path)
    assert path.read_text() == "keep me\n"
    write_species(sp, path, overwrite=True)
    _assert_same_species(sp, read_species(path))
    assert not [p for p in tmp_path.iterdir() if p.name.endswith(".part")]  # no temporary left


@pytest.mark.parametrize("charge, multiplicity, ok", [
    (0, 1, True),    # H2O: 10 electrons, singlet
    (0, 3, True),    # a triplet is possible with 10 electrons
    (0, 2, False),   # a doublet is not (2S+1 must be odd for an even electron count)
    (1, 2, True),    # H2O+: 9 electrons, doublet
    (1, 1, False),
])
def test_multiplicity_must_match_the_electron_count(charge, multiplicity, ok):
    from tstrate.io.species import build_species

    kw = dict(charge=charge, multiplicity=multiplicity, frequencies_cm1=[1595, 3657, 3756])
    geometry = [[0, 0, 0], [0, 0.757, 0.586], [0, -0.757, 0.586]]
    if ok:
        build_species("w", ["O", "H", "H"], geometry, **kw)
    else:
        with pytest.raises(InputError, match=r"\[multiplicity\].*impossible with"):
            build_species("w", ["O", "H", "H"], geometry, source="w.toml", **kw)


def test_negative_imaginary_allowance_is_refused():
    from tstrate.io.species import build_species

    with pytest.raises(InputError, match=r"allow_imaginary_below_cm1"):
        build_species("w", ["O", "H", "H"], [[0, 0, 0], [0, 0.757, 0.586], [0, -0.757, 0.586]],
                      frequencies_cm1=[1595, 3657, 3756], allow_imaginary_below_cm1=-5.0)


def test_special_and_oversized_files_are_refused_before_reading(tmp_path, monkeypatch):
    """A pipe would block and a huge file would fill memory: both are refused up front."""
    import os

    from tstrate.io import tables

    fifo = tmp_path / "pipe.toml"
    os.mkfifo(fifo)
    with pytest.raises(InputError, match=r"pipe\.toml: is not a regular file"):
        read_species(fifo)
    big = tmp_path / "big.toml"
    big.write_text("name = 'x'\n" + "# padding\n" * 200)
    monkeypatch.setattr(tables, "MAX_TOML_BYTES", 1000)
    with pytest.raises(InputError, match=r"big\.toml: is larger than"):
        read_species(big)
