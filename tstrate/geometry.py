"""Geometry of a set of nuclei: centre of mass, inertia tensor, principal moments, linearity, distances.

Positions in Angstrom, masses in unified atomic mass units (u); moments of inertia in kg m^2.
"""

from __future__ import annotations

import numpy as np

from tstrate.units import AMU

#: default geometric tolerance for linearity and symmetry detection [Angstrom]
DEFAULT_TOLERANCE_A = 0.02


def centre_of_mass_frame(positions_A, masses_amu) -> np.ndarray:
    """Positions relative to the centre of mass [Angstrom]."""
    x = np.asarray(positions_A, dtype=float)
    m = np.asarray(masses_amu, dtype=float)
    return x - (m[:, None] * x).sum(axis=0) / m.sum()


def inertia_tensor(positions_A, masses_amu) -> np.ndarray:
    """Inertia tensor about the centre of mass [kg m^2]."""
    x = centre_of_mass_frame(positions_A, masses_amu) * 1e-10
    m = np.asarray(masses_amu, dtype=float) * AMU
    r2 = (x**2).sum(axis=1)
    return np.eye(3) * (m * r2).sum() - np.einsum("i,ij,ik->jk", m, x, x)


def principal_moments(positions_A, masses_amu) -> np.ndarray:
    """Principal moments of inertia [kg m^2], ascending."""
    if len(masses_amu) == 1:
        return np.zeros(3)
    return np.clip(np.linalg.eigvalsh(inertia_tensor(positions_A, masses_amu)), 0.0, None)


def is_linear(positions_A, masses_amu, tolerance_A: float = DEFAULT_TOLERANCE_A) -> bool:
    """True when all atoms lie on one line (within ``tolerance_A``); False for an atom."""
    x = centre_of_mass_frame(positions_A, masses_amu)
    if len(x) < 2:
        return False
    # largest singular value spans the line; the others measure the spread off it
    s = np.linalg.svd(x, compute_uv=False)
    return bool(s[1] < tolerance_A)


def closest_pair(positions_A) -> tuple[int, int, float]:
    """(i, j, distance [Angstrom]) of the two nuclei closest to each other (0-based; needs 2 atoms)."""
    x = np.asarray(positions_A, dtype=float)
    if len(x) <= 64:
        d = np.linalg.norm(x[:, None] - x[None, :], axis=2)
        d[np.diag_indices_from(d)] = np.inf
        i, j = np.unravel_index(np.argmin(d), d.shape)
        return int(i), int(j), float(d[i, j])
    # a k-d tree keeps memory linear in the atom count (no N x N array)
    from scipy.spatial import cKDTree

    dist, idx = cKDTree(x).query(x, k=2)
    i = int(np.argmin(dist[:, 1]))
    return min(i, int(idx[i, 1])), max(i, int(idx[i, 1])), float(dist[i, 1])


def expected_mode_count(natoms: int, linear: bool) -> int:
    """3N-6 for a nonlinear molecule, 3N-5 for a linear one, 0 for an atom."""
    if natoms == 1:
        return 0
    return 3 * natoms - (5 if linear else 6)


def kabsch_rmsd(positions_a_A, positions_b_A) -> float:
    """RMSD [Angstrom] of two geometries of the same atoms in the same order after the best proper
    superposition (Kabsch 1976: centroids matched, rotation from the SVD of the covariance)."""
    a = np.asarray(positions_a_A, dtype=float)
    b = np.asarray(positions_b_A, dtype=float)
    a = a - a.mean(axis=0)
    b = b - b.mean(axis=0)
    u, _, vt = np.linalg.svd(a.T @ b)
    d = np.sign(np.linalg.det(vt.T @ u.T)) or 1.0
    rot = vt.T @ np.diag([1.0, 1.0, d]) @ u.T
    return float(np.sqrt(np.mean(np.sum((a @ rot.T - b) ** 2, axis=1))))


# ---- bonding graph ------------------------------------------------------------------
# Two atoms are bonded when their distance is below ``scale`` times the sum of their covalent radii
# (B. Cordero et al., Dalton Trans. 2008, 2832, as tabulated by ASE's ``natural_cutoffs``). The
# default scale 1.2 is common practice: it keeps every covalent bond of a minimum (O-H 0.97 A
# against a sum of radii of 0.97 A) and leaves out hydrogen bonds (1.7-2.0 A).

#: covalent-radius multiplier for a bond
BOND_SCALE = 1.2

#: an H-H pair closer than this is bonded [Angstrom] (H2 0.74 A; the H...H contacts of
#: minima are longer than 1.5 A)
H_H_BOND_A = 0.9


def bonds(symbols, positions_A, scale: float = BOND_SCALE) -> frozenset:
    """Set of bonded atom pairs (i, j), i < j, 0-based."""
    from ase import Atoms
    from ase.neighborlist import natural_cutoffs

    atoms = Atoms(list(symbols), positions=np.asarray(positions_A, dtype=float))
    radii = np.array(natural_cutoffs(atoms, mult=scale))
    x = atoms.positions
    d = np.linalg.norm(x[:, None] - x[None, :], axis=2)
    cut = radii[:, None] + radii[None, :]
    # H2 (0.74 A; 0.76-0.77 A with GFN2-xTB) lies just beyond 1.2 x twice hydrogen's radius
    # (0.744 A); an H-H pair is bonded below H_H_BOND_A
    is_h = np.array([s == "H" for s in atoms.get_chemical_symbols()])
    cut = np.where(is_h[:, None] & is_h[None, :], np.maximum(cut, H_H_BOND_A), cut)
    i, j = np.nonzero(np.triu(d < cut, k=1))
    return frozenset(zip(i.tolist(), j.tolist()))


def fragments(natoms: int, bond_set) -> list[list[int]]:
    """Connected components (molecules) of a bonding graph, each a sorted atom list."""
    parent = list(range(natoms))

    def find(a):
        while parent[a] != a:
            parent[a] = parent[parent[a]]
            a = parent[a]
        return a

    for i, j in bond_set:
        parent[find(i)] = find(j)
    groups: dict[int, list[int]] = {}
    for a in range(natoms):
        groups.setdefault(find(a), []).append(a)
    return sorted(groups.values())
