"""Rotational symmetry numbers, linearity, optical isomers and moments of inertia.

Check values: the symmetry number is the order of the rotational subgroup of the
point group (e.g. C2v -> 2, C3v -> 3, Td -> 12, D6h -> 12, D3d -> 6, D2h -> 4,
C2 -> 2, Dinf_h -> 2, Cinf_v -> 1), as tabulated in C. J. Cramer, Essentials of
Computational Chemistry, 2nd ed. (2004), Table 10.1 (point groups of these
molecules: from memory, standard textbook assignments). Geometries come from
ASE's G2 set (``ase.build.molecule``), an outside source.
"""

from __future__ import annotations

import numpy as np
import pytest
from ase.build import molecule

from tstrate import geometry
from tstrate.physics import symmetry as sym
from tstrate.physics.vibrations import default_masses_amu, isotope_mass_amu
from tstrate.units import AMU


def _g2(name):
    atoms = molecule(name)
    symbols = atoms.get_chemical_symbols()
    return symbols, atoms.positions.copy(), default_masses_amu(symbols)


def _rotation(seed):
    """A random proper rotation matrix."""
    q, r = np.linalg.qr(np.random.default_rng(seed).normal(size=(3, 3)))
    q = q @ np.diag(np.sign(np.diag(r)))
    return q if np.linalg.det(q) > 0 else -q


# (ASE G2 name, point group, symmetry number)
G2_CASES = [
    ("H2O", "C2v", 2), ("NH3", "C3v", 3), ("CH4", "Td", 12), ("C6H6", "D6h", 12),
    ("CO2", "Dinf_h", 2), ("HCN", "Cinf_v", 1), ("C2H6", "D3d", 6), ("C2H4", "D2h", 4),
    ("H2CO", "C2v", 2), ("H2O2", "C2", 2), ("CH3Cl", "C3v", 3), ("PH3", "C3v", 3),
    ("N2", "Dinf_h", 2), ("CO", "Cinf_v", 1), ("C2H2", "Dinf_h", 2), ("CCl4", "Td", 12),
    ("BF3", "D3h", 6), ("C3H4_D2d", "D2d", 4), ("CH3OH", "Cs", 1),
]


@pytest.mark.parametrize("name,group,sigma", G2_CASES, ids=[f"{n}-{g}" for n, g, _ in G2_CASES])
def test_symmetry_number_of_g2_molecules(name, group, sigma):
    symbols, x, m = _g2(name)
    assert sym.symmetry_number(symbols, x, m) == sigma


@pytest.mark.parametrize("name", ["C6H6", "CH4", "H2O2", "C2H6", "CO2"])
def test_symmetry_number_is_invariant_under_rotation_and_translation(name):
    symbols, x, m = _g2(name)
    moved = x @ _rotation(7).T + np.array([3.0, -1.5, 12.0])
    assert sym.symmetry_number(symbols, moved, m) == sym.symmetry_number(symbols, x, m)
    assert geometry.is_linear(moved, m) == geometry.is_linear(x, m)


@pytest.mark.parametrize("name,linear", [("CO2", True), ("HCN", True), ("C2H2", True), ("N2", True),
                                         ("H2O", False), ("CH4", False), ("C2H4", False)])
def test_linearity(name, linear):
    _, x, m = _g2(name)
    assert geometry.is_linear(x, m) is linear


def test_an_atom_is_not_linear_and_has_sigma_one():
    assert not geometry.is_linear([[0.0, 0.0, 0.0]], [39.96])
    assert sym.symmetry_number(["Ar"], [[1.0, 2.0, 3.0]], [39.96]) == 1
    assert sym.optical_isomers(["Ar"], [[1.0, 2.0, 3.0]], [39.96]) == 1


def test_bent_co2_within_and_beyond_the_linearity_tolerance():
    symbols, x, m = _g2("CO2")
    bent = x.copy()
    bent[1, 0] += 0.005  # carbon 0.005 Angstrom off the axis: linear within 0.02 Angstrom
    assert geometry.is_linear(bent, m)
    assert sym.symmetry_number(symbols, bent, m) == 2
    bent[1, 0] += 0.1  # clearly bent: C2v, nonlinear
    assert not geometry.is_linear(bent, m)
    assert sym.symmetry_number(symbols, bent, m) == 2


# ---- distorted geometries and the tolerance ---------------------------------------------

def _methane_with_one_h_moved(shift_A, along_bond=False):
    symbols, x, m = _g2("CH4")
    h = next(i for i, s in enumerate(symbols) if s == "H")
    bond = (x[h] - x[0]) / np.linalg.norm(x[h] - x[0])
    perp = np.cross(bond, [0.0, 0.0, 1.0] if abs(bond[2]) < 0.9 else [1.0, 0.0, 0.0])
    perp /= np.linalg.norm(perp)
    x = x.copy()
    x[h] += shift_A * (bond if along_bond else perp)
    return symbols, x, m


