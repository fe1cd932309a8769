"""Rotational symmetry from a geometry: rotation group, rotational symmetry number and
number of optical isomers.

The symmetry number is the order of the group of proper rotations that map the nuclear
framework onto itself (atoms of the same element and mass exchanged). The group is found
without point-group tables, so it works for the low symmetry of transition states too:

1. Two reference atoms fix a frame; every candidate image of that frame (same labels, same
   distances from the centre of mass, same angle) gives a first guess of one rotation.
2. The guess assigns every atom to its nearest equivalent atom (a permutation); the rotation is
   then refined over *all* atoms for that permutation by a least-squares superposition
   (Kabsch), the assignment is redone with the refined rotation, until it no longer changes.
   A permutation is kept when, after the fit, every atom lies within ``tolerance_A`` of its image.
   (Testing the two-atom guess alone, as a first version did, lets the error of the two
   reference atoms grow with the distance from them: real, slightly unsymmetric geometries
   then lost some of their operations and came out with orders no rotation group has.)
3. The kept operations must form a group. When they do not (a geometry symmetric within the
   tolerance for only part of its operations), the largest subgroup among them is kept and a
   warning says which larger group a looser tolerance would give.

A nonlinear molecule's operations are identified by their permutations (a permutation of a
nonlinear framework fixes its rotation), so closure is tested exactly, on permutations.
The group's name follows from its order and the largest order of its elements: C_n, D_n, T
(12), O (24), I (60); linear molecules are C∞ (sigma 1) or D∞ (sigma 2).
"""

from __future__ import annotations

import logging
from dataclasses import dataclass
from math import lcm

import numpy as np

from tstrate.geometry import DEFAULT_TOLERANCE_A, centre_of_mass_frame, is_linear

log = logging.getLogger(__name__)

#: refinement rounds (assignment, superposition) per candidate rotation
_REFINE_ROUNDS = 4


@dataclass(frozen=True)
class RotationalSymmetry:
    """The rotation group found for a geometry.

    Fields
    ------
    symmetry_number: sigma, the order of the group (1 for an atom).
    group: its name: "C1", "C2", ..., "D2", "D3", ..., "T", "O", "I"; "C∞" or "D∞" for a
        linear molecule; "atom" (K, the full rotation group, sigma 1) for one atom.
    tolerance_A: the tolerance used [Angstrom]: every atom lies within it of its image.
    max_deviation_A: the largest distance [Angstrom] of an atom from its image over the kept
        operations (after the least-squares superposition); 0 for an atom.
    warnings: sentences on operations found for only part of a group.
    """

    symmetry_number: int
    group: str
    tolerance_A: float
    max_deviation_A: float
    warnings: tuple[str, ...] = ()


