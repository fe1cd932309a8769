"""Barrier heights of a bundled reaction set against their published best estimates.

The set (``molecules/htbh/htbh8.toml``: eight open-shell H-transfer reactions of HTBH38/04
with the database's geometries) lists reactions (reactants, TS, products, forward and
reverse reference barriers) and structures (multiplicity, geometry). :func:`evaluate`
computes every structure's energy with a function of (symbols, positions, charge,
multiplicity) and returns the classical forward and reverse barriers with their errors.
Two energy sources are provided: GFN2-xTB single points (tblite) and PySCF at a
:class:`tstrate.compute.refine.Level`.
"""

from __future__ import annotations

import tomllib
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from tstrate.units import ENERGY_UNITS_J_PER_MOL

KCAL = ENERGY_UNITS_J_PER_MOL["kcal/mol"]


@dataclass(frozen=True)
class Structure:
    name: str
    symbols: tuple
    positions_A: np.ndarray
    multiplicity: int
    nuclear_repulsion_hartree: float


@dataclass(frozen=True)
class Reaction:
    name: str
    reactants: tuple
    ts: str
    products: tuple
    forward_J_per_mol: float
    reverse_J_per_mol: float


def load_set(path) -> tuple[list[Reaction], dict[str, Structure], str]:
    """Reactions, structures and the source text of a reaction-set file."""
    from tstrate.io.species import parse_xyz_body

    data = tomllib.loads(Path(path).read_text())
    unit = ENERGY_UNITS_J_PER_MOL[data["unit"]]
    structures = {}
    for name, s in data["structure"].items():
        sym, pos = parse_xyz_body(s["geometry"], file=str(path), field=f"structure.{name}")
        structures[name] = Structure(name, tuple(sym), pos, int(s["multiplicity"]),
                                     float(s["nuclear_repulsion_hartree"]))
    reactions = [Reaction(r["name"], tuple(r["reactants"]), r["ts"], tuple(r["products"]),
                          r["forward"] * unit, r["reverse"] * unit) for r in data["reaction"]]
    return reactions, structures, data["source"]


@dataclass(frozen=True)
class BarrierErrors:
    """Per reaction: (name, forward, reverse, reference forward, reference reverse) [J/mol];
    mae_J_per_mol and max_J_per_mol over all forward and reverse barriers."""

    rows: tuple
    mae_J_per_mol: float
    max_J_per_mol: float


def evaluate(reactions, structures, energy_J_per_mol) -> BarrierErrors:
    """Barriers from ``energy_J_per_mol(structure)`` for every structure used."""
    cache = {}

    def e(name):
        if name not in cache:
            cache[name] = energy_J_per_mol(structures[name])
        return cache[name]

    rows, errs = [], []
    for r in reactions:
        f = e(r.ts) - sum(e(n) for n in r.reactants)
        b = e(r.ts) - sum(e(n) for n in r.products)
        rows.append((r.name, f, b, r.forward_J_per_mol, r.reverse_J_per_mol))
        errs += [f - r.forward_J_per_mol, b - r.reverse_J_per_mol]
    errs = np.abs(errs)
    return BarrierErrors(tuple(rows), float(errs.mean()), float(errs.max()))


def gfn2_energy(structure: Structure) -> float:
    """GFN2-xTB single-point energy [J/mol] (tblite through ASE)."""
    from ase import Atoms

    from tstrate.compute.engine import Settings, energy_J_per_mol, with_calculator

    at = Atoms(list(structure.symbols), positions=structure.positions_A)
    return energy_J_per_mol(with_calculator(at, Settings(), 0, structure.multiplicity))


def pyscf_energy(level):
    """A function giving the PySCF energy [J/mol] of a structure at ``level``."""
    from tstrate.compute.refine import HARTREE_J_PER_MOL, energy_at_level

    def f(structure: Structure) -> float:
        en = energy_at_level(list(structure.symbols), structure.positions_A, charge=0,
                             multiplicity=structure.multiplicity, level=level,
                             label=structure.name)
        return en.energy_hartree * HARTREE_J_PER_MOL

    return f


def table(results: dict[str, BarrierErrors]) -> str:
    """A Markdown table of barriers [kJ/mol] for several energy sources (same reactions)."""
    names = list(results)
    first = results[names[0]]
    head = "| reaction | reference fwd / rev | " + " | ".join(f"{n} fwd / rev" for n in names) + " |"
    lines = [head, "|" + " --- |" * (2 + len(names))]
    for k, row in enumerate(first.rows):
        cells = [f"{row[3] / 1e3:.1f} / {row[4] / 1e3:.1f}"]
        for n in names:
            r = results[n].rows[k]
            cells.append(f"{r[1] / 1e3:.1f} / {r[2] / 1e3:.1f}")
        lines.append(f"| {row[0]} | " + " | ".join(cells) + " |")
    lines.append("| mean absolute error | | " + " | ".join(
        f"{results[n].mae_J_per_mol / 1e3:.1f}" for n in names) + " |")
    lines.append("| largest error | | " + " | ".join(
        f"{results[n].max_J_per_mol / 1e3:.1f}" for n in names) + " |")
    return "\n".join(lines)
