"""[falloff] and [[excitation]] study sections: values, defaults, overrides and one-line errors."""

from pathlib import Path

import pytest
from scipy.constants import N_A, c as c_light, h

from tstrate.errors import InputError
from tstrate.io.study import read_study
from tstrate.model.settings import US_STANDARD_1976

DATA = Path(__file__).resolve().parents[1] / "data" / "falloff"
CM1_J_PER_MOL = h * c_light * 100 * N_A

HEAD = f"""
title = "section test"
[species]
H2CO3 = "{DATA / 'h2co3.toml'}"
TS_bare = "{DATA / 'ts_bare.toml'}"
CO2 = "{DATA / 'co2.toml'}"
H2O = "{DATA / 'h2o.toml'}"

[conditions]
temperature_K = [250]
pressure_bar = [0.01, 1]
bath_gas = "CO2"

[[channel]]
name = "bare"
reactants = ["H2CO3"]
transition_state = "TS_bare"
products = ["CO2", "H2O"]
"""

SECOND = """
[[channel]]
name = "back"
reactants = ["CO2", "H2O"]
transition_state = "TS_bare"
products = ["H2CO3"]
"""


def load(tmp_path, text, name="study.toml"):
    path = tmp_path / name
    path.write_text(HEAD + text)
    return read_study(path)


def test_bundled_test_study_sections():
    st = read_study(DATA / "study.toml")
    fo = st.sections["falloff"]
    assert fo.default.delta_E_down_cm1 == 200 and fo.default.grain_cm1 == 10
    over = fo.for_channel("bare_eckart")
    assert over.delta_E_down_cm1 == 300 and over.fit_T2 and over.grain_cm1 == 10   # merged with the defaults
    assert over != fo.default
    assert fo.for_channel("bare") is fo.default
    ex = {e.name: e for e in st.sections["excitation"]}
    assert ex["OH overtone 2v"].energy_J_per_mol == pytest.approx(7200 * CM1_J_PER_MOL, rel=1e-12)
    assert ex["OH overtone 2v"].temperature_K == (220.0,)
    assert ex["near-UV"].energy_J_per_mol == pytest.approx(h * c_light / 400e-9 * N_A, rel=1e-12)
    assert ex["near-UV"].profile == US_STANDARD_1976 and ex["near-UV"].altitude_range_km == (0.0, 86.0)
    assert ex["csv"].energy_J_per_mol == pytest.approx(260e3)
    assert Path(ex["csv"].profile) == DATA / "profile.csv"          # relative to the study file
    assert ex["csv"].profile_table.temperature_K.size > 0            # read when the study is read
    assert ex["csv"].pressure_scan is False


def test_override_replaces_the_energy_transfer_choice(tmp_path):
    st = load(tmp_path, """
[falloff]
delta_E_down_cm1 = 150
delta_E_temperature_exponent = 0.8
[falloff.channels.bare]
collision_efficiency = 0.25
""")
    s = st.sections["falloff"].for_channel("bare")
    assert s.collision_efficiency == 0.25 and s.delta_E_down_cm1 is None
    assert s.delta_E_temperature_exponent == 0.8


def test_single_unimolecular_channel_is_the_default(tmp_path):
    st = load(tmp_path, """
[[excitation]]
energy = { value = 2.0, unit = "eV" }
""")
    (e,) = st.sections["excitation"]
    assert e.channel == "bare" and e.name == "excitation 1" and e.description == "2 eV"


