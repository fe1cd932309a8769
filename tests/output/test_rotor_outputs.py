"""A `tstrate run` of a study whose reactant has hindered rotors writes their results.json entries,
the report's rotor table and one potential-and-levels figure per rotor.

Study: the invented H2CO3 test study of tests/data/tst (made-up numbers, not physical data), its H2CO3
given two C-O(H) hindered rotors with invented twofold barriers replacing its two lowest modes (one
potential as points, to show a fit and its error).
"""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import numpy as np

from tstrate.cli.main import main
from tstrate.units import CM1_J, N_A

DATA = Path(__file__).resolve().parents[1] / "data" / "tst"
PNG_MAGIC = b"\x89PNG\r\n\x1a\n"  # PNG specification (ISO/IEC 15948), file signature


def test_run_writes_rotor_records_report_and_plots(tmp_path):
    folder = tmp_path / "study"
    shutil.copytree(DATA, folder)
    angles = np.arange(0.0, 360.0, 30.0)
    energies = 0.5 * 2500.0 * (1 - np.cos(2 * np.deg2rad(angles))) * CM1_J * N_A / 1e3
    with open(folder / "h2co3.toml", "a") as fh:
        fh.write("\n[[hindered_rotors]]\nbond_atoms = [1, 3]\nreplaces_cm1 = 450\nbarriers_cm1 = [0, 3000]\n")
        fh.write(f"\n[[hindered_rotors]]\nbond_atoms = [1, 4]\nreplaces_cm1 = 540\nangles_deg = {angles.tolist()}\n"
                 f"energies_kJ_per_mol = {energies.tolist()}\n")
    out = tmp_path / "out"
    assert main(["run", str(folder / "study.toml"), "--output", str(out), "--quiet"]) == 0
    doc = json.loads((out / "results.json").read_text())
    [h2co3] = [t for t in doc["thermochemistry"] if t["name"] == "H2CO3"]
    rotors = h2co3["hindered_rotors"]
    assert [r["bond"] for r in rotors] == ["C1-O3", "C1-O4"]
    assert abs(rotors[0]["barrier_kJ_per_mol"] - 3000 * CM1_J * N_A / 1e3) < 1e-6
    assert rotors[1]["fit_rms_kJ_per_mol"] < 1e-6 and len(rotors[1]["points_deg"]) == 12
    assert rotors[0]["levels_cm1"][0] == 0.0 and rotors[0]["zpe_cm1"] > 0
    names = {p.name for p in (out / "plots").iterdir()}
    assert {"rotor_H2CO3_C1-O3.png", "rotor_H2CO3_C1-O4.png"} <= names
    assert (out / "plots" / "rotor_H2CO3_C1-O3.png").read_bytes().startswith(PNG_MAGIC)
    report = (out / "report.md").read_text()
    assert "Hindered rotors" in report and "rotor_H2CO3_C1-O4.png" in report