def test_slightly_distorted_methane_keeps_td_within_tolerance():
    symbols, x, m = _methane_with_one_h_moved(0.005)
    assert sym.symmetry_number(symbols, x, m) == 12  # default tolerance 0.02 Angstrom


def test_distortion_beyond_tolerance_lowers_the_symmetry_number():
    symbols, x, m = _methane_with_one_h_moved(0.08)
    assert sym.symmetry_number(symbols, x, m) == 1  # sideways shift: no proper rotation left
    # the same geometry with a looser tolerance is Td again
    assert sym.symmetry_number(symbols, x, m, tolerance_A=0.15) == 12


def test_one_stretched_bond_gives_c3v():
    symbols, x, m = _methane_with_one_h_moved(0.08, along_bond=True)
    assert sym.symmetry_number(symbols, x, m) == 3


def test_small_random_noise_on_every_atom_is_tolerated():
    symbols, x, m = _g2("C6H6")
    noisy = x + np.random.default_rng(3).uniform(-0.004, 0.004, size=x.shape)
    assert sym.symmetry_number(symbols, noisy, m) == 12
    very_noisy = x + np.random.default_rng(3).uniform(-0.1, 0.1, size=x.shape)
    assert sym.symmetry_number(symbols, very_noisy, m) == 1


# ---- isotopologues: atoms of one element but different mass are not equivalent -----------

def test_isotopologues():
    symbols, x, m = _g2("H2O")
    d = isotope_mass_amu("H", 2)
    hdo = m.copy()
    hdo[1] = d
    d2o = m.copy()
    d2o[1:] = d
    assert sym.symmetry_number(symbols, x, hdo) == 1
    assert sym.symmetry_number(symbols, x, d2o) == 2
    symbols, x, m = _g2("CH4")
    ch3d = m.copy()
    ch3d[1] = d
    assert sym.symmetry_number(symbols, x, ch3d) == 3  # C3v


# ---- planar, transition-state-like geometries (the carbonic-acid scenario) --------------
# Hand-built planar H2CO3 geometries [Angstrom] (not optimised; only their symmetry matters).

H2CO3_CIS_CIS = (["C", "O", "O", "O", "H", "H"], np.array([
    [0.00, 0.00, 0.0], [0.00, 1.20, 0.0], [1.15, -0.68, 0.0], [-1.15, -0.68, 0.0],
    [1.95, -0.12, 0.0], [-1.95, -0.12, 0.0]]))  # C2v
H2CO3_CIS_TRANS = (["C", "O", "O", "O", "H", "H"], np.array([
    [0.00, 0.00, 0.0], [0.00, 1.20, 0.0], [1.15, -0.68, 0.0], [-1.15, -0.68, 0.0],
    [1.95, -0.12, 0.0], [-1.10, -1.65, 0.0]]))  # Cs
# decomposition saddle point H2CO3 -> CO2 + H2O: four-membered C-O-H-O ring, one OH spectator
H2CO3_TS_LIKE = (["C", "O", "O", "O", "H", "H"], np.array([
    [0.00, 0.00, 0.0], [0.05, 1.18, 0.0], [1.05, -0.80, 0.0], [-1.30, -0.55, 0.0],
    [-0.10, -1.40, 0.0], [-1.95, 0.15, 0.0]]))  # Cs


@pytest.mark.parametrize("structure,sigma", [(H2CO3_CIS_CIS, 2), (H2CO3_CIS_TRANS, 1),
                                            (H2CO3_TS_LIKE, 1)],
                         ids=["H2CO3-cis-cis-C2v", "H2CO3-cis-trans-Cs", "H2CO3-TS-like-Cs"])
def test_planar_carbonic_acid_geometries(structure, sigma):
    symbols, x = structure
    m = default_masses_amu(symbols)
    assert not geometry.is_linear(x, m)
    assert sym.symmetry_number(symbols, x, m) == sigma
    assert sym.optical_isomers(symbols, x, m) == 1  # planar: never chiral


def test_generic_planar_geometry_has_sigma_one():
    rng = np.random.default_rng(11)
    x = np.zeros((5, 3))
    x[:, :2] = rng.uniform(-2.0, 2.0, size=(5, 2))
    symbols = ["C", "O", "O", "H", "H"]
    m = default_masses_amu(symbols)
    assert sym.symmetry_number(symbols, x, m) == 1
    assert sym.optical_isomers(symbols, x, m) == 1


# ---- optical isomers ----------------------------------------------------------------------

