"""Relays of any substrate and catalyst: the general builder reproduces the carbonic-acid relay."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

pytest.importorskip("sella")

from ase import Atoms  # noqa: E402

from tstrate.compute import connectivity as conn  # noqa: E402
from tstrate.compute.relay import find_general_relay, general_relay_geometry  # noqa: E402
from tstrate.io.species import read_species  # noqa: E402

DEMO = Path(__file__).resolve().parents[2] / "molecules" / "carbonic_acid"


def _parts():
    # H2CO3 as it sits in the demo's one-water complex (atoms C, O1, O2, O3, H1, H2), and water
    c = read_species(DEMO / "h2co3_h2o.toml")
    sub = Atoms(c.symbols[:6], positions=c.positions_A[:6])
    w = read_species(DEMO / "h2o.toml")
    return sub, Atoms(w.symbols, positions=w.positions_A)


KW = dict(donor=1, hydrogen=4, acceptor=2, catalyst_atom=0, catalyst_hydrogen=1,
          break_bonds=[(0, 2)])


@pytest.mark.parametrize("n", [0, 1, 2, 3])
def test_builder_lays_out_the_ring(n):
    sub, water = _parts()
    atoms, plan = general_relay_geometry(sub, water, n, stage="guess", **KW)
    assert len(atoms) == 6 + 3 * n and len(plan.transfers) == n + 1
    x = atoms.positions
    for h, d, a in plan.transfers:
        assert np.linalg.norm(x[a] - x[d]) == pytest.approx(2.45, abs=1e-6) or n == 0
        assert np.allclose(x[h], 0.5 * (x[a] + x[d]))  # half way in the guess
    cplx, plan_c = general_relay_geometry(sub, water, n, stage="complex", **KW)
    assert conn.bonds(cplx.get_chemical_symbols(), cplx.positions) == plan_c.reactant_bonds
    # the product: CO2 and n + 1 waters
    frags = conn.fragments(len(atoms), plan.product_bonds)
    assert sorted(len(f) for f in frags) == [3] * (n + 2)


@pytest.mark.slow
def test_general_relay_finds_the_demo_one_water_saddle():
    sub, water = _parts()
    _, sad, _ = find_general_relay(sub, water, 1, name="TS1-general", **KW)
    ts = read_species(DEMO / "ts_one_water.toml")  # made by the carbonic-acid relay builder
    assert np.sum(sad.ts.frequencies_cm1 < 0) == 1
    assert sad.ts.geometry_energy_J_per_mol == pytest.approx(ts.geometry_energy_J_per_mol, abs=100.0)
    assert sad.ts.imaginary_frequency_cm1 == pytest.approx(ts.imaginary_frequency_cm1, abs=5.0)


def test_relay_any_cli_refuses_bad_atoms(tmp_path):
    import subprocess
    import sys

    sub, water = _parts()
    sub.write(tmp_path / "s.xyz")
    water.write(tmp_path / "w.xyz")
    base = [sys.executable, "-m", "tstrate.cli.main", "compute", "relay-any", "--substrate",
            "s.xyz", "--catalyst", "w.xyz", "--catalysts", "1", "--acceptor", "3",
            "--catalyst-atom", "1", "--catalyst-hydrogen", "2", "-q"]
    for extra, needle in [(["--donor", "2", "--hydrogen", "6"], "not bonded to the donor"),
                          (["--donor", "2", "--hydrogen", "5", "--break", "1to3"], "is not I-J"),
                          (["--donor", "9", "--hydrogen", "5"], "does not exist")]:
        r = subprocess.run(base + extra, capture_output=True, text=True, cwd=tmp_path)
        assert r.returncode == 2, r.stderr
        assert needle in r.stderr and "Traceback" not in r.stderr
