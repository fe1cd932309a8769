"""Study files (tstrate.io.study): what a good file gives, and one-line errors for bad ones.

Each bad case copies the invented test study tests/data/tst/ into a temporary folder, makes one
mistake in one file and checks that the error names that file and the key.
"""

from __future__ import annotations

import shutil
from pathlib import Path

import numpy as np
import pytest
from scipy import constants as sc

from tstrate.errors import InputError
from tstrate.io.study import read_study

DATA = Path(__file__).resolve().parents[1] / "data" / "tst"


@pytest.fixture
def study_dir(tmp_path):
    target = tmp_path / "study"
    shutil.copytree(DATA, target)
    return target


def _edit(folder: Path, name: str, old: str, new: str, count: int = 1) -> None:
    path = folder / name
    text = path.read_text()
    assert old in text, f"test setup: {old!r} not in {name}"
    path.write_text(text.replace(old, new, count))


# ---- a good study ---------------------------------------------------------------------------------

def test_reads_the_test_study():
    study = read_study(DATA / "study.toml")
    assert study.title.startswith("invented H2CO3")
    assert set(study.species) == {"H2CO3", "CO2", "H2O", "H2CO3_H2O", "TS_bare", "TS_w", "TS_ww"}
    assert [c.name for c in study.channels] == ["bare", "water", "two_waters", "back"]
    water = study.channel("water")
    assert water.reactants == ("H2CO3", "H2O")
    assert water.products == ("CO2", "H2O", "H2O")
    assert water.complex == "H2CO3_H2O" and water.transition_state == "TS_w"
    assert water.tunnelling == "eckart" and water.tunnelling_floor == "reactants"
    assert water.degeneracy is None and water.order == 2
    assert study.channel("two_waters").order == 3
    np.testing.assert_array_equal(study.conditions.temperature_K, [150, 200, 250, 298.15, 400, 1000])
    assert study.conditions.rate_units == {}
    assert study.species["TS_bare"].kind == "transition_state"
    assert study.species_files["CO2"].endswith("co2.toml")
    # energies in the files are kJ/mol; inside, J/mol
    assert study.species["TS_w"].energy_J_per_mol == pytest.approx(60e3)


def test_rate_units_map_to_molecularity():
    study = read_study(DATA / "reverse_water.toml")
    assert study.conditions.rate_units == {2: "L mol-1 s-1", 3: "cm6 molecule-2 s-1"}
    (ch,) = study.channels
    assert ch.order == 3 and ch.tunnelling == "wigner"


def test_defaults_and_paths_relative_to_the_study_file(study_dir, tmp_path, monkeypatch):
    (study_dir / "minimal.toml").write_text(f"""
[species]
H2CO3 = "h2co3.toml"
CO2 = "{(study_dir / 'co2.toml').as_posix()}"
H2O = "h2o.toml"
TS_bare = "ts_bare.toml"

[conditions]
temperature_K = [300]
pressure_Torr = [760]

[[channel]]
name = "bare"
reactants = ["H2CO3"]
transition_state = "TS_bare"
products = ["CO2", "H2O"]
degeneracy = 2
""")
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    monkeypatch.chdir(elsewhere)  # species paths are relative to the study file, not the cwd
    study = read_study(study_dir / "minimal.toml")
    assert study.title == "minimal"  # the file's stem when no title is given
    (ch,) = study.channels
    assert ch.tunnelling == "none" and ch.complex is None and ch.tunnelling_floor == "reactants"
    assert ch.degeneracy == 2.0
    # 760 Torr = 1 standard atmosphere = 101325 Pa (definitions)
    np.testing.assert_allclose(study.conditions.pressure_Pa, [101325.0], rtol=1e-12)


