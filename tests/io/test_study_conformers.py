"""Conformer ensembles in a study file's [species] (tstrate.io.study): a list or a table of conformer
species files; one-line errors naming the study file and the key."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from tstrate.errors import InputError
from tstrate.io.study import read_study

DEMO = Path(__file__).resolve().parents[2] / "molecules" / "carbonic_acid"


def _study(tmp_path, h2co3_line: str) -> Path:
    text = (DEMO / "study.toml").read_text()
    old = 'H2CO3 = { cis_cis = "refined/h2co3.toml", cis_trans = "refined/h2co3_cis_trans.toml" }'
    assert old in text, "test setup: the demo's H2CO3 line changed"
    text = text.replace(old, h2co3_line).replace('"refined/', f'"{DEMO}/refined/')
    path = tmp_path / "study.toml"
    path.write_text(text)
    return path


def test_a_table_of_conformer_files_makes_an_ensemble(tmp_path):
    path = _study(tmp_path, f'H2CO3 = {{ ct = "{DEMO}/refined/h2co3_cis_trans.toml", cc = "{DEMO}/refined/h2co3.toml" }}')
    study = read_study(path)
    h2co3 = study.species["H2CO3"]
    assert h2co3.conformer_label == "cc"  # the lower conformer represents the ensemble
    assert [c.name for c in h2co3.conformers] == ["H2CO3/ct"]
    assert study.species_files["H2CO3/ct"].endswith("h2co3_cis_trans.toml")
    assert h2co3.symmetry_number == 2 and h2co3.conformers[0].symmetry_number == 1  # each its own


def test_a_list_of_conformer_files_is_labelled_by_file_name(tmp_path):
    path = _study(tmp_path, f'H2CO3 = ["{DEMO}/refined/h2co3.toml", "{DEMO}/refined/h2co3_cis_trans.toml"]')
    h2co3 = read_study(path).species["H2CO3"]
    assert (h2co3.conformer_label, h2co3.conformers[0].conformer_label) == ("h2co3", "h2co3_cis_trans")


@pytest.mark.parametrize("line, match", [
    ('H2CO3 = ["{d}/refined/h2co3.toml", "{d}/refined/h2o.toml"]', "other atoms"),
    ('H2CO3 = ["{d}/refined/h2co3.toml", "{d}/h2co3.toml"]', "conformer labels repeat"),
    ('H2CO3 = ["{d}/refined/h2co3.toml", "{d}/refined/nothing.toml"]', "does not exist"),
    ('H2CO3 = [1, 2]', "expected a species file, a list"),
    ('H2CO3 = ["{d}/refined/h2co3.toml", "{d}/refined/ts_bare.toml"]', "kind"),
])
def test_bad_ensembles_name_the_study_file_and_key(tmp_path, line, match):
    path = _study(tmp_path, line.format(d=DEMO))
    with pytest.raises(InputError, match=match) as err:
        read_study(path)
    assert err.value.file == str(path) and err.value.field == "species.H2CO3"
    assert "\n" not in str(err.value)


def test_the_demo_ensemble_against_separate_conformer_studies(tmp_path):
    """The demo (H2CO3 the cis-cis + cis-trans ensemble) against the same study with one conformer
    as H2CO3, and the populations computed here from the two files: the water channels (through
    complexes of cis-cis H2CO3) fall by the cis-cis population, and the bare channel, whose TS falls
    into cis-trans H2CO3, is the cis-trans channel times the cis-trans population."""
    from tstrate.io.species import read_species
    from tstrate.physics.thermo import ln_partition_function_per_volume
    from tstrate.physics.tst import zpe_level_J_per_mol
    from tstrate.study.rates import study_rates
    from tstrate.units import R

    T = np.array([150.0, 300.0])
    ens = read_study(DEMO / "study.toml")
    (tmp_path / "cc").mkdir()
    (tmp_path / "ct").mkdir()
    cc = read_study(_study(tmp_path / "cc", f'H2CO3 = "{DEMO}/refined/h2co3.toml"'))
    ct = read_study(_study(tmp_path / "ct", f'H2CO3 = "{DEMO}/refined/h2co3_cis_trans.toml"'))
    a = [ln_partition_function_per_volume(s, T) - zpe_level_J_per_mol(s) / (R * T)
         for s in (read_species(DEMO / "refined/h2co3.toml"), read_species(DEMO / "refined/h2co3_cis_trans.toml"))]
    x_cc = 1.0 / (1.0 + np.exp(a[1] - a[0]))
    for r, r_cc, r_ct in zip(*(study_rates(s, temperature_K=T) for s in (ens, cc, ct))):
        np.testing.assert_allclose(np.exp(r.ln_kc - r_cc.ln_kc), x_cc, rtol=1e-9)
        if r.channel == "bare":
            assert r.tunnelling_well_conformer == "cis_trans"
            np.testing.assert_allclose(r.k, (1 - x_cc) * r_ct.k, rtol=1e-9)
        else:
            np.testing.assert_allclose(r.k / r_cc.k, x_cc, rtol=1e-9)
