"""Tests for tstrate.io.sections.comparison (the [[comparison]] section of study files).

The species are the toy carbonic-acid study in tests/data/catalysis (INVENTED numbers) and the
real water / water-dimer data in tests/data/water_dimer.
"""

from __future__ import annotations

import logging
from pathlib import Path

import numpy as np
import pytest
from scipy import constants as sc

from tstrate.errors import InputError
from tstrate.io.study import SECTION_READERS, read_study

DATA = Path(__file__).resolve().parents[1] / "data"
CAT = DATA / "catalysis"
WD = DATA / "water_dimer"

HEAD = f"""
title = "comparison reader test"
[species]
H2CO3 = "{CAT / 'h2co3.toml'}"
CO2 = "{CAT / 'co2.toml'}"
H2O = "{WD / 'h2o.toml'}"
H2O_dimer = "{WD / 'dimer.toml'}"
TS_bare = "{CAT / 'ts_bare.toml'}"
H2CO3_H2O = "{CAT / 'h2co3_h2o.toml'}"
TS_1w = "{CAT / 'ts_1w.toml'}"
H2CO3_2H2O = "{CAT / 'h2co3_2h2o.toml'}"
TS_2w = "{CAT / 'ts_2w.toml'}"

[conditions]
temperature_K = [200, 250]

[[channel]]
name = "bare"
reactants = ["H2CO3"]
transition_state = "TS_bare"
products = ["CO2", "H2O"]

[[channel]]
name = "one_water"
reactants = ["H2CO3", "H2O"]
complex = "H2CO3_H2O"
transition_state = "TS_1w"
products = ["CO2", "H2O", "H2O"]

[[channel]]
name = "two_water"
reactants = ["H2CO3", "H2O", "H2O"]
transition_state = "TS_2w"
products = ["CO2", "H2O", "H2O", "H2O"]

[[channel]]
name = "via_dimer"
reactants = ["H2CO3", "H2O_dimer"]
transition_state = "TS_2w"
products = ["CO2", "H2O", "H2O", "H2O"]

[[channel]]
name = "to_complex"
reactants = ["H2CO3", "H2O"]
transition_state = "TS_1w"
products = ["H2CO3_H2O"]

[[channel]]
name = "reverse_1w"
reactants = ["CO2", "H2O", "H2O"]
transition_state = "TS_1w"
products = ["H2CO3", "H2O"]
"""

BASE = """
[[comparison]]
name = "c"
reference = "bare"
assisted = ["one_water", "two_water"]
catalyst = "H2O"
"""


def _write(tmp_path, comparison_text: str) -> Path:
    path = tmp_path / "study.toml"
    path.write_text(HEAD + comparison_text)
    return path


def _read(tmp_path, text):
    return read_study(_write(tmp_path, text)).sections["comparison"]


def test_reader_is_registered():
    assert SECTION_READERS["comparison"] == "tstrate.io.sections.comparison:read_comparisons"


def test_toy_study_reads():
    study = read_study(CAT / "study.toml")
    dry, humid = study.sections["comparison"]
    assert dry.name == "dry upper atmosphere" and dry.reference == "bare" and dry.substrate == "H2CO3"
    assert [(a.channel, a.kind) for a in dry.assisted] == [
        ("one_water", "one_catalyst"), ("two_water", "two_catalysts"), ("via_dimer", "dimer")]
    assert dry.catalyst_dimer == "H2O_dimer"
    assert [a.value for a in dry.abundances] == [2e-6, 5e-6]
    assert [a.total_pressure_Pa for a in dry.abundances] == [1e3, 1e3]
    assert [a.label for a in dry.abundances] == ["2 ppmv", "5 ppmv"]
    assert dry.temperature_K == (150.0, 160.0, 170.0, 180.0, 190.0, 200.0, 210.0, 220.0)
    assert humid.temperature_K is None
    (rh,) = humid.abundances
    assert (rh.kind, rh.value, rh.abundance.phase) == ("relative_humidity_percent", 50.0, "liquid")


