"""`tstrate falloff` and `tstrate excite`: JSON keys, text output, plots, exit status 2 on user mistakes."""

import json
from pathlib import Path

import numpy as np
import pytest

from tstrate.cli.main import main

pytestmark = pytest.mark.fitting     # rerun by .ci/run with 1 and 2 BLAS threads

DATA = Path(__file__).resolve().parents[1] / "data" / "falloff"
TOY = Path(__file__).resolve().parents[1] / "data" / "toy" / "study.toml"


def run(capsys, *argv):
    code = main(list(map(str, argv)))
    out, err = capsys.readouterr()
    return code, out, err


def study_copy(tmp_path, edit=lambda s: s, name="study.toml"):
    """The test study with absolute species/profile paths, edited, written to tmp_path."""
    text = (DATA / "study.toml").read_text()
    for f in ("h2co3.toml", "ts_bare.toml", "co2.toml", "h2o.toml", "profile.csv"):
        text = text.replace(f'"{f}"', f'"{DATA / f}"')
    path = tmp_path / name
    path.write_text(edit(text))
    return path


@pytest.fixture(scope="module")
def falloff_json():
    import contextlib
    import io

    buf = io.StringIO()
    with contextlib.redirect_stdout(buf):
        assert main(["falloff", str(DATA / "study.toml"), "--json"]) == 0
    return json.loads(buf.getvalue())


def test_falloff_json_keys(falloff_json):
    doc = falloff_json
    assert doc["bath_gas"] == "CO2"
    assert [c["name"] for c in doc["channels"]] == ["bare", "bare_eckart"]
    assert doc["not_computed"] == [{"name": "back", "order": 2, "falloff_computed": False,
                                    "reason": "falloff is not computed for channels of order 2; only unimolecular "
                                              "channels have a falloff treatment here"}]
    for ch in doc["channels"]:
        for key in ("name", "temperature_K", "pressure_bar", "rate_constant", "rate_constant_unit",
                    "k_high_pressure", "k_high_pressure_unit", "k_low_pressure", "k_low_pressure_unit",
                    "troe", "bath_gas", "collision_efficiency", "grain_cm1", "lindemann_rate_constant",
                    "canonical_tst_rate_constant", "collisions", "warnings"):
            assert key in ch, key
        for key in ("a", "T3_K", "T1_K", "T2_K", "Fcent", "max_deviation_percent", "rms_deviation_percent"):
            assert key in ch["troe"], key
        assert ch["rate_constant_unit"] == "s-1" and ch["k_low_pressure_unit"] == "cm3 molecule-1 s-1"
        assert ch["pressure_bar"] == [1e-6, 1e-4, 1e-2, 1.0]
        assert len(ch["rate_constant"]) == 3 and all(len(row) == 4 for row in ch["rate_constant"])
        assert len(ch["collision_efficiency"]) == 3
        # deviations in percent: the Troe form against k(T, p) at the study's points
        dev = np.abs(np.array(ch["troe"]["rate_constant"]) / np.array(ch["rate_constant"]) - 1)
        assert ch["troe"]["max_deviation_on_study_grid_percent"] == pytest.approx(100 * dev.max(), rel=1e-9)
    bare = doc["channels"][0]
    assert bare["grain_cm1"] == pytest.approx(10.0)
    # k0 in cm3 molecule-1 s-1 is 1e6 times the SI value; k(T, p) never exceeds k_inf
    for row, kinf in zip(bare["rate_constant"], bare["k_high_pressure"]):
        assert max(row) <= kinf * (1 + 1e-12)
    assert doc["channels"][1]["troe"]["T2_K"] is not None


def test_falloff_text_and_plots(capsys, tmp_path):
    code, out, err = run(capsys, "falloff", DATA / "study.toml", "--plot", tmp_path / "plots",
                         "--plot-formats", "png,svg")
    assert code == 0
    assert "back (order 2): falloff is not computed" in out
    assert "Troe fit error: max" in out and "k_inf/TST" in out
    for stem in ("falloff_bare", "falloff_bare_eckart"):
        for suffix in (".png", ".svg"):
            path = tmp_path / "plots" / (stem + suffix)
            assert path.stat().st_size > 1000
    assert (tmp_path / "plots" / "falloff_bare.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def _one_line_error(code, err, *needles):
    assert code == 2
    lines = err.strip().splitlines()
    assert len(lines) == 1, err
    for n in needles:
        assert n in lines[0], (n, lines[0])


@pytest.mark.parametrize("edit, needles", [
    (lambda s: s.replace("pressure_bar = [1e-6, 1e-4, 1e-2, 1.0]", "pressure_bar = [0, 1.0]"),
     ["study.toml", "[conditions.pressure_bar]", "pressures must be positive"]),
    (lambda s: s.replace("pressure_bar = [1e-6, 1e-4, 1e-2, 1.0]", "pressure_bar = [-1e-3]"),
     ["[conditions.pressure_bar]", "pressures must be positive"]),
    (lambda s: s.replace(str(DATA / "h2co3.toml"), str(DATA / "h2co3_nolj.toml")),
     ["h2co3_nolj.toml", "[lennard_jones]", "no Lennard-Jones parameters"]),
    (lambda s: s.replace('bath_gas = "CO2"', 'bath_gas = "Kr"'),
     ["study.toml", "[conditions.bath_gas]", "unknown bath gas 'Kr'"]),
    (lambda s: s.replace('bath_gas = "CO2"\n', ""), ["[conditions.bath_gas]", "falloff needs a bath gas"]),
    (lambda s: s.replace("pressure_bar = [1e-6, 1e-4, 1e-2, 1.0]\n", "")
     .split("[[excitation]]")[0], ["[conditions.pressure_bar]", "falloff needs pressures"]),
    (lambda s: s.replace("grain_cm1 = 10\n", "grain_cm1 = 0\n"), ["[falloff.grain_cm1]", "grain must be a positive"]),
])
def test_falloff_bad_input_exits_2(capsys, tmp_path, edit, needles):
    code, out, err = run(capsys, "falloff", study_copy(tmp_path, edit))
    _one_line_error(code, err, *needles)


def test_toy_study_without_pressures(capsys):
    code, out, err = run(capsys, "falloff", TOY)
    _one_line_error(code, err, "toy/study.toml", "[conditions.pressure_bar]", "falloff needs pressures")


def test_plot_folder_that_is_a_file(capsys, tmp_path):
    f = tmp_path / "file"
    f.write_text("x")
    code, out, err = run(capsys, "falloff", DATA / "study.toml", "--plot", f)
    _one_line_error(code, err, "[--plot]", "not a folder")


def test_coarse_grain_warning_reaches_the_user(capsys, tmp_path):
    path = study_copy(tmp_path, lambda s: s.replace("grain_cm1 = 10\n", "grain_cm1 = 150\n"))
    code, out, err = run(capsys, "falloff", path, "--json")
    assert code == 0
    assert "tstrate falloff: warning:" in err and "[falloff.grain_cm1]: grain 150 cm-1 is coarser" in err
    doc = json.loads(out)
    assert doc["channels"][0]["requested_grain_cm1"] == 150
    assert doc["channels"][0]["grain_cm1"] <= 220 / 3
    assert any("refined" in w for w in doc["warnings"])
