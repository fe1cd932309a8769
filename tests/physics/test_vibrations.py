"""Projected harmonic analysis: frequencies from Cartesian Hessians, isotopes, projection.

Independent references used here:
- Wilson's GF method in internal coordinates (Wilson, Decius and Cross, Molecular
  Vibrations, 1955): no Cartesian projection at all, so it checks the projection.
- Closed-form frequencies of a linear symmetric triatomic (textbook result, e.g.
  Herzberg, Infrared and Raman Spectra, 1945): w_sym^2 = k/m_O,
  w_asym^2 = k (1/m_O + 2/m_C), w_bend^2 = k_b (1/m_C + 1/(2 m_O)) for the force field below.
- ASE's VibrationsData (unprojected diagonalisation, ASE's own constants).
- The Teller-Redlich product rule (Redlich, Z. Phys. Chem. B 28, 371 (1935)), exact for
  harmonic frequencies of isotopologues.
- Experimental fundamentals of H2O and D2O (NIST CCCBDB / Shimanouchi 1972).
"""

from __future__ import annotations

import numpy as np
import pytest
from ase import Atoms
from ase.build import molecule
from scipy import constants as sc

from tests.conftest import (WATER_POSITIONS_A, WATER_SYMBOLS, valence_b_rows,
                            valence_hessian_J_per_m2, water_terms)
from tstrate.geometry import expected_mode_count
from tstrate.errors import InputError
from tstrate.io.species import build_species
from tstrate.physics.thermo import thermochemistry
from tstrate.physics.vibrations import (HESSIAN_UNITS_J_PER_M2, default_masses_amu,
                                        isotope_mass_amu, rigid_body_basis,
                                        vibrational_analysis)
from tstrate.units import AMU, C


def _to_cm1(lam):
    """Eigenvalue of a mass-weighted Hessian [1/s^2] -> signed wavenumber [cm^-1]."""
    return np.sign(lam) * np.sqrt(np.abs(lam)) / (2 * np.pi * C * 100.0)


def gf_frequencies_cm1(positions_A, masses_amu, **terms):
    """Wilson GF method: eigenvalues of G^1/2 F G^1/2 with G = B M^-1 B^T (no projection)."""
    b, k = valence_b_rows(positions_A, **terms)
    minv = 1.0 / np.repeat(np.asarray(masses_amu) * AMU, 3)
    g = (b * minv) @ b.T
    # bonds [m/m] and angles [rad/m] differ by 1e10 in scale: make G dimensionless first
    # (G' = D G D, F' = D^-1 F D^-1 has the same eigenvalues of G F)
    s = np.sqrt(np.diag(g))
    g = g / np.outer(s, s)
    k = k * s**2
    w, v = np.linalg.eigh(g)
    w = np.clip(w, 0.0, None)
    g_half = (v * np.sqrt(w)) @ v.T
    lam = np.linalg.eigvalsh(g_half @ np.diag(k) @ g_half)
    lam = lam[np.abs(lam) > 1e-6 * np.abs(lam).max()]  # redundant internal coordinates give zeros
    return np.sort(_to_cm1(lam))


def _rotation(seed):
    q, r = np.linalg.qr(np.random.default_rng(seed).normal(size=(3, 3)))
    q = q @ np.diag(np.sign(np.diag(r)))
    return q if np.linalg.det(q) > 0 else -q


def _methane_terms(x):
    bonds = [(i, 0, 500.0) for i in range(1, 5)]
    angles = [(i, 0, j, 0.5e-18) for i in range(1, 5) for j in range(i + 1, 5)]
    return dict(bonds=bonds, angles=angles)


# ---- frequencies against independent methods -----------------------------------------------

def test_water_matches_the_gf_method():
    m = default_masses_amu(WATER_SYMBOLS)
    h = valence_hessian_J_per_m2(WATER_POSITIONS_A, **water_terms())
    nm = vibrational_analysis(h, WATER_POSITIONS_A, m)
    assert len(nm.frequencies_cm1) == 3
    assert nm.frequencies_cm1 == pytest.approx(gf_frequencies_cm1(WATER_POSITIONS_A, m,
                                                                  **water_terms()), rel=1e-9)


