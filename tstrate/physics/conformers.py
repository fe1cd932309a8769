"""Are two geometries of the same atoms the same structure (conformer), whatever their atom order?

A fingerprint that needs neither the atom order nor an alignment: for every pair of elements, the
sorted list of interatomic distances. Two geometries of one minimum agree to the precision of their
optimisations (hundredths of an Angstrom); conformers that differ by a torsion (cis-cis against
cis-trans H2CO3: an O-H turned over) move some non-bonded distances by tenths of an Angstrom or more.
The default threshold, 0.15 Angstrom in the largest difference, is common practice for such a
check, not a published value. Positions in Angstrom.
"""

from __future__ import annotations

from itertools import combinations_with_replacement

import numpy as np

#: largest difference of matching sorted distances [Angstrom] for two geometries to count as one structure
SAME_STRUCTURE_TOLERANCE_A = 0.15


def distance_fingerprint(symbols, positions_A) -> dict[tuple[str, str], np.ndarray]:
    """Element pair -> sorted interatomic distances [Angstrom]."""
    symbols = [str(s) for s in symbols]
    x = np.asarray(positions_A, dtype=float).reshape(-1, 3)
    d = np.linalg.norm(x[:, None] - x[None, :], axis=2)
    out = {}
    elements = sorted(set(symbols))
    idx = {e: np.flatnonzero(np.array(symbols) == e) for e in elements}
    for a, b in combinations_with_replacement(elements, 2):
        block = d[np.ix_(idx[a], idx[b])]
        values = block[np.triu_indices(len(idx[a]), 1)] if a == b else block.ravel()
        out[(a, b)] = np.sort(values)
    return out


def structure_difference_A(symbols_a, positions_a, symbols_b, positions_b) -> float | None:
    """Largest difference of the distance fingerprints [Angstrom]; None when the atoms differ."""
    if sorted(map(str, symbols_a)) != sorted(map(str, symbols_b)):
        return None
    fa = distance_fingerprint(symbols_a, positions_a)
    fb = distance_fingerprint(symbols_b, positions_b)
    return float(max((np.max(np.abs(fa[k] - fb[k])) for k in fa if fa[k].size), default=0.0))


def parse_xyz_lines(text: str) -> tuple[list[str], np.ndarray]:
    """``Symbol x y z`` lines (Angstrom), as the compute route writes a connected minimum into a
    species file's [provenance]; ValueError when the text is not such lines."""
    symbols, coords = [], []
    for line in str(text).strip().splitlines():
        parts = line.split()
        if not parts:
            continue
        if len(parts) != 4:
            raise ValueError(f"expected 'Symbol x y z', got {line.strip()!r}")
        symbols.append(parts[0])
        coords.append([float(p) for p in parts[1:]])
    if not symbols:
        raise ValueError("no atoms")
    return symbols, np.array(coords)


def xyz_lines(symbols, positions_A) -> str:
    """The inverse of :func:`parse_xyz_lines`."""
    return "\n".join(f"{s} {x:.6f} {y:.6f} {z:.6f}" for s, (x, y, z) in zip(symbols, np.asarray(positions_A)))