def _frame(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Right-handed orthonormal frame (columns) built from two non-collinear vectors."""
    u = a / np.linalg.norm(a)
    w = np.cross(a, b)
    w /= np.linalg.norm(w)
    v = np.cross(w, u)
    return np.column_stack([u, v, w])


def _labels(symbols, masses_amu) -> np.ndarray:
    # isotopes differ: label by element and mass
    return np.array([f"{s}:{m:.4f}" for s, m in zip(symbols, masses_amu)])


def _assign(rotated: np.ndarray, target: np.ndarray, same: np.ndarray):
    """Nearest target atom with the same label for each rotated atom, or None when two atoms
    share one image. Returns (permutation, distances)."""
    d = np.linalg.norm(rotated[:, None, :] - target[None, :, :], axis=2)
    d = np.where(same, d, np.inf)
    j = d.argmin(axis=1)
    if len(np.unique(j)) != len(j):
        return None, None
    return j, d[np.arange(len(j)), j]


def _kabsch(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """The proper rotation R minimising sum |R x_i - y_i|^2 (both sets centred)."""
    u, _, vt = np.linalg.svd(x.T @ y)
    d = np.sign(np.linalg.det(vt.T @ u.T)) or 1.0
    return vt.T @ np.diag([1.0, 1.0, d]) @ u.T


def _deviation(x: np.ndarray, target: np.ndarray, perm: np.ndarray) -> tuple[float, np.ndarray]:
    """(largest atom distance after the best proper superposition of x onto target[perm], R)."""
    rot = _kabsch(x, target[perm])
    return float(np.linalg.norm(x @ rot.T - target[perm], axis=1).max()), rot


def _operations(x: np.ndarray, target: np.ndarray, labels, tol: float) -> dict:
    """Proper rotations taking ``x`` onto ``target`` (same labels), each refined over all atoms.

    Returns {permutation tuple: largest atom deviation [Angstrom]}: ``target[perm[i]]`` is the
    image of atom i.
    """
    r = np.linalg.norm(x, axis=1)
    rt = np.linalg.norm(target, axis=1)
    same = labels[:, None] == labels[None, :]
    order = np.argsort(-r, kind="stable")  # far atoms first: better conditioned frames
    a = next((i for i in order if r[i] > tol), None)
    if a is None:  # all atoms at the centre: a single atom
        return {tuple(range(len(x))): 0.0}
    # second reference: the atom making the best-conditioned frame with the first
    cross = np.linalg.norm(np.cross(x[a], x), axis=1)
    b = int(np.argmax(cross))
    if cross[b] <= tol * r[a]:
        raise ValueError("linear geometry: use the linear rule")
    f0 = _frame(x[a], x[b])
    dot_ab = x[a] @ x[b]
    found: dict = {}
    tried: set = set()
    for ai in np.flatnonzero((labels == labels[a]) & (np.abs(rt - r[a]) < tol)):
        for bi in np.flatnonzero((labels == labels[b]) & (np.abs(rt - r[b]) < tol)):
            if bi == ai or abs(target[ai] @ target[bi] - dot_ab) > 2 * tol * (r[a] + r[b]):
                continue
            if np.linalg.norm(np.cross(target[ai], target[bi])) <= tol * r[a]:
                continue
            rot = _frame(target[ai], target[bi]) @ f0.T
            perm = None
            for _ in range(_REFINE_ROUNDS):
                new, _d = _assign(x @ rot.T, target, same)
                if new is None:
                    break
                if perm is not None and np.array_equal(new, perm):
                    break
                perm = new
                rot = _kabsch(x, target[perm])
            if perm is None:
                continue
            key = tuple(perm.tolist())
            if key in tried:
                continue
            tried.add(key)
            dev = float(np.linalg.norm(x @ rot.T - target[perm], axis=1).max())
            if dev < tol:
                found[key] = dev
    return found


def _compose(p: tuple, q: tuple) -> tuple:
    """The operation 'q, then p' as a permutation: atom i goes to p[q[i]]."""
    return tuple(p[i] for i in q)


def _closure(gens, limit: int) -> set | None:
    """The group generated by permutations ``gens``, or None when it exceeds ``limit`` elements."""
    n = len(next(iter(gens)))
    identity = tuple(range(n))
    group = {identity}
    frontier = [identity]
    gens = list(gens)
    while frontier:
        new = []
        for g in frontier:
            for h in gens:
                k = _compose(h, g)
                if k not in group:
                    group.add(k)
                    new.append(k)
                    if len(group) > limit:
                        return None
        frontier = new
    return group


def _element_order(p: tuple) -> int:
    seen = [False] * len(p)
    out = 1
    for i in range(len(p)):
        if not seen[i]:
            length, j = 0, i
            while not seen[j]:
                seen[j] = True
                j = p[j]
                length += 1
            out = lcm(out, length)
    return out


def group_name(order: int, largest_element_order: int) -> str:
    """Name of a finite rotation group from its order and the largest order of its elements."""
    n = largest_element_order
    if n == order:
        return f"C{order}"
    if order == 2 * n:
        return f"D{n}"
    named = {(12, 3): "T", (24, 4): "O", (60, 5): "I"}
    if (order, n) in named:
        return named[(order, n)]
    raise ValueError(f"no rotation group has order {order} and largest element order {n}")


def _largest_subgroup(ops: set, limit: int) -> set:
    """The largest group generated by one or two of ``ops`` that lies inside ``ops``
    (every finite rotation group is generated by at most two elements)."""
    ops = sorted(ops)
    best = _closure([ops[0]], limit) if ops else set()
    best = best if best and best <= set(ops) else {tuple(range(len(ops[0])))}
    opset = set(ops)
    for i, g in enumerate(ops):
        for h in ops[i:]:
            gen = _closure([g, h], limit)
            if gen is not None and gen <= opset and len(gen) > len(best):
                best = gen
    return best


def rotational_symmetry(symbols, positions_A, masses_amu,
                        tolerance_A: float = DEFAULT_TOLERANCE_A) -> RotationalSymmetry:
    """The rotation group of a geometry within ``tolerance_A`` [Angstrom]: its symmetry number,
    name, the largest deviation of an atom from its image, and warnings (see the module text)."""
    if not tolerance_A > 0:
        raise ValueError(f"tolerance_A must be positive, got {tolerance_A!r}")
    x = centre_of_mass_frame(positions_A, masses_amu)
    labels = _labels(symbols, masses_amu)
    if len(x) == 1:
        return RotationalSymmetry(1, "atom", tolerance_A, 0.0)
    if is_linear(positions_A, masses_amu, tolerance_A):
        same = labels[:, None] == labels[None, :]
        # a C2 perpendicular to the axis acts on a linear framework as the inversion (a
        # superposition is not refitted here: a rotation could undo the flip of the axis)
        perm, d = _assign(-x, x, same)
        if perm is not None and d.max() < tolerance_A:
            return RotationalSymmetry(2, "D∞", tolerance_A, float(d.max()))
        return RotationalSymmetry(1, "C∞", tolerance_A, 0.0)

    n = len(x)
    found = _operations(x, x, labels, tolerance_A)
    identity = tuple(range(n))
    found.setdefault(identity, 0.0)
    limit = max(60, 2 * n)  # no rotation group of N atoms is larger
    ops = set(found)
    warnings: list[str] = []
    full = _closure(ops, limit)
    if full is None or full != ops:
        kept = _largest_subgroup(ops, limit)
        kept_name = group_name(len(kept), max(_element_order(p) for p in kept))
        if full is not None:
            devs = [_deviation(x, x, np.array(p))[0] for p in full - ops]
            try:
                full_name = group_name(len(full), max(_element_order(p) for p in full))
            except ValueError:
                full_name = f"a group of order {len(full)}"
            warnings.append(
                f"the geometry is symmetric within {tolerance_A:g} Angstrom for only part of the rotation "
                f"group {full_name} (order {len(full)}): {len(full - ops)} of its operations "
                f"{'moves' if len(full - ops) == 1 else 'move'} an atom "
                f"by up to {max(devs):.3g} Angstrom; kept {kept_name} (symmetry number {len(kept)}); a "
                f"tolerance above {max(devs):.3g} Angstrom gives {full_name} (symmetry number {len(full)})")
        else:
            warnings.append(
                f"the {len(ops)} rotations found within {tolerance_A:g} Angstrom do not form a rotation "
                f"group; kept {kept_name} (symmetry number {len(kept)})")
        for w in warnings:
            log.warning("%s", w)
        ops = kept
    name = group_name(len(ops), max(_element_order(p) for p in ops))
    return RotationalSymmetry(len(ops), name, tolerance_A, max(found[p] for p in ops), tuple(warnings))


def symmetry_number(symbols, positions_A, masses_amu,
                    tolerance_A: float = DEFAULT_TOLERANCE_A) -> int:
    """External rotational symmetry number sigma of a geometry (see :func:`rotational_symmetry`).

    Linear molecules get 2 (centrosymmetric, D_inf_h) or 1 (C_inf_v); an atom gets 1.
    """
    return rotational_symmetry(symbols, positions_A, masses_amu, tolerance_A).symmetry_number


def optical_isomers(symbols, positions_A, masses_amu,
                    tolerance_A: float = DEFAULT_TOLERANCE_A) -> int:
    """2 when the geometry is chiral (its mirror image is not superimposable), else 1."""
    x = centre_of_mass_frame(positions_A, masses_amu)
    if len(x) < 4 or is_linear(positions_A, masses_amu, tolerance_A):
        return 1
    labels = _labels(symbols, masses_amu)
    mirror = x * np.array([-1.0, 1.0, 1.0])
    # planar molecules are never chiral; the general test covers them too
    return 1 if _operations(mirror, x, labels, tolerance_A) else 2