def test_methane_matches_the_gf_method_with_redundant_coordinates():
    atoms = molecule("CH4")
    m = default_masses_amu(atoms.get_chemical_symbols())
    terms = _methane_terms(atoms.positions)
    h = valence_hessian_J_per_m2(atoms.positions, **terms)
    nm = vibrational_analysis(h, atoms.positions, m)
    assert len(nm.frequencies_cm1) == 9  # 3N - 6
    assert nm.frequencies_cm1 == pytest.approx(gf_frequencies_cm1(atoms.positions, m, **terms),
                                               rel=1e-9)
    # Td degeneracies: one A1, one E (x2), two T2 (x3)
    f = nm.frequencies_cm1
    assert np.ptp(f[0:3]) < 1e-6 * f[0] or np.ptp(f[0:2]) < 1e-6 * f[0]


def test_linear_triatomic_matches_closed_forms():
    x = np.array([[0.0, 0.0, -1.16], [0.0, 0.0, 0.0], [0.0, 0.0, 1.16]])
    symbols = ["O", "C", "O"]
    m_o, m_c, _ = default_masses_amu(symbols) * AMU
    k, kb = 1600.0, 60.0  # [N/m]
    terms = dict(bonds=[(0, 1, k), (2, 1, k)], linear_bends=[(0, 1, 2, kb)])
    h = valence_hessian_J_per_m2(x, **terms)
    nm = vibrational_analysis(h, x, default_masses_amu(symbols))
    assert nm.linear
    assert len(nm.frequencies_cm1) == 4  # 3N - 5
    bend = _to_cm1(kb * (1 / m_c + 1 / (2 * m_o)))
    sym_ = _to_cm1(k / m_o)
    asym = _to_cm1(k * (1 / m_o + 2 / m_c))
    assert nm.frequencies_cm1 == pytest.approx(sorted([bend, bend, sym_, asym]), rel=1e-9)


def test_water_matches_ase_vibrationsdata():
    from ase.vibrations import VibrationsData

    m = default_masses_amu(WATER_SYMBOLS)
    h = valence_hessian_J_per_m2(WATER_POSITIONS_A, **water_terms())
    atoms = Atoms(WATER_SYMBOLS, positions=WATER_POSITIONS_A, masses=m)
    data = VibrationsData.from_2d(atoms, h / HESSIAN_UNITS_J_PER_M2["eV/A2"])
    ase_f = np.sort(np.abs(data.get_frequencies()))[6:].real  # drop the six rigid-body zeros
    ours = vibrational_analysis(h, WATER_POSITIONS_A, m).frequencies_cm1
    # ASE converts with CODATA 2014 constants, we with CODATA 2022: ~1e-8 relative
    assert ours == pytest.approx(ase_f, rel=1e-6)


# ---- projection ----------------------------------------------------------------------------

def test_rotated_and_translated_molecule_gives_the_same_frequencies():
    atoms = molecule("CH4")
    m = default_masses_amu(atoms.get_chemical_symbols())
    ref = vibrational_analysis(valence_hessian_J_per_m2(atoms.positions,
                                                        **_methane_terms(atoms.positions)),
                               atoms.positions, m).frequencies_cm1
    moved = atoms.positions @ _rotation(5).T + np.array([10.0, -3.0, 2.5])
    h = valence_hessian_J_per_m2(moved, **_methane_terms(moved))  # rebuilt at the new geometry
    assert vibrational_analysis(h, moved, m).frequencies_cm1 == pytest.approx(ref, rel=1e-9)


def test_rotating_the_hessian_with_the_geometry_gives_the_same_frequencies():
    m = default_masses_amu(WATER_SYMBOLS)
    h = valence_hessian_J_per_m2(WATER_POSITIONS_A, **water_terms())
    rot = _rotation(9)
    big = np.kron(np.eye(3), rot)  # rotates every atom's 3 components
    moved = WATER_POSITIONS_A @ rot.T - 4.0
    ref = vibrational_analysis(h, WATER_POSITIONS_A, m).frequencies_cm1
    assert vibrational_analysis(big @ h @ big.T, moved, m).frequencies_cm1 == pytest.approx(ref,
                                                                                          rel=1e-9)


