"""Refinement with PySCF: energies equal a direct PySCF run, analytic and finite-difference
Hessians agree, coupled cluster and its extrapolation, species files, cache and CLI errors.

Small molecules and small bases only (each test well under 10 s on one core)."""

from __future__ import annotations

import json
import subprocess
import sys

import numpy as np
import pytest

pytest.importorskip("pyscf")

from tstrate.compute.cache import Cache  # noqa: E402
from tstrate.compute.refine import (HARTREE_J_PER_MOL, Level, RefineOptions,  # noqa: E402
                                    coupled_cluster_cost, coupled_cluster_energy,
                                    hessian_hartree_bohr2, refine_species, scf_energy)
from tstrate.errors import InputError  # noqa: E402
from tstrate.io.species import build_species, read_species, write_species  # noqa: E402

# water near its equilibrium geometry [Angstrom]; OH radical (doublet)
H2O = (["O", "H", "H"], np.array([[0.0, 0.0, 0.1173], [0.0, 0.7572, -0.4692],
                                  [0.0, -0.7572, -0.4692]]))
OH = (["O", "H"], np.array([[0.0, 0.0, 0.0], [0.0, 0.0, 0.97]]))


def _species(mol, multiplicity=1, name="X", **kw):
    sym, pos = mol
    n = 3 * len(sym) - (5 if len(sym) == 2 else 6)
    return build_species(name, sym, pos, multiplicity=multiplicity,
                         frequencies_cm1=[1000.0 + 500 * k for k in range(n)],
                         energy_J_per_mol=-1.0e5, **kw)


def _direct(mol, xc, basis, spin=0, df=True):
    from pyscf import dft, gto

    m = gto.M(atom=[(s, tuple(p)) for s, p in zip(*mol)], basis=basis, spin=spin, verbose=0,
              unit="Angstrom")
    mf = (dft.UKS(m) if spin else dft.RKS(m))
    mf.xc = xc
    if df:
        mf = mf.density_fit()
    mf.conv_tol = 1e-10
    return mf.kernel()


def test_closed_shell_energy_equals_direct_pyscf():
    # reference: PySCF itself, the same functional, basis and geometry (1e-8 hartree)
    level = Level(basis="def2-SVP")
    res = refine_species(_species(H2O), level)
    assert res.energy_hartree == pytest.approx(_direct(H2O, "wb97x-d3bj", "def2-svp"), abs=1e-8)
    assert res.species.energy_J_per_mol == pytest.approx(res.energy_hartree * HARTREE_J_PER_MOL,
                                                         rel=1e-14)
    assert res.species.geometry_energy_J_per_mol == -1.0e5  # the geometry's own energy is kept
    prov = res.species.provenance
    assert prov["single_point_method"] == "wB97X-D3BJ/def2-SVP (density fitting)"
    assert prov["single_point_program"].startswith("PySCF ")
    assert "1e-10 hartree" in prov["single_point_convergence"]
    assert float(prov["single_point_seconds"]) >= 0.0
    assert prov["single_point_basis_functions"] == "24"


def test_open_shell_uses_uks_and_equals_direct_pyscf():
    level = Level(method="B3LYP-D3BJ", basis="def2-SVP", density_fit=False)
    res = refine_species(_species(OH, multiplicity=2), level)
    assert res.record["energy"]["reference"] == "UKS"
    assert res.energy_hartree == pytest.approx(_direct(OH, "b3lyp-d3bj", "def2-svp", spin=1,
                                                       df=False), abs=1e-8)


def test_dispersion_is_included():
    # D3(BJ) through pyscf-dispersion: with and without it differ for the water dimer
    dimer = (["O", "H", "H", "O", "H", "H"],
             np.array([[-1.55, 0.0, 0.0], [-1.93, 0.76, -0.44], [-1.93, -0.76, -0.44],
                       [1.35, 0.0, 0.0], [0.40, 0.0, 0.0], [1.70, 0.0, 0.90]]))
    e_d = scf_energy(*dimer, charge=0, multiplicity=1, level=Level("B3LYP-D3BJ", "STO-3G")).energy_hartree
    e = scf_energy(*dimer, charge=0, multiplicity=1, level=Level("B3LYP", "STO-3G")).energy_hartree
    assert -5e-3 < e_d - e < -1e-4  # a few tenths of a kJ/mol to a few kJ/mol, attractive


