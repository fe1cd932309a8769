"""Bimolecular saddle points: two reactant structures placed at a chosen distance.

An atom-transfer reaction A-X + B -> A + X-B is set up from the two reactant
geometries (any molecules, radicals or atoms) and three atoms: the donor A and the
moving atom X, both in the first reactant, and the acceptor B in the second. The
second reactant is turned so that the side of B away from its own atoms faces the
donor, and placed with B on the line A -> X at ``distance_A`` from A; X is put on
that line where both its bonds are stretched alike (covalent radii of
:mod:`tstrate.compute.connectivity`). That guess goes to the semi-empirical saddle
search (:func:`tstrate.compute.saddle.find_saddle`) with the intended bonding of
both sides, so the downhill verification checks that the saddle point joins
A-X...B to A...X-B.

Barriers of a bimolecular reaction are quoted from the separated reactants (and
products), as barrier-height databases do.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from tstrate.compute import connectivity as conn
from tstrate.errors import InputError

#: stretch of the donor...acceptor distance beyond the two bond lengths in the default guess [Angstrom]
DEFAULT_STRETCH_A = 0.6


@dataclass(frozen=True)
class TransferGuess:
    """guess: ASE Atoms of the saddle-point guess (first reactant's atoms, then the second's);
    reactant_bonds, product_bonds: intended bonding graphs (0-based pairs of ``guess``);
    distance_A: donor...acceptor distance of the guess [Angstrom]."""

    guess: object
    reactant_bonds: frozenset
    product_bonds: frozenset
    distance_A: float


def _radius(symbol: str) -> float:
    """Covalent radius [Angstrom] (Cordero et al. 2008, through ASE, as the bonding graphs use)."""
    from ase.data import atomic_numbers, covalent_radii

    return float(covalent_radii[atomic_numbers[symbol]])


def _rotation_onto(u: np.ndarray, v: np.ndarray) -> np.ndarray:
    """Rotation matrix turning unit vector ``u`` onto unit vector ``v``."""
    c = float(np.dot(u, v))
    w = np.cross(u, v)
    s = float(np.linalg.norm(w))
    if s < 1e-12:
        if c > 0:
            return np.eye(3)
        # half turn about any axis normal to u
        axis = np.cross(u, [1.0, 0.0, 0.0])
        if np.linalg.norm(axis) < 1e-6:
            axis = np.cross(u, [0.0, 1.0, 0.0])
        axis /= np.linalg.norm(axis)
        return 2.0 * np.outer(axis, axis) - np.eye(3)
    k = w / s
    kx = np.array([[0, -k[2], k[1]], [k[2], 0, -k[0]], [-k[1], k[0], 0]])
    return np.eye(3) + s * kx + (1 - c) * kx @ kx


def transfer_guess(first, second, *, donor: int, atom: int, acceptor: int,
                   distance_A: float | None = None) -> TransferGuess:
    """Saddle-point guess of ``first`` (holding ``donor`` and the moving ``atom``) + ``second``
    (holding ``acceptor``): 0-based indices into each structure's own atoms (ASE Atoms)."""
    from ase import Atoms

    na, nb = len(first), len(second)
    for label, idx, n in (("donor", donor, na), ("atom", atom, na), ("acceptor", acceptor, nb)):
        if not 0 <= idx < n:
            raise InputError(f"{label} atom {idx + 1} does not exist ({n} atoms)", field=label)
    if donor == atom:
        raise InputError("the donor and the moving atom are the same atom", field="atom")
    sa, sb = list(first.get_chemical_symbols()), list(second.get_chemical_symbols())
    pa, pb = np.array(first.positions, dtype=float), np.array(second.positions, dtype=float)
    bonds_a = conn.bonds(sa, pa)
    if tuple(sorted((donor, atom))) not in bonds_a:
        raise InputError(f"atom {atom + 1} ({sa[atom]}) is not bonded to the donor {donor + 1} "
                         f"({sa[donor]}) in the first reactant", field="atom")
    r_ax = _radius(sa[donor]) + _radius(sa[atom])
    r_bx = _radius(sb[acceptor]) + _radius(sa[atom])
    if distance_A is None:
        distance_A = r_ax + r_bx + DEFAULT_STRETCH_A
    if not r_ax + r_bx < distance_A < 6.0:
        raise InputError(f"donor...acceptor distance {distance_A} Angstrom: must lie between "
                         f"{r_ax + r_bx:.2f} (the two bonds) and 6", field="distance_A")
    u = pa[atom] - pa[donor]
    u /= np.linalg.norm(u)
    # the second reactant: its acceptor's free side (away from its other atoms) faces the donor
    others = [k for k in range(nb) if k != acceptor]
    pb = pb - pb[acceptor]
    if others:
        away = -np.mean(pb[others], axis=0)
        if np.linalg.norm(away) < 1e-6:  # acceptor at the centre (a symmetric molecule)
            away = np.cross(pb[others[0]], [0.0, 0.0, 1.0])
            if np.linalg.norm(away) < 1e-6:
                away = np.cross(pb[others[0]], [0.0, 1.0, 0.0])
        away /= np.linalg.norm(away)
        pb = pb @ _rotation_onto(away, -u).T
    pb = pb + pa[donor] + distance_A * u
    stretch = 0.5 * (distance_A - r_ax - r_bx)
    pa = pa.copy()
    pa[atom] = pa[donor] + (r_ax + stretch) * u
    guess = Atoms(sa + sb, positions=np.vstack([pa, pb]))
    bonds_b = {(i + na, j + na) for i, j in conn.bonds(sb, np.array(second.positions, dtype=float))}
    reactant = frozenset(set(bonds_a) | bonds_b)
    product = conn.edit_bonds(reactant, break_=[(donor, atom)], form=[(atom, acceptor + na)])
    return TransferGuess(guess, reactant, frozenset(product), float(distance_A))


def transfer_ends(first, second, *, donor: int, atom: int, acceptor: int,
                  separation_A: float = 1.0):
    """Reactant-side and product-side complexes of the transfer (same atom order, ASE Atoms),
    for a NEB between them: the guess geometry with the moving atom on the donor
    (reactant side) or on the acceptor (product side) at its bond length, and the two
    partners pulled apart by ``separation_A`` beyond the guess's donor...acceptor distance."""
    g = transfer_guess(first, second, donor=donor, atom=atom, acceptor=acceptor)
    na = len(first)
    pos = g.guess.positions
    d, a = pos[donor], pos[na + acceptor]
    u = (a - d) / np.linalg.norm(a - d)
    sym = g.guess.get_chemical_symbols()
    r_dx = _radius(sym[donor]) + _radius(sym[atom])
    r_ax = _radius(sym[na + acceptor]) + _radius(sym[atom])
    ends = []
    for side in ("reactant", "product"):
        p = pos.copy()
        if side == "reactant":
            p[na:] += separation_A * u
            p[atom] = d + r_dx * u
        else:
            p[:na] -= separation_A * u
            p[atom] = p[na + acceptor] - r_ax * u
        ends.append(g.guess.__class__(sym, positions=p))
    return ends[0], ends[1], g
