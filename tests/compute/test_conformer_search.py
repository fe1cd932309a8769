"""The conformer search of the compute route (tstrate.compute.conformers): the duplicate rule on known
geometries (no calculator needed), and a GFN2-xTB search of ethanol (slow)."""

from pathlib import Path

import numpy as np
import pytest

from tstrate.compute.conformers import ENERGY_TOLERANCE_J_PER_MOL, unique_structures
from tstrate.io.species import read_species

DEMO = Path(__file__).resolve().parents[2] / "molecules" / "carbonic_acid"


def _rotation(seed):
    q, _ = np.linalg.qr(np.random.default_rng(seed).normal(size=(3, 3)))
    return q * np.sign(np.linalg.det(q))  # proper


def test_duplicates_by_rmsd_distances_and_mirror_images_but_not_other_conformers():
    cc = read_species(DEMO / "h2co3.toml")
    ct = read_species(DEMO / "h2co3_cis_trans.toml")
    order = [ct.symbols.index("O"), ct.symbols.index("C")] + [i for i, s in enumerate(ct.symbols)
                                                              if s != "C"][1:]
    ct_x = ct.positions_A[order]
    assert tuple(ct.symbols[i] for i in order) == cc.symbols
    x = cc.positions_A
    moved = x @ _rotation(1).T + 3.0                    # rotated and shifted: Kabsch RMSD 0
    swapped = x[[0, 1, 2, 3, 5, 4]]                       # the two H atoms exchanged: distances agree
    mirror = x * np.array([-1.0, 1.0, 1.0])               # the mirror image: distances agree
    geoms = [ct_x, x, moved, swapped, mirror, x]
    e = np.array([0.0, 0.0, 50.0, -30.0, 10.0, 5.0 * ENERGY_TOLERANCE_J_PER_MOL])
    keep = unique_structures(cc.symbols, geoms, e)
    # lowest first: the swapped copy (-30) stands for cc and its copies within 0.2 kJ/mol; ct (0 J/mol,
    # another conformer) is kept; the last copy, 1 kJ/mol off, is kept as another minimum by the rule
    assert keep == [3, 0, 5]
    # a chiral structure (the bare TS: two optical isomers): its mirror image is 0.31 Angstrom off by
    # Kabsch RMSD (proper rotations only) but has the same interatomic distances: one structure
    ts = read_species(DEMO / "ts_bare.toml")
    y = ts.positions_A
    assert unique_structures(ts.symbols, [y, y * np.array([1.0, -1.0, 1.0])], [0.0, 1.0]) == [0]
    assert unique_structures(ts.symbols, [y, y * np.array([1.0, -1.0, 1.0])], [0.0, 1.0], rmsd_A=0.5) == [0]
    with pytest.raises(ValueError, match="geometries"):
        unique_structures(cc.symbols, geoms, e[:2])


@pytest.mark.slow
def test_ethanol_search_gives_trans_and_one_gauche_with_two_optical_isomers(tmp_path):
    """Ethanol has an anti (trans, Cs) and two mirror-image gauche conformers of the OH torsion
    (textbook conformational analysis): the search keeps one gauche, whose two mirror images the
    species' optical isomers (2) count, and the trans one (achiral, 1)."""
    pytest.importorskip("tblite")
    from tstrate.compute.conformers import search_conformers
    from tstrate.compute.engine import Settings
    from tstrate.physics.ensembles import build_ensemble, conformer_populations

    res = search_conformers(name="ethanol", smiles="CCO", settings=Settings(n_conformers=8), work_dir=tmp_path)
    assert len(res.conformers) == 2
    isomers = sorted(sp.optical_isomers for _, sp in res.conformers)
    assert isomers == [1, 2]
    assert res.duplicates == 6 and res.above_window == 0
    ens = build_ensemble("ethanol", res.conformers)
    x = conformer_populations(ens, [300.0])
    assert np.allclose(x.sum(axis=0), 1.0) and np.all(x > 0)
