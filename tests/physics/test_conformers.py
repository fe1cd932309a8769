"""Same structure or another conformer (tstrate.physics.conformers), and the study's connection check."""

from pathlib import Path

import numpy as np
import pytest

from tstrate.io.species import read_species
from tstrate.io.study import read_study
from tstrate.physics.conformers import (SAME_STRUCTURE_TOLERANCE_A, parse_xyz_lines, structure_difference_A,
                                        xyz_lines)
from tstrate.study.rates import connection_warnings

DEMO = Path(__file__).resolve().parents[2] / "molecules" / "carbonic_acid"


def _rotation(seed):
    q, _ = np.linalg.qr(np.random.default_rng(seed).normal(size=(3, 3)))
    return q


def test_the_fingerprint_ignores_atom_order_rotation_and_translation():
    sp = read_species(DEMO / "h2co3.toml")
    perm = np.random.default_rng(3).permutation(sp.natoms)
    moved = sp.positions_A[perm] @ _rotation(4).T + np.array([1.0, -2.0, 0.5])
    assert structure_difference_A(np.array(sp.symbols)[perm], moved, sp.symbols, sp.positions_A) < 1e-9


def test_conformers_of_carbonic_acid_are_told_apart():
    """cis-cis and cis-trans H2CO3 (the demo's GFN2-xTB minima) differ by a turned O-H; an optimisation
    noise of 0.01 Angstrom on every atom stays far below the threshold."""
    cc, ct = read_species(DEMO / "h2co3.toml"), read_species(DEMO / "h2co3_cis_trans.toml")
    assert structure_difference_A(cc.symbols, cc.positions_A, ct.symbols, ct.positions_A) > 3 * SAME_STRUCTURE_TOLERANCE_A
    noisy = cc.positions_A + 0.01 * np.random.default_rng(5).normal(size=cc.positions_A.shape)
    assert structure_difference_A(cc.symbols, noisy, cc.symbols, cc.positions_A) < SAME_STRUCTURE_TOLERANCE_A / 3
    h2o = read_species(DEMO / "h2o.toml")
    assert structure_difference_A(cc.symbols, cc.positions_A, h2o.symbols, h2o.positions_A) is None


def test_xyz_lines_round_trip_and_refuse_other_text():
    sp = read_species(DEMO / "co2.toml")
    symbols, positions = parse_xyz_lines(xyz_lines(sp.symbols, sp.positions_A))
    assert symbols == list(sp.symbols)
    np.testing.assert_allclose(positions, sp.positions_A, atol=1e-6)
    with pytest.raises(ValueError):
        parse_xyz_lines("not a geometry")


def test_the_demo_bare_ts_connects_to_the_cis_trans_conformer(tmp_path):
    """The bare TS of the demo falls, downhill, into cis-trans H2CO3: with cis-cis H2CO3 alone as the
    channel's reactant the study says so; the demo's H2CO3, the cis-cis + cis-trans ensemble, holds the
    connected conformer and passes; the water-assisted TSs connect to their own complexes."""
    assert connection_warnings(read_study(DEMO / "study.toml")) == []
    text = (DEMO / "study.toml").read_text()
    line = 'H2CO3 = { cis_cis = "refined/h2co3.toml", cis_trans = "refined/h2co3_cis_trans.toml" }'
    assert line in text, "test setup: the demo's H2CO3 line changed"
    alone = tmp_path / "study.toml"
    alone.write_text(text.replace(line, 'H2CO3 = "refined/h2co3.toml"').replace('"refined/', f'"{DEMO}/refined/'))
    warnings = connection_warnings(read_study(alone))
    assert len(warnings) == 1
    assert "channel bare" in warnings[0] and "another conformer" in warnings[0] and "H2CO3" in warnings[0]