@pytest.mark.parametrize("method", ["HF", "B3LYP"])
def test_analytic_and_finite_difference_hessians_agree(method):
    # an independent numerical method: central differences of PySCF's analytic gradients
    level = Level(method=method, basis="3-21G", density_fit=False, conv_tol_hartree=1e-11)
    # re-optimise first: a Hessian belongs to the level's own stationary point
    sp = refine_species(_species(H2O), level, RefineOptions(optimise=True)).species
    ha, how_a, _ = hessian_hartree_bohr2(sp.symbols, sp.positions_A, charge=0, multiplicity=1,
                                         level=level, analytic=True)
    hf, how_f, _ = hessian_hartree_bohr2(sp.symbols, sp.positions_A, charge=0, multiplicity=1,
                                         level=level, analytic=False)
    assert how_a.startswith("analytic") and how_f.startswith("central")
    # DFT: the analytic Hessian and gradients both leave out the grid response, so the two
    # agree to the grid's precision, not to the step's
    tol = 2e-5 if method == "HF" else 1e-3
    assert np.max(np.abs(ha - hf)) < tol * np.max(np.abs(ha)) * 10
    from tstrate.physics.vibrations import HESSIAN_UNITS_J_PER_M2, vibrational_analysis

    u = HESSIAN_UNITS_J_PER_M2["hartree/bohr2"]
    fa = vibrational_analysis(ha * u, sp.positions_A, sp.masses_amu).frequencies_cm1
    ff = vibrational_analysis(hf * u, sp.positions_A, sp.masses_amu).frequencies_cm1
    assert np.max(np.abs(fa - ff)) < (0.5 if method == "HF" else 3.0)
    # and the species' own frequencies come from the analytic Hessian
    assert np.allclose(sp.frequencies_cm1, fa, atol=1e-6)


def test_reoptimised_minimum_has_new_geometry_hessian_and_provenance(tmp_path):
    level = Level(method="HF", basis="STO-3G")
    res = refine_species(_species(H2O), level, RefineOptions(optimise=True))
    sp = res.species
    # HF/STO-3G water: O-H 0.989 A, H-O-H 100.0 degrees (a textbook result: Szabo and
    # Ostlund, Modern Quantum Chemistry, table 3.13, from memory)
    r = np.linalg.norm(sp.positions_A[1] - sp.positions_A[0])
    v1, v2 = sp.positions_A[1] - sp.positions_A[0], sp.positions_A[2] - sp.positions_A[0]
    ang = np.degrees(np.arccos(v1 @ v2 / np.linalg.norm(v1) / np.linalg.norm(v2)))
    assert r == pytest.approx(0.989, abs=0.003)
    assert ang == pytest.approx(100.0, abs=0.3)
    assert sp.hessian_J_per_m2 is not None and np.all(sp.frequencies_cm1 > 0)
    assert sp.provenance["method"] == "HF/STO-3G (density fitting)"
    assert sp.provenance["hessian"].startswith("analytic")
    # same level for geometry and energy: no separate single point
    assert sp.energy_J_per_mol == sp.geometry_energy_J_per_mol
    path = write_species(sp, tmp_path / "w.toml")
    back = read_species(path)
    assert np.allclose(back.frequencies_cm1, sp.frequencies_cm1, atol=1e-3)


def test_single_point_round_trips_through_a_species_file(tmp_path):
    res = refine_species(_species(H2O), Level(basis="STO-3G"))
    path = write_species(res.species, tmp_path / "h2o.toml")
    text = path.read_text()
    assert 'method = "wB97X-D3BJ/STO-3G (density fitting)"' in text
    back = read_species(path)
    assert back.energy_J_per_mol == pytest.approx(res.species.energy_J_per_mol, rel=1e-15)
    assert back.geometry_energy_J_per_mol == -1.0e5
    assert back.provenance["single_point_method"] == res.species.provenance["single_point_method"]


def test_cache_returns_the_same_result(tmp_path):
    cache = Cache(tmp_path / "c")
    a = refine_species(_species(H2O), Level(basis="STO-3G"), cache=cache)
    b = refine_species(_species(H2O), Level(basis="STO-3G"), cache=cache)
    c = refine_species(_species(H2O), Level(basis="3-21G"), cache=cache)
    assert not a.from_cache and b.from_cache and not c.from_cache
    assert a.energy_hartree == b.energy_hartree != c.energy_hartree


def test_ccsd_t_equals_direct_pyscf_and_extrapolation_formula():
    from pyscf import cc, gto, scf

    sym, pos = H2O
    res = coupled_cluster_energy(sym, pos, charge=0, multiplicity=1,
                                 level=Level("CCSD(T)", "cc-pVDZ"))
    m = gto.M(atom=[(s, tuple(p)) for s, p in zip(sym, pos)], basis="cc-pvdz", verbose=0)
    mf = scf.RHF(m)
    mf.conv_tol = 1e-10
    mf.kernel()
    mycc = cc.CCSD(mf, frozen=1)  # frozen O 1s
    mycc.conv_tol = 1e-8
    mycc.kernel()
    direct = mf.e_tot + mycc.e_corr + mycc.ccsd_t()
    assert res.energy_hartree == pytest.approx(direct, abs=1e-8)
    # two-point X^-3 extrapolation (Helgaker et al. 1997) by hand from the parts
    ext = coupled_cluster_energy(sym, pos, charge=0, multiplicity=1,
                                 level=Level("CCSD(T)", "cc-pVDZ:cc-pVTZ"))
    d, t = ext.record["parts"]
    assert d["energy_hartree"] == pytest.approx(direct, abs=1e-8)
    corr = (27 * t["correlation_hartree"] - 8 * d["correlation_hartree"]) / 19
    assert ext.energy_hartree == pytest.approx(t["hf_hartree"] + corr, abs=1e-12)
    assert ext.energy_hartree < t["energy_hartree"]


