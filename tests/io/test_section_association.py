"""``[[association]]`` study tables: read, validated, refused with the file and key, and run by
``tstrate run`` on a copy of the bundled OH + SO2 example cut to one temperature and two pressures.

The numbers are checked in tests/physics/test_association.py; here: keys, errors, plumbing, and that
the run reproduces the physics call for the same inputs.
"""

from __future__ import annotations

import csv
import shutil
from pathlib import Path

import numpy as np
import pytest

from tstrate.cli.main import main
from tstrate.errors import InputError
from tstrate.io.study import read_study

EXAMPLE = Path(__file__).resolve().parents[2] / "molecules" / "oh_so2"


def _copy(tmp_path, replace=None, conditions=None) -> Path:
    folder = tmp_path / "oh_so2"
    shutil.copytree(EXAMPLE, folder, ignore=shutil.ignore_patterns("inputs", "*.md"))
    text = (folder / "study.toml").read_text()
    text = text.replace("temperature_K = [200, 220, 240, 260, 280, 300]", "temperature_K = [250]")
    text = text.replace("pressure_bar = [1e-4, 1e-3, 1e-2, 0.03, 0.1, 0.3, 1.0]", "pressure_bar = [1e-3, 1.0]")
    for old, new in (replace or {}).items():
        assert old in text, old
        text = text.replace(old, new)
    (folder / "study.toml").write_text(text)
    return folder / "study.toml"


def test_example_is_read_in_SI(tmp_path):
    study = read_study(_copy(tmp_path))
    (spec,) = study.sections["association"]
    assert spec.reactants == ("OH", "SO2") and spec.adduct == "HOSO2"
    assert spec.k_inf_A_m3_per_s == pytest.approx(1.7e-18)
    assert spec.reference_k0_m6_per_s == pytest.approx(2.9e-43)
    assert spec.pressure_method == "master_equation" and spec.adduct_rotation == "k_active"
    assert spec.delta_E_down_J_per_mol([300.0])[0] == pytest.approx(250 * 11.9627, rel=1e-4)


@pytest.mark.parametrize("old, new, key, message", [
    ('k_inf_temperature_exponent = 0.2 ', 'k_inf_temperature_exponent = -3.0 ',
     "association[0].k_inf_temperature_exponent", "outside"),
    ('adduct = "HOSO2"', 'adduct = "H2SO4"', "association[0].adduct", "unknown species"),
    ('pressure_method = "master_equation"', 'pressure_method = "lindemann"', "association[0].pressure_method",
     "unknown pressure method"),
    ('k_inf_cm3_per_molecule_s = 1.7e-12 ', 'k_inf_cm3_per_molecule_s = -1.7e-12 ',
     "association[0].k_inf_cm3_per_molecule_s", "positive"),
    ('reference_k0_temperature_exponent = -4.1', 'reference_k0_exponent = -4.1',
     "association[0]", "reference"),
    ('delta_E_down_cm1 = 250 ', 'delta_E_downn_cm1 = 250 ', "association[0].delta_E_down_cm1", "<dE>down"),
])
def test_bad_keys_are_one_line_errors_naming_the_key(tmp_path, old, new, key, message):
    path = _copy(tmp_path, {old: new})
    with pytest.raises(InputError, match=message) as info:
        read_study(path)
    assert str(path) in str(info.value) and key in str(info.value)


def test_run_writes_the_association_table_and_matches_the_physics(tmp_path, capsys):
    path = _copy(tmp_path)
    out = tmp_path / "out"
    assert main(["run", str(path), "-o", str(out)]) == 0
    printed = capsys.readouterr().out
    assert "OH + SO2 (barrierless, master_equation)" in printed and "x the evaluated k0" in printed
    rows = list(csv.DictReader((out / "tables" / "association_OH___SO2.csv").open()))
    assert [float(r["pressure [bar]"]) for r in rows] == [1e-3, 1.0]
    assert (out / "plots" / "association_OH___SO2.png").is_file()
    assert "Barrierless associations" in (out / "report.md").read_text()

    from tstrate.study.associations import study_associations

    (ar,) = study_associations(read_study(path))
    assert np.allclose([float(r["k [cm3 molecule-1 s-1]"]) for r in rows], ar.falloff.rate_m3_per_s[0] * 1e6,
                       rtol=1e-9)
    ratio = float(rows[0]["k0 / k0_reference [1]"])
    assert 1 / 3 < ratio < 3          # JPL 19-5 k0 at 250 K (the physics test gives 1.06)


def test_strong_collision_method_through_the_study(tmp_path):
    # the quick estimate: strong collisions scaled by Troe's beta_c (Troe 1977) from the same <dE>down
    from tstrate.study.associations import study_associations

    path = _copy(tmp_path, {'pressure_method = "master_equation"': 'pressure_method = "strong_collision"'})
    (ar,) = study_associations(read_study(path))
    assert ar.falloff.method == "strong_collision"
    assert 0.0 < ar.falloff.efficiency[0] < 1.0
    assert 1 / 3 < ar.k0_ratio[0] < 3
    assert np.all(np.diff(ar.falloff.rate_m3_per_s[0]) > 0)


def test_an_adduct_above_its_fragments_is_refused_naming_its_file(tmp_path):
    path = _copy(tmp_path)
    hoso2 = path.parent / "hoso2.toml"
    text = hoso2.read_text()
    hoso2.write_text(text.replace("energy = { value = -166.8740", "energy = { value = 66.8740"))
    from tstrate.study.associations import study_associations

    with pytest.raises(InputError, match="a barrierless association needs a bound adduct") as info:
        study_associations(read_study(path))
    assert str(hoso2) in str(info.value) and "[energy]" in str(info.value)