def test_rigid_body_contamination_is_projected_out():
    """Numerical Hessians have spurious translation/rotation eigenvalues; they must not leak."""
    m = default_masses_amu(WATER_SYMBOLS)
    h = valence_hessian_J_per_m2(WATER_POSITIONS_A, **water_terms())
    rb = rigid_body_basis(WATER_POSITIONS_A, m)  # mass-weighted, orthonormal (9 x 6)
    assert rb.T @ rb == pytest.approx(np.eye(6), abs=1e-12)
    sq = np.sqrt(np.repeat(m * AMU, 3))
    junk_mw = rb @ np.diag([3e27, -2e27, 5e26, 1e28, -4e27, 7e26]) @ rb.T  # [1/s^2], ~ +-300 cm-1
    h_bad = h + sq[:, None] * junk_mw * sq[None, :]
    ref = vibrational_analysis(h, WATER_POSITIONS_A, m).frequencies_cm1
    bad = vibrational_analysis(h_bad, WATER_POSITIONS_A, m)
    assert bad.frequencies_cm1 == pytest.approx(ref, rel=1e-9)
    assert bad.imaginary_count == 0


def test_normal_modes_are_orthonormal_and_free_of_rigid_body_motion():
    atoms = molecule("CH4")
    m = default_masses_amu(atoms.get_chemical_symbols())
    nm = vibrational_analysis(valence_hessian_J_per_m2(atoms.positions,
                                                       **_methane_terms(atoms.positions)),
                              atoms.positions, m)
    q = nm.modes.reshape(len(nm.frequencies_cm1), -1)
    assert q @ q.T == pytest.approx(np.eye(9), abs=1e-10)
    assert np.abs(q @ rigid_body_basis(atoms.positions, m)).max() < 1e-10


@pytest.mark.parametrize("natoms,linear,count", [(1, False, 0), (2, True, 1), (3, True, 4),
                                                 (3, False, 3), (6, False, 12)])
def test_expected_mode_count(natoms, linear, count):
    assert expected_mode_count(natoms, linear) == count


def test_imaginary_mode_of_a_model_hessian_is_negative():
    m = default_masses_amu(WATER_SYMBOLS)
    terms = water_terms(k_bend=-0.3e-18)  # a bend that lowers the energy: a saddle point
    nm = vibrational_analysis(valence_hessian_J_per_m2(WATER_POSITIONS_A, **terms),
                              WATER_POSITIONS_A, m)
    assert nm.imaginary_count == 1
    assert nm.frequencies_cm1[0] < -500.0
    assert nm.frequencies_cm1 == pytest.approx(gf_frequencies_cm1(WATER_POSITIONS_A, m, **terms),
                                               rel=1e-9)


def test_bad_hessians_raise_input_errors():
    m = default_masses_amu(WATER_SYMBOLS)
    with pytest.raises(InputError, match=r"\[hessian\].*shape \(6, 6\), expected \(9, 9\)"):
        vibrational_analysis(np.eye(6), WATER_POSITIONS_A, m)
    h = np.eye(9)
    h[2, 3] = np.nan
    with pytest.raises(InputError, match=r"\[hessian\].*NaN"):
        vibrational_analysis(h, WATER_POSITIONS_A, m)


def test_hessian_unit_factors_match_ase_units():
    from ase import units

    ev = sc.eV
    # ASE (CODATA 2014): Hartree/Bohr^2 in eV/Angstrom^2; ours from scipy (CODATA 2022)
    assert HESSIAN_UNITS_J_PER_M2["hartree/bohr2"] == pytest.approx(
        units.Hartree / units.Bohr**2 * ev * 1e20, rel=1e-7)
    assert HESSIAN_UNITS_J_PER_M2["kcal/mol/A2"] == pytest.approx(
        HESSIAN_UNITS_J_PER_M2["kJ/mol/A2"] * 4.184, rel=1e-15)  # thermochemical calorie


# ---- isotopes ------------------------------------------------------------------------------

