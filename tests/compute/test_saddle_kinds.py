"""Saddle points of other kinds: same-bonding saddles on request (NH3 inversion), bimolecular
atom transfers built from two reactants (H + H2S, open shell) and refined, NEB failures."""

from __future__ import annotations

import numpy as np
import pytest

pytest.importorskip("sella")

from ase import Atoms  # noqa: E402

from tstrate.compute.bimolecular import transfer_ends, transfer_guess  # noqa: E402
from tstrate.compute.saddle import find_saddle  # noqa: E402
from tstrate.errors import InputError  # noqa: E402

PLANAR_NH3 = Atoms("NHHH", positions=[[0, 0, 0], [1.0, 0, 0], [-0.5, 0.866, 0.0],
                                      [-0.5, -0.866, 0.05]])
H2S = Atoms("SHH", positions=[[0, 0, 0.1025], [0, 0.9662, -0.8202], [0, -0.9662, -0.8202]])
H = Atoms("H", positions=[[0, 0, 0]])


def test_transfer_guess_puts_the_atom_between_donor_and_acceptor():
    g = transfer_guess(H2S, H, donor=0, atom=1, acceptor=0, distance_A=2.9)
    x = g.guess.positions
    assert g.guess.get_chemical_symbols() == ["S", "H", "H", "H"]
    assert np.linalg.norm(x[3] - x[0]) == pytest.approx(2.9, abs=1e-9)
    # the moving H on the S...H line, both bonds stretched alike beyond the covalent sums
    d1, d2 = np.linalg.norm(x[1] - x[0]), np.linalg.norm(x[3] - x[1])
    assert d1 + d2 == pytest.approx(2.9, abs=1e-9)
    assert d1 - (1.05 + 0.31) == pytest.approx(d2 - 0.62, abs=1e-9)
    assert g.reactant_bonds == {(0, 1), (0, 2)}
    assert g.product_bonds == {(0, 2), (1, 3)}
    r, p, _ = transfer_ends(H2S, H, donor=0, atom=1, acceptor=0)
    from tstrate.compute import connectivity as conn

    assert conn.bonds(r.get_chemical_symbols(), r.positions) == g.reactant_bonds
    assert conn.bonds(p.get_chemical_symbols(), p.positions) == g.product_bonds


def test_transfer_guess_refuses_an_unbonded_atom():
    with pytest.raises(InputError, match="not bonded"):
        transfer_guess(H2S, H, donor=1, atom=2, acceptor=0)


@pytest.mark.slow
def test_same_bonding_saddle_on_request():
    # NH3 umbrella inversion: both sides are pyramidal NH3, so without the request it is refused
    with pytest.raises(InputError, match="same bonding"):
        find_saddle(name="TS-NH3", guess=PLANAR_NH3)
    res = find_saddle(name="TS-NH3", guess=PLANAR_NH3, same_bonding=True)
    assert np.sum(res.ts.frequencies_cm1 < 0) == 1
    assert "same bonding" in res.bond_changes
    # the inversion barrier of NH3 is 24.2 kJ/mol (2023 cm-1; J. D. Swalen, J. A. Ibers,
    # J. Chem. Phys. 36, 1914 (1962), from memory); GFN2-xTB gets its order of magnitude
    assert 5e3 < res.barrier_J_per_mol < 60e3
    assert res.barrier_J_per_mol == pytest.approx(res.reverse_barrier_J_per_mol, abs=500.0)


@pytest.mark.slow
def test_open_shell_bimolecular_route_then_refinement():
    # H + H2S -> H2 + HS: a doublet through the semi-empirical route, then refinement
    from tstrate.compute.refine import HARTREE_J_PER_MOL, Level, refine_species, scf_energy

    g = transfer_guess(H2S, H, donor=0, atom=1, acceptor=0)
    res = find_saddle(name="TS-H-H2S", guess=g.guess, reactant_bonds=g.reactant_bonds,
                      product_bonds=g.product_bonds, multiplicity=2)
    assert res.ts.multiplicity == 2 and np.sum(res.ts.frequencies_cm1 < 0) == 1
    assert res.details["verified"]
    level = Level(basis="def2-SVP")
    ts = refine_species(res.ts, level)
    assert ts.record["energy"]["reference"] == "UKS"
    e_h = scf_energy(["H"], np.zeros((1, 3)), charge=0, multiplicity=2, level=level).energy_hartree
    e_h2s = scf_energy(H2S.get_chemical_symbols(), H2S.positions, charge=0, multiplicity=1,
                       level=level).energy_hartree
    barrier = (ts.energy_hartree - e_h - e_h2s) * HARTREE_J_PER_MOL
    # HTBH38/04: 3.5 kcal/mol = 14.6 kJ/mol (Zhao, Gonzalez-Garcia, Truhlar 2005); at GFN2-xTB
    # geometries and a double-zeta basis the refined barrier is only roughly right
    assert -10e3 < barrier < 45e3


def test_scf_failure_inside_a_neb_is_a_one_line_error(monkeypatch, tmp_path):
    from ase.calculators.calculator import CalculationFailed

    import tstrate.compute.saddle as saddle

    def failing(*args, **kwargs):
        raise CalculationFailed("SCF not converged in 250 cycles")

    monkeypatch.setattr(saddle, "neb_guess", failing)
    hcn = Atoms("CNH", positions=[[0, 0, 0], [0, 0, 1.16], [0, 0, -1.07]])
    hnc = Atoms("CNH", positions=[[0, 0, 0], [0, 0, 1.17], [0, 0, 2.17]])
    with pytest.raises(InputError) as info:
        find_saddle(name="TS", reactant=hcn, product=hnc, work_dir=tmp_path)
    text = str(info.value)
    assert "calculation failed during the NEB" in text and "SCF not converged" in text
    assert "\n" not in text
