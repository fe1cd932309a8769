"""Eight open-shell H-transfer barriers of HTBH38/04 at the default refinement level against
the database's best estimates (Zhao, Gonzalez-Garcia, Truhlar, J. Phys. Chem. A 109, 2012
(2005); values, geometries and provenance in molecules/htbh/htbh8.toml), GFN2-xTB beside them."""

from __future__ import annotations

from pathlib import Path

import pytest

pytest.importorskip("pyscf")
pytest.importorskip("tblite")

from tstrate.compute.barrier_set import evaluate, gfn2_energy, load_set, pyscf_energy, table  # noqa: E402
from tstrate.compute.refine import Level, build_mol  # noqa: E402

SET = Path(__file__).resolve().parents[2] / "molecules" / "htbh" / "htbh8.toml"


def test_bundled_geometries_reproduce_the_listed_nuclear_repulsion():
    reactions, structures, source = load_set(SET)
    assert len(reactions) == 8 and "2012" in source
    for s in structures.values():
        mol = build_mol(s.symbols, s.positions_A, charge=0, multiplicity=s.multiplicity,
                        basis="STO-3G", label=s.name)
        assert mol.energy_nuc() == pytest.approx(s.nuclear_repulsion_hartree, abs=1e-6), s.name
    # every transition state is a doublet: open-shell H transfers (UKS)
    assert {structures[r.ts].multiplicity for r in reactions} == {2}


@pytest.mark.slow
def test_default_level_barriers_within_8_kJ_per_mol(capsys):
    reactions, structures, _ = load_set(SET)
    dft = evaluate(reactions, structures, pyscf_energy(Level()))
    gfn2 = evaluate(reactions, structures, gfn2_energy)
    with capsys.disabled():
        print("\n" + table({"GFN2-xTB": gfn2, "wB97X-D3BJ/def2-TZVP": dft}))
    # target of the refinement: mean absolute error within 8 kJ/mol over the 16 barriers
    # (measured: 7.7 kJ/mol, largest 23 kJ/mol, OH + CH4 reverse); GFN2-xTB single points at
    # these geometries miss by 69 kJ/mol on average
    assert dft.mae_J_per_mol < 8.0e3
    assert dft.max_J_per_mol < 30.0e3
    assert gfn2.mae_J_per_mol > 3 * dft.mae_J_per_mol
