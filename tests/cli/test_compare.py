"""Tests for ``tstrate compare`` and the comparison figures (tstrate.output.compare_plots).

Study: tests/data/catalysis/study.toml (toy carbonic-acid species with INVENTED numbers; real
water and water-dimer data). The numbers are checked against the library (tstrate.physics
.catalysis, tested on its own in tests/physics/test_catalysis.py) and against unit conversions.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest
from scipy import constants as sc

from tstrate.cli.main import main
from tstrate.io.study import read_study
from tstrate.study.routes import study_comparisons

DATA = Path(__file__).resolve().parents[1] / "data"
STUDY = DATA / "catalysis" / "study.toml"


@pytest.fixture(scope="module")
def library_results():
    return study_comparisons(read_study(STUDY))


def _run_json(capsys, *extra):
    assert main(["compare", str(STUDY), "--json", *extra]) == 0
    return json.loads(capsys.readouterr().out)


def test_json_layout_and_values(capsys, library_results):
    out = _run_json(capsys)
    comps = out["comparisons"]
    # one entry per comparison and abundance: 2 mixing ratios + 1 relative humidity
    assert [(c["name"], c["abundance"]["value"]) for c in comps] == [
        ("dry upper atmosphere", 2e-6), ("dry upper atmosphere", 5e-6), ("humid lower atmosphere", 50.0)]
    dry5 = comps[1]
    res = library_results[0]
    np.testing.assert_allclose(dry5["temperature_K"], res.temperature_K)
    # 5 ppmv at 0.01 bar: [H2O] = x p / (k_B T), in cm^-3
    np.testing.assert_allclose(dry5["catalyst_number_density_per_cm3"],
                               5e-6 * 1e3 / (sc.k * res.temperature_K) * 1e-6, rtol=1e-12)
    assert [r["channel"] for r in dry5["routes"]] == ["bare", "one_water", "two_water", "via_dimer"]
    for rec, lib in zip(dry5["routes"], res.routes):
        np.testing.assert_allclose(rec["pseudo_first_order_per_s"], lib.pseudo_first_order_per_s[1], rtol=1e-12)
        np.testing.assert_allclose(rec["ratio_to_bare"], lib.ratio_to_bare[1], rtol=1e-12)
    one, two = dry5["routes"][1], dry5["routes"][2]
    np.testing.assert_allclose(one["crossover_number_density_per_cm3"],
                               res.route("one_water").crossover_catalyst_m3 * 1e-6, rtol=1e-12)
    # crossover in the user's unit: a mixing ratio at the same total pressure (0.01 bar)
    np.testing.assert_allclose(one["crossover_abundance"],
                               np.array(one["crossover_number_density_per_cm3"]) * 1e6 * sc.k
                               * np.array(dry5["temperature_K"]) / 1e3, rtol=1e-12)
    assert one["crossover_abundance_unit"] == "mol mol-1"
    # rate constants in the trade's units: m^3 s^-1 -> cm^3 molecule^-1 s^-1 is x 1e6, m^6 -> cm^6 x 1e12
    assert one["rate_constant_unit"] == "cm3 molecule-1 s-1"
    assert two["rate_constant_unit"] == "cm6 molecule-2 s-1"
    np.testing.assert_allclose(one["rate_constant"], res.route("one_water").rates.k * 1e6, rtol=1e-12)
    np.testing.assert_allclose(two["rate_constant"], res.route("two_water").rates.k * 1e12, rtol=1e-12)
    # complex constants: Kc [cm^3] = Kp [bar^-1] k_B T / p0 x 1e6 cm^3/m^3
    T = np.array(dry5["temperature_K"])
    np.testing.assert_allclose(one["complex_Kc"], np.array(one["complex_Kp"]) * sc.k * T / 1e5 * 1e6,
                               rtol=1e-12)
    assert one["complex_Kc_unit"] == "cm3 molecule-1" and two["complex_Kc_unit"] == "cm6 molecule-2"
    np.testing.assert_allclose(two["complex_Kc"], np.array(two["complex_Kp"]) * (sc.k * T / 1e5 * 1e6) ** 2,
                               rtol=1e-12)
    # dimer: [D] = Kp [H2O]^2 k_B T / p0 (number densities in m^-3)
    n = np.array(dry5["catalyst_number_density_per_cm3"]) * 1e6
    np.testing.assert_allclose(np.array(dry5["dimer_number_density_per_cm3"]) * 1e6,
                               np.array(dry5["dimer_Kp_per_bar"]) * n**2 * sc.k * T / 1e5, rtol=1e-12)
    assert one["faster_than_bare_K"] == [{"low_K": 150.0, "high_K": 220.0, "low_at_grid_edge": True,
                                          "high_at_grid_edge": True}]
    assert "crossover_number_density_per_cm3" not in dry5["routes"][0]  # the bare route
    b = {x["channel"]: x for x in dry5["barriers"]}
    assert b["one_water"]["barrier_classical_kJ_per_mol"] == pytest.approx(70.0)  # toy input
    assert b["one_water"]["barrier_from_complex_classical_kJ_per_mol"] == pytest.approx(110.0)
    assert b["bare"]["barrier_from_complex_zpe_kJ_per_mol"] is None
    assert len(b["two_water"]["delta_G_activation_kJ_per_mol"]) == len(T)
    assert dry5["abundance"]["kind"] == "mixing_ratio" and dry5["abundance"]["unit"] == "mol mol-1"
    assert dry5["abundance"]["total_pressure_bar"] == pytest.approx(0.01, rel=1e-12)
    humid = comps[2]
    assert humid["abundance"]["unit"] == "%" and humid["abundance"]["phase"] == "liquid"
    assert humid["routes"][1]["crossover_abundance_unit"] == "%"


def test_text_output(capsys):
    assert main(["compare", str(STUDY)]) == 0
    text = capsys.readouterr().out
    assert "== dry upper atmosphere: 5 ppmv: x(H2O) = 5e-06 mol/mol at 0.01 bar" in text
    assert "crossover abundance (route = bare)" in text
    assert "one_water faster than bare: over the whole grid, 150-220 K" in text
    assert "dG‡(two_water)" in text


def test_plots_written_atomically(tmp_path, capsys):
    path = _study_with(tmp_path, "[[comparison]]" + STUDY.read_text().split("[[comparison]]")[2])
    outdir = tmp_path / "figs"
    assert main(["compare", str(path), "--plot", str(outdir), "--plot-formats", "svg,png"]) == 0
    files = sorted(p.name for p in outdir.iterdir())  # no temporary ".part" files left behind
    kinds = ["energy_profile", "ratio_vs_abundance", "ratio_vs_temperature"]
    # the names tstrate run gives them in plots/ (they had no compare_ prefix before)
    assert files == sorted(f"compare_humid_lower_atmosphere_{k}.{ext}" for k in kinds for ext in ("png", "svg"))
    for p in outdir.iterdir():
        head = p.read_bytes()[:200]
        assert head.startswith(b"\x89PNG") if p.suffix == ".png" else b"<svg" in head
    assert "6 plot files written" in capsys.readouterr().out


def test_plot_onto_an_existing_file_exit_2(tmp_path, capsys):
    # --plot takes a folder; an existing file gets the same one-line message as falloff/excite
    # (it used to fail after the computation with "<file>/<figure>.png: cannot write here")
    target = tmp_path / "notes.txt"
    target.write_text("mine\n")
    assert main(["compare", str(STUDY), "--plot", str(target)]) == 2
    out, err = capsys.readouterr()
    assert out == "" and "\n" not in err.strip()
    assert "[--plot]: exists and is not a folder" in err
    assert target.read_text() == "mine\n"


def test_figures_have_axes_with_units(library_results):
    from tstrate.output.compare_plots import (energy_profile_figure, ratio_abundance_figure,
                                              ratio_temperature_figure)

    res = library_results[0]
    ax = energy_profile_figure(res).axes[0]
    assert "kJ/mol" in ax.get_ylabel()
    assert [t.get_text() for t in ax.get_xticklabels()][2] == "transition\nstate"
    ax = ratio_temperature_figure(res).axes[0]
    assert ax.get_xlabel() == "T  [K]" and ax.get_yscale() == "log"
    ax = ratio_abundance_figure(res).axes[0]
    assert "molecule cm" in ax.get_xlabel() and ax.get_xscale() == "log" and ax.get_yscale() == "log"


def _study_with(tmp_path, comparison: str) -> Path:
    text = STUDY.read_text().split("[[comparison]]")[0]
    text = text.replace('"h2co3', f'"{STUDY.parent}/h2co3').replace('"co2', f'"{STUDY.parent}/co2')
    text = text.replace('"ts_', f'"{STUDY.parent}/ts_').replace('"../water_dimer', f'"{DATA}/water_dimer')
    path = tmp_path / "study.toml"
    path.write_text(text + comparison)
    return path


def test_crossing_inside_grid_reported(tmp_path, capsys):
    path = _study_with(tmp_path, """
