"""GFN2-xTB minima: frequencies against experiment, isotope shifts, Hessian cost, cache, errors."""

from __future__ import annotations

import numpy as np
import pytest

pytest.importorskip("tblite")

from tstrate.compute.cache import Cache  # noqa: E402
from tstrate.compute.engine import Settings  # noqa: E402
from tstrate.compute.minima import compute_minimum  # noqa: E402
from tstrate.errors import InputError  # noqa: E402
from tstrate.io.species import build_species  # noqa: E402

# Experimental gas-phase fundamentals [cm^-1], NIST CCCBDB experimental vibrations
# (T. Shimanouchi, Tables of Molecular Vibrational Frequencies, NSRDS-NBS 39, 1972).
H2O_EXP_CM1 = [1594.7, 3657.1, 3755.9]        # nu2 bend, nu1 sym. stretch, nu3 antisym. stretch
CO2_EXP_CM1 = [667.4, 667.4, 1333.0, 2349.0]  # nu2 bend (x2), nu1 (Fermi-resonance centre), nu3
# D2O fundamentals, same compilation (from memory): nu2 1178.4, nu1 2671.6, nu3 2787.7 cm^-1.
D2O_EXP_CM1 = [1178.4, 2671.6, 2787.7]

# Tolerance for GFN2-xTB harmonic wavenumbers against experimental fundamentals: 12 % per mode.
# Common practice for semi-empirical tight-binding frequencies is an error of about 10 % of
# experiment (a GFN2-xTB infrared benchmark reports errors below 10 % for its probes), plus
# 2-5 % from anharmonicity, which harmonic values do not include. The known outlier here is
# CO2's antisymmetric stretch, which GFN2-xTB puts about 10 % too high.
REL_TOL = 0.12


@pytest.fixture(scope="module")
def water():
    return compute_minimum(name="H2O", smiles="O")


@pytest.mark.parametrize("smiles,exp", [("O", H2O_EXP_CM1), ("O=C=O", CO2_EXP_CM1)],
                         ids=["H2O-CCCBDB-Shimanouchi1972", "CO2-CCCBDB-Shimanouchi1972"])
def test_frequencies_against_experiment(smiles, exp):
    sp = compute_minimum(name=smiles, smiles=smiles).species
    calc = np.sort(sp.frequencies_cm1)
    assert len(calc) == len(exp)
    rel = (calc - np.array(exp)) / np.array(exp)
    assert np.all(np.abs(rel) < REL_TOL), rel


def test_water_species_has_hessian_energy_and_provenance(water):
    sp = water.species
    assert sp.hessian_J_per_m2.shape == (9, 9)
    assert sp.symmetry_number == 2 and not sp.linear  # C2v
    # GFN2-xTB total energy of water is about -5.07 hartree (xtb 6.5.1 prints -5.0705 Eh)
    assert sp.energy_J_per_mol == pytest.approx(-5.0705 * 2625499.6, rel=1e-3)
    for key in ("method", "versions", "date", "convergence", "hessian", "command"):
        assert key in sp.provenance
    assert "tblite" in sp.provenance["versions"] and "sella" in sp.provenance["versions"]


def test_hessian_costs_six_gradients_per_atom(water):
    assert water.gradient_calls_hessian == 6 * 3


def test_d2o_shift_ratios(water):
    """Harmonic ratios nu(D2O)/nu(H2O) from the xTB Hessian against the experimental ratios.

    Anharmonicity makes the experimental ratio of fundamentals larger than the harmonic
    ratio by about 0.01 (for nu1: harmonic 2763.8/3832.2 = 0.721 against fundamental
    2671.6/3657.1 = 0.731, harmonic constants of Benedict et al. 1956, from memory);
    tolerance 0.02.
    """
    h2o = water.species
    d2o = build_species("D2O", h2o.symbols, h2o.positions_A, hessian_J_per_m2=h2o.hessian_J_per_m2,
                        isotopes={i: 2 for i, s in enumerate(h2o.symbols) if s == "H"})
    ratio_calc = np.sort(d2o.frequencies_cm1) / np.sort(h2o.frequencies_cm1)
    ratio_exp = np.array(D2O_EXP_CM1) / np.array(H2O_EXP_CM1)
    assert np.all(ratio_calc < ratio_exp)  # harmonic ratios are the lower ones
    np.testing.assert_allclose(ratio_calc, ratio_exp, atol=0.02)


def test_cache_makes_rerun_instant_and_identical(tmp_path):
    cache = Cache(tmp_path / "c")
    first = compute_minimum(name="A", smiles="O", cache=cache)
    again = compute_minimum(name="B", smiles="O", cache=cache)
    assert not first.from_cache and again.from_cache
    assert again.species.name == "B"
    np.testing.assert_array_equal(first.species.frequencies_cm1, again.species.frequencies_cm1)
    assert len(list((tmp_path / "c").rglob("*.json"))) == 1
    other = compute_minimum(name="C", smiles="O", cache=cache,
                            settings=Settings(fmax_eV_per_A=1e-3))
    assert not other.from_cache


def test_geometry_input_and_env_cache(tmp_path):
    from ase import Atoms

    atoms = Atoms("OHH", positions=[[0, 0, 0.1], [0, 0.8, -0.5], [0, -0.75, -0.5]])
    res = compute_minimum(name="w", atoms=atoms, cache=Cache())
    assert (tmp_path / "cache" / "minimum").is_dir()  # TSTRATE_CACHE set by conftest
    np.testing.assert_allclose(np.sort(res.species.frequencies_cm1), [1539, 3643, 3652], atol=3)


def test_unparsable_smiles():
    with pytest.raises(InputError, match="cannot parse the SMILES"):
        compute_minimum(name="x", smiles="C1CC(")


@pytest.mark.parametrize("smiles", ["", "   "])
def test_empty_smiles(smiles):
    # RDKit parses "" into a molecule without atoms; the embedding then raised a bare ValueError
    with pytest.raises(InputError, match="SMILES is empty|cannot parse the SMILES"):
        compute_minimum(name="x", smiles=smiles)


def test_non_convergence_keeps_last_geometry(tmp_path):
    with pytest.raises(InputError, match=r"did not converge in 1 steps.*water-conformer1\.unconverged\.xyz"):
        compute_minimum(name="water", smiles="O", settings=Settings(max_steps=1, n_conformers=1),
                        work_dir=tmp_path)
    assert (tmp_path / "water-conformer1.unconverged.xyz").exists()


def test_bad_settings():
    with pytest.raises(InputError, match="unknown method"):
        Settings(method="PM7")
    with pytest.raises(InputError, match="step limit"):
        Settings(max_steps=0)


def test_failed_scf_is_an_input_error(tmp_path):
    """An SCF allowed a single iteration cannot converge: the failure becomes an InputError."""
    from ase import Atoms

    from tstrate.compute.engine import minimise, with_calculator

    atoms = with_calculator(Atoms("H2", positions=[[0, 0, 0], [0, 0, 0.7]]), Settings())
    atoms.calc.set(max_iterations=1)
    with pytest.raises(InputError, match=r"calculation failed during the minimisation of h2.*"
                                         r"h2\.failed\.xyz"):
        minimise(atoms, Settings(), label="h2", work_dir=tmp_path)
    assert (tmp_path / "h2.failed.xyz").exists()