def test_product_complex_is_read_and_balanced(study_dir):
    # an invented CO2.2H2O product complex: the atoms of H2CO3_H2O, 30 kJ/mol below CO2 + 2 H2O
    text = (study_dir / "h2co3_h2o.toml").read_text().replace('name = "H2CO3_H2O"', 'name = "CO2_2H2O"')
    (study_dir / "co2_2h2o.toml").write_text(text)
    _edit(study_dir, "study.toml", 'H2CO3_H2O = "h2co3_h2o.toml"',
          'H2CO3_H2O = "h2co3_h2o.toml"\nCO2_2H2O = "co2_2h2o.toml"')
    _edit(study_dir, "study.toml", 'complex = "H2CO3_H2O"', 'complex = "H2CO3_H2O"\nproduct_complex = "CO2_2H2O"')
    study = read_study(study_dir / "study.toml")
    assert study.channel("water").product_complex == "CO2_2H2O"
    assert study.channel("bare").product_complex is None
    # the bare channel's products CO2 + H2O do not balance CO2.2H2O
    _edit(study_dir, "study.toml", 'products = ["CO2", "H2O"]\ntunnelling = "eckart"',
          'products = ["CO2", "H2O"]\ntunnelling = "eckart"\nproduct_complex = "CO2_2H2O"')
    with pytest.raises(InputError, match=r"atoms do not balance") as exc:
        read_study(study_dir / "study.toml")
    assert exc.value.field == "channel[0].product_complex"


def test_number_density_in_per_cm3(study_dir):
    _edit(study_dir, "study.toml", "temperature_K = [150, 200, 250, 298.15, 400, 1000]",
          "temperature_K = [200]\nnumber_density_per_cm3 = [2.5e19]")
    study = read_study(study_dir / "study.toml")
    np.testing.assert_allclose(study.conditions.number_density_m3, [2.5e25], rtol=1e-15)  # 1 cm^-3 = 1e6 m^-3
    assert study.conditions.pressure_Pa.size == 0


def test_rate_units_in_m3_per_mol(study_dir):
    _edit(study_dir, "study.toml", "temperature_K = [150, 200, 250, 298.15, 400, 1000]",
          'temperature_K = [300]\nrate_units = { bimolecular = "m3 mol-1 s-1" }')
    study = read_study(study_dir / "study.toml")
    assert study.conditions.rate_units == {2: "m3 mol-1 s-1"}
    from tstrate.output.records import channel_rates_record
    from tstrate.study.rates import study_rates

    rec = channel_rates_record(study_rates(study)[1], study.conditions.rate_units)
    assert rec["rate_constant_unit"] == "m3 mol-1 s-1"
    k_si = study_rates(study)[1].k
    np.testing.assert_allclose(rec["rate_constant"], k_si * sc.N_A, rtol=1e-12)


# ---- bad studies: (file to edit, old text, new text, message, file named, key named) ----------------