def test_isotope_masses_agree_with_codata_particle_masses():
    """m(atom) = m(nucleus) + Z m_e - binding (13.6 eV for H: 1.5e-8 u), CODATA via scipy."""
    pc = sc.physical_constants
    me = pc["electron mass in u"][0]
    assert isotope_mass_amu("H") == pytest.approx(pc["proton mass in u"][0] + me, abs=3e-8)
    assert isotope_mass_amu("H", 2) == pytest.approx(pc["deuteron mass in u"][0] + me, abs=3e-8)
    assert isotope_mass_amu("C", 12) == pytest.approx(12.0, abs=1e-9)  # definition of the u


@pytest.mark.parametrize("symbol,mass_number", [("O", 40), ("H", 0), ("Xx", None), ("X", None)])
def test_unknown_isotopes_are_input_errors(symbol, mass_number):
    with pytest.raises(InputError, match="isotope|unknown element"):
        isotope_mass_amu(symbol, mass_number)


def _water_frequencies(masses):
    h = valence_hessian_J_per_m2(WATER_POSITIONS_A, **water_terms())
    return vibrational_analysis(h, WATER_POSITIONS_A, masses).frequencies_cm1


def test_teller_redlich_product_rule_for_d2o():
    """prod(w'/w)^2 = prod_a (m_a/m_a')^3 (M'/M)^3 (I'_A I'_B I'_C)/(I_A I_B I_C), nonlinear."""
    from tstrate.geometry import principal_moments

    mh = default_masses_amu(WATER_SYMBOLS)
    md = mh.copy()
    md[1:] = isotope_mass_amu("H", 2)
    ratio = np.prod(_water_frequencies(md) / _water_frequencies(mh)) ** 2
    inertia = (np.prod(principal_moments(WATER_POSITIONS_A, md))
               / np.prod(principal_moments(WATER_POSITIONS_A, mh)))
    expected = np.prod(mh / md) ** 3 * (md.sum() / mh.sum()) ** 3 * inertia
    assert ratio == pytest.approx(expected, rel=1e-9)


# Experimental fundamentals [cm^-1], NIST CCCBDB (Shimanouchi 1972): bend, sym. str., asym. str.
H2O_FUNDAMENTALS = np.array([1594.7, 3657.1, 3755.9])
D2O_FUNDAMENTALS = np.array([1178.4, 2671.6, 2787.7])


def _check_d2o_ratios(f_h, f_d):
    """Harmonic ratios vs ratios of experimental fundamentals.

    Anharmonicity lowers a fundamental by about 2 x_e w, and x_e w scales as 1/mu while
    w scales as 1/sqrt(mu): the H modes lose more than the D modes, so the ratio of
    fundamentals nu_D/nu_H is *larger* than the harmonic ratio w_D/w_H, by about 1-1.5 %
    for water (experimental harmonic w of H2O/D2O, e.g. 3832/2764 cm^-1, from memory).
    Accepted: the harmonic ratio lies 0-3 % below the experimental one.
    """
    harmonic = f_d / f_h
    experiment = D2O_FUNDAMENTALS / H2O_FUNDAMENTALS
    deficit = 1.0 - harmonic / experiment
    assert np.all(deficit > 0.0), deficit
    assert np.all(deficit < 0.03), deficit


def test_d2o_from_an_h2o_hessian_via_isotopes():
    h = valence_hessian_J_per_m2(WATER_POSITIONS_A, **water_terms())
    h2o = build_species("H2O", WATER_SYMBOLS, WATER_POSITIONS_A, hessian_J_per_m2=h)
    d2o = build_species("D2O", WATER_SYMBOLS, WATER_POSITIONS_A, hessian_J_per_m2=h,
                        isotopes={1: 2, 2: 2})
    assert d2o.masses_amu[1:] == pytest.approx([isotope_mass_amu("H", 2)] * 2, rel=1e-12)
    assert d2o.symmetry_number == 2
    _check_d2o_ratios(h2o.frequencies_cm1, d2o.frequencies_cm1)


# ---- the Hessian route against the frequency route ------------------------------------------

