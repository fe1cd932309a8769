"""Water-relay layouts and saddle points of H2CO3 -> CO2 + H2O (bare and with one water)."""

from __future__ import annotations

import numpy as np
import pytest

from tstrate.compute import connectivity as conn
from tstrate.compute.relay import relay_geometry
from tstrate.errors import InputError


@pytest.mark.parametrize("n", [0, 1, 2])
def test_layout_rings_and_products(n):
    atoms, plan = relay_geometry(n, "complex")
    sym = atoms.get_chemical_symbols()
    assert sym.count("O") == 3 + n and sym.count("H") == 2 + 2 * n
    # ring: C, O1, and per transfer one H and one acceptor O -> 4, 6, 8 members
    assert 2 + 2 * len(plan.transfers) == 4 + 2 * n
    # the layout's own bonding is the intended reactant bonding
    assert conn.bonds(sym, atoms.positions) == plan.reactant_bonds
    # products: CO2 and n+1 waters
    frags = conn.fragments(len(sym), plan.product_bonds)
    formulas = sorted("".join(sorted(sym[i] for i in f)) for f in frags)
    assert formulas == sorted(["COO"] + ["HHO"] * (n + 1))
    # equal O...O spacing along the relay (2.70 A) and O-H 0.98 A on the donors
    for h, d, a in plan.transfers:
        if n:
            assert np.linalg.norm(atoms.positions[a] - atoms.positions[d]) == pytest.approx(2.70)
        assert np.linalg.norm(atoms.positions[h] - atoms.positions[d]) == pytest.approx(0.98)


def test_layout_rejects_three_waters():
    with pytest.raises(InputError, match="0, 1 or 2"):
        relay_geometry(3)


@pytest.fixture(scope="module")
def relay(tmp_path_factory):
    """find_relay(n) for n waters, computed at most once per module, each in its own cache and work
    folder (not the per-test ones of conftest.py); tests only read the results, in any order."""
    pytest.importorskip("sella")
    from tstrate.compute.cache import Cache
    from tstrate.compute.relay import find_relay

    done = {}

    def get(n):
        if n not in done:
            folder = tmp_path_factory.mktemp(f"relay{n}")
            done[n] = find_relay(n, cache=Cache(folder / "cache"), work_dir=folder)
        return done[n]

    return get


@pytest.mark.slow
@pytest.mark.parametrize("n", [0, 1])
def test_relay_saddle_is_verified(relay, n):
    res = relay(n)
    ts = res.saddle.ts
    assert np.sum(ts.frequencies_cm1 < 0) == 1
    assert res.saddle.details["verified"]
    assert res.barrier_J_per_mol > 0 and res.barrier_zpe_J_per_mol < res.barrier_J_per_mol
    # ZPE-corrected barriers are lower than classical ones for H transfer (the O-H stretch is
    # lost at the saddle point), and the downhill product side is CO2 + (n+1) water
    sym = ts.symbols
    frags = conn.fragments(len(sym), conn.bonds(sym, res.saddle.product.positions_A))
    assert len(frags) == n + 2


@pytest.mark.slow
def test_one_water_lowers_the_relay_barrier(relay):
    # one water lowers the barrier (Loerting et al., Angew. Chem. Int. Ed. 39, 891 (2000))
    assert relay(1).barrier_J_per_mol < relay(0).barrier_J_per_mol - 40e3