@pytest.mark.parametrize("text, match", [
    ("[falloff]\ngrain = 10\n", r"study.toml \[falloff.grain\]: unknown key"),
    ("[falloff]\ndelta_E_down_cm1 = 100\ncollision_efficiency = 0.2\n",
     r"\[falloff.delta_E_down_cm1\]: give one of collision_efficiency"),
    ("[falloff]\ndelta_E_all_cm1 = 40\n", r"\[falloff.delta_E_all_cm1\]: <dE> over all collisions must be negative"),
    ("[falloff]\ngrain_cm1 = -1\n", r"\[falloff.grain_cm1\]: grain must be a positive"),
    ("[falloff]\ncollision_integral = \"exact\"\n", r"\[falloff.collision_integral\]: unknown collision integral"),
    ("[falloff.channels.nope]\ngrain_cm1 = 5\n", r"\[falloff.channels.nope\]: unknown channel 'nope'"),
    ("[falloff.channels.bare]\nstep = 5\n", r"\[falloff.channels.bare.step\]: unknown key"),
    ("[[excitation]]\nchannel = \"bare\"\n", r"\[excitation\[0\]\]: no excitation energy"),
    ("[[excitation]]\nwavelength_nm = 300\nwavenumber_cm1 = 7000\n",
     r"\[excitation\[0\].wavenumber_cm1\]: give one of them only"),
    ("[[excitation]]\nwavelength_nm = -300\n", r"\[excitation\[0\].wavelength_nm\]: wavelength must be positive"),
    ("[[excitation]]\nenergy = { value = 2, unit = \"eV/molecule\" }\n",
     r"\[excitation\[0\].energy.unit\]: unknown energy unit"),
    ("[[excitation]]\nwavenumber_cm1 = 7000\nchannel = \"nope\"\n", r"\[excitation\[0\].channel\]: unknown channel"),
    ("[[excitation]]\nwavenumber_cm1 = 7000\nprofile = \"missing.csv\"\n",
     r"\[excitation\[0\].profile\]: profile file 'missing.csv' does not exist"),
    ("[[excitation]]\nwavenumber_cm1 = 7000\naltitude_km = [0, 10]\n",
     r"\[excitation\[0\].altitude_km\]: an altitude range needs a profile"),
    ("[[excitation]]\nwavenumber_cm1 = 7000\nprofile = \"us-standard-1976\"\naltitude_km = [10, 0]\n",
     r"\[excitation\[0\].altitude_km\]: altitude range must be"),
    ("[[excitation]]\nwavenumber_cm1 = 7000\ntemperature_K = [0]\n",
     r"\[excitation\[0\].temperature_K\]: temperatures must be positive"),
    ("[[excitation]]\nwavenumber_cm1 = 7000\ncolour = \"red\"\n", r"\[excitation\[0\].colour\]: unknown key"),
    ("[[excitation]]\nname = \"a\"\nwavenumber_cm1 = 7000\n[[excitation]]\nname = \"a\"\nwavenumber_cm1 = 8000\n",
     r"\[excitation\]: excitation name 'a' used twice"),
])
def test_errors_name_file_and_key(tmp_path, text, match):
    with pytest.raises(InputError, match=match):
        load(tmp_path, text)


def test_bimolecular_channel_and_ambiguous_channel(tmp_path):
    with pytest.raises(InputError, match=r"\[excitation\[0\].channel\]: channel 'back' has 2 reactants"):
        load(tmp_path, SECOND + "[[excitation]]\nchannel = \"back\"\nwavenumber_cm1 = 7000\n")
    text = SECOND.replace('"back"', '"bare2"').replace('["CO2", "H2O"]', '["H2CO3"]', 1) \
        .replace('products = ["H2CO3"]', 'products = ["CO2", "H2O"]')
    with pytest.raises(InputError, match=r"\[excitation\[0\].channel\]: missing: say which"):
        load(tmp_path, text + "[[excitation]]\nwavenumber_cm1 = 7000\n")


def test_pressure_scan_without_pressures(tmp_path):
    text = "[[excitation]]\nwavenumber_cm1 = 7000\npressures = true\n"
    path = tmp_path / "s.toml"
    path.write_text((HEAD + text).replace("pressure_bar = [0.01, 1]\n", ""))
    with pytest.raises(InputError, match=r"\[excitation\[0\].pressures\]: a pressure scan needs pressures"):
        read_study(path)


def test_master_equation_needs_delta_e_down():
    """The master equation refuses a bare collision efficiency (it needs <dE>down)."""
    from tstrate.errors import InputError
    from tstrate.model.settings import FalloffSettings

    with pytest.raises(InputError, match="needs <dE>down"):
        FalloffSettings(pressure_method="master_equation", collision_efficiency=0.3)
    with pytest.raises(InputError, match="unknown pressure method"):
        FalloffSettings(pressure_method="lindemann")
    assert FalloffSettings(pressure_method="master_equation", delta_E_down_cm1=200.0).energy_transfer == "down"