@pytest.mark.parametrize("name,n", [("H2O2", 2), ("CH4", 1), ("H2O", 1), ("C6H6", 1),
                                    ("C2H6", 1), ("CH3OH", 1), ("NH3", 1)])
def test_optical_isomers(name, n):
    symbols, x, m = _g2(name)
    assert sym.optical_isomers(symbols, x, m) == n


def test_carbon_with_four_different_substituents_is_chiral():
    symbols, x, _ = _g2("CH4")  # C at the centre, four H on a tetrahedron
    symbols = ["C", "H", "F", "Cl", "Br"]
    m = default_masses_amu(symbols)
    assert sym.optical_isomers(symbols, x, m) == 2
    assert sym.optical_isomers(symbols, x * np.array([-1.0, 1.0, 1.0]), m) == 2  # its mirror image
    assert sym.symmetry_number(symbols, x, m) == 1


# ---- moments of inertia against ASE's independent implementation ---------------------------

@pytest.mark.parametrize("name", ["H2O", "CH4", "C6H6", "CO2", "H2O2", "CH3Cl"])
def test_principal_moments_match_ase(name):
    atoms = molecule(name)
    ours = geometry.principal_moments(atoms.positions, atoms.get_masses())
    ase_kg_m2 = np.sort(atoms.get_moments_of_inertia()) * AMU * 1e-20  # ASE: amu Angstrom^2
    # ASE's amu is CODATA 2014, ours CODATA 2022: 1e-8 relative
    assert ours == pytest.approx(ase_kg_m2, rel=1e-7, abs=1e-52)


def test_centre_of_mass_frame_has_zero_first_moment():
    symbols, x, m = _g2("CH3Cl")
    xc = geometry.centre_of_mass_frame(x + 5.0, m)
    assert np.allclose((m[:, None] * xc).sum(axis=0), 0.0, atol=1e-12)


# ---- near-symmetric geometries: every atom moved a little --------------------------------
# Check values: the order of the rotational subgroup of each molecule's point group, and that
# subgroup's name (Td -> T 12, Oh -> O 24, Ih -> I 60, D6h -> D6 12, D3d -> D3 6, D3h -> D3 6,
# D2d -> D2 4, D2h -> D2 4, C3v -> C3 3, C2v -> C2 2, C2 -> C2 2, Dinf_h -> D∞ 2), from the
# group-theory tables in F. A. Cotton, Chemical Applications of Group Theory, 3rd ed. (1990),
# and P. W. Atkins and J. de Paula, Physical Chemistry (character tables); the point groups of
# the molecules are standard textbook assignments (from memory). Geometries: ASE's G2 set and
# its C60 (ase.build.molecule); cubane and SF6 are built here from ideal Oh frames with bond
# lengths from memory (C-C 1.56, C-H 1.09, S-F 1.56 Angstrom; only their symmetry matters).

def _cubane():
    corners = np.array([(i, j, k) for i in (1, -1) for j in (1, -1) for k in (1, -1)], dtype=float)
    a = 0.78  # half the C-C edge
    b = a + 1.09 / np.sqrt(3.0)  # C-H along the body diagonal
    symbols = ["C"] * 8 + ["H"] * 8
    return symbols, np.vstack([a * corners, b * corners]), default_masses_amu(symbols)


def _sf6():
    symbols = ["S"] + ["F"] * 6
    x = np.vstack([np.zeros(3), 1.56 * np.eye(3), -1.56 * np.eye(3)])
    return symbols, x, default_masses_amu(symbols)


def _structure(name):
    return {"cubane": _cubane, "SF6": _sf6}.get(name, lambda: _g2(name))()


# (structure, point group, rotation group, symmetry number)
HIGH_SYMMETRY = [
    ("CH4", "Td", "T", 12), ("C6H6", "D6h", "D6", 12), ("cubane", "Oh", "O", 24),
    ("C2H6", "D3d", "D3", 6), ("CH3Cl", "C3v", "C3", 3), ("C60", "Ih", "I", 60),
    ("NH3", "C3v", "C3", 3), ("H2O", "C2v", "C2", 2), ("CO2", "Dinf_h", "D∞", 2),
    ("C3H4_D2d", "D2d", "D2", 4), ("SF6", "Oh", "O", 24), ("C2H4", "D2h", "D2", 4),
    ("BF3", "D3h", "D3", 6), ("CCl4", "Td", "T", 12), ("H2O2", "C2", "C2", 2),
]


def _perturbed(x, rng, step_A):
    """Every atom moved by exactly ``step_A`` in a random direction."""
    d = rng.normal(size=x.shape)
    return x + step_A * d / np.linalg.norm(d, axis=1)[:, None]


@pytest.mark.parametrize("name,point_group,group,sigma", HIGH_SYMMETRY,
                         ids=[f"{n}-{p}" for n, p, _, _ in HIGH_SYMMETRY])
