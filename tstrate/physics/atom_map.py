"""Which atom of one stationary point is which atom of another: the correspondence of atoms
between the reactants (or products, or a complex) of a channel and its transition state, found
from the connectivity.

Quantum-chemistry programs number the atoms of each structure in their own order, so the atom
that carries an isotope in a reactant must be found again in the transition state before a
position-specific kinetic isotope effect can be computed.

The method (the trade's usual graph matching of bonding patterns, written here for small
molecules):

1. Bonds of each structure from covalent radii (:func:`tstrate.geometry.bonds`); the separate
   molecules of one side are disjoint parts of one graph. In the transition state, contacts up to
   :data:`PARTIAL_BOND_SCALE` times the sum of covalent radii count as partial bonds (weight 1/2),
   since the bonds that break and form are stretched there.
2. Heavy atoms: every assignment within each element is scored by the bonds it keeps (a full bond
   1, a partial one 1/2); at most :data:`MAX_HEAVY_ASSIGNMENTS` assignments are tried.
3. Hydrogen atoms: for each best heavy-atom assignment, an optimal assignment
   (``scipy.optimize.linear_sum_assignment``) to the hydrogens bonded to the images of their
   partners.
4. Among equally scored assignments the one whose geometry fits best after alignment is kept
   (Kabsch, fragment by fragment).

The result is refused (ValueError) when the two sides do not hold the same atoms, when there are
too many heavy-atom assignments to try, or when the best assignment keeps fewer than half of the
bonds.
"""

from __future__ import annotations

import itertools
import math

import numpy as np

from tstrate.geometry import BOND_SCALE, bonds, kabsch_rmsd

#: covalent-radius multiplier up to which a transition-state contact is a partial bond
PARTIAL_BOND_SCALE = 1.6
#: at most this many heavy-atom assignments are scored
MAX_HEAVY_ASSIGNMENTS = 200_000


def _side(fragments_):
    symbols, blocks, bond_set, offsets = [], [], set(), []
    for sym, pos in fragments_:
        off = len(symbols)
        offsets.append(off)
        symbols += list(sym)
        pos = np.asarray(pos, dtype=float).reshape(-1, 3)
        blocks.append(pos)
        bond_set |= {(i + off, j + off) for i, j in bonds(sym, pos)}
    return symbols, blocks, bond_set, offsets


def _weights(symbols, positions_A) -> dict:
    full = bonds(symbols, positions_A)
    partial = bonds(symbols, positions_A, scale=PARTIAL_BOND_SCALE)
    w = {b: 0.5 for b in partial}
    w.update({b: 1.0 for b in full})
    return w


def corresponding_atoms(fragments_, target_symbols, target_positions_A) -> list[int]:
    """For each atom of the source side (the fragments' atoms in order), the index of the same
    atom in the target structure (0-based).

    fragments_: list of (symbols, positions [Angstrom]) of the side's molecules (one for a
        complex, several for separated reactants or products).
    target_symbols, target_positions_A: the structure to map onto (usually the transition state).
    """
    src_sym, src_pos, src_bonds, offsets = _side(fragments_)
    dst_sym = list(target_symbols)
    dst_pos = np.asarray(target_positions_A, dtype=float).reshape(-1, 3)
    if sorted(src_sym) != sorted(dst_sym):
        raise ValueError("the two structures do not hold the same atoms: "
                         f"{''.join(sorted(src_sym))} against {''.join(sorted(dst_sym))}")
    w = _weights(dst_sym, dst_pos)

    def weight(a, b):
        return w.get((a, b) if a < b else (b, a), 0.0)

    heavy_elements = sorted({s for s in src_sym if s != "H"})
    src_by = {e: [i for i, s in enumerate(src_sym) if s == e] for e in heavy_elements}
    dst_by = {e: [i for i, s in enumerate(dst_sym) if s == e] for e in heavy_elements}
    count = math.prod(math.factorial(len(v)) for v in src_by.values())
    if count > MAX_HEAVY_ASSIGNMENTS:
        raise ValueError(f"{count} heavy-atom assignments to try (more than {MAX_HEAVY_ASSIGNMENTS}): "
                         "give the corresponding atoms explicitly")
    heavy_bonds = [(i, j) for i, j in src_bonds if src_sym[i] != "H" and src_sym[j] != "H"]
    best, best_maps = -1.0, []
    for combo in itertools.product(*(itertools.permutations(dst_by[e]) for e in heavy_elements)):
        m = {}
        for e, images in zip(heavy_elements, combo):
            m.update(zip(src_by[e], images))
        score = sum(weight(m[i], m[j]) for i, j in heavy_bonds)
        if score > best + 1e-9:
            best, best_maps = score, [m]
        elif abs(score - best) <= 1e-9:
            best_maps.append(m)

    src_h = [i for i, s in enumerate(src_sym) if s == "H"]
    dst_h = [i for i, s in enumerate(dst_sym) if s == "H"]
    h_partners = {h: [j if i == h else i for i, j in src_bonds if h in (i, j)] for h in src_h}
    candidates = []
    for m in best_maps:
        full = dict(m)
        h_score = 0.0
        if src_h:
            from scipy.optimize import linear_sum_assignment

            gain = np.array([[sum(weight(m[p], d) for p in h_partners[h] if p in m) for d in dst_h]
                             for h in src_h])
            rows, cols = linear_sum_assignment(-gain)
            full.update({src_h[r]: dst_h[c] for r, c in zip(rows, cols)})
            h_score = float(gain[rows, cols].sum())
        candidates.append((best + h_score, full))
    top = max(s for s, _ in candidates)
    tied = [full for s, full in candidates if s >= top - 1e-9]

    def misfit(full):
        total = 0.0
        for off, block in zip(offsets, src_pos):
            if len(block) < 3:
                continue
            idx = [full[off + k] for k in range(len(block))]
            total += kabsch_rmsd(block, dst_pos[idx]) ** 2 * len(block)
        return total

    chosen = min(tied, key=misfit) if len(tied) > 1 else tied[0]
    n_bonds = len(src_bonds)
    kept = sum(weight(chosen[i], chosen[j]) for i, j in src_bonds)
    if n_bonds and kept < 0.5 * n_bonds:
        raise ValueError(f"the best correspondence keeps only {kept:g} of {n_bonds} bonds: "
                         "give the corresponding atoms explicitly")
    return [chosen[i] for i in range(len(src_sym))]


__all__ = ["BOND_SCALE", "PARTIAL_BOND_SCALE", "corresponding_atoms"]
