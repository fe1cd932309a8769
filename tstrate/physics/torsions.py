"""Torsions from the connectivity: rotatable bonds, their tops, the tops' symmetry numbers,
Pitzer's reduced moment, and which normal mode a torsion is.

A torsion turns a *top* (the atoms on one side of a bond, found from the bonding graph of
:func:`tstrate.geometry.bonds`) about the bond axis against the rest of the molecule (the
frame). A bond is rotatable when it lies in no ring and each end has at least one other
neighbour, so that the turn moves atoms off the axis on both sides (common practice; whether a
rotor is worth treating is left to its potential: a double bond gives a barrier so high that its
levels are harmonic).

Reduced moment: K. S. Pitzer's definition (J. Chem. Phys. 14, 239 (1946); Pitzer and Gwinn,
J. Chem. Phys. 10, 428 (1942)): the moment that makes the kinetic energy of the internal rotation
(1/2) I_red phi_dot^2 when the molecule as a whole keeps zero linear and zero angular momentum.
It is evaluated here as the squared mass-weighted norm of the torsion's Cartesian displacement
(the top turned about the bond axis by one radian, to first order) after the overall translations
and rotations are projected out: zero linear and angular momentum are exactly orthogonality, in
the mass-weighted metric, to the rigid-body vectors. For a symmetric top on a symmetric frame with
the axis through the centre of mass this gives Pitzer's closed form A_top A_frame / (A_top + A_frame).

Which normal mode a torsion is: the squared overlaps of the unit projected torsion vector with
the mass-weighted normal modes of the Hessian (they sum to one over the vibrations); the rotor
replaces the mode of largest overlap.

Positions in Angstrom, masses in u, moments in u Angstrom^2, angles in radians.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from tstrate.geometry import bonds as covalent_bonds

#: geometric tolerance for the symmetry number of a top [Angstrom] (our choice: it accepts the tilt of a few
#: degrees of a methyl group in an optimised structure, such as methanol's, and no distinct atoms)
TOP_SYMMETRY_TOLERANCE_A = 0.15
#: the folds tried for a top's symmetry number, highest first
TOP_FOLDS = (6, 4, 3, 2)
#: a top whose own moment about the bond axis is below this is no rotor [u Angstrom^2]
MIN_TOP_MOMENT_AMU_A2 = 1e-3


@dataclass(frozen=True)
class Torsion:
    """A rotatable bond and its top (0-based atom indices).

    frame_atom, top_atom: the bond; the top holds ``top_atom`` and everything bonded beyond it.
    top: sorted atom indices of the top.
    symmetry_number: the rotation's symmetry number (:func:`rotor_symmetry_number`; 3 for a methyl group).
    """

    frame_atom: int
    top_atom: int
    top: tuple[int, ...]
    symmetry_number: int


def neighbours(natoms: int, bond_set) -> list[set[int]]:
    nb = [set() for _ in range(natoms)]
    for i, j in bond_set:
        nb[i].add(j)
        nb[j].add(i)
    return nb


def top_atoms(natoms: int, bond_set, frame_atom: int, top_atom: int) -> tuple[int, ...]:
    """Atoms reached from ``top_atom`` without crossing the bond (frame_atom, top_atom), sorted.

    ValueError when the two atoms are not bonded or the bond lies in a ring (the frame is reached).
    """
    pair = (min(frame_atom, top_atom), max(frame_atom, top_atom))
    if frame_atom == top_atom or pair not in set(bond_set):
        raise ValueError(f"atoms {frame_atom + 1} and {top_atom + 1} are not bonded")
    nb = neighbours(natoms, bond_set)
    seen = {top_atom}
    stack = [top_atom]
    while stack:
        a = stack.pop()
        for b in nb[a]:
            if a == top_atom and b == frame_atom:
                continue
            if b == frame_atom:
                raise ValueError(f"the bond {frame_atom + 1}-{top_atom + 1} lies in a ring; it is no "
                                 "rotatable bond")
            if b not in seen:
                seen.add(b)
                stack.append(b)
    return tuple(sorted(seen))


def _axis(positions_A, frame_atom, top_atom):
    x = np.asarray(positions_A, dtype=float)
    u = x[top_atom] - x[frame_atom]
    return x[top_atom], u / np.linalg.norm(u)


def rotate_top(positions_A, frame_atom: int, top_atom: int, top, angle_rad: float) -> np.ndarray:
    """The geometry with the top turned by ``angle_rad`` about the bond axis (right hand about
    frame_atom -> top_atom) [Angstrom]."""
    x = np.array(positions_A, dtype=float)
    origin, u = _axis(x, frame_atom, top_atom)
    idx = list(top)
    r = x[idx] - origin
    c, s = np.cos(angle_rad), np.sin(angle_rad)
    # Rodrigues' rotation formula
    x[idx] = origin + r * c + np.cross(u, r) * s + np.outer(r @ u, u) * (1 - c)
    return x


def top_moment_amu_A2(positions_A, masses_amu, frame_atom: int, top_atom: int, top) -> float:
    """The top's own moment about the bond axis [u Angstrom^2] (no reduction)."""
    x = np.asarray(positions_A, dtype=float)
    m = np.asarray(masses_amu, dtype=float)
    origin, u = _axis(x, frame_atom, top_atom)
    r = x[list(top)] - origin
    perp = r - np.outer(r @ u, u)
    return float(np.sum(m[list(top)] * np.sum(perp**2, axis=1)))