@pytest.mark.parametrize("text, kind, values_m3_at_200K", [
    ("number_density_per_cm3 = 1e15", "number_density_m3", [1e21]),
    ("number_density_per_cm3 = [1e14, 1e15]", "number_density_m3", [1e20, 1e21]),
    ("partial_pressure_Pa = 2.0", "partial_pressure_Pa", [2.0 / (sc.k * 200)]),
    ("partial_pressure_bar = [1e-5]", "partial_pressure_Pa", [1.0 / (sc.k * 200)]),
    ("mixing_ratio = [1e-6, 4e-6]\ntotal_pressure_bar = [0.1, 0.2]", "mixing_ratio",
     [1e-6 * 1e4 / (sc.k * 200), 4e-6 * 2e4 / (sc.k * 200)]),
    ("mixing_ratio = 1e-6\ntotal_pressure_Pa = [1e4, 2e4]", "mixing_ratio",
     [1e-6 * 1e4 / (sc.k * 200), 1e-6 * 2e4 / (sc.k * 200)]),
], ids=["density", "density-list", "Pa", "bar", "mixing-pairwise", "mixing-broadcast"])
def test_abundance_forms(tmp_path, text, kind, values_m3_at_200K):
    (comp,) = _read(tmp_path, BASE + text + "\n")
    assert all(a.kind == kind for a in comp.abundances)
    got = [a.number_density_m3([200.0])[0] for a in comp.abundances]
    np.testing.assert_allclose(got, values_m3_at_200K, rtol=1e-12)


def test_optional_keys(tmp_path):
    text = BASE + ('relative_humidity_percent = [20, 80]\nover = "ice"\n'
                   'substrate = "H2CO3"\ntemperature_K = 190\ndescription = "cold"\n'
                   'abundance_labels = ["dry", "moist"]\n')
    (comp,) = _read(tmp_path, text)
    assert comp.temperature_K == (190.0,) and comp.description == "cold"
    assert [a.abundance.phase for a in comp.abundances] == ["ice", "ice"]
    assert comp.abundances[1].describe() == "moist: RH = 80 % over ice"


def test_supersaturation_is_a_warning(tmp_path, caplog):
    with caplog.at_level(logging.WARNING):
        (comp,) = _read(tmp_path, BASE + 'relative_humidity_percent = 120\nover = "liquid"\n')
    assert comp.abundances[0].value == 120.0
    assert "supersaturated" in caplog.text and "relative_humidity_percent" in caplog.text


def test_products_mismatch_is_a_warning(tmp_path, caplog):
    text = BASE.replace('["one_water", "two_water"]', '["to_complex"]')
    with caplog.at_level(logging.WARNING):
        (comp,) = _read(tmp_path, text + "number_density_per_cm3 = 1e15\n")
    assert comp.assisted[0].kind == "one_catalyst"
    assert "products of 'to_complex' (H2CO3_H2O) are not those of 'bare'" in caplog.text


