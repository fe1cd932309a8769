"""Tests of ``tstrate tunnel`` (called through tstrate.cli.main.main)."""

from __future__ import annotations

import json
import re

import numpy as np
import pytest
from scipy import constants as sc

from tstrate.cli.main import main
from tstrate.physics import tunnelling as tn

BASE = ["tunnel", "--imaginary-cm1", "1800", "--forward-barrier", "60", "--reverse-barrier", "80"]


def run_json(capsys, argv):
    assert main(argv + ["--json"]) == 0
    return json.loads(capsys.readouterr().out)


def test_table_has_every_model_and_the_default_grid(capsys):
    assert main(BASE) == 0
    out = capsys.readouterr().out.splitlines()
    assert "1800i cm-1" in out[0] and "60 kJ/mol" in out[0] and "80 kJ/mol" in out[0]
    assert out[1].split() == ["T/K", "kappa(wigner)", "kappa(skodje-truhlar)", "kappa(eckart)"]
    rows = [line.split() for line in out[3:]]
    assert [float(r[0]) for r in rows] == [150.0 + 25 * i for i in range(11)]
    # the printed Eckart values are the library's, to the 5 digits shown
    k = tn.eckart(np.array([float(r[0]) for r in rows]), 1800.0, 60e3, 80e3)
    np.testing.assert_allclose([float(r[3]) for r in rows], k, rtol=1e-4)


def test_json_all_models_keyed_by_model(capsys):
    data = run_json(capsys, BASE + ["-T", "200", "300"])
    assert data["temperature_K"] == [200.0, 300.0]
    assert set(data["kappa"]) == {"wigner", "skodje-truhlar", "eckart"}
    assert data["model"] == "all"
    assert data["imaginary_frequency_cm1"] == 1800.0
    assert data["tunnelling_forward_barrier_kJ_per_mol"] == pytest.approx(60.0)
    assert data["tunnelling_reverse_barrier_kJ_per_mol"] == pytest.approx(80.0)
    assert data["tunnelling_energy_floor_kJ_per_mol"] == 0.0
    T = np.array([200.0, 300.0])
    np.testing.assert_allclose(data["kappa"]["wigner"], tn.wigner(T, 1800.0), rtol=1e-14)
    np.testing.assert_allclose(data["kappa"]["skodje-truhlar"],
                               tn.skodje_truhlar(T, 1800.0, 60e3, 80e3), rtol=1e-14)
    np.testing.assert_allclose(data["kappa"]["eckart"], tn.eckart(T, 1800.0, 60e3, 80e3), rtol=1e-14)


def test_json_one_model_gives_a_list(capsys):
    data = run_json(capsys, BASE + ["--model", "wigner", "-T", "300"])
    assert data["model"] == "wigner"
    # 1 + (h c nu / kT)^2 / 24 written out with scipy constants
    u = sc.h * sc.c * 180000.0 / (sc.k * 300.0)
    assert data["kappa"] == [pytest.approx(1 + u * u / 24, rel=1e-12)]


@pytest.mark.parametrize("unit, V1, V2", [
    ("kcal/mol", 60 / 4.184, 80 / 4.184),                 # thermochemical calorie, 4.184 J exactly
    ("eV", 60e3 / (sc.eV * sc.N_A), 80e3 / (sc.eV * sc.N_A)),
    ("cm-1", 60e3 / (sc.h * sc.c * 100 * sc.N_A), 80e3 / (sc.h * sc.c * 100 * sc.N_A)),
])
def test_energy_units_convert_to_the_same_result(capsys, unit, V1, V2):
    ref = run_json(capsys, BASE + ["--model", "eckart", "-T", "250"])
    data = run_json(capsys, ["tunnel", "--imaginary-cm1", "1800", "--forward-barrier", repr(V1),
                             "--reverse-barrier", repr(V2), "--energy-unit", unit,
                             "--model", "eckart", "-T", "250"])
    assert data["tunnelling_forward_barrier_kJ_per_mol"] == pytest.approx(60.0, rel=1e-12)
    assert data["kappa"][0] == pytest.approx(ref["kappa"][0], rel=1e-9)


def test_energy_floor_is_reported_and_lowers_eckart(capsys):
    plain = run_json(capsys, BASE + ["--model", "eckart", "-T", "200"])
    floored = run_json(capsys, BASE + ["--model", "eckart", "-T", "200", "--energy-floor", "20"])
    assert floored["tunnelling_energy_floor_kJ_per_mol"] == pytest.approx(20.0)
    assert floored["kappa"][0] < plain["kappa"][0]
    # endoergic barrier: the default floor is the product asymptote, V1 - V2 above the reactants
    endo = run_json(capsys, ["tunnel", "--imaginary-cm1", "1800", "--forward-barrier", "80",
                             "--reverse-barrier", "60", "--model", "eckart", "-T", "200"])
    assert endo["tunnelling_energy_floor_kJ_per_mol"] == pytest.approx(20.0)


@pytest.mark.parametrize("argv, pattern", [
    (["--imaginary-cm1", "-1800", "--forward-barrier", "60", "--reverse-barrier", "80"],
     r"\[--imaginary-cm1\].*positive"),
    (["--imaginary-cm1", "0", "--forward-barrier", "60", "--reverse-barrier", "80"],
     r"\[--imaginary-cm1\]"),
    (["--imaginary-cm1", "1800", "--forward-barrier", "60", "--reverse-barrier", "-5"],
     r"\[--reverse-barrier\].*>= 0"),
    (["--imaginary-cm1", "1800", "--forward-barrier", "nan", "--reverse-barrier", "5"],
     r"\[--forward-barrier\]"),
    (["--imaginary-cm1", "1800", "--forward-barrier", "60", "--reverse-barrier", "0",
      "--model", "eckart"], r"\[--reverse-barrier\].*positive"),
    (["--imaginary-cm1", "1800", "--forward-barrier", "60", "--reverse-barrier", "80", "-T", "0"],
     r"\[--temperature\].*positive"),
    (["--imaginary-cm1", "1800", "--forward-barrier", "60", "--reverse-barrier", "80",
      "--model", "skodje-truhlar", "--energy-floor", "70"], r"\[--energy-floor\].*above the barrier"),
])
def test_bad_values_give_one_line_and_status_2(capsys, argv, pattern):
    assert main(["tunnel"] + argv) == 2
    captured = capsys.readouterr()
    lines = captured.err.strip().splitlines()
    assert len(lines) == 1
    assert lines[0].startswith("tstrate tunnel: error:")
    assert re.search(pattern, lines[0])
    assert captured.out == ""


def test_unknown_unit_and_model_are_refused_by_the_parser(capsys):
    with pytest.raises(SystemExit) as exc:
        main(BASE + ["--energy-unit", "hartree"])
    assert exc.value.code == 2
    with pytest.raises(SystemExit) as exc:
        main(BASE + ["--model", "bell"])
    assert exc.value.code == 2
    capsys.readouterr()


def test_help_lists_the_models(capsys):
    with pytest.raises(SystemExit) as exc:
        main(["tunnel", "--help"])
    assert exc.value.code == 0
    out = capsys.readouterr().out
    for word in ("wigner", "skodje-truhlar", "eckart", "--imaginary-cm1", "--energy-floor"):
        assert word in out
