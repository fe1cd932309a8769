"""Rotational symmetry from a geometry: moments of inertia, linearity,
rotational symmetry number and number of optical isomers.

The symmetry number is the order of the group of proper rotations that map
the nuclear framework onto itself (atoms of the same element and mass
exchanged). It is found by brute force: two reference atoms fix a frame; every
candidate image of that frame (same elements, same distances from the centre of
mass, same angle) gives one rotation, which is kept if it maps every atom onto
an equivalent atom within ``tolerance_A``. This works for any point group,
including the low symmetry of transition states, and needs no point-group
tables.
"""

from __future__ import annotations

import numpy as np

from tstrate.geometry import DEFAULT_TOLERANCE_A, centre_of_mass_frame, is_linear

def _frame(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Right-handed orthonormal frame (columns) built from two non-collinear vectors."""
    u = a / np.linalg.norm(a)
    w = np.cross(a, b)
    w /= np.linalg.norm(w)
    v = np.cross(w, u)
    return np.column_stack([u, v, w])


def _maps_onto(rotated: np.ndarray, target: np.ndarray, labels, tol: float) -> bool:
    """Does every rotated atom land on a distinct target atom with the same label?"""
    d = np.linalg.norm(rotated[:, None, :] - target[None, :, :], axis=2)
    same = labels[:, None] == labels[None, :]
    d = np.where(same, d, np.inf)
    j = d.argmin(axis=1)
    return bool(np.all(d[np.arange(len(j)), j] < tol) and len(set(j.tolist())) == len(j))


def _count_rotations(x: np.ndarray, target: np.ndarray, labels, tol: float) -> int:
    """Number of distinct proper rotations taking ``x`` onto ``target`` (same labels)."""
    r = np.linalg.norm(x, axis=1)
    rt = np.linalg.norm(target, axis=1)
    order = np.argsort(-r)  # far atoms first: better conditioned frames
    a = next((i for i in order if r[i] > tol), None)
    if a is None:  # all atoms at the centre: a single atom
        return 1
    b = next((i for i in order if i != a and r[i] > tol
              and np.linalg.norm(np.cross(x[a], x[i])) > tol * r[a]), None)
    if b is None:
        raise ValueError("linear geometry: use the linear rule")
    f0 = _frame(x[a], x[b])
    cos_ab = x[a] @ x[b]
    found: list[np.ndarray] = []
    for ai in np.flatnonzero((labels == labels[a]) & (np.abs(rt - r[a]) < tol)):
        for bi in np.flatnonzero((labels == labels[b]) & (np.abs(rt - r[b]) < tol)):
            if bi == ai or abs(target[ai] @ target[bi] - cos_ab) > 2 * tol * (r[a] + r[b]):
                continue
            if np.linalg.norm(np.cross(target[ai], target[bi])) <= tol * r[a]:
                continue
            rot = _frame(target[ai], target[bi]) @ f0.T
            if not _maps_onto(x @ rot.T, target, labels, tol):
                continue
            if not any(np.allclose(rot, q, atol=1e-3) for q in found):
                found.append(rot)
    return len(found)


def _labels(symbols, masses_amu) -> np.ndarray:
    # isotopes differ: label by element and mass
    return np.array([f"{s}:{m:.4f}" for s, m in zip(symbols, masses_amu)])


def symmetry_number(symbols, positions_A, masses_amu,
                    tolerance_A: float = DEFAULT_TOLERANCE_A) -> int:
    """External rotational symmetry number sigma of a geometry.

    Linear molecules get 2 (centrosymmetric, D_inf_h) or 1 (C_inf_v); an atom gets 1.
    """
    x = centre_of_mass_frame(positions_A, masses_amu)
    labels = _labels(symbols, masses_amu)
    if len(x) == 1:
        return 1
    if is_linear(positions_A, masses_amu, tolerance_A):
        return 2 if _maps_onto(-x, x, labels, tolerance_A) else 1
    return max(1, _count_rotations(x, x, labels, tolerance_A))


def optical_isomers(symbols, positions_A, masses_amu,
                    tolerance_A: float = DEFAULT_TOLERANCE_A) -> int:
    """2 when the geometry is chiral (its mirror image is not superimposable), else 1."""
    x = centre_of_mass_frame(positions_A, masses_amu)
    if len(x) < 4 or is_linear(positions_A, masses_amu, tolerance_A):
        return 1
    labels = _labels(symbols, masses_amu)
    mirror = x * np.array([-1.0, 1.0, 1.0])
    # planar molecules are never chiral; the general test covers them too
    return 1 if _count_rotations(mirror, x, labels, tolerance_A) > 0 else 2
