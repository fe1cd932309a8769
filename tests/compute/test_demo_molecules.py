"""The bundled carbonic-acid species read back, keep their Hessians and provenance, and make sense."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from tstrate.compute import connectivity as conn
from tstrate.io.species import build_species, read_species

FOLDER = Path(__file__).resolve().parents[2] / "molecules" / "carbonic_acid"
#: the species files make.sh writes (other .toml files in the folder, e.g. studies, are not species)
SPECIES = ("h2co3.toml", "h2co3_cis_trans.toml", "co2.toml", "h2o.toml", "water_dimer.toml",
           "ts_bare.toml", "co2_h2o_complex.toml", "h2co3_h2o.toml", "ts_one_water.toml",
           "co2_2h2o_complex.toml", "h2co3_2h2o.toml", "ts_two_water.toml",
           "co2_3h2o_complex.toml")
FILES = [FOLDER / name for name in SPECIES]


def test_all_expected_files_are_there():
    for path in FILES:
        assert path.is_file(), path


@pytest.mark.parametrize("path", FILES, ids=[p.name for p in FILES])
def test_species_file(path):
    sp = read_species(path)
    assert sp.hessian_J_per_m2 is not None
    for key in ("method", "versions", "date", "convergence", "command"):
        assert key in sp.provenance
    n_imag = int(np.sum(sp.frequencies_cm1 < 0))
    assert n_imag == (1 if sp.kind == "transition_state" else 0)
    # isotopologue from the kept Hessian: deuterating every H lowers the zero-point energy
    d = build_species(sp.name, sp.symbols, sp.positions_A, kind=sp.kind,
                      hessian_J_per_m2=sp.hessian_J_per_m2,
                      isotopes={i: 2 for i, s in enumerate(sp.symbols) if s == "H"},
                      allow_imaginary_below_cm1=20.0)
    if "H" in sp.symbols:
        assert d.real_frequencies_cm1.sum() < sp.real_frequencies_cm1.sum()


def test_lowest_conformer_is_cis_cis():
    sp = read_species(FOLDER / "h2co3.toml")
    ct = read_species(FOLDER / "h2co3_cis_trans.toml")
    assert sp.energy_J_per_mol < ct.energy_J_per_mol
    x, s = sp.positions_A, sp.symbols
    carbonyl = [i for i in range(len(s)) if s[i] == "O"
                and sum(1 for b in conn.bonds(s, x) if i in b) == 1][0]
    # both hydroxyl hydrogens syn to the carbonyl oxygen (about 2.3 A from it, not 3.2 A)
    for h in (i for i in range(len(s)) if s[i] == "H"):
        assert np.linalg.norm(x[h] - x[carbonyl]) < 2.6
    assert sp.symmetry_number == 2  # C2v