def test_ccsd_t_cost_estimate_and_size_cap():
    cost = coupled_cluster_cost(["C", "O", "O", "O", "H", "H"], charge=0, multiplicity=1,
                                level=Level("CCSD(T)", "cc-pVTZ"))
    # H2CO3, cc-pVTZ: 4 x 30 + 2 x 14 = 148 functions, 12 active occupied, 132 virtual
    assert (cost.n_basis, cost.n_occupied_active, cost.n_virtual) == (148, 12, 132)
    assert cost.seconds == pytest.approx(100.0, rel=1e-9)  # the measurement it is scaled from
    with pytest.raises(InputError, match="limit is 100 basis functions"):
        coupled_cluster_energy(["C", "O", "O", "O", "H", "H"], np.zeros((6, 3)), charge=0,
                               multiplicity=1, level=Level("CCSD(T)", "cc-pVTZ"),
                               max_basis_functions=100)


@pytest.mark.parametrize("kw, match", [
    (dict(method="no-such-functional"), "does not know the functional"),
    (dict(basis="no-such-basis"), "unknown to PySCF"),
])
def test_bad_levels_are_input_errors(kw, match):
    with pytest.raises(InputError, match=match):
        refine_species(_species(H2O), Level(**kw))


def test_wrong_multiplicity_is_an_input_error():
    with pytest.raises(InputError, match="multiplicity"):
        refine_species(_species(OH, multiplicity=1), Level(basis="STO-3G"))


def test_extrapolation_needs_cardinal_numbers():
    with pytest.raises(InputError, match="cardinal"):
        Level("CCSD(T)", "def2-SVP:def2-TZVP")
    with pytest.raises(InputError, match="coupled cluster only"):
        Level("B3LYP", "cc-pVDZ:cc-pVTZ")


def _cli(*args, cwd):
    return subprocess.run([sys.executable, "-m", "tstrate.cli.main", "compute", "refine", *args],
                          capture_output=True, text=True, cwd=cwd)


def test_cli_refines_a_file_and_refuses_bad_input(tmp_path):
    src = write_species(_species(H2O, name="H2O"), tmp_path / "h2o.toml")
    r = _cli(str(src), "--level", "HF/STO-3G", "-o", "out.toml", "--json", "-q", cwd=tmp_path)
    assert r.returncode == 0, r.stderr
    doc = json.loads(r.stdout)
    assert doc["species"][0]["energy_hartree"] == pytest.approx(
        read_species(tmp_path / "out.toml").energy_J_per_mol / HARTREE_J_PER_MOL, abs=1e-12)
    for args, needle in [((str(src), "--level", "B3LYP"), "METHOD/BASIS"),
                         ((str(src), "-o", str(src)), "overwrite an input"),
                         ((str(src), "--level", "HF/STO-3G", "-o", "out.toml"), "exists"),
                         ((str(src), "--hessian", "analytic", "--geometry-level", "HF/STO-3G"),
                          "--optimise"),
                         ((), "give species files")]:
        r = _cli(*args, cwd=tmp_path)
        assert r.returncode == 2, (args, r.stderr)
        assert needle in r.stderr and "Traceback" not in r.stderr
        assert len(r.stderr.strip().splitlines()) <= 2
    r = _cli(str(src), "--estimate", "--json", cwd=tmp_path)
    assert r.returncode == 0 and json.loads(r.stdout)["estimate"][0]["atoms"] == 3


@pytest.mark.slow
def test_reoptimised_ts_keeps_one_imaginary_mode_and_is_verified():
    # the demo's GFN2-xTB bare TS re-optimised at HF/STO-3G (cheap; the route is the same at
    # any level): geomeTRIC seeded with the file's Hessian, analytic Hessian, both ways downhill
    from pathlib import Path

    demo = Path(__file__).resolve().parents[2] / "molecules" / "carbonic_acid"
    sp = read_species(demo / "ts_bare.toml")
    res = refine_species(sp, Level("HF", "STO-3G"), RefineOptions(optimise=True))
    new = res.species
    assert np.sum(new.frequencies_cm1 < 0) == 1
    assert new.provenance["verification"].endswith("both sides match the recorded minima")
    assert "seeded with the Hessian of GFN2-xTB" in new.provenance["optimiser"]
    assert new.provenance["reactant_side_geometry"] != sp.provenance["reactant_side_geometry"]
    # a saddle point of HF/STO-3G: PySCF's gradient there is near zero
    from pyscf import gto, scf

    m = gto.M(atom=[(a, tuple(p)) for a, p in zip(new.symbols, new.positions_A)],
              basis="sto-3g", verbose=0)
    g = scf.RHF(m).density_fit().run(conv_tol=1e-10).nuc_grad_method().kernel()
    assert np.max(np.abs(g)) < 1e-3  # hartree/bohr (geomeTRIC's gmax is 4.5e-4)