def test_hessian_species_thermochemistry_equals_frequency_list_species():
    from ase.vibrations import VibrationsData

    h = valence_hessian_J_per_m2(WATER_POSITIONS_A, **water_terms())
    from_hessian = build_species("H2O", WATER_SYMBOLS, WATER_POSITIONS_A, hessian_J_per_m2=h)
    atoms = Atoms(WATER_SYMBOLS, positions=WATER_POSITIONS_A, masses=from_hessian.masses_amu)
    ase_f = np.sort(np.abs(VibrationsData.from_2d(
        atoms, h / HESSIAN_UNITS_J_PER_M2["eV/A2"]).get_frequencies()))[6:].real
    from_list = build_species("H2O", WATER_SYMBOLS, WATER_POSITIONS_A, frequencies_cm1=ase_f)
    T = np.array([100.0, 298.15, 1000.0])
    a, b = thermochemistry(from_hessian, T), thermochemistry(from_list, T)
    assert a.entropy_J_per_mol_K == pytest.approx(b.entropy_J_per_mol_K, rel=1e-7)
    assert a.enthalpy_increment_J_per_mol == pytest.approx(b.enthalpy_increment_J_per_mol, rel=1e-7)
    assert a.heat_capacity_J_per_mol_K == pytest.approx(b.heat_capacity_J_per_mol_K, rel=1e-7)
    assert a.zpe_J_per_mol == pytest.approx(b.zpe_J_per_mol, rel=1e-7)


@pytest.fixture(scope="module")
def gfn2_water():
    """GFN2-xTB water (tblite), optimised, with an ASE finite-difference Hessian [eV/A^2]."""
    pytest.importorskip("tblite")
    import tempfile
    from pathlib import Path

    from ase.optimize import BFGS
    from ase.vibrations import Vibrations
    from tblite.ase import TBLite

    atoms = molecule("H2O")
    atoms.calc = TBLite(method="GFN2-xTB", verbosity=0)
    BFGS(atoms, logfile=None).run(fmax=1e-5)
    with tempfile.TemporaryDirectory() as tmp:
        vib = Vibrations(atoms, name=str(Path(tmp) / "vib"), delta=0.005, nfree=4)
        vib.run()
        data = vib.get_vibrations()
    return atoms, data


def test_gfn2_hessian_route_reproduces_ase_frequencies(gfn2_water):
    atoms, data = gfn2_water
    symbols = atoms.get_chemical_symbols()
    h = data.get_hessian_2d() * HESSIAN_UNITS_J_PER_M2["eV/A2"]
    sp = build_species("H2O", symbols, atoms.positions, hessian_J_per_m2=h)
    # ASE does not project: its six rigid-body "modes" are small but not zero in a numerical
    # Hessian (here up to ~20i cm^-1) and mix slightly into the vibrations (observed: ASE's
    # values 0.14-0.33 cm^-1 higher). Dropping them and comparing within 0.5 cm^-1 (0.03 % of
    # the bend) leaves room for that mixing only.
    freqs = data.get_frequencies()
    ase_f = np.sort(freqs[np.argsort(np.abs(freqs))][6:].real)
    assert sp.frequencies_cm1 == pytest.approx(ase_f, abs=0.5)
    listed = build_species("H2O", symbols, atoms.positions, frequencies_cm1=ase_f)
    T = np.array([200.0, 298.15, 1500.0])
    a, b = thermochemistry(sp, T), thermochemistry(listed, T)
    # frequencies differ by <= 1.4e-4 relative (above), so do the vibrational parts at most
    assert a.entropy_J_per_mol_K == pytest.approx(b.entropy_J_per_mol_K, rel=1.5e-4)
    assert a.heat_capacity_J_per_mol_K == pytest.approx(b.heat_capacity_J_per_mol_K, rel=1.5e-4)
    assert a.zpe_J_per_mol == pytest.approx(b.zpe_J_per_mol, rel=1.5e-4)


def test_gfn2_d2o_ratios_against_experiment(gfn2_water):
    atoms, data = gfn2_water
    symbols = atoms.get_chemical_symbols()
    h = data.get_hessian_2d() * HESSIAN_UNITS_J_PER_M2["eV/A2"]
    h2o = build_species("H2O", symbols, atoms.positions, hessian_J_per_m2=h)
    hydrogens = {i: 2 for i, s in enumerate(symbols) if s == "H"}
    d2o = build_species("D2O", symbols, atoms.positions, hessian_J_per_m2=h, isotopes=hydrogens)
    _check_d2o_ratios(h2o.frequencies_cm1, d2o.frequencies_cm1)
