"""Bonding graphs from covalent radii, for checking what a saddle point connects.

Two atoms are bonded when their distance is below ``scale`` times the sum of
their covalent radii (B. Cordero et al., Dalton Trans. 2008, 2832, as tabulated
by ASE's ``natural_cutoffs``). The default scale 1.2 is common practice: it
keeps every covalent bond of a minimum (O-H 0.97 A against a sum of radii of
0.97 A) and leaves out hydrogen bonds (1.7-2.0 A).
"""

from __future__ import annotations

# the bonding graph itself lives in the geometry layer, so that physics (torsions) can use it
from tstrate.geometry import BOND_SCALE, H_H_BOND_A, bonds, fragments  # noqa: F401

Bonds = frozenset  # of (i, j) pairs with i < j, 0-based


def describe_changes(symbols, before, after) -> str:
    """Human-readable bond changes from ``before`` to ``after`` (1-based atom labels)."""
    def lab(p):
        i, j = p
        return f"{symbols[i]}{i + 1}-{symbols[j]}{j + 1}"

    formed = sorted(set(after) - set(before))
    broken = sorted(set(before) - set(after))
    parts = []
    if formed:
        parts.append("formed " + ", ".join(lab(p) for p in formed))
    if broken:
        parts.append("broken " + ", ".join(lab(p) for p in broken))
    return "; ".join(parts) or "no bond change"


def edit_bonds(bond_set, *, form=(), break_=()) -> frozenset:
    """A bonding graph with some pairs added and some removed (pairs in any order)."""
    out = set(bond_set)
    for i, j in break_:
        out.discard((min(i, j), max(i, j)))
    for i, j in form:
        out.add((min(i, j), max(i, j)))
    return frozenset(out)


def _fingerprint(symbols, bond_set) -> tuple:
    """An invariant of a bonding graph under exchange of like atoms: per molecule, its
    element counts and the sorted element pairs of its bonds, with each atom's
    (element, sorted neighbour elements)."""
    nb: dict[int, list[str]] = {a: [] for a in range(len(symbols))}
    for i, j in bond_set:
        nb[i].append(symbols[j])
        nb[j].append(symbols[i])
    out = []
    for frag in fragments(len(symbols), bond_set):
        atoms = tuple(sorted((symbols[a], tuple(sorted(nb[a]))) for a in frag))
        out.append(atoms)
    return tuple(sorted(out))


def equivalent(symbols, a, b) -> bool:
    """Whether two bonding graphs are the same up to exchanging like atoms (exact for the
    small molecules of a reaction; an invariant, not a full isomorphism test)."""
    return frozenset(a) == frozenset(b) or _fingerprint(symbols, a) == _fingerprint(symbols, b)