BAD = {
    "ts-without-imaginary-frequency": (
        "ts_bare.toml", "-1650.0", "1650.0",
        "exactly one imaginary frequency, found 0", "ts_bare.toml", "frequencies_cm1"),
    "ts-with-two-imaginary-frequencies": (
        "ts_bare.toml", "350.0", "-350.0",
        "exactly one imaginary frequency, found 2", "ts_bare.toml", "frequencies_cm1"),
    "unknown-product": (
        "study.toml", 'products = ["CO2", "H2O"]', 'products = ["CO3", "H2O"]',
        "unknown species 'CO3'", "study.toml", "channel[0].products"),
    "unknown-reactant": (
        "study.toml", 'reactants = ["H2CO3", "H2O"]', 'reactants = ["H2CO3", "HDO"]',
        "unknown species 'HDO'", "study.toml", "channel[1].reactants"),
    "unknown-transition-state": (
        "study.toml", 'transition_state = "TS_ww"', 'transition_state = "TS_www"',
        "unknown species 'TS_www'", "study.toml", "channel[2].transition_state"),
    "unknown-complex": (
        "study.toml", 'complex = "H2CO3_H2O"', 'complex = "H2CO3_2H2O"',
        "unknown species 'H2CO3_2H2O'", "study.toml", "channel[1].complex"),
    "atoms-do-not-balance": (
        "study.toml", 'products = ["CO2", "H2O"]', 'products = ["CO2", "H2O", "H2O"]',
        r"atoms do not balance \(C1 H2 O3 vs C1 H4 O4\)", "study.toml", "channel[0].products"),
    "transition-state-does-not-balance": (
        "study.toml", 'transition_state = "TS_bare"\nproducts = ["H2CO3"]',
        'transition_state = "TS_w"\nproducts = ["H2CO3"]',
        "atoms do not balance", "study.toml", "channel[3].transition_state"),
    "complex-does-not-balance": (
        "study.toml", 'complex = "H2CO3_H2O"', 'complex = "H2CO3"',
        "atoms do not balance", "study.toml", "channel[1].complex"),
    "charge-does-not-balance": (
        "co2.toml", "charge = 0\nmultiplicity = 1", "charge = 1\nmultiplicity = 2",  # CO2+ doublet
        r"charge does not balance \(0 vs 1\)", "study.toml", "channel[0].products"),
    "zero-temperature": (
        "study.toml", "temperature_K = [150,", "temperature_K = [0,",
        "temperatures must be positive", "study.toml", "conditions.temperature_K"),
    "negative-temperature": (
        "study.toml", "temperature_K = [150,", "temperature_K = [-150,",
        "temperatures must be positive", "study.toml", "conditions.temperature_K"),
    "no-temperatures": (
        "study.toml", "temperature_K = [150, 200, 250, 298.15, 400, 1000]", "temperature_K = []",
        "at least 1 values", "study.toml", "conditions.temperature_K"),
    "unknown-tunnelling-model": (
        "study.toml", 'tunnelling = "eckart"', 'tunnelling = "Eckart"',
        "unknown tunnelling model 'Eckart'", "study.toml", "channel[0].tunnelling"),
    "unknown-rate-unit": (
        "reverse_water.toml", '"L mol-1 s-1"', '"l/mol/s"',
        "unknown bimolecular rate unit 'l/mol/s'", "reverse_water.toml", "conditions.rate_units.bimolecular"),
    "rate-unit-of-another-order": (
        "reverse_water.toml", 'termolecular = "cm6 molecule-2 s-1"', 'termolecular = "cm3 molecule-1 s-1"',
        "unknown termolecular rate unit", "reverse_water.toml", "conditions.rate_units.termolecular"),
    "unknown-molecularity": (
        "reverse_water.toml", "bimolecular =", "bimolecularr =",
        "unknown molecularity", "reverse_water.toml", "conditions.rate_units.bimolecularr"),
    "duplicate-channel-names": (
        "study.toml", 'name = "back"', 'name = "bare"',
        "channel name 'bare' used twice", "study.toml", "channel"),
    "species-file-does-not-exist": (
        "study.toml", 'CO2 = "co2.toml"', 'CO2 = "carbon_dioxide.toml"',
        "species file 'carbon_dioxide.toml' does not exist", "study.toml", "species.CO2"),
    "non-positive-degeneracy": (
        "study.toml", 'tunnelling = "eckart"', 'tunnelling = "eckart"\ndegeneracy = 0',
        "degeneracy must be positive", "study.toml", "channel[0].degeneracy"),
    "unknown-floor": (
        "study.toml", 'complex = "H2CO3_H2O"', 'complex = "H2CO3_H2O"\ntunnelling_floor = "products"',
        "unknown floor 'products'", "study.toml", "channel[1].tunnelling_floor"),
    "unknown-product-complex": (
        "study.toml", 'complex = "H2CO3_H2O"', 'complex = "H2CO3_H2O"\nproduct_complex = "CO2_3H2O"',
        "unknown species 'CO2_3H2O'", "study.toml", "channel[1].product_complex"),
    "product-complex-is-a-transition-state": (
        "study.toml", 'complex = "H2CO3_H2O"', 'complex = "H2CO3_H2O"\nproduct_complex = "TS_w"',
        "'TS_w' is not a minimum", "study.toml", "channel[1].product_complex"),
    "product-complex-does-not-balance": (
        "study.toml", 'complex = "H2CO3_H2O"', 'complex = "H2CO3_H2O"\nproduct_complex = "H2CO3"',
        "atoms do not balance", "study.toml", "channel[1].product_complex"),
    "product-complex-is-the-complex": (
        "study.toml", 'complex = "H2CO3_H2O"', 'complex = "H2CO3_H2O"\nproduct_complex = "H2CO3_H2O"',
        "already the channel's pre-reactive complex", "study.toml", "channel[1].product_complex"),
    "misspelt-channel-key": (
        "study.toml", 'tunnelling = "eckart"', 'tunneling = "eckart"',
        "unknown key", "study.toml", "channel[0].tunneling"),
    "four-reactants": (
        "study.toml", 'reactants = ["H2CO3", "H2O", "H2O"]', 'reactants = ["H2CO3", "H2O", "H2O", "H2O"]',
        "4 reactants; channels take 1 to 3", "study.toml", "channel[2].reactants"),
    "transition-state-as-reactant": (
        "study.toml", 'reactants = ["H2CO3"]', 'reactants = ["TS_bare"]',
        "'TS_bare' is a transition state", "study.toml", "channel[0].reactants"),
    "minimum-as-transition-state": (
        "study.toml", 'transition_state = "TS_bare"\nproducts = ["CO2", "H2O"]',
        'transition_state = "H2CO3"\nproducts = ["CO2", "H2O"]',
        "not declared kind", "study.toml", "channel[0].transition_state"),
    "pressures-given-twice": (
        "reverse_water.toml", "temperature_K = [200, 300]",
        "temperature_K = [200, 300]\npressure_bar = [1.0]\npressure_Pa = [1e5]",
        "give pressures one way only", "reverse_water.toml", "conditions.pressure_Pa"),
    "unknown-top-level-key": (
        "study.toml", "[conditions]", "[condition]\ntemperature_K = [300]\n\n[conditions]",
        "unknown key", "study.toml", "condition"),
}


