"""`tstrate excite`: excitations from the study or the command line, JSON keys, plots, exit status 2."""

import json
from pathlib import Path

import pytest

from tstrate.cli.main import main

DATA = Path(__file__).resolve().parents[1] / "data" / "falloff"
STUDY = DATA / "study.toml"


def run(capsys, *argv):
    code = main(list(map(str, argv)))
    out, err = capsys.readouterr()
    return code, out, err


def test_study_excitations_json(capsys):
    code, out, err = run(capsys, "excite", STUDY, "--json")
    assert code == 0
    doc = json.loads(out)
    assert doc["bath_gas"] == "CO2"
    ex = {e["name"]: e for e in doc["excitations"]}
    assert list(ex) == ["OH overtone 2v", "near-UV", "csv"]
    # below threshold: flag in JSON, zero fractions, and a warning line on stderr
    low = ex["OH overtone 2v"]
    assert low["below_threshold"] is True
    assert low["pressure_scan"]["below_threshold"] == [True]
    assert low["pressure_scan"]["fraction_stern_volmer"] == [[0.0, 0.0, 0.0, 0.0]]
    assert "tstrate excite: warning: excitation 'OH overtone 2v'" in err and "fraction reacting is 0" in err
    uv = ex["near-UV"]
    assert uv["below_threshold"] is False
    for key in ("temperature_K", "pressure_bar", "number_density_per_cm3", "energy_kJ_per_mol", "rate_constant_per_s",
                "collision_frequency_per_s", "collision_efficiency", "fraction_stern_volmer", "fraction_stepwise",
                "half_quenching_pressure_bar"):
        assert key in uv["pressure_scan"], key
    prof = uv["altitude_profile"]
    assert prof["source"] == "U.S. Standard Atmosphere, 1976"
    assert prof["altitude_km"][0] == 0 and prof["altitude_km"][-1] == pytest.approx(86)
    assert len(prof["fraction_stern_volmer"]) == len(prof["altitude_km"]) == 44
    assert uv["k_of_E"]["rate_constant_per_s"][0] >= 0 and len(uv["k_of_E"]["energy_cm1"]) > 100
    assert ex["csv"]["pressure_scan"] is None and len(ex["csv"]["altitude_profile"]["altitude_km"]) == 4


def test_command_line_excitation_text_and_plots(capsys, tmp_path):
    code, out, err = run(capsys, "excite", STUDY, "--wavenumber", "15500", "--channel", "bare", "-T", "220",
                         "--altitude", "0", "40", "--altitude-step", "10", "--plot", tmp_path,
                         "--plot-formats", "png,svg")
    assert code == 0, err
    assert "wavenumber 15500 cm-1" in out and "along U.S. Standard Atmosphere, 1976" in out
    assert "OH overtone" not in out                       # the study's excitations are replaced
    names = sorted(p.name for p in tmp_path.iterdir())
    stem = "excitation_wavenumber_15500_cm-1"  # the prefix tstrate run uses (it was excite_)
    assert names == sorted(f"{stem}_{kind}.{ext}" for kind in ("pressure", "altitude", "k_of_E")
                           for ext in ("png", "svg"))


def test_energy_option_and_no_pressures(capsys):
    code, out, err = run(capsys, "excite", STUDY, "--energy", "190", "kJ/mol", "--channel", "bare_eckart",
                         "--profile", DATA / "profile.csv", "--no-pressures", "--json")
    assert code == 0, err
    (e,) = json.loads(out)["excitations"]
    assert e["excitation_energy_kJ_per_mol"] == pytest.approx(190)
    assert e["pressure_scan"] is None and len(e["altitude_profile"]["altitude_km"]) == 5
    assert e["tunnelling_in_k_of_E"] == "eckart"


@pytest.mark.parametrize("argv, needles", [
    (["--channel", "bare"], ["[--channel]", "applies to an excitation given on the command line"]),
    (["--wavelength", "-5"], ["[--wavelength]", "must be positive"]),
    (["--energy", "x", "kJ/mol"], ["[--energy]", "not a number"]),
    (["--energy", "100", "furlongs"], ["[--energy]", "unknown energy unit"]),
    (["--wavenumber", "7000"], ["[--channel]", "say which unimolecular channel"]),
    (["--wavenumber", "7000", "--channel", "back"], ["[--channel]", "channel 'back' has 2 reactants"]),
    (["--wavenumber", "7000", "--channel", "bare", "--altitude", "0", "120"],
     ["[--altitude]", "ends at 86 km"]),
    (["--wavenumber", "7000", "--channel", "bare", "--profile", "nowhere.csv"], ["nowhere.csv", "[--profile]"]),
    (["--wavenumber", "7000", "--channel", "bare", "--delta-e-down", "-3"], ["[--delta-e-down]"]),
    (["--wavenumber", "7000", "--channel", "bare", "--collision-efficiency", "2"], ["[--collision-efficiency]"]),
    (["--wavenumber", "7000", "--channel", "bare", "-T", "0"], ["[--temperature]"]),
])
def test_bad_options_exit_2(capsys, argv, needles):
    code, out, err = run(capsys, "excite", STUDY, *argv)
    assert code == 2
    lines = err.strip().splitlines()
    assert len(lines) == 1, err
    for n in needles:
        assert n in lines[0], (n, lines[0])


def test_binary_or_folder_profile_exit_2(capsys, tmp_path):
    binary = tmp_path / "profile.csv"
    binary.write_bytes(b"\xd0\xff\x00\x81" * 20)
    for profile, needle in ((binary, "not a text file"), (tmp_path, "is a folder")):
        code, out, err = run(capsys, "excite", STUDY, "--wavenumber", "7000", "--channel", "bare",
                             "--profile", profile, "--altitude", "0", "10")
        assert code == 2 and out == ""
        lines = err.strip().splitlines()
        assert len(lines) == 1 and needle in lines[0] and "Traceback" not in err, err


def test_study_without_excitations(capsys, tmp_path):
    text = STUDY.read_text().split("[[excitation]]")[0]
    for f in ("h2co3.toml", "ts_bare.toml", "co2.toml", "h2o.toml"):
        text = text.replace(f'"{f}"', f'"{DATA / f}"')
    path = tmp_path / "s.toml"
    path.write_text(text)
    code, out, err = run(capsys, "excite", path)
    assert code == 2 and "[excitation]: no excitation to follow" in err