def top_symmetry_number(symbols, positions_A, masses_amu, frame_atom: int, top_atom: int, top,
                        tolerance_A: float = TOP_SYMMETRY_TOLERANCE_A) -> int:
    """The largest n of :data:`TOP_FOLDS` for which turning the top by 360/n degrees about the
    bond axis puts every top atom onto an atom of the same element and mass (within
    ``tolerance_A``); 1 if none."""
    x = np.asarray(positions_A, dtype=float)
    m = np.asarray(masses_amu, dtype=float)
    idx = list(top)
    labels = [(symbols[i], round(float(m[i]), 3)) for i in idx]
    for n in TOP_FOLDS:
        y = rotate_top(x, frame_atom, top_atom, top, 2 * np.pi / n)[idx]
        ok = True
        for a, lab in enumerate(labels):
            d = np.linalg.norm(x[idx] - y[a], axis=1)
            if not any(d[b] < tolerance_A and labels[b] == lab for b in range(len(idx))):
                ok = False
                break
        if ok:
            return n
    return 1


def rotor_symmetry_number(symbols, positions_A, masses_amu, frame_atom: int, top_atom: int, top,
                          tolerance_A: float = TOP_SYMMETRY_TOLERANCE_A) -> int:
    """Symmetry number of the internal rotation: the least common multiple of the folds of the top
    and of the frame about the bond axis (:func:`top_symmetry_number` of each side): 3 for ethane
    and for methanol (its methyl frame), 6 for nitromethane (a twofold top on a threefold frame)."""
    import math

    n = len(symbols)
    frame = tuple(a for a in range(n) if a not in set(top))
    a = top_symmetry_number(symbols, positions_A, masses_amu, frame_atom, top_atom, top, tolerance_A)
    b = top_symmetry_number(symbols, positions_A, masses_amu, top_atom, frame_atom, frame, tolerance_A)
    return a * b // math.gcd(a, b)


def torsion_vector(positions_A, masses_amu, frame_atom: int, top_atom: int, top, *,
                   linear: bool = False) -> np.ndarray:
    """The mass-weighted Cartesian displacement of the torsion per radian, with overall
    translation and rotation projected out, shape (3N,) [u^(1/2) Angstrom]."""
    from tstrate.physics.vibrations import rigid_body_basis

    x = np.asarray(positions_A, dtype=float)
    m = np.asarray(masses_amu, dtype=float)
    origin, u = _axis(x, frame_atom, top_atom)
    d = np.zeros_like(x)
    idx = list(top)
    d[idx] = np.cross(u, x[idx] - origin)
    q = (d * np.sqrt(m)[:, None]).ravel()
    rb = rigid_body_basis(x, m, linear)
    return q - rb @ (rb.T @ q)


def reduced_moment_amu_A2(positions_A, masses_amu, frame_atom: int, top_atom: int, top) -> float:
    """Pitzer's reduced moment of the top [u Angstrom^2] (see the module docstring)."""
    q = torsion_vector(positions_A, masses_amu, frame_atom, top_atom, top)
    return float(q @ q)


def mode_overlaps(positions_A, masses_amu, frame_atom: int, top_atom: int, top, modes) -> np.ndarray:
    """Squared overlaps of the unit projected torsion vector with each mass-weighted normal mode
    (``modes``: (M, N, 3) orthonormal, as :class:`tstrate.physics.vibrations.NormalModes` holds
    them), shape (M,); they sum to one over a complete set of vibrations."""
    q = torsion_vector(positions_A, masses_amu, frame_atom, top_atom, top)
    q = q / np.linalg.norm(q)
    vecs = np.asarray(modes, dtype=float).reshape(len(modes), -1)
    return (vecs @ q) ** 2


def find_torsions(symbols, positions_A, masses_amu, bond_set=None) -> tuple[Torsion, ...]:
    """Every rotatable bond of a geometry with its top (the side with fewer atoms; on a tie the
    lighter side), sorted by the bond's atoms. ``bond_set``: pairs (i, j), i < j, 0-based; by
    default from covalent radii (:func:`tstrate.geometry.bonds`)."""
    symbols = [str(s) for s in symbols]
    x = np.asarray(positions_A, dtype=float)
    m = np.asarray(masses_amu, dtype=float)
    n = len(symbols)
    bset = frozenset(covalent_bonds(symbols, x) if bond_set is None else bond_set)
    nb = neighbours(n, bset)
    out = []
    for i, j in sorted(bset):
        if len(nb[i]) < 2 or len(nb[j]) < 2:
            continue
        try:
            side_j = top_atoms(n, bset, i, j)
        except ValueError:  # in a ring
            continue
        side_i = tuple(a for a in range(n) if a not in side_j)
        if (len(side_j), m[list(side_j)].sum()) <= (len(side_i), m[list(side_i)].sum()):
            frame, tip, top = i, j, side_j
        else:
            frame, tip, top = j, i, side_i
        if top_moment_amu_A2(x, m, frame, tip, top) < MIN_TOP_MOMENT_AMU_A2:
            continue
        other = tuple(a for a in range(n) if a not in top)
        if top_moment_amu_A2(x, m, tip, frame, other) < MIN_TOP_MOMENT_AMU_A2:
            continue
        out.append(Torsion(frame, tip, top, rotor_symmetry_number(symbols, x, m, frame, tip, top)))
    return tuple(out)
