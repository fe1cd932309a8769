"""``tstrate rates``: table, JSON and plot output; one-line errors with exit status 2.

Numbers printed are compared with the library's own results (tstrate.physics.tst, tested
against outside references in tests/physics/test_tst.py); here the point is that the command
shows them in the right units and places. Data: the invented study in tests/data/tst/.
"""

from __future__ import annotations

import json
import shutil
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from tstrate.cli.main import main
from tstrate.io.study import read_study
from tstrate.study.rates import study_rates

DATA = Path(__file__).resolve().parents[1] / "data" / "tst"
STUDY = DATA / "study.toml"
PNG_MAGIC = b"\x89PNG\r\n\x1a\n"  # PNG specification (ISO/IEC 15948), file signature


@pytest.fixture
def study_dir(tmp_path):
    target = tmp_path / "study"
    shutil.copytree(DATA, target)
    return target


def _run(capsys, *argv):
    code = main(["rates", *map(str, argv)])
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture(scope="module")
def library_results():
    return study_rates(read_study(STUDY))


def test_table_output(capsys, library_results):
    code, out, err = _run(capsys, STUDY)
    assert code == 0 and err == ""
    assert out.startswith("invented H2CO3 -> CO2 + H2O test study")
    for name in ("bare", "water", "two_waters", "back"):
        assert f"\n{name}: barrier " in out
    assert "k/(s-1)" in out
    assert out.count("k/(cm3 molecule-1 s-1)") == 2      # water and back
    assert "k/(cm6 molecule-2 s-1)" in out                # two_waters
    # the bare channel's k at 298.15 K, as the table prints it (4 significant figures)
    bare = library_results[0]
    i = list(bare.temperature_K).index(298.15)
    assert f"{bare.k[i]:.4g}" in out
    assert f"{bare.barrier_zpe_J_per_mol / 1e3:.2f} kJ/mol (ZPE-corrected)" in out


def test_json_output(capsys, library_results):
    code, out, err = _run(capsys, STUDY, "--json")
    assert code == 0 and err == ""
    doc = json.loads(out)
    assert doc["temperature_K"] == [150, 200, 250, 298.15, 400, 1000]
    assert [c["name"] for c in doc["channels"]] == ["bare", "water", "two_waters", "back"]
    required = {"name", "temperature_K", "rate_constant", "rate_constant_unit", "kappa",
                "barrier_zpe_kJ_per_mol", "reverse_rate_constant", "reverse_rate_constant_unit",
                "delta_G_activation_kJ_per_mol", "order"}
    for rec, cr in zip(doc["channels"], library_results):
        assert required <= set(rec)
        assert rec["temperature_K"] == doc["temperature_K"]
        per_cm3 = 1e6 ** (cr.order - 1)  # SI m^3 -> cm^3 per extra molecule
        np.testing.assert_allclose(rec["rate_constant"], cr.k * per_cm3, rtol=1e-12)
        np.testing.assert_allclose(rec["kappa"], cr.kappa, rtol=1e-12)
        assert rec["barrier_zpe_kJ_per_mol"] == pytest.approx(cr.barrier_zpe_J_per_mol / 1e3, rel=1e-12)
        # ln Kc in the unit of Kc, (molecule cm-3)^dn: the SI value less dn ln(1e6 cm3 per m3)
        dn = cr.reverse_order - cr.order
        np.testing.assert_allclose(rec["ln_Kc"], cr.ln_kc - dn * np.log(1e6), rtol=1e-12)
        assert rec["Kc_unit"] == f"(molecule cm-3)^{dn}"
    units = {c["name"]: (c["rate_constant_unit"], c["reverse_rate_constant_unit"]) for c in doc["channels"]}
    assert units == {"bare": ("s-1", "cm3 molecule-1 s-1"),
                     "water": ("cm3 molecule-1 s-1", "cm6 molecule-2 s-1"),
                     "two_waters": ("cm6 molecule-2 s-1", "cm9 molecule-3 s-1"),
                     "back": ("cm3 molecule-1 s-1", "s-1")}


def test_temperature_option_and_study_units(capsys):
    code, out, _ = _run(capsys, DATA / "reverse_water.toml", "--json", "-T", "220", "260", "300")
    assert code == 0
    doc = json.loads(out)
    assert doc["temperature_K"] == [220.0, 260.0, 300.0]
    (rec,) = doc["channels"]
    # [conditions] rate_units of the study: termolecular in cm6, the bimolecular reverse in L/mol
    assert rec["rate_constant_unit"] == "cm6 molecule-2 s-1"
    assert rec["reverse_rate_constant_unit"] == "L mol-1 s-1"
    (cr,) = study_rates(read_study(DATA / "reverse_water.toml"), temperature_K=[220.0, 260.0, 300.0])
    np.testing.assert_allclose(rec["reverse_rate_constant"], cr.k_reverse * 1e3 * 6.02214076e23, rtol=1e-12)