[[comparison]]
name = "sparse water"
reference = "bare"
assisted = ["two_water"]
catalyst = "H2O"
number_density_per_cm3 = 2e10
temperature_K = [150, 160, 170, 180, 190, 200, 210, 220]
""")
    assert main(["compare", str(path), "--json", "--plot", str(tmp_path / "f")]) == 0
    (rec,) = json.loads(capsys.readouterr().out)["comparisons"]
    (rng,) = rec["routes"][1]["faster_than_bare_K"]
    assert rng["low_K"] == 150.0 and rng["low_at_grid_edge"] and not rng["high_at_grid_edge"]
    assert 170.0 < rng["high_K"] < 190.0
    assert rec["abundance"] == {"kind": "number_density", "value": 2e10, "unit": "molecule cm-3",
                                "label": "", "phase": None, "total_pressure_bar": None,
                                "text": "[H2O] = 2e+10 molecule cm-3"}
    assert main(["compare", str(path)]) == 0
    assert "two_water faster than bare: 150.0 K (grid start) to 179.5 K" in capsys.readouterr().out


@pytest.mark.parametrize("setup, pattern", [
    (lambda tmp: tmp / "missing.toml", "missing.toml: file does not exist"),
    (lambda tmp: DATA / "toy" / "study.toml", r"study.toml: the study has no \[\[comparison\]\] section"),
    (lambda tmp: _study_with(tmp, '[[comparison]]\nname = "x"\nreference = "bare"\nassisted = ["one_water"]\n'
                                  'catalyst = "H2O"\nnumber_density_per_cm3 = -3\n'),
     r"study.toml \[comparison\[0\]\.number_density_per_cm3\]: abundance must not be negative"),
    (lambda tmp: _study_with(tmp, '[[comparison]]\nname = "x"\nreference = "bare"\nassisted = ["one_water"]\n'
                                  'catalyst = "H2O"\nrelative_humidity_percent = -1\nover = "ice"\n'),
     r"\[comparison\[0\]\.relative_humidity_percent\]: abundance must not be negative"),
], ids=["missing-file", "no-comparison", "negative-density", "negative-RH"])
def test_mistakes_exit_2_with_one_line(tmp_path, capsys, setup, pattern):
    import re

    assert main(["compare", str(setup(tmp_path))]) == 2
    err = capsys.readouterr().err.strip()
    assert err.startswith("tstrate compare: error: ") and "\n" not in err
    assert re.search(pattern, err), err


def test_help(capsys):
    with pytest.raises(SystemExit) as info:
        main(["compare", "--help"])
    assert info.value.code == 0
    assert "catalyst_number_density_per_cm3" in capsys.readouterr().out