BAD = [
    # (replacement text or extra lines, error pattern)
    (BASE.replace('reference = "bare"', 'reference = "nope"') + "number_density_per_cm3 = 1e15\n",
     r"\[comparison\[0\]\.reference\]: unknown channel 'nope'"),
    (BASE.replace('"two_water"]', '"nope"]') + "number_density_per_cm3 = 1e15\n",
     r"\[comparison\[0\]\.assisted\[1\]\]: unknown channel 'nope'"),
    (BASE.replace('catalyst = "H2O"', 'catalyst = "NH3"') + "number_density_per_cm3 = 1e15\n",
     r"\[comparison\[0\]\.catalyst\]: unknown species 'NH3'"),
    (BASE.replace('catalyst = "H2O"', 'catalyst = "TS_1w"') + "number_density_per_cm3 = 1e15\n",
     r"\[comparison\[0\]\.catalyst\]: species 'TS_1w' is a transition state"),
    (BASE + 'number_density_per_cm3 = 1e15\nsubstrate = "HNO3"\n',
     r"\[comparison\[0\]\.substrate\]: unknown species 'HNO3'"),
    (BASE.replace('catalyst = "H2O"', 'catalyst = "CO2"') + "number_density_per_cm3 = 1e15\n",
     r"\[comparison\[0\]\.assisted\[0\]\]: assisted channel 'one_water' has reactants H2CO3 \+ H2O, "
     r"expected H2CO3 \+ CO2"),
    (BASE.replace('"two_water"]', '"via_dimer"]') + "number_density_per_cm3 = 1e15\n",
     r"\[comparison\[0\]\.assisted\[1\]\]: assisted channel 'via_dimer' has reactants H2CO3 \+ H2O_dimer"),
    (BASE + 'catalyst_dimer = "CO2"\nnumber_density_per_cm3 = 1e15\n',
     r"\[comparison\[0\]\.catalyst_dimer\]: catalyst dimer 'CO2': atoms do not balance"),
    (BASE.replace('reference = "bare"', 'reference = "one_water"') + "number_density_per_cm3 = 1e15\n",
     r"\[comparison\[0\]\.reference\]: reference channel 'one_water' has 2 reactants"),
    (BASE.replace('"two_water"]', '"bare"]') + "number_density_per_cm3 = 1e15\n",
     r"\[comparison\[0\]\.assisted\[1\]\]: channel 'bare' is the reference itself"),
    (BASE.replace('"two_water"]', '"one_water"]') + "number_density_per_cm3 = 1e15\n",
     r"\[comparison\[0\]\.assisted\]: channel 'one_water' listed twice"),
    (BASE.replace('assisted = ["one_water", "two_water"]', "assisted = []") + "number_density_per_cm3 = 1e15\n",
     r"\[comparison\[0\]\.assisted\]: list at least one assisted channel"),
    (BASE + "number_density_per_cm3 = -1e15\n",
     r"\[comparison\[0\]\.number_density_per_cm3\]: abundance must not be negative, got -1e\+15"),
    (BASE + "partial_pressure_Pa = [1.0, -2.0]\n",
     r"\[comparison\[0\]\.partial_pressure_Pa\]: abundance must not be negative, got -2"),
    (BASE + 'relative_humidity_percent = -5\nover = "ice"\n',
     r"\[comparison\[0\]\.relative_humidity_percent\]: abundance must not be negative, got -5"),
    (BASE + "relative_humidity_percent = 50\n",
     r"\[comparison\[0\]\.over\]: relative humidity needs over"),
    (BASE + 'relative_humidity_percent = 50\nover = "water"\n',
     r"\[comparison\[0\]\.over\]: unknown phase 'water'"),
    (BASE.replace('catalyst = "H2O"', 'catalyst = "H2O"') + 'number_density_per_cm3 = 1e15\nover = "ice"\n',
     r"\[comparison\[0\]\.over\]: 'over' is only used with relative_humidity_percent"),
    (BASE,
     r"\[comparison\[0\]\]: no catalyst abundance given"),
    (BASE + "number_density_per_cm3 = 1e15\npartial_pressure_Pa = 2.0\n",
     r"\[comparison\[0\]\.partial_pressure_Pa\]: give the catalyst abundance one way only"),
    (BASE + "mixing_ratio = 5e-6\n",
     r"\[comparison\[0\]\.mixing_ratio\]: a mixing ratio needs total_pressure_bar"),
    (BASE + "mixing_ratio = 2.0\ntotal_pressure_bar = 1\n",
     r"\[comparison\[0\]\.mixing_ratio\]: mixing ratio must not exceed 1"),
    (BASE + "mixing_ratio = [1e-6, 2e-6]\ntotal_pressure_bar = [0.1, 0.2, 0.3]\n",
     r"\[comparison\[0\]\.total_pressure_bar\]: 3 total pressures for 2 mixing ratios"),
    (BASE + "mixing_ratio = 1e-6\ntotal_pressure_bar = 0\n",
     r"\[comparison\[0\]\.total_pressure_bar\]: total pressure must be positive"),
    (BASE + "number_density_per_cm3 = 1e15\ntotal_pressure_bar = 1\n",
     r"\[comparison\[0\]\.total_pressure_bar\]: a total pressure is only used with mixing_ratio"),
    (BASE + 'number_density_per_cm3 = "lots"\n',
     r"\[comparison\[0\]\.number_density_per_cm3\]: expected a number, got str"),
    (BASE + "number_density_per_cm3 = []\n",
     r"\[comparison\[0\]\.number_density_per_cm3\]: expected at least 1 values"),
    (BASE + "number_density_per_cm3 = 1e15\ntemperature_K = [200, -3]\n",
     r"\[comparison\[0\]\.temperature_K\]: temperatures must be positive"),
    (BASE + 'number_density_per_cm3 = 1e15\nabundance_labels = ["a", "b"]\n',
     r"\[comparison\[0\]\.abundance_labels\]: 2 labels for 1 abundances"),
    (BASE + "number_density_per_cm3 = 1e15\ncatalist = 3\n",
     r"\[comparison\[0\]\.catalist\]: unknown key"),
    (BASE + "number_density_per_cm3 = 1e15\n" + BASE + "number_density_per_cm3 = 1e16\n",
     r"\[comparison\]: comparison name 'c' used twice"),
]


@pytest.mark.parametrize("text, pattern", BAD, ids=[f"bad{i}" for i in range(len(BAD))])
def test_bad_comparisons(tmp_path, text, pattern):
    path = _write(tmp_path, text)
    with pytest.raises(InputError, match=pattern) as info:
        read_study(path)
    message = str(info.value)
    assert str(path) in message and "\n" not in message


def test_relative_humidity_needs_water(tmp_path):
    text = BASE.replace('catalyst = "H2O"', 'catalyst = "CO2"')
    path = _write(tmp_path, text + 'relative_humidity_percent = 50\nover = "ice"\n')
    with pytest.raises(InputError, match=r"relative humidity is defined for water; catalyst 'CO2' is CO2"):
        read_study(path)