def test_plot_dir_holds_the_arrhenius_plot_under_the_name_run_uses(capsys, tmp_path):
    # --plot takes a folder (it used to take a file): arrhenius.png (and .svg when asked for), the
    # names of tstrate run's plots/ folder (tests/cli/test_run.py checks the same names there)
    folder = tmp_path / "figures"
    code, out, err = _run(capsys, STUDY, "--plot", folder, "--plot-formats", "png,svg")
    assert code == 0 and err == ""
    assert sorted(p.name for p in folder.iterdir()) == ["arrhenius.png", "arrhenius.svg"]
    assert (folder / "arrhenius.png").read_bytes().startswith(PNG_MAGIC)
    svg = (folder / "arrhenius.svg").read_bytes()
    assert b"<svg" in svg[:2000] and svg.rstrip().endswith(b"</svg>")
    assert f"plot written to {folder / 'arrhenius.png'}" in out


def test_plot_with_json_keeps_stdout_json(capsys, tmp_path):
    code, out, _ = _run(capsys, STUDY, "--json", "--plot", tmp_path)
    assert code == 0
    doc = json.loads(out)
    assert doc["plots"] == [str(tmp_path / "arrhenius.png")]  # PNG only by default
    assert doc["low_modes"] == {"method": "harmonic", "cutoff_cm1": 100.0}
    assert (tmp_path / "arrhenius.png").read_bytes().startswith(PNG_MAGIC)


def test_plot_onto_an_existing_file_fails_before_any_work(capsys, tmp_path):
    target = tmp_path / "arrhenius.png"
    target.write_bytes(b"mine")
    code, out, err = _run(capsys, STUDY, "--plot", target)
    assert code == 2 and out == ""
    assert err.count("\n") == 1 and "[--plot]: exists and is not a folder" in err
    assert target.read_bytes() == b"mine"


# ---- errors: exit status 2 and one line on stderr -------------------------------------------------

ERRORS = {
    "missing-study": (None, None, None, "nothere.toml: file does not exist"),
    "ts-without-imaginary-frequency": ("ts_bare.toml", "-1650.0", "1650.0",
                                       "ts_bare.toml [frequencies_cm1]: a transition state needs exactly one"),
    "unknown-species": ("study.toml", 'products = ["CO2", "H2O"]', 'products = ["CO3", "H2O"]',
                        "study.toml [channel[0].products]: unknown species 'CO3'"),
    "negative-reverse-barrier-for-eckart": (
        "co2.toml", "value = 10.0", "value = 200.0",
        "study.toml [channel[0].tunnelling]: channel 'bare': reverse ZPE-corrected barrier is -"),
    "unknown-tunnelling-model": ("study.toml", 'tunnelling = "eckart"', 'tunnelling = "ekart"',
                                 "study.toml [channel[0].tunnelling]: unknown tunnelling model 'ekart'"),
    "duplicate-channel": ("study.toml", 'name = "back"', 'name = "water"',
                          "study.toml [channel]: channel name 'water' used twice"),
}


@pytest.mark.parametrize("case", list(ERRORS), ids=list(ERRORS))
def test_errors_are_one_line_with_status_2(capsys, study_dir, case):
    fname, old, new, message = ERRORS[case]
    study = study_dir / ("nothere.toml" if fname is None else "study.toml")
    if fname is not None:
        path = study_dir / fname
        text = path.read_text()
        assert old in text
        path.write_text(text.replace(old, new, 1))
    code, out, err = _run(capsys, study)
    assert code == 2 and out == ""
    assert err.startswith("tstrate rates: error: ") and err.count("\n") == 1
    assert message in err


@pytest.mark.parametrize("temps", [["0"], ["300", "-20"], ["nan"]])
def test_bad_temperature_option(capsys, temps):
    code, out, err = _run(capsys, STUDY, "-T", *temps)
    assert code == 2 and out == ""
    assert "[--temperature]: temperatures must be positive" in err


def test_study_without_channels(capsys, study_dir):
    text = (study_dir / "study.toml").read_text()
    (study_dir / "study.toml").write_text(text[:text.index("[[channel]]")])
    code, _, err = _run(capsys, study_dir / "study.toml", "--plot", study_dir / "figures")
    assert code == 2 and "has no [[channel]]" in err
    assert not (study_dir / "figures").exists()


def test_real_process_exit_status_and_no_traceback(study_dir):
    """One run as a separate process: the status the shell sees, and no traceback."""
    path = study_dir / "co2.toml"
    path.write_text(path.read_text().replace("value = 10.0", "value = 200.0"))
    proc = subprocess.run([sys.executable, "-m", "tstrate.cli.main", "rates", str(study_dir / "study.toml")],
                          capture_output=True, text=True, check=False)
    assert proc.returncode == 2
    assert "Traceback" not in proc.stderr and proc.stderr.count("\n") == 1
    assert proc.stdout == ""


def test_help(capsys):
    with pytest.raises(SystemExit) as exc:
        main(["rates", "--help"])
    assert exc.value.code == 0
    out = capsys.readouterr().out
    assert "--json" in out and "--plot" in out and "STUDY" in out