@pytest.mark.parametrize("case", list(BAD), ids=list(BAD))
def test_bad_study_gives_one_line_error_naming_file_and_key(study_dir, case):
    fname, old, new, message, named_file, key = BAD[case]
    _edit(study_dir, fname, old, new)
    target = "reverse_water.toml" if fname == "reverse_water.toml" else "study.toml"
    with pytest.raises(InputError, match=message) as exc:
        read_study(study_dir / target)
    text = str(exc.value)
    assert "\n" not in text
    assert Path(exc.value.file).name == named_file, text
    assert exc.value.field == key, text
    assert f"[{key}]" in text and named_file in text


def test_missing_study_file(tmp_path):
    with pytest.raises(InputError, match="file does not exist") as exc:
        read_study(tmp_path / "nothing.toml")
    assert "nothing.toml" in str(exc.value)


def test_missing_conditions(study_dir):
    text = (study_dir / "reverse_water.toml").read_text()
    start = text.index("[conditions]")
    end = text.index("[[channel]]")
    (study_dir / "reverse_water.toml").write_text(text[:start] + text[end:])
    with pytest.raises(InputError, match="missing required key") as exc:
        read_study(study_dir / "reverse_water.toml")
    assert exc.value.field == "conditions"


def test_not_toml(study_dir):
    (study_dir / "study.toml").write_text("[species\nH2O = 'h2o.toml'\n")
    with pytest.raises(InputError, match="not valid TOML") as exc:
        read_study(study_dir / "study.toml")
    assert "study.toml" in str(exc.value)


def test_a_species_file_or_an_empty_file_given_as_the_study(study_dir, tmp_path):
    # the usual mistake: `tstrate rates h2o.toml`; said plainly instead of "[species]: missing"
    with pytest.raises(InputError, match="this is a species file, not a study file") as exc:
        read_study(study_dir / "h2o.toml")
    assert exc.value.file.endswith("h2o.toml") and "\n" not in str(exc.value)
    empty = tmp_path / "empty.toml"
    empty.write_text("")
    with pytest.raises(InputError, match="the file holds no keys") as exc:
        read_study(empty)
    assert exc.value.file == str(empty)