def test_symmetry_number_of_perturbed_geometries(name, point_group, group, sigma):
    # 0.005 Angstrom per atom keeps every true operation within the default 0.02 Angstrom
    # (an atom and its image move apart by at most 0.01 Angstrom, plus 0.01 from the shift of
    # the centre of mass, less after the superposition); the first version, testing
    # two-atom rotations alone, got orders no rotation group has (CH4 5-11, C60 26-59)
    symbols, x, m = _structure(name)
    rng = np.random.default_rng(20240)
    for _ in range(12):
        result = sym.rotational_symmetry(symbols, _perturbed(x, rng, 0.005), m)
        assert (result.symmetry_number, result.group) == (sigma, group)
        assert result.warnings == ()
        assert result.tolerance_A == geometry.DEFAULT_TOLERANCE_A
        assert 0.0 < result.max_deviation_A < result.tolerance_A


@pytest.mark.parametrize("name,point_group,group,sigma", HIGH_SYMMETRY,
                         ids=[f"{n}-{p}" for n, p, _, _ in HIGH_SYMMETRY])
def test_exact_geometries_have_their_rotation_group(name, point_group, group, sigma):
    symbols, x, m = _structure(name)
    moved = x @ _rotation(5).T + np.array([0.3, -2.0, 1.0])
    result = sym.rotational_symmetry(symbols, moved, m)
    assert (result.symmetry_number, result.group) == (sigma, group)
    # ASE's C60 coordinates are Ih only to about 0.01 Angstrom; the others are exact
    assert result.max_deviation_A < (0.01 if name == "C60" else 1e-6)
    assert sym.symmetry_number(symbols, moved, m) == sigma


def test_group_names_of_small_records():
    assert sym.rotational_symmetry(["Ar"], [[0.0, 0.0, 0.0]], [39.96]).group == "atom"
    symbols, x, m = _g2("HCN")
    assert (sym.rotational_symmetry(symbols, x, m).group, sym.symmetry_number(symbols, x, m)) == ("C∞", 1)
    symbols, x, m = _g2("CH3OH")
    assert sym.rotational_symmetry(symbols, x, m).group == "C1"
    # the name follows from the order and the largest element order
    assert [sym.group_name(*k) for k in [(1, 1), (5, 5), (4, 2), (8, 4), (12, 6), (12, 3), (24, 4),
                                         (60, 5)]] == ["C1", "C5", "D2", "D4", "D6", "T", "O", "I"]
    with pytest.raises(ValueError):
        sym.group_name(11, 5)


def test_operations_found_for_part_of_a_group_are_reduced_to_a_subgroup_with_a_warning(caplog):
    # one H of CH4 moved 0.03 Angstrom sideways: the three C2 axes still hold within 0.02
    # Angstrom after the superposition, but some threefold operations do not; their products
    # are not all there, so the kept set must be a subgroup (D2, order 4), never 5 to 11
    symbols, x, m = _methane_with_one_h_moved(0.03)
    with caplog.at_level("WARNING", logger="tstrate.physics.symmetry"):
        result = sym.rotational_symmetry(symbols, x, m)
    assert (result.symmetry_number, result.group) == (4, "D2")
    assert len(result.warnings) == 1 and "only part of the rotation group T (order 12)" in result.warnings[0]
    assert any("only part of the rotation group" in r.message for r in caplog.records)
    # the warning's suggested tolerance indeed restores T
    suggested = float(result.warnings[0].split("a tolerance above ")[1].split(" Angstrom")[0])
    assert sym.symmetry_number(symbols, x, m, tolerance_A=suggested * 1.01) == 12
    assert result.max_deviation_A < 0.02


@pytest.mark.parametrize("shift_A", np.linspace(0.0, 0.08, 17))
def test_every_symmetry_number_is_the_order_of_a_rotation_group(shift_A):
    # a sweep through the tolerance: whatever is kept is closed under composition
    symbols, x, m = _methane_with_one_h_moved(float(shift_A))
    for tol in (0.01, 0.02, 0.04):
        result = sym.rotational_symmetry(symbols, x, m, tolerance_A=tol)
        assert result.symmetry_number in (1, 2, 3, 4, 12)  # the subgroups of T
        assert result.max_deviation_A < tol


def test_perturbed_chiral_and_achiral_geometries_keep_their_optical_isomers():
    rng = np.random.default_rng(7)
    for name, n in [("H2O2", 2), ("CH4", 1), ("C6H6", 1), ("C2H6", 1), ("C60", 1)]:
        symbols, x, m = _g2(name)
        assert sym.optical_isomers(symbols, _perturbed(x, rng, 0.005), m) == n
